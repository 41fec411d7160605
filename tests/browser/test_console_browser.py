"""The morning review in a real browser: headless Chromium against the
service (real Redis, real workers, the API under waitress on localhost).
Screenshots of the main pages go to artifacts/screenshots/."""

from __future__ import annotations

import re

from playwright.sync_api import expect

from service import corpus as C

from .conftest import wait_until

GROUP = """\
# a group that need not be commutative
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit: forall x. e * x = x and x * e = x
axiom inv: forall x. i(x) * x = e and x * i(x) = e
hypothesis hq: forall x y. q(x, y) iff x * y = y * x
conjecture comm: forall x y. x * y = y * x
conjecture lcancel: forall x y z. x * y = x * z implies y = z
"""


def sign_in(page, base, token):
    page.goto(base + "/batches")
    assert "/sign-in" in page.url                       # sent to sign in first
    page.fill("#token", token)
    page.click("form.stack button[type=submit]")
    page.wait_for_url(re.compile(r"/batches$"))
    assert page.locator("header .who strong").inner_text() == "alice"


def test_morning_review(api, workers, page, shot):
    token = api.store.add_token("alice")
    base = api.url
    page.goto(base + "/sign-in")
    shot(page, "sign-in")
    sign_in(page, base, token)

    # an input error is shown at its line; nothing is queued
    page.goto(base + "/submit")
    page.fill("#text", "axiom a: forall x. p(x)\naxiom b: p(c) or or\n")
    page.fill("#name", "broken.nj")
    page.click("#submit-button")
    err = page.locator("pre.input-error").inner_text()
    assert err.startswith("broken.nj:2:") and "^" in err
    shot(page, "submit-error")
    assert api.store.owner_batches("alice") == []

    # submit through the form, before any worker runs: the page must update by itself
    page.goto(base + "/submit")
    shot(page, "submit")
    page.fill("#text", GROUP)
    page.fill("#name", "group.nj")
    page.fill("#label", "groups <script>alert(1)</script>")
    page.fill("#time_limit", "20")
    page.click("#submit-button")
    page.wait_for_url(re.compile(r"/batches/b[0-9a-f]+$"))
    assert page.locator("#batch-summary .progress-text").inner_text() == "0 / 2"
    assert "<script>" in page.locator("h1 .label").inner_text()      # shown as text
    page.evaluate("window.__same_page = 42")
    workers.start(1)
    expect(page.locator("#batch-summary .progress-text")).to_have_text("2 / 2", timeout=90_000)
    assert page.evaluate("window.__same_page") == 42                 # updated in place
    page.wait_for_selector("#jobs-region >> text=Theorem")
    assert page.locator("#jobs-region").get_by_text("CounterSatisfiable").count() == 1
    shot(page, "batch")
    page.goto(base + "/batches")
    assert page.locator("#batches progress").first.get_attribute("value") == "2"
    shot(page, "batches")

    # sort by verdict through the column header (a plain link)
    page.goto(base + "/batches")
    page.click("#batches a code")
    page.click("#jobs thead >> text=Verdict")
    names = page.locator("#jobs tbody tr td:nth-child(4)").all_inner_texts()
    assert names == sorted(names)

    # the proof and its graph
    page.click("#jobs >> text=group.nj#lcancel")
    page.wait_for_selector("#verdict >> text=Theorem")
    assert page.locator("#L1").count() == 1 and "proof replayed" in page.inner_text("#certificate")
    shot(page, "job")
    page.click("#proof-link")
    page.wait_for_selector("#proof-graph")
    nodes = page.locator("#proof-graph a.node")
    steps = page.locator("#steps tr.step")
    assert nodes.count() == steps.count() > 3
    assert page.locator("#steps tr.axiom-used").count() >= 1
    last = nodes.nth(nodes.count() - 1)
    sid = last.get_attribute("data-step")
    last.click()
    page.wait_for_url(re.compile(rf"#step-{sid}$"))
    assert "picked" in page.locator(f"#step-{sid}").get_attribute("class")
    assert page.locator(f"#step-{sid}").is_visible()
    # a parent link jumps to that step
    parent = page.locator(f"#step-{sid} a.parent").first
    pid = parent.inner_text()
    parent.click()
    page.wait_for_url(re.compile(rf"#step-{pid}$"))
    page.evaluate("window.scrollTo(0, 0)")
    shot(page, "proof")

    # the countermodel's tables
    page.go_back()
    page.goto(base + "/batches")
    page.click("#batches a code")
    page.click("#jobs >> text=group.nj#comm")
    page.click("#model-link")
    page.wait_for_selector("#domain")
    size = int(re.search(r"(\d+) elements", page.inner_text("#domain")).group(1))
    table = page.locator("table.optable")
    assert table.count() == 1
    assert table.locator("tbody tr").count() == size
    assert table.locator("tbody tr").first.locator("td").count() == size
    assert page.locator("table.truth").count() == 1                 # q(x, y)
    shot(page, "model")
    assert not page.js_errors, page.js_errors


def test_reading_without_javascript_and_keyboard(api, workers, chromium, shot):
    token = api.store.add_token("alice")
    workers.start(1)
    c = api.client(token)
    out = c.submit({"problem": {"main": "g.nj", "files": {"g.nj": GROUP}}, "time_limit": 20})
    wait_until(lambda: api.store.get_batch(out["batch"])["finished"], timeout=90,
               what="the batch to settle")
    ctx = chromium.new_context(java_script_enabled=False, viewport={"width": 1100, "height": 800})
    try:
        pg = ctx.new_page()
        pg.goto(api.url + "/sign-in")
        pg.fill("#token", token)
        pg.click("form.stack button[type=submit]")
        pg.goto(api.url + f"/batches/{out['batch']}")
        assert pg.locator("#jobs tbody tr").count() == 2
        lc = next(j["id"] for j in out["jobs"] if j["conjecture"] == "lcancel")
        pg.goto(api.url + f"/jobs/{lc}/proof")
        assert pg.locator("#steps tr.step").count() > 3
        # keyboard: the first Tab reaches the skip link, Enter moves to the page
        pg.keyboard.press("Tab")
        assert pg.evaluate("document.activeElement.className") == "skip"
        pg.keyboard.press("Enter")
        assert pg.url.endswith("#content")
        # graph nodes are links, reachable by keyboard
        first = pg.locator("#proof-graph a.node").first
        first.focus()
        pg.keyboard.press("Enter")
        assert re.search(r"#step-\d+$", pg.url)
        shot(pg, "proof-no-javascript")
    finally:
        ctx.close()


def test_run_comparison(api, workers, page, shot, tmp_path):
    token = api.store.add_token("alice")
    workers.start(1)
    for d in ("ax1", "ax2", "conj"):
        (tmp_path / d).mkdir()
    (tmp_path / "ax1" / "a.nj").write_text("axiom a1: forall x. p(x) implies q(x)\naxiom a2: p(c)\n")
    (tmp_path / "ax2" / "a.nj").write_text("axiom a1: forall x. p(x) implies q(x)\n"
                                           "axiom a2: p(c)\naxiom a3: p(d)\n")
    (tmp_path / "conj" / "c.nj").write_text("conjecture g1: q(c)\nconjecture g2: q(d)\n"
                                            "conjecture g3: p(c)\n")
    manifest = """[suite]
name = "console-demo"
description = "two versions of one axiom file"
source = "written for this test"
time_limit = 5
axioms = ["{ax}/*.nj"]
problems = ["conj/*.nj"]

[expectations]
"conj/c.nj#g1" = "Theorem"
"conj/c.nj#g2" = "{g2}"
"""
    (tmp_path / "one.toml").write_text(manifest.format(ax="ax1", g2="CounterSatisfiable"))
    (tmp_path / "two.toml").write_text(manifest.format(ax="ax2", g2="Theorem"))
    c = api.client(token)
    runs = []
    for name in ("one.toml", "two.toml"):
        body = C.submission(C.load_suite(str(tmp_path / name)))
        run = c.post("/api/corpus/runs", body)["run"]
        wait_until(lambda: c.get(f"/api/corpus/runs/{run}")["summary"]["finished"],
                   timeout=90, what=f"run {name}")
        runs.append(run)

    sign_in(page, api.url, token)
    page.click("nav >> text=Suites")
    page.click("#suites >> text=console-demo")
    assert page.locator("#runs tbody tr").count() == 2
    shot(page, "suite")
    page.click(f"#runs >> text={runs[1]}")
    page.wait_for_selector("#obligations")
    assert page.locator("#obligations tbody tr").count() == 3
    shot(page, "run")
    page.click("#compare-link")
    page.wait_for_selector("#gained")
    # g2: CounterSatisfiable, then Theorem, which the second manifest expects:
    # a definite verdict changed to the expected one is gained (marked fixed)
    assert "conj/c.nj#g2" in page.inner_text("#gained")
    assert "fixed: a definite verdict changed" in page.inner_text("#gained")
    assert page.locator("#flipped .count").inner_text() == "0"
    assert "1 definite verdict changed" in page.inner_text("#fixed-note")
    assert page.locator("#lost .count").inner_text() == "0"
    assert page.locator("#unexpected .count").inner_text() == "0"
    assert int(page.locator("#reused .count").inner_text()) >= 1
    shot(page, "compare")
    page.locator("#gained").get_by_role("link", name="after").click()
    page.wait_for_selector("#verdict >> text=Theorem")
    assert not page.js_errors, page.js_errors


# The suite page at the width the browser tests use (1280 px): every column
# of the runs table, the last one ("with the run before") included, is on the
# screen without scrolling sideways, also with a long manifest path (a suite
# folder outside the working folder is stored by its absolute path) and a
# "full" tag.  QA measured the table at 1,327 px there, the Compare column cut off.
LAYOUT_SUITE = """[suite]
name = "qa-ferry-layout"
description = "one axiom file, three conjectures"
source = "written for this test"
time_limit = 5
axioms = ["axioms/*.nj"]
problems = ["conjectures/*.nj"]

[expectations]
"conjectures/landings.nj#g1" = "Theorem"
"conjectures/landings.nj#g2" = "CounterSatisfiable"
"""


def fits(page, selector):
    """The widths that matter, measured in the page: the viewport, the
    document's scroll width and the table's right edge."""
    return page.evaluate("""sel => {
        const t = document.querySelector(sel).getBoundingClientRect();
        const last = [...document.querySelectorAll(sel + ' tr > :last-child')]
            .map(c => c.getBoundingClientRect().right);
        return {viewport: window.innerWidth, scroll: document.documentElement.scrollWidth,
                table_width: t.width, table_right: t.right, last_right: Math.max(...last)};
    }""", selector)


def test_suite_page_fits_1280_pixels(api, workers, page, shot, tmp_path):
    token = api.store.add_token("alice")
    workers.start(1)
    root = tmp_path / "a-suite-folder-with-a-rather-long-name" / "qa-ferry-layout"
    for d in ("axioms", "conjectures"):
        (root / d).mkdir(parents=True)
    (root / "axioms" / "a.nj").write_text("axiom a1: forall x. p(x) implies q(x)\naxiom a2: p(c)\n")
    (root / "conjectures" / "landings.nj").write_text(
        "conjecture g1: q(c)\nconjecture g2: q(d)\nconjecture g3: p(c)\n")
    (root / "suite.toml").write_text(LAYOUT_SUITE)
    c = api.client(token)
    runs = []
    for full in (False, False, True):
        body = C.submission(C.load_suite(str(root / "suite.toml")), full=full)
        run = c.post("/api/corpus/runs", body)["run"]
        wait_until(lambda: c.get(f"/api/corpus/runs/{run}")["summary"]["finished"],
                   timeout=90, what=f"run {len(runs) + 1}")
        runs.append(run)
    path = c.get("/api/corpus/suites/qa-ferry-layout/runs")["runs"][0]["manifest_path"]
    assert len(path) > 40, path          # the long case: an absolute path

    sign_in(page, api.url, token)
    page.goto(api.url + "/suites/qa-ferry-layout")
    assert page.locator("#runs tbody tr").count() == 3
    m = fits(page, "#runs")
    shot(page, "suite-1280")
    assert m["viewport"] == 1280
    assert m["scroll"] <= m["viewport"], m            # no sideways scrolling
    assert m["table_right"] <= m["viewport"], m
    assert m["last_right"] <= m["viewport"], m        # the Compare column is on screen
    # each compare link is on screen and goes to the comparison with the run before
    links = page.locator("#runs a.compare")
    assert links.count() == 2
    for i in range(2):
        box = links.nth(i).bounding_box()
        assert box["x"] + box["width"] <= 1280, box
    links.first.click()
    page.wait_for_selector("#verdict-line")
    assert f"/compare?a={runs[1]}&b={runs[2]}" in page.url
    assert not page.js_errors, page.js_errors

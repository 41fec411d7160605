"""The console's corpus pages (compare, run, suite) for what a user looks
for after editing axioms: which axioms changed, which proofs now use other
axioms, the suite's folder, the batch's extra axiom check job, and
``/compare?suite=NAME``.  Flask test client over fakeredis, jobs worked off
in-process with the real engine."""

from __future__ import annotations

import fakeredis
import pytest

from service.app import create_app
from service.config import Config
from service.store import Store
from tests.test_web_pages import Console, corpus_run

SUITE = """\
[suite]
name = "ferrylines"
description = "a few landings"
source = "made up for a test"
time_limit = 5
axioms = ["ax/*.nj"]
problems = ["goals/*.nj"]
"""
RULES = "axiom step: forall x y. route(x, y) implies reach(x, y)\n" \
        "axiom onward: forall x y z. reach(x, y) and route(y, z) implies reach(x, z)\n"
ROUTES_1 = "axiom mill_quay: route(mill, quay)\naxiom quay_heron: route(quay, heron)\n" \
           "axiom heron_ashford: route(heron, ashford)\n"
# heron_ashford edited to route(mill, fell); a new route added; mill_quay untouched
ROUTES_2 = "axiom mill_quay: route(mill, quay)\naxiom quay_heron: route(quay, heron)\n" \
           "axiom heron_ashford: route(mill, fell)\naxiom fell_dunmere: route(fell, dunmere)\n"
GOALS = "conjecture to_heron: reach(mill, heron)\nconjecture to_ashford: reach(mill, ashford)\n"


@pytest.fixture
def env(monkeypatch):
    monkeypatch.delenv("NIGHTJAR_SECRET_KEY", raising=False)
    monkeypatch.delenv("NIGHTJAR_COOKIE_SECURE", raising=False)
    r = fakeredis.FakeRedis()
    app = create_app(Config(max_time_limit=60, default_time_limit=10), r)
    store = Store(r)
    e = Console(app, r, store)
    e.alice = store.add_token("alice")
    return e


def write(root, routes):
    for name, text in {"suite.toml": SUITE, "ax/rules.nj": RULES, "ax/routes.nj": routes,
                       "goals/g.nj": GOALS}.items():
        (root / name).parent.mkdir(parents=True, exist_ok=True)
        (root / name).write_text(text)


def run(e, path):
    return corpus_run(e, e.alice, path)


def section(page, name):
    return page.split(f'id="{name}"')[1].split("</section>")[0]


def test_compare_page_names_the_changed_axioms_and_labels_the_proofs_using_others(
        env, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    write(tmp_path / "x", ROUTES_1)
    r1 = run(env, "x")
    write(tmp_path / "x", ROUTES_2)
    r2 = run(env, "x")
    env.sign_in(env.alice)
    page = env.get(f"/compare?a={r1}&b={r2}")
    ax = section(page, "axiom-changes")
    assert 'class="count">2<' in ax
    assert "<code>heron_ashford</code></td><td>edited</td><td>ax/routes.nj</td>" in ax
    assert "<code>fell_dunmere</code></td><td>added</td><td>ax/routes.nj</td>" in ax
    assert "mill_quay" not in ax and "onward" not in ax
    # before gained/lost/flipped
    assert page.index('id="axiom-changes"') < page.index('id="gained"')
    # the old figure, for what it is: to_ashford is no longer a theorem (a
    # countermodel now), to_heron kept the same axioms, so no proof uses others
    assert "proofs using other axioms 0" in page
    assert "axioms changed 0" not in page
    assert "goals/g.nj#to_ashford" in section(page, "flipped")

    # the same through ?suite=: the suite's last two runs
    page2 = env.get("/compare?suite=ferrylines")
    assert f"/runs/{r1}" in page2 and f"/runs/{r2}" in page2
    assert page2.index(f"/runs/{r1}") < page2.index(f"/runs/{r2}")
    assert "<code>heron_ashford</code>" in section(page2, "axiom-changes")
    env.get("/compare?suite=nosuch", status=404)
    env.get("/compare", status=400)


def test_compare_page_lists_proofs_using_other_axioms(env, tmp_path):
    write(tmp_path, ROUTES_1)
    r1 = run(env, tmp_path)
    # quay_heron edited away and a shortcut added: to_heron is searched again
    # and its proof rests on the shortcut rather than on the routes
    (tmp_path / "ax" / "routes.nj").write_text(
        ROUTES_1.replace("route(quay, heron)", "route(quay, fell)")
        + "axiom shortcut: reach(mill, heron)\n")
    r2 = run(env, tmp_path / "suite.toml")
    env.sign_in(env.alice)
    view = env.app.test_client().get(f"/api/corpus/diff?a={r1}&b={r2}",
                                     headers={"Authorization": f"Bearer {env.alice}"}).get_json()
    page = env.get(f"/compare?a={r1}&b={r2}")
    n = len(view["axioms_changed"])
    assert n >= 1, view["axioms_changed"]
    assert f"proofs using other axioms {n}" in page
    for it in view["axioms_changed"]:
        assert f"proof using other axioms: {it['key']}" in page
    ax = section(page, "axiom-changes")
    assert "<code>shortcut</code></td><td>added</td>" in ax
    assert "<code>quay_heron</code></td><td>edited</td>" in ax


def test_run_and_suite_pages_show_the_axiom_check_job_and_the_manifest_path(
        env, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    write(tmp_path / "one", ROUTES_1)
    write(tmp_path / "two", ROUTES_1)
    r1 = run(env, "one")
    r2 = run(env, "two/suite.toml")
    env.sign_in(env.alice)
    page = env.get(f"/runs/{r1}")
    note = page.split('id="batch-note">')[1].split("</span>")[0]
    assert note == "3 jobs: the 2 obligations plus 1 axiom consistency check"
    assert "<dd>one/suite.toml</dd>" in page
    page = env.get("/suites/ferrylines")
    assert "<td>one/suite.toml</td>" in page and "<td>two/suite.toml</td>" in page
    assert r2 in page


def write_files(root, files):
    for name, text in files.items():
        (root / name).parent.mkdir(parents=True, exist_ok=True)
        (root / name).write_text(text)


def test_contradictory_axioms_are_shown_on_every_page_and_every_obligation(env, tmp_path):
    write(tmp_path, ROUTES_1)
    r1 = run(env, tmp_path)
    # a last axiom file that contradicts the routes: both proofs still replay
    write_files(tmp_path, {"ax/zz_closed.nj": "axiom closed: forall x y. not route(x, y)\n"})
    r2 = run(env, tmp_path)
    env.sign_in(env.alice)
    page = env.get(f"/runs/{r2}")
    rows = page.split('id="obligations"')[1]
    assert rows.count("axioms contradictory</strong>") == 2 and rows.count(">vacuous<") == 2
    assert rows.count("proof-replayed from") == 2        # both Theorems reused
    axioms = page.split('id="axioms-state">')[1].split("</dd>")[0]
    assert "contradictory" in axioms and "refuted by its" in axioms
    assert "the 2 obligations on them say nothing" in axioms

    page = env.get(f"/compare?a={r1}&b={r2}")
    assert 'id="contradictory-banner"' in page and "<strong>Regression:</strong>" in page
    sec = section(page, "contradictory")
    assert 'class="count">2<' in sec
    assert "goals/g.nj#to_heron" in sec and "goals/g.nj#to_ashford" in sec
    assert 'class="count">0<' in section(page, "gained")
    assert page.index('id="contradictory"') < page.index('id="gained"')

    # the job page of a reused Theorem: still a Theorem, with the warning
    api = env.app.test_client()
    h = {"Authorization": f"Bearer {env.alice}"}
    v = api.get(f"/api/corpus/runs/{r2}", headers=h).get_json()
    heron = next(x for x in v["rows"] if x["key"] == "goals/g.nj#to_heron")
    assert heron["reused"] and heron["verdict"] == "Theorem"
    job = env.get(f"/jobs/{heron['job']}")
    assert "Theorem" in job.split('id="verdict"')[1].split("</dd>")[0]
    assert f"AXIOMS CONTRADICTORY (corpus run {r2}: refuted on their own" in job

    page = env.get("/suites")
    assert "contradictory</strong>" in page.split('id="suites"')[1]


def test_compare_page_refuses_two_suites_unless_asked(env, tmp_path):
    write(tmp_path / "a", ROUTES_1)
    write(tmp_path / "b", ROUTES_1)
    (tmp_path / "b" / "suite.toml").write_text(SUITE.replace('"ferrylines"', '"ferrylines-b"'))
    r1 = run(env, tmp_path / "a")
    r2 = run(env, tmp_path / "b")
    env.sign_in(env.alice)
    page = env.get(f"/compare?a={r1}&b={r2}", status=400)
    assert "of suite &#39;ferrylines&#39;" in page and "ferrylines-b" in page
    assert "No regression" not in page
    link = page.split('id="compare-anyway"')[0].rsplit('href="', 1)[1].split('"')[0]
    assert "across_suites=1" in link
    page = env.get(link.replace("&amp;", "&"))
    assert 'id="suites-differ"' in page
    differ = page.split('id="suites-differ"')[1].split("</p>")[0]
    assert "ferrylines" in differ and "ferrylines-b" in differ
    # runs of one suite are compared as before
    env.get(f"/compare?a={r1}&b={r1}")


def test_compare_page_says_a_removed_settled_obligation_fails_the_gate(env, tmp_path):
    write(tmp_path, ROUTES_1)
    r1 = run(env, tmp_path)
    write_files(tmp_path, {"goals/g.nj": "conjecture to_heron: reach(mill, heron)\n"})
    r2 = run(env, tmp_path)
    env.sign_in(env.alice)
    page = env.get(f"/compare?a={r1}&b={r2}")
    line = page.split('id="verdict-line"')[1].split("</p>")[0]
    assert "Fails the gate" in line and "No regression" not in line
    sec = section(page, "removed-settled")
    assert 'class="count">1<' in sec and "goals/g.nj#to_ashford" in sec


def test_compare_page_lists_a_flip_to_the_expected_verdict_as_gained_and_fixed(env, tmp_path):
    """The rule the CLI uses: a broken route turned the expected Theorem
    to_ashford into a countermodel; put back, it is gained (fixed), not
    flipped, and the page says "No regression" with the change called out."""
    expect = SUITE + '\n[expectations]\n"goals/g.nj#to_ashford" = "Theorem"\n' \
                     '"goals/g.nj#to_heron" = "Theorem"\n'
    write(tmp_path, ROUTES_1)
    (tmp_path / "suite.toml").write_text(expect)
    r1 = run(env, tmp_path)
    write_files(tmp_path, {"ax/routes.nj": ROUTES_2})
    r2 = run(env, tmp_path)
    write_files(tmp_path, {"ax/routes.nj": ROUTES_1})
    r3 = run(env, tmp_path)
    env.sign_in(env.alice)
    page = env.get(f"/compare?a={r2}&b={r3}")
    gained = section(page, "gained")
    assert 'class="count">1<' in gained and "goals/g.nj#to_ashford" in gained
    assert "fixed: a definite verdict changed" in gained
    assert 'class="count">0<' in section(page, "flipped")
    assert "goals/g.nj#to_ashford" not in section(page, "flipped")
    line = page.split('id="verdict-line"')[1].split("</p>")[0]
    assert "No regression." in line and "Regression:" not in line
    assert 'id="fixed-note"' in line and "1 definite verdict changed</strong>" in line
    # the run page's line with the previous run counts it the same way
    runpage = env.get(f"/runs/{r3}")
    assert "1 gained (<strong>1 fixed</strong>: a definite verdict changed), 0 lost, " \
           "0 flipped" in runpage
    # the step before (Theorem -> countermodel, Theorem expected) stays a flip
    page = env.get(f"/compare?a={r1}&b={r2}")
    assert "goals/g.nj#to_ashford" in section(page, "flipped")
    assert 'id="fixed-note"' not in page and "<strong>Regression:</strong>" in page

"""The web console (service/web) with the Flask test client over fakeredis.

Jobs are worked off in-process by ``worker.jobs.attempt`` (what a worker
does) with the real engine on small problems, so proofs, models and
comparisons on these pages are real ones."""

from __future__ import annotations

import html
import io
import re

import fakeredis
import pytest
from rq import Queue

from service import corpus as C
from service.app import create_app
from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
from service.store import Store
from worker import jobs

GOOD = """\
axiom a1: forall x. p(x) implies q(x)
axiom a2: p(c)
conjecture g: q(c)
conjecture h: q(d)
"""

GROUP = """\
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit: forall x. e * x = x and x * e = x
axiom inv: forall x. i(x) * x = e and x * i(x) = e
hypothesis hp: forall x. p(x) iff x = e
hypothesis hq: forall x y. q(x, y) iff x * y = y * x
conjecture comm: forall x y. x * y = y * x
conjecture lcancel: forall x y z. x * y = x * z implies y = z
"""

EVIL = "<script>alert(1)</script>"
# quoted names are symbols in the native language, so markup can reach the
# problem text, the proof and the model
HOSTILE = """\
axiom a1: forall x. '<script>alert(2)</script>'(x) implies '<b>q</b>'(x)
axiom a2: '<script>alert(2)</script>'('<img src=x onerror=alert(3)>')
conjecture g: '<b>q</b>'('<img src=x onerror=alert(3)>')
conjecture h: '<b>q</b>'(d)
"""

CSRF_RE = re.compile(r'name="csrf" value="([^"]+)"')


class Console:
    def __init__(self, app, r, store):
        self.app, self.r, self.store = app, r, store
        self.client = app.test_client()

    def csrf(self, path="/submit"):
        page = self.client.get(path)
        m = CSRF_RE.search(page.get_data(as_text=True))
        assert m, f"no CSRF token on {path}"
        return m.group(1)

    def sign_in(self, token):
        c = self.csrf("/sign-in")
        resp = self.client.post("/sign-in", data={"csrf": c, "token": token})
        assert resp.status_code == 303, resp.get_data(as_text=True)
        return resp

    def submit(self, text=None, **form):
        data = {"csrf": self.csrf(), **form}
        if text is not None:
            data["text"] = text
        return self.client.post("/submit", data=data, content_type="multipart/form-data")

    def get(self, path, status=200):
        resp = self.client.get(path)
        assert resp.status_code == status, (path, resp.status_code,
                                            resp.get_data(as_text=True)[:2000])
        return resp.get_data(as_text=True)

    def run_all(self):
        n = 0
        for qn in (QUEUE_INTERACTIVE, QUEUE_BATCH):
            q = Queue(qn, connection=self.r)
            for rq_id in q.job_ids:
                jobs.attempt(rq_id.rsplit("-", 1)[0], connection=self.r)
                q.remove(rq_id)
                n += 1
        return n


@pytest.fixture
def env(monkeypatch):
    monkeypatch.delenv("NIGHTJAR_SECRET_KEY", raising=False)
    monkeypatch.delenv("NIGHTJAR_COOKIE_SECURE", raising=False)
    r = fakeredis.FakeRedis()
    cfg = Config(max_time_limit=60, default_time_limit=10, max_upload_bytes=200_000)
    app = create_app(cfg, r)
    store = Store(r)
    e = Console(app, r, store)
    e.alice = store.add_token("alice")
    e.bob = store.add_token("bob")
    e.cfg = cfg
    return e


def batch_of(location: str) -> str:
    m = re.search(r"/batches/(b[0-9a-f]+)$", location)
    assert m, location
    return m.group(1)


def submitted_batch(e, text, **form) -> str:
    resp = e.submit(text, **form)
    assert resp.status_code == 303, resp.get_data(as_text=True)
    return batch_of(resp.headers["Location"])


def job_ids(e, bid):
    return e.store.batch_job_ids(bid)


# ================================================================ sign in

def test_pages_need_sign_in_and_redirect_back(env):
    for path in ("/batches", "/submit", "/suites", "/jobs/jx", "/batches/bx"):
        resp = env.client.get(path)
        assert resp.status_code == 302
        assert resp.headers["Location"].startswith("/sign-in?next=")
    assert env.client.get("/").headers["Location"] == "/sign-in"
    page = env.get("/sign-in")
    assert 'type="password"' in page and "API token" in page


def test_sign_in_with_a_bad_token_says_so(env):
    c = env.csrf("/sign-in")
    resp = env.client.post("/sign-in", data={"csrf": c, "token": "nj_not-a-token"})
    assert resp.status_code == 400
    assert "not known" in resp.get_data(as_text=True)
    assert env.client.get("/batches").status_code == 302


def test_sign_in_cookie_is_http_only_same_site_and_holds_no_token(env):
    c = env.csrf("/sign-in")
    resp = env.client.post("/sign-in", data={"csrf": c, "token": env.alice,
                                              "next": "/submit"})
    assert resp.status_code == 303 and resp.headers["Location"] == "/submit"
    cookie = resp.headers["Set-Cookie"]
    assert "HttpOnly" in cookie and "SameSite=Lax" in cookie
    assert env.alice not in cookie
    # the signed payload is readable base64: the token must not be in it either
    import base64
    import zlib
    value = cookie.split("=", 1)[1].split(";", 1)[0]
    payload = value.split(".")[1] if value.startswith(".") else value.split(".")[0]
    raw = base64.urlsafe_b64decode(payload + "=" * (-len(payload) % 4))
    if value.startswith("."):
        raw = zlib.decompress(raw)
    assert env.alice.encode() not in raw
    assert "signed in as" in env.get("/batches")


def _sign_in_cookie(e, base_url, headers=None):
    c = e.app.test_client()
    page = c.get("/sign-in", base_url=base_url, headers=headers or {})
    m = CSRF_RE.search(page.get_data(as_text=True))
    return c, c.post("/sign-in", base_url=base_url, headers=headers or {},
                     data={"csrf": m.group(1), "token": e.alice})


def test_cookie_is_secure_exactly_on_https(env, monkeypatch):
    flags = lambda resp: [f.strip().lower() for f in resp.headers["Set-Cookie"].split(";")]
    # plain http, loopback included: not Secure (a client that keeps Secure
    # cookies off http would never send it back), still HttpOnly and Lax
    for base in ("http://127.0.0.1:8080", "http://localhost", "http://[::1]:5000",
                 "http://console.example"):
        c, resp = _sign_in_cookie(env, base)
        assert resp.status_code == 303, base
        f = flags(resp)
        assert "secure" not in f and "httponly" in f and "samesite=lax" in f, (base, f)
        # the session sticks on the next plain-http request
        assert "signed in as" in c.get("/batches", base_url=base).get_data(as_text=True)
    # HTTPS: Secure
    for base in ("https://127.0.0.1:8443", "https://console.example"):
        _, resp = _sign_in_cookie(env, base)
        assert "secure" in flags(resp), base
    # X-Forwarded-Proto is not trusted (no proxy fix): it does not make http secure
    _, resp = _sign_in_cookie(env, "http://console.example",
                              headers={"X-Forwarded-Proto": "https"})
    assert "secure" not in flags(resp)
    # the setting overrides auto both ways
    monkeypatch.setenv("NIGHTJAR_COOKIE_SECURE", "always")
    assert "secure" in flags(_sign_in_cookie(env, "http://127.0.0.1:8080")[1])
    monkeypatch.setenv("NIGHTJAR_COOKIE_SECURE", "never")
    assert "secure" not in flags(_sign_in_cookie(env, "https://console.example")[1])


def test_sign_in_refuses_to_redirect_off_site(env):
    for nxt in ("//evil.example/x", "https://evil.example/", "/\\evil.example"):
        c = env.csrf("/sign-in")
        resp = env.client.post("/sign-in", data={"csrf": c, "token": env.alice, "next": nxt})
        assert resp.status_code == 303
        assert resp.headers["Location"] == "/batches", nxt


def test_sign_out_ends_the_session(env):
    env.sign_in(env.alice)
    c = env.csrf("/batches")
    resp = env.client.post("/sign-out", data={"csrf": c})
    assert resp.status_code == 303
    assert env.client.get("/batches").status_code == 302


def test_revoked_token_signs_the_session_out(env):
    env.sign_in(env.alice)
    assert env.client.get("/batches").status_code == 200
    env.store.revoke_token("alice")
    assert env.client.get("/batches").status_code == 302


def test_secret_key_is_shared_through_the_store(env):
    env.sign_in(env.alice)
    other = create_app(env.cfg, env.r)       # a second API process on the same store
    c2 = other.test_client()
    cookie = env.client.get_cookie("nightjar_console")
    c2.set_cookie("nightjar_console", cookie.value)
    assert c2.get("/batches").status_code == 200
    assert env.app.secret_key == other.secret_key


def test_secret_key_from_the_environment(env, monkeypatch):
    monkeypatch.setenv("NIGHTJAR_SECRET_KEY", "s3cret-for-test")
    app = create_app(env.cfg, fakeredis.FakeRedis())
    app.test_client().get("/sign-in")
    assert app.secret_key == b"s3cret-for-test"


# =================================================================== CSRF

def test_post_without_csrf_is_refused(env):
    env.client.get("/sign-in")
    resp = env.client.post("/sign-in", data={"token": env.alice})
    assert resp.status_code == 403
    assert "security token" in resp.get_data(as_text=True)
    env.sign_in(env.alice)
    resp = env.client.post("/submit", data={"text": GOOD, "csrf": "wrong"})
    assert resp.status_code == 403
    assert env.store.owner_batches("alice") == []          # nothing queued


def test_post_from_another_origin_is_refused(env):
    env.sign_in(env.alice)
    c = env.csrf()
    resp = env.client.post("/submit", data={"csrf": c, "text": GOOD},
                           headers={"Origin": "http://evil.example"})
    assert resp.status_code == 403
    assert env.store.owner_batches("alice") == []


def test_cancel_needs_csrf_and_then_cancels(env):
    env.sign_in(env.alice)
    bid = submitted_batch(env, GOOD)
    jid = job_ids(env, bid)[0]
    page = env.get(f"/jobs/{jid}")
    assert 'id="cancel"' in page
    resp = env.client.post(f"/jobs/{jid}/cancel", data={"csrf": "nope"})
    assert resp.status_code == 403
    assert env.store.get_job(jid)["state"] == "queued"
    resp = env.client.post(f"/jobs/{jid}/cancel", data={"csrf": env.csrf(f"/jobs/{jid}")})
    assert resp.status_code == 303
    assert env.store.get_job(jid)["state"] == "cancelled"
    assert 'id="cancel"' not in env.get(f"/jobs/{jid}")


def test_batch_cancel_form(env):
    env.sign_in(env.alice)
    bid = submitted_batch(env, GOOD)
    resp = env.client.post(f"/batches/{bid}/cancel", data={"csrf": env.csrf(f"/batches/{bid}")})
    assert resp.status_code == 303
    assert {env.store.get_job(j)["state"] for j in job_ids(env, bid)} == {"cancelled"}


def test_post_when_not_signed_in_is_401(env):
    c = env.csrf("/sign-in")
    resp = env.client.post("/submit", data={"csrf": c, "text": GOOD})
    assert resp.status_code == 401


# ========================================================== submit & pages

def test_submit_a_problem_and_read_every_page(env):
    env.sign_in(env.alice)
    form = env.get("/submit")
    assert 'enctype="multipart/form-data"' in form and 'name="time_limit"' in form
    bid = submitted_batch(env, GOOD, label="morning", time_limit="5")
    ids = job_ids(env, bid)
    assert len(ids) == 2                                 # two conjectures, two jobs
    recs = [env.store.get_job(j) for j in ids]
    assert all(r["time_limit"] == 5.0 and r["label"] == "morning" for r in recs)

    before = env.client.get(f"/batches/{bid}/live.json").get_json()
    assert before["finished"] is False and before["settled"] == 0
    page = env.get(f"/batches/{bid}")
    assert 'http-equiv="refresh"' in page                 # no-JS fallback while live
    assert env.run_all() == 2
    after = env.client.get(f"/batches/{bid}/live.json").get_json()
    assert after["finished"] is True and after["sig"] != before["sig"]
    assert after["verdicts"] == {"Theorem": 1, "CounterSatisfiable": 1}

    listing = env.get("/batches")
    assert bid in listing and "morning" in listing and "alice" in listing
    assert '<progress max="2" value="2"' in listing

    page = env.get(f"/batches/{bid}")
    assert 'http-equiv="refresh"' not in page
    assert "pasted#g" in page and "pasted#h" in page
    assert "<svg" in page and "Theorem" in page

    g, h = ids
    job = env.get(f"/jobs/{g}")
    assert 'id="L1"' in job and 'id="L4"' in job          # numbered lines
    assert '<tr id="L3" class="this-conjecture"' in job    # g is on line 3
    assert "axiom a1: forall x. p(x) implies q(x)" in job
    assert "proof replayed" in job and 'id="proof-link"' in job
    assert "Attempts" in job and 'id="cancel"' not in job

    proof = env.get(f"/jobs/{g}/proof")
    assert 'id="step-1"' in proof and "proof-graph" in proof
    assert re.search(r'<a href="#step-\d+" class="node', proof)     # graph nodes jump to steps
    assert re.search(r'class="step axiom axiom-used"', proof)       # used axioms marked
    assert f'/jobs/{g}#L1' in proof                                 # input step -> its line
    assert re.search(r'<a href="#step-\d+" class="parent">', proof)
    # the rule's clause keeps the statement's variable name
    assert "not p(x) or q(x)" in proof
    env.get(f"/jobs/{g}/model", status=404)

    model = env.get(f"/jobs/{h}/model")
    assert 'id="domain"' in model and "CounterSatisfiable" in model
    env.get(f"/jobs/{h}/proof", status=404)
    text = env.client.get(f"/jobs/{g}/problem.txt")
    assert text.mimetype == "text/plain" and text.get_data(as_text=True) == GOOD


def test_single_job_submission_goes_to_the_job(env):
    env.sign_in(env.alice)
    resp = env.submit("axiom a: p(c)\nconjecture g: p(c)\n")
    assert resp.status_code == 303 and re.search(r"/jobs/j[0-9a-f]+$", resp.headers["Location"])


def test_countermodel_tables(env):
    env.sign_in(env.alice)
    bid = submitted_batch(env, GROUP, time_limit="20")
    env.run_all()
    comm = next(j for j in job_ids(env, bid) if env.store.get_job(j)["conjecture"] == "comm")
    assert env.store.get_job(comm)["verdict"] == "CounterSatisfiable"
    page = env.get(f"/jobs/{comm}/model")
    size = env.store.get_result(comm)["model"]["size"]
    assert f"{size} elements" in page
    assert 'aria-label="operation table of *: rows x, columns y"' in page
    table = page.split('aria-label="operation table of *')[1].split("</table>")[0]
    assert table.count("<tr>") == size + 1                       # header + one row per x
    assert "<code>i(x)</code>" in page                           # unary function value list
    assert "<code>e</code>" in page                              # constant
    assert 'aria-label="truth grid of q' in page                 # binary predicate grid
    assert page.count('class="tv-t"') >= size                    # q(e, y) holds for every y
    # where the conjecture fails, named on the page and true of the table
    m = re.search(r'<span id="fails-at">for x = (\d+), y = (\d+)</span>', page)
    assert m, page
    mul = {tuple(a): v for a, v in
           env.store.get_result(comm)["model"]["functions"]["*"]["values"]}
    x, y = int(m.group(1)), int(m.group(2))
    assert mul[(x, y)] != mul[(y, x)]


def test_upload_files_and_shared_axioms(env):
    env.sign_in(env.alice)
    data = {"csrf": env.csrf(),
            "axioms_text": "axiom a1: forall x. p(x) implies q(x)\naxiom a2: p(c)\n",
            "files": [(io.BytesIO(b"conjecture g: q(c)\n"), "one.nj"),
                      (io.BytesIO(b"conjecture h: p(c)\nconjecture k: q(d)\n"), "two.nj")]}
    resp = env.client.post("/submit", data=data, content_type="multipart/form-data")
    assert resp.status_code == 303, resp.get_data(as_text=True)
    bid = batch_of(resp.headers["Location"])
    names = sorted((r["file"], r["conjecture"]) for r in env.store.get_jobs(job_ids(env, bid)))
    assert names == [("one.nj", "g"), ("two.nj", "h"), ("two.nj", "k")]
    env.run_all()
    verdicts = {r["conjecture"]: r["verdict"] for r in env.store.get_jobs(job_ids(env, bid))}
    assert verdicts == {"g": "Theorem", "h": "Theorem", "k": "CounterSatisfiable"}


def test_input_error_is_shown_at_its_line_and_nothing_is_queued(env):
    env.sign_in(env.alice)
    bad = "axiom a1: forall x. p(x)\naxiom a2: p(c) and and\nconjecture g: p(c)\n"
    resp = env.submit(bad, name="mine.nj")
    assert resp.status_code == 400
    page = resp.get_data(as_text=True)
    err = re.search(r'<pre class="input-error">(.*?)</pre>', page, re.S).group(1)
    err = html.unescape(err)
    assert err.startswith("mine.nj:2:")
    assert "axiom a2: p(c) and and" in err and "^" in err
    assert "nothing was queued" in page
    marked = re.search(r'<tr class="error-line" id="error-line"><td class="ln">(\d+)</td><td><code>(.*?)</code>',
                       page).groups()
    assert marked == ("2", "axiom a2: p(c) and and")
    assert "p(c) and and\nconjecture g: p(c)\n</textarea>" in page     # the text is kept
    assert env.store.owner_batches("alice") == []


def test_bad_form_input_is_400_with_a_message(env):
    env.sign_in(env.alice)
    resp = env.submit("")
    assert resp.status_code == 400 and "paste a problem" in resp.get_data(as_text=True)
    resp = env.submit(GOOD, time_limit="soon")
    assert resp.status_code == 400 and "time limit must be a number" in resp.get_data(as_text=True)
    resp = env.submit(GOOD, time_limit="1000")
    assert resp.status_code == 400 and "limit of 60" in resp.get_data(as_text=True)
    resp = env.client.post("/submit", content_type="multipart/form-data", data={
        "csrf": env.csrf(), "files": [(io.BytesIO(b"\xff\xfe\x00"), "bin.nj")]})
    assert resp.status_code == 400 and "not UTF-8" in resp.get_data(as_text=True)
    assert env.store.owner_batches("alice") == []


def test_upload_over_the_limit_is_a_413_page(env):
    env.sign_in(env.alice)
    c = env.csrf()
    resp = env.client.post("/submit", data={"csrf": c, "text": "x" * 300_000},
                           content_type="multipart/form-data")
    assert resp.status_code == 413
    assert "limit of 200,000 bytes" in resp.get_data(as_text=True)


# ================================================================ escaping

def test_user_strings_are_escaped_everywhere(env):
    env.sign_in(env.alice)
    bid = submitted_batch(env, HOSTILE, label=EVIL, name="<i>file</i>.nj")
    env.run_all()
    ids = job_ids(env, bid)
    recs = {r["conjecture"]: r for r in env.store.get_jobs(ids)}
    assert recs["g"]["verdict"] == "Theorem"
    pages = [env.get("/batches"), env.get(f"/batches/{bid}"),
             env.get(f"/batches/{bid}?q=%3Cscript%3E"),
             env.get(f"/jobs/{recs['g']['id']}"), env.get(f"/jobs/{recs['g']['id']}/proof")]
    if recs["h"]["verdict"] == "CounterSatisfiable" and env.store.get_result(recs["h"]["id"])["model"]:
        pages.append(env.get(f"/jobs/{recs['h']['id']}/model"))
    for page in pages:
        assert "<script>alert" not in page and "<img src=x" not in page
        assert "<b>q</b>" not in page and "<i>file</i>" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in pages[0]          # the label, as text
    assert "&lt;i&gt;file&lt;/i&gt;.nj" in pages[1]
    assert "&lt;script&gt;alert(2)&lt;/script&gt;" in pages[3]          # problem text
    assert "&lt;b&gt;q&lt;/b&gt;" in pages[4]                            # proof clauses
    resp = env.submit(f"axiom {EVIL}\n")
    assert resp.status_code == 400
    assert "<script>alert" not in resp.get_data(as_text=True)


def test_error_page_escapes_the_id(env):
    env.sign_in(env.alice)
    resp = env.client.get("/jobs/%3Cscript%3Ealert(1)%3C%2Fscript%3E")
    assert resp.status_code == 404
    assert "<script>alert" not in resp.get_data(as_text=True)


# ============================================================== ownership

def test_others_objects_are_404_and_not_listed(env):
    env.sign_in(env.alice)
    bid = submitted_batch(env, GOOD, label="alice-only")
    env.run_all()
    g, h = job_ids(env, bid)
    other = env.app.test_client()
    c = CSRF_RE.search(other.get("/sign-in").get_data(as_text=True)).group(1)
    other.post("/sign-in", data={"csrf": c, "token": env.bob})
    listing = other.get("/batches").get_data(as_text=True)
    assert "signed in as <strong>bob</strong>" in listing
    assert bid not in listing and "alice-only" not in listing
    for path in (f"/batches/{bid}", f"/batches/{bid}/live.json", f"/jobs/{g}",
                 f"/jobs/{g}/proof", f"/jobs/{h}/model", f"/jobs/{g}/live.json",
                 f"/jobs/{g}/problem.txt"):
        assert other.get(path).status_code == 404, path
    c = CSRF_RE.search(other.get("/submit").get_data(as_text=True)).group(1)
    assert other.post(f"/jobs/{g}/cancel", data={"csrf": c}).status_code == 404
    assert other.post(f"/batches/{bid}/cancel", data={"csrf": c}).status_code == 404


def test_error_pages(env):
    env.sign_in(env.alice)
    bid = submitted_batch(env, GOOD)
    page = env.get("/jobs/jnothing", status=404)
    assert "Not found" in page and "no job jnothing" in page
    env.get("/batches/bnothing", status=404)
    env.get("/runs/rnothing", status=404)
    env.get("/suites/nothing", status=404)
    for q, words in (("page=abc", "page must be a whole number"),
                     ("sort=colour", "sort must be one of"),
                     ("state=sleeping", "state must be one of"),
                     ("per=7", "per must be one of"),
                     ("min_s=fast", "min_s must be a number")):
        page = env.get(f"/batches/{bid}?{q}", status=400)
        assert words in page, q
    env.get("/compare?a=rx", status=400)
    env.get("/batches?page=0", status=400)


def test_unknown_addresses_get_the_consoles_404_page_and_headers(env):
    def check(resp, status, words):
        text = resp.get_data(as_text=True)
        assert resp.status_code == status, (resp.status_code, text[:300])
        assert resp.headers["Content-Type"].startswith("text/html")
        assert "console.css" in text and words in text, text[:500]   # error.html, not the default
        csp = resp.headers["Content-Security-Policy"]
        assert "default-src 'self'" in csp and "frame-ancestors 'none'" in csp
        assert resp.headers["X-Content-Type-Options"] == "nosniff"
        assert resp.headers["X-Frame-Options"] == "DENY"
        assert resp.headers["Referrer-Policy"] == "same-origin"
        assert "no-store" in resp.headers["Cache-Control"]
        return text

    for path in ("/login", "/nothing/here", "/batches/b1/extra/parts", "/%3Cscript%3E"):
        text = check(env.client.get(path), 404, "Not found")
        assert "<script>" not in text and "signed in as" not in text
    check(env.client.delete("/batches"), 405, "Not allowed here")
    env.sign_in(env.alice)
    assert "signed in as <strong>alice</strong>" in check(env.client.get("/login"), 404,
                                                          "Not found")
    # the API keeps its JSON 404
    api = env.client.get("/api/nothing", headers={"Authorization": f"Bearer {env.alice}"})
    assert api.status_code == 404 and api.is_json
    assert api.get_json()["error"]["code"] == "not_found"


def test_security_headers_and_no_outside_resources(env):
    env.sign_in(env.alice)
    bid = submitted_batch(env, GOOD)
    env.run_all()
    g = job_ids(env, bid)[0]
    for path in ("/sign-in", "/batches", f"/batches/{bid}", f"/jobs/{g}", f"/jobs/{g}/proof",
                 "/submit", "/suites"):
        resp = env.client.get(path)
        assert resp.status_code == 200
        csp = resp.headers["Content-Security-Policy"]
        assert "default-src 'self'" in csp and "frame-ancestors 'none'" in csp
        assert resp.headers["X-Content-Type-Options"] == "nosniff"
        assert "no-store" in resp.headers["Cache-Control"]
        text = resp.get_data(as_text=True)
        assert not re.search(r'(src|href)="(https?:)?//', text), path
        assert " style=" not in text                     # CSP allows no inline styles
        assert "<script>" not in text                    # nor inline scripts
    css = env.client.get("/web-static/console.css")
    js = env.client.get("/web-static/console.js")
    assert css.status_code == 200 and js.status_code == 200
    assert "@import" not in css.get_data(as_text=True) and "url(http" not in css.get_data(as_text=True)
    assert "http" not in js.get_data(as_text=True).replace("http-equiv", "")


# ============================================== a big batch: paging, sort, filter

def big_batch(e, n):
    """A batch of n jobs: three quarters settled (Theorem, Theorem, Timeout),
    one quarter queued.  Settled through the store's own transitions for
    small n; for large n the same fields are written in one pipeline (the
    transitions cost fakeredis seconds per thousand)."""
    bundle = {"main": "p.nj", "files": {"p.nj": "axiom a: p(c)\nconjecture g: p(c)\n"},
              "language": None}
    js = [{"file": f"f{i:05d}.nj", "conjecture": "g", "bundle": bundle, "time_limit": 10.0,
           "reuse_key": None} for i in range(n)]
    bid, ids = e.store.create_batch("alice", js, label="big", queue_name=QUEUE_BATCH,
                                    settings={})
    settle = [(i, jid, "Theorem" if i % 4 != 2 else "Timeout", (i % 97) / 10.0)
              for i, jid in enumerate(ids) if i % 4 != 3]
    if n <= 2000:
        for i, jid, status, secs in settle:
            e.store.start_attempt(jid, "w", 10)
            e.store.finish(jid, 1, {"status": status, "seconds": secs, "strategy": "s",
                                    "certificate": {}, "figures": {}})
    else:
        pipe = e.r.pipeline(transaction=False)
        counts = {"queued": n - len(settle), "done": len(settle)}
        for i, jid, status, secs in settle:
            pipe.hset(e.store.k_job(jid), mapping={"state": "done", "verdict": status,
                                                   "seconds": str(secs), "attempts": "1"})
            counts["v:" + status] = counts.get("v:" + status, 0) + 1
        pipe.hset(e.store.k_counts(bid), mapping=counts)
        pipe.execute()
    return bid, ids


def test_big_batch_pages_sorts_and_filters(env):
    env.sign_in(env.alice)
    bid, ids = big_batch(env, 1000)
    page = env.get(f"/batches/{bid}")
    assert "1000 jobs match; page 1 of 10." in page
    assert page.count('<tr>\n  <td class="num">') == 100
    page = env.get(f"/batches/{bid}?page=10&per=50")
    assert "page 10 of 20" in page
    page = env.get(f"/batches/{bid}?state=queued&per=500")
    assert "250 jobs match" in page and "f00003.nj#g" in page and "f00000.nj#g" not in page
    page = env.get(f"/batches/{bid}?verdict=Timeout")
    assert "250 jobs match" in page
    page = env.get(f"/batches/{bid}?q=F0099")                    # name, any case
    assert "10 jobs match" in page
    page = env.get(f"/batches/{bid}?min_s=9.5&max_s=9.6")
    seconds = [float(x) for x in re.findall(r'<td class="num">([\d.]+) s</td>', page)]
    assert seconds and all(9.5 <= s <= 9.6 for s in seconds)
    page = env.get(f"/batches/{bid}?sort=time&dir=desc&state=done")
    seconds = [float(x) for x in re.findall(r'<td class="num">([\d.]+) s</td>', page)]
    assert seconds == sorted(seconds, reverse=True) and seconds[0] == 9.6
    assert 'aria-sort="descending"' in page
    page = env.get(f"/batches/{bid}?sort=name&dir=desc")
    names = re.findall(r'>(f\d{5}\.nj#g)</a>', page)
    assert names[0] == "f00999.nj#g" and names == sorted(names, reverse=True)
    # the sort links keep the filter
    page = env.get(f"/batches/{bid}?state=done")
    assert re.search(r'href="/batches/%s\?state=done&amp;sort=time' % bid, page)
    # the counts in the summary filter the table
    assert f'href="/batches/{bid}?verdict=Timeout"' in page
    assert f'href="/batches/{bid}?state=queued"' in page
    # the charts: verdict bars and the time histogram
    assert "Jobs by verdict: Theorem 500, Timeout 250, queued 250" in page
    assert "Time of the 750 finished jobs" in page


def test_ten_thousand_jobs_page(env):
    # paging, sorting and counting over 10,000 jobs (how fast is not asserted
    # here: speed is for benchmarks, not for a test on a shared machine)
    env.sign_in(env.alice)
    bid, _ = big_batch(env, 10_000)
    page = env.get(f"/batches/{bid}?sort=time&dir=desc&page=37")
    assert "10000 jobs match; page 37 of 100." in page


# ======================================================== suites and runs

SUITE = """\
[suite]
name = "web-{tag}"
description = "a small suite for the console tests"
source = "written for this test"
time_limit = 5
axioms = ["{axdir}/*.nj"]
problems = ["conj/*.nj"]

[expectations]
"conj/c.nj#g1" = "Theorem"
"conj/c.nj#g2" = "CounterSatisfiable"
"conj/c.nj#g3" = "Theorem"
"""


def make_suite(tmp_path, tag):
    (tmp_path / "ax1").mkdir()
    (tmp_path / "ax2").mkdir()
    (tmp_path / "conj").mkdir()
    (tmp_path / "ax1" / "a.nj").write_text("axiom a1: forall x. p(x) implies q(x)\naxiom a2: p(c)\n")
    # the second version adds p(d): g2 flips to Theorem
    (tmp_path / "ax2" / "a.nj").write_text("axiom a1: forall x. p(x) implies q(x)\n"
                                           "axiom a2: p(c)\naxiom a3: p(d)\n")
    (tmp_path / "conj" / "c.nj").write_text("conjecture g1: q(c)\nconjecture g2: q(d)\n"
                                            "conjecture g3: p(c)\n")
    (tmp_path / "one.toml").write_text(SUITE.format(tag=tag, axdir="ax1"))
    (tmp_path / "two.toml").write_text(SUITE.format(tag=tag, axdir="ax2"))
    return tmp_path / "one.toml", tmp_path / "two.toml"


def corpus_run(e, token, manifest):
    body = C.submission(C.load_suite(str(manifest)))
    resp = e.app.test_client().post("/api/corpus/runs", json=body,
                                    headers={"Authorization": f"Bearer {token}"})
    assert resp.status_code == 202, resp.get_data(as_text=True)
    e.run_all()
    return resp.get_json()["run"]


def test_suites_runs_and_comparison(env, tmp_path):
    one, two = make_suite(tmp_path, "x")
    r1 = corpus_run(env, env.alice, one)
    r2 = corpus_run(env, env.alice, two)
    env.sign_in(env.alice)
    page = env.get("/suites")
    assert "web-x" in page and r2 in page
    page = env.get("/suites/web-x")
    assert r1 in page and r2 in page and f"/compare?a={r1}&amp;b={r2}" in page
    page = env.get(f"/runs/{r1}")
    assert "conj/c.nj#g1" in page and "consistent" in page
    assert page.count('<a href="/jobs/j') >= 3
    page = env.get(f"/runs/{r2}")
    assert 'id="compare-link"' in page

    page = env.get(f"/compare?a={r1}&b={r2}")
    section = lambda name: page.split(f'id="{name}"')[1].split("</section>")[0]
    assert "conj/c.nj#g2" in section("flipped")
    assert 'class="count">1<' in section("flipped")
    assert 'class="count">0<' in section("lost")
    assert 'class="count">0<' in section("gained")
    # g2 was expected CounterSatisfiable in the second manifest too: unexpected
    assert "conj/c.nj#g2" in section("unexpected")
    reused = section("reused")
    assert "conj/c.nj#g1" in reused and "proof-replayed" in reused
    assert re.search(r'href="/jobs/j[0-9a-f]+">source</a>', reused)
    assert re.search(r'href="/jobs/j[0-9a-f]+">after</a>', section("flipped"))
    assert "Regression" in page

    # bob sees none of it
    other = env.app.test_client()
    c = CSRF_RE.search(other.get("/sign-in").get_data(as_text=True)).group(1)
    other.post("/sign-in", data={"csrf": c, "token": env.bob})
    assert "web-x" not in other.get("/suites").get_data(as_text=True)
    assert other.get(f"/runs/{r1}").status_code == 404
    assert other.get("/suites/web-x").status_code == 404
    assert other.get(f"/compare?a={r1}&b={r2}").status_code == 404


def test_store_down_is_a_503_page(monkeypatch):
    monkeypatch.delenv("NIGHTJAR_SECRET_KEY", raising=False)
    server = fakeredis.FakeServer()
    r = fakeredis.FakeRedis(server=server)
    app = create_app(Config(), r)
    token = Store(r).add_token("alice")
    c = app.test_client()
    m = CSRF_RE.search(c.get("/sign-in").get_data(as_text=True))
    assert c.post("/sign-in", data={"csrf": m.group(1), "token": token}).status_code == 303
    server.connected = False
    resp = c.get("/batches")
    assert resp.status_code == 503 and "not answering" in resp.get_data(as_text=True)
    fresh = create_app(Config(), fakeredis.FakeRedis(server=server))   # no key yet
    resp = fresh.test_client().get("/sign-in")
    assert resp.status_code == 503 and "not answering" in resp.get_data(as_text=True)
    # an unknown address is still the console's 404 page while the store is down
    for app_ in (app, fresh):
        resp = app_.test_client().get("/login")
        assert resp.status_code == 404 and "console.css" in resp.get_data(as_text=True)
        assert "default-src 'self'" in resp.headers["Content-Security-Policy"]
    resp = c.get("/login")                           # with a session cookie
    assert resp.status_code == 404 and "console.css" in resp.get_data(as_text=True)

"""Gaps closed in the web console: the submit form under the API's rate
limit, the model link only where a model is stored, and a refused upload
that keeps what was sent.  Flask test client over fakeredis."""

from __future__ import annotations

import html
import io
import re

import pytest

from service.limits import RateLimiter
from tests.test_web_pages import GOOD, Console
from tests.test_web_pages import env  # noqa: F401  (the console over fakeredis)


# ============================================ 2. the submit form is rate-limited

def test_web_submissions_share_the_api_rate_budget_of_their_token(env):
    # a budget of 3 requests with next to no refill: the test cannot outrun it
    e = env
    e.app.extensions["nightjar_limits"].rate = RateLimiter(rate=0.001, burst=3)
    api = {"Authorization": f"Bearer {e.alice}"}
    e.sign_in(e.alice)
    assert e.client.get("/api/batches", headers=api).status_code == 200     # 1
    assert e.client.get("/api/batches", headers=api).status_code == 200     # 2
    ok = e.submit(GOOD, name="first.nj")                                     # 3
    assert ok.status_code == 303, ok.get_data(as_text=True)
    before = e.store.r.keys("nj:batch:*")

    refused = e.submit(GOOD + "# <b>kept</b>\n", name="second.nj", label="my run")
    page = refused.get_data(as_text=True)
    assert refused.status_code == 429
    assert refused.headers["Content-Type"].startswith("text/html")
    assert int(refused.headers["Retry-After"]) >= 1
    assert "Too many requests for this token: at most 0.001 a second (bursts of 3)" in page
    assert "Nothing was queued" in page and "Traceback" not in page
    # the form comes back with what was typed, escaped
    assert "# &lt;b&gt;kept&lt;/b&gt;" in page and "<b>kept</b>" not in page
    assert 'value="second.nj"' in page and 'value="my run"' in page
    assert e.store.r.keys("nj:batch:*") == before                  # nothing stored

    # the API, for the same token, is out of budget too
    assert e.client.get("/api/batches", headers=api).status_code == 429
    # another token's budget is its own
    bob = Console(e.app, e.r, e.store)
    bob.sign_in(e.bob)
    assert bob.submit(GOOD).status_code == 303


# ============================ 3. a model link only where a model is stored

# Nine pairwise distinct constants: no model of at most 8 elements (the
# model search's bound), while the clause set saturates at once under a
# complete strategy, so the verdict is CounterSatisfiable without a model.
NINE = [f"k{i}" for i in range(1, 10)]
SATURATES = "".join(f"axiom d{a}_{b}: {NINE[a]} != {NINE[b]}\n"
                    for a in range(9) for b in range(a + 1, 9)) + "conjecture far: q(k1)\n"
FINITE = "axiom a1: forall x. p(x) implies q(x)\naxiom a2: p(c)\nconjecture near: q(d)\n"


def settled_pair(e):
    """A batch of two CounterSatisfiable jobs, worked off with the real
    engine: one by a finite model, one by saturation.  (job ids by name)"""
    resp = e.submit(None, files=[(io.BytesIO(SATURATES.encode()), "saturates.nj"),
                                 (io.BytesIO(FINITE.encode()), "finite.nj")])
    assert resp.status_code == 303, resp.get_data(as_text=True)
    bid = resp.headers["Location"].rsplit("/", 1)[1]
    assert e.run_all() == 2
    ids = {e.store.get_job(j)["conjecture"]: j for j in e.store.batch_job_ids(bid)}
    return bid, ids


def test_a_verdict_from_saturation_gets_no_model_link_and_a_404_that_says_why(env):
    env.sign_in(env.alice)
    bid, ids = settled_pair(env)
    far, near = ids["far"], ids["near"]
    for jid in (far, near):
        assert env.store.get_job(jid)["verdict"] == "CounterSatisfiable"
    assert env.store.get_job(far)["certificate"]["kind"] == "none"     # from saturation
    assert env.store.get_result(far)["model"] is None
    assert env.store.get_result(near)["model"] is not None

    # the batch table links the stored model and only it
    page = env.get(f"/batches/{bid}")
    assert f'href="/jobs/{near}/model"' in page
    assert f'href="/jobs/{far}/model"' not in page
    row = page.split(f'href="/jobs/{far}"')[1].split("</tr>")[0]
    assert "saturated, no model" in row

    # the job page: no model button, a line saying why
    job = env.get(f"/jobs/{far}")
    assert 'id="model-link"' not in job
    assert 'id="no-model"' in job and "came from saturation" in job
    assert 'id="model-link"' in env.get(f"/jobs/{near}")

    # the console's model page and the API: 404 with the reason
    assert "came from saturation" in env.get(f"/jobs/{far}/model", status=404)
    api = {"Authorization": f"Bearer {env.alice}"}
    r = env.client.get(f"/api/jobs/{far}/model", headers=api)
    assert r.status_code == 404 and r.is_json
    err = r.get_json()["error"]
    assert err["code"] == "no_model"
    assert f"job {far} has no model: its CounterSatisfiable verdict came from saturation" \
        in err["message"]
    ok = env.client.get(f"/api/jobs/{near}/model", headers=api)
    assert ok.status_code == 200 and ok.get_json()["model"]["size"] >= 1
    # someone else asking about the job is still told there is no such job
    bob = {"Authorization": f"Bearer {env.bob}"}
    other = env.client.get(f"/api/jobs/{far}/model", headers=bob)
    assert other.status_code == 404 and other.get_json()["error"]["code"] == "not_found"


# ============================== 4. a refused upload keeps what was sent

BAD_UPLOAD = "# two lines before <b>the</b> slip & more\n\naxiom a: p(a b)\nconjecture g: p(a, a)\n"


def textareas(page, name):
    """The values of the textareas called ``name``, as a browser reads them
    (entities decoded, the one newline after the opening tag dropped)."""
    out = []
    for m in re.finditer(r'<textarea[^>]*\bname="%s"[^>]*>(.*?)</textarea>' % name, page, re.S):
        v = html.unescape(m.group(1))
        out.append(v[1:] if v.startswith("\n") else v)
    return out


def inputs(page, name):
    return [html.unescape(v) for v in re.findall(r'<input[^>]*\bname="%s" value="([^"]*)"' % name, page)]


def test_a_refused_upload_comes_back_in_the_form_and_can_be_sent_again(env):
    env.sign_in(env.alice)
    resp = env.submit(None, label="kept <label>", time_limit="7",
                      files=[(io.BytesIO(BAD_UPLOAD.encode()), "bad.nj"),
                             (io.BytesIO(GOOD.encode()), "good.nj")],
                      axiom_files=[])
    page = resp.get_data(as_text=True)
    assert resp.status_code == 400
    # the error at its line, as before
    assert "The input has an error; nothing was queued." in page
    assert "bad.nj:3:14: error: expected &#39;,&#39; or &#39;)&#39;" in page
    assert re.search(r'<tr class="error-line" id="error-line"><td class="ln">3</td>', page)
    # both files are in the form again, each its own editable text, escaped
    assert inputs(page, "kept_name") == ["bad.nj", "good.nj"]
    assert textareas(page, "kept_text") == [BAD_UPLOAD, GOOD]
    assert "<b>the</b>" not in page and "&lt;b&gt;the&lt;/b&gt; slip &amp; more" in page
    assert 'value="kept &lt;label&gt;"' in page and 'value="7"' in page
    assert env.store.r.keys("nj:batch:*") == []                     # nothing stored

    # fix the slip in the kept text and send the form again, choosing no file
    fixed = textareas(page, "kept_text")[0].replace("p(a b)", "p(a, b)")
    again = env.client.post("/submit", content_type="multipart/form-data", data={
        "csrf": env.csrf(), "label": "kept <label>", "time_limit": "7",
        "kept_name": inputs(page, "kept_name"), "kept_text": [fixed, GOOD]})
    assert again.status_code == 303, again.get_data(as_text=True)
    bid = again.headers["Location"].rsplit("/", 1)[1]
    recs = [env.store.get_job(j) for j in env.store.batch_job_ids(bid)]
    assert [(r["file"], r["conjecture"]) for r in recs] == \
        [("bad.nj", "g"), ("good.nj", "g"), ("good.nj", "h")]
    assert recs[0]["label"] == "kept <label>"


def test_kept_files_can_be_replaced_left_out_and_pasted_text_is_kept(env):
    env.sign_in(env.alice)
    # a pasted problem with a slip: the text comes back as written
    pasted = "\naxiom a: p and\n"
    resp = env.submit(pasted, name="mine.nj")
    page = resp.get_data(as_text=True)
    assert resp.status_code == 400 and "mine.nj:2:15: error: missing operand" in page
    assert textareas(page, "text") == [pasted]                     # its first empty line too
    # a kept file chosen again under its name is replaced; an emptied one is left out
    resp = env.client.post("/submit", content_type="multipart/form-data", data={
        "csrf": env.csrf(), "kept_name": ["bad.nj", "gone.nj"],
        "kept_text": [BAD_UPLOAD, ""],
        "files": [(io.BytesIO(b"axiom a: p(c)\nconjecture g: p(c)\n"), "bad.nj")]})
    assert resp.status_code == 303, resp.get_data(as_text=True)
    jid = resp.headers["Location"].rsplit("/", 1)[1]
    assert env.store.get_job(jid)["file"] == "bad.nj"
    # kept axiom files come back too, and a file that is not UTF-8 is named
    resp = env.client.post("/submit", content_type="multipart/form-data", data={
        "csrf": env.csrf(), "text": "conjecture g: q(c)\n",
        "axiom_files": [(io.BytesIO(b"axiom a: forall x. p(x) implies q(x)\n"), "ax.nj"),
                        (io.BytesIO(b"axiom b: caf\xe9\n"), "latin.nj")]})
    page = resp.get_data(as_text=True)
    assert resp.status_code == 400 and "the file &#39;latin.nj&#39; is not UTF-8 text" in page
    assert inputs(page, "kept_axioms_name") == ["ax.nj"]
    assert textareas(page, "kept_axioms_text") == ["axiom a: forall x. p(x) implies q(x)\n"]
    assert textareas(page, "text") == ["conjecture g: q(c)\n"]


# ===================== 5. paging out of range is 400, not "the store is down"

def test_page_numbers_beyond_the_offset_bound_are_400_on_every_paging_page(env):
    from tests.test_web_pages import submitted_batch
    e = env
    e.sign_in(e.alice)
    bid = submitted_batch(e, GOOD)
    huge = "99999999999999999999"
    for path in (f"/batches?page={huge}", f"/batches/live.json?page={huge}",
                 f"/batches/{bid}?page={huge}", f"/batches/{bid}?per=500&page={huge}",
                 "/batches?page=20000001", f"/batches/{bid}?per=500&page=2000001"):
        resp = e.client.get(path)
        page = resp.get_data(as_text=True)
        assert resp.status_code == 400, (path, resp.status_code, page[:300])
        assert "page must be between 1 and" in page, path
        assert "not answering" not in page
        assert resp.headers["Content-Type"].startswith("text/html")
        assert "default-src 'self'" in resp.headers["Content-Security-Policy"]
    # the last pages within the bound are ordinary (empty) pages
    assert "signed in as" in e.get("/batches?page=20000000")
    assert "signed in as" in e.get(f"/batches/{bid}?per=500&page=2000000")
    assert e.client.get("/batches/live.json?page=20000000").get_json()["batches"] == []


def test_an_error_reply_to_a_bad_command_is_not_reported_as_the_store_down(env, monkeypatch):
    import redis

    e = env
    e.sign_in(e.alice)
    store = e.app.extensions["nightjar"].store

    def bad_range(owner, offset=0, limit=50):        # a real error reply from the store
        return store.r.execute_command("ZREVRANGE", store.k_owner_batches(owner),
                                       "not-a-number", 1)

    monkeypatch.setattr(store, "owner_batches", bad_range)
    with pytest.raises(redis.ResponseError):
        bad_range("alice")
    resp = e.client.get("/batches")
    page = resp.get_data(as_text=True)
    assert resp.status_code == 500, page[:300]
    assert "not answering" not in page and "fault in the console" in page
    assert "Traceback" not in page

    # error replies about the server's state are still "not answering" (503)
    for err in (redis.exceptions.OutOfMemoryError("command not allowed when used memory > 'maxmemory'"),
                redis.exceptions.ReadOnlyError("You can't write against a read only replica."),
                redis.ResponseError("MISCONF Redis is configured to save RDB snapshots"),
                redis.ConnectionError("Connection refused")):
        def trouble(*a, err=err, **kw):
            raise err
        monkeypatch.setattr(store, "owner_batches", trouble)
        resp = e.client.get("/batches")
        assert resp.status_code == 503, (err, resp.status_code)
        assert "not answering" in resp.get_data(as_text=True)

"""The JSON API against fakeredis, with the Flask test client.

Jobs are run in-process by calling ``worker.jobs.attempt`` (what a worker
does); the engine's ``decide`` is replaced by a stand-in where a test is about
the service and not about proving.
"""

import json

import fakeredis
import pytest
from rq import Queue

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

BAD = """\
axiom a1: forall x. p(x) implies q(x)
axiom a2: p(c) and and
conjecture g: q(c)
"""


def fake_decide(problem, conjecture, settings=None):
    status = "Theorem" if conjecture == "g" else "CounterSatisfiable"
    proof = {"steps": [{"id": 0, "clause": [], "rule": "input"}], "conjecture": conjecture,
             "axioms_used": ["a1"]} if status == "Theorem" else None
    model = None if proof else {"size": 1, "functions": {}, "predicates": {}}
    return {"conjecture": conjecture, "status": status, "seconds": 0.01,
            "strategy": "fake", "reason": "", "figures": {"given": 3,
                                                          "time_limit": settings.limits.time,
                                                          "asked": settings.strategy},
            "axioms_used": ["a1"] if proof else [], "proof": proof, "model": model,
            "certificate": {"kind": "proof-replayed" if proof else "model-evaluated",
                            "checked": 1, "detail": ""}}


@pytest.fixture
def env(monkeypatch):
    monkeypatch.setattr("worker.pipeline.decide", fake_decide)
    r = fakeredis.FakeRedis()
    cfg = Config(max_time_limit=60, max_jobs_per_batch=5, max_upload_bytes=20_000)
    app = create_app(cfg, r)
    store = Store(r)
    tok = store.add_token("alice")
    other = store.add_token("bob")
    c = app.test_client()

    class E:
        pass
    e = E()
    e.r, e.app, e.store, e.client, e.cfg = r, app, store, c, cfg
    e.h = {"Authorization": f"Bearer {tok}"}
    e.h2 = {"Authorization": f"Bearer {other}"}

    def post(body, headers=None):
        return c.post("/api/submissions", json=body, headers=headers or e.h)
    e.post = post

    def run_all():
        """Work off both queues in-process, interactive first."""
        done = []
        for qn in (QUEUE_INTERACTIVE, QUEUE_BATCH):
            q = Queue(qn, connection=r)
            for rq_id in q.job_ids:
                jid = rq_id.rsplit("-", 1)[0]
                done.append(jobs.attempt(jid, connection=r))
                q.remove(rq_id)
        return done
    e.run_all = run_all
    return e


def one(text=GOOD, name="t.nj"):
    return {"main": name, "files": {name: text}}


def test_health_needs_no_token(env):
    r = env.client.get("/api/health")
    assert r.status_code == 200
    assert r.get_json()["ok"] is True


def test_everything_else_needs_a_token(env):
    assert env.client.get("/api/batches").status_code == 401
    r = env.client.post("/api/submissions", json={"problem": one()},
                        headers={"Authorization": "Bearer nope"})
    assert r.status_code == 401
    assert r.get_json()["error"]["code"] == "unauthorized"


def test_submit_one_file_makes_a_job_per_conjecture(env):
    r = env.post({"problem": one(), "label": "first", "time_limit": 3})
    assert r.status_code == 202, r.get_json()
    body = r.get_json()
    assert [j["conjecture"] for j in body["jobs"]] == ["g", "h"]
    assert all(j["state"] == "queued" for j in body["jobs"])
    # a single problem goes to the interactive queue
    assert Queue(QUEUE_INTERACTIVE, connection=env.r).count == 2
    assert Queue(QUEUE_BATCH, connection=env.r).count == 0
    b = env.client.get(f"/api/batches/{body['batch']}", headers=env.h).get_json()
    assert b["states"]["queued"] == 2 and b["total"] == 2 and b["label"] == "first"

    assert sorted(env.run_all()) == ["CounterSatisfiable", "Theorem"]
    g, h = body["jobs"]
    jg = env.client.get(f"/api/jobs/{g['id']}", headers=env.h).get_json()
    assert jg["state"] == "done" and jg["verdict"] == "Theorem"
    assert jg["attempts"] == 1 and jg["strategy"] == "fake"
    assert jg["started"] >= jg["submitted"] and jg["finished"] >= jg["started"]
    assert jg["certificate"]["kind"] == "proof-replayed"
    pr = env.client.get(f"/api/jobs/{g['id']}/proof", headers=env.h).get_json()
    assert pr["proof"]["steps"][0]["rule"] == "input"
    fig = env.client.get(f"/api/jobs/{g['id']}/figures", headers=env.h).get_json()
    assert fig["figures"] == {"given": 3, "time_limit": 3.0, "asked": None}
    mo = env.client.get(f"/api/jobs/{h['id']}/model", headers=env.h).get_json()
    assert mo["model"]["size"] == 1 and mo["verdict"] == "CounterSatisfiable"
    src = env.client.get(f"/api/jobs/{g['id']}/problem", headers=env.h).get_json()
    assert src["text"] == GOOD and src["main"] == "t.nj"
    b = env.client.get(f"/api/batches/{body['batch']}", headers=env.h).get_json()
    assert b["states"]["done"] == 2 and b["states"]["queued"] == 0
    assert b["verdicts"] == {"Theorem": 1, "CounterSatisfiable": 1}
    assert b["finished"] is True and b["progress"] == 1.0


def test_bad_input_is_refused_with_its_place_and_nothing_is_kept(env):
    env.client.get("/api/batches", headers=env.h)   # whatever a first request sets up
    before = set(env.r.keys("*"))
    r = env.post({"problems": [one(), one(BAD, "bad.nj")]})
    assert r.status_code == 400
    err = r.get_json()["error"]
    assert err["code"] == "input_error"
    assert err["file"] == "bad.nj" and err["line"] == 2
    assert err["text"].startswith(f"bad.nj:2:{err['col']}: error:")
    assert set(env.r.keys("*")) == before


def test_axioms_with_many_conjectures(env):
    ax = {"main": "ax.nj", "files": {"ax.nj": "axiom a1: forall x. p(x) implies q(x)\n"
                                              "axiom a2: p(c)\n"}}
    r = env.post({"axioms": ax, "conjectures": [
        {"name": "c1.nj", "text": "conjecture g: q(c)\n"},
        {"name": "c2.nj", "text": "conjecture h: q(d)"}]})
    assert r.status_code == 202, r.get_json()
    jobs_ = r.get_json()["jobs"]
    assert [(j["file"], j["conjecture"]) for j in jobs_] == [("c1.nj", "g"), ("c2.nj", "h")]
    assert Queue(QUEUE_BATCH, connection=env.r).count == 2
    # an error in a conjecture file keeps that file's own line numbers
    r = env.post({"axioms": ax, "conjectures": [
        {"name": "c3.nj", "text": "\n\nconjecture g: q(c) or\n"}]})
    assert r.status_code == 400
    err = r.get_json()["error"]
    assert (err["file"], err["line"], err["col"]) == ("c3.nj", 3, 22)
    assert err["text"].splitlines()[1].strip() == "conjecture g: q(c) or"


def test_limits(env):
    r = env.post({"problem": one(), "time_limit": 61})
    assert r.status_code == 400 and r.get_json()["error"]["code"] == "limit"
    r = env.post({"problems": [one()] * 6})
    assert r.status_code == 400 and r.get_json()["error"]["code"] == "too_many_jobs"
    # three files of two obligations each: six jobs, over five
    r = env.post({"problems": [one()] * 3})
    assert r.status_code == 400 and r.get_json()["error"]["code"] == "too_many_jobs"
    big = "axiom a: p\n" * 3000
    r = env.client.post("/api/submissions", data=json.dumps({"problem": one(big)}),
                        headers={**env.h, "Content-Type": "application/json"})
    assert r.status_code == 413 and r.get_json()["error"]["code"] == "too_large"
    r = env.post({"problem": one(), "strategy": "no-such-strategy"})
    assert r.status_code == 400 and "unknown strategy" in r.get_json()["error"]["message"]
    for body in ({}, {"problem": "x"}, {"problem": {"main": "a", "files": {"b": "c"}}},
                 {"problem": one(), "time_limit": "soon"}, [1, 2]):
        r = env.post(body)
        assert r.status_code == 400, body
        assert "message" in r.get_json()["error"]
    assert env.r.keys("nj:job:*") == []


def test_other_owner_gets_404(env):
    body = env.post({"problem": one()}).get_json()
    jid, bid = body["jobs"][0]["id"], body["batch"]
    for path in (f"/api/jobs/{jid}", f"/api/jobs/{jid}/proof", f"/api/jobs/{jid}/problem",
                 f"/api/batches/{bid}", f"/api/batches/{bid}/jobs"):
        assert env.client.get(path, headers=env.h2).status_code == 404, path
        assert env.client.get(path, headers=env.h).status_code == 200, path
    assert env.client.post(f"/api/jobs/{jid}/cancel", headers=env.h2).status_code == 404
    assert env.client.get("/api/batches", headers=env.h2).get_json()["batches"] == []


def test_cancel_queued_job_never_starts(env):
    body = env.post({"problem": one()}).get_json()
    g, h = body["jobs"]
    r = env.client.post(f"/api/jobs/{g['id']}/cancel", headers=env.h).get_json()
    assert r["state"] == "cancelled" and r["was"] == "queued"
    assert sorted(env.run_all()) == ["CounterSatisfiable", "skipped"]
    rec = env.client.get(f"/api/jobs/{g['id']}", headers=env.h).get_json()
    assert rec["state"] == "cancelled" and rec["verdict"] is None and rec["attempts"] == 0
    b = env.client.get(f"/api/batches/{body['batch']}", headers=env.h).get_json()
    assert b["states"]["cancelled"] == 1 and b["states"]["done"] == 1
    # cancelling a settled job changes nothing
    r = env.client.post(f"/api/jobs/{h['id']}/cancel", headers=env.h).get_json()
    assert r["cancelled"] is False and r["state"] == "done"


def test_cancel_batch(env):
    body = env.post({"problems": [one(), one()]}).get_json()
    r = env.client.post(f"/api/batches/{body['batch']}/cancel", headers=env.h).get_json()
    assert r["cancelled"] == 4
    assert env.run_all() == ["skipped"] * 4
    b = env.client.get(f"/api/batches/{body['batch']}", headers=env.h).get_json()
    assert b["states"]["cancelled"] == 4 and b["finished"]


def test_batch_jobs_filter_and_pages(env):
    body = env.post({"problems": [one(), one()]}).get_json()
    env.run_all()
    bid = body["batch"]
    r = env.client.get(f"/api/batches/{bid}/jobs?verdict=Theorem", headers=env.h).get_json()
    assert r["total"] == 2 and all(j["verdict"] == "Theorem" for j in r["jobs"])
    r = env.client.get(f"/api/batches/{bid}/jobs?limit=3&offset=2", headers=env.h).get_json()
    assert r["total"] == 4 and [j["id"] for j in r["jobs"]] == [j["id"] for j in body["jobs"][2:]]
    r = env.client.get(f"/api/batches/{bid}/jobs?state=queued", headers=env.h).get_json()
    assert r["total"] == 0
    assert env.client.get(f"/api/batches/{bid}/jobs?state=bogus",
                          headers=env.h).status_code == 400
    assert env.client.get(f"/api/batches/{bid}/jobs?limit=-1",
                          headers=env.h).status_code == 400


def test_reuse_answers_from_stored_verdict(env, monkeypatch):
    first = env.post({"problem": one(), "time_limit": 5}).get_json()
    env.run_all()
    calls = []
    monkeypatch.setattr("worker.pipeline.decide",
                        lambda *a, **k: calls.append(a) or fake_decide(*a, **k))
    again = env.post({"problem": one(), "time_limit": 5, "reuse": True}).get_json()
    assert [j["state"] for j in again["jobs"]] == ["done", "done"]
    assert all(j["reused"] for j in again["jobs"])
    assert env.run_all() == [] and calls == []
    rec = env.client.get(f"/api/jobs/{again['jobs'][0]['id']}", headers=env.h).get_json()
    assert rec["verdict"] == "Theorem" and rec["reused_from"] == first["jobs"][0]["id"]
    pr = env.client.get(f"/api/jobs/{again['jobs'][0]['id']}/proof", headers=env.h).get_json()
    assert pr["proof"]["axioms_used"] == ["a1"]
    # other settings: not reused
    other = env.post({"problem": one(), "time_limit": 6, "reuse": True}).get_json()
    assert [j["state"] for j in other["jobs"]] == ["queued", "queued"]
    # another owner never sees the first owner's verdicts
    theirs = env.post({"problem": one(), "time_limit": 5, "reuse": True},
                      headers=env.h2).get_json()
    assert [j["state"] for j in theirs["jobs"]] == ["queued", "queued"]


def test_owner_batches_listing(env):
    a = env.post({"problem": one()}).get_json()["batch"]
    b = env.post({"problem": one()}).get_json()["batch"]
    r = env.client.get("/api/batches", headers=env.h).get_json()
    assert [x["id"] for x in r["batches"]] == [b, a]


def test_unknown_paths_answer_json(env):
    r = env.client.get("/api/nothing", headers=env.h)
    assert r.status_code == 404 and r.get_json()["error"]["code"] == "not_found"
    r = env.client.get("/api/jobs/jnope", headers=env.h)
    assert r.status_code == 404


def test_delete_a_settled_batch(env):
    body = env.post({"problem": one()}).get_json()
    bid = body["batch"]
    r = env.client.delete(f"/api/batches/{bid}", headers=env.h)
    assert r.status_code == 409 and r.get_json()["error"]["code"] == "not_settled"
    env.run_all()
    assert env.client.delete(f"/api/batches/{bid}", headers=env.h2).status_code == 404
    r = env.client.delete(f"/api/batches/{bid}", headers=env.h)
    assert r.status_code == 200 and r.get_json()["deleted_jobs"] == 2
    assert env.client.get(f"/api/batches/{bid}", headers=env.h).status_code == 404
    jid = body["jobs"][0]["id"]
    assert env.client.get(f"/api/jobs/{jid}", headers=env.h).status_code == 404
    assert env.r.keys("nj:job:*") == [] and env.r.keys("nj:result:*") == []
    assert env.r.keys("nj:reuse:*") == [] and env.r.keys("nj:batch:*") == []
    assert env.client.get("/api/batches", headers=env.h).get_json()["batches"] == []


def test_a_named_strategy_reaches_the_engine(env):
    from worker.saturation.strategy import STRATEGIES
    name = sorted(STRATEGIES)[0]
    body = env.post({"problem": one(), "strategy": name}).get_json()
    env.run_all()
    fig = env.client.get(f"/api/jobs/{body['jobs'][0]['id']}/figures", headers=env.h).get_json()
    assert fig["figures"]["asked"] == name


@pytest.mark.parametrize("ax_files, main, where", [
    ({"ax.nj": "axiom a1: p(c)\n\n  conjecture stray: p(c)\nconjecture other: q\n"},
     "ax.nj", ("ax.nj", 3, 3)),
    # in a file the axioms include, and in TPTP
    ({"ax.nj": 'include "lib/more.p"\naxiom a1: p(c)\n',
      "lib/more.p": "fof(b, axiom, q).\nfof(stray, conjecture, q).\n"},
     "ax.nj", ("lib/more.p", 2, 1)),
    # the second of two axiom mains
    ({"a.nj": "axiom a1: p(c)\n", "b.nj": "axiom b1: q\nconjecture stray: q\n"},
     ["a.nj", "b.nj"], ("b.nj", 2, 1)),
])
def test_conjectures_in_the_axioms_are_refused_and_nothing_is_kept(env, ax_files, main,
                                                                     where):
    env.client.get("/api/batches", headers=env.h)   # whatever a first request sets up
    before = set(env.r.keys("*"))
    r = env.post({"axioms": {"main": main, "files": ax_files},
                  "conjectures": [{"name": "c1.nj", "text": "conjecture g: q(c)\n"}]})
    assert r.status_code == 400, r.get_json()
    err = r.get_json()["error"]
    assert err["code"] == "input_error"
    assert (err["file"], err["line"], err["col"]) == where
    assert err["text"].startswith(f"{where[0]}:{where[1]}:{where[2]}: error: the axioms "
                                  f"hold a conjecture ('stray')")
    assert "stray" in err["text"].splitlines()[1]          # the line itself, then a caret
    assert set(env.r.keys("*")) == before
    assert Queue(QUEUE_BATCH, connection=env.r).count == 0


def test_a_conjecture_files_own_include_may_hold_conjectures(env):
    """Only the axiom text is refused; a conjecture file's includes are its own."""
    r = env.post({"axioms": {"main": "ax.nj", "files": {
        "ax.nj": "axiom a1: p(c)\n", "more.nj": "conjecture h: p(c)\n"}},
        "conjectures": [{"name": "c1.nj", "text": 'include "more.nj"\nconjecture g: p(c)\n'}]})
    assert r.status_code == 202, r.get_json()
    assert sorted((j["file"], j["conjecture"]) for j in r.get_json()["jobs"]) == [
        ("c1.nj", "g"), ("c1.nj", "h")]


def test_a_refused_option_names_its_field(env):
    """An option's bad value is told apart from bad input by ``field`` (the
    command line makes it a usage error, exit 2)."""
    for extra, field, code in (({"strategy": "nope"}, "strategy", "bad_request"),
                               ({"strategy": 3}, "strategy", "bad_request"),
                               ({"time_limit": 0.001}, "time_limit", "bad_request"),
                               ({"time_limit": "ten"}, "time_limit", "bad_request"),
                               ({"time_limit": 61}, "time_limit", "limit"),
                               ({"label": "x" * 201}, "label", "bad_request"),
                               ({"queue": "fast"}, "queue", "bad_request")):
        r = env.post({"problem": one(), **extra})
        err = r.get_json()["error"]
        assert r.status_code == 400 and err["code"] == code and err["field"] == field, extra
    r = env.post({"problem": one(BAD)})                 # bad input: no field
    assert r.status_code == 400 and "field" not in r.get_json()["error"]
    r = env.post({"problem": {"main": "x.nj"}})         # a malformed body: no field either
    assert r.status_code == 400 and "field" not in r.get_json()["error"]


def test_the_axioms_language_is_every_files_language(env):
    """With axioms and conjecture files, ``axioms.language`` forces the
    language of the conjecture files too (as --language does for prove)."""
    ax = {"main": "ax.p", "files": {"ax.p": "fof(a1, axiom, ![X]: (p(X) => q(X))).\n"
                                            "fof(a2, axiom, p(c)).\n"}}
    tptp = {"name": "g.txt", "text": "% nothing here tells the language\n"
                                     "fof(g, conjecture, q(c)).\n"}
    r = env.post({"axioms": dict(ax, language="tptp"), "conjectures": [tptp]})
    assert r.status_code == 202, r.get_json()
    jid = r.get_json()["jobs"][0]["id"]
    assert env.client.get(f"/api/jobs/{jid}/problem", headers=env.h).get_json()["language"] == "tptp"
    native = {"name": "h.nj", "text": "conjecture h: q(c)\n"}
    r = env.post({"axioms": dict(ax, language="tptp"), "conjectures": [native]})
    err = r.get_json()["error"]
    assert r.status_code == 400 and err["code"] == "input_error" and err["file"] == "h.nj"
    r = env.post({"axioms": ax, "conjectures": [native]})     # told apart: fine
    assert r.status_code == 202, r.get_json()

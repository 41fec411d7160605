"""The contradiction mark of a corpus run is written when the run's jobs
settle, not only when someone reads the run: ``corpus run`` without
``--wait``, the workers settle the jobs, and ``nightjar status JOB`` shows
the mark before anyone has read the run.  Whatever order the jobs settle in,
each obligation on the contradictory set is marked once; a failure to mark
never fails or loses the job's own verdict; other batches pay nothing.

fakeredis, the Flask test client, the jobs worked off in-process with
``worker.jobs.attempt`` and the real engine (tiny problems); the ordering
cases write hand-made verdicts through the store's own transitions."""

from __future__ import annotations

import json
from pathlib import Path

import fakeredis
import pytest
import redis
from rq import Queue

from service import corpus as C
from service import corpus_marks as CM
from service.app import create_app
from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
from service.store import Store
from worker import jobs

MANIFEST = """\
[suite]
name = "lamps"
description = "a lamp both lit and dark"
source = "made up for a test"
time_limit = 2
axioms = ["ax/*.nj"]
problems = ["goals/*.nj"]

[settings]
axiom_check_time = 1
"""
# lit(a) and "nothing is lit": contradictory; the conjectures are about other things
AXIOMS = "axiom lamp: lit(a)\naxiom dark: forall x. not lit(x)\naxiom road: p(b)\n"
GOALS = "conjecture on_road: p(b)\nconjecture far: q(c)\nconjecture lit_b: lit(b)\n"


def write(root: Path, axioms: str = AXIOMS) -> Path:
    for name, text in {"suite.toml": MANIFEST, "ax/a.nj": axioms, "goals/g.nj": GOALS}.items():
        (root / name).parent.mkdir(parents=True, exist_ok=True)
        (root / name).write_text(text)
    return root


@pytest.fixture
def env():
    r = fakeredis.FakeRedis()
    app = create_app(Config(max_time_limit=60), r)
    store = Store(r)
    tok = store.add_token("alice")

    class E:
        pass
    e = E()
    e.r, e.store, e.c = r, store, app.test_client()
    e.h = {"Authorization": f"Bearer {tok}"}

    def start(root):
        """``corpus run`` without --wait: submitted, nothing read back."""
        body = C.submission(C.load_suite(str(root)))
        resp = e.c.post("/api/corpus/runs", json=body, headers=e.h)
        assert resp.status_code == 202, resp.get_json()
        return C.CorpusStore(r).get_run(resp.get_json()["run"])

    def work(order=None):
        """What the workers do: every queued attempt, in ``order`` (job ids
        first, the rest after) when given."""
        pending = []
        for qn in (QUEUE_INTERACTIVE, QUEUE_BATCH):
            q = Queue(qn, connection=r)
            pending += [(q, rq_id) for rq_id in q.job_ids]
        first = order or []
        pending.sort(key=lambda p: (first.index(p[1].rsplit("-", 1)[0])
                                    if p[1].rsplit("-", 1)[0] in first else len(first)))
        for q, rq_id in pending:
            jobs.attempt(rq_id.rsplit("-", 1)[0], connection=r)
            q.remove(rq_id)

    def job(jid):
        resp = e.c.get(f"/api/jobs/{jid}", headers=e.h)
        assert resp.status_code == 200
        return resp.get_json()
    e.start, e.work, e.job = start, work, job
    return e


CONSISTENT = "axiom lamp: lit(a)\naxiom road: p(b)\n"


def test_status_shows_the_mark_before_anyone_reads_the_run(env, tmp_path, monkeypatch,
                                                           capsys):
    # a first run on consistent axioms, read as `corpus run --wait` reads it
    root = write(tmp_path, CONSISTENT)
    first = env.start(root)
    env.work()
    v1 = env.c.get(f"/api/corpus/runs/{first['id']}", headers=env.h).get_json()
    assert {r["key"]: r["verdict"] for r in v1["rows"]} == {
        "goals/g.nj#on_road": "Theorem", "goals/g.nj#far": "CounterSatisfiable",
        "goals/g.nj#lit_b": "CounterSatisfiable"}
    # "nothing is lit" added: contradictory. `corpus run` without --wait
    run = env.start(write(tmp_path))
    (guard,) = run["guards"]
    by_key = {ob["key"]: ob for ob in run["obligations"]}
    reused = by_key["goals/g.nj#on_road"]
    assert reused["reused"] and reused["reused"]["kind"] == "proof-replayed"
    assert "axioms_contradictory" not in env.job(reused["job"])     # nothing known yet
    env.work()                                    # the workers settle the rest
    assert env.job(guard["job"])["verdict"] == "Unsatisfiable"
    marks = {}
    for ob in run["obligations"]:
        rec = env.job(ob["job"])
        assert rec["state"] == "done"
        marks[ob["key"]] = rec
        assert rec["axioms_contradictory"].startswith(
            f"AXIOMS CONTRADICTORY (corpus run {run['id']}: refuted on their own by the "
            f"axiom check {guard['job']})"), ob["key"]
    theorem = marks["goals/g.nj#on_road"]
    assert theorem["verdict"] == "Theorem" and theorem["reused_from"]
    assert theorem["reason"].endswith("; and: " + theorem["axioms_contradictory"])
    assert "the entailment holds, but vacuously" in theorem["axioms_contradictory"]
    assert {marks[k]["verdict"] for k in ("goals/g.nj#far", "goals/g.nj#lit_b")} == \
        {"ContradictoryAxioms"}
    assert "axioms_contradictory" not in env.job(guard["job"])      # the guard is not marked
    # `nightjar status JOB`, with nobody having read the run
    from service import cli_client
    from service.cli import main

    class StatusClient:
        def job(self, jid):
            return env.job(jid)
    monkeypatch.setattr(cli_client, "_client", lambda args: StatusClient())
    assert main(["status", theorem["id"]]) == 0
    out = capsys.readouterr().out
    assert "Theorem" in out and f"AXIOMS CONTRADICTORY (corpus run {run['id']}" in out
    # reading the run afterwards finds the marks there and writes nothing twice
    v = env.c.get(f"/api/corpus/runs/{run['id']}", headers=env.h).get_json()
    assert v["summary"]["axioms_consistent"] is False
    assert all(r["axioms_contradictory"] for r in v["rows"])
    for ob in run["obligations"]:
        assert env.job(ob["job"]) == marks[ob["key"]]


def test_obligations_settled_before_the_guard_are_marked_as_they_settle(env, tmp_path):
    run = env.start(write(tmp_path))
    obs = [ob["job"] for ob in run["obligations"]]
    env.work(order=obs)                           # every obligation, then the guard
    recs = [env.job(jid) for jid in obs]
    assert [r["verdict"] for r in recs] == ["ContradictoryAxioms"] * 3
    # the first to settle found the axioms out; each is marked naming it
    want = (f"AXIOMS CONTRADICTORY (corpus run {run['id']}: goals/g.nj#on_road (job "
            f"{obs[0]}) came out ContradictoryAxioms)")
    assert all(r["axioms_contradictory"].startswith(want) for r in recs)


def test_a_consistent_run_marks_nothing(env, tmp_path):
    run = env.start(write(tmp_path, CONSISTENT))
    env.work()
    assert env.job(run["guards"][0]["job"])["verdict"] == "Satisfiable"
    for ob in run["obligations"]:
        assert "axioms_contradictory" not in env.job(ob["job"])
    assert not env.r.exists(CM.k_contradictory(run["id"]))


# -- the order of settling, with hand-made verdicts ----------------------------------

BUNDLE = {"main": "p.nj", "files": {"p.nj": "axiom a: p(c)\n"}, "language": None}


def hand_run(store, n_obligations=3, sets=None, label="corpus hand r1"):
    """A run record with one guard (set A) and obligations on ``sets`` (default
    all A), its batch written by the store with the corpus label."""
    sets = sets or ["A"] * n_obligations
    js = [{"file": "(axiom check)", "conjecture": None, "bundle": BUNDLE, "time_limit": 1.0}]
    js += [{"file": "g.nj", "conjecture": f"c{i}", "bundle": BUNDLE, "time_limit": 1.0}
           for i in range(len(sets))]
    bid, ids = store.create_batch("alice", js, label=label, queue_name=QUEUE_BATCH,
                                  settings={})
    run = {"id": "r1", "suite": "hand", "owner": "alice", "created": 1.0, "batch": bid,
           "expectations": {}, "axiom_sets": {"A": {"x": "h"}, "B": {"y": "h"}},
           "guards": [{"set": "A", "axioms": 1, "job": ids[0]}],
           "obligations": [{"key": f"g.nj#c{i}", "file": "g.nj", "conjecture": f"c{i}",
                            "job": jid, "axiom_set": s, "conjecture_hash": "h", "reused": None}
                           for i, (jid, s) in enumerate(zip(ids[1:], sets))]}
    C.CorpusStore(store.r).save_run(run)
    return run, ids[0], ids[1:]


def settle(store, jid, verdict, reason="the engine said so"):
    att = store.start_attempt(jid, "w", 10)["attempts"]
    assert store.finish(jid, att, {"status": verdict, "seconds": 0.1, "reason": reason})


@pytest.fixture
def store():
    return Store(fakeredis.FakeRedis())


def marked(store, jid):
    return store.get_job(jid).get(CM.MARK_FIELD)


def test_the_first_contradictory_obligation_marks_the_rest_of_its_set(store):
    run, guard, (a, b, c, d) = hand_run(store, sets=["A", "A", "A", "B"])
    settle(store, a, "Theorem")                   # nothing known yet
    assert not marked(store, a)
    settle(store, b, "ContradictoryAxioms")       # found out by an obligation
    text = marked(store, a)
    assert text.startswith("AXIOMS CONTRADICTORY (corpus run r1: g.nj#c1 (job "
                           f"{b}) came out ContradictoryAxioms): the entailment holds, "
                           "but vacuously")
    assert store.get_job(a)["reason"] == "the engine said so; and: " + text
    assert marked(store, b) and store.get_job(b)["reason"] == "the engine said so"
    settle(store, c, "Timeout")                   # settles after: marked at once
    assert marked(store, c).endswith("every conjecture follows from them, this one too; "
                                     "fix the axioms before trusting any verdict on them")
    settle(store, d, "Theorem")                   # another axiom set: no mark
    assert not marked(store, d)
    settle(store, guard, "Unsatisfiable")         # the guard agrees later: nothing rewritten
    assert marked(store, a) == text and not marked(store, guard)
    # the view of the run, read now, agrees and writes nothing more
    jobs_now = {j["id"]: j for j in store.get_jobs([guard, a, b, c, d])}
    view = C.run_view(run, jobs_now)
    assert [r["axioms_contradictory"] for r in view["rows"]] == [True, True, True, False]
    assert C.mark_contradictory_jobs(store, run, view, jobs_now) == []


def test_cancelled_and_failed_obligations_on_a_noted_set_are_marked(store):
    run, guard, (a, b, c) = hand_run(store)
    settle(store, guard, "Unsatisfiable")
    assert store.cancel(a) == "queued"
    assert marked(store, a) and store.get_job(a)["state"] == "cancelled"
    assert store.fail(b, "could not read it")
    assert store.get_job(b)["reason"].startswith("could not read it; and: AXIOMS CONTRADICTORY")
    assert not marked(store, c) and store.get_job(c)["state"] == "queued"  # not settled yet


def test_a_deleted_record_is_not_recreated_by_the_mark(store):
    run, guard, (a, b, c) = hand_run(store)
    settle(store, a, "Theorem")
    store.r.delete(store.k_job(a))                # gone before the guard settles
    settle(store, guard, "Unsatisfiable")
    assert not store.r.exists(store.k_job(a))


def test_a_failure_to_mark_never_fails_or_loses_the_verdict(store, monkeypatch):
    run, guard, (a, b, c) = hand_run(store)

    def broken(*args, **kw):
        raise redis.ConnectionError("Redis went away during the mark")
    monkeypatch.setattr(CM, "job_settled", broken)
    settle(store, guard, "Unsatisfiable")         # finish still says it wrote the verdict
    rec = store.get_job(guard)
    assert rec["state"] == "done" and rec["verdict"] == "Unsatisfiable"
    monkeypatch.undo()
    # the mark itself failing (any error): the verdict stands all the same
    monkeypatch.setattr(CM, "mark_job", lambda *a, **k: 1 / 0)
    settle(store, a, "Theorem")                   # the set is not noted: no mark tried
    att = store.start_attempt(b, "w", 10)["attempts"]
    assert store.finish(b, att, {"status": "ContradictoryAxioms", "seconds": 0.2})
    assert store.get_job(b)["verdict"] == "ContradictoryAxioms"
    monkeypatch.undo()
    # what was missed is written when the run is read
    jobs_now = {j["id"]: j for j in store.get_jobs([guard, a, b, c])}
    view = C.run_view(run, jobs_now)
    assert sorted(C.mark_contradictory_jobs(store, run, view, jobs_now)) == sorted([a, b])


def test_a_failing_mark_inside_a_worker_attempt_keeps_the_verdict(env, tmp_path,
                                                                  monkeypatch):
    run = env.start(write(tmp_path))
    monkeypatch.setattr(CM, "mark_job", lambda *a, **k: 1 / 0)
    env.work()
    for ob in run["obligations"]:
        rec = env.job(ob["job"])
        assert rec["state"] == "done" and rec["verdict"] and rec["attempts"] == 1
        assert "axioms_contradictory" not in rec
    monkeypatch.undo()
    env.c.get(f"/api/corpus/runs/{run['id']}", headers=env.h)       # reading marks them
    assert all(env.job(ob["job"]).get("axioms_contradictory") for ob in run["obligations"])


def test_other_batches_do_not_reach_the_corpus_hook(store, monkeypatch):
    calls = []
    monkeypatch.setattr(CM, "job_settled", lambda *a: calls.append(a))
    bid, (j,) = store.create_batch("alice", [{"file": "g.nj", "conjecture": "c",
                                              "bundle": BUNDLE, "time_limit": 1.0}],
                                   label="nightly", queue_name=QUEUE_BATCH, settings={})
    settle(store, j, "Theorem")
    assert calls == []
    run, guard, (a, *_) = hand_run(store)
    settle(store, a, "Theorem")
    assert len(calls) == 1 and calls[0][1]["id"] == a and calls[0][2] == "Theorem"


def test_the_run_index_names_each_jobs_place(store):
    run, guard, obs = hand_run(store, sets=["A", "B"])
    idx = {k.decode(): json.loads(v) for k, v in store.r.hgetall(CM.k_batch(run["batch"])).items()}
    assert idx[guard] == {"run": "r1", "set": "A", "key": None}
    assert idx[obs[1]] == {"run": "r1", "set": "B", "key": "g.nj#c1"}
    assert C.CorpusStore(store.r).get_run("r1")["batch"] == run["batch"]

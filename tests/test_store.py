"""The lasting records (service.store) and the sweeper, against fakeredis."""

import fakeredis
import pytest

from service.config import Config
from service.queue import Dispatcher, rq_id, sweep
from service.store import Store, pack, unpack

CFG = Config(max_attempts=2)


@pytest.fixture
def st():
    r = fakeredis.FakeRedis()
    return Store(r), Dispatcher(r, CFG)


def bundle(text="conjecture g: p\n"):
    return {"main": "a.nj", "files": {"a.nj": text, "inc/b.nj": "axiom x: q\n"}}


def make(st, n=2, owner="alice"):
    store, disp = st
    b = bundle()
    jobs = [{"file": "a.nj", "conjecture": f"c{i}", "bundle": b, "time_limit": 2.0}
            for i in range(n)]
    return store.create_batch(owner, jobs, label="L", queue_name="nj-batch",
                              settings={"strategy": "s1"}, enqueue=disp.enqueue)


def result(status="Theorem"):
    return {"status": status, "seconds": 0.5, "strategy": "s1", "reason": "",
            "figures": {"given": 7}, "axioms_used": ["x"],
            "proof": {"steps": [{"id": 1, "clause": [], "rule": "input"}] * 50},
            "model": None, "certificate": {"kind": "proof-replayed", "checked": 50, "detail": ""}}


def test_pack_roundtrip_and_compresses():
    obj = {"steps": [{"id": i, "clause": [[True, ["p", 0]]], "rule": "input"} for i in range(200)]}
    b = pack(obj)
    assert unpack(b) == obj
    assert len(b) < len(repr(obj)) / 5


def test_problem_texts_are_shared_and_restored(st):
    store, _ = st
    bid, ids = make(st, 3)
    rec = store.get_job_raw(ids[0])
    assert store.load_problem_bundle(rec["problem"]) == {**bundle(), "language": None}
    assert len(store.r.keys("nj:text:*")) == 2      # two distinct file texts, kept once
    assert len(store.r.keys("nj:problem:*")) == 1
    assert store.batch_job_ids(bid) == ids


def test_life_of_a_job(st):
    store, _ = st
    bid, (a, b) = make(st)
    rec = store.start_attempt(a, "w1", 10)
    assert rec["attempts"] == 1
    assert store.start_attempt(a, "w2", 10) is None       # taken already
    assert store.get_batch(bid)["states"]["running"] == 1
    assert store.running_jobs() == [a] and store.is_alive(a)
    assert store.finish(a, 1, result())
    assert not store.finish(a, 1, result("CounterSatisfiable"))   # written once
    j = store.get_job(a)
    assert (j["state"], j["verdict"], j["worker"], j["attempts"]) == ("done", "Theorem", "w1", 1)
    assert j["axioms_used"] == ["x"] and j["certificate"]["checked"] == 50
    res = store.get_result(a)
    assert len(res["proof"]["steps"]) == 50 and res["figures"] == {"given": 7}
    assert store.running_jobs() == [] and not store.is_alive(a)
    bt = store.get_batch(bid)
    assert bt["states"] == {"queued": 1, "running": 0, "done": 1, "failed": 0, "cancelled": 0}
    assert bt["verdicts"] == {"Theorem": 1} and bt["progress"] == 0.5 and not bt["finished"]


def test_a_stale_attempt_cannot_overwrite(st):
    store, disp = st
    _, (a, _) = make(st)
    store.start_attempt(a, "w1", 10)
    store.r.delete(store.k_alive(a))          # its worker died
    assert sweep(store, disp, CFG) == [(a, "retried")]
    assert store.get_job(a)["state"] == "queued"
    assert rq_id(a, 2).encode() in store.r.lrange("rq:queue:nj-batch", 0, -1)
    store.start_attempt(a, "w2", 10)
    assert not store.finish(a, 1, result())   # the first attempt comes back late
    assert store.finish(a, 2, result())
    assert store.get_job(a)["worker"] == "w2"


def test_sweeper_retries_once_then_fails(st):
    store, disp = st
    bid, (a, _) = make(st)
    for n in (1, 2):
        store.start_attempt(a, f"w{n}", 10)
        store.r.delete(store.k_alive(a))
        out = sweep(store, disp, CFG)
    assert out == [(a, "failed")]
    j = store.get_job(a)
    assert j["state"] == "failed" and j["attempts"] == 2
    assert "stopped answering 2 times" in j["reason"]
    assert store.get_batch(bid)["states"]["failed"] == 1
    assert sweep(store, disp, CFG) == []


def test_sweeper_leaves_live_jobs(st):
    store, disp = st
    _, (a, _) = make(st)
    store.start_attempt(a, "w1", 10)
    assert sweep(store, disp, CFG) == []
    assert store.get_job(a)["state"] == "running"


def test_cancel(st):
    store, _ = st
    bid, (a, b) = make(st)
    assert store.cancel(a) == "queued"
    assert store.start_attempt(a, "w", 10) is None
    store.start_attempt(b, "w", 10)
    assert store.cancel(b) == "running"
    assert not store.finish(b, 1, result())     # a stopped job keeps its cancel
    assert store.cancel(b) is None
    bt = store.get_batch(bid)
    assert bt["states"]["cancelled"] == 2 and bt["finished"]
    assert store.running_jobs() == []


def test_filter_counts_match(st):
    store, _ = st
    bid, ids = make(st, 5)
    for jid, v in zip(ids[:3], ("Theorem", "Timeout", "Theorem")):
        store.start_attempt(jid, "w", 10)
        store.finish(jid, 1, result(v))
    assert store.batch_jobs(bid, verdict="Theorem")[0] == 2
    assert store.batch_jobs(bid, state="queued")[0] == 2
    n, page = store.batch_jobs(bid, offset=1, limit=2)
    assert n == 5 and [j["id"] for j in page] == ids[1:3]


def test_stranded_queue_entry_is_sent_again(st):
    from service.queue import sweep_stranded
    store, disp = st
    _, (a, b) = make(st)
    assert sweep_stranded(store, disp, min_age=0) == []        # both still waiting in RQ
    # RQ took a's entry (status started) but no attempt ever began
    store.r.hset(f"rq:job:{rq_id(a, 1)}", "status", "started")
    store.r.lrem("rq:queue:nj-batch", 0, rq_id(a, 1))
    assert sweep_stranded(store, disp, min_age=60) == []       # not old enough yet
    assert sweep_stranded(store, disp, min_age=0) == [a]
    assert rq_id(a, 1, 1).encode() in store.r.lrange("rq:queue:nj-batch", 0, -1)
    j = store.get_job(a)
    assert j["state"] == "queued" and j["attempts"] == 0
    # once it starts, the sweeper forgets it
    store.start_attempt(a, "w", 10)
    store.r.hset(f"rq:job:{rq_id(a, 1, 1)}", "status", "started")
    assert sweep_stranded(store, disp, min_age=0) == []
    assert store.r.zscore(store.K_QUEUED, a) is None


def test_sweeper_settles_an_attempt_past_its_hard_stop_as_timeout(st):
    store, disp = st
    bid, (a, _) = make(st)                    # time limit 2 s, allowance 1 s, grace 10 s
    store.start_attempt(a, "w1", 10)
    store.r.hset(store.k_job(a), "started", str(__import__("time").time() - 12))
    store.r.delete(store.k_alive(a))
    # 12 s after the start it is a lost attempt (retried), not yet a hard stop
    assert sweep(store, disp, CFG) == [(a, "retried")]
    store.start_attempt(a, "w1", 10)
    store.r.hset(store.k_job(a), "started", str(__import__("time").time() - 14))
    store.r.delete(store.k_alive(a))
    assert sweep(store, disp, CFG) == [(a, "timed out")]
    j = store.get_job(a)
    assert (j["state"], j["verdict"], j["attempts"]) == ("done", "Timeout", 2)
    assert "hard stop" in j["reason"]
    assert store.get_batch(bid)["verdicts"] == {"Timeout": 1}


def test_sweeper_with_suspects_acts_on_the_second_sighting(st):
    store, disp = st
    _, (a, b) = make(st)
    store.start_attempt(a, "w1", 10)
    store.start_attempt(b, "w2", 10)
    store.r.delete(store.k_alive(a))
    seen: set = set()
    assert sweep(store, disp, CFG, seen) == [] and seen == {a}
    store.touch_alive(a, "w1", 10)            # a late beat: not lost after all
    assert sweep(store, disp, CFG, seen) == [] and seen == set()
    store.r.delete(store.k_alive(a))
    sweep(store, disp, CFG, seen)
    assert sweep(store, disp, CFG, seen) == [(a, "retried")]
    assert store.get_job(b)["state"] == "running"

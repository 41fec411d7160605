"""A job whose attempt was cut short because its worker was told to stop at
once (a cold stop: `nightjar serve` stopping, SIGTERM twice) is handed back
with that reason, not recorded as lost ("stopped answering", which stays for
workers that really disappeared).  fakeredis; the real stop is in
tests/faults (test_cold_stop_hands_the_job_back)."""

from __future__ import annotations

import fakeredis
import pytest

from service.config import Config
from service.queue import STOPPED_REASON, Dispatcher, hand_back, rq_id, sweep
from service.store import Store
from tests.test_store import make

CFG = Config()


@pytest.fixture
def st():
    r = fakeredis.FakeRedis()
    return Store(r), Dispatcher(r, CFG)


def test_a_stopped_worker_hands_its_job_back_saying_why(st):
    store, disp = st
    bid, (a, b) = make(st)
    store.start_attempt(a, "vm.27044.1", 10)
    assert hand_back(a, "vm.27044.1", CFG, r=store.r)
    j = store.get_job(a)
    assert j["state"] == "queued" and j["attempts"] == 1
    assert j["lost"] == j["reason"] == \
        "attempt 1 was cut short: its worker vm.27044.1 was shut down; retried"
    assert j["lost"] == STOPPED_REASON.format(n=1, who="vm.27044.1")
    assert "stopped answering" not in j["lost"]
    assert rq_id(a, 2).encode() in store.r.lrange("rq:queue:nj-batch", 0, -1)
    assert store.get_batch(bid)["states"]["queued"] == 2
    assert not store.is_alive(a)
    # the next attempt runs it as usual, and a sweep has nothing to do
    assert store.start_attempt(a, "vm.1.1", 10)["attempts"] == 2
    assert sweep(store, disp, CFG) == []


def test_only_the_worker_that_runs_the_job_hands_it_back(st):
    store, _ = st
    _, (a, b) = make(st)
    store.start_attempt(a, "w2", 10)
    assert not hand_back(a, "w1", CFG, r=store.r)        # someone else's attempt
    assert store.get_job(a)["state"] == "running"
    assert not hand_back(b, "w1", CFG, r=store.r)        # not running at all
    assert store.get_job(b)["state"] == "queued"
    store.finish(a, 1, {"conjecture": "g", "status": "Theorem", "seconds": 0.1,
                        "strategy": None, "reason": "", "figures": {}, "axioms_used": [],
                        "proof": None, "model": None, "certificate": {"kind": "none"}})
    assert not hand_back(a, "w2", CFG, r=store.r)        # it had finished meanwhile
    assert store.get_job(a)["state"] == "done"


def test_a_lost_worker_is_still_told_as_lost(st):
    store, disp = st
    _, (a, _) = make(st)
    store.start_attempt(a, "w1", 10)
    store.r.delete(store.k_alive(a))                   # killed: nobody handed it back
    assert sweep(store, disp, CFG) == [(a, "retried")]
    assert store.get_job(a)["lost"] == "attempt 1 was lost (worker w1 stopped answering); retried"

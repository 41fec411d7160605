"""The counters behind GET /metrics (nj:metrics:<gen>, kept by service.store)
against fakeredis: after any mix of moves they equal a full recount of the
job records, a rebuild from the records equals them, and a finish that is
refused (duplicate, superseded, after a cancel) counts nothing."""

import math

import fakeredis
import pytest

from service import metrics
from service.config import Config
from service.queue import Dispatcher, sweep
from service.store import BUCKETS, METER_GEN, Conflict, Store
from tests.test_metrics import parse

CFG = Config(max_attempts=2)


@pytest.fixture
def st():
    server = fakeredis.FakeServer()
    r = fakeredis.FakeRedis(server=server)
    s = Store(r)
    s.server = server
    return s, Dispatcher(r, CFG)


def make(st, n, owner="alice", reused=None):
    store, disp = st
    b = {"main": "a.nj", "files": {"a.nj": "conjecture g: p\n"}}
    jobs = [{"file": "a.nj", "conjecture": f"c{i}", "bundle": b, "time_limit": 2.0}
            for i in range(n)]
    return store.create_batch(owner, jobs, label=None, queue_name="nj-batch",
                              settings={}, enqueue=disp.enqueue, reused=reused)


def res(status, seconds):
    return {"status": status, "seconds": seconds}


def recount(r) -> dict:
    """The figures straight from every job record, written out here on its
    own (not with store.job_counts) so the two can disagree."""
    states = {"queued": 0, "running": 0, "done": 0, "failed": 0, "cancelled": 0}
    verdicts, buckets, count, total = {}, [0] * len(BUCKETS), 0, 0.0
    for k in r.keys("nj:job:*"):
        if k.count(b":") != 2:
            continue
        st, vd, sec, reused = (x.decode() if x is not None else None
                               for x in r.hmget(k, ["state", "verdict", "seconds",
                                                    "reused_from"]))
        states[st] = states.get(st, 0) + 1
        if vd:
            verdicts[vd] = verdicts.get(vd, 0) + 1
        # a reused job did no search: its seconds (the original's) are not timed
        if st == "done" and sec and math.isfinite(float(sec)) and not reused:
            count += 1
            total += float(sec)
            for i, b in enumerate(BUCKETS):
                if float(sec) <= b:
                    buckets[i] += 1
    return {"states": states, "verdicts": verdicts, "buckets": buckets,
            "count": count, "sum": total}


def live(store) -> dict:
    counts = store.counters()
    assert counts is not None, "the counters are not ready"
    return metrics.figures_of(counts)


def same(a, b):
    assert {k: v for k, v in a.items() if k != "sum"} == {k: v for k, v in b.items() if k != "sum"}
    assert a["sum"] == pytest.approx(b["sum"], abs=1e-5)


def a_mix(st):
    """Every kind of move, the refused ones included; returns the batch ids."""
    store, disp = st
    store.rebuild_counters()             # an empty store: ready at once
    bid, ids = make(st, 12)
    a, b, c, d, e, f, g, h, i, j, k, l = ids
    # plain finishes across the buckets, one past the last bucket
    for jid, verdict, sec in ((a, "Theorem", 0.004), (b, "CounterSatisfiable", 0.3),
                              (c, "Theorem", 7.25), (d, "Timeout", 400.0)):
        att = store.start_attempt(jid, "w1", 10)["attempts"]
        assert store.finish(jid, att, res(verdict, sec))
    # duplicate finish of the same attempt: refused, counts nothing
    assert not store.finish(a, 1, res("Theorem", 0.004))
    assert not store.finish(b, 1, res("Unknown", 99.0))
    # retry: attempt 1 lost, attempt 2 finishes, the late attempt 1 is refused
    store.start_attempt(e, "w1", 10)
    store.r.delete(store.k_alive(e))
    assert sweep(store, disp, CFG) == [(e, "retried")]
    store.start_attempt(e, "w2", 10)
    assert not store.finish(e, 1, res("Theorem", 1.0))       # superseded
    assert store.finish(e, 2, res("Unsatisfiable", 2.5))
    assert not store.finish(e, 2, res("Unsatisfiable", 2.5))  # duplicate
    # lost twice: the sweeper fails it
    for n in (1, 2):
        store.start_attempt(f, f"w{n}", 10)
        store.r.delete(store.k_alive(f))
        sweep(store, disp, CFG)
    assert store.get_job(f)["state"] == "failed"
    # cancel a queued job and a running one; the running one's finish is refused
    assert store.cancel(g) == "queued"
    store.start_attempt(h, "w1", 10)
    assert store.cancel(h) == "running"
    assert not store.finish(h, 1, res("Theorem", 0.2))
    assert store.cancel(h) is None
    # fail, queued and running; a second fail is refused
    assert store.fail(i, "could not read it")
    store.start_attempt(j, "w1", 10)
    assert store.fail(j, "the work horse died", attempt=1)
    assert not store.fail(j, "again", attempt=1)
    # one running, one still queued (k, l)
    store.start_attempt(k, "w1", 10)
    # a second batch answered at once from a stored verdict (reuse)
    bid2, _ = make(st, 2, reused={0: store.get_job(c)})
    return bid, bid2


def test_counters_equal_a_recount_after_every_kind_of_move(st):
    store, _ = st
    a_mix(st)
    got, want = live(store), recount(store.r)
    same(got, want)
    assert got["states"] == {"queued": 2, "running": 1, "done": 6, "failed": 3, "cancelled": 2}
    assert got["verdicts"] == {"Theorem": 3, "CounterSatisfiable": 1, "Timeout": 1,
                               "Unsatisfiable": 1}
    # six done, the reused one (a copy of the 7.25 s search) not timed
    assert got["count"] == 5 and got["sum"] == pytest.approx(0.004 + 0.3 + 7.25 + 400 + 2.5)
    assert got["buckets"][0] == 1                 # 0.004 <= 0.01
    assert got["buckets"][-1] == 4                # 400 s is only in +Inf


def test_a_duplicate_finish_counts_once(st):
    store, _ = st
    store.rebuild_counters()
    _, (a,) = make(st, 1)
    store.start_attempt(a, "w", 10)
    assert store.finish(a, 1, res("Theorem", 0.5))
    before = store.counters()
    for _ in range(3):
        assert not store.finish(a, 1, res("Theorem", 0.5))
    assert store.counters() == before
    assert before["v:Theorem"] == 1 and before["count"] == 1 and before["s:done"] == 1
    assert before["sum_us"] == 500_000 and before["s:running"] == 0


def test_a_rebuild_from_the_records_equals_the_live_counters(st):
    store, _ = st
    a_mix(st)
    kept = store.counters()
    # the same records as an archive from before the counters: no key, no marks
    store.r.delete(store.K_METRICS)
    for k in store.r.keys("nj:job:*"):
        store.r.hdel(k, "metered")
    assert store.counters() is None
    assert store.rebuild_counters(scan_count=3) == 14
    assert store.counters() == kept
    # again (a second API server, or a rerun): everything is counted already
    assert store.rebuild_counters() == 0
    assert store.counters() == kept


def test_an_old_archive_is_counted_on_the_first_scrape_and_kept_from_then_on(st):
    store, disp = st
    bid, ids = make(st, 6)
    store.start_attempt(ids[0], "w", 10)
    store.finish(ids[0], 1, res("Theorem", 0.3))
    # make it an archive from before the counters
    store.r.delete(store.K_METRICS)
    for jid in ids:
        store.r.hdel(store.k_job(jid), "metered")
    # moves of unmarked jobs before the rebuild change no counter
    store.start_attempt(ids[1], "w", 10)
    store.finish(ids[1], 1, res("Timeout", 9.0))
    store.cancel(ids[2])
    assert not store.r.exists(store.K_METRICS)
    # another process holds the rebuild lock: this scrape makes one pass instead
    store.r.set(store.K_METRICS_LOCK, "someone-else", ex=60)
    same(metrics.counted_job_figures(store.r), recount(store.r))
    assert store.counters() is None
    store.r.delete(store.K_METRICS_LOCK)
    # now this one rebuilds, and lets the lock go
    same(metrics.counted_job_figures(store.r), recount(store.r))
    assert store.counters() is not None and not store.r.exists(store.K_METRICS_LOCK)
    assert all(store.r.hget(store.k_job(j), "metered") == METER_GEN.encode() for j in ids)
    # later moves are counted live
    store.start_attempt(ids[3], "w", 10)
    store.finish(ids[3], 1, res("Theorem", 1.5))
    store.fail(ids[4], "bad")
    same(live(store), recount(store.r))


def test_a_rebuild_racing_a_move_counts_the_job_once(st):
    store, _ = st
    _, ids = make(st, 3)
    store.r.delete(store.K_METRICS)
    for jid in ids:
        store.r.hdel(store.k_job(jid), "metered")
    store.start_attempt(ids[0], "w", 10)
    other = Store(fakeredis.FakeRedis(server=store.server))    # another process
    real = store.r.pipeline
    moved = []

    def pipeline(transaction=True, **kw):
        p = real(transaction=transaction, **kw)
        if not transaction and not moved:      # the rebuild's reads, under WATCH
            moved.append(other.finish(ids[0], 1, res("Theorem", 0.7)))
        return p

    store.r.pipeline = pipeline
    try:
        assert store.rebuild_counters() == 3
    finally:
        store.r.pipeline = real
    assert moved == [True]
    got = live(store)
    same(got, recount(store.r))
    assert got["states"]["done"] == 1 and got["states"]["running"] == 0


def test_deleting_a_batch_takes_its_jobs_out_of_the_counters(st):
    store, _ = st
    bid, bid2 = a_mix(st)
    with pytest.raises(Conflict):
        store.delete_batch(bid)                # jobs still queued and running
    for jid in store.batch_job_ids(bid2):
        store.cancel(jid)                      # the reused one is settled already
    assert store.delete_batch(bid2) == 2
    same(live(store), recount(store.r))
    for jid in store.batch_job_ids(bid):
        store.cancel(jid)
    assert store.delete_batch(bid) == 12
    counts = store.counters()
    assert all(v == 0 for v in counts.values()), counts
    got = live(store)
    same(got, recount(store.r))
    assert got["verdicts"] == {} and sum(got["states"].values()) == 0


def test_the_exposition_shows_the_counters(st):
    store, _ = st
    a_mix(st)
    m = parse(metrics.render(store.r))

    def v(name, **labels):
        return m[(name, frozenset(labels.items()))]

    want = recount(store.r)
    for s, n in want["states"].items():
        assert v("nightjar_jobs", state=s) == n
    for vd, n in want["verdicts"].items():
        assert v("nightjar_verdicts_total", verdict=vd) == n
    for b, n in zip(BUCKETS, want["buckets"]):
        assert v("nightjar_job_seconds_bucket", le=repr(float(b))) == n
    assert v("nightjar_job_seconds_bucket", le="+Inf") == want["count"] == 5
    assert v("nightjar_job_seconds_count") == 5
    assert v("nightjar_job_seconds_sum") == pytest.approx(want["sum"])
    assert v("nightjar_running_jobs") == 1


# -- a reused job did no search: counted by state and verdict, not timed -------------

def test_a_reused_job_is_not_in_the_seconds_histogram(st):
    store, _ = st
    store.rebuild_counters()
    _, (a,) = make(st, 1)
    store.start_attempt(a, "w", 10)
    assert store.finish(a, 1, res("Theorem", 42.0))
    before = store.counters()
    bid, (copy,) = make(st, 1, reused={0: store.get_job(a)})
    rec = store.get_job(copy)
    assert rec["state"] == "done" and rec["reused_from"] == a and rec["seconds"] == 42.0
    after = store.counters()
    assert after["s:done"] == before["s:done"] + 1
    assert after["v:Theorem"] == before["v:Theorem"] + 1
    assert {k: after[k] for k in ("count", "sum_us")} == {"count": 1, "sum_us": 42_000_000}
    assert {k: v for k, v in after.items() if k.startswith("h:")} == \
        {k: v for k, v in before.items() if k.startswith("h:")}
    m = parse(metrics.render(store.r))
    assert m[("nightjar_job_seconds_count", frozenset())] == 1
    assert m[("nightjar_job_seconds_sum", frozenset())] == pytest.approx(42.0)
    # the one pass over the records (a scrape during a rebuild) agrees
    same(metrics.job_figures(store.r), live(store))
    # deleting the batch takes out exactly what it added
    assert store.delete_batch(bid) == 1
    assert store.counters() == before


def test_counters_of_the_generation_that_timed_reused_jobs_are_rebuilt(st):
    """Records counted by generation "1" (which timed a reused job at its
    copied seconds) are counted afresh into this generation's key."""
    store, _ = st
    store.rebuild_counters()
    _, (a,) = make(st, 1)
    store.start_attempt(a, "w", 10)
    assert store.finish(a, 1, res("Theorem", 3.0))
    make(st, 2, reused={0: store.get_job(a), 1: store.get_job(a)})
    assert METER_GEN != "1"
    # as an older process left them: marked "1", this generation's key absent
    for k in store.r.keys("nj:job:*"):
        store.r.hset(k, "metered", "1")
    store.r.delete(store.K_METRICS)
    got = metrics.counted_job_figures(store.r)
    same(got, recount(store.r))
    assert got["count"] == 1 and got["sum"] == pytest.approx(3.0)
    assert got["states"]["done"] == 3 and got["verdicts"] == {"Theorem": 3}

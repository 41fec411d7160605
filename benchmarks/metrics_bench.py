#!/usr/bin/env python3
"""GET /metrics latency against the number of stored jobs.

    .venv/bin/python benchmarks/metrics_bench.py [--jobs 1000,10000] [--repeat 7]

For each N: a real Redis (the bundled binary, in a temporary folder) gets N
jobs through the store's own paths (one batch; 9 in 10 of them started and
finished with verdicts and seconds spread over the histogram, the rest left
queued).  Then the median of --repeat calls of GET /metrics (Flask test
client, token checked) two ways:

* before: the figures from one pass over every job record (SCAN + pipelined
  HMGET), what every scrape did before the counters;
* after: the figures from the counters (one HGETALL of nj:metrics:<gen>);

and the one-time rebuild of the counters from the records (what the first
scrape of an archive made before the counters costs).  Prints figures only.
"""

from __future__ import annotations

import argparse
import functools
import statistics
import sys
import tempfile
import time
from pathlib import Path

print = functools.partial(print, flush=True)  # noqa: A001
ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from service import metrics  # noqa: E402
from service.app import create_app  # noqa: E402
from service.config import Config  # noqa: E402
from service.embedded import RedisProcess  # noqa: E402
from service.queue import connect  # noqa: E402
from service.store import Store  # noqa: E402

VERDICTS = ("Theorem", "CounterSatisfiable", "Timeout", "Unsatisfiable")


def populate(store: Store, n: int) -> None:
    bundle = {"main": "m.nj", "files": {"m.nj": "axiom a: p\nconjecture g: p\n"}}
    jobs = [{"file": "m.nj", "conjecture": "g", "bundle": bundle, "time_limit": 10.0}
            for _ in range(n)]
    _, ids = store.create_batch("bench", jobs, label=None, queue_name="nj-batch",
                                settings={})
    for i, jid in enumerate(ids):
        if i % 10 == 9:
            continue
        att = store.start_attempt(jid, "w", 30)["attempts"]
        store.finish(jid, att, {"status": VERDICTS[i % 4], "seconds": (i % 97) * 0.37})


def median_ms(fn, repeat: int) -> float:
    xs = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        xs.append(time.perf_counter() - t)
    return statistics.median(xs) * 1e3


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--jobs", default="1000,10000", help="comma-separated job counts")
    ap.add_argument("--repeat", type=int, default=7)
    args = ap.parse_args()
    print("jobs      before (pass over records)   after (counters)   one-time rebuild")
    for n in [int(x) for x in args.jobs.split(",")]:
        tmp = Path(tempfile.mkdtemp(prefix="nj-metrics-"))
        rp = RedisProcess(tmp / "redis").start()
        try:
            r = connect(rp.url)
            store = Store(r)
            token = store.add_token("bench")
            app = create_app(Config(redis_url=rp.url), r)
            client = app.test_client()
            auth = {"Authorization": f"Bearer {token}"}
            populate(store, n)

            def scrape():
                resp = client.get("/metrics", headers=auth)
                assert resp.status_code == 200, resp.status_code

            scrape()                                 # the counters become ready
            after_text = client.get("/metrics", headers=auth).get_data(as_text=True)
            after = median_ms(scrape, args.repeat)
            counted = metrics.counted_job_figures
            metrics.counted_job_figures = metrics.job_figures
            try:
                before_text = client.get("/metrics", headers=auth).get_data(as_text=True)
                before = median_ms(scrape, args.repeat)
            finally:
                metrics.counted_job_figures = counted
            # the two ways give the same figures (all but the scrape time and
            # Redis's memory, which move by themselves)
            strip = lambda t: [x for x in t.splitlines()  # noqa: E731
                               if "scrape_seconds" not in x and "memory_bytes" not in x]
            same = strip(before_text) == strip(after_text)
            if not same:
                print("\n".join(sorted(set(strip(before_text)) ^ set(strip(after_text)))))
            # the one-time rebuild: forget the counters and every mark
            pipe = r.pipeline(transaction=False)
            for k in r.scan_iter(match="nj:job:*", count=1000):
                pipe.hdel(k, "metered")
            pipe.delete(store.K_METRICS)
            pipe.execute()
            t = time.perf_counter()
            store.rebuild_counters()
            rebuild = time.perf_counter() - t
            print(f"{n:>6,}    {before:10.1f} ms               {after:8.2f} ms"
                  f"        {rebuild * 1e3:8.0f} ms   (same figures: {same})")
        finally:
            rp.kill()
    return 0


if __name__ == "__main__":
    sys.exit(main())

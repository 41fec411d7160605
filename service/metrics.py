"""``GET /metrics``: the service's figures in the Prometheus text exposition
format (version 0.0.4, an open standard).

    nightjar_queue_depth{queue}            RQ jobs waiting, per queue
    nightjar_jobs{state}                   our job records, per state
    nightjar_verdicts_total{verdict}       settled jobs per SZS verdict
    nightjar_job_seconds                   histogram of the engine seconds of done jobs
    nightjar_workers_alive                 RQ workers registered and not expired
    nightjar_running_jobs                  jobs held by a live attempt
    nightjar_redis_used_memory_bytes       Redis's own figure
    nightjar_metrics_scrape_seconds        what computing this answer cost

The per-state, per-verdict and seconds figures come from one pass over the
job records (``SCAN nj:job:*`` with pipelined ``HMGET``), cached for
``NIGHTJAR_METRICS_CACHE_SECONDS`` (default 10) so that many scrapers cost
one pass.  The pass grows with the number of kept jobs: 0.8 s with 10,000
on the CI machine while two workers ran (benchmarks/load_bench.py prints the
figure); with many more, scrape less often or raise the cache time.

Like every endpoint but health it needs a token (Prometheus:
``authorization: {credentials: <token>}`` in the scrape config).
"""

from __future__ import annotations

import math
import os
import threading
import time

import redis
from flask import Blueprint, Response, current_app

from .auth import require_owner
from .config import QUEUES
from .store import STATES

bp = Blueprint("metrics", __name__)

CONTENT_TYPE = "text/plain; version=0.0.4; charset=utf-8"
# Upper bounds (seconds) of the job seconds histogram buckets.
BUCKETS = (0.01, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0, 30.0, 60.0, 120.0, 300.0)
SCAN_COUNT = 1000

_cache_lock = threading.Lock()
_cache: dict = {}      # id(redis client) -> (time, figures)


def cache_seconds() -> float:
    try:
        return float(os.environ.get("NIGHTJAR_METRICS_CACHE_SECONDS", "10"))
    except ValueError:
        return 10.0


def _s(v):
    return v.decode() if isinstance(v, bytes) else v


def job_figures(r: redis.Redis) -> dict:
    """One pass over every job record: counts per state and verdict, and the
    seconds histogram of done jobs."""
    states = {s: 0 for s in STATES}
    verdicts: dict[str, int] = {}
    buckets = [0] * len(BUCKETS)
    count, total = 0, 0.0
    for keys in _scan_batches(r, "nj:job:*"):
        pipe = r.pipeline(transaction=False)
        for k in keys:
            pipe.hmget(k, ["state", "verdict", "seconds"])
        for st, vd, sec in pipe.execute():
            st = _s(st)
            if st is None:
                continue             # deleted between SCAN and HMGET
            states[st] = states.get(st, 0) + 1
            vd = _s(vd)
            if vd:
                verdicts[vd] = verdicts.get(vd, 0) + 1
            if st == "done" and sec not in (None, b"", ""):
                try:
                    x = float(sec)
                except ValueError:
                    continue
                if not math.isfinite(x):
                    continue
                count += 1
                total += x
                for i, b in enumerate(BUCKETS):
                    if x <= b:
                        buckets[i] += 1
    return {"states": states, "verdicts": verdicts, "buckets": buckets,
            "count": count, "sum": total}


def _scan_batches(r, pattern):
    cursor = 0
    while True:
        cursor, keys = r.scan(cursor, match=pattern, count=SCAN_COUNT)
        # nj:job:<id> only: nothing else lives under nj:job:, but be exact
        keys = [k for k in keys if _s(k).count(":") == 2]
        if keys:
            yield keys
        if int(cursor) == 0:
            return


def cached_job_figures(r: redis.Redis) -> dict:
    ttl = cache_seconds()
    now = time.monotonic()
    with _cache_lock:
        hit = _cache.get(id(r))
        if hit and now - hit[0] < ttl:
            return hit[1]
    figs = job_figures(r)
    with _cache_lock:
        _cache[id(r)] = (time.monotonic(), figs)
    return figs


def _label(v: str) -> str:
    return str(v).replace("\\", "\\\\").replace("\n", "\\n").replace('"', '\\"')


def _num(x) -> str:
    if isinstance(x, float):
        if math.isinf(x):
            return "+Inf" if x > 0 else "-Inf"
        return repr(x)
    return str(x)


def render(r: redis.Redis) -> str:
    """The whole exposition text."""
    t0 = time.perf_counter()
    from rq import Queue, Worker
    out: list[str] = []

    def family(name, kind, help_, samples):
        out.append(f"# HELP {name} {help_}")
        out.append(f"# TYPE {name} {kind}")
        for labels, value in samples:
            if labels:
                inner = ",".join(f'{k}="{_label(v)}"' for k, v in labels.items())
                out.append(f"{name}{{{inner}}} {_num(value)}")
            else:
                out.append(f"{name} {_num(value)}")

    family("nightjar_queue_depth", "gauge", "Attempts waiting in each RQ queue.",
           [({"queue": q}, Queue(q, connection=r).count) for q in QUEUES])
    figs = cached_job_figures(r)
    family("nightjar_jobs", "gauge", "Job records per state.",
           [({"state": s}, n) for s, n in figs["states"].items()])
    family("nightjar_verdicts_total", "counter", "Settled jobs per SZS verdict.",
           [({"verdict": v}, n) for v, n in sorted(figs["verdicts"].items())])
    hist = [({"le": _num(float(b))}, n) for b, n in zip(BUCKETS, figs["buckets"])]
    hist.append(({"le": "+Inf"}, figs["count"]))
    out.append("# HELP nightjar_job_seconds Engine seconds of done jobs.")
    out.append("# TYPE nightjar_job_seconds histogram")
    for labels, n in hist:
        out.append(f'nightjar_job_seconds_bucket{{le="{labels["le"]}"}} {n}')
    out.append(f"nightjar_job_seconds_sum {_num(float(figs['sum']))}")
    out.append(f"nightjar_job_seconds_count {figs['count']}")
    family("nightjar_workers_alive", "gauge", "RQ workers registered and not expired.",
           [({}, Worker.count(connection=r))])
    family("nightjar_running_jobs", "gauge", "Jobs held by a running attempt.",
           [({}, r.scard("nj:running"))])
    try:
        mem = r.info("memory").get("used_memory")
    except redis.ResponseError:      # a Redis stand-in without INFO
        mem = None
    if mem is not None:
        family("nightjar_redis_used_memory_bytes", "gauge", "Memory Redis reports in use.",
               [({}, int(mem))])
    family("nightjar_metrics_scrape_seconds", "gauge", "Seconds this answer took.",
           [({}, round(time.perf_counter() - t0, 6))])
    return "\n".join(out) + "\n"


@bp.get("/metrics")
@require_owner
def metrics():
    r = current_app.extensions["nightjar"].redis
    try:
        body = render(r)
    except redis.RedisError as e:
        return Response(f"# the store is not answering: {e}\n", status=503,
                        content_type=CONTENT_TYPE)
    return Response(body, content_type=CONTENT_TYPE)

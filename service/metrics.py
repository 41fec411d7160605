"""``GET /metrics``: the service's figures in the Prometheus text exposition
format (version 0.0.4, an open standard).

    nightjar_queue_depth{queue}            RQ jobs waiting, per queue
    nightjar_jobs{state}                   our job records, per state
    nightjar_verdicts_total{verdict}       settled jobs per SZS verdict
    nightjar_job_seconds                   histogram of the engine seconds of done jobs
                                           that searched (a reused job did no search)
    nightjar_workers_alive                 RQ workers alive (registered, beating)
    nightjar_running_jobs                  jobs held by a live attempt
    nightjar_redis_used_memory_bytes       Redis's own figure
    nightjar_metrics_scrape_seconds        what computing this answer cost

The per-state, per-verdict and seconds figures are counters kept in Redis
(``nj:metrics:<generation>``, see ``store.job_counts``), changed in the same
guarded transaction as the job they count, so a scrape reads one hash
whatever the number of jobs (median 1.4 ms with 10,000 stored and 1.6 ms
with 100,000, against 0.41 s and 4.1 s for the pass over every record it
replaces; benchmarks/metrics_bench.py).
An archive made before the counters has none: the first scrape counts its
records once (``Store.rebuild_counters``) under ``nj:metrics:<gen>:lock``;
a scrape on another API server meanwhile answers from one pass over the
records (``job_figures``), as every scrape did before.

Like every endpoint but health it needs a token (Prometheus:
``authorization: {credentials: <token>}`` in the scrape config).
"""

from __future__ import annotations

import math
import secrets
import time

import redis
from flask import Blueprint, Response, current_app

from .auth import require_owner
from .config import QUEUES
from .store import BUCKETS, STATES, Store, job_counts

bp = Blueprint("metrics", __name__)

CONTENT_TYPE = "text/plain; version=0.0.4; charset=utf-8"
SCAN_COUNT = 1000
LOCK_SECONDS = 600       # a rebuild that died lets the next one start after this


def _s(v):
    return v.decode() if isinstance(v, bytes) else v


def figures_of(counts: dict[str, int]) -> dict:
    """The counters (``job_counts`` fields summed) as the figures render shows."""
    states = {s: 0 for s in STATES}
    verdicts: dict[str, int] = {}
    buckets = [0] * len(BUCKETS)
    for k, n in counts.items():
        kind, _, name = k.partition(":")
        if kind == "s" and (n or name in states):
            states[name] = n
        elif kind == "v" and n:
            verdicts[name] = n
        elif kind == "h" and name != "inf":
            for i in range(int(name), len(BUCKETS)):     # cumulative
                buckets[i] += n
    return {"states": states, "verdicts": verdicts, "buckets": buckets,
            "count": counts.get("count", 0), "sum": counts.get("sum_us", 0) / 1e6}


def job_figures(r: redis.Redis) -> dict:
    """One pass over every job record (``SCAN`` + pipelined ``HMGET``): the
    figures without the counters, for a scrape while a rebuild is on."""
    total: dict[str, int] = {}
    for keys in _scan_batches(r, "nj:job:*"):
        pipe = r.pipeline(transaction=False)
        for k in keys:
            pipe.hmget(k, ["state", "verdict", "seconds", "reused_from"])
        for st, vd, sec, rf in pipe.execute():
            if st is not None:           # None: deleted between SCAN and HMGET
                for f, n in job_counts(st, vd, sec, rf).items():
                    total[f] = total.get(f, 0) + n
    return figures_of(total)


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


def counted_job_figures(r: redis.Redis) -> dict:
    """The figures from the counters; the first call on an archive without
    them rebuilds them (one process at a time, by the lock)."""
    store = Store(r)
    counts = store.counters()
    if counts is not None:
        return figures_of(counts)
    me = secrets.token_hex(8)
    if not r.set(Store.K_METRICS_LOCK, me, nx=True, ex=LOCK_SECONDS):
        return job_figures(r)            # another process is rebuilding
    try:
        store.rebuild_counters(SCAN_COUNT)
    finally:
        _release(r, Store.K_METRICS_LOCK, me)
    return figures_of(store.counters() or {})


def _release(r, key, me):
    """Delete the lock only if it is still ours (it may have expired and
    been taken by another rebuild)."""
    with r.pipeline(transaction=True) as pipe:
        try:
            pipe.watch(key)
            if _s(pipe.get(key)) == me:
                pipe.multi()
                pipe.delete(key)
                pipe.execute()
            else:
                pipe.unwatch()
        except redis.WatchError:
            pass                         # changed under us: not ours any more


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
    from rq import Queue
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
    figs = counted_job_figures(r)
    family("nightjar_jobs", "gauge", "Job records per state.",
           [({"state": s}, n) for s, n in figs["states"].items()])
    family("nightjar_verdicts_total", "counter", "Settled jobs per SZS verdict.",
           [({"verdict": v}, n) for v, n in sorted(figs["verdicts"].items())])
    hist = [({"le": _num(float(b))}, n) for b, n in zip(BUCKETS, figs["buckets"])]
    hist.append(({"le": "+Inf"}, figs["count"]))
    out.append("# HELP nightjar_job_seconds Engine seconds of done jobs that searched "
               "(a job answered by reuse did no search and is not counted).")
    out.append("# TYPE nightjar_job_seconds histogram")
    for labels, n in hist:
        out.append(f'nightjar_job_seconds_bucket{{le="{labels["le"]}"}} {n}')
    out.append(f"nightjar_job_seconds_sum {_num(float(figs['sum']))}")
    out.append(f"nightjar_job_seconds_count {figs['count']}")
    from .queue import live_workers
    family("nightjar_workers_alive", "gauge",
           "RQ workers registered, not expired, and beating (queue.live_workers).",
           [({}, len(live_workers(r)))])
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

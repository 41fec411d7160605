"""The RQ entry point: the one adapter between the queue and the engine.

``attempt(job_id)`` takes the job (queued -> running, counting the attempt),
loads its problem from Redis, decides the obligation under the job's limits
with :func:`worker.pipeline.decide`, and writes the verdict.  A cancelled or
already settled job is left alone.  While it works, a background thread
tells the store every few seconds that the attempt is alive; the sweeper
(:mod:`service.queue`) retries an attempt that stops saying so.

Inside a work horse (the process RQ forks per job) the address space is
capped (``NIGHTJAR_MEMORY_MB``): running out gives a MemoryOut verdict and
the worker lives on.
"""

from __future__ import annotations

import os
import threading
import time

import redis

from . import reserve
from . import verdict as V

_RETRY_SECONDS = 60.0      # how long a write waits for Redis to come back


def _connection():
    from rq import get_current_job
    job = get_current_job()
    if job is not None:
        return job.connection
    url = os.environ.get("NIGHTJAR_REDIS_URL")
    if not url:
        raise RuntimeError("no Redis connection: not inside an RQ job and "
                           "NIGHTJAR_REDIS_URL is not set")
    return redis.Redis.from_url(url)


def _in_work_horse() -> bool:
    wp = os.environ.get("NJ_WORKER_PID")
    return bool(wp) and wp != str(os.getpid())


def _cap_memory(mb: int | None):
    """Cap the address space of a work horse; returns what :func:`_uncap`
    needs to lift the cap again (None when nothing was capped)."""
    if not mb or not _in_work_horse():
        return None
    import resource
    cap = int(mb) * 1024 * 1024
    soft, hard = resource.getrlimit(resource.RLIMIT_AS)
    if hard != resource.RLIM_INFINITY:
        cap = min(cap, hard)
    resource.setrlimit(resource.RLIMIT_AS, (cap, hard))
    return soft


def _uncap(soft, met_cap: bool = True) -> None:
    """Lift the cap once the search is over, so that writing the verdict
    (serialising, compressing, the Redis round trip) cannot itself run out of
    memory: a horse that met its cap may still hold most of it, in freed but
    unreturned arenas.  Raising a soft limit back up to the hard one needs no
    privilege.  The search's garbage is collected first when the search met
    the cap (``met_cap``: a MemoryOut) or the limit restored is itself finite
    (then the garbage could still count against it).  Otherwise there is
    nothing to make room for, and a full collection in a fresh horse cost 1
    to 8 ms per job (it walks, and so copies, the pages of every object the
    worker made after its freeze)."""
    if soft is None:
        return
    import resource
    if met_cap or soft != resource.RLIM_INFINITY:
        import gc
        gc.collect()
    resource.setrlimit(resource.RLIMIT_AS, (soft, resource.getrlimit(resource.RLIMIT_AS)[1]))


def _retrying(fn, *args):
    """Run a store call, waiting out a Redis restart."""
    deadline = time.monotonic() + _RETRY_SECONDS
    delay = 0.2
    while True:
        try:
            return fn(*args)
        except (redis.ConnectionError, redis.TimeoutError):
            if time.monotonic() > deadline:
                raise
            time.sleep(delay)
            delay = min(delay * 2, 3.0)


class _Heartbeat(threading.Thread):
    def __init__(self, store, job_id, worker, every, ttl):
        super().__init__(name="nightjar-heartbeat", daemon=True)
        self.args = (store, job_id, worker, every, ttl)
        self.halt = threading.Event()

    def run(self):
        store, job_id, worker, every, ttl = self.args
        while not self.halt.wait(every):
            try:
                store.touch_alive(job_id, worker, ttl)
            except Exception:
                pass


def _result(status, reason, seconds=0.0, conjecture=None):
    return {"conjecture": conjecture, "status": status, "seconds": seconds,
            "strategy": None, "reason": reason, "figures": {}, "axioms_used": [],
            "proof": None, "model": None, "certificate": V.certificate("none")}


def settings_for(rec: dict, memory_mb: int | None) -> V.Settings:
    """The engine settings of a job record (its time limit and options)."""
    opts = dict(rec.get("settings") or {})
    strategy = opts.pop("strategy", None)
    known = {k: v for k, v in opts.items()
             if k in ("equality", "model_search", "max_model_size")}
    return V.Settings(limits=V.Limits(time=float(rec["time_limit"]), memory_mb=memory_mb),
                      strategy=strategy, **known)


def decide_record(store, rec: dict, memory_mb: int | None) -> dict:
    """Load the job's problem and decide it (no writes)."""
    import json

    from .pipeline import decide
    from .syntax import load_bundle
    from .syntax.errors import InputError

    bundle = _retrying(store.load_problem_bundle, rec["problem"])   # Redis may be restarting
    if bundle is None:
        return _result(V.ERROR, "the stored problem text is missing")
    raw = rec.get("settings")
    rec = dict(rec, settings=json.loads(raw) if isinstance(raw, str) else (raw or {}))
    conj = rec.get("conjecture") or None
    t0 = time.monotonic()
    # A MemoryError is answered after its except block: by then its
    # traceback, and with it every structure of the search, is gone.
    short = None
    try:
        problem = load_bundle(bundle)
    except InputError as e:   # refused at submission, so only if the reader changed
        return _result(V.INPUT_ERROR, e.render(), conjecture=conj)
    except MemoryError:
        reserve.release()
        short = "memory limit reached while reading"
    if short:
        return _result(V.MEMORY_OUT, short, conjecture=conj)
    try:
        return decide(problem, conj, settings_for(rec, memory_mb))
    except MemoryError:
        reserve.release()
    problem = None
    return _result(V.MEMORY_OUT, "memory limit reached", round(time.monotonic() - t0, 4), conj)


def attempt(job_id: str, *, connection=None) -> str:
    """Run one attempt of a job; returns the verdict written (or what
    happened instead: "skipped", "superseded")."""
    from service.store import Store
    from service.config import Config

    cfg = Config.from_env()
    store = Store(connection or _connection())
    worker = os.environ.get("RQ_WORKER_ID") or f"pid{os.getpid()}"
    rec = _retrying(store.start_attempt, job_id, worker, cfg.alive_ttl)
    if rec is None:
        return "skipped"
    n = rec["attempts"]
    beat = _Heartbeat(store, job_id, worker, cfg.heartbeat_seconds, cfg.alive_ttl)
    beat.start()
    capped = None
    try:
        result = None
        try:
            if cfg.memory_mb and _in_work_horse():
                reserve.hold()
            capped = _cap_memory(cfg.memory_mb)
            result = decide_record(store, rec, cfg.memory_mb)
        except MemoryError:
            reserve.release()
        except Exception as e:
            if type(e).__name__ == "JobTimeoutException":   # RQ's hard stop
                result = _result(V.TIMEOUT, "hard stop: the time limit, the checking allowance and the grace "
                                 "period ran out", conjecture=rec.get("conjecture"))
            else:
                result = _result(V.ERROR, f"internal error: {type(e).__name__}: {e}",
                                 conjecture=rec.get("conjecture"))
        reserve.release()
        if result is None:    # out of memory: answered outside the handler
            result = _result(V.MEMORY_OUT, "memory limit reached",
                             conjecture=rec.get("conjecture"))
        _uncap(capped, met_cap=result["status"] == V.MEMORY_OUT)
        capped = None
        written = _retrying(store.finish, job_id, n, result)
    finally:
        beat.halt.set()
    return result["status"] if written else "superseded"

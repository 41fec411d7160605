"""RQ wiring: enqueueing attempts, stopping them, the worker loop, and the
sweeper that settles the jobs of workers that died.

RQ only dispatches.  Each attempt of a job is one RQ job with the id
``<job id>-<attempt>`` running ``worker.jobs.attempt(job_id)``; its RQ
timeout is the job's time limit plus the checking allowance plus the grace
period (the hard stop, :func:`hard_stop_seconds`).  Our
records in :mod:`service.store` say what happened; RQ's own results expire.
"""

from __future__ import annotations

import logging
import os
import socket
import threading
import time

import redis
from rq import Queue, Worker
from rq.command import send_stop_job_command

from .config import Config, QUEUE_BATCH, QUEUE_INTERACTIVE, QUEUES
from .store import Store
from worker import verdict as V

log = logging.getLogger("nightjar.queue")

RQ_RESULT_TTL = 600          # RQ's own copy of a return value; ours lasts
RQ_FAILURE_TTL = 24 * 3600


def _handshake_options() -> dict:
    """Connection options that leave out the handshake commands we have no
    use for: the client library's name and version (CLIENT SETINFO, two
    round trips) and the maintenance-notification opt-in (one more; it is
    for managed clusters that announce their moves).  Every work horse opens
    a fresh connection, so these were three of a trivial job's round trips."""
    opts: dict = {}
    try:
        import redis.driver_info  # noqa: F401  (newer redis-py)
        opts["driver_info"] = None
    except ImportError:
        opts.update(lib_name=None, lib_version=None)
    try:
        from redis.maint_notifications import MaintNotificationsConfig
        opts["maint_notifications_config"] = MaintNotificationsConfig(enabled=False)
    except ImportError:
        pass
    return opts


_HANDSHAKE = _handshake_options()


def connect(url: str) -> redis.Redis:
    return redis.Redis.from_url(url, decode_responses=False,
                                socket_connect_timeout=5, health_check_interval=10,
                                **_HANDSHAKE)


def rq_id(job_id: str, attempt: int, redispatch: int = 0) -> str:
    """The RQ job id of an attempt: ``<job>-<attempt>``, with ``r<n>`` added
    when a stranded queue entry had to be sent again."""
    return f"{job_id}-{attempt}" + (f"r{redispatch}" if redispatch else "")


class Dispatcher:
    """Puts attempts on the RQ queues and stops them."""

    def __init__(self, r: redis.Redis, config: Config):
        self.r = r
        self.config = config
        self.queues = {name: Queue(name, connection=r) for name in QUEUES}

    def enqueue(self, pipe, job_id: str, time_limit: float,
                queue_name: str | None = None, attempts_done: int = 0,
                redispatch: int = 0) -> None:
        """Add the RQ enqueue of the next attempt to ``pipe`` (a MULTI
        pipeline of the same connection), so record and queue entry commit
        together.  The RQ id goes into the job record (field ``rq``)."""
        q = self.queues[queue_name or QUEUE_BATCH]
        rid = rq_id(job_id, attempts_done + 1, redispatch)
        q.enqueue_call("worker.jobs.attempt", args=(job_id,),
                       timeout=int(hard_stop_seconds(time_limit, self.config)) + 1,
                       job_id=rid, result_ttl=RQ_RESULT_TTL, failure_ttl=RQ_FAILURE_TTL,
                       description=f"nightjar job {job_id}", pipeline=pipe)
        pipe.hset(Store.k_job(job_id), "rq", rid)
        pipe.zadd(Store.K_QUEUED, {job_id: time.time()})

    def stop(self, job_id: str) -> bool:
        """Ask the worker running ``job_id`` to kill its work horse."""
        rid = self.r.hget(Store.k_job(job_id), "rq")
        if not rid:
            return False
        try:
            send_stop_job_command(self.r, rid.decode())
            return True
        except Exception as e:  # not running any more, or RQ lost it: fine
            log.info("stop %s: %s", job_id, e)
            return False


def hard_stop_seconds(time_limit: float, config: Config) -> float:
    """How long an attempt may run before it is stopped: the time limit, the
    allowance for checking a proof found near its end, and the grace period."""
    return time_limit + V.check_allowance(time_limit) + config.grace_seconds


def sweep(store: Store, dispatcher: Dispatcher, config: Config,
          suspects: set | None = None) -> list[tuple[str, str]]:
    """Settle running jobs whose attempt stopped saying it is alive (its
    worker was killed, its machine lost): retry once, then fail with the
    reason.  With ``suspects`` (a set the caller keeps between calls) a job
    is acted on only when its key was missing on the previous call too.
    Safe to run anywhere, any number of times at once: every change
    is a guarded transition.  An attempt that ran past its time limit plus
    the grace period is settled as Timeout instead.  Returns
    [(job id, "retried" | "failed" | "timed out")]."""
    out = []
    missing = set()
    for jid in store.running_jobs():
        if store.is_alive(jid):
            continue
        missing.add(jid)
        if suspects is not None and jid not in suspects:
            continue          # act on the second sighting only (a beat may be late)
        rec = store.get_job_raw(jid)
        if rec is None or rec.get("state") != "running":
            store.r.srem(store.K_RUNNING, jid)
            continue
        attempts = int(rec.get("attempts") or 0)
        who = rec.get("worker") or "?"
        started = float(rec.get("started") or 0)
        hard_stop = started + hard_stop_seconds(float(rec.get("time_limit") or 0), config)
        if started and time.time() >= hard_stop:
            # it ran past its time limit and the grace period: RQ's hard stop
            # (or the monitor) ended it; that is a Timeout, not a lost worker
            reason = ("hard stop: the attempt did not return within the time limit "
                      "plus the grace period, so its work horse was stopped")
            if store.finish(jid, attempts, {"status": "Timeout", "reason": reason,
                                            "seconds": round(time.time() - started, 4)}):
                out.append((jid, "timed out"))
            continue
        if attempts < config.max_attempts:
            reason = (f"attempt {attempts} was lost (worker {who} stopped "
                      f"answering); retried")
            if store.requeue(jid, reason, dispatcher.enqueue):
                out.append((jid, "retried"))
        else:
            reason = (f"failed: the worker running it stopped answering "
                      f"{attempts} times (last: {who}); not retried again")
            if store.fail(jid, reason, attempt=attempts):
                out.append((jid, "failed"))
    if suspects is not None:
        suspects.clear()
        suspects.update(missing - {j for j, _ in out})
    return out


def sweep_stranded(store: Store, dispatcher: Dispatcher, min_age: float = 30.0) -> list[str]:
    """Send again the jobs our records have held as queued for ``min_age``
    seconds whose RQ entry is no longer on its queue (RQ took it but no
    attempt started: the worker died in between, or Redis restarted under
    it).  Sending one twice is harmless: only one attempt can take a job.
    Returns the ids sent again."""
    r = store.r
    ids = [x.decode() for x in r.zrangebyscore(store.K_QUEUED, 0, time.time() - min_age)]
    if not ids:
        return []
    pipe = r.pipeline(transaction=False)
    for jid in ids:
        pipe.hmget(store.k_job(jid), ["state", "rq"])
    recs = pipe.execute()
    waiting = set()
    for q in dispatcher.queues.values():
        waiting.update(r.lrange(q.key, 0, -1))
    out = []
    for jid, (st, rid) in zip(ids, recs):
        if st != b"queued":
            r.zrem(store.K_QUEUED, jid)          # settled or started: not ours to mind
            continue
        if rid in waiting:
            continue
        if store.redispatch(jid, dispatcher.enqueue):
            out.append(jid)
    return out


class Sweeper(threading.Thread):
    """Runs :func:`sweep` every few seconds in the background."""

    def __init__(self, url: str, config: Config, every: float | None = None):
        super().__init__(name="nightjar-sweeper", daemon=True)
        self.url, self.config = url, config
        self.every = every or config.sweep_seconds
        self.halt = threading.Event()

    def run(self):
        r = connect(self.url)
        store, disp = Store(r), Dispatcher(r, self.config)
        last_stranded = 0.0
        suspects: set = set()
        while not self.halt.wait(self.every):
            try:
                for jid, what in sweep(store, disp, self.config, suspects):
                    log.warning("sweeper: job %s %s", jid, what)
                if time.monotonic() - last_stranded > self.config.stranded_seconds / 3:
                    last_stranded = time.monotonic()
                    for jid in sweep_stranded(store, disp, self.config.stranded_seconds):
                        log.warning("sweeper: job %s sent again (its queue entry was lost)", jid)
            except redis.RedisError as e:
                log.info("sweeper: redis not answering (%s)", e)
            except Exception:  # never let the sweeper die
                log.exception("sweeper")


# RQ's worker registration (rq/worker/base.py of rq 3.0, read there): a
# worker's hash ``rq:worker:<name>`` is set to expire ``worker_ttl + 60`` s
# after each beat; idle, it beats before every dequeue, which waits at most
# ``worker_ttl - 15`` s; while a horse runs it beats every
# ``job_monitoring_interval``; ``register_death`` (on a clean stop) takes it out
# of ``rq:workers``.  RQ's default worker_ttl of 420 s means a beat every
# 405 s: a kill -9'd worker would look alive for 8 minutes.  Ours beat every
# 15 s, and a worker silent for LIVE_WITHIN seconds is not counted as live
# (its hash expires a minute later, as RQ has it).
WORKER_TTL = 30
IDLE_BEAT_SECONDS = WORKER_TTL - 15
LIVE_WITHIN = 2 * IDLE_BEAT_SECONDS + 5


def live_workers(r: redis.Redis, now: float | None = None) -> list:
    """The RQ workers that are alive: registered, their hash not expired
    (``clean_worker_registry`` first drops the entries of expired ones from
    every queue's set and ``rq:workers``) and their last beat at most
    LIVE_WITHIN seconds old.  A worker that stopped cleanly has deregistered;
    one killed, or on a lost machine, drops out within LIVE_WITHIN."""
    from rq.worker_registration import clean_worker_registry
    for name in QUEUES:
        clean_worker_registry(Queue(name, connection=r))
    now = time.time() if now is None else now
    out = []
    for w in Worker.all(connection=r):
        beat = w.last_heartbeat.timestamp() if w.last_heartbeat else None
        if beat is not None and now - beat <= LIVE_WITHIN:
            out.append(w)
    return out


_stop = threading.Event()       # this process was asked to stop (SIGTERM / SIGINT)


def _stop_asked(signum, frame) -> None:
    """The signal handler between RQ loops (RQ installs its own inside one)."""
    _stop.set()


class NightjarWorker(Worker):
    """RQ's forking worker; while a work horse runs, the worker itself also
    renews the attempt's alive key every ``job_monitoring_interval`` seconds,
    so an attempt stuck in a long native call (the horse's own heartbeat
    thread then waits for the interpreter lock) is not taken for lost.

    A stop request (SIGTERM, Ctrl-C) is remembered for the whole process:
    RQ ends its loop on it and deregisters, and :func:`run_worker` must then
    return instead of taking RQ's loop end for a Redis error and starting a
    fresh worker (which registered again and was left behind, registered,
    by the SIGKILL that followed)."""

    alive_ttl = 12.0

    def request_stop(self, signum, frame):
        _stop.set()
        super().request_stop(signum, frame)

    config: Config | None = None      # set by run_worker (the hand-back's queue options)
    _attempt = None                   # the Nightjar job id of the horse's attempt

    def execute_job(self, job, queue):
        self._attempt = (job.args[0] if job.func_name == "worker.jobs.attempt" and job.args
                         else None)
        try:
            return super().execute_job(job, queue)
        finally:
            self._attempt = None

    def request_force_stop(self, signum, frame):
        _stop.set()
        jid = self._attempt if self.horse_pid else None
        try:
            super().request_force_stop(signum, frame)
        except SystemExit:
            # RQ killed the horse (a cold stop): the attempt did not fail and
            # was not lost; hand the job back saying so
            if jid is not None:
                hand_back(jid, self.name, self.config or Config.from_env())
            raise

    def _install_signal_handlers(self):
        super()._install_signal_handlers()
        if _stop.is_set():          # asked to stop while it was starting
            self._stop_requested = True

    def maintain_heartbeats(self, job, execution):
        super().maintain_heartbeats(job, execution)
        try:
            if job.func_name == "worker.jobs.attempt" and job.args:
                Store(self.connection).touch_alive(job.args[0], self.name, self.alive_ttl)
        except Exception as e:      # a missed beat is not worth a crash
            log.info("heartbeat: %s", e)


# why a job was handed back by a worker told to stop at once (a cold stop:
# SIGTERM or Ctrl-C twice, as `nightjar serve` does when it stops); the
# sweeper's "stopped answering" stays for workers that were really lost
STOPPED_REASON = "attempt {n} was cut short: its worker {who} was shut down; retried"


def hand_back(jid: str, worker: str, config: Config, r: redis.Redis | None = None) -> bool:
    """Queue a job again whose attempt this worker's stop cut short, with that
    reason (the sweeper would otherwise retry it later as lost, "stopped
    answering").  Only while the record still says this worker runs it.  By
    default on a fresh connection to ``NIGHTJAR_REDIS_URL`` (this runs in a
    signal handler, perhaps while the worker's own connection is in use); a
    Redis that does not answer within a few seconds leaves the job to the
    sweeper."""
    try:
        if r is None:
            url = os.environ.get("NIGHTJAR_REDIS_URL")
            if not url:
                return False
            r = redis.Redis.from_url(url, socket_connect_timeout=3, socket_timeout=3,
                                     **_HANDSHAKE)
        store = Store(r)
        rec = store.get_job_raw(jid)
        if not rec or rec.get("state") != "running" or rec.get("worker") != worker:
            return False
        n = int(rec.get("attempts") or 0)
        reason = STOPPED_REASON.format(n=n, who=worker)
        done = store.requeue(jid, reason, Dispatcher(r, config).enqueue)
        if done:
            log.warning("worker %s: job %s handed back (the worker was stopped)", worker, jid)
        return done
    except redis.RedisError as e:
        log.warning("worker %s: job %s not handed back (%s); the sweeper will retry it",
                    worker, jid, e)
        return False


_names = iter(range(1, 1 << 30))


def worker_name() -> str:
    return f"{socket.gethostname()}.{os.getpid()}.{next(_names)}"


PRELOAD = ("worker.jobs", "worker.pipeline", "worker.syntax", "worker.clausify",
           "worker.portfolio", "worker.certify.proofcheck", "worker.certify.evaluate",
           "service.store")


def preload() -> None:
    """Import the engine once in the worker, so every forked work horse has
    it already (a fresh import per job costs more than a small proof)."""
    import importlib
    for name in PRELOAD:
        try:
            importlib.import_module(name)
        except ImportError as e:
            log.info("preload %s: %s", name, e)
    warm_up()
    import gc
    gc.collect()
    gc.freeze()      # the horses' collections leave these objects (and their pages) alone


WARM_UP = ("conjecture g: p implies p\n",
           "axiom a: forall x. f(x) = x\naxiom b: p(c)\nconjecture g: p(f(c))\n",
           "axiom a: p(c)\nconjecture g: q(c)\n")


def warm_up() -> None:
    """Decide a few tiny problems once in the worker: the engine's first
    call pays for lazy set-up (a tenth of a second) that every forked work
    horse would otherwise pay again."""
    try:
        from worker.pipeline import decide
        from worker.syntax import parse_text
        from worker.verdict import Limits, Settings
        for text in WARM_UP:
            p = parse_text(text, "warm-up.nj")
            for c in p.obligations():
                decide(p, c, Settings(limits=Limits(time=5)))
    except Exception as e:      # never keep a worker from starting
        log.info("warm-up: %s", e)


def _horse_killed_handler():
    """service.horse_guard (hardening): a horse that died of exhausted memory
    inside a C extension gets MemoryOut instead of a retry."""
    from .horse_guard import horse_killed
    return horse_killed


def run_worker(url: str, config: Config, *, burst: bool = False,
               sweeper: bool = True, log_level: str = "WARNING") -> int:
    """The ``nightjar worker`` loop: an RQ worker on both queues
    (interactive first), restarted when Redis goes away, plus a sweeper."""
    os.environ["NIGHTJAR_REDIS_URL"] = url
    os.environ["NJ_WORKER_PID"] = str(os.getpid())
    os.environ.setdefault("NIGHTJAR_MEMORY_MB", str(config.memory_mb))
    preload()
    sw = None
    if sweeper:
        sw = Sweeper(url, config)
        sw.start()
    wait = 1.0
    main_thread = threading.current_thread() is threading.main_thread()
    _stop.clear()

    def between_loops():
        # RQ's handlers belong to the worker that ended; until the next one
        # installs its own, a stop request only sets the flag
        if main_thread:
            import signal
            for sig in (signal.SIGTERM, signal.SIGINT):
                signal.signal(sig, _stop_asked)

    def pause(seconds):
        between_loops()
        _stop.wait(seconds)

    try:
        while not _stop.is_set():
            r = connect(url)
            try:
                r.ping()
                wait = 1.0               # Redis answers: back to a short pause
                w = NightjarWorker([Queue(n, connection=r) for n in QUEUES], connection=r,
                                   name=worker_name(), worker_ttl=WORKER_TTL,
                                   work_horse_killed_handler=_horse_killed_handler(),
                                   job_monitoring_interval=max(1, int(config.heartbeat_seconds)))
                w.alive_ttl = config.alive_ttl
                w.config = config
                w.work(burst=burst, logging_level=log_level, with_scheduler=False)
                if burst or _stop.is_set() or getattr(w, "_stop_requested", False):
                    return 0
                # RQ leaves its loop (without raising) on an error such as
                # Redis restarting under it: start a fresh worker.
                log.warning("worker: the RQ loop ended without a stop request; "
                            "starting again in %.0fs", wait)
                pause(wait)
                wait = min(wait * 2, 10.0)
                continue
            except (redis.ConnectionError, redis.TimeoutError) as e:
                if _stop.is_set():
                    return 0
                log.warning("worker: redis not answering (%s); retrying in %.0fs", e, wait)
                pause(wait)
                wait = min(wait * 2, 10.0)
            except Exception:
                if _stop.is_set():      # e.g. RQ's StopRequested outside its loop
                    return 0
                # RQ's bookkeeping can fail half-way when Redis restarts under
                # it; our records are guarded, so start a fresh RQ worker.
                log.exception("worker: restarting after an error")
                pause(wait)
                wait = min(wait * 2, 10.0)
        return 0
    finally:
        if sw:
            sw.halt.set()


__all__ = ["connect", "Dispatcher", "sweep", "sweep_stranded", "Sweeper", "run_worker", "rq_id",
           "live_workers",
           "QUEUE_INTERACTIVE", "QUEUE_BATCH", "QUEUES"]

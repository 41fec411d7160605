"""Lasting Redis records: problems, jobs, batches, results, tokens.

Every key is ours and under ``nj:`` (see "Storage keys" in DEVELOPERS.md);
nothing here relies on RQ's result expiry.  State changes that must go
together (a job's state, its batch's counters, the running set, the result)
are written in one MULTI/EXEC transaction, guarded by WATCH where the change
depends on what is stored (a verdict is written only by the attempt that
holds the job).

The client must be made with ``decode_responses=False`` (RQ needs raw bytes
too); this module decodes.
"""

from __future__ import annotations

import hashlib
import hmac
import json
import math
import secrets
import time
import zlib

import redis

from . import corpus_marks      # the settle hook of corpus runs (Store._settled)

P = "nj:"
STATES = ("queued", "running", "done", "failed", "cancelled")
FINAL_STATES = frozenset({"done", "failed", "cancelled"})

# -- service-wide counters (what GET /metrics shows; see "Storage keys") --
# Upper bounds (seconds) of the job seconds histogram buckets.
BUCKETS = (0.01, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0, 30.0, 60.0, 120.0, 300.0)
# A job record whose ``metered`` field holds this is included in the counters
# under ``nj:metrics:<METER_GEN>``; every change of such a job changes them in
# the same transaction.  A new generation (other buckets, a repair) starts an
# empty key and the rebuild counts every job into it.  "2": reused jobs left
# the seconds histogram (generation "1" counted their copied seconds).
METER_GEN = "2"


def job_counts(state, verdict, seconds, reused_from=None) -> dict[str, int]:
    """What one job adds to the counters: ``s:<state>``, ``v:<verdict>`` and,
    for a done job with finite seconds that searched itself (no
    ``reused_from``: a reused job's seconds are the original search's),
    ``count``, ``sum_us`` (integer microseconds, so sums are exact and
    order-free) and ``h:<i>``: the index of the first bucket it fits
    (``h:inf`` for none); render cumulates."""
    state, verdict, seconds = _s(state), _s(verdict), _s(seconds)
    out = {}
    if not state:
        return out
    out["s:" + state] = 1
    if verdict:
        out["v:" + verdict] = 1
    if state == "done" and seconds not in (None, "") and not _s(reused_from):
        try:
            x = float(seconds)
        except ValueError:
            return out
        if math.isfinite(x):
            out["count"] = 1
            out["sum_us"] = round(x * 1e6)
            out[f"h:{next((i for i, b in enumerate(BUCKETS) if x <= b), 'inf')}"] = 1
    return out


def _add_counts(into: dict, counts: dict, sign: int = 1) -> None:
    for k, v in counts.items():
        into[k] = into.get(k, 0) + sign * v


# fields of a job hash that hold JSON
_JSON_FIELDS = ("certificate", "settings", "axioms_used")
_FLOAT_FIELDS = ("seconds", "submitted", "started", "finished", "time_limit")
_INT_FIELDS = ("attempts", "index")


def _s(v):
    return v.decode() if isinstance(v, bytes) else v


def _decode_hash(h: dict) -> dict:
    return {_s(k): _s(v) for k, v in h.items()}


def pack(obj) -> bytes:
    """JSON, zlib-compressed (proofs, models, problem bundles)."""
    return zlib.compress(json.dumps(obj, separators=(",", ":")).encode(), 6)


def unpack(b: bytes | None):
    return None if b is None else json.loads(zlib.decompress(b))


def new_id(kind: str) -> str:
    """``j...`` for a job, ``b...`` for a batch."""
    return kind + secrets.token_hex(6)


def job_record(h: dict) -> dict:
    """A job hash as the JSON the API gives out."""
    d = _decode_hash(h)
    for f in _JSON_FIELDS:
        if f in d:
            d[f] = json.loads(d[f])
    for f in _FLOAT_FIELDS:
        if f in d and d[f] != "":
            d[f] = float(d[f])
    for f in _INT_FIELDS:
        if f in d and d[f] != "":
            d[f] = int(d[f])
    d.setdefault("conjecture", None)
    if d.get("conjecture") == "":
        d["conjecture"] = None
    for f in ("verdict", "strategy", "worker", "started", "finished", "seconds",
              "reason", "label", "reused_from", "lost"):
        d.setdefault(f, None)
    for f in ("problem", "reuse_key", "rq", "redispatched", "metered"):
        d.pop(f, None)
    return d


class Conflict(Exception):
    """The stored state does not allow the change (e.g. cancel a finished job)."""


class Store:
    def __init__(self, r: redis.Redis):
        self.r = r

    # -- keys --------------------------------------------------------------
    @staticmethod
    def k_job(jid): return f"{P}job:{jid}"
    @staticmethod
    def k_result(jid): return f"{P}result:{jid}"
    @staticmethod
    def k_alive(jid): return f"{P}alive:{jid}"
    @staticmethod
    def k_batch(bid): return f"{P}batch:{bid}"
    @staticmethod
    def k_batch_jobs(bid): return f"{P}batch:{bid}:jobs"
    @staticmethod
    def k_counts(bid): return f"{P}batch:{bid}:counts"
    @staticmethod
    def k_text(sha): return f"{P}text:{sha}"
    @staticmethod
    def k_problem(pid): return f"{P}problem:{pid}"
    @staticmethod
    def k_owner_batches(owner): return f"{P}owner:{owner}:batches"
    @staticmethod
    def k_reuse(owner, key): return f"{P}reuse:{owner}:{key}"
    K_RUNNING = f"{P}running"
    K_QUEUED = f"{P}queued"          # zset: job id -> when it was (last) queued
    K_TOKENS = f"{P}tokens"          # hash: token name -> sha256 of the token
    K_METRICS = f"{P}metrics:{METER_GEN}"          # hash: the service-wide counters
    K_METRICS_LOCK = f"{P}metrics:{METER_GEN}:lock"  # string, TTL: a rebuild is on
    @staticmethod
    def k_token(sha): return f"{P}token:{sha}"

    # -- problems ----------------------------------------------------------
    @staticmethod
    def problem_id(bundle: dict) -> str:
        """Content address of a bundle {"main", "files": {name: text}} (and
        "context": the axiom files read after the main, when it has one)."""
        key = {"main": bundle["main"], "files": bundle["files"],
               "language": bundle.get("language")}
        if bundle.get("context"):
            key["context"] = bundle["context"]
        canon = json.dumps(key, sort_keys=True, separators=(",", ":"))
        return hashlib.sha256(canon.encode()).hexdigest()[:32]

    def stage_problem(self, pipe, bundle: dict) -> str:
        """Queue the writes of a problem bundle on ``pipe``; texts are shared
        between problems (an axiom file is kept once)."""
        pid = self.problem_id(bundle)
        names = {}
        for name, text in bundle["files"].items():
            sha = hashlib.sha256(text.encode()).hexdigest()[:32]
            pipe.set(self.k_text(sha), zlib.compress(text.encode(), 6), nx=True)
            names[name] = sha
        meta = {"main": bundle["main"], "files": names, "language": bundle.get("language")}
        if bundle.get("context"):
            meta["context"] = list(bundle["context"])
        pipe.set(self.k_problem(pid), pack(meta), nx=True)
        return pid

    def load_problem_bundle(self, pid: str) -> dict | None:
        meta = unpack(self.r.get(self.k_problem(pid)))
        if meta is None:
            return None
        names = list(meta["files"])
        blobs = self.r.mget([self.k_text(meta["files"][n]) for n in names])
        files = {n: zlib.decompress(b).decode() for n, b in zip(names, blobs)}
        out = {"main": meta["main"], "files": files, "language": meta.get("language")}
        if meta.get("context"):
            out["context"] = meta["context"]
        return out

    # -- submission --------------------------------------------------------
    def create_batch(self, owner: str, jobs: list[dict], *, label: str | None,
                     queue_name: str, settings: dict, enqueue=None,
                     reused: dict | None = None) -> tuple[str, list[str]]:
        """Write a batch and its jobs in one transaction.

        ``jobs``: dicts with ``file``, ``conjecture``, ``bundle``, ``time_limit``,
        ``reuse_key`` (or None).  ``reused``: index -> stored job record whose
        verdict answers that job at once.  ``enqueue(pipe, job_id, time_limit)``
        adds the RQ enqueue to the same transaction, so a job is never stored
        without its queue entry, nor queued without its record."""
        reused = reused or {}
        bid = new_id("b")
        now = time.time()
        ids = []
        pipe = self.r.pipeline(transaction=True)
        pipe.multi()     # explicit: RQ's enqueue joins this transaction
        counts: dict[str, int] = {}
        metered: dict[str, int] = {}
        pids = {}
        for i, j in enumerate(jobs):
            jid = new_id("j")
            ids.append(jid)
            key = id(j["bundle"])
            if key not in pids:
                pids[key] = self.stage_problem(pipe, j["bundle"])
            rec = {"id": jid, "batch": bid, "owner": owner, "file": j["file"],
                   "conjecture": j["conjecture"] or "", "index": i,
                   "problem": pids[key], "submitted": now, "attempts": 0,
                   "time_limit": j["time_limit"], "queue": queue_name,
                   "settings": json.dumps(settings), "label": label or "",
                   "reuse_key": j.get("reuse_key") or "", "metered": METER_GEN}
            src = reused.get(i)
            if src is not None:
                rec.update({"state": "done", "verdict": src["verdict"],
                            "seconds": src.get("seconds") or 0.0,
                            "strategy": src.get("strategy") or "",
                            "reason": src.get("reason") or "",
                            "certificate": json.dumps(src.get("certificate") or {}),
                            "axioms_used": json.dumps(src.get("axioms_used") or []),
                            "started": now, "finished": now, "reused_from": src["id"]})
                res = self.r.hgetall(self.k_result(src["id"]))
                if res:
                    pipe.hset(self.k_result(jid), mapping=res)
                counts["done"] = counts.get("done", 0) + 1
                counts["v:" + src["verdict"]] = counts.get("v:" + src["verdict"], 0) + 1
            else:
                rec["state"] = "queued"
                counts["queued"] = counts.get("queued", 0) + 1
            _add_counts(metered, job_counts(rec["state"], rec.get("verdict"),
                                            str(rec.get("seconds", "")),
                                            rec.get("reused_from")))
            pipe.hset(self.k_job(jid), mapping={k: str(v) for k, v in rec.items()})
            pipe.rpush(self.k_batch_jobs(bid), jid)
            if src is None and enqueue is not None:
                enqueue(pipe, jid, j["time_limit"], queue_name)
        pipe.hset(self.k_batch(bid), mapping={
            "id": bid, "owner": owner, "label": label or "", "submitted": str(now),
            "total": str(len(jobs)), "queue": queue_name, "settings": json.dumps(settings)})
        if counts:
            pipe.hset(self.k_counts(bid), mapping={k: str(v) for k, v in counts.items()})
        pipe.zadd(self.k_owner_batches(owner), {bid: now})
        self._stage_counts(pipe, metered)
        pipe.execute()
        return bid, ids

    def find_reusable(self, owner: str, reuse_key: str) -> dict | None:
        jid = self.r.get(self.k_reuse(owner, reuse_key))
        if jid is None:
            return None
        rec = self.get_job(_s(jid))
        if rec is None or rec["state"] != "done":
            return None
        return rec

    # -- reading -----------------------------------------------------------
    def get_job_raw(self, jid: str) -> dict | None:
        h = self.r.hgetall(self.k_job(jid))
        return _decode_hash(h) if h else None

    def get_job(self, jid: str) -> dict | None:
        h = self.r.hgetall(self.k_job(jid))
        return job_record(h) if h else None

    def get_jobs(self, ids: list[str]) -> list[dict]:
        pipe = self.r.pipeline(transaction=False)
        for jid in ids:
            pipe.hgetall(self.k_job(jid))
        return [job_record(h) for h in pipe.execute() if h]

    def get_result(self, jid: str) -> dict:
        """proof, model (decompressed), figures, axioms_used of a finished job."""
        h = _decode_result(self.r.hgetall(self.k_result(jid)))
        return h

    def get_batch(self, bid: str) -> dict | None:
        h = self.r.hgetall(self.k_batch(bid))
        if not h:
            return None
        d = _decode_hash(h)
        d["total"] = int(d["total"])
        d["submitted"] = float(d["submitted"])
        d["settings"] = json.loads(d.get("settings") or "{}")
        d["label"] = d.get("label") or None
        counts = _decode_hash(self.r.hgetall(self.k_counts(bid)))
        states = {s: 0 for s in STATES}
        verdicts = {}
        for k, v in counts.items():
            n = int(v)
            if k.startswith("v:"):
                if n:
                    verdicts[k[2:]] = n
            else:
                states[k] = n
        d["states"] = states
        d["verdicts"] = verdicts
        settled = sum(states[s] for s in FINAL_STATES)
        d["settled"] = settled
        d["progress"] = round(settled / d["total"], 4) if d["total"] else 1.0
        d["finished"] = settled == d["total"]
        return d

    def batch_job_ids(self, bid: str) -> list[str]:
        return [_s(x) for x in self.r.lrange(self.k_batch_jobs(bid), 0, -1)]

    def batch_jobs(self, bid: str, *, state=None, verdict=None, offset=0,
                   limit=100) -> tuple[int, list[dict]]:
        """(number matching, one page of job records) of a batch, in
        submission order, optionally only those in ``state`` / with ``verdict``."""
        ids = self.batch_job_ids(bid)
        if state is None and verdict is None:
            return len(ids), self.get_jobs(ids[offset:offset + limit])
        pipe = self.r.pipeline(transaction=False)
        for jid in ids:
            pipe.hmget(self.k_job(jid), ["state", "verdict"])
        keep = []
        for jid, (st, vd) in zip(ids, pipe.execute()):
            if state is not None and _s(st) != state:
                continue
            if verdict is not None and _s(vd) != verdict:
                continue
            keep.append(jid)
        return len(keep), self.get_jobs(keep[offset:offset + limit])

    def owner_batches(self, owner: str, offset=0, limit=50) -> list[str]:
        return [_s(x) for x in self.r.zrevrange(self.k_owner_batches(owner),
                                                offset, offset + limit - 1)]

    # -- the life of a job -------------------------------------------------
    def _transition(self, jid: str, check, change) -> dict | None:
        """WATCH the job, let ``check(record)`` decide (None = leave it), then
        apply ``change(pipe, record)`` in MULTI/EXEC.  Retries on a race."""
        key = self.k_job(jid)
        while True:
            with self.r.pipeline(transaction=True) as pipe:
                try:
                    pipe.watch(key)
                    h = pipe.hgetall(key)
                    if not h:
                        return None
                    rec = _decode_hash(h)
                    if not check(rec):
                        pipe.unwatch()
                        return None
                    pipe.multi()
                    change(pipe, rec)
                    pipe.execute()
                    return rec
                except redis.WatchError:
                    continue

    def _move(self, pipe, rec, new_state, verdict=None, seconds=None):
        """The counter changes of ``rec`` going to ``new_state`` (with its
        verdict and seconds, when it gets them), on ``pipe`` inside the
        guarded transaction of the move, so they happen exactly once."""
        ck = self.k_counts(rec["batch"])
        pipe.hincrby(ck, rec["state"], -1)
        pipe.hincrby(ck, new_state, 1)
        if verdict:
            pipe.hincrby(ck, "v:" + verdict, 1)
        if rec.get("metered") == METER_GEN:
            delta: dict[str, int] = {}
            _add_counts(delta, job_counts(rec["state"], rec.get("verdict"),
                                          rec.get("seconds"), rec.get("reused_from")), -1)
            _add_counts(delta, job_counts(new_state, verdict or rec.get("verdict"),
                                          rec.get("seconds") if seconds is None else seconds,
                                          rec.get("reused_from")))
            self._stage_counts(pipe, delta)

    def _stage_counts(self, pipe, delta: dict[str, int]) -> None:
        for k, v in delta.items():
            if v:
                pipe.hincrby(self.K_METRICS, k, v)

    def start_attempt(self, jid: str, worker: str, alive_ttl: float) -> dict | None:
        """queued -> running; returns the record (attempts counted) or None if
        the job is not waiting (cancelled, settled, or taken)."""
        now = time.time()

        def change(pipe, rec):
            self._move(pipe, rec, "running")
            pipe.hset(self.k_job(jid), mapping={"state": "running", "worker": worker,
                                                "started": str(now)})
            pipe.hincrby(self.k_job(jid), "attempts", 1)
            pipe.sadd(self.K_RUNNING, jid)
            pipe.zrem(self.K_QUEUED, jid)
            pipe.set(self.k_alive(jid), worker, px=int(alive_ttl * 1000))

        rec = self._transition(jid, lambda r: r["state"] == "queued", change)
        if rec is None:
            return None
        rec["attempts"] = int(rec.get("attempts") or 0) + 1
        rec["state"] = "running"
        return rec

    def still_mine(self, jid: str, attempt: int) -> bool:
        st, att = self.r.hmget(self.k_job(jid), ["state", "attempts"])
        return _s(st) == "running" and int(att or 0) == attempt

    def touch_alive(self, jid: str, worker: str, ttl: float) -> None:
        self.r.set(self.k_alive(jid), worker, px=int(ttl * 1000))

    def finish(self, jid: str, attempt: int, result: dict) -> bool:
        """Write a verdict (the pipeline's result dict) if ``attempt`` still
        holds the job.  The proof and model are kept compressed."""
        now = time.time()
        status = result["status"]

        def check(rec):
            return rec["state"] == "running" and int(rec.get("attempts") or 0) == attempt

        def change(pipe, rec):
            seconds = str(result.get("seconds") or 0.0)
            self._move(pipe, rec, "done", status, seconds)
            pipe.hset(self.k_job(jid), mapping={
                "state": "done", "verdict": status,
                "seconds": seconds,
                "strategy": result.get("strategy") or "",
                "reason": result.get("reason") or "",
                "certificate": json.dumps(result.get("certificate") or {}),
                "axioms_used": json.dumps(result.get("axioms_used") or []),
                "finished": str(now)})
            res = {"figures": json.dumps(result.get("figures") or {})}
            if result.get("proof") is not None:
                res["proof"] = pack(result["proof"])
            if result.get("model") is not None:
                res["model"] = pack(result["model"])
            pipe.hset(self.k_result(jid), mapping=res)
            pipe.srem(self.K_RUNNING, jid)
            pipe.delete(self.k_alive(jid))
            if rec.get("reuse_key") and status not in ("Error", "InputError"):
                pipe.set(self.k_reuse(rec["owner"], rec["reuse_key"]), jid)

        rec = self._transition(jid, check, change)
        self._settled(rec, status)
        return rec is not None

    def fail(self, jid: str, reason: str, attempt: int | None = None) -> bool:
        """running (or queued) -> failed with a reason."""
        now = time.time()

        def check(rec):
            if rec["state"] not in ("running", "queued"):
                return False
            return attempt is None or int(rec.get("attempts") or 0) == attempt

        def change(pipe, rec):
            self._move(pipe, rec, "failed")
            pipe.hset(self.k_job(jid), mapping={"state": "failed", "reason": reason,
                                                "finished": str(now)})
            pipe.srem(self.K_RUNNING, jid)
            pipe.zrem(self.K_QUEUED, jid)
            pipe.delete(self.k_alive(jid))

        rec = self._transition(jid, check, change)
        self._settled(rec, None)
        return rec is not None

    def requeue(self, jid: str, reason: str, enqueue) -> bool:
        """A lost running job goes back to the queue (the sweeper's retry)."""
        def change(pipe, rec):
            self._move(pipe, rec, "queued")
            pipe.hset(self.k_job(jid), mapping={"state": "queued",
                                                "reason": reason, "lost": reason})
            pipe.srem(self.K_RUNNING, jid)
            pipe.delete(self.k_alive(jid))
            enqueue(pipe, jid, float(rec["time_limit"]), rec.get("queue"),
                    int(rec.get("attempts") or 0))

        return self._transition(jid, lambda r: r["state"] == "running", change) is not None

    def redispatch(self, jid: str, enqueue) -> bool:
        """Queue a still-queued job again under a fresh RQ id (its first
        queue entry was lost); no attempt is counted."""
        def change(pipe, rec):
            n = int(rec.get("redispatched") or 0) + 1
            pipe.hset(self.k_job(jid), "redispatched", str(n))
            enqueue(pipe, jid, float(rec["time_limit"]), rec.get("queue"),
                    int(rec.get("attempts") or 0), n)

        return self._transition(jid, lambda r: r["state"] == "queued", change) is not None

    def cancel(self, jid: str) -> str | None:
        """queued/running -> cancelled.  Returns the state it had, or None if it
        had already settled."""
        now = time.time()

        def change(pipe, rec):
            self._move(pipe, rec, "cancelled")
            pipe.hset(self.k_job(jid), mapping={"state": "cancelled",
                                                "reason": "cancelled by its owner",
                                                "finished": str(now)})
            pipe.srem(self.K_RUNNING, jid)
            pipe.zrem(self.K_QUEUED, jid)
            pipe.delete(self.k_alive(jid))

        rec = self._transition(jid, lambda r: r["state"] in ("queued", "running"), change)
        self._settled(rec, None)
        return rec["state"] if rec else None

    def _settled(self, rec: dict | None, verdict: str | None) -> None:
        """After a job settled (``rec``: its record before, None when the
        move was refused): a corpus run's follow-up, the contradiction mark
        on its job records (``service.corpus_marks.job_settled``).  Only for
        a corpus run's batch, by its label (``corpus_marks.LABEL_PREFIX``),
        so other jobs pay nothing.  Never raises: the job's own result is
        written already, and a mark missed here is written when the run is
        read."""
        if rec is None or not str(rec.get("label") or "").startswith(corpus_marks.LABEL_PREFIX):
            return
        try:
            corpus_marks.job_settled(self, rec, verdict)
        except Exception:
            import logging
            logging.getLogger(__name__).warning(
                "job %s: the corpus run's contradiction mark was not written",
                rec.get("id"), exc_info=True)

    def delete_batch(self, bid: str) -> int:
        """Remove a settled batch, its jobs and their results (the shared
        problem texts stay: other problems may hold them).  Returns the number
        of jobs removed; raises Conflict while a job is queued or running."""
        b = self.get_batch(bid)
        if b is None:
            return 0
        if not b["finished"]:
            raise Conflict("the batch has jobs that have not settled; cancel it first")
        ids = self.batch_job_ids(bid)
        while True:
            # WATCH the jobs: the counters lose exactly what the deleted
            # records held (a rebuild may mark one as counted meanwhile)
            with self.r.pipeline(transaction=True) as pipe:
                try:
                    if ids:
                        pipe.watch(*[self.k_job(jid) for jid in ids])
                    reads = self.r.pipeline(transaction=False)
                    for jid in ids:
                        reads.hmget(self.k_job(jid), ["reuse_key", "owner", "state",
                                                      "verdict", "seconds", "metered",
                                                      "reused_from"])
                    fields = reads.execute()
                    pipe.multi()
                    delta: dict[str, int] = {}
                    for jid, (rk, owner, st, vd, sec, m, rf) in zip(ids, fields):
                        if _s(m) == METER_GEN:
                            _add_counts(delta, job_counts(st, vd, sec, rf), -1)
                        pipe.delete(self.k_job(jid), self.k_result(jid), self.k_alive(jid))
                        pipe.zrem(self.K_QUEUED, jid)
                        pipe.srem(self.K_RUNNING, jid)
                    pipe.delete(self.k_batch(bid), self.k_batch_jobs(bid), self.k_counts(bid))
                    pipe.zrem(self.k_owner_batches(b["owner"]), bid)
                    self._stage_counts(pipe, delta)
                    pipe.execute()
                    break
                except redis.WatchError:
                    continue
        reuse = [(rk, owner) for rk, owner, *_ in fields]
        # a reuse entry pointing at a deleted job is dropped (compare, then delete)
        for jid, (rk, owner) in zip(ids, reuse):
            if rk:
                key = self.k_reuse(_s(owner), _s(rk))
                if _s(self.r.get(key)) == jid:
                    self.r.delete(key)
        return len(ids)

    # -- service-wide counters ---------------------------------------------
    def counters(self) -> dict[str, int] | None:
        """The counters (``job_counts`` fields summed over every counted
        job), or None until a rebuild has counted the records made before
        them (the ``ready`` field)."""
        h = _decode_hash(self.r.hgetall(self.K_METRICS))
        if h.pop("ready", None) is None:
            return None
        return {k: int(v) for k, v in h.items()}

    def rebuild_counters(self, scan_count: int = 1000) -> int:
        """Count every job record not counted yet (those made before the
        counters, or by an older generation) and mark it counted, then mark
        the counters ready.  Each group of records is read under WATCH and
        counted with its marks in one transaction, so a job is counted once
        even while jobs move, are deleted, or another process rebuilds too.
        Returns the number of records it counted."""
        n = 0
        cursor = 0
        while True:
            cursor, keys = self.r.scan(cursor, match=f"{P}job:*", count=scan_count)
            keys = [k for k in keys if _s(k).count(":") == 2]   # nj:job:<id> only
            if keys:
                n += self._count_records(keys)
            if int(cursor) == 0:
                break
        self.r.hset(self.K_METRICS, "ready", str(time.time()))
        return n

    def _count_records(self, keys) -> int:
        while True:
            with self.r.pipeline(transaction=True) as pipe:
                try:
                    pipe.watch(*keys)
                    reads = self.r.pipeline(transaction=False)
                    for k in keys:
                        reads.hmget(k, ["state", "verdict", "seconds", "metered",
                                        "reused_from"])
                    rows = reads.execute()
                    pipe.multi()
                    delta: dict[str, int] = {}
                    n = 0
                    for k, (st, vd, sec, m, rf) in zip(keys, rows):
                        if st is None or _s(m) == METER_GEN:
                            continue        # deleted, or counted already
                        _add_counts(delta, job_counts(st, vd, sec, rf))
                        pipe.hset(k, "metered", METER_GEN)
                        n += 1
                    self._stage_counts(pipe, delta)
                    pipe.execute()
                    return n
                except redis.WatchError:
                    continue

    def running_jobs(self) -> list[str]:
        return [_s(x) for x in self.r.smembers(self.K_RUNNING)]

    def is_alive(self, jid: str) -> bool:
        return bool(self.r.exists(self.k_alive(jid)))

    # -- tokens ------------------------------------------------------------
    @staticmethod
    def token_hash(token: str) -> str:
        return hashlib.sha256(token.encode()).hexdigest()

    def add_token(self, name: str, owner: str | None = None) -> str:
        """A new token for ``name`` (its owner, unless ``owner`` is given);
        an earlier token of that name stops working."""
        token = "nj_" + secrets.token_urlsafe(24)
        sha = self.token_hash(token)
        old = self.r.hget(self.K_TOKENS, name)
        pipe = self.r.pipeline(transaction=True)
        if old:
            pipe.delete(self.k_token(_s(old)))
        pipe.hset(self.k_token(sha), mapping={"name": name, "owner": owner or name,
                                              "created": str(time.time())})
        pipe.hset(self.K_TOKENS, name, sha)
        pipe.execute()
        return token

    def check_token(self, token: str) -> str | None:
        """The owner of a token, or None.  The stored hash is found by the
        token's own hash and compared in constant time."""
        if not token:
            return None
        sha = self.token_hash(token)
        h = self.r.hgetall(self.k_token(sha))
        if not h:
            return None
        d = _decode_hash(h)
        listed = self.r.hget(self.K_TOKENS, d["name"])
        if listed is None or not hmac.compare_digest(_s(listed), sha):
            return None
        return d["owner"]

    def list_tokens(self) -> list[dict]:
        out = []
        for name, sha in sorted(_decode_hash(self.r.hgetall(self.K_TOKENS)).items()):
            d = _decode_hash(self.r.hgetall(self.k_token(sha)))
            out.append({"name": name, "owner": d.get("owner", name),
                        "created": float(d.get("created", 0))})
        return out

    def revoke_token(self, name: str) -> bool:
        sha = self.r.hget(self.K_TOKENS, name)
        if sha is None:
            return False
        pipe = self.r.pipeline(transaction=True)
        pipe.delete(self.k_token(_s(sha)))
        pipe.hdel(self.K_TOKENS, name)
        pipe.execute()
        return True


def _decode_result(h: dict) -> dict:
    out = {"proof": None, "model": None, "figures": {}}
    for k, v in h.items():
        k = _s(k)
        if k in ("proof", "model"):
            out[k] = unpack(v)
        elif k == "figures":
            out[k] = json.loads(_s(v))
    return out

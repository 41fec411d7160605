"""What a worker does when its work horse dies under it.

RQ forks a work horse per attempt.  Inside it the address space is capped
(``NIGHTJAR_MEMORY_MB``, see :mod:`worker.jobs`); running out usually
raises ``MemoryError`` in Python and becomes a MemoryOut verdict there.  But
memory can also run out inside a C extension (the SAT solver), which then
aborts the whole process (``std::bad_alloc`` -> SIGABRT) before Python can
answer.  RQ calls :func:`horse_killed` in the worker's main process right
after such a death (``Worker(work_horse_killed_handler=...)``): when the horse
died of an abort or a memory fault near its cap, the attempt gets the
MemoryOut verdict it earned, with the peak memory in the reason.

A horse killed by SIGKILL (an operator, the kernel's out-of-memory killer, a
lost machine) is left alone: the sweeper's retry-once policy applies.
"""

from __future__ import annotations

import logging
import os
import signal
import time

log = logging.getLogger("nightjar.horse")

MEMORY_SIGNALS = (signal.SIGABRT, signal.SIGSEGV, signal.SIGBUS)
NEAR_CAP = 0.5          # peak resident memory at least this share of the cap


def memory_verdict(ret_val: int, peak_mb: float, cap_mb: int | None) -> str | None:
    """The MemoryOut reason for a horse's death, or None if it was not one."""
    if not os.WIFSIGNALED(ret_val):
        return None
    sig = os.WTERMSIG(ret_val)
    if sig not in MEMORY_SIGNALS:
        return None
    if sig != signal.SIGABRT and not (cap_mb and peak_mb >= NEAR_CAP * cap_mb):
        return None
    name = signal.Signals(sig).name
    cap = f" under the {cap_mb} MB cap" if cap_mb else ""
    return (f"memory limit reached: the work horse died ({name}) at a peak of "
            f"{peak_mb:.0f} MB resident{cap}")


def horse_killed(job, retpid, ret_val, rusage) -> None:
    """RQ's work_horse_killed_handler: settle the attempt as MemoryOut when
    its horse died of exhausted memory."""
    try:
        from service.config import Config
        from service.store import Store
        from worker import verdict as V

        cfg = Config.from_env()
        peak_mb = (rusage.ru_maxrss / 1024.0) if rusage is not None else 0.0
        reason = memory_verdict(ret_val or 0, peak_mb, cfg.memory_mb)
        if reason is None:
            return
        jid, _, attempt = job.id.rpartition("-")
        if not jid or not attempt.isdigit():
            return
        store = Store(job.connection)
        raw = store.get_job_raw(jid) or {}
        try:
            seconds = round(max(0.0, time.time() - float(raw.get("started") or 0)), 4)
        except ValueError:
            seconds = 0.0
        result = {"conjecture": raw.get("conjecture") or None, "status": V.MEMORY_OUT,
                  "seconds": seconds, "strategy": None, "reason": reason, "figures": {},
                  "axioms_used": [], "proof": None, "model": None,
                  "certificate": V.certificate("none")}
        if store.finish(jid, int(attempt), result):
            log.warning("job %s: %s", jid, reason)
    except Exception:       # never take the worker down with the horse
        log.exception("horse_killed")

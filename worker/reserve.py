"""A memory reserve for the moment memory runs out.

Inside a work horse the address space is capped (see :mod:`worker.jobs`).
When the search meets the cap, Python raises ``MemoryError`` wherever the
next allocation happens, and the handler that answers it needs memory too
(a result dict, a reason string, a call frame) while the traceback still
holds every structure of the search alive.  Near the cap such a handler can
fail again, and the interpreter has been seen to crash there (SIGSEGV)
instead of raising.  So the job adapter holds a block of address space
before it caps the horse, and the first handler of a ``MemoryError``
releases it: whatever it then builds has room.  Outside a work horse nothing
is held and :func:`release` does nothing.
"""

from __future__ import annotations

import mmap

RESERVE_MB = 16
_held: list = []


def hold(mb: int = RESERVE_MB) -> None:
    """Keep ``mb`` megabytes of address space aside: an anonymous mapping,
    never touched (so it costs no page, only address space, which is what the
    cap counts; a bytearray would zero-fill it, 3.7 ms a job)."""
    release()
    _held.append(mmap.mmap(-1, mb << 20))


def release() -> None:
    """Give the reserve back (the first thing a MemoryError handler does)."""
    while _held:
        _held.pop().close()


def held() -> bool:
    return bool(_held)

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

RESERVE_MB = 16
_held: list = []


def hold(mb: int = RESERVE_MB) -> None:
    """Keep ``mb`` megabytes of address space aside (one block: freeing it
    returns it to the system at once)."""
    _held[:] = [bytearray(mb << 20)]


def release() -> None:
    """Give the reserve back (the first thing a MemoryError handler does)."""
    _held.clear()


def held() -> bool:
    return bool(_held)

"""Verdicts, limits and settings shared by the engines, the service and the
command line.  Status names are the SZS status names (an open standard of the
trade)."""

from __future__ import annotations

from dataclasses import dataclass, field, asdict

THEOREM = "Theorem"
CONTRADICTORY_AXIOMS = "ContradictoryAxioms"
COUNTER_SATISFIABLE = "CounterSatisfiable"
UNSATISFIABLE = "Unsatisfiable"
SATISFIABLE = "Satisfiable"
TIMEOUT = "Timeout"
RESOURCE_OUT = "ResourceOut"
MEMORY_OUT = "MemoryOut"
GAVE_UP = "GaveUp"
INPUT_ERROR = "InputError"
ERROR = "Error"

STATUSES = (THEOREM, CONTRADICTORY_AXIOMS, COUNTER_SATISFIABLE, UNSATISFIABLE,
            SATISFIABLE, TIMEOUT, RESOURCE_OUT, MEMORY_OUT, GAVE_UP,
            INPUT_ERROR, ERROR)

# A definite verdict settles the obligation one way or the other.
DEFINITE = frozenset({THEOREM, CONTRADICTORY_AXIOMS, COUNTER_SATISFIABLE,
                      UNSATISFIABLE, SATISFIABLE})
PROVED = frozenset({THEOREM, CONTRADICTORY_AXIOMS, UNSATISFIABLE})
REFUTED = frozenset({COUNTER_SATISFIABLE, SATISFIABLE})


@dataclass(slots=True)
class Limits:
    """Resource limits for one proof obligation (None = no limit)."""
    time: float = 10.0              # wall-clock seconds
    cpu: float | None = None        # CPU seconds
    memory_mb: int | None = None    # resident memory the engine may grow to
    max_clauses: int | None = 2_000_000   # kept clauses (active + passive)


def check_allowance(time_limit: float) -> float:
    """Seconds past the time limit that the certification of a found proof
    may take: a fifth of the limit, at least 0.1 s and at most 60 s (so a
    1-second limit ends within 1.2 s, proof checked or not).  The
    search itself stops at the limit; a proof found just before it still gets
    checked, and a check that cannot finish in this allowance ends the
    obligation as Timeout (a verdict is never given unchecked).  The
    service's hard stop is the limit plus this allowance plus its grace."""
    return min(max(0.1, 0.2 * float(time_limit)), 60.0)


@dataclass(slots=True)
class Settings:
    limits: Limits = field(default_factory=Limits)
    strategy: str | None = None     # a named strategy, or None for the portfolio
    equality: str = "builtin"       # "builtin" | "axioms"
    model_search: bool = True       # run finite model search in the portfolio
    max_model_size: int = 8

    def to_json(self) -> dict:
        return asdict(self)

    @classmethod
    def from_json(cls, d: dict) -> "Settings":
        d = dict(d)
        lim = Limits(**d.pop("limits", {}))
        return cls(limits=lim, **d)


def certificate(kind: str, checked: int = 0, detail: str = "") -> dict:
    """kind: "proof-replayed" | "model-evaluated" | "none" | "failed"."""
    return {"kind": kind, "checked": checked, "detail": detail}

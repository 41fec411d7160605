"""What a certification check reports."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(slots=True)
class CheckReport:
    ok: bool
    checked: int = 0                 # proof steps replayed / formulas evaluated
    detail: str = ""                 # plain words: what was checked, or what failed
    failing_step: int | None = None  # proof step id (or statement index) that failed
    # model evaluation only: the first values of the outermost universally
    # quantified variables for which the failing statement (the conjecture,
    # or the statement refused) is false, as [[variable name, element], ...]
    # in the binder's order; None when that statement is no such universal
    # statement or there were too many assignments to try
    fails_for: list | None = None
    # proof replay only: the check stopped at its deadline (neither refused
    # nor certified)
    timed_out: bool = False

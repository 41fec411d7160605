"""What a certification check reports."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(slots=True)
class CheckReport:
    ok: bool
    checked: int = 0                 # proof steps replayed / formulas evaluated
    detail: str = ""                 # plain words: what was checked, or what failed
    failing_step: int | None = None  # proof step id (or statement index) that failed

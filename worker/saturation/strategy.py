"""Strategy options and the named strategies.

A :class:`Strategy` fixes the choices the calculus leaves open: how clauses
are picked from the passive set, which negative literals are selected, the
symbol precedence and weights of the ordering, set-of-support, and whether
the term indexes or a linear scan serve retrieval.
"""

from __future__ import annotations

from dataclasses import dataclass, replace


@dataclass(frozen=True)
class Strategy:
    name: str
    pick_ratio: int = 4          # weight-ordered picks per age-ordered pick
    axiom_factor: float = 1.5    # weight multiplier for clauses not derived from the conjecture
    selection: str = "heaviest"  # none | heaviest | lightest | all   (negative literals only)
    precedence: str = "arity"    # arity | frequency | order  (see kbo.make_kbo)
    unary_zero: bool = False     # weight 0 for the most frequent unary function
    sos: bool = False            # set of support: axioms never infer among themselves
    symbol_order: tuple = ()     # override: symbols from least to greatest (kbo.make_kbo)
    symbol_weights: tuple = ()   # override: (symbol, weight >= 1) pairs
    indexing: str = "fingerprint"  # fingerprint | linear

    @property
    def complete(self) -> bool:
        """Saturation under this strategy without the empty clause means the
        clauses are satisfiable: every selection function here is a valid one
        of the calculus, clause picking is fair (age picks), nothing is
        discarded except by sound and redundancy-respecting simplification;
        only set-of-support gives that up."""
        return not self.sos

    def but(self, **kw) -> "Strategy":
        return replace(self, **kw)


STRATEGIES = {s.name: s for s in (
    Strategy("steady"),
    Strategy("goal-first", sos=True, axiom_factor=2.0),
    Strategy("light-select", selection="lightest", pick_ratio=6),
    Strategy("ordered-only", selection="none", pick_ratio=3),
    Strategy("all-negative", selection="all", pick_ratio=5),
    Strategy("rewrite", selection="heaviest", unary_zero=True, pick_ratio=8,
             axiom_factor=1.2),
    Strategy("rare-first", precedence="frequency", selection="heaviest"),
    Strategy("steady-linear", indexing="linear"),
)}

# The default schedule: (strategy name, share of the time left when it
# starts).  The last entry gets all that is left.  Tuned with
# ``benchmarks/engine_bench.py --per-strategy`` (DEVELOPERS.md, "The
# saturation engine"): ``rewrite`` settles the most problems with the least
# CPU, so it goes first; ``steady`` differs in orientation; set of support
# gets a short slice (goal-directed, incomplete); ``all-negative`` takes the
# rest.
DEFAULT_SCHEDULE = (
    ("rewrite", 0.45),
    ("steady", 0.5),
    ("goal-first", 0.3),
    ("all-negative", 1.0),
)


def get(name: str) -> Strategy:
    try:
        return STRATEGIES[name]
    except KeyError:
        raise KeyError(f"unknown strategy {name!r}; known: "
                       + ", ".join(sorted(STRATEGIES))) from None

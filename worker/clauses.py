"""What the normal-form pipeline hands to the engines.

``clausify(problem, conjecture)`` (in :mod:`worker.clausify`) returns a
:class:`ClausifiedProblem`: the input clauses of one proof obligation, each
with its provenance, and the symbols the pipeline introduced.
"""

from __future__ import annotations

from dataclasses import dataclass, field

# Input clauses that no statement states but the input language implies: two
# different TPTP distinct objects are unequal, so an obligation with distinct
# objects "a" and "b" has the input clause "a" != "b".  Its ``source`` is
# DISTINCT_SOURCE and its ``role`` DISTINCT_ROLE, a role no reader gives a
# statement: the role is what tells such a clause from a statement's (a user
# may name a statement anything, so the source alone cannot).
DISTINCT_SOURCE = "distinct objects"
DISTINCT_ROLE = "distinct_objects"


@dataclass(slots=True)
class InputClause:
    lits: tuple                 # of (sign, atom); variables 0..n-1, first-occurrence order
    source: str                 # name of the statement it came from (or DISTINCT_SOURCE)
    role: str                   # that statement's role (or DISTINCT_ROLE)
    conj: bool                  # derived from the (negated) conjecture
    skolems: tuple = ()         # Skolem symbols introduced for the source formula that occur here
    definitions: tuple = ()     # definition predicates that occur here
    varnames: tuple = ()        # the user's names of variables 0..n-1 ("" where none), for printing


@dataclass(slots=True)
class SkolemSymbol:
    name: str
    arity: int
    statement: str              # formula it was introduced for
    variable: str = ""          # the user's name of the existential variable it replaces


@dataclass(slots=True)
class Definition:
    """A fresh predicate ``name(x1..xn)`` standing for a subformula.

    ``formula`` is the native-notation text of the subformula (for people) and
    ``polarity`` is +1 (name -> sub), -1 (sub -> name) or 0 (both ways)."""
    name: str
    arity: int
    statement: str
    formula: str
    polarity: int = 0


@dataclass(slots=True)
class ClausifiedProblem:
    clauses: list                       # of InputClause
    conjecture: str | None              # the obligation's conjecture, or None
    skolems: dict = field(default_factory=dict)      # name -> SkolemSymbol
    definitions: dict = field(default_factory=dict)  # name -> Definition
    signature: dict = field(default_factory=dict)    # name -> Symbol, user's and introduced
    trivial: str | None = None          # e.g. "conjecture is a tautology" when clausification already decided it
    figures: dict = field(default_factory=dict)      # counts: formulas, clauses, definitions, skolems

"""Formulas, statements and problems: what the readers produce.

Formulas are immutable dataclasses so two parses of the same text compare
equal.  Terms inside atoms use the representation of :mod:`worker.syntax.terms`;
a bound variable is an ``int`` unique within its statement, and
``Statement.varnames`` maps it back to the name the user wrote.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Union

from .errors import Span


@dataclass(frozen=True, slots=True)
class Atom:
    """``p(t...)``, a propositional atom ``p``, or an equation ``('=', l, r)``."""
    term: object


@dataclass(frozen=True, slots=True)
class Const:
    """``true`` or ``false``."""
    value: bool


@dataclass(frozen=True, slots=True)
class Not:
    arg: "Formula"


@dataclass(frozen=True, slots=True)
class And:
    args: tuple  # of Formula, two or more


@dataclass(frozen=True, slots=True)
class Or:
    args: tuple  # of Formula, two or more


@dataclass(frozen=True, slots=True)
class Implies:
    left: "Formula"
    right: "Formula"


@dataclass(frozen=True, slots=True)
class Iff:
    left: "Formula"
    right: "Formula"


@dataclass(frozen=True, slots=True)
class Quant:
    """``forall``/``exists`` over ``vars`` (a tuple of variable ints)."""
    kind: str  # "forall" | "exists"
    vars: tuple
    body: "Formula"


Formula = Union[Atom, Const, Not, And, Or, Implies, Iff, Quant]

TRUE = Const(True)
FALSE = Const(False)

# Roles.  Native files use axiom / hypothesis / conjecture; TPTP adds the rest.
AXIOM_ROLES = frozenset({"axiom", "hypothesis", "definition", "lemma",
                         "assumption", "theorem", "plain", "corollary"})
CONJECTURE = "conjecture"
NEGATED_CONJECTURE = "negated_conjecture"


@dataclass(frozen=True, slots=True)
class Symbol:
    name: str
    kind: str      # "function" | "predicate"
    arity: int


@dataclass(slots=True)
class Statement:
    name: str
    role: str                  # axiom, hypothesis, conjecture, negated_conjecture, ...
    formula: Formula
    varnames: dict = field(default_factory=dict)   # var int -> user name
    span: Span | None = None
    language: str = "native"   # "native" | "tptp"
    text: str = ""             # the statement as written in its file

    @property
    def is_conjecture(self) -> bool:
        return self.role == CONJECTURE

    @property
    def is_negated_conjecture(self) -> bool:
        return self.role == NEGATED_CONJECTURE

    def same_as(self, other: "Statement") -> bool:
        """Same name, role and formula (spans and text aside)."""
        return (self.name == other.name and self.role == other.role
                and self.formula == other.formula)


@dataclass(slots=True)
class Problem:
    """Everything read from one main file and its includes, in order."""
    statements: list
    signature: dict            # name -> Symbol
    files: list                # file names read, main file first
    main: str = ""
    language: str = "native"

    def axioms(self) -> list:
        return [s for s in self.statements
                if s.role != CONJECTURE]

    def conjectures(self) -> list:
        return [s for s in self.statements if s.role == CONJECTURE]

    def obligations(self) -> list:
        """One entry per proof obligation: the name of each conjecture, or
        ``[None]`` for a file without conjectures (a satisfiability question)."""
        names = [s.name for s in self.conjectures()]
        return names or [None]

    def statement(self, name: str) -> Statement:
        for s in self.statements:
            if s.name == name:
                return s
        raise KeyError(name)

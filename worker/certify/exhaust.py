"""Exhaustive evaluation over small domains: is there an interpretation of
the given symbols, over a domain of size 1..n, in which given formulas (as
the user wrote them) all hold?

Certify code: it shares nothing with the engine (worker/saturation,
worker/models).  Each formula is compiled once per domain size into
closures that read mutable tables, so one compilation serves every
interpretation of that size; the interpretations are then enumerated cell by
cell.  Used by the proof checker for the ``finite_domain`` step.
"""

from __future__ import annotations

from itertools import product
from math import prod

from .compiled import Compiler, close

# Quantifier steps (one value tried for one bound variable) spent in all at
# most; past that the search gives up (Unevaluable), so that a statement
# with many nested quantifiers cannot keep the checker busy for ages.
MAX_STEPS = 20_000_000


class Unevaluable(Exception):
    """A formula uses a symbol without a table, or a node the evaluator does
    not know."""


def interpretations(symbols: dict, n: int) -> int:
    """How many interpretations of ``symbols`` (name -> (kind, arity)) a
    domain of size ``n`` has."""
    return prod((2 if kind == "predicate" else n) ** (n ** arity)
                for kind, arity in symbols.values())


def count_up_to(symbols: dict, bound: int) -> int:
    """Interpretations over all domain sizes 1..bound."""
    return sum(interpretations(symbols, n) for n in range(1, bound + 1))


def _compiler(n, symbols, tables, budget):
    def lookup(name, kind, k):
        if symbols.get(name) != (kind, k):
            raise Unevaluable(f"{name}/{k} is not a {kind} of the signature")
        return tables[name]
    return Compiler(n, lookup, error=Unevaluable, budget=budget,
                    budget_note=f"the evaluation took over {MAX_STEPS:,} quantifier steps")


def find_model(formulas, symbols: dict, bound: int, max_steps: int = MAX_STEPS):
    """Search every interpretation of ``symbols`` (name -> (kind, arity);
    kind "function" or "predicate") over domains of size 1..bound for one in
    which every formula of ``formulas`` holds (free variables read
    universally).  Returns ``(size or None, interpretations evaluated)``;
    raises Unevaluable past ``max_steps`` quantifier steps."""
    closed = []
    width = 1
    for f in formulas:
        f, w = close(f)
        closed.append(f)
        width = max(width, w)
    names = sorted(symbols)
    evaluated = 0
    budget = [max_steps]
    for n in range(1, bound + 1):
        tables = {}
        cells = []                      # (table, index, range) for every cell
        for name in names:
            kind, arity = symbols[name]
            tab = tables[name] = [0] * (n ** arity)
            choices = (False, True) if kind == "predicate" else tuple(range(n))
            cells += [(tab, i, choices) for i in range(len(tab))]
        comp = _compiler(n, symbols, tables, budget)
        fns = [comp.formula(f) for f in closed]
        env = [0] * width
        for values in product(*[c for _, _, c in cells]):
            for (tab, i, _), v in zip(cells, values):
                tab[i] = v
            evaluated += 1
            if all(fn(env) for fn in fns):
                return n, evaluated
    return None, evaluated

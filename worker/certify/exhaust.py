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

from ..syntax.formulas import And, Atom, Const, Iff, Implies, Not, Or, Quant

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


def _free(f, bound=frozenset(), acc=None, top=None):
    """(free variables of ``f`` in order of appearance, largest variable)."""
    if acc is None:
        acc, top = [], [-1]

    def term(t):
        if type(t) is int:
            top[0] = max(top[0], t)
            if t not in bound and t not in acc:
                acc.append(t)
        elif type(t) is tuple:
            for a in t[1:]:
                term(a)

    if isinstance(f, Atom):
        term(f.term)
    elif isinstance(f, Not):
        _free(f.arg, bound, acc, top)
    elif isinstance(f, (And, Or)):
        for x in f.args:
            _free(x, bound, acc, top)
    elif isinstance(f, (Implies, Iff)):
        _free(f.left, bound, acc, top)
        _free(f.right, bound, acc, top)
    elif isinstance(f, Quant):
        top[0] = max([top[0], *f.vars])
        _free(f.body, bound | set(f.vars), acc, top)
    return acc, top[0]


class _Compiler:
    def __init__(self, n, symbols, tables, budget):
        self.n = n
        self.symbols = symbols
        self.tables = tables            # name -> list of cells (mutated in place)
        self.budget = budget            # [steps left], shared by all sizes

    def _table(self, name, kind, k):
        if self.symbols.get(name) != (kind, k):
            raise Unevaluable(f"{name}/{k} is not a {kind} of the signature")
        return self.tables[name]

    def term(self, t):
        if type(t) is int:
            return lambda env: env[t]
        if type(t) is str:
            cells = self._table(t, "function", 0)
            return lambda env: cells[0]
        subs = [self.term(a) for a in t[1:]]
        cells = self._table(t[0], "function", len(subs))
        n = self.n

        def apply(env):
            i = 0
            for s in subs:
                i = i * n + s(env)
            return cells[i]
        return apply

    def formula(self, f):
        if isinstance(f, Atom):
            a = f.term
            if type(a) is str:
                cells = self._table(a, "predicate", 0)
                return lambda env: cells[0]
            if a[0] == "=" and len(a) == 3:
                l, r = self.term(a[1]), self.term(a[2])
                return lambda env: l(env) == r(env)
            subs = [self.term(x) for x in a[1:]]
            cells = self._table(a[0], "predicate", len(subs))
            n = self.n

            def holds(env):
                i = 0
                for s in subs:
                    i = i * n + s(env)
                return cells[i]
            return holds
        if isinstance(f, Const):
            v = bool(f.value)
            return lambda env: v
        if isinstance(f, Not):
            a = self.formula(f.arg)
            return lambda env: not a(env)
        if isinstance(f, And):
            parts = [self.formula(x) for x in f.args]
            return lambda env: all(p(env) for p in parts)
        if isinstance(f, Or):
            parts = [self.formula(x) for x in f.args]
            return lambda env: any(p(env) for p in parts)
        if isinstance(f, Implies):
            a, b = self.formula(f.left), self.formula(f.right)
            return lambda env: (not a(env)) or b(env)
        if isinstance(f, Iff):
            a, b = self.formula(f.left), self.formula(f.right)
            return lambda env: a(env) == b(env)
        if isinstance(f, Quant):
            body = self.formula(f.body)
            # on a non-empty domain a variable not free in the body is not
            # looped over: Q x. B is B then
            used = set(_free(f.body)[0])
            for v in reversed(f.vars):
                if v in used:
                    body = self._quant(f.kind, v, body)
            return body
        raise Unevaluable(f"unknown formula node {type(f).__name__}")

    def _quant(self, kind, v, body):
        dom = range(self.n)
        left = self.budget
        n = self.n

        def spend():
            left[0] -= n
            if left[0] < 0:
                raise Unevaluable(f"the evaluation took over {MAX_STEPS:,} quantifier "
                                  f"steps")
        if kind == "forall":
            def every(env):
                spend()
                for d in dom:
                    env[v] = d
                    if not body(env):
                        return False
                return True
            return every
        if kind == "exists":
            def some(env):
                spend()
                for d in dom:
                    env[v] = d
                    if body(env):
                        return True
                return False
            return some
        raise Unevaluable(f"unknown quantifier {kind!r}")


def find_model(formulas, symbols: dict, bound: int, max_steps: int = MAX_STEPS):
    """Search every interpretation of ``symbols`` (name -> (kind, arity);
    kind "function" or "predicate") over domains of size 1..bound for one in
    which every formula of ``formulas`` holds (free variables read
    universally).  Returns ``(size or None, interpretations evaluated)``;
    raises Unevaluable past ``max_steps`` quantifier steps."""
    closed = []
    width = 1
    for f in formulas:
        free, top = _free(f)
        if free:
            f = Quant("forall", tuple(free), f)
        closed.append(f)
        width = max(width, top + 1)
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
        comp = _Compiler(n, symbols, tables, budget)
        fns = [comp.formula(f) for f in closed]
        env = [0] * width
        for values in product(*[c for _, _, c in cells]):
            for (tab, i, _), v in zip(cells, values):
                tab[i] = v
            evaluated += 1
            if all(fn(env) for fn in fns):
                return n, evaluated
    return None, evaluated

"""Formulas, as the user wrote them, compiled to closures for evaluation over
a finite domain.  Shared by the model evaluator (:mod:`.evaluate`) and the
exhaustive small-domain search of the proof checker (:mod:`.exhaust`); like
them it shares nothing with the engine or the model search.

A formula becomes a function of an environment (a list indexed by the bound
variable ints).  Symbol tables are flat lists in mixed radix ``n`` (the cell
of ``f(a, b)`` is ``a * n + b``); the closures read the cells when they run,
so the enumerating search can change a table in place and run the same
compiled formula again.
"""

from __future__ import annotations

from ..syntax.formulas import And, Atom, Const, Iff, Implies, Not, Or, Quant


def free_and_max(f, bound=frozenset(), acc=None, top=None):
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
        free_and_max(f.arg, bound, acc, top)
    elif isinstance(f, (And, Or)):
        for x in f.args:
            free_and_max(x, bound, acc, top)
    elif isinstance(f, (Implies, Iff)):
        free_and_max(f.left, bound, acc, top)
        free_and_max(f.right, bound, acc, top)
    elif isinstance(f, Quant):
        top[0] = max([top[0], *f.vars])
        free_and_max(f.body, bound | set(f.vars), acc, top)
    return acc, top[0]


def close(formula):
    """The formula closed universally over its free variables (the reading of
    a clause), and the environment size it needs."""
    free, top = free_and_max(formula)
    if free:
        formula = Quant("forall", tuple(free), formula)
    return formula, max(top + 1, 1)


class Compiler:
    """``lookup(name, kind, arity) -> cells`` finds a symbol's table (kind
    "function" or "predicate") or raises; ``error`` is the exception class for
    what the compiler itself refuses.  With ``budget`` (a one-element list of
    quantifier steps left, shared by every formula compiled with it) each
    quantifier spends its domain size per run and raises ``error`` when the
    budget is gone."""

    def __init__(self, n: int, lookup, error=ValueError, budget: list | None = None,
                 budget_note: str = ""):
        self.n = n
        self.lookup = lookup
        self.error = error
        self.budget = budget
        self.budget_note = budget_note

    # ---------------------------------------------------------- terms
    def term(self, t):
        if type(t) is int:
            i = t
            return lambda env: env[i]
        if type(t) is str:
            cells = self.lookup(t, "function", 0)
            return lambda env: cells[0]
        subs = [self.term(a) for a in t[1:]]
        cells = self.lookup(t[0], "function", len(subs))
        return self._cell(cells, subs)

    def _cell(self, cells, subs):
        n = self.n
        if len(subs) == 1:
            a, = subs
            return lambda env: cells[a(env)]
        if len(subs) == 2:
            a, b = subs
            return lambda env: cells[a(env) * n + b(env)]

        def at(env):
            i = 0
            for s in subs:
                i = i * n + s(env)
            return cells[i]
        return at

    # ---------------------------------------------------------- formulas
    def formula(self, f):
        if isinstance(f, Atom):
            a = f.term
            if type(a) is str:
                cells = self.lookup(a, "predicate", 0)
                return lambda env: cells[0]
            if a[0] == "=" and len(a) == 3:
                l, r = self.term(a[1]), self.term(a[2])
                return lambda env: l(env) == r(env)
            subs = [self.term(x) for x in a[1:]]
            cells = self.lookup(a[0], "predicate", len(subs))
            return self._cell(cells, subs)
        if isinstance(f, Const):
            v = bool(f.value)
            return lambda env: v
        if isinstance(f, Not):
            a = self.formula(f.arg)
            return lambda env: not a(env)
        if isinstance(f, And):
            parts = [self.formula(x) for x in f.args]
            if len(parts) == 2:
                a, b = parts
                return lambda env: a(env) and b(env)
            return lambda env: all(p(env) for p in parts)
        if isinstance(f, Or):
            parts = [self.formula(x) for x in f.args]
            if len(parts) == 2:
                a, b = parts
                return lambda env: a(env) or b(env)
            return lambda env: any(p(env) for p in parts)
        if isinstance(f, Implies):
            a, b = self.formula(f.left), self.formula(f.right)
            return lambda env: (not a(env)) or b(env)
        if isinstance(f, Iff):
            a, b = self.formula(f.left), self.formula(f.right)
            return lambda env: a(env) == b(env)
        if isinstance(f, Quant):
            body = self.formula(f.body)
            # A variable that does not occur in the body is not looped over:
            # on a non-empty domain ``forall x. B`` and ``exists x. B`` are B
            # when x is not free in B.  Without this ``forall x1 ... x40.
            # p(x1)`` would take 2**40 steps in a model of two elements.
            used = set(free_and_max(f.body)[0])
            for v in reversed(f.vars):
                if v in used:
                    body = self._quant(f.kind, v, body)
            return body
        raise self.error(f"unknown formula node {type(f).__name__}")

    def _quant(self, kind, v, body):
        if kind not in ("forall", "exists"):
            raise self.error(f"unknown quantifier {kind!r}")
        dom = range(self.n)
        want = kind == "exists"          # the value that ends the loop early
        left, n, error, note = self.budget, self.n, self.error, self.budget_note
        if left is None:
            def loop(env):
                for d in dom:
                    env[v] = d
                    if bool(body(env)) is want:
                        return want
                return not want
            return loop

        def counted(env):
            left[0] -= n
            if left[0] < 0:
                raise error(note or "the evaluation ran out of quantifier steps")
            for d in dom:
                env[v] = d
                if bool(body(env)) is want:
                    return want
            return not want
        return counted

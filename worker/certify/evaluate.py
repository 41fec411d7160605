"""The model evaluator: every input formula, as the user wrote it, evaluated
in a finite model.

This is the independent check of a countermodel: it reads the statements of
the :class:`~worker.syntax.formulas.Problem` (before clausification, so a bug
in Skolemization, CNF or flattening cannot hide) and the model tables, and
shares no code with the model search (``worker.models``).

A model passes when every statement other than a conjecture holds (axioms,
hypotheses, negated conjectures, ...) and the named conjecture, if any, fails.
Each formula is compiled once into nested closures over a variable
environment (a list indexed by the bound variable ints), then run.
"""

from __future__ import annotations

from itertools import product

from ..syntax.formulas import And, Atom, Const, Iff, Implies, Not, Or, Quant
from .report import CheckReport


class ModelError(Exception):
    """The model is malformed or lacks a symbol the formulas need."""


class _Tables:
    """Function and predicate tables as flat lists in mixed radix n."""

    def __init__(self, model):
        try:
            n = model["size"]
        except (TypeError, KeyError):
            raise ModelError("the model has no domain size")
        if type(n) is not int or n < 1:
            raise ModelError(f"the domain size {n!r} is not a positive whole number")
        self.n = n
        self.funs = {}
        self.preds = {}
        for name, tab in (model.get("functions") or {}).items():
            self.funs[name] = self._table(name, tab, n, is_pred=False)
        for name, tab in (model.get("predicates") or {}).items():
            self.preds[name] = self._table(name, tab, n, is_pred=True)

    @staticmethod
    def _table(name, tab, n, is_pred):
        k = tab.get("arity")
        if type(k) is not int or k < 0:
            raise ModelError(f"symbol {name} has no valid arity")
        cells = [None] * (n ** k)
        for entry in tab.get("values", ()):
            try:
                args, v = entry
            except (TypeError, ValueError):
                raise ModelError(f"a table entry of {name} is malformed: {entry!r}")
            if len(args) != k or any(type(a) is not int or not 0 <= a < n for a in args):
                raise ModelError(f"{name} has an entry with arguments {args!r} outside the domain")
            if is_pred:
                if type(v) is not bool:
                    raise ModelError(f"{name}{tuple(args)} has the value {v!r}, not true or false")
            elif type(v) is not int or not 0 <= v < n:
                raise ModelError(f"{name}{tuple(args)} has the value {v!r}, outside the domain 0..{n-1}")
            i = 0
            for a in args:
                i = i * n + a
            cells[i] = v
        if any(c is None for c in cells):
            raise ModelError(f"the table of {name} is incomplete")
        return k, cells


class _Compiler:
    def __init__(self, tables: _Tables):
        self.t = tables
        self.n = tables.n

    # ---------------------------------------------------------- terms
    def term(self, t):
        if type(t) is int:
            i = t
            return lambda env: env[i]
        if type(t) is str:
            k, cells = self._fun(t, 0)
            v = cells[0]
            return lambda env: v
        f = t[0]
        subs = [self.term(a) for a in t[1:]]
        k, cells = self._fun(f, len(subs))
        n = self.n
        if k == 1:
            a, = subs
            return lambda env: cells[a(env)]
        if k == 2:
            a, b = subs
            return lambda env: cells[a(env) * n + b(env)]

        def apply(env):
            i = 0
            for s in subs:
                i = i * n + s(env)
            return cells[i]
        return apply

    def _fun(self, name, k):
        tab = self.t.funs.get(name)
        if tab is None:
            raise ModelError(f"the model gives no table for the function {name}/{k}")
        if tab[0] != k:
            raise ModelError(f"the model's {name} has arity {tab[0]}, the formula uses {k}")
        return tab

    def _pred(self, name, k):
        tab = self.t.preds.get(name)
        if tab is None:
            raise ModelError(f"the model gives no table for the predicate {name}/{k}")
        if tab[0] != k:
            raise ModelError(f"the model's {name} has arity {tab[0]}, the formula uses {k}")
        return tab

    # ---------------------------------------------------------- formulas
    def formula(self, f):
        if isinstance(f, Atom):
            a = f.term
            if type(a) is str:
                v = self._pred(a, 0)[1][0]
                return lambda env: v
            if a[0] == "=":
                l, r = self.term(a[1]), self.term(a[2])
                return lambda env: l(env) == r(env)
            subs = [self.term(x) for x in a[1:]]
            k, cells = self._pred(a[0], len(subs))
            n = self.n
            if k == 1:
                s, = subs
                return lambda env: cells[s(env)]
            if k == 2:
                s, u = subs
                return lambda env: cells[s(env) * n + u(env)]

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
            dom = range(self.n)
            # A variable that does not occur in the body is not looped over:
            # on a non-empty domain ``forall x. B`` and ``exists x. B`` are B
            # when x is not free in B.  Without this ``forall x1 ... x40.
            # p(x1)`` would take 2**40 steps in a model of two elements.
            used = set(_free_and_max(f.body)[0])
            for v in reversed(f.vars):
                if v in used:
                    body = self._quant(f.kind, v, body, dom)
            return body
        raise ModelError(f"unknown formula node {type(f).__name__}")

    @staticmethod
    def _quant(kind, v, body, dom):
        if kind == "forall":
            def every(env):
                for d in dom:
                    env[v] = d
                    if not body(env):
                        return False
                return True
            return every
        if kind == "exists":
            def some(env):
                for d in dom:
                    env[v] = d
                    if body(env):
                        return True
                return False
            return some
        raise ModelError(f"unknown quantifier {kind!r}")


def _free_and_max(f, bound=frozenset(), acc=None, top=None):
    """(free variables in order of appearance, largest variable) of f."""
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
        if type(f.term) is tuple:
            for a in f.term[1:]:
                term(a)
    elif isinstance(f, Not):
        _free_and_max(f.arg, bound, acc, top)
    elif isinstance(f, (And, Or)):
        for x in f.args:
            _free_and_max(x, bound, acc, top)
    elif isinstance(f, (Implies, Iff)):
        _free_and_max(f.left, bound, acc, top)
        _free_and_max(f.right, bound, acc, top)
    elif isinstance(f, Quant):
        for v in f.vars:
            top[0] = max(top[0], v)
        _free_and_max(f.body, bound | set(f.vars), acc, top)
    return acc, top[0]


def _prepare(formula):
    """Close the formula universally over its free variables (the reading of
    a clause), return it with the environment size it needs."""
    free, top = _free_and_max(formula)
    if free:
        formula = Quant("forall", tuple(free), formula)
    return formula, top + 1


# Assignments tried at most when looking for the values that falsify a
# statement (only for the message; the verdict does not depend on it).
MAX_COUNTEREXAMPLE_TRIES = 100_000


def _counterexample(formula, comp, n, varnames):
    """For a failing ``forall x... body``, the first values that falsify it
    ("" when there are too many assignments to try)."""
    if not (isinstance(formula, Quant) and formula.kind == "forall"):
        return ""
    used = set(_free_and_max(formula.body)[0])
    vs = [v for v in formula.vars if v in used]
    if not vs or n ** len(vs) > MAX_COUNTEREXAMPLE_TRIES:
        return ""
    body = comp.formula(formula.body)
    _, top = _free_and_max(formula)
    env = [0] * (top + 1)
    for values in product(range(n), repeat=len(vs)):
        for v, d in zip(vs, values):
            env[v] = d
        if not body(env):
            shown = ", ".join(f"{varnames.get(v, f'X{v}')} = {d}" for v, d in zip(vs, values))
            return f" (for {shown})"
    return ""


def check_model(model, problem, conjecture) -> CheckReport:
    """Evaluate every statement of ``problem`` in ``model``: the non-conjecture
    statements must hold, the conjecture named ``conjecture`` (if any) must
    fail.  ``failing_step`` is the index in ``problem.statements``."""
    try:
        tables = _Tables(model)
    except ModelError as e:
        return CheckReport(False, 0, f"malformed model: {e}")
    comp = _Compiler(tables)
    checked = 0
    seen_conj = conjecture is None
    for index, st in enumerate(problem.statements):
        is_target = st.role == "conjecture" and st.name == conjecture
        if st.role == "conjecture" and not is_target:
            continue                 # another obligation's conjecture
        try:
            formula, width = _prepare(st.formula)
            fn = comp.formula(formula)
            value = fn([0] * max(width, 1))
        except ModelError as e:
            return CheckReport(False, checked, f"{st.name}: {e}", index)
        except RecursionError:
            return CheckReport(False, checked, f"{st.name}: the formula is nested too deeply to evaluate", index)
        checked += 1
        if is_target:
            seen_conj = True
            if value:
                return CheckReport(False, checked,
                                   f"the conjecture {st.name} holds in the model, "
                                   f"so the model is no counterexample", index)
        elif not value:
            why = _counterexample(formula, comp, tables.n, st.varnames or {})
            return CheckReport(False, checked,
                               f"{st.role} {st.name} is false in the model{why}", index)
    if not seen_conj:
        return CheckReport(False, checked, f"no conjecture named {conjecture} in the problem")
    n_ax = checked - (1 if conjecture is not None else 0)
    what = (f"{n_ax} statement(s) hold and the conjecture {conjecture} fails"
            if conjecture is not None else f"all {n_ax} statement(s) hold")
    return CheckReport(True, checked, f"{what} in a model of size {tables.n}")

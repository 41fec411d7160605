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

from ..syntax.formulas import Quant
from ..syntax.tptp import distinct_objects
from .compiled import Compiler, close, free_and_max
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

    def lookup(self, name, kind, k):
        """The cells of ``name``/``k`` (kind "function" or "predicate")."""
        tab = (self.funs if kind == "function" else self.preds).get(name)
        if tab is None:
            raise ModelError(f"the model gives no table for the {kind} {name}/{k}")
        if tab[0] != k:
            raise ModelError(f"the model's {name} has arity {tab[0]}, the formula uses {k}")
        return tab[1]

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


def _compiler(tables: _Tables) -> Compiler:
    return Compiler(tables.n, tables.lookup, error=ModelError)


# Assignments tried at most when looking for the values that falsify a
# statement (only for the message; the verdict does not depend on it).
MAX_COUNTEREXAMPLE_TRIES = 100_000


def _counterexample(formula, comp, n, varnames, el=str):
    """For a failing ``forall x... body``: the first values that falsify it,
    as ``(text, pairs)``: ``text`` the words for the report (" (for x = 1,
    y = 2)"; ``el`` writes a domain element as the model display does) and
    ``pairs`` the same values as data, ``[[variable name, element], ...]``
    in the binder's order.  ``("", None)`` when the formula is not a
    universal statement over variables that occur, or when there are too
    many assignments to try."""
    if not (isinstance(formula, Quant) and formula.kind == "forall"):
        return "", None
    used = set(free_and_max(formula.body)[0])
    vs = [v for v in formula.vars if v in used]
    if not vs or n ** len(vs) > MAX_COUNTEREXAMPLE_TRIES:
        return "", None
    body = comp.formula(formula.body)
    _, top = free_and_max(formula)
    env = [0] * (top + 1)
    for values in product(range(n), repeat=len(vs)):
        for v, d in zip(vs, values):
            env[v] = d
        if not body(env):
            pairs = [[varnames.get(v, f"X{v}"), d] for v, d in zip(vs, values)]
            shown = ", ".join(f"{name} = {el(d)}" for name, d in pairs)
            return f" (for {shown})", pairs
    return "", None


def check_model(model, problem, conjecture) -> CheckReport:
    """Evaluate every statement of ``problem`` in ``model``: the non-conjecture
    statements must hold, the conjecture named ``conjecture`` (if any) must
    fail.  ``failing_step`` is the index in ``problem.statements``."""
    try:
        tables = _Tables(model)
    except ModelError as e:
        return CheckReport(False, 0, f"malformed model: {e}")
    comp = _compiler(tables)
    # elements written as the model display writes them (#1 where the
    # problem has constants named by numerals)
    numerals = any(str(f).isdigit() for f in (model.get("functions") or {}))
    el = (lambda d: f"#{d}") if numerals else str
    # Different TPTP distinct objects are different elements (the language
    # interprets each as itself; DEVELOPERS.md, "TPTP import").
    first: dict = {}
    for name in distinct_objects(problem, conjecture):
        try:
            (value,) = tables.lookup(name, "function", 0)
        except ModelError as e:
            return CheckReport(False, 0, f"malformed model: {e}")
        if value in first:
            return CheckReport(False, 0, f"the distinct objects {first[value]} and {name} "
                                         f"are both the element {el(value)}; different "
                                         f"distinct objects must be different elements")
        first[value] = name
    checked = 0
    seen_conj = conjecture is None
    fails_at, fails_for = "", None
    for index, st in enumerate(problem.statements):
        is_target = st.role == "conjecture" and st.name == conjecture
        if st.role == "conjecture" and not is_target:
            continue                 # another obligation's conjecture
        try:
            formula, width = close(st.formula)
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
            fails_at, fails_for = _counterexample(formula, comp, tables.n,
                                                  st.varnames or {}, el)
        elif not value:
            why, pairs = _counterexample(formula, comp, tables.n, st.varnames or {}, el)
            return CheckReport(False, checked,
                               f"{st.role} {st.name} is false in the model{why}", index,
                               fails_for=pairs)
    if not seen_conj:
        return CheckReport(False, checked, f"no conjecture named {conjecture} in the problem")
    n_ax = checked - (1 if conjecture is not None else 0)
    what = (f"{n_ax} statement(s) hold and the conjecture {conjecture} fails{fails_at}"
            if conjecture is not None else f"all {n_ax} statement(s) hold")
    return CheckReport(True, checked, f"{what} in a model of size {tables.n}",
                       fails_for=fails_for)

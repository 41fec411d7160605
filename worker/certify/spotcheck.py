"""A semantic spot check of input clauses on tiny domains.

The proof checker accepts an input clause when it is one the clausification
produced for its statement (and its symbols are the statement's or fresh).
This adds a check that does not trust the clausifier at all: an input clause
``C`` of statement ``F`` (``F`` negated for the obligation's conjecture) must
hold in every model of ``F`` on a one-element domain, and, when ``C`` has no
Skolem symbol and the signature is small, in every model of ``F`` on a
two-element domain.

Why this is sound (a correct clausification always passes):

* a clause without definition symbols that clausification derives from ``F``
  is implied by ``F`` once the Skolem symbols are interpreted by witnesses;
  on a one-element domain the witness is the only element, so ``F`` implies
  ``C`` there whatever the Skolem symbols are;
* without Skolem symbols, ``F`` implies ``C`` outright, on every domain.

A clause with definition symbols is judged with the other clauses of its
statement: on one element, every model of ``F`` must extend to the
definition predicates so that the statement's whole normal form holds (true
for a correct clausification: let each definition predicate mean its
subformula). A failure gives the interpretation, so the refusal explains
itself.
"""

from __future__ import annotations

import itertools

from ..syntax.formulas import And, Atom, Const, Iff, Implies, Not, Or, Quant
from ..syntax.terms import EQ

# Interpretations enumerated per statement at most; beyond that the size is
# skipped (the check is a spot check, not a decision procedure).
MAX_INTERPRETATIONS = {1: 1024, 2: 64}

# Quantifier steps (one value tried for one bound variable) spent on one
# statement and size at most; beyond that the size is skipped too.  Without
# it a statement with many nested quantifiers (``forall x1 ... x40. p(x1)``)
# costs 2**40 steps on two elements: the check would never end.
MAX_STEPS = 200_000


class _Skip(Exception):
    pass


def _eval_term(t, interp, env):
    tt = type(t)
    if tt is int:
        return env[t]
    if tt is str:
        return interp[t][()]
    return interp[t[0]][tuple(_eval_term(a, interp, env) for a in t[1:])]


def _eval_atom(a, interp, env) -> bool:
    if type(a) is str:
        return interp[a][()]
    if a[0] == EQ and len(a) == 3:
        return _eval_term(a[1], interp, env) == _eval_term(a[2], interp, env)
    return interp[a[0]][tuple(_eval_term(x, interp, env) for x in a[1:])]


def holds(f, interp, env, size, budget=None) -> bool:
    """Truth of formula ``f`` in the interpretation (symbol -> table from
    argument tuples to a value) under the variable assignment ``env``.
    ``budget`` (a one-element list, or None for no bound) counts down the
    quantifier steps; _Skip is raised when it runs out."""
    if isinstance(f, Atom):
        return _eval_atom(f.term, interp, env)
    if isinstance(f, Not):
        return not holds(f.arg, interp, env, size, budget)
    if isinstance(f, And):
        return all(holds(x, interp, env, size, budget) for x in f.args)
    if isinstance(f, Or):
        return any(holds(x, interp, env, size, budget) for x in f.args)
    if isinstance(f, Implies):
        return ((not holds(f.left, interp, env, size, budget))
                or holds(f.right, interp, env, size, budget))
    if isinstance(f, Iff):
        return holds(f.left, interp, env, size, budget) == holds(f.right, interp, env, size, budget)
    if isinstance(f, Const):
        return f.value
    if isinstance(f, Quant):
        want = f.kind == "forall"      # forall: stop at the first False
        saved = {v: env[v] for v in f.vars if v in env}
        try:
            for values in itertools.product(range(size), repeat=len(f.vars)):
                if budget is not None:
                    budget[0] -= 1
                    if budget[0] < 0:
                        raise _Skip()
                env.update(zip(f.vars, values))
                if holds(f.body, interp, env, size, budget) != want:
                    return not want
            return want
        finally:
            for v in f.vars:
                env.pop(v, None)
            env.update(saved)
    raise TypeError(f"not a formula: {f!r}")


def _free_vars(f, bound=frozenset(), acc=None) -> set:
    if acc is None:
        acc = set()
    if isinstance(f, Atom):
        stack = [f.term]
        while stack:
            x = stack.pop()
            if type(x) is int:
                if x not in bound:
                    acc.add(x)
            elif type(x) is tuple:
                stack.extend(x[1:])
    elif isinstance(f, Not):
        _free_vars(f.arg, bound, acc)
    elif isinstance(f, (And, Or)):
        for x in f.args:
            _free_vars(x, bound, acc)
    elif isinstance(f, (Implies, Iff)):
        _free_vars(f.left, bound, acc)
        _free_vars(f.right, bound, acc)
    elif isinstance(f, Quant):
        _free_vars(f.body, bound | set(f.vars), acc)
    return acc


def _tables(arity: int, size: int, values):
    """Every table from ``size**arity`` argument tuples to ``values``."""
    keys = list(itertools.product(range(size), repeat=arity))
    for vals in itertools.product(values, repeat=len(keys)):
        yield dict(zip(keys, vals))


def models(formula, symbols: dict, size: int):
    """Every interpretation of ``symbols`` (name -> (kind, arity)) on a
    domain of ``size`` elements in which the closed ``formula`` holds; raises
    _Skip when there are more than MAX_INTERPRETATIONS[size] to try, or when
    evaluating them takes more than MAX_STEPS quantifier steps."""
    free = _free_vars(formula)
    if free:
        formula = Quant("forall", tuple(sorted(free)), formula)
    names = sorted(symbols)
    count = 1
    for n in names:
        kind, arity = symbols[n]
        nvals = 2 if kind == "predicate" else size
        count *= nvals ** (size ** arity)
        if count > MAX_INTERPRETATIONS[size]:
            raise _Skip()
    choices = []
    for n in names:
        kind, arity = symbols[n]
        values = (False, True) if kind == "predicate" else tuple(range(size))
        choices.append(list(_tables(arity, size, values)))
    out = []
    budget = [MAX_STEPS]
    for combo in itertools.product(*choices):
        interp = dict(zip(names, combo))
        if holds(formula, interp, {}, size, budget):
            out.append(interp)
    return out


def _clause_vars(lits) -> list:
    vs = set()
    for _, a in lits:
        stack = [a]
        while stack:
            x = stack.pop()
            if type(x) is int:
                vs.add(x)
            elif type(x) is tuple:
                stack.extend(x[1:])
    return sorted(vs)


def clause_holds(lits, interp, size, vs=None) -> bool:
    """The clause (variables universally quantified) is true."""
    if vs is None:
        vs = _clause_vars(lits)
    for values in itertools.product(range(size), repeat=len(vs)):
        env = dict(zip(vs, values))
        if not any(_eval_atom(a, interp, env) == sign for sign, a in lits):
            return False
    return True


def describe(interp, size) -> str:
    parts = []
    for n in sorted(interp):
        table = interp[n]
        if list(table) == [()]:
            v = table[()]
            parts.append(f"{n} = {str(v).lower() if isinstance(v, bool) else v}")
        else:
            parts.append(n + ": " + ", ".join(
                f"({', '.join(map(str, k))}) -> {str(v).lower() if isinstance(v, bool) else v}"
                for k, v in table.items()))
    return f"domain of {size}: " + ("; ".join(parts) if parts else "no symbols")


def shape(formula, symbols: dict, lits, size: int):
    """A key that is the same for two (statement, clause, symbols, size)
    cases exactly when one is the other with its symbols consistently
    renamed (same kinds and arities; ``=`` kept): the spot check's outcome
    cannot tell them apart.  None when the formula is too deep to walk."""
    names: dict = {}

    def sym(n):
        if n == EQ:
            return n
        k = names.get(n)
        if k is None:
            k = names[n] = f"#{len(names)}"
        return k

    def term(t):
        if type(t) is int:
            return t
        if type(t) is str:
            return sym(t)
        return (sym(t[0]),) + tuple(term(a) for a in t[1:])

    def walk(f):
        if isinstance(f, Atom):
            return ("A", term(f.term))
        if isinstance(f, Not):
            return ("N", walk(f.arg))
        if isinstance(f, And):
            return ("&",) + tuple(walk(x) for x in f.args)
        if isinstance(f, Or):
            return ("|",) + tuple(walk(x) for x in f.args)
        if isinstance(f, Implies):
            return ("I", walk(f.left), walk(f.right))
        if isinstance(f, Iff):
            return ("E", walk(f.left), walk(f.right))
        if isinstance(f, Quant):
            return ("Q", f.kind, f.vars, walk(f.body))
        if isinstance(f, Const):
            return ("C", f.value)
        raise TypeError(f"not a formula: {f!r}")

    try:
        fs = walk(formula)
        ls = tuple((sg, term(a)) for sg, a in lits)
    except RecursionError:
        return None
    named = tuple(sorted((names[n], kind, ar) for n, (kind, ar) in symbols.items() if n in names))
    rest = tuple(sorted((kind, ar) for n, (kind, ar) in symbols.items() if n not in names))
    return (fs, ls, named, rest, size)


class SpotChecker:
    """Caches the small models of each statement's formula, and the outcome
    of each case by its :func:`shape`: a rule base of a thousand rules of one
    form (``p_i(x) implies p_i+1(x)``) enumerates the models of that form
    once, not a thousand times."""

    def __init__(self):
        self._models: dict = {}
        self._passed: dict = {}        # shape -> whether the models were enumerated
        self._tried_by_shape: set = set()

    def counterexample(self, key, formula, symbols: dict, lits, size: int):
        """A description of a model of ``formula`` on ``size`` elements in
        which the clause is false, or None (also when the size is skipped;
        :meth:`tried` tells the two apart)."""
        ck = (key, size)
        sh = shape(formula, symbols, lits, size) if ck not in self._models else None
        if sh is not None and sh in self._passed:
            if self._passed[sh]:
                self._tried_by_shape.add(ck)
            return None                 # passed (or was skipped) in the same shape
        found = self._counterexample(ck, formula, symbols, lits, size)
        if found is None and sh is not None:
            self._passed[sh] = self._models.get(ck) is not None
        return found

    def _counterexample(self, ck, formula, symbols, lits, size):
        if ck not in self._models:
            try:
                self._models[ck] = models(formula, symbols, ck[1])
            except _Skip:
                self._models[ck] = None
        ms = self._models[ck]
        if ms is None:
            return None
        vs = _clause_vars(lits)
        if len(ms) * size ** len(vs) > MAX_STEPS:
            return None                 # too many instances to evaluate: skipped
        for interp in ms:
            if not clause_holds(lits, interp, size, vs):
                return describe(interp, size)
        return None


    def definitions_fail(self, key, formula, symbols: dict, defs: dict, clauses):
        """For clauses with definition symbols: in every model of ``formula``
        on one element, some meaning of the definition predicates ``defs``
        (name -> arity) makes all ``clauses`` (the statement's whole normal
        form) true.  Returns a description of a model where none does, or
        None (also when skipped: too many models or definitions)."""
        ck = (key, 1)
        if ck not in self._models:
            try:
                self._models[ck] = models(formula, symbols, 1)
            except _Skip:
                self._models[ck] = None
        ms = self._models[ck]
        names = sorted(defs)
        if ms is None or len(ms) * 2 ** len(names) > MAX_INTERPRETATIONS[1] * 4:
            return None
        vss = [_clause_vars(c) for c in clauses]
        try:
            for interp in ms:
                for bits in itertools.product((False, True), repeat=len(names)):
                    full = dict(interp)
                    for n, b in zip(names, bits):
                        full[n] = {(0,) * defs[n]: b}
                    if all(clause_holds(c, full, 1, vs) for c, vs in zip(clauses, vss)):
                        break
                else:
                    return describe(interp, 1)
        except KeyError:        # a symbol outside the statement: not ours to judge here
            return None
        return None

    def tried(self, key, size: int) -> bool:
        """Whether the models of ``key`` on ``size`` elements were enumerated
        (False when there were too many interpretations to try)."""
        return self._models.get((key, size)) is not None or (key, size) in self._tried_by_shape


def formula_signature(f) -> dict:
    """``name -> (kind, arity)`` for the symbols of a formula, the kind read
    off the place of use (atom head: predicate; inside a term: function)."""
    sig: dict = {}
    stack = [f]
    while stack:
        x = stack.pop()
        if isinstance(x, Atom):
            a = x.term
            if type(a) is str:
                sig[a] = ("predicate", 0)
                continue
            if a[0] != EQ:
                sig[a[0]] = ("predicate", len(a) - 1)
            terms = list(a[1:])
            while terms:
                t = terms.pop()
                if type(t) is str:
                    sig[t] = ("function", 0)
                elif type(t) is tuple:
                    sig[t[0]] = ("function", len(t) - 1)
                    terms.extend(t[1:])
        elif isinstance(x, Not):
            stack.append(x.arg)
        elif isinstance(x, (And, Or)):
            stack.extend(x.args)
        elif isinstance(x, (Implies, Iff)):
            stack.extend((x.left, x.right))
        elif isinstance(x, Quant):
            stack.append(x.body)
    return sig

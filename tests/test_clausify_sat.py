"""Clausification preserves satisfiability, checked against outside references.

Reference: sympy's ``satisfiable`` (``sympy.logic.inference.satisfiable``), a
general-purpose library no one here wrote, decides the original formula.  The
clause set is decided by python-sat (pysat), another outside library.

Propositional: random formulas with every connective (hypothesis); deep
equivalence chains make definitional CNF kick in.  First-order: random small
formulas are compared on every domain size 1..2: a formula has a model of
size n iff its clauses have one (Skolemization and naming preserve this; a fact
of common practice).  The original side grounds the quantifiers over the
domain and asks sympy; the clause side grounds the clauses and asks pysat.
"""

from __future__ import annotations

import itertools
import random

import sympy
from hypothesis import given, settings, strategies as st
from pysat.solvers import Solver
from sympy.logic.inference import satisfiable

from worker.clausify import clausify
from worker.syntax.formulas import (And, Atom, Const, Iff, Implies, Not, Or,
                                    Problem, Quant, Statement)

ATOMS = ["p", "q", "r", "s", "t"]


def problem(*statements):
    return Problem(statements=[Statement(n, r, f) for n, r, f in statements],
                   signature={}, files=[])


# ------------------------------------------------------------ propositional

def formulas(atoms=ATOMS, max_leaves=14):
    leaves = st.one_of(st.sampled_from([Atom(a) for a in atoms]),
                       st.sampled_from([Const(True), Const(False)]))

    def grow(sub):
        pairs = st.tuples(sub, sub)
        return st.one_of(
            sub.map(Not),
            st.lists(sub, min_size=2, max_size=3).map(lambda xs: And(tuple(xs))),
            st.lists(sub, min_size=2, max_size=3).map(lambda xs: Or(tuple(xs))),
            pairs.map(lambda ab: Implies(*ab)),
            pairs.map(lambda ab: Iff(*ab)),
        )

    return st.recursive(leaves, grow, max_leaves=max_leaves)


def iff_chains(atoms=ATOMS):
    """Equivalence chains of small formulas: their plain CNF grows
    exponentially with the length, so naming kicks in."""
    return st.lists(formulas(atoms, max_leaves=4), min_size=3,
                    max_size=6).map(_chain)


def _chain(xs):
    f = xs[0]
    for x in xs[1:]:
        f = Iff(x, f)
    return f


def to_sympy(f):
    if isinstance(f, Atom):
        return sympy.Symbol(f.term)
    if isinstance(f, Const):
        return sympy.true if f.value else sympy.false
    if isinstance(f, Not):
        return sympy.Not(to_sympy(f.arg))
    if isinstance(f, And):
        return sympy.And(*[to_sympy(a) for a in f.args])
    if isinstance(f, Or):
        return sympy.Or(*[to_sympy(a) for a in f.args])
    if isinstance(f, Implies):
        return sympy.Implies(to_sympy(f.left), to_sympy(f.right))
    if isinstance(f, Iff):
        return sympy.Equivalent(to_sympy(f.left), to_sympy(f.right))
    raise TypeError(f)


class ClauseSolver:
    """A ground clause set in pysat (atoms numbered as met)."""

    def __init__(self, cp):
        self.ids = {}
        self.empty = any(not c.lits for c in cp.clauses)
        self.solver = Solver(name="minisat22")
        for c in cp.clauses:
            if c.lits:
                self.solver.add_clause([self.id(atom) * (1 if sign else -1)
                                        for sign, atom in c.lits])

    def id(self, atom):
        return self.ids.setdefault(atom, len(self.ids) + 1)

    def solve(self, assignment=None):
        """Satisfiable (with the user's atoms fixed by ``assignment``)?"""
        if self.empty:
            return False
        units = [self.id(a) * (1 if v else -1)
                 for a, v in (assignment or {}).items()]
        return self.solver.solve(assumptions=units)

    def close(self):
        self.solver.delete()


def clauses_satisfiable(cp) -> bool:
    s = ClauseSolver(cp)
    try:
        return s.solve()
    finally:
        s.close()


def sympy_sat(f) -> bool:
    return satisfiable(to_sympy(f)) is not False


def sympy_value(expr, assignment) -> bool:
    value = expr.subs({sympy.Symbol(a): v for a, v in assignment.items()})
    assert value in (sympy.true, sympy.false)
    return bool(value)


def check_truth_table(f, cp, assignments):
    """For each assignment of the user's atoms: the clauses (with those atoms
    fixed) are satisfiable iff sympy evaluates ``f`` to true.  The
    definition atoms are left free, so this is exactly what naming must
    preserve."""
    expr = to_sympy(f)
    s = ClauseSolver(cp)
    try:
        for a in assignments:
            assert s.solve(a) == sympy_value(expr, a), a
    finally:
        s.close()


def all_assignments(atoms=ATOMS):
    for vals in itertools.product([False, True], repeat=len(atoms)):
        yield dict(zip(atoms, vals))


@settings(max_examples=300, deadline=None)
@given(formulas())
def test_axiom_satisfiability_matches_sympy(f):
    cp = clausify(problem(("a", "axiom", f)), None)
    assert clauses_satisfiable(cp) == sympy_sat(f)


@settings(max_examples=100, deadline=None)
@given(formulas())
def test_axiom_truth_table_matches_sympy(f):
    cp = clausify(problem(("a", "axiom", f)), None)
    check_truth_table(f, cp, all_assignments())


@settings(max_examples=100, deadline=None)
@given(iff_chains())
def test_iff_chains_truth_table_matches_sympy(f):
    cp = clausify(problem(("a", "axiom", f)), None)
    check_truth_table(f, cp, all_assignments())
    assert cp.figures["clauses"] < 500


@settings(max_examples=200, deadline=None)
@given(formulas(), formulas())
def test_conjecture_unsat_iff_valid_per_sympy(axiom, goal):
    """``axiom`` plus the negated ``goal`` is unsatisfiable iff ``axiom ->
    goal`` is valid, i.e. iff sympy finds ``axiom and not goal``
    unsatisfiable."""
    cp = clausify(problem(("a", "axiom", axiom), ("g", "conjecture", goal),
                          ("other", "conjecture", Const(False))), "g")
    valid = satisfiable(sympy.And(to_sympy(axiom),
                                  sympy.Not(to_sympy(goal)))) is False
    assert clauses_satisfiable(cp) == (not valid)
    assert all(c.conj == (c.source == "g") for c in cp.clauses)
    assert all(c.source != "other" for c in cp.clauses)


@settings(max_examples=60, deadline=None)
@given(iff_chains())
def test_chain_conjecture_unsat_iff_valid(goal):
    cp = clausify(problem(("g", "conjecture", goal)), "g")
    valid = all(sympy_value(to_sympy(goal), a) for a in all_assignments())
    assert clauses_satisfiable(cp) == (not valid)


def test_deep_iff_chain_is_named_and_keeps_its_models():
    """p1 <-> (p2 <-> (... <-> p16)): plain CNF has 2^15 clauses.  The chain
    is true iff an even number of the p_i are false (parity of an
    equivalence chain, a fact of common practice), so it is satisfiable but
    not valid; sympy evaluates it on sampled assignments (sympy's
    ``satisfiable`` itself is too slow on such chains)."""
    atoms = [f"p{i}" for i in range(1, 17)]
    f = _chain([Atom(n) for n in atoms])
    cp = clausify(problem(("a", "axiom", f)), None)
    assert cp.figures["definitions"] > 0
    assert cp.figures["clauses"] < 200
    rng = random.Random(34)
    sample = [{a: rng.random() < 0.5 for a in atoms} for _ in range(300)]
    check_truth_table(f, cp, sample)
    for a in sample[:50]:
        parity = sum(not v for v in a.values()) % 2 == 0
        assert sympy_value(to_sympy(f), a) == parity
    assert clauses_satisfiable(cp)
    # the chain and its negation together are contradictory
    cp2 = clausify(problem(("a", "axiom", f), ("b", "axiom", Not(f))), None)
    assert not clauses_satisfiable(cp2)
    # as a conjecture it is not valid: its negation has models
    cp3 = clausify(problem(("g", "conjecture", f)), "g")
    assert clauses_satisfiable(cp3)


def test_without_naming_the_chain_blows_up():
    f = _chain([Atom(f"p{i}") for i in range(1, 13)])
    big = clausify(problem(("a", "axiom", f)), None, naming_limit=10**9)
    small = clausify(problem(("a", "axiom", f)), None)
    assert big.figures["definitions"] == 0
    assert big.figures["clauses"] == 2 ** 11
    assert small.figures["clauses"] < big.figures["clauses"] // 10


# ------------------------------------------------------------ first order
#
# Signature of the random formulas: predicates p/1, q/2, r/0; constant a;
# function f/1; equality.  Bound variables are ints 0.. .

DOMAIN_SIZES = (1, 2)


def fo_formulas(bound=()):
    def atoms(depth_vars):
        terms = st.one_of(st.sampled_from(depth_vars + ["a"]),
                          st.sampled_from(depth_vars + ["a"]).map(lambda t: ("f", t)))
        return st.one_of(
            terms.map(lambda t: Atom(("p", t))),
            st.tuples(terms, terms).map(lambda ab: Atom(("q", *ab))),
            st.just(Atom("r")),
            st.tuples(terms, terms).map(lambda ab: Atom(("=", *ab))),
        )

    @st.composite
    def formula(draw, bound=(), depth=0):
        choice = draw(st.integers(0, 6 if depth < 4 else 0))
        if choice == 0:
            return draw(atoms(list(bound)))
        if choice == 1:
            return Not(draw(formula(bound, depth + 1)))
        if choice in (2, 3):
            a = draw(formula(bound, depth + 1))
            b = draw(formula(bound, depth + 1))
            return [And((a, b)), Or((a, b)), Implies(a, b), Iff(a, b)][
                draw(st.integers(0, 3))]
        if choice == 4:
            a = draw(formula(bound, depth + 1))
            b = draw(formula(bound, depth + 1))
            return Iff(a, b)
        v = len(bound) and max(bound) + 1
        kind = draw(st.sampled_from(["forall", "exists"]))
        return Quant(kind, (v,), draw(formula(bound + (v,), depth + 1)))

    return formula(tuple(bound))


def _eval_term(t, env, interp):
    if type(t) is int:
        return env[t]
    if type(t) is str:
        return interp[(t,)]
    return interp[(t[0], *[_eval_term(a, env, interp) for a in t[1:]])]


def ground_sympy(f, n, interp, env=None):
    """``f`` over the domain 0..n-1 with functions given by ``interp``,
    predicates left open: a sympy formula."""
    env = env or {}
    if isinstance(f, Atom):
        t = f.term
        if type(t) is str:
            return sympy.Symbol(t)
        vals = [_eval_term(a, env, interp) for a in t[1:]]
        if t[0] == "=":
            return sympy.true if vals[0] == vals[1] else sympy.false
        return sympy.Symbol(f"{t[0]}_" + "_".join(map(str, vals)))
    if isinstance(f, Const):
        return sympy.true if f.value else sympy.false
    if isinstance(f, Not):
        return sympy.Not(ground_sympy(f.arg, n, interp, env))
    if isinstance(f, And):
        return sympy.And(*[ground_sympy(a, n, interp, env) for a in f.args])
    if isinstance(f, Or):
        return sympy.Or(*[ground_sympy(a, n, interp, env) for a in f.args])
    if isinstance(f, Implies):
        return sympy.Implies(ground_sympy(f.left, n, interp, env),
                             ground_sympy(f.right, n, interp, env))
    if isinstance(f, Iff):
        return sympy.Equivalent(ground_sympy(f.left, n, interp, env),
                                ground_sympy(f.right, n, interp, env))
    if isinstance(f, Quant):
        parts = []
        for vals in itertools.product(range(n), repeat=len(f.vars)):
            e = dict(env)
            e.update(zip(f.vars, vals))
            parts.append(ground_sympy(f.body, n, interp, e))
        return sympy.And(*parts) if f.kind == "forall" else sympy.Or(*parts)
    raise TypeError(f)


def formula_has_model(f, n) -> bool:
    """Some interpretation of a and f over 0..n-1 makes the grounded
    formula satisfiable per sympy."""
    keys = [("a",)] + [("f", d) for d in range(n)]
    for values in itertools.product(range(n), repeat=len(keys)):
        interp = dict(zip(keys, values))
        if satisfiable(ground_sympy(f, n, interp)) is not False:
            return True
    return False


def clauses_have_model(cp, n) -> bool:
    """Ground the clauses over 0..n-1 for pysat: every function entry
    f(d...) gets a one-hot value; each subterm's value is guessed and the
    guess's negation joins the clause."""
    ids = {}

    def var(key):
        return ids.setdefault(key, len(ids) + 1)

    fun_arity = {}
    out = []
    for c in cp.clauses:
        if not c.lits:
            return False
        for _, atom in c.lits:
            stack = list(atom[1:]) if type(atom) is tuple else []
            while stack:
                t = stack.pop()
                if type(t) is str:
                    fun_arity[t] = 0
                elif type(t) is tuple:
                    fun_arity[t[0]] = len(t) - 1
                    stack.extend(t[1:])
        nvars = 1 + max([v for _, atom in c.lits for v in _vars(atom)],
                        default=-1)
        for vals in itertools.product(range(n), repeat=nvars):
            _ground_clause(c.lits, dict(enumerate(vals)), n, var, out)
    for f, k in fun_arity.items():
        for args in itertools.product(range(n), repeat=k):
            vs = [var(("fun", f, args, d)) for d in range(n)]
            out.append(vs)
            out.extend([-a, -b] for a, b in itertools.combinations(vs, 2))
    with Solver(name="minisat22", bootstrap_with=out) as s:
        return s.solve()


def _vars(t):
    if type(t) is int:
        yield t
    elif type(t) is tuple:
        for a in t[1:]:
            yield from _vars(a)


def _ground_clause(lits, env, n, var, out):
    # Collect distinct compound subterms (innermost first) and try every
    # value for each.
    subterms = []

    def collect(t):
        if type(t) is tuple:
            for a in t[1:]:
                collect(a)
        if type(t) is not int and t not in subterms:
            subterms.append(t)

    for _, atom in lits:
        if type(atom) is tuple:
            for a in atom[1:]:
                collect(a)
    for guess in itertools.product(range(n), repeat=len(subterms)):
        value = dict(zip(subterms, guess))

        def ev(t):
            return env[t] if type(t) is int else value[t]

        clause = []
        for t in subterms:
            args = tuple(ev(a) for a in t[1:]) if type(t) is tuple else ()
            head = t[0] if type(t) is tuple else t
            clause.append(-var(("fun", head, args, value[t])))
        true_lit = False
        for sign, atom in lits:
            if type(atom) is str:
                clause.append(var(("pred", atom, ())) * (1 if sign else -1))
                continue
            vals = tuple(ev(a) for a in atom[1:])
            if atom[0] == "=":
                if (vals[0] == vals[1]) == sign:
                    true_lit = True
                continue
            clause.append(var(("pred", atom[0], vals)) * (1 if sign else -1))
        if not true_lit:
            out.append(clause)


@settings(max_examples=60, deadline=None)
@given(fo_formulas())
def test_first_order_models_match_by_domain_size(f):
    cp = clausify(problem(("a", "axiom", f)), None)
    for n in DOMAIN_SIZES:
        assert clauses_have_model(cp, n) == formula_has_model(f, n), n


@settings(max_examples=20, deadline=None)
@given(st.lists(fo_formulas(), min_size=3, max_size=4))
def test_first_order_iff_chains_match_by_domain_size(parts):
    f = _chain(parts)
    cp = clausify(problem(("a", "axiom", f)), None)
    for n in DOMAIN_SIZES:
        assert clauses_have_model(cp, n) == formula_has_model(f, n), n


@settings(max_examples=20, deadline=None)
@given(st.sampled_from(["forall", "exists"]),
       st.lists(fo_formulas(bound=(0,)), min_size=3, max_size=4))
def test_first_order_chains_under_a_quantifier(kind, parts):
    """Definitions then have the quantified variable as argument."""
    f = Quant(kind, (0,), _chain(parts))
    cp = clausify(problem(("a", "axiom", f)), None)
    for n in DOMAIN_SIZES:
        assert clauses_have_model(cp, n) == formula_has_model(f, n), n


def test_definition_with_arguments_keeps_models():
    """forall x. p(x) <-> (q(x, a) <-> (p(f(x)) <-> (r <-> (exists y. q(y, x))
    <-> (x = a <-> p(a))))): named parts take x as argument."""
    def p(t): return Atom(("p", t))
    chain = _chain([Iff(Atom(("=", 0, "a")), p("a")),
                    Quant("exists", (1,), Atom(("q", 1, 0))),
                    Atom("r"), p(("f", 0)), Atom(("q", 0, "a")), p(0)])
    f = Quant("forall", (0,), chain)
    cp = clausify(problem(("a", "axiom", f)), None)
    assert any(d.arity == 1 for d in cp.definitions.values())
    for n in DOMAIN_SIZES:
        assert clauses_have_model(cp, n) == formula_has_model(f, n), n
    g = Not(f)
    cq = clausify(problem(("g", "conjecture", f)), "g")
    for n in DOMAIN_SIZES:
        assert clauses_have_model(cq, n) == formula_has_model(g, n), n


def test_named_parts_under_an_equivalence_are_two_way():
    """(a1 & b1 | ... | a6 & b6) <-> r: the disjunction occurs with both
    polarities, so every part named inside it needs a two-way definition;
    the models over the user's atoms must stay those sympy finds."""
    atoms = [f"{x}{i}" for i in range(6) for x in "ab"] + ["r"]
    big = Or(tuple(And((Atom(f"a{i}"), Atom(f"b{i}"))) for i in range(6)))
    f = Iff(big, Atom("r"))
    cp = clausify(problem(("x", "axiom", f)), None)
    assert cp.figures["definitions"] > 0
    assert all(d.polarity == 0 for d in cp.definitions.values())
    rng = random.Random(6)
    sample = [{a: rng.random() < 0.6 for a in atoms} for _ in range(150)]
    check_truth_table(f, cp, sample)
    check_truth_table(Not(f), clausify(problem(("x", "axiom", Not(f))), None),
                      sample)

"""Finite model search: flattening, the search over domain sizes, deadlines,
budgets and the display.  The outside facts checked here are named beside
each test."""

import itertools
import time

import pytest

from worker.clauses import ClausifiedProblem, InputClause
from worker.syntax.formulas import Symbol
from worker.models.flatten import flatten_clause
from worker.models.search import ModelSearch, find_model, _Sat
from worker.models.display import format_model
from worker.certify.evaluate import check_model

try:  # the readers and the clausifier (other engineers' parts)
    from worker.syntax import parse_text
    from worker.clausify import clausify
except ImportError:  # pragma: no cover
    parse_text = clausify = None

needs_front = pytest.mark.skipif(parse_text is None or clausify is None,
                                 reason="readers or clausifier not available")

GROUP = """
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit:  forall x. e * x = x and x * e = x
axiom inv:   forall x. i(x) * x = e and x * i(x) = e
conjecture comm: forall x y. x * y = y * x
"""


def table(model, f):
    return {tuple(a): v for a, v in model["functions"][f]["values"]}


def is_group(model):
    n = model["size"]
    m, e, inv = table(model, "*"), table(model, "e")[()], table(model, "i")
    R = range(n)
    return (all(m[m[x, y], z] == m[x, m[y, z]] for x in R for y in R for z in R)
            and all(m[e, x] == x == m[x, e] for x in R)
            and all(m[inv[x,], x] == e == m[x, inv[x,]] for x in R))


def is_commutative(model):
    m, n = table(model, "*"), model["size"]
    return all(m[x, y] == m[y, x] for x in range(n) for y in range(n))


def group_problem():
    p = parse_text(GROUP, "group.nj")
    return p, clausify(p, "comm")


# ------------------------------------------------------------------ flattening

def test_flatten_names_nested_terms_once():
    # (x*y)*z = x*(y*z): x*y and y*z get variables of their own
    fc = flatten_clause(((True, ("=", ("*", ("*", 0, 1), 2), ("*", 0, ("*", 1, 2)))),))
    funs = [l for l in fc.lits if l[0] == "fun"]
    assert all(all(type(a) is int for a in l[3]) for l in funs)
    assert len(funs) == 4 and fc.nvars == 6
    assert sum(1 for l in funs if l[1]) == 1          # one positive, three definitions


def test_flatten_identifies_negative_variable_equations():
    # x != y or p(x, y)  is  p(x, x)
    fc = flatten_clause(((False, ("=", 0, 1)), (True, ("p", 0, 1))))
    assert fc.lits == (("pred", True, "p", (0, 0)),) and fc.nvars == 1


def test_flatten_drops_tautologies():
    assert flatten_clause(((True, ("=", 0, 0)),)) is None
    assert flatten_clause(((True, ("p", 0)), (False, ("p", 0)))) is None


def test_flatten_shares_equal_subterms():
    # p(f(x)) or q(f(x)): f(x) is named once
    fc = flatten_clause(((True, ("p", ("f", 0))), (True, ("q", ("f", 0)))))
    assert sum(1 for l in fc.lits if l[0] == "fun") == 1


# ------------------------------------------------------------------ groups

@needs_front
def test_smallest_non_abelian_group_has_order_6():
    # Standard algebra fact: the smallest non-abelian group (S3) has order 6.
    p, cp = group_problem()
    s = ModelSearch(cp, max_size=8)
    model = s.run(time.monotonic() + 60)
    assert model is not None and model["size"] == 6
    assert s.sizes_excluded == [1, 2, 3, 4, 5]
    assert is_group(model) and not is_commutative(model)
    rep = check_model(model, p, "comm")
    assert rep.ok, rep.detail
    assert rep.checked == 4


@needs_front
@pytest.mark.parametrize("n", range(1, 9))
def test_non_abelian_groups_exist_exactly_at_orders_6_and_8(n):
    # OEIS A000001 (numbers of groups of order n: 1, 1, 1, 2, 1, 2, 1, 5) and
    # standard algebra: every group of order 1-5 and 7 is abelian; at 6 (S3)
    # and 8 (D4, Q8) there are non-abelian ones.
    p, cp = group_problem()
    s = ModelSearch(cp, min_size=n, max_size=n)
    model = s.run(time.monotonic() + 60)
    if n in (6, 8):
        assert model is not None and model["size"] == n
        assert is_group(model) and not is_commutative(model)
        assert check_model(model, p, "comm").ok
    else:
        assert model is None and s.exhausted and s.sizes_excluded == [n]


@needs_front
def test_search_continues_past_a_model():
    p, cp = group_problem()
    s = ModelSearch(cp, max_size=8)
    assert s.run(time.monotonic() + 60)["size"] == 6
    m8 = s.run(time.monotonic() + 60)
    assert m8["size"] == 8 and s.sizes_excluded == [1, 2, 3, 4, 5, 7]
    assert is_group(m8) and not is_commutative(m8)
    assert s.run(time.monotonic() + 60) is None and s.done


# ------------------------------------------------------------------ logic

@needs_front
def test_forall_exists_does_not_give_exists_forall():
    # Common textbook fact of first-order logic: forall x exists y p(x,y) does
    # not entail exists y forall x p(x,y); two elements suffice to show it.
    p = parse_text("axiom a: forall x. exists y. p(x, y)\n"
                   "conjecture c: exists y. forall x. p(x, y)\n", "swap.nj")
    cp = clausify(p, "c")
    s = ModelSearch(cp, max_size=4)
    model = s.run(time.monotonic() + 30)
    assert model is not None and model["size"] == 2 and s.sizes_excluded == [1]
    assert check_model(model, p, "c").ok


@needs_front
def test_strict_order_without_greatest_element_has_no_finite_model():
    # Common mathematical fact: an irreflexive transitive relation in which
    # every element has a greater one has only infinite models.
    p = parse_text("axiom irr: forall x. not lt(x, x)\n"
                   "axiom tr: forall x y z. lt(x, y) and lt(y, z) implies lt(x, z)\n"
                   "axiom up: forall x. exists y. lt(x, y)\n", "order.nj")
    cp = clausify(p, None)
    s = ModelSearch(cp, max_size=8)
    assert s.run(time.monotonic() + 60) is None
    assert s.exhausted and s.done and s.sizes_excluded == list(range(1, 9))
    assert "no model" in s.reason


def _cp(clauses, sig):
    return ClausifiedProblem([InputClause(tuple(c), "s", "axiom", False) for c in clauses],
                             None, signature={n: Symbol(n, k, a) for n, k, a in sig})


def test_every_signature_symbol_gets_a_table():
    # p(a), with q/2 and g/1 in the signature but in no clause
    cp = _cp([[(True, ("p", "a"))]],
             [("p", "predicate", 1), ("a", "function", 0),
              ("q", "predicate", 2), ("g", "function", 1)])
    m = find_model(cp, max_size=3)
    assert m["size"] == 1
    assert set(m["functions"]) == {"a", "g"} and set(m["predicates"]) == {"p", "q"}
    assert len(m["predicates"]["q"]["values"]) == 1
    assert dict((tuple(k), v) for k, v in m["predicates"]["p"]["values"])[(0,)] is True


def test_distinct_constants_force_the_size():
    # a, b, c pairwise distinct: the smallest model has 3 elements
    names = ["a", "b", "c"]
    clauses = [[(False, ("=", x, y))] for x, y in itertools.combinations(names, 2)]
    cp = _cp(clauses, [(n, "function", 0) for n in names])
    s = ModelSearch(cp, max_size=5)
    m = s.run()
    assert m["size"] == 3 and s.sizes_excluded == [1, 2]
    vals = {table(m, n)[()] for n in names}
    assert vals == {0, 1, 2}


def test_empty_clause_means_no_model():
    cp = _cp([[]], [])
    s = ModelSearch(cp, max_size=3)
    assert s.run() is None and s.exhausted


def test_clause_budget_gives_up_cleanly():
    # a clause with 6 variables has 8^6 = 262,144 instances at size 8
    lits = [(True, ("p", 0, 1, 2)), (True, ("q", 3, 4, 5))]
    cp = _cp([lits, [(False, ("=", "a", "b"))]],
             [("p", "predicate", 3), ("q", "predicate", 3),
              ("a", "function", 0), ("b", "function", 0)])
    s = ModelSearch(cp, max_size=8, max_clauses=20_000)
    m = s.run()
    # size 1 has no model (a != b); size 2 has one
    assert m is not None and m["size"] == 2 and s.sizes_excluded == [1]
    while s.run() is not None:
        pass
    assert s.done and not s.exhausted
    assert "skipped" in s.reason and "20,000" in s.reason


def test_deadline_during_grounding_and_resume():
    # 7 variables: 8^7 = 2,097,152 instances at size 8, seconds of grounding
    lits = [(True, ("p", 0, 1, 2, 3)), (True, ("q", 4, 5, 6))]
    cp = _cp([lits, [(False, ("q", "a", "a", "a"))]],
             [("p", "predicate", 4), ("q", "predicate", 3), ("a", "function", 0)])
    s = ModelSearch(cp, min_size=8, max_size=8, max_clauses=10_000_000)
    t0 = time.monotonic()
    assert s.run(t0 + 0.2) is None
    assert time.monotonic() - t0 < 2.0           # promptly, not after the whole grounding
    assert not s.done and s.current_size <= 8
    model = None
    for _ in range(200):
        model = s.run(time.monotonic() + 0.5)
        if model is not None or s.done:
            break
    assert model is not None and model["size"] == 8


@pytest.mark.parametrize("solver", ["cadical195", "minisat22"])
def test_solver_respects_deadline(solver):
    # Pigeonhole formula with 10 holes: hard for CDCL solvers (common practice).
    from pysat.examples.genhard import PHP
    sat = _Sat(solver)
    sat.add_all(PHP(10).clauses)
    t0 = time.monotonic()
    assert sat.solve([], t0 + 0.3) is None
    assert time.monotonic() - t0 < 3.0
    sat.delete()


# ------------------------------------------------------------------ display

@needs_front
def test_display_shows_every_table():
    p, cp = group_problem()
    model = find_model(cp, max_size=6)
    text = format_model(model)
    lines = text.splitlines()
    assert lines[0] == "Domain: {0, 1, 2, 3, 4, 5} (6 elements)"
    e = table(model, "e")[()]
    assert f"e   = {e}" in lines
    header = next(l for l in lines if l.strip().startswith("* |"))
    assert header.split("|")[1].split() == [str(i) for i in range(6)]
    m = table(model, "*")
    row2 = next(l for l in lines if l.strip().startswith("2 |"))
    assert row2.split("|")[1].split() == [str(m[2, y]) for y in range(6)]
    inv = table(model, "i")
    irow = next(l for l in lines if l.strip().startswith("i(x) |"))
    assert irow.split("|")[1].split() == [str(inv[x,]) for x in range(6)]


def test_display_predicates():
    model = {"size": 2, "functions": {},
             "predicates": {"r": {"arity": 1, "values": [[[0], True], [[1], False]]},
                            "lt": {"arity": 2, "values": [[[0, 0], False], [[0, 1], True],
                                                          [[1, 0], False], [[1, 1], False]]},
                            "u": {"arity": 0, "values": [[[], True]]}}}
    text = format_model(model)
    assert "r(x) holds for x in {0}" in text
    assert "u is true" in text
    lt_rows = [l.split("|")[1].split() for l in text.splitlines()
               if "|" in l and l.split("|")[0].strip() in ("0", "1")]
    assert lt_rows == [["F", "T"], ["F", "F"]]

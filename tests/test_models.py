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

# The readers and the clausifier are imported outright: a broken import must
# fail these tests, not skip them.
from worker.syntax import parse_text
from worker.clausify import clausify

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


def test_search_continues_past_a_model():
    p, cp = group_problem()
    s = ModelSearch(cp, max_size=8)
    assert s.run(time.monotonic() + 60)["size"] == 6
    m8 = s.run(time.monotonic() + 60)
    assert m8["size"] == 8 and s.sizes_excluded == [1, 2, 3, 4, 5, 7]
    assert is_group(m8) and not is_commutative(m8)
    assert s.run(time.monotonic() + 60) is None and s.done


# ------------------------------------------------------------------ logic

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
    s = ModelSearch(cp, max_size=8, max_clauses=20_000, split=False)
    m = s.run()
    # size 1 has no model (a != b); size 2 has one
    assert m is not None and m["size"] == 2 and s.sizes_excluded == [1]
    while s.run() is not None:
        pass
    assert s.done and not s.exhausted and s.current_size < 8
    assert "skipped" in s.reason and "20,000" in s.reason


def test_deadline_during_grounding_and_resume():
    # 6 variables: 8^6 = 262,144 instances at size 8, a good part of a second
    lits = [(True, ("p", 0, 1, 2, 3)), (True, ("q", 4, 5))]
    cp = _cp([lits, [(False, ("q", "a", "a"))]],
             [("p", "predicate", 4), ("q", "predicate", 2), ("a", "function", 0)])
    s = ModelSearch(cp, min_size=8, max_size=8, split=False)
    t0 = time.monotonic()
    assert s.run(t0 + 0.02) is None
    # stopped inside the grounding (not after it: no wall-clock bound is
    # asserted, the machine may be loaded)
    assert not s.done and s.current_size <= 8 and "grounding" in s.reason
    slices, model = 1, None
    while model is None and not s.done and slices < 500:
        model = s.run(time.monotonic() + 0.02)
        slices += 1
    assert slices > 2                              # it took several slices
    assert model is not None and model["size"] == 8
    # resuming lost no instance: q(a, a) is false, so p holds everywhere
    p_values = [v for _a, v in model["predicates"]["p"]["values"]]
    assert len(p_values) == 8 ** 4 and all(p_values)


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


# ------------------------------------------------------------------ against brute force

def _random_clauses(rng, funs, preds):
    def term(d):
        if d == 0 or rng.random() < 0.4:
            if rng.random() < 0.6:
                return rng.randrange(3)
            consts = [f for f, k in funs.items() if k == 0]
            return rng.choice(consts) if consts else rng.randrange(3)
        f = rng.choice([f for f, k in funs.items() if k > 0])
        return (f, *[term(d - 1) for _ in range(funs[f])])

    def atom():
        if rng.random() < 0.4:
            return ("=", term(2), term(2))
        p = rng.choice(list(preds))
        return (p, *[term(1) for _ in range(preds[p])])

    return [[(rng.random() < 0.5, atom()) for _ in range(rng.randint(1, 3))]
            for _ in range(rng.randint(1, 4))]


def _brute_force_has_model(clauses, funs, preds, n):
    """Is there an interpretation of size n satisfying the clauses? (Every
    interpretation tried: an independent reference for the SAT encoding and
    its symmetry breaking.)"""
    cells = [(f, args) for f, k in sorted(funs.items()) for args in itertools.product(range(n), repeat=k)]
    pcells = [(p, args) for p, k in sorted(preds.items()) for args in itertools.product(range(n), repeat=k)]
    nvars = [1 + max([v for lit in c for v in _vars(lit[1])], default=-1) for c in clauses]
    for fv in itertools.product(range(n), repeat=len(cells)):
        F = dict(zip(cells, fv))
        for pv in itertools.product((False, True), repeat=len(pcells)):
            P = dict(zip(pcells, pv))

            def ev(t, env):
                if type(t) is int:
                    return env[t]
                if type(t) is str:
                    return F[t, ()]
                return F[t[0], tuple(ev(a, env) for a in t[1:])]

            def lit_true(lit, env):
                sign, a = lit
                if a[0] == "=":
                    val = ev(a[1], env) == ev(a[2], env)
                else:
                    val = P[a[0], tuple(ev(x, env) for x in a[1:])]
                return val == sign

            if all(any(lit_true(l, env) for l in c)
                   for c, k in zip(clauses, nvars)
                   for env in itertools.product(range(n), repeat=k)):
                return True
    return False


def _vars(t):
    if type(t) is int:
        return [t]
    if type(t) is tuple:
        return [v for a in t[1:] for v in _vars(a)]
    return []


@pytest.mark.parametrize("seed", range(40))
def test_search_agrees_with_brute_force(seed):
    import random
    rng = random.Random(seed)
    if seed % 2:
        funs, preds, n = {"a": 0, "b": 0, "f": 1, "g": 2}, {"p": 1}, 2
    elif seed % 4:
        funs, preds, n = {"a": 0, "f": 1}, {"p": 1, "q": 2}, 2
    else:
        funs, preds, n = {"a": 0, "b": 0, "f": 1}, {"p": 1}, 3
    clauses = _random_clauses(rng, funs, preds)
    sig = [(f, "function", k) for f, k in funs.items()] + [(p, "predicate", k) for p, k in preds.items()]
    cp = _cp(clauses, sig)
    expected = _brute_force_has_model(clauses, funs, preds, n)
    unsplit = ModelSearch(cp, min_size=n, max_size=n, split=False).run()
    assert (unsplit is not None) == expected, clauses
    s = ModelSearch(cp, min_size=n, max_size=n)
    model = s.run()
    assert (model is not None) == expected, clauses
    if model is not None:
        # the model satisfies the clauses (checked here, not by the search)
        F = {(f, tuple(a)): v for f, t in model["functions"].items() for a, v in t["values"]}
        P = {(p, tuple(a)): v for p, t in model["predicates"].items() for a, v in t["values"]}
        assert set(model["predicates"]) == set(preds)
        assert _brute_force_single(clauses, F, P, n)
    else:
        assert s.exhausted and s.sizes_excluded == [n]


def _brute_force_single(clauses, F, P, n):
    def ev(t, env):
        if type(t) is int:
            return env[t]
        if type(t) is str:
            return F[t, ()]
        return F[t[0], tuple(ev(a, env) for a in t[1:])]

    for c in clauses:
        k = 1 + max([v for lit in c for v in _vars(lit[1])], default=-1)
        for env in itertools.product(range(n), repeat=k):
            if not any((ev(a[1], env) == ev(a[2], env) if a[0] == "=" else
                        P[a[0], tuple(ev(x, env) for x in a[1:])]) == sign for sign, a in c):
                return False
    return True


@pytest.mark.parametrize("seed", range(0, 40, 4))
def test_incremental_sizes_agree_with_brute_force(seed):
    # the same small-signature clause sets, searched through sizes 1..3 in
    # one incremental run: every size's outcome matches enumeration
    import random
    rng = random.Random(seed)
    funs, preds = {"a": 0, "b": 0, "f": 1}, {"p": 1}
    clauses = _random_clauses(rng, funs, preds)
    sig = [(f, "function", k) for f, k in funs.items()] + [("p", "predicate", 1)]
    s = ModelSearch(_cp(clauses, sig), max_size=3)
    found = []
    while not s.done:
        m = s.run()
        if m is not None:
            found.append(m["size"])
            assert _brute_force_single(
                clauses, {(f, tuple(a)): v for f, t in m["functions"].items() for a, v in t["values"]},
                {(p, tuple(a)): v for p, t in m["predicates"].items() for a, v in t["values"]},
                m["size"])
    for n in (1, 2, 3):
        has = _brute_force_has_model(clauses, funs, preds, n)
        assert (n in found) == has and (n in s.sizes_excluded) == (not has), (n, clauses)


def test_corpus_expectations_agree_with_the_search():
    # Every obligation of the shipped suites: those expected CounterSatisfiable
    # (or Satisfiable) get a model the evaluator accepts; those expected
    # Theorem (or Unsatisfiable, ContradictoryAxioms) never get one.
    import glob
    from service.corpus import load_suite, obligation_key
    import os
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    manifests = sorted(glob.glob(os.path.join(root, "corpus", "**", "suite*.toml"), recursive=True))
    assert len(manifests) >= 5, manifests      # demo (two versions) and the checks
    models = 0
    for manifest in manifests:
        suite = load_suite(manifest)
        for sp in suite.problems:
            for c in sp.obligations:
                want = suite.expectations.get(obligation_key(sp.file, c))
                refuted = want in ("CounterSatisfiable", "Satisfiable")
                s = ModelSearch(clausify(sp.problem, c), max_size=6 if refuted else 4)
                # a refuted one must get its model however loaded the machine
                # is (the search is bounded by its sizes); a theorem has none
                # to find, so it is searched for 2 s only
                m = s.run(time.monotonic() + (120.0 if refuted else 2.0))
                if want in ("Theorem", "Unsatisfiable", "ContradictoryAxioms"):
                    assert m is None, (manifest, sp.file, c, m)
                elif want in ("CounterSatisfiable", "Satisfiable"):
                    assert m is not None, (manifest, sp.file, c, s.reason)
                    assert check_model(m, sp.problem, c).ok
                    models += 1
    assert models > 0


# ------------------------------------------------------------------ enumeration

def test_group_counts_match_oeis_a000001():
    # OEIS A000001: numbers of groups of order 1..8 up to isomorphism are
    # 1, 1, 1, 2, 1, 2, 1, 5.
    from worker.models.enumerate import enumerate_models
    p = parse_text(GROUP.replace("conjecture comm: forall x y. x * y = y * x\n", ""), "g.nj")
    cp = clausify(p, None)
    counts = []
    for n in range(1, 9):
        models = enumerate_models(cp, n, time.monotonic() + 60)
        assert all(is_group(m) and check_model(m, p, None).ok for m in models)
        counts.append(len(models))
    assert counts == [1, 1, 1, 2, 1, 2, 1, 5]


def _involutions(model):
    m, e = table(model, "*"), table(model, "e")[()]
    return sum(1 for x in range(model["size"]) if x != e and m[x, x] == e)


def test_the_five_groups_of_order_8_are_told_apart():
    # Standard algebra: Z8, Z4xZ2, Z2^3 are abelian with 1, 3, 7 elements of
    # order 2; the dihedral group D4 has 5 and the quaternion group Q8 has 1.
    from worker.models.enumerate import enumerate_models
    p = parse_text(GROUP.replace("conjecture comm: forall x y. x * y = y * x\n", ""), "g.nj")
    models = enumerate_models(clausify(p, None), 8, time.monotonic() + 60)
    kinds = sorted((is_commutative(m), _involutions(m)) for m in models)
    assert kinds == [(False, 1), (False, 5), (True, 1), (True, 3), (True, 7)]


def test_canonical_form_is_invariant_and_separating():
    import random
    from worker.models.enumerate import canonical_form

    def cyclic(n, perm):
        return {"size": n, "predicates": {}, "functions": {
            "*": {"arity": 2, "values": [[[perm[x], perm[y]], perm[(x + y) % n]]
                                         for x in range(n) for y in range(n)]},
            "e": {"arity": 0, "values": [[[], perm[0]]]}}}

    def klein(perm):
        return {"size": 4, "predicates": {}, "functions": {
            "*": {"arity": 2, "values": [[[perm[x], perm[y]], perm[x ^ y]]
                                         for x in range(4) for y in range(4)]},
            "e": {"arity": 0, "values": [[[], perm[0]]]}}}

    rng = random.Random(7)
    ident = list(range(4))
    for _ in range(10):
        perm = ident[:]
        rng.shuffle(perm)
        assert canonical_form(cyclic(4, perm)) == canonical_form(cyclic(4, ident))
        assert canonical_form(klein(perm)) == canonical_form(klein(ident))
    assert canonical_form(cyclic(4, ident)) != canonical_form(klein(ident))


def test_tiny_slices_reach_the_same_answer():
    # the portfolio's way: many short run() calls; grounding and solving are
    # interrupted and resumed, the outcome is the same as one long call.
    # (How many calls it takes depends on the machine's speed; only that it
    # was interrupted at least once is asserted.  Resuming inside the
    # grounding is tested exactly in test_deadline_during_grounding_and_resume.)
    p, cp = group_problem()
    s = ModelSearch(cp, max_size=8)
    calls, model = 0, None
    while model is None and not s.done and calls < 20_000:
        model = s.run(time.monotonic() + 0.001)
        calls += 1
    assert calls > 1
    assert model is not None and model["size"] == 6 and s.sizes_excluded == [1, 2, 3, 4, 5]
    assert check_model(model, p, "comm").ok


def test_high_arity_lowers_the_largest_size_and_says_so(monkeypatch):
    # with room for 700 variable numbers, f/3 (n^4 numbers) fits up to size 5
    import worker.models.search as search
    monkeypatch.setattr(search, "MAX_VARIABLES", 700)
    cp = _cp([[(True, ("p", ("f", 0, 1, 2)))], [(False, ("p", "a"))],
              [(True, ("=", 0, "a")), (True, ("=", 0, "b"))]],
             [("f", "function", 3), ("p", "predicate", 1), ("a", "function", 0),
              ("b", "function", 0)])
    s = ModelSearch(cp, max_size=8)
    assert s.max_size == 5 and s.requested_max_size == 8
    m = s.run()
    # p(f(...)) everywhere and not p(a): a differs from every value of f, so
    # 2 elements at least; every element is a or b, so 2 at most
    assert m is not None and m["size"] == 2 and s.sizes_excluded == [1]
    while not s.done:
        s.run()
    assert s.sizes_excluded == [1, 3, 4, 5]
    assert not s.exhausted and "sizes above 5 skipped" in s.reason


def test_display_marks_elements_when_constants_are_numerals():
    model = {"size": 2, "predicates": {}, "functions": {
        "0": {"arity": 0, "values": [[[], 1]]},
        "+": {"arity": 2, "values": [[[x, y], (x + y) % 2] for x in range(2) for y in range(2)]}}}
    text = format_model(model)
    lines = text.splitlines()
    assert lines[0] == "Domain: {#0, #1} (2 elements)"
    assert "0 = #1" in lines
    assert any(l.strip().startswith("+  | #0 #1") for l in lines)
    assert "x + y  (row x, column y):" in lines


def _random_text(rng):
    def term(bound, d):
        if d == 0 or rng.random() < 0.5:
            if bound and rng.random() < 0.7:
                return rng.choice(bound)
            return rng.choice(["a", "b"])
        if rng.random() < 0.5:
            return f"f({term(bound, d - 1)})"
        return f"g({term(bound, d - 1)}, {term(bound, d - 1)})"

    def form(bound, d):
        if d == 0 or rng.random() < 0.25:
            k = rng.random()
            if k < 0.3:
                return f"{term(bound, 1)} = {term(bound, 1)}"
            if k < 0.6:
                return f"p({term(bound, 1)})"
            if k < 0.9:
                return f"q({term(bound, 1)}, {term(bound, 1)})"
            return rng.choice(["r", "true", "false"])
        op = rng.choice(["and", "or", "implies", "iff", "not", "forall", "exists"])
        if op == "not":
            return f"not ({form(bound, d - 1)})"
        if op in ("forall", "exists"):
            v = rng.choice(["x", "y", "z"])
            return f"{op} {v}. ({form(bound + [v], d - 1)})"
        return f"({form(bound, d - 1)}) {op} ({form(bound, d - 1)})"

    text = "".join(f"axiom a{j}: {form([], 3)}\n" for j in range(rng.randint(1, 3)))
    conj = rng.random() < 0.5
    if conj:
        text += f"conjecture c: {form([], 3)}\n"
    return text, ("c" if conj else None)


def test_models_of_random_problems_pass_the_evaluator():
    # random formulas with every connective and nested quantifiers, read,
    # clausified (Skolem and definition symbols) and searched: every model
    # found must satisfy the formulas as written
    import random
    rng = random.Random(2024)
    found = 0
    for _ in range(80):
        text, conj = _random_text(rng)
        p = parse_text(text, "random.nj")
        cp = clausify(p, conj)
        if cp.trivial:
            continue
        m = ModelSearch(cp, max_size=3).run(time.monotonic() + 5)
        if m is not None:
            found += 1
            rep = check_model(m, p, conj)
            assert rep.ok, (text, rep.detail)
    assert found > 40


def test_clauses_of_one_shape_share_their_grounding_code():
    """Grounding code is generated per clause shape, not per clause: 300
    unit clauses p_i(a) and p_i(b) compile one function between them, and
    the model still gets every atom right (each p_i true at a and b, q false
    at a, so a != b is forced)."""
    from worker.models.encode import Encoding
    n = 300
    clauses = [[(True, (f"p{i}", c))] for i in range(n) for c in ("a", "b")]
    clauses.append([(False, ("q", "a"))])
    clauses.append([(True, ("q", "b"))])
    sig = [(f"p{i}", "predicate", 1) for i in range(n)]
    sig += [("q", "predicate", 1), ("a", "function", 0), ("b", "function", 0)]
    cp = _cp(clauses, sig)
    m = find_model(cp, max_size=3)
    assert m["size"] == 2
    a, b = table(m, "a")[()], table(m, "b")[()]
    assert a != b
    for i in range(n):
        p = dict((tuple(k), v) for k, v in m["predicates"][f"p{i}"]["values"])
        assert p[(a,)] is True and p[(b,)] is True
    flat = [flatten_clause(tuple(c)) for c in clauses]
    enc = Encoding(flat, {"a": 0, "b": 0}, {f"p{i}": 1 for i in range(n)} | {"q": 1}, 3)
    codes = {g.__code__ for g in enc.grounders()}
    assert len(enc.grounders()) == len(flat)
    assert len(codes) < 5, len(codes)      # the shapes: p(x) with x = a, ...


def test_deadline_is_kept_among_many_clauses_without_two_variables():
    """Clauses of fewer than two variables never ask the clock inside their
    grounding code; the search asks it between clauses, so a slice that has
    already ended stops early and the next call goes on from there."""
    n = 5000
    clauses = [[(True, (f"p{i}", "a"))] for i in range(n)]
    sig = [(f"p{i}", "predicate", 1) for i in range(n)] + [("a", "function", 0)]
    s = ModelSearch(_cp(clauses, sig), max_size=2)
    assert s.run(time.monotonic() - 1.0) is None          # the slice is over already
    assert "grounding" in s.reason and 0 < s._clause_at < n
    m = s.run()
    assert m is not None and m["size"] == 1
    assert all(m["predicates"][f"p{i}"]["values"] == [[[0], True]] for i in range(n))


def _pigeonhole(n):
    """n + 1 pigeons in n holes: unsatisfiable and hard for resolution-based
    SAT solvers (a fact of common practice); n = 10 keeps minisat busy for far
    longer than the deadlines below."""
    v = lambda p, h: p * n + h + 1    # noqa: E731
    cls = [[v(p, h) for h in range(n)] for p in range(n + 1)]
    for h in range(n):
        for p, q in itertools.combinations(range(n + 1), 2):
            cls.append([-v(p, h), -v(q, h)])
    return cls


class _DeafTimer:
    """A timer whose thread never fires (as when it fails near a memory cap)."""
    def __init__(self, *_a, **_k):
        self.daemon = True

    def start(self):
        pass

    def cancel(self):
        pass

    def join(self):
        pass


@pytest.mark.parametrize("deaf", [False, True])
def test_a_solve_gives_up_at_its_deadline_even_without_the_interrupt(deaf, monkeypatch):
    from worker.models import search
    if deaf:
        monkeypatch.setattr(search.threading, "Timer", _DeafTimer)
    sat = _Sat("minisat22")
    sat.add_all(_pigeonhole(10))
    try:
        assert sat.solve([], time.monotonic() + 0.3) is None     # not settled: gave up
    finally:
        sat.delete()


def test_constants_are_listed_in_natural_order():
    """b2 before b10, as a person numbers things."""
    from worker.models.display import format_model
    funs = {f"b{k}": {"arity": 0, "values": [[[], 0]]} for k in (10, 2, 1, 11)}
    text = format_model({"size": 1, "functions": funs, "predicates": {}})
    order = [ln.split("=")[0].strip() for ln in text.splitlines() if ln.strip().startswith("b")]
    assert order == ["b1", "b2", "b10", "b11"], text


def test_the_model_search_stops_short_of_a_memory_cap():
    """Under an address-space cap it cannot grow into, the model search raises
    MemoryError itself (which the portfolio answers by dropping it) instead of
    letting the C++ solver run out of memory and take the process down.  In
    a child process, so that the cap stays there."""
    import subprocess
    import sys
    code = r'''
import resource
from worker.models.search import ModelSearch, near_memory_cap
from worker.clausify import clausify
from worker.syntax import parse_text
p = parse_text("axiom a: forall x y z. (x * y) * z = x * (y * z)\n"
               "conjecture c: forall x y. x * y = y * x\n", "t.nj")
cp = clausify(p, "c")
assert not near_memory_cap()
vm = int(open("/proc/self/statm").read().split()[0]) * resource.getpagesize()
resource.setrlimit(resource.RLIMIT_AS, (vm + (40 << 20), resource.RLIM_INFINITY))
assert near_memory_cap()
try:
    ModelSearch(cp, max_size=6).run(None)
except MemoryError as e:
    print("stopped:", e)
'''
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "stopped: the model search stopped short of the memory cap"

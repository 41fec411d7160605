"""The normal-form pipeline on first-order formulas: Skolem arities,
freshness, provenance, conjecture marks, clean-up, miniscoping, naming,
limits, depth and determinism."""

from __future__ import annotations

import pytest

from worker.clausify import clausify
from worker.syntax.errors import InputError, LimitError
from worker.syntax.formulas import (And, Atom, Const, Iff, Implies, Not, Or,
                                    Problem, Quant, Statement, Symbol)
from worker.syntax.printer import format_clause
from worker.syntax.terms import symbols as term_symbols


def problem(*statements, signature=None):
    sts = []
    for s in statements:
        name, role, f = s[:3]
        names = s[3] if len(s) > 3 else {}
        sts.append(Statement(name, role, f, names))
    return Problem(statements=sts, signature=signature or {}, files=[])


def A(*t):
    return Atom(t if len(t) > 1 else t[0])


def forall(vs, body):
    return Quant("forall", tuple(vs), body)


def exists(vs, body):
    return Quant("exists", tuple(vs), body)


def texts(cp):
    return [format_clause(c.lits) for c in cp.clauses]


# ------------------------------------------------------------ Skolemization

def test_inner_skolemization_uses_only_occurring_universals():
    # forall x y. exists z. p(x, z)  ->  p(X0, sk1(X0)), not sk1(x, y)
    f = forall([0, 1], exists([2], A("p", 0, 2)))
    cp = clausify(problem(("a", "axiom", f, {0: "x", 1: "y", 2: "z"})), None)
    assert texts(cp) == ["p(X0, sk1(X0))"]
    sk = cp.skolems["sk1"]
    assert (sk.arity, sk.statement, sk.variable) == (1, "a", "z")
    assert cp.signature["sk1"] == Symbol("sk1", "function", 1)
    assert cp.clauses[0].skolems == ("sk1",)


def test_skolem_arguments_follow_scope_not_quantifier_prefix():
    # forall x. (p(x) or forall y. exists z. q(y, z)): z depends on y only
    f = forall([0], Or((A("p", 0), forall([1], exists([2], A("q", 1, 2))))))
    cp = clausify(problem(("a", "axiom", f)), None)
    assert cp.skolems["sk1"].arity == 1
    (c,) = cp.clauses
    lits = dict((atom[0], atom) for _, atom in c.lits)
    y = lits["q"][1]
    assert lits["q"] == ("q", y, ("sk1", y))
    assert lits["p"][1] != y


def test_existential_at_top_is_a_constant_and_universals_become_variables():
    # exists x. forall y. r(x, y)
    f = exists([0], forall([1], A("r", 0, 1)))
    cp = clausify(problem(("a", "axiom", f)), None)
    assert texts(cp) == ["r(sk1, X0)"]
    assert cp.skolems["sk1"].arity == 0


def test_skolem_names_are_fresh():
    # the problem already uses sk1 (a constant) and def1 (a predicate)
    f = And((exists([0], A("p", 0)), A("p", "sk1"), A("def1")))
    cp = clausify(problem(("a", "axiom", f)), None)
    (name,) = cp.skolems
    assert name not in ("sk1", "def1")
    assert name.startswith("sk")
    assert sorted(texts(cp)) == sorted([f"p({name})", "p(sk1)", "def1"])


def test_suffixes_skip_every_used_name():
    f = And((exists([0], A("p", 0)), exists([1], A("q", 1)),
             A("r", "sk1", "sk1_1", "sk2")))
    cp = clausify(problem(("a", "axiom", f)), None)
    assert list(cp.skolems) == ["sk1_2", "sk2_1"]
    assert texts(cp) == ["p(sk1_2)", "q(sk2_1)", "r(sk1, sk1_1, sk2)"]


def test_fresh_against_signature_too():
    sig = {"sk1": Symbol("sk1", "function", 2)}
    cp = clausify(problem(("a", "axiom", exists([0], A("p", 0))),
                          signature=sig), None)
    assert "sk1" not in cp.skolems
    assert cp.signature["sk1"] == Symbol("sk1", "function", 2)


def test_skolems_per_statement_and_provenance():
    f1 = exists([0], A("p", 0))
    f2 = forall([0], exists([1], A("q", 0, 1)))
    cp = clausify(problem(("one", "axiom", f1), ("two", "hypothesis", f2)),
                  None)
    assert [(c.source, c.role, c.skolems) for c in cp.clauses] == [
        ("one", "axiom", ("sk1",)), ("two", "hypothesis", ("sk2",))]
    assert cp.skolems["sk1"].statement == "one"
    assert cp.skolems["sk2"].statement == "two"


def test_universals_of_expanded_copies_are_renamed_apart():
    # (forall x. p(x)) <-> r: the copies of forall x must not share a variable
    f = Iff(forall([0], A("p", 0)), A("r"))
    cp = clausify(problem(("a", "axiom", f)), None)
    got = sorted(texts(cp))
    assert got == sorted(["not p(sk1) or r", "p(X0) or not r"])


def test_one_variable_number_bound_twice_gives_two_variables():
    # Readers number bound variables uniquely, but the pipeline must not
    # rely on it: (forall 0. p(0)) or (forall 0. q(0)) is p(X0) or q(X1).
    f = Or((forall([0], A("p", 0)), forall([0], A("q", 0))))
    cp = clausify(problem(("a", "axiom", f)), None)
    assert [c.lits for c in cp.clauses] == [((True, ("p", 0)), (True, ("q", 1)))]


def test_skolem_symbols_shared_only_for_the_same_arguments():
    # the subformula exists 1. q(1, 0) once under forall 0, once under
    # exists 0: different argument shapes need different Skolem symbols
    inner = exists([1], A("q", 1, 0))
    f = And((forall([0], inner), exists([0], inner)))
    cp = clausify(problem(("a", "axiom", f)), None)
    arities = {}
    for c in cp.clauses:
        for _, atom in c.lits:
            for name, ar in term_symbols(atom).items():
                if name in cp.skolems:
                    assert cp.skolems[name].arity == ar
                    arities[name] = ar
    assert sorted(arities.values()) == [0, 0, 1]


def test_copies_of_one_existential_share_a_skolem_symbol():
    # f = (exists x. p(x)) <-> r occurs on its own and inside s <-> f; the
    # expansions contain several positive copies of exists x. p(x), all
    # ground, so one Skolem constant serves them all.
    f = Iff(exists([0], A("p", 0)), A("r"))
    g = And((f, Iff(A("s"), f)))
    cp = clausify(problem(("a", "axiom", g)), None)
    assert len(cp.skolems) == 1


# ------------------------------------------------------------ conjectures

def test_conjecture_is_negated_and_marked():
    # axiom: forall x. p(x) -> q(x); conjecture: forall x. q(x)
    ax = forall([0], Implies(A("p", 0), A("q", 0)))
    goal = forall([0], A("q", 0))
    cp = clausify(problem(("ax", "axiom", ax), ("g", "conjecture", goal),
                          ("g2", "conjecture", A("r"))), "g")
    assert [(format_clause(c.lits), c.source, c.role, c.conj)
            for c in cp.clauses] == [
        ("not p(X0) or q(X0)", "ax", "axiom", False),
        ("not q(sk1)", "g", "conjecture", True)]
    assert cp.conjecture == "g"
    assert cp.figures == {"formulas": 2, "clauses": 2, "skolems": 1,
                          "definitions": 0, "literals": 3}


def test_no_conjecture_means_axioms_only():
    cp = clausify(problem(("ax", "axiom", A("p")), ("g", "conjecture", A("q"))),
                  None)
    assert texts(cp) == ["p"]
    assert cp.conjecture is None


def test_negated_conjecture_taken_as_is_and_marked():
    cp = clausify(problem(("nc", "negated_conjecture", Not(A("p")))), None)
    assert [(format_clause(c.lits), c.conj) for c in cp.clauses] == [("not p", True)]


def test_unknown_conjecture_is_an_input_error():
    with pytest.raises(InputError) as e:
        clausify(problem(("ax", "axiom", A("p"))), "nope")
    assert "nope" in e.value.message


def test_valid_conjecture_gives_the_empty_clause():
    goal = Or((A("p"), Not(A("p")), Const(True)))
    cp = clausify(problem(("g", "conjecture", goal)), "g")
    assert [(c.lits, c.conj) for c in cp.clauses] == [((), True)]
    assert cp.trivial and "g" in cp.trivial


def test_true_axiom_gives_no_clauses_false_axiom_the_empty_clause():
    cp = clausify(problem(("t", "axiom", Implies(A("p"), Const(True))),
                          ("f", "axiom", And((A("q"), Const(False))))), None)
    assert [(c.lits, c.source) for c in cp.clauses] == [((), "f")]


# ------------------------------------------------------------ clean-up

def test_tautologies_are_dropped():
    f = And((Or((A("p", "a"), Not(A("p", "a")))),
             forall([0], Or((A("=", 0, 0), A("q", 0)))),
             Or((A("r"), A("s")))))
    cp = clausify(problem(("a", "axiom", f)), None)
    assert texts(cp) == ["r or s"]


def test_negative_reflexive_equation_is_kept():
    cp = clausify(problem(("a", "axiom", Not(A("=", "b", "b")))), None)
    assert [c.lits for c in cp.clauses] == [((False, ("=", "b", "b")),)]


def test_duplicate_literals_merged_and_variables_numbered():
    f = forall([5, 7], Or((A("q", 7, 5), A("p", 5), A("q", 7, 5))))
    cp = clausify(problem(("a", "axiom", f)), None)
    assert [c.lits for c in cp.clauses] == [
        ((True, ("q", 0, 1)), (True, ("p", 1)))]


def test_free_variables_read_as_universal():
    # a TPTP cnf clause arrives with free variables
    f = Or((A("p", 3), Not(A("q", 3, 9))))
    cp = clausify(problem(("c", "axiom", f)), None)
    assert [c.lits for c in cp.clauses] == [
        ((True, ("p", 0)), (False, ("q", 0, 1)))]


def test_distribution_keeps_the_written_order():
    f = Or((And((A("a"), A("b"))), A("c"), And((A("d"), A("e")))))
    cp = clausify(problem(("x", "axiom", f)), None)
    assert texts(cp) == ["a or c or d", "a or c or e", "b or c or d",
                         "b or c or e"]


def test_wide_disjunction_is_one_clause():
    n = 5000
    f = forall([0], Or(tuple(A("p", 0, f"c{i}") for i in range(n))))
    cp = clausify(problem(("x", "axiom", f)), None)
    (c,) = cp.clauses
    assert c.lits == tuple((True, ("p", 0, f"c{i}")) for i in range(n))


# ------------------------------------------------------------ miniscoping

def test_miniscoping_shrinks_skolem_arity():
    # forall x. exists y. (p(x) and q(y)): miniscoping gives p(X) and q(sk)
    f = forall([0], exists([1], And((A("p", 0), A("q", 1)))))
    cp = clausify(problem(("a", "axiom", f)), None)
    assert texts(cp) == ["p(X0)", "q(sk1)"]
    assert cp.skolems["sk1"].arity == 0


def test_miniscoping_splits_universal_over_disjunction():
    # forall x y. (p(x) or q(y)) and forall z. exists w. (r(z, w) or s(w))
    f = And((forall([0, 1], Or((A("p", 0), A("q", 1)))),
             forall([2], exists([3], Or((A("r", 2, 3), A("s", 3)))))))
    cp = clausify(problem(("a", "axiom", f)), None)
    got = texts(cp)
    assert got[0] == "p(X0) or q(X1)"
    # exists w distributes over or, and the part s(w) does not mention z:
    # a Skolem function of z and a Skolem constant
    assert [s.arity for s in cp.skolems.values()] == [1, 0]
    assert got[1] == "r(X0, sk1(X0)) or s(sk2)"


def test_vacuous_quantifier_is_dropped():
    f = forall([0], exists([1], A("p", "a")))
    cp = clausify(problem(("a", "axiom", f)), None)
    assert texts(cp) == ["p(a)"]
    assert cp.skolems == {}


# ------------------------------------------------------------ naming

def andrews_challenge():
    """Pelletier (1986) problem 34, Andrews' challenge, written from memory:
    ((exists x. forall y. p(x) iff p(y)) iff ((exists x. q(x)) iff
    (forall y. q(y)))) iff ((exists x. forall y. q(x) iff q(y)) iff
    ((exists x. p(x)) iff (forall y. p(y))))."""
    def p(v): return A("p", v)
    def q(v): return A("q", v)
    left = Iff(exists([0], forall([1], Iff(p(0), p(1)))),
               Iff(exists([2], q(2)), forall([3], q(3))))
    right = Iff(exists([4], forall([5], Iff(q(4), q(5)))),
                Iff(exists([6], p(6)), forall([7], p(7))))
    names = {0: "x", 1: "y", 2: "x", 3: "y", 4: "x", 5: "y", 6: "x", 7: "y"}
    return Iff(left, right), names


def test_andrews_challenge_stays_small():
    f, names = andrews_challenge()
    cp = clausify(problem(("p34", "conjecture", f, names)), "p34")
    plain = clausify(problem(("p34", "conjecture", f, names)), "p34",
                     naming_limit=10**9)
    assert cp.figures["definitions"] >= 1
    assert plain.figures["definitions"] == 0
    assert cp.figures["clauses"] <= 64
    assert plain.figures["clauses"] > 2 * cp.figures["clauses"]
    d = cp.definitions["def1"]
    assert d.statement == "p34" and d.polarity == 0 and d.arity == 0
    assert "iff" in d.formula and "exists x." in d.formula
    assert cp.signature["def1"] == Symbol("def1", "predicate", 0)
    assert all(c.conj for c in cp.clauses)
    with_def = [c for c in cp.clauses if c.definitions == ("def1",)]
    assert with_def and all(
        any(a == "def1" for _, a in c.lits) for c in with_def)


def test_definition_over_free_variables_is_one_way():
    # forall x. (a1(x) & b1(x)) | ... | (a6(x) & b6(x)): 64 clauses plainly
    parts = [And((A(f"a{i}", 0), A(f"b{i}", 0))) for i in range(6)]
    f = forall([0], Or(tuple(parts)))
    cp = clausify(problem(("a", "axiom", f, {0: "x"})), None)
    assert cp.figures["definitions"] >= 1
    assert cp.figures["clauses"] < 64
    for d in cp.definitions.values():
        assert d.arity == 1 and d.polarity == 1
        assert "(x)" in d.formula
    # a definition's clauses: not defN(X0) or aI(X0), not defN(X0) or bI(X0)
    d1 = [format_clause(c.lits) for c in cp.clauses if "def1" in c.definitions]
    assert any(t.startswith("not def1(X0) or ") for t in d1)


def test_limit_on_clause_count():
    # 21 disjuncts of two-literal conjunctions: 2^21 clauses without naming
    parts = [And((A(f"a{i}"), A(f"b{i}"))) for i in range(21)]
    p = problem(("big", "axiom", Or(tuple(parts))))
    with pytest.raises(LimitError) as e:
        clausify(p, None, naming_limit=10**9)
    assert "big" in e.value.message and "1000000" in e.value.message
    assert clausify(p, None).figures["clauses"] < 200


# ------------------------------------------------------------ depth, order

def test_deep_nesting_is_fine():
    n = 1000
    f = A("p", "a")
    for _ in range(n):
        f = Not(f)
    g = A("q")
    for i in range(n):
        g = Implies(A(f"r{i % 7}"), g)
    t = "c"
    for _ in range(n):
        t = ("f", t)
    h = A("p", t)
    body = A("s", *range(0, 2 * n, 2))
    q = body
    for i in reversed(range(n)):
        q = Quant("forall" if i % 2 == 0 else "exists", (i,), q)
    k = A("p", "a")
    for i in range(n):
        k = Iff(A(f"r{i % 5}"), k) if i % 2 else And((k, A("q")))
    cp = clausify(problem(("f", "axiom", f), ("g", "axiom", g),
                          ("h", "axiom", h), ("q", "axiom", forall(range(n), body)),
                          ("k", "axiom", k)), None)
    assert cp.clauses[0].lits == ((True, ("p", "a")),)
    assert format_clause(cp.clauses[1].lits).count(" or ") == 7
    assert len(cp.clauses) < 10_000


def test_deterministic():
    f, names = andrews_challenge()
    ax = forall([0], exists([1], Or((A("p", 0), A("q", 1)))))
    p = problem(("ax", "axiom", ax), ("p34", "conjecture", f, names))
    a = clausify(p, "p34")
    b = clausify(p, "p34")
    assert [(c.lits, c.source, c.skolems, c.definitions) for c in a.clauses] == \
        [(c.lits, c.source, c.skolems, c.definitions) for c in b.clauses]
    assert a.skolems == b.skolems and a.definitions == b.definitions


# ------------------------------------------------------------ from text

def parse(text, name="t.nj", language=None):
    from worker.syntax import parse_text
    return parse_text(text, name, language)


def test_parsed_native_inner_skolemization():
    p = parse("axiom a: forall x y. exists z. p(x, z)\n")
    cp = clausify(p, None)
    assert texts(cp) == ["p(X0, sk1(X0))"]
    assert cp.skolems["sk1"].variable == "z"


def test_parsed_native_freshness_and_conjecture():
    p = parse("axiom a: p(sk1) and q(def1)\n"
              "axiom b: forall x. exists y. r(x, y)\n"
              "conjecture c: exists x. q(x)\n"
              "conjecture d: p(sk1)\n")
    cp = clausify(p, "c")
    assert [c.source for c in cp.clauses] == ["a", "a", "b", "c"]
    (sk,) = cp.skolems
    assert sk not in ("sk1", "def1") and cp.skolems[sk].arity == 1
    assert texts(cp)[-1] == "not q(X0)"
    assert [c.conj for c in cp.clauses] == [False, False, False, True]
    assert cp.signature["r"].kind == "predicate"


def test_parsed_tptp_roles():
    p = parse("fof(a1, axiom, ![X]: (p(X) => q(X))).\n"
              "fof(d1, definition, ![X]: (r(X) <=> p(X))).\n"
              "cnf(n1, negated_conjecture, ~q(c) | X = X).\n"
              "cnf(n2, negated_conjecture, ~q(c) | ~r(Y)).\n"
              "fof(g, conjecture, ?[X]: q(X)).\n", "t.p", "tptp")
    cp = clausify(p, None)
    # n1 is a tautology (X = X); the conjecture g is left out
    assert [(c.source, c.role, c.conj) for c in cp.clauses] == [
        ("a1", "axiom", False), ("d1", "definition", False),
        ("d1", "definition", False), ("n2", "negated_conjecture", True)]
    assert texts(cp)[-1] == "not q(c) or not r(X0)"


def test_parsed_andrews_challenge_from_text():
    """Pelletier (1986) problem 34, written from memory (see above)."""
    text = ("conjecture p34: ((exists x. forall y. p(x) iff p(y)) iff "
            "((exists x. q(x)) iff (forall y. q(y)))) iff ((exists x. forall y. "
            "q(x) iff q(y)) iff ((exists x. p(x)) iff (forall y. p(y))))\n")
    cp = clausify(parse(text), "p34")
    f, names = andrews_challenge()
    by_hand = clausify(problem(("p34", "conjecture", f, names)), "p34")
    assert cp.figures == by_hand.figures
    assert [c.lits for c in cp.clauses] == [c.lits for c in by_hand.clauses]


def _corpus_files():
    import glob
    import os
    root = os.path.join(os.path.dirname(__file__), "..", "corpus", "checks")
    return sorted(f for ext in ("p", "nj")
                  for f in glob.glob(os.path.join(root, "**", f"*.{ext}"),
                                     recursive=True)
                  if "/axioms/" not in f.replace(os.sep, "/"))


def test_corpus_problems_clausify_with_sound_bookkeeping():
    """Every problem under corpus/checks: each obligation clausifies, and the
    bookkeeping of every clause agrees with its literals."""
    from worker.syntax import load_problem
    from worker.syntax.terms import normalize_vars
    files = _corpus_files()
    assert len(files) > 150, len(files)     # the suites of corpus/checks
    for path in files:
        prob = load_problem(path)
        names = {s.name: s for s in prob.statements}
        for ob in prob.obligations():
            cp = clausify(prob, ob)
            assert cp.figures["clauses"] == len(cp.clauses) < 500, path
            for c in cp.clauses:
                st = names[c.source]
                assert st.role == c.role
                assert c.conj == (st.role in ("conjecture", "negated_conjecture"))
                assert st.role != "conjecture" or st.name == ob
                atoms = [a for _, a in c.lits]
                assert normalize_vars(atoms)[0] == atoms, path
                used = {}
                for a in atoms:
                    term_symbols_into(a, used)
                assert set(c.skolems) == {n for n in used if n in cp.skolems
                                          and cp.skolems[n].statement == c.source}
                assert set(c.definitions) == {n for n in used
                                              if n in cp.definitions}
                for n in c.skolems:
                    assert cp.signature[n].arity == cp.skolems[n].arity


def term_symbols_into(t, acc):
    from worker.syntax.terms import symbols
    symbols(t, acc)

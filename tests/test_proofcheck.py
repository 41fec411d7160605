"""The proof checker on hand-made proofs: one correct proof per rule of the
DEVELOPERS.md "Proofs" table, each accepted, and single corruptions of each,
each refused with the step named.

The problems are tiny and made up here; their clausal forms are written by
hand (no clausifier involved), so these tests exercise the checker alone.
"""

from __future__ import annotations

import copy

import pytest

from worker.certify.proofcheck import check_proof, equality_axiom_kind, is_variant
from worker.clauses import ClausifiedProblem, InputClause
from worker.syntax import terms as T
from worker.syntax.formulas import And, Atom, Not, Or, Problem, Quant, Statement, Symbol


# ------------------------------------------------------------- builders

def A(*t):
    """An atom: A('p', 0) is p(X0); A('q') the propositional atom q."""
    return Atom(t[0] if len(t) == 1 else tuple(t))


def EQ(l, r):
    return Atom(("=", l, r))


def forall(vs, body):
    return Quant("forall", tuple(vs), body)


def problem(stmts, preds=(), funcs=()):
    """stmts: (name, role, formula); preds/funcs: 'name/arity' strings."""
    sig = {}
    for kind, names in (("predicate", preds), ("function", funcs)):
        for s in names:
            n, a = s.split("/")
            sig[n] = Symbol(n, kind, int(a))
    return Problem([Statement(n, r, f) for n, r, f in stmts], sig, ["<test>"])


def cnf(conjecture, clauses, skolems=None):
    """clauses: (source, role, conj, clause-JSON)."""
    return ClausifiedProblem(
        [InputClause(T.clause_from_json(c), src, role, conj) for src, role, conj, c in clauses],
        conjecture, skolems=skolems or {})


def inp(i, name, clause, conj=False, role=None):
    return {"id": i, "rule": "input", "formula": name,
            "role": role or ("conjecture" if conj else "axiom"),
            "conj": conj, "clause": clause, "parents": []}


def step(i, rule, parents, clause, **fields):
    d = {"id": i, "rule": rule, "parents": parents, "clause": clause}
    d.update(fields)
    return d


def proof(steps, conjecture, axioms, skolems=None, definitions=None):
    return {"steps": steps, "conjecture": conjecture, "axioms_used": axioms,
            "skolems": skolems or {}, "definitions": definitions or {}}


P0, Q0 = ["p", 0], ["q", 0]


def pos(a):
    return [True, a]


def neg(a):
    return [False, a]


def eq(l, r):
    return ["=", l, r]


# ------------------------------------------------------------- the cases
# Each case: (problem, clausified problem, proof).

def case_resolution():
    """a1: forall x. p(x) or q(x); a2: not p(c); goal: q(c)."""
    pr = problem([("a1", "axiom", forall([0], Or((A("p", 0), A("q", 0))))),
                  ("a2", "axiom", Not(A("p", "c"))),
                  ("goal", "conjecture", A("q", "c"))],
                 preds=["p/1", "q/1"], funcs=["c/0"])
    cp = cnf("goal", [("a1", "axiom", False, [pos(P0), pos(Q0)]),
                      ("a2", "axiom", False, [neg(["p", "c"])]),
                      ("goal", "conjecture", True, [neg(["q", "c"])])])
    pf = proof([inp(1, "a1", [pos(P0), pos(Q0)]),
                inp(2, "a2", [neg(["p", "c"])]),
                inp(3, "goal", [neg(["q", "c"])], conj=True),
                step(4, "resolution", [1, 2], [pos(["q", "c"])],
                     lits=[0, 0], offsets=[0, 1], subst={"0": "c"}),
                step(5, "resolution", [4, 3], [], lits=[0, 0], offsets=[0, 0], subst={})],
               "goal", ["a1", "a2"])
    return pr, cp, pf


def case_factoring():
    """a1: forall x y. p(x) or p(y); a2: forall x. not p(x) (no conjecture)."""
    pr = problem([("a1", "axiom", forall([0, 1], Or((A("p", 0), A("p", 1))))),
                  ("a2", "axiom", forall([0], Not(A("p", 0))))], preds=["p/1"])
    cp = cnf(None, [("a1", "axiom", False, [pos(P0), pos(["p", 1])]),
                    ("a2", "axiom", False, [neg(P0)])])
    pf = proof([inp(1, "a1", [pos(P0), pos(["p", 1])]),
                step(2, "factoring", [1], [pos(P0)], lits=[0, 1], subst={"1": 0}),
                inp(3, "a2", [neg(P0)]),
                step(4, "resolution", [2, 3], [], lits=[0, 0], offsets=[0, 1],
                     subst={"1": 0})],
               None, ["a1", "a2"])
    return pr, cp, pf


def case_equality_resolution():
    """a1: forall x y. x != f(y) or q(x); goal: forall x. q(x), negated with
    the Skolem constant sk1."""
    pr = problem([("a1", "axiom", forall([0, 1], Or((Not(EQ(0, ("f", 1))), A("q", 0))))),
                  ("goal", "conjecture", forall([0], A("q", 0)))],
                 preds=["q/1"], funcs=["f/1"])
    cp = cnf("goal", [("a1", "axiom", False, [neg(eq(0, ["f", 1])), pos(Q0)]),
                      ("goal", "conjecture", True, [neg(["q", "sk1"])])])
    # The conjecture's clause is ground, so this proof goes a longer way round:
    # q(f(X0)) resolved against not q(sk1) needs sk1 = f(..), which does not
    # hold; instead the axiom is used with x := f(y) and a second axiom.
    pr.statements.insert(1, Statement("a2", "axiom", forall([0], Not(A("q", ("f", 0))))))
    cp.clauses.insert(1, InputClause(T.clause_from_json([neg(["q", ["f", 0]])]), "a2", "axiom", False))
    pf = proof([inp(1, "a1", [neg(eq(0, ["f", 1])), pos(Q0)]),
                step(2, "equality_resolution", [1], [pos(["q", ["f", 0]])],
                     lits=[0], subst={"0": ["f", 1]}),
                inp(3, "a2", [neg(["q", ["f", 0]])]),
                step(4, "resolution", [2, 3], [], lits=[0, 0], offsets=[0, 1],
                     subst={"1": 0})],
               "goal", ["a1", "a2"], skolems={"sk1": {"arity": 0, "statement": "goal"}})
    return pr, cp, pf


def case_equality_factoring():
    """a1: forall x y. f(x) = a or f(y) = b; a2: forall x. f(x) != b; a3: a = b."""
    pr = problem([("a1", "axiom", forall([0, 1], Or((EQ(("f", 0), "a"), EQ(("f", 1), "b"))))),
                  ("a2", "axiom", forall([0], Not(EQ(("f", 0), "b")))),
                  ("a3", "axiom", EQ("a", "b"))], funcs=["f/1", "a/0", "b/0"])
    c1 = [pos(eq(["f", 0], "a")), pos(eq(["f", 1], "b"))]
    cp = cnf(None, [("a1", "axiom", False, c1),
                    ("a2", "axiom", False, [neg(eq(["f", 0], "b"))]),
                    ("a3", "axiom", False, [pos(eq("a", "b"))])])
    pf = proof([inp(1, "a1", c1),
                # f(X0) = b or a != b  (t = a, t' = b)
                step(2, "equality_factoring", [1],
                     [pos(eq(["f", 0], "b")), neg(eq("a", "b"))],
                     lits=[0, 1], sides=[0, 0], subst={"1": 0}),
                inp(3, "a2", [neg(eq(["f", 0], "b"))]),
                step(4, "resolution", [2, 3], [neg(eq("a", "b"))],
                     lits=[0, 0], offsets=[0, 1], subst={"1": 0}),
                inp(5, "a3", [pos(eq("a", "b"))]),
                step(6, "resolution", [4, 5], [], lits=[0, 0], offsets=[0, 0], subst={})],
               None, ["a1", "a2", "a3"])
    return pr, cp, pf


def _rewrite_case(rule):
    """a1: forall x. x = f(x) (used right to left); a2: g(f(c)) = d;
    goal: g(c) = d."""
    pr = problem([("a1", "axiom", forall([0], EQ(0, ("f", 0)))),
                  ("a2", "axiom", EQ(("g", ("f", "c")), "d")),
                  ("goal", "conjecture", EQ(("g", "c"), "d"))],
                 funcs=["f/1", "g/1", "c/0", "d/0"])
    cp = cnf("goal", [("a1", "axiom", False, [pos(eq(0, ["f", 0]))]),
                      ("a2", "axiom", False, [pos(eq(["g", ["f", "c"]], "d"))]),
                      ("goal", "conjecture", True, [neg(eq(["g", "c"], "d"))])])
    pf = proof([inp(1, "a1", [pos(eq(0, ["f", 0]))]),
                inp(2, "a2", [pos(eq(["g", ["f", "c"]], "d"))]),
                step(3, rule, [1, 2], [pos(eq(["g", "c"], "d"))],
                     lits=[0, 0], side=1, position=[1, 1], offsets=[0, 1],
                     subst={"0": "c"}),
                inp(4, "goal", [neg(eq(["g", "c"], "d"))], conj=True),
                step(5, "resolution", [3, 4], [], lits=[0, 0], offsets=[0, 0], subst={})],
               "goal", ["a1", "a2"])
    return pr, cp, pf


def case_superposition():
    return _rewrite_case("superposition")


def case_demodulation():
    return _rewrite_case("demodulation")


def case_superposition_into_predicate():
    """a1: forall x y. f(x) = x or r(y); a2: forall y. p(f(y), y);
    a3: forall x. not p(x, x); a4: forall y. not r(y).  Superposition of a
    non-unit equation (both parents with variables) into a predicate atom."""
    pr = problem([("a1", "axiom", forall([0, 1], Or((EQ(("f", 0), 0), A("r", 1))))),
                  ("a2", "axiom", forall([0], A("p", ("f", 0), 0))),
                  ("a3", "axiom", forall([0], Not(A("p", 0, 0)))),
                  ("a4", "axiom", forall([0], Not(A("r", 0))))],
                 preds=["p/2", "r/1"], funcs=["f/1"])
    c1 = [pos(eq(["f", 0], 0)), pos(["r", 1])]
    cp = cnf(None, [("a1", "axiom", False, c1),
                    ("a2", "axiom", False, [pos(["p", ["f", 0], 0])]),
                    ("a3", "axiom", False, [neg(["p", 0, 0])]),
                    ("a4", "axiom", False, [neg(["r", 0])])])
    pf = proof([inp(1, "a1", c1),
                inp(2, "a2", [pos(["p", ["f", 0], 0])]),
                # b = p(f(X2), X2) at [1] holds f(X2); l = f(X0): X0 := X2
                step(3, "superposition", [1, 2], [pos(["r", 0]), pos(["p", 1, 1])],
                     lits=[0, 0], side=0, position=[1], offsets=[0, 2],
                     subst={"0": 2}),
                inp(4, "a3", [neg(["p", 0, 0])]),
                step(5, "resolution", [3, 4], [pos(["r", 0])],
                     lits=[1, 0], offsets=[0, 2], subst={"2": 1}),
                inp(6, "a4", [neg(["r", 0])]),
                step(7, "resolution", [5, 6], [], lits=[0, 0], offsets=[0, 1],
                     subst={"1": 0})],
               None, ["a1", "a2", "a3", "a4"])
    return pr, cp, pf


def case_subsumption_resolution():
    """a1: forall x. not p(x) or q(x); a2: p(c) or q(c) or r;
    a3: not q(c); a4: not r."""
    pr = problem([("a1", "axiom", forall([0], Or((Not(A("p", 0)), A("q", 0))))),
                  ("a2", "axiom", Or((A("p", "c"), A("q", "c"), A("r")))),
                  ("a3", "axiom", Not(A("q", "c"))),
                  ("a4", "axiom", Not(A("r")))],
                 preds=["p/1", "q/1", "r/0"], funcs=["c/0"])
    c2 = [pos(["p", "c"]), pos(["q", "c"]), pos("r")]
    cp = cnf(None, [("a1", "axiom", False, [neg(P0), pos(Q0)]),
                    ("a2", "axiom", False, c2),
                    ("a3", "axiom", False, [neg(["q", "c"])]),
                    ("a4", "axiom", False, [neg("r")])])
    pf = proof([inp(1, "a1", [neg(P0), pos(Q0)]),
                inp(2, "a2", c2),
                step(3, "subsumption_resolution", [1, 2], [pos(["q", "c"]), pos("r")],
                     lits=[0, 0], offsets=[0, 1], subst={"0": "c"}),
                inp(4, "a3", [neg(["q", "c"])]),
                step(5, "resolution", [3, 4], [pos("r")], lits=[0, 0],
                     offsets=[0, 0], subst={}),
                inp(6, "a4", [neg("r")]),
                step(7, "resolution", [5, 6], [], lits=[0, 0], offsets=[0, 0], subst={})],
               None, ["a1", "a2", "a3", "a4"])
    return pr, cp, pf


def case_duplicate_removal():
    """a1: p(c) or p(c) (the clause keeps both copies); goal: p(c)."""
    pr = problem([("a1", "axiom", Or((A("p", "c"), A("p", "c")))),
                  ("goal", "conjecture", A("p", "c"))], preds=["p/1"], funcs=["c/0"])
    c1 = [pos(["p", "c"]), pos(["p", "c"])]
    cp = cnf("goal", [("a1", "axiom", False, c1),
                      ("goal", "conjecture", True, [neg(["p", "c"])])])
    pf = proof([inp(1, "a1", c1),
                step(2, "duplicate_removal", [1], [pos(["p", "c"])]),
                inp(3, "goal", [neg(["p", "c"])], conj=True),
                step(4, "resolution", [2, 3], [], lits=[0, 0], offsets=[0, 0], subst={})],
               "goal", ["a1"])
    return pr, cp, pf


def case_equality_axioms():
    """Equality as axioms: a1: a = b; a2: b = c; a3: p(f(a));
    goal: p(f(c)).  Uses transitivity, function and predicate congruence."""
    pr = problem([("a1", "axiom", EQ("a", "b")),
                  ("a2", "axiom", EQ("b", "c")),
                  ("a3", "axiom", A("p", ("f", "a"))),
                  ("goal", "conjecture", A("p", ("f", "c")))],
                 preds=["p/1"], funcs=["f/1", "a/0", "b/0", "c/0"])
    cp = cnf("goal", [("a1", "axiom", False, [pos(eq("a", "b"))]),
                      ("a2", "axiom", False, [pos(eq("b", "c"))]),
                      ("a3", "axiom", False, [pos(["p", ["f", "a"]])]),
                      ("goal", "conjecture", True, [neg(["p", ["f", "c"]])])])
    trans = [neg(eq(0, 1)), neg(eq(1, 2)), pos(eq(0, 2))]
    fcong = [neg(eq(0, 1)), pos(eq(["f", 0], ["f", 1]))]
    pcong = [neg(eq(0, 1)), neg(["p", 0]), pos(["p", 1])]
    pf = proof([inp(1, "a1", [pos(eq("a", "b"))]),
                inp(2, "a2", [pos(eq("b", "c"))]),
                step(3, "equality_axiom", [], trans),
                step(4, "resolution", [3, 1], [neg(eq("b", 0)), pos(eq("a", 0))],
                     lits=[0, 0], offsets=[0, 3], subst={"0": "a", "1": "b"}),
                step(5, "resolution", [4, 2], [pos(eq("a", "c"))],
                     lits=[0, 0], offsets=[0, 1], subst={"0": "c"}),
                step(6, "equality_axiom", [], fcong),
                step(7, "resolution", [6, 5], [pos(eq(["f", "a"], ["f", "c"]))],
                     lits=[0, 0], offsets=[0, 2], subst={"0": "a", "1": "c"}),
                step(8, "equality_axiom", [], pcong),
                step(9, "resolution", [8, 7], [neg(["p", ["f", "a"]]), pos(["p", ["f", "c"]])],
                     lits=[0, 0], offsets=[0, 2], subst={"0": ["f", "a"], "1": ["f", "c"]}),
                inp(10, "a3", [pos(["p", ["f", "a"]])]),
                step(11, "resolution", [9, 10], [pos(["p", ["f", "c"]])],
                     lits=[0, 0], offsets=[0, 0], subst={}),
                inp(12, "goal", [neg(["p", ["f", "c"]])], conj=True),
                step(13, "resolution", [11, 12], [], lits=[0, 0], offsets=[0, 0], subst={})],
               "goal", ["a1", "a2", "a3"])
    return pr, cp, pf


def case_reflexivity():
    """goal: f(a) = f(a), refuted with reflexivity."""
    pr = problem([("goal", "conjecture", EQ(("f", "a"), ("f", "a")))], funcs=["f/1", "a/0"])
    cp = cnf("goal", [("goal", "conjecture", True, [neg(eq(["f", "a"], ["f", "a"]))])])
    pf = proof([inp(1, "goal", [neg(eq(["f", "a"], ["f", "a"]))], conj=True),
                step(2, "equality_axiom", [], [pos(eq(0, 0))]),
                step(3, "resolution", [1, 2], [], lits=[0, 0], offsets=[0, 0],
                     subst={"0": ["f", "a"]})],
               "goal", [])
    return pr, cp, pf


def case_skolem_and_definition():
    """a1: exists x. p(x) (Skolem constant sk1); a2: (q and r) or s, with the
    definition def1 for q and r; a3: not s; a4: forall x. not p(x) or
    not def1.  Proof: p(sk1) against a4, def1 against a2's clause."""
    pr = problem([("a1", "axiom", Quant("exists", (0,), A("p", 0))),
                  ("a2", "axiom", Or((And((A("q"), A("r"))), A("s")))),
                  ("a3", "axiom", Not(A("s"))),
                  ("a4", "axiom", forall([0], Or((Not(A("p", 0)), Not(A("q"))))))],
                 preds=["p/1", "q/0", "r/0", "s/0"])
    cp = cnf(None, [("a1", "axiom", False, [pos(["p", "sk1"])]),
                    ("a2", "axiom", False, [pos("def1"), pos("s")]),
                    ("a2", "axiom", False, [neg("def1"), pos("q")]),
                    ("a2", "axiom", False, [neg("def1"), pos("r")]),
                    ("a3", "axiom", False, [neg("s")]),
                    ("a4", "axiom", False, [neg(P0), neg("q")])])
    pf = proof([inp(1, "a1", [pos(["p", "sk1"])]),
                inp(2, "a4", [neg(P0), neg("q")]),
                step(3, "resolution", [1, 2], [neg("q")], lits=[0, 0], offsets=[0, 0],
                     subst={"0": "sk1"}),
                inp(4, "a2", [neg("def1"), pos("q")]),
                step(5, "resolution", [4, 3], [neg("def1")], lits=[1, 0],
                     offsets=[0, 0], subst={}),
                inp(6, "a2", [pos("s"), pos("def1")]),
                step(7, "resolution", [6, 5], [pos("s")], lits=[1, 0],
                     offsets=[0, 0], subst={}),
                inp(8, "a3", [neg("s")]),
                step(9, "resolution", [7, 8], [], lits=[0, 0], offsets=[0, 0], subst={})],
               None, ["a1", "a2", "a3", "a4"],
               skolems={"sk1": {"arity": 0, "statement": "a1"}},
               definitions={"def1": {"arity": 0, "statement": "a2",
                                     "formula": "q and r", "polarity": 1}})
    return pr, cp, pf


CASES = {f.__name__[5:]: f for f in [
    case_resolution, case_factoring, case_equality_resolution,
    case_equality_factoring, case_superposition, case_demodulation,
    case_superposition_into_predicate, case_subsumption_resolution,
    case_duplicate_removal, case_equality_axioms, case_reflexivity,
    case_skolem_and_definition]}


@pytest.mark.parametrize("name", sorted(CASES))
def test_correct_proof_is_accepted(name):
    pr, cp, pf = CASES[name]()
    rep = check_proof(pf, pr, cp)
    assert rep.ok, (rep.failing_step, rep.detail)
    assert rep.checked == len(pf["steps"])
    assert rep.failing_step is None


# ------------------------------------------------------------- mutations

def _find(pf, sid):
    return next(s for s in pf["steps"] if s["id"] == sid)


def setf(sid, **fields):
    def m(pf):
        _find(pf, sid).update(copy.deepcopy(fields))
    return m


def clause_of(sid, f):
    def m(pf):
        st = _find(pf, sid)
        st["clause"] = f(st["clause"])
    return m


MUTATIONS = [
    # (case, mutation, failing step, words in the detail)
    ("resolution", setf(4, subst={"0": "d"}), 4, "complementary"),
    ("resolution", setf(4, subst={}), 4, "complementary"),
    ("resolution", setf(4, parents=[1, 3]), 4, "complementary"),
    ("resolution", setf(4, parents=[1, 2, 3]), 4, "parent"),
    ("resolution", setf(4, parents=[1, 9]), 4, "earlier"),
    ("resolution", setf(4, parents=[1, 5]), 4, "earlier"),          # a later step
    ("resolution", setf(4, lits=[1, 0]), 4, "complementary"),
    ("resolution", setf(4, lits=[0, 3]), 4, "does not exist"),
    ("resolution", setf(4, offsets=[0]), 4, "offsets"),
    ("resolution", setf(4, rule="resolve"), 4, "unknown rule"),
    ("resolution", clause_of(4, lambda c: []), 4, "yields"),           # dropped literal
    ("resolution", clause_of(4, lambda c: c + [pos(["p", "c"])]), 4, "yields"),  # extra literal
    ("resolution", clause_of(4, lambda c: [pos(["q", "d"])]), 4, "yields"),
    ("resolution", clause_of(4, lambda c: [neg(["q", "c"])]), 4, "yields"),
    ("resolution", setf(3, id=4), 4, "twice"),
    ("resolution", lambda pf: pf["steps"].pop(), 4, "empty clause"),
    ("resolution", setf(2, formula="a1"), 2, "neither"),            # not from its formula
    ("resolution", setf(1, clause=[pos(P0)]), 1, "normal form"),  # symbols fine, clause not
    ("resolution", setf(2, formula="nowhere"), 2, "not a statement"),
    ("resolution", setf(3, conj=False), 3, "conjecture"),
    ("resolution", setf(1, conj=True), 1, "conjecture"),
    ("resolution", setf(1, role="hypothesis"), 1, "role"),
    ("resolution", setf(2, clause=[neg(["p", "d"])]), 2, "neither"),  # unknown symbol d
    ("resolution", setf(4, subst={"0": 0}, clause=[pos(["q", 0])]), 4, "complementary"),
    ("resolution", setf(4, subst={"0": ["f", 0]}), 4, "cyclic"),
    ("resolution", setf(4, subst={"0": 1, "1": 0}), 4, "cyclic"),
    ("resolution", setf(4, subst={"x": "c"}), 4, "not a variable"),
    ("resolution", setf(4, clause=[[1, "q"]]), 4, "not a clause"),
    ("factoring", setf(2, subst={}), 2, "not identical"),
    ("factoring", setf(2, lits=[0, 0]), 2, "different"),
    ("factoring", clause_of(2, lambda c: [pos(P0), pos(["p", 1])]), 2, "yields"),
    ("factoring", setf(2, parents=[3]), 2, "earlier"),
    ("equality_resolution", setf(2, subst={"1": ["f", 0]}), 2, "differ"),
    ("equality_resolution", setf(2, lits=[1]), 2, "negative equation"),
    ("equality_resolution", clause_of(2, lambda c: [pos(["q", 0])]), 2, "yields"),
    ("equality_resolution", setf(3, clause=[neg(["q", ["f", "sk1"]])]), 3, "introduced for goal"),
    ("equality_factoring", setf(2, sides=[1, 0]), 2, "differ"),
    ("equality_factoring", setf(2, sides=[0]), 2, "sides"),
    ("equality_factoring", setf(2, subst={}), 2, "differ"),
    ("equality_factoring", clause_of(2, lambda c: [c[0]]), 2, "yields"),
    ("equality_factoring", clause_of(2, lambda c: [c[0], pos(eq("a", "b"))]), 2, "yields"),
    ("superposition", setf(3, side=0), 3, "position"),                # wrong side
    ("superposition", setf(3, position=[1]), 3, "position"),          # wrong position
    ("superposition", setf(3, position=[2]), 3, "position"),
    ("superposition", setf(3, position=[1, 1, 1, 1]), 3, "does not exist"),
    ("superposition", setf(3, position=[]), 3, "position"),
    ("superposition", setf(3, subst={"0": "d"}), 3, "position"),
    ("superposition", clause_of(3, lambda c: [pos(eq(["g", ["f", "c"]], "d"))]), 3, "yields"),
    ("superposition", clause_of(3, lambda c: [pos(eq(["g", "c"], "c"))]), 3, "yields"),
    ("superposition", setf(3, lits=[0, 1]), 3, "does not exist"),
    ("superposition", setf(3, parents=[2, 1]), 3, "does not exist"),
    ("superposition", setf(3, lits=[0, 0], parents=[2, 2], offsets=[0, 0], position=[1]), 3, "position"),
    ("superposition_into_predicate", setf(3, subst={}), 3, "position"),
    ("superposition_into_predicate", clause_of(3, lambda c: [c[1]]), 3, "yields"),
    ("superposition_into_predicate", setf(3, subst={"0": 2, "1": 2}), 3, "yields"),
    ("superposition_into_predicate", setf(5, lits=[0, 0]), 5, "complementary"),
    ("demodulation", setf(3, subst={"0": "c", "1": "c"}), 3, "not the equation's"),
    ("demodulation", setf(3, side=0), 3, "position"),
    ("subsumption_resolution", setf(3, subst={"0": "d"}), 3, "complementary"),
    ("subsumption_resolution", clause_of(3, lambda c: [c[0]]), 3, "yields"),
    ("subsumption_resolution", setf(3, lits=[1, 1]), 3, "complementary"),
    ("duplicate_removal", clause_of(2, lambda c: []), 2, "yields"),
    ("duplicate_removal", setf(2, parents=[3]), 2, "earlier"),
    ("equality_axioms", setf(3, clause=[neg(eq(0, 1)), pos(eq(0, 2))]), 3, "not an equality axiom"),
    ("equality_axioms", setf(3, clause=[pos(eq(0, 1))]), 3, "not an equality axiom"),
    ("equality_axioms", setf(6, clause=[neg(eq(0, 1)), pos(eq(["f", 0], ["g", 1]))]), 6,
     "not an equality axiom"),
    ("equality_axioms", setf(6, clause=[neg(eq(0, 1)), pos(eq(["h", 0], ["h", 1]))]), 6,
     "not an equality axiom"),                                       # unknown symbol h
    ("equality_axioms", setf(6, clause=[pos(eq(["f", 0], ["f", 1]))]), 6, "not an equality axiom"),
    ("equality_axioms", setf(8, clause=[neg(eq(0, 1)), neg(["p", 0]), pos(["p", 0])]), 8,
     "not an equality axiom"),
    ("equality_axioms", setf(8, parents=[1]), 8, "no parents"),
    ("reflexivity", setf(2, clause=[pos(eq(0, 1))]), 2, "not an equality axiom"),
    ("skolem_and_definition", lambda pf: pf["skolems"].update(q={"arity": 0, "statement": "a1"}),
     None, "not fresh"),
    ("skolem_and_definition", lambda pf: pf["skolems"].update(p={"arity": 1, "statement": "a1"}),
     None, "not fresh"),
    ("skolem_and_definition", lambda pf: pf["skolems"].update(def1={"arity": 0, "statement": "a1"}),
     None, "both"),
    ("skolem_and_definition", lambda pf: pf["skolems"]["sk1"].update(statement="a4"), 1,
     "introduced for a4"),
    ("skolem_and_definition", lambda pf: pf["skolems"]["sk1"].update(arity=1), 1, "arity"),
    ("skolem_and_definition", lambda pf: pf["definitions"].pop("def1"), 4, "neither"),
    ("skolem_and_definition", setf(4, clause=[neg("def1"), pos("s")]), 4, "normal form"),
    ("skolem_and_definition", lambda pf: pf.update(axioms_used=["a1", "a2", "a3"]), None,
     "axioms_used"),
    ("skolem_and_definition", lambda pf: pf.update(conjecture="a1"), None, "conjecture"),
    ("equality_resolution", lambda pf: pf.update(axioms_used=["a1", "a2", "goal"]), None,
     "axioms_used"),
]


@pytest.mark.parametrize("k", range(len(MUTATIONS)))
def test_corrupted_proof_is_refused(k):
    name, mutate, failing, words = MUTATIONS[k]
    pr, cp, pf = CASES[name]()
    assert check_proof(pf, pr, cp).ok          # the original is fine
    bad = copy.deepcopy(pf)
    mutate(bad)
    rep = check_proof(bad, pr, cp)
    assert not rep.ok
    assert rep.failing_step == failing, rep.detail
    assert words in rep.detail, rep.detail


def test_every_rule_of_the_table_has_a_case_and_a_mutation():
    used = {s["rule"] for f in CASES.values() for s in f()[2]["steps"]}
    assert used >= {"input", "equality_axiom", "resolution", "factoring",
                    "equality_resolution", "equality_factoring", "superposition",
                    "demodulation", "subsumption_resolution", "duplicate_removal"}
    assert {m[0] for m in MUTATIONS} == set(CASES)


def test_conjecture_of_another_obligation_is_refused():
    pr, cp, pf = case_resolution()
    pr.statements.append(Statement("other", "conjecture", A("q", "c")))
    cp.clauses.append(InputClause(((False, ("q", "c")),), "other", "conjecture", True))
    bad = copy.deepcopy(pf)
    _find(bad, 3)["formula"] = "other"
    rep = check_proof(bad, pr, cp)
    assert not rep.ok and rep.failing_step == 3 and "other than" in rep.detail


def test_malformed_proofs_are_refused_without_raising():
    pr, cp, pf = case_resolution()
    for bad in [None, {}, {"steps": []}, {"steps": [1]}, {"steps": [{"id": "x"}]},
                {"steps": [{"id": 1, "rule": "resolution", "parents": 5, "clause": []}],
                 "conjecture": "goal"}]:
        rep = check_proof(bad, pr, cp)
        assert not rep.ok and rep.detail


# ------------------------------------------------------------- the helpers

def test_variant_check():
    p = lambda *a: (True, ("p", *a))
    e = lambda s, l, r: (s, ("=", l, r))
    assert is_variant([p(0, 1)], [p(1, 0)])
    assert not is_variant([p(0, 1)], [p(0, 0)])
    assert not is_variant([p(0, 0)], [p(0, 1)])
    assert is_variant([p(0, 1), p(1, 0)], [p(1, 0), p(0, 1)])
    assert is_variant([e(True, 0, ("f", 1))], [e(True, ("f", 0), 1)])
    assert not is_variant([e(True, 0, ("f", 1))], [e(False, ("f", 0), 1)])
    assert is_variant([p(0, 1), p(0, 1)], [p(0, 1)])            # duplicates merged
    assert not is_variant([p(0, 1), p(1, 2)], [p(0, 1), p(0, 1)])
    # the mapping must be one consistent bijection across literals
    assert not is_variant([p(0, 1), p(1, 2)], [p(0, 1), p(2, 1)])
    assert is_variant([p(0, 1), p(1, 2)], [p(2, 0), p(1, 2)])


def test_equality_axiom_kinds():
    ar = {"f": ("function", 2), "p": ("predicate", 1), "c": ("function", 0)}
    e = lambda s, l, r: (s, ("=", l, r))
    assert equality_axiom_kind([e(True, 3, 3)], ar) == "reflexivity"
    assert equality_axiom_kind([e(False, 0, 1), e(True, 1, 0)], ar) == "symmetry"
    assert equality_axiom_kind([e(True, 2, 0), e(False, 1, 2), e(False, 0, 1)], ar) == "transitivity"
    assert equality_axiom_kind([e(False, 0, 1), e(False, 2, 3),
                                e(True, ("f", 0, 2), ("f", 1, 3))], ar) == "function congruence"
    assert equality_axiom_kind([e(False, 0, 1), e(True, ("f", 0, 2), ("f", 1, 2))], ar) \
        == "function congruence"
    assert equality_axiom_kind([e(False, 0, 1), (False, ("p", 1)), (True, ("p", 0))], ar) \
        == "predicate congruence"
    # not axioms
    assert equality_axiom_kind([e(True, 0, 1)], ar) is None
    assert equality_axiom_kind([e(False, 0, 1), e(True, 1, 2)], ar) is None
    assert equality_axiom_kind([e(False, 0, 1), e(False, 1, 2), e(True, 0, 1)], ar) is None
    assert equality_axiom_kind([e(False, 0, 1), e(True, ("f", 0, 2), ("f", 1, 3))], ar) is None
    assert equality_axiom_kind([e(False, 0, 1), e(True, ("f", 0), ("f", 1))], ar) is None  # arity
    assert equality_axiom_kind([e(False, 0, 1), (True, ("p", 1)), (True, ("p", 0))], ar) is None
    assert equality_axiom_kind([e(False, 0, 1), (False, ("p", 1)), (True, ("p", 1))], ar) is None


# ------------------------------------------------------------- the small-model spot check
# These feed the checker a clausified problem with a wrong clause in it (as a
# clausifier bug would): the symbols are right and the clause is "in the
# normal form", so only the evaluation in small models can tell.

def test_spot_check_refuses_a_clause_that_does_not_follow():
    pr, cp, pf = case_resolution()
    # a2 is "not p(c)"; pretend the clausifier produced "p(c)" for it
    cp.clauses[1] = InputClause(((True, ("p", "c")),), "a2", "axiom", False)
    bad = copy.deepcopy(pf)
    _find(bad, 2)["clause"] = [pos(["p", "c"])]
    rep = check_proof(bad, pr, cp)
    assert not rep.ok and rep.failing_step == 2
    assert "does not follow from a2" in rep.detail and "domain of 1" in rep.detail


def test_spot_check_refuses_an_unnegated_conjecture():
    pr, cp, pf = case_resolution()
    cp.clauses[2] = InputClause(((True, ("q", "c")),), "goal", "conjecture", True)
    bad = copy.deepcopy(pf)
    _find(bad, 3)["clause"] = [pos(["q", "c"])]
    rep = check_proof(bad, pr, cp)
    assert not rep.ok and rep.failing_step == 3 and "does not follow from goal" in rep.detail


def test_spot_check_on_two_elements_catches_a_wrong_quantifier():
    """(forall x. p(x) or q(x)) and (q(c) or not q(c)) clausified as
    p(X0) or q(c): true on one element, false on two (p = {1}, q = {0},
    c = 1, x = 0).  The tautology only puts c into the statement's symbols."""
    pr, cp, pf = case_resolution()
    wrong = ((True, ("p", 0)), (True, ("q", "c")))
    cp.clauses[0] = InputClause(wrong, "a1", "axiom", False)
    bad = copy.deepcopy(pf)
    _find(bad, 1)["clause"] = [pos(P0), pos(["q", "c"])]
    pr.statements[0] = Statement("a1", "axiom", And((
        forall([0], Or((A("p", 0), A("q", 0)))), Or((A("q", "c"), Not(A("q", "c")))))))
    rep = check_proof(bad, pr, cp)
    assert not rep.ok and rep.failing_step == 1
    assert "domain of 2" in rep.detail, rep.detail


def test_spot_check_accepts_skolem_clauses_it_cannot_judge_on_two_elements():
    """exists x. p(x) and exists y. not p(y): p(sk1) and not p(sk2) are
    right, though false for some choices of sk1, sk2 on two elements; the
    check only uses one element for clauses with Skolem symbols."""
    f = And((Quant("exists", (0,), A("p", 0)), Quant("exists", (1,), Not(A("p", 1)))))
    pr = problem([("a1", "axiom", f), ("a2", "axiom", forall([0], A("p", 0)))],
                 preds=["p/1"])
    cp = cnf(None, [("a1", "axiom", False, [pos(["p", "sk1"])]),
                    ("a1", "axiom", False, [neg(["p", "sk2"])]),
                    ("a2", "axiom", False, [pos(P0)])])
    pf = proof([inp(1, "a1", [neg(["p", "sk2"])]),
                inp(2, "a2", [pos(P0)]),
                step(3, "resolution", [1, 2], [], lits=[0, 0], offsets=[0, 0],
                     subst={"0": "sk2"})],
               None, ["a1", "a2"],
               skolems={"sk1": {"arity": 0, "statement": "a1"},
                        "sk2": {"arity": 0, "statement": "a1"}})
    rep = check_proof(pf, pr, cp)
    assert rep.ok, rep.detail


def test_small_model_evaluation():
    from worker.certify.spotcheck import clause_holds, holds, models
    f = forall([0], Quant("exists", (1,), A("r", 0, 1)))
    interp = {"r": {(0, 0): False, (0, 1): True, (1, 0): False, (1, 1): False}}
    assert not holds(f, interp, {}, 2)
    interp["r"][(1, 0)] = True
    assert holds(f, interp, {}, 2)
    # forall x exists y r(x, y) on two elements: each of the two rows of r
    # must be one of the 3 non-empty rows, so 3 * 3 = 9 of the 16 relations
    # (counted by hand).
    assert len(models(f, {"r": ("predicate", 2)}, 2)) == 9
    assert clause_holds(((True, ("r", 0, 0)), (False, ("r", 0, 0))), interp, 2)
    assert not clause_holds(((True, ("r", 0, 1)),), interp, 2)


def test_spot_check_gives_up_on_many_nested_quantifiers_instead_of_hanging():
    """forall x0 ... x39. r(x0, x1) or ... or r(x38, x39) on two elements
    would take up to 2**40 steps per interpretation: the spot check skips the
    size (budget MAX_STEPS) rather than run for ever, and the proof of a
    conjecture from a statement with 40 nested binders is still replayed and
    accepted."""
    from worker.certify import spotcheck
    body = Or(tuple(A("r", i, i + 1) for i in range(39)))
    f = body
    for v in reversed(range(40)):
        f = Quant("forall", (v,), f)
    with pytest.raises(spotcheck._Skip):
        spotcheck.models(f, {"r": ("predicate", 2)}, 2)
    checker = spotcheck.SpotChecker()
    assert checker.counterexample("s", f, {"r": ("predicate", 2)},
                                  ((True, ("r", 0, 1)),), 2) is None
    assert not checker.tried("s", 2)
    # forall x0 ... x39. p(x0) (39 binders vacuous), conjecture p(b): the
    # refutation p(X0), not p(b), false (written here, not by the engine)
    g = A("p", 0)
    for v in reversed(range(40)):
        g = Quant("forall", (v,), g)
    pr = problem([("a", "axiom", g), ("c", "conjecture", A("p", "b"))],
                 preds=["p/1"], funcs=["b/0"])
    cp = cnf("c", [("a", "axiom", False, [pos(P0)]),
                   ("c", "conjecture", True, [neg(["p", "b"])])])
    pf = proof([inp(1, "a", [pos(P0)]),
                inp(2, "c", [neg(["p", "b"])], conj=True),
                step(3, "resolution", [2, 1], [], lits=[0, 0], offsets=[0, 0],
                     subst={"0": "b"})],
               "c", ["a"])
    rep = check_proof(pf, pr, cp)
    assert rep.ok, rep.detail
    bad = copy.deepcopy(pf)
    bad["steps"][2]["subst"] = {"0": "z"}
    assert not check_proof(bad, pr, cp).ok


def test_every_clause_of_the_corpus_passes_the_input_checks():
    """Every clause the clausifier produces for our suites (corpus/checks,
    each file's source in its header) passes the input-step checks,
    the small-model spot check included, so no correct proof is refused at
    an input step."""
    import glob
    import os
    from worker.clausify import clausify
    from worker.certify.proofcheck import check_input_clauses
    from worker.syntax import load_problem
    root = os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))),
                        "corpus", "checks")
    files = [f for f in sorted(glob.glob(os.path.join(root, "*", "*.p")) +
                               glob.glob(os.path.join(root, "*", "*.nj")))
             if os.path.basename(f) != "axioms.nj"]
    assert len(files) >= 70
    total = 0
    for f in files:
        pr = load_problem(f)
        for conj in pr.obligations():
            cp = clausify(pr, conj)
            rep = check_input_clauses(pr, cp)
            assert rep.ok, (f, conj, rep.detail)
            total += rep.checked
    assert total >= 500


# ------------------------------------------------------------- properties of the variant test

def test_spot_check_enumerates_each_shape_of_statement_once(monkeypatch):
    """Rules of one form under other names (p1(x) -> p2(x), p2(x) -> p3(x))
    share one enumeration of small models; a wrong clause in that shape is
    still refused, and a statement of another shape is enumerated anew."""
    from worker.certify import spotcheck
    calls = []
    real = spotcheck.models
    monkeypatch.setattr(spotcheck, "models", lambda f, s, n: calls.append(n) or real(f, s, n))
    ck = spotcheck.SpotChecker()
    sig = lambda a, b: {a: ("predicate", 1), b: ("predicate", 1)}  # noqa: E731
    rule = lambda a, b: forall([0], Or((Not(A(a, 0)), A(b, 0))))  # noqa: E731
    clause = lambda a, b: ((False, (a, 0)), (True, (b, 0)))  # noqa: E731
    for k in range(1, 6):
        a, b = f"p{k}", f"p{k + 1}"
        for size in (1, 2):
            assert ck.counterexample(f"r{k}", rule(a, b), sig(a, b), clause(a, b), size) is None
            assert ck.tried(f"r{k}", size)
    assert calls == [1, 2]              # the first rule only
    # the same shape with the clause turned round does not follow: refused
    wrong = ((True, ("p7", 0)), (False, ("p8", 0)))
    assert ck.counterexample("r7", rule("p7", "p8"), sig("p7", "p8"), wrong, 1) is not None
    # another shape (the head and body the same symbol): enumerated anew
    assert ck.counterexample("r9", rule("q", "q"), {"q": ("predicate", 1)},
                             clause("q", "q"), 1) is None
    assert calls[-1] == 1 and len(calls) == 4
    # a symbol of another arity is another shape
    assert spotcheck.shape(rule("a", "b"), sig("a", "b"), clause("a", "b"), 1) != \
        spotcheck.shape(rule("a", "b"), {"a": ("predicate", 1), "b": ("predicate", 2)},
                        clause("a", "b"), 1)


from hypothesis import given, settings, strategies as st  # noqa: E402

_var = st.integers(0, 3)
_const = st.sampled_from(["a", "b"])
_term = st.recursive(st.one_of(_var, _const),
                     lambda sub: st.tuples(st.just("f"), sub), max_leaves=3)
_atom = st.one_of(st.tuples(st.just("p"), _term, _term), st.tuples(st.just("q"), _term),
                  st.tuples(st.just("="), _term, _term), st.just("r"))
_clause = st.lists(st.tuples(st.booleans(), _atom), min_size=0, max_size=4)


def _map_vars(t, m):
    if type(t) is int:
        return m[t]
    if type(t) is str:
        return t
    return (t[0], *[_map_vars(a, m) for a in t[1:]])


def _clause_vars_of(c):
    return sorted({v for _, a in c for v in T.variables(a)})


@settings(max_examples=300, deadline=None)
@given(_clause, st.permutations(range(4)), st.randoms(use_true_random=False))
def test_a_renamed_shuffled_mirrored_clause_is_a_variant(c, perm, rnd):
    m = dict(zip(range(4), [p + 10 for p in perm]))
    d = []
    for sign, a in c:
        a = _map_vars(a, m)
        if type(a) is tuple and a[0] == "=" and rnd.random() < 0.5:
            a = ("=", a[2], a[1])
        d.append((sign, a))
    rnd.shuffle(d)
    assert is_variant(c, d) and is_variant(d, c)


@settings(max_examples=300, deadline=None)
@given(_clause, st.data())
def test_merging_two_variables_is_not_a_variant(c, data):
    vs = _clause_vars_of(c)
    if len(vs) < 2:
        return
    x, y = data.draw(st.sampled_from([(x, y) for x in vs for y in vs if x != y]))
    m = {v: v for v in range(4)}
    m[x] = y
    d = [(sign, _map_vars(a, m)) for sign, a in c]
    assert not is_variant(c, d) and not is_variant(d, c)


def test_odd_inputs_are_refused_without_raising():
    pr, cp, pf = case_resolution()
    bad = copy.deepcopy(pf)
    bad["axioms_used"] = [["a1"]]               # unhashable entries
    rep = check_proof(bad, pr, cp)
    assert not rep.ok
    rep = check_proof(pf, pr, None)              # no clausified problem at all
    assert not rep.ok and "could not be read" in rep.detail


def test_spot_check_judges_definition_clauses_with_their_statement():
    """a2 is (q and r) or s; its normal form with def1 standing for "q and
    r" is def1 or s, not def1 or q, not def1 or r.  A clausifier that wrote
    not def1 or not q instead is caught on one element (q, r true, s false:
    a2 holds, but no meaning of def1 satisfies the three clauses)."""
    pr, cp, pf = case_skolem_and_definition()
    assert check_proof(pf, pr, cp).ok
    k = next(i for i, ic in enumerate(cp.clauses)
             if ic.source == "a2" and (True, "r") in ic.lits)
    cp.clauses[k] = InputClause(((False, "def1"), (False, "q")), "a2", "axiom", False)
    rep = check_proof(pf, pr, cp)
    assert not rep.ok and rep.failing_step == 4
    assert "cannot hold in a model of a2" in rep.detail, rep.detail

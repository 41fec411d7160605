"""The finite-domain argument: a domain-closure clause ``X = c_1 or ... or
X = c_n`` bounds every model by n elements; when the finite model search has
excluded sizes 1..n, the portfolio claims a refutation with one
``finite_domain`` step, and the proof checker accepts it only after its own
exhaustive evaluation of the original statements.

Pelletier's problem 53 (Pelletier 1986, "Seventy-five problems for testing
automatic theorem provers"; our files are written from memory, see their
headers) is the case in point: its axiom says the domain has exactly two
elements.
"""

from __future__ import annotations

import copy
import os
import re

import pytest

from worker import verdict as V
from worker.certify.proofcheck import check_proof
from worker.clausify import clausify
from worker.pipeline import decide
from worker.portfolio import (_closure_candidates, axiom_part, closure_bound,
                              finite_domain_answer, finite_domain_proof)
from worker.saturation.proof import format_proof
from worker.syntax import load_problem, parse_text

from tests.test_web_pages import env  # noqa: F401  (the console fixture)

ROOT = os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))),
                    "corpus", "checks")
P53 = ["pelletier/p53.p", "pelletier-native/p53.nj"]

# Satisfiable: two elements at most, p(a), not p(b) is a 2-element model.
TWO_SAT = """\
axiom dom: forall z. z = a or z = b
axiom pa: p(a)
conjecture pb: p(b)
"""

# A binary function over a bound of 4: 4^16 interpretations, over the cap.
BIG = """\
axiom dom: forall z. z = a or z = b or z = c or z = d
axiom distinct: a != b and a != c and a != d and b != c and b != d and c != d
axiom op: forall x y. g(x, y) = g(y, x)
conjecture comm: forall x. g(x, x) = x
"""


# Contradictory axioms, settled by the bound: a corridor of two rooms where
# every move changes the room, yet some double move does not come back.  On
# two elements ``across`` without a fixed point is the swap, so
# across(across(x)) = x everywhere; one element has no move at all.  The
# conjecture is beside the point.
CORRIDOR = """\
axiom rooms: forall z. z = left or z = right
axiom moves: forall x. across(x) != x
axiom stray: exists x. across(across(x)) != x
conjecture lit: lamp(left)
"""

# The same axioms with no conjecture.
CORRIDOR_ONLY = "\n".join(CORRIDOR.splitlines()[:3]) + "\n"

# The bound comes from the negated conjecture (not every element is a or b),
# the axioms (three distinct elements) have a model of size 3.
BOUND_IN_CONJ = """\
axiom three: exists x y z. x != y and x != z and y != z
conjecture wide: exists z. z != a and z != b
"""


def _settings(time=10.0):
    return V.Settings(limits=V.Limits(time=time))


def _p53(rel):
    problem = load_problem(os.path.join(ROOT, rel))
    (conj,) = problem.obligations()
    return problem, conj


@pytest.fixture(scope="module")
def p53_result():
    problem, conj = _p53(P53[0])
    return problem, conj, decide(problem, conj, _settings())


@pytest.mark.parametrize("rel", P53)
def test_p53_is_a_theorem_with_a_replayed_finite_domain_proof(rel):
    problem, conj = _p53(rel)
    res = decide(problem, conj, _settings())
    assert res["status"] == V.THEOREM, (res["status"], res["reason"])
    assert res["certificate"]["kind"] == "proof-replayed", res["certificate"]
    last = res["proof"]["steps"][-1]
    assert last["rule"] == "finite_domain" and last["bound"] == 2 and last["clause"] == []
    # f/2 is the only user symbol: 2^1 + 2^4 interpretations
    assert "18 interpretations evaluated" in res["certificate"]["detail"]
    assert res["axioms_used"] == ["h1"]


def test_the_finite_domain_step_prints_readably(p53_result):
    _, _, res = p53_result
    text = format_proof(res["proof"])
    last = text.splitlines()[-2]
    assert re.search(r"every model has at most 2 elements \(clause \d+\); no interpretation "
                     r"of size 1\.\.2 satisfies the axioms and the negated conjecture: "
                     r"18 interpretations evaluated", last), last


def test_closure_clauses_are_recognized():
    assert closure_bound(((True, ("=", 0, "a")), (True, ("=", "b", 0)))) == 2
    assert closure_bound(((True, ("=", 0, "a")), (True, ("=", 0, "a")))) == 1
    assert closure_bound(((True, ("=", 0, "a")), (True, ("=", 1, "b")))) is None
    assert closure_bound(((True, ("=", 0, "a")), (False, ("=", 0, "b")))) is None
    assert closure_bound(((True, ("=", 0, ("f", "a"))),)) is None
    assert closure_bound(((True, ("p", 0)),)) is None


def test_a_satisfiable_problem_with_a_closure_clause_is_never_refuted():
    problem = parse_text(TWO_SAT, "two.nj")
    cp = clausify(problem, "pb")
    assert [b for b, _, _ in _closure_candidates(cp)] == [2]   # the guard is in play
    res = decide(problem, "pb", _settings())
    assert res["status"] == V.COUNTER_SATISFIABLE, (res["status"], res["reason"])
    assert res["model"]["size"] == 2
    assert res["certificate"]["kind"] == "model-evaluated"


def test_over_the_cap_the_portfolio_does_not_claim():
    problem = parse_text(BIG, "big.nj")
    cp = clausify(problem, "comm")
    assert any(closure_bound(ic.lits) == 4 for ic in cp.clauses)
    assert _closure_candidates(cp) == []


# ------------------------------------------------------------- the checker

def _fd(proof):
    return proof["steps"][-1]


def _refused(proof, problem, conj, *words):
    cp = clausify(problem, conj)
    rep = check_proof(proof, problem, cp)
    assert not rep.ok
    assert rep.failing_step == _fd(proof)["id"], (rep.failing_step, rep.detail)
    for w in words:
        assert w in rep.detail, rep.detail
    return rep


def test_wrong_bounds_are_refused(p53_result):
    problem, conj, res = p53_result
    for bound in (1, 3):
        pf = copy.deepcopy(res["proof"])
        _fd(pf)["bound"] = bound
        _fd(pf).pop("interpretations")
        _refused(pf, problem, conj, "claims the bound")


def test_a_closure_parent_that_is_no_closure_clause_is_refused(p53_result):
    problem, conj, res = p53_result
    pf = copy.deepcopy(res["proof"])
    other = next(st["id"] for st in pf["steps"]
                 if st["rule"] == "input" and st["id"] != _fd(pf)["closure"])
    _fd(pf)["closure"] = other
    _refused(pf, problem, conj, "is not a domain-closure clause")


def test_a_closure_that_is_not_a_parent_is_refused(p53_result):
    problem, conj, res = p53_result
    pf = copy.deepcopy(res["proof"])
    _fd(pf)["parents"].remove(_fd(pf)["closure"])
    _refused(pf, problem, conj, "is not a parent")


def test_a_wrong_count_of_interpretations_is_refused(p53_result):
    problem, conj, res = p53_result
    pf = copy.deepcopy(res["proof"])
    _fd(pf)["interpretations"] = 5
    _refused(pf, problem, conj, "interpretations")


def test_without_the_conjecture_the_axioms_have_a_small_model(p53_result):
    """Dropping the conjecture's clauses would claim the axioms contradictory;
    h1 has a two-element model, so the checker refuses."""
    problem, conj, res = p53_result
    pf = copy.deepcopy(res["proof"])
    keep = {st["id"] for st in pf["steps"] if st["rule"] == "input" and not st["conj"]}
    _fd(pf)["parents"] = [p for p in _fd(pf)["parents"] if p in keep]
    _fd(pf)["conj"] = False
    _refused(pf, problem, conj, "have a model of size 2")


def test_a_finite_domain_step_on_a_problem_with_a_small_model_is_refused():
    problem = parse_text(TWO_SAT, "two.nj")
    cp = clausify(problem, "pb")
    (bound, k, count), = _closure_candidates(cp)
    pf = finite_domain_proof(cp, k, bound, count)
    _refused(pf, problem, "pb", "model of size 2")


def test_over_the_cap_the_checker_refuses():
    problem = parse_text(BIG, "big.nj")
    cp = clausify(problem, "comm")
    k = next(i for i, ic in enumerate(cp.clauses) if closure_bound(ic.lits) == 4)
    pf = finite_domain_proof(cp, k, 4, 0)
    del _fd(pf)["interpretations"]
    _refused(pf, problem, "comm", "over the cap")


# ------------------------------------------------------------- contradictory axioms

def _all_sizes(bound):
    return set(range(1, bound + 1))


def test_contradictory_axioms_under_a_bound_give_an_axioms_only_proof():
    problem = parse_text(CORRIDOR, "corridor.nj")
    cp = clausify(problem, "lit")
    closures = _closure_candidates(cp)
    assert [b for b, _, _ in closures] == [2]
    got = finite_domain_answer(cp, closures, _all_sizes(2), float("inf"))
    assert got["axioms_only"] is True, got["reason"]
    pf = got["proof"]
    assert not any(st.get("conj") for st in pf["steps"])
    assert _fd(pf)["conj"] is False and _fd(pf)["bound"] == 2
    assert len(pf["steps"]) == len(axiom_part(cp).clauses) + 1
    rep = check_proof(pf, problem, cp)
    assert rep.ok, rep.detail
    assert "no interpretation of size 1..2 satisfies the axioms:" in rep.detail, rep.detail
    # nothing excluded yet: no claim at all
    assert finite_domain_answer(cp, closures, {1}, float("inf")) is None


def test_contradictory_axioms_under_a_bound_are_reported_as_such():
    """Through the pipeline, with the model search's first slice before any
    saturation (here by asking for no saturation probe: the probe of the first
    strategy would refute these axioms too), the finite-domain argument
    answers first; with the portfolio as it runs by default the verdict is
    the same."""
    problem = parse_text(CORRIDOR, "corridor.nj")
    res = decide(problem, "lit", _settings())
    assert res["status"] == V.CONTRADICTORY_AXIOMS, (res["status"], res["reason"])
    assert res["certificate"]["kind"] == "proof-replayed", res["certificate"]
    import worker.portfolio as P
    saved, P.PROBE_SECONDS = P.PROBE_SECONDS, 0.0
    try:
        res = decide(problem, "lit", _settings())
    finally:
        P.PROBE_SECONDS = saved
    assert res["status"] == V.CONTRADICTORY_AXIOMS, (res["status"], res["reason"])
    assert res["strategy"] == "finite-domain"
    assert res["certificate"]["kind"] == "proof-replayed", res["certificate"]
    assert "satisfies the axioms: 66 interpretations evaluated" in res["certificate"]["detail"]
    assert res["axioms_used"] == ["rooms", "moves", "stray"]
    assert re.search(r"satisfies the axioms: 66 interpretations evaluated; from 3 input",
                     format_proof(res["proof"]))


def test_without_a_conjecture_the_same_axioms_stay_unsatisfiable(monkeypatch):
    import worker.portfolio as P
    monkeypatch.setattr(P, "PROBE_SECONDS", 0.0)     # the finite-domain path first
    problem = parse_text(CORRIDOR_ONLY, "corridor-only.nj")
    (res,) = [decide(problem, c, _settings()) for c in problem.obligations()]
    assert res["status"] == V.UNSATISFIABLE, (res["status"], res["reason"])
    assert res["strategy"] == "finite-domain"
    assert res["certificate"]["kind"] == "proof-replayed"


@pytest.mark.parametrize("rel", ["pelletier/p49.p"] + P53)
def test_pelletier_49_and_53_keep_the_conjecture(rel):
    """Their axioms have a two-element model: the axioms-only search finds
    it, and the proof is the one with the negated conjecture."""
    problem, conj = _p53(rel)
    cp = clausify(problem, conj)
    closures = _closure_candidates(cp)
    bound = closures[0][0]
    got = finite_domain_answer(cp, closures, _all_sizes(bound), float("inf"))
    assert got["axioms_only"] is False
    assert _fd(got["proof"])["conj"] is True
    assert check_proof(got["proof"], problem, cp).ok
    res = decide(problem, conj, _settings())
    assert res["status"] == V.THEOREM, (res["status"], res["reason"])


def test_a_bound_from_the_negated_conjecture_gives_a_theorem():
    problem = parse_text(BOUND_IN_CONJ, "wide.nj")
    cp = clausify(problem, "wide")
    closures = _closure_candidates(cp)
    assert closures and all(cp.clauses[k].conj for _, k, _ in closures)
    got = finite_domain_answer(cp, closures, _all_sizes(2), float("inf"))
    assert got["axioms_only"] is False and _fd(got["proof"])["conj"] is True
    res = decide(problem, "wide", _settings())
    assert res["status"] == V.THEOREM, (res["status"], res["reason"])


def _without_statement(proof, name):
    """The proof with the input steps of one statement cut out."""
    pf = copy.deepcopy(proof)
    gone = {st["id"] for st in pf["steps"] if st.get("formula") == name}
    pf["steps"] = [st for st in pf["steps"] if st["id"] not in gone]
    _fd(pf)["parents"] = [p for p in _fd(pf)["parents"] if p not in gone]
    pf["axioms_used"] = [a for a in pf["axioms_used"] if a != name]
    return pf


def test_an_axioms_only_claim_with_a_small_model_is_refused():
    """Mutation: without ``stray`` the remaining axioms have a two-element
    model (the swap), so the claim that they are contradictory is refused."""
    problem = parse_text(CORRIDOR, "corridor.nj")
    cp = clausify(problem, "lit")
    got = finite_domain_answer(cp, _closure_candidates(cp), _all_sizes(2), float("inf"))
    assert check_proof(got["proof"], problem, cp).ok        # the unmutated proof passes
    pf = _without_statement(got["proof"], "stray")
    _refused(pf, problem, "lit", "the axioms have a model of size 2")


def test_a_forged_contradictory_axioms_claim_ends_in_error(p53_result, monkeypatch):
    """Mutation: P53's proof without its conjecture steps would read as
    ContradictoryAxioms; h1 has a two-element model, so the checker refuses
    and the pipeline reports Error, never the forged status."""
    problem, conj, res = p53_result
    pf = _without_statement(res["proof"], conj)
    _fd(pf)["conj"] = False
    assert not any(st.get("conj") for st in pf["steps"])
    _refused(pf, problem, conj, "the axioms have a model of size 2")

    import worker.portfolio as portfolio
    monkeypatch.setattr(portfolio, "run", lambda cp, settings, deadline: {
        "outcome": "refutation", "strategy": "finite-domain", "proof": copy.deepcopy(pf),
        "model": None, "complete": False, "limit": None, "reason": "", "figures": {}})
    forged = decide(problem, conj, _settings())
    assert forged["status"] == V.ERROR, forged["status"]
    assert forged["certificate"]["kind"] == "failed"
    assert "have a model of size 2" in forged["reason"]


# ------------------------------------------------------------- the web console

def test_the_proof_page_shows_a_finite_domain_step(env):  # noqa: F811
    env.sign_in(env.alice)
    with open(os.path.join(ROOT, P53[1])) as fh:
        text = fh.read()
    resp = env.submit(text, time_limit="10")
    assert resp.status_code == 303, resp.get_data(as_text=True)
    jid = re.search(r"/jobs/(j[0-9a-f]+)$", resp.headers["Location"]).group(1)
    assert env.run_all() == 1
    assert env.store.get_job(jid)["verdict"] == "Theorem"
    page = env.get(f"/jobs/{jid}/proof")
    assert "every model has at most 2 elements" in page and "proof-graph" in page


def test_the_exhaustive_evaluation_is_right_and_bounded():
    from worker.certify import exhaust
    from worker.syntax.formulas import And, Atom, Not, Quant

    px = Atom(("p", 0))
    # forall x. p(x) and exists x. not p(x): no model of any size
    fs = [Quant("forall", (0,), px), Quant("exists", (0,), Not(px))]
    sym = {"p": ("predicate", 1)}
    assert exhaust.find_model(fs, sym, 3) == (None, 2 + 4 + 8)
    assert exhaust.count_up_to(sym, 3) == 14
    # exists x. not p(x) alone: the first interpretation of size 1
    assert exhaust.find_model(fs[1:], sym, 3) == (1, 1)
    # many nested quantifiers (2^30 steps on two elements): the step budget
    # stops it, with a reason
    deep = Quant("forall", tuple(range(30)), And(tuple(Atom(("=", i, i)) for i in range(30))))
    with pytest.raises(exhaust.Unevaluable, match="quantifier steps"):
        exhaust.find_model([Not(deep)], {}, 2, max_steps=100_000)

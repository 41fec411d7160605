"""The readable proof names substituted variables after their own parent
step, so a reader can find them in the clause printed there."""

from worker import verdict as V
from worker.pipeline import decide
from worker.saturation.proof import format_proof
from worker.syntax import parse_text

HARBOUR = """
axiom keepers_enter: forall p. keeper(p) implies may_enter(p, archive)
axiom owl_is_keeper: keeper(owl)
conjecture owl_enters: may_enter(owl, archive)
"""


def test_substitution_uses_the_parents_variable_names():
    problem = parse_text(HARBOUR, "harbour.nj")
    res = decide(problem, "owl_enters", V.Settings(limits=V.Limits(time=10), model_search=False))
    assert res["status"] == V.THEOREM
    text = format_proof(res["proof"])
    steps = res["proof"]["steps"]
    # the step that resolves the rule with keeper(owl) binds the rule's own
    # variable, printed with the name the statement gave it (p)
    rule_id = next(s["id"] for s in steps if s.get("formula") == "keepers_enter")
    assert f"p@{rule_id} := owl" in text, text
    assert f"{rule_id}. not keeper(p) or may_enter(p, archive)" in text, text


def test_input_steps_keep_the_statements_variable_names():
    """Clauses taken from statements print with the names the user wrote,
    made distinct where one clause has two variables of one name (an
    equivalence expanded); derived clauses use X0, X1, ...; a constant
    spelled like a variable is quoted."""
    text = """
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom left_id: forall x. e * x = x
axiom left_inv: forall x. i(x) * x = e
axiom same: forall x. (p(x) iff (forall x. q(x, x)))
conjecture double: forall u. i(i(u)) = u
"""
    problem = parse_text(text, "g.nj")
    res = decide(problem, "double", V.Settings(limits=V.Limits(time=10), model_search=False))
    assert res["status"] == V.THEOREM and res["certificate"]["kind"] == "proof-replayed"
    steps = res["proof"]["steps"]
    by_formula = {s.get("formula"): s for s in steps if s["rule"] == "input"}
    assert by_formula["assoc"]["varnames"] == ["x", "y", "z"]
    out = format_proof(res["proof"])
    assert "(x * y) * z = x * (y * z)    [from assoc (axiom)]" in out, out
    assert "i(x) * x = e    [from left_inv (axiom)]" in out, out
    assert "X0" in out                       # derived clauses keep the X names
    assert "keeps the statement's variable names" in out
    # the clausifier's own names: two variables named x in one clause
    from worker.clausify import clausify
    cp = clausify(problem, "double")
    names = {ic.varnames for ic in cp.clauses if ic.source == "same"}
    assert ("x", "x_2") in names, names
    # a constant spelled like a variable of its clause is quoted
    from worker.saturation.proof import clause_text
    st = {"clause": [[True, ["p", 0, "x"]]], "varnames": ["x"]}
    assert clause_text(st) == "p(x, 'x')"


def test_the_proof_text_explains_its_notation():
    """A first-time reader is told what X0, X0@5 := t and positions mean, and
    only the notation the proof uses is explained."""
    from worker.saturation.proof import format_proof
    steps = [{"id": 1, "clause": [[True, ["=", ["f", 0], 0]]], "rule": "input",
              "parents": [], "formula": "a", "role": "axiom", "conj": False}]
    assert "notation" not in format_proof({"steps": steps, "axioms_used": ["a"]})
    steps.append({"id": 2, "clause": [[True, ["=", 0, 0]]], "rule": "superposition",
                  "parents": [1, 1], "lits": [0, 0], "side": 0, "position": [1, 1],
                  "subst": {"0": ["f", 1]}})
    text = format_proof({"steps": steps, "axioms_used": ["a"]})
    notes = [ln.strip() for ln in text.splitlines()[-3:]]
    assert notes[0].startswith("notation: X0, X1, ... stand for any terms")
    assert notes[1].startswith("X0@5 := t (or x@5 := t):") and notes[2].startswith("a position lists")

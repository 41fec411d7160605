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
    # the step that resolves the rule with keeper(owl) binds the rule's own X0
    rule_id = next(s["id"] for s in steps if s.get("formula") == "keepers_enter")
    assert f"X0@{rule_id} := owl" in text, text


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
    assert notes[1].startswith("X0@5 := t:") and notes[2].startswith("a position lists")

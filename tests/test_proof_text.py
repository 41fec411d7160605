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

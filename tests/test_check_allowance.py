"""The time limit and the certification of a proof found near its end: the
check gets an allowance past the limit, and a check that cannot finish in it
ends the obligation as Timeout (never an unchecked verdict)."""

import time

from worker import pipeline
from worker import verdict as V
from worker.certify.proofcheck import check_proof
from worker.clausify import clausify
from worker.portfolio import run_strategy
from worker.saturation import strategy as S
from worker.syntax import parse_text
from service.config import Config
from service.queue import hard_stop_seconds

CHAIN = "\n".join(
    [f"axiom step{i}: forall x. p{i}(x) implies p{i + 1}(x)" for i in range(40)]
    + ["axiom start: p0(k)", "conjecture reach: p40(k)"]) + "\n"


def _proof():
    prob = parse_text(CHAIN, "chain.nj")
    cp = clausify(prob, "reach")
    out = run_strategy(cp, S.get("steady"), time.monotonic() + 20)
    assert out["outcome"] == "refutation"
    return prob, cp, out["proof"]


def test_allowance_is_a_fifth_of_the_limit_within_bounds():
    assert V.check_allowance(0.1) == 0.1
    assert V.check_allowance(1) == 0.2
    assert V.check_allowance(20) == 4.0
    assert V.check_allowance(1000) == 60.0


def test_a_check_past_its_deadline_stops_without_a_verdict():
    prob, cp, proof = _proof()
    n = len(proof["steps"])
    assert n > 64
    done = check_proof(proof, prob, cp)
    assert done.ok and not done.timed_out and done.checked == n
    late = check_proof(proof, prob, cp, deadline=time.monotonic() - 1)
    assert not late.ok and late.timed_out and late.failing_step is None
    assert late.checked < n and f"of its {n} steps" in late.detail


def test_decide_answers_timeout_when_the_check_cannot_finish(monkeypatch):
    prob = parse_text(CHAIN, "chain.nj")
    settings = V.Settings(limits=V.Limits(time=10), model_search=False)
    ok = pipeline.decide(prob, "reach", settings)
    assert ok["status"] == V.THEOREM and ok["certificate"]["kind"] == "proof-replayed"
    # an allowance that has run out before the check starts
    monkeypatch.setattr(V, "check_allowance", lambda limit: -1000.0)
    res = pipeline.decide(prob, "reach", settings)
    assert res["status"] == V.TIMEOUT
    assert res["proof"] is None and res["axioms_used"] == []
    assert res["certificate"]["kind"] == "none"
    assert res["reason"].startswith("a proof was found after ")
    assert "a longer time limit may settle it" in res["reason"]


def test_the_service_hard_stop_covers_the_allowance():
    cfg = Config()
    assert hard_stop_seconds(2, cfg) == 2 + 0.4 + cfg.grace_seconds
    assert hard_stop_seconds(100, cfg) == 100 + 20 + cfg.grace_seconds

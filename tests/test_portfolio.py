"""The portfolio: the result contract, the schedule, model search
interleaving, equality as axioms."""

import time

import pytest

from worker import verdict as V
from worker import portfolio
from worker.clausify import clausify
from worker.equality_axioms import equality_axioms
from worker.saturation import strategy as S
from worker.syntax import parse_text

GROUP = """
axiom left_identity: forall x. e * x = x
axiom left_inverse: forall x. i(x) * x = e
axiom associativity: forall x y z. (x * y) * z = x * (y * z)
"""


def cp_of(text):
    p = parse_text(text, "t.nj")
    return clausify(p, p.obligations()[0])


def settings(**kw):
    lim = kw.pop("limits", V.Limits(time=5))
    return V.Settings(limits=lim, **kw)


KEYS = {"outcome", "proof", "model", "complete", "limit", "strategy", "figures", "reason"}


def test_refutation_result_contract():
    cp = cp_of(GROUP + "conjecture g: forall x. x * e = x\n")
    out = portfolio.run(cp, settings(model_search=False), time.monotonic() + 5)
    assert KEYS <= set(out)
    assert out["outcome"] == "refutation" and out["strategy"] in S.STRATEGIES
    assert out["proof"]["skolems"] and out["proof"]["axioms_used"]
    for k in ("given", "generated", "kept", "cpu_seconds"):
        assert k in out["figures"]


def test_named_strategy_is_used():
    cp = cp_of(GROUP + "conjecture g: forall x. i(i(x)) = x\n")
    out = portfolio.run(cp, settings(strategy="rewrite", model_search=False),
                        time.monotonic() + 5)
    assert out["outcome"] == "refutation" and out["strategy"] == "rewrite"
    with pytest.raises(KeyError):
        S.get("no-such-strategy")


def test_default_schedule_names_known_strategies():
    assert S.DEFAULT_SCHEDULE and all(n in S.STRATEGIES for n, _ in S.DEFAULT_SCHEDULE)
    assert all(0 < share <= 1 for _, share in S.DEFAULT_SCHEDULE)


def test_model_search_answers_a_non_theorem():
    cp = cp_of("axiom h: forall x. exists y. p(x, y)\nconjecture swap: exists y. forall x. p(x, y)\n")
    out = portfolio.run(cp, settings(), time.monotonic() + 5)
    assert out["outcome"] == "model"
    assert out["model"]["size"] >= 2


def test_saturation_without_model_search():
    cp = cp_of("axiom h: p(a)\nconjecture g: p(b)\n")
    out = portfolio.run(cp, settings(model_search=False), time.monotonic() + 5)
    assert out["outcome"] == "saturated" and out["complete"] is True


ENDLESS = """
axiom irreflexive: forall x. not lt(x, x)
axiom transitive: forall x y z. lt(x, y) and lt(y, z) implies lt(x, z)
axiom unbounded: forall x. exists y. lt(x, y)
"""   # satisfiable, but only by infinite models: no strategy can finish


def test_limit_outcome_when_time_runs_out():
    cp = cp_of(ENDLESS)
    t0 = time.monotonic()
    out = portfolio.run(cp, settings(model_search=False), time.monotonic() + 1.0)
    assert out["outcome"] == "limit" and out["limit"] == "time"
    assert time.monotonic() - t0 < 3.0


def test_equality_axioms_mode():
    cp = cp_of(GROUP + "conjecture g: forall x y. i(x) * (x * y) = y\n")
    ax = equality_axioms(cp)
    # reflexivity, symmetry, transitivity, then one congruence clause per argument
    # of * (2) and i (1)
    assert len(ax) == 3 + 2 + 1
    cp = cp_of("axiom h1: a = b\naxiom h2: b = c\naxiom h3: p(f(a, a))\n"
               "conjecture g: f(c, a) = f(a, c) and p(f(c, c))\n")
    out = portfolio.run(cp, settings(equality="axioms", model_search=False),
                        time.monotonic() + 8)
    assert out["outcome"] == "refutation"
    rules = {s["rule"] for s in out["proof"]["steps"]}
    assert "equality_axiom" in rules
    assert not rules & {"superposition", "demodulation", "equality_resolution"}


def test_unknown_strategy_is_an_input_error():
    from worker.syntax.errors import InputError
    cp = cp_of("axiom h: p(a)\nconjecture g: p(a)\n")
    with pytest.raises(InputError):
        portfolio.run(cp, settings(strategy="nonsense"), time.monotonic() + 1)


def test_memory_exhausted_in_model_search_reports_memory_out(monkeypatch):
    """A model search that runs out of memory is dropped and proof search goes
    on; when the run then ends on time, the limit reported is memory (so the
    verdict is MemoryOut, not Timeout)."""
    from worker.models import search as MS

    def boom(self, deadline):
        raise MemoryError
    monkeypatch.setattr(MS.ModelSearch, "run", boom)
    # group commutativity: no proof exists, and with model search failing
    # nothing else can settle it within the second
    cp = cp_of(GROUP + "conjecture c: forall x y. x * y = y * x\n")
    out = portfolio.run(cp, settings(strategy="steady", limits=V.Limits(time=1)),
                        time.monotonic() + 1)
    assert out["outcome"] == "limit" and out["limit"] == "memory", out["reason"]
    assert "memory" in out["reason"]


def test_a_timeout_says_which_model_sizes_were_excluded():
    """Time spent in the model search is not lost on a Timeout: the reason
    says up to which size there is no countermodel.  (A strict order without
    a greatest element has only infinite models: common practice.)"""
    from worker import verdict as V
    from worker.pipeline import decide
    from worker.syntax import parse_text
    p = parse_text("axiom irreflexive: forall x. not lt(x, x)\n"
                   "axiom transitive: forall x y z. lt(x, y) and lt(y, z) implies lt(x, z)\n"
                   "axiom unbounded: forall x. exists y. lt(x, y)\n"
                   "conjecture bogus: lt(c, d)\n", "t.nj")
    res = decide(p, "bogus", V.Settings(limits=V.Limits(time=2.0)))
    assert res["status"] == V.TIMEOUT
    assert "no countermodel of size 1 to " in res["reason"], res["reason"]

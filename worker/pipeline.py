"""The whole path of one proof obligation: clausify, run the portfolio,
certify, and turn the outcome into an SZS verdict.

``decide(problem, conjecture, settings) -> dict`` (the result contract in
DEVELOPERS.md).  Pure computation: no Redis, no Flask.
"""

from __future__ import annotations

import time

from . import reserve
from . import verdict as V
from .syntax.errors import InputError


def _certify_proof(proof, problem, cp, deadline=None):
    from .certify.proofcheck import check_proof
    return check_proof(proof, problem, cp, deadline)


def _certify_model(model, problem, conjecture):
    from .certify.evaluate import check_model
    return check_model(model, problem, conjecture)


def _conj_used(proof) -> bool:
    return any(s.get("rule") == "input" and s.get("conj") for s in proof["steps"])


def _user_model(model, problem):
    """Drop the symbols clausification introduced."""
    keep = problem.signature
    out = {"size": model["size"], "functions": {}, "predicates": {}}
    for kind in ("functions", "predicates"):
        for name, table in model.get(kind, {}).items():
            if name in keep:
                out[kind][name] = table
    return out


def decide(problem, conjecture, settings: V.Settings | None = None) -> dict:
    """Decide one obligation.  Never raises for a problem the reader accepted:
    every failure becomes a status (Error carries its reason)."""
    from .clausify import clausify
    from .portfolio import run as run_portfolio

    settings = settings or V.Settings()
    t0 = time.monotonic()
    deadline = t0 + settings.limits.time
    res = {"conjecture": conjecture, "status": V.ERROR, "seconds": 0.0,
           "strategy": None, "reason": "", "figures": {}, "axioms_used": [],
           "proof": None, "model": None,
           "certificate": V.certificate("none")}
    try:
        cp = clausify(problem, conjecture)
        out = run_portfolio(cp, settings, deadline)
        res["strategy"] = out.get("strategy")
        res["figures"] = dict(out.get("figures") or {})
        res["figures"].setdefault("input_clauses", len(cp.clauses))
        res["reason"] = out.get("reason") or ""
        outcome = out["outcome"]
        if outcome == "refutation":
            proof = out["proof"]
            proof.setdefault("conjecture", conjecture)
            tc = time.monotonic()
            allowance = V.check_allowance(settings.limits.time)
            rep = _certify_proof(proof, problem, cp, deadline + allowance)
            res["figures"]["check_seconds"] = round(time.monotonic() - tc, 4)
            if rep.timed_out:
                # never a verdict unchecked: the time ran out before the
                # proof was certified (it is not kept: nothing vouches for it)
                res["status"] = V.TIMEOUT
                res["reason"] = (f"a proof was found after {tc - t0:.1f} s, but {rep.detail} "
                                 f"when the time limit plus the checking allowance "
                                 f"({allowance:g} s) ran out; "
                                 f"a longer time limit may settle it")
            elif not rep.ok:
                res["proof"] = proof
                res["axioms_used"] = list(proof.get("axioms_used") or [])
                res["status"] = V.ERROR
                res["certificate"] = V.certificate("failed", rep.checked, rep.detail)
                res["reason"] = (f"internal error: the proof checker refused step "
                                 f"{rep.failing_step}: {rep.detail}")
            else:
                res["proof"] = proof
                res["axioms_used"] = list(proof.get("axioms_used") or [])
                res["certificate"] = V.certificate("proof-replayed", rep.checked, rep.detail)
                if conjecture is None:
                    res["status"] = V.UNSATISFIABLE
                elif _conj_used(proof):
                    res["status"] = V.THEOREM
                else:
                    res["status"] = V.CONTRADICTORY_AXIOMS
                    res["reason"] = ("the axioms contradict each other: the proof "
                                     "never uses the conjecture, so every conjecture "
                                     "follows from these axioms")
        elif outcome == "model":
            model = out["model"]
            tc = time.monotonic()
            rep = _certify_model(model, problem, conjecture)
            res["figures"]["check_seconds"] = round(time.monotonic() - tc, 4)
            kind = "model-evaluated" if rep.ok else "failed"
            # the values that falsify the failing statement, as data (the
            # key is always there for a model's certificate: null when none)
            res["certificate"] = dict(V.certificate(kind, rep.checked, rep.detail),
                                      fails_for=rep.fails_for)
            if rep.ok:
                res["model"] = _user_model(model, problem)
                res["status"] = V.SATISFIABLE if conjecture is None else V.COUNTER_SATISFIABLE
            else:
                res["status"] = V.ERROR
                res["reason"] = f"internal error: the model evaluator refused the model: {rep.detail}"
        elif outcome == "saturated":
            if out.get("complete"):
                res["status"] = V.SATISFIABLE if conjecture is None else V.COUNTER_SATISFIABLE
                res["certificate"] = V.certificate(
                    "none", 0, "saturated under a complete strategy without the empty clause")
            else:
                res["status"] = V.GAVE_UP
                res["reason"] = res["reason"] or "saturated under an incomplete strategy"
        else:  # limit
            lim = out.get("limit") or "time"
            res["status"] = {"time": V.TIMEOUT, "memory": V.MEMORY_OUT}.get(lim, V.RESOURCE_OUT)
            res["reason"] = res["reason"] or f"{lim} limit reached"
    except MemoryError:
        reserve.release()
        res["status"] = V.MEMORY_OUT
        res["reason"] = "memory limit reached"
    except InputError as e:
        res["status"] = V.INPUT_ERROR
        res["reason"] = e.render()
    except RecursionError:
        res["status"] = V.RESOURCE_OUT
        res["reason"] = "terms nest too deeply for the engine (recursion limit)"
    except Exception as e:  # a bug: report it as Error, never as a verdict
        res["status"] = V.ERROR
        res["reason"] = f"internal error: {type(e).__name__}: {e}"
    cp = out = None           # the clauses and the search's answer may be large
    res["seconds"] = round(time.monotonic() - t0, 4)
    return res


def decide_all(problem, settings: V.Settings | None = None) -> list[dict]:
    """One result per obligation of the problem, in file order."""
    return [decide(problem, c, settings) for c in problem.obligations()]

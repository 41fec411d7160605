"""The portfolio: which strategies run, in what order, for how long, all
under the one deadline of the obligation; finite model search interleaved.

``run(cp, settings, deadline) -> dict`` (contract in DEVELOPERS.md, "The
saturation engine").
"""

from __future__ import annotations

import time

from .equality_axioms import equality_axioms, uses_equality
from .saturation import strategy as S
from .saturation.kbo import make_kbo
from .saturation.loop import Saturation
from .saturation.proof import extract

_SUM = ("given", "generated", "kept", "demodulations", "forward_subsumed",
        "backward_deleted", "subsumption_resolutions", "tautologies", "cpu_seconds")


def _model_search(cp, settings):
    if not settings.model_search:
        return None
    try:
        from .models.search import ModelSearch
    except ImportError:
        return None
    try:
        return ModelSearch(cp, max_size=settings.max_model_size)
    except Exception:        # a model search that cannot start must not stop proving
        return None


def engine_inputs(cp, equality: str = "builtin") -> list:
    """The clauses the loop starts from: ``(lits, rule, fields, conj)``."""
    inputs = [(ic.lits, "input",
               {"formula": ic.source, "role": ic.role, "conj": bool(ic.conj)},
               bool(ic.conj)) for ic in cp.clauses]
    if equality == "axioms" and uses_equality(cp):
        inputs += [(lits, "equality_axiom", {}, False) for lits in equality_axioms(cp)]
    return inputs


def run_strategy(cp, strat: S.Strategy, deadline: float, *, equality: str = "builtin",
                 cpu_deadline: float | None = None, memory_mb=None,
                 max_clauses=None) -> dict:
    """One saturation run; the result has the portfolio's keys."""
    inputs = engine_inputs(cp, equality)
    arities = {n: s.arity for n, s in (cp.signature or {}).items()}
    kbo = make_kbo([x[0] for x in inputs], arities, strat.precedence, strat.unary_zero,
                   strat.symbol_order, strat.symbol_weights)
    cpu = None
    if cpu_deadline is not None:
        cpu = max(0.0, cpu_deadline - time.process_time())
    sat = Saturation(inputs, strat, kbo, eq_builtin=(equality != "axioms"),
                     deadline=deadline, cpu_limit=cpu, memory_mb=memory_mb,
                     max_clauses=max_clauses)
    r = sat.run()
    out = {"outcome": r["outcome"], "strategy": strat.name, "figures": r["figures"],
           "reason": r["reason"], "limit": r["limit"], "proof": None, "model": None,
           "complete": False}
    if r["outcome"] == "refutation":
        out["proof"] = extract(r["empty"], cp)
    elif r["outcome"] == "saturated":
        out["complete"] = strat.complete
        if not strat.complete:
            out["reason"] = (f"saturated under strategy {strat.name}, which is incomplete "
                             "(set of support), so this says nothing")
    return out


def run(cp, settings, deadline: float) -> dict:
    """Run the schedule (or the one strategy ``settings.strategy``) until an
    answer or the deadline."""
    lim = settings.limits
    t0 = time.monotonic()
    cpu_deadline = (time.process_time() + lim.cpu) if lim.cpu else None
    totals = {k: 0 for k in _SUM}
    tried = []
    notes: list = []

    def finish(out):
        figs = dict(out.get("figures") or {})
        for k in _SUM:
            figs[k] = round(totals[k], 4) if k == "cpu_seconds" else totals[k]
        figs["strategies_tried"] = len(tried)
        if notes:
            out["reason"] = ((out.get("reason") or "") + " (" + "; ".join(notes) + ")").strip()
        figs["seconds"] = round(time.monotonic() - t0, 4)
        out["figures"] = figs
        return out

    ms = _model_search(cp, settings)

    def model_slice(seconds):
        nonlocal ms
        if ms is None or getattr(ms, "exhausted", False):
            return None
        end = min(deadline, time.monotonic() + max(0.0, seconds))
        c0 = time.process_time()
        try:
            m = ms.run(end)
        except MemoryError:
            ms = None
            return None
        except Exception as e:   # a failing model search must not stop the proof search
            ms = None
            notes.append(f"model search stopped: {type(e).__name__}: {e}")
            return None
        totals["cpu_seconds"] += time.process_time() - c0
        if m is not None:
            tried.append("model-search")
            return finish({"outcome": "model", "model": m, "strategy": "model-search",
                           "proof": None, "complete": False, "limit": None,
                           "reason": "a finite model of the clauses was found",
                           "figures": {}})
        return None

    if settings.strategy:
        if settings.strategy not in S.STRATEGIES:
            from .syntax.errors import InputError
            raise InputError(f"unknown strategy {settings.strategy!r}; known: "
                             + ", ".join(sorted(S.STRATEGIES)))
        plan = [(S.get(settings.strategy), 1.0)]
    else:
        plan = [(S.get(n), share) for n, share in S.DEFAULT_SCHEDULE]

    budget = max(0.0, deadline - time.monotonic())
    got = model_slice(min(0.5, 0.05 * budget))
    if got:
        return got
    fallback = None
    last = None
    for k, (strat, share) in enumerate(plan):
        now = time.monotonic()
        if now >= deadline:
            break
        if cpu_deadline is not None and time.process_time() >= cpu_deadline:
            break
        final = k == len(plan) - 1
        end = deadline if final else now + share * (deadline - now)
        tried.append(strat.name)
        out = run_strategy(cp, strat, end, equality=settings.equality,
                           cpu_deadline=cpu_deadline, memory_mb=lim.memory_mb,
                           max_clauses=lim.max_clauses)
        for key in _SUM:
            totals[key] += out["figures"].get(key, 0)
        last = out
        if out["outcome"] == "refutation":
            return finish(out)
        if out["outcome"] == "saturated":
            if out["complete"]:
                return finish(out)
            fallback = out
        if out["outcome"] == "limit" and out["limit"] == "memory":
            return finish(out)
        if not final:
            got = model_slice(0.15 * max(0.0, deadline - time.monotonic()))
            if got:
                return got
    # the last chance for the model search: whatever time is left
    got = model_slice(deadline - time.monotonic())
    if got:
        return got
    if time.monotonic() < deadline and fallback is not None:
        return finish(fallback)
    if last is None:
        last = {"outcome": "limit", "limit": "time", "strategy": None, "proof": None,
                "model": None, "complete": False, "reason": "no time to run", "figures": {}}
    if last["outcome"] != "limit":
        last = dict(last, outcome="limit", limit="time", complete=False,
                    reason="time limit reached")
    if fallback is not None and last["outcome"] == "limit" and last["limit"] == "time":
        last["reason"] = "time limit reached (one strategy saturated, but it was incomplete)"
    return finish(last)

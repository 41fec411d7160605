"""The portfolio: which strategies run, in what order, for how long, all
under the one deadline of the obligation; finite model search interleaved.

``run(cp, settings, deadline) -> dict`` (contract in DEVELOPERS.md, "The
saturation engine").
"""

from __future__ import annotations

import gc
import time
from dataclasses import replace

from . import reserve
from .equality_axioms import equality_axioms, uses_equality
from .saturation import strategy as S
from .saturation.kbo import make_kbo
from .saturation.loop import Saturation
from .saturation.proof import extract

_SUM = ("given", "generated", "kept", "demodulations", "forward_subsumed",
        "backward_deleted", "subsumption_resolutions", "tautologies", "repeats",
        "cpu_seconds")


def _model_search(cp, settings):
    if not settings.model_search:
        return None
    from .models.search import ModelSearch
    try:
        return ModelSearch(cp, max_size=settings.max_model_size)
    except Exception:        # a model search that cannot start must not stop proving
        return None


# The finite-domain argument (see DEVELOPERS.md, "The saturation engine"):
# claimed for domain-closure clauses of at most this many constants, and only
# when the checker's exhaustive evaluation stays under its cap (the same
# figure as worker.certify.proofcheck.FINITE_DOMAIN_CAP).
# The probe of the first strategy before the model search's first slice:
# at most this many seconds (and 2 % of the budget).
PROBE_SECONDS = 0.1

FINITE_DOMAIN_MAX_BOUND = 4
FINITE_DOMAIN_CAP = 300_000


def closure_bound(lits):
    """The number of distinct constants of a domain-closure clause
    ``X = c_1 or ... or X = c_n`` (all literals positive equations between
    one and the same variable and constants), or None for any other clause."""
    var, consts = None, set()
    for sign, atom in lits:
        if not (sign and type(atom) is tuple and atom[0] == "=" and len(atom) == 3):
            return None
        l, r = atom[1], atom[2]
        if type(l) is str and type(r) is int:
            l, r = r, l
        if type(l) is not int or type(r) is not str or (var is not None and l != var):
            return None
        var = l
        consts.add(r)
    return len(consts) or None


def finite_domain_count(cp, bound: int) -> int:
    """How many interpretations of the user's symbols (the signature without
    the Skolem and definition symbols) the domains of size 1..bound have."""
    user = [s for n, s in (cp.signature or {}).items()
            if n != "=" and n not in (cp.skolems or {}) and n not in (cp.definitions or {})]
    total = 0
    for n in range(1, bound + 1):
        c = 1
        for s in user:
            c *= (2 if s.kind == "predicate" else n) ** (n ** s.arity)
            if c > FINITE_DOMAIN_CAP:
                return FINITE_DOMAIN_CAP + 1
        total += c
    return total


def finite_domain_proof(cp, closure_index: int, bound: int, count: int) -> dict:
    """The proof: every input clause as an input step, then one
    ``finite_domain`` step from all of them (DEVELOPERS.md, "Proofs")."""
    from .syntax.terms import clause_to_json
    steps, axioms = [], []
    for k, ic in enumerate(cp.clauses):
        steps.append({"id": k + 1, "clause": clause_to_json(ic.lits), "rule": "input",
                      "parents": [], "formula": ic.source, "role": ic.role,
                      "conj": bool(ic.conj)})
        if not ic.conj and ic.source not in axioms:
            axioms.append(ic.source)
    steps.append({"id": len(steps) + 1, "clause": [], "rule": "finite_domain",
                  "parents": [st["id"] for st in steps], "closure": closure_index + 1,
                  "bound": bound, "interpretations": count,
                  "conj": any(ic.conj for ic in cp.clauses)})
    sources = {ic.source for ic in cp.clauses}
    return {"steps": steps, "conjecture": cp.conjecture, "axioms_used": axioms,
            "skolems": {n: {"arity": sk.arity, "statement": sk.statement}
                        for n, sk in (cp.skolems or {}).items() if sk.statement in sources},
            "definitions": {n: {"arity": d.arity, "statement": d.statement,
                                "formula": d.formula, "polarity": d.polarity}
                            for n, d in (cp.definitions or {}).items()
                            if d.statement in sources}}


def _closure_candidates(cp) -> list:
    """``(bound, clause index, count)`` for the domain-closure input clauses
    the argument may use, smallest bound first."""
    out = []
    for k, ic in enumerate(cp.clauses):
        b = closure_bound(ic.lits)
        if b is not None and b <= FINITE_DOMAIN_MAX_BOUND:
            count = finite_domain_count(cp, b)
            if count <= FINITE_DOMAIN_CAP:
                out.append((b, k, count))
    return sorted(out)


def axiom_part(cp):
    """The obligation without its conjecture: the same problem with only the
    input clauses not derived from the (negated) conjecture."""
    return replace(cp, clauses=[ic for ic in cp.clauses if not ic.conj])


def axioms_excluded(cp, bound: int, deadline: float) -> bool:
    """Does a model search of its own, on the axioms' clauses alone, exclude
    every size 1..bound before the deadline?  False when it finds a model,
    runs out of time or cannot search those sizes."""
    from .models.search import ModelSearch
    try:
        search = ModelSearch(axiom_part(cp), max_size=bound)
        if search.max_size < bound or search.run(deadline) is not None:
            return False
        return all(n in search.sizes_excluded for n in range(1, bound + 1))
    except Exception:       # MemoryError included: the Theorem answer stands
        return False


def finite_domain_answer(cp, closures, excluded, deadline: float):
    """The finite-domain claim, or None.

    ``closures`` is ``_closure_candidates(cp)``, ``excluded`` the sizes the
    model search of all the clauses has excluded.  When some closure clause
    of bound n has sizes 1..n excluded, every input clause together is
    unsatisfiable.  Then, for an obligation with a conjecture, the closure
    clause of smallest bound among the axioms' (bound m) asks a second model
    search, on the axioms' clauses alone, until ``deadline``: when it
    excludes sizes 1..m too, the proof is made from the axioms' clauses only
    (no conjecture-derived step, so the pipeline reports ContradictoryAxioms
    and the checker evaluates the axioms alone).  Otherwise the proof uses
    every input clause (Theorem, or Unsatisfiable without a conjecture).
    Returns ``{"proof", "reason", "axioms_only"}``."""
    found = next(((b, k, c) for b, k, c in closures
                  if all(n in excluded for n in range(1, b + 1))), None)
    if found is None:
        return None
    if cp.conjecture is not None and any(ic.conj for ic in cp.clauses):
        own = next(((b, k, c) for b, k, c in closures if not cp.clauses[k].conj), None)
        if own is not None and axioms_excluded(cp, own[0], deadline):
            b, k, c = own
            ax = axiom_part(cp)
            j = sum(1 for ic in cp.clauses[:k] if not ic.conj)   # its index there
            return {"proof": finite_domain_proof(ax, j, b, c), "axioms_only": True,
                    "reason": (f"clause {k + 1} allows at most {b} element(s) and the "
                               f"axioms alone have no model of size 1..{b}")}
    bound, k, count = found
    return {"proof": finite_domain_proof(cp, k, bound, count), "axioms_only": False,
            "reason": (f"clause {k + 1} allows at most {bound} element(s) and no "
                       f"model of size 1..{bound} exists")}


def engine_inputs(cp, equality: str = "builtin") -> list:
    """The clauses the loop starts from: ``(lits, rule, fields, conj)``."""
    inputs = [(ic.lits, "input",
               {"formula": ic.source, "role": ic.role, "conj": bool(ic.conj),
                **({"varnames": ic.varnames} if any(ic.varnames) else {})},
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
    # The cyclic garbage collector stays off while the loop runs: the loop
    # makes no reference cycles worth collecting (clauses point to their
    # parents, indexes to clauses), while a collection over millions of live
    # terms stalls it for a tenth of a second at a time, past its limit checks.
    # It comes back on once the run's structures are freed (by reference
    # counting), so that it has only the survivors to look at.
    collecting = gc.isenabled()
    gc.disable()
    try:
        sat = Saturation(inputs, strat, kbo, eq_builtin=(equality != "axioms"),
                         deadline=deadline, cpu_limit=cpu, memory_mb=memory_mb,
                         max_clauses=max_clauses)
        r = sat.run()
        proof = extract(r["empty"], cp) if r["outcome"] == "refutation" else None
        r["empty"] = None
        del sat
    finally:
        if collecting:
            gc.enable()
    out = {"outcome": r["outcome"], "strategy": strat.name, "figures": r["figures"],
           "reason": r["reason"], "limit": r["limit"], "proof": proof, "model": None,
           "complete": False}
    if r["outcome"] == "saturated":
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
    memory_hit: list = []

    def finish(out):
        figs = dict(out.get("figures") or {})
        for k in _SUM:
            figs[k] = round(totals[k], 4) if k == "cpu_seconds" else totals[k]
        figs["strategies_tried"] = len(tried)
        if out.get("outcome") == "limit" and ms is not None:
            # what the time bought on the other side: the sizes without a model
            done = sorted(getattr(ms, "sizes_excluded", ()))
            k = 0
            while k < len(done) and done[k] == k + 1:
                k += 1
            if k:
                what = "countermodel" if cp.conjecture is not None else "model"
                notes.append(f"no {what} of size {'1' if k == 1 else '1 to ' + str(k)} exists")
        if notes:
            out["reason"] = "; ".join([r for r in [out.get("reason") or ""] if r] + notes)
        figs["seconds"] = round(time.monotonic() - t0, 4)
        out["figures"] = figs
        return out

    ms = _model_search(cp, settings)
    closures = _closure_candidates(cp) if ms is not None else []

    def finite_domain():
        """A domain-closure clause bounds every model by n elements and the
        model search has excluded sizes 1..n: unsatisfiable (from the axioms
        alone when they have no small model either; finite_domain_answer)."""
        if ms is None:
            return None
        excluded = set(getattr(ms, "sizes_excluded", ()))
        # the search of the axioms alone may take a quarter of what is left
        now = time.monotonic()
        got = finite_domain_answer(cp, closures, excluded,
                                   now + 0.25 * max(0.0, deadline - now))
        if got is None:
            return None
        tried.append("finite-domain")
        return finish({"outcome": "refutation", "strategy": "finite-domain",
                       "proof": got["proof"], "model": None, "complete": False,
                       "limit": None, "reason": got["reason"], "figures": {}})

    def model_slice(seconds):
        nonlocal ms
        if ms is None or getattr(ms, "exhausted", False):
            return None
        end = min(deadline, time.monotonic() + max(0.0, seconds))
        c0 = time.process_time()
        try:
            m = ms.run(end)
        except MemoryError:
            reserve.release()
            # the search's tables are dropped to free the memory; proof search
            # goes on, and a run that then ends on time reports MemoryOut
            ms = None
            memory_hit.append(True)
            notes.append("model search stopped: memory limit reached")
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
        return finite_domain()

    if settings.strategy:
        if settings.strategy not in S.STRATEGIES:
            from .syntax.errors import InputError
            raise InputError(f"unknown strategy {settings.strategy!r}; known: "
                             + ", ".join(sorted(S.STRATEGIES)))
        plan = [(S.get(settings.strategy), 1.0)]
    else:
        plan = [(S.get(n), share) for n, share in S.DEFAULT_SCHEDULE]

    def saturate(strat, end):
        """One saturation run until ``end``, its figures added to the totals."""
        out = run_strategy(cp, strat, end, equality=settings.equality,
                           cpu_deadline=cpu_deadline, memory_mb=lim.memory_mb,
                           max_clauses=lim.max_clauses)
        for key in _SUM:
            totals[key] += out["figures"].get(key, 0)
        return out

    budget = max(0.0, deadline - time.monotonic())
    if PROBE_SECONDS > 0 and ms is not None and not getattr(ms, "exhausted", False):
        # a short probe of the first strategy before the model search's first
        # slice: an easy theorem is answered at once instead of waiting for
        # that slice (up to half a second) to run out
        strat0 = plan[0][0]
        out = saturate(strat0, min(deadline, time.monotonic()
                                   + min(PROBE_SECONDS, 0.02 * budget)))
        if out["outcome"] == "refutation":
            tried.append(strat0.name)
            return finish(out)
        if out["outcome"] == "saturated" and out["complete"]:
            # satisfiable: a model would be a checked answer, saturation is not;
            # the model search gets its first slice to find one
            got = model_slice(min(0.5, 0.05 * budget))
            if got:
                return got
            tried.append(strat0.name)
            return finish(out)
        if out["outcome"] == "limit" and out["limit"] == "memory":
            tried.append(strat0.name)
            return finish(out)
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
        out = saturate(strat, end)
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
        last["reason"] = ("time limit reached; a set-of-support strategy ran out of "
                          "inferences, which proves nothing")
    if memory_hit and last["outcome"] == "limit" and last["limit"] == "time":
        last = dict(last, limit="memory",
                    reason="memory limit reached in the model search; the proof "
                           "search then ran out of time")
    return finish(last)

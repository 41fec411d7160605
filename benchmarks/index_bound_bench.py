"""How much faster than the naive linear scan could any index make a run?

For each problem, strategy ``steady`` runs twice: with the linear scan and
with the fingerprint indexes.  In the indexed run the time spent in work that
a perfect index would do away with is measured separately:

- retrieval itself (walking the tries, computing fingerprints, the
  feature-vector filters in front of subsumption);
- the exact checks of candidates that fail (a matcher, unifier, subsumption
  or subsumption-resolution test that answers no).

What is left (the unmetered run's CPU time less the two measured parts) is
work that any index leaves to do: drawing the conclusions,
renumbering and hashing them, the rewrites and the ordering tests that do
happen, the subsumption tests that succeed.  ``naive / left`` is then an
upper bound on the indexed-vs-naive ratio for that run (the timers' own cost
falls inside the measured parts, so the bound is if anything generous).

    .venv/bin/python benchmarks/index_bound_bench.py corpus/checks/algebra/boolean_ring.nj

The figures are CPU seconds; the machine may be shared, so run it more than
once and quote medians.
"""

from __future__ import annotations

import os
import sys
import time

sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))

from benchmarks.engine_bench import _obligations  # noqa: E402
from worker.portfolio import run_strategy  # noqa: E402
from worker.saturation import index as IX  # noqa: E402
from worker.saturation import loop as L  # noqa: E402
from worker.saturation import strategy as S  # noqa: E402

clock = time.process_time


class Meter:
    def __init__(self):
        self.retrieval = 0.0
        self.failed = 0.0
        self.calls = 0

    def timed_retrieval(self, fn):
        def wrapped(*a):
            t0 = clock()
            try:
                return fn(*a)
            finally:
                self.retrieval += clock() - t0
        return wrapped

    def timed_check(self, fn, failed=lambda r: not r):
        def wrapped(*a, **kw):
            t0 = clock()
            r = fn(*a, **kw)
            if failed(r):
                self.failed += clock() - t0
            return r
        return wrapped


def measured_run(cp, strat):
    """A run of ``strat`` with the meters in place; returns (cpu, meter, out)."""
    m = Meter()
    saved = {
        "ret": IX.FingerprintIndex._retrieve,
        "match": L.match, "unify": L.unify,
        "subsumes": L.R.subsumes, "cut": L.R.find_subsumption_resolution,
        "may_subsume": L.may_subsume, "may_cut": L.may_cut,
    }
    IX.FingerprintIndex._retrieve = m.timed_retrieval(saved["ret"])
    L.match = m.timed_check(saved["match"])
    L.unify = m.timed_check(saved["unify"])
    L.R.subsumes = m.timed_check(saved["subsumes"], lambda r: r is None)
    L.R.find_subsumption_resolution = m.timed_check(saved["cut"], lambda r: r is None)
    L.may_subsume = m.timed_retrieval(saved["may_subsume"])
    L.may_cut = m.timed_retrieval(saved["may_cut"])
    try:
        c0 = clock()
        out = run_strategy(cp, strat, time.monotonic() + 600, cpu_deadline=c0 + 120)
        cpu = clock() - c0
    finally:
        IX.FingerprintIndex._retrieve = saved["ret"]
        L.match, L.unify = saved["match"], saved["unify"]
        L.R.subsumes, L.R.find_subsumption_resolution = saved["subsumes"], saved["cut"]
        L.may_subsume, L.may_cut = saved["may_subsume"], saved["may_cut"]
    return cpu, m, out


def main(argv=None) -> int:
    paths = (argv if argv is not None else sys.argv[1:]) or ["corpus/checks/algebra/boolean_ring.nj"]
    for path in paths:
        for k, cp in enumerate(_obligations(path)):
            c0 = clock()
            naive = run_strategy(cp, S.get("steady-linear"), time.monotonic() + 600,
                                 cpu_deadline=c0 + 120)
            naive_cpu = clock() - c0
            c0 = clock()
            plain = run_strategy(cp, S.get("steady"), time.monotonic() + 600,
                                 cpu_deadline=c0 + 120)
            plain_cpu = clock() - c0
            cpu, m, out = measured_run(cp, S.get("steady"))
            # the meters' own cost falls inside the measured parts, so taking
            # them from the unmetered run's total leaves too little, if anything
            left = max(plain_cpu - m.retrieval - m.failed, 1e-3)
            label = os.path.basename(path) + f"#{k + 1}"
            print(f"{label}: naive {naive_cpu:.2f} s ({naive['outcome']}, given "
                  f"{naive['figures']['given']}); indexed {plain_cpu:.2f} s "
                  f"({plain['outcome']}, given {plain['figures']['given']}); "
                  f"ratio {naive_cpu / max(plain_cpu, 1e-3):.1f}")
            print(f"  indexed run with meters {cpu:.2f} s: retrieval and filters "
                  f"{m.retrieval:.2f} s, failing candidate checks {m.failed:.2f} s; "
                  f"left for any index {left:.2f} s of the {plain_cpu:.2f} s")
            print(f"  upper bound on the ratio with a perfect, free index: "
                  f"{naive_cpu / left:.1f}", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""Finite model search: figures on a CounterSatisfiable set, time per domain
size, and the SAT solver comparison behind the default choice.

    .venv/bin/python benchmarks/models_bench.py            # everything
    .venv/bin/python benchmarks/models_bench.py --quick    # the set only
    .venv/bin/python benchmarks/models_bench.py --solvers cadical195,glucose4

The set: our own problems below (facts of common practice, sizes from
standard algebra) plus every obligation a corpus suite (corpus/**/suite*.toml) expects to be
CounterSatisfiable, read with the suite's axioms.  Each model found is checked by the
independent evaluator (worker.certify.evaluate).
"""

from __future__ import annotations

import argparse
import glob
import os
import statistics
import sys
import time
import tomllib

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, ROOT)

from worker.certify.evaluate import check_model          # noqa: E402
from worker.clausify import clausify                     # noqa: E402
from worker.models.search import ModelSearch             # noqa: E402
from worker.syntax import parse_text  # noqa: E402

GROUP = """
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit:  forall x. e * x = x and x * e = x
axiom inv:   forall x. i(x) * x = e and x * i(x) = e
"""
RING = """
axiom add_assoc: forall x y z. (x + y) + z = x + (y + z)
axiom add_comm:  forall x y. x + y = y + x
axiom add_zero:  forall x. x + 0 = x
axiom add_neg:   forall x. x + neg(x) = 0
axiom mul_assoc: forall x y z. (x * y) * z = x * (y * z)
axiom left_dist:  forall x y z. x * (y + z) = x * y + x * z
axiom right_dist: forall x y z. (x + y) * z = x * z + y * z
"""
LATTICE = """
axiom meet_comm:  forall x y. m(x, y) = m(y, x)
axiom join_comm:  forall x y. j(x, y) = j(y, x)
axiom meet_assoc: forall x y z. m(m(x, y), z) = m(x, m(y, z))
axiom join_assoc: forall x y z. j(j(x, y), z) = j(x, j(y, z))
axiom absorb1:    forall x y. m(x, j(x, y)) = x
axiom absorb2:    forall x y. j(x, m(x, y)) = x
"""

# name, text, conjecture, expected smallest size (None: no finite model), source
OWN = [
    ("group_commutative", GROUP + "conjecture c: forall x y. x * y = y * x\n", "c", 6,
     "the smallest non-abelian group has order 6 (standard algebra)"),
    ("quantifier_swap", "axiom a: forall x. exists y. p(x, y)\n"
     "conjecture c: exists y. forall x. p(x, y)\n", "c", 2, "common practice"),
    ("band_commutative", "axiom assoc: forall x y z. (x * y) * z = x * (y * z)\n"
     "axiom idem: forall x. x * x = x\nconjecture c: forall x y. x * y = y * x\n", "c", 2,
     "left-zero band on two elements (common practice)"),
    ("lattice_distributive", LATTICE + "conjecture c: forall x y z. "
     "m(x, j(y, z)) = j(m(x, y), m(x, z))\n", "c", 5,
     "smallest non-distributive lattices have 5 elements (standard lattice theory)"),
    ("ring_commutative", RING + "conjecture c: forall x y. x * y = y * x\n", "c", 4,
     "smallest non-commutative ring has order 4 (standard algebra, from memory)"),
    ("unital_ring_commutative", RING + "axiom one: forall x. 1 * x = x and x * 1 = x\n"
     "conjecture c: forall x y. x * y = y * x\n", "c", 8,
     "smallest non-commutative ring with one has order 8 (standard algebra, from memory)"),
    ("group_exponent_three_commutative", GROUP + "axiom cube: forall x. x * (x * x) = e\n"
     "conjecture c: forall x y. x * y = y * x\n", "c", None,
     "smallest non-abelian group of exponent 3 has order 27 (standard algebra): none up to 8"),
    ("strict_order_unbounded", "axiom irr: forall x. not lt(x, x)\n"
     "axiom tr: forall x y z. lt(x, y) and lt(y, z) implies lt(x, z)\n"
     "axiom up: forall x. exists y. lt(x, y)\n", None, None,
     "only infinite models (common practice)"),
    ("injective_not_onto", "axiom inj: forall x y. f(x) = f(y) implies x = y\n"
     "axiom miss: forall x. f(x) != c\n", None, None,
     "a finite set has no injection onto a proper subset (common practice)"),
]


def corpus_cases():
    """(label, Problem, conjecture) of every obligation a corpus suite expects
    to be CounterSatisfiable or Satisfiable (suite axioms included)."""
    from service.corpus import load_suite, obligation_key
    out = []
    for manifest in sorted(glob.glob(os.path.join(ROOT, "corpus", "**", "suite*.toml"),
                                     recursive=True)):
        suite = load_suite(manifest)
        for sp in suite.problems:
            for c in sp.obligations:
                key = obligation_key(sp.file, c)
                if suite.expectations.get(key) in ("CounterSatisfiable", "Satisfiable"):
                    label = os.path.relpath(manifest, os.path.join(ROOT, "corpus"))
                    out.append((f"{os.path.dirname(label)}/{key}", sp.problem, c))
    return out


def run_one(problem, conjecture, max_size, budget, solver):
    cp = clausify(problem, conjecture)
    t0 = time.monotonic()
    s = ModelSearch(cp, max_size=max_size, solver=solver)
    c0 = time.process_time()
    model = s.run(t0 + budget)
    secs = time.process_time() - c0
    ok, s.check_seconds = None, 0.0
    if model is not None:
        c1 = time.process_time()
        ok = check_model(model, problem, conjecture).ok
        s.check_seconds = time.process_time() - c1
    return model, secs, ok, s


def bench_set(max_size, budget, solver):
    print(f"== CounterSatisfiable set (solver {solver}, sizes up to {max_size}, "
          f"{budget:.0f} s each)")
    print(f"{'problem':52} {'found':>5} {'size':>4} {'expect':>6} {'cpu s':>8} {'eval s':>7}  checked")
    times, rows, checks = [], [], []
    cases = [(n, parse_text(t, n + ".nj"), c, exp) for n, t, c, exp, _src in OWN]
    for label, p, conj in corpus_cases():
        cases.append((label, p, conj, "?"))
    for label, p, conj, exp in cases:
        model, secs, ok, s = run_one(p, conj, max_size, budget, solver)
        times.append(secs)
        checks.append(s.check_seconds)
        size = model["size"] if model else "-"
        exp_s = "none" if exp is None else str(exp)
        print(f"{label[:52]:52} {'yes' if model else 'no':>5} {size:>4} {exp_s:>6} "
              f"{secs:8.3f} {s.check_seconds:7.4f}  {'evaluated ok' if ok else ('REFUSED' if ok is False else s.reason)}")
        rows.append((label, model, ok))
    found = sum(1 for _l, m, _o in rows if m)
    print(f"found {found} of {len(rows)}; median {statistics.median(times):.3f} CPU s, "
          f"total {sum(times):.2f} s; refused by the evaluator: "
          f"{sum(1 for _l, _m, o in rows if o is False)}; evaluation {sum(checks):.3f} CPU s in all, "
          f"{sum(checks) / max(sum(times), 1e-9):.1%} of the search time")
    return rows


def per_size(solver, text, conj, sizes):
    """Seconds to settle each fixed size alone (min_size = max_size = n)."""
    p = parse_text(text, "x.nj")
    cp = clausify(p, conj)
    out = {}
    for n in sizes:
        c0 = time.process_time()
        s = ModelSearch(cp, min_size=n, max_size=n, solver=solver)
        m = s.run(time.monotonic() + 120)
        out[n] = (time.process_time() - c0, "model" if m else ("none" if s.exhausted else "?"))
    return out


def incremental(solver, text, conj, max_size, split=True):
    """One search through sizes 1..max_size (resuming after each model)."""
    p = parse_text(text, "x.nj")
    cp = clausify(p, conj)
    s = ModelSearch(cp, max_size=max_size, solver=solver, split=split)
    t0, c0 = time.monotonic(), time.process_time()
    while not s.done and time.monotonic() - t0 < 300:
        s.run(time.monotonic() + 300)
    return time.process_time() - c0, s.figures["seconds"], s.figures["clauses"]


def overshoot(solver, slice_=0.3):
    from pysat.examples.genhard import PHP
    from worker.models.search import _Sat
    sat = _Sat(solver)
    sat.add_all(PHP(11).clauses)
    t0 = time.monotonic()
    sat.solve([], t0 + slice_)
    late = time.monotonic() - t0 - slice_
    sat.delete()
    return late


def bench_solvers(solvers, repeat):
    comm = GROUP + "conjecture c: forall x y. x * y = y * x\n"
    unital = OWN[5][1]
    lattice = OWN[3][1]
    print("\n(times are CPU seconds of this process: the machine is shared, wall "
          "time is noisy)")
    print("\n== group commutativity: CPU seconds per fixed domain size (median of "
          f"{repeat}), result")
    print(f"{'solver':12} " + " ".join(f"{n:>10}" for n in range(1, 9)))
    for solver in solvers:
        runs = [per_size(solver, comm, "c", range(1, 9)) for _ in range(repeat)]
        cells = []
        for n in range(1, 9):
            t = statistics.median(r[n][0] for r in runs)
            cells.append(f"{t:6.3f} {runs[0][n][1][:3]}")
        print(f"{solver:12} " + " ".join(f"{c:>10}" for c in cells))
    print("\n== one incremental search through sizes 1..8 (all models and exclusions), "
          f"CPU seconds, median of {repeat}")
    print(f"{'solver':12} {'group comm':>11} {'lattice':>9} {'unital ring':>12}")
    totals = {}
    for solver in solvers:
        g = statistics.median(incremental(solver, comm, "c", 8)[0] for _ in range(repeat))
        l = statistics.median(incremental(solver, lattice, "c", 7)[0] for _ in range(repeat))
        u = statistics.median(incremental(solver, unital, "c", 8)[0] for _ in range(repeat))
        totals[solver] = g + l + u
        print(f"{solver:12} {g:11.3f} {l:9.3f} {u:12.3f}")
    print("\n== deadline overshoot: pigeonhole formula with 11 holes, slice of 0.3 s, "
          f"median of {repeat} (seconds past the deadline)")
    for solver in solvers:
        print(f"{solver:12} {statistics.median(overshoot(solver) for _ in range(repeat)):.3f}")
    best = min(totals, key=totals.get)
    print("\n== clause splitting, one incremental search through size 8 with "
          f"{solvers[0]} (CPU seconds, clauses at the end)")
    for name, text in (("group comm", comm), ("lattice", lattice), ("unital ring", unital)):
        on = incremental(solvers[0], text, "c", 8, split=True)
        off = incremental(solvers[0], text, "c", 8, split=False)
        print(f"{name:12} split {on[0]:7.3f} s {on[2]:>10,}   unsplit {off[0]:7.3f} s "
              f"{off[2]:>10,}   ratio {off[0] / on[0]:.1f}x")
    print("sum (lower is better): " + ", ".join(
        f"{s} {t:.2f} s ({t / totals[best]:.2f}x)" for s, t in sorted(totals.items(), key=lambda x: x[1])))
    _, secs, clauses = incremental(best, comm, "c", 8)
    print(f"\nper-size wall seconds of one incremental group search with {best}: "
          + ", ".join(f"{n}: {t:.3f}" for n, t in sorted(secs.items()))
          + f"; {clauses:,} clauses at size 8")


def bench_enumeration():
    """Groups of order 1..8 up to isomorphism (OEIS A000001: 1 1 1 2 1 2 1 5)."""
    from worker.models.enumerate import enumerate_models
    cp = clausify(parse_text(GROUP, "g.nj"), None)
    print("\n== enumeration: groups of order n up to isomorphism (OEIS A000001: "
          "1 1 1 2 1 2 1 5)")
    cells = []
    for n in range(1, 9):
        c0 = time.process_time()
        iso = enumerate_models(cp, n)
        t_iso = time.process_time() - c0
        raw = enumerate_models(cp, n, up_to_isomorphism=False)
        cells.append(f"{n}: {len(iso)} ({len(raw)} found, {t_iso:.3f} CPU s)")
    print("; ".join(cells))


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="only the CounterSatisfiable set")
    ap.add_argument("--solvers", default="minisat22,glucose4,cadical195,maplechrono",
                    help="comma-separated python-sat solver names")
    ap.add_argument("--max-size", type=int, default=8)
    ap.add_argument("--budget", type=float, default=20.0, help="seconds per problem")
    ap.add_argument("--repeat", type=int, default=3)
    a = ap.parse_args(argv)
    solvers = a.solvers.split(",")
    bench_set(a.max_size, a.budget, solvers[0])
    if not a.quick:
        bench_enumeration()
        bench_solvers(solvers, a.repeat)


if __name__ == "__main__":
    main()

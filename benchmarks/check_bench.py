"""How long the proof checker takes next to the search it checks.

Runs ``worker.pipeline.decide`` on every obligation of the theorem suites
(corpus/checks/pelletier and corpus/checks/group-completion by default) and
prints, per problem, the status, the search seconds, the check seconds and
their ratio; then the checker's total time as a fraction of the total search
time, and the median ratio.  The check time is measured again here, outside
the pipeline, as the best of a few runs of ``check_proof`` on the same proof,
so that a slow first call (imports) does not count.

    .venv/bin/python benchmarks/check_bench.py [--time 10] [--suite DIR ...] [--only NAME ...]
        [--strategy NAME] [--no-spot-check]
"""

from __future__ import annotations

import argparse
import glob
import os
import statistics
import sys
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, ROOT)

from worker import verdict as V  # noqa: E402
from worker.certify import proofcheck  # noqa: E402
from worker.certify.proofcheck import check_proof  # noqa: E402
from worker.clausify import clausify  # noqa: E402
from worker.pipeline import decide  # noqa: E402
from worker.syntax import load_problem  # noqa: E402

SUITES = ["corpus/checks/pelletier", "corpus/checks/group-completion"]


def problem_files(suite: str) -> list[str]:
    files = sorted(glob.glob(os.path.join(ROOT, suite, "*.p")) +
                   glob.glob(os.path.join(ROOT, suite, "*.nj")))
    return [f for f in files if os.path.basename(f) != "axioms.nj"]


def recheck_seconds(proof, problem, conjecture, repeat: int = 3,
                    spot: bool = True) -> tuple[float, bool]:
    cp = clausify(problem, conjecture)
    best = float("inf")
    ok = True
    proofcheck.SPOT_CHECK = spot
    try:
        for _ in range(repeat):
            t0 = time.perf_counter()
            rep = check_proof(proof, problem, cp)
            best = min(best, time.perf_counter() - t0)
            ok = ok and rep.ok
    finally:
        proofcheck.SPOT_CHECK = True
    return best, ok


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--time", type=float, default=10.0, help="seconds per obligation")
    ap.add_argument("--suite", action="append", help="suite directory (repeatable)")
    ap.add_argument("--only", action="append", help="only files whose name contains this")
    ap.add_argument("--strategy", help="one named strategy instead of the portfolio")
    ap.add_argument("--no-spot-check", action="store_true",
                    help="time the replay without the small-model check of input clauses")
    args = ap.parse_args(argv)
    settings = V.Settings(limits=V.Limits(time=args.time), strategy=args.strategy)
    rows = []
    print(f"{'problem':44} {'status':20} {'steps':>5} {'search s':>9} {'check s':>9} {'ratio':>7}")
    for suite in args.suite or SUITES:
        for path in problem_files(suite):
            name = os.path.relpath(path, os.path.join(ROOT, "corpus", "checks"))
            if args.only and not any(o in name for o in args.only):
                continue
            problem = load_problem(path)
            for conj in problem.obligations():
                res = decide(problem, conj, settings)
                search = res["seconds"] - res["figures"].get("check_seconds", 0.0)
                label = name if len(problem.obligations()) == 1 else f"{name}:{conj}"
                if res["proof"] is None:
                    print(f"{label:44} {res['status']:20} {'':>5} {search:9.3f} {'-':>9} {'-':>7}")
                    continue
                check, ok = recheck_seconds(res["proof"], problem, conj,
                                            spot=not args.no_spot_check)
                ratio = check / search if search > 0 else float("inf")
                steps = len(res["proof"]["steps"])
                mark = "" if ok and res["certificate"]["kind"] == "proof-replayed" else "  REFUSED"
                print(f"{label:44} {res['status']:20} {steps:5d} {search:9.3f} "
                      f"{check:9.4f} {ratio:7.3f}{mark}")
                if mark:
                    print(f"    {res['certificate']['detail']}")
                rows.append((label, search, check, ratio, ok))
    if not rows:
        print("no proofs found")
        return 1
    total_search = sum(r[1] for r in rows)
    total_check = sum(r[2] for r in rows)
    refused = sum(1 for r in rows if not r[4])
    print()
    print(f"proofs checked: {len(rows)}, refused: {refused}")
    print(f"total search {total_search:.2f} s, total check {total_check:.3f} s, "
          f"check / search = {total_check / total_search:.4f}")
    print(f"median ratio check / search: {statistics.median(r[3] for r in rows):.4f}; "
          f"median check {statistics.median(r[2] for r in rows) * 1000:.2f} ms; "
          f"max check {max(r[2] for r in rows) * 1000:.2f} ms")
    return 0 if refused == 0 else 1


if __name__ == "__main__":
    sys.exit(main())

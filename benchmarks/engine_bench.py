"""Engine benchmark: run a problem set with a per-problem limit and print
per problem the status and seconds, then a summary (solved N of M, total and
median seconds, given clauses per CPU second), and optionally the
indexed-vs-naive ratio on the problems where the naive linear scan needs
more than a second.

    .venv/bin/python benchmarks/engine_bench.py corpus/checks/pelletier \
        corpus/checks/group-completion [--time-limit 10] [--compare]

A directory with a ``suite.toml`` manifest (DEVELOPERS.md, "Suites") is read
with its expected statuses; a mismatch is marked in the listing.
"""

from __future__ import annotations

import argparse
import glob
import os
import statistics
import sys
import time
import tomllib

sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))

from worker import verdict as V  # noqa: E402
from worker.pipeline import decide  # noqa: E402
from worker.syntax import disk_reader, load_problem  # noqa: E402
from worker.syntax.errors import InputError  # noqa: E402


def problems(paths):
    """``(file, expected status or None)`` for every problem named."""
    out = []
    for p in paths:
        if os.path.isdir(p):
            man = os.path.join(p, "suite.toml")
            expect = {}
            pats = ["*.p", "*.nj"]
            if os.path.exists(man):
                with open(man, "rb") as f:
                    m = tomllib.load(f)
                expect = m.get("expectations", {})
                pats = m.get("suite", {}).get("problems", pats)
            files = sorted({f for pat in pats for f in glob.glob(os.path.join(p, pat))})
            out += [(f, expect.get(os.path.basename(f))) for f in files]
        else:
            out.append((p, None))
    return out


def run_one(path, settings):
    try:
        prob = load_problem(path, disk_reader())
    except InputError as e:
        return [{"status": V.INPUT_ERROR, "seconds": 0.0, "figures": {}, "reason": e.render(),
                 "conjecture": None, "strategy": None}]
    return [decide(prob, c, settings) for c in prob.obligations()]


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("paths", nargs="+")
    ap.add_argument("--time-limit", type=float, default=10.0)
    ap.add_argument("--strategy")
    ap.add_argument("--equality", default="builtin", choices=("builtin", "axioms"))
    ap.add_argument("--no-models", action="store_true")
    ap.add_argument("--compare", action="store_true",
                    help="also run strategy steady with and without the indexes")
    ap.add_argument("--only", help="comma-separated base names to run")
    a = ap.parse_args(argv)
    settings = V.Settings(limits=V.Limits(time=a.time_limit), strategy=a.strategy,
                          equality=a.equality, model_search=not a.no_models)
    probs = problems(a.paths)
    if a.only:
        keep = set(a.only.split(","))
        probs = [p for p in probs if os.path.basename(p[0]).split(".")[0] in keep]
    rows = []
    for path, exp in probs:
        for res in run_one(path, settings):
            st = res["status"]
            mark = ""
            if exp and st != exp:
                mark = f"   (expected {exp})"
            figs = res.get("figures") or {}
            print(f"{os.path.basename(path):28s} {st:20s} {res['seconds']:7.2f} s  "
                  f"{res.get('strategy') or '-':14s} given {figs.get('given', 0)}{mark}",
                  flush=True)
            rows.append((path, exp, res))
    secs = [r["seconds"] for _p, _e, r in rows]
    solved = [r for _p, e, r in rows if r["status"] in V.DEFINITE and (e is None or r["status"] == e)]
    given = sum((r.get("figures") or {}).get("given", 0) for _p, _e, r in rows)
    cpu = sum((r.get("figures") or {}).get("cpu_seconds", 0) for _p, _e, r in rows)
    print()
    print(f"solved {len(solved)} of {len(rows)}; total {sum(secs):.1f} s, "
          f"median {statistics.median(secs) if secs else 0:.2f} s, "
          f"median of solved {statistics.median([r['seconds'] for r in solved]) if solved else 0:.2f} s; "
          f"{given / cpu if cpu else 0:.0f} given clauses per CPU second")
    wrong = [(p, e, r["status"]) for p, e, r in rows
             if e and r["status"] in V.DEFINITE and r["status"] != e]
    if wrong:
        print("WRONG VERDICTS: " + ", ".join(f"{os.path.basename(p)} {s} (expected {e})"
                                             for p, e, s in wrong))
    if a.compare:
        compare(probs, a.time_limit)
    return 0


def compare(probs, limit):
    """Indexed against naive linear scan, same strategy, no model search."""
    print("\nindexed vs naive (strategy steady / steady-linear):")
    ratios = []
    for path, _exp in probs:
        t = {}
        for name in ("steady-linear", "steady"):
            s = V.Settings(limits=V.Limits(time=limit), strategy=name, model_search=False)
            t0 = time.monotonic()
            res = run_one(path, s)
            t[name] = (time.monotonic() - t0, [r["status"] for r in res])
        if t["steady-linear"][0] > 1.0:
            r = t["steady-linear"][0] / max(t["steady"][0], 1e-3)
            timed_out = any(x not in V.DEFINITE for x in t["steady-linear"][1])
            ratios.append(r)
            print(f"  {os.path.basename(path):28s} naive {t['steady-linear'][0]:6.2f} s "
                  f"{'(limit) ' if timed_out else ''}indexed {t['steady'][0]:6.2f} s "
                  f"ratio {r:6.1f}{' (at least)' if timed_out else ''}")
    if ratios:
        print(f"  median ratio {statistics.median(ratios):.1f}, minimum {min(ratios):.1f} "
              f"over {len(ratios)} problems where naive took > 1 s")
    else:
        print("  no problem took the naive engine more than 1 s")


if __name__ == "__main__":
    sys.exit(main())

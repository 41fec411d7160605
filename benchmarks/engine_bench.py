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
    ap.add_argument("--compare-only", action="store_true",
                    help="only the indexed-vs-naive comparison")
    ap.add_argument("--per-strategy", action="store_true",
                    help="run every named strategy alone (how the schedule is tuned)")
    ap.add_argument("--only", help="comma-separated base names to run")
    a = ap.parse_args(argv)
    settings = V.Settings(limits=V.Limits(time=a.time_limit), strategy=a.strategy,
                          equality=a.equality, model_search=not a.no_models)
    probs = problems(a.paths)
    if a.only:
        keep = set(a.only.split(","))
        probs = [p for p in probs if os.path.basename(p[0]).split(".")[0] in keep]
    if a.compare_only:
        compare(probs, a.time_limit)
        return 0
    if a.per_strategy:
        per_strategy(probs, a.time_limit)
        return 0
    rows = []
    for path, exp in probs:
        for res in run_one(path, settings):
            st = res["status"]
            mark = ""
            if exp and st != exp:
                mark = f"   (expected {exp})"
            figs = res.get("figures") or {}
            print(f"{os.path.basename(path):28s} {st:20s} {res['seconds']:7.2f} s "
                  f"(cpu {figs.get('cpu_seconds', 0):6.2f})  "
                  f"{res.get('strategy') or '-':14s} given {figs.get('given', 0)}{mark}",
                  flush=True)
            rows.append((path, exp, res))
    secs = [r["seconds"] for _p, _e, r in rows]
    solved = [r for _p, e, r in rows if r["status"] in V.DEFINITE and (e is None or r["status"] == e)]
    given = sum((r.get("figures") or {}).get("given", 0) for _p, _e, r in rows)
    cpu = sum((r.get("figures") or {}).get("cpu_seconds", 0) for _p, _e, r in rows)
    print()
    try:
        load = " (load average at the end %.1f)" % os.getloadavg()[0]
    except OSError:
        load = ""
    print(f"CPU seconds of the engines in all: {cpu:.1f}{load}")
    print(f"solved {len(solved)} of {len(rows)}; total {sum(secs):.1f} s, "
          f"median {statistics.median(secs) if secs else 0:.2f} s, "
          f"median of solved {statistics.median([r['seconds'] for r in solved]) if solved else 0:.2f} s; "
          f"{given / cpu if cpu else 0:.0f} given clauses per CPU second")
    wrong = [(p, e, r["status"]) for p, e, r in rows
             if e and r["status"] in V.DEFINITE and r["status"] != e]
    if wrong:
        print("WRONG VERDICTS: " + ", ".join(f"{os.path.basename(p)} {s} (expected {e})"
                                             for p, e, s in wrong))
    limit_check()
    if a.compare:
        compare(probs, a.time_limit)
    return 0


ENDLESS = """
axiom irreflexive: forall x. not lt(x, x)
axiom transitive: forall x y z. lt(x, y) and lt(y, z) implies lt(x, z)
axiom unbounded: forall x. exists y. lt(x, y)
"""


def limit_check():
    """How far past a 1-second limit the whole obligation ends (decide: clausify,
    portfolio with model search, certification), on problems that cannot
    finish in time."""
    from worker.syntax import parse_text
    texts = [("endless order", ENDLESS), ("stress-120", stress_problem(120)),
             ("group commutes", "axiom a: forall x y z. (x * y) * z = x * (y * z)\n"
              "axiom b: forall x. e * x = x\naxiom c: forall x. i(x) * x = e\n"
              "conjecture d: forall x y. x * y = y * x\n")]
    worst = 0.0
    parts = []
    for label, text in texts:
        prob = parse_text(text, "limit.nj")
        s = V.Settings(limits=V.Limits(time=1.0), strategy="steady", model_search=False)
        t0 = time.monotonic()
        res = decide(prob, prob.obligations()[0], s)
        took = time.monotonic() - t0
        worst = max(worst, took)
        parts.append(f"{label} {res['status']} {took:.3f} s")
    print("1-second limit: " + "; ".join(parts) + f"; worst {worst:.3f} s")


def per_strategy(probs, limit):
    """Each named strategy alone on every obligation (no model search, a CPU
    limit of ``limit`` seconds): solved count, CPU seconds, and which
    problems only it solves."""
    from worker.portfolio import run_strategy
    from worker.saturation import strategy as S
    cps = []
    for path, _e in probs:
        try:
            cps += [(os.path.basename(path), cp) for cp in _obligations(path)]
        except InputError:
            pass
    solved = {}
    for name, strat in S.STRATEGIES.items():
        if strat.indexing == "linear":
            continue
        got = {}
        cpu = 0.0
        for k, (label, cp) in enumerate(cps):
            c0 = time.process_time()
            out = run_strategy(cp, strat, time.monotonic() + 20 * limit,
                               cpu_deadline=c0 + limit)
            c = time.process_time() - c0
            cpu += c
            if out["outcome"] == "refutation" or (out["outcome"] == "saturated" and out["complete"]):
                got[k] = c
        solved[name] = got
        print(f"  {name:14s} solved {len(got):3d} of {len(cps)}; CPU {cpu:7.1f} s; "
              f"median CPU of solved {statistics.median(got.values()) if got else 0:.3f} s", flush=True)
    for name, got in solved.items():
        only = [cps[k][0] for k in got if all(k not in g for n2, g in solved.items() if n2 != name)]
        if only:
            print(f"  only {name}: {', '.join(only)}")


def stress_problem(n: int) -> str:
    """A generated problem of our own with a large active set, where
    retrieval dominates: locks along a canal, each lock below the next,
    "below" transitive, a jump function; prove the first lock is below the
    last.  (Written for this benchmark; no outside source.)"""
    lines = ["axiom below_transitive: forall x y z. below(x, y) and below(y, z) implies below(x, z)"]
    lines += [f"axiom step{i}: below(lock{i}, lock{i + 1})" for i in range(n)]
    lines += [f"axiom jump{i}: jump(lock{i}) = lock{(i * 7) % n}" for i in range(n)]
    lines.append(f"conjecture reach: below(lock0, lock{n}) and below(jump(lock3), lock{n})")
    return "\n".join(lines) + "\n"


def _obligations(path_or_text):
    from worker.clausify import clausify
    from worker.syntax import parse_text
    if path_or_text.startswith("stress:"):
        n = int(path_or_text.split(":")[1])
        prob = parse_text(stress_problem(n), f"stress-{n}.nj")
    else:
        prob = load_problem(path_or_text, disk_reader())
    return [clausify(prob, c) for c in prob.obligations()]


def compare(probs, limit, stress=(20, 30, 40)):
    """Indexed against naive linear scan: the same strategy (steady and its
    linear-scan twin), no model search, CPU seconds of the saturation runs
    and a CPU limit of ``limit`` seconds (the machine may be shared, so wall
    time would mislead)."""
    from worker.portfolio import run_strategy
    from worker.saturation import strategy as S
    print("\nindexed vs naive (strategy steady / steady-linear, CPU seconds):")
    names = [p for p, _e in probs] + [f"stress:{n}" for n in stress]
    ratios = []
    for name in names:
        try:
            cps = _obligations(name)
        except InputError:
            continue
        for k, cp in enumerate(cps):
            t = {}
            for strat in ("steady-linear", "steady"):
                c0 = time.process_time()
                out = run_strategy(cp, S.get(strat), time.monotonic() + 20 * limit,
                                   cpu_deadline=c0 + limit)
                t[strat] = (time.process_time() - c0, out["outcome"], out["figures"]["given"])
            naive, fast = t["steady-linear"], t["steady"]
            if naive[0] <= 1.0:
                continue
            open_ = naive[1] == "limit"
            r = naive[0] / max(fast[0], 1e-3)
            if fast[1] == "limit" and open_:
                # both stopped by the limit: compare the work done per second
                r = None
            label = os.path.basename(name) + (f"#{k + 1}" if len(cps) > 1 else "")
            if r is None:
                rn = naive[2] / max(naive[0], 1e-3)
                rf = fast[2] / max(fast[0], 1e-3)
                print(f"  {label:30s} both stopped by the limit: given clauses per CPU second "
                      f"naive {rn:.1f}, indexed {rf:.1f} (left out of the ratio)")
                continue
            ratios.append(r)
            print(f"  {label:30s} naive {naive[0]:6.2f} s {'(limit) ' if open_ else ''}"
                  f"indexed {fast[0]:6.2f} s ({fast[1]})  ratio {r:6.1f}"
                  f"{' (at least)' if open_ else ''}")
    if ratios:
        print(f"  median ratio {statistics.median(ratios):.1f}, minimum {min(ratios):.1f} "
              f"over {len(ratios)} problems where naive took > 1 s CPU")
    else:
        print("  no problem took the naive engine more than 1 s")


if __name__ == "__main__":
    sys.exit(main())

"""Clausification times and sizes.

    .venv/bin/python benchmarks/clausify_bench.py [FILES or DIRECTORIES...] [--repeat N]

Without arguments: every problem file under corpus/checks (``*.p``, ``*.nj``),
or a small built-in set when that folder is missing.  For every proof
obligation it prints the clause, literal, Skolem and definition counts and the
median clausification time of N runs (reading not included; reading is timed
separately), then the median and the total.  Last, Andrews' challenge
(Pelletier 1986, problem 34, written from memory) with and without naming.
"""

from __future__ import annotations

import argparse
import glob
import os
import statistics
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
sys.path.insert(0, ROOT)

from worker.clausify import NAMING_LIMIT, clausify  # noqa: E402
from worker.syntax import load_problem, parse_text  # noqa: E402
from worker.syntax.errors import InputError  # noqa: E402

# Andrews' challenge, Pelletier (1986) problem 34, written from memory.
ANDREWS = """
conjecture andrews:
  ((exists x. forall y. p(x) iff p(y)) iff ((exists x. q(x)) iff (forall y. q(y))))
  iff
  ((exists x. forall y. q(x) iff q(y)) iff ((exists x. p(x)) iff (forall y. p(y))))
"""

# Used when corpus/checks is not there.
BUILT_IN = {
    "builtin/andrews.nj": ANDREWS,
    "builtin/drinker.nj": "conjecture drinker: exists x. (d(x) implies forall y. d(y))\n",
    "builtin/chain.nj": "axiom chain: " + " iff (".join(
        f"p{i}" for i in range(1, 13)) + ")" * 11 + "\n",
    "builtin/group.nj": """
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit: forall x. e * x = x
axiom inverse: forall x. i(x) * x = e
conjecture right_unit: forall x. x * e = x
""",
}


def timed(fn, repeat):
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return out, statistics.median(times)


def problems(paths):
    if not paths:
        base = os.path.join(ROOT, "corpus", "checks")
        paths = [base] if os.path.isdir(base) else []
    files = []
    for p in paths:
        if os.path.isdir(p):
            for ext in ("p", "nj"):
                files.extend(glob.glob(os.path.join(p, "**", f"*.{ext}"),
                                       recursive=True))
        else:
            files.append(p)
    files = sorted(f for f in files if "/axioms/" not in f.replace(os.sep, "/"))
    if not files:
        for name, text in BUILT_IN.items():
            yield name, (lambda text=text, name=name: parse_text(text, name))
        return
    for f in files:
        yield os.path.relpath(f, ROOT), (lambda f=f: load_problem(f))


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("paths", nargs="*")
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args(argv)

    rows = []
    read_times = []
    print(f"{'problem':46} {'obligation':22} {'clauses':>7} {'lits':>6} "
          f"{'sk':>4} {'def':>4} {'ms':>8}")
    for name, read in problems(args.paths):
        try:
            problem, rt = timed(read, 1)
        except InputError as e:
            print(f"{name:46} input error: {e.message}")
            continue
        read_times.append(rt)
        for ob in problem.obligations():
            cp, t = timed(lambda: clausify(problem, ob), args.repeat)
            f = cp.figures
            rows.append(t)
            print(f"{name:46} {str(ob):22} {f['clauses']:7} {f['literals']:6} "
                  f"{f['skolems']:4} {f['definitions']:4} {t * 1000:8.3f}")
    if rows:
        print()
        print(f"obligations: {len(rows)}; clausify median "
              f"{statistics.median(rows) * 1000:.3f} ms, max "
              f"{max(rows) * 1000:.3f} ms, total {sum(rows) * 1000:.1f} ms "
              f"(median of {args.repeat} runs each)")
        print(f"files read: {len(read_times)}; reading median "
              f"{statistics.median(read_times) * 1000:.3f} ms, total "
              f"{sum(read_times) * 1000:.1f} ms")

    print()
    problem = parse_text(ANDREWS, "andrews.nj")
    for label, limit in ((f"naming on (limit {NAMING_LIMIT})", NAMING_LIMIT),
                         ("naming off", 10 ** 12)):
        cp, t = timed(lambda: clausify(problem, "andrews", naming_limit=limit),
                      args.repeat)
        f = cp.figures
        print(f"Andrews' challenge (Pelletier 34), {label}: {f['clauses']} "
              f"clauses, {f['literals']} literals, {f['skolems']} Skolem "
              f"symbols, {f['definitions']} definitions, {t * 1000:.2f} ms")


if __name__ == "__main__":
    main()

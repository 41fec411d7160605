"""How fast the readers are.

Prints, for every problem of corpus/checks (native and TPTP, includes
followed), the median read time of several runs; then, for generated large
files of each language (5 MB by default), the median time to tokenize, to
read (tokenize + parse + symbol checks) and to print back, with the
throughput in MB/s.

    .venv/bin/python benchmarks/parse_bench.py [--runs 5] [--mb 5] [--no-corpus]
"""

from __future__ import annotations

import argparse
import gc
import glob
import os
import statistics
import sys
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, ROOT)

from worker.syntax import InputError, load_problem, parse_text  # noqa: E402
from worker.syntax.lexer import Source, tokenize_native, tokenize_tptp  # noqa: E402
from worker.syntax.printer import format_problem  # noqa: E402


def median_time(fn, runs):
    times = []
    for _ in range(runs):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def native_text(mb: float) -> str:
    out, size, i = [], 0, 0
    while size < mb * 1_000_000:
        s = (f"# statement {i}\n"
             f"axiom a{i}: forall x y z. p{i % 50}(x, f(y, g(z))) and q{i % 30}(x)\n"
             f"   implies (exists w. r(w, x * (y + z)) or not s(w)) iff t{i % 7}\n")
        out.append(s)
        size += len(s)
        i += 1
    return "".join(out)


def tptp_text(mb: float) -> str:
    out, size, i = [], 0, 0
    while size < mb * 1_000_000:
        s = (f"% statement {i}\n"
             f"fof(a{i}, axiom, ! [X, Y, Z] : ( ( p{i % 50}(X, f(Y, g(Z))) & q{i % 30}(X) )\n"
             f"   => ( ? [W] : ( r(W, m(X, a(Y, Z))) | ~ s(W) ) <=> t{i % 7} ) )).\n")
        out.append(s)
        size += len(s)
        i += 1
    return "".join(out)


def corpus(runs: int) -> None:
    files = sorted(glob.glob(os.path.join(ROOT, "corpus", "checks", "**", "*.p"), recursive=True)
                   + glob.glob(os.path.join(ROOT, "corpus", "checks", "**", "*.nj"),
                               recursive=True))
    files = [f for f in files if "/axioms" not in f.replace(os.sep, "/")]
    if not files:
        print("corpus/checks: no problem files found")
        return
    print(f"corpus/checks: {len(files)} problems, median of {runs} reads each")
    total = 0.0
    rows = []
    for f in files:
        try:
            t = median_time(lambda: load_problem(f), runs)
        except InputError as e:
            print(f"  {os.path.relpath(f, ROOT)}: input error: {e.message}")
            continue
        total += t
        rows.append((t, os.path.relpath(f, ROOT)))
    rows.sort(reverse=True)
    for t, name in rows[:10]:
        print(f"  {t * 1000:8.2f} ms  {name}")
    if len(rows) > 10:
        print(f"  ... {len(rows) - 10} more")
    print(f"  all {len(rows)} problems: {total * 1000:.1f} ms in all, "
          f"median {statistics.median(t for t, _ in rows) * 1000:.2f} ms per problem")


def large(mb: float, runs: int) -> None:
    for lang, make, tok in (("native", native_text, tokenize_native),
                            ("tptp", tptp_text, tokenize_tptp)):
        text = make(mb)
        size = len(text) / 1_000_000
        src = Source("gen", text)
        n_tokens = len(tok(src)[0])
        gc.disable()             # as the readers do (see DEVELOPERS.md)
        try:
            t_tok = median_time(lambda: tok(Source("gen", text)), runs)
        finally:
            gc.enable()
        holder = {}

        def read():
            holder["p"] = parse_text(text, name=f"gen.{lang}", language=lang)
        t_read = median_time(read, runs)
        p = holder["p"]
        t_print = median_time(lambda: format_problem(p), runs)
        print(f"{lang}: generated {size:.1f} MB, {len(p.statements):,} statements, "
              f"{n_tokens:,} tokens (median of {runs})")
        print(f"  tokenize {t_tok:6.2f} s   read {t_read:6.2f} s "
              f"({size / t_read:.1f} MB/s)   print as native {t_print:6.2f} s")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--runs", type=int, default=5)
    ap.add_argument("--mb", type=float, default=5.0)
    ap.add_argument("--no-corpus", action="store_true")
    a = ap.parse_args()
    if not a.no_corpus:
        corpus(a.runs)
    large(a.mb, max(1, min(a.runs, 3)))
    return 0


if __name__ == "__main__":
    sys.exit(main())

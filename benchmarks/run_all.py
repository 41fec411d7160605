#!/usr/bin/env python3
"""Run every benchmark in turn and print its figures (`python3 bootstrap.py bench`).

    python3 bootstrap.py bench            # all of them (about half an hour on 2 cores)
    python3 bootstrap.py bench engine models   # only those named

Each benchmark is also a script of its own with --help.  None of them asserts
a time: they print figures (medians and ratios) for people to read.
"""

from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent

# name -> arguments; the order is the order of the pipeline
BENCHES = [
    ("terms", []),
    ("parse", []),
    ("clausify", []),
    ("engine", ["--time-limit", "10", "--compare",
                str(ROOT / "corpus/checks/pelletier"),
                str(ROOT / "corpus/checks/group-completion"),
                str(ROOT / "corpus/checks/algebra")]),
    ("index_bound", [str(ROOT / "corpus/checks/algebra/boolean_ring.nj")]),
    ("models", []),
    ("check", []),
    ("service", []),
    ("metrics", []),
    ("corpus", []),
    ("fsync", []),
    ("load", []),
]


def main(argv: list[str]) -> int:
    wanted = set(argv)
    unknown = wanted - {n for n, _ in BENCHES}
    if unknown:
        print(f"run_all: unknown benchmark(s): {', '.join(sorted(unknown))}; "
              f"known: {', '.join(n for n, _ in BENCHES)}", file=sys.stderr)
        return 2
    failed = []
    for name, args in BENCHES:
        if wanted and name not in wanted:
            continue
        print(f"\n======== {name} ========", flush=True)
        t0 = time.monotonic()
        rc = subprocess.call([sys.executable, str(HERE / f"{name}_bench.py"), *args], cwd=ROOT)
        print(f"-------- {name}: exit {rc}, {time.monotonic() - t0:.1f} s", flush=True)
        if rc:
            failed.append(name)
    if failed:
        print(f"\nbenchmarks that failed: {', '.join(failed)}", file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))

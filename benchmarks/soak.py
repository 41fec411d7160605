#!/usr/bin/env python3
"""The long runs, behind one command:

    python3 bootstrap.py soak            # everything below, in order
    python3 bootstrap.py soak fuzz       # or only some: fuzz outage faults hosts load fsync

* fuzz:   the reader fuzz tests with 100,000 inputs per reader (fresh random
          inputs, not CI's fixed sequence);
* outage: the worker-reconnect fault test with a 30-second Redis outage;
* faults: every fault test (SIGTERM, kill -9 of Redis, outage, memory);
* hosts:  the many-host tests in network namespaces (root);
* load:   benchmarks/load_bench.py with a 10,000-job batch;
* fsync:  benchmarks/fsync_bench.py (what each append-only policy costs).

CI runs the short versions of the same tests (tests/test_fuzz_readers.py with
10,000 inputs per reader, the faults with a 5-second outage).  Each step's
output is shown as it runs; the summary at the end says which passed.
"""

from __future__ import annotations

import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
PY = sys.executable
PYTEST = [PY, "-m", "pytest", "-q", "-s", "-p", "no:cacheprovider"]

STEPS = {
    "fuzz": (PYTEST + ["tests/test_fuzz_readers.py"],
             {"NIGHTJAR_FUZZ_EXAMPLES": "50000", "NIGHTJAR_FUZZ_RANDOM": "1"}),
    "outage": (PYTEST + ["tests/faults", "-k", "outage"],
               {"NIGHTJAR_FAULT_OUTAGE_SECONDS": "30"}),
    "faults": (PYTEST + ["tests/faults"], {}),
    "hosts": (PYTEST + ["tests/hosts"], {}),
    "load": ([PY, "benchmarks/load_bench.py", "--jobs", "10000"], {}),
    "fsync": ([PY, "benchmarks/fsync_bench.py"], {}),
}


def main(argv: list[str]) -> int:
    wanted = argv or list(STEPS)
    unknown = [w for w in wanted if w not in STEPS]
    if unknown:
        print(f"soak: unknown step(s) {', '.join(unknown)}; known: {', '.join(STEPS)}")
        return 2
    results = []
    for name in wanted:
        cmd, extra = STEPS[name]
        print(f"\n== soak: {name}: {' '.join(cmd[1:])}", flush=True)
        t = time.monotonic()
        rc = subprocess.call(cmd, cwd=ROOT, env=dict(os.environ, **extra))
        results.append((name, rc, time.monotonic() - t))
    print("\n== soak summary")
    for name, rc, secs in results:
        print(f"  {name:7} {'passed' if rc == 0 else f'FAILED (exit {rc})':18} {secs:7.0f} s")
    return 0 if all(rc == 0 for _, rc, _ in results) else 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))

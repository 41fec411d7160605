#!/usr/bin/env python3
"""Set up a virtual environment under the repository and run a task.

    python3 bootstrap.py demo     # the main job on the embedded default
    python3 bootstrap.py test     # the whole test suite
    python3 bootstrap.py bench    # the benchmarks (prints figures)
    python3 bootstrap.py soak     # the long fuzz and load runs

Only the Python standard library is used here, so this works on a fresh
machine with Python 3.11 and the package registry.
"""

from __future__ import annotations

import hashlib
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent
VENV = ROOT / ".venv"
PY = VENV / "bin" / "python"
STAMP = VENV / ".nightjar-installed"


def sh(*cmd, **kw) -> int:
    return subprocess.call([str(c) for c in cmd], cwd=ROOT, **kw)


def ensure_venv() -> None:
    if not PY.exists():
        print("bootstrap: creating virtual environment in .venv", flush=True)
        if sh(sys.executable, "-m", "venv", VENV):
            sys.exit("bootstrap: could not create the virtual environment")
    want = hashlib.sha256((ROOT / "pyproject.toml").read_bytes()).hexdigest()
    if STAMP.exists() and STAMP.read_text() == want:
        return
    print("bootstrap: installing nightjar and its test tools (pip)", flush=True)
    if sh(PY, "-m", "pip", "install", "-q", "--upgrade", "pip"):
        sys.exit("bootstrap: pip upgrade failed")
    if sh(PY, "-m", "pip", "install", "-q", "-e", ".[test]"):
        sys.exit("bootstrap: pip install failed")
    STAMP.write_text(want)


def main() -> int:
    task = sys.argv[1] if len(sys.argv) > 1 else "help"
    rest = sys.argv[2:]
    if task not in ("demo", "test", "bench", "soak", "shell"):
        print(__doc__)
        return 2
    ensure_venv()
    env = dict(os.environ)
    env.setdefault("NIGHTJAR_HOME", str(ROOT / ".nightjar"))
    if task == "demo":
        return sh(VENV / "bin" / "nightjar", "demo", *rest, env=env)
    if task == "test":
        return sh(PY, "-m", "pytest", "-q", "-ra", *rest, env=env)
    if task == "bench":
        return sh(PY, ROOT / "benchmarks" / "run_all.py", *rest, env=env)
    if task == "soak":
        return sh(PY, ROOT / "benchmarks" / "soak.py", *rest, env=env)
    return sh(VENV / "bin" / "python", *rest, env=env)


if __name__ == "__main__":
    sys.exit(main())

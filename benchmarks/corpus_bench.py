"""Reuse figures for corpus reruns: the demo suite's rerun after the second
axiom version, with reuse and with ``--full``, through a real service.

    .venv/bin/python benchmarks/corpus_bench.py [--rounds 3] [--workers 2]
        [--suite PATH --suite-v2 PATH] [--time-limit SECONDS]

Each round: run the first version (full), then the second version with
reuse (timed), then the first version again (full), then the second version
with --full (timed).  "Wall" is from submission to the last verdict as the
client sees it (polling every 20 ms); "search" is the sum of the engine's
seconds over the searched obligations; "saved" is what the server reports
(original search seconds of the reused obligations, less the time the proof
replays and model re-evaluations took).  A temporary embedded service
(bundled Redis, waitress, worker processes) is started and stopped.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO))

from service.client import Client  # noqa: E402
from service.corpus import load_suite, submission  # noqa: E402
from service.embedded import read_server, read_token, start_in_background, stop_background  # noqa: E402


def timed_run(client, suite, full: bool, time_limit=None) -> dict:
    body = submission(suite, full=full)
    if time_limit:
        body["time_limit"] = time_limit
    t0 = time.monotonic()
    first = client.post("/api/corpus/runs", body)
    t_submit = time.monotonic() - t0
    while True:
        v = client.get(f"/api/corpus/runs/{first['run']}")
        if v["summary"]["finished"]:
            break
        time.sleep(0.02)
    wall = time.monotonic() - t0
    s = v["summary"]
    return {"wall": wall, "submit": t_submit, "reused": s["reused"], "searched": s["searched"],
            "saved": s["time_saved_seconds"], "checks": s["reuse_check_seconds"],
            "search": s["search_seconds"], "flipped": s["flipped"], "settled": s["settled"],
            "total": s["total"]}


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rounds", type=int, default=3)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--suite", default=str(REPO / "corpus" / "demo"))
    ap.add_argument("--suite-v2", default=str(REPO / "corpus" / "demo" / "suite-v2.toml"))
    ap.add_argument("--time-limit", type=float, default=None)
    args = ap.parse_args(argv)
    v1, v2 = load_suite(args.suite), load_suite(args.suite_v2)
    with tempfile.TemporaryDirectory(prefix="nj-corpus-bench-") as tmp:
        home = Path(tmp)
        proc = start_in_background(home, workers=args.workers)
        try:
            client = Client(read_server(home)["url"], read_token(home))
            reuse, full = [], []
            for i in range(args.rounds):
                timed_run(client, v1, True, args.time_limit)
                reuse.append(timed_run(client, v2, False, args.time_limit))
                timed_run(client, v1, True, args.time_limit)
                full.append(timed_run(client, v2, True, args.time_limit))
                print(f"round {i + 1}: rerun with reuse {reuse[-1]['wall']:.2f} s "
                      f"({reuse[-1]['reused']} reused, {reuse[-1]['searched']} searched, "
                      f"{reuse[-1]['settled']} settled), full rerun {full[-1]['wall']:.2f} s "
                      f"({full[-1]['searched']} searched, {full[-1]['settled']} settled)")
        finally:
            stop_background(proc)
    med = lambda rows, k: statistics.median(r[k] for r in rows)
    print()
    print(f"suite {v2.name}: {reuse[0]['total']} obligations, {args.workers} workers, "
          f"{args.rounds} rounds (medians)")
    print(f"  rerun with reuse : wall {med(reuse, 'wall'):.2f} s (submission with reuse "
          f"checks {med(reuse, 'submit'):.2f} s), {reuse[0]['reused']} reused, "
          f"{reuse[0]['searched']} searched, engine {med(reuse, 'search'):.2f} s, "
          f"replay/re-evaluation {med(reuse, 'checks'):.3f} s")
    print(f"  full rerun       : wall {med(full, 'wall'):.2f} s, {full[0]['searched']} searched, "
          f"engine {med(full, 'search'):.2f} s")
    ratio = med(full, "wall") / max(med(reuse, "wall"), 1e-6)
    print(f"  wall-clock ratio full / reuse: {ratio:.1f}x; engine seconds saved (server's "
          f"figure): {med(reuse, 'saved'):.2f} s")
    same = all(r["flipped"] == f["flipped"] and r["settled"] == f["settled"]
               for r, f in zip(reuse, full))
    print(f"  same verdict counts with and without reuse: {'yes' if same else 'no'}"
          + ("" if same else " (a search near its time limit can settle in one run and not "
                             "in the other: see the rounds above)"))
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""Service benchmark: what the queue costs, and how it scales with workers.

    .venv/bin/python benchmarks/service_bench.py [--jobs 500] [--repeat 3]

1. Queue overhead: N trivial jobs (one-line propositional theorems) through
   the whole service (HTTP submit, Redis, RQ, a forked work horse per job,
   verdict written back) with one worker, against deciding the same
   obligations one after another in this process.  Prints jobs per second
   both ways and the overhead ratio (service time / in-process time), and the
   service with two workers.
2. Commands (``--only commands``, also run by default): Redis commands per
   trivial job with one worker, from INFO commandstats, by command.
3. Scaling: a CPU-bound batch (proofs of a second or so from the corpus)
   with 1 and with 2 workers; prints the wall times and their ratio.

Every figure is the median of --repeat runs.  A real Redis server (the
bundled binary) runs in a temporary folder; everything started is stopped at
the end.
"""

from __future__ import annotations

import argparse
import functools
import os
import statistics
import sys
import tempfile
import threading
import time
from pathlib import Path

print = functools.partial(print, flush=True)  # noqa: A001 (figures as they come)
ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from service.app import create_app  # noqa: E402
from service.client import Client, bundle_of  # noqa: E402
from service.config import Config  # noqa: E402
from service.embedded import RedisProcess, start_worker, stop_processes  # noqa: E402
from service.queue import connect  # noqa: E402
from service.store import Store  # noqa: E402

CPU_PROBLEMS = [
    "corpus/checks/algebra/group_uniqueness.nj",
    "corpus/checks/group-completion/r09_cancel_right.nj",
    "corpus/checks/group-completion/r07_double_inverse.nj",
    "corpus/checks/group-completion/r06_inverse_of_identity.nj",
    "corpus/checks/group-completion/r05_right_identity.nj",
    "corpus/checks/group-completion/r04_cancel_left.nj",
    "corpus/checks/pelletier/p47.p",
    "corpus/checks/group-completion/r08_right_inverse.nj",
]


def trivial(n):
    return [{"main": f"t{k}.nj", "files": {f"t{k}.nj": f"conjecture g: p{k} implies p{k}\n"}}
            for k in range(n)]


class Bench:
    def __init__(self, tmp: Path):
        self.tmp = tmp
        self.rp = RedisProcess(tmp / "redis", log=tmp / "redis.log").start()
        self.config = Config.from_env(redis_url=self.rp.url)
        r = connect(self.rp.url)
        from waitress.server import create_server
        self.server = create_server(create_app(self.config, r), host="127.0.0.1", port=0,
                                    threads=4)
        threading.Thread(target=self.server.run, daemon=True).start()
        self.client = Client(f"http://127.0.0.1:{self.server.effective_port}",
                             Store(r).add_token("bench"), timeout=120)
        self.workers = []

    def set_workers(self, n):
        stop_processes(self.workers, timeout=5)
        self.workers = [start_worker(self.rp.url, self.tmp / f"w{i}.log") for i in range(n)]
        deadline = time.monotonic() + 30
        while self.client.health()["workers"] < n:
            if time.monotonic() > deadline:
                raise RuntimeError("workers did not register")
            time.sleep(0.1)

    def run(self, problems, time_limit=30):
        t0 = time.perf_counter()
        sub = self.client.submit({"problems": problems, "time_limit": time_limit})
        b = self.client.wait(sub["batch"], interval=0.05, timeout=600)
        dt = time.perf_counter() - t0
        assert b["states"]["done"] == b["total"], b["states"]
        return dt, b

    def rq_noop(self, n):
        """The same number of no-op RQ jobs on the same workers: RQ's own
        cost per job (fork of a work horse and its bookkeeping)."""
        from rq import Queue
        q = Queue("nj-batch", connection=connect(self.rp.url))
        t0 = time.perf_counter()
        jobs = [q.enqueue("os.getpid") for _ in range(n)]
        while any(j.get_status(refresh=True) != "finished" for j in jobs[-2:]):
            time.sleep(0.02)
        return time.perf_counter() - t0

    def commandstats(self) -> dict[str, int]:
        info = connect(self.rp.url).info("commandstats")
        return {k.removeprefix("cmdstat_"): v["calls"] for k, v in info.items()}

    def count_commands(self, n):
        """Redis commands per trivial job with one worker: INFO commandstats
        before and after submitting N jobs, and after they ran (waiting by
        polling one hash once a second, so the wait adds almost nothing)."""
        r = connect(self.rp.url)
        c0 = self.commandstats()
        sub = self.client.submit({"problems": trivial(n), "time_limit": 30})
        c1 = self.commandstats()
        ck = Store.k_counts(sub["batch"])
        polls = 0
        while int(r.hget(ck, "done") or 0) < n:
            polls += 1
            time.sleep(1.0)
        c2 = self.commandstats()
        diff = lambda a, b: {k: b.get(k, 0) - a.get(k, 0) for k in b if b.get(k, 0) != a.get(k, 0)}
        return diff(c0, c1), diff(c1, c2), polls

    def close(self):
        stop_processes(self.workers, timeout=5)
        self.server.close()
        self.rp.stop()


def in_process(problems, time_limit=30):
    from worker.pipeline import decide
    from worker.syntax import bundle_reader, load_problem
    from worker.verdict import Limits, Settings
    t0 = time.perf_counter()
    verdicts = []
    for p in problems:
        prob = load_problem(p["main"], bundle_reader(p["files"]))
        for c in prob.obligations():
            verdicts.append(decide(prob, c, Settings(limits=Limits(time=time_limit)))["status"])
    return time.perf_counter() - t0, verdicts


def overhead(b, args):
    med = statistics.median
    n = args.jobs
    probs = trivial(n)
    local = [in_process(probs)[0] for _ in range(args.repeat)]
    b.set_workers(1)
    b.run(trivial(5))                      # warm up
    one = [b.run(probs)[0] for _ in range(args.repeat)]
    noop = [b.rq_noop(n) for _ in range(args.repeat)]
    b.set_workers(2)
    two = [b.run(probs)[0] for _ in range(args.repeat)]
    print(f"queue overhead, {n} trivial jobs (median of {args.repeat}):")
    print(f"  in one process       {med(local):7.2f} s  {n / med(local):8.1f} jobs/s")
    print(f"  service, 1 worker    {med(one):7.2f} s  {n / med(one):8.1f} jobs/s"
          f"  ({(med(one) - med(local)) / n * 1000:.1f} ms added per job)")
    print(f"  service, 2 workers   {med(two):7.2f} s  {n / med(two):8.1f} jobs/s")
    print(f"  RQ alone, no-op jobs {med(noop):7.2f} s  {n / med(noop):8.1f} jobs/s"
          f"  (1 worker: RQ's own cost per job {med(noop) / n * 1000:.1f} ms)")
    print(f"  overhead ratio (service 1 worker / in process): {med(one) / med(local):.2f}")


def commands(b, args):
    n = args.jobs
    b.set_workers(1)
    b.run(trivial(5))                      # warm up
    time.sleep(1.0)
    submit, run, polls = b.count_commands(n)
    # the counting itself: INFO x3, HGET per poll; the worker's sweeper
    # also runs a few commands every 3 s while the batch runs
    print(f"Redis commands per trivial job (1 worker, {n} jobs):")
    print(f"  submit (HTTP, one transaction): {sum(submit.values()) / n:6.1f}")
    print(f"  running them (worker, horses, sweeper): {sum(run.values()) / n:6.1f}"
          f"  ({polls} polls of the bench included)")
    for k, v in sorted(run.items(), key=lambda kv: -kv[1]):
        print(f"    {k:22s} {v / n:6.2f}")


def scaling(b, args):
    med = statistics.median
    cpu = [bundle_of(str(ROOT / p), str(ROOT)) for p in CPU_PROBLEMS] * args.cpu_copies
    local_cpu, verdicts = in_process(cpu)
    assert all(v == "Theorem" for v in verdicts), verdicts
    b.set_workers(1)
    s1 = [b.run(cpu)[0] for _ in range(args.repeat)]
    b.set_workers(2)
    s2 = [b.run(cpu)[0] for _ in range(args.repeat)]
    print(f"scaling, CPU-bound batch of {len(cpu)} proofs "
          f"({local_cpu:.1f} s in one process; median of {args.repeat}):")
    print(f"  1 worker   {med(s1):7.2f} s")
    print(f"  2 workers  {med(s2):7.2f} s")
    print(f"  speed-up (1 worker / 2 workers): {med(s1) / med(s2):.2f}  "
          f"(cores: {os.cpu_count()}; load average now {os.getloadavg()[0]:.1f})")


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--jobs", type=int, default=500)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--cpu-copies", type=int, default=2,
                    help="copies of the CPU-bound problem set in the scaling batch")
    ap.add_argument("--only", choices=("overhead", "scaling", "commands"), help="run one part")
    args = ap.parse_args()
    print(f"load average before: {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    with tempfile.TemporaryDirectory(prefix="nj-bench-") as tmp:
        b = Bench(Path(tmp))
        try:
            if args.only in (None, "overhead"):
                overhead(b, args)
            if args.only in (None, "commands"):
                commands(b, args)
            if args.only in (None, "scaling"):
                scaling(b, args)
        finally:
            b.close()


if __name__ == "__main__":
    main()

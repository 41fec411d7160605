"""Many hosts against one Redis: Redis (deploy/redis.conf) in one network
namespace, a worker host in each of two others, reaching it over veth links.

* A batch settles across both worker hosts.
* Cutting one host's link while it runs a job: the job is retried on the
  other host, no job is lost, and none is settled twice (the cut-off host's
  late verdict is refused when its link comes back).

Needs root and ``ip netns``; skipped with the reason otherwise, except in CI
(``CI=true``), where that is a failure."""

from __future__ import annotations

import os
import subprocess
import sys
import time

import pytest

from service.config import QUEUE_BATCH, Config
from service.embedded import stop_processes
from service.queue import Dispatcher, connect
from service.store import Store
from tests.hardening import ROOT, SLOW, ProductionRedis, quick, wait_until
from tests.hosts import netns
from tests.integration.conftest import FAST

pytestmark = pytest.mark.integration


@pytest.fixture
def hosts():
    why = netns.why_unavailable()
    if why:
        if os.environ.get("CI") == "true":
            pytest.fail(f"many-host tests cannot run in CI: {why}")
        pytest.skip(why)
    h = netns.Hosts()
    try:
        h.add_leaf("hosta")
        h.add_leaf("hostb")
        yield h
    finally:
        h.close()


@pytest.fixture
def cluster(hosts, tmp_path):
    """Redis in the hub, one worker per leaf; the test thread works inside the
    hub namespace (Redis at 127.0.0.1 there)."""
    bind = " ".join(["127.0.0.1"] + [l["hub_addr"] for l in hosts.leaves.values()])
    rp = ProductionRedis(tmp_path / "redis-data", bind=bind, netns=hosts.hub)
    workers = {}
    with netns.inside(hosts.hub):
        try:
            rp.start()
            env = dict(os.environ, **FAST, PYTHONPATH=str(ROOT))
            for label, leaf in hosts.leaves.items():
                url = rp.url_for(leaf["hub_addr"])
                log = open(tmp_path / f"worker-{label}.log", "ab")
                workers[label] = subprocess.Popen(
                    ["ip", "netns", "exec", leaf["ns"], sys.executable, "-m", "service.cli",
                     "worker", "--redis", url], stdin=subprocess.DEVNULL, stdout=log,
                    stderr=log, env=env, start_new_session=True, cwd=str(ROOT))
                log.close()
            r = connect(rp.url_for("127.0.0.1"))
            cfg = Config.from_env(redis_url=rp.url_for("127.0.0.1"), **{
                k[len("NIGHTJAR_"):].lower(): float(v) for k, v in FAST.items()})
            store = Store(r)
            wait_until(lambda: len(r.smembers("rq:workers")) >= 2, 60, what="both workers up")
            yield {"r": r, "store": store, "dispatcher": Dispatcher(r, cfg), "hosts": hosts,
                   "workers": workers, "logs": tmp_path}
        finally:
            for label in hosts.leaves:            # let stuck workers hear the stop
                hosts.mend(label)
            stop_processes(list(workers.values()), timeout=5)
            rp.kill()


def submit(c, texts: dict, time_limit: float) -> list[str]:
    jobs = [{"file": name, "conjecture": conj, "time_limit": time_limit,
             "bundle": {"main": name, "files": {name: text}, "language": None}}
            for name, (text, conj) in texts.items()]
    _, ids = c["store"].create_batch("hosts", jobs, label="hosts", queue_name=QUEUE_BATCH,
                                     settings={}, enqueue=c["dispatcher"].enqueue)
    return ids


def worker_pid(rec) -> int:
    """Worker names are host.pid.n (service.queue.worker_name)."""
    return int(rec["worker"].split(".")[-2])


def host_of(c, rec) -> str:
    pid = worker_pid(rec)
    for label, p in c["workers"].items():
        if p.pid == pid:
            return label
    raise AssertionError(f"job ran on an unknown worker {rec['worker']}")


def test_batch_settles_across_both_hosts(cluster):
    c = cluster
    with netns.inside(c["hosts"].hub):
        texts = {f"q{i}.nj": (quick(i), f"g{i}") for i in range(6)}
        texts.update({f"s{i}.nj": (SLOW, "g") for i in range(4)})
        ids = submit(c, texts, time_limit=1.5)
        recs = wait_until(lambda: (rs := c["store"].get_jobs(ids)) and
                          all(r["state"] == "done" for r in rs) and rs, 120, every=0.2,
                          what="batch settled")
    verdicts = {r["file"]: r["verdict"] for r in recs}
    assert all(verdicts[f"q{i}.nj"] == "Theorem" for i in range(6)), verdicts
    assert all(verdicts[f"s{i}.nj"] == "Timeout" for i in range(4)), verdicts
    ran_on = {host_of(c, r) for r in recs}
    assert ran_on == {"hosta", "hostb"}, ran_on


def test_cut_link_job_is_retried_on_the_other_host(cluster):
    c = cluster
    store = c["store"]
    with netns.inside(c["hosts"].hub):
        ids = submit(c, {f"s{i}.nj": (SLOW, "g") for i in range(6)}, time_limit=3)

        def running_on_a():
            for r in store.get_jobs(ids):
                if r["state"] == "running" and host_of(c, r) == "hosta":
                    return r
        victim = wait_until(running_on_a, 60, every=0.1, what="a job running on host a")
        time.sleep(0.5)
        c["hosts"].cut("hosta")
        t_cut = time.monotonic()
        recs = wait_until(lambda: (rs := store.get_jobs(ids)) and
                          all(r["state"] in ("done", "failed") for r in rs) and rs,
                          150, every=0.2, what="every job settled after the cut")
        settled_after = time.monotonic() - t_cut
        # host a comes back: its late verdict for the victim must be refused
        c["hosts"].mend("hosta")
        time.sleep(6)
        recs = store.get_jobs(ids)
        batch = store.get_batch(recs[0]["batch"])
    by_id = {r["id"]: r for r in recs}
    v = by_id[victim["id"]]
    assert v["state"] == "done" and v["verdict"] == "Timeout", v
    assert v["attempts"] == 2, v
    assert host_of(c, v) == "hostb", v
    assert all(r["state"] == "done" and r["verdict"] == "Timeout" for r in recs), \
        [(r["id"], r["state"], r["verdict"]) for r in recs]
    # settled once each: the counters add up to the batch, not more
    assert batch["states"]["done"] == len(ids), batch
    assert sum(batch["states"].values()) == len(ids), batch
    assert sum(batch["verdicts"].values()) == len(ids), batch
    print(f"\nlink of host a cut while it ran {victim['id']}: retried on host b; "
          f"all {len(ids)} jobs settled {settled_after:.1f} s after the cut")

"""The service end to end: real Redis, real workers, the real engine."""

from __future__ import annotations

import time

import pytest

from service.client import ApiError

from .conftest import wait_until

# A problem whose search runs to its time limit: the successor function is
# injective and misses e, so every model is infinite (no finite countermodel),
# and commutativity does not follow from these group axioms (no proof).
SLOW = """\
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit: forall x. e * x = x
axiom inv: forall x. i(x) * x = e
axiom inj: forall x y. s(x) = s(y) implies x = y
axiom notz: forall x. s(x) != e
conjecture g: forall x y. x * y = y * x
"""


def mixed_problems(n=50):
    """n problem files, one obligation each, with the verdict each must get
    (worked out by hand: each is a one- or two-step argument)."""
    out = []
    for k in range(n):
        kind = k % 5
        if kind == 0:     # modus ponens with a quantifier
            text = (f"axiom a: forall x. p{k}(x) implies q(x)\naxiom b: p{k}(c{k})\n"
                    f"conjecture g: q(c{k})\n")
            want = "Theorem"
        elif kind == 1:   # equality: f is the identity, so f(f(a)) = a
            text = f"axiom a: forall x. f{k}(x) = x\nconjecture g: f{k}(f{k}(a)) = a\n"
            want = "Theorem"
        elif kind == 2:   # nothing forces q: a one-element model with q false
            text = f"axiom a: p{k}(c)\nconjecture g: q(c)\n"
            want = "CounterSatisfiable"
        elif kind == 3:   # no conjecture, the axioms contradict each other
            text = f"axiom a: p{k}\naxiom b: p{k} implies r\naxiom c: not r\n"
            want = "Unsatisfiable"
        else:             # no conjecture, a model exists
            text = f"axiom a: p{k} or r\naxiom b: not r\n"
            want = "Satisfiable"
        out.append(({"main": f"m{k:02d}.nj", "files": {f"m{k:02d}.nj": text}}, want))
    return out


def owner(api, name="alice"):
    return api.client(api.store.add_token(name))


def test_batch_of_fifty_settles_with_right_verdicts_and_proofs(api, workers):
    workers.start(2)
    c = owner(api)
    probs = mixed_problems(50)
    sub = c.submit({"problems": [p for p, _ in probs], "time_limit": 10, "label": "mix"})
    assert len(sub["jobs"]) == 50
    b = c.wait(sub["batch"], timeout=120)
    assert b["states"]["done"] == 50
    jobs = list(c.jobs(sub["batch"]))
    assert [j["file"] for j in jobs] == [p["main"] for p, _ in probs]
    assert [j["verdict"] for j in jobs] == [w for _, w in probs]
    assert b["verdicts"] == {"Theorem": 20, "CounterSatisfiable": 10,
                             "Unsatisfiable": 10, "Satisfiable": 10}
    for j in jobs:
        assert j["attempts"] == 1 and j["worker"] and j["finished"] >= j["started"]
        if j["verdict"] in ("Theorem", "Unsatisfiable"):
            p = c.proof(j["id"])
            assert p["proof"]["steps"][-1]["clause"] == []
            assert p["text"] and j["certificate"]["kind"] == "proof-replayed"
        if j["verdict"] == "CounterSatisfiable":
            m = c.model(j["id"])
            assert m["model"]["size"] >= 1 and m["text"]
    # only our own keys and RQ's: proofs are stored compressed in ours
    assert api.redis.exists(f"nj:result:{jobs[0]['id']}")


def test_interactive_jobs_go_before_batch_jobs(api, workers):
    c = owner(api)
    bulk = c.submit({"problems": [p for p, _ in mixed_problems(10)]})
    quick = c.submit({"problem": mixed_problems(1)[0][0]})
    workers.start(1)
    c.wait(bulk["batch"], timeout=60)
    first = c.job(quick["jobs"][0]["id"])
    started = [j["started"] for j in c.jobs(bulk["batch"])]
    assert first["started"] < min(started)


def test_worker_killed_mid_job_is_retried_and_settles(api, workers):
    w1, = workers.start(1)
    c = owner(api)
    sub = c.submit({"problem": {"main": "slow.nj", "files": {"slow.nj": SLOW}},
                    "time_limit": 5})
    jid = sub["jobs"][0]["id"]
    wait_until(lambda: c.job(jid)["state"] == "running", 20, what="the job to start")
    time.sleep(0.5)
    first = c.job(jid)
    assert first["state"] == "running" and first["attempts"] == 1
    workers.kill9(w1)
    workers.start(1)
    j = wait_until(lambda: (lambda r: r if r["state"] in ("done", "failed") else None)(c.job(jid)),
                   40, what="the job to settle")
    assert j["state"] == "done" and j["verdict"] == "Timeout"
    assert j["attempts"] == 2 and j["worker"] != first["worker"]
    assert "attempt 1 was lost" in j["lost"] and first["worker"] in j["lost"]
    assert api.redis.scard("nj:running") == 0


def test_health_counts_live_workers_and_a_stopped_one_deregisters(api, workers):
    """SIGTERM stops a worker, idle or busy, by itself and takes it out of
    RQ's registry; health counts the workers that remain.  (Before, one
    SIGTERM left an idle worker running: it took the end of RQ's loop for a
    Redis error and started a fresh RQ worker, which registered again; the
    SIGKILL that stop_processes sends 10 s later left that registration for
    health to count.)"""
    import signal

    from service.embedded import stop_processes
    idle, busy = workers.start(2)
    c = owner(api)
    wait_until(lambda: c.health()["workers"] == 2, 60, what="both workers to register")
    idle.send_signal(signal.SIGTERM)                 # one SIGTERM: RQ's warm stop
    assert idle.wait(30) == 0
    assert c.health()["workers"] == 1 and api.redis.scard("rq:workers") == 1

    sub = c.submit({"problem": {"main": "slow.nj", "files": {"slow.nj": SLOW}},
                    "time_limit": 30})
    jid = sub["jobs"][0]["id"]
    wait_until(lambda: c.job(jid)["state"] == "running", 20, what="the job to start")
    stop_processes([busy], timeout=20)               # warm stop, then cold: the horse goes
    assert busy.returncode == 0
    assert c.health()["workers"] == 0 and api.redis.scard("rq:workers") == 0


def test_cancel_running_job_stops_it(api, workers):
    workers.start(1)
    c = owner(api)
    sub = c.submit({"problem": {"main": "slow.nj", "files": {"slow.nj": SLOW}},
                    "time_limit": 20})
    jid = sub["jobs"][0]["id"]
    wait_until(lambda: c.job(jid)["state"] == "running", 20, what="the job to start")
    t0 = time.monotonic()
    r = c.cancel_job(jid)
    assert r["was"] == "running" and r["state"] == "cancelled"
    # the worker is free again well before the 20 s limit: a new job settles
    nxt = c.submit({"problem": mixed_problems(1)[0][0]})
    b = c.wait(nxt["batch"], timeout=15)
    assert b["verdicts"] == {"Theorem": 1}
    assert time.monotonic() - t0 < 15
    assert c.job(jid)["state"] == "cancelled"


def test_redis_restart_mid_batch_loses_nothing(api, workers, redis_server):
    workers.start(1)
    c = owner(api)
    probs = mixed_problems(40)
    sub = c.submit({"problems": [p for p, _ in probs], "time_limit": 10})
    wait_until(lambda: c.batch(sub["batch"])["settled"] >= 5, 60, every=0.02,
               what="a few jobs to settle")
    assert not c.batch(sub["batch"])["finished"]
    redis_server.restart()            # SIGTERM, then a new server on the same data
    try:
        b = wait_until(lambda: (lambda b: b if b["finished"] else None)(c.batch(sub["batch"])),
                       60, every=0.3, what="the batch to settle after the restart")
    except AssertionError:
        st = api.store
        stuck = [j for j in st.get_jobs(st.batch_job_ids(sub["batch"])) if j["state"] != "done"]
        raise AssertionError(f"not settled: {stuck[:3]} rq queue "
                             f"{api.redis.lrange('rq:queue:nj-batch', 0, -1)[:5]}")
    assert b["total"] == 40 and b["states"]["done"] == 40
    jobs = list(c.jobs(sub["batch"]))
    wrong = [(j["verdict"], j.get("reason"), j.get("attempts")) for j, (_, w) in zip(jobs, probs)
             if j["verdict"] != w]
    assert [j["verdict"] for j in jobs] == [w for _, w in probs], wrong
    for j in jobs:
        if j["verdict"] == "Theorem":
            assert c.proof(j["id"])["proof"]["steps"]
    assert (redis_server.data_dir / "appendonly.aof").exists()


def test_second_token_cannot_read_first_ones_jobs(api, workers):
    workers.start(1)
    a, b = owner(api, "alice"), owner(api, "bob")
    sub = a.submit({"problem": mixed_problems(1)[0][0]})
    a.wait(sub["batch"], timeout=30)
    jid = sub["jobs"][0]["id"]
    assert a.proof(jid)["proof"]
    for call in (lambda: b.job(jid), lambda: b.proof(jid), lambda: b.problem(jid),
                 lambda: b.batch(sub["batch"]), lambda: b.cancel_job(jid),
                 lambda: b.cancel_batch(sub["batch"])):
        with pytest.raises(ApiError) as e:
            call()
        assert e.value.status == 404
    assert b.batches() == []


def test_bad_input_is_refused_with_location_and_nothing_kept(api, workers):
    c = owner(api)
    c.batches()                          # whatever a first request sets up
    before = sorted(api.redis.keys("*"))
    bad = "axiom a: p(c)\naxiom b: forall x. p(x) implies\nconjecture g: p(c)\n"
    with pytest.raises(ApiError) as e:
        c.submit({"problems": [mixed_problems(1)[0][0],
                               {"main": "bad.nj", "files": {"bad.nj": bad}}]})
    err = e.value.error
    assert e.value.status == 400 and err["code"] == "input_error"
    assert err["file"] == "bad.nj" and err["line"] in (2, 3)
    assert err["text"].startswith(f"bad.nj:{err['line']}:{err['col']}: error:")
    assert sorted(api.redis.keys("*")) == before
    assert api.redis.llen("rq:queue:nj-batch") == 0


def test_shared_axioms_read_the_conjecture_files_as_written(api, workers, tmp_path,
                                                            monkeypatch):
    """Axioms plus conjecture files through the API and through the client's
    --axioms path (``submit_files``): a broken conjecture file is refused at
    its own line, shown as written; valid ones get their verdicts from the
    workers, and the stored problem is the file as sent."""
    workers.start(1)
    c = owner(api)
    ax = "axiom a: forall x. p(x) implies q(x)\naxiom b: p(k)\n"
    dangling = "\n\nconjecture h: q(k) and\n"
    with pytest.raises(ApiError) as e:
        c.submit({"axioms": {"main": "ax.nj", "files": {"ax.nj": ax}},
                  "conjectures": [{"name": "c2.nj", "text": dangling}]})
    err = e.value.error
    assert (err["file"], err["line"], err["col"]) == ("c2.nj", 3, 23)
    assert err["text"].splitlines()[1].strip() == "conjecture h: q(k) and"
    monkeypatch.chdir(tmp_path)
    (tmp_path / "ax.nj").write_text(ax)
    (tmp_path / "dangling.nj").write_text(dangling)
    (tmp_path / "good.nj").write_text("# two questions\nconjecture h: q(k)\nconjecture g: q(m)\n")
    (tmp_path / "good.p").write_text("fof(t, conjecture, q(k)).\n")
    (tmp_path / "ax.p").write_text("fof(a, axiom, ![X]: (p(X) => q(X))).\nfof(b, axiom, p(k)).\n")
    from worker.syntax.errors import InputError
    with pytest.raises((InputError, ApiError)) as e:
        c.submit_files(["dangling.nj"], axioms=["ax.nj"])
    text = e.value.render() if isinstance(e.value, InputError) else e.value.error["text"]
    assert text.startswith("dangling.nj:3:23: error:") and "include" not in text.splitlines()[1]
    sub = c.submit_files(["good.nj"], axioms=["ax.nj"], time_limit=10)
    tsub = c.submit_files(["good.p"], axioms=["ax.p"], time_limit=10)
    for s_ in (sub, tsub):
        c.wait(s_["batch"], timeout=60)
    got = [(j["file"], j["conjecture"], j["verdict"])
           for s_ in (sub, tsub) for j in c.jobs(s_["batch"])]
    assert got == [("good.nj", "h", "Theorem"), ("good.nj", "g", "CounterSatisfiable"),
                   ("good.p", "t", "Theorem")]
    assert c.problem(sub["jobs"][0]["id"])["text"] == (tmp_path / "good.nj").read_text()
    assert c.problem(tsub["jobs"][0]["id"])["text"] == (tmp_path / "good.p").read_text()


HOG_WORKER = """\
import sys
import worker.pipeline as pipeline
real = pipeline.decide

def decide(problem, conjecture, settings=None):
    if conjecture == "hog":          # wants far more memory than the cap allows
        block = bytearray(6 << 30)
        return real(problem, conjecture, settings)
    return real(problem, conjecture, settings)

pipeline.decide = decide
from service.config import Config
from service.queue import run_worker
sys.exit(run_worker(sys.argv[1], Config.from_env()))
"""


def test_memory_cap_gives_memoryout_and_the_worker_lives_on(api, redis_server, tmp_path):
    import os
    import subprocess
    import sys
    script = tmp_path / "hog_worker.py"
    script.write_text(HOG_WORKER)
    env = dict(os.environ, NIGHTJAR_MEMORY_MB="2048", NIGHTJAR_HEARTBEAT_SECONDS="0.5")
    log = open(tmp_path / "hog.log", "wb")
    p = subprocess.Popen([sys.executable, str(script), redis_server.url], env=env,
                         stdout=log, stderr=log, start_new_session=True)
    try:
        c = owner(api)
        text = "axiom a: p(c)\nconjecture hog: p(c)\nconjecture fine: p(c) or q\n"
        sub = c.submit({"problem": {"main": "h.nj", "files": {"h.nj": text}}})
        b = c.wait(sub["batch"], timeout=60)
        hog, fine = (c.job(j["id"]) for j in sub["jobs"])
        assert hog["verdict"] == "MemoryOut" and "memory" in hog["reason"]
        assert fine["verdict"] == "Theorem" and fine["worker"] == hog["worker"]
        assert p.poll() is None                       # the worker is still there
        assert b["verdicts"] == {"MemoryOut": 1, "Theorem": 1}
    finally:
        from service.embedded import stop_processes
        stop_processes([p], timeout=5)
        log.close()


BUSY_WORKER = """\
import math
import os
import re
import sys
import time
import worker.pipeline as pipeline
real = pipeline.decide
PARENT = os.getpid()

def decide(problem, conjecture, settings=None):
    # a long native call that keeps the interpreter lock (the horse's own
    # heartbeat thread cannot run meanwhile): exponential backtracking, its
    # length calibrated on this machine to last 7 to 14 seconds (each extra
    # letter doubles the time); only in the work horse, not in the worker's
    # own warm-up
    if os.getpid() == PARENT:
        return real(problem, conjecture, settings)
    n = 16
    while True:
        t0 = time.perf_counter()
        re.match(r"(a+)+$", "a" * n + "b")
        t = time.perf_counter() - t0
        if t > 0.3:
            break
        n += 1
    n += max(0, math.ceil(math.log2(7.0 / t)))
    re.match(r"(a+)+$", "a" * n + "b")
    return real(problem, conjecture, settings)

pipeline.decide = decide
from service.config import Config
from service.queue import run_worker
sys.exit(run_worker(sys.argv[1], Config.from_env()))
"""


def test_a_long_native_call_is_not_taken_for_a_lost_worker(api, redis_server, tmp_path):
    """The worker renews the alive key while its horse runs, so an attempt
    whose own heartbeat thread is starved keeps its job (no retry)."""
    import os
    import subprocess
    import sys
    script = tmp_path / "busy_worker.py"
    script.write_text(BUSY_WORKER)
    log = open(tmp_path / "busy.log", "wb")
    p = subprocess.Popen([sys.executable, str(script), redis_server.url], env=dict(os.environ),
                         stdout=log, stderr=log, start_new_session=True)
    try:
        c = owner(api)
        sub = c.submit({"problem": mixed_problems(1)[0][0], "time_limit": 120})
        c.wait(sub["batch"], timeout=150)
        j = c.job(sub["jobs"][0]["id"])
        assert j["verdict"] == "Theorem" and j["attempts"] == 1 and j["lost"] is None
        assert j["finished"] - j["started"] > 2 * api.config.alive_ttl   # it was starved long
    finally:
        from service.embedded import stop_processes
        stop_processes([p], timeout=5)
        log.close()

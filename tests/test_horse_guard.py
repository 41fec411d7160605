"""service.horse_guard: a work horse that dies of exhausted memory inside a C
extension (here: a SAT solver whose allocator throws std::bad_alloc under an
address-space cap, which aborts the process) gets MemoryOut for its attempt;
a horse killed with SIGKILL is left to the sweeper's retry."""

import os
import signal
import subprocess
import sys
import textwrap
from types import SimpleNamespace

import fakeredis
import pytest

from service import horse_guard
from service.store import Store

CHILD = textwrap.dedent("""
    import resource
    from pysat.solvers import Solver
    vm = [int(l.split()[1]) for l in open("/proc/self/status") if l.startswith("VmSize:")][0]
    resource.setrlimit(resource.RLIMIT_AS, (vm * 1024 + 64 * 2**20, resource.RLIM_INFINITY))
    s = Solver(name="cadical153")
    i = 1
    while True:
        s.add_clause([i, -(i + 1), i + 2, -(i + 3), i + 4, i + 5, i + 6, i + 7])
        i += 1
""")


def run_child(code: str):
    p = subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.DEVNULL,
                         stderr=subprocess.DEVNULL)
    _, status, rusage = os.wait4(p.pid, 0)
    p.returncode = 0
    return status, rusage


@pytest.fixture
def job_in_store(monkeypatch):
    r = fakeredis.FakeRedis()
    store = Store(r)
    b = {"main": "m.nj", "files": {"m.nj": "axiom a: p\nconjecture g: p\n"}, "language": None}
    _, (jid,) = store.create_batch("o", [{"file": "m.nj", "conjecture": "g", "bundle": b,
                                          "time_limit": 5}], label=None,
                                   queue_name="nj-batch", settings={})
    rec = store.start_attempt(jid, "w.1.1", 30)
    return r, store, jid, rec["attempts"]


def test_a_real_abort_under_the_cap_becomes_memory_out(job_in_store, monkeypatch):
    status, rusage = run_child(CHILD)
    assert os.WIFSIGNALED(status) and os.WTERMSIG(status) == signal.SIGABRT
    r, store, jid, attempt = job_in_store
    monkeypatch.setenv("NIGHTJAR_MEMORY_MB", "100")
    job = SimpleNamespace(id=f"{jid}-{attempt}", connection=r)
    horse_guard.horse_killed(job, 1234, status, rusage)
    rec = store.get_job(jid)
    assert rec["state"] == "done" and rec["verdict"] == "MemoryOut", rec
    assert "SIGABRT" in rec["reason"] and "MB" in rec["reason"], rec
    batch = store.get_batch(rec["batch"])
    assert batch["states"]["done"] == 1 and batch["verdicts"] == {"MemoryOut": 1}


def test_sigkill_is_left_to_the_retry(job_in_store):
    status, rusage = run_child("import os, signal; os.kill(os.getpid(), signal.SIGKILL)")
    assert os.WIFSIGNALED(status) and os.WTERMSIG(status) == signal.SIGKILL
    r, store, jid, attempt = job_in_store
    horse_guard.horse_killed(SimpleNamespace(id=f"{jid}-{attempt}", connection=r),
                             1, status, rusage)
    assert store.get_job(jid)["state"] == "running"


def test_a_superseded_attempt_is_not_overwritten(job_in_store):
    status, rusage = run_child(CHILD)
    r, store, jid, attempt = job_in_store
    horse_guard.horse_killed(SimpleNamespace(id=f"{jid}-{attempt + 1}", connection=r),
                             1, status, rusage)
    assert store.get_job(jid)["state"] == "running"


def test_memory_verdict_rules():
    # a raw waitpid status of a signal death is the signal number itself
    assert horse_guard.memory_verdict(signal.SIGABRT, 10, 100)
    assert horse_guard.memory_verdict(signal.SIGSEGV, 90, 100)
    assert horse_guard.memory_verdict(signal.SIGSEGV, 10, 100) is None
    assert horse_guard.memory_verdict(signal.SIGKILL, 99, 100) is None
    assert horse_guard.memory_verdict(1 << 8, 99, 100) is None      # exit(1)

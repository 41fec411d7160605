"""Fixtures of the fault tests: Redis run with deploy/redis.conf (production
settings, appendfsync always), the service engineer's worker processes
(tests/integration/conftest.py ``Workers``), and the API under waitress."""

from __future__ import annotations

import os
import threading

import pytest

from service.config import Config
from service.queue import Sweeper, connect
from service.store import Store
from tests.hardening import ProductionRedis
from tests.integration.conftest import FAST, Workers


def pytest_collection_modifyitems(items):
    for item in items:
        if "tests/faults/" in str(item.fspath).replace(os.sep, "/"):
            item.add_marker(pytest.mark.integration)


@pytest.fixture
def prod_redis(tmp_path):
    rp = ProductionRedis(tmp_path / "redis-data").start()
    try:
        yield rp
    finally:
        rp.kill()


@pytest.fixture
def fast_env(monkeypatch):
    for k, v in FAST.items():
        monkeypatch.setenv(k, v)


@pytest.fixture
def prod_workers(prod_redis, tmp_path, fast_env):
    w = Workers(prod_redis.url, tmp_path)
    try:
        yield w
    finally:
        w.stop()


class Served:
    def __init__(self, url, store, token):
        self.url, self.store, self.token = url, store, token

    def client(self, timeout=20):
        from service.client import Client
        return Client(self.url, self.token, timeout=timeout)


@pytest.fixture
def prod_api(prod_redis, fast_env):
    from waitress.server import create_server

    from service.app import create_app
    config = Config.from_env(redis_url=prod_redis.url)
    r = connect(prod_redis.url)
    store = Store(r)
    token = store.add_token("faults")
    app = create_app(config, r)
    server = create_server(app, host="127.0.0.1", port=0, threads=6)
    t = threading.Thread(target=server.run, daemon=True)
    t.start()
    sweeper = Sweeper(prod_redis.url, config)
    sweeper.start()
    try:
        yield Served(f"http://127.0.0.1:{server.effective_port}", store, token)
    finally:
        sweeper.halt.set()
        server.close()
        t.join(5)

"""deploy/ is consistent with the code: the production Redis configuration
starts the bundled Redis with the promised settings, the systemd units pass
systemd-analyze (where it is installed) and run commands that exist, and the
container files and compose file name the same commands and targets."""

import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from service.cli import build_parser
from tests.hardening import DEPLOY_CONF, PASSWORD, ProductionRedis

DEPLOY = Path(__file__).resolve().parent.parent / "deploy"


def test_production_redis_config_runs_with_the_promised_settings(tmp_path):
    rp = ProductionRedis(tmp_path / "data").start()
    try:
        r = rp.client()
        cfg = lambda k: r.config_get(k)[k]  # noqa: E731
        assert cfg("appendonly") == "yes"
        assert cfg("appendfsync") == "always"
        assert cfg("maxmemory-policy") == "noeviction"
        assert cfg("requirepass") == PASSWORD
        r.set("nj:probe", "1")
        import redis
        with pytest.raises(redis.ResponseError):
            r.execute_command("FLUSHALL")          # renamed away
        anon = redis.Redis(port=rp.port, socket_connect_timeout=2)
        with pytest.raises(redis.AuthenticationError):
            anon.get("nj:probe")
        assert (tmp_path / "data" / "nightjar.aof").exists()
    finally:
        rp.kill()


def test_redis_config_placeholders_are_marked():
    text = DEPLOY_CONF.read_text()
    assert "requirepass REPLACE-WITH-A-LONG-RANDOM-PASSWORD" in text
    for key in ("bind", "requirepass", "dir", "maxmemory"):
        assert re.search(rf"^{key} ", text, re.M), key


def test_systemd_units_verify_and_run_existing_commands():
    units = sorted((DEPLOY / "systemd").glob("*.service"))
    assert {u.name for u in units} >= {"nightjar-api.service", "nightjar-worker@.service"}
    parser = build_parser()
    sub = next(a for a in parser._actions if a.__class__.__name__ == "_SubParsersAction")
    for u in units:
        text = u.read_text()
        assert re.search(r"^Restart=always$", text, re.M), u.name
        assert re.search(r"^TimeoutStopSec=\d+$", text, re.M), u.name
        for line in re.findall(r"^ExecStart=(.*)$", text, re.M):
            if "/nightjar " in line:
                cmd = line.split("/nightjar ", 1)[1].split()[0]
                assert cmd in sub.choices, (u.name, cmd)
    worker = (DEPLOY / "systemd" / "nightjar-worker@.service").read_text()
    assert "KillMode=mixed" in worker and "KillSignal=SIGTERM" in worker
    api = (DEPLOY / "systemd" / "nightjar-api.service").read_text()
    assert "--call service.app:create_app" in api
    if shutil.which("systemd-analyze") is None:
        return
    out = subprocess.run(["systemd-analyze", "verify", *map(str, units)],
                         capture_output=True, text=True, timeout=60)
    problems = [l for l in (out.stdout + out.stderr).splitlines()
                if l.strip() and "is not executable" not in l]
    assert problems == [], problems


def test_the_api_entry_point_the_units_call_builds_the_app(monkeypatch, tmp_path):
    """waitress-serve --call service.app:create_app: create_app() with no
    arguments reads NIGHTJAR_REDIS_URL."""
    from service.app import create_app
    rp = ProductionRedis(tmp_path / "data").start()
    try:
        monkeypatch.setenv("NIGHTJAR_REDIS_URL", rp.url)
        app = create_app()
        resp = app.test_client().get("/api/health")
        assert resp.status_code == 200 and resp.get_json()["ok"] is True
    finally:
        rp.kill()


def test_container_files_agree_with_the_units():
    cf = (DEPLOY / "containers" / "Containerfile").read_text()
    assert re.search(r"^FROM base AS api$", cf, re.M)
    assert re.search(r"^FROM base AS worker$", cf, re.M)
    assert "--call service.app:create_app" in cf
    assert '"nightjar", "worker"' in cf
    compose = (DEPLOY / "containers" / "compose.yaml").read_text()
    for svc in ("redis:", "api:", "worker:"):
        assert re.search(rf"^  {svc}$", compose, re.M), svc
    assert "target: api" in compose and "target: worker" in compose
    assert "UNTESTED" in compose and "UNTESTED" in cf
    red = (DEPLOY / "containers" / "redis.Containerfile").read_text()
    assert "COPY deploy/redis.conf" in red


def test_backup_and_restore_as_the_guide_says(tmp_path):
    """deploy/GUIDE.md, "Backups and restore": BGSAVE, copy the snapshot;
    later restore it (AOF moved aside, started with the AOF off, AOF turned on
    again and rewritten), and the records are those of the snapshot."""
    import shutil
    import time

    from service.store import Store
    data = tmp_path / "data"
    rp = ProductionRedis(data).start()
    try:
        r = rp.client()
        store = Store(r)
        b = {"main": "m.nj", "files": {"m.nj": "axiom a: p\nconjecture g: p\n"}, "language": None}
        bid, ids = store.create_batch("o", [{"file": "m.nj", "conjecture": "g", "bundle": b,
                                             "time_limit": 5}], label="kept", queue_name="nj-batch",
                                      settings={})
        r.bgsave()
        deadline = time.monotonic() + 30
        while True:
            info = r.info("persistence")
            if not info["rdb_bgsave_in_progress"] and info["rdb_changes_since_last_save"] == 0 \
                    and (data / "nightjar.rdb").exists():
                break
            assert time.monotonic() < deadline, "BGSAVE did not finish"
            time.sleep(0.1)
        assert info["rdb_last_bgsave_status"] == "ok"
        backup = tmp_path / "backup.rdb"
        shutil.copy(data / "nightjar.rdb", backup)
        # after the snapshot: a mistaken delete and a new batch
        r.delete(store.k_job(ids[0]))
        bid2, _ = store.create_batch("o", [{"file": "m.nj", "conjecture": "g", "bundle": b,
                                            "time_limit": 5}], label="later",
                                     queue_name="nj-batch", settings={})
    finally:
        rp.stop()
    # restore
    aof = data / "nightjar.aof"
    aof.rename(tmp_path / "nightjar.aof.aside")
    shutil.copy(backup, data / "nightjar.rdb")
    rp.start(extra=["--appendonly", "no"])
    try:
        r = rp.client()
        r.config_set("appendonly", "yes")
        deadline = time.monotonic() + 30
        while True:
            info = r.info("persistence")
            if info["aof_enabled"] and not info["aof_rewrite_in_progress"] \
                    and not info.get("aof_rewrite_scheduled"):
                break
            assert time.monotonic() < deadline, "AOF rewrite did not finish"
            time.sleep(0.1)
    finally:
        rp.stop()
    rp.start()
    try:
        store = Store(rp.client())
        assert store.get_job(ids[0])["state"] == "queued"      # the deleted record is back
        assert store.get_batch(bid)["label"] == "kept"
        assert store.get_batch(bid2) is None                   # after the snapshot: gone
        assert aof.exists()
    finally:
        rp.kill()

"""`nightjar serve` in embedded mode and the command-line client against it:
two homes side by side, the token file, clean stop."""

from __future__ import annotations

import json
import os
import stat
import subprocess
import sys

import pytest

from service.client import Client
from service.embedded import (children, read_server, read_token, start_in_background,
                              stop_background)

THEOREM = "axiom a: forall x. p(x) implies q(x)\naxiom b: p(c)\nconjecture g: q(c)\n"
OPEN = "axiom a: p(c)\nconjecture h: q(c)\n"


def nightjar(home, *args, cwd=None):
    env = dict(os.environ, NIGHTJAR_HOME=str(home))
    env.pop("NIGHTJAR_TOKEN", None)
    env.pop("NIGHTJAR_SERVER", None)
    return subprocess.run([sys.executable, "-m", "service.cli", *args], env=env, cwd=cwd,
                          capture_output=True, text=True, timeout=90)


def alive(pid):
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    # a zombie is not alive
    try:
        with open(f"/proc/{pid}/stat") as f:
            return f.read().split()[2] != "Z"
    except OSError:
        return False


@pytest.fixture
def service(tmp_path):
    started = []

    def start(name):
        home = tmp_path / name
        p = start_in_background(home, workers=1)
        started.append(p)
        return home, p
    try:
        yield start
    finally:
        for p in started:
            stop_background(p)


def test_two_homes_side_by_side_and_the_client(service, tmp_path):
    home1, p1 = service("home1")
    home2, p2 = service("home2")
    s1, s2 = read_server(home1), read_server(home2)
    assert s1["url"] != s2["url"] and s1["redis_url"] != s2["redis_url"]
    for h in (home1, home2):
        mode = stat.S_IMODE(os.stat(h / "token").st_mode)
        assert mode == 0o600
    assert read_token(home1) != read_token(home2)
    # each home's token is refused by the other home's service
    with pytest.raises(Exception):
        Client(s2["url"], read_token(home1)).batches()

    work = tmp_path / "work"
    (work / "lib").mkdir(parents=True)
    (work / "lib" / "base.nj").write_text("axiom a: forall x. p(x) implies q(x)\n")
    (work / "t.nj").write_text('include "lib/base.nj"\naxiom b: p(c)\nconjecture g: q(c)\n'
                               'conjecture h: q(d)\n')
    r = nightjar(home1, "submit", "t.nj", "--wait", "--json", "--time-limit", "5", cwd=work)
    assert r.returncode == 0, r.stderr
    lines = [json.loads(x) for x in r.stdout.splitlines()]
    assert [(x["conjecture"], x["status"]) for x in lines] == [
        ("g", "Theorem"), ("h", "CounterSatisfiable")]
    assert all({"id", "file", "conjecture", "status", "seconds"} <= set(x) for x in lines)
    jid = lines[0]["id"]
    r = nightjar(home1, "status", jid)
    assert r.returncode == 0 and "Theorem" in r.stdout
    r = nightjar(home1, "proof", jid)
    assert r.returncode == 0 and "false" in r.stdout
    r = nightjar(home1, "status", lines[0]["batch"])
    assert "2/2 settled" in r.stdout
    # the other home knows nothing of it
    r = nightjar(home2, "status", jid)
    assert r.returncode != 0 and "no job" in r.stderr

    # bad input: the reader's message, exit 1
    (work / "bad.nj").write_text("axiom a: p(c) and\n")
    r = nightjar(home1, "submit", "bad.nj", cwd=work)
    assert r.returncode == 1 and r.stderr.startswith("bad.nj:")

    # a clean stop: no process of the service is left
    pids = [p1.pid] + children(p1.pid)
    pids += [k for pid in pids for k in children(pid)]
    stop_background(p1)
    assert not any(alive(pid) for pid in pids)
    assert read_server(home1) is None
    r = nightjar(home1, "status", jid)
    assert r.returncode == 4
    assert len(r.stderr.strip().splitlines()) == 1 and "nightjar serve" in r.stderr
    # home2 still answers
    r = nightjar(home2, "submit", str(work / "t.nj"), "--wait", "--time-limit", "5")
    assert r.returncode == 3 or r.returncode == 0, r.stderr
    assert "Theorem" in r.stdout and "CounterSatisfiable" in r.stdout


def test_data_outlives_a_restart(service, tmp_path):
    home, p = service("h")
    c = Client(read_server(home)["url"], read_token(home))
    sub = c.submit({"problem": {"main": "t.nj", "files": {"t.nj": THEOREM}}})
    c.wait(sub["batch"], timeout=30)
    stop_background(p)
    home, p = service("h")
    c = Client(read_server(home)["url"], read_token(home))
    j = c.job(sub["jobs"][0]["id"])
    assert j["verdict"] == "Theorem" and c.proof(j["id"])["proof"]["steps"]


def _redis_servers_on(data_dir):
    """Pids of redis-server processes working in ``data_dir`` (Redis
    rewrites its command line; its working folder is its --dir)."""
    out = []
    for d in os.listdir("/proc"):
        if not d.isdigit():
            continue
        try:
            exe = os.readlink(f"/proc/{d}/exe")
            cwd = os.readlink(f"/proc/{d}/cwd")
        except OSError:
            continue
        if os.path.basename(exe).startswith("redis-server") and alive(int(d)) and \
                os.path.realpath(cwd) == os.path.realpath(data_dir):
            out.append(int(d))
    return out


def test_a_restart_after_kill_9_stops_the_orphans_first(service, tmp_path):
    """kill -9 of `nightjar serve` leaves its Redis and workers running (they
    live in their own sessions).  The next start stops them before it starts
    its own: never two redis-server processes on one data folder; the data
    written before the kill is all there."""
    home, p = service("k")
    c = Client(read_server(home)["url"], read_token(home))
    sub = c.submit({"problem": {"main": "t.nj", "files": {"t.nj": THEOREM}}})
    c.wait(sub["batch"], timeout=30)
    kids = json.loads((home / "children.json").read_text())
    old_redis, old_workers = kids["redis_pid"], kids["workers"]
    assert _redis_servers_on(home / "redis") == [old_redis]
    p.kill()
    p.wait()
    assert alive(old_redis) and all(alive(w) for w in old_workers)   # the orphans
    home, p2 = service("k")
    assert not alive(old_redis) and not any(alive(w) for w in old_workers)
    now = _redis_servers_on(home / "redis")
    assert len(now) == 1 and now[0] != old_redis
    assert "left running by a service for this home" in (home / "logs" / "serve.log").read_text()
    c = Client(read_server(home)["url"], read_token(home))
    j = c.job(sub["jobs"][0]["id"])
    assert j["verdict"] == "Theorem" and c.proof(j["id"])["proof"]["steps"]
    stop_background(p2)
    assert not (home / "children.json").exists()
    assert _redis_servers_on(home / "redis") == []


def test_demo_starts_submits_waits_and_stops(tmp_path):
    home = tmp_path / "demo-home"
    r = nightjar(home, "demo", "--json")
    assert r.returncode in (0, 3), r.stderr
    lines = [json.loads(x) for x in r.stdout.splitlines()]
    from service.cli_client import demo_submission
    _, _, expected = demo_submission()
    got = {(x["file"], x["conjecture"]): x["status"] for x in lines}
    assert set(expected) <= set(got)
    agree = sum(got[k] == v for k, v in expected.items())
    assert agree >= len(expected) - 2, (agree, len(expected))
    assert "stopping the service it started" in r.stderr
    assert read_server(home) is None                 # stopped, nothing left behind
    assert (home / "redis" / "appendonly.aof").exists()


def test_serve_with_a_given_redis_and_a_token_from_the_environment(redis_server, tmp_path):
    home = tmp_path / "prod-home"
    p = start_in_background(home, workers=1, redis_url=redis_server.url)
    try:
        info = read_server(home)
        assert info["redis_url"] == redis_server.url and info["embedded_redis"] is False
        assert not (home / "redis").exists()          # no bundled Redis was started
        r = nightjar(home, "token", "add", "carol", "--redis", redis_server.url)
        assert r.returncode == 0, r.stderr
        tok = r.stdout.strip()
        (tmp_path / "c.nj").write_text(THEOREM)
        env = dict(os.environ, NIGHTJAR_TOKEN=tok, NIGHTJAR_HOME=str(tmp_path / "elsewhere"))
        run = subprocess.run([sys.executable, "-m", "service.cli", "submit", "c.nj", "--wait",
                              "--json", "--server", info["url"]], env=env, cwd=tmp_path,
                             capture_output=True, text=True, timeout=90)
        assert run.returncode == 0, run.stderr
        line = json.loads(run.stdout.splitlines()[0])
        assert line["status"] == "Theorem"
        # the job is carol's: the home's own owner token does not see it
        with pytest.raises(Exception):
            Client(info["url"], read_token(home)).job(line["id"])
        assert Client(info["url"], tok).job(line["id"])["owner"] == "carol"
        r = nightjar(home, "token", "list", "--json", "--redis", redis_server.url)
        assert {t["name"] for t in json.loads(r.stdout)} == {"carol", "local"}
    finally:
        stop_background(p)

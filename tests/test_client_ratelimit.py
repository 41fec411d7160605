"""The client under the service's rate limit (QA): a 429 is waited out as
its Retry-After asks and the request sent again, so that a command walking
many jobs completes; a refusal that outlasts the client's patience is the
service's temporary failure (exit 4), never a usage error; the refusal's
message never says "try again in 0.0 s".

The commands run against the real API over real HTTP (werkzeug's server in a
thread, fakeredis behind it) with a low limit set as the service's own
options, NIGHTJAR_RATE_PER_SECOND and NIGHTJAR_RATE_BURST."""

from __future__ import annotations

import json
import re
import threading

import fakeredis
import pytest

from service import cli, client as client_mod
from service.client import ApiError, Client, RateLimited, ServiceUnavailable, retry_after_seconds
from tests.test_cli_client import _decide


try:
    from werkzeug.serving import WSGIRequestHandler as _Handler
except ImportError:      # pragma: no cover
    _Handler = object


class _Quiet(_Handler):
    """No request log on stderr (the tests read the command's stderr)."""

    def log(self, *args, **kwargs):
        pass


class Served:
    """The API on 127.0.0.1 under a rate limit; ``refusals`` counts its 429s."""

    def __init__(self, monkeypatch, rate: str, burst: str):
        from rq import Queue
        from werkzeug.serving import make_server

        from service.app import create_app
        from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
        from service.store import Store
        monkeypatch.setenv("NIGHTJAR_RATE_PER_SECOND", rate)
        monkeypatch.setenv("NIGHTJAR_RATE_BURST", burst)
        monkeypatch.setattr("worker.pipeline.decide", _decide)
        self.r = r = fakeredis.FakeRedis()
        self.app = app = create_app(Config(), r)
        self.store = Store(r)
        self.token = self.store.add_token("alice")
        self.setup_token = self.store.add_token("alice-setup", owner="alice")
        self.refusals = 0

        @app.after_request
        def count(resp):
            if resp.status_code == 429:
                self.refusals += 1
            return resp

        self.server = make_server("127.0.0.1", 0, app, threaded=False,
                                  request_handler=_Quiet)
        self.url = f"http://127.0.0.1:{self.server.server_port}"
        self.thread = threading.Thread(target=self.server.serve_forever, daemon=True)
        self.thread.start()
        monkeypatch.setenv("NIGHTJAR_SERVER", self.url)
        monkeypatch.setenv("NIGHTJAR_TOKEN", self.token)
        self._queues = lambda: [Queue(n, connection=r) for n in (QUEUE_INTERACTIVE,
                                                                   QUEUE_BATCH)]

    def batch_of(self, names: list) -> dict:
        """A settled batch, one file per conjecture name (None: no conjecture),
        submitted with another token of the same owner (its own budget)."""
        from service.api import accept_submission
        from worker import jobs as worker_jobs
        sub = accept_submission(self.app.extensions["nightjar"], "alice", {"problems": [
            {"main": f"f{i:02}.nj", "files": {f"f{i:02}.nj": "axiom a: p(c)\n" + (
                f"conjecture {n}: p(c)\n" if n else "")}}
            for i, n in enumerate(names)]})
        for q in self._queues():
            for rq_id in q.job_ids:
                worker_jobs.attempt(rq_id.rsplit("-", 1)[0], connection=self.r)
                q.remove(rq_id)
        return sub

    def close(self):
        self.server.shutdown()
        self.thread.join(5)


@pytest.fixture
def served(monkeypatch):
    made = []

    def make(rate="50", burst="10"):
        s = Served(monkeypatch, rate, burst)
        made.append(s)
        return s
    yield make
    for s in made:
        s.close()


NAMES = [("t", "m", None)[i % 3] for i in range(60)]        # theorems, countermodels, models


def test_proof_of_a_60_job_batch_completes_while_the_limiter_bites(served, capsys):
    s = served(rate="50", burst="10")
    sub = s.batch_of([f"{k}{i}" if k else None for i, k in enumerate(NAMES)])
    ids = [j["id"] for j in sub["jobs"]]
    code = cli.main(["proof", sub["batch"]])
    out, err = capsys.readouterr()
    assert code == 0, err
    heads = [ln for ln in out.splitlines() if ln.startswith("=== ")]
    assert [h.rsplit("(job ", 1)[1].rstrip(")") for h in heads] == ids   # all, in order
    assert s.refusals > 0                       # the limiter did refuse some requests
    assert "too many requests" not in err and err == ""   # short waits are not told

    before = s.refusals
    code = cli.main(["proof", sub["batch"], "--json"])
    out, err = capsys.readouterr()
    lines = [json.loads(ln) for ln in out.splitlines()]
    assert code == 0 and [ln["id"] for ln in lines] == ids and err == ""
    assert all(ln.get("proof") or ln.get("model") for ln in lines)
    assert s.refusals > before

    code = cli.main(["status", sub["batch"], "--all"])
    out = capsys.readouterr().out
    assert code == 0 and all(i in out for i in ids)


def test_a_batch_costs_one_request_per_job(served, capsys, monkeypatch):
    """The job listing carries each verdict, so ``proof BATCH`` asks for the
    one answer a job has: a proof, or a model for (Counter)Satisfiable."""
    s = served(rate="0", burst="0")                 # no limit: count the requests
    sub = s.batch_of(["t1", "m1", None, "t2", "m2", None])
    calls = []
    real = Client.exchange
    monkeypatch.setattr(Client, "exchange",
                        lambda self, method, path, *a, **k: calls.append(path)
                        or real(self, method, path, *a, **k))
    assert cli.main(["proof", sub["batch"]]) == 0
    per_job = [p for p in calls if p.startswith("/api/jobs/")]
    assert len(per_job) == 6, calls
    assert sum(p.endswith("/model") for p in per_job) == 4
    capsys.readouterr()


def test_a_refusal_that_outlasts_the_client_is_exit_4_not_a_usage_error(served, capsys):
    # one request, then a wait of about 1000 s asked: more than the client waits
    s = served(rate="0.001", burst="1")
    sub = s.batch_of(["t1", "t2"])
    code = cli.main(["status", sub["batch"]])              # the batch, then its jobs
    out, err = capsys.readouterr()
    assert code == 4, (out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("nightjar: too many requests for this "
                                                   "token: at most 0.001 a second")
    assert "rate limit" in lines[0] and "nightjar serve" not in lines[0]
    assert not re.search(r"try again in 0\.0 s", lines[0])
    assert s.refusals == 1                 # asked to wait that long, it did not try again


def test_a_corpus_command_under_the_limit_is_exit_4_too(served, capsys):
    s = served(rate="0.001", burst="1")
    Client(s.url, s.token).health()               # health with the token: the one request
    code = cli.main(["corpus", "diff", "--suite", "greywater"])
    err = capsys.readouterr().err
    assert code == 4 and "too many requests for this token" in err, err


# -- the client's waiting, without a server --------------------------------------

class Scripted(Client):
    """A Client whose exchanges answer from a script: ApiErrors to raise, then
    the answer."""

    def __init__(self, refusals, **kw):
        super().__init__("http://test", "tok", **kw)
        self.refusals = list(refusals)
        self.sent = 0

    def exchange(self, method, path, body=None, query=None):
        self.sent += 1
        if self.refusals:
            raise self.refusals.pop(0)
        return {"ok": True}


def limited(wait):
    return ApiError(429, {"code": "rate_limited", "message": "too many requests for this "
                          "token: at most 20 a second (bursts of 200); try again in 0.1 s"},
                    wait)


@pytest.fixture
def slept(monkeypatch):
    waits = []
    monkeypatch.setattr(client_mod.time, "sleep", waits.append)
    return waits


def test_waits_as_retry_after_asks_with_a_floor(slept):
    c = Scripted([limited(0.3), limited(0.0), limited(None)])
    assert c.get("/api/batches") == {"ok": True}
    assert c.sent == 4
    # as asked; a wait of nothing is the floor; without a figure one second
    assert slept == [0.3, client_mod.RATE_WAIT_FLOOR, 1.0]
    assert c.rate_waited == pytest.approx(1.35) and c.rate_refusals == 3


def test_a_long_wait_asked_is_not_waited(slept):
    c = Scripted([limited(client_mod.RATE_WAIT_CAP + 1)])
    with pytest.raises(RateLimited) as e:
        c.get("/api/batches")
    assert slept == [] and c.sent == 1
    assert isinstance(e.value, ServiceUnavailable) and e.value.status == 429
    assert e.value.code == "rate_limited"
    assert str(e.value).startswith("too many requests for this token")
    assert "nightjar serve" not in str(e.value)


def test_one_request_waits_a_bounded_time_in_all(slept):
    c = Scripted([limited(4.0)] * 10, rate_wait_total=10.0)
    with pytest.raises(RateLimited) as e:
        c.get("/api/batches")
    assert slept == [4.0, 4.0] and c.sent == 3          # a third wait would pass 10 s
    assert "after waiting 8.0 s" in str(e.value)


def test_other_errors_are_not_retried(slept):
    c = Scripted([ApiError(404, {"code": "not_found", "message": "no job j1"})])
    with pytest.raises(ApiError):
        c.get("/api/jobs/j1")
    assert slept == [] and c.sent == 1


def test_a_long_wait_is_told_once(slept):
    told = []
    c = Scripted([limited(2.0)] * 6, notice=told.append)
    assert c.get("/api/batches") == {"ok": True}
    assert len(told) == 1                                 # at 6 s of waiting, once
    assert told[0].startswith("nightjar: the service limits this token's requests (too "
                              "many requests") and "6.0 s so far" in told[0]
    c.refusals = [limited(0.5)]
    c.get("/api/batches")
    assert len(told) == 1


def test_retry_after_is_read_from_the_error_or_the_header():
    assert retry_after_seconds("3", {"retry_after": 0.25}) == 0.25     # the finer figure
    assert retry_after_seconds("3", {}) == 3.0
    assert retry_after_seconds(" 2 ", None) == 2.0
    assert retry_after_seconds(None, {"retry_after": True}) is None    # not a number
    assert retry_after_seconds("soon", {}) is None
    assert retry_after_seconds("Wed, 21 Oct 2015 07:28:00 GMT", {}) == 0.0   # past
    from email.utils import formatdate
    import time
    later = retry_after_seconds(formatdate(time.time() + 100, usegmt=True), {})
    assert 90 < later <= 100


# -- the limiter's refusal -----------------------------------------------------------

class Stub:
    """A rate limiter that always refuses, asking for ``wait`` seconds."""

    def __init__(self, wait):
        self.rate, self.burst, self.wait = 20.0, 200.0, wait

    def take(self, key):
        return self.wait


@pytest.mark.parametrize("wait,told,field,header", [
    (0.0004, "0.1", 0.01, "1"),          # was "try again in 0.0 s"
    (0.03, "0.1", 0.03, "1"),
    (0.1, "0.1", 0.1, "1"),
    (0.101, "0.2", 0.11, "1"),
    (2.96, "3.0", 2.96, "3"),
])
def test_the_refusal_never_tells_a_wait_shorter_than_it_is(wait, told, field, header):
    from service.app import create_app
    from service.config import Config
    from service.store import Store
    r = fakeredis.FakeRedis()
    app = create_app(Config(), r)
    tok = Store(r).add_token("alice")
    app.extensions["nightjar_limits"].rate = Stub(wait)
    resp = app.test_client().get("/api/batches", headers={"Authorization": f"Bearer {tok}"})
    assert resp.status_code == 429
    err = resp.get_json()["error"]
    assert err["message"] == ("too many requests for this token: at most 20 a second "
                              f"(bursts of 200); try again in {told} s")
    assert err["retry_after"] == field and resp.headers["Retry-After"] == header

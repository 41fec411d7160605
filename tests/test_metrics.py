"""GET /metrics against a real Redis (the bundled server): the Prometheus text
exposition format, with figures that follow the stored records."""

import re

import pytest
from rq import Worker
from rq import Queue

from service.app import create_app
from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
from service.embedded import RedisProcess
from service.queue import connect
from service.store import Store

SAMPLE = re.compile(r'^([a-zA-Z_:][a-zA-Z0-9_:]*)(\{([a-zA-Z_][a-zA-Z0-9_]*="(?:[^"\\]|\\.)*",?)*\})? '
                    r'(-?[0-9.eE+-]+|\+Inf|-Inf|NaN)$')

PROBLEM = "axiom a1: p(c)\nconjecture g1: p(c)\nconjecture g2: q(c)\nconjecture g3: p(d)\n"


@pytest.fixture
def served(tmp_path, monkeypatch):
    rp = RedisProcess(tmp_path / "redis").start()
    try:
        r = connect(rp.url)
        app = create_app(Config(redis_url=rp.url), r)
        store = Store(r)
        tok = store.add_token("ops")
        yield app, r, store, {"Authorization": f"Bearer {tok}"}
    finally:
        rp.kill()


def parse(text: str) -> dict:
    """{(name, frozenset(labels)): value}; fails on any line outside the format."""
    out, typed = {}, {}
    for line in text.splitlines():
        if line.startswith("# HELP "):
            continue
        if line.startswith("# TYPE "):
            _, _, name, kind = line.split(" ", 3)
            assert kind in ("counter", "gauge", "histogram", "summary", "untyped")
            typed[name] = kind
            continue
        m = SAMPLE.match(line)
        assert m, f"not an exposition line: {line!r}"
        name = m.group(1)
        labels = frozenset(re.findall(r'([a-zA-Z_]+)="((?:[^"\\]|\\.)*)"', m.group(2) or ""))
        base = re.sub(r"_(bucket|sum|count)$", "", name)
        assert name in typed or base in typed, f"sample before its TYPE: {name}"
        out[(name, labels)] = float(m.group(4))
    return out


def test_metrics_follow_the_records(served):
    app, r, store, auth = served
    c = app.test_client()
    assert c.get("/metrics").status_code == 401
    resp = c.post("/api/submissions", json={"problem": {"main": "t.nj", "files": {"t.nj": PROBLEM}}},
                  headers=auth)
    assert resp.status_code == 202, resp.get_data()
    jids = [j["id"] for j in resp.get_json()["jobs"]]
    assert len(jids) == 3
    resp = c.post("/api/submissions", json={"problems": [
        {"main": "u.nj", "files": {"u.nj": "axiom a: p\nconjecture g: p\n"}}]}, headers=auth)
    assert resp.status_code == 202
    # one job done in 0.3 s (Theorem), one done in 7 s (Timeout), one cancelled
    rec = store.start_attempt(jids[0], "w1", 30)
    assert store.finish(jids[0], rec["attempts"], {"status": "Theorem", "seconds": 0.3})
    rec = store.start_attempt(jids[1], "w1", 30)
    assert store.finish(jids[1], rec["attempts"], {"status": "Timeout", "seconds": 7.0})
    store.cancel(jids[2])
    w = Worker([Queue(QUEUE_BATCH, connection=r)], connection=r, name="metrics-test")
    w.register_birth()
    try:
        resp = c.get("/metrics", headers=auth)
    finally:
        w.register_death()
    assert resp.status_code == 200
    assert resp.content_type.startswith("text/plain; version=0.0.4")
    m = parse(resp.get_data(as_text=True))

    def v(name, **labels):
        return m[(name, frozenset(labels.items()))]

    # queue depths: the interactive submission left 3 RQ jobs (settled or not,
    # RQ's queue still lists them until a worker takes them), batch 1
    assert v("nightjar_queue_depth", queue=QUEUE_INTERACTIVE) == 3
    assert v("nightjar_queue_depth", queue=QUEUE_BATCH) == 1
    assert v("nightjar_jobs", state="done") == 2
    assert v("nightjar_jobs", state="cancelled") == 1
    assert v("nightjar_jobs", state="queued") == 1
    assert v("nightjar_jobs", state="running") == 0
    assert v("nightjar_verdicts_total", verdict="Theorem") == 1
    assert v("nightjar_verdicts_total", verdict="Timeout") == 1
    assert v("nightjar_job_seconds_count") == 2
    assert v("nightjar_job_seconds_sum") == pytest.approx(7.3)
    assert v("nightjar_job_seconds_bucket", le="0.25") == 0
    assert v("nightjar_job_seconds_bucket", le="0.5") == 1
    assert v("nightjar_job_seconds_bucket", le="5.0") == 1
    assert v("nightjar_job_seconds_bucket", le="10.0") == 2
    assert v("nightjar_job_seconds_bucket", le="+Inf") == 2
    assert v("nightjar_workers_alive") == 1
    assert v("nightjar_running_jobs") == 0
    assert v("nightjar_redis_used_memory_bytes") > 0
    # histogram buckets never decrease
    les = sorted((float(dict(k[1])["le"]), val) for k, val in m.items()
                 if k[0] == "nightjar_job_seconds_bucket")
    assert all(a[1] <= b[1] for a, b in zip(les, les[1:]))


def test_metrics_answer_503_when_redis_is_gone(served):
    app, r, store, auth = served
    # a client of a port where nothing listens
    bad = connect("redis://127.0.0.1:1/0")
    app.extensions["nightjar"].redis = bad
    resp = app.test_client().get("/metrics", headers=auth)
    # the token check itself needs the store: either way no 500 and no traceback
    assert resp.status_code in (503,), resp.get_data()

"""Which workers count as live (health, /metrics): registered with RQ, their
hash not expired, and beating; RQ's registry cleaned of expired entries on
the way.  fakeredis and rq's own registration calls."""

import datetime

import fakeredis
from rq import Queue, Worker

from service.app import create_app
from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
from service.metrics import render
from service.queue import LIVE_WITHIN, WORKER_TTL, live_workers
from service.store import Store


def _worker(r, name):
    w = Worker([Queue(QUEUE_INTERACTIVE, connection=r), Queue(QUEUE_BATCH, connection=r)],
               connection=r, name=name, worker_ttl=WORKER_TTL)
    w.register_birth()
    return w


def _silent_for(r, w, seconds):
    """As if ``w`` last beat ``seconds`` ago (killed since, its hash not yet
    expired): RQ's own field, in RQ's own format."""
    from rq.utils import utcformat
    then = datetime.datetime.now(datetime.timezone.utc) - datetime.timedelta(seconds=seconds)
    r.hset(w.key, "last_heartbeat", utcformat(then))


def _registry(r):
    return {k.decode() for k in r.smembers("rq:workers")}


def test_only_beating_registered_workers_count():
    r = fakeredis.FakeRedis()
    live = _worker(r, "live")
    killed = _worker(r, "killed")            # kill -9: registered, silent
    _silent_for(r, killed, LIVE_WITHIN + 5)
    stopped = _worker(r, "stopped")          # a clean stop deregisters
    stopped.register_death()
    # a worker whose hash RQ let expire, still listed in the registry sets
    gone = "rq:worker:expired"
    r.sadd("rq:workers", gone)
    r.sadd(f"rq:workers:{QUEUE_BATCH}", gone)
    assert [w.name for w in live_workers(r)] == ["live"]
    # RQ's cleanup ran: the expired entry left every set; the silent one stays
    # registered (its hash expires as RQ has it), only it is not counted
    assert gone not in _registry(r)
    assert gone.encode() not in r.smembers(f"rq:workers:{QUEUE_BATCH}")
    assert _registry(r) == {live.key, killed.key}
    # a beat again and it counts again
    _silent_for(r, killed, 1)
    assert sorted(w.name for w in live_workers(r)) == ["killed", "live"]


def test_health_and_metrics_count_the_live_workers_only():
    r = fakeredis.FakeRedis()
    app = create_app(Config(), r)
    tok = Store(r).add_token("ops")
    _worker(r, "a")
    _silent_for(r, _worker(r, "b"), LIVE_WITHIN + 60)
    _worker(r, "c").register_death()
    resp = app.test_client().get("/api/health")
    assert resp.status_code == 200 and resp.get_json()["workers"] == 1
    text = render(r)
    assert "\nnightjar_workers_alive 1\n" in text
    resp = app.test_client().get("/metrics", headers={"Authorization": f"Bearer {tok}"})
    assert "\nnightjar_workers_alive 1\n" in resp.get_data(as_text=True)


def test_our_workers_beat_often_enough_for_the_bound():
    """RQ's idle worker beats before each dequeue, which waits worker_ttl - 15
    seconds (rq/worker/base.py, dequeue_timeout): two such waits fit in the
    bound, so a live idle worker is never left out."""
    r = fakeredis.FakeRedis()
    w = Worker([Queue(QUEUE_BATCH, connection=r)], connection=r, name="x",
               worker_ttl=WORKER_TTL)
    assert 2 * w.dequeue_timeout < LIVE_WITHIN

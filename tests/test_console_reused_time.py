"""The console's batch page: sorting by time, the time filter and the time
histogram use a job's own search seconds.  A reused job did no search (its
record's seconds are the original search's, DEVELOPERS.md "Command line"),
so it sorts after the searched jobs, matches no time range and is left out
of the histogram, whose caption counts it apart.  Flask test client over
fakeredis; the records are written through the store's own transitions."""

from __future__ import annotations

import re

import fakeredis
import pytest

from service.app import create_app
from service.config import QUEUE_BATCH, Config
from service.store import Store

CSRF_RE = re.compile(r'name="csrf" value="([^"]+)"')
BUNDLE = {"main": "p.nj", "files": {"p.nj": "axiom a: p(c)\nconjecture g: p(c)\n"},
          "language": None}


@pytest.fixture
def console(monkeypatch):
    monkeypatch.delenv("NIGHTJAR_SECRET_KEY", raising=False)
    monkeypatch.delenv("NIGHTJAR_COOKIE_SECURE", raising=False)
    r = fakeredis.FakeRedis()
    app = create_app(Config(), r)
    store = Store(r)
    tok = store.add_token("alice")
    c = app.test_client()
    page = c.get("/sign-in").get_data(as_text=True)
    resp = c.post("/sign-in", data={"csrf": CSRF_RE.search(page).group(1), "token": tok})
    assert resp.status_code == 303

    def get(path):
        resp = c.get(path)
        assert resp.status_code == 200, path
        return resp.get_data(as_text=True)
    return store, get


def settle(store, jid, seconds, verdict="Theorem"):
    store.start_attempt(jid, "w", 10)
    assert store.finish(jid, 1, {"status": verdict, "seconds": seconds, "strategy": "s",
                                 "certificate": {}, "figures": {}})


def batch(store, names, reused=None):
    js = [{"file": f"{n}.nj", "conjecture": "g", "bundle": BUNDLE, "time_limit": 60.0,
           "reuse_key": None} for n in names]
    return store.create_batch("alice", js, label=None, queue_name=QUEUE_BATCH,
                              settings={}, reused=reused)


def names_in(page):
    return re.findall(r'>(\w+)\.nj#g</a>', page)


@pytest.fixture
def mixed(console):
    """A batch of three searched jobs (0.5, 1.5, 2.5 s), two answered by
    reuse from a 40-second search, and one still queued."""
    store, get = console
    _, (src,) = batch(store, ["orig"])
    settle(store, src, 40.0)
    source = store.get_job(src)
    bid, ids = batch(store, ["fast", "copy1", "mid", "copy2", "slow", "wait"],
                     reused={1: source, 3: source})
    for jid, secs in ((ids[0], 0.5), (ids[2], 1.5), (ids[4], 2.5)):
        settle(store, jid, secs)
    recs = {j["id"]: j for j in store.get_jobs(ids)}
    assert recs[ids[1]]["reused_from"] == src and recs[ids[1]]["seconds"] == 40.0
    return bid, get


def test_sorting_by_time_uses_each_jobs_own_search(mixed):
    bid, get = mixed
    # the searched jobs by their own seconds, then the reused ones, then the
    # unsettled one (the copied 40 s would have put the reused ones last but one)
    assert names_in(get(f"/batches/{bid}?sort=time")) == \
        ["fast", "mid", "slow", "copy1", "copy2", "wait"]
    # descending turns the searched jobs round only: the slowest search first
    # (not the reused jobs' copied 40 s), the jobs without a search of their
    # own after them as before
    assert names_in(get(f"/batches/{bid}?sort=time&dir=desc")) == \
        ["slow", "mid", "fast", "copy1", "copy2", "wait"]
    assert names_in(get(f"/batches/{bid}?sort=time&dir=desc&state=done")) == \
        ["slow", "mid", "fast", "copy1", "copy2"]


def test_a_time_range_matches_no_reused_job(mixed):
    bid, get = mixed
    page = get(f"/batches/{bid}?min_s=30")          # only the copied seconds are this long
    assert "0 jobs match" in page and names_in(page) == []
    page = get(f"/batches/{bid}?min_s=0&max_s=100")
    assert names_in(page) == ["fast", "mid", "slow"] and "3 jobs match" in page
    page = get(f"/batches/{bid}?max_s=2")
    assert names_in(page) == ["fast", "mid"]


def test_the_histogram_leaves_reused_jobs_out_and_says_so(mixed):
    bid, get = mixed
    page = get(f"/batches/{bid}")
    cap = re.search(r"<figcaption>(Time of .*?)</figcaption>", page).group(1)
    assert cap.startswith("Time of the 3 finished jobs that searched")
    assert "2 reused jobs did no search and are not counted" in cap
    bars = re.findall(r'<rect class="hist"[^>]*><title>([^<]*)</title>', page)
    counts = [int(t.rsplit(": ", 1)[1]) for t in bars]
    assert sum(counts) == 3
    # the axis ends just past the slowest own search (2.5 s: 11 bins of 0.25 s),
    # not past the 40 s the reused records copied
    top = re.search(r'text-anchor="end">([\d.]+ m?s)</text>\n</svg>', page).group(1)
    assert top == "2.75 s"


def test_a_batch_of_reused_jobs_only_has_no_histogram_but_says_why(console):
    store, get = console
    _, (src,) = batch(store, ["orig"])
    settle(store, src, 12.0)
    bid, _ = batch(store, ["a", "b"], reused={0: store.get_job(src), 1: store.get_job(src)})
    page = get(f"/batches/{bid}")
    assert '<rect class="hist"' not in page and "Time of the" not in page
    assert "No time to chart: the 2 finished jobs were reused and did no search." in page
    # a batch without reuse has no such note
    plain, (jid,) = batch(store, ["x"])
    settle(store, jid, 0.2)
    page = get(f"/batches/{plain}")
    assert "Time of the 1 finished job</figcaption>" in page and "tchart-reused" not in page

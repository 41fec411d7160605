"""Gaps closed in the web console: the submit form under the API's rate
limit, the model link only where a model is stored, and a refused upload
that keeps what was sent.  Flask test client over fakeredis."""

from __future__ import annotations

import fakeredis
import pytest

from service.app import create_app
from service.config import Config
from service.store import Store
from tests.test_web_pages import GOOD, Console


def make_console(monkeypatch, rate=None, burst=None):
    monkeypatch.delenv("NIGHTJAR_SECRET_KEY", raising=False)
    monkeypatch.delenv("NIGHTJAR_COOKIE_SECURE", raising=False)
    if rate is not None:
        monkeypatch.setenv("NIGHTJAR_RATE_PER_SECOND", str(rate))
        monkeypatch.setenv("NIGHTJAR_RATE_BURST", str(burst))
    r = fakeredis.FakeRedis()
    cfg = Config(max_time_limit=60, default_time_limit=10, max_upload_bytes=200_000)
    app = create_app(cfg, r)
    store = Store(r)
    e = Console(app, r, store)
    e.alice = store.add_token("alice")
    e.bob = store.add_token("bob")
    return e


@pytest.fixture
def env(monkeypatch):
    return make_console(monkeypatch)


# ============================================ 2. the submit form is rate-limited

def test_web_submissions_share_the_api_rate_budget_of_their_token(monkeypatch):
    # a budget of 3 requests with next to no refill: the test cannot outrun it
    e = make_console(monkeypatch, rate=0.001, burst=3)
    api = {"Authorization": f"Bearer {e.alice}"}
    e.sign_in(e.alice)
    assert e.client.get("/api/batches", headers=api).status_code == 200     # 1
    assert e.client.get("/api/batches", headers=api).status_code == 200     # 2
    ok = e.submit(GOOD, name="first.nj")                                     # 3
    assert ok.status_code == 303, ok.get_data(as_text=True)
    before = e.store.r.keys("nj:batch:*")

    refused = e.submit(GOOD + "# <b>kept</b>\n", name="second.nj", label="my run")
    page = refused.get_data(as_text=True)
    assert refused.status_code == 429
    assert refused.headers["Content-Type"].startswith("text/html")
    assert int(refused.headers["Retry-After"]) >= 1
    assert "Too many requests for this token: at most 0.001 a second (bursts of 3)" in page
    assert "Nothing was queued" in page and "Traceback" not in page
    # the form comes back with what was typed, escaped
    assert "# &lt;b&gt;kept&lt;/b&gt;" in page and "<b>kept</b>" not in page
    assert 'value="second.nj"' in page and 'value="my run"' in page
    assert e.store.r.keys("nj:batch:*") == before                  # nothing stored

    # the API, for the same token, is out of budget too
    assert e.client.get("/api/batches", headers=api).status_code == 429
    # another token's budget is its own
    bob = Console(e.app, e.r, e.store)
    bob.sign_in(e.bob)
    assert bob.submit(GOOD).status_code == 303

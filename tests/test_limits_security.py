"""Security and limits of the API: tokens kept only as hashes and compared in
constant time, a rate limit per token, and size and count limits on every
request (each answered with a clear 4xx, never a 500)."""

import hmac
import json

import fakeredis
import pytest

from service import limits
from service.app import create_app
from service.config import Config
from service.store import Store

SMALL = {"main": "t.nj", "files": {"t.nj": "axiom a: p\nconjecture g: p\n"}}


@pytest.fixture
def env(monkeypatch):
    monkeypatch.setenv("NIGHTJAR_RATE_PER_SECOND", "0.5")
    monkeypatch.setenv("NIGHTJAR_RATE_BURST", "10")
    r = fakeredis.FakeRedis()
    app = create_app(Config(max_upload_bytes=200_000, max_jobs_per_batch=20,
                            max_time_limit=60), r)
    store = Store(r)

    class E:
        pass
    e = E()
    e.r, e.app, e.store, e.c = r, app, store, app.test_client()
    e.tok = store.add_token("alice")
    e.auth = {"Authorization": f"Bearer {e.tok}"}
    return e


def all_redis_bytes(r) -> bytes:
    out = []
    for k in r.scan_iter("*"):
        out.append(k)
        t = r.type(k)
        if t == b"string":
            out.append(r.get(k))
        elif t == b"hash":
            for f, v in r.hgetall(k).items():
                out += [f, v]
        elif t == b"set":
            out += list(r.smembers(k))
        elif t == b"list":
            out += r.lrange(k, 0, -1)
        elif t == b"zset":
            out += [m for m, _ in r.zrange(k, 0, -1, withscores=True)]
    return b"\n".join(out)


def test_tokens_are_kept_only_as_hashes(env):
    other = env.store.add_token("bob")
    everything = all_redis_bytes(env.r)
    for tok in (env.tok, other):
        assert tok.encode() not in everything
        assert tok[3:].encode() not in everything          # not even without its prefix
        assert Store.token_hash(tok).encode() in everything
    assert env.store.check_token(env.tok) == "alice"
    assert env.store.check_token(other) == "bob"
    assert env.store.check_token(env.tok + "x") is None


def test_tokens_are_compared_in_constant_time(env, monkeypatch):
    calls = []
    real = hmac.compare_digest

    def spy(a, b):
        calls.append((a, b))
        return real(a, b)
    monkeypatch.setattr(hmac, "compare_digest", spy)
    assert env.store.check_token(env.tok) == "alice"
    assert calls and calls[-1][1] == Store.token_hash(env.tok)


def test_rate_limit_per_token(env):
    bob = {"Authorization": f"Bearer {env.store.add_token('bob')}"}
    codes = [env.c.get("/api/batches", headers=env.auth).status_code for _ in range(25)]
    assert codes[:10] == [200] * 10                 # the burst
    assert 429 in codes[10:]
    resp = env.c.get("/api/batches", headers=env.auth)
    assert resp.status_code == 429
    assert int(resp.headers["Retry-After"]) >= 1
    body = resp.get_json()["error"]
    assert body["code"] == "rate_limited" and "a second" in body["message"]
    # another token is not slowed down by alice's requests
    assert env.c.get("/api/batches", headers=bob).status_code == 200
    # health needs no token and is not limited
    assert all(env.c.get("/api/health").status_code in (200, 503) for _ in range(30))


def test_rate_limiter_refills():
    # 20 tokens a second: the third take right after a burst of two waits
    # up to 50 ms (a slow machine may already have refilled part of it)
    rl = limits.RateLimiter(rate=20.0, burst=2)
    assert rl.take("k") == 0 and rl.take("k") == 0
    wait = rl.take("k")
    assert 0 < wait <= 0.05 + 1e-9
    import time
    time.sleep(0.12)
    assert rl.take("k") == 0


def post(env, body=None, data=None):
    if data is not None:
        return env.c.post("/api/submissions", data=data, headers=env.auth,
                          content_type="application/json")
    return env.c.post("/api/submissions", json=body, headers=env.auth)


CASES = {
    "upload over the size limit": (lambda: {"problem": {"main": "t.nj", "files": {
        "t.nj": "axiom a: p\n" + "# pad\n" * 50_000}}}, 413, "too_large"),
    "too many problems": (lambda: {"problems": [SMALL] * 21}, 400, "too_many_jobs"),
    "time limit over the cap": (lambda: {"problem": SMALL, "time_limit": 61}, 400, "limit"),
    "time limit not finite": ('{"problem": {"main": "t.nj", "files": {"t.nj": "axiom a: p"}}, '
                              '"time_limit": NaN}', 400, "bad_request"),
    "time limit infinite": ('{"problem": {"main": "t.nj", "files": {"t.nj": "axiom a: p"}}, '
                            '"time_limit": Infinity}', 400, "bad_request"),
    "JSON nested deeply": ("[" * 50_000 + "]" * 50_000, 400, "bad_request"),
    "JSON nested deeply inside a string-free object": (
        '{"problem": ' + '{"a": ' * 100 + "1" + "}" * 100 + "}", 400, "bad_request"),
    "too many files in a problem": (lambda: {"problem": {"main": "t.nj", "files": {
        "t.nj": "axiom a: p", **{f"f{i}.nj": "" for i in range(1001)}}}}, 400, "bad_request"),
    "label too long": (lambda: {"problem": SMALL, "label": "x" * 201}, 400, "bad_request"),
    "not JSON": ("this is not json", 400, "bad_request"),
    "not UTF-8": (b'{"problem": "\xff\xfe"}', 400, "bad_request"),
    "conjectures over the count": (lambda: {"axioms": {"main": "ax.nj", "files": {
        "ax.nj": "axiom a: p"}}, "conjectures": [{"name": f"c{i}.nj",
                                                 "text": "conjecture g: p"}
                                                for i in range(21)]}, 400, "too_many_jobs"),
}


@pytest.mark.parametrize("case", list(CASES))
def test_submission_limits(env, case):
    make, status, code = CASES[case]
    before = set(env.r.scan_iter("nj:job:*"))
    resp = post(env, data=make) if isinstance(make, (str, bytes)) else post(env, make())
    assert resp.status_code == status, resp.get_data()[:300]
    err = resp.get_json()["error"]
    assert err["code"] == code and err["message"]
    assert "Traceback" not in resp.get_data(as_text=True)
    assert set(env.r.scan_iter("nj:job:*")) == before       # nothing stored


@pytest.mark.parametrize("url,status", [
    ("/api/batches?limit=100000", 400),
    ("/api/batches?offset=99999999999999999999999", 400),
    ("/api/batches?limit=-1", 400),
    ("/api/batches?limit=abc", 400),
    ("/api/batches?x=" + "y" * 300, 400),
    ("/api/batches?" + "&".join(f"p{i}=1" for i in range(30)), 400),
    ("/api/jobs/" + "j" * 500, 404),
    ("/api/jobs/%00", 404),
    ("/api/batches/b0/jobs?state=sleeping", 404),
])
def test_query_and_path_limits(env, url, status):
    resp = env.c.get(url, headers=env.auth)
    assert resp.status_code == status, resp.get_data()[:300]
    assert resp.get_json()["error"]["message"]


def test_page_size_limit_is_enforced_on_a_real_batch(env):
    resp = post(env, {"problem": SMALL})
    assert resp.status_code == 202
    bid = resp.get_json()["batch"]
    ok = env.c.get(f"/api/batches/{bid}/jobs?limit=1000", headers=env.auth)
    assert ok.status_code == 200
    over = env.c.get(f"/api/batches/{bid}/jobs?limit=1001", headers=env.auth)
    assert over.status_code == 400 and over.get_json()["error"]["code"] == "limit"
    bad = env.c.get(f"/api/batches/{bid}/jobs?state=sleeping", headers=env.auth)
    assert bad.status_code == 400


def test_every_endpoint_but_health_needs_a_token(env):
    for rule in env.app.url_map.iter_rules():
        if not (rule.rule.startswith("/api/") or rule.rule == "/metrics"):
            continue
        url = rule.rule.replace("<jid>", "j1").replace("<bid>", "b1").replace(
            "<rid>", "r1").replace("<name>", "s1")
        for m in rule.methods - {"HEAD", "OPTIONS"}:
            resp = env.c.open(url, method=m, json={})
            if url == "/api/health":
                assert resp.status_code in (200, 503)
            else:
                assert resp.status_code == 401, (m, url, resp.status_code)

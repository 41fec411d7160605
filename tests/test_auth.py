"""Tokens: stored hashed, checked, listed, revoked; owners only see their own."""

import fakeredis

from service.app import create_app
from service.config import Config
from service.store import Store


def test_tokens_are_kept_hashed_and_checked():
    r = fakeredis.FakeRedis()
    s = Store(r)
    t = s.add_token("alice")
    assert s.check_token(t) == "alice"
    assert s.check_token(t + "x") is None and s.check_token("") is None
    dump = b"".join(r.dump(k) or b"" for k in r.keys("*"))
    assert t.encode() not in dump                        # never in clear
    assert [x["name"] for x in s.list_tokens()] == ["alice"]
    t2 = s.add_token("alice")                            # a new one replaces the old
    assert s.check_token(t) is None and s.check_token(t2) == "alice"
    assert s.revoke_token("alice") and not s.revoke_token("alice")
    assert s.check_token(t2) is None and s.list_tokens() == []


def test_token_for_another_owner():
    s = Store(fakeredis.FakeRedis())
    t = s.add_token("ci-runner", owner="team")
    assert s.check_token(t) == "team"


def test_api_refuses_without_and_with_revoked_token():
    r = fakeredis.FakeRedis()
    app = create_app(Config(), r)
    s = Store(r)
    t = s.add_token("alice")
    c = app.test_client()
    assert c.get("/api/batches").status_code == 401
    assert c.get("/api/batches", headers={"Authorization": "Basic abc"}).status_code == 401
    assert c.get("/api/batches", headers={"Authorization": f"Bearer {t}"}).status_code == 200
    s.revoke_token("alice")
    r2 = c.get("/api/batches", headers={"Authorization": f"Bearer {t}"})
    assert r2.status_code == 401 and "revoked" in r2.get_json()["error"]["message"]

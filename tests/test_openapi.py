"""The OpenAPI document against the Flask routes: every route under /api and
/metrics is documented with its methods, and every documented operation is a
route; the checked-in service/openapi.json is the document the API serves."""

import json
import re

import fakeredis
import pytest

from service import openapi
from service.app import create_app
from service.config import Config
from service.store import Store


@pytest.fixture
def app():
    r = fakeredis.FakeRedis()
    a = create_app(Config(), r)
    a.testing = True
    a.token = Store(r).add_token("alice")
    return a


def flask_operations(app) -> set[tuple[str, str]]:
    ops = set()
    for rule in app.url_map.iter_rules():
        path = rule.rule
        if not (path.startswith("/api/") or path == "/metrics"):
            continue
        path = re.sub(r"<(?:[^:>]+:)?([^>]+)>", r"{\1}", path)
        for m in rule.methods - {"HEAD", "OPTIONS"}:
            ops.add((m.lower(), path))
    return ops


def documented_operations(doc) -> set[tuple[str, str]]:
    return {(m, p) for p, item in doc["paths"].items() for m in item
            if m in ("get", "post", "put", "patch", "delete")}


def test_every_route_is_documented_and_every_operation_exists(app):
    routes = flask_operations(app)
    documented = documented_operations(openapi.document())
    assert routes - documented == set(), "routes missing from the OpenAPI document"
    assert documented - routes == set(), "documented operations that are not routes"
    assert len(routes) >= 14


def test_path_parameters_match_the_route(app):
    doc = openapi.document()
    for path, item in doc["paths"].items():
        names = set(re.findall(r"{([^}]+)}", path))
        for m, o in item.items():
            declared = {p["name"] for p in o.get("parameters", []) if p["in"] == "path"}
            assert declared == names, (m, path)


def test_checked_in_file_is_the_served_document(app):
    on_disk = json.loads(openapi.FILE.read_text())
    assert on_disk == openapi.document(), "run: python -m service.openapi"
    c = app.test_client()
    resp = c.get("/api/openapi.json", headers={"Authorization": f"Bearer {app.token}"})
    assert resp.status_code == 200
    assert resp.get_json() == on_disk
    assert c.get("/api/openapi.json").status_code == 401


def test_references_resolve():
    doc = openapi.document()
    text = json.dumps(doc)
    for name in set(re.findall(r'"#/components/schemas/([^"]+)"', text)):
        assert name in doc["components"]["schemas"], name
    assert doc["openapi"].startswith("3.0")
    for path, item in doc["paths"].items():
        for m, o in item.items():
            assert o["responses"], (m, path)

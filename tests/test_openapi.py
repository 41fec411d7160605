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


# -- the corpus routes' query parameters and the comparison's refusal ----------------

def _query_names_read(view) -> set[str]:
    """The query parameters a view reads: request.args.get("x") and the corpus
    API's readers _float_arg("x", ...) / _flag_arg("x")."""
    import inspect
    src = inspect.getsource(view)
    return set(re.findall(r'(?:request\.args\.get|_float_arg|_flag_arg)\(\s*"([^"]+)"', src))


def test_corpus_routes_document_every_query_parameter_they_read(app):
    doc = openapi.document()
    seen = 0
    for rule in app.url_map.iter_rules():
        if not rule.rule.startswith("/api/corpus/"):
            continue
        path = re.sub(r"<(?:[^:>]+:)?([^>]+)>", r"{\1}", rule.rule)
        read = _query_names_read(app.view_functions[rule.endpoint])
        for m in rule.methods - {"HEAD", "OPTIONS"}:
            o = doc["paths"][path][m.lower()]
            documented = {p["name"] for p in o.get("parameters", []) if p["in"] == "query"}
            assert documented == read, (m, path)
            seen += len(read)
    assert seen >= 5        # a, b, suite, threshold, across_suites of the comparison


def test_the_comparison_of_two_suites_refusal_is_documented(app):
    from service.corpus import CorpusStore
    doc = openapi.document()
    o = doc["paths"]["/api/corpus/diff"]["get"]
    across = next(p for p in o["parameters"] if p["name"] == "across_suites")
    assert across["in"] == "query" and "1" in across["schema"]["enum"]
    assert "different_suites" in o["responses"]["400"]["description"]
    assert o["responses"]["400"]["content"]["application/json"]["schema"] == \
        {"$ref": "#/components/schemas/Error"}
    # the answer itself: every field it carries is one the Error schema names
    corpus = CorpusStore(app.extensions["nightjar"].redis)
    for rid, suite in (("ra", "paths"), ("rb", "lanes")):
        corpus.save_run({"id": rid, "suite": suite, "owner": "alice", "created": 1.0,
                         "batch": "b" + rid, "expectations": {}, "axiom_sets": {},
                         "obligations": [], "guards": []})
    c = app.test_client()
    h = {"Authorization": f"Bearer {app.token}"}
    resp = c.get("/api/corpus/diff?a=ra&b=rb", headers=h)
    assert resp.status_code == 400
    err = resp.get_json()["error"]
    assert err["code"] == "different_suites" and err["suites"] == {"a": "paths", "b": "lanes"}
    props = doc["components"]["schemas"]["Error"]["properties"]["error"]["properties"]
    assert set(err) <= set(props)
    assert set(err["suites"]) == set(props["suites"]["properties"])
    # each value the document lists for across_suites is taken (none is a 400)
    for v in across["schema"]["enum"]:
        resp = c.get(f"/api/corpus/diff?a=ra&b=rb&across_suites={v}", headers=h)
        on = v in ("1", "true", "yes")
        assert resp.status_code == (200 if on else 400), v
        if not on:
            assert resp.get_json()["error"]["code"] == "different_suites"

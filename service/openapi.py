"""The OpenAPI 3.0 document of the JSON API, served at ``GET /api/openapi.json``.

The document is built here (:func:`document`) and also kept as
``service/openapi.json`` for readers and tools (``python -m service.openapi``
writes it).  ``tests/test_openapi.py`` keeps both in sync with the Flask
routes: every route under ``/api`` and ``/metrics`` is documented, and every
documented operation exists.  Like every endpoint but health, it needs a token.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

from flask import Blueprint, jsonify

from .auth import require_owner

bp = Blueprint("openapi", __name__)

FILE = Path(__file__).with_name("openapi.json")

STATES = ["queued", "running", "done", "failed", "cancelled"]
VERDICTS = ["Theorem", "ContradictoryAxioms", "CounterSatisfiable", "Unsatisfiable",
            "Satisfiable", "Timeout", "ResourceOut", "MemoryOut", "GaveUp", "InputError",
            "Error"]

# -- small builders -----------------------------------------------------------

def ref(name):
    return {"$ref": f"#/components/schemas/{name}"}


def obj(props=None, required=(), extra=True):
    out = {"type": "object", "properties": props or {}}
    if required:
        out["required"] = list(required)
    if not extra:
        out["additionalProperties"] = False
    return out


def arr(items, **kw):
    return {"type": "array", "items": items, **kw}


S = {"type": "string"}
N = {"type": "number"}
I = {"type": "integer"}
B = {"type": "boolean"}


def nullable(schema):
    return {**schema, "nullable": True}


def json_resp(desc, schema):
    return {"description": desc, "content": {"application/json": {"schema": schema}}}


ERR = json_resp("an error, with a code and a plain message", ref("Error"))


def errors(*codes):
    return {str(c): ERR for c in codes}


def op(summary, ok_code, ok, *err_codes, params=(), body=None, secured=True, tags=("jobs",),
       described=None):
    """An operation; ``described``: {status: description} for error answers
    that say more than the generic one (the Error schema still)."""
    o = {"summary": summary, "tags": list(tags), "responses": {str(ok_code): ok}}
    o["responses"].update(errors(*err_codes))
    if secured:
        # every request passes service.limits first: 400 (query or body over a
        # limit), 429 (rate); an id over 100 characters is 404 at once
        o["responses"].update(errors(400, 401, 429))
        if any(p["in"] == "path" for p in params):
            o["responses"].update(errors(404))
    for code, desc in (described or {}).items():
        o["responses"][str(code)] = json_resp(desc, ref("Error"))
    if params:
        o["parameters"] = list(params)
    if body is not None:
        o["requestBody"] = {"required": True,
                            "content": {"application/json": {"schema": body}}}
    if not secured:
        o["security"] = []
    return o


def path_param(name, desc):
    return {"name": name, "in": "path", "required": True, "description": desc,
            "schema": {"type": "string", "maxLength": 100}}


def query(name, schema, desc):
    return {"name": name, "in": "query", "required": False, "description": desc,
            "schema": schema}


PAGING = (query("offset", {"type": "integer", "minimum": 0}, "records to skip"),
          query("limit", {"type": "integer", "minimum": 0, "maximum": 1000},
                "records per page (default 100)"))
JID = path_param("jid", "a job id (j...)")
BID = path_param("bid", "a batch id (b...)")
RID = path_param("rid", "a corpus run id")


def components() -> dict:
    bundle = obj({"main": S, "files": {"type": "object", "additionalProperties": S,
                                       "description": "file name -> text"},
                  "language": nullable({"type": "string", "enum": ["native", "tptp"]})},
                 required=("main", "files"))
    axioms = obj({"main": {"oneOf": [S, arr(S)]},
                  "files": {"type": "object", "additionalProperties": S},
                  "language": nullable({"type": "string", "enum": ["native", "tptp"]})},
                 required=("main", "files"))
    common = {"time_limit": {"type": "number", "description": "seconds per job"},
              "strategy": S, "label": {"type": "string", "maxLength": 200},
              "reuse": B, "queue": {"type": "string", "enum": ["interactive", "batch"]}}
    submission = {"oneOf": [
        obj({"problem": ref("Bundle"), **common}, required=("problem",)),
        obj({"problems": arr(ref("Bundle"), minItems=1), **common}, required=("problems",)),
        obj({"axioms": ref("Axioms"),
             "conjectures": arr(obj({"name": S, "text": S}, required=("name", "text")),
                                minItems=1), **common},
            required=("axioms", "conjectures")),
    ]}
    job = obj({"id": S, "batch": S, "owner": S, "file": S, "conjecture": nullable(S),
               "state": {"type": "string", "enum": STATES},
               "verdict": nullable({"type": "string", "enum": VERDICTS}),
               "seconds": nullable(N), "strategy": nullable(S), "attempts": I,
               "worker": nullable(S), "submitted": N, "started": nullable(N),
               "finished": nullable(N), "reason": nullable(S), "label": nullable(S),
               "time_limit": N, "queue": S, "certificate": {"type": "object"},
               "settings": {"type": "object"}, "reused_from": nullable(S)},
              required=("id", "state"))
    batch = obj({"id": S, "owner": S, "label": nullable(S), "submitted": N, "total": I,
                 "queue": S, "settings": {"type": "object"},
                 "states": {"type": "object", "additionalProperties": I},
                 "verdicts": {"type": "object", "additionalProperties": I},
                 "settled": I, "progress": N, "finished": B},
                required=("id", "total", "states", "verdicts"))
    error = obj({"error": obj({"code": S, "message": S, "file": nullable(S),
                               "line": nullable(I), "col": nullable(I), "text": S,
                               "limit": N, "retry_after": N, "field": S,
                               "suites": obj({"a": nullable(S), "b": nullable(S)})},
                              required=("code", "message"))},
                required=("error",))
    return {
        "securitySchemes": {"token": {"type": "http", "scheme": "bearer",
                                      "description": "a token from `nightjar token add NAME`"}},
        "schemas": {"Bundle": bundle, "Axioms": axioms, "Submission": submission,
                    "Job": job, "Batch": batch, "Error": error},
    }


def paths() -> dict:
    accepted = json_resp("accepted: the ids, at once", obj(
        {"batch": S, "jobs": arr(obj({"id": S, "file": S, "conjecture": nullable(S),
                                      "state": S, "reused": B}))}, required=("batch", "jobs")))
    anyobj = {"type": "object"}
    return {
        "/api/health": {"get": op("Is the service up (no token needed)", 200,
                                  json_resp("up", obj({"ok": B, "workers": I,
                                                       "queued": anyobj, "running": I})),
                                  503, secured=False, tags=("service",))},
        "/api/openapi.json": {"get": op("This document", 200,
                                        json_resp("the OpenAPI document", anyobj),
                                        tags=("service",))},
        "/metrics": {"get": op(
            "Figures in the Prometheus text exposition format", 200,
            {"description": "queue depths, jobs by state, verdicts, job seconds, workers",
             "content": {"text/plain": {"schema": S}}}, 503, tags=("service",))},
        "/api/submissions": {"post": op(
            "Submit one problem, many problem files, or axioms with many conjectures",
            202, accepted, 400, 413, body=ref("Submission"))},
        "/api/jobs/{jid}": {"get": op("A job's record", 200, json_resp("the job", ref("Job")),
                                      404, params=(JID,))},
        "/api/jobs/{jid}/proof": {"get": op(
            "A job's proof (JSON and text)", 200,
            json_resp("the proof, or null", obj({"id": S, "state": S,
                                                 "verdict": nullable(S),
                                                 "proof": nullable(anyobj),
                                                 "axioms_used": arr(S),
                                                 "text": nullable(S)})), 404, params=(JID,))},
        "/api/jobs/{jid}/model": {"get": op(
            "A job's model (a countermodel for CounterSatisfiable; JSON and text); "
            "404 with code no_model when a "
            "Satisfiable or CounterSatisfiable verdict came from saturation", 200,
            json_resp("the model, or null while the job has no verdict", obj({"id": S, "state": S,
                                                 "verdict": nullable(S),
                                                 "model": nullable(anyobj),
                                                 "text": nullable(S)})), 404, params=(JID,))},
        "/api/jobs/{jid}/figures": {"get": op(
            "A job's figures", 200,
            json_resp("figures", obj({"id": S, "state": S, "seconds": nullable(N),
                                      "figures": anyobj})), 404, params=(JID,))},
        "/api/jobs/{jid}/problem": {"get": op(
            "A job's problem as submitted", 200,
            json_resp("the bundle and the main text",
                      obj({"id": S, "conjecture": nullable(S), "main": S,
                           "files": anyobj, "language": nullable(S), "text": S})),
            404, params=(JID,))},
        "/api/jobs/{jid}/cancel": {"post": op(
            "Cancel a job (queued: never starts; running: stopped)", 200,
            json_resp("what happened", obj({"id": S, "state": S, "was": S,
                                            "cancelled": B})), 404, params=(JID,))},
        "/api/batches": {"get": op(
            "The caller's batches, newest first", 200,
            json_resp("one page", obj({"batches": arr(ref("Batch")), "offset": I,
                                       "limit": I})), 400, params=PAGING, tags=("batches",))},
        "/api/batches/{bid}": {
            "get": op("A batch: counts per state and verdict, progress", 200,
                      json_resp("the batch", ref("Batch")), 404, params=(BID,),
                      tags=("batches",)),
            "delete": op("Delete a settled batch, its jobs and their results", 200,
                         json_resp("what was deleted", obj({"batch": S, "deleted_jobs": I})),
                         404, 409, params=(BID,), tags=("batches",))},
        "/api/batches/{bid}/jobs": {"get": op(
            "A batch's jobs, filtered and paged", 200,
            json_resp("one page", obj({"batch": S, "total": I, "offset": I, "limit": I,
                                       "jobs": arr(ref("Job"))})), 400, 404,
            params=(BID, query("state", {"type": "string", "enum": STATES}, "only this state"),
                    query("verdict", S, "only this verdict"), *PAGING), tags=("batches",))},
        "/api/batches/{bid}/cancel": {"post": op(
            "Cancel every unsettled job of a batch", 200,
            json_resp("counts", obj({"batch": S, "cancelled": I, "already_settled": I})),
            404, params=(BID,), tags=("batches",))},
        "/api/corpus/runs": {"post": op(
            "Run a suite of problems through the service", 202,
            json_resp("the run's summary", anyobj), 400, 413,
            body=obj({"suite": {"type": "string", "pattern": "^[A-Za-z0-9_.-]{1,80}$"},
                      "time_limit": N, "axiom_check_time": N, "settings": anyobj,
                      "expectations": {"type": "object", "additionalProperties": S},
                      "problems": arr(obj({"file": S, "bundle": ref("Bundle")},
                                          required=("file", "bundle")), minItems=1),
                      "full": B, "manifest": S, "description": S, "source": S},
                     required=("suite", "time_limit", "problems")), tags=("corpus",))},
        "/api/corpus/runs/{rid}": {"get": op(
            "A run: summary, axiom checks, a row per obligation, the comparison", 200,
            json_resp("the run", anyobj), 404, params=(RID,), tags=("corpus",))},
        "/api/corpus/suites": {"get": op(
            "The caller's suites with their run counts", 200,
            json_resp("suites", obj({"suites": arr(anyobj)})), tags=("corpus",))},
        "/api/corpus/suites/{name}/runs": {"get": op(
            "The runs of a suite, newest first", 200,
            json_resp("runs", obj({"suite": S, "runs": arr(anyobj)})),
            params=(path_param("name", "a suite name"),), tags=("corpus",))},
        "/api/corpus/diff": {"get": op(
            "Compare two runs (a and b), or a suite's last two", 200,
            json_resp("the comparison", anyobj), 400, 404,
            params=(query("a", S, "earlier run"), query("b", S, "later run"),
                    query("suite", S, "a suite: compare its last two runs"),
                    query("threshold", N, "seconds that count as a slow-down"),
                    query("across_suites", {"type": "string",
                                            "enum": ["1", "0", "true", "false", "yes", "no"]},
                          "1: compare runs a and b even when they are runs of two "
                          "different suites (refused otherwise, code different_suites)")),
            tags=("corpus",),
            described={400: "code bad_request (a missing run id, a bad threshold or "
                            "across_suites), or code different_suites: runs a and b are "
                            "of two different suites and across_suites=1 was not given; "
                            "the error names them in suites {a, b}"})},
    }


def document() -> dict:
    return {
        "openapi": "3.0.3",
        "info": {"title": "Nightjar API", "version": "1",
                 "description": "Batch theorem proving for first-order logic with equality: "
                                "submit problems, follow jobs and batches, read verdicts, "
                                "proofs and countermodels. Errors are JSON "
                                "{\"error\": {\"code\", \"message\"}}; input errors add "
                                "file, line, col; a refused submission option adds field."},
        "servers": [{"url": "/"}],
        "security": [{"token": []}],
        "paths": paths(),
        "components": components(),
    }


def text() -> str:
    return json.dumps(document(), indent=1, sort_keys=False) + "\n"


@bp.get("/api/openapi.json")
@require_owner
def openapi_json():
    return jsonify(document())


if __name__ == "__main__":
    out = sys.argv[1] if len(sys.argv) > 1 else str(FILE)
    Path(out).write_text(text())
    print(f"wrote {out}")

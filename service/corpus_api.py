"""The corpus API: suite runs and their comparison (a Flask blueprint).

    POST /api/corpus/runs                      a run of a suite        -> 202 run summary
    GET  /api/corpus/runs/<id>                 summary, axiom checks, one row per obligation,
                                               and the comparison with the previous run
    GET  /api/corpus/suites                    the caller's suites with their run counts
    GET  /api/corpus/suites/<name>/runs        the runs of a suite, newest first
    GET  /api/corpus/diff?a=&b=  | ?suite=     compare two runs (default: the suite's last two);
                                               runs of two suites only with &across_suites=1

The logic lives in :mod:`service.corpus`; this module only reads requests
and answers them.  The app factory (``service/app.py``) mounts ``bp``.
"""

from __future__ import annotations

from flask import Blueprint, current_app, g, jsonify, request

from .auth import api_error, require_owner
from .config import QUEUE_BATCH
from . import corpus as C

bp = Blueprint("corpus", __name__, url_prefix="/api/corpus")


def _svc():
    return current_app.extensions["nightjar"]


def _corpus():
    return C.CorpusStore(_svc().redis)


def _run_or_404(rid):
    run = _corpus().get_run(rid)
    if run is None or run.get("owner") != g.owner:
        return None
    return run


def _float_arg(name, default):
    v = request.args.get(name)
    if v is None or v == "":
        return default
    try:
        return float(v)
    except ValueError:
        raise ValueError(f"{name} must be a number")


def _flag_arg(name) -> bool:
    v = (request.args.get(name) or "").strip().lower()
    if v in ("", "0", "false", "no"):
        return False
    if v in ("1", "true", "yes"):
        return True
    raise ValueError(f"{name} must be 1 or 0")


def full_view(run: dict) -> dict:
    s = _svc()
    corpus = _corpus()
    view = C.view_of(s.store, corpus, run)
    diff = None
    if run.get("previous"):
        prev = corpus.get_run(run["previous"])
        if prev is not None and view["summary"]["finished"]:
            diff = C.compare(C.view_of(s.store, corpus, prev), view)
    view["summary"].update(C.counts(diff))
    view["diff"] = diff
    return view


@bp.post("/runs")
@require_owner
def create():
    s = _svc()
    body = request.get_json(silent=True)
    try:
        run = C.create_run(s.store, _corpus(), s.dispatcher, g.owner, body,
                           queue_name=QUEUE_BATCH, max_time_limit=s.config.max_time_limit,
                           max_jobs=s.config.max_jobs_per_batch)
    except C.RunRefused as e:
        if e.error is not None:
            return jsonify({"error": {"code": e.code, **e.error.to_json()}}), 400
        return api_error(400, e.code, e.message)
    view = full_view(run)
    resp = jsonify(view["summary"])
    resp.status_code = 202
    resp.headers["Location"] = f"/api/corpus/runs/{run['id']}"
    return resp


@bp.get("/runs/<rid>")
@require_owner
def get_run(rid):
    run = _run_or_404(rid)
    if run is None:
        return api_error(404, "not_found", f"no run {rid}")
    return jsonify(full_view(run))


@bp.get("/suites")
@require_owner
def suites():
    corpus = _corpus()
    out = []
    for name in corpus.suites(g.owner):
        ids = corpus.runs(g.owner, name)
        out.append({"suite": name, "runs": len(ids), "last": ids[0] if ids else None})
    return jsonify({"suites": out})


@bp.get("/suites/<name>/runs")
@require_owner
def suite_runs(name):
    corpus = _corpus()
    out = []
    for rid in corpus.runs(g.owner, name):
        r = corpus.get_run(rid)
        if r:
            out.append({"run": rid, "created": r["created"], "batch": r["batch"],
                        "full": r.get("full", False), "manifest": r.get("manifest"),
                        "manifest_path": r.get("manifest_path"),
                        "obligations": len(r["obligations"]),
                        "reused": sum(1 for o in r["obligations"] if o.get("reused"))})
    return jsonify({"suite": name, "runs": out})


@bp.get("/diff")
@require_owner
def diff():
    corpus = _corpus()
    a, b, suite = request.args.get("a"), request.args.get("b"), request.args.get("suite")
    try:
        threshold = _float_arg("threshold", C.DEFAULT_TIME_THRESHOLD)
        across = _flag_arg("across_suites")
    except ValueError as e:
        return api_error(400, "bad_request", str(e))
    if bool(a) != bool(b):
        return api_error(400, "bad_request", "give both runs (a and b), or a suite")
    if not a:
        if not suite:
            return api_error(400, "bad_request", "give two runs (a and b) or a suite")
        ids = corpus.runs(g.owner, suite)
        if len(ids) < 2:
            return api_error(404, "not_found", f"suite '{suite}' has {len(ids)} run"
                             f"{'s' if len(ids) != 1 else ''}; a comparison needs two")
        b, a = ids[0], ids[1]
    ra, rb = _run_or_404(a), _run_or_404(b)
    for rid, r in ((a, ra), (b, rb)):
        if r is None:
            return api_error(404, "not_found", f"no run {rid}")
    refusal = C.suites_refusal(ra, rb)
    if refusal and not across:
        return api_error(400, "different_suites", refusal + "; to compare them anyway, ask "
                         "with across_suites=1", suites={"a": ra.get("suite"),
                                                         "b": rb.get("suite")})
    s = _svc()
    va, vb = C.view_of(s.store, corpus, ra), C.view_of(s.store, corpus, rb)
    out = C.compare(va, vb, threshold=threshold)
    out["summary_a"], out["summary_b"] = va["summary"], vb["summary"]
    out["guards_b"] = vb["guards"]
    return jsonify(out)

"""The JSON HTTP API (a Flask blueprint mounted under ``/api``).

    GET  /api/health                          no token needed
    POST /api/submissions                     one problem, or a batch   -> 202
    GET  /api/batches                         the caller's batches, newest first
    GET  /api/batches/<id>                    counts per state and verdict, progress
    GET  /api/batches/<id>/jobs               ?state=&verdict=&offset=&limit=
    POST /api/batches/<id>/cancel
    DELETE /api/batches/<id>                  a settled batch, its jobs and results
    GET  /api/jobs/<id>                       the job record
    GET  /api/jobs/<id>/proof                 proof as JSON and as text
    GET  /api/jobs/<id>/model                 model (a countermodel for CounterSatisfiable)
                                              as JSON and as text (404
                                              for a Satisfiable/CounterSatisfiable
                                              verdict without one: from saturation)
    GET  /api/jobs/<id>/figures
    GET  /api/jobs/<id>/problem               the problem text as submitted
    POST /api/jobs/<id>/cancel

Submissions are read and clausified before anything is stored; bad input is
answered 400 with the reader's ``file:line:col`` message and nothing is kept.
"""

from __future__ import annotations

import hashlib
import json

import redis
from flask import Blueprint, current_app, g, jsonify, request

from .auth import api_error, owns, require_owner
from .config import MIN_TIME_LIMIT, QUEUE_BATCH, QUEUE_INTERACTIVE, QUEUES
from .store import FINAL_STATES, STATES
from worker import verdict as V

bp = Blueprint("api", __name__, url_prefix="/api")


def svc():
    return current_app.extensions["nightjar"]


class BadRequest(Exception):
    def __init__(self, code, message, status=400, **extra):
        super().__init__(message)
        self.code, self.message, self.status, self.extra = code, message, status, extra


@bp.errorhandler(BadRequest)
def _bad(e: BadRequest):
    return api_error(e.status, e.code, e.message, **e.extra)


@bp.errorhandler(redis.RedisError)
def _redis_down(e):
    return api_error(503, "storage_unavailable", f"the store is not answering: {e}")


# -- reading submissions ---------------------------------------------------

def _bundle(obj, where: str, several_mains: bool = False) -> dict:
    if not isinstance(obj, dict):
        raise BadRequest("bad_request", f"{where} must be an object with 'main' and 'files'")
    main, files = obj.get("main"), obj.get("files")
    if not isinstance(files, dict) or not files or not all(
            isinstance(k, str) and isinstance(v, str) for k, v in files.items()):
        raise BadRequest("bad_request", f"{where}.files must map file names to texts")
    mains = main if several_mains and isinstance(main, list) else [main]
    if not mains or not all(isinstance(m, str) and m for m in mains):
        raise BadRequest("bad_request", f"{where}.main must be a file name"
                         + (" or a list of them" if several_mains else ""))
    for m in mains:
        if m not in files:
            raise BadRequest("bad_request", f"{where}: the main file {m!r} is not among its files")
    lang = obj.get("language")
    if lang not in (None, "native", "tptp"):
        raise BadRequest("bad_request", f"{where}.language must be 'native' or 'tptp'")
    return {"main": main if isinstance(main, list) else main, "files": dict(files),
            "language": lang}


def _with_axioms(axioms: dict, name: str, text: str) -> dict:
    """A bundle of one conjecture file read with the axiom file(s): the
    conjecture file is the main file, its text exactly as sent, and the axiom
    mains are its ``context`` (``worker.syntax.load_bundle`` reads them as if
    the main file ended with an include of each, but no line is added), so
    every message about it is at its own lines and shows them.  The axioms'
    ``language``, when given, is every file's (as ``--language`` is for
    ``prove``), the conjecture file's too."""
    if name in axioms["files"]:
        raise BadRequest("bad_request", f"conjecture file {name!r} has the same name "
                                        f"as a file of the axioms")
    mains = axioms["main"] if isinstance(axioms["main"], list) else [axioms["main"]]
    files = dict(axioms["files"])
    files[name] = text
    return {"main": name, "files": files, "language": axioms.get("language"),
            "context": list(mains)}


def refuse_axiom_conjectures(axioms: dict) -> None:
    """An InputError at the first conjecture in the axiom files of an
    axioms-plus-conjectures submission: every conjecture there would become
    a job of each conjecture file, attributed to the wrong file.  The axiom
    files are read the way the jobs read them (as the context), on their own."""
    from worker.syntax import load_bundle
    from worker.syntax.errors import InputError, Span

    mains = axioms["main"] if isinstance(axioms["main"], list) else [axioms["main"]]
    problem = load_bundle({"main": None, "files": axioms["files"],
                           "language": axioms.get("language"), "context": mains})
    for st in problem.statements:
        if st.is_conjecture and st.span is not None:
            lines = (axioms["files"].get(st.span.file) or "").split("\n")
            text = lines[st.span.line - 1] if 0 < st.span.line <= len(lines) else None
            raise InputError(
                f"the axioms hold a conjecture ('{st.name}'); with conjecture files, "
                f"the axiom files may hold axioms and hypotheses only",
                Span(st.span.file, st.span.line, st.span.col), text,
                "move it into a conjecture file of its own, or make it an axiom")


def check_problem(bundle: dict) -> list:
    """Read and clausify; returns the obligations.  Raises InputError."""
    from worker.clausify import clausify
    from worker.syntax import load_bundle

    problem = load_bundle(bundle)
    obligations = problem.obligations()
    for c in obligations:
        clausify(problem, c)
    return obligations


def _refuse_twice(names: list, where: str, what: str) -> None:
    """BadRequest naming the first file name given twice in ``where``: two
    conjecture files of one name would be one file of the shared bundle,
    and their jobs could not be told apart.  (Each of ``problems`` is a
    bundle of its own: the same problem twice is two runs of it.)"""
    first: dict = {}
    for i, n in enumerate(names):
        if n in first:
            raise BadRequest("bad_request", f"two {what} named {n!r} ({where}[{first[n]}] "
                             f"and {where}[{i}]); each needs a name of its own")
        first[n] = i


def _number(body, key, default, lo=None, hi=None, what=""):
    """A number option of the body; a refusal names it in ``field``."""
    v = body.get(key, default)
    if v is None:
        return default
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise BadRequest("bad_request", f"{key} must be a number", field=key)
    if lo is not None and v < lo:
        raise BadRequest("bad_request", f"{key} must be at least {lo:g}{what}", field=key)
    if hi is not None and v > hi:
        raise BadRequest("limit", f"{key} {v:g} is over the server's limit of {hi:g}{what}",
                         limit=hi, field=key)
    return v


def strategy_names() -> list[str]:
    """The named strategies a submission may ask for."""
    from worker.saturation.strategy import STRATEGIES
    return sorted(STRATEGIES)


def _reuse_key(bundle, conjecture, time_limit, settings) -> str:
    key = {"files": bundle["files"], "main": bundle["main"],
           "language": bundle.get("language"), "conjecture": conjecture,
           "time_limit": time_limit, "settings": settings}
    if bundle.get("context"):
        key["context"] = bundle["context"]     # the same files read otherwise
    canon = json.dumps(key, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(canon.encode()).hexdigest()


def _json_body():
    """The request's JSON body, or BadRequest saying why there is none: an
    empty body, a body not sent as JSON, not UTF-8, or JSON that does not
    parse (with the parser's line and column, also as ``line``, ``col``).
    (The limits hook has already refused bodies nested too deeply.)"""
    body = request.get_json(silent=True)
    if body is not None:
        return body
    raw = request.get_data(cache=True)
    if not raw.strip():
        raise BadRequest("bad_request", "the body is empty; send a JSON object")
    if not request.is_json:
        raise BadRequest("bad_request", "the body must be JSON, sent with Content-Type: "
                         f"application/json (it came as {request.mimetype or 'no type'})")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as e:
        raise BadRequest("bad_request", f"the body is not UTF-8 (byte {e.start + 1})")
    try:
        json.loads(text)
    except json.JSONDecodeError as e:
        raise BadRequest("bad_request", f"the body could not be parsed as JSON: {e.msg} "
                         f"at line {e.lineno}, column {e.colno}", line=e.lineno, col=e.colno)
    except (ValueError, RecursionError) as e:
        raise BadRequest("bad_request", f"the body could not be parsed as JSON: {e}")
    return None       # the JSON null: accept_submission says it must be an object


@bp.post("/submissions")
@require_owner
def submit():
    from worker.syntax.errors import InputError

    body = _json_body()
    try:
        out = accept_submission(svc(), g.owner, body)
    except InputError as e:
        return jsonify({"error": {"code": "input_error", **e.to_json()}}), 400
    resp = jsonify(out)
    resp.status_code = 202
    resp.headers["Location"] = f"/api/batches/{out['batch']}"
    return resp


def accept_submission(s, owner: str, body) -> dict:
    """Check, store and queue one submission (the body of POST
    /api/submissions) for ``owner``; returns the 202 answer's JSON.  Raises
    :class:`BadRequest` or the reader's ``InputError``; on either, nothing is
    stored.  ``s`` is ``app.extensions["nightjar"]`` (the web console calls
    this too)."""
    cfg = s.config
    if not isinstance(body, dict):
        raise BadRequest("bad_request", "the body must be a JSON object")
    time_limit = float(_number(body, "time_limit", cfg.default_time_limit, lo=MIN_TIME_LIMIT,
                               hi=cfg.max_time_limit, what=" seconds"))
    strategy = body.get("strategy")
    if strategy is not None and not isinstance(strategy, str):
        raise BadRequest("bad_request", "strategy must be a name", field="strategy")
    if strategy is not None:
        known = strategy_names()
        if strategy not in known:
            raise BadRequest("bad_request", f"unknown strategy {strategy!r}; known: "
                             + ", ".join(known), field="strategy")
    label = body.get("label")
    if label is not None and (not isinstance(label, str) or len(label) > 200):
        raise BadRequest("bad_request", "label must be a text of at most 200 characters",
                         field="label")
    reuse = bool(body.get("reuse", False))
    settings = {"strategy": strategy} if strategy else {}

    # Build the bundles (one per problem file) ...
    forms = [f for f, keys in (("'problem'", ("problem",)), ("'problems'", ("problems",)),
                               ("'axioms' with 'conjectures'", ("axioms", "conjectures")))
             if any(k in body for k in keys)]
    if len(forms) > 1:
        raise BadRequest("bad_request", "give exactly one of 'problem', 'problems', or "
                         "'axioms' with 'conjectures'; the body has " + " and ".join(forms))
    if "problem" in body:
        bundles = [_bundle(body["problem"], "problem")]
        queue_name = QUEUE_INTERACTIVE
    elif "problems" in body:
        items = body["problems"]
        if not isinstance(items, list) or not items:
            raise BadRequest("bad_request", "problems must be a non-empty list")
        if len(items) > cfg.max_jobs_per_batch:
            raise BadRequest("too_many_jobs", f"{len(items)} problems in one batch; the "
                             f"limit is {cfg.max_jobs_per_batch}", limit=cfg.max_jobs_per_batch)
        bundles = [_bundle(p, f"problems[{i}]") for i, p in enumerate(items)]
        queue_name = QUEUE_BATCH
    elif "conjectures" in body:
        axioms = _bundle(body.get("axioms"), "axioms", several_mains=True)
        items = body["conjectures"]
        if not isinstance(items, list) or not items:
            raise BadRequest("bad_request", "conjectures must be a non-empty list")
        if len(items) > cfg.max_jobs_per_batch:
            raise BadRequest("too_many_jobs", f"{len(items)} conjectures in one batch; the "
                             f"limit is {cfg.max_jobs_per_batch}", limit=cfg.max_jobs_per_batch)
        bundles = []
        for i, c in enumerate(items):
            if not (isinstance(c, dict) and isinstance(c.get("name"), str)
                    and isinstance(c.get("text"), str) and c["name"]):
                raise BadRequest("bad_request", f"conjectures[{i}] must have a name and a text")
        _refuse_twice([c["name"] for c in items], "conjectures", "conjecture files are")
        for c in items:
            bundles.append(_with_axioms(axioms, c["name"], c["text"]))
        refuse_axiom_conjectures(axioms)
        queue_name = QUEUE_BATCH
    else:
        raise BadRequest("bad_request", "give 'problem', 'problems', or 'axioms' with "
                                        "'conjectures'")
    if body.get("queue") is not None:
        q = body["queue"]
        if q not in ("interactive", "batch"):
            raise BadRequest("bad_request", "queue must be 'interactive' or 'batch'",
                             field="queue")
        queue_name = QUEUE_INTERACTIVE if q == "interactive" else QUEUE_BATCH

    # ... read and clausify every one before anything is stored ...
    jobs = []
    for b in bundles:
        obligations = check_problem(b)
        for c in obligations:
            jobs.append({"file": b["main"], "conjecture": c, "bundle": b,
                         "time_limit": time_limit,
                         "reuse_key": _reuse_key(b, c, time_limit, settings)})
            if len(jobs) > cfg.max_jobs_per_batch:
                raise BadRequest("too_many_jobs", f"more than {cfg.max_jobs_per_batch} proof "
                                 f"obligations in one submission",
                                 limit=cfg.max_jobs_per_batch)

    reused = {}
    if reuse:
        for i, j in enumerate(jobs):
            src = s.store.find_reusable(owner, j["reuse_key"])
            if src is not None:
                reused[i] = src
    # ... then store and queue in one transaction.
    bid, ids = s.store.create_batch(owner, jobs, label=label, queue_name=queue_name,
                                    settings=settings, enqueue=s.dispatcher.enqueue,
                                    reused=reused)
    return {"batch": bid, "jobs": [
        {"id": jid, "file": j["file"], "conjecture": j["conjecture"],
         "state": "done" if i in reused else "queued",
         "reused": i in reused} for i, (jid, j) in enumerate(zip(ids, jobs))]}


# -- reading records -------------------------------------------------------

def _job_or_404(jid):
    rec = svc().store.get_job(jid)
    if not owns(rec):
        raise BadRequest("not_found", f"no job {jid}", status=404)
    return rec


def _batch_or_404(bid):
    rec = svc().store.get_batch(bid)
    if not owns(rec):
        raise BadRequest("not_found", f"no batch {bid}", status=404)
    return rec


@bp.get("/jobs/<jid>")
@require_owner
def job(jid):
    return jsonify(_job_or_404(jid))


def format_proof_text(proof):
    from worker.saturation.proof import format_proof
    try:
        return format_proof(proof)
    except Exception as e:   # a printer bug must not hide the proof itself
        return f"(the proof could not be printed: {type(e).__name__}: {e})"


def format_model_text(model):
    from worker.models.display import format_model
    try:
        return format_model(model)
    except Exception as e:
        return f"(the model could not be printed: {type(e).__name__}: {e})"


@bp.get("/jobs/<jid>/proof")
@require_owner
def job_proof(jid):
    rec = _job_or_404(jid)
    res = svc().store.get_result(jid)
    proof = res["proof"]
    return jsonify({"id": jid, "state": rec["state"], "verdict": rec["verdict"],
                    "proof": proof, "axioms_used": rec.get("axioms_used") or [],
                    "text": format_proof_text(proof) if proof else None})


def no_model_message(rec) -> str:
    """Why a job has no stored model, in words (the API's 404 and the
    console's)."""
    jid, verdict = rec["id"], rec.get("verdict")
    if verdict in V.REFUTED:
        cert = rec.get("certificate") or {}
        if cert.get("kind") == "none":
            return (f"job {jid} has no model: its {verdict} verdict came from "
                    f"saturation (the clauses saturated under a complete strategy "
                    f"without reaching the empty clause), not from a finite model, "
                    f"so there is no model to show")
        return f"job {jid} has no stored model (its verdict is {verdict})"
    if verdict:
        return f"job {jid} has no model (its verdict is {verdict})"
    return f"job {jid} has no model yet (it is {rec['state']})"


@bp.get("/jobs/<jid>/model")
@require_owner
def job_model(jid):
    rec = _job_or_404(jid)
    model = svc().store.get_result(jid)["model"]
    if model is None and rec.get("verdict") in V.REFUTED:
        # a Satisfiable/CounterSatisfiable verdict without a model: say why,
        # rather than a null a client would take for a missing model
        raise BadRequest("no_model", no_model_message(rec), status=404)
    return jsonify({"id": jid, "state": rec["state"], "verdict": rec["verdict"],
                    "model": model, "text": format_model_text(model) if model else None})


@bp.get("/jobs/<jid>/figures")
@require_owner
def job_figures(jid):
    rec = _job_or_404(jid)
    return jsonify({"id": jid, "state": rec["state"], "seconds": rec["seconds"],
                    "figures": svc().store.get_result(jid)["figures"]})


@bp.get("/jobs/<jid>/problem")
@require_owner
def job_problem(jid):
    rec = _job_or_404(jid)
    raw = svc().store.get_job_raw(jid)
    bundle = svc().store.load_problem_bundle(raw["problem"])
    if bundle is None:
        raise BadRequest("not_found", f"the problem text of job {jid} is gone", status=404)
    return jsonify({"id": jid, "conjecture": rec["conjecture"], **bundle,
                    "text": bundle["files"][bundle["main"]]})


@bp.post("/jobs/<jid>/cancel")
@require_owner
def job_cancel(jid):
    rec = _job_or_404(jid)
    return jsonify(_cancel_one(jid, rec))


def _cancel_one(jid, rec=None):
    s = svc()
    was = s.store.cancel(jid)
    if was == "running":
        s.dispatcher.stop(jid)
    now = s.store.get_job(jid)
    return {"id": jid, "state": now["state"], "was": was or now["state"],
            "cancelled": was is not None}


@bp.get("/batches")
@require_owner
def batches():
    offset, limit = _paging()
    store = svc().store
    out = [store.get_batch(b) for b in store.owner_batches(g.owner, offset, limit)]
    return jsonify({"batches": [b for b in out if b], "offset": offset, "limit": limit})


@bp.get("/batches/<bid>")
@require_owner
def batch(bid):
    return jsonify(_batch_or_404(bid))


def _paging():
    def num(name, default):
        v = request.args.get(name)
        if v is None:
            return default
        try:
            n = int(v)
        except ValueError:
            raise BadRequest("bad_request", f"{name} must be a whole number")
        if n < 0:
            raise BadRequest("bad_request", f"{name} must not be negative")
        return n
    limit = num("limit", 100)
    if limit > svc().config.max_page:
        raise BadRequest("limit", f"limit is at most {svc().config.max_page}",
                         limit=svc().config.max_page)
    return num("offset", 0), limit


@bp.get("/batches/<bid>/jobs")
@require_owner
def batch_jobs(bid):
    _batch_or_404(bid)
    state = request.args.get("state") or None
    verdict = request.args.get("verdict") or None
    if state is not None and state not in STATES:
        raise BadRequest("bad_request", f"state must be one of {', '.join(STATES)}")
    offset, limit = _paging()
    total, jobs = svc().store.batch_jobs(bid, state=state, verdict=verdict,
                                         offset=offset, limit=limit)
    return jsonify({"batch": bid, "total": total, "offset": offset, "limit": limit,
                    "jobs": jobs})


@bp.post("/batches/<bid>/cancel")
@require_owner
def batch_cancel(bid):
    _batch_or_404(bid)
    store = svc().store
    n = {"cancelled": 0, "already_settled": 0}
    for jid in store.batch_job_ids(bid):
        r = _cancel_one(jid)
        n["cancelled" if r["cancelled"] else "already_settled"] += 1
    return jsonify({"batch": bid, **n})


@bp.delete("/batches/<bid>")
@require_owner
def batch_delete(bid):
    from .store import Conflict
    _batch_or_404(bid)
    try:
        n = svc().store.delete_batch(bid)
    except Conflict as e:
        raise BadRequest("not_settled", str(e), status=409)
    return jsonify({"batch": bid, "deleted_jobs": n})


@bp.get("/health")
def health():
    s = svc()
    try:
        s.redis.ping()
        from .queue import live_workers
        workers = len(live_workers(s.redis))
        queues = {name: s.dispatcher.queues[name].count for name in QUEUES}
        running = s.redis.scard(s.store.K_RUNNING)
    except redis.RedisError as e:
        return api_error(503, "storage_unavailable", f"the store is not answering: {e}")
    return jsonify({"ok": True, "service": "nightjar", "workers": workers,
                    "queued": queues, "running": running})


__all__ = ["bp", "accept_submission", "check_problem", "BadRequest", "FINAL_STATES"]

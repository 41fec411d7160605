"""The web console: HTML pages over the same store as the JSON API.

Mounted by the app factory (``service/app.py``) as the optional blueprint
``bp``.  Every page reads through the API's own helpers (ownership checks,
cancel, submission, proof and model text), so the console and the API cannot
disagree.  Pages work without JavaScript; ``static/console.js`` only adds
live updates and small conveniences.

Security: the session cookie (Flask's signed cookie, HTTP-only, SameSite=Lax,
Secure exactly when the request came over HTTPS) holds the SHA-256 of the
API token, never the token; the token's owner is looked up again on every
request, so a revoked token signs the session out at once.  Every POST carries the
session's CSRF token.  Someone else's batch, job or run is answered 404.
"""

from __future__ import annotations

import functools
import hmac
import json
import math
import os
import re
import secrets
from datetime import datetime, timezone
from urllib.parse import urlencode

import redis
from flask import (Blueprint, Response, abort, current_app, g, jsonify, make_response,
                   redirect, render_template, request, session, url_for)
from flask.sessions import NullSession, SecureCookieSessionInterface
from werkzeug.exceptions import HTTPException

from .. import api as A
from .. import corpus as C
from .. import limits as L
from ..store import FINAL_STATES, STATES
from worker import verdict as V

bp = Blueprint("web", __name__, template_folder="templates", static_folder="static",
               static_url_path="/web-static")

SECRET_KEY = "nj:web:secret"          # the session-signing key, shared by every API process
PAGE_SIZES = (50, 100, 500)
BATCHES_PER_PAGE = 50
MAX_LINES_SHOWN = 5000
MAX_PARSE_CHARS = 2_000_000           # proof pages find axiom lines only in smaller problems
SORTS = ("order", "name", "state", "verdict", "time")


def svc():
    return current_app.extensions["nightjar"]


# ================================================================ sessions

class ConsoleSessions(SecureCookieSessionInterface):
    """Flask's signed cookie session with the key read (or made once) from
    Redis when the app has none, and Secure set exactly on HTTPS requests."""

    def get_signing_serializer(self, app):
        if not app.secret_key:
            try:
                app.secret_key = ensure_secret(svc_of(app).redis)
            except redis.RedisError:
                return None           # no session at all while the store is down
        return super().get_signing_serializer(app)

    def get_cookie_secure(self, app):
        mode = os.environ.get("NIGHTJAR_COOKIE_SECURE", "auto").lower()
        if mode in ("1", "true", "always", "yes"):
            return True
        if mode in ("0", "false", "never", "no"):
            return False
        # auto: Secure exactly when this request is HTTPS.  A Secure cookie on
        # plain http (even to 127.0.0.1, the address `nightjar serve` prints)
        # is stored but never sent back by some clients, so sign-in would not
        # stick.  The app trusts no X-Forwarded-Proto (no proxy fix, waitress
        # without trusted proxies): behind a TLS-terminating proxy set
        # NIGHTJAR_COOKIE_SECURE=always (deploy/GUIDE.md).
        try:
            return request.is_secure
        except RuntimeError:
            return True


def svc_of(app):
    return app.extensions["nightjar"]


def ensure_secret(r) -> bytes:
    """``NIGHTJAR_SECRET_KEY`` if set, else the key stored in Redis (made once,
    SET NX, so every API process of one store signs alike)."""
    env = os.environ.get("NIGHTJAR_SECRET_KEY")
    if env:
        return env.encode()
    r.set(SECRET_KEY, secrets.token_hex(32), nx=True)
    v = r.get(SECRET_KEY)
    return v if isinstance(v, bytes) else v.encode()


@bp.record_once
def _setup(state):
    app = state.app
    if type(app.session_interface) is SecureCookieSessionInterface:
        app.session_interface = ConsoleSessions()
    app.config.setdefault("SESSION_COOKIE_NAME", "nightjar_console")
    if app.config.get("SESSION_COOKIE_NAME") == "session":
        app.config["SESSION_COOKIE_NAME"] = "nightjar_console"
    app.config["SESSION_COOKIE_HTTPONLY"] = True
    app.config["SESSION_COOKIE_SAMESITE"] = "Lax"
    app.extensions["nightjar_html_errors"] = app_http_error


def owner_of_token_hash(sha: str) -> str | None:
    """The owner of the token whose SHA-256 is ``sha`` if that token is still
    the listed one for its name (what ``Store.check_token`` checks, from the
    hash the session keeps)."""
    store = svc().store
    h = store.r.hgetall(store.k_token(sha))
    if not h:
        return None
    d = {(k.decode() if isinstance(k, bytes) else k): (v.decode() if isinstance(v, bytes) else v)
         for k, v in h.items()}
    listed = store.r.hget(store.K_TOKENS, d.get("name", ""))
    if listed is None:
        return None
    listed = listed.decode() if isinstance(listed, bytes) else listed
    if not hmac.compare_digest(listed, sha):
        return None
    return d.get("owner")


def csrf_token() -> str:
    tok = session.get("csrf")
    if not tok:
        tok = session["csrf"] = secrets.token_urlsafe(32)
    return tok


@bp.app_context_processor
def _globals():
    return {"csrf_token": csrf_token, "signed_in_as": g.get("web_owner")}


def _load_owner():
    """The session's owner into ``g`` (none if the token was revoked)."""
    sha = session.get("tok")
    if sha:
        owner = owner_of_token_hash(sha)
        if owner is None:
            session.pop("tok", None)
            session.pop("owner", None)
        else:
            g.web_owner = owner
            g.owner = owner                # what the API's helpers (owns, ...) read


@bp.before_request
def _before():
    g.web_owner = None
    if isinstance(session, NullSession) and not request.path.startswith("/web-static/"):
        # no signing key: it lives in Redis, which did not answer
        return error_page(503, "the store is not answering, so no session can be "
                               "opened; try again in a moment")
    _load_owner()
    if request.method == "POST":
        sent = request.form.get("csrf", "")
        want = session.get("csrf", "")
        if not want or not sent or not hmac.compare_digest(sent, want):
            abort(403, "the form's security token is missing or out of date; "
                       "reload the page and send it again")
        origin = request.headers.get("Origin")
        if origin and origin != "null" and origin.rstrip("/") != request.host_url.rstrip("/"):
            abort(403, "the form was sent from another site")


@bp.after_request
def _headers(resp):
    resp.headers.setdefault("Content-Security-Policy",
                            "default-src 'self'; img-src 'self' data:; style-src 'self'; "
                            "script-src 'self'; object-src 'none'; base-uri 'none'; "
                            "form-action 'self'; frame-ancestors 'none'")
    resp.headers.setdefault("X-Content-Type-Options", "nosniff")
    resp.headers.setdefault("X-Frame-Options", "DENY")
    resp.headers.setdefault("Referrer-Policy", "same-origin")
    if not request.path.startswith("/web-static/"):
        resp.headers.setdefault("Cache-Control", "no-store")
    return resp


def signed_in(view):
    @functools.wraps(view)
    def wrapped(*a, **kw):
        if g.get("web_owner") is None:
            if request.method == "GET":
                return redirect(url_for("web.sign_in", next=request.full_path.rstrip("?")))
            abort(401, "sign in first")
        return view(*a, **kw)
    return wrapped


def _safe_next(nxt: str | None) -> str:
    """Only a path on this site (no scheme, no host, no '//')."""
    if not nxt or not nxt.startswith("/") or nxt.startswith("//") or "\\" in nxt:
        return url_for("web.batches")
    return nxt


# ================================================================= errors

TITLES = {400: "That request is not understood", 401: "Sign in first",
          403: "Not allowed", 404: "Not found", 405: "Not allowed here",
          413: "Too large", 429: "Too many requests", 500: "Something went wrong here",
          503: "The store is not answering"}


def error_page(status: int, message: str):
    return render_template("error.html", status=status, title=TITLES.get(status, "Error"),
                           message=message), status


@bp.errorhandler(A.BadRequest)
def _api_refused(e):
    return error_page(e.status, e.message)


@bp.errorhandler(HTTPException)
def _http(e):
    if e.code == 413:
        return error_page(413, f"the upload is over the server's limit of "
                               f"{svc().config.max_upload_bytes:,} bytes")
    return error_page(e.code or 500, e.description or e.name)


# Error replies that mean the store cannot serve just now (full, a read-only
# replica, loading, a disk write failing, busy, a cluster moving); any other
# error reply answers a command the console got wrong, which is a bug here.
_STORE_TROUBLE = (redis.exceptions.OutOfMemoryError, redis.exceptions.ReadOnlyError,
                  redis.exceptions.ClusterDownError, redis.exceptions.TryAgainError)
_TROUBLE_PREFIXES = ("MISCONF", "BUSY", "MASTERDOWN", "LOADING", "OOM", "READONLY",
                     "TRYAGAIN", "CLUSTERDOWN")


def store_is_down(e: redis.RedisError) -> bool:
    """Whether ``e`` says the store is unavailable (connection, timeout, or an
    error reply about the server's state) rather than refusing a bad command."""
    if not isinstance(e, redis.exceptions.ResponseError):
        return True
    if isinstance(e, _STORE_TROUBLE):
        return True
    return str(e).lstrip().upper().startswith(_TROUBLE_PREFIXES)


def app_http_error(e: HTTPException):
    """The console's error page, with its headers, for an HTTP error the app
    answers outside every blueprint (an address no route has, a method a
    route does not take).  The app factory calls it for paths outside /api
    (``app.extensions["nightjar_html_errors"]``, set in ``_setup``)."""
    g.web_owner = None
    if not isinstance(session, NullSession):
        try:
            _load_owner()                  # the header shows who is signed in
        except redis.RedisError:
            g.web_owner = None
    return _headers(make_response(_http(e)))


@bp.errorhandler(redis.RedisError)
def _redis_down(e):
    if not store_is_down(e):
        current_app.logger.error("the store refused a console command: %s", e,
                                 exc_info=e)
        return error_page(500, "the store refused a request this page made; that is "
                               "a fault in the console, not in the store "
                               f"({type(e).__name__})")
    return error_page(503, f"the store is not answering ({type(e).__name__}); "
                           f"try again in a moment")


class Bad(Exception):
    """A query parameter or form field that cannot be used (400)."""


@bp.errorhandler(Bad)
def _bad(e):
    return error_page(400, str(e))


def _int_arg(name, default, lo=0, hi=None):
    v = request.args.get(name)
    if v is None or v == "":
        return default
    try:
        n = int(v)
    except ValueError:
        raise Bad(f"{name} must be a whole number, not {v[:40]!r}")
    if n < lo or (hi is not None and n > hi):
        raise Bad(f"{name} must be between {lo:,} and {hi:,}" if hi is not None
                  else f"{name} must be at least {lo:,}")
    return n


def _page_arg(per: int) -> int:
    """``?page=``, from 1 up to where the offset reaches the API's bound on
    offsets (``limits.MAX_PAGE_NUMBER``): beyond that is 400, never an offset
    Redis cannot read."""
    return _int_arg("page", 1, lo=1, hi=L.MAX_PAGE_NUMBER // per)


def _float_arg(name):
    v = request.args.get(name)
    if v is None or v.strip() == "":
        return None
    try:
        x = float(v)
    except ValueError:
        raise Bad(f"{name} must be a number of seconds, not {v[:40]!r}")
    if not math.isfinite(x) or x < 0:
        raise Bad(f"{name} must be a number of seconds, at least 0")
    return x


# ================================================================ filters

@bp.app_template_filter("when")
def _when(t):
    if not t:
        return ""
    return datetime.fromtimestamp(float(t), timezone.utc).strftime("%Y-%m-%d %H:%M:%S UTC")


@bp.app_template_filter("iso")
def _iso(t):
    if not t:
        return ""
    return datetime.fromtimestamp(float(t), timezone.utc).isoformat(timespec="seconds")


@bp.app_template_filter("secs")
def _secs(s):
    if s is None or s == "":
        return ""
    s = float(s)
    if s < 10:
        return f"{s:.2f} s"
    if s < 600:
        return f"{s:.1f} s"
    return f"{s / 60:.1f} min"


@bp.app_template_filter("vclass")
def _vclass(verdict):
    if verdict in V.PROVED:
        return "v-proved"
    if verdict in V.REFUTED:
        return "v-refuted"
    if verdict in (V.ERROR, V.INPUT_ERROR):
        return "v-error"
    if verdict:
        return "v-open"
    return "v-none"


def _name(rec) -> str:
    c = rec.get("conjecture")
    return f"{rec.get('file') or ''}#{c}" if c else (rec.get("file") or "")


# ================================================================= sign in

@bp.get("/")
def home():
    if g.get("web_owner") is None:
        return redirect(url_for("web.sign_in"))
    return redirect(url_for("web.batches"))


@bp.route("/sign-in", methods=["GET", "POST"])
def sign_in():
    nxt = request.values.get("next")
    if request.method == "POST":
        token = (request.form.get("token") or "").strip()
        owner = svc().store.check_token(token) if token else None
        if owner is None:
            return render_template("sign_in.html", next=nxt,
                                   error="That token is not known (or it was revoked)."), 400
        session.clear()
        session["tok"] = svc().store.token_hash(token)
        session["owner"] = owner
        session["csrf"] = secrets.token_urlsafe(32)    # a new session, a new form token
        return redirect(_safe_next(nxt), code=303)
    return render_template("sign_in.html", next=nxt, error=None)


@bp.post("/sign-out")
def sign_out():
    session.clear()
    return redirect(url_for("web.sign_in"), code=303)


# ================================================================= batches

def _batch_live(b: dict) -> dict:
    return {"id": b["id"], "total": b["total"], "settled": b["settled"],
            "progress": b["progress"], "finished": b["finished"], "states": b["states"],
            "verdicts": b["verdicts"]}


def _signature(*parts) -> str:
    return json.dumps(parts, sort_keys=True, separators=(",", ":"))


@bp.get("/batches")
@signed_in
def batches():
    page = _page_arg(BATCHES_PER_PAGE)
    store = svc().store
    ids = store.owner_batches(g.owner, (page - 1) * BATCHES_PER_PAGE, BATCHES_PER_PAGE + 1)
    more = len(ids) > BATCHES_PER_PAGE
    rows = [b for b in (store.get_batch(i) for i in ids[:BATCHES_PER_PAGE]) if b]
    live = not all(b["finished"] for b in rows)
    sig = _signature([_batch_live(b) for b in rows])
    return render_template("batches.html", batches=rows, page=page, more=more,
                           live=live, sig=sig,
                           live_url=url_for("web.batches_live", page=page))


@bp.get("/batches/live.json")
@signed_in
def batches_live():
    page = _page_arg(BATCHES_PER_PAGE)
    store = svc().store
    ids = store.owner_batches(g.owner, (page - 1) * BATCHES_PER_PAGE, BATCHES_PER_PAGE)
    rows = [_batch_live(b) for b in (store.get_batch(i) for i in ids) if b]
    return jsonify({"sig": _signature(rows), "finished": all(r["finished"] for r in rows),
                    "batches": rows})


def light_rows(bid: str) -> list[dict]:
    """Every job of a batch with only what sorting, filtering and the charts
    need (one pipelined HMGET; the page then reads whole records for its
    rows only).  ``seconds`` is the job's own search's: None for a reused
    job (``reused`` true), whose record holds the original search's seconds
    (DEVELOPERS.md, "Command line": seconds shown are the job's own)."""
    store = svc().store
    ids = store.batch_job_ids(bid)
    pipe = store.r.pipeline(transaction=False)
    fields = ["file", "conjecture", "state", "verdict", "seconds", "reused_from"]
    for jid in ids:
        pipe.hmget(store.k_job(jid), fields)
    out = []
    for i, (jid, vals) in enumerate(zip(ids, pipe.execute())):
        d = dict(zip(fields, ((v.decode() if isinstance(v, bytes) else v) for v in vals)))
        d["reused"] = bool(d.pop("reused_from", None))
        try:
            d["seconds"] = (float(d["seconds"]) if d.get("seconds") and not d["reused"]
                            else None)
        except ValueError:
            d["seconds"] = None
        d["id"], d["index"] = jid, i
        d["name"] = _name(d)
        out.append(d)
    return out


def stored_results(jobs: list[dict]) -> dict:
    """job id -> (a proof is stored, a model is stored), for the finished jobs
    among ``jobs`` (two pipelined HEXISTS each; the others: no, no).  A
    CounterSatisfiable verdict from saturation has no model, so the verdict
    alone cannot tell whether to link one."""
    store = svc().store
    done = [j["id"] for j in jobs if j.get("verdict")]
    pipe = store.r.pipeline(transaction=False)
    for jid in done:
        pipe.hexists(store.k_result(jid), "proof")
        pipe.hexists(store.k_result(jid), "model")
    flags = pipe.execute() if done else []
    out = {j["id"]: (False, False) for j in jobs}
    for n, jid in enumerate(done):
        out[jid] = (bool(flags[2 * n]), bool(flags[2 * n + 1]))
    return out


def _sort_key(sort):
    if sort == "name":
        return lambda r: (r["name"].lower(), r["index"])
    if sort == "state":
        return lambda r: (STATES.index(r["state"]) if r["state"] in STATES else 99, r["index"])
    if sort == "verdict":
        return lambda r: (r.get("verdict") or "~", r["index"])
    if sort == "time":
        return _time_key
    return lambda r: r["index"]


def _time_key(r):
    """By the job's own search: the searched jobs by their seconds, then the
    reused ones (no search), then those without seconds yet."""
    return (0 if r["seconds"] is not None else 1 if r["reused"] else 2,
            r["seconds"] or 0.0, r["index"])


def sort_rows(rows: list[dict], sort: str, desc: bool) -> None:
    """Sort the batch page's rows in place.  By time, descending turns only
    the searched jobs round: jobs without a search time of their own (reused,
    not settled) stay after them, in the same order either way."""
    if sort == "time" and desc:
        rows.sort(key=lambda r: (_time_key(r)[0], -(r["seconds"] or 0.0),
                                 -r["index"] if r["seconds"] is not None else r["index"]))
    else:
        rows.sort(key=_sort_key(sort), reverse=desc)


def verdict_chart(batch: dict) -> dict:
    """Bars: one per verdict, then unsettled states."""
    bars = [(v, n, _vclass(v)) for v, n in sorted(batch["verdicts"].items(), key=lambda x: -x[1])]
    for st in ("queued", "running", "failed", "cancelled"):
        if batch["states"].get(st):
            bars.append((st, batch["states"][st], "s-" + st))
    top = max([n for _, n, _ in bars] or [1])
    width, bar_h, gap, label_w = 420, 18, 6, 150
    out = []
    for i, (label, n, cls) in enumerate(bars):
        w = max(1, round((width - label_w - 60) * n / top))
        out.append({"label": label, "n": n, "cls": cls, "y": i * (bar_h + gap),
                    "x": label_w, "w": w, "h": bar_h})
    return {"bars": out, "width": width, "height": max(1, len(out)) * (bar_h + gap),
            "label_w": label_w}


def reused_done(rows: list[dict]) -> int:
    """How many finished jobs were answered by reuse (no search: not in the
    time histogram)."""
    return sum(1 for r in rows if r["reused"] and r["state"] == "done")


def time_chart(rows: list[dict], nbins: int = 12) -> dict | None:
    """A histogram of the seconds of the finished jobs' own searches (a
    reused job did none: it is left out, and counted in ``reused``)."""
    secs = [r["seconds"] for r in rows if r["seconds"] is not None and r["state"] == "done"]
    if not secs:
        return None
    hi = max(secs)
    step = _nice_step(hi / nbins if hi > 0 else 0.01)
    nb = max(1, min(nbins, int(math.floor(hi / step)) + 1))
    counts = [0] * nb
    for s in secs:
        counts[min(nb - 1, int(s // step))] += 1
    top = max(counts)
    width, height, pad_b, pad_l = 420, 120, 30, 34
    bw = (width - pad_l - 6) / nb
    bars = []
    for i, n in enumerate(counts):
        h = round((height - pad_b - 14) * n / top) if n else 0
        bars.append({"x": round(pad_l + i * bw + 1, 1), "w": round(max(1.0, bw - 2), 1),
                     "y": height - pad_b - h, "h": h, "n": n,
                     "lo": _fmt_s(i * step), "hi": _fmt_s((i + 1) * step)})
    return {"bars": bars, "width": width, "height": height, "base": height - pad_b,
            "pad_l": pad_l, "top": top, "max": _fmt_s(nb * step), "n": len(secs),
            "reused": reused_done(rows)}


def _nice_step(x: float) -> float:
    if x <= 0:
        return 0.01
    e = 10 ** math.floor(math.log10(x))
    for m in (1, 2, 2.5, 5, 10):
        if m * e >= x:
            return m * e
    return 10 * e


def _fmt_s(x: float) -> str:
    return f"{x:g} s" if x >= 1 else f"{x * 1000:g} ms"


@bp.get("/batches/<bid>")
@signed_in
def batch(bid):
    b = A._batch_or_404(bid)
    state = request.args.get("state") or None
    verdict = request.args.get("verdict") or None
    if state is not None and state not in STATES:
        raise Bad(f"state must be one of {', '.join(STATES)}")
    q = (request.args.get("q") or "").strip()
    tmin, tmax = _float_arg("min_s"), _float_arg("max_s")
    sort = request.args.get("sort") or "order"
    if sort not in SORTS:
        raise Bad(f"sort must be one of {', '.join(SORTS)}")
    desc = request.args.get("dir") == "desc"
    per = _int_arg("per", 100)
    if per not in PAGE_SIZES:
        raise Bad(f"per must be one of {', '.join(map(str, PAGE_SIZES))}")
    page = _page_arg(per)

    rows = light_rows(bid)
    chosen = [r for r in rows
              if (state is None or r["state"] == state)
              and (verdict is None or r.get("verdict") == verdict)
              and (not q or q.lower() in r["name"].lower())
              and (tmin is None or (r["seconds"] is not None and r["seconds"] >= tmin))
              and (tmax is None or (r["seconds"] is not None and r["seconds"] <= tmax))]
    sort_rows(chosen, sort, desc)
    pages = max(1, math.ceil(len(chosen) / per))
    if page > pages:
        page = pages
    shown = chosen[(page - 1) * per: page * per]
    recs = {r["id"]: r for r in svc().store.get_jobs([r["id"] for r in shown])}
    jobs = [recs[r["id"]] for r in shown if r["id"] in recs]
    stored = stored_results(jobs)
    for j in jobs:
        j["name"] = _name(j)
        j["has_proof"], j["has_model"] = stored[j["id"]]

    args = {k: v for k, v in (("state", state), ("verdict", verdict), ("q", q),
                              ("min_s", request.args.get("min_s")),
                              ("max_s", request.args.get("max_s")),
                              ("per", per if per != 100 else None)) if v}

    def link(**over):
        a = dict(args, sort=sort, dir="desc" if desc else "asc", page=page)
        a.update(over)
        a = {k: v for k, v in a.items() if v not in (None, "")}
        if a.get("sort") == "order":
            a.pop("sort")
        if a.get("dir") == "asc":
            a.pop("dir")
        if a.get("page") == 1:
            a.pop("page")
        return url_for("web.batch", bid=bid) + ("?" + urlencode(a) if a else "")

    def sort_link(key):
        d = "desc" if (sort == key and not desc) else "asc"
        return link(sort=key, dir=d, page=1)

    verdicts_seen = sorted({r["verdict"] for r in rows if r.get("verdict")})
    return render_template(
        "batch.html", b=b, jobs=jobs, matching=len(chosen), page=page, pages=pages, per=per,
        state=state, verdict=verdict, q=q, min_s=request.args.get("min_s") or "",
        max_s=request.args.get("max_s") or "", sort=sort, desc=desc, link=link,
        sort_link=sort_link, states=STATES, verdicts_seen=verdicts_seen,
        page_sizes=PAGE_SIZES, vchart=verdict_chart(b), tchart=time_chart(rows),
        treused=reused_done(rows),
        live=not b["finished"], sig=_signature(_batch_live(b)),
        live_url=url_for("web.batch_live", bid=bid))


@bp.get("/batches/<bid>/live.json")
@signed_in
def batch_live(bid):
    b = A._batch_or_404(bid)
    live = _batch_live(b)
    return jsonify({"sig": _signature(live), "finished": b["finished"], **live})


@bp.post("/batches/<bid>/cancel")
@signed_in
def batch_cancel(bid):
    A._batch_or_404(bid)
    A.batch_cancel.__wrapped__(bid)
    return redirect(url_for("web.batch", bid=bid), code=303)


# ==================================================================== jobs

def _bundle_of(jid):
    raw = svc().store.get_job_raw(jid)
    if not raw or not raw.get("problem"):
        return None
    return svc().store.load_problem_bundle(raw["problem"])


def _anchor_prefixes(bundle) -> dict:
    """file name -> the prefix of its line anchors on the job page."""
    names = [bundle["main"]] + sorted(n for n in bundle["files"] if n != bundle["main"])
    return {n: ("L" if i == 0 else f"f{i}-L") for i, n in enumerate(names)}


def _numbered(text: str):
    lines = text.split("\n")
    if lines and lines[-1] == "":
        lines.pop()
    return lines[:MAX_LINES_SHOWN], len(lines)


def _job_live(rec) -> dict:
    return {"state": rec["state"], "verdict": rec.get("verdict"),
            "attempts": rec.get("attempts")}


@bp.get("/jobs/<jid>")
@signed_in
def job(jid):
    rec = A._job_or_404(jid)
    bundle = _bundle_of(jid)
    files = []
    mark = None
    if bundle:
        prefixes = _anchor_prefixes(bundle)
        if rec.get("conjecture"):
            place = statement_places(bundle).get(rec["conjecture"])
            if place and place[0] in prefixes:
                mark = (prefixes[place[0]], place[1])
        for name, prefix in prefixes.items():
            lines, n = _numbered(bundle["files"][name])
            files.append({"name": name, "prefix": prefix, "lines": lines, "count": n,
                          "main": name == bundle["main"]})
    res = svc().store.get_result(jid) if rec["state"] in FINAL_STATES else \
        {"proof": None, "model": None, "figures": {}}
    figures = res.get("figures") or {}
    return render_template(
        "job.html", j=rec, name=_name(rec), files=files, figures=figures, mark=mark,
        has_proof=res.get("proof") is not None, has_model=res.get("model") is not None,
        no_model=(A.no_model_message(rec) if rec.get("verdict") in V.REFUTED
                  and res.get("model") is None else None),
        settings=rec.get("settings") or {}, cert=rec.get("certificate") or {},
        running=rec["state"] in ("queued", "running"), live=rec["state"] not in FINAL_STATES,
        sig=_signature(_job_live(rec)), live_url=url_for("web.job_live", jid=jid),
        max_lines=MAX_LINES_SHOWN)


@bp.get("/jobs/<jid>/live.json")
@signed_in
def job_live(jid):
    rec = A._job_or_404(jid)
    live = _job_live(rec)
    return jsonify({"sig": _signature(live), "finished": rec["state"] in FINAL_STATES, **live})


@bp.get("/jobs/<jid>/problem.txt")
@signed_in
def job_problem_text(jid):
    A._job_or_404(jid)
    bundle = _bundle_of(jid)
    if bundle is None:
        abort(404, f"the problem text of job {jid} is gone")
    name = request.args.get("file") or bundle["main"]
    if name not in bundle["files"]:
        abort(404, f"job {jid} has no file {name!r}")
    return Response(bundle["files"][name], mimetype="text/plain")


@bp.post("/jobs/<jid>/cancel")
@signed_in
def job_cancel(jid):
    A._job_or_404(jid)
    A.job_cancel.__wrapped__(jid)
    return redirect(url_for("web.job", jid=jid), code=303)


# =================================================================== proofs

def statement_places(bundle) -> dict:
    """statement name -> (file, line) in the problem, for links from input
    steps to the job page; empty when the problem cannot be read or is big."""
    if not bundle or sum(len(t) for t in bundle["files"].values()) > MAX_PARSE_CHARS:
        return {}
    try:
        from worker.syntax import load_bundle
        problem = load_bundle(bundle)
    except Exception:
        return {}
    out = {}
    for st in problem.statements:
        if st.span is not None:
            out[st.name] = (st.span.file, st.span.line)
    return out


from .graph import graph_layout  # noqa: E402  (the derivation graph's drawing)


@bp.get("/jobs/<jid>/proof")
@signed_in
def proof(jid):
    rec = A._job_or_404(jid)
    res = svc().store.get_result(jid)
    pf = res.get("proof")
    if pf is None:
        abort(404, f"job {jid} has no proof" + (f" (its verdict is {rec['verdict']})"
                                                 if rec.get("verdict") else " yet"))
    from worker.saturation.proof import clause_text, describe_step, step_names

    bundle = _bundle_of(jid)
    places = statement_places(bundle)
    prefixes = _anchor_prefixes(bundle) if bundle else {}
    used = set(pf.get("axioms_used") or [])
    steps = []
    names_of = {}
    for st in pf.get("steps") or []:
        try:
            if st.get("varnames"):
                names_of[st["id"]] = step_names(st)
        except Exception:
            pass
    for st in pf.get("steps") or []:
        st = dict(st)
        try:
            st["_text"] = clause_text(st)
        except Exception as e:
            st["_text"] = f"(cannot print: {type(e).__name__})"
        try:
            st["_why"] = describe_step(st, names_of)
        except Exception:
            st["_why"] = st.get("rule", "")
        if st.get("rule") == "input":
            st["_kind"] = "conj" if st.get("conj") else "axiom"
            place = places.get(st.get("formula"))
            if place and place[0] in prefixes:
                st["_link"] = url_for("web.job", jid=jid) + f"#{prefixes[place[0]]}{place[1]}"
                st["_where"] = f"{place[0]}:{place[1]}"
        elif not st.get("clause"):
            st["_kind"] = "empty"
        else:
            st["_kind"] = "derived"
        steps.append(st)
    axioms = []
    for name in pf.get("axioms_used") or []:
        place = places.get(name)
        link = (url_for("web.job", jid=jid) + f"#{prefixes[place[0]]}{place[1]}"
                if place and place[0] in prefixes else None)
        axioms.append({"name": name, "link": link,
                       "where": f"{place[0]}:{place[1]}" if place else None})
    symbols = []
    for name, info in (pf.get("skolems") or {}).items():
        symbols.append({"name": name, "arity": info.get("arity"),
                        "what": f"witness introduced for {info.get('statement')}"})
    for name, info in (pf.get("definitions") or {}).items():
        symbols.append({"name": name, "arity": info.get("arity"),
                        "what": f"names \u201c{info.get('formula')}\u201d in {info.get('statement')}"})
    return render_template("proof.html", j=rec, name=_name(rec), steps=steps, axioms=axioms,
                           used=used, symbols=symbols, graph=graph_layout(steps),
                           text=A.format_proof_text(pf))


# =================================================================== models

def model_view(model: dict) -> dict:
    """The model page's tables; symbols in the order format_model lists
    them (display.natural: u2 before u10)."""
    from worker.models.display import natural
    n = int(model.get("size") or 0)
    dom = list(range(n))

    def table(t):
        return {tuple(args): v for args, v in t.get("values", ())}

    funs, preds = model.get("functions") or {}, model.get("predicates") or {}
    out = {"size": n, "domain": dom, "constants": [], "unary": [], "binary": [],
           "higher": [], "props": [], "unary_p": [], "binary_p": [], "higher_p": []}
    for f in sorted(funs, key=natural):
        t, k = table(funs[f]), funs[f].get("arity", 0)
        if k == 0:
            out["constants"].append({"name": f, "value": t.get((), "?")})
        elif k == 1:
            out["unary"].append({"name": f, "vals": [t.get((x,), "?") for x in dom]})
        elif k == 2:
            out["binary"].append({"name": f, "infix": f in ("*", "+"),
                                  "rows": [[t.get((x, y), "?") for y in dom] for x in dom]})
        else:
            out["higher"].append({"name": f, "arity": k,
                                  "entries": [(list(a), t[a]) for a in sorted(t)]})
    for p in sorted(preds, key=natural):
        t, k = table(preds[p]), preds[p].get("arity", 0)
        if k == 0:
            out["props"].append({"name": p, "value": bool(t.get((), False))})
        elif k == 1:
            out["unary_p"].append({"name": p, "vals": [bool(t.get((x,), False)) for x in dom]})
        elif k == 2:
            out["binary_p"].append({"name": p, "rows": [[bool(t.get((x, y), False)) for y in dom]
                                                        for x in dom]})
        else:
            holds = [list(a) for a in sorted(t) if t[a]]
            fails = [list(a) for a in sorted(t) if not t[a]]
            out["higher_p"].append({"name": p, "arity": k, "holds": holds, "fails": fails,
                                    "show_fails": len(fails) < len(holds)})
    return out


def _pairs(value, size) -> list | None:
    """``value`` if it is a list of [variable name, element of 0..size-1]
    pairs, else None (a stored record is shown, never trusted blindly)."""
    if not isinstance(value, list) or not value:
        return None
    for p in value:
        if not (isinstance(p, list) and len(p) == 2 and isinstance(p[0], str)
                and type(p[1]) is int and 0 <= p[1] < size):
            return None
    return value


def fails_for(rec, size) -> list | None:
    """Where the conjecture fails, as ``[[variable name, element], ...]``,
    or None.  The certificate's ``fails_for`` field when it has the key (a
    certificate written since the field exists; null there means there are
    no such values to name).  A record written before the field (no key; a
    reused verdict copies its source's certificate, so such records are
    still made) is read off its detail text, matched whole against the one
    wording the evaluator used then: "<n> statement(s) hold and the
    conjecture <name> fails (for x = 1, y = #2) in a model of size <n>"."""
    cert = rec.get("certificate") or {}
    if cert.get("kind") != "model-evaluated" or not rec.get("conjecture"):
        return None
    if "fails_for" in cert:
        return _pairs(cert["fails_for"], size)
    found = re.fullmatch(r"\d+ statement\(s\) hold and the conjecture "
                         + re.escape(rec["conjecture"])
                         + r" fails \(for (.+)\) in a model of size \d+",
                         cert.get("detail") or "")
    if not found:
        return None
    pairs = []
    for part in found.group(1).split(", "):
        one = re.fullmatch(r"(\S+) = #?(\d+)", part)
        if not one:
            return None
        pairs.append([one.group(1), int(one.group(2))])
    return _pairs(pairs, size)


@bp.get("/jobs/<jid>/model")
@signed_in
def model(jid):
    rec = A._job_or_404(jid)
    m = svc().store.get_result(jid).get("model")
    if m is None:
        abort(404, A.no_model_message(rec))
    mv = model_view(m)
    return render_template("model.html", j=rec, name=_name(rec), mv=mv,
                           text=A.format_model_text(m), fails_for=fails_for(rec, mv["size"]))


# =================================================================== submit

def _read_upload(fs) -> tuple[str, str] | None:
    if fs is None or not fs.filename:
        return None
    raw = fs.read()
    name = os.path.basename(fs.filename.replace("\\", "/")) or "upload"
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise Bad(f"the file {name!r} is not UTF-8 text")
    return name, text


def _files_of(form, files, kept_prefix, upload_field, bad: list) -> list:
    """The files of one part of the form: those kept from the last try
    (``<kept_prefix>_name`` / ``<kept_prefix>_text``, in order; an emptied
    text leaves its file out), then the uploads of ``upload_field`` (one
    under a kept file's name replaces it).  A file that cannot be read adds
    its message to ``bad`` and is left out."""
    names, texts = form.getlist(kept_prefix + "_name"), form.getlist(kept_prefix + "_text")
    if len(names) != len(texts):
        bad.append("the kept files of the form do not match; choose the files again")
        names, texts = [], []
    ups = []
    for fs in files.getlist(upload_field):
        try:
            up = _read_upload(fs)
        except Bad as e:
            bad.append(str(e))
            continue
        if up:
            ups.append(up)
    chosen = {n for n, _ in ups}
    kept = [((n or "").strip() or "upload", t) for n, t in zip(names, texts) if t.strip()]
    return [(n, t) for n, t in kept if n not in chosen] + ups


def form_files(form, files) -> dict:
    """What the form sends besides its settings: the pasted problem, the
    problem files (kept and uploaded), the pasted axioms and the axiom
    files, and the messages of files that could not be read."""
    bad: list = []
    return {"files": _files_of(form, files, "kept", "files", bad),
            "axiom_files": _files_of(form, files, "kept_axioms", "axiom_files", bad),
            "bad": bad}


def submission_body(form, got: dict) -> dict:
    """The JSON API's submission body made from the form (``got``: what
    ``form_files`` read from it)."""
    language = form.get("language") or None
    if language not in (None, "native", "tptp"):
        raise Bad("language must be native, tptp or automatic")
    if got["bad"]:
        raise Bad("; ".join(got["bad"]))
    problems = []
    if (form.get("text") or "").strip():
        problems.append(((form.get("name") or "").strip() or "pasted", form["text"]))
    problems += got["files"]
    if not problems:
        raise Bad("paste a problem or choose at least one file")
    names = [n for n, _ in problems]
    if len(set(names)) != len(names):
        raise Bad("two problems have the same file name: " +
                  ", ".join(sorted({n for n in names if names.count(n) > 1})))
    ax = []
    if (form.get("axioms_text") or "").strip():
        ax.append(((form.get("axioms_name") or "").strip() or "axioms", form["axioms_text"]))
    ax += got["axiom_files"]
    body: dict = {}
    if ax:
        body["axioms"] = {"main": [n for n, _ in ax] if len(ax) > 1 else ax[0][0],
                          "files": dict(ax), "language": language}
        body["conjectures"] = [{"name": n, "text": t} for n, t in problems]
    elif len(problems) == 1:
        body["problem"] = {"main": problems[0][0], "files": {problems[0][0]: problems[0][1]},
                           "language": language}
    else:
        body["problems"] = [{"main": n, "files": {n: t}, "language": language}
                            for n, t in problems]
    tl = (form.get("time_limit") or "").strip()
    if tl:
        try:
            body["time_limit"] = float(tl)
        except ValueError:
            raise Bad(f"the time limit must be a number of seconds, not {tl[:40]!r}")
        if not math.isfinite(body["time_limit"]):
            raise Bad("the time limit must be a finite number of seconds")
    if (form.get("label") or "").strip():
        body["label"] = form["label"].strip()
    if form.get("strategy"):
        body["strategy"] = form["strategy"]
    if form.get("reuse"):
        body["reuse"] = True
    return body


def error_listing(body: dict, file: str | None, line: int | None, around: int = 3):
    """The lines near an input error, numbered, the error's line marked (for
    the pasted or uploaded text the error is in)."""
    if not file or not line:
        return None
    texts = {}
    for b in ([body.get("problem")] + list(body.get("problems") or []) + [body.get("axioms")]):
        if b:
            texts.update(b["files"])
    for c in body.get("conjectures") or []:
        texts[c["name"]] = c["text"]
    text = texts.get(file)
    if text is None:
        return None
    lines = text.split("\n")
    lo, hi = max(1, line - around), min(len(lines), line + around)
    return {"file": file, "line": line,
            "lines": [(n, lines[n - 1]) for n in range(lo, hi + 1)]}


def call_submit(body: dict):
    """Run the JSON API's submission view on ``body`` for the signed-in
    owner: the same reading, checks, limits and storage as ``POST
    /api/submissions``.  Returns (status, answer)."""
    owner = g.owner
    with current_app.test_request_context("/api/submissions", method="POST",
                                          data=json.dumps(body),
                                          content_type="application/json"):
        g.owner = owner
        try:
            rv = A.submit.__wrapped__()
        except A.BadRequest as e:
            return e.status, {"error": {"code": e.code, "message": e.message, **e.extra}}
    if isinstance(rv, tuple):
        resp, status = rv[0], rv[1]
    else:
        resp, status = rv, rv.status_code
    return status, resp.get_json()


@bp.route("/submit", methods=["GET", "POST"])
@signed_in
def submit():
    cfg = svc().config
    ctx = {"strategies": A.strategy_names(), "default_time": cfg.default_time_limit,
           "max_time": cfg.max_time_limit, "form": request.form, "error": None,
           "error_text": None, "error_listing": None, "kept": [], "kept_axioms": []}
    if request.method == "GET":
        return render_template("submit.html", **ctx)
    # what was sent comes back in the form when it is refused: the pasted
    # texts as they were, every file read into an editable text of its own
    got = form_files(request.form, request.files)
    ctx["kept"], ctx["kept_axioms"] = got["files"], got["axiom_files"]
    # the API's rate limit, from the same bucket as the signed-in token's API calls
    over = L.rate_refusal(session["tok"])
    if over is not None:
        wait, message = over
        ctx["error"] = (message[:1].upper() + message[1:] +
                        ". Nothing was queued; send the form again then.")
        resp = current_app.make_response((render_template("submit.html", **ctx), 429))
        resp.headers["Retry-After"] = L.retry_after_header(wait)
        return resp
    try:
        body = submission_body(request.form, got)
    except Bad as e:
        ctx["error"] = str(e)
        return render_template("submit.html", **ctx), 400
    status, out = call_submit(body)
    if status != 202:
        err = (out or {}).get("error") or {}
        ctx["error"] = err.get("message") or "the submission was refused"
        if err.get("code") == "input_error":
            ctx["error_text"] = err.get("text")
            ctx["error"] = "The input has an error; nothing was queued."
            ctx["error_listing"] = error_listing(body, err.get("file"), err.get("line"))
        return render_template("submit.html", **ctx), status
    if len(out["jobs"]) == 1:
        return redirect(url_for("web.job", jid=out["jobs"][0]["id"]), code=303)
    return redirect(url_for("web.batch", bid=out["batch"]), code=303)


# =================================================================== corpus

def _corpus():
    return C.CorpusStore(svc().redis)


def _run_or_404(rid):
    run = _corpus().get_run(rid) if rid else None
    if run is None or run.get("owner") != g.owner:
        abort(404, f"no run {rid}")
    return run


@bp.get("/suites")
@signed_in
def suites():
    corpus = _corpus()
    out = []
    for name in corpus.suites(g.owner):
        ids = corpus.runs(g.owner, name)
        last = corpus.get_run(ids[0]) if ids else None
        summary = C.view_of(svc().store, corpus, last)["summary"] if last else None
        out.append({"name": name, "runs": len(ids), "last": summary})
    return render_template("suites.html", suites=out)


@bp.get("/suites/<path:name>")
@signed_in
def suite(name):
    corpus = _corpus()
    ids = corpus.runs(g.owner, name)
    if not ids:
        abort(404, f"no suite {name!r}")
    runs = []
    for rid in ids[:50]:
        r = corpus.get_run(rid)
        if r:
            runs.append(C.view_of(svc().store, corpus, r)["summary"])
    return render_template("suite.html", name=name, runs=runs, more=len(ids) > 50,
                           count=len(ids))


@bp.get("/runs/<rid>")
@signed_in
def run(rid):
    r = _run_or_404(rid)
    from ..corpus_api import full_view
    view = full_view(r)
    return render_template("run.html", r=r, s=view["summary"], guards=view["guards"],
                           rows=view["rows"], diff=view["diff"],
                           contradictions=view["contradictions"],
                           live=not view["summary"]["finished"],
                           sig=_signature(view["summary"]["done"]),
                           live_url=url_for("web.run_live", rid=rid))


@bp.get("/runs/<rid>/live.json")
@signed_in
def run_live(rid):
    r = _run_or_404(rid)
    s = C.view_of(svc().store, _corpus(), r)["summary"]
    return jsonify({"sig": _signature(s["done"]), "finished": s["finished"],
                    "done": s["done"], "total": s["total"]})


@bp.get("/compare")
@signed_in
def compare():
    a, b = request.args.get("a"), request.args.get("b")
    suite = request.args.get("suite")
    if not a and not b and suite:       # as the API: the suite's last two runs
        pair = C.last_two(_corpus(), g.owner, suite)
        if pair is None:
            abort(404, f"suite {suite!r} has fewer than two runs; a comparison needs two")
        a, b = pair
    if not a or not b:
        raise Bad("give two runs to compare: ?a=RUN&b=RUN, or ?suite=NAME")
    threshold = _float_arg("threshold")
    across = request.args.get("across_suites", "") not in ("", "0")
    ra, rb = _run_or_404(a), _run_or_404(b)
    refusal = C.suites_refusal(ra, rb)
    if refusal and not across:      # as the API: only when asked for
        html = render_template("compare.html", refused=refusal, a={"run": a}, b={"run": b},
                               anyway=url_for("web.compare", a=a, b=b, across_suites=1))
        return html, 400
    store, corpus = svc().store, _corpus()
    va, vb = C.view_of(store, corpus, ra), C.view_of(store, corpus, rb)
    diff = C.compare(va, vb, threshold=C.DEFAULT_TIME_THRESHOLD if threshold is None
                     else threshold)
    jobs_a = {row["key"]: row for row in va["rows"]}
    jobs_b = {row["key"]: row for row in vb["rows"]}
    reused = [row for row in vb["rows"] if row["reused"]]
    removed_settled = [x for x in diff["removed"] if x.get("settled")]
    fixed = [x for x in diff["gained"] if x.get("fixed")]
    return render_template("compare.html", diff=diff, a=va["summary"], b=vb["summary"],
                           ja=jobs_a, jb=jobs_b, reused=reused, refused=None,
                           removed_settled=removed_settled, fixed=fixed,
                           contradictions_b=vb["contradictions"])


__all__ = ["bp", "ConsoleSessions", "ensure_secret", "graph_layout", "model_view",
           "submission_body", "call_submit", "light_rows", "time_chart", "verdict_chart"]

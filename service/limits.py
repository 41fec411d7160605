"""Request limits that hold for every request, ahead of the API's own checks.

Mounted by the app factory as an optional blueprint; it adds no routes, only
a hook that runs before every request under ``/api`` and ``/metrics``:

* **rate limit per token**: a token bucket per bearer token (by the token's
  SHA-256), ``NIGHTJAR_RATE_PER_SECOND`` requests a second (default 20) with
  bursts up to ``NIGHTJAR_RATE_BURST`` (default 200).  Over it: 429 with
  ``Retry-After``.  The console's submit form takes from the same bucket
  (``rate_refusal``, by the hash its session keeps).  The buckets live in the API process (no Redis write per
  request, which with ``appendfsync always`` would cost an fsync per status
  poll), so with k API processes a token gets up to k times the rate.
* **JSON bodies**: nesting deeper than ``MAX_JSON_DEPTH`` (64), more than
  ``MAX_JSON_ITEMS`` (2,000,000) values in all, numbers that are not finite
  (``NaN``, ``Infinity``), a problem bundle of more than
  ``NIGHTJAR_MAX_FILES_PER_PROBLEM`` files (default 1,000), or a body that is
  not UTF-8 JSON: 400 with a plain message.  (The body's size is capped by
  ``MAX_CONTENT_LENGTH`` in the app factory: 413.)
* **query strings**: at most 20 parameters, each value at most 200
  characters; ``offset`` and ``limit`` whole numbers below 10^9.
* **path segments**: an id longer than 100 characters is answered 404 at once.
"""

from __future__ import annotations

import hashlib
import math
import os
import threading
import time

from flask import Blueprint, current_app, jsonify, request

from .auth import bearer_token

bp = Blueprint("limits", __name__)

MAX_JSON_DEPTH = 64
MAX_JSON_ITEMS = 2_000_000
MAX_QUERY_PARAMS = 20
MAX_QUERY_VALUE = 200
MAX_PAGE_NUMBER = 10 ** 9
MAX_ID_CHARS = 100
MAX_BUCKETS = 100_000          # tokens remembered at once (oldest dropped)


def _env_float(name: str, default: float) -> float:
    try:
        return float(os.environ.get(name, "") or default)
    except ValueError:
        return default


class RateLimiter:
    """Token buckets, one per bearer token."""

    def __init__(self, rate: float, burst: float):
        self.rate, self.burst = rate, burst
        self.lock = threading.Lock()
        self.buckets: dict[str, list[float]] = {}     # key -> [tokens, last time]

    def take(self, key: str) -> float:
        """0.0 if the request may go on, else the seconds until it may."""
        if self.rate <= 0:
            return 0.0
        now = time.monotonic()
        with self.lock:
            b = self.buckets.get(key)
            if b is None:
                if len(self.buckets) >= MAX_BUCKETS:
                    # drop the buckets that have been full longest
                    for k in sorted(self.buckets, key=lambda k: self.buckets[k][1])[
                            :MAX_BUCKETS // 10]:
                        del self.buckets[k]
                b = self.buckets[key] = [self.burst, now]
            b[0] = min(self.burst, b[0] + (now - b[1]) * self.rate)
            b[1] = now
            if b[0] >= 1.0:
                b[0] -= 1.0
                return 0.0
            return (1.0 - b[0]) / self.rate


class Limits:
    def __init__(self):
        self.rate = RateLimiter(_env_float("NIGHTJAR_RATE_PER_SECOND", 20.0),
                                _env_float("NIGHTJAR_RATE_BURST", 200.0))
        self.max_files = int(_env_float("NIGHTJAR_MAX_FILES_PER_PROBLEM", 1000))


@bp.record_once
def _setup(state):
    state.app.extensions["nightjar_limits"] = Limits()


def _error(status: int, code: str, message: str, **extra):
    body = {"code": code, "message": message}
    body.update(extra)
    resp = jsonify({"error": body})
    resp.status_code = status
    return resp


class _Refused(Exception):
    def __init__(self, message):
        super().__init__(message)
        self.message = message


def check_json(obj, max_files: int) -> None:
    """Walk a parsed body without recursion; raise _Refused on a crossed limit."""
    stack = [(obj, 1)]
    items = 0
    while stack:
        v, depth = stack.pop()
        items += 1
        if items > MAX_JSON_ITEMS:
            raise _Refused(f"the body has more than {MAX_JSON_ITEMS:,} values")
        if depth > MAX_JSON_DEPTH:
            raise _Refused(f"the body is nested more than {MAX_JSON_DEPTH} levels deep")
        if isinstance(v, float) and not math.isfinite(v):
            raise _Refused("numbers must be finite (no NaN or Infinity)")
        if isinstance(v, dict):
            files = v.get("files")
            if isinstance(files, dict) and len(files) > max_files:
                raise _Refused(f"a problem has {len(files):,} files; the limit is "
                               f"{max_files:,} files per problem")
            stack.extend((x, depth + 1) for x in v.values())
        elif isinstance(v, list):
            stack.extend((x, depth + 1) for x in v)


def _json_depth_ok(raw: bytes) -> bool:
    """A quick look at bracket depth before json.loads (which recurses and
    would raise RecursionError on ``[[[[...``).  Counts brackets outside
    strings; only bodies that pass are parsed."""
    depth = 0
    in_str = False
    esc = False
    # Fast path: few brackets at all means shallow.
    if raw.count(b"[") + raw.count(b"{") <= MAX_JSON_DEPTH:
        return True
    for ch in raw.decode("utf-8", errors="replace"):
        if in_str:
            if esc:
                esc = False
            elif ch == "\\":
                esc = True
            elif ch == '"':
                in_str = False
        elif ch == '"':
            in_str = True
        elif ch in "[{":
            depth += 1
            if depth > MAX_JSON_DEPTH:
                return False
        elif ch in "]}":
            depth -= 1
    return True


def token_key(token: str) -> str:
    """The rate limiter's key for a token: its SHA-256 in hex, the same as
    ``Store.token_hash`` (which the console's session keeps)."""
    return hashlib.sha256(token.encode("utf-8", "surrogateescape")).hexdigest()


def rate_refusal(key: str) -> tuple[float, str] | None:
    """Count one request against the bucket of the token whose SHA-256 is
    ``key``: None when it may go on, else (seconds to wait, the message).
    The API's hook and the console's submit form both call this, so a
    token has one budget whichever way it submits."""
    lim = current_app.extensions.get("nightjar_limits")
    if lim is None:
        return None
    wait = lim.rate.take(key)
    if wait <= 0:
        return None
    return wait, (f"too many requests for this token: at most {lim.rate.rate:g} a "
                  f"second (bursts of {lim.rate.burst:g}); try again in "
                  f"{wait_text(wait)} s")


def _round_up(seconds: float, step: float) -> float:
    """``seconds`` rounded up to a multiple of ``step``, at least one step:
    a wait is never told shorter than it is (a wait of 0.03 s printed with
    one decimal was "try again in 0.0 s")."""
    n = max(1, math.ceil(seconds / step - 1e-9))
    return round(n * step, 6)


def wait_text(wait: float) -> str:
    """The wait in a refusal's message: tenths of a second, rounded up."""
    return f"{_round_up(wait, 0.1):.1f}"


def retry_after_value(wait: float) -> float:
    """The 429 error's ``retry_after`` field: hundredths, rounded up (the
    client waits this rather than the header's whole seconds)."""
    return _round_up(wait, 0.01)


def retry_after_header(wait: float) -> str:
    return str(max(1, math.ceil(wait)))


@bp.before_app_request
def _limits():
    path = request.path
    if not (path.startswith("/api/") or path == "/metrics"):
        return None
    lim = current_app.extensions.get("nightjar_limits")
    if lim is None:
        return None
    for seg in path.split("/"):
        if len(seg) > MAX_ID_CHARS:
            return _error(404, "not_found", "no such record (the id is too long)")
    # Rate limit: by token; requests without one are refused by the API anyway.
    tok = bearer_token()
    if tok is not None:
        over = rate_refusal(token_key(tok))
        if over is not None:
            wait, message = over
            resp = _error(429, "rate_limited", message, retry_after=retry_after_value(wait))
            resp.headers["Retry-After"] = retry_after_header(wait)
            return resp
    if len(request.args) > MAX_QUERY_PARAMS:
        return _error(400, "bad_request", f"at most {MAX_QUERY_PARAMS} query parameters")
    for k, v in request.args.items(multi=True):
        if len(k) > MAX_QUERY_VALUE or len(v) > MAX_QUERY_VALUE:
            return _error(400, "bad_request", f"query parameter {k[:40]!r} is over "
                          f"{MAX_QUERY_VALUE} characters")
        if k in ("offset", "limit") and v.strip().isdigit() and int(v) >= MAX_PAGE_NUMBER:
            return _error(400, "limit", f"{k} must be below {MAX_PAGE_NUMBER:,}",
                          limit=MAX_PAGE_NUMBER)
    if request.method in ("POST", "PUT", "PATCH") and request.content_length != 0:
        raw = request.get_data(cache=True)
        if raw and request.is_json:
            if not _json_depth_ok(raw):
                return _error(400, "bad_request", f"the body is nested more than "
                              f"{MAX_JSON_DEPTH} levels deep")
            try:
                body = request.get_json(silent=True, cache=True)
            except RecursionError:
                return _error(400, "bad_request", "the body is nested too deeply")
            if body is None:
                return None       # not JSON: the API answers with its own message
            try:
                check_json(body, lim.max_files)
            except _Refused as e:
                return _error(400, "bad_request", e.message)
    return None

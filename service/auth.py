"""Bearer tokens.

A request carries ``Authorization: Bearer <token>``; the token's SHA-256 is
looked up in the store (tokens are never kept in clear) and compared in
constant time.  Every job and batch belongs to its token's owner; a record
of someone else is answered with 404, as if it did not exist.
"""

from __future__ import annotations

import functools

from flask import current_app, g, jsonify, request


def api_error(status: int, code: str, message: str, **extra):
    """A JSON error answer: ``{"error": {"code", "message", ...}}``."""
    body = {"code": code, "message": message}
    body.update(extra)
    resp = jsonify({"error": body})
    resp.status_code = status
    return resp


def bearer_token() -> str | None:
    h = request.headers.get("Authorization", "")
    kind, _, value = h.partition(" ")
    if kind.lower() != "bearer" or not value.strip():
        return None
    return value.strip()


def require_owner(view):
    """Set ``g.owner`` from the request's token, or answer 401."""
    @functools.wraps(view)
    def wrapped(*a, **kw):
        token = bearer_token()
        if token is None:
            return api_error(401, "unauthorized",
                             "this needs a token: send 'Authorization: Bearer <token>'")
        owner = current_app.extensions["nightjar"].store.check_token(token)
        if owner is None:
            return api_error(401, "unauthorized", "unknown or revoked token")
        g.owner = owner
        return view(*a, **kw)
    return wrapped


def owns(record: dict | None) -> bool:
    return record is not None and record.get("owner") == g.owner

"""The Flask app factory.

``create_app(config, redis_client=None)`` mounts the JSON API and, when their
modules exist, the corpus API (``service.corpus_api:bp``) and the web console
(``service.web.views:bp``), so those parts need no edit here.  The app keeps
its store, dispatcher and configuration in ``app.extensions["nightjar"]``.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass

import redis
from flask import Flask, request
from werkzeug.exceptions import HTTPException

from .auth import api_error
from .config import Config
from .queue import Dispatcher, connect
from .store import Store

# the parts of the app that live in modules of their own, each a Blueprint `bp`
BLUEPRINTS = ("service.corpus_api", "service.web.views",
              "service.limits", "service.metrics", "service.openapi")


@dataclass
class Service:
    config: Config
    redis: redis.Redis
    store: Store
    dispatcher: Dispatcher


def _blueprint(app: Flask, module: str) -> None:
    app.register_blueprint(importlib.import_module(module).bp)


def create_app(config: Config | None = None, redis_client: redis.Redis | None = None) -> Flask:
    config = config or Config.from_env()
    if redis_client is None:
        if not config.redis_url:
            raise ValueError("no Redis configured (Config.redis_url / NIGHTJAR_REDIS_URL)")
        redis_client = connect(config.redis_url)
    app = Flask(__name__)
    app.config["MAX_CONTENT_LENGTH"] = config.max_upload_bytes
    app.json.sort_keys = False
    app.extensions["nightjar"] = Service(config, redis_client, Store(redis_client),
                                         Dispatcher(redis_client, config))

    from .api import bp as api_bp
    app.register_blueprint(api_bp)
    for module in BLUEPRINTS:
        _blueprint(app, module)

    @app.errorhandler(HTTPException)
    def _http_error(e: HTTPException):
        if not request.path.startswith("/api"):
            # outside the API: the console's own page when it is mounted
            page = app.extensions.get("nightjar_html_errors")
            if page is not None and (e.code or 0) >= 400:
                return page(e)
            return e
        if e.code == 413:
            return api_error(413, "too_large", f"the upload is over the server's limit of "
                             f"{config.max_upload_bytes} bytes", limit=config.max_upload_bytes)
        return api_error(e.code or 500, (e.name or "error").lower().replace(" ", "_"),
                         e.description or e.name)

    @app.errorhandler(Exception)
    def _crash(e: Exception):
        if isinstance(e, HTTPException):
            return _http_error(e)
        app.logger.exception("unhandled error")
        if not request.path.startswith("/api"):
            return "internal error", 500
        return api_error(500, "internal", f"internal error: {type(e).__name__}")

    return app

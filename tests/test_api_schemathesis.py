"""The JSON API under schemathesis, driven by our OpenAPI document: generated
requests (valid and invalid bodies, parameters, ids) never get a 500, and
answers keep to the documented status codes.

The app runs in-process (WSGI) on fakeredis; the engine is not needed, since
no worker runs: submissions are read, clausified, stored and queued."""

import os

import fakeredis
import pytest

import schemathesis  # noqa: E402
from hypothesis import HealthCheck, settings  # noqa: E402
from schemathesis.checks import not_a_server_error  # noqa: E402
from schemathesis.specs.openapi.checks import status_code_conformance  # noqa: E402

from service.app import create_app  # noqa: E402
from service.config import Config  # noqa: E402
from service.store import Store  # noqa: E402

EXAMPLES = int(os.environ.get("NIGHTJAR_SCHEMATHESIS_EXAMPLES", "25"))


def _app():
    os.environ["NIGHTJAR_RATE_PER_SECOND"] = "0"      # no rate limit for the generator
    try:
        r = fakeredis.FakeRedis()
        app = create_app(Config(max_upload_bytes=200_000, max_jobs_per_batch=50,
                                max_time_limit=60), r)
    finally:
        del os.environ["NIGHTJAR_RATE_PER_SECOND"]
    store = Store(r)
    token = store.add_token("fuzz")
    # one real batch, so some generated ids meet records
    c = app.test_client()
    c.post("/api/submissions", headers={"Authorization": f"Bearer {token}"}, json={
        "problem": {"main": "t.nj", "files": {"t.nj": "axiom a: p\nconjecture g: p\n"}}})
    return app, token


APP, TOKEN = _app()
AUTH = {"Authorization": f"Bearer {TOKEN}"}
schema = schemathesis.openapi.from_wsgi("/api/openapi.json", APP, headers=AUTH)


@schema.parametrize()
@settings(max_examples=EXAMPLES, deadline=None, derandomize=True, database=None,
          suppress_health_check=list(HealthCheck))
def test_api_never_answers_500(case):
    case.call_and_validate(headers=AUTH, checks=[not_a_server_error, status_code_conformance])

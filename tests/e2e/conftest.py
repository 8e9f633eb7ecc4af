"""Browser tests: the dashboard served by werkzeug in a thread, driven by Playwright in Debian's Chromium.

Never downloads a browser: ``/usr/bin/chromium`` is launched through pytest-playwright's fixtures.
"""

from __future__ import annotations

import logging
import threading
from collections.abc import Iterator
from pathlib import Path

import pytest
from playwright.sync_api import expect
from served import record_problems
from siteharvest_app.factory import create_app
from werkzeug.serving import make_server

ROOT = Path(__file__).resolve().parents[2]
ARTIFACTS = ROOT / "test-artifacts"
CHROMIUM = "/usr/bin/chromium"

expect.set_options(timeout=20_000)


@pytest.fixture(scope="session")
def browser_type_launch_args(browser_type_launch_args):
    if not Path(CHROMIUM).exists():
        pytest.skip("Debian's chromium is not installed at /usr/bin/chromium")
    return {
        **browser_type_launch_args,
        "executable_path": CHROMIUM,
        "args": ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync",
                 "--disable-dev-shm-usage"],
    }


@pytest.fixture(scope="session")
def browser_context_args(browser_context_args):
    return {**browser_context_args, "viewport": {"width": 1440, "height": 900}, "accept_downloads": True}


@pytest.fixture(scope="session")
def app_url() -> Iterator[str]:
    """The dashboard over the bundled sample spots, on a free local port."""
    logging.getLogger("werkzeug").setLevel(logging.ERROR)
    app = create_app()
    server = make_server("127.0.0.1", 0, app.server, threaded=True)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        yield f"http://127.0.0.1:{server.server_port}/"
    finally:
        server.shutdown()
        thread.join(timeout=10)


@pytest.fixture(scope="session")
def artifacts() -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS


@pytest.fixture
def watched_page(page, app_url):
    """The page, with console errors, page errors and requests leaving this machine recorded and checked."""
    problems = record_problems(page)
    page.goto(app_url)
    expect(page.locator(".sh-table")).to_be_visible()
    yield page
    assert problems == []

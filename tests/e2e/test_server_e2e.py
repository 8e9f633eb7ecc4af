"""The dashboard as ``siteharvest serve`` runs it (waitress, security headers, optional password) in
headless Chromium: the page loads, every view draws, downloads work, and the content security policy
blocks nothing the page needs (no violation event, no console error).
"""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path

import pytest
from playwright.sync_api import Browser, Page, expect
from served import record_problems, running
from siteharvest_app.factory import create_app
from siteharvest_app.security import USER

pytestmark = pytest.mark.e2e

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "sample_sites").glob("*.toml"))
PASSWORD = "a long enough test password"
VIEWS = [("Sources side by side", "#sh-fig-sources .main-svg"), ("Year at a glance", "#sh-fig-year .main-svg"),
         ("Deficit calendar", "#sh-fig-calendar .main-svg"), ("Worst week", "#sh-fig-week .main-svg"),
         ("What it takes", "#sh-fig-sizing .main-svg"), ("Weather risk", "#sh-fig-risk .main-svg"),
         ("Portfolio", "#sh-portfolio-table .ag-row")]
# Records every CSP violation the page sees, from the first script on.
WATCH_CSP = """window.__csp = [];
document.addEventListener('securitypolicyviolation',
  (e) => window.__csp.push(e.violatedDirective + ' ' + (e.blockedURI || 'inline')));"""


@pytest.fixture(scope="module")
def url() -> Iterator[str]:
    with running(create_app()) as port:
        yield f"http://127.0.0.1:{port}/"


@pytest.fixture(scope="module")
def locked_url() -> Iterator[str]:
    with running(create_app(password=PASSWORD)) as port:
        yield f"http://127.0.0.1:{port}/"


def watch(page: Page) -> list[str]:
    page.add_init_script(WATCH_CSP)
    return record_problems(page)


def test_served_page_draws_every_view_under_the_policy(browser: Browser, url: str, tmp_path: Path,
                                                       artifacts: Path):
    context = browser.new_context(viewport={"width": 1440, "height": 900}, accept_downloads=True)
    page = context.new_page()
    problems = watch(page)
    try:
        reply = page.goto(url)
        assert reply is not None and reply.ok
        assert "frame-ancestors 'none'" in reply.headers["content-security-policy"]
        expect(page.locator(".sh-table")).to_be_visible()
        expect(page.locator(".sh-status-ok")).to_be_visible()
        for label, drawn in VIEWS:
            page.locator(".sh-tab", has_text=label).click()
            expect(page.locator(drawn).first).to_be_visible(timeout=60_000)
        page.screenshot(path=str(artifacts / "served-portfolio.png"))
        page.locator(".sh-tab", has_text="Sources side by side").click()
        with page.expect_download() as info:
            page.get_by_role("button", name="Save as site file").click()
        saved = tmp_path / info.value.suggested_filename
        info.value.save_as(saved)
        assert "[spot]" in saved.read_text(encoding="utf-8")
        button = page.get_by_role("button", name="Download report as HTML")
        with page.expect_download(timeout=120_000) as info:
            button.click()
            expect(page.locator("#sh-report-busy")).to_contain_text("queued while another is made")
        assert info.value.suggested_filename == f"{SAMPLES[0].stem}-report.html"
        expect(button).to_be_enabled()
        assert page.evaluate("window.__csp") == []
        assert problems == []
    finally:
        context.close()


def test_a_password_protected_server_asks_first(browser: Browser, locked_url: str):
    anonymous = browser.new_context()
    try:
        reply = anonymous.request.get(locked_url)  # a page would only show the browser's login prompt
        assert reply.status == 401 and reply.headers["www-authenticate"].lower().startswith("basic")
    finally:
        anonymous.close()
    context = browser.new_context(viewport={"width": 1440, "height": 900},
                                  http_credentials={"username": USER, "password": PASSWORD})
    page = context.new_page()
    problems = watch(page)
    try:
        reply = page.goto(locked_url)
        assert reply is not None and reply.ok
        expect(page.locator(".sh-table")).to_be_visible()
        page.locator(".sh-tab", has_text="Portfolio").click()
        expect(page.locator("#sh-portfolio-table .ag-row").first).to_be_visible(timeout=60_000)
        assert page.evaluate("window.__csp") == []
        assert problems == []
    finally:
        context.close()

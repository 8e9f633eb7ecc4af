"""The study views and the report download in a real browser (headless Debian Chromium).

Expected texts come from the first sample site file (loaded with siteharvest.site.load_site); the
numbers themselves are checked against the library in tests/test_app_study.py.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from playwright.sync_api import Page, expect

from siteharvest.site import load_site

pytestmark = pytest.mark.e2e

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "sample_sites").glob("*.toml"))
FIRST = load_site(SAMPLES[0])


def open_tab(page: Page, label: str) -> None:
    page.locator(".sh-tab", has_text=label).click()


def test_what_it_takes_tab(watched_page: Page, artifacts: Path):
    page = watched_page
    open_tab(page, "What it takes")
    view = page.locator("#sh-fig-sizing")
    expect(view.locator(".heatmaplayer image, .heatmaplayer .hm").first).to_be_attached()
    expect(view.locator(".g-ytitle").first).to_contain_text("[")  # a unit on each axis
    expect(view.locator(".g-xtitle").first).to_contain_text("[")
    words = page.locator("#sh-sizing-text")
    expect(words).to_contain_text(f"the target of at most {FIRST.run.target_deficit_days}.")
    expect(words).to_contain_text("Fastest sustainable reporting")
    expect(page.locator("#sh-sizing-target")).to_have_value(str(FIRST.run.target_deficit_days))
    page.wait_for_timeout(400)  # let plotly finish drawing before the picture
    page.locator(".sh-tabs-wrap").screenshot(path=str(artifacts / "view-sizing.png"))
    target = page.locator("#sh-sizing-target")
    target.fill("30")
    target.press("Enter")
    expect(words).to_contain_text(f"tried here; the spot's own is {FIRST.run.target_deficit_days}")
    expect(view.locator(".annotation-text", has_text="target: at most 30")).to_be_attached()


def test_weather_risk_tab(watched_page: Page, artifacts: Path):
    page = watched_page
    open_tab(page, "Weather risk")
    expect(page.locator("#sh-fig-risk .barlayer .point").first).to_be_attached()
    expect(page.locator("#sh-fig-risk-all .barlayer .point").first).to_be_attached()
    expect(page.locator("#sh-fig-risk .g-xtitle")).to_contain_text("[days/yr]")
    expect(page.locator(".sh-risk tbody tr")).to_have_count(len(FIRST.source) + 1)
    expect(page.locator(".sh-risk caption")).to_contain_text("200 resampled years")
    page.wait_for_timeout(400)
    page.locator(".sh-tabs-wrap").screenshot(path=str(artifacts / "view-risk.png"))
    years = page.locator("#sh-risk-years")
    years.fill("5")
    years.press("Enter")
    expect(page.locator("#sh-risk-msg")).to_contain_text("years: a whole number from 20 to 1000")
    years.fill("50")
    years.press("Enter")
    expect(page.locator(".sh-risk caption")).to_contain_text("50 resampled years")
    expect(page.locator("#sh-risk-msg")).to_be_empty()


def test_report_pdf_download(watched_page: Page, tmp_path: Path, artifacts: Path):
    page = watched_page
    button = page.get_by_role("button", name="Download report (PDF)")
    with page.expect_download(timeout=90_000) as info:
        button.click()
        expect(page.locator("#sh-report-busy")).to_contain_text("Preparing the report")
        expect(button).to_be_disabled()
        page.screenshot(path=str(artifacts / "report-busy.png"), clip={"x": 0, "y": 0, "width": 1440, "height": 120})
    download = info.value
    assert download.suggested_filename == f"{SAMPLES[0].stem}-report.pdf"
    saved = tmp_path / download.suggested_filename
    download.save_as(saved)
    assert saved.read_bytes().startswith(b"%PDF")
    expect(button).to_be_enabled()
    expect(page.locator("#sh-report-busy")).to_be_empty()
    expect(page.locator("#sh-report-msg")).to_be_empty()


def test_portfolio_report_html_download(watched_page: Page, tmp_path: Path, artifacts: Path):
    page = watched_page
    page.locator(".sh-tab", has_text="Portfolio").click()
    button = page.get_by_role("button", name="Download the portfolio report as HTML")
    with page.expect_download(timeout=120_000) as info:
        button.click()
        expect(page.locator("#sh-portfolio-busy")).to_contain_text("Preparing the portfolio report")
        expect(button).to_be_disabled()
        page.locator(".sh-portfolio-report").screenshot(path=str(artifacts / "portfolio-report-busy.png"))
    download = info.value
    assert download.suggested_filename == "portfolio-report.html"
    saved = tmp_path / download.suggested_filename
    download.save_as(saved)
    html = saved.read_text(encoding="utf-8")
    assert "Spots ranked by their best source" in html
    for sample in SAMPLES:  # every loaded spot is in it, each under its own site file's name
        assert sample.name in html
    expect(button).to_be_enabled()
    expect(page.locator("#sh-portfolio-busy")).to_be_empty()
    expect(page.locator("#sh-portfolio-msg")).to_be_empty()

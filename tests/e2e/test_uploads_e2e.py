"""Uploads and file names in headless Chromium, as a user and as a hostile user would try them.

A site file naming the server's files is opened from the page: the page says it cannot read them, and
nothing of the file, nor any folder of the server, reaches the browser. A site opened together with its
weather file is assessed on that file. Every reply the page receives is read for server paths.
"""

from __future__ import annotations

from pathlib import Path

import pvlib
import pytest
from playwright.sync_api import Page, expect
from siteharvest_app.bundled import SAMPLE_SITES
from siteharvest_app.uploads import upload_store

pytestmark = pytest.mark.e2e

ROOT = Path(__file__).resolve().parents[2]
ROOF = (SAMPLE_SITES / "roof-parapet.toml").read_text(encoding="utf-8")


def with_weather_file(name: str) -> str:
    head, tail = ROOF.split("[weather]", 1)
    return head + f'[weather]\nfile = "{name}"\n\n[node]' + tail.split("[node]", 1)[1]


def test_site_naming_server_files_is_refused_and_nothing_leaks(watched_page: Page, artifacts: Path):
    page = watched_page
    replies: list[str] = []
    page.on("response", lambda r: replies.append(r.text()) if "_dash-" in r.url and r.ok else None)
    targets = ("/etc/passwd", "../../../../../../../../etc/hostname", str(ROOT / "pyproject.toml"))
    for target in targets:
        page.locator("#sh-site-upload input[type=file]").set_input_files(files=[{
            "name": "attack.toml", "mimeType": "application/toml",
            "buffer": with_weather_file(target).encode("utf-8")}])
        expect(page.locator("#sh-site-upload-msg")).to_contain_text("Opened attack.toml")
        expect(page.locator("#sh-site-upload-msg")).to_contain_text("open it together with the site file")
        status = page.locator(".sh-status")
        expect(status).to_contain_text("files on the server are not read")
        expect(status).not_to_contain_text("root:")
    page.screenshot(path=str(artifacts / "upload-attack-refused.png"))
    page.wait_for_timeout(300)
    assert replies, "the page's replies were read"
    text = "\n".join(replies).replace("\\/", "/")
    for target in targets:  # the names the user typed come back in the message, as typed
        text = text.replace(target, "NAME")
    for secret in ("root:x:", "[build-system]", str(ROOT) + "/", str(upload_store().root), str(SAMPLE_SITES)):
        assert secret not in text


def test_site_opened_with_its_weather_file_uses_it(watched_page: Page):
    page = watched_page
    tmy = (Path(pvlib.__file__).parent / "data" / "723170TYA.CSV").read_bytes()
    page.locator("#sh-site-upload input[type=file]").set_input_files(files=[
        {"name": "roof-copy.toml", "mimeType": "application/toml",
         "buffer": with_weather_file("weather/station-year.csv").encode("utf-8")},
        {"name": "station-year.csv", "mimeType": "text/csv", "buffer": tmy}])
    expect(page.locator("#sh-site-upload-msg")).to_contain_text("Opened roof-copy.toml")
    expect(page.locator("#sh-site-upload-msg")).not_to_contain_text("open it together")
    expect(page.locator(".sh-status-ok")).to_contain_text("station-year.csv")
    expect(page.locator(".sh-table")).to_be_visible()


def test_an_upload_too_large_to_send_is_said_where_the_user_looks(page: Page, app_url: str):
    page.goto(app_url)
    expect(page.locator(".sh-table")).to_be_visible()
    name_before = page.locator(".sh-status-name").inner_text()
    page.locator("#sh-weather-upload input[type=file]").set_input_files(files=[{
        "name": "huge.csv", "mimeType": "text/csv", "buffer": b"0," * 12_500_000}])  # 25 MB
    problem = page.locator("#sh-problem")
    expect(problem).to_contain_text("too much to send at once")
    expect(problem).to_be_in_viewport()
    expect(page.locator(".sh-status-name")).to_have_text(name_before)
    page.get_by_role("button", name="Dismiss").click()
    expect(problem).to_have_text("")


@pytest.mark.parametrize("case", ["table for a preset name", "deep nesting", "5000-digit number"])
def test_a_hostile_site_file_gets_one_line_in_the_page(watched_page: Page, case: str):
    page = watched_page
    text = {"table for a preset name": ROOF.replace('chemistry = "li-ion"', "chemistry = { a = 1 }"),
            "deep nesting": "a = " + "[" * 2000 + "]" * 2000,
            "5000-digit number": ROOF.replace("latitude_deg = ", "latitude_deg = " + "7" * 5000 + " # ", 1)}[case]
    assert text != ROOF
    before = page.locator(".sh-status-name").inner_text()
    page.locator("#sh-site-upload input[type=file]").set_input_files(files=[{
        "name": "hostile.toml", "mimeType": "application/toml", "buffer": text.encode("utf-8")}])
    message = page.locator("#sh-site-upload-msg")
    expect(message).to_contain_text("hostile.toml")
    expect(message).to_contain_text("expected")
    assert "\n" not in message.inner_text() and "Traceback" not in message.inner_text()
    expect(page.locator(".sh-status-name")).to_have_text(before)
    expect(page.locator("#sh-problem")).to_have_text("")


def test_a_reload_keeps_the_edits_and_a_new_spot_can_be_made(watched_page: Page):
    page = watched_page
    name = page.locator("#sh-editor input[name='spot.name']")
    name.fill("Edited before a reload")
    name.press("Enter")
    expect(page.locator(".sh-status-name")).to_have_text("Edited before a reload")
    page.reload()
    expect(page.locator(".sh-status-name")).to_have_text("Edited before a reload")
    page.get_by_role("button", name="New blank spot").click()
    expect(page.locator(".sh-status-name")).to_contain_text("new spot")
    page.get_by_role("button", name="Duplicate this spot").click()
    expect(page.locator(".sh-status-name")).to_contain_text("(copy)")

"""The dashboard in a real browser: open, edit, upload, download, every view on screen.

Expected texts come from the sample site files themselves (loaded with siteharvest.site.load_site)
or from what the page showed before the action.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from playwright.sync_api import Page, expect
from siteharvest_app.callbacks import saved_filename
from siteharvest_app.tables import summary_rows

from siteharvest.assess import assess
from siteharvest.metrics import INSUFFICIENT, NEVER_STARTS, VERDICTS
from siteharvest.site import dump_site, load_site, parse_site

pytestmark = pytest.mark.e2e

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "sample_sites").glob("*.toml"))
FIRST = load_site(SAMPLES[0])
SOLAR = next(p for p in SAMPLES if any(s.kind == "solar" for s in load_site(p).source))
SOLAR_SPEC = load_site(SOLAR)
SOLAR_INDEX = next(i for i, s in enumerate(SOLAR_SPEC.source) if s.kind == "solar")
TABS = [("Sources side by side", "#sh-fig-sources"), ("Year at a glance", "#sh-fig-year"),
        ("Deficit calendar", "#sh-fig-calendar"), ("Worst week", "#sh-fig-week"), ("Portfolio", "#sh-portfolio-table")]


def choose_spot(page: Page, name: str) -> None:
    page.locator("#sh-spot-picker").click()
    page.get_by_role("option", name=name, exact=True).click()
    expect(page.locator(".sh-status-name")).to_have_text(name)


def test_opens_on_a_sample_spot_and_shows_every_view(watched_page: Page, artifacts: Path):
    page = watched_page
    expect(page.locator(".sh-status-name")).to_have_text(FIRST.spot.name)
    expect(page.locator(".sh-table tbody tr")).to_have_count(len(FIRST.source) + 1)
    expect(page.locator("#sh-editor input[name='spot.latitude_deg']")).to_have_value(f"{FIRST.spot.latitude_deg:g}")
    page.screenshot(path=str(artifacts / "overview.png"))
    for label, selector in TABS:
        page.locator(".sh-tab", has_text=label).click()
        view = page.locator(selector)
        expect(view).to_be_visible()
        if selector != "#sh-portfolio-table":
            expect(view.locator(".main-svg").first).to_be_visible()
            expect(view.locator(".g-ytitle").first).to_contain_text("[")  # a unit on the axis
        else:
            expect(view.locator(".ag-row .ag-cell[col-id='spot']")).to_have_count(len(SAMPLES))
        page.wait_for_timeout(300)  # let plotly finish drawing before the picture
        page.locator(".sh-tabs-wrap").screenshot(path=str(artifacts / f"view-{label.split()[0].lower()}.png"))
    page.evaluate("window.scrollTo(0, 0)")
    box = page.locator(".sh-editor-pane").bounding_box()
    page.screenshot(path=str(artifacts / "editor.png"), clip=box)


def grid_column(page: Page, column: str) -> list[str]:
    """The texts of one portfolio column, top to bottom as shown (the grid may keep its rows in another DOM order).

    A cell covered by a spanning cell of its row reads as ''.
    """
    return page.evaluate(
        """(col) => [...document.querySelectorAll('#sh-portfolio-table .ag-center-cols-container .ag-row')]
              .sort((a, b) => Number(a.getAttribute('row-index')) - Number(b.getAttribute('row-index')))
              .map(r => r.querySelector(`.ag-cell[col-id="${col}"]`)?.innerText.trim() ?? '')""", column)


def test_portfolio_lists_every_spot_sorts_and_opens_the_one_clicked(watched_page: Page, artifacts: Path):
    page = watched_page
    # a spot whose weather file is missing: it loads, but cannot be assessed
    source = SAMPLES[-1]
    original = load_site(source)
    broken_name = "Spot with a missing weather file"
    text = source.read_text(encoding="utf-8")
    text = text.replace(f'name = "{original.spot.name}"', f'name = "{broken_name}"', 1)
    text = text.replace(f'bundled = "{original.weather.bundled}"', 'file = "weather/missing.epw"', 1)
    assert broken_name in text and "missing.epw" in text
    page.locator("#sh-site-upload input[type=file]").set_input_files(files=[{
        "name": "broken-spot.toml", "mimeType": "application/toml", "buffer": text.encode("utf-8")}])
    expect(page.locator("#sh-site-upload-msg")).to_contain_text("Opened")
    page.locator(".sh-tab", has_text="Portfolio").click()
    grid = page.locator("#sh-portfolio-table")
    spots = grid.locator(".ag-row .ag-cell[col-id='spot']")
    expect(spots).to_have_count(len(SAMPLES) + 1)
    names = [load_site(p).spot.name for p in SAMPLES]
    # each spot cell: the spot's name, and under it its site file
    shown = [cell.splitlines() for cell in grid_column(page, "spot")]
    assert sorted(lines[0] for lines in shown) == sorted([*names, broken_name])
    assert sorted(lines[-1] for lines in shown) == sorted([*(p.name for p in SAMPLES), "broken-spot.toml"])
    broken_row = grid.locator(".ag-row", has=page.locator(".ag-cell[col-id='spot']", has_text=broken_name))
    expect(broken_row.locator(".ag-cell[col-id='verdict']")).to_contain_text("could not assess")
    expect(broken_row.locator(".ag-cell[col-id='verdict']")).to_contain_text("missing.epw")
    expect(broken_row.locator(".ag-cell[col-id='best']")).to_have_text("—")
    grid.screenshot(path=str(artifacts / "portfolio-broken-spot.png"))
    # its message spans the verdict, number and all-together columns: not squeezed into one narrow column
    for column in ("deficit_days", "first_wake_h", "energy_wh", "demand_uw", "together"):
        expect(broken_row.locator(f".ag-cell[col-id='{column}']")).to_have_count(0)
    expect(broken_row.locator(".ag-cell[col-id='spot'] .sh-grid-spot-file")).to_have_text("broken-spot.toml")
    # sorted by energy: as numbers, not as text (the broken spot has none: its message covers the column)
    page.locator(".ag-header-cell[col-id='energy_wh'] .ag-header-cell-label").click()
    expect(grid.locator(".ag-header-cell[col-id='energy_wh']")).to_have_attribute("aria-sort", "ascending")
    shown = [t for t in grid_column(page, "energy_wh") if t]
    assert len(shown) == len(SAMPLES)
    values = [float(t.replace(",", "")) for t in shown]
    assert values == sorted(values)
    grid.screenshot(path=str(artifacts / "portfolio-sorted.png"))
    # sorted by verdict: best first by severity, not alphabetically; a spot that could not be assessed last
    page.locator(".ag-header-cell[col-id='verdict'] .ag-header-cell-label").click()
    expect(grid.locator(".ag-header-cell[col-id='verdict']")).to_have_attribute("aria-sort", "ascending")
    verdicts = grid_column(page, "verdict")
    severity = [*(w for _, w in VERDICTS), INSUFFICIENT, NEVER_STARTS]
    ranks = [severity.index(v) if v in severity else len(severity) for v in verdicts]
    assert ranks == sorted(ranks) and verdicts[-1].startswith("could not assess")
    assert len(set(ranks)) >= 3  # the samples hold several verdicts: the order is tested, not assumed
    # clicking a spot's row (after sorting) opens that spot
    target = SOLAR_SPEC.spot.name
    grid.locator(".ag-row .ag-cell[col-id='spot']", has_text=target).click()
    expect(page.locator(".sh-status-name")).to_have_text(target)
    expect(page.locator("#sh-spot-picker")).to_contain_text(target)
    # and clicking the broken one opens it too, saying why it cannot be simulated
    grid.locator(".ag-row .ag-cell[col-id='spot']", has_text="broken-spot.toml").click()
    expect(page.locator(".sh-status")).to_contain_text("cannot be simulated")
    # from the keyboard: the focus moves to a neighbouring row, Space opens its spot
    order = [cell.splitlines()[0] for cell in grid_column(page, "spot")]
    at = order.index(broken_name)
    step, neighbour = ("ArrowDown", order[at + 1]) if at + 1 < len(order) else ("ArrowUp", order[at - 1])
    page.keyboard.press(step)
    page.keyboard.press("Space")
    expect(page.locator(".sh-status-name")).to_have_text(neighbour)


def expected_energy(spec, tilt: float | None = None) -> str:
    """The energy cell the summary table must show for the solar source (same formatting as the app)."""
    if tilt is not None:
        data = spec.model_dump(mode="json", exclude_none=True)
        data["source"][SOLAR_INDEX]["tilt_deg"] = tilt
        spec = parse_site(data, base_dir=SOLAR.parent)
    else:
        spec = load_site(SOLAR)
    rows, _ = summary_rows(assess(spec))
    return rows[SOLAR_INDEX]["annual_energy"]


def test_changing_the_tilt_changes_the_numbers(watched_page: Page, artifacts: Path):
    page = watched_page
    choose_spot(page, SOLAR_SPEC.spot.name)
    row = page.locator(".sh-table tbody tr").nth(SOLAR_INDEX)
    energy = row.locator("td.sh-col-annual_energy")
    before = expected_energy(SOLAR_SPEC)
    expect(energy).to_have_text(before)
    tilt = page.locator(f"#sh-editor input[name='source.{SOLAR_INDEX}.tilt_deg']")
    old_tilt = SOLAR_SPEC.source[SOLAR_INDEX].tilt_deg
    expect(tilt).to_have_value(f"{old_tilt:g}")
    new_tilt = 5.0 if old_tilt > 30 else 85.0
    after = expected_energy(SOLAR_SPEC, new_tilt)
    assert after != before
    tilt.fill(f"{new_tilt:g}")
    tilt.press("Enter")
    expect(energy).to_have_text(after)
    expect(tilt).to_have_value(f"{new_tilt:g}")
    # a value out of bounds: message beside it, results keep the last good spot
    tilt.fill("120")
    tilt.press("Enter")
    message = page.locator(f"[id*='source.{SOLAR_INDEX}.tilt_deg'][id*='sh-field-msg']")
    expect(message).to_contain_text("less than or equal to 90")
    expect(tilt).to_have_value("120")
    expect(energy).to_have_text(after)
    message.scroll_into_view_if_needed()
    page.screenshot(path=str(artifacts / "bad-value.png"))


def test_malformed_weather_upload_keeps_the_inputs(watched_page: Page, artifacts: Path):
    page = watched_page
    latitude = page.locator("#sh-editor input[name='spot.latitude_deg']")
    before_lat = latitude.input_value()
    checked = page.locator("#sh-editor input[type=radio]:checked").first
    before_choice = checked.evaluate("e => e.value")
    status = page.locator(".sh-status")
    expect(status).to_contain_text(FIRST.spot.name)
    weather_before = page.locator(".sh-status-ok span").nth(1).inner_text()
    page.locator("#sh-weather-upload input[type=file]").set_input_files(files=[{
        "name": "broken-weather.csv", "mimeType": "text/csv",
        "buffer": b"time,ghi_w_m2\n2025-01-01 00:00,10\n2025-01-01 01:00,not a number\n"}])
    expect(page.locator("#sh-weather-upload-msg")).to_contain_text("broken-weather.csv")
    expect(page.locator("#sh-weather-upload-msg")).to_contain_text("expected")
    expect(latitude).to_have_value(before_lat)
    expect(page.locator("#sh-editor input[type=radio]:checked").first).to_have_value(before_choice)
    expect(page.locator(".sh-status-ok span").nth(1)).to_have_text(weather_before)
    expect(status).not_to_contain_text("broken-weather")
    page.evaluate("window.scrollTo(0, 0)")
    page.screenshot(path=str(artifacts / "bad-weather-upload.png"), clip=page.locator(".sh-editor-pane").bounding_box())


def test_site_file_download_and_load_back(watched_page: Page, tmp_path: Path):
    page = watched_page
    with page.expect_download() as info:
        page.get_by_role("button", name="Save as site file").click()
    download = info.value
    assert download.suggested_filename == saved_filename(FIRST.spot.name)  # named after the spot
    saved = tmp_path / download.suggested_filename
    download.save_as(saved)
    text = saved.read_text(encoding="utf-8")
    assert text == dump_site(FIRST)
    page.locator("#sh-site-upload input[type=file]").set_input_files(str(saved))
    expect(page.locator("#sh-site-upload-msg")).to_contain_text("Opened")
    expect(page.locator("#sh-spot-picker")).to_contain_text(FIRST.spot.name)
    page.locator("#sh-spot-picker").click()
    expect(page.get_by_role("option", name=FIRST.spot.name, exact=True)).to_have_count(2)
    page.keyboard.press("Escape")
    with page.expect_download() as again:
        page.get_by_role("button", name="Save as site file").click()
    second = tmp_path / "again.toml"
    again.value.save_as(second)
    assert second.read_text(encoding="utf-8") == text

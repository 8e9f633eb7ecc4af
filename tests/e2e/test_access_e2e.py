"""Access in a real browser: every control reached and used from the keyboard, an automated WCAG 2.1 AA check
(the axe-core engine from the npm registry, installed once under ``.cache/axe``), and the page at phone, small
laptop, laptop and desktop widths with no sideways scrolling.

The expected names (tab labels, editor group titles) come from the dashboard's own modules.
"""

from __future__ import annotations

import json
import shutil
import subprocess
from collections.abc import Iterator
from pathlib import Path

import pytest
from playwright.sync_api import Browser, Page, expect
from served import record_problems
from siteharvest_app import ids
from siteharvest_app.fieldspec import group_titles

pytestmark = pytest.mark.e2e

ROOT = Path(__file__).resolve().parents[2]
AXE_DIR = ROOT / ".cache" / "axe"
AXE_JS = AXE_DIR / "node_modules" / "axe-core" / "axe.min.js"
TAB_LABELS = ["Sources side by side", "Year at a glance", "Deficit calendar", "Worst week", "What it takes",
              "Weather risk", "Portfolio"]
MAX_PRESSES = 400  # the whole page, top to bottom, is far fewer stops than this with the sample spots
WIDTHS = [390, 1024, 1280, 1920]
WCAG_AA = ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa"]
SETTLED = "!document.querySelector('[data-dash-is-loading=true]')"  # no callback of the first load still running


def _open(browser: Browser, url: str, width: int = 1440, height: int = 900) -> Iterator[Page]:
    """A fresh page at one window size, with console errors, page errors and requests off this machine checked.

    The page's content security policy is bypassed only so that the checker's script can be added to it.
    """
    context = browser.new_context(viewport={"width": width, "height": height}, bypass_csp=True)
    page = context.new_page()
    problems = record_problems(page)
    page.goto(url)
    expect(page.locator(".sh-table")).to_be_visible()
    page.wait_for_function(SETTLED)
    try:
        yield page
    finally:
        context.close()
    assert problems == []


@pytest.fixture
def open_page(browser: Browser, app_url: str) -> Iterator[Page]:
    yield from _open(browser, app_url)


@pytest.fixture(scope="session")
def axe_script() -> Path:
    """axe-core's browser script; installed from the npm registry once when missing (``scripts/setup --browser``
    does the same in CI)."""
    if not AXE_JS.exists():
        npm = shutil.which("npm")
        if npm is None:
            pytest.skip("npm is not installed: cannot install axe-core for the accessibility check")
        AXE_DIR.mkdir(parents=True, exist_ok=True)
        done = subprocess.run([npm, "install", "--no-save", "--no-audit", "--no-fund", "--prefix", str(AXE_DIR),
                               "axe-core@4"], capture_output=True, text=True, timeout=300)
        if done.returncode != 0 or not AXE_JS.exists():
            pytest.skip(f"could not install axe-core from the npm registry: {done.stderr.strip()[-400:]}")
    return AXE_JS


# --- keyboard -----------------------------------------------------------------------------------------------

FOCUS = """() => {
  const e = document.activeElement;
  if (!e || e === document.body) { return {kind: "none"}; }
  const group = e.closest("details.sh-group");
  let key = null;
  if (group) { try { key = JSON.parse(group.id).key; } catch (err) { key = null; } }
  return {kind: e.getAttribute("role") === "tab" ? "tab" : e.tagName.toLowerCase(), id: e.id,
          text: (e.textContent || "").trim().slice(0, 80), group: key,
          summary: e.tagName === "SUMMARY" && e.parentElement === group,
          skip: e.classList.contains("sh-skip"), grid: !!e.closest(".sh-grid")};
}"""


def focused(page: Page) -> dict:
    return page.evaluate(FOCUS)


def tab_until(page: Page, wanted, limit: int = MAX_PRESSES) -> tuple[dict, int]:
    """Press Tab until the focused element satisfies ``wanted``; the element and the number of presses."""
    for presses in range(1, limit + 1):
        page.keyboard.press("Tab")
        here = focused(page)
        if wanted(here):
            return here, presses
    raise AssertionError(f"not reached within {limit} presses of Tab")


def source_group_keys(page: Page) -> list[str]:
    """The editor groups that hold a source of the spot shown (their title carries a count of sources)."""
    return page.evaluate("""() => Array.from(document.querySelectorAll("details.sh-group"))
      .filter(g => g.querySelector(":scope > summary .sh-badge")).map(g => JSON.parse(g.id).key)""")


def test_tab_from_the_top_reaches_every_part_of_the_page(open_page: Page):
    page = open_page
    sources = source_group_keys(page)
    assert sources and "store" in group_titles()
    first = focused(page)
    assert first["kind"] == "none"
    page.keyboard.press("Tab")
    assert focused(page)["skip"], "the first stop is the skip link"
    wanted = {"picker", "source group", "store group", *TAB_LABELS}
    reached: dict[str, int] = {}
    presses = 1
    while wanted - reached.keys():
        assert presses < MAX_PRESSES, f"not reached within {MAX_PRESSES} presses: {sorted(wanted - reached.keys())}"
        page.keyboard.press("Tab")
        presses += 1
        here = focused(page)
        if here["id"] == ids.SPOT_PICKER:
            reached.setdefault("picker", presses)
        if here["summary"] and here["group"] in sources:
            reached.setdefault("source group", presses)
        if here["summary"] and here["group"] == "store":
            reached.setdefault("store group", presses)
        if here["kind"] == "tab" and here["text"] in TAB_LABELS:
            reached.setdefault(here["text"], presses)
    # in page order: the header, then the editor, then the views
    assert reached["picker"] < reached["source group"] < reached["store group"] < reached[TAB_LABELS[0]]
    print(f"presses of Tab to reach each part: {json.dumps(reached)}")

    # the focus is on the last tab, Portfolio: Enter shows it
    assert focused(page)["text"] == "Portfolio"
    page.keyboard.press("Enter")
    expect(page.get_by_role("tab", name="Portfolio")).to_have_attribute("aria-selected", "true")
    expect(page.locator(f"#{ids.PORTFOLIO_TABLE} .ag-row").first).to_be_visible()
    # and the grid is reached from there
    here, _ = tab_until(page, lambda f: f["grid"], limit=30)
    assert here["grid"]


def test_skip_link_moves_to_the_results(open_page: Page):
    page = open_page
    page.keyboard.press("Tab")
    expect(page.locator(".sh-skip")).to_be_focused()
    expect(page.locator(".sh-skip")).to_be_in_viewport()
    page.keyboard.press("Enter")
    here, _ = tab_until(page, lambda f: f["kind"] != "none", limit=5)
    inside = page.evaluate("document.querySelector('.sh-results').contains(document.activeElement)")
    assert inside, f"after the skip link, Tab lands in the results (landed on {here})"


def test_tabs_switch_with_enter_space_and_arrows(open_page: Page):
    page = open_page
    tablist = page.get_by_role("tablist")
    expect(tablist).to_have_count(1)
    expect(tablist.get_by_role("tab")).to_have_count(len(TAB_LABELS))
    first = page.get_by_role("tab", name=TAB_LABELS[0])
    expect(first).to_have_attribute("aria-selected", "true")
    first.focus()
    page.keyboard.press("ArrowRight")
    year = page.get_by_role("tab", name=TAB_LABELS[1])
    expect(year).to_be_focused()
    page.keyboard.press(" ")
    expect(year).to_have_attribute("aria-selected", "true")
    expect(first).to_have_attribute("aria-selected", "false")
    expect(page.locator(f"#{ids.FIG_YEAR}")).to_be_visible()
    page.keyboard.press("End")
    expect(page.get_by_role("tab", name="Portfolio")).to_be_focused()
    page.keyboard.press("Home")
    expect(first).to_be_focused()
    page.keyboard.press("ArrowLeft")
    expect(page.get_by_role("tab", name="Portfolio")).to_be_focused()
    page.keyboard.press("Enter")
    expect(page.locator(f"#{ids.PORTFOLIO_TABLE}")).to_be_visible()


def test_editor_groups_open_and_close_by_keyboard(open_page: Page):
    page = open_page
    store = page.locator("details.sh-group", has=page.locator(":scope > summary", has_text=group_titles()["store"]))
    was_open = store.evaluate("d => d.open")
    store.locator(":scope > summary").focus()
    page.keyboard.press("Enter")
    expect(store).to_have_js_property("open", not was_open)
    page.keyboard.press(" ")
    expect(store).to_have_js_property("open", was_open)


def test_uploads_open_the_file_chooser_from_the_keyboard(open_page: Page):
    page = open_page
    # one listener for the whole test keeps the browser's file choosers caught between the steps
    opened = []
    page.on("filechooser", lambda chooser: opened.append(chooser))
    place = page.locator("details.sh-group", has=page.locator(":scope > summary",
                                                             has_text=group_titles()["place"]))
    if not place.evaluate("d => d.open"):
        place.locator(":scope > summary").click()
    areas = [(page.get_by_role("button", name="Open site files…", exact=True), True),  # the header's button
             (page.locator(f"#{ids.WEATHER_UPLOAD} input[type=file]"), False)]  # the editor's drop area
    for control, multiple in areas:
        for key in ("Enter", " "):
            control.focus()
            expect(control).to_be_focused()
            with page.expect_file_chooser() as chooser:
                page.keyboard.press(key)
            assert chooser.value.is_multiple() == multiple
    assert len(opened) == 4


# --- automated WCAG 2.1 AA check ------------------------------------------------------------------------------

def axe_violations(page: Page, script: Path) -> list[dict]:
    page.add_script_tag(path=str(script))
    result = page.evaluate("tags => axe.run(document, {runOnly: tags})", WCAG_AA)
    return [{"rule": v["id"], "impact": v["impact"], "help": v["help"],
             "where": [n["target"] for n in v["nodes"][:5]]} for v in result["violations"]]


@pytest.mark.parametrize("tab", ["main view", "What it takes", "Portfolio"])
def test_no_wcag_aa_violations(open_page: Page, axe_script: Path, tab: str):
    page = open_page
    if tab != "main view":
        page.get_by_role("tab", name=tab).click()
        expect(page.get_by_role("tab", name=tab)).to_have_attribute("aria-selected", "true")
    if tab == "Portfolio":
        expect(page.locator(f"#{ids.PORTFOLIO_TABLE} .ag-row").first).to_be_visible()
    if tab == "What it takes":
        expect(page.locator(f"#{ids.FIG_SIZING} .main-svg").first).to_be_visible()
    assert axe_violations(page, axe_script) == []


# --- widths ---------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("width", WIDTHS)
def test_page_fits_the_window_at_each_width(browser: Browser, app_url: str, artifacts: Path, width: int):
    for page in _open(browser, app_url, width=width, height=900):
        expect(page.locator(".sh-table")).to_be_visible()
        row = page.locator(".sh-table tbody tr").first
        row.scroll_into_view_if_needed()
        expect(row).to_be_in_viewport()
        page.evaluate("window.scrollTo(0, 0)")
        page.screenshot(path=str(artifacts / f"width-{width}.png"), full_page=True)
        sizes = page.evaluate("""() => ({page: document.documentElement.scrollWidth, window: window.innerWidth,
          editor: [document.querySelector('.sh-editor-pane').scrollWidth,
                   document.querySelector('.sh-editor-pane').clientWidth],
          table: document.querySelector('.sh-summary').getBoundingClientRect().right})""")
        assert sizes["page"] <= sizes["window"], f"the page scrolls sideways at {width} px: {sizes}"
        assert sizes["editor"][0] <= sizes["editor"][1], f"the editor scrolls sideways at {width} px: {sizes}"
        assert sizes["table"] <= sizes["window"], f"the results table's box is cut off at {width} px: {sizes}"

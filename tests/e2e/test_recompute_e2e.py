"""The results while they are recomputed, in a real browser: marked as updating from the edit to the last answer,
never shown as current meanwhile; and an edit answered by as few round trips as the change needs.

The answers are held back (Playwright's request routing) so the page's state in between can be looked at.
"""

from __future__ import annotations

import json
import re

import pytest
from playwright.sync_api import Page, Route, expect

pytestmark = pytest.mark.e2e
UPDATE = re.compile(r"/_dash-update-component(\?|$)")  # the page may add a query


def first_number_field(page: Page):
    name = page.evaluate("""() => [...document.querySelectorAll("#sh-editor input[name^='source.0.']")]
        .find(e => e.offsetParent && e.value.trim() !== '' && Number(e.value) > 0)?.name""")
    return page.locator(f"#sh-editor input[name='{name}']")


def test_results_are_marked_as_updating_until_the_last_answer(watched_page: Page):
    page = watched_page
    busy = page.locator(".sh-busy-line")
    results = page.locator("#sh-results")
    expect(busy).to_be_hidden()
    held: list[Route] = []
    page.route(UPDATE, lambda route: held.append(route), times=1)  # the edit's own request
    field = first_number_field(page)
    field.fill(f"{float(field.input_value()) * 1.07:.6g}")
    field.press("Enter")
    # the edit's answer is held: the old results are dimmed and said to be updating, for eyes and screen readers
    expect(busy).to_be_visible()
    expect(busy).to_have_text("Updating the results…")
    expect(results).to_have_attribute("aria-busy", "true")
    assert float(page.locator("#sh-results .sh-summary").evaluate("e => getComputedStyle(e).opacity")) < 0.6
    for _ in range(100):  # the held request reaches this test's side once the page has sent it
        if held:
            break
        page.wait_for_timeout(100)
    assert len(held) == 1
    held[0].continue_()  # the recompute it asks for then goes through unheld
    expect(busy).to_be_hidden()
    expect(results).to_have_attribute("aria-busy", "false")
    assert float(page.locator("#sh-results .sh-summary").evaluate("e => getComputedStyle(e).opacity")) == 1.0


def test_an_edit_is_answered_in_two_round_trips_and_hidden_views_are_not_computed(watched_page: Page):
    page = watched_page
    sent: list[str] = []
    page.on("request", lambda r: sent.append(json.loads(r.post_data)["output"]) if "_dash-update-component" in r.url
            else None)
    field = first_number_field(page)
    field.fill(f"{float(field.input_value()) * 1.05:.6g}")
    field.press("Enter")
    expect(page.locator(".sh-busy-line")).to_be_hidden()
    assert len(sent) == 2, sent  # the edit, then one answer with every result the open tab shows
    assert "sh-spots.data" in sent[0] and "sh-status.children" in sent[1]
    assert not any("sh-fig-year" in s or "sh-fig-sizing" in s or "rowData" in s for s in sent)
    # opening a view computes it then, for the spot as edited
    sent.clear()
    page.locator(".sh-tab", has_text="Year at a glance").click()
    expect(page.locator("#sh-fig-year .main-svg").first).to_be_visible()
    expect(page.locator(".sh-busy-line")).to_be_hidden()
    assert any("sh-fig-year" in s for s in sent)

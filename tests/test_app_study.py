"""The study views of the dashboard (what it takes, weather risk) and the report download, called as plain functions.

Expected values are the library's own results for the same spot (``siteharvest.sizing`` run on
``assess(load_site(...))``, not through the app's caches) or the bounds the views declare; no physics is
checked here.
"""

from __future__ import annotations

import base64
import contextvars
import copy
import hashlib
import io
import json
import shutil
from pathlib import Path
from types import SimpleNamespace
from typing import Any

import numpy as np
import pvlib
import pytest
from dash import no_update
from dash._callback_context import context_value
from dash._utils import AttributeDict
from dash.exceptions import PreventUpdate
from pypdf import PdfReader
from shared import BASE_SITE
from siteharvest_app import callbacks as cb
from siteharvest_app import callbacks_study as cs
from siteharvest_app import ids
from siteharvest_app.engine import assessment_for, load_records
from siteharvest_app.factory import create_app
from siteharvest_app.uploads import upload_store

from siteharvest.assess import COMBINED_ID, assess
from siteharvest.findings import bigger_store_misses, interval_text
from siteharvest.site import load_site, parse_site
from siteharvest.sizing import report_interval, sizing_map, weather_risk

ROOT = Path(__file__).resolve().parents[1]

# A panel and a warm pipe on a seeded synthetic year (the pipe is a heat source: outages act on it).
STUDY_SITE = BASE_SITE.replace('name = "test spot"', 'name = "study check spot"').replace(
    "[[source]]", "[run]\ntarget_deficit_days = 2\n\n[[source]]", 1) + """
[[source]]
id = "pipe"
kind = "thermoelectric"
[source.hot_side]
mode = "constant"
surface_c = 70
"""

needs_chromium = pytest.mark.skipif(shutil.which("chromium") is None and not Path("/usr/bin/chromium").exists(),
                                    reason="the report needs Chromium")


@pytest.fixture
def study(site_file):
    """(spots, key, path) for the study spot."""
    path = site_file(STUDY_SITE, "study.toml")
    spots, errors = load_records([path])
    assert errors == []
    return spots, next(iter(spots)), path


def text_of(component: Any) -> str:
    """All the text inside a Dash component tree (or a list of them)."""
    if component is None or component is no_update:
        return ""
    if isinstance(component, str | int | float):
        return str(component)
    if isinstance(component, list | tuple):
        return "".join(text_of(c) for c in component)
    return text_of(getattr(component, "children", None))


def rows_of(table: Any) -> dict[str, list[str]]:
    """{case id: [cell texts]} of the risk table."""
    body = next(part for part in table.children if type(part).__name__ == "Tbody")
    return {getattr(row, "data-case"): [text_of(td) for td in row.children] for row in body.children}


# --------------------------------------------------------------------------------------------------
# what it takes


@pytest.mark.parametrize("task", [{}, {"current_ma": 20.0, "every_s": 10.0}], ids=["as-written", "busier"])
def test_sizing_view_draws_the_map_with_units_and_names_the_pick(study, task):
    spots, key, _ = study
    site = copy.deepcopy(spots[key]["site"])
    site["node"]["task"][0].update(task)  # busier: the pick moves off the map's edge
    spots = {key: {**spots[key], "site": site}}
    fig, words, style = cs.sizing_view(ids.TAB_SIZING, "panel", 2, spots, key, {})
    assert style == cs.SHOWN
    assert "[cm²]" in fig.layout.yaxis.title.text and "[F]" in fig.layout.xaxis.title.text
    assert fig.data[0].type == "heatmap" and np.shape(fig.data[0].z) == (len(fig.data[0].y) - 1,
                                                                          len(fig.data[0].x) - 1)
    prep = assess(parse_site(copy.deepcopy(site))).prepared
    m = sizing_map(prep, "panel", n_harvester=cs.SIZING_STEPS, n_store=cs.SIZING_STEPS, max_deficit_days=2)
    text = text_of(words)
    assert "the target of at most 2." in text  # the spot's own target, no "tried here"
    assert m.pick is not None
    i, j = m.pick
    assert f"cell area {m.harvester_sizes[i]:.3g} cm²" in text
    assert f"supercapacitor capacitance {m.store_sizes[j]:.3g} F" in text
    assert ("edge of the map" in text) == m.pick_at_edge
    assert any(t.name.startswith("pick") for t in fig.data)
    iv = report_interval(prep, "panel", max_deficit_days=2)
    assert iv is not None and iv.shortest_every_s is not None
    # the task named as the report is varied, and named with why it was chosen
    assert f"'read and send' (the task named as the report) every {interval_text(iv.shortest_every_s)}" in text


def test_both_pick_wordings_are_covered(study):
    """The two cases above differ in where the pick sits (so both wordings are checked)."""
    spots, key, _ = study
    edges = []
    for task in ({}, {"current_ma": 20.0, "every_s": 10.0}):
        site = copy.deepcopy(spots[key]["site"])
        site["node"]["task"][0].update(task)
        m = sizing_map(assess(parse_site(site)).prepared, "panel", n_harvester=cs.SIZING_STEPS,
                       n_store=cs.SIZING_STEPS, max_deficit_days=2)
        edges.append(m.pick_at_edge)
    # the map widens until its frontier lies inside it, so neither pick sits on the edge any more
    assert edges == [False, False]


def test_another_target_moves_the_pick(study):
    spots, key, _ = study
    _, words, _ = cs.sizing_view(ids.TAB_SIZING, "panel", 365, spots, key, {})
    text = text_of(words)
    # with 365 days allowed every cell that wakes within the study passes: the pick is the least harvester
    # that does, and the words say whether it sits at the map's edge exactly when it does
    assert "tried here; the spot's own is 2" in text
    m, _ = cs.sizing_study(assessment_for(spots[key], None), spots[key], None, "panel", 365)
    assert m is not None and m.pick is not None and np.isfinite(m.first_wake_hours[m.pick])
    assert ("edge of the map" in text) == m.pick_at_edge
    _, words, _ = cs.sizing_view(ids.TAB_SIZING, "panel", 0, spots, key, {})
    assert "the target of at most 0 (tried here" in text_of(words)
    fig, words, style = cs.sizing_view(ids.TAB_SIZING, "panel", 3.5, spots, key, {})
    assert fig is no_update and style is no_update and "whole number" in text_of(words)


def test_nothing_passes_and_all_together(study):
    spots, key, _ = study
    site = copy.deepcopy(spots[key]["site"])
    site["node"]["task"][0]["current_ma"] = 500.0  # 75 mW on average: far more than a few cm² of cell give
    site["node"]["task"][0]["every_s"] = 1.0
    heavy = {key: {**spots[key], "site": site}}
    _, words, style = cs.sizing_view(ids.TAB_SIZING, "panel", 0, heavy, key, {})
    assert "Nothing in this map meets the target" in text_of(words) and style == cs.SHOWN
    _, words, style = cs.sizing_view(ids.TAB_SIZING, COMBINED_ID, 2, spots, key, {})
    assert style == cs.HIDDEN and "choose a single source" in text_of(words)
    assert "all sources together" in text_of(words) and "Fastest sustainable reporting" in text_of(words)


def test_sizing_runs_only_while_open_and_is_memoised(study, monkeypatch):
    spots, key, _ = study
    calls: list[tuple[str, int]] = []

    def counted(prep, source_id, **kw):
        calls.append((source_id, kw["max_deficit_days"]))
        return sizing_map(prep, source_id, **kw)

    monkeypatch.setattr(cs, "sizing_map", counted)
    for tab in (ids.TAB_SOURCES, ids.TAB_RISK, ids.TAB_PORTFOLIO, None):
        with pytest.raises(PreventUpdate):
            cs.sizing_view(tab, "panel", 2, spots, key, {})
    assert calls == []
    cs.sizing_view(ids.TAB_SIZING, "panel", 1, spots, key, {})
    cs.sizing_view(ids.TAB_SIZING, "panel", 1, spots, key, {})
    assert calls == [("panel", 1)]
    cs.sizing_view(ids.TAB_SIZING, "panel", 4, spots, key, {})  # another target
    site = copy.deepcopy(spots[key]["site"])
    site["source"][0]["tilt_deg"] = 60.0  # another spot content
    cs.sizing_view(ids.TAB_SIZING, "panel", 4, {key: {**spots[key], "site": site}}, key, {})
    assert calls == [("panel", 1), ("panel", 4), ("panel", 4)]


def test_target_input_follows_the_spot(study):
    spots, key, _ = study
    assert cs.sync_target(key, spots, None) == (2, [key, 2])
    with pytest.raises(PreventUpdate):  # a target typed by hand stays while the spot's own is unchanged
        cs.sync_target(key, spots, [key, 2])
    site = copy.deepcopy(spots[key]["site"])
    site["run"]["target_deficit_days"] = 5
    assert cs.sync_target(key, {key: {**spots[key], "site": site}}, [key, 2]) == (5, [key, 5])


def test_a_spot_that_cannot_be_simulated_explains_in_both_views(study):
    spots, key, _ = study
    site = copy.deepcopy(spots[key]["site"])
    site["weather"] = {"file": "nowhere.csv"}
    broken = {key: {**spots[key], "site": site}}
    _, words, _ = cs.sizing_view(ids.TAB_SIZING, "panel", 2, broken, key, {})
    assert "cannot be simulated" in text_of(words) and "nowhere.csv" in text_of(words)
    table, *_ = cs.risk_view(ids.TAB_RISK, "panel", 50, 1, 0, 3, broken, key, {})
    assert "nowhere.csv" in text_of(table)


def test_bigger_store_doing_worse_is_spotted():
    def grid(rows):
        dd = np.array(rows)
        return SimpleNamespace(deficit_days=dd, first_wake_hours=np.full(dd.shape, 24.0), target_deficit_days=1)

    assert bigger_store_misses(grid([[9, 0, 0, 5], [9, 9, 0, 0]]))  # passes, then misses with more store
    assert not bigger_store_misses(grid([[9, 1, 0, 0], [9, 9, 9, 9]]))
    assert not bigger_store_misses(grid([[9, 9], [9, 9]]))


# --------------------------------------------------------------------------------------------------
# weather risk


def test_risk_view_matches_the_library_for_the_same_seed(study):
    spots, key, path = study
    table, fig, fig_all, style, message, note = cs.risk_view(ids.TAB_RISK, "panel", 60, 5, 0, 3, spots, key, {})
    assert message == "" and style == {}
    risk = weather_risk(assess(load_site(path)).prepared, years=60, seed=5)
    rows = rows_of(table)
    assert set(rows) == {"panel", "pipe", COMBINED_ID}
    for case, cells in rows.items():
        s = risk.summary(case)
        assert cells[2:5] == [cs.fmt_days(s["p50"]), cs.fmt_days(s["p90"]), cs.fmt_days(s["p99"])]
        assert cells[5] == cs.fmt_chance(s["chance_any"])
    assert "panel" in fig.layout.title.text and "all sources together" in fig_all.layout.title.text
    assert "[days/yr]" in fig.layout.xaxis.title.text and "[count]" in fig.layout.yaxis.title.text
    assert sum(fig.data[0].y) == 60  # every resampled year is in the histogram
    assert "pipe" in note  # the outages act on the heat source


def test_outages_act_on_the_heat_source(study):
    spots, key, path = study
    table, *_ = cs.risk_view(ids.TAB_RISK, "pipe", 40, 3, 6.0, 5.0, spots, key, {})
    rows = rows_of(table)
    risk = weather_risk(assess(load_site(path)).prepared, years=40, seed=3, outage_rate_per_year=6.0,
                        outage_mean_days=5.0)
    assert rows["pipe"][3] == cs.fmt_days(risk.summary("pipe")["p90"])
    assert risk.summary("pipe")["mean"] > 0  # six week-long stops a year leave the pipe's node dark some days


def test_risk_inputs_out_of_bounds_keep_the_last_result(study):
    spots, key, _ = study
    for years, seed, rate, days, words in ((10, 1, 0, 3, "years"), (1001, 1, 0, 3, "years"), (None, 1, 0, 3, "years"),
                                           (50, -1, 0, 3, "seed"), (50, 1.5, 0, 3, "seed"),
                                           (50, 1, -1, 3, "outages"), (50, 1, 0, 0, "mean outage length")):
        out = cs.risk_view(ids.TAB_RISK, "panel", years, seed, rate, days, spots, key, {})
        assert out[:4] == (no_update,) * 4 and words in out[4], (years, seed, rate, days)
    with pytest.raises(PreventUpdate):
        cs.risk_view(ids.TAB_SIZING, "panel", 50, 1, 0, 3, spots, key, {})


def test_all_together_chosen_shows_one_figure(study):
    spots, key, _ = study
    table, fig, _, style, _, _ = cs.risk_view(ids.TAB_RISK, COMBINED_ID, 30, 1, 0, 3, spots, key, {})
    assert style == {"display": "none"} and "all sources together" in fig.layout.title.text
    chosen = [r for r in next(p for p in table.children if type(p).__name__ == "Tbody").children
              if "sh-row-chosen" in (r.className or "")]
    assert [getattr(r, "data-case") for r in chosen] == [COMBINED_ID]


# --------------------------------------------------------------------------------------------------
# report


def decoded(download: dict[str, Any]) -> bytes:
    assert download["base64"] is True
    return base64.b64decode(download["content"])


@needs_chromium
def test_report_pdf_of_the_current_spot(study):
    spots, key, _ = study
    download, message = cs.download_report(1, 0, key, spots, {}, trigger=(ids.REPORT_PDF_BUTTON, 1))
    assert message == ""
    assert download["filename"] == "study-report.pdf" and download["type"] == "application/pdf"
    assert decoded(download).startswith(b"%PDF")


@needs_chromium
def test_report_html_has_the_spot_and_its_uploaded_weather(study):
    spots, key, _ = study
    text = (Path(pvlib.__file__).parent / "data" / "723170TYA.CSV").read_text(encoding="utf-8", errors="replace")
    data = "data:text/csv;base64," + base64.b64encode(text.encode()).decode()
    session = "report-session-" + "b" * 20
    spots, msg, _, _ = cb.upload_weather(data, "station.csv", key, spots, session, 0)
    assert msg == ""
    site = copy.deepcopy(spots[key]["site"])
    site["spot"]["name"] = "edited study spot"  # the current values, not the file on disk
    spots = {key: {**spots[key], "site": site}}
    download, message = cs.download_report(0, 2, key, spots, session, trigger=(ids.REPORT_HTML_BUTTON, 2))
    assert message == "" and download["filename"] == "study-report.html"
    html = decoded(download).decode("utf-8")
    assert "edited study spot" in html
    assert "station.csv" in html and hashlib.sha256(text.encode()).hexdigest() in html  # the upload, hashed
    assert str(upload_store().root) not in html and session not in html  # no server folders, no token


def test_report_failure_gives_one_line_and_no_download(study, monkeypatch, tmp_path):
    spots, key, _ = study
    monkeypatch.setenv("SITEHARVEST_CHROMIUM", str(tmp_path / "no-such-browser"))
    download, message = cs.download_report(1, 0, key, spots, {}, trigger=(ids.REPORT_PDF_BUTTON, 1))
    assert download is no_update
    assert message.startswith("The report could not be made:") and "Chromium" in message and "\n" not in message


@needs_chromium
def test_report_of_a_spot_with_a_missing_file_names_it():
    spots, _ = load_records([ROOT / "sample_sites"])
    key = next(k for k, r in spots.items() if any(s.get("spectrum_file") for s in r["site"]["source"]))
    site = copy.deepcopy(spots[key]["site"])
    src = next(s for s in site["source"] if s.get("spectrum_file"))
    src["spectrum_file"] = "surveys/missing.csv"
    download, message = cs.download_report(1, 0, key, {key: {**spots[key], "site": site}}, {},
                                           trigger=(ids.REPORT_PDF_BUTTON, 1))
    assert download is no_update and "surveys/missing.csv" in message
    assert "siteharvest-report-" not in message and "\n" not in message


def test_report_needs_a_click_and_reads_the_button_from_dash(study, monkeypatch, tmp_path):
    spots, key, _ = study
    with pytest.raises(PreventUpdate):
        cs.download_report(0, 0, key, spots, {}, trigger=(ids.REPORT_PDF_BUTTON, 0))
    with pytest.raises(PreventUpdate):
        cs.download_report(1, 0, key, spots, {})  # outside a Dash request: no trigger
    monkeypatch.setenv("SITEHARVEST_CHROMIUM", str(tmp_path / "no-such-browser"))

    def run():
        context_value.set(AttributeDict(triggered_inputs=[{"prop_id": f"{ids.REPORT_HTML_BUTTON}.n_clicks",
                                                           "value": 1}]))
        return cs.download_report(0, 1, key, spots, {})

    download, message = contextvars.copy_context().run(run)
    assert download is no_update and "Chromium" in message


@needs_chromium
def test_portfolio_report_ranks_every_loaded_spot_and_lists_one_that_cannot_be_studied(monkeypatch):
    # the checks are the report's own contract (a cover ranking the spots, a spot that cannot be studied
    # listed with its error); small studies keep the test quick
    monkeypatch.setattr(cs, "REPORT_SIZING_STEPS", 5)
    monkeypatch.setattr(cs, "REPORT_RISK_YEARS", 6)
    spots, _ = load_records([ROOT / "sample_sites"])
    key = next(iter(spots))
    broken = copy.deepcopy(spots[key])
    broken["site"]["spot"]["name"] = "Spot with a missing weather file"
    broken["site"]["weather"] = {"file": "weather/missing.epw", "file_format": "auto"}
    spots = {**spots, "broken": {**broken, "file": "broken-spot.toml"}}
    download, message = cs.download_portfolio_report(1, 0, spots, {}, trigger=(ids.PORTFOLIO_PDF_BUTTON, 1))
    assert message == ""
    assert download["filename"] == "portfolio-report.pdf" and download["type"] == "application/pdf"
    pdf = decoded(download)
    cover = " ".join(PdfReader(io.BytesIO(pdf)).pages[0].extract_text().split())
    assert "Spots ranked by their best source" in cover and "5 (4 studied, 1 with errors)" in cover
    for record in spots.values():
        if record is not spots["broken"]:
            assert record["site"]["spot"]["name"][:20] in cover
    assert "broken-spot.toml" in cover and "weather/missing.epw" in cover
    assert "siteharvest-report-" not in cover  # no server folders


def test_portfolio_report_needs_a_click_and_spots_and_says_why_it_failed(study, monkeypatch, tmp_path):
    spots, _, _ = study
    with pytest.raises(PreventUpdate):
        cs.download_portfolio_report(0, 0, spots, {}, trigger=(ids.PORTFOLIO_PDF_BUTTON, 0))
    with pytest.raises(PreventUpdate):
        cs.download_portfolio_report(1, 0, {}, {}, trigger=(ids.PORTFOLIO_PDF_BUTTON, 1))
    with pytest.raises(PreventUpdate):
        cs.download_portfolio_report(1, 0, spots, {})  # outside a Dash request: no trigger
    monkeypatch.setenv("SITEHARVEST_CHROMIUM", str(tmp_path / "no-such-browser"))
    download, message = cs.download_portfolio_report(0, 1, spots, {}, trigger=(ids.PORTFOLIO_HTML_BUTTON, 1))
    assert download is no_update
    assert message.startswith("The report could not be made:") and "Chromium" in message and "\n" not in message


# --------------------------------------------------------------------------------------------------
# wiring


def test_wiring_of_the_study_views(site_file):
    app = create_app([site_file(STUDY_SITE, "study.toml")])
    client = app.server.test_client()
    layout = json.dumps(client.get("/_dash-layout").get_json())
    for component_id in (ids.FIG_SIZING, ids.FIG_RISK, ids.REPORT_PDF_BUTTON, ids.REPORT_HTML_BUTTON,
                         ids.TAB_SIZING, ids.TAB_RISK, "Download report (PDF)"):
        assert component_id in layout
    deps = client.get("/_dash-dependencies").get_json()
    outputs = {d["output"]: d for d in deps}
    report = next(d for out, d in outputs.items() if ids.REPORT_DOWNLOAD in out)
    assert report.get("running") and report["prevent_initial_call"]  # buttons off and a line while it runs
    portfolio = next(d for out, d in outputs.items() if ids.PORTFOLIO_DOWNLOAD in out)
    assert portfolio.get("running") and portfolio["prevent_initial_call"]
    assert {"id": ids.PORTFOLIO_PDF_BUTTON, "property": "n_clicks"} in portfolio["inputs"]
    assert "Download the portfolio report (PDF)" in layout
    sizing = next(d for out, d in outputs.items() if ids.FIG_SIZING in out)
    assert {"id": ids.TABS, "property": "value"} in sizing["inputs"]  # computes only when its tab is open
    risk = next(d for out, d in outputs.items() if ids.FIG_RISK + "." in out)
    assert {"id": ids.TABS, "property": "value"} in risk["inputs"]


def test_day_and_chance_formats():
    assert [cs.fmt_days(v) for v in (0.0, 136.00000000000003, 116.5, 12.25)] == ["0", "136", "116.5", "12.2"]
    assert [cs.fmt_chance(v) for v in (0.0, 0.005, 0.37, 1.0)] == ["0%", "0.5%", "37%", "100%"]


def test_a_count_knob_reads_as_a_count(study):
    spots, key, path = study
    _, words, _ = cs.sizing_view(ids.TAB_SIZING, "pipe", 2, spots, key, {})
    m = sizing_map(assess(load_site(path)).prepared, "pipe", n_harvester=cs.SIZING_STEPS, n_store=cs.SIZING_STEPS,
                   max_deficit_days=2)
    assert m.pick is not None
    n = int(m.harvester_sizes[m.pick[0]])
    assert f"{n} thermoelectric module{'' if n == 1 else 's'} with" in text_of(words)
    assert "modules 1 module" not in text_of(words)


def test_the_sizing_view_varies_the_chosen_size_and_task(study):
    """The pickers list the kind's declared sizes and the spot's tasks; the view passes both to the library."""
    spots, key, _ = study
    knobs, knob, tasks, task = cs.study_choices(key, "panel", spots, None, None)
    assert knobs[0]["value"] == "" and knob == "" and task == ""
    names = [t["name"] for t in spots[key]["site"]["node"]["task"]]
    assert [o["value"] for o in tasks[1:]] == names
    _, _, _, kept = cs.study_choices(key, "panel", spots, None, names[0])
    assert kept == names[0]
    _, _, _, dropped = cs.study_choices(key, "panel", spots, None, "a task no longer there")
    assert dropped == ""
    _, words, _ = cs.sizing_view(ids.TAB_SIZING, "panel", 0, spots, key, None, task=names[0])
    assert f"'{names[0]}' (the task chosen)" in text_of(words)

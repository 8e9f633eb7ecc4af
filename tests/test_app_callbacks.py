"""Dashboard callbacks called as plain functions, and the wiring through Flask's test client.

No browser here (see tests/e2e/). Expected values are either the library's own results for the same
spot (the dashboard must show what ``assess`` computes) or the model bounds declared in the site-file
models; no physics is checked here.
"""

from __future__ import annotations

import base64
import contextvars
import copy
import json
import re
import warnings
from pathlib import Path

import numpy as np
import pvlib
import pytest
from dash import no_update
from dash._callback_context import context_value
from dash._utils import AttributeDict
from dash.exceptions import PreventUpdate
from plotly.utils import PlotlyJSONEncoder
from served import callback_body
from shared import BASE_SITE
from siteharvest_app import callbacks as cb
from siteharvest_app import figures, ids
from siteharvest_app.bundled import SAMPLE_SITES
from siteharvest_app.editor import render_editor
from siteharvest_app.engine import ASSESSMENTS, assessment_for, load_records, site_dict
from siteharvest_app.factory import create_app
from siteharvest_app.tables import VERDICT_ORDER, verdict_rank
from siteharvest_app.uploads import upload_store

from siteharvest.assess import assess
from siteharvest.findings import STATUSES, headline
from siteharvest.site import load_site, parse_site
from siteharvest.sources.solar import TECHNOLOGY_PRESETS

ROOT = Path(__file__).resolve().parents[1]
SESSION = "test-session-" + "a" * 20  # a page's token, as the page makes them

FOUR_SOURCES = BASE_SITE.replace('name = "test spot"', 'name = "four-source check spot"').replace(
    "utc_offset_h = 1\n", "utc_offset_h = 1\nmounting_height_m = 2.5\n") + """
[[source]]
id = "lamp-cell"
kind = "indoor_light"
area_cm2 = 20

[[source]]
id = "pipe"
kind = "thermoelectric"
[source.hot_side]
mode = "constant"
surface_c = 70

[[source]]
id = "pump"
kind = "vibration"
preset = "healthy-pump-50hz"
"""


@pytest.fixture
def four(site_file):
    """(spots, key) for a spot with four sources on a synthetic year."""
    spots, errors = load_records([site_file(FOUR_SOURCES, "four.toml")])
    assert errors == []
    return spots, next(iter(spots))


def msg_ids(*paths: str) -> list[dict[str, str]]:
    return [ids.field_msg_id(p) for p in paths]


def upload(text: str | bytes, mime: str = "text/plain") -> str:
    raw = text.encode() if isinstance(text, str) else text
    return f"data:{mime};base64," + base64.b64encode(raw).decode()


def edit(spots, key, path, role, value, *extra_msgs):
    return cb.edit_field([], msg_ids(path, *extra_msgs), key, spots, 0, trigger=(ids.field_id(path, role), value))


# --------------------------------------------------------------------------------------------------
# a value changes


def test_changing_the_tilt_gives_new_results(four):
    spots, key = four
    before = cb.recompute(spots, key, None, None)
    new_spots, messages, rev = edit(spots, key, "source.0.tilt_deg", "float", "80")
    assert messages[0] == ""
    assert rev is no_update  # a plain value: the editor is not rebuilt
    assert new_spots[key]["site"]["source"][0]["tilt_deg"] == 80.0
    assert spots[key]["site"]["source"][0]["tilt_deg"] == 45.0  # the old state is not mutated
    after = cb.recompute(new_spots, key, {}, None)
    panel_before = np.array(before[4].data[0].y, dtype=float)
    panel_after = np.array(after[4].data[0].y, dtype=float)
    assert not np.allclose(panel_before, panel_after)
    # the figure shows what the library computes for the same spot
    expected = assess(parse_site(copy.deepcopy(new_spots[key]["site"])))
    unit = after[4].layout.yaxis.title.text
    scale = {"[Wh]": 1.0, "[mWh]": 1e-3, "[µWh]": 1e-6, "[kWh]": 1e3}[re.search(r"\[[^\]]+\]", unit).group(0)]
    np.testing.assert_allclose(panel_after * scale, expected.sources[0].monthly_energy_wh, rtol=1e-9)


def test_summary_table_lists_every_source_and_all_together(four):
    spots, key = four
    status, table, cautions, notes, fig, options, value = cb.recompute(spots, key, None, None)
    assert "four-source check spot" in json.dumps(status.to_plotly_json(), default=str)
    assert "synthetic year" in json.dumps(notes[0].to_plotly_json(), default=str)  # Assessment.warnings
    assert [t.name for t in fig.data] == ["panel", "lamp-cell", "pipe", "pump", "node demand"]
    text = json.dumps(table.to_plotly_json(), default=str)
    for source_id in ("panel", "lamp-cell", "pipe", "pump", "all sources together"):
        assert source_id in text
    assert [o["value"] for o in options] == ["panel", "lamp-cell", "pipe", "pump", "all-sources"]
    assert value == "panel"
    # cautions for the fitted kinds, deferring to local codes and licensed practice
    ctext = json.dumps(cautions[0].to_plotly_json(), default=str) + json.dumps(cautions[1].to_plotly_json())
    for title in ("Hot surfaces", "Rotating machinery", "Work at height"):
        assert title in ctext
    assert "local codes" in ctext and "licensed" in ctext


# --------------------------------------------------------------------------------------------------
# bad values


def test_out_of_bounds_value_gives_a_message_and_keeps_the_spot(four):
    spots, key = four
    new_spots, messages, rev = edit(spots, key, "source.0.tilt_deg", "float", "95", "spot.name")
    assert new_spots is no_update and rev is no_update
    # SolarSource.tilt_deg is declared le=90
    assert "tilt_deg" in messages[0] and "90" in messages[0] and "95" in messages[0]
    assert messages[1] is no_update  # other messages are left alone


@pytest.mark.parametrize(("path", "role", "value", "words"), [
    ("source.0.tilt_deg", "float", "forty", "a number"),
    ("source.0.tilt_deg", "float", "", "a number"),
    ("source.0.conditioning.efficiency_curve", "pairs", "1, 0.3; 10", "pairs of numbers"),
    ("node.task.0.every_s", "float", "0", "greater than 0"),
    ("store.max_v", "float", "2", "cutoff_v must be below max_v"),
    ("node.task.0.hours", "text", "25-99", "hours"),
    ("source.1.cells_in_series", "int", "2.5", "a whole number"),
])
def test_unreadable_or_invalid_values_give_messages(four, path, role, value, words):
    spots, key = four
    new_spots, messages, _ = edit(spots, key, path, role, value)
    assert new_spots is no_update
    assert words in messages[0]
    assert messages[0].startswith("four.toml")


def test_fixing_a_value_clears_its_message(four):
    spots, key = four
    _, messages, _ = edit(spots, key, "store.capacitance_f", "float", "-1")
    assert messages[0]
    new_spots, messages, _ = edit(spots, key, "store.capacitance_f", "float", "2.5")
    assert messages[0] == "" and new_spots[key]["site"]["store"]["capacitance_f"] == 2.5


def test_unchanged_value_does_not_update(four):
    spots, key = four
    with pytest.raises(PreventUpdate):
        edit(spots, key, "source.0.tilt_deg", "float", "45")


def test_preset_change_brings_the_preset_values_and_rebuilds_the_editor(four):
    spots, key = four
    other = next(k for k in TECHNOLOGY_PRESETS if k != spots[key]["site"]["source"][0]["technology"])
    new_spots, messages, rev = edit(spots, key, "source.0.technology", "preset:solar-technology", other)
    assert messages[0] == "" and rev == 1
    src = new_spots[key]["site"]["source"][0]
    for field, value in TECHNOLOGY_PRESETS[other].items():
        assert src[field] == pytest.approx(value)


def test_store_kind_and_backup_cell(four):
    spots, key = four
    new_spots, messages, rev = edit(spots, key, "store.kind", "variant:kind", "rechargeable")
    assert messages[0] == "" and rev == 1
    assert new_spots[key]["site"]["store"]["kind"] == "rechargeable"
    new_spots, messages, rev = edit(new_spots, key, "store.backup", "toggle", ["on"])
    assert "backup" in new_spots[key]["site"]["store"]
    assert cb.recompute(new_spots, key, {}, None)[0] is not None


def test_adding_and_removing_items(four):
    spots, key = four
    add = ids.action_id("add-source:rf", "source")
    new_spots, rev, msg, patch = cb.edit_structure([1], key, spots, 0, trigger=(add, 1), open_groups={"place"})
    assert msg == "" and rev is no_update  # updated in place: no whole rebuild
    assert [s["kind"] for s in new_spots[key]["site"]["source"]][-1] == "rf"
    # the update replaces only the group that changed, and gives the editor a full rebuild would give
    ops = patch.to_plotly_json()["operations"]
    assert len(ops) == 1 and ops[0]["operation"] == "Assign"
    before = render_editor(spots[key]["site"], {}, {"place"})
    after = render_editor(new_spots[key]["site"], {}, {"place", before[ops[0]["location"][0]].id["key"]})
    patched = list(before)
    patched[ops[0]["location"][0]] = ops[0]["params"]["value"]
    as_json = lambda x: json.dumps(x, cls=PlotlyJSONEncoder, sort_keys=True)  # noqa: E731
    assert as_json(patched) == as_json(after)
    n = len(new_spots[key]["site"]["source"]) - 1
    assert f'"source.{n}"' in as_json(ops[0]["params"]["value"])
    add_task = ids.action_id("add-item:task", "node.task")
    new_spots, _, _, _ = cb.edit_structure([1], key, new_spots, 1, trigger=(add_task, 1))
    assert len(new_spots[key]["site"]["node"]["task"]) == 2
    remove = ids.action_id("remove", "node.task.0")
    new_spots, _, _, _ = cb.edit_structure([1], key, new_spots, 2, trigger=(remove, 1))
    assert [t["name"] for t in new_spots[key]["site"]["node"]["task"]] == ["new task"]


def test_removing_the_last_source_is_refused(site_file):
    spots, _ = load_records([site_file()])  # BASE_SITE: one source
    key = next(iter(spots))
    remove = ids.action_id("remove-source", "source.0")
    new_spots, rev, msg, _ = cb.edit_structure([1], key, spots, 0, trigger=(remove, 1))
    assert new_spots is no_update and rev is no_update
    assert "source" in msg


# --------------------------------------------------------------------------------------------------
# uploads and downloads


def test_malformed_weather_upload_gives_a_message_and_keeps_the_spot(four):
    spots, key = four
    bad = "time,ghi_w_m2\n2025-01-01 00:00,12\n2025-01-01 01:00,13\n"
    new_spots, message, note, rev = cb.upload_weather(upload(bad, "text/csv"), "site-weather.csv", key, spots,
                                                      SESSION, 0)
    assert new_spots is no_update and rev is no_update and note is no_update
    assert message.startswith("site-weather.csv") and "8760" in message
    binary = bytes(range(256)) * 4
    _, message, _, _ = cb.upload_weather(upload(binary, "application/octet-stream"), "w.epw", key, spots, SESSION, 0)
    assert "text file" in message


def test_weather_upload_is_used_and_parsed_from_the_store(four):
    spots, key = four
    text = (Path(pvlib.__file__).parent / "data" / "723170TYA.CSV").read_text(encoding="utf-8", errors="replace")
    new_spots, message, note, rev = cb.upload_weather(upload(text, "text/csv"), "station.csv", key, spots, SESSION, 0)
    assert message == "" and note.startswith("Weather from station.csv") and rev == 1
    record = new_spots[key]
    assert record["site"]["weather"] == {"file": "station.csv", "file_format": "auto"}
    assert upload_store().text(SESSION, record["files"]["station.csv"]) == text  # kept on the server
    a = assessment_for(record, SESSION)
    assert "station.csv" in a.prepared.weather_meta.source
    # the spot goes back to a synthetic year and then to the uploaded file again
    synth, _, _ = edit(new_spots, key, "weather.source", "variant:weather", "synthetic")
    assert "synthetic" in synth[key]["site"]["weather"]
    again, msgs, _ = edit(synth, key, "weather.source", "variant:weather", "file")
    assert msgs[0] == "" and again[key]["site"]["weather"]["file"] == "station.csv"


def test_choosing_file_weather_without_an_upload_explains(four):
    spots, key = four
    new_spots, messages, _ = edit(spots, key, "weather.source", "variant:weather", "file")
    assert new_spots is no_update and "upload" in messages[0]


def test_spectrum_upload(four):
    spots, key = four
    path = "source.3"
    ok = "frequency_hz,accel\n25,0.05\n50,0.9\n100,0.2\n"
    out = cb.upload_spectrum([upload(ok)], ["survey.csv"], [{"type": ids.SPECTRUM_MSG_TYPE, "path": path}], key,
                             spots, SESSION, 0, trigger=({"type": ids.SPECTRUM_UPLOAD_TYPE, "path": path}, upload(ok)))
    new_spots, messages, note, rev = out
    src = new_spots[key]["site"]["source"][3]
    assert src["spectrum_file"] == "survey.csv" and "preset" not in src and rev == 1
    assert messages == [""] and "m/s2" in note  # says what it assumed
    assert assessment_for(new_spots[key], SESSION).sources[3].annual_energy_wh >= 0
    bad = "frequency_hz,accel\n50,0.9\n25,0.05\n"
    out = cb.upload_spectrum([upload(bad)], ["bad.csv"], [{"type": ids.SPECTRUM_MSG_TYPE, "path": path}], key,
                             spots, SESSION, 0, trigger=({"type": ids.SPECTRUM_UPLOAD_TYPE, "path": path}, upload(bad)))
    assert out[0] is no_update and "increasing" in out[1][0] and out[1][0].startswith("bad.csv")


def test_site_file_download_then_upload_round_trips(four):
    spots, key = four
    changed, _, _ = edit(spots, key, "source.0.tilt_deg", "float", "62.5")
    download = cb.download_site(1, key, changed)
    assert download["filename"] == "four-source-check-spot.toml"  # after the spot, not the file it came from
    new_spots, new_key, message = cb.upload_site(upload(download["content"]), download["filename"], key, changed)
    assert new_key != key and "Opened" in message
    assert new_spots[new_key]["site"] == changed[key]["site"]
    assert cb.download_site(1, new_key, new_spots)["content"] == download["content"]


def test_bad_site_file_upload(four):
    spots, key = four
    text = FOUR_SOURCES.replace("tilt_deg = 45", "tilt_deg = 145")
    new_spots, new_key, message = cb.upload_site(upload(text), "steep.toml", key, spots)
    assert new_spots is no_update and new_key is no_update
    assert message.startswith("steep.toml") and "tilt_deg" in message


def test_a_spot_that_cannot_be_simulated_says_why(site_file):
    text = FOUR_SOURCES.replace("[weather.synthetic]", '[weather]\nfile = "weather/missing.epw"\n\n[weather.x]')
    text = text.replace("[weather.x]\nmonthly_clearness", "# monthly_clearness").replace("seed = 7", "")
    path = site_file(text, "gone.toml")
    spots, errors = load_records([path])
    assert errors == []
    key = next(iter(spots))
    status, table, cautions, notes, fig, options, value = cb.recompute(spots, key, None, None)
    assert cautions == [] and notes == []
    said = json.dumps(status.to_plotly_json(), default=str)
    assert "cannot be simulated" in said and "missing.epw" in said
    assert str(path.parent) not in said  # the file as the site file names it, no server folder
    assert table == [] and options == [] and value is None
    assert fig.layout.annotations[0].text.startswith("no results")
    assert cb.portfolio(ids.TAB_PORTFOLIO, spots, {})[0]["verdict"].startswith("could not assess")


def test_portfolio_lists_every_spot_with_its_best_source(four, site_file):
    spots, key = four
    base_spots, _ = load_records([site_file()])
    spots = {**spots, **{f"b-{k}": v for k, v in base_spots.items()}}
    with pytest.raises(PreventUpdate):
        cb.portfolio(ids.TAB_SOURCES, spots, {})
    rows = cb.portfolio(ids.TAB_PORTFOLIO, spots, {})
    assert [r["key"] for r in rows] == list(spots)
    a = assessment_for(spots[key], {})
    best = next(c for c in a.sources if c.id == headline(a).source.id)  # the library's pick
    assert rows[0]["best"] == best.id and rows[0]["deficit_days"] == best.deficit_days
    assert rows[0]["status"] in STATUSES and rows[0]["weather"]
    assert rows[1]["best"] == "panel"


def test_choosing_a_portfolio_row_opens_that_rows_spot_whatever_the_sort(four, site_file):
    spots, key = four
    base_spots, _ = load_records([site_file()])
    spots = {**spots, **{f"b-{k}": v for k, v in base_spots.items()}}
    rows = cb.portfolio(ids.TAB_PORTFOLIO, spots, {})
    assert all(isinstance(r[c], int | float) for r in rows for c in ("deficit_days", "energy_wh"))  # sortable
    for r in rows:  # verdicts sort best first: "self-sufficient" 0 ... "never starts" 4, not assessed 5
        assert r["verdict_rank"] == verdict_rank(r["verdict"]) and r["together_rank"] == verdict_rank(r["together"])
    other = rows[1]["key"]
    # the user sorted the grid so that the second spot now sits at the top and chose it (click or Space): the
    # grid hands over the chosen row's own data, so its place on screen does not matter; the selection is
    # cleared so that choosing the same row again later opens it again
    assert cb.open_from_portfolio([rows[1]]) == (other, [])
    assert cb.open_from_portfolio([rows[0]]) == (key, [])
    for nothing in (None, [], [{}], [{"key": ""}]):
        with pytest.raises(PreventUpdate):
            cb.open_from_portfolio(nothing)


def test_portfolio_grid_keeps_the_columns_and_sorts_numbers_as_numbers():
    from siteharvest_app.layout import _portfolio_table
    from siteharvest_app.tables import PORTFOLIO_COLUMNS

    with warnings.catch_warnings():
        warnings.simplefilter("error", DeprecationWarning)  # no deprecated table component any more
        grid = _portfolio_table()
    assert type(grid).__name__ == "AgGrid" and grid.id == ids.PORTFOLIO_TABLE
    assert grid.getRowId == "params.data.key"  # a click names the row's spot key, whatever the sort order
    defs = grid.columnDefs
    assert [(d.get("colId", d["field"]), d["headerName"]) for d in defs] == [(c["id"], c["name"])
                                                                          for c in PORTFOLIO_COLUMNS]
    # the verdict columns hold the verdict's rank, so they sort best first rather than alphabetically
    for d in defs:
        if d.get("colId") in ("verdict", "together"):
            assert d["field"] == f"{d['colId']}_rank" and d["cellDataType"] == "number"
            assert d["valueFormatter"]["function"] == f"params.data.{d['colId']}"  # the words are shown
    for d, c in zip(defs, PORTFOLIO_COLUMNS, strict=True):
        if c["type"] == "numeric":
            assert d["type"] == "numericColumn" and d["cellDataType"] == "number"  # right-aligned, numeric sort
            assert "ag-right-aligned-cell" in d["cellClass"]
        if "colId" not in d:
            assert "'—'" in d["valueFormatter"]["function"]  # missing values read as a dash
    spot = next(d for d in defs if d["field"] == "spot")
    assert spot["cellRenderer"] == "SpotWithFile" and spot["tooltipField"] == "file"  # the file under the name
    renderers = (ROOT / "assets" / "dashAgGridComponentFunctions.js").read_text(encoding="utf-8")
    assert "dagcomponentfuncs.SpotWithFile" in renderers and "props.data.file" in renderers
    assert grid.defaultColDef["sortable"] and not grid.defaultColDef["editable"]
    assert grid.defaultColDef["wrapHeaderText"] and grid.defaultColDef["autoHeaderHeight"]
    assert "pagination" not in grid.dashGridOptions and grid.dashGridOptions["domLayout"] == "autoHeight"
    # wired: the rows go to the grid's rowData; a cell click (with the rows) opens a spot
    wiring = create_app().callback_map
    assert any(f"{ids.PORTFOLIO_TABLE}.rowData" in k for k in wiring)
    opener_key, opener = next((k, v) for k, v in wiring.items() if f"{ids.SPOT_PICKER}.value" in k
                              and any(i["id"] == ids.PORTFOLIO_TABLE for i in v["inputs"]))
    assert opener["inputs"] == [{"id": ids.PORTFOLIO_TABLE, "property": "selectedRows"}]
    assert f"{ids.PORTFOLIO_TABLE}.selectedRows" in opener_key  # and clears the selection
    selection = grid.dashGridOptions["rowSelection"]
    assert selection["mode"] == "singleRow" and selection["enableClickSelection"]  # a click or Space chooses


def test_case_views_default_to_the_worst_week(four):
    spots, key = four
    year, calendar, week, caption = cb.case_views("lamp-cell", "worst", spots, key, {})
    a = assessment_for(spots[key], {})
    lamp = a.sources[1]
    assert "lamp-cell" in year.layout.title.text
    assert f"{lamp.deficit_days} deficit day" in calendar.layout.title.text
    start, why = figures.worst_week_start(lamp.node_on, lamp.unmet_j, lamp.into_store_w)
    assert why in caption
    assert week.data[0].x[0].date().timetuple().tm_yday == start + 1
    _, _, week10, _ = cb.case_views("lamp-cell", "63", spots, key, {})
    assert week10.data[0].x[0].date().timetuple().tm_yday == 64


def test_figures_have_axis_titles_with_units(four):
    spots, key = four
    a = assessment_for(spots[key], {})
    case = a.sources[0]
    built = [figures.sources_figure(a), figures.case_year_figure(a, case), figures.case_calendar_figure(case),
             figures.case_week_figure(a, case)[0]]
    unit = re.compile(r"\[[^\]]+\]")
    for fig in built:
        layout = fig.layout.to_plotly_json()
        titles = {k: ((v.get("title") or {}).get("text") or "") for k, v in layout.items()
                  if re.fullmatch(r"[xy]axis\d*", k)}
        y_titles = [t for k, t in titles.items() if k.startswith("y")]
        x_titles = [t for k, t in titles.items() if k.startswith("x") and t]  # shared x axes: the bottom one
        assert y_titles and x_titles
        for title in y_titles + x_titles:
            assert unit.search(title), (fig.layout.title.text, title)
        for trace in fig.data:
            if getattr(trace, "x", None) is not None and len([v for v in trace.x if v is not None]) == 0:
                continue  # legend-only markers
            assert trace.hovertemplate  # values on hover


def test_no_module_level_state_between_apps():
    a1, a2 = create_app(), create_app()
    assert a1 is not a2 and a1.server is not a2.server
    assert set(a1.callback_map) == set(a2.callback_map)
    assert len(a1.callback_map) >= 10


# --------------------------------------------------------------------------------------------------
# the wiring through Flask


def test_flask_wiring(site_file):
    app = create_app([site_file(FOUR_SOURCES, "four.toml")])
    client = app.server.test_client()
    page = client.get("/")
    assert page.status_code == 200
    html = page.get_data(as_text=True)
    assert "siteharvest" in html
    assert not re.search(r"""(src|href)=["']https?://""", html)  # nothing from a CDN
    layout = client.get("/_dash-layout")
    assert layout.status_code == 200 and layout.is_json
    text = json.dumps(layout.get_json())
    for component_id in (ids.SPOTS, ids.EDITOR, ids.SPOT_PICKER, ids.FIG_SOURCES, ids.PORTFOLIO_TABLE):
        assert component_id in text
    deps = client.get("/_dash-dependencies")
    assert deps.status_code == 200 and deps.is_json
    outputs = " ".join(d["output"] for d in deps.get_json())
    for needed in (ids.EDITOR, ids.SITE_DOWNLOAD, ids.FIG_YEAR, ids.PORTFOLIO_TABLE, ids.FIG_SOURCES):
        assert needed in outputs
    css = client.get("/assets/siteharvest.css")
    assert css.status_code == 200 and b"@import" not in css.data and b"http" not in css.data
    # one callback through the real endpoint
    spots = app.layout.children[0].data
    dep = next(d for d in deps.get_json() if f"{ids.SPOT_PICKER}.options" in d["output"])
    key = next(iter(spots))
    body = callback_body(dep, {f"{ids.SPOTS}.data": spots, f"{ids.SPOT_PICKER}.value": key}, f"{ids.SPOTS}.data")
    reply = client.post("/_dash-update-component", json=body)
    assert reply.status_code == 200
    assert "four-source check spot" in reply.get_data(as_text=True)


def test_field_callback_reads_the_trigger_from_dash(four):
    """The registered form (no trigger argument) reads the input that fired from dash.ctx."""
    spots, key = four
    fid = ids.field_id("source.0.tilt_deg", "float")

    def run():
        context_value.set(AttributeDict(triggered_inputs=[{"prop_id": json.dumps(fid, separators=(",", ":"))
                                                           + ".value", "value": "30"}]))
        return cb.edit_field(["30"], msg_ids("source.0.tilt_deg"), key, spots, 0)

    new_spots, messages, _ = contextvars.copy_context().run(run)
    assert new_spots[key]["site"]["source"][0]["tilt_deg"] == 30.0 and messages == [""]


def test_sample_sites_load_and_assess():
    spots, errors = load_records(None)
    assert errors == []
    assert len(spots) >= 1
    for record in spots.values():
        assert record["site"] == site_dict(load_site(SAMPLE_SITES / record["file"]))
        assert "base_dir" not in record and not any(str(ROOT) in str(v) for v in record.values())
    ASSESSMENTS.clear()


def test_editor_rebuild_and_spot_choice(four):
    spots, key = four
    editor, msg, note = cb.render_editor_cb(key, 3, spots, {})
    assert msg is no_update and note is no_update  # a rebuild of the same spot keeps its lines
    text = json.dumps([g.to_plotly_json() for g in editor], default=str)
    assert "source.3.peak.0.frequency_hz" in text and "Judging the year" in text
    # groups the user had opened stay open; the rest closed
    groups = [ids.group_id(k) for k in ("place", "mounting", "store")]
    editor, _, _ = cb.render_editor_cb(key, 4, spots, {}, [False, False, True], groups)
    shown = {json.loads(ids.dom_id(g.id))["key"]: g.open for g in editor}
    assert shown["store"] is True and shown["place"] is False
    assert cb.picker_options(spots) == [{"label": "four-source check spot", "value": key}]
    assert cb.open_from_portfolio([{"key": key, "spot": "four-source check spot"}]) == (key, [])
    with pytest.raises(PreventUpdate):
        cb.open_from_portfolio(None)


def test_verdict_ranks_run_from_best_to_worst():
    # the verdict words and their thresholds are the project's own (siteharvest.metrics); the order is
    # best first: no deficit, brief gaps, seasonal gaps, insufficient, never starts; a spot not assessed last
    assert VERDICT_ORDER == ["self-sufficient", "brief gaps", "seasonal gaps", "insufficient", "never starts"]
    assert [verdict_rank(v) for v in VERDICT_ORDER] == list(range(5))
    assert verdict_rank("could not assess: x.toml: file: expected a site file") == 5

"""The editor's field generation and the pure figure builders (no Dash callbacks, no browser).

Checks are against the site-file models themselves (every field gets an input; bounds come from
``siteharvest.fields.bounds_of``) and against arrays built in the test with a known answer.
"""

from __future__ import annotations

import copy
import datetime as dt
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from siteharvest_app import figures
from siteharvest_app.editor import render_editor
from siteharvest_app.engine import site_dict
from siteharvest_app.fieldspec import (
    REMOVE,
    EditProblem,
    apply_edit,
    controls_of,
    display_value,
    editor_groups,
    format_bounds,
    parse_value,
)

from siteharvest.fields import bounds_of
from siteharvest.site import parse_site, parse_site_text
from siteharvest.sources.solar import SolarSource

EVERY_KIND = """
[spot]
name = "every kind"
latitude_deg = 50.0
longitude_deg = 8.0
utc_offset_h = 1

[run]
install_date = "03-01"

[node]
[[node.task]]
name = "sense"
current_ma = 2.0
duration_ms = 10
every_s = 60
days = "weekdays"

[store]
kind = "rechargeable"
chemistry = "lifepo4"
[store.backup]
cell = "alkaline-aa"

[[source]]
id = "sun"
kind = "solar"
horizon = [[90, 10], [180, 5]]

[[source]]
id = "lamps"
kind = "indoor_light"
lamp_schedule = { hours = "07-19", days = "weekdays", off_dates = ["12-25"], shutdown_weeks = [32] }

[[source]]
id = "pipe"
kind = "thermoelectric"
hot_side = { mode = "schedule", process_on_c = 90, process_off_c = 35 }
[source.heat_sink]
resistance_k_w = 4.0

[[source]]
id = "motor"
kind = "vibration"
resonant_frequency_hz = 49
[[source.peak]]
frequency_hz = 50
accel = 0.1
accel_unit = "g"
measure = "peak"
drift_hz = 0.5

[[source]]
id = "beam"
kind = "rf"
"""


def leaf_paths(data, prefix=""):
    """Dotted paths of every value in a dumped site dict (lists of scalars or pairs are one value)."""
    if isinstance(data, dict):
        for key, value in data.items():
            yield from leaf_paths(value, f"{prefix}.{key}" if prefix else key)
    elif isinstance(data, list) and data and isinstance(data[0], dict):
        for i, item in enumerate(data):
            yield from leaf_paths(item, f"{prefix}.{i}")
    else:
        yield prefix


def test_every_field_of_the_site_file_has_an_input():
    site = site_dict(parse_site_text(EVERY_KIND))
    controls = controls_of(editor_groups(site))
    paths = {c.path for c in controls}
    for path in leaf_paths(site):
        name = path.rsplit(".", 1)[-1]
        if path.startswith("source.") and name == "kind" and path.count(".") == 2:
            continue  # a source's kind is fixed; the card is titled with it
        if path == "weather.file_format":
            continue  # the file format means nothing for a synthetic year (this spot's default weather)
        assert path in paths, path
    assert len(paths) == len(controls)  # one input per path
    assert {"weather.synthetic.monthly_clearness", "weather.synthetic.seed"} <= paths
    # a typical year shipped with pvlib: its name and the file format
    bundled = site_dict(parse_site_text(EVERY_KIND.replace("[run]", '[weather]\nbundled = "723170TYA.CSV"\n\n[run]')))
    bpaths = {c.path for c in controls_of(editor_groups(bundled))}
    assert {"weather.bundled", "weather.file_format"} <= bpaths
    assert not any(p.startswith("weather.synthetic") for p in bpaths)


def test_units_and_bounds_come_from_the_models():
    site = site_dict(parse_site_text(EVERY_KIND))
    controls = {c.path: c for c in controls_of(editor_groups(site))}
    tilt = controls["source.0.tilt_deg"]
    b = bounds_of(SolarSource, "tilt_deg")
    assert tilt.unit == b.unit == "deg"
    assert tilt.bounds == f"{b.low:g} … {b.high:g}"
    area = controls["source.0.area_cm2"]
    assert area.unit == "cm2" and area.bounds.startswith("> 0")  # declared gt=0
    assert controls["spot.latitude_deg"].bounds == "-90 … 90"
    assert controls["store.backup.capacity_mah"].unit == "mAh"
    assert controls["source.3.peak.0.accel_unit"].options == [("m/s2", "m/s2"), ("g", "g")]
    assert controls["source.1.lamp_schedule.off_dates"].value == "12-25"
    assert controls["source.0.horizon"].value == "90, 10; 180, 5"
    assert controls["source.2.hot_side.mode"].role == "variant:mode"
    assert controls["source.4.mode"].role == "choice"  # the RF source's own 'mode' is an ordinary field
    for c in controls.values():
        if c.role in ("float", "int"):
            assert c.bounds, c.path  # every number states its range
    assert format_bounds(SolarSource, "albedo")[1] == "0 … 1"


def test_editor_renders_for_every_kind():
    site = site_dict(parse_site_text(EVERY_KIND))
    groups = render_editor(site)
    text = str(groups)
    for title in ("Place and weather", "Mounting and sun", "Light indoors", "Heat", "Vibration", "RF beam",
                  "The node's tasks", "The store", "Judging the year"):
        assert title in text


def test_every_edit_of_a_rendered_value_validates_unchanged():
    """Sending back what each input shows gives the same spot (display and reading agree)."""
    site = site_dict(parse_site_text(EVERY_KIND))
    for c in controls_of(editor_groups(site)):
        if c.role in ("readonly",) or c.role.startswith(("variant:", "toggle")):
            continue
        candidate, _ = apply_edit(site, c.path, c.role, c.value)
        assert site_dict(parse_site(copy.deepcopy(candidate))) == site, c.path


@settings(max_examples=60, deadline=None)
@given(st.floats(min_value=-1e9, max_value=1e9, allow_nan=False, allow_infinity=False))
def test_numbers_read_back_as_shown(x):
    shown = display_value("float", x)
    assert math.isclose(parse_value("float", shown), x, rel_tol=1e-9, abs_tol=1e-300)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.floats(0.001, 1e6), st.floats(0, 1)), min_size=1, max_size=8))
def test_pairs_read_back_as_shown(pairs):
    back = parse_value("pairs", display_value("pairs", pairs))
    np.testing.assert_allclose(np.array(back), np.array(pairs), rtol=1e-9)


@pytest.mark.parametrize(("role", "raw", "expected"), [
    ("opt-float", "", REMOVE),
    ("opt-text", "  ", REMOVE),
    ("ints", "31, 32 ,", [31, 32]),
    ("words", "12-25, 01-01", ["12-25", "01-01"]),
    ("bool", ["on"], True),
    ("bool", [], False),
    ("num-or-word", "tracked", "tracked"),
    ("num-or-word", "2.5", 2.5),
    ("int", "4.0", 4),
])
def test_reading_typed_text(role, raw, expected):
    assert parse_value(role, raw) == expected


@pytest.mark.parametrize(("role", "raw"), [("float", "1,5"), ("float", "inf"), ("int", "2.5"), ("pairs", "1 2 3")])
def test_unreadable_text_is_an_edit_problem(role, raw):
    with pytest.raises(EditProblem):
        parse_value(role, raw)


# --------------------------------------------------------------------------------------------------
# figure builders


@settings(max_examples=60, deadline=None)
@given(st.floats(min_value=1e-9, max_value=1e5))
def test_si_scale_puts_values_between_1_and_1000(x):
    factor, unit = figures.si_scale(x, "W")
    assert 1 <= x / factor < 1000 or x < 1e-9 * 1000
    assert unit.endswith("W")


def test_worst_week_is_the_seven_days_with_most_dark_hours():
    on = np.ones(8760, dtype=bool)
    on[100 * 24: 103 * 24] = False  # 3 days dark from day 100
    on[200 * 24 + 5] = False  # one dark hour elsewhere
    start, why = figures.worst_week_start(on, np.zeros(8760), np.ones(8760))
    assert start == 98  # windows from day 96 to 100 hold all three dark days; the middle one is shown
    assert "72 h" in why
    harvest = np.ones(8760)
    harvest[300 * 24: 307 * 24] = 0.1  # the poorest week
    start, why = figures.worst_week_start(np.ones(8760, dtype=bool), np.zeros(8760), harvest)
    assert start == 300 and "least harvest" in why


def test_calendar_marks_exactly_the_deficit_days():
    mask = np.zeros(365, dtype=bool)
    mask[[0, 31, 59, 364]] = True  # 1 Jan, 1 Feb, 1 Mar, 31 Dec (2025 is not a leap year)
    fig = figures.deficit_calendar(mask, np.arange(365) % 24, "x")
    z = np.array(fig.data[0].z, dtype=float)
    assert np.nansum(z) == 4
    assert z[0, 0] == z[1, 0] == z[2, 0] == z[11, 30] == 1
    assert np.isnan(z[1, 29]) and np.isnan(z[3, 30])  # 30 Feb and 31 Apr do not exist
    assert np.count_nonzero(~np.isnan(z)) == 365
    assert "4 deficit days" in fig.layout.title.text


def test_year_heatmap_places_hours_and_days():
    e = np.arange(8760, dtype=float)
    fig = figures.year_heatmap(e, "x", cutoff_j=0.0, max_j=8760.0)
    z = np.array(fig.data[0].z, dtype=float)
    factor, _ = figures.si_scale(8760.0, "J")
    assert z.shape == (24, 365)
    assert z[5, 10] * factor == pytest.approx(10 * 24 + 5)
    assert fig.data[0].x[0] == dt.date(2025, 1, 1)


def test_monthly_figure_leaves_out_zero_months_on_the_log_axis():
    fig = figures.monthly_figure({"a": np.r_[0.0, np.ones(11)]}, np.full(12, 0.5))
    assert fig.data[0].y[0] is None and fig.layout.yaxis.type == "log"
    assert fig.data[-1].name == "node demand"


def test_week_figure_units():
    times = [dt.datetime(2025, 1, 1) + dt.timedelta(hours=h) for h in range(8760)]
    on = np.ones(8760, dtype=bool)
    on[30:40] = False
    fig = figures.week_figure(times, np.full(8760, 2e-3), np.full(8760, 5e-6), np.full(8760, 3.0), on, 0, "x",
                              cutoff_j=1.2)
    assert fig.layout.yaxis.title.text == "Power [mW] (log scale)"
    assert fig.layout.yaxis2.title.text == "Stored energy [J]"
    names = [t.name for t in fig.data]
    assert "node off" in names and "node cut-off" in names
    assert len(fig.data[0].x) == 7 * 24

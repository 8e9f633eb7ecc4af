"""Sizing-map and weather-risk figures: units on every axis, the marks a reader needs, and the maths of
the axes. Most maps are built by hand (the figures are pure functions of a SizingMap / WeatherRisk);
one comes from a real sizing study of a small synthetic spot.
"""

from __future__ import annotations

import math

import numpy as np
import plotly.graph_objects as go
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from siteharvest_app.figures_sizing import (
    cell_edges,
    integer_step,
    is_log_spaced,
    log_ticks,
    risk_histogram,
    size_axis_title,
    sizing_heatmap,
    unit_text,
)

from siteharvest.sizing import SizingMap, WeatherRisk, frontier_and_pick
from siteharvest.sources import SOURCE_KINDS


def make_map(dd: np.ndarray, *, kind: str = "solar", h_field: str = "area_cm2", h_unit: str = "cm2",
             h_sizes: np.ndarray | None = None, s_sizes: np.ndarray | None = None, target: int = 0) -> SizingMap:
    n_h, n_s = dd.shape
    hs = np.geomspace(1.0, 64.0, n_h) if h_sizes is None else h_sizes
    ss = np.geomspace(0.1, 3.2, n_s) if s_sizes is None else s_sizes
    front, pick = frontier_and_pick(dd <= target)
    knob = SOURCE_KINDS[kind].knob(h_field)   # as sizing_map fills them in: from the kind's record
    return SizingMap("panel", kind, h_field, h_unit, hs, float(hs[1]), "capacitance_f", "F", ss, float(ss[1]),
                     dd, np.full(dd.shape, 12.0), target, front, pick, harvester_label=knob.label,
                     smaller_is_more=knob.smaller_is_more)


def staircase(n_h: int = 7, n_s: int = 6) -> np.ndarray:
    """Deficit days falling with both sizes: passes (0) when i + j >= 6."""
    i, j = np.meshgrid(np.arange(n_h), np.arange(n_s), indexing="ij")
    return np.clip((6 - i - j) * 20, 0, 365).astype(float)


def traces_named(fig: go.Figure, start: str) -> list:
    return [t for t in fig.data if (t.name or "").startswith(start)]


def test_axis_titles_carry_units():
    fig = sizing_heatmap(make_map(staircase()))
    assert fig.layout.xaxis.title.text == "Supercapacitor capacitance [F]"
    assert fig.layout.yaxis.title.text == "Cell area [cm²]"
    bar = fig.data[0].colorbar.title.text
    assert "[days/yr]" in bar


def test_pick_and_frontier_traces_exist_and_sit_on_the_cells():
    m = make_map(staircase())
    fig = sizing_heatmap(m)
    (pick,) = traces_named(fig, "pick")
    i, j = m.pick
    assert (pick.x[0], pick.y[0]) == (m.store_sizes[j], m.harvester_sizes[i])
    # the pick is the smallest harvester that passes (row 1 passes from column 5: 1 + 5 >= 6), then the smallest store
    assert m.pick == (1, 5)
    (front,) = traces_named(fig, "frontier")
    assert len(front.x) == len(m.frontier) == 6  # one cell per row from i = 1 to 6
    assert list(front.y) == [m.harvester_sizes[a] for a, _ in sorted(m.frontier)]
    assert front.line.dash == "dot" and front.marker.symbol == "circle"  # line style, not colour alone
    (drawn,) = traces_named(fig, "as drawn")
    assert (drawn.x[0], drawn.y[0]) == (m.store_drawn, m.harvester_drawn)
    texts = [a.text for a in fig.layout.annotations]
    assert any(t.startswith("pick: 2 cm² + ") for t in texts)  # direct label: geomspace(1, 64, 7)[1] = 2
    assert "as drawn" in texts


def test_hover_gives_deficit_days_and_first_wake_per_cell():
    m = make_map(staircase())
    hover = sizing_heatmap(m).data[0].text
    assert "<b>120 deficit days</b>" in hover[0][0]          # (6 - 0 - 0) * 20
    assert "meets the target" in hover[6][5] and "first wake 12 h" in hover[6][5]


def test_no_passing_cell_says_so_and_draws_no_pick():
    m = make_map(np.full((4, 5), 365.0))
    fig = sizing_heatmap(m)
    assert m.pick is None and not traces_named(fig, "pick") and not traces_named(fig, "frontier")
    assert any("no combination in this map meets" in (a.text or "") for a in fig.layout.annotations)


def test_log_axes_for_log_spaced_sizes_and_linear_for_counts():
    fig = sizing_heatmap(make_map(staircase()))
    assert fig.layout.xaxis.type == "log" and fig.layout.yaxis.type == "log"
    # the axis range covers the outer cell edges (log10 of them on a log axis)
    edges = cell_edges(np.geomspace(0.1, 3.2, 6), log=True)
    assert fig.layout.xaxis.range == pytest.approx([math.log10(edges[0]), math.log10(edges[-1])])
    counts = make_map(staircase(8, 6), kind="thermoelectric", h_field="modules", h_unit="-",
                      h_sizes=np.arange(1.0, 9.0))
    fig = sizing_heatmap(counts)
    assert fig.layout.yaxis.type == "linear" and fig.layout.yaxis.dtick == 1
    assert fig.layout.yaxis.title.text == "Thermoelectric modules [count]"
    doubling = make_map(staircase(6, 6), kind="thermoelectric", h_field="modules", h_unit="-",
                        h_sizes=np.array([1.0, 2, 4, 8, 16, 32]))
    fig = sizing_heatmap(doubling)
    assert fig.layout.yaxis.type == "linear" and fig.layout.yaxis.dtick == 5  # whole modules, 1-2-5 ticks


def test_transmitter_distance_runs_closer_upwards():
    far_to_near = np.geomspace(10.0, 0.5, 7)
    m = make_map(staircase(), kind="rf", h_field="distance_m", h_unit="m", h_sizes=far_to_near)
    fig = sizing_heatmap(m)
    lo, hi = fig.layout.yaxis.range
    assert lo > hi  # reversed: the largest distance at the bottom
    assert fig.layout.yaxis.title.text.startswith("Distance from the transmitter [m]")


def test_real_sizing_map_of_a_small_spot(site_file):
    from siteharvest.assess import prepare
    from siteharvest.site import load_site
    from siteharvest.sizing import sizing_map

    prep = prepare(load_site(site_file()))
    m = sizing_map(prep, "panel", n_harvester=6, n_store=5)
    fig = sizing_heatmap(m)
    assert np.asarray(fig.data[0].z).shape == m.deficit_days.shape
    assert "[cm²]" in fig.layout.yaxis.title.text and "[F]" in fig.layout.xaxis.title.text
    assert bool(traces_named(fig, "pick")) == (m.pick is not None)


def make_risk(values: list[int] | np.ndarray) -> WeatherRisk:
    dd = np.asarray(values)
    return WeatherRisk(len(dd), 1, {"panel": dd}, np.zeros((len(dd), 365), dtype=int))


def test_risk_histogram_counts_every_year_and_marks_percentiles():
    rng = np.random.default_rng(3)
    values = rng.poisson(12, 400)
    fig = risk_histogram(make_risk(values), "panel")
    bars = [t for t in fig.data if isinstance(t, go.Bar)]
    assert sum(bars[0].y) == 400
    assert fig.layout.xaxis.title.text == "Deficit days in a resampled year [days/yr]"
    assert fig.layout.yaxis.title.text == "Resampled years [count]"
    marks = {t.name.split(" = ")[0]: t for t in fig.data if isinstance(t, go.Scatter)}
    for name, q in (("P50", 50), ("P90", 90), ("P99", 99)):
        if name in marks:  # two percentiles on one value share a mark
            assert marks[name].x[0] == pytest.approx(np.percentile(values, q))
    assert len({t.line.dash for t in marks.values()}) == len(marks)  # told apart by line style
    assert any("years with at least one deficit day" in a.text for a in fig.layout.annotations)


def test_risk_histogram_with_one_value_has_one_labelled_mark():
    fig = risk_histogram(make_risk([4] * 50), "panel")
    marks = [t for t in fig.data if isinstance(t, go.Scatter)]
    assert [t.name for t in marks] == ["P50 = P90 = P99 = 4 days"]
    assert any("100%" in a.text for a in fig.layout.annotations)


def test_units_as_printed():
    assert unit_text("cm2") == "cm²" and unit_text("-", integer=True) == "count" and unit_text("F") == "F"
    assert size_axis_title("proof_mass_g", "g") == "Proof mass [g]"


@settings(max_examples=60, deadline=None)
@given(st.floats(0.01, 100.0), st.floats(4.0, 1e4), st.integers(3, 40))
def test_geometric_sequences_are_log_spaced_and_their_edges_geometric(low, ratio, n):
    values = np.geomspace(low, low * ratio, n)
    assert is_log_spaced(values)
    assert not is_log_spaced(np.linspace(low, low * ratio, n)) or n == 3
    edges = cell_edges(values, log=True)
    assert len(edges) == n + 1 and np.all(np.diff(edges) > 0)
    assert np.all((edges[:-1] < values) & (values < edges[1:]))  # every centre inside its cell
    assert np.allclose(edges[1:-1], np.sqrt(values[:-1] * values[1:]))  # geometric midpoints


@settings(max_examples=60, deadline=None)
@given(st.floats(1e-3, 1e3), st.floats(1.5, 1e4))
def test_log_ticks_lie_in_range_on_the_one_two_five_steps(low, ratio):
    high = low * ratio
    ticks = log_ticks(low, high)
    assert all(low * 0.999 <= t <= high * 1.001 for t in ticks)
    for t in ticks:
        mantissa = t / 10 ** math.floor(math.log10(t) + 1e-9)
        assert round(mantissa, 6) in (1.0, 2.0, 5.0)


@given(st.floats(0.0, 1e5))
def test_integer_step_is_whole_and_gives_a_handful_of_ticks(span):
    step = integer_step(span)
    assert step >= 1 and float(step).is_integer()
    assert span / step <= 8 or step == 1

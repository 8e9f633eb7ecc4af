"""Figure builders for the sizing study and the weather risk: pure functions to plotly Figures.

No Dash here: the dashboard's sizing and weather-risk views and the report render the same builders.
Every axis names its unit. Colours come from the palette of :mod:`siteharvest_app.figures` (Okabe & Ito 2008 for
marks; cividis, Nuñez, Anderton & Renslow 2018, for the continuous deficit-day scale, whose lightness
rises steadily so that it also reads in greyscale); marks differ by shape and line style as well as
colour, and carry direct labels, so that a black-and-white print keeps their meaning.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass

import numpy as np
import plotly.graph_objects as go

from siteharvest.findings import NO_WAKE_TEXT, case_label
from siteharvest.sizing import SizingMap, WeatherRisk, meets_target
from siteharvest.sources import SOURCE_KINDS

from .figures import OKABE_ITO, base_layout

# Plain axis names of each store's size field; a harvester's come from its kind's size knobs.
STORE_LABELS = {"capacitance_f": "Supercapacitor capacitance", "capacity_mah": "Cell capacity"}


class _SizeLabels(Mapping[str, str]):
    """Plain axis names by size field: the stores' and every registered kind's size knobs (a live view)."""

    def _table(self) -> dict[str, str]:
        knobs = {k.field: k.label for kind in SOURCE_KINDS.values() for k in kind.size_knobs}
        return {**knobs, **STORE_LABELS}

    def __getitem__(self, name: str) -> str:
        return self._table()[name]

    def __iter__(self) -> Iterator[str]:
        return iter(self._table())

    def __len__(self) -> int:
        return len(self._table())


SIZE_LABELS: Mapping[str, str] = _SizeLabels()
# Unit strings of the site file as shown to a reader.
UNIT_TEXT = {"cm2": "cm²", "m2": "m²", "mm2": "mm²", "degC": "°C", "W/m2": "W/m²", "uW": "µW", "uA": "µA"}
# Colour-scale ticks for deficit days (the scale runs in log(1 + days) so that 0, 1-5 and 6-60 stand apart).
DEFICIT_TICKS = (0, 1, 5, 20, 60, 180, 365)
MAX_DAYS = 365


def unit_text(unit: str, integer: bool = False) -> str:
    """A site-file unit as printed on an axis: ``cm2`` -> ``cm²``; dimensionless counts -> ``count``."""
    if unit in ("-", ""):
        return "count" if integer else "-"
    return UNIT_TEXT.get(unit, unit)


def size_axis_title(field: str, unit: str, integer: bool = False) -> str:
    """Axis title of a size knob, with its unit in brackets."""
    name = SIZE_LABELS.get(field, field.replace("_", " ").capitalize())
    return f"{name} [{unit_text(unit, integer)}]"


def is_log_spaced(values: np.ndarray) -> bool:
    """True when positive values spanning at least a factor 4 step more evenly in log than in linear terms."""
    v = np.sort(np.asarray(values, dtype=float))
    if v.size < 3 or v[0] <= 0 or v[-1] / v[0] < 4.0:
        return False
    lin = np.diff(v)
    lg = np.diff(np.log(v))
    return float(np.std(lg) / np.mean(lg)) < float(np.std(lin) / np.mean(lin))


def cell_edges(values: np.ndarray, log: bool) -> np.ndarray:
    """Cell edges (n + 1) around sorted or reverse-sorted cell centres, geometric on a log axis."""
    v = np.asarray(values, dtype=float)
    if v.size == 1:
        return np.array([v[0] / 1.5, v[0] * 1.5]) if log else np.array([v[0] - 0.5, v[0] + 0.5])
    t = np.log(v) if log else v
    mid = 0.5 * (t[1:] + t[:-1])
    edges = np.concatenate([[t[0] - (mid[0] - t[0])], mid, [t[-1] + (t[-1] - mid[-1])]])
    return np.exp(edges) if log else edges


def _is_integer(values: np.ndarray) -> bool:
    v = np.asarray(values, dtype=float)
    return bool(np.all(np.isclose(v, np.round(v))))


# Nouns for dimensionless counts, singular and plural.
COUNT_NOUNS = {"modules": ("module", "modules")}


def _q(value: float, unit: str, field: str = "") -> str:
    text = f"{value:.3g}"
    if unit == "count":
        one, many = COUNT_NOUNS.get(field, ("", ""))
        return f"{text} {one if value == 1 else many}".rstrip()
    return text if unit in ("-", "") else f"{text} {unit}"


def log_ticks(low: float, high: float) -> list[float]:
    """1-2-5 tick values between ``low`` and ``high`` (both > 0), for log axes labelled in full."""
    out = []
    for k in range(math.floor(math.log10(low)) - 1, math.ceil(math.log10(high)) + 1):
        out += [m * 10.0**k for m in (1, 2, 5) if low <= m * 10.0**k <= high]
    return [float(f"{v:.3g}") for v in out]


def _log_axis(values: np.ndarray, log: bool) -> dict:
    if not log:
        return {}
    ticks = log_ticks(float(np.min(values)), float(np.max(values)))
    return {"tickvals": ticks, "ticktext": [f"{v:g}" for v in ticks]}


def _axis_range(edges: np.ndarray, log: bool) -> list[float]:
    lo, hi = float(np.min(edges)), float(np.max(edges))
    return [math.log10(lo), math.log10(hi)] if log else [lo, hi]


def _label(fig: go.Figure, text: str, x: float, y: float, log_x: bool, log_y: bool, ax: int, ay: int) -> None:
    """A boxed label with a short arrow to a point in data coordinates (log axes take log10 positions)."""
    fig.add_annotation(text=text, x=math.log10(x) if log_x else x, y=math.log10(y) if log_y else y,
                       xref="x", yref="y", showarrow=True, arrowhead=0, arrowwidth=1.2, ax=ax, ay=ay,
                       arrowcolor=OKABE_ITO["black"], bgcolor="rgba(255,255,255,0.9)",
                       bordercolor=OKABE_ITO["black"], borderwidth=1, borderpad=2,
                       font={"size": 11, "color": OKABE_ITO["black"]})


def _wake_text(hours: float) -> str:
    if not np.isfinite(hours):
        return NO_WAKE_TEXT
    return f"first wake {hours:,.0f} h" + (f" ({hours / 24:.1f} days)" if hours >= 48 else "")


def sizing_heatmap(m: SizingMap, title: str = "") -> go.Figure:
    """Deficit days of a steady-state year over harvester size (y) and store size (x).

    The colour runs in log(1 + deficit days), lighter for fewer, on a fixed 0-365 day scale so that maps
    compare. The frontier (least passing combinations) is drawn as a dotted staircase with round marks,
    the pick (least harvester, then least store, that meets the target) as a star, and the sizes as
    drawn as a cross; each mark is labelled on the figure.

    Parameters
    ----------
    m : SizingMap  from :func:`siteharvest.sizing.sizing_map`.
    title : str  replaces the default title.
    """
    ax = _MapAxes.of(m)
    fig = go.Figure(_deficit_cells(m, ax))
    _add_frontier(fig, m, ax)
    drawn_i = int(np.argmin(np.abs(ax.hs - m.harvester_drawn)))  # the map includes the drawn sizes
    drawn_j = int(np.argmin(np.abs(ax.ss - m.store_drawn)))
    _add_drawn(fig, m, ax, drawn_i, drawn_j)
    pick_offset = _add_pick(fig, m, ax)
    base_layout(fig, title or f"What it takes: deficit days by harvester and store size, {m.source_id}",
                height=520)
    fig.update_layout(legend={"orientation": "h", "y": -0.16, "x": 0, "yanchor": "top"},
                      margin={"l": 80, "r": 24, "t": 56, "b": 110})
    n_h, n_s = ax.dd.shape
    drawn_ax, drawn_ay = (-50 if drawn_j >= n_s / 2 else 50), (30 if drawn_i >= n_h / 2 else -30)
    if pick_offset is not None and m.pick is not None and abs(m.pick[0] - drawn_i) <= 3 \
            and abs(m.pick[1] - drawn_j) <= 3:
        # neighbours: point the two labels away from each other
        drawn_ax, drawn_ay = -50 if pick_offset[0] > 0 else 50, -30 if pick_offset[1] > 0 else 30
    _label(fig, "as drawn", m.store_drawn, m.harvester_drawn, ax.s_log, ax.h_log, drawn_ax, drawn_ay)
    _set_axes(fig, m, ax)
    return fig


@dataclass(frozen=True)
class _MapAxes:
    """What the parts of a sizing heatmap share: sizes, units, names and whether each axis is logarithmic."""

    hs: np.ndarray
    ss: np.ndarray
    dd: np.ndarray
    fw: np.ndarray
    h_int: bool
    h_unit: str
    s_unit: str
    h_log: bool
    s_log: bool
    h_name: str
    s_name: str

    @classmethod
    def of(cls, m: SizingMap) -> _MapAxes:
        hs = np.asarray(m.harvester_sizes, dtype=float)
        ss = np.asarray(m.store_sizes, dtype=float)
        h_int = _is_integer(hs) and m.harvester_unit in ("-", "")
        label = m.harvester_label or SIZE_LABELS.get(m.harvester_field, m.harvester_field)
        return cls(hs, ss, np.asarray(m.deficit_days, dtype=float), np.asarray(m.first_wake_hours, dtype=float),
                   h_int, unit_text(m.harvester_unit, h_int), unit_text(m.store_unit),
                   (not h_int) and is_log_spaced(hs), is_log_spaced(ss),  # counts stay on a linear axis
                   label.lower(), SIZE_LABELS.get(m.store_field, m.store_field).lower())


def _deficit_cells(m: SizingMap, ax: _MapAxes) -> go.Heatmap:
    """The map's cells, coloured by log(1 + deficit days), each with its hover text."""
    hover = np.empty(ax.dd.shape, dtype=object)
    for i in range(ax.dd.shape[0]):
        for j in range(ax.dd.shape[1]):
            ok = "meets" if meets_target(ax.dd[i, j], ax.fw[i, j], m.target_deficit_days) else "misses"
            hover[i, j] = (f"{ax.h_name}: {_q(ax.hs[i], ax.h_unit)}<br>{ax.s_name}: {_q(ax.ss[j], ax.s_unit)}<br>"
                           f"<b>{int(ax.dd[i, j])} deficit days</b> ({ok} the target)<br>{_wake_text(ax.fw[i, j])}")
    return go.Heatmap(
        x=cell_edges(ax.ss, ax.s_log), y=cell_edges(ax.hs, ax.h_log), z=np.log1p(ax.dd), text=hover,
        zmin=0.0, zmax=math.log1p(MAX_DAYS), colorscale="Cividis", reversescale=True,
        colorbar={"title": {"text": "Deficit days [days/yr]", "side": "right"}, "thickness": 14,
                  "tickvals": [math.log1p(t) for t in DEFICIT_TICKS], "ticktext": [str(t) for t in DEFICIT_TICKS]},
        hovertemplate="%{text}<extra></extra>", name="deficit days")


def _add_frontier(fig: go.Figure, m: SizingMap, ax: _MapAxes) -> None:
    if not m.frontier:
        return
    pts = sorted(m.frontier)
    fig.add_trace(go.Scatter(
        x=[ax.ss[j] for _, j in pts], y=[ax.hs[i] for i, _ in pts], mode="lines+markers",
        name=f"frontier: least combinations meeting ≤ {m.target_deficit_days} deficit days",
        line={"color": OKABE_ITO["black"], "width": 2, "dash": "dot", "shape": "vh"},
        marker={"symbol": "circle", "size": 8, "color": "#ffffff", "line": {"color": OKABE_ITO["black"],
                                                                             "width": 2}},
        customdata=[[int(ax.dd[i, j])] for i, j in pts],
        hovertemplate=(f"frontier<br>{ax.h_name}: %{{y:.3g}} {ax.h_unit}<br>{ax.s_name}: %{{x:.3g}} {ax.s_unit}"
                       "<br>%{customdata[0]} deficit days<extra></extra>")))


def _add_drawn(fig: go.Figure, m: SizingMap, ax: _MapAxes, drawn_i: int, drawn_j: int) -> None:
    fig.add_trace(go.Scatter(
        x=[m.store_drawn], y=[m.harvester_drawn], mode="markers", name="as drawn in the site file",
        marker={"symbol": "x-thin", "size": 14, "color": OKABE_ITO["black"],
                "line": {"color": OKABE_ITO["black"], "width": 3}},
        hovertemplate=(f"as drawn<br>{ax.h_name}: %{{y:.3g}} {ax.h_unit}<br>{ax.s_name}: %{{x:.3g}} {ax.s_unit}"
                       f"<br>{int(ax.dd[drawn_i, drawn_j])} deficit days<extra></extra>")))


def _add_pick(fig: go.Figure, m: SizingMap, ax: _MapAxes) -> tuple[int, int] | None:
    """The pick as a labelled star (its label's offset returned), or a note that nothing passes."""
    if m.pick is None:
        fig.add_annotation(
            text=f"no combination in this map meets ≤ {m.target_deficit_days} deficit days",
            x=0.5, y=0.97, xref="paper", yref="paper", yanchor="top", showarrow=False,
            bgcolor="rgba(255,255,255,0.9)",
            bordercolor=OKABE_ITO["black"], borderwidth=1, font={"size": 13, "color": OKABE_ITO["black"]})
        return None
    i, j = m.pick
    fig.add_trace(go.Scatter(
        x=[ax.ss[j]], y=[ax.hs[i]], mode="markers", name="pick: least harvester, then least store",
        marker={"symbol": "star", "size": 18, "color": OKABE_ITO["orange"],
                "line": {"color": OKABE_ITO["black"], "width": 1.5}},
        hovertemplate=(f"pick<br>{ax.h_name}: %{{y:.3g}} {ax.h_unit}<br>{ax.s_name}: %{{x:.3g}} {ax.s_unit}"
                       f"<br>{int(ax.dd[i, j])} deficit days, {_wake_text(ax.fw[i, j])}<extra></extra>")))
    offset = (60 if j < ax.dd.shape[1] / 2 else -60), (34 if i >= ax.dd.shape[0] / 2 else -34)
    _label(fig, f"pick: {_q(ax.hs[i], ax.h_unit, m.harvester_field)} + {_q(ax.ss[j], ax.s_unit)}", ax.ss[j],
           ax.hs[i], ax.s_log, ax.h_log, *offset)
    return offset


def _set_axes(fig: go.Figure, m: SizingMap, ax: _MapAxes) -> None:
    """Axis titles, scales and ranges; a knob where smaller is more runs upward toward less of it."""
    x_edges, y_edges = cell_edges(ax.ss, ax.s_log), cell_edges(ax.hs, ax.h_log)
    fig.update_xaxes(title_text=size_axis_title(m.store_field, m.store_unit), type="log" if ax.s_log else "linear",
                     showgrid=False, range=_axis_range(x_edges, ax.s_log), **_log_axis(x_edges, ax.s_log))
    reverse = m.smaller_is_more
    y_range = _axis_range(y_edges, ax.h_log)
    fig.update_yaxes(title_text=size_axis_title(m.harvester_field, m.harvester_unit, ax.h_int)
                     + (" (closer: up)" if reverse else ""),
                     type="log" if ax.h_log else "linear", showgrid=False,
                     range=y_range[::-1] if reverse else y_range,
                     dtick=integer_step(float(np.ptp(ax.hs))) if ax.h_int else None, **_log_axis(y_edges, ax.h_log))
    fig.add_annotation(text=f"target: at most {m.target_deficit_days} deficit days a year", x=1.0, y=1.01,
                       xref="paper", yref="paper", xanchor="right", yanchor="bottom", showarrow=False,
                       font={"size": 11, "color": "#5b6573"})


def integer_step(span: float, ticks: int = 8) -> int:
    """A 1-2-5 tick step of at least 1 giving about ``ticks`` ticks over ``span``."""
    raw = max(span / ticks, 1.0)
    power = 10 ** math.floor(math.log10(raw))
    return int(next(m * power for m in (1, 2, 5, 10) if m * power >= raw))


# Line styles of the percentile marks: distinct in black and white.
PERCENTILE_STYLES = (("p50", "P50", "solid"), ("p90", "P90", "dash"), ("p99", "P99", "dot"))


def risk_histogram(risk: WeatherRisk, case_id: str, title: str = "") -> go.Figure:
    """How many resampled years had how many deficit days, with P50, P90 and P99 marked.

    Parameters
    ----------
    risk : WeatherRisk  from :func:`siteharvest.sizing.weather_risk`.
    case_id : str  a source id, or ``"all-sources"``.
    title : str  replaces the default title.
    """
    days = np.asarray(risk.deficit_days[case_id], dtype=float)
    summary = risk.summary(case_id)
    lo, hi = int(days.min()), int(days.max())
    width = max(1, math.ceil((hi - lo + 1) / 40))
    edges = np.arange(lo, hi + width + 1, width) - 0.5
    counts, edges = np.histogram(days, bins=edges)
    centres = 0.5 * (edges[1:] + edges[:-1])
    labels = [f"{int(a + 0.5)}" if width == 1 else f"{int(a + 0.5)}-{int(b - 0.5)}"
              for a, b in itertools.pairwise(edges)]
    fig = go.Figure(go.Bar(
        x=centres, y=counts, width=width * 0.9, name="resampled years",
        marker={"color": OKABE_ITO["sky"], "line": {"color": OKABE_ITO["black"], "width": 0.8},
                "pattern": {"shape": "/", "fgcolor": "#2b5f82", "size": 6, "solidity": 0.15}},
        customdata=labels, hovertemplate="%{customdata} deficit days: %{y} years<extra></extra>"))
    top = float(counts.max()) if counts.size else 1.0
    # Percentiles that fall on the same value share one mark and one label.
    groups: dict[float, list[tuple[str, str]]] = {}
    for key, name, dash in PERCENTILE_STYLES:
        groups.setdefault(round(summary[key], 6), []).append((name, dash))
    for k, (value, names) in enumerate(sorted(groups.items())):
        label = " = ".join(n for n, _ in names) + f" = {value:.0f} days"
        dash = names[0][1]
        fig.add_trace(go.Scatter(
            x=[value, value], y=[0, top * (1.14 + 0.09 * k)], mode="lines", name=label,
            line={"color": OKABE_ITO["black"], "width": 2, "dash": dash},
            hovertemplate=f"{label}<extra></extra>"))
        fig.add_annotation(text=label, x=value, y=top * (1.14 + 0.09 * k), xref="x", yref="y", showarrow=False,
                           xanchor="left", yanchor="bottom", bgcolor="rgba(255,255,255,0.85)",
                           font={"size": 11, "color": OKABE_ITO["black"]})
    case = case_label(case_id)
    base_layout(fig, title or f"Weather risk over {risk.years} resampled years, {case}", height=420)
    fig.add_annotation(text=f"years with at least one deficit day: {summary['chance_any']:.0%}", x=1.0, y=1.01,
                       xref="paper", yref="paper", xanchor="right", yanchor="bottom", showarrow=False,
                       font={"size": 11, "color": "#5b6573"})
    fig.update_layout(bargap=0.05, showlegend=True)
    span = max(hi - lo, 6)
    centre = 0.5 * (lo + hi)
    fig.update_xaxes(title_text="Deficit days in a resampled year [days/yr]", tick0=0, dtick=integer_step(span),
                     range=[max(centre - 0.6 * span, -0.5 - 0.05 * span), centre + 0.75 * span])
    fig.update_yaxes(title_text="Resampled years [count]", range=[0, top * (1.3 + 0.09 * len(groups))],
                     rangemode="tozero")
    return fig

"""Figure builders: pure functions from an Assessment (or plain arrays) to a plotly Figure.

No Dash here: the report renders the same builders to static images. Every axis names its unit;
hover shows values with units. Colours: the Okabe & Ito (2008) colour-blind-safe set, and the cividis
scale (Nuñez, Anderton & Renslow 2018) for continuous values.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Sequence

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from siteharvest.assess import Assessment, CaseResult
from siteharvest.findings import case_label
from siteharvest.metrics import monthly_demand_wh
from siteharvest.store import store_levels
from siteharvest.timegrid import HOURS_PER_YEAR, REFERENCE_YEAR, SECONDS_PER_HOUR

# Okabe, M. and Ito, K. (2008). Color Universal Design (CUD): how to make figures and presentations
# that are friendly to colorblind people.
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky": "#56B4E9",
    "green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "purple": "#CC79A7",
}
SERIES = ["#0072B2", "#E69F00", "#009E73", "#CC79A7", "#56B4E9", "#D55E00", "#000000"]
DEMAND_COLOUR = "#000000"
DEFICIT_COLOUR = OKABE_ITO["vermillion"]
FINE_COLOUR = "#BFE3D6"  # a light tint of the bluish green
FONT = ('system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", "Noto Sans", '
        '"Liberation Sans", Arial, sans-serif')
MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")

_PREFIXES = ((1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n"))


def si_scale(largest: float, unit: str) -> tuple[float, str]:
    """(factor to divide by, unit with prefix) so that ``largest`` shows between 1 and 1000."""
    largest = abs(float(largest)) if np.isfinite(largest) else 0.0
    for factor, prefix in _PREFIXES:
        if largest >= factor:
            return factor, prefix + unit
    return _PREFIXES[-1][0], _PREFIXES[-1][1] + unit


def log_ticks(values: np.ndarray | Sequence[float]) -> dict[str, list]:
    """Tick values and plain labels (1, 2, 5 per decade; 1 only over many decades) for a log axis."""
    v = np.asarray([x for x in np.ravel(values) if x is not None and np.isfinite(x) and x > 0], dtype=float)
    if v.size == 0:
        return {}
    lo, hi = math.floor(math.log10(v.min())), math.ceil(math.log10(v.max()))
    steps = (1, 2, 5) if hi - lo <= 4 else (1,)
    ticks = [m * 10.0**k for k in range(lo, hi + 1) for m in steps]
    ticks = [t for t in ticks if v.min() / 1.5 <= t <= v.max() * 1.5] or [10.0**lo, 10.0**hi]
    return {"tickvals": ticks, "ticktext": [f"{t:,.10g}" if t >= 1 else f"{t:.10g}" for t in ticks]}


def series_colour(i: int) -> str:
    return SERIES[i % len(SERIES)]


def base_layout(fig: go.Figure, title: str, height: int = 420) -> go.Figure:
    fig.update_layout(
        template="plotly_white",
        title={"text": title, "x": 0.0, "xanchor": "left", "font": {"size": 15}},
        font={"family": FONT, "size": 12, "color": "#1d232b"},
        height=height,
        margin={"l": 70, "r": 24, "t": 56, "b": 56},
        hoverlabel={"font": {"family": FONT}},
        legend={"orientation": "h", "y": -0.18, "x": 0, "yanchor": "top"},
        paper_bgcolor="#ffffff",
        plot_bgcolor="#ffffff",
    )
    fig.update_xaxes(showline=True, linecolor="#8a94a3", gridcolor="#e6e9ee", ticks="outside")
    fig.update_yaxes(showline=True, linecolor="#8a94a3", gridcolor="#e6e9ee", ticks="outside")
    return fig


def empty_figure(message: str, height: int = 320) -> go.Figure:
    """A blank figure that says why it is blank."""
    fig = go.Figure()
    base_layout(fig, "", height)
    fig.update_xaxes(visible=False)
    fig.update_yaxes(visible=False)
    fig.add_annotation(text=message, x=0.5, y=0.5, xref="paper", yref="paper", showarrow=False,
                       font={"size": 14, "color": "#5b6573"})
    return fig


# --------------------------------------------------------------------------------------------------
# sources side by side


def monthly_figure(monthly_wh: dict[str, np.ndarray], demand_wh: np.ndarray, title: str = "") -> go.Figure:
    """Energy into the store per month for each source (bars) against the node's demand (line).

    Parameters
    ----------
    monthly_wh : {label: array (12,)}  energy into the store per month [Wh].
    demand_wh : array (12,)  energy the node draws per month [Wh].
    """
    demand_wh = np.asarray(demand_wh, dtype=float)
    every = [np.asarray(v, dtype=float) for v in monthly_wh.values()] + [demand_wh]
    positive = np.concatenate([v[v > 0] for v in every]) if every else np.array([])
    factor, unit = si_scale(float(np.median(positive)) if positive.size else 1.0, "Wh")
    fig = go.Figure()
    for i, (label, values) in enumerate(monthly_wh.items()):
        v = np.asarray(values, dtype=float) / factor
        fig.add_trace(go.Bar(
            x=list(MONTHS), y=[float(x) if x > 0 else None for x in v], name=label,
            marker={"color": series_colour(i)},
            hovertemplate=f"%{{x}}: %{{y:.3g}} {unit}<extra>{label}</extra>"))
    d = demand_wh / factor
    fig.add_trace(go.Scatter(
        x=list(MONTHS), y=[float(x) for x in d], name="node demand", mode="lines+markers",
        line={"color": DEMAND_COLOUR, "width": 2.5, "dash": "dash"}, marker={"symbol": "diamond", "size": 8},
        hovertemplate=f"%{{x}}: %{{y:.3g}} {unit}<extra>node demand</extra>"))
    base_layout(fig, title or "Energy into the store each month, per source, against the node's demand")
    fig.update_layout(barmode="group", bargap=0.18, bargroupgap=0.05)
    fig.update_xaxes(title_text="Month of the reference year [month]")
    shown = np.concatenate([np.asarray(v, dtype=float) / factor for v in every])
    fig.update_yaxes(title_text=f"Energy per month [{unit}] (log scale)", type="log", **log_ticks(shown))
    return fig


def sources_figure(a: Assessment) -> go.Figure:
    monthly = {_short_label(c): c.monthly_energy_wh for c in a.sources}
    demand_wh = monthly_demand_wh(a.prepared.demand_j)
    return monthly_figure(monthly, demand_wh)


def _short_label(c: CaseResult) -> str:
    return case_label(c.id)


# --------------------------------------------------------------------------------------------------
# the year at a glance


def _day_dates() -> list[dt.date]:
    start = dt.date(REFERENCE_YEAR, 1, 1)
    return [start + dt.timedelta(days=d) for d in range(365)]


def year_heatmap(stored_energy_j: np.ndarray, label: str, cutoff_j: float = 0.0,
                 max_j: float | None = None) -> go.Figure:
    """Stored energy by day of year (x) and hour of day (y).

    Parameters
    ----------
    stored_energy_j : array (8760,)  energy in the store at the end of each hour [J].
    label : str  the case shown.
    cutoff_j : float  stored energy at the node's cut-off [J]: the bottom of the colour scale.
    max_j : float, optional  stored energy when full [J]: the top of the colour scale.
    """
    e = np.asarray(stored_energy_j, dtype=float).reshape(365, 24).T
    top = float(max_j) if max_j is not None and max_j > cutoff_j else float(np.nanmax(e)) if e.size else 1.0
    factor, unit = si_scale(top, "J")
    usable = np.clip((e - cutoff_j) / max(top - cutoff_j, 1e-30) * 100.0, 0.0, 100.0)
    fig = go.Figure(go.Heatmap(
        x=_day_dates(), y=list(range(24)), z=e / factor, customdata=usable, colorscale="Cividis",
        zmin=cutoff_j / factor, zmax=top / factor,
        colorbar={"title": {"text": f"Stored energy [{unit}]", "side": "right"}, "thickness": 14},
        hovertemplate=(f"%{{x|%a %d %b}}, %{{y:02d}}:00 h<br>stored: %{{z:.3g}} {unit}"
                       "<br>usable charge: %{customdata:.0f} %<extra></extra>")))
    base_layout(fig, f"The year at a glance: energy in the store, {label}", height=420)
    fig.update_xaxes(title_text="Day of the reference year [date]", tickformat="%b", dtick="M1", ticks="outside")
    fig.update_yaxes(title_text="Hour of day [h, local standard time]", tickvals=[0, 6, 12, 18, 23],
                     range=[-0.5, 23.5])
    fig.add_annotation(text=f"darkest: node cut-off ({cutoff_j / factor:.3g} {unit}); brightest: full "
                            f"({top / factor:.3g} {unit})", x=1.0, y=1.02, xref="paper", yref="paper",
                       showarrow=False, xanchor="right", yanchor="bottom", font={"size": 11, "color": "#5b6573"})
    return fig


# --------------------------------------------------------------------------------------------------
# the calendar of deficit days


def deficit_calendar(deficit_days_mask: np.ndarray, hours_off_per_day: np.ndarray, label: str) -> go.Figure:
    """Months (rows) by day of month (columns); deficit days marked.

    Parameters
    ----------
    deficit_days_mask : array of bool (365,)  True on deficit days.
    hours_off_per_day : array (365,)  hours the node was off on each day [h].
    label : str  the case shown.
    """
    mask = np.asarray(deficit_days_mask, dtype=bool)
    off = np.asarray(hours_off_per_day, dtype=float)
    z = np.full((12, 31), np.nan)
    text = [["" for _ in range(31)] for _ in range(12)]
    for d, date in enumerate(_day_dates()):
        m, k = date.month - 1, date.day - 1
        z[m, k] = 1.0 if mask[d] else 0.0
        state = "deficit day" if mask[d] else "every task ran"
        text[m][k] = f"{date:%a %d %b}: {state}<br>node off {off[d]:.0f} h of 24 h"
    fig = go.Figure(go.Heatmap(
        x=list(range(1, 32)), y=list(MONTHS), z=z, text=text, zmin=0, zmax=1, showscale=False,
        colorscale=[[0.0, FINE_COLOUR], [0.5, FINE_COLOUR], [0.5, DEFICIT_COLOUR], [1.0, DEFICIT_COLOUR]],
        xgap=3, ygap=3, hovertemplate="%{text}<extra></extra>", hoverongaps=False))
    # legend entries as invisible markers
    for name, colour in (("deficit day", DEFICIT_COLOUR), ("every task ran", FINE_COLOUR)):
        fig.add_trace(go.Scatter(x=[None], y=[None], mode="markers", name=name,
                                 marker={"symbol": "square", "size": 12, "color": colour,
                                         "line": {"color": "#8a94a3", "width": 1}}))
    n = int(mask.sum())
    base_layout(fig, f"Calendar: {n} deficit day{'s' if n != 1 else ''} in the year, {label}", height=430)
    fig.update_layout(legend={"orientation": "h", "y": 1.02, "x": 1.0, "xanchor": "right", "yanchor": "bottom"})
    fig.update_xaxes(title_text="Day of the month [day]", tickvals=[1, 5, 10, 15, 20, 25, 31], showgrid=False,
                     range=[0.5, 31.5])
    fig.update_yaxes(title_text="Month [month]", autorange="reversed", showgrid=False)
    return fig


# --------------------------------------------------------------------------------------------------
# one week, hour by hour


def hours_off_per_day(node_on: np.ndarray) -> np.ndarray:
    return (~np.asarray(node_on, dtype=bool)).reshape(365, 24).sum(axis=1)


def week_figure(times: Sequence[dt.datetime] | np.ndarray, harvest_w: np.ndarray, demand_w: np.ndarray,
                stored_energy_j: np.ndarray, node_on: np.ndarray, start_day: int, label: str,
                cutoff_j: float | None = None) -> go.Figure:
    """Seven days from ``start_day`` (0-based): hourly harvest and demand, and the store's level.

    Parameters
    ----------
    times : 8760 hour-start timestamps (local standard time).
    harvest_w : array (8760,)  power into the store [W].
    demand_w : array (8760,)  power the node draws [W].
    stored_energy_j : array (8760,)  energy in the store [J].
    node_on : array of bool (8760,)  node running in the hour.
    start_day : int  first day shown, 0..358.
    cutoff_j : float, optional  stored energy at the node's cut-off [J], drawn as a line.
    """
    start_day = int(np.clip(start_day, 0, 365 - 7))
    sl = slice(start_day * 24, start_day * 24 + 7 * 24)
    t = list(np.asarray(times)[sl])
    h = np.asarray(harvest_w, dtype=float)[sl]
    d = np.asarray(demand_w, dtype=float)[sl]
    e = np.asarray(stored_energy_j, dtype=float)[sl]
    on = np.asarray(node_on, dtype=bool)[sl]
    positive = np.concatenate([h[h > 0], d[d > 0]])
    pf, pu = si_scale(float(np.max(positive)) if positive.size else 1e-6, "W")
    ef, eu = si_scale(max(float(np.max(e)) if e.size else 0.0, cutoff_j or 0.0) or 1.0, "J")
    fig = make_subplots(rows=2, cols=1, shared_xaxes=True, vertical_spacing=0.08, row_heights=[0.58, 0.42])
    fig.add_trace(go.Scatter(
        x=t, y=[float(v) if v > 0 else None for v in h / pf], name="harvest into the store",
        mode="lines", line={"color": OKABE_ITO["blue"], "width": 2, "shape": "hv"},
        hovertemplate=f"%{{x|%a %d %b %H:00}}: %{{y:.3g}} {pu}<extra>harvest</extra>"), row=1, col=1)
    fig.add_trace(go.Scatter(
        x=t, y=list(d / pf), name="node demand", mode="lines",
        line={"color": DEMAND_COLOUR, "width": 2, "dash": "dash", "shape": "hv"},
        hovertemplate=f"%{{x|%a %d %b %H:00}}: %{{y:.3g}} {pu}<extra>demand</extra>"), row=1, col=1)
    off = ~on
    if off.any():  # shaded underneath the store's level
        top = max(float(np.max(e / ef)), (cutoff_j or 0.0) / ef) * 1.05 or 1.0
        fig.add_trace(go.Scatter(
            x=t, y=[top if o else 0.0 for o in off], name="node off", mode="lines", fill="tozeroy",
            line={"width": 0, "shape": "hv"}, fillcolor="rgba(213,94,0,0.22)",
            customdata=["node off" if o else "node on" for o in off],
            hovertemplate="%{x|%a %d %b %H:00}: %{customdata}<extra></extra>"), row=2, col=1)
    fig.add_trace(go.Scatter(
        x=t, y=list(e / ef), name="energy in the store", mode="lines", fill="tozeroy",
        line={"color": OKABE_ITO["green"], "width": 2}, fillcolor="rgba(0,158,115,0.18)",
        hovertemplate=f"%{{x|%a %d %b %H:00}}: %{{y:.3g}} {eu}<extra>stored</extra>"), row=2, col=1)
    if cutoff_j is not None and cutoff_j > 0:
        fig.add_trace(go.Scatter(
            x=[t[0], t[-1]], y=[cutoff_j / ef] * 2, name="node cut-off", mode="lines",
            line={"color": OKABE_ITO["vermillion"], "width": 1.5, "dash": "dot"},
            hovertemplate=f"cut-off: %{{y:.3g}} {eu}<extra></extra>"), row=2, col=1)
    first = t[0] if t else None
    title = f"Seven days from {first:%a %d %b}, {label}" if first is not None else f"One week, {label}"
    base_layout(fig, title, height=520)
    fig.update_layout(legend={"y": -0.12})
    fig.update_yaxes(title_text=f"Power [{pu}] (log scale)", type="log", row=1, col=1,
                     **log_ticks(np.concatenate([h, d]) / pf))
    fig.update_yaxes(title_text=f"Stored energy [{eu}]", rangemode="tozero", row=2, col=1)
    fig.update_xaxes(title_text="Local standard time [day, hour]", tickformat="%a %d %b", dtick=86400000,
                     row=2, col=1)
    return fig


def worst_week_start(node_on: np.ndarray, unmet_j: np.ndarray, harvest_w: np.ndarray) -> tuple[int, str]:
    """First day (0..358) of the seven days with most dark hours; with none, the least harvest.

    Dark hour: the node was off, or some of its demand went unmet.
    """
    dark = (~np.asarray(node_on, dtype=bool)) | (np.asarray(unmet_j, dtype=float) > 0)
    daily_dark = dark.reshape(365, 24).sum(axis=1)
    window = np.convolve(daily_dark, np.ones(7), mode="valid")
    if window.max() > 0:
        ties = np.flatnonzero(window == window.max())
        start = int(ties[len(ties) // 2]) if np.all(np.diff(ties) == 1) else int(ties[0])  # centre a dark spell
        return start, f"the 7 days with most hours dark: {int(window[start])} h"
    daily_harvest = np.asarray(harvest_w, dtype=float).reshape(365, 24).sum(axis=1)
    window = np.convolve(daily_harvest, np.ones(7), mode="valid")
    start = int(np.argmin(window))
    return start, "no dark hours all year: the 7 days with the least harvest"


def case_week_figure(a: Assessment, case: CaseResult, start_day: int | None = None) -> tuple[go.Figure, int, str]:
    """The week view for one case; ``start_day`` None picks the worst week."""
    caption = ""
    if start_day is None:
        start_day, caption = worst_week_start(case.node_on, case.unmet_j, case.into_store_w)
    demand_w = np.asarray(a.prepared.demand_j) / SECONDS_PER_HOUR
    levels = store_levels(a.spec.store)
    fig = week_figure(a.prepared.context.index.to_pydatetime(), case.into_store_w, demand_w,
                      case.stored_energy_j, case.node_on, start_day, _short_label(case), levels.cutoff_j)
    return fig, start_day, caption


def case_year_figure(a: Assessment, case: CaseResult) -> go.Figure:
    levels = store_levels(a.spec.store)
    return year_heatmap(case.stored_energy_j, _short_label(case), levels.cutoff_j, levels.max_j)


def case_calendar_figure(case: CaseResult) -> go.Figure:
    return deficit_calendar(case.deficit_days_mask, hours_off_per_day(case.node_on), _short_label(case))


def find_case(a: Assessment, case_id: str | None) -> CaseResult:
    for c in a.cases:
        if c.id == case_id:
            return c
    return a.sources[0] if a.sources else a.combined


assert HOURS_PER_YEAR == 365 * 24

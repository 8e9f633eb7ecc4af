"""Layout pieces of the study views: the "What it takes" and "Weather risk" tabs and the report buttons."""

from __future__ import annotations

from typing import Any

from dash import dcc, html

from siteharvest.sizing import SEED_RANGE

from . import ids
from .figures import empty_figure

SPINNER = {"type": "circle", "color": "#0072B2", "delay_show": 250}
GRAPH_CONFIG = {"displaylogo": False, "modeBarButtonsToRemove": ["lasso2d", "select2d"],
                "toImageButtonOptions": {"format": "png", "filename": "siteharvest-figure", "scale": 2}}

# Bounds of the weather-risk inputs (the years' bounds keep one run to a few seconds).
RISK_YEARS_DEFAULT, RISK_YEARS_MIN, RISK_YEARS_MAX = 200, 20, 1000
RISK_SEED_DEFAULT = 1
OUTAGE_RATE_DEFAULT, OUTAGE_RATE_MAX = 0.0, 52.0
OUTAGE_DAYS_DEFAULT, OUTAGE_DAYS_MIN, OUTAGE_DAYS_MAX = 3.0, 0.1, 60.0


def _graph(graph_id: str, message: str, height: int) -> dcc.Graph:
    return dcc.Graph(id=graph_id, figure=empty_figure(message, height), config=GRAPH_CONFIG,
                     className="sh-graph", style={"height": f"{height}px"})


def _number(input_id: str, label: str, unit: str, value: float | None, *, low: float, high: float | None,
            step: float, hint: str = "", after: str = "") -> html.Div:
    """A labelled number input that applies on Enter or when left (as the editor's fields do); the unit goes
    beside the label, or ``after`` the input when it reads as the end of a sentence."""
    return html.Div(className="sh-study-field", title=hint or None, children=[
        html.Label([label, html.Span(unit, className="sh-unit") if unit else None], htmlFor=input_id,
                   className="sh-view-label"),
        dcc.Input(id=input_id, type="number", value=value, min=low, max=high, step=step, debounce=True,
                  className="sh-input sh-input-num sh-study-input"),
        html.Span(after, className="sh-after") if after else None,
    ])


def report_buttons() -> list[Any]:
    """The report buttons for the header, beside "Save as site file"."""
    return [
        html.Div(className="sh-button-group", role="group", **{"aria-label": "Download the report"}, children=[
            html.Button("Download report (PDF)", id=ids.REPORT_PDF_BUTTON, n_clicks=0, className="sh-button",
                        type="button", title="The feasibility report of this spot as it stands, with the sizing "
                                             "study and the weather risk (takes a few seconds)"),
            html.Button("HTML", id=ids.REPORT_HTML_BUTTON, n_clicks=0, className="sh-button", type="button",
                        title="The same report as one self-contained web page",
                        **{"aria-label": "Download report as HTML"}),
        ]),
        html.Span(id=ids.REPORT_BUSY, className="sh-busy", role="status"),
        dcc.Download(id=ids.REPORT_DOWNLOAD),
    ]


def portfolio_report_buttons() -> html.Div:
    """The portfolio's report buttons, on the Portfolio tab: every loaded spot, ranked, in one report."""
    return html.Div(className="sh-portfolio-report", children=[
        html.Div(className="sh-button-group", role="group", **{"aria-label": "Download the portfolio report"},
                 children=[
            html.Button("Download the portfolio report (PDF)", id=ids.PORTFOLIO_PDF_BUTTON, n_clicks=0,
                        className="sh-button", type="button",
                        title="Every loaded spot as it stands, ranked, each with its sizing study and weather "
                              "risk (about a second a spot)"),
            html.Button("HTML", id=ids.PORTFOLIO_HTML_BUTTON, n_clicks=0, className="sh-button", type="button",
                        title="The same report as one self-contained web page",
                        **{"aria-label": "Download the portfolio report as HTML"}),
        ]),
        html.Span(id=ids.PORTFOLIO_BUSY, className="sh-busy sh-busy-dark", role="status"),
        dcc.Download(id=ids.PORTFOLIO_DOWNLOAD),
        html.Div(id=ids.PORTFOLIO_MSG, className="sh-msg", role="alert"),
    ])


def report_message() -> html.Div:
    return html.Div(id=ids.REPORT_MSG, className="sh-msg sh-top-msg", role="alert")


def sizing_tab() -> dcc.Tab:
    return dcc.Tab(label="What it takes", value=ids.TAB_SIZING, className="sh-tab", selected_className="sh-tab-on",
                   children=[
        html.P("Deficit days of a steady-state year for each harvester size (up) and store size (across), the "
               "rest of the spot as drawn: 24 sizes on each axis. The pick is the least harvester, then the "
               "least store, that meets the target.", className="sh-note"),
        html.Div(className="sh-view-row", children=[
            _number(ids.SIZING_TARGET, "Try a target: at most", "", None, low=0, high=365, step=1,
                    after="deficit days a year (starts at the spot's own; press Enter to apply)",
                    hint="starts at the spot's own target (run.target_deficit_days); try another here"),
        ]),
        html.Div(className="sh-view-row sh-study-inputs", children=[
            html.Label("Size to vary", htmlFor=ids.SIZING_KNOB, className="sh-row-title"),
            dcc.Dropdown(id=ids.SIZING_KNOB, options=[], value="", clearable=False, searchable=False,
                         className="sh-study-choice"),
            html.Label("Reporting task to vary", htmlFor=ids.SIZING_TASK, className="sh-row-title"),
            dcc.Dropdown(id=ids.SIZING_TASK, options=[], value="", clearable=False, searchable=False,
                         className="sh-study-choice"),
        ]),
        dcc.Store(id=ids.SIZING_TARGET_FROM, data=None),
        dcc.Loading(**SPINNER, children=html.Div([
            html.Div(id=ids.SIZING_TEXT, className="sh-study-text", role="status"),
            _graph(ids.FIG_SIZING, "the sizing map appears here", 520),
        ])),
    ])


def risk_tab() -> dcc.Tab:
    return dcc.Tab(label="Weather risk", value=ids.TAB_RISK, className="sh-tab", selected_className="sh-tab-on",
                   children=[
        html.P("Deficit days in many years made from the spot's own weather year, whole weeks reshuffled within "
               "each month (schedules kept), for the chosen source and for all sources together.",
               className="sh-note"),
        html.Div(className="sh-view-row sh-study-inputs", children=[
            html.Span("Resampling", className="sh-row-title"),
            _number(ids.RISK_YEARS, "Years", "count", RISK_YEARS_DEFAULT, low=RISK_YEARS_MIN, high=RISK_YEARS_MAX,
                    step=1, hint=f"resampled years, {RISK_YEARS_MIN} to {RISK_YEARS_MAX}"),
            _number(ids.RISK_SEED, "Seed", "", RISK_SEED_DEFAULT, low=SEED_RANGE[0], high=SEED_RANGE[1], step=1,
                    hint="the same seed gives the same years"),
        ]),
        html.Div(className="sh-view-row sh-study-inputs", children=[
            html.Span("Unplanned outages", className="sh-row-title"),
            _number(ids.RISK_OUTAGE_RATE, "How many", "per year", OUTAGE_RATE_DEFAULT, low=0,
                    high=OUTAGE_RATE_MAX, step=0.1,
                    hint="process or machine stops beyond the schedule (heat and vibration sources)"),
            _number(ids.RISK_OUTAGE_DAYS, "Mean length", "days", OUTAGE_DAYS_DEFAULT, low=OUTAGE_DAYS_MIN,
                    high=OUTAGE_DAYS_MAX, step=0.1, hint="outage lengths are drawn around this mean"),
            html.Span(id=ids.RISK_OUTAGE_NOTE, className="sh-note sh-inline-note"),
        ]),
        html.Div(id=ids.RISK_MSG, className="sh-msg", role="alert"),
        dcc.Loading(**SPINNER, children=html.Div([
            html.Div(id=ids.RISK_TABLE, className="sh-risk-table"),
            _graph(ids.FIG_RISK, "deficit days over the resampled years appear here", 420),
            html.Div(id=ids.RISK_ALL_WRAP,
                     children=_graph(ids.FIG_RISK_ALL, "and for all sources together here", 420)),
        ])),
    ])

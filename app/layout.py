"""The page: header with the spot picker and site-file buttons, the editor on the left, results right."""

from __future__ import annotations

import warnings
from typing import Any

from dash import dash_table, dcc, html

from . import ids
from .editor import render_editor
from .figures import empty_figure
from .layout_study import report_buttons, report_message, risk_tab, sizing_tab
from .tables import PORTFOLIO_COLUMNS, VERDICT_CLASS, VERDICT_MEANING

FONT_STACK = ('system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", "Noto Sans", "Liberation Sans", '
              'Arial, sans-serif')
GRAPH_CONFIG = {"displaylogo": False, "modeBarButtonsToRemove": ["lasso2d", "select2d"],
                "toImageButtonOptions": {"format": "png", "filename": "siteharvest-figure", "scale": 2}}


def spot_options(spots: dict[str, dict[str, Any]]) -> list[dict[str, str]]:
    return [{"label": rec["site"]["spot"]["name"], "value": key} for key, rec in spots.items()]


def week_options() -> list[dict[str, Any]]:
    import datetime as dt

    out: list[dict[str, Any]] = [{"label": "the worst 7 days (picked for you)", "value": "worst"}]
    start = dt.date(2025, 1, 1)
    for w in range(52):
        a = start + dt.timedelta(days=7 * w)
        b = a + dt.timedelta(days=6)
        out.append({"label": f"week {w + 1}: {a:%d %b} – {b:%d %b}", "value": str(7 * w)})
    return out


def _graph(graph_id: str, message: str, height: int = 420) -> dcc.Graph:
    return dcc.Graph(id=graph_id, figure=empty_figure(message, height), config=GRAPH_CONFIG,
                     className="sh-graph", style={"height": f"{height}px"})


def _legend() -> html.Div:
    return html.Div(
        [html.Span("Verdict words:", className="sh-legend-title")]
        + [html.Span([html.Span(words, className=f"sh-verdict sh-verdict-small {cls}"),
                      html.Span(VERDICT_MEANING[words], className="sh-legend-text")],
                     className="sh-legend-item") for words, cls in VERDICT_CLASS.items()]
        + [html.Span("Backup cell life with +: the cell's shelf life limits it, not the node.",
                     className="sh-legend-text sh-legend-note")],
        className="sh-legend")


def build_layout(spots: dict[str, dict[str, Any]], load_errors: list[str], logo_src: str) -> html.Div:
    first = next(iter(spots))
    header = html.Header(className="sh-top", children=[
        html.Div(className="sh-brand", children=[
            html.Img(src=logo_src, alt="", className="sh-logo"),
            html.Div([html.H1("siteharvest"),
                      html.P("Can a sensor node at this spot run all year on the energy it harvests there?",
                             className="sh-tagline")]),
        ]),
        html.Div(className="sh-top-controls", children=[
            html.Label("Spot", htmlFor=ids.SPOT_PICKER, className="sh-top-label"),
            dcc.Dropdown(id=ids.SPOT_PICKER, options=spot_options(spots), value=first, clearable=False,
                         searchable=False, className="sh-spot-picker"),
            dcc.Upload(id=ids.SITE_UPLOAD, multiple=False, className="sh-site-upload",
                       children=html.Button("Open a site file…", className="sh-button", type="button")),
            html.Button("Save as site file", id=ids.SITE_DOWNLOAD_BUTTON, n_clicks=0, className="sh-button",
                        type="button"),
            dcc.Download(id=ids.SITE_DOWNLOAD),
            *report_buttons(),
        ]),
        html.Div(id=ids.SITE_UPLOAD_MSG, className="sh-msg sh-top-msg", role="alert"),
        report_message(),
    ])
    editor = html.Aside(className="sh-editor-pane", children=[
        html.H2("The spot"),
        html.P("Every field of the site file, grouped by what it describes. Press Enter or leave a field "
               "to apply it; a value that does not fit is explained beside it and the results keep the "
               "last good spot.", className="sh-note"),
        html.Div(id=ids.EDITOR_MSG, className="sh-msg", role="alert"),
        html.Div(id=ids.EDITOR_NOTE, className="sh-info", role="status"),
        html.Div(id=ids.EDITOR, className="sh-editor",
                 children=render_editor(spots[first]["site"], {}, None)),
    ])
    results = html.Section(className="sh-results", children=[
        dcc.Loading(type="circle", color="#0072B2", delay_show=250, children=html.Div([
            html.Div(id=ids.STATUS, className="sh-status"),
            html.Div(id=ids.SUMMARY, className="sh-summary"),
        ])),
        html.Div([_legend(), html.Div(id=ids.NOTES, className="sh-notes")], className="sh-under-table"),
        html.Div(id=ids.CAUTIONS, className="sh-cautions"),
        html.Div(className="sh-view-row sh-case-row", children=[
            html.Label("Source shown in the year, calendar, week, sizing and risk views", htmlFor=ids.CASE_PICKER,
                       className="sh-view-label"),
            dcc.Dropdown(id=ids.CASE_PICKER, options=[], value=None, clearable=False, searchable=False,
                         className="sh-case-picker"),
        ]),
        dcc.Tabs(id=ids.TABS, value=ids.TAB_SOURCES, className="sh-tabs", parent_className="sh-tabs-wrap",
                 content_className="sh-tab-body", children=[
            dcc.Tab(label="Sources side by side", value=ids.TAB_SOURCES, className="sh-tab",
                    selected_className="sh-tab-on", children=[
                dcc.Loading(type="circle", color="#0072B2", delay_show=250,
                            children=_graph(ids.FIG_SOURCES, "the monthly comparison appears here")),
            ]),
            dcc.Tab(label="Year at a glance", value=ids.TAB_YEAR, className="sh-tab",
                    selected_className="sh-tab-on", children=[
                dcc.Loading(type="circle", color="#0072B2", delay_show=250,
                            children=_graph(ids.FIG_YEAR, "the stored energy of the year appears here")),
            ]),
            dcc.Tab(label="Deficit calendar", value=ids.TAB_CALENDAR, className="sh-tab",
                    selected_className="sh-tab-on", children=[
                dcc.Loading(type="circle", color="#0072B2", delay_show=250,
                            children=_graph(ids.FIG_CALENDAR, "the calendar appears here", 430)),
            ]),
            dcc.Tab(label="Worst week", value=ids.TAB_WEEK, className="sh-tab", selected_className="sh-tab-on",
                    children=[
                html.Div(className="sh-view-row", children=[
                    html.Label("Week", htmlFor=ids.WEEK_PICKER, className="sh-view-label"),
                    dcc.Dropdown(id=ids.WEEK_PICKER, options=week_options(), value="worst", clearable=False,
                                 searchable=False, className="sh-week-picker"),
                ]),
                html.P(id=ids.WEEK_CAPTION, className="sh-note"),
                dcc.Loading(type="circle", color="#0072B2", delay_show=250,
                            children=_graph(ids.FIG_WEEK, "the week appears here", 520)),
            ]),
            sizing_tab(),
            risk_tab(),
            dcc.Tab(label="Portfolio", value=ids.TAB_PORTFOLIO, className="sh-tab", selected_className="sh-tab-on",
                    children=[
                html.P("Every loaded spot with its best source (fewest deficit days, then earliest first wake, "
                       "then most energy). Click a column title to sort; click a spot to open it.",
                       className="sh-note"),
                html.Ul([html.Li(e) for e in load_errors], id=ids.LOAD_ERRORS, className="sh-msg-list"),
                dcc.Loading(type="circle", color="#0072B2", delay_show=250, children=_portfolio_table()),
            ]),
        ]),
    ])
    return html.Div(className="sh-app", children=[
        dcc.Store(id=ids.SPOTS, data=spots),
        dcc.Store(id=ids.FILES, data={}),
        dcc.Store(id=ids.FORM_REV, data=0),
        header,
        html.Main(className="sh-main", children=[editor, results]),
        html.Footer(className="sh-foot", children=[
            "Results are estimates from models and typical figures; check the spot and the parts before "
            "relying on them. Safety notes are general guidance and defer to local codes and licensed practice.",
        ]),
    ])


def _portfolio_table() -> Any:
    with warnings.catch_warnings():
        # DataTable is deprecated in favour of a grid package we do not ship; it still works in Dash 4.
        warnings.simplefilter("ignore", DeprecationWarning)
        return dash_table.DataTable(
            id=ids.PORTFOLIO_TABLE, columns=PORTFOLIO_COLUMNS, data=[], sort_action="native",
            style_as_list_view=True, cell_selectable=True,
            style_table={"overflowX": "auto"},
            style_header={"fontWeight": "600", "backgroundColor": "#eef2f6", "whiteSpace": "normal",
                          "height": "auto", "textAlign": "left"},
            style_cell={"fontFamily": FONT_STACK, "fontSize": "13px", "padding": "6px 8px",
                        "textAlign": "left", "whiteSpace": "normal", "height": "auto"},
            style_cell_conditional=[{"if": {"column_type": "numeric"}, "textAlign": "right"},
                                    {"if": {"column_id": "spot"}, "minWidth": "200px"},
                                    *[{"if": {"column_id": c}, "whiteSpace": "nowrap"}
                                      for c in ("best", "verdict", "together")]],
            style_data_conditional=[
                {"if": {"filter_query": f'{{verdict}} = "{w}"', "column_id": "verdict"},
                 "fontWeight": "600", "color": c}
                for w, c in (("self-sufficient", "#00664a"), ("insufficient", "#a63f00"),
                             ("never starts", "#a63f00"))],
        )

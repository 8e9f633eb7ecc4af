"""The page: header with the spot picker and site-file buttons, the editor on the left, results right."""

from __future__ import annotations

import json
from typing import Any

import dash_ag_grid as dag
from dash import dcc, html

from siteharvest.findings import PICK_RULE
from siteharvest.metrics import INSUFFICIENT, NEVER_STARTS, VERDICTS

from . import ids
from .editor import render_editor
from .figures import empty_figure
from .layout_study import portfolio_report_buttons, report_buttons, report_message, risk_tab, sizing_tab
from .tables import NOT_ASSESSED, PORTFOLIO_COLUMNS, RANKED, VERDICT_CLASS, VERDICT_MEANING

FONT_STACK = ('system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", "Noto Sans", "Liberation Sans", '
              'Arial, sans-serif')
RESULTS_ID = "sh-results"  # the skip link's target
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
            dcc.Upload(id=ids.SITE_UPLOAD, multiple=True, className="sh-site-upload",
                       children=html.Button("Open site files…", className="sh-button", type="button",
                                            title="a site file (.toml), chosen together with the weather "
                                                  "or survey files it names")),
            html.Button("Save as site file", id=ids.SITE_DOWNLOAD_BUTTON, n_clicks=0, className="sh-button",
                        type="button"),
            dcc.Download(id=ids.SITE_DOWNLOAD),
            *report_buttons(),
        ]),
        html.Div(id=ids.SITE_UPLOAD_MSG, className="sh-msg sh-top-msg", role="alert"),
        html.Div(className="sh-problem", children=[
            html.Span(id=ids.PROBLEM, role="alert"),
            html.Button("Dismiss", id=ids.PROBLEM_CLOSE, n_clicks=0, className="sh-button sh-problem-close",
                        type="button"),
        ]),
        report_message(),
    ])
    editor = html.Aside(className="sh-editor-pane", children=[
        html.H2("The spot"),
        html.Div(className="sh-spot-actions", children=[
            html.Button("New blank spot", id=ids.NEW_SPOT_BUTTON, n_clicks=0, className="sh-button sh-small",
                        type="button", title="a spot with one solar panel on a synthetic year, to fill in"),
            html.Button("Duplicate this spot", id=ids.DUPLICATE_SPOT_BUTTON, n_clicks=0,
                        className="sh-button sh-small", type="button",
                        title="a copy of the spot shown, to try a change beside the original"),
        ]),
        html.P("Every field of the site file, grouped by what it describes. Press Enter or leave a field "
               "to apply it; a value that does not fit is explained beside it and the results keep the "
               "last good spot.", className="sh-note"),
        html.Div(id=ids.EDITOR_MSG, className="sh-msg", role="alert"),
        html.Div(id=ids.EDITOR_NOTE, className="sh-info", role="status"),
        html.Div(id=ids.EDITOR, className="sh-editor",
                 children=render_editor(spots[first]["site"], {}, None)),
    ])
    results = html.Section(id=RESULTS_ID, className="sh-results", tabIndex="-1", **{"aria-label": "Results"}, children=[
        html.Div("Updating the results…", className="sh-busy-line", role="status"),
        dcc.Loading(type="circle", color="#0072B2", delay_show=250, children=html.Div([
            html.Div(id=ids.STATUS, className="sh-status"),
            # the table scrolls sideways in this box on a narrow screen: a stop of its own, so the keys scroll it
            html.Div(id=ids.SUMMARY, className="sh-summary", tabIndex="0", role="region",
                     **{"aria-label": "Summary of the sources"}),
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
                html.P(f"Every loaded spot with its best source. {PICK_RULE} Weather year: FAR where the "
                       "weather file's station does not stand for the spot. Click a column title to sort; click a "
                       "spot, or press Space on it, to open it.",
                       className="sh-note"),
                html.Ul([html.Li(e) for e in load_errors], id=ids.LOAD_ERRORS, className="sh-msg-list"),
                portfolio_report_buttons(),
                dcc.Loading(type="circle", color="#0072B2", delay_show=250, children=_portfolio_table()),
            ]),
        ]),
    ])
    return html.Div(className="sh-app", children=[
        # kept in the tab's session storage: a reload keeps the spots as edited (and their uploads)
        dcc.Store(id=ids.SPOTS, data=spots, storage_type="session"),
        dcc.Store(id=ids.SESSION, data=None, storage_type="session"),
        dcc.Store(id=ids.FORM_REV, data=0),
        dcc.Store(id=ids.VIEW_KEY, data=""),
        html.A("Skip to the results", href=f"#{RESULTS_ID}", className="sh-skip"),
        header,
        html.Main(className="sh-main", children=[editor, results]),
        html.Footer(className="sh-foot", children=[
            "Results are estimates from models and typical figures; check the spot and the parts before "
            "relying on them. Safety notes are general guidance and defer to local codes and licensed practice.",
        ]),
    ])


# The portfolio grid. Its expressions are strings that dash-ag-grid evaluates in the browser (no eval).
MISSING = "—"
NUMBER_TEXT = (f"params.value == null ? '{MISSING}' : params.value === 0 ? '0' : Math.abs(params.value) < 1000 "
               "? d3.format('.3~g')(params.value) : d3.format(',.0f')(params.value)")  # like tables.fmt
TEXT_OR_DASH = f"params.value == null || params.value === '' ? '{MISSING}' : params.value"
IS_NOT_ASSESSED = f"params.data.verdict != null && params.data.verdict.indexOf({json.dumps(NOT_ASSESSED)}) === 0"
GOOD, BAD = "#00664a", "#a63f00"
VERDICT_STYLE = {
    "styleConditions": [
        *[{"condition": f"params.data.verdict === {json.dumps(words)}",
           "style": {"color": colour, "fontWeight": "650"}}
          for words, colour in ((VERDICTS[0][1], GOOD), (INSUFFICIENT, BAD), (NEVER_STARTS, BAD))],
        {"condition": IS_NOT_ASSESSED, "style": {"color": BAD, "fontWeight": "400"}},
    ],
    "defaultStyle": {"fontWeight": "650"},
}
# (flex, minimum width in px) of each column; the minimums add up to 800 px, which fits the tab in a
# 1280 px wide window with the verdicts on one line. A number's column leaves room for its longest
# header word (the sort arrow sits in the header's corner, see the CSS).
PORTFOLIO_WIDTHS = {"spot": (2.8, 170), "best": (1.1, 100), "verdict": (1.1, 118), "together": (1.1, 116)}
NUMBER_WIDTH = (0.9, 74)


def _theme() -> dict[str, str]:
    """The grid's built-in theme with the dashboard's font and colours (see assets/siteharvest.css)."""
    params = {"fontFamily": FONT_STACK, "fontSize": 13, "headerFontSize": 12, "headerFontWeight": 650,
              "foregroundColor": "#1d232b", "headerTextColor": "#24415f", "headerBackgroundColor": "#eef2f6",
              "borderColor": "#d5dbe3", "rowBorder": {"color": "#edf0f4"}, "accentColor": "#0072B2",
              "rowHoverColor": "#e8f2fa", "wrapperBorderRadius": 8, "spacing": 5, "cellHorizontalPadding": 6,
              "headerColumnResizeHandleColor": "#c4ccd6"}
    return {"function": f"themeQuartz.withParams({json.dumps(params)})"}


def portfolio_column_defs() -> list[dict[str, Any]]:
    """The grid's columns from PORTFOLIO_COLUMNS: numbers right-aligned, formatted, sorted as numbers."""
    names = [c["id"] for c in PORTFOLIO_COLUMNS]
    # a spot that could not be assessed: its message spans the verdict, number and all-together columns
    error_span = names.index("together") - names.index("verdict") + 1
    out = []
    for col in PORTFOLIO_COLUMNS:
        numeric = col["type"] == "numeric"
        flex, min_width = PORTFOLIO_WIDTHS.get(col["id"], NUMBER_WIDTH)
        d: dict[str, Any] = {"field": col["id"], "headerName": col["name"], "flex": flex, "minWidth": min_width,
                             "valueFormatter": {"function": NUMBER_TEXT if numeric else TEXT_OR_DASH}}
        if numeric:
            d.update(type="numericColumn", cellDataType="number", cellClass=["ag-right-aligned-cell", "sh-grid-num"])
        else:
            d.update(cellDataType="text", wrapText=True, autoHeight=True)
        if col["id"] == "spot":  # the site file under the name (assets/dashAgGridComponentFunctions.js)
            d.update(cellRenderer="SpotWithFile", tooltipField="file")
        if col["id"] in RANKED:  # holds the verdict's rank (sorts best first), shows its words
            d.update(colId=col["id"], field=f"{col['id']}_rank", cellDataType="number",
                     valueFormatter={"function": f"params.data.{col['id']}"})
        if col["id"] == "verdict":
            d.update(cellStyle=VERDICT_STYLE, colSpan={"function": f"{IS_NOT_ASSESSED} ? {error_span} : 1"})
        out.append(d)
    return out


def _portfolio_table() -> dag.AgGrid:
    """Every loaded spot, one row each; the grid names a row by its spot's key, so a click opens that spot."""
    return dag.AgGrid(
        id=ids.PORTFOLIO_TABLE, className="sh-grid", columnDefs=portfolio_column_defs(), rowData=[],
        defaultColDef={"sortable": True, "resizable": True, "editable": False, "filter": False,
                       "wrapHeaderText": True, "autoHeaderHeight": True, "suppressMovable": True},
        getRowId="params.data.key",
        dashGridOptions={"domLayout": "autoHeight", "theme": _theme(), "animateRows": False,
                         "rowSelection": {"mode": "singleRow", "checkboxes": False, "enableClickSelection": True},
                         "localeText": {"noRowsToShow": "No spots to show."}},
        style={"height": None, "width": "100%"},
    )

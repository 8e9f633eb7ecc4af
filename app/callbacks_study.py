"""Callbacks of the study views: what it takes (sizing map), weather risk, and the report download.

Plain functions over the stores' contents, registered by :func:`register` (called from
:func:`siteharvest_app.callbacks.register`). The sizing and risk views compute only while their tab is open, and
their results are memoised by the spot's content (the site dict, its folder and the digests of the
files it names) plus the view's own inputs, like the engine's assessment cache.
"""

from __future__ import annotations

import contextlib
import logging
import math
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import dash
from dash import Input, Output, State, dcc, html, no_update
from dash.exceptions import MissingCallbackContextException, PreventUpdate

from siteharvest.assess import COMBINED_ID, Assessment, CaseResult
from siteharvest.errors import SiteInputError
from siteharvest.findings import case_finding, case_label, interval_finding, sizing_finding
from siteharvest.site import SiteSpec
from siteharvest.sizing import (
    SEED_RANGE,
    ReportInterval,
    SizingMap,
    WeatherRisk,
    report_interval,
    sizing_map,
    stops_in_outage,
    weather_risk,
)
from siteharvest.sources import SOURCE_KINDS

from . import ids
from .engine import (
    MemoCache,
    _key,
    assessment_for,
    clean_message,
    content_key,
    spec_for,
)
from .figures import empty_figure, find_case
from .figures_sizing import risk_histogram, sizing_heatmap
from .layout_study import (
    OUTAGE_DAYS_MAX,
    OUTAGE_DAYS_MIN,
    OUTAGE_RATE_MAX,
    RISK_YEARS_MAX,
    RISK_YEARS_MIN,
)

log = logging.getLogger(__name__)
Trigger = tuple[Any, Any]

SIZING_STEPS = 24  # sizes per axis of the dashboard's map (the CLI's default is 40)
REPORT_SIZING_STEPS = 16  # modest settings: the report of one spot in a few seconds
REPORT_RISK_YEARS = 100
MAX_TARGET_DAYS = 365

SIZING_STUDIES = MemoCache(16)  # (sizing map, report interval), by spot content, case, target and steps
RISK_STUDIES = MemoCache(8)  # weather risks, by spot content and the risk inputs


def _problem(exc: Exception) -> str:
    text = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
    return clean_message(text)


def _whole(value: Any, low: int, high: int | None) -> int | None:
    """``value`` as a whole number within [low, high], else None."""
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        return None
    if value != round(value) or value < low or (high is not None and value > high):
        return None
    return round(value)


def _number(value: Any, low: float, high: float) -> float | None:
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        return None
    return float(value) if low <= value <= high else None


def _case_name(case_id: str) -> str:
    return case_label(case_id)


def _not_simulated(exc: Exception) -> html.Div:
    return html.Div([html.Strong("This spot cannot be simulated yet: "), _problem(exc)], className="sh-status-bad",
                    role="alert")


# --------------------------------------------------------------------------------------------------
# what it takes


def sync_target(key: str, spots: dict[str, Any], shown_for: list[Any] | None) -> tuple[int, list[Any]]:
    """Put the spot's own target into the "try another target" input when the spot or its target changes.

    Returns (input value, [spot key, target] it was set from); a target typed by hand stays until then.
    """
    if not spots or key not in spots:
        raise PreventUpdate
    target = int(((spots[key]["site"].get("run") or {}).get("target_deficit_days")) or 0)
    if shown_for is not None and list(shown_for) == [key, target]:
        raise PreventUpdate
    return target, [key, target]


def sizing_study(a: Assessment, record: dict[str, Any], session: str | None, case_id: str,
                 target: int, *, knob: str | None = None, task: str | None = None,
                 ) -> tuple[SizingMap | None, ReportInterval | None]:
    """The sizing map (single sources only) and the fastest sustainable reporting, memoised.

    ``knob`` is the size the map varies (None: the kind's default), ``task`` the task whose interval the
    reporting search varies (None: the library's choice)."""
    def make() -> tuple[SizingMap | None, ReportInterval | None]:
        prep = a.prepared
        m = None if case_id == COMBINED_ID else sizing_map(prep, case_id, n_harvester=SIZING_STEPS,
                                                             n_store=SIZING_STEPS, max_deficit_days=target,
                                                             knob=knob)
        return m, report_interval(prep, case_id, max_deficit_days=target, task=task)

    key = _key("sizing", content_key(record, session), case_id, target, SIZING_STEPS, knob, task)
    return SIZING_STUDIES.get_or_make(key, make)


def study_choices(key: str, case_id: str | None, spots: dict[str, Any], knob: str | None,
                  task: str | None) -> tuple[list[dict[str, str]], str, list[dict[str, str]], str]:
    """The sizes the chosen source can vary and the spot's tasks, for the two pickers of the sizing view.

    Returns (knob options, knob value, task options, task value); a choice the spot no longer has goes back
    to the default ("": the kind's first knob, the task the library picks)."""
    if not spots or key not in spots:
        raise PreventUpdate
    site = spots[key].get("site") or {}
    source = next((s for s in site.get("source") or [] if isinstance(s, dict) and s.get("id") == case_id), None)
    knobs: list[dict[str, str]] = []
    if source is not None and source.get("kind") in SOURCE_KINDS:
        record = SOURCE_KINDS[source["kind"]]
        knobs = [{"label": k.label + (" (default)" if n == 0 else ""), "value": "" if n == 0 else k.field}
                 for n, k in enumerate(record.size_knobs)]
    if not knobs:
        knobs = [{"label": "choose a single source above", "value": ""}]
    names = [str(t.get("name")) for t in (site.get("node") or {}).get("task") or [] if isinstance(t, dict)]
    tasks = [{"label": "the report task (chosen for you)", "value": ""}] + [{"label": n, "value": n} for n in names]
    knob_value = knob if knob in {o["value"] for o in knobs} else ""
    task_value = task if task in {o["value"] for o in tasks} else ""
    return knobs, knob_value, tasks, task_value


def sizing_words(a: Assessment, case: CaseResult, m: SizingMap | None, iv: ReportInterval | None,
                 target: int) -> list[Any]:
    """The plain-words lines under the sizing map, from the library's findings: as drawn, the pick (or
    none), the edge, a bigger store doing worse, and the fastest sustainable reporting."""
    own = a.spec.run.target_deficit_days
    lines: list[Any] = []
    if m is not None and case.id != COMBINED_ID:
        found = sizing_finding(m, case, own_target=own)
        lines.append(html.P(found.drawn_sentence, className="sh-good" if found.meets_as_drawn else "sh-bad"))
        lines.append(html.P(" ".join(s for s in (found.pick_sentence, found.edge_sentence) if s), className="sh-pick"))
        if found.bigger_store_sentence:
            lines.append(html.P(found.bigger_store_sentence, className="sh-note"))
    else:
        f = case_finding(a, case)
        tried = "" if target == own else f" (tried here with at most {target}; the spot's own is {own})"
        lines.append(html.P(f.sentence[:-1] + tried + ".", className="sh-good" if f.meets_target else "sh-bad"))
        lines.append(html.P("The sizing map varies one source's harvester and the store: choose a single source "
                            "above to see it."))
    lines.append(html.P(interval_finding(iv).sentence if iv is not None
                        else "The node has no task whose interval could change."))
    return lines


SHOWN = {"height": "520px"}
HIDDEN = {"display": "none"}


def _open_view_record(tab: str | None, view: str, spots: dict[str, Any], key: str) -> dict[str, Any]:
    """The chosen spot's record when ``view`` is the open tab; otherwise no update at all."""
    if tab != view or not spots or key not in spots:
        raise PreventUpdate
    return spots[key]


def sizing_view(tab: str | None, case_id: str | None, target: Any, spots: dict[str, Any], key: str,
                session: str | None, *, knob: str | None = None, task: str | None = None) -> tuple[Any, Any, Any]:
    """The sizing map of the chosen source and its plain-words line (only while the tab is open).

    Returns (figure, words, style of the figure: hidden when there is no map to draw).
    """
    record = _open_view_record(tab, ids.TAB_SIZING, spots, key)
    try:
        a = assessment_for(record, session)
    except (SiteInputError, ValueError) as exc:
        return empty_figure("no sizing map", 520), _not_simulated(exc), HIDDEN
    t = a.spec.run.target_deficit_days if target is None else _whole(target, 0, MAX_TARGET_DAYS)
    if t is None:
        return no_update, html.P(f"The target must be a whole number of deficit days from 0 to {MAX_TARGET_DAYS}.",
                                 className="sh-msg"), no_update
    case = find_case(a, case_id)
    try:
        m, iv = sizing_study(a, record, session, case.id, t, knob=knob or None, task=task or None)
    except (SiteInputError, ValueError, KeyError) as exc:
        return (empty_figure("no sizing map", 520),
                html.P(f"The sizing study could not be run: {_problem(exc)}", className="sh-msg"), HIDDEN)
    words = sizing_words(a, case, m, iv, t)
    if m is None:
        return empty_figure("choose a single source above to see its sizing map", 520), words, HIDDEN
    return sizing_heatmap(m), words, SHOWN


# --------------------------------------------------------------------------------------------------
# weather risk


def outage_note(a: Assessment) -> str:
    hit = [s.id for s in a.spec.source if stops_in_outage(s.kind)]
    if not hit:
        return "Outages stop heat and vibration sources only; this spot has none, so they change nothing here."
    return f"Outages stop the heat and vibration sources ({', '.join(hit)}); the other sources run on."


def risk_study(a: Assessment, record: dict[str, Any], session: str | None, years: int, seed: int,
               rate: float, mean_days: float) -> WeatherRisk:
    """Deficit days over resampled years for every case (memoised)."""
    if not any(stops_in_outage(s.kind) for s in a.spec.source):
        rate = 0.0  # outages act on nothing: share the entry
    key = _key("risk", content_key(record, session), years, seed, rate, mean_days)
    return RISK_STUDIES.get_or_make(key, lambda: weather_risk(a.prepared, years=years, seed=seed,
                                                              outage_rate_per_year=rate, outage_mean_days=mean_days))


def fmt_days(value: float) -> str:
    """Deficit days as read in the table: whole numbers plain, percentiles between years to 0.1 day."""
    text = f"{value:.1f}"
    return text[:-2] if text.endswith(".0") else text


def fmt_chance(value: float) -> str:
    return f"{100 * value:.3g}%"


RISK_COLUMNS = (("source", "Source", ""), ("reference", "Reference year", "days/yr"), ("p50", "P50", "days/yr"),
                ("p90", "P90", "days/yr"), ("p99", "P99", "days/yr"),
                ("chance_any", "Years with any deficit day", "%"))


def risk_table(a: Assessment, risk: WeatherRisk, chosen: str) -> html.Table:
    head = html.Thead(html.Tr([html.Th([title, html.Span(f" [{unit}]", className="sh-th-unit") if unit else None],
                                       className=f"sh-col-{col}") for col, title, unit in RISK_COLUMNS]))
    rows = []
    for case in a.cases:
        s = risk.summary(case.id)
        cells = [html.Td(_case_name(case.id), className="sh-col-source"),
                 html.Td(str(case.deficit_days), className="sh-col-reference"),
                 *[html.Td(fmt_days(s[k]), className=f"sh-col-{k}") for k in ("p50", "p90", "p99")],
                 html.Td(fmt_chance(s["chance_any"]), className="sh-col-chance_any")]
        cls = " ".join(c for c in ("sh-row-combined" if case.id == COMBINED_ID else "",
                                   "sh-row-chosen" if case.id == chosen else "") if c)
        rows.append(html.Tr(cells, className=cls or None, **{"data-case": case.id}))
    caption = html.Caption(f"Deficit days over {risk.years} resampled years (seed {risk.seed}); P90: nine years "
                           "in ten have at most this many.")
    return html.Table([caption, head, html.Tbody(rows)], className="sh-table sh-risk")


def risk_view(tab: str | None, case_id: str | None, years: Any, seed: Any, rate: Any, mean_days: Any,
              spots: dict[str, Any], key: str, session: str | None) -> tuple[Any, ...]:
    """Deficit days over resampled years, for the chosen source and all together (only while the tab is open).

    Returns (table, figure of the chosen source, figure of all together, style of the latter's box, message line,
    note on outages).
    """
    record = _open_view_record(tab, ids.TAB_RISK, spots, key)
    try:
        a = assessment_for(record, session)
    except (SiteInputError, ValueError) as exc:
        blank = empty_figure("no weather risk: see the message", 420)
        return _not_simulated(exc), blank, blank, {"display": "none"}, "", ""
    problems = []
    n_years = _whole(years, RISK_YEARS_MIN, RISK_YEARS_MAX)
    if n_years is None:
        problems.append(f"years: a whole number from {RISK_YEARS_MIN} to {RISK_YEARS_MAX}")
    n_seed = _whole(seed, *SEED_RANGE)
    if n_seed is None:
        problems.append(f"seed: a whole number from {SEED_RANGE[0]} to {SEED_RANGE[1]}")
    n_rate = _number(rate, 0.0, OUTAGE_RATE_MAX)
    if n_rate is None:
        problems.append(f"outages: from 0 to {OUTAGE_RATE_MAX:g} a year")
    n_days = _number(mean_days, OUTAGE_DAYS_MIN, OUTAGE_DAYS_MAX)
    if n_days is None:
        problems.append(f"mean outage length: from {OUTAGE_DAYS_MIN:g} to {OUTAGE_DAYS_MAX:g} days")
    if problems:
        message = "Showing the last good result; " + "; ".join(problems) + "."
        return no_update, no_update, no_update, no_update, message, outage_note(a)
    assert n_years is not None and n_seed is not None and n_rate is not None and n_days is not None
    case = find_case(a, case_id)
    try:
        risk = risk_study(a, record, session, n_years, n_seed, n_rate, n_days)
    except (SiteInputError, ValueError) as exc:
        blank = empty_figure("no weather risk", 420)
        return [], blank, blank, {"display": "none"}, f"The weather risk could not be run: {_problem(exc)}", ""
    fig = risk_histogram(risk, case.id)
    both = risk_histogram(risk, COMBINED_ID)
    style = {"display": "none"} if case.id == COMBINED_ID else {}
    return risk_table(a, risk, case.id), fig, both, style, "", outage_note(a)


# --------------------------------------------------------------------------------------------------
# report


@contextlib.contextmanager
def report_spec(record: dict[str, Any], session: str | None) -> Iterator[SiteSpec]:
    """The spot as a SiteSpec whose files resolve by the dashboard's one rule and carry the names its site
    file gives them (the report lists and hashes them under those names)."""
    yield spec_for(record, session)


def _report_filename(record: dict[str, Any], key: str, fmt: str) -> str:
    stem = Path(record.get("file") or key).stem or "spot"
    return f"{stem}-report.{fmt}"


def download_report(pdf_clicks: int | None, html_clicks: int | None, key: str, spots: dict[str, Any],
                    session: str | None, *, trigger: Trigger | None = None) -> tuple[Any, str]:
    """The report of the current spot (the last good values and its uploads), as PDF or HTML bytes.

    Returns (dcc.Download data, message line). A failure leaves the download alone and says why in one line.
    """
    which = trigger[0] if trigger is not None else _triggered_id()
    if which not in (ids.REPORT_PDF_BUTTON, ids.REPORT_HTML_BUTTON) or key not in (spots or {}):
        raise PreventUpdate
    clicks = pdf_clicks if which == ids.REPORT_PDF_BUTTON else html_clicks
    if not clicks:
        raise PreventUpdate
    fmt = "pdf" if which == ids.REPORT_PDF_BUTTON else "html"
    record = spots[key]
    from . import report

    try:
        with report_spec(record, session) as spec:
            content = report.build_report(spec, fmt=fmt, sizing_steps=REPORT_SIZING_STEPS,
                                          risk_years=REPORT_RISK_YEARS)
    except (report.ReportError, SiteInputError, ValueError, OSError) as exc:
        log.warning("report of %s failed: %s", key, exc)
        return no_update, f"The report could not be made: {_problem(exc)}"
    kind = "application/pdf" if fmt == "pdf" else "text/html"
    return dcc.send_bytes(content, _report_filename(record, key, fmt), type=kind), ""


def download_portfolio_report(pdf_clicks: int | None, html_clicks: int | None, spots: dict[str, Any],
                              session: str | None, *, trigger: Trigger | None = None) -> tuple[Any, str]:
    """The report of every loaded spot (their last good values and uploads), ranked, as PDF or HTML bytes.

    A spot that cannot be studied is listed on the cover with its error; a spot whose files cannot be
    laid out is left out and named in the message line. Returns (dcc.Download data, message line).
    """
    which = trigger[0] if trigger is not None else _triggered_id()
    if which not in (ids.PORTFOLIO_PDF_BUTTON, ids.PORTFOLIO_HTML_BUTTON) or not spots:
        raise PreventUpdate
    clicks = pdf_clicks if which == ids.PORTFOLIO_PDF_BUTTON else html_clicks
    if not clicks:
        raise PreventUpdate
    fmt = "pdf" if which == ids.PORTFOLIO_PDF_BUTTON else "html"
    from . import report

    left_out: list[str] = []
    try:
        with contextlib.ExitStack() as stack:
            specs = []
            for key, record in spots.items():
                try:
                    specs.append(stack.enter_context(report_spec(record, session)))
                except (SiteInputError, ValueError, OSError) as exc:
                    left_out.append(f"{record.get('file') or key}: {_problem(exc)}")
            if not specs:
                raise SiteInputError("at least one spot that can be laid out for the report", field="portfolio")
            content = report.build_report(specs, fmt=fmt, sizing_steps=REPORT_SIZING_STEPS,
                                          risk_years=REPORT_RISK_YEARS)
    except (report.ReportError, SiteInputError, ValueError, OSError) as exc:
        log.warning("portfolio report failed: %s", exc)
        return no_update, f"The report could not be made: {_problem(exc)}"
    kind = "application/pdf" if fmt == "pdf" else "text/html"
    note = ("Left out (their files could not be laid out): " + "; ".join(left_out)) if left_out else ""
    return dcc.send_bytes(content, f"portfolio-report.{fmt}", type=kind), note


def _triggered_id() -> Any:
    try:
        return dash.ctx.triggered_id
    except MissingCallbackContextException:  # called outside a Dash request
        return None


# --------------------------------------------------------------------------------------------------


def register(app: dash.Dash) -> None:
    """Wire the study views and the report buttons to ``app``."""
    from .report_queue import one_report_at_a_time  # one report browser at a time per server

    # the spot's own target and the pickers' choices follow the spot in callbacks_results.show_spot; here they
    # follow a source chosen by hand
    def study_choices_cb(case_id: str | None, key: str, spots: dict[str, Any], knob: str | None,
                         task: str | None) -> tuple[Any, Any, Any, Any]:
        knobs, knob_out, tasks, task_out = study_choices(key, case_id, spots, knob, task)
        return (knobs, no_update if knob_out == knob else knob_out,
                tasks, no_update if task_out == task else task_out)

    app.callback(
        *[Output(c, p, allow_duplicate=True) for c in (ids.SIZING_KNOB, ids.SIZING_TASK) for p in ("options", "value")],
        Input(ids.CASE_PICKER, "value"), State(ids.SPOT_PICKER, "value"), State(ids.SPOTS, "data"),
        State(ids.SIZING_KNOB, "value"), State(ids.SIZING_TASK, "value"),
        prevent_initial_call=True,
    )(study_choices_cb)

    def sizing_view_cb(tab: str | None, case_id: str | None, target: Any, knob: str | None, task: str | None,
                       _view: Any, spots: dict[str, Any], key: str, session: str | None) -> tuple[Any, Any, Any]:
        return sizing_view(tab, case_id, target, spots, key, session, knob=knob, task=task)

    app.callback(
        Output(ids.FIG_SIZING, "figure"), Output(ids.SIZING_TEXT, "children"), Output(ids.FIG_SIZING, "style"),
        Input(ids.TABS, "value"), Input(ids.CASE_PICKER, "value"), Input(ids.SIZING_TARGET, "value"),
        Input(ids.SIZING_KNOB, "value"), Input(ids.SIZING_TASK, "value"), Input(ids.VIEW_KEY, "data"),
        State(ids.SPOTS, "data"), State(ids.SPOT_PICKER, "value"), State(ids.SESSION, "data"),
        prevent_initial_call=True,
    )(sizing_view_cb)

    def risk_view_cb(tab: str | None, case_id: str | None, years: Any, seed: Any, rate: Any, mean_days: Any,
                     _view: Any, spots: dict[str, Any], key: str, session: str | None) -> tuple[Any, ...]:
        return risk_view(tab, case_id, years, seed, rate, mean_days, spots, key, session)

    app.callback(
        Output(ids.RISK_TABLE, "children"), Output(ids.FIG_RISK, "figure"), Output(ids.FIG_RISK_ALL, "figure"),
        Output(ids.RISK_ALL_WRAP, "style"), Output(ids.RISK_MSG, "children"),
        Output(ids.RISK_OUTAGE_NOTE, "children"),
        Input(ids.TABS, "value"), Input(ids.CASE_PICKER, "value"), Input(ids.RISK_YEARS, "value"),
        Input(ids.RISK_SEED, "value"), Input(ids.RISK_OUTAGE_RATE, "value"), Input(ids.RISK_OUTAGE_DAYS, "value"),
        Input(ids.VIEW_KEY, "data"),
        State(ids.SPOTS, "data"), State(ids.SPOT_PICKER, "value"), State(ids.SESSION, "data"),
        prevent_initial_call=True,
    )(risk_view_cb)

    app.callback(
        Output(ids.REPORT_DOWNLOAD, "data"), Output(ids.REPORT_MSG, "children"),
        Input(ids.REPORT_PDF_BUTTON, "n_clicks"), Input(ids.REPORT_HTML_BUTTON, "n_clicks"),
        State(ids.SPOT_PICKER, "value"), State(ids.SPOTS, "data"), State(ids.SESSION, "data"),
        running=[(Output(ids.REPORT_PDF_BUTTON, "disabled"), True, False),
                 (Output(ids.REPORT_HTML_BUTTON, "disabled"), True, False),
                 (Output(ids.REPORT_BUSY, "children"),
                  "Preparing the report (queued while another is made: one at a time)…", "")],
        prevent_initial_call=True,
    )(one_report_at_a_time(download_report))

    app.callback(
        Output(ids.PORTFOLIO_DOWNLOAD, "data"), Output(ids.PORTFOLIO_MSG, "children"),
        Input(ids.PORTFOLIO_PDF_BUTTON, "n_clicks"), Input(ids.PORTFOLIO_HTML_BUTTON, "n_clicks"),
        State(ids.SPOTS, "data"), State(ids.SESSION, "data"),
        running=[(Output(ids.PORTFOLIO_PDF_BUTTON, "disabled"), True, False),
                 (Output(ids.PORTFOLIO_HTML_BUTTON, "disabled"), True, False),
                 (Output(ids.PORTFOLIO_BUSY, "children"),
                  "Preparing the portfolio report (about a second a spot; queued while another is made)…", "")],
        prevent_initial_call=True,
    )(one_report_at_a_time(download_portfolio_report))

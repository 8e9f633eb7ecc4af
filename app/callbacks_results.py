"""How the results follow an edit: one answer per change of the spot, and only the open view computed.

Every round trip costs the page more than the work it carries (each answer makes the browser revisit
every component of the page), so a change of the spot is answered by one callback, :func:`show_spot`:
the spot list, the status, the table, the cautions, the sources figure, the source choices and the sizing
target, and, when another view (or the portfolio) is open, a new ``VIEW_KEY`` that tells it to redraw.
A view that is not open is not computed; opening its tab computes it from the cached assessment.
Outputs that did not change are sent as "no update", so nothing that depends on them runs again.
"""

from __future__ import annotations

from typing import Any

import dash
from dash import Input, Output, State, no_update
from dash.exceptions import PreventUpdate

from siteharvest.errors import SiteInputError

from . import ids
from .engine import PORTFOLIO_ROWS, assessment_for, content_key
from .figures import case_calendar_figure, case_year_figure, empty_figure, find_case

CASE_TABS = (ids.TAB_YEAR, ids.TAB_CALENDAR, ids.TAB_WEEK)
VIEW_TABS = (*CASE_TABS, ids.TAB_SIZING, ids.TAB_RISK)
SHOW_SPOT_OUTPUTS = (
    (ids.SPOT_PICKER, "options"), (ids.STATUS, "children"), (ids.SUMMARY, "children"), (ids.CAUTIONS, "children"),
    (ids.NOTES, "children"), (ids.FIG_SOURCES, "figure"), (ids.CASE_PICKER, "options"), (ids.CASE_PICKER, "value"),
    (ids.SIZING_TARGET, "value"), (ids.SIZING_TARGET_FROM, "data"), (ids.VIEW_KEY, "data"),
    (ids.SIZING_KNOB, "options"), (ids.SIZING_KNOB, "value"), (ids.SIZING_TASK, "options"), (ids.SIZING_TASK, "value"),
)


def portfolio_rows(spots: dict[str, Any], session: str | None) -> list[dict[str, Any]]:
    """Every loaded spot's portfolio row, each cached by the spot's content (rows are small: thousands fit)."""
    from .callbacks import _problem_text
    from .tables import portfolio_row

    rows = []
    for key, record in spots.items():
        file = record.get("file", "") if isinstance(record, dict) else ""
        try:
            row_key = f"{content_key(record, session)}|{key}|{file}"
            rows.append(PORTFOLIO_ROWS.get_or_make(
                row_key, lambda k=key, r=record, f=file: portfolio_row(k, f, assessment_for(r, session))))
        except (SiteInputError, ValueError, KeyError, TypeError) as exc:
            name = ((record.get("site") or {}).get("spot") or {}).get("name", key) if isinstance(record, dict) else key
            rows.append(portfolio_row(key, file, None, _problem_text(exc), str(name)))
    return rows


def show_spot(spots: dict[str, Any], key: str, tab: str | None, session: str | None, case_value: str | None,
              target_from: list[Any] | None, knob: str | None = "", task: str | None = "", *,
              spots_changed: bool = True) -> tuple[Any, ...]:
    """The whole answer to a change of the spots or of the chosen spot, in :data:`SHOW_SPOT_OUTPUTS` order.

    The portfolio's rows are redrawn (through ``VIEW_KEY``) only when the spots changed: choosing a spot leaves
    them, and the grid's sorting and focus, as they are."""
    from .callbacks import picker_options, recompute
    from .callbacks_study import study_choices, sync_target

    if not spots or key not in spots:
        raise PreventUpdate
    status, summary, cautions, notes, figure, case_options, case_out = recompute(spots, key, session, case_value)
    try:
        target, target_shown_for = sync_target(key, spots, target_from)
    except PreventUpdate:
        target, target_shown_for = no_update, no_update
    if tab in VIEW_TABS:
        view: Any = content_key(spots[key], session) + f"|{key}"
    elif tab == ids.TAB_PORTFOLIO and spots_changed:
        view = f"portfolio|{len(spots)}|" + "|".join(content_key(r, session) for r in spots.values())
    else:
        view = no_update
    knobs, knob_out, tasks, task_out = study_choices(key, case_out, spots, knob, task)
    return (picker_options(spots), status, summary, cautions, notes, figure, case_options,
            no_update if case_out == case_value else case_out, target, target_shown_for, view,
            knobs, no_update if knob_out == knob else knob_out, tasks, no_update if task_out == task else task_out)


def open_case_view(tab: str | None, case_id: str | None, week: str | None, spots: dict[str, Any], key: str,
                   session: str | None) -> tuple[Any, Any, Any, Any]:
    """The figure of the open year, calendar or week tab (the others are left as they are, and redrawn when
    their tab is opened). Returns (year figure, calendar figure, week figure, week caption)."""
    from .callbacks import _problem_text, case_views

    if tab not in CASE_TABS or not spots or key not in spots or case_id is None:
        raise PreventUpdate
    if tab == ids.TAB_WEEK:
        _, _, week_fig, caption = case_views(case_id, week, spots, key, session)
        return no_update, no_update, week_fig, caption
    try:
        a = assessment_for(spots[key], session)
    except (SiteInputError, ValueError) as exc:
        blank = empty_figure(_problem_text(exc)[:120])
        return (blank, no_update, no_update, no_update) if tab == ids.TAB_YEAR else (no_update, blank, no_update,
                                                                                   no_update)
    case = find_case(a, case_id)
    if tab == ids.TAB_YEAR:
        return case_year_figure(a, case), no_update, no_update, no_update
    return no_update, case_calendar_figure(case), no_update, no_update


def open_portfolio(tab: str | None, spots: dict[str, Any], session: str | None) -> list[dict[str, Any]]:
    if tab != ids.TAB_PORTFOLIO or not spots:
        raise PreventUpdate
    return portfolio_rows(spots, session)


def first_answer(spots: dict[str, Any], key: str) -> dict[tuple[str, str], Any]:
    """What :func:`show_spot` would answer for the page as first served, so the layout carries the first
    results and the page asks nothing on its first visit."""
    values = show_spot(spots, key, ids.TAB_SOURCES, None, None, None)
    return {out: v for out, v in zip(SHOW_SPOT_OUTPUTS, values, strict=True) if v is not no_update}


def register(app: dash.Dash) -> None:
    """Wire the results: :func:`show_spot` on every change of the spots, and the open view on demand."""
    def show_spot_cb(*args: Any) -> tuple[Any, ...]:
        changed = {t["prop_id"] for t in dash.callback_context.triggered or []}
        return show_spot(*args, spots_changed=f"{ids.SPOTS}.data" in changed)

    app.callback(
        *[Output(c, p) for c, p in SHOW_SPOT_OUTPUTS],
        Input(ids.SPOTS, "data"), Input(ids.SPOT_PICKER, "value"),
        State(ids.TABS, "value"), State(ids.SESSION, "data"), State(ids.CASE_PICKER, "value"),
        State(ids.SIZING_TARGET_FROM, "data"), State(ids.SIZING_KNOB, "value"), State(ids.SIZING_TASK, "value"),
        prevent_initial_call=True,
    )(show_spot_cb)

    def case_view_cb(case_id: str | None, week: str | None, tab: str | None, _view: Any, spots: dict[str, Any],
                     key: str, session: str | None) -> tuple[Any, Any, Any, Any]:
        return open_case_view(tab, case_id, week, spots, key, session)

    app.callback(
        Output(ids.FIG_YEAR, "figure"), Output(ids.FIG_CALENDAR, "figure"), Output(ids.FIG_WEEK, "figure"),
        Output(ids.WEEK_CAPTION, "children"),
        Input(ids.CASE_PICKER, "value"), Input(ids.WEEK_PICKER, "value"), Input(ids.TABS, "value"),
        Input(ids.VIEW_KEY, "data"),
        State(ids.SPOTS, "data"), State(ids.SPOT_PICKER, "value"), State(ids.SESSION, "data"),
        prevent_initial_call=True,
    )(case_view_cb)
    def portfolio_cb(tab: str | None, _view: Any, spots: dict[str, Any], session: str | None) -> list[dict[str, Any]]:
        return open_portfolio(tab, spots, session)

    app.callback(
        Output(ids.PORTFOLIO_TABLE, "rowData"),
        Input(ids.TABS, "value"), Input(ids.VIEW_KEY, "data"), State(ids.SPOTS, "data"), State(ids.SESSION, "data"),
        prevent_initial_call=True,
    )(portfolio_cb)

"""Callbacks: plain functions over the stores' contents, registered by :func:`register`.

Each function can be called directly (tests, benchmarks). Those that must know which input fired
take it as a ``trigger`` keyword, ``(component id, value)``; Dash calls them without it and they ask
``dash.ctx``. State lives in the ``dcc.Store`` components only.
"""

from __future__ import annotations

import base64
import binascii
import copy
import logging
from typing import Any

import dash
import numpy as np
from dash import ALL, ClientsideFunction, Input, Output, State, html, no_update
from dash.exceptions import MissingCallbackContextException, PreventUpdate

from siteharvest.cautions import DEFER
from siteharvest.errors import SiteInputError
from siteharvest.files import ListedFiles, named_in_dict
from siteharvest.findings import case_label, headline, source_inputs, weather_warning
from siteharvest.site import SiteSpec, dump_site, parse_site, parse_site_text
from siteharvest.vibration_spectrum import read_spectrum_csv

from . import callbacks_results, callbacks_study, ids
from .editor import editor_patch, render_editor
from .engine import (
    STARTER_SITE,
    assessment_for,
    bundled_files,
    check_weather_text,
    clean_message,
    record_from_spec,
    site_dict,
    unique_key,
    upload_name,
)
from .fieldspec import EditProblem, apply_action, apply_edit, apply_spectrum, display_value, value_at
from .figures import case_calendar_figure, case_week_figure, case_year_figure, empty_figure, find_case, sources_figure
from .layout import spot_options
from .limits import MAX_UPLOAD_BYTES
from .tables import SUMMARY_COLUMNS, summary_rows
from .uploads import upload_store

log = logging.getLogger(__name__)
Trigger = tuple[Any, Any]


def _trigger() -> Trigger:
    ctx = dash.ctx
    if not ctx.triggered:
        raise PreventUpdate
    return ctx.triggered_id, ctx.triggered[0].get("value")


def _triggered_id() -> Any:
    try:
        return dash.ctx.triggered_id
    except MissingCallbackContextException:  # called outside a Dash request (tests, benchmarks)
        return None


def _validate(site: dict[str, Any], record: dict[str, Any]) -> dict[str, Any]:
    """The normalised site dict of a candidate, or SiteInputError (file named as the user knows it)."""
    spec = parse_site(copy.deepcopy(site), file=record.get("file") or "<site>")
    return site_dict(spec)


def _with_site(spots: dict[str, Any], key: str, site: dict[str, Any], **extra: Any) -> dict[str, Any]:
    spots = dict(spots)
    record = dict(spots[key])
    record["site"] = site
    record.update(extra)
    spots[key] = record
    return spots


def _upload_name(uploads: dict[str, str], name: str, sha: str) -> str:
    """The name an upload is kept under: its own, unless another upload of that name differs."""
    if uploads.get(name, sha) == sha:
        return name
    stem, dot, ext = name.rpartition(".")
    stem, ext = (stem, "." + ext) if dot else (name, "")
    n = 2
    while uploads.get(f"{stem}-{n}{ext}", sha) != sha:
        n += 1
    return f"{stem}-{n}{ext}"


def _forget_unused_uploads(session: str | None, spots: dict[str, Any]) -> None:
    """Remove the session's uploads that no spot names any more."""
    used = {sha for rec in (spots or {}).values() if isinstance(rec.get("files"), dict)
            for sha in rec["files"].values()}
    upload_store().keep_only(session, used)


def _readable_path(path: str) -> str:
    out = ""
    for part in path.split("."):
        out += f"[{part}]" if part.isdigit() else (f".{part}" if out else part)
    return out


def _problem_text(exc: Exception) -> str:
    if isinstance(exc, EditProblem | SiteInputError):
        return clean_message(str(exc))
    return clean_message(str(exc).splitlines()[0] if str(exc) else type(exc).__name__)


# --------------------------------------------------------------------------------------------------
# the editor


def render_editor_cb(key: str, rev: int, spots: dict[str, Any], session: str | None,
                     group_open: list[bool] | None = None, group_ids: list[dict[str, str]] | None = None) -> Any:
    """Rebuild the editor for the chosen spot (after a change of spot, structure or preset).

    Returns (editor, message line, note line): both lines are cleared when another spot is chosen.
    """
    if not spots or key not in spots:
        raise PreventUpdate
    new_spot = _triggered_id() == ids.SPOT_PICKER
    open_groups = None
    if group_open and group_ids and not new_spot:
        open_groups = {gid["key"] for gid, is_open in zip(group_ids, group_open, strict=False) if is_open}
    record = spots[key]
    editor = render_editor(record["site"], record.get("files") or {}, open_groups)
    return editor, ("" if new_spot else no_update), ("" if new_spot else no_update)


def edit_field(values: list[Any], msg_ids: list[dict[str, str]], key: str, spots: dict[str, Any],
               rev: int, *, trigger: Trigger | None = None) -> tuple[Any, list[Any], Any]:
    """One input changed: validate the spot with that value; keep the old spot when it does not fit.

    Returns (spots, messages beside the inputs, editor revision).
    """
    field_id, value = trigger if trigger is not None else _trigger()
    if not isinstance(field_id, dict) or key not in (spots or {}):
        raise PreventUpdate
    path, role = field_id["path"], field_id["role"]
    record = spots[key]
    site = record["site"]
    if not role.startswith(("variant:", "toggle")) and value == display_value(role, value_at(site, path)):
        raise PreventUpdate  # the editor was rebuilt, or nothing changed
    message = ""
    new_spots: Any = no_update
    new_rev: Any = no_update
    try:
        weather_uploads = {n: (record.get("files") or {}).get(n, "") for n in record.get("weather_files") or []}
        candidate, structural = apply_edit(site, path, role, value, uploads=weather_uploads)
        new_site = _validate(candidate, record)
        if new_site != site:
            new_spots = _with_site(spots, key, new_site)
        if structural:
            new_rev = (rev or 0) + 1
    except EditProblem as exc:
        message = str(SiteInputError(exc.expected, file=record.get("file"), field=_readable_path(path), got=exc.got))
    except SiteInputError as exc:
        message = _problem_text(exc)
    messages = [message if m.get("path") == path else no_update for m in msg_ids]
    return new_spots, messages, new_rev


def edit_structure(clicks: list[int | None], key: str, spots: dict[str, Any], rev: int, *,
                   trigger: Trigger | None = None, open_groups: set[str] | None = None) -> tuple[Any, Any, str, Any]:
    """An add or remove button: validate the changed spot; keep the old one when it does not fit.

    Returns (spots, editor revision, message line, editor update): the editor is updated in place, group by
    group (:func:`editor_patch`); only when its groups differ is the revision bumped to rebuild it whole.
    """
    button, n = trigger if trigger is not None else _trigger()
    if not isinstance(button, dict) or not n or key not in (spots or {}):
        raise PreventUpdate
    record = spots[key]
    if button["action"] == "remove-source" and len(record["site"].get("source") or []) <= 1:
        line = LAST_SOURCE_LINE
        _say_at_foot(line)
        return no_update, no_update, line, no_update
    try:
        candidate = apply_action(record["site"], button["action"], button["path"])
        new_site = _validate(candidate, record)
    except (EditProblem, SiteInputError) as exc:
        _say_at_foot(_problem_text(exc))
        return no_update, no_update, _problem_text(exc), no_update
    patch = editor_patch(record["site"], new_site, record.get("files") or {}, open_groups)
    if patch is None:
        return _with_site(spots, key, new_site), (rev or 0) + 1, "", no_update
    return _with_site(spots, key, new_site), no_update, "", patch


LAST_SOURCE_LINE = ("A spot needs at least one source: add another source before removing this one "
                    "(the spot is unchanged).")


def _say_at_foot(text: str) -> None:
    """Also show ``text`` in the line at the foot of the window, which stays in view however far the editor
    is scrolled (nothing to do outside a Dash request)."""
    try:
        dash.set_props(ids.PROBLEM, {"children": text})
    except MissingCallbackContextException:
        return


def _decode_upload(contents: str | None, filename: str | None) -> tuple[str, str]:
    """(file name, text) of a dcc.Upload value; SiteInputError for binary or oversized files."""
    name = upload_name(filename)
    if not contents or "," not in contents:
        raise SiteInputError("a file", file=name, got="nothing")
    try:
        raw = base64.b64decode(contents.split(",", 1)[1], validate=False)
    except (binascii.Error, ValueError):
        raise SiteInputError("a readable file", file=name) from None
    if len(raw) > MAX_UPLOAD_BYTES:
        raise SiteInputError(f"a file under {MAX_UPLOAD_BYTES // 1_000_000} MB", file=name,
                             got=f"{len(raw) / 1e6:.1f} MB")
    for encoding in ("utf-8-sig", "latin-1"):
        try:
            text = raw.decode(encoding)
            break
        except UnicodeDecodeError:
            continue
    if "\x00" in text:
        raise SiteInputError("a text file (CSV, EPW, TMY3 or TOML)", file=name, got="binary data")
    return name, text


def upload_weather(contents: str | None, filename: str | None, key: str, spots: dict[str, Any],
                   session: str | None, rev: int) -> tuple[Any, str, Any, Any]:
    """A weather file dropped on the editor: use it when it reads; else say why and keep the spot.

    The text is kept on the server for this page's session. Returns (spots, message beside the upload,
    note above the editor, editor revision).
    """
    if not contents or key not in (spots or {}):
        raise PreventUpdate
    record = spots[key]
    try:
        name, text = _decode_upload(contents, filename)
        sha = upload_store().put(session, text)
        notes = check_weather_text(name, upload_store().path(session, sha), record["site"])
        name = _upload_name(record.get("files") or {}, name, sha)
        site = copy.deepcopy(record["site"])
        site["weather"] = {"file": name, "file_format": "auto"}
        new_site = _validate(site, record)
    except SiteInputError as exc:
        _forget_unused_uploads(session, spots)
        return no_update, _problem_text(exc), no_update, no_update
    uploads = {**(record.get("files") or {}), name: sha}
    weather_files = [n for n in record.get("weather_files") or [] if n != name] + [name]
    spots = _with_site(spots, key, new_site, files=uploads, weather_files=weather_files)
    _forget_unused_uploads(session, spots)
    note = f"Weather from {name}." + (" " + "; ".join(clean_message(n) for n in notes[:3]) if notes else "")
    return spots, "", note, (rev or 0) + 1


def upload_spectrum(contents: list[str | None], filenames: list[str | None], msg_ids: list[dict[str, str]],
                    key: str, spots: dict[str, Any], session: str | None, rev: int, *,
                    trigger: Trigger | None = None) -> tuple[Any, list[Any], Any, Any]:
    """A vibration survey spectrum dropped on a vibration source (kept on the server for this session).

    Returns (spots, messages beside the uploads, note above the editor, editor revision).
    """
    upload_id, value = trigger if trigger is not None else _trigger()
    if not isinstance(upload_id, dict) or not value or key not in (spots or {}):
        raise PreventUpdate
    path = upload_id["path"]
    index = next((i for i, m in enumerate(msg_ids) if m.get("path") == path), None)
    filename = filenames[index] if index is not None and index < len(filenames) else None
    record = spots[key]

    def answer(text: str) -> list[Any]:
        return [text if m.get("path") == path else no_update for m in msg_ids]

    try:
        name, text = _decode_upload(value, filename)
        sha = upload_store().put(session, text)
        kept = upload_store().path(session, sha)
        name = _upload_name(record.get("files") or {}, name, sha)
        candidate, assumed = apply_spectrum(record["site"], path, name)
        src = value_at(candidate, path)
        try:
            read_spectrum_csv(kept, src.get("spectrum_kind", "amplitude"), src["spectrum_unit"],
                              src.get("spectrum_measure"), frequency_column=src.get("frequency_column", "frequency_hz"),
                              value_column=src.get("value_column"))
        except SiteInputError as exc:
            raise ListedFiles({name: kept}).explained(exc) from None
        new_site = _validate(candidate, record)
    except (SiteInputError, EditProblem) as exc:
        _forget_unused_uploads(session, spots)
        return no_update, answer(_problem_text(exc)), no_update, no_update
    uploads = {**(record.get("files") or {}), name: sha}
    spots = _with_site(spots, key, new_site, files=uploads)
    _forget_unused_uploads(session, spots)
    src_id = value_at(new_site, path).get("id", path)
    note = f"Vibration of {src_id} from {name}" + (
        f" ({', '.join(assumed)}: check the spectrum fields)." if assumed else ".")
    return spots, answer(""), note, (rev or 0) + 1


def upload_site(contents: str | list[str] | None, filenames: str | list[str] | None, key: str,
                spots: dict[str, Any], session: str | None = None) -> tuple[Any, Any, str]:
    """Site files opened from disk, with the data files they name chosen at the same time.

    Each ``.toml`` file becomes a spot; every other file is kept for this page's session, and a spot
    names it by its file name (``weather/station.epw`` finds ``station.epw``). A spot naming a file that
    was not chosen with it is opened all the same, and the line says which file to add.
    """
    if not contents:
        raise PreventUpdate
    contents_list = contents if isinstance(contents, list) else [contents]
    names_list = filenames if isinstance(filenames, list) else [filenames] * len(contents_list)
    try:
        decoded = [_decode_upload(c, n) for c, n in zip(contents_list, names_list, strict=False)]
        sites = [(name, text) for name, text in decoded if name.lower().endswith(".toml")]
        if not sites:
            raise SiteInputError("a site file (.toml) among the files chosen", file=", ".join(n for n, _ in decoded))
        data = {name: upload_store().put(session, text) for name, text in decoded if not name.lower().endswith(".toml")}
        opened: list[tuple[str, SiteSpec, dict[str, str]]] = []
        for name, text in sites:
            spec = parse_site_text(text, file=name, files=ListedFiles({}, site=name))
            companions = {written: data[base] for _, written in named_in_dict(site_dict(spec))
                          if (base := upload_name(written)) in data}
            opened.append((name, spec, companions))
    except SiteInputError as exc:
        _forget_unused_uploads(session, spots)
        return no_update, no_update, _problem_text(exc)
    spots = dict(spots or {})
    lines, new_key = [], key
    for name, spec, companions in opened:
        stem = name.rsplit(".", 1)[0] or "spot"
        new_key = unique_key(stem, spots)
        record = record_from_spec(spec, new_key, name)
        record["files"] = companions
        spots[new_key] = record
        missing = [w for _, w in named_in_dict(record["site"]) if w not in companions and w not in bundled_files()]
        line = f"Opened {name} as '{spec.spot.name}'."
        if missing:
            line += " It names " + ", ".join(missing) + ": open it together with the site file to use it."
        lines.append(line)
    _forget_unused_uploads(session, spots)
    return spots, new_key, " ".join(lines)


def saved_filename(spot_name: str) -> str:
    """A site file's name from the spot's own name: ``Boiler house, east wall`` -> ``boiler-house-east-wall.toml``."""
    slug = "-".join("".join(c.lower() if c.isalnum() else " " for c in spot_name).split())[:80].strip("-")
    return f"{slug or 'spot'}.toml"


def download_site(n_clicks: int | None, key: str, spots: dict[str, Any]) -> dict[str, str]:
    """The current spot as a site file (the last good values), named after the spot."""
    if not n_clicks or key not in (spots or {}):
        raise PreventUpdate
    record = spots[key]
    spec = parse_site(copy.deepcopy(record["site"]), file=record.get("file") or "<site>")
    return {"content": dump_site(spec), "filename": saved_filename(spec.spot.name), "type": "application/toml",
            "base64": False}


def new_spot(n_clicks: int | None, spots: dict[str, Any]) -> tuple[dict[str, Any], str, str]:
    """A blank spot (one solar panel on a synthetic year) added and shown: (spots, its key, message line)."""
    if not n_clicks:
        raise PreventUpdate
    spots = dict(spots or {})
    key = unique_key("new-spot", spots)
    spec = parse_site(copy.deepcopy(STARTER_SITE), file=f"{key}.toml", files=ListedFiles({}))
    spots[key] = record_from_spec(spec, key, f"{key}.toml")
    return spots, key, "A new spot on a synthetic year: set its place, its node, its store and its sources."


def duplicate_spot(n_clicks: int | None, key: str, spots: dict[str, Any]) -> tuple[dict[str, Any], str, str]:
    """A copy of the spot shown, with its files, added and shown: (spots, the copy's key, message line)."""
    if not n_clicks or key not in (spots or {}):
        raise PreventUpdate
    spots = dict(spots)
    record = copy.deepcopy(spots[key])
    new_key = unique_key(f"{key}-copy", spots)
    name = str(record["site"]["spot"].get("name", key))
    record["site"]["spot"]["name"] = (name + " (copy)")[:200]
    record["key"], record["file"] = new_key, saved_filename(record["site"]["spot"]["name"])
    spots[new_key] = record
    return spots, new_key, f"Copied '{name}': the copy is shown; the original is unchanged."


def picker_options(spots: dict[str, Any]) -> list[dict[str, str]]:
    return spot_options(spots or {})


# --------------------------------------------------------------------------------------------------
# results


def _summary_table(a: Any) -> html.Table:
    rows, energy_unit = summary_rows(a)
    head = []
    for col, title, unit in SUMMARY_COLUMNS:
        unit = energy_unit if col == "annual_energy" else unit
        head.append(html.Th([title, html.Span(f" [{unit}]", className="sh-th-unit") if unit else None],
                            className=f"sh-col-{col}"))
    body = []
    for r in rows:
        cells = []
        for col, _, _ in SUMMARY_COLUMNS:
            if col == "source":
                cells.append(html.Td([html.Div(r["source"]), html.Div(r["what"], className="sh-what")],
                                     className="sh-col-source", title=r["what"]))
            elif col == "verdict":
                cells.append(html.Td(html.Span(r["verdict"], className=f"sh-verdict {r['verdict_class']}"),
                                     className="sh-col-verdict"))
            elif col == "status":
                cells.append(html.Td(r["status"], className=f"sh-col-status sh-target-{r['status'].replace(' ', '-')}",
                                     title=r["finding"]))
            else:
                cells.append(html.Td(r[col], className=f"sh-col-{col}"))
        body.append(html.Tr(cells, className="sh-row-combined" if r["combined"] else None))
    return html.Table([html.Thead(html.Tr(head)), html.Tbody(body)], className="sh-table")


def _cautions(a: Any) -> list[Any]:
    if not a.cautions:
        return []
    items = [html.Li([html.Strong(c.title + ". "), c.text.replace(DEFER, "").strip()]) for c in a.cautions]
    summary = html.Summary([
        html.Span("Before fitting, safety:", className="sh-caution-head"),
        *[html.Span(c.title, className="sh-caution-chip") for c in a.cautions],
        html.Span("read the notes", className="sh-link sh-caution-more"),
    ])
    return [html.Details([summary, html.Ul(items)], className="sh-caution-box"),
            html.P(DEFER, className="sh-defer")]


def _headline(a: Any) -> list[Any]:
    """The answer and why (from the library's findings), the far-weather warning, and what needs a survey."""
    top = headline(a)
    out: list[Any] = [html.P([html.Strong(top.answer + " "), top.sentence, " ",
                              html.Span(top.reason, className="sh-why")], className="sh-headline", id="sh-headline")]
    far = weather_warning(a)
    if far is not None:
        out.append(html.P([html.Strong("Weather year far from the spot: "), far.sentence,
                           " In the editor, set Weather to a synthetic year, or upload a weather file from near "
                           "the spot."], className="sh-status-bad sh-far-weather", role="alert"))
    for si in map(source_inputs, a.spec.source):
        if si.needs_survey:
            out.append(html.P([html.Strong("Needs a survey: "), si.sentence], className="sh-needs-survey"))
    return out


def _notes(a: Any) -> list[Any]:
    notes = list(a.warnings)
    if not notes:
        return []
    return [html.Details([html.Summary(f"Notes on this year ({len(notes)})"),
                          html.Ul([html.Li(clean_message(n)) for n in notes])])]


def recompute(spots: dict[str, Any], key: str, session: str | None,
              case_value: str | None) -> tuple[Any, ...]:
    """Assess the chosen spot: status, summary table, cautions, notes, sources figure, case choices."""
    if not spots or key not in spots:
        raise PreventUpdate
    record = spots[key]
    try:
        a = assessment_for(record, session)
    except (SiteInputError, ValueError) as exc:
        msg = _problem_text(exc)
        status = html.Div([html.Strong("This spot cannot be simulated yet: "), msg], className="sh-status-bad",
                          role="alert")
        return (status, [], [], [], empty_figure("no results: see the message above"), [], None)
    spot = a.spec.spot
    demand_uw = a.mean_power_uw
    status = html.Div([
        html.Span(spot.name, className="sh-status-name"),
        html.Span(f"weather: {clean_message(a.prepared.weather_meta.source)}"),
        html.Span(f"mean demand {demand_uw:.3g} µW"),
        html.Span(f"usable store {a.usable_energy_j:.3g} J"),
        html.Span(f"{len(a.sources)} source{'s' if len(a.sources) != 1 else ''}"),
    ], className="sh-status-ok")
    status = html.Div([status, *_headline(a)])
    options = [{"label": f"{case_label(c.id)} ({c.verdict})", "value": c.id} for c in a.cases]
    values = [o["value"] for o in options]
    value = case_value if case_value in values else values[0]
    return (status, _summary_table(a), _cautions(a), _notes(a), sources_figure(a), options,
            value)


def case_views(case_id: str | None, week: str | None, spots: dict[str, Any], key: str,
               session: str | None) -> tuple[Any, Any, Any, str]:
    """The year heatmap, the calendar and the week of the chosen source."""
    if not spots or key not in spots or case_id is None:
        raise PreventUpdate
    try:
        a = assessment_for(spots[key], session)
    except (SiteInputError, ValueError) as exc:
        blank = empty_figure(_problem_text(exc)[:120])
        return blank, blank, blank, ""
    case = find_case(a, case_id)
    start = None if week in (None, "worst") else int(week)
    week_fig, start_day, caption = case_week_figure(a, case, start)
    off_week = int((~np.asarray(case.node_on[start_day * 24:(start_day + 7) * 24], dtype=bool)).sum())
    text = (f"Showing {caption}." if caption else f"Node off {off_week} h in these seven days.")
    return case_year_figure(a, case), case_calendar_figure(case), week_fig, text


def portfolio(tab: str, spots: dict[str, Any], session: str | None) -> list[dict[str, Any]]:
    """Every loaded spot with its best source (computed when the portfolio tab is open)."""
    return callbacks_results.open_portfolio(tab, spots, session)


def open_from_portfolio(selected: list[dict[str, Any]] | None) -> tuple[str, list[Any]]:
    """Choosing a spot's row in the portfolio (a click, or Space on the focused row) opens it.

    ``selected`` is the grid's ``selectedRows``: the chosen row's own data, whatever the order the rows are
    sorted in on screen. The selection is cleared again, so choosing the same row later opens it again.
    """
    key = (selected or [{}])[0].get("key")
    if not key:
        raise PreventUpdate
    return str(key), []


# --------------------------------------------------------------------------------------------------
# the last line of defence


def problem_line(exc: BaseException) -> str:
    """What the page says when a request fails: the one-line input error, or that nothing was changed."""
    if isinstance(exc, SiteInputError | EditProblem):
        return _problem_text(exc)
    return ("The server could not finish that request; nothing you entered was changed. "
            f"(The server's log has the details: {type(exc).__name__}.)")


def on_callback_error(exc: Exception) -> None:
    """Dash's handler for an exception a callback did not catch: log it, and say so at the foot of the window
    (the callback's own outputs keep their values)."""
    if not isinstance(exc, SiteInputError | EditProblem):
        log.exception("callback failed", exc_info=exc)
    dash.set_props(ids.PROBLEM, {"children": problem_line(exc)})


def dismiss_problem(n_clicks: int | None) -> str:
    if not n_clicks:
        raise PreventUpdate
    return ""


# --------------------------------------------------------------------------------------------------


def register(app: dash.Dash) -> None:
    """Wire every callback to ``app`` (never to the global registry)."""
    _wire_editor(app)
    _wire_files(app)
    _wire_results(app)
    _wire_portfolio(app)
    callbacks_study.register(app)


FIELD_ALL = {"type": ids.FIELD_TYPE, "path": ALL, "role": ALL}
FIELD_MSG_ALL = {"type": ids.FIELD_MSG_TYPE, "path": ALL}
GROUP_ALL = {"type": ids.GROUP_TYPE, "key": ALL}
SPECTRUM_ALL = {"type": ids.SPECTRUM_UPLOAD_TYPE, "path": ALL}
SPECTRUM_MSG_ALL = {"type": ids.SPECTRUM_MSG_TYPE, "path": ALL}
ACTION_ALL = {"type": ids.ACTION_TYPE, "action": ALL, "path": ALL}


def _wire_editor(app: dash.Dash) -> None:
    """The editor: its rebuild, one field's edit, and the add and remove buttons."""
    app.callback(
        Output(ids.EDITOR, "children"), Output(ids.EDITOR_MSG, "children", allow_duplicate=True),
        Output(ids.EDITOR_NOTE, "children", allow_duplicate=True),
        Input(ids.SPOT_PICKER, "value"), Input(ids.FORM_REV, "data"),
        State(ids.SPOTS, "data"), State(ids.SESSION, "data"), State(GROUP_ALL, "open"), State(GROUP_ALL, "id"),
        prevent_initial_call=True,
    )(render_editor_cb)
    app.callback(
        Output(ids.SPOTS, "data", allow_duplicate=True), Output(FIELD_MSG_ALL, "children"),
        Output(ids.FORM_REV, "data", allow_duplicate=True),
        Input(FIELD_ALL, "value"),
        State(FIELD_MSG_ALL, "id"), State(ids.SPOT_PICKER, "value"), State(ids.SPOTS, "data"),
        State(ids.FORM_REV, "data"),
        prevent_initial_call=True,
    )(edit_field)
    def edit_structure_cb(clicks: list[int | None], key: str, spots: dict[str, Any], rev: int,
                          group_open: list[bool] | None, group_ids: list[dict[str, str]] | None) -> tuple[Any, ...]:
        shown = {g["key"] for g, is_open in zip(group_ids or [], group_open or [], strict=False) if is_open}
        return edit_structure(clicks, key, spots, rev, open_groups=shown)

    app.callback(
        Output(ids.SPOTS, "data", allow_duplicate=True), Output(ids.FORM_REV, "data", allow_duplicate=True),
        Output(ids.EDITOR_MSG, "children", allow_duplicate=True), Output(ids.EDITOR, "children", allow_duplicate=True),
        Input(ACTION_ALL, "n_clicks"), State(ids.SPOT_PICKER, "value"), State(ids.SPOTS, "data"),
        State(ids.FORM_REV, "data"), State(GROUP_ALL, "open"), State(GROUP_ALL, "id"),
        prevent_initial_call=True,
    )(edit_structure_cb)


def _wire_files(app: dash.Dash) -> None:
    """Files in and out: the page's session token, weather and spectrum uploads, site files opened and saved."""
    app.clientside_callback(ClientsideFunction("siteharvest", "newSession"),
                            Output(ids.SESSION, "data"), Input(ids.SESSION, "modified_timestamp"),
                            State(ids.SESSION, "data"))
    app.callback(
        Output(ids.SPOTS, "data", allow_duplicate=True), Output(ids.WEATHER_UPLOAD_MSG, "children"),
        Output(ids.EDITOR_NOTE, "children", allow_duplicate=True), Output(ids.FORM_REV, "data", allow_duplicate=True),
        Input(ids.WEATHER_UPLOAD, "contents"), State(ids.WEATHER_UPLOAD, "filename"),
        State(ids.SPOT_PICKER, "value"), State(ids.SPOTS, "data"), State(ids.SESSION, "data"),
        State(ids.FORM_REV, "data"),
        prevent_initial_call=True,
    )(upload_weather)
    app.callback(
        Output(ids.SPOTS, "data", allow_duplicate=True), Output(SPECTRUM_MSG_ALL, "children"),
        Output(ids.EDITOR_NOTE, "children", allow_duplicate=True), Output(ids.FORM_REV, "data", allow_duplicate=True),
        Input(SPECTRUM_ALL, "contents"), State(SPECTRUM_ALL, "filename"), State(SPECTRUM_MSG_ALL, "id"),
        State(ids.SPOT_PICKER, "value"), State(ids.SPOTS, "data"), State(ids.SESSION, "data"),
        State(ids.FORM_REV, "data"),
        prevent_initial_call=True,
    )(upload_spectrum)
    app.callback(
        Output(ids.SPOTS, "data", allow_duplicate=True), Output(ids.SPOT_PICKER, "value", allow_duplicate=True),
        Output(ids.SITE_UPLOAD_MSG, "children"),
        Input(ids.SITE_UPLOAD, "contents"), State(ids.SITE_UPLOAD, "filename"),
        State(ids.SPOT_PICKER, "value"), State(ids.SPOTS, "data"), State(ids.SESSION, "data"),
        prevent_initial_call=True,
    )(upload_site)
    app.callback(
        Output(ids.SITE_DOWNLOAD, "data"),
        Input(ids.SITE_DOWNLOAD_BUTTON, "n_clicks"), State(ids.SPOT_PICKER, "value"), State(ids.SPOTS, "data"),
        prevent_initial_call=True,
    )(download_site)
    app.callback(
        Output(ids.SPOTS, "data", allow_duplicate=True), Output(ids.SPOT_PICKER, "value", allow_duplicate=True),
        Output(ids.EDITOR_NOTE, "children", allow_duplicate=True),
        Input(ids.NEW_SPOT_BUTTON, "n_clicks"), State(ids.SPOTS, "data"),
        prevent_initial_call=True,
    )(new_spot)
    app.callback(
        Output(ids.SPOTS, "data", allow_duplicate=True), Output(ids.SPOT_PICKER, "value", allow_duplicate=True),
        Output(ids.EDITOR_NOTE, "children", allow_duplicate=True),
        Input(ids.DUPLICATE_SPOT_BUTTON, "n_clicks"), State(ids.SPOT_PICKER, "value"), State(ids.SPOTS, "data"),
        prevent_initial_call=True,
    )(duplicate_spot)


def _wire_results(app: dash.Dash) -> None:
    """The results of the chosen spot (:mod:`siteharvest_app.callbacks_results`) and the problem line's dismissal."""
    app.callback(Output(ids.PROBLEM, "children", allow_duplicate=True), Input(ids.PROBLEM_CLOSE, "n_clicks"),
                 prevent_initial_call=True)(dismiss_problem)
    callbacks_results.register(app)


def _wire_portfolio(app: dash.Dash) -> None:
    """Opening the spot chosen in the portfolio grid (its rows: :mod:`siteharvest_app.callbacks_results`)."""
    app.callback(
        Output(ids.SPOT_PICKER, "value", allow_duplicate=True), Output(ids.PORTFOLIO_TABLE, "selectedRows"),
        Input(ids.PORTFOLIO_TABLE, "selectedRows"),
        prevent_initial_call=True,
    )(open_from_portfolio)

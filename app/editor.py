"""The spot editor as Dash components, rendered from :mod:`siteharvest_app.fieldspec`."""

from __future__ import annotations

import json
from typing import Any

from dash import Patch, dcc, html
from plotly.utils import PlotlyJSONEncoder

from . import ids
from .fieldspec import Block, Control, Group, editor_groups

NUMERIC_ROLES = ("float", "int", "opt-float", "opt-int", "floats", "ints", "pairs", "opt-pairs", "num-or-word")


def _input(c: Control) -> Any:
    cid = ids.field_id(c.path, c.role)
    role = c.role
    base = role.removeprefix("opt-")
    if base == "bool" or role == "toggle":
        return dcc.Checklist(id=cid, options=[{"label": " yes", "value": "on"}], value=c.value or [],
                             className="sh-check", inputClassName="sh-check-input")
    if role.startswith("variant:"):
        return dcc.RadioItems(id=cid, options=[{"label": label, "value": v} for v, label in c.options or []],
                              value=c.value, className="sh-radio", inputClassName="sh-radio-input", inline=True)
    if base == "choice" or base.startswith("preset:"):
        return dcc.Dropdown(id=cid, options=[{"label": label, "value": v} for v, label in c.options or []],
                            value=c.value, clearable=role.startswith("opt-"), searchable=False,
                            className="sh-select", placeholder="not set")
    if role == "readonly":
        return html.Code(str(c.value), className="sh-readonly", id=cid)
    return dcc.Input(id=cid, type="text", value=c.value, debounce=True, name=c.path, autoComplete="off",
                     inputMode="decimal" if role in NUMERIC_ROLES else "text", placeholder=c.placeholder,
                     className="sh-input" + (" sh-input-num" if role in NUMERIC_ROLES else ""), spellCheck=False)


def render_control(c: Control) -> html.Div:
    """One field in four components: the page revisits every component on each answer, so the unit and the
    bounds are data attributes that the style sheet shows (``::after``), not components of their own."""
    hint = " · ".join(x for x in (c.bounds, c.doc) if x)
    label_extra = {"data-unit": c.unit} if c.unit else {}
    field_extra = {"data-hint": hint} if hint else {}
    return html.Div(
        className="sh-field" + (" sh-field-wide" if c.role.startswith("variant:") else ""),
        **{"data-path": c.path}, **field_extra,
        children=[
            html.Label(c.label, htmlFor=ids.dom_id(ids.field_id(c.path, c.role)), title=f"{c.name}: {c.doc}",
                       **label_extra),
            _input(c),
            html.Div(id=ids.field_msg_id(c.path), className="sh-msg", role="alert"),
        ],
    )


def _upload(kind: str, path: str) -> list[Any]:
    if kind == "weather":
        return [
            dcc.Upload(id=ids.WEATHER_UPLOAD, className="sh-upload", multiple=False,
                       children=html.Div(["Drop a weather file (EPW, TMY3, CSV) or ",
                                          html.Span("choose one", className="sh-link")])),
            html.Div(id=ids.WEATHER_UPLOAD_MSG, className="sh-msg", role="alert"),
        ]
    return [
        dcc.Upload(id={"type": ids.SPECTRUM_UPLOAD_TYPE, "path": path}, className="sh-upload", multiple=False,
                   children=html.Div(["Drop a vibration survey spectrum (CSV) or ",
                                      html.Span("choose one", className="sh-link")])),
        html.Div(id={"type": ids.SPECTRUM_MSG_TYPE, "path": path}, className="sh-msg", role="alert"),
    ]


def render_block(b: Block) -> Any:
    header: list[Any] = [html.Span(b.title, className="sh-block-title")]
    if b.remove_action:
        header.append(html.Button("remove", id=ids.action_id(b.remove_action, b.path), n_clicks=0,
                                  className="sh-button sh-button-quiet", title=f"remove {b.title}"))
    body: list[Any] = []
    if b.note:
        body.append(html.P(b.note, className="sh-note"))
    if b.upload:
        body.extend(_upload(b.upload, b.path))
    body.extend(render_item(i) for i in b.items)
    if b.add_action:
        body.append(html.Button(b.add_label, id=ids.action_id(b.add_action, b.path), n_clicks=0,
                                className="sh-button sh-button-add"))
    if b.collapsed:
        return html.Details([html.Summary(header, className="sh-block-head"),
                             html.Div(body, className="sh-block-body")], className="sh-block sh-block-fold")
    return html.Div([html.Div(header, className="sh-block-head"), html.Div(body, className="sh-block-body")],
                    className="sh-block", **{"data-path": b.path})


def render_item(item: Control | Block) -> Any:
    return render_control(item) if isinstance(item, Control) else render_block(item)


def render_group(g: Group, open_groups: set[str] | None = None) -> html.Details:
    body = [render_item(i) for i in g.items]
    if g.add_actions:
        body.append(html.Div([html.Button(label, id=ids.action_id(action, "source"), n_clicks=0,
                                          className="sh-button sh-button-add")
                              for action, label in g.add_actions], className="sh-add-row"))
    count = sum(1 for i in g.items if isinstance(i, Block) and i.path.startswith("source."))
    summary = [html.Span(g.title, className="sh-group-title")]
    if count:
        summary.append(html.Span(f"{count} source{'s' if count > 1 else ''}", className="sh-badge"))
    is_open = g.key in open_groups if open_groups is not None else (g.key == "place" or bool(count))
    return html.Details([html.Summary(summary, className="sh-group-head"), html.Div(body, className="sh-group-body")],
                        open=is_open, className="sh-group", id=ids.group_id(g.key))


def render_editor(site: dict[str, Any], files: dict[str, str] | None = None,
                  open_groups: set[str] | None = None) -> list[Any]:
    """The whole editor for one site dict (``open_groups``: keys of the groups shown unfolded)."""
    return [render_group(g, open_groups) for g in editor_groups(site, files)]


def _same(a: Any, b: Any) -> bool:
    return json.dumps(a, cls=PlotlyJSONEncoder, sort_keys=True) == json.dumps(b, cls=PlotlyJSONEncoder, sort_keys=True)


def editor_patch(old_site: dict[str, Any], new_site: dict[str, Any], files: dict[str, str] | None = None,
                 open_groups: set[str] | None = None) -> Patch | None:
    """Only the groups of the editor that an edit changed, as a partial update of the editor's children.

    A group that changed is shown unfolded (a source just added is in view). None when the groups
    themselves differ (then the whole editor is rebuilt).
    """
    old, new = editor_groups(old_site, files), editor_groups(new_site, files)
    if [g.key for g in old] != [g.key for g in new]:
        return None
    patch = Patch()
    for i, (a, b) in enumerate(zip(old, new, strict=True)):
        shown = (open_groups or set()) | {b.key}
        rendered = render_group(b, shown)
        if not _same(render_group(a, shown), rendered):
            patch[i] = rendered
    return patch

"""The app factory: ``create_app(paths) -> dash.Dash``, callbacks registered on that app only."""

from __future__ import annotations

import logging
from pathlib import Path
from typing import Any

import dash

from . import callbacks, ids, security
from .bundled import ASSETS
from .engine import load_records
from .layout import build_layout

log = logging.getLogger(__name__)

INDEX = """<!DOCTYPE html>
<html lang="en">
    <head>
        {%metas%}
        <title>{%title%}</title>
        <link rel="icon" type="image/svg+xml" href="{%app_path%}assets/mark.svg">
        {%css%}
    </head>
    <body>
        {%app_entry%}
        <footer>
            {%config%}
            {%scripts%}
            {%renderer%}
        </footer>
    </body>
</html>
"""


def _serve_first_results(layout: Any, spots: dict[str, Any]) -> None:
    """Put the first spot's results into the layout: a first visit then shows them without asking."""
    from .callbacks_results import first_answer

    try:
        answer = first_answer(spots, next(iter(spots)))
    except Exception:  # a fault, not a bad spot (those are answered in the status line)
        log.exception("the first results could not be computed at start")
        layout[ids.STATUS].children = ("The first results could not be computed here; choose a spot or edit a "
                                       "field to try again.")
        return
    for (cid, prop), value in answer.items():
        setattr(layout[cid], prop, value)


def create_app(paths: list[Path] | list[str] | None = None, *, password: str | None = None) -> dash.Dash:
    """A dashboard over the site files (or folders of them) in ``paths``; none: the sample spots.

    Every response carries the security headers and requests over the size limit are refused
    (:mod:`siteharvest_app.security`); with ``password``, every route asks for it (HTTP Basic, user ``siteharvest``).
    """
    spots, errors = load_records([Path(p) for p in paths] if paths else None)
    app = dash.Dash(
        __name__,
        assets_folder=str(ASSETS),
        serve_locally=True,
        external_stylesheets=[],
        external_scripts=[],
        title="siteharvest",
        update_title=None,
        on_error=callbacks.on_callback_error,
        meta_tags=[{"name": "viewport", "content": "width=device-width, initial-scale=1"},
                   {"name": "description", "content": "Year-round energy-harvesting check for sensor node spots"}],
    )
    app.index_string = INDEX.replace("{%app_path%}assets/mark.svg", app.get_asset_url("mark.svg"))
    app.layout = build_layout(spots, errors, app.get_asset_url("mark.svg"))
    _serve_first_results(app.layout, spots)
    callbacks.register(app)
    security.secure_headers(app)  # after the callbacks: the inline-script hashes depend on them
    if password is not None:
        security.require_password(app, password)
    return app

"""The app factory: ``create_app(paths) -> dash.Dash``, callbacks registered on that app only."""

from __future__ import annotations

from pathlib import Path

import dash

from . import callbacks, security
from .bundled import ASSETS
from .engine import load_records
from .layout import build_layout

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
    callbacks.register(app)
    security.secure_headers(app)  # after the callbacks: the inline-script hashes depend on them
    if password is not None:
        security.require_password(app, password)
    return app

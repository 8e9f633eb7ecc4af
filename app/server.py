"""``siteharvest serve``: the dashboard on a local address."""

from __future__ import annotations

import threading
from pathlib import Path
from typing import Any

from .engine import assessment_for
from .factory import create_app


def _warm(spots: dict[str, Any]) -> None:
    """Fill the assessment cache for the loaded spots, so the first visit finds results ready."""
    for record in spots.values():
        try:
            assessment_for(record, {})
        except ValueError:  # SiteInputError included: the page shows the message when asked
            continue


def serve(paths: list[Path] | None = None, host: str = "127.0.0.1", port: int = 8050) -> None:
    """Serve the dashboard over ``paths`` (site files or folders); none: the bundled sample spots."""
    app = create_app(paths or None)
    spots = app.layout.children[0].data
    threading.Thread(target=_warm, args=(spots,), daemon=True, name="siteharvest-warm").start()
    print(f"siteharvest dashboard on http://{host}:{port}/  (Ctrl+C stops it)")
    app.run(host=host, port=port, debug=False)

"""``siteharvest serve``: the dashboard on a production WSGI server.

One process serves with waitress (any system); ``workers > 1`` runs gunicorn's pre-forking server
(Linux only). Either way requests are limited in size, responses carry the security headers of
:mod:`siteharvest_app.security`, and an address other than loopback needs the operator's password.
"""

from __future__ import annotations

import ipaddress
import os
import shutil
import sys
import tempfile
import threading
from pathlib import Path
from typing import Any

from .callbacks_results import portfolio_rows
from .factory import create_app
from .security import MAX_REQUEST_BYTES, PASSWORD_ENV, USER, operator_password
from .uploads import ROOT_ENV as UPLOAD_DIR_ENV

DEFAULT_HOST = "127.0.0.1"
DEFAULT_PORT = 8050
THREADS = 8  # request threads per process: reports waiting for the browser hold one each
IDENT = "siteharvest"  # the Server header: no software name or version
MAX_HEADER_BYTES = 65_536
EXIT_REFUSED = 2


def is_loopback(host: str) -> bool:
    """Whether ``host`` is reachable from this machine only (127.0.0.0/8, ::1, localhost)."""
    if host.lower().rstrip(".") == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False  # a host name: it may resolve to anything


def _warm(spots: dict[str, Any]) -> None:
    """Fill the caches for the loaded spots (each one's portfolio row, and so its assessment), so the first
    visit finds results ready."""
    for key, record in spots.items():
        try:
            portfolio_rows({key: record}, None)
        except Exception:  # the page shows the spot's problem when asked; warming never stops the server
            continue


def start_warming(app: Any) -> None:
    """Warm the cache in the background from the spots the page starts with (its first store)."""
    spots = getattr(getattr(app.layout, "children", [None])[0], "data", None)
    if isinstance(spots, dict):
        threading.Thread(target=_warm, args=(spots,), daemon=True, name="siteharvest-warm").start()


def wsgi_server(app: Any, host: str = DEFAULT_HOST, port: int = DEFAULT_PORT, threads: int = THREADS) -> Any:
    """A bound waitress server for the Dash ``app`` (port 0: a free one, see ``.effective_port``).

    Bodies over :data:`MAX_REQUEST_BYTES` are answered 413 from their length, before they are read.
    """
    from waitress import create_server

    return create_server(app.server, host=host, port=port, threads=threads, ident=IDENT,
                         max_request_body_size=MAX_REQUEST_BYTES, max_request_header_size=MAX_HEADER_BYTES,
                         clear_untrusted_proxy_headers=True, expose_tracebacks=False)


def _url(host: str, port: int) -> str:
    shown = f"[{host}]" if ":" in host and not host.startswith("[") else host
    return f"http://{shown}:{port}/"


def _say(text: str) -> None:
    print(f"siteharvest: {text}", file=sys.stderr)


def serve(paths: list[Path] | None = None, host: str = DEFAULT_HOST, port: int = DEFAULT_PORT, *,
          workers: int = 1, password_file: str | Path | None = None) -> int:
    """Serve the dashboard over ``paths`` (site files or folders; none: the bundled sample spots).

    Returns the exit status: 0 after Ctrl+C, :data:`EXIT_REFUSED` when it will not start (no password
    for an address other than loopback, an unreadable password file, gunicorn unavailable).
    """
    try:
        password = operator_password(password_file)
    except ValueError as exc:
        _say(str(exc))
        return EXIT_REFUSED
    if not is_loopback(host):
        _say(f"warning: --host {host} is reachable from other machines, over plain HTTP. Every request will "
             f"need the password (user '{USER}'); put a TLS reverse proxy in front (README: Running it for a team).")
        if password is None:
            _say(f"refusing to start: --host {host} needs a password; set {PASSWORD_ENV} or pass --password-file FILE")
            return EXIT_REFUSED
    if workers < 1:
        _say(f"--workers must be 1 or more, got {workers}")
        return EXIT_REFUSED
    if workers > 1 and not sys.platform.startswith("linux"):
        _say(f"--workers {workers} needs gunicorn, which runs on Linux only; on {sys.platform} serve with one "
             "process (leave out --workers)")
        return EXIT_REFUSED
    made_dir = None
    if workers > 1 and not os.environ.get(UPLOAD_DIR_ENV):  # every worker must see the same uploads
        made_dir = tempfile.mkdtemp(prefix="siteharvest-uploads-")
        os.environ[UPLOAD_DIR_ENV] = made_dir
    try:
        return _run(paths, host, port, workers, password)
    finally:
        if made_dir is not None:
            shutil.rmtree(made_dir, ignore_errors=True)


def _run(paths: list[Path] | None, host: str, port: int, workers: int, password: str | None) -> int:
    try:
        app = create_app(paths or None, password=password)
    except ValueError as exc:  # a password too short
        _say(str(exc))
        return EXIT_REFUSED
    login = f" (user '{USER}' and the password)" if password else ""
    if workers == 1:
        server = wsgi_server(app, host, port)
        start_warming(app)
        print(f"siteharvest dashboard on {_url(host, server.effective_port)}{login}  (Ctrl+C stops it)", flush=True)
        try:
            server.run()
        finally:
            server.close()
        return 0
    return _serve_gunicorn(app, host, port, workers, login)


def gunicorn_options(host: str, port: int, workers: int) -> dict[str, Any]:
    """gunicorn's settings: threaded workers, bounded request lines and headers (bodies: Flask's limit)."""
    bind = f"[{host}]:{port}" if ":" in host and not host.startswith("[") else f"{host}:{port}"
    return {"bind": [bind], "workers": workers, "worker_class": "gthread", "threads": THREADS,
            "timeout": 120, "graceful_timeout": 30, "keepalive": 5,
            "limit_request_line": 8190, "limit_request_fields": 100, "limit_request_field_size": 16_384,
            "preload_app": True, "accesslog": None, "errorlog": "-", "loglevel": "warning",
            "proc_name": "siteharvest"}


def _serve_gunicorn(app: Any, host: str, port: int, workers: int, login: str) -> int:
    from gunicorn.app.base import BaseApplication

    options = gunicorn_options(host, port, workers)

    class Application(BaseApplication):  # gunicorn's documented in-process API
        def load_config(self) -> None:
            for key, value in options.items():
                self.cfg.set(key, value)
            self.cfg.set("post_fork", lambda _server, _worker: start_warming(app))

        def load(self) -> Any:
            return app.server

    print(f"siteharvest dashboard on {_url(host, port)}{login} in {workers} worker processes  (Ctrl+C stops it)",
          flush=True)
    Application().run()
    return 0

"""What the dashboard's web server sends and accepts: a request size limit, security headers, and an
optional password on every route.

The headers come from flask-talisman, the login from flask-httpauth (HTTP Basic); nothing here parses
a header or a credential by hand.
"""

from __future__ import annotations

import hmac
import os
from pathlib import Path

import dash
from flask_httpauth import HTTPBasicAuth
from flask_talisman import Talisman

from .limits import MAX_REQUEST_BYTES

USER = "siteharvest"  # the user name of the login; the password is the operator's
PASSWORD_ENV = "SITEHARVEST_PASSWORD"
MIN_PASSWORD_CHARS = 8


def content_security_policy(app: dash.Dash) -> dict[str, str | list[str]]:
    """Same-origin everything; Dash's inline scripts by hash; inline styles (plotly.js writes them)."""
    return {
        "default-src": "'self'",
        "script-src": ["'self'", *app.csp_hashes()],
        "style-src": ["'self'", "'unsafe-inline'"],
        "img-src": ["'self'", "data:", "blob:"],
        "font-src": ["'self'", "data:"],
        "connect-src": "'self'",
        "worker-src": ["'self'", "blob:"],
        "object-src": "'none'",
        "base-uri": "'self'",
        "form-action": "'self'",
        "frame-ancestors": "'none'",
    }


def secure_headers(app: dash.Dash) -> Talisman:
    """Security headers on every response and the request size limit, whatever WSGI server runs the app.

    Call after the layout and every callback are defined (the inline-script hashes depend on them).
    No HTTPS redirect and no HSTS over plain HTTP: a TLS proxy in front sets those.
    """
    # Flask answers 413 from the Content-Length alone, before a body is read or parsed.
    app.server.config["MAX_CONTENT_LENGTH"] = MAX_REQUEST_BYTES
    return Talisman(
        app.server,
        force_https=False,
        strict_transport_security=False,
        session_cookie_secure=False,
        content_security_policy=content_security_policy(app),
        frame_options="DENY",
        referrer_policy="no-referrer",
        permissions_policy={"browsing-topics": "()", "camera": "()", "microphone": "()", "geolocation": "()",
                            "usb": "()", "payment": "()"},
    )


def require_password(app: dash.Dash, password: str, user: str = USER) -> HTTPBasicAuth:
    """Every route of ``app`` (page, assets, callbacks) answers 401 without ``user`` and ``password``."""
    if len(password) < MIN_PASSWORD_CHARS:
        raise ValueError(f"the password must have at least {MIN_PASSWORD_CHARS} characters")
    auth = HTTPBasicAuth(realm="siteharvest")
    want_user, want_password = user.encode(), password.encode()

    @auth.verify_password
    def _verify(name: str, given: str) -> str | None:
        user_ok = hmac.compare_digest(name.encode(), want_user)
        password_ok = hmac.compare_digest(given.encode(), want_password)
        return name if user_ok and password_ok else None

    @auth.login_required
    def _guard() -> None:
        return None  # let the request through to its route

    # Runs before any other before-request hook of the app, so nothing reads an unauthenticated body.
    app.server.before_request_funcs.setdefault(None, []).insert(0, _guard)
    return auth


def operator_password(password_file: str | Path | None = None) -> str | None:
    """The password the operator set: the first line of ``password_file``, else $SITEHARVEST_PASSWORD, else None.

    An empty or unreadable file is an error (ValueError), not "no password".
    """
    if password_file is not None:
        path = Path(password_file)
        try:
            text = path.read_text(encoding="utf-8")
        except OSError as exc:
            raise ValueError(f"{path}: the password file cannot be read ({exc.strerror or exc})") from None
        lines = text.splitlines()
        password = lines[0].strip() if lines else ""
        if not password:
            raise ValueError(f"{path}: the password file is empty")
        return password
    password = os.environ.get(PASSWORD_ENV, "").strip()
    return password or None

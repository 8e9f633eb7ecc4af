"""The served dashboard: waitress on loopback, the request size limit, security headers, the password on
every route, the refusal to listen beyond loopback without one, gunicorn's workers, the report queue.

Servers listen on 127.0.0.1 only; nothing leaves this machine. Expected header values are the ones
siteharvest_app.security sets (each named in the test); the inline-script hashes are recomputed here from the page.
"""

from __future__ import annotations

import base64
import hashlib
import http.client
import os
import re
import socket
import subprocess
import sys
import threading
import time
from pathlib import Path
from typing import ClassVar

import pytest
from dash import no_update
from served import HOST, basic, post_json, request, running
from siteharvest_app import ids, report_queue, security
from siteharvest_app import server as srv
from siteharvest_app.factory import create_app

ROOT = Path(__file__).resolve().parents[1]
PASSWORD = "correct horse battery"


@pytest.fixture(scope="module")
def app():
    return create_app()


@pytest.fixture(scope="module")
def port(app):
    with running(app) as p:
        yield p


@pytest.fixture
def run_dir(tmp_path, monkeypatch):
    monkeypatch.setenv("SITEHARVEST_RUN_DIR", str(tmp_path / "run"))
    return tmp_path / "run"


# --------------------------------------------------------------------------------------------------
# size limit


def test_a_body_over_the_limit_is_refused_by_waitress_from_its_length_alone():
    app = create_app()
    reached: list[str] = []
    app.server.before_request_funcs.setdefault(None, []).insert(0, lambda: reached.append("app") and None)
    with running(app) as port:
        conn = http.client.HTTPConnection(HOST, port, timeout=30)
        try:
            conn.putrequest("POST", "/_dash-update-component")
            conn.putheader("Content-Type", "application/json")
            conn.putheader("Content-Length", str(security.MAX_REQUEST_BYTES + 1))
            conn.endheaders()  # no body sent: the answer must come from the header
            reply = conn.getresponse()
            assert reply.status == 413
            reply.read()
        finally:
            conn.close()
        status, _, _ = request(port, "GET", "/")
        assert status == 200
    assert reached == ["app"]  # only the GET reached the app, not the refused POST


def test_flask_refuses_an_oversized_body_under_any_wsgi_server(app):
    """MAX_CONTENT_LENGTH: Flask answers 413 from the length before Dash parses the JSON."""
    assert app.server.config["MAX_CONTENT_LENGTH"] == security.MAX_REQUEST_BYTES
    client = app.server.test_client()
    reply = client.post("/_dash-update-component", data=b"{", content_type="application/json",
                        environ_overrides={"CONTENT_LENGTH": str(security.MAX_REQUEST_BYTES + 1)})
    assert reply.status_code == 413
    reply = client.post("/_dash-update-component", data=b"{", content_type="application/json")
    assert reply.status_code == 400  # under the limit the same bad body reaches the JSON parser


def test_the_limit_holds_the_largest_upload_encoded():
    from siteharvest_app.callbacks import MAX_UPLOAD_BYTES

    encoded = 4 * ((MAX_UPLOAD_BYTES + 2) // 3)  # base64 (RFC 4648): 4 characters per 3 bytes
    assert encoded + 1_000_000 < security.MAX_REQUEST_BYTES < 2 * MAX_UPLOAD_BYTES


# --------------------------------------------------------------------------------------------------
# headers


def test_security_headers_and_a_server_header_without_version(port):
    status, headers, body = request(port, "GET", "/")
    assert status == 200
    assert headers["server"] == srv.IDENT and not re.search(r"\d", headers["server"])
    assert headers["x-content-type-options"] == "nosniff"
    assert headers["x-frame-options"] == "DENY"
    assert headers["referrer-policy"] == "no-referrer"
    assert "camera=()" in headers["permissions-policy"]
    assert "strict-transport-security" not in headers  # plain HTTP: a TLS proxy sets HSTS
    csp = dict(part.strip().split(" ", 1) for part in headers["content-security-policy"].split(";"))
    assert csp["frame-ancestors"] == "'none'" and csp["object-src"] == "'none'"
    assert csp["default-src"] == "'self'"
    assert "http" not in headers["content-security-policy"]  # no other origin
    assert "'unsafe-inline'" not in csp["script-src"] and "'unsafe-eval'" not in csp["script-src"]
    # every inline script of the page is allowed by its hash, and only those are
    page = body.decode()
    inline = re.findall(r"<script(?![^>]*\bsrc=)(?![^>]*application/json)[^>]*>(.*?)</script>", page, re.S)
    assert inline
    for script in inline:
        digest = base64.b64encode(hashlib.sha256(script.encode()).digest()).decode()
        assert f"'sha256-{digest}'" in csp["script-src"]
    _, asset_headers, _ = request(port, "GET", "/assets/siteharvest.css")
    assert asset_headers["x-content-type-options"] == "nosniff" and asset_headers["server"] == srv.IDENT


# --------------------------------------------------------------------------------------------------
# password


@pytest.fixture(scope="module")
def locked_port():
    with running(create_app(password=PASSWORD)) as p:
        yield p


@pytest.mark.parametrize("path", ["/", "/_dash-layout", "/_dash-dependencies", "/assets/siteharvest.css"])
def test_every_route_needs_the_password(locked_port, path):
    status, headers, _ = request(locked_port, "GET", path)
    assert status == 401 and headers["www-authenticate"].lower().startswith("basic")
    assert headers["x-frame-options"] == "DENY"  # refusals carry the headers too
    assert request(locked_port, "GET", path, headers=basic(security.USER, "wrong password"))[0] == 401
    assert request(locked_port, "GET", path, headers=basic("someone", PASSWORD))[0] == 401
    assert request(locked_port, "GET", path, headers=basic(security.USER, PASSWORD))[0] == 200


@pytest.mark.parametrize("header", ["Bearer abc", "Basic !!!", "Basic " + base64.b64encode(b"no-colon").decode(),
                                    "Basic " + base64.b64encode(b"\xff\xfe:x").decode()])
def test_a_malformed_login_is_401_not_an_error(locked_port, header):
    assert request(locked_port, "GET", "/", headers={"Authorization": header})[0] == 401


def test_an_unauthenticated_callback_body_is_never_read(locked_port):
    status, _ = post_json(locked_port, "/_dash-update-component", [1, 2, 3])
    assert status == 401
    status, _, _ = request(locked_port, "POST", "/_dash-update-component", b"not json",
                           {"Content-Type": "application/json"})
    assert status == 401


def test_a_short_password_is_refused():
    with pytest.raises(ValueError, match="at least"):
        create_app(password="short")


def test_operator_password_from_a_file_or_the_environment(tmp_path, monkeypatch):
    monkeypatch.delenv(security.PASSWORD_ENV, raising=False)
    assert security.operator_password() is None
    monkeypatch.setenv(security.PASSWORD_ENV, "  from the environment \n")
    assert security.operator_password() == "from the environment"
    good = tmp_path / "pw"
    good.write_text("from the file\nsecond line ignored\n", encoding="utf-8")
    assert security.operator_password(good) == "from the file"  # the file wins over the environment
    empty = tmp_path / "empty"
    empty.write_text("\n", encoding="utf-8")
    with pytest.raises(ValueError, match="empty"):
        security.operator_password(empty)
    with pytest.raises(ValueError, match="cannot be read"):
        security.operator_password(tmp_path / "missing")


# --------------------------------------------------------------------------------------------------
# serve(): host, password, workers


@pytest.mark.parametrize(("host", "loopback"), [("127.0.0.1", True), ("127.1.2.3", True), ("::1", True),
                                                ("[::1]", True), ("localhost", True), ("0.0.0.0", False),
                                                ("::", False), ("192.168.1.20", False), ("example.org", False)])
def test_is_loopback(host, loopback):
    assert srv.is_loopback(host) is loopback


class FakeServer:
    """Stands in for waitress in serve(): records what it was given and returns at once (binds nothing)."""

    made: ClassVar[list[tuple]] = []

    def __init__(self, app, host, port, threads=srv.THREADS):
        FakeServer.made.append((app, host, port))
        self.effective_port = port

    def run(self):
        return None

    def close(self):
        return None


@pytest.fixture
def fake_waitress(monkeypatch):
    FakeServer.made = []
    monkeypatch.setattr(srv, "wsgi_server", FakeServer)
    monkeypatch.delenv(security.PASSWORD_ENV, raising=False)
    return FakeServer.made


def test_serve_beyond_loopback_warns_and_refuses_without_a_password(fake_waitress, capsys):
    assert srv.serve(host="0.0.0.0", port=8050) == srv.EXIT_REFUSED
    err = capsys.readouterr().err
    assert "warning: --host 0.0.0.0 is reachable from other machines" in err
    assert "refusing to start" in err and security.PASSWORD_ENV in err and "--password-file" in err
    assert fake_waitress == []


def test_serve_beyond_loopback_with_a_password_warns_and_locks_every_route(fake_waitress, capsys, tmp_path):
    pw = tmp_path / "pw"
    pw.write_text(PASSWORD + "\n", encoding="utf-8")
    assert srv.serve(host="0.0.0.0", port=8050, password_file=pw) == 0
    out = capsys.readouterr()
    assert "warning" in out.err and "TLS" in out.err
    (app, host, port), = fake_waitress
    assert (host, port) == ("0.0.0.0", 8050)
    client = app.server.test_client()
    assert client.get("/").status_code == 401
    assert client.get("/", headers=basic(security.USER, PASSWORD)).status_code == 200


def test_serve_on_loopback_needs_no_password_but_asks_for_one_given(fake_waitress, capsys, monkeypatch):
    assert srv.serve() == 0
    out = capsys.readouterr()
    assert out.err == "" and "http://127.0.0.1:8050/" in out.out
    assert fake_waitress[0][0].server.test_client().get("/").status_code == 200
    monkeypatch.setenv(security.PASSWORD_ENV, PASSWORD)
    assert srv.serve() == 0
    assert fake_waitress[1][0].server.test_client().get("/").status_code == 401


def test_workers_need_linux(fake_waitress, capsys, monkeypatch):
    monkeypatch.setattr(sys, "platform", "darwin")
    assert srv.serve(workers=2) == srv.EXIT_REFUSED
    assert "Linux only" in capsys.readouterr().err
    assert srv.serve(workers=0) == srv.EXIT_REFUSED
    assert fake_waitress == []


def test_gunicorn_options_bound_the_request_line_and_headers():
    opts = srv.gunicorn_options("127.0.0.1", 8050, 3)
    assert opts["bind"] == ["127.0.0.1:8050"] and opts["workers"] == 3 and opts["worker_class"] == "gthread"
    assert opts["limit_request_line"] and opts["limit_request_fields"] and opts["limit_request_field_size"]
    assert srv.gunicorn_options("::1", 8050, 2)["bind"] == ["[::1]:8050"]


def _free_port() -> int:
    with socket.socket() as s:
        s.bind((HOST, 0))
        return int(s.getsockname()[1])


def _cli(*args: str, env: dict[str, str] | None = None, timeout_s: float = 60) -> subprocess.CompletedProcess:
    base = {k: v for k, v in os.environ.items() if k != security.PASSWORD_ENV}
    return subprocess.run([sys.executable, "-m", "siteharvest", "serve", *args], capture_output=True, text=True,
                          timeout=timeout_s, env={**base, **(env or {})}, cwd=ROOT)


def test_cli_refuses_a_public_host_without_a_password():
    done = _cli("--host", "0.0.0.0", "--port", "0")
    assert done.returncode == 2
    assert "warning: --host 0.0.0.0" in done.stderr and "refusing to start" in done.stderr


def test_cli_help_states_the_defaults():
    done = subprocess.run([sys.executable, "-m", "siteharvest", "serve", "--help"], capture_output=True, text=True,
                          timeout=60, cwd=ROOT)
    assert done.returncode == 0
    text = " ".join(done.stdout.split())
    assert "default 127.0.0.1" in text and "default 8050" in text and "--workers" in text
    assert "--password-file" in text


def _wait_until_up(port: int, proc: subprocess.Popen, headers: dict[str, str] | None = None) -> None:
    deadline = time.monotonic() + 90
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            raise AssertionError(f"the server stopped: {proc.stderr.read() if proc.stderr else ''}")
        try:
            if request(port, "GET", "/_dash-layout", headers=headers, timeout_s=5)[0] in (200, 401):
                return
        except OSError:
            time.sleep(0.3)
    raise AssertionError("the server did not come up within 90 s")


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="gunicorn runs on Linux only")
def test_cli_workers_run_gunicorn_with_the_same_limits_and_headers(run_dir):
    port = _free_port()
    env = {k: v for k, v in os.environ.items() if k != security.PASSWORD_ENV}
    proc = subprocess.Popen([sys.executable, "-m", "siteharvest", "serve", "--port", str(port), "--workers", "2"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env, cwd=ROOT)
    try:
        _wait_until_up(port, proc)
        status, headers, _ = request(port, "GET", "/")
        assert status == 200 and headers["x-frame-options"] == "DENY"
        assert "content-security-policy" in headers and not re.search(r"\d", headers.get("server", ""))
        conn = http.client.HTTPConnection(HOST, port, timeout=30)
        try:
            conn.putrequest("POST", "/_dash-update-component")
            conn.putheader("Content-Type", "application/json")
            conn.putheader("Content-Length", str(security.MAX_REQUEST_BYTES + 1))
            conn.endheaders()
            assert conn.getresponse().status == 413  # Flask's limit: gunicorn has none for bodies
        finally:
            conn.close()
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=30)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait(timeout=10)
    assert "in 2 worker processes" in (proc.stdout.read() if proc.stdout else "")


# --------------------------------------------------------------------------------------------------
# the report queue


def test_reports_in_threads_never_overlap(run_dir):
    inside: list[int] = []
    overlaps: list[int] = []
    guard = threading.Lock()

    def fake_report(n: int):
        with guard:
            inside.append(n)
            if len(inside) > 1:
                overlaps.append(n)
        time.sleep(0.05)
        with guard:
            inside.remove(n)
        return f"report {n}", ""

    queued = report_queue.one_report_at_a_time(fake_report)
    results: list[tuple] = []
    threads = [threading.Thread(target=lambda n=n: results.append(queued(n))) for n in range(report_queue.MAX_WAITING)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(timeout=60)
    assert overlaps == []
    assert sorted(r[0] for r in results) == [f"report {n}" for n in range(report_queue.MAX_WAITING)]


@pytest.fixture
def lock_held_elsewhere(run_dir):
    """Another process holds the report lock until the test ends."""
    code = ("import sys; from siteharvest_app.report_queue import report_lock\n"
            "lock = report_lock(30); lock.acquire(); print('held', flush=True); sys.stdin.read(); lock.release()")
    proc = subprocess.Popen([sys.executable, "-c", code], stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True,
                            cwd=ROOT, env={**os.environ, "SITEHARVEST_RUN_DIR": str(run_dir)})
    try:
        assert proc.stdout is not None and proc.stdout.readline().strip() == "held"
        yield
    finally:
        assert proc.stdin is not None
        proc.stdin.close()
        proc.wait(timeout=30)


def test_a_report_waits_for_the_lock_held_by_another_process(lock_held_elsewhere):
    called: list[int] = []
    queued = report_queue.one_report_at_a_time(lambda: called.append(1) or ("pdf", ""), wait_s=0.3)
    assert queued() == (no_update, report_queue.BUSY)
    assert called == []


def test_too_many_waiting_reports_are_turned_away(run_dir, monkeypatch):
    monkeypatch.setattr(report_queue, "_waiting", report_queue.MAX_WAITING)
    queued = report_queue.one_report_at_a_time(lambda: ("pdf", ""))
    assert queued() == (no_update, report_queue.BUSY)


def test_the_report_buttons_are_wired_through_the_queue(lock_held_elsewhere, monkeypatch, app):
    """Through Flask: with the lock held elsewhere, the report callback answers 'busy' and makes nothing."""
    monkeypatch.setattr(report_queue, "WAIT_S", 0.3)
    spots = app.layout.children[0].data
    key = next(iter(spots))
    deps = app.server.test_client().get("/_dash-dependencies").get_json()
    dep = next(d for d in deps if f"{ids.REPORT_DOWNLOAD}.data" in d["output"])
    layout_values = {ids.SPOTS: spots, ids.SPOT_PICKER: key}
    body = {"output": dep["output"],
            "outputs": [{"id": o.split(".")[0], "property": o.split(".")[1]}
                        for o in dep["output"].strip(".").split("...")],
            "inputs": [{**i, "value": 1 if i["id"] == ids.REPORT_HTML_BUTTON else None} for i in dep["inputs"]],
            "state": [{**s, "value": layout_values.get(s["id"])} for s in dep["state"]],
            "changedPropIds": [f"{ids.REPORT_HTML_BUTTON}.n_clicks"]}
    reply = app.server.test_client().post("/_dash-update-component", json=body)
    assert reply.status_code == 200, reply.get_data(as_text=True)[:300]
    assert report_queue.BUSY in reply.get_data(as_text=True)

"""The dashboard on a real waitress server in this process, on a free loopback port, and plain HTTP
helpers for talking to it (http.client: nothing leaves this machine)."""

from __future__ import annotations

import base64
import http.client
import json
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from typing import Any

from siteharvest_app.server import wsgi_server

HOST = "127.0.0.1"


@contextmanager
def running(app: Any, threads: int = 8) -> Iterator[int]:
    """Serve the Dash ``app`` with waitress on 127.0.0.1 and a free port; yields the port."""
    server = wsgi_server(app, HOST, 0, threads=threads)
    thread = threading.Thread(target=server.run, daemon=True, name="test-waitress")
    thread.start()
    try:
        yield int(server.effective_port)
    finally:
        server.close()
        server.task_dispatcher.shutdown()
        thread.join(timeout=10)


def basic(user: str, password: str) -> dict[str, str]:
    token = base64.b64encode(f"{user}:{password}".encode()).decode()
    return {"Authorization": f"Basic {token}"}


def request(port: int, method: str, path: str, body: bytes | None = None, headers: dict[str, str] | None = None,
            timeout_s: float = 120.0) -> tuple[int, dict[str, str], bytes]:
    """One request on a fresh connection: (status, headers with lower-case names, body)."""
    conn = http.client.HTTPConnection(HOST, port, timeout=timeout_s)
    try:
        conn.request(method, path, body=body, headers=headers or {})
        reply = conn.getresponse()
        return reply.status, {k.lower(): v for k, v in reply.getheaders()}, reply.read()
    finally:
        conn.close()


def post_json(port: int, path: str, payload: Any, headers: dict[str, str] | None = None,
              timeout_s: float = 120.0) -> tuple[int, Any]:
    data = json.dumps(payload).encode()
    status, _, body = request(port, "POST", path, data, {"Content-Type": "application/json", **(headers or {})},
                              timeout_s)
    try:
        return status, json.loads(body)
    except ValueError:
        return status, body.decode("utf-8", "replace")


def layout_values(layout: Any) -> dict[str, dict[str, Any]]:
    """{component id: its props} for every component with a plain string id in a ``/_dash-layout`` tree."""
    found: dict[str, dict[str, Any]] = {}
    stack = [layout]
    while stack:
        node = stack.pop()
        if isinstance(node, list):
            stack.extend(node)
        elif isinstance(node, dict):
            props = node.get("props")
            if isinstance(props, dict):
                if isinstance(props.get("id"), str):
                    found[props["id"]] = props
                stack.extend(v for v in props.values() if isinstance(v, list | dict))
    return found


def callback_body(dep: dict[str, Any], values: dict[str, Any], changed: str) -> dict[str, Any]:
    """The body the page posts to ``/_dash-update-component`` for the callback ``dep`` (from
    ``/_dash-dependencies``), with ``values`` as ``{"id.property": value}`` for its inputs and states."""
    outputs = [dict(zip(("id", "property"), o.split("@")[0].rsplit(".", 1), strict=True))
               for o in dep["output"].strip(".").split("...")]

    def fill(items: list[dict[str, Any]]) -> list[dict[str, Any]]:
        return [{"id": i["id"], "property": i["property"], "value": values.get(f"{i['id']}.{i['property']}")}
                for i in items]

    return {"output": dep["output"], "outputs": outputs if len(outputs) > 1 else outputs[0],
            "inputs": fill(dep["inputs"]), "state": fill(dep["state"]), "changedPropIds": [changed]}


def record_problems(page: Any) -> list[str]:
    """Console errors, page errors and requests leaving this machine, as they happen on a Playwright ``page``."""
    problems: list[str] = []
    page.on("console", lambda m: problems.append(f"console {m.type}: {m.text}") if m.type == "error" else None)
    page.on("pageerror", lambda e: problems.append(f"page error: {e}"))
    page.on("request", lambda r: problems.append(f"request off this machine: {r.url}")
            if not r.url.startswith(("http://127.0.0.1", "data:", "blob:")) else None)
    return problems

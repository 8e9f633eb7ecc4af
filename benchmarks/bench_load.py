"""Recompute latency under load, end to end over HTTP: 20 sessions at once against ``siteharvest serve``
(waitress, in a subprocess, on 127.0.0.1), each posting its own edited spot to the recompute callback as
the page does. Every request edits the spot to a value not seen before (the assessment cache misses;
the weather year stays cached), and every answer is checked to be its own spot's. Prints p50 and p95.

Run by hand: ``python benchmarks/bench_load.py [--sessions 20] [--rounds 5] [--workers 1]``.
Traffic stays on loopback; the run is bounded by sessions x rounds and a time limit per request.
"""

from __future__ import annotations

import argparse
import copy
import http.client
import json
import os
import secrets
import socket
import statistics
import subprocess
import sys
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from siteharvest_app import ids  # noqa: E402

HOST = "127.0.0.1"
TIMEOUT_S = 300.0
SPOT = "north-wall"


def free_port() -> int:
    with socket.socket() as s:
        s.bind((HOST, 0))
        return int(s.getsockname()[1])


def call(port: int, method: str, path: str, payload: object = None) -> tuple[int, bytes]:
    conn = http.client.HTTPConnection(HOST, port, timeout=TIMEOUT_S)
    try:
        body = None if payload is None else json.dumps(payload).encode()
        conn.request(method, path, body=body, headers={"Content-Type": "application/json"} if body else {})
        reply = conn.getresponse()
        return reply.status, reply.read()
    finally:
        conn.close()


def find_props(layout: object) -> dict[str, dict]:
    found, stack = {}, [layout]
    while stack:
        node = stack.pop()
        if isinstance(node, list):
            stack.extend(node)
        elif isinstance(node, dict) and isinstance(node.get("props"), dict):
            props = node["props"]
            if isinstance(props.get("id"), str):
                found[props["id"]] = props
            stack.extend(v for v in props.values() if isinstance(v, list | dict))
    return found


def body_for(dep: dict, values: dict) -> dict:
    outputs = [dict(zip(("id", "property"), o.split("@")[0].rsplit(".", 1), strict=True))
               for o in dep["output"].strip(".").split("...")]

    def fill(items: list[dict]) -> list[dict]:
        return [{"id": i["id"], "property": i["property"], "value": values.get(f"{i['id']}.{i['property']}")}
                for i in items]

    return {"output": dep["output"], "outputs": outputs, "inputs": fill(dep["inputs"]), "state": fill(dep["state"]),
            "changedPropIds": [f"{ids.SPOTS}.data"]}


def wait_until_up(port: int, proc: subprocess.Popen) -> None:
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            raise SystemExit("the server stopped before it answered")
        try:
            if call(port, "GET", "/_dash-layout")[0] == 200:
                return
        except OSError:
            time.sleep(0.3)
    raise SystemExit("the server did not answer within 120 s")


def session(port: int, n: int, rounds: int, dep: dict, spots0: dict, latencies: list[float],
            errors: list[str]) -> None:
    token = secrets.token_urlsafe(24)
    for r in range(rounds):
        spots = copy.deepcopy(spots0)
        key = SPOT if SPOT in spots else next(iter(spots))
        name = f"bench session {n:02d} round {r:02d}"
        spots[key]["site"]["spot"]["name"] = name
        spots[key]["site"]["node"]["sleep_current_ua"] = 1.0 + n + r / (rounds + 1)  # never seen before
        values = {f"{ids.SPOTS}.data": spots, f"{ids.SPOT_PICKER}.value": key,
                  f"{getattr(ids, 'SESSION', '-')}.data": token}
        t = time.perf_counter()
        try:
            status, body = call(port, "POST", "/_dash-update-component", body_for(dep, values))
        except OSError as exc:
            errors.append(f"session {n}: {exc}")
            return
        latencies.append(time.perf_counter() - t)
        if status != 200 or name not in body.decode("utf-8", "replace"):
            errors.append(f"session {n} round {r}: HTTP {status}")


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sessions", type=int, default=20)
    parser.add_argument("--rounds", type=int, default=5, help="recomputes per session (default 5)")
    parser.add_argument("--workers", type=int, default=1, help="server processes (default 1: waitress)")
    args = parser.parse_args()
    port = free_port()
    env = {k: v for k, v in os.environ.items() if k != "SITEHARVEST_PASSWORD"}
    proc = subprocess.Popen([sys.executable, "-m", "siteharvest", "serve", "--port", str(port),
                             "--workers", str(args.workers)], cwd=ROOT, env=env,
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    try:
        wait_until_up(port, proc)
        props = find_props(json.loads(call(port, "GET", "/_dash-layout")[1]))
        deps = json.loads(call(port, "GET", "/_dash-dependencies")[1])
        dep = next(d for d in deps if f"{ids.STATUS}.children" in d["output"])
        spots0 = props[ids.SPOTS]["data"]
        warm: list[float] = []
        session(port, 99, 2, dep, spots0, warm, [])  # weather year and compiled kernel ready, as after a first visit
        latencies: list[float] = []
        errors: list[str] = []
        t0 = time.perf_counter()
        threads = [threading.Thread(target=session, args=(port, n, args.rounds, dep, spots0, latencies, errors))
                   for n in range(args.sessions)]
        for t in threads:
            t.start()
        for t in threads:
            t.join(timeout=TIMEOUT_S * (args.rounds + 1))
        wall = time.perf_counter() - t0
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=30)
        except subprocess.TimeoutExpired:
            proc.kill()
    if not latencies:
        print("no request finished", errors[:3])
        return 1
    q = statistics.quantiles(latencies, n=20, method="inclusive")
    print(f"{args.sessions} sessions x {args.rounds} recomputes, {args.workers} worker process(es), "
          f"{os.cpu_count()} cores: {len(latencies)} answered, {len(errors)} errors, {wall:.1f} s in all")
    print(f"recompute over HTTP: p50 {statistics.median(latencies):.2f} s, p95 {q[18]:.2f} s, "
          f"max {max(latencies):.2f} s; alone (warm-up) {min(warm):.2f} s")
    for line in errors[:5]:
        print("  error:", line)
    return 1 if errors else 0


if __name__ == "__main__":
    raise SystemExit(main())

"""A bounded load test on loopback: 20 sessions at once against a real waitress server, each posting its
own edited spot to the recompute callback, as the page does. Every session must get the numbers of its
own spot and nothing of another's, with no error. Bounded: 20 sessions x 2 requests, each with a time
limit; no timing is asserted (timings: benchmarks/bench_load.py).

The expected mean demand of each session's spot is computed here by the library's demand model.
"""

from __future__ import annotations

import copy
import json
import secrets
import threading

from served import callback_body, layout_values, post_json, request, running
from siteharvest_app import ids
from siteharvest_app.factory import create_app

from siteharvest.demand import NodeSpec, mean_power_w

SESSIONS = 20
ROUNDS = 2  # per session: its first edit, then a second one (a fresh spot, not a cache hit)
TIMEOUT_S = 180.0
SPOT = "north-wall"  # a sample spot with bundled weather only


def _session_spots(spots: dict, n: int, round_: int) -> tuple[dict, str, str, str]:
    """The page's spots with this session's own edit of one spot: (spots, key, spot name, demand text)."""
    spots = copy.deepcopy(spots)
    key = SPOT if SPOT in spots else next(iter(spots))
    site = spots[key]["site"]
    name = f"load session {n:02d} round {round_}"
    site["spot"]["name"] = name
    site["node"]["sleep_current_ua"] = 1.0 + n + 0.5 * round_  # a different demand for every request
    demand_uw = mean_power_w(NodeSpec(**site["node"])) * 1e6
    return spots, key, name, f"mean demand {demand_uw:.3g} µW"


def test_concurrent_sessions_each_get_their_own_numbers():
    sessions = SESSIONS
    app = create_app()
    failures: list[str] = []
    done: list[int] = []
    guard = threading.Lock()
    with running(app, threads=8) as port:
        status, _, _ = request(port, "GET", "/")
        assert status == 200

        def session(n: int) -> None:
            try:
                _, _, body = request(port, "GET", "/_dash-layout", timeout_s=TIMEOUT_S)
                props = layout_values(json.loads(body))
                _, _, body = request(port, "GET", "/_dash-dependencies", timeout_s=TIMEOUT_S)
                deps = json.loads(body)
                dep = next(d for d in deps if f"{ids.STATUS}.children" in d["output"])
                token = secrets.token_urlsafe(24)
                for round_ in range(ROUNDS):
                    spots, key, name, demand = _session_spots(props[ids.SPOTS]["data"], n, round_)
                    values = {f"{ids.SPOTS}.data": spots, f"{ids.SPOT_PICKER}.value": key,
                              f"{getattr(ids, 'SESSION', '-')}.data": token,
                              f"{ids.CASE_PICKER}.value": None}
                    code, reply = post_json(port, "/_dash-update-component",
                                            callback_body(dep, values, f"{ids.SPOTS}.data"), timeout_s=TIMEOUT_S)
                    text = reply if isinstance(reply, str) else json.dumps(reply, ensure_ascii=False)
                    if code != 200:
                        failures.append(f"session {n} round {round_}: HTTP {code}: {text[:200]}")
                        return
                    status_text = json.dumps(reply["response"][ids.STATUS], ensure_ascii=False)
                    if name not in status_text or demand not in status_text:
                        failures.append(f"session {n} round {round_}: expected {name!r} and {demand!r}, got "
                                        f"{status_text[:300]}")
                    others = [m for m in range(sessions) if m != n and f"load session {m:02d} " in text]
                    if others:
                        failures.append(f"session {n} round {round_}: saw the spots of sessions {others}")
                with guard:
                    done.append(n)
            except Exception as exc:  # any error is a failure of the test, reported with its session
                failures.append(f"session {n}: {type(exc).__name__}: {exc}")

        threads = [threading.Thread(target=session, args=(n,), name=f"load-{n}") for n in range(sessions)]
        for t in threads:
            t.start()
        for t in threads:
            t.join(timeout=TIMEOUT_S * (ROUNDS + 2))
        assert not any(t.is_alive() for t in threads), "a session did not finish within its time limit"
    assert failures == []
    assert sorted(done) == list(range(sessions))

"""Hostile input through the dashboard's real endpoint: never an HTTP 500, always a line the user can read.

Site files with the classes of bad input a fuzzing audit found (a table where a preset name belongs, deep
nesting, a 5,000-digit integer, not-a-number, binary bytes), and hypothesis-mutated site files, are
opened through ``/_dash-update-component`` as a browser would send them. The reply must be 200 and must
say, in the upload's message line or in the line at the foot of the window, what was wrong; the spots
the page had stay as they were.
"""

from __future__ import annotations

import base64
import json
import re
from typing import Any

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from siteharvest_app import ids
from siteharvest_app.bundled import SAMPLE_SITES
from siteharvest_app.factory import create_app

SAMPLE = (SAMPLE_SITES / "plant-room.toml").read_text(encoding="utf-8")
ROOF = (SAMPLE_SITES / "roof-parapet.toml").read_text(encoding="utf-8")
SESSION = "bad-input-session-" + "d" * 20


@pytest.fixture(scope="module")
def client_and_dep():
    app = create_app()
    client = app.server.test_client()
    deps = client.get("/_dash-dependencies").get_json()
    dep = next(d for d in deps if any(i["id"] == ids.SITE_UPLOAD and i["property"] == "contents"
                                      for i in d["inputs"]))
    return client, dep, app.layout.children[0].data


def open_site(client: Any, dep: dict[str, Any], spots: dict[str, Any], raw: bytes, name: str = "bad.toml"):
    contents = "data:application/octet-stream;base64," + base64.b64encode(raw).decode()
    outputs = [dict(zip(("id", "property"), part.rsplit(".", 1), strict=True))
               for part in dep["output"].strip(".").split("...")]
    values = {f"{ids.SITE_UPLOAD}.contents": [contents], f"{ids.SITE_UPLOAD}.filename": [name],
              f"{ids.SPOT_PICKER}.value": next(iter(spots)), f"{ids.SPOTS}.data": spots,
              f"{ids.SESSION}.data": SESSION}
    body = {"output": dep["output"], "outputs": outputs,
            "inputs": [{**i, "value": values[f"{i['id']}.{i['property']}"]} for i in dep["inputs"]],
            "state": [{**s, "value": values[f"{s['id']}.{s['property']}"]} for s in dep["state"]],
            "changedPropIds": [f"{ids.SITE_UPLOAD}.contents"]}
    return client.post("/_dash-update-component", json=body)


def shown_line(reply: Any) -> str:
    """The line the page shows after the reply: the upload's message or the foot-of-window problem line."""
    data = json.loads(reply.get_data(as_text=True))
    side = (data.get("sideUpdate") or {}).get(ids.PROBLEM, {}).get("children")
    message = (data.get("response") or {}).get(ids.SITE_UPLOAD_MSG, {}).get("children")
    return str(side or message or "")


def one_readable_line(text: str) -> bool:
    return bool(text) and "\n" not in text and "Traceback" not in text and not re.search(r"np\.\w+\(", text)


CLASSES = {
    "table as a preset": SAMPLE.replace('preset = "', 'preset = { x = "', 1).replace('"\n', '" }\n', 1),
    "list as a store chemistry": ROOF.replace('chemistry = "li-ion"', 'chemistry = ["li-ion"]'),
    "table as a solar technology": SAMPLE.replace('technology = "amorphous-silicon"',
                                                  'technology = { a = 1 }'),
    "deep nesting": "a = " + "[" * 2000 + "]" * 2000 + "\n",
    "deep tables": "a = " + "{b = " * 600 + "1" + "}" * 600 + "\n",
    "5000-digit integer": SAMPLE.replace("latitude_deg = ", "latitude_deg = " + "9" * 5000 + " # ", 1),
    "nan latitude": re.sub(r"latitude_deg = [-0-9.]+", "latitude_deg = nan", SAMPLE, count=1),
    "unterminated string": SAMPLE.replace('name = "', 'name = "unterminated', 1).split("\n", 1)[0] + '\nx = "',
    "not utf-8": None,
}


@pytest.mark.parametrize("case", sorted(CLASSES))
def test_each_class_of_bad_site_file_gives_one_line_and_no_500(client_and_dep, case):
    client, dep, spots = client_and_dep
    text = CLASSES[case]
    assert text is None or text not in (SAMPLE, ROOF)  # the case does change the file
    raw = text.encode() if text is not None else b"\xff\xfe\x00\x01" * 200
    reply = open_site(client, dep, spots, raw)
    assert reply.status_code == 200, reply.get_data(as_text=True)[:300]
    line = shown_line(reply)
    assert one_readable_line(line), line
    data = json.loads(reply.get_data(as_text=True))
    assert ids.SPOTS not in (data.get("response") or {})  # the page's spots stay as they were


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture,
                                                                  HealthCheck.too_slow])
@given(cut=st.integers(0, len(SAMPLE)), junk=st.sampled_from(["[", "]", "{", "= =", "\x00", "'", '"', "nan",
                                                             "1e400", "[[source]]\n", "-" * 50, "9" * 4400]))
def test_mutated_site_files_never_give_a_500(client_and_dep, cut, junk):
    client, dep, spots = client_and_dep
    text = SAMPLE[:cut] + junk + SAMPLE[cut:]
    reply = open_site(client, dep, spots, text.encode())
    assert reply.status_code == 200
    line = shown_line(reply)
    assert one_readable_line(line), line

"""Which files a site may make the server read: the one rule of siteharvest.files, and the dashboard on it.

An uploaded site (or a forged browser state) names files outside what it was given: an absolute path,
``..`` out of the samples, a link out of a folder, another session's upload. Each must be refused with
the same line whether or not the file exists, and nothing of the file may reach the page. A canary file
with a unique text stands in for the server's secrets.
"""

from __future__ import annotations

import base64
import copy
import json
import os
import time
from pathlib import Path

import pytest
from dash import no_update
from served import callback_body
from siteharvest_app import callbacks as cb
from siteharvest_app import callbacks_study as cs
from siteharvest_app import ids
from siteharvest_app.bundled import SAMPLE_SITES
from siteharvest_app.engine import ASSESSMENTS, assessment_for, files_for, load_records
from siteharvest_app.factory import create_app
from siteharvest_app.uploads import UploadStore, upload_store, valid_session

from siteharvest.errors import SiteInputError
from siteharvest.files import FolderFiles, ListedFiles, listed_in_folder, named_files, plain_name
from siteharvest.site import load_site, parse_site_text

ROOT = Path(__file__).resolve().parents[1]
SESSION_A = "session-a-" + "1" * 24
SESSION_B = "session-b-" + "2" * 24
CANARY = "CANARY-7f3e1b-server-secret"


def upload(text: str, mime: str = "text/plain") -> str:
    return f"data:{mime};base64," + base64.b64encode(text.encode()).decode()


@pytest.fixture
def canary(tmp_path: Path) -> Path:
    path = tmp_path / "secret.csv"
    path.write_text(f"{CANARY}\n{CANARY},1\n", encoding="utf-8")
    return path


def said(*values: object) -> str:
    """Everything a callback sends back, as text."""
    return json.dumps([getattr(v, "to_plotly_json", lambda v=v: v)() for v in values], default=str)


# --------------------------------------------------------------------------------------------------
# the rule itself


@pytest.mark.parametrize("name", ["/etc/passwd", "../../../../etc/passwd", "a/../../b.csv", "..", "C:/x.csv",
                                  "a\\..\\b.csv", "", "x\x00.csv", "\n"])
def test_plain_name_refuses_what_could_leave_the_list(name):
    assert plain_name(name) is None


def test_plain_name_keeps_one_spelling():
    assert plain_name("./surveys//pump.csv") == "surveys/pump.csv"


def test_listed_files_refuse_alike_whether_or_not_the_file_exists(canary):
    files = ListedFiles({"ok.csv": canary}, site="up.toml")
    lines = []
    for name in (str(canary), "/no/such/file.csv", "../" + canary.name, "../no-such.csv"):
        with pytest.raises(SiteInputError) as err:
            files.path_of(name, "weather.file")
        lines.append((err.value.file, err.value.field, err.value.expected, err.value.got == name))
        assert CANARY not in str(err.value)
    assert len(set(lines)) == 1  # one message: the existence of a path does not leak
    assert lines[0][:2] == ("up.toml", "weather.file") and "uploaded" in lines[0][2] and lines[0][3]
    assert files.path_of("./ok.csv", "weather.file") == canary


def test_a_link_out_of_a_folder_is_not_listed(tmp_path, canary):
    folder = tmp_path / "samples"
    (folder / "surveys").mkdir(parents=True)
    (folder / "surveys" / "real.csv").write_text("frequency_hz,accel\n50,1\n")
    (folder / "surveys" / "out.csv").symlink_to(canary)
    assert set(listed_in_folder(folder)) == {"surveys/real.csv"}


def test_command_line_rule_is_beside_the_site_file():
    spec = load_site(SAMPLE_SITES / "plant-room.toml")
    assert isinstance(spec.files, FolderFiles) and spec.base_dir == SAMPLE_SITES.resolve()
    survey = next(n for n in named_files(spec) if n.field.endswith("spectrum_file"))
    assert spec.files.path_of(survey.name, survey.field) == SAMPLE_SITES.resolve() / survey.name


def test_named_files_finds_every_file_field():
    spec = load_site(SAMPLE_SITES / "plant-room.toml")
    fields = [n.field for n in named_files(spec)]
    assert any(f.endswith(".spectrum_file") for f in fields)


# --------------------------------------------------------------------------------------------------
# the dashboard


ATTACK_SITE = (SAMPLE_SITES / "roof-parapet.toml").read_text(encoding="utf-8")


def attack_texts(target: str) -> dict[str, str]:
    """Site files naming ``target`` in each kind of file field."""
    weather = ATTACK_SITE.split("[weather]")[0] + f'[weather]\nfile = "{target}"\nfile_format = "csv"\n\n' + \
        "[node]" + ATTACK_SITE.split("[node]", 1)[1]
    vibration = ATTACK_SITE + f"""
[[source]]
id = "shaker"
kind = "vibration"
spectrum_file = "{target}"
spectrum_unit = "g"
spectrum_measure = "rms"
"""
    hot = ATTACK_SITE + f"""
[[source]]
id = "pipe"
kind = "thermoelectric"
[source.hot_side]
mode = "file"
file = "{target}"
column = "{CANARY}"
"""
    return {"weather": weather, "vibration": vibration, "hot side": hot}


@pytest.mark.parametrize("kind", ["weather", "vibration", "hot side"])
def test_an_uploaded_site_cannot_read_the_servers_disk(kind, canary, tmp_path):
    spots, _ = load_records(None)
    key = next(iter(spots))
    relative = os.path.relpath(canary, SAMPLE_SITES)
    shown = []
    for target in (str(canary), relative, "/etc/passwd", "../../../../../../etc/passwd", str(tmp_path / "none.csv")):
        text = attack_texts(target)[kind]
        opened, new_key, line = cb.upload_site([upload(text)], ["attack.toml"], key, spots, SESSION_A)
        assert opened is not no_update, line
        out = cb.recompute(opened, new_key, SESSION_A, None)
        page = said(*out, line)
        assert CANARY not in page and "root:" not in page
        assert str(tmp_path) not in page.replace(json.dumps(target)[1:-1], "")
        status = said(out[0])
        assert "files on the server are not read" in status
        shown.append(status.split(", got ")[0])  # the line but the name the site gave
    assert len(set(shown)) == 1  # the same line whether the file exists or not


def test_a_forged_record_reads_nothing_it_was_not_given(canary):
    spots, _ = load_records(None)
    key = next(iter(spots))
    forged = copy.deepcopy(spots[key])
    forged["site"]["weather"] = {"file": str(canary), "file_format": "csv"}
    forged["base_dir"] = str(canary.parent)  # the old state's folder: ignored
    forged["origin"] = "served:" + "0" * 20  # no such list
    forged["files"] = {str(canary): "0" * 64, "x.csv": "../../etc"}  # hashes it has no upload of
    with pytest.raises(SiteInputError) as err:
        assessment_for(forged, SESSION_A)
    assert CANARY not in str(err.value) and "not read" in str(err.value)
    listed = files_for(forged, SESSION_A).listed
    assert str(canary) not in listed and all(SAMPLE_SITES.resolve() in p.parents for p in listed.values())


def test_one_sessions_upload_is_not_anothers():
    spots, _ = load_records(None)
    key = next(iter(spots))
    text = (SAMPLE_SITES / "surveys" / "pump-skid-p3.csv").read_text(encoding="utf-8") + "\n# session a\n"
    site = ATTACK_SITE + '\n[[source]]\nid = "shaker"\nkind = "vibration"\nspectrum_file = "mine.csv"\n' \
        'spectrum_unit = "g"\nspectrum_measure = "rms"\n'
    opened, new_key, line = cb.upload_site([upload(site), upload(text)], ["mine.toml", "mine.csv"], key, spots,
                                           SESSION_A)
    assert "open it together" not in line
    record = opened[new_key]
    assert assessment_for(record, SESSION_A).sources[-1].id == "shaker"  # A reads its own upload
    ASSESSMENTS.clear()
    with pytest.raises(SiteInputError, match="not read"):
        assessment_for(record, SESSION_B)  # the same record in another session finds nothing
    with pytest.raises(SiteInputError, match="not read"):
        assessment_for(record, None)


def test_site_opened_with_the_files_it_names(tmp_path):
    spots, _ = load_records(None)
    key = next(iter(spots))
    survey = (SAMPLE_SITES / "surveys" / "pump-skid-p3.csv").read_text(encoding="utf-8")
    site = ATTACK_SITE + ('\n[[source]]\nid = "shaker"\nkind = "vibration"\nspectrum_file = "logs/skid.csv"\n'
                          'spectrum_unit = "g"\nspectrum_measure = "rms"\n')
    alone, k1, line1 = cb.upload_site([upload(site)], ["skid.toml"], key, spots, SESSION_A)
    assert "names logs/skid.csv: open it together with the site file" in line1
    assert alone[k1]["files"] == {}  # opened, but with nothing to read: the status then says what is missing
    both, k2, line2 = cb.upload_site([upload(site), upload(survey)], ["skid.toml", "skid.csv"], key, spots,
                                     SESSION_A)
    assert "open it together" not in line2
    assert both[k2]["files"] == {"logs/skid.csv": upload_store().put(SESSION_A, survey)}  # kept under its hash
    assert assessment_for(both[k2], SESSION_A).sources[-1].annual_energy_wh >= 0


def test_an_uploaded_site_may_name_the_bundled_samples():
    spots, _ = load_records(None)
    key = next(iter(spots))
    text = (SAMPLE_SITES / "plant-room.toml").read_text(encoding="utf-8")
    opened, new_key, line = cb.upload_site([upload(text)], ["copy.toml"], key, spots, SESSION_A)
    assert "open it together" not in line
    assert assessment_for(opened[new_key], SESSION_A).sources  # the bundled survey reads


def test_report_of_an_uploaded_attack_names_no_server_file(canary):
    spots, _ = load_records(None)
    key = next(iter(spots))
    opened, new_key, _ = cb.upload_site([upload(attack_texts(str(canary))["vibration"])], ["attack.toml"], key,
                                        spots, SESSION_A)
    download, message = cs.download_report(0, 1, new_key, opened, SESSION_A, trigger=(ids.REPORT_HTML_BUTTON, 1))
    assert download is no_update and CANARY not in message and "not read" in message


# --------------------------------------------------------------------------------------------------
# the upload store


def test_upload_store_keeps_text_under_its_hash_only(tmp_path):
    store = UploadStore(tmp_path / "up")
    sha = store.put(SESSION_A, "a,b\n1,2\n")
    assert [p.name for p in (tmp_path / "up" / SESSION_A).iterdir()] == [sha]
    assert store.text(SESSION_A, sha) == "a,b\n1,2\n" and store.path(SESSION_B, sha) is None
    for bad in ("../x", "short", "a" * 65, None, "a/b" + "c" * 30):
        assert not valid_session(bad)
        with pytest.raises(SiteInputError):
            store.put(bad, "x")  # type: ignore[arg-type]
    assert store.path(SESSION_A, "../" + sha) is None


def test_upload_store_forgets_what_is_unused_and_idle(tmp_path):
    store = UploadStore(tmp_path / "up", idle_s=60)
    keep, drop = store.put(SESSION_A, "keep"), store.put(SESSION_A, "drop")
    store.keep_only(SESSION_A, {keep})
    assert store.path(SESSION_A, keep) and store.path(SESSION_A, drop) is None
    store.put(SESSION_B, "b")
    store.sweep(now=time.time() + 3600)
    assert store.sessions() == []


def test_upload_store_budget(tmp_path):
    store = UploadStore(tmp_path / "up", session_bytes=10)
    store.put(SESSION_A, "12345")
    with pytest.raises(SiteInputError, match="MB of uploads"):
        store.put(SESSION_A, "1234567890")


def test_weather_upload_is_kept_per_session_and_dropped_when_replaced():
    import pvlib

    spots, _ = load_records(None)
    key = next(iter(spots))
    session = "session-c-" + "3" * 24
    folder = upload_store().root / session
    _, message, _, _ = cb.upload_weather(upload("time,ghi_w_m2\n2025-01-01 00:00,1\n"), "w.csv", key, spots,
                                         session, 0)
    assert message.startswith("w.csv") and (not folder.exists() or not any(folder.iterdir()))  # refused: gone
    tmy = Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"
    text = tmy.read_text(encoding="utf-8", errors="replace")
    first, message, _, _ = cb.upload_weather(upload(text), "one.csv", key, spots, session, 0)
    assert message == "" and len(list(folder.iterdir())) == 1
    # the spot now names another file (a synthetic year): the upload is no longer needed
    site = copy.deepcopy(first[key]["site"])
    site["weather"] = {"synthetic": {"seed": 1}}
    replaced = {**first, key: {**first[key], "site": site, "files": {}}}
    cb.upload_weather(upload("not weather"), "x.csv", key, replaced, session, 0)
    assert list(folder.iterdir()) == []


# --------------------------------------------------------------------------------------------------
# what reaches the page


def test_no_server_path_reaches_the_page():
    app = create_app()
    client = app.server.test_client()
    layout = client.get("/_dash-layout").get_data(as_text=True)
    for secret in (str(ROOT), str(SAMPLE_SITES.resolve()), str(upload_store().root), "base_dir"):
        assert secret not in layout
    spots = app.layout.children[0].data
    key = next(iter(spots))
    dep = next(d for d in client.get("/_dash-dependencies").get_json() if f"{ids.STATUS}.children" in d["output"])
    body = callback_body(dep, {f"{ids.SPOTS}.data": spots, f"{ids.SPOT_PICKER}.value": key,
                               f"{ids.SESSION}.data": SESSION_A, f"{ids.TABS}.value": ids.TAB_PORTFOLIO},
                         f"{ids.SPOTS}.data")
    reply = client.post("/_dash-update-component", json=body)
    text = reply.get_data(as_text=True)
    assert reply.status_code == 200 and str(ROOT) not in text and str(SAMPLE_SITES.resolve()) not in text


def test_uploaded_site_text_validates_without_any_file():
    spec = parse_site_text(attack_texts("/etc/passwd")["weather"], file="a.toml", files=ListedFiles({}))
    with pytest.raises(SiteInputError, match="not read"):
        spec.files.path_of(spec.weather.file or "", "weather.file")

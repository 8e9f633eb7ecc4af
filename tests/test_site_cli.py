"""The site file, the JSON contract of `assess`, and one clear line for every kind of bad input."""

from __future__ import annotations

import json
import subprocess
import sys

import jsonschema
import pytest
from shared import BASE_SITE

from siteharvest.cli import main
from siteharvest.errors import SiteInputError
from siteharvest.site import dump_site, load_site, parse_site_text

CONTRACT_KEYS = {"id", "kind", "annual_energy_wh", "monthly_energy_wh", "deficit_days", "first_wake_hours",
                 "longest_outage_hours", "monthly_margin", "verdict"}


def run_cli(args, capsys):
    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_assess_json_contract(site_file, capsys):
    code, out, err = run_cli(["assess", site_file(), "--json"], capsys)
    assert code == 0, err
    doc = json.loads(out)
    assert doc["spot"] == {"name": "test spot", "latitude": 45.0, "longitude": 7.0}
    assert set(doc["demand"]) >= {"mean_power_uw", "annual_energy_wh"}
    # demand by hand: 2 uA x 3 V sleep + 8 mA x 50 ms x 3 V every 300 s, through a 90 % regulator
    mean_uw = (2e-6 * 3 + 8e-3 * 50e-3 * 3 / 300) / 0.9 * 1e6
    assert doc["demand"]["mean_power_uw"] == pytest.approx(mean_uw, rel=1e-6)
    assert doc["demand"]["annual_energy_wh"] == pytest.approx(mean_uw * 1e-6 * 8760, rel=1e-4)
    for rec in [*doc["sources"], doc["combined"]]:
        assert CONTRACT_KEYS <= set(rec)
        assert len(rec["monthly_energy_wh"]) == 12 and len(rec["monthly_margin"]) == 12
        assert sum(rec["monthly_energy_wh"]) == pytest.approx(rec["annual_energy_wh"], rel=1e-5)
        assert 0 <= rec["deficit_days"] <= 365
    assert doc["sources"][0]["id"] == "panel"


def test_table_and_hourly_csv(site_file, capsys, tmp_path):
    csv = tmp_path / "year.csv"
    code, out, _ = run_cli(["assess", site_file(), "--hourly", csv], capsys)
    assert code == 0
    assert "panel" in out and "deficit days" in out and "all-sources" in out
    lines = csv.read_text().splitlines()
    assert len(lines) == 8761
    assert "panel.stored_energy_j" in lines[0]


def test_schema_validates_the_sample_structure(capsys):
    code, out, _ = run_cli(["schema"], capsys)
    assert code == 0
    schema = json.loads(out)
    import tomllib
    jsonschema.validate(tomllib.loads(BASE_SITE), schema)
    # units and bounds are published
    lat = schema["$defs"]["SpotSpec"]["properties"]["latitude_deg"]
    assert lat["maximum"] == 90 and lat["unit"] == "deg"


def test_dump_round_trip(site_file):
    spec = load_site(site_file())
    again = parse_site_text(dump_site(spec))
    assert again.model_dump() == spec.model_dump()
    assert dump_site(again) == dump_site(spec)


BAD_CASES = [
    # (what to change, expected fragment of the one-line message)
    (lambda t: t.replace("latitude_deg = 45.0", "latitude_deg = 95"), "spot.latitude_deg: expected less than or "
     "equal to 90"),
    (lambda t: t.replace("area_cm2 = 3.0", "area_cm2 = -3"), "source[0] ('panel').area_cm2: expected greater than 0"),
    (lambda t: t.replace('kind = "solar"', 'kind = "windmill"'), "source[0] ('panel'): expected kind to be one of"),
    (lambda t: t.replace("[spot]", "[spot\n"), "expected valid TOML"),
    (lambda t: t.replace('name = "test spot"\n', ""), "spot.name: expected this field to be given"),
    (lambda t: t.replace("tilt_deg = 45", "tilt_degrees = 45"), "tilt_degrees: expected no such field"),
    (lambda t: t.replace('kind = "supercapacitor"', 'kind = "flywheel"'), "store: expected kind to be one of"),
]


@pytest.mark.parametrize(("change", "fragment"), BAD_CASES)
def test_bad_site_gives_one_line_and_exit_2(change, fragment, site_file, capsys):
    path = site_file(change(BASE_SITE))
    code, out, err = run_cli(["assess", path], capsys)
    assert code == 2
    assert out == ""
    line = err.strip()
    assert "\n" not in line and "Traceback" not in line
    assert str(path) in line
    assert fragment in line


def test_error_names_the_line(site_file, capsys):
    _, _, err = run_cli(["assess", site_file(BASE_SITE.replace("latitude_deg = 45.0", "latitude_deg = 95"))],
                        capsys)
    assert "(line 4)" in err


def test_missing_file(capsys, tmp_path):
    code, _, err = run_cli(["assess", tmp_path / "nope.toml"], capsys)
    assert code == 2 and "nope.toml: expected an existing site file" in err


WEATHER_TEMPLATE = "time,ghi_w_m2,temp_air_c\n{rows}"


def _csv_rows(n, skip=None):
    import pandas as pd
    times = pd.date_range("2025-01-01", periods=n, freq="h")
    return "\n".join(f"{t:%Y-%m-%d %H:%M},{100 if 8 <= t.hour <= 16 else 0},10" for i, t in enumerate(times)
                     if i != skip)


@pytest.mark.parametrize(("text", "fragment"), [
    ("time,temp_air_c\n2025-01-01 00:00,5\n", "ghi"),
    (WEATHER_TEMPLATE.format(rows=_csv_rows(100)), "8760"),
    (WEATHER_TEMPLATE.format(rows=_csv_rows(8760, skip=500)), "2025-01-21"),
])
def test_bad_weather_file(text, fragment, site_file, tmp_path, capsys):
    (tmp_path / "w.csv").write_text(text)
    site = BASE_SITE.replace("[weather.synthetic]", '[weather]\nfile = "w.csv"\n[ignored]').split("[ignored]")[0]
    site += BASE_SITE.split("seed = 7\n")[1]
    code, _, err = run_cli(["assess", site_file(site)], capsys)
    assert code == 2, err
    assert "w.csv" in err and fragment in err and "Traceback" not in err


def test_real_process_prints_no_traceback(site_file):
    path = site_file(BASE_SITE.replace("area_cm2 = 3.0", "area_cm2 = 0"))
    proc = subprocess.run([sys.executable, "-m", "siteharvest", "assess", str(path)], capture_output=True,
                          text=True, timeout=120)
    assert proc.returncode == 2
    assert proc.stderr.count("\n") == 1 and "Traceback" not in proc.stderr


def test_duplicate_source_ids(site_file):
    text = BASE_SITE + '\n[[source]]\nid = "panel"\nkind = "solar"\n'
    with pytest.raises(SiteInputError, match="unique"):
        load_site(site_file(text))


def test_cleared_preset_curve_survives_the_round_trip():
    """A curve the preset supplies but the user cleared stays cleared in the saved site file."""
    text = BASE_SITE.replace('kind = "solar"\narea_cm2 = 3.0\ntilt_deg = 45',
                             'kind = "thermoelectric"\nhot_side = 60\n[source.conditioning]\n'
                             'preset = "thermal-low-voltage-boost"\nefficiency_vs_input_v = []')
    spec = parse_site_text(text)
    assert spec.source[0].conditioning.efficiency_vs_input_v is None
    again = parse_site_text(dump_site(spec))
    assert again.source[0].conditioning.efficiency_vs_input_v is None
    assert again.model_dump() == spec.model_dump()

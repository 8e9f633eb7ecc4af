"""Every bundled sample spot runs, follows the schema, and its sources' bad input fails cleanly."""

from __future__ import annotations

import json
import tomllib

import jsonschema
import pytest
from shared import SAMPLES

from siteharvest.cli import main
from siteharvest.site import site_schema

SAMPLE_FILES = sorted(SAMPLES.glob("*.toml"))


def test_there_are_sample_spots_of_every_kind():
    kinds = set()
    for path in SAMPLE_FILES:
        kinds.update(s["kind"] for s in tomllib.loads(path.read_text())["source"])
    assert len(SAMPLE_FILES) >= 4
    assert kinds == {"solar", "indoor_light", "thermoelectric", "vibration", "rf"}


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.stem)
def test_sample_runs_and_follows_the_contract(path, capsys):
    assert main(["assess", str(path), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    data = tomllib.loads(path.read_text())
    jsonschema.validate(data, site_schema())
    assert [s["id"] for s in doc["sources"]] == [s["id"] for s in data["source"]]
    for rec in [*doc["sources"], doc["combined"]]:
        assert rec["verdict"] in {"self-sufficient", "brief gaps", "seasonal gaps", "insufficient", "never starts"}
    # the sum of the sources' energy is what all of them together put into the store
    total = sum(s["annual_energy_wh"] for s in doc["sources"])
    assert doc["combined"]["annual_energy_wh"] == pytest.approx(total, rel=1e-6)
    # together never has more deficit days than the best source alone (same store, more input)
    assert doc["combined"]["deficit_days"] <= min(s["deficit_days"] for s in doc["sources"]) + 1


PLANT = SAMPLES / "plant-room.toml"


@pytest.mark.parametrize(("old", "new", "fragment"), [
    ("proof_mass_g = 8", "proof_mass_g = 0", "proof_mass_g: expected greater than 0"),
    ("lamp_lux = 120", "lamp_lux = 200000", "lamp_lux: expected less than or equal to"),
    ('spectrum_unit = "g"', 'spectrum_unit = "furlongs"', "spectrum_unit"),
])
def test_source_bad_values_exit_2(old, new, fragment, tmp_path, capsys):
    text = PLANT.read_text().replace(old, new)
    assert new in text
    (tmp_path / "surveys").mkdir()
    (tmp_path / "surveys" / "pump-skid-p3.csv").write_text((SAMPLES / "surveys" / "pump-skid-p3.csv").read_text())
    site = tmp_path / "plant.toml"
    site.write_text(text)
    assert main(["assess", str(site)]) == 2
    err = capsys.readouterr().err
    assert fragment in err and "plant.toml" in err and err.count("\n") == 1


@pytest.mark.parametrize(("csv_text", "fragment"), [
    ("freq,level\n10,0.1\n20,0.2\n", "frequency_hz"),
    ("frequency_hz,accel\n0,0.1\n20,0.2\n", "frequencies > 0 Hz"),
    ("frequency_hz,accel\n-5,0.1\n20,0.2\n", "frequency_hz"),
])
def test_bad_vibration_survey_exit_2(csv_text, fragment, tmp_path, capsys):
    (tmp_path / "surveys").mkdir()
    (tmp_path / "surveys" / "pump-skid-p3.csv").write_text(csv_text)
    site = tmp_path / "plant.toml"
    site.write_text(PLANT.read_text())
    assert main(["assess", str(site)]) == 2
    err = capsys.readouterr().err
    assert "pump-skid-p3.csv" in err and fragment in err and "Traceback" not in err


def test_hot_side_colder_than_ambient_is_allowed_and_said(tmp_path, capsys):
    """Heat can flow either way through a module; the result says so instead of failing."""
    text = (SAMPLES / "north-wall.toml").read_text().replace("process_on_c = 70", "process_on_c = -20")
    site = tmp_path / "cold.toml"
    site.write_text(text)
    assert main(["assess", str(site)]) == 0
    out = capsys.readouterr().out
    assert "colder" in out.lower()

"""Numbers, places and outages as printed in every front end; the command line's help and version."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from siteharvest_app.bundled import SAMPLE_SITES
from siteharvest_app.report.html import flat_store_text
from siteharvest_app.tables import energy_unit, fmt, summary_rows

import siteharvest
from siteharvest.assess import assess
from siteharvest.cli import format_table, main
from siteharvest.findings import WHOLE_YEAR, outage_text, place_text, sig_text, size_text
from siteharvest.site import load_site


@pytest.fixture(scope="module")
def plant():
    return assess(load_site(SAMPLE_SITES / "plant-room.toml"))


def test_numbers_never_print_in_exponent_form():
    assert fmt(100.0, 2) == "100" and fmt(99.6, 2) == "100"
    assert fmt(0.0123) == "0.0123" and fmt(12345.6) == "12,346" and fmt(float("nan")) == "—"
    assert sig_text(2000.0) == "2,000" and size_text(1450.3, "cm2") == "1,450 cm²"


def test_places_read_north_south_east_west():
    assert place_text(36.1, -160.5) == "36.100° N, 160.500° W"
    assert place_text(-33.9, 151.2) == "33.900° S, 151.200° E"


def test_one_energy_unit_per_column(plant):
    rows, unit = summary_rows(plant)
    assert unit == "Wh/yr"  # the largest source brings in over 1 Wh a year: every row in Wh
    assert energy_unit([0.2, 0.004]) == (1e-3, "mWh") and energy_unit([2400.0, 0.02]) == (1.0, "Wh")
    assert all("e+" not in r["annual_energy"] and "e-" not in r["annual_energy"] for r in rows)


def test_a_source_that_never_starts_has_no_outage_of_zero(plant, capsys):
    never = next(c for c in plant.cases if not math.isfinite(c.first_wake_hours))
    assert outage_text(never) == WHOLE_YEAR
    assert {r["id"]: r["longest_outage"] for r in summary_rows(plant)[0]}[never.id] == WHOLE_YEAR
    table = format_table(plant)
    assert WHOLE_YEAR in table and "never wakes" in table and "° W" in table


def test_a_store_that_never_reaches_cut_off_is_a_sentence_not_a_solid_picture(plant):
    never = next(c for c in plant.cases if not math.isfinite(c.first_wake_hours))
    assert "single colour" in flat_store_text(plant, never)
    moving = next(c for c in plant.cases if math.isfinite(c.first_wake_hours))
    assert flat_store_text(plant, moving) == ""
    full = dataclasses.replace(moving, stored_energy_j=np.full(8760, float(moving.stored_energy_j.max())))
    assert "barely moves" in flat_store_text(plant, full)


def test_hourly_frame_carries_the_weather_it_used(plant):
    frame = plant.hourly_frame()
    for col in ("ghi_w_m2", "dni_w_m2", "dhi_w_m2", "temp_air_c", "wind_speed_m_s", "global_illum_lx"):
        assert col in frame.columns
    np.testing.assert_allclose(frame["temp_air_c"].to_numpy(), plant.prepared.context.weather["temp_air_c"])


def test_version(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["--version"])
    assert exc.value.code == 0
    assert capsys.readouterr().out.strip() == f"siteharvest {siteharvest.__version__}"


@pytest.mark.parametrize("command", ["assess", "size", "report", "schema", "serve"])
def test_every_subcommand_has_examples_and_every_option_help_and_default(command, capsys):
    from siteharvest.cli import build_parser

    parser = build_parser()
    sub = next(a for a in parser._actions if a.dest == "command").choices[command]
    for action in sub._actions:
        if action.dest in ("help", "site"):
            continue
        assert action.help, action.dest
        if action.option_strings and not action.required:
            assert "default" in action.help, action.dest
    with pytest.raises(SystemExit):
        main([command, "--help"])
    out = capsys.readouterr().out
    assert "examples:" in out and f"siteharvest {command}" in out


def test_size_text_output_uses_plain_labels(capsys):
    code = main(["size", str(SAMPLE_SITES / "plant-room.toml"), "--years", "0", "--steps", "4"])
    out = capsys.readouterr().out
    assert code == 0
    assert "capacitance_f" not in out and "capacity_mah" not in out and "area_cm2" not in out
    assert "supercapacitor capacitance" in out
    assert "As drawn (1 thermoelectric module with supercapacitor capacitance 2 F)" in out  # the sample as written

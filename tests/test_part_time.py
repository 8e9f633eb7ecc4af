"""Sources that deliver for part of each hour: the converter acts on the power while they deliver.

Property (the conditioning chain is linear in the share of the hour once each state's power is fixed):
a beam on for a share f of its hours, lamps lit for a share f, a machine running a share f, give
exactly f times the conditioned energy they give at f = 1, however the converter's efficiency curve
bends and wherever its thresholds lie. Checked through the command line's JSON (energy into the
store before a full store spills). The cold-start threshold is tested against the power while lit,
not the hourly mean; the hourly model's bridging assumption is said where the store is too small.
"""

from __future__ import annotations

import io
import json
from contextlib import redirect_stdout
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shared import BASE_SITE

from siteharvest.assess import assess, prepare
from siteharvest.cli import main
from siteharvest.conditioning import ConditioningSpec, condition, condition_levels
from siteharvest.site import parse_site_text
from siteharvest.sources import PowerLevel

HEAD = BASE_SITE.split("[[source]]")[0]

RF = """
[[source]]
id = "beam"
kind = "rf"
mode = "dedicated"
distance_m = 1.0
duty_fraction = {f}
"""
LAMPS = """
[[source]]
id = "cell"
kind = "indoor_light"
area_cm2 = 20
lamp_lux = 400
daylight_factor_pct = 0
occupancy_fraction = {f}
"""
MACHINE = """
[[source]]
id = "shaker"
kind = "vibration"
preset = "healthy-pump-50hz"
running_fraction = {f}
"""


def energy_wh(tmp_path: Path, source: str, f: float) -> float:
    path = tmp_path / f"spot-{f:.6f}.toml"
    path.write_text(HEAD + source.format(f=f), encoding="utf-8")
    out = io.StringIO()
    with redirect_stdout(out):
        assert main(["assess", str(path), "--json"]) == 0
    return json.loads(out.getvalue())["sources"][0]["annual_energy_wh"]


@pytest.mark.parametrize("source", [RF, LAMPS, MACHINE], ids=["rf duty", "lamp occupancy", "machine running"])
@settings(max_examples=6, deadline=None)
@given(f=st.floats(0.02, 0.98))
def test_share_f_of_the_hour_gives_f_times_the_energy(tmp_path_factory, source, f):
    tmp = tmp_path_factory.mktemp("share")
    full = energy_wh(tmp, source, 1.0)
    assert full > 0
    # exact up to the JSON's 6 decimals (Wh) and float rounding
    assert energy_wh(tmp, source, f) == pytest.approx(f * full, rel=1e-6, abs=2e-6)


def test_rf_duty_cases_of_the_audit(tmp_path):
    """Duty 0.1 gives 0.1 of full duty (was 0.0597) and duty 0.04 still harvests (was 0)."""
    full = energy_wh(tmp_path, RF, 1.0)
    assert energy_wh(tmp_path, RF, 0.1) == pytest.approx(0.1 * full, rel=1e-6, abs=1e-6)  # JSON: 6 decimals
    low = energy_wh(tmp_path, RF, 0.04)
    assert low > 0 and low == pytest.approx(0.04 * full, rel=1e-6, abs=1e-6)


def test_cold_start_threshold_acts_on_the_power_while_lit():
    """16.7 uW while lit for 0.3 of the hour: above a 15 uW cold-start threshold, below it as a mean."""
    spec = ConditioningSpec(preset="solar-cell-boost", mppt_fraction=1.0, cold_start_min_input_uw=15.0)
    lit = PowerLevel(np.full(3, 16.7e-6), np.full(3, 1.5), np.full(3, 0.3))
    mean = condition(spec, np.full(3, 16.7e-6 * 0.3), np.full(3, 1.5), 3.0)
    assert (mean.cold_w == 0).all()  # what the hourly mean would say: never starts
    cold = condition_levels(spec, [lit], 3.0).cold_w
    assert cold == pytest.approx(np.full(3, 16.7e-6 * spec.cold_start_efficiency * 0.3))


def test_one_state_all_hour_is_the_plain_conditioning():
    spec = ConditioningSpec(preset="rf-dc-boost")
    p = np.geomspace(1e-7, 1e-2, 50)
    whole = condition_levels(spec, [PowerLevel(p, None, np.ones(50))], 3.0)
    plain = condition(spec, p, None, 3.0)
    np.testing.assert_array_equal(whole.running_w, plain.running_w)
    np.testing.assert_array_equal(whole.cold_w, plain.cold_w)


def test_terminal_power_is_in_the_json_and_the_hourly_series(tmp_path):
    path = tmp_path / "spot.toml"
    path.write_text(HEAD + RF.format(f=0.5), encoding="utf-8")
    out = io.StringIO()
    with redirect_stdout(out):
        assert main(["assess", str(path), "--json", "--hourly", str(tmp_path / "year.csv")]) == 0
    doc = json.loads(out.getvalue())
    beam = doc["sources"][0]
    # conditioning only loses: terminal energy >= energy into the store, and months add up to the year
    assert beam["terminal_energy_wh"] >= beam["annual_energy_wh"] > 0
    assert sum(beam["monthly_terminal_energy_wh"]) == pytest.approx(beam["terminal_energy_wh"], rel=1e-5)
    assert doc["combined"]["terminal_energy_wh"] == pytest.approx(beam["terminal_energy_wh"])
    header = (tmp_path / "year.csv").read_text(encoding="utf-8").splitlines()[0]
    assert "beam.terminal_w" in header


def test_a_store_too_small_to_bridge_the_off_minutes_is_said():
    small = HEAD.replace("capacitance_f = 1.0", "capacitance_f = 0.001") + RF.format(f=0.05)
    a = assess(parse_site_text(small))
    assert any("may go dark within such hours" in w for w in a.warnings)
    big = assess(parse_site_text(HEAD + RF.format(f=0.05)))
    assert not any("may go dark within such hours" in w for w in big.warnings)
    assert prepare(parse_site_text(HEAD + RF.format(f=1.0))).harvests[0].terminal.levels is not None

"""Stores: usable energy, leakage, charge window, ESR sag, backup life."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from pydantic import ValidationError
from validation import external_check

from siteharvest.store import (
    BackupCellSpec,
    RechargeableCellSpec,
    SupercapacitorSpec,
    backup_life_text,
    backup_life_years,
    charge_allowed,
    esr_sag_warning,
    leakage_temperature_factor,
    store_levels,
)


@external_check(area="store", quantity="usable energy of 1 F 5.0->2.0 V, 0.1 F 5.5->2.2 V, 1 F 2.7->1.35 V, "
                                     "10 F 2.7->1.0 V",
                value="10.500, 1.271, 2.734, 31.45 J",
                source="capacitor energy E = C (Vmax^2 - Vmin^2) / 2, worked by hand",
                tolerance="1e-3 J (1e-2 J at 10 J and above)")
@pytest.mark.parametrize(("cap_f", "vmax", "vcut", "energy_j"), [
    # E = C (Vmax^2 - Vmin^2) / 2 (energy of a capacitor), values worked out by hand
    (1.0, 5.0, 2.0, 10.500),
    (0.1, 5.5, 2.2, 1.271),
    (1.0, 2.7, 1.35, 2.734),
    (10.0, 2.7, 1.0, 31.45),
])
def test_supercap_usable_energy(cap_f, vmax, vcut, energy_j):
    spec = SupercapacitorSpec(capacitance_f=cap_f, max_v=vmax, cutoff_v=vcut, turn_on_v=vcut)
    assert spec.usable_energy_j == pytest.approx(energy_j, abs=1e-3 if energy_j < 10 else 1e-2)
    lv = store_levels(spec)
    assert lv.max_j - lv.cutoff_j == pytest.approx(spec.usable_energy_j)


@external_check(area="store", quantity="daily cost of 1 uA leakage at 3 V, and a quarter at half the voltage",
                value="0.2592 J/day; 0.0648 J/day",
                source="1e-6 A x 3 V x 86 400 s, by hand; parallel leakage resistance (Zubieta & Bonert 2000)",
                tolerance="1e-9 relative")
def test_supercap_leakage_cost_per_day():
    """1 uA at 3 V costs 1e-6 A x 3 V x 86 400 s = 0.2592 J/day (arithmetic); below the rated voltage the
    current falls with the voltage, as through a parallel leakage resistance (Zubieta & Bonert 2000), so
    at half the voltage the leakage power is a quarter."""
    spec = SupercapacitorSpec(capacitance_f=1.0, max_v=5.0, cutoff_v=1.0, turn_on_v=3.0, leakage_ua=1.0, rated_v=3.0)
    lv = store_levels(spec)
    at = {v: lv.leak_fraction_per_h * (0.5 * 1.0 * v**2) * 24 for v in (3.0, 1.5)}
    assert at[3.0] == pytest.approx(0.2592, rel=1e-9)
    assert at[1.5] == pytest.approx(0.2592 / 4, rel=1e-9)
    assert lv.leak_sqrt_j_per_h == 0.0


def test_supercap_leakage_rises_with_temperature():
    """Doubling per 10 K about the datasheet's 25 degC (common practice, Arrhenius-type rule of thumb)."""
    spec = SupercapacitorSpec(leakage_ua=1.0, temperature_offset_c=5.0)
    factor = leakage_temperature_factor(spec, np.array([20.0, 30.0, 40.0, 10.0]))
    np.testing.assert_allclose(factor, [1.0, 2.0, 4.0, 0.5])
    cell = RechargeableCellSpec(chemistry="li-ion")
    np.testing.assert_array_equal(leakage_temperature_factor(cell, np.array([-10.0, 60.0])), [1.0, 1.0])


@external_check(area="store", quantity="energy of 1 Ah and of 2.6 Ah at 3.6 V", value="12 960 J; 33 696 J",
                source="capacity x nominal voltage (3600 C per Ah), by hand", tolerance="1e-6 relative")
def test_cell_energy_is_capacity_times_nominal_voltage():
    """Cell energy = capacity x nominal voltage: 1 Ah at 3.6 V = 3600 C x 3.6 V = 12 960 J (by hand)."""
    cell = RechargeableCellSpec(chemistry="li-ion", capacity_mah=1000, nominal_v=3.6)
    assert cell.usable_energy_j == pytest.approx(12960.0)
    backup = BackupCellSpec(capacity_mah=2600, nominal_v=3.6)
    assert backup.energy_j == pytest.approx(33_696.0)  # 2.6 Ah x 3.6 V = 9.36 Wh = 33.7 kJ [C]


@external_check(area="store", quantity="Li-ion charging window", value="0-45 degC (no charging below 0 degC)",
                source="JEITA/BAJ charging guideline (2007); Linden's Handbook of Batteries, 4th ed. (Reddy 2011) "
                       "(both from memory)",
                tolerance="checked at -5, 0, 20, 50 degC")
def test_lithium_cell_does_not_charge_below_freezing():
    """No charging below 0 degC for Li-ion (lithium plating; JEITA guideline, from memory)."""
    cell = RechargeableCellSpec(chemistry="li-ion")
    allowed = charge_allowed(cell, np.array([-5.0, 0.0, 20.0, 50.0]))
    assert allowed.tolist() == [False, True, True, False]
    cap = SupercapacitorSpec()
    assert charge_allowed(cap, np.array([-30.0, 60.0])).all()


def test_presets_are_editable_and_validated():
    cell = RechargeableCellSpec(chemistry="lifepo4", self_discharge_pct_per_month=1.0)
    assert cell.nominal_v == 3.2 and cell.self_discharge_pct_per_month == 1.0
    with pytest.raises(ValidationError, match="chemistry must be one of"):
        RechargeableCellSpec(chemistry="unobtainium")
    with pytest.raises(ValidationError, match="turn_on_v"):
        SupercapacitorSpec(max_v=5, cutoff_v=2.2, turn_on_v=6)
    with pytest.raises(ValidationError):
        SupercapacitorSpec(capacitance_f=-1)


@external_check(area="store", quantity="ESR sag of 20 ohm for a 20 mA task at 3 V drawn from 2.2 V at 90 %",
                value="0.61 V (30.3 mA x 20 ohm)", source="Ohm's law, worked by hand", tolerance="2 decimals")
def test_esr_sag_warning():
    """Sag = I R with I = I_task V_rail / (V_cut eta); 20 mA at 3 V from 2.2 V at 90 %: 30.3 mA."""
    cap = SupercapacitorSpec(capacitance_f=0.1, max_v=5.0, cutoff_v=2.2, turn_on_v=3.0, esr_ohm=20.0)
    msg = esr_sag_warning(cap, 20.0, 3.0, 0.9, 1.8)
    assert msg is not None and "0.61 V" in msg and "2.41 V" in msg
    low = SupercapacitorSpec(capacitance_f=0.1, max_v=5.0, cutoff_v=2.2, turn_on_v=3.0, esr_ohm=0.1)
    assert esr_sag_warning(low, 20.0, 3.0, 0.9, 1.8) is None


@external_check(area="store", quantity="backup life: 33.7 kJ, 1 %/yr self-discharge, 20 uW continuous",
                value="34.82 yr (Q / (D + s Q)); 20 yr with a 20-year shelf life", source="worked by hand",
                tolerance="0.01 yr")
def test_backup_life():
    """Life = Q / (D + s Q): 33.7 kJ, 1 %/yr, 20 uW continuous (630.7 J/yr) -> 34.8 yr; capped at 20."""
    cell = BackupCellSpec(capacity_mah=2600, nominal_v=3.6, self_discharge_pct_per_year=1.0,
                          shelf_life_years=50)
    draw = 20e-6 * 8760 * 3600
    assert float(backup_life_years(cell, draw)) == pytest.approx(34.82, abs=0.01)
    assert float(backup_life_years(cell.model_copy(update={"shelf_life_years": 20}), draw)) == 20


@given(st.floats(0, 1e6), st.floats(0, 1e6))
def test_backup_life_falls_with_draw(d1, d2):
    cell = BackupCellSpec()
    lo, hi = sorted((d1, d2))
    assert backup_life_years(cell, hi) <= backup_life_years(cell, lo)


def test_backup_life_text_says_when_shelf_life_limits():
    assert backup_life_text(6.54, 20) == "6.5"
    assert backup_life_text(20.0, 20) == "20+ (shelf life)"
    assert backup_life_text(float("inf"), 20) == "-"
    assert backup_life_text(25.0, 20, short=True) == "20+"

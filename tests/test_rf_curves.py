"""A rectifier described by measured curves, one per frequency and DC load.

The curve measured nearest the source's frequency (then its DC load) is the one used; a curve measured
far from both is said. The check is against the chosen table itself, read at the received power by
linear interpolation (the documented rule of rectifier_curve).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from siteharvest.context import SpotContext
from siteharvest.sources.rf import RfSource, rectifier_efficiency, rf_output
from siteharvest.timegrid import reference_index

CURVES = [
    {"frequency_mhz": 868.0, "dc_load_ohm": 2000.0, "curve": [(-30.0, 0.01), (0.0, 0.40), (10.0, 0.60)]},
    {"frequency_mhz": 915.0, "dc_load_ohm": 2000.0, "curve": [(-30.0, 0.02), (0.0, 0.50), (10.0, 0.70)]},
    {"frequency_mhz": 915.0, "dc_load_ohm": 10000.0, "curve": [(-30.0, 0.03), (0.0, 0.55), (10.0, 0.65)]},
    {"frequency_mhz": 2450.0, "dc_load_ohm": 2000.0, "curve": [(-30.0, 0.005), (0.0, 0.30), (10.0, 0.45)]},
]


def ctx() -> SpotContext:
    weather = pd.DataFrame({"ghi_w_m2": 0.0, "dni_w_m2": 0.0, "dhi_w_m2": 0.0, "temp_air_c": 15.0,
                            "wind_speed_m_s": 1.0}, index=reference_index(1.0))
    return SpotContext(weather, 47.5, 7.6)


@pytest.mark.parametrize(("mhz", "load", "index"), [(915.0, 2500.0, 1), (915.0, 8000.0, 2), (870.0, 2000.0, 0),
                                                    (2400.0, 5000.0, 3)])
def test_the_nearest_curve_is_used(mhz, load, index):
    spec = RfSource(id="r", frequency_mhz=mhz, dc_load_ohm=load, distance_m=2.0, rectifier_curves=CURVES,
                    rectifier_sensitivity_dbm=-40.0)
    curve, note = spec.rectifier_in_use()
    assert curve == CURVES[index]["curve"] and f"{CURVES[index]['frequency_mhz']:g} MHz" in note
    out = rf_output(spec, ctx())
    p_dbm = float(out.details["rf_input_dbm"][0])
    assert out.details["rectifier_efficiency"][0] == pytest.approx(
        float(rectifier_efficiency(p_dbm, CURVES[index]["curve"], -40.0)))
    assert any("Rectifier curve measured" in n for n in out.notes)


def test_a_curve_measured_far_away_is_said():
    _, near = RfSource(id="r", frequency_mhz=915.0, dc_load_ohm=2000.0, rectifier_curves=CURVES).rectifier_in_use()
    _, far = RfSource(id="r", frequency_mhz=433.0, dc_load_ohm=2000.0, rectifier_curves=CURVES).rectifier_in_use()
    assert "more than 10 %" not in near and "more than 10 %" in far


def test_without_measured_curves_the_single_curve_stays():
    spec = RfSource(id="r")
    curve, note = spec.rectifier_in_use()
    assert note is None and curve == list(spec.rectifier_curve)
    with pytest.raises(ValueError, match="increase"):
        RfSource(id="r", rectifier_curves=[{"frequency_mhz": 915.0, "dc_load_ohm": 1e3,
                                            "curve": [(0.0, 0.5), (-10.0, 0.3)]}])
    assert np.isfinite(rf_output(spec, ctx()).power_w).all()

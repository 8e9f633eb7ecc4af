"""An indoor cell described by its efficiency against illuminance, as a datasheet or a measurement gives it.

Under the table's own light the model must give back exactly the tabulated efficiency at each point
(P / (E_v / K) = eta, K the luminous efficacy of that light over 300-1200 nm from the CIE tables that
colour-science ships); between points it interpolates in log illuminance; under another light the
cell sees the same reference-equivalent irradiance it would under the table's light.
"""

from __future__ import annotations

import numpy as np
import pytest

import siteharvest.sources.indoor_light as il
from siteharvest.sources.indoor_light import IndoorLightSource

TABLE = [(50.0, 3.0), (200.0, 6.0), (1000.0, 9.0), (10000.0, 11.0)]


def power_density(lux: float, source: str = "neutral-white-led") -> float:
    p, _, _ = il.cell_power_density_w_m2({source: np.array([lux])}, "amorphous-silicon", 6.0, 0.65, 1.8,
                                         efficiency_table=TABLE, table_light_source="neutral-white-led")
    return float(p[0])


@pytest.mark.parametrize(("lux", "eta_pct"), TABLE)
def test_the_table_comes_back_under_its_own_light(lux, eta_pct):
    irradiance = lux * il.irradiance_per_lux_w_m2("neutral-white-led")
    assert power_density(lux) / irradiance == pytest.approx(eta_pct / 100.0, rel=1e-9)


def test_between_points_log_interpolation_and_ends_held():
    irradiance = il.irradiance_per_lux_w_m2("neutral-white-led")
    mid = float(np.sqrt(200.0 * 1000.0))  # halfway in log illuminance
    assert power_density(mid) / (mid * irradiance) == pytest.approx(0.075, rel=1e-9)
    assert power_density(20_000.0) / (20_000.0 * irradiance) == pytest.approx(0.11, rel=1e-9)


def test_another_light_gives_the_same_equivalent_irradiance():
    """Fluorescent light of the same reference-equivalent irradiance gives the same power."""
    match_f = il.spectral_match("fluorescent", "amorphous-silicon")
    match_l = il.spectral_match("neutral-white-led", "amorphous-silicon")
    lux_led = 500.0
    lux_fl = (lux_led * il.irradiance_per_lux_w_m2("neutral-white-led") * match_l
              / (il.irradiance_per_lux_w_m2("fluorescent") * match_f))
    assert power_density(lux_fl, "fluorescent") == pytest.approx(power_density(lux_led), rel=1e-9)


def test_lamps_above_5000_lx_are_accepted_and_a_table_is_asked_for():
    spec = IndoorLightSource(id="sill", lamp_lux=20_000.0)
    assert spec.lamp_lux == 20_000.0
    with pytest.raises(ValueError, match="distinct"):
        IndoorLightSource(id="bad", efficiency_table=[(100.0, 5.0), (100.0, 6.0)])

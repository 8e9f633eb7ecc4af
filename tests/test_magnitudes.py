"""Orders of magnitude practitioners quote, checked on real open data through our own code path."""

from __future__ import annotations

import numpy as np
import pvlib
import pytest
from validation import external_check

from siteharvest.context import SpotContext
from siteharvest.weather import WeatherSpec, load_weather_year


@pytest.fixture(scope="module")
def greensboro():
    """pvlib's shipped TMY3 year (723170TYA.CSV) read by our weather reader."""
    frame, meta = load_weather_year(WeatherSpec(bundled="723170TYA.CSV"), latitude_deg=36.1, longitude_deg=-79.95,
                                    altitude_m=273, utc_offset_h=-5, base_dir=".")
    return SpotContext(weather=frame, latitude_deg=meta.latitude_deg, longitude_deg=meta.longitude_deg,
                       altitude_m=meta.altitude_m, utc_offset_h=meta.utc_offset_h)


@external_check(area="sun", quantity="median GHI at zenith < 45 deg on TMY3 723170: overcast (kt < 0.3), "
                                 "clear (kt > 0.65)",
                value="about 10 and 100 mW/cm2", source="common practice (range only)",
                tolerance="3-30 and 60-120 mW/cm2; ratio above 3")
def test_overcast_daylight_is_about_ten_mw_per_cm2(greensboro):
    """Common practice: overcast or indirect daylight about 10 mW/cm2 (100 W/m2), direct sun about
    100 mW/cm2. Hours with the sun high (zenith < 45 deg) are split by clearness index (GHI over
    extraterrestrial horizontal): overcast kt < 0.3, clear kt > 0.65 (thresholds: common practice)."""
    zen = greensboro.solar_position["zenith"].to_numpy()
    ghi = greensboro.weather["ghi_w_m2"].to_numpy()
    kt = pvlib.irradiance.clearness_index(ghi, zen, greensboro.dni_extra_w_m2.to_numpy())
    high = zen < 45
    overcast = np.median(ghi[high & (kt < 0.3)]) / 10.0      # W/m2 -> mW/cm2
    clear = np.median(ghi[high & (kt > 0.65)]) / 10.0
    assert 3.0 < overcast < 30.0
    assert 60.0 < clear < 120.0
    assert clear / overcast > 3          # measured here: 80.7 vs 24.2 mW/cm2

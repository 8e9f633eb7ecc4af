"""Supercapacitor leakage against voltage and temperature, through the whole year.

Property: with no hysteresis (turn-on at the cut-off), a hotter store, whose leakage is higher in
every hour, never gives fewer deficit days. With hysteresis this need not hold: a leakier store can
sit below its turn-on level on days a less leaky one cycles through short hours (the hysteresis
counterexample in tests/test_sizing.py), so the property is stated without it.
"""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st
from shared import BASE_SITE

from siteharvest.assess import assess
from siteharvest.site import parse_site_text

LEAKY = (BASE_SITE.replace("utc_offset_h = 1\n", "utc_offset_h = 1\nindoors = true\n")
         .replace("turn_on_v = 3.0", "turn_on_v = 2.2\nleakage_ua = 40.0")
         .split("[[source]]")[0] + """
[[source]]
id = "cell"
kind = "indoor_light"
area_cm2 = 12
lamp_lux = 1200
""")


def deficit_days(air_c: float) -> int:
    spec = parse_site_text(LEAKY.replace("indoors = true", f"indoors = true\nindoor_air_c = {air_c}"))
    return assess(spec).sources[0].deficit_days


@settings(max_examples=8, deadline=None)
@given(air_c=st.floats(-10.0, 45.0), warmer_k=st.floats(1.0, 30.0))
def test_a_hotter_store_never_gives_fewer_deficit_days(air_c, warmer_k):
    assert deficit_days(min(air_c + warmer_k, 60.0)) >= deficit_days(air_c)


def test_the_leaky_case_is_sensitive_to_temperature():
    """The spot above is chosen so that temperature matters: the property is not tested on a flat case."""
    assert deficit_days(45.0) > deficit_days(0.0)

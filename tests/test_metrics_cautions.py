"""Metrics, verdict words and cautions, each at its boundaries.

Check values: the verdict bands and the 2 m height are this program's own definitions (README "What the
numbers mean"; fall protection from about 2 m is common practice); the rest are counted by hand in the test.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from siteharvest.assess import caution_keys
from siteharvest.cautions import CAUTIONS, DEFER, cautions_for
from siteharvest.metrics import (
    INSUFFICIENT,
    NEVER_STARTS,
    autonomy_days,
    dark_hours,
    deficit_day_mask,
    deficit_days,
    first_wake_hours,
    longest_outage_hours,
    verdict,
)
from siteharvest.site import parse_site
from siteharvest.timegrid import HOURS_PER_YEAR


@pytest.mark.parametrize(("days", "words"), [
    (0, "self-sufficient"), (1, "brief gaps"), (5, "brief gaps"), (6, "seasonal gaps"), (60, "seasonal gaps"),
    (61, INSUFFICIENT), (365, INSUFFICIENT)])
def test_verdict_bands_at_their_edges(days, words):
    # README: self-sufficient (no deficit day), brief gaps (1-5), seasonal gaps (6-60), insufficient (more)
    assert verdict(days, 12.0) == words


def test_never_starts_whatever_the_deficit():
    assert verdict(0, math.nan) == NEVER_STARTS


def test_deficit_day_counts_a_day_with_one_dark_hour():
    on = np.ones(HOURS_PER_YEAR, dtype=bool)
    short = np.zeros(HOURS_PER_YEAR, dtype=bool)
    on[23] = False          # the last hour of 1 January off
    short[24 * 40] = True   # one short hour on 10 February (day 41)
    dark = dark_hours(on, short)
    mask = deficit_day_mask(dark)
    assert mask.shape == (365,) and list(np.flatnonzero(mask)) == [0, 40]
    assert int(deficit_days(dark)) == 2
    assert int(deficit_days(np.zeros(HOURS_PER_YEAR, dtype=bool))) == 0


def test_first_wake_and_longest_outage():
    on = np.zeros(100, dtype=bool)
    on[7:10] = True          # wakes at hour 7
    on[30:] = True           # off 10..29: 20 hours
    assert float(first_wake_hours(on)) == 7.0
    assert int(longest_outage_hours(on)) == 20
    never = np.zeros(100, dtype=bool)
    assert math.isnan(float(first_wake_hours(never))) and int(longest_outage_hours(never)) == 0


def test_autonomy_days():
    # 86.4 J a day at 1 mW: a 864 J store lasts 10 days; leak counts as demand; no demand: forever
    assert autonomy_days(864.0, 1e-3) == pytest.approx(10.0)
    assert autonomy_days(864.0, 0.5e-3, 0.5e-3) == pytest.approx(10.0)
    assert autonomy_days(864.0, 0.0) == math.inf


SITE = {
    "spot": {"name": "x", "latitude_deg": 48.0, "longitude_deg": 10.0, "mounting_height_m": 1.99},
    "weather": {"synthetic": {"seed": 1}},
    "store": {"kind": "supercapacitor"},
    "source": [{"id": "p", "kind": "solar"}],
}


def _keys(**changes):
    site = {**SITE, "spot": {**SITE["spot"], **changes.pop("spot", {})}, **changes}
    return caution_keys(parse_site(site))


def test_work_at_height_from_two_metres():
    assert "work_at_height" not in _keys()
    assert "work_at_height" in _keys(spot={"mounting_height_m": 2.0})


def test_cautions_by_store_zone_and_kind():
    assert _keys() == {"electrical_enclosure"}
    assert "lithium_cell" in _keys(store={"kind": "rechargeable", "chemistry": "li-ion"})
    assert "lithium_cell" not in _keys(store={"kind": "rechargeable", "chemistry": "nimh"})
    assert "explosive_atmosphere" in _keys(spot={"hazardous_area": True})
    hot = _keys(source=[{"id": "t", "kind": "thermoelectric", "hot_side": 60}])
    assert "hot_surface" in hot


def test_cautions_in_fixed_order_each_deferring():
    shown = cautions_for({"rf_exposure", "hot_surface"})
    assert [c.key for c in shown] == [k for k in CAUTIONS if k in ("rf_exposure", "hot_surface")]
    assert all(c.text.endswith(DEFER) for c in shown)
    assert cautions_for(set()) == []

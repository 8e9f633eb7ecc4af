"""Node demand and weekly schedules."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st
from pydantic import ValidationError
from validation import external_check

from siteharvest.demand import NodeSpec, NodeTask, demand_energy_j, mean_power_w
from siteharvest.schedule import active_mask, parse_days, parse_hours


@external_check(area="store", quantity="daily energy of a node sleeping at 1.5 uA, 3 V", value="0.3888 J",
                source="1.5e-6 A x 3 V x 86 400 s, by hand", tolerance="1e-6 relative")
def test_sleep_only_node():
    """1.5 uA at 3 V = 1.5e-6 A x 3 V x 86 400 s = 0.389 J/day (by hand)."""
    node = NodeSpec(supply_v=3.0, sleep_current_ua=1.5, regulator_efficiency=1.0)
    assert demand_energy_j(node)[:24].sum() == pytest.approx(0.3888)


@external_check(area="store", quantity="daily energy of a 9 mA, 30 ms report every 600 s at 3 V, 06-22, 90 %",
                value="16 h x 6 x 0.9 mJ = 86.4 mJ", source="worked by hand", tolerance="1e-6 relative")
def test_task_energy_by_hand():
    """A 9 mA, 30 ms report every 600 s at 3 V during 06-22 only: 6 runs/h x 0.81 mJ, 16 h a day."""
    task = NodeTask(name="send report", current_ma=9.0, duration_ms=30, every_s=600, hours="06-22")
    node = NodeSpec(supply_v=3.0, sleep_current_ua=0.0, regulator_efficiency=0.9, task=[task])
    day = demand_energy_j(node)[:24]
    assert day[5] == 0.0
    assert day[6] == pytest.approx(6 * 9e-3 * 30e-3 * 3.0 / 0.9)
    assert day.sum() == pytest.approx(16 * 6 * 9e-3 * 30e-3 * 3.0 / 0.9)


def test_weekday_task_skips_weekends():
    task = NodeTask(name="a", current_ma=1, duration_ms=10, every_s=60, days="weekdays")
    node = NodeSpec(sleep_current_ua=0, task=[task])
    d = demand_energy_j(node).reshape(365, 24).sum(axis=1)
    # 1 Jan 2025 (the reference calendar) was a Wednesday: days 3 and 4 are Saturday and Sunday
    assert d[3] == 0 and d[4] == 0 and d[0] > 0
    assert (d > 0).sum() == 261   # weekdays in 2025


@given(st.floats(0.1, 100), st.floats(1, 1000), st.floats(1, 3600))
def test_mean_power_scales_with_current(current_ma, duration_ms, every_s):
    if duration_ms / 1000 > every_s:
        return
    t = NodeTask(name="x", current_ma=current_ma, duration_ms=duration_ms, every_s=every_s)
    one = mean_power_w(NodeSpec(sleep_current_ua=0, task=[t]))
    two = mean_power_w(NodeSpec(sleep_current_ua=0, task=[t.model_copy(update={"current_ma": 2 * current_ma})]))
    assert two == pytest.approx(2 * one)


def test_bad_task():
    with pytest.raises(ValidationError, match="duration_ms must not exceed every_s"):
        NodeTask(name="x", current_ma=1, duration_ms=5000, every_s=1)
    with pytest.raises(ValidationError):
        NodeTask(name="x", current_ma=1, duration_ms=5, every_s=1, hours="25-03")


def test_schedules():
    assert parse_hours("06-22").sum() == 16
    assert parse_hours("22-06").sum() == 8 and parse_hours("22-06")[23] and not parse_hours("22-06")[6]
    assert parse_hours("06-09,17-20").sum() == 6
    assert parse_days("mon-fri").sum() == 5 and parse_days("sat-mon").tolist() == [1, 0, 0, 0, 0, 1, 1]
    m = active_mask("all", "every day", ["01-01"], [52])
    assert not m[:24].any() and m[24:48].all()
    assert (~m).sum() == 24 + 7 * 24
    for bad in ("6 to 22", "10-10"):
        with pytest.raises(ValueError):
            parse_hours(bad)
    with pytest.raises(ValueError):
        parse_days("someday")

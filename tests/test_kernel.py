"""The simulation kernel against a plain per-hour loop, its energy balance and a hand-worked case."""

from __future__ import annotations

import math

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from validation import external_check

from siteharvest.kernel import StoreArrays, simulate
from siteharvest.metrics import dark_hours, deficit_days, first_wake_hours, longest_outage_hours


def plain_loop(harvest, cold, demand, allowed, *, full, cut, turn_on, cold_lvl, a, b, c, eff,
               e0=0.0, on0=False, always=False, scale=None):
    """The same rules as the kernel, one configuration, written as a readable Python loop."""
    e, on = e0, on0 or always
    rec = {"e": [], "on": [], "unmet": [], "served": []}
    tot = dict.fromkeys(("harvest", "direct", "drawn", "unmet", "to_store", "charge_loss", "spilled",
                         "leaked"), 0.0)
    for t in range(len(harvest)):
        h = cold[t] if e < cold_lvl else harvest[t]
        want = demand[t] if on else 0.0
        direct = min(h, want)
        from_store = min(want - direct, max(e - cut, 0.0))
        unmet = want - direct - from_store
        e -= from_store
        spare = h - direct
        stored = max(min(spare * eff if allowed[t] else 0.0, full - e), 0.0)
        e += stored
        s_t = 1.0 if scale is None else scale[t]
        leak = min(s_t * (a * e + b * math.sqrt(e)) + (c if e >= cold_lvl else 0.0), e)
        e -= leak
        rec["on"].append(on)
        rec["e"].append(e)
        rec["unmet"].append(unmet)
        rec["served"].append(direct + from_store)
        short = unmet > 1e-12
        on = True if always else (True if on and not short else e >= turn_on)
        for key, val in (("harvest", h), ("direct", direct), ("drawn", from_store), ("unmet", unmet),
                         ("to_store", stored), ("charge_loss", stored / eff - stored),
                         ("spilled", spare - stored / eff), ("leaked", leak)):
            tot[key] += val
    return rec, tot


def store_of(n, **kw):
    return StoreArrays(**{k: np.full(n, float(v)) for k, v in kw.items()})


hours = st.integers(min_value=24, max_value=120)


@settings(max_examples=60, deadline=None)
@given(seed=st.integers(0, 2**31), n_hours=hours, sqrt_leak=st.booleans(), always=st.booleans(),
       eff=st.floats(0.5, 1.0), scaled=st.booleans())
def test_kernel_matches_plain_loop_and_balances(seed, n_hours, sqrt_leak, always, eff, scaled):
    rng = np.random.default_rng(seed)
    n = 3
    harvest = rng.exponential(1.0, (n, n_hours)) * (rng.random((n, n_hours)) > 0.4)
    cold = harvest * rng.uniform(0.0, 0.5)
    demand = rng.uniform(0.2, 1.5, n_hours)
    allowed = rng.random(n_hours) > 0.1
    full, cut = rng.uniform(5, 50), rng.uniform(0, 3)
    levels = {"max_j": full, "cutoff_j": cut, "turn_on_j": cut + rng.uniform(0, full - cut),
              "cold_start_j": rng.uniform(0, cut + 1), "leak_fraction_per_h": rng.uniform(0, 1e-2),
              "leak_sqrt_j_per_h": rng.uniform(0, 0.05) if sqrt_leak else 0.0,
              "leak_const_j_per_h": rng.uniform(0, 0.01), "charge_efficiency": eff}
    scale = rng.uniform(0.2, 8.0, n_hours) if scaled else None  # hourly leakage factor (store temperature)
    res = simulate(harvest, demand, store_of(n, **levels), cold_harvest_j=cold, charge_allowed=allowed,
                   always_on=always, hourly=True, leak_scale=scale)
    for k in range(n):
        rec, tot = plain_loop(harvest[k], cold[k], demand, allowed, full=full, cut=cut,
                              turn_on=levels["turn_on_j"], cold_lvl=levels["cold_start_j"],
                              a=levels["leak_fraction_per_h"], b=levels["leak_sqrt_j_per_h"],
                              c=levels["leak_const_j_per_h"], eff=eff, always=always, scale=scale)
        np.testing.assert_allclose(res.energy_j[k], rec["e"], rtol=1e-9, atol=1e-12)
        np.testing.assert_array_equal(res.on[k], rec["on"])
        np.testing.assert_allclose(res.unmet_j[k], rec["unmet"], rtol=1e-9, atol=1e-12)
        for key, val in tot.items():
            assert math.isclose(res.totals[key][k], val, rel_tol=1e-9, abs_tol=1e-9), key
        # energy in = delivered + change in store + losses
        t = {key: v[k] for key, v in res.totals.items()}
        delivered = t["direct"] + t["drawn"]
        assert math.isclose(t["harvest"], t["direct"] + t["to_store"] + t["charge_loss"] + t["spilled"],
                            rel_tol=1e-9, abs_tol=1e-9)
        change = res.final_energy_j[k] - t["start"]
        assert math.isclose(t["harvest"], delivered + change + t["leaked"] + t["charge_loss"] + t["spilled"]
                            - t["drawn"] + t["drawn"], rel_tol=1e-9, abs_tol=1e-9)
        assert math.isclose(change, t["to_store"] - t["drawn"] - t["leaked"], rel_tol=1e-9, abs_tol=1e-9)
        # the store stays in bounds; spilled energy is never negative
        assert np.all(res.energy_j[k] >= -1e-12) and np.all(res.energy_j[k] <= full + 1e-9)
        assert t["spilled"] >= -1e-9


@external_check(area="kernel", quantity="0.5 J/h in, 1 J/h out, 120 J store starting full, turn-on at 12 J, "
                                    "one year",
                value="empty after 240 h; 348 deficit days; longest outage 24 h",
                source="hand-worked case (docstring)", tolerance="exact")
def test_constant_harvest_and_demand_by_hand():
    """Hand-worked case: 0.5 J/h in, 1 J/h out, 120 J store starting full, turn-on at 12 J.

    Net drain 0.5 J/h empties the store after 240 h = 10 days. From hour 240 the pattern repeats
    every 49 h: one short hour, 24 h off (charging back to 12 J at 0.5 J/h), 24 h on (draining 12 J
    at 0.5 J/h). Lit windows are hours [265 + 49j, 288 + 49j]; a whole calendar day (24d .. 24d+23)
    is dark-free only when 24d = 265 + 49j, i.e. 1 + j = 0 (mod 24): j = 23, 47, ..., 167 (7 days,
    the last starting before hour 8736). Deficit days = 365 - 10 - 7 = 348.
    """
    n_hours = 8760
    store = store_of(1, max_j=120, cutoff_j=0, turn_on_j=12, cold_start_j=0, leak_fraction_per_h=0,
                     leak_sqrt_j_per_h=0, leak_const_j_per_h=0, charge_efficiency=1)
    res = simulate(np.full((1, n_hours), 0.5), np.ones(n_hours), store, initial_energy_j=120.0,
                   initially_on=True, hourly=True)
    short = res.short[0]
    assert int(np.argmax(short)) == 240                     # days to empty: 240 h = 10 days
    assert res.energy_j[0, 238] == 0.5 and res.energy_j[0, 239] == 0.0
    assert int(deficit_days(dark_hours(res.on[0], short))) == 348
    # off from hour 241 to 264 inclusive (24 h) while 24 x 0.5 J = 12 J reaches turn-on
    assert int(longest_outage_hours(res.on[0])) == 24
    assert not res.on[0, 241] and res.on[0, 265]


@external_check(area="kernel", quantity="first wake of an empty 10 J store, turn-on 4 J, 1 J/h harvest",
                value="hour 4", source="hand-worked case", tolerance="exact")
def test_first_wake_from_empty_store():
    """Empty 10 J supercapacitor-like store turning on at 4 J with 1 J/h harvest: wakes in hour 4."""
    store = store_of(1, max_j=10, cutoff_j=1, turn_on_j=4, cold_start_j=0, leak_fraction_per_h=0,
                     leak_sqrt_j_per_h=0, leak_const_j_per_h=0, charge_efficiency=1)
    res = simulate(np.ones((1, 48)), np.full(48, 0.1), store)
    assert first_wake_hours(res.on)[0] == 4.0
    never = simulate(np.zeros((1, 48)), np.full(48, 0.1), store)
    assert math.isnan(first_wake_hours(never.on)[0])


@external_check(area="kernel", quantity="store charging through the cold-start level 5 J (1 J/h below, 10 J/h above)",
                value="1, 2, 3, 4, 5, 15, 25 J", source="hand-worked case", tolerance="1e-7 relative")
def test_cold_start_harvest_used_below_threshold():
    """Below the cold-start level only the cold figure charges the store."""
    store = store_of(1, max_j=100, cutoff_j=0, turn_on_j=50, cold_start_j=5, leak_fraction_per_h=0,
                     leak_sqrt_j_per_h=0, leak_const_j_per_h=0, charge_efficiency=1)
    res = simulate(np.full((1, 10), 10.0), np.zeros(10), store, cold_harvest_j=np.full(10, 1.0), hourly=True)
    # 1 J/h until 5 J is reached, then 10 J/h
    np.testing.assert_allclose(res.energy_j[0, :7], [1, 2, 3, 4, 5, 15, 25])


def test_charge_blocked_outside_temperature_window():
    store = store_of(1, max_j=100, cutoff_j=0, turn_on_j=0, cold_start_j=0, leak_fraction_per_h=0,
                     leak_sqrt_j_per_h=0, leak_const_j_per_h=0, charge_efficiency=1)
    res = simulate(np.ones((1, 4)), np.zeros(4), store, charge_allowed=np.array([True, False, False, True]),
                   hourly=True)
    np.testing.assert_allclose(res.energy_j[0], [1, 1, 1, 2])
    assert res.totals["spilled"][0] == 2.0


def test_shared_harvest_rows_equal_explicit_rows():
    """Configurations that share a harvest row through harvest_rows give the same result as copies."""
    rng = np.random.default_rng(3)
    harvest = rng.exponential(1.0, (2, 200))
    rows = np.array([0, 1, 1, 0, 1])
    store = store_of(5, max_j=20, cutoff_j=1, turn_on_j=5, cold_start_j=0.5, leak_fraction_per_h=1e-3,
                     leak_sqrt_j_per_h=0.01, leak_const_j_per_h=0.0, charge_efficiency=0.9)
    shared = simulate(harvest, np.full(200, 0.9), store, harvest_rows=rows, hourly=True)
    copied = simulate(harvest[rows], np.full(200, 0.9), store, hourly=True)
    np.testing.assert_array_equal(shared.energy_j, copied.energy_j)
    np.testing.assert_array_equal(shared.on, copied.on)


def test_daily_record_matches_hourly_records():
    rng = np.random.default_rng(9)
    harvest = rng.exponential(0.5, (4, 24 * 30)) * (rng.random((4, 24 * 30)) > 0.5)
    store = store_of(4, max_j=8, cutoff_j=1, turn_on_j=3, cold_start_j=0, leak_fraction_per_h=1e-3,
                     leak_sqrt_j_per_h=0, leak_const_j_per_h=0, charge_efficiency=1)
    full = simulate(harvest, np.full(24 * 30, 0.4), store)
    daily = simulate(harvest, np.full(24 * 30, 0.4), store, daily_only=True)
    expected = dark_hours(full.on, full.short).reshape(4, 30, 24).any(axis=2)
    np.testing.assert_array_equal(daily.dark_days, expected)
    assert daily.on.shape == (4, 0)


@settings(max_examples=40, deadline=None)
@given(seed=st.integers(0, 2**31), sqrt_leak=st.booleans(), hysteresis=st.booleans())
def test_steady_year_shortcut_equals_two_explicit_years(seed, sqrt_leak, hysteresis):
    """The steady-year mode (stop once the counted year rejoins the warm-up year's path) gives the
    same dark days, lowest and final store, and counted-year totals as running the year twice."""
    rng = np.random.default_rng(seed)
    n, days = 6, 60
    hours = 24 * days
    daylight = np.tile(np.r_[np.zeros(7), np.ones(10), np.zeros(7)], days)
    harvest = rng.exponential(1.0, (n, hours)) * daylight * rng.uniform(0.05, 0.6, (n, 1))
    demand = np.full(hours, 0.15)
    allowed = rng.random(hours) > 0.05
    full = rng.uniform(2, 30, n)
    levels = StoreArrays(max_j=full, cutoff_j=full * 0.1, turn_on_j=full * (0.5 if hysteresis else 0.1),
                         cold_start_j=full * 0.05, leak_fraction_per_h=rng.uniform(0, 2e-3, n),
                         leak_sqrt_j_per_h=rng.uniform(0, 0.02, n) if sqrt_leak else np.zeros(n),
                         leak_const_j_per_h=np.full(n, 1e-3), charge_efficiency=np.full(n, 0.9))
    cold = harvest * 0.2
    fast = simulate(harvest, demand, levels, cold_harvest_j=cold, charge_allowed=allowed, steady_year=True)
    slow = simulate(np.tile(harvest, 2), np.tile(demand, 2), levels, cold_harvest_j=np.tile(cold, 2),
                    charge_allowed=np.tile(allowed, 2), daily_only=True, min_from=hours)
    first = simulate(harvest, demand, levels, cold_harvest_j=cold, charge_allowed=allowed)
    np.testing.assert_array_equal(fast.dark_days, slow.dark_days[:, days:])
    np.testing.assert_array_equal(fast.min_energy_j, slow.min_energy_j)
    np.testing.assert_array_equal(fast.final_energy_j, slow.final_energy_j)
    for key in ("harvest", "direct", "drawn", "unmet", "to_store", "charge_loss", "spilled", "leaked"):
        np.testing.assert_allclose(fast.totals[key], slow.totals[key] - first.totals[key], rtol=1e-9, atol=1e-9)

"""Sizing maps, frontier and pick, report interval, weather risk: checks and invariants."""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shared import BASE_SITE
from validation import external_check

from siteharvest import sizing
from siteharvest.assess import prepare
from siteharvest.cli import main
from siteharvest.kernel import StoreArrays, simulate
from siteharvest.metrics import autonomy_days, dark_hours, deficit_days
from siteharvest.site import parse_site_text
from siteharvest.sizing import (
    day_signatures,
    frontier_and_pick,
    hours_from_days,
    report_interval,
    resampled_days,
    sizing_map,
    weather_risk,
)

YEAR = slice(8760, 17520)


def levels(n, full, cut=0.0, turn_on=None, leak=0.0):
    return StoreArrays(**{k: np.full(n, float(v)) for k, v in {
        "max_j": full, "cutoff_j": cut, "turn_on_j": cut if turn_on is None else turn_on, "cold_start_j": 0.0,
        "leak_fraction_per_h": leak, "leak_sqrt_j_per_h": 0.0, "leak_const_j_per_h": 0.0,
        "charge_efficiency": 1.0}.items()})


def steady_deficits(harvest_year, demand_year, store):
    res = simulate(np.tile(harvest_year, (1, 2)), np.tile(demand_year, 2), store, min_from=8760)
    return deficit_days(dark_hours(res.on[:, YEAR], res.short[:, YEAR]))


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 10_000), more_harvest=st.floats(1.0, 3.0), more_store=st.floats(1.0, 5.0))
def test_without_hysteresis_more_harvester_or_store_never_adds_deficit_days(seed, more_harvest, more_store):
    """With turn-on at the cut-off (the node serves what it can hour by hour) the steady-state
    deficit days cannot rise with more harvest or a bigger store (common practice of storage
    sizing; the hour-by-hour greedy balance is monotone in both)."""
    rng = np.random.default_rng(seed)
    daily = np.repeat(rng.gamma(0.8, 1.0, 365), 24) * np.tile(np.r_[np.zeros(7), np.ones(10), np.zeros(7)], 365)
    harvest = daily * rng.uniform(0.1, 0.3)
    demand = np.full(8760, 0.1)
    full = rng.uniform(2, 40)
    base = steady_deficits(harvest[None, :], demand, levels(1, full))[0]
    assert steady_deficits(harvest[None, :] * more_harvest, demand, levels(1, full))[0] <= base
    assert steady_deficits(harvest[None, :], demand, levels(1, full * more_store))[0] <= base


def test_with_hysteresis_a_bigger_store_can_add_deficit_days():
    """Turn-on at half the store, a store leaking 1 %/h, two sunny days (8 J each) then four dark days,
    4.8 J of demand a day. The small store climbs to its 5 J turn-on level every sunny spell; the big
    one loses too much to leakage to reach 20 J and stays off all year. Without hysteresis both give
    the same count. So the frontier must not assume monotonicity (found by a search over such cycles)."""
    day = np.r_[np.zeros(8), np.full(8, 1.0), np.zeros(8)]
    cycle = np.concatenate([np.tile(day, 2), np.zeros(24 * 4)])
    harvest = np.tile(cycle, 70)[:8760][None, :]
    demand = np.full(8760, 0.2)
    small = steady_deficits(harvest, demand, levels(1, 10.0, turn_on=5.0, leak=0.01))[0]
    big = steady_deficits(harvest, demand, levels(1, 40.0, turn_on=20.0, leak=0.01))[0]
    assert (small, big) == (243, 365)
    assert steady_deficits(harvest, demand, levels(1, 40.0, leak=0.01))[0] <= \
        steady_deficits(harvest, demand, levels(1, 10.0, leak=0.01))[0]


def test_frontier_and_pick_without_monotonicity():
    meets = np.array([[0, 0, 0, 1],
                      [0, 1, 0, 0],    # passes at store 1 but not at 2 or 3 (hysteresis)
                      [1, 1, 1, 1]], dtype=bool)
    front, pick = frontier_and_pick(meets)
    assert front == [(0, 3), (1, 1), (2, 0)]
    assert pick == (0, 3)
    assert frontier_and_pick(np.zeros((2, 2), dtype=bool)) == ([], None)


@external_check(area="sizing", quantity="store sized for 5 days of autonomy at 80 % depth of discharge, no harvest",
                value="capacity = daily load x days / (max DoD x derating); carries the load 5 days (120 h)",
                source="IEEE 1562-2021 days-of-autonomy definition (rule from memory; the standard's scope checked)",
                tolerance="exact hour")
def test_days_of_autonomy_rule():
    """IEEE 1562-2021 days of autonomy: capacity = daily load x days / (max DoD x derating).
    A store so sized, full and with no harvest, carries a constant load exactly that many days."""
    daily_j = 24 * 0.5
    days, dod = 5.0, 0.8
    capacity = daily_j * days / dod   # IEEE 1562-2021 days-of-autonomy sizing, derating 1
    usable = capacity * dod
    assert autonomy_days(usable, daily_j / 86400) == pytest.approx(days)
    res = simulate(np.zeros((1, 24 * 10)), np.full(24 * 10, 0.5), levels(1, capacity, cut=capacity * (1 - dod)),
                   initial_energy_j=capacity, initially_on=True)
    assert int(np.argmax(res.short[0])) == days * 24


@pytest.fixture(scope="module")
def marginal():
    """A small panel on a dull synthetic year: some years pass, some do not."""
    text = BASE_SITE.replace("area_cm2 = 3.0", "area_cm2 = 0.5").replace("capacitance_f = 1.0", "capacitance_f = 0.5")
    return prepare(parse_site_text(text))


def test_sizing_map_shape_and_pick(marginal):
    m = sizing_map(marginal, "panel", n_harvester=12, n_store=10)
    assert m.deficit_days.shape == (len(m.harvester_sizes), len(m.store_sizes))
    assert np.all(np.diff(m.harvester_sizes) > 0) and np.all(np.diff(m.store_sizes) > 0)
    assert m.harvester_drawn in m.harvester_sizes and m.store_drawn in m.store_sizes
    assert m.pick is not None
    i, j = m.pick
    assert m.deficit_days[i, j] <= m.target_deficit_days
    # nothing with a smaller harvester passes at any store size
    assert not (m.deficit_days[:i] <= m.target_deficit_days).any()
    # no hysteresis-free guarantee here, but the biggest corner is no worse than the smallest
    assert m.deficit_days[-1, -1] <= m.deficit_days[0, 0]
    json.dumps(m.to_json())


def test_report_interval_bisection(marginal):
    r = report_interval(marginal, "panel", max_deficit_days=10)
    assert r is not None and r.task == "read and send"
    # the marginal spot is chosen so that the search ends inside its range, above the floor of 1 s
    assert r.shortest_every_s is not None and r.shortest_every_s > 1.0
    from siteharvest.demand import demand_energy_j
    from siteharvest.sizing import _steady_deficit
    node = marginal.spec.node

    def dd(every):
        task = node.task[0].model_copy(update={"every_s": every})
        return _steady_deficit(marginal, marginal.harvests[0],
                               demand_energy_j(node.model_copy(update={"task": [task]})))
    # at the interval found the target holds; a little faster (beyond the 1 % tolerance) it does not
    assert dd(r.shortest_every_s) <= 10
    assert dd(r.shortest_every_s / 1.05) > 10


def test_resampled_years_keep_monthly_irradiance(marginal):
    """Week blocks resampled within their month keep each month's mean GHI close to the source year's:
    over 300 years, within 3 % (stated tolerance of this project's method; measured: within 2.2 %)."""
    ghi = marginal.context.weather["ghi_w_m2"].to_numpy()
    days = resampled_days(day_signatures(marginal), 300, seed=4)
    hours = hours_from_days(days)
    months = marginal.context.index.month.to_numpy()
    resampled = ghi[hours]
    for m in range(1, 13):
        src = ghi[months == m].mean()
        assert resampled[:, months == m].mean() == pytest.approx(src, rel=0.03)
    # and the years really differ
    assert np.std(resampled.reshape(300, -1).mean(axis=1)) > 0


def test_resampling_keeps_schedules_in_place(marginal):
    sig = day_signatures(marginal)
    days = resampled_days(sig, 50, seed=2)
    assert np.all(sig[days] == sig[None, :])
    assert np.all((days - np.arange(365)) % 7 == 0)        # whole weeks: weekdays stay put


def test_weather_risk_percentiles(marginal):
    risk = weather_risk(marginal, years=120, seed=3)
    s = risk.summary("panel")
    assert 0 <= s["p50"] <= s["p90"] <= s["p99"] <= 365
    assert 0.0 <= s["chance_any"] <= 1.0
    again = weather_risk(marginal, years=120, seed=3)
    np.testing.assert_array_equal(risk.deficit_days["panel"], again.deficit_days["panel"])
    assert set(risk.deficit_days) == {"panel", "all-sources"}


def test_outages_only_hurt(tmp_path):
    text = (BASE_SITE.replace('kind = "solar"\narea_cm2 = 3.0\ntilt_deg = 45',
                              'kind = "thermoelectric"\nhot_side = 60'))
    prep = prepare(parse_site_text(text))
    calm = weather_risk(prep, years=60, seed=5)
    rough = weather_risk(prep, years=60, seed=5, outage_rate_per_year=6, outage_mean_days=4)
    assert rough.summary("panel")["mean"] >= calm.summary("panel")["mean"]
    assert rough.summary("panel")["mean"] > 0


def test_weather_risk_in_chunks_equals_all_years_at_once(monkeypatch):
    # Years are drawn up front and simulated independently, so cutting them into kernel calls of a
    # few years (with outages that must stay with their own year) changes no year's deficit days.
    text = (BASE_SITE.replace('kind = "solar"\narea_cm2 = 3.0\ntilt_deg = 45',
                              'kind = "thermoelectric"\nhot_side = 60'))
    prep = prepare(parse_site_text(text))
    kwargs = {"years": 23, "seed": 4, "outage_rate_per_year": 5, "outage_mean_days": 3}
    monkeypatch.setattr(sizing, "RISK_CHUNK_YEARS", 1000)
    whole = weather_risk(prep, **kwargs)
    monkeypatch.setattr(sizing, "RISK_CHUNK_YEARS", 5)
    chunked = weather_risk(prep, **kwargs)
    assert set(whole.deficit_days) == set(chunked.deficit_days)
    for case, days in whole.deficit_days.items():
        assert days.shape == (23,)
        np.testing.assert_array_equal(days, chunked.deficit_days[case])
    assert whole.deficit_days["panel"].std() > 0  # the outages make the years differ


def test_size_cli_json(site_file, capsys):
    assert main(["size", str(site_file()), "--json", "--steps", "6", "--years", "20"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["sources"][0]["id"] == "panel"
    assert len(doc["sources"][0]["deficit_days"]) == len(doc["sources"][0]["harvester"]["sizes"])
    assert doc["weather_risk"]["years"] == 20


def test_size_cli_unknown_source(site_file, capsys):
    assert main(["size", str(site_file()), "--source", "nope"]) == 2
    assert "--source: expected one of the site's source ids: panel" in capsys.readouterr().err

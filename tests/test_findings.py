"""The findings layer: conclusions computed once in the library, each with its numbers and one sentence.

Check values are constructed in the test (a site whose outcome is known by construction) or computed
in the test from first principles; no published value is needed here.
"""

from __future__ import annotations

import copy
import math
import tomllib

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from shared import SAMPLES
from siteharvest_app.tables import portfolio_row

from siteharvest import findings as F
from siteharvest.assess import COMBINED_ID, assess
from siteharvest.site import dump_site, load_site, parse_site, parse_site_text
from siteharvest.sizing import (
    TASK_COSTLIEST,
    TASK_NAMED,
    ReportInterval,
    SizingMap,
    frontier_and_pick,
    meets_target,
    report_task,
)

THREE = """
[spot]
name = "warm pipe, small panel, default vibration"
latitude_deg = 36.1
longitude_deg = -79.95
altitude_m = 270
utc_offset_h = -5
indoors = true
indoor_air_c = 22

[weather]
bundled = "723170TYA.CSV"

[node]
supply_v = 3.0
sleep_current_ua = 2.0

[[node.task]]
name = "read temperature"
current_ma = 1.5
duration_ms = 20
every_s = 60

[[node.task]]
name = "send report"
current_ma = 20
duration_ms = 15
every_s = 900

[store]
kind = "supercapacitor"
capacitance_f = 1.0
max_v = 5.0
cutoff_v = 2.4
turn_on_v = 3.2

[[source]]
id = "pipe-teg"
kind = "thermoelectric"

[source.hot_side]
mode = "constant"
surface_c = 70

[[source]]
id = "small-panel"
kind = "solar"
area_cm2 = 10
tilt_deg = 90

[[source]]
id = "vibe"
kind = "vibration"
preset = "car-engine-compartment"
"""


@pytest.fixture(scope="module")
def three():
    return assess(parse_site_text(THREE))


def test_three_sources_pick_the_most_robust_measured_source(three):
    found = F.case_findings(three)
    # constructed: every source passes on the numbers (0 deficit days, a first wake) ...
    assert all(found[c.id].meets_target for c in three.sources)
    # ... but the vibration harvester rests on a preset spectrum, so it needs a survey and is not the pick
    assert found["vibe"].status == F.NEEDS_SURVEY and "vibration spectrum" in found["vibe"].sentence
    top = F.headline(three, found)
    measured = [found[i] for i in ("pipe-teg", "small-panel")]
    best = max(measured, key=lambda c: (c.worst_month_margin, c.annual_energy_wh))   # the stated rule
    assert top.answer == F.YES and top.source.id == best.id
    assert top.reason.count(".") == 1 and "worst month" in top.reason and "vibe is left aside" in top.reason
    # the worst-month margin is the lowest of energy into the store over demand, month by month
    case = next(c for c in three.sources if c.id == best.id)
    assert best.worst_month_margin == pytest.approx(float(np.min(case.monthly_margin)))
    # the combined case does not rest on the default source when a measured one meets alone
    assert found[COMBINED_ID].status == F.MEETS


def test_json_keeps_its_keys_and_adds_the_findings(three):
    old = three.to_json()
    doc = F.assessment_json(three)
    assert set(old) <= set(doc) and {"headline", "weather_warning"} <= set(doc)
    for before, after in zip(old["sources"], doc["sources"], strict=True):
        assert {k: after[k] for k in before} == before
    vibe = next(s for s in doc["sources"] if s["id"] == "vibe")
    assert vibe["status"] == "needs a survey" and vibe["inputs"]["survey_assumed"] == ["vibration spectrum"]
    assert doc["headline"]["source"] == F.headline(three).source.id and doc["weather_warning"] is None


def _only(text: str, source: str) -> str:
    """THREE with only the given [[source]] tables (TOML text)."""
    head = text.split("[[source]]")[0]
    return head + source


@pytest.mark.parametrize(("source", "assumed"), [
    ('[[source]]\nid = "v"\nkind = "vibration"\npreset = "machine-tool-base"\n', "vibration spectrum"),
    ('[[source]]\nid = "l"\nkind = "indoor_light"\narea_cm2 = 20\n', "lamp illuminance at the cell"),
    ('[[source]]\nid = "t"\nkind = "thermoelectric"\n', "hot-surface temperature"),
    # a default written out (as a new form or a saved file does) is still a default
    ('[[source]]\nid = "t"\nkind = "thermoelectric"\n[source.hot_side]\nmode = "constant"\nsurface_c = 60\n',
     "hot-surface temperature"),
    ('[[source]]\nid = "r"\nkind = "rf"\n', "distance from the transmitter"),
])
def test_defaults_that_decide_the_yield_ask_for_a_survey(source, assumed):
    spec = parse_site_text(_only(THREE, source))
    si = F.source_inputs(spec.source[0])
    assert si.needs_survey and assumed in si.survey_assumed and "needs a survey" in si.sentence


def test_measured_inputs_of_the_samples_need_no_survey():
    spec = load_site(SAMPLES / "plant-room.toml")
    for src in spec.source:   # a survey spectrum, lamp lux and hours, a scheduled hot side: all given
        assert not F.source_inputs(src).needs_survey
    assert "vibration spectrum" in F.source_inputs(spec.source[2]).given


def _moved(lat: float, lon: float) -> dict:
    data = tomllib.loads((SAMPLES / "plant-room.toml").read_text())
    data["spot"].update(latitude_deg=lat, longitude_deg=lon)
    return data


def test_far_weather_year_is_warned_in_json_and_portfolio():
    data = _moved(-33.9, 151.2)   # the North Carolina year at a southern-hemisphere spot
    a = assess(parse_site(data, base_dir=SAMPLES))
    doc = F.assessment_json(a)
    w = doc["weather_warning"]
    assert w is not None and w["other_hemisphere"] and "[weather] synthetic = {}" in w["message"]
    # great-circle distance by the spherical law of cosines, computed here (mean Earth radius 6371 km)
    p1, p2 = math.radians(36.1), math.radians(-33.9)
    central = math.acos(math.sin(p1) * math.sin(p2) + math.cos(p1) * math.cos(p2) * math.cos(math.radians(231.15)))
    assert w["distance_km"] == pytest.approx(6371.0 * central, rel=2e-3)
    assert w["latitude_difference_deg"] == pytest.approx(-70.0)
    row = portfolio_row("k", "plant-room.toml", a)
    assert row["weather"].startswith("FAR") and row["weather_warning"] == w["message"]
    assert any("does not stand for it" in n for n in doc["warnings"])


@pytest.mark.parametrize(("lat", "lon", "far"), [
    (36.1, -79.95, False),    # the station's own place
    (37.0, -79.95, False),    # 100 km north: within 200 km and 3 degrees
    (36.1, -77.0, True),      # about 265 km east: farther than 200 km
    (-0.5, -79.95, True),     # other hemisphere
])
def test_far_weather_thresholds(lat, lon, far):
    assert (F.weather_warning(assess(parse_site(_moved(lat, lon), base_dir=SAMPLES))) is not None) == far


def test_synthetic_year_is_never_far():
    data = _moved(-33.9, 151.2)
    data["weather"] = {"synthetic": {}}
    assert F.weather_warning(assess(parse_site(data, base_dir=SAMPLES))) is None


# --------------------------------------------------------------------------------------------------
# save and reopen


def _round_trip_equal(spec) -> None:
    again = parse_site_text(dump_site(spec), files=spec.files)
    assert F.assessment_json(assess(again)) == F.assessment_json(assess(spec))


@pytest.mark.parametrize("name", sorted(p.name for p in SAMPLES.glob("*.toml")))
def test_every_sample_survives_save_and_reopen(name):
    _round_trip_equal(load_site(SAMPLES / name))


def test_southern_synthetic_year_keeps_its_seasons_when_saved():
    data = tomllib.loads((SAMPLES / "roof-parapet.toml").read_text())
    data["spot"].update(latitude_deg=-34.0, longitude_deg=151.0, utc_offset_h=10)
    data["weather"] = {"synthetic": {}}
    spec = parse_site(data, base_dir=SAMPLES)
    text = dump_site(spec)
    assert "monthly_clearness" not in text   # resolved by hemisphere, so not written out
    _round_trip_equal(spec)
    # moved north after saving, the same file takes the northern seasons
    north = tomllib.loads(text)
    north["spot"]["latitude_deg"] = 34.0
    a_n, a_s = assess(parse_site(north, base_dir=SAMPLES)), assess(spec)
    june = 5
    assert a_n.sources[0].monthly_energy_wh[june] > a_s.sources[0].monthly_energy_wh[june]


@settings(max_examples=6, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(lat=st.floats(-60.0, 70.0), lon=st.floats(-179.0, 179.0), seed=st.integers(0, 1000),
       tilt=st.floats(0.0, 90.0))
def test_round_trip_property_over_spots(lat, lon, seed, tilt):
    data = tomllib.loads((SAMPLES / "roof-parapet.toml").read_text())
    data["spot"].update(latitude_deg=lat, longitude_deg=lon, utc_offset_h=round(lon / 15))
    data["weather"] = {"synthetic": {"seed": seed}}
    data["source"][0]["tilt_deg"] = tilt
    data["source"][0]["azimuth_deg"] = 0.0 if lat < 0 else 180.0
    _round_trip_equal(parse_site(copy.deepcopy(data), base_dir=SAMPLES))


# --------------------------------------------------------------------------------------------------
# the reporting-interval task


def test_interval_search_varies_the_report_on_the_plant_room():
    node = load_site(SAMPLES / "plant-room.toml").node
    k, reason = report_task(node)
    assert node.task[k].name == "send condition report" and reason == TASK_NAMED
    # no task named as a report: the costliest; energy per run x runs, computed here (all hours active):
    # burst 6 mA x 0.8 s x 3 V x 720/day = 10.4 J/day; read 1.2 mA x 15 ms x 3 V x 1440/day = 0.078 J/day
    renamed = node.model_copy(update={"task": [t.model_copy(update={"name": f"task {i}"})
                                               for i, t in enumerate(node.task)]})
    k, reason = report_task(renamed)
    assert renamed.task[k].name == "task 0" and reason == TASK_COSTLIEST
    assert report_task(node, "read bearing temperature")[0] == 1


def test_interval_finding_names_the_task_and_why():
    iv = ReportInterval(COMBINED_ID, "send condition report", 600.0, 300.0, 3, TASK_NAMED, 1.0, 7 * 86400.0)
    f = F.interval_finding(iv)
    assert "'send condition report' (the task named as the report) every 5 min at the most" in f.sentence
    assert "drawn: every 10 min" in f.sentence and "all sources together" in f.sentence
    none = F.interval_finding(ReportInterval("x", "send", 600.0, None, 30, TASK_NAMED))
    assert "even once a week" in none.sentence and none.none_within_limit
    floor = F.interval_finding(ReportInterval("x", "send", 600.0, 1.0, 0, TASK_NAMED, 1.0))
    assert floor.at_floor and "or faster" in floor.sentence


# --------------------------------------------------------------------------------------------------
# sizing conclusions


def _map(dd: list[list[int]], target: int = 0) -> SizingMap:
    dd_arr = np.array(dd)
    front, pick = frontier_and_pick(dd_arr <= target)
    n_h, n_s = dd_arr.shape
    return SizingMap("panel", "solar", "area_cm2", "cm2", 2.0 ** np.arange(n_h), 2.0, "capacitance_f", "F",
                     0.1 * 2.0 ** np.arange(n_s), 0.2, dd_arr, np.full(dd_arr.shape, 30.0), target, front, pick,
                     False, "Cell area")


def test_sizing_finding_pick_edge_and_bigger_store():
    # constructed: row 1 passes with the second store, misses again with the fourth (a bigger store worse)
    f = F.sizing_finding(_map([[9, 9, 9, 9], [9, 0, 0, 5], [0, 0, 0, 0]]))
    assert f.pick == (1, 1) and f.pick_deficit_days == 0 and f.bigger_store_worse and f.bigger_store_sentence
    assert "cell area 2 cm² with supercapacitor capacitance 0.2 F" in f.pick_sentence
    assert "first wake after 30 h" in f.pick_sentence and f.frontier_texts == ["4 cm² + 0.1 F"]
    edge = F.sizing_finding(_map([[0, 0], [0, 0]]))
    assert edge.pick_at_edge and "edge of the map" in edge.edge_sentence
    none = F.sizing_finding(_map([[9, 8], [7, 6]]))
    assert none.pick is None and none.fewest_deficit_days == 6 and "Nothing in this map" in none.pick_sentence
    assert f"{F.FIRST_WAKE_HORIZON_DAYS} days" in none.limits_sentence


def test_case_labels_and_demand():
    assert F.case_label(COMBINED_ID) == F.COMBINED_LABEL == "all sources together"
    a = assess(load_site(SAMPLES / "roof-parapet.toml"))
    d = F.demand_summary(a)
    # 1 Wh = 3600 J (definition); monthly sums add up to the year
    assert d.annual_energy_wh == pytest.approx(a.prepared.demand_j.sum() / 3600.0)
    assert d.monthly_energy_wh.sum() == pytest.approx(d.annual_energy_wh)


def test_a_size_that_never_wakes_within_the_study_is_no_pick():
    """0 deficit days in the steady year but no first wake within 90 days of installation meets nothing."""
    dd = np.array([[0, 0], [0, 0]])
    fw = np.array([[np.nan, 40.0], [20.0, 10.0]])
    meets = meets_target(dd, fw, 0)
    assert meets.tolist() == [[False, True], [True, True]]
    assert frontier_and_pick(meets)[1] == (0, 1)


def test_a_pass_on_assumed_inputs_is_not_shown_as_a_pass(three):
    from siteharvest_app.tables import ASSUMED_CLASS, VERDICT_CLASS, summary_rows

    rows = {r["id"]: r for r in summary_rows(three)[0]}
    assert rows["vibe"]["verdict_class"] == ASSUMED_CLASS and "assumed inputs" in rows["vibe"]["verdict"]
    assert rows["pipe-teg"]["verdict_class"] == VERDICT_CLASS[rows["pipe-teg"]["verdict"]]

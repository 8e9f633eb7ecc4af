"""Thermoelectric source: formulas, thermal network, hot-side inputs and the yearly yield."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pydantic import ValidationError
from scipy.optimize import minimize_scalar
from validation import external_check

from siteharvest.context import SpotContext
from siteharvest.errors import SiteInputError
from siteharvest.sources import SOURCE_KINDS
from siteharvest.sources.thermoelectric import (
    MODULE_PRESETS,
    ConstantHotSide,
    FileHotSide,
    HeatSink,
    ScheduledHotSide,
    ThermoelectricSource,
    air_properties,
    effective_module_resistance_k_w,
    figure_of_merit_zt,
    fin_efficiency,
    forced_plate_convection_w_m2k,
    matched_load_power_w,
    matched_load_voltage_v,
    max_efficiency,
    module_delta_t_k,
    radiation_w_m2k,
    solve_thermal_network,
    thermal_match,
    thermoelectric_output,
    vertical_plate_convection_w_m2k,
)
from siteharvest.timegrid import HOURS_PER_YEAR, reference_index

LARGE = "large-bismuth-telluride-module-40mm"


def make_ctx(air_c: float | np.ndarray = 20.0, tmp_path=None, indoors: bool = False,
             indoor_air_c: float = 21.0) -> SpotContext:
    weather = pd.DataFrame(
        {"ghi_w_m2": 0.0, "dni_w_m2": 0.0, "dhi_w_m2": 0.0,
         "temp_air_c": np.broadcast_to(np.asarray(air_c, float), (HOURS_PER_YEAR,)).copy(),
         "wind_speed_m_s": 1.0},
        index=reference_index(1.0),
    )
    kwargs = {"base_dir": tmp_path} if tmp_path is not None else {}
    return SpotContext(weather, 47.5, 7.6, indoors=indoors, indoor_air_c=indoor_air_c, **kwargs)


@pytest.fixture(scope="module")
def ctx() -> SpotContext:
    return make_ctx(20.0)


# ---------------------------------------------------------------- matched-load power


@pytest.mark.parametrize(("delta_t_k", "expected_mw"), [(1, 0.323), (2, 1.29), (5, 8.06), (10, 32.3)])
@external_check(area="thermoelectric", quantity="matched-load power of a 127-couple module, alpha = 0.0508 V/K, "
                                            "R = 2 ohm, dT = 1, 2, 5, 10 K",
                value="0.323, 1.29, 8.06, 32.3 mW",
                source="P = (alpha dT)^2 / (4 R) (Rowe (ed.), CRC Handbook of Thermoelectrics, 1995), worked by hand",
                tolerance="0.2 % (3 significant figures)")
def test_matched_load_power_hand_computed(delta_t_k, expected_mw):
    # Matched load P = (alpha dT)^2 / (4R) (Rowe (ed.), CRC Handbook of Thermoelectrics, 1995), worked by hand
    # for a 127-couple module (127 x 0.4 mV/K = 0.0508 V/K), R = 2 ohm;
    # by hand for 10 K: (0.508 V)^2 / 8 ohm = 32.258 mW.
    p_w = matched_load_power_w(0.0508, delta_t_k, 2.0)
    assert p_w * 1e3 == pytest.approx(expected_mw, rel=0.002)  # quoted to 3 significant figures


def test_matched_load_power_exact_value():
    # Hand computation: (0.05 V/K * 4 K)^2 / (4 * 2.5 ohm) = 0.04 / 10 = 4.000 mW.
    assert matched_load_power_w(0.05, 4.0, 2.5) == pytest.approx(4.0e-3, rel=1e-12)
    assert matched_load_voltage_v(0.05, 4.0) == pytest.approx(0.1, rel=1e-12)
    assert matched_load_voltage_v(0.05, -4.0, series_modules=3) == pytest.approx(0.3, rel=1e-12)


@settings(max_examples=60, deadline=None)
@given(alpha=st.floats(1e-4, 0.5), r=st.floats(0.01, 1000.0), dt=st.floats(-300.0, 300.0),
       k=st.floats(1.0, 10.0))
def test_matched_load_power_properties(alpha, r, dt, k):
    p = float(matched_load_power_w(alpha, dt, r))
    assert p >= 0.0
    assert float(matched_load_power_w(alpha, -dt, r)) == pytest.approx(p, rel=1e-12, abs=0)  # symmetric
    assert float(matched_load_power_w(alpha, k * dt, r)) >= p  # monotonic in |dT|
    assert float(matched_load_power_w(alpha, k * dt, r)) == pytest.approx(k * k * p, rel=1e-9)  # ~ dT^2


# ---------------------------------------------------------------- maximum efficiency


@pytest.mark.parametrize(("t_hot", "t_cold", "zt", "expected_pct"), [
    (310.0, 300.0, 1.0, 0.56), (373.0, 298.0, 1.0, 3.76), (373.0, 298.0, 0.7, 2.91),
    (323.0, 298.0, 1.0, 1.37),
])
@external_check(area="thermoelectric", quantity="maximum efficiency: (310, 300 K, ZT 1), (373, 298 K, ZT 1), "
                                            "(373, 298 K, ZT 0.7), (323, 298 K, ZT 1)",
                value="0.56, 3.76, 2.91, 1.37 %",
                source="Ioffe 1957; Rowe (ed.), CRC Handbook of Thermoelectrics, 1995; Snyder & Toberer 2008, "
                       "Nature Materials 7:105-114; values worked from the formula",
                tolerance="0.006 percentage points")
def test_max_efficiency_ioffe(t_hot, t_cold, zt, expected_pct):
    # Ioffe 1957; Rowe (ed.), CRC Handbook of Thermoelectrics, 1995:
    # eta = (dT/Th)(sqrt(1+ZT)-1)/(sqrt(1+ZT)+Tc/Th) (also Snyder & Toberer 2008, Nature Materials 7:105-114);
    # check values worked out from it (2 decimals, %).
    assert float(max_efficiency(zt, t_hot, t_cold)) * 100 == pytest.approx(expected_pct, abs=0.006)
    # and the formula evaluated here independently
    root = math.sqrt(1 + zt)
    independent = (t_hot - t_cold) / t_hot * (root - 1) / (root + t_cold / t_hot)
    assert float(max_efficiency(zt, t_hot, t_cold)) == pytest.approx(independent, rel=1e-12)


@external_check(area="thermoelectric", quantity="maximum efficiency as ZT -> infinity, 373 / 298 K",
                value="Carnot, 1 - 298/373 = 20.1 %", source="second law (Carnot limit)", tolerance="1e-12 relative")
def test_max_efficiency_limits():
    carnot = (373.0 - 298.0) / 373.0
    assert float(max_efficiency(0.0, 373.0, 298.0)) == 0.0  # ZT -> 0: no conversion
    assert float(max_efficiency(1e-9, 373.0, 298.0)) < 1e-10
    # ZT -> inf: Carnot
    assert float(max_efficiency(np.inf, 373.0, 298.0)) == pytest.approx(carnot, rel=1e-12)
    assert float(max_efficiency(1e12, 373.0, 298.0)) == pytest.approx(carnot, rel=1e-5)
    zts = np.array([0.1, 0.5, 1.0, 2.0, 5.0])
    eta = max_efficiency(zts, 373.0, 298.0)
    assert np.all(np.diff(eta) > 0) and np.all(eta < carnot)
    with pytest.raises(ValueError):
        max_efficiency(1.0, 298.0, 373.0)


@external_check(area="thermoelectric", quantity="ZT at 300 K of every module preset",
                value="0.7-1.0 for bulk bismuth telluride",
                source="Snyder & Toberer 2008, Nature Materials 7:105-114 (from memory)", tolerance="range 0.6-1.0")
@external_check(area="thermoelectric", quantity="ZT at 300 K for alpha = 0.0508 V/K, R = 2 ohm, K = 0.5 W/K",
                value="0.77", source="Z = alpha^2 / (R K) (Rowe (ed.) 1995), worked by hand", tolerance="0.005")
def test_preset_figure_of_merit_is_typical():
    # Snyder & Toberer 2008, Nature Materials 7:105-114 (from memory, range only): bulk bismuth telluride ZT
    # near 300 K is 0.7-1.0.
    for name, p in MODULE_PRESETS.items():
        zt = float(figure_of_merit_zt(p["seebeck_v_k"], p["resistance_ohm"],
                                      p["module_thermal_resistance_k_w"], 300.0))
        assert 0.6 <= zt <= 1.0, name
    # Z = alpha^2 / (R K), by hand: alpha = 0.0508 V/K, R = 2 ohm, K = 0.5 W/K -> ZT(300 K) = 0.77
    assert float(figure_of_merit_zt(0.0508, 2.0, 2.0, 300.0)) == pytest.approx(0.77, abs=0.005)


# ---------------------------------------------------------------- thermal network and matching


@external_check(area="thermoelectric", quantity="module temperature difference in a series thermal network, "
                                            "60 K, R_TEG 2 K/W, R_ext 4 K/W",
                value="20 K", source="series thermal resistances (Incropera & DeWitt, Fundamentals of Heat and Mass "
                                     "Transfer), Peltier and Joule terms neglected; by hand",
                tolerance="1e-12 relative")
def test_module_delta_t_is_divider():
    # Series thermal network (Incropera & DeWitt, Fundamentals of Heat and Mass Transfer; Peltier and Joule
    # terms neglected): dT_TEG = dT R_TEG / (R_TEG + R_ext); 60 K * 2 / (2 + 4) = 20 K.
    assert float(module_delta_t_k(60.0, 2.0, 4.0)) == pytest.approx(20.0, rel=1e-12)


def _power_vs_module_resistance(r_module, r_ext, delta_t=50.0, alpha=0.0508, ohm_per_k_w=1.0, zt=0.0):
    # Module family: same couples, leg length varied, so the electrical resistance scales with the
    # thermal resistance (R_el = ohm_per_k_w * R_th).
    r_eff = effective_module_resistance_k_w(r_module, zt)
    dt_m = module_delta_t_k(delta_t, r_eff, r_ext)
    return float(matched_load_power_w(alpha, dt_m, ohm_per_k_w * r_module))


@pytest.mark.parametrize("r_ext", [0.7, 3.0, 12.0])
@external_check(area="thermoelectric", quantity="module thermal resistance that maximises power, fixed R_ext",
                value="R_module = R_ext; then P = alpha^2 dT^2 / (16 R_int)",
                source="Stevens 2001, Energy Conversion & Management 42:709-720; Leonov 2013, IEEE Sensors J. "
                       "13(6):2284-2291 (from memory; the optimum found numerically here)",
                tolerance="1e-3 relative (optimum); 1e-12 (power)")
def test_thermal_matching_optimum_at_external_resistance(r_ext):
    # Stevens 2001, Energy Conversion & Management 42:709-720; Freunek et al. 2009, J. Electronic Materials
    # 38(7):1214 (from memory): with fixed R_ext, power peaks at R_module = R_ext (Peltier neglected).
    res = minimize_scalar(lambda r: -_power_vs_module_resistance(r, r_ext), bounds=(0.01, 100.0),
                          method="bounded", options={"xatol": 1e-7})
    assert res.x == pytest.approx(r_ext, rel=1e-3)
    assert thermal_match(r_ext * 0.25, r_ext * 0.75) == pytest.approx(r_ext, rel=1e-12)
    # Stevens 2001; Leonov 2013, IEEE Sensors J. 13(6):2284-2291 (from memory; follows from the divider and the
    # matched load): at the optimum dT_module = dT/2 and P = alpha^2 dT^2 / (16 R_int).
    p_opt = _power_vs_module_resistance(r_ext, r_ext)
    assert p_opt == pytest.approx(0.0508**2 * 50.0**2 / (16 * r_ext), rel=1e-12)


def test_thermal_matching_with_peltier_feedback():
    # With Peltier feedback the optimum moves to R_ext (1 + ZT/2) (our derivation; order sqrt(1+ZT) shift,
    # Yazawa & Shakouri 2011): thermal_match must agree with a numerical optimum.
    r_ext, zt = 4.0, 0.8
    res = minimize_scalar(lambda r: -_power_vs_module_resistance(r, r_ext, zt=zt), bounds=(0.01, 100.0),
                          method="bounded", options={"xatol": 1e-7})
    assert res.x == pytest.approx(thermal_match(3.0, 1.0, zt_mean=zt), rel=1e-3)
    assert res.x > r_ext


@external_check(area="thermoelectric", quantity="linearised radiation coefficient at 300 K, eps = 1 and 0.9",
                value="6.12 and 5.51 W/m2K (4 eps sigma T^3)",
                source="net exchange eps sigma (Ts^4 - Tsur^4) (Incropera & DeWitt); sigma CODATA 2018; by hand",
                tolerance="0.005 W/m2K")
def test_radiation_coefficient():
    # Linearised radiation h_rad = 4 eps sigma T^3 (net exchange eps sigma (Ts^4 - Tsur^4), Incropera & DeWitt;
    # sigma CODATA 2018), by hand: 6.12 W/m2K at 300 K, eps = 1 (5.51 at eps = 0.9).
    assert float(radiation_w_m2k(1.0, 300.0, 300.0)) == pytest.approx(6.12, abs=0.005)
    assert float(radiation_w_m2k(0.9, 300.0, 300.0)) == pytest.approx(5.51, abs=0.005)
    # exact net exchange: h (Ts - Tsur) = eps sigma (Ts^4 - Tsur^4)
    sigma = 5.670374419e-8
    assert float(radiation_w_m2k(0.8, 350.0, 290.0)) * 60.0 == pytest.approx(
        0.8 * sigma * (350.0**4 - 290.0**4), rel=1e-12)


@external_check(area="thermoelectric", quantity="air at 300 K, 1 atm: k, nu, Pr",
                value="0.0263 W/mK, 15.89e-6 m2/s, 0.707",
                source="Incropera & DeWitt, Table A.4 (from memory)", tolerance="3 % (range)")
def test_air_properties_near_tables():
    # Incropera & DeWitt, Table A.4 (air at 300 K, 1 atm), from memory [M]: k = 0.0263 W/mK,
    # nu = 15.89e-6 m2/s, Pr = 0.707. Range check (3 %).
    k, nu, pr = air_properties(300.0)
    assert float(k) == pytest.approx(0.0263, rel=0.03)
    assert float(nu) == pytest.approx(15.89e-6, rel=0.03)
    assert float(pr) == pytest.approx(0.707, rel=0.03)


@pytest.mark.parametrize(("dt", "height"), [(10.0, 0.1), (30.0, 0.05), (5.0, 0.3)])
@external_check(area="thermoelectric", quantity="laminar free convection on a vertical plate in air",
                value="h = 1.42 (dT/L)^0.25, e.g. 4.49 W/m2K at dT = 10 K, L = 0.1 m",
                source="Holman, Heat Transfer, Table 7-2 (from memory)", tolerance="15 % (range)")
@external_check(area="thermoelectric", quantity="free convection coefficient in gases", value="2-25 W/m2K",
                source="Incropera & DeWitt, Table 1.1 (from memory)", tolerance="range")
def test_vertical_plate_convection_near_simplified_air_formula(dt, height):
    # Holman, Heat Transfer, Table 7-2 [M]: laminar vertical plate in air h = 1.42 (dT/L)^0.25;
    # e.g. dT = 10 K, L = 0.1 m -> 1.42 x 100^0.25 = 4.49 W/m2K. Range check +-15 %.
    h = float(vertical_plate_convection_w_m2k(dt, height, 20.0))
    assert h == pytest.approx(1.42 * (dt / height) ** 0.25, rel=0.15)
    # Incropera Table 1.1 [M]: free convection in gases 2-25 W/m2K
    assert 2.0 <= h <= 25.0


@external_check(area="thermoelectric", quantity="sink resistance of a small finned sink (150 cm2, 40 mm) in still air",
                value="about 5-15 K/W", source="from memory, low confidence (no single source)",
                tolerance="range 3-15 K/W")
def test_network_solution_is_self_consistent():
    sink = HeatSink(area_cm2=120.0, height_mm=60.0, emissivity=0.9)
    dt = np.array([5.0, 40.0, 120.0, -30.0])
    air = np.full(4, 15.0)
    r_sink, heat = solve_thermal_network(dt, air, 2.5, sink)
    dt_sink = heat * r_sink
    h_conv = vertical_plate_convection_w_m2k(dt_sink, 0.06, air)
    eta_o = 1.0 - sink.fin_area_share * (1.0 - fin_efficiency(h_conv, 0.025, 0.0015, 200.0))
    h_rad = radiation_w_m2k(0.9, air + 273.15 + dt_sink, air + 273.15)
    conductance = 120e-4 * eta_o * h_conv + sink.envelope_area_cm2 * 1e-4 * h_rad
    np.testing.assert_allclose(r_sink, 1.0 / conductance, rtol=1e-9)
    np.testing.assert_allclose(heat, dt / (2.5 + r_sink), rtol=1e-12)
    # a small sink in still air: a small (40 x 40 x 20 mm) finned sink is about 5-15 K/W (from memory, low
    # confidence; range only)
    r_small, _ = solve_thermal_network(np.array([40.0]), np.array([20.0]), 2.0,
                                       HeatSink(area_cm2=150.0, height_mm=40.0))
    assert 3.0 <= float(r_small[0]) <= 15.0


# ---------------------------------------------------------------- yearly yield


def test_network_and_power_composition(ctx):
    # With a given sink and Peltier feedback off the yield is exactly the series-divider formula.
    spec = ThermoelectricSource(id="t", preset=LARGE, hot_side=80.0, peltier_feedback=False,
                                hot_contact_resistance_k_w=0.4, cold_contact_resistance_k_w=0.1,
                                heat_sink={"resistance_k_w": 3.5})
    out = thermoelectric_output(spec, ctx)
    dt_m = 60.0 * 2.0 / (0.4 + 2.0 + 0.1 + 3.5)  # 20 K
    assert out.details["delta_t_module_k"] == pytest.approx(np.full(HOURS_PER_YEAR, dt_m))
    assert out.power_w == pytest.approx(np.full(HOURS_PER_YEAR, (0.0508 * dt_m) ** 2 / 8.0))
    assert out.voltage_v == pytest.approx(np.full(HOURS_PER_YEAR, 0.0508 * dt_m / 2))
    assert out.details["heat_flow_w"] == pytest.approx(np.full(HOURS_PER_YEAR, 60.0 / 6.0))


def test_peltier_feedback_lowers_power(ctx):
    on = thermoelectric_output(ThermoelectricSource(id="t", hot_side=90.0), ctx)
    off = thermoelectric_output(ThermoelectricSource(id="t", hot_side=90.0, peltier_feedback=False), ctx)
    assert np.all(on.power_w < off.power_w)
    assert np.all(on.power_w > 0.3 * off.power_w)


def test_series_and_parallel_same_power(ctx):
    series = thermoelectric_output(ThermoelectricSource(id="t", modules=4, wiring="series",
                                                        hot_side=70.0), ctx)
    parallel = thermoelectric_output(ThermoelectricSource(id="t", modules=4, wiring="parallel",
                                                          hot_side=70.0), ctx)
    one = thermoelectric_output(ThermoelectricSource(id="t", modules=1, hot_side=70.0), ctx)
    np.testing.assert_allclose(series.power_w, parallel.power_w, rtol=1e-12)
    np.testing.assert_allclose(series.power_w, 4 * one.power_w, rtol=1e-12)
    np.testing.assert_allclose(series.voltage_v, 4 * parallel.voltage_v, rtol=1e-12)
    np.testing.assert_allclose(parallel.voltage_v, one.voltage_v, rtol=1e-12)


@external_check(area="thermoelectric", quantity="module on a hot surface, ~100 K across the assembly",
                value="of the order of 10 mW/cm2 of module area", source="common practice (sanity bound)",
                tolerance="1-100 mW/cm2")
def test_magnitude_large_difference(ctx):
    # Common practice [CP]: a module on a hot surface with ~100 K across the assembly gives of the order
    # of 10 mW/cm2 of module area. Sanity bound 1..100 mW/cm2 with a plain natural-convection sink.
    spec = ThermoelectricSource(id="t", preset=LARGE, hot_side=120.0, hot_contact_resistance_k_w=0.1,
                                heat_sink={"area_cm2": 400.0, "height_mm": 80.0})
    out = thermoelectric_output(spec, ctx)
    side_cm = 4.0   # the large preset is a 40 mm square module (its name)
    mw_per_cm2 = out.power_w[0] * 1e3 / side_cm**2
    assert 1.0 <= mw_per_cm2 <= 100.0
    # and a small dT gives far less: P ~ dT^2 (matched load, above)
    small = thermoelectric_output(spec.model_copy(update={"hot_side": ConstantHotSide(surface_c=25.0)}), ctx)
    assert small.power_w[0] < out.power_w[0] / 100


def test_hot_side_colder_than_air(ctx):
    spec = ThermoelectricSource(id="t", hot_side={"mode": "constant", "surface_c": 4.0})  # chilled line
    out = thermoelectric_output(spec, ctx)
    assert np.all(out.power_w > 0)
    assert np.all(out.details["delta_t_module_k"] < 0)
    assert np.all(out.voltage_v > 0)
    assert any("colder than the air" in n for n in out.notes)
    warm = thermoelectric_output(ThermoelectricSource(id="t", hot_side=20.0), ctx)
    assert not any("colder than the air" in n for n in warm.notes)
    assert np.all(warm.power_w == 0)


@settings(max_examples=15, deadline=None)
@given(dt1=st.floats(0.5, 150.0), dt2=st.floats(0.5, 150.0))
def test_yield_monotonic_in_temperature_difference(ctx, dt1, dt2):
    lo, hi = sorted((dt1, dt2))
    p_lo = thermoelectric_output(ThermoelectricSource(id="t", hot_side=20.0 + lo), ctx).power_w[0]
    p_hi = thermoelectric_output(ThermoelectricSource(id="t", hot_side=20.0 + hi), ctx).power_w[0]
    assert 0 < p_lo <= p_hi * (1 + 1e-12)


@settings(max_examples=15, deadline=None)
@given(dt=st.floats(0.1, 60.0))
def test_yield_symmetric_in_sign_with_linear_network(ctx, dt):
    base = {"id": "t", "peltier_feedback": False, "heat_sink": {"resistance_k_w": 5.0}}
    warm = thermoelectric_output(ThermoelectricSource(**base, hot_side=20.0 + dt), ctx)
    cold = thermoelectric_output(ThermoelectricSource(**base, hot_side=20.0 - dt), ctx)
    assert warm.power_w[0] == pytest.approx(cold.power_w[0], rel=1e-12)
    assert warm.voltage_v[0] == pytest.approx(cold.voltage_v[0], rel=1e-12)


def test_indoor_cold_side_and_offset():
    indoor = make_ctx(-5.0, indoors=True, indoor_air_c=22.0)
    out = thermoelectric_output(ThermoelectricSource(id="t", hot_side=62.0, cold_side_offset_c=5.0), indoor)
    assert np.all(out.details["cold_air_c"] == 27.0)
    assert np.all(out.details["delta_t_total_k"] == 35.0)


def test_process_schedule(ctx):
    spec = ThermoelectricSource(id="t", hot_side={
        "process_on_c": 85.0, "process": {"hours": "06-22", "days": "weekdays", "shutdown_weeks": [31, 32]}})
    assert isinstance(spec.hot_side, ScheduledHotSide)
    out = thermoelectric_output(spec, ctx)
    mask = spec.hot_side.process.mask()
    assert np.all(out.details["hot_side_c"][mask] == 85.0)
    assert np.all(out.power_w[~mask] == 0.0)  # process off and no process_off_c: surface at air temperature
    assert np.all(out.power_w[mask] > 0.0)
    week31 = slice(30 * 7 * 24, 31 * 7 * 24)
    assert out.power_w[week31].sum() == 0.0
    spec_off = ThermoelectricSource(id="t", hot_side={"mode": "schedule", "process_on_c": 85.0,
                                                      "process_off_c": 35.0})
    out_off = thermoelectric_output(spec_off, ctx)
    assert np.all(out_off.power_w > 0.0)


# ---------------------------------------------------------------- hot-side file


def _write_csv(path, values, column="hot_surface_c", comment=True):
    lines = (["# hourly pipe surface temperature, degC"] if comment else []) + [f"time_h,{column}"]
    lines += [f"{i},{v}" for i, v in enumerate(values)]
    path.write_text("\n".join(lines) + "\n")


def test_hot_side_file_matches_constant(tmp_path):
    _write_csv(tmp_path / "pipe.csv", [70.0] * HOURS_PER_YEAR)
    file_ctx = make_ctx(20.0, tmp_path)
    from_file = thermoelectric_output(ThermoelectricSource(id="t", hot_side={"file": "pipe.csv"}), file_ctx)
    const = thermoelectric_output(ThermoelectricSource(id="t", hot_side=70.0), file_ctx)
    np.testing.assert_allclose(from_file.power_w, const.power_w, rtol=1e-12)


def test_bad_csv_raises_site_input_error(tmp_path):
    file_ctx = make_ctx(20.0, tmp_path)

    def run(name, column="hot_surface_c"):
        spec = ThermoelectricSource(id="t", hot_side=FileHotSide(file=name, column=column))
        return thermoelectric_output(spec, file_ctx)

    with pytest.raises(SiteInputError, match=r"missing\.csv.*existing CSV"):
        run("missing.csv")
    _write_csv(tmp_path / "short.csv", [70.0] * 100)
    with pytest.raises(SiteInputError,
                       match=r"short\.csv: hot_surface_c: expected 8760 hourly rows, got 100"):
        run("short.csv")
    _write_csv(tmp_path / "other.csv", [70.0] * HOURS_PER_YEAR, column="pipe_c")
    with pytest.raises(SiteInputError, match=r"other\.csv: hot_surface_c: expected a column named"):
        run("other.csv")
    values = [70.0] * HOURS_PER_YEAR
    values[9] = "hot"
    _write_csv(tmp_path / "text.csv", values)
    with pytest.raises(SiteInputError) as info:
        run("text.csv")
    err = info.value
    assert err.field == "hot_surface_c" and err.file.endswith("text.csv") and err.got == "hot"
    assert err.line == 12  # comment line, header, then data rows 0..9
    values[9] = 5000.0
    _write_csv(tmp_path / "range.csv", values, comment=False)
    with pytest.raises(SiteInputError, match="from -100 to 1000"):
        run("range.csv")
    (tmp_path / "empty.csv").write_text("")
    with pytest.raises(SiteInputError, match=r"empty\.csv"):
        run("empty.csv")


# ---------------------------------------------------------------- model validation


def test_presets_and_overrides():
    spec = ThermoelectricSource(id="t", preset=LARGE, resistance_ohm=2.4)
    assert spec.seebeck_v_k == MODULE_PRESETS[LARGE]["seebeck_v_k"]
    assert spec.resistance_ohm == 2.4
    assert spec.conditioning.preset == "thermal-low-voltage-boost"
    tuned = ThermoelectricSource(id="t", conditioning={"mppt_fraction": 0.8})
    assert tuned.conditioning.preset == "thermal-low-voltage-boost"
    assert tuned.conditioning.mppt_fraction == 0.8
    record = SOURCE_KINDS["thermoelectric"]
    assert [k.field for k in record.size_knobs] == ["modules", "heat_sink.area_cm2"]
    assert record.cautions == ("hot_surface", "work_at_height") and record.outage_stops
    assert record.file_fields == ("hot_side.file",)
    assert isinstance(ThermoelectricSource(id="t", hot_side=55).hot_side, ConstantHotSide)


@pytest.mark.parametrize(("field", "value"), [
    ("preset", "no-such-module"), ("modules", 0), ("wiring", "diagonal"), ("seebeck_v_k", -0.01),
    ("hot_contact_resistance_k_w", -1.0), ("heat_sink", {"emissivity": 1.5}), ("heat_sink", {"fins": 3}),
    ("hot_side", {"mode": "steam"}), ("hot_side", {"surface_c": 900.0}), ("cold_side_offset_c", 200.0),
])
def test_bad_fields_name_the_field(field, value):
    with pytest.raises(ValidationError) as info:
        ThermoelectricSource(id="t", **{field: value})
    assert field in str(info.value)


def test_fin_efficiency_of_a_straight_fin():
    """Adiabatic-tip straight fin: eta = tanh(mL)/(mL) (Incropera & DeWitt eq. 3.89): 0.762 at mL = 1."""
    # m = sqrt(2 h / (k t)) = 1 / L for h = 10, k = 200, t = 1 mm, L = 0.1 m
    assert float(fin_efficiency(10.0, 0.1, 0.001, 200.0)) == pytest.approx(math.tanh(1.0), rel=1e-12)
    assert math.tanh(1.0) == pytest.approx(0.7616, abs=1e-4)
    assert float(fin_efficiency(10.0, 0.0, 0.001, 200.0)) == 1.0


def test_forced_convection_of_a_plate_in_wind():
    """Laminar flat plate, Nu = 0.664 Re^0.5 Pr^(1/3) (Incropera & DeWitt eq. 7.30), with air at 300 K from
    Incropera & DeWitt Table A.4 (nu = 15.89e-6 m2/s, k = 0.0263 W/mK, Pr = 0.707): 5 m/s over 50 mm."""
    re = 5.0 * 0.05 / 15.89e-6
    expected = 0.664 * re**0.5 * 0.707 ** (1 / 3) * 0.0263 / 0.05
    assert float(forced_plate_convection_w_m2k(5.0, 0.05, 26.85)) == pytest.approx(expected, rel=0.03)


def test_wind_lowers_the_sink_resistance_outdoors_and_the_envelope_limits_radiation():
    sink = HeatSink()
    assert sink.envelope_area_cm2 < sink.area_cm2  # fins facing each other do not radiate out
    still, _ = solve_thermal_network(np.array([30.0]), np.array([10.0]), 2.0, sink)
    breeze, _ = solve_thermal_network(np.array([30.0]), np.array([10.0]), 2.0, sink, wind_m_s=np.array([3.0]))
    gale, _ = solve_thermal_network(np.array([30.0]), np.array([10.0]), 2.0, sink, wind_m_s=np.array([15.0]))
    assert gale[0] < breeze[0] < still[0]

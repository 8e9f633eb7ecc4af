"""Electromagnetic harvesters with coil resistance: the load receives only part of the electrical power.

The coil EMF B l v drives the coil and the load in series, so the electrical damping is
(B l)^2 / (R_coil + R_L) and the load gets R_L / (R_coil + R_L) of its power. The best load is
R_L = R_coil + (B l)^2 / c_m (Stephen 2006, J. Sound Vib. 293, 409-425): checked against a numerical
search of the model's own load power. Property: the load power always stays below the electrical
damping power.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import minimize_scalar

from siteharvest.sources.vibration import VibrationSource, harvester_of, running_point
from siteharvest.sources.vibration import excitation_of as _excitation_of

FN = 50.0


def em(**kw) -> VibrationSource:
    base = {"id": "em", "kind": "vibration", "transducer": "electromagnetic", "proof_mass_g": 10.0,
            "resonant_frequency_hz": FN, "travel_limit_mm": 50.0, "transduction_v_s_per_m": 5.0,
            "coil_resistance_ohm": 100.0, "peak": [{"frequency_hz": FN, "accel": 0.5, "accel_unit": "m/s2",
                                                    "measure": "rms"}]}
    return VibrationSource.model_validate({**base, **kw})


def point(spec: VibrationSource):
    return running_point(_excitation_of(spec, None), harvester_of(spec, FN))  # type: ignore[arg-type]


@settings(max_examples=40, deadline=None)
@given(r_coil=st.floats(1.0, 5000.0), r_load=st.floats(1.0, 50_000.0), bl=st.floats(0.5, 50.0),
       zeta_m=st.floats(0.002, 0.05))
def test_load_power_stays_below_the_electrical_damping_power(r_coil, r_load, bl, zeta_m):
    p = point(em(coil_resistance_ohm=r_coil, load_resistance_ohm=r_load, transduction_v_s_per_m=bl,
                 mechanical_damping_ratio=zeta_m))
    assert 0 < p.linear_power_w < p.damping_power_w
    assert p.linear_power_w == pytest.approx(p.damping_power_w * r_load / (r_coil + r_load), rel=1e-9)


def test_the_default_load_is_the_best_one():
    """Default R_L = R_coil + (B l)^2 / c_m (Stephen 2006) against a numerical search over R_L."""
    spec = em()
    best = minimize_scalar(lambda r: -point(em(load_resistance_ohm=float(r))).linear_power_w,
                           bounds=(1.0, 1e5), method="bounded", options={"xatol": 1e-3})
    m_kg, wn = 0.010, 2 * np.pi * FN
    expected = 100.0 + 5.0**2 / (2 * m_kg * wn * spec.mechanical_damping_ratio)
    assert best.x == pytest.approx(expected, rel=1e-3)
    assert point(spec).linear_power_w == pytest.approx(-best.fun, rel=1e-6)


def test_a_coil_costs_power_against_the_ideal_transducer():
    """Without coil resistance half the input goes to the load at zeta_e = zeta_m (Williams & Yates 1996);
    with it, less: the coil keeps its share."""
    ideal = running_point(_excitation_of(em(coil_resistance_ohm=None), None),  # type: ignore[arg-type]
                          harvester_of(em(coil_resistance_ohm=None), FN))
    coil = point(em())
    assert ideal.linear_power_w == pytest.approx(ideal.damping_power_w)
    assert coil.linear_power_w < ideal.linear_power_w


def test_coil_fields_need_an_electromagnetic_transducer():
    with pytest.raises(ValueError, match="electromagnetic"):
        em(transducer="piezo", transduction_v_s_per_m=None)
    with pytest.raises(ValueError, match="not both"):
        em(electrical_damping_ratio=0.01)

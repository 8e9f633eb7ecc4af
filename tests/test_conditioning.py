"""The conditioning stage: tracking, efficiency curve, thresholds, clamp, cold start, rectifier."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from pydantic import ValidationError

from siteharvest.conditioning import (
    CONDITIONING_PRESETS,
    ConditioningSpec,
    bridge_rectifier,
    condition,
    converter_efficiency,
)


def test_preset_and_override():
    spec = ConditioningSpec(preset="thermal-low-voltage-boost", quiescent_ua=0.2)
    assert spec.mppt_fraction == CONDITIONING_PRESETS["thermal-low-voltage-boost"]["mppt_fraction"]
    assert spec.quiescent_ua == 0.2
    assert ConditioningSpec.model_validate("ideal").mppt_fraction == 1.0
    with pytest.raises(ValidationError, match="preset must be one of"):
        ConditioningSpec(preset="magic")
    with pytest.raises(ValidationError, match="increase"):
        ConditioningSpec(efficiency_curve=[(10, 0.5), (1, 0.6)])


def test_efficiency_interpolates_in_log_power():
    spec = ConditioningSpec(efficiency_curve=[(1.0, 0.2), (100.0, 0.8)])
    eff = converter_efficiency(spec, np.array([1e-6, 10e-6, 100e-6, 1.0]))
    np.testing.assert_allclose(eff, [0.2, 0.5, 0.8, 0.8])


def test_thresholds_clamp_and_cold_start():
    spec = ConditioningSpec(preset="ideal", min_input_uw=5, cold_start_min_input_uw=50, cold_start_efficiency=0.1,
                            input_clamp_mw=1.0, min_input_v=0.5, cold_start_min_input_v=1.0)
    p = np.array([1e-6, 10e-6, 100e-6, 10e-3, 100e-6])
    v = np.array([2.0, 2.0, 2.0, 2.0, 0.7])
    out = condition(spec, p, v, store_v=3.0)
    np.testing.assert_allclose(out.running_w, [0, 10e-6, 100e-6, 1e-3, 100e-6])
    np.testing.assert_allclose(out.cold_w, [0, 0, 10e-6, 1e-4, 0])


def test_quiescent_power():
    spec = ConditioningSpec(quiescent_ua=2.0)
    assert condition(spec, np.zeros(3), None, 3.0).quiescent_w == pytest.approx(6e-6)


@given(st.floats(0, 1.0), st.floats(0, 1.0))
def test_output_never_exceeds_input_and_is_monotonic(p1, p2):
    spec = ConditioningSpec()
    lo, hi = sorted((p1, p2))
    out = condition(spec, np.array([lo, hi]), None, 3.0)
    assert np.all(out.running_w <= np.array([lo, hi]) + 1e-15)
    assert np.all(out.running_w >= 0) and np.all(out.cold_w >= 0)


def test_bridge_rectifier():
    """Full bridge: two diode drops in the path; no output below 2 drops (common practice)."""
    dc_v, dc_p = bridge_rectifier(np.array([0.5, 1.0, 3.0]), np.array([1.0, 1.0, 1.0]), diode_drop_v=0.3)
    np.testing.assert_allclose(dc_v, [0.0, 0.4, 2.4])
    np.testing.assert_allclose(dc_p, [0.0, 0.4, 0.8])


def test_each_kind_starts_from_its_own_preset():
    """A partial conditioning table fills the rest from the kind's default preset, not another kind's."""
    from siteharvest.sources import SOURCE_KINDS

    for kind, record in SOURCE_KINDS.items():
        model = record.model
        extra = {"preset": "healthy-pump-50hz"} if kind == "vibration" else {}
        own = model(id="x", **extra).conditioning.preset
        partial = model(id="x", conditioning={"quiescent_ua": 0.1}, **extra).conditioning
        assert partial.preset == own and partial.quiescent_ua == 0.1
        assert partial.mppt_fraction == CONDITIONING_PRESETS[own]["mppt_fraction"]

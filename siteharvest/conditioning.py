"""Power conditioning between a transducer and the energy store.

Method: the transducer's available power (at its maximum power point) is multiplied by the
tracking fraction (how close the input stage holds the transducer to that point), clipped by the
input clamp, and multiplied by the converter efficiency, interpolated in log10 of input power (or
linearly in input voltage when a voltage curve is given). The converter runs while its input
reaches ``min_input_uw`` and ``min_input_v``. While the store is below ``cold_start_until_v`` the
cold-start circuit works instead: it needs ``cold_start_min_input_uw`` and
``cold_start_min_input_v`` and converts at ``cold_start_efficiency``. The quiescent draw is
charged to the store continuously.

Presets carry typical figures of integrated harvesting power-management chips (common practice:
cold start 300-600 mV; 50-80 % at ~10 uW, 75-90 % at >= 100 uW; 0.3-1 uA quiescent); every
value can be overridden in the site file.

References
----------
Esram, T. and Chapman, P.L. (2007). Comparison of photovoltaic array maximum power point tracking
techniques. IEEE Trans. Energy Conversion 22(2), 439-449.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import Any

import numpy as np
from pydantic import Field, field_serializer, field_validator, model_validator

from .errors import choose
from .fields import Section, quantity

# Plain names of our own. Efficiency points are (input power [uW], efficiency [-]).
CONDITIONING_PRESETS: dict[str, dict[str, Any]] = {
    "solar-cell-boost": {
        "mppt_fraction": 0.93,
        "efficiency_curve": [(1.0, 0.35), (10.0, 0.6), (100.0, 0.78), (1000.0, 0.86), (100000.0, 0.88)],
        "min_input_uw": 1.0, "min_input_v": 0.1,
        "cold_start_min_input_uw": 15.0, "cold_start_min_input_v": 0.33,
        "cold_start_efficiency": 0.05, "cold_start_until_v": 1.8,
        "quiescent_ua": 0.5, "input_clamp_mw": 200.0,
    },
    "thermal-low-voltage-boost": {
        "mppt_fraction": 0.9,
        "efficiency_curve": [(1.0, 0.2), (10.0, 0.35), (100.0, 0.55), (1000.0, 0.7), (100000.0, 0.75)],
        "efficiency_vs_input_v": [(0.02, 0.2), (0.05, 0.4), (0.1, 0.55), (0.3, 0.75), (1.0, 0.8)],
        "min_input_uw": 5.0, "min_input_v": 0.02,
        "cold_start_min_input_uw": 20.0, "cold_start_min_input_v": 0.02,
        "cold_start_efficiency": 0.05, "cold_start_until_v": 1.8,
        "quiescent_ua": 1.0, "input_clamp_mw": 500.0,
    },
    "ac-rectifier-buck": {
        "mppt_fraction": 0.85,
        "efficiency_curve": [(1.0, 0.3), (10.0, 0.55), (100.0, 0.75), (1000.0, 0.85), (100000.0, 0.88)],
        "min_input_uw": 2.0, "min_input_v": 1.0,
        "cold_start_min_input_uw": 10.0, "cold_start_min_input_v": 1.0,
        "cold_start_efficiency": 0.3, "cold_start_until_v": 1.8,
        "quiescent_ua": 0.8, "input_clamp_mw": 100.0,
    },
    "rf-dc-boost": {
        "mppt_fraction": 0.9,
        "efficiency_curve": [(1.0, 0.3), (10.0, 0.55), (100.0, 0.75), (1000.0, 0.85), (100000.0, 0.88)],
        "min_input_uw": 1.0, "min_input_v": 0.1,
        "cold_start_min_input_uw": 10.0, "cold_start_min_input_v": 0.38,
        "cold_start_efficiency": 0.1, "cold_start_until_v": 1.8,
        "quiescent_ua": 0.5, "input_clamp_mw": 100.0,
    },
    "ideal": {
        "mppt_fraction": 1.0,
        "efficiency_curve": [(1e-3, 1.0), (1e6, 1.0)],
        "min_input_uw": 0.0, "min_input_v": 0.0,
        "cold_start_min_input_uw": 0.0, "cold_start_min_input_v": 0.0,
        "cold_start_efficiency": 1.0, "cold_start_until_v": 0.0,
        "quiescent_ua": 0.0, "input_clamp_mw": 1e6,
    },
}


class ConditioningSpec(Section):
    """The power-conditioning stage of one source. Starts from ``preset``; given fields override."""

    preset: str = Field("solar-cell-boost", description="starting values: one of "
                        + ", ".join(CONDITIONING_PRESETS))
    mppt_fraction: float = quantity(0.93, "-", "fraction of the transducer's maximum power the input "
                                    "stage extracts", gt=0, le=1, step=0.01)
    efficiency_curve: list[tuple[float, float]] = Field(
        default_factory=lambda: list(CONDITIONING_PRESETS["solar-cell-boost"]["efficiency_curve"]),
        description="converter efficiency against input power: pairs (input power [uW], efficiency [-])",
        min_length=1,
    )
    efficiency_vs_input_v: list[tuple[float, float]] | None = Field(
        None, description="optional converter efficiency against input voltage: pairs (input [V], "
        "efficiency [-]); when given it is used instead of the power curve; [] for none", min_length=1,
    )
    min_input_uw: float = quantity(1.0, "uW", "least input power the running converter accepts", ge=0, le=1e6)
    min_input_v: float = quantity(0.1, "V", "least input voltage the running converter accepts", ge=0, le=60)
    cold_start_min_input_uw: float = quantity(15.0, "uW", "least input power the cold-start circuit "
                                              "needs", ge=0, le=1e6)
    cold_start_min_input_v: float = quantity(0.33, "V", "least input voltage the cold-start circuit "
                                             "needs", ge=0, le=60)
    cold_start_efficiency: float = quantity(0.05, "-", "efficiency while cold-starting", gt=0, le=1)
    cold_start_until_v: float = quantity(1.8, "V", "store voltage below which the cold-start circuit "
                                         "runs", ge=0, le=60)
    quiescent_ua: float = quantity(0.5, "uA", "quiescent current drawn from the store", ge=0, le=1000)
    input_clamp_mw: float = quantity(200.0, "mW", "largest input power passed on (over-voltage clamp)",
                                     gt=0, le=1e6)

    @model_validator(mode="before")
    @classmethod
    def _start_from_preset(cls, data: Any) -> Any:
        if isinstance(data, str):
            data = {"preset": data}
        if not isinstance(data, dict):
            return data
        name = choose(data, "preset", CONDITIONING_PRESETS, "solar-cell-boost")
        merged = {"preset": name, "efficiency_vs_input_v": None, **CONDITIONING_PRESETS[name]}
        merged.update(data)
        if merged.get("efficiency_vs_input_v") == []:   # written as [] when cleared (TOML has no null)
            merged["efficiency_vs_input_v"] = None
        return merged

    @field_serializer("efficiency_vs_input_v")
    def _keep_cleared_curve(self, curve: list[tuple[float, float]] | None) -> list[tuple[float, float]]:
        """None is written as [] so that a site file keeps a cleared curve the preset would supply."""
        return [] if curve is None else curve

    @field_validator("efficiency_curve", "efficiency_vs_input_v")
    @classmethod
    def _curve_ok(cls, curve: list[tuple[float, float]] | None) -> list[tuple[float, float]] | None:
        if curve is None:
            return None
        xs = [x for x, _ in curve]
        if any(x <= 0 for x in xs):
            raise ValueError("curve inputs must be > 0")
        if any(b <= a for a, b in itertools.pairwise(xs)):
            raise ValueError("curve inputs must increase")
        if any(not 0 <= e <= 1 for _, e in curve):
            raise ValueError("efficiencies must lie in 0..1")
        return curve


@dataclass(frozen=True)
class ConditionedPower:
    """Hourly power delivered to the store terminals [W], for both states of the converter."""

    running_w: np.ndarray
    cold_w: np.ndarray
    quiescent_w: float


def converter_efficiency(spec: ConditioningSpec, input_w: np.ndarray,
                         input_v: np.ndarray | None = None) -> np.ndarray:
    """Converter efficiency [-] at ``input_w`` [W] (log-power interpolation), or at ``input_v`` [V]
    when the spec has a voltage curve and a voltage is given. Flat beyond the curve's ends."""
    if spec.efficiency_vs_input_v is not None and input_v is not None:
        xs, ys = np.array(spec.efficiency_vs_input_v).T
        return np.interp(input_v, xs, ys)
    xs, ys = np.array(spec.efficiency_curve).T
    p_uw = np.maximum(np.asarray(input_w, dtype=float) * 1e6, 1e-12)
    return np.interp(np.log10(p_uw), np.log10(xs), ys)


def condition(spec: ConditioningSpec, available_w: np.ndarray, voltage_v: np.ndarray | None,
              store_v: float) -> ConditionedPower:
    """Power into the store from a transducer's available power.

    Parameters
    ----------
    spec : ConditioningSpec
    available_w : array [W]
        Power the transducer offers at its maximum power point, per hour.
    voltage_v : array [V] or None
        Voltage the transducer presents at its operating point; ``None`` skips voltage thresholds.
    store_v : float [V]
        Representative store voltage, to turn the quiescent current into power.

    Returns
    -------
    ConditionedPower
        ``running_w`` and ``cold_w`` [W] per hour, and ``quiescent_w`` [W].
    """
    p_in = np.minimum(np.asarray(available_w, dtype=float) * spec.mppt_fraction, spec.input_clamp_mw * 1e-3)
    p_in = np.maximum(p_in, 0.0)
    v_ok = np.ones_like(p_in, dtype=bool) if voltage_v is None else voltage_v >= spec.min_input_v
    v_cold = np.ones_like(p_in, dtype=bool) if voltage_v is None else voltage_v >= spec.cold_start_min_input_v
    eff = converter_efficiency(spec, p_in, voltage_v)
    running = np.where((p_in >= spec.min_input_uw * 1e-6) & v_ok & (p_in > 0), p_in * eff, 0.0)
    cold = np.where((p_in >= spec.cold_start_min_input_uw * 1e-6) & v_cold & (p_in > 0),
                    p_in * spec.cold_start_efficiency, 0.0)
    return ConditionedPower(running, cold, spec.quiescent_ua * 1e-6 * store_v)


def condition_levels(spec: ConditioningSpec, levels: list[Any], store_v: float) -> ConditionedPower:
    """Power into the store from a transducer that spends each hour in one or more states.

    Method: each state's power (while in it, not averaged over the hour) goes through
    :func:`condition` (tracking, clamp, converter curve, running and cold-start thresholds); the
    results are weighted by the share of the hour spent in that state and added. A source on a
    share ``f`` of the hour thus gives exactly ``f`` times what it gives when on all hour. The store
    is assumed to carry the node through the minutes the source is off within an hour (see
    :func:`siteharvest.assess.within_hour_notes` for when it cannot).

    Parameters
    ----------
    spec : ConditioningSpec
    levels : list of siteharvest.sources.base.PowerLevel
        Each with ``power_w`` [W] while in the state (shape (8760,) or (sizes, 8760)), ``voltage_v`` [V]
        or None, and ``share`` [-] of each hour (shape (8760,), or broadcastable to the power).
    store_v : float [V]
        Representative store voltage, to turn the quiescent current into power.

    Returns
    -------
    ConditionedPower
        Hourly means ``running_w`` and ``cold_w`` [W], and ``quiescent_w`` [W].
    """
    running: Any = 0.0
    cold: Any = 0.0
    quiescent_w = spec.quiescent_ua * 1e-6 * store_v
    for level in levels:
        share = np.clip(np.asarray(level.share, dtype=float), 0.0, 1.0)
        one = condition(spec, level.power_w, level.voltage_v, store_v)
        running = running + share * one.running_w
        cold = cold + share * one.cold_w
    return ConditionedPower(np.asarray(running, dtype=float), np.asarray(cold, dtype=float), quiescent_w)


def bridge_rectifier(peak_v: np.ndarray, power_w: np.ndarray, diode_drop_v: float = 0.3,
                     diodes_in_path: int = 2) -> tuple[np.ndarray, np.ndarray]:
    """Full-wave bridge rectifier on a sinusoidal source: DC voltage and power after the diodes.

    Method: the DC side sees the peak voltage less ``diodes_in_path`` diode drops; power is reduced
    in the ratio of the diode drops to the peak voltage (conduction loss), and is zero when the peak
    does not exceed the drops.

    Parameters
    ----------
    peak_v : array [V]   peak open-circuit (or loaded) AC voltage.
    power_w : array [W]  AC power offered.
    diode_drop_v : float [V]  forward drop of one diode (Schottky 0.2-0.4 V, silicon 0.6-0.7 V;
        common practice).
    diodes_in_path : int  diodes conducting at once (2 for a full bridge).

    Returns
    -------
    (dc_v, dc_power_w) : arrays [V], [W]
    """
    peak_v = np.asarray(peak_v, dtype=float)
    drops = diode_drop_v * diodes_in_path
    dc_v = np.maximum(peak_v - drops, 0.0)
    ratio = np.divide(dc_v, peak_v, out=np.zeros_like(dc_v), where=peak_v > 0)
    return dc_v, np.asarray(power_w, dtype=float) * ratio

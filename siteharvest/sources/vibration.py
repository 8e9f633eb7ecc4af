"""Vibration source: a resonant inertial harvester (piezo or electromagnetic) on a vibrating machine.

Method
------
The spot's vibration is a set of sinusoidal components (frequency [Hz], RMS base acceleration
[m/s2]): the ``peak`` tables of the site file, a vibration-source preset, or a survey spectrum read
from CSV (:mod:`siteharvest.vibration_spectrum`). The harvester is a linear mass-spring-damper with
the damping split into a mechanical (parasitic) part zeta_m and an electrical (harvested) part
zeta_e (Williams & Yates 1996; Roundy, Wright & Rabaey 2003). For a linear system the mean powers
of components at different frequencies add, so each component contributes its own power at its own
frequency ratio. Then:

1. Frequency drift: each component's frequency spreads uniformly over +/- its drift (machine speed
   variation); a spectrum line of a CSV survey also spreads uniformly over its bin width. Power is
   averaged over the spread (the drift is slow against the harvester's response, so every quantity
   is computed at each drift position and then averaged).
2. Travel limit: the proof mass's peak travel is estimated by :func:`peak_travel_m`, the smaller of
   the sum of the components' amplitudes (the peak of tones whose frequencies are not in simple
   ratios) and three times the RMS (a near-Gaussian broadband motion). Where it would exceed the
   travel limit at any drift position, the electrical damping is raised until it does not
   (Mitcheson et al. 2004). For one tone at resonance this gives
   P = m zeta_e omega^3 Z_l^2, which tends to 1/2 m Y0 Z_l omega^3 as zeta_m -> 0.
3. Rectifier: the transducer's peak open-circuit voltage V_oc is proportional to the proof-mass
   displacement (piezo) or velocity (electromagnetic coil EMF), scaled from the stated open-circuit
   volts per m/s2 at resonance. A full-wave bridge feeding a DC reservoir at V_dc draws
   P = P_e * 4 x (1 - x), x = (V_dc + 2 V_D) / V_oc (the standard interface of Ottman et al. 2002 and
   Guyomar et al. 2005, normalised to the Williams & Yates power at x = 1/2), less the diode
   conduction loss (``conditioning.bridge_rectifier``). Nothing is harvested unless V_oc exceeds the
   diode drops plus the converter's least input voltage (``conditioning.min_input_v``). "tracked"
   places V_dc at its optimum, (V_oc - 2 V_D) / 2, but not below the converter's least input.
4. Hourly: the running power times the machine schedule times the running fraction.

The conditioning stage (converter efficiency, cold start, quiescent draw) is applied after this
model by the pipeline.

Validity: linear harvester (no stiffening, no impacts: the travel limit is enforced by damping),
steady sinusoidal or stationary excitation, lightly damped (zeta_T < ~0.2), the electrical
damping realisable by the load (weakly coupled piezo harvesters may not reach zeta_e = zeta_m).

References
----------
Williams, C.B. and Yates, R.B. (1996). Analysis of a micro-electric generator for microsystems.
Sensors and Actuators A 52, 8-11.
Roundy, S., Wright, P.K. and Rabaey, J. (2003). A study of low level vibrations as a power source for
wireless sensor nodes. Computer Communications 26, 1131-1144.
Mitcheson, P.D., Green, T.C., Yeatman, E.M. and Holmes, A.S. (2004). Architectures for
vibration-driven micropower generators. J. Microelectromechanical Systems 13(3), 429-440.
Ottman, G.K., Hofmann, H.F., Bhatt, A.C. and Lesieutre, G.A. (2002). Adaptive piezoelectric energy
harvesting circuit for wireless remote power supply. IEEE Trans. Power Electronics 17(5), 669-676.
Guyomar, D., Badel, A., Lefeuvre, E. and Richard, C. (2005). Toward energy harvesting using active
materials and conversion improvement by nonlinear processing. IEEE Trans. UFFC 52(4), 584-595.
ISO 10816-3:2009 (now ISO 20816-3): mechanical vibration, evaluation of machine vibration by
measurements on non-rotating parts, industrial machines above 15 kW.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any, Literal

import numpy as np
from pydantic import Field, ValidationInfo, field_validator, model_validator

from ..conditioning import ConditioningSpec, bridge_rectifier
from ..context import SpotContext
from ..errors import choose
from ..fields import Section, quantity
from ..schedule import WeeklySchedule
from ..vibration_spectrum import (
    accel_to_rms_m_s2,
    bin_widths_hz,
    read_spectrum_csv,
    spectral_peaks,
    unit_factor,
)
from .base import PowerLevel, PresetField, SizeKnob, SourceBase, SourceKind, SourceOutput

TWO_PI = 2.0 * math.pi
SQRT2 = math.sqrt(2.0)
PEAK_FACTOR = 3.0  # peak over RMS of near-Gaussian random vibration (common practice: 3 sigma)


def _iso_velocity_to_accel_rms(velocity_mm_s: float, freq_hz: float) -> float:
    """RMS acceleration [m/s2] of a sinusoid of RMS velocity ``velocity_mm_s`` at ``freq_hz``."""
    return TWO_PI * freq_hz * velocity_mm_s * 1e-3


def _tone(freq_hz: float, accel: float, measure: str) -> dict[str, Any]:
    return {"frequency_hz": freq_hz, "accel": accel, "accel_unit": "m/s2", "measure": measure}


# Sources of vibration, plain names of our own. Each sets the ``peak`` tables (and may set other fields);
# every value stays editable. Provenance of each in VIBRATION_PRESET_SOURCES.
VIBRATION_PRESETS: dict[str, dict[str, Any]] = {
    # Roundy, Wright & Rabaey (2003), Computer Communications 26, Table 2: acceleration amplitude and
    # frequency of the dominant peak. FROM MEMORY: not re-verified against the paper.
    # The ~121 Hz entries are twice the 60 Hz mains; expect ~100 Hz where mains is 50 Hz.
    "car-engine-compartment": {"peak": [_tone(200.0, 12.0, "peak")]},
    "machine-tool-base": {"peak": [_tone(70.0, 10.0, "peak")]},
    "blender-casing": {"peak": [_tone(121.0, 6.4, "peak")]},
    "clothes-dryer": {"peak": [_tone(121.0, 3.5, "peak")]},
    "heel-tapping": {"peak": [_tone(1.0, 3.0, "peak")]},
    "car-instrument-panel": {"peak": [_tone(13.0, 3.0, "peak")]},
    "door-frame-after-closing": {"peak": [_tone(125.0, 3.0, "peak")]},
    "small-microwave-oven": {"peak": [_tone(121.0, 2.5, "peak")]},
    "office-hvac-vent": {"peak": [_tone(60.0, 0.2, "peak")]},          # low end of 0.2-1.5 m/s2
    "office-hvac-vent-strong": {"peak": [_tone(60.0, 1.5, "peak")]},   # high end of 0.2-1.5 m/s2
    "window-by-busy-road": {"peak": [_tone(100.0, 0.7, "peak")]},
    "notebook-disc-drive": {"peak": [_tone(75.0, 0.6, "peak")]},
    "busy-office-upper-floor": {"peak": [_tone(100.0, 0.2, "peak")]},
    # ISO 10816-3 zone boundaries for medium machines on rigid foundations (1.4 / 2.8 / 4.5 mm/s RMS,
    # A/B, B/C, C/D; FROM MEMORY, not re-verified) taken as all of the vibration sitting at a
    # 50 Hz running speed (the optimistic case), a_rms = 2 pi f v_rms (2.8 mm/s -> 0.88 m/s2 RMS [C]).
    "smooth-machine-50hz": {"peak": [_tone(50.0, _iso_velocity_to_accel_rms(1.4, 50.0), "rms")]},
    "healthy-pump-50hz": {"peak": [_tone(50.0, _iso_velocity_to_accel_rms(2.8, 50.0), "rms")]},
    "rough-machine-50hz": {"peak": [_tone(50.0, _iso_velocity_to_accel_rms(4.5, 50.0), "rms")]},
}

_ROUNDY = ("Roundy, Wright & Rabaey 2003, Computer Communications 26:1131-1144, Table 2 "
           "(values from memory, unverified)")
_ISO = ("ISO 10816-3 zone boundary {v} mm/s RMS at 50 Hz, converted a = 2 pi f v "
        "(boundary values from memory, unverified)")
VIBRATION_PRESET_SOURCES: dict[str, str] = {
    **{name: _ROUNDY for name in VIBRATION_PRESETS if not name.endswith("-50hz")},
    "office-hvac-vent": _ROUNDY + "; low end of the 0.2-1.5 m/s2 range",
    "office-hvac-vent-strong": _ROUNDY + "; high end of the 0.2-1.5 m/s2 range",
    "smooth-machine-50hz": _ISO.format(v=1.4) + ", zone A/B",
    "healthy-pump-50hz": _ISO.format(v=2.8) + ", zone B/C",
    "rough-machine-50hz": _ISO.format(v=4.5) + ", zone C/D",
}


# ------------------------------------------------------------------------------------------------ physics


def _out(x: np.ndarray) -> float | np.ndarray:
    return float(x) if np.ndim(x) == 0 else x


def resonant_power_w(mass_kg: float | np.ndarray, accel_m_s2: float | np.ndarray,
                     freq_hz: float | np.ndarray, resonant_hz: float | np.ndarray,
                     zeta_m: float | np.ndarray, zeta_e: float | np.ndarray) -> float | np.ndarray:
    """Mean electrical power of a resonant inertial generator driven by a sinusoidal base acceleration.

    Method: base-excited mass-spring-damper, relative displacement z, damping split into a mechanical
    part zeta_m and an electrical part zeta_e; the power into the electrical damper is

        P = m zeta_e Y0^2 r^3 omega^3 / [(1 - r^2)^2 + (2 zeta_T r)^2]
          = m zeta_e A^2 r^2 / (omega_n [(1 - r^2)^2 + (2 zeta_T r)^2]),

    with r = f / f_n, zeta_T = zeta_m + zeta_e and A = omega^2 Y0. At resonance
    P = m zeta_e A^2 / (4 omega_n zeta_T^2). Broadcasts over numpy arrays.

    Parameters
    ----------
    mass_kg : [kg]   proof mass, > 0.
    accel_m_s2 : [m/s2]   base acceleration AMPLITUDE (zero-to-peak; sqrt(2) x RMS).
    freq_hz : [Hz]   excitation frequency, > 0.
    resonant_hz : [Hz]   undamped natural frequency f_n of the harvester, > 0.
    zeta_m : [-]   mechanical (parasitic) damping ratio, > 0.
    zeta_e : [-]   electrical (harvested) damping ratio, >= 0.

    Returns
    -------
    float or array [W]

    Validity: linear, lightly damped (zeta_T < ~0.2), proof-mass travel unconstrained.

    References
    ----------
    Williams & Yates (1996), Sensors and Actuators A 52, 8-11; split damping as in Roundy, Wright &
    Rabaey (2003), Computer Communications 26, 1131-1144.
    """
    m, a, f, fn = (np.asarray(v, dtype=float) for v in (mass_kg, accel_m_s2, freq_hz, resonant_hz))
    zm, ze = np.asarray(zeta_m, dtype=float), np.asarray(zeta_e, dtype=float)
    r = f / fn
    zt = zm + ze
    den = (1.0 - r * r) ** 2 + (2.0 * zt * r) ** 2
    return _out(m * ze * a * a * r * r / (TWO_PI * fn * den))


def optimum_power_w(mass_kg: float | np.ndarray, accel_m_s2: float | np.ndarray,
                    resonant_hz: float | np.ndarray, zeta_m: float | np.ndarray) -> float | np.ndarray:
    """Largest power of a resonant generator driven at resonance: P = m A^2 / (16 omega_n zeta_m).

    Method: :func:`resonant_power_w` at r = 1 maximised over zeta_e, which happens at zeta_e = zeta_m.

    Parameters
    ----------
    mass_kg : [kg]   proof mass.
    accel_m_s2 : [m/s2]   base acceleration amplitude (zero-to-peak).
    resonant_hz : [Hz]   natural frequency = excitation frequency.
    zeta_m : [-]   mechanical damping ratio, > 0.

    Returns
    -------
    float or array [W]

    References
    ----------
    Roundy, Wright & Rabaey (2003), Computer Communications 26, 1131-1144.
    """
    m, a, fn, zm = (np.asarray(v, dtype=float) for v in (mass_kg, accel_m_s2, resonant_hz, zeta_m))
    return _out(m * a * a / (16.0 * TWO_PI * fn * zm))


def displacement_m(accel_m_s2: float | np.ndarray, freq_hz: float | np.ndarray,
                   resonant_hz: float | np.ndarray, zeta_total: float | np.ndarray) -> float | np.ndarray:
    """Amplitude of the proof mass's displacement relative to its frame.

    Method: |z| = Y0 r^2 / sqrt((1 - r^2)^2 + (2 zeta_T r)^2) = A / (omega_n^2 sqrt(...)); at resonance
    |z| = Y0 / (2 zeta_T).

    Parameters
    ----------
    accel_m_s2 : [m/s2]   base acceleration amplitude (zero-to-peak).
    freq_hz : [Hz]   excitation frequency.
    resonant_hz : [Hz]   natural frequency.
    zeta_total : [-]   total damping ratio zeta_m + zeta_e.

    Returns
    -------
    float or array [m]   zero-to-peak relative displacement.

    References
    ----------
    Williams & Yates (1996), Sensors and Actuators A 52, 8-11.
    """
    a, f, fn, zt = (np.asarray(v, dtype=float) for v in (accel_m_s2, freq_hz, resonant_hz, zeta_total))
    r = f / fn
    wn = TWO_PI * fn
    return _out(a / (wn * wn * np.sqrt((1.0 - r * r) ** 2 + (2.0 * zt * r) ** 2)))


def quality_factor(zeta: float | np.ndarray) -> float | np.ndarray:
    """Quality factor Q = 1 / (2 zeta) of a lightly damped resonator [-] (Rao, Mechanical Vibrations)."""
    return _out(1.0 / (2.0 * np.asarray(zeta, dtype=float)))


def half_power_bandwidth_hz(resonant_hz: float | np.ndarray, q: float | np.ndarray) -> float | np.ndarray:
    """Half-power bandwidth f_n / Q [Hz].

    For the loaded harvester use Q_L = 1 / (2 (zeta_m + zeta_e)); at optimum loading Q_L = 1/(4 zeta_m).
    In the model of :func:`resonant_power_w` the half-power points lie at r = sqrt(1 + zeta_T^2) +/- zeta_T,
    so the bandwidth is exactly 2 zeta_T f_n.

    Parameters
    ----------
    resonant_hz : [Hz]   natural frequency.
    q : [-]   quality factor.

    References
    ----------
    Rao, S.S., Mechanical Vibrations (any edition), half-power points.
    """
    return _out(np.asarray(resonant_hz, dtype=float) / np.asarray(q, dtype=float))


def rectified_power_w(power_w: float | np.ndarray, open_circuit_v: float | np.ndarray,
                      reservoir_v: float | None = None, diode_drop_v: float = 0.3,
                      min_input_v: float = 0.0) -> tuple[np.ndarray, np.ndarray]:
    """DC voltage and power out of a full-wave bridge feeding a DC reservoir (standard interface).

    Method: the transducer sees the reservoir plus two diode drops, V_b = V_dc + 2 V_D. The power it
    gives up is P_in = P * 4 x (1 - x), x = V_b / V_oc: the shape V_b (V_oc - V_b) of Ottman et al.
    (2002) and Guyomar et al. (2005) normalised so that at x = 1/2 it equals ``power_w`` (the
    Williams & Yates power at the chosen electrical damping). The diodes then take their share
    (``conditioning.bridge_rectifier``), leaving P_in V_dc / V_b. With ideal diodes the DC power peaks
    at V_dc = V_oc / 2; with drops, at V_dc = (V_oc - 2 V_D) / 2, where it is P (1 - 2 V_D / V_oc)^2.
    Nothing is harvested unless V_oc > 2 V_D + ``min_input_v`` and V_b < V_oc.

    Parameters
    ----------
    power_w : [W]   power the transducer gives a matched load at the chosen damping.
    open_circuit_v : [V]   peak open-circuit voltage of the transducer.
    reservoir_v : [V] or None   DC reservoir voltage; None tracks the optimum (V_oc - 2 V_D) / 2,
        held at least at ``min_input_v``.
    diode_drop_v : [V]   forward drop of one diode (two conduct at a time).
    min_input_v : [V]   least input voltage the converter after the rectifier accepts.

    Returns
    -------
    (dc_v, dc_power_w) : arrays [V], [W]

    References
    ----------
    Ottman et al. (2002), IEEE Trans. Power Electronics 17(5), 669-676; Guyomar et al. (2005),
    IEEE Trans. UFFC 52(4), 584-595.
    """
    p = np.asarray(power_w, dtype=float)
    v_oc = np.asarray(open_circuit_v, dtype=float)
    drops = 2.0 * diode_drop_v
    if reservoir_v is None:
        v_dc = np.maximum(0.5 * (v_oc - drops), min_input_v)
    else:
        v_dc = np.full_like(v_oc, float(reservoir_v))
    v_b = v_dc + drops
    with np.errstate(over="ignore"):
        x = np.divide(v_b, v_oc, out=np.full_like(v_oc, np.inf), where=v_oc > 0)
    ok = (v_oc > drops + min_input_v) & (x < 1.0)
    xc = np.clip(x, 0.0, 1.0)
    shape = np.where(ok, 4.0 * xc * (1.0 - xc), 0.0)
    dc_v, dc_p = bridge_rectifier(v_b, p * shape, diode_drop_v=diode_drop_v, diodes_in_path=2)
    return np.where(ok, dc_v, 0.0), np.where(ok, dc_p, 0.0)


# ------------------------------------------------------------------------------------------- the model


class VibrationPeak(Section):
    """One line of the spot's vibration spectrum (one ``[[source.peak]]`` table)."""

    frequency_hz: float = quantity(..., "Hz", "frequency of the vibration peak", gt=0, le=20000, step=0.1)
    accel: float = quantity(..., "m/s2 or g", "acceleration of the peak, in accel_unit, as measure",
                            ge=0, le=10000)
    accel_unit: Literal["m/s2", "g"] = Field(..., description="unit of accel: 'm/s2' or 'g' (9.80665 m/s2)")
    measure: Literal["peak", "rms"] = Field(..., description="'peak' (zero-to-peak amplitude) or 'rms' "
                                            "(peak = 1.414 x RMS for a sinusoid)")
    drift_hz: float | None = quantity(None, "Hz", "this peak's frequency wanders uniformly by +/- this "
                                      "much (default: the source's frequency_drift_hz)", ge=0, le=1000)

    @property
    def accel_rms_m_s2(self) -> float:
        """RMS acceleration [m/s2]."""
        return float(accel_to_rms_m_s2(self.accel, self.accel_unit, self.measure))


class VibrationSource(SourceBase):
    """A resonant vibration harvester (piezo or electromagnetic) fixed to a vibrating machine.

    The spectrum comes from one of: a ``preset`` (a source of vibration), ``peak`` tables, or a
    ``spectrum_file`` survey. Damping is given as damping ratios (quality factor Q = 1 / (2 zeta)).
    """


    kind: Literal["vibration"] = "vibration"
    preset: str | None = Field(None, description="a source of vibration whose spectrum to start from: "
                               + ", ".join(VIBRATION_PRESETS))
    # -- the spot's vibration
    peak: list[VibrationPeak] = Field(default_factory=list, description="peaks of the vibration spectrum "
                                      "([[source.peak]] tables)")
    spectrum_file: str | None = Field(None, description="CSV survey spectrum, relative to the site file "
                                      "(columns frequency_hz and accel or psd)")
    spectrum_kind: Literal["amplitude", "psd"] = Field("amplitude", description="what spectrum_file holds: "
                                                       "'amplitude' (value per line) or 'psd' (density)")
    spectrum_unit: str | None = Field(None, description="unit of the spectrum values: 'm/s2', 'g', 'mm/s', "
                                      "'m/s' (amplitude) or 'g2/Hz', '(m/s2)2/Hz' (psd)")
    spectrum_measure: Literal["peak", "rms"] | None = Field(None, description="amplitude spectra: 'peak' "
                                                            "(zero-to-peak) or 'rms'; leave out for a PSD")
    frequency_column: str = Field("frequency_hz", min_length=1, description="name of the frequency column")
    value_column: str | None = Field(None, min_length=1, description="name of the value column (default "
                                     "'accel' for amplitude spectra, 'psd' for a PSD)")
    frequency_drift_hz: float = quantity(0.0, "Hz", "the machine's frequencies wander uniformly by +/- this "
                                         "much (speed variation)", ge=0, le=1000, step=0.1)
    machine_schedule: WeeklySchedule = Field(default_factory=WeeklySchedule,
                                             description="when the machine runs")
    running_fraction: float = quantity(1.0, "-", "fraction of its scheduled hours the machine actually runs",
                                       ge=0, le=1, step=0.05)
    # -- the harvester
    transducer: Literal["piezo", "electromagnetic"] = Field("piezo", description="'piezo' or "
                                                            "'electromagnetic' (magnet and coil)")
    proof_mass_g: float = quantity(5.0, "g", "moving (proof) mass of the harvester", gt=0, le=5000, step=0.5)
    resonant_frequency_hz: float | None = quantity(None, "Hz", "the harvester's resonant frequency "
                                                   "(default: tuned to the strongest peak)", gt=0, le=5000,
                                                   step=0.5)
    mechanical_damping_ratio: float = quantity(0.01, "-", "mechanical (parasitic) damping ratio zeta_m; "
                                               "Q_m = 1/(2 zeta_m); typical 0.002-0.05", gt=0, le=0.5,
                                               step=0.001)
    electrical_damping_ratio: float | None = quantity(None, "-", "electrical damping ratio zeta_e set by the "
                                                      "load (default: the optimum, equal to zeta_m)", gt=0,
                                                      le=1, step=0.001)
    travel_limit_mm: float = quantity(1.0, "mm", "largest displacement of the proof mass from rest",
                                      gt=0, le=100, step=0.1)
    open_circuit_v_per_m_s2: float = quantity(5.0, "V/(m/s2)", "peak open-circuit voltage per m/s2 of "
                                              "base acceleration amplitude at resonance, output left open",
                                              gt=0, le=1000, step=0.1)
    transduction_v_s_per_m: float | None = quantity(None, "V s/m", "electromagnetic only: coil EMF per m/s "
                                                    "of relative velocity (B l); overrides "
                                                    "open_circuit_v_per_m_s2", gt=0, le=10000)
    coil_resistance_ohm: float | None = quantity(None, "ohm", "electromagnetic only: resistance of the coil; "
                                                 "with transduction_v_s_per_m it sets the electrical damping "
                                                 "and the share of its power lost in the coil", gt=0, le=1e6)
    load_resistance_ohm: float | None = quantity(None, "ohm", "electromagnetic only: the load the coil works "
                                                 "into (default: the best one, R_coil + (B l)^2 / c_m)", gt=0,
                                                 le=1e7)
    diode_drop_v: float = quantity(0.3, "V", "forward drop of one rectifier diode (Schottky 0.2-0.4, "
                                   "silicon 0.6-0.7)", ge=0, le=2, step=0.05)
    reservoir_v: float | Literal["tracked"] = Field("tracked", description="DC reservoir voltage after the "
                                                    "rectifier [V], or 'tracked' (held at its optimum, "
                                                    "half the open-circuit voltage less the diode drops)")
    conditioning: ConditioningSpec = Field(
        default_factory=lambda: ConditioningSpec(preset="ac-rectifier-buck"),
        description="the power-conditioning stage after the rectifier (a preset name or a table)",
    )

    @model_validator(mode="before")
    @classmethod
    def _start_from_preset(cls, data: Any) -> Any:
        if not isinstance(data, dict) or data.get("preset") is None:
            return data
        name = choose(data, "preset", VIBRATION_PRESETS, "")
        if data.get("spectrum_file") is not None:
            raise ValueError("give the spectrum one way: a preset (or peak tables) or spectrum_file, "
                             "not both")
        return {**VIBRATION_PRESETS[name], **data}

    @field_validator("reservoir_v", mode="before")
    @classmethod
    def _reservoir(cls, v: Any) -> Any:
        if v == "tracked":
            return v
        if isinstance(v, bool) or not isinstance(v, int | float) or not 0 < v <= 60:
            raise ValueError(f"reservoir_v must be 'tracked' or a voltage in (0, 60] V, not {v!r}")
        return float(v)

    @field_validator("spectrum_unit")
    @classmethod
    def _unit(cls, v: str | None, info: ValidationInfo) -> str | None:
        if v is None:
            return v
        kind = info.data.get("spectrum_kind", "amplitude")
        try:
            unit_factor(kind, v)
        except ValueError as exc:
            raise ValueError(f"spectrum_unit must be {exc}, not {v!r}") from None
        return v

    @model_validator(mode="after")
    def _spectrum_given_once(self) -> VibrationSource:
        if self.peak and self.spectrum_file is not None:
            raise ValueError("give the spectrum one way: peak tables (or a preset) or spectrum_file, "
                             "not both")
        if not self.peak and self.spectrum_file is None:
            raise ValueError("a vibration spectrum: a preset, [[source.peak]] tables or spectrum_file")
        if self.spectrum_file is not None:
            if self.spectrum_unit is None:
                raise ValueError("spectrum_unit is needed with spectrum_file")
            if self.spectrum_kind == "amplitude" and self.spectrum_measure is None:
                raise ValueError("spectrum_measure ('peak' or 'rms') is needed for an amplitude spectrum")
            if self.spectrum_kind == "psd" and self.spectrum_measure == "peak":
                raise ValueError("spectrum_measure: a PSD is a mean-square density; leave it out")
        if self.transduction_v_s_per_m is not None and self.transducer != "electromagnetic":
            raise ValueError("transduction_v_s_per_m applies to transducer = 'electromagnetic' only")
        if self.coil_resistance_ohm is not None or self.load_resistance_ohm is not None:
            if self.transducer != "electromagnetic" or self.transduction_v_s_per_m is None:
                raise ValueError("coil_resistance_ohm and load_resistance_ohm need transducer = "
                                 "'electromagnetic' and its transduction_v_s_per_m")
            if self.coil_resistance_ohm is None:
                raise ValueError("load_resistance_ohm needs coil_resistance_ohm")
            if self.electrical_damping_ratio is not None:
                raise ValueError("give electrical_damping_ratio or the coil and load resistances, not both")
        return self


# ------------------------------------------------------------------------------------ the running point


@dataclass(frozen=True)
class Excitation:
    """Sinusoidal components of the base vibration.

    Attributes: ``freq_hz`` [Hz], ``accel_rms_m_s2`` [m/s2], ``drift_hz`` [Hz] (uniform +/- wander),
    ``bin_hz`` [Hz] (survey bin width over which a line is spread; 0 for a stated peak).
    """

    freq_hz: np.ndarray
    accel_rms_m_s2: np.ndarray
    drift_hz: np.ndarray
    bin_hz: np.ndarray


@dataclass(frozen=True)
class Harvester:
    """Harvester parameters in SI: see :class:`VibrationSource` for their meaning."""

    mass_kg: float
    resonant_hz: float
    zeta_m: float
    zeta_e: float
    travel_limit_m: float
    transducer: str = "piezo"
    open_circuit_v_per_m_s2: float = 5.0
    transduction_v_s_per_m: float | None = None
    diode_drop_v: float = 0.3
    min_input_v: float = 0.0
    reservoir_v: float | None = None
    zeta_e_max: float = math.inf  # electrical damping with the load shorted (coil resistance alone)

    def load_share(self, zeta_e: float) -> float:
        """Share of the electrical damping power that reaches the load, R_L / (R_coil + R_L) [-].

        The electrical damping is (B l)^2 / (R_coil + R_L) over 2 m omega_n, so the share is
        1 - zeta_e / zeta_e_max; 1 without coil resistance."""
        return max(0.0, 1.0 - zeta_e / self.zeta_e_max) if math.isfinite(self.zeta_e_max) else 1.0


@dataclass(frozen=True)
class RunningPoint:
    """The harvester's state while the machine runs (averaged over frequency drift).

    Attributes: ``power_w`` DC power after the rectifier [W]; ``linear_power_w`` power the load (the
    rectifier) receives before rectification [W]; ``damping_power_w`` power into the electrical damping
    [W] (more than ``linear_power_w`` by what a coil's resistance keeps); ``dc_v`` reservoir voltage [V]
    (0 if never conducting); ``open_circuit_v`` mean peak open-circuit voltage [V]; ``zeta_e`` the
    electrical damping used [-]; ``travel_m`` the proof mass's peak travel (:func:`peak_travel_m`) [m];
    ``free_travel_m`` what it would be at the stated damping [m]; ``travel_limited``; ``starved_share``
    share of drift positions where V_oc is below the diode drops plus the converter's least input [-].
    """

    power_w: float
    linear_power_w: float
    dc_v: float
    open_circuit_v: float
    zeta_e: float
    travel_m: float
    free_travel_m: float
    travel_limited: bool
    starved_share: float
    damping_power_w: float = 0.0


_MAX_CELLS = 400_000


def _midpoints(n: int, half: float) -> np.ndarray:
    return (-1.0 + (2.0 * np.arange(n) + 1.0) / n) * half


def _grid_sizes(exc: Excitation, h: Harvester) -> tuple[int, int]:
    """Points across the drift (odd, includes the centre) and across a bin, ~8 per bandwidth."""
    bandwidth = 2.0 * (h.zeta_m + h.zeta_e) * h.resonant_hz
    d_max = float(np.max(exc.drift_hz, initial=0.0))
    b_max = float(np.max(exc.bin_hz, initial=0.0))
    n_u = 1 if d_max <= 0 else int(np.clip(math.ceil(16.0 * d_max / bandwidth), 16, 200)) | 1
    n_s = 1 if b_max <= 0 else int(np.clip(math.ceil(8.0 * b_max / bandwidth), 1, 16)) | 1
    return n_u, n_s


def _component_sums(exc: Excitation, h: Harvester, zeta_e: float, sel: np.ndarray, u: np.ndarray,
                    s: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Sums over the selected components, per drift position ``u``, of the bin-averaged linear power [W],
    squared displacement amplitude [m2], squared velocity amplitude [m2/s2] and displacement amplitude [m]."""
    power, z2, v2, z1 = np.zeros(u.size), np.zeros(u.size), np.zeros(u.size), np.zeros(u.size)
    idx = np.flatnonzero(sel)
    step = max(1, _MAX_CELLS // (u.size * s.size))
    for start in range(0, idx.size, step):
        i = idx[start:start + step]
        f = (exc.freq_hz[i, None, None] + u[None, :, None] * exc.drift_hz[i, None, None]
             + s[None, None, :] * exc.bin_hz[i, None, None])
        f = np.maximum(f, 1e-6)
        a_pk = SQRT2 * exc.accel_rms_m_s2[i, None, None]
        p = resonant_power_w(h.mass_kg, a_pk, f, h.resonant_hz, h.zeta_m, zeta_e)
        power += p.mean(axis=2).sum(axis=0)
        z = displacement_m(a_pk, f, h.resonant_hz, h.zeta_m + zeta_e)
        z2 += (z * z).mean(axis=2).sum(axis=0)
        v2 += ((TWO_PI * f * z) ** 2).mean(axis=2).sum(axis=0)
        z1 += z.mean(axis=2).sum(axis=0)
    return power, z2, v2, z1


def peak_travel_m(z2_m2: np.ndarray, z1_m: np.ndarray) -> np.ndarray:
    """Peak proof-mass travel of several sinusoidal components [m].

    Method: the sum of the components' amplitudes is the peak their sum reaches (exactly, over time,
    for frequencies that are not in simple ratios); for many components of random phase the motion is
    near Gaussian and its peak is ``PEAK_FACTOR`` times its RMS, sqrt(sum of squared amplitudes / 2).
    The estimate is the smaller of the two: one tone gives its amplitude, two equal tones twice it, a
    broad survey spectrum three times its RMS.

    Parameters
    ----------
    z2_m2 : sum of squared displacement amplitudes [m2].
    z1_m : sum of displacement amplitudes [m].
    """
    return np.minimum(np.asarray(z1_m), PEAK_FACTOR * np.sqrt(np.asarray(z2_m2) / 2.0))


def _sums(exc: Excitation, h: Harvester, zeta_e: float, n_u: int, n_s: int
          ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Per drift position: linear power [W], sums of squared displacement [m2] and velocity [m2/s2]
    amplitudes, and the sum of displacement amplitudes [m].

    Components far from resonance (beyond 20 bandwidths plus 8 times their spread), where the response is
    smooth, are evaluated at their centre frequency only: the spread changes their small share by ~1 %.
    """
    u = _midpoints(n_u, 1.0)
    s = _midpoints(n_s, 0.5) if n_s > 1 else np.zeros(1)
    bandwidth = 2.0 * (h.zeta_m + h.zeta_e) * h.resonant_hz
    near = np.abs(exc.freq_hz - h.resonant_hz) <= 8.0 * (exc.drift_hz + exc.bin_hz) + 20.0 * bandwidth
    sums = _component_sums(exc, h, zeta_e, near, u, s)
    if not near.all():
        far = _component_sums(exc, h, zeta_e, ~near, np.zeros(1), np.zeros(1))
        sums = tuple(x + y for x, y in zip(sums, far, strict=True))
    return sums


def running_point(exc: Excitation, h: Harvester) -> RunningPoint:
    """Power and state of the harvester while the machine runs.

    Method: see the module docstring (steps 1-3): sum of the components' Williams & Yates powers,
    averaged over frequency drift and survey bin width; electrical damping raised to respect the travel
    limit (Mitcheson et al. 2004); open-circuit voltage and bridge-rectifier interface at each drift
    position (:func:`rectified_power_w`), then averaged.

    Parameters
    ----------
    exc : Excitation   components of the base vibration (SI).
    h : Harvester   harvester parameters (SI).

    Returns
    -------
    RunningPoint
    """
    n_u, n_s = _grid_sizes(exc, h)
    _, z2, _, z1 = _sums(exc, h, h.zeta_e, n_u, n_s)
    free_travel = float(peak_travel_m(z2, z1).max())
    zeta_e = h.zeta_e
    limited = free_travel > h.travel_limit_m
    if limited:
        from scipy.optimize import brentq  # scipy.optimize takes a tenth of a second to import: only when needed

        def excess(ze: float) -> float:
            _, z2_e, _, z1_e = _sums(exc, h, ze, n_u, n_s)
            return float(peak_travel_m(z2_e, z1_e).max()) / h.travel_limit_m - 1.0

        hi = max(2.0 * h.zeta_e, 1e-3)
        while excess(hi) > 0 and hi < h.zeta_e_max:
            hi *= 4.0
        hi = min(hi, h.zeta_e_max)
        # with coil resistance, damping above the shorted-load ceiling cannot be had: stop there
        zeta_e = hi if excess(hi) > 0 else brentq(excess, h.zeta_e, hi, xtol=1e-12, rtol=1e-10)
    damping, z2, v2, z1 = _sums(exc, h, zeta_e, n_u, n_s)
    power = damping * h.load_share(zeta_e)  # the coil's resistance keeps the rest

    wn = TWO_PI * h.resonant_hz
    if h.transducer == "electromagnetic":
        bl = (h.transduction_v_s_per_m if h.transduction_v_s_per_m is not None
              else h.open_circuit_v_per_m_s2 * 2.0 * h.zeta_m * wn)
        v_oc = bl * np.sqrt(v2)
    else:
        v_oc = h.open_circuit_v_per_m_s2 * 2.0 * h.zeta_m * wn * wn * np.sqrt(z2)
    dc_v, dc_p = rectified_power_w(power, v_oc, h.reservoir_v, h.diode_drop_v, h.min_input_v)
    conducting = dc_p > 0
    return RunningPoint(
        power_w=float(dc_p.mean()),
        linear_power_w=float(power.mean()),
        damping_power_w=float(damping.mean()),
        dc_v=float(dc_v[conducting].mean()) if conducting.any() else 0.0,
        open_circuit_v=float(v_oc.mean()),
        zeta_e=float(zeta_e),
        travel_m=float(peak_travel_m(z2, z1).max()),
        free_travel_m=free_travel,
        travel_limited=bool(limited),
        starved_share=float(np.mean(v_oc <= 2.0 * h.diode_drop_v + h.min_input_v)),
    )


# ------------------------------------------------------------------------------------- the yield model


def excitation_of(spec: VibrationSource, ctx: SpotContext) -> Excitation:
    """The spot's vibration components from the site file (peaks) or its survey CSV."""
    if spec.spectrum_file is not None:
        freq, accel = read_spectrum_csv(
            ctx.resolve(spec.spectrum_file, "spectrum_file"), spec.spectrum_kind, str(spec.spectrum_unit),
            spec.spectrum_measure, frequency_column=spec.frequency_column, value_column=spec.value_column,
        )
        return Excitation(freq, accel, np.full(freq.size, spec.frequency_drift_hz), bin_widths_hz(freq))
    freq = np.array([p.frequency_hz for p in spec.peak])
    accel = np.array([p.accel_rms_m_s2 for p in spec.peak])
    drift = np.array([spec.frequency_drift_hz if p.drift_hz is None else p.drift_hz for p in spec.peak])
    return Excitation(freq, accel, drift, np.zeros(freq.size))


def coil_damping(spec: VibrationSource, resonant_hz: float) -> tuple[float, float]:
    """Electrical damping ratio of an electromagnetic harvester with coil resistance, and its ceiling.

    Method: the coil EMF B l v drives the coil and load resistances in series, so the electrical
    damping coefficient is c_e = (B l)^2 / (R_coil + R_L) and zeta_e = c_e / (2 m omega_n); the load
    receives R_L / (R_coil + R_L) of the electrical damping power, the coil's resistance the rest. The
    default load is the best for the coil, R_L = R_coil + (B l)^2 / c_m with c_m = 2 m omega_n zeta_m
    (Stephen 2006). The ceiling zeta_e_max is the damping with the load shorted.

    Returns
    -------
    (zeta_e, zeta_e_max) : [-]

    References
    ----------
    Stephen, N.G. (2006). On energy harvesting from ambient vibration. J. Sound and Vibration 293,
    409-425.
    """
    m_kg = spec.proof_mass_g * 1e-3
    wn = TWO_PI * resonant_hz
    bl2 = float(spec.transduction_v_s_per_m) ** 2
    r_coil = float(spec.coil_resistance_ohm)
    c_m = 2.0 * m_kg * wn * spec.mechanical_damping_ratio
    r_load = spec.load_resistance_ohm if spec.load_resistance_ohm is not None else r_coil + bl2 / c_m
    return bl2 / (r_coil + r_load) / (2.0 * m_kg * wn), bl2 / r_coil / (2.0 * m_kg * wn)


def harvester_of(spec: VibrationSource, resonant_hz: float) -> Harvester:
    """The harvester's parameters in SI for a given resonant frequency."""
    zeta_e, zeta_e_max = (spec.electrical_damping_ratio if spec.electrical_damping_ratio is not None
                          else spec.mechanical_damping_ratio), math.inf
    if spec.coil_resistance_ohm is not None:
        zeta_e, zeta_e_max = coil_damping(spec, resonant_hz)
    return Harvester(
        mass_kg=spec.proof_mass_g * 1e-3,
        resonant_hz=resonant_hz,
        zeta_m=spec.mechanical_damping_ratio,
        zeta_e=zeta_e,
        zeta_e_max=zeta_e_max,
        travel_limit_m=spec.travel_limit_mm * 1e-3,
        transducer=spec.transducer,
        open_circuit_v_per_m_s2=spec.open_circuit_v_per_m_s2,
        transduction_v_s_per_m=spec.transduction_v_s_per_m,
        diode_drop_v=spec.diode_drop_v,
        min_input_v=spec.conditioning.min_input_v,
        reservoir_v=None if spec.reservoir_v == "tracked" else float(spec.reservoir_v),
    )


def _fmt_w(p: float) -> str:
    if p <= 0:
        return "0 W"
    for scale, unit in ((1.0, "W"), (1e-3, "mW"), (1e-6, "uW"), (1e-9, "nW")):
        if p >= scale:
            return f"{p / scale:.3g} {unit}"
    return f"{p * 1e9:.2g} nW"


def _peak_notes(exc: Excitation, h: Harvester, now: RunningPoint) -> list[str]:
    notes = []
    bandwidth = float(half_power_bandwidth_hz(h.resonant_hz, quality_factor(h.zeta_m + now.zeta_e)))
    for i in spectral_peaks(exc.freq_hz, exc.accel_rms_m_s2):
        f = float(exc.freq_hz[i])
        off = f - h.resonant_hz
        where = (f"sits {abs(off):.3g} Hz {'above' if off > 0 else 'below'} the {h.resonant_hz:.4g} Hz "
                 f"resonance ({abs(off) / bandwidth:.2g} half-power bandwidths of {bandwidth:.2g} Hz)")
        head = f"Peak at {f:.4g} Hz ({exc.accel_rms_m_s2[i]:.3g} m/s2 RMS) "
        if abs(off) <= 0.05 * bandwidth:
            notes.append(head + f"sits at the {h.resonant_hz:.4g} Hz resonance.")
            continue
        tuned = running_point(exc, replace(h, resonant_hz=f))
        if tuned.power_w <= 0:
            notes.append(head + where + f"; even retuned to {f:.4g} Hz the harvester would give nothing "
                         "(open-circuit voltage too low).")
            continue
        gain = f" ({tuned.power_w / now.power_w:.2g}x)" if now.power_w > 0 else ""
        notes.append(head + where + f"; retuned to {f:.4g} Hz the harvester would give "
                     f"{_fmt_w(tuned.power_w)} while running instead of {_fmt_w(now.power_w)}{gain}.")
    return notes


def vibration_output(spec: VibrationSource, ctx: SpotContext) -> SourceOutput:
    """Hourly power of a resonant vibration harvester over the reference year.

    Method: see the module docstring. The running power (:func:`running_point`) is constant while the
    machine runs; each hour gets it times the machine schedule and the running fraction.

    Parameters
    ----------
    spec : VibrationSource   the site-file table.
    ctx : SpotContext   the spot (used for file paths only).

    Returns
    -------
    SourceOutput
        ``power_w`` [W] DC power after the bridge rectifier (before the converter), ``voltage_v`` [V]
        the reservoir voltage while running (0 otherwise), details ``machine_running`` (0/1),
        ``open_circuit_v`` [V], ``proof_mass_travel_mm`` [mm], ``power_before_rectifier_w`` [W];
        notes on each significant peak's detuning, the travel limit and the voltage threshold.

    Raises
    ------
    SiteInputError   for a bad spectrum file.

    References
    ----------
    Williams & Yates (1996); Roundy, Wright & Rabaey (2003); Mitcheson et al. (2004); Ottman et al.
    (2002); Guyomar et al. (2005): see the module docstring.
    """
    exc = excitation_of(spec, ctx)
    notes: list[str] = []
    if spec.resonant_frequency_hz is None:
        best = spectral_peaks(exc.freq_hz, exc.accel_rms_m_s2, max_peaks=1)
        if not best.size:  # no peak inside the band: the line with the most to give
            best = np.array([np.argmax(exc.accel_rms_m_s2**2 / exc.freq_hz)])
        resonant_hz = float(exc.freq_hz[best[0]])
        notes.append("No resonant_frequency_hz given: the harvester is taken as tuned to the strongest "
                     f"peak, {resonant_hz:.4g} Hz (the best case); state the real harvester's frequency.")
    else:
        resonant_hz = float(spec.resonant_frequency_hz)
    h = harvester_of(spec, resonant_hz)
    point = running_point(exc, h)
    if math.isfinite(h.zeta_e_max):
        notes.append(f"The coil keeps {1 - h.load_share(point.zeta_e):.0%} of the electrical power "
                     f"(R_coil {spec.coil_resistance_ohm:g} ohm); the load receives the rest.")

    if point.travel_limited:
        notes.append(f"The proof mass would travel {point.free_travel_m * 1e3:.3g} mm against its "
                     f"{spec.travel_limit_mm:.3g} mm limit: electrical damping raised from {h.zeta_e:.3g} "
                     f"to {point.zeta_e:.3g}, which caps the output"
                     + (" (so heavily damped that this linear model is rough)."
                        if h.zeta_m + point.zeta_e > 0.2 else "."))
    drops = 2.0 * h.diode_drop_v
    if point.starved_share >= 1.0:
        notes.append(f"The open-circuit voltage ({point.open_circuit_v:.2g} V peak) does not exceed the "
                     f"rectifier's {drops:.2g} V plus the converter's {h.min_input_v:.2g} V least input: "
                     "nothing is harvested. A transducer with more volts per m/s2 would help.")
    elif point.starved_share > 0:
        notes.append(f"For {point.starved_share:.0%} of the frequency drift the open-circuit voltage is "
                     f"below the rectifier's {drops:.2g} V plus the converter's {h.min_input_v:.2g} V "
                     "least input.")
    elif point.power_w <= 0 and point.linear_power_w > 0:
        notes.append(f"The reservoir at {spec.reservoir_v} V sits above the open-circuit voltage "
                     f"({point.open_circuit_v:.2g} V peak) less the diode drops: nothing is harvested.")
    notes.extend(_peak_notes(exc, h, point))

    running = spec.machine_schedule.mask()
    if not running.any() or spec.running_fraction == 0:
        notes.append("The machine never runs by its schedule: nothing is harvested.")
    on = running.astype(float)
    power = on * point.power_w * spec.running_fraction
    machine = PowerLevel(on * point.power_w, on * point.dc_v, on * spec.running_fraction)
    return SourceOutput(
        power_w=power,
        voltage_v=on * point.dc_v,
        levels=[machine],
        details={
            "machine_running": on,
            "open_circuit_v": on * point.open_circuit_v,
            "proof_mass_travel_mm": on * point.travel_m * 1e3,
            "power_before_rectifier_w": on * point.linear_power_w * spec.running_fraction,
        },
        notes=notes,
    )


__all__ = [
    "VIBRATION_PRESETS",
    "VIBRATION_PRESET_SOURCES",
    "Excitation",
    "Harvester",
    "RunningPoint",
    "VibrationPeak",
    "VibrationSource",
    "displacement_m",
    "half_power_bandwidth_hz",
    "optimum_power_w",
    "peak_travel_m",
    "quality_factor",
    "rectified_power_w",
    "resonant_power_w",
    "running_point",
    "vibration_output",
]


#: What the rest of the program needs to know about this kind (registered in ``sources/__init__.py``).
KIND = SourceKind(
    kind="vibration", model=VibrationSource, output=vibration_output, name="vibration harvester",
    group="vibration", group_title="Vibration",
    size_knobs=(SizeKnob("proof_mass_g", "Proof mass"),),
    outage_stops=True,
    file_fields=("spectrum_file",),
    presets=(PresetField("preset", "vibration-source", VIBRATION_PRESETS,
                         clears=("spectrum_file", "spectrum_unit", "spectrum_measure", "value_column")),),
    new_source={"preset": next(iter(VIBRATION_PRESETS))},
    upload="spectrum",
    cautions=("rotating_machinery", "work_at_height", "electrical_enclosure"),
    method=("Vibration harvester: a linear resonant mass-spring-damper driven by the spot's vibration "
            "components (survey spectrum or peaks), power from the electrical share of the damping, "
            "frequency drift averaged, travel limited by raising the electrical damping, then the "
            "rectifier; only while the machine runs."),
    reference_modules=("siteharvest.sources.vibration", "siteharvest.vibration_spectrum"),
)

"""Thermoelectric generator on a warm (or cold) surface, with a heat sink in the surrounding air.

Site-file fields (``[[source]]`` with ``kind = "thermoelectric"``)::

    [[source]]
    id = "pipe-teg"
    kind = "thermoelectric"
    preset = "large-bismuth-telluride-module-40mm"   # module figures; each can be overridden
    modules = 2
    wiring = "series"                                 # or "parallel"
    hot_contact_resistance_k_w = 0.5
    cold_contact_resistance_k_w = 0.1
    cold_side_offset_c = 0.0
    hot_side = { mode = "schedule", process_on_c = 85.0, process_off_c = 30.0,
                 process = { hours = "06-22", days = "weekdays", shutdown_weeks = [31, 32] } }
    heat_sink = { area_cm2 = 150.0, height_mm = 50.0, emissivity = 0.85 }   # or { resistance_k_w = 6.0 }

The hot side is one of three kinds, chosen by ``mode``:

- ``{ mode = "constant", surface_c = 60.0 }`` (a plain number ``hot_side = 60.0`` means the same);
- ``{ mode = "schedule", process_on_c, process_off_c, process = <weekly schedule> }``: the surface is at
  ``process_on_c`` in the process hours and at ``process_off_c`` otherwise (left out: it cools to the air
  temperature). Changes are taken as instant (the pipe's thermal mass is ignored);
- ``{ mode = "file", file = "pipe_temperature.csv", column = "hot_surface_c" }``: a CSV file, relative to
  the site file, with a header row and exactly 8760 data rows, one per hour of the reference year in
  local standard time from 1 January 00:00; ``column`` holds the hot-surface temperature [degC]. Other
  columns are ignored; lines starting with ``#`` are comments.

When ``mode`` is left out it is inferred: ``file`` given -> "file", ``process_on_c`` given ->
"schedule", else "constant".

The cold side is the air around the spot (``ctx.air_temp_c``: outdoor air outdoors, the indoor air
temperature indoors) plus ``cold_side_offset_c`` (e.g. a sink inside a warm enclosure).

Each module has its own thermal path: hot contact -> module -> cold contact -> heat sink -> air. The
hot surface is taken as a fixed temperature (a pipe or casing large enough not to be cooled by the
module). Power is the matched-load power of the modules; see :func:`thermoelectric_output`.
"""

from __future__ import annotations

import io
import re
from pathlib import Path
from typing import Annotated, Any, Literal

import numpy as np
import pandas as pd
from pydantic import Field, field_validator, model_validator

from ..conditioning import ConditioningSpec
from ..context import SpotContext
from ..errors import SiteInputError, choose
from ..fields import Section, quantity
from ..schedule import WeeklySchedule
from ..timegrid import HOURS_PER_YEAR
from .base import PresetField, SizeKnob, SourceBase, SourceKind, SourceOutput

KELVIN = 273.15
STEFAN_BOLTZMANN = 5.670374419e-8  # W/(m2 K4), CODATA 2018 (exact from SI defining constants)
GRAVITY_M_S2 = 9.80665
AIR_GAS_CONSTANT = 287.05  # J/(kg K), dry air
AIR_CP = 1006.0  # J/(kg K), dry air near room temperature

# Module figures: plain names of our own. Typical bismuth-telluride values (common practice; from memory
# after Snyder & Toberer 2008, Nature Materials 7:105-114, and Rowe (ed.), CRC Handbook of Thermoelectrics,
# 1995): about 0.4 mV/K and 16 mOhm per couple, module ZT near 0.77 at 300 K.
# 15 mm: 31 couples; 30 mm: 71 couples; 40 mm: 127 couples.
MODULE_PRESETS: dict[str, dict[str, float]] = {
    "small-bismuth-telluride-module-15mm": {
        "seebeck_v_k": 0.0124, "resistance_ohm": 0.49, "module_thermal_resistance_k_w": 8.2,
        "max_hot_side_c": 150.0,
    },
    "medium-bismuth-telluride-module-30mm": {
        "seebeck_v_k": 0.0284, "resistance_ohm": 1.12, "module_thermal_resistance_k_w": 3.6,
        "max_hot_side_c": 150.0,
    },
    "large-bismuth-telluride-module-40mm": {
        "seebeck_v_k": 0.0508, "resistance_ohm": 2.0, "module_thermal_resistance_k_w": 2.0,
        "max_hot_side_c": 150.0,
    },
}
DEFAULT_MODULE = "medium-bismuth-telluride-module-30mm"


# --------------------------------------------------------------------------------------------
# Site-file models
# --------------------------------------------------------------------------------------------


class ConstantHotSide(Section):
    """A hot surface at one temperature all year."""

    mode: Literal["constant"] = "constant"
    surface_c: float = quantity(60.0, "degC", "hot-surface temperature", ge=-60, le=600, step=1)


class ScheduledHotSide(Section):
    """A surface heated by a process that runs on a weekly schedule."""

    mode: Literal["schedule"] = "schedule"
    process_on_c: float = quantity(85.0, "degC", "hot-surface temperature while the process runs",
                                   ge=-60, le=600, step=1)
    process_off_c: float | None = quantity(None, "degC", "hot-surface temperature while the process is "
                                           "off; left out: the surface cools to the air temperature",
                                           ge=-60, le=600, step=1)
    process: WeeklySchedule = Field(default_factory=WeeklySchedule,
                                    description="process hours, days, dates off and shutdown weeks")


class FileHotSide(Section):
    """Hourly hot-surface temperatures from a CSV file (8760 rows, header, one column in degC)."""

    mode: Literal["file"] = "file"
    file: str = Field(..., min_length=1, description="CSV file relative to the site file: header row, "
                      "8760 hourly rows from 1 January 00:00 local standard time")
    column: str = Field("hot_surface_c", min_length=1, description="column with the hot-surface "
                        "temperature [degC]")


HotSide = Annotated[ConstantHotSide | ScheduledHotSide | FileHotSide, Field(discriminator="mode")]


class HeatSink(Section):
    """The cold-side heat sink of one module: a given resistance, or a plate/fin description."""

    resistance_k_w: float | None = quantity(None, "K/W", "sink-to-air thermal resistance; when given, "
                                            "the description below is not used", gt=0, le=1000, step=0.1)
    area_cm2: float = quantity(150.0, "cm2", "area wetted by the air (fins and plate, both faces)",
                               gt=0, le=1e5, step=1)
    height_mm: float = quantity(50.0, "mm", "height of the plate/fins along which the warmed air rises",
                                gt=0, le=2000, step=1)
    emissivity: float = quantity(0.85, "-", "surface emissivity (anodised 0.8-0.9, bare aluminium "
                                 "0.05-0.1)", ge=0, le=1, step=0.01)
    convection_w_m2k: float | None = quantity(None, "W/m2K", "convective coefficient; left out: "
                                              "natural convection on a vertical plate, with the wind "
                                              "outdoors", gt=0, le=1000)
    width_mm: float = quantity(50.0, "mm", "width of the sink's base across the fins", gt=0, le=2000, step=1)
    fin_length_mm: float = quantity(25.0, "mm", "how far the fins stand off the base", ge=0, le=500, step=1)
    fin_thickness_mm: float = quantity(1.5, "mm", "thickness of one fin", gt=0, le=50, step=0.1)
    fin_conductivity_w_mk: float = quantity(200.0, "W/mK", "thermal conductivity of the fin metal "
                                            "(aluminium alloys 150-220, copper 390)", gt=0, le=2000)
    fin_area_share: float = quantity(0.85, "-", "share of the wetted area that is fin (the rest is base)",
                                     ge=0, le=1, step=0.01)
    wind_exposure: float = quantity(0.3, "-", "outdoors: share of the weather year's wind speed (a 10 m "
                                    "station figure) that reaches the sink; near a wall or in shelter the "
                                    "air moves far slower (common practice 0.2-0.5)", ge=0, le=1, step=0.05)

    @property
    def envelope_area_cm2(self) -> float:
        """Outer faces of the sink's envelope (front, two sides, top and bottom) [cm2]: the area that
        radiates to the surroundings (fins facing each other exchange radiation among themselves)."""
        w, hgt, fin = self.width_mm, self.height_mm, self.fin_length_mm
        return (w * hgt + 2.0 * fin * hgt + 2.0 * w * fin) / 100.0


class PipeWall(Section):
    """The pipe between a process fluid and the module: the hot side's temperatures are then the fluid's.

    The heat crosses the fluid's film, the pipe wall and any insulation left under the module, in series,
    through the module's footprint (a thin-wall, flat approximation: good while the footprint is small
    against the pipe's circumference and the wall thin against its radius).
    """

    film_w_m2k: float = quantity(1000.0, "W/m2K", "fluid-side film coefficient (water in turbulent flow "
                                 "1000-10000, condensing steam 5000 and up, oils 100-1000, gases 10-100)",
                                 gt=0, le=1e5)
    wall_mm: float = quantity(3.0, "mm", "pipe wall thickness", ge=0, le=100, step=0.1)
    wall_conductivity_w_mk: float = quantity(50.0, "W/mK", "pipe wall metal (carbon steel ~50, stainless "
                                             "~16, copper ~390)", gt=0, le=2000)
    lagging_mm: float = quantity(0.0, "mm", "insulation left between the pipe and the module (0: a bare "
                                 "patch under the module)", ge=0, le=300, step=1)
    lagging_conductivity_w_mk: float = quantity(0.04, "W/mK", "conductivity of that insulation (mineral "
                                                "wool 0.035-0.05)", gt=0, le=10)

    def resistance_k_w(self, footprint_m2: float) -> float:
        """Fluid-to-surface thermal resistance under one module [K/W]: (1/h + t_w/k_w + t_l/k_l) / A.

        References: Incropera, F.P. and DeWitt, D.P. Fundamentals of Heat and Mass Transfer, ch. 3
        (series conduction and convection resistances)."""
        per_area = (1.0 / self.film_w_m2k + self.wall_mm * 1e-3 / self.wall_conductivity_w_mk
                    + self.lagging_mm * 1e-3 / self.lagging_conductivity_w_mk)
        return per_area / footprint_m2


class ThermoelectricSource(SourceBase):
    """A thermoelectric generator: modules on a hot surface with a heat sink in the air.

    Module figures start from ``preset`` (one of :data:`MODULE_PRESETS`); any given figure overrides.
    """


    kind: Literal["thermoelectric"] = "thermoelectric"
    preset: str = Field(DEFAULT_MODULE, description="module figures to start from: one of "
                        + ", ".join(MODULE_PRESETS))
    seebeck_v_k: float = quantity(0.0284, "V/K", "module Seebeck coefficient (all couples)", gt=0, le=1,
                                  step=0.0001)
    resistance_ohm: float = quantity(1.12, "ohm", "module electrical resistance", gt=0, le=10000, step=0.01)
    module_thermal_resistance_k_w: float = quantity(3.6, "K/W", "module thermal resistance, hot to cold "
                                                    "face", gt=0, le=1000, step=0.1)
    module_side_mm: float = quantity(30.0, "mm", "module side length (square module): the footprint the heat "
                                     "crosses from a pipe (see pipe)", gt=0, le=200)
    max_hot_side_c: float = quantity(150.0, "degC", "highest hot-side temperature the module is rated "
                                     "for", ge=0, le=1000)
    modules: int = quantity(1, "-", "number of modules, each with its own contacts and heat sink", ge=1,
                            le=100, step=1)
    wiring: Literal["series", "parallel"] = Field("series", description="electrical connection of the "
                                                  "modules: 'series' adds voltages, 'parallel' currents")
    hot_side: HotSide = Field(default_factory=ConstantHotSide, description="hot-surface temperature: "
                              "constant, process schedule or hourly file (the fluid's when pipe is given)")
    pipe: PipeWall | None = Field(None, description="the pipe wall between a process fluid and the module: "
                                  "give it to state the fluid's temperature in hot_side instead of the "
                                  "pipe surface's")
    power_curve: list[tuple[float, float]] | None = Field(
        None, min_length=2, max_length=50,
        description="measured matched-load power of one module against the temperature difference "
                    "across its faces: pairs (delta T [K], power [mW]); replaces the Seebeck-coefficient "
                    "law for the power (it goes as delta T squared beyond the curve's ends)")
    cold_side_offset_c: float = quantity(0.0, "K", "air around the heat sink, above the spot's air "
                                         "temperature", ge=-50, le=100, step=0.5)
    hot_contact_resistance_k_w: float = quantity(0.5, "K/W", "surface-to-module contact resistance "
                                                 "(strap on a pipe 0.2-2, flat face with grease "
                                                 "~0.05)", ge=0, le=1000, step=0.05)
    cold_contact_resistance_k_w: float = quantity(0.1, "K/W", "module-to-sink contact resistance", ge=0,
                                                  le=1000, step=0.05)
    heat_sink: HeatSink = Field(default_factory=HeatSink, description="cold-side heat sink of each "
                                "module")
    peltier_feedback: bool = Field(True, description="include the Peltier heat carried by the load "
                                   "current (lowers the module's effective thermal resistance)")
    conditioning: ConditioningSpec = Field(
        default_factory=lambda: ConditioningSpec(preset="thermal-low-voltage-boost"),
        description="the power-conditioning stage (low-voltage boost converter by default)")

    @model_validator(mode="before")
    @classmethod
    def _start_from_preset(cls, data: Any) -> Any:
        if not isinstance(data, dict):
            return data
        name = choose(data, "preset", MODULE_PRESETS, DEFAULT_MODULE)
        merged = {"preset": name, **MODULE_PRESETS[name], **data}
        hot = merged.get("hot_side")
        if isinstance(hot, int | float) and not isinstance(hot, bool):
            merged["hot_side"] = {"mode": "constant", "surface_c": hot}
        elif isinstance(hot, dict) and "mode" not in hot:
            mode = "file" if "file" in hot else "schedule" if "process_on_c" in hot else "constant"
            merged["hot_side"] = {"mode": mode, **hot}
        return merged

    @field_validator("power_curve")
    @classmethod
    def _curve(cls, curve: list[tuple[float, float]] | None) -> list[tuple[float, float]] | None:
        if curve is None:
            return curve
        dts = [p[0] for p in curve]
        if any(not (0 < dt <= 1000) for dt in dts) or len(set(dts)) != len(dts):
            raise ValueError("power_curve temperature differences must be distinct, from above 0 to 1000 K")
        if any(not (0 <= p[1] <= 1e6) for p in curve):
            raise ValueError("power_curve powers must lie from 0 to 1e6 mW")
        return sorted(curve)


# --------------------------------------------------------------------------------------------
# Physics: small pure functions
# --------------------------------------------------------------------------------------------


def standard_pressure_pa(altitude_m: float) -> float:
    """Air pressure of the standard atmosphere at ``altitude_m`` [Pa].

    The formula of ``pvlib.atmosphere.alt2pres`` (Portland State Aerospace Society 2004), written out so
    that a thermoelectric source imports no pvlib; tests/test_lazy_imports.py checks the two agree.
    """
    return 100 * ((44331.514 - altitude_m) / 11880.516) ** (1 / 0.1902632)


def matched_load_power_w(seebeck_v_k: Any, delta_t_k: Any, resistance_ohm: Any) -> np.ndarray:
    """Electrical power of a thermoelectric module into a matched load.

    Method: open-circuit voltage ``alpha * dT``; with the load equal to the internal resistance the
    power is ``(alpha * dT)**2 / (4 R)``. Works for either sign of ``dT``.

    Parameters
    ----------
    seebeck_v_k : float or array [V/K]
        Module Seebeck coefficient (all couples in series), > 0.
    delta_t_k : float or array [K]
        Temperature difference across the module's legs (hot face minus cold face).
    resistance_ohm : float or array [ohm]
        Module electrical resistance, > 0.

    Returns
    -------
    ndarray [W]
        Matched-load power, >= 0.

    Notes
    -----
    Valid while the Seebeck coefficient and resistance are taken constant over the temperature
    range (a few tens of kelvin around room temperature for bismuth telluride).

    References
    ----------
    Rowe, D.M. (ed.) (1995). CRC Handbook of Thermoelectrics. CRC Press, Boca Raton.
    """
    alpha = np.asarray(seebeck_v_k, dtype=float)
    dt = np.asarray(delta_t_k, dtype=float)
    return (alpha * dt) ** 2 / (4.0 * np.asarray(resistance_ohm, dtype=float))


def curve_power_w(power_curve: list[tuple[float, float]], delta_t_k: Any) -> np.ndarray:
    """Matched-load power of one module from a measured curve of power against its delta T [W].

    Method: the measured power over delta T squared (a constant for an ideal module) is interpolated
    linearly in delta T and held at the curve's ends, then multiplied by delta T squared: exact at
    the measured points, and the ideal module's square law beyond them.

    Parameters
    ----------
    power_curve : pairs (delta T [K], power [mW]), delta T ascending.
    delta_t_k : float or array [K]  temperature difference across the module's faces (sign ignored).
    """
    table = np.asarray(power_curve, dtype=float)
    ratio_w_k2 = table[:, 1] * 1e-3 / table[:, 0] ** 2
    dt = np.abs(np.asarray(delta_t_k, dtype=float))
    return np.interp(dt, table[:, 0], ratio_w_k2) * dt**2


def matched_load_voltage_v(seebeck_v_k: Any, delta_t_k: Any, series_modules: int = 1) -> np.ndarray:
    """Terminal voltage magnitude at matched load: half the open-circuit voltage.

    Parameters
    ----------
    seebeck_v_k : float or array [V/K]   module Seebeck coefficient.
    delta_t_k : float or array [K]       temperature difference across the legs (either sign).
    series_modules : int [-]             modules connected in series (1 for a parallel bank).

    Returns
    -------
    ndarray [V]
        ``series_modules * |alpha * dT| / 2``.

    References
    ----------
    Rowe, D.M. (ed.) (1995). CRC Handbook of Thermoelectrics. CRC Press, Boca Raton.
    """
    return series_modules * np.abs(np.asarray(seebeck_v_k, dtype=float) * np.asarray(delta_t_k, float)) / 2


def figure_of_merit_zt(seebeck_v_k: Any, resistance_ohm: Any, thermal_resistance_k_w: Any,
                       mean_temp_k: Any) -> np.ndarray:
    """Module figure of merit ``Z T = alpha**2 T / (R K)`` with ``K = 1 / R_th``.

    Parameters
    ----------
    seebeck_v_k : float or array [V/K]
    resistance_ohm : float or array [ohm]          electrical resistance.
    thermal_resistance_k_w : float or array [K/W]  module thermal resistance (1 / conductance).
    mean_temp_k : float or array [K]               mean module temperature.

    Returns
    -------
    ndarray [-]

    References
    ----------
    Snyder, G.J. and Toberer, E.S. (2008). Complex thermoelectric materials. Nature Materials 7,
    105-114.
    """
    alpha = np.asarray(seebeck_v_k, dtype=float)
    return alpha**2 * np.asarray(thermal_resistance_k_w, float) * np.asarray(mean_temp_k, float) / (
        np.asarray(resistance_ohm, float))


def max_efficiency(zt: Any, t_hot_k: Any, t_cold_k: Any) -> np.ndarray:
    """Maximum conversion efficiency of a thermoelectric generator (optimum load).

    Method: ``eta = (dT/T_h) (sqrt(1+ZT) - 1) / (sqrt(1+ZT) + T_c/T_h)``, ZT evaluated at the mean
    temperature. ``ZT -> 0`` gives 0, ``ZT -> inf`` gives the Carnot efficiency ``dT/T_h``.

    Parameters
    ----------
    zt : float or array [-]       figure of merit at the mean temperature, >= 0 (``inf`` allowed).
    t_hot_k : float or array [K]  hot-junction temperature, > 0.
    t_cold_k : float or array [K] cold-junction temperature, 0 < t_cold_k <= t_hot_k.

    Returns
    -------
    ndarray [-]

    References
    ----------
    Ioffe, A.F. (1957). Semiconductor Thermoelements and Thermoelectric Cooling. Infosearch, London.
    Rowe, D.M. (ed.) (1995). CRC Handbook of Thermoelectrics. CRC Press, Boca Raton.
    """
    zt = np.asarray(zt, dtype=float)
    th = np.asarray(t_hot_k, dtype=float)
    tc = np.asarray(t_cold_k, dtype=float)
    if np.any(th <= 0) or np.any(tc <= 0) or np.any(tc > th) or np.any(zt < 0):
        raise ValueError("max_efficiency needs zt >= 0 and 0 < t_cold_k <= t_hot_k")
    carnot = (th - tc) / th
    root = np.sqrt(1.0 + np.where(np.isinf(zt), 0.0, zt))
    finite = carnot * (root - 1.0) / (root + tc / th)
    return np.where(np.isinf(zt), carnot, finite)


def effective_module_resistance_k_w(module_thermal_resistance_k_w: Any, zt_mean: Any) -> np.ndarray:
    """Module thermal resistance seen by the heat flow when a matched load draws current.

    Method: at matched load the current is ``alpha dT / (2R)``; averaged over the hot and cold
    junctions the Peltier heat ``alpha I T_mean`` adds ``Z T_mean / 2`` times the conduction heat
    (Joule heat cancels in the average), so ``R_eff = R_th / (1 + Z T_mean / 2)``.

    Parameters
    ----------
    module_thermal_resistance_k_w : float or array [K/W]
    zt_mean : float or array [-]  figure of merit at the mean module temperature.

    Returns
    -------
    ndarray [K/W]

    References
    ----------
    Rowe, D.M. (ed.) (1995). CRC Handbook of Thermoelectrics. CRC Press, Boca Raton (heat balance of
    a couple). Yazawa, K. and Shakouri, A. (2011). Optimization of power and efficiency of
    thermoelectric devices with asymmetric thermal contacts. J. Appl. Phys. 111, 024509.
    """
    return np.asarray(module_thermal_resistance_k_w, float) / (1.0 + np.asarray(zt_mean, float) / 2.0)


def module_delta_t_k(delta_t_total_k: Any, module_resistance_k_w: Any, external_resistance_k_w: Any,
                     ) -> np.ndarray:
    """Temperature difference across the module in a series thermal network.

    Method: ``dT_module = dT_total R_module / (R_module + R_external)``, with ``R_external`` the sum
    of the contact and heat-sink resistances. Pass the effective module resistance
    (:func:`effective_module_resistance_k_w`) to include Peltier feedback; with the plain module
    resistance Peltier and Joule terms are neglected (valid for ZT << 1).

    Parameters
    ----------
    delta_t_total_k : float or array [K]        hot surface minus air (either sign).
    module_resistance_k_w : float or array [K/W]
    external_resistance_k_w : float or array [K/W]

    Returns
    -------
    ndarray [K]

    References
    ----------
    Stevens, J.W. (2001). Optimal design of small dT thermoelectric generation systems. Energy
    Conversion and Management 42, 709-720.
    """
    r_m = np.asarray(module_resistance_k_w, dtype=float)
    return np.asarray(delta_t_total_k, dtype=float) * r_m / (r_m + np.asarray(external_resistance_k_w, float))


def thermal_match(hot_contact_resistance_k_w: float, heat_sink_resistance_k_w: float,
                  cold_contact_resistance_k_w: float = 0.0, zt_mean: float = 0.0) -> float:
    """Module thermal resistance that gives the most power for given external resistances.

    Method: for a module family whose electrical resistance scales with its thermal resistance
    (same couples, leg length varied), matched-load power is proportional to
    ``R_eff / (R_eff + R_ext)**2``, largest at ``R_eff = R_ext``: half the temperature difference
    across the module. With Peltier feedback ``R_eff = R_th / (1 + Z T / 2)``, so the optimum module
    resistance is ``R_ext (1 + Z T / 2)``; ``zt_mean = 0`` gives the first-order rule ``R_th = R_ext``.

    Parameters
    ----------
    hot_contact_resistance_k_w : float [K/W]
    heat_sink_resistance_k_w : float [K/W]
    cold_contact_resistance_k_w : float [K/W]
    zt_mean : float [-]  module figure of merit at the mean temperature (0 neglects Peltier feedback).

    Returns
    -------
    float [K/W]

    References
    ----------
    Stevens, J.W. (2001). Energy Conversion and Management 42, 709-720.
    Freunek, M., Mueller, M., Ungan, T., Walker, W. and Reindl, L.M. (2009). New physical model for
    thermoelectric generators. J. Electronic Materials 38(7), 1214-1220.
    """
    r_ext = hot_contact_resistance_k_w + heat_sink_resistance_k_w + cold_contact_resistance_k_w
    if r_ext <= 0 or zt_mean < 0:
        raise ValueError("thermal_match needs a positive external resistance and zt_mean >= 0")
    return float(r_ext * (1.0 + zt_mean / 2.0))


def air_properties(temp_k: Any, pressure_pa: Any = 101325.0) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Dry-air conductivity, kinematic viscosity and Prandtl number.

    Method: Sutherland's law for viscosity (mu0 = 1.716e-5 Pa s, T0 = 273.15 K, S = 110.4 K) and
    conductivity (k0 = 0.0241 W/(m K), S = 194 K); ideal-gas density; cp = 1006 J/(kg K).
    Within about 2 % of tabulated values from 250 to 400 K.

    Parameters
    ----------
    temp_k : float or array [K]
    pressure_pa : float or array [Pa]

    Returns
    -------
    (k_w_mk, nu_m2_s, prandtl) : arrays [W/(m K)], [m2/s], [-]

    References
    ----------
    White, F.M. (2006). Viscous Fluid Flow, 3rd ed. McGraw-Hill, Tables 1-2 and 1-3 (Sutherland).
    """
    t = np.asarray(temp_k, dtype=float)
    mu = 1.716e-5 * (t / KELVIN) ** 1.5 * (KELVIN + 110.4) / (t + 110.4)
    k = 0.0241 * (t / KELVIN) ** 1.5 * (KELVIN + 194.0) / (t + 194.0)
    rho = np.asarray(pressure_pa, dtype=float) / (AIR_GAS_CONSTANT * t)
    return k, mu / rho, mu * AIR_CP / k


def vertical_plate_convection_w_m2k(delta_t_k: Any, height_m: Any, air_temp_c: Any,
                                    pressure_pa: Any = 101325.0) -> np.ndarray:
    """Natural-convection coefficient of an isothermal vertical plate in air.

    Method: Churchill & Chu correlation for all Rayleigh numbers,
    ``Nu = (0.825 + 0.387 Ra**(1/6) / (1 + (0.492/Pr)**(9/16))**(8/27))**2``, air properties at the
    film temperature, ``beta = 1 / T_film``.

    Parameters
    ----------
    delta_t_k : float or array [K]   surface minus air (its magnitude is used).
    height_m : float or array [m]    plate height along the flow, > 0.
    air_temp_c : float or array [degC]
    pressure_pa : float or array [Pa]

    Returns
    -------
    ndarray [W/(m2 K)]

    Notes
    -----
    Valid for a plate in still air, laminar and turbulent. Fins closer than the boundary-layer
    thickness (a few mm) do worse: give a measured ``resistance_k_w`` for dense fin arrays.

    References
    ----------
    Churchill, S.W. and Chu, H.H.S. (1975). Correlating equations for laminar and turbulent free
    convection from a vertical plate. Int. J. Heat Mass Transfer 18, 1323-1329.
    Incropera, F.P. and DeWitt, D.P. Fundamentals of Heat and Mass Transfer, eq. 9.26.
    """
    dt = np.abs(np.asarray(delta_t_k, dtype=float))
    air_k = np.asarray(air_temp_c, dtype=float) + KELVIN
    film_k = air_k + np.asarray(delta_t_k, dtype=float) / 2.0
    k, nu, pr = air_properties(film_k, pressure_pa)
    height = np.asarray(height_m, dtype=float)
    rayleigh = GRAVITY_M_S2 * dt * height**3 / (film_k * nu * nu / pr)
    nusselt = (0.825 + 0.387 * rayleigh ** (1 / 6) / (1 + (0.492 / pr) ** (9 / 16)) ** (8 / 27)) ** 2
    return nusselt * k / height


def forced_plate_convection_w_m2k(wind_m_s: Any, length_m: Any, air_temp_c: Any,
                                  pressure_pa: Any = 101325.0) -> np.ndarray:
    """Forced-convection coefficient of a flat plate in a parallel air stream (mean over its length).

    Method: laminar boundary layer, ``Nu_L = 0.664 Re_L**0.5 Pr**(1/3)`` (Re_L below about 5e5, which
    a sink tens of mm long in wind up to ~30 m/s stays within); air properties at air temperature.

    Parameters
    ----------
    wind_m_s : float or array [m/s]   air speed past the sink (>= 0).
    length_m : float or array [m]     plate length along the flow, > 0.
    air_temp_c : float or array [degC]
    pressure_pa : float or array [Pa]

    Returns
    -------
    ndarray [W/(m2 K)]

    References
    ----------
    Incropera, F.P. and DeWitt, D.P. Fundamentals of Heat and Mass Transfer, eq. 7.30.
    """
    k, nu, pr = air_properties(np.asarray(air_temp_c, dtype=float) + KELVIN, pressure_pa)
    length = np.asarray(length_m, dtype=float)
    reynolds = np.maximum(np.asarray(wind_m_s, dtype=float), 0.0) * length / nu
    return 0.664 * np.sqrt(reynolds) * pr ** (1.0 / 3.0) * k / length


def fin_efficiency(h_w_m2k: Any, fin_length_m: Any, thickness_m: Any, conductivity_w_mk: Any) -> np.ndarray:
    """Efficiency of a straight rectangular fin with an adiabatic tip [-].

    Method: ``eta = tanh(m L) / (m L)``, ``m = sqrt(2 h / (k t))``; 1 for a fin of no length.

    Parameters
    ----------
    h_w_m2k : convective coefficient on the fin [W/(m2 K)].
    fin_length_m : how far the fin stands off the base [m].
    thickness_m : fin thickness [m].
    conductivity_w_mk : fin metal's conductivity [W/(m K)].

    References
    ----------
    Incropera, F.P. and DeWitt, D.P. Fundamentals of Heat and Mass Transfer, eq. 3.89 and Table 3.5.
    """
    ml = np.sqrt(2.0 * np.asarray(h_w_m2k, dtype=float) / (np.asarray(conductivity_w_mk, dtype=float)
                                                            * np.asarray(thickness_m, dtype=float)))
    ml = ml * np.asarray(fin_length_m, dtype=float)
    return np.where(ml > 1e-9, np.tanh(ml) / np.where(ml > 1e-9, ml, 1.0), 1.0)


def radiation_w_m2k(emissivity: Any, surface_temp_k: Any, surroundings_temp_k: Any) -> np.ndarray:
    """Linearised radiative coefficient of a small grey surface in large surroundings.

    Method: ``h = eps sigma (Ts**2 + Tsur**2)(Ts + Tsur)``, so that ``h (Ts - Tsur)`` is the exact
    net exchange ``eps sigma (Ts**4 - Tsur**4)``. At Ts = Tsur = 300 K and eps = 1: 6.12 W/(m2 K).

    Parameters
    ----------
    emissivity : float or array [-]           0..1.
    surface_temp_k : float or array [K]
    surroundings_temp_k : float or array [K]  taken equal to the air temperature.

    Returns
    -------
    ndarray [W/(m2 K)]

    References
    ----------
    Incropera, F.P. and DeWitt, D.P. Fundamentals of Heat and Mass Transfer, eq. 1.9.
    """
    ts = np.asarray(surface_temp_k, dtype=float)
    tsur = np.asarray(surroundings_temp_k, dtype=float)
    return np.asarray(emissivity, dtype=float) * STEFAN_BOLTZMANN * (ts**2 + tsur**2) * (ts + tsur)


def solve_thermal_network(delta_t_total_k: Any, air_temp_c: Any, resistance_before_sink_k_w: Any,
                          sink: HeatSink, pressure_pa: float = 101325.0, iterations: int = 40,
                          wind_m_s: Any = None) -> tuple[np.ndarray, np.ndarray]:
    """Heat-sink resistance and heat flow of the series network surface -> module -> sink -> air.

    Method: with a given sink resistance the network is linear. Otherwise the sink's conductance is
    ``h_conv eta_o A + h_rad A_env``: convection over the wetted area ``A`` at the overall surface
    efficiency ``eta_o = 1 - share_fin (1 - eta_fin)`` (:func:`fin_efficiency`), radiation from the
    envelope ``A_env`` only (:attr:`HeatSink.envelope_area_cm2`). ``h_conv`` is natural convection on
    a vertical plate (:func:`vertical_plate_convection_w_m2k`) and, given a wind speed (outdoors),
    forced convection (:func:`forced_plate_convection_w_m2k`) combined as
    ``(h_nat**3 + h_forced**3)**(1/3)``. It depends on the sink's own temperature rise, found by
    damped fixed-point iteration (``h`` grows like ``dT**0.25``; a few tens of steps).

    Parameters
    ----------
    delta_t_total_k : array [K]               hot surface minus air.
    air_temp_c : array [degC]                 air around the sink.
    resistance_before_sink_k_w : array [K/W]  hot contact + module (effective) + cold contact.
    sink : HeatSink
    pressure_pa : float [Pa]
    iterations : int
    wind_m_s : array [m/s] or None   wind past the sink (outdoors); None: still air.

    Returns
    -------
    (sink_resistance_k_w, heat_flow_w) : arrays [K/W], [W] (heat flow positive from surface to air).

    References
    ----------
    Churchill & Chu (1975); Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, ch. 3, 7 and 9
    (the cube rule for mixed convection, eq. 9.64).
    """
    dt_total = np.asarray(delta_t_total_k, dtype=float)
    r_before = np.broadcast_to(np.asarray(resistance_before_sink_k_w, dtype=float), dt_total.shape)
    air_c = np.broadcast_to(np.asarray(air_temp_c, dtype=float), dt_total.shape)
    if sink.resistance_k_w is not None:
        r_sink = np.full(dt_total.shape, float(sink.resistance_k_w))
        return r_sink, dt_total / (r_before + r_sink)
    area_m2 = sink.area_cm2 * 1e-4
    envelope_m2 = min(sink.envelope_area_cm2, sink.area_cm2) * 1e-4
    height_m = sink.height_mm * 1e-3
    forced = (None if wind_m_s is None or sink.convection_w_m2k is not None
              else forced_plate_convection_w_m2k(np.broadcast_to(np.asarray(wind_m_s, dtype=float), dt_total.shape),
                                                 height_m, air_c, pressure_pa))

    def sink_resistance(dt_sink: np.ndarray) -> np.ndarray:
        if sink.convection_w_m2k is not None:
            h_conv = np.full(dt_sink.shape, float(sink.convection_w_m2k))
        else:
            h_conv = vertical_plate_convection_w_m2k(dt_sink, height_m, air_c, pressure_pa)
            if forced is not None:
                h_conv = np.cbrt(h_conv**3 + forced**3)
        eta_fin = fin_efficiency(h_conv, sink.fin_length_mm * 1e-3, sink.fin_thickness_mm * 1e-3,
                                 sink.fin_conductivity_w_mk)
        eta_o = 1.0 - sink.fin_area_share * (1.0 - eta_fin)
        h_rad = radiation_w_m2k(sink.emissivity, air_c + KELVIN + dt_sink, air_c + KELVIN)
        return 1.0 / (area_m2 * eta_o * h_conv + envelope_m2 * h_rad)

    dt_sink = 0.5 * dt_total
    for _ in range(iterations):
        r_sink = sink_resistance(dt_sink)
        dt_sink = 0.5 * dt_sink + 0.5 * dt_total * r_sink / (r_before + r_sink)
    r_sink = sink_resistance(dt_sink)
    return r_sink, dt_total / (r_before + r_sink)


# --------------------------------------------------------------------------------------------
# Hot side
# --------------------------------------------------------------------------------------------


#: Largest hot-side file read [bytes]: a year of hourly temperatures is about 100 kB.
MAX_HOT_SIDE_BYTES = 20_000_000


def read_hot_side_csv(path: Path, column: str, field: str = "hot_side.file") -> np.ndarray:
    """Hourly hot-surface temperatures [degC] from a CSV file with a header row and 8760 rows.

    Raises
    ------
    SiteInputError
        Naming the file and the column (or field) when the file is missing, unreadable, lacks the
        column, has another number of rows, or holds a value that is not a temperature.
    """
    name = str(path)
    try:
        size = Path(path).stat().st_size
        if size > MAX_HOT_SIDE_BYTES:
            raise SiteInputError(f"a CSV file of at most {MAX_HOT_SIDE_BYTES // 1_000_000} MB", file=name,
                                 field=field, got=f"{size:,} bytes")
        text = Path(path).read_bytes().decode("utf-8-sig")
    except FileNotFoundError:
        raise SiteInputError("an existing CSV file", file=name, field=field) from None
    except (UnicodeDecodeError, OSError) as exc:
        raise SiteInputError("a readable UTF-8 text CSV file", file=name, field=field,
                             got=type(exc).__name__) from None
    if "\x00" in text:
        raise SiteInputError("a text CSV file", file=name, field=field, got="NUL bytes (a binary file?)")
    try:
        frame = pd.read_csv(io.StringIO(text), comment="#", skipinitialspace=True, dtype=str)
    except pd.errors.EmptyDataError:
        raise SiteInputError("a CSV file with a header row", file=name, field=field, got="no rows") from None
    except pd.errors.ParserError as exc:
        shape = re.search(r"Expected (\d+) fields in line (\d+), saw (\d+)", str(exc))
        raise SiteInputError("a CSV file with a header row and as many cells in every row"
                             + (f" ({shape[1]})" if shape else ", quotes closed"), file=name, field=field,
                             got=f"{shape[3]} cells" if shape else None) from None
    except Exception as exc:   # the CSV parser on hostile bytes: still one line
        raise SiteInputError("a CSV file with a header row", file=name, field=field,
                             got=f"a table the CSV parser stopped on ({type(exc).__name__})") from None
    frame.columns = [str(c).strip() for c in frame.columns]
    if column not in frame.columns:
        raise SiteInputError(f"a column named '{column}'", file=name, field=column,
                             got=", ".join(frame.columns)) from None
    if list(frame.columns).count(column) > 1:
        raise SiteInputError(f"one column named '{column}'", file=name, field=column,
                             got=", ".join(frame.columns)) from None
    if len(frame) != HOURS_PER_YEAR:
        raise SiteInputError(f"{HOURS_PER_YEAR} hourly rows", file=name, field=column, got=len(frame))
    raw = frame[column]
    values = pd.to_numeric(raw, errors="coerce").to_numpy(dtype=float)
    bad = ~np.isfinite(values) | (values < -100.0) | (values > 1000.0)
    if bad.any():
        first = int(np.flatnonzero(bad)[0])
        got = raw.iloc[first]
        raise SiteInputError("a temperature in degC from -100 to 1000", file=name, field=column,
                             got="an empty cell" if pd.isna(got) else str(got),
                             line=_file_line_of_row(path, first))
    return values


def _file_line_of_row(path: Path, row: int) -> int | None:
    """1-based line number in the file of data row ``row`` (0-based), skipping comments and blanks."""
    try:
        lines = Path(path).read_text(encoding="utf-8", errors="replace").splitlines()
    except OSError:
        return None
    content = [i for i, text in enumerate(lines, start=1)
               if text.strip() and not text.lstrip().startswith("#")]
    return content[row + 1] if row + 1 < len(content) else None


def hot_side_temperature_c(hot_side: ConstantHotSide | ScheduledHotSide | FileHotSide,
                           air_temp_c: np.ndarray, ctx: SpotContext | None = None) -> np.ndarray:
    """Hourly hot-surface temperature [degC] over the reference year.

    Parameters
    ----------
    hot_side : ConstantHotSide, ScheduledHotSide or FileHotSide
    air_temp_c : array (8760,) [degC]  air temperature, used when a scheduled process is off and
        ``process_off_c`` is not given.
    ctx : SpotContext  needed for ``mode = "file"`` (resolves the file name).
    """
    if isinstance(hot_side, ConstantHotSide):
        return np.full(HOURS_PER_YEAR, float(hot_side.surface_c))
    if isinstance(hot_side, ScheduledHotSide):
        off = (air_temp_c if hot_side.process_off_c is None
               else np.full(HOURS_PER_YEAR, float(hot_side.process_off_c)))
        return np.where(hot_side.process.mask(), float(hot_side.process_on_c), off)
    if ctx is None:
        raise ValueError("a SpotContext is needed to read a hot-side file")
    return read_hot_side_csv(ctx.resolve(hot_side.file, "hot_side.file"), hot_side.column)


# --------------------------------------------------------------------------------------------
# Yield
# --------------------------------------------------------------------------------------------


def thermoelectric_output(spec: ThermoelectricSource, ctx: SpotContext) -> SourceOutput:
    """Hourly matched-load power of the thermoelectric modules over the reference year.

    Method
    ------
    1. Hot surface temperature per hour (constant, process schedule or file); cold side = air
       temperature + ``cold_side_offset_c``.
    2. Per module, series thermal network: hot contact + module + cold contact + heat sink. The
       module's resistance is lowered to ``R_th / (1 + Z T_mean / 2)`` by Peltier feedback at matched
       load (``peltier_feedback``; off: Peltier and Joule terms neglected). The heat sink is given in
       K/W or solved for natural convection (Churchill & Chu) plus radiation.
    3. ``dT_module = dT_total R_module / R_total``; matched-load power ``(alpha dT)**2 / (4R)`` per
       module, times ``modules`` (series and parallel wiring give the same power).
    4. Voltage at matched load ``|alpha dT| / 2`` times the modules in series (one for parallel).

    A hot side colder than the air works too: heat flows from the air into the surface, the power
    still grows with the square of the difference and the polarity reverses.

    Parameters
    ----------
    spec : ThermoelectricSource
    ctx : SpotContext  uses ``air_temp_c``, ``altitude_m`` (air pressure) and ``resolve``.

    Returns
    -------
    SourceOutput
        ``power_w`` [W] at the modules' terminals into a matched load, ``voltage_v`` [V]; details
        ``hot_side_c``, ``cold_air_c`` [degC], ``delta_t_total_k``, ``delta_t_module_k`` [K],
        ``heat_flow_w`` [W per module], ``heat_sink_resistance_k_w`` [K/W].

    Validity: bismuth-telluride modules from about -40 to their rated hot-side temperature; figures
    taken constant with temperature.

    References
    ----------
    Rowe, D.M. (ed.) (1995). CRC Handbook of Thermoelectrics. CRC Press.
    Stevens, J.W. (2001). Energy Conversion and Management 42, 709-720.
    Churchill, S.W. and Chu, H.H.S. (1975). Int. J. Heat Mass Transfer 18, 1323-1329.
    """
    cold_c = ctx.air_temp_c + spec.cold_side_offset_c
    hot_c = hot_side_temperature_c(spec.hot_side, ctx.air_temp_c, ctx)
    dt_total = hot_c - cold_c
    mean_k = (hot_c + cold_c) / 2.0 + KELVIN
    r_module = np.full(HOURS_PER_YEAR, spec.module_thermal_resistance_k_w)
    if spec.peltier_feedback:
        zt = figure_of_merit_zt(spec.seebeck_v_k, spec.resistance_ohm, spec.module_thermal_resistance_k_w,
                                mean_k)
        r_module = effective_module_resistance_k_w(spec.module_thermal_resistance_k_w, zt)
    footprint_m2 = (spec.module_side_mm * 1e-3) ** 2
    r_pipe = spec.pipe.resistance_k_w(footprint_m2) if spec.pipe is not None else 0.0
    r_hot = spec.hot_contact_resistance_k_w + r_pipe
    r_before = r_hot + r_module + spec.cold_contact_resistance_k_w
    pressure = float(standard_pressure_pa(ctx.altitude_m))
    wind = (None if ctx.indoors
            else spec.heat_sink.wind_exposure * ctx.weather["wind_speed_m_s"].to_numpy(dtype=float))
    r_sink, heat_w = solve_thermal_network(dt_total, cold_c, r_before, spec.heat_sink, pressure, wind_m_s=wind)
    dt_module = module_delta_t_k(dt_total, r_module, r_hot + spec.cold_contact_resistance_k_w + r_sink)
    if spec.power_curve is not None:
        power_w = spec.modules * curve_power_w(spec.power_curve, dt_module)
    else:
        power_w = spec.modules * matched_load_power_w(spec.seebeck_v_k, dt_module, spec.resistance_ohm)
    in_series = spec.modules if spec.wiring == "series" else 1
    voltage_v = matched_load_voltage_v(spec.seebeck_v_k, dt_module, in_series)

    notes: list[str] = []
    reversed_hours = int(np.count_nonzero(dt_total < 0))
    if reversed_hours:
        notes.append(
            f"In {reversed_hours} hours the hot surface is colder than the air: heat then flows from the "
            "air into the surface; the modules still give power (it grows with the square of the "
            "temperature difference) but with reversed polarity, so the converter must accept either "
            "polarity."
        )
    too_hot = int(np.count_nonzero(hot_c > spec.max_hot_side_c))
    if too_hot:
        notes.append(f"The hot surface exceeds the module's rated {spec.max_hot_side_c:.0f} degC in "
                     f"{too_hot} hours (up to {hot_c.max():.0f} degC): fit a spacer or a module rated "
                     "hotter.")
    producing = power_w > 0
    v_start = spec.conditioning.cold_start_min_input_v
    below = int(np.count_nonzero(producing & (voltage_v < v_start)))
    if below:
        notes.append(f"In {below} of {int(producing.sum())} producing hours the voltage at matched load "
                     f"is below the converter's cold-start input of {v_start * 1e3:.0f} mV; more modules "
                     "in series raise it.")
    median_dt = float(np.median(np.abs(dt_total)))
    if median_dt > 0:
        share = float(np.median(np.abs(dt_module))) / median_dt
        if share < 0.2:
            notes.append(f"Only {share:.0%} of the temperature difference falls across the module; the "
                         "heat sink and contacts take the rest. A larger heat sink gains most.")
    return SourceOutput(
        power_w=power_w,
        voltage_v=voltage_v,
        details={
            "hot_side_c": hot_c,
            "pipe_surface_c": hot_c - heat_w * r_pipe,
            "cold_air_c": cold_c,
            "delta_t_total_k": dt_total,
            "delta_t_module_k": dt_module,
            "heat_flow_w": heat_w,
            "heat_sink_resistance_k_w": r_sink,
        },
        notes=notes,
    )


#: What the rest of the program needs to know about this kind (registered in ``sources/__init__.py``).
KIND = SourceKind(
    kind="thermoelectric", model=ThermoelectricSource, output=thermoelectric_output,
    name="thermoelectric module", group="heat", group_title="Heat",
    size_knobs=(SizeKnob("modules", "Thermoelectric modules", proportional=True,
                         voltage_scales=lambda spec: spec.wiring == "series"),
                SizeKnob("heat_sink.area_cm2", "Heat-sink area")),
    outage_stops=True,
    file_fields=("hot_side.file",),
    presets=(PresetField("preset", "thermo-module", MODULE_PRESETS),),
    new_source={"hot_side": {"mode": "constant", "surface_c": 60.0}},
    cautions=("hot_surface", "work_at_height"),
    method=("Thermoelectric module: the hot surface's temperature by schedule, a file or a constant; "
            "a thermal circuit of contact resistances, the module and a free-convection and radiation "
            "heat sink, solved for the temperature difference across the module; power into a "
            "matched load."),
    reference_modules=("siteharvest.sources.thermoelectric",),
)

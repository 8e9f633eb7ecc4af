"""Indoor light: a small photovoltaic cell under lamps and daylight from a window.

Method
------
1. Illuminance at the cell, hour by hour [lx]:

   - lamps: ``lamp_lux`` while the lamp schedule is on; ``occupancy_fraction`` is the share of
     scheduled hours the lamps are actually lit (the hourly mean mixes lit and unlit states, each
     evaluated separately because the cell's efficiency depends on the light level);
   - daylight: ``daylight_factor_pct`` / 100 times the outdoor diffuse horizontal illuminance
     (the weather's ``diffuse_illum_lx`` column, else the Perez et al. 1990 model applied to the
     weather's irradiance, see :func:`siteharvest.photometry.daylight_illuminance_lx`). The daylight
     factor method covers skylight only: direct sun falling on the cell through a facing window is
     not modelled (a cell in a sunlit patch should be treated as an outdoor solar source behind
     glass).

2. Irradiance from illuminance, per light component, through the luminous efficacy of its spectrum
   over 300-1200 nm (lamp spectra by ``light_source``; daylight as CIE D65), see
   :mod:`siteharvest.photometry`.

3. Cell power. The cell is characterised by its conversion efficiency ``efficiency_ref_pct`` at the
   reference condition (1000 lx of neutral-white LED light, CIE LED-B3), its open-circuit voltage
   per cell there and its diode ideality factor. Each component's irradiance is weighted by the
   spectral match of the cell to that light (the short-circuit current per watt relative to the
   reference light, from an approximate external quantum efficiency curve per technology, see
   :data:`RESPONSE_SHAPES`); the sum is the reference-equivalent irradiance, which sets the
   photocurrent. Efficiency then falls at low light through the logarithmic open-circuit voltage:
   eta = eta_ref * max(0, 1 + n k T / q * ln(G/G_ref) / Voc_ref), with G/G_ref the ratio of
   photocurrents (fill factor held constant). Power = eta_ref * (that factor) * reference-equivalent
   irradiance * area, which equals the sum over components of irradiance x efficiency for that
   spectrum at the total light level x area.

4. The voltage offered to the converter: ``cells_in_series`` x 0.8 x Voc(G) (maximum-power voltage
   near 80 % of Voc, common practice for indoor cells).

Validity: 10-5000 lx at the cell, cell at room temperature. Shunt leakage, which makes crystalline
silicon lose much more below ~200 lx than this model shows (Apostolou et al. 2016), is not
modelled. Reference efficiencies are typical figures (see :data:`TECHNOLOGIES`): use a datasheet
value where one exists.

References
----------
Perez, R., Ineichen, P., Seals, R., Michalsky, J. and Stewart, R. (1990). Modeling daylight
availability and irradiance components from direct and global irradiance. Solar Energy 44(5),
271-289.
Freunek, M., Freunek, M. and Reindl, L.M. (2013). Maximum efficiencies of indoor photovoltaic
devices. IEEE Journal of Photovoltaics 3(1), 59-64.
Apostolou, G., Reinders, A. and Verwaal, M. (2016). Comparison of the indoor performance of 12
commercial PV products by a simple model. Energy Science & Engineering 4(1), 69-85.
Teran, A.S. et al. (2016). AlGaAs photovoltaics for indoor energy harvesting in mm-scale wireless
sensor nodes. IEEE Transactions on Electron Devices 63(7), 2820-2825.
Green, M.A. (1982). Solar Cells: Operating Principles, Technology and System Applications.
Prentice-Hall (open-circuit voltage against light level, ideality factor).
CIE 015:2018 Colorimetry, 4th ed.; BS 8206-2 / CIE daylight factor definition.
"""

from __future__ import annotations

from functools import cache
from typing import Any, Literal

import numpy as np
from pydantic import Field, field_validator, model_validator

from .. import photometry
from ..conditioning import ConditioningSpec
from ..context import SpotContext
from ..errors import SiteInputError
from ..fields import quantity
from ..schedule import WeeklySchedule
from .base import PowerLevel, PresetField, SizeKnob, SourceBase, SourceKind, SourceOutput

BOLTZMANN_OVER_Q_V_K = 8.617333262e-5  # k/q [V/K] (CODATA 2018)
HC_OVER_Q_NM_V = 1239.84198            # h c / q [V nm]: photon energy [eV] = 1239.84 / wavelength [nm]

#: Reference condition of ``efficiency_ref_pct`` and ``voc_ref_v``.
REFERENCE_SOURCE = "neutral-white-led"
REFERENCE_LUX = 1000.0

#: Maximum-power voltage as a share of the open-circuit voltage (common practice, 0.75-0.85).
VMP_OVER_VOC = 0.8

Technology = Literal["amorphous-silicon", "crystalline-silicon", "organic-or-dye", "gallium-arsenide"]
LightSource = Literal["warm-white-led", "neutral-white-led", "cool-white-led", "fluorescent",
                      "fluorescent-triphosphor", "incandescent"]

#: Starting figures per cell technology, at 1000 lx of neutral-white LED light (all editable).
#: Efficiencies are typical of commercial cells (a-Si 3-9 %, from memory, and 5-6 % measured by
#: Apostolou, Reinders & Verwaal 2016, Energy Sci. Eng. 4(1):69-85; mono c-Si 5-7 % under mixed indoor
#: light; GaAs ~19 % at 580 lx white LED, Teran et al. 2016; dye and organic cells 15 % for products,
#: 25-35 % in laboratories).
#: Voc per cell and ideality factors are common-practice values for these technologies.
TECHNOLOGIES: dict[str, dict[str, float]] = {
    "amorphous-silicon": {"efficiency_ref_pct": 6.0, "voc_ref_v": 0.65, "ideality_factor": 1.8},
    "crystalline-silicon": {"efficiency_ref_pct": 6.0, "voc_ref_v": 0.42, "ideality_factor": 1.3},
    "organic-or-dye": {"efficiency_ref_pct": 15.0, "voc_ref_v": 0.75, "ideality_factor": 1.5},
    "gallium-arsenide": {"efficiency_ref_pct": 20.0, "voc_ref_v": 0.85, "ideality_factor": 1.2},
}
DEFAULT_TECHNOLOGY = "amorphous-silicon"

#: Approximate external quantum efficiency shape per technology, as logistic edges:
#: (band gap [eV], red half-response wavelength [nm], red edge width [nm], blue half-response
#: wavelength [nm], blue edge width [nm]). Basis: the band-gap cut-off lambda_g = 1239.84 / E_g,
#: with the red edge placed below it where absorption weakens (thin a-Si:H, E_g ~1.75 eV, responds
#: to ~750 nm with half response near 660 nm; c-Si, indirect gap 1.12 eV, half response near
#: 1040 nm; GaAs, direct gap 1.42 eV, sharp edge at ~870 nm; indoor organic and dye absorbers,
#: effective gap ~1.8 eV, half response near 670 nm); the blue edge from absorption in window and
#: contact layers. Only the shape matters: the level is fixed by ``efficiency_ref_pct``.
RESPONSE_SHAPES: dict[str, tuple[float, float, float, float, float]] = {
    "amorphous-silicon": (1.75, 660.0, 22.0, 400.0, 18.0),
    "crystalline-silicon": (1.12, 1040.0, 30.0, 370.0, 20.0),
    "organic-or-dye": (1.80, 670.0, 20.0, 390.0, 15.0),
    "gallium-arsenide": (1.42, 862.0, 6.0, 380.0, 15.0),
}


# --------------------------------------------------------------------------------------------------
# Physics: small pure functions
# --------------------------------------------------------------------------------------------------

def quantum_efficiency(technology: str) -> np.ndarray:
    """Approximate external quantum efficiency shape [-] of a cell technology on ``GRID_NM``.

    Method
    ------
    EQE(lambda) = 0.9 / (1 + exp((lambda - lambda_red)/w_red)) / (1 + exp((lambda_blue - lambda)/w_blue)),
    set to zero beyond the band-gap wavelength 1239.84/E_g (see :data:`RESPONSE_SHAPES` for the
    basis of each edge).

    Parameters
    ----------
    technology : str
        A key of :data:`TECHNOLOGIES`.

    Returns
    -------
    ndarray [-] on :data:`siteharvest.photometry.GRID_NM`.

    References
    ----------
    Freunek, Freunek and Reindl (2013), IEEE J. Photovoltaics 3(1), 59-64 (band gaps and spectral
    response of indoor cell technologies).
    """
    if technology not in RESPONSE_SHAPES:
        raise SiteInputError("one of " + ", ".join(RESPONSE_SHAPES), field="technology", got=technology)
    gap_ev, red_nm, red_w, blue_nm, blue_w = RESPONSE_SHAPES[technology]
    wl = photometry.GRID_NM
    eqe = 0.9 / (1.0 + np.exp((wl - red_nm) / red_w)) / (1.0 + np.exp((blue_nm - wl) / blue_w))
    return np.where(wl <= HC_OVER_Q_NM_V / gap_ev, eqe, 0.0)


def spectral_responsivity_a_w(technology: str) -> np.ndarray:
    """Spectral responsivity SR = EQE * lambda / 1239.84 [A/W] on ``GRID_NM`` (lambda in nm)."""
    return quantum_efficiency(technology) * photometry.GRID_NM / HC_OVER_Q_NM_V


@cache
def spectral_match(source: str, technology: str) -> float:
    """Spectral match of a cell to a light source relative to the reference light [-].

    Method
    ------
    M = [integral(S_x SR) / integral(S_x)] / [integral(S_ref SR) / integral(S_ref)], integrals over
    300-1200 nm: the short-circuit current per watt of the light, relative to that under the
    reference light (neutral-white LED). The cell's efficiency under light x is eta_ref * M at equal
    photocurrent.

    Parameters
    ----------
    source : str  a key of :data:`siteharvest.photometry.LIGHT_SOURCES`.
    technology : str  a key of :data:`TECHNOLOGIES`.

    References
    ----------
    IEC 60904-7 (computation of the spectral mismatch correction), in ratio form.
    """
    sr = spectral_responsivity_a_w(technology)
    return (photometry.spectral_weighted_mean(source, sr)
            / photometry.spectral_weighted_mean(REFERENCE_SOURCE, sr))


def irradiance_per_lux_w_m2(source: str) -> float:
    """Irradiance over 300-1200 nm per lux of a light source [W/m2/lx]."""
    return photometry.irradiance_per_klx_w_m2(source, photometry.CELL_BAND_NM) / 1000.0


def thermal_voltage_v(temp_c: np.ndarray | float) -> np.ndarray:
    """k T / q [V] at ``temp_c`` [degC]."""
    return BOLTZMANN_OVER_Q_V_K * (np.asarray(temp_c, dtype=float) + 273.15)


def low_light_factor(relative_light: np.ndarray, voc_ref_v: float, ideality_factor: float,
                     temp_c: np.ndarray | float = 25.0) -> np.ndarray:
    """Efficiency relative to the reference light level [-], from the logarithmic open-circuit voltage.

    Method
    ------
    f = max(0, 1 + n (k T / q) ln(G/G_ref) / Voc_ref): the open-circuit voltage of a diode falls by
    n k T/q per e-fold drop of photocurrent, and the efficiency follows it with the fill factor held
    constant. f = 0 where G = 0.

    Parameters
    ----------
    relative_light : array [-]
        Photocurrent relative to that at the reference condition, G/G_ref >= 0.
    voc_ref_v : float [V]
        Open-circuit voltage of one cell at the reference condition.
    ideality_factor : float [-]
        Diode ideality factor n (1-2 for most cells).
    temp_c : array or float [degC]
        Cell temperature.

    Returns
    -------
    ndarray [-], 0 at no light, 1 at the reference level, slowly above 1 beyond it.

    Validity: G/G_ref 0.005-20 (5-20 000 lx); below that shunt leakage, ignored here, dominates.

    References
    ----------
    Green, M.A. (1982). Solar Cells. Prentice-Hall, ch. 5 (Voc = n kT/q ln(J_L/J_0 + 1)).
    """
    x = np.asarray(relative_light, dtype=float)
    log_x = np.log(np.where(x > 0, x, 1.0))
    f = 1.0 + ideality_factor * thermal_voltage_v(temp_c) * log_x / voc_ref_v
    return np.where(x > 0, np.maximum(f, 0.0), 0.0)


def open_circuit_voltage_v(relative_light: np.ndarray, voc_ref_v: float, ideality_factor: float,
                           temp_c: np.ndarray | float = 25.0) -> np.ndarray:
    """Open-circuit voltage of one cell [V]: Voc_ref + n k T/q ln(G/G_ref), floored at 0, 0 in the dark.

    Parameters as :func:`low_light_factor`. References: Green (1982).
    """
    return voc_ref_v * low_light_factor(relative_light, voc_ref_v, ideality_factor, temp_c)


def _check_lux(lux: np.ndarray, field: str) -> np.ndarray:
    lux = np.asarray(lux, dtype=float)
    bad = ~np.isfinite(lux) | (lux < 0) | (lux > photometry.MAX_ILLUMINANCE_LX)
    if np.any(bad):
        raise SiteInputError(f"illuminance from 0 to {photometry.MAX_ILLUMINANCE_LX:.0f} lx", field=field,
                             got=float(lux[bad].flat[0]))
    return lux


def cell_power_density_w_m2(lux_by_source: dict[str, np.ndarray], technology: str, efficiency_ref_pct: float,
                            voc_ref_v: float, ideality_factor: float,
                            temp_c: np.ndarray | float = 25.0,
                            efficiency_table: list[tuple[float, float]] | None = None,
                            table_light_source: str = "neutral-white-led",
                            ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Maximum-power density of a cell under mixed light [W/m2 of cell].

    Method
    ------
    Per light component c with illuminance E_v,c: irradiance E_c = E_v,c / K_c (300-1200 nm) and
    reference-equivalent irradiance E_c M_c (M from :func:`spectral_match`). With G = sum E_c M_c
    and G_ref the irradiance of 1000 lx of the reference light:
    P = eta_ref * low_light_factor(G/G_ref) * G.

    With a measured ``efficiency_table`` (illuminance [lx], efficiency [%]) under
    ``table_light_source`` instead: the table light's illuminance E* giving the same equivalent
    irradiance, E* = G / (K_t^-1 M_t), is looked up (linear in log illuminance, held at the table's
    ends) and P = eta(E*) G / M_t, so the table is used exactly under its own light.

    Parameters
    ----------
    lux_by_source : dict of str -> array [lx]
        Illuminance at the cell from each light source (keys of ``photometry.LIGHT_SOURCES``).
    technology : str  a key of :data:`TECHNOLOGIES`.
    efficiency_ref_pct : float [%]  efficiency at 1000 lx of neutral-white LED light.
    voc_ref_v : float [V]  open-circuit voltage of one cell there.
    ideality_factor : float [-]
    temp_c : array or float [degC]  cell temperature.

    Returns
    -------
    (power_w_m2, irradiance_w_m2, relative_light) : arrays [W/m2], [W/m2 over 300-1200 nm], [-]
    """
    irradiance = 0.0
    equivalent = 0.0
    for source, lux in lux_by_source.items():
        lux = _check_lux(lux, "illuminance_lx")
        e = lux * irradiance_per_lux_w_m2(source)
        irradiance = irradiance + e
        equivalent = equivalent + e * spectral_match(source, technology)
    g_ref = REFERENCE_LUX * irradiance_per_lux_w_m2(REFERENCE_SOURCE)
    relative = np.asarray(equivalent, dtype=float) / g_ref
    if efficiency_table is not None:
        table = np.asarray(sorted(efficiency_table), dtype=float)
        match_t = spectral_match(table_light_source, technology)
        lux_t = np.asarray(equivalent, dtype=float) / (irradiance_per_lux_w_m2(table_light_source) * match_t)
        eta = np.interp(np.log10(np.maximum(lux_t, 1e-9)), np.log10(table[:, 0]), table[:, 1]) / 100.0
        power = np.where(lux_t > 0, eta * np.asarray(equivalent, dtype=float) / match_t, 0.0)
        return np.asarray(power, dtype=float), np.asarray(irradiance, dtype=float), relative
    factor = low_light_factor(relative, voc_ref_v, ideality_factor, temp_c)
    power = efficiency_ref_pct / 100.0 * factor * equivalent
    return np.asarray(power, dtype=float), np.asarray(irradiance, dtype=float), relative


def outdoor_diffuse_illuminance_lx(ctx: SpotContext) -> np.ndarray:
    """Outdoor diffuse horizontal illuminance for each hour [lx].

    The weather's ``diffuse_illum_lx`` column where present (hours it leaves blank are modelled),
    else the Perez et al. (1990) model on the weather's irradiance, with precipitable water from
    ``dew_point_c``, or ``temp_air_c`` with ``relative_humidity_pct``, or 2 cm.

    Raises SiteInputError (field ``diffuse_illum_lx``) when the column holds values outside
    0-150 000 lx or its ratio to ``dhi_w_m2`` is not a luminous efficacy (50-250 lm/W; files that
    store illuminance in units of 100 lx give about 1).
    """
    w = ctx.weather
    dhi = w["dhi_w_m2"].to_numpy(dtype=float)
    given = w["diffuse_illum_lx"].to_numpy(dtype=float) if "diffuse_illum_lx" in w else None
    if given is not None and np.isfinite(given).all():
        modelled = None
    else:
        humid = {}
        if "dew_point_c" in w:
            humid["dew_point_c"] = w["dew_point_c"].to_numpy(dtype=float)
        elif "relative_humidity_pct" in w:
            humid = {"temp_air_c": w["temp_air_c"].to_numpy(dtype=float),
                     "relative_humidity_pct": w["relative_humidity_pct"].to_numpy(dtype=float)}
        modelled = photometry.daylight_illuminance_lx(
            w["ghi_w_m2"].to_numpy(dtype=float), w["dni_w_m2"].to_numpy(dtype=float), dhi,
            ctx.solar_position["zenith"].to_numpy(dtype=float), ctx.dni_extra_w_m2.to_numpy(dtype=float),
            photometry.precipitable_water_cm(**humid),
        )["diffuse_illum_lx"].to_numpy()
    if given is None:
        return modelled
    known = np.isfinite(given)
    _check_lux(given[known], "diffuse_illum_lx")
    day = known & (dhi > 20.0)
    if day.sum() >= 24:
        efficacy = given[day].sum() / dhi[day].sum()
        if not 50.0 <= efficacy <= 250.0:
            raise SiteInputError("diffuse illuminance in lx, about 100-150 lm/W times dhi_w_m2 "
                                 "(is the column in units of 100 lx?)", field="diffuse_illum_lx",
                                 got=f"{efficacy:.1f} lx per W/m2")
    return given if modelled is None else np.where(known, given, modelled)


# --------------------------------------------------------------------------------------------------
# Site-file model
# --------------------------------------------------------------------------------------------------

class IndoorLightSource(SourceBase):
    """A photovoltaic cell indoors, lit by lamps on a schedule and by daylight through windows.

    Cell figures start from ``technology`` (one of :data:`TECHNOLOGIES`); any given figure overrides.
    """

    kind: Literal["indoor_light"] = "indoor_light"
    area_cm2: float = quantity(20.0, "cm2", "active cell area", gt=0, le=2000, step=1)
    technology: Technology = Field(DEFAULT_TECHNOLOGY, description="cell technology: one of "
                                   + ", ".join(TECHNOLOGIES) + " (sets the figures below and the "
                                   "spectral response)")
    efficiency_ref_pct: float = quantity(6.0, "%", "conversion efficiency at 1000 lx of neutral-white LED "
                                         "light (datasheet value where known)", gt=0, le=60, step=0.5)
    voc_ref_v: float = quantity(0.65, "V", "open-circuit voltage of one cell at 1000 lx", gt=0.05, le=2.0,
                                step=0.01)
    ideality_factor: float = quantity(1.8, "-", "diode ideality factor (sets the fall of voltage and "
                                      "efficiency at low light)", ge=0.8, le=4, step=0.1)
    cells_in_series: int = quantity(4, "-", "cells connected in series in the module", ge=1, le=100, step=1)
    lamp_lux: float = quantity(500.0, "lx", "illuminance from the lamps at the cell while they are lit "
                               "(a windowsill or a lit bench may exceed 5,000 lx)", ge=0,
                               le=photometry.MAX_ILLUMINANCE_LX, step=10)
    efficiency_table: list[tuple[float, float]] | None = Field(
        None, min_length=2, max_length=50,
        description="measured or datasheet efficiency against illuminance: pairs (illuminance [lx], "
                    "efficiency [%]) under table_light_source; replaces efficiency_ref_pct and the "
                    "low-light law for the power")
    table_light_source: LightSource = Field("neutral-white-led", description="the light the efficiency "
                                            "table was measured under: one of "
                                            + ", ".join(photometry.LAMP_SOURCES))
    light_source: LightSource = Field("neutral-white-led", description="kind of lamp: one of "
                                      + ", ".join(photometry.LAMP_SOURCES))
    lamp_schedule: WeeklySchedule = Field(
        default_factory=lambda: WeeklySchedule(hours="07-19", days="weekdays"),
        description="when the lamps are on (holidays in off_dates, shutdowns in shutdown_weeks)")
    occupancy_fraction: float = quantity(1.0, "-", "share of scheduled lamp hours the lamps are actually "
                                         "lit", ge=0, le=1, step=0.05)
    daylight_factor_pct: float = quantity(0.0, "%", "daylight factor at the cell: indoor illuminance as a "
                                          "share of outdoor diffuse horizontal illuminance (0 = no "
                                          "daylight)", ge=0, le=20, step=0.1)
    conditioning: ConditioningSpec = Field(
        default_factory=lambda: ConditioningSpec(preset="solar-cell-boost"),
        description="the power-conditioning stage (boost charger with maximum-power tracking by default)")

    @model_validator(mode="before")
    @classmethod
    def _start_from_technology(cls, data: Any) -> Any:
        if not isinstance(data, dict):
            return data
        name = data.get("technology", DEFAULT_TECHNOLOGY)
        start = TECHNOLOGIES.get(name, {}) if isinstance(name, str) else {}
        return {**start, **data}   # an unknown name (or a list, a table) fails on the field itself


    @field_validator("efficiency_table")
    @classmethod
    def _table(cls, table: list[tuple[float, float]] | None) -> list[tuple[float, float]] | None:
        if table is None:
            return table
        lux = [p[0] for p in table]
        if any(not (0 < x <= photometry.MAX_ILLUMINANCE_LX) for x in lux) or len(set(lux)) != len(lux):
            raise ValueError(f"efficiency_table illuminances must be distinct, from above 0 to "
                             f"{photometry.MAX_ILLUMINANCE_LX:.0f} lx")
        if any(not (0 <= p[1] <= 60) for p in table):
            raise ValueError("efficiency_table efficiencies must lie from 0 to 60 %")
        return sorted(table)


assert set(LightSource.__args__) == set(photometry.LAMP_SOURCES)  # type: ignore[attr-defined]


# --------------------------------------------------------------------------------------------------
# Yield
# --------------------------------------------------------------------------------------------------

def indoor_light_output(spec: IndoorLightSource, ctx: SpotContext) -> SourceOutput:
    """Hourly power of an indoor photovoltaic cell over the reference year.

    Composes the functions above (see the module docstring for the method).

    Parameters
    ----------
    spec : IndoorLightSource
    ctx : SpotContext
        Uses ``ctx.air_temp_c`` as cell temperature [degC] and, when ``daylight_factor_pct > 0``,
        the weather (``diffuse_illum_lx`` or the irradiance columns) and solar position.

    Returns
    -------
    SourceOutput
        ``power_w`` [W] at the cell's maximum-power point (hourly means); ``voltage_v`` [V] of the
        module at that point (0 in the dark); details ``illuminance_lx`` (mean at the cell),
        ``lamp_illuminance_lx``, ``daylight_illuminance_lx``, ``irradiance_w_m2`` (300-1200 nm),
        ``efficiency_pct``.
    """
    n = len(ctx.weather)
    temp_c = ctx.air_temp_c
    area_m2 = spec.area_cm2 * 1e-4
    lamp_on = spec.lamp_schedule.mask()[:n] & (spec.lamp_lux > 0) & (spec.occupancy_fraction > 0)
    if spec.daylight_factor_pct > 0:
        daylight_lx = spec.daylight_factor_pct / 100.0 * outdoor_diffuse_illuminance_lx(ctx)
    else:
        daylight_lx = np.zeros(n)
    lamp_lx = np.where(lamp_on, spec.lamp_lux, 0.0)
    cell = {"technology": spec.technology, "efficiency_ref_pct": spec.efficiency_ref_pct,
            "voc_ref_v": spec.voc_ref_v, "ideality_factor": spec.ideality_factor, "temp_c": temp_c,
            "efficiency_table": spec.efficiency_table, "table_light_source": spec.table_light_source}

    lit_light = {spec.light_source: lamp_lx, "daylight": daylight_lx}
    p_lit, e_lit, x_lit = cell_power_density_w_m2(lit_light, **cell)
    p_dark, e_dark, x_dark = cell_power_density_w_m2({"daylight": daylight_lx}, **cell)
    share = np.where(lamp_on, spec.occupancy_fraction, 0.0)
    power_w_m2 = share * p_lit + (1.0 - share) * p_dark
    irradiance = share * e_lit + (1.0 - share) * e_dark
    v_lit = open_circuit_voltage_v(x_lit, spec.voc_ref_v, spec.ideality_factor, temp_c)
    v_dark = open_circuit_voltage_v(x_dark, spec.voc_ref_v, spec.ideality_factor, temp_c)
    voc = np.where((share >= 0.5) | (x_dark <= 0), v_lit, v_dark)   # the state that holds most of the hour
    power_w = power_w_m2 * area_m2
    voltage_v = np.where(power_w > 0, spec.cells_in_series * VMP_OVER_VOC * voc, 0.0)
    efficiency = np.divide(power_w_m2, irradiance, out=np.zeros(n), where=irradiance > 0)

    mean_lamp_lx = share * lamp_lx
    notes: list[str] = []
    both = (mean_lamp_lx > 0) & (daylight_lx > 0)
    if both.any():
        notes.append(f"The cell sees lamp light and daylight together in {int(both.sum())} hours a year; "
                     "each is converted with its own spectrum and the two add up.")
    if not (mean_lamp_lx > 0).any() and not (daylight_lx > 0).any():
        notes.append("The cell gets no light: lamp_lux or occupancy_fraction is 0, or the lamp schedule "
                     "is never on, and daylight_factor_pct is 0.")
    lit = (mean_lamp_lx + daylight_lx) > 0
    if spec.technology == "crystalline-silicon" and lit.any():
        median_lx = float(np.median((lamp_lx + daylight_lx)[lit]))
        if median_lx < 200:
            notes.append(f"Crystalline silicon at about {median_lx:.0f} lx: real cells often lose more than "
                         "this model shows below ~200 lx (shunt leakage); amorphous silicon or organic "
                         "cells suit dim light better.")
    if spec.efficiency_table is None and float(np.max(lamp_lx + daylight_lx, initial=0.0)) > 5000.0:
        notes.append("Above 5,000 lx the cell's low-light law is extrapolated: give efficiency_table from "
                     "the cell's datasheet or a measurement for these light levels.")
    if spec.daylight_factor_pct > 0:
        notes.append("Daylight is skylight only (daylight factor method); direct sun through a window "
                     "onto the cell is not included.")
    lit_level = PowerLevel(p_lit * area_m2, np.where(p_lit > 0, spec.cells_in_series * VMP_OVER_VOC * v_lit, 0.0),
                           share)
    dark_level = PowerLevel(p_dark * area_m2,
                            np.where(p_dark > 0, spec.cells_in_series * VMP_OVER_VOC * v_dark, 0.0), 1.0 - share)
    return SourceOutput(
        power_w=power_w,
        voltage_v=voltage_v,
        levels=[lit_level, dark_level],
        details={
            "illuminance_lx": mean_lamp_lx + daylight_lx,
            "lamp_illuminance_lx": mean_lamp_lx,
            "daylight_illuminance_lx": daylight_lx,
            "irradiance_w_m2": irradiance,
            "efficiency_pct": 100.0 * efficiency,
        },
        notes=notes,
    )


#: What the rest of the program needs to know about this kind (registered in ``sources/__init__.py``).
KIND = SourceKind(
    kind="indoor_light", model=IndoorLightSource, output=indoor_light_output, name="indoor light cell",
    group="light", group_title="Light indoors",
    size_knobs=(SizeKnob("area_cm2", "Cell area", proportional=True),),
    presets=(PresetField("technology", "indoor-technology", TECHNOLOGIES),),
    new_source={"area_cm2": 20.0},
    cautions=("work_at_height", "electrical_enclosure"),
    method=("Indoor cell: illuminance from the lamps while their schedule and occupancy have them lit, "
            "plus daylight as a daylight factor times the outdoor diffuse illuminance; illuminance "
            "turned into irradiance through each light's spectrum; cell efficiency weighted by the "
            "cell's spectral match to each light and lowered at low light by the open-circuit voltage's "
            "logarithmic fall."),
    reference_modules=("siteharvest.sources.indoor_light", "siteharvest.photometry", "siteharvest.sun"),
)

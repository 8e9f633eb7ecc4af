"""Outdoor photovoltaic source: a small panel on a roof, mast or facade.

Chain, hour by hour (sun placed at mid-hour):

1. plane-of-array irradiance from the weather's GHI/DNI/DHI by a transposition model (Perez 1990
   by default; Hay & Davies 1980 or isotropic), split into beam, circumsolar, isotropic sky,
   horizon band and ground-reflected parts;
2. a far-horizon profile blocks the beam and circumsolar parts when the sun is below it and hides
   part of the sky dome (:func:`horizon_view_fractions`);
3. incidence-angle losses of the cover (pvlib ``iam``; diffuse parts by Marion 2017);
4. soiling as an optical loss;
5. cell temperature from the plane-of-array irradiance, air temperature and wind
   (King et al. 2004 module temperature model, coefficients by mounting);
6. efficiency at maximum power from the ADR model (Driesse et al. 2021) at that irradiance and
   cell temperature; power = effective irradiance x area x efficiency x (1 - wiring loss);
7. an operating-voltage estimate for cold-start checks (:func:`panel_mpp_voltage_v`).

Hours whose mid-hour sun is below the astronomical horizon give zero.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from typing import Annotated, Any, Literal

import numpy as np
from pydantic import Field, model_validator

from ..conditioning import ConditioningSpec
from ..context import SpotContext
from ..errors import choose
from ..fields import quantity
from ..sun import angle_of_incidence_deg
from .base import PresetField, SizeKnob, SourceBase, SourceKind, SourceOutput

G_REF_W_M2 = 1000.0
T_REF_C = 25.0
#: Elevation span of the Perez horizon-brightening band [deg] (Perez et al. 1990: 0 to 6.5 deg).
HORIZON_BAND_DEG = 6.5

# Low-light (ADR) parameters: k_d, k_rs, k_rsh of pvlib ``pvefficiency_adr`` with k_a = 1 (tc_d comes
# from the preset's temperature coefficient, see ``adr_tc_d``).
#
# CRYSTALLINE: the fit to a measured IEC 61853-1 matrix of a crystalline silicon module in pvlib's
# documentation gallery ("Simulating PV systems using the ADR module efficiency model").
#
# AMORPHOUS and CIGS: from the Sandia module library shipped with pvlib 0.16.1 (``retrieve_sam(
# "SandiaMod")``, outdoor-tested SAPM coefficients). Per entry, ``pvsystem.sapm`` at 25 degC gives
# Pmp / (Ee x Pmp at 1000 W/m2) on the IEC 61853-1 grid 100..1100 W/m2 plus 50 W/m2; the median is
# taken over flat-plate entries whose "Vintage" lacks "(E)" (an "(E)" entry repeats the low-light
# coefficients of a tested similar module: 23 of the 25 "3-a-Si" and 9 of the 14 "CIS" entries), i.e.
# one vote per tested module: amorphous = 3 tandem "2-a-Si" + 2 triple "3-a-Si"; CIGS = 5 "CIS" (3
# module types). Not below 50 W/m2: at 20 W/m2 SAPM gives Vmp < Voc/2, impossible for a concave I-V
# curve, for 33 of the 520 flat-plate entries. Fit: least squares of ``relative_efficiency`` to the
# median (weights sqrt(G/1000)) and to the linear temperature law at 1000 W/m2 and 15/50/75 degC,
# within the field bounds; without the latter the 25 degC curve alone drives k_d to about -3 and the
# efficiency collapses with heat. Medians at 50, 100, 200, 400, 600, 800, 1100 W/m2:
#   amorphous 0.863, 0.936, 0.987, 1.012, 1.014, 1.008, 0.995 (fit within 1.5 % at 50, 0.7 % above);
#   CIGS      0.739, 0.843, 0.920, 0.970, 0.989, 0.996, 1.001 (fit within 2.1 % at 50, 1.0 % above).
# Spread at 200 W/m2: tandem median 0.962, triple 1.167 (the per-entry median, 23 triple estimates,
# is the triple curve, rising down to 50 W/m2); CIS module types 0.847..0.986 (per-entry median 0.844:
# 11 of 14 entries carry one 1998 type's coefficients).
# Check of the route on the 38 tested flat-plate "c-Si" entries: the median lies within 1.5 % of the
# crystalline preset's measured-matrix curve at 50..1100 W/m2 (0.925 vs 0.910 at 100, 0.956 vs 0.950
# at 200), the fitted ADR curve within 1.4 %. The CEC library (``"CECMod"``) was not used: its
# single-diode parameters are fitted to STC datasheet values, and their low-light extrapolation gives
# 0.982 at 200 W/m2 for "Mono-c-Si" against 0.948 measured (thin films: a-Si 1.070, CIGS 1.019).
# tests/test_solar_presets.py re-derives all of this from the libraries.
#
# GENERIC (gallium arsenide only): the library's 2 "GaAs" entries are concentrator modules (FD = 0,
# 3.1 V per series cell) and the CEC library has none, so the example values of the pvlib
# ``pvefficiency_adr`` docstring are kept (k_d = -6.0, k_rs = 0.05, k_rsh = 0.10), not fitted to data.
#
# References: Driesse, A., Theristis, M. and Stein, J.S. (2021), A new photovoltaic module efficiency
# model for energy prediction and rating, IEEE J. Photovoltaics 11(2), 527-534. King, D.L., Boyson,
# W.E. and Kratochvil, J.A. (2004), Photovoltaic array performance model, Sandia report SAND2004-3535.
# De Soto, W., Klein, S.A. and Beckman, W.A. (2006), Improvement and validation of a model for
# photovoltaic array performance, Solar Energy 80(1), 78-88. IEC 61853-1:2011, Photovoltaic (PV) module
# performance testing and energy rating - Part 1.
_ADR_CRYSTALLINE = {"adr_k_d": -5.85188, "adr_k_rs": 0.06962, "adr_k_rsh": 0.21036}
_ADR_AMORPHOUS = {"adr_k_d": -5.2751, "adr_k_rs": 0.14884, "adr_k_rsh": 0.11061}
_ADR_CIGS = {"adr_k_d": -3.9491, "adr_k_rs": 0.13220, "adr_k_rsh": 0.034006}
_ADR_GENERIC = {"adr_k_d": -6.0, "adr_k_rs": 0.05, "adr_k_rsh": 0.10}

# Cell technologies (plain names). Efficiency, temperature coefficients, per-cell open-circuit
# voltage, ideality and Vmp/Voc are typical catalogue figures of small panels (common practice,
# not from one source): efficiency c-Si 17-22 %, a-Si 6-9 %, CIGS 13-17 %, GaAs 22-28 %; power
# temperature coefficient c-Si -0.35..-0.45 %/K, a-Si -0.2 %/K, CIGS -0.3..-0.4 %/K, GaAs
# -0.1..-0.2 %/K; Voc per cell c-Si 0.60-0.68 V, a-Si junction 0.85-0.9 V, CIGS 0.6-0.7 V,
# GaAs 1.0-1.1 V.
TECHNOLOGY_PRESETS: dict[str, dict[str, Any]] = {
    "monocrystalline-silicon": {
        "efficiency_stc": 0.20, "temp_coeff_per_k": -0.0040, **_ADR_CRYSTALLINE,
        "cells_in_series": 6, "voc_cell_v": 0.64, "voc_temp_coeff_per_k": -0.0032,
        "ideality_factor": 1.2, "vmp_over_voc": 0.81,
    },
    "polycrystalline-silicon": {
        "efficiency_stc": 0.17, "temp_coeff_per_k": -0.0041, **_ADR_CRYSTALLINE,
        "cells_in_series": 6, "voc_cell_v": 0.62, "voc_temp_coeff_per_k": -0.0033,
        "ideality_factor": 1.3, "vmp_over_voc": 0.80,
    },
    "amorphous-silicon": {
        "efficiency_stc": 0.07, "temp_coeff_per_k": -0.0020, **_ADR_AMORPHOUS,
        "cells_in_series": 4, "voc_cell_v": 0.88, "voc_temp_coeff_per_k": -0.0030,
        "ideality_factor": 1.8, "vmp_over_voc": 0.75,
    },
    "thin-film-cigs": {
        "efficiency_stc": 0.15, "temp_coeff_per_k": -0.0036, **_ADR_CIGS,
        "cells_in_series": 5, "voc_cell_v": 0.68, "voc_temp_coeff_per_k": -0.0030,
        "ideality_factor": 1.5, "vmp_over_voc": 0.78,
    },
    "gallium-arsenide": {
        "efficiency_stc": 0.25, "temp_coeff_per_k": -0.0015, **_ADR_GENERIC,
        "cells_in_series": 3, "voc_cell_v": 1.05, "voc_temp_coeff_per_k": -0.0019,
        "ideality_factor": 1.1, "vmp_over_voc": 0.87,
    },
}

# Mountings (plain names) -> their row of the King et al. (2004) module temperature model as tabulated in
# pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"].
_KING_ROWS = {"open-rack": "open_rack_glass_polymer", "close-to-wall": "close_mount_glass_glass",
              "insulated-back": "insulated_back_glass_polymer"}


class _MountingPresets(Mapping[str, dict[str, float]]):
    """Mounting -> ``cell_temp_a``, ``cell_temp_b``, ``cell_temp_rise_c`` from pvlib's table, read when first
    looked up: a site file without a solar source loads without importing pvlib."""

    def __getitem__(self, mounting: str) -> dict[str, float]:
        import pvlib

        row = pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"][_KING_ROWS[mounting]]
        return {"cell_temp_a": row["a"], "cell_temp_b": row["b"], "cell_temp_rise_c": row["deltaT"]}

    def __iter__(self) -> Iterator[str]:
        return iter(_KING_ROWS)

    def __len__(self) -> int:
        return len(_KING_ROWS)


MOUNTING_PRESETS: Mapping[str, dict[str, float]] = _MountingPresets()

HorizonPoint = tuple[Annotated[float, Field(ge=0, le=360)], Annotated[float, Field(ge=0, le=90)]]


class SolarSource(SourceBase):
    """An outdoor PV panel. Starts from ``technology`` and ``mounting`` presets; given fields override."""

    kind: Literal["solar"] = "solar"
    tilt_deg: float = quantity(30.0, "deg", "tilt of the panel from horizontal (90 = facade)",
                               ge=0, le=90, step=1)
    azimuth_deg: float = quantity(180.0, "deg", "direction the panel faces, from north clockwise "
                                  "(90 = east, 180 = south, 270 = west)", ge=0, le=360, step=1)
    area_cm2: float = quantity(10.0, "cm2", "active cell area of the panel", gt=0, le=10000, step=1)
    technology: str = Field("monocrystalline-silicon", description="cell technology preset: one of "
                            + ", ".join(TECHNOLOGY_PRESETS))
    efficiency_stc: float = quantity(0.20, "-", "rated efficiency at 1000 W/m2 and 25 degC cell "
                                     "temperature", gt=0, le=0.5, step=0.005)
    temp_coeff_per_k: float = quantity(-0.0040, "1/K", "relative change of maximum power per kelvin "
                                       "of cell temperature at 1000 W/m2", ge=-0.01, le=0.002,
                                       step=0.0001)
    adr_k_d: float = quantity(-5.85188, "-", "ADR low-light model: dark-irradiance (diode) "
                              "coefficient", ge=-12, le=-2, step=0.01)
    adr_k_rs: float = quantity(0.06962, "-", "ADR low-light model: series-resistance loss "
                               "fraction at 1000 W/m2", ge=0, le=0.5, step=0.01)
    adr_k_rsh: float = quantity(0.21036, "-", "ADR low-light model: shunt-resistance loss "
                                "fraction at 1000 W/m2", ge=0, le=0.9, step=0.01)
    cells_in_series: int = Field(6, ge=1, le=200, description="number of cells in series in the "
                                 "panel [-]", json_schema_extra={"unit": "-", "step": 1})
    voc_cell_v: float = quantity(0.64, "V", "open-circuit voltage of one cell at 1000 W/m2, 25 degC",
                                 gt=0, le=3, step=0.01)
    voc_temp_coeff_per_k: float = quantity(-0.0032, "1/K", "relative change of open-circuit voltage "
                                           "per kelvin", ge=-0.01, le=0, step=0.0001)
    ideality_factor: float = quantity(1.2, "-", "diode ideality factor per cell (sets how voltage "
                                      "falls in dim light)", ge=0.8, le=5, step=0.1)
    vmp_over_voc: float = quantity(0.81, "-", "ratio of maximum-power voltage to open-circuit "
                                   "voltage", ge=0.5, le=0.95, step=0.01)
    mounting: str = Field("open-rack", description="how the panel's back is cooled, sets the cell "
                          "temperature coefficients: one of " + ", ".join(MOUNTING_PRESETS))
    cell_temp_a: float = quantity(-3.56, "-", "cell temperature model (King et al. 2004): "
                                  "coefficient a", ge=-10, le=0, step=0.01)
    cell_temp_b: float = quantity(-0.075, "s/m", "cell temperature model (King et al. 2004): "
                                  "wind coefficient b", ge=-1, le=0, step=0.001)
    cell_temp_rise_c: float = quantity(3.0, "degC", "cell temperature model (King et al. 2004): "
                                       "cell-above-back rise at 1000 W/m2", ge=0, le=20, step=0.5)
    transposition: Literal["perez", "haydavies", "isotropic"] = Field(
        "perez", description="sky diffuse model for the tilted plane")
    albedo: float = quantity(0.2, "-", "ground reflectance in front of the panel", ge=0, le=1,
                             step=0.01)
    iam_model: Literal["physical", "martin_ruiz"] = Field(
        "physical", description="incidence-angle loss model of the front cover (glass defaults)")
    soiling_loss: float = quantity(0.02, "-", "fraction of light lost to dirt on the cover", ge=0,
                                   lt=1, step=0.01)
    wiring_loss: float = quantity(0.01, "-", "fraction of power lost in leads and connections", ge=0,
                                  lt=1, step=0.01)
    horizon: list[HorizonPoint] = Field(
        default_factory=list, max_length=720,
        description="far horizon as (azimuth [deg from north], elevation [deg]) pairs, interpolated "
        "around 360 deg; the sun below it is blocked and the sky behind it is hidden")
    conditioning: ConditioningSpec = Field(
        default_factory=lambda: ConditioningSpec(preset="solar-cell-boost"),
        description="the power-conditioning stage between the panel and the store")

    @model_validator(mode="before")
    @classmethod
    def _start_from_presets(cls, data: Any) -> Any:
        if not isinstance(data, dict):
            return data
        tech = choose(data, "technology", TECHNOLOGY_PRESETS, "monocrystalline-silicon")
        mount = choose(data, "mounting", MOUNTING_PRESETS, "open-rack")
        return {"technology": tech, "mounting": mount, **TECHNOLOGY_PRESETS[tech],
                **MOUNTING_PRESETS[mount], **data}


# --------------------------------------------------------------------------------------------------
# Physics in small pure functions
# --------------------------------------------------------------------------------------------------

def horizon_elevation_deg(horizon: list[tuple[float, float]], azimuth_deg: np.ndarray) -> np.ndarray:
    """Elevation of the far horizon towards ``azimuth_deg``.

    Method
    ------
    Linear interpolation between the given points, periodic over 360 deg (the last point joins the
    first across north). No points: a flat horizon (0 deg).

    Parameters
    ----------
    horizon : list of (float, float)
        (azimuth [deg from north, clockwise], elevation [deg]) pairs, any order.
    azimuth_deg : array-like
        Directions to look up [deg from north].

    Returns
    -------
    numpy.ndarray
        Horizon elevation [deg], 0..90, shaped like ``azimuth_deg``.
    """
    az = np.asarray(azimuth_deg, dtype=float)
    if not horizon:
        return np.zeros_like(az)
    pts = np.asarray(horizon, dtype=float)
    xp = np.mod(pts[:, 0], 360.0)
    order = np.argsort(xp, kind="stable")
    return np.interp(np.mod(az, 360.0), xp[order], pts[order, 1], period=360.0)


def horizon_view_fractions(
    tilt_deg: float, azimuth_deg: float, horizon: list[tuple[float, float]],
    step_deg: float = 0.5,
) -> tuple[float, float]:
    """Shares of a tilted plane's sky diffuse that a far horizon leaves visible.

    Method
    ------
    Isotropic dome: the plane's isotropic sky irradiance is proportional to
    ``integral over visible sky of cos(theta) dOmega``, with ``dOmega = cos(e) de dphi`` over
    elevation ``e`` and azimuth ``phi`` and ``cos(theta) = max(0, sin e cos(beta) + cos e sin(beta)
    cos(phi - gamma))`` the incidence cosine on the plane (tilt beta, azimuth gamma). The sky above
    the horizon profile ``h(phi)`` is integrated by the midpoint rule on a ``step_deg`` grid and
    divided by the same integral above a flat horizon (which equals ``pi (1 + cos beta) / 2``,
    the Liu & Jordan view factor). The obstruction itself is taken as dark (conservative).

    Horizon band (the Perez horizon-brightening term): a band from 0 to 6.5 deg elevation, seen by
    the plane with weight ``max(0, sin(beta) cos(phi - gamma))``; in each direction the share of
    the band above ``h(phi)`` is ``max(0, 1 - h / 6.5)``.

    Parameters
    ----------
    tilt_deg : float
        Plane tilt [deg], 0..90.
    azimuth_deg : float
        Plane azimuth [deg from north].
    horizon : list of (float, float)
        Horizon profile, see :func:`horizon_elevation_deg`.
    step_deg : float, default 0.5
        Integration grid step [deg]; the isotropic share is accurate to about 1e-4 at 0.5 deg.

    Returns
    -------
    (float, float)
        Visible share of the isotropic sky term and of the horizon band [-], each 0..1.

    References
    ----------
    Liu, B.Y.H. and Jordan, R.C. (1963). The long-term average performance of flat-plate solar
    energy collectors. Solar Energy 7(2), 53-74.
    Perez, R., Ineichen, P., Seals, R., Michalsky, J. and Stewart, R. (1990). Modeling daylight
    availability and irradiance components from direct and global irradiance. Solar Energy 44(5),
    271-289.
    """
    if not horizon:
        return 1.0, 1.0
    beta = np.radians(tilt_deg)
    phi = np.arange(step_deg / 2, 360.0, step_deg)
    elev = np.arange(step_deg / 2, 90.0, step_deg)
    h = horizon_elevation_deg(horizon, phi)
    e_r = np.radians(elev)[None, :]
    cos_rel = np.cos(np.radians(phi - azimuth_deg))[:, None]
    cos_inc = np.maximum(0.0, np.sin(e_r) * np.cos(beta) + np.cos(e_r) * np.sin(beta) * cos_rel)
    weight = cos_inc * np.cos(e_r)
    visible = elev[None, :] > h[:, None]
    iso = float((weight * visible).sum() / weight.sum())
    band_w = np.maximum(0.0, np.sin(beta) * np.cos(np.radians(phi - azimuth_deg)))
    if band_w.sum() <= 0.0:
        band = 1.0
    else:
        band = float((band_w * np.clip(1.0 - h / HORIZON_BAND_DEG, 0.0, 1.0)).sum() / band_w.sum())
    return iso, band


def adr_tc_d(temp_coeff_per_k: float, k_d: float, k_rs: float, k_rsh: float) -> float:
    """ADR temperature parameter ``tc_d`` that gives a stated power temperature coefficient.

    Method
    ------
    In the ADR model (Driesse et al. 2021, eqs. 25, 28-30) the only temperature dependence is
    ``s_o = 10**(k_d + tc_d (T - 25))``. Differentiating the efficiency at 1000 W/m2 and 25 degC
    with respect to temperature gives
    ``gamma = -ln(10) tc_d (1 + k_rs - k_rsh) / ((1 + s_o,ref) ln(1/s_o,ref + 1))``,
    solved here for ``tc_d``.

    Parameters
    ----------
    temp_coeff_per_k : float
        Relative change of maximum power per kelvin at 1000 W/m2 [1/K], e.g. -0.004.
    k_d, k_rs, k_rsh : float
        ADR parameters [-].

    Returns
    -------
    float
        ``tc_d`` [-] for :func:`pvlib.pvarray.pvefficiency_adr`.

    References
    ----------
    Driesse, A., Theristis, M. and Stein, J.S. (2021). A new photovoltaic module efficiency model
    for energy prediction and rating. IEEE Journal of Photovoltaics 11(2), 527-534.
    """
    s_ref = 10.0 ** k_d
    big_l = np.log(1.0 / s_ref + 1.0)
    return float(-temp_coeff_per_k * (1.0 + s_ref) * big_l / (np.log(10.0) * (1.0 + k_rs - k_rsh)))


def relative_efficiency(
    irradiance_w_m2: np.ndarray, cell_temp_c: np.ndarray, temp_coeff_per_k: float,
    k_d: float, k_rs: float, k_rsh: float,
) -> np.ndarray:
    """Efficiency at maximum power relative to its value at 1000 W/m2 and 25 degC.

    Method
    ------
    ADR model (pvlib ``pvarray.pvefficiency_adr``) with ``k_a = 1`` and ``tc_d`` from
    :func:`adr_tc_d`; negative values (only possible far outside the fitted range) are clipped to 0.

    Parameters
    ----------
    irradiance_w_m2 : array-like
        Effective irradiance reaching the cells [W/m2], >= 0; fits are usually made over
        100..1100 W/m2 and extrapolate smoothly towards 0.
    cell_temp_c : array-like
        Cell temperature [degC].
    temp_coeff_per_k : float
        Power temperature coefficient [1/K].
    k_d, k_rs, k_rsh : float
        ADR low-light parameters [-].

    Returns
    -------
    numpy.ndarray
        Relative efficiency [-] (1.0 at 1000 W/m2, 25 degC).

    References
    ----------
    Driesse, A., Theristis, M. and Stein, J.S. (2021). A new photovoltaic module efficiency model
    for energy prediction and rating. IEEE Journal of Photovoltaics 11(2), 527-534.
    Driesse, A. and Stein, J.S. (2020). From IEC 61853 power measurements to PV system simulations.
    Sandia report SAND2020-3877.
    """
    import pvlib  # pvlib (and scipy) are imported where used, see siteharvest.sun

    g = np.maximum(np.asarray(irradiance_w_m2, dtype=float), 0.0)
    tc_d = adr_tc_d(temp_coeff_per_k, k_d, k_rs, k_rsh)
    eta = pvlib.pvarray.pvefficiency_adr(g, np.asarray(cell_temp_c, dtype=float), k_a=1.0, k_d=k_d,
                                         tc_d=tc_d, k_rs=k_rs, k_rsh=k_rsh)
    return np.maximum(np.asarray(eta, dtype=float), 0.0)


def panel_mpp_voltage_v(
    irradiance_w_m2: np.ndarray, cell_temp_c: np.ndarray, cells_in_series: int, voc_cell_v: float,
    voc_temp_coeff_per_k: float, ideality_factor: float, vmp_over_voc: float,
) -> np.ndarray:
    """Estimated panel voltage at maximum power.

    Method
    ------
    Per cell, ``Voc = Voc,ref (1 + beta (T - 25)) + n k T / q ln(G / 1000)`` (the photocurrent is
    proportional to irradiance and ``Voc = n kT/q ln(I_ph / I_0)`` in the one-diode model); the
    panel voltage at maximum power is ``vmp_over_voc x cells_in_series x Voc``, clipped at 0, and 0
    in the dark. Good to about 10 % between 10 and 1100 W/m2; enough to judge whether a converter's
    cold-start voltage is reached, not for the power itself (which comes from the ADR model).

    Parameters
    ----------
    irradiance_w_m2 : array-like
        Effective irradiance [W/m2].
    cell_temp_c : array-like
        Cell temperature [degC].
    cells_in_series : int
        Cells in series [-].
    voc_cell_v : float
        Open-circuit voltage per cell at 1000 W/m2, 25 degC [V].
    voc_temp_coeff_per_k : float
        Relative temperature coefficient of Voc [1/K].
    ideality_factor : float
        Diode ideality factor per cell [-].
    vmp_over_voc : float
        Vmp / Voc [-].

    Returns
    -------
    numpy.ndarray
        Panel voltage at maximum power [V].

    References
    ----------
    Green, M.A. (1982). Solar Cells: Operating Principles, Technology and System Applications.
    Prentice-Hall, ch. 5.
    """
    from scipy import constants

    g = np.asarray(irradiance_w_m2, dtype=float)
    t = np.asarray(cell_temp_c, dtype=float)
    thermal_v = constants.k * (t + constants.zero_Celsius) / constants.e
    lit = g > 0.0
    log_g = np.log(np.where(lit, g, G_REF_W_M2) / G_REF_W_M2)
    voc = voc_cell_v * (1.0 + voc_temp_coeff_per_k * (t - T_REF_C)) + ideality_factor * thermal_v * log_g
    return np.where(lit, np.maximum(vmp_over_voc * cells_in_series * voc, 0.0), 0.0)


def plane_of_array_components(
    spec: SolarSource, ctx: SpotContext,
) -> dict[str, np.ndarray]:
    """Hourly irradiance components on the panel plane, horizon applied, before cover losses.

    Method
    ------
    Beam ``DNI cos(aoi)``; sky diffuse by ``spec.transposition`` (pvlib ``perez`` with the
    ``allsitescomposite1990`` coefficients and Kasten & Young relative air mass, ``haydavies`` or
    ``isotropic``), split into isotropic, circumsolar and horizon-band parts; ground reflection
    ``albedo GHI (1 - cos beta) / 2``. The horizon blocks beam and circumsolar when the sun is below
    it and scales the isotropic and positive horizon-band parts by :func:`horizon_view_fractions`
    (a negative Perez horizon term, a darker horizon, is left as is: conservative). Every part is 0
    when the mid-hour sun is below the astronomical horizon.

    Parameters
    ----------
    spec : SolarSource
        Panel geometry, transposition, albedo, horizon.
    ctx : SpotContext
        Weather (``ghi_w_m2``, ``dni_w_m2``, ``dhi_w_m2`` [W/m2]) and solar position.

    Returns
    -------
    dict of numpy.ndarray, shape (8760,)
        ``beam``, ``circumsolar``, ``isotropic``, ``horizon_band``, ``ground`` [W/m2], and ``aoi``
        [deg].

    References
    ----------
    Perez, R., Ineichen, P., Seals, R., Michalsky, J. and Stewart, R. (1990). Modeling daylight
    availability and irradiance components from direct and global irradiance. Solar Energy 44(5),
    271-289.
    Hay, J.E. and Davies, J.A. (1980). Calculation of the solar radiation incident on an inclined
    surface. Proc. First Canadian Solar Radiation Data Workshop, 59-72.
    Kasten, F. and Young, A.T. (1989). Revised optical air mass tables and approximation formula.
    Applied Optics 28(22), 4735-4738.
    """
    import pvlib

    pos = ctx.solar_position
    zen = pos["apparent_zenith"].to_numpy(dtype=float)
    sun_az = pos["azimuth"].to_numpy(dtype=float)
    sun_el = 90.0 - zen
    w = ctx.weather
    ghi = np.maximum(w["ghi_w_m2"].to_numpy(dtype=float), 0.0)
    dni = np.maximum(w["dni_w_m2"].to_numpy(dtype=float), 0.0)
    dhi = np.maximum(w["dhi_w_m2"].to_numpy(dtype=float), 0.0)
    up = sun_el > 0.0
    tilt, az = float(spec.tilt_deg), float(spec.azimuth_deg)

    aoi = angle_of_incidence_deg(tilt, az, zen, sun_az)
    beam = np.where(up, dni * np.maximum(np.cos(np.radians(aoi)), 0.0), 0.0)

    if spec.transposition == "perez":
        airmass = pvlib.atmosphere.get_relative_airmass(zen, model="kastenyoung1989")
        comp = pvlib.irradiance.perez(tilt, az, dhi, dni, ctx.dni_extra_w_m2.to_numpy(dtype=float),
                                      zen, sun_az, np.asarray(airmass), return_components=True)
        iso, circ, band = comp["poa_isotropic"], comp["poa_circumsolar"], comp["poa_horizon"]
    elif spec.transposition == "haydavies":
        comp = pvlib.irradiance.haydavies(tilt, az, dhi, dni, ctx.dni_extra_w_m2.to_numpy(dtype=float),
                                          zen, sun_az, return_components=True)
        iso, circ, band = comp["poa_isotropic"], comp["poa_circumsolar"], np.zeros_like(dhi)
    else:
        iso, circ, band = pvlib.irradiance.isotropic(tilt, dhi), np.zeros_like(dhi), np.zeros_like(dhi)

    def clean(x: Any) -> np.ndarray:
        return np.where(up, np.nan_to_num(np.asarray(x, dtype=float), nan=0.0), 0.0)

    iso, circ, band = clean(iso), clean(circ), clean(band)
    ground = clean(pvlib.irradiance.get_ground_diffuse(tilt, ghi, albedo=spec.albedo))

    if spec.horizon:
        shaded = sun_el < horizon_elevation_deg(spec.horizon, sun_az)
        beam = np.where(shaded, 0.0, beam)
        circ = np.where(shaded, 0.0, circ)
        iso_share, band_share = horizon_view_fractions(tilt, az, spec.horizon)
        iso = iso * iso_share
        band = np.where(band > 0.0, band * band_share, band)

    # the sky part can only be >= 0 (the Perez horizon term may be negative)
    sky = np.maximum(iso + circ + band, 0.0)
    scale = np.divide(sky, iso + circ + band, out=np.zeros_like(sky), where=(iso + circ + band) > 0)
    return {"beam": beam, "circumsolar": circ * scale, "isotropic": iso * scale,
            "horizon_band": band * scale, "ground": ground, "aoi": np.where(up, aoi, 90.0)}


def cover_transmission(iam_model: str, tilt_deg: float, aoi_deg: np.ndarray) -> dict[str, Any]:
    """Incidence-angle modifiers of the front cover for beam and for the diffuse parts.

    Method
    ------
    Beam (and circumsolar): pvlib ``iam.physical`` (Fresnel reflection and absorption in glass,
    n = 1.526, K = 4 /m, L = 2 mm; De Soto et al. 2006) or ``iam.martin_ruiz`` (a_r = 0.16).
    Sky, horizon band and ground: the same model integrated over each region as seen by the tilted
    plane (pvlib ``iam.marion_diffuse``; Marion 2017).

    Parameters
    ----------
    iam_model : {"physical", "martin_ruiz"}
    tilt_deg : float
        Plane tilt [deg].
    aoi_deg : array-like
        Angle of incidence of the beam [deg].

    Returns
    -------
    dict
        ``beam`` (array, [-]), and scalars ``sky``, ``horizon``, ``ground`` [-].

    References
    ----------
    De Soto, W., Klein, S.A. and Beckman, W.A. (2006). Improvement and validation of a model for
    photovoltaic array performance. Solar Energy 80(1), 78-88.
    Martin, N. and Ruiz, J.M. (2001). Calculation of the PV modules angular losses under field
    conditions by means of an analytical model. Solar Energy Materials and Solar Cells 70, 25-38.
    Marion, B. (2017). Numerical method for angle-of-incidence correction factors for diffuse
    radiation incident photovoltaic modules. Solar Energy 147, 344-348.
    """
    import pvlib

    fn = pvlib.iam.physical if iam_model == "physical" else pvlib.iam.martin_ruiz
    beam = np.nan_to_num(np.asarray(fn(np.asarray(aoi_deg, dtype=float)), dtype=float), nan=0.0)
    diffuse = pvlib.iam.marion_diffuse(iam_model, tilt_deg)
    return {"beam": np.clip(beam, 0.0, 1.0), "sky": float(diffuse["sky"]),
            "horizon": float(diffuse["horizon"]), "ground": float(np.nan_to_num(diffuse["ground"]))}


def cell_temperature_c(poa_global_w_m2: np.ndarray, temp_air_c: np.ndarray, wind_speed_m_s: np.ndarray,
                       a: float, b: float, rise_c: float) -> np.ndarray:
    """Cell temperature from irradiance, air temperature and wind.

    Method
    ------
    ``T_back = T_air + E exp(a + b WS)``, ``T_cell = T_back + E / 1000 dT`` (pvlib
    ``temperature.sapm_cell``); steady state, wind at about 10 m height, valid for hourly data.

    Parameters
    ----------
    poa_global_w_m2 : array-like
        Plane-of-array irradiance [W/m2].
    temp_air_c : array-like
        Air temperature [degC].
    wind_speed_m_s : array-like
        Wind speed [m/s].
    a, b, rise_c : float
        Model coefficients [-], [s/m], [degC] (by mounting).

    Returns
    -------
    numpy.ndarray
        Cell temperature [degC].

    References
    ----------
    King, D.L., Boyson, W.E. and Kratochvil, J.A. (2004). Photovoltaic array performance model.
    Sandia report SAND2004-3535, eqs. 11-12.
    """
    import pvlib

    return np.asarray(pvlib.temperature.sapm_cell(poa_global_w_m2, temp_air_c, wind_speed_m_s,
                                                  a, b, rise_c), dtype=float)


def solar_output(spec: SolarSource, ctx: SpotContext) -> SourceOutput:
    """Hourly power of an outdoor PV panel at its maximum power point over the reference year.

    Method
    ------
    :func:`plane_of_array_components` -> :func:`cover_transmission` (cover losses) -> soiling ->
    :func:`cell_temperature_c` -> :func:`relative_efficiency` (ADR) ->
    ``P = E_eff x area x efficiency_stc x relative efficiency x (1 - wiring_loss)``;
    voltage from :func:`panel_mpp_voltage_v`. Spectral effects are neglected.

    Parameters
    ----------
    spec : SolarSource
        The panel.
    ctx : SpotContext
        Weather columns ``ghi_w_m2``, ``dni_w_m2``, ``dhi_w_m2`` [W/m2], ``temp_air_c`` [degC],
        ``wind_speed_m_s`` [m/s]; solar position at mid-hour.

    Returns
    -------
    SourceOutput
        ``power_w`` [W], ``voltage_v`` [V]; details ``poa_global_w_m2``, ``poa_direct_w_m2`` (beam
        only), ``poa_diffuse_w_m2`` (sky incl. circumsolar, plus ground), ``poa_sky_diffuse_w_m2``,
        ``poa_ground_w_m2``, ``effective_irradiance_w_m2``, ``cell_temp_c``, ``efficiency``.

    Notes
    -----
    Validity: hourly data, tilt 0..90 deg, any azimuth; sun below the astronomical horizon at
    mid-hour gives 0.

    References
    ----------
    Holmgren, W.F., Hansen, C.W. and Mikofski, M.A. (2018). pvlib python: a python package for
    modeling solar energy systems. Journal of Open Source Software 3(29), 884.
    See also the functions named above.
    """
    c = plane_of_array_components(spec, ctx)
    sky = c["circumsolar"] + c["isotropic"] + c["horizon_band"]
    poa_global = c["beam"] + sky + c["ground"]

    t = cover_transmission(spec.iam_model, spec.tilt_deg, c["aoi"])
    effective = ((c["beam"] + c["circumsolar"]) * t["beam"] + c["isotropic"] * t["sky"]
                 + c["horizon_band"] * t["horizon"] + c["ground"] * t["ground"])
    effective = np.maximum(effective, 0.0) * (1.0 - spec.soiling_loss)

    w = ctx.weather
    cell_t = cell_temperature_c(poa_global, w["temp_air_c"].to_numpy(dtype=float),
                                w["wind_speed_m_s"].to_numpy(dtype=float),
                                spec.cell_temp_a, spec.cell_temp_b, spec.cell_temp_rise_c)
    rel = relative_efficiency(effective, cell_t, spec.temp_coeff_per_k, spec.adr_k_d, spec.adr_k_rs,
                              spec.adr_k_rsh)
    efficiency = spec.efficiency_stc * rel
    area_m2 = spec.area_cm2 * 1e-4
    power = effective * area_m2 * efficiency * (1.0 - spec.wiring_loss)
    volts = panel_mpp_voltage_v(effective, cell_t, spec.cells_in_series, spec.voc_cell_v,
                                spec.voc_temp_coeff_per_k, spec.ideality_factor, spec.vmp_over_voc)
    volts = np.where(power > 0.0, volts, 0.0)

    notes = [f"plane-of-array sunlight over the year: {poa_global.sum() / 1000:.0f} kWh/m2; "
             f"panel output {power.sum():.2f} Wh"]
    if spec.horizon:
        c_open = plane_of_array_components(spec.model_copy(update={"horizon": []}), ctx)
        open_total = (c_open["beam"] + c_open["circumsolar"] + c_open["isotropic"]
                      + c_open["horizon_band"] + c_open["ground"]).sum()
        if open_total > 0:
            notes.append(f"the horizon profile takes {100 * (1 - poa_global.sum() / open_total):.0f} % "
                         "of the sunlight this plane would get with an open horizon")
    return SourceOutput(
        power_w=power,
        voltage_v=volts,
        details={
            "poa_global_w_m2": poa_global,
            "poa_direct_w_m2": c["beam"],
            "poa_diffuse_w_m2": sky + c["ground"],
            "poa_sky_diffuse_w_m2": sky,
            "poa_ground_w_m2": c["ground"],
            "effective_irradiance_w_m2": effective,
            "cell_temp_c": np.where(poa_global > 0, cell_t, w["temp_air_c"].to_numpy(dtype=float)),
            "efficiency": np.where(power > 0, efficiency, 0.0),
        },
        notes=notes,
    )


__all__ = [
    "MOUNTING_PRESETS", "TECHNOLOGY_PRESETS", "SolarSource", "adr_tc_d", "cell_temperature_c",
    "cover_transmission", "horizon_elevation_deg", "horizon_view_fractions", "panel_mpp_voltage_v",
    "plane_of_array_components", "relative_efficiency", "solar_output",
]


#: What the rest of the program needs to know about this kind (registered in ``sources/__init__.py``).
KIND = SourceKind(
    kind="solar", model=SolarSource, output=solar_output, name="solar panel",
    group="mounting", group_title="Mounting and sun",
    size_knobs=(SizeKnob("area_cm2", "Cell area", proportional=True),),
    presets=(PresetField("technology", "solar-technology", TECHNOLOGY_PRESETS),
             PresetField("mounting", "solar-mounting", MOUNTING_PRESETS)),
    new_source={"area_cm2": 10.0, "tilt_deg": 30.0},
    cautions=("work_at_height", "electrical_enclosure"),
    method=("Outdoor panel: plane-of-array irradiance from the weather year's global, beam and diffuse "
            "irradiance by a sky-transposition model, less the far horizon, incidence-angle losses and "
            "soiling; cell temperature from irradiance, air temperature and wind; efficiency at maximum power "
            "from an irradiance- and temperature-dependent efficiency model."),
    reference_modules=("siteharvest.sources.solar", "siteharvest.sun"),
)

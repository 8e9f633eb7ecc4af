"""RF energy: a dedicated transmitter beamed at the node, or the ambient RF field at the spot.

Site-file fields (``[[source]]`` with ``kind = "rf"``)::

    [[source]]
    id = "beam"
    kind = "rf"
    mode = "dedicated"              # or "ambient"
    eirp_dbm = 30.0                 # transmitter power + transmit antenna gain - cable loss
    frequency_mhz = 915.0
    distance_m = 5.0
    rx_gain_dbi = 2.0
    path_model = "free-space"       # or "log-distance" with path_loss_exponent (1 m free-space reference)
    path_loss_exponent = 2.0
    extra_loss_db = 3.0             # walls, polarisation mismatch (circular to linear: 3 dB)
    duty_fraction = 1.0             # share of the transmitter's on-hours it actually radiates
    transmitter = { hours = "06-20", days = "weekdays" }
    rectifier_curve = [[-30.0, 0.02], [-20.0, 0.15], [-10.0, 0.35], [0.0, 0.55], [10.0, 0.72]]
    rectifier_sensitivity_dbm = -20.0
    dc_load_ohm = 5000.0

In ``mode = "ambient"`` the transmitter fields (``eirp_dbm``, ``distance_m``, path model) are not used:
the incident power density ``ambient_density_uw_cm2`` is collected by the antenna's effective aperture
``lambda**2 G / (4 pi)``. ``transmitter`` and ``duty_fraction`` then say when that field is present
(default: always).

The output ``power_w`` is DC power after the rectifier (averaged over each hour), ``voltage_v`` the DC
voltage across the rectifier's load while the field is present.
"""

from __future__ import annotations

import math
from itertools import pairwise
from typing import Any, Literal

import numpy as np
from pydantic import Field, field_validator

from ..conditioning import ConditioningSpec
from ..context import SpotContext
from ..fields import Section, quantity
from ..schedule import WeeklySchedule
from ..timegrid import HOURS_PER_YEAR
from .base import PowerLevel, SizeKnob, SourceBase, SourceKind, SourceOutput

SPEED_OF_LIGHT_M_S = 299_792_458.0

# Rectifier RF-to-DC efficiency against input power: (input [dBm], efficiency [-]). Values chosen
# inside the ranges read from the survey of Valenta & Durgin (2014), IEEE Microwave Magazine 15(4):108-120
# (read from memory, low confidence): -20 dBm 5-25 %, -10 dBm 20-50 %, 0 dBm 40-75 %, peak 70-85 % at +10..+20 dBm, then
# falling as the diode nears breakdown.
DEFAULT_RECTIFIER_CURVE: list[tuple[float, float]] = [
    (-30.0, 0.02), (-20.0, 0.15), (-10.0, 0.35), (0.0, 0.55), (10.0, 0.72), (15.0, 0.75), (20.0, 0.6),
    (25.0, 0.3),
]

# Licence-free transmit limits (from memory, not re-verified against the rules):
# (low MHz, high MHz, EIRP limit dBm, rule).
EIRP_LIMITS: list[tuple[float, float, float, str]] = [
    (902.0, 928.0, 36.0, "US 902-928 MHz, 47 CFR 15.247: 1 W conducted with up to 6 dBi, i.e. 4 W EIRP"),
    (865.0, 868.0, 35.16, "EU 865-868 MHz, ETSI EN 302 208: 2 W ERP, i.e. 35.16 dBm EIRP"),
    (2400.0, 2483.5, 36.0, "US 2400-2483.5 MHz, 47 CFR 15.247: 4 W EIRP"),
    (2400.0, 2483.5, 20.0, "EU 2400-2483.5 MHz, ETSI EN 300 328: 100 mW EIRP"),
]
COMMON_EIRP_LIMIT_DBM = 36.0


def checked_curve(curve: list[tuple[float, float]]) -> list[tuple[float, float]]:
    """A rectifier efficiency curve checked: input powers increasing within -100..60 dBm, efficiencies 0..1."""
    xs = [x for x, _ in curve]
    if any(b <= a for a, b in pairwise(xs)):
        raise ValueError("input powers [dBm] must increase")
    if any(not -100 <= x <= 60 for x in xs):
        raise ValueError("input powers from -100 to 60 dBm")
    if any(not 0 <= e <= 1 for _, e in curve):
        raise ValueError("efficiencies must lie in 0..1")
    return curve


class RectifierCurve(Section):
    """One measured rectifier curve: efficiency against input power at one frequency and DC load."""

    frequency_mhz: float = quantity(..., "MHz", "frequency the curve was measured at", ge=1, le=100_000)
    dc_load_ohm: float = quantity(..., "ohm", "DC load the curve was measured into", gt=0, le=1e7)
    curve: list[tuple[float, float]] = Field(..., min_length=2, description="pairs (input [dBm], "
                                             "efficiency [-]), linear between points, flat beyond the ends")

    @field_validator("curve")
    @classmethod
    def _curve_ok(cls, curve: list[tuple[float, float]]) -> list[tuple[float, float]]:
        return checked_curve(curve)


class RfSource(SourceBase):
    """RF harvesting: a rectifying antenna fed by a dedicated transmitter or by the ambient field."""


    kind: Literal["rf"] = "rf"
    mode: Literal["dedicated", "ambient"] = Field("dedicated", description="'dedicated': a transmitter "
                                                  "beamed at the node; 'ambient': the RF field present")
    eirp_dbm: float = quantity(30.0, "dBm", "transmitter EIRP (power + antenna gain - cable loss)",
                               ge=-30, le=60, step=0.5)
    frequency_mhz: float = quantity(915.0, "MHz", "carrier frequency", ge=100, le=6000, step=1)
    distance_m: float = quantity(5.0, "m", "transmitter-to-node distance", gt=0, le=10000, step=0.5)
    rx_gain_dbi: float = quantity(2.0, "dBi", "gain of the node's antenna toward the transmitter",
                                  ge=-20, le=30, step=0.5)
    path_model: Literal["free-space", "log-distance"] = Field(
        "free-space", description="'free-space' (Friis) or 'log-distance' (free space to 1 m, then "
        "path_loss_exponent)")
    path_loss_exponent: float = quantity(2.0, "-", "log-distance path-loss exponent (2 free space, "
                                         "1.6-1.8 corridors, 3-6 obstructed indoors)", ge=1.6, le=6,
                                         step=0.1)
    extra_loss_db: float = quantity(3.0, "dB", "other losses: walls, polarisation mismatch, body",
                                    ge=0, le=100, step=0.5)
    antenna_size_m: float = quantity(0.16, "m", "largest dimension of the larger antenna (far-field "
                                     "check)", gt=0, le=10, step=0.01)
    transmitter: WeeklySchedule = Field(default_factory=WeeklySchedule,
                                        description="when the transmitter (or the ambient field) is on")
    duty_fraction: float = quantity(1.0, "-", "share of its on-hours the transmitter radiates", ge=0,
                                    le=1, step=0.01)
    ambient_density_uw_cm2: float = quantity(0.001, "uW/cm2", "incident power density in ambient mode "
                                             "(away from transmitter masts typically pW to nW per cm2)",
                                             gt=0, le=1e4)
    rectifier_curve: list[tuple[float, float]] = Field(
        default_factory=lambda: list(DEFAULT_RECTIFIER_CURVE), min_length=2,
        description="rectifier RF-to-DC efficiency against input power: pairs (input [dBm], efficiency "
        "[-]), linear between points, flat beyond the ends")
    rectifier_curves: list[RectifierCurve] | None = Field(
        None, max_length=40,
        description="measured rectifier curves, one per frequency and DC load ([[source.rectifier_curves]] "
                    "tables); the one measured nearest this source's frequency and DC load replaces "
                    "rectifier_curve")
    rectifier_sensitivity_dbm: float = quantity(-20.0, "dBm", "least input power the rectifier turns "
                                                "into usable DC", ge=-60, le=20, step=1)
    dc_load_ohm: float = quantity(5000.0, "ohm", "DC load the rectifier works into (sets its output "
                                  "voltage)", gt=0, le=1e7)
    conditioning: ConditioningSpec = Field(
        default_factory=lambda: ConditioningSpec(preset="rf-dc-boost"),
        description="the power-conditioning stage (DC boost after the rectifier by default)")

    @field_validator("rectifier_curve")
    @classmethod
    def _curve_ok(cls, curve: list[tuple[float, float]]) -> list[tuple[float, float]]:
        return checked_curve(curve)

    def rectifier_in_use(self) -> tuple[list[tuple[float, float]], str | None]:
        """The efficiency curve to use, and a note naming the measured curve chosen (None: the single one).

        Nearest in log frequency first, then in log DC load: a rectifier's match and its diodes'
        operating point change with both."""
        if not self.rectifier_curves:
            return list(self.rectifier_curve), None
        best = min(self.rectifier_curves, key=lambda c: (abs(math.log(c.frequency_mhz / self.frequency_mhz)),
                                                         abs(math.log(c.dc_load_ohm / self.dc_load_ohm))))
        note = (f"Rectifier curve measured at {best.frequency_mhz:g} MHz into {best.dc_load_ohm:g} ohm used "
                f"for {self.frequency_mhz:g} MHz into {self.dc_load_ohm:g} ohm")
        off = max(abs(math.log(best.frequency_mhz / self.frequency_mhz)),
                  abs(math.log(best.dc_load_ohm / self.dc_load_ohm)))
        far = off > math.log(1.1)
        note += "; it was measured more than 10 % away: measure it at this frequency and load." if far else "."
        return list(best.curve), note


# --------------------------------------------------------------------------------------------
# Physics: small pure functions
# --------------------------------------------------------------------------------------------


def dbm_to_w(power_dbm: Any) -> np.ndarray:
    """Power in watts from dBm: ``1e-3 * 10**(dBm/10)`` [W]."""
    return 1e-3 * 10.0 ** (np.asarray(power_dbm, dtype=float) / 10.0)


def w_to_dbm(power_w: Any) -> np.ndarray:
    """Power in dBm from watts (``-inf`` for 0 W)."""
    with np.errstate(divide="ignore"):
        return 10.0 * np.log10(np.asarray(power_w, dtype=float) / 1e-3)


def wavelength_m(frequency_hz: Any) -> np.ndarray:
    """Free-space wavelength ``c / f`` [m] for ``frequency_hz`` [Hz]."""
    return SPEED_OF_LIGHT_M_S / np.asarray(frequency_hz, dtype=float)


def free_space_path_loss_db(distance_m: Any, frequency_hz: Any) -> np.ndarray:
    """Free-space path loss between isotropic antennas.

    Method: ``FSPL = 20 log10(4 pi d f / c)`` = ``20 log10 d + 20 log10 f - 147.55`` (d in m, f in Hz).

    Parameters
    ----------
    distance_m : float or array [m]   > 0, in the far field (see :func:`far_field_distance_m`).
    frequency_hz : float or array [Hz]

    Returns
    -------
    ndarray [dB]

    References
    ----------
    Friis, H.T. (1946). A note on a simple transmission formula. Proc. IRE 34(5), 254-256.
    """
    d = np.asarray(distance_m, dtype=float)
    return 20.0 * np.log10(4.0 * np.pi * d / wavelength_m(frequency_hz))


def log_distance_path_loss_db(distance_m: Any, frequency_hz: Any, exponent: float,
                              reference_m: float = 1.0) -> np.ndarray:
    """Log-distance path loss with a free-space reference distance.

    Method: ``PL(d) = FSPL(d0) + 10 n log10(d / d0)`` for ``d >= d0``; free space below ``d0``.
    With ``n = 2`` it equals free space at every distance.

    Parameters
    ----------
    distance_m : float or array [m]   > 0.
    frequency_hz : float or array [Hz]
    exponent : float [-]              path-loss exponent n, 1.6 (corridors) to 6 (obstructed).
    reference_m : float [m]           reference distance d0 (1 m).

    Returns
    -------
    ndarray [dB]

    References
    ----------
    Rappaport, T.S. (2002). Wireless Communications: Principles and Practice, 2nd ed. Prentice Hall,
    section 4.9.1 (log-distance path loss model).
    """
    d = np.asarray(distance_m, dtype=float)
    far = free_space_path_loss_db(reference_m, frequency_hz) + 10.0 * exponent * np.log10(
        np.maximum(d, reference_m) / reference_m)
    return np.where(d >= reference_m, far, free_space_path_loss_db(d, frequency_hz))


def received_power_dbm(eirp_dbm: Any, path_loss_db: Any, rx_gain_dbi: Any,
                       extra_loss_db: Any = 0.0) -> np.ndarray:
    """Power at the receiving antenna's terminals (Friis in decibels).

    Method: ``P_r = EIRP + G_r - PL - L_extra``.

    Parameters
    ----------
    eirp_dbm : float or array [dBm]
    path_loss_db : float or array [dB]   e.g. :func:`free_space_path_loss_db`.
    rx_gain_dbi : float or array [dBi]
    extra_loss_db : float or array [dB]  walls, polarisation mismatch.

    Returns
    -------
    ndarray [dBm]

    References
    ----------
    Friis, H.T. (1946). Proc. IRE 34(5), 254-256.
    """
    return (np.asarray(eirp_dbm, float) + np.asarray(rx_gain_dbi, float) - np.asarray(path_loss_db, float)
            - np.asarray(extra_loss_db, float))


def effective_aperture_m2(frequency_hz: Any, gain_dbi: Any) -> np.ndarray:
    """Effective aperture of an antenna: ``A_e = lambda**2 G / (4 pi)`` [m2].

    Parameters
    ----------
    frequency_hz : float or array [Hz]
    gain_dbi : float or array [dBi]

    References
    ----------
    Balanis, C.A. (2016). Antenna Theory: Analysis and Design, 4th ed. Wiley, section 2.15.
    """
    lam = wavelength_m(frequency_hz)
    return lam**2 * 10.0 ** (np.asarray(gain_dbi, dtype=float) / 10.0) / (4.0 * np.pi)


def far_field_distance_m(antenna_size_m: float, frequency_hz: float) -> float:
    """Distance beyond which the Friis formula holds: ``max(2 D**2 / lambda, lambda)`` [m].

    Parameters
    ----------
    antenna_size_m : float [m]  largest dimension D of the larger antenna.
    frequency_hz : float [Hz]

    References
    ----------
    Balanis, C.A. (2016). Antenna Theory, 4th ed., section 2.2.4 (Fraunhofer region).
    """
    lam = float(wavelength_m(frequency_hz))
    return max(2.0 * antenna_size_m**2 / lam, lam)


def rectifier_efficiency(input_dbm: Any, curve: list[tuple[float, float]],
                         sensitivity_dbm: float) -> np.ndarray:
    """RF-to-DC efficiency of the rectifier at ``input_dbm``.

    Method: linear interpolation of the (dBm, efficiency) table, flat beyond its ends, and zero
    below the sensitivity floor. The result lies in 0..1 whenever the table does.

    Parameters
    ----------
    input_dbm : float or array [dBm]             RF power at the rectifier input.
    curve : list of (float [dBm], float [-])     increasing input powers.
    sensitivity_dbm : float [dBm]                least input that gives usable DC.

    Returns
    -------
    ndarray [-]

    References
    ----------
    Valenta, C.R. and Durgin, G.D. (2014). Harvesting wireless power: survey of energy-harvester
    conversion efficiency in far-field, wireless power transfer systems. IEEE Microwave Magazine
    15(4), 108-120.
    """
    p = np.asarray(input_dbm, dtype=float)
    xs, ys = np.asarray(curve, dtype=float).T
    eff = np.interp(np.nan_to_num(p, nan=-np.inf, neginf=-1e9, posinf=1e9), xs, ys)
    return np.where(p >= sensitivity_dbm, eff, 0.0)


def distance_for_received_dbm(target_dbm: float, eirp_dbm: float, frequency_hz: float,
                              rx_gain_dbi: float, extra_loss_db: float = 0.0,
                              path_exponent: float | None = None, reference_m: float = 1.0) -> float:
    """Distance [m] at which the received power falls to ``target_dbm`` (inverse of the path models).

    ``path_exponent=None`` inverts free space; a number inverts the log-distance model.
    """
    loss = eirp_dbm + rx_gain_dbi - extra_loss_db - target_dbm
    fspl_at_ref = float(free_space_path_loss_db(reference_m, frequency_hz))
    fspl_1m = float(free_space_path_loss_db(1.0, frequency_hz))
    if path_exponent is None or loss < fspl_at_ref:
        return float(10.0 ** ((loss - fspl_1m) / 20.0))
    return float(reference_m * 10.0 ** ((loss - fspl_at_ref) / (10.0 * path_exponent)))


def eirp_limit_notes(eirp_dbm: float, frequency_mhz: float) -> list[str]:
    """Plain-words notes when ``eirp_dbm`` exceeds a licence-free limit of the band (from memory)."""
    notes = []
    in_band = False
    for low, high, limit, rule in EIRP_LIMITS:
        if low <= frequency_mhz <= high:
            in_band = True
            if eirp_dbm > limit + 1e-9:
                notes.append(f"EIRP {eirp_dbm:.1f} dBm exceeds {limit:.2f} dBm allowed under {rule}; "
                             "check the local rules before relying on this transmitter.")
    if not in_band and eirp_dbm > COMMON_EIRP_LIMIT_DBM:
        notes.append(f"EIRP {eirp_dbm:.1f} dBm exceeds 36 dBm (4 W), the highest EIRP common licence-free "
                     "rules allow; such a transmitter likely needs a licence.")
    return notes


# --------------------------------------------------------------------------------------------
# Yield
# --------------------------------------------------------------------------------------------


def rf_output(spec: RfSource, ctx: SpotContext) -> SourceOutput:
    """Hourly DC power from the rectifying antenna over the reference year.

    Method
    ------
    1. RF power at the rectifier input while the field is present. Dedicated: Friis,
       ``P_r = EIRP + G_r - PL(d) - L_extra`` with free-space or log-distance path loss. Ambient:
       ``P_r = S A_e`` with ``A_e = lambda**2 G_r / (4 pi)``, less ``L_extra``.
    2. DC power ``P_dc = eta(P_r) P_r`` from the rectifier table (zero below its sensitivity).
    3. Hourly mean: ``P_dc`` times the share of the hour the field is present (transmitter
       schedule x ``duty_fraction``). Efficiency applies to the power while on, so a pulsed
       transmitter is treated correctly.
    4. DC voltage while the field is present: ``sqrt(P_dc R_load)``.

    Parameters
    ----------
    spec : RfSource
    ctx : SpotContext  not used: RF here does not depend on the weather or the place.

    Returns
    -------
    SourceOutput
        ``power_w`` [W] DC after the rectifier, ``voltage_v`` [V]; details ``rf_input_dbm`` [dBm],
        ``incident_density_uw_cm2`` [uW/cm2], ``rectifier_efficiency`` [-],
        ``field_present_fraction`` [-].

    Validity: far field (distance beyond 2 D**2 / lambda and a wavelength), line of sight or the
    chosen path-loss exponent, 100-6000 MHz.

    References
    ----------
    Friis, H.T. (1946). Proc. IRE 34(5), 254-256.
    Valenta, C.R. and Durgin, G.D. (2014). IEEE Microwave Magazine 15(4), 108-120.
    Vullers, R.J.M., van Schaijk, R., Doms, I., Van Hoof, C. and Mertens, R. (2009). Micropower
    energy harvesting. Solid-State Electronics 53(7), 684-693.
    """
    n = HOURS_PER_YEAR
    f_hz = spec.frequency_mhz * 1e6
    aperture_m2 = float(effective_aperture_m2(f_hz, spec.rx_gain_dbi))
    notes: list[str] = []
    if spec.mode == "ambient":
        incident_w = spec.ambient_density_uw_cm2 * 1e-6 * 1e4 * aperture_m2
        p_in_dbm = float(w_to_dbm(incident_w)) - spec.extra_loss_db
    else:
        if spec.path_model == "free-space":
            loss_db = float(free_space_path_loss_db(spec.distance_m, f_hz))
        else:
            loss_db = float(log_distance_path_loss_db(spec.distance_m, f_hz, spec.path_loss_exponent))
        p_in_dbm = float(received_power_dbm(spec.eirp_dbm, loss_db, spec.rx_gain_dbi, spec.extra_loss_db))
        notes += eirp_limit_notes(spec.eirp_dbm, spec.frequency_mhz)
        d_ff = far_field_distance_m(spec.antenna_size_m, f_hz)
        if spec.distance_m < d_ff:
            notes.append(f"At {spec.distance_m:g} m the node is inside the transmitter's near field "
                         f"(far field beyond about {d_ff:.2f} m = max(2 D^2/wavelength, wavelength)); the "
                         "Friis estimate is unreliable there.")
    p_in_w = float(dbm_to_w(p_in_dbm))
    curve, curve_note = spec.rectifier_in_use()
    if curve_note:
        notes.append(curve_note)
    eff = float(rectifier_efficiency(p_in_dbm, curve, spec.rectifier_sensitivity_dbm))
    p_dc_on_w = eff * p_in_w
    present = spec.transmitter.mask().astype(float) * spec.duty_fraction
    power_w = p_dc_on_w * present
    voltage_v = np.where(present > 0, np.sqrt(p_dc_on_w * spec.dc_load_ohm), 0.0)
    beam = PowerLevel(np.where(present > 0, p_dc_on_w, 0.0), voltage_v, present)

    if p_in_dbm < spec.rectifier_sensitivity_dbm:
        text = (f"The rectifier input ({p_in_dbm:.1f} dBm) is below its sensitivity floor "
                f"({spec.rectifier_sensitivity_dbm:.0f} dBm): nothing is harvested")
        if spec.mode == "dedicated":
            reach = distance_for_received_dbm(
                spec.rectifier_sensitivity_dbm, spec.eirp_dbm, f_hz, spec.rx_gain_dbi, spec.extra_loss_db,
                None if spec.path_model == "free-space" else spec.path_loss_exponent)
            text += f"; the floor is reached within about {reach:.1f} m of the transmitter"
        notes.append(text + ".")
    top_dbm = curve[-1][0]
    if p_in_dbm > top_dbm:
        notes.append(f"The rectifier input ({p_in_dbm:.1f} dBm) lies above its efficiency table "
                     f"(up to {top_dbm:.0f} dBm): the diodes may be overdriven; check their rating.")
    if spec.mode == "ambient":
        notes.append(f"Ambient RF of {spec.ambient_density_uw_cm2:g} uW/cm2 gives "
                     f"{p_in_w * 1e6:.2f} uW at the antenna ({aperture_m2 * 1e4:.0f} cm2 effective "
                     f"aperture) and {p_dc_on_w * 1e6:.2f} uW DC: ambient RF rarely powers a node alone.")
    if present.max() == 0:
        notes.append("The transmitter never radiates under its schedule and duty fraction.")
    return SourceOutput(
        power_w=power_w,
        voltage_v=voltage_v,
        details={
            "rf_input_dbm": np.full(n, p_in_dbm),
            "incident_density_uw_cm2": np.full(n, p_in_w / aperture_m2 * 1e2),
            "rectifier_efficiency": np.full(n, eff),
            "field_present_fraction": present,
        },
        notes=notes,
        levels=[beam],
    )


#: What the rest of the program needs to know about this kind (registered in ``sources/__init__.py``).
KIND = SourceKind(
    kind="rf", model=RfSource, output=rf_output, name="RF receiver", group="rf", group_title="RF beam",
    size_knobs=(SizeKnob("distance_m", "Distance from the transmitter", smaller_is_more=True),),
    cautions=("rf_exposure", "work_at_height"),
    method=("RF: received power from the transmitter's EIRP, the path loss (free space or log-distance) and the "
            "receiving antenna's gain, less extra losses, while the transmitter runs; DC power from the "
            "rectifier's efficiency curve above its sensitivity."),
    reference_modules=("siteharvest.sources.rf",),
)

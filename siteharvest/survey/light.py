"""Light log -> indoor light inputs: lamp level, lamp schedule, occupancy share and daylight factor.

Method
------
The reading at the cell is modelled as E(t) = L s(t) + DF E_out(t): lamps of level L [lx] lit
(s = 1) or dark (s = 0), plus a daylight factor DF [-] times the outdoor diffuse horizontal
illuminance E_out [lx] (the model of :mod:`siteharvest.sources.indoor_light`).

1. Outdoor reference E_out for each reading (:func:`outdoor_reference_lx`): by default the site's
   weather year (file or synthetic) at the same month, day and hour in local standard time, through
   :func:`siteharvest.sources.indoor_light.outdoor_diffuse_illuminance_lx`; or, with
   ``reference="clear-sky"``, a clear sky at the logged instants (pvlib's Ineichen-Perez model with
   Linke turbidity from pvlib's monthly table, then the Perez et al. 1990 efficacy). A typical
   weather year's day is not the logged day, so the daylight factor carries that scatter: see the
   daily spread in the fit's quality.
2. Alternating fit (:func:`fit_light_readings`): the lamp states start from a two-state split of
   the readings taken in the dark (E_out below 2 % of its largest value; all readings when there
   are too few); then, in turn, L and DF by non-negative least squares on E = L s + DF E_out, and
   each reading's state as lit when E - DF E_out > L / 2, until the states stop changing.
3. Schedule and occupancy from the lit states by weekday and hour
   (:mod:`siteharvest.survey.profile`): the lamp schedule's days and hours, and the occupancy
   share as the share of readings lit inside it.
4. Irradiance logs [W/m2 over 300-1200 nm] are fitted in W/m2 with E_out turned into daylight
   irradiance (CIE D65's irradiance per lux); the lamp level is turned into lux with the lamp's
   spectrum (``light_source``).

Fit quality: R2 and RMS residual of the model against the readings, the schedule's agreement with
the lit states, the standard error of DF from the least-squares covariance, and the spread of the
daily DF estimates. Tolerances met on logs made from known parameters (tests): lamp level within
2 %, daylight factor within 5 % (relative) with the same outdoor reference, schedule hours exact.

Unit checks: a log in lux whose brightest reading is below :data:`MIN_LUX_MAX` lx looks like W/m2;
one in W/m2 above :data:`MAX_W_M2` looks like lux. With a stated ``full_scale`` (``# full_scale =``
line or argument), readings at it are clipping and refused.

References
----------
Otsu (1979) for the two-state split; Perez et al. (1990), Solar Energy 44(5), 271-289, for the
outdoor illuminance; Ineichen, P. and Perez, R. (2002). A new airmass independent formulation for
the Linke turbidity coefficient. Solar Energy 73(3), 151-157; Lawson, C.L. and Hanson, R.J. (1974).
Solving Least Squares Problems. Prentice-Hall (non-negative least squares); BS 8206-2 / CIE
daylight factor definition.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from scipy.optimize import nnls

from .. import photometry
from ..errors import SiteInputError
from ..site import SiteSpec
from ..sources.indoor_light import irradiance_per_lux_w_m2, outdoor_diffuse_illuminance_lx
from ..sun import extraterrestrial_normal_w_m2, sun_position
from ..timegrid import REFERENCE_YEAR, fixed_offset
from .apply import FitQuality, SurveyUpdate, pick_source
from .extend import Interval, YearExtension, extend_on_states, t_half_width
from .logs import TimedLog, finite_readings, pick_column, read_timed_log
from .profile import WeekProfile, schedule_of, two_state_split, week_profile

LIGHT_COLUMNS = {"illuminance_lx": "lx", "lux": "lx", "lx": "lx", "illuminance": "lx",
                 "irradiance_w_m2": "W/m2", "w_m2": "W/m2", "irradiance": "W/m2"}
UNITS = ("lx", "W/m2")
#: A lux log whose brightest reading is below this [lx] looks like W/m2 (a lit room reads 100-1000 lx).
MIN_LUX_MAX = 10.0
#: A W/m2 log above this [W/m2] looks like lux (sunlight at the ground stays below about 1,100 W/m2).
MAX_W_M2 = 2000.0
#: Readings in the dark: outdoor reference below this share of its largest value.
DARK_SHARE = 0.02
MAX_ITERATIONS = 50
REFERENCES = ("weather", "clear-sky")


def reference_hours(time_local: pd.DatetimeIndex, utc_offset_h: float) -> np.ndarray:
    """Index (0..8759) of the reference-year hour with the same month, day and hour as each time, read at
    ``utc_offset_h`` (29 February takes 28 February)."""
    t = time_local.tz_convert(fixed_offset(utc_offset_h))
    month, day = t.month.to_numpy(), t.day.to_numpy()
    day = np.where((month == 2) & (day == 29), 28, day)
    first = pd.to_datetime(pd.DataFrame({"year": REFERENCE_YEAR, "month": month, "day": day}))
    doy = ((first - pd.Timestamp(REFERENCE_YEAR, 1, 1)) / pd.Timedelta(days=1)).to_numpy().astype(int)
    return doy * 24 + t.hour.to_numpy()


def clear_sky_diffuse_lx(time_local: pd.DatetimeIndex, latitude_deg: float, longitude_deg: float,
                         altitude_m: float = 0.0) -> np.ndarray:
    """Clear-sky outdoor diffuse horizontal illuminance [lx] at the given instants.

    Method: pvlib's Ineichen-Perez clear sky (Linke turbidity from pvlib's monthly climatology), then
    :func:`siteharvest.photometry.daylight_illuminance_lx` (Perez et al. 1990) with 2 cm of water.
    """
    import pvlib

    times = pd.DatetimeIndex(time_local)
    loc = pvlib.location.Location(latitude_deg, longitude_deg, altitude=altitude_m)
    sky = loc.get_clearsky(times, model="ineichen")
    pos = sun_position(times, latitude_deg, longitude_deg, altitude_m=altitude_m)
    extra = extraterrestrial_normal_w_m2(times).to_numpy(dtype=float)
    lux = photometry.daylight_illuminance_lx(sky["ghi"].to_numpy(), sky["dni"].to_numpy(), sky["dhi"].to_numpy(),
                                             pos["zenith"].to_numpy(), extra)
    return lux["diffuse_illum_lx"].to_numpy()


def outdoor_reference_lx(spec: SiteSpec, time_local: pd.DatetimeIndex,
                         reference: str = "weather") -> tuple[np.ndarray, str]:
    """Outdoor diffuse horizontal illuminance [lx] for each logged time and the words naming it
    (module docstring, step 1)."""
    if reference not in REFERENCES:
        raise SiteInputError("a daylight reference of 'weather' or 'clear-sky'", field="--daylight-reference",
                             got=reference)
    spot = spec.spot
    if reference == "clear-sky":
        return (clear_sky_diffuse_lx(time_local, spot.latitude_deg, spot.longitude_deg, spot.altitude_m),
                "clear sky at the logged times")
    from ..assess import build_context

    ctx, meta = build_context(spec)
    year = outdoor_diffuse_illuminance_lx(ctx)
    return year[reference_hours(time_local, ctx.utc_offset_h)], f"the weather year ({meta.source}) on the logged dates"


@dataclass(frozen=True)
class LightFit:
    """Lamp and daylight inputs fitted to a light log.

    Attributes
    ----------
    lamp_level : float
        Lamp contribution while lit, in the log's unit [lx or W/m2].
    lamp_lux : float [lx]
    daylight_factor_pct : float [%]
    daylight_factor_se_pct : float [%]   standard error from the least-squares covariance.
    daily_daylight_factor_pct : ndarray [%]   one estimate per day with daylight.
    lit : ndarray of bool   each reading's lamp state.
    schedule_hours, schedule_days : str   the lamp schedule (site-file strings).
    occupancy_fraction : float [-]
    profile : WeekProfile
    r2, rms_residual : float   [-], [log unit].
    agreement : float [-]   share of readings whose lamp state the schedule predicts.
    iterations : int
    """

    lamp_level: float
    lamp_lux: float
    daylight_factor_pct: float
    daylight_factor_se_pct: float
    daily_daylight_factor_pct: np.ndarray
    lit: np.ndarray
    schedule_hours: str
    schedule_days: str
    occupancy_fraction: float
    profile: WeekProfile
    r2: float
    rms_residual: float
    agreement: float
    iterations: int
    notes: list[str] = field(default_factory=list)


def _solve(y: np.ndarray, lit: np.ndarray, ref: np.ndarray) -> tuple[float, float, np.ndarray]:
    a = np.column_stack([lit.astype(float), ref])
    keep = a.any(axis=0)
    coef = np.zeros(2)
    if keep.any():
        coef[keep], _ = nnls(a[:, keep], y)
    return float(coef[0]), float(coef[1]), a


def fit_light_readings(time_local: pd.DatetimeIndex, reading: np.ndarray, outdoor_ref: np.ndarray, *,
                       lux_per_unit_lamp: float = 1.0, interval_s: float = 600.0) -> LightFit:
    """Fit lamp level, lamp schedule, occupancy and daylight factor to readings (module docstring, steps 2-3).

    Parameters
    ----------
    time_local : DatetimeIndex     reading times, local standard time.
    reading : array                illuminance [lx] (or irradiance [W/m2]) at the cell.
    outdoor_ref : array            outdoor diffuse reference in the same unit as ``reading`` (lx, or the
                                   daylight irradiance of that illuminance).
    lux_per_unit_lamp : float      lux per unit of the lamp level (1 for lux logs; 1 / (W/m2 per lx) of the
                                   lamp's spectrum for irradiance logs).
    interval_s : float [s]         the log's usual step (for whole-day coverage).

    Returns
    -------
    LightFit
    """
    y = np.maximum(np.asarray(reading, dtype=float), 0.0)
    ref = np.maximum(np.asarray(outdoor_ref, dtype=float), 0.0)
    notes: list[str] = []
    dark = ref <= DARK_SHARE * ref.max() if ref.max() > 0 else np.ones(y.size, dtype=bool)
    overall = two_state_split(y)
    lit = y > overall.threshold if overall.distinct else np.zeros(y.size, dtype=bool)
    if dark.sum() >= 10:
        start = two_state_split(y[dark])
        if start.distinct:
            lit = y > start.threshold
        elif start.low_level > 0.05 * y.max():   # lit all through the dark: lamps always on
            lit = np.ones(y.size, dtype=bool)
    level, df, a = _solve(y, lit, ref)
    iterations = 1
    for count in range(1, MAX_ITERATIONS + 1):
        iterations = count
        new = (y - df * ref) > 0.5 * level if level > 0 else np.zeros(y.size, dtype=bool)
        if np.array_equal(new, lit):
            break
        lit = new
        level, df, a = _solve(y, lit, ref)
    model = a @ np.array([level, df])
    resid = y - model
    ss_tot = float(((y - y.mean()) ** 2).sum())
    r2 = 1.0 - float((resid**2).sum()) / ss_tot if ss_tot > 0 else 1.0
    rms = float(np.sqrt(np.mean(resid**2)))
    dof = max(y.size - 2, 1)
    try:
        cov = np.linalg.inv(a.T @ a) * float((resid**2).sum()) / dof
        df_se = float(np.sqrt(max(cov[1, 1], 0.0)))
    except np.linalg.LinAlgError:
        df_se = math.nan
    # daily daylight factors: days whose outdoor reference sums to at least a tenth of the brightest day's
    frame = pd.DataFrame({"date": time_local.normalize(), "day": y - level * lit, "ref": ref})
    per_day = frame.groupby("date")[["day", "ref"]].sum()
    bright = per_day["ref"] >= 0.1 * per_day["ref"].max() if per_day["ref"].max() > 0 else per_day["ref"] > 0
    daily = (per_day.loc[bright, "day"] / per_day.loc[bright, "ref"]).to_numpy() * 100.0
    if ref.max() <= 0:
        notes.append("no daylight hours in the log's outdoor reference: the daylight factor is not fitted")
    profile = week_profile(time_local, lit)
    sched = schedule_of(profile)
    if not lit.any():
        notes.append("the lamps were never seen lit")
    lamp_lux = level * lux_per_unit_lamp
    if lamp_lux > photometry.MAX_ILLUMINANCE_LX:
        raise SiteInputError(f"a lamp level up to {photometry.MAX_ILLUMINANCE_LX:.0f} lx", field="lamp_lux",
                             got=lamp_lux)
    return LightFit(level, lamp_lux, 100.0 * df, 100.0 * df_se, daily, lit, sched.hours, sched.days,
                    sched.on_share, profile, r2, rms, sched.agreement, iterations, notes)


def check_light_units(values: np.ndarray, unit: str, file: str, column: str, full_scale: float | None,
                      lines: np.ndarray) -> None:
    """Refuse numbers that do not fit their unit, negative light, and readings at the logger's full scale."""
    if unit not in UNITS:
        raise SiteInputError("a light unit of 'lx' or 'W/m2' (name the column illuminance_lx or irradiance_w_m2, "
                             "or give --unit)", file=file, field=column, got=unit or "none")
    neg = values < -1.0
    if neg.any():
        i = int(np.argmax(neg))
        raise SiteInputError("light readings >= 0", file=file, field=column, got=values[i], line=int(lines[i]))
    top = float(values.max())
    if unit == "lx" and top < MIN_LUX_MAX:
        raise SiteInputError(f"lux readings (the brightest is below {MIN_LUX_MAX:g} lx: these look like W/m2; "
                             "give --unit W/m2 if the logger reads irradiance)", file=file, field=column,
                             got=f"at most {top:.3g}")
    if unit == "W/m2" and top > MAX_W_M2:
        raise SiteInputError(f"irradiance up to {MAX_W_M2:g} W/m2 (these look like lux; give --unit lx)",
                             file=file, field=column, got=f"up to {top:.6g}", line=int(lines[int(np.argmax(values))]))
    if unit == "lx" and top > photometry.MAX_ILLUMINANCE_LX:
        raise SiteInputError(f"illuminance up to {photometry.MAX_ILLUMINANCE_LX:.0f} lx", file=file, field=column,
                             got=top, line=int(lines[int(np.argmax(values))]))
    if full_scale is not None:
        clipped = values >= 0.999 * full_scale
        if clipped.sum() >= 3:
            i = int(np.argmax(clipped))
            raise SiteInputError(f"readings below the logger's full scale of {full_scale:g} {unit} "
                                 f"({int(clipped.sum())} readings clip there: move the logger or use a higher "
                                 "range)", file=file, field=column, got=values[i], line=int(lines[i]))


def _full_scale(log: TimedLog, given: float | None) -> float | None:
    if given is not None:
        return float(given)
    text = log.meta.get("full_scale")
    if text is None:
        return None
    try:
        value = float(text)
    except ValueError:
        raise SiteInputError("a number after '# full_scale ='", file=log.file, field="full_scale", got=text) from None
    if not math.isfinite(value) or value <= 0:
        raise SiteInputError("a positive full scale", file=log.file, field="full_scale", got=text)
    return value


def combine_logs(logs: Sequence[TimedLog], columns: Sequence[str]) -> tuple[pd.DatetimeIndex, np.ndarray, np.ndarray,
                                                                           list[str]]:
    """Readings of several logs of one spot in time order (each log's column ``columns[i]``); logs that
    overlap in time are refused."""
    times, values, lines, files = [], [], [], []
    spans = sorted((log.time[0], log.time[-1], log.file) for log in logs)
    for (_a0, a1, fa), (b0, _, fb) in itertools.pairwise(spans):
        if b0 <= a1:
            raise SiteInputError(f"logs of different times (this one overlaps {fa})", file=fb, got=f"from {b0}")
    for log, column in zip(logs, columns, strict=True):
        t, v, n = finite_readings(log, column, "light")
        times.append(t)
        values.append(v)
        lines.append(n)
        files.append(log.file)
    index = times[0].append(times[1:]) if len(times) > 1 else times[0]
    order = np.argsort(index.asi8, kind="stable")
    return index[order], np.concatenate(values)[order], np.concatenate(lines)[order], files


@dataclass(frozen=True)
class LightSurvey:
    """A light survey: the fit, its year extension and the site update.

    ``year``: lamp-lit hours a year with their interval; ``exposure``: the year's light at the cell
    [klx h/yr] with its interval (lamps and daylight); ``update``: the fields for the site.
    """

    fit: LightFit
    year: YearExtension
    exposure: Interval
    reference: str
    unit: str
    update: SurveyUpdate

    def to_json(self) -> dict[str, Any]:
        f = self.fit
        return {"kind": "light", "source_id": self.update.source_id, "fields": self.update.fields,
                "logs": self.update.logs, "first_date": self.update.first_date, "last_date": self.update.last_date,
                "log_unit": self.unit, "daylight_reference": self.reference,
                "quality": self.update.quality.to_json(),
                "daylight_factor_standard_error_pct": f.daylight_factor_se_pct,
                "daily_daylight_factor_pct": [round(float(x), 4) for x in f.daily_daylight_factor_pct],
                "lamp_share_by_weekday_hour": [[None if math.isnan(x) else round(float(x), 4) for x in row]
                                               for row in f.profile.on_share],
                "year": self.year.to_json(), "light_exposure_klxh_per_year": self.exposure.to_json()}


def survey_light(spec: SiteSpec, logs: Sequence[str | Path], *, source_id: str | None = None,
                 column: str | None = None, unit: str | None = None, timezone: str | None = None,
                 reference: str = "weather", full_scale: float | None = None) -> LightSurvey:
    """Fit an indoor light source's inputs to light logs of its spot.

    Parameters
    ----------
    spec : SiteSpec    the site (its spot's place, clock and weather year; the source to fit).
    logs : paths       one or more CSV light logs of the spot (not overlapping in time).
    source_id : str    the indoor_light source (default: the site's only one).
    column, unit : str  the value column and its unit ('lx' or 'W/m2'); default from the column's name.
    timezone : str     how to read timestamps without offsets (see :mod:`siteharvest.survey.logs`).
    reference : str    'weather' (the site's weather year on the logged dates) or 'clear-sky'.
    full_scale : float  the logger's full scale in the log's unit (readings there are refused as clipped).

    Returns
    -------
    LightSurvey
    """
    if not logs:
        raise SiteInputError("at least one light log", field="LOG")
    sid = pick_source(spec, "indoor_light", source_id, "light log")
    src = next(s for s in spec.source if s.id == sid)
    read = [read_timed_log(p, utc_offset_h=spec.spot.utc_offset_h, timezone=timezone, what="light log") for p in logs]
    columns, units = [], []
    for log in read:
        name, found_unit = pick_column(log, column, LIGHT_COLUMNS, "light")
        the_unit = {"lux": "lx", "w/m2": "W/m2", "w_m2": "W/m2"}.get((unit or found_unit or "").lower(),
                                                                      unit or found_unit)
        _t, v, n = finite_readings(log, name, "light")
        check_light_units(v, the_unit, log.file, name, _full_scale(log, full_scale), n)
        columns.append(name)
        units.append(the_unit)
    if len(set(units)) > 1:
        raise SiteInputError("logs in one unit", file=read[-1].file, got=", ".join(units))
    log_unit = units[0]
    time, values, _, files = combine_logs(read, columns)
    span_h = (time[-1] - time[0]) / pd.Timedelta(hours=1)
    if span_h < 24:
        raise SiteInputError("a light log of at least a day (24 h)", file=files[0], got=f"{span_h:.3g} h")
    ref_lx, words = outdoor_reference_lx(spec, time, reference)
    if log_unit == "W/m2":
        ref = ref_lx * irradiance_per_lux_w_m2("daylight")
        lux_per_unit = 1.0 / irradiance_per_lux_w_m2(src.light_source)
    else:
        ref, lux_per_unit = ref_lx, 1.0
    interval_s = float(np.median(np.diff(time.asi8))) / 1e9
    fit = fit_light_readings(time, values, ref, lux_per_unit_lamp=lux_per_unit, interval_s=interval_s)
    year = extend_on_states(time, fit.lit, interval_s, fit.profile, "the lamps lit")
    # year's light at the cell: lamps' on-hours x level plus DF x the weather year's diffuse light
    year_ref = _year_reference(spec, reference)
    df_half = t_half_width(fit.daily_daylight_factor_pct / 100.0)
    df = fit.daylight_factor_pct / 100.0
    if not math.isfinite(df_half):
        df_half = df      # one day of daylight: its factor uncertain by all of itself
    lamp_klxh = fit.lamp_lux * year.on_hours.value / 1000.0
    day_klxh = df * year_ref / 1000.0
    lamp_lo = fit.lamp_lux * year.on_hours.low / 1000.0
    lamp_hi = fit.lamp_lux * year.on_hours.high / 1000.0
    lo = lamp_klxh + day_klxh - math.hypot(lamp_klxh - lamp_lo, df_half * year_ref / 1000.0)
    hi = lamp_klxh + day_klxh + math.hypot(lamp_hi - lamp_klxh, df_half * year_ref / 1000.0)
    exposure = Interval(lamp_klxh + day_klxh, max(lo, 0.0), hi, "klx h/yr")
    notes = list(fit.notes) + list(year.notes)
    df_pct = fit.daylight_factor_pct
    if df_pct > 20.0:
        notes.append(f"the fitted daylight factor {df_pct:.1f} % is beyond 20 %: direct sun on the cell? set to 20 %")
        df_pct = 20.0
    if fit.profile.unobserved_days:
        notes.append("weekdays not logged (lamps taken as off): " + ", ".join(fit.profile.unobserved_days))
    summary = (f"R2 {fit.r2:.3f}, RMS residual {fit.rms_residual:.3g} {log_unit}, schedule agrees with "
               f"{100 * fit.agreement:.1f} % of {len(values):,} readings over {span_h / 24:.1f} days; daylight "
               f"factor +/- {fit.daylight_factor_se_pct:.3g} % (standard error) against {words}")
    quality = FitQuality(summary, {"r2": fit.r2, "rms_residual": fit.rms_residual, "agreement": fit.agreement,
                                   "readings": float(len(values)), "days": span_h / 24.0,
                                   "daylight_factor_se_pct": fit.daylight_factor_se_pct}, notes)
    fields: dict[str, Any] = {"lamp_lux": round(fit.lamp_lux, 1),
                              "occupancy_fraction": round(fit.occupancy_fraction, 3)}
    if fit.lit.any():
        fields["lamp_schedule"] = {"hours": fit.schedule_hours, "days": fit.schedule_days}
    if ref.max() > 0:
        fields["daylight_factor_pct"] = round(df_pct, 3)
    update = SurveyUpdate("light", sid, fields, [str(p) for p in logs], time[0].strftime("%Y-%m-%d"),
                          time[-1].strftime("%Y-%m-%d"), quality, exposure.spread_pct)
    return LightSurvey(fit, year, exposure, words, log_unit, update)


def _year_reference(spec: SiteSpec, reference: str) -> float:
    """The year's outdoor diffuse light [lx h]: the weather year's, or a clear-sky year's."""
    if reference == "clear-sky":
        from ..timegrid import reference_index

        idx = reference_index(spec.spot.utc_offset_h) + pd.Timedelta(minutes=30)
        return float(clear_sky_diffuse_lx(idx, spec.spot.latitude_deg, spec.spot.longitude_deg,
                                          spec.spot.altitude_m).sum())
    from ..assess import build_context

    ctx, _ = build_context(spec)
    return float(outdoor_diffuse_illuminance_lx(ctx).sum())

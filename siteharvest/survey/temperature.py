"""Temperature logs -> thermoelectric inputs: hot-side levels running and stopped, schedule, shutdowns.

Method
------
1. Readings: the surface temperature [degC] and, where logged, the air temperature [degC] beside
   the spot (in the same log or another; air readings are interpolated in time onto the surface
   readings). The quantity split into two states is the surface's excess over the air when the air
   was logged (so a warm afternoon is not taken for a running process), else the surface temperature.
2. States: a two-state split (Otsu 1979, :mod:`siteharvest.survey.profile`); readings in the
   transitions between the levels (the casing warming up or cooling down) lie in the middle third
   of the levels' distance and are left out of the levels, which are the medians of each state.
   When the split finds one state only (or levels less than :data:`MIN_STEP_K` apart), the hot side
   is constant at the median surface temperature.
3. Schedule and shutdowns from the running states by weekday and hour; shutdown dates are scheduled
   days (a single stopped weekday between running ones counts as scheduled) observed whole with no
   running reading, left out of the profile and kept as the process
   schedule's dates off (they recur on the same dates in the simulated year: remove them when they
   were one-offs).
4. Year: the running share by weekday and hour over the year, with the 90 % interval of
   :mod:`siteharvest.survey.extend`.

Tolerances met on logs made from known parameters (tests): levels within 0.5 K with 0.2 K noise,
schedule hours exact, a logged shutdown day found.

Unit check: surface readings that all lie between 200 and 1000 look like kelvin, not degC.

References
----------
Otsu, N. (1979). IEEE Trans. Systems, Man, and Cybernetics 9(1), 62-66.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from ..errors import SiteInputError
from ..site import SiteSpec
from .apply import FitQuality, SurveyUpdate, pick_source
from .extend import YearExtension, extend_on_states
from .logs import TimedLog, read_timed_log
from .profile import WeekProfile, days_text, schedule_of, shutdown_dates, two_state_split, week_profile

SURFACE_COLUMNS = ("surface_c", "hot_surface_c", "surface_temp_c", "pipe_c", "casing_c", "temp_c",
                   "temperature_c")
AIR_COLUMNS = ("air_c", "air_temp_c", "temp_air_c", "ambient_c")
MIN_C, MAX_C = -60.0, 600.0
#: Running and stopped levels closer than this [K] are one level (a casing's daily swing, not a process).
MIN_STEP_K = 3.0


@dataclass(frozen=True)
class TemperatureFit:
    """Hot-side inputs fitted to a surface temperature log.

    Attributes: ``running_c``, ``stopped_c`` [degC] medians of each state (equal when one state only);
    ``distinct`` whether two states were found; ``running`` bool per reading; ``schedule_hours``,
    ``schedule_days``; ``running_share`` [-] inside the schedule; ``shutdowns`` dates; ``profile``;
    ``agreement`` [-]; ``separation`` [-]; ``air_mean_c`` [degC] or None; ``notes``.
    """

    running_c: float
    stopped_c: float
    distinct: bool
    running: np.ndarray
    schedule_hours: str
    schedule_days: str
    running_share: float
    shutdowns: list[pd.Timestamp]
    profile: WeekProfile
    agreement: float
    separation: float
    air_mean_c: float | None
    notes: list[str] = field(default_factory=list)


def fit_temperature_readings(time_local: pd.DatetimeIndex, surface_c: np.ndarray, air_c: np.ndarray | None = None,
                             *, interval_s: float = 900.0) -> TemperatureFit:
    """Fit hot-side levels, process schedule and shutdown dates (module docstring, steps 1-3).

    Parameters
    ----------
    time_local : DatetimeIndex   reading times, local standard time.
    surface_c : array [degC]     surface temperature.
    air_c : array [degC], optional   air temperature at the same times.
    interval_s : float [s]       the log's usual step.
    """
    surface = np.asarray(surface_c, dtype=float)
    x = surface - np.asarray(air_c, dtype=float) if air_c is not None else surface
    split = two_state_split(x)
    notes: list[str] = []
    if not split.distinct or split.high_level - split.low_level < MIN_STEP_K:
        level = float(np.median(surface))
        prof = week_profile(time_local, np.ones(surface.size, dtype=bool))
        notes.append("one temperature level only: the hot side is taken as constant")
        return TemperatureFit(level, level, False, np.ones(surface.size, dtype=bool), "all", "every day", 1.0, [],
                              prof, 1.0, split.separation, None if air_c is None else float(np.mean(air_c)), notes)
    running = split.high
    lo, hi = split.low_level, split.high_level
    steady = (x <= lo + (hi - lo) / 3) | (x >= hi - (hi - lo) / 3)
    on_c = float(np.median(surface[running & steady]))
    off_c = float(np.median(surface[~running & steady]))
    first_profile = week_profile(time_local, running)
    days_on = schedule_of(first_profile).mask.any(axis=1)
    for d in range(1, 6):   # one stopped weekday between running ones: a shutdown, not a weekly day off
        if not days_on[d] and days_on[d - 1] and days_on[d + 1] and first_profile.dates[d] > 0:
            days_on[d] = True
    stops = shutdown_dates(time_local, running, days_on, interval_s)
    keep = ~time_local.normalize().isin(pd.DatetimeIndex(stops)) if stops else np.ones(surface.size, dtype=bool)
    prof = week_profile(time_local[keep], running[keep])
    sched = schedule_of(prof)
    hours, days = sched.hours, sched.days
    shut = sorted({d.day_of_week for d in stops if prof.dates[d.day_of_week] == 0})
    if shut:   # weekdays seen only shut down: scheduled like the other running days
        day_mask = sched.mask.any(axis=1)
        share = prof.on_share.copy()
        with warnings.catch_warnings():   # an hour off on every running day: no mean, and no warning for it
            warnings.simplefilter("ignore", RuntimeWarning)
            share[shut] = np.nanmean(np.where(sched.mask[day_mask], share[day_mask], np.nan), axis=0)
        share[shut] = np.where(sched.mask[day_mask].any(axis=0), share[shut], 0.0)
        day_mask[shut] = True
        days = days_text(day_mask)
        prof = WeekProfile(share, prof.readings, np.where(np.isin(np.arange(7), shut), first_profile.dates,
                                                          prof.dates))
    if stops:
        notes.append("shutdown dates (kept as dates off): " + ", ".join(d.strftime("%Y-%m-%d") for d in stops))
    return TemperatureFit(on_c, off_c, True, running, hours, days, sched.on_share, stops, prof,
                          sched.agreement, split.separation, None if air_c is None else float(np.mean(air_c)), notes)


def _column(log: TimedLog, wanted: str | None, names: Sequence[str]) -> str | None:
    if wanted is not None:
        return wanted.lower() if wanted.lower() in log.values else None
    return next((c for c in names if c in log.values), None)


def check_temperatures(values: np.ndarray, file: str, column: str, lines: np.ndarray) -> None:
    """Refuse temperatures outside -60..600 degC and logs that look like kelvin."""
    if values.size and np.all((values > 200) & (values < 1000)):
        raise SiteInputError("temperatures in degC (these look like kelvin: subtract 273.15)", file=file,
                             field=column, got=f"{values.min():.6g} to {values.max():.6g}")
    bad = (values < MIN_C) | (values > MAX_C)
    if bad.any():
        i = int(np.argmax(bad))
        raise SiteInputError(f"a temperature from {MIN_C:g} to {MAX_C:g} degC", file=file, field=column,
                             got=values[i], line=int(lines[i]))


@dataclass(frozen=True)
class TemperatureSurvey:
    """A temperature survey: the fit, the year extension (running hours) and the site update."""

    fit: TemperatureFit
    year: YearExtension
    update: SurveyUpdate

    def to_json(self) -> dict[str, Any]:
        f = self.fit
        return {"kind": "temperature", "source_id": self.update.source_id, "fields": self.update.fields,
                "spot_fields": self.update.spot_fields, "logs": self.update.logs,
                "first_date": self.update.first_date, "last_date": self.update.last_date,
                "quality": self.update.quality.to_json(),
                "shutdown_dates": [d.strftime("%Y-%m-%d") for d in f.shutdowns],
                "running_share_by_weekday_hour": [[None if math.isnan(v) else round(float(v), 4) for v in row]
                                                  for row in f.profile.on_share],
                "year": self.year.to_json()}


def survey_temperature(spec: SiteSpec, logs: Sequence[str | Path], *, source_id: str | None = None,
                       surface_column: str | None = None, air_column: str | None = None,
                       timezone: str | None = None) -> TemperatureSurvey:
    """Fit a thermoelectric source's hot side to temperature logs of its spot.

    Parameters
    ----------
    spec : SiteSpec
    logs : paths   CSV logs holding the surface column (``surface_c``, ...) and optionally the air column
        (``air_c``, ...), in one file or several.
    source_id : str   the thermoelectric source (default: the site's only one).
    surface_column, air_column : str   column names when they differ from the usual ones.
    timezone : str   see :mod:`siteharvest.survey.logs`.
    """
    if not logs:
        raise SiteInputError("at least one temperature log", field="LOG")
    sid = pick_source(spec, "thermoelectric", source_id, "temperature log")
    src = next(s for s in spec.source if s.id == sid)
    read = [read_timed_log(p, utc_offset_h=spec.spot.utc_offset_h, timezone=timezone, what="temperature log")
            for p in logs]
    surf_t, surf_v, air_t, air_v = [], [], [], []
    for log in read:
        s_col, a_col = _column(log, surface_column, SURFACE_COLUMNS), _column(log, air_column, AIR_COLUMNS)
        if s_col is None and a_col is None:
            raise SiteInputError("a surface temperature column (" + ", ".join(SURFACE_COLUMNS[:3]) + ", ...) or an "
                                 "air column (" + ", ".join(AIR_COLUMNS[:2]) + ", ...)", file=log.file,
                                 got=", ".join(log.values))
        for col, times, vals in ((s_col, surf_t, surf_v), (a_col, air_t, air_v)):
            if col is None:
                continue
            v = log.values[col]
            ok = np.isfinite(v)
            check_temperatures(v[ok], log.file, col, log.lines[ok])
            times.append(log.time[ok])
            vals.append(v[ok])
    if not surf_t:
        raise SiteInputError("a surface temperature column in one of the logs", file=read[0].file,
                             got=", ".join(read[0].values))
    time = surf_t[0].append(surf_t[1:]) if len(surf_t) > 1 else surf_t[0]
    order = np.argsort(time.asi8, kind="stable")
    time, surface = time[order], np.concatenate(surf_v)[order]
    if np.any(np.diff(time.asi8) == 0):
        raise SiteInputError("surface logs of different times (two give the same time)", file=read[-1].file)
    span_h = (time[-1] - time[0]) / pd.Timedelta(hours=1)
    if span_h < 24:
        raise SiteInputError("a temperature log of at least a day (24 h)", file=read[0].file, got=f"{span_h:.3g} h")
    air = None
    if air_t:
        at = air_t[0].append(air_t[1:]) if len(air_t) > 1 else air_t[0]
        ao = np.argsort(at.asi8, kind="stable")
        air = np.interp(time.asi8.astype(float), at.asi8[ao].astype(float), np.concatenate(air_v)[ao])
    interval_s = float(np.median(np.diff(time.asi8))) / 1e9
    fit = fit_temperature_readings(time, surface, air, interval_s=interval_s)
    keep = ~time.normalize().isin(pd.DatetimeIndex(fit.shutdowns)) if fit.shutdowns else np.ones(time.size, bool)
    year = extend_on_states(time[keep], fit.running[keep], interval_s, fit.profile, "the process running")
    notes = list(fit.notes) + list(year.notes)
    if getattr(src, "pipe", None) is not None:
        notes.append("the source has a pipe wall: its hot side is the fluid's temperature, but the log gives "
                     "the surface's; check hot_side")
    if fit.profile.unobserved_days:
        notes.append("weekdays not logged (taken as stopped): " + ", ".join(fit.profile.unobserved_days))
    if fit.distinct:
        hot: dict[str, Any] = {"mode": "schedule", "process_on_c": round(fit.running_c, 1),
                               "process_off_c": round(fit.stopped_c, 1),
                               "process": {"hours": fit.schedule_hours, "days": fit.schedule_days}}
        if fit.shutdowns:
            hot["process"]["off_dates"] = sorted({d.strftime("%m-%d") for d in fit.shutdowns})
        replace = () if src.hot_side.mode == "schedule" else ("hot_side",)   # another kind: replace it whole
    else:
        hot = {"mode": "constant", "surface_c": round(fit.running_c, 1)}
        replace = ("hot_side",)
    summary = (f"levels {fit.running_c:.1f} / {fit.stopped_c:.1f} degC running / stopped "
               f"({fit.separation:.3g} standard deviations apart), schedule agrees with {100 * fit.agreement:.1f} % "
               f"of {time.size:,} readings over {span_h / 24:.1f} days, running {100 * fit.running_share:.0f} % "
               "of the scheduled readings")
    quality = FitQuality(summary, {"agreement": fit.agreement, "separation": fit.separation,
                                   "readings": float(time.size), "days": span_h / 24.0,
                                   "running_share": fit.running_share}, notes)
    spot_fields = {}
    if fit.air_mean_c is not None and spec.spot.indoors:
        spot_fields["indoor_air_c"] = round(fit.air_mean_c, 1)
    update = SurveyUpdate("temperature", sid, {"hot_side": hot}, [str(p) for p in logs],
                          time[0].strftime("%Y-%m-%d"), time[-1].strftime("%Y-%m-%d"), quality,
                          year.on_hours.spread_pct if fit.distinct else 0.0, spot_fields, replace)
    return TemperatureSurvey(fit, year, update)

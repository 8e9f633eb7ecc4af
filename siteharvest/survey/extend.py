"""From a short log to a year, with the spread a short log leaves.

Method
------
1. Profile year: every hour of the reference year takes the on-share of its weekday and hour of day
   from the log's profile (:func:`siteharvest.survey.profile.week_profile`). A weekday the log never
   saw is taken as off (lamps dark, process stopped); the spread below says how much that may miss.
   Daylight (light logs) is the fitted daylight factor times the weather year's outdoor diffuse
   illuminance, hour by hour: the season comes from the weather year, not from the log.
2. Spread: the log's whole days are grouped into workdays (Mon-Fri) and weekend days. In each group
   of n days with daily on-hours x_i (mean m, standard deviation s), the group's contribution to the
   year, N m over its N days a year, carries a two-sided 90 % Student-t interval
   N t(0.95, n-1) s / sqrt(n): the days logged are taken as a random sample of that group's days.
   A group with one whole day logged gets a half-width of its whole contribution (one day says
   nothing about how days differ); a group never logged adds, to the upper bound only, its N days
   at the other group's mean. Groups combine in quadrature (independent).
   For the daylight factor, the same interval over the daily daylight-factor estimates.
3. Not in the spread: seasons the log did not see (lamps used longer in winter, a process that
   runs only in summer) and changes of use. A log shorter than four weeks says so in its notes.

References
----------
Student (1908). The probable error of a mean. Biometrika 6(1), 1-25.
ISO/IEC Guide 98-3:2008 (GUM), section 6 (expanded uncertainty) and annex G (Student's t).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy import stats

from ..timegrid import HOURS_PER_YEAR, hour_of_day, weekday_of_hour
from .profile import FULL_DAY_COVERAGE, WeekProfile

#: Confidence of the stated intervals (two-sided).
CONFIDENCE = 0.90
#: Logs shorter than this [days] see one season only; the notes say so.
SEASON_DAYS = 28.0
WORKDAYS = np.array([True] * 5 + [False] * 2)


@dataclass(frozen=True)
class Interval:
    """A year total with its 90 % interval: ``value``, ``low``, ``high`` in ``unit``."""

    value: float
    low: float
    high: float
    unit: str

    @property
    def spread_pct(self) -> float:
        """Half the interval's width as a share of the value [%] (inf when the value is 0 and the width is not)."""
        half = 0.5 * (self.high - self.low)
        if self.value == 0:
            return 0.0 if half == 0 else math.inf
        return 100.0 * half / abs(self.value)

    def to_json(self) -> dict[str, float | str]:
        return {"value": self.value, "low": self.low, "high": self.high, "unit": self.unit,
                "spread_pct": self.spread_pct}


@dataclass(frozen=True)
class YearExtension:
    """A log extended to the reference year.

    Attributes: ``hourly_on_share`` (8760,) [-] the on-share of each hour; ``on_hours`` the year's
    on-hours with their interval [h/yr]; ``days_logged`` whole days behind it (workdays, weekend days);
    ``method`` a sentence; ``notes``.
    """

    hourly_on_share: np.ndarray
    on_hours: Interval
    days_logged: tuple[int, int]
    method: str
    notes: list[str] = field(default_factory=list)

    def to_json(self) -> dict[str, object]:
        return {"on_hours_per_year": self.on_hours.to_json(), "whole_days_logged":
                {"workdays": self.days_logged[0], "weekend_days": self.days_logged[1]},
                "method": self.method, "notes": self.notes}


def t_half_width(values: np.ndarray, confidence: float = CONFIDENCE) -> float:
    """Half-width of the two-sided Student-t interval of the mean of ``values`` (inf for fewer than 2)."""
    x = np.asarray(values, dtype=float)
    if x.size < 2:
        return math.inf
    return float(stats.t.ppf(0.5 + confidence / 2, x.size - 1) * x.std(ddof=1) / math.sqrt(x.size))


def daily_on_hours(time_local: pd.DatetimeIndex, on: np.ndarray, interval_s: float) -> pd.DataFrame:
    """On-hours of each whole logged day: columns ``on_h``, ``workday`` (index: the date).

    A day is whole when its readings cover at least ``FULL_DAY_COVERAGE`` of it; its on-hours are its
    on-share times 24 h.
    """
    frame = pd.DataFrame({"date": time_local.normalize(), "on": np.asarray(on, dtype=float)})
    g = frame.groupby("date")["on"].agg(["mean", "size"])
    covered = np.minimum(g["size"] * interval_s / 3600.0, 24.0) >= FULL_DAY_COVERAGE * 24
    g = g[covered]
    return pd.DataFrame({"on_h": g["mean"] * 24.0, "workday": WORKDAYS[g.index.day_of_week]}, index=g.index)


def profile_year(profile: WeekProfile) -> np.ndarray:
    """The on-share of each hour of the reference year from a weekly profile (unseen cells off)."""
    share = np.nan_to_num(profile.on_share, nan=0.0)
    return share[weekday_of_hour(), hour_of_day()]


def group_interval(daily: pd.DataFrame, total: float, unit: str = "h/yr") -> tuple[Interval, list[str]]:
    """The interval of a year total built from workday and weekend groups (module docstring, step 2)."""
    n_year = {True: int(WORKDAYS[weekday_of_hour()[::24]].sum()), False: 0}
    n_year[False] = HOURS_PER_YEAR // 24 - n_year[True]
    notes: list[str] = []
    var = 0.0
    extra_high = 0.0
    means = {}
    for workday in (True, False):
        x = daily.loc[daily["workday"] == workday, "on_h"].to_numpy()
        means[workday] = float(x.mean()) if x.size else None
        word = "workday" if workday else "weekend day"
        if x.size == 1:
            var += (n_year[workday] * x[0]) ** 2
            notes.append(f"one whole {word} logged: its share of the year is uncertain by all of itself")
        elif x.size >= 2:
            var += (n_year[workday] * t_half_width(x)) ** 2
    for workday in (True, False):
        other = means[not workday]
        if means[workday] is None and other is not None:
            extra_high += n_year[workday] * other
            notes.append(f"no whole {'workday' if workday else 'weekend day'} logged: taken as off; the upper "
                         "bound counts them like the other days")
    half = math.sqrt(var)
    return Interval(total, max(0.0, total - half), total + half + extra_high, unit), notes


def extend_on_states(time_local: pd.DatetimeIndex, on: np.ndarray, interval_s: float,
                     profile: WeekProfile, what: str) -> YearExtension:
    """Extend on/off states of a log to the reference year (module docstring, steps 1-2).

    Parameters
    ----------
    time_local : DatetimeIndex   reading times, local standard time.
    on : array of bool           state of each reading.
    interval_s : float [s]       the log's usual step.
    profile : WeekProfile        the states' profile (from the same readings, shutdown dates left out).
    what : str                   what "on" means, for the method sentence ("lamps lit").
    """
    hourly = profile_year(profile)
    daily = daily_on_hours(time_local, on, interval_s)
    interval, notes = group_interval(daily, float(hourly.sum()))
    span = (time_local[-1] - time_local[0]) / pd.Timedelta(days=1)
    if span < SEASON_DAYS:
        notes.append(f"the log covers {span:.1f} days of one season; how use changes over the seasons is not "
                     "in the spread")
    method = (f"each hour of the year takes the share of readings with {what} at its weekday and hour in the "
              f"log; the 90 % interval treats the logged days as a sample of workdays and weekend days "
              f"(Student's t)")
    return YearExtension(hourly, interval, (int(daily["workday"].sum()), int((~daily["workday"]).sum())),
                         method, notes)

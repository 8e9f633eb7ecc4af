"""On/off states from a log, their profile by weekday and hour, and the weekly schedule that fits it.

Shared by the light (lamps lit), temperature (process running) and vibration (machine running) fits.

Method
------
1. Two states from one measured quantity (:func:`two_state_split`): the threshold that maximises the
   between-class variance of the readings (Otsu 1979). The two states count as distinct when their
   means lie at least :data:`MIN_SEPARATION` pooled standard deviations apart; otherwise the log shows
   one state only.
2. Profile (:func:`week_profile`): for each weekday and hour of the day, the share of readings in the
   "on" state and the number of readings and of distinct dates behind it.
3. Schedule (:func:`schedule_of`): the days with any hour on in at least half its readings; the hours
   on in at least half the readings of those days; the share of readings on inside that schedule
   (the occupancy or running share) and the agreement: the share of all readings whose state the
   schedule (on inside, off outside) predicts.
4. Shutdown dates (:func:`shutdown_dates`): scheduled days covered by readings for at least
   :data:`FULL_DAY_COVERAGE` of the day with no reading on.

References
----------
Otsu, N. (1979). A threshold selection method from gray-level histograms. IEEE Transactions on
Systems, Man, and Cybernetics 9(1), 62-66.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..schedule import DAY_NAMES

#: Two states are told apart when their means differ by at least this many pooled standard deviations.
MIN_SEPARATION = 2.0
#: A day counts as observed whole when readings cover at least this share of its hours.
FULL_DAY_COVERAGE = 0.8


@dataclass(frozen=True)
class TwoStates:
    """Readings split into a low and a high state.

    Attributes: ``threshold`` (in the readings' unit), ``high`` (bool per reading), ``low_level`` and
    ``high_level`` (medians of each state), ``separation`` (difference of the means over the pooled
    standard deviation, inf when both states are flat), ``distinct`` (separation >= MIN_SEPARATION).
    """

    threshold: float
    high: np.ndarray
    low_level: float
    high_level: float
    separation: float
    distinct: bool


def otsu_threshold(values: np.ndarray) -> float:
    """The threshold maximising the between-class variance of ``values`` (Otsu 1979), over the midpoints
    between distinct sorted values. Values all equal: that value."""
    x = np.sort(np.asarray(values, dtype=float))
    n = x.size
    if n < 2 or x[0] == x[-1]:
        return float(x[0]) if n else 0.0
    csum = np.cumsum(x)
    k = np.arange(1, n)                       # k readings in the low class
    w0, w1 = k / n, (n - k) / n
    mu0 = csum[:-1] / k
    mu1 = (csum[-1] - csum[:-1]) / (n - k)
    between = w0 * w1 * (mu0 - mu1) ** 2
    between[x[1:] == x[:-1]] = -1.0           # a threshold must fall between two distinct values
    best = int(np.argmax(between))
    return float(0.5 * (x[best] + x[best + 1]))


def two_state_split(values: np.ndarray) -> TwoStates:
    """Split readings into a low and a high state (see the module docstring, step 1)."""
    x = np.asarray(values, dtype=float)
    t = otsu_threshold(x)
    high = x > t
    if high.all() or not high.any():
        level = float(np.median(x))
        return TwoStates(t, np.zeros(x.size, dtype=bool), level, level, 0.0, False)
    lo, hi = x[~high], x[high]
    pooled = np.sqrt((lo.var() * lo.size + hi.var() * hi.size) / x.size)
    sep = float((hi.mean() - lo.mean()) / pooled) if pooled > 0 else float("inf")
    return TwoStates(t, high, float(np.median(lo)), float(np.median(hi)), sep, sep >= MIN_SEPARATION)


@dataclass(frozen=True)
class WeekProfile:
    """Share of readings on by weekday (Monday = 0) and hour of day.

    Attributes: ``on_share`` (7, 24), NaN where nothing was read; ``readings`` (7, 24) counts;
    ``dates`` (7,) number of distinct dates logged on each weekday.
    """

    on_share: np.ndarray
    readings: np.ndarray
    dates: np.ndarray

    @property
    def observed_days(self) -> list[str]:
        return [DAY_NAMES[d] for d in range(7) if self.dates[d] > 0]

    @property
    def unobserved_days(self) -> list[str]:
        return [DAY_NAMES[d] for d in range(7) if self.dates[d] == 0]


def week_profile(time_local: pd.DatetimeIndex, on: np.ndarray, weight: np.ndarray | None = None) -> WeekProfile:
    """The on-share of readings by weekday and hour (see the module docstring, step 2).

    Parameters
    ----------
    time_local : DatetimeIndex   reading times in local standard time.
    on : array of bool           state of each reading.
    weight : array, optional     weight of each reading (default 1).
    """
    day = time_local.day_of_week.to_numpy()
    hour = time_local.hour.to_numpy()
    w = np.ones(len(time_local)) if weight is None else np.asarray(weight, dtype=float)
    cell = day * 24 + hour
    total = np.bincount(cell, weights=w, minlength=168).reshape(7, 24)
    lit = np.bincount(cell, weights=w * np.asarray(on, dtype=float), minlength=168).reshape(7, 24)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(total > 0, lit / total, np.nan)
    dates = pd.Series(time_local.normalize()).groupby(day).nunique()
    per_day = np.zeros(7, dtype=int)
    per_day[dates.index.to_numpy()] = dates.to_numpy()
    return WeekProfile(share, total, per_day)


def hours_text(mask: np.ndarray) -> str:
    """24 booleans as the site file's hours string: ``"07-19"``, ``"22-06"``, ``"06-09,17-20"``, ``"all"``."""
    m = np.asarray(mask, dtype=bool)
    if m.all():
        return "all"
    if not m.any():
        return ""
    start = int(np.argmin(m))        # begin scanning at an off hour so a window over midnight stays whole
    windows: list[tuple[int, int]] = []
    h = start
    for _ in range(24):
        if m[h % 24] and not m[(h - 1) % 24]:
            end = h
            while m[end % 24]:
                end += 1
            windows.append((h % 24, end % 24 if end % 24 else 24))
        h += 1
    windows.sort()
    return ",".join(f"{a:02d}-{b:02d}" for a, b in windows)


def days_text(mask: np.ndarray) -> str:
    """7 booleans (Monday first) as the site file's days string: ``"weekdays"``, ``"mon-sat"``, ``"mon,wed"``."""
    m = np.asarray(mask, dtype=bool)
    if m.all():
        return "every day"
    if not m.any():
        return ""
    if list(m) == [True] * 5 + [False] * 2:
        return "weekdays"
    if list(m) == [False] * 5 + [True] * 2:
        return "weekends"
    parts: list[str] = []
    d = 0
    while d < 7:
        if m[d]:
            end = d
            while end + 1 < 7 and m[end + 1]:
                end += 1
            parts.append(DAY_NAMES[d] if end == d else f"{DAY_NAMES[d]}-{DAY_NAMES[end]}")
            d = end + 1
        else:
            d += 1
    return ",".join(parts)


@dataclass(frozen=True)
class ScheduleFit:
    """A weekly schedule fitted to a profile.

    Attributes: ``hours`` and ``days`` (site-file strings; ``"all"`` / ``"every day"`` with ``on_share``
    0 when nothing was ever on), ``mask`` (7, 24) the schedule, ``on_share`` share of readings on inside
    it [-], ``agreement`` share of readings whose state the schedule predicts [-], ``profile``.
    """

    hours: str
    days: str
    mask: np.ndarray
    on_share: float
    agreement: float
    profile: WeekProfile


#: Off hours inside a schedule's window are filled when at most this many in a row, each lit in at
#: least :data:`GAP_SHARE` of its readings (absences, not a schedule's break).
MAX_GAP_H = 2
GAP_SHARE = 0.2


def close_gaps(hour_on: np.ndarray, hour_share: np.ndarray) -> np.ndarray:
    """Fill short gaps in a day's on-hours (at most :data:`MAX_GAP_H` hours, each on in at least
    :data:`GAP_SHARE` of its readings); the longest off stretch (the night or the weekend) stays."""
    on = np.asarray(hour_on, dtype=bool).copy()
    if on.all() or not on.any():
        return on
    start = int(np.argmax(on))      # scan from an on hour so every gap is whole
    gaps: list[list[int]] = []
    for step in range(24):
        h = (start + step) % 24
        if not on[h]:
            if gaps and gaps[-1][-1] == (h - 1) % 24 and step > 0 and not on[(h - 1) % 24]:
                gaps[-1].append(h)
            else:
                gaps.append([h])
    longest = max(len(g) for g in gaps)
    for gap in gaps:
        if len(gap) <= MAX_GAP_H and len(gap) < longest and all(hour_share[h] >= GAP_SHARE for h in gap):
            on[gap] = True
    return on


def schedule_of(profile: WeekProfile, threshold: float = 0.5) -> ScheduleFit:
    """The weekly schedule that fits a profile (see the module docstring, step 3)."""
    share = np.nan_to_num(profile.on_share, nan=0.0)
    n = profile.readings
    day_on = (share >= threshold).any(axis=1)
    if not day_on.any():
        mask = np.zeros((7, 24), dtype=bool)
        agreement = float(((1 - share) * n).sum() / n.sum())
        return ScheduleFit("all", "every day", mask, 0.0, agreement, profile)
    sub_n = n[day_on]
    hour_share = np.divide((share[day_on] * sub_n).sum(axis=0), sub_n.sum(axis=0),
                           out=np.zeros(24), where=sub_n.sum(axis=0) > 0)
    hour_on = hour_share >= threshold
    if not hour_on.any():
        hour_on = hour_share >= hour_share.max()
    hour_on = close_gaps(hour_on, hour_share)
    mask = day_on[:, None] & hour_on[None, :]
    inside = (n * mask).sum()
    on_share = float((share * n * mask).sum() / inside) if inside > 0 else 0.0
    agree = (share * n * mask).sum() + ((1 - share) * n * ~mask).sum()
    return ScheduleFit(hours_text(hour_on), days_text(day_on), mask, on_share, float(agree / n.sum()), profile)


def shutdown_dates(time_local: pd.DatetimeIndex, on: np.ndarray, days_mask: np.ndarray,
                   interval_s: float) -> list[pd.Timestamp]:
    """Scheduled dates observed whole with no reading on (see the module docstring, step 4)."""
    frame = pd.DataFrame({"date": time_local.normalize(), "on": np.asarray(on, dtype=bool)})
    grouped = frame.groupby("date")["on"].agg(["sum", "size"])
    covered_h = np.minimum(grouped["size"] * interval_s / 3600.0, 24.0)
    out = []
    for date, row in grouped.iterrows():
        if row["sum"] == 0 and days_mask[date.day_of_week] and covered_h[date] >= FULL_DAY_COVERAGE * 24:
            out.append(date)
    return out

"""Weekly schedules on the reference year: active hours, active days, holidays, shutdown weeks.

Written in the site file as plain strings:

- hours: ``"06-22"`` (06:00 up to 22:00), ``"22-06"`` (wraps past midnight), ``"all"``,
  or several windows ``"06-09,17-20"``;
- days: ``"every day"``, ``"weekdays"`` (Mon-Fri), ``"weekends"``, or names ``"mon,wed,fri"``
  / ranges ``"mon-sat"``;
- holidays / off dates: ``["12-25", "01-01"]`` (month-day);
- shutdown weeks: ISO-like week numbers 1..52 of the reference year.
"""

from __future__ import annotations

import re

import numpy as np
from pydantic import Field, field_validator

from .fields import Section
from .timegrid import HOURS_PER_YEAR, REFERENCE_YEAR, day_of_hour, hour_of_date, hour_of_day, weekday_of_hour

DAY_NAMES = ("mon", "tue", "wed", "thu", "fri", "sat", "sun")
_WINDOW = re.compile(r"^\s*(\d{1,2})\s*-\s*(\d{1,2})\s*$")
_DATE = re.compile(r"^(\d{2})-(\d{2})$")


def parse_hours(text: str) -> np.ndarray:
    """24 booleans, True for the hours of day a window string covers. Raises ValueError."""
    text = text.strip().lower()
    if text in ("all", "always", "00-24", "0-24"):
        return np.ones(24, dtype=bool)
    out = np.zeros(24, dtype=bool)
    for part in text.split(","):
        match = _WINDOW.match(part)
        if not match:
            raise ValueError(f"hours as 'HH-HH' windows such as '06-22' or 'all', not '{text}'")
        start, end = int(match[1]), int(match[2])
        if not (0 <= start <= 23 and 0 <= end <= 24) or start == end:
            raise ValueError(f"hours from 00 to 24 with start != end, not '{part.strip()}'")
        if start < end:
            out[start:end] = True
        else:
            out[start:] = True
            out[:end] = True
    return out


def parse_days(text: str) -> np.ndarray:
    """7 booleans (Monday first), True for the weekdays a day string covers. Raises ValueError."""
    text = text.strip().lower()
    named = {"every day": "mon-sun", "all": "mon-sun", "daily": "mon-sun",
             "weekdays": "mon-fri", "weekends": "sat-sun"}
    text = named.get(text, text)
    out = np.zeros(7, dtype=bool)
    for part in text.split(","):
        ends = [p.strip()[:3] for p in part.split("-")]
        if not ends or any(e not in DAY_NAMES for e in ends) or len(ends) > 2:
            raise ValueError("days as 'every day', 'weekdays', 'weekends' or names like 'mon-fri' "
                             f"or 'mon,wed', not '{text}'")
        first, last = DAY_NAMES.index(ends[0]), DAY_NAMES.index(ends[-1])
        idx = np.arange(first, first + ((last - first) % 7) + 1) % 7
        out[idx] = True
    return out


def parse_date(text: str) -> tuple[int, int]:
    """(month, day) from ``"MM-DD"``. Raises ValueError."""
    match = _DATE.match(text.strip())
    if not match:
        raise ValueError(f"a date as 'MM-DD', not '{text}'")
    month, day = int(match[1]), int(match[2])
    try:
        hour_of_date(month, day)
    except ValueError as exc:
        raise ValueError(f"a real date of {REFERENCE_YEAR} as 'MM-DD', not '{text}'") from exc
    return month, day


class WeeklySchedule(Section):
    """When something runs: hours of the day, days of the week, dates off and weeks shut down."""

    hours: str = Field("all", description="active hours of the day, e.g. '06-22', '22-06', '06-09,17-20', 'all'")
    days: str = Field("every day", description="active days: 'every day', 'weekdays', 'weekends', 'mon-sat', "
                      "'mon,wed,fri'")
    off_dates: list[str] = Field(default_factory=list, description="dates off as 'MM-DD' (holidays)")
    shutdown_weeks: list[int] = Field(default_factory=list, description="weeks of the year (1..53) off entirely")

    @field_validator("hours")
    @classmethod
    def _hours(cls, v: str) -> str:
        parse_hours(v)
        return v

    @field_validator("days")
    @classmethod
    def _days(cls, v: str) -> str:
        parse_days(v)
        return v

    @field_validator("off_dates")
    @classmethod
    def _dates(cls, v: list[str]) -> list[str]:
        for d in v:
            parse_date(d)
        return v

    @field_validator("shutdown_weeks")
    @classmethod
    def _weeks(cls, v: list[int]) -> list[int]:
        if any(not 1 <= w <= 53 for w in v):
            raise ValueError("week numbers from 1 to 53")
        return v

    def mask(self) -> np.ndarray:
        """8760 booleans: True in the hours this schedule is active."""
        return active_mask(self.hours, self.days, self.off_dates, self.shutdown_weeks)


def active_mask(hours: str = "all", days: str = "every day", off_dates: list[str] | tuple[str, ...] = (),
                shutdown_weeks: list[int] | tuple[int, ...] = ()) -> np.ndarray:
    """8760 booleans for the reference year: True where the schedule is active."""
    mask = parse_hours(hours)[hour_of_day()] & parse_days(days)[weekday_of_hour()]
    day = day_of_hour()
    for text in off_dates:
        month, dom = parse_date(text)
        mask[day == hour_of_date(month, dom) // 24] = False
    if shutdown_weeks:
        week = np.minimum(day // 7 + 1, 53)
        mask[np.isin(week, list(shutdown_weeks))] = False
    assert mask.shape == (HOURS_PER_YEAR,)
    return mask

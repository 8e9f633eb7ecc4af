"""The reference year: 8760 hourly steps in the spot's local standard time.

Each step is labelled by the start of its hour and holds the mean over that hour. The calendar is
that of a fixed non-leap year (2025) so weekdays are stable; weather whose months come from
different years is mapped onto it. Local standard time means a fixed UTC offset, never DST.
"""

from __future__ import annotations

import datetime as dt
from functools import cache

import numpy as np
import pandas as pd

HOURS_PER_YEAR = 8760
REFERENCE_YEAR = 2025
SECONDS_PER_HOUR = 3600.0


def fixed_offset(utc_offset_h: float) -> dt.timezone:
    """A fixed-offset time zone (local standard time) ``utc_offset_h`` hours east of UTC."""
    return dt.timezone(dt.timedelta(hours=float(utc_offset_h)))


def reference_index(utc_offset_h: float) -> pd.DatetimeIndex:
    """Hour-start timestamps of the reference year in local standard time."""
    return pd.date_range(
        pd.Timestamp(REFERENCE_YEAR, 1, 1), periods=HOURS_PER_YEAR, freq="h",
        tz=fixed_offset(utc_offset_h), name="time",
    )


@cache
def _month_of_hour() -> np.ndarray:
    """Month number (1..12) of each hour of the reference year."""
    arr = reference_index(0).month.to_numpy()
    arr.flags.writeable = False
    return arr


def month_of_hour() -> np.ndarray:
    """Month number (1..12) of each hour of the reference year."""
    return _month_of_hour()


def day_of_hour() -> np.ndarray:
    """Day of year (0..364) of each hour of the reference year."""
    return np.arange(HOURS_PER_YEAR) // 24


def hour_of_day() -> np.ndarray:
    """Hour of day (0..23) of each hour of the reference year."""
    return np.arange(HOURS_PER_YEAR) % 24


@cache
def _weekday_of_hour() -> np.ndarray:
    """Weekday (Monday=0 .. Sunday=6) of each hour of the reference year."""
    arr = reference_index(0).day_of_week.to_numpy()
    arr.flags.writeable = False
    return arr


def weekday_of_hour() -> np.ndarray:
    """Weekday (Monday=0 .. Sunday=6) of each hour of the reference year."""
    return _weekday_of_hour()


def hour_of_date(month: int, day: int) -> int:
    """Index of the first hour of ``month``/``day`` in the reference year."""
    return int((pd.Timestamp(REFERENCE_YEAR, month, day) - pd.Timestamp(REFERENCE_YEAR, 1, 1))
               / pd.Timedelta(hours=1))

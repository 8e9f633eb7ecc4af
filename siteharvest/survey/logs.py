"""Reading and checking survey logs: timestamped readings (lux, temperature, RMS vibration).

A log is a CSV file: optional ``# key = value`` comment lines, a header row, then one row per
reading. The time column is named ``time``, ``timestamp``, ``datetime``, ``time_local`` or
``time_utc`` (else it is the first column); every other column holds numbers (an empty cell is a
missing reading). Readings may come at any interval from seconds to :data:`MAX_INTERVAL_H` hours,
with gaps.

Timestamps
----------
- with a UTC offset on every stamp (``2025-03-03T08:00:00+01:00``, ``...Z``): taken as written,
  so a log that follows daylight saving with its offsets is read correctly;
- in a column named ``time_utc``, or with ``timezone="UTC"``: UTC;
- otherwise (no offset): local clock time, read by ``timezone``: ``None`` (the default) or
  ``"standard"`` for the spot's local standard time (its ``utc_offset_h``), or a time-zone name
  (``"Europe/Berlin"``) for a clock that follows that zone's daylight saving.

Everything is then expressed in the spot's local standard time (the reference year's clock).

Checks (each a one-line :class:`~siteharvest.errors.SiteInputError` naming the file and line):
empty or one-row files; text where a number or a timestamp belongs; stamps with and without offsets
mixed; repeated timestamps; timestamps going back (rows out of order, or a clock set back); a step
of exactly one hour at night on a Sunday, the mark of a daylight-saving change in a log read as
standard time (pass ``timezone`` to read it); a clock never set (before 2000) or jumping more than
:data:`MAX_GAP_DAYS` days; readings further apart than :data:`MAX_INTERVAL_H` hours.
"""

from __future__ import annotations

import io
import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import SiteInputError
from ..timegrid import fixed_offset

#: Largest log read [bytes] and most rows (a week of one reading a second is 604,800 rows).
MAX_LOG_BYTES = 100_000_000
MAX_LOG_ROWS = 2_000_000
#: Longest typical step between readings accepted [h]: coarser logs cannot show a schedule by hour.
MAX_INTERVAL_H = 6.0
#: Longest gap taken as a gap [days]; a longer one is a clock jump.
MAX_GAP_DAYS = 60.0
#: Longest log [days]: a survey covers days to weeks, at most about a year.
MAX_SPAN_DAYS = 400.0
#: Earliest and latest year a logger's clock may show (earlier: a clock never set).
FIRST_YEAR, LAST_YEAR = 2000, 2100

TIME_NAMES = ("time", "timestamp", "datetime", "date_time", "time_local", "time_utc", "date")
_OFFSET = re.compile(r"(?:Z|[+-]\d{2}:?\d{2})$", re.IGNORECASE)
_META = re.compile(r"^#\s*([A-Za-z_][A-Za-z0-9_]*)\s*[=:]\s*(.*?)\s*$")


@dataclass(frozen=True)
class TimedLog:
    """A survey log in the spot's local standard time.

    Attributes
    ----------
    file : str
        The file as named in messages.
    time : pandas.DatetimeIndex
        Reading times, tz-aware at the spot's fixed UTC offset (local standard time), increasing.
    values : dict of str -> ndarray
        Each value column (header name lower-cased, stripped) as floats; NaN where the cell was empty.
    lines : ndarray of int
        The 1-based file line of each reading.
    meta : dict of str -> str
        ``# key = value`` comment pairs above the table (keys lower-cased).
    interval_s : float
        Median step between readings [s].
    """

    file: str
    time: pd.DatetimeIndex
    values: dict[str, np.ndarray]
    lines: np.ndarray
    meta: dict[str, str] = field(default_factory=dict)
    interval_s: float = 0.0

    @property
    def first_date(self) -> str:
        return self.time[0].strftime("%Y-%m-%d")

    @property
    def last_date(self) -> str:
        return self.time[-1].strftime("%Y-%m-%d")

    @property
    def span_days(self) -> float:
        return float((self.time[-1] - self.time[0]) / pd.Timedelta(days=1))

    def column(self, name: str) -> np.ndarray:
        return self.values[name]


def read_text(path: Path, what: str, max_bytes: int = MAX_LOG_BYTES) -> str:
    """A log file's text (UTF-8, BOM allowed); one SiteInputError line when it cannot be read."""
    name = str(path)
    try:
        size = path.stat().st_size
        if size > max_bytes:
            raise SiteInputError(f"a {what} of at most {max_bytes // 1_000_000} MB", file=name,
                                 got=f"{size:,} bytes")
        text = path.read_bytes().decode("utf-8-sig")
    except FileNotFoundError:
        raise SiteInputError(f"an existing {what}", file=name) from None
    except IsADirectoryError:
        raise SiteInputError(f"a {what}, not a folder", file=name) from None
    except (UnicodeDecodeError, OSError) as exc:
        raise SiteInputError(f"a readable UTF-8 text {what}", file=name, got=type(exc).__name__) from None
    if "\x00" in text:
        raise SiteInputError(f"a text {what}", file=name, got="NUL bytes (a binary file?)")
    return text


def split_table(text: str, name: str, what: str) -> tuple[dict[str, str], list[int], list[str]]:
    """``# key = value`` pairs, and the 1-based line numbers and texts of the table's lines
    (blank and comment lines left out)."""
    meta: dict[str, str] = {}
    numbers: list[int] = []
    rows: list[str] = []
    for i, line in enumerate(text.splitlines(), start=1):
        stripped = line.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            match = _META.match(stripped)
            if match and not rows:
                meta[match[1].lower()] = match[2]
            continue
        numbers.append(i)
        rows.append(line)
    if not rows:
        raise SiteInputError(f"a {what} with a header row and readings", file=name, got="an empty file")
    if len(rows) - 1 > MAX_LOG_ROWS:
        raise SiteInputError(f"at most {MAX_LOG_ROWS:,} readings", file=name, got=f"{len(rows) - 1:,} rows")
    return meta, numbers, rows


def parse_table(rows: list[str], numbers: list[int], name: str, what: str) -> pd.DataFrame:
    """The table's cells as text (pandas), one SiteInputError line when it is not a CSV table."""
    header = rows[0]
    delimiter = next((d for d in (",", ";", "\t") if d in header), ",")
    try:
        frame = pd.read_csv(io.StringIO("\n".join(rows)), sep=delimiter, dtype=str, skipinitialspace=True,
                            keep_default_na=False, quoting=3, engine="python" if delimiter == "\t" else "c")
    except pd.errors.ParserError as exc:
        shape = re.search(r"Expected (\d+) fields in line (\d+), saw (\d+)", str(exc))
        line = numbers[int(shape[2]) - 1] if shape and int(shape[2]) - 1 < len(numbers) else None
        raise SiteInputError("as many cells in every row as in the header"
                             + (f" ({shape[1]})" if shape else ""), file=name,
                             got=f"{shape[3]} cells" if shape else None, line=line) from None
    except Exception as exc:   # the CSV parser on hostile bytes: still one line
        raise SiteInputError(f"a {what} as a CSV table", file=name,
                             got=f"a table the CSV parser stopped on ({type(exc).__name__})") from None
    frame.columns = [str(c).strip().strip('"').lower() for c in frame.columns]
    if len(set(frame.columns)) != len(frame.columns):
        raise SiteInputError("each column named once in the header", file=name, got=", ".join(frame.columns),
                             line=numbers[0])
    return frame


def numeric_column(frame: pd.DataFrame, column: str, numbers: list[int], name: str) -> np.ndarray:
    """A column as floats, NaN for empty cells; SiteInputError naming the first cell that is text."""
    raw = frame[column].astype(str).str.strip().str.strip('"')
    empty = raw.eq("")
    values = pd.to_numeric(raw.where(~empty, None), errors="coerce").to_numpy(dtype=float)
    bad = (np.isnan(values) & ~empty.to_numpy()) | np.isinf(values)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise SiteInputError("a finite number (or an empty cell for a missing reading)", file=name, field=column,
                             got=raw.iloc[i], line=numbers[i + 1])
    return values


def _is_dst_step(before: pd.Timestamp, after: pd.Timestamp, interval: pd.Timedelta) -> bool:
    """Whether the step from ``before`` to ``after`` (naive local clock) looks like a daylight-saving
    change: one hour more (spring) or less (autumn) than the usual interval, at night on a Sunday."""
    step = after - before
    hour = pd.Timedelta(hours=1)
    tol = max(interval * 0.1, pd.Timedelta(seconds=1))
    near = abs(step - (interval + hour)) <= tol or abs(step - (interval - hour)) <= tol
    return bool(near and interval < hour and before.day_of_week == 6 and 0 <= before.hour <= 4)


def parse_stamps(text: pd.Series, *, utc_offset_h: float, timezone: str | None, time_column: str,
                 numbers: list[int], name: str) -> pd.DatetimeIndex:
    """Timestamps as tz-aware local standard time (the spot's fixed offset); see the module docstring."""
    stamps_text = text.astype(str).str.strip().str.strip('"')
    spot_tz = fixed_offset(utc_offset_h)
    has_offset = stamps_text.str.contains(_OFFSET).to_numpy()
    first_line = numbers[1]
    example = "a timestamp such as 2025-03-03 08:00 or 2025-03-03T08:00:00+01:00"
    if has_offset.any():
        if not has_offset.all():
            i = int(np.argmin(has_offset))
            raise SiteInputError("every timestamp with a UTC offset, or none", file=name, field=time_column,
                                 got=stamps_text.iloc[i], line=numbers[i + 1])
        parsed = pd.to_datetime(stamps_text, utc=True, errors="coerce", format="ISO8601")
        naive = None
    else:
        parsed = pd.to_datetime(stamps_text, errors="coerce", format="ISO8601")
        naive = parsed
    if parsed.isna().any():
        i = int(np.argmax(parsed.isna().to_numpy()))
        raise SiteInputError(example, file=name, field=time_column, got=stamps_text.iloc[i], line=numbers[i + 1])
    index = pd.DatetimeIndex(parsed)
    years = index.year.to_numpy()
    early = (years < FIRST_YEAR) | (years > LAST_YEAR)
    if early.any():
        i = int(np.argmax(early))
        raise SiteInputError(f"a logger clock set to a real date ({FIRST_YEAR}-{LAST_YEAR}; was it never set, "
                             "or did it jump?)", file=name, field=time_column, got=stamps_text.iloc[i],
                             line=numbers[i + 1])
    zone = (timezone or "").strip()
    if naive is not None:
        if time_column == "time_utc" or zone.upper() == "UTC":
            index = index.tz_localize("UTC")
        elif zone and zone.lower() != "standard":
            try:
                index = index.tz_localize(zone, ambiguous="infer", nonexistent="raise")
            except Exception as exc:   # unknown zone name, or clock times the zone never shows
                if "time zone" in str(exc).lower() or "unknown" in str(exc).lower() or isinstance(exc, KeyError):
                    raise SiteInputError("a time-zone name such as Europe/Berlin, 'UTC' or 'standard'",
                                         file=name, field="timezone", got=zone) from None
                raise SiteInputError(f"clock times that exist in {zone} once each (a log that skipped or "
                                     "repeated the daylight-saving hour: write it in UTC, or with offsets)",
                                     file=name, field=time_column, got=str(exc).split(",")[0][:60]) from None
        else:
            index = index.tz_localize(spot_tz)
    index = index.tz_convert(spot_tz).as_unit("ns")   # one resolution: pandas may parse to seconds
    if len(index) < 2:
        raise SiteInputError("at least 2 readings", file=name, field=time_column, got=f"{len(index)} row",
                             line=first_line)
    check_order(index, naive if not zone else None, stamps_text, numbers, name, time_column)
    return index


def check_order(index: pd.DatetimeIndex, naive: pd.Series | None, stamps_text: pd.Series, numbers: list[int],
                name: str, time_column: str) -> float:
    """Refuse repeated or backward timestamps, daylight-saving steps, clock jumps and coarse logs; returns
    the median interval [s]."""
    ns = index.asi8
    steps = np.diff(ns)
    positive = steps[steps > 0]
    interval = pd.Timedelta(int(np.median(positive)) if positive.size else 0)
    if naive is not None and interval > pd.Timedelta(0):
        naive_index = pd.DatetimeIndex(naive)
        for i in np.flatnonzero(np.abs(steps - interval.value) > max(0.1 * interval.value, 1e9)):
            if _is_dst_step(naive_index[i], naive_index[i + 1], interval):
                direction = "back" if steps[i] < interval.value else "forward"
                raise SiteInputError(
                    "timestamps on one clock: the clock goes " + direction + " an hour here, a daylight-saving "
                    "change (give the log's time zone, e.g. --timezone Europe/Berlin, write it in UTC, or "
                    "--timezone standard if it is a plain gap)", file=name, field=time_column,
                    got=f"{stamps_text.iloc[i]} then {stamps_text.iloc[i + 1]}", line=numbers[i + 2])
    same = np.flatnonzero(steps == 0)
    back = np.flatnonzero(steps < 0)
    if same.size and (not back.size or same[0] < back[0]):
        i = int(same[0])
        raise SiteInputError("each timestamp once (a repeated row or clock)", file=name, field=time_column,
                             got=f"{stamps_text.iloc[i + 1]} again", line=numbers[i + 2])
    if back.size:
        i = int(back[0])
        raise SiteInputError("timestamps increasing (rows out of order, or the logger's clock set back)",
                             file=name, field=time_column,
                             got=f"{stamps_text.iloc[i + 1]} after {stamps_text.iloc[i]}", line=numbers[i + 2])
    jump = np.flatnonzero(steps > MAX_GAP_DAYS * 86400e9)
    if jump.size:
        i = int(jump[0])
        raise SiteInputError(f"gaps of at most {MAX_GAP_DAYS:g} days (a longer one is a clock jump)", file=name,
                             field=time_column, got=f"{stamps_text.iloc[i]} then {stamps_text.iloc[i + 1]}",
                             line=numbers[i + 2])
    span_days = (ns[-1] - ns[0]) / 86400e9
    if span_days > MAX_SPAN_DAYS:
        raise SiteInputError(f"a log of at most {MAX_SPAN_DAYS:g} days", file=name, field=time_column,
                             got=f"{span_days:.0f} days")
    interval_s = interval.value / 1e9
    if interval_s > MAX_INTERVAL_H * 3600:
        raise SiteInputError(f"readings at least every {MAX_INTERVAL_H:g} h (to show a schedule by hour)",
                             file=name, field=time_column, got=f"one every {interval_s / 3600:.3g} h")
    return interval_s


def read_timed_log(path: str | Path, *, utc_offset_h: float, timezone: str | None = None,
                   what: str = "survey log") -> TimedLog:
    """Read a timestamped survey log (see the module docstring for layout, clocks and checks).

    Parameters
    ----------
    path : str or Path
        The CSV log.
    utc_offset_h : float [h]
        The spot's local standard time offset from UTC (the clock the result is expressed in).
    timezone : str, optional
        How to read timestamps without offsets: None or "standard" (the spot's standard time; None
        also refuses daylight-saving steps), "UTC", or a time-zone name.
    what : str
        What the file is, for messages ("light log").

    Returns
    -------
    TimedLog

    Raises
    ------
    SiteInputError
        One line naming the file, the column and the line.
    """
    path = Path(path)
    name = str(path)
    if not (isinstance(utc_offset_h, int | float) and math.isfinite(utc_offset_h) and -12 <= utc_offset_h <= 14):
        raise SiteInputError("a UTC offset from -12 to 14 h", file=name, field="utc_offset_h", got=utc_offset_h)
    text = read_text(path, what)
    meta, numbers, rows = split_table(text, name, what)
    frame = parse_table(rows, numbers, name, what)
    if len(frame) < 2:
        raise SiteInputError(f"a {what} with at least 2 readings below the header", file=name,
                             got=f"{len(frame)} reading{'s' if len(frame) != 1 else ''}",
                             line=numbers[-1])
    if frame.shape[1] < 2:
        raise SiteInputError("a time column and at least one value column", file=name,
                             got=", ".join(frame.columns), line=numbers[0])
    time_column = next((c for c in frame.columns if c in TIME_NAMES), frame.columns[0])
    zone = timezone if timezone is not None else meta.get("timezone")
    index = parse_stamps(frame[time_column], utc_offset_h=float(utc_offset_h), timezone=zone,
                         time_column=time_column, numbers=numbers, name=name)
    values = {c: numeric_column(frame, c, numbers, name) for c in frame.columns if c != time_column}
    steps = np.diff(index.asi8)
    return TimedLog(file=name, time=index, values=values, lines=np.asarray(numbers[1:]), meta=meta,
                    interval_s=float(np.median(steps)) / 1e9)


def pick_column(log: TimedLog, wanted: str | None, candidates: dict[str, str], what: str) -> tuple[str, str]:
    """The value column to use and its unit.

    ``candidates`` maps column names to their unit (``{"illuminance_lx": "lx", ...}``). ``wanted`` names a
    column (its unit then comes from its name's suffix, or the log's ``# unit =`` line).
    """
    if wanted is not None:
        key = wanted.strip().lower()
        if key not in log.values:
            raise SiteInputError(f"a column named '{wanted}'", file=log.file, field="column",
                                 got=", ".join(log.values), line=int(log.lines[0]) - 1)
        unit = candidates.get(key) or next((u for c, u in candidates.items() if key.endswith(c)), None)
        return key, unit or log.meta.get("unit", "")
    found = [c for c in log.values if c in candidates]
    if len(found) != 1:
        raise SiteInputError(f"one {what} column named " + ", ".join(f"'{c}'" for c in candidates)
                             + " (or name it with --column)", file=log.file, got=", ".join(log.values) or "none")
    return found[0], candidates[found[0]]


def finite_readings(log: TimedLog, column: str, what: str, minimum: int = 2) -> tuple[pd.DatetimeIndex, np.ndarray,
                                                                                    np.ndarray]:
    """Times, values and lines of the readings present in ``column`` (empty cells left out)."""
    values = log.values[column]
    keep = np.isfinite(values)
    if keep.sum() < minimum:
        raise SiteInputError(f"at least {minimum} {what} readings", file=log.file, field=column,
                             got=f"{int(keep.sum())}")
    return log.time[keep], values[keep], log.lines[keep]

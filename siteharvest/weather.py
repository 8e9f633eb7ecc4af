"""The weather year of a spot: read from a TMY3, EPW or plain CSV file, or made up (synthetic).

Every source ends as one frame on the reference year (:mod:`siteharvest.timegrid`): 8760 hour-start
rows in the file's local standard time, float columns in the project's vocabulary:

==================  ======  ==========================================================
column              unit    meaning
==================  ======  ==========================================================
ghi_w_m2            W/m2    global horizontal irradiance, mean over the hour
dni_w_m2            W/m2    direct normal irradiance
dhi_w_m2            W/m2    diffuse horizontal irradiance
temp_air_c          degC    air temperature
wind_speed_m_s      m/s     wind speed
global_illum_lx     lx      global horizontal illuminance (optional)
direct_illum_lx     lx      direct normal illuminance (optional)
diffuse_illum_lx    lx      diffuse horizontal illuminance (optional)
pressure_pa         Pa      station pressure (optional)
dew_point_c         degC    dew-point temperature (optional)
==================  ======  ==========================================================

Mapping onto the reference year: TMY3 and EPW label each hour by its end; they become hour-start
labels. Rows are matched by month, day and hour, so months taken from different years (a typical
year) fall into place; 29 February is dropped. Every bad input raises :class:`SiteInputError` naming
the file, the column and what was expected.
"""

from __future__ import annotations

import importlib.util
import io
import math
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Annotated, Any, Literal

import numpy as np
import pandas as pd
from pydantic import Field, SerializerFunctionWrapHandler, field_validator, model_serializer, model_validator

from .errors import SiteInputError
from .fields import Section, quantity
from .files import FolderFiles, SiteFiles
from .synthetic_weather import (
    DEFAULT_AIR_TEMP_C,
    DEFAULT_MONTHLY_CLEARNESS,
    DEFAULT_MONTHLY_TEMP_C,
    DEFAULT_WIND_SPEED_M_S,
    seasonal_inputs,
    synthetic_year,
)
from .timegrid import HOURS_PER_YEAR, fixed_offset, reference_index

WEATHER_COLUMNS = ("ghi_w_m2", "dni_w_m2", "dhi_w_m2", "temp_air_c", "wind_speed_m_s")
OPTIONAL_COLUMNS = ("global_illum_lx", "direct_illum_lx", "diffuse_illum_lx", "pressure_pa", "dew_point_c")

#: Physical bounds of each column (low, high, unit); values outside are input errors (required
#: columns) or make an optional column be dropped with a note.
VALUE_RANGES: dict[str, tuple[float, float, str]] = {
    "ghi_w_m2": (0.0, 1500.0, "W/m2"),
    "dni_w_m2": (0.0, 1400.0, "W/m2"),
    "dhi_w_m2": (0.0, 1000.0, "W/m2"),
    "temp_air_c": (-90.0, 70.0, "degC"),
    "wind_speed_m_s": (0.0, 75.0, "m/s"),
    "global_illum_lx": (0.0, 200_000.0, "lx"),
    "direct_illum_lx": (0.0, 200_000.0, "lx"),
    "diffuse_illum_lx": (0.0, 200_000.0, "lx"),
    "pressure_pa": (30_000.0, 110_000.0, "Pa"),
    "dew_point_c": (-90.0, 70.0, "degC"),
}

WeatherFormat = Literal["auto", "tmy3", "epw", "csv"]
SOURCE_FIELDS = ("file", "bundled", "synthetic")

Clearness = Annotated[float, Field(ge=0.05, le=0.8)]
MonthTempC = Annotated[float, Field(ge=-60.0, le=50.0)]


class SyntheticWeatherSpec(Section):
    """A made-up weather year from monthly means (see :mod:`siteharvest.synthetic_weather`)."""

    monthly_clearness: tuple[Clearness, ...] = Field(
        DEFAULT_MONTHLY_CLEARNESS, min_length=12, max_length=12,
        description="Monthly mean daily clearness index K_T (daily global over extraterrestrial on the "
                    "horizontal), January..December; defaults are a temperate inland spot, moved by six "
                    "months south of the equator [-]",
        json_schema_extra={"unit": "-"},
    )
    monthly_temp_c: tuple[MonthTempC, ...] = Field(
        DEFAULT_MONTHLY_TEMP_C, min_length=12, max_length=12,
        description="Monthly mean air temperature, January..December; defaults as for "
                    "monthly_clearness [degC]",
        json_schema_extra={"unit": "degC"},
    )
    daily_temp_swing_c: float = quantity(
        8.0, "degC", "Mean difference between the daily maximum and minimum air temperature",
        ge=0.0, le=30.0, step=0.5)
    seed: int = Field(1, ge=0, description="Seed of the random generator: the same seed gives the same year")

    @model_serializer(mode="wrap")
    def _leave_out_place_defaults(self, handler: SerializerFunctionWrapHandler) -> dict[str, Any]:
        """Defaults that depend on the spot's hemisphere are not written out: a saved site file reopened
        (or moved to another latitude) resolves them again for its own place."""
        data = handler(self)
        for name in PLACE_DEPENDENT_DEFAULTS:
            if name not in self.model_fields_set:
                data.pop(name, None)
        return data


# Fields of SyntheticWeatherSpec whose default is resolved by latitude (see synthetic_weather.seasonal_inputs).
PLACE_DEPENDENT_DEFAULTS = ("monthly_clearness", "monthly_temp_c")


class WeatherSpec(Section):
    """Where the weather year comes from: exactly one of ``file``, ``bundled``, ``synthetic``.

    None given means a synthetic year with default monthly values.
    """

    file: str | None = Field(
        None, min_length=1,
        description="Weather file (TMY3, EPW or plain CSV), relative to the site file")
    bundled: str | None = Field(
        None, min_length=1,
        description="Name of a typical-year file shipped in the installed pvlib package's data folder, "
                    "e.g. '723170TYA.CSV'")
    synthetic: SyntheticWeatherSpec | None = Field(
        None, description="A synthetic year made from monthly clearness and temperature")
    file_format: WeatherFormat = Field(
        "auto", description="Format of the file: 'auto' (from its first lines), 'tmy3', 'epw' or 'csv'")

    @model_validator(mode="before")
    @classmethod
    def _exactly_one_source(cls, data: Any) -> Any:
        if isinstance(data, dict):
            given = [key for key in SOURCE_FIELDS if data.get(key) is not None]
            if len(given) > 1:
                raise ValueError(f"give exactly one of file, bundled, synthetic (got {' and '.join(given)})")
            if not given:
                data = {**data, "synthetic": {}}
        return data

    @field_validator("bundled")
    @classmethod
    def _plain_name(cls, value: str | None) -> str | None:
        if value is not None and (Path(value).name != value or value.startswith(".")):
            raise ValueError(f"a plain file name from pvlib's data folder, not a path ('{value}')")
        return value

    @property
    def source_kind(self) -> str:
        """Which source is given: 'file', 'bundled' or 'synthetic'."""
        return next(key for key in SOURCE_FIELDS if getattr(self, key) is not None)


@dataclass
class WeatherMeta:
    """Where a weather year came from.

    Attributes
    ----------
    latitude_deg, longitude_deg : float
        The station's (file) or the spot's (synthetic) place [deg north, deg east]; NaN if unknown.
    altitude_m : float
        Altitude [m]; NaN if unknown.
    utc_offset_h : float
        UTC offset of the frame's local standard time [h].
    source : str
        What the year was read from or made of (file name, format).
    notes : list[str]
        Plain-words remarks: defaults filled in, components derived, distance to the spot...
    """

    latitude_deg: float
    longitude_deg: float
    altitude_m: float
    utc_offset_h: float
    source: str
    notes: list[str] = field(default_factory=list)
    far_station: FarStation | None = None


# A weather year stands for a spot when its station is near enough to share the spot's climate and
# seasons. Thresholds (common practice for choosing a typical-year station; no single standard):
# farther than 200 km, more than 3 degrees of latitude apart, or on the other side of the equator.
FAR_STATION_KM = 200.0
FAR_STATION_LATITUDE_DEG = 3.0
EARTH_KM_PER_DEG = 111.2  # mean great-circle kilometres per degree (6371 km x pi / 180)


@dataclass
class FarStation:
    """The weather year's station is too far from the spot to stand for it.

    Attributes
    ----------
    station_latitude_deg, station_longitude_deg : float
        Where the weather year was measured [deg north, deg east].
    distance_km : float
        Great-circle distance from the station to the spot [km].
    latitude_difference_deg : float
        Spot latitude minus station latitude [deg].
    other_hemisphere : bool
        Station and spot lie on opposite sides of the equator (seasons six months apart).
    """

    station_latitude_deg: float
    station_longitude_deg: float
    distance_km: float
    latitude_difference_deg: float
    other_hemisphere: bool

    @property
    def reasons(self) -> list[str]:
        """Which thresholds are passed, in words."""
        out = []
        if self.distance_km > FAR_STATION_KM:
            out.append(f"more than {FAR_STATION_KM:g} km")
        if abs(self.latitude_difference_deg) > FAR_STATION_LATITUDE_DEG:
            out.append(f"{abs(self.latitude_difference_deg):.1f} degrees of latitude apart, more than "
                       f"{FAR_STATION_LATITUDE_DEG:g}")
        if self.other_hemisphere:
            out.append("on the other side of the equator, with seasons six months apart")
        return out

    @property
    def sentence(self) -> str:
        """One plain sentence: what is far, and what to do."""
        return (f"The weather station ({self.station_latitude_deg:.2f}, {self.station_longitude_deg:.2f}) lies "
                f"{self.distance_km:,.0f} km from the spot and does not stand for it ({'; '.join(self.reasons)}). "
                "Use a weather file from near the spot, or the synthetic year for the spot's own place "
                "([weather] synthetic = {}).")

    def to_json(self) -> dict[str, Any]:
        return {"station_latitude_deg": round(self.station_latitude_deg, 4),
                "station_longitude_deg": round(self.station_longitude_deg, 4),
                "distance_km": round(self.distance_km, 1),
                "latitude_difference_deg": round(self.latitude_difference_deg, 3),
                "other_hemisphere": self.other_hemisphere, "reasons": self.reasons,
                "message": self.sentence, "fix": {"weather": {"synthetic": {}}}}


def far_station(station_lat_deg: float, station_lon_deg: float, spot_lat_deg: float,
                spot_lon_deg: float) -> FarStation | None:
    """A :class:`FarStation` when the station passes any threshold above, else ``None``."""
    distance_km = angular_distance_deg(station_lat_deg, station_lon_deg, spot_lat_deg, spot_lon_deg) * EARTH_KM_PER_DEG
    found = FarStation(float(station_lat_deg), float(station_lon_deg), float(distance_km),
                       float(spot_lat_deg - station_lat_deg), bool(station_lat_deg * spot_lat_deg < 0))
    return found if found.reasons else None


# --------------------------------------------------------------------------------------------------
# Reading files


@dataclass
class _Raw:
    """A file's rows before mapping onto the reference year."""

    data: pd.DataFrame  # our column names, file order
    start: pd.DatetimeIndex  # naive local standard time, start of each hour, aligned with data
    labels: np.ndarray  # time of each row as written in the file
    lines: np.ndarray  # file line of each row
    time_field: str  # the time column(s), for messages
    file_columns: dict[str, str]  # our name -> name in the file, for messages
    all_columns: list[str]  # every column of the file, for messages
    scales: dict[str, float] = field(default_factory=dict)  # our name -> factor to SI
    latitude_deg: float | None = None
    longitude_deg: float | None = None
    altitude_m: float | None = None
    utc_offset_h: float | None = None
    notes: list[str] = field(default_factory=list)


#: Largest weather file read [bytes]: an hourly year with every column is about 2 MB.
MAX_WEATHER_BYTES = 50_000_000

#: Plausible place of a station (low, high, unit); a header value outside is refused.
HEADER_RANGES: dict[str, tuple[float, float, str]] = {
    "latitude_deg": (-90.0, 90.0, "deg"),
    "longitude_deg": (-180.0, 180.0, "deg"),
    "altitude_m": (-500.0, 9000.0, "m"),
    "utc_offset_h": (-12.0, 14.0, "h"),
}

_PARSER_SHAPE = re.compile(r"Expected (\d+) fields in line (\d+), saw (\d+)")


def _read_text(path: Path, name: str) -> str:
    """The file as text (UTF-8, a leading byte-order mark dropped); refuses huge or binary files."""
    try:
        size = path.stat().st_size
        if size > MAX_WEATHER_BYTES:
            raise SiteInputError(f"a weather file of at most {MAX_WEATHER_BYTES // 1_000_000} MB", file=name,
                                 got=f"{size:,} bytes")
        text = path.read_bytes().decode("utf-8-sig")
    except UnicodeDecodeError:
        raise SiteInputError("a UTF-8 text file", file=name, got="undecodable bytes") from None
    except OSError as exc:
        raise SiteInputError("a readable weather file", file=name, got=type(exc).__name__) from None
    if "\x00" in text:
        raise SiteInputError("a text file", file=name, got="NUL bytes (a binary file?)")
    return text


def _table(body: str, name: str, what: str, first_line: int, header: bool = True) -> pd.DataFrame:
    """A CSV body as text cells; a malformed table raises one line naming the file line."""
    try:
        return pd.read_csv(io.StringIO(body), header=0 if header else None, dtype=str, keep_default_na=False,
                           skipinitialspace=True)
    except pd.errors.EmptyDataError:
        raise SiteInputError(what, file=name, got="no rows") from None
    except pd.errors.ParserError as exc:
        shape = _PARSER_SHAPE.search(str(exc))
        if shape:
            line = first_line + int(shape[2]) - 1   # the parser counts lines of the body from 1
            raise SiteInputError(f"{shape[1]} comma-separated fields in every row (as in the first)", file=name,
                                 got=f"{shape[3]} fields", line=line) from None
        raise SiteInputError(f"{what} (quotes closed, fields separated by commas)", file=name) from None
    except Exception as exc:   # the CSV parser on hostile bytes: still one line
        raise SiteInputError(what, file=name, got=f"a table the CSV parser stopped on ({type(exc).__name__})") from None


def _header_number(text: str | float, key: str, name: str, line: int, shown: str | None = None) -> float:
    """A station or header value, refused unless a finite number inside :data:`HEADER_RANGES`;
    ``shown`` is the key as the file writes it."""
    low, high, unit = HEADER_RANGES[key]
    try:
        value = float(str(text).strip())
    except ValueError:
        raise SiteInputError(f"a number [{unit}]", file=name, field=shown or key, got=str(text).strip(),
                             line=line) from None
    if not math.isfinite(value) or not low <= value <= high:
        raise SiteInputError(f"a finite number from {low:g} to {high:g} {unit}", file=name, field=shown or key,
                             got=value, line=line)
    return value


# TMY3 column as written -> pvlib's name for it, as pvlib.iotools.tmy.VARIABLE_MAP has them
# (tests/test_lazy_imports.py checks the two agree), held here so that reading a TMY3 file imports no pvlib.
TMY3_VARIABLE_MAP: dict[str, str] = {
    "GHI (W/m^2)": "ghi", "ETR (W/m^2)": "ghi_extra", "DNI (W/m^2)": "dni", "ETRN (W/m^2)": "dni_extra",
    "DHI (W/m^2)": "dhi", "Pressure (mbar)": "pressure", "Wdir (degrees)": "wind_direction",
    "Wspd (m/s)": "wind_speed", "Dry-bulb (C)": "temp_air", "Dew-point (C)": "temp_dew",
    "RHum (%)": "relative_humidity", "Alb (unitless)": "albedo", "Pwat (cm)": "precipitable_water",
}

# TMY3 (pvlib names after map_variables) -> (our name, column as written in the file, scale to SI)
_TMY3_COLUMNS: dict[str, tuple[str, str, float]] = {
    "ghi": ("ghi_w_m2", "GHI (W/m^2)", 1.0),
    "dni": ("dni_w_m2", "DNI (W/m^2)", 1.0),
    "dhi": ("dhi_w_m2", "DHI (W/m^2)", 1.0),
    "temp_air": ("temp_air_c", "Dry-bulb (C)", 1.0),
    "wind_speed": ("wind_speed_m_s", "Wspd (m/s)", 1.0),
    "GH illum (lx)": ("global_illum_lx", "GH illum (lx)", 1.0),
    "DN illum (lx)": ("direct_illum_lx", "DN illum (lx)", 1.0),
    "DH illum (lx)": ("diffuse_illum_lx", "DH illum (lx)", 1.0),
    "pressure": ("pressure_pa", "Pressure (mbar)", 100.0),
    "temp_dew": ("dew_point_c", "Dew-point (C)", 1.0),
}

# EPW (pvlib names) -> (our name, field name of the EPW data dictionary, scale to SI)
_EPW_COLUMNS: dict[str, tuple[str, str, float]] = {
    "ghi": ("ghi_w_m2", "Global Horizontal Radiation", 1.0),
    "dni": ("dni_w_m2", "Direct Normal Radiation", 1.0),
    "dhi": ("dhi_w_m2", "Diffuse Horizontal Radiation", 1.0),
    "temp_air": ("temp_air_c", "Dry Bulb Temperature", 1.0),
    "wind_speed": ("wind_speed_m_s", "Wind Speed", 1.0),
    "global_hor_illum": ("global_illum_lx", "Global Horizontal Illuminance", 1.0),
    "direct_normal_illum": ("direct_illum_lx", "Direct Normal Illuminance", 1.0),
    "diffuse_horizontal_illum": ("diffuse_illum_lx", "Diffuse Horizontal Illuminance", 1.0),
    "atmospheric_pressure": ("pressure_pa", "Atmospheric Station Pressure", 1.0),
    "temp_dew": ("dew_point_c", "Dew Point Temperature", 1.0),
}


def _take_columns(frame: pd.DataFrame, table: dict[str, tuple[str, str, float]]) -> dict[str, Any]:
    """Columns of ``frame`` named in ``table``, under our names, with their file names and scales."""
    data, names, scales = {}, {}, {}
    for source, (ours, written, scale) in table.items():
        if source in frame.columns:
            data[ours] = frame[source].to_numpy()
            names[ours] = written
            scales[ours] = scale
    return {"data": pd.DataFrame(data), "file_columns": names, "scales": scales,
            "all_columns": [str(c) for c in frame.columns]}


# TMY3 station line: USAF, Name, State, TZ, latitude, longitude, altitude
_TMY3_STATION = {"utc_offset_h": 3, "latitude_deg": 4, "longitude_deg": 5, "altitude_m": 6}
# EPW LOCATION line: LOCATION, city, state, country, source, WMO, latitude, longitude, TZ, elevation
_EPW_LOCATION = {"latitude_deg": 6, "longitude_deg": 7, "utc_offset_h": 8, "altitude_m": 9}
# EPW data fields in order (the names pvlib gives them), from line 9
_EPW_FIELDS = (
    "year", "month", "day", "hour", "minute", "data_source_unct", "temp_air", "temp_dew", "relative_humidity",
    "atmospheric_pressure", "etr", "etrn", "ghi_infrared", "ghi", "dni", "dhi", "global_hor_illum",
    "direct_normal_illum", "diffuse_horizontal_illum", "zenith_luminance", "wind_direction", "wind_speed",
    "total_sky_cover", "opaque_sky_cover", "visibility", "ceiling_height", "present_weather_observation",
    "present_weather_codes", "precipitable_water", "aerosol_optical_depth", "snow_depth",
    "days_since_last_snowfall", "albedo", "liquid_precipitation_depth", "liquid_precipitation_quantity",
)
_EPW_NEEDED = _EPW_FIELDS.index("wind_speed") + 1


def _place_line(line: str, fields: dict[str, int], name: str, what: str, number: int) -> dict[str, float]:
    """Place and UTC offset from a station line, each value checked."""
    cells = line.split(",")
    if len(cells) <= max(fields.values()):
        raise SiteInputError(what, file=name, got=f"{len(cells)} comma-separated fields on line {number}",
                             line=number)
    return {key: _header_number(cells[i], key, name, number) for key, i in fields.items()}


def _tmy3_frame(path: Path, name: str) -> tuple[pd.DataFrame, dict[str, float]]:
    """A TMY3 file as text cells under pvlib's column names, and its station's place."""
    what = "a TMY3 file: a station line, a column header line and hourly rows"
    lines = _read_text(path, name).splitlines()
    if len(lines) < 3:
        raise SiteInputError(what, file=name, got=f"{len(lines)} lines")
    place = _place_line(lines[0], _TMY3_STATION, name,
                        "a TMY3 station line: USAF, name, state, TZ, latitude, longitude, altitude", 1)
    frame = _table("\n".join(lines[1:]), name, what, first_line=2)
    frame.columns = [str(c).strip() for c in frame.columns]
    return frame.rename(columns=TMY3_VARIABLE_MAP), place


def _read_tmy3(path: Path, name: str, **_: Any) -> _Raw:
    frame, meta = _tmy3_frame(path, name)
    if "Date (MM/DD/YYYY)" not in frame.columns or "Time (HH:MM)" not in frame.columns:
        raise SiteInputError("a TMY3 header line with 'Date (MM/DD/YYYY)' and 'Time (HH:MM)' columns",
                             file=name, field="Date (MM/DD/YYYY), Time (HH:MM)",
                             got="columns " + ", ".join(map(str, frame.columns[:4])))
    # Hour-ending labels (01:00..24:00) -> hour-start, from the file's own date and time columns (the
    # index pvlib builds moves 24:00 of 28 February in a leap year to 1 March).
    date_text = frame["Date (MM/DD/YYYY)"].astype(str)
    time_text = frame["Time (HH:MM)"].astype(str)
    labels = (date_text + " " + time_text).to_numpy()
    day = pd.to_datetime(date_text, format="%m/%d/%Y", errors="coerce")
    hour_ending = pd.to_numeric(time_text.str.split(":").str[0], errors="coerce")
    bad = np.asarray(day.isna() | hour_ending.isna() | (hour_ending < 1) | (hour_ending > 24))
    if bad.any():
        i = int(np.argmax(bad))
        raise SiteInputError("dates MM/DD/YYYY and hour-ending times 01:00..24:00", file=name,
                             field="Date (MM/DD/YYYY), Time (HH:MM)", got=str(labels[i]), line=i + 3)
    start = pd.DatetimeIndex(day + pd.to_timedelta(hour_ending.to_numpy() - 1, unit="h"))
    return _Raw(
        **_take_columns(frame, _TMY3_COLUMNS), start=pd.DatetimeIndex(start), labels=labels,
        lines=np.arange(len(frame)) + 3, time_field="Date (MM/DD/YYYY), Time (HH:MM)", **meta,
    )


def _read_epw(path: Path, name: str, **_: Any) -> _Raw:
    what = "an EPW file: eight header lines (LOCATION first) and hourly rows"
    lines = _read_text(path, name).splitlines()
    if len(lines) < 9:
        raise SiteInputError(what, file=name, got=f"{len(lines)} lines")
    meta = _place_line(lines[0], _EPW_LOCATION, name,
                       "an EPW LOCATION line: LOCATION, city, state, country, source, WMO, latitude, longitude, "
                       "time zone, elevation", 1)
    frame = _table("\n".join(lines[8:]), name, what, first_line=9, header=False)
    if frame.shape[1] < _EPW_NEEDED:
        raise SiteInputError(f"EPW rows of {len(_EPW_FIELDS)} fields (at least {_EPW_NEEDED}, up to wind speed)",
                             file=name, got=f"{frame.shape[1]} fields", line=9)
    frame = frame.iloc[:, :len(_EPW_FIELDS)]
    frame.columns = list(_EPW_FIELDS[:frame.shape[1]])
    parts = {key: pd.to_numeric(frame[key].str.strip(), errors="coerce") for key in ("year", "month", "day", "hour")}
    ymd = pd.to_datetime(pd.DataFrame({k: parts[k] for k in ("year", "month", "day")}), errors="coerce")
    bad = np.asarray(ymd.isna() | parts["hour"].isna() | (parts["hour"] < 1) | (parts["hour"] > 24)
                     | (parts["hour"] % 1 != 0) | (parts["year"] < 1000))
    labels = np.array([f"{y}/{m}/{d} hour {h}" for y, m, d, h in
                       zip(*(frame[k].str.strip() for k in ("year", "month", "day", "hour")), strict=True)])
    if bad.any():
        i = int(np.argmax(bad))
        raise SiteInputError("a year, month 1..12, day and hour 1..24 in every row", file=name,
                             field="Year, Month, Day, Hour", got=str(labels[i]), line=i + 9)
    # EPW hour h covers h-1..h: the row is labelled by the start of its hour.
    start = pd.DatetimeIndex(ymd + pd.to_timedelta(parts["hour"].to_numpy() - 1, unit="h"))
    return _Raw(
        **_take_columns(frame, _EPW_COLUMNS), start=start, labels=labels, lines=np.arange(len(frame)) + 9,
        time_field="Year, Month, Day, Hour", **meta,
    )


# Plain CSV: our names and common aliases, compared after normalising the header (lower case, units in
# brackets removed, spaces and dashes to underscores).
CSV_ALIASES: dict[str, tuple[str, ...]] = {
    "ghi_w_m2": ("ghi_w_m2", "ghi", "global_horizontal", "global_horizontal_irradiance"),
    "dni_w_m2": ("dni_w_m2", "dni", "direct_normal", "direct_normal_irradiance"),
    "dhi_w_m2": ("dhi_w_m2", "dhi", "diffuse_horizontal", "diffuse_horizontal_irradiance"),
    "temp_air_c": ("temp_air_c", "temp_air", "air_temperature", "temperature", "temp_c", "dry_bulb"),
    "wind_speed_m_s": ("wind_speed_m_s", "wind_speed", "wind", "windspeed"),
    "global_illum_lx": ("global_illum_lx", "global_illuminance"),
    "direct_illum_lx": ("direct_illum_lx", "direct_illuminance"),
    "diffuse_illum_lx": ("diffuse_illum_lx", "diffuse_illuminance"),
    "pressure_pa": ("pressure_pa",),
    "dew_point_c": ("dew_point_c", "temp_dew", "dew_point"),
}
CSV_TIME_NAMES = ("time", "timestamp", "datetime", "date_time", "time_start", "date")
# header key (normalised) -> our metadata name
CSV_HEADER_KEYS: dict[str, str] = {
    "utc_offset_h": "utc_offset_h", "utc_offset": "utc_offset_h",
    "latitude_deg": "latitude_deg", "latitude": "latitude_deg", "lat": "latitude_deg",
    "longitude_deg": "longitude_deg", "longitude": "longitude_deg", "lon": "longitude_deg",
    "altitude_m": "altitude_m", "altitude": "altitude_m", "elevation_m": "altitude_m",
    "time_label": "time_label",
}
_HEADER_PAIR = re.compile(r"([A-Za-z_]+)\s*[=:]\s*([^\s,;]+)")
_HAS_OFFSET = re.compile(r"(Z|[+-]\d{2}:?\d{2})\s*$")
_ANY_OFFSET = re.compile(r"(?:Z|[+-]\d{2}:?\d{2})\s*$")


def _offset_hours(text: str) -> float:
    """'Z' -> 0, '+01:00' or '+0100' -> 1.0, '-03:30' -> -3.5."""
    if text.upper() == "Z":
        return 0.0
    digits = text[1:].replace(":", "")
    sign = -1.0 if text[0] == "-" else 1.0
    return sign * (int(digits[:2]) + int(digits[2:]) / 60.0)


def _normalise(name: str) -> str:
    text = re.sub(r"[\(\[].*?[\)\]]", "", str(name)).strip().lower()
    return re.sub(r"[\s\-/]+", "_", text).strip("_")


def _read_csv(path: Path, name: str, **given: Any) -> _Raw:
    """A CSV weather file: ``# key = value`` header lines, then a table with a time column and one row an hour."""
    lines = _read_text(path, name).splitlines()
    header, n_comment = _csv_header(lines, name)
    frame = _table("\n".join(lines[n_comment:]), name, "a CSV table: a header line, then one row per hour",
                   first_line=n_comment + 1)
    if frame.shape[1] < 2 or frame.empty:
        raise SiteInputError("a CSV table with a time column and a GHI column, one row per hour",
                             file=name, got=f"{frame.shape[1]} columns, {len(frame)} rows")
    first_line = n_comment + 2
    normalised = {col: _normalise(col) for col in frame.columns}
    time_col = next((c for c in frame.columns if normalised[c] in CSV_TIME_NAMES), frame.columns[0])
    stamps_text = frame[time_col].astype(str).str.strip()
    utc_offset_h = header.get("utc_offset_h", given.get("utc_offset_h"))
    stamps, utc_offset_h, notes = _csv_stamps(stamps_text, utc_offset_h, "utc_offset_h" in header, name,
                                              str(time_col), first_line)
    if header.get("time_label", "start") == "end":
        stamps = stamps - pd.Timedelta(hours=1)
    data, names = _csv_columns(frame, normalised, time_col, name)
    return _Raw(
        data=pd.DataFrame(data), start=stamps, labels=stamps_text.to_numpy(),
        lines=np.arange(len(frame)) + first_line, time_field=str(time_col), file_columns=names,
        all_columns=[str(c) for c in frame.columns],
        latitude_deg=header.get("latitude_deg", given.get("latitude_deg")),
        longitude_deg=header.get("longitude_deg", given.get("longitude_deg")),
        altitude_m=header.get("altitude_m", given.get("altitude_m")),
        utc_offset_h=float(utc_offset_h), notes=notes,
    )


def _csv_header(lines: list[str], name: str) -> tuple[dict[str, Any], int]:
    """The ``# key = value`` pairs above a CSV table that we know, and how many lines they take."""
    header: dict[str, Any] = {}
    n_comment = 0
    for n_comment, line in enumerate(lines):
        stripped = line.strip()
        if stripped and not stripped.startswith("#"):
            break
        for key, value in _HEADER_PAIR.findall(stripped.lstrip("#")):
            ours = CSV_HEADER_KEYS.get(key.lower())
            if ours is None:
                continue
            if ours == "time_label":
                if value.lower() not in ("start", "end"):
                    raise SiteInputError("'start' or 'end' (what each timestamp labels)", file=name,
                                         field="time_label", got=value, line=n_comment + 1)
                header[ours] = value.lower()
                continue
            header[ours] = _header_number(value, ours, name, n_comment + 1, shown=key)
    else:
        n_comment = len(lines)
    return header, n_comment


def _csv_stamps(stamps_text: pd.Series, utc_offset_h: float | None, offset_in_header: bool, name: str,
                time_col: str, first_line: int) -> tuple[pd.DatetimeIndex, float, list[str]]:
    """Timestamps in the file's local standard time, the UTC offset used and a note when it was assumed.

    Either every timestamp carries a UTC offset or none does; without any, the offset comes from the
    header or the site."""
    with_offset = stamps_text.str.contains(_ANY_OFFSET)
    notes: list[str] = []
    if with_offset.any():
        if not with_offset.all():
            bad = int(np.argmin(with_offset.to_numpy()))
            raise SiteInputError("every timestamp with a UTC offset, or none", file=name, field=time_col,
                                 got=stamps_text.iloc[bad], line=first_line + bad)
        parsed = pd.to_datetime(stamps_text, utc=True, errors="coerce", format="ISO8601")
        if utc_offset_h is None:
            utc_offset_h = _header_number(_offset_hours(_HAS_OFFSET.search(stamps_text.iloc[0]).group(1)),
                                          "utc_offset_h", name, first_line)
        stamps = pd.DatetimeIndex(parsed).tz_convert(fixed_offset(float(utc_offset_h))).tz_localize(None)
    else:
        stamps = pd.DatetimeIndex(pd.to_datetime(stamps_text, errors="coerce", format="ISO8601"))
        if utc_offset_h is None:
            raise SiteInputError("the file's UTC offset: a '# utc_offset_h = 1' line above the table or "
                                 "offsets in the timestamps (2025-01-01T00:00+01:00)",
                                 file=name, field="utc_offset_h")
        if not offset_in_header:
            notes.append(f"{name} gives no UTC offset: the site's (UTC{float(utc_offset_h):+g} h) is used")
    if stamps.isna().any():
        bad = int(np.argmax(stamps.isna()))
        raise SiteInputError("ISO 8601 timestamps such as 2025-01-01 00:00", file=name, field=time_col,
                             got=stamps_text.iloc[bad], line=first_line + bad)
    return stamps, float(utc_offset_h), notes


def _csv_columns(frame: pd.DataFrame, normalised: dict[Any, str], time_col: Any,
                 name: str) -> tuple[dict[str, np.ndarray], dict[str, str]]:
    """Our quantities found among the table's columns by their aliases: values and the file's column names."""
    data: dict[str, np.ndarray] = {}
    names: dict[str, str] = {}
    for ours, aliases in CSV_ALIASES.items():
        matches = [c for c in frame.columns if c != time_col and normalised[c] in aliases]
        if len(matches) > 1:
            raise SiteInputError(f"one column for {ours}", file=name, field=ours,
                                 got=", ".join(map(str, matches)))
        if matches:
            data[ours] = frame[matches[0]].to_numpy()
            names[ours] = str(matches[0])
    return data, names


_READERS: dict[str, Callable[..., _Raw]] = {"tmy3": _read_tmy3, "epw": _read_epw, "csv": _read_csv}


def detect_format(path: Path) -> str:
    """'epw' (first line starts with LOCATION), 'tmy3' (second line starts with the TMY3 date column)
    or 'csv' (anything else)."""
    with open(path, "rb") as handle:
        head = handle.read(4096).decode("utf-8", errors="replace").lstrip("\ufeff").splitlines()
    if head and head[0].strip().upper().startswith("LOCATION,"):
        return "epw"
    if len(head) > 1 and head[1].strip().startswith("Date (MM/DD/YYYY)"):
        return "tmy3"
    return "csv"


def _numeric(raw: _Raw, column: str, name: str) -> np.ndarray:
    """The column as floats; raises naming the first cell that is not a number."""
    values = raw.data[column].to_numpy()
    numbers = pd.to_numeric(pd.Series(values), errors="coerce").to_numpy(dtype=float)
    bad = ~np.isfinite(numbers)
    if bad.any():
        i = int(np.argmax(bad))
        shown = values[i] if str(values[i]).strip() not in ("", "nan") else "an empty cell"
        raise SiteInputError(f"a number in every hour [{VALUE_RANGES[column][2]}]", file=name,
                             field=raw.file_columns.get(column, column), got=shown, line=int(raw.lines[i]))
    return numbers


def _out_of_range(values: np.ndarray, column: str) -> np.ndarray:
    low, high, _ = VALUE_RANGES[column]
    return (values < low) | (values > high)


def _check_values(raw: _Raw, name: str) -> pd.DataFrame:
    """Float columns; required ones checked (errors), optional ones dropped with a note when bad."""
    out = {}
    for column in raw.data.columns:
        low, high, unit = VALUE_RANGES[column]
        written = raw.file_columns.get(column, column)
        if column in OPTIONAL_COLUMNS:
            numbers = pd.to_numeric(pd.Series(raw.data[column].to_numpy()), errors="coerce").to_numpy(float)
            numbers = numbers * raw.scales.get(column, 1.0)
            bad = ~np.isfinite(numbers) | _out_of_range(np.nan_to_num(numbers), column)
            if bad.any():
                i = int(np.argmax(bad))
                raw.notes.append(f"{written} left out: {raw.data[column].iloc[i]} at {raw.labels[i]} "
                                 f"(line {raw.lines[i]}) is missing or outside {low:g}..{high:g} {unit}")
                continue
            out[column] = numbers
            continue
        numbers = _numeric(raw, column, name) * raw.scales.get(column, 1.0)
        bad = _out_of_range(numbers, column)
        if bad.any():
            i = int(np.argmax(bad))
            raise SiteInputError(f"{low:g}..{high:g} {unit} (at {raw.labels[i]}){_unit_hint(numbers, column)}",
                                 file=name, field=written, got=float(numbers[i]), line=int(raw.lines[i]))
        _check_magnitude(numbers, column, written, name, raw.notes)
        out[column] = numbers
    return pd.DataFrame(out)


IRRADIANCE_COLUMNS = ("ghi_w_m2", "dni_w_m2", "dhi_w_m2")
#: A year of irradiance in W/m2 peaks at several hundred; one whose largest value is below this is in kW/m2.
KW_M2_PEAK_BELOW = 2.0
#: A GHI year peaking below this [W/m2] is noted as doubtful (shaded sensor, wrong unit, indoor logger).
DULL_GHI_PEAK_W_M2 = 200.0
#: Hours above the physical bound that say "another unit" rather than "one bad value".
MANY_HOURS = 24


def _unit_hint(values: np.ndarray, column: str) -> str:
    """Words for a range error when the whole column, not one cell, looks like another unit."""
    high = VALUE_RANGES[column][1]
    above = int(np.sum(values > high))
    if column in IRRADIANCE_COLUMNS and above >= MANY_HOURS:
        return (f"; {above} hours lie above {high:g} W/m2: is the column in another unit, such as kJ/m2 per "
                "hour (3.6 x W/m2) or sums over more than an hour?")
    if column == "temp_air_c" and 200.0 <= float(np.median(values)) <= 340.0:
        return "; the values look like kelvin: subtract 273.15"
    return ""


def _check_magnitude(values: np.ndarray, column: str, written: str, name: str, notes: list[str]) -> None:
    """Refuse irradiance plainly in kW/m2 (a year peaking below 2); note a GHI year peaking below 200 W/m2."""
    if column not in IRRADIANCE_COLUMNS or values.size == 0:
        return
    peak = float(np.max(values))
    if 0.0 < peak < KW_M2_PEAK_BELOW:
        raise SiteInputError(f"irradiance in W/m2 (a year peaks at several hundred); a year whose largest value "
                             f"is below {KW_M2_PEAK_BELOW:g} is in kW/m2: multiply by 1000", file=name, field=written,
                             got=peak)
    if peak == 0.0:
        notes.append(f"{name}: {written} is zero in every hour: no sunlight at all, or a column left empty")
    elif column == "ghi_w_m2" and peak < DULL_GHI_PEAK_W_M2:
        notes.append(f"{name}: {written} peaks at only {peak:.0f} W/m2 in the whole year (open sky gives several "
                     "hundred): check the unit and whether the sensor was shaded")


_REF_START = reference_index(0).tz_localize(None)
_REF_KEYS = (_REF_START.month * 10000 + _REF_START.day * 100 + _REF_START.hour).to_numpy()


def _first_gap(start: pd.DatetimeIndex) -> int | None:
    """Index of the first row not followed by the next hour (file order), or None.

    Compared by month, day and hour, so a typical year whose months come from different years has no
    gap at its month starts; 29 February (already dropped) is skipped.
    """
    if len(start) < 2:
        return None
    nxt = start[1:]
    expected = start[:-1] + pd.Timedelta(hours=1)
    leap = (expected.month == 2) & (expected.day == 29)
    expected = expected.where(~leap, expected + pd.Timedelta(days=1))
    same = (nxt.month == expected.month) & (nxt.day == expected.day) & (nxt.hour == expected.hour)
    bad = np.flatnonzero(~np.asarray(same))
    return int(bad[0]) if bad.size else None


def _onto_reference_year(raw: _Raw, name: str) -> _Raw:
    """Rows reordered onto the reference year's 8760 hours; raises on gaps, repeats, short files."""
    start = raw.start
    off_hour = np.asarray((start.minute != 0) | (start.second != 0))
    if off_hour.any():
        i = int(np.argmax(off_hour))
        raise SiteInputError("hourly timestamps on the hour", file=name, field=raw.time_field,
                             got=str(raw.labels[i]), line=int(raw.lines[i]))
    keep = ~np.asarray((start.month == 2) & (start.day == 29))
    if not keep.all():
        raw.notes.append("29 February left out")
    data = raw.data.loc[keep].reset_index(drop=True)
    start, labels, lines = start[keep], raw.labels[keep], raw.lines[keep]
    keys = (start.month * 10000 + start.day * 100 + start.hour).to_numpy()
    duplicated = pd.Index(keys).duplicated()
    if duplicated.any():
        i = int(np.argmax(duplicated))
        raise SiteInputError("one row per hour of one year (no repeated hour)", file=name,
                             field=raw.time_field, got=f"{labels[i]} repeated", line=int(lines[i]))
    if len(keys) < HOURS_PER_YEAR:
        gap = _first_gap(start)
        if gap is not None:
            raise SiteInputError("one row per hour with no gap", file=name, field=raw.time_field,
                                 got=f"{labels[gap + 1]} follows {labels[gap]}", line=int(lines[gap + 1]))
        raise SiteInputError(f"a full year of hourly rows ({HOURS_PER_YEAR}, or 8784 with 29 February)",
                             file=name, field=raw.time_field, got=f"{len(keys)} rows")
    order = np.argsort(np.searchsorted(_REF_KEYS, keys))
    raw.data = data.iloc[order].reset_index(drop=True)
    raw.start, raw.labels, raw.lines = start[order], labels[order], lines[order]
    return raw


def _place_or(value: float | None, fallback: float | None) -> float:
    chosen = value if value is not None else fallback
    return float(chosen) if chosen is not None else math.nan


def read_weather_file(
    path: str | Path,
    file_format: str = "auto",
    *,
    name: str | None = None,
    utc_offset_h: float | None = None,
    latitude_deg: float | None = None,
    longitude_deg: float | None = None,
    altitude_m: float | None = None,
) -> tuple[pd.DataFrame, WeatherMeta]:
    """Read a TMY3, EPW or plain CSV weather file onto the reference year.

    Formats
    -------
    tmy3
        The layout ``pvlib.iotools.read_tmy3`` reads, under its column names (station line gives place
        and UTC offset; hour-ending
        labels become hour-start; illuminance and pressure kept; pressure mbar -> Pa).
    epw
        The layout ``pvlib.iotools.read_epw`` reads, under its field names (LOCATION line gives place
        and UTC offset; EPW hour h
        covers h-1..h and becomes the hour starting at h-1). Illuminance or pressure fields holding
        missing-value codes are left out with a note.
    csv
        Our plain table. Optional lines starting with ``#`` above the header give metadata as
        ``key = value``: ``utc_offset_h``, ``latitude_deg``, ``longitude_deg``, ``altitude_m`` and
        ``time_label`` (``start``, the default: each timestamp starts its hour; ``end``: it ends it).
        Then a header line and one row per hour. The time column is named time, timestamp, datetime,
        date_time, time_start or date (else the first column) and holds ISO 8601 timestamps in local
        standard time (``2025-01-01 00:00``) or with offsets (``2025-01-01T00:00+01:00``, converted to
        ``utc_offset_h`` when given). Columns (names compared case-insensitively, units in brackets
        ignored): ``ghi_w_m2`` (or ghi) required; ``dni_w_m2``/dni, ``dhi_w_m2``/dhi,
        ``temp_air_c``/temp_air/temperature, ``wind_speed_m_s``/wind_speed, ``global_illum_lx``,
        ``direct_illum_lx``, ``diffuse_illum_lx``, ``pressure_pa``, ``dew_point_c`` optional.
        One calendar year (any year; 29 February dropped) or a typical year with months of
        different years.

    Missing components: GHI alone is split with the Erbs, Klein & Duffie (1982) model (pvlib) at the
    mid-hour solar position; GHI with DNI or DHI gives the third by closure, GHI = DHI + DNI cos(z).
    Missing air temperature becomes 20 degC, missing wind speed 1 m/s; each with a note.

    Parameters
    ----------
    path : str or Path
        The file.
    file_format : {'auto', 'tmy3', 'epw', 'csv'}
        'auto' looks at the first two lines.
    name : str, optional
        How to name the file in messages and ``meta.source`` (default: the path as given).
    utc_offset_h, latitude_deg, longitude_deg, altitude_m : float, optional
        Used only where the file does not say (a CSV without metadata lines) [h, deg, deg, m].

    Returns
    -------
    (pandas.DataFrame, WeatherMeta)
        8760 rows on ``reference_index(meta.utc_offset_h)``, float columns as in the module docstring.

    Raises
    ------
    SiteInputError
        Missing or unreadable file, missing column, too few rows, repeated or missing hours, a value
        that is not a number or lies outside its physical range (GHI 0..1500, DNI 0..1400,
        DHI 0..1000 W/m2, air temperature -90..70 degC, wind 0..75 m/s), a file over 50 MB or not text,
        a malformed table (the file line named).

    Plausibility
    ------------
    Refused: a station or header value that is not finite or lies outside latitude -90..90, longitude
    -180..180 deg, altitude -500..9000 m, UTC offset -12..14 h; an irradiance column whose year peaks
    above 0 but below 2 (kW/m2 rather than W/m2); any hour above the physical bound (the message says
    when many hours are, which points at another unit, or when air temperatures look like kelvin).
    Noted in ``meta.notes`` (not refused, since the year may be real): a GHI year that peaks below
    200 W/m2, or an irradiance column that is zero in every hour.
    """
    path = Path(path)
    name = str(name) if name is not None else str(path)
    if not path.is_file():
        raise SiteInputError("an existing weather file", file=name, field="file", got=str(path))
    if file_format not in ("auto", *_READERS):
        raise SiteInputError("one of 'auto', 'tmy3', 'epw', 'csv'", file=name, field="file_format",
                             got=file_format)
    try:
        fmt = detect_format(path) if file_format == "auto" else file_format
    except OSError as exc:
        raise SiteInputError("a readable weather file", file=name, got=type(exc).__name__) from None
    raw = _READERS[fmt](path, name, utc_offset_h=utc_offset_h, latitude_deg=latitude_deg,
                        longitude_deg=longitude_deg, altitude_m=altitude_m)
    if "ghi_w_m2" not in raw.data.columns:
        raise SiteInputError("a GHI column (ghi_w_m2 or ghi) [W/m2]", file=name, field="ghi_w_m2",
                             got="columns " + ", ".join(raw.all_columns))
    raw = _onto_reference_year(raw, name)
    values = _check_values(raw, name)

    offset = float(raw.utc_offset_h if raw.utc_offset_h is not None else 0.0)
    index = reference_index(offset)
    values.index = index
    lat = _place_or(raw.latitude_deg, None)
    lon = _place_or(raw.longitude_deg, None)
    alt = _place_or(raw.altitude_m, 0.0)
    notes = list(raw.notes)
    _complete_irradiance(values, lat, lon, alt, name, notes)
    _check_illuminance_units(values, name, notes)
    if "temp_air_c" not in values:
        values["temp_air_c"] = DEFAULT_AIR_TEMP_C
        notes.append(f"{name} has no air temperature: {DEFAULT_AIR_TEMP_C:g} degC assumed in every hour")
    if "wind_speed_m_s" not in values:
        values["wind_speed_m_s"] = DEFAULT_WIND_SPEED_M_S
        notes.append(f"{name} has no wind speed: {DEFAULT_WIND_SPEED_M_S:g} m/s assumed in every hour")
    columns = [c for c in (*WEATHER_COLUMNS, *OPTIONAL_COLUMNS) if c in values]
    frame = values[columns].astype(float)
    meta = WeatherMeta(latitude_deg=lat, longitude_deg=lon, altitude_m=alt, utc_offset_h=offset,
                       source=f"{name} ({fmt.upper()})", notes=notes)
    return frame, meta


# Luminous efficacy of daylight lies near 80-150 lm/W (Perez et al. 1990, Solar Energy 44(5)).
_ILLUMINANCE_PAIRS = {"global_illum_lx": "ghi_w_m2", "diffuse_illum_lx": "dhi_w_m2", "direct_illum_lx": "dni_w_m2"}


def _check_illuminance_units(values: pd.DataFrame, name: str, notes: list[str]) -> None:
    """Some typical-year files store illuminance in hundreds of lux under an 'lx' header.

    The ratio of illuminance to the matching irradiance in bright hours tells: ~80-150 means lux,
    ~0.8-1.5 means hundreds of lux (scaled up here); anything else drops the column with a note.
    """
    scaled = []
    for lux_col, irr_col in _ILLUMINANCE_PAIRS.items():
        if lux_col not in values or irr_col not in values:
            continue
        bright = values[irr_col].to_numpy() > 100.0
        if bright.sum() < 24:
            continue
        ratio = float(values[lux_col].to_numpy()[bright].sum() / values[irr_col].to_numpy()[bright].sum())
        if 40.0 <= ratio <= 250.0:
            continue
        if 0.4 <= ratio <= 2.5:
            values[lux_col] = values[lux_col] * 100.0
            scaled.append(lux_col)
        else:
            values.drop(columns=lux_col, inplace=True)
            notes.append(f"{name}: {lux_col} left out: {ratio:.1f} lx per W/m2 is no daylight efficacy")
    if scaled:
        notes.append(f"{name}: {', '.join(scaled)} stored in hundreds of lux (about 1 per W/m2); scaled by 100")


def _complete_irradiance(values: pd.DataFrame, lat: float, lon: float, alt: float, name: str,
                         notes: list[str]) -> None:
    """Fill DNI and DHI from GHI (Erbs) or by closure, at the mid-hour solar position."""
    have_dni, have_dhi = "dni_w_m2" in values, "dhi_w_m2" in values
    if have_dni and have_dhi:
        return
    if math.isnan(lat) or math.isnan(lon):
        raise SiteInputError("the station's place ('# latitude_deg = ..' and '# longitude_deg = ..' lines) "
                             "to split GHI into beam and diffuse", file=name, field="latitude_deg")
    import pvlib  # here, not at the top: a file with all three components needs no pvlib

    mid = values.index + pd.Timedelta(minutes=30)
    zenith = pvlib.solarposition.get_solarposition(mid, lat, lon, altitude=alt)["zenith"].to_numpy()
    cos_z = np.cos(np.radians(zenith))
    ghi = values["ghi_w_m2"].to_numpy()
    if have_dni:
        values["dhi_w_m2"] = np.clip(ghi - values["dni_w_m2"].to_numpy() * np.clip(cos_z, 0, None), 0, None)
        notes.append(f"{name} has no DHI: DHI = GHI - DNI cos(zenith) at mid-hour")
    elif have_dhi:
        beam = ghi - values["dhi_w_m2"].to_numpy()
        ok = (zenith < 87.0) & (cos_z > 0.065) & (beam > 0)
        values["dni_w_m2"] = np.where(ok, beam / np.where(ok, cos_z, 1.0), 0.0)
        notes.append(f"{name} has no DNI: DNI = (GHI - DHI) / cos(zenith) at mid-hour")
    else:
        split = pvlib.irradiance.erbs(ghi, zenith, mid.day_of_year.to_numpy())
        values["dni_w_m2"] = np.asarray(split["dni"], dtype=float)
        values["dhi_w_m2"] = np.asarray(split["dhi"], dtype=float)
        notes.append(f"{name} has GHI only: DNI and DHI from the Erbs et al. (1982) diffuse fraction")


# --------------------------------------------------------------------------------------------------
# The spot's weather year


@dataclass(frozen=True)
class _Place:
    latitude_deg: float
    longitude_deg: float
    altitude_m: float
    utc_offset_h: float


def pvlib_data_dir() -> Path:
    """The installed pvlib package's data folder (found without importing pvlib)."""
    spec = importlib.util.find_spec("pvlib")
    if spec is None or not spec.submodule_search_locations:
        raise ModuleNotFoundError("pvlib is not installed")
    return Path(next(iter(spec.submodule_search_locations))).resolve() / "data"


def bundled_weather_files() -> list[str]:
    """Names of the typical-year files (TMY3, EPW) in pvlib's data folder."""
    folder = pvlib_data_dir()
    return sorted(p.name for p in folder.iterdir()
                  if p.suffix.lower() in (".csv", ".epw") and detect_format(p) in ("tmy3", "epw"))


def _load_file(spec: WeatherSpec, place: _Place, files: SiteFiles) -> tuple[pd.DataFrame, WeatherMeta]:
    path = files.path_of(spec.file or "", "weather.file")
    return read_weather_file(path, spec.file_format, name=spec.file, utc_offset_h=place.utc_offset_h,
                             latitude_deg=place.latitude_deg, longitude_deg=place.longitude_deg,
                             altitude_m=place.altitude_m)


def _load_bundled(spec: WeatherSpec, place: _Place, files: SiteFiles) -> tuple[pd.DataFrame, WeatherMeta]:
    name = spec.bundled or ""
    path = pvlib_data_dir() / name
    if not path.is_file() or name not in bundled_weather_files():
        raise SiteInputError("one of the typical-year files shipped with pvlib: "
                             + ", ".join(bundled_weather_files()), file=name, field="bundled", got=name)
    frame, meta = read_weather_file(path, spec.file_format, name=name)
    meta.source = f"{meta.source}, from pvlib's data folder"
    return frame, meta


def _load_synthetic(spec: WeatherSpec, place: _Place, files: SiteFiles) -> tuple[pd.DataFrame, WeatherMeta]:
    synth = spec.synthetic or SyntheticWeatherSpec()
    frame = synthetic_year(synth, latitude_deg=place.latitude_deg, longitude_deg=place.longitude_deg,
                           altitude_m=place.altitude_m, utc_offset_h=place.utc_offset_h)
    _, _, notes = seasonal_inputs(synth, place.latitude_deg)
    notes = [
        "synthetic year: daily clearness from the Aguiar et al. (1988) Markov matrices, hours shaped like "
        "clear sky, beam and diffuse by Erbs et al. (1982)",
        f"synthetic year: wind speed {DEFAULT_WIND_SPEED_M_S:g} m/s in every hour",
        *notes,
    ]
    meta = WeatherMeta(latitude_deg=place.latitude_deg, longitude_deg=place.longitude_deg,
                       altitude_m=place.altitude_m, utc_offset_h=place.utc_offset_h,
                       source=f"synthetic year (seed {synth.seed})", notes=notes)
    return frame, meta


_SOURCE_LOADERS: dict[str, Callable[[WeatherSpec, _Place, SiteFiles], tuple[pd.DataFrame, WeatherMeta]]] = {
    "file": _load_file,
    "bundled": _load_bundled,
    "synthetic": _load_synthetic,
}


def angular_distance_deg(lat1: float, lon1: float, lat2: float, lon2: float) -> float:
    """Great-circle angle between two places [deg] (haversine)."""
    p1, p2 = math.radians(lat1), math.radians(lat2)
    dp, dl = p2 - p1, math.radians(lon2 - lon1)
    a = math.sin(dp / 2) ** 2 + math.cos(p1) * math.cos(p2) * math.sin(dl / 2) ** 2
    return math.degrees(2 * math.asin(min(1.0, math.sqrt(a))))


def load_weather_year(
    spec: WeatherSpec,
    *,
    latitude_deg: float,
    longitude_deg: float,
    altitude_m: float,
    utc_offset_h: float,
    base_dir: Path | None = None,
    files: SiteFiles | None = None,
) -> tuple[pd.DataFrame, WeatherMeta]:
    """The spot's weather year from its ``[weather]`` table.

    A synthetic year is made for the spot's place. A file's own UTC offset wins for the frame's
    index; ``meta.notes`` says so when it differs from the spot's, and when the file's station lies
    more than 1 degree (great circle) from the spot. A station past the thresholds of :class:`FarStation`
    is set as ``meta.far_station`` (and its sentence is the note).

    Parameters
    ----------
    spec : WeatherSpec
        The site file's weather table.
    latitude_deg, longitude_deg : float
        The spot [deg north, deg east].
    altitude_m : float
        The spot's altitude [m].
    utc_offset_h : float
        The spot's local standard time offset from UTC [h].
    base_dir : Path, optional
        Folder of the site file; ``spec.file`` is relative to it when ``files`` is not given.
    files : SiteFiles, optional
        Where the files the site names are read from (see :mod:`siteharvest.files`).

    Returns
    -------
    (pandas.DataFrame, WeatherMeta)
        See :func:`read_weather_file`.
    """
    place = _Place(float(latitude_deg), float(longitude_deg), float(altitude_m), float(utc_offset_h))
    files = files if files is not None else FolderFiles(Path(base_dir) if base_dir is not None else Path.cwd())
    frame, meta = _SOURCE_LOADERS[spec.source_kind](spec, place, files)
    if not math.isclose(meta.utc_offset_h, place.utc_offset_h):
        meta.notes.append(f"the weather file keeps its own local standard time "
                          f"(UTC{meta.utc_offset_h:+g} h); the spot's is UTC{place.utc_offset_h:+g} h")
    if not (math.isnan(meta.latitude_deg) or math.isnan(meta.longitude_deg)):
        distance = angular_distance_deg(meta.latitude_deg, meta.longitude_deg, place.latitude_deg,
                                        place.longitude_deg)
        meta.far_station = (far_station(meta.latitude_deg, meta.longitude_deg, place.latitude_deg,
                                        place.longitude_deg) if spec.source_kind != "synthetic" else None)
        if meta.far_station is not None:
            meta.notes.append(meta.far_station.sentence)
        elif distance > 1.0:
            meta.notes.append(
                f"the weather station ({meta.latitude_deg:.2f}, {meta.longitude_deg:.2f}) lies "
                f"{distance:.1f} degrees (about {distance * 111.2:.0f} km) from the spot")
    return frame, meta

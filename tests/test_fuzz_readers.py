"""Weather (TMY3, EPW, CSV), vibration-spectrum and hot-side readers on hostile bytes: each returns
or raises one SiteInputError line naming the file, never anything else. Seeds are the TMY3 file
shipped in pvlib's data folder, an EPW written here from it, and small files built here; regression
tests cover each crash class and each plausibility check an audit asked for."""

from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from siteharvest.errors import SiteInputError
from siteharvest.sources.thermoelectric import read_hot_side_csv
from siteharvest.timegrid import HOURS_PER_YEAR
from siteharvest.vibration_spectrum import _read_spectrum_csv
from siteharvest.weather import pvlib_data_dir, read_weather_file

TMY3_BYTES = (pvlib_data_dir() / "723170TYA.CSV").read_bytes()   # Greensboro NC, shipped with pvlib
FUZZ = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                        HealthCheck.data_too_large])
WORK = Path(tempfile.mkdtemp(prefix="siteharvest-fuzz-"))


def _epw_from_tmy3() -> bytes:
    """An EPW (8 header lines, 35 fields a row, hour 1..24 ending the hour) from the TMY3 file."""
    raw = pd.read_csv(pvlib_data_dir() / "723170TYA.CSV", skiprows=1)
    date = raw["Date (MM/DD/YYYY)"].str.split("/", expand=True).astype(int)
    hour = raw["Time (HH:MM)"].str.slice(0, 2).astype(int)
    head = ("LOCATION,Test,NC,USA,TMY3,723170,36.1,-79.95,-5.0,273.0\nDESIGN CONDITIONS,0\n"
            "TYPICAL/EXTREME PERIODS,0\nGROUND TEMPERATURES,0\nHOLIDAYS/DAYLIGHT SAVINGS,No,0,0,0\n"
            "COMMENTS 1,test\nCOMMENTS 2,\nDATA PERIODS,1,1,Data,Sunday, 1/ 1,12/31\n")
    rows = []
    for i in range(len(raw)):
        rows.append(",".join(map(str, [
            date[2].iat[i], date[0].iat[i], date[1].iat[i], hour.iat[i], 60, "?9", raw["Dry-bulb (C)"].iat[i],
            raw["Dew-point (C)"].iat[i], 50, raw["Pressure (mbar)"].iat[i] * 100, 9999, 9999, 9999,
            raw["GHI (W/m^2)"].iat[i], raw["DNI (W/m^2)"].iat[i], raw["DHI (W/m^2)"].iat[i], 999999, 999999, 999999,
            9999, 180, raw["Wspd (m/s)"].iat[i], 5, 5, 777.7, 77777, 9, "999999999", 999, 0.999, 999, 99, 0.2,
            0, 1])))
    return (head + "\n".join(rows) + "\n").encode()


def _csv_year(header: str = "# utc_offset_h = 1\n# latitude_deg = 50\n# longitude_deg = 8\n",
              ghi_scale: float = 1.0) -> bytes:
    index = pd.date_range("2019-01-01", periods=HOURS_PER_YEAR, freq="h")
    sun = np.clip(np.sin((index.hour.to_numpy() - 6) / 12 * np.pi), 0, None)
    ghi = 800.0 * sun * ghi_scale
    frame = pd.DataFrame({"time": index.strftime("%Y-%m-%d %H:%M"), "ghi_w_m2": np.round(ghi, 4),
                          "dni_w_m2": np.round(ghi * 0.8, 4), "dhi_w_m2": np.round(ghi * 0.3, 4), "temp_air_c": 10.0})
    return (header + frame.to_csv(index=False)).encode()


EPW_BYTES = _epw_from_tmy3()
CSV_BYTES = _csv_year()
SPECTRUM_BYTES = b"# survey\nfrequency_hz,accel\n10,0.2\n25,1.5\n50,0.8\n100,0.3\n"
HOT_SIDE_BYTES = ("surface_c\n" + "\n".join(f"{60 + 5 * np.sin(h / 24):.2f}" for h in range(HOURS_PER_YEAR))
                  + "\n").encode()
TOKENS = [b",", b"\n", b'"', b"nan", b"1e308", b"-1e308", b"inf", b"999", b"\x00", b"\xff\xfe", b"9" * 5000, b"#",
          b"=", b"+99:99", b"24:00", b"02/30/1988", b"utc_offset_h = nan", b"latitude = 999", b";", b"\t"]


@st.composite
def mutated(draw, seed: bytes, head: int = 4000) -> bytes:
    """``seed`` with a few byte edits, most near its start (header and first rows)."""
    data = bytearray(seed)
    for _ in range(draw(st.integers(1, 4))):
        span = head if draw(st.booleans()) else len(data)
        pos = draw(st.integers(0, max(0, min(span, len(data)) - 1)))
        op = draw(st.sampled_from(["replace", "insert", "delete", "truncate"]))
        token = draw(st.sampled_from(TOKENS) | st.binary(min_size=1, max_size=6))
        if op == "replace":
            data[pos:pos + draw(st.integers(1, 30))] = token
        elif op == "insert":
            data[pos:pos] = token
        elif op == "delete":
            del data[pos:pos + draw(st.integers(1, 300))]
        else:
            del data[pos:]
    return bytes(data)


def _write(data: bytes, suffix: str) -> Path:
    handle = tempfile.NamedTemporaryFile(dir=WORK, suffix=suffix, delete=False)
    handle.write(data)
    handle.close()
    return Path(handle.name)


def _one_line_or_return(call, path: Path) -> None:
    try:
        call()
    except SiteInputError as exc:
        text = str(exc)
        assert "\n" not in text and "\r" not in text, text
        assert text.startswith(str(path)), text
        for raw in ("np.float64(", "zip() argument", "Traceback", "C error"):
            assert raw not in text, text
    finally:
        path.unlink(missing_ok=True)


@FUZZ
@given(data=mutated(TMY3_BYTES), fmt=st.sampled_from(["tmy3", "auto"]))
def test_fuzz_tmy3(data, fmt):
    path = _write(data, ".csv")
    _one_line_or_return(lambda: read_weather_file(path, fmt), path)


@FUZZ
@given(data=mutated(EPW_BYTES), fmt=st.sampled_from(["epw", "auto"]))
def test_fuzz_epw(data, fmt):
    path = _write(data, ".epw")
    _one_line_or_return(lambda: read_weather_file(path, fmt), path)


@FUZZ
@given(data=mutated(CSV_BYTES, head=300), fmt=st.sampled_from(["csv", "auto"]))
def test_fuzz_csv(data, fmt):
    path = _write(data, ".csv")
    _one_line_or_return(lambda: read_weather_file(path, fmt, utc_offset_h=1.0, latitude_deg=50.0,
                                                  longitude_deg=8.0), path)


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=mutated(SPECTRUM_BYTES, head=60), unit=st.sampled_from(["g", "m/s2", "mm/s"]),
       measure=st.sampled_from(["peak", "rms"]))
def test_fuzz_spectrum(data, unit, measure):
    path = _write(data, ".csv")
    _one_line_or_return(lambda: _read_spectrum_csv(path, "amplitude", unit, measure), path)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=mutated(SPECTRUM_BYTES.replace(b"accel", b"psd"), head=60))
def test_fuzz_psd_spectrum(data):
    path = _write(data, ".csv")
    _one_line_or_return(lambda: _read_spectrum_csv(path, "psd", "g2/Hz", None), path)


@FUZZ
@given(data=mutated(HOT_SIDE_BYTES, head=200))
def test_fuzz_hot_side(data):
    path = _write(data, ".csv")
    _one_line_or_return(lambda: read_hot_side_csv(path, "surface_c"), path)


# ------------------------------------------------------------------- regressions, one per class


def _refused(data: bytes, suffix: str = ".csv", **kwargs) -> SiteInputError:
    path = _write(data, suffix)
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path, **kwargs)
    text = str(err.value)
    assert "\n" not in text and text.startswith(str(path))
    return err.value


@pytest.mark.parametrize(("line", "field"), [
    ("# utc_offset_h = nan\n", "utc_offset_h"),
    ("# utc_offset_h = 1e300\n", "utc_offset_h"),
    ("# utc_offset_h = 15\n", "utc_offset_h"),     # UTC offsets run from -12 to +14 h (time-zone practice)
    ("# latitude_deg = 999\n", "latitude_deg"),
    ("# lon = -181\n", "lon"),
    ("# altitude_m = inf\n", "altitude_m"),
])
def test_csv_header_values_must_be_finite_and_plausible(line, field):
    err = _refused(_csv_year(header=line + "# latitude_deg = 50\n# longitude_deg = 8\n"
                             if "lat" not in line else line + "# utc_offset_h = 1\n# longitude_deg = 8\n"))
    assert err.field == field and "finite number from" in err.expected and err.line == 1


def test_timestamp_offset_out_of_range_is_refused():
    body = CSV_BYTES.decode().split("\n", 3)[3].replace(":00,", ":00+15:00,")
    err = _refused(("# latitude_deg = 50\n# longitude_deg = 8\n" + body).encode())
    assert err.field == "utc_offset_h"


def test_epw_latitude_999_is_refused():
    err = _refused(EPW_BYTES.replace(b"36.1,-79.95", b"999,-79.95", 1), ".epw")
    assert err.field == "latitude_deg" and err.line == 1 and "-90 to 90" in err.expected


def test_tmy3_station_time_zone_nan_is_refused():
    first, rest = TMY3_BYTES.split(b"\n", 1)
    cells = first.split(b",")
    cells[3] = b"nan"
    err = _refused(b",".join(cells) + b"\n" + rest)
    assert err.field == "utc_offset_h" and err.line == 1


def test_ghi_in_kw_m2_is_refused_naming_the_column_and_unit():
    err = _refused(_csv_year(ghi_scale=0.001))   # 800 W/m2 written as 0.8
    assert err.field == "ghi_w_m2" and "W/m2" in err.expected and "kW/m2" in err.expected


def test_ghi_above_1500_in_many_hours_points_at_the_unit():
    err = _refused(_csv_year(ghi_scale=3.6))     # kJ/m2 per hour: 3.6 x W/m2
    assert err.field == "ghi_w_m2" and "0..1500" in err.expected and "another unit" in err.expected


def test_dull_ghi_year_is_kept_with_a_note():
    path = _write(_csv_year(ghi_scale=0.1), ".csv")   # peaks at 80 W/m2
    _, meta = read_weather_file(path)
    assert any("peaks at only 80 W/m2" in note for note in meta.notes)


def test_ragged_tmy3_row_names_its_line():
    lines = TMY3_BYTES.split(b"\n")
    lines[10] += b",1,2,3"
    err = _refused(b"\n".join(lines))
    assert err.line == 11 and "fields" in err.expected


def test_spectrum_unterminated_quote_is_one_line():
    path = _write(b'frequency_hz,accel\n10,"0.5\n20,0.3\n', ".csv")
    with pytest.raises(SiteInputError, match="quotes closed") as err:
        _read_spectrum_csv(path, "amplitude", "m/s2", "rms")
    assert err.value.line == 2 and "zip()" not in str(err.value)


@pytest.mark.parametrize(("text", "field"), [
    (b"frequency_hz,accel\n10,1e308\n", "accel"),
    (b"frequency_hz,accel\n1e308,1\n", "frequency_hz"),
])
def test_spectrum_1e308_is_refused(text, field):
    path = _write(text, ".csv")
    with pytest.raises(SiteInputError) as err:
        _read_spectrum_csv(path, "amplitude", "g", "rms")
    assert err.value.field == field


def test_spectrum_of_100_g_is_refused_and_the_unit_questioned():
    # 20 g overall RMS is the bound (common practice: machinery a node sits on vibrates at a few g at most)
    path = _write(b"frequency_hz,accel\n50,100\n60,0.1\n", ".csv")
    with pytest.raises(SiteInputError, match="at most 20 g") as err:
        _read_spectrum_csv(path, "amplitude", "g", "rms")
    assert "look like m/s2" in str(err.value)
    _, accel = _read_spectrum_csv(path, "amplitude", "m/s2", "rms")   # the same numbers in m/s2 pass
    assert accel[0] == 100.0


def test_hot_side_ragged_row_is_one_line_without_parser_words():
    path = _write(HOT_SIDE_BYTES.replace(b"\n61", b"\n61,2,3", 1), ".csv")
    with pytest.raises(SiteInputError) as err:
        read_hot_side_csv(path, "surface_c")
    assert "C error" not in str(err.value) and "Error tokenizing" not in str(err.value)

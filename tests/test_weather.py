"""Weather-year readers: TMY3, EPW, plain CSV, the site-file table and every bad-input case.

Reference data: the TMY3 files shipped in pvlib's data folder (read in place, never copied), read
here a second time with plain pandas so the check does not go through our reader.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pvlib
import pytest
from pydantic import ValidationError
from validation import external_check

from siteharvest.errors import SiteInputError
from siteharvest.timegrid import HOURS_PER_YEAR, reference_index
from siteharvest.weather import (
    SyntheticWeatherSpec,
    WeatherSpec,
    angular_distance_deg,
    bundled_weather_files,
    load_weather_year,
    pvlib_data_dir,
    read_weather_file,
)

TMY3_NAME = "723170TYA.CSV"  # Greensboro NC, shipped with pvlib
TMY3_PATH = pvlib_data_dir() / TMY3_NAME


@pytest.fixture(scope="module")
def tmy3_raw() -> pd.DataFrame:
    """The TMY3 file read with plain pandas: line 1 is the station line, line 2 the header."""
    return pd.read_csv(TMY3_PATH, skiprows=1)


@pytest.fixture(scope="module")
def tmy3_year() -> tuple[pd.DataFrame, object]:
    return read_weather_file(TMY3_PATH)


# ---------------------------------------------------------------------------------------------- TMY3


@external_check(area="weather", quantity="TMY3 723170 read by our reader: station line and hourly columns",
                value="TZ -5, 36.1 N, 79.95 W, 273 m; GHI, DNI, dry-bulb as in the file",
                source="TMY3 723170TYA.CSV shipped with pvlib 0.16.1, read a second time with plain pandas",
                tolerance="exact")
def test_tmy3_loads_to_8760_hour_start_rows(tmy3_year, tmy3_raw):
    frame, meta = tmy3_year
    assert len(frame) == HOURS_PER_YEAR
    # station line of the file: TZ -5, lat 36.1, lon -79.95, altitude 273 m
    assert meta.utc_offset_h == -5.0
    assert (meta.latitude_deg, meta.longitude_deg, meta.altitude_m) == (36.1, -79.95, 273.0)
    assert frame.index.equals(reference_index(-5.0))
    assert all(frame[c].dtype == np.float64 for c in frame.columns)
    # The file's first row is labelled 01/01/1988 01:00 (hour ending): it is our hour starting 00:00.
    assert tmy3_raw.loc[0, "Time (HH:MM)"] == "01:00"
    np.testing.assert_array_equal(frame["ghi_w_m2"].to_numpy(), tmy3_raw["GHI (W/m^2)"].to_numpy())
    np.testing.assert_array_equal(frame["dni_w_m2"].to_numpy(), tmy3_raw["DNI (W/m^2)"].to_numpy())
    np.testing.assert_array_equal(frame["temp_air_c"].to_numpy(), tmy3_raw["Dry-bulb (C)"].to_numpy())


@external_check(area="weather", quantity="time label of TMY3 rows", value="hour ending, local standard time",
                source="Wilcox & Marion 2008, Users Manual for TMY3 Data Sets, NREL/TP-581-43156",
                tolerance="exact (row 13:00 is our 12:00)")
def test_tmy3_timestamps_shift_by_one_hour(tmy3_year, tmy3_raw):
    frame, _ = tmy3_year
    # the row labelled 06/21/yyyy 13:00 (hour ending) is our 2025-06-21 12:00 (hour start)
    row = tmy3_raw[tmy3_raw["Date (MM/DD/YYYY)"].str.startswith("06/21/") & (tmy3_raw["Time (HH:MM)"] == "13:00")]
    assert len(row) == 1
    assert frame.loc[pd.Timestamp("2025-06-21 12:00", tz="UTC-05:00"), "ghi_w_m2"] == row["GHI (W/m^2)"].item()
    # 24:00 on 28 February of a leap year (1996 in this file) is our 28 February 23:00, not 1 March
    last_feb = tmy3_raw[tmy3_raw["Date (MM/DD/YYYY)"].str.startswith("02/28/") & (tmy3_raw["Time (HH:MM)"] == "24:00")]
    assert frame.loc[pd.Timestamp("2025-02-28 23:00", tz="UTC-05:00"), "temp_air_c"] == last_feb["Dry-bulb (C)"].item()
    # night at the first hours, sun around noon
    assert frame["ghi_w_m2"].iloc[:5].eq(0).all()
    assert frame.loc[pd.Timestamp("2025-06-21 12:00", tz="UTC-05:00"), "ghi_w_m2"] > 300


@external_check(area="weather", quantity="annual GHI of a south-eastern US site (TMY3 723170)",
                value="roughly 1400-1900 kWh/m2", source="common practice (sanity bound)", tolerance="1300-2000")
def test_tmy3_annual_ghi_is_the_files_own(tmy3_year, tmy3_raw):
    frame, _ = tmy3_year
    annual_kwh_m2 = frame["ghi_w_m2"].sum() / 1000.0
    assert annual_kwh_m2 == pytest.approx(tmy3_raw["GHI (W/m^2)"].sum() / 1000.0, rel=1e-12)
    # sanity bound [CP]: a south-eastern US site receives roughly 1400-1900 kWh/m2 a year
    assert 1300 < annual_kwh_m2 < 2000


@external_check(area="weather", quantity="annual global daylight efficacy of TMY3 723170 after scaling x 100",
                value="~100 lm/W", source="Perez et al. (1990), Solar Energy 44(5):271-289 (order of magnitude)",
                tolerance="90-130 lm/W")
def test_tmy3_keeps_illuminance_and_pressure(tmy3_year, tmy3_raw):
    frame, meta = tmy3_year
    # pvlib's 723170TYA.CSV stores illuminance in hundreds of lux under an "lx" header: its ratio to
    # the matching irradiance is ~1 where daylight efficacy is ~100 lm/W (Perez et al. 1990), so the
    # reader scales it by 100 and says so.
    for ours, theirs in (("global_illum_lx", "GH illum (lx)"), ("diffuse_illum_lx", "DH illum (lx)"),
                         ("direct_illum_lx", "DN illum (lx)")):
        np.testing.assert_array_equal(frame[ours].to_numpy(), tmy3_raw[theirs].to_numpy() * 100.0)
        assert any(ours in note and "hundreds of lux" in note for note in meta.notes)
    assert sum("hundreds of lux" in note for note in meta.notes) == 1
    efficacy = frame["global_illum_lx"].sum() / frame["ghi_w_m2"].sum()
    assert 90 < efficacy < 130   # lm/W of daylight, Perez et al. 1990 (order of magnitude)
    # TMY3 pressure is in mbar; ours in Pa
    np.testing.assert_allclose(frame["pressure_pa"].to_numpy(), tmy3_raw["Pressure (mbar)"].to_numpy() * 100.0)
    assert set(frame.columns[:5]) == {"ghi_w_m2", "dni_w_m2", "dhi_w_m2", "temp_air_c", "wind_speed_m_s"}


def test_both_bundled_tmy3_files_are_offered_and_load():
    names = bundled_weather_files()
    assert {"723170TYA.CSV", "703165TY.csv"} <= set(names)
    frame, meta = read_weather_file(pvlib_data_dir() / "703165TY.csv")
    assert len(frame) == HOURS_PER_YEAR and meta.utc_offset_h == -9.0  # Sand Point AK, station line TZ -9


# ----------------------------------------------------------------------------------------------- EPW

_EPW_HEADER = (
    "LOCATION,Test Station,NC,USA,TMY3,723170,{lat},{lon},{tz},{alt}\n"
    "DESIGN CONDITIONS,0\n"
    "TYPICAL/EXTREME PERIODS,0\n"
    "GROUND TEMPERATURES,0\n"
    "HOLIDAYS/DAYLIGHT SAVINGS,No,0,0,0\n"
    "COMMENTS 1,written by the test from a TMY3 file\n"
    "COMMENTS 2,\n"
    "DATA PERIODS,1,1,Data,Sunday, 1/ 1,12/31\n"
)


def write_epw_from_tmy3(raw: pd.DataFrame, path: Path, *, illum_missing: bool = False) -> None:
    """An EPW (EnergyPlus weather file: 8 header lines, 35 fields a row, hour 1..24 ending the hour)."""
    date = raw["Date (MM/DD/YYYY)"].str.split("/", expand=True).astype(int)
    hour = raw["Time (HH:MM)"].str.slice(0, 2).astype(int)
    rows = []
    for i in range(len(raw)):
        illum = ("999999", "999999", "999999") if illum_missing else (
            raw["GH illum (lx)"].iat[i], raw["DN illum (lx)"].iat[i], raw["DH illum (lx)"].iat[i])
        fields = [
            date[2].iat[i], date[0].iat[i], date[1].iat[i], hour.iat[i], 60, "?9?9?9?9E0?9?9?9",
            raw["Dry-bulb (C)"].iat[i], raw["Dew-point (C)"].iat[i], raw["RHum (%)"].iat[i],
            raw["Pressure (mbar)"].iat[i] * 100, 9999, 9999, 9999,
            raw["GHI (W/m^2)"].iat[i], raw["DNI (W/m^2)"].iat[i], raw["DHI (W/m^2)"].iat[i],
            *illum, 9999, raw["Wdir (degrees)"].iat[i], raw["Wspd (m/s)"].iat[i],
            5, 5, 777.7, 77777, 9, "999999999", 999, 0.999, 999, 99, 0.2, 0, 1,
        ]
        rows.append(",".join(str(v) for v in fields))
    path.write_text(_EPW_HEADER.format(lat=36.1, lon=-79.95, tz=-5.0, alt=273.0) + "\n".join(rows) + "\n")


def test_epw_written_from_tmy3_reads_back_the_same(tmp_path, tmy3_raw, tmy3_year):
    path = tmp_path / "greensboro.epw"
    write_epw_from_tmy3(tmy3_raw, path)
    frame, meta = read_weather_file(path)
    reference, _ = tmy3_year
    assert meta.source.endswith("(EPW)")
    assert (meta.latitude_deg, meta.longitude_deg, meta.utc_offset_h) == (36.1, -79.95, -5.0)
    assert frame.index.equals(reference.index)
    for column in ("ghi_w_m2", "dni_w_m2", "dhi_w_m2", "temp_air_c", "wind_speed_m_s", "global_illum_lx",
                   "direct_illum_lx", "diffuse_illum_lx", "pressure_pa", "dew_point_c"):
        np.testing.assert_allclose(frame[column].to_numpy(), reference[column].to_numpy(), err_msg=column)


def test_epw_missing_illuminance_is_left_out_with_a_note(tmp_path, tmy3_raw):
    path = tmp_path / "no_illum.epw"
    write_epw_from_tmy3(tmy3_raw, path, illum_missing=True)
    frame, meta = read_weather_file(path, "epw")
    assert "global_illum_lx" not in frame.columns
    assert any("Global Horizontal Illuminance left out" in note for note in meta.notes)


def test_epw_missing_value_code_in_ghi_names_the_field(tmp_path, tmy3_raw):
    raw = tmy3_raw.copy()
    raw.loc[4000, "GHI (W/m^2)"] = 9999  # EPW's missing-value code for radiation
    path = tmp_path / "bad.epw"
    write_epw_from_tmy3(raw, path)
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.file == str(path) and err.value.field == "Global Horizontal Radiation"
    assert err.value.line == 4000 + 9  # 8 header lines, rows from line 9
    assert "0..1500" in str(err.value)


# ----------------------------------------------------------------------------------------------- CSV


def csv_text(index: pd.DatetimeIndex, columns: dict[str, np.ndarray], header: str = "",
             time_name: str = "time", fmt: str = "%Y-%m-%d %H:%M") -> str:
    frame = pd.DataFrame(columns)
    frame.insert(0, time_name, index.strftime(fmt))
    return header + frame.to_csv(index=False)


def hours(start: str = "2019-01-01", periods: int = HOURS_PER_YEAR) -> pd.DatetimeIndex:
    return pd.date_range(start, periods=periods, freq="h")


@external_check(area="weather", quantity="DNI and DHI split from GHI 500 W/m2 at zenith 30 deg, day 172",
                value="126.66; 390.31 W/m2",
                source="Erbs, Klein & Duffie (1982), Solar Energy 28(4):293-302, computed with pvlib 0.16.1 erbs",
                tolerance="0.02 W/m2")
def test_csv_ghi_only_is_split_with_erbs(tmp_path):
    """Erbs, Klein & Duffie (1982) diffuse fraction, computed with pvlib 0.16.1: erbs(ghi=500, zenith=30,
    doy=172) -> DNI 126.66, DHI 390.31 W/m2."""
    idx = hours("2025-01-01")
    noon = pd.Timestamp("2025-06-21 12:00")  # day of year 172; mid-hour 12:30 at UTC+0
    mid = pd.DatetimeIndex([noon + pd.Timedelta(minutes=30)]).tz_localize("UTC")
    lon = -15.0 * (0.5 + pvlib.solarposition.equation_of_time_spencer71(172) / 60.0)  # solar noon at 12:30
    lat = 53.44  # zenith at solar noon ~ lat - declination (23.44) = 30; refined below
    for _ in range(3):
        zenith = pvlib.solarposition.get_solarposition(mid, lat, lon)["zenith"].iloc[0]
        lat += 30.0 - zenith
    ghi = np.zeros(HOURS_PER_YEAR)
    ghi[idx.get_loc(noon)] = 500.0
    path = tmp_path / "ghi_only.csv"
    path.write_text(csv_text(idx, {"GHI (W/m2)": ghi},
                             header=f"# utc_offset_h = 0\n# latitude_deg = {lat:.8f}\n# longitude_deg = {lon:.8f}\n"))
    frame, meta = read_weather_file(path)
    at = pd.Timestamp("2025-06-21 12:00", tz="UTC")
    assert frame.loc[at, "ghi_w_m2"] == 500.0
    assert frame.loc[at, "dni_w_m2"] == pytest.approx(126.66, abs=0.02)  # Erbs et al. 1982 via pvlib [C]
    assert frame.loc[at, "dhi_w_m2"] == pytest.approx(390.31, abs=0.02)  # Erbs et al. 1982 via pvlib [C]
    assert any("Erbs" in note for note in meta.notes)
    # defaults filled in with notes
    assert (frame["temp_air_c"] == 20.0).all() and (frame["wind_speed_m_s"] == 1.0).all()
    assert any("air temperature" in n for n in meta.notes) and any("wind speed" in n for n in meta.notes)


def test_csv_full_columns_calendar_year_and_aliases(tmp_path):
    idx = hours("2019-01-01")
    rng = np.random.default_rng(0)
    ghi = rng.uniform(0, 900, HOURS_PER_YEAR)
    cols = {"ghi": ghi, "DNI": ghi * 0.5, "dhi_w_m2": ghi * 0.3, "Temperature [C]": rng.uniform(-5, 30, 8760),
            "wind_speed": np.full(8760, 3.0), "global_illum_lx": ghi * 110}
    path = tmp_path / "full.csv"
    path.write_text(csv_text(idx, cols, header="# station logger export\n# utc_offset_h=2\n"))
    frame, meta = read_weather_file(path)
    assert frame.index.equals(reference_index(2.0))
    np.testing.assert_allclose(frame["ghi_w_m2"], ghi)
    np.testing.assert_allclose(frame["dhi_w_m2"], ghi * 0.3)
    np.testing.assert_allclose(frame["temp_air_c"], cols["Temperature [C]"])
    np.testing.assert_allclose(frame["global_illum_lx"], ghi * 110)
    assert np.isnan(meta.latitude_deg) and [n for n in meta.notes if "hundreds of lux" not in n] == []


def test_csv_leap_year_drops_29_february(tmp_path):
    idx = hours("2020-01-01", 8784)
    temp = idx.day_of_year.to_numpy(dtype=float) / 10.0
    path = tmp_path / "leap.csv"
    path.write_text(csv_text(idx, {"ghi_w_m2": np.zeros(8784), "dni_w_m2": np.zeros(8784),
                                   "dhi_w_m2": np.zeros(8784), "temp_air_c": temp},
                             header="# utc_offset_h = 1\n"))
    frame, meta = read_weather_file(path)
    assert len(frame) == HOURS_PER_YEAR and "29 February left out" in meta.notes
    # 1 March 2020 is day 61 of 2020; it lands on 2025-03-01
    assert frame.loc[pd.Timestamp("2025-03-01 00:00", tz="UTC+01:00"), "temp_air_c"] == pytest.approx(6.1)


def test_csv_time_label_end_and_utc_timestamps(tmp_path):
    marker = np.zeros(HOURS_PER_YEAR)
    marker[10] = 100.0
    cols = {"ghi_w_m2": marker, "dni_w_m2": np.zeros(8760), "dhi_w_m2": marker}
    # hour-ending labels: row 10 labelled 11:00 covers 10:00-11:00
    idx = hours("2019-01-01 01:00")
    path = tmp_path / "ending.csv"
    path.write_text(csv_text(idx, cols, header="# time_label = end\n# utc_offset_h = 0\n"))
    frame, _ = read_weather_file(path)
    assert frame["ghi_w_m2"].iloc[10] == 100.0
    # timestamps in UTC ('Z') converted to the local standard time named in the header (UTC+1)
    path = tmp_path / "utc.csv"
    path.write_text(csv_text(hours("2019-01-01"), cols, header="# utc_offset_h = 1\n",
                             fmt="%Y-%m-%dT%H:%MZ"))
    frame, meta = read_weather_file(path)
    assert meta.utc_offset_h == 1.0
    assert frame["ghi_w_m2"].iloc[11] == 100.0  # 10:00 UTC is 11:00 at UTC+1
    # offsets in the timestamps alone give the file's UTC offset
    path = tmp_path / "offset.csv"
    stamps = hours("2019-01-01").strftime("%Y-%m-%dT%H:%M") + "-03:00"
    frame_text = pd.DataFrame({"timestamp": stamps, **cols}).to_csv(index=False)
    path.write_text(frame_text)
    frame, meta = read_weather_file(path)
    assert meta.utc_offset_h == -3.0 and frame["ghi_w_m2"].iloc[10] == 100.0


# ----------------------------------------------------------------------------------- bad input: files


def _year_csv(tmp_path: Path, name: str = "w.csv", **edits) -> tuple[Path, pd.DataFrame]:
    idx = hours("2019-01-01")
    frame = pd.DataFrame({"time": idx.strftime("%Y-%m-%d %H:%M"), "ghi_w_m2": np.full(8760, 100.0),
                          "dni_w_m2": np.full(8760, 50.0), "dhi_w_m2": np.full(8760, 80.0),
                          "temp_air_c": np.full(8760, 10.0)})
    return tmp_path / name, frame


def _write(path: Path, frame: pd.DataFrame, header: str = "# utc_offset_h = 1\n") -> Path:
    path.write_text(header + frame.to_csv(index=False))
    return path


def test_missing_file(tmp_path):
    with pytest.raises(SiteInputError) as err:
        read_weather_file(tmp_path / "nowhere.epw", name="weather/nowhere.epw")
    assert err.value.file == "weather/nowhere.epw" and err.value.field == "file"


@pytest.mark.parametrize("fmt", ["tmy3", "epw"])
def test_malformed_tmy3_or_epw(tmp_path, fmt):
    path = tmp_path / "junk.txt"
    path.write_text("this is not\na weather file\n1,2,3\n")
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path, fmt)
    assert err.value.file == str(path)
    assert ("TMY3" if fmt == "tmy3" else "EPW") in err.value.expected


def test_undecodable_csv(tmp_path):
    path = tmp_path / "binary.csv"
    path.write_bytes(b"\xff\xfe\x00\x81garbage\x00" * 20)
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path, "csv")
    assert err.value.file == str(path)


def test_missing_ghi_column(tmp_path):
    path, frame = _year_csv(tmp_path)
    _write(path, frame.drop(columns="ghi_w_m2"))
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "ghi_w_m2" and "dni_w_m2" in str(err.value.got)


def test_too_few_rows(tmp_path):
    path, frame = _year_csv(tmp_path)
    _write(path, frame.iloc[:100])
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "time" and "100 rows" in str(err.value)


def test_gap_names_the_first_offending_timestamp(tmp_path):
    path, frame = _year_csv(tmp_path)
    _write(path, frame.drop(index=[500, 501, 3000]))
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "time"
    assert "2019-01-21 22:00 follows 2019-01-21 19:00" in str(err.value)  # rows 500, 501 = 20:00, 21:00
    assert err.value.line == 503  # '#' line 1, header line 2, data from line 3: row 502 is now 500th


def test_duplicate_names_the_first_repeated_timestamp(tmp_path):
    path, frame = _year_csv(tmp_path)
    frame.loc[700, "time"] = frame.loc[699, "time"]
    _write(path, frame)
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "time" and "2019-01-30 03:00 repeated" in str(err.value)


def test_two_years_is_a_repeat(tmp_path):
    path, frame = _year_csv(tmp_path)
    second = frame.copy()
    second["time"] = hours("2020-01-02").strftime("%Y-%m-%d %H:%M")
    _write(path, pd.concat([frame, second]))
    with pytest.raises(SiteInputError, match="repeated"):
        read_weather_file(path)


def test_timestamps_off_the_hour(tmp_path):
    path, frame = _year_csv(tmp_path)
    frame["time"] = (hours("2019-01-01") + pd.Timedelta(minutes=30)).strftime("%Y-%m-%d %H:%M")
    _write(path, frame)
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "time" and "on the hour" in err.value.expected


def test_unparsable_timestamp(tmp_path):
    path, frame = _year_csv(tmp_path)
    frame.loc[5, "time"] = "yesterday"
    _write(path, frame)
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "time" and err.value.got == "yesterday" and err.value.line == 2 + 6


def test_csv_without_utc_offset(tmp_path):
    path, frame = _year_csv(tmp_path)
    _write(path, frame, header="")
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "utc_offset_h"


@pytest.mark.parametrize(
    ("column", "value", "expected"),
    [
        ("ghi_w_m2", -5.0, "0..1500 W/m2"),
        ("ghi_w_m2", 1600.0, "0..1500 W/m2"),
        ("dni_w_m2", 1450.0, "0..1400 W/m2"),
        ("temp_air_c", 80.0, "-90..70 degC"),
        ("temp_air_c", -95.0, "-90..70 degC"),
        ("ghi_w_m2", np.nan, "a number"),
    ],
)
def test_values_out_of_physical_range(tmp_path, column, value, expected):
    path, frame = _year_csv(tmp_path)
    frame[column] = frame[column].astype(float)
    frame.loc[1234, column] = value
    _write(path, frame)
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.file == str(path) and err.value.field == column
    assert expected in err.value.expected and err.value.line == 2 + 1235


def test_text_in_a_number_column(tmp_path):
    path, frame = _year_csv(tmp_path)
    frame["temp_air_c"] = frame["temp_air_c"].astype(object)
    frame.loc[42, "temp_air_c"] = "warm"
    _write(path, frame)
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "temp_air_c" and err.value.got == "warm"


def test_tmy3_value_out_of_range_names_the_tmy3_column(tmp_path):
    lines = TMY3_PATH.read_text().splitlines()
    header = lines[1].split(",")
    col = header.index("Dry-bulb (C)")
    fields = lines[2 + 100].split(",")
    fields[col] = "85.0"
    lines[2 + 100] = ",".join(fields)
    path = tmp_path / "edited_tmy3.csv"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "Dry-bulb (C)" and err.value.line == 103 and err.value.got == 85.0


def test_two_columns_for_one_quantity(tmp_path):
    path, frame = _year_csv(tmp_path)
    frame["ghi"] = frame["ghi_w_m2"]
    _write(path, frame)
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "ghi_w_m2"


def test_bad_header_value(tmp_path):
    path, frame = _year_csv(tmp_path)
    _write(path, frame, header="# utc_offset_h = one\n")
    with pytest.raises(SiteInputError) as err:
        read_weather_file(path)
    assert err.value.field == "utc_offset_h" and err.value.line == 1


# ----------------------------------------------------------------------------- the site-file table


def test_weather_spec_defaults_to_synthetic():
    spec = WeatherSpec()
    assert spec.source_kind == "synthetic" and spec.synthetic == SyntheticWeatherSpec()
    assert WeatherSpec(file="w.epw").source_kind == "file"
    assert WeatherSpec(bundled=TMY3_NAME).source_kind == "bundled"


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"file": "a.epw", "bundled": TMY3_NAME}, "exactly one"),
        ({"file": "a.epw", "synthetic": {}}, "exactly one"),
        ({"bundled": "../secrets.csv"}, "bundled"),
        ({"file": "a.csv", "file_format": "xlsx"}, "file_format"),
        ({"synthetic": {"monthly_clearness": [0.5] * 11}}, "monthly_clearness"),
        ({"synthetic": {"monthly_clearness": [0.5] * 11 + [0.95]}}, "monthly_clearness"),
        ({"synthetic": {"monthly_temp_c": [70.0] * 12}}, "monthly_temp_c"),
        ({"synthetic": {"daily_temp_swing_c": -1}}, "daily_temp_swing_c"),
        ({"synthetic": {"seed": -1}}, "seed"),
        ({"synthetic": {"cloudiness": 3}}, "cloudiness"),
    ],
)
def test_weather_spec_rejects(kwargs, field):
    with pytest.raises(ValidationError) as err:
        WeatherSpec(**kwargs)
    assert field in str(err.value)


def test_load_file_relative_to_site_folder_with_notes(tmp_path, tmy3_raw):
    folder = tmp_path / "site"
    (folder / "weather").mkdir(parents=True)
    write_epw_from_tmy3(tmy3_raw, folder / "weather" / "station.epw")
    spec = WeatherSpec(file="weather/station.epw")
    # spot in Central Europe at UTC+1: the file keeps its UTC-5 and is far away
    frame, meta = load_weather_year(spec, latitude_deg=47.6, longitude_deg=7.59, altitude_m=260.0,
                                    utc_offset_h=1.0, base_dir=folder)
    assert frame.index.equals(reference_index(-5.0))
    assert any("UTC-5" in n and "UTC+1" in n for n in meta.notes)
    assert any("lies" in n and "from the spot" in n for n in meta.notes)
    # the same file at its own place: no notes
    _, meta = load_weather_year(spec, latitude_deg=36.2, longitude_deg=-79.5, altitude_m=270.0,
                                utc_offset_h=-5.0, base_dir=folder)
    assert [n for n in meta.notes if "hundreds of lux" not in n] == []
    with pytest.raises(SiteInputError) as err:
        load_weather_year(WeatherSpec(file="weather/missing.epw"), latitude_deg=0, longitude_deg=0,
                          altitude_m=0, utc_offset_h=0, base_dir=folder)
    assert err.value.file == "weather/missing.epw"


def test_load_csv_uses_the_spot_for_what_the_file_omits(tmp_path):
    path, frame = _year_csv(tmp_path)
    _write(path, frame.drop(columns=["dni_w_m2", "dhi_w_m2"]), header="")
    out, meta = load_weather_year(WeatherSpec(file=path.name), latitude_deg=47.6, longitude_deg=7.59,
                                  altitude_m=260.0, utc_offset_h=1.0, base_dir=tmp_path)
    assert out.index.equals(reference_index(1.0))
    assert any("no UTC offset" in n for n in meta.notes) and any("Erbs" in n for n in meta.notes)
    assert meta.latitude_deg == 47.6


def test_load_bundled_reads_pvlib_data_in_place():
    frame, meta = load_weather_year(WeatherSpec(bundled=TMY3_NAME), latitude_deg=36.1, longitude_deg=-79.95,
                                    altitude_m=273.0, utc_offset_h=-5.0, base_dir=Path("."))
    assert len(frame) == HOURS_PER_YEAR and TMY3_NAME in meta.source
    assert [n for n in meta.notes if "hundreds of lux" not in n] == []
    with pytest.raises(SiteInputError) as err:
        load_weather_year(WeatherSpec(bundled="ASTMG173.csv"), latitude_deg=0, longitude_deg=0,
                          altitude_m=0, utc_offset_h=0, base_dir=Path("."))
    assert err.value.field == "bundled" and TMY3_NAME in err.value.expected


def test_load_synthetic_at_the_spot():
    frame, meta = load_weather_year(WeatherSpec(), latitude_deg=-33.9, longitude_deg=18.4, altitude_m=10.0,
                                    utc_offset_h=2.0, base_dir=Path("."))
    assert frame.index.equals(reference_index(2.0))
    assert meta.latitude_deg == -33.9 and "seed 1" in meta.source
    assert any("southern hemisphere" in n for n in meta.notes)
    # southern summer: January warmer than July with the shifted defaults
    monthly = frame["temp_air_c"].groupby(frame.index.month).mean()
    assert monthly[1] > monthly[7]


def test_angular_distance():
    # one degree of latitude along a meridian is one degree of arc; 90 deg of longitude on the equator
    assert angular_distance_deg(10.0, 20.0, 11.0, 20.0) == pytest.approx(1.0)
    assert angular_distance_deg(0.0, 0.0, 0.0, 90.0) == pytest.approx(90.0)

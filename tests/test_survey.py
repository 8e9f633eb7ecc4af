"""Survey logs -> site inputs: fits recover the parameters a log was made from, Welch's spectrum against
scipy's periodogram and Parseval's theorem, the harvester's power from recovered lines, provenance
round trips, the year extension's spread, bad logs as one line each, and fuzzed log readers."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import scipy
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.io import wavfile
from scipy.signal import periodogram
from test_fuzz_readers import _one_line_or_return, _write, mutated
from validation import external_check

from siteharvest.cli import main
from siteharvest.errors import SiteInputError
from siteharvest.files import named_files
from siteharvest.schedule import parse_days, parse_hours
from siteharvest.site import dump_site, load_site, measured_fields, parse_site_text
from siteharvest.sources.vibration import Excitation, Harvester, running_point
from siteharvest.survey import apply_update, survey_light, survey_temperature, survey_vibration
from siteharvest.survey.extend import daily_on_hours, group_interval
from siteharvest.survey.light import fit_light_readings, outdoor_reference_lx
from siteharvest.survey.logs import read_timed_log
from siteharvest.survey.profile import days_text, hours_text, otsu_threshold
from siteharvest.survey.temperature import fit_temperature_readings
from siteharvest.survey.vibration import amplitude_spectrum, dominant_lines, read_recording

ROOT = Path(__file__).resolve().parents[1]
PLANT = ROOT / "sample_sites" / "plant-room.toml"
SURVEYS = ROOT / "sample_sites" / "surveys"
G = 9.80665                      # standard gravity, 3rd CGPM (1901), exact
SCIPY_WAV = Path(scipy.__file__).parent / "io" / "tests" / "data" / "test-44100Hz-le-1ch-4bytes.wav"


def _week(freq: str = "10min", days: int = 7, start: str = "2025-03-03") -> pd.DatetimeIndex:
    return pd.date_range(start, periods=int(pd.Timedelta(days=days) / pd.Timedelta(freq)), freq=freq)


def _light_log(tmp_path: Path, lamp_lx: float, df: float, seed: int = 1, days: int = 7) -> tuple[Path, np.ndarray]:
    """A light log made from known parameters: lamps on weekdays 07-18 lit in 80 % of those hours."""
    spec = load_site(PLANT)
    t = _week(days=days)
    ref, _ = outdoor_reference_lx(spec, t.tz_localize("Etc/GMT+5"))
    rng = np.random.default_rng(seed)
    lit = (t.day_of_week < 5) & (t.hour >= 7) & (t.hour < 18) & np.repeat(rng.random(len(t) // 6) < 0.8, 6)
    lux = lamp_lx * lit + df * ref + rng.normal(0, 2.0, len(t))
    path = tmp_path / "lux.csv"
    pd.DataFrame({"time": t.strftime("%Y-%m-%d %H:%M"), "illuminance_lx": np.round(np.maximum(lux, 0), 2)}) \
        .to_csv(path, index=False)
    return path, lit


# ------------------------------------------------------------------------------------------------- light

@external_check(area="light", quantity="lamp level, schedule, occupancy and daylight factor from a week's log",
                value="400 lx, weekdays 07-18, 0.8, 1.5 %",
                source="log made in the test from these parameters over the diffuse illuminance of pvlib's TMY3 "
                       "file 723170TYA (NSRDB, Greensboro NC), the plant-room sample's weather year",
                tolerance="lamp 2 %, daylight factor 5 % relative, schedule exact, occupancy 0.05")
def test_light_fit_recovers_the_parameters_it_was_made_from(tmp_path):
    path, lit = _light_log(tmp_path, 400.0, 0.015)     # values the log was made from (this test)
    result = survey_light(load_site(PLANT), [path])
    f = result.update.fields
    assert f["lamp_lux"] == pytest.approx(400.0, rel=0.02)
    assert f["daylight_factor_pct"] == pytest.approx(1.5, rel=0.05)
    assert f["lamp_schedule"] == {"hours": "07-18", "days": "weekdays"}
    assert f["occupancy_fraction"] == pytest.approx(lit.sum() / (5 * 11 * 6), abs=0.05)
    assert result.fit.r2 > 0.99


@external_check(area="light", quantity="irradiance log fitted in W/m2 and turned into lux",
                value="lamp level equal to the lux log's",
                source="the same log divided by the 300-1200 nm irradiance per lux of CIE D65 and of the lamp's "
                       "fluorescent spectrum (CIE 015:2018 tables via colour-science)",
                tolerance="2 %")
def test_irradiance_log_gives_the_same_lamp_lux(tmp_path):
    from siteharvest.sources.indoor_light import irradiance_per_lux_w_m2

    spec = load_site(PLANT)
    t = _week()
    ref, _ = outdoor_reference_lx(spec, t.tz_localize("Etc/GMT+5"))
    lit = (t.day_of_week < 5) & (t.hour >= 8) & (t.hour < 17)
    w_m2 = 300.0 * lit * irradiance_per_lux_w_m2("fluorescent") + 0.01 * ref * irradiance_per_lux_w_m2("daylight")
    path = tmp_path / "irr.csv"
    pd.DataFrame({"time": t.strftime("%Y-%m-%d %H:%M"), "irradiance_w_m2": np.round(w_m2, 5)}).to_csv(path, index=False)
    f = survey_light(spec, [path]).update.fields
    assert f["lamp_lux"] == pytest.approx(300.0, rel=0.02)        # the level the log was made from
    assert f["daylight_factor_pct"] == pytest.approx(1.0, rel=0.05)


def test_clear_sky_reference_fits_a_clear_sky_log():
    spec = load_site(PLANT)
    t = _week("30min").tz_localize("Etc/GMT+5")
    ref, words = outdoor_reference_lx(spec, t, "clear-sky")
    assert "clear sky" in words and ref.max() > 5000    # clear-sky diffuse light at noon is several klx
    fit = fit_light_readings(t, 0.02 * ref, ref)
    assert fit.daylight_factor_pct == pytest.approx(2.0, rel=1e-3) and not fit.lit.any()


def test_a_week_gives_a_spread_and_four_weeks_a_narrower_one(tmp_path):
    spec = load_site(PLANT)
    week = survey_light(spec, [_light_log(tmp_path, 300.0, 0.01, seed=3)[0]])
    path, _ = _light_log(tmp_path, 300.0, 0.01, seed=3, days=28)
    month = survey_light(spec, [path])
    assert 0 < month.year.on_hours.spread_pct < week.year.on_hours.spread_pct
    assert week.update.year_spread_pct > 0 and math.isfinite(week.update.year_spread_pct)


def test_one_workday_alone_is_uncertain_by_all_of_itself():
    t = _week(days=1).tz_localize("Etc/GMT+5")
    on = (t.hour >= 8) & (t.hour < 16)
    interval, notes = group_interval(daily_on_hours(t, on, 600.0), 8.0 * 250)
    assert interval.low == 0.0 and any("one whole workday" in n for n in notes)
    assert any("no whole weekend day" in n for n in notes) and interval.high > 2 * interval.value


# --------------------------------------------------------------------------------------------- temperature

@external_check(area="thermoelectric", quantity="hot-side levels, schedule and a shutdown day from a week's log",
                value="55 / 27 degC, weekdays 06-22, Wednesday shut down",
                source="log made in the test from these parameters (first-order warm-up, 20 min time constant)",
                tolerance="levels 0.5 K, schedule exact, the shutdown date found")
def test_temperature_fit_recovers_levels_schedule_and_shutdown():
    t = _week("15min").tz_localize("Etc/GMT+5")
    running = (t.day_of_week < 5) & (t.hour >= 6) & (t.hour < 22) & (t.day_of_week != 2)
    target = np.where(running, 55.0, 27.0)          # the levels the log is made from (this test)
    surface = np.empty(t.size)
    surface[0] = 27.0
    for i in range(1, t.size):
        surface[i] = surface[i - 1] + (1 - math.exp(-15 / 20)) * (target[i] - surface[i - 1])
    rng = np.random.default_rng(4)
    fit = fit_temperature_readings(t, surface + rng.normal(0, 0.2, t.size), np.full(t.size, 24.0), interval_s=900.0)
    assert fit.running_c == pytest.approx(55.0, abs=0.5) and fit.stopped_c == pytest.approx(27.0, abs=0.5)
    assert (fit.schedule_hours, fit.schedule_days) == ("06-22", "weekdays")
    assert [d.strftime("%m-%d") for d in fit.shutdowns] == ["03-05"]


def test_temperature_survey_writes_a_schedule_hot_side():
    spec = load_site(PLANT)
    result = survey_temperature(spec, [SURVEYS / "casing-week.csv"])
    new = apply_update(spec, result.update)
    hot = next(s for s in new.source if s.id == "motor-casing").hot_side
    assert hot.mode == "schedule" and hot.process.off_dates == ["03-05"]
    assert hot.process.shutdown_weeks == [31, 52]      # kept from the site: the log said nothing of them
    assert new.spot.indoor_air_c == pytest.approx(24.0, abs=0.3)   # the air level the demo log was made from


# ----------------------------------------------------------------------------------------------- vibration

def _tone(f_hz: float, rms: float, fs: float = 2048.0, seconds: float = 32.0, noise: float = 0.0,
          seed: int = 0) -> np.ndarray:
    t = np.arange(int(fs * seconds)) / fs
    rng = np.random.default_rng(seed)
    return math.sqrt(2) * rms * np.sin(2 * np.pi * f_hz * t + 0.3) + noise * rng.standard_normal(t.size)


@external_check(area="vibration", quantity="a tone's RMS and frequency through Welch's method",
                value="1.2 m/s2 RMS at 63.3 Hz (off a line centre)",
                source="scipy.signal.periodogram of the whole record (flat-top window, amplitude-corrected), "
                       "computed in the test; the tone the record was made from",
                tolerance="RMS 1 %, frequency 0.05 Hz (a fifth of a line)")
def test_welch_tone_matches_the_periodogram_and_the_tone():
    x = _tone(63.3, 1.2, noise=0.01)                 # the tone the record is made from (this test)
    spec = amplitude_spectrum(x, 2048.0)
    line = dominant_lines(spec)[0]
    f, p = periodogram(x, fs=2048.0, window="flattop", scaling="spectrum")
    ref_rms = math.sqrt(p.max())                     # flat-top: a tone's RMS wherever it falls between lines
    assert line.rms_m_s2 == pytest.approx(ref_rms, rel=0.01)
    assert line.rms_m_s2 == pytest.approx(1.2, rel=0.01)
    assert line.frequency_hz == pytest.approx(63.3, abs=0.05)
    assert line.frequency_hz == pytest.approx(f[np.argmax(p)], abs=spec.resolution_hz)


@external_check(area="vibration", quantity="Welch PSD summed over frequency against the record's mean square",
                value="sum(PSD) df = variance of the samples",
                source="Parseval's theorem (Bendat & Piersol 2010, Random Data, 4th ed.); variance by numpy",
                tolerance="3 %")
@settings(max_examples=20, deadline=None)
@given(f=st.floats(5.0, 400.0), rms=st.floats(0.01, 20.0), noise=st.floats(0.0, 2.0))
def test_welch_psd_keeps_the_mean_square(f, rms, noise):
    x = _tone(f, rms, fs=1024.0, seconds=16.0, noise=noise)
    spec = amplitude_spectrum(x, 1024.0)
    assert spec.psd_m2_s4_hz.sum() * spec.resolution_hz == pytest.approx(np.var(x), rel=0.03)


@external_check(area="vibration", quantity="harvester power from the recovered line against the known tone",
                value="equal power",
                source="Williams & Yates 1996 power of the stated tone (1.5 m/s2 RMS at 50 Hz), through the "
                       "project's running_point, and of the line Welch recovers from a record of it",
                tolerance="3 %")
def test_harvester_driven_by_the_recovered_line_gives_the_tone_power():
    line = dominant_lines(amplitude_spectrum(_tone(50.0, 1.5, noise=0.02), 2048.0))[0]
    h = Harvester(mass_kg=0.01, resonant_hz=50.0, zeta_m=0.02, zeta_e=0.02, travel_limit_m=0.01)

    def power(f_hz: float, rms: float) -> float:
        exc = Excitation(np.array([f_hz]), np.array([rms]), np.array([0.0]), np.array([0.0]))
        return running_point(exc, h).power_w

    assert power(line.frequency_hz, line.rms_m_s2) == pytest.approx(power(50.0, 1.5), rel=0.03)


def test_vibration_survey_finds_lines_drift_and_schedule():
    spec = load_site(PLANT)
    recs = [SURVEYS / "bearing-1.csv", SURVEYS / "bearing-2.wav", SURVEYS / "bearing-3.csv"]
    result = survey_vibration(spec, recs, unit="g", full_scale=4.0, rms_log=SURVEYS / "bearing-rms-week.csv")
    peak = result.update.fields["peak"][0]
    # the demo recordings were made at 49.3, 49.4 and 49.55 Hz, 0.05 g RMS (scripts/make_survey_samples.py)
    assert peak["frequency_hz"] == pytest.approx(49.42, abs=0.05)
    assert peak["drift_hz"] == pytest.approx(0.125, abs=0.03)
    assert peak["accel"] == pytest.approx(0.05 * G, rel=0.02)
    assert result.update.fields["machine_schedule"] == {"hours": "all", "days": "weekdays"}
    new = apply_update(spec, result.update)
    src = next(s for s in new.source if s.id == "bearing-shaker")
    assert src.spectrum_file is None and len(src.peak) == 2


def test_scipy_shipped_wav_reads_or_refuses_in_one_line():
    try:
        rec = read_recording(SCIPY_WAV, unit="g", full_scale=1.0)
    except SiteInputError as exc:
        assert "\n" not in str(exc) and str(exc).startswith(str(SCIPY_WAV))
    else:
        assert rec.sample_rate_hz == 44100.0    # the rate in the file's name (scipy's test data)


# ---------------------------------------------------------------------------------------------- provenance

def test_measured_records_round_trip_and_name_no_files(tmp_path):
    spec = load_site(PLANT)
    new = apply_update(spec, survey_light(spec, [SURVEYS / "light-week.csv"]).update)
    again = parse_site_text(dump_site(new), base_dir=PLANT.parent)
    assert again.model_dump() == new.model_dump()
    marked = measured_fields(again)
    assert set(marked) == {f"source[room-light].{k}" for k in
                           ("lamp_lux", "occupancy_fraction", "lamp_schedule", "daylight_factor_pct")}
    assert marked["source[room-light].lamp_lux"].first_date == "2025-03-03"
    assert not any("light-week" in f.name for f in named_files(again))   # a record only: nothing reads the logs
    assert measured_fields(spec) == {}


def test_a_second_survey_replaces_the_record_of_the_same_field():
    spec = load_site(PLANT)
    upd = survey_light(spec, [SURVEYS / "light-week.csv"]).update
    twice = apply_update(apply_update(spec, upd), upd)
    assert len(twice.measured) == len(upd.fields)


def test_cli_writes_the_site_and_prints_json(tmp_path, capsys):
    out = tmp_path / "sub" / "new.toml"
    out.parent.mkdir()
    assert main(["survey", "light", str(SURVEYS / "light-week.csv"), "--site", str(PLANT), "-o", str(out),
                 "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["fields"]["lamp_schedule"]["days"] == "weekdays"
    new = load_site(out)         # loads from another folder: the file names it holds were rewritten
    assert "source[room-light].lamp_lux" in measured_fields(new)
    from siteharvest.assess import assess

    assert assess(new).cases


# ---------------------------------------------------------------------------------------------- bad logs

def _lines(*rows: str) -> str:
    return "time,illuminance_lx\n" + "\n".join(rows) + "\n"


def _every(start: str, n: int, freq: str = "10min", value: str = "300") -> list[str]:
    return [f"{t:%Y-%m-%d %H:%M},{value}" for t in pd.date_range(start, periods=n, freq=freq)]


BAD_LOGS = {
    "empty": ("", "an empty file"),
    "one row": (_lines("2025-03-03 08:00,300"), "at least 2 readings"),
    "duplicate": (_lines(*_every("2025-03-03", 5), "2025-03-03 00:40,300"), "each timestamp once"),
    "unsorted": (_lines(*_every("2025-03-03", 5), "2025-03-03 00:10,300"), "timestamps increasing"),
    "unset clock": (_lines("1970-01-01 00:00,300", "1970-01-01 00:10,300"), "real date"),
    "clock jump": (_lines(*_every("2025-03-03", 5), "2025-09-01 00:00,300"), "clock jump"),
    # 2025-03-30 is the last Sunday of March: clocks in much of Europe go forward an hour at 02:00
    "daylight saving": (_lines(*_every("2025-03-30 01:00", 6), *_every("2025-03-30 03:00", 6)),
                        "daylight-saving"),
    "text": (_lines("2025-03-03 08:00,300", "2025-03-03 08:10,bright"), "a finite number"),
    "lux like W/m2": (_lines(*_every("2025-03-03", 200, value="3.2")), "look like W/m2"),
}


@pytest.mark.parametrize("case", sorted(BAD_LOGS))
def test_bad_light_log_is_one_line_naming_file_and_problem(tmp_path, case):
    text, words = BAD_LOGS[case]
    path = tmp_path / "bad.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(SiteInputError) as err:
        survey_light(load_site(PLANT), [path])
    message = str(err.value)
    assert message.startswith(str(path)) and "\n" not in message and words in message, message


def test_daylight_saving_log_reads_with_its_time_zone(tmp_path):
    path = tmp_path / "dst.csv"
    path.write_text(_lines(*_every("2025-03-30 01:00", 6), *_every("2025-03-30 03:00", 6)), encoding="utf-8")
    log = read_timed_log(path, utc_offset_h=1.0, timezone="Europe/Berlin")
    assert np.all(np.diff(log.time.asi8) == 600 * 10**9)    # one clock: every step 10 minutes (zoneinfo rules)


def _recording_csv(path: Path, x: np.ndarray, fs: float, unit: str = "g") -> Path:
    col = "accel_g" if unit == "g" else "accel_m_s2"
    pd.DataFrame({"time_s": np.arange(x.size) / fs, col: x}).to_csv(path, index=False)
    return path


def test_sample_rate_too_low_for_the_harvester_is_aliasing(tmp_path):
    path = _recording_csv(tmp_path / "slow.csv", 0.05 * _tone(20.0, 1.0, fs=100.0, seconds=20), 100.0)
    with pytest.raises(SiteInputError, match="aliasing") as err:   # 100 Hz < 2.56 x the 50 Hz harvester
        survey_vibration(load_site(PLANT), [path])
    assert str(err.value).startswith(str(path))


def test_clipped_recording_is_refused(tmp_path):
    x = np.clip(_tone(50.0, 1.0, fs=1024.0, seconds=4), -1.0, 1.0)     # peak 1.41 g clipped at 1 g
    with pytest.raises(SiteInputError, match="clips"):
        read_recording(_recording_csv(tmp_path / "clip.csv", x, 1024.0), unit="g")
    wav = tmp_path / "clip.wav"
    wavfile.write(wav, 1024, np.clip(x * 40000, -32768, 32767).astype(np.int16))
    with pytest.raises(SiteInputError, match="clips at digital full scale"):
        read_recording(wav, unit="g", full_scale=4.0)


def test_g_that_look_like_m_s2_are_refused(tmp_path):
    x = G + _tone(50.0, 0.3, fs=1024.0, seconds=4)      # gravity in m/s2, labelled g
    with pytest.raises(SiteInputError, match="gravity in m/s2"):
        read_recording(_recording_csv(tmp_path / "unit.csv", x, 1024.0), unit="g")


def test_cli_bad_log_exits_2_with_one_line(tmp_path, capsys):
    path = tmp_path / "one.csv"
    path.write_text(_lines("2025-03-03 08:00,300"), encoding="utf-8")
    assert main(["survey", "light", str(path), "--site", str(PLANT), "--json"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and str(path) in err


# -------------------------------------------------------------------------------------------- properties

@settings(max_examples=200, deadline=None)
@given(st.lists(st.booleans(), min_size=24, max_size=24).filter(any))
def test_hours_text_reads_back_to_the_same_hours(mask):
    assert parse_hours(hours_text(np.array(mask))).tolist() == mask


@settings(max_examples=100, deadline=None)
@given(st.lists(st.booleans(), min_size=7, max_size=7).filter(any))
def test_days_text_reads_back_to_the_same_days(mask):
    assert parse_days(days_text(np.array(mask))).tolist() == mask


@settings(max_examples=100, deadline=None)
@given(st.lists(st.floats(-1e6, 1e6), min_size=2, max_size=200))
def test_otsu_threshold_lies_within_the_readings(values):
    t = otsu_threshold(np.array(values))
    assert min(values) <= t <= max(values)


LOG_SEED = (SURVEYS / "light-week.csv").read_bytes()[:6000]
REC_SEED = (SURVEYS / "bearing-1.csv").read_bytes()[:12000]
FUZZ = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                        HealthCheck.data_too_large])


@FUZZ
@given(data=mutated(LOG_SEED, head=400), zone=st.sampled_from([None, "UTC", "Europe/Berlin", "standard"]))
def test_fuzz_timed_log(data, zone):
    path = _write(data, ".csv")
    _one_line_or_return(lambda: read_timed_log(path, utc_offset_h=-5.0, timezone=zone), path)


@FUZZ
@given(data=mutated(REC_SEED, head=600), unit=st.sampled_from(["g", "m/s2", None]))
def test_fuzz_recording_csv(data, unit):
    path = _write(data, ".csv")
    _one_line_or_return(lambda: read_recording(path, unit=unit), path)


@FUZZ
@given(data=mutated(SCIPY_WAV.read_bytes()[:4000], head=100))
def test_fuzz_recording_wav(data):
    path = _write(data, ".wav")
    _one_line_or_return(lambda: read_recording(path, unit="g", full_scale=2.0), path)

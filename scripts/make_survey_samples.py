"""Write the invented survey logs in sample_sites/surveys/ (deterministic; run again after changing it).

    python scripts/make_survey_samples.py

For the plant-room sample spot (sample_sites/plant-room.toml): a week of light readings on the cell's
spot, a week of casing and air temperatures, three short acceleration recordings of the bearing (two
CSV, one WAV) and a week of hourly RMS vibration. All numbers are made up here from stated parameters.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.io import wavfile

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from siteharvest.site import load_site  # noqa: E402
from siteharvest.survey.light import outdoor_reference_lx  # noqa: E402

OUT = ROOT / "sample_sites" / "surveys"
SITE = ROOT / "sample_sites" / "plant-room.toml"
G = 9.80665
WEEK_START = "2025-03-03"     # a Monday
HEAD = "# Invented survey log (demo data) for sample_sites/plant-room.toml, made by scripts/make_survey_samples.py\n"


def light(rng: np.random.Generator) -> None:
    """10-minute lux readings: lamps 180 lx on weekdays 06-18 lit in 70 % of those hours, daylight factor 0.8 %."""
    spec = load_site(SITE)
    t = pd.date_range(WEEK_START, periods=7 * 144, freq="10min")
    local = t.tz_localize("Etc/GMT+5")
    ref, _ = outdoor_reference_lx(spec, local)
    scheduled = (t.day_of_week < 5) & (t.hour >= 6) & (t.hour < 18)
    lit = scheduled & np.repeat(rng.random(len(t) // 6) < 0.7, 6)
    lux = 180.0 * lit + 0.008 * ref + rng.normal(0.0, 1.5, len(t))
    frame = pd.DataFrame({"time": t.strftime("%Y-%m-%d %H:%M"), "illuminance_lx": np.round(np.maximum(lux, 0), 1)})
    (OUT / "light-week.csv").write_text(HEAD + "# spot: room-light cell, facing the ceiling lamps\n"
                                        + frame.to_csv(index=False), encoding="utf-8")


def temperature(rng: np.random.Generator) -> None:
    """15-minute casing and air temperatures: 55 degC running 06-22 on weekdays, 27 degC stopped, air 24 degC,
    with Wednesday a shutdown day; the casing warms and cools with a 20-minute time constant."""
    t = pd.date_range(WEEK_START, periods=7 * 96, freq="15min")
    running = (t.day_of_week < 5) & (t.hour >= 6) & (t.hour < 22) & (t.day_of_week != 2)
    target = np.where(running, 55.0, 27.0)
    surface = np.empty(len(t))
    surface[0] = target[0]
    k = 1 - np.exp(-15.0 / 20.0)
    for i in range(1, len(t)):
        surface[i] = surface[i - 1] + k * (target[i] - surface[i - 1])
    air = 24.0 + 1.0 * np.sin(2 * np.pi * (t.hour.to_numpy() - 9) / 24) + rng.normal(0, 0.2, len(t))
    surface = surface + rng.normal(0, 0.2, len(t))
    frame = pd.DataFrame({"time": t.strftime("%Y-%m-%d %H:%M"), "surface_c": np.round(surface, 2),
                          "air_c": np.round(air, 2)})
    (OUT / "casing-week.csv").write_text(HEAD + "# thermocouple on the motor casing, air probe beside the sink\n"
                                         + frame.to_csv(index=False), encoding="utf-8")


def recording(rng: np.random.Generator, freq_hz: float, rms_g: float, n: int = 8192, fs: float = 1024.0) -> np.ndarray:
    """Acceleration [g]: a running-speed line, its second harmonic at a third of its amplitude, noise, gravity."""
    t = np.arange(n) / fs
    a = np.sqrt(2) * rms_g
    return (1.0 + a * np.sin(2 * np.pi * freq_hz * t) + a / 3 * np.sin(2 * np.pi * 2 * freq_hz * t + 0.4)
            + rng.normal(0, 0.003, n))


def vibration(rng: np.random.Generator) -> None:
    """Three recordings at 1024 Hz for 8 s (the line at 49.3, 49.4, 49.55 Hz, 0.05 g RMS) and an hourly RMS week."""
    for name, f, start in (("bearing-1", 49.3, "2025-03-03T10:00"), ("bearing-3", 49.55, "2025-03-05T15:00")):
        x = recording(rng, f, 0.05)
        frame = pd.DataFrame({"time_s": np.round(np.arange(x.size) / 1024.0, 6), "accel_g": np.round(x, 5)})
        (OUT / f"{name}.csv").write_text(HEAD + f"# start = {start}\n# accelerometer on the drive-end bearing, radial\n"
                                         + frame.to_csv(index=False), encoding="utf-8")
    x = recording(rng, 49.4, 0.05)
    scale_g = 4.0                                   # the recorder's digital full scale is 4 g
    wavfile.write(OUT / "bearing-2.wav", 1024, np.round(x / scale_g * 32767).astype(np.int16))
    t = pd.date_range(WEEK_START, periods=7 * 24, freq="h")
    running = (t.day_of_week < 5)
    rms = np.where(running, 0.053, 0.004) * (1 + rng.normal(0, 0.05, len(t)))
    frame = pd.DataFrame({"time": t.strftime("%Y-%m-%d %H:%M"), "rms_g": np.round(rms, 5)})
    (OUT / "bearing-rms-week.csv").write_text(HEAD + "# hourly RMS of the bearing's acceleration\n"
                                              + frame.to_csv(index=False), encoding="utf-8")


def main() -> None:
    rng = np.random.default_rng(20250303)
    light(rng)
    temperature(rng)
    vibration(rng)
    for p in sorted(OUT.iterdir()):
        print(p.relative_to(ROOT), p.stat().st_size)


if __name__ == "__main__":
    main()

"""Acceleration recordings -> vibration inputs: Welch spectrum, dominant lines, their drift, the schedule.

Method
------
1. Recording (:func:`read_recording`): a CSV file (a ``time_s`` column, or a ``# sample_rate_hz =``
   line, and one acceleration column) or a WAV file with its scale stated (the acceleration at
   digital full scale); in ``g`` or ``m/s2``. A ``# start = 2025-03-03T10:00`` line (CSV) or the
   ``start`` argument dates it for the schedule.
2. Spectrum (:func:`amplitude_spectrum`): Welch's method (``scipy.signal.welch``): Hann window,
   segments of ``nperseg`` samples (a power of two, by default the largest giving at least 8
   segments, at most 16 s long), 50 % overlap, each segment's mean removed (gravity and offsets),
   mean of the segments' periodograms. Resolution df = fs / nperseg. Two conventions are given:
   the amplitude spectrum, RMS per line, amplitude-corrected ("spectrum" scaling: a tone centred on a
   line reads its RMS; its zero-to-peak amplitude is sqrt(2) times that), and the one-sided PSD
   [(m/s2)2/Hz] ("density" scaling), whose sum times df is the mean square (Parseval).
3. Lines (:func:`dominant_lines`): local maxima of the PSD, strongest first, at least 6 lines
   apart; each line's RMS is the square root of the PSD summed over +/- 3 lines times df (the Hann
   main lobe is 4 lines wide, so the sum holds the tone's power wherever it falls between lines),
   and its frequency the power-weighted mean frequency over those lines.
4. Drift: each line of the strongest recording is matched, within 5 % of its frequency, to the
   strongest line of every other running recording; the drift is half the range of the matched
   frequencies (the site's ``drift_hz``: a uniform wander of +/- that).
5. Schedule: each dated recording's RMS, and the readings of an RMS log, split into running and
   stopped (Otsu 1979; the states must differ by :data:`RUN_RATIO` in RMS, else all are running);
   by weekday and hour as in :mod:`siteharvest.survey.profile`.

Checks: a sample rate below 2.56 times the harvester's frequency (its resonant frequency, else its
highest stated line) aliases and is refused (2.56 is the ratio of analyser practice: the Nyquist
factor 2 with room for the anti-alias filter's roll-off); samples at the logger's full scale
(WAV: the digital limits; CSV: a stated ``full_scale``, else the extreme value held by neighbouring
samples in at least 1 % of the samples, a flat top) are clipping; a DC level of about 1 g read as m/s2, or of about
9.8 m/s2 read as g, and an overall RMS above 20 g, are unit mix-ups.

References
----------
Welch, P.D. (1967). The use of fast Fourier transform for the estimation of power spectra. IEEE
Transactions on Audio and Electroacoustics 15(2), 70-73.
Harris, F.J. (1978). On the use of windows for harmonic analysis with the discrete Fourier
transform. Proceedings of the IEEE 66(1), 51-83 (Hann window: equivalent noise bandwidth 1.5 lines).
Bendat, J.S. and Piersol, A.G. (2010). Random Data, 4th ed., Wiley (PSD, Parseval).
ISO 18431-2:2004 Mechanical vibration and shock, signal processing, part 2: time domain windows
for Fourier transform analysis.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from scipy.io import wavfile
from scipy.signal import get_window, welch

from ..errors import SiteInputError
from ..site import SiteSpec
from ..timegrid import fixed_offset
from ..vibration_spectrum import MAX_RMS_G, STANDARD_GRAVITY_M_S2
from .apply import FitQuality, SurveyUpdate, pick_source
from .extend import YearExtension, extend_on_states
from .logs import parse_table, read_text, read_timed_log, split_table
from .profile import schedule_of, two_state_split, week_profile

UNITS = {"g": STANDARD_GRAVITY_M_S2, "m/s2": 1.0}
ACCEL_COLUMNS = {"accel_g": "g", "accel_m_s2": "m/s2", "accel": None, "x": None, "y": None, "z": None}
RMS_COLUMNS = {"rms_g": "g", "rms_m_s2": "m/s2", "rms": None, "accel_rms_g": "g", "accel_rms_m_s2": "m/s2"}
#: Sample rate over the highest frequency of interest (analyser practice).
ALIAS_RATIO = 2.56
#: Fewest samples a recording must hold.
MIN_SAMPLES = 256
MAX_RECORDING_BYTES = 200_000_000
LOBE_LINES = 3
MATCH_SHARE = 0.05
MAX_SEGMENT_S = 16.0
FLAT_TOP_SHARE = 0.01
#: Running and stopped differ by at least this ratio of RMS (else all readings are one state).
RUN_RATIO = 2.0


@dataclass(frozen=True)
class Recording:
    """A raw acceleration recording: ``accel_m_s2`` samples [m/s2], ``sample_rate_hz``, ``file``,
    ``start`` (local standard time, or None)."""

    accel_m_s2: np.ndarray
    sample_rate_hz: float
    file: str
    start: pd.Timestamp | None = None

    @property
    def duration_s(self) -> float:
        return self.accel_m_s2.size / self.sample_rate_hz

    @property
    def rms_m_s2(self) -> float:
        """RMS of the recording about its mean [m/s2]."""
        x = self.accel_m_s2
        return float(np.sqrt(np.mean((x - x.mean()) ** 2)))


def _unit_of(unit: str | None, file: str) -> str:
    key = (unit or "").strip().lower().replace("^", "").replace("²", "2").replace(" ", "")
    key = {"m/s/s": "m/s2", "ms-2": "m/s2", "m_s2": "m/s2"}.get(key, key)
    if key not in UNITS:
        raise SiteInputError("an acceleration unit of 'g' or 'm/s2' (a column named accel_g or accel_m_s2, a "
                             "'# unit =' line, or --unit)", file=file, field="unit", got=unit or "none")
    return key


def check_accel(raw: np.ndarray, unit: str, file: str, full_scale: float | None, *, integer_limits:
                tuple[float, float] | None = None, units: bool = True) -> None:
    """Clipping and unit checks on raw samples in ``unit`` (see the module docstring)."""
    x = np.asarray(raw, dtype=float)
    if integer_limits is not None:
        at = (x <= integer_limits[0]) | (x >= integer_limits[1])
        if at.sum() >= 3:
            i = int(np.argmax(at))
            raise SiteInputError("samples inside the recorder's range (it clips at digital full scale: lower the "
                                 "gain or use a higher range)", file=file, field="samples",
                                 got=f"{int(at.sum()):,} samples at the limit from sample {i:,}")
    elif full_scale is not None:
        at = np.abs(x) >= 0.999 * full_scale
        if at.sum() >= 3:
            raise SiteInputError(f"samples below the logger's full scale of {full_scale:g} {unit} (it clips)",
                                 file=file, field="samples", got=f"{int(at.sum()):,} samples at it")
    else:
        for end in (x.max(), x.min()):
            at = x == end
            count = int((at[1:] & at[:-1]).sum())    # flat tops: the extreme held by neighbouring samples
            if count >= 5 and count >= FLAT_TOP_SHARE * x.size and x.max() > x.min():
                raise SiteInputError("a recording without flat tops (the extreme value held in "
                                     f"{100 * count / x.size:.1f} % of samples: it clips at the logger's full "
                                     "scale)", file=file, field="samples", got=f"{count:,} samples at {end:g} {unit}")
    if not units:
        return
    mean = float(np.mean(x))
    ac = float(np.std(x))
    if unit == "m/s2" and 0.85 <= abs(mean) <= 1.15 and ac < 0.5:
        raise SiteInputError("m/s2 samples (their mean, about 1, is gravity in g: give --unit g)", file=file,
                             field="unit", got=f"mean {mean:.3g} m/s2")
    if unit == "g" and 8.5 <= abs(mean) <= 11.0:
        raise SiteInputError("g samples (their mean, about 9.8, is gravity in m/s2: give --unit m/s2)", file=file,
                             field="unit", got=f"mean {mean:.3g} g")
    rms_g = ac * UNITS[unit] / STANDARD_GRAVITY_M_S2
    if rms_g > MAX_RMS_G:
        hint = "; these look like m/s2, not g" if unit == "g" and rms_g / STANDARD_GRAVITY_M_S2 <= MAX_RMS_G else ""
        raise SiteInputError(f"an RMS acceleration of at most {MAX_RMS_G:g} g{hint}", file=file, field="unit",
                             got=f"{rms_g:.3g} g")


def _start_of(text: str | None, file: str, utc_offset_h: float) -> pd.Timestamp | None:
    if text is None:
        return None
    try:
        t = pd.Timestamp(text.strip())
    except (ValueError, TypeError):
        raise SiteInputError("a start time such as 2025-03-03T10:00", file=file, field="start", got=text) from None
    if t is pd.NaT or not 2000 <= t.year <= 2100:
        raise SiteInputError("a start time from 2000 to 2100", file=file, field="start", got=text)
    zone = fixed_offset(utc_offset_h)
    return t.tz_localize(zone) if t.tzinfo is None else t.tz_convert(zone)


def read_recording(path: str | Path, *, unit: str | None = None, sample_rate_hz: float | None = None,
                   column: str | None = None, full_scale: float | None = None, start: str | None = None,
                   utc_offset_h: float = 0.0) -> Recording:
    """Read an acceleration recording (module docstring, step 1).

    Parameters
    ----------
    path : CSV or WAV file.
    unit : 'g' or 'm/s2'   (CSV: default from the column name or a ``# unit =`` line).
    sample_rate_hz : float [Hz]   CSV without a time column or ``# sample_rate_hz =`` line.
    column : str   CSV: the acceleration column; WAV: the channel number (0 first).
    full_scale : float   CSV: the logger's full scale in ``unit``; WAV: the acceleration in ``unit`` at
        digital full scale (required: a WAV holds no unit).
    start, utc_offset_h : the recording's start (local standard time unless an offset is given).
    """
    path = Path(path)
    file = str(path)
    if path.suffix.lower() == ".wav":
        return _read_wav(path, unit, column, full_scale, start, utc_offset_h)
    text = read_text(path, "recording CSV file", MAX_RECORDING_BYTES)
    meta, numbers, rows = split_table(text, file, "recording")
    frame = parse_table(rows, numbers, file, "recording")
    if len(frame) < MIN_SAMPLES:
        raise SiteInputError(f"a recording of at least {MIN_SAMPLES} samples", file=file, got=f"{len(frame)} rows")
    if column is not None:
        col = column.strip().lower()
        if col not in frame.columns:
            raise SiteInputError(f"a column named '{column}'", file=file, field="column", got=", ".join(frame.columns))
    else:
        found = [c for c in frame.columns if c in ACCEL_COLUMNS]
        if len(found) != 1:
            raise SiteInputError("one acceleration column (accel_g, accel_m_s2, accel; or name it with --column)",
                                 file=file, got=", ".join(frame.columns))
        col = found[0]
    the_unit = _unit_of(unit or ACCEL_COLUMNS.get(col) or meta.get("unit"), file)
    from .logs import numeric_column

    x = numeric_column(frame, col, numbers, file)
    if np.isnan(x).any():
        i = int(np.argmax(np.isnan(x)))
        raise SiteInputError("a sample in every row (a recording has no gaps)", file=file, field=col,
                             got="an empty cell", line=numbers[i + 1])
    rate = sample_rate_hz
    if "time_s" in frame.columns:
        t = numeric_column(frame, "time_s", numbers, file)
        step = np.diff(t)
        if not np.all(np.isfinite(t)) or np.any(step <= 0):
            i = int(np.argmax(~(step > 0))) if step.size else 0
            raise SiteInputError("time_s increasing, each sample once", file=file, field="time_s", got=t[i + 1],
                                 line=numbers[i + 2])
        dt = float(np.median(step))
        uneven = np.abs(step - dt) > 0.01 * dt
        if uneven.any():
            i = int(np.argmax(uneven))
            raise SiteInputError("evenly spaced samples (a recording has a fixed sample rate)", file=file,
                                 field="time_s", got=f"a step of {step[i]:.6g} s after {dt:.6g} s", line=numbers[i + 2])
        rate = rate or 1.0 / dt
    elif rate is None and "sample_rate_hz" in meta:
        try:
            rate = float(meta["sample_rate_hz"])
        except ValueError:
            raise SiteInputError("a number after '# sample_rate_hz ='", file=file, field="sample_rate_hz",
                                 got=meta["sample_rate_hz"]) from None
    if rate is None or not math.isfinite(rate) or not 1.0 <= rate <= 1e6:
        raise SiteInputError("a sample rate from 1 Hz to 1 MHz (a time_s column, a '# sample_rate_hz =' line or "
                             "--sample-rate)", file=file, field="sample_rate_hz", got=rate)
    fs_meta = meta.get("full_scale")
    scale = full_scale
    if scale is None and fs_meta is not None:
        try:
            scale = float(fs_meta)
        except ValueError:
            raise SiteInputError("a number after '# full_scale ='", file=file, field="full_scale",
                                 got=fs_meta) from None
    check_accel(x, the_unit, file, scale)
    return Recording(x * UNITS[the_unit], float(rate), file, _start_of(start or meta.get("start"), file, utc_offset_h))


def _read_wav(path: Path, unit: str | None, column: str | None, full_scale: float | None, start: str | None,
              utc_offset_h: float) -> Recording:
    file = str(path)
    the_unit = _unit_of(unit, file)
    if full_scale is None or not math.isfinite(full_scale) or full_scale <= 0:
        raise SiteInputError("the acceleration at digital full scale for a WAV recording (--wav-scale, in "
                             f"{the_unit})", file=file, field="wav_scale", got=full_scale)
    try:
        if path.stat().st_size > MAX_RECORDING_BYTES:
            raise SiteInputError(f"a recording of at most {MAX_RECORDING_BYTES // 1_000_000} MB", file=file)
        import warnings

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            rate, data = wavfile.read(path)
    except FileNotFoundError:
        raise SiteInputError("an existing WAV file", file=file) from None
    except SiteInputError:
        raise
    except Exception as exc:   # scipy's WAV reader on a damaged or foreign file
        raise SiteInputError("a PCM or float WAV file", file=file,
                             got=f"a file the WAV reader stopped on ({type(exc).__name__})") from None
    data = np.asarray(data)
    channel = 0
    if column is not None:
        try:
            channel = int(column)
        except ValueError:
            raise SiteInputError("a channel number (0 first)", file=file, field="column", got=column) from None
    if data.ndim == 2:
        if not 0 <= channel < data.shape[1]:
            raise SiteInputError(f"a channel from 0 to {data.shape[1] - 1}", file=file, field="column", got=channel)
        data = data[:, channel]
    if data.size < MIN_SAMPLES:
        raise SiteInputError(f"a recording of at least {MIN_SAMPLES} samples", file=file, got=f"{data.size} samples")
    if not 1 <= rate <= 1e6:
        raise SiteInputError("a sample rate from 1 Hz to 1 MHz", file=file, field="sample_rate_hz", got=rate)
    if np.issubdtype(data.dtype, np.integer):
        info = np.iinfo(data.dtype)
        if data.dtype == np.uint8:
            x = data.astype(float) - 128.0
            top, limits = 128.0, (-128.0, 127.0)
        else:
            x = data.astype(float)
            bits = 8 * data.dtype.itemsize
            top, limits = float(2 ** (bits - 1)), (float(info.min), float(info.max))
    elif np.issubdtype(data.dtype, np.floating):
        x = data.astype(float)
        if not np.all(np.isfinite(x)):
            raise SiteInputError("finite samples", file=file, field="samples", got="nan or inf")
        top, limits = 1.0, (-1.0, 1.0)
    else:
        raise SiteInputError("integer or float samples", file=file, got=str(data.dtype))
    scaled = x / top * float(full_scale)
    check_accel(x, the_unit, file, None, integer_limits=limits, units=False)
    check_accel(scaled, the_unit, file, float(full_scale) * 10.0)   # units (nothing reaches 10 x full scale)
    return Recording(scaled * UNITS[the_unit], float(rate), file, _start_of(start, file, utc_offset_h))


@dataclass(frozen=True)
class Spectrum:
    """A Welch spectrum (module docstring, step 2).

    Attributes: ``freq_hz``; ``amplitude_rms_m_s2`` RMS per line, amplitude-corrected [m/s2];
    ``psd_m2_s4_hz`` one-sided PSD [(m/s2)2/Hz]; ``resolution_hz`` fs / nperseg; ``enbw_hz`` the window's
    equivalent noise bandwidth [Hz]; ``window``; ``nperseg``; ``noverlap``; ``segments``; ``sample_rate_hz``.
    """

    freq_hz: np.ndarray
    amplitude_rms_m_s2: np.ndarray
    psd_m2_s4_hz: np.ndarray
    resolution_hz: float
    enbw_hz: float
    window: str
    nperseg: int
    noverlap: int
    segments: int
    sample_rate_hz: float

    @property
    def convention(self) -> str:
        seconds = self.nperseg / self.sample_rate_hz
        return (f"Welch: {self.window} window, {self.nperseg} samples a segment ({seconds:.3g} s), "
                f"{self.noverlap} overlapping, {self.segments} segments averaged; resolution "
                f"{self.resolution_hz:.4g} Hz (noise bandwidth {self.enbw_hz:.4g} Hz); amplitude spectrum as RMS per "
                "line, amplitude-corrected (zero-to-peak = 1.414 x RMS); PSD one-sided in (m/s2)2/Hz")

    def to_json(self) -> dict[str, Any]:
        return {"convention": self.convention, "resolution_hz": self.resolution_hz, "window": self.window,
                "nperseg": self.nperseg, "segments": self.segments}


def default_nperseg(n_samples: int, sample_rate_hz: float) -> int:
    """The largest power of two giving at least 8 half-overlapping segments, at most 16 s, at least 64."""
    longest = min(n_samples * 2 // 9, int(MAX_SEGMENT_S * sample_rate_hz))
    return max(64, 2 ** math.floor(math.log2(max(longest, 64))))


def amplitude_spectrum(accel_m_s2: np.ndarray, sample_rate_hz: float, nperseg: int | None = None,
                       window: str = "hann") -> Spectrum:
    """Welch spectrum of an acceleration recording (module docstring, step 2).

    Parameters
    ----------
    accel_m_s2 : array [m/s2]   samples.
    sample_rate_hz : float [Hz]
    nperseg : int, optional     samples per segment (default :func:`default_nperseg`).
    window : str                a ``scipy.signal.get_window`` name (default "hann").
    """
    x = np.asarray(accel_m_s2, dtype=float)
    n = nperseg or default_nperseg(x.size, sample_rate_hz)
    n = min(n, x.size)
    overlap = n // 2
    kw = {"fs": sample_rate_hz, "window": window, "nperseg": n, "noverlap": overlap, "detrend": "constant"}
    f, psd = welch(x, scaling="density", **kw)
    _, ps = welch(x, scaling="spectrum", **kw)
    w = get_window(window, n)
    enbw = sample_rate_hz * float(np.sum(w**2) / np.sum(w) ** 2)
    segments = 1 + (x.size - n) // (n - overlap)
    return Spectrum(f, np.sqrt(ps), psd, sample_rate_hz / n, enbw, window, n, overlap, segments, sample_rate_hz)


@dataclass(frozen=True)
class Line:
    """A dominant line: ``frequency_hz``, ``rms_m_s2``; across recordings ``low_hz``, ``high_hz``."""

    frequency_hz: float
    rms_m_s2: float
    low_hz: float
    high_hz: float

    @property
    def drift_hz(self) -> float:
        return 0.5 * (self.high_hz - self.low_hz)

    def to_json(self) -> dict[str, float]:
        return {"frequency_hz": self.frequency_hz, "rms_m_s2": self.rms_m_s2,
                "rms_g": self.rms_m_s2 / STANDARD_GRAVITY_M_S2, "drift_hz": self.drift_hz}


def dominant_lines(spectrum: Spectrum, max_lines: int = 5, min_share: float = 0.05) -> list[Line]:
    """The strongest lines of a spectrum (module docstring, step 3); lines below ``min_share`` of the
    strongest's mean square are left out."""
    f, p = spectrum.freq_hz, spectrum.psd_m2_s4_hz
    df = spectrum.resolution_hz
    k = LOBE_LINES
    order = np.argsort(-p, kind="stable")
    taken: list[int] = []
    lines: list[Line] = []
    for i in order:
        if i <= k or i >= f.size - 1:   # the DC lobe and the band's top edge are no lines
            continue
        if not (p[i] >= p[i - 1] and p[i] >= p[i + 1]):
            continue
        if any(abs(int(i) - j) < 2 * k for j in taken):
            continue
        lo, hi = max(int(i) - k, 1), min(int(i) + k + 1, f.size)
        power = float(p[lo:hi].sum() * df)
        if lines and power < min_share * lines[0].rms_m_s2 ** 2:
            break
        centre = float((f[lo:hi] * p[lo:hi]).sum() / p[lo:hi].sum())
        lines.append(Line(centre, math.sqrt(power), centre, centre))
        taken.append(int(i))
        if len(lines) >= max_lines:
            break
    return lines


def drift_across(per_recording: Sequence[list[Line]]) -> list[Line]:
    """Lines of the first list with their frequency range and mean-square mean over the matching lines of
    the others (module docstring, step 4)."""
    if not per_recording or not per_recording[0]:
        return []
    out = []
    for line in per_recording[0]:
        freqs, powers = [line.frequency_hz], [line.rms_m_s2**2]
        for others in per_recording[1:]:
            near = [o for o in others if abs(o.frequency_hz - line.frequency_hz) <= MATCH_SHARE * line.frequency_hz]
            if near:
                best = max(near, key=lambda o: o.rms_m_s2)
                freqs.append(best.frequency_hz)
                powers.append(best.rms_m_s2**2)
        out.append(Line(float(np.mean(freqs)), math.sqrt(float(np.mean(powers))), min(freqs), max(freqs)))
    return out


def harvester_frequency_hz(spec_source: Any) -> float | None:
    """The frequency a vibration source's harvester works at: its resonant frequency, else its highest
    stated line, else None."""
    if getattr(spec_source, "resonant_frequency_hz", None):
        return float(spec_source.resonant_frequency_hz)
    peaks = getattr(spec_source, "peak", None) or []
    return max((p.frequency_hz for p in peaks), default=None)


def check_aliasing(rec: Recording, frequency_hz: float | None) -> None:
    """Refuse a recording sampled too slowly for the harvester's frequency (module docstring, checks)."""
    if frequency_hz is None:
        return
    need = ALIAS_RATIO * frequency_hz
    if rec.sample_rate_hz < need:
        raise SiteInputError(f"a sample rate of at least {ALIAS_RATIO:g} x the harvester's {frequency_hz:g} Hz "
                             f"({need:g} Hz): above {rec.sample_rate_hz / 2:g} Hz the recording folds back "
                             "(aliasing)", file=rec.file, field="sample_rate_hz", got=f"{rec.sample_rate_hz:g} Hz")


@dataclass(frozen=True)
class VibrationSurvey:
    """A vibration survey: spectra, lines with drift, running states and the site update."""

    recordings: list[Recording]
    spectra: list[Spectrum]
    running: np.ndarray
    lines: list[Line]
    schedule: dict[str, Any] | None
    year: YearExtension | None
    update: SurveyUpdate
    notes: list[str] = field(default_factory=list)

    def to_json(self) -> dict[str, Any]:
        return {"kind": "vibration", "source_id": self.update.source_id, "fields": self.update.fields,
                "logs": self.update.logs, "first_date": self.update.first_date, "last_date": self.update.last_date,
                "quality": self.update.quality.to_json(),
                "recordings": [{"file": r.file, "sample_rate_hz": r.sample_rate_hz, "duration_s": r.duration_s,
                                "rms_m_s2": r.rms_m_s2, "running": bool(on),
                                "start": None if r.start is None else r.start.isoformat(), "spectrum": s.to_json()}
                               for r, s, on in zip(self.recordings, self.spectra, self.running, strict=True)],
                "lines": [ln.to_json() for ln in self.lines], "schedule": self.schedule,
                "year": None if self.year is None else self.year.to_json()}


def _rms_log_states(path: str | Path, spec: SiteSpec, timezone: str | None, column: str | None,
                    unit: str | None) -> tuple[pd.DatetimeIndex, np.ndarray, float]:
    log = read_timed_log(path, utc_offset_h=spec.spot.utc_offset_h, timezone=timezone, what="RMS vibration log")
    names = [c for c in log.values if c in RMS_COLUMNS] if column is None else [column.lower()]
    if len(names) != 1 or names[0] not in log.values:
        raise SiteInputError("one RMS column (rms_g, rms_m_s2, rms)", file=log.file, got=", ".join(log.values))
    v = log.values[names[0]]
    ok = np.isfinite(v)
    the_unit = _unit_of(unit or RMS_COLUMNS.get(names[0]) or log.meta.get("unit"), log.file)
    values = v[ok] * UNITS[the_unit]
    if np.any(values < 0):
        raise SiteInputError("RMS values >= 0", file=log.file, field=names[0], got=float(values.min()))
    return log.time[ok], values, log.interval_s


def survey_vibration(spec: SiteSpec, recordings: Sequence[str | Path], *, source_id: str | None = None,
                     unit: str | None = None, sample_rate_hz: float | None = None, column: str | None = None,
                     full_scale: float | None = None, rms_log: str | Path | None = None,
                     timezone: str | None = None, nperseg: int | None = None) -> VibrationSurvey:
    """Fit a vibration source's spectrum lines, drift and machine schedule to recordings of its spot.

    Parameters
    ----------
    spec : SiteSpec
    recordings : paths   CSV or WAV acceleration recordings (at least one).
    source_id : str      the vibration source (default: the site's only one).
    unit, sample_rate_hz, column, full_scale : see :func:`read_recording` (WAV: ``full_scale`` is the scale).
    rms_log : path       a timestamped log of RMS acceleration for the running schedule.
    timezone : str       for the RMS log's timestamps (see :mod:`siteharvest.survey.logs`).
    nperseg : int        Welch segment length (default :func:`default_nperseg`).
    """
    if not recordings:
        raise SiteInputError("at least one acceleration recording", field="LOG")
    sid = pick_source(spec, "vibration", source_id, "vibration recording")
    src = next(s for s in spec.source if s.id == sid)
    recs = [read_recording(p, unit=unit, sample_rate_hz=sample_rate_hz, column=column, full_scale=full_scale,
                           utc_offset_h=spec.spot.utc_offset_h) for p in recordings]
    f_h = harvester_frequency_hz(src)
    for r in recs:
        check_aliasing(r, f_h)
    spectra = [amplitude_spectrum(r.accel_m_s2, r.sample_rate_hz, nperseg) for r in recs]
    rms = np.array([r.rms_m_s2 for r in recs])
    notes: list[str] = []
    split = two_state_split(rms) if rms.size >= 2 else None
    distinct = split is not None and split.distinct and split.high_level >= RUN_RATIO * split.low_level
    running = split.high if distinct else np.ones(rms.size, dtype=bool)
    per = [dominant_lines(s) for s, on in zip(spectra, running, strict=True) if on]
    per.sort(key=lambda lines: -(lines[0].rms_m_s2 if lines else 0.0))
    lines = drift_across(per)
    if not lines:
        raise SiteInputError("a recording with a vibration line above the noise", file=recs[0].file, got="none found")
    for ln, s in ((ln, spectra[0]) for ln in lines):
        if ln.frequency_hz > 0.8 * s.sample_rate_hz / 2:
            notes.append(f"the line at {ln.frequency_hz:.1f} Hz lies near half the sample rate: it may be folded back "
                         "from higher up")
    if f_h is not None and 2 * spectra[0].resolution_hz > f_h * 2 * src.mechanical_damping_ratio:
        notes.append(f"the spectrum's resolution ({spectra[0].resolution_hz:.3g} Hz) is coarse against the harvester's "
                     f"half-power bandwidth ({f_h * 2 * src.mechanical_damping_ratio:.3g} Hz): record longer")
    # schedule: dated recordings plus the RMS log
    times, states, interval = [], [], 3600.0
    dated = [(r.start, on) for r, on in zip(recs, running, strict=True) if r.start is not None]
    if dated:
        times.append(pd.DatetimeIndex([d for d, _ in dated]).as_unit("ns"))
        states.append(np.array([on for _, on in dated]))
    if rms_log is not None:
        t, v, interval = _rms_log_states(rms_log, spec, timezone, None, unit)
        s2 = two_state_split(v)
        states.append(s2.high if s2.distinct and s2.high_level >= RUN_RATIO * s2.low_level
                      else np.full(v.size, bool(v.mean() > 0)))
        times.append(t)
    schedule = None
    year = None
    fields: dict[str, Any] = {"peak": [{"frequency_hz": round(ln.frequency_hz, 3), "accel": round(ln.rms_m_s2, 5),
                                        "accel_unit": "m/s2", "measure": "rms", "drift_hz": round(ln.drift_hz, 3)}
                                       for ln in lines],
                              "preset": None, "spectrum_file": None, "spectrum_unit": None, "spectrum_measure": None}
    all_t = None
    if times:
        all_t = times[0].append(times[1:]) if len(times) > 1 else times[0]
        on = np.concatenate(states)
        order = np.argsort(all_t.asi8, kind="stable")
        all_t, on = all_t[order], on[order]
        if all_t.size >= 24 and (all_t[-1] - all_t[0]) >= pd.Timedelta(days=1):
            prof = week_profile(all_t, on)
            sched = schedule_of(prof)
            schedule = {"hours": sched.hours, "days": sched.days, "running_share": sched.on_share,
                        "agreement": sched.agreement}
            fields["machine_schedule"] = {"hours": sched.hours, "days": sched.days}
            fields["running_fraction"] = round(sched.on_share, 3)
            year = extend_on_states(all_t, on, interval, prof, "the machine running")
            notes += year.notes
        else:
            notes.append("too few dated readings (fewer than 24, or less than a day) for a running schedule: "
                         "machine_schedule is left as it was")
    main = lines[0]
    summary = (f"{len(recs)} recording{'s' if len(recs) > 1 else ''} ({int(running.sum())} running); strongest line "
               f"{main.frequency_hz:.2f} Hz at {main.rms_m_s2:.3g} m/s2 RMS, drift +/- {main.drift_hz:.3g} Hz; "
               + spectra[0].convention)
    quality = FitQuality(summary, {"recordings": float(len(recs)), "running": float(running.sum()),
                                   "resolution_hz": spectra[0].resolution_hz}, notes)
    dates = [r.start for r in recs if r.start is not None] + ([all_t[0], all_t[-1]] if all_t is not None else [])
    if not dates:   # undated recordings: the files' own dates
        dates = [pd.Timestamp(Path(p).stat().st_mtime, unit="s") for p in recordings]
    first = min(dates).strftime("%Y-%m-%d")
    last = max(dates).strftime("%Y-%m-%d") if dates else first
    logs = [str(p) for p in recordings] + ([str(rms_log)] if rms_log is not None else [])
    update = SurveyUpdate("vibration", sid, fields, logs, first, last, quality,
                          None if year is None else year.on_hours.spread_pct)
    return VibrationSurvey(recs, spectra, running, lines, schedule, year, update, notes)


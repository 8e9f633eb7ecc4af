"""A spot's vibration survey: spectra read from CSV files and turned into RMS acceleration per line.

The harvester model (:mod:`siteharvest.sources.vibration`) treats the excitation as a set of
sinusoidal components, each with a frequency [Hz] and an RMS base acceleration [m/s2]. This module
makes those components from what a survey gives:

- an *amplitude spectrum*: one acceleration (or velocity) value per frequency line, stated as
  ``"peak"`` (zero-to-peak) or ``"rms"``; units ``"m/s2"``, ``"g"`` or, for velocity spectra,
  ``"mm/s"`` and ``"m/s"`` (converted with a = 2 pi f v). Use amplitude-corrected spectra: with a
  Hann window a single tone also shows in its two neighbouring lines and summing their powers
  overstates a broadband harvester's input by up to about 1.5x (the Hann energy correction);
- a *power spectral density* (PSD) in ``"g2/Hz"`` or ``"(m/s2)2/Hz"``: each line becomes the RMS
  acceleration in its bin, a_rms = sqrt(PSD * df), with df the bin width (:func:`bin_widths_hz`), so
  that the sum of the squares equals the mean-square acceleration (Parseval).

CSV layout: a header row, then one row per frequency line; blank lines and lines starting with ``#``
are skipped; comma, semicolon or tab separated. The frequency column is ``frequency_hz`` and the
value column ``accel`` (amplitude spectra) or ``psd`` (PSD) unless other names are given.
Frequencies must be > 0 (leave out the 0 Hz line) and strictly increasing.

References
----------
BIPM (1901), 3rd CGPM: standard acceleration of gravity g_n = 9.80665 m/s2.
Bendat, J.S. and Piersol, A.G. (2010). Random Data: Analysis and Measurement Procedures, 4th ed.,
Wiley (power spectral density, Parseval's relation).
"""

from __future__ import annotations

import csv
import functools
import math
from pathlib import Path

import numpy as np

from .errors import SiteInputError

STANDARD_GRAVITY_M_S2 = 9.80665  # 3rd CGPM (1901), exact by definition

# Amplitude units: (what the value is, factor to SI) ; velocity values become acceleration via 2 pi f.
AMPLITUDE_UNITS: dict[str, tuple[str, float]] = {
    "m/s2": ("accel", 1.0),
    "g": ("accel", STANDARD_GRAVITY_M_S2),
    "mm/s": ("velocity", 1e-3),
    "m/s": ("velocity", 1.0),
}
# PSD units: factor to (m/s2)^2/Hz.
PSD_UNITS: dict[str, float] = {
    "(m/s2)2/hz": 1.0,
    "m2/s4/hz": 1.0,
    "g2/hz": STANDARD_GRAVITY_M_S2**2,
}
SPECTRUM_KINDS = ("amplitude", "psd")
MEASURES = ("peak", "rms")
DEFAULT_VALUE_COLUMN = {"amplitude": "accel", "psd": "psd"}

#: Largest spectrum file read [bytes] and most data rows: a survey spectrum has some thousands of lines.
MAX_SPECTRUM_BYTES = 20_000_000
MAX_SPECTRUM_ROWS = 200_000
#: Highest frequency line accepted [Hz]: surveys for harvesting stop well below ultrasound.
MAX_FREQUENCY_HZ = 100_000.0
#: Largest overall RMS acceleration accepted [g]: machinery a node is mounted on runs at a few g at
#: most; above this the survey is shock, a sensor fault or the wrong unit, and is refused.
MAX_RMS_G = 20.0


def normalise_unit(unit: str) -> str:
    """A unit string in the spelling the tables above use: lower case, no spaces, no ``^``.

    ``"m/s^2"``, ``"m/s²"`` and ``"M/S2"`` all become ``"m/s2"``; ``"g^2/Hz"`` becomes ``"g2/hz"``;
    ``"(m/s^2)^2/Hz"`` becomes ``"(m/s2)2/hz"``.
    """
    text = str(unit).strip().lower().replace(" ", "").replace("^", "").replace("²", "2")
    return text.replace("**", "")


def unit_factor(kind: str, unit: str) -> tuple[str, float]:
    """What a spectrum value in ``unit`` is and its factor to SI.

    Returns ``("accel" | "velocity", factor)`` for amplitude spectra and ``("psd", factor)`` for PSDs.
    Raises ValueError naming the accepted units.
    """
    norm = normalise_unit(unit)
    if kind == "amplitude":
        if norm not in AMPLITUDE_UNITS:
            raise ValueError("a unit of " + ", ".join(f"'{u}'" for u in AMPLITUDE_UNITS)
                             + " for an amplitude spectrum")
        return AMPLITUDE_UNITS[norm]
    if kind == "psd":
        if norm not in PSD_UNITS:
            raise ValueError("a unit of 'g2/Hz' or '(m/s2)2/Hz' for a PSD")
        return "psd", PSD_UNITS[norm]
    raise ValueError("a spectrum kind of 'amplitude' or 'psd'")


def accel_to_rms_m_s2(value: float | np.ndarray, unit: str, measure: str,
                      freq_hz: float | np.ndarray | None = None) -> float | np.ndarray:
    """RMS acceleration [m/s2] of a sinusoidal line given in ``unit`` as ``measure``.

    Parameters
    ----------
    value : float or array   amplitude in ``unit`` ("m/s2", "g", or velocity "mm/s", "m/s").
    unit : str
    measure : {"peak", "rms"}   zero-to-peak amplitude or RMS; peak = sqrt(2) * RMS for a sinusoid.
    freq_hz : float or array [Hz]   needed for velocity units (a = 2 pi f v).
    """
    what, factor = unit_factor("amplitude", unit)
    if measure not in MEASURES:
        raise ValueError("a measure of 'peak' or 'rms'")
    si = np.asarray(value, dtype=float) * factor
    if what == "velocity":
        if freq_hz is None:
            raise ValueError("a frequency to turn velocity into acceleration")
        si = si * 2.0 * math.pi * np.asarray(freq_hz, dtype=float)
    if measure == "peak":
        si = si / math.sqrt(2.0)
    return float(si) if si.ndim == 0 else si


def bin_widths_hz(freq_hz: np.ndarray) -> np.ndarray:
    """Width [Hz] of the bin each frequency line stands for.

    Method: half the distance to each neighbour (the full spacing at the two ends), so a uniform
    grid gives its resolution df everywhere and the widths of a non-uniform grid tile the band.
    One line alone has width 0.
    """
    f = np.asarray(freq_hz, dtype=float)
    if f.size < 2:
        return np.zeros_like(f)
    gaps = np.diff(f)
    widths = np.empty_like(f)
    widths[0] = gaps[0]
    widths[-1] = gaps[-1]
    widths[1:-1] = 0.5 * (gaps[:-1] + gaps[1:])
    return widths


def psd_to_rms_m_s2(psd_m2_s4_hz: np.ndarray, bin_hz: np.ndarray) -> np.ndarray:
    """RMS acceleration [m/s2] in each bin of a PSD: sqrt(PSD * df).

    Parameters
    ----------
    psd_m2_s4_hz : array [(m/s2)^2/Hz]   one-sided acceleration PSD.
    bin_hz : array [Hz]   bin widths (:func:`bin_widths_hz`).

    References
    ----------
    Bendat & Piersol (2010): the mean square is the integral of the one-sided PSD over frequency.
    """
    return np.sqrt(np.asarray(psd_m2_s4_hz, dtype=float) * np.asarray(bin_hz, dtype=float))


def _rows(path: Path) -> list[tuple[int, list[str]]]:
    """Non-blank, non-comment rows of a CSV file with their 1-based line numbers."""
    try:
        size = path.stat().st_size
        if size > MAX_SPECTRUM_BYTES:
            raise SiteInputError(f"a spectrum file of at most {MAX_SPECTRUM_BYTES // 1_000_000} MB", file=str(path),
                                 got=f"{size:,} bytes")
        text = path.read_bytes().decode("utf-8-sig")
    except FileNotFoundError:
        raise SiteInputError("an existing spectrum CSV file", file=str(path)) from None
    except (UnicodeDecodeError, OSError) as exc:
        raise SiteInputError("a readable text CSV file", file=str(path), got=type(exc).__name__) from None
    if "\x00" in text:
        raise SiteInputError("a text CSV file", file=str(path), got="NUL bytes (a binary file?)")
    lines = [(i + 1, line) for i, line in enumerate(text.splitlines())
             if line.strip() and not line.lstrip().startswith("#")]
    if not lines:
        raise SiteInputError("a header row and data rows", file=str(path), got="an empty file")
    if len(lines) > MAX_SPECTRUM_ROWS + 1:
        raise SiteInputError(f"at most {MAX_SPECTRUM_ROWS:,} frequency lines", file=str(path),
                             got=f"{len(lines) - 1:,} rows")
    header = lines[0][1]
    delimiter = next((d for d in (",", ";", "\t") if d in header), ",")
    rows = []
    for num, line in lines:   # one line at a time: a quote left open cannot swallow the rows after it
        if line.count('"') % 2:
            raise SiteInputError("quotes closed on the line they open", file=str(path), got=line[:40], line=num)
        try:
            cells = next(csv.reader([line], delimiter=delimiter), [])
        except csv.Error:
            raise SiteInputError("comma-, semicolon- or tab-separated cells", file=str(path), got=line[:40],
                                 line=num) from None
        rows.append((num, [cell.strip() for cell in cells]))
    return rows


def read_spectrum_csv(path: str | Path, kind: str, unit: str, measure: str | None, *,
                      frequency_column: str = "frequency_hz",
                      value_column: str | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Read a vibration survey spectrum (cached by file, size and modification time; see
    :func:`_read_spectrum_csv` for the method). The arrays returned are read-only."""
    p = Path(path)
    try:
        stat = p.stat()
        stamp = (stat.st_size, stat.st_mtime_ns)
    except OSError:
        stamp = None   # let the reader name the missing file
    return _cached_read(str(p), stamp, kind, unit, measure, frequency_column, value_column)


@functools.lru_cache(maxsize=32)
def _cached_read(path: str, stamp: tuple[int, int] | None, kind: str, unit: str, measure: str | None,
                 frequency_column: str, value_column: str | None) -> tuple[np.ndarray, np.ndarray]:
    freq, accel = _read_spectrum_csv(path, kind, unit, measure, frequency_column=frequency_column,
                                     value_column=value_column)
    freq.flags.writeable = False
    accel.flags.writeable = False
    return freq, accel


def _read_spectrum_csv(path: str | Path, kind: str, unit: str, measure: str | None, *,
                      frequency_column: str = "frequency_hz",
                      value_column: str | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Read a vibration survey spectrum and return RMS acceleration per frequency line.

    Parameters
    ----------
    path : str or Path   the CSV file.
    kind : {"amplitude", "psd"}   what the value column holds.
    unit : str   unit of the value column: "m/s2", "g", "mm/s", "m/s" (amplitude) or "g2/Hz",
        "(m/s2)2/Hz" (PSD).
    measure : {"peak", "rms"} or None   for amplitude spectra; a PSD is a mean-square density, so
        ``None`` or "rms".
    frequency_column, value_column : str   column names (case-insensitive); the value column
        defaults to ``accel`` (amplitude) or ``psd`` (PSD).

    Returns
    -------
    (freq_hz, accel_rms_m_s2) : arrays [Hz], [m/s2]
        Strictly increasing frequencies > 0 and the RMS acceleration of each line (for a PSD, the
        RMS in its bin, :func:`psd_to_rms_m_s2`).

    Raises
    ------
    SiteInputError
        Naming the file and the column: missing columns, unknown unit or measure, non-numeric,
        negative or non-finite values, frequencies <= 0 or above 100 kHz, unsorted or repeated
        frequencies, too few rows (or more than 200,000, or a file over 20 MB), a quote left open.

    Plausibility: a spectrum whose overall RMS acceleration exceeds :data:`MAX_RMS_G` (20 g) is
    refused, not warned about: the harvester model would promise power from shock or a unit mix-up.
    The message says when the numbers would be plausible in another unit (g given for m/s2, m/s
    given for mm/s).
    """
    path = Path(path)
    file = str(path)
    if kind not in SPECTRUM_KINDS:
        raise SiteInputError("a spectrum kind of 'amplitude' or 'psd'", file=file, field="spectrum_kind",
                             got=kind)
    value_column = value_column or DEFAULT_VALUE_COLUMN[kind]
    try:
        _, factor = unit_factor(kind, unit)
    except ValueError as exc:
        raise SiteInputError(str(exc), file=file, field=value_column, got=unit) from None
    if kind == "amplitude" and measure not in MEASURES:
        raise SiteInputError("a measure of 'peak' or 'rms' for an amplitude spectrum", file=file,
                             field=value_column, got=measure)
    if kind == "psd" and measure not in (None, "rms"):
        raise SiteInputError("no measure (or 'rms') for a PSD, which is a mean-square density", file=file,
                             field=value_column, got=measure)

    rows = _rows(path)
    header_line, header = rows[0]
    names = [h.lower() for h in header]
    columns = []
    for wanted in (frequency_column, value_column):
        if wanted.lower() not in names:
            raise SiteInputError(f"a column named '{wanted}'", file=file, field=wanted,
                                 got=", ".join(header), line=header_line)
        columns.append(names.index(wanted.lower()))
    data = rows[1:]
    need = 2 if kind == "psd" else 1
    if len(data) < need:
        raise SiteInputError(f"at least {need} data row{'s' if need > 1 else ''}", file=file,
                             field=frequency_column, got=f"{len(data)} rows")

    values = np.empty((len(data), 2))
    for i, (line, row) in enumerate(data):
        for j, (col, name) in enumerate(zip(columns, (frequency_column, value_column), strict=True)):
            cell = row[col] if col < len(row) else ""
            try:
                number = float(cell)
            except ValueError:
                raise SiteInputError("a number", file=file, field=name, got=cell, line=line) from None
            if not math.isfinite(number):
                raise SiteInputError("a finite number", file=file, field=name, got=cell, line=line)
            values[i, j] = number
    freq, raw = values[:, 0], values[:, 1]
    for i, (line, _) in enumerate(data):
        if freq[i] <= 0:
            raise SiteInputError("frequencies > 0 Hz (leave out the 0 Hz line)", file=file,
                                 field=frequency_column, got=freq[i], line=line)
        if freq[i] > MAX_FREQUENCY_HZ:
            raise SiteInputError(f"frequencies up to {MAX_FREQUENCY_HZ:g} Hz", file=file, field=frequency_column,
                                 got=freq[i], line=line)
        if i and freq[i] <= freq[i - 1]:
            raise SiteInputError(f"frequencies increasing, each listed once (after {freq[i - 1]:g} Hz)",
                                 file=file, field=frequency_column, got=freq[i], line=line)
        if raw[i] < 0:
            raise SiteInputError("values >= 0", file=file, field=value_column, got=raw[i], line=line)

    with np.errstate(over="ignore", invalid="ignore"):
        if kind == "psd":
            accel_rms = psd_to_rms_m_s2(raw * factor, bin_widths_hz(freq))
        else:
            accel_rms = np.asarray(accel_to_rms_m_s2(raw, unit, str(measure), freq), dtype=float)
        overall_g = float(np.sqrt(np.sum(accel_rms**2))) / STANDARD_GRAVITY_M_S2
    _check_plausible(accel_rms, overall_g, kind, unit, file, value_column, data)
    return freq, accel_rms


def _check_plausible(accel_rms: np.ndarray, overall_g: float, kind: str, unit: str, file: str, column: str,
                     data: list[tuple[int, list[str]]]) -> None:
    """Refuse a spectrum whose overall RMS acceleration exceeds :data:`MAX_RMS_G`, saying when the
    numbers would be plausible in another unit (g written for m/s2, m/s for mm/s)."""
    if math.isfinite(overall_g) and overall_g <= MAX_RMS_G:
        return
    worst = int(np.nanargmax(np.where(np.isfinite(accel_rms), accel_rms, np.inf)))
    norm = normalise_unit(unit)
    hint = ""
    if norm in ("g", "g2/hz") and overall_g / STANDARD_GRAVITY_M_S2 <= MAX_RMS_G:   # g scales RMS by g_n either way
        hint = f"; the values look like {'m/s2' if kind == 'amplitude' else '(m/s2)2/Hz'}, not {unit}"
    elif norm == "m/s" and overall_g / 1000.0 <= MAX_RMS_G:
        hint = "; the values look like mm/s, not m/s"
    shown = "more than 1e300" if not math.isfinite(overall_g) else f"{overall_g:.3g} g"
    raise SiteInputError(f"an overall RMS acceleration of at most {MAX_RMS_G:g} g "
                         f"({MAX_RMS_G * STANDARD_GRAVITY_M_S2:.0f} m/s2) in {unit}{hint}",
                         file=file, field=column, got=shown, line=data[worst][0])


def spectral_peaks(freq_hz: np.ndarray, accel_rms_m_s2: np.ndarray, *, max_peaks: int = 5,
                   min_share: float = 0.1) -> np.ndarray:
    """Indices of the lines a resonant harvester would most like to be tuned to, best first.

    Method: lines are ranked by a_rms^2 / f, to which the optimum power of a resonant harvester tuned to
    them is proportional (Williams & Yates 1996; Roundy et al. 2003). Of a spectrum with more than
    two lines only local maxima inside the band count. Lines below ``min_share`` of the best are dropped.
    """
    f = np.asarray(freq_hz, dtype=float)
    score = np.asarray(accel_rms_m_s2, dtype=float) ** 2 / f
    idx = np.arange(f.size)
    if f.size > 2:
        left = np.r_[np.inf, score[:-1]]  # the end lines are no peaks: the band edges cut them
        right = np.r_[score[1:], np.inf]
        idx = idx[(score >= left) & (score >= right) & (score > 0)]
    else:
        idx = idx[score > 0]
    if idx.size == 0:
        return idx
    idx = idx[np.argsort(-score[idx], kind="stable")]
    idx = idx[score[idx] >= min_share * score[idx[0]]]
    return idx[:max_peaks]

"""A synthetic weather year: clear sky scaled by a stochastic daily clearness index.

Used when a spot has no weather file, and by the weather-risk work, which draws hundreds of years of
daily clearness at once (:func:`daily_clearness`, vectorised over years).

Method
------
1. Daily clearness index K_T (daily global on the horizontal over daily extraterrestrial on the
   horizontal, H / H0) from the library of first-order Markov transition matrices of Aguiar,
   Collares-Pereira & Conde (1988): the month's mean K̄_T picks one of ten 10-state matrices, each with
   its own K_T range cut into ten equal states; tomorrow's state is drawn from today's row and K_T is
   placed inside the state linearly by where the uniform draw fell in the cumulative row. A month
   whose generated mean misses K̄_T by more than ``tolerance`` is regenerated from the same starting
   day (as the paper suggests); after ``max_tries`` the rest is rescaled onto K̄_T.
2. Daily total H = K_T * H0 (H0 from the daily integral of extraterrestrial irradiance on the
   horizontal, Duffie & Beckman eq. 1.10.3, with pvlib's Spencer declination and extraterrestrial
   normal irradiance).
3. Hours: the day's clear-sky profile (pvlib Ineichen-Perez with the Linke turbidity climatology
   shipped in pvlib, at mid-hour) scaled so the day sums to H, never above ``CLEAR_SKY_CAP`` times
   clear sky (a day asked for more than that keeps the cap and falls short). The shape within a day
   is the clear-sky shape: hour-to-hour cloud flicker is not modelled, the daily energy is.
4. Beam and diffuse from global with the Erbs, Klein & Duffie (1982) diffuse fraction (pvlib), so
   GHI = DHI + DNI cos(zenith) holds hour by hour.
5. Air temperature: the monthly means (interpolated through mid-month and corrected so each month
   keeps its mean) plus a daily swing shaped as two half-cosines, minimum at sunrise and maximum
   2.5 h after solar noon; the swing grows on clear days and shrinks on dull ones
   (swing * clip(0.4 + 0.6 K_T / K̄_T, 0.4, 1.6)), leaving the daily mean unchanged.
6. Wind speed: a constant ``DEFAULT_WIND_SPEED_M_S``.

The transition matrices below are those of Aguiar et al. (1988) as transcribed in an open-source
implementation found in a public code index (not checked against the printed paper). Every row of
that transcription sums to 1 within 0.003. Another copy of the same transcription carries 0.530 in
the matrix for 0.45 < K̄_T <= 0.50, second row, ninth column, making that row sum to 1.53 (an
evident typo); the copy used here has 0.000 there, which makes the row sum 1.000. Rows are
renormalised to sum exactly to 1 (rounding only). Their stationary means fall at the centres of
their K̄_T bins (0.24, 0.33, 0.37, ..., 0.73) and their lag-1 autocorrelations are 0.02-0.39.

References
----------
Aguiar, R.J., Collares-Pereira, M. and Conde, J.P. (1988). Simple procedure for generating
sequences of daily radiation values using a library of Markov transition matrices. Solar Energy
40(3), 269-279.
Erbs, D.G., Klein, S.A. and Duffie, J.A. (1982). Estimation of the diffuse radiation fraction for
hourly, daily and monthly-average global radiation. Solar Energy 28(4), 293-302.
Ineichen, P. and Perez, R. (2002). A new airmass independent formulation for the Linke turbidity
coefficient. Solar Energy 73(3), 151-157.
Duffie, J.A. and Beckman, W.A. (2013). Solar Engineering of Thermal Processes, 4th ed., Wiley,
section 1.10.
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from .timegrid import HOURS_PER_YEAR, SECONDS_PER_HOUR, reference_index

if TYPE_CHECKING:
    from .weather import SyntheticWeatherSpec

DAYS_PER_YEAR = 365
DAYS_IN_MONTH = (31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31)
MONTH_START_DAY = np.concatenate([[0], np.cumsum(DAYS_IN_MONTH)])  # 13 entries, last = 365
DEFAULT_WIND_SPEED_M_S = 1.0
DEFAULT_AIR_TEMP_C = 20.0
CLEAR_SKY_CAP = 1.1
KT_DAILY_CEILING = 0.9  # no daily clearness index above this, even after rescaling [-]

# Upper edges of the K̄_T bins that select a matrix: K̄_T <= 0.30 -> 0, 0.30 < K̄_T <= 0.35 -> 1, ...,
# K̄_T > 0.70 -> 9 (Aguiar et al. 1988).
AGUIAR_KT_BIN_EDGES = np.array([0.30, 0.35, 0.40, 0.45, 0.50, 0.55, 0.60, 0.65, 0.70])
# K_T range of each matrix's ten states (transcription, see the module docstring).
AGUIAR_K_MIN = np.array([0.031, 0.058, 0.051, 0.052, 0.028, 0.053, 0.044, 0.085, 0.010, 0.319])
AGUIAR_K_MAX = np.array([0.705, 0.694, 0.753, 0.753, 0.807, 0.856, 0.818, 0.846, 0.842, 0.865])

# Transition probabilities in thousandths; 10 matrices x 10 rows (today's state) x 10 columns
# (tomorrow's state). Aguiar, Collares-Pereira & Conde (1988).
_AGUIAR_ROWS = (
    # K̄_T <= 0.30
    "229 333 208 042 083 042 042 021 000 000", "167 319 194 139 097 028 042 000 014 000",
    "250 250 091 136 091 046 046 023 068 000", "158 237 158 263 026 053 079 026 000 000",
    "211 053 211 158 053 053 158 105 000 000", "125 125 250 188 063 125 000 125 000 000",
    "040 240 080 120 080 080 120 120 080 040", "000 250 000 125 000 125 125 250 063 063",
    "000 250 000 125 250 000 250 000 000 125", "000 000 000 000 000 000 500 250 000 250",
    # 0.30 < K̄_T <= 0.35
    "000 000 091 000 364 091 182 000 273 000", "118 118 176 118 059 118 176 059 059 000",
    "067 267 067 200 067 000 133 133 000 067", "118 235 000 235 059 176 118 000 059 000",
    "077 154 308 077 154 077 000 077 077 000", "083 000 167 250 083 167 000 083 167 000",
    "222 222 000 111 111 000 111 222 000 000", "091 182 273 000 091 273 000 091 000 000",
    "111 111 111 222 000 000 000 222 111 111", "000 000 000 000 000 000 500 000 000 500",
    # 0.35 < K̄_T <= 0.40
    "206 088 176 176 088 029 176 029 029 000", "120 100 140 160 120 220 100 000 020 020",
    "077 123 185 123 077 139 092 123 061 000", "048 111 095 206 206 190 095 048 000 000",
    "059 137 118 137 098 118 118 157 059 000", "014 097 139 153 125 139 208 056 042 028",
    "073 101 116 145 087 159 203 087 029 000", "019 037 111 056 074 111 185 296 074 037",
    "035 069 035 000 035 103 172 138 379 035", "000 167 167 000 167 000 000 333 000 167",
    # 0.40 < K̄_T <= 0.45
    "167 167 167 000 083 125 000 167 125 000", "117 117 150 117 083 117 200 067 017 017",
    "049 085 134 158 098 110 134 134 061 037", "039 090 141 141 167 141 090 141 039 013",
    "009 139 074 093 194 139 167 093 074 019", "036 018 117 099 144 180 180 117 072 036",
    "000 046 061 061 136 159 273 167 098 000", "016 056 080 128 104 080 160 208 136 032",
    "011 053 021 043 128 096 074 223 277 074", "000 074 037 000 074 074 074 074 333 259",
    # 0.45 < K̄_T <= 0.50 (row 2, column 9: 000; one transcription has 530, a typo)
    "120 200 160 120 120 120 080 000 040 040", "100 080 120 140 140 200 180 040 000 000",
    "046 114 068 171 125 171 080 159 057 011", "015 061 084 099 191 153 153 115 115 015",
    "024 030 098 098 165 195 195 140 043 012", "015 026 062 124 144 170 170 222 062 005",
    "000 013 045 108 112 175 188 224 117 018", "008 023 054 066 093 125 191 253 183 004",
    "006 022 061 033 067 083 139 222 322 044", "000 046 091 091 046 046 136 091 273 182",
    # 0.50 < K̄_T <= 0.55
    "250 179 107 107 143 071 107 036 000 000", "133 022 089 111 156 178 111 133 067 000",
    "064 048 143 048 175 143 206 095 079 000", "000 022 078 111 156 156 244 167 044 022",
    "016 027 037 069 160 219 230 160 075 005", "013 025 030 093 144 202 215 219 055 004",
    "006 041 035 064 090 180 337 192 049 006", "012 021 029 035 132 123 184 371 082 012",
    "008 016 016 024 071 103 159 270 309 024", "000 000 000 000 059 000 059 294 412 176",
    # 0.55 < K̄_T <= 0.60
    "217 087 000 174 130 087 087 130 087 000", "026 079 132 079 026 158 158 132 158 053",
    "020 020 020 040 160 180 160 200 100 100", "025 013 038 076 076 139 139 266 215 013",
    "030 030 050 020 091 131 162 283 131 071", "006 006 013 057 057 121 204 287 185 064",
    "004 026 037 030 093 107 193 307 167 037", "011 009 014 042 041 071 152 418 203 041",
    "012 022 022 038 019 050 113 281 360 084", "008 024 039 039 063 039 118 118 284 268",
    # 0.60 < K̄_T <= 0.65
    "067 133 133 067 067 200 133 133 067 000", "118 059 059 059 059 118 118 235 118 059",
    "000 024 024 049 146 073 195 244 195 049", "026 000 026 026 053 184 263 184 237 000",
    "014 000 042 056 069 097 139 306 278 000", "009 009 052 069 052 112 215 285 138 060",
    "009 009 026 017 094 099 232 283 210 021", "010 014 016 019 027 062 163 467 202 019",
    "004 007 031 017 033 050 086 252 469 050", "000 000 015 046 031 046 077 123 446 215",
    # 0.65 < K̄_T <= 0.70
    "000 000 000 000 000 000 000 000 1000 000", "000 000 000 000 000 000 000 000 1000 000",
    "000 000 000 000 000 000 250 250 500 000", "000 000 000 000 250 000 000 375 250 125",
    "000 000 000 083 000 167 167 250 333 000", "000 000 042 042 042 083 083 292 292 125",
    "000 000 032 000 000 032 129 387 355 065", "000 000 000 038 038 075 047 340 415 047",
    "004 004 007 007 011 030 052 141 654 089", "000 000 000 000 061 061 030 030 349 470",
    # K̄_T > 0.70
    "000 000 000 000 000 000 000 000 1000 000", "100 100 100 100 100 100 100 100 100 100",
    "000 000 000 250 000 000 000 500 250 000", "000 000 143 143 000 143 143 429 000 000",
    "000 000 000 200 000 000 200 400 200 000", "000 000 000 000 000 000 222 444 333 000",
    "000 000 000 000 080 080 080 480 240 040", "000 000 027 009 027 018 135 523 252 009",
    "000 000 000 022 000 043 043 326 511 054", "000 000 000 143 000 000 000 143 714 000",
)

#: The library as transcribed: shape (10 matrices, 10 from-states, 10 to-states), rows sum to 1 +- 0.003.
AGUIAR_MATRICES = np.array(
    [[float(v) / 1000.0 for v in row.split()] for row in _AGUIAR_ROWS]).reshape(10, 10, 10)
_CUMULATIVE = np.cumsum(AGUIAR_MATRICES / AGUIAR_MATRICES.sum(axis=2, keepdims=True), axis=2)
_CUMULATIVE[:, :, -1] = 1.0


def _stationary_means() -> np.ndarray:
    """Long-run mean K_T of each matrix's chain (state centres weighted by the stationary distribution)."""
    means = np.empty(10)
    for i in range(10):
        matrix = AGUIAR_MATRICES[i] / AGUIAR_MATRICES[i].sum(axis=1, keepdims=True)
        values, vectors = np.linalg.eig(matrix.T)
        weights = np.real(vectors[:, np.argmin(np.abs(values - 1.0))])
        weights /= weights.sum()
        step = (AGUIAR_K_MAX[i] - AGUIAR_K_MIN[i]) / 10.0
        means[i] = float(weights @ (AGUIAR_K_MIN[i] + step * (np.arange(10) + 0.5)))
    return means


#: Long-run mean daily K_T of each matrix; a month whose target lies further than
#: ``_UNREACHABLE`` from it is rescaled at once instead of regenerated.
AGUIAR_STATIONARY_MEAN = _stationary_means()
_UNREACHABLE = 0.07

#: Invented defaults: a temperate inland spot of the northern mid-latitudes.
DEFAULT_MONTHLY_CLEARNESS = (0.38, 0.43, 0.47, 0.49, 0.50, 0.52, 0.54, 0.53, 0.50, 0.44, 0.38, 0.35)
DEFAULT_MONTHLY_TEMP_C = (0.5, 1.5, 5.0, 9.0, 13.5, 17.0, 19.0, 18.5, 14.5, 10.0, 5.0, 1.5)


def matrix_for(monthly_kt: float) -> int:
    """Index (0..9) of the Aguiar et al. (1988) matrix for a month's mean clearness index ``monthly_kt``."""
    return int(np.searchsorted(AGUIAR_KT_BIN_EDGES, monthly_kt, side="left"))


def _markov_run(which: int, start_kt: np.ndarray, n_days: int, rng: np.random.Generator) -> np.ndarray:
    """``n_days`` daily K_T per row, chained from ``start_kt`` (shape (n,)) with matrix ``which``."""
    cum = _CUMULATIVE[which]
    k_min = AGUIAR_K_MIN[which]
    step = (AGUIAR_K_MAX[which] - k_min) / 10.0
    n = start_kt.shape[0]
    draws = rng.random((n, n_days))
    out = np.empty((n, n_days))
    rows = np.arange(n)
    kt = start_kt
    for day in range(n_days):
        state = np.clip(np.floor((kt - k_min) / step), 0, 9).astype(np.intp)
        row_cum = cum[state]  # (n, 10)
        u = draws[:, day]
        nxt = np.minimum((row_cum <= u[:, None]).sum(axis=1), 9)
        upper = row_cum[rows, nxt]
        lower = np.where(nxt > 0, row_cum[rows, np.maximum(nxt - 1, 0)], 0.0)
        width = upper - lower
        frac = np.clip(np.where(width > 0, (u - lower) / np.where(width > 0, width, 1.0), 0.5), 0.0, 1.0)
        kt = k_min + (nxt + frac) * step
        out[:, day] = kt
    return out


def _rescale_to_mean(block: np.ndarray, target: float) -> np.ndarray:
    """Multiply each row so its mean is ``target``, keeping values in (0, KT_DAILY_CEILING]."""
    out = block.copy()
    for _ in range(30):
        means = out.mean(axis=1, keepdims=True)
        out = np.clip(out * (target / means), 1e-4, KT_DAILY_CEILING)
        if np.all(np.abs(out.mean(axis=1) - target) < 1e-4):
            break
    return out


def daily_clearness(
    monthly_clearness: Sequence[float],
    n_years: int = 1,
    seed: int | np.random.Generator | None = 1,
    *,
    tolerance: float = 0.02,
    max_tries: int = 40,
) -> np.ndarray:
    """Daily clearness index K_T for ``n_years`` independent years, vectorised over years.

    Method: Aguiar, Collares-Pereira & Conde (1988) Markov transition matrices (see the module
    docstring). The chain runs through the year month by month, each month with the matrix of its
    own mean; the first day starts from January's mean. Each month whose generated mean misses
    the target by more than ``tolerance`` is regenerated from the same starting day, up to
    ``max_tries`` times; what still misses is rescaled onto the target (this happens for targets
    the library cannot reach, below about 0.2 or above about 0.75).

    Parameters
    ----------
    monthly_clearness : sequence of 12 floats
        Monthly mean of the daily clearness index K̄_T, January..December [-], each in (0, 0.85].
    n_years : int
        Number of independent years (rows) [-], >= 1.
    seed : int or numpy.random.Generator or None
        Seed of numpy's default generator (or a generator to draw from); the same seed gives the
        same years.
    tolerance : float
        Largest accepted difference between a month's generated mean and its target [-].
    max_tries : int
        Regenerations per month before rescaling.

    Returns
    -------
    numpy.ndarray
        Shape (n_years, 365): daily K_T [-] of a non-leap year, in (0, 0.9].

    References
    ----------
    Aguiar, R.J., Collares-Pereira, M. and Conde, J.P. (1988). Solar Energy 40(3), 269-279.
    """
    targets = np.asarray(monthly_clearness, dtype=float)
    if targets.shape != (12,) or not np.all(np.isfinite(targets)):
        raise ValueError(f"monthly_clearness must be 12 finite numbers, got shape {targets.shape}")
    if np.any(targets <= 0.0) or np.any(targets > 0.85):
        raise ValueError("monthly_clearness values must lie in (0, 0.85]")
    if int(n_years) < 1:
        raise ValueError(f"n_years must be >= 1, got {n_years}")
    n_years = int(n_years)
    rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)
    out = np.empty((n_years, DAYS_PER_YEAR))
    previous = np.full(n_years, targets[0])
    for month in range(12):
        target = float(targets[month])
        which = matrix_for(target)
        first, last = int(MONTH_START_DAY[month]), int(MONTH_START_DAY[month + 1])
        n_days = last - first
        todo = np.arange(n_years)
        tries = max_tries if abs(target - AGUIAR_STATIONARY_MEAN[which]) <= _UNREACHABLE else 1
        for _ in range(max(tries, 1)):
            block = _markov_run(which, previous[todo], n_days, rng)
            out[todo, first:last] = block
            todo = todo[np.abs(block.mean(axis=1) - target) > tolerance]
            if todo.size == 0:
                break
        if todo.size:
            out[todo, first:last] = _rescale_to_mean(out[todo, first:last], target)
        previous = out[:, last - 1]
    return out


def daily_extraterrestrial_horizontal_j_m2(
    latitude_deg: float | np.ndarray,
    declination_deg: float | np.ndarray,
    dni_extra_w_m2: float | np.ndarray,
) -> np.ndarray:
    """Daily extraterrestrial irradiation on a horizontal surface, H0.

    Method: H0 = (86400 / pi) G_on [cos(phi) cos(delta) sin(ws) + ws sin(phi) sin(delta)], with the
    sunset hour angle ws = arccos(-tan(phi) tan(delta)) in radians (0 in polar night, pi in polar
    day).

    Parameters
    ----------
    latitude_deg : float or array
        Latitude phi [deg], north positive, -90..90.
    declination_deg : float or array
        Solar declination delta [deg].
    dni_extra_w_m2 : float or array
        Extraterrestrial normal irradiance of the day G_on [W/m2].

    Returns
    -------
    numpy.ndarray
        H0 [J/m2], >= 0.

    References
    ----------
    Duffie, J.A. and Beckman, W.A. (2013). Solar Engineering of Thermal Processes, 4th ed., Wiley,
    eq. 1.10.3.
    """
    phi = np.radians(np.asarray(latitude_deg, dtype=float))
    delta = np.radians(np.asarray(declination_deg, dtype=float))
    ws = np.arccos(np.clip(-np.tan(phi) * np.tan(delta), -1.0, 1.0))
    h0 = (86400.0 / np.pi) * np.asarray(dni_extra_w_m2, dtype=float) * (
        np.cos(phi) * np.cos(delta) * np.sin(ws) + ws * np.sin(phi) * np.sin(delta))
    return np.maximum(h0, 0.0)


def hourly_ghi_from_daily(
    daily_kt: np.ndarray,
    daily_h0_j_m2: np.ndarray,
    clear_sky_ghi_w_m2: np.ndarray,
    cap: float = CLEAR_SKY_CAP,
) -> np.ndarray:
    """Hourly global horizontal irradiance shaped like clear sky, summing to K_T * H0 each day.

    Method: G_h = r_d * G_cs,h with r_d = min(K_T H0 / H_cs, cap), H_cs the day's clear-sky total.

    Parameters
    ----------
    daily_kt : array, shape (365,)
        Daily clearness index [-].
    daily_h0_j_m2 : array, shape (365,)
        Daily extraterrestrial irradiation on the horizontal [J/m2].
    clear_sky_ghi_w_m2 : array, shape (365, 24)
        Hour-mean clear-sky global horizontal irradiance [W/m2].
    cap : float
        Largest ratio to clear sky [-].

    Returns
    -------
    numpy.ndarray
        Shape (365, 24): GHI [W/m2], 0 <= GHI <= cap * clear sky.
    """
    clear = np.maximum(np.asarray(clear_sky_ghi_w_m2, dtype=float), 0.0)
    h_cs = clear.sum(axis=1) * SECONDS_PER_HOUR
    wanted = np.asarray(daily_kt, dtype=float) * np.asarray(daily_h0_j_m2, dtype=float)
    ratio = np.where(h_cs > 0.0, wanted / np.where(h_cs > 0.0, h_cs, 1.0), 0.0)
    ratio = np.clip(ratio, 0.0, cap)
    return ratio[:, None] * clear


def diurnal_temperature_shape(hour_h: np.ndarray, min_at_h: np.ndarray, max_at_h: np.ndarray) -> np.ndarray:
    """Dimensionless daily temperature wave, -1 at ``min_at_h`` and +1 at ``max_at_h``.

    Method: a rising half-cosine from the minimum to the maximum and a falling half-cosine from the
    maximum to the next day's minimum (same time next day).

    Parameters
    ----------
    hour_h : array, shape (24,)
        Clock hours of the samples [h], 0..24.
    min_at_h, max_at_h : array, shape (n_days, 1)
        Clock hour of the minimum (sunrise) and the maximum [h], min_at_h < max_at_h < min_at_h + 24.

    Returns
    -------
    numpy.ndarray
        Shape (n_days, 24), values in [-1, 1].
    """
    h = np.asarray(hour_h, dtype=float)[None, :]
    since_min = np.mod(h - min_at_h, 24.0)
    rise = max_at_h - min_at_h
    fall = 24.0 - rise
    return np.where(since_min < rise, -np.cos(np.pi * since_min / rise),
                    np.cos(np.pi * (since_min - rise) / fall))


def _daily_mean_temperature_c(monthly_temp_c: np.ndarray) -> np.ndarray:
    """365 daily means through the mid-month values, shifted so each month keeps its mean."""
    mid = MONTH_START_DAY[:12] + np.asarray(DAYS_IN_MONTH) / 2.0
    days = np.arange(DAYS_PER_YEAR) + 0.5
    xs = np.concatenate([mid - DAYS_PER_YEAR, mid, mid + DAYS_PER_YEAR])
    ys = np.tile(monthly_temp_c, 3)
    daily = np.interp(days, xs, ys)
    for m in range(12):
        sl = slice(int(MONTH_START_DAY[m]), int(MONTH_START_DAY[m + 1]))
        daily[sl] += monthly_temp_c[m] - daily[sl].mean()
    return daily


def seasonal_inputs(
    spec: SyntheticWeatherSpec, latitude_deg: float,
) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Monthly clearness and temperature of ``spec``; defaults move by six months south of the equator.

    Returns (monthly_clearness [-], monthly_temp_c [degC], notes).
    """
    clearness = np.asarray(spec.monthly_clearness, dtype=float)
    temps = np.asarray(spec.monthly_temp_c, dtype=float)
    notes: list[str] = []
    if latitude_deg < 0.0:
        if "monthly_clearness" not in spec.model_fields_set:
            clearness = np.roll(clearness, 6)
            notes.append("default monthly clearness shifted by six months for the southern hemisphere")
        if "monthly_temp_c" not in spec.model_fields_set:
            temps = np.roll(temps, 6)
            notes.append("default monthly temperatures shifted by six months for the southern hemisphere")
    return clearness, temps, notes


def clear_sky_mid_hour(
    index: pd.DatetimeIndex, latitude_deg: float, longitude_deg: float, altitude_m: float,
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Solar position and Ineichen-Perez clear sky at the middle of each hour of ``index``.

    Linke turbidity from pvlib's bundled monthly climatology (``lookup_linke_turbidity``, offline).
    Returns (solar position, clear sky with ``ghi``, ``dni``, ``dhi`` [W/m2]), both indexed by ``index``.
    """
    import pvlib  # here, not at the top: only a synthetic year needs it from this module

    mid = index + pd.Timedelta(minutes=30)
    pressure_pa = pvlib.atmosphere.alt2pres(altitude_m)
    pos = pvlib.solarposition.get_solarposition(mid, latitude_deg, longitude_deg, altitude=altitude_m,
                                                pressure=pressure_pa)
    airmass = pvlib.atmosphere.get_absolute_airmass(
        pvlib.atmosphere.get_relative_airmass(pos["apparent_zenith"]), pressure_pa)
    with warnings.catch_warnings():  # pvlib 0.16 calls a pandas attribute deprecated in pandas 3
        warnings.filterwarnings("ignore", message=".*dayofyear is deprecated")
        linke = pvlib.clearsky.lookup_linke_turbidity(mid, latitude_deg, longitude_deg)
    dni_extra = pvlib.irradiance.get_extra_radiation(mid.day_of_year.to_numpy())
    clear = pvlib.clearsky.ineichen(pos["apparent_zenith"], airmass, linke, altitude=altitude_m,
                                    dni_extra=dni_extra)
    clear = clear.fillna(0.0).clip(lower=0.0)
    pos.index = index
    clear.index = index
    return pos, clear


def synthetic_year(
    spec: SyntheticWeatherSpec,
    *,
    latitude_deg: float,
    longitude_deg: float,
    altitude_m: float,
    utc_offset_h: float,
) -> pd.DataFrame:
    """A synthetic reference year of hourly weather for a place (see the module docstring).

    Parameters
    ----------
    spec : SyntheticWeatherSpec
        Monthly clearness [-], monthly mean air temperature [degC], daily swing [degC], seed.
    latitude_deg, longitude_deg : float
        Place [deg north, deg east].
    altitude_m : float
        Altitude above sea level [m].
    utc_offset_h : float
        Local standard time offset from UTC [h].

    Returns
    -------
    pandas.DataFrame
        8760 rows on :func:`siteharvest.timegrid.reference_index`; columns ``ghi_w_m2``,
        ``dni_w_m2``, ``dhi_w_m2`` [W/m2], ``temp_air_c`` [degC], ``wind_speed_m_s`` [m/s].
        The same spec and place always give the same frame.

    References
    ----------
    See the module docstring.
    """
    import pvlib

    clearness, temps, _ = seasonal_inputs(spec, latitude_deg)
    kt = daily_clearness(clearness, 1, seed=spec.seed)[0]
    index = reference_index(utc_offset_h)
    pos, clear = clear_sky_mid_hour(index, latitude_deg, longitude_deg, altitude_m)

    doy = np.arange(1, DAYS_PER_YEAR + 1)
    declination_deg = np.degrees(pvlib.solarposition.declination_spencer71(doy))
    h0 = daily_extraterrestrial_horizontal_j_m2(latitude_deg, declination_deg,
                                                pvlib.irradiance.get_extra_radiation(doy))
    ghi = hourly_ghi_from_daily(kt, h0, clear["ghi"].to_numpy().reshape(DAYS_PER_YEAR, 24)).ravel()
    mid_doy = (index + pd.Timedelta(minutes=30)).day_of_year.to_numpy()
    split = pvlib.irradiance.erbs(ghi, pos["zenith"].to_numpy(), mid_doy)

    # Air temperature: sunrise and the afternoon maximum in local standard clock time.
    month_of_day = np.repeat(np.arange(12), DAYS_IN_MONTH)
    eot_min = pvlib.solarposition.equation_of_time_spencer71(doy)
    solar_noon_h = 12.0 + (15.0 * utc_offset_h - longitude_deg) / 15.0 - eot_min / 60.0
    phi = np.radians(latitude_deg)
    ws_deg = np.degrees(np.arccos(np.clip(-np.tan(phi) * np.tan(np.radians(declination_deg)), -1.0, 1.0)))
    sunrise_h = solar_noon_h - np.clip(ws_deg, 45.0, 135.0) / 15.0
    warmest_h = solar_noon_h + 2.5
    shape = diurnal_temperature_shape(np.arange(24) + 0.5, sunrise_h[:, None], warmest_h[:, None])
    shape -= shape.mean(axis=1, keepdims=True)
    swing = spec.daily_temp_swing_c * np.clip(0.4 + 0.6 * kt / clearness[month_of_day], 0.4, 1.6)
    temp = _daily_mean_temperature_c(temps)[:, None] + 0.5 * swing[:, None] * shape

    frame = pd.DataFrame(
        {
            "ghi_w_m2": ghi,
            "dni_w_m2": np.asarray(split["dni"], dtype=float),
            "dhi_w_m2": np.asarray(split["dhi"], dtype=float),
            "temp_air_c": temp.ravel(),
            "wind_speed_m_s": np.full(HOURS_PER_YEAR, DEFAULT_WIND_SPEED_M_S),
        },
        index=index,
    )
    return frame.astype(float)

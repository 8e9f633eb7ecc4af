"""Metrics of a simulated year, as defined in the design notes.

- deficit day: a local calendar day of the steady-state year (a warm-up year is simulated first) on
  which the node was off or could not finish a scheduled task because the store was at its cut-off
  (:data:`DEFICIT_DAY`, the one wording the README and the report use too);
- first wake: hours from installation (store empty) until the node first runs;
- longest outage: longest run of hours with the node off after its first wake;
- lowest state of charge: lowest usable fraction of the store over the steady-state year;
- monthly margin: energy into the store divided by the energy the node drew, per month;
- autonomy: days of mean demand a full store serves with no harvest (IEEE 1562 days of autonomy);
- backup cell life: years until a primary cell covering the unmet energy is exhausted.
"""

from __future__ import annotations

import numpy as np

from .timegrid import HOURS_PER_YEAR, SECONDS_PER_HOUR, month_of_hour

J_PER_WH = 3600.0
#: What a deficit day is, in the words every front end uses.
DEFICIT_DAY = ("a local calendar day of the steady-state year (a warm-up year is simulated first) on which the node "
               "was off or could not finish a scheduled task because the store was at its cut-off")
VERDICTS = (
    (0, "self-sufficient"),
    (5, "brief gaps"),
    (60, "seasonal gaps"),
)
NEVER_STARTS = "never starts"
INSUFFICIENT = "insufficient"


def dark_hours(on: np.ndarray, short: np.ndarray) -> np.ndarray:
    """Hours in which some scheduled work could not run: the node was off, or ran short."""
    return ~np.asarray(on, dtype=bool) | np.asarray(short, dtype=bool)


def deficit_day_mask(off_or_short_hours: np.ndarray) -> np.ndarray:
    """Deficit days (…, 365): days with at least one hour in which the node was off or ran short, from
    the hourly flags of :func:`dark_hours` (…, 8760)."""
    dark = np.asarray(off_or_short_hours, dtype=bool)
    return dark.reshape(*dark.shape[:-1], 365, 24).any(axis=-1)


def deficit_days(off_or_short_hours: np.ndarray) -> np.ndarray:
    """Number of deficit days per configuration, from the hourly flags of :func:`dark_hours` (…, 8760)."""
    return deficit_day_mask(off_or_short_hours).sum(axis=-1)


def first_wake_hours(on: np.ndarray) -> np.ndarray:
    """Hours until the node first runs (…,), NaN where it never does, from hourly on-flags (…, H)."""
    on = np.asarray(on, dtype=bool)
    return np.where(on.any(axis=-1), on.argmax(axis=-1), np.nan)


def longest_run(flags: np.ndarray) -> np.ndarray:
    """Longest run of consecutive True values along the last axis (…,)."""
    flags = np.asarray(flags, dtype=bool)
    flat = flags.reshape(-1, flags.shape[-1])
    out = np.zeros(flat.shape[0], dtype=int)
    for i, row in enumerate(flat):
        padded = np.concatenate(([0], row.view(np.int8), [0]))
        edges = np.flatnonzero(np.diff(padded))
        if edges.size:
            out[i] = int((edges[1::2] - edges[::2]).max())
    return out.reshape(flags.shape[:-1])


def longest_outage_hours(on: np.ndarray) -> np.ndarray:
    """Longest run of hours off after the first wake (…,); 0 where the node never wakes."""
    on = np.asarray(on, dtype=bool)
    after = np.cumsum(on, axis=-1) > 0
    return longest_run(~on & after)


def monthly_sum(hourly: np.ndarray) -> np.ndarray:
    """Sum of hourly values (…, 8760) by calendar month (…, 12)."""
    hourly = np.asarray(hourly, dtype=float)
    months = month_of_hour() - 1
    out = np.zeros((*hourly.shape[:-1], 12))
    for m in range(12):
        out[..., m] = hourly[..., months == m].sum(axis=-1)
    return out


def monthly_energy_wh(power_w: np.ndarray) -> np.ndarray:
    """Energy per month [Wh] from hourly mean power [W]."""
    return monthly_sum(power_w)  # 1 h steps: W x 1 h = Wh


def annual_demand_wh(demand_j: np.ndarray) -> float:
    """Energy the node draws over the year [Wh] from hourly energy [J]."""
    return float(np.sum(demand_j) / J_PER_WH)


def monthly_demand_wh(demand_j: np.ndarray) -> np.ndarray:
    """Energy the node draws per month [Wh] (…, 12) from hourly energy [J] (…, 8760)."""
    return monthly_sum(demand_j) / J_PER_WH


def monthly_margin(into_store_w: np.ndarray, demand_j: np.ndarray) -> np.ndarray:
    """Energy into the store over energy the node drew, per month [-]."""
    return monthly_energy_wh(into_store_w) / np.maximum(monthly_demand_wh(demand_j), 1e-30)


def worst_month(into_store_w: np.ndarray, demand_j: np.ndarray) -> int:
    """Month (1..12) with the lowest margin."""
    return int(np.argmin(monthly_margin(into_store_w, demand_j))) + 1


def autonomy_days(usable_energy_j: float, mean_demand_w: float, leak_w: float = 0.0) -> float:
    """Days a full store carries the mean demand with no harvest: usable / (daily demand + daily leak)."""
    daily = (mean_demand_w + leak_w) * 24 * SECONDS_PER_HOUR
    return float(usable_energy_j / daily) if daily > 0 else float("inf")


def verdict(deficit: int, first_wake: float) -> str:
    """Plain words for a source's year."""
    if not np.isfinite(first_wake):
        return NEVER_STARTS
    for limit, words in VERDICTS:
        if deficit <= limit:
            return words
    return INSUFFICIENT


assert HOURS_PER_YEAR == 365 * 24

"""The one simulation kernel: hourly energy balance of many configurations at once.

Arrays are shaped (configurations, hours). Each hour, for every configuration:

1. the conditioned harvest (the cold-start figure while the store sits below its cold-start
   level) serves the node's demand first, if the node is on;
2. what demand is left is drawn from the store down to its cut-off; what cannot be drawn is
   unmet and the node switches off (undervoltage lockout);
3. the surplus harvest charges the store, scaled by the charge efficiency, where charging is
   allowed (temperature window), up to full; the rest is spilled;
4. leakage ``a*e + b*sqrt(e) + c`` is taken from the store, where ``c`` (the converter's
   quiescent draw) applies only once the store is past its cold-start level: while cold-starting
   the converter runs from its input;
5. a node that is off switches on once the store reaches its turn-on level.

Configurations flagged ``always_on`` never switch off: their unmet energy is what a backup cell
would have to supply. The loop is compiled (numba) and runs over configurations and hours; the
arrays of all configurations go in and come out together, so a sizing sweep or a set of
weather years is one call.
Energy balance, per configuration and exactly (to rounding):
``harvest = served_direct + to_store + charge_loss + spilled`` and
``e_end - e_start = to_store - drawn - leaked``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numba import njit

UNMET_TOLERANCE_J = 1e-12


@dataclass(frozen=True)
class StoreArrays:
    """Store levels per configuration, each shape (C,): energies [J], leakage per hour, efficiency."""

    max_j: np.ndarray
    cutoff_j: np.ndarray
    turn_on_j: np.ndarray
    cold_start_j: np.ndarray
    leak_fraction_per_h: np.ndarray
    leak_sqrt_j_per_h: np.ndarray
    leak_const_j_per_h: np.ndarray
    charge_efficiency: np.ndarray

    @classmethod
    def stack(cls, levels: list) -> StoreArrays:
        """From a list of :class:`siteharvest.store.StoreLevels` (one per configuration)."""
        names = cls.__dataclass_fields__
        return cls(**{n: np.array([getattr(lv, n) for lv in levels], dtype=float) for n in names})


@dataclass
class KernelResult:
    """What the kernel recorded. Hourly arrays are (C, H); totals are (C,) [J].

    ``on``: node on during the hour; ``short``: some demand of that hour went unmet.
    Hourly energies (``energy_j`` at the end of each hour, ``served_j``, ``unmet_j``) are present
    only when the kernel ran with ``hourly=True``.
    """

    on: np.ndarray
    short: np.ndarray
    min_energy_j: np.ndarray
    final_energy_j: np.ndarray
    totals: dict[str, np.ndarray]
    energy_j: np.ndarray | None = None
    served_j: np.ndarray | None = None
    unmet_j: np.ndarray | None = None


_TOTAL_KEYS = ("harvest", "direct", "drawn", "unmet", "to_store", "charge_loss", "spilled", "leaked")


def _grid(x: np.ndarray | float | bool, n_conf: int, n_hours: int, dtype: type = float) -> np.ndarray:
    """(C, H) view of an input given as (H,), (1, H) or (C, H)."""
    arr = np.asarray(x, dtype=dtype)
    if arr.ndim == 1:
        arr = arr[None, :]
    if arr.shape[-1] != n_hours:
        raise ValueError(f"expected {n_hours} hours, got {arr.shape[-1]}")
    return np.broadcast_to(arr, (n_conf, n_hours))


@njit(cache=True, nogil=True)
def _run(h_run, h_cold, dem, allowed, e0, on0, forced, cut, full, turn_on, cold_lvl, eff,
         leak_a, leak_b, leak_c, min_from, hourly, on_rec, short_rec, e_min, e_end, totals,
         e_rec, served_rec, unmet_rec):  # pragma: no cover - compiled
    n_conf, n_hours = h_run.shape
    for k in range(n_conf):
        e = e0[k]
        on = on0[k] or forced[k]
        lowest = np.inf
        t_h = t_dir = t_draw = t_unmet = t_store = t_loss = t_spill = t_leak = 0.0
        for t in range(n_hours):
            h = h_cold[k, t] if e < cold_lvl[k] else h_run[k, t]
            d = dem[k, t] if on else 0.0
            direct = min(h, d)
            need = d - direct
            draw = min(need, max(e - cut[k], 0.0))
            unmet = need - draw
            e -= draw
            surplus = h - direct
            offer = surplus * eff[k] if allowed[k, t] else 0.0
            stored = min(offer, full[k] - e)
            if stored < 0.0:
                stored = 0.0
            e += stored
            leak = leak_a[k] * e
            if e >= cold_lvl[k]:
                leak += leak_c[k]
            if leak_b[k] > 0.0:
                leak += leak_b[k] * np.sqrt(e)
            if leak > e:
                leak = e
            e -= leak
            short = unmet > 1e-12
            on_rec[k, t] = on
            short_rec[k, t] = short
            if on:
                on = not short
            else:
                on = e >= turn_on[k]
            if forced[k]:
                on = True
            if t >= min_from and e < lowest:
                lowest = e
            loss = stored / eff[k] - stored
            t_h += h
            t_dir += direct
            t_draw += draw
            t_unmet += unmet
            t_store += stored
            t_loss += loss
            t_spill += surplus - stored - loss
            t_leak += leak
            if hourly:
                e_rec[k, t] = e
                served_rec[k, t] = direct + draw
                unmet_rec[k, t] = unmet
        e_min[k] = lowest
        e_end[k] = e
        totals[0, k] = t_h
        totals[1, k] = t_dir
        totals[2, k] = t_draw
        totals[3, k] = t_unmet
        totals[4, k] = t_store
        totals[5, k] = t_loss
        totals[6, k] = t_spill
        totals[7, k] = t_leak


def simulate(
    harvest_j: np.ndarray,
    demand_j: np.ndarray,
    store: StoreArrays,
    *,
    cold_harvest_j: np.ndarray | None = None,
    charge_allowed: np.ndarray | None = None,
    initial_energy_j: np.ndarray | float = 0.0,
    initially_on: np.ndarray | bool = False,
    always_on: np.ndarray | bool = False,
    min_from: int = 0,
    hourly: bool = False,
) -> KernelResult:
    """Run the hourly energy balance for C configurations over H hours.

    Parameters
    ----------
    harvest_j : array (C, H) or (H,) [J]
        Energy delivered to the store terminals in each hour with the converter running.
    demand_j : array (C, H) or (H,) [J]
        Energy the node draws from the store in each hour while on.
    store : StoreArrays
        Levels and leakage of each configuration's store, each (C,).
    cold_harvest_j : array (C, H) or (H,) [J], optional
        Energy delivered while the store is below its cold-start level (default: ``harvest_j``).
    charge_allowed : bool array (C, H) or (H,), optional
        Hours in which the store may charge (default: all).
    initial_energy_j : float or (C,) [J]
        Stored energy at the first hour (0: empty).
    initially_on, always_on : bool or (C,)
        Node state at the start; configurations whose node never switches off.
    min_from : int
        First hour counted in ``min_energy_j`` (e.g. the start of the steady-state year).
    hourly : bool
        Also record hourly stored energy, served and unmet energy.

    Returns
    -------
    KernelResult
    """
    harvest = np.asarray(harvest_j, dtype=float)
    n_conf = harvest.shape[0] if harvest.ndim == 2 else store.max_j.shape[0]
    n_hours = harvest.shape[-1]
    h_run = _grid(harvest, n_conf, n_hours)
    h_cold = h_run if cold_harvest_j is None else _grid(cold_harvest_j, n_conf, n_hours)
    dem = _grid(demand_j, n_conf, n_hours)
    allowed = _grid(True if charge_allowed is None else charge_allowed, n_conf, n_hours, dtype=np.bool_) \
        if charge_allowed is not None else np.ones((1, 1), dtype=np.bool_)
    if charge_allowed is None:
        allowed = np.broadcast_to(allowed, (n_conf, n_hours))

    def per_conf(x: np.ndarray | float | bool, dtype: type = float) -> np.ndarray:
        return np.ascontiguousarray(np.broadcast_to(np.asarray(x, dtype=dtype), (n_conf,)))

    on_rec = np.empty((n_conf, n_hours), dtype=np.bool_)
    short_rec = np.empty((n_conf, n_hours), dtype=np.bool_)
    shape = (n_conf, n_hours) if hourly else (0, 0)
    e_rec, served_rec, unmet_rec = np.empty(shape), np.empty(shape), np.empty(shape)
    e_min, e_end = np.empty(n_conf), np.empty(n_conf)
    totals = np.empty((len(_TOTAL_KEYS), n_conf))
    e0 = per_conf(initial_energy_j)
    _run(h_run, h_cold, dem, allowed, e0, per_conf(initially_on, np.bool_),
         per_conf(always_on, np.bool_), per_conf(store.cutoff_j), per_conf(store.max_j),
         per_conf(store.turn_on_j), per_conf(store.cold_start_j), per_conf(store.charge_efficiency),
         per_conf(store.leak_fraction_per_h), per_conf(store.leak_sqrt_j_per_h),
         per_conf(store.leak_const_j_per_h), int(min_from), bool(hourly), on_rec, short_rec, e_min,
         e_end, totals, e_rec, served_rec, unmet_rec)
    tot = dict(zip(_TOTAL_KEYS, totals, strict=True))
    tot["start"] = e0.copy()
    result = KernelResult(on=on_rec, short=short_rec, min_energy_j=e_min, final_energy_j=e_end, totals=tot)
    if hourly:
        result.energy_j, result.served_j, result.unmet_j = e_rec, served_rec, unmet_rec
    return result

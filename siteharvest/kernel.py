"""The one simulation kernel: hourly energy balance of many configurations at once.

Arrays are shaped (configurations, hours). Each hour, for every configuration:

1. the conditioned harvest (the cold-start figure while the store sits below its cold-start
   level) serves the node's demand first, if the node is on;
2. what demand is left is drawn from the store down to its cut-off; what cannot be drawn is
   unmet and the node switches off (undervoltage lockout);
3. the surplus harvest charges the store, scaled by the charge efficiency, where charging is
   allowed (temperature window), up to full; the rest is spilled;
4. leakage ``s_t (a*e + b*sqrt(e)) + c`` is taken from the store, where ``s_t`` is the hour's
   leakage factor (the store's temperature) and ``c`` (the converter's quiescent draw) applies only
   once the store is past its cold-start level: while cold-starting the converter runs from its input;
5. a node that is off, or was cut off this hour, runs in the next hour only if the store stands
   at its turn-on level (without hysteresis, turn-on = cut-off, it serves what it can hour by hour).

Configurations flagged ``always_on`` never switch off: their unmet energy is what a backup cell
would have to supply. The loop is compiled (numba), configurations spread over the CPU cores; the
arrays of all configurations go in and come out together, so a sizing sweep or a set of
weather years is one call.
Energy balance, per configuration and exactly (to rounding):
``harvest = served_direct + to_store + charge_loss + spilled`` and
``e_end - e_start = to_store - drawn - leaked``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numba import njit, prange

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
    dark_days: np.ndarray | None = None


_TOTAL_KEYS = ("harvest", "direct", "drawn", "unmet", "to_store", "charge_loss", "spilled", "leaked")


def _table(x: np.ndarray | float | bool, n_hours: int, dtype: type = float) -> np.ndarray:
    """A C-contiguous, writable (R, H) array from (H,), (R, H) or a scalar (one compiled variant)."""
    arr = np.asarray(x, dtype=dtype)
    if arr.ndim == 0:
        arr = np.full(n_hours, arr, dtype=dtype)
    if arr.ndim == 1:
        arr = arr[None, :]
    if arr.shape[-1] != n_hours:
        raise ValueError(f"expected {n_hours} hours, got {arr.shape[-1]}")
    return np.require(arr, dtype=dtype, requirements=["C", "W"])


@njit(inline="always", nogil=True)
def _hour(h_run_v, h_cold_v, d_sched, charge_ok, e, on, c_cut, c_full, c_on, c_cold, c_eff, c_a, c_b, c_c,
          c_forced):  # pragma: no cover - compiled
    """One hour of one configuration: the rules of the module docstring, in one place.

    Returns the store after the hour, the node state for the next hour, whether demand ran short,
    and the hour's flows (harvest, direct, drawn, unmet, stored, charge loss, spilled, leaked) [J].
    """
    h = h_cold_v if e < c_cold else h_run_v
    d = d_sched if on else 0.0
    direct = min(h, d)
    need = d - direct
    draw = min(need, max(e - c_cut, 0.0))
    unmet = need - draw
    e -= draw
    surplus = h - direct
    offer = surplus * c_eff if charge_ok else 0.0
    stored = min(offer, c_full - e)
    if stored < 0.0:
        stored = 0.0
    e += stored
    leak = c_a * e
    if e >= c_cold:
        leak += c_c
    if c_b > 0.0:
        leak += c_b * np.sqrt(e)
    if leak > e:
        leak = e
    e -= leak
    short = unmet > UNMET_TOLERANCE_J
    # on stays on while nothing ran short; otherwise (off, or just cut off) it runs next hour only
    # from the turn-on level up
    on_next = on
    if not on or short:
        on_next = e >= c_on
    if c_forced:
        on_next = True
    loss = stored / c_eff - stored
    return e, on_next, short, h, direct, draw, unmet, stored, loss, surplus - stored - loss, leak


@njit(inline="always", nogil=True)
def _add_flows(flows, h, direct, draw, unmet, stored, loss, spill, leak):  # pragma: no cover - compiled
    """Add one hour's flows to ``flows`` in the order of ``_TOTAL_KEYS``."""
    flows[0] += h
    flows[1] += direct
    flows[2] += draw
    flows[3] += unmet
    flows[4] += stored
    flows[5] += loss
    flows[6] += spill
    flows[7] += leak


@njit(cache=True, nogil=True, parallel=True)
def _run(h_run, h_cold, rows, dem, allowed, scale, e0, on0, forced, cut, full, turn_on, cold_lvl, eff,
         leak_a, leak_b, leak_c, min_from, hourly, stop_when_on, daily_only, on_rec, short_rec, dark_day_rec,
         e_min, e_end, totals, e_rec, served_rec, unmet_rec):  # pragma: no cover - compiled
    n_conf = rows.shape[0]
    n_hours = h_run.shape[1]
    shared_dem = dem.shape[0] == 1
    shared_allowed = allowed.shape[0] == 1
    shared_scale = scale.shape[0] == 1
    for k in prange(n_conf):
        r = rows[k]
        kd = k - k if shared_dem else k  # same integer type as k
        ka = k - k if shared_allowed else k
        ks = k - k if shared_scale else k
        c_cut, c_full, c_on, c_cold = cut[k], full[k], turn_on[k], cold_lvl[k]
        c_eff, c_a, c_b, c_c, c_forced = eff[k], leak_a[k], leak_b[k], leak_c[k], forced[k]
        e = e0[k]
        on = on0[k] or c_forced
        lowest = np.inf
        flows = np.zeros(8)
        for t in range(n_hours):
            was_on = on
            e, on, short, h, direct, draw, unmet, stored, loss, spill, leak = _hour(
                h_run[r, t], h_cold[r, t], dem[kd, t], allowed[ka, t], e, on, c_cut, c_full, c_on, c_cold,
                c_eff, c_a * scale[ks, t], c_b * scale[ks, t], c_c, c_forced)
            if daily_only:
                if short or not was_on:
                    dark_day_rec[k, t // 24] = True
            else:
                on_rec[k, t] = was_on
                short_rec[k, t] = short
            if stop_when_on and was_on:
                on_rec[k, t + 1:] = False
                short_rec[k, t + 1:] = False
                break
            if t >= min_from and e < lowest:
                lowest = e
            _add_flows(flows, h, direct, draw, unmet, stored, loss, spill, leak)
            if hourly:
                e_rec[k, t] = e
                served_rec[k, t] = direct + draw
                unmet_rec[k, t] = unmet
        e_min[k] = lowest
        e_end[k] = e
        totals[:, k] = flows


@njit(cache=True, nogil=True, parallel=True)
def _run_steady(h_run, h_cold, rows, dem, allowed, scale, e0, on0, forced, cut, full, turn_on, cold_lvl, eff,
                leak_a, leak_b, leak_c, dark_day_rec, e_min, e_end, totals):  # pragma: no cover - compiled
    """A warm-up year then the counted year on the same inputs. Once the counted year's state
    (store, node) equals the warm-up year's at the same hour, the rest of the counted year repeats
    the warm-up year exactly, so its records are taken from there instead of recomputed."""
    n_conf = rows.shape[0]
    n_hours = h_run.shape[1]
    shared_dem = dem.shape[0] == 1
    shared_allowed = allowed.shape[0] == 1
    shared_scale = scale.shape[0] == 1
    for k in prange(n_conf):
        r = rows[k]
        kd = k - k if shared_dem else k
        ka = k - k if shared_allowed else k
        ks = k - k if shared_scale else k
        c_cut, c_full, c_on, c_cold = cut[k], full[k], turn_on[k], cold_lvl[k]
        c_eff, c_a, c_b, c_c, c_forced = eff[k], leak_a[k], leak_b[k], leak_c[k], forced[k]
        e1 = np.empty(n_hours)
        on1 = np.empty(n_hours, dtype=np.bool_)
        dark1 = np.empty(n_hours, dtype=np.bool_)
        flows1 = np.zeros((8, n_hours))
        e = e0[k]
        on = on0[k] or c_forced
        for t in range(n_hours):
            was_on = on
            e, on, short, h, direct, draw, unmet, stored, loss, spill, leak = _hour(
                h_run[r, t], h_cold[r, t], dem[kd, t], allowed[ka, t], e, on, c_cut, c_full, c_on, c_cold,
                c_eff, c_a * scale[ks, t], c_b * scale[ks, t], c_c, c_forced)
            e1[t] = e
            on1[t] = on
            dark1[t] = short or not was_on
            _add_flows(flows1[:, t], h, direct, draw, unmet, stored, loss, spill, leak)
        lowest = np.inf
        flows = np.zeros(8)
        joined = n_hours
        for t in range(n_hours):
            was_on = on
            e, on, short, h, direct, draw, unmet, stored, loss, spill, leak = _hour(
                h_run[r, t], h_cold[r, t], dem[kd, t], allowed[ka, t], e, on, c_cut, c_full, c_on, c_cold,
                c_eff, c_a * scale[ks, t], c_b * scale[ks, t], c_c, c_forced)
            if short or not was_on:
                dark_day_rec[k, t // 24] = True
            if e < lowest:
                lowest = e
            _add_flows(flows, h, direct, draw, unmet, stored, loss, spill, leak)
            if e == e1[t] and on == on1[t]:
                joined = t + 1
                break
        for t in range(joined, n_hours):
            if dark1[t]:
                dark_day_rec[k, t // 24] = True
            if e1[t] < lowest:
                lowest = e1[t]
            for i in range(8):
                flows[i] += flows1[i, t]
        if joined < n_hours:
            e = e1[n_hours - 1]
        e_min[k] = lowest
        e_end[k] = e
        totals[:, k] = flows


def simulate(
    harvest_j: np.ndarray,
    demand_j: np.ndarray,
    store: StoreArrays,
    *,
    cold_harvest_j: np.ndarray | None = None,
    charge_allowed: np.ndarray | None = None,
    leak_scale: np.ndarray | None = None,
    initial_energy_j: np.ndarray | float = 0.0,
    initially_on: np.ndarray | bool = False,
    always_on: np.ndarray | bool = False,
    min_from: int = 0,
    hourly: bool = False,
    harvest_rows: np.ndarray | None = None,
    stop_when_on: bool = False,
    daily_only: bool = False,
    steady_year: bool = False,
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
    leak_scale : array (C, H) or (H,) [-], optional
        Factor on the store's proportional and square-root leakage in each hour (a store's
        self-discharge rising with its temperature); the constant term (the converter's quiescent
        draw) is not scaled. Default: 1.
    initial_energy_j : float or (C,) [J]
        Stored energy at the first hour (0: empty).
    initially_on, always_on : bool or (C,)
        Node state at the start; configurations whose node never switches off.
    min_from : int
        First hour counted in ``min_energy_j`` (e.g. the start of the steady-state year).
    hourly : bool
        Also record hourly stored energy, served and unmet energy.
    harvest_rows : int array (C,), optional
        Configuration k takes row ``harvest_rows[k]`` of ``harvest_j`` and ``cold_harvest_j``
        (shape (R, H)): a sweep over store sizes shares one row per harvester size.
    stop_when_on : bool
        Stop each configuration at the first hour its node is on (for first-wake studies); later
        hours are recorded as off and the totals cover only the hours run.
    daily_only : bool
        Record only ``dark_days`` (C, H // 24): days with an hour off or short (for sweeps); ``on``
        and ``short`` are then empty.
    steady_year : bool
        The inputs are one period (a year): run it twice, a warm-up then the counted one, and record
        only the counted period's ``dark_days``, ``min_energy_j``, ``final_energy_j`` and totals. Gives
        the same numbers as running the inputs tiled twice with ``daily_only`` and
        ``min_from=H``, faster: the counted year stops being simulated once it rejoins the warm-up
        year's path.

    Returns
    -------
    KernelResult
    """
    harvest = np.asarray(harvest_j, dtype=float)
    n_hours = harvest.shape[-1]
    if harvest_rows is None:
        n_conf = harvest.shape[0] if harvest.ndim == 2 else store.max_j.shape[0]
        rows = np.arange(n_conf) if harvest.ndim == 2 else np.zeros(n_conf, dtype=np.int64)
    else:
        rows = np.asarray(harvest_rows)
        n_conf = rows.shape[0]
    h_run = _table(harvest, n_hours)
    h_cold = h_run if cold_harvest_j is None else _table(cold_harvest_j, n_hours)
    if (rows.size and (rows.min() < 0 or rows.max() >= h_run.shape[0])) or h_cold.shape != h_run.shape:
        raise ValueError("harvest_rows must index rows of harvest_j (and cold_harvest_j of the same shape)")
    rows = _table(rows, n_conf, dtype=np.int64)[0]
    dem = _table(demand_j, n_hours)
    allowed = _table(True if charge_allowed is None else charge_allowed, n_hours, dtype=np.bool_)
    scale = _table(1.0 if leak_scale is None else leak_scale, n_hours)
    for name, arr in (("demand_j", dem), ("charge_allowed", allowed), ("leak_scale", scale)):
        if arr.shape[0] not in (1, n_conf):
            raise ValueError(f"{name} must have 1 or {n_conf} rows, has {arr.shape[0]}")

    def per_conf(x: np.ndarray | float | bool, dtype: type = float) -> np.ndarray:
        return np.require(np.broadcast_to(np.asarray(x, dtype=dtype), (n_conf,)), dtype=dtype,
                          requirements=["C", "W"]).copy()

    rec_shape = (n_conf, 0) if daily_only else (n_conf, n_hours)
    on_rec = np.empty(rec_shape, dtype=np.bool_)
    short_rec = np.empty(rec_shape, dtype=np.bool_)
    dark_day_rec = np.zeros((n_conf, n_hours // 24 if daily_only else 0), dtype=np.bool_)
    shape = (n_conf, n_hours) if hourly else (0, 0)
    e_rec, served_rec, unmet_rec = np.empty(shape), np.empty(shape), np.empty(shape)
    e_min, e_end = np.empty(n_conf), np.empty(n_conf)
    totals = np.empty((len(_TOTAL_KEYS), n_conf))
    e0 = per_conf(initial_energy_j)
    common = (h_run, h_cold, rows, dem, allowed, scale, e0, per_conf(initially_on, np.bool_),
              per_conf(always_on, np.bool_),
              per_conf(store.cutoff_j), per_conf(store.max_j), per_conf(store.turn_on_j),
              per_conf(store.cold_start_j), per_conf(store.charge_efficiency), per_conf(store.leak_fraction_per_h),
              per_conf(store.leak_sqrt_j_per_h), per_conf(store.leak_const_j_per_h))
    if steady_year:
        dark_day_rec = np.zeros((n_conf, n_hours // 24), dtype=np.bool_)
        _run_steady(*common, dark_day_rec, e_min, e_end, totals)
        tot = dict(zip(_TOTAL_KEYS, totals, strict=True))
        tot["start"] = np.full(n_conf, np.nan)   # the counted year starts where the warm-up left it
        empty = np.empty((n_conf, 0), dtype=np.bool_)
        return KernelResult(on=empty, short=empty, min_energy_j=e_min, final_energy_j=e_end, totals=tot,
                            dark_days=dark_day_rec)
    _run(*common, int(min_from), bool(hourly), bool(stop_when_on), bool(daily_only), on_rec, short_rec,
         dark_day_rec, e_min, e_end, totals, e_rec, served_rec, unmet_rec)
    tot = dict(zip(_TOTAL_KEYS, totals, strict=True))
    tot["start"] = e0.copy()
    result = KernelResult(on=on_rec, short=short_rec, min_energy_j=e_min, final_energy_j=e_end, totals=tot,
                          dark_days=dark_day_rec if daily_only else None)
    if hourly:
        result.energy_j, result.served_j, result.unmet_j = e_rec, served_rec, unmet_rec
    return result

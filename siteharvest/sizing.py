"""What does it take, and how sure are we: sizing maps, the fastest sustainable reporting, and
weather risk. Everything runs through the one kernel, each study as one array of configurations.

- Sizing map: harvester size (a size knob the kind declares) against store size, deficit days of a
  steady-state year in every cell, first wake reported separately; the frontier is the set of
  passing cells with no passing cell both smaller in harvester and smaller in store (no
  monotonicity assumed: with turn-on hysteresis a bigger store can add deficit days); the pick is
  the smallest harvester, then the smallest store, that passes. A map whose frontier touches its
  small edge, or that has no passing cell, is widened (down to the knob's bounds) and run again.
- Report interval: one task (the one named as the report, else the costliest, or the one chosen)
  made rarer (or more frequent) until the target is just met, by bisection on the interval with one
  kernel run per step.
- Weather risk: many years made by resampling whole weeks of the spot's own year within the same
  calendar month, keeping to weeks whose schedule pattern (lamps, process, machine, transmitter hours
  and dates off) is the same, so that weather moves and schedules do not. Optional process/machine
  outages (Poisson count per year, exponential length) for heat and vibration sources.

References
----------
IEEE 1562-2021, Recommended Practice for Sizing Stand-Alone Photovoltaic Systems (days of autonomy).
Egido, M. and Lorenzo, E. (1992). The sizing of stand alone PV-systems: a review and a proposed new
method. Solar Energy Materials and Solar Cells 26, 51-69.
Efron, B. and Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall (block
resampling of dependent data, ch. 8).
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from pydantic import BaseModel

from .assess import COMBINED_ID, Harvest, Prepared, combine, install_hour
from .conditioning import condition_levels
from .demand import demand_energy_j
from .errors import SiteInputError
from .fields import bounds_of
from .kernel import StoreArrays, simulate
from .metrics import first_wake_hours
from .schedule import WeeklySchedule
from .sources import SOURCE_KINDS, PowerLevel, SizeKnob, field_model, kind_of, source_output
from .store import SupercapacitorSpec, store_levels
from .timegrid import HOURS_PER_YEAR, SECONDS_PER_HOUR, month_of_hour

# In a sizing map a first wake later than this counts as none (NaN / null): 90 days.
FIRST_WAKE_HORIZON_H = 90 * 24
# A sizing map spans the drawn harvester from 1/8 to 8 times as much (a distance: 4 times farther to 1/8 as
# far) and the drawn store from 1/8 to 16 times; a map whose frontier touches its small edge, or with no
# passing cell, is widened by this factor on that side, at most WIDEN_ROUNDS times.
HARVESTER_SPAN = (8.0, 8.0)            # (toward less harvester, toward more), as factors on the drawn size
DISTANCE_SPAN = (4.0, 8.0)             # the same for a knob where smaller is more (a distance)
STORE_SPAN = (8.0, 16.0)               # (toward a smaller store, toward a larger one)
WIDEN_FACTOR = 8.0
WIDEN_ROUNDS = 3
# Years per kernel call in weather_risk: bounds memory to the hourly arrays of this many years.
RISK_CHUNK_YEARS = 100

# Bounds of the study options, shared by the command line and the dashboard: (low, high), inclusive.
STEPS_RANGE = (2, 200)                 # sizes along each axis of a sizing map
RISK_YEARS_RANGE = (1, 5000)           # resampled weather years (the command line's 0 skips the study)
SEED_RANGE = (0, 2**32 - 1)
OUTAGES_PER_YEAR_RANGE = (0.0, 52.0)   # unplanned outages a year: at most one a week
OUTAGE_DAYS_RANGE = (0.0, 90.0)        # mean outage length [days]; 0 means none
DEFICIT_DAYS_RANGE = (0, 365)          # target deficit days a year
#: Most memory a study may plan to use [bytes]; a larger one is refused before anything is allocated.
MEMORY_BUDGET_BYTES = 2_000_000_000


def check_option(value: Any, name: str, bounds: tuple[float, float], *, integer: bool) -> int | float:
    """``value`` as an int (``integer``) or a finite float within ``bounds`` (inclusive); raises
    :class:`SiteInputError` naming the option ``name`` and its bounds otherwise."""
    low, high = bounds
    kind = "a whole number" if integer else "a finite number"
    expected = f"{kind} from {int(low)} to {int(high)}" if integer else f"{kind} from {low:g} to {high:g}"
    ok_type = isinstance(value, numbers.Integral if integer else numbers.Real) and not isinstance(value, bool)
    if not ok_type:
        raise SiteInputError(expected, field=name, got=value)
    number = int(value) if integer else float(value)
    if (not integer and not math.isfinite(number)) or not low <= number <= high:
        raise SiteInputError(expected, field=name, got=number)
    return number


def sizing_memory_bytes(n_harvester: int, n_store: int) -> int:
    """Memory a sizing map plans to use [bytes]: hourly series per harvester size (power, voltage,
    conditioned parts, their first-wake slices) and per configuration the day flags, the first-wake
    records and the store levels. The drawn size may add one to each axis."""
    n_h, n_s = n_harvester + 1, n_store + 1
    per_size = HOURS_PER_YEAR * 8 * 12
    per_config = 365 + 2 * FIRST_WAKE_HORIZON_H + 40 * 8
    return n_h * per_size + n_h * n_s * per_config


def weather_risk_memory_bytes(years: int, n_sources: int) -> int:
    """Memory a weather-risk study plans to use [bytes]: the day map and outage flags of every year,
    and per chunk of :data:`RISK_CHUNK_YEARS` years the hour indices, charge flags and each case's
    running and cold-start series (with their outage-masked and per-hour energy copies)."""
    chunk = max(1, min(years, RISK_CHUNK_YEARS))
    per_year = 365 * 8 + HOURS_PER_YEAR
    per_chunk_year = HOURS_PER_YEAR * (8 + 1 + 8 * 2 * 3 * (n_sources + 1))
    return years * per_year + chunk * per_chunk_year


def _within_budget(needed: int, what: str, field: str) -> None:
    if needed > MEMORY_BUDGET_BYTES:
        raise SiteInputError(f"a {what} within the {MEMORY_BUDGET_BYTES / 1e9:g} GB memory budget", field=field,
                             got=f"{needed / 1e9:.1f} GB planned")


@dataclass
class SizingMap:
    """Deficit days over harvester size x store size for one source (or all together).

    ``harvester_sizes`` run from the least harvester to the most (for a transmitter distance, the
    farthest first); ``store_sizes`` from the smallest store up. ``first_wake_hours`` is NaN where
    the node does not wake within 90 days of installation.
    """

    source_id: str
    kind: str
    harvester_field: str
    harvester_unit: str
    harvester_sizes: np.ndarray
    harvester_drawn: float
    store_field: str
    store_unit: str
    store_sizes: np.ndarray
    store_drawn: float
    deficit_days: np.ndarray
    first_wake_hours: np.ndarray
    target_deficit_days: int
    frontier: list[tuple[int, int]] = field(default_factory=list)
    pick: tuple[int, int] | None = None
    least_harvester_is_limit: bool = False
    harvester_label: str = ""
    smaller_is_more: bool = False

    @property
    def meets(self) -> np.ndarray:
        """Cells that meet the target: no more deficit days than it allows, and a first wake within the
        study's 90 days (a node dark for months after installation meets nothing)."""
        return meets_target(self.deficit_days, self.first_wake_hours, self.target_deficit_days)

    @property
    def pick_at_edge(self) -> bool:
        """The pick sits on the map's smallest row or column: smaller sizes may pass too."""
        if self.pick is None:
            return False
        i, j = self.pick
        return j == 0 or (i == 0 and not self.least_harvester_is_limit)

    def to_json(self) -> dict[str, Any]:
        pick = None
        if self.pick is not None:
            i, j = self.pick
            pick = {self.harvester_field: _round(self.harvester_sizes[i]),
                    self.store_field: _round(self.store_sizes[j]),
                    "deficit_days": int(self.deficit_days[i, j]),
                    "first_wake_hours": _finite(self.first_wake_hours[i, j])}
        return {
            "id": self.source_id, "kind": self.kind,
            "harvester": {"field": self.harvester_field, "unit": self.harvester_unit,
                          "drawn": self.harvester_drawn, "sizes": [_round(v) for v in self.harvester_sizes]},
            "store": {"field": self.store_field, "unit": self.store_unit, "drawn": self.store_drawn,
                      "sizes": [_round(v) for v in self.store_sizes]},
            "deficit_days": self.deficit_days.astype(int).tolist(),
            "first_wake_hours": [[_finite(v) for v in row] for row in self.first_wake_hours],
            "target_deficit_days": self.target_deficit_days,
            "frontier": [{self.harvester_field: _round(self.harvester_sizes[i]),
                          self.store_field: _round(self.store_sizes[j]),
                          "deficit_days": int(self.deficit_days[i, j])} for i, j in self.frontier],
            "pick": pick,
        }


def _round(x: float) -> float:
    return float(f"{float(x):.4g}")


def _finite(x: float) -> float | None:
    return round(float(x), 3) if np.isfinite(x) else None


def meets_target(deficit_days: np.ndarray, first_wake_hours: np.ndarray, target_deficit_days: int) -> np.ndarray:
    """Where a sizing map meets the target: deficit days within it and a first wake at all (finite)."""
    return (np.asarray(deficit_days) <= target_deficit_days) & np.isfinite(np.asarray(first_wake_hours, dtype=float))


def frontier_and_pick(meets: np.ndarray) -> tuple[list[tuple[int, int]], tuple[int, int] | None]:
    """Pareto-smallest passing cells of a boolean map (rows: harvester, columns: store, both in
    increasing size), and the pick: the smallest harvester that passes, then its smallest store.
    No monotonicity is assumed."""
    meets = np.asarray(meets, dtype=bool)
    frontier: list[tuple[int, int]] = []
    best_before = meets.shape[1] if meets.ndim == 2 else 0   # smallest passing store in the rows above
    for i, row in enumerate(meets):
        passing = np.flatnonzero(row)
        if passing.size == 0:
            continue
        j = int(passing[0])   # in its row only the smallest passing store can be on the frontier
        if j < best_before:   # no smaller harvester passes with this store or a smaller one
            frontier.append((i, j))
            best_before = j
    return frontier, frontier[0] if frontier else None


def _grid(drawn: float, low: float | None, high: float | None, n: int, integer: bool,
          down: float, up: float) -> np.ndarray:
    """``n`` log-spaced sizes from ``drawn * down`` to ``drawn * up`` within the bounds, the drawn one included."""
    lo = drawn * down if low is None else max(drawn * down, low)
    hi = drawn * up if high is None else min(drawn * up, high)
    if integer:
        return np.unique(np.clip(np.round(np.geomspace(max(lo, 1), max(hi, 1), n)), 1, None)).astype(float)
    lo = max(lo, 1e-9)
    values = np.geomspace(lo, max(hi, lo), n)
    return np.unique(np.append(values, drawn))


def knob_value(spec: BaseModel, path: str) -> Any:
    """The value of a dotted field path (``heat_sink.area_cm2``) in a source."""
    value: Any = spec
    for name in path.split("."):
        value = getattr(value, name)
    return value


def with_knob(spec: BaseModel, path: str, value: Any) -> Any:
    """A copy of ``spec`` with the dotted field ``path`` set to ``value`` (as the field's own type)."""
    name, _, rest = path.partition(".")
    current = getattr(spec, name)
    new = with_knob(current, rest, value) if rest else type(current)(value)
    return spec.model_copy(update={name: new})


def harvester_sizes(spec: BaseModel, n: int, knob: SizeKnob | None = None,
                    span: tuple[float, float] | None = None) -> tuple[np.ndarray, str, str, float]:
    """Sizes to try for a source's knob (its kind's default knob for ``None``), least harvester first;
    (sizes, field, unit, drawn). ``span``: (toward less, toward more) as factors on the drawn size."""
    knob = knob or kind_of(spec).knob()  # type: ignore[arg-type]
    owner, last = field_model(type(spec), knob.field)
    b = bounds_of(owner, last)
    value = knob_value(spec, knob.field)
    drawn, integer = float(value), isinstance(value, int)
    low = b.low if b.low_inclusive or b.low is None else b.low * 1.000001
    less, more = span or (DISTANCE_SPAN if knob.smaller_is_more else HARVESTER_SPAN)
    if knob.smaller_is_more:
        sizes = _grid(drawn, low, b.high, n, integer, 1.0 / more, less)[::-1]
    else:
        sizes = _grid(drawn, low, b.high, n, integer, 1.0 / less, more)
    return sizes, knob.field, b.unit, drawn


def store_sizes(store: BaseModel, n: int, span: tuple[float, float] = STORE_SPAN) -> tuple[np.ndarray, str, str, float]:
    """Store sizes to try, smallest first; (sizes, field, unit, drawn). ``span``: (toward smaller, toward
    larger) as factors on the drawn size."""
    name = "capacitance_f" if isinstance(store, SupercapacitorSpec) else "capacity_mah"
    b = bounds_of(type(store), name)
    drawn = float(getattr(store, name))
    return _grid(drawn, None, b.high, n, False, 1.0 / span[0], span[1]), name, b.unit, drawn


def resized_store(store: BaseModel, name: str, value: float) -> BaseModel:
    """The store at another size; a supercapacitor's leakage scales with its capacitance."""
    update: dict[str, float] = {name: float(value)}
    if isinstance(store, SupercapacitorSpec):
        update["leakage_ua"] = store.leakage_ua * value / store.capacitance_f
    return store.model_copy(update=update)


def _harvest_at_sizes(prep: Prepared, index: int, sizes: np.ndarray, knob: SizeKnob) -> Harvest:
    """Conditioned harvest of source ``index`` at each size: arrays shaped (sizes, 8760)."""
    spec = prep.spec.source[index]
    base = prep.harvests[index]
    drawn = float(knob_value(spec, knob.field))
    if knob.proportional:
        out = base.terminal if base.terminal is not None else source_output(spec, prep.context)
        scale = sizes[:, None] / drawn
        scales = knob.voltage_scales is not None and knob.voltage_scales(spec)
        levels = [PowerLevel(level.power_w[None, :] * scale,
                             None if level.voltage_v is None else level.voltage_v[None, :] * (scale if scales else 1.0),
                             level.share) for level in out.power_levels()]
    else:
        outs = [source_output(with_knob(spec, knob.field, v), prep.context) for v in sizes]
        per_size = [o.power_levels() for o in outs]
        levels = []
        for k in range(len(per_size[0])):
            parts = [lv[k] for lv in per_size]
            volts = None if any(p.voltage_v is None for p in parts) else np.array([p.voltage_v for p in parts])
            levels.append(PowerLevel(np.array([p.power_w for p in parts]), volts, np.array([p.share for p in parts])))
    cond = condition_levels(spec.conditioning, levels, prep.spec.store.representative_v)
    return Harvest(spec.id, spec.kind, base.label, cond.running_w, cond.cold_w, cond.quiescent_w,
                   spec.conditioning.cold_start_until_v)


def sizing_map(prep: Prepared, source_id: str, *, n_harvester: int = 40, n_store: int = 40,
               max_deficit_days: int | None = None, knob: str | None = None) -> SizingMap:
    """Deficit days over a grid of harvester and store sizes for one source, one kernel call per round.

    ``knob`` picks one of the sizes the source's kind declares (its dotted field path, e.g.
    ``heat_sink.area_cm2``); the kind's default knob for ``None``. The map starts from the spans of
    :data:`HARVESTER_SPAN` and :data:`STORE_SPAN` around the drawn sizes and is widened while its
    frontier touches the small edge (or nothing passes) and the bounds allow (see :func:`_widened`).
    """
    ids = [s.id for s in prep.spec.source]
    if source_id not in ids:
        raise KeyError(source_id)
    n_harvester = int(check_option(n_harvester, "n_harvester", STEPS_RANGE, integer=True))
    n_store = int(check_option(n_store, "n_store", STEPS_RANGE, integer=True))
    if max_deficit_days is not None:
        max_deficit_days = int(check_option(max_deficit_days, "max_deficit_days", DEFICIT_DAYS_RANGE, integer=True))
    _within_budget(sizing_memory_bytes(n_harvester, n_store), "sizing map", "n_harvester, n_store")
    index = ids.index(source_id)
    kind = kind_of(prep.spec.source[index])
    try:
        chosen = kind.knob(knob)
    except KeyError:
        raise SiteInputError("one of " + ", ".join(k.field for k in kind.size_knobs), field="knob",
                             got=knob) from None
    target = prep.spec.run.target_deficit_days if max_deficit_days is None else max_deficit_days
    h_span = DISTANCE_SPAN if chosen.smaller_is_more else HARVESTER_SPAN
    s_span = STORE_SPAN
    m = _map_once(prep, index, chosen, n_harvester, n_store, target, h_span, s_span)
    for _ in range(WIDEN_ROUNDS):
        wider = _widened(m, prep, index, chosen, h_span, s_span)
        if wider is None:
            break
        h_span, s_span = wider
        m = _map_once(prep, index, chosen, n_harvester, n_store, target, h_span, s_span)
    return m


def _widened(m: SizingMap, prep: Prepared, index: int, knob: SizeKnob, h_span: tuple[float, float],
             s_span: tuple[float, float]) -> tuple[tuple[float, float], tuple[float, float]] | None:
    """Wider spans when the map's frontier is not inside it, or None when it is (or the bounds stop it).

    The least harvester passes (and is not the knob's limit): reach for less. The pick needs no more than
    the smallest store (and that is not the store's limit): reach for smaller stores. Nothing passes: reach
    for more of both.
    """
    less, more = h_span
    small, large = s_span
    spec, store = prep.spec.source[index], prep.spec.store
    h_room_more = _room(spec, knob, float(m.harvester_sizes[-1]), toward_more=True)
    s_b = bounds_of(type(store), m.store_field)
    if m.pick is None:
        grow_h = h_room_more
        grow_s = s_b.high is None or float(m.store_sizes[-1]) < s_b.high * (1 - 1e-9)
        if not (grow_h or grow_s):
            return None
        return ((less, more * WIDEN_FACTOR if grow_h else more), (small, large * WIDEN_FACTOR if grow_s else large))
    i, j = m.pick
    reach_less = i == 0 and _room(spec, knob, float(m.harvester_sizes[0]), toward_more=False)
    reach_small = j == 0 and float(m.store_sizes[0]) > max(s_b.low or 0.0, 1e-9) * (1 + 1e-6)
    if not (reach_less or reach_small):
        return None
    return ((less * WIDEN_FACTOR if reach_less else less, more),
            (small * WIDEN_FACTOR if reach_small else small, large))


def _room(spec: BaseModel, knob: SizeKnob, size: float, *, toward_more: bool) -> bool:
    """Whether the knob's bounds leave room beyond ``size`` toward more (or less) harvester."""
    owner, last = field_model(type(spec), knob.field)
    b = bounds_of(owner, last)
    integer = isinstance(knob_value(spec, knob.field), int)
    upward = toward_more != knob.smaller_is_more        # the direction along the field's own values
    if upward:
        return b.high is None or size < b.high * (1 - 1e-9)
    floor = 1.0 if integer else max(b.low or 0.0, 1e-9)
    return size > floor * (1 + 1e-6)


def _map_once(prep: Prepared, index: int, knob: SizeKnob, n_harvester: int, n_store: int, target: int,
              h_span: tuple[float, float], s_span: tuple[float, float]) -> SizingMap:
    """One sizing map over the given spans: a steady-year kernel call and a first-wake call."""
    spec = prep.spec.source[index]
    h_sizes, h_name, h_unit, h_drawn = harvester_sizes(spec, n_harvester, knob, h_span)
    s_sizes, s_name, s_unit, s_drawn = store_sizes(prep.spec.store, n_store, s_span)
    harvest = _harvest_at_sizes(prep, index, h_sizes, knob)
    n_h, n_s = len(h_sizes), len(s_sizes)
    stores = [resized_store(prep.spec.store, s_name, v) for v in s_sizes]
    levels = [store_levels(st, cold_start_until_v=harvest.cold_start_until_v, quiescent_w=harvest.quiescent_w)
              for st in stores]
    store_arr = StoreArrays.stack([levels[j] for _ in range(n_h) for j in range(n_s)])
    rows = np.repeat(np.arange(n_h), n_s)
    steady = simulate(harvest.running_w * SECONDS_PER_HOUR, prep.demand_j, store_arr,
                      cold_harvest_j=harvest.cold_w * SECONDS_PER_HOUR, charge_allowed=prep.charge_allowed,
                      leak_scale=prep.leak_scale,
                      harvest_rows=rows, steady_year=True)
    dd = steady.dark_days.sum(axis=1).reshape(n_h, n_s)
    # first wake: empty store at the installation hour, one year on
    start = install_hour(prep.spec, prep.harvests[index], prep.demand_j)
    order = np.r_[start:HOURS_PER_YEAR, 0:start][:FIRST_WAKE_HORIZON_H]
    wake = simulate(harvest.running_w[:, order] * SECONDS_PER_HOUR, prep.demand_j[order], store_arr,
                    cold_harvest_j=harvest.cold_w[:, order] * SECONDS_PER_HOUR,
                    charge_allowed=prep.charge_allowed[order], leak_scale=prep.leak_scale[order],
                    harvest_rows=rows, stop_when_on=True)
    fw = first_wake_hours(wake.on).reshape(n_h, n_s)
    front, pick = frontier_and_pick(meets_target(dd, fw, target))
    at_limit = not _room(spec, knob, float(h_sizes[0]), toward_more=False)
    return SizingMap(spec.id, spec.kind, h_name, h_unit, h_sizes, h_drawn, s_name, s_unit, s_sizes, s_drawn,
                     dd, fw, target, front, pick, bool(at_limit), knob.label, knob.smaller_is_more)


# The reporting-interval search varies at most up to once a week by default.
LONGEST_REPORT_INTERVAL_S = 7 * 86400.0
# Words in a task's name that say it is the node's report (the default task of the interval search).
REPORT_WORDS = ("report", "send", "transmit", "uplink", "publish", "upload")
TASK_NAMED = "named as the report"
TASK_COSTLIEST = "costs the most energy"
TASK_GIVEN = "chosen"


@dataclass
class ReportInterval:
    """The interval of one task at which the drawn hardware just meets the target.

    ``task_reason`` says why this task was varied (:data:`TASK_NAMED`, :data:`TASK_COSTLIEST` or
    :data:`TASK_GIVEN`); ``floor_s`` and ``longest_s`` are the bounds of the search [s].
    """

    source_id: str
    task: str
    drawn_every_s: float
    shortest_every_s: float | None
    deficit_days_at_drawn: int
    task_reason: str = TASK_GIVEN
    floor_s: float = 1.0
    longest_s: float = LONGEST_REPORT_INTERVAL_S

    @property
    def at_floor(self) -> bool:
        """The search's fastest interval already meets the target: faster may pass too."""
        return self.shortest_every_s is not None and self.shortest_every_s <= self.floor_s * (1 + 1e-9)

    def to_json(self) -> dict[str, Any]:
        return {"id": self.source_id, "task": self.task, "drawn_every_s": self.drawn_every_s,
                "shortest_every_s": None if self.shortest_every_s is None else round(self.shortest_every_s, 1),
                "deficit_days_at_drawn": self.deficit_days_at_drawn, "task_reason": self.task_reason,
                "floor_s": round(self.floor_s, 3), "longest_s": self.longest_s}


def task_energy_j_per_year(node: Any, task: Any) -> float:
    """Energy one task draws at the rail over the year [J]."""
    runs = float(node.task_mask(task).sum()) * SECONDS_PER_HOUR / task.every_s
    return runs * task.energy_per_run_j * node.supply_v


def report_task(node: Any, name: str | None = None) -> tuple[int, str]:
    """Which task the interval search varies, and why: the one named ``name``; else the task whose
    name says it reports (:data:`REPORT_WORDS`; the costliest of several); else the costliest task.
    Returns (index in ``node.task``, reason). Raises :class:`SiteInputError` for an unknown name."""
    tasks = list(node.task)
    if name is not None:
        names = [t.name for t in tasks]
        if name not in names:
            raise SiteInputError("one of the node's task names: " + "; ".join(names), field="task", got=name)
        return names.index(name), TASK_GIVEN
    energy = [task_energy_j_per_year(node, t) for t in tasks]
    named = [k for k, t in enumerate(tasks) if any(w in t.name.lower() for w in REPORT_WORDS)]
    if named:
        return max(named, key=lambda k: energy[k]), TASK_NAMED
    return int(np.argmax(energy)), TASK_COSTLIEST


def _steady_deficit(prep: Prepared, harvest: Harvest, demand_j: np.ndarray) -> int:
    lv = store_levels(prep.spec.store, cold_start_until_v=harvest.cold_start_until_v,
                      quiescent_w=harvest.quiescent_w)
    res = simulate(harvest.running_w[None, :] * SECONDS_PER_HOUR, demand_j, StoreArrays.stack([lv]),
                   cold_harvest_j=harvest.cold_w[None, :] * SECONDS_PER_HOUR, charge_allowed=prep.charge_allowed,
                   leak_scale=prep.leak_scale,
                   steady_year=True)
    return int(res.dark_days.sum())


def report_interval(prep: Prepared, source_id: str | None = None, *, max_deficit_days: int | None = None,
                    longest_s: float = LONGEST_REPORT_INTERVAL_S, tolerance: float = 0.01,
                    task: str | None = None) -> ReportInterval | None:
    """Bisection on one task's period (log scale) for the shortest that meets the target with the
    drawn harvester and store. The task is ``task`` (by name), by default as :func:`report_task`
    chooses. ``None`` when the node has no task."""
    node = prep.spec.node
    if max_deficit_days is not None:
        max_deficit_days = int(check_option(max_deficit_days, "max_deficit_days", DEFICIT_DAYS_RANGE, integer=True))
    check_option(longest_s, "longest_s", (1.0, 366 * 86400.0), integer=False)
    check_option(tolerance, "tolerance", (1e-6, 1.0), integer=False)
    if not node.task:
        return None
    target = prep.spec.run.target_deficit_days if max_deficit_days is None else max_deficit_days
    harvests = {h.id: h for h in prep.harvests}
    harvest = combine(prep.harvests) if source_id in (None, COMBINED_ID) else harvests[source_id]
    k, reason = report_task(node, task)
    varied = node.task[k]

    def deficit(every_s: float) -> int:
        tasks = list(node.task)
        tasks[k] = varied.model_copy(update={"every_s": float(every_s)})
        return _steady_deficit(prep, harvest, demand_energy_j(node.model_copy(update={"task": tasks})))

    drawn_dd = deficit(varied.every_s)
    lo = max(varied.duration_ms / 1000.0 * 1.001, 1.0)
    hi = max(longest_s, varied.every_s)
    floor_s, longest = lo, hi

    def found(shortest: float | None) -> ReportInterval:
        return ReportInterval(harvest.id, varied.name, varied.every_s, shortest, drawn_dd, reason, floor_s, longest)

    if deficit(hi) > target:
        return found(None)
    if deficit(lo) <= target:
        return found(lo)
    while hi / lo > 1.0 + tolerance:       # invariant: lo fails, hi passes
        mid = float(np.sqrt(lo * hi))
        if deficit(mid) <= target:
            hi = mid
        else:
            lo = mid
    return found(hi)


# ----------------------------------------------------------------------------------------------
# Weather risk


def schedules_in(model: Any) -> list[WeeklySchedule]:
    """Every weekly schedule inside a spec (lamps, process, machine, transmitter, ...)."""
    found: list[WeeklySchedule] = []
    if isinstance(model, WeeklySchedule):
        return [model]
    if isinstance(model, BaseModel):
        for name in type(model).model_fields:
            found.extend(schedules_in(getattr(model, name)))
    elif isinstance(model, list | tuple):
        for item in model:
            found.extend(schedules_in(item))
    return found


def day_signatures(prep: Prepared) -> np.ndarray:
    """An id per day (365,): days with equal ids have the same hours on every schedule of the spot."""
    masks = [s.mask() for s in schedules_in(prep.spec.source)]
    masks += [prep.spec.node.task_mask(t) for t in prep.spec.node.task]
    if not masks:
        return np.zeros(365, dtype=int)
    table = np.concatenate([m.reshape(365, 24) for m in masks], axis=1)
    return np.unique(table, axis=0, return_inverse=True)[1].ravel()


def resampled_days(signature: np.ndarray, years: int, seed: int, *, block_days: int = 7) -> np.ndarray:
    """Source day for every day of each synthetic year (years, 365).

    Each month is cut into blocks of ``block_days`` from its first day; each block takes the days of
    a block moved by whole weeks (so weekdays keep their place) that lies wholly inside the same
    month and has the same schedule signature on every day. Runs of dull days within a block survive.
    """
    rng = np.random.default_rng(seed)
    month_of_day = month_of_hour()[::24]
    out = np.empty((years, 365), dtype=int)
    for month in range(1, 13):
        in_month = np.flatnonzero(month_of_day == month)
        first, last = int(in_month[0]), int(in_month[-1])
        for start in range(first, last + 1, block_days):
            days = np.arange(start, min(start + block_days, last + 1))
            shifts = [7 * w for w in range(-5, 6)
                      if first <= days[0] + 7 * w and days[-1] + 7 * w <= last
                      and np.array_equal(signature[days + 7 * w], signature[days])]
            pick = np.asarray(shifts)[rng.integers(0, len(shifts), size=years)]
            out[:, days] = days[None, :] + pick[:, None]
    return out


def hours_from_days(day_map: np.ndarray) -> np.ndarray:
    """Hour indices (years, 8760) from a day map (years, 365)."""
    return (day_map[:, :, None] * 24 + np.arange(24)[None, None, :]).reshape(day_map.shape[0], -1)


def outage_mask(years: int, rate_per_year: float, mean_days: float, rng: np.random.Generator) -> np.ndarray:
    """(years, 8760) booleans, True while the process or machine is down for an unplanned outage."""
    mask = np.zeros((years, HOURS_PER_YEAR), dtype=bool)
    if rate_per_year <= 0 or mean_days <= 0:
        return mask
    counts = rng.poisson(rate_per_year, size=years)
    for y, n in enumerate(counts):
        for _ in range(n):
            start = int(rng.integers(0, HOURS_PER_YEAR))
            length = max(1, round(float(rng.exponential(mean_days)) * 24))
            mask[y, start:start + length] = True
    return mask


@dataclass
class WeatherRisk:
    """Deficit days over many resampled years for each source and all together."""

    years: int
    seed: int
    deficit_days: dict[str, np.ndarray]
    day_map: np.ndarray

    def summary(self, case: str) -> dict[str, float]:
        dd = self.deficit_days[case]
        return {"p50": float(np.percentile(dd, 50)), "p90": float(np.percentile(dd, 90)),
                "p99": float(np.percentile(dd, 99)), "chance_any": float(np.mean(dd > 0)),
                "mean": float(dd.mean())}

    def to_json(self) -> dict[str, Any]:
        return {"years": self.years, "seed": self.seed,
                "cases": {k: {key: round(v, 4) for key, v in self.summary(k).items()} for k in self.deficit_days}}


def stops_in_outage(kind: str) -> bool:
    """Whether an unplanned outage of the process or machine stops a source of this kind."""
    return kind in SOURCE_KINDS and SOURCE_KINDS[kind].outage_stops


def weather_risk(prep: Prepared, *, years: int = 500, seed: int = 1, outage_rate_per_year: float = 0.0,
                 outage_mean_days: float = 3.0) -> WeatherRisk:
    """Deficit days of each source (and all together) over ``years`` resampled years.

    Each year is run twice in a row and counted the second time, so its 1 January store state is
    what the year itself leaves (as for the single year). One kernel call per case and per chunk of
    :data:`RISK_CHUNK_YEARS` years, which bounds memory (hourly arrays of a chunk, not of every year)
    without changing a result: the years are independent and drawn up front.
    """
    years = int(check_option(years, "years", RISK_YEARS_RANGE, integer=True))
    seed = int(check_option(seed, "seed", SEED_RANGE, integer=True))
    outage_rate_per_year = check_option(outage_rate_per_year, "outage_rate_per_year", OUTAGES_PER_YEAR_RANGE,
                                        integer=False)
    outage_mean_days = check_option(outage_mean_days, "outage_mean_days", OUTAGE_DAYS_RANGE, integer=False)
    _within_budget(weather_risk_memory_bytes(years, len(prep.harvests)), "weather-risk study", "years")
    sig = day_signatures(prep)
    day_map = resampled_days(sig, years, seed)
    rng = np.random.default_rng(seed + 1)
    down = outage_mask(years, outage_rate_per_year, outage_mean_days, rng)
    both = combine(prep.harvests)
    levels = {h.id: store_levels(prep.spec.store, cold_start_until_v=h.cold_start_until_v, quiescent_w=h.quiescent_w)
              for h in [*prep.harvests, both]}
    chunks: dict[str, list[np.ndarray]] = {h.id: [] for h in [*prep.harvests, both]}
    for start in range(0, years, RISK_CHUNK_YEARS):
        rows = slice(start, min(years, start + RISK_CHUNK_YEARS))
        hours, down_c = hours_from_days(day_map[rows]), down[rows]
        n = hours.shape[0]
        allowed = prep.charge_allowed[hours]
        scale = prep.leak_scale[hours]
        per_source_run, per_source_cold = [], []
        for h in prep.harvests:
            run, cold = h.running_w[hours], h.cold_w[hours]
            if stops_in_outage(h.kind) and down_c.any():
                run, cold = np.where(down_c, 0.0, run), np.where(down_c, 0.0, cold)
            per_source_run.append(run)
            per_source_cold.append(cold)
        cases = list(zip(prep.harvests, per_source_run, per_source_cold, strict=True))
        cases.append((both, np.sum(per_source_run, axis=0), np.sum(per_source_cold, axis=0)))
        for h, run, cold in cases:
            res = simulate(run * SECONDS_PER_HOUR, prep.demand_j, StoreArrays.stack([levels[h.id]] * n),
                           cold_harvest_j=cold * SECONDS_PER_HOUR, charge_allowed=allowed, leak_scale=scale,
                           steady_year=True)
            chunks[h.id].append(res.dark_days.sum(axis=1))
    results = {k: np.concatenate(v) for k, v in chunks.items()}
    return WeatherRisk(years, seed, results, day_map)

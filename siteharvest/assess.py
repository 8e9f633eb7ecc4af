"""One spot, one year: from a validated site spec to every metric, for each source and all together.

The same public functions serve the command line, the dashboard and the report.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from .cautions import Caution, cautions_for
from .conditioning import condition_levels
from .context import SpotContext
from .demand import demand_energy_j, mean_power_w
from .errors import SiteInputError
from .kernel import KernelResult, StoreArrays, simulate
from .metrics import (
    annual_demand_wh,
    autonomy_days,
    dark_hours,
    deficit_day_mask,
    first_wake_hours,
    longest_outage_hours,
    monthly_energy_wh,
    monthly_margin,
    verdict,
    worst_month,
)
from .schedule import parse_date
from .site import SiteSpec
from .sources import SourceOutput, kind_of, source_output
from .store import (
    BackupCellSpec,
    RechargeableCellSpec,
    StoreLevels,
    backup_life_years,
    charge_allowed,
    esr_sag_warning,
    leakage_temperature_factor,
    store_levels,
)
from .timegrid import HOURS_PER_YEAR, SECONDS_PER_HOUR, hour_of_date
from .weather import WeatherMeta, load_weather_year

COMBINED_ID = "all-sources"
LITHIUM = ("li-ion", "lifepo4", "thin-film-solid-state")


@dataclass
class Harvest:
    """Conditioned harvest of one case (a source, or all together) [W] per hour."""

    id: str
    kind: str
    label: str
    running_w: np.ndarray
    cold_w: np.ndarray
    quiescent_w: float
    cold_start_until_v: float
    terminal: SourceOutput | None = None


@dataclass
class Prepared:
    """Everything the kernel needs for a spot, computed once."""

    spec: SiteSpec
    context: SpotContext
    weather_meta: WeatherMeta
    demand_j: np.ndarray
    harvests: list[Harvest]
    charge_allowed: np.ndarray
    leak_scale: np.ndarray  # hourly factor on the store's leakage (its temperature) [-]


@dataclass
class CaseResult:
    """The year of one case. Hourly arrays cover the steady-state calendar year."""

    id: str
    kind: str
    label: str
    into_store_w: np.ndarray
    annual_energy_wh: float
    monthly_energy_wh: np.ndarray
    monthly_margin: np.ndarray
    deficit_days: int
    deficit_days_mask: np.ndarray
    install_hour: int
    first_wake_hours: float
    longest_outage_hours: int
    lowest_soc_pct: float
    autonomy_days: float
    backup_life_years: float
    verdict: str
    stored_energy_j: np.ndarray
    node_on: np.ndarray
    unmet_j: np.ndarray
    terminal: SourceOutput | None = None

    def to_json(self) -> dict[str, Any]:
        """The per-source record of the ``assess --json`` contract (plus extra keys after it)."""
        fw = self.first_wake_hours
        return {
            "id": self.id,
            "kind": self.kind,
            "annual_energy_wh": round(self.annual_energy_wh, 6),
            "monthly_energy_wh": [round(float(v), 6) for v in self.monthly_energy_wh],
            "deficit_days": int(self.deficit_days),
            "first_wake_hours": None if not np.isfinite(fw) else round(float(fw), 3),
            "longest_outage_hours": int(self.longest_outage_hours),
            "monthly_margin": [round(float(v), 6) for v in self.monthly_margin],
            "verdict": self.verdict,
            "lowest_soc_pct": round(self.lowest_soc_pct, 3),
            "autonomy_days": _finite(self.autonomy_days),
            "backup_life_years": _finite(self.backup_life_years),
            **self._terminal_json(),
        }

    def _terminal_json(self) -> dict[str, Any]:
        """Energy at the transducer's terminals, before conditioning and before a full store spills [Wh]
        (what a meter on the harvester would read); None for the combined case (see Assessment.to_json)."""
        if self.terminal is None:
            return {"terminal_energy_wh": None, "monthly_terminal_energy_wh": None}
        terminal_w = np.asarray(self.terminal.power_w, dtype=float)
        return {"terminal_energy_wh": round(float(terminal_w.sum()), 6),
                "monthly_terminal_energy_wh": [round(float(v), 6) for v in monthly_energy_wh(terminal_w)]}


def _finite(x: float) -> float | None:
    return round(float(x), 4) if np.isfinite(x) else None


@dataclass
class Assessment:
    """The result of :func:`assess`."""

    prepared: Prepared
    sources: list[CaseResult]
    combined: CaseResult
    usable_energy_j: float
    backup: BackupCellSpec
    backup_is_assumed: bool
    backup_only_life_years: float
    warnings: list[str] = field(default_factory=list)
    cautions: list[Caution] = field(default_factory=list)

    @property
    def spec(self) -> SiteSpec:
        return self.prepared.spec

    @property
    def cases(self) -> list[CaseResult]:
        return [*self.sources, self.combined]

    @property
    def mean_power_uw(self) -> float:
        return float(self.prepared.demand_j.mean() / SECONDS_PER_HOUR * 1e6)

    def to_json(self) -> dict[str, Any]:
        """The stable ``assess --json`` document."""
        spot = self.spec.spot
        return {
            "spot": {"name": spot.name, "latitude": spot.latitude_deg, "longitude": spot.longitude_deg},
            "demand": {"mean_power_uw": round(self.mean_power_uw, 6),
                       "annual_energy_wh": round(annual_demand_wh(self.prepared.demand_j), 6)},
            "sources": [c.to_json() for c in self.sources],
            "combined": {**self.combined.to_json(), **self._combined_terminal_json()},
            "store": {"usable_energy_j": round(self.usable_energy_j, 6)},
            "backup": {"cell": self.backup.cell, "assumed": self.backup_is_assumed,
                       "life_without_harvest_years": _finite(self.backup_only_life_years)},
            "warnings": list(self.warnings),
            "cautions": [c.title for c in self.cautions],
        }

    def _combined_terminal_json(self) -> dict[str, Any]:
        terminal_w = sum((np.asarray(c.terminal.power_w, dtype=float) for c in self.sources
                          if c.terminal is not None), np.zeros(HOURS_PER_YEAR))
        return {"terminal_energy_wh": round(float(terminal_w.sum()), 6),
                "monthly_terminal_energy_wh": [round(float(v), 6) for v in monthly_energy_wh(terminal_w)]}

    def hourly_frame(self) -> pd.DataFrame:
        """Hourly series of the steady-state year: the weather it used (irradiance, air temperature, wind,
        illuminance where present, each named with its unit), demand, and per case power in, stored energy,
        state."""
        index = self.prepared.context.index
        weather = self.prepared.context.weather
        cols: dict[str, np.ndarray] = {name: weather[name].to_numpy(dtype=float) for name in weather.columns}
        cols["demand_w"] = self.prepared.demand_j / SECONDS_PER_HOUR
        for case in self.cases:
            if case.terminal is not None:
                cols[f"{case.id}.terminal_w"] = np.asarray(case.terminal.power_w, dtype=float)
            cols[f"{case.id}.into_store_w"] = case.into_store_w
            cols[f"{case.id}.stored_energy_j"] = case.stored_energy_j
            cols[f"{case.id}.node_on"] = case.node_on.astype(int)
            cols[f"{case.id}.unmet_j"] = case.unmet_j
        frame = pd.DataFrame(cols, index=index)
        frame.index.name = "time_local_standard"
        return frame


def build_context(spec: SiteSpec) -> tuple[SpotContext, WeatherMeta]:
    """Load the weather year and make the spot's context (files named as the site names them in errors)."""
    spot = spec.spot
    try:
        weather, meta = load_weather_year(
            spec.weather, latitude_deg=spot.latitude_deg, longitude_deg=spot.longitude_deg,
            altitude_m=spot.altitude_m, utc_offset_h=spot.utc_offset_h, files=spec.files)
    except SiteInputError as exc:
        raise spec.files.explained(exc) from None
    meta.source = spec.files.shown(meta.source)
    meta.notes = [spec.files.shown(n) for n in meta.notes]
    ctx = SpotContext(weather=weather, latitude_deg=spot.latitude_deg, longitude_deg=spot.longitude_deg,
                      altitude_m=spot.altitude_m, utc_offset_h=meta.utc_offset_h,
                      indoor_air_c=spot.indoor_air_c, indoors=spot.indoors, files=spec.files)
    return ctx, meta


def prepare(spec: SiteSpec, context: tuple[SpotContext, WeatherMeta] | None = None) -> Prepared:
    """Weather, demand and the conditioned harvest of every source (no simulation yet)."""
    ctx, meta = context if context is not None else build_context(spec)
    if ctx.files is not spec.files:  # a shared context reads this spot's files by this spot's rule
        ctx = copy.copy(ctx)
        ctx.files = spec.files
    store_v = spec.store.representative_v
    harvests = []
    for src in spec.source:
        try:
            out = source_output(src, ctx)
        except SiteInputError as exc:
            raise spec.files.explained(exc) from None
        cond = condition_levels(src.conditioning, out.power_levels(), store_v)
        harvests.append(Harvest(src.id, src.kind, src.label or src.id, cond.running_w, cond.cold_w,
                                cond.quiescent_w, src.conditioning.cold_start_until_v, out))
    allowed = charge_allowed(spec.store, ctx.air_temp_c)
    return Prepared(spec, ctx, meta, demand_energy_j(spec.node), harvests, allowed,
                    leakage_temperature_factor(spec.store, ctx.air_temp_c))


def combine(harvests: list[Harvest]) -> Harvest:
    """All sources charging one store. Cold start ends when the last converter's threshold is met."""
    return Harvest(
        COMBINED_ID, "combined", "all sources together",
        np.sum([h.running_w for h in harvests], axis=0), np.sum([h.cold_w for h in harvests], axis=0),
        float(sum(h.quiescent_w for h in harvests)), max(h.cold_start_until_v for h in harvests))


def install_hour(spec: SiteSpec, harvest: Harvest, demand_j: np.ndarray) -> int:
    """First hour of the installation date: the site's, or the first day of the case's worst month."""
    if spec.run.install_date:
        return hour_of_date(*parse_date(spec.run.install_date))
    return hour_of_date(worst_month(harvest.running_w, demand_j), 1)


def _two_years(x: np.ndarray, start: int) -> np.ndarray:
    """Two years of an hourly series starting at hour ``start`` (wrapping round the year)."""
    return np.concatenate([x[start:], x, x[:start]])


def run_cases(prep: Prepared, harvests: list[Harvest]) -> tuple[KernelResult, list[int], list[StoreLevels]]:
    """One kernel call for every case in three runs each: steady (warm-up year, then the counted
    year), installation (empty store at the install hour, two years on) and backup (never off).
    Returns the kernel result, the install hours and each case's store levels."""
    demand = prep.demand_j
    n = len(harvests)
    starts = [install_hour(prep.spec, h, demand) for h in harvests]
    steady = [np.tile(h.running_w, 2) for h in harvests]
    steady_cold = [np.tile(h.cold_w, 2) for h in harvests]
    inst = [_two_years(h.running_w, s) for h, s in zip(harvests, starts, strict=True)]
    inst_cold = [_two_years(h.cold_w, s) for h, s in zip(harvests, starts, strict=True)]
    run = np.array(steady + inst + steady) * SECONDS_PER_HOUR
    cold = np.array(steady_cold + inst_cold + steady_cold) * SECONDS_PER_HOUR
    dem = np.array([np.tile(demand, 2)] * n + [_two_years(demand, s) for s in starts] + [np.tile(demand, 2)] * n)
    allow = np.array([np.tile(prep.charge_allowed, 2)] * n
                     + [_two_years(prep.charge_allowed, s) for s in starts]
                     + [np.tile(prep.charge_allowed, 2)] * n)
    scale = np.array([np.tile(prep.leak_scale, 2)] * n + [_two_years(prep.leak_scale, s) for s in starts]
                     + [np.tile(prep.leak_scale, 2)] * n)
    levels = [store_levels(prep.spec.store, cold_start_until_v=h.cold_start_until_v,
                           quiescent_w=h.quiescent_w) for h in harvests]
    result = simulate(run, dem, StoreArrays.stack(levels * 3), cold_harvest_j=cold, charge_allowed=allow,
                      leak_scale=scale, always_on=np.repeat([False, False, True], n), min_from=HOURS_PER_YEAR,
                      hourly=True)
    return result, starts, levels


def assess(spec: SiteSpec, context: tuple[SpotContext, WeatherMeta] | None = None) -> Assessment:
    """Simulate the spot's year for each source alone and for all together, and judge each."""
    prep = prepare(spec, context)
    return assess_prepared(prep)


def assess_prepared(prep: Prepared) -> Assessment:
    """:func:`assess` after :func:`prepare` (the dashboard re-runs from here when only the node or
    store changes)."""
    spec = prep.spec
    harvests = [*prep.harvests, combine(prep.harvests)]
    res, starts, levels = run_cases(prep, harvests)
    backup = spec.store.backup or BackupCellSpec()
    cases = [_case_result(prep, res, k, h, starts[k], levels[k], backup) for k, h in enumerate(harvests)]
    return Assessment(
        prepared=prep, sources=cases[:-1], combined=cases[-1], usable_energy_j=spec.store.usable_energy_j,
        backup=backup, backup_is_assumed=spec.store.backup is None,
        backup_only_life_years=float(backup_life_years(backup, prep.demand_j.sum())[()]),
        warnings=_warnings(prep), cautions=cautions_for(caution_keys(spec)),
    )


def _case_result(prep: Prepared, res: KernelResult, k: int, h: Harvest, start: int, lv: StoreLevels,
                 backup: BackupCellSpec) -> CaseResult:
    """Case ``k`` judged from its three runs in :func:`run_cases` (steady, installation, backup)."""
    n = res.on.shape[0] // 3
    i_inst, i_back = n + k, 2 * n + k
    year = slice(HOURS_PER_YEAR, 2 * HOURS_PER_YEAR)
    mid = 0.5 * (lv.max_j + lv.cutoff_j)
    leak_w = (lv.leak_fraction_per_h * mid + lv.leak_sqrt_j_per_h * np.sqrt(mid)
              + lv.leak_const_j_per_h) / SECONDS_PER_HOUR
    dark = dark_hours(res.on[k, year], res.short[k, year])
    draw_j = float(res.unmet_j[i_back, year].sum())
    fw = float(first_wake_hours(res.on[i_inst])[()])
    span = max(lv.max_j - lv.cutoff_j, 1e-30)
    dmask = deficit_day_mask(dark)
    return CaseResult(
        id=h.id, kind=h.kind, label=h.label, into_store_w=h.running_w,
        annual_energy_wh=float(h.running_w.sum()), monthly_energy_wh=monthly_energy_wh(h.running_w),
        monthly_margin=monthly_margin(h.running_w, prep.demand_j), deficit_days=int(dmask.sum()),
        deficit_days_mask=dmask, install_hour=start, first_wake_hours=fw,
        longest_outage_hours=int(longest_outage_hours(res.on[i_inst])[()]),
        lowest_soc_pct=float(np.clip((res.min_energy_j[k] - lv.cutoff_j) / span, 0, 1) * 100),
        autonomy_days=autonomy_days(prep.spec.store.usable_energy_j, mean_power_w(prep.spec.node), leak_w),
        backup_life_years=float(backup_life_years(backup, draw_j)[()]),
        verdict=verdict(int(dmask.sum()), fw),
        stored_energy_j=res.energy_j[k, year], node_on=res.on[k, year], unmet_j=res.unmet_j[k, year],
        terminal=h.terminal,
    )


def _warnings(prep: Prepared) -> list[str]:
    """The weather reader's notes, each source model's notes and the store's voltage-sag warning."""
    spec = prep.spec
    warnings = list(prep.weather_meta.notes)
    for h in prep.harvests:
        if h.terminal is not None:
            warnings.extend(f"{h.id}: {note}" for note in h.terminal.notes)
    warnings.extend(within_hour_notes(prep, spec.store.usable_energy_j))
    sag = esr_sag_warning(spec.store, spec.node.largest_task_current_ma, spec.node.supply_v,
                          spec.node.regulator_efficiency, spec.node.regulator_min_input_v)
    if sag:
        warnings.append(sag)
    return warnings


def within_hour_notes(prep: Prepared, usable_j: float) -> list[str]:
    """Where the hourly model's assumption may fail: a source that delivers for only part of each hour.

    The simulation steps by the hour: a source on for a share of an hour adds that share of its
    power, and the store is assumed to carry the node through the rest of the hour. That holds while
    the store's usable energy exceeds what the node draws in the part of an hour the source is off;
    when it does not, a node on that store alone can go dark inside such hours although the hourly
    balance looks fine. Returns one note per source where that is so.
    """
    notes: list[str] = []
    for h in prep.harvests:
        out = h.terminal
        if out is None or out.levels is None:
            continue
        delivering = sum((np.where(np.asarray(lv.power_w) > 0, lv.share, 0.0) for lv in out.levels),
                         np.zeros(HOURS_PER_YEAR))
        partly = (delivering > 0) & (delivering < 1)
        if not partly.any():
            continue
        off_draw_j = float(np.max(np.where(partly, (1.0 - delivering) * prep.demand_j, 0.0)))
        if off_draw_j > usable_j:
            notes.append(f"{h.id}: delivers for only part of some hours; the node then draws up to "
                         f"{off_draw_j:.3g} J while it is off, more than the store's usable {usable_j:.3g} J. "
                         "The hourly model assumes the store carries the node through those minutes: on this "
                         "store it may go dark within such hours.")
    return notes


def caution_keys(spec: SiteSpec) -> set[str]:
    """Which cautions apply: from the fitted sources, the store, the spot's height and zone."""
    keys: set[str] = set()
    for src in spec.source:
        keys.update(kind_of(src).cautions)
    # Height decides work at height (common practice: fall protection from about 2 m).
    keys.discard("work_at_height")
    if spec.spot.mounting_height_m >= 2.0:
        keys.add("work_at_height")
    store = spec.store
    if isinstance(store, RechargeableCellSpec) and store.chemistry in LITHIUM:
        keys.add("lithium_cell")
    if store.backup is not None and store.backup.cell.startswith("lithium"):
        keys.add("lithium_cell")
    if spec.spot.hazardous_area:
        keys.add("explosive_atmosphere")
    return keys




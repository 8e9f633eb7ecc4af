"""Energy stores: supercapacitor, rechargeable cells, and an optional primary backup cell.

The kernel sees every store as absolute stored energy ``e`` [J] with four levels (cold-start,
cut-off, turn-on, full), a leakage law ``a*e + b*sqrt(e) + c`` per hour and a charge efficiency.

- Supercapacitor: E = C V^2 / 2, so usable energy between ``max_v`` and ``cutoff_v`` is
  C (Vmax^2 - Vcut^2) / 2; leakage current I at voltage V = sqrt(2E/C) costs I V.
- Rechargeable cell: energy = capacity x nominal voltage between the discharge cut-off (e = 0) and
  full; self-discharge is a fraction of the stored energy per month; no charging outside the
  cell's charge-temperature window (lithium plating below 0 degC).
- Backup primary cell: capacity x nominal voltage, self-discharge per year of its capacity.

References
----------
Zubieta, L. and Bonert, R. (2000). Characterization of double-layer capacitors for power
electronics applications. IEEE Trans. Industry Applications 36(1), 199-205.
Reddy, T.B. (ed.) (2011). Linden's Handbook of Batteries, 4th ed. McGraw-Hill.
IEC 62391-1 (2015). Fixed electric double-layer capacitors for use in electric and electronic
equipment - Part 1: Generic specification.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Annotated, Any, Literal

import numpy as np
from pydantic import Field, model_validator

from .errors import choose
from .fields import Section, quantity
from .timegrid import SECONDS_PER_HOUR

HOURS_PER_MONTH = 730.0

# Figures from memory (Linden's Handbook of Batteries, 4th ed.), typical of each chemistry.
CELL_PRESETS: dict[str, dict[str, Any]] = {
    "li-ion": {"nominal_v": 3.7, "max_v": 4.2, "cutoff_v": 3.0, "self_discharge_pct_per_month": 2.5,
               "charge_efficiency": 0.95, "charge_min_c": 0.0, "charge_max_c": 45.0, "esr_ohm": 0.5},
    "lifepo4": {"nominal_v": 3.2, "max_v": 3.65, "cutoff_v": 2.5, "self_discharge_pct_per_month": 2.0,
                "charge_efficiency": 0.95, "charge_min_c": 0.0, "charge_max_c": 45.0, "esr_ohm": 0.3},
    "thin-film-solid-state": {"nominal_v": 3.8, "max_v": 4.1, "cutoff_v": 3.0,
                              "self_discharge_pct_per_month": 0.2, "charge_efficiency": 0.9,
                              "charge_min_c": -20.0, "charge_max_c": 70.0, "esr_ohm": 50.0},
    "nimh": {"nominal_v": 1.2, "max_v": 1.45, "cutoff_v": 1.0, "self_discharge_pct_per_month": 2.0,
             "charge_efficiency": 0.7, "charge_min_c": 0.0, "charge_max_c": 45.0, "esr_ohm": 0.1},
}

BACKUP_PRESETS: dict[str, dict[str, Any]] = {
    "lithium-thionyl-chloride-aa": {"capacity_mah": 2400.0, "nominal_v": 3.6,
                                    "self_discharge_pct_per_year": 1.0},
    "lithium-thionyl-chloride-c": {"capacity_mah": 8500.0, "nominal_v": 3.6,
                                   "self_discharge_pct_per_year": 1.0},
    "lithium-manganese-coin-2032": {"capacity_mah": 220.0, "nominal_v": 3.0,
                                    "self_discharge_pct_per_year": 1.0},
    "alkaline-aa": {"capacity_mah": 2400.0, "nominal_v": 1.5, "self_discharge_pct_per_year": 2.5},
}


def _merge_preset(data: Any, presets: dict[str, dict[str, Any]], key: str, default: str) -> Any:
    if not isinstance(data, dict):
        return data
    name = choose(data, key, presets, default)
    return {key: name, **presets[name], **data}


class BackupCellSpec(Section):
    """A primary cell that covers what the harvester cannot (diode-ORed onto the store)."""

    cell: str = Field("lithium-thionyl-chloride-aa", description="starting values: one of "
                      + ", ".join(BACKUP_PRESETS))
    capacity_mah: float = quantity(2400.0, "mAh", "rated capacity", gt=0, le=100_000)
    nominal_v: float = quantity(3.6, "V", "nominal voltage", gt=0, le=24)
    self_discharge_pct_per_year: float = quantity(1.0, "%/yr", "capacity lost per year on the shelf",
                                                  ge=0, le=50)
    shelf_life_years: float = quantity(20.0, "yr", "longest life claimed for the cell", gt=0, le=50)
    count: int = quantity(1, "-", "cells in parallel", ge=1, le=20)

    @model_validator(mode="before")
    @classmethod
    def _preset(cls, data: Any) -> Any:
        return _merge_preset(data, BACKUP_PRESETS, "cell", "lithium-thionyl-chloride-aa")

    @property
    def energy_j(self) -> float:
        return self.capacity_mah * 1e-3 * SECONDS_PER_HOUR * self.nominal_v * self.count


class SupercapacitorSpec(Section):
    """An electric double-layer capacitor (or a stack) as the store."""

    kind: Literal["supercapacitor"] = "supercapacitor"
    capacitance_f: float = quantity(0.47, "F", "capacitance", gt=0, le=3000, step=0.01)
    max_v: float = quantity(5.0, "V", "voltage the charger stops at", gt=0, le=60, step=0.1)
    cutoff_v: float = quantity(2.2, "V", "voltage at which the node is switched off (undervoltage lockout)",
                               gt=0, le=60, step=0.1)
    turn_on_v: float = quantity(3.0, "V", "voltage at which the node is switched back on", gt=0, le=60,
                                step=0.1)
    esr_ohm: float = quantity(0.5, "ohm", "equivalent series resistance", ge=0, le=1000)
    leakage_ua: float = quantity(2.0, "uA", "leakage current at the rated voltage after 72 h at 25 degC (the "
                                 "datasheet figure); it falls with voltage and rises with temperature",
                                 ge=0, le=10_000)
    rated_v: float | None = quantity(None, "V", "rated voltage the leakage figure is given at (default: max_v)",
                                     gt=0, le=60, step=0.1)
    temperature_offset_c: float = quantity(0.0, "degC", "store temperature above the spot's air", ge=-20, le=60)
    backup: BackupCellSpec | None = Field(None, description="optional primary backup cell")

    @model_validator(mode="after")
    def _levels(self) -> SupercapacitorSpec:
        if not self.cutoff_v < self.max_v:
            raise ValueError("cutoff_v must be below max_v")
        if not self.cutoff_v <= self.turn_on_v <= self.max_v:
            raise ValueError("turn_on_v must lie between cutoff_v and max_v")
        return self

    def energy_at_j(self, volts: float) -> float:
        return 0.5 * self.capacitance_f * volts**2

    @property
    def usable_energy_j(self) -> float:
        """C (Vmax^2 - Vcut^2) / 2 [J]."""
        return self.energy_at_j(self.max_v) - self.energy_at_j(self.cutoff_v)

    @property
    def representative_v(self) -> float:
        return 0.5 * (self.max_v + self.cutoff_v)


class RechargeableCellSpec(Section):
    """A rechargeable cell as the store. ``chemistry`` gives starting values; all are editable."""

    kind: Literal["rechargeable"] = "rechargeable"
    chemistry: str = Field("li-ion", description="starting values: one of " + ", ".join(CELL_PRESETS))
    capacity_mah: float = quantity(40.0, "mAh", "rated capacity", gt=0, le=100_000)
    nominal_v: float = quantity(3.7, "V", "nominal voltage", gt=0, le=60)
    max_v: float = quantity(4.2, "V", "end-of-charge voltage", gt=0, le=60)
    cutoff_v: float = quantity(3.0, "V", "discharge cut-off voltage", gt=0, le=60)
    turn_on_soc_pct: float = quantity(5.0, "%", "state of charge at which the node is switched back on",
                                      ge=0, le=100)
    self_discharge_pct_per_month: float = quantity(2.5, "%/month", "stored energy lost per month", ge=0, le=50)
    charge_efficiency: float = quantity(0.95, "-", "energy efficiency of charging", gt=0, le=1)
    charge_min_c: float = quantity(0.0, "degC", "lowest cell temperature at which charging is allowed",
                                   ge=-60, le=60)
    charge_max_c: float = quantity(45.0, "degC", "highest cell temperature at which charging is allowed",
                                   ge=-40, le=100)
    esr_ohm: float = quantity(0.5, "ohm", "internal resistance", ge=0, le=10_000)
    temperature_offset_c: float = quantity(0.0, "degC", "store temperature above the spot's air", ge=-20, le=60)
    backup: BackupCellSpec | None = Field(None, description="optional primary backup cell")

    @model_validator(mode="before")
    @classmethod
    def _preset(cls, data: Any) -> Any:
        return _merge_preset(data, CELL_PRESETS, "chemistry", "li-ion")

    @model_validator(mode="after")
    def _window(self) -> RechargeableCellSpec:
        if not self.cutoff_v < self.nominal_v <= self.max_v:
            raise ValueError("voltages must satisfy cutoff_v < nominal_v <= max_v")
        if not self.charge_min_c < self.charge_max_c:
            raise ValueError("charge_min_c must be below charge_max_c")
        return self

    @property
    def usable_energy_j(self) -> float:
        """Capacity x nominal voltage [J]."""
        return self.capacity_mah * 1e-3 * SECONDS_PER_HOUR * self.nominal_v

    @property
    def representative_v(self) -> float:
        return self.nominal_v


StoreSpec = Annotated[SupercapacitorSpec | RechargeableCellSpec, Field(discriminator="kind")]


@dataclass(frozen=True)
class StoreLevels:
    """A store as the kernel sees it: energies [J] and leakage coefficients per hour."""

    max_j: float
    cutoff_j: float
    turn_on_j: float
    cold_start_j: float
    leak_fraction_per_h: float
    leak_sqrt_j_per_h: float
    leak_const_j_per_h: float
    charge_efficiency: float


def store_levels(store: SupercapacitorSpec | RechargeableCellSpec, *, cold_start_until_v: float = 0.0,
                 quiescent_w: float = 0.0) -> StoreLevels:
    """Turn a store spec into kernel levels; the conditioning's quiescent draw becomes constant leakage
    (applied by the kernel once the store is past the cold-start level)."""
    const = quiescent_w * SECONDS_PER_HOUR
    if isinstance(store, SupercapacitorSpec):
        cap = store.capacitance_f
        return StoreLevels(
            max_j=store.energy_at_j(store.max_v), cutoff_j=store.energy_at_j(store.cutoff_v),
            turn_on_j=store.energy_at_j(store.turn_on_v),
            cold_start_j=store.energy_at_j(min(cold_start_until_v, store.max_v)),
            # I(V) = I_rated V / V_rated, so I V = I_rated V^2 / V_rated = 2 I_rated E / (C V_rated)
            leak_fraction_per_h=store.leakage_ua * 1e-6 * 2.0 / (cap * (store.rated_v or store.max_v))
            * SECONDS_PER_HOUR,
            leak_sqrt_j_per_h=0.0,
            leak_const_j_per_h=const, charge_efficiency=1.0,
        )
    full = store.usable_energy_j
    return StoreLevels(
        max_j=full, cutoff_j=0.0, turn_on_j=full * store.turn_on_soc_pct / 100.0, cold_start_j=0.0,
        leak_fraction_per_h=store.self_discharge_pct_per_month / 100.0 / HOURS_PER_MONTH,
        leak_sqrt_j_per_h=0.0, leak_const_j_per_h=const, charge_efficiency=store.charge_efficiency,
    )


LEAKAGE_DOUBLING_K = 10.0  # self-discharge doubles per 10 K (common practice, Arrhenius-type rule of thumb)
LEAKAGE_REFERENCE_C = 25.0  # temperature of the datasheet's leakage figure


def leakage_temperature_factor(store: SupercapacitorSpec | RechargeableCellSpec,
                               air_temp_c: np.ndarray) -> np.ndarray:
    """Hourly factor on the store's leakage from its temperature [-].

    Method: a supercapacitor's leakage current, given at 25 degC, doubles every 10 K of store
    temperature (spot air plus ``temperature_offset_c``) and halves every 10 K below, an Arrhenius-type
    law. A rechargeable cell's self-discharge is its monthly figure in every hour (factor 1).

    Parameters
    ----------
    store : SupercapacitorSpec or RechargeableCellSpec
    air_temp_c : array (8760,) [degC]  air temperature around the store.

    Returns
    -------
    ndarray (8760,) [-]

    Validity: store temperatures within the part's rating (about -40 to 85 degC for common
    double-layer capacitors); outside it the part itself is out of its rating.

    The voltage dependence is in :func:`store_levels`: a parallel leakage resistance, so the current
    falls in proportion to the voltage below the rated one.

    References
    ----------
    Zubieta, L. and Bonert, R. (2000). Characterization of double-layer capacitors for power
    electronics applications. IEEE Trans. Industry Applications 36(1), 199-205 (parallel leakage
    resistance). The doubling per 10 K is common practice.
    """
    temp = np.asarray(air_temp_c, dtype=float)
    if not isinstance(store, SupercapacitorSpec):
        return np.ones(temp.shape)
    return 2.0 ** ((temp + store.temperature_offset_c - LEAKAGE_REFERENCE_C) / LEAKAGE_DOUBLING_K)


def charge_allowed(store: SupercapacitorSpec | RechargeableCellSpec, air_temp_c: np.ndarray) -> np.ndarray:
    """Hours in which the store may be charged, from its temperature (spot air + offset)."""
    temp = np.asarray(air_temp_c, dtype=float) + store.temperature_offset_c
    if isinstance(store, SupercapacitorSpec):
        return np.ones(temp.shape, dtype=bool)
    return (temp >= store.charge_min_c) & (temp <= store.charge_max_c)


def esr_sag_warning(store: SupercapacitorSpec | RechargeableCellSpec, largest_task_ma: float,
                    supply_v: float, regulator_efficiency: float, regulator_min_input_v: float) -> str | None:
    """A warning when, at the cut-off voltage, the largest task's current sags the store across its
    ESR below the regulator's minimum input (the node would brown out before the cut-off)."""
    if largest_task_ma <= 0:
        return None
    v_cut = store.cutoff_v
    current_a = largest_task_ma * 1e-3 * supply_v / (v_cut * regulator_efficiency)
    sag_v = current_a * store.esr_ohm
    if v_cut - sag_v >= regulator_min_input_v:
        return None
    need = regulator_min_input_v + sag_v
    return (f"At the cut-off of {v_cut:.2f} V the largest task draws {current_a * 1e3:.1f} mA from the store, "
            f"which sags {sag_v:.2f} V across the {store.esr_ohm:g} ohm ESR, below the regulator's "
            f"{regulator_min_input_v:.2f} V minimum: raise cutoff_v to at least {need:.2f} V or use a "
            "store with lower ESR.")


def backup_life_text(years: float, shelf_life_years: float, digits: int = 1, *, short: bool = False) -> str:
    """A backup-cell life for people: capped lives read '20+ (shelf life)' (``short``: '20+'), not a
    bare '20'."""
    if not np.isfinite(years):
        return "-"
    if years >= shelf_life_years * (1 - 1e-9):
        return f"{shelf_life_years:g}+" + ("" if short else " (shelf life)")
    return f"{years:.{digits}f}"


def backup_life_years(backup: BackupCellSpec, annual_draw_j: float | np.ndarray) -> np.ndarray:
    """Years until the backup cell is exhausted: Q / (D + s Q), capped at the cell's shelf life.

    Q: cell energy [J]; D: energy drawn from it per year [J]; s: self-discharge per year [-].
    """
    q = backup.energy_j
    loss = np.asarray(annual_draw_j, dtype=float) + backup.self_discharge_pct_per_year / 100.0 * q
    with np.errstate(divide="ignore"):
        years = np.where(loss > 0, q / np.maximum(loss, 1e-300), np.inf)
    return np.minimum(years, backup.shelf_life_years)

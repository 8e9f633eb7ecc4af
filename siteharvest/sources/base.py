"""What every source model shares: the common site-file fields and the output of a yield model."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, ClassVar

import numpy as np
from pydantic import Field, model_validator

from ..conditioning import ConditioningSpec
from ..fields import Section


class SourceBase(Section):
    """Fields common to every ``[[source]]`` table. Each kind adds its own.

    Class attributes
    ----------------
    size_field : the field that scales the harvester (its natural size knob, used by sizing).
    cautions : keys of the safety cautions that apply when this kind is fitted (see ``cautions.py``).
    """

    size_field: ClassVar[str] = ""
    cautions: ClassVar[tuple[str, ...]] = ()

    id: str = Field(..., min_length=1, max_length=60, pattern=r"^[A-Za-z0-9_.\-]+$",
                    description="short identifier of this source within the spot (letters, digits, _ . -)")
    label: str = Field("", max_length=120, description="a longer description shown in tables")
    conditioning: ConditioningSpec = Field(default_factory=ConditioningSpec,
                                           description="the power-conditioning stage between this "
                                           "transducer and the store (a preset name or a table)")

    @model_validator(mode="before")
    @classmethod
    def _kind_conditioning(cls, data: Any) -> Any:
        """A conditioning table without a preset starts from this kind's own default preset (the
        preset of the kind's declared ``conditioning`` default)."""
        if isinstance(data, dict):
            cond = data.get("conditioning")
            if isinstance(cond, dict) and "preset" not in cond:
                own = cls.model_fields["conditioning"].default_factory().preset  # type: ignore[misc]
                data = {**data, "conditioning": {"preset": own, **cond}}
        return data


@dataclass
class PowerLevel:
    """One state a transducer is in for a share of each hour (a beam on, lamps lit, a machine running).

    Attributes
    ----------
    power_w : ndarray, shape (8760,) or (sizes, 8760)
        Power at the terminals while in this state [W] (not averaged over the hour).
    voltage_v : ndarray or None
        Voltage presented to the converter in this state [V]; ``None`` when not meaningful.
    share : ndarray, shape (8760,)
        Share of each hour spent in this state [-], 0..1.
    """

    power_w: np.ndarray
    voltage_v: np.ndarray | None
    share: np.ndarray


@dataclass
class SourceOutput:
    """Hourly yield of one transducer over the reference year.

    Attributes
    ----------
    power_w : ndarray, shape (8760,)
        Mean electrical power the transducer offers at its terminals at its best operating point,
        averaged over each hour [W].
    voltage_v : ndarray or None
        Voltage it presents to the converter at that point [V]; ``None`` when not meaningful.
    details : dict
        Intermediate hourly arrays worth plotting (units in their keys, e.g. ``poa_w_m2``).
    notes : list of str
        Plain-words remarks for the user (e.g. "peak at 98 Hz sits 4 Hz off resonance").
    levels : list of PowerLevel or None
        For a source that delivers only part of each hour (a pulsed beam, lamps lit for part of it, a
        machine that runs part of the time): the states it is in and for what share of the hour. The
        converter, its thresholds and the cold start act on each state's own power; ``power_w`` is
        their share-weighted mean. None: the source delivers ``power_w`` all hour.
    """

    power_w: np.ndarray
    voltage_v: np.ndarray | None = None
    details: dict[str, np.ndarray] = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)
    levels: list[PowerLevel] | None = None

    def power_levels(self) -> list[PowerLevel]:
        """The states of each hour; a source that delivers all hour has one, with share 1."""
        if self.levels is not None:
            return self.levels
        return [PowerLevel(self.power_w, self.voltage_v, np.ones(np.shape(self.power_w)[-1]))]

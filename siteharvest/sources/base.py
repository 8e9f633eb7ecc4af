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
class SourceOutput:
    """Hourly yield of one transducer over the reference year.

    Attributes
    ----------
    power_w : ndarray, shape (8760,)
        Mean electrical power the transducer offers at its terminals at its best operating point [W].
    voltage_v : ndarray or None
        Voltage it presents to the converter at that point [V]; ``None`` when not meaningful.
    details : dict
        Intermediate hourly arrays worth plotting (units in their keys, e.g. ``poa_w_m2``).
    notes : list of str
        Plain-words remarks for the user (e.g. "peak at 98 Hz sits 4 Hz off resonance").
    """

    power_w: np.ndarray
    voltage_v: np.ndarray | None = None
    details: dict[str, np.ndarray] = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)

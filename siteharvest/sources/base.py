"""What every source model shares: the common site-file fields, the output of a yield model, and the
record (:class:`SourceKind`) by which a kind tells the rest of the program everything it needs."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
from pydantic import Field, model_validator

from ..conditioning import ConditioningSpec
from ..fields import Section

if TYPE_CHECKING:
    from ..context import SpotContext


class SourceBase(Section):
    """Fields common to every ``[[source]]`` table. Each kind adds its own (and a :class:`SourceKind`)."""

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


@dataclass(frozen=True)
class SizeKnob:
    """A size of the harvester that a sizing map varies.

    Attributes
    ----------
    field : str
        Dotted path of the field inside the source table (``modules``, ``heat_sink.area_cm2``).
    label : str
        Plain axis name (``Thermoelectric modules``); the unit comes from the field's declaration.
    proportional : bool
        Power at the terminals scales in proportion to the size (each unit has its own contacts and
        sink), so one yield run serves every size; otherwise the yield model runs again at each size.
    smaller_is_more : bool
        A smaller value means more harvester (a transmitter moved closer).
    voltage_scales : callable or None
        For a proportional knob: ``spec -> bool``, whether the terminal voltage scales with the size
        too (modules wired in series); ``None``: the voltage stays.
    """

    field: str
    label: str
    proportional: bool = False
    smaller_is_more: bool = False
    voltage_scales: Callable[[Any], bool] | None = None


@dataclass(frozen=True)
class PresetField:
    """A field that starts from a table of presets: choosing an entry brings that entry's values.

    ``key`` names the table for the editor (``thermo-module``); ``clears`` lists further fields that
    no longer apply once an entry is chosen (a survey file when a preset spectrum is picked).
    """

    field: str
    key: str
    table: Mapping[str, Mapping[str, Any]]
    clears: tuple[str, ...] = ()


@dataclass(frozen=True)
class SourceKind:
    """Everything the program needs to know about one source kind, declared in the kind's own module.

    Sizing, the editor, file resolution, the report and the portfolio read these records; register
    one with :func:`siteharvest.sources.register_kind`.

    Attributes
    ----------
    kind : str                  the ``kind`` tag in the site file (the model's ``kind`` literal).
    model : type[SourceBase]    the site-file model; its fields carry labels, units and bounds.
    output : callable           the pure yield function ``(spec, ctx) -> SourceOutput``.
    name : str                  what one is called in the editor and tables (``thermoelectric module``).
    group, group_title : str    the editor group its tables sit in, and that group's title.
    size_knobs : tuple of SizeKnob   the sizes a sizing map may vary, the default first.
    outage_stops : bool         whether an unplanned outage of the process or machine stops the source.
    file_fields : tuple of str  dotted paths of the fields that name a file (each called ``file`` or
                                ``*_file``, the one rule of :mod:`siteharvest.files`).
    presets : tuple of PresetField   fields that start from a preset table.
    new_source : mapping        what a source added in the editor starts from (beyond ``id``/``kind``).
    upload : str or None        an upload area the editor puts beside it (``spectrum``).
    cautions : tuple of str     keys of the safety cautions that apply when it is fitted.
    method : str                plain words on the model, for the report's methods section.
    reference_modules : tuple of str  modules whose docstrings' References the report cites for it.
    """

    kind: str
    model: type[SourceBase]
    output: Callable[[Any, SpotContext], SourceOutput]
    name: str
    group: str
    group_title: str
    size_knobs: tuple[SizeKnob, ...]
    outage_stops: bool = False
    file_fields: tuple[str, ...] = ()
    presets: tuple[PresetField, ...] = ()
    new_source: Mapping[str, Any] = field(default_factory=dict)
    upload: str | None = None
    cautions: tuple[str, ...] = ()
    method: str = ""
    reference_modules: tuple[str, ...] = ()

    def knob(self, name: str | None = None) -> SizeKnob:
        """The size knob called ``name`` (its dotted field path), the default one for ``None``."""
        if name is None:
            return self.size_knobs[0]
        for knob in self.size_knobs:
            if knob.field == name:
                return knob
        raise KeyError(name)

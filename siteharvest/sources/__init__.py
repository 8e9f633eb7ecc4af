"""The source models: one module per transducer kind, registered here by ``kind``.

Each module defines a site-file model (a subclass of :class:`SourceBase` with a ``kind`` literal)
and a pure yield function ``(spec, ctx) -> SourceOutput``.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Annotated, Any

from pydantic import Field

from ..context import SpotContext
from . import indoor_light, rf, solar, thermoelectric, vibration
from .base import PowerLevel, SourceBase, SourceOutput

SOURCE_KINDS: dict[str, tuple[type[SourceBase], Callable[[Any, SpotContext], SourceOutput]]] = {
    "solar": (solar.SolarSource, solar.solar_output),
    "indoor_light": (indoor_light.IndoorLightSource, indoor_light.indoor_light_output),
    "thermoelectric": (thermoelectric.ThermoelectricSource, thermoelectric.thermoelectric_output),
    "vibration": (vibration.VibrationSource, vibration.vibration_output),
    "rf": (rf.RfSource, rf.rf_output),
}

AnySource = Annotated[
    solar.SolarSource
    | indoor_light.IndoorLightSource
    | thermoelectric.ThermoelectricSource
    | vibration.VibrationSource
    | rf.RfSource,
    Field(discriminator="kind"),
]


def source_output(spec: SourceBase, ctx: SpotContext) -> SourceOutput:
    """Run the yield model registered for ``spec.kind``."""
    return SOURCE_KINDS[spec.kind][1](spec, ctx)  # type: ignore[attr-defined]


__all__ = ["SOURCE_KINDS", "AnySource", "PowerLevel", "SourceBase", "SourceOutput", "source_output"]

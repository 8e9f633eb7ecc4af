"""Declared bounds for every input, as data.

Each numeric input is a pydantic ``Field`` made by :func:`quantity`, carrying its unit and bounds.
The same declarations validate site files, build the JSON Schema and give the dashboard its
min/max/step (:func:`bounds_of`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import annotated_types as at
from pydantic import BaseModel, ConfigDict, Field


class Section(BaseModel):
    """Base of every site-file table: unknown keys are errors (they are usually typos)."""

    model_config = ConfigDict(extra="forbid", frozen=True, validate_default=True)


def quantity(
    default: Any,
    unit: str,
    doc: str,
    *,
    ge: float | None = None,
    gt: float | None = None,
    le: float | None = None,
    lt: float | None = None,
    step: float | None = None,
) -> Any:
    """A numeric field with its unit and bounds declared once.

    ``unit`` is a plain string ("W/m2", "cm2", "-" for dimensionless). ``step`` is a hint for editors.
    """
    extra: dict[str, Any] = {"unit": unit}
    if step is not None:
        extra["step"] = step
    return Field(
        default,
        ge=ge,
        gt=gt,
        le=le,
        lt=lt,
        description=f"{doc} [{unit}]",
        json_schema_extra=extra,
    )


@dataclass(frozen=True)
class Bounds:
    """Bounds of one numeric field, for forms: ``None`` where open-ended."""

    low: float | None
    high: float | None
    low_inclusive: bool
    high_inclusive: bool
    unit: str
    step: float | None
    doc: str


def bounds_of(model: type[BaseModel], name: str) -> Bounds:
    """The declared bounds, unit and description of ``model.name``."""
    info = model.model_fields[name]
    low = high = None
    low_inc = high_inc = True
    for meta in info.metadata:
        if isinstance(meta, at.Ge):
            low, low_inc = float(meta.ge), True
        elif isinstance(meta, at.Gt):
            low, low_inc = float(meta.gt), False
        elif isinstance(meta, at.Le):
            high, high_inc = float(meta.le), True
        elif isinstance(meta, at.Lt):
            high, high_inc = float(meta.lt), False
    extra = info.json_schema_extra if isinstance(info.json_schema_extra, dict) else {}
    return Bounds(low, high, low_inc, high_inc, str(extra.get("unit", "")), extra.get("step"),
                  info.description or "")

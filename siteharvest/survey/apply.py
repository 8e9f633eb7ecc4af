"""Fitted fields into a site: the source they belong to, the merge, and the provenance records."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ..errors import SiteInputError
from ..site import SiteSpec, parse_site


@dataclass(frozen=True)
class FitQuality:
    """How well a fit describes its log.

    Attributes: ``summary`` one line for the site file's provenance; ``numbers`` named figures (R2,
    RMS residual, agreement, readings, days); ``notes`` sentences a person should read.
    """

    summary: str
    numbers: dict[str, float] = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)

    def to_json(self) -> dict[str, Any]:
        return {"summary": self.summary, "numbers": self.numbers, "notes": self.notes}


@dataclass(frozen=True)
class SurveyUpdate:
    """What a survey changes in a site: one source's fields (and spot fields), with their provenance.

    Attributes: ``kind`` ("light", "temperature", "vibration"); ``source_id``; ``fields`` the source's
    fitted fields (nested tables merge into the existing ones); ``spot_fields`` fitted ``[spot]`` fields;
    ``logs`` the files; ``first_date``/``last_date`` (YYYY-MM-DD); ``quality``; ``year_spread_pct`` the
    90 % half-width of the year extension [%], or None; ``replace`` fields whose tables replace the old
    ones whole (another kind of hot side) instead of merging into them.
    """

    kind: str
    source_id: str
    fields: dict[str, Any]
    logs: list[str]
    first_date: str
    last_date: str
    quality: FitQuality
    year_spread_pct: float | None = None
    spot_fields: dict[str, Any] = field(default_factory=dict)
    replace: tuple[str, ...] = ()

    def provenance(self) -> list[dict[str, Any]]:
        """One ``[[measured]]`` record per fitted field."""
        paths = [f"source[{self.source_id}].{name}" for name in self.fields]
        paths += [f"spot.{name}" for name in self.spot_fields]
        spread = None if self.year_spread_pct is None or self.year_spread_pct != self.year_spread_pct \
            or self.year_spread_pct == float("inf") else round(float(self.year_spread_pct), 2)
        out = []
        for path in paths:
            record: dict[str, Any] = {"path": path, "survey": self.kind, "logs": list(self.logs),
                                      "first_date": self.first_date, "last_date": self.last_date,
                                      "fit": self.quality.summary[:500]}
            if spread is not None:
                record["year_spread_pct"] = spread
            out.append(record)
        return out


def pick_source(spec: SiteSpec, kind: str, source_id: str | None, what: str) -> str:
    """The id of the source a survey fits: ``source_id`` when given (and of ``kind``), else the only source
    of ``kind``."""
    of_kind = [s.id for s in spec.source if s.kind == kind]
    file = spec.file
    if source_id is not None:
        ids = [s.id for s in spec.source]
        if source_id not in ids:
            raise SiteInputError("one of the site's source ids: " + ", ".join(ids), file=file, field="--source",
                                 got=source_id)
        if source_id not in of_kind:
            raise SiteInputError(f"a source of kind {kind} for a {what}", file=file, field="--source",
                                 got=source_id)
        return source_id
    if len(of_kind) != 1:
        raise SiteInputError(f"one source of kind {kind} in the site for a {what}"
                             + (" (name it with --source)" if of_kind else " (add one first)"), file=file,
                             field="source", got=", ".join(of_kind) if of_kind else "none")
    return of_kind[0]


def _merge(old: Any, new: Any) -> Any:
    """``new`` over ``old``; tables merge key by key (a schedule keeps its dates off unless given)."""
    if isinstance(old, dict) and isinstance(new, dict):
        merged = dict(old)
        for key, value in new.items():
            merged[key] = _merge(old.get(key), value) if key in old else value
        return merged
    return new


def apply_update(spec: SiteSpec, update: SurveyUpdate) -> SiteSpec:
    """A copy of ``spec`` with the update's fields and their ``[[measured]]`` records (replacing any earlier
    record of the same field). Validated like a site file; files resolve by the same rule as ``spec``'s."""
    data = spec.model_dump(mode="json")
    for src in data["source"]:
        if src.get("id") == update.source_id:
            for key, value in update.fields.items():
                src[key] = value if key in update.replace else _merge(src.get(key), value)
            for key in [k for k, v in src.items() if v is None]:
                del src[key]
    data["spot"] = _merge(data["spot"], update.spot_fields)
    fresh = update.provenance()
    taken = {r["path"] for r in fresh}
    data["measured"] = [r for r in (data.get("measured") or []) if r.get("path") not in taken] + fresh
    out = parse_site(data, file=spec.file or "<site>", files=spec.files)
    return out

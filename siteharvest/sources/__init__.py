"""The source models: one module per transducer kind, each declaring a :class:`SourceKind` record.

Each module defines a site-file model (a subclass of :class:`SourceBase` with a ``kind`` literal), a
pure yield function ``(spec, ctx) -> SourceOutput`` and its record ``KIND``. Registering the record
(one line below) is all the rest of the program needs: the site-file model, sizing, the editor, file
resolution, the report and the portfolio read the records in :data:`SOURCE_KINDS`.
"""

from __future__ import annotations

import types
from collections.abc import Callable, Iterator, Mapping
from typing import Annotated, Any, Literal, Union, get_args, get_origin

from pydantic import BaseModel, Field

from ..cautions import CAUTIONS
from ..context import SpotContext
from ..files import is_file_field
from . import indoor_light, rf, solar, thermoelectric, vibration
from .base import PowerLevel, PresetField, SizeKnob, SourceBase, SourceKind, SourceOutput

#: The registered kinds by their ``kind`` tag, in registration order.
SOURCE_KINDS: dict[str, SourceKind] = {}
_ON_CHANGE: list[Callable[[], None]] = []
_UNIONS = (Union, types.UnionType)


def source_union() -> Any:
    """The site-file type of one ``[[source]]`` table: the registered models, told apart by ``kind``."""
    models = tuple(k.model for k in SOURCE_KINDS.values())
    return Annotated[Union[models], Field(discriminator="kind")]  # noqa: UP007 (a runtime tuple of types)


def _plain(annotation: Any) -> Any:
    while get_origin(annotation) is Annotated:
        annotation = get_args(annotation)[0]
    union = get_origin(annotation) in _UNIONS
    args = [a for a in get_args(annotation) if a is not type(None)] if union else []
    return args[0] if len(args) == 1 else annotation


def field_model(model: type[BaseModel], path: str) -> tuple[type[BaseModel], str]:
    """The model that declares the last part of a dotted field path, and that part's name."""
    *parents, last = path.split(".")
    for name in parents:
        inner = _plain(model.model_fields[name].annotation)
        if not (isinstance(inner, type) and issubclass(inner, BaseModel)):
            raise KeyError(path)
        model = inner
    if last not in model.model_fields:
        raise KeyError(path)
    return model, last


def _file_fields_of(model: type[BaseModel], prefix: str = "") -> set[str]:
    """Dotted paths of every field named by the file rule, through nested tables and their variants."""
    found: set[str] = set()
    for name, info in model.model_fields.items():
        path = f"{prefix}{name}"
        if is_file_field(name):
            found.add(path)
        ann = info.annotation
        while get_origin(ann) is Annotated:
            ann = get_args(ann)[0]
        members = get_args(ann) if get_origin(ann) in (*_UNIONS, list, tuple) else (ann,)
        for member in members:
            member = _plain(member)
            if isinstance(member, type) and issubclass(member, BaseModel):
                found |= _file_fields_of(member, f"{path}.")
    return found


def check_kind(kind: SourceKind) -> None:
    """Refuse a record whose declarations do not match its model (raises ValueError naming the gap)."""
    model = kind.model
    tag = model.model_fields.get("kind")
    if tag is None or get_origin(tag.annotation) is not Literal or get_args(tag.annotation) != (kind.kind,):
        raise ValueError(f"{model.__name__} needs kind: Literal[{kind.kind!r}]")
    if not kind.size_knobs:
        raise ValueError(f"source kind {kind.kind!r} declares no size knob")
    for knob in kind.size_knobs:
        owner, name = field_model(model, knob.field)
        if _plain(owner.model_fields[name].annotation) not in (int, float):
            raise ValueError(f"size knob {knob.field!r} of {kind.kind!r} is not a number")
    declared, named = set(kind.file_fields), _file_fields_of(model)
    if declared != named:
        raise ValueError(f"source kind {kind.kind!r}: file_fields {sorted(declared)} but its model names files in "
                         f"{sorted(named)} (a field naming a file is called 'file' or '*_file')")
    for preset in kind.presets:
        field_model(model, preset.field)
    unknown = set(kind.cautions) - set(CAUTIONS)
    if unknown:
        raise ValueError(f"source kind {kind.kind!r} names unknown cautions: {', '.join(sorted(unknown))}")


def on_kinds_changed(callback: Callable[[], None]) -> None:
    """Call ``callback`` after every registration change (the site-file model rebuilds its union)."""
    _ON_CHANGE.append(callback)


def _changed() -> None:
    global AnySource
    AnySource = source_union()
    for callback in _ON_CHANGE:
        callback()


def register_kind(kind: SourceKind) -> None:
    """Add a source kind (checked by :func:`check_kind`); its ``kind`` tag must be new."""
    if kind.kind in SOURCE_KINDS:
        raise ValueError(f"source kind {kind.kind!r} is registered already")
    check_kind(kind)
    SOURCE_KINDS[kind.kind] = kind
    _changed()


def unregister_kind(name: str) -> None:
    """Remove a registered source kind (tests that register a kind of their own use this)."""
    del SOURCE_KINDS[name]
    _changed()


def kind_of(spec: SourceBase) -> SourceKind:
    """The record of a source's kind."""
    return SOURCE_KINDS[spec.kind]  # type: ignore[attr-defined]


class KindTable(Mapping[str, Any]):
    """A live view of one attribute of every registered kind, by kind tag:
    ``KindTable("name")["rf"] == "RF receiver"``. A kind registered later shows at once."""

    def __init__(self, attribute: str) -> None:
        self.attribute = attribute

    def __getitem__(self, kind: str) -> Any:
        return getattr(SOURCE_KINDS[kind], self.attribute)

    def __iter__(self) -> Iterator[str]:
        return iter(list(SOURCE_KINDS))

    def __len__(self) -> int:
        return len(SOURCE_KINDS)


def source_output(spec: SourceBase, ctx: SpotContext) -> SourceOutput:
    """Run the yield model registered for ``spec.kind``."""
    return kind_of(spec).output(spec, ctx)


for _module in (solar, indoor_light, thermoelectric, vibration, rf):   # one line per kind
    check_kind(_module.KIND)
    SOURCE_KINDS[_module.KIND.kind] = _module.KIND
AnySource = source_union()

__all__ = ["SOURCE_KINDS", "AnySource", "KindTable", "PowerLevel", "PresetField", "SizeKnob", "SourceBase",
           "SourceKind", "SourceOutput", "check_kind", "field_model", "kind_of", "on_kinds_changed", "register_kind",
           "source_output", "source_union", "unregister_kind"]

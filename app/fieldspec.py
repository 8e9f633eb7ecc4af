"""The spot editor as data: controls generated from the site-file models, and edits applied to a site dict.

No Dash here. :func:`editor_groups` walks the pydantic models of :mod:`siteharvest.site` with the
current site dict and returns groups of :class:`Control` / :class:`Block` items, each control knowing
its path in the site dict, its unit and bounds (from :func:`siteharvest.fields.bounds_of`) and how to
read the text a user types (its *role*). :func:`apply_edit` and :func:`apply_action` turn one change
into a candidate site dict; the caller validates it with :func:`siteharvest.site.parse_site` and keeps
the old spot when it fails.
"""

from __future__ import annotations

import copy
import math
import re
import types
from dataclasses import dataclass, field
from typing import Annotated, Any, Literal, Union, get_args, get_origin

from pydantic import BaseModel

from siteharvest.conditioning import CONDITIONING_PRESETS, ConditioningSpec
from siteharvest.demand import NodeSpec
from siteharvest.fields import bounds_of
from siteharvest.site import RunSpec, SiteSpec, SpotSpec
from siteharvest.sources import SOURCE_KINDS, KindTable, PresetField, field_model
from siteharvest.store import BACKUP_PRESETS, CELL_PRESETS, BackupCellSpec, RechargeableCellSpec, SupercapacitorSpec
from siteharvest.weather import PLACE_DEPENDENT_DEFAULTS, SyntheticWeatherSpec, WeatherSpec, bundled_weather_files

# Fields that start from a table of presets: choosing another entry must bring that entry's values,
# so the keys it supplies are dropped from the section before validation (the model merges the
# preset underneath what is given). Source kinds declare theirs in their records (PresetField).
STORE_PRESETS: tuple[tuple[type[BaseModel], PresetField], ...] = (
    (ConditioningSpec, PresetField("preset", "conditioning", CONDITIONING_PRESETS,
                                   clears=("efficiency_vs_input_v",))),
    (RechargeableCellSpec, PresetField("chemistry", "cell-chemistry", CELL_PRESETS)),
    (BackupCellSpec, PresetField("cell", "backup-cell", BACKUP_PRESETS)),
)
# Editor groups that are not a source kind's own; each kind names its group (and that group's title).
FIXED_GROUPS = {"place": "Place and weather", "mounting": "Mounting"}
LAST_GROUPS = {"node": "The node's tasks", "store": "The store", "run": "Judging the year"}
# What each kind is called, which group it sits in and what a new one starts from: from the records.
KIND_NAMES = KindTable("name")
SOURCE_GROUPS = KindTable("group")
NEW_SOURCE = KindTable("new_source")


def preset_fields() -> dict[tuple[type[BaseModel], str], PresetField]:
    """Every field that starts from a preset table, by (model that declares it, field name)."""
    found = {(model, p.field): p for model, p in STORE_PRESETS}
    for kind in SOURCE_KINDS.values():
        for preset in kind.presets:
            found[field_model(kind.model, preset.field)] = preset
    return found


def preset_table(key: str) -> PresetField:
    """The preset field whose table the editor calls ``key`` (``thermo-module``)."""
    return next(p for p in preset_fields().values() if p.key == key)


def group_titles() -> dict[str, str]:
    """Titles of the editor's groups in order: place and mounting, each kind's group, node, store, run."""
    titles = dict(FIXED_GROUPS)
    for kind in SOURCE_KINDS.values():
        titles[kind.group] = kind.group_title
    return {**titles, **LAST_GROUPS}


NEW_ITEM: dict[str, dict[str, Any]] = {
    "task": {"name": "new task", "current_ma": 5.0, "duration_ms": 20.0, "every_s": 600.0},
    "peak": {"frequency_hz": 50.0, "accel": 1.0, "accel_unit": "m/s2", "measure": "rms"},
}
TOGGLE_LABELS = {"backup": "fit a primary backup cell"}
SPOT_IN_MOUNTING = ("mounting_height_m", "hazardous_area")
WEATHER_CHOICES = {"synthetic": "synthetic year", "bundled": "typical year shipped with pvlib",
                   "file": "uploaded weather file"}

_UNIT_SUFFIXES = ("_pct_per_month", "_pct_per_year", "_v_per_m_s2", "_v_s_per_m", "_uw_cm2", "_w_m2k",
                  "_per_k", "_m_s2", "_k_w", "_v_k", "_cm2", "_mah", "_deg", "_dbm", "_dbi", "_mhz", "_ohm",
                  "_pct", "_db", "_hz", "_ms", "_mm", "_ua", "_ma", "_uw", "_mw", "_lx", "_years", "_m",
                  "_h", "_c", "_s", "_v", "_f", "_g", "_k")
_UNIT_IN_DOC = re.compile(r"\s*\[([^\]]*)\]\s*$")


class EditProblem(ValueError):
    """A typed value that cannot even be read (not a number...): ``expected`` and ``got``."""

    def __init__(self, expected: str, got: Any = None) -> None:
        self.expected, self.got = expected, got
        super().__init__(f"expected {expected}" + (f", got '{got}'" if got not in (None, "") else ""))


@dataclass
class Control:
    """One input of the editor."""

    path: str
    name: str
    label: str
    unit: str
    doc: str
    bounds: str
    role: str
    value: Any
    options: list[tuple[str, str]] | None = None
    placeholder: str = ""


@dataclass
class Block:
    """A titled box of controls: a nested table, one item of a list, or a list with its add button."""

    title: str
    path: str
    items: list[Control | Block] = field(default_factory=list)
    remove_action: str | None = None  # action name of the remove button
    add_action: str | None = None  # action name of the add button (lists)
    add_label: str = ""
    collapsed: bool = False
    upload: str | None = None  # "weather" or "spectrum": an upload area belongs here
    note: str = ""


@dataclass
class Group:
    key: str
    title: str
    items: list[Control | Block] = field(default_factory=list)
    add_actions: list[tuple[str, str]] = field(default_factory=list)  # (action, label)


# --------------------------------------------------------------------------------------------------
# annotations


def _strip_annotated(t: Any) -> Any:
    while get_origin(t) is Annotated:
        t = get_args(t)[0]
    return t


def _is_model(t: Any) -> bool:
    return isinstance(t, type) and issubclass(t, BaseModel)


def _union_args(t: Any) -> tuple[Any, ...]:
    if get_origin(t) in (Union, types.UnionType):
        return get_args(t)
    return ()


def _item_bounds(t: Any) -> str:
    """Bounds of the items of a list (from their Annotated constraints)."""
    if get_origin(t) is not Annotated:
        return ""
    low = high = None
    for meta in get_args(t)[1:]:
        for m in getattr(meta, "metadata", [meta]):
            if hasattr(m, "ge"):
                low = f"≥ {m.ge:g}"
            elif hasattr(m, "gt"):
                low = f"> {m.gt:g}"
            elif hasattr(m, "le"):
                high = f"≤ {m.le:g}"
            elif hasattr(m, "lt"):
                high = f"< {m.lt:g}"
    return "each " + ", ".join(x for x in (low, high) if x) if (low or high) else ""


def classify(annotation: Any) -> tuple[str, list[str] | None]:
    """The role of a leaf field (how its text is read) and its choices, from its annotation."""
    t = _strip_annotated(annotation)
    args = _union_args(t)
    if args:
        rest = [a for a in args if a is not type(None)]
        optional = len(rest) < len(args)
        if len(rest) == 1:
            role, options = classify(rest[0])
            return ("opt-" + role if optional and not role.startswith("opt-") else role), options
        if any(get_origin(_strip_annotated(a)) is Literal for a in rest):
            return "num-or-word", [str(v) for a in rest if get_origin(a) is Literal for v in get_args(a)]
        return "text", None
    origin = get_origin(t)
    if origin is Literal:
        return "choice", [str(v) for v in get_args(t)]
    if t is bool:
        return "bool", None
    if t is int:
        return "int", None
    if t is float:
        return "float", None
    if t is str:
        return "text", None
    if origin in (list, tuple):
        items = [a for a in get_args(t) if a is not Ellipsis]
        item = _strip_annotated(items[0]) if items else str
        if get_origin(item) is tuple:
            return "pairs", None
        if item is int:
            return "ints", None
        if item is float:
            return "floats", None
        return "words", None
    return "text", None


def humanise(name: str, unit: str) -> str:
    label = name
    if unit:
        for suffix in _UNIT_SUFFIXES:
            if label.endswith(suffix) and len(label) > len(suffix):
                label = label[: -len(suffix)]
                break
    return label.replace("_", " ")


def _num(x: float) -> str:
    return format(float(x), ".10g")


def format_bounds(model: type[BaseModel], name: str) -> tuple[str, str, str]:
    """(unit, bounds text, doc) of a field: '0 … 90', '> 0, ≤ 1', '≥ 0'."""
    b = bounds_of(model, name)
    doc = b.doc
    unit = b.unit
    m = _UNIT_IN_DOC.search(doc)
    if m:
        doc = doc[: m.start()]
        unit = unit or m.group(1)
    parts = []
    if b.low is not None and b.high is not None and b.low_inclusive and b.high_inclusive:
        text = f"{_num(b.low)} … {_num(b.high)}"
    else:
        if b.low is not None:
            parts.append(("≥ " if b.low_inclusive else "> ") + _num(b.low))
        if b.high is not None:
            parts.append(("≤ " if b.high_inclusive else "< ") + _num(b.high))
        text = ", ".join(parts)
    return ("" if unit == "-" else unit), text, doc


def display_value(role: str, value: Any) -> Any:
    """What the control shows for a stored value."""
    base = role.removeprefix("opt-")
    if value is None:
        return [] if base == "bool" else (None if base == "choice" or base.startswith("preset") else "")
    if base == "bool":
        return ["on"] if value else []
    if base in ("float", "int"):
        return _num(value) if base == "float" else str(int(value))
    if base in ("floats", "ints"):
        return ", ".join(_num(v) for v in value)
    if base == "words":
        return ", ".join(str(v) for v in value)
    if base == "pairs":
        return "; ".join(f"{_num(a)}, {_num(b)}" for a, b in value)
    if base == "num-or-word":
        return _num(value) if isinstance(value, int | float) else str(value)
    return value


# --------------------------------------------------------------------------------------------------
# reading typed text


class _Remove:
    """Marker: drop the key (an optional field left empty)."""


REMOVE = _Remove()


def _number(text: str, unit: str, integer: bool = False) -> float | int:
    try:
        x = float(text.replace("_", "").strip())
    except ValueError:
        raise EditProblem(f"a number{f' [{unit}]' if unit else ''}", text) from None
    if not math.isfinite(x):
        raise EditProblem("a finite number", text)
    if integer:
        if x != int(x):
            raise EditProblem("a whole number", text)
        return int(x)
    return x


def parse_value(role: str, raw: Any, unit: str = "") -> Any:
    """The value to put in the site dict for what the control holds (``REMOVE`` for an empty optional)."""
    optional = role.startswith("opt-")
    base = role.removeprefix("opt-")
    if base == "bool":
        return bool(raw)
    if base in ("choice",) or base.startswith("preset"):
        if raw in (None, ""):
            if optional:
                return REMOVE
            raise EditProblem("one of the choices", raw)
        return raw
    text = "" if raw is None else str(raw).strip()
    if text == "":
        if optional:
            return REMOVE
        if base == "text":
            return ""
        if base in ("floats", "ints", "words", "pairs"):
            return []
        raise EditProblem(f"a number{f' [{unit}]' if unit else ''}", "(empty)")
    if base == "float":
        return _number(text, unit)
    if base == "int":
        return _number(text, unit, integer=True)
    if base == "num-or-word":
        try:
            return _number(text, unit)
        except EditProblem:
            return text
    if base in ("floats", "ints"):
        return [_number(p, unit, base == "ints") for p in re.split(r"[,;\s]+", text) if p]
    if base == "words":
        return [p.strip() for p in text.split(",") if p.strip()]
    if base == "pairs":
        pairs = []
        for chunk in text.split(";"):
            nums = [p for p in re.split(r"[,\s]+", chunk.strip()) if p]
            if not nums:
                continue
            if len(nums) != 2:
                raise EditProblem("pairs of numbers 'x, y; x, y'", chunk.strip())
            pairs.append([_number(nums[0], ""), _number(nums[1], "")])
        return pairs
    return text


# --------------------------------------------------------------------------------------------------
# paths


def split_path(path: str) -> list[str | int]:
    return [int(p) if p.isdigit() else p for p in path.split(".") if p != ""]


def join_path(*parts: Any) -> str:
    return ".".join(str(p) for p in parts if p != "")


def _container(site: dict[str, Any], keys: list[str | int], create: bool = True) -> Any:
    node: Any = site
    for k in keys:
        if isinstance(node, list):
            node = node[int(k)]
        else:
            if k not in node or node[k] is None:
                if not create:
                    raise KeyError(k)
                node[k] = {}
            node = node[k]
    return node


def value_at(site: dict[str, Any], path: str) -> Any:
    node: Any = site
    for k in split_path(path):
        try:
            node = node[k]
        except (KeyError, IndexError, TypeError):
            return None
    return node


# --------------------------------------------------------------------------------------------------
# the walk


def _control(model: type[BaseModel], name: str, data: dict[str, Any], path: str) -> Control:
    info = model.model_fields[name]
    role, options = classify(info.annotation)
    unit, bounds, doc = format_bounds(model, name)
    preset = preset_fields().get((model, name))
    if preset:
        optional = role.startswith("opt-")
        role, options = f"{'opt-' if optional else ''}preset:{preset.key}", list(preset.table)
    if role in ("pairs", "opt-pairs"):
        bounds = bounds or "pairs 'x, y; x, y'"
    if role.removeprefix("opt-") in ("floats", "ints", "words"):
        args = [a for a in get_args(_strip_annotated(info.annotation)) if a is not Ellipsis]
        bounds = _item_bounds(args[0]) if args else ""
        bounds = ", ".join(x for x in (bounds, "comma-separated") if x)
    value = data.get(name)
    placeholder = ""
    if role.startswith("opt-") and info.default is None:
        placeholder = "not set"
    if model is SyntheticWeatherSpec and name in PLACE_DEPENDENT_DEFAULTS:  # left empty: resolved by hemisphere
        role, placeholder = f"opt-{role.removeprefix('opt-')}", "default for the spot's hemisphere"
    return Control(path=join_path(path, name), name=name, label=humanise(name, unit), unit=unit, doc=doc,
                   bounds=bounds, role=role, value=display_value(role, value),
                   options=[(o, o) for o in options] if options else None, placeholder=placeholder)


def walk(model: type[BaseModel], data: dict[str, Any], path: str, skip: tuple[str, ...] = ()) -> list[Control | Block]:
    """Controls and nested blocks for every field of ``model`` at ``path``."""
    items: list[Control | Block] = []
    for name, info in model.model_fields.items():
        if name in skip:
            continue
        p = join_path(path, name)
        ann = _strip_annotated(info.annotation)
        value = data.get(name)
        union = [a for a in _union_args(ann) if a is not type(None)]
        if info.discriminator and union and all(_is_model(a) for a in union):
            items.append(_variant_block(name, info.discriminator, union, value or {}, p, model))
        elif _is_model(ann):
            items.append(Block(title=humanise(name, ""), path=p, items=walk(ann, value or {}, p),
                               collapsed=name in ("conditioning", "heat_sink")))
        elif len(union) == 1 and _is_model(union[0]) and len(_union_args(ann)) == 2:
            items.append(_optional_block(name, union[0], value, p, info.description or ""))
        elif get_origin(ann) is list and get_args(ann) and _is_model(_strip_annotated(get_args(ann)[0])):
            items.append(_list_block(name, _strip_annotated(get_args(ann)[0]), value or [], p))
        else:
            items.append(_control(model, name, data, path))
    # plain fields first, nested tables after them
    return [i for i in items if isinstance(i, Control)] + [i for i in items if isinstance(i, Block)]


def _variant_block(name: str, disc: str, members: list[type[BaseModel]], data: dict[str, Any], path: str,
                   parent: type[BaseModel]) -> Block:
    tags = {get_args(m.model_fields[disc].annotation)[0]: m for m in members}
    current = data.get(disc) or next(iter(tags))
    chooser = Control(path=join_path(path, disc), name=disc, label=disc.replace("_", " "), unit="",
                      doc=(parent.model_fields[name].description or ""), bounds="", role=f"variant:{disc}",
                      value=current, options=[(t, t.replace("-", " ")) for t in tags])
    return Block(title=humanise(name, ""), path=path,
                 items=[chooser, *walk(tags[current], data, path, skip=(disc,))])


def _optional_block(name: str, model: type[BaseModel], data: dict[str, Any] | None, path: str, doc: str) -> Block:
    toggle = Control(path=path, name=name, label=TOGGLE_LABELS.get(name, f"give {humanise(name, '')}"), unit="",
                     doc=doc, bounds="",
                     role="toggle", value=["on"] if data is not None else [], options=[("on", "yes")])
    items: list[Control | Block] = [toggle]
    if data is not None:
        items.extend(walk(model, data, path))
    return Block(title=humanise(name, ""), path=path, items=items)


def _list_block(name: str, model: type[BaseModel], data: list[dict[str, Any]], path: str) -> Block:
    items: list[Control | Block] = []
    for i, item in enumerate(data):
        title = str(item.get("name") or f"{name} {i + 1}")
        items.append(Block(title=title, path=join_path(path, i), items=walk(model, item, join_path(path, i)),
                           remove_action="remove"))
    return Block(title=humanise(name, "") + ("s" if not name.endswith("s") else ""), path=path, items=items,
                 add_action=f"add-item:{name}", add_label=f"add {_article(name)}")


def _article(noun: str) -> str:
    return ("an " if noun[:1].lower() in "aeio" or noun.startswith("RF") else "a ") + noun


def _weather_block(data: dict[str, Any], files: dict[str, str]) -> Block:
    given = next((k for k in ("file", "bundled", "synthetic") if data.get(k) is not None), "synthetic")
    chooser = Control(path="weather.source", name="source", label="weather from", unit="",
                      doc="where the hourly weather year comes from", bounds="", role="variant:weather",
                      value=given, options=list(WEATHER_CHOICES.items()))
    items: list[Control | Block] = [chooser]
    if given == "synthetic":
        items.extend(walk(SyntheticWeatherSpec, data.get("synthetic") or {}, "weather.synthetic"))
    elif given == "bundled":
        ctl = _control(WeatherSpec, "bundled", data, "weather")
        ctl.role, ctl.options = "choice", [(n, n) for n in bundled_weather_files()]
        ctl.value = data.get("bundled")
        items.append(ctl)
        items.append(_control(WeatherSpec, "file_format", data, "weather"))
    else:
        shown = Control(path="weather.file", name="file", label="file", unit="", doc="the weather file in use",
                        bounds="", role="readonly", value=str(data.get("file")))
        items.extend([shown, _control(WeatherSpec, "file_format", data, "weather")])
    return Block(title="weather year", path="weather", items=items, upload="weather",
                 note="Upload an EPW, TMY3 or CSV weather file to use it here.")


def editor_groups(site: dict[str, Any], files: dict[str, str] | None = None) -> list[Group]:
    """Every field of the site file, grouped by what it describes."""
    spot = site.get("spot", {})
    groups = {key: Group(key, title) for key, title in group_titles().items()}
    place_fields = [n for n in SpotSpec.model_fields if n not in SPOT_IN_MOUNTING]
    groups["place"].items = [_control(SpotSpec, n, spot, "spot") for n in place_fields]
    groups["place"].items.append(_weather_block(site.get("weather") or {}, files or {}))
    groups["mounting"].items = [_control(SpotSpec, n, spot, "spot") for n in SPOT_IN_MOUNTING]
    for i, src in enumerate(site.get("source") or []):
        kind = src.get("kind", "")
        if kind not in SOURCE_KINDS:
            continue
        record = SOURCE_KINDS[kind]
        path = join_path("source", i)
        title = f"{src.get('id', i)} · {record.name}"
        block = Block(title=title, path=path, items=walk(record.model, src, path, skip=("kind",)),
                      remove_action="remove-source", upload=record.upload)
        groups[record.group].items.append(block)
    for record in SOURCE_KINDS.values():
        groups[record.group].add_actions.append((f"add-source:{record.kind}", f"add {_article(record.name)}"))
    groups["node"].items = walk(NodeSpec, site.get("node") or {}, "node")
    store = site.get("store") or {}
    groups["store"].items = [_variant_block("store", "kind", list(_store_members()), store, "store", SiteSpec)]
    groups["run"].items = walk(RunSpec, site.get("run") or {}, "run")
    return list(groups.values())


def _store_members() -> tuple[type[BaseModel], ...]:
    return (SupercapacitorSpec, RechargeableCellSpec)


def controls_of(items: list[Control | Block] | list[Group]) -> list[Control]:
    """Every control inside groups or blocks, depth first."""
    out: list[Control] = []
    for item in items:
        if isinstance(item, Control):
            out.append(item)
        else:
            out.extend(controls_of(item.items))
    return out


# --------------------------------------------------------------------------------------------------
# edits


def apply_edit(site: dict[str, Any], path: str, role: str, raw: Any, *,
               uploads: dict[str, str] | None = None) -> tuple[dict[str, Any], bool]:
    """A candidate site dict with one control's value applied, and whether the editor must be rebuilt.

    Raises :class:`EditProblem` when the text cannot be read at all; the model checks the rest.
    """
    candidate = copy.deepcopy(site)
    keys = split_path(path)
    *parent_keys, last = keys
    if role == "readonly":
        raise EditProblem("no change here (upload a file instead)")
    if role.startswith("variant:"):
        which = role.split(":", 1)[1]
        _apply_variant(candidate, keys, which, raw, uploads or {})
        return candidate, True
    if role == "toggle":
        parent = _container(candidate, parent_keys)
        if raw:
            parent.setdefault(last, {})
        else:
            parent.pop(last, None)
        return candidate, True
    value = parse_value(role, raw)
    parent = _container(candidate, parent_keys)
    if value is REMOVE:
        if isinstance(parent, dict):
            parent.pop(last, None)
    else:
        parent[last] = value
    structural = False
    if "preset:" in role:
        preset = preset_table(role.split(":", 1)[1])
        chosen = preset.table.get(value, {}) if isinstance(value, str) else {}
        for key in chosen:
            parent.pop(key, None)
        if value is not REMOVE:
            for key in preset.clears:
                parent.pop(key, None)
        structural = True
    if last in ("name", "id"):
        structural = True  # titles of items and cards show them
    return candidate, structural


def _apply_variant(site: dict[str, Any], keys: list[str | int], which: str, raw: Any,
                   uploads: dict[str, str]) -> None:
    if which == "weather":
        weather = site.setdefault("weather", {})
        fmt = weather.get("file_format", "auto")
        if raw == "synthetic":
            site["weather"] = {"synthetic": weather.get("synthetic") or {}, "file_format": fmt}
        elif raw == "bundled":
            names = bundled_weather_files()
            site["weather"] = {"bundled": weather.get("bundled") or (names[0] if names else ""), "file_format": "auto"}
        elif raw == "file":
            if weather.get("file"):
                return
            if not uploads:
                raise EditProblem("a weather file: upload an EPW, TMY3 or CSV file below")
            site["weather"] = {"file": list(uploads)[-1], "file_format": "auto"}
        else:
            raise EditProblem("synthetic, bundled or file", raw)
        return
    *parent_keys, disc = keys
    section = _container(site, parent_keys)
    if section.get(disc) == raw:
        return
    kept = {k: section[k] for k in ("backup",) if k in section}
    section.clear()
    section.update({disc: raw, **kept})


def apply_action(site: dict[str, Any], action: str, path: str) -> dict[str, Any]:
    """A candidate site dict after an add or remove button."""
    candidate = copy.deepcopy(site)
    keys = split_path(path)
    if action.startswith("add-source:"):
        kind = action.split(":", 1)[1]
        taken = {s.get("id") for s in candidate.get("source", [])}
        n = 1
        while f"{kind.replace('_', '-')}-{n}" in taken:
            n += 1
        name = SOURCE_KINDS[kind].name if kind in SOURCE_KINDS else kind
        new = {"id": f"{kind.replace('_', '-')}-{n}", "kind": kind, "label": f"new {name} {n}",
               **copy.deepcopy(NEW_SOURCE.get(kind, {}))}
        candidate.setdefault("source", []).append(new)
    elif action.startswith("add-item:"):
        name = action.split(":", 1)[1]
        container = _container(candidate, keys[:-1])
        container.setdefault(keys[-1], []).append(copy.deepcopy(NEW_ITEM[name]))
    elif action in ("remove", "remove-source"):
        *parent_keys, index = keys
        container = _container(candidate, parent_keys, create=False)
        if isinstance(container, list) and isinstance(index, int) and index < len(container):
            container.pop(index)
    else:
        raise EditProblem("a known action", action)
    return candidate


def apply_spectrum(site: dict[str, Any], path: str, name: str) -> tuple[dict[str, Any], list[str]]:
    """Point the vibration source at ``path`` to an uploaded spectrum file; say what was assumed."""
    candidate = copy.deepcopy(site)
    src = _container(candidate, split_path(path))
    for key in ("preset", "peak"):
        src.pop(key, None)
    src["spectrum_file"] = name
    assumed = []
    kind = src.get("spectrum_kind", "amplitude")
    if not src.get("spectrum_unit"):
        src["spectrum_unit"] = "m/s2" if kind == "amplitude" else "g2/Hz"
        assumed.append(f"values taken as {src['spectrum_unit']}")
    if kind == "amplitude" and not src.get("spectrum_measure"):
        src["spectrum_measure"] = "rms"
        assumed.append("as RMS values")
    return candidate, assumed

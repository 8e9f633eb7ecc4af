"""The site file: one mounting spot per TOML file, validated into a :class:`SiteSpec`.

Every field carries its unit in its name and declared bounds (see ``siteharvest schema`` for the
JSON Schema). Any problem is reported as one :class:`SiteInputError` line naming the file, the
field (and the line where it can be found) and what was expected.
"""

from __future__ import annotations

import json
import math
import re
import tomllib
from pathlib import Path
from typing import Any, Literal

import tomli_w
from pydantic import Field, PrivateAttr, ValidationError, field_validator, model_validator

from .demand import NodeSpec
from .errors import ChoiceError, SiteInputError, one_line
from .fields import Section, quantity
from .files import FolderFiles, SiteFiles
from .schedule import parse_date
from .sources import SOURCE_KINDS, AnySource, on_kinds_changed, source_union
from .store import StoreSpec
from .weather import WeatherSpec


class SpotSpec(Section):
    """Where the node is mounted."""

    name: str = Field(..., min_length=1, max_length=200, description="what and where the spot is")
    latitude_deg: float = quantity(..., "deg", "latitude, north positive", ge=-90, le=90, step=0.01)
    longitude_deg: float = quantity(..., "deg", "longitude, east positive", ge=-180, le=180, step=0.01)
    altitude_m: float = quantity(0.0, "m", "height above sea level", ge=-500, le=9000)
    utc_offset_h: float = quantity(0.0, "h", "local standard time offset from UTC (no daylight saving)",
                                   ge=-12, le=14, step=0.5)
    indoors: bool = Field(False, description="whether the spot (and the node's store) is indoors")
    indoor_air_c: float = quantity(21.0, "degC", "indoor air temperature where the spot is indoors",
                                   ge=-30, le=60)
    mounting_height_m: float = quantity(1.5, "m", "height above the floor or ground the installer works at",
                                        ge=0, le=500)
    hazardous_area: bool = Field(False, description="whether the spot lies in a classified explosive "
                                 "atmosphere zone")
    notes: str = Field("", max_length=2000, description="free text for the installer")


class RunSpec(Section):
    """How the year is simulated and judged."""

    install_date: str | None = Field(None, description="date the node is installed with an empty store, "
                                     "'MM-DD'; default: the first day of the source's worst month")
    target_deficit_days: int = quantity(0, "days/yr", "deficit days per year the node may tolerate",
                                        ge=0, le=365)

    @model_validator(mode="after")
    def _date(self) -> RunSpec:
        if self.install_date is not None:
            parse_date(self.install_date)
        return self


class MeasuredField(Section):
    """Where a field's value came from when a survey log set it (one ``[[measured]]`` table).

    Written by ``siteharvest survey``; a field without a record is assumed (typed in or a default).
    """

    path: str = Field(..., min_length=1, max_length=200,
                      pattern=r"^(spot|source\[[A-Za-z0-9_.\-]+\])\.[A-Za-z_][A-Za-z0-9_.]*$",
                      description="the field: 'source[<id>].<field>' or 'spot.<field>'")
    survey: Literal["light", "temperature", "vibration"] = Field(..., description="the kind of log it was "
                                                                 "fitted from")
    logs: list[str] = Field(..., min_length=1, max_length=100, description="the log files it was fitted from, "
                            "as named when fitted (a record only: nothing reads them)")
    first_date: str = Field(..., pattern=r"^\d{4}-\d{2}-\d{2}$", description="first logged date, YYYY-MM-DD")
    last_date: str = Field(..., pattern=r"^\d{4}-\d{2}-\d{2}$", description="last logged date, YYYY-MM-DD")
    fit: str = Field("", max_length=500, description="the fit's quality in a line")
    year_spread_pct: float | None = quantity(None, "%", "half-width of the 90 % interval the log's extension "
                                             "to a year leaves", ge=0, le=1e6)

    @field_validator("logs")
    @classmethod
    def _names(cls, v: list[str]) -> list[str]:
        if any(not name or len(name) > 500 for name in v):
            raise ValueError("log names of 1 to 500 characters")
        return v


class SiteSpec(Section):
    """One mounting spot: place, weather, the node, its store and the candidate sources."""

    spot: SpotSpec
    weather: WeatherSpec = Field(default_factory=WeatherSpec, description="the weather year")
    node: NodeSpec = Field(default_factory=NodeSpec, description="the sensor node's demand")
    store: StoreSpec = Field(..., description="the energy store")
    source: list[AnySource] = Field(..., min_length=1, max_length=12,
                                    description="candidate harvesters at this spot")
    run: RunSpec = Field(default_factory=RunSpec, description="simulation and judgement settings")
    measured: list[MeasuredField] | None = Field(None, max_length=500, description="fields whose value a "
                                                 "survey log set, with the log, its dates and the fit")
    _files: SiteFiles = PrivateAttr(default_factory=FolderFiles)
    _file: str | None = PrivateAttr(default=None)

    @model_validator(mode="after")
    def _unique_ids(self) -> SiteSpec:
        ids = [s.id for s in self.source]
        dupes = sorted({i for i in ids if ids.count(i) > 1})
        if dupes:
            raise ValueError(f"source ids must be unique; repeated: {', '.join(dupes)}")
        return self

    @property
    def files(self) -> SiteFiles:
        """Where the files this spot names are read from (see :mod:`siteharvest.files`)."""
        return self._files

    @property
    def base_dir(self) -> Path | None:
        """The site file's folder when its files resolve beside it (the command line's rule), else None."""
        return self._files.folder if isinstance(self._files, FolderFiles) else None

    @property
    def file(self) -> str | None:
        return self._file


def measured_fields(spec: SiteSpec) -> dict[str, MeasuredField]:
    """Fields a survey set, by path (``source[<id>].<field>``, ``spot.<field>``): their provenance record.

    Records naming a source id the site no longer has are left out; any field not returned is assumed.
    Front ends mark each input measured or assumed with this.
    """
    ids = {s.id for s in spec.source}
    out: dict[str, MeasuredField] = {}
    for record in spec.measured or []:
        if record.path.startswith("source[") and record.path[7:].split("]", 1)[0] not in ids:
            continue
        out[record.path] = record
    return out


def _rebuild_sources() -> None:
    """Take the registered source kinds into the site-file model (after a kind is added or removed)."""
    SiteSpec.model_fields["source"].annotation = list[source_union()]  # type: ignore[misc]
    SiteSpec.model_rebuild(force=True)


on_kinds_changed(_rebuild_sources)


_TOML_LINE = re.compile(r"line (\d+)")
#: Largest site file read [characters]: real ones are a few kB.
MAX_SITE_CHARS = 1_000_000
#: Deepest nesting of arrays and tables accepted (a real site file nests about 6 deep).
MAX_SITE_DEPTH = 32
#: Longest integer accepted anywhere [digits]: no field wants more than about 20.
MAX_INT_DIGITS = 300
_LONG_NUMBER = re.compile(r"[0-9_]{1000,}")


def _depth(data: Any) -> int:
    """How deep lists and dicts nest in ``data`` (iterative: hostile input cannot exhaust the stack);
    stops counting past :data:`MAX_SITE_DEPTH`."""
    deepest, stack = 0, [(data, 1)]
    while stack:
        node, level = stack.pop()
        if isinstance(node, dict | list | tuple):
            deepest = max(deepest, level)
            if level > MAX_SITE_DEPTH:
                return level
            stack.extend((child, level + 1) for child in (node.values() if isinstance(node, dict) else node))
    return deepest


def _huge_integer_at(data: Any) -> str | None:
    """Field path of the first integer longer than :data:`MAX_INT_DIGITS` digits, or None (no field wants
    one, and some checks would print it through Python's digit limit)."""
    stack: list[tuple[Any, str]] = [(data, "")]
    while stack:
        node, path = stack.pop()
        if isinstance(node, dict):
            stack.extend((child, f"{path}.{key}" if path else str(key)) for key, child in node.items())
        elif isinstance(node, list | tuple):
            stack.extend((child, f"{path}[{i}]") for i, child in enumerate(node))
        elif isinstance(node, int) and not isinstance(node, bool) and node.bit_length() > MAX_INT_DIGITS * 3.33:
            return path or "(top level)"
    return None


def _long_number_line(text: str) -> int | None:
    match = _LONG_NUMBER.search(text)
    return text.count("\n", 0, match.start()) + 1 if match else None


_STORE_TAGS = frozenset({"supercapacitor", "rechargeable"})


def _field_path(loc: tuple[Any, ...], data: Any) -> str:
    """A readable field path from a pydantic location, skipping union tags: ``source[1] ('roof').tilt_deg``."""
    parts: list[str] = []
    node = data
    for key in loc:
        if isinstance(key, int):
            item = node[key] if isinstance(node, list) and key < len(node) else None
            ident = item.get("id") if isinstance(item, dict) else None
            label = f"[{key}]" + (f" ('{ident}')" if ident else "")
            if parts:
                parts[-1] += label
            else:
                parts.append(label)
            node = item
        elif (key in SOURCE_KINDS or key in _STORE_TAGS) and not (isinstance(node, dict) and key in node):
            continue
        elif str(key).startswith(("function-", "tuple[", "list[", "json-or-python")):
            continue
        else:
            parts.append(str(key))
            node = node.get(key) if isinstance(node, dict) else None
    return ".".join(parts) or "(top level)"


# pydantic error types whose stock words speak Python ('dictionary', 'instance of ...'): TOML words instead.
_PLAIN_EXPECTED = {
    "model_type": "a table", "model_attributes_type": "a table", "dict_type": "a table",
    "list_type": "a list", "tuple_type": "a list", "set_type": "a list",
    "float_type": "a number", "float_parsing": "a number",
    "int_type": "a whole number", "int_parsing": "a whole number", "int_from_float": "a whole number",
    "int_parsing_size": "a whole number of sensible size",
    "string_type": "text in quotes", "bool_type": "true or false", "bool_parsing": "true or false",
    "finite_number": "a finite number", "recursion_loop": "no nesting this deep",
    "union_tag_not_found": "a table with a 'kind' field",
}


def _expected(err: dict[str, Any]) -> str:
    kind = err.get("type")
    ctx = err.get("ctx") or {}
    got = err.get("input")
    if isinstance(got, float) and not math.isfinite(got) and kind in (
            "less_than_equal", "less_than", "greater_than_equal", "greater_than", "finite_number"):
        return "a finite number"
    if kind in _PLAIN_EXPECTED:
        return _PLAIN_EXPECTED[kind]
    limit = ctx.get("min_length") if kind == "too_short" else ctx.get("max_length") if kind == "too_long" else None
    if limit is not None:
        return f"at {'least' if kind == 'too_short' else 'most'} {limit} item{'s' if limit != 1 else ''}"
    msg = str(err.get("msg", "a valid value"))
    for prefix in ("Value error, ", "Input should be ", "Assertion failed, "):
        if msg.startswith(prefix):
            msg = msg[len(prefix):]
    if err.get("type") == "missing":
        return "this field to be given (it is required)"
    if err.get("type") == "extra_forbidden":
        return "no such field here (check its spelling; see 'siteharvest schema')"
    if err.get("type") == "union_tag_invalid":
        tags = err.get("ctx", {}).get("expected_tags", "")
        return f"kind to be one of {tags}"
    return msg


def _line_of(text: str | None, field: str) -> int | None:
    """Line of ``key =`` in the file when the key's name occurs exactly once."""
    if not text:
        return None
    key = field.split(".")[-1].split("[")[0].split(" ")[0]
    hits = [n for n, line in enumerate(text.splitlines(), 1) if re.match(rf"\s*{re.escape(key)}\s*=", line)]
    return hits[0] if len(hits) == 1 else None


def site_error(exc: ValidationError, data: Any, file: str, text: str | None = None) -> SiteInputError:
    """One-line error for the first problem pydantic found."""
    err = exc.errors(include_url=False)[0]
    field = _field_path(tuple(err.get("loc", ())), data)
    cause = err.get("ctx", {}).get("error")
    if isinstance(cause, ChoiceError):   # a preset-type field: name the field itself and what it held
        field = f"{field}.{cause.key}" if field != "(top level)" else cause.key
        return SiteInputError(cause.expected, file=file, field=field, got=cause.got, line=_line_of(text, field))
    got = err.get("input")
    if isinstance(got, dict | list) or err.get("type") == "missing":
        got = None
    return SiteInputError(_expected(err), file=file, field=field, got=got, line=_line_of(text, field))


def parse_site(data: dict[str, Any], *, file: str = "<site>", base_dir: Path | None = None,
               text: str | None = None, files: SiteFiles | None = None) -> SiteSpec:
    """Validate a site dictionary (as read from TOML) into a :class:`SiteSpec`.

    The files it names resolve by ``files`` when given, else beside ``base_dir`` (default: the working
    folder), the command line's rule.
    """
    if not isinstance(data, dict):
        raise SiteInputError("a table of site fields", file=file, got=f"a {type(data).__name__}")
    depth = _depth(data)
    if depth > MAX_SITE_DEPTH:
        raise SiteInputError(f"arrays and tables nested at most {MAX_SITE_DEPTH} deep", file=file,
                             got=f"{depth} deep")
    huge = _huge_integer_at(data)
    if huge is not None:
        raise SiteInputError(f"a number of at most {MAX_INT_DIGITS} digits", file=file, field=huge,
                             got="a longer integer", line=_line_of(text, huge))
    try:
        spec = SiteSpec.model_validate(data)
    except ValidationError as exc:
        raise site_error(exc, data, file, text) from None
    except (RecursionError, TypeError, KeyError, IndexError, AttributeError, OverflowError, ValueError) as exc:
        # a validator met a shape it did not expect: still one line, never a traceback
        raise SiteInputError(f"a site file the checker can read (it stopped on a {type(exc).__name__})",
                             file=file) from None
    spec._files = files if files is not None else FolderFiles(Path(base_dir) if base_dir else Path.cwd())
    spec._file = file
    return spec


def parse_site_text(text: str, *, file: str = "<site>", base_dir: Path | None = None,
                    files: SiteFiles | None = None) -> SiteSpec:
    """Parse and validate TOML text."""
    if not isinstance(text, str):
        raise SiteInputError("TOML text", file=file, got=f"a {type(text).__name__}")
    if len(text) > MAX_SITE_CHARS:
        raise SiteInputError(f"a site file of at most {MAX_SITE_CHARS // 1_000_000} MB", file=file,
                             got=f"{len(text):,} characters")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        match = _TOML_LINE.search(str(exc))
        reason = one_line(str(exc).split(" (at")[0])
        raise SiteInputError(f"valid TOML ({reason})", file=file, line=int(match[1]) if match else None) from None
    except RecursionError:
        raise SiteInputError(f"arrays and tables nested at most {MAX_SITE_DEPTH} deep", file=file) from None
    except ValueError:   # an integer beyond Python's digit limit for conversion
        raise SiteInputError("numbers of at most 4300 digits (an integer field wants far fewer)",
                             file=file, line=_long_number_line(text)) from None
    except Exception as exc:   # anything else the TOML parser may raise on hostile text
        raise SiteInputError(f"valid TOML (the parser stopped: {type(exc).__name__})", file=file) from None
    return parse_site(data, file=file, base_dir=base_dir, text=text, files=files)


def load_site(path: str | Path) -> SiteSpec:
    """Read and validate a site file."""
    path = Path(path)
    if not path.is_file():
        raise SiteInputError("an existing site file (.toml)", file=str(path))
    try:
        with path.open("rb") as handle:
            raw = handle.read(MAX_SITE_CHARS + 1)
        if len(raw) > MAX_SITE_CHARS:
            raise SiteInputError(f"a site file of at most {MAX_SITE_CHARS // 1_000_000} MB", file=str(path),
                                 got=f"{path.stat().st_size:,} bytes")
        text = raw.decode("utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise SiteInputError(f"a readable UTF-8 text file ({exc.__class__.__name__})", file=str(path)) from None
    return parse_site_text(text, file=str(path), base_dir=path.resolve().parent)


def dump_site(spec: SiteSpec) -> str:
    """The spot as site-file TOML text that loads back to an equal :class:`SiteSpec`."""
    return tomli_w.dumps(_without_none(spec.model_dump(mode="json")))


def _without_none(value: Any) -> Any:
    """TOML has no null: leave unset optional fields out (after serialisers have had their say)."""
    if isinstance(value, dict):
        return {k: _without_none(v) for k, v in value.items() if v is not None}
    if isinstance(value, list):
        return [_without_none(v) for v in value]
    return value


def site_schema() -> dict[str, Any]:
    """The JSON Schema of the site file."""
    schema = SiteSpec.model_json_schema()
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "siteharvest site file"
    return schema


def site_schema_text() -> str:
    return json.dumps(site_schema(), indent=2)

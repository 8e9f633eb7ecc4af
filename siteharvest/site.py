"""The site file: one mounting spot per TOML file, validated into a :class:`SiteSpec`.

Every field carries its unit in its name and declared bounds (see ``siteharvest schema`` for the
JSON Schema). Any problem is reported as one :class:`SiteInputError` line naming the file, the
field (and the line where it can be found) and what was expected.
"""

from __future__ import annotations

import json
import re
import tomllib
from pathlib import Path
from typing import Any

import tomli_w
from pydantic import Field, PrivateAttr, ValidationError, model_validator

from .demand import NodeSpec
from .errors import SiteInputError
from .fields import Section, quantity
from .schedule import parse_date
from .sources import SOURCE_KINDS, AnySource
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


class SiteSpec(Section):
    """One mounting spot: place, weather, the node, its store and the candidate sources."""

    spot: SpotSpec
    weather: WeatherSpec = Field(default_factory=WeatherSpec, description="the weather year")
    node: NodeSpec = Field(default_factory=NodeSpec, description="the sensor node's demand")
    store: StoreSpec = Field(..., description="the energy store")
    source: list[AnySource] = Field(..., min_length=1, max_length=12,
                                    description="candidate harvesters at this spot")
    run: RunSpec = Field(default_factory=RunSpec, description="simulation and judgement settings")
    _base_dir: Path = PrivateAttr(default_factory=Path.cwd)
    _file: str | None = PrivateAttr(default=None)

    @model_validator(mode="after")
    def _unique_ids(self) -> SiteSpec:
        ids = [s.id for s in self.source]
        dupes = sorted({i for i in ids if ids.count(i) > 1})
        if dupes:
            raise ValueError(f"source ids must be unique; repeated: {', '.join(dupes)}")
        return self

    @property
    def base_dir(self) -> Path:
        return self._base_dir

    @property
    def file(self) -> str | None:
        return self._file


_TOML_LINE = re.compile(r"line (\d+)")


_UNION_TAGS = frozenset(SOURCE_KINDS) | {"supercapacitor", "rechargeable"}


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
        elif key in _UNION_TAGS and not (isinstance(node, dict) and key in node):
            continue
        elif str(key).startswith(("function-", "tuple[", "list[", "json-or-python")):
            continue
        else:
            parts.append(str(key))
            node = node.get(key) if isinstance(node, dict) else None
    return ".".join(parts) or "(top level)"


def _expected(err: dict[str, Any]) -> str:
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
    got = err.get("input")
    if isinstance(got, dict | list) or err.get("type") == "missing":
        got = None
    return SiteInputError(_expected(err), file=file, field=field, got=got, line=_line_of(text, field))


def parse_site(data: dict[str, Any], *, file: str = "<site>", base_dir: Path | None = None,
               text: str | None = None) -> SiteSpec:
    """Validate a site dictionary (as read from TOML) into a :class:`SiteSpec`."""
    try:
        spec = SiteSpec.model_validate(data)
    except ValidationError as exc:
        raise site_error(exc, data, file, text) from None
    spec._base_dir = base_dir or Path.cwd()
    spec._file = file
    return spec


def parse_site_text(text: str, *, file: str = "<site>", base_dir: Path | None = None) -> SiteSpec:
    """Parse and validate TOML text."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        match = _TOML_LINE.search(str(exc))
        raise SiteInputError("valid TOML (" + str(exc).split(" (at")[0] + ")", file=file,
                             line=int(match[1]) if match else None) from None
    return parse_site(data, file=file, base_dir=base_dir, text=text)


def load_site(path: str | Path) -> SiteSpec:
    """Read and validate a site file."""
    path = Path(path)
    if not path.is_file():
        raise SiteInputError("an existing site file (.toml)", file=str(path))
    try:
        text = path.read_text(encoding="utf-8")
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

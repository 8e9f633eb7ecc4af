"""Between the browser's state and the library: spot records, the files they name, and memo caches.

A *spot record* is what the browser keeps for one spot (in a ``dcc.Store``)::

    {"key": "roof-parapet", "site": {...dumped site dict...}, "origin": "served:3f2a...",
     "file": "roof-parapet.toml", "files": {"upload.epw": "<sha256 of its text>"}}

Nothing in a record is trusted, and no server path is in it. The files a spot names resolve by one
rule (:class:`siteharvest.files.ListedFiles`): among the uploads of the browser session that holds the
record (kept on the server, :mod:`siteharvest_app.uploads`), the bundled sample data, and, for a spot the server
was started with, the files that spot's own site file named then (``origin`` picks that list, which
lives here on the server). Anything else is refused without looking at the disk.

The caches below are caches, not state: every entry is a pure function of its key (the spot's content
and its files' digests), so a restart or an eviction only costs time.
"""

from __future__ import annotations

import copy
import hashlib
import json
import threading
from collections import OrderedDict
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import Any, TypeVar

from siteharvest.assess import Assessment, assess, build_context
from siteharvest.errors import SiteInputError
from siteharvest.files import ListedFiles, listed_in_folder, named_files, named_in_dict, plain_name
from siteharvest.site import SiteSpec, load_site, parse_site
from siteharvest.weather import read_weather_file

from .bundled import SAMPLE_SITES
from .uploads import upload_store

T = TypeVar("T")


class MemoCache:
    """A small thread-safe least-recently-used cache; one computation per key at a time."""

    def __init__(self, maxsize: int) -> None:
        self.maxsize = maxsize
        self._data: OrderedDict[str, Any] = OrderedDict()
        self._lock = threading.Lock()
        self._key_locks: dict[str, threading.Lock] = {}

    def get_or_make(self, key: str, make: Callable[[], T]) -> T:
        with self._lock:
            if key in self._data:
                self._data.move_to_end(key)
                return self._data[key]
            key_lock = self._key_locks.setdefault(key, threading.Lock())
        with key_lock:
            with self._lock:
                if key in self._data:
                    return self._data[key]
            value = make()
            with self._lock:
                self._data[key] = value
                while len(self._data) > self.maxsize:
                    self._data.popitem(last=False)
                self._key_locks.pop(key, None)
            return value

    def clear(self) -> None:
        with self._lock:
            self._data.clear()


CONTEXTS = MemoCache(8)  # weather year + spot context, by place, weather table and file digest
ASSESSMENTS = MemoCache(12)  # whole assessments, by the site dict and the digests of its files
PORTFOLIO_ROWS = MemoCache(20_000)  # portfolio rows (a few hundred bytes each), by spot content, key and file
WEATHER_CHECKS = MemoCache(8)  # parsed uploads, by content hash


def clean_message(message: str) -> str:
    """A message as users should read it: one line (files are already named as their site names them)."""
    return " ".join(str(message).split())


# --------------------------------------------------------------------------------------------------
# spot records

UPLOADED = "upload"  # origin of a spot opened in the browser: only its session's uploads and the bundled data
_SERVED: dict[str, dict[str, Path]] = {}  # origin -> files the server's own site file named (name -> path)
_SERVED_LOCK = threading.Lock()


def record_from_spec(spec: SiteSpec, key: str, file: str, origin: str = UPLOADED) -> dict[str, Any]:
    return {"key": key, "site": site_dict(spec), "origin": origin, "file": file, "files": {}}


def site_dict(spec: SiteSpec) -> dict[str, Any]:
    """The spot as stored in the browser: exactly what :func:`siteharvest.site.dump_site` writes."""
    return spec.model_dump(mode="json", exclude_none=True)


def unique_key(stem: str, taken: Iterator[str] | set[str] | list[str]) -> str:
    taken = set(taken)
    base = "".join(c if c.isalnum() or c in "-_." else "-" for c in stem) or "spot"
    key, n = base, 2
    while key in taken:
        key, n = f"{base}-{n}", n + 1
    return key


def site_files(paths: list[Path] | None) -> list[Path]:
    """Site files named on the command line: files as given, folders as their ``*.toml``."""
    if not paths:
        paths = [SAMPLE_SITES]
    found: list[Path] = []
    for path in paths:
        path = Path(path)
        found.extend(sorted(path.glob("*.toml")) if path.is_dir() else [path])
    return found


def serve_spot(spec: SiteSpec, site_path: Path) -> str:
    """Register the files a site file given to the server names; return the origin that lists them."""
    listed: dict[str, Path] = {}
    for named in named_files(spec):
        try:
            path = spec.files.path_of(named.name, named.field).resolve()
        except (SiteInputError, OSError):
            continue
        if path.is_file():
            listed[named.name] = path
    origin = "served:" + hashlib.sha256(str(Path(site_path).resolve()).encode()).hexdigest()[:20]
    with _SERVED_LOCK:
        _SERVED[origin] = listed
    return origin


STARTER_SITE = {
    "spot": {"name": "new spot (synthetic weather)", "latitude_deg": 48.0, "longitude_deg": 10.0,
             "utc_offset_h": 1.0, "mounting_height_m": 1.5},
    "weather": {"synthetic": {"seed": 1}},
    "node": {"supply_v": 3.0, "sleep_current_ua": 1.5,
             "task": [{"name": "read and send", "current_ma": 5.0, "duration_ms": 20.0, "every_s": 300.0}]},
    "store": {"kind": "supercapacitor"},
    "source": [{"id": "panel", "kind": "solar", "area_cm2": 10.0, "tilt_deg": 45.0}],
}


def load_records(paths: list[Path] | None) -> tuple[dict[str, dict[str, Any]], list[str]]:
    """Spot records of every site file that loads, and one message line for each that does not.

    With no spot at all, a starter spot on a synthetic year keeps the editor usable.
    """
    records: dict[str, dict[str, Any]] = {}
    errors: list[str] = []
    for path in site_files(paths):
        try:
            spec = load_site(path)
        except SiteInputError as exc:
            errors.append(str(exc))
            continue
        key = unique_key(path.stem, records)
        records[key] = record_from_spec(spec, key, path.name, serve_spot(spec, path))
    if not records:
        spec = parse_site(copy.deepcopy(STARTER_SITE), file="new-spot.toml")
        records["new-spot"] = record_from_spec(spec, "new-spot", "new-spot.toml")
    return records, errors


# --------------------------------------------------------------------------------------------------
# files named by a site dict

_BUNDLED: dict[str, Path] | None = None


def bundled_files() -> dict[str, Path]:
    """The sample data files every spot may name (``surveys/pump-skid-p3.csv``, ...)."""
    global _BUNDLED
    if _BUNDLED is None:
        _BUNDLED = listed_in_folder(SAMPLE_SITES)
    return _BUNDLED


def files_for(record: dict[str, Any], session: str | None) -> ListedFiles:
    """The one rule for a browser's spot: its session's uploads, then its server-given files, then samples."""
    listed = dict(bundled_files())
    origin = record.get("origin")
    if isinstance(origin, str):
        listed.update(_SERVED.get(origin, {}))
    digests: dict[str, str] = {}
    store = upload_store()
    uploads = record.get("files")
    for name, sha in (uploads.items() if isinstance(uploads, dict) else []):
        path = store.path(session, sha) if isinstance(name, str) else None
        if path is not None:
            listed[name] = path
            digests[name] = sha
    return ListedFiles(listed, digests, site=record.get("file") if isinstance(record.get("file"), str) else None)


def get_in(data: Any, keys: tuple[Any, ...] | list[Any]) -> Any:
    for k in keys:
        data = data[k]
    return data


def set_in(data: Any, keys: tuple[Any, ...] | list[Any], value: Any) -> None:
    for k in keys[:-1]:
        data = data[k]
    data[keys[-1]] = value


def spec_for(record: dict[str, Any], session: str | None) -> SiteSpec:
    """The record's spot, its files resolved by :func:`files_for` (SiteInputError when it does not validate)."""
    site = record.get("site")
    if not isinstance(site, dict):
        raise SiteInputError("a site table", file=record.get("file"), field="site")
    return parse_site(copy.deepcopy(site), file=record.get("file") or "<site>", files=files_for(record, session))


def content_key(record: dict[str, Any], session: str | None) -> str:
    """The spot's content: its site dict and the digests of the files it names (a cache key)."""
    site = record.get("site")
    files = files_for(record, session)
    digests = {name: files.fingerprint(name) for _, name in named_in_dict(site)}
    # a spot on uploads is cached for its own session only: its results then never read another's files
    owner = session if any(files.digests.get(name) for name in digests) else None
    return _key(site, digests, owner)


def _key(*parts: Any) -> str:
    return hashlib.sha256(json.dumps(parts, sort_keys=True, default=str).encode()).hexdigest()


CONTEXT_FREE_SPOT_FIELDS = ("name", "notes", "mounting_height_m", "hazardous_area")


def assessment_for(record: dict[str, Any], session: str | None) -> Assessment:
    """The spot's assessment (cached by content). Raises :class:`SiteInputError` naming files as the site does."""
    spec = spec_for(record, session)
    weather = record["site"].get("weather") or {}
    weather_file = weather.get("file") if isinstance(weather, dict) else None
    # the context rests on the place and the weather: the spot's name, notes and safety facts leave it as it is
    place = {k: v for k, v in (record["site"].get("spot") or {}).items() if k not in CONTEXT_FREE_SPOT_FIELDS}
    ctx_key = _key(place, weather,
                   spec.files.fingerprint(weather_file) if isinstance(weather_file, str) else "")

    def make() -> Assessment:
        context = CONTEXTS.get_or_make(ctx_key, lambda: build_context(spec))
        return assess(spec, context)

    return ASSESSMENTS.get_or_make(content_key(record, session), make)


def check_weather_text(name: str, path: Path, site: dict[str, Any], file_format: str = "auto") -> list[str]:
    """Parse an uploaded weather file (cached by content); return its notes or raise SiteInputError."""
    spot = site.get("spot", {}) if isinstance(site.get("spot"), dict) else {}
    sha = path.name
    key = _key(sha, file_format, spot.get("utc_offset_h"), spot.get("latitude_deg"),
               spot.get("longitude_deg"), spot.get("altitude_m"))

    def parse() -> list[str]:
        files = ListedFiles({name: path})
        try:
            _, meta = read_weather_file(path, file_format, name=name, utc_offset_h=spot.get("utc_offset_h"),
                                        latitude_deg=spot.get("latitude_deg"),
                                        longitude_deg=spot.get("longitude_deg"), altitude_m=spot.get("altitude_m"))
        except SiteInputError as exc:
            raise files.explained(exc) from None
        return [files.shown(n) for n in meta.notes]

    return WEATHER_CHECKS.get_or_make(key, parse)


def upload_name(filename: str | None, fallback: str = "upload") -> str:
    """The name an uploaded file goes by in its spot: the last part of the browser's file name."""
    name = str(filename or "").replace("\\", "/").rsplit("/", 1)[-1].strip()
    return plain_name(name) or fallback

"""Between the browser's state and the library: spot records, uploaded files and memo caches.

A *spot record* is what the browser keeps for one spot (in a ``dcc.Store``)::

    {"key": "roof-parapet", "site": {...dumped site dict...}, "base_dir": "/path/of/the/site/file",
     "file": "roof-parapet.toml", "files": {"upload.epw": "<sha256 of its text>"}}

Uploaded files live as text in another store, ``{sha256: text}``. To simulate, the site dict is
copied with every file it names made absolute: an uploaded file is written once into a
content-addressed folder (a cache), any other name is resolved against ``base_dir``.

The caches below are caches, not state: every entry is a pure function of its key, so a restart or
an eviction only costs time.
"""

from __future__ import annotations

import copy
import hashlib
import json
import os
import tempfile
import threading
from collections import OrderedDict
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any, TypeVar

from siteharvest.assess import Assessment, assess, build_context
from siteharvest.errors import SiteInputError
from siteharvest.site import SiteSpec, load_site, parse_site
from siteharvest.weather import read_weather_file

from .bundled import SAMPLE_SITES

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
WEATHER_CHECKS = MemoCache(8)  # parsed uploads, by content hash


def sha256_text(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def workspace() -> Path:
    """Folder of materialised uploads (content-addressed, shared by every session of this process)."""
    folder = Path(tempfile.gettempdir()) / f"siteharvest-app-{os.getuid() if hasattr(os, 'getuid') else 0}"
    folder.mkdir(parents=True, exist_ok=True)
    return folder


def materialise(name: str, text: str) -> Path:
    """Write an uploaded file's text under its content hash (once) and return its path."""
    digest = sha256_text(text)
    folder = workspace() / digest[:32]
    folder.mkdir(exist_ok=True)
    path = folder / (Path(name).name or "upload.txt")
    if not path.is_file():
        tmp = path.with_suffix(path.suffix + f".{threading.get_ident()}.part")
        tmp.write_text(text, encoding="utf-8")
        tmp.replace(path)
    return path


def clean_message(message: str, base_dir: Path | str | None = None) -> str:
    """Drop the cache folder (and the spot's folder) from messages: users know their files by the names
    their site file gives."""
    out = message
    if base_dir:
        out = out.replace(str(base_dir).rstrip("/\\") + os.sep, "")
    prefix = str(workspace())
    while prefix in out:
        start = out.index(prefix)
        rest = out[start + len(prefix):].lstrip("/\\")
        rest = rest.split("/", 1)[1] if "/" in rest else rest
        out = out[:start] + rest
    return out


# --------------------------------------------------------------------------------------------------
# spot records


def record_from_spec(spec: SiteSpec, key: str, file: str, base_dir: Path | str) -> dict[str, Any]:
    return {"key": key, "site": site_dict(spec), "base_dir": str(base_dir), "file": file, "files": {}}


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
        records[key] = record_from_spec(spec, key, path.name, path.resolve().parent)
    if not records:
        spec = parse_site(copy.deepcopy(STARTER_SITE), file="new-spot.toml")
        records["new-spot"] = record_from_spec(spec, "new-spot", "new-spot.toml", Path.cwd())
    return records, errors


# --------------------------------------------------------------------------------------------------
# files named by a site dict


def file_refs(site: dict[str, Any]) -> list[tuple[Any, ...]]:
    """Paths (key tuples) of every file name inside a site dict."""
    refs: list[tuple[Any, ...]] = []
    if isinstance(site.get("weather"), dict) and site["weather"].get("file"):
        refs.append(("weather", "file"))
    for i, src in enumerate(site.get("source") or []):
        if not isinstance(src, dict):
            continue
        if src.get("spectrum_file"):
            refs.append(("source", i, "spectrum_file"))
        hot = src.get("hot_side")
        if isinstance(hot, dict) and hot.get("mode") == "file" and hot.get("file"):
            refs.append(("source", i, "hot_side", "file"))
    return refs


def get_in(data: Any, keys: tuple[Any, ...] | list[Any]) -> Any:
    for k in keys:
        data = data[k]
    return data


def set_in(data: Any, keys: tuple[Any, ...] | list[Any], value: Any) -> None:
    for k in keys[:-1]:
        data = data[k]
    data[keys[-1]] = value


def _digest_of_disk_file(path: Path) -> str:
    try:
        st = path.stat()
    except OSError:
        return "missing"
    return f"{st.st_mtime_ns}-{st.st_size}"


@dataclass
class Resolved:
    """A site dict with absolute file names, the digests of those files and the folder it lives in."""

    site: dict[str, Any]
    digests: dict[str, str]
    base_dir: Path
    file: str


def resolve_record(record: dict[str, Any], files: dict[str, str] | None) -> Resolved:
    """Make every file name of the spot absolute (uploads materialised, others from ``base_dir``)."""
    files = files or {}
    site = copy.deepcopy(record["site"])
    base = Path(record.get("base_dir") or Path.cwd())
    uploads: dict[str, str] = record.get("files") or {}
    digests: dict[str, str] = {}
    for ref in file_refs(site):
        name = str(get_in(site, ref))
        sha = uploads.get(name)
        if sha is not None and sha in files:
            path = materialise(name, files[sha])
            digests[name] = sha
        else:
            path = Path(name) if Path(name).is_absolute() else base / name
            digests[name] = _digest_of_disk_file(path)
        set_in(site, ref, str(path))
    return Resolved(site, digests, base, record.get("file") or "<site>")


def spec_of(resolved: Resolved) -> SiteSpec:
    return parse_site(copy.deepcopy(resolved.site), file=resolved.file, base_dir=resolved.base_dir)


def _key(*parts: Any) -> str:
    return hashlib.sha256(json.dumps(parts, sort_keys=True, default=str).encode()).hexdigest()


def assessment_for(record: dict[str, Any], files: dict[str, str] | None) -> Assessment:
    """The spot's assessment (cached). Raises :class:`SiteInputError` with clean file names."""
    resolved = resolve_record(record, files)
    try:
        spec = spec_of(resolved)
        weather_file = resolved.site.get("weather", {}).get("file")
        ctx_key = _key(resolved.site["spot"], resolved.site.get("weather"), str(resolved.base_dir),
                       resolved.digests.get(str(weather_file), "") if weather_file else "")
        full_key = _key(resolved.site, str(resolved.base_dir), resolved.digests)

        def make() -> Assessment:
            context = CONTEXTS.get_or_make(ctx_key, lambda: build_context(spec))
            return assess(spec, context)

        return ASSESSMENTS.get_or_make(full_key, make)
    except SiteInputError as exc:
        base = resolved.base_dir
        got = clean_message(exc.got, base) if isinstance(exc.got, str) else exc.got
        raise SiteInputError(clean_message(exc.expected, base), file=clean_message(exc.file or "", base) or None,
                             field=exc.field, got=got, line=exc.line) from None


def check_weather_text(name: str, text: str, site: dict[str, Any], file_format: str = "auto") -> list[str]:
    """Parse an uploaded weather file (cached by content); return its notes or raise SiteInputError."""
    spot = site.get("spot", {})
    key = _key(sha256_text(text), file_format, spot.get("utc_offset_h"), spot.get("latitude_deg"),
               spot.get("longitude_deg"), spot.get("altitude_m"))

    def parse() -> list[str]:
        path = materialise(name, text)
        _, meta = read_weather_file(path, file_format, name=name, utc_offset_h=spot.get("utc_offset_h"),
                                    latitude_deg=spot.get("latitude_deg"),
                                    longitude_deg=spot.get("longitude_deg"), altitude_m=spot.get("altitude_m"))
        return list(meta.notes)

    return WEATHER_CHECKS.get_or_make(key, parse)

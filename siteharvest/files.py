"""One rule for every file a site file names: where it is read from and what messages call it.

A site file may name a weather file, a vibration survey, a hot-side temperature series, and any later
file field. Every model and front end finds those files through a :class:`SiteFiles` attached to the
parsed spot, never by joining paths itself:

- :class:`FolderFiles` (the command line): names resolve beside the site file, as a user expects of
  their own disk; an absolute name is read where it is.
- :class:`ListedFiles` (anything serving other people, such as the dashboard): a name resolves only
  among the files handed over with the spot (uploads, the bundled samples, files the operator named when
  starting the server). An absolute name, ``..``, a backslash or a name not listed is refused with the
  same message whether or not such a file exists anywhere, and nothing outside the list is opened.

File fields are found by name: a field called ``file`` or ending in ``_file`` holds a file name.
"""

from __future__ import annotations

import hashlib
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath
from typing import Any

from pydantic import BaseModel

from .errors import SiteInputError


def is_file_field(name: str) -> bool:
    """Whether a site-file field of this name holds a file name."""
    return name == "file" or name.endswith("_file")


@dataclass(frozen=True)
class NamedFile:
    """A file named by a site: the field that names it (``source[1].spectrum_file``) and the name as written."""

    field: str
    name: str


def named_files(model: Any, prefix: str = "") -> list[NamedFile]:
    """Every file a parsed site (or any part of it) names, in field order."""
    found: list[NamedFile] = []
    if isinstance(model, BaseModel):
        for name in type(model).model_fields:
            value = getattr(model, name)
            path = f"{prefix}.{name}" if prefix else name
            if isinstance(value, str) and is_file_field(name):
                found.append(NamedFile(path, value))
            else:
                found.extend(named_files(value, path))
    elif isinstance(model, list | tuple):
        for i, item in enumerate(model):
            found.extend(named_files(item, f"{prefix}[{i}]"))
    return found


def named_in_dict(data: Any, prefix: tuple[Any, ...] = ()) -> list[tuple[tuple[Any, ...], str]]:
    """(key path, name) of every file name in an unvalidated site dict (as read from TOML or a browser)."""
    found: list[tuple[tuple[Any, ...], str]] = []
    if isinstance(data, dict):
        for key, value in data.items():
            if isinstance(value, str) and isinstance(key, str) and is_file_field(key):
                found.append(((*prefix, key), value))
            elif isinstance(value, dict | list):
                found.extend(named_in_dict(value, (*prefix, key)))
    elif isinstance(data, list):
        for i, item in enumerate(data):
            found.extend(named_in_dict(item, (*prefix, i)))
    return found


def plain_name(name: str) -> str | None:
    """A relative name in one spelling (``./a//b.csv`` -> ``a/b.csv``), or None when it is not a plain
    relative name: absolute, with a drive, ``..``, a backslash, a control character, or empty."""
    if not name or len(name) > 255 or "\\" in name or any(ord(c) < 32 for c in name) or ":" in name:
        return None
    path = PurePosixPath(name)
    if path.is_absolute() or ".." in path.parts:
        return None
    parts = [p for p in path.parts if p not in ("", ".")]
    return "/".join(parts) or None


def _stamp(path: Path) -> str:
    try:
        st = path.stat()
    except OSError:
        return "missing"
    return f"{st.st_mtime_ns}-{st.st_size}"


class SiteFiles:
    """Where the files a site names are read from (base class; see the module docstring)."""

    def path_of(self, name: str, field: str) -> Path:
        """The path to read for ``name``, written in ``field``; SiteInputError when it may not be read."""
        raise NotImplementedError

    def fingerprint(self, name: str) -> str:
        """A short text that changes when the file's content may have changed (for caches)."""
        raise NotImplementedError

    def shown(self, text: str) -> str:
        """``text`` with every path this object hands out replaced by the name the site gives it."""
        return text

    def explained(self, exc: SiteInputError) -> SiteInputError:
        """The same error, naming files as the site names them."""
        got = self.shown(exc.got) if isinstance(exc.got, str) else exc.got
        return SiteInputError(self.shown(exc.expected), file=self.shown(exc.file) if exc.file else None,
                              field=exc.field, got=got, line=exc.line)


@dataclass(frozen=True)
class FolderFiles(SiteFiles):
    """The command line's rule: a name resolves beside the site file; an absolute name where it is."""

    folder: Path = field(default_factory=Path.cwd)

    def path_of(self, name: str, field: str) -> Path:
        path = Path(name)
        return path if path.is_absolute() else Path(self.folder) / path

    def fingerprint(self, name: str) -> str:
        return _stamp(self.path_of(name, ""))


@dataclass(frozen=True)
class ListedFiles(SiteFiles):
    """Only the files handed over with the spot: ``listed`` maps each plain name to where it is kept.

    ``digests`` may give a content hash per name (uploads are kept under theirs); other files are
    fingerprinted by modification time and size.
    """

    listed: Mapping[str, Path]
    digests: Mapping[str, str] = field(default_factory=dict)
    site: str | None = None

    def path_of(self, name: str, field: str) -> Path:
        key = plain_name(name)
        if key is None or key not in self.listed:
            raise SiteInputError(
                "a file uploaded with this spot (open it together with the site file, or use the upload "
                "beside the field); files on the server are not read", file=self.site, field=field, got=name)
        return self.listed[key]

    def fingerprint(self, name: str) -> str:
        key = plain_name(name) or ""
        if key in self.digests:
            return self.digests[key]
        return _stamp(self.listed[key]) if key in self.listed else "not listed"

    def shown(self, text: str) -> str:
        for name, path in sorted(self.listed.items(), key=lambda kv: -len(str(kv[1]))):
            text = text.replace(str(path), name)
        return text


def listed_in_folder(folder: Path, patterns: Iterable[str] = ("*.csv", "*.epw", "*.txt")) -> dict[str, Path]:
    """Plain names of the data files under ``folder`` (any depth), leaving out any link that leads outside it."""
    root = Path(folder).resolve()
    out: dict[str, Path] = {}
    if not root.is_dir():
        return out
    for pattern in patterns:
        for path in root.rglob(pattern):
            real = path.resolve()
            if real.is_file() and real.is_relative_to(root):
                out[path.relative_to(root).as_posix()] = real
    return out


def files_digest(files: SiteFiles, names: Iterable[str]) -> str:
    """One hash over the fingerprints of ``names`` (for cache keys)."""
    total = hashlib.sha256()
    for name in names:
        total.update(f"{name}\0{files.fingerprint(name)}\n".encode())
    return total.hexdigest()

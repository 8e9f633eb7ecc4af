"""Uploaded files, kept on the server per browser session and removed when no longer needed.

The browser holds only a random session token and, per spot, ``{name as the site gives it: sha256}``.
The text of each upload is kept once, under ``<root>/<session>/<sha256>``: no name from the browser or
from inside an upload ever becomes part of a path. A session's files go when its spots stop naming them
(:meth:`UploadStore.keep_only`), when the session has been idle for ``idle_s``, and with the whole
folder when the server that made it stops. Every session has a byte budget, and so has the store.

With several worker processes, every worker must use the same root (``SITEHARVEST_UPLOAD_DIR``).
"""

from __future__ import annotations

import atexit
import hashlib
import os
import re
import shutil
import tempfile
import threading
import time
from collections.abc import Iterable
from pathlib import Path

from siteharvest.errors import SiteInputError

SESSION_PATTERN = re.compile(r"[A-Za-z0-9_-]{22,64}")
SHA_PATTERN = re.compile(r"[0-9a-f]{64}")
ROOT_ENV = "SITEHARVEST_UPLOAD_DIR"


def sha256_text(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def valid_session(session: object) -> bool:
    """Whether ``session`` looks like a token the page made (anything else is refused, never used as a path)."""
    return isinstance(session, str) and SESSION_PATTERN.fullmatch(session) is not None


class UploadStore:
    """Per-session uploads on the server's disk, under names of their content hash only."""

    def __init__(self, root: Path | None = None, *, idle_s: float = 6 * 3600,
                 session_bytes: int = 100_000_000, total_bytes: int = 2_000_000_000) -> None:
        if root is None:
            root = Path(tempfile.mkdtemp(prefix="siteharvest-uploads-"))
            atexit.register(shutil.rmtree, root, True)
        self.root = Path(root)
        self.root.mkdir(mode=0o700, parents=True, exist_ok=True)
        self.idle_s = idle_s
        self.session_bytes = session_bytes
        self.total_bytes = total_bytes
        self._lock = threading.Lock()

    def _folder(self, session: str) -> Path:
        if not valid_session(session):
            raise SiteInputError("a page opened from this server (reload the page)", field="session")
        return self.root / session

    def put(self, session: str, text: str) -> str:
        """Keep ``text`` for ``session``; return its sha256. Refuses what would pass a byte budget."""
        folder = self._folder(session)
        sha = sha256_text(text)
        data = text.encode("utf-8")
        with self._lock:
            self.sweep()
            path = folder / sha
            if path.is_file():
                os.utime(folder)
                return sha
            if _size_of(folder) + len(data) > self.session_bytes:
                raise SiteInputError(f"at most {self.session_bytes // 1_000_000} MB of uploads per page "
                                     "(remove spots you no longer need, or reload the page)", field="upload")
            if _size_of(self.root) + len(data) > self.total_bytes:
                raise SiteInputError("room on the server for the upload (too many uploads at once; "
                                     "try again later)", field="upload")
            folder.mkdir(mode=0o700, exist_ok=True)
            tmp = folder / f"{sha}.{threading.get_ident()}.part"
            tmp.write_bytes(data)
            tmp.replace(path)
            os.utime(folder)
        return sha

    def path(self, session: str | None, sha: str) -> Path | None:
        """Where the session's upload of this hash is kept, or None (not this session's, or gone)."""
        if not valid_session(session) or not isinstance(sha, str) or not SHA_PATTERN.fullmatch(sha):
            return None
        path = self.root / str(session) / sha
        return path if path.is_file() else None

    def text(self, session: str | None, sha: str) -> str | None:
        path = self.path(session, sha)
        return path.read_text(encoding="utf-8") if path is not None else None

    def keep_only(self, session: str | None, shas: Iterable[str]) -> None:
        """Remove the session's uploads that none of its spots names any more."""
        if not valid_session(session):
            return
        folder = self.root / str(session)
        keep = set(shas)
        with self._lock:
            if not folder.is_dir():
                return
            for path in folder.iterdir():
                if path.name not in keep and not path.name.endswith(".part"):
                    path.unlink(missing_ok=True)

    def sweep(self, now: float | None = None) -> None:
        """Remove the folders of sessions idle for longer than ``idle_s``."""
        now = time.time() if now is None else now
        for folder in self.root.iterdir():
            try:
                if folder.is_dir() and now - folder.stat().st_mtime > self.idle_s:
                    shutil.rmtree(folder, ignore_errors=True)
            except OSError:
                continue

    def sessions(self) -> list[str]:
        return sorted(p.name for p in self.root.iterdir() if p.is_dir())


def _size_of(folder: Path) -> int:
    if not folder.is_dir():
        return 0
    return sum(p.stat().st_size for p in folder.rglob("*") if p.is_file())


_STORE: UploadStore | None = None
_STORE_LOCK = threading.Lock()


def upload_store() -> UploadStore:
    """The process's store: under ``$SITEHARVEST_UPLOAD_DIR`` when set (shared by worker processes), else a
    private temporary folder removed when the process ends."""
    global _STORE
    with _STORE_LOCK:
        if _STORE is None:
            root = os.environ.get(ROOT_ENV)
            _STORE = UploadStore(Path(root) if root else None)
        return _STORE

"""One report browser at a time per server: report requests queue on a file lock.

A report starts a headless Chromium of a dozen processes and several hundred MB; several at once took
the server to gigabytes. The lock is a file in a folder only this user can open, so it holds across the
threads of one server and across the worker processes of a multi-process one. A request waits at most
:data:`WAIT_S` and at most :data:`MAX_WAITING` requests of one process wait at once; past either, the
user is told the server is busy and the report is not made.
"""

from __future__ import annotations

import functools
import os
import stat
import tempfile
import threading
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any, TypeVar

from dash import no_update
from filelock import FileLock, Timeout

WAIT_S = 300.0  # a 20-spot portfolio report takes under a minute; a few of them fit
MAX_WAITING = 4  # per process: each waiting request holds one of the server's threads
BUSY = "The server is busy with other reports; try again in a minute."
F = TypeVar("F", bound=Callable[..., Any])

_waiting = 0
_waiting_guard = threading.Lock()


def private_folder() -> Path:
    """A folder for this user's lock files, readable by nobody else ($SITEHARVEST_RUN_DIR overrides)."""
    override = os.environ.get("SITEHARVEST_RUN_DIR")
    if override:
        folder = Path(override)
        folder.mkdir(mode=0o700, parents=True, exist_ok=True)
        return folder
    uid = os.getuid() if hasattr(os, "getuid") else None
    folder = Path(tempfile.gettempdir()) / (f"siteharvest-{uid}" if uid is not None else "siteharvest")
    try:
        folder.mkdir(mode=0o700, exist_ok=True)
        info = os.lstat(folder)
        if uid is not None and (not stat.S_ISDIR(info.st_mode) or info.st_uid != uid or info.st_mode & 0o077):
            raise PermissionError(f"{folder} is not a private folder of this user")
    except OSError:  # taken by someone else: a fresh private folder (this process and its children only)
        folder = Path(tempfile.mkdtemp(prefix="siteharvest-"))
        os.environ["SITEHARVEST_RUN_DIR"] = str(folder)
    return folder


def report_lock(timeout_s: float | None = None) -> FileLock:
    """The lock every report of this user's servers takes while its browser runs."""
    return FileLock(private_folder() / "report-browser.lock", timeout=WAIT_S if timeout_s is None else timeout_s,
                    thread_local=False)


def one_report_at_a_time(callback: F, *, wait_s: float | None = None) -> F:
    """``callback`` (returning ``(download, message)``) run under the report lock.

    When the lock cannot be had in ``wait_s`` (default :data:`WAIT_S`), or too many requests already wait,
    it returns no download and :data:`BUSY` as the message. A report that had to wait says how long in its
    message line.
    """

    @functools.wraps(callback)
    def queued(*args: Any, **kwargs: Any) -> Any:
        global _waiting
        with _waiting_guard:
            if _waiting >= MAX_WAITING:
                return no_update, BUSY
            _waiting += 1
        start = time.monotonic()
        try:
            lock = report_lock(wait_s)
            lock.acquire()
        except Timeout:
            return no_update, BUSY
        finally:
            with _waiting_guard:
                _waiting -= 1
        waited = time.monotonic() - start
        try:
            download, message = callback(*args, **kwargs)
        finally:
            lock.release()
        if waited >= 1.0 and download is not no_update and not message:
            message = f"Made after waiting {waited:.0f} s for another report (one report at a time)."
        return download, message

    return queued  # type: ignore[return-value]

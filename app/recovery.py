"""Autosave and recovery: unsaved work survives a crash, a kill or a power cut.

Each window writes its unsaved document, now and then, to its own recovery file in
the user's state folder (``<state>/recovery/<id>.recovery.json``, platformdirs; see
:func:`recovery_dir`), atomically. The file is removed after a normal save or close.
While the window runs it holds a :class:`QLockFile` beside it (``<id>.lock``), so the
next start can tell a recovery file whose program died (its lock is stale) from one
that another running copy is still writing.

A recovery file is JSON: ``{"format": "elbowroom-recovery", "version": 1,
"written": ISO time, "file": the document's file or null, "host", "pid",
"cell_text": the cell file text}``; the cell is read with the cell file reader, so
nothing in it is executed or trusted more than an opened file. A recovery file that
does not load is moved to ``<state>/recovery/unreadable/`` and named to the user,
never deleted silently.
"""

from __future__ import annotations

import datetime as _dt
import json
import os
import socket
import uuid
from dataclasses import dataclass
from pathlib import Path

from PySide6.QtCore import QLockFile

from app.document import Changes
from app.errorlog import state_dir
from kinematics.atomic import write_atomic
from kinematics.cell import Cell
from kinematics.cellfile import CellFileError, dumps_cell, load_cell, parse_cell

__all__ = [
    "RECOVERY_FORMAT",
    "RECOVERY_SUFFIX",
    "UNREADABLE_DIR",
    "MAX_RECOVERY_BYTES",
    "recovery_dir",
    "RecoveryEntry",
    "RecoveryFile",
    "find_recoverable",
    "set_aside",
    "discard",
    "difference_text",
]

RECOVERY_FORMAT = "elbowroom-recovery"
RECOVERY_SUFFIX = ".recovery.json"
UNREADABLE_DIR = "unreadable"
#: A recovery file holds one cell file's text: the cell file cap plus room for the wrapping.
MAX_RECOVERY_BYTES = 64 * 1024 * 1024


def recovery_dir() -> Path:
    """Where recovery files are kept (in the user's state folder)."""
    return state_dir() / "recovery"


def _lock_for(path: Path) -> QLockFile:
    lock = QLockFile(str(path.with_name(path.name.removesuffix(RECOVERY_SUFFIX) + ".lock")))
    lock.setStaleLockTime(0)  # stale only when its process is gone (Qt checks the pid)
    return lock


class RecoveryFile:
    """One window's recovery file: written with :meth:`write`, gone after :meth:`remove`."""

    def __init__(self, folder: Path | None = None) -> None:
        self.folder = Path(folder) if folder is not None else recovery_dir()
        self.path = self.folder / f"{uuid.uuid4().hex}{RECOVERY_SUFFIX}"
        self._lock: QLockFile | None = None
        #: The cell last written (None: nothing written or it was removed).
        self.written: Cell | None = None

    def _hold(self) -> None:
        if self._lock is None:
            self.folder.mkdir(parents=True, exist_ok=True)
            self._lock = _lock_for(self.path)
            self._lock.tryLock(0)

    def write(self, cell: Cell, file: Path | None) -> None:
        """Store ``cell`` (the document belonging to ``file``) atomically; raises OSError."""
        self._hold()
        record = {
            "format": RECOVERY_FORMAT,
            "version": 1,
            "written": _dt.datetime.now().astimezone().isoformat(timespec="seconds"),
            "file": str(file) if file is not None else None,
            "host": socket.gethostname(),
            "pid": os.getpid(),
            "cell_text": dumps_cell(cell),
        }
        write_atomic(self.path, json.dumps(record, ensure_ascii=False).encode("utf-8"))
        self.written = cell

    def remove(self) -> None:
        """Delete the recovery file (after a normal save or close) and give up its lock."""
        try:
            self.path.unlink()
        except FileNotFoundError:
            pass
        except OSError:
            return  # kept: it is recovered next time, which loses nothing
        self.written = None
        if self._lock is not None:
            self._lock.unlock()
            self._lock = None


@dataclass
class RecoveryEntry:
    """A recovery file found at start-up.

    ``cell`` is None when it does not load; ``problem`` then says why.
    ``saved`` is the document's file as it is on disk now (None: no file, or it does
    not load), for telling what the recovered document changes.
    """

    path: Path
    written: str = ""
    file: Path | None = None
    cell: Cell | None = None
    problem: str | None = None
    saved: Cell | None = None
    saved_problem: str | None = None
    lock: QLockFile | None = None

    def release(self) -> None:
        if self.lock is not None:
            self.lock.unlock()
            self.lock = None


def _read(path: Path) -> RecoveryEntry:
    entry = RecoveryEntry(path)
    try:
        if path.stat().st_size > MAX_RECOVERY_BYTES:
            entry.problem = "larger than any recovery file this program writes"
            return entry
        record = json.loads(path.read_bytes().decode("utf-8"))
    except (OSError, UnicodeDecodeError, ValueError, RecursionError) as exc:
        entry.problem = f"not readable ({type(exc).__name__})"
        return entry
    if not isinstance(record, dict) or record.get("format") != RECOVERY_FORMAT:
        entry.problem = "not a recovery file of this program"
        return entry
    if record.get("version") != 1:
        entry.problem = f"recovery format version {record.get('version')!r} is not known"
        return entry
    text, file = record.get("cell_text"), record.get("file")
    if not isinstance(text, str) or not (file is None or isinstance(file, str)):
        entry.problem = "its cell or file name is missing"
        return entry
    written = record.get("written")
    entry.written = written if isinstance(written, str) else ""
    entry.file = Path(file) if file else None
    try:
        entry.cell = parse_cell(text, path.name)
    except CellFileError as exc:
        entry.problem = f"its cell does not load ({exc})"
        return entry
    if entry.file is not None:
        try:
            entry.saved = load_cell(entry.file)
        except CellFileError as exc:
            entry.saved_problem = str(exc)
    return entry


def find_recoverable(
    folder: Path | None = None, exclude: Path | None = None
) -> list[RecoveryEntry]:
    """Recovery files whose program is no longer running, oldest first.

    Each returned entry holds the file's lock until :func:`discard`, :func:`set_aside`
    or ``entry.release()``, so two starting copies never offer the same one.
    """
    folder = Path(folder) if folder is not None else recovery_dir()
    try:
        paths = sorted(p for p in folder.iterdir() if p.name.endswith(RECOVERY_SUFFIX))
    except OSError:
        return []
    found = []
    for path in paths:
        if exclude is not None and path == exclude:
            continue
        lock = _lock_for(path)
        if not lock.tryLock(0):
            continue  # its window is still running (here or in another copy)
        entry = _read(path)
        entry.lock = lock
        found.append(entry)
    found.sort(key=lambda e: (e.written, e.path.name))
    return found


def set_aside(entry: RecoveryEntry) -> Path:
    """Move a recovery file that does not load to the unreadable folder; its new path."""
    dest_dir = entry.path.parent / UNREADABLE_DIR
    dest_dir.mkdir(parents=True, exist_ok=True)
    dest = dest_dir / entry.path.name
    os.replace(entry.path, dest)
    entry.release()
    _remove_lock_file(entry.path)
    return dest


def discard(entry: RecoveryEntry) -> None:
    """Delete a recovery file (the user chose so, or it was restored and saved anew)."""
    try:
        entry.path.unlink()
    except FileNotFoundError:
        pass
    entry.release()
    _remove_lock_file(entry.path)


def _remove_lock_file(path: Path) -> None:
    try:
        path.with_name(path.name.removesuffix(RECOVERY_SUFFIX) + ".lock").unlink()
    except OSError:
        pass


def _count(n: int, what: str) -> str:
    return f"{n} {what}{'' if n == 1 else 's'}"


def difference_text(entry: RecoveryEntry) -> str:
    """What the recovered document changes against its file, in words.

    Examples: ``"changes 1 arm, 12 targets, 0 fixtures against the saved file"``,
    ``"never saved"``.
    """
    if entry.cell is None:
        return f"does not load: {entry.problem}"
    if entry.file is None:
        return "never saved to a file"
    if entry.saved is None:
        return f"its file {entry.file.name} could not be read ({entry.saved_problem})"
    ch = Changes.between(entry.saved, entry.cell)
    parts = [_count(len(ch.arms), "arm"), _count(len(ch.targets), "target")]
    parts.append(_count(len(ch.fixtures), "fixture"))
    text = f"changes {', '.join(parts)} against the saved file"
    if ch.other:
        text += " (and its name, units, sequences or notes)"
    if not ch:
        text = "the same as the saved file"
    return text

"""Saving a file safely: checks first, a ring of backups, leftovers cleared, clear failures.

:func:`save_bytes` is what every document save goes through (the cell file writer
calls it). In order it

1. refuses at once a target that is not a regular file (a folder, a named pipe, a
   device, a socket) or whose folder does not exist, and a read-only file unless
   told to replace it;
2. removes temporary files left beside the target by interrupted saves
   (:func:`kinematics.atomic.remove_leftover_temps`);
3. copies the previous file to a timestamped backup beside it,
   ``<file name>.<YYYYMMDD-HHMMSS>.bak`` (UTC; ``-2``, ``-3`` ... added when that name
   is taken), unless it equals the newest backup or the new content;
4. writes the new content atomically with the previous file's permissions and,
   where the system allows, its owner and group;
5. only then deletes the oldest backups beyond the count kept (default
   :data:`BACKUPS_KEPT`).

When writing fails, the original file and its backups are as they were (a backup
made for this save is removed again) and :class:`SaveError` says, in one line that
names the folder, what stopped it: the folder does not exist, is read-only, is on a
read-only file system, or the disk is full.

Hard links: a save writes a new file and renames it over the old name, so other
names (hard links) of the old file keep the previous version; :class:`SaveOutcome`
says so in ``notes``. Symbolic links are followed: the file they point to is saved.
"""

from __future__ import annotations

import datetime as _dt
import errno
import os
import re
import stat
from dataclasses import dataclass
from pathlib import Path

from kinematics.atomic import remove_leftover_temps, write_atomic

__all__ = [
    "BACKUPS_KEPT",
    "BACKUP_SUFFIX",
    "SaveError",
    "ReadOnlyTargetError",
    "SaveOutcome",
    "backup_files",
    "backup_name",
    "check_target",
    "is_read_only",
    "save_bytes",
]

#: Backups kept beside a saved file unless told otherwise.
BACKUPS_KEPT = 3
#: Ending of every backup's name.
BACKUP_SUFFIX = ".bak"


class SaveError(Exception):
    """A save that was refused or failed; ``str()`` is one line naming file and folder."""


class ReadOnlyTargetError(SaveError):
    """The target is a read-only file: replace it only when the user says so."""


@dataclass(frozen=True)
class SaveOutcome:
    """What a successful save did.

    Attributes
    ----------
    path : Path
        The file written (symbolic links resolved).
    backup : Path or None
        The backup made of the previous version; None when none was needed (no
        previous file, or it equals the newest backup or the new content).
    removed_backups : tuple of Path
        Oldest backups deleted to keep the count.
    removed_temps : tuple of Path
        Temporary files of interrupted saves that were deleted.
    notes : tuple of str
        One-line facts the user should hear (hard links, an owner that could not be kept).
    """

    path: Path
    backup: Path | None = None
    removed_backups: tuple[Path, ...] = ()
    removed_temps: tuple[Path, ...] = ()
    notes: tuple[str, ...] = ()


def _printable(text: str) -> str:
    return "".join(c if c.isprintable() else repr(c)[1:-1] for c in text)


def _backup_pattern(name: str) -> re.Pattern[str]:
    stamp = r"\.(\d{8}-\d{6})(?:-(\d+))?"
    return re.compile(re.escape(name) + stamp + re.escape(BACKUP_SUFFIX) + r"\Z")


def backup_name(path: str | os.PathLike[str], when: _dt.datetime, counter: int = 1) -> Path:
    """Name of the backup of ``path`` made at ``when`` (its ``counter``-th in that second).

    Examples
    --------
    >>> import datetime as dt
    >>> t = dt.datetime(2026, 12, 4, 1, 34, 55, tzinfo=dt.timezone.utc)
    >>> backup_name("cells/tray.cell.json", t).as_posix()
    'cells/tray.cell.json.20261204-013455.bak'
    >>> backup_name("tray.cell.json", t, 2).name
    'tray.cell.json.20261204-013455-2.bak'
    """
    p = Path(path)
    stamp = when.astimezone(_dt.timezone.utc).strftime("%Y%m%d-%H%M%S")
    more = f"-{counter}" if counter > 1 else ""
    return p.with_name(f"{p.name}.{stamp}{more}{BACKUP_SUFFIX}")


def backup_files(path: str | os.PathLike[str]) -> list[Path]:
    """The backups of ``path`` beside it, oldest first (regular files with backup names).

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> for n in ("a.txt.20261204-013455-2.bak", "a.txt.20261204-013455.bak", "a.txt.bak"):
    ...     _ = (folder / n).write_text("x")
    >>> [p.name for p in backup_files(folder / "a.txt")]
    ['a.txt.20261204-013455.bak', 'a.txt.20261204-013455-2.bak']
    """
    target = Path(path)
    pattern = _backup_pattern(target.name)
    found = []
    try:
        entries = list(os.scandir(target.parent))
    except OSError:
        return []
    for entry in entries:
        m = pattern.match(entry.name)
        if m is None:
            continue
        try:
            if not entry.is_file(follow_symlinks=False):
                continue  # a folder or link with a backup's name is not ours to touch
        except OSError:
            continue
        found.append((m.group(1), int(m.group(2) or 1), Path(entry.path)))
    return [p for _s, _c, p in sorted(found)]


def _kind(mode: int) -> str:
    if stat.S_ISFIFO(mode):
        return "a named pipe"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def is_read_only(path: str | os.PathLike[str]) -> bool:
    """True when ``path`` is a file nobody may write (no write bit) or we may not write."""
    try:
        mode = os.stat(path).st_mode
    except OSError:
        return False
    # Root may write anything: the write bits still say what the file's owner intended.
    return not (mode & (stat.S_IWUSR | stat.S_IWGRP | stat.S_IWOTH)) or not os.access(path, os.W_OK)


def check_target(path: str | os.PathLike[str], source: str | None = None) -> Path:
    """The real file a save to ``path`` writes, or :class:`SaveError` at once.

    Refuses (without opening anything) a folder, a named pipe, a device or a socket,
    and a path whose folder does not exist. Symbolic links are resolved.
    """
    source = _printable(source or Path(path).name or str(path))
    target = Path(os.path.realpath(path))
    folder = target.parent
    try:
        info = os.stat(target)
    except FileNotFoundError:
        info = None
    except OSError as exc:
        raise SaveError(f"{source}: not saved: {_reason(exc, folder)}") from None
    if info is not None:
        if stat.S_ISDIR(info.st_mode):
            raise SaveError(f"{source}: is a folder; choose a file name to save to")
        if not stat.S_ISREG(info.st_mode):
            raise SaveError(
                f"{source}: is {_kind(info.st_mode)}, not a regular file; not saved there"
            )
    elif not folder.is_dir():
        raise SaveError(f"{source}: not saved: the folder {_printable(str(folder))} does not exist")
    return target


def _reason(exc: OSError, folder: Path) -> str:
    """Why a write in ``folder`` failed, naming the folder."""
    where = _printable(str(folder))
    code = exc.errno
    if isinstance(exc, FileNotFoundError) or code == errno.ENOENT:
        if not folder.is_dir():
            return f"the folder {where} does not exist (moved or deleted?)"
    if code in (errno.ENOSPC, getattr(errno, "EDQUOT", errno.ENOSPC)):
        return f"the disk holding {where} is full"
    if code == errno.EROFS:
        return f"the folder {where} is on a read-only file system"
    if isinstance(exc, PermissionError) or code in (errno.EACCES, errno.EPERM):
        return f"the folder {where} is read-only for this user (permission denied)"
    text = _printable(exc.strerror or str(exc) or type(exc).__name__)
    return f"writing in the folder {where} failed ({text})"


def _newest_backup_bytes(target: Path) -> bytes | None:
    ring = backup_files(target)
    if not ring:
        return None
    try:
        return ring[-1].read_bytes()
    except OSError:
        return None


def _free_backup_name(target: Path, now: _dt.datetime) -> Path:
    counter = 1
    while True:
        candidate = backup_name(target, now, counter)
        if not os.path.lexists(candidate):
            return candidate
        counter += 1  # taken (by an earlier backup this second, or by a folder): next one


def save_bytes(
    path: str | os.PathLike[str],
    data: bytes,
    *,
    backups: int = BACKUPS_KEPT,
    replace_read_only: bool = False,
    source: str | None = None,
    now: _dt.datetime | None = None,
) -> SaveOutcome:
    """Save ``data`` to ``path``: checks, backup ring, atomic write (see the module text).

    Parameters
    ----------
    path : str or path-like
        The file to write; a symbolic link is followed.
    data : bytes
    backups : int, optional
        How many backups to keep beside the file (0: make none, delete none).
    replace_read_only : bool, optional
        Replace a read-only file (keeping it read-only); refused by default.
    source : str, optional
        Name at the start of messages (default: the file name).
    now : datetime, optional
        Time stamped on the backup (default: the current time).

    Returns
    -------
    SaveOutcome

    Raises
    ------
    ReadOnlyTargetError
        The file is read-only and ``replace_read_only`` is false.
    SaveError
        Anything else that stopped the save; the file and its backups are unchanged.

    Examples
    --------
    >>> import tempfile
    >>> f = Path(tempfile.mkdtemp()) / "a.txt"
    >>> save_bytes(f, b"one").backup is None
    True
    >>> save_bytes(f, b"two").backup.read_bytes()
    b'one'
    >>> save_bytes(f, b"two").backup is None  # same content again: nothing new to keep
    True
    """
    source = _printable(source or Path(path).name or str(path))
    target = check_target(path, source)
    folder = target.parent
    try:
        info = os.stat(target)
    except FileNotFoundError:
        info = None
    except OSError as exc:
        raise SaveError(f"{source}: not saved: {_reason(exc, folder)}") from None
    if info is not None and not replace_read_only and is_read_only(target):
        raise ReadOnlyTargetError(f"{source}: is a read-only file; not replaced")
    removed_temps = tuple(remove_leftover_temps(target))
    notes: list[str] = []
    made: Path | None = None
    mode = owner = None
    unchanged = " (the file and its backups are unchanged)"
    if info is not None:
        mode = stat.S_IMODE(info.st_mode)
        owner = (info.st_uid, info.st_gid)
        try:
            old = target.read_bytes()
        except OSError as exc:
            raise SaveError(
                f"{source}: not saved: the current file could not be read to keep a backup "
                f"({_printable(exc.strerror or str(exc))}){unchanged}"
            ) from None
        if backups > 0 and old != data and old != _newest_backup_bytes(target):
            made = _free_backup_name(target, now or _dt.datetime.now(_dt.timezone.utc))
            try:
                write_atomic(made, old, mode, owner)
            except OSError as exc:
                raise SaveError(f"{source}: not saved: {_reason(exc, folder)}{unchanged}") from None
        if info.st_nlink > 1:
            others = info.st_nlink - 1
            notes.append(
                f"{source} had {others} other hard link{'s' if others > 1 else ''}; "
                "they keep the previous version (saving writes a new file)"
            )
    try:
        owner_kept = write_atomic(target, data, mode, owner)
    except OSError as exc:
        if made is not None:
            try:
                os.unlink(made)
            except OSError:
                pass
        raise SaveError(f"{source}: not saved: {_reason(exc, folder)}{unchanged}") from None
    if not owner_kept:
        notes.append(f"{source}: the previous owner could not be kept; it is now yours")
    removed: list[Path] = []
    if backups > 0:
        ring = backup_files(target)
        for old_backup in ring[: max(0, len(ring) - backups)]:
            try:
                os.unlink(old_backup)
            except OSError:
                continue
            removed.append(old_backup)
    return SaveOutcome(target, made, tuple(removed), removed_temps, tuple(notes))

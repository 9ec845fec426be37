"""Atomic file writes: the target is always either the old file or the new one.

Every file the program writes (cell files, reports, drawings, DXF, CSV) goes through
:func:`write_atomic`: the data goes to a temporary file in the target's folder, is
flushed to disk, and replaces the target in one rename. On any failure the target is
unchanged and the temporary file is removed.

A process killed while writing cannot remove its temporary file. Such leftovers are
named ``.<file name>.<12 hex digits>.tmp`` (see :func:`temp_name_prefix`) and
:func:`remove_leftover_temps` deletes them. While a write is in progress its
temporary file holds an exclusive advisory lock (POSIX ``flock``), so another
process's write in flight is never mistaken for a leftover: the lock of a killed
process is released by the system.
"""

from __future__ import annotations

import os
import re
import uuid
from pathlib import Path

try:  # POSIX only; elsewhere leftovers are recognised by age
    import fcntl
except ImportError:  # pragma: no cover - Windows
    fcntl = None  # type: ignore[assignment]

__all__ = ["write_atomic", "temp_name_prefix", "leftover_temps", "remove_leftover_temps"]

#: Without POSIX locks, a temporary file older than this (seconds) is taken as a leftover.
_LEFTOVER_AGE_S = 600.0


def temp_name_prefix(name: str) -> str:
    """Start of the names of temporary files written beside a file called ``name``."""
    return f".{name}."


def _temp_pattern(name: str) -> re.Pattern[str]:
    # Our own temporaries of ``name`` and of files named after it (its backups).
    return re.compile(re.escape(temp_name_prefix(name)) + r"(?:.*\.)?[0-9a-f]{12}\.tmp\Z")


def _open_temp(folder: Path, name: str) -> tuple[Path, int]:
    while True:
        tmp = folder / f"{temp_name_prefix(name)}{uuid.uuid4().hex[:12]}.tmp"
        try:
            # 0o666 lets the umask decide the permissions, as for any new file.
            flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
            fd = os.open(tmp, flags, 0o666)
        except FileExistsError:
            continue
        if fcntl is not None:
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except OSError:
                pass  # a file system without locks: leftovers are then found by age
        return tmp, fd


def _write_all(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        n = os.write(fd, view)
        view = view[n:]
    os.fsync(fd)


def _fsync_folder(folder: Path) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return  # some systems cannot open folders; the rename is still atomic
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def write_atomic(
    path: str | os.PathLike[str],
    data: bytes,
    mode: int | None = None,
    owner: tuple[int, int] | None = None,
) -> bool:
    """Write ``data`` to ``path`` atomically (temporary file beside it, fsync, rename).

    Parameters
    ----------
    path : str or path-like
        The file to write (its folder must exist).
    data : bytes
    mode : int, optional
        Permission bits for the new file (default: as for any new file, by the umask).
    owner : (int, int), optional
        User and group ids to give the new file, where the system allows it.

    Returns
    -------
    bool
        False when ``owner`` was asked for and the system refused it (the file is
        then written, owned by whoever wrote it); True otherwise.

    Raises
    ------
    OSError
        When writing fails; the target is then unchanged and no temporary file is left.

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> write_atomic(folder / "a.txt", b"one")
    True
    >>> write_atomic(folder / "a.txt", b"two")
    True
    >>> (folder / "a.txt").read_bytes(), sorted(p.name for p in folder.iterdir())
    (b'two', ['a.txt'])
    """
    target = Path(path)
    folder = target.parent
    tmp, fd = _open_temp(folder, target.name)
    owner_kept = True
    closed = False
    try:
        _write_all(fd, data)
        if mode is not None:
            os.chmod(tmp, mode)
        if owner is not None and hasattr(os, "chown"):
            try:
                os.chown(tmp, owner[0], owner[1])
            except OSError:
                owner_kept = False
            if mode is not None:
                os.chmod(tmp, mode)  # chown clears set-id bits
        if os.name == "nt":  # pragma: no cover - an open file cannot be renamed there
            os.close(fd)
            closed = True
        # On POSIX the file stays open (and locked) until renamed, so no cleaner takes it.
        os.replace(tmp, target)
    except BaseException:
        if not closed:
            os.close(fd)
            closed = True
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    finally:
        if not closed:
            os.close(fd)
    _fsync_folder(folder)
    return owner_kept


def _in_use(candidate: Path) -> bool:
    """True when a live writer still holds ``candidate`` (or it cannot be told)."""
    if fcntl is None:  # pragma: no cover - Windows
        import time

        try:
            return time.time() - candidate.stat().st_mtime < _LEFTOVER_AGE_S
        except OSError:
            return True
    try:
        fd = os.open(candidate, os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0))
    except OSError:
        return True
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
    except OSError:
        return True  # locked: a write in progress
    finally:
        os.close(fd)
    return False


def leftover_temps(path: str | os.PathLike[str]) -> list[Path]:
    """Temporary files beside ``path`` left by writes that were interrupted (killed).

    Only regular files named like this module's temporaries of ``path`` (or of files
    named after it, such as its backups) count, and none that a running write holds.

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> _ = (folder / ".a.txt.0123456789ab.tmp").write_bytes(b"half")
    >>> _ = (folder / ".a.txt.notes").write_bytes(b"someone else's")
    >>> [p.name for p in leftover_temps(folder / "a.txt")]
    ['.a.txt.0123456789ab.tmp']
    """
    target = Path(path)
    pattern = _temp_pattern(target.name)
    found = []
    try:
        entries = list(os.scandir(target.parent))
    except OSError:
        return []
    for entry in entries:
        if not pattern.match(entry.name):
            continue
        try:
            if not entry.is_file(follow_symlinks=False):
                continue
        except OSError:
            continue
        candidate = Path(entry.path)
        if not _in_use(candidate):
            found.append(candidate)
    return sorted(found)


def remove_leftover_temps(path: str | os.PathLike[str]) -> list[Path]:
    """Delete the :func:`leftover_temps` of ``path``; returns those removed."""
    removed = []
    for candidate in leftover_temps(path):
        try:
            os.unlink(candidate)
        except OSError:
            continue
        removed.append(candidate)
    return removed

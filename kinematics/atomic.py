"""Atomic file writes: the target is always either the old file or the new one.

Every file the program writes (cell files, reports, drawings, DXF, CSV) goes through
:func:`write_atomic`: the data goes to a temporary file in the target's folder, is
flushed to disk, and replaces the target in one rename. On any failure the target is
unchanged and the temporary file is removed.
"""

from __future__ import annotations

import os
import uuid
from pathlib import Path

__all__ = ["write_atomic", "temp_name_prefix"]


def temp_name_prefix(name: str) -> str:
    """Start of the names of temporary files written beside a file called ``name``."""
    return f".{name}."


def _open_temp(folder: Path, name: str) -> tuple[Path, int]:
    while True:
        tmp = folder / f"{temp_name_prefix(name)}{uuid.uuid4().hex[:12]}.tmp"
        try:
            # 0o666 lets the umask decide the permissions, as for any new file.
            flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
            return tmp, os.open(tmp, flags, 0o666)
        except FileExistsError:
            continue


def _write_all(fd: int, data: bytes) -> None:
    try:
        f = os.fdopen(fd, "wb")
    except BaseException:
        os.close(fd)
        raise
    with f:
        f.write(data)
        f.flush()
        os.fsync(f.fileno())


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


def write_atomic(path: str | os.PathLike[str], data: bytes, mode: int | None = None) -> None:
    """Write ``data`` to ``path`` atomically (temporary file beside it, fsync, rename).

    Parameters
    ----------
    path : str or path-like
        The file to write (its folder must exist).
    data : bytes
    mode : int, optional
        Permission bits for the new file (default: as for any new file, by the umask).

    Raises
    ------
    OSError
        When writing fails; the target is then unchanged and no temporary file is left.

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> write_atomic(folder / "a.txt", b"one")
    >>> write_atomic(folder / "a.txt", b"two")
    >>> (folder / "a.txt").read_bytes(), sorted(p.name for p in folder.iterdir())
    (b'two', ['a.txt'])
    """
    target = Path(path)
    folder = target.parent
    tmp, fd = _open_temp(folder, target.name)
    try:
        _write_all(fd, data)
        if mode is not None:
            os.chmod(tmp, mode)
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    _fsync_folder(folder)

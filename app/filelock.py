"""A lock beside an open cell file, so two running copies never edit one file unknowingly.

The lock is a :class:`QLockFile` named ``.<file name>.lock`` in the file's folder. It
holds the process id, host name and program name of its holder. A lock left by a
process that is no longer running on this host is stale and taken over silently
(Qt checks the process id); a lock held by a running process, or by one on another
host (which cannot be checked from here), is reported with :class:`LockHolder` so the
user can open the file read-only or anyway.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from PySide6.QtCore import QLockFile

__all__ = ["LockHolder", "DocumentLock", "lock_path"]


def lock_path(path: Path) -> Path:
    """The lock file of the cell file ``path``."""
    return path.parent / f".{path.name}.lock"


@dataclass(frozen=True)
class LockHolder:
    """Who holds a lock: process id, host name and program name (as the lock file says)."""

    pid: int
    host: str
    app: str

    def describe(self) -> str:
        return f"process {self.pid} on host {self.host or 'unknown'}"


class DocumentLock:
    """The lock on one cell file (taken with :meth:`acquire`, given back with :meth:`release`).

    ``held`` tells whether this process holds it; ``unavailable`` gives the reason when
    no lock could be made at all (e.g. a read-only folder), in which case the file is
    simply not locked.
    """

    def __init__(self, path: Path) -> None:
        self.path = Path(path)
        self._lock = QLockFile(str(lock_path(self.path)))
        # 0: never stale by age alone; a holder that died on this host is still detected
        # by its process id. A window keeps a file open for hours: age says nothing.
        self._lock.setStaleLockTime(0)
        self.held = False
        self.unavailable: str | None = None

    def acquire(self) -> LockHolder | None:
        """Take the lock; the holder when another running process has it, else None."""
        if self.held:
            return None
        if self._lock.tryLock(0):
            self.held = True
            self.unavailable = None
            return None
        error = self._lock.error()
        if error == QLockFile.LockError.LockFailedError:
            info = self._lock.getLockInfo()
            if isinstance(info, tuple) and len(info) == 3:
                pid, host, app = info
                return LockHolder(int(pid), str(host), str(app))
            # The lock file vanished or could not be read between the tries: try once more.
            if self._lock.tryLock(0):
                self.held = True
                return None
            return LockHolder(0, "", "")
        self.unavailable = (
            "no permission to create a lock file in the folder"
            if error == QLockFile.LockError.PermissionError
            else "the lock file could not be created"
        )
        return None

    def release(self) -> None:
        """Give the lock back (removes the lock file)."""
        if self.held:
            self._lock.unlock()
            self.held = False

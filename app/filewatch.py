"""Noticing when another program changes the open cell file.

:class:`FileWatch` remembers what the file held when the window last loaded or saved
it (size, modification time, inode and a SHA-256 of the bytes) and watches the file
and its folder with :class:`QFileSystemWatcher`. Watching the folder as well catches
an editor that saves atomically (writes a new file and renames it over the old one):
the watched file is then replaced, and the watch on its path would end silently.
Events are gathered for a moment and then compared with the remembered content, so
our own saves, backups and lock files beside the file never count as changes.
"""

from __future__ import annotations

import hashlib
import os
from pathlib import Path

from PySide6.QtCore import QFileSystemWatcher, QObject, QTimer, Signal

__all__ = ["FileWatch", "file_fingerprint", "SETTLE_MS"]

#: Events are gathered this long before the file is compared (milliseconds).
SETTLE_MS = 250


def file_fingerprint(path: Path) -> tuple[tuple[int, int, int], str] | None:
    """(size, mtime_ns, inode) and the SHA-256 of ``path``, or None when it cannot be read."""
    try:
        info = os.stat(path)
        with open(path, "rb") as f:
            digest = hashlib.sha256(f.read()).hexdigest()
    except OSError:
        return None
    return (info.st_size, info.st_mtime_ns, info.st_ino), digest


class FileWatch(QObject):
    """Watches one file; emits :attr:`changed_outside` when its content is not what we know.

    ``changed_outside(str)`` carries ``"changed"`` (other content) or ``"missing"``
    (deleted or moved away). After an emission the new state counts as seen, so one
    change is reported once; :meth:`remember` records the file as ours again.
    """

    changed_outside = Signal(str)

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self._watcher = QFileSystemWatcher(self)
        self._watcher.fileChanged.connect(self._poke)
        self._watcher.directoryChanged.connect(self._poke)
        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(SETTLE_MS)
        self._timer.timeout.connect(self.check)
        self.path: Path | None = None
        self._known: tuple[tuple[int, int, int], str] | None = None
        self._reported: str | None = None  # "changed:<digest>" or "missing" already told

    def watch(self, path: Path | None) -> None:
        """Watch ``path`` (None: stop watching), taking its present content as ours."""
        self._unwatch()
        self.path = Path(path) if path is not None else None
        if self.path is None:
            self._known = None
            return
        self.remember()
        self._watcher.addPath(str(self.path.parent))
        if self.path.exists():
            self._watcher.addPath(str(self.path))

    def _unwatch(self) -> None:
        paths = self._watcher.files() + self._watcher.directories()
        if paths:
            self._watcher.removePaths(paths)
        self._timer.stop()

    def remember(self) -> None:
        """The file as it is now on disk is what the window has (after a load or save)."""
        self._known = file_fingerprint(self.path) if self.path is not None else None
        self._reported = None
        if self.path is not None and str(self.path) not in self._watcher.files():
            if self.path.exists():
                self._watcher.addPath(str(self.path))

    def state(self) -> str:
        """``"same"``, ``"changed"`` (other content than we know) or ``"missing"``."""
        if self.path is None:
            return "same"
        now = file_fingerprint(self.path)
        if now is None:
            return "missing" if self._known is not None else "same"
        if self._known is None:
            return "changed"  # it appeared where there was none
        return "same" if now[1] == self._known[1] else "changed"

    def _poke(self, _path: str = "") -> None:
        self._timer.start()

    def check(self) -> str:
        """Compare now; emit :attr:`changed_outside` for a change not reported yet."""
        state = self.state()
        if self.path is not None and str(self.path) not in self._watcher.files():
            if self.path.exists():  # replaced by a rename: watch the new file
                self._watcher.addPath(str(self.path))
        if state == "same":
            self._reported = None
            return state
        key = state
        if state == "changed":
            fp = file_fingerprint(self.path) if self.path is not None else None
            key = f"changed:{fp[1] if fp else ''}"
        if key != self._reported:
            self._reported = key
            self.changed_outside.emit(state)
        return state

    def stop(self) -> None:
        """Stop watching."""
        self.watch(None)

"""The one "changes paused" clock of a document (Qt side of :meth:`Document.settle`).

While a drag steps, views draw only what must follow every pointer move; once the steps
pause for :data:`PAUSE_MS` (or the drag ends) the document is settled and every view
finishes what waited (swept areas, the moves in the problems list, note layout, full
drawing quality). One timer per document, shared by every view.
"""

from __future__ import annotations

import weakref

from PySide6.QtCore import QObject, QTimer

from app.document import Changes, Document

__all__ = ["PAUSE_MS", "PauseTimer", "pause_timer"]

#: Pause in step-by-step changes after which a document is settled (milliseconds).
PAUSE_MS = 250

_TIMERS: weakref.WeakKeyDictionary[Document, PauseTimer] = weakref.WeakKeyDictionary()


class PauseTimer(QObject):
    """Settles a document once its step-by-step changes pause."""

    def __init__(self, document: Document, ms: int = PAUSE_MS) -> None:
        super().__init__()
        self.document = document
        self.timer = QTimer(self)
        self.timer.setSingleShot(True)
        self.timer.setInterval(ms)
        self.timer.timeout.connect(self._fire)
        document.events.cell_changed.connect(self._on_change)

    def _on_change(self, _changes: Changes) -> None:
        if self.document.previewing:
            self.timer.start()  # restarted by every step: fires once the steps pause

    def _fire(self) -> None:
        if self.document.unsettled:
            self.document.settle()

    @property
    def pending(self) -> bool:
        """True while the timer waits for the steps to pause."""
        return self.timer.isActive()


def pause_timer(document: Document) -> PauseTimer:
    """The document's pause timer (made on first use)."""
    t = _TIMERS.get(document)
    if t is None:
        t = PauseTimer(document)
        _TIMERS[document] = t
    return t

"""The problems list: every infeasible target with the reason, in words and numbers.

Clicking an entry selects the target and asks the canvas to centre on it.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QBrush, QColor
from PySide6.QtWidgets import QAbstractItemView, QListWidget, QListWidgetItem, QWidget

from app.bind import EchoGuard, blocked
from app.document import Changes, Document
from app.panels.text import problems
from app.style import PALETTE, status_style

__all__ = ["ProblemsList", "NO_PROBLEMS"]

#: Shown when every target is feasible.
NO_PROBLEMS = "✓ No problems: every target is reachable within its arm's limits"

_ID_ROLE = Qt.ItemDataRole.UserRole


class ProblemsList(QListWidget):
    """Lists infeasible targets; a click selects one and requests a zoom to it.

    Signals
    -------
    zoom_requested(str)
        Target id the canvas should centre on.
    count_changed(int)
        Number of problems, after every change.
    """

    zoom_requested = Signal(str)
    count_changed = Signal(int)

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self._guard = EchoGuard()
        self._lines: list[tuple[str, str]] | None = None
        self.setObjectName("problems_list")
        self.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.setWordWrap(True)
        self.setUniformItemSizes(False)
        self.setSpacing(3)
        self.itemClicked.connect(self._on_clicked)
        self.itemActivated.connect(self._on_clicked)
        self.itemSelectionChanged.connect(self._on_view_selection)
        document.events.cell_changed.connect(self._on_cell_changed)
        document.selection.changed.connect(lambda _ids: self._show_selection())
        self._refresh()

    @property
    def count_of_problems(self) -> int:
        return len(self._lines or [])

    def problem_ids(self) -> list[str]:
        """Target ids listed, in order."""
        return [tid for tid, _ in self._lines or []]

    def lines(self) -> list[str]:
        """The texts shown, in order (the no-problems line when there are none)."""
        return [self.item(i).text() for i in range(self.count())]

    def _on_cell_changed(self, _changes: Changes) -> None:
        self._refresh()

    def _refresh(self) -> None:
        evaluation = self.document.evaluation
        lines = problems(evaluation)
        if lines == self._lines:
            return
        self._lines = lines
        with blocked(self):
            self.clear()
            if not lines:
                item = QListWidgetItem(NO_PROBLEMS)
                item.setFlags(Qt.ItemFlag.ItemIsEnabled)
                item.setForeground(QBrush(QColor(PALETTE["pine"]).darker(130)))
                self.addItem(item)
            for tid, line in lines:
                item = QListWidgetItem(line)
                item.setData(_ID_ROLE, tid)
                item.setToolTip(line)
                try:
                    ev, i = evaluation.locate(tid)
                    colour = status_style(int(ev.status[i])).colour
                except KeyError:
                    colour = PALETTE["ember"]
                item.setForeground(QBrush(QColor(colour).darker(150)))
                self.addItem(item)
        self._show_selection()
        self.count_changed.emit(len(lines))

    def _on_clicked(self, item: QListWidgetItem) -> None:
        tid = item.data(_ID_ROLE)
        if not tid:
            return
        with self._guard:
            self.document.selection.set([tid])
        self._show_selection()
        self.zoom_requested.emit(tid)

    def _on_view_selection(self) -> None:
        if self._guard:
            return
        ids = [it.data(_ID_ROLE) for it in self.selectedItems() if it.data(_ID_ROLE)]
        if ids:
            with self._guard:
                self.document.selection.set(ids)

    def _show_selection(self) -> None:
        if self._guard:
            return
        chosen = set(self.document.selection.ids)
        with self._guard, blocked(self):
            for i in range(self.count()):
                it = self.item(i)
                it.setSelected(bool(it.data(_ID_ROLE)) and it.data(_ID_ROLE) in chosen)
        self.viewport().update()

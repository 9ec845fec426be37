"""The problems list: every infeasible target, then every colliding or impossible move.

Each entry gives the reason in words and numbers. Clicking a target's entry selects
the target and asks the canvas to centre on it; clicking a move's entry selects its
two targets and asks the canvas to show both.

Target entries follow every change live. Moves cost more (their clearance is sampled
along the joint path), so during a drag they are recomputed once the changes pause
(``MOVES_PAUSE_MS``) and the previous move entries stay until then.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtGui import QBrush, QColor
from PySide6.QtWidgets import QAbstractItemView, QListWidget, QListWidgetItem, QWidget

from app.bind import EchoGuard, blocked
from app.document import Changes, Document
from app.panels.moves import SHARED, MoveCache
from app.panels.text import move_problems, problems
from app.style import PALETTE, status_style
from kinematics.ik import Status

__all__ = ["ProblemsList", "NO_PROBLEMS", "MOVES_PAUSE_MS"]

#: Shown when every target is feasible and every move clear.
NO_PROBLEMS = (
    "✓ No problems: every target is reachable within its arm's limits and clear of "
    "fixtures, and every move is clear"
)
#: Pause in drag steps after which the moves are checked again (milliseconds).
MOVES_PAUSE_MS = 200

_ID_ROLE = Qt.ItemDataRole.UserRole
_MOVE_ROLE = Qt.ItemDataRole.UserRole + 1


class ProblemsList(QListWidget):
    """Lists infeasible targets and bad moves; a click selects and requests a zoom.

    Signals
    -------
    zoom_requested(str)
        Target id the canvas should centre on.
    zoom_targets_requested(list)
        Target ids the canvas should show together (the two ends of a move).
    count_changed(int)
        Number of problems (targets and moves), after every change.
    """

    zoom_requested = Signal(str)
    zoom_targets_requested = Signal(list)
    count_changed = Signal(int)

    def __init__(
        self, document: Document, parent: QWidget | None = None, moves: MoveCache | None = None
    ) -> None:
        super().__init__(parent)
        self.document = document
        self._cache = moves if moves is not None else SHARED
        self._guard = EchoGuard()
        self._lines: list[tuple[str, str]] | None = None
        self._move_lines: list[tuple[tuple[str, str, str], str]] = []
        self._shown: tuple | None = None
        self._moves_timer = QTimer(self)
        self._moves_timer.setSingleShot(True)
        self._moves_timer.setInterval(MOVES_PAUSE_MS)
        self._moves_timer.timeout.connect(self._refresh_moves)
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
        """Entries listed: failing targets plus colliding or impossible moves."""
        return len(self._lines or []) + len(self._move_lines)

    @property
    def failing_targets(self) -> int:
        """Failing targets listed (moves not counted)."""
        return len(self._lines or [])

    def problem_ids(self) -> list[str]:
        """Ids of the failing targets listed, in order."""
        return [tid for tid, _ in self._lines or []]

    def problem_moves(self) -> list[tuple[str, str, str]]:
        """(arm, from, to) of the moves listed, in order."""
        return [key for key, _ in self._move_lines]

    @property
    def moves_pending(self) -> bool:
        """True while the move entries wait for a pause in the changes."""
        return self._moves_timer.isActive()

    def lines(self) -> list[str]:
        """The texts shown, in order (the no-problems line when there are none)."""
        return [self.item(i).text() for i in range(self.count())]

    def _on_cell_changed(self, _changes: Changes) -> None:
        self._refresh()

    def _refresh(self) -> None:
        if self.document.previewing:
            self._moves_timer.start()  # restarted by every step: runs once the drag pauses
        else:
            self._moves_timer.stop()
            self._move_lines = self._compute_moves()
        self._show(problems(self.document.evaluation))

    def _refresh_moves(self) -> None:
        self._move_lines = self._compute_moves()
        self._show(problems(self.document.evaluation))

    def _compute_moves(self) -> list[tuple[tuple[str, str, str], str]]:
        cell = self.document.cell
        if not cell.sequences:
            return []
        return move_problems(cell, self._cache.moves(cell, self.document.evaluation))

    def _show(self, lines: list[tuple[str, str]]) -> None:
        evaluation = self.document.evaluation
        if (lines, self._move_lines) == self._shown:
            return
        self._shown = (lines, list(self._move_lines))
        self._lines = lines
        with blocked(self):
            self.clear()
            if not lines and not self._move_lines:
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
            for key, line in self._move_lines:
                item = QListWidgetItem(line)
                item.setData(_MOVE_ROLE, list(key))
                item.setToolTip(f"{line}\nClick to select and show both targets of the move.")
                collides = line.startswith(status_style(Status.COLLISION).glyph)
                colour = status_style(Status.COLLISION if collides else Status.Q2_LIMIT).colour
                item.setForeground(QBrush(QColor(colour).darker(150)))
                self.addItem(item)
        self._show_selection()
        self.count_changed.emit(self.count_of_problems)

    @staticmethod
    def _ids_of(item: QListWidgetItem) -> list[str]:
        tid = item.data(_ID_ROLE)
        if tid:
            return [tid]
        move = item.data(_MOVE_ROLE)
        return list(dict.fromkeys(move[1:])) if move else []

    def _on_clicked(self, item: QListWidgetItem) -> None:
        ids = self._ids_of(item)
        if not ids:
            return
        with self._guard:
            self.document.selection.set(ids)
        self._show_selection()
        if item.data(_ID_ROLE):
            self.zoom_requested.emit(ids[0])
        else:
            self.zoom_targets_requested.emit(ids)

    def _on_view_selection(self) -> None:
        if self._guard:
            return
        ids = [tid for it in self.selectedItems() for tid in self._ids_of(it)]
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
                ids = self._ids_of(it)
                # A move is shown selected when both of its targets are.
                it.setSelected(bool(ids) and all(t in chosen for t in ids))
        self.viewport().update()

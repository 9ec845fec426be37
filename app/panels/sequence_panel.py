"""The sequence panel: the ordered targets one arm visits in a cycle.

Pick the arm (it follows the canvas selection), then: add the targets selected on the
canvas in the order they were clicked (Ctrl+click them one by one), remove visits,
reorder by dragging or with Up and Down, reverse the order. Each change is one undo step;
the moves drawn on the canvas and checked in the problems list follow the document.
"""

from __future__ import annotations

from PySide6.QtCore import QModelIndex, Qt, QTimer, Signal
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QGridLayout,
    QLabel,
    QListWidget,
    QListWidgetItem,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from app.bind import EchoGuard, blocked
from app.document import Changes, Document
from app.interaction import sequence_edits as seq
from app.panels.validate import Invalid, check_cell
from kinematics.cell import Cell

__all__ = ["SequencePanel"]

_ID_ROLE = Qt.ItemDataRole.UserRole


class _VisitList(QListWidget):
    """The list of visits; a drop that reorders them is reported once it is complete."""

    dropped = Signal()

    def dropEvent(self, event) -> None:  # noqa: N802 (Qt name)
        super().dropEvent(event)
        self.dropped.emit()


class SequencePanel(QWidget):
    """Edits the sequences of one arm.

    Signals
    -------
    message(str)
        A short report for the status bar (what was added or left out, refusals).
    """

    message = Signal(str)

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self._arm_id: str | None = None
        self._number = 0
        self._guard = EchoGuard()
        outer = QVBoxLayout(self)
        outer.setContentsMargins(4, 4, 4, 4)
        top = QGridLayout()
        self.arm_choice = QComboBox()
        # Long names must not widen the dock: the list shows them whole when opened.
        self.arm_choice.setSizeAdjustPolicy(
            QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon
        )
        self.arm_choice.setMinimumContentsLength(14)
        self.arm_choice.setObjectName("sequence_arm")
        self.arm_choice.setToolTip("Whose sequence the list shows")
        self.number_choice = QComboBox()
        self.number_choice.setObjectName("sequence_number")
        self.number_choice.setToolTip("The arm has several sequences: which one the list shows")
        top.addWidget(QLabel("Arm"), 0, 0)
        top.addWidget(self.arm_choice, 0, 1)
        top.addWidget(self.number_choice, 1, 1)
        top.setColumnStretch(1, 1)
        outer.addLayout(top)

        self.list = _VisitList()
        self.list.setObjectName("sequence_list")
        self.list.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.list.setDragDropMode(QAbstractItemView.DragDropMode.InternalMove)
        self.list.setDefaultDropAction(Qt.DropAction.MoveAction)
        self.list.setToolTip(
            "The visits in cycle order (the last one returns to the first); drag to reorder"
        )
        outer.addWidget(self.list, 1)
        self.summary = QLabel()
        self.summary.setWordWrap(True)
        outer.addWidget(self.summary)

        grid = QGridLayout()
        self.add_button = QPushButton("Add Selected")
        self.add_button.setToolTip(
            "Add the targets selected on the canvas or in the table, in the order they were "
            "selected (Ctrl+click them one by one), at the end; a target may be visited again"
        )
        self.remove_button = QPushButton("Remove")
        self.remove_button.setToolTip("Remove the chosen visits from the sequence")
        self.up_button = QPushButton("Up")
        self.down_button = QPushButton("Down")
        self.reverse_button = QPushButton("Reverse")
        self.reverse_button.setToolTip("Visit the targets the other way round")
        grid.addWidget(self.add_button, 0, 0)
        grid.addWidget(self.remove_button, 0, 1)
        grid.addWidget(self.up_button, 1, 0)
        grid.addWidget(self.down_button, 1, 1)
        grid.addWidget(self.reverse_button, 2, 0, 1, 2)
        outer.addLayout(grid)

        self.arm_choice.currentIndexChanged.connect(self._on_arm_chosen)
        self.number_choice.currentIndexChanged.connect(self._on_number_chosen)
        self.add_button.clicked.connect(self.add_selected)
        self.remove_button.clicked.connect(self.remove_chosen)
        self.up_button.clicked.connect(lambda: self.move_chosen(-1))
        self.down_button.clicked.connect(lambda: self.move_chosen(+1))
        self.reverse_button.clicked.connect(self.reverse)
        self.list.model().rowsMoved.connect(self._on_rows_moved)
        self.list.dropped.connect(self._on_rows_moved)
        self.list.itemSelectionChanged.connect(self._on_list_selection)
        document.events.cell_changed.connect(self._on_cell_changed)
        document.selection.changed.connect(self._on_selection)
        self._fill_arms()
        self._show()

    # ------------------------------------------------------------------ reading

    @property
    def arm_id(self) -> str | None:
        """The arm whose sequence is shown."""
        return self._arm_id

    def targets(self) -> tuple[str, ...]:
        """The target ids of the sequence shown, in order."""
        if self._arm_id is None:
            return ()
        return seq.sequence_targets(self.document.cell, self._arm_id, self._number)

    def lines(self) -> list[str]:
        """The texts of the list, in order."""
        return [self.list.item(i).text() for i in range(self.list.count())]

    def select_arm(self, arm_id: str) -> None:
        i = self.arm_choice.findData(arm_id)
        if i >= 0:
            self.arm_choice.setCurrentIndex(i)

    # ------------------------------------------------------------------ model -> widgets

    def _fill_arms(self) -> None:
        arms = self.document.cell.arms
        ids = [a.id for a in arms]
        if self._arm_id not in ids:
            self._arm_id = ids[0] if ids else None
            self._number = 0
        with blocked(self.arm_choice):
            self.arm_choice.clear()
            for a in arms:
                self.arm_choice.addItem(f"{a.name} ({a.id})", a.id)
            if self._arm_id is not None:
                self.arm_choice.setCurrentIndex(ids.index(self._arm_id))

    def _show(self, force: bool = False) -> None:
        cell = self.document.cell
        have = seq.arm_sequences(cell, self._arm_id) if self._arm_id else []
        self._number = min(self._number, max(len(have) - 1, 0))
        ids = self.targets()
        names = {t.id: t.name for t in cell.targets if t.id in set(ids)}
        key = (self._arm_id, self._number, tuple(cell.sequences[i].targets for i in have), names)
        if not force and key == getattr(self, "_shown_key", None):
            return  # a drag step elsewhere (a base, a fixture): nothing here changed
        self._shown_key = key
        with blocked(self.number_choice):
            self.number_choice.clear()
            for k, i in enumerate(have):
                n = len(cell.sequences[i].targets)
                self.number_choice.addItem(f"Sequence {k + 1} ({n} visits)", k)
            self.number_choice.setCurrentIndex(self._number if have else -1)
        self.number_choice.setVisible(len(have) > 1)
        chosen = set(self.document.selection.ids)
        with self._guard, blocked(self.list):
            self.list.clear()
            for k, tid in enumerate(ids):
                item = QListWidgetItem(f"{k + 1}. {names.get(tid, tid)} ({tid})")
                item.setData(_ID_ROLE, tid)
                self.list.addItem(item)
                item.setSelected(tid in chosen)
        if self._arm_id is None:
            text = "The cell has no arm."
        elif not ids:
            text = (
                "No sequence yet: select this arm's targets in the order it visits them "
                "(Ctrl+click), then Add Selected."
            )
        else:
            text = f"{len(ids)} visits; the last returns to the first."
        self.summary.setText(text)
        on = self._arm_id is not None
        self.add_button.setEnabled(on)
        for b in (self.remove_button, self.up_button, self.down_button, self.reverse_button):
            b.setEnabled(bool(ids))

    def _on_cell_changed(self, changes: Changes) -> None:
        if not (changes.structure or changes.other or changes.arms or changes.targets):
            return  # a fixture moved: nothing shown here changed
        if self.document.unsettled and not (changes.structure or changes.other):
            return  # a drag steps: names and order cannot change until it ends
        wanted = [f"{a.name} ({a.id})" for a in self.document.cell.arms]
        names = [self.arm_choice.itemText(i) for i in range(self.arm_choice.count())]
        if names != wanted or changes.structure:
            self._fill_arms()
        self._show()

    def _on_selection(self, ids: tuple[str, ...]) -> None:
        if self._guard:
            return
        cell = self.document.cell
        arm_ids = {a.id for a in cell.arms}
        owner = {t.id: t.arm for t in cell.targets}
        for i in ids:
            arm = i if i in arm_ids else owner.get(i)
            if arm in arm_ids:
                if arm != self._arm_id:
                    self.select_arm(arm)
                break
        chosen = set(ids)
        with self._guard, blocked(self.list):
            for k in range(self.list.count()):
                it = self.list.item(k)
                it.setSelected(it.data(_ID_ROLE) in chosen)
        self.list.viewport().update()

    def _on_arm_chosen(self, index: int) -> None:
        arm_id = self.arm_choice.itemData(index)
        if arm_id is not None and arm_id != self._arm_id:
            self._arm_id = arm_id
            self._number = 0
            self._show(force=True)

    def _on_number_chosen(self, index: int) -> None:
        if index >= 0 and index != self._number:
            self._number = index
            self._show()

    def _on_list_selection(self) -> None:
        if self._guard:
            return
        ids = [it.data(_ID_ROLE) for it in self.list.selectedItems()]
        if ids:
            with self._guard:
                self.document.selection.set(ids)

    # ------------------------------------------------------------------ widgets -> model

    def _arm_name(self) -> str:
        return self.document.cell.arm(self._arm_id).name if self._arm_id else ""

    def _edit(self, label: str, cell: Cell) -> bool:
        try:
            cell = check_cell(cell)
        except Invalid as exc:
            self.message.emit(f"✕ {exc}")
            self._show(force=True)
            return False
        self.document.edit(label, cell)
        return True

    def _positions(self) -> list[int]:
        return sorted(self.list.row(it) for it in self.list.selectedItems())

    def add_selected(self) -> None:
        """Add the selected targets of this arm at the end, in selection (click) order."""
        if self._arm_id is None:
            return
        cell, added, skipped = seq.append_targets(
            self.document.cell, self._arm_id, self.document.selection.ids, self._number
        )
        owner = {t.id: t.arm for t in self.document.cell.targets}
        others = [i for i in skipped if owner.get(i) not in (None, self._arm_id)]
        there = [i for i in skipped if owner.get(i) == self._arm_id]
        notes = []
        if others:
            notes.append(f"{len(others)} of another arm left out")
        if there:
            notes.append(f"{len(there)} repeating the visit just before")
        if not added:
            why = "; ".join(notes) if notes else "select targets on the canvas first"
            self.message.emit(f"Nothing added to {self._arm_name()}'s sequence: {why}")
            return
        n = len(added)
        label = f"Add {n} target{'s' if n != 1 else ''} to the sequence of {self._arm_name()}"
        if self._edit(label, cell):
            self.message.emit(label + (f" ({'; '.join(notes)})" if notes else ""))

    def remove_chosen(self) -> None:
        """Remove the chosen visits."""
        rows = self._positions()
        if self._arm_id is None or not rows:
            return
        cell = seq.remove_positions(self.document.cell, self._arm_id, rows, self._number)
        n = len(rows)
        self._edit(
            f"Remove {n} visit{'s' if n != 1 else ''} from the sequence of {self._arm_name()}", cell
        )

    def move_chosen(self, step: int) -> None:
        """Move the chosen visit one place earlier (-1) or later (+1)."""
        rows = self._positions()
        if self._arm_id is None or len(rows) != 1:
            return
        src = rows[0]
        dst = src + step
        if not 0 <= dst < self.list.count():
            return
        cell = seq.move_position(self.document.cell, self._arm_id, src, dst, self._number)
        if self._edit(f"Reorder the sequence of {self._arm_name()}", cell):
            self.list.item(dst).setSelected(True)

    def reverse(self) -> None:
        """Visit the targets the other way round."""
        if self._arm_id is None or not self.targets():
            return
        cell = seq.reverse(self.document.cell, self._arm_id, self._number)
        self._edit(f"Reverse the sequence of {self._arm_name()}", cell)

    def _on_rows_moved(self, *_args: QModelIndex | int) -> None:
        # The list is rebuilt after the edit: never while Qt is still moving its rows.
        if not self._guard:
            QTimer.singleShot(0, self._commit_list_order)

    def _commit_list_order(self) -> None:
        if self._arm_id is None:
            return
        ids = [self.list.item(k).data(_ID_ROLE) for k in range(self.list.count())]
        if tuple(ids) == self.targets():
            return
        cell = seq.set_sequence(self.document.cell, self._arm_id, ids, self._number)
        if not self._edit(f"Reorder the sequence of {self._arm_name()}", cell):
            self._show(force=True)

    def set_order(self, ids: list[str]) -> None:
        """Reorder the visits as a drop would (for tests and keyboard use)."""
        if self._arm_id is None:
            return
        cell = seq.set_sequence(self.document.cell, self._arm_id, ids, self._number)
        self._edit(f"Reorder the sequence of {self._arm_name()}", cell)

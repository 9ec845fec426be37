"""The layout variants panel: the cell's named alternative layouts and their comparison.

The list holds the variants (:mod:`kinematics.variants`); each can be switched to,
renamed or deleted, and a new one is made from the current layout with one click. Every
one of these is one undo step (``document.edit``). Below, the comparison table puts the
current layout and every variant side by side for one arm, with the numbers of
:func:`kinematics.variants.compare_variants` (computed in a worker thread once the
changes pause) and the better value of each row marked by a star and a tint, as
:func:`kinematics.variants.comparison_report` decides it.
"""

from __future__ import annotations

import sys

from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QFont
from PySide6.QtWidgets import (
    QComboBox,
    QGridLayout,
    QHBoxLayout,
    QHeaderView,
    QInputDialog,
    QLabel,
    QListWidget,
    QListWidgetItem,
    QPushButton,
    QSplitter,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from app import style
from app.canvas.qtstyle import mixed
from app.document import Changes, Document
from app.placement_worker import BackgroundRunner
from kinematics.cell import Cell
from kinematics.layout_keys import variants
from kinematics.variants import (
    BETTER,
    CURRENT,
    VariantRow,
    add_variant,
    apply_variant,
    compare_variants,
    comparison_report,
    delete_variant,
    rename_variant,
)
from kinematics.wording import length

__all__ = ["VariantsPanel", "METRIC_LABELS", "BETTER_MARK", "next_variant_name", "metric_text"]

#: Row labels of the comparison, in order (keys of kinematics.variants.BETTER).
METRIC_LABELS = {
    "feasible_targets": "Targets feasible",
    "worst_limit_margin_deg": "Worst limit margin",
    "worst_reach_margin": "Worst reach margin",
    "smallest_clearance": "Smallest clearance",
    "placement_tolerance": "Placement tolerance",
    "heading_tolerance_deg": "Heading tolerance (−/+)",
    "region_area": "Placement region area",
    "cycle_time_s": "Cycle time",
}
#: Appended to the better value of a row (with a tint: never colour alone).
BETTER_MARK = "★"


def next_variant_name(cell: Cell) -> str:
    """A free name for a new variant: "Variant 1", "Variant 2", ...

    Examples
    --------
    >>> next_variant_name(Cell("c"))
    'Variant 1'
    """
    taken = {v.name for v in variants(cell)}
    k = 1
    while f"Variant {k}" in taken:
        k += 1
    return f"Variant {k}"


def metric_text(key: str, row: VariantRow, units: str) -> str:
    """A comparison value as the table shows it ("—" when not defined)."""
    v = getattr(row, key)
    if key == "feasible_targets":
        return f"{v} of {row.targets}"
    if v is None:
        return "—"
    if key == "worst_limit_margin_deg":
        return f"{v:.1f}°"
    if key == "heading_tolerance_deg":
        return f"−{v[0]:.2f}° / +{v[1]:.2f}°"
    if key == "region_area":
        return f"{v:,.0f} {units}²".replace(",", " ")
    if key == "cycle_time_s":
        return f"{v:.2f} s"
    return length(v, units)


class VariantsPanel(QWidget):
    """The variants list with its buttons, and the comparison table (see the module docstring).

    Dialog hook (replaced in tests): ``ask_name(title, label, text) -> str | None``.
    """

    def __init__(
        self, document: Document, parent: QWidget | None = None, *, shown: bool = True
    ) -> None:
        super().__init__(parent)
        self.document = document
        self.ask_name = self._ask_name
        self.shown = shown  # on screen (a dock tells, set_shown)
        self.rows: list[VariantRow] | None = None  # the comparison shown (None: not yet)
        self.report: dict | None = None
        self._compared: Cell | None = None
        self.runner = BackgroundRunner(self)
        self.runner.value.connect(self._on_rows)
        self.runner.failed.connect(self._on_failed)

        # The list and its buttons beside the table (the dock is wide and low).
        outer = QHBoxLayout(self)
        outer.setContentsMargins(4, 4, 4, 4)
        split = QSplitter(Qt.Orientation.Horizontal)
        outer.addWidget(split)
        left = QWidget()
        lay = QVBoxLayout(left)
        lay.setContentsMargins(0, 0, 0, 0)
        self.list = QListWidget()
        self.list.setObjectName("variant_list")
        self.list.setToolTip("The cell's layout variants; double-click one to switch to it")
        self.list.itemDoubleClicked.connect(
            lambda it: self.switch(it.data(Qt.ItemDataRole.UserRole))
        )
        self.list.currentItemChanged.connect(lambda *_a: self._enable())
        lay.addWidget(self.list, 1)
        buttons = QGridLayout()
        self.new_button = QPushButton("New from Current")
        self.new_button.setToolTip("Keep the current layout as a new variant (one click)")
        self.new_button.clicked.connect(lambda: self.create())
        self.switch_button = QPushButton("Switch To")
        self.switch_button.setToolTip("Make the selected variant's bases and arm models current")
        self.switch_button.clicked.connect(lambda: self.switch(self.selected()))
        self.rename_button = QPushButton("Rename…")
        self.rename_button.clicked.connect(lambda: self.rename(self.selected()))
        self.delete_button = QPushButton("Delete")
        self.delete_button.clicked.connect(lambda: self.delete(self.selected()))
        for k, b in enumerate(
            (self.new_button, self.switch_button, self.rename_button, self.delete_button)
        ):
            buttons.addWidget(b, k // 2, k % 2)
        lay.addLayout(buttons)
        top = QHBoxLayout()
        self.arm_label = QLabel("Arm")
        self.arm_choice = QComboBox()
        self.arm_choice.setObjectName("variant_arm_choice")
        self.arm_choice.currentIndexChanged.connect(lambda _i: self._fill_table())
        top.addWidget(self.arm_label)
        top.addWidget(self.arm_choice, 1)
        lay.addLayout(top)
        self.note = QLabel()
        self.note.setObjectName("variant_note")
        self.note.setWordWrap(True)
        lay.addWidget(self.note)
        split.addWidget(left)
        self.table = QTableWidget()
        self.table.setObjectName("variant_table")
        self.table.setEditTriggers(QTableWidget.EditTrigger.NoEditTriggers)
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        self.table.verticalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        split.addWidget(self.table)
        split.setStretchFactor(0, 0)
        split.setStretchFactor(1, 1)
        split.setSizes([300, 700])
        self._units = document.cell.units

        document.events.cell_changed.connect(self._on_cell_changed)
        document.events.changes_paused.connect(self.refresh_comparison)
        self._fill_list()
        self._fill_arms()
        self.refresh_comparison()

    # ------------------------------------------------------------------ edits (undo steps)

    def selected(self) -> str | None:
        """The name of the variant selected in the list."""
        it = self.list.currentItem()
        return None if it is None else it.data(Qt.ItemDataRole.UserRole)

    def create(self, name: str | None = None) -> str:
        """Keep the current layout as a new variant (one undo step); returns its name."""
        cell = self.document.cell
        name = name or next_variant_name(cell)
        self.document.edit(f"New variant {name}", add_variant(cell, name))
        self._select(name)
        return name

    def switch(self, name: str | None) -> None:
        """Make a variant's bases (and arm models) current: one undo step."""
        if name is None:
            return
        self.document.edit(f"Switch to variant {name}", apply_variant(self.document.cell, name))

    def rename(self, name: str | None, new: str | None = None) -> None:
        """Rename a variant (asks for the name when none is given): one undo step."""
        if name is None:
            return
        if new is None:
            new = self.ask_name("Rename variant", "New name:", name)
        if not new or new == name:
            return
        try:
            cell = rename_variant(self.document.cell, name, new.strip())
        except ValueError as exc:
            self.note.setText(f"Cannot rename the variant: {exc}")
            return
        self.document.edit(f"Rename variant {name} to {new.strip()}", cell)
        self._select(new.strip())

    def delete(self, name: str | None) -> None:
        """Delete a variant: one undo step."""
        if name is None:
            return
        self.document.edit(f"Delete variant {name}", delete_variant(self.document.cell, name))

    def _ask_name(self, title: str, label: str, text: str) -> str | None:
        got, ok = QInputDialog.getText(self, title, label, text=text)
        return got if ok else None

    # ------------------------------------------------------------------ model -> widgets

    def _on_cell_changed(self, changes: Changes) -> None:
        self._fill_list()
        if changes.structure or changes.arms:
            self._fill_arms()
        if not self.document.unsettled:
            self.refresh_comparison()
        elif self.rows is not None:
            self.note.setText("The comparison is updated once the changes pause.")

    def _select(self, name: str) -> None:
        for i in range(self.list.count()):
            if self.list.item(i).data(Qt.ItemDataRole.UserRole) == name:
                self.list.setCurrentRow(i)
                return

    def _fill_list(self) -> None:
        cell = self.document.cell
        keep = self.selected()
        try:
            vs = variants(cell)
        except ValueError as exc:
            vs = ()
            self.note.setText(f"The cell's variants cannot be read: {exc}")
        self.list.blockSignals(True)
        self.list.clear()
        for v in vs:
            here = apply_variant(cell, v.name).arms == cell.arms
            it = QListWidgetItem(f"● {v.name}   (the current layout)" if here else f"○ {v.name}")
            it.setData(Qt.ItemDataRole.UserRole, v.name)
            it.setToolTip(
                "This variant holds the current layout" if here else "Double-click to switch to it"
            )
            self.list.addItem(it)
        self.list.blockSignals(False)
        if keep is not None:
            self._select(keep)
        self._enable()

    def _enable(self) -> None:
        has = self.selected() is not None
        for b in (self.switch_button, self.rename_button, self.delete_button):
            b.setEnabled(has)

    def _fill_arms(self) -> None:
        arms = self.document.cell.arms
        keep = self.arm_choice.currentData()
        self.arm_choice.blockSignals(True)
        self.arm_choice.clear()
        for a in arms:
            self.arm_choice.addItem(f"{a.name} ({a.id})", a.id)
        i = self.arm_choice.findData(keep)
        self.arm_choice.setCurrentIndex(i if i >= 0 else 0)
        self.arm_choice.blockSignals(False)
        several = len(arms) > 1
        self.arm_choice.setVisible(several)
        self.arm_label.setVisible(several)
        self._fill_table()

    # ------------------------------------------------------------------ the comparison

    @property
    def busy(self) -> bool:
        """True while the comparison is being computed."""
        return self.runner.busy

    def refresh_comparison(self) -> None:
        """Compute the comparison of the current state in the worker (if not done yet), once
        the panel is on screen (hidden, it waits: the comparison costs a placement search per
        layout and arm)."""
        cell = self.document.cell
        if self._compared is cell:
            return
        if not self.shown:
            return  # set_shown asks again
        self._compared = cell
        if not cell.arms:
            self.rows, self.report = [], None
            self._fill_table()
            return
        self.note.setText("Comparing the layouts…")
        self.runner.submit(lambda: iter([(cell, compare_variants(cell))]))

    def set_shown(self, on: bool) -> None:
        """Whether the panel is on screen (its dock's tab in front); hidden, the comparison
        waits (it costs a placement search per layout and arm)."""
        self.shown = bool(on)
        if self.shown and not self.document.unsettled:
            self.refresh_comparison()

    def _on_rows(self, _job: int, value) -> None:
        cell, rows = value
        self.rows = rows
        self.report = comparison_report(cell, rows)
        self._units = cell.units
        self.note.setText(
            f"{BETTER_MARK} and a tint mark the better value of each row; margins, clearance "
            "and tolerances are compared among the layouts reaching the most targets."
        )
        self._fill_table()

    def _on_failed(self, _job: int, exc) -> None:
        self._compared = None
        if isinstance(exc, ValueError):
            self.note.setText(f"Cannot compare the layouts: {exc}")
            return
        sys.excepthook(type(exc), exc, exc.__traceback__)

    def cell_row(self, layout: str, key: str) -> QTableWidgetItem | None:
        """The table item of a layout's metric (tests)."""
        for c in range(self.table.columnCount()):
            if self.table.horizontalHeaderItem(c).data(Qt.ItemDataRole.UserRole) == layout:
                r = list(METRIC_LABELS).index(key)
                return self.table.item(r, c)
        return None

    def _fill_table(self) -> None:
        arm_id = self.arm_choice.currentData()
        rows = [r for r in (self.rows or []) if r.arm == arm_id]
        layouts = [r.layout for r in rows]
        self.table.clear()
        self.table.setRowCount(len(METRIC_LABELS))
        self.table.setColumnCount(len(layouts))
        self.table.setVerticalHeaderLabels(list(METRIC_LABELS.values()))
        better = (self.report or {}).get("better", {}).get(arm_id, {})
        units = self._units
        bold = QFont()
        bold.setBold(True)
        tint = QBrush(mixed(style.PALETTE["pine"], 0.22))
        for c, row in enumerate(rows):
            head = QTableWidgetItem("Current layout" if row.layout == CURRENT else row.layout)
            head.setData(Qt.ItemDataRole.UserRole, row.layout)
            self.table.setHorizontalHeaderItem(c, head)
            for r, key in enumerate(METRIC_LABELS):
                text = metric_text(key, row, units)
                best = row.layout in better.get(key, [])
                item = QTableWidgetItem(f"{text} {BETTER_MARK}" if best else text)
                item.setData(Qt.ItemDataRole.UserRole, getattr(row, key))
                item.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
                if best:
                    item.setFont(bold)
                    item.setBackground(tint)
                    word = "higher" if BETTER[key] == "max" else "lower"
                    item.setToolTip(f"the better value of this row ({word} is better)")
                self.table.setItem(r, c, item)

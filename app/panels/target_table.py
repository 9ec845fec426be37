"""The target table: every target with the engine's verdict, sortable and editable.

Rows follow the cell's targets; the numbers come from ``document.evaluation``.
Name, x, y and arm are editable (validated; each change is one undo step).
Selection is shared with the canvas through ``document.selection``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from PySide6.QtCore import (
    QAbstractTableModel,
    QItemSelection,
    QItemSelectionModel,
    QModelIndex,
    QPersistentModelIndex,
    QSortFilterProxyModel,
    Qt,
    Signal,
)
from PySide6.QtGui import QBrush, QColor, QFont
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QHeaderView,
    QStyledItemDelegate,
    QTableView,
    QWidget,
)

from app.bind import EchoGuard
from app.document import Changes, Document
from app.interaction.sequence_edits import in_sequences
from app.panels.text import clearance_text, degrees, length, nearest_text, status_cell
from app.panels.validate import (
    TARGET_EXTRA_COLUMNS,
    Invalid,
    check_cell,
    format_number,
    replace_target,
    target_with,
    targets_with,
)
from app.pause import pause_timer
from app.style import PALETTE, status_style
from kinematics.ik import Status

__all__ = [
    "Column",
    "COLUMNS",
    "SORT_ROLE",
    "PAST_LIMIT",
    "FORBIDDEN",
    "ID_ROLE",
    "TargetTableModel",
    "TargetTable",
]

#: Role holding the value the proxy sorts by (numbers sort as numbers).
SORT_ROLE = Qt.ItemDataRole.UserRole + 1
#: Role holding the target id of a row.
ID_ROLE = Qt.ItemDataRole.UserRole + 2


@dataclass(frozen=True)
class Column:
    key: str
    header: str
    tip: str
    editable: bool = False
    numeric: bool = False


COLUMNS = (
    Column("id", "id", "Target id"),
    Column("name", "name", "Target name (editable)", editable=True),
    Column("x", "x", "x in the cell's units (editable)", editable=True, numeric=True),
    Column("y", "y", "y in the cell's units (editable)", editable=True, numeric=True),
    Column("arm", "arm", "Arm the target is assigned to (editable)", editable=True),
    Column(
        "work_height",
        "work height",
        "Height the tool works at (editable; empty: not given, the tool then follows the link "
        "rule); with several rows selected an edit sets them all",
        editable=True,
        numeric=True,
    ),
    Column(
        "dwell",
        "dwell",
        "Seconds spent at the target, added to the cycle time (editable; empty: 0); with "
        "several rows selected an edit sets them all",
        editable=True,
        numeric=True,
    ),
    Column("status", "status", "feasible, or why the target fails"),
    Column("elbow", "elbow", "Chosen elbow configuration (both at a singular pose)"),
    Column("q1p", "q1 +", "q1, positive configuration (q2 > 0); ✕ past its limit", numeric=True),
    Column("q2p", "q2 +", "q2, positive configuration; ✕ past its limit", numeric=True),
    Column("q1n", "q1 −", "q1, negative configuration (q2 < 0); ✕ past its limit", numeric=True),
    Column("q2n", "q2 −", "q2, negative configuration; ✕ past its limit", numeric=True),
    Column(
        "clear_p",
        "clearance +",
        "Positive configuration: smallest distance from the arm's bodies to a fixture that "
        "blocks them; ✕ collides (touching counts; negative: how deep it goes in)",
        numeric=True,
    ),
    Column(
        "clear_n",
        "clearance −",
        "Negative configuration: smallest distance from the arm's bodies to a fixture that "
        "blocks them; ✕ collides (touching counts; negative: how deep it goes in)",
        numeric=True,
    ),
    Column(
        "nearest",
        "nearest fixture",
        "Chosen configuration (or the one that comes closest): the blocking fixture nearest "
        "the arm and the body nearest it; ✕ collides",
    ),
    Column(
        "limit",
        "limit margin",
        "Degrees to the nearest joint limit in the chosen configuration (negative: past it)",
        numeric=True,
    ),
    Column(
        "reach",
        "reach margin",
        "Distance to the nearer reach circle (negative: outside the annulus)",
        numeric=True,
    ),
    Column(
        "manip",
        "manipulability",
        "a1·a2·|sin q2|: 0 at a singular pose (stretched or folded), largest at q2 = ±90°",
        numeric=True,
    ),
)
_KEYS = [c.key for c in COLUMNS]
# Widest a column starts (pixels); longer text is elided and shown whole in the tooltip.
_COLUMN_CAPS = {"id": 110, "name": 160, "status": 290, "nearest": 220}
_EDIT_LABELS = {
    "name": "Rename {id}",
    "x": "Move {id}",
    "y": "Move {id}",
    "arm": "Assign {id} to arm",
    "work_height": "Set work height of {id}",
    "dwell": "Set dwell of {id}",
}


def _extra_text(t: Any, column: str, units: str) -> tuple[str, float]:
    """Text and sort value of a work height or dwell ('' and -inf when not given)."""
    v = t.extra.get(TARGET_EXTRA_COLUMNS[column][0])
    if not isinstance(v, int | float) or isinstance(v, bool):
        return "", -math.inf
    return (length(float(v), units, False) if column == "work_height" else f"{v:g}"), float(v)


_ROOT = QModelIndex()


@dataclass
class _Row:
    id: str
    text: list[str]
    sort: list[Any]
    status: int
    feasible: bool
    tip: str = ""
    allowed: tuple[bool, bool] = (True, True)


#: Marks a joint angle past its limit (the status column says which limit fails).
PAST_LIMIT = "✕"
#: Marks a value of a configuration the arm's elbow setting forbids.
FORBIDDEN = "⊘"
_Q_COLUMNS = ("q1p", "q2p", "q1n", "q2n", "clear_p", "clear_n")


def _joint(v: float, within: bool) -> str:
    text = degrees(v, False)
    return text if within or not math.isfinite(v) else f"{text} {PAST_LIMIT}"


def _num(v: float) -> float:
    return v if math.isfinite(v) else -math.inf


def _clear(ev: Any, i: int, k: int) -> float:
    """Clearance for sorting: unlimited (nothing blocks) sorts last, no pose first."""
    if not ev.clearance.size:
        return -math.inf
    v = float(ev.clearance[i, k])
    return -math.inf if math.isnan(v) else v


def _row(cell: Any, evaluation: Any, t: Any) -> _Row:
    """One row's texts and sort values (formatted only when the row is shown or sorted)."""
    u = cell.units
    try:
        ev, i = evaluation.locate(t.id)
    except KeyError:
        (wh, wh_s), (dw, dw_s) = _extra_text(t, "work_height", u), _extra_text(t, "dwell", u)
        text = [t.id, t.name, length(t.x, u, False), length(t.y, u, False), t.arm, wh, dw]
        rest = len(COLUMNS) - 8
        text += [f"✕ fails: no arm {t.arm!r}"] + ["—"] * rest
        sort = [t.id, t.name, t.x, t.y, t.arm, wh_s, dw_s, 99] + [-math.inf] * rest
        return _Row(t.id, text, sort, int(Status.BEYOND_REACH), False)
    ik = ev.ik
    q = [float(v) for v in ik.q_deg[i].reshape(-1)]  # q1+, q2+, q1-, q2-
    within = ik.within_limits[i].reshape(-1)
    allowed = (bool(ik.allowed[i, 0]), bool(ik.allowed[i, 1]))
    k = ev.closest(i)
    limit = float(ik.limit_margin_deg[i, k])
    reach = float(ik.reach_margin[i])
    manip = float(ik.manipulability[i, k])
    elbow = ev.chosen_elbow(i) or "—"
    st = int(ev.status[i])
    qtext = [_joint(v, bool(ok)) for v, ok in zip(q, within, strict=True)]
    ctext = [clearance_text(ev, i, 0, u, unit=False), clearance_text(ev, i, 1, u, unit=False)]
    for c in (0, 1):
        if not allowed[c]:
            # The elbow setting forbids this configuration: its values are no option.
            qtext[2 * c] = f"{FORBIDDEN} {qtext[2 * c]}"
            qtext[2 * c + 1] = f"{FORBIDDEN} {qtext[2 * c + 1]}"
            ctext[c] = f"{FORBIDDEN} {ctext[c]}"
    (wh, wh_s), (dw, dw_s) = _extra_text(t, "work_height", u), _extra_text(t, "dwell", u)
    text = [
        t.id,
        t.name,
        length(t.x, u, False),
        length(t.y, u, False),
        t.arm,
        wh,
        dw,
        status_cell(ev, i, u, short=True),
        elbow,
        *qtext,
        *ctext,
        nearest_text(ev, i, k),
        degrees(limit, False),
        length(reach, u, False),
        f"{manip:,.{0 if u == 'mm' else 1}f}" if math.isfinite(manip) else "—",
    ]
    sort = [t.id, t.name, t.x, t.y, t.arm, wh_s, dw_s, st, elbow, *(_num(v) for v in q)]
    sort += [_clear(ev, i, 0), _clear(ev, i, 1), nearest_text(ev, i, k)]
    sort += [_num(limit), _num(reach), _num(manip)]
    tip = status_cell(ev, i, u)
    return _Row(t.id, text, sort, st, bool(ev.feasible[i]), tip, allowed)


def _changed_rows(old: Any, new: Any) -> set[int] | None:
    """Indices (in the arm's target order) whose verdict differs between two evaluations of
    one arm, None when the arrays are not comparable (then every row of the arm changed)."""
    if old is new:
        return set()
    if old is None or old.target_ids != new.target_ids:
        return None
    if not new.target_ids:
        return set()  # an arm without targets has no rows (and empty arrays reshape badly)
    diff = np.zeros(len(new.target_ids), dtype=bool)
    for a, b in (
        (old.status, new.status),
        (old.chosen, new.chosen),
        (old.ik.q_deg, new.ik.q_deg),
        (old.clearance, new.clearance),
        (old.clearance_fixture, new.clearance_fixture),
        (old.clearance_body, new.clearance_body),
        (old.ik.reach_margin, new.ik.reach_margin),
    ):
        if a.shape != b.shape:
            return None
        d = ~((a == b) | (np.isnan(a) & np.isnan(b)) if a.dtype.kind == "f" else (a == b))
        diff |= d.reshape(len(diff), -1).any(axis=1)
    if old.arm.name != new.arm.name or old.fixtures != new.fixtures:
        diff[:] = True
    return set(np.flatnonzero(diff).tolist())


class TargetTableModel(QAbstractTableModel):
    """Table model over the document's targets and their evaluation.

    Rows are formatted when the view asks for them (only the visible ones are painted)
    and kept until their target or its verdict changes; a change tells the view only
    about the rows it touched.

    Signals
    -------
    refused(str)
        An edit was refused; the text names the target, the column and the reason.
    """

    refused = Signal(str)

    def __init__(self, document: Document, parent: Any = None) -> None:
        super().__init__(parent)
        self.document = document
        self._ids: list[str] = []
        self._row_of: dict[str, int] = {}
        self._cache: dict[int, _Row] = {}
        self._evaluation = document.evaluation
        #: Rows formatted so far (for tests of the lazy formatting).
        self.formatted = 0
        self._rebuild()
        document.events.cell_changed.connect(self._on_cell_changed)

    # ------------------------------------------------------------------ contents

    def _rebuild(self) -> None:
        self._evaluation = self.document.evaluation
        self._ids = [t.id for t in self.document.cell.targets]
        self._row_of = {tid: r for r, tid in enumerate(self._ids)}
        self._cache = {}

    def _get(self, r: int) -> _Row:
        row = self._cache.get(r)
        if row is None:
            cell = self.document.cell
            row = _row(cell, self._evaluation, cell.targets[r])
            self._cache[r] = row
            self.formatted += 1
        return row

    def _on_cell_changed(self, changes: Changes) -> None:
        cell = self.document.cell
        if changes.structure or len(self._ids) != len(cell.targets):
            self.beginResetModel()
            self._rebuild()
            self.endResetModel()
            return
        old, new = self._evaluation, self.document.evaluation
        self._evaluation = new
        rows: set[int] = {self._row_of[t] for t in changes.targets if t in self._row_of}
        every = bool(changes.other and (cell.units != old.cell.units))
        for aid, ev in new.arms.items():
            prev = old.arms.get(aid)
            changed = _changed_rows(prev, ev)
            idx = range(len(ev.target_ids)) if changed is None else changed
            rows.update(self._row_of[ev.target_ids[i]] for i in idx)
        if every:
            rows = set(range(len(self._ids)))
        for r in rows:
            self._cache.pop(r, None)
        if rows:
            # One signal for the span of changed rows: the view repaints what it shows.
            last = len(COLUMNS) - 1
            self.dataChanged.emit(self.index(min(rows), 0), self.index(max(rows), last))
        if changes.other:
            self.headerDataChanged.emit(Qt.Orientation.Horizontal, 0, len(COLUMNS) - 1)

    def target_id(self, row: int) -> str:
        """Id of the target in a (source) row."""
        return self._ids[row]

    def row_of(self, target_id: str) -> int:
        """Source row of a target, -1 when there is none."""
        return self._row_of.get(target_id, -1)

    # ------------------------------------------------------------------ Qt model API

    def rowCount(self, parent: QModelIndex | QPersistentModelIndex = _ROOT) -> int:
        return 0 if parent.isValid() else len(self._ids)

    def columnCount(self, parent: QModelIndex | QPersistentModelIndex = _ROOT) -> int:
        return 0 if parent.isValid() else len(COLUMNS)

    def headerData(self, section: int, orientation: Qt.Orientation, role: int = 0) -> Any:
        if orientation != Qt.Orientation.Horizontal or not 0 <= section < len(COLUMNS):
            return None
        col = COLUMNS[section]
        if role == Qt.ItemDataRole.DisplayRole:
            units = self.document.cell.units
            # Units on a second line keep the numeric columns narrow.
            if col.key in ("x", "y"):
                return f"{col.header}\n({units})"
            if col.key in ("q1p", "q2p", "q1n", "q2n"):
                return f"{col.header}\n(°)"
            if col.key in ("clear_p", "clear_n"):
                return f"{col.header}\n({units})"
            if col.key == "nearest":
                return "nearest fixture\n(chosen)"
            if col.key == "limit":
                return "limit\nmargin (°)"
            if col.key == "reach":
                return f"reach\nmargin ({units})"
            if col.key == "manip":
                return f"manipu-\nlability ({units}²)"
            if col.key == "work_height":
                return f"work\nheight ({units})"
            if col.key == "dwell":
                return "dwell\n(s)"
            return col.header
        if role == Qt.ItemDataRole.ToolTipRole:
            return col.tip
        return None

    def data(self, index: QModelIndex | QPersistentModelIndex, role: int = 0) -> Any:
        if not index.isValid():
            return None
        c = index.column()
        key = _KEYS[c]
        if role == ID_ROLE:
            return self._ids[index.row()]
        row = self._get(index.row())
        if role == Qt.ItemDataRole.DisplayRole:
            return row.text[c]
        if role == Qt.ItemDataRole.EditRole:
            t = self.document.cell.targets[index.row()]
            if key in ("x", "y"):
                return format_number(getattr(t, key))
            if key in TARGET_EXTRA_COLUMNS:
                v = t.extra.get(TARGET_EXTRA_COLUMNS[key][0])
                return "" if not isinstance(v, int | float) else format_number(float(v))
            return row.text[c]
        if role == SORT_ROLE:
            return row.sort[c]
        forbidden = key in _Q_COLUMNS and not row.allowed[0 if key.endswith("p") else 1]
        if role == Qt.ItemDataRole.ToolTipRole and forbidden:
            return f"{row.text[c]}: not allowed by the arm's elbow setting"
        if role == Qt.ItemDataRole.ToolTipRole and key in ("id", "name", "status", "nearest"):
            return row.tip if key == "status" and row.tip else row.text[c]
        if forbidden and role == Qt.ItemDataRole.ForegroundRole:
            return QBrush(QColor(PALETTE["slate"]))
        if forbidden and role == Qt.ItemDataRole.FontRole:
            f = QFont()
            f.setItalic(True)
            return f
        if role == Qt.ItemDataRole.TextAlignmentRole and COLUMNS[c].numeric:
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        if key in ("clear_p", "clear_n", "nearest") and "✕" in row.text[c]:
            # Collisions: bold and the status colour, besides the ✕ mark.
            if role == Qt.ItemDataRole.ForegroundRole:
                return QBrush(QColor(status_style(Status.COLLISION).colour).darker(130))
            if role == Qt.ItemDataRole.FontRole:
                f = QFont()
                f.setBold(True)
                return f
        if key == "status":
            if role == Qt.ItemDataRole.ForegroundRole:
                return QBrush(QColor(status_style(row.status).colour).darker(130))
            if role == Qt.ItemDataRole.FontRole and not row.feasible:
                f = QFont()
                f.setBold(True)
                return f
        return None

    def flags(self, index: QModelIndex | QPersistentModelIndex) -> Qt.ItemFlag:
        base = super().flags(index)
        if index.isValid() and COLUMNS[index.column()].editable:
            return base | Qt.ItemFlag.ItemIsEditable
        return base

    def setData(
        self, index: QModelIndex | QPersistentModelIndex, value: Any, role: int = 2
    ) -> bool:
        if role != Qt.ItemDataRole.EditRole or not index.isValid():
            return False
        key = _KEYS[index.column()]
        if not COLUMNS[index.column()].editable:
            return False
        cell = self.document.cell
        target = cell.targets[index.row()]
        ids = self.ids_for_edit(index.row()) if key != "name" else [target.id]
        if ids != [target.id] or key == "arm":
            return self.set_column(ids, key, str(value))
        try:
            changed = target_with(cell, target, key, str(value))
            new_cell = check_cell(replace_target(cell, changed))
        except Invalid as exc:
            self.refused.emit(f"✕ {target.id} {key}: {exc}")
            return False
        label = _EDIT_LABELS[key].format(id=target.id)
        if key == "arm":
            label = f"Assign {target.id} to {changed.arm}"
        self.document.edit(label, new_cell)
        return True

    def ids_for_edit(self, row: int) -> list[str]:
        """The targets an edit of ``row`` applies to (the view sets every selected row)."""
        return [self._ids[row]]

    def ask_sequence_place(self, target_ids: list[str], arm_id: str) -> str:
        """Targets in a sequence go to another arm: "end" (to the end of its sequence),
        "drop" (out of the sequence) or "cancel". Replaced by the window and by tests."""
        from app.panels.column_edit import ask_sequence_place

        return ask_sequence_place(None, self.document.cell, target_ids, arm_id)

    def set_column(self, ids: list[str], key: str, text: str) -> bool:
        """Set one editable column of several targets to the same typed value: one undo step;
        a change of arm asks what becomes of the targets' places in sequences."""
        cell = self.document.cell
        place = "drop"
        if key == "arm":
            arm_id = text.strip()
            known = [a.id for a in cell.arms]
            if arm_id not in known:
                self.refused.emit(f"✕ arm: no arm with id {arm_id!r} (arms: {', '.join(known)})")
                return False
            moving = [i for i in ids if self._target_arm(i) not in (None, arm_id)]
            if not moving:
                return False
            placed = sorted(in_sequences(cell, moving))
            if placed:
                place = self.ask_sequence_place(placed, arm_id)
                if place == "cancel":
                    return False
            ids = moving
        try:
            new_cell, label = targets_with(cell, ids, key, text, place)
        except Invalid as exc:
            self.refused.emit(f"✕ {exc}")
            return False
        self.document.edit(label, new_cell)
        return True

    def _target_arm(self, target_id: str) -> str | None:
        r = self._row_of.get(target_id)
        return None if r is None else self.document.cell.targets[r].arm


class _ArmDelegate(QStyledItemDelegate):
    """Arm column editor: a choice list of the cell's arm ids."""

    def __init__(self, document: Document, parent: QWidget) -> None:
        super().__init__(parent)
        self.document = document

    def createEditor(self, parent: QWidget, option: Any, index: QModelIndex) -> QWidget:
        box = QComboBox(parent)
        for a in self.document.cell.arms:
            box.addItem(f"{a.id} — {a.name}", a.id)
        return box

    def setEditorData(self, editor: QWidget, index: QModelIndex) -> None:
        assert isinstance(editor, QComboBox)
        editor.setCurrentIndex(max(0, editor.findData(index.data(Qt.ItemDataRole.EditRole))))

    def setModelData(self, editor: QWidget, model: Any, index: QModelIndex) -> None:
        assert isinstance(editor, QComboBox)
        model.setData(index, editor.currentData(), Qt.ItemDataRole.EditRole)


class TargetTable(QTableView):
    """Sortable view of the targets, its selection tied to ``document.selection``."""

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self._guard = EchoGuard()
        self.source = TargetTableModel(document, self)
        pause_timer(document)  # the "changes paused" clock this view waits for
        self.proxy = QSortFilterProxyModel(self)
        self.proxy.setSourceModel(self.source)
        self.proxy.setSortRole(SORT_ROLE)
        self.setModel(self.proxy)
        self.setObjectName("target_table")
        self.setSortingEnabled(True)
        self.sortByColumn(-1, Qt.SortOrder.AscendingOrder)  # file order until a header is clicked
        self.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.setEditTriggers(
            QAbstractItemView.EditTrigger.DoubleClicked
            | QAbstractItemView.EditTrigger.EditKeyPressed
            | QAbstractItemView.EditTrigger.AnyKeyPressed
        )
        self.setAlternatingRowColors(True)
        self.setWordWrap(False)
        self.verticalHeader().setVisible(False)
        self.verticalHeader().setDefaultSectionSize(self.fontMetrics().height() + 6)
        header = self.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        header.setStretchLastSection(False)
        self.setItemDelegateForColumn(_KEYS.index("arm"), _ArmDelegate(document, self))
        self.source.ids_for_edit = self._ids_for_edit
        from app.panels.column_edit import install_column_menu

        install_column_menu(self)
        self.fit_columns()

        self.selectionModel().selectionChanged.connect(self._on_view_selection)
        self.source.modelReset.connect(self._show_selection)
        self.source.modelReset.connect(self.fit_columns)
        document.selection.changed.connect(lambda _ids: self._show_selection())
        # Rows keep their places while a drag steps; the sort order catches up at the pause.
        document.events.cell_changed.connect(self._hold_order)
        document.events.changes_paused.connect(lambda: self.proxy.setDynamicSortFilter(True))

    def _hold_order(self, _changes: Changes) -> None:
        if self.document.previewing and self.proxy.dynamicSortFilter():
            self.proxy.setDynamicSortFilter(False)

    def fit_columns(self) -> None:
        """Size columns to their contents, long names and reasons capped (they elide)."""
        self.resizeColumnsToContents()
        for key, cap in _COLUMN_CAPS.items():
            c = _KEYS.index(key)
            self.setColumnWidth(c, min(self.columnWidth(c), cap))

    def _ids_for_edit(self, row: int) -> list[str]:
        """An edit of a selected row sets every selected row; of another row, that row."""
        tid = self.source.target_id(row)
        chosen = self.selected_ids()
        return chosen if tid in chosen and len(chosen) > 1 else [tid]

    def selected_ids(self) -> list[str]:
        """Target ids of the selected rows, in view order."""
        rows = sorted(self.selectionModel().selectedRows(), key=lambda i: i.row())
        return [self.proxy.mapToSource(i).data(ID_ROLE) for i in rows]

    def _on_view_selection(self, *_args: Any) -> None:
        if self._guard:
            return
        with self._guard:
            self.document.selection.set(self.selected_ids())

    def _show_selection(self) -> None:
        if self._guard:
            return
        ids = [i for i in self.document.selection.ids if self.source.row_of(i) >= 0]
        sel = QItemSelection()
        for tid in ids:
            src = self.source.index(self.source.row_of(tid), 0)
            idx = self.proxy.mapFromSource(src)
            sel.select(idx, idx)
        flags = (
            QItemSelectionModel.SelectionFlag.ClearAndSelect
            | QItemSelectionModel.SelectionFlag.Rows
        )
        with self._guard:
            self.selectionModel().select(sel, flags)
            if ids:
                first = self.proxy.mapFromSource(self.source.index(self.source.row_of(ids[0]), 0))
                self.scrollTo(first)

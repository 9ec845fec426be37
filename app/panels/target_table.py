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
from app.panels.text import clearance_text, degrees, length, nearest_text, status_cell
from app.panels.validate import Invalid, check_cell, format_number, replace_target, target_with
from app.pause import pause_timer
from app.style import PALETTE, status_style
from kinematics.ik import Status
from kinematics.wording import segment_time_text

__all__ = [
    "Column",
    "COLUMNS",
    "SORT_ROLE",
    "PAST_LIMIT",
    "FORBIDDEN",
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
    Column("status", "status", "ok, or why the target fails"),
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
    Column(
        "segment",
        "move in + dwell",
        "From the fastest plan of the target's sequence: the time of the move into the "
        "target, then the dwell there; one entry per visit (a dash: no planned sequence)",
        numeric=True,
    ),
)
_KEYS = [c.key for c in COLUMNS]
# Widest a column starts (pixels); longer text is elided and shown whole in the tooltip.
_COLUMN_CAPS = {"id": 110, "name": 160, "status": 290, "nearest": 220, "segment": 220}
_EDIT_LABELS = {
    "name": "Rename {id}",
    "x": "Move {id}",
    "y": "Move {id}",
    "arm": "Assign {id} to arm",
}


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


_VISITS: dict[int, tuple[Any, dict[str, list[tuple[float, float]]]]] = {}


def _visits(ev: Any) -> dict[str, list[tuple[float, float]]]:
    """Per target id, (move in, dwell) of each visit in the arm's plans (kept per plans)."""
    plans = getattr(ev, "plans", ())
    hit = _VISITS.get(id(plans))
    if hit is not None and hit[0] is plans:
        return hit[1]
    out: dict[str, list[tuple[float, float]]] = {}
    for p in plans:
        segs = p.segments
        for v, seg in enumerate(segs):
            # Visit v: the move into it is the previous segment, its dwell starts this one.
            out.setdefault(seg.from_id, []).append((segs[v - 1].time_s, seg.dwell_s))
    if len(_VISITS) > 64:
        _VISITS.clear()
    _VISITS[id(plans)] = (plans, out)
    return out


def _segment_cell(ev: Any, target_id: str) -> tuple[str, float]:
    visits = _visits(ev).get(target_id)
    if not visits:
        return "—", -math.inf
    text = "; ".join(segment_time_text(a, b) for a, b in visits)
    return text, float(visits[0][0])


def _row(cell: Any, evaluation: Any, t: Any) -> _Row:
    """One row's texts and sort values (formatted only when the row is shown or sorted)."""
    u = cell.units
    try:
        ev, i = evaluation.locate(t.id)
    except KeyError:
        text = [t.id, t.name, length(t.x, u, False), length(t.y, u, False), t.arm]
        rest = len(COLUMNS) - 6
        text += [f"✕ fails: no arm {t.arm!r}"] + ["—"] * rest
        sort = [t.id, t.name, t.x, t.y, t.arm, 99] + [-math.inf] * rest
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
    text = [
        t.id,
        t.name,
        length(t.x, u, False),
        length(t.y, u, False),
        t.arm,
        status_cell(ev, i, u, short=True),
        elbow,
        *qtext,
        *ctext,
        nearest_text(ev, i, k),
        degrees(limit, False),
        length(reach, u, False),
        f"{manip:,.{0 if u == 'mm' else 1}f}" if math.isfinite(manip) else "—",
    ]
    seg_text, seg_sort = _segment_cell(ev, t.id)
    text.append(seg_text)
    sort = [t.id, t.name, t.x, t.y, t.arm, st, elbow, *(_num(v) for v in q)]
    sort += [_clear(ev, i, 0), _clear(ev, i, 1), nearest_text(ev, i, k)]
    sort += [_num(limit), _num(reach), _num(manip), seg_sort]
    tip = status_cell(ev, i, u)
    return _Row(t.id, text, sort, st, bool(ev.feasible[i]), tip, allowed)


def _changed_rows(old: Any, new: Any) -> set[int] | None:
    """Indices (in the arm's target order) whose verdict differs between two evaluations of
    one arm, None when the arrays are not comparable (then every row of the arm changed)."""
    if old is new:
        return set()
    if old is None or old.target_ids != new.target_ids:
        return None
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
    seen_old, seen_new = _visits(old), _visits(new)
    if seen_old != seen_new:
        # The plans changed (speeds, dwells, configurations): rows whose visits differ.
        for i, tid in enumerate(new.target_ids):
            if seen_old.get(tid) != seen_new.get(tid):
                diff[i] = True
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
            if col.key == "segment":
                return "move in\n+ dwell (s)"
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

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
    QItemSelection,
    QItemSelectionModel,
    QModelIndex,
    QPersistentModelIndex,
    QSortFilterProxyModel,
    Qt,
    Signal,
)
from PySide6.QtGui import QBrush, QColor, QFont, QStandardItem, QStandardItemModel
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
from kinematics.wording import segment_time_text

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
    "work_height": "Set work height of {id}",
    "dwell": "Set dwell of {id}",
}


def _extra_text(t: Any, column: str, units: str) -> tuple[str, float]:
    """Text and sort value of a work height or dwell ('' and -inf when not given)."""
    v = t.extra.get(TARGET_EXTRA_COLUMNS[column][0])
    if not isinstance(v, int | float) or isinstance(v, bool):
        return "", -math.inf
    return (length(float(v), units, False) if column == "work_height" else f"{v:g}"), float(v)


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
    seg_text, seg_sort = _segment_cell(ev, t.id)
    text.append(seg_text)
    sort = [t.id, t.name, t.x, t.y, t.arm, wh_s, dw_s, st, elbow, *(_num(v) for v in q)]
    sort += [_clear(ev, i, 0), _clear(ev, i, 1), nearest_text(ev, i, k)]
    sort += [_num(limit), _num(reach), _num(manip), seg_sort]
    tip = status_cell(ev, i, u)
    return _Row(t.id, text, sort, st, bool(ev.feasible[i]), tip, allowed)


_RIGHT = int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
_STATUS_BRUSHES: dict[int, QBrush] = {}
_LOOKS: dict[str, tuple[QBrush, QFont]] = {}


def _font(bold: bool = False, italic: bool = False) -> QFont:
    f = QFont()
    f.setBold(bold)
    f.setItalic(italic)
    return f


def _status_brush(status: int) -> QBrush:
    b = _STATUS_BRUSHES.get(status)
    if b is None:
        b = QBrush(QColor(status_style(status).colour).darker(130))
        _STATUS_BRUSHES[status] = b
    return b


def _init_looks() -> None:
    if not _LOOKS:
        _LOOKS["forbidden"] = (QBrush(QColor(PALETTE["slate"])), _font(italic=True))
        _LOOKS["collision"] = (_status_brush(int(Status.COLLISION)), _font(bold=True))


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
    seen_old, seen_new = _visits(old), _visits(new)
    if seen_old != seen_new:
        # The plans changed (speeds, dwells, configurations): rows whose visits differ.
        for i, tid in enumerate(new.target_ids):
            if seen_old.get(tid) != seen_new.get(tid):
                diff[i] = True
    if old.arm.name != new.arm.name or old.fixtures != new.fixtures:
        diff[:] = True
    return set(np.flatnonzero(diff).tolist())


class TargetTableModel(QStandardItemModel):
    """Table model over the document's targets and their evaluation.

    The texts live in Qt's own item store, so painting a cell never calls into Python.
    A change updates only the rows whose target or verdict changed, and while a drag
    steps only those of them the view shows (the rest when the changes pause or when they
    scroll into view).

    Signals
    -------
    refused(str)
        An edit was refused; the text names the target, the column and the reason.
    """

    refused = Signal(str)

    def __init__(self, document: Document, parent: Any = None) -> None:
        super().__init__(parent)
        _init_looks()
        self.document = document
        self._ids: list[str] = []
        self._row_of: dict[str, int] = {}
        self._stale: set[int] = set()
        self._evaluation = document.evaluation
        #: Which source rows the view shows (set by the view; default: every row).
        self.visible_rows = lambda: range(len(self._ids))
        #: Rows formatted so far (for tests of the lazy formatting).
        self.formatted = 0
        self.setColumnCount(len(COLUMNS))
        self._set_headers()
        self._rebuild()
        document.events.cell_changed.connect(self._on_cell_changed)
        document.events.changes_paused.connect(self._on_paused)

    # ------------------------------------------------------------------ contents

    def _set_headers(self) -> None:
        for c, col in enumerate(COLUMNS):
            item = QStandardItem(self._header_text(col))
            item.setToolTip(col.tip)
            self.setHorizontalHeaderItem(c, item)

    def _header_text(self, col: Column) -> str:
        units = self.document.cell.units
        # Units on a second line keep the numeric columns narrow.
        if col.key in ("x", "y", "clear_p", "clear_n"):
            return f"{col.header}\n({units})"
        if col.key in ("q1p", "q2p", "q1n", "q2n"):
            return f"{col.header}\n(°)"
        return {
            "nearest": "nearest fixture\n(chosen)",
            "limit": "limit\nmargin (°)",
            "reach": f"reach\nmargin ({units})",
            "manip": f"manipu-\nlability ({units}²)",
            "segment": "move in\n+ dwell (s)",
            "work_height": f"work\nheight ({units})",
            "dwell": "dwell\n(s)",
        }.get(col.key, col.header)

    def _rebuild(self) -> None:
        self._evaluation = self.document.evaluation
        self._ids = [t.id for t in self.document.cell.targets]
        self._row_of = {tid: r for r, tid in enumerate(self._ids)}
        self._units = self.document.cell.units
        self.setRowCount(0)
        self.setRowCount(len(self._ids))
        for r in range(len(self._ids)):
            self._fill(r)
        self._stale = set()

    def _fill(self, r: int) -> None:
        """Write row ``r``'s texts, looks and sort values into the item store."""
        cell = self.document.cell
        row = _row(cell, self._evaluation, cell.targets[r])
        self.formatted += 1
        for c, (key, col) in enumerate(zip(_KEYS, COLUMNS, strict=True)):
            item = self.item(r, c)
            if item is None:
                item = QStandardItem()
                flags = Qt.ItemFlag.ItemIsSelectable | Qt.ItemFlag.ItemIsEnabled
                if col.editable:
                    flags |= Qt.ItemFlag.ItemIsEditable
                item.setFlags(flags)
                if col.numeric:
                    item.setData(_RIGHT, Qt.ItemDataRole.TextAlignmentRole)
                self.setItem(r, c, item)
            for role, value in _cell_roles(row, c, key).items():
                item.setData(value, role)
        self.item(r, 0).setData(row.id, ID_ROLE)

    def _on_cell_changed(self, changes: Changes) -> None:
        cell = self.document.cell
        if changes.structure or len(self._ids) != len(cell.targets):
            self.beginResetModel()
            self.blockSignals(True)
            try:
                self._rebuild()
            finally:
                self.blockSignals(False)
            self.endResetModel()
            return
        rows = self._diff(self.document.evaluation)
        rows |= {self._row_of[t] for t in changes.targets if t in self._row_of}
        if changes.other and cell.units != self._units:
            rows = set(range(len(self._ids)))
        self._units = cell.units
        self._stale |= rows
        if self.document.unsettled:
            # A drag step: the rows shown now; the others when they are shown or at the pause.
            self.refresh_rows(self.visible_rows())
        else:
            self.refresh_stale()
        if changes.other:
            self._set_headers()

    def _diff(self, new: Any) -> set[int]:
        """Rows whose verdict differs between the evaluation shown and ``new``."""
        old, self._evaluation = self._evaluation, new
        rows: set[int] = set()
        for aid, ev in new.arms.items():
            changed = _changed_rows(old.arms.get(aid), ev)
            idx = range(len(ev.target_ids)) if changed is None else changed
            rows.update(self._row_of[ev.target_ids[i]] for i in idx)
        return rows

    def _on_paused(self) -> None:
        # Settling may plan the sequences (other chosen configurations): compare again.
        if len(self._ids) == len(self.document.cell.targets):
            self._stale |= self._diff(self.document.evaluation)
        self.refresh_stale()

    def refresh_rows(self, rows) -> None:
        """Bring these rows up to date if they are stale."""
        todo = sorted(self._stale.intersection(rows))
        if not todo:
            return
        self._stale.difference_update(todo)
        self._update(todo)

    def refresh_stale(self) -> None:
        """Bring every stale row up to date (the changes paused)."""
        todo = sorted(self._stale)
        self._stale = set()
        self._update(todo)

    def _update(self, rows: list[int]) -> None:
        if not rows:
            return
        # One signal for the span instead of one per cell: the view repaints what it shows.
        self.blockSignals(True)
        try:
            for r in rows:
                self._fill(r)
        finally:
            self.blockSignals(False)
        self.dataChanged.emit(self.index(rows[0], 0), self.index(rows[-1], len(COLUMNS) - 1))

    def target_id(self, row: int) -> str:
        """Id of the target in a (source) row."""
        return self._ids[row]

    def row_of(self, target_id: str) -> int:
        """Source row of a target, -1 when there is none."""
        return self._row_of.get(target_id, -1)

    def edit_text(self, row: int, column: int) -> str:
        """What an editor of a cell starts with: numbers exactly, not as shown."""
        key = _KEYS[column]
        t = self.document.cell.targets[row]
        if key in ("x", "y"):
            return format_number(getattr(t, key))
        if key in TARGET_EXTRA_COLUMNS:
            v = t.extra.get(TARGET_EXTRA_COLUMNS[key][0])
            ok = isinstance(v, int | float) and not isinstance(v, bool)
            return format_number(float(v)) if ok else ""
        return str(self.item(row, column).text())

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


def _cell_roles(row: _Row, c: int, key: str) -> dict[int, Any]:
    """Every role's value of one cell (display, tooltip, looks, sort)."""
    D, T = Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.ToolTipRole
    F, B = Qt.ItemDataRole.FontRole, Qt.ItemDataRole.ForegroundRole
    text = row.text[c]
    cell: dict[int, Any] = {D: text, SORT_ROLE: row.sort[c], T: None, F: None, B: None}
    forbidden = key in _Q_COLUMNS and not row.allowed[0 if key.endswith("p") else 1]
    if forbidden:
        cell[T] = f"{text}: not allowed by the arm's elbow setting"
        cell[B], cell[F] = _LOOKS["forbidden"]
    elif key in ("id", "name", "status", "nearest"):
        cell[T] = row.tip if key == "status" and row.tip else text
    if not forbidden and key in ("clear_p", "clear_n", "nearest") and "✕" in text:
        # Collisions: bold and the status colour, besides the ✕ mark.
        cell[B], cell[F] = _LOOKS["collision"]
    if key == "status":
        cell[B] = _status_brush(row.status)
        cell[F] = _LOOKS["collision"][1] if not row.feasible else None
    return cell


class _ExactDelegate(QStyledItemDelegate):
    """Editors of x and y start from the exact coordinate, not the rounded text shown."""

    def __init__(self, table: TargetTable) -> None:
        super().__init__(table)
        self._table = table

    def setEditorData(self, editor: QWidget, index: QModelIndex) -> None:
        src = self._table.proxy.mapToSource(index)
        editor.setText(self._table.source.edit_text(src.row(), src.column()))


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
        self._exact = _ExactDelegate(self)
        for key in ("x", "y", *TARGET_EXTRA_COLUMNS):
            self.setItemDelegateForColumn(_KEYS.index(key), self._exact)
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
        # Rows updated while a drag steps are the ones shown; others follow when shown.
        self.source.visible_rows = self.visible_source_rows
        self.verticalScrollBar().valueChanged.connect(self._show_rows)
        document.events.changes_paused.connect(lambda: self.proxy.setDynamicSortFilter(True))

    def visible_source_rows(self) -> list[int]:
        """Source rows the view shows now (a few beyond, so scrolling meets no stale row)."""
        n = self.proxy.rowCount()
        if n == 0 or not self.isVisible():
            return []
        first = self.rowAt(0)
        last = self.rowAt(self.viewport().height() - 1)
        first = 0 if first < 0 else max(0, first - 2)
        last = n - 1 if last < 0 else min(n - 1, last + 2)
        proxy = self.proxy
        return [proxy.mapToSource(proxy.index(r, 0)).row() for r in range(first, last + 1)]

    def _show_rows(self, *_args: Any) -> None:
        self.source.refresh_rows(self.visible_source_rows())

    def resizeEvent(self, event) -> None:  # noqa: N802 (Qt name)
        super().resizeEvent(event)
        self._show_rows()

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

"""The problems list: every infeasible target, every colliding or impossible move, every
shared zone (two arms' restricted spaces overlap: an interlock is needed), then two arms
that touch while they run their cycles together and shared zones both occupy at once.

Each entry gives the reason in words and numbers (from :mod:`kinematics.wording`).
Clicking a target's entry selects the target and asks the canvas to centre on it;
clicking a move's entry selects its two targets and asks the canvas to show both.

Target entries follow every change live, from the document's shared evaluation: while a
drag steps they give their reasons without amounts (which would change at every pointer
move), and the amounts come back when the changes pause. Moves cost more (their
clearance is sampled along the joint path), so during a drag they are checked again once
the changes pause and the previous move entries stay until then; so do the arms in time
(the evaluation's :meth:`~kinematics.evaluate.CellEvaluation.interference`), whose
entries ask the window to show their time (``time_requested``). Only entries whose text
changed are touched.
"""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QBrush, QColor
from PySide6.QtWidgets import QAbstractItemView, QListView, QListWidget, QListWidgetItem, QWidget

from app.bind import EchoGuard, blocked
from app.document import Changes, Document
from app.panels.text import move_problems
from app.pause import pause_timer
from app.style import PALETTE, status_style
from kinematics.bodies import BodyDataError
from kinematics.ik import Status
from kinematics.playback import interval_overlaps
from kinematics.wording import arm_contact_text, target_reason, zone_overlap_text, zone_text

__all__ = ["ProblemsList", "NO_PROBLEMS", "NO_TARGETS", "ZONE_GLYPH"]

#: Marks a shared zone's entry (the hatched-grid look of the zones on the canvas).
ZONE_GLYPH = "▦"

#: Shown when every target is feasible and every move clear.
NO_PROBLEMS = (
    "✓ No problems: every target is feasible within its arm's limits and clear of "
    "fixtures, and every move is clear"
)
#: Shown when the cell has no targets.
NO_TARGETS = "No targets yet: add targets to see what the arms reach"

_ID_ROLE = Qt.ItemDataRole.UserRole
_MOVE_ROLE = Qt.ItemDataRole.UserRole + 1
_TIME_ROLE = Qt.ItemDataRole.UserRole + 2
_ZONE_ROLE = Qt.ItemDataRole.UserRole + 3
#: Marks of the arms-in-time entries: two arms touch (circled cross), a zone both occupy.
CONTACT_GLYPH, OVERLAP_GLYPH = "⊗", "◫"

_Key = tuple[str, str]  # ("t", target id), ("m", "arm\0from\0to") or ("a", "c\0a\0b\0time")


class ProblemsList(QListWidget):
    """Lists infeasible targets and bad moves; a click selects and requests a zoom.

    Signals
    -------
    zoom_requested(str)
        Target id the canvas should centre on.
    zoom_targets_requested(list)
        Target ids the canvas should show together (the two ends of a move).
    count_changed(int)
        Number of problems (targets, moves, arms in time), after every change.
    time_requested(float)
        Seconds into the arms' run the window should show (an arms-in-time entry).
    """

    zoom_requested = Signal(str)
    zoom_targets_requested = Signal(list)
    count_changed = Signal(int)
    time_requested = Signal(float)

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self._guard = EchoGuard()
        pause_timer(document)  # the "changes paused" clock this view waits for
        self._target_lines: list[tuple[str, str, int]] = []  # (id, line, status)
        self._move_lines: list[tuple[tuple[str, str, str], str]] = []
        self._zone_lines: list[tuple[tuple[str, str], str]] = []
        self._time_lines: list[tuple[str, str, float]] = []  # (key, line, time)
        self._shown: list[tuple[_Key, str]] = []
        self._names_of: tuple = ()
        self._names: dict[str, str] = {}
        self._order: dict[str, int] = {}
        self._per_arm: dict[str, tuple] = {}
        self._brushes: dict[object, QBrush] = {}
        self._selection_key: tuple | None = None
        self._moves_stale = False
        self._count = -1
        self.setObjectName("problems_list")
        self.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.setWordWrap(True)
        self.setUniformItemSizes(False)
        # Lay long lists out in batches between events rather than all at once per change.
        self.setLayoutMode(QListView.LayoutMode.Batched)
        self.setSpacing(3)
        self.itemClicked.connect(self._on_clicked)
        self.itemActivated.connect(self._on_clicked)
        self.itemSelectionChanged.connect(self._on_view_selection)
        document.events.cell_changed.connect(self._on_cell_changed)
        document.events.changes_paused.connect(self._on_paused)
        document.selection.changed.connect(lambda _ids: self._show_selection())
        # A new window defers moves, zones and arms in time until it has painted once.
        self._moves_stale = document.unsettled
        self._refresh(moves=not document.unsettled)

    @property
    def count_of_problems(self) -> int:
        """Entries listed: failing targets, colliding or impossible moves, shared zones,
        arms in time."""
        return (
            len(self._target_lines)
            + len(self._move_lines)
            + len(self._zone_lines)
            + len(self._time_lines)
        )

    def problem_zones(self) -> list[tuple[str, str]]:
        """The arm pairs of the shared zones listed, in order."""
        return [key for key, _ in self._zone_lines]

    @property
    def failing_targets(self) -> int:
        """Failing targets listed (moves not counted)."""
        return len(self._target_lines)

    def problem_ids(self) -> list[str]:
        """Ids of the failing targets listed, in order."""
        return [tid for tid, _line, _st in self._target_lines]

    def time_problems(self) -> list[tuple[str, float]]:
        """(line, time) of the arms-in-time entries listed, in order."""
        return [(line, t) for _key, line, t in self._time_lines]

    def problem_moves(self) -> list[tuple[str, str, str]]:
        """(arm, from, to) of the moves listed, in order."""
        return [key for key, _ in self._move_lines]

    @property
    def moves_pending(self) -> bool:
        """True while the move entries wait for a pause in the changes."""
        return self._moves_stale

    def lines(self) -> list[str]:
        """The texts shown, in order (the no-problems line when there are none)."""
        return [self.item(i).text() for i in range(self.count())]

    # ------------------------------------------------------------------ updates

    def _on_cell_changed(self, _changes: Changes) -> None:
        stepping = self.document.unsettled
        if stepping and self.document.cell.sequences:
            self._moves_stale = True
        self._refresh(moves=not stepping)

    def _on_paused(self) -> None:
        self._refresh(moves=True)

    def _refresh(self, moves: bool) -> None:
        if moves:
            self._moves_stale = False
            self._move_lines = self._compute_moves()
            self._zone_lines = self._compute_zones()
            self._time_lines = self._compute_times()
        self._target_lines = self._compute_targets(plain=self.document.unsettled)
        self._show()

    def _compute_targets(self, plain: bool) -> list[tuple[str, str, int]]:
        """(id, line, status) of every failing target, in the cell's order.

        Only failing targets are visited (per arm, from the evaluation's arrays); an arm's
        lines are kept while its evaluation, the names and the wording stay the same.
        """
        evaluation = self.document.evaluation
        cell = evaluation.cell
        names = {t.id: t.name for t in cell.targets} if self._names_of is not cell.targets else None
        if names is not None:
            self._names_of, self._names = cell.targets, names
            self._order = {t.id: k for k, t in enumerate(cell.targets)}
            self._per_arm = {}
        rows: list[tuple[int, str, str, int]] = []
        per_arm = {}
        for aid, ev in evaluation.arms.items():
            hit = self._per_arm.get(aid)
            if hit is not None and hit[0] is ev and hit[1] == plain:
                lines = hit[2]
            else:
                lines = []
                status = ev.status
                for i in np.flatnonzero(~np.asarray(ev.feasible, dtype=bool)).tolist():
                    tid = ev.target_ids[i]
                    st = int(status[i])
                    reason = target_reason(ev, i, cell.units, "plain" if plain else "full")
                    line = f"{status_style(st).glyph} {tid} {self._names[tid]} — {reason}"
                    lines.append((self._order[tid], tid, line, st))
            per_arm[aid] = (ev, plain, lines)
            rows.extend(lines)
        self._per_arm = per_arm
        if sum(len(ev.target_ids) for ev in evaluation.arms.values()) != len(cell.targets):
            for t in cell.targets:
                try:
                    evaluation.locate(t.id)
                except KeyError:
                    line = f"✕ {t.id} {t.name} — assigned to missing arm {t.arm!r}"
                    rows.append((self._order[t.id], t.id, line, int(Status.BEYOND_REACH)))
        rows.sort()
        return [(tid, line, st) for _k, tid, line, st in rows]

    def _compute_moves(self) -> list[tuple[tuple[str, str, str], str]]:
        cell = self.document.cell
        if not cell.sequences:
            return []
        return move_problems(cell, self.document.evaluation.moves())

    def _compute_times(self) -> list[tuple[str, str, float]]:
        """Arms that touch while running their cycles together, and shared zones both
        occupy at once (with the start change that keeps them apart)."""
        cell = self.document.cell
        if len(cell.arms) < 2 or not cell.sequences:
            return []
        it = self.document.evaluation.interference()
        out = []
        for sep in it.separations:
            c = sep.first_contact
            if c is not None:
                line = f"{CONTACT_GLYPH} {arm_contact_text(c)}"
                t = float(c.time_s)
                out.append(("\0".join(("c", *c.arms, repr(t))), line, t))
        for z in it.zones:
            if not z.overlap:
                continue
            both = interval_overlaps(*(z.intervals[a] for a in z.arms))
            line = f"{OVERLAP_GLYPH} {zone_overlap_text(z, both)}"
            t = float(both[0][0]) if both else 0.0
            out.append(("\0".join(("z", z.space, *z.arms, repr(t))), line, t))
        return out

    def _compute_zones(self) -> list[tuple[tuple[str, str], str]]:
        """One entry per pair of arms whose restricted spaces overlap (ISO 10218 terms):
        they need an interlock. The operating zones lie inside these."""
        cell = self.document.cell
        if len(cell.arms) < 2:
            return []
        try:
            zones = self.document.evaluation.spaces(operating=False).zones
        except (BodyDataError, ValueError):
            return []
        names = {a.id: a.name for a in cell.arms}
        out = []
        for z in zones:
            if z.kind != "restricted":
                continue
            a, b = z.arms
            line = zone_text((names.get(a, a), names.get(b, b)), z.kind, z.area, cell.units)
            out.append(((a, b), f"{ZONE_GLYPH} {line}"))
        return out

    def _wanted(self) -> list[tuple[_Key, str, QBrush | None, str]]:
        out: list[tuple[_Key, str, QBrush | None, str]] = []
        for tid, line, st in self._target_lines:
            out.append((("t", tid), line, self._brush(st), line))
        for key, line in self._move_lines:
            collides = line.startswith(status_style(Status.COLLISION).glyph)
            brush = self._brush(int(Status.COLLISION if collides else Status.Q2_LIMIT))
            tip = f"{line}\nClick to select and show both targets of the move."
            out.append((("m", "\0".join(key)), line, brush, tip))
        for (a, b), line in self._zone_lines:
            tip = (
                f"{line}\nTurn on View > Overlays > Shared zones to see where; click to select "
                "both arms."
            )
            brush = QBrush(QColor(PALETTE["amber"]).darker(170))
            out.append((("z", f"{a}\0{b}"), line, brush, tip))
        for key, line, t in self._time_lines:
            tip = f"{line}\nClick to show the arms at {t:.3f} s on the timeline."
            out.append((("a", key), line, self._brush(int(Status.COLLISION)), tip))
        if not out:
            text = NO_PROBLEMS if self.document.cell.targets else NO_TARGETS
            out.append((("none", ""), text, self._brush("ok"), text))
        return out

    def _brush(self, status: int | str) -> QBrush:
        b = self._brushes.get(status)
        if b is None:
            if status == "ok":
                b = QBrush(QColor(PALETTE["pine"]).darker(130))
            else:
                b = QBrush(QColor(status_style(int(status)).colour).darker(150))
            self._brushes[status] = b
        return b

    def _show(self) -> None:
        wanted = self._wanted()
        new_keys = [k for k, *_ in wanted]
        old_keys = [k for k, _ in self._shown]
        with blocked(self):
            if new_keys != old_keys:
                self._merge(old_keys, wanted)
            for row, (_key, line, brush, tip) in enumerate(wanted):
                if self._shown[row][1] != line:
                    item = self.item(row)
                    item.setText(line)
                    item.setToolTip(tip)
                    item.setForeground(brush)
            self._shown = [(k, line) for k, line, *_ in wanted]
        self._show_selection()
        if self.count_of_problems != self._count:
            self._count = self.count_of_problems
            self.count_changed.emit(self._count)

    def _merge(self, old_keys: list[_Key], wanted: list) -> None:
        """Make the items follow ``wanted``: remove entries that went, insert new ones."""
        new_set = {k for k, *_ in wanted}
        for row in range(len(old_keys) - 1, -1, -1):
            if old_keys[row] not in new_set:
                self.takeItem(row)
                del self._shown[row]
        have = {k for k, _ in self._shown}
        for row, (key, line, brush, tip) in enumerate(wanted):
            if key in have:
                continue
            item = QListWidgetItem(line)
            kind, ident = key
            if kind == "t":
                item.setData(_ID_ROLE, ident)
            elif kind == "m":
                item.setData(_MOVE_ROLE, ident.split("\0"))
            elif kind == "a":
                t = next(t for k, _line, t in self._time_lines if k == ident)
                item.setData(_TIME_ROLE, t)
            elif kind == "z":
                item.setData(_ZONE_ROLE, ident.split("\0"))
            else:
                item.setFlags(Qt.ItemFlag.ItemIsEnabled)
            item.setToolTip(tip)
            item.setForeground(brush)
            self.insertItem(row, item)
            self._shown.insert(row, (key, line))

    # ------------------------------------------------------------------ selection

    @staticmethod
    def _ids_of(item: QListWidgetItem) -> list[str]:
        tid = item.data(_ID_ROLE)
        if tid:
            return [tid]
        move = item.data(_MOVE_ROLE)
        if not move:
            return list(item.data(_ZONE_ROLE) or [])
        return list(dict.fromkeys(move[1:]))

    def _on_clicked(self, item: QListWidgetItem) -> None:
        t = item.data(_TIME_ROLE)
        if t is not None:
            self.time_requested.emit(float(t))
            return
        ids = self._ids_of(item)
        if not ids:
            return
        with self._guard:
            self.document.selection.set(ids)
        self._show_selection()
        if item.data(_ID_ROLE):
            self.zoom_requested.emit(ids[0])
        elif item.data(_MOVE_ROLE):
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
        key = (frozenset(chosen), tuple(k for k, _ in self._shown))
        if key == self._selection_key:
            return  # the same selection over the same entries (the common case in a drag)
        self._selection_key = key
        with self._guard, blocked(self):
            for i in range(self.count()):
                it = self.item(i)
                ids = self._ids_of(it)
                # A move is shown selected when both of its targets are.
                want = bool(ids) and all(t in chosen for t in ids)
                if it.isSelected() != want:
                    it.setSelected(want)
        self.viewport().update()

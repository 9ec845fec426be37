"""The problems list: every infeasible target, then every colliding or impossible move,
then every shared zone (two arms' restricted spaces overlap: an interlock is needed).

Each entry gives the reason in words and numbers (from :mod:`kinematics.wording`).
Clicking a target's entry selects the target and asks the canvas to centre on it;
clicking a move's entry selects its two targets and asks the canvas to show both.

Target entries follow every change live, from the document's shared evaluation: while a
drag steps they give their reasons without amounts (which would change at every pointer
move), and the amounts come back when the changes pause. Moves cost more (their
clearance is sampled along the joint path), so during a drag they are checked again once
the changes pause and the previous move entries stay until then. Only entries whose
text changed are touched.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QBrush, QColor
from PySide6.QtWidgets import QAbstractItemView, QListWidget, QListWidgetItem, QWidget

from app.bind import EchoGuard, blocked
from app.document import Changes, Document
from app.panels.text import move_problems
from app.pause import pause_timer
from app.style import PALETTE, status_style
from kinematics.bodies import BodyDataError
from kinematics.ik import Status
from kinematics.wording import target_reason, zone_text

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
_ZONE_ROLE = Qt.ItemDataRole.UserRole + 2

_Key = tuple[str, str]  # ("t", target id) or ("m", "arm\0from\0to")


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

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self._guard = EchoGuard()
        pause_timer(document)  # the "changes paused" clock this view waits for
        self._target_lines: list[tuple[str, str, int]] = []  # (id, line, status)
        self._move_lines: list[tuple[tuple[str, str, str], str]] = []
        self._zone_lines: list[tuple[tuple[str, str], str]] = []
        self._shown: list[tuple[_Key, str]] = []
        self._lines_of: dict[str, tuple[object, str, bool, str]] = {}
        self._moves_stale = False
        self._count = -1
        self.setObjectName("problems_list")
        self.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.setWordWrap(True)
        self.setUniformItemSizes(False)
        self.setSpacing(3)
        self.itemClicked.connect(self._on_clicked)
        self.itemActivated.connect(self._on_clicked)
        self.itemSelectionChanged.connect(self._on_view_selection)
        document.events.cell_changed.connect(self._on_cell_changed)
        document.events.changes_paused.connect(self._on_paused)
        document.selection.changed.connect(lambda _ids: self._show_selection())
        self._refresh(moves=True)

    @property
    def count_of_problems(self) -> int:
        """Entries listed: failing targets, colliding or impossible moves, shared zones."""
        return len(self._target_lines) + len(self._move_lines) + len(self._zone_lines)

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
        self._target_lines = self._compute_targets(plain=self.document.unsettled)
        self._show()

    def _compute_targets(self, plain: bool) -> list[tuple[str, str, int]]:
        """(id, line, status) of every failing target, in the cell's order.

        Lines are kept per target while its arm's evaluation and its name stay the same.
        """
        evaluation = self.document.evaluation
        cell = evaluation.cell
        out = []
        keep: dict[str, tuple[object, str, bool, str]] = {}
        for t in cell.targets:
            try:
                ev, i = evaluation.locate(t.id)
            except KeyError:
                line = f"✕ {t.id} {t.name} — assigned to missing arm {t.arm!r}"
                out.append((t.id, line, int(Status.BEYOND_REACH)))
                continue
            if bool(ev.feasible[i]):
                continue
            hit = self._lines_of.get(t.id)
            if hit is not None and hit[0] is ev and hit[2] == plain and hit[3] == t.name:
                line = hit[1]
            else:
                st = int(ev.status[i])
                reason = target_reason(ev, i, cell.units, "plain" if plain else "full")
                line = f"{status_style(st).glyph} {t.id} {t.name} — {reason}"
            keep[t.id] = (ev, line, plain, t.name)
            out.append((t.id, line, int(ev.status[i])))
        self._lines_of = keep
        return out

    def _compute_moves(self) -> list[tuple[tuple[str, str, str], str]]:
        cell = self.document.cell
        if not cell.sequences:
            return []
        return move_problems(cell, self.document.evaluation.moves())

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
            colour = QColor(status_style(st).colour).darker(150)
            out.append((("t", tid), line, QBrush(colour), line))
        for key, line in self._move_lines:
            collides = line.startswith(status_style(Status.COLLISION).glyph)
            colour = QColor(status_style(Status.COLLISION if collides else Status.Q2_LIMIT).colour)
            tip = f"{line}\nClick to select and show both targets of the move."
            out.append((("m", "\0".join(key)), line, QBrush(colour.darker(150)), tip))
        for (a, b), line in self._zone_lines:
            tip = (
                f"{line}\nTurn on View > Overlays > Shared zones to see where; click to select "
                "both arms."
            )
            brush = QBrush(QColor(PALETTE["amber"]).darker(170))
            out.append((("z", f"{a}\0{b}"), line, brush, tip))
        if not out:
            text = NO_PROBLEMS if self.document.cell.targets else NO_TARGETS
            out.append((("none", ""), text, QBrush(QColor(PALETTE["pine"]).darker(130)), text))
        return out

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
        with self._guard, blocked(self):
            for i in range(self.count()):
                it = self.item(i)
                ids = self._ids_of(it)
                # A move is shown selected when both of its targets are.
                want = bool(ids) and all(t in chosen for t in ids)
                if it.isSelected() != want:
                    it.setSelected(want)
        self.viewport().update()

"""The document model: the open cell, its file, selection and change notifications.

Plain Python, no Qt (an import-linter contract in pyproject.toml enforces it), so
interaction rules are testable without a display. Widgets observe the model
through :class:`Signal` objects and change it only through :class:`Edit`
commands, which the window pushes onto its undo stack.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from kinematics.cell import Cell
from kinematics.evaluate import CellEvaluation, evaluate_cell

__all__ = ["Signal", "Edit", "Changes", "Document", "Selection"]


class Signal:
    """A minimal observer list: ``connect(fn)``, ``disconnect(fn)``, ``emit(*args)``."""

    def __init__(self) -> None:
        self._slots: list[Callable[..., Any]] = []

    def connect(self, slot: Callable[..., Any]) -> None:
        if slot not in self._slots:
            self._slots.append(slot)

    def disconnect(self, slot: Callable[..., Any]) -> None:
        if slot in self._slots:
            self._slots.remove(slot)

    def emit(self, *args: Any) -> None:
        for slot in list(self._slots):
            slot(*args)


@dataclass(frozen=True)
class Changes:
    """Which parts of the cell differ between two versions (ids per kind)."""

    arms: frozenset[str] = frozenset()
    fixtures: frozenset[str] = frozenset()
    targets: frozenset[str] = frozenset()
    other: bool = False  # name, units, sequences, review or extra keys
    structure: bool = False  # items added, removed or reordered

    @staticmethod
    def between(old: Cell, new: Cell) -> Changes:
        def diff(a: tuple, b: tuple) -> tuple[frozenset[str], bool]:
            if a is b:  # edits share untouched tuples: the common case during a drag
                return frozenset(), False
            ida = [x.id for x in a]
            idb = [x.id for x in b]
            old_by = dict(zip(ida, a))
            # Identity first: unchanged items are the very same objects.
            changed = {x.id for x in b if old_by.get(x.id) is not x and old_by.get(x.id) != x}
            changed |= set(ida) - set(idb)
            return frozenset(changed), ida != idb

        arms, s1 = diff(old.arms, new.arms)
        fixtures, s2 = diff(old.fixtures, new.fixtures)
        targets, s3 = diff(old.targets, new.targets)
        other = (old.name, old.units, old.sequences, old.review, old.extra) != (
            new.name,
            new.units,
            new.sequences,
            new.review,
            new.extra,
        )
        return Changes(arms, fixtures, targets, other, s1 or s2 or s3)

    def __bool__(self) -> bool:
        return bool(self.arms or self.fixtures or self.targets or self.other or self.structure)


@dataclass
class Edit:
    """One undoable change: the whole cell before and after, with a menu label.

    Cells are immutable and share unchanged parts, so keeping both versions is
    cheap and undo restores the serialized document exactly. Edits with the same
    ``merge_key`` in a row (the steps of one drag) merge into one undo step.
    """

    label: str
    before: Cell
    after: Cell
    merge_key: str | None = None

    def merge(self, other: Edit) -> bool:
        """Absorb a following edit of the same drag; True when merged."""
        if self.merge_key is None or other.merge_key != self.merge_key:
            return False
        if other.before != self.after:
            return False
        self.after = other.after
        return True


class Selection:
    """Selected item ids (targets, fixtures, arms), shared by canvas, tables and lists."""

    def __init__(self) -> None:
        self.changed = Signal()
        self._ids: tuple[str, ...] = ()

    @property
    def ids(self) -> tuple[str, ...]:
        return self._ids

    def set(self, ids: tuple[str, ...] | list[str]) -> None:
        ids = tuple(dict.fromkeys(ids))
        if ids != self._ids:
            self._ids = ids
            self.changed.emit(ids)

    def clear(self) -> None:
        self.set(())


@dataclass
class _Events:
    cell_changed: Signal = field(default_factory=Signal)  # (Changes)
    path_changed: Signal = field(default_factory=Signal)  # (Path | None)
    dirty_changed: Signal = field(default_factory=Signal)  # (bool)
    # Step-by-step changes (a drag) paused or ended: views finish what waits for a pause.
    changes_paused: Signal = field(default_factory=Signal)  # ()


class Document:
    """The cell being edited, where it is stored, and whether it has unsaved changes.

    ``push`` is the single way to change the cell; by default it applies the
    edit directly, and the window replaces it with a function that puts the edit
    on its undo stack (which then calls :meth:`apply`).

    The document owns the one engine evaluation every view reads (:attr:`evaluation`):
    computed once per state, on first use, from the previous one (only arms a change
    touches are evaluated again). While a drag steps (:meth:`preview`) views draw what
    must follow every step; :meth:`settle` (called when the steps pause or the drag
    ends) emits ``events.changes_paused`` for what waits for a pause.
    """

    def __init__(self, cell: Cell, path: Path | None = None) -> None:
        self.events = _Events()
        self.selection = Selection()
        self._cell = cell
        self._saved = cell
        self._path = path
        self._evaluation: CellEvaluation | None = None
        self._last_evaluation: CellEvaluation | None = None
        self._preview_base: Cell | None = None
        self._unsettled = False
        self.push: Callable[[Edit], None] = lambda e: self.apply(e.after)

    @property
    def cell(self) -> Cell:
        return self._cell

    @property
    def path(self) -> Path | None:
        return self._path

    @property
    def dirty(self) -> bool:
        return self._cell != self._saved

    @property
    def evaluation(self) -> CellEvaluation:
        """Engine results for the current cell, computed once per change."""
        if self._evaluation is None or self._evaluation.cell is not self._cell:
            # While a drag steps the sequences are not planned (each plan sweeps moves);
            # the evaluation is planned again once the steps pause (settle).
            self._evaluation = evaluate_cell(
                self._cell, previous=self._last_evaluation, plans=not self._unsettled
            )
            self._last_evaluation = self._evaluation
        return self._evaluation

    @property
    def unsettled(self) -> bool:
        """True while step-by-step changes have not paused yet (see :meth:`settle`)."""
        return self._unsettled

    def hold(self) -> None:
        """Defer what waits for a pause until :meth:`settle` (e.g. until a new window has
        painted once: moves and plans come after the first picture)."""
        self._unsettled = True

    def settle(self) -> None:
        """The steps of a drag paused or ended: tell views to finish what waits for it."""
        self._unsettled = False
        if self._evaluation is not None and not self._evaluation.planned:
            self._evaluation = None  # made again with the plans (the rest is taken over)
        self.events.changes_paused.emit()

    def edit(self, label: str, after: Cell, merge_key: str | None = None) -> None:
        """Propose a change; it goes through :attr:`push` (the undo stack when there is one)."""
        if after != self._cell:
            self.push(Edit(label, self._cell, after, merge_key))

    # A drag has three stages: preview_begin, preview (each step), then commit or cancel.
    # Previews update every observer live but record no undo step until the commit.

    @property
    def previewing(self) -> bool:
        return self._preview_base is not None

    def preview(self, cell: Cell) -> None:
        """Show ``cell`` live during a drag without recording an undo step."""
        if self._preview_base is None:
            self._preview_base = self._cell
        self._unsettled = True
        self.apply(cell)

    def commit_preview(self, label: str) -> None:
        """End a drag: record one undo step from the state before it to now."""
        base, self._preview_base = self._preview_base, None
        if base is not None and base != self._cell:
            self.push(Edit(label, base, self._cell))
        self.settle()

    def cancel_preview(self) -> None:
        """End a drag by restoring the state from before it (Esc)."""
        base, self._preview_base = self._preview_base, None
        if base is not None:
            self.apply(base)
        self.settle()

    def apply(self, cell: Cell) -> None:
        """Make ``cell`` current and notify observers (used by undo/redo and loading)."""
        if cell is self._cell:
            return
        was_dirty = self.dirty
        changes = Changes.between(self._cell, cell)
        self._cell = cell
        self._evaluation = None
        self.events.cell_changed.emit(changes)
        if self.dirty != was_dirty:
            self.events.dirty_changed.emit(self.dirty)

    def replace(self, cell: Cell, path: Path | None) -> None:
        """Load a different document (new or opened file); it starts clean."""
        self._saved = cell
        self.selection.clear()
        self._last_evaluation = None  # a different document shares no caches
        self.apply(cell)
        self.set_path(path)
        self.events.dirty_changed.emit(False)

    @property
    def saved_cell(self) -> Cell | None:
        """The cell as last loaded or saved; None for a recovered document never saved."""
        return self._saved

    def restore_state(self, cell: Cell, path: Path | None, saved: Cell | None) -> None:
        """Show ``cell`` for ``path`` with ``saved`` as its stored version (None: unsaved).

        Puts back the state before a failed switch of documents, and opens recovered
        documents as modified (``saved`` differs from ``cell``).
        """
        self._preview_base = None
        self._saved = saved
        self.selection.clear()
        self.apply(cell)
        self.set_path(path)
        self.events.dirty_changed.emit(self.dirty)

    def mark_saved(self, path: Path) -> None:
        """Record that the current cell is what is stored at ``path``."""
        self._saved = self._cell
        self.set_path(path)
        self.events.dirty_changed.emit(False)

    def set_path(self, path: Path | None) -> None:
        if path != self._path:
            self._path = path
            self.events.path_changed.emit(path)

"""The Cell menu: arms (add, duplicate, delete, rename), cell properties, new fixtures'
heights, and the questions these edits ask.

Every edit is one undo step through ``document.edit``. Every question goes through an
``ask_*`` method of :class:`CellActions` (tests replace them with answers), as the main
window's own questions do:

* ``ask_new_arm(template, cell) -> Arm | None``
* ``ask_delete_arm(arm, others, targets) -> ("delete", None) | ("reassign", id) | None``
* ``ask_name(title, current) -> str | None``
* ``ask_cell_properties(cell, margin) -> (name, units, margin) | None``
* ``ask_units_change(old, new, unconverted) -> "convert" | "relabel" | "cancel"``
* ``ask_sequence_place(target_ids, arm_id) -> "end" | "drop" | "cancel"``
* ``ask_fixture_height(kind, units) -> float | None`` (None: no height given)

A new fixture inherits the height last given to a fixture of its kind (kept in the
settings when the window uses them); without one the window asks.
"""

from __future__ import annotations

from dataclasses import replace
from typing import TYPE_CHECKING

from PySide6.QtCore import QObject
from PySide6.QtGui import QAction
from PySide6.QtWidgets import QInputDialog, QMenu, QMenuBar

from app import settings as app_settings
from app.interaction import arm_edits, edits
from app.interaction.fixture_edits import height_for_new
from app.panels.cell_dialogs import (
    ArmDialog,
    CellDialog,
    DeleteArmDialog,
    HeightDialog,
    ask_units_change,
)
from app.panels.column_edit import ask_sequence_place
from app.panels.validate import Invalid, check_cell, parse_name
from kinematics.bodies import BodyDataError, clearance_margin
from kinematics.cell import Arm, Cell
from kinematics.units import convert_units, relabel_units, unconverted_keys

if TYPE_CHECKING:
    from app.main_window import MainWindow

__all__ = ["CellActions", "arm_template"]


def arm_template(cell: Cell, x: float, y: float) -> Arm:
    """The values a new arm starts from: the cell's first arm's (a 350 + 250 arm with
    generous limits in a cell without arms, as File > New gives), bolted at ``(x, y)``."""
    if cell.arms:
        a = cell.arms[0]
        return replace(a, id="new", name="", x=float(x), y=float(y), extra={})
    # Common practice, no source: a 350 + 250 mm arm with generous limits is a neutral start.
    scale = 1.0 if cell.units == "mm" else 1 / 25.4
    return Arm(
        "new",
        "",
        float(x),
        float(y),
        0.0,
        350.0 * scale,
        250.0 * scale,
        (-170.0, 170.0),
        (-150.0, 150.0),
    )


class CellActions(QObject):
    """The Cell menu's commands for one main window."""

    def __init__(self, window: MainWindow) -> None:
        super().__init__(window)
        self.window = window
        self._heights: dict[str, float] = {}
        self.act_add_arm = self._action(
            "&Add Arm…", self.add_arm, "Add an arm at the middle of the view"
        )
        self.act_duplicate_arm = self._action(
            "D&uplicate Arm",
            self.duplicate_arm,
            "A copy of the arm shown in the arm panel, beside it",
        )
        self.act_delete_arm = self._action(
            "&Delete Arm…",
            self.delete_arm,
            "Delete the arm shown in the arm panel (its targets: asked)",
        )
        self.act_rename_arm = self._action(
            "&Rename Arm…", self.rename_arm, "Rename the arm shown in the arm panel"
        )
        self.act_properties = self._action(
            "Cell &Properties…", self.edit_properties, "The cell's name, units and clearance margin"
        )
        self.arm_actions = [
            self.act_add_arm,
            self.act_duplicate_arm,
            self.act_delete_arm,
            self.act_rename_arm,
        ]
        for act in self.arm_actions:
            act.setIconText(act.text().replace("&", "").replace("…", "").split()[0])

    @property
    def document(self):
        return self.window.document

    def _action(self, text: str, slot, tip: str) -> QAction:
        act = QAction(text, self.window)
        act.setToolTip(tip)
        act.setStatusTip(tip)
        act.triggered.connect(lambda _checked=False: slot())
        return act

    def add_to(self, bar: QMenuBar, before: QAction | None = None) -> QMenu:
        """The Cell menu, inserted before ``before`` (a menu's action) or at the end."""
        menu = QMenu("&Cell", bar)
        for act in self.arm_actions:
            menu.addAction(act)
        menu.addSeparator()
        menu.addAction(self.act_properties)
        if before is not None:
            bar.insertMenu(before, menu)
        else:
            bar.addMenu(menu)
        self.menu = menu
        return menu

    def _say(self, text: str) -> None:
        self.window.statusBar().showMessage(text, 8000)

    def _arm(self) -> Arm | None:
        return self.window.arm_panel.arm

    # ------------------------------------------------------------------ questions

    def ask_new_arm(self, template: Arm, cell: Cell) -> Arm | None:
        dialog = ArmDialog(template, cell, self.window)
        if dialog.exec() != ArmDialog.DialogCode.Accepted:
            return None
        return dialog.arm()

    def ask_delete_arm(self, arm: Arm, others: list[Arm], targets: int):
        dialog = DeleteArmDialog(arm, others, targets, self.window)
        if dialog.exec() != DeleteArmDialog.DialogCode.Accepted:
            return None
        return dialog.choice()

    def ask_name(self, title: str, current: str) -> str | None:
        text, ok = QInputDialog.getText(self.window, title, "Name:", text=current)
        return text if ok else None

    def ask_cell_properties(self, cell: Cell, margin: float | None):
        dialog = CellDialog(cell, margin, self.window)
        if dialog.exec() != CellDialog.DialogCode.Accepted:
            return None
        return dialog.values()

    def ask_units_change(self, old: str, new: str, unconverted: list[str]) -> str:
        return ask_units_change(self.window, old, new, unconverted)

    def ask_sequence_place(self, target_ids: list[str], arm_id: str) -> str:
        return ask_sequence_place(self.window, self.document.cell, target_ids, arm_id)

    def ask_fixture_height(self, kind: str, units: str) -> float | None:
        dialog = HeightDialog(kind, units, self.window)
        if dialog.exec() != HeightDialog.DialogCode.Accepted:
            return None
        return dialog.value()

    # ------------------------------------------------------------------ arms

    def view_centre(self) -> tuple[float, float]:
        (x0, x1), (y0, y1) = self.window.canvas.vb.viewRange()
        return (x0 + x1) / 2, (y0 + y1) / 2

    def add_arm(self) -> bool:
        """Add an arm from the dialog, bolted at the middle of the view (one undo step)."""
        cell = self.document.cell
        x, y = self.view_centre()
        arm = self.ask_new_arm(arm_template(cell, x, y), cell)
        if arm is None:
            return False
        new_cell, new = arm_edits.add_arm(cell, replace(arm, x=float(x), y=float(y)))
        try:
            check_cell(new_cell)
        except Invalid as exc:
            self._say(f"✕ Cannot add the arm: {exc}")
            return False
        self.document.edit(f"Add arm {new.name}", new_cell)
        self.document.selection.set((new.id,))
        self.window.arm_panel.select_arm(new.id)
        self._say(f"Added {new.name} at the middle of the view; drag its base into place")
        return True

    def duplicate_arm(self) -> bool:
        arm = self._arm()
        if arm is None:
            return False
        new_cell, twin = arm_edits.duplicate_arm(self.document.cell, arm.id, arm.reach_max)
        self.document.edit(f"Duplicate arm {arm.name}", new_cell)
        self.document.selection.set((twin.id,))
        self.window.arm_panel.select_arm(twin.id)
        self._say(f"{twin.name} stands one reach to the right of {arm.name}")
        return True

    def delete_arm(self, arm_id: str | None = None, also: list[str] | None = None) -> bool:
        """Delete an arm after asking what becomes of its targets; ``also`` deletes more
        selected targets and fixtures in the same undo step."""
        cell = self.document.cell
        arm = self._arm() if arm_id is None else cell.arm(arm_id)
        if arm is None:
            return False
        others = [a for a in cell.arms if a.id != arm.id]
        n = len(cell.targets_of(arm.id))
        answer = self.ask_delete_arm(arm, others, n)
        if answer is None:
            return False
        choice, to = answer
        new_cell = arm_edits.delete_arm(cell, arm.id, choice, to)
        if also:
            new_cell = edits.delete_items(new_cell, also)
        self.document.selection.clear()
        self.document.edit(f"Delete arm {arm.name}", new_cell)
        return True

    def rename_arm(self) -> bool:
        arm = self._arm()
        if arm is None:
            return False
        text = self.ask_name(f"Rename arm {arm.name}", arm.name)
        if text is None:
            return False
        try:
            name = parse_name(text)
        except Invalid as exc:
            self._say(f"✕ Arm name refused: {exc}")
            return False
        if name != arm.name:
            self.document.edit(
                f"Rename arm {arm.name} to {name}", edits.rename(self.document.cell, arm.id, name)
            )
        return True

    def delete_selection(self) -> bool:
        """Delete what is selected: targets and fixtures at once, an arm after asking."""
        cell = self.document.cell
        chosen = list(self.document.selection.ids)
        arms = [a.id for a in cell.arms if a.id in chosen]
        rest = [i for i in chosen if i not in arms]
        if arms:
            return self.delete_arm(arms[0], also=rest)
        ids = [
            i
            for i in rest
            if any(t.id == i for t in cell.targets) or any(f.id == i for f in cell.fixtures)
        ]
        if not ids:
            return False
        items = [x for x in (*cell.targets, *cell.fixtures) if x.id in set(ids)]
        if len(items) == 1:
            label = f"Delete {items[0].id} {items[0].name}".rstrip()
        else:
            label = f"Delete {len(items)} items"
        self.document.selection.clear()
        self.document.edit(label, edits.delete_items(cell, ids))
        return True

    # ------------------------------------------------------------------ the cell

    def edit_properties(self) -> bool:
        """Name, units (convert or relabel, asked) and clearance margin: one undo step."""
        cell = self.document.cell
        try:
            margin = clearance_margin(cell) if "clearance_margin" in cell.extra else None
        except BodyDataError:
            margin = None
        got = self.ask_cell_properties(cell, margin)
        if got is None:
            return False
        name, units, new_margin = got
        new = replace(cell, name=name)
        extra = dict(new.extra)
        if new_margin is None:
            extra.pop("clearance_margin", None)
        else:
            extra["clearance_margin"] = float(new_margin)
        new = replace(new, extra=extra)
        if units != cell.units:
            how = self.ask_units_change(cell.units, units, unconverted_keys(cell))
            if how == "cancel":
                return False
            new = convert_units(new, units) if how == "convert" else relabel_units(new, units)
        try:
            check_cell(new)
        except Invalid as exc:
            self._say(f"✕ Cell properties refused: {exc}")
            return False
        self.document.edit("Change cell properties", new)
        return True

    # ------------------------------------------------------------------ fixture heights

    def remembered_heights(self) -> dict[str, float]:
        if self.window.use_settings:
            return {**app_settings.load_kind_heights(), **self._heights}
        return dict(self._heights)

    def remember_height(self, kind: str, height: float) -> None:
        """New fixtures of ``kind`` get ``height`` from now on."""
        self._heights[kind] = float(height)
        if self.window.use_settings:
            app_settings.save_kind_height(kind, float(height))

    def new_fixture_height(self, kind: str) -> float | None:
        """The height a fixture just drawn gets: its kind's, else the one the user gives."""
        h = height_for_new(kind, self.remembered_heights())
        if h is not None:
            self._say(f"The new {kind} is {h:g} {self.document.cell.units} high, like the last one")
            return h
        h = self.ask_fixture_height(kind, self.document.cell.units)
        if h is not None:
            self.remember_height(kind, h)
        return h

"""Editing a column for every selected target, and the question a change of arm asks.

The target table sets all selected rows when one of them is edited (its model's
``ids_for_edit``); this module adds the mouse way, a context menu on the table: "Set
<column> for N selected targets…", and the question asked when targets that have a place
in a sequence move to another arm (:func:`ask_sequence_place`, replaced in tests).
"""

from __future__ import annotations

from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QInputDialog, QMenu, QMessageBox, QWidget

from app.panels.validate import COLUMN_WORDS
from kinematics.cell import Cell

__all__ = ["ask_sequence_place", "ask_column_value", "install_column_menu", "EDITABLE"]

#: Column keys the menu offers, in table order (names stay one target's each).
EDITABLE = ("x", "y", "arm", "work_height", "dwell")


def ask_sequence_place(
    parent: QWidget | None, cell: Cell, target_ids: list[str], arm_id: str
) -> str:
    """Targets with a place in a sequence move to arm ``arm_id``: what becomes of their
    places? "end" (to the end of that arm's sequence), "drop" or "cancel"."""
    names = {t.id: t.name for t in cell.targets}
    arm = next((a.name for a in cell.arms if a.id == arm_id), arm_id)
    which = ", ".join(names.get(t, t) for t in target_ids[:4])
    if len(target_ids) > 4:
        which += f" and {len(target_ids) - 4} more"
    box = QMessageBox(parent)
    box.setIcon(QMessageBox.Icon.Question)
    box.setWindowTitle("Elbow Room")
    one = len(target_ids) == 1
    it = "it" if one else "them"
    box.setText(f"{which} {'has' if one else 'have'} a place in a sequence.")
    box.setInformativeText(
        f"A sequence visits only its own arm's targets. Add {it} at the end of {arm}'s "
        f"sequence, or leave {it} out of every sequence?"
    )
    made = {
        box.addButton(f"Add to {arm}'s Sequence", QMessageBox.ButtonRole.AcceptRole): "end",
        box.addButton("Leave Out of Sequences", QMessageBox.ButtonRole.AcceptRole): "drop",
        box.addButton(QMessageBox.StandardButton.Cancel): "cancel",
    }
    box.setDefaultButton(next(iter(made)))
    box.exec()
    return made.get(box.clickedButton(), "cancel")


def ask_column_value(
    parent: QWidget, cell: Cell, column: str, count: int, current: str
) -> str | None:
    """The value for one column of ``count`` targets; None when cancelled."""
    words = COLUMN_WORDS[column]
    title = f"Set {words} for {count} targets"
    if column == "arm":
        items = [f"{a.id} — {a.name}" for a in cell.arms]
        start = next((k for k, a in enumerate(cell.arms) if a.id == current), 0)
        text, ok = QInputDialog.getItem(parent, title, "Arm:", items, start, False)
        return text.split(" — ", 1)[0] if ok else None
    hint = {"work_height": f" ({cell.units}; empty: not given)", "dwell": " (s; empty: 0)"}
    label = f"{words.capitalize()}{hint.get(column, '')}:"
    text, ok = QInputDialog.getText(parent, title, label, text=current)
    return text if ok else None


def install_column_menu(table) -> None:
    """Give a target table the context menu that sets a column for the selected rows."""
    table.setContextMenuPolicy(Qt.ContextMenuPolicy.CustomContextMenu)
    table.ask_column_value = ask_column_value
    table.customContextMenuRequested.connect(
        lambda pos: _menu(table, pos).popup(table.viewport().mapToGlobal(pos))
    )


def column_menu(table, pos: QPoint) -> QMenu:
    """The context menu at a viewport position of the table (for tests)."""
    return _menu(table, pos)


def _menu(table, pos: QPoint) -> QMenu:
    from app.panels.target_table import COLUMNS, ID_ROLE

    menu = QMenu(table)
    ids = table.selected_ids()
    index = table.indexAt(pos)
    if not ids and index.isValid():
        ids = [table.proxy.mapToSource(index).data(ID_ROLE)]
    keys = [c.key for c in COLUMNS]
    clicked = keys[index.column()] if index.isValid() else None
    order = [k for k in EDITABLE if k == clicked] + [k for k in EDITABLE if k != clicked]
    for key in order:
        n = len(ids)
        text = f"Set {COLUMN_WORDS[key]} for {n} selected target{'s' if n != 1 else ''}…"
        act = menu.addAction(text, lambda k=key, ids=ids: _set(table, ids, k))
        act.setEnabled(bool(ids))
        if key == clicked:
            menu.addSeparator()
    return menu


def _set(table, ids: list[str], key: str) -> None:
    model = table.source
    cell = table.document.cell
    first = next((t for t in cell.targets if t.id == ids[0]), None)
    if first is None:
        return
    current = str(model.index(model.row_of(first.id), _col(key)).data(Qt.ItemDataRole.EditRole))
    value = table.ask_column_value(table, cell, key, len(ids), current)
    if value is not None:
        model.set_column(ids, key, value)


def _col(key: str) -> int:
    from app.panels.target_table import COLUMNS

    return [c.key for c in COLUMNS].index(key)

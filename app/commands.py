"""Undo steps: a QUndoCommand around each document Edit.

The document proposes every change as an :class:`~app.document.Edit`; the window
routes ``document.push`` here so each edit becomes one step on a QUndoStack.
Redo and undo simply make the stored "after" or "before" cell current, which
restores the document exactly. Successive edits of one drag (same merge key)
merge into a single step.
"""

from __future__ import annotations

import sys

from PySide6.QtGui import QUndoCommand, QUndoStack

from app.document import Document, Edit

__all__ = ["EDIT_COMMAND_ID", "EditCommand", "attach_undo_stack"]

#: QUndoCommand id shared by all mergeable edits (Edit.merge decides whether they merge).
EDIT_COMMAND_ID = 0x454C


class EditCommand(QUndoCommand):
    """One undo step wrapping a document :class:`~app.document.Edit`."""

    def __init__(self, document: Document, edit: Edit) -> None:
        super().__init__(edit.label)
        self.document = document
        self.edit = edit

    def redo(self) -> None:
        _guarded(self.document.apply, self.edit.after)

    def undo(self) -> None:
        _guarded(self.document.apply, self.edit.before)

    def id(self) -> int:
        return EDIT_COMMAND_ID if self.edit.merge_key is not None else -1

    def mergeWith(self, other: QUndoCommand) -> bool:
        if not isinstance(other, EditCommand) or not self.edit.merge(other.edit):
            return False
        # A drag that ends where it began leaves nothing to undo.
        self.setObsolete(self.edit.after == self.edit.before)
        return True


def _guarded(fn, *args) -> None:
    # An exception escaping a Qt virtual override (redo/undo, called from C++) takes the
    # process down without a word; hand it to sys.excepthook instead (the window's hook
    # saves the work, logs it and stops cleanly).
    try:
        fn(*args)
    except Exception:  # noqa: BLE001 - reported through the hook, not swallowed
        sys.excepthook(*sys.exc_info())


def attach_undo_stack(document: Document, stack: QUndoStack) -> None:
    """Route every edit of ``document`` onto ``stack`` (unlimited undo)."""
    stack.setUndoLimit(0)
    document.push = lambda edit: stack.push(EditCommand(document, edit))

"""Undo commands around document edits."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from PySide6.QtGui import QUndoStack

from app.commands import EditCommand, attach_undo_stack
from app.document import Document
from kinematics.cellfile import dumps_cell, load_cell

TRAY = Path(__file__).resolve().parents[2] / "sample_cells" / "tray_loading.cell.json"


def _doc_and_stack(qapp):
    doc = Document(load_cell(TRAY), TRAY)
    stack = QUndoStack()
    attach_undo_stack(doc, stack)
    return doc, stack


def moved(doc: Document, x: float):
    arm = doc.cell.arms[0]
    return replace(doc.cell, arms=(replace(arm, x=x),) + doc.cell.arms[1:])


def test_each_edit_is_one_step_with_its_label(qapp):
    doc, stack = _doc_and_stack(qapp)
    original = dumps_cell(doc.cell)
    doc.edit("Move base of Tray loader", moved(doc, 10.0))
    doc.edit("Move base of Tray loader", moved(doc, 20.0))
    assert stack.count() == 2
    assert stack.undoText() == "Move base of Tray loader"
    stack.undo()
    assert doc.cell.arms[0].x == 10.0
    stack.undo()
    assert dumps_cell(doc.cell) == original and not doc.dirty
    stack.redo()
    stack.redo()
    assert doc.cell.arms[0].x == 20.0


def test_undo_is_unlimited(qapp):
    doc, stack = _doc_and_stack(qapp)
    original = dumps_cell(doc.cell)
    for i in range(1, 301):
        doc.edit(f"step {i}", moved(doc, float(i)))
    assert stack.undoLimit() == 0 and stack.count() == 300
    while stack.canUndo():
        stack.undo()
    assert dumps_cell(doc.cell) == original


def test_edits_with_a_merge_key_become_one_step(qapp):
    doc, stack = _doc_and_stack(qapp)
    for i in range(1, 11):
        doc.edit("Nudge base", moved(doc, float(i)), merge_key="nudge:loader")
    assert stack.count() == 1
    stack.undo()
    assert doc.cell.arms[0].x == 0.0
    stack.redo()
    assert doc.cell.arms[0].x == 10.0


def test_merge_back_to_the_start_leaves_no_step(qapp):
    doc, stack = _doc_and_stack(qapp)
    doc.edit("Nudge base", moved(doc, 5.0), merge_key="nudge")
    doc.edit("Nudge base", moved(doc, 0.0), merge_key="nudge")
    assert stack.count() == 0
    assert not doc.dirty


def test_unkeyed_edits_never_merge(qapp):
    doc, stack = _doc_and_stack(qapp)
    doc.edit("a", moved(doc, 1.0))
    doc.edit("b", moved(doc, 2.0))
    assert stack.count() == 2
    assert isinstance(stack.command(0), EditCommand)
    assert stack.command(0).id() == -1


def test_a_committed_drag_is_one_step(qapp):
    doc, stack = _doc_and_stack(qapp)
    for i in range(50):
        doc.preview(moved(doc, float(i)))
    doc.commit_preview("Move base of Tray loader")
    assert stack.count() == 1 and stack.undoText() == "Move base of Tray loader"
    stack.undo()
    assert doc.cell.arms[0].x == 0.0

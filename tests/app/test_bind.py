"""Fields never show a state that is not the document's (issue 11, defects 1 and 2).

1. Refused text does not outlive the field's focus: Enter keeps it with the reason (to fix
   it), leaving the field puts the model's value back and says what was refused.
2. Undo in a field is the document's undo; the field's own edit history never becomes a
   step (Ctrl+Z, then leaving the field, must not commit the old value again).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication

from app.document import Document
from app.main_window import MainWindow
from kinematics.cellfile import dumps_cell, load_cell

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


@pytest.fixture
def win(qtbot):
    w = MainWindow(Document(load_cell(TRAY), TRAY), use_settings=False)
    w.ask_unsaved_changes = lambda: "discard"
    qtbot.addWidget(w)
    w.resize(1400, 900)
    w.show()
    qtbot.waitExposed(w)
    w.activateWindow()
    QApplication.processEvents()
    return w


def _type(qtbot, edit, text: str) -> None:
    edit.setFocus()
    edit.selectAll()
    qtbot.keyClick(edit, Qt.Key.Key_Backspace)
    qtbot.keyClicks(edit, text)


def test_refused_text_is_shown_refused_then_gives_way_to_the_models_value(win, qtbot):
    panel = win.arm_panel
    a1 = panel.edits["a1"]
    before = dumps_cell(win.document.cell)
    _type(qtbot, a1, "3,25")  # a decimal comma: not a number here
    qtbot.keyClick(a1, Qt.Key.Key_Return)
    # Enter: refused visibly, the text stays with its reason so it can be fixed.
    assert a1.text() == "3,25" and a1.property("invalid") is True
    assert panel.reasons["a1"].text() == "✕ not a number: '3,25'"
    assert win.document.cell.arms[0].a1 == 325.0
    # Clicking away: the field returns to the model's value and says what was refused.
    panel.edits["a2"].setFocus(Qt.FocusReason.MouseFocusReason)
    QApplication.processEvents()
    assert a1.text() == "325" and a1.property("invalid") is False
    note = panel.reasons["a1"].text()
    assert panel.reasons["a1"].isVisible()
    assert "'3,25' was not taken" in note and "not a number" in note and "stays 325" in note
    assert win.statusBar().currentMessage() == f"✕ {note.removeprefix('✕ ')}"
    # Nothing changed, nothing to save: closing would be right not to warn.
    assert dumps_cell(win.document.cell) == before and not win.document.dirty
    assert win.undo_stack.count() == 0


def test_a_valid_value_still_commits_when_the_field_is_left(win, qtbot):
    a1 = win.arm_panel.edits["a1"]
    _type(qtbot, a1, "330")
    win.arm_panel.edits["a2"].setFocus(Qt.FocusReason.TabFocusReason)
    QApplication.processEvents()
    assert win.document.cell.arms[0].a1 == 330.0 and win.undo_stack.count() == 1


def test_ctrl_z_in_a_field_is_the_documents_undo(win, qtbot):
    panel = win.arm_panel
    a1 = panel.edits["a1"]
    _type(qtbot, a1, "400")
    qtbot.keyClick(a1, Qt.Key.Key_Return)
    assert win.document.cell.arms[0].a1 == 400.0 and win.undo_stack.count() == 1
    # Ctrl+Z with the keyboard still in the field: the document's undo, not the field's.
    qtbot.keyClick(a1, Qt.Key.Key_Z, Qt.KeyboardModifier.ControlModifier)
    assert win.document.cell.arms[0].a1 == 325.0 and a1.text() == "325"
    assert win.undo_stack.index() == 0
    # Leaving the field records nothing: the next Ctrl+Z must not bring 400 back.
    panel.edits["a2"].setFocus(Qt.FocusReason.MouseFocusReason)
    QApplication.processEvents()
    assert win.undo_stack.count() == 1 and win.undo_stack.index() == 0
    assert win.document.cell.arms[0].a1 == 325.0
    # Redo from the field is the document's redo.
    a1.setFocus()
    qtbot.keyClick(
        a1, Qt.Key.Key_Z, Qt.KeyboardModifier.ControlModifier | Qt.KeyboardModifier.ShiftModifier
    )
    assert win.document.cell.arms[0].a1 == 400.0 and a1.text() == "400"


def test_ctrl_z_while_typing_throws_the_typing_away_and_records_nothing(win, qtbot):
    a1 = win.arm_panel.edits["a1"]
    _type(qtbot, a1, "333")
    qtbot.keyClick(a1, Qt.Key.Key_Z, Qt.KeyboardModifier.ControlModifier)
    assert a1.text() == "325" and win.undo_stack.count() == 0
    win.arm_panel.edits["a2"].setFocus(Qt.FocusReason.MouseFocusReason)
    QApplication.processEvents()
    assert win.undo_stack.count() == 0 and win.document.cell.arms[0].a1 == 325.0


def test_field_errors_are_said_in_the_fields_own_words(win, qtbot):
    # Defect 7: a value the file format refuses is named by the field's label, not by its
    # JSON path ("arms[0].links[1]").
    panel = win.arm_panel
    _type(qtbot, panel.edits["a2"], "2000000")
    reason = panel.reasons["a2"].text()
    assert reason == "✕ a2 must be a length between 0.001 and 1e+06, got 2000000"
    assert "arms[" not in reason
    qtbot.keyClick(panel.edits["a2"], Qt.Key.Key_Escape)

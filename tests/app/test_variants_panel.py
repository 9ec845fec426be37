"""The variants panel: create, rename, switch and delete variants (each one undo step) and
the comparison table, whose numbers must be the engine's (kinematics.variants)."""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtCore import Qt

from app.document import Document
from app.main_window import MainWindow
from app.panels.variants import BETTER_MARK, METRIC_LABELS
from kinematics.cellfile import load_cell
from kinematics.layout_keys import variants
from kinematics.placement import move_base
from kinematics.variants import CURRENT, compare_variants, comparison_report

REPO = Path(__file__).resolve().parents[2]
PRESS = REPO / "sample_cells" / "press_tending_variants.cell.json"

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


@pytest.fixture
def window(qtbot):
    win = MainWindow(Document(load_cell(PRESS), None), use_settings=False)
    win.ask_unsaved_changes = lambda: "discard"
    qtbot.addWidget(win)
    win.show()
    win.layout_actions.dock.raise_()  # the tab in front: the comparison is computed
    yield win
    win.layout_actions.shutdown()


def _names(cell) -> list[str]:
    return [v.name for v in variants(cell)]


def test_create_rename_switch_delete_round_trip_and_undo_exactly(window):
    doc, panel, stack = window.document, window.layout_actions.panel, window.undo_stack
    states = [doc.cell]
    n0 = stack.count()
    name = panel.create()  # one click: the current layout becomes a variant
    assert name == "Variant 1" and _names(doc.cell)[-1] == "Variant 1"
    assert stack.count() == n0 + 1 and stack.undoText() == "New variant Variant 1"
    item = panel.list.item(panel.list.count() - 1)
    assert "current layout" in item.text()  # it holds what is on the canvas now
    states.append(doc.cell)
    arm = doc.cell.arms[0]
    doc.edit("Move base", move_base(doc.cell, arm.id, arm.x + 50.0, arm.y - 20.0))
    states.append(doc.cell)
    assert "current layout" not in panel.list.item(panel.list.count() - 1).text()
    panel.ask_name = lambda *_a: "Plinth corner"
    panel.rename("Variant 1")
    assert _names(doc.cell)[-1] == "Plinth corner"
    states.append(doc.cell)
    panel.switch("Plinth corner")
    assert (doc.cell.arms[0].x, doc.cell.arms[0].y) == (arm.x, arm.y)
    states.append(doc.cell)
    panel.delete("Plinth corner")
    assert "Plinth corner" not in _names(doc.cell)
    states.append(doc.cell)
    assert stack.count() == n0 + 5
    # Undo walks back through every state exactly, redo forward again.
    for want in reversed(states[:-1]):
        stack.undo()
        assert doc.cell == want
    for want in states[1:]:
        stack.redo()
        assert doc.cell == want


def test_a_taken_name_is_refused_with_a_message_and_no_step(window):
    doc, panel, stack = window.document, window.layout_actions.panel, window.undo_stack
    first = _names(doc.cell)[0]
    other = _names(doc.cell)[1]
    n0 = stack.count()
    panel.rename(first, other)
    assert stack.count() == n0 and "exists already" in panel.note.text()


def test_a_hidden_panel_computes_nothing_until_shown(qtbot):
    win = MainWindow(Document(load_cell(PRESS), None), use_settings=False)
    win.ask_unsaved_changes = lambda: "discard"
    qtbot.addWidget(win)
    win.show()
    panel = win.layout_actions.panel
    qtbot.wait(50)
    assert not panel.shown and panel.rows is None and not panel.busy
    win.layout_actions.dock.raise_()
    qtbot.waitUntil(lambda: panel.rows is not None and not panel.busy, timeout=120000)
    win.layout_actions.shutdown()


def test_comparison_table_shows_the_engines_numbers_and_marks_the_better(qtbot, window):
    panel = window.layout_actions.panel
    qtbot.waitUntil(lambda: panel.rows is not None and not panel.busy, timeout=120000)
    cell = window.document.cell
    rows = compare_variants(cell)
    better = comparison_report(cell, rows)["better"]
    arm = cell.arms[0].id
    layouts = [r.layout for r in rows if r.arm == arm]
    heads = [
        panel.table.horizontalHeaderItem(c).data(Qt.ItemDataRole.UserRole)
        for c in range(panel.table.columnCount())
    ]
    assert heads == layouts and heads[0] == CURRENT
    marked = 0
    for row in (r for r in rows if r.arm == arm):
        for key in METRIC_LABELS:
            item = panel.cell_row(row.layout, key)
            assert item.data(Qt.ItemDataRole.UserRole) == pytest.approx(getattr(row, key))
            best = row.layout in better[arm][key]
            assert (BETTER_MARK in item.text()) == best  # a symbol, not colour alone
            marked += best
    assert marked > 0
    # Cycle times are known for this cell's arm (speed data, one sequence).
    assert all(r.cycle_time_s is not None for r in rows)


def test_comparison_follows_an_edit_once_the_changes_pause(qtbot, window):
    panel = window.layout_actions.panel
    doc = window.document
    qtbot.waitUntil(lambda: panel.rows is not None and not panel.busy, timeout=120000)
    old = panel.rows
    arm = doc.cell.arms[0]
    doc.preview(move_base(doc.cell, arm.id, arm.x + 60.0, arm.y + 100.0))
    assert panel.rows is old and "once the changes pause" in panel.note.text()
    doc.commit_preview("Move base")
    qtbot.waitUntil(lambda: panel.rows is not old and not panel.busy, timeout=120000)
    mine = [r for r in compare_variants(doc.cell) if r.layout == CURRENT]
    shown = [r for r in panel.rows if r.layout == CURRENT]
    assert shown == mine

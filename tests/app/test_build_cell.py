"""A complete cell built from an empty window without touching JSON (issue 11): an arm,
fixtures with heights, targets with work heights and a sequence, made with the window's
own editors; saved; and `check --json` on the saved file gives the verdicts the window
showed.

The arm is the worked exam problem's (a1 = 400, a2 = 250, 0 <= q1 <= 180,
-120 <= q2 <= 120; Q&A archive, /shared check values): at (450, 180) only the negative
configuration (52.79, -86.45) is within the limits, at (-200, 400) both are (positive
82.82, 96.46; negative 150.31, -96.46), and (480, 480) lies beyond the reach (r = 678.8 > 650).
"""

from __future__ import annotations

import json
import math

import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QApplication

from app.cli import main
from app.main_window import MainWindow
from app.panels.target_table import COLUMNS
from kinematics.cellfile import load_cell

KEYS = [c.key for c in COLUMNS]

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


def _type(qtbot, edit, text: str) -> None:
    edit.setFocus()
    edit.selectAll()
    qtbot.keyClick(edit, Qt.Key.Key_Backspace)
    if text:
        qtbot.keyClicks(edit, text)
    qtbot.keyClick(edit, Qt.Key.Key_Return)


def _drag(qtbot, win, p0, p1) -> None:
    c = win.canvas
    vp = c.viewport()
    a, b = c.world_to_viewport(*p0), c.world_to_viewport(*p1)
    qtbot.mousePress(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, a)
    for i in range(1, 7):
        f = i / 6
        qtbot.mouseMove(
            vp, QPoint(round(a.x() + f * (b.x() - a.x())), round(a.y() + f * (b.y() - a.y())))
        )
    qtbot.mouseRelease(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, b)


def _click(qtbot, win, x, y, mods=Qt.KeyboardModifier.NoModifier) -> None:
    qtbot.mouseClick(
        win.canvas.viewport(), Qt.MouseButton.LeftButton, mods, win.canvas.world_to_viewport(x, y)
    )


def test_a_cell_built_in_the_window_checks_as_the_window_showed(qtbot, tmp_path, capsys):
    win = MainWindow(use_settings=False)  # File > New: an empty cell with one arm
    qtbot.addWidget(win)
    win.ask_unsaved_changes = lambda: "discard"
    heights = []
    win.cell_actions.ask_fixture_height = lambda kind, units: heights.append(kind) or 720.0
    win.resize(1400, 900)
    win.show()
    qtbot.waitExposed(win)
    QApplication.processEvents()
    assert win.document.cell.targets == () and win.hover_label.text() == "No targets yet"

    # The arm: the exam arm, with link radii and the height of its links' underside.
    panel = win.arm_panel
    for key, text in (
        ("name", "Bench arm"),
        ("a1", "400"),
        ("a2", "250"),
        ("q1_min", "0"),
        ("q1_max", "180"),
        ("q2_min", "-120"),
        ("q2_max", "120"),
        ("r1", "20"),
        ("r2", "15"),
        ("under", "800"),
    ):
        _type(qtbot, panel.edits[key], text)
    arm = win.document.cell.arms[0]
    assert (arm.a1, arm.a2, arm.q1_limits, arm.q2_limits) == (400, 250, (0, 180), (-120, 120))
    assert arm.link_underside_height == 800.0 and arm.link_radii == (20.0, 15.0)
    win.canvas.zoom_to_fit()
    QApplication.processEvents()

    # Fixtures drawn with the rectangle tool; the first asks its height, the second inherits.
    win.canvas.actions()["tool.rectangle"].setChecked(True)
    _drag(qtbot, win, (300.0, 100.0), (600.0, 260.0))  # a table under the first target
    _drag(qtbot, win, (20.0, 370.0), (80.0, 430.0))  # a column on one elbow pose
    assert heights == ["fixture"]
    table, column = win.document.cell.fixtures
    assert table.height == column.height == 720.0
    fp = win.fixture_panel
    win.document.selection.set([table.id])
    fp.kind.setCurrentText("table")
    fp.kind.lineEdit().editingFinished.emit()
    _type(qtbot, fp.name, "Bench table")
    win.document.selection.set([column.id])
    fp.kind.setCurrentText("column")
    fp.kind.lineEdit().editingFinished.emit()
    _type(qtbot, fp.height, "2000")
    table, column = win.document.cell.fixtures
    assert (table.kind, table.name, table.height) == ("table", "Bench table", 720.0)
    assert (column.kind, column.height) == ("column", 2000.0)

    # Targets added with the Add target tool (snapped to the 10 mm grid: exact values).
    win.canvas.actions()["tool.add_target"].setChecked(True)
    for x, y in ((450.0, 180.0), (-200.0, 400.0), (480.0, 480.0)):
        _click(qtbot, win, x, y)
    pick, place, far = win.document.cell.targets
    assert [(t.x, t.y) for t in (pick, place, far)] == [(450, 180), (-200, 400), (480, 480)]
    # A work height above the table: the tool clears it there.
    src = win.target_table.source
    assert src.setData(src.index(src.row_of(pick.id), KEYS.index("work_height")), "740")
    assert src.setData(src.index(src.row_of(pick.id), KEYS.index("dwell")), "0.5")

    # A sequence: pick, then place, chosen in that order.
    win.canvas.actions()["tool.select"].setChecked(True)
    win.document.selection.set([pick.id, place.id])
    win.sequence_panel.select_arm(arm.id)
    win.sequence_panel.add_selected()
    assert win.document.cell.sequences[0].targets == (pick.id, place.id)

    # What the window shows.
    win.document.settle()
    status = {
        src.target_id(r): src.index(r, KEYS.index("status")).data() for r in range(src.rowCount())
    }
    elbows = {
        src.target_id(r): src.index(r, KEYS.index("elbow")).data() for r in range(src.rowCount())
    }
    q = {
        src.target_id(r): (
            src.index(r, KEYS.index("q1n")).data(),
            src.index(r, KEYS.index("q2n")).data(),
        )
        for r in range(src.rowCount())
    }
    assert status[pick.id] == "● feasible" and elbows[pick.id] == "negative"
    assert q[pick.id] == ("52.8", "-86.4")  # the exam's (52.79, -86.45), to one decimal
    # At the place, the positive pose's elbow is in the column: the negative one is used.
    assert status[place.id] == "● feasible" and elbows[place.id] == "negative"
    assert q[place.id] == ("150.3", "-96.5")  # (150.31, -96.46)
    r = math.hypot(480.0, 480.0)
    assert status[far.id] == f"✕ fails: beyond outer reach by {r - 650:.1f} mm"

    # Saved through the window, checked by the command.
    path = tmp_path / "bench.cell.json"
    win.ask_save_path = lambda: path
    assert win.save() and not win.document.dirty
    saved = load_cell(path)
    assert saved.targets[0].extra == {"work_height": 740.0, "dwell_s": 0.5}
    assert [f.height for f in saved.fixtures] == [720.0, 2000.0]
    capsys.readouterr()
    assert main(["check", str(path), "--json"]) == 1  # one target fails
    report = json.loads(capsys.readouterr().out)
    for t in report["targets"]:
        assert t["feasible"] == status[t["id"]].startswith("● feasible"), t["id"]
        assert (t["chosen_elbow"] or "—") == elbows[t["id"]]
        if not t["feasible"]:
            assert status[t["id"]] == f"✕ fails: {t['reason']}"
    pos = next(s for s in report["targets"] if s["id"] == place.id)["solutions"]
    hit = next(s for s in pos if s["elbow"] == "positive")
    assert hit["collides"] and hit["blocked_by"] == column.id
    assert report["summary"]["feasible"] == 2 and report["summary"]["infeasible_ids"] == [far.id]
    assert report["sequences"][0]["targets"] == [pick.id, place.id]

"""The cell editors of the window (issue 11): arms, fixtures, targets, sequences, the cell.

Each editor is driven as a user would (fields typed, buttons, the canvas's mouse) on a
main window, with every question answered by the test; each edit must be one undo step
that undo takes back exactly.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QApplication, QLineEdit

from app.document import Document
from app.main_window import MainWindow
from app.panels.cell_dialogs import ArmDialog, CellDialog
from app.panels.column_edit import column_menu
from app.panels.fixture_panel import NO_HEIGHT
from app.panels.target_table import COLUMNS
from kinematics.cell import Arm
from kinematics.cellfile import dumps_cell, load_cell, parse_cell

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"
KITTING = REPO / "sample_cells" / "kitting_two_arm.cell.json"
KEYS = [c.key for c in COLUMNS]
INCH_MM = 25.4  # exact (NIST SP 811, B.8)

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]

ASKS = (
    "ask_new_arm",
    "ask_delete_arm",
    "ask_name",
    "ask_cell_properties",
    "ask_units_change",
    "ask_sequence_place",
    "ask_fixture_height",
)


class Asked:
    """Answers for the Cell menu's questions; an unexpected question fails the test."""

    def __init__(self, win: MainWindow) -> None:
        self.log: list[tuple] = []
        self.answers: dict[str, object] = {}
        for name in ASKS:
            setattr(win.cell_actions, name, self._make(name))
        self.errors: list[str] = []
        win.show_error = lambda title, message, details="": self.errors.append(message)
        win.ask_unsaved_changes = lambda: "discard"  # closing at the end of a test

    def _make(self, name: str):
        def ask(*args):
            self.log.append((name, *args))
            if name not in self.answers:
                raise AssertionError(f"unexpected question {name}{args}")
            a = self.answers[name]
            return a(*args) if callable(a) else a

        return ask


@pytest.fixture
def make(qtbot):
    def build(path: Path | None = TRAY, size=(1400, 900)) -> tuple[MainWindow, Asked]:
        doc = Document(load_cell(path), path) if path is not None else None
        win = MainWindow(doc, use_settings=False)
        asked = Asked(win)
        qtbot.addWidget(win)
        win.resize(*size)
        win.show()
        qtbot.waitExposed(win)
        return win, asked

    return build


def _steps(win: MainWindow) -> int:
    return win.undo_stack.count()


def _undo_restores(win: MainWindow, before: str) -> None:
    win.undo()
    assert dumps_cell(win.document.cell) == before


def type_into(qtbot, edit: QLineEdit, text: str, enter: bool = True) -> None:
    edit.setFocus()
    edit.selectAll()
    qtbot.keyClick(edit, Qt.Key.Key_Backspace)
    if text:
        qtbot.keyClicks(edit, text)
    if enter:
        qtbot.keyClick(edit, Qt.Key.Key_Return)


# ---------------------------------------------------------------------------- arms


def test_add_arm_from_the_dialog_is_placed_at_the_view_centre(make):
    win, asked = make()
    before = dumps_cell(win.document.cell)
    asked.answers["ask_new_arm"] = lambda template, cell: Arm(
        "x", "Feeder arm", 0, 0, 90, 300, 200, (-120, 120), (-140, 140), link_radii=(30, 25)
    )
    (x0, x1), (y0, y1) = win.canvas.vb.viewRange()
    assert win.cell_actions.act_add_arm in win.cell_actions.menu.actions()
    win.cell_actions.act_add_arm.trigger()
    cell = win.document.cell
    new = cell.arms[-1]
    assert (new.name, new.a1, new.a2, new.link_radii) == ("Feeder arm", 300, 200, (30, 25))
    assert new.x == pytest.approx((x0 + x1) / 2) and new.y == pytest.approx((y0 + y1) / 2)
    assert win.arm_panel.arm.id == new.id and win.document.selection.ids == (new.id,)
    assert _steps(win) == 1 and win.act_undo.text() == "&Undo Add arm Feeder arm"
    parse_cell(dumps_cell(cell))
    _undo_restores(win, before)


def test_arm_dialog_refuses_bad_values_beside_their_fields(qtbot):
    cell = load_cell(TRAY)
    dialog = ArmDialog(cell.arms[0], cell)
    qtbot.addWidget(dialog)
    dialog.edits["a1"].setText("-5")
    dialog.edits["q2_min"].setText("150")  # above q2 max 145
    assert not dialog.validate()
    assert dialog.reasons["a1"].text() == "✕ must be greater than 0, got -5"
    assert dialog.reasons["q2_min"].text().startswith("✕ min must be below max (150 >= 145)")
    dialog.edits["a1"].setText("300")
    dialog.edits["q2_min"].setText("-150")
    dialog.edits["under"].setText("-1")
    assert not dialog.validate() and dialog.reasons["under"].text() == "✕ must be 0 or more, got -1"
    dialog.edits["under"].setText("900")
    assert dialog.validate()
    arm = dialog.arm()
    assert (arm.a1, arm.q2_limits, arm.link_underside_height) == (300.0, (-150.0, 145.0), 900.0)


def test_duplicate_rename_and_delete_an_arm_each_one_step(make):
    win, asked = make(KITTING)
    cell0 = win.document.cell
    before = dumps_cell(cell0)
    win.arm_panel.select_arm("left")
    win.cell_actions.act_duplicate_arm.trigger()
    twin = win.document.cell.arms[-1]
    left = cell0.arm("left")
    assert (twin.name, twin.a1, twin.elbow) == ("Left kitting arm copy", left.a1, left.elbow)
    assert twin.x == pytest.approx(left.x + left.a1 + left.a2)
    asked.answers["ask_name"] = "Spare arm"
    win.cell_actions.act_rename_arm.trigger()
    assert win.document.cell.arms[-1].name == "Spare arm"
    assert _steps(win) == 2
    # Deleting an arm with targets asks what becomes of them: given to another arm here.
    win.arm_panel.select_arm("left")
    asked.answers["ask_delete_arm"] = ("reassign", "right")
    win.cell_actions.act_delete_arm.trigger()
    cell = win.document.cell
    arm, others, n = asked.log[-1][1:]
    assert arm.id == "left" and n == len(cell0.targets_of("left"))
    assert {o.id for o in others} == {"right", twin.id}
    assert "left" not in {a.id for a in cell.arms}
    assert {t.arm for t in cell.targets} == {"right"}
    # The right arm took the left arm's sequence too, whole and in order.
    assert next(s.targets for s in cell0.sequences if s.arm == "left") in [
        s.targets for s in cell.sequences if s.arm == "right"
    ]
    win.undo()
    win.undo()
    _undo_restores(win, before)


def test_delete_on_an_arm_asks_and_the_last_arm_can_go_with_its_targets(make, qtbot):
    # With two arms, the Delete key on a selected arm asks; cancelling keeps everything.
    win, asked = make(KITTING)
    before = dumps_cell(win.document.cell)
    win.document.selection.set(["right"])
    asked.answers["ask_delete_arm"] = None
    win.act_delete.trigger()
    assert asked.log[-1][0] == "ask_delete_arm" and dumps_cell(win.document.cell) == before
    asked.answers["ask_delete_arm"] = ("delete", None)
    win.act_delete.trigger()
    assert [a.id for a in win.document.cell.arms] == ["left"]
    assert all(t.arm == "left" for t in win.document.cell.targets)
    # One rule everywhere: a cell may have no arms. The last one goes with its targets.
    win.document.selection.set(["left"])
    win.act_delete.trigger()
    assert asked.log[-1][2] == []  # no other arm to give the targets to
    cell = win.document.cell
    assert cell.arms == () and cell.targets == () and cell.sequences == ()
    assert win.arm_panel.no_arms.isVisible()
    parse_cell(dumps_cell(cell))
    win.undo()
    _undo_restores(win, before)


def test_arm_panel_edits_underside_bodies_mechanical_limits_and_jerk(make, qtbot):
    win, _ = make()
    panel = win.arm_panel
    before = dumps_cell(win.document.cell)
    for key, text in (
        ("under", "900"),
        ("tool_r", "22.5"),
        ("m1_max", "170"),
        ("j1", "20000"),
    ):
        type_into(qtbot, panel.edits[key], text)
    arm = win.document.cell.arms[0]
    assert arm.link_underside_height == 900.0
    assert arm.extra["tool_body"] == {"radius": 22.5}
    assert arm.extra["mechanical_limits_deg"] == [[-132.0, 170.0], [-145.0, 145.0]]
    assert arm.extra["joint_jerk_dps3"] == [20000.0, 20000.0]  # one value fills both joints
    assert _steps(win) == 4
    assert win.undo_stack.text(3) == "Change joint 1 jerk of Tray loader"
    parse_cell(dumps_cell(win.document.cell))
    # Emptying a mechanical bound makes it the joint limit again: the key goes.
    type_into(qtbot, panel.edits["m1_max"], "")
    assert "mechanical_limits_deg" not in win.document.cell.arms[0].extra
    # The file format's refusals, in the field's own words (defect 7).
    type_into(qtbot, panel.edits["m1_max"], "100", enter=False)
    assert panel.reasons["m1_max"].text().startswith("✕ q1 mechanical")
    assert "arms[0]" not in panel.reasons["m1_max"].text()
    qtbot.keyClick(panel.edits["m1_max"], Qt.Key.Key_Escape)
    for _ in range(5):
        win.undo()
    assert dumps_cell(win.document.cell) == before


# ---------------------------------------------------------------------------- fixtures


def test_fixture_panel_follows_the_selection_and_edits_name_kind_height_vertices(make, qtbot):
    win, asked = make()
    panel = win.fixture_panel
    before = dumps_cell(win.document.cell)
    win.document.selection.set(["cabinet_door"])
    assert panel.fixture.id == "cabinet_door"
    assert not panel.fixture_dock_hidden if hasattr(panel, "fixture_dock_hidden") else True
    assert win.fixture_dock.isVisible() and not win.fixture_dock.visibleRegion().isEmpty()
    win.document.selection.set(["reject_chute"])
    assert panel.name.text() == "Reject chute" or panel.fixture.id == "reject_chute"
    type_into(qtbot, panel.height, "640")
    assert win.document.cell.fixtures[4].height == 640.0
    assert win.cell_actions.remembered_heights() == {"fixture": 640.0}
    type_into(qtbot, panel.name, "Scrap chute")
    assert win.document.cell.fixtures[4].name == "Scrap chute"
    panel.kind.setCurrentText("table")
    panel.kind.lineEdit().editingFinished.emit()
    assert win.document.cell.fixtures[4].kind == "table"
    # A vertex typed in the table moves; one that would make the outline cross is refused.
    outline = win.document.cell.fixtures[4].outline
    item = panel.vertices.item(0, 0)
    item.setText(str(outline[0][0] - 10))
    assert win.document.cell.fixtures[4].outline[0][0] == outline[0][0] - 10
    n_steps = _steps(win)
    far = outline[2]
    panel.vertices.item(0, 0).setText(str(far[0] + 500))
    panel.vertices.item(0, 1).setText(str(far[1] + 500))
    assert _steps(win) in (n_steps, n_steps + 1)  # one of the two may still be a simple outline
    panel.vertices.selectRow(0)
    panel.insert_vertex()
    assert len(win.document.cell.fixtures[4].outline) == len(outline) + 1
    panel.remove_vertex()
    assert len(win.document.cell.fixtures[4].outline) == len(outline)
    while win.undo_stack.canUndo():
        win.undo()
    assert dumps_cell(win.document.cell) == before
    assert asked.log == []


def test_fixture_without_height_is_flagged_and_height_is_checked(make, qtbot):
    win, _ = make()
    panel = win.fixture_panel
    win.document.selection.set(["tray_nest"])
    type_into(qtbot, panel.height, "")
    assert win.document.cell.fixtures[2].height is None
    assert panel.height_note.isVisible() and panel.height_note.text() == NO_HEIGHT
    type_into(qtbot, panel.height, "-3", enter=False)
    assert panel.height_reason.text() == "✕ must be 0 or more, got -3"
    qtbot.keyClick(panel.height, Qt.Key.Key_Escape)
    assert panel.height.text() == ""


def _drag_rect(qtbot, win, p0, p1) -> None:
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


def test_a_drawn_fixture_asks_its_height_once_per_kind(make, qtbot):
    win, asked = make()
    win.canvas.actions()["tool.rectangle"].setChecked(True)
    asked.answers["ask_fixture_height"] = 720.0
    _drag_rect(qtbot, win, (200.0, -300.0), (300.0, -200.0))
    first = win.document.cell.fixtures[-1]
    assert (first.kind, first.height) == ("fixture", 720.0)
    assert [a[0] for a in asked.log] == ["ask_fixture_height"]
    assert _steps(win) == 1  # drawn and given its height: one step
    _drag_rect(qtbot, win, (-300.0, -300.0), (-200.0, -220.0))
    second = win.document.cell.fixtures[-1]
    assert second.id != first.id and second.height == 720.0  # inherited, not asked again
    assert len(asked.log) == 1


# ---------------------------------------------------------------------------- targets


def test_work_height_and_dwell_are_edited_in_the_table(make):
    win, _ = make()
    src = win.target_table.source
    before = dumps_cell(win.document.cell)
    row = src.row_of("tray_a1")
    assert src.setData(src.index(row, KEYS.index("work_height")), "795")
    assert src.setData(src.index(row, KEYS.index("dwell")), "0.4")
    t = next(t for t in win.document.cell.targets if t.id == "tray_a1")
    assert t.extra == {"work_height": 795.0, "dwell_s": 0.4}
    assert src.index(row, KEYS.index("work_height")).data() == "795.0"
    assert src.index(row, KEYS.index("dwell")).data() == "0.4"
    assert not src.setData(src.index(row, KEYS.index("dwell")), "-1")
    assert _steps(win) == 2
    # Empty removes the key again.
    assert src.setData(src.index(row, KEYS.index("work_height")), "")
    assert (
        "work_height" not in next(t for t in win.document.cell.targets if t.id == "tray_a1").extra
    )
    for _ in range(3):
        win.undo()
    assert dumps_cell(win.document.cell) == before


def test_an_edit_of_a_selected_row_sets_every_selected_row(make, qtbot):
    win, _ = make()
    table = win.target_table
    ids = ["tray_a1", "tray_a2", "tray_a3"]
    win.document.selection.set(ids)
    assert sorted(table.selected_ids()) == sorted(ids)
    src = table.source
    assert src.setData(src.index(src.row_of("tray_a2"), KEYS.index("work_height")), "790")
    heights = {t.id: t.extra.get("work_height") for t in win.document.cell.targets}
    assert all(heights[i] == 790.0 for i in ids) and heights["tray_b1"] is None
    assert _steps(win) == 1 and win.act_undo.text() == "&Undo Set work height of 3 targets"
    # The context menu does the same for a column chosen there.
    table.ask_column_value = lambda parent, cell, key, count, current: "1.5"
    menu = column_menu(table, table.visualRect(table.proxy.index(0, KEYS.index("dwell"))).center())
    first = menu.actions()[0]
    assert first.text() == "Set dwell for 3 selected targets…"
    first.trigger()
    dwell = {t.id: t.extra.get("dwell_s") for t in win.document.cell.targets}
    assert all(dwell[i] == 1.5 for i in ids) and _steps(win) == 2


def test_changing_a_targets_arm_asks_about_its_place_in_the_sequence(make):
    win, asked = make(KITTING)
    src = win.target_table.source
    cell0 = win.document.cell
    row = src.row_of("kit_1")
    asked.answers["ask_sequence_place"] = "cancel"
    assert not src.setData(src.index(row, KEYS.index("arm")), "right")
    assert win.document.cell is cell0 and asked.log[-1][1:] == (["kit_1"], "right")
    asked.answers["ask_sequence_place"] = "end"
    assert src.setData(src.index(row, KEYS.index("arm")), "right")
    seqs = {s.arm: s.targets for s in win.document.cell.sequences}
    assert "kit_1" not in seqs["left"] and seqs["right"][-1] == "kit_1"
    win.undo()
    asked.answers["ask_sequence_place"] = "drop"
    assert src.setData(src.index(row, KEYS.index("arm")), "right")
    seqs = {s.arm: s.targets for s in win.document.cell.sequences}
    assert "kit_1" not in seqs["left"] and "kit_1" not in seqs["right"]


# ---------------------------------------------------------------------------- sequences


def test_sequence_panel_adds_in_click_order_removes_reorders_and_reverses(make):
    win, _ = make(KITTING)
    panel = win.sequence_panel
    panel.select_arm("left")
    before = dumps_cell(win.document.cell)
    assert panel.targets() == ("bin_l1", "kit_1", "bin_l2", "kit_2", "bin_l3", "kit_3")
    panel.list.selectAll()
    panel.remove_chosen()
    assert panel.targets() == () and "No sequence yet" in panel.summary.text()
    # Ctrl+click order: the selection keeps the order of the clicks.
    win.document.selection.set(["kit_2", "bin_l1", "bin_r1", "kit_1"])
    panel.add_selected()
    assert panel.targets() == ("kit_2", "bin_l1", "kit_1")  # the right arm's bin left out
    assert panel.lines()[0].startswith("1. Kit pocket 2")
    panel.reverse()
    assert panel.targets() == ("kit_1", "bin_l1", "kit_2")
    panel.list.clearSelection()
    panel.list.item(2).setSelected(True)
    panel.move_chosen(-1)
    assert panel.targets() == ("kit_1", "kit_2", "bin_l1")
    assert _steps(win) == 4
    for _ in range(4):
        win.undo()
    assert dumps_cell(win.document.cell) == before


def test_reordering_by_drag_changes_the_moves_drawn_on_the_canvas(make, qtbot):
    win, _ = make(KITTING)
    canvas = win.canvas
    canvas.actions()["overlay.swept"].setChecked(True)
    win.document.settle()
    panel = win.sequence_panel
    panel.select_arm("left")
    moves = {(m.from_id, m.to_id) for m in canvas.swept.moves if m.arm == "left"}
    assert ("bin_l1", "kit_1") in moves
    # A drop moves the list's rows; the sequence follows in one step.
    model = panel.list.model()
    assert model.moveRow(model.index(0, 0).parent(), 0, model.index(0, 0).parent(), 3)
    qtbot.waitUntil(lambda: _steps(win) == 1, timeout=2000)
    assert panel.targets()[:3] == ("kit_1", "bin_l2", "bin_l1")
    win.document.settle()
    moves = {(m.from_id, m.to_id) for m in canvas.swept.moves if m.arm == "left"}
    assert ("bin_l1", "kit_1") not in moves and ("kit_1", "bin_l2") in moves
    tags = {t.split(":", 1)[1] for t in _tags(canvas, "overlay.swept:")}
    assert "left:kit_1:bin_l2" in tags


def _tags(canvas, prefix: str) -> list[str]:
    from PySide6.QtWidgets import QGraphicsItem

    out = []
    for it in canvas.plot.scene().items():
        tag = QGraphicsItem.data(it, 0)
        if isinstance(tag, str) and tag.startswith(prefix) and it.isVisible():
            out.append(tag)
    return out


# ---------------------------------------------------------------------------- the cell


def test_cell_properties_name_margin_and_units_converted_or_relabelled(make):
    win, asked = make()
    before = dumps_cell(win.document.cell)
    a1 = win.document.cell.arms[0].a1
    asked.answers["ask_cell_properties"] = ("Tray cell B", "mm", 15.0)
    win.cell_actions.act_properties.trigger()
    cell = win.document.cell
    assert (cell.name, cell.extra["clearance_margin"]) == ("Tray cell B", 15.0)
    asked.answers["ask_cell_properties"] = ("Tray cell B", "in", 15.0)
    asked.answers["ask_units_change"] = "convert"
    win.cell_actions.act_properties.trigger()
    cell = win.document.cell
    assert cell.units == "in" and asked.log[-1][1:3] == ("mm", "in")
    assert cell.arms[0].a1 == pytest.approx(a1 / INCH_MM)
    assert cell.extra["clearance_margin"] == pytest.approx(15.0 / INCH_MM)
    assert win.arm_panel.units["a1"].text() == "in"
    assert win.canvas.plot.getAxis("bottom").labelText == "x (in)"
    win.undo()
    asked.answers["ask_units_change"] = "relabel"
    win.cell_actions.act_properties.trigger()
    assert win.document.cell.units == "in" and win.document.cell.arms[0].a1 == a1
    win.undo()
    asked.answers["ask_units_change"] = "cancel"
    n = _steps(win)
    win.cell_actions.act_properties.trigger()
    assert win.document.cell.units == "mm" and win.undo_stack.index() == n - 1
    win.undo()
    assert dumps_cell(win.document.cell) == before


def test_cell_dialog_checks_name_and_margin(qtbot):
    cell = load_cell(TRAY)
    d = CellDialog(cell, None)
    qtbot.addWidget(d)
    d.margin.setText("-2")
    d.name.setText(" ")
    assert not d.validate()
    assert d.margin_reason.text() == "✕ must be 0 or more, got -2"
    assert d.name_reason.text() == "✕ name must not be empty"
    d.margin.setText("12")
    d.name.setText("Cell B")
    d.units.setCurrentIndex(d.units.findData("in"))
    assert d.validate() and d.values() == ("Cell B", "in", 12.0)


# ---------------------------------------------------------------------------- selection


def _band(qtbot, win, p0, p1, mods=Qt.KeyboardModifier.ShiftModifier) -> None:
    c = win.canvas
    vp = c.viewport()
    a, b = c.world_to_viewport(*p0), c.world_to_viewport(*p1)
    qtbot.mousePress(vp, Qt.MouseButton.LeftButton, mods, a)
    for i in range(1, 6):
        f = i / 5
        pos = QPoint(round(a.x() + f * (b.x() - a.x())), round(a.y() + f * (b.y() - a.y())))
        qtbot.mouseMove(vp, pos)
    qtbot.mouseRelease(vp, Qt.MouseButton.LeftButton, mods, b)


def test_rubber_band_selects_the_targets_inside_and_delete_deletes_them(make, qtbot):
    win, _ = make()
    cell = win.document.cell
    before = dumps_cell(cell)
    box = (-120.0, 335.0, 120.0, 385.0)  # the tray's first row, inside the tray nest's outline
    inside = [t.id for t in cell.targets if box[0] <= t.x <= box[2] and box[1] <= t.y <= box[3]]
    assert inside == ["tray_a1", "tray_a2", "tray_a3"]
    _band(qtbot, win, (box[0], box[1]), (box[2], box[3]))
    assert list(win.document.selection.ids) == inside
    assert sorted(win.target_table.selected_ids()) == sorted(inside)
    # Ctrl+Shift adds a second band to the selection.
    _band(
        qtbot,
        win,
        (-140.0, 415.0),
        (140.0, 485.0),
        Qt.KeyboardModifier.ShiftModifier | Qt.KeyboardModifier.ControlModifier,
    )
    assert list(win.document.selection.ids) == inside + ["tray_b1", "tray_b2", "tray_b3"]
    assert _steps(win) == 0  # selecting changes nothing in the cell
    win.canvas.plot.setFocus()
    qtbot.keyClick(win.canvas.plot, Qt.Key.Key_Delete)
    ids = {t.id for t in win.document.cell.targets}
    assert not ids & {*inside, "tray_b1", "tray_b2", "tray_b3"}
    assert _steps(win) == 1
    _undo_restores(win, before)


def test_ctrl_a_on_the_canvas_selects_every_target(make, qtbot):
    win, _ = make()
    win.activateWindow()
    win.canvas.plot.setFocus()
    QApplication.processEvents()
    qtbot.keyClick(win.canvas.plot, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    assert win.document.selection.ids == tuple(t.id for t in win.document.cell.targets)


def test_heights_per_kind_are_remembered_between_windows(qtbot):
    # With the user's settings (a temporary store here), a height given to a fixture of a
    # kind is what new fixtures of that kind get in the next window.
    win = MainWindow(Document(load_cell(TRAY), TRAY), use_settings=True)
    win.ask_unsaved_changes = lambda: "discard"
    qtbot.addWidget(win)
    win.document.selection.set(["reject_chute"])
    win.fixture_panel.height.setFocus()
    win.fixture_panel.height.setText("615")
    win.fixture_panel.height.setModified(True)
    win.fixture_panel.height.editingFinished.emit()
    assert win.document.cell.fixtures[4].height == 615.0
    other = MainWindow(use_settings=True)
    other.ask_unsaved_changes = lambda: "discard"
    qtbot.addWidget(other)
    assert other.cell_actions.remembered_heights()["fixture"] == 615.0
    asked = []
    other.cell_actions.ask_fixture_height = lambda kind, units: asked.append(kind)
    assert other.cell_actions.new_fixture_height("fixture") == 615.0 and asked == []

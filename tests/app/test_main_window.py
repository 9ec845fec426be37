"""The main window: files, undo, prompts, status bar, panels following the model."""

from __future__ import annotations

import json
import math
from dataclasses import replace
from pathlib import Path

import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QApplication, QMessageBox

from app import settings as app_settings
from app.document import Document
from app.main_window import MainWindow
from app.panels.target_table import COLUMNS
from app.panels.validate import replace_arm
from kinematics.caution import CAUTION_FULL, CAUTION_SHORT
from kinematics.cellfile import dumps_cell, load_cell
from kinematics.savefile import backup_files

REPO = Path(__file__).resolve().parents[2]
SAMPLES = sorted((REPO / "sample_cells").glob("*.cell.json"))
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    # The offscreen platform warns about a window-manager feature it lacks.
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


class Answers:
    """Scripted replies to the window's questions, and a record of what was asked."""

    def __init__(self) -> None:
        self.unsaved = "discard"
        self.open_path: Path | None = None
        self.save_path: Path | None = None
        self.revert = True
        self.asked: list[str] = []
        self.errors: list[tuple[str, str]] = []
        self.details: list[str] = []


@pytest.fixture
def answers():
    return Answers()


def _answer(win: MainWindow, answers: Answers) -> MainWindow:
    def unsaved():
        answers.asked.append("unsaved")
        return answers.unsaved

    def error(title, message, details=""):
        answers.errors.append((title, message))
        answers.details.append(details)

    win.ask_unsaved_changes = unsaved
    win.ask_open_path = lambda: answers.open_path
    win.ask_save_path = lambda: answers.save_path
    win.ask_revert = lambda: answers.revert
    win.show_error = error
    return win


@pytest.fixture
def make_window(qtbot, answers):
    def make(path: Path | None = TRAY, **kw) -> MainWindow:
        doc = Document(load_cell(path), path) if path is not None else None
        win = _answer(MainWindow(doc, **kw), answers)
        qtbot.addWidget(win)
        win.resize(1400, 900)
        win.show()
        qtbot.waitExposed(win)
        # The window paints first and plans the moves on the next turn.
        qtbot.waitUntil(lambda: not win.document.unsettled, timeout=5000)
        return win

    return make


@pytest.fixture
def window(make_window):
    return make_window()


def table_status(win: MainWindow) -> dict[str, str]:
    m = win.target_table.source
    col = [c.key for c in COLUMNS].index("status")
    return {m.target_id(r): m.index(r, col).data() for r in range(m.rowCount())}


def move_base(win: MainWindow, x: float, y: float) -> None:
    cell = win.document.cell
    arm = cell.arms[0]
    win.document.edit(f"Move base of {arm.name}", replace_arm(cell, replace(arm, x=x, y=y)))


# ---------------------------------------------------------------------------- opening


@pytest.mark.parametrize("path", SAMPLES, ids=[p.name for p in SAMPLES])
def test_every_sample_cell_opens_with_table_and_problems(make_window, path):
    win = make_window(path)
    cell = win.document.cell
    assert win.windowTitle() == f"{path.name}[*] — Elbow Room"
    assert win.target_table.source.rowCount() == len(cell.targets)
    statuses = table_status(win)
    assert set(statuses) == {t.id for t in cell.targets}
    failing = [tid for tid, text in statuses.items() if "fails" in text]
    # Every sample cell is built to show at least one failing and one feasible target.
    assert failing and len(failing) < len(cell.targets)
    assert win.problems.problem_ids() == [t.id for t in cell.targets if t.id in failing]
    glyphs = ("●", "✕", "◆", "▲", "▼", "■", "★", "⬟")
    assert all(text.startswith(glyphs) for text in statuses.values())
    # The count covers the failing targets, then bad moves, shared zones and arms in
    # time (arms that meet or share a zone at once) listed after them.
    p = win.problems
    more = len(p.problem_moves()) + len(p.problem_zones()) + len(p.time_problems())
    assert win.problems_dock.windowTitle() == f"Problems ({len(failing) + more})"


def test_problem_line_states_how_far_out_of_reach(window):
    # Outer reach of a two-link arm is a1 + a2 (law of cosines at q2 = 0; any robotics
    # handbook, e.g. Siciliano et al., Robotics: Modelling, Planning and Control, sec. 2.12;
    # section from memory).
    cell = window.document.cell
    arm = cell.arms[0]
    t = next(t for t in cell.targets if t.id == "outfeed_far")
    beyond = math.hypot(t.x - arm.x, t.y - arm.y) - (arm.a1 + arm.a2)
    line = next(text for text in window.problems.lines() if text.split()[1] == "outfeed_far")
    assert line.startswith("✕ outfeed_far ")
    assert line.endswith(f"— beyond outer reach by {beyond:.1f} mm")


# ---------------------------------------------------------------------------- live updates


def test_moving_the_base_updates_table_and_problems(window):
    cell = window.document.cell
    arm = cell.arms[0]
    far = next(t for t in cell.targets if t.id == "outfeed_far")
    # Put the base 450 mm from the far target, mid-annulus (50..600 mm) with q2 near 83 degrees.
    move_base(window, far.x - 450.0, far.y)
    statuses = table_status(window)
    assert statuses["outfeed_far"] == "● feasible"
    assert "outfeed_far" not in window.problems.problem_ids()

    # Move the base 10 m away: every target is beyond outer reach by its distance - (a1 + a2).
    move_base(window, 10_000.0, 0.0)
    statuses = table_status(window)
    assert all(text.startswith("✕ fails: beyond outer reach") for text in statuses.values())
    assert window.problems.problem_ids() == [t.id for t in cell.targets]
    for t, line in zip(cell.targets, window.problems.lines(), strict=True):
        beyond = math.hypot(t.x - 10_000.0, t.y) - (arm.a1 + arm.a2)
        assert line.endswith(f"beyond outer reach by {beyond:.1f} mm")
    assert (
        window.hover_label.text()
        == f"0 of {len(cell.targets)} targets feasible, {len(cell.targets)} fail"
    )


def test_arm_panel_follows_undo(window):
    move_base(window, 123.5, -40.0)
    assert window.arm_panel.edits["x"].text() == "123.5"
    window.undo()
    assert window.arm_panel.edits["x"].text() == "0"


# ---------------------------------------------------------------------------- undo


def test_undo_restores_the_serialized_document_exactly(window, qtbot):
    original = dumps_cell(window.document.cell)
    # A field edit, a table edit, and a drag (preview steps + commit).
    edit = window.arm_panel.edits["a1"]
    edit.setFocus()
    edit.selectAll()
    qtbot.keyClicks(edit, "310")
    qtbot.keyClick(edit, Qt.Key.Key_Return)
    assert window.document.cell.arms[0].a1 == 310.0
    assert window.act_undo.text() == "&Undo Change a1 of Tray loader"

    model = window.target_table.source
    xcol = [c.key for c in COLUMNS].index("x")
    assert model.setData(model.index(0, xcol), "-470.25")
    arm = window.document.cell.arms[0]
    for i in range(20):
        window.document.preview(replace_arm(window.document.cell, replace(arm, y=i * 3.0)))
    window.document.commit_preview("Move base of Tray loader")
    assert window.undo_stack.count() == 3  # the whole drag is one step
    edited = dumps_cell(window.document.cell)
    assert edited != original

    for _ in range(3):
        window.undo()
    assert dumps_cell(window.document.cell) == original
    assert not window.document.dirty and not window.isWindowModified()
    for _ in range(3):
        window.redo()
    assert dumps_cell(window.document.cell) == edited


def test_undo_text_names_the_step_and_marks_window_modified(window):
    assert not window.act_undo.isEnabled()
    move_base(window, 10.0, 0.0)
    assert window.act_undo.isEnabled()
    assert window.act_undo.text() == "&Undo Move base of Tray loader"
    assert window.isWindowModified()
    assert "[*]" in window.windowTitle()
    window.undo()
    assert window.act_redo.text() == "&Redo Move base of Tray loader"
    assert not window.isWindowModified()


def test_delete_selected_target_and_undo(window):
    before = dumps_cell(window.document.cell)
    window.document.selection.set(["reject_bin"])
    window.act_delete.trigger()
    ids = [t.id for t in window.document.cell.targets]
    assert "reject_bin" not in ids
    assert "reject_bin" not in window.problems.problem_ids()
    assert window.act_undo.text().startswith("&Undo Delete reject_bin")
    window.undo()
    assert dumps_cell(window.document.cell) == before


def test_select_all_selects_every_target_row(window):
    window.act_select_all.trigger()
    assert window.document.selection.ids == tuple(t.id for t in window.document.cell.targets)
    assert sorted(window.target_table.selected_ids()) == sorted(window.document.selection.ids)


# ---------------------------------------------------------------------------- files


def test_save_then_reopen_equals_the_document(window, answers, tmp_path, make_window):
    move_base(window, 15.0, -5.0)
    target = tmp_path / "layout.cell.json"
    answers.save_path = tmp_path / "layout"  # the suffix is added
    assert window.save_as()
    assert window.document.path == target
    assert not window.isWindowModified()
    assert window.windowTitle() == "layout.cell.json[*] — Elbow Room"
    assert dumps_cell(load_cell(target)) == dumps_cell(window.document.cell)

    move_base(window, 20.0, -5.0)
    assert window.save()
    # The previous version is kept as a backup next to the file.
    (backup,) = backup_files(target)
    assert dumps_cell(load_cell(backup)).count('"x": 15') == 1
    other = make_window(target)
    assert dumps_cell(other.document.cell) == dumps_cell(window.document.cell)


def test_save_error_is_shown_and_document_stays_unsaved(window, answers, tmp_path):
    move_base(window, 15.0, -5.0)
    answers.save_path = tmp_path / "missing_folder" / "x.cell.json"
    assert not window.save_as()
    assert answers.errors and "x.cell.json" in answers.errors[0][1]
    assert "\n" not in answers.errors[0][1]
    assert window.document.dirty


def test_bad_file_open_keeps_the_current_document(window, answers, tmp_path):
    move_base(window, 15.0, -5.0)
    before = dumps_cell(window.document.cell)
    bad = tmp_path / "broken.cell.json"
    data = json.loads(TRAY.read_text())
    data["arms"][0]["links"][0] = -325
    bad.write_text(json.dumps(data))
    assert not window.open_file(bad)
    assert len(answers.errors) == 1
    message = answers.errors[0][1]
    assert message.startswith("broken.cell.json: ") and "\n" not in message
    assert "links" in message and "-325" in message
    assert message.split(" (and ")[0] in answers.details[0].splitlines()
    assert answers.asked == []  # a bad file never costs the user their changes
    assert dumps_cell(window.document.cell) == before
    assert window.document.path == TRAY and window.document.dirty


def test_open_with_unsaved_changes_asks_and_cancel_keeps_them(window, answers):
    move_base(window, 15.0, -5.0)
    before = dumps_cell(window.document.cell)
    other = SAMPLES[0] if SAMPLES[0] != TRAY else SAMPLES[1]
    answers.unsaved = "cancel"
    assert not window.open_file(other)
    assert answers.asked == ["unsaved"]
    assert dumps_cell(window.document.cell) == before
    answers.unsaved = "discard"
    assert window.open_file(other)
    assert window.document.path == other
    assert window.undo_stack.count() == 0
    assert dumps_cell(window.document.cell) == dumps_cell(load_cell(other))


def test_close_with_unsaved_changes_cancel_keeps_window_discard_closes(window, answers):
    move_base(window, 15.0, -5.0)
    answers.unsaved = "cancel"
    assert not window.close()
    assert window.isVisible()
    answers.unsaved = "discard"
    assert window.close()
    assert not window.isVisible()
    assert answers.asked == ["unsaved", "unsaved"]
    # Discarded: the file on disk is untouched.
    assert dumps_cell(load_cell(TRAY)) != dumps_cell(window.document.cell)


def test_close_with_save_answer_writes_the_file(make_window, answers, tmp_path):
    path = tmp_path / "mine.cell.json"
    path.write_text(TRAY.read_text())
    win = make_window(path)
    move_base(win, 33.0, 0.0)
    answers.unsaved = "save"
    assert win.close()
    assert load_cell(path).arms[0].x == 33.0


def test_clean_close_does_not_ask(window, answers):
    assert window.close()
    assert answers.asked == []


def test_new_file_has_one_arm_and_no_targets(window, answers):
    assert window.new_file()
    cell = window.document.cell
    assert len(cell.arms) == 1 and cell.targets == ()
    assert window.document.path is None
    assert window.windowTitle() == "Untitled[*] — Elbow Room"
    assert window.problems.lines() and window.problems.problem_ids() == []
    assert not window.act_revert.isEnabled()


def test_revert_reloads_the_saved_file(window, answers):
    move_base(window, 15.0, -5.0)
    answers.revert = False
    assert not window.revert()
    assert window.document.dirty
    answers.revert = True
    assert window.revert()
    assert dumps_cell(window.document.cell) == dumps_cell(load_cell(TRAY))
    assert not window.document.dirty and window.undo_stack.count() == 0


def test_recent_files_newest_first_and_missing_pruned(make_window, answers, tmp_path):
    paths = []
    for i in range(10):
        p = tmp_path / f"cell{i}.cell.json"
        p.write_text(TRAY.read_text())
        paths.append(p)
    win = make_window(None)
    for p in paths:
        assert win.open_file(p)
    win._fill_recent_menu()
    assert win.recent_paths() == list(reversed(paths))[: app_settings.MAX_RECENT]
    paths[8].unlink()
    win._fill_recent_menu()
    # Only 8 were kept, so pruning one leaves 7 (the oldest dropped ones do not come back).
    assert win.recent_paths() == [paths[9]] + list(reversed(paths[2:8]))
    # Another window (a later session) sees the same list.
    again = make_window(None)
    assert again.recent_paths() == win.recent_paths()
    action = next(a for a in again.recent_menu.actions() if a.data() == str(paths[5]))
    action.trigger()
    assert again.document.path == paths[5]
    assert again.recent_paths()[0] == paths[5]


# ---------------------------------------------------------------------------- status bar


def test_caution_is_always_visible_and_opens_the_full_text(window, qtbot):
    button = window.caution_button
    assert button.isVisible()
    assert CAUTION_SHORT in button.text()
    qtbot.mouseClick(button, Qt.MouseButton.LeftButton)
    box = window.findChild(QMessageBox, "caution_box")
    assert box is not None and box.isVisible()
    assert box.text() == CAUTION_FULL
    box.close()
    # Still visible while a temporary message is shown.
    window.statusBar().showMessage("Saved somewhere", 5000)
    assert button.isVisible()


def test_about_holds_the_full_caution(window):
    box = window.show_about()
    assert CAUTION_FULL in box.text()
    box.close()


def test_hover_shows_both_configurations_and_margins(window):
    # Closed-form two-link IK (Craig, Introduction to Robotics, 3rd ed., sec. 4.4;
    # section from memory):
    # c2 = (r^2 - a1^2 - a2^2) / (2 a1 a2); q1 = atan2(y, x) - atan2(a2 s2, a1 + a2 c2).
    cell = window.document.cell
    arm = cell.arms[0]
    t = next(t for t in cell.targets if t.id == "outfeed_place")
    dx, dy = t.x - arm.x, t.y - arm.y
    c2 = (dx * dx + dy * dy - arm.a1**2 - arm.a2**2) / (2 * arm.a1 * arm.a2)
    expected = []
    for sign in (1.0, -1.0):
        s2 = sign * math.sqrt(1 - c2 * c2)
        q2 = math.degrees(math.atan2(s2, c2))
        q1 = math.degrees(math.atan2(dy, dx) - math.atan2(arm.a2 * s2, arm.a1 + arm.a2 * c2))
        q1 -= arm.heading_deg
        q1 = (q1 + 180.0) % 360.0 - 180.0
        expected.append((q1, q2))
    reach = min(arm.a1 + arm.a2 - math.hypot(dx, dy), math.hypot(dx, dy) - abs(arm.a1 - arm.a2))
    window.canvas.hovered_target.emit("outfeed_place")
    text = window.hover_label.text()
    assert text.startswith("outfeed_place ● feasible | ")
    # Both are within limits here; the chosen one keeps the larger margin to its nearest limit.
    margins = [
        min(
            q1 - arm.q1_limits[0],
            arm.q1_limits[1] - q1,
            q2 - arm.q2_limits[0],
            arm.q2_limits[1] - q2,
        )
        for q1, q2 in expected
    ]
    assert min(margins) > 0
    chosen = 0 if margins[0] >= margins[1] else 1
    for k, sign in enumerate("+−"):
        q1, q2 = expected[k]
        mark = ", chosen" if k == chosen else ""
        assert f"({sign}{mark}) q1 {q1:.1f}° q2 {q2:.1f}°" in text
    assert f"margins: limit {margins[chosen]:.1f}°, reach {reach:.1f} mm" in text
    window.canvas.hovered_target.emit("")
    assert window.hover_label.text() == "9 of 11 targets feasible, 2 fail"


def test_cursor_position_in_cell_units(window):
    window.canvas.cursor_moved.emit(1234.56, -20.0)
    assert window.cursor_label.text() == "x 1234.6  y -20.0 mm"


# ---------------------------------------------------------------------------- selection


def test_problem_click_selects_and_zooms(window, qtbot, monkeypatch):
    zoomed = []
    monkeypatch.setattr(window.canvas, "zoom_to", zoomed.append)
    item = window.problems.item(0)
    tid = window.problems.problem_ids()[0]
    rect = window.problems.visualItemRect(item)
    qtbot.mouseClick(window.problems.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    assert window.document.selection.ids == (tid,)
    assert zoomed == [tid]
    assert window.target_table.selected_ids() == [tid]


def test_table_selection_and_model_selection_follow_each_other(window):
    table = window.target_table
    table.selectRow(2)
    tid = table.selected_ids()[0]
    assert window.document.selection.ids == (tid,)
    window.document.selection.set(["reject_bin", "tray_a1"])
    assert sorted(table.selected_ids()) == ["reject_bin", "tray_a1"]
    assert [i.text().split()[1] for i in window.problems.selectedItems()] == ["reject_bin"]


# ---------------------------------------------------------------------------- settings


def test_canvas_toggles_and_docks_are_remembered(make_window):
    win = make_window()
    actions = win.canvas.actions()
    key, act = next(
        (k, a) for k, a in actions.items() if a.isCheckable() and k.startswith("overlay")
    )
    was = act.isChecked()
    act.setChecked(not was)
    win.table_dock.hide()
    assert win.close()
    again = make_window()
    assert again.canvas.actions()[key].isChecked() == (not was)
    assert not again.table_dock.isVisible()


def test_screenshot_mode_ignores_stored_settings(make_window):
    win = make_window()
    key, act = next((k, a) for k, a in win.canvas.actions().items() if k.startswith("overlay"))
    default = act.isChecked()
    act.setChecked(not default)
    assert win.close()
    shot = make_window(use_settings=False)
    assert shot.canvas.actions()[key].isChecked() == default
    assert shot.table_dock.isVisible()


def test_view_menu_holds_every_canvas_action(window):
    in_menus = set()
    for menu_action in window.view_menu.actions():
        if menu_action.menu() is not None:
            in_menus |= set(menu_action.menu().actions())
        in_menus.add(menu_action)
    assert set(window.canvas.actions().values()) <= in_menus
    QApplication.processEvents()


# ---------------------------------------------------------------------------- snapping


def drag_on_canvas(win: MainWindow, qtbot, p0, p1, steps: int = 8, release: bool = True) -> None:
    """Press on world point p0, move to p1 in steps with the button held, release."""
    vp = win.canvas.viewport()
    a, b = win.canvas.world_to_viewport(*p0), win.canvas.world_to_viewport(*p1)
    qtbot.mousePress(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, a)
    for i in range(1, steps + 1):
        f = i / steps
        qtbot.mouseMove(
            vp, QPoint(round(a.x() + f * (b.x() - a.x())), round(a.y() + f * (b.y() - a.y())))
        )
    if release:
        qtbot.mouseRelease(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, b)


def test_grid_pitch_is_set_in_the_toolbar_and_remembered(make_window, qtbot):
    # 10 mm until set (common practice, no source), with or without stored settings.
    assert make_window(use_settings=False).pitch_box.text() == "pitch 10.00 mm"
    win = make_window()
    box = win.pitch_box
    assert box.text() == "pitch 10.00 mm"
    snapping = next(
        a.menu() for a in win.view_menu.actions() if a.menu() and a.text() == "Snapping"
    )
    assert win.act_pitch in snapping.actions()
    win.act_pitch.trigger()
    assert win.focusWidget() is box  # the menu entry puts the keyboard in the box
    qtbot.keyClicks(box.lineEdit(), "25")
    qtbot.keyClick(box.lineEdit(), Qt.Key.Key_Return)
    assert win.canvas.snap_pitch() == 25.0
    arm = win.document.cell.arms[0]
    drag_on_canvas(win, qtbot, (arm.x, arm.y), (arm.x + 137.0, arm.y - 61.0))
    moved = win.document.cell.arms[0]
    assert (moved.x, moved.y) != (arm.x, arm.y)
    assert moved.x % 25.0 == 0.0 and moved.y % 25.0 == 0.0
    win.ask_unsaved_changes = lambda: "discard"
    assert win.close()
    again = make_window()
    assert again.canvas.snap_pitch() == 25.0
    assert again.pitch_box.text() == "pitch 25.00 mm"
    # An inch cell has its own pitch, shown in inches.
    inch = next(p for p in SAMPLES if load_cell(p).units == "in")
    assert again.open_file(inch)
    assert again.pitch_box.text() == "pitch 0.250 in"  # a quarter inch (common practice, no source)
    assert again.canvas.snap_pitch() == 0.25


def test_unusable_stored_pitches_are_ignored(make_window):
    s = app_settings.open_settings()
    for units, value in (("mm", "abc"), ("in", -1.0), ("ft", "nan")):
        s.setValue(f"snap_pitch/{units}", value)
    s.sync()
    assert app_settings.load_snap_pitches() == {}
    win = make_window()
    assert win.canvas.snap_pitch() == 10.0 and win.pitch_box.text() == "pitch 10.00 mm"


# ---------------------------------------------------------------------------- drag by mouse


@pytest.mark.parametrize("path", SAMPLES, ids=[p.name for p in SAMPLES])
def test_mouse_drag_of_a_base_updates_table_and_problems_live_and_undoes_exactly(
    make_window, qtbot, path
):
    win = make_window(path)
    win.canvas.actions()["snap.enabled"].setChecked(False)  # land where the pointer is
    original = dumps_cell(win.document.cell)
    before_statuses = table_status(win)
    cell = win.document.cell
    arm = cell.arms[0]
    mine = [t for t in cell.targets if t.arm == arm.id]
    far = max(mine, key=lambda t: math.hypot(t.x - arm.x, t.y - arm.y))
    # Move the base straight away from its farthest target until that one is 40 units
    # beyond the outer reach a1 + a2 (annulus law; Spong, Hutchinson and Vidyasagar,
    # "Robot Modeling and Control", planar elbow manipulator).
    d = math.hypot(far.x - arm.x, far.y - arm.y)
    ux, uy = (arm.x - far.x) / d, (arm.y - far.y) / d
    k = arm.a1 + arm.a2 + 40.0 - d
    dest = (arm.x + k * ux, arm.y + k * uy)
    drag_on_canvas(win, qtbot, (arm.x, arm.y), dest, release=False)
    assert win.document.previewing

    def check() -> None:
        moved = win.document.cell.arm(arm.id)
        statuses = table_status(win)
        for t in mine:
            r = math.hypot(t.x - moved.x, t.y - moved.y)
            if r > moved.a1 + moved.a2:
                beyond = r - (moved.a1 + moved.a2)
                expected = (
                    f"✕ fails: beyond outer reach by {beyond:.{2 if cell.units == 'in' else 1}f}"
                )
                assert statuses[t.id] == f"{expected} {cell.units}", t.id
        assert statuses[far.id].startswith("✕ fails: beyond outer reach")
        failing = [t.id for t in win.document.cell.targets if "fails" in statuses[t.id]]
        assert win.problems.problem_ids() == failing
        # The count covers the failing targets, then bad moves, shared zones and arms in
        # time (arms that meet or share a zone at once) listed after them.
        p = win.problems
        more = len(p.problem_moves()) + len(p.problem_zones()) + len(p.time_problems())
        assert win.problems_dock.windowTitle() == f"Problems ({len(failing) + more})"

    check()  # live, while the button is still down
    vp = win.canvas.viewport()
    qtbot.mouseRelease(vp, Qt.MouseButton.LeftButton, pos=win.canvas.world_to_viewport(*dest))
    assert not win.document.previewing
    check()
    assert win.undo_stack.count() == 1
    assert win.act_undo.text() == f"&Undo Move base of {arm.name}"
    dragged = dumps_cell(win.document.cell)
    win.undo()
    assert dumps_cell(win.document.cell) == original
    assert not win.document.dirty
    assert table_status(win) == before_statuses
    win.redo()
    assert dumps_cell(win.document.cell) == dragged
    # Esc mid-drag puts everything back as it was before that drag, and records nothing.
    after_statuses = table_status(win)
    moved = win.document.cell.arm(arm.id)
    drag_on_canvas(win, qtbot, (moved.x, moved.y), (arm.x, arm.y), release=False)
    assert table_status(win) != after_statuses
    qtbot.keyClick(win.canvas.plot, Qt.Key.Key_Escape)
    assert dumps_cell(win.document.cell) == dragged and not win.document.previewing
    assert table_status(win) == after_statuses
    qtbot.mouseRelease(vp, Qt.MouseButton.LeftButton, pos=win.canvas.world_to_viewport(0, 0))
    assert dumps_cell(win.document.cell) == dragged and win.undo_stack.count() == 1


def test_a_colliding_move_in_the_problems_list_shows_both_targets(make_window, qtbot, monkeypatch):
    from kinematics.cell import Fixture

    win = make_window(REPO / "sample_cells" / "column_one_elbow.cell.json")
    cell = win.document.cell
    # A 4 m post across the path of pick -> nest (a straight line in joint space).
    post = Fixture(
        "post", "Post P1", "column", ((280, 330), (310, 330), (310, 360), (280, 360)), 4000
    )
    win.document.edit("Add post", replace(cell, fixtures=cell.fixtures + (post,)))
    assert win.problems.problem_moves() == [("arm", "pick", "nest"), ("arm", "nest", "pick")]
    # The dock counts every entry; the status bar counts failing targets only.
    assert win.problems_dock.windowTitle() == "Problems (3)"
    assert win.hover_label.text() == "2 of 3 targets feasible, 1 fails"
    shown: list[list[str]] = []
    monkeypatch.setattr(win.canvas, "zoom_to_targets", shown.append)
    # Connected at start-up, so reconnect to the patched method.
    win.problems.zoom_targets_requested.disconnect()
    win.problems.zoom_targets_requested.connect(win.canvas.zoom_to_targets)
    item = win.problems.item(1)
    assert item.text().startswith("★ move pick → nest — collides with Post P1")
    rect = win.problems.visualItemRect(item)
    qtbot.mouseClick(win.problems.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    assert win.document.selection.ids == ("pick", "nest")
    assert shown == [["pick", "nest"]]
    assert sorted(win.target_table.selected_ids()) == ["nest", "pick"]


def test_zoom_to_targets_shows_both_ends_of_a_move(make_window):
    win = make_window(REPO / "sample_cells" / "column_one_elbow.cell.json")
    win.canvas.zoom_to_targets(["pick", "nest"])
    (x0, x1), (y0, y1) = win.canvas.vb.viewRange()
    for t in win.document.cell.targets:
        if t.id in ("pick", "nest"):
            assert x0 < t.x < x1 and y0 < t.y < y1
    # Zoomed in to the pair, not the whole cell (the rear guard at y = -330 is out of view).
    assert y0 > -330

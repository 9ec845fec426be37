"""The canvas driven like a user would: simulated mouse and keys on its viewport.

Outside references used: the reach annulus of a two-link arm is
|a1 - a2| <= r <= a1 + a2 (any robotics text, e.g. Spong, Hutchinson and
Vidyasagar, "Robot Modeling and Control", planar elbow manipulator), and the
forward kinematics x = a1 cos t1 + a2 cos(t1 + t2), y = a1 sin t1 + a2 sin(t1 + t2)
(same source), both written out here independently of the engine.
"""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import shapely
from PySide6.QtCore import QEvent, QPoint, QPointF, Qt
from PySide6.QtGui import QMouseEvent, QPainterPath
from PySide6.QtWidgets import QApplication, QGraphicsItem

from app.canvas import CellCanvas
from app.canvas.qtstyle import OVERLAY_LOOKS
from app.document import Document
from kinematics.cell import Arm, Cell, Fixture, Target
from kinematics.cellfile import load_cell
from kinematics.ik import Status

SAMPLES = sorted(Path(__file__).resolve().parents[3].glob("sample_cells/*.cell.json"))

pytestmark = pytest.mark.qt_log_ignore("propagateSizeHints")


def _cell() -> Cell:
    # Links pass 400 mm up, over the 40 mm tray: only the keep-out aisle blocks the arm.
    arm = Arm(
        "a",
        "Loader",
        0.0,
        0.0,
        90.0,
        400.0,
        250.0,
        (-150.0, 150.0),
        (-140.0, 140.0),
        link_underside_height=400.0,
    )
    return Cell(
        "Bench",
        arms=(arm,),
        fixtures=(
            Fixture(
                "f1",
                "Tray",
                "fixture",
                ((300.0, 200.0), (500.0, 200.0), (500.0, 350.0), (300.0, 350.0)),
                height=40.0,
            ),
            Fixture(
                "k1", "Aisle", "keep-out", ((-600.0, -500.0), (-200.0, -500.0), (-200.0, -300.0))
            ),
        ),
        targets=(
            Target("t1", "Pick", 300.0, 300.0, "a"),
            Target("t2", "Place", -350.0, 250.0, "a"),
            Target("t3", "Near", 60.0, 50.0, "a"),
        ),
    )


class Recorder:
    """A document whose undo stack is a list."""

    def __init__(self, cell: Cell) -> None:
        self.doc = Document(cell)
        self.pushed = []
        self.doc.push = self._push

    def _push(self, edit) -> None:
        self.pushed.append(edit)
        self.doc.apply(edit.after)


@pytest.fixture
def rec():
    return Recorder(_cell())


@pytest.fixture
def canvas(qtbot, rec):
    c = CellCanvas(rec.doc)
    qtbot.addWidget(c)
    c.resize(1100, 800)
    c.show()
    qtbot.waitExposed(c)
    c.zoom_to_fit()
    return c


def _vp(canvas, x, y) -> QPoint:
    return canvas.world_to_viewport(x, y)


def _drag(qtbot, canvas, p0, p1, steps=6, mods=Qt.KeyboardModifier.NoModifier, release=True):
    vp = canvas.viewport()
    a, b = _vp(canvas, *p0), _vp(canvas, *p1)
    qtbot.mousePress(vp, Qt.MouseButton.LeftButton, mods, a)
    for i in range(1, steps + 1):
        f = i / steps
        qtbot.mouseMove(
            vp, QPoint(round(a.x() + f * (b.x() - a.x())), round(a.y() + f * (b.y() - a.y())))
        )
    if release:
        qtbot.mouseRelease(vp, Qt.MouseButton.LeftButton, mods, b)
    return a, b


def _click(qtbot, canvas, x, y, mods=Qt.KeyboardModifier.NoModifier):
    qtbot.mouseClick(canvas.viewport(), Qt.MouseButton.LeftButton, mods, _vp(canvas, x, y))


def _reach_status(arm: Arm, x: float, y: float) -> int | None:
    """Reach verdict from the annulus law alone (None when inside the annulus)."""
    r = math.hypot(x - arm.x, y - arm.y)
    if r > arm.a1 + arm.a2:
        return int(Status.BEYOND_REACH)
    if r < abs(arm.a1 - arm.a2):
        return int(Status.INSIDE_HOLE)
    return None


def _scene_tags(canvas, prefix: str) -> list[str]:
    tags = (QGraphicsItem.data(it, 0) for it in canvas.plot.scene().items())
    return [t for t in tags if isinstance(t, str) and t.startswith(prefix)]


@pytest.mark.parametrize("path", SAMPLES, ids=[p.name for p in SAMPLES])
def test_every_sample_cell_opens_and_draws_its_items(qtbot, path):
    cell = load_cell(path)
    doc = Document(cell)
    c = CellCanvas(doc)
    qtbot.addWidget(c)
    c.resize(900, 600)
    c.show()
    qtbot.waitExposed(c)
    img = c.grab().toImage()
    assert not img.isNull() and img.width() > 0
    # One marker per target across the status layers, with the status the engine gives.
    ev = doc.evaluation
    drawn = sum(c.targets.markers.count(int(st)) for st in Status)
    assert drawn == len(cell.targets)
    for st in Status:
        expected = sum(int(np.count_nonzero(e.status == st)) for e in ev.arms.values())
        assert c.targets.markers.count(int(st)) == expected
    assert set(c.fixtures.outlines()) == {f.id for f in cell.fixtures}
    assert c.plot.getAxis("bottom").labelText == f"x ({cell.units})"
    assert c.scale_bar.text().endswith(cell.units)
    assert len(SAMPLES) >= 1


def test_dragging_a_base_updates_statuses_live_and_records_one_undo_step(qtbot, canvas, rec):
    doc = rec.doc
    arm0 = doc.cell.arm("a")
    seen: list[tuple[float, float]] = []
    doc.events.cell_changed.connect(
        lambda ch: seen.append((doc.cell.arm("a").x, doc.cell.arm("a").y))
    )
    # Drag the base far to the right: every target ends beyond the outer reach.
    _drag(qtbot, canvas, (arm0.x, arm0.y), (900.0, 0.0), steps=8)
    assert len(rec.pushed) == 1
    assert rec.pushed[0].label == "Move base of Loader"
    assert rec.pushed[0].before.arm("a") == arm0
    arm = doc.cell.arm("a")
    assert arm.x > 800.0 and abs(arm.y) < 20.0
    assert (arm.x, arm.y) == (round(arm.x / 10) * 10, round(arm.y / 10) * 10)  # grid snap
    assert len(seen) >= 3  # live previews during the drag, not only at the end
    ev = doc.evaluation.arms["a"]
    for i, tid in enumerate(ev.target_ids):
        t = next(t for t in doc.cell.targets if t.id == tid)
        assert int(ev.status[i]) == _reach_status(arm, t.x, t.y) == int(Status.BEYOND_REACH)
    # The canvas draws them with the out-of-reach marker.
    assert canvas.targets.markers.count(int(Status.BEYOND_REACH)) == 3
    assert canvas.status_message is not None


def test_statuses_follow_back_into_reach(qtbot, canvas, rec):
    doc = rec.doc
    doc.preview(replace(doc.cell, arms=(replace(doc.cell.arm("a"), x=2000.0),)))
    doc.commit_preview("setup")
    _drag(qtbot, canvas, (2000.0, 0.0), (0.0, 0.0), steps=5)
    arm = doc.cell.arm("a")
    ev = doc.evaluation.arms["a"]
    for i, tid in enumerate(ev.target_ids):
        t = next(t for t in doc.cell.targets if t.id == tid)
        verdict = _reach_status(arm, t.x, t.y)
        if verdict is None:
            assert int(ev.status[i]) not in (Status.BEYOND_REACH, Status.INSIDE_HOLE)
        else:
            assert int(ev.status[i]) == verdict
    assert len(rec.pushed) == 2


def test_esc_mid_drag_restores_the_document_exactly(qtbot, canvas, rec):
    doc = rec.doc
    before = doc.cell
    t = before.targets[0]
    _drag(qtbot, canvas, (t.x, t.y), (t.x + 150.0, t.y - 120.0), release=False)
    assert doc.cell != before and doc.previewing
    qtbot.keyClick(canvas.plot, Qt.Key.Key_Escape)
    assert doc.cell is before
    assert not doc.previewing
    # The rest of that drag is ignored, and no undo step is recorded.
    qtbot.mouseMove(canvas.viewport(), _vp(canvas, t.x + 300.0, t.y))
    qtbot.mouseRelease(canvas.viewport(), Qt.MouseButton.LeftButton, pos=_vp(canvas, 0, 0))
    assert doc.cell is before
    assert rec.pushed == []


def test_ghost_poses_end_on_their_targets(canvas, rec):
    doc = rec.doc
    arm = doc.cell.arm("a")
    ev = canvas.document.evaluation.arms["a"]
    for c in (0, 1):
        path: QPainterPath = canvas.ghosts.items[("a", c, "chosen")].path()
        pts = [(path.elementAt(k).x, path.elementAt(k).y) for k in range(path.elementCount())]
        tips = pts[2::3]
        for i, tid in enumerate(ev.target_ids):
            if int(ev.chosen[i]) != c:
                continue
            t = next(t for t in doc.cell.targets if t.id == tid)
            q1, q2 = ev.ik.q_deg[i, c]
            # Independent forward kinematics of the planar two-link arm.
            t1 = math.radians(arm.heading_deg + q1)
            t12 = t1 + math.radians(q2)
            fx = arm.x + arm.a1 * math.cos(t1) + arm.a2 * math.cos(t12)
            fy = arm.y + arm.a1 * math.sin(t1) + arm.a2 * math.sin(t12)
            assert (fx, fy) == pytest.approx((t.x, t.y), abs=1e-6)
            assert any(math.hypot(px - t.x, py - t.y) < 1e-6 for px, py in tips)
    # Infeasible targets have no ghost at all.
    bad = [i for i in range(len(ev.target_ids)) if not ev.feasible[i]]
    assert bad, "the test cell needs an unreachable target"
    for i in bad:
        t = doc.cell.targets[i]
        for item in canvas.ghosts.items.values():
            p = item.path()
            for k in range(p.elementCount()):
                assert math.hypot(p.elementAt(k).x - t.x, p.elementAt(k).y - t.y) > 1e-6


def test_ghost_modes(canvas, rec):
    def drawn():
        return sum(it.path().elementCount() for it in canvas.ghosts.items.values())

    assert drawn() > 0
    canvas.actions()["ghosts.none"].setChecked(True)
    assert drawn() == 0
    canvas.actions()["ghosts.selected"].setChecked(True)
    assert drawn() == 0
    rec.doc.selection.set(("t1",))
    assert drawn() in (3, 6, 9)  # one target: one to three poses of three points
    assert canvas.actions()["ghosts.all"].isChecked() is False


@pytest.mark.parametrize("key", ["annulus", "positive", "negative", "both", "comfort"])
def test_each_overlay_toggle_adds_and_removes_scene_items(canvas, key):
    act = canvas.actions()[f"overlay.{key}"]
    act.setChecked(False)
    assert _scene_tags(canvas, f"overlay.{key}:") == []
    act.setChecked(True)
    assert _scene_tags(canvas, f"overlay.{key}:") == [f"overlay.{key}:a"]
    look_text = OVERLAY_LOOKS[key].legend
    assert look_text in canvas.legend.texts()
    act.setChecked(False)
    assert _scene_tags(canvas, f"overlay.{key}:") == []


def test_annulus_follows_a_base_move_with_outer_radius_a1_plus_a2(qtbot, canvas, rec):
    doc = rec.doc
    _drag(qtbot, canvas, (0.0, 0.0), (-250.0, 130.0))
    arm = doc.cell.arm("a")
    (item,) = canvas.overlay_items("annulus")
    rect = item.mapRectToParent(item.path().boundingRect())
    assert rect.center().x() == pytest.approx(arm.x, abs=1.0)
    assert rect.center().y() == pytest.approx(arm.y, abs=1.0)
    assert rect.width() == pytest.approx(2 * (arm.a1 + arm.a2), rel=1e-3)


def test_shift_drag_on_base_and_handle_drag_turn_the_arm(qtbot, canvas, rec):
    doc = rec.doc
    hx, hy = canvas.bases.items["a"].handle_point()
    _drag(qtbot, canvas, (hx, hy), (300.0, 300.0))  # handle: heading points at the pointer
    assert rec.pushed[-1].label == "Rotate Loader"
    assert doc.cell.arm("a").heading_deg == pytest.approx(45.0)
    assert (doc.cell.arm("a").x, doc.cell.arm("a").y) == (0.0, 0.0)
    # Shift-drag on the base turns it by the angle swept around the base: a quarter turn.
    _drag(qtbot, canvas, (30.0, 0.0), (0.0, 30.0), mods=Qt.KeyboardModifier.ShiftModifier)
    assert rec.pushed[-1].label == "Rotate Loader"
    assert len(rec.pushed) == 2
    assert doc.cell.arm("a").heading_deg == pytest.approx(135.0)


def test_dragging_a_target_snaps_to_a_fixture_vertex(qtbot, canvas, rec):
    doc = rec.doc
    t = doc.cell.targets[1]
    px = canvas._px()
    _drag(qtbot, canvas, (t.x, t.y), (500.0 + 3 * px, 350.0 - 2 * px))
    moved = next(x for x in doc.cell.targets if x.id == t.id)
    assert (moved.x, moved.y) == (500.0, 350.0)
    assert rec.pushed[-1].label == "Move target Place"


def test_dragging_a_fixture_and_a_vertex(qtbot, canvas, rec):
    doc = rec.doc
    _drag(qtbot, canvas, (400.0, 230.0), (400.0, 130.0))
    f = doc.cell.fixtures[0]
    assert rec.pushed[-1].label == "Move fixture Tray"
    dx, dy = f.outline[0][0] - 300.0, f.outline[0][1] - 200.0
    assert dx == pytest.approx(0.0, abs=10.0) and dy == pytest.approx(-100.0, abs=10.0)
    assert all(
        (x - x0, y - y0) == (dx, dy)
        for (x, y), (x0, y0) in zip(f.outline, _cell().fixtures[0].outline, strict=True)
    )
    vx, vy = f.outline[2]
    _drag(qtbot, canvas, (vx, vy), (vx + 60.0, vy + 40.0))
    assert rec.pushed[-1].label == "Move vertex of Tray"
    g = doc.cell.fixtures[0]
    assert g.outline[2] != f.outline[2] and g.outline[0] == f.outline[0]


def test_clicks_select_and_outside_selection_highlights(qtbot, canvas, rec):
    doc = rec.doc
    _click(qtbot, canvas, 300.0, 300.0)
    assert doc.selection.ids == ("t1",)
    _click(qtbot, canvas, -350.0, 250.0, Qt.KeyboardModifier.ControlModifier)
    assert doc.selection.ids == ("t1", "t2")
    assert len(canvas.targets.selected.data) == 2
    doc.selection.set(("f1",))
    assert not canvas.fixtures.halo.path().isEmpty() and len(canvas.targets.selected.data) == 0
    _click(qtbot, canvas, -900.0, 700.0)  # empty canvas
    assert doc.selection.ids == ()


def test_delete_key_and_context_menu_delete(qtbot, canvas, rec):
    doc = rec.doc
    _click(qtbot, canvas, 300.0, 300.0)
    canvas.plot.setFocus()
    qtbot.keyClick(canvas.plot, Qt.Key.Key_Delete)
    assert [t.id for t in doc.cell.targets] == ["t2", "t3"]
    assert rec.pushed[-1].label == "Delete target Pick"
    menu = canvas.context_menu_at(-400.0, -450.0)
    acts = {a.text(): a for a in menu.actions()}
    assert "Delete fixture Aisle" in acts
    acts["Delete fixture Aisle"].trigger()
    assert [f.id for f in doc.cell.fixtures] == ["f1"]
    assert len(rec.pushed) == 2


def test_set_position_dialog_gives_exact_values(canvas, rec):
    doc = rec.doc
    canvas.ask_position = lambda *a, **k: (123.456, -78.9, 37.5)
    menu = canvas.context_menu_at(0.0, 0.0)
    next(a for a in menu.actions() if a.text() == "Set position…").trigger()
    arm = doc.cell.arm("a")
    assert (arm.x, arm.y, arm.heading_deg) == (123.456, -78.9, 37.5)
    assert len(rec.pushed) == 1
    canvas.ask_position = lambda *a, **k: (10.0, 20.0, None)
    menu = canvas.context_menu_at(-350.0, 250.0)
    next(a for a in menu.actions() if a.text() == "Set position…").trigger()
    t = next(t for t in doc.cell.targets if t.id == "t2")
    assert (t.x, t.y) == (10.0, 20.0)


def test_measuring_tool_reads_distance_and_angle(qtbot, canvas):
    canvas.actions()["tool.measure"].setChecked(True)
    messages: list[str] = []
    canvas.status_message.connect(messages.append)
    _click(qtbot, canvas, -100.0, -100.0)
    _click(qtbot, canvas, 200.0, 300.0)
    d, a = canvas.measurement()
    # Both clicks snap to the 10-unit grid; (-100,-100) to (200,300) is a 3-4-5 triangle.
    assert d == pytest.approx(500.0)
    assert a == pytest.approx(math.degrees(math.atan2(400.0, 300.0)))
    assert "500.0 mm" in canvas._measure_label.toPlainText()
    assert any("500.0 mm" in m for m in messages)


def test_polygon_rectangle_and_add_target_tools(qtbot, canvas, rec):
    doc = rec.doc
    canvas.actions()["tool.polygon"].setChecked(True)
    for x, y in ((-800.0, 400.0), (-600.0, 400.0), (-700.0, 550.0)):
        _click(qtbot, canvas, x, y)
    qtbot.keyClick(canvas.plot, Qt.Key.Key_Return)
    new = doc.cell.fixtures[-1]
    assert new.outline == ((-800.0, 400.0), (-600.0, 400.0), (-700.0, 550.0))
    assert rec.pushed[-1].label == f"Add fixture {new.name}"
    canvas.actions()["tool.rectangle"].setChecked(True)
    _drag(qtbot, canvas, (600.0, -100.0), (700.0, -300.0))
    rect = doc.cell.fixtures[-1]
    assert sorted(rect.outline) == [
        (600.0, -300.0),
        (600.0, -100.0),
        (700.0, -300.0),
        (700.0, -100.0),
    ]
    canvas.actions()["tool.add_target"].setChecked(True)
    _click(qtbot, canvas, 100.0, 400.0)
    t = doc.cell.targets[-1]
    assert (t.x, t.y, t.arm) == (100.0, 400.0, "a")
    assert rec.pushed[-1].label == f"Add target {t.name}"
    assert len(rec.pushed) == 3


def test_hover_reports_target_and_cursor(qtbot, canvas, rec):
    hovered: list[str] = []
    cursor: list[tuple[float, float]] = []
    canvas.hovered_target.connect(hovered.append)
    canvas.cursor_moved.connect(lambda x, y: cursor.append((x, y)))
    qtbot.mouseMove(canvas.viewport(), _vp(canvas, -350.0, 250.0))
    assert hovered[-1] == "t2"
    assert cursor[-1] == pytest.approx((-350.0, 250.0), abs=3 * canvas._px())
    tip = canvas.plot.viewport().toolTip()
    assert "Place" in tip
    qtbot.mouseMove(canvas.viewport(), _vp(canvas, -900.0, -700.0))
    assert hovered[-1] == ""


def test_snap_pitch_and_alt_free_drag(qtbot, canvas, rec):
    with pytest.raises(ValueError):
        canvas.set_snap_pitch(0.0)
    canvas.set_snap_pitch(25.0)
    _drag(qtbot, canvas, (0.0, 0.0), (-137.0, 61.0))
    arm = rec.doc.cell.arm("a")
    assert arm.x % 25.0 == 0.0 and arm.y % 25.0 == 0.0
    canvas.actions()["snap.enabled"].setChecked(False)
    _drag(qtbot, canvas, (arm.x, arm.y), (arm.x + 33.3, arm.y + 12.1))
    arm2 = rec.doc.cell.arm("a")
    assert (arm2.x % 25.0, arm2.y % 25.0) != (0.0, 0.0)


def test_zoom_to_target_centres_it(canvas):
    canvas.zoom_to("t2")
    (x0, x1), (y0, y1) = canvas.vb.viewRange()
    assert (x0 + x1) / 2 == pytest.approx(-350.0, abs=1.0)
    assert (y0 + y1) / 2 == pytest.approx(250.0, abs=1.0)


def test_legend_explains_statuses_ghosts_and_fixtures(canvas):
    texts = canvas.legend.texts()
    # One verdict word everywhere: the legend, the table and the report say "feasible".
    assert "fails: beyond outer reach" in texts and "feasible" in texts
    assert any("chosen" in t for t in texts) and any("also works" in t for t in texts)
    assert any(t.startswith("keep-out") for t in texts)
    assert any("Loader" in t for t in texts)


def _send_mouse(widget, kind, pos, mods, buttons, button=Qt.MouseButton.NoButton):
    """A mouse event with modifiers on a move (QTest's mouseMove cannot carry them)."""
    ev = QMouseEvent(kind, QPointF(pos), QPointF(widget.mapToGlobal(pos)), button, buttons, mods)
    QApplication.sendEvent(widget, ev)


def _labels_of(canvas) -> dict[str, str]:
    return {name: reason for *_xy, name, reason, _lead in canvas.targets.labels.placed()}


def test_failure_labels_give_reason_and_amount(qtbot, canvas, rec):
    canvas.grab()  # lay the labels out
    arm = rec.doc.cell.arm("a")
    # "Pick" at (300, 300) is reachable; "Place" at (-350, 250) is too (r = 430 < 650).
    assert _labels_of(canvas)["Pick"] == ""
    rec.doc.edit(
        "far",
        replace(
            rec.doc.cell, targets=rec.doc.cell.targets + (Target("t9", "Far", 700.0, 240.0, "a"),)
        ),
    )
    canvas.grab()
    over = math.hypot(700.0, 240.0) - (arm.a1 + arm.a2)  # annulus law: r - (a1 + a2)
    assert _labels_of(canvas)["Far"] == f"✕ beyond outer reach by {over:.1f} mm"
    # While a drag previews, the amount is left out (it changes every step); it returns after.
    _drag(qtbot, canvas, (0.0, 0.0), (-40.0, 0.0), release=False)
    canvas.grab()
    assert _labels_of(canvas)["Far"] == "✕ beyond outer reach"
    qtbot.mouseRelease(canvas.viewport(), Qt.MouseButton.LeftButton, pos=_vp(canvas, -40.0, 0.0))
    canvas.grab()
    arm = rec.doc.cell.arm("a")
    over = math.hypot(700.0 - arm.x, 240.0 - arm.y) - (arm.a1 + arm.a2)
    assert _labels_of(canvas)["Far"] == f"✕ beyond outer reach by {over:.1f} mm"


def test_q1_limit_label_says_how_far_past(qtbot):
    # Shoulder limited to +-90 from a heading of 0: a target behind the base fails on q1.
    arm = Arm("a", "Back", 0.0, 0.0, 0.0, 400.0, 250.0, (-90.0, 90.0), (-170.0, 170.0))
    x, y = -300.0, 50.0
    doc = Document(Cell("q1", arms=(arm,), targets=(Target("t", "Behind", x, y, "a"),)))
    c = CellCanvas(doc)
    qtbot.addWidget(c)
    c.resize(900, 700)
    c.show()
    c.grab()
    # Closed-form two-link IK (law of cosines), both elbows, independent of the engine.
    r2 = x * x + y * y
    c2 = (r2 - arm.a1**2 - arm.a2**2) / (2 * arm.a1 * arm.a2)
    past = []
    for sign in (1.0, -1.0):
        q2 = sign * math.acos(c2)
        q1 = math.degrees(
            math.atan2(y, x) - math.atan2(arm.a2 * math.sin(q2), arm.a1 + arm.a2 * math.cos(q2))
        )
        q1 = (q1 + 180.0) % 360.0 - 180.0
        past.append(min(abs(q1 - 90.0), abs(q1 + 90.0)) if abs(q1) > 90.0 else 0.0)
    assert min(past) > 0.0
    assert _labels_of(c)["Behind"] == f"▲ q1 limit by {min(past):.1f}°"


def test_regions_are_rebuilt_only_when_arm_geometry_changes(qtbot, canvas, rec):
    doc = rec.doc
    rings = canvas.regions.items[("a", "annulus")].data(2)
    _drag(qtbot, canvas, (0.0, 0.0), (120.0, -80.0))
    # A move is a transform of the same engine rings, not a rebuild.
    assert canvas.regions.items[("a", "annulus")].data(2) is rings
    arm = doc.cell.arm("a")
    doc.edit("longer", replace(doc.cell, arms=(replace(arm, a2=300.0),)))
    assert canvas.regions.items[("a", "annulus")].data(2) is not rings
    (item,) = canvas.overlay_items("annulus")
    rect = item.mapRectToParent(item.path().boundingRect())
    assert rect.width() == pytest.approx(2 * (400.0 + 300.0), rel=1e-3)
    assert rect.center().x() == pytest.approx(arm.x, abs=1.0)


def test_alt_held_during_a_drag_suspends_snapping(qtbot, canvas, rec):
    vp = canvas.viewport()
    t = rec.doc.cell.targets[0]
    a = _vp(canvas, t.x, t.y)
    b = _vp(canvas, t.x + 33.3, t.y + 17.7)
    alt = Qt.KeyboardModifier.AltModifier
    left = Qt.MouseButton.LeftButton
    _send_mouse(vp, QEvent.Type.MouseButtonPress, a, alt, left, left)
    _send_mouse(vp, QEvent.Type.MouseMove, QPoint(a.x() + 5, a.y()), alt, left)
    _send_mouse(vp, QEvent.Type.MouseMove, b, alt, left)
    _send_mouse(vp, QEvent.Type.MouseButtonRelease, b, alt, Qt.MouseButton.NoButton, left)
    moved = next(x for x in rec.doc.cell.targets if x.id == t.id)
    (ax, ay), (bx, by) = canvas.viewport_to_world(a), canvas.viewport_to_world(b)
    # Moved by exactly the pointer's travel, not rounded to the 10-unit grid.
    assert (moved.x, moved.y) == pytest.approx((t.x + bx - ax, t.y + by - ay), abs=1e-9)
    assert (moved.x % 10.0, moved.y % 10.0) != (0.0, 0.0)


def test_tooltip_explains_a_failing_target(qtbot, canvas, rec):
    rec.doc.edit(
        "far",
        replace(
            rec.doc.cell, targets=rec.doc.cell.targets + (Target("t9", "Far", 700.0, 240.0, "a"),)
        ),
    )
    text = canvas.target_tooltip("t9")
    assert "Far (Loader)" in text and "fails: beyond outer reach by" in text
    ok = canvas.target_tooltip("t1")
    assert "● feasible" in ok and "chosen" in ok


def test_vertex_menu_rename_and_kind(canvas, rec):
    doc = rec.doc
    menu = canvas.context_menu_at(-200.0, -300.0)  # a corner of the triangular aisle
    acts = {a.text(): a for a in menu.actions()}
    assert not acts["Delete vertex"].isEnabled()  # a triangle keeps its three corners
    canvas.ask_position = lambda *a, **k: (-150.0, -250.0, None)
    acts["Set vertex position…"].trigger()
    assert doc.cell.fixtures[1].outline[2] == (-150.0, -250.0)
    assert rec.pushed[-1].label == "Move vertex of Aisle"
    canvas.ask_name = lambda *a, **k: "Walkway"
    menu = canvas.context_menu_at(-500.0, -450.0)
    next(a for a in menu.actions() if a.text() == "Rename…").trigger()
    assert doc.cell.fixtures[1].name == "Walkway"
    assert rec.pushed[-1].label == "Rename fixture Aisle to Walkway"
    menu = canvas.context_menu_at(400.0, 300.0)
    kinds = next(a for a in menu.actions() if a.text() == "Kind").menu()
    next(a for a in kinds.actions() if a.text() == "guard").trigger()
    assert doc.cell.fixtures[0].kind == "guard"
    assert any(t.startswith("guard") for t in canvas.legend.texts())


def test_polygon_tool_escape_double_click_and_refusal(qtbot, canvas, rec):
    doc = rec.doc
    canvas.actions()["tool.polygon"].setChecked(True)
    for x, y in ((-800.0, 400.0), (-600.0, 400.0)):
        _click(qtbot, canvas, x, y)
    qtbot.keyClick(canvas.plot, Qt.Key.Key_Escape)
    assert len(doc.cell.fixtures) == 2 and rec.pushed == []
    messages: list[str] = []
    canvas.status_message.connect(messages.append)
    # A bow tie is refused with a reason, and drawing goes on.
    for x, y in ((-800.0, 400.0), (-600.0, 600.0), (-600.0, 400.0), (-800.0, 600.0)):
        _click(qtbot, canvas, x, y)
    qtbot.keyClick(canvas.plot, Qt.Key.Key_Return)
    assert len(doc.cell.fixtures) == 2
    assert messages[-1].startswith(
        "Cannot add the fixture: outline must be a simple polygon that does not cross"
    )
    qtbot.keyClick(canvas.plot, Qt.Key.Key_Backspace)  # drop the crossing corner
    qtbot.mouseDClick(canvas.viewport(), Qt.MouseButton.LeftButton, pos=_vp(canvas, -700.0, 700.0))
    assert len(doc.cell.fixtures) == 3
    assert doc.cell.fixtures[-1].outline == ((-800.0, 400.0), (-600.0, 600.0), (-600.0, 400.0))


def test_previews_from_elsewhere_return_to_full_labels_after_a_pause(qtbot, canvas, rec):
    doc = rec.doc
    doc.edit(
        "far",
        replace(doc.cell, targets=doc.cell.targets + (Target("t9", "Far", 700.0, 240.0, "a"),)),
    )
    arm = doc.cell.arm("a")
    doc.preview(replace(doc.cell, arms=(replace(arm, x=-30.0),)))  # e.g. a panel's spin box
    canvas.grab()
    assert _labels_of(canvas)["Far"] == "✕ beyond outer reach"
    over = math.hypot(700.0 + 30.0, 240.0) - (arm.a1 + arm.a2)
    qtbot.waitUntil(
        lambda: (
            (canvas.grab(), _labels_of(canvas).get("Far"))[1]
            == f"✕ beyond outer reach by {over:.1f} mm"
        ),
        timeout=3000,
    )
    doc.commit_preview("Move base of Loader")
    assert rec.pushed[-1].label == "Move base of Loader"


def test_snap_pitch_is_kept_per_unit_system(qtbot):
    cell = replace(_cell(), units="in")
    c = CellCanvas(Document(cell))
    qtbot.addWidget(c)
    seen = []
    c.snap_pitch_changed.connect(seen.append)
    assert c.snap_pitch() == 0.25  # a quarter inch (common practice, no source)
    c.set_snap_pitch(0.1)
    assert seen == [0.1]
    # A pitch is a length in the cell's units: a millimetre cell gets its own.
    c.document.apply(replace(c.document.cell, units="mm", arms=()))
    assert c.snap_pitch() == 10.0  # common practice, no source
    assert seen == [0.1, 10.0]
    assert c.snap_pitch("in") == 0.1
    assert c.plot.getAxis("bottom").labelText == "x (mm)"
    for bad in (0.0, -1.0, math.inf, math.nan, True):
        with pytest.raises(ValueError, match="snap pitch"):
            c.set_snap_pitch(bad)
    assert c.snap_pitches() == {"mm": 10.0, "in": 0.1}


@pytest.mark.parametrize("path", SAMPLES, ids=[p.name for p in SAMPLES])
def test_canvas_verdicts_match_the_document_after_edits(qtbot, path):
    # The document re-evaluates only changed arms; the canvas draws that evaluation, which
    # must agree with a fresh full one.
    from kinematics.evaluate import evaluate_cell

    rec = Recorder(load_cell(path))
    c = CellCanvas(rec.doc)
    qtbot.addWidget(c)
    cell = rec.doc.cell
    arm = cell.arms[0]
    rec.doc.edit("move", replace(cell, arms=(replace(arm, x=arm.x + 37.0), *cell.arms[1:])))
    if cell.fixtures:
        f = rec.doc.cell.fixtures[0]
        moved = tuple((x + 5.0, y) for x, y in f.outline)
        rec.doc.edit(
            "fx",
            replace(rec.doc.cell, fixtures=(replace(f, outline=moved), *rec.doc.cell.fixtures[1:])),
        )
    fresh = evaluate_cell(rec.doc.cell)
    for aid, ev in fresh.arms.items():
        mine = rec.doc.evaluation.arms[aid]
        assert mine.target_ids == ev.target_ids
        assert np.array_equal(mine.status, ev.status)
        assert np.array_equal(mine.chosen, ev.chosen)
        assert np.array_equal(mine.clearance, ev.clearance, equal_nan=True)
    for st in Status:
        expected = sum(int(np.count_nonzero(e.status == st)) for e in fresh.arms.values())
        assert c.targets.markers.count(int(st)) == expected


def _view_box_px(canvas):
    """The plot area in viewport pixels (where labels are drawn and clipped)."""
    return canvas.plot.mapFromScene(canvas.vb.sceneBoundingRect()).boundingRect()


@pytest.mark.parametrize("size", [(1100, 800), (900, 600)])
@pytest.mark.parametrize("path", SAMPLES, ids=[p.name for p in SAMPLES])
def test_zoom_to_fit_shows_every_failure_label_whole(qtbot, path, size):
    doc = Document(load_cell(path))
    c = CellCanvas(doc)
    qtbot.addWidget(c)
    c.resize(*size)
    c.show()
    qtbot.waitExposed(c)
    c.zoom_to_fit()
    c.grab()
    box = _view_box_px(c)
    placed = c.targets.labels.placed()
    failing = []
    for t in doc.cell.targets:
        ev = doc.evaluation.arms[t.arm]
        if not ev.feasible[ev.index(t.id)]:
            failing.append(t.name)
    assert failing  # every sample shows at least one failing target
    reasons = {name: reason for *_xy, name, reason, _lead in placed if reason}
    assert set(reasons) == set(failing)
    for x, y, w, h, name, _reason, _lead in placed:
        # The label image spans 2 px either side of its text.
        assert box.left() <= x - 2 and x + w + 2 <= box.right() + 1, name
        assert box.top() <= y and y + h <= box.bottom() + 1, name


def test_label_near_the_view_edge_moves_to_the_side_in_view(qtbot, canvas, rec):
    doc = rec.doc
    doc.edit(
        "far",
        replace(doc.cell, targets=doc.cell.targets + (Target("t9", "Far", 700.0, 240.0, "a"),)),
    )
    (x0, x1), (y0, y1) = canvas.vb.viewRange()
    # Pan so "Far" sits 20 px inside the right edge: its label cannot fit right of it.
    shift = 700.0 - (x1 - 20 * canvas._px())
    canvas.vb.setRange(xRange=(x0 + shift, x1 + shift), yRange=(y0, y1), padding=0.0)
    canvas.grab()
    box = _view_box_px(canvas)
    far = next(p for p in canvas.targets.labels.placed() if p[4] == "Far")
    x, _y, w, _h, _name, reason, lead = far
    assert reason.startswith("✕ beyond outer reach")
    assert x + w + 2 <= box.right() + 1
    assert lead is not None  # not in its usual spot, so a leader line ties it to its marker


def _square(cx: float, cy: float, half: float) -> tuple[tuple[float, float], ...]:
    return (
        (cx - half, cy - half),
        (cx + half, cy - half),
        (cx + half, cy + half),
        (cx - half, cy + half),
    )


def test_a_fixture_hit_turns_a_configuration_down_live(qtbot, canvas, rec):
    """A column on one pose's elbow: that pose is drawn as blocked, the other is chosen;
    columns on both elbows: the target fails, naming the column, and has no ghost."""
    doc = rec.doc
    arm = replace(doc.cell.arm("a"), link_radii=(30.0, 25.0))
    tx, ty = 150.0, 500.0
    # Closed-form elbow points of both configurations (law of cosines, as in the module
    # docstring's source): c2 = (r^2 - a1^2 - a2^2) / (2 a1 a2), elbow at angle t1 from the base.
    r2 = tx * tx + ty * ty
    c2 = (r2 - arm.a1**2 - arm.a2**2) / (2 * arm.a1 * arm.a2)
    poses = []
    for sign in (1.0, -1.0):
        s2 = sign * math.sqrt(1 - c2 * c2)
        t1 = math.atan2(ty, tx) - math.atan2(arm.a2 * s2, arm.a1 + arm.a2 * c2)
        poses.append(((0.0, 0.0), (arm.a1 * math.cos(t1), arm.a1 * math.sin(t1)), (tx, ty)))
    column = Fixture("c1", "Column", "column", _square(*poses[0][1], 20.0))  # no height: blocks
    doc.edit(
        "setup",
        replace(
            doc.cell,
            arms=(arm,),
            targets=(Target("tc", "Shelf", tx, ty, "a"),),
            fixtures=(*doc.cell.fixtures, column),
        ),
    )

    def links(pose):  # the two link capsules of a pose, built with shapely
        base, elbow, tool = pose
        return shapely.LineString([base, elbow]).buffer(30.0) | shapely.LineString(
            [elbow, tool]
        ).buffer(25.0)

    col = shapely.Polygon(column.outline)
    assert links(poses[0]).intersects(col) and not links(poses[1]).intersects(col)
    ev = canvas.document.evaluation.arms["a"]
    assert bool(ev.feasible[0]) and int(ev.chosen[0]) == 1  # the negative elbow
    canvas.actions()["ghosts.all"].setChecked(True)
    blocked = canvas.ghosts.items[("a", 0, "blocked")].path()
    assert blocked.elementCount() == 3  # base, elbow, tool of the positive pose
    assert canvas.ghosts.items[("a", 0, "alternative")].path().elementCount() == 0
    elbow = (blocked.elementAt(1).x, blocked.elementAt(1).y)
    assert elbow == pytest.approx(poses[0][1], abs=1e-6)
    tip = canvas.target_tooltip("tc")
    assert "● feasible" in tip and "positive elbow" in tip and "collides with Column" in tip
    # A second column on the other elbow: no configuration is left.
    other = Fixture("c2", "Post", "column", _square(*poses[1][1], 20.0))
    doc.edit("post", replace(doc.cell, fixtures=(*doc.cell.fixtures, other)))
    ev = canvas.document.evaluation.arms["a"]
    assert not bool(ev.feasible[0]) and int(ev.status[0]) == int(Status.COLLISION)
    assert canvas.targets.markers.count(int(Status.COLLISION)) == 1
    canvas.grab()
    assert _labels_of(canvas)["Shelf"].startswith("★ collides with ")
    # A target that fails only on collisions shows where: both poses as ruled-out ghosts
    # (base, elbow, tool each), nothing as chosen or as an option.
    counts = {k: it.path().elementCount() for k, it in canvas.ghosts.items.items()}
    assert counts[("a", 0, "blocked")] == counts[("a", 1, "blocked")] == 3
    assert sum(n for (_a, _c, role), n in counts.items() if role != "blocked") == 0
    assert len(canvas.collisions.contact_points()) == 2  # one contact mark per pose
    # Moving a column away (a fixture edit, no arm or target changed) frees the pose again.
    moved = replace(other, outline=tuple((x + 400.0, y) for x, y in other.outline))
    doc.edit("move post", replace(doc.cell, fixtures=(*doc.cell.fixtures[:-1], moved)))
    ev = canvas.document.evaluation.arms["a"]
    assert bool(ev.feasible[0]) and int(ev.chosen[0]) == 1


def test_position_dialog_keeps_exact_values_left_untouched(qtbot):
    from app.canvas.dialogs import PositionDialog

    dlg = PositionDialog("Position", 12.345678, -0.0004, "mm", heading=33.33333)
    qtbot.addWidget(dlg)
    assert dlg.x.text() == "12.346 mm"  # shown to three decimals
    # OK without typing: nothing moves, not even by the rounding of what is shown.
    assert dlg.values() == (12.345678, -0.0004, 33.33333)
    dlg.y.lineEdit().selectAll()
    qtbot.keyClicks(dlg.y.lineEdit(), "7.5")
    qtbot.keyClick(dlg.y.lineEdit(), Qt.Key.Key_Tab)
    assert dlg.values() == (12.345678, 7.5, 33.33333)


def test_shift_drag_pressed_on_the_base_centre_turns_without_a_jump(qtbot, canvas, rec):
    doc = rec.doc
    assert doc.cell.arm("a").heading_deg == 90.0
    vp = canvas.viewport()
    shift = Qt.KeyboardModifier.ShiftModifier
    left = Qt.MouseButton.LeftButton
    _send_mouse(vp, QEvent.Type.MouseButtonPress, _vp(canvas, 0.0, 0.0), shift, left, left)
    # First a point well away from the centre, due +x: the turn is measured from there.
    for x in (20.0, 40.0, 60.0):
        _send_mouse(vp, QEvent.Type.MouseMove, _vp(canvas, x, 0.0), shift, left)
    assert doc.cell.arm("a").heading_deg == 90.0  # no jump from where the press landed
    _send_mouse(vp, QEvent.Type.MouseMove, _vp(canvas, 0.0, 60.0), shift, left)
    # Swept a quarter turn counter-clockwise about the base: heading 90 + 90 degrees.
    assert doc.cell.arm("a").heading_deg == pytest.approx(180.0)
    _send_mouse(
        vp,
        QEvent.Type.MouseButtonRelease,
        _vp(canvas, 0.0, 60.0),
        shift,
        Qt.MouseButton.NoButton,
        left,
    )
    assert rec.pushed[-1].label == "Rotate Loader" and len(rec.pushed) == 1


@pytest.mark.parametrize("path", SAMPLES, ids=[p.name for p in SAMPLES])
def test_zoom_to_fit_in_a_narrow_canvas_still_shows_the_cell_large(qtbot, path):
    # Labels wider than a narrow plot cannot be fitted by zooming out: the cell stays big.
    doc = Document(load_cell(path))
    c = CellCanvas(doc)
    qtbot.addWidget(c)
    c.resize(420, 320)  # the legend takes most of it
    c.show()
    qtbot.waitExposed(c)
    c.zoom_to_fit()
    cell = doc.cell
    xs = [p[0] for f in cell.fixtures for p in f.outline] + [t.x for t in cell.targets]
    xs += [a.x + s * a.reach_max for a in cell.arms for s in (-1, 1)]
    ys = [p[1] for f in cell.fixtures for p in f.outline] + [t.y for t in cell.targets]
    ys += [a.y + s * a.reach_max for a in cell.arms for s in (-1, 1)]
    (vx0, vx1), (vy0, vy1) = c.vb.viewRange()
    assert vx0 <= min(xs) and max(xs) <= vx1 and vy0 <= min(ys) and max(ys) <= vy1
    # At most the zoom-out allowed for labels (1.6) over the padded 1:1 fit of the cell.
    vw, vh = c.vb.width(), c.vb.height()
    plain = max((max(xs) - min(xs)) * 1.1 / vw, (max(ys) - min(ys)) * 1.1 / vh)
    assert (vx1 - vx0) / vw <= 1.6 * plain * 1.01


def test_legend_steps_aside_in_a_narrow_canvas_and_scrolls_in_a_short_one(qtbot, canvas):
    area = canvas.legend_area
    assert area.isVisible()
    assert canvas.plot.width() + area.width() <= canvas.width()  # beside the plot, not over it
    canvas.resize(500, 800)
    QApplication.processEvents()  # the layout follows in the event loop
    assert not area.isVisible() and canvas.plot.width() == canvas.width()
    canvas.resize(1100, 800)
    assert area.isVisible()
    canvas.actions()["legend.show"].setChecked(False)
    assert not area.isVisible()
    canvas.actions()["legend.show"].setChecked(True)
    canvas.resize(1100, 200)  # shorter than the legend: it scrolls instead of being cut
    QApplication.processEvents()
    assert area.isVisible() and area.verticalScrollBar().maximum() > 0
    # A ghost that is ruled out is explained too (limits or a fixture in the way).
    assert any(t.endswith("no option here") for t in canvas.legend.texts())

"""The canvas's playback layer: arms posed at the clock's time, contacts marked."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from app.canvas import CellCanvas
from app.document import Document
from app.playback import playback_clock
from kinematics.cellfile import load_cell
from kinematics.fk import joint_points

ROOT = Path(__file__).resolve().parents[3]
ZONE = ROOT / "sample_cells" / "shared_zone_two_arm.cell.json"

pytestmark = pytest.mark.qt_log_ignore("propagateSizeHints")


def _canvas(qtbot, cell, path=None):
    doc = Document(cell, path)
    canvas = CellCanvas(doc)
    qtbot.addWidget(canvas)
    canvas.resize(900, 700)
    canvas.show()
    qtbot.waitExposed(canvas)
    return doc, canvas


def _expected_links(doc: Document, arm_id: str, t: float) -> np.ndarray:
    """Base, elbow and tool of an arm at absolute time t, from its plan alone: the cycle
    started at start_s and repeats, so the plan is at (t - start_s) mod cycle time."""
    ev = doc.evaluation.arms[arm_id]
    plan = next(p for p in ev.plans if p.cycle_time_s is not None)
    phase = (t - plan.start_s) % plan.cycle_time_s
    q, _qd = plan.at(phase)
    arm = ev.arm
    b, e, tool = joint_points(arm.a1, arm.a2, q[0], q[1], arm.x, arm.y, arm.heading_deg)
    return np.array([b, e, tool])


def test_playback_poses_the_arms_where_their_plans_say(qtbot):
    doc, canvas = _canvas(qtbot, load_cell(ZONE), ZONE)
    clock = playback_clock(doc)
    layer = canvas.playback
    assert layer.link_points("left").size == 0  # no playback view open: nothing drawn
    clock.set_active(True)
    for t in (0.0, 0.33, 0.9, 1.7, 2.4):
        clock.seek(t)
        for arm_id in ("left", "right"):
            drawn = layer.link_points(arm_id)
            assert drawn.shape == (3, 2)
            assert np.allclose(drawn, _expected_links(doc, arm_id, t), atol=1e-6)
        body = layer.body_item("right")
        assert body is not None and body.isVisible()
    clock.set_active(False)
    assert layer.link_points("left").size == 0


def test_scrubbing_to_the_contact_time_draws_the_contact_mark(qtbot, head_on):
    doc, canvas = _canvas(qtbot, head_on.cell())
    clock = playback_clock(doc)
    clock.set_active(True)
    c = clock.motion.first_contact
    assert c is not None
    assert head_on.within_one_sample(c.time_s, head_on.contact_time())
    clock.seek(0.25 * c.time_s)
    assert canvas.playback.contact_marks() == []
    clock.seek(c.time_s)
    (mark,) = canvas.playback.contact_marks()
    x, y, text = mark
    # Mirror images about x = 500 touch on that line.
    assert x == pytest.approx(head_on.D_BASES / 2, abs=0.5)
    assert f"{c.time_s:.3f} s" in text and "tool" in text
    # The legend explains the mark while the playback shows.
    assert "arms touch (large circled cross)" in canvas.legend.texts()


def test_posed_arms_wait_for_the_pause_during_a_drag(qtbot):
    doc, canvas = _canvas(qtbot, load_cell(ZONE), ZONE)
    clock = playback_clock(doc)
    clock.set_active(True)
    clock.seek(0.9)
    assert canvas.playback.link_points("left").shape == (3, 2)
    cell = doc.cell
    moved = replace(cell.arms[0], x=cell.arms[0].x - 40.0)
    doc.preview(replace(cell, arms=(moved, *cell.arms[1:])))
    assert clock.stale and canvas.playback.link_points("left").size == 0
    doc.commit_preview("Move base")
    assert not clock.stale
    drawn = canvas.playback.link_points("left")
    assert np.allclose(drawn, _expected_links(doc, "left", 0.9), atol=1e-6)
    assert drawn[0, 0] == pytest.approx(moved.x)


def test_slowest_move_marked_on_the_canvas(qtbot):
    doc, canvas = _canvas(qtbot, load_cell(ZONE), ZONE)
    playback_clock(doc).set_active(True)
    labels = canvas.playback.slowest_labels()
    for arm_id in ("left", "right"):
        plan = doc.evaluation.arms[arm_id].plans[0]
        slow = max(s.time_s for s in plan.segments)
        assert f"{arm_id}: slowest move, {slow:.3f} s" in labels

"""The timeline panel and the playback clock: curves, zone bars, words, scrubbing, playing."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from app.document import Document
from app.main_window import MainWindow
from app.panels.timeline import OUT_OF_DATE, TimelinePanel
from kinematics.cell import Arm, Cell, Sequence, Target
from kinematics.cellfile import load_cell

ROOT = Path(__file__).resolve().parents[2]
ZONE = ROOT / "sample_cells" / "shared_zone_two_arm.cell.json"
PRESS = ROOT / "sample_cells" / "press_elbow_change.cell.json"

pytestmark = pytest.mark.qt_log_ignore("propagateSizeHints")


def _panel(qtbot, cell, path=None) -> tuple[Document, TimelinePanel]:
    doc = Document(cell, path)
    panel = TimelinePanel(doc)
    qtbot.addWidget(panel)
    panel.resize(1200, 420)
    panel.show()
    qtbot.waitExposed(panel)
    return doc, panel


def _plan_at(plan, t):
    """The plan's joint angles and speeds at absolute times t (its cycle from start_s)."""
    return plan.at(np.mod(np.asarray(t) - plan.start_s, plan.cycle_time_s))


def _intersections(a, b):
    """Where two interval lists overlap (a plain double loop, merged)."""
    out = []
    for x0, x1 in a:
        for y0, y1 in b:
            lo, hi = max(x0, y0), min(x1, y1)
            if lo < hi:
                out.append((lo, hi))
    out.sort()
    merged = []
    for lo, hi in out:
        if merged and lo <= merged[-1][1]:
            merged[-1] = (merged[-1][0], max(merged[-1][1], hi))
        else:
            merged.append((lo, hi))
    return merged


def test_curves_are_the_plans_joint_angles_and_speeds(qtbot):
    doc, panel = _panel(qtbot, load_cell(ZONE), ZONE)
    h = panel.clock.horizon
    assert h == pytest.approx(doc.evaluation.interference().horizon_s)
    for k in range(panel.curve_box.count()):
        panel.curve_box.setCurrentIndex(k)
        plan = panel.selected_run().plan
        for j, name in enumerate(("q1", "q2")):
            t, q = panel.curve(name)
            _, qd = panel.curve(f"{name}dot")
            assert t[0] == 0.0 and t[-1] == pytest.approx(h)
            want_q, want_qd = _plan_at(plan, t)
            assert np.allclose(q, want_q[:, j], atol=1e-9)
            assert np.allclose(qd, want_qd[:, j], atol=1e-9)
            # Every dwell and move boundary of the run is a sample (the corners are exact).
            for s in plan.segments:
                assert np.min(np.abs(t - ((plan.start_s + s.end_s) % plan.cycle_time_s))) < 1e-9
        arm = doc.cell.arm(plan.arm)
        labels = panel.limit_labels()
        for text in (
            f"q1 min {arm.q1_limits[0]:g}°",
            f"q1 max {arm.q1_limits[1]:g}°",
            f"q2 max {arm.q2_limits[1]:g}°",
            f"q1 speed limit +{arm.joint_speed_dps[0]:g}°/s",
            f"q2 speed limit -{arm.joint_speed_dps[1]:g}°/s",
        ):
            assert text in labels


def test_zone_bars_are_the_engines_intervals_and_overlaps_are_hatched(qtbot):
    doc, panel = _panel(qtbot, load_cell(ZONE), ZONE)
    it = doc.evaluation.interference()
    assert it.zones and any(z.overlap for z in it.zones)
    for z in it.zones:
        for aid in z.arms:
            bars = [b for b in panel.bars("inside") if b.key == ("inside", z.space, z.arms, aid)]
            assert [(b.t0, b.t1) for b in bars] == [tuple(iv) for iv in z.intervals[aid]]
        over = [b for b in panel.bars("overlap") if b.key == ("overlap", z.space, z.arms)]
        want = _intersections(*(z.intervals[a] for a in z.arms))
        got = [(b.t0, b.t1) for b in over]
        assert np.allclose(np.reshape(got, (-1, 2)), np.reshape(want, (-1, 2)))
        assert bool(over) == z.overlap
    # The overlap look differs from the inside look by pattern and edge, not colour only.
    from app.panels.timeline import BAR_LOOKS

    inside, overlap = BAR_LOOKS["inside"], BAR_LOOKS["overlap"]
    assert inside[1].style() != overlap[1].style() and inside[0].style() != overlap[0].style()


def test_the_slowest_move_is_marked_on_every_repeat(qtbot):
    doc, panel = _panel(qtbot, load_cell(PRESS), PRESS)
    plan = doc.evaluation.arms["loader"].plans[0]
    times = [s.time_s for s in plan.segments]
    slow = times.index(max(times))
    bars = panel.bars("slowest")
    assert bars and {b.key for b in bars} == {("slowest", "loader", slow)}
    for b in bars:
        if 0.0 < b.t0 and b.t1 < panel.clock.horizon:
            assert b.t1 - b.t0 == pytest.approx(times[slow], abs=1e-9)


def test_words_give_cycle_time_rate_single_configuration_and_forced_changes(qtbot):
    doc, panel = _panel(qtbot, load_cell(PRESS), PRESS)
    plan = doc.evaluation.arms["loader"].plans[0]
    text = panel.summary_text()
    assert f"cycle {plan.cycle_time_s:.3f} s" in text
    assert f"{60.0 / plan.cycle_time_s:.1f} parts per minute" in text
    assert "one configuration throughout (negative elbow) " in text
    assert f"{plan.single_configuration_cycle_time_s:.3f} s" in text
    assert "changes configuration 2 times" in text
    # q1 limits that leave p only the positive and q only the negative configuration (as in
    # the plan tests): no single configuration fits, and the words say which targets force it.
    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        400,
        250,
        (-40, 40),
        (-150, 150),
        joint_speed_dps=(200, 300),
        joint_accel_dps2=(1000, 2000),
    )
    ts = (Target("p", "P", 300, 400, "a"), Target("q", "Q", 500, -100, "a"))
    cell = Cell("c", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))
    _doc, panel2 = _panel(qtbot, cell)
    assert "no single configuration fits: forced changes at p, q" in panel2.summary_text()


def test_an_arm_without_speed_data_says_which_fields_are_missing(qtbot):
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (-60, 120), (-150, 150), joint_speed_dps=(200, 300))
    ts = (Target("p", "P", 300, 400, "a"), Target("q", "Q", 500, -100, "a"))
    cell = Cell("c", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))
    _doc, panel = _panel(qtbot, cell)
    assert "A: no cycle time: missing joint_accel_dps2" in panel.summary_text()
    assert not panel.play_button.isEnabled() and panel.bars() == []


def test_dragging_the_cursor_scrubs_and_every_view_follows(qtbot):
    doc, panel = _panel(qtbot, load_cell(ZONE), ZONE)
    clock = panel.clock
    panel._cursors[1].setValue(0.8)  # as a drag of the cursor line in the angles plot
    assert clock.time == pytest.approx(0.8)
    assert panel.cursor_times() == pytest.approx([0.8] * 3)
    assert panel.slider.value() == round(0.8 / clock.horizon * panel.slider.maximum())
    assert "t = 0.800 s" in panel.readout.text()
    panel.slider.setValue(panel.slider.maximum() // 2)
    assert clock.time == pytest.approx(clock.horizon / 2, rel=1e-3)
    clock.seek(1e9)  # beyond the run: clamped to its end
    assert clock.time == pytest.approx(clock.horizon)
    panel.contact_button.click()
    assert clock.time == pytest.approx(doc.evaluation.interference().first_contact.time_s)


def test_playing_advances_time_and_hiding_stops_it(qtbot):
    _doc, panel = _panel(qtbot, load_cell(ZONE), ZONE)
    clock = panel.clock
    clock.seek(0.0)
    panel.play_button.click()
    assert clock.playing and panel.play_button.text() == "❚❚ Pause"
    qtbot.waitUntil(lambda: clock.time > 0.05, timeout=5000)
    panel.hide()
    assert not clock.playing and not clock.active
    t = clock.time
    qtbot.wait(100)
    assert clock.time == t
    clock.play()  # no view shows it: it stays paused
    assert not clock.playing


def test_step_wraps_at_the_end_of_the_run(qtbot):
    _doc, panel = _panel(qtbot, load_cell(ZONE), ZONE)
    clock = panel.clock
    h = clock.horizon
    clock.seek(h - 0.1)
    clock.step(0.25)
    assert clock.time == pytest.approx(0.15)
    with pytest.raises(ValueError, match="positive number"):
        clock.set_rate(0)


def test_out_of_date_while_a_drag_steps_then_rebuilt_at_the_pause(qtbot):
    doc, panel = _panel(qtbot, load_cell(ZONE), ZONE)
    before = panel.bars("inside")
    cell = doc.cell
    right = cell.arms[1]
    moved = replace(right, x=right.x + 60.0)
    doc.preview(replace(cell, arms=(cell.arms[0], moved)))
    assert panel.stale_label.isVisible() and panel.stale_label.text() == OUT_OF_DATE
    assert panel.bars("inside") == before  # kept until the pause, not recomputed per step
    panel.play_button.click()
    assert not panel.clock.playing  # nothing plays while the run is out of date
    doc.settle()
    assert not panel.stale_label.isVisible()
    it = doc.evaluation.interference()
    z = it.zones[-1]
    bars = [b for b in panel.bars("inside") if b.key == ("inside", z.space, z.arms, "right")]
    assert [(b.t0, b.t1) for b in bars] == [tuple(iv) for iv in z.intervals["right"]]


def test_run_is_not_computed_per_drag_step(qtbot, monkeypatch):
    from kinematics.evaluate import CellEvaluation

    calls = []
    original = CellEvaluation.interference

    def counted(self):
        calls.append(self)
        return original(self)

    monkeypatch.setattr(CellEvaluation, "interference", counted)
    doc, _panel_ = _panel(qtbot, load_cell(ZONE), ZONE)
    seen = {id(e) for e in calls}
    cell = doc.cell
    for k in range(5):
        arm = replace(cell.arms[0], x=cell.arms[0].x + 3.0 * (k + 1))
        doc.preview(replace(cell, arms=(arm, cell.arms[1])))
    assert {id(e) for e in calls} == seen  # no drag step asked for a run
    doc.settle()
    assert calls[-1] is doc.evaluation


def test_main_window_shows_the_timeline_at_a_problem_time(qtbot, head_on):
    win = MainWindow(Document(head_on.cell()), use_settings=False)
    qtbot.addWidget(win)
    win.resize(1600, 1000)
    win.show()
    qtbot.waitExposed(win)
    # moves are planned after the first paint
    qtbot.waitUntil(lambda: not win.document.unsettled, timeout=5000)
    assert not win.timeline.shown and not win.timeline.clock.active  # targets in front
    assert win.timeline_dock.toggleViewAction() in win.view_menu.actions()
    (line, t), *_ = win.problems.time_problems()
    assert line.startswith("⊗ arms L and R touch at")
    win.show_time(t)
    qtbot.waitUntil(lambda: win.timeline.shown, timeout=3000)
    assert win.timeline.clock.time == pytest.approx(t)
    assert win.canvas.playback.contact_marks()

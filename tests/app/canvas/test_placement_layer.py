"""The placement overlay: heatmap, region, best spot and tolerances as the engine gives them.

Every reference value here is the engine's own answer (kinematics.placement: score_map,
best_position, placement_tolerance, heading_tolerance, live_state) for the same cell: the
overlay must draw exactly that. The colours are our colour map
(app.placement_image.score_colours) applied to the engine's scores.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from app.document import Document
from app.main_window import MainWindow
from app.placement_image import score_colours
from kinematics import placement as pl
from kinematics.cellfile import load_cell
from kinematics.layout_keys import ScoreWeights, score_weights

REPO = Path(__file__).resolve().parents[3]
PRESS = REPO / "sample_cells" / "press_tending_variants.cell.json"

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


def _settled(qtbot, layer) -> None:
    qtbot.waitUntil(lambda: layer.best_ready() and not layer.busy, timeout=60000)


@pytest.fixture
def window(qtbot):
    win = MainWindow(Document(load_cell(PRESS), None), use_settings=False)
    win.ask_unsaved_changes = lambda: "discard"  # closing at teardown asks nothing
    qtbot.addWidget(win)
    win.resize(1400, 900)
    win.show()
    win.canvas.actions()["overlay.placement"].setChecked(True)
    _settled(qtbot, win.canvas.placement)
    yield win
    win.layout_actions.shutdown()


def _problem(win):
    return pl.placement_problem(win.document.cell, win.canvas.placement.arm_id or None)


def test_heatmap_is_the_engines_score_map_in_our_colours(window):
    layer = window.canvas.placement
    m = layer.map
    assert m is not None and m.complete
    ref = pl.score_map(_problem(window), pitch=m.pitch)
    assert np.array_equal(layer.heat_scores, ref.score, equal_nan=True)
    # The image drawn: each grid cell's colour from the engine's score, none outside the zone.
    img = layer.heat_image
    assert (img.width(), img.height()) == (len(ref.x), len(ref.y))
    ptr = img.constBits()
    px = np.frombuffer(ptr, dtype=np.uint8).reshape(img.height(), img.bytesPerLine() // 4, 4)
    px = px[:, : img.width()]
    fin = np.isfinite(ref.score)
    lo, hi = np.nanmin(ref.score), np.nanmax(ref.score)
    want = score_colours(((ref.score - lo) / (hi - lo))[fin])
    got = px[fin][:, [2, 1, 0]]  # B, G, R in memory
    assert np.array_equal(got, want)
    assert (px[~fin][:, 3] == 0).all() and (px[fin][:, 3] > 0).all()
    # The colour bar names the score and spans the map's range.
    rows = window.canvas.legend.entries()
    scale = next(e for e in rows if e.kind == "scale")
    assert "targets feasible" in scale.text
    assert scale.ticks[0][1] == str(math.ceil(lo)) and scale.ticks[-1][0] <= 1.0


def test_best_spot_is_marked_and_one_click_moves_the_base_there(window):
    layer = window.canvas.placement
    doc = window.document
    before = doc.cell
    ref = pl.best_position(_problem(window), pl.score_map(_problem(window), pitch=layer.map.pitch))
    xs, ys = layer.best_item.getData()
    assert (xs[0], ys[0]) == pytest.approx((ref.x, ref.y), abs=1e-9)
    assert layer.best_label.isVisible() and "best spot" in layer.best_label.toPlainText()
    count = window.undo_stack.count()
    act = window.layout_actions.act_best
    assert act.isEnabled()
    act.trigger()
    arm = doc.cell.arm(layer.arm_id or doc.cell.arms[0].id)
    assert (arm.x, arm.y) == pytest.approx((ref.x, ref.y), abs=1e-9)
    assert window.undo_stack.count() == count + 1
    assert "best spot" in window.undo_stack.undoText()
    window.undo_stack.undo()
    assert doc.cell == before


def test_tolerance_circle_and_heading_arc_are_the_engines(qtbot, window):
    layer = window.canvas.placement
    window.layout_actions.act_best.trigger()  # at the best spot every target is feasible
    _settled(qtbot, layer)
    p = _problem(window)
    tol = pl.placement_tolerance(p)
    ht = pl.heading_tolerance(p)
    assert tol.radius is not None and ht is not None
    rect = layer.tolerance_item.path().boundingRect()
    arm = window.document.cell.arms[0]
    assert rect.width() / 2 == pytest.approx(tol.radius, abs=1e-9)
    assert (rect.center().x(), rect.center().y()) == pytest.approx((arm.x, arm.y), abs=1e-9)
    assert layer.tolerance_item.isVisible()
    assert f"{tol.radius:.1f} mm" in layer.tolerance_label.toPlainText()
    text = layer.arc_label.toPlainText()
    assert f"−{ht[0]:.2f}°" in text and f"+{ht[1]:.2f}°" in text
    # The arc spans the heading tolerance about the base at the arm's heading.
    path = layer.arc_item.path()
    pts = np.array([[path.elementAt(i).x, path.elementAt(i).y] for i in range(path.elementCount())])
    ang = np.degrees(np.arctan2(pts[:, 1] - arm.y, pts[:, 0] - arm.x))
    rel = (ang - arm.heading_deg + 180.0) % 360.0 - 180.0
    assert rel.min() == pytest.approx(-ht[0], abs=1e-6)
    assert rel.max() == pytest.approx(ht[1], abs=1e-6)


def test_a_base_drag_follows_live_and_never_waits_for_the_worker(qtbot, window):
    layer = window.canvas.placement
    doc = window.document
    window.layout_actions.act_best.trigger()
    _settled(qtbot, layer)
    arm = doc.cell.arms[0]
    p = _problem(window)
    region = pl.placement_region(p, blocking=False)
    steps0 = layer.live_steps
    for k in range(1, 6):
        doc.preview(pl.move_base(doc.cell, arm.id, arm.x + 2.0 * k, arm.y - 1.5 * k))
        moved = doc.cell.arms[0]
        ref = pl.live_state(p, moved.x, moved.y, region=region, with_heading=False)
        assert layer.live is not None and not layer.busy  # nothing queued while stepping
        assert layer.live.all_feasible == ref.all_feasible and ref.all_feasible
        assert layer.live.tolerance_at_least == pytest.approx(ref.tolerance_at_least, abs=1e-9)
        # The circle: the exact distance to the region, which the tolerance cannot exceed.
        rect = layer.tolerance_item.path().boundingRect()
        assert (rect.center().x(), rect.center().y()) == pytest.approx((moved.x, moved.y))
        assert rect.width() / 2 == pytest.approx(ref.region_distance, abs=1e-9)
        text = layer.tolerance_label.toPlainText()
        assert f"≤ {ref.region_distance:.1f} mm" in text
        assert f"≥ {ref.tolerance_at_least:.1f} mm" in text
        assert not layer.arc_item.isVisible()  # the heading part waits for the pause
    assert layer.live_steps == steps0 + 5
    doc.commit_preview("Move base")
    _settled(qtbot, layer)
    tol = pl.placement_tolerance(_problem(window))
    assert layer.live is None
    assert layer.tolerance_item.path().boundingRect().width() / 2 == pytest.approx(tol.radius)


def test_score_weights_are_stored_in_the_cell_as_one_undo_step(qtbot, window):
    layer = window.canvas.placement
    doc = window.document
    before = doc.cell
    window.layout_actions.ask_weights = lambda w: ScoreWeights(0.0, 0.0, 2.0)
    count = window.undo_stack.count()
    window.layout_actions.edit_weights()
    assert window.undo_stack.count() == count + 1
    assert score_weights(doc.cell) == ScoreWeights(0.0, 0.0, 2.0)
    _settled(qtbot, layer)
    ref = pl.score_map(_problem(window), pitch=layer.map.pitch)
    assert ref.weights == ScoreWeights(0.0, 0.0, 2.0)
    assert np.allclose(layer.map.score, ref.score, equal_nan=True, atol=1e-12)
    window.undo_stack.undo()
    assert doc.cell == before and "placement_weights" not in doc.cell.extra


def test_a_target_drag_leaves_the_map_out_of_date_until_the_pause(qtbot, window):
    layer = window.canvas.placement
    doc = window.document
    t = doc.cell.targets[0]
    from app.interaction import edits

    doc.preview(edits.move_target(doc.cell, t.id, t.x + 30.0, t.y))
    assert not layer.best_ready() and not window.layout_actions.act_best.isEnabled()
    assert not layer.outline.isVisible() and not layer.busy  # nothing computed mid-drag
    doc.commit_preview("Move target")
    _settled(qtbot, layer)
    ref = pl.score_map(_problem(window), pitch=layer.map.pitch)
    assert np.array_equal(layer.map.score, ref.score, equal_nan=True)

"""Clearance on the canvas: colliding bodies, hit fixtures, the clearance overlays.

Outside references: shapely (GEOS) as the reference library for whether a link capsule
(its centre segment widened by the link radius) meets a fixture; the planar two-link
forward kinematics x = a1 cos t1 + a2 cos(t1 + t2), y = a1 sin t1 + a2 sin(t1 + t2)
(Spong, Hutchinson and Vidyasagar, "Robot Modeling and Control", planar elbow
manipulator; from memory), written out here independently of the engine; and the
README's 2.5-D rule (a fixture lower than the link underside less the margin is passed
over) with the sample cells' own numbers.
"""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import shapely
from PySide6.QtCore import QPoint, QPointF, Qt
from PySide6.QtWidgets import QGraphicsItem

from app.canvas import CellCanvas
from app.canvas.canvas import CLEARANCE_OVERLAYS
from app.canvas.layers.notes import place_notes
from app.document import Document
from kinematics.cellfile import load_cell
from kinematics.ik import Status

REPO = Path(__file__).resolve().parents[3]
COLUMN = REPO / "sample_cells" / "column_one_elbow.cell.json"
SHARED = REPO / "sample_cells" / "shared_zone_two_arm.cell.json"
SAMPLES = sorted((REPO / "sample_cells").glob("*.cell.json"))

pytestmark = pytest.mark.qt_log_ignore("propagateSizeHints")


class Recorder:
    """A document whose undo stack is a list."""

    def __init__(self, cell) -> None:
        self.doc = Document(cell)
        self.pushed = []
        self.doc.push = self._push

    def _push(self, edit) -> None:
        self.pushed.append(edit)
        self.doc.apply(edit.after)


def _canvas(qtbot, doc: Document, size=(1100, 800)) -> CellCanvas:
    c = CellCanvas(doc)
    qtbot.addWidget(c)
    c.resize(*size)
    c.show()
    qtbot.waitExposed(c)
    c.zoom_to_fit()
    return c


def _vp(canvas, x, y) -> QPoint:
    return canvas.world_to_viewport(x, y)


def _scene_tags(canvas, prefix: str) -> list[str]:
    tags = (QGraphicsItem.data(it, 0) for it in canvas.plot.scene().items())
    return sorted(t for t in tags if isinstance(t, str) and t.startswith(prefix))


def _labels_of(canvas) -> dict[str, str]:
    return {name: reason for *_xy, name, reason, _lead in canvas.targets.labels.placed()}


def _pose(arm, q1: float, q2: float):
    """Base, elbow and tool point by the planar two-link forward kinematics."""
    t1 = math.radians(arm.heading_deg + q1)
    t12 = t1 + math.radians(q2)
    elbow = (arm.x + arm.a1 * math.cos(t1), arm.y + arm.a1 * math.sin(t1))
    tool = (elbow[0] + arm.a2 * math.cos(t12), elbow[1] + arm.a2 * math.sin(t12))
    return (arm.x, arm.y), elbow, tool


def _links(arm, q1: float, q2: float) -> dict[str, shapely.Geometry]:
    """The two link capsules, as shapely buffers of the centre segments."""
    base, elbow, tool = _pose(arm, q1, q2)
    r1, r2 = arm.link_radii
    return {
        "link 1": shapely.LineString([base, elbow]).buffer(r1),
        "link 2": shapely.LineString([elbow, tool]).buffer(r2),
    }


def test_column_cell_flags_the_negative_pose_link_1_at_the_nest(qtbot):
    doc = Document(load_cell(COLUMN))
    c = _canvas(qtbot, doc)
    cell = doc.cell
    arm = cell.arms[0]
    column = next(f for f in cell.fixtures if f.id == "column")
    ev = doc.evaluation.arms["arm"]
    i = ev.index("nest")
    q_neg = ev.ik.q_deg[i, 1]
    # Reference: shapely finds the negative pose's link 1 in the column, the positive clear.
    col = shapely.Polygon(column.outline)
    assert _links(arm, *q_neg)["link 1"].intersects(col)
    assert not any(g.intersects(col) for g in _links(arm, *ev.ik.q_deg[i, 0]).values())
    assert int(ev.chosen[i]) == 0 and bool(ev.collides[i, 1])
    assert ev.blocked_by(i, 1).name == "Building column C4" and ev.blocked_body(i, 1) == "link 1"
    # The colliding body is drawn at its true size: its path covers the part of link 1's
    # capsule inside the column, and a contact mark sits in or on the column.
    overlap = _links(arm, *q_neg)["link 1"].intersection(col)
    mid = overlap.representative_point()
    # The nest is feasible in its positive configuration: the negative one's collision is
    # drawn as a configuration the target does not use, apart from those that make a
    # target fail (the spare nest's).
    items = c.collisions.body_items()
    path = items[("arm", "other")].path()
    assert path.contains(QPointF(mid.x, mid.y))
    assert not items[("arm", "fails")].path().contains(QPointF(mid.x, mid.y))
    contacts = c.collisions.contact_points()
    assert any(col.buffer(1e-6).contains(shapely.Point(p)) for p in contacts)
    # The column is marked hit (not by colour alone: a dashed edge and a note naming the
    # target, the configuration and the body).
    edges = c.collisions.hit_item.path()
    cx, cy = col.centroid.coords[0]
    assert edges.contains(QPointF(cx, cy))
    table = shapely.Polygon(next(f for f in cell.fixtures if f.id == "nest_table").outline)
    tx, ty = table.representative_point().coords[0]
    assert not edges.contains(QPointF(tx, ty)) or col.contains(shapely.Point(tx, ty))
    (label,) = c.collisions.label_texts().values()
    lines = label.split("\n")
    assert lines[0].startswith("hit by Nest loader at Spare nest (")
    assert "other configuration: Nest (negative elbow, link 1)" in lines
    assert c.notes.tags("collision.label:") == ["collision.label:column"]
    # The failing target says what it hits.
    c.grab()
    assert _labels_of(c)["Spare nest"].startswith("★ collides with Building column C4 (")
    assert "collides with Building column C4 (link 1)" in c.target_tooltip("nest")
    legend = c.legend.texts()
    assert "contact point (circled cross)" in legend
    assert "fixture hit (thick dashed edge)" in legend


def test_dragging_the_column_onto_a_clear_targets_links_fails_it_live_and_esc_restores(qtbot):
    rec = Recorder(load_cell(COLUMN))
    doc = rec.doc
    c = _canvas(qtbot, doc)
    cell0 = doc.cell
    arm = cell0.arms[0]
    ev = doc.evaluation.arms["arm"]
    i = ev.index("pick")
    assert int(ev.status[i]) == int(Status.OK) and not ev.collides[i].any()
    # Aim the column's centre at 80 % along link 2 of the chosen pose.
    q = ev.ik.q_deg[i, int(ev.chosen[i])]
    _base, elbow, tool = _pose(arm, *q)
    aim = (elbow[0] + 0.8 * (tool[0] - elbow[0]), elbow[1] + 0.8 * (tool[1] - elbow[1]))
    column = next(f for f in cell0.fixtures if f.id == "column")
    start = shapely.Polygon(column.outline).centroid
    vp = c.viewport()
    a, b = _vp(c, start.x, start.y), _vp(c, *aim)
    qtbot.mousePress(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, a)
    for k in range(1, 9):
        f = k / 8
        qtbot.mouseMove(
            vp, QPoint(round(a.x() + f * (b.x() - a.x())), round(a.y() + f * (b.y() - a.y())))
        )
    assert doc.previewing
    moved = next(f for f in doc.cell.fixtures if f.id == "column")
    col = shapely.Polygon(moved.outline)
    # Reference: shapely puts link 2 of both configurations into the moved column.
    for k in (0, 1):
        assert _links(arm, *ev.ik.q_deg[i, k])["link 2"].intersects(col)
    live = doc.evaluation.arms["arm"]
    assert int(live.status[i]) == int(Status.COLLISION)
    assert live.reason(i) == "collides with Building column C4"
    assert c.targets.markers.count(int(Status.COLLISION)) >= 1
    assert "column" in c.collisions.label_texts()
    assert np.array_equal(live.status, doc.evaluation.arms["arm"].status)
    # Esc: the document is exactly as before and the target clear again.
    qtbot.keyClick(c.plot, Qt.Key.Key_Escape)
    assert doc.cell is cell0 and not doc.previewing
    back = doc.evaluation.arms["arm"]
    assert int(back.status[i]) == int(Status.OK)
    assert rec.pushed == []


@pytest.mark.parametrize("key", CLEARANCE_OVERLAYS)
def test_each_clearance_overlay_toggle_adds_and_removes_its_items(qtbot, key):
    c = _canvas(qtbot, Document(load_cell(SHARED)))
    c.actions()["overlay.passes_over"]  # every kind has an action
    act = c.actions()[f"overlay.{key}"]
    act.setChecked(False)
    assert c.overlay_items(key) == []
    assert _scene_tags(c, f"overlay.{key}:") == [] or key == "shared_targets"
    act.setChecked(True)
    items = c.overlay_items(key)
    assert items and all(it.isVisible() for it in items)
    act.setChecked(False)
    assert c.overlay_items(key) == []


def test_spaces_are_computed_only_while_shown_and_follow_a_base_move(qtbot):
    rec = Recorder(load_cell(COLUMN))
    doc = rec.doc
    c = _canvas(qtbot, doc)
    store = doc.evaluation.store
    assert store.local_spaces == {}  # nothing computed while the overlays are off
    c.actions()["overlay.space.restricted"].setChecked(True)
    assert len(store.local_spaces) == 1
    (item,) = c.overlay_items("space.restricted")
    rings = item.data(2)
    arm = doc.cell.arms[0]
    r0 = item.mapRectToParent(item.path().boundingRect())
    # Reference (annulus law plus the bodies): with q1 over +-140 the space reaches out to
    # a1 + a2 + the tool's radius on the far side of the heading (+y here).
    reach = arm.a1 + arm.a2 + 28.0
    assert r0.bottom() == pytest.approx(arm.y + reach, abs=0.01 * reach)
    # A base drag step moves the drawn space rigidly: the same engine rings, moved.
    doc.preview(replace(doc.cell, arms=(replace(arm, x=arm.x + 120.0, y=arm.y - 40.0),)))
    assert item.data(2) is rings and len(store.local_spaces) == 1
    r1 = item.mapRectToParent(item.path().boundingRect())
    assert (r1.center().x() - r0.center().x(), r1.center().y() - r0.center().y()) == pytest.approx(
        (120.0, -40.0), abs=1e-6
    )
    doc.cancel_preview()
    # Where the maximum space comes from is in the legend (no mechanical range in this cell).
    c.actions()["overlay.space.maximum"].setChecked(True)
    assert any(t == "maximum space: joint limits" for t in c.legend.texts())
    mech = replace(arm, extra={**arm.extra, "mechanical_limits_deg": [[-170, 170], [-150, 150]]})
    doc.apply(replace(doc.cell, arms=(mech,)))
    assert any(t == "maximum space: mechanical range" for t in c.legend.texts())


def test_swept_areas_wait_for_a_pause_and_mark_a_colliding_move(qtbot):
    rec = Recorder(load_cell(COLUMN))
    doc = rec.doc
    c = _canvas(qtbot, doc)
    c.actions()["overlay.swept"].setChecked(True)
    items = c.overlay_items("swept")
    assert len(items) == 2  # pick -> nest and back
    # The swept area covers both ends of the move (the tool passes over its targets).
    for it in items:
        for tid in ("pick", "nest"):
            t = next(t for t in doc.cell.targets if t.id == tid)
            assert it.path().contains(QPointF(t.x, t.y))
    # A base drag step changes every joint path: the stale areas hide until the pause.
    arm = doc.cell.arms[0]
    doc.preview(replace(doc.cell, arms=(replace(arm, x=arm.x + 30.0),)))
    assert c.overlay_items("swept") == []
    qtbot.waitUntil(lambda: len(c.overlay_items("swept")) == 2, timeout=3000)
    doc.cancel_preview()
    # A post across the path: the move is drawn as colliding, with a note and a contact.
    from kinematics.cell import Fixture

    post = Fixture(
        "post", "Post P1", "column", ((280, 330), (310, 330), (310, 360), (280, 360)), 4000.0
    )
    doc.edit("post", replace(doc.cell, fixtures=doc.cell.fixtures + (post,)))
    looks = sorted(it.data(1) for it in c.overlay_items("swept") if it.data(1))
    assert looks == ["swept.collides", "swept.collides"]
    notes = c.notes.texts("overlay.swept.note")
    (note,) = notes  # one note for both
    assert note.startswith("✕ moves Infeed pick ⇄ Nest: collides with Post P1 (")
    assert any("on moves pick ⇄ nest" in t for t in c.collisions.label_texts().values())


def test_shared_zone_and_targets_several_arms_reach(qtbot):
    doc = Document(load_cell(SHARED))
    c = _canvas(qtbot, doc)
    c.actions()["overlay.shared"].setChecked(True)
    zones = {it.data(0): it for it in c.overlay_items("shared") if hasattr(it, "path")}
    assert "overlay.shared:left+right:restricted" in zones
    restricted = zones["overlay.shared:left+right:restricted"].path()
    # Reference (annulus law): the handover point is 475 from both bases, inside both reach
    # circles (350 + 250 = 600); the left base is 950 from the right base, beyond its reach.
    assert restricted.contains(QPointF(475.0, 0.0))
    assert not restricted.contains(QPointF(0.0, 0.0))
    notes = c.notes.texts("overlay.shared.note")
    assert notes and all(t.startswith("shared zone: interlock needed") for t in notes)
    assert "shared zone: interlock needed" in c.legend.texts()
    # Targets both arms reach (on by default) are ringed: the two handover targets.
    assert set(c.spaces.shared_ids) == {"handover_put", "handover_take"}
    for t in doc.cell.targets:
        if t.id.startswith("handover"):
            for a in doc.cell.arms:
                assert math.hypot(t.x - a.x, t.y - a.y) <= a.a1 + a.a2


def test_fixtures_passed_over_follow_the_height_rule(qtbot):
    doc = Document(load_cell(COLUMN))
    c = _canvas(qtbot, doc)
    c.actions()["overlay.passes_over"].setChecked(True)
    tags = _scene_tags(c, "overlay.passes_over:")
    # Link underside 800, margin 0: the 720 table and the 760 conveyor are passed over; the
    # 4000 column and the 1800 guard block (README, 2.5-D rule).
    arm = doc.cell.arms[0]
    expected = sorted(
        f"overlay.passes_over:{f.id}"
        for f in doc.cell.fixtures
        if f.height is not None and f.height < arm.link_underside_height
    )
    assert tags == expected == ["overlay.passes_over:infeed", "overlay.passes_over:nest_table"]
    notes = c.notes.texts("overlay.passes_over.note")
    assert any("height 720 mm" in t and "underside 800" in t for t in notes)


@pytest.mark.parametrize("path", SAMPLES, ids=[p.name for p in SAMPLES])
def test_the_incremental_evaluation_equals_a_fresh_one_after_edits(qtbot, path):
    # The document re-evaluates only the arms a change touches and the canvas draws that
    # evaluation: after every kind of edit it must equal a fresh full evaluation.
    from kinematics.evaluate import evaluate_cell

    rec = Recorder(load_cell(path))
    doc = rec.doc
    c = CellCanvas(doc)
    qtbot.addWidget(c)

    def agree():
        # While a drag steps the sequences keep the one-configuration rule (plans wait for
        # the pause); settled, the window's evaluation is check's.
        fresh = evaluate_cell(doc.cell, plans=not doc.unsettled)
        for aid, ev in fresh.arms.items():
            mine = doc.evaluation.arms[aid]
            assert mine.target_ids == ev.target_ids
            for name in ("status", "chosen", "feasible", "collides"):
                assert np.array_equal(getattr(mine, name), getattr(ev, name)), name
            assert np.array_equal(mine.clearance, ev.clearance, equal_nan=True)
            assert [f.id for f in mine.fixtures] == [f.id for f in ev.fixtures]
        drawn = sum(c.targets.markers.count(int(st)) for st in Status)
        assert drawn == len(doc.cell.targets)

    agree()
    cell = doc.cell
    # Every fixture in turn slid onto the first target, as drag steps, then cancelled.
    t = cell.targets[0]
    for f in cell.fixtures:
        cx, cy = shapely.Polygon(f.outline).centroid.coords[0]
        moved = replace(f, outline=tuple((x + t.x - cx, y + t.y - cy) for x, y in f.outline))
        doc.preview(
            replace(doc.cell, fixtures=tuple(moved if g.id == f.id else g for g in cell.fixtures))
        )
        agree()
    doc.cancel_preview()
    assert not doc.unsettled and doc.evaluation.planned
    agree()
    arm = cell.arms[-1]
    doc.edit(
        "turn",
        replace(
            doc.cell, arms=(*doc.cell.arms[:-1], replace(arm, heading_deg=arm.heading_deg + 25.0))
        ),
    )
    agree()
    doc.edit("margin", replace(doc.cell, extra={**doc.cell.extra, "clearance_margin": 100.0}))
    agree()


def test_note_placement_keeps_clear_of_markers_and_each_other():
    # Two notes on the same box: the first goes above, the second below; a marker above a
    # third box pushes its note below.
    spots = place_notes(
        [(100, 100, 140, 120), (100, 100, 140, 120), (300, 100, 340, 120)],
        [(60, 14), (60, 14), (60, 14)],
        [(290, 70, 320, 98)],
        (0, 0, 800, 600),
    )
    assert spots == [(100.0, 82.0), (100.0, 124.0), (300.0, 124.0)]


@pytest.mark.parametrize("path", [COLUMN, SHARED], ids=["column", "shared"])
def test_notes_sit_whole_in_the_plot_area_and_apart(qtbot, path):
    c = _canvas(qtbot, Document(load_cell(path)), size=(1000, 700))
    for key in CLEARANCE_OVERLAYS:
        c.actions()[f"overlay.{key}"].setChecked(True)
    c.grab()  # target labels are laid out when painted
    c.notes.layout()
    left, top, right, bottom = c.note_view()
    rects = list(c.notes.rects().values())
    assert rects
    for x0, y0, x1, y1 in rects:
        assert left <= x0 and x1 <= right and top <= y0 and y1 <= bottom
    for i, a in enumerate(rects):
        for b in rects[i + 1 :]:
            assert min(a[2], b[2]) <= max(a[0], b[0]) or min(a[3], b[3]) <= max(a[1], b[1])


def _drawn_area(item) -> float:
    """Area of the engine rings an overlay item draws, placed by the item's transform
    (shoelace sum over the rings: shells counter-clockwise, holes clockwise)."""
    rings, tr = item.data(2), item.transform()
    xy = rings.xy
    x = tr.m11() * xy[:, 0] + tr.m21() * xy[:, 1] + tr.dx()
    y = tr.m12() * xy[:, 0] + tr.m22() * xy[:, 1] + tr.dy()
    total, start = 0.0, 0
    for end in rings.ends.tolist():
        rx, ry = x[start:end], y[start:end]
        total += 0.5 * float(np.dot(rx[:-1], ry[1:]) - np.dot(rx[1:], ry[:-1]))
        start = end
    return abs(total)


@pytest.mark.parametrize("path", SAMPLES, ids=[p.name for p in SAMPLES])
def test_every_overlay_area_equals_the_check_report(qtbot, path, capsys):
    # The window draws exactly the engine's polygons: each overlay's area equals the figure
    # `check --json` prints for it (to 1e-9 relative), and the reach annulus the closed form
    # pi ((a1 + a2)^2 - (a1 - a2)^2) (annulus law; check-values.md, standard closed form).
    import json

    from app.cli import main

    main(["check", str(path), "--json"])
    report = json.loads(capsys.readouterr().out)
    c = _canvas(qtbot, Document(load_cell(path)))
    for key in (
        "annulus",
        "both",
        "space.maximum",
        "space.restricted",
        "space.operating",
        "shared",
    ):
        c.actions()[f"overlay.{key}"].setChecked(True)
    arms = {a["id"]: a for a in report["arms"]}
    cell = c.document.cell
    checked = 0
    for arm in cell.arms:
        figures = {
            "both": arms[arm.id]["both_elbows_area"],
            "space.maximum": arms[arm.id]["spaces"]["maximum_area"],
            "space.restricted": arms[arm.id]["spaces"]["restricted_area"],
            "space.operating": arms[arm.id]["spaces"]["operating_area"],
        }
        for key, figure in figures.items():
            items = [it for it in c.overlay_items(key) if it.data(0).endswith(f":{arm.id}")]
            if figure is None:
                assert items == []
                continue
            (item,) = items
            # The report rounds areas to 3 decimals.
            assert _drawn_area(item) == pytest.approx(figure, rel=1e-9, abs=5e-4), (arm.id, key)
            checked += 1
        (ring,) = [it for it in c.overlay_items("annulus") if it.data(0).endswith(f":{arm.id}")]
        exact = math.pi * ((arm.a1 + arm.a2) ** 2 - (arm.a1 - arm.a2) ** 2)
        assert _drawn_area(ring) == pytest.approx(exact, rel=1e-6)
    drawn = {it.data(0): it for it in c.overlay_items("shared")}
    assert len(drawn) == len(report["shared_zones"])
    for z in report["shared_zones"]:
        item = drawn[f"overlay.shared:{z['arms'][0]}+{z['arms'][1]}:{z['space']}"]
        assert _drawn_area(item) == pytest.approx(z["area"], rel=1e-9, abs=5e-4)
        checked += 1
    assert checked >= 3 * len(cell.arms)

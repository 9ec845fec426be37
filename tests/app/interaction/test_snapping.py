"""Snapping, outline checks, measuring, picking and canvas edits, without Qt."""

from __future__ import annotations

import math

import pytest
from shapely.geometry import Polygon

from app.interaction import edits
from app.interaction.picking import pick, pick_target
from app.interaction.snapping import (
    fixture_anchors,
    may_move_vertex,
    measure,
    outline_problem,
    rectangle_outline,
    snap_angle,
    snap_point,
)
from kinematics.cell import Arm, Cell, Fixture, Sequence, Target

SQUARE = Fixture("f1", "Bench", "table", ((0.0, 0.0), (100.0, 0.0), (100.0, 60.0), (0.0, 60.0)))


def _cell() -> Cell:
    arm = Arm("a", "Loader", -300.0, 0.0, 0.0, 400.0, 250.0, (-150, 150), (-140, 140))
    return Cell(
        "Test",
        arms=(arm,),
        fixtures=(SQUARE,),
        targets=(Target("t1", "P1", 50.0, 30.0, "a"), Target("t2", "P2", 200.0, 0.0, "a")),
        sequences=(Sequence("a", ("t1", "t2")),),
    )


def test_grid_snap_rounds_to_nearest_multiple_of_pitch():
    s = snap_point(23.0, -17.6, enabled=True, pitch=5.0)
    assert (s.x, s.y, s.kind) == (25.0, -20.0, "grid")
    s = snap_point(0.26, 0.74, enabled=True, pitch=0.5)
    assert (s.x, s.y) == (0.5, 0.5)


def test_grid_snap_never_gives_negative_zero():
    s = snap_point(-1.0, -0.2, enabled=True, pitch=10.0)
    assert math.copysign(1.0, s.x) == 1.0 and math.copysign(1.0, s.y) == 1.0


def test_disabled_snapping_returns_point_unchanged():
    anchors = fixture_anchors([SQUARE])
    s = snap_point(100.3, 0.2, enabled=False, pitch=10.0, anchors=anchors, radius=5.0)
    assert (s.x, s.y, s.kind) == (100.3, 0.2, "none")


def test_vertex_within_radius_wins_over_grid():
    anchors = fixture_anchors([SQUARE])
    s = snap_point(103.0, 58.0, enabled=True, pitch=25.0, anchors=anchors, radius=5.0)
    assert (s.x, s.y, s.kind, s.source) == (100.0, 60.0, "vertex", "f1")


def test_edge_midpoint_snaps_and_far_anchor_does_not():
    anchors = fixture_anchors([SQUARE])
    s = snap_point(51.0, 1.5, enabled=True, pitch=7.0, anchors=anchors, radius=3.0)
    assert (s.x, s.y, s.kind) == (50.0, 0.0, "midpoint")
    # 4 units away with a radius of 3: the grid decides instead.
    s = snap_point(54.0, 0.0, enabled=True, pitch=7.0, anchors=anchors, radius=3.0)
    assert (s.x, s.y, s.kind) == (56.0, 0.0, "grid")


def test_anchors_exclude_the_dragged_fixture():
    other = Fixture("f2", "Post", "column", ((200.0, 0.0), (210.0, 0.0), (210.0, 10.0)))
    anchors = fixture_anchors([SQUARE, other], exclude="f1")
    assert set(anchors.sources) == {"f2"}
    # 3 vertices + 3 closing-edge midpoints.
    assert anchors.kinds.count("vertex") == 3 and anchors.kinds.count("midpoint") == 3


def test_snap_angle_steps_and_wraps():
    assert snap_angle(93.7, enabled=True, step=5.0) == 95.0
    assert snap_angle(182.0, enabled=True, step=5.0) == 180.0
    assert snap_angle(190.0, enabled=False) == -170.0
    assert snap_angle(-180.0, enabled=False) == 180.0


def test_measure_matches_pythagoras_and_atan2():
    # Distance formula (Pythagoras) and the 3-4-5 right triangle; direction by atan2.
    d, a = measure((10.0, 20.0), (13.0, 24.0))
    assert d == pytest.approx(5.0)
    assert a == pytest.approx(math.degrees(math.atan(4.0 / 3.0)))
    d, a = measure((0.0, 0.0), (-2.0, 0.0))
    assert (d, a) == (2.0, 180.0)


def test_outline_problem_agrees_with_shapely_validity():
    bowtie = [(0, 0), (10, 10), (10, 0), (0, 10)]
    # One wording with the cell file: the problem says where it crosses.
    assert outline_problem(bowtie).startswith("outline must be a simple polygon")
    assert "(Self-intersection at (5, 5))" in outline_problem(bowtie)
    assert not Polygon(bowtie).is_valid  # reference: shapely's OGC validity
    assert outline_problem([(0, 0), (5, 0)]) == "outline must have at least 3 distinct points"
    assert outline_problem([(0, 0), (5, 0), (10, 0)]) != ""  # collinear: no area
    assert outline_problem(SQUARE.outline) == ""


def test_vertex_move_that_would_cross_the_outline_is_refused():
    assert may_move_vertex(SQUARE.outline, 2, (120.0, 80.0))
    # Corner 2 dragged below the bottom edge: the new edge to corner 3 crosses it.
    assert not may_move_vertex(SQUARE.outline, 2, (50.0, -30.0))


def test_rectangle_outline_from_any_two_corners():
    r = rectangle_outline((10.0, 5.0), (0.0, 25.0))
    assert r == ((0.0, 5.0), (10.0, 5.0), (10.0, 25.0), (0.0, 25.0))
    assert Polygon(r).area == pytest.approx(200.0)
    assert Polygon(r).exterior.is_ccw


def test_pick_priority_target_over_fixture_and_vertex():
    cell = _cell()
    assert pick(cell, 51.0, 31.0, 3.0).kind == "target"
    hit = pick(cell, 99.0, 59.0, 3.0)
    assert (hit.kind, hit.id, hit.index) == ("vertex", "f1", 2)
    assert pick(cell, 20.0, 20.0, 3.0).kind == "fixture"
    assert pick(cell, -300.0, 1.0, 3.0).kind == "base"
    assert pick(cell, 500.0, 500.0, 3.0) is None
    assert pick(cell, 0, 0, 1.0, handles={"a": (0.5, 0.5)}).kind == "handle"
    assert pick_target(cell, 200.0, 2.9, 3.0) == "t2"


def test_delete_removes_targets_from_sequences_and_keeps_arms():
    cell = _cell()
    after = edits.delete_items(cell, ["t1", "f1", "a"])
    assert [t.id for t in after.targets] == ["t2"]
    assert after.fixtures == ()
    assert [a.id for a in after.arms] == ["a"]
    assert after.sequences[0].targets == ("t2",)
    assert edits.delete_label(cell, ["t1"]) == "Delete target P1"
    assert edits.delete_label(cell, ["t1", "f1"]) == "Delete 2 items"


def test_new_items_get_fresh_ids_and_names():
    cell = _cell()
    cell2, t = edits.add_target(cell, 1.0, 2.0, "a")
    assert t.id not in {x.id for x in cell.targets} and t.name == "Target 1"
    cell3, f = edits.add_fixture(cell2, rectangle_outline((0, 0), (1, 1)), "guard")
    assert f.id not in {"f1", "a", "t1", "t2", t.id} and f.name == "Guard 1"
    assert cell3.fixtures[-1].outline[0] == (0.0, 0.0)


def test_translate_fixture_starts_from_the_drag_start_state():
    cell = _cell()
    moved = edits.translate_fixture(cell, SQUARE, 5.0, -5.0)
    assert moved.fixtures[0].outline[0] == (5.0, -5.0)
    # Same start state, larger offset: no accumulation across drag steps.
    moved = edits.translate_fixture(moved, SQUARE, 10.0, 0.0)
    assert moved.fixtures[0].outline[0] == (10.0, 0.0)

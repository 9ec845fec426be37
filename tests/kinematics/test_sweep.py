"""Moves between targets: joint paths, sampling bound, clearance along a move, swept area."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely

from kinematics.bodies import ArmBodies, arm_bodies, frames
from kinematics.cell import Arm, Cell, Fixture, Sequence, Target
from kinematics.clearance import FixtureSet
from kinematics.evaluate import evaluate_cell
from kinematics.ik import solve_arm
from kinematics.sweep import (
    MIN_TOL_FRACTION,
    SAMPLE_FRACTION,
    JointPath,
    cell_moves,
    joint_path,
    point_speed,
    sample_count,
    sweep_move,
    swept_shapes,
)

ARM = Arm(
    "a",
    "A",
    0,
    0,
    0,
    400,
    250,
    (-170, 170),
    (-150, 150),
    link_radii=(25, 20),
    extra={"tool_body": {"radius": 30}},
)
# Found by a search over a grid of columns and target pairs: both ends clear the column in
# both configurations, but only the positive configuration's move passes it.
COLUMN = Fixture("col", "Column C1", "column", ((120, 270), (180, 270), (180, 330), (120, 330)))


@pytest.mark.parametrize("D", [0.3, math.pi / 2, math.pi, 5.0])
def test_swept_area_of_tool_disc_under_q1_rotation(D):
    # Derived (no source): a disc of radius p whose centre turns by D about a point at
    # distance R > p covers an annular sector 2*D*R*p plus two end half-discs pi*p^2
    # (while the end caps do not overlap, i.e. D well below 2*pi).
    R, p = 500.0, 25.0
    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        300,
        200,
        (-360, 360),
        (-150, 150),
        link_radii=(10, 10),
        extra={"tool_body": {"radius": p}},
    )
    path = JointPath((0.0, 0.0), (math.degrees(D), 0.0), False, True)
    area = swept_shapes(arm_bodies(arm), path)["tool"].area
    assert area == pytest.approx(2 * D * R * p + math.pi * p * p, rel=1e-4)


def test_full_turn_sweeps_an_annulus():
    # Derived: a full turn covers the annulus pi*((R+p)^2 - (R-p)^2) = 4*pi*R*p.
    R, p = 500.0, 25.0
    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        300,
        200,
        (-360, 360),
        (-150, 150),
        link_radii=(10, 10),
        extra={"tool_body": {"radius": p}},
    )
    path = JointPath((-180.0, 0.0), (180.0, 0.0), False, True)
    area = swept_shapes(arm_bodies(arm), path)["tool"].area
    assert area == pytest.approx(4 * math.pi * R * p, rel=1e-4)


def body_points(arm, q, ab):
    """Extreme points of every body at poses q, straight from the joint formula."""
    origin, angle = frames(arm, q)
    pts = []
    circle = np.linspace(0, 2 * np.pi, 16, endpoint=False)
    for body in ab.bodies:
        o, t = origin[:, body.frame], angle[:, body.frame]
        for end in (body.a, body.b):
            for c in circle:
                lx = end[0] + body.radius * math.cos(c)
                ly = end[1] + body.radius * math.sin(c)
                pts.append(
                    o
                    + np.stack(
                        [np.cos(t) * lx - np.sin(t) * ly, np.sin(t) * lx + np.cos(t) * ly], axis=-1
                    )
                )
    return np.stack(pts, axis=1)


@pytest.mark.parametrize("delta", [(120.0, 0.0), (0.0, -200.0), (-90.0, 150.0), (35.0, 35.0)])
def test_sampling_bound_holds(delta):
    # No point of any body moves more than a tenth of the smallest link radius between
    # consecutive samples (displacements measured with the joint formula directly).
    ab = arm_bodies(ARM)
    n = sample_count(ab, delta)
    q0 = np.array([-20.0, 60.0])
    s = np.linspace(0, 1, n + 1)[:, None]
    pts = body_points(ARM, q0 + s * np.asarray(delta), ab)
    step = np.max(np.hypot(*np.moveaxis(np.diff(pts, axis=0), -1, 0)))
    assert step <= SAMPLE_FRACTION * ab.min_link_radius
    assert step > 0.5 * SAMPLE_FRACTION * ab.min_link_radius  # and not wastefully fine


def test_configuration_change_goes_through_stretch_only_within_q2_limits():
    p = joint_path(ARM, (10.0, 60.0), (40.0, -60.0))
    assert p.allowed and p.changes_configuration
    q2 = p.at(np.linspace(0, 1, 101))[:, 1]
    assert q2.min() >= -150 and q2.max() <= 150 and np.any(np.isclose(q2, 0.0))
    stiff = Arm("b", "B", 0, 0, 0, 400, 250, (-170, 170), (15, 150))
    p = joint_path(stiff, (10.0, 60.0), (40.0, -60.0))
    assert not p.allowed and "full stretch" in p.reason
    # Same configuration: no stretch crossing.
    p = joint_path(ARM, (10.0, 60.0), (40.0, 120.0))
    assert p.allowed and not p.changes_configuration


def test_path_never_folds_through_180():
    # q2 limits allow 190 (= -170): a move between q2 = 170 and q2 = -170 must go back
    # through stretch rather than fold through 180.
    wide = Arm("w", "W", 0, 0, 0, 400, 250, (-170, 170), (-190, 190))
    p = joint_path(wide, (0.0, 170.0), (0.0, -170.0))
    assert p.allowed and p.changes_configuration
    q2 = p.at(np.linspace(0, 1, 1001))[:, 1]
    assert np.all(np.abs(q2) <= 170 + 1e-9)


def test_q1_ends_at_nearest_representative_within_limits():
    multi = Arm("m", "M", 0, 0, 0, 400, 250, (-300, 300), (-150, 150))
    p = joint_path(multi, (170.0, 30.0), (-170.0, 30.0))
    assert p.q_to[0] == pytest.approx(190.0)  # 20 degrees on, not 340 back


def sampled_reference(ab, path, column, n=6000):
    """Clearance along a path from shapely buffers at dense samples (reference library)."""
    g = shapely.Polygon(column.outline)
    s = np.linspace(0, 1, n + 1)
    d = []
    for q in path.at(s):
        cores = shapes_exact(ab, q)
        d.append(min(shapely.distance(c, g) - r for c, r in cores))
    return s, np.array(d)


def shapes_exact(ab, q):
    arm = ab.arm
    t1 = math.radians(arm.heading_deg + q[0])
    t12 = t1 + math.radians(q[1])
    e = np.array([arm.x, arm.y]) + arm.a1 * np.array([math.cos(t1), math.sin(t1)])
    t = e + arm.a2 * np.array([math.cos(t12), math.sin(t12)])
    return [
        (shapely.LineString([(arm.x, arm.y), e]), ab.link_radii[0]),
        (shapely.LineString([e, t]), ab.link_radii[1]),
        (shapely.Point(t), 30.0),
    ]


def two_targets():
    ik = solve_arm(ARM, [-500.0, -250.0], [300.0, 50.0])
    return ik.q_deg[0], ik.q_deg[1]


def test_move_clears_column_in_one_configuration_and_hits_it_in_the_other():
    ab = arm_bodies(ARM)
    fs = FixtureSet.of([COLUMN])
    qa, qb = two_targets()
    results = {}
    for cfg in (0, 1):
        path = joint_path(ARM, qa[cfg], qb[cfg])
        sw = sweep_move(ab, fs, path, [True])
        s, ref = sampled_reference(ab, path, COLUMN)
        results[cfg] = (sw, ref)
        if ref.min() > 0:
            # The true minimum lies at or below the sampled one, by at most half the
            # travel between reference samples; ours is a lower bound within the tolerance.
            travel = point_speed(ab, path.delta) / 6000 / 2
            tol = MIN_TOL_FRACTION * ab.min_link_radius
            assert ref.min() - travel - tol - 1e-9 <= sw.clearance <= ref.min() + 1e-6
        else:
            # shapely stops at touching (distance 0, less r); ours measures the depth too.
            assert sw.clearance <= ref.min() + 1e-6
        if sw.collides:
            first = s[np.argmax(ref <= 0)]
            assert sw.contact is not None
            assert first - 2 / 6000 <= sw.contact.s + 1e-9 and sw.contact.s <= first + 1e-9
            assert sw.contact.fixture == 0
            # The reported point lies on the column's outline.
            pt = shapely.Point(sw.contact.xy)
            assert shapely.Polygon(COLUMN.outline).exterior.distance(pt) < 1e-6
    # The positive configuration passes the column, the negative one hits it.
    assert not results[0][0].collides and results[0][1].min() > 0
    assert results[1][0].collides and results[1][1].min() < 0
    assert ab.bodies[results[1][0].body].name in ("link 1", "link 2", "tool")


def test_swept_area_covers_intermediate_poses():
    # Reference: shapely covers() for the bodies at poses between the samples.
    ab = arm_bodies(ARM)
    qa, qb = two_targets()
    path = joint_path(ARM, qa[0], qb[0])
    swept = swept_shapes(ab, path)
    total = shapely.union_all(list(swept.values()))
    n = sample_count(ab, path.delta)
    for s in (np.arange(n) + 0.5)[:: max(1, n // 60)] / n:
        for name, shape in ab.shapes(path.at(s)).items():
            assert swept[name].covers(shape.buffer(-1e-6)), name
    # And it is not much larger than the union of the sampled bodies.
    samples = shapely.union_all(
        [shape for s in np.linspace(0, 1, 400) for shape in ab.shapes(path.at(s)).values()]
    )
    assert total.area <= samples.area * 1.01


def cell_with_sequence(q2_limits=(-150, 150)):
    arm = Arm(
        "a",
        "Arm A",
        0,
        0,
        0,
        400,
        250,
        (-170, 170),
        q2_limits,
        elbow="any",
        link_radii=(25, 20),
        extra={"tool_body": {"radius": 30}},
    )
    targets = (
        Target("p1", "Pick 1", -500.0, 300.0, "a"),
        Target("p2", "Place 2", -250.0, 50.0, "a"),
        Target("far", "Far", 900.0, 0.0, "a"),
    )
    return Cell(
        "c",
        arms=(arm,),
        fixtures=(COLUMN,),
        targets=targets,
        sequences=(Sequence("a", ("p1", "p2", "far")),),
    )


def test_cell_moves_report_reasons():
    cell = cell_with_sequence()
    moves = cell_moves(cell, evaluate_cell(cell))
    assert [(m.from_id, m.to_id) for m in moves] == [("p1", "p2"), ("p2", "far"), ("far", "p1")]
    first = moves[0]
    assert first.collides is not None and first.path is not None
    if first.collides:
        assert first.blocked_by == "col" and first.reason == "collides with Column C1"
    else:
        assert first.reason == "" and first.clearance > 0
    assert (
        moves[1].collides is None and moves[1].reason == "target Far has no feasible configuration"
    )
    assert not moves[1].feasible


def test_plateau_of_clearance_stays_cheap():
    # Link 2 turning about the elbow (link 1 still along +x) next to a post just beyond the
    # elbow: the nearest body point is link 1's end cap at the elbow, so the clearance is
    # constant along the move (60 from the elbow less link 1's radius 25).
    ab = arm_bodies(ARM)
    post = np.array([[460, -20], [500, -20], [500, 20], [460, 20]], dtype=float)
    calls = []
    fs = FixtureSet([post])
    path = joint_path(ARM, (0.0, 90.0), (0.0, 150.0))
    import kinematics.sweep as sw_mod

    real = sw_mod.pose_clearance

    def counting(*args, **kw):
        calls.append(len(np.asarray(args[2]).reshape(-1, 2)))
        return real(*args, **kw)

    sw_mod.pose_clearance = counting
    try:
        sw = sweep_move(ab, fs, path, [True])
    finally:
        sw_mod.pose_clearance = real
    assert sw.clearance == pytest.approx(60 - 25, abs=MIN_TOL_FRACTION * ab.min_link_radius)
    assert sw.clearance <= 35.0 + 1e-9  # a lower bound
    assert sum(calls) <= 20 * (sample_count(ab, path.delta) + 1)


def test_move_without_blocking_fixtures_is_clear():
    ab = ArmBodies(ARM, arm_bodies(ARM).bodies, (25.0, 20.0), False)
    sw = sweep_move(ab, FixtureSet([]), joint_path(ARM, (0.0, 30.0), (90.0, 60.0)), [])
    assert math.isinf(sw.clearance) and not sw.collides and sw.contact is None

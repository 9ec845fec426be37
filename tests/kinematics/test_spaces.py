"""Maximum, restricted and operating spaces, shared zones and shared targets."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely

from kinematics.bodies import ArmBodies, arm_bodies
from kinematics.cell import Arm, Cell, Fixture, Sequence, Target
from kinematics.evaluate import evaluate_cell
from kinematics.spaces import (
    SPACE_TOL_REL,
    arm_spaces,
    cell_spaces,
    joint_box_space,
    rotational_sweep,
    shared_targets,
    shared_zones,
)
from kinematics.sweep import cell_moves


def test_rotational_sweep_of_a_square_matches_its_corner_circles():
    # A unit square centred 3 from the centre, turned a full circle, covers the annulus
    # between its nearest and farthest points: radii 2.5 and hypot(3.5, 0.5).
    sq = shapely.box(2.5, -0.5, 3.5, 0.5)
    g = rotational_sweep(sq, (0, 0), 0, 2 * math.pi, 1e-4)
    ref = math.pi * (3.5**2 + 0.5**2 - 2.5**2)
    assert g.area == pytest.approx(ref, rel=2e-4)
    assert g.area >= ref - 1e-9  # a cover


def test_restricted_space_of_a_radial_link_follows_steiner_formula():
    # Link 2 held straight (q2 = 0) sweeps, over a q1 range D, the annular sector between
    # radii a1 and a1 + a2; widened by r its area is A + P*r + pi*r^2 (Steiner's formula
    # for sets of positive reach >= r, Federer 1959), with A = D/2 (rb^2 - ra^2) and
    # P = D (ra + rb) + 2 (rb - ra).
    arm = Arm("a", "A", 0, 0, 20, 300, 200, (-60, 60), (0, 0), link_radii=(10, 15))
    full = arm_bodies(arm)
    link2 = ArmBodies(arm, full.bodies[1:2], full.link_radii, False)
    tol = SPACE_TOL_REL * arm.reach_max
    g = joint_box_space(link2, arm.q1_limits, arm.q2_limits)
    D, ra, rb, r = math.radians(120), 300.0, 500.0, 15.0
    perim = D * (ra + rb) + 2 * (rb - ra)
    ref = D / 2 * (rb**2 - ra**2) + r * perim + math.pi * r * r
    # Outlines lie at most tol outside the true one: the area exceeds it by < tol * perimeter.
    assert ref <= g.area <= ref + tol * g.length
    assert g.area == pytest.approx(ref, rel=5e-4)


def test_full_range_space_is_a_disc():
    # With full joint ranges the tool point covers the annulus |a1 - a2| <= r <= a1 + a2
    # (two-link workspace, standard robotics texts, from memory); link 1 fills the hole,
    # so the bodies cover the disc of radius a1 + a2 + r2.
    arm = Arm("a", "A", 5, 5, 0, 300, 200, (-180, 180), (-180, 180), link_radii=(10, 15))
    g = joint_box_space(arm_bodies(arm), arm.q1_limits, arm.q2_limits)
    ref = math.pi * 515.0**2
    assert g.area == pytest.approx(ref, rel=3e-4) and g.area >= ref
    assert len(shapely.get_parts(g)) == 1 and len(g.interiors) == 0


@pytest.fixture(scope="module")
def limited():
    arm = Arm(
        "a",
        "A",
        100,
        -50,
        30,
        400,
        250,
        (-150, 120),
        (-140, 135),
        link_radii=(30, 20),
        extra={
            "tool_body": {"radius": 40},
            "base_footprint": [[-90, -90], [90, -90], [90, 90], [-90, 90]],
        },
    )
    ab = arm_bodies(arm)
    return arm, ab, joint_box_space(ab, arm.q1_limits, arm.q2_limits)


def test_restricted_space_covers_every_pose_within_limits(limited):
    # Reference: shapely covers() for the bodies at random poses within the limits.
    arm, ab, g = limited
    g = g.buffer(1e-6)  # floating-point noise where outlines coincide (the base)
    rng = np.random.default_rng(1)
    for _ in range(400):
        q = [rng.uniform(*arm.q1_limits), rng.uniform(*arm.q2_limits)]
        for name, shape in ab.shapes(q).items():
            assert g.covers(shape), name


def test_restricted_space_is_not_larger_than_the_poses(limited):
    # Reference: shapely STRtree nearest distances from random points of the space to the
    # bodies at a 3-degree pose grid; a point covered at some pose is within the travel to
    # the nearest grid pose (1.5 degrees per joint) of a grid pose's body.
    arm, ab, g = limited
    q1 = np.arange(arm.q1_limits[0], arm.q1_limits[1] + 1.5, 3.0).clip(*arm.q1_limits)
    q2 = np.arange(arm.q2_limits[0], arm.q2_limits[1] + 1.5, 3.0).clip(*arm.q2_limits)
    qq = np.stack(np.meshgrid(q1, q2, indexing="ij"), axis=-1).reshape(-1, 2)
    t1 = np.radians(arm.heading_deg + qq[:, 0])
    t12 = t1 + np.radians(qq[:, 1])
    base = np.broadcast_to([arm.x, arm.y], (len(qq), 2))
    elbow = base + arm.a1 * np.c_[np.cos(t1), np.sin(t1)]
    tool = elbow + arm.a2 * np.c_[np.cos(t12), np.sin(t12)]
    shapes = np.concatenate(
        [
            shapely.buffer(shapely.linestrings(np.stack([base, elbow], 1)), 30),
            shapely.buffer(shapely.linestrings(np.stack([elbow, tool], 1)), 20),
            shapely.buffer(shapely.points(tool), 40),
            [ab.shapes([0, 0])["base"]],
        ]
    )
    tree = shapely.STRtree(shapes)
    rng = np.random.default_rng(2)
    x0, y0, x1, y1 = g.bounds
    pts = shapely.points(rng.uniform(x0, x1, 4000), rng.uniform(y0, y1, 4000))
    pts = pts[shapely.contains(g, pts)]
    _, dist = tree.query_nearest(pts, return_distance=True, all_matches=False)
    h = math.radians(1.5)
    bound = (arm.a1 + arm.a2 + 40) * h + (arm.a2 + 40) * h
    assert len(pts) > 1000
    assert dist.max() <= bound


def two_arm_cell():
    # Two arms 700 apart, both with q2 fixed at 0 and a full q1 turn: each restricted space
    # is a disc of radius a1 + a2 + r2 = 515 about its base.
    a = Arm("L", "Left", 0, 0, 0, 300, 200, (-180, 180), (0, 0), link_radii=(10, 15))
    b = Arm("R", "Right", 700, 0, 0, 300, 200, (-180, 180), (0, 0), link_radii=(10, 15))
    targets = (Target("mid", "Middle", 350, 0, "L"), Target("left", "Left bin", -500, 0, "L"))
    return Cell("two", arms=(a, b), targets=targets)


def test_shared_zone_of_two_discs_is_their_lens():
    # Circle-circle intersection area (standard lens formula, e.g. MathWorld
    # "Circle-Circle Intersection"): 2 r^2 acos(d / 2r) - (d / 2) sqrt(4 r^2 - d^2).
    cell = two_arm_cell()
    spaces = [arm_spaces(cell, a) for a in cell.arms]
    zones = shared_zones(spaces)
    assert [(z.arms, z.kind) for z in zones] == [(("L", "R"), "restricted")]
    r, d = 515.0, 700.0
    lens = 2 * r * r * math.acos(d / (2 * r)) - d / 2 * math.sqrt(4 * r * r - d * d)
    assert zones[0].area == pytest.approx(lens, rel=1e-3)


def test_shared_targets_lists_targets_both_arms_reach():
    cell = two_arm_cell()
    # q2 fixed at 0: only targets at distance exactly 500 are reachable.
    a = Arm("L", "Left", 0, 0, 0, 300, 200, (-180, 180), (-150, 150), link_radii=(10, 15))
    b = Arm("R", "Right", 700, 0, 0, 300, 200, (-180, 180), (-150, 150), link_radii=(10, 15))
    cell = Cell("two", arms=(a, b), targets=cell.targets)
    assert shared_targets(cell) == {"mid": ("L", "R")}
    # A column at the middle target blocks both arms there.
    col = Fixture("c", "Column", "column", ((330, -20), (370, -20), (370, 20), (330, 20)))
    blocked = Cell("two", arms=(a, b), targets=cell.targets, fixtures=(col,))
    assert shared_targets(blocked) == {}


def test_maximum_operating_and_sources():
    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        400,
        250,
        (-120, 120),
        (-130, 130),
        link_radii=(25, 20),
        extra={"mechanical_limits_deg": [[-170, 170], [-150, 150]], "tool_body": {"radius": 30}},
    )
    targets = (Target("p", "Pick", 500, -200, "a"), Target("q", "Place", 300, 400, "a"))
    cell = Cell("c", arms=(arm,), targets=targets, sequences=(Sequence("a", ("p", "q")),))
    ev = evaluate_cell(cell)
    moves = cell_moves(cell, ev)
    sp = arm_spaces(cell, arm, moves)
    assert sp.maximum_source == "mechanical range"
    # Both outlines lie within tol outside the truth, so compare with that allowance.
    tol = SPACE_TOL_REL * arm.reach_max
    assert sp.maximum.buffer(tol).covers(sp.restricted)
    assert sp.maximum.area > sp.restricted.area * 1.05
    assert sp.operating is not None
    assert sp.restricted.buffer(tol).covers(sp.operating)
    # The operating space holds the bodies at both targets.
    for i in range(2):
        q = ev.arms["a"].ik.q_deg[i, ev.arms["a"].chosen[i]]
        for shape in arm_bodies(arm).shapes(q).values():
            assert sp.operating.covers(shape)
    plain = Arm("b", "B", 0, 0, 0, 400, 250, (-120, 120), (-130, 130), link_radii=(25, 20))
    sp2 = arm_spaces(Cell("c", arms=(plain,)), plain)
    assert sp2.maximum_source == "joint limits" and sp2.operating is None
    whole = cell_spaces(cell, ev)
    assert set(whole.arms) == {"a"} and whole.zones == [] and whole.targets == {}


def test_demo_two_arm_cell_has_a_shared_zone():
    from pathlib import Path

    from kinematics.cellfile import load_cell

    path = Path(__file__).resolve().parents[2] / "sample_cells" / "shared_zone_two_arm.cell.json"
    cell = load_cell(path)
    sp = cell_spaces(cell, evaluate_cell(cell))
    kinds = {z.kind for z in sp.zones}
    assert kinds == {"restricted", "operating"}
    # The handover point lies in both arms' operating spaces (shapely covers).
    handover = shapely.Point(475, 0)
    assert sp.arms["left"].operating.covers(handover)
    assert sp.arms["right"].operating.covers(handover)
    assert set(sp.targets) == {"handover_put", "handover_take"}

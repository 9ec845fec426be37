"""Clearance between arm bodies and fixtures, checked against shapely and hand-built cases.

Reference library: shapely (GEOS) distances and predicates. For a capsule (segment S
widened by r) and a polygon P, distance(capsule, P) = max(distance(S, P) - r, 0): the
widened set's points are exactly those within r of S (definition of the Minkowski sum
with a disc), so shapely's exact segment distance minus r is the exact reference;
shapely's own buffered polygons are also compared, within their polygonisation error.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely

from kinematics.bodies import ArmBodies, arm_bodies, link_blocking, tool_blocking
from kinematics.cell import Arm, Fixture
from kinematics.clearance import (
    FixtureSet,
    arm_clearance,
    body_fixture_clearance,
    pose_clearance,
    segment_polygon_distance,
)


def random_polygon(rng, centre, size, convex):
    k = int(rng.integers(3, 9))
    ang = np.sort(rng.uniform(0, 2 * np.pi, k))
    rad = size * (np.ones(k) if convex else rng.uniform(0.35, 1.0, k))
    pts = np.c_[centre[0] + rad * np.cos(ang), centre[1] + rad * np.sin(ang)]
    poly = shapely.Polygon(pts)
    if not poly.is_valid or poly.area < 1e-3 * size * size:
        return None
    return pts


def random_fixtures(rng, n, spread, size):
    out = []
    while len(out) < n:
        pts = random_polygon(
            rng,
            rng.uniform(-spread, spread, 2),
            rng.uniform(*size),
            convex=bool(rng.random() < 0.5),
        )
        if pts is not None:
            out.append(pts)
    return out


def reference_clearance(ab, q, polys, mask):
    """Per-pose smallest max(shapely distance(core, P) - r, 0) and whether any is <= 0."""
    best = np.full(len(q), np.inf)
    which = np.full(len(q), -1)
    geoms = [shapely.Polygon(p) for p in polys]
    for i, qi in enumerate(q):
        shapes = core_shapes(ab, qi)
        for core, r in shapes:
            for f, g in enumerate(geoms):
                if not mask[f]:
                    continue
                d = shapely.distance(core, g) - r
                if d < best[i]:
                    best[i], which[i] = d, f
    return best, which


def core_shapes(ab, q):
    """(core geometry, radius) per body, built from the joint formula directly."""
    arm = ab.arm
    t1 = math.radians(arm.heading_deg + q[0])
    t12 = t1 + math.radians(q[1])
    base = np.array([arm.x, arm.y])
    elbow = base + arm.a1 * np.array([math.cos(t1), math.sin(t1)])
    tool = elbow + arm.a2 * np.array([math.cos(t12), math.sin(t12)])
    out = [
        (shapely.LineString([base, elbow]), ab.link_radii[0]),
        (shapely.LineString([elbow, tool]), ab.link_radii[1]),
    ]
    for body in ab.bodies[2:]:
        if body.name == "tool":
            out.append((shapely.Point(tool), body.radius))
    return out


@pytest.fixture(scope="module")
def random_case():
    rng = np.random.default_rng(20240611)
    arm = Arm(
        "a",
        "A",
        10.0,
        -20.0,
        25.0,
        400.0,
        250.0,
        (-170, 170),
        (-150, 150),
        link_radii=(30.0, 20.0),
        extra={"tool_body": {"radius": 25.0}},
    )
    polys = random_fixtures(rng, 30, 750.0, (15.0, 70.0))
    q = np.c_[rng.uniform(-170, 170, 2500), rng.uniform(-150, 150, 2500)]
    mask = rng.random(len(polys)) < 0.8
    return arm, polys, q, mask


def test_clearance_matches_shapely_on_random_poses(random_case):
    arm, polys, q, mask = random_case
    ab = arm_bodies(arm)
    res = pose_clearance(ab, FixtureSet(polys), q, mask)
    ref, which = reference_clearance(ab, q, polys, mask)
    clear = ref > 1e-9
    # Reference: shapely segment/point-to-polygon distance less the radius (exact identity).
    assert clear.sum() > 800 and (~clear).sum() > 400
    assert np.max(np.abs(res.clearance[clear] - ref[clear])) < 1e-6
    assert np.array_equal(res.collides[np.abs(ref) > 1e-9], ~clear[np.abs(ref) > 1e-9])
    # Same nearest fixture wherever the reference's nearest is clear of the runner-up.
    assert np.mean(res.fixture[clear] == which[clear]) > 0.99
    assert np.all(res.clearance[~clear] <= 1e-9)


def test_clearance_matches_shapely_buffers(random_case):
    # Reference: shapely's own buffered capsules; its polygon sits inside the true circle
    # by at most r * (1 - cos(pi / (4 * quad_segs))) (inscribed regular polygon).
    arm, polys, q, mask = random_case
    ab = arm_bodies(arm)
    res = pose_clearance(ab, FixtureSet(polys), q[:400], mask)
    fx = np.array([shapely.Polygon(p) for p in polys])
    quad = 64
    err = max(ab.link_radii + (25.0,)) * (1 - math.cos(math.pi / (4 * quad)))
    for i, qi in enumerate(q[:400]):
        bufs = [core.buffer(r, quad_segs=quad) for core, r in core_shapes(ab, qi)]
        d = min(float(np.min(shapely.distance(b, fx[mask]))) for b in bufs)
        if d > 0:
            assert res.clearance[i] == pytest.approx(d, abs=err + 1e-9)
            assert res.clearance[i] <= d + 1e-9
        else:
            assert res.clearance[i] <= err


def test_penetration_depth_against_sampled_shapely_distances():
    # Reference: shapely distances from densely sampled centre-line points to the outline;
    # the exact deepest point lies between the sampled maximum and it plus the step.
    rng = np.random.default_rng(7)
    checked = 0
    for _ in range(400):
        pts = random_polygon(rng, (0, 0), 1.5, convex=bool(rng.random() < 0.5))
        if pts is None:
            continue
        a, b = rng.uniform(-2, 2, 2), rng.uniform(-2, 2, 2)
        signed, depth = segment_polygon_distance(a[None], b[None], pts)
        poly = shapely.Polygon(pts)
        t = np.linspace(0, 1, 4001)
        samples = shapely.points(a + t[:, None] * (b - a))
        inside = shapely.contains(poly, samples)
        if not inside.any():
            assert depth[0] == 0.0
            assert signed[0] == pytest.approx(shapely.LineString([a, b]).distance(poly), abs=1e-9)
            continue
        checked += 1
        m = float(np.max(shapely.distance(samples[inside], poly.exterior)))
        step = float(np.linalg.norm(b - a)) / 4000
        assert m - 1e-9 <= depth[0] <= m + step
        assert signed[0] == -depth[0]
    assert checked > 100


def test_capsule_depth_in_convex_fixtures_against_sampled_shapely():
    # Convex fixtures take the fast kernel (smallest edge-line distance); reference as
    # above: shapely distances of sampled centre-line points to the outline, plus r.
    rng = np.random.default_rng(3)
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), link_radii=(25, 20))
    full = arm_bodies(arm)
    link1 = ArmBodies(arm, full.bodies[:1], full.link_radii, False)
    checked = 0
    for _ in range(150):
        pts = random_polygon(rng, rng.uniform(150, 300, 2) * [1, 0.3], 80.0, convex=True)
        if pts is None:
            continue
        q1 = rng.uniform(-40, 40)
        res = pose_clearance(link1, FixtureSet([pts]), [[q1, 0.0]], [True])
        end = 400 * np.array([math.cos(math.radians(q1)), math.sin(math.radians(q1))])
        poly = shapely.Polygon(pts)
        t = np.linspace(0, 1, 8001)
        samples = shapely.points(t[:, None] * end)
        inside = shapely.contains(poly, samples)
        if not inside.any():
            ref = shapely.LineString([(0, 0), end]).distance(poly) - 25
            assert res.clearance[0] == pytest.approx(ref, abs=1e-9)
            continue
        checked += 1
        m = float(np.max(shapely.distance(samples[inside], poly.exterior)))
        assert -(m + 0.05) - 25 <= res.clearance[0] <= -m - 25 + 1e-9
    assert checked > 40


def test_polygon_bodies_match_shapely():
    # Reference: shapely polygon distance and intersects for outline bodies.
    rng = np.random.default_rng(11)
    n = 0
    for _ in range(300):
        a = random_polygon(rng, rng.uniform(-1, 1, 2), 1.0, convex=bool(rng.random() < 0.5))
        b = random_polygon(rng, rng.uniform(-1, 1, 2), 1.0, convex=bool(rng.random() < 0.5))
        if a is None or b is None:
            continue
        pa, pb = shapely.Polygon(a), shapely.Polygon(b)
        sd = body_fixture_clearance(a, b)
        if pa.intersects(pb):
            n += 1
            assert sd <= 1e-12
        else:
            assert sd == pytest.approx(pa.distance(pb), abs=1e-9)
    assert n > 50


def test_link_outline_body_matches_shapely():
    # Link 2 given as an outline: clearance equals shapely's polygon distance when apart.
    outline = [[-30, -25], [280, -25], [280, 25], [-30, 25]]
    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        400,
        250,
        (-180, 180),
        (-150, 150),
        link_radii=(20, 20),
        extra={"link_outlines": [None, outline]},
    )
    ab = arm_bodies(arm)
    col = np.array([[500, 150], [560, 150], [560, 210], [500, 210]], dtype=float)
    rng = np.random.default_rng(5)
    q = np.c_[rng.uniform(-60, 60, 300), rng.uniform(-150, 150, 300)]
    res = pose_clearance(ab, FixtureSet([col]), q, [True])
    g = shapely.Polygon(col)
    for i, qi in enumerate(q):
        shapes = ab.shapes(qi)
        d_link2 = shapes["link 2"].distance(g)
        d_link1 = (
            shapely.LineString(
                [(0, 0), (400 * math.cos(math.radians(qi[0])), 400 * math.sin(math.radians(qi[0])))]
            ).distance(g)
            - 20
        )
        ref = min(d_link2, d_link1)
        if ref > 1e-9:
            assert res.clearance[i] == pytest.approx(ref, abs=1e-6)
        else:
            assert res.collides[i]


# ---------------------------------------------------------------------------------------
# hand-built known answers


def column(x0, y0, x1, y1, height=None, kind="column", fid="col", name="Column C1"):
    return Fixture(fid, name, kind, ((x0, y0), (x1, y0), (x1, y1), (x0, y1)), height)


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
    link_radii=(20, 15),
    link_underside_height=900,
)


def test_column_exactly_tangent_to_link1_has_zero_clearance():
    # Link 1 lies on the x axis (radius 20); the column's lower side is the line y = 20.
    res = arm_clearance(ARM, [column(200, 20, 260, 80)], [[0.0, -90.0]])
    assert res.clearance[0] == 0.0
    assert bool(res.collides[0])  # touching counts as a collision
    assert res.body[0] == 0 and res.fixture[0] == 0
    # A micrometre either way decides it.
    assert not arm_clearance(ARM, [column(200, 20 + 1e-6, 260, 80)], [[0.0, -90.0]]).collides[0]
    assert arm_clearance(ARM, [column(200, 20 - 1e-6, 260, 80)], [[0.0, -90.0]]).collides[0]


def test_column_tangent_to_rotated_link1():
    # Same geometry turned by 30 degrees about the base.
    c, s = math.cos(math.radians(30)), math.sin(math.radians(30))
    local = [(200, 20), (260, 20), (260, 80), (200, 80)]
    pts = tuple((c * x - s * y, s * x + c * y) for x, y in local)
    fx = Fixture("col", "Column", "column", pts, None)
    res = arm_clearance(ARM, [fx], [[30.0, -90.0]])
    assert abs(res.clearance[0]) < 1e-9


def test_fixture_lower_than_underside_does_not_block():
    # A table 700 high under links whose underside is at 900: the links pass over it.
    table = column(150, -100, 350, 100, height=700, kind="table", fid="tbl")
    assert not arm_clearance(ARM, [table], [[0.0, 0.0]]).collides[0]
    assert np.isinf(arm_clearance(ARM, [table], [[0.0, 0.0]]).clearance[0])
    # The margin brings the underside within reach: 700 >= 900 - 250.
    assert arm_clearance(ARM, [table], [[0.0, 0.0]], margin=250).collides[0]
    # Without a height the fixture blocks (conservative).
    unknown = column(150, -100, 350, 100, height=None, kind="table", fid="tbl")
    assert arm_clearance(ARM, [unknown], [[0.0, 0.0]]).collides[0]
    # And without an underside height every fixture blocks.
    arm = Arm("b", "B", 0, 0, 0, 400, 250, (-170, 170), (-150, 150), link_radii=(20, 15))
    assert arm_clearance(arm, [table], [[0.0, 0.0]]).collides[0]


def test_keep_out_zone_always_blocks():
    zone = column(150, -100, 350, 100, height=0.0, kind="keep-out", fid="ko")
    assert link_blocking(ARM, [zone]).tolist() == [True]
    res = arm_clearance(ARM, [zone], [[0.0, 0.0]])
    assert res.collides[0]
    assert res.clearance[0] == pytest.approx(-(100 + 20))  # centre line 100 deep, radius 20


def test_tool_against_work_height():
    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        400,
        250,
        (-170, 170),
        (-150, 150),
        link_radii=(20, 15),
        link_underside_height=900,
        extra={"tool_body": {"radius": 30}},
    )
    # Tool over a table at its work height 700 and next to a 750 bin.
    table = column(560, -150, 760, 150, height=700, kind="table", fid="tbl")
    bin_ = column(680, -20, 720, 20, height=750, kind="fixture", fid="bin")
    q = [[0.0, 0.0]]  # tool at (650, 0); the bin is 30 away, the tool radius 30
    assert tool_blocking(arm, [table, bin_], work_height=700.0).tolist() == [False, True]
    res = arm_clearance(arm, [table, bin_], q, work_height=700.0)
    assert res.clearance[0] == pytest.approx(0.0, abs=1e-9)
    assert arm_bodies(arm).bodies[res.body[0]].name == "tool"
    res = arm_clearance(arm, [table, bin_], q, work_height=760.0)  # above both
    assert np.isinf(res.clearance[0])


def test_base_footprint_is_checked_once_not_at_every_pose():
    from kinematics.cell import Target
    from kinematics.clearance import base_clearance
    from kinematics.evaluate import evaluate_arm
    from kinematics.ik import Status

    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        400,
        250,
        (-170, 170),
        (-150, 150),
        link_radii=(20, 15),
        extra={"base_footprint": [[-80, -80], [80, -80], [80, 80], [-80, 80]]},
    )
    post = column(60, -10, 100, 10, height=2000, fid="post")
    ab = arm_bodies(arm)
    # The post's side x = 60 lies 20 inside the footprint (deeper than the footprint's
    # side inside the post, 10), so the base's penetration is 20 (hand-derived).
    assert base_clearance(ab, FixtureSet.of([post]), [True]) == (pytest.approx(-20.0), 0)
    # The moving bodies: with link 1 straight up (or down) its flank x = 20 beside the
    # shoulder is 40 from the post's side x = 60 (hand-derived); the base is not counted.
    res = arm_clearance(arm, [post], [[90.0, 0.0], [-90.0, 0.0]])
    assert res.clearance == pytest.approx([40.0, 40.0])
    assert {ab.bodies[b].name for b in res.body} == {"link 1"}
    # A base inside a fixture fails every target of the arm, naming the fixture.
    ev = evaluate_arm(arm, [Target("t", "T", 0.0, 500.0, "a")], [post])
    assert int(ev.status[0]) == Status.BASE_OVERLAP and not ev.feasible[0]
    assert ev.reason(0) == "base overlaps Column C1" and ev.base_clearance == pytest.approx(-20)


def test_nan_poses_and_no_blocking_fixtures():
    res = arm_clearance(ARM, [column(200, 20, 260, 80)], [[np.nan, np.nan], [0.0, 0.0]])
    assert np.isnan(res.clearance[0]) and not res.collides[0] and res.fixture[0] == -1
    empty = arm_clearance(ARM, [], [[0.0, 0.0]])
    assert np.isinf(empty.clearance[0]) and empty.fixture[0] == -1


# ---------------------------------------------------------------------------------------
# the verdict at targets (evaluate_arm)


def test_collision_turns_a_configuration_down():
    from kinematics.cell import Target
    from kinematics.evaluate import evaluate_arm
    from kinematics.ik import ELBOWS, Status

    # Target (500, 200): both configurations are 79.7 deg from a limit, so without the
    # column the tie goes to positive, whose elbow sits near (399, -29).
    t = Target("t", "T", 500.0, 200.0, "a")
    col = column(380, -70, 420, -40)
    plain = evaluate_arm(ARM, [t])
    assert ELBOWS[int(plain.chosen[0])] == "positive"
    ev = evaluate_arm(ARM, [t], [col])
    assert ev.collides[0].tolist() == [True, False]
    assert bool(ev.feasible[0]) and ev.chosen_elbow(0) == "negative" and ev.reason(0) == ""
    assert ev.blocked_by(0, 0).id == "col" and ev.blocked_by(0, 1) is None
    assert ev.blocked_body(0, 0) == "link 1"
    # With the elbow held positive the target fails for the collision, naming the column.
    held = Arm(
        "a", "A", 0, 0, 0, 400, 250, (-170, 170), (-150, 150), elbow="positive", link_radii=(20, 15)
    )
    ev = evaluate_arm(held, [t], [col])
    assert not ev.feasible[0] and int(ev.status[0]) == Status.COLLISION
    assert ev.reason(0) == "collides with Column C1"
    assert ev.chosen_elbow(0) is None


def test_reach_and_limits_are_reported_before_collisions():
    from kinematics.cell import Target
    from kinematics.evaluate import evaluate_arm
    from kinematics.ik import Status

    far = Target("far", "Far", 900.0, 0.0, "a")
    # A keep-out over everything right of the base (the base itself stays clear).
    ev = evaluate_arm(ARM, [far], [column(100, -2000, 2000, 2000, kind="keep-out")])
    assert int(ev.status[0]) == Status.BEYOND_REACH and np.isnan(ev.clearance[0]).all()


def test_chosen_configuration_rule():
    from kinematics.cell import Target
    from kinematics.evaluate import LIMIT_MARGIN_UNIT_DEG, evaluate_arm

    # Both configurations clear; the rule score = min(1, margin / 10 deg, clearance / (2 r)),
    # recomputed here from the reported margins and clearances.
    t = Target("t", "T", 500.0, 200.0, "a")
    width = 2 * 15.0
    for col, expect in (
        (column(370, -70, 410, -60), "negative"),  # some 11 from the positive link 1
        (column(370, -220, 410, -200), "positive"),  # both comfortable: equal margins, tie
    ):
        ev = evaluate_arm(ARM, [t], [col])
        assert not ev.collides[0].any()
        score = np.minimum(
            np.minimum(ev.ik.limit_margin_deg[0] / LIMIT_MARGIN_UNIT_DEG, ev.clearance[0] / width),
            1.0,
        )
        assert score.tolist() == pytest.approx(ev.score[0].tolist())
        assert ev.chosen_elbow(0) == expect
    near = evaluate_arm(ARM, [t], [column(370, -70, 410, -60)])
    assert 0 < near.clearance[0, 0] < width <= near.clearance[0, 1]


def test_cell_margin_and_work_heights_reach_the_verdict():
    from kinematics.cell import Cell, Target
    from kinematics.evaluate import evaluate_cell

    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        400,
        250,
        (-170, 170),
        (-150, 150),
        elbow="positive",
        link_radii=(20, 15),
        link_underside_height=900,
        extra={"tool_body": {"radius": 30}},
    )
    table = column(150, -60, 260, 60, height=700, kind="table", fid="tbl")
    bin_ = column(540, -20, 580, 20, height=750, kind="fixture", fid="bin", name="Bin B2")
    t = Target("t", "T", 520.0, 0.0, "a", {"work_height": 700.0})
    cell = Cell("c", arms=(arm,), fixtures=(table, bin_), targets=(t,))
    ev = evaluate_cell(cell).arms["a"]
    # The tool (radius 30 at x = 520) reaches 10 into the 750 bin 20 away; the 700 table
    # it works on does not count.
    assert not ev.feasible[0] and ev.reason(0) == "collides with Bin B2"
    assert ev.blocked_body(0, 0) == "tool" and ev.clearance[0, 0] == pytest.approx(-10.0)
    high = Cell(
        "c",
        arms=(arm,),
        fixtures=(table, bin_),
        targets=(Target("t", "T", 520.0, 0.0, "a", {"work_height": 760.0}),),
    )
    assert evaluate_cell(high).arms["a"].feasible[0]
    # A margin of 250 brings the 700 table up to the links' underside.
    tight = Cell("c", arms=(arm,), fixtures=(table,), targets=(t,), extra={"clearance_margin": 250})
    ev = evaluate_cell(tight).arms["a"]
    assert not ev.feasible[0] and ev.blocked_body(0, 0) == "link 1"


def test_demo_cell_only_one_configuration_clears_the_column():
    from pathlib import Path

    from kinematics.cellfile import load_cell
    from kinematics.evaluate import evaluate_cell

    path = Path(__file__).resolve().parents[2] / "sample_cells" / "column_one_elbow.cell.json"
    cell = load_cell(path)
    ev, i = evaluate_cell(cell).locate("nest")
    # Both configurations are within limits; the column stops one of them.
    assert ev.ik.ok[i].all()
    assert ev.collides[i].tolist() == [False, True]
    assert ev.blocked_by(i, 1).id == "column" and ev.chosen_elbow(i) == "positive"
    # Reference: shapely says the same of the bodies at both poses (polygonised buffers).
    col = shapely.Polygon(cell.fixtures[0].outline)
    for k, hits in ((0, False), (1, True)):
        shapes = ev.bodies.shapes(ev.ik.q_deg[i, k])
        assert any(s.intersects(col) for s in shapes.values()) == hits


# ---------------------------------------------------------------------------------------
# moving bodies and the base (link 1 outside the shoulder disc)


def moving_reference(arm, ab, q, polys, mask, quad=128):
    """Per pose: shapely distance from the moving bodies to the blocking fixtures, and
    whether link 2 or the tool reach into the shoulder disc.

    Reference geometry (shapely, GEOS): capsules are buffered segments, the tool a buffered
    point, the shoulder disc a buffered point; link 1's moving part is its capsule less
    the disc, cut to the half plane in front of the shoulder axis (the whole end cap
    behind it lies in the disc). The polygonisation leaves every arc within
    r * (1 - cos(pi / (4 * quad))) of the true one (5.6e-4 at r = 30, quad = 128).
    """
    r1, r2 = ab.link_radii
    tool_r = next(b.radius for b in ab.bodies if b.name == "tool")
    geoms = [shapely.Polygon(p) for p, m in zip(polys, mask) if m]
    out = np.full(len(q), np.inf)
    folded = np.zeros(len(q), dtype=bool)
    for i, qi in enumerate(q):
        t1 = math.radians(arm.heading_deg + qi[0])
        t12 = t1 + math.radians(qi[1])
        s = np.array([arm.x, arm.y])
        u = np.array([math.cos(t1), math.sin(t1)])
        n = np.array([-u[1], u[0]])
        e = s + arm.a1 * u
        t = e + arm.a2 * np.array([math.cos(t12), math.sin(t12)])
        disc = shapely.Point(s).buffer(r1, quad_segs=quad)
        far = arm.a1 + 2 * r1
        front = shapely.Polygon(
            [s - 2 * r1 * n, s + far * u - 2 * r1 * n, s + far * u + 2 * r1 * n, s + 2 * r1 * n]
        )
        link1 = shapely.LineString([s, e]).buffer(r1, quad_segs=quad)
        rest = shapely.union_all(
            [
                shapely.LineString([e, t]).buffer(r2, quad_segs=quad),
                shapely.Point(t).buffer(tool_r, quad_segs=quad),
            ]
        )
        folded[i] = rest.intersects(disc)
        moving = shapely.union_all(
            [link1.difference(disc).intersection(front), rest.difference(disc)]
        )
        out[i] = min((shapely.distance(moving, g) for g in geoms), default=np.inf)
    return out, folded


@pytest.mark.parametrize("a2", [250.0, 400.0])
def test_moving_bodies_clearance_matches_shapely_on_random_poses(a2):
    # a2 = a1: link 2 and the tool fold back over the shoulder disc at some poses.
    rng = np.random.default_rng(20261204)
    arm = Arm(
        "a",
        "A",
        10.0,
        -20.0,
        25.0,
        400.0,
        a2,
        (-178, 178),
        (-178, 178),
        link_radii=(30.0, 20.0),
        extra={"tool_body": {"radius": 25.0}},
    )
    ab = arm_bodies(arm)
    # Fixtures all round the shoulder (just outside its disc, where only the link's flanks
    # can come near) and further out.
    polys = []
    while len(polys) < 4:
        ang, dist = rng.uniform(0, 2 * np.pi), rng.uniform(45.0, 110.0)
        centre = (arm.x + dist * math.cos(ang), arm.y + dist * math.sin(ang))
        p = random_polygon(rng, centre, rng.uniform(4.0, 8.0), convex=bool(rng.random() < 0.5))
        if p is not None and shapely.Polygon(p).distance(shapely.Point(arm.x, arm.y)) > 31.0:
            polys.append(p)
    polys += random_fixtures(rng, 12, 700.0, (15.0, 50.0))
    mask = np.ones(len(polys), dtype=bool)
    mask[rng.random(len(polys)) < 0.15] = False
    q = np.c_[rng.uniform(-178, 178, 1200), rng.uniform(-178, 178, 1200)]
    res = pose_clearance(ab, FixtureSet(polys), q, mask)
    ref, folded = moving_reference(arm, ab, q, polys, mask)
    tol = 1e-3  # above the polygonisation error of the reference (5.6e-4 at r = 30)
    clear = ref > tol
    assert clear.sum() > 300 and (ref <= 0).sum() > 150
    # Exact where link 2 and the tool stay out of the shoulder disc ...
    ok = clear & ~folded
    assert np.max(np.abs(res.clearance[ok] - ref[ok])) < tol
    # ... and never above the reference where they fold over it (counted whole there).
    assert np.all(res.clearance[clear & folded] <= ref[clear & folded] + tol)
    assert folded.any() == (a2 > 300)
    # Collisions agree (away from touching, within the reference's error).
    sure = np.abs(ref) > tol
    assert np.array_equal(res.collides[sure], ref[sure] <= 0)
    # The shoulder disc matters: many poses would report less with link 1's whole capsule.
    whole = np.array(
        [
            min(
                shapely.distance(
                    shapely.LineString(
                        [
                            (arm.x, arm.y),
                            (
                                arm.x + 400 * math.cos(math.radians(25 + a)),
                                arm.y + 400 * math.sin(math.radians(25 + a)),
                            ),
                        ]
                    ),
                    shapely.Polygon(p),
                )
                - 30.0
                for p, m in zip(polys, mask)
                if m
            )
            for a in q[:, 0]
        ]
    )
    assert np.count_nonzero(whole < ref - 1.0) > 60


def test_base_clearance_matches_shapely():
    from kinematics.clearance import base_clearance

    rng = np.random.default_rng(7)
    polys = random_fixtures(rng, 40, 200.0, (10.0, 50.0))
    fs = FixtureSet(polys)
    for k in range(40):
        x, y, h = rng.uniform(-150, 150), rng.uniform(-150, 150), rng.uniform(-180, 180)
        foot = None if k % 2 else [[-60, -40], [70, -40], [70, 40], [-60, 40]]
        extra = {} if foot is None else {"base_footprint": foot}
        arm = Arm(
            "a", "A", x, y, h, 400, 250, (-170, 170), (-150, 150), link_radii=(35, 20), extra=extra
        )
        mask = rng.random(len(polys)) < 0.7
        c, f = base_clearance(arm_bodies(arm), fs, mask)
        if foot is None:
            # shapely: point-to-polygon distance less the disc's radius (exact identity).
            base = shapely.Point(x, y)
            ref = [shapely.distance(base, shapely.Polygon(p)) - 35.0 for p in polys]
        else:
            cs, sn = math.cos(math.radians(h)), math.sin(math.radians(h))
            pts = [(x + cs * a - sn * b, y + sn * a + cs * b) for a, b in foot]
            base = shapely.Polygon(pts)
            ref = [shapely.distance(base, shapely.Polygon(p)) for p in polys]
        ref = np.where(mask, ref, np.inf)
        j = int(np.argmin(ref))
        if ref[j] > 1e-9:
            assert c == pytest.approx(ref[j], abs=1e-9) and f == j
        else:
            assert c <= 1e-9

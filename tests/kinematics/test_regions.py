"""Work-envelope regions checked against closed-form areas and the arm's own kinematics.

Reference formulas used here (written out inline, not taken from the code under test):
- forward kinematics of a planar two-link arm, p = a1*u(h+q1) + a2*u(h+q1+q2);
- the closed-form inverse, cos q2 = (r^2 - a1^2 - a2^2) / (2 a1 a2);
- the Jacobian determinant a1*a2*sin(q2), hence the region area
  dq1 * a1 * a2 * (cos lo - cos hi) by a change of variables.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from shapely import affinity

from kinematics.cell import Arm
from kinematics.regions import (
    ArmRegions,
    arm_regions,
    both_elbows_region,
    comfort_region,
    config_region,
    config_region_area,
    reach_annulus,
    reachable_region,
)

TOL = 0.05


def radius(a1: float, a2: float, q2_deg: float) -> float:
    """Base-to-tool distance, law of cosines."""
    return math.sqrt(a1 * a1 + a2 * a2 + 2.0 * a1 * a2 * math.cos(math.radians(q2_deg)))


def fk(a1, a2, q1, q2, x=0.0, y=0.0, h=0.0) -> np.ndarray:
    """Forward kinematics of the planar two-link arm, angles in degrees."""
    t1 = np.radians(h + np.asarray(q1, dtype=float))
    t12 = t1 + np.radians(np.asarray(q2, dtype=float))
    return np.column_stack(
        (x + a1 * np.cos(t1) + a2 * np.cos(t12), y + a1 * np.sin(t1) + a2 * np.sin(t12))
    )


def closed_form_area(a1, a2, dq1_deg, intervals) -> float:
    # Change of variables with the Jacobian determinant a1*a2*sin(q2); standard result
    # (Jacobian determinant per Yoshikawa, "Manipulability of Robotic Mechanisms",
    # Int. J. Robotics Research 4(2), 1985).
    dq1 = min(math.radians(dq1_deg), 2.0 * math.pi)
    return (
        dq1
        * a1
        * a2
        * sum(math.cos(math.radians(lo)) - math.cos(math.radians(hi)) for lo, hi in intervals)
    )


# (a1, a2, q1 limits, q2 limits, elbow magnitudes |q2| per configuration, derived by hand)
AREA_CASES = [
    # asymmetric elbow limits, limited shoulder
    (300.0, 200.0, (-90.0, 90.0), (-150.0, 120.0), [(0, 120)], [(0, 150)]),
    # full shoulder turn, and a 540-degree multi-turn shoulder
    (300.0, 200.0, (0.0, 360.0), (-150.0, 120.0), [(0, 120)], [(0, 150)]),
    (300.0, 200.0, (-270.0, 270.0), (-150.0, 120.0), [(0, 120)], [(0, 150)]),
    # one-sided elbow limits: the other configuration reaches nothing
    (300.0, 200.0, (-100.0, 60.0), (20.0, 160.0), [(20, 160)], []),
    (300.0, 200.0, (-100.0, 60.0), (-140.0, -30.0), [], [(30, 140)]),
    # equal links (inner radius 0) and a shorter first link
    (250.0, 250.0, (-45.0, 135.0), (-180.0, 180.0), [(0, 180)], [(0, 180)]),
    (200.0, 300.0, (-120.0, 45.0), (-200.0, 200.0), [(0, 180)], [(0, 180)]),
    (200.0, 300.0, (0.0, 360.0), (-165.0, 165.0), [(0, 165)], [(0, 165)]),
    # representatives: 100..390 is 100..180 plus 0..30 (as 360..390), and -180..0 as -260..30
    (300.0, 200.0, (10.0, 100.0), (100.0, 390.0), [(0, 30), (100, 180)], [(0, 180)]),
    # limits touching the inner fold from both sides
    (300.0, 200.0, (0.0, 90.0), (170.0, 190.0), [(170, 180)], [(170, 180)]),
    # a bench-size arm, and the same arm in inches
    (325.0, 275.0, (-130.0, 130.0), (-145.0, 145.0), [(0, 145)], [(0, 145)]),
    (12.8, 10.8, (-130.0, 130.0), (-145.0, 145.0), [(0, 145)], [(0, 145)]),
]


@pytest.mark.parametrize("a1, a2, q1, q2, pos_iv, neg_iv", AREA_CASES)
@pytest.mark.parametrize("elbow", ["positive", "negative"])
def test_config_region_area_matches_closed_form(a1, a2, q1, q2, pos_iv, neg_iv, elbow):
    tol = TOL if a1 > 100 else TOL / 25.4
    intervals = pos_iv if elbow == "positive" else neg_iv
    reg = config_region(a1, a2, q1, q2, elbow, x=40.0, y=-25.0, heading_deg=30.0, tol=tol)
    assert reg.is_valid
    expected = closed_form_area(a1, a2, q1[1] - q1[0], intervals)
    if not intervals:
        assert reg.is_empty
        assert config_region_area(a1, a2, q1, q2, elbow) == 0.0
        return
    # Jacobian change of variables (Yoshikawa 1985, see closed_form_area): relative 1e-4.
    assert abs(reg.area - expected) <= 1e-4 * expected
    assert config_region_area(a1, a2, q1, q2, elbow) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    "a1, a2, q1, q2",
    [
        (300.0, 200.0, (-180.0, 180.0), (-150.0, 120.0)),
        (200.0, 300.0, (0.0, 720.0), (-100.0, 170.0)),
        (250.0, 250.0, (0.0, 360.0), (-170.0, 100.0)),
    ],
)
def test_full_turn_union_and_both_match_closed_form(a1, a2, q1, q2):
    lo, hi = q2
    outer = (a1 + a2) ** 2
    # Standard closed form (same source as closed_form_area): full shoulder turn gives rings
    # between r(0) = a1 + a2 and r(|q2| limit) for each configuration.
    union_area = math.pi * (outer - radius(a1, a2, max(abs(lo), hi)) ** 2)
    both_area = math.pi * (outer - radius(a1, a2, min(abs(lo), hi)) ** 2)
    reach = reachable_region(a1, a2, q1, q2, "any", tol=TOL)
    both = both_elbows_region(a1, a2, q1, q2, "any", tol=TOL)
    assert reach.is_valid and both.is_valid
    assert abs(reach.area - union_area) <= 1e-4 * union_area
    assert abs(both.area - both_area) <= 1e-4 * both_area


def test_reach_annulus_area_and_disc():
    # Area of a ring, pi * (R^2 - r^2); with equal links the inner radius is 0.
    ring = reach_annulus(300.0, 200.0, x=5.0, y=7.0)
    assert ring.is_valid and len(ring.interiors) == 1
    assert ring.area == pytest.approx(math.pi * (500.0**2 - 100.0**2), rel=1e-9)
    disc = reach_annulus(250.0, 250.0)
    assert len(disc.interiors) == 0
    assert disc.area == pytest.approx(math.pi * 500.0**2, rel=1e-9)
    t = np.linspace(0.0, 2.0 * math.pi, 997)
    pts = shapely.points(5.0 + 500.0 * np.cos(t), 7.0 + 500.0 * np.sin(t))
    assert shapely.distance(ring.boundary, pts).max() <= TOL


# Cases for the kinematic checks: (a1, a2, q1 limits, q2 limits, base pose)
FK_CASES = [
    (300.0, 200.0, (-120.0, 100.0), (-150.0, 135.0), (40.0, -25.0, 30.0)),
    (200.0, 300.0, (-60.0, 200.0), (-180.0, 180.0), (0.0, 0.0, -90.0)),
    (250.0, 250.0, (0.0, 400.0), (-170.0, 120.0), (-300.0, 150.0, 12.5)),
    (300.0, 200.0, (-100.0, 60.0), (20.0, 160.0), (0.0, 0.0, 0.0)),
]


def _config_of(q2: np.ndarray) -> np.ndarray:
    """+1 / -1: the configuration of each elbow angle, from its representative in (-180, 180]."""
    rep = (np.asarray(q2) + 180.0) % 360.0 - 180.0
    return np.where(rep >= 0.0, 1.0, -1.0)


@pytest.mark.parametrize("a1, a2, q1, q2, pose", FK_CASES)
def test_forward_kinematics_points_lie_in_region(a1, a2, q1, q2, pose):
    x, y, h = pose
    rng = np.random.default_rng(7)
    q1s = rng.uniform(*q1, 600)
    q2s = rng.uniform(*q2, 600)
    pts = fk(a1, a2, q1s, q2s, x, y, h)
    sign = _config_of(q2s)
    for elbow, s in (("positive", 1.0), ("negative", -1.0)):
        reg = config_region(a1, a2, q1, q2, elbow, x, y, h, tol=TOL)
        mine = pts[sign == s]
        if len(mine) == 0:
            continue
        # Forward kinematics is the definition of the region; the outline may be off by tol.
        d = shapely.distance(reg, shapely.points(mine))
        assert d.max() <= TOL * (1 + 1e-9)


def _has_rep(angle: np.ndarray, lo: float, hi: float, slack: float = 1e-7) -> np.ndarray:
    """Whether some angle + k*360 lies in [lo, hi]."""
    k = np.ceil((lo - slack - angle) / 360.0)
    return angle + 360.0 * k <= hi + slack


@pytest.mark.parametrize("a1, a2, q1, q2, pose", FK_CASES)
@pytest.mark.parametrize("elbow", ["positive", "negative"])
def test_points_in_region_have_inverse_within_limits(a1, a2, q1, q2, pose, elbow):
    x, y, h = pose
    reg = config_region(a1, a2, q1, q2, elbow, x, y, h, tol=TOL)
    if reg.is_empty:
        return
    rng = np.random.default_rng(11)
    minx, miny, maxx, maxy = reg.bounds
    cand = shapely.points(rng.uniform(minx, maxx, 4000), rng.uniform(miny, maxy, 4000))
    inside = shapely.contains(reg, cand) & (shapely.distance(reg.boundary, cand) > 1.01 * TOL)
    p = shapely.get_coordinates(cand[inside])
    assert len(p) > 100
    # Closed-form inverse kinematics of the two-link arm (law of cosines plus atan2).
    dx, dy = p[:, 0] - x, p[:, 1] - y
    c2 = (dx * dx + dy * dy - a1 * a1 - a2 * a2) / (2.0 * a1 * a2)
    assert np.all(np.abs(c2) <= 1.0)
    q2s = np.degrees(np.arccos(c2)) * (1.0 if elbow == "positive" else -1.0)
    t2 = np.radians(q2s)
    q1s = np.degrees(np.arctan2(dy, dx) - np.arctan2(a2 * np.sin(t2), a1 + a2 * np.cos(t2))) - h
    assert np.all(_has_rep(q1s, *q1))
    assert np.all(_has_rep(q2s, *q2))


@pytest.mark.parametrize(
    "a1, a2, q1, q2, elbow, ulo, uhi",
    [
        (300.0, 200.0, (-120.0, 100.0), (-150.0, 135.0), "positive", 0.0, 135.0),
        (300.0, 200.0, (-120.0, 100.0), (-150.0, 135.0), "negative", 0.0, 150.0),
        (200.0, 300.0, (-60.0, 200.0), (0.0, 180.0), "positive", 0.0, 180.0),
        (250.0, 250.0, (10.0, 300.0), (-180.0, -20.0), "negative", 20.0, 180.0),
    ],
)
def test_outline_within_tol_of_true_boundary(a1, a2, q1, q2, elbow, ulo, uhi):
    reg = config_region(a1, a2, q1, q2, elbow, tol=TOL)
    s = 1.0 if elbow == "positive" else -1.0
    m = 20001
    qa = np.linspace(*q1, m)
    ua = np.linspace(ulo, uhi, m)
    # The four box edges mapped by forward kinematics form the true boundary.
    edges = [
        fk(a1, a2, qa, np.full(m, s * ulo)),
        fk(a1, a2, np.full(m, q1[1]), s * ua),
        fk(a1, a2, qa[::-1], np.full(m, s * uhi)),
        fk(a1, a2, np.full(m, q1[0]), s * ua[::-1]),
    ]
    true_pts = np.concatenate(edges)
    # Every true boundary point is within tol of the outline (chord error bound) ...
    d = shapely.distance(reg.boundary, shapely.points(true_pts[::7]))
    assert d.max() <= TOL * (1 + 1e-9)
    # ... and every outline vertex within tol of the true boundary (dense polyline, whose
    # own chord error is below 1e-5 here).
    true_line = shapely.LineString(true_pts)
    verts = shapely.points(shapely.get_coordinates(reg))
    assert shapely.distance(true_line, verts).max() <= TOL + 1e-5


def test_base_pose_moves_region_rigidly():
    a1, a2, q1, q2 = 325.0, 275.0, (-130.0, 110.0), (-145.0, 150.0)
    for elbow in ("positive", "negative"):
        home = config_region(a1, a2, q1, q2, elbow, tol=TOL)
        moved = config_region(a1, a2, q1, q2, elbow, x=120.0, y=-40.0, heading_deg=35.0, tol=TOL)
        # Rigid motion via shapely.affinity (reference library).
        expect = affinity.translate(affinity.rotate(home, 35.0, origin=(0.0, 0.0)), 120.0, -40.0)
        assert moved.area == pytest.approx(home.area, rel=1e-9)
        assert moved.hausdorff_distance(expect) <= 2 * TOL
        assert moved.symmetric_difference(expect).area <= 2 * TOL * expect.length


def test_elbow_setting_restricts_configurations():
    a1, a2, q1, q2 = 300.0, 200.0, (-90.0, 90.0), (-150.0, 120.0)
    pos = config_region(a1, a2, q1, q2, "positive")
    neg = config_region(a1, a2, q1, q2, "negative")
    assert reachable_region(a1, a2, q1, q2, "positive").equals(pos)
    assert reachable_region(a1, a2, q1, q2, "negative").equals(neg)
    anyr = reachable_region(a1, a2, q1, q2, "any")
    # Inclusion-exclusion, a set identity: |A u B| = |A| + |B| - |A n B|.
    both = both_elbows_region(a1, a2, q1, q2, "any")
    assert anyr.area == pytest.approx(pos.area + neg.area - both.area, rel=1e-9)
    assert both.area > 0.0
    assert both_elbows_region(a1, a2, q1, q2, "positive").is_empty
    assert both_elbows_region(a1, a2, q1, q2, "negative").is_empty


def test_comfort_region_full_turn_closed_form_and_margins():
    a1, a2 = 300.0, 200.0
    comfy = comfort_region(a1, a2, (-360.0, 360.0), (-170.0, 170.0), tol=TOL)
    # Shoulder still a full turn after the 5-degree margins; |q2| in [10, 165]:
    # a ring between r(10) and r(165) (closed form as in closed_form_area).
    expected = math.pi * (radius(a1, a2, 10.0) ** 2 - radius(a1, a2, 165.0) ** 2)
    assert comfy.is_valid
    assert abs(comfy.area - expected) <= 1e-4 * expected
    # Limited shoulder: joint angles with room to spare are in; near a limit, near full
    # stretch or near the fold they are out (one configuration, so no other way to reach).
    q1, q2 = (-120.0, 100.0), (-150.0, 135.0)
    comfy = comfort_region(a1, a2, q1, q2, "positive", tol=TOL)
    reach = reachable_region(a1, a2, q1, q2, "positive", tol=TOL)
    assert reach.buffer(1e-6).contains(comfy)
    good = fk(a1, a2, [-110.0, 0.0, 90.0, 50.0], [20.0, 125.0, 125.0, 15.0])
    assert shapely.contains(comfy, shapely.points(good)).all()
    bad = fk(a1, a2, [0.0, -118.0, 98.0, 0.0], [5.0, 60.0, 60.0, 132.0])
    assert shapely.contains(reach, shapely.points(bad)).all()
    assert not shapely.intersects(comfy, shapely.points(bad)).any()
    assert comfort_region(a1, a2, q1, q2, tol=TOL).area > comfy.area
    assert comfort_region(a1, a2, (0.0, 8.0), q2).is_empty


def test_arm_regions_uses_base_pose_limits_and_elbow():
    arm = Arm("r1", "Loader", 100.0, 50.0, 90.0, 325.0, 275.0, (-130.0, 130.0), (-145.0, 145.0))
    regs = arm_regions(arm)
    assert isinstance(regs, ArmRegions)
    args = (arm.a1, arm.a2, arm.q1_limits, arm.q2_limits)
    pose = dict(x=arm.x, y=arm.y, heading_deg=arm.heading_deg)
    assert regs.positive.equals(config_region(*args, "positive", **pose))
    assert regs.negative.equals(config_region(*args, "negative", **pose))
    assert regs.reachable.area == pytest.approx(reachable_region(*args, **pose).area, rel=1e-12)
    assert regs.both.area == pytest.approx(both_elbows_region(*args, **pose).area, rel=1e-12)
    assert regs.comfort.equals(comfort_region(*args, **pose))
    assert regs.annulus.area == pytest.approx(math.pi * (600.0**2 - 50.0**2), rel=1e-9)
    assert regs.annulus.centroid.distance(shapely.Point(100.0, 50.0)) < 1e-6
    pos_only = arm_regions(Arm(**{**arm.__dict__, "elbow": "positive"}))
    assert pos_only.negative.is_empty and pos_only.both.is_empty
    assert pos_only.reachable.equals(pos_only.positive)


@pytest.mark.parametrize(
    "call, message",
    [
        (lambda: config_region(0.0, 1.0, (0, 1), (0, 1), "positive"), "a1"),
        (lambda: config_region(1.0, float("nan"), (0, 1), (0, 1), "positive"), "a2"),
        (lambda: config_region(1.0, 1.0, (5, 1), (0, 1), "positive"), "q1_limits"),
        (lambda: config_region(1.0, 1.0, (0, 1), (0, float("inf")), "positive"), "q2_limits"),
        (lambda: config_region(1.0, 1.0, (0, 1), (0, 1), "any"), "elbow"),
        (lambda: reachable_region(1.0, 1.0, (0, 1), (0, 1), "sideways"), "elbow"),
        (lambda: reach_annulus(1.0, 1.0, tol=0.0), "tol"),
        (lambda: comfort_region(1.0, 1.0, (0, 90), (0, 90), margin_deg=-1.0), "margin_deg"),
    ],
)
def test_bad_input_is_a_clear_value_error(call, message):
    with pytest.raises(ValueError, match=message):
        call()


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    a1=st.floats(20.0, 2000.0),
    a2=st.floats(20.0, 2000.0),
    q1lo=st.floats(-360.0, 360.0),
    w1=st.floats(0.0, 720.0),
    q2lo=st.floats(-360.0, 360.0),
    w2=st.floats(0.0, 720.0),
    heading=st.floats(-360.0, 360.0),
)
def test_regions_are_valid_for_any_links_and_limits(a1, a2, q1lo, w1, q2lo, w2, heading):
    q1, q2 = (q1lo, q1lo + w1), (q2lo, q2lo + w2)
    for elbow in ("positive", "negative"):
        assert config_region(a1, a2, q1, q2, elbow, 3.0, -4.0, heading).is_valid
    assert reachable_region(a1, a2, q1, q2, "any", 3.0, -4.0, heading).is_valid
    assert both_elbows_region(a1, a2, q1, q2, "any", 3.0, -4.0, heading).is_valid


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    a1=st.floats(50.0, 1500.0),
    ratio=st.floats(0.25, 4.0),
    q1lo=st.integers(-360, 360),
    w1=st.integers(1, 720),
    q2lo=st.integers(-360, 360),
    w2=st.integers(1, 720),
    elbow=st.sampled_from(["positive", "negative"]),
)
def test_area_matches_closed_form_over_sweep(a1, ratio, q1lo, w1, q2lo, w2, elbow):
    a2 = a1 * ratio
    q1, q2 = (float(q1lo), float(q1lo + w1)), (float(q2lo), float(q2lo + w2))
    reg = config_region(a1, a2, q1, q2, elbow, tol=TOL)
    # Elbow magnitudes allowed, by brute force over representatives (integer limits, so
    # 1-degree cells decide exactly), then the Jacobian closed form per cell.
    s = 1 if elbow == "positive" else -1
    cells = [
        u
        for u in range(180)
        if any(q2[0] <= s * (u + 0.5) + 360 * k <= q2[1] for k in range(-3, 4))
    ]
    expected = closed_form_area(a1, a2, w1, [(u, u + 1) for u in cells])
    assert reg.is_valid
    if expected == 0.0:
        assert reg.is_empty
    else:
        assert abs(reg.area - expected) <= 1e-4 * expected

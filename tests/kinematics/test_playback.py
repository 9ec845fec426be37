"""The arms at one moment: poses, contacts, spans of the cycle, overlaps, the shared run."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import shapely

from kinematics.bodies import arm_bodies
from kinematics.cell import Arm, Cell, Sequence, Target
from kinematics.cellfile import load_cell
from kinematics.evaluate import evaluate_cell
from kinematics.interference import arm_timeline, cell_interference
from kinematics.playback import (
    arm_pose,
    contacts_at,
    interval_overlaps,
    segment_spans,
    sequence_runs,
    slowest_segment,
)

ROOT = Path(__file__).resolve().parents[2]
ZONE = ROOT / "sample_cells" / "shared_zone_two_arm.cell.json"


def _swing_cell() -> Cell:
    """One arm swinging only its shoulder 120 degrees and back (both targets at the same
    radius, so q2 stays put), 0.5 s dwell at the first target."""
    arm = Arm(
        "a",
        "A",
        100,
        -50,
        30,
        400,
        250,
        (-180, 180),
        (-150, 150),
        elbow="positive",
        link_radii=(30, 25),
        joint_speed_dps=(60, 600),
        joint_accel_dps2=(120, 1200),
    )
    r = 500.0
    pts = []
    for ang in (0.0, 120.0):
        t = math.radians(30.0 + ang)
        pts.append((100 + r * math.cos(t), -50 + r * math.sin(t)))
    ts = (
        Target("p", "P", *pts[0], "a", extra={"dwell_s": 0.5}),
        Target("q", "Q", *pts[1], "a"),
    )
    return Cell("swing", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))


def _trapezoid(t: float, dist: float, v: float, a: float) -> float:
    """Distance travelled at time t of a rest-to-rest trapezoid (Nagarajan, Introduction
    to Industrial Robotics, eq. 10.28: T = D/v + v/a when D >= v^2/a)."""
    ta, T = v / a, dist / v + v / a
    if t <= ta:
        return 0.5 * a * t * t
    if t <= T - ta:
        return 0.5 * a * ta * ta + v * (t - ta)
    return dist - 0.5 * a * (T - t) ** 2


def test_pose_follows_the_trapezoid_and_the_closed_form_forward_kinematics():
    cell = _swing_cell()
    ev = evaluate_cell(cell)
    plan = ev.arms["a"].plans[0]
    arm = cell.arms[0]
    # 120 deg at 60 deg/s and 120 deg/s^2: 2.5 s (Nagarajan eq. 10.28; check value).
    assert [round(s.time_s, 9) for s in plan.segments] == [2.5, 2.5]
    tl = arm_timeline(plan, arm_bodies(arm))
    q_start = plan.segments[0].path.q_from
    sign = math.copysign(1.0, plan.segments[0].path.delta[0])
    for t in (0.2, 0.5, 0.9, 1.75, 2.6, 2.99):
        p = arm_pose(tl, t)
        moving = t > 0.5
        assert p.moving == moving
        s = _trapezoid(t - 0.5, 120.0, 60.0, 120.0) if moving else 0.0
        q1 = q_start[0] + sign * s
        assert p.q_deg[0] == pytest.approx(q1, abs=1e-9)
        assert p.q_deg[1] == pytest.approx(q_start[1], abs=1e-9)
        # Planar two-link forward kinematics (Spong, Hutchinson and Vidyasagar, Robot
        # Modeling and Control, planar elbow manipulator; from memory), base turned by
        # its heading.
        h1 = math.radians(arm.heading_deg + q1)
        h12 = h1 + math.radians(q_start[1])
        elbow = (arm.x + arm.a1 * math.cos(h1), arm.y + arm.a1 * math.sin(h1))
        tool = (elbow[0] + arm.a2 * math.cos(h12), elbow[1] + arm.a2 * math.sin(h12))
        want = np.array([[arm.x, arm.y], elbow, tool])
        assert np.allclose(p.joints, want, atol=1e-9)
        # The drawn link 2 outline is the capsule of radius 25 about elbow-tool: every
        # ring point lies 25 from the segment (shapely distance as the reference).
        ring = p.rings[p.body_names.index("link 2")]
        seg = shapely.LineString([elbow, tool])
        d = shapely.distance(shapely.points(ring), seg)
        assert np.allclose(d, 25.0, atol=1e-6)


def test_contact_marked_at_the_first_contact_on_the_symmetry_line(head_on):
    cell = head_on.cell()
    ev = evaluate_cell(cell)
    it = ev.interference()
    c = it.first_contact
    assert c is not None and head_on.within_one_sample(c.time_s, head_on.contact_time())
    (mark,) = contacts_at(it.timelines, c.time_s)
    assert mark.arms == c.arms and mark.bodies == c.bodies and mark.gap <= 0
    # Mirror images about x = 500: they touch on that line, at the tools' height.
    assert mark.xy[0] == pytest.approx(head_on.D_BASES / 2, abs=0.5)
    tool_y = head_on.tool(head_on.q1(c.time_s))[1]
    assert mark.xy[1] == pytest.approx(tool_y, abs=1.0)
    # Well before the meeting the arms are apart: nothing is marked.
    assert contacts_at(it.timelines, 0.5 * c.time_s) == ()


def test_spans_tile_the_run_and_match_the_plan_segments():
    cell = load_cell(ZONE)
    ev = evaluate_cell(cell)
    it = ev.interference()
    H = it.horizon_s
    for tl in it.timelines:
        spans = segment_spans(tl, 0.0, H)
        # Contiguous from 0 to the horizon: a cycle is its moves and dwells back to back
        # (the cycle time is their sum; common practice, no source).
        assert spans[0][0] == 0.0 and spans[-1][1] == pytest.approx(H, abs=1e-12)
        for (_a0, a1, *_), (b0, _b1, *_r) in zip(spans, spans[1:]):
            assert b0 == pytest.approx(a1, abs=1e-12)
        segs = tl.plan.segments
        inner = spans[1:-1]
        for t0, t1, k, kind in inner:
            want = segs[k].dwell_s if kind == "dwell" else segs[k].time_s
            assert t1 - t0 == pytest.approx(want, abs=1e-9)
        # A move starts where the arm's phase says that segment's move starts.
        for t0, _t1, k, kind in inner:
            if kind == "move":
                assert float(tl.phase(t0)) == pytest.approx(segs[k].move_start_s, abs=1e-9)


def test_overlaps_equal_dense_sampling():
    # Reference: membership on a fine grid (numpy), for random interval lists.
    rng = np.random.default_rng(8)
    grid = np.linspace(0.0, 10.0, 200_001)
    step = grid[1] - grid[0]
    for _ in range(20):

        def rand():
            ends = np.sort(rng.uniform(0, 10, size=2 * int(rng.integers(1, 5))))
            return [(float(a), float(b)) for a, b in ends.reshape(-1, 2)]

        a, b = rand(), rand()
        got = interval_overlaps(a, b)
        inside = np.zeros_like(grid, dtype=bool)
        for x0, x1 in got:
            inside |= (grid > x0) & (grid < x1)
        ina = np.zeros_like(inside)
        inb = np.zeros_like(inside)
        for x0, x1 in a:
            ina |= (grid > x0) & (grid < x1)
        for x0, x1 in b:
            inb |= (grid > x0) & (grid < x1)
        want = ina & inb
        # Equal everywhere except within one grid step of an end.
        ends = np.array([e for iv in (*a, *b) for e in iv])
        near = np.min(np.abs(grid[:, None] - ends[None, :]), axis=1) <= step
        assert np.array_equal(inside[~near], want[~near])


def test_the_evaluation_runs_the_arms_once_and_as_check_does():
    cell = load_cell(ZONE)
    ev = evaluate_cell(cell)
    it = ev.interference()
    assert ev.interference() is it  # shared by every view of this state
    ref = cell_interference(cell, ev, ev.spaces().zones)
    assert it.horizon_s == ref.horizon_s
    assert it.first_contact == ref.first_contact
    assert [(z.arms, z.space, z.intervals, z.suggested_start_shift_s) for z in it.zones] == [
        (z.arms, z.space, z.intervals, z.suggested_start_shift_s) for z in ref.zones
    ]


def test_one_arm_runs_without_the_shared_zones():
    cell = _swing_cell()
    it = evaluate_cell(cell).interference()
    assert it.horizon_s is None and len(it.timelines) == 1 and it.zones == ()


def test_sequence_runs_and_the_slowest_move():
    cell = load_cell(ROOT / "sample_cells" / "press_elbow_change.cell.json")
    ev = evaluate_cell(cell)
    runs = sequence_runs(cell, ev, ev.interference())
    assert [r.plan.arm for r in runs] == ["loader"] and runs[0].running
    plan = runs[0].plan
    times = [s.time_s for s in plan.segments]
    assert slowest_segment(plan) == times.index(max(times))

"""Arms in time: a hand-built head-on meeting, start shifts, zone occupancy, separation."""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import shapely
from scipy.optimize import brentq

from kinematics.bodies import arm_bodies
from kinematics.cell import Arm, Cell, Sequence, Target
from kinematics.cellfile import load_cell
from kinematics.evaluate import evaluate_cell
from kinematics.interference import arm_timeline, cell_interference, start_shift, zone_occupancy
from kinematics.plan import cell_planned_moves
from kinematics.report import check_report
from kinematics.spaces import cell_spaces
from kinematics.sweep import SAMPLE_FRACTION

ROOT = Path(__file__).resolve().parents[2]

D_BASES = 1000.0
A1, A2, Q2 = 300.0, 250.0, 30.0
R_LINK, R_TOOL = 20.0, 25.0
V, ACC = 90.0, 180.0  # shoulder: deg/s, deg/s^2


def _tool(q1: float) -> tuple[float, float]:
    t1, t2 = math.radians(q1), math.radians(q1 + Q2)
    return (A1 * math.cos(t1) + A2 * math.cos(t2), A1 * math.sin(t1) + A2 * math.sin(t2))


def head_on_cell(start_b: float = 0.0) -> Cell:
    """Two mirror-image arms 1000 apart; each swings its shoulder from 90 to 0 degrees
    (towards the other) and back, only q1 moving; the right arm is the left one mirrored
    about x = 500, so they first touch on that line."""
    common = dict(
        link_radii=(R_LINK, R_LINK),
        joint_speed_dps=(V, 500.0),
        joint_accel_dps2=(ACC, 2000.0),
        extra={"tool_body": {"radius": R_TOOL}},
    )
    left = Arm("L", "Left", 0, 0, 0, A1, A2, (-100, 100), (-145, 145), "positive", **common)
    right = Arm(
        "R", "Right", D_BASES, 0, 180, A1, A2, (-100, 100), (-145, 145), "negative", **common
    )
    (hx, hy), (mx, my) = _tool(90.0), _tool(0.0)
    ts = (
        Target("l_home", "L home", hx, hy, "L"),
        Target("l_meet", "L meet", mx, my, "L"),
        Target("r_home", "R home", D_BASES - hx, hy, "R"),
        Target("r_meet", "R meet", D_BASES - mx, my, "R"),
    )
    seqs = (
        Sequence("L", ("l_home", "l_meet")),
        Sequence("R", ("r_home", "r_meet"), {"start_s": start_b} if start_b else {}),
    )
    return Cell("head on", arms=(left, right), targets=ts, sequences=seqs)


def _q1(t: float) -> float:
    """Shoulder angle of the left arm during its first move, 90 -> 0 degrees: the
    trapezoid of Nagarajan, Introduction to Industrial Robotics, eq. 10.28 (constant
    acceleration, cruise, constant deceleration)."""
    dist = 90.0
    ta = V / ACC
    T = dist / V + V / ACC
    if t <= ta:
        s = 0.5 * ACC * t * t
    elif t <= T - ta:
        s = 0.5 * ACC * ta * ta + V * (t - ta)
    else:
        s = dist - 0.5 * ACC * (T - t) ** 2
    return 90.0 - s


def _max_x(q1: float) -> float:
    """Largest x of the left arm's bodies (links of radius 20, tool disc of radius 25)."""
    t1 = math.radians(q1)
    ex = A1 * math.cos(t1)
    return max(R_LINK, ex + R_LINK, _tool(q1)[0] + R_TOOL)


def _interference(cell: Cell):
    ev = evaluate_cell(cell)
    zones = cell_spaces(cell, ev, cell_planned_moves(cell, ev)).zones
    return ev, zones, cell_interference(cell, ev, zones)


def test_head_on_meeting_is_reported_at_the_computed_time_within_one_sample():
    cell = head_on_cell()
    _, _, it = _interference(cell)
    c = it.first_contact
    assert c is not None
    # By symmetry the arms first touch when the left arm's farthest point reaches x = 500.
    T1 = 90.0 / V + V / ACC  # 1.5 s
    t_true = brentq(lambda t: _max_x(_q1(t)) - D_BASES / 2, 0.0, T1)
    # One sample: the time in which the fastest body point (the tool disc's rim, at most
    # |tool| + 25 from the shoulder) moves a tenth of the smallest link radius at top speed.
    # Within one sample: no body point (the farthest is at most |tool| + 25 from the
    # shoulder; only q1 moves) travels more than a tenth of the smallest link radius
    # between the reported and the true time.
    reach = max(math.hypot(*_tool(q)) for q in (0.0, 90.0)) + R_TOOL
    assert math.radians(abs(_q1(c.time_s) - _q1(t_true))) * reach <= SAMPLE_FRACTION * R_LINK
    assert set(c.arms) == {"L", "R"} and c.bodies == ("tool", "tool")
    assert c.moves == (("l_home", "l_meet"), ("r_home", "r_meet"))
    assert it.min_separation.gap <= 0


def test_shifting_one_start_by_the_suggestion_clears_the_meeting():
    cell = head_on_cell()
    _, zones, it = _interference(cell)
    z = next(z for z in it.zones if z.space == "operating")
    assert z.overlap and z.suggested_start_shift_s is not None
    shift = z.suggested_start_shift_s
    period = it.timelines[1].cycle_time_s
    shifted = head_on_cell(start_b=shift % period)
    _, _, it2 = _interference(shifted)
    assert it2.first_contact is None
    assert it2.min_separation.gap > 0
    z2 = next(z for z in it2.zones if z.space == "operating")
    assert not z2.overlap and z2.suggested_start_shift_s == 0.0
    # And no smaller shift would have done (sampled check).
    for frac in (0.25, 0.5, 0.9):
        smaller = head_on_cell(start_b=(frac * shift) % period)
        assert _interference(smaller)[2].zones[-1].overlap


def test_smallest_separation_is_a_lower_bound_close_to_dense_sampling():
    # Reference: shapely distances between the bodies' polygons on a dense time grid.
    cell = head_on_cell(start_b=0.9)
    ev, _, it = _interference(cell)
    sep = it.min_separation
    assert sep.first_contact is None
    ta, tb = it.timelines
    ab, bb = arm_bodies(cell.arms[0]), arm_bodies(cell.arms[1])
    ts = np.linspace(0, it.horizon_s, 4001)
    qa, qb = ta.at(ts)[0], tb.at(ts)[0]
    dense = min(
        shapely.distance(
            shapely.union_all(list(ab.shapes(x).values())),
            shapely.union_all(list(bb.shapes(y).values())),
        )
        for x, y in zip(qa, qb)
    )
    # shapely's buffered circles lie inside the true ones (32 segments per quarter).
    poly_err = R_TOOL * (1 - math.cos(math.pi / 128)) * 2
    step = it.horizon_s / 4000 * math.radians(V) * 600 * 2
    assert sep.gap <= dense + poly_err + 1e-9
    assert sep.gap >= dense - 0.01 * R_LINK - step


def test_zone_occupancy_covers_the_true_interval_within_one_sample():
    # Reference: shapely distance between the left arm's bodies and a box in its way,
    # entry and exit times solved with scipy's brentq along the computed trapezoid.
    cell = head_on_cell()
    ev = evaluate_cell(cell)
    plan = ev.arms["L"].plans[0]
    bodies = arm_bodies(cell.arms[0])
    tl = arm_timeline(plan, bodies)
    zone = shapely.box(420, 150, 520, 260)

    def gap(t: float) -> float:
        q, _ = tl.at(t)
        shapes = bodies.shapes(q)
        return shapely.distance(shapely.union_all(list(shapes.values())), zone) - 1e-3

    T1 = 90.0 / V + V / ACC
    t_mid = T1  # at the meet pose the tool is over the box
    assert gap(t_mid) < 0
    t_in = brentq(gap, 0.0, t_mid)
    t_out = brentq(gap, t_mid, 2 * T1)
    ((a, b),) = zone_occupancy(tl, zone)
    assert a <= t_in + 1e-6 and b >= t_out - 1e-6
    # Within one sample: no body point travels more than a tenth of the smallest link
    # radius between the reported and the true times (only q1 moves; the farthest body
    # point is at most |tool| + 25 from the shoulder).
    reach = max(math.hypot(*_tool(q)) for q in (0.0, 90.0)) + R_TOOL
    one = SAMPLE_FRACTION * R_LINK
    assert math.radians(abs(_q1(t_in) - _q1(a))) * reach <= one
    # The return move is the first one mirrored in time.
    assert math.radians(abs(_q1(2 * T1 - t_out) - _q1(2 * T1 - b))) * reach <= one


def _clash(a, cyc_b, period, horizon, shift):
    """Whether b's cycle intervals, repeated every period and shifted, overlap a's."""
    b = [(x + shift + k * period, y + shift + k * period) for k in range(-3, 4) for x, y in cyc_b]
    return any(x0 < y1 and y0 < x1 for x0, x1 in a for y0, y1 in b if y1 > 0 and y0 < horizon)


def test_start_shift_is_the_smallest_that_separates_the_intervals():
    # Reference: a brute-force scan of shifts over one cycle.
    rng = np.random.default_rng(4)
    found = 0
    for _ in range(20):
        period = rng.uniform(2, 5)
        horizon = 2 * period
        b0 = rng.uniform(0, period)
        cyc_b = [(float(b0), float(b0 + rng.uniform(0.1, 0.6)))]
        a0 = rng.uniform(0, period)
        a = [(a0 + k * period, a0 + k * period + rng.uniform(0.1, 0.6)) for k in range(2)]
        got = start_shift(a, cyc_b, 0.0, period, horizon)
        grid = np.linspace(-period, period, 4001)
        free = [s for s in grid if not _clash(a, cyc_b, period, horizon, s)]
        if got is None:
            assert not free
            continue
        found += 1
        assert not _clash(a, cyc_b, period, horizon, got)
        assert not [s for s in free if abs(s) < abs(got) - 1e-3]
    assert found > 10


def test_the_two_arm_demo_overlaps_until_its_start_is_shifted():
    cell = load_cell(ROOT / "sample_cells" / "shared_zone_two_arm.cell.json")
    rep = check_report(cell)
    z = next(z for z in rep["interference"]["zones"] if z["space"] == "operating")
    assert z["overlap"] and z["suggested_start_shift_s"] is not None
    shift = z["suggested_start_shift_s"]
    k = next(i for i, s in enumerate(cell.sequences) if s.arm == z["arms"][1])
    seq = cell.sequences[k]
    period = next(q["cycle_time_s"] for q in rep["sequences"] if q["arm"] == z["arms"][1])
    start = (seq.extra.get("start_s", 0.0) + shift) % period
    moved = replace(seq, extra={**seq.extra, "start_s": start})
    seqs = cell.sequences[:k] + (moved,) + cell.sequences[k + 1 :]
    rep2 = check_report(replace(cell, sequences=seqs))
    z2 = next(z for z in rep2["interference"]["zones"] if z["space"] == "operating")
    assert not z2["overlap"]
    assert rep2["interference"]["first_contact"] is None

"""Move timing: trapezoid and triangle times, time synchronisation, jerk limits, profiles."""

from __future__ import annotations

import math

import numpy as np
import pytest
from ruckig import InputParameter, Ruckig, Synchronization, Trajectory

from kinematics.cell import Arm, Sequence, Target
from kinematics.motion import (
    MotionLimits,
    dwell_time,
    joint_jerk,
    missing_motion_fields,
    motion_limits,
    move_profile,
    move_time,
    start_time,
)


def nagarajan(D: float, v: float, a: float) -> float:
    """Nagarajan, Introduction to Industrial Robotics, eq. 10.28: rest-to-rest time of one
    joint: D/v + v/a when D >= v^2/a (trapezoid), else 2*sqrt(D/a) (triangle)."""
    D = abs(D)
    return D / v + v / a if D >= v * v / a else 2.0 * math.sqrt(D / a)


def test_trapezoid_and_triangle_cases_of_the_textbook():
    # Nagarajan, Introduction to Industrial Robotics, eq. 10.28, worked checks:
    # 120 deg at 60 deg/s and 120 deg/s^2 -> 2.5 s; 10 deg -> 0.577 s.
    lim = MotionLimits((60.0, 60.0), (120.0, 120.0))
    for joint in (0, 1):
        d = [0.0, 0.0]
        d[joint] = 120.0
        assert move_time(d, lim) == pytest.approx(2.5, abs=1e-9)
        d[joint] = -10.0
        assert move_time(d, lim) == pytest.approx(0.577, abs=5e-4)
        assert move_time(d, lim) == pytest.approx(2 * math.sqrt(10 / 120), abs=1e-9)
    assert move_profile((30.0, 0.0), (150.0, 0.0), lim).duration == pytest.approx(2.5, abs=1e-9)


@pytest.mark.parametrize("seed", range(5))
def test_single_joint_times_follow_the_closed_form(seed):
    # Nagarajan, eq. 10.28, over random distances, speeds and accelerations (both branches).
    rng = np.random.default_rng(seed)
    for _ in range(40):
        v, a = rng.uniform(50, 600), rng.uniform(200, 6000)
        D = rng.uniform(0.1, 2.5) * v * v / a
        lim = MotionLimits((v, 999.0), (a, 999.0))
        assert move_time([D, 0.0], lim) == pytest.approx(nagarajan(D, v, a), rel=1e-9)


def _peak_fits(D, lim):
    """Whether the slowest joint's trapezoid, scaled to the other joint's travel, stays
    within that joint's speed and acceleration (then both can run in proportion)."""
    T = [nagarajan(D[k], lim.speed_dps[k], lim.accel_dps2[k]) if D[k] else 0.0 for k in (0, 1)]
    L = int(np.argmax(T))
    o = 1 - L
    if D[o] == 0:
        return True
    v, a = lim.speed_dps[L], lim.accel_dps2[L]
    peak = min(v, math.sqrt(abs(D[L]) * a))
    ratio = abs(D[o]) / abs(D[L])
    return peak * ratio <= lim.speed_dps[o] * (1 + 1e-12) and a * ratio <= lim.accel_dps2[o] * (
        1 + 1e-12
    )


@pytest.mark.parametrize("seed", range(4))
def test_a_coordinated_move_lasts_as_long_as_its_slowest_joint(seed):
    # Common practice, no source: a coordinated rest-to-rest move lasts as long as its
    # slowest joint alone. Our moves also keep the joints in proportion (a straight joint
    # path, the one checked for collisions): never shorter than the slowest joint, and
    # exactly as long whenever its profile scaled down fits the other joint's limits
    # (checked with Nagarajan's eq. 10.28 for the peak speed).
    rng = np.random.default_rng(100 + seed)
    equal = longer = 0
    for _ in range(60):
        lim = MotionLimits(tuple(rng.uniform(100, 600, 2)), tuple(rng.uniform(500, 6000, 2)))
        D = rng.uniform(-180, 180, 2)
        alone = [nagarajan(D[k], lim.speed_dps[k], lim.accel_dps2[k]) for k in (0, 1)]
        t = float(move_time(D, lim))
        assert t >= max(alone) - 1e-9
        if _peak_fits(D, lim):
            assert t == pytest.approx(max(alone), rel=1e-9)
            equal += 1
        else:
            longer += 1
    assert equal > 20  # the common case


def test_demo_speeds_time_moves_by_the_slowest_joint():
    # The limits of the sample cells (invented): each joint's acceleration over its speed is
    # similar, so every move keeps to its slowest joint's time (common practice, no source).
    lim = MotionLimits((420.0, 540.0), (3200.0, 4200.0))
    rng = np.random.default_rng(7)
    for D in rng.uniform(-200, 200, (200, 2)):
        alone = max(nagarajan(D[k], lim.speed_dps[k], lim.accel_dps2[k]) for k in (0, 1))
        if _peak_fits(D, lim):
            assert move_time(D, lim) == pytest.approx(alone, rel=1e-9)


@pytest.mark.parametrize("seed", range(3))
def test_profiles_stay_straight_and_within_the_limits(seed):
    rng = np.random.default_rng(seed)
    for jerk in (None, (20000.0, 50000.0)):
        lim = MotionLimits((300.0, 500.0), (2000.0, 5000.0), jerk)
        for _ in range(10):
            qa, qb = rng.uniform(-150, 150, 2), rng.uniform(-150, 150, 2)
            p = move_profile(qa, qb, lim)
            t = np.linspace(0, p.duration, 2001)
            q, qd = p.at(t)
            d = qb - qa
            # In proportion: (q - qa) stays parallel to the travel.
            cross = (q[:, 0] - qa[0]) * d[1] - (q[:, 1] - qa[1]) * d[0]
            assert np.max(np.abs(cross)) <= 1e-7 * np.dot(d, d)
            assert np.allclose(q[0], qa) and np.allclose(q[-1], qb, atol=1e-9)
            assert np.all(np.abs(qd) <= np.asarray(lim.speed_dps) * (1 + 1e-9))
            acc = np.diff(qd, axis=0) / np.diff(t)[:, None]
            assert np.all(np.abs(acc) <= np.asarray(lim.accel_dps2) * (1 + 1e-6) + 1e-6)


def test_profile_positions_equal_ruckigs_own_sampling():
    # Reference library: ruckig's Trajectory.at_time on the same two-joint input.
    lim = MotionLimits((380.0, 500.0), (2800.0, 3800.0), (30000.0, 45000.0))
    qa, qb = np.array([-40.0, 75.0]), np.array([95.0, -20.0])
    p = move_profile(qa, qb, lim)
    otg, inp, traj = Ruckig(2), InputParameter(2), Trajectory(2)
    inp.current_position, inp.target_position = qa.tolist(), qb.tolist()
    inp.max_velocity, inp.max_acceleration = list(lim.speed_dps), list(lim.accel_dps2)
    inp.max_jerk = list(lim.jerk_dps3)
    inp.synchronization = Synchronization.Phase
    otg.calculate(inp, traj)
    assert p.straight_in_time and p.duration == pytest.approx(traj.duration, rel=1e-12)
    for t in np.linspace(0, p.duration, 37):
        pos, vel, _ = traj.at_time(t)
        q, qd = p.at(t)
        assert q == pytest.approx(pos, abs=1e-9)
        assert qd == pytest.approx(vel, abs=1e-7)


def test_jerk_limit_never_shortens_the_move_and_approaches_the_trapezoid():
    # Common practice, no source: limiting the jerk can only lengthen a move; with an ever
    # larger jerk limit the time tends to the trapezoid's (Nagarajan, eq. 10.28).
    base = MotionLimits((60.0, 60.0), (120.0, 120.0))
    for D in ([120.0, 0.0], [10.0, 3.0], [80.0, -70.0]):
        trap = float(move_time(D, base))
        times = []
        for j in (200.0, 1e3, 1e4, 1e5, 1e6, 1e8):
            t = float(move_time(D, MotionLimits(base.speed_dps, base.accel_dps2, (j, j))))
            assert t >= trap - 1e-9
            times.append(t)
        assert all(a >= b - 1e-12 for a, b in zip(times, times[1:]))
        assert times[-1] == pytest.approx(trap, rel=1e-5)
        assert times[0] > trap * 1.01


def test_no_move_takes_no_time():
    lim = MotionLimits((60.0, 60.0), (120.0, 120.0))
    assert move_time([[0.0, 0.0]], lim).tolist() == [0.0]
    p = move_profile((5.0, 5.0), (5.0, 5.0), lim)
    assert p.duration == 0.0 and p.at(0.0)[0].tolist() == [5.0, 5.0]


def test_cell_keys_are_read_with_defaults_and_missing_fields_named():
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150))
    assert missing_motion_fields(arm) == ("joint_speed_dps", "joint_accel_dps2")
    assert motion_limits(arm) is None and joint_jerk(arm) is None
    assert dwell_time(Target("t", "T", 0, 0, "a")) == 0.0
    assert start_time(Sequence("a", ("t",), {"start_s": 1.5})) == 1.5
    with pytest.raises(ValueError, match="dwell_s"):
        dwell_time(Target("t", "T", 0, 0, "a", {"dwell_s": -1}))
    with pytest.raises(ValueError):
        MotionLimits((0.0, 1.0), (1.0, 1.0))

"""Move timing: rest-to-rest joint moves limited by speed, acceleration and jerk.

A move between two poses of an arm runs in a straight line in joint space: both joints
start together, stop together and stay in proportion on the way, so the path the arm
follows is the one :mod:`kinematics.sweep` checks against the fixtures. The profile is
computed by the ruckig library (time-optimal, time-synchronised, rest to rest) with
phase synchronisation, which keeps the joints in proportion. The move then lasts as long
as its slowest joint alone would take. In the rare case where that joint's profile,
scaled down for the other joint, would overrun the other joint's speed, acceleration or
jerk limit, ruckig could only finish in that time by bending the path; the move is then
timed as the time-optimal move along the straight path instead (ruckig on the path
fraction, with limits ``min_j limit_j / |delta_j|``), which takes somewhat longer.

Without a jerk limit the profile is the classic trapezoid (or triangle for short moves).

Cell-file keys read here (kept by the loader in each object's ``extra``):

=========================  ==================================================================
key                        meaning
=========================  ==================================================================
arm ``joint_jerk_dps3``    ``[j1, j2]``, positive: joint jerk limits in degrees per second
                           cubed (optional; without it the acceleration switches at once)
target ``dwell_s``         seconds spent at the target (gripping, placing), 0 or more
                           (default 0)
sequence ``start_s``       when the arm starts its cycle, seconds, 0 or more (default 0)
=========================  ==================================================================

The loader (:mod:`kinematics.cellfile`) checks these keys; the readers here also refuse
bad values in cells built in code (ValueError). The arm's ``joint_speed_dps`` and
``joint_accel_dps2`` must both be given for a time; an
arm without them gets no time and the report names the missing fields (nothing is
invented).
"""

from __future__ import annotations

import atexit
import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from ruckig import InputParameter, Result, Ruckig, Synchronization, Trajectory

from .cell import Arm, Sequence, Target

__all__ = [
    "MOTION_FIELDS",
    "MotionLimits",
    "MoveProfile",
    "missing_motion_fields",
    "motion_limits",
    "joint_jerk",
    "dwell_time",
    "start_time",
    "move_profile",
    "move_time",
]

#: Arm fields a move time needs.
MOTION_FIELDS = ("joint_speed_dps", "joint_accel_dps2")

# Joint travel below this (degrees) is no move at all.
_NO_MOVE_DEG = 1e-12
# Relative tolerance of the check that ruckig kept the joints in proportion.
_STRAIGHT_REL = 1e-9


def _is_number(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)


def joint_jerk(arm: Arm) -> tuple[float, float] | None:
    """The arm's ``joint_jerk_dps3`` (degrees per second cubed) when given, else None."""
    v = arm.extra.get("joint_jerk_dps3")
    if v is None:
        return None
    if (
        not isinstance(v, (list, tuple))
        or len(v) != 2
        or not all(_is_number(j) and j > 0 for j in v)
    ):
        raise ValueError(f"arm {arm.id!r}: joint_jerk_dps3 must be 2 positive numbers, got {v!r}")
    return (float(v[0]), float(v[1]))


def dwell_time(target: Target) -> float:
    """Seconds spent at a target (its ``dwell_s``, default 0).

    Examples
    --------
    >>> dwell_time(Target("t", "T", 0, 0, "a", extra={"dwell_s": 0.4}))
    0.4
    """
    v = target.extra.get("dwell_s")
    if v is None:
        return 0.0
    if not _is_number(v) or v < 0:
        raise ValueError(f"target {target.id!r}: dwell_s must be 0 or more, got {v!r}")
    return float(v)


def start_time(sequence: Sequence) -> float:
    """When the arm starts the sequence's cycle (its ``start_s``, default 0), seconds."""
    v = sequence.extra.get("start_s")
    if v is None:
        return 0.0
    if not _is_number(v) or v < 0:
        raise ValueError(f"sequence of arm {sequence.arm!r}: start_s must be 0 or more, got {v!r}")
    return float(v)


def missing_motion_fields(arm: Arm) -> tuple[str, ...]:
    """Names of the fields a move time needs that the arm does not have.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), joint_speed_dps=(300, 400))
    >>> missing_motion_fields(arm)
    ('joint_accel_dps2',)
    """
    have = {"joint_speed_dps": arm.joint_speed_dps, "joint_accel_dps2": arm.joint_accel_dps2}
    return tuple(name for name in MOTION_FIELDS if have[name] is None)


@dataclass(frozen=True)
class MotionLimits:
    """Joint limits of a move: speed, acceleration and optional jerk, per joint.

    Attributes
    ----------
    speed_dps, accel_dps2 : tuple of float
        Degrees per second and per second squared.
    jerk_dps3 : tuple of float or None
        Degrees per second cubed; None for no jerk limit (trapezoidal profiles).
    """

    speed_dps: tuple[float, float]
    accel_dps2: tuple[float, float]
    jerk_dps3: tuple[float, float] | None = None

    def __post_init__(self) -> None:
        vals = list(self.speed_dps) + list(self.accel_dps2) + list(self.jerk_dps3 or ())
        if not all(_is_number(v) and v > 0 for v in vals):
            raise ValueError(f"motion limits must be positive finite numbers, got {self!r}")

    @property
    def jerk_or_inf(self) -> tuple[float, float]:
        """The jerk limits, infinite when none is set."""
        return self.jerk_dps3 if self.jerk_dps3 is not None else (math.inf, math.inf)


def motion_limits(arm: Arm) -> MotionLimits | None:
    """The arm's motion limits, None when a field is missing (:func:`missing_motion_fields`).

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150),
    ...           joint_speed_dps=(300, 400), joint_accel_dps2=(2000, 3000),
    ...           extra={"joint_jerk_dps3": [20000, 30000]})
    >>> motion_limits(arm).jerk_dps3
    (20000.0, 30000.0)
    """
    if arm.joint_speed_dps is None or arm.joint_accel_dps2 is None:
        return None
    return MotionLimits(
        (float(arm.joint_speed_dps[0]), float(arm.joint_speed_dps[1])),
        (float(arm.joint_accel_dps2[0]), float(arm.joint_accel_dps2[1])),
        joint_jerk(arm),
    )


@dataclass(frozen=True)
class MoveProfile:
    """One timed move: the path fraction s(t) from 0 to 1 as a piecewise cubic.

    ``q(t) = q_from + s(t) * (q_to - q_from)``: the joints stay in proportion, so the arm
    follows the straight joint-space path.

    Attributes
    ----------
    q_from, q_to : tuple of float
        Joint angles (degrees) at the start and end.
    duration : float
        Seconds.
    phase_start : ndarray, shape (K,)
        Start time of each phase of the profile (seconds from the move's start).
    s0, v0, a0, jerk : ndarray, shape (K,)
        Path fraction, its rate, its second derivative at each phase start and its third
        derivative during the phase (from ruckig's profile of the leading joint).
    straight_in_time : bool
        True when the move lasts as long as its slowest joint alone; False when that
        would have bent the path and the straight-path time was used (see the module
        docstring).
    """

    q_from: tuple[float, float]
    q_to: tuple[float, float]
    duration: float
    phase_start: NDArray[np.float64]
    s0: NDArray[np.float64]
    v0: NDArray[np.float64]
    a0: NDArray[np.float64]
    jerk: NDArray[np.float64]
    straight_in_time: bool = True

    @property
    def delta(self) -> NDArray[np.float64]:
        """Joint travel (degrees)."""
        return np.asarray(self.q_to) - np.asarray(self.q_from)

    def fraction(
        self, t: ArrayLike
    ) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
        """Path fraction s, ds/dt and d2s/dt2 at move times ``t`` (clipped to the move)."""
        t = np.clip(np.asarray(t, dtype=float), 0.0, self.duration)
        if len(self.phase_start) == 0:
            z = np.zeros_like(t)
            return np.where(t >= self.duration, 1.0, 0.0) + z, z, z
        k = np.clip(np.searchsorted(self.phase_start, t, side="right") - 1, 0, None)
        h = t - self.phase_start[k]
        j = self.jerk[k]
        a = self.a0[k] + j * h
        v = self.v0[k] + (self.a0[k] + 0.5 * j * h) * h
        s = self.s0[k] + (self.v0[k] + (0.5 * self.a0[k] + j * h / 6.0) * h) * h
        return np.clip(s, 0.0, 1.0), v, a

    def at(self, t: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Joint angles (degrees) and joint speeds (degrees per second) at move times ``t``.

        Returns arrays of shape ``shape(t) + (2,)``.

        Examples
        --------
        Nagarajan, Introduction to Industrial Robotics, eq. 10.28: 120 deg at 60 deg/s and
        120 deg/s^2 takes 2.5 s; half way through it runs at full speed.

        >>> p = move_profile((0, 0), (120, 0), MotionLimits((60, 60), (120, 120)))
        >>> q, qd = p.at([0.0, 1.25, 2.5])
        >>> q[:, 0].round(6).tolist(), qd[:, 0].round(6).tolist()
        ([0.0, 60.0, 120.0], [0.0, 60.0, 0.0])
        """
        s, v, _ = self.fraction(t)
        d = self.delta
        q = np.asarray(self.q_from) + s[..., None] * d
        return q, v[..., None] * d


class _Solver:
    """One ruckig instance per number of joints, reused (ruckig objects are cheap to keep)."""

    def __init__(self, dofs: int) -> None:
        self.otg = Ruckig(dofs)
        self.inp = InputParameter(dofs)
        self.traj = Trajectory(dofs)
        self.inp.current_position = [0.0] * dofs
        self.inp.current_velocity = [0.0] * dofs
        self.inp.current_acceleration = [0.0] * dofs
        self.inp.target_velocity = [0.0] * dofs
        self.inp.target_acceleration = [0.0] * dofs
        self.inp.synchronization = Synchronization.Phase
        self.limits: tuple = ()

    def solve(self, target: list[float], v: list[float], a: list[float], j: list[float]) -> Any:
        inp = self.inp
        inp.target_position = target
        if (v, a, j) != self.limits:  # setting limits costs as much as the calculation
            inp.max_velocity = v
            inp.max_acceleration = a
            inp.max_jerk = j
            self.limits = (v, a, j)
        res = self.otg.calculate(inp, self.traj)
        if res not in (Result.Working, Result.Finished):
            raise ValueError(f"ruckig could not time the move {target} ({res})")
        return self.traj


_SOLVERS: dict[int, _Solver] = {}
# Drop the ruckig objects before the interpreter tears down: nanobind reports objects it
# still sees alive at exit as leaks, on the user's terminal.
atexit.register(_SOLVERS.clear)


def _solver(dofs: int) -> _Solver:
    s = _SOLVERS.get(dofs)
    if s is None:
        s = _SOLVERS[dofs] = _Solver(dofs)
    return s


def _straight(traj: Any, d: tuple[float, float]) -> bool:
    """Whether ruckig's two-joint profile keeps the joints in proportion."""
    p0, p1 = traj.profiles[0]
    # Phase synchronisation gives every joint the leading joint's phase durations.
    if p0.t != p1.t:
        return False
    d0, d1 = d
    tol = _STRAIGHT_REL * max(abs(d0), abs(d1)) ** 2
    return all(abs(a * d1 - b * d0) <= tol for a, b in zip(p0.p, p1.p))


def _path_limits(d: tuple[float, float], lim: MotionLimits) -> tuple[float, float, float]:
    """Limits of the path fraction: the tightest joint's limit over its travel."""
    vs, as_, js = math.inf, math.inf, math.inf
    jerk = lim.jerk_or_inf
    for k in range(2):
        if abs(d[k]) > _NO_MOVE_DEG:
            vs = min(vs, lim.speed_dps[k] / abs(d[k]))
            as_ = min(as_, lim.accel_dps2[k] / abs(d[k]))
            js = min(js, jerk[k] / abs(d[k]))
    return vs, as_, js


def _time(d: tuple[float, float], lim: MotionLimits) -> tuple[float, bool, Any, int]:
    """Duration, straight-in-time flag, ruckig trajectory and the joint its profile is
    read from (-1: the path-fraction profile)."""
    jerk = list(lim.jerk_or_inf)
    traj = _solver(2).solve([d[0], d[1]], list(lim.speed_dps), list(lim.accel_dps2), jerk)
    if _straight(traj, d):
        lead = 0 if abs(d[0]) >= abs(d[1]) else 1
        return float(traj.duration), True, traj, lead
    vs, as_, js = _path_limits(d, lim)
    traj1 = _solver(1).solve([1.0], [vs], [as_], [js])
    return float(traj1.duration), False, traj1, -1


def move_time(delta_deg: ArrayLike, limits: MotionLimits) -> NDArray[np.float64]:
    """Duration (seconds) of rest-to-rest straight joint moves, vectorised over moves.

    Parameters
    ----------
    delta_deg : array_like, shape S + (2,)
        Joint travel (q1, q2) in degrees per move.
    limits : MotionLimits

    Returns
    -------
    ndarray, shape S

    Examples
    --------
    Nagarajan, Introduction to Industrial Robotics, eq. 10.28: T = D/v + v/a when
    D >= v^2/a, else 2*sqrt(D/a); 120 deg at 60 deg/s and 120 deg/s^2 -> 2.5 s, 10 deg ->
    0.577 s. A coordinated move lasts as long as its slowest joint.

    >>> lim = MotionLimits((60, 60), (120, 120))
    >>> move_time([[120, 0], [10, 0], [120, -10]], lim).round(3).tolist()
    [2.5, 0.577, 2.5]
    """
    d = np.asarray(delta_deg, dtype=float)
    shape = d.shape[:-1]
    flat = np.abs(d.reshape(-1, 2))
    out = np.empty(len(flat))
    seen: dict[tuple[float, float], float] = {}
    for i, (d1, d2) in enumerate(flat.tolist()):
        key = (d1, d2)
        t = seen.get(key)
        if t is None:
            t = 0.0 if max(d1, d2) <= _NO_MOVE_DEG else _time(key, limits)[0]
            seen[key] = t
        out[i] = t
    return out.reshape(shape)


def move_profile(q_from: ArrayLike, q_to: ArrayLike, limits: MotionLimits) -> MoveProfile:
    """The timed straight joint move between two poses (see the module docstring).

    Examples
    --------
    Nagarajan, eq. 10.28, the short case: 10 deg is a triangle of 2*sqrt(10/120) s.

    >>> p = move_profile((0, 0), (10, 5), MotionLimits((60, 60), (120, 120)))
    >>> round(p.duration, 3), p.straight_in_time
    (0.577, True)
    """
    qa = tuple(float(v) for v in np.asarray(q_from, dtype=float).reshape(2))
    qb = tuple(float(v) for v in np.asarray(q_to, dtype=float).reshape(2))
    d = (qb[0] - qa[0], qb[1] - qa[1])
    empty = np.zeros(0)
    if max(abs(d[0]), abs(d[1])) <= _NO_MOVE_DEG:
        return MoveProfile(qa, qb, 0.0, empty, empty, empty, empty, empty, True)
    duration, straight, traj, lead = _time(d, limits)
    prof = traj.profiles[0][max(lead, 0)]
    scale = 1.0 if lead < 0 else d[lead]
    t = np.asarray(prof.t, dtype=float)
    keep = t > 0
    start = np.concatenate([[0.0], np.cumsum(t)[:-1]])
    p = np.asarray(prof.p, dtype=float)[:-1] / scale
    v = np.asarray(prof.v, dtype=float)[:-1] / scale
    a = np.asarray(prof.a, dtype=float)[:-1] / scale
    j = np.asarray(prof.j, dtype=float) / scale
    return MoveProfile(
        qa,
        qb,
        duration,
        start[keep].copy(),
        p[keep].copy(),
        v[keep].copy(),
        a[keep].copy(),
        j[keep].copy(),
        straight,
    )

"""The arms at one moment of their cycles: what a playback of the cell draws.

The arms run their planned cycles together as :mod:`kinematics.interference` runs them
(each from its ``start_s``, each repeating). These helpers answer, for one absolute time
or a span of times, where every arm is (joint angles and speeds from
:meth:`kinematics.interference.ArmTimeline.at`, body outlines from the one posing
function :func:`kinematics.bodies.pose`), whether two arms touch there and where, which
move of a cycle is the slowest, and when two arms' zone occupancies overlap. Front ends
draw the arrays; they compute no geometry of their own.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely
import shapely.ops
from numpy.typing import NDArray

from .bodies import ARC_POINTS, arm_bodies, body_rings, pose
from .fk import joint_points
from .interference import ArmTimeline, arm_distance, arm_timeline, pose_cores

__all__ = [
    "ArmPose",
    "ContactMark",
    "SequenceRun",
    "arm_pose",
    "poses_at",
    "contacts_at",
    "slowest_segment",
    "move_tool_path",
    "interval_overlaps",
    "motion_horizon",
    "sample_times",
    "sequence_runs",
    "segment_spans",
]


@dataclass(frozen=True)
class ArmPose:
    """One arm at one absolute time.

    Attributes
    ----------
    arm : str
    time_s : float
        The absolute time.
    q_deg : ndarray, shape (2,)
        Joint angles (q1, q2), the representatives the plan uses.
    qdot_dps : ndarray, shape (2,)
        Joint speeds, degrees per second.
    segment : int
        Index into the plan's segments of the segment running.
    moving : bool
        Moving (True) or dwelling at the segment's ``from`` target.
    joints : ndarray, shape (3, 2)
        Base, elbow and tool point.
    body_names : tuple of str
    rings : tuple of ndarray
        Closed outline (K, 2) of each body, in ``body_names`` order.
    """

    arm: str
    time_s: float
    q_deg: NDArray[np.float64]
    qdot_dps: NDArray[np.float64]
    segment: int
    moving: bool
    joints: NDArray[np.float64]
    body_names: tuple[str, ...]
    rings: tuple[NDArray[np.float64], ...]


@dataclass(frozen=True)
class ContactMark:
    """Two arms touching at one time.

    Attributes
    ----------
    time_s : float
    arms : tuple of str
    bodies : tuple of str
        The touching body of each arm.
    gap : float
        The engine's gap there (0 or less).
    xy : tuple of float
        Where they touch: midway between the two bodies' nearest boundary points (inside
        both where they overlap).
    """

    time_s: float
    arms: tuple[str, str]
    bodies: tuple[str, str]
    gap: float
    xy: tuple[float, float]


@dataclass(frozen=True)
class SequenceRun:
    """A planned sequence running over and over, for plotting it over time.

    Attributes
    ----------
    plan : kinematics.plan.SequencePlan
    timeline : ArmTimeline
    running : bool
        The cycle the arm runs together with the other arms (an arm with several
        sequences runs its first one with a cycle time).
    """

    plan: Any
    timeline: ArmTimeline
    running: bool


def arm_pose(timeline: ArmTimeline, time_s: float, arc_points: int = ARC_POINTS) -> ArmPose:
    """Where an arm running its cycle is at an absolute time, with its bodies' outlines.

    Examples
    --------
    An arm swinging its shoulder 120 degrees at 60 deg/s and 120 deg/s^2 takes 2.5 s
    (Nagarajan, Introduction to Industrial Robotics, eq. 10.28): at 1.25 s it is halfway.

    >>> from kinematics.cell import Arm, Cell, Sequence, Target
    >>> from kinematics.evaluate import evaluate_cell
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), elbow="positive",
    ...           joint_speed_dps=(60, 600), joint_accel_dps2=(120, 1200))
    >>> ts = (Target("p", "P", 650, 0.001, "a"), Target("q", "Q", -325, 562.9165, "a"))
    >>> cell = Cell("c", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))
    >>> plan = evaluate_cell(cell).arms["a"].plans[0]
    >>> p = arm_pose(arm_timeline(plan, arm_bodies(arm)), 1.25)
    >>> round(float(p.q_deg[0]), 1), p.moving, p.body_names[:2]
    (60.0, True, ('link 1', 'link 2'))
    """
    t = float(time_s)
    q, qd = timeline.at(t)
    q, qd = np.asarray(q, dtype=float).reshape(2), np.asarray(qd, dtype=float).reshape(2)
    seg = int(timeline.segment_at(t))
    moving = bool(timeline.phase(t) > timeline.plan.segments[seg].move_start_s)
    arm = timeline.bodies.arm
    b, e, tool = joint_points(arm.a1, arm.a2, q[0], q[1], arm.x, arm.y, arm.heading_deg)
    posed = pose(timeline.bodies, q[None, :])
    rings = tuple(body_rings(pb, arc_points)[0] for pb in posed)
    return ArmPose(
        timeline.arm,
        t,
        q,
        qd,
        seg,
        moving,
        np.stack([b, e, tool]),
        tuple(pb.body.name for pb in posed),
        rings,
    )


def poses_at(
    timelines: Sequence[ArmTimeline], time_s: float, arc_points: int = ARC_POINTS
) -> tuple[ArmPose, ...]:
    """:func:`arm_pose` of every timeline at one absolute time."""
    return tuple(arm_pose(tl, time_s, arc_points) for tl in timelines)


def _core_geometry(core: Any, k: int) -> shapely.Geometry:
    if core.W is not None:
        return shapely.Polygon(core.W[k])
    a, b = core.a[k], core.b[k]
    if np.allclose(a, b):
        return shapely.Point(a)
    return shapely.LineString([a, b])


def contacts_at(timelines: Sequence[ArmTimeline], time_s: float) -> tuple[ContactMark, ...]:
    """Every two arms whose bodies touch at an absolute time, with where they touch.

    Whether they touch is the engine's own test (:func:`kinematics.interference.
    arm_distance`: gap 0 or less), so at a reported first contact time the two arms are
    marked touching.

    Examples
    --------
    Two arms stretched towards each other, bases 1330 apart, links of radius 20: their
    link 2 tips are 1330 - 2 * 649.9 = 30.2 apart, less than the two radii, so they
    touch, midway between the tips at x = 665.

    >>> from kinematics.cell import Arm, Cell, Sequence, Target
    >>> from kinematics.evaluate import evaluate_cell
    >>> kw = dict(link_radii=(20, 20), elbow="positive", joint_speed_dps=(90, 90),
    ...           joint_accel_dps2=(900, 900))
    >>> a = Arm("a", "A", 0, 0, 0, 400, 250, (-90, 90), (-150, 150), **kw)
    >>> b = Arm("b", "B", 1330, 0, 180, 400, 250, (-90, 90), (-150, 150), **kw)
    >>> ts = (Target("p", "P", 649.9, 0, "a"), Target("q", "Q", 0, 649.9, "a"),
    ...       Target("r", "R", 680.1, 0, "b"), Target("s", "S", 1330, -649.9, "b"))
    >>> seqs = (Sequence("a", ("p", "q")), Sequence("b", ("r", "s")))
    >>> ev = evaluate_cell(Cell("c", arms=(a, b), targets=ts, sequences=seqs))
    >>> (c,) = contacts_at(ev.interference().timelines, 0.0)
    >>> c.arms, c.bodies, round(c.xy[0]), round(c.gap, 1)
    (('a', 'b'), ('link 2', 'link 2'), 665, -9.8)
    """
    t = float(time_s)
    tls = list(timelines)
    if len(tls) < 2:
        return ()
    cores = [pose_cores(tl.bodies, tl.at(t)[0].reshape(1, 2)) for tl in tls]
    out = []
    for i in range(len(tls)):
        for j in range(i + 1, len(tls)):
            gap, bi, bj = arm_distance(cores[i], cores[j])
            if not float(gap[0]) <= 0.0:
                continue
            u, v = cores[i][int(bi[0])], cores[j][int(bj[0])]
            gu, gv = _core_geometry(u, 0), _core_geometry(v, 0)
            pu, pv = (
                np.asarray(p.coords[0], dtype=float) for p in shapely.ops.nearest_points(gu, gv)
            )
            d = float(np.hypot(*(pv - pu)))
            if d > 0:
                w = (pv - pu) / d
                xy = 0.5 * ((pu + u.radius * w) + (pv - v.radius * w))
            else:
                xy = pu
            out.append(
                ContactMark(
                    t,
                    (tls[i].arm, tls[j].arm),
                    (u.name, v.name),
                    float(gap[0]),
                    (float(xy[0]), float(xy[1])),
                )
            )
    return tuple(out)


def slowest_segment(plan: Any) -> int | None:
    """Index of the plan's longest move (the first of equally long ones); None without
    segments.

    Examples
    --------
    >>> from types import SimpleNamespace as S
    >>> slowest_segment(S(segments=(S(time_s=0.4), S(time_s=0.9), S(time_s=0.9))))
    1
    >>> slowest_segment(S(segments=())) is None
    True
    """
    segs = tuple(plan.segments)
    if not segs:
        return None
    times = [float(s.time_s) for s in segs]
    return times.index(max(times))


def move_tool_path(timeline: ArmTimeline, index: int, samples: int = 48) -> NDArray[np.float64]:
    """The tool point along one move of the cycle, shape (samples, 2), in world coordinates.

    Examples
    --------
    A shoulder-only swing keeps the tool on a circle of radius a1 + a2 about the base.

    >>> from kinematics.cell import Arm, Cell, Sequence, Target
    >>> from kinematics.evaluate import evaluate_cell
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), elbow="positive",
    ...           joint_speed_dps=(60, 600), joint_accel_dps2=(120, 1200))
    >>> ts = (Target("p", "P", 650, 0.001, "a"), Target("q", "Q", -325, 562.9165, "a"))
    >>> cell = Cell("c", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))
    >>> tl = arm_timeline(evaluate_cell(cell).arms["a"].plans[0], arm_bodies(arm))
    >>> xy = move_tool_path(tl, 0, 5)
    >>> np.hypot(xy[:, 0], xy[:, 1]).round(2).tolist()
    [650.0, 650.0, 650.0, 650.0, 650.0]
    """
    seg = timeline.plan.segments[index]
    q = seg.path.at(np.linspace(0.0, 1.0, max(int(samples), 2)))
    arm = timeline.bodies.arm
    _b, _e, tool = joint_points(arm.a1, arm.a2, q[:, 0], q[:, 1], arm.x, arm.y, arm.heading_deg)
    return tool


def interval_overlaps(
    a: Sequence[tuple[float, float]], b: Sequence[tuple[float, float]]
) -> tuple[tuple[float, float], ...]:
    """Where two lists of time intervals overlap (open overlaps; touching ends do not
    count), sorted and merged.

    Examples
    --------
    >>> interval_overlaps([(0.0, 2.0), (5.0, 6.0)], [(1.5, 5.5), (2.0, 3.0)])
    ((1.5, 2.0), (5.0, 5.5))
    >>> interval_overlaps([(0.0, 1.0)], [(1.0, 2.0)])
    ()
    """
    parts = sorted(
        (max(x0, y0), min(x1, y1)) for x0, x1 in a for y0, y1 in b if max(x0, y0) < min(x1, y1)
    )
    out: list[list[float]] = []
    for lo, hi in parts:
        if out and lo <= out[-1][1]:
            out[-1][1] = max(out[-1][1], hi)
        else:
            out.append([float(lo), float(hi)])
    return tuple((lo, hi) for lo, hi in out)


def motion_horizon(interference: Any) -> float | None:
    """The span of time a playback covers: the horizon the arms were checked over, or
    with one arm running its cycle time; None when no arm runs.

    Examples
    --------
    >>> from types import SimpleNamespace as S
    >>> motion_horizon(S(horizon_s=2.5, timelines=()))
    2.5
    >>> motion_horizon(S(horizon_s=None, timelines=(S(cycle_time_s=1.2),)))
    1.2
    >>> motion_horizon(S(horizon_s=None, timelines=())) is None
    True
    """
    if interference.horizon_s is not None:
        return float(interference.horizon_s)
    periods = [tl.cycle_time_s for tl in interference.timelines]
    return float(max(periods)) if periods else None


def sample_times(timelines: Sequence[ArmTimeline], t0: float, t1: float, n: int = 600):
    """Times in [t0, t1] for plotting joint curves: an even grid of ``n`` points plus every
    time a dwell or a move starts or ends, so the curves' corners are exact.

    Examples
    --------
    >>> sample_times([], 0.0, 1.0, 5).tolist()
    [0.0, 0.25, 0.5, 0.75, 1.0]
    """
    parts = [np.linspace(float(t0), float(t1), max(int(n), 2))]
    parts += [tl.boundaries(float(t0), float(t1)) for tl in timelines]
    return np.unique(np.concatenate(parts))


def sequence_runs(cell: Any, evaluation: Any, interference: Any) -> tuple[SequenceRun, ...]:
    """Every planned sequence with a cycle time, in file order, as a timeline from its
    ``start_s``; the arms' running cycles are the interference run's own timelines."""
    running = {id(tl.plan): tl for tl in interference.timelines}
    out = []
    for k, _seq in enumerate(cell.sequences):
        plan = None
        for ev in evaluation.arms.values():
            plan = next((p for p in ev.plans if p.sequence_index == k), None)
            if plan is not None:
                break
        if plan is None or plan.cycle_time_s is None or not plan.segments:
            continue
        tl = running.get(id(plan))
        if tl is None:
            ev = evaluation.arms[plan.arm]
            bodies = ev.bodies if ev.bodies is not None else arm_bodies(ev.arm)
            tl = arm_timeline(plan, bodies)
        out.append(SequenceRun(plan, tl, id(plan) in running))
    return tuple(out)


def segment_spans(
    timeline: ArmTimeline, t0: float, t1: float
) -> list[tuple[float, float, int, str]]:
    """The dwells and moves of a repeating cycle within [t0, t1], as absolute times.

    Returns
    -------
    list of (start, end, segment index, kind)
        ``kind`` is ``"dwell"`` (at the segment's ``from`` target) or ``"move"``; spans
        are clipped to [t0, t1] and sorted; empty ones are left out.

    Examples
    --------
    >>> from types import SimpleNamespace as S
    >>> seg = lambda a, b, c: S(start_s=a, move_start_s=b, end_s=c)
    >>> tl = S(start_s=0.5, cycle_time_s=2.0,
    ...        plan=S(segments=(seg(0.0, 0.25, 1.0), seg(1.0, 1.0, 2.0))))
    >>> [(a, b, k, kind) for a, b, k, kind in segment_spans(tl, 0.0, 2.0)]
    [(0.0, 0.5, 1, 'move'), (0.5, 0.75, 0, 'dwell'), (0.75, 1.5, 0, 'move'), (1.5, 2.0, 1, 'move')]
    """
    T = float(timeline.cycle_time_s)
    if T <= 0 or t1 <= t0:
        return []
    start = float(timeline.start_s)
    k0 = math.floor((t0 - start) / T) - 1
    k1 = math.ceil((t1 - start) / T) + 1
    out = []
    for k in range(k0, k1 + 1):
        base = start + k * T
        for i, s in enumerate(timeline.plan.segments):
            for a, b, kind in (
                (s.start_s, s.move_start_s, "dwell"),
                (s.move_start_s, s.end_s, "move"),
            ):
                lo, hi = max(base + a, t0), min(base + b, t1)
                if hi > lo:
                    out.append((float(lo), float(hi), i, kind))
    out.sort()
    return out

"""The configuration plan of a sequence: the fastest cycle over configurations and turns.

A sequence is a cycle: the arm visits its targets in order and moves from the last back
to the first. At every visit the plan chooses a *state*: an elbow configuration that is
feasible at the target (within the limits, allowed by the arm's elbow setting, clear of
every blocking fixture) and the joint values it is reached with, q1 + k*360 (and
q2 + k*360) among the representatives inside the joint limits, so a multi-turn shoulder
may take whichever turn makes the cycle faster. Between consecutive states the arm makes
a straight rest-to-rest joint move (:mod:`kinematics.motion`); a move is allowed when it
stays within the limits, never folds the elbow through q2 = +-180 (so a configuration
change passes full stretch, q2 = 0, which the q2 limits must then include) and does not
touch a blocking fixture (the sweep check of :mod:`kinematics.sweep`).

The plan minimises the cycle time, the sum of the move times plus each target's dwell,
exactly: dynamic programming over the states of each visit around the cycle (the cycle
returns to the state it started in). Ties (within a nanosecond) go to fewer
configuration changes. The best single-configuration plan (every visit in the same
configuration, often preferred on the shop floor) is found the same way.

Collision checks are the expensive part, so they are made only for the moves an optimal
plan actually uses, and repeated until every move of the plans is checked ("lazy"
checking: a move found colliding is removed and the plans are computed again; moves not
checked can only make plans slower, never faster, so the result is still exact). A move
is first judged by a Lipschitz bound (clearance cannot change faster than the fastest
body point moves): with end clearances c0, c1 and the largest body-point travel L over
an interval of the path, the clearance there is at least (c0 + c1 - L) / 2. Intervals
are halved, many moves at a time, until every bound is positive (clear) or a pose
touches (colliding); a move that stays undecided down to a hundredth of the smallest link
radius is settled by :func:`kinematics.sweep.sweep_move` itself.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from functools import cached_property
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .angles import ANGLE_EPS
from .bodies import arm_bodies, clearance_margin, link_blocking, tool_blocking, work_height
from .cell import Arm, Cell
from .clearance import FixtureSet, pose_clearance
from .ik import ELBOWS
from .motion import (
    MotionLimits,
    MoveProfile,
    dwell_time,
    missing_motion_fields,
    motion_limits,
    move_profile,
    move_time,
    start_time,
)
from .sweep import (
    MIN_TOL_FRACTION,
    JointPath,
    MoveResult,
    joint_path_between,
    move_tool_mask,
    point_speed,
    sequence_moves,
    sweep_move,
)

__all__ = [
    "TIME_TIE_S",
    "PlanState",
    "PlanSegment",
    "SequencePlan",
    "target_states",
    "plan_sequence",
    "plan_arm",
    "apply_plans",
    "planned_moves",
    "segment_move",
    "sequence_plan",
    "cell_planned_moves",
]

#: Plans whose cycle times differ by less than this (seconds) count as equally fast.
TIME_TIE_S = 1e-9
# Lazy rounds before every remaining move is checked at once.
_LAZY_ROUNDS = 4
# Halvings of a move's path before the sweep itself decides.
_MAX_LEVELS = 40


@dataclass(frozen=True)
class PlanState:
    """One way of being at a target: a configuration and the joint values used.

    Attributes
    ----------
    config : int
        0 "positive", 1 "negative".
    q_deg : tuple of float
        (q1, q2) in degrees, the representatives inside the joint limits that the plan uses.
    singular : bool
        At full stretch or full fold: the pose belongs to both configurations.
    """

    config: int
    q_deg: tuple[float, float]
    singular: bool = False

    @property
    def elbow(self) -> str:
        """``"positive"``, ``"negative"`` or ``"both"`` (singular pose)."""
        return "both" if self.singular else ELBOWS[self.config]

    def fits(self, config: int) -> bool:
        """Whether this state counts as configuration ``config``."""
        return self.singular or self.config == config


@dataclass(frozen=True)
class PlanSegment:
    """One step of a cycle: the dwell at ``from_id``, then the move to ``to_id``.

    Attributes
    ----------
    from_id, to_id : str
    from_index, to_index : int
        Positions in the sequence (a target may appear more than once).
    state_from, state_to : PlanState
    dwell_s : float
        Time spent at ``from_id`` before the move.
    time_s : float
        Duration of the move.
    start_s : float
        When the segment (its dwell) starts, seconds from the cycle's start.
    path : JointPath
    profile : MoveProfile
    """

    from_id: str
    to_id: str
    from_index: int
    to_index: int
    state_from: PlanState
    state_to: PlanState
    dwell_s: float
    time_s: float
    start_s: float
    path: JointPath
    profile: MoveProfile

    @property
    def move_start_s(self) -> float:
        """When the move starts, seconds from the cycle's start."""
        return self.start_s + self.dwell_s

    @property
    def end_s(self) -> float:
        """When the move ends, seconds from the cycle's start."""
        return self.start_s + self.dwell_s + self.time_s

    @property
    def changes_configuration(self) -> bool:
        """The elbow passes full stretch on the way."""
        return self.path.changes_configuration


@dataclass(frozen=True)
class SequencePlan:
    """The fastest cycle of one sequence, or why there is none.

    Attributes
    ----------
    arm : str
    sequence_index : int
        Position of the sequence in ``cell.sequences``.
    targets : tuple of str
    start_s : float
        The sequence's ``start_s``.
    missing : tuple of str
        Arm fields a time needs that are missing (then there is no plan).
    segments : tuple of PlanSegment
        The cycle, empty when there is no plan.
    cycle_time_s : float or None
    single_configuration_cycle_time_s : float or None
        The best plan using one configuration at every visit.
    single_configuration : str or None
        Which configuration that plan uses.
    single_segments : tuple of PlanSegment
        That plan's cycle.
    forced_changes : tuple of str
        When no single-configuration plan exists: the targets that rule one
        configuration out (it is not feasible there, or every move into the target in
        it collides), in sequence order.
    reason : str
        Why there is no plan (empty when there is one).
    """

    arm: str
    sequence_index: int
    targets: tuple[str, ...]
    start_s: float = 0.0
    missing: tuple[str, ...] = ()
    segments: tuple[PlanSegment, ...] = ()
    cycle_time_s: float | None = None
    single_configuration_cycle_time_s: float | None = None
    single_configuration: str | None = None
    single_segments: tuple[PlanSegment, ...] = ()
    forced_changes: tuple[str, ...] = ()
    reason: str = ""

    @property
    def parts_per_minute(self) -> float | None:
        """60 / cycle time (None without a cycle time or for a zero cycle)."""
        t = self.cycle_time_s
        return None if t is None or t <= 0 else 60.0 / t

    @property
    def configuration_changes(self) -> int:
        """Moves of the cycle that pass full stretch."""
        return sum(1 for s in self.segments if s.changes_configuration)

    @cached_property
    def _pieces(self) -> dict[str, NDArray]:
        t0, seg, s0, v0, a0, jk = [], [], [], [], [], []
        for k, s in enumerate(self.segments):
            t0.append(s.start_s)  # the dwell: at rest at the segment's start
            seg.append(k)
            s0.append(0.0)
            v0.append(0.0)
            a0.append(0.0)
            jk.append(0.0)
            p = s.profile
            n = len(p.phase_start)
            t0.extend((s.move_start_s + p.phase_start).tolist())
            seg.extend([k] * n)
            s0.extend(p.s0.tolist())
            v0.extend(p.v0.tolist())
            a0.extend(p.a0.tolist())
            jk.extend(p.jerk.tolist())
        q_from = np.array([s.path.q_from for s in self.segments], dtype=float).reshape(-1, 2)
        q_to = np.array([s.path.q_to for s in self.segments], dtype=float).reshape(-1, 2)
        move_end = np.array([s.end_s for s in self.segments], dtype=float)
        return {
            "t0": np.asarray(t0, dtype=float),
            "seg": np.asarray(seg, dtype=np.int64),
            "s0": np.asarray(s0, dtype=float),
            "v0": np.asarray(v0, dtype=float),
            "a0": np.asarray(a0, dtype=float),
            "j": np.asarray(jk, dtype=float),
            "q_from": q_from,
            "delta": q_to - q_from,
            "move_end": move_end,
        }

    def progress(
        self, t: ArrayLike
    ) -> tuple[NDArray[np.int64], NDArray[np.float64], NDArray[np.float64]]:
        """Segment index, path fraction s and ds/dt at cycle times ``t`` (vectorised).

        Times are seconds from the cycle's start and wrap around the cycle time. During a
        segment's dwell s is 0.

        Raises
        ------
        ValueError
            When the plan has no cycle.
        """
        if not self.segments or self.cycle_time_s is None:
            raise ValueError(f"sequence {self.sequence_index} of arm {self.arm!r} has no plan")
        pc = self._pieces
        t = np.asarray(t, dtype=float)
        T = self.cycle_time_s
        tau = np.mod(t, T) if T > 0 else np.zeros_like(t)
        i = np.clip(np.searchsorted(pc["t0"], tau, side="right") - 1, 0, len(pc["t0"]) - 1)
        seg = pc["seg"][i]
        h = np.minimum(tau, pc["move_end"][seg]) - pc["t0"][i]
        j = pc["j"][i]
        v = pc["v0"][i] + (pc["a0"][i] + 0.5 * j * h) * h
        s = pc["s0"][i] + (pc["v0"][i] + (0.5 * pc["a0"][i] + j * h / 6.0) * h) * h
        done = tau >= pc["move_end"][seg]
        s = np.where(done, 1.0, np.clip(s, 0.0, 1.0))
        v = np.where(done, 0.0, v)
        return seg, s, v

    def at(self, t: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Joint angles (degrees) and joint speeds (degrees per second) at cycle times ``t``.

        Returns arrays of shape ``shape(t) + (2,)``; times wrap around the cycle time.
        """
        seg, s, v = self.progress(t)
        pc = self._pieces
        d = pc["delta"][seg]
        return pc["q_from"][seg] + s[..., None] * d, v[..., None] * d


def _reps(v: float, lo: float, hi: float) -> list[float]:
    """Every v + k*360 inside [lo, hi] (with the angle tolerance)."""
    k0 = math.ceil((lo - ANGLE_EPS - v) / 360.0)
    k1 = math.floor((hi + ANGLE_EPS - v) / 360.0)
    return [v + 360.0 * k for k in range(k0, k1 + 1)]


def target_states(arm: Arm, ev: Any, i: int) -> list[PlanState]:
    """Every state the plan may use at target ``i`` of an arm evaluation.

    The feasible configurations (within limits, allowed, clear of blocking fixtures) with
    each q1 + k*360 and q2 + k*360 inside the joint limits.

    Examples
    --------
    A shoulder with 400 degrees of travel reaches this target at two q1 values.

    >>> from kinematics.cell import Target
    >>> from kinematics.evaluate import evaluate_arm
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-200, 200), (-150, 150), elbow="positive")
    >>> ev = evaluate_arm(arm, [Target("t", "T", -466, -207, "a")])
    >>> [round(s.q_deg[0], 2) for s in target_states(arm, ev, 0)]
    [-184.84, 175.16]
    """
    ok = np.asarray(ev.ik.ok[i], dtype=bool).copy()
    if np.size(ev.collides):
        ok &= ~np.asarray(ev.collides[i], dtype=bool)
    singular = bool(ev.ik.singular[i])
    out: list[PlanState] = []
    seen: set[tuple[float, float]] = set()
    for k in (0, 1):
        if not ok[k]:
            continue
        q1, q2 = (float(v) for v in ev.ik.q_deg[i, k])
        for a in _reps(q1, *arm.q1_limits):
            for b in _reps(q2, *arm.q2_limits):
                key = (round(a, 9), round(b, 9))
                if key in seen:
                    continue
                seen.add(key)
                out.append(PlanState(k, (a, b), singular))
    return out


class _Mover:
    """Collision verdicts of moves for one arm, cached by joint path and tool mask."""

    def __init__(self, cell: Cell, ev: Any) -> None:
        self.arm: Arm = ev.arm
        self.ev = ev
        self.bodies = ev.bodies
        self.fixtures = tuple(ev.fixtures)
        self.margin = clearance_margin(cell)
        self.cache: dict[tuple, bool] = {}
        self.sweeps = 0
        self.wh: dict[int, float | None] = {}
        self.eval_tmask: dict[int, NDArray[np.bool_]] = {}
        if self.bodies is None or not self.fixtures:
            self.active = False
            return
        self.fs = FixtureSet.of(self.fixtures)
        self.lmask = link_blocking(self.arm, self.fixtures, self.margin)
        self.has_tool = bool(self.bodies.has_tool)
        self.active = True
        r_min = self.bodies.min_link_radius
        self.tol_travel = MIN_TOL_FRACTION * r_min
        rad = math.degrees(1.0)
        # Body-point travel bound: max(P1 |d1|, a1 |d1| + P2 |d1 + d2|) with d in radians
        # (point_speed of link 1 and of link 2 / tool), never below point_speed itself.
        self.p1 = point_speed(self.bodies, (rad, -rad))
        self.p2 = point_speed(self.bodies, (0.0, rad))

    def _work_height(self, i: int, target: Any) -> float | None:
        if i not in self.wh:
            self.wh[i] = work_height(target)
        return self.wh[i]

    def _eval_mask(self, i: int) -> NDArray[np.bool_]:
        m = self.eval_tmask.get(i)
        if m is None:
            wh = self.wh[i]
            m = tool_blocking(self.arm, self.fixtures, self.margin, np.nan if wh is None else wh)
            self.eval_tmask[i] = m
        return m

    def speed(self, d: NDArray) -> NDArray:
        r = np.radians(np.abs(d))
        return np.maximum(
            self.p1 * r[:, 0],
            self.arm.a1 * r[:, 0] + self.p2 * np.abs(np.radians(d[:, 0] + d[:, 1])),
        )

    def key(self, path: JointPath, wa: float | None, wb: float | None) -> tuple:
        return (path.q_from, path.q_to, wa, wb)

    def check(self, moves: Sequence[tuple[JointPath, int, int, int, int, Any, Any]]) -> None:
        """Judge moves ``(path, target index a, config a, target index b, config b,
        target a, target b)`` and cache the verdicts."""
        todo = []
        seen = set()
        for mv in moves:
            path, ia, ka, ib, kb, ta, tb = mv
            wa, wb = self._work_height(ia, ta), self._work_height(ib, tb)
            key = self.key(path, wa, wb)
            if key in self.cache or key in seen:
                continue
            seen.add(key)
            if not self.active:
                self.cache[key] = False
                continue
            todo.append((key, path, ia, ka, ib, kb, wa, wb))
        if not todo:
            return
        E = len(todo)
        F = len(self.fixtures)
        qa = np.array([t[1].q_from for t in todo], dtype=float)
        qb = np.array([t[1].q_to for t in todo], dtype=float)
        tmask = np.zeros((E, F), dtype=bool)
        if self.has_tool:
            masks: dict[tuple, NDArray[np.bool_]] = {}
            for e, t in enumerate(todo):
                m = masks.get((t[6], t[7]))
                if m is None:
                    m = move_tool_mask(self.arm, self.fixtures, self.margin, True, t[6], t[7])
                    masks[(t[6], t[7])] = m
                tmask[e] = m
        # End clearances: the evaluation's, where its tool mask covers the move's (fewer
        # blocking fixtures can only give more clearance); else computed here.
        c_end = np.full((E, 2), np.nan)
        for e, t in enumerate(todo):
            for side, (i, k) in enumerate(((t[2], t[3]), (t[4], t[5]))):
                if not self.has_tool or not (tmask[e] & ~self._eval_mask(i)).any():
                    c_end[e, side] = float(self.ev.clearance[i, k])
        need = np.argwhere(np.isnan(c_end))
        if len(need):
            q = np.where((need[:, 1] == 0)[:, None], qa[need[:, 0]], qb[need[:, 0]])
            c_end[need[:, 0], need[:, 1]] = self._clearance(q, tmask[need[:, 0]])
        d = qb - qa
        speed = self.speed(d)
        collided = np.zeros(E, dtype=bool)
        undecided = np.zeros(E, dtype=bool)
        e_i = np.arange(E)
        s0, s1 = np.zeros(E), np.ones(E)
        c0, c1 = c_end[:, 0].copy(), c_end[:, 1].copy()
        collided |= (c0 <= 0) | (c1 <= 0)
        for _ in range(_MAX_LEVELS):
            width = s1 - s0
            with np.errstate(invalid="ignore"):
                lower = 0.5 * (c0 + c1 - speed[e_i] * width)
            live = ~collided[e_i] & ~(lower > 0)
            small = live & (speed[e_i] * width <= self.tol_travel)
            undecided[e_i[small]] = True
            live &= ~small
            if not live.any():
                break
            e_i, s0, s1, c0, c1 = e_i[live], s0[live], s1[live], c0[live], c1[live]
            mid = 0.5 * (s0 + s1)
            q = qa[e_i] + mid[:, None] * d[e_i]
            cm = self._clearance(q, tmask[e_i])
            hit = cm <= 0
            collided[e_i[hit]] = True
            e_i = np.concatenate([e_i, e_i])
            s0, s1 = np.concatenate([s0, mid]), np.concatenate([mid, s1])
            c0, c1 = np.concatenate([c0, cm]), np.concatenate([cm, c1])
        else:
            undecided[e_i[~collided[e_i]]] = True
        for e in np.flatnonzero(undecided & ~collided):
            tm = tmask[e] if self.has_tool else None
            self.sweeps += 1
            sw = sweep_move(self.bodies, self.fs, todo[e][1], self.lmask, tm)
            collided[e] = sw.collides
        for e, t in enumerate(todo):
            self.cache[t[0]] = bool(collided[e])

    def _clearance(self, q: NDArray, tmask: NDArray) -> NDArray:
        tm = tmask if self.has_tool else None
        return pose_clearance(self.bodies, self.fs, q, self.lmask, tm).clearance

    def collides(self, path: JointPath, ia: int, ib: int, ta: Any, tb: Any) -> bool:
        wa, wb = self._work_height(ia, ta), self._work_height(ib, tb)
        return self.cache[self.key(path, wa, wb)]


@dataclass
class _Graph:
    """States per visit and the moves between consecutive visits."""

    states: list[list[PlanState]]
    paths: list[list[list[JointPath | None]]]
    times: list[NDArray[np.float64]]  # (m_p, m_next), inf where no path
    changes: list[NDArray[np.float64]]
    checked: list[NDArray[np.int8]] = field(default_factory=list)  # 0 unknown, 1 clear, 2 hit


def _dp(g: _Graph, usable: list[NDArray[np.bool_]]) -> tuple[float, list[int]] | None:
    """The fastest cycle through usable states; ties go to fewer configuration changes.

    Plain Python: a visit has only a few states, where numpy's per-call cost dominates.
    """
    n = len(g.states)
    ok = [u.tolist() for u in usable]
    W = [np.where(g.checked[p] == 2, np.inf, g.times[p]).tolist() for p in range(n)]
    C = [g.changes[p].tolist() for p in range(n)]
    inf = math.inf
    best: tuple[float, float, list[int]] | None = None
    for s in range(len(g.states[0])):
        if not ok[0][s]:
            continue
        D: dict[int, tuple[float, float]] = {s: (0.0, 0.0)}
        preds: list[dict[int, int]] = []
        for p in range(n):
            nxt = (p + 1) % n
            okn = ok[nxt]
            Wp, Cp = W[p], C[p]
            new: dict[int, tuple[float, float]] = {}
            pred: dict[int, int] = {}
            for a_, (ta, ca) in D.items():
                row, crow = Wp[a_], Cp[a_]
                for b_ in range(len(row)):
                    w = row[b_]
                    if w == inf or not okn[b_]:
                        continue
                    t, c = ta + w, ca + crow[b_]
                    cur = new.get(b_)
                    if (
                        cur is None
                        or t < cur[0] - TIME_TIE_S
                        or (t <= cur[0] + TIME_TIE_S and c < cur[1])
                    ):
                        new[b_] = (t, c)
                        pred[b_] = a_
            preds.append(pred)
            D = new
            if not D:
                break
        if s not in D or len(preds) < n:
            continue
        t, c = D[s]
        if best is None or t < best[0] - TIME_TIE_S or (t <= best[0] + TIME_TIE_S and c < best[1]):
            chain = [0] * n
            b_ = s
            for p in range(n - 1, -1, -1):
                b_ = preds[p][b_]
                chain[p] = b_
            best = (t, c, chain)
    return None if best is None else (best[0], best[2])


def _plan_edges(chain: list[int], n: int) -> list[tuple[int, int, int]]:
    return [(p, chain[p], chain[(p + 1) % n]) for p in range(n)]


def plan_sequence(
    cell: Cell,
    ev: Any,
    sequence_index: int,
    mover: Any | None = None,
) -> SequencePlan:
    """The fastest plan of one sequence of a cell for an arm evaluation.

    Parameters
    ----------
    cell : Cell
    ev : ArmEvaluation
        The arm's evaluation (feasible configurations, clearances, bodies, fixtures).
    sequence_index : int
        Which of ``cell.sequences`` (it must belong to the evaluation's arm).
    mover : optional
        A collision-verdict cache shared between sequences of the same arm.

    Returns
    -------
    SequencePlan

    Examples
    --------
    Two targets, no fixtures: the arm goes there and back; the plan's cycle time is the
    two move times (Nagarajan, Introduction to Industrial Robotics, eq. 10.28: a move of
    120 degrees at 60 deg/s and 120 deg/s^2 takes 2.5 s) plus the dwells.

    >>> from kinematics.cell import Sequence as Seq, Target
    >>> from kinematics.evaluate import evaluate_arm
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), elbow="positive",
    ...           joint_speed_dps=(60, 600), joint_accel_dps2=(120, 1200))
    >>> ts = (Target("p", "P", 500, 0, "a", extra={"dwell_s": 0.5}),
    ...       Target("q", "Q", -250, 433.0127, "a"))
    >>> cell = Cell("c", arms=(arm,), targets=ts, sequences=(Seq("a", ("p", "q")),))
    >>> plan = plan_sequence(cell, evaluate_arm(arm, ts), 0)
    >>> round(plan.cycle_time_s, 3), [round(s.time_s, 3) for s in plan.segments]
    (5.5, [2.5, 2.5])
    """
    seq = cell.sequences[sequence_index]
    arm = ev.arm
    tids = tuple(seq.targets)
    base = SequencePlan(arm.id, sequence_index, tids, start_time(seq))
    missing = missing_motion_fields(arm)
    if missing:
        return replace(base, missing=missing, reason="missing " + ", ".join(missing))
    if not tids:
        return replace(base, reason="the sequence has no targets")
    limits = motion_limits(arm)
    assert limits is not None
    by_id = {t.id: t for t in cell.targets}
    idx = [ev.index(t) if t in ev.target_ids else -1 for t in tids]
    for tid, i in zip(tids, idx):
        if i < 0 or not bool(ev.feasible[i]):
            name = by_id[tid].name if tid in by_id else tid
            return replace(base, reason=f"target {name} has no feasible configuration")
    mover = mover if mover is not None else _Mover(cell, ev)
    n = len(tids)
    states = [target_states(arm, ev, i) for i in idx]
    g = _build_graph(arm, states, limits, n)
    targets = [by_id[t] for t in tids]

    def verify(edges: list[tuple[int, int, int]]) -> None:
        batch = []
        for p, a, b in edges:
            if g.checked[p][a, b] != 0 or not np.isfinite(g.times[p][a, b]):
                continue
            nxt = (p + 1) % n
            path = g.paths[p][a][b]
            assert path is not None
            sa, sb = states[p][a], states[nxt][b]
            batch.append((path, idx[p], sa.config, idx[nxt], sb.config, targets[p], targets[nxt]))
        if not batch:
            return
        mover.check(batch)
        for p, a, b in edges:
            if g.checked[p][a, b] != 0 or not np.isfinite(g.times[p][a, b]):
                continue
            nxt = (p + 1) % n
            path = g.paths[p][a][b]
            hit = mover.collides(path, idx[p], idx[nxt], targets[p], targets[nxt])
            g.checked[p][a, b] = 2 if hit else 1

    every = [np.ones(len(s), dtype=bool) for s in states]
    fits = [[np.array([s.fits(k) for s in st], dtype=bool) for st in states] for k in (0, 1)]
    usable_sets = [every, fits[0], fits[1]]
    results = [_dp(g, u) for u in usable_sets]
    for rnd in range(_LAZY_ROUNDS + 1):
        pending = []
        for res in results:
            if res is None:
                continue
            for p, a, b in _plan_edges(res[1], n):
                if g.checked[p][a, b] == 0:
                    pending.append((p, a, b))
        if not pending:
            break
        if rnd == _LAZY_ROUNDS:
            # Many collisions: check every remaining move at once, then plan for good.
            pending = [
                (p, a, b)
                for p in range(n)
                for a, b in np.argwhere(np.isfinite(g.times[p]) & (g.checked[p] == 0))
            ]
        verify(pending)
        results = [_dp(g, u) for u in usable_sets]
    dwell = [dwell_time(t) for t in targets]

    def segments(chain: list[int]) -> tuple[PlanSegment, ...]:
        out = []
        t = 0.0
        for p in range(n):
            nxt = (p + 1) % n
            sa, sb = states[p][chain[p]], states[nxt][chain[nxt]]
            path = g.paths[p][chain[p]][chain[nxt]]
            assert path is not None
            prof = move_profile(sa.q_deg, sb.q_deg, limits)
            out.append(
                PlanSegment(
                    tids[p], tids[nxt], p, nxt, sa, sb, dwell[p], prof.duration, t, path, prof
                )
            )
            t += dwell[p] + prof.duration
        return tuple(out)

    best, single = results[0], None
    single_k = None
    allowed = [k for k in (0, 1) if any(f.any() for f in fits[k])]
    for k in (0, 1):
        r = results[k + 1]
        if r is not None and (single is None or r[0] < single[0] - TIME_TIE_S):
            single, single_k = r, k
    forced: tuple[str, ...] = ()
    if single is None and len(allowed) == 2 and arm.elbow == "any":
        forced = _forced_changes(g, fits, tids, n, verify)
    total_dwell = float(sum(dwell))
    if best is None:
        return replace(
            base,
            forced_changes=forced,
            reason=_no_plan_reason(g, tids, by_id, n),
        )
    segs = segments(best[1])
    single_segs = segments(single[1]) if single is not None else ()
    cycle = sum(s.time_s for s in segs) + total_dwell
    single_time = sum(s.time_s for s in single_segs) + total_dwell if single else None
    return replace(
        base,
        segments=segs,
        cycle_time_s=float(cycle),
        single_configuration_cycle_time_s=None if single_time is None else float(single_time),
        single_configuration=None if single_k is None else ELBOWS[single_k],
        single_segments=single_segs,
        forced_changes=forced,
    )


def _build_graph(arm: Arm, states: list[list[PlanState]], limits: MotionLimits, n: int) -> _Graph:
    paths, deltas, where = [], [], []
    for p in range(n):
        sa, sb = states[p], states[(p + 1) % n]
        rows = []
        for a, x in enumerate(sa):
            row: list[JointPath | None] = []
            for b, y in enumerate(sb):
                path = joint_path_between(arm, x.q_deg, y.q_deg)
                if path.allowed:
                    deltas.append(path.delta)
                    where.append((p, a, b))
                    row.append(path)
                else:
                    row.append(None)
            rows.append(row)
        paths.append(rows)
    times = [np.full((len(states[p]), len(states[(p + 1) % n])), np.inf) for p in range(n)]
    changes = [np.zeros_like(t) for t in times]
    if deltas:
        dt = move_time(np.array(deltas, dtype=float), limits)
        for (p, a, b), t in zip(where, dt.tolist()):
            times[p][a, b] = t
            changes[p][a, b] = 1.0 if paths[p][a][b].changes_configuration else 0.0
    checked = [np.zeros(t.shape, dtype=np.int8) for t in times]
    return _Graph(states, paths, times, changes, checked)


def _forced_changes(
    g: _Graph, fits: list[list[NDArray]], tids: tuple[str, ...], n: int, verify: Any
) -> tuple[str, ...]:
    """Targets that rule a configuration out, in sequence order."""
    hit: set[int] = set()
    for k in (0, 1):
        blocked = {p for p in range(n) if not fits[k][p].any()}
        if not blocked:
            # Every visit fits k: find the moves into a visit that all collide in k.
            edges = []
            for p in range(n):
                nxt = (p + 1) % n
                ok = fits[k][p][:, None] & fits[k][nxt][None, :] & np.isfinite(g.times[p])
                edges += [(p, int(a), int(b)) for a, b in np.argwhere(ok)]
            verify(edges)
            for p in range(n):
                nxt = (p + 1) % n
                ok = fits[k][p][:, None] & fits[k][nxt][None, :] & np.isfinite(g.times[p])
                if not (ok & (g.checked[p] == 1)).any():
                    blocked.add(nxt)
        hit |= blocked
    out: list[str] = []
    for p in sorted(hit):
        if tids[p] not in out:
            out.append(tids[p])
    return tuple(out)


def _no_plan_reason(g: _Graph, tids: tuple[str, ...], by_id: dict, n: int) -> str:
    def name(t: str) -> str:
        return by_id[t].name if t in by_id else t

    for p in range(n):
        nxt = (p + 1) % n
        usable = np.isfinite(g.times[p]) & (g.checked[p] != 2)
        if not usable.any():
            if not np.isfinite(g.times[p]).any():
                why = "no joint path within the limits (a configuration change needs q2 = 0)"
            else:
                why = "every way of making it collides"
            return f"no plan: the move {name(tids[p])} -> {name(tids[nxt])}: {why}"
    return "no plan: the joint limits leave no way around the cycle"


def plan_arm(cell: Cell, ev: Any) -> tuple[SequencePlan, ...]:
    """Plans of every sequence of the evaluation's arm, in ``cell.sequences`` order.

    Collision verdicts are shared between the arm's sequences.
    """
    mover: _Mover | None = None
    out = []
    for k, seq in enumerate(cell.sequences):
        if seq.arm != ev.arm.id:
            continue
        if mover is None and not missing_motion_fields(ev.arm):
            mover = _Mover(cell, ev)
        out.append(plan_sequence(cell, ev, k, mover))
    return tuple(out)


def apply_plans(ev: Any, plans: Sequence[SequencePlan]) -> Any:
    """The evaluation with the plans' configurations chosen and the plans attached.

    A target takes the configuration of its first planned visit (later visits of the
    same target may use another one; the plan's segments say which). Targets of
    sequences without a plan keep their choice.
    """
    chosen = np.asarray(ev.chosen).copy()
    done: set[str] = set()
    for plan in plans:
        for seg in plan.segments:
            if seg.from_id in done or seg.from_id not in ev.target_ids:
                continue
            done.add(seg.from_id)
            chosen[ev.index(seg.from_id)] = seg.state_from.config
    return replace(ev, chosen=chosen, plans=tuple(plans))


def segment_move(cell: Cell, ev: Any, seg: PlanSegment, polygons: bool = False) -> MoveResult:
    """One segment of a plan as a :class:`kinematics.sweep.MoveResult`, swept against the
    fixtures within the arm's reach exactly as ``check`` sweeps every move."""
    arm = ev.arm
    ab = ev.bodies if ev.bodies is not None else arm_bodies(arm)
    fixtures = tuple(ev.fixtures)
    margin = clearance_margin(cell)
    fs = FixtureSet.of(fixtures)
    lmask = link_blocking(arm, fixtures, margin)
    by_id = {t.id: t for t in cell.targets}
    wa = work_height(by_id[seg.from_id])
    wb = work_height(by_id[seg.to_id])
    tmask = move_tool_mask(arm, fixtures, margin, ab.has_tool, wa, wb)
    sw = sweep_move(ab, fs, seg.path, lmask, tmask, polygons=polygons)
    blocked = fixtures[sw.fixture] if sw.collides and sw.fixture >= 0 else None
    return MoveResult(
        arm.id,
        seg.from_id,
        seg.to_id,
        seg.path,
        sw,
        sw.collides,
        sw.clearance if math.isfinite(sw.clearance) else None,
        blocked.id if blocked is not None else None,
        f"collides with {blocked.name}" if blocked is not None else "",
        ab.bodies[sw.body].name if blocked is not None and sw.body >= 0 else None,
    )


def planned_moves(
    cell: Cell, ev: Any, plan: SequencePlan, polygons: bool = False
) -> list[MoveResult]:
    """The moves of a plan as :class:`kinematics.sweep.MoveResult` (swept like ``check``)."""
    if len(plan.targets) < 2 or not plan.segments:
        return []
    return [segment_move(cell, ev, seg, polygons) for seg in plan.segments]


def sequence_plan(ev: Any, sequence_index: int) -> SequencePlan | None:
    """The plan of one sequence of the cell in an arm's evaluation (None without one)."""
    return next((p for p in ev.plans if p.sequence_index == sequence_index), None)


def cell_planned_moves(
    cell: Cell, evaluation: Any, cyclic: bool = True, polygons: bool = False
) -> list[MoveResult]:
    """Moves of every sequence of a cell: a plan's moves where the sequence has a plan,
    else the moves between the chosen configurations (:func:`kinematics.sweep.sequence_moves`)."""
    out: list[MoveResult] = []
    for k, seq in enumerate(cell.sequences):
        ev = evaluation.arms.get(seq.arm)
        plan = None
        if ev is not None:
            plan = next((p for p in getattr(ev, "plans", ()) if p.sequence_index == k), None)
        if plan is not None and plan.segments and cyclic:
            out.extend(planned_moves(cell, ev, plan, polygons))
        else:
            out.extend(sequence_moves(cell, evaluation, seq.arm, seq.targets, cyclic, polygons))
    return out

"""Two or more arms in time: contacts between arms and shared-zone occupancy.

Each arm with a planned cycle (:mod:`kinematics.plan`; an arm with several sequences runs
its first one that has a cycle time) runs it over and over in the steady state: at time
t it is at the point ``(t - start_s) mod cycle time`` of its cycle, as if it had been
running for a while. The arms run together over a common horizon from t = 0, the longer
cycle plus the shorter one.

**Contacts.** The bodies of every two arms (links, tool, base footprint) are checked
against each other over the horizon. Samples are placed so that no body point moves more
than a tenth of the smallest link radius between two of them wherever the arms come
close, and between samples a Lipschitz bound does the rest: the gap between two arms
cannot shrink by more than the sum of how far their body points can travel, which is
known exactly from the path fractions of their moves (a point of a body travels at most
:func:`kinematics.sweep.point_speed` times the change of the path fraction). Intervals are
halved until the bound proves them clear or a sample touches, so a contact is never
missed between samples; the first contact is found to a thousandth of the smallest link
radius of travel, and the smallest separation is a guaranteed lower bound at most a
hundredth of the smallest link radius below the true one.

**Shared zones.** For each shared zone of two arms (their restricted spaces' or their
operating spaces' overlap, :mod:`kinematics.spaces`), the time intervals during which an
arm's moving bodies (not its base footprint, which never moves) are inside the zone. They
are found over one cycle of each arm the same way, resolved to one sample (a tenth of the
smallest link radius of travel) and reported as covers: each interval starts no later
and ends no earlier than the true one. Holes of a zone count as inside. When the two
arms' intervals overlap an interlock or a changed start time is needed; the smallest
change of the second arm's ``start_s`` that makes them disjoint over the horizon, within
one of its cycles, is suggested. When the two cycle times differ the arms' relative
timing drifts from cycle to cycle, so the horizon shows only the first such encounter.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import shapely
from numpy.typing import ArrayLike, NDArray

from .bodies import BASE, ArmBodies, arm_bodies, frames
from .cell import Cell
from .sweep import MIN_TOL_FRACTION, SAMPLE_FRACTION, point_speed

__all__ = [
    "CONTACT_TOL_FRACTION",
    "ArmTimeline",
    "ArmContact",
    "Separation",
    "ZoneOccupancy",
    "Interference",
    "arm_timeline",
    "cell_timelines",
    "pose_cores",
    "arm_distance",
    "zone_occupancy",
    "start_shift",
    "run_interference",
    "cell_interference",
]

#: Travel (fraction of the smallest link radius) to which the first contact is settled.
CONTACT_TOL_FRACTION = 1e-3
# Largest travel of both arms over one starting interval, in smallest link radii.
_START_TRAVEL = 1.0
# Evaluations before a search stops refining (its bounds stay conservative).
_MAX_EVALS = 400_000


@dataclass(frozen=True)
class ArmTimeline:
    """One arm running a planned cycle over and over.

    Attributes
    ----------
    arm : str
    plan : kinematics.plan.SequencePlan
    bodies : ArmBodies
    start_s : float
        When the cycle starts (the sequence's ``start_s``, or as shifted).
    travel : ndarray, shape (n,)
        Per segment of the cycle: bound on how far any body point travels in the move.
    """

    arm: str
    plan: Any
    bodies: ArmBodies
    start_s: float
    travel: NDArray[np.float64]

    @property
    def cycle_time_s(self) -> float:
        """Seconds per cycle."""
        return float(self.plan.cycle_time_s)

    @property
    def cycle_travel(self) -> float:
        """Bound on how far any body point travels in one cycle."""
        return float(self.travel.sum())

    def _cycles(self, t: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Whole cycles done and the time into the current one, consistently rounded."""
        T = self.cycle_time_s
        x = np.asarray(t, dtype=float) - self.start_s
        if T <= 0:
            return np.zeros_like(x), np.zeros_like(x)
        n = np.floor(x / T)
        ph = x - n * T
        over, under = ph >= T, ph < 0
        n = n + over - under
        ph = np.where(over, ph - T, np.where(under, ph + T, ph))
        return n, np.clip(ph, 0.0, np.nextafter(T, 0.0))

    def phase(self, t: ArrayLike) -> NDArray[np.float64]:
        """Time into the current cycle at absolute times ``t``."""
        return self._cycles(t)[1]

    def at(self, t: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Joint angles (degrees) and joint speeds (deg/s) at absolute times ``t``, shape
        ``shape(t) + (2,)``."""
        return self.plan.at(self.phase(t))

    def segment_at(self, t: ArrayLike) -> NDArray[np.int64]:
        """Index (into ``plan.segments``) of the segment running at absolute times ``t``."""
        return self.plan.progress(self.phase(t))[0]

    def travelled(self, t: ArrayLike) -> NDArray[np.float64]:
        """Monotone travel bound: any body point moves at most ``travelled(t1) -
        travelled(t0)`` between absolute times t0 <= t1."""
        t = np.asarray(t, dtype=float)
        if self.cycle_time_s <= 0:
            return np.zeros_like(t)
        n, ph = self._cycles(t)
        seg, s, _ = self.plan.progress(ph)
        before = np.concatenate([[0.0], np.cumsum(self.travel)[:-1]])
        return n * self.cycle_travel + before[seg] + self.travel[seg] * s

    def pose_and_travel(self, t: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Joint angles (degrees) and :meth:`travelled` at absolute times ``t`` in one pass."""
        t = np.asarray(t, dtype=float)
        T = self.cycle_time_s
        n, ph = self._cycles(t)
        seg, s, _ = self.plan.progress(ph)
        pc_from = np.array([g.path.q_from for g in self.plan.segments]).reshape(-1, 2)
        pc_to = np.array([g.path.q_to for g in self.plan.segments]).reshape(-1, 2)
        q = pc_from[seg] + s[..., None] * (pc_to - pc_from)[seg]
        if T <= 0:
            return q, np.zeros_like(t)
        before = np.concatenate([[0.0], np.cumsum(self.travel)[:-1]])
        return q, n * self.cycle_travel + before[seg] + self.travel[seg] * s

    def boundaries(self, t0: float, t1: float) -> NDArray[np.float64]:
        """Absolute times in [t0, t1] where a dwell or a move starts or ends."""
        T = self.cycle_time_s
        marks = []
        for s in self.plan.segments:
            marks += [s.start_s, s.move_start_s, s.end_s]
        marks = np.unique(np.asarray(marks, dtype=float))
        if T <= 0:
            return np.zeros(0)
        k0 = math.floor((t0 - self.start_s) / T) - 1
        k1 = math.ceil((t1 - self.start_s) / T) + 1
        ts = (self.start_s + T * np.arange(k0, k1 + 1)[:, None] + marks[None, :]).ravel()
        return ts[(ts >= t0) & (ts <= t1)]


def arm_timeline(plan: Any, bodies: ArmBodies, start_s: float | None = None) -> ArmTimeline:
    """The timeline of a planned cycle (``start_s`` defaults to the plan's).

    Raises
    ------
    ValueError
        When the plan has no cycle time.
    """
    if plan.cycle_time_s is None or not plan.segments:
        raise ValueError(f"arm {plan.arm!r}: the sequence has no cycle time ({plan.reason})")
    travel = np.array([point_speed(bodies, s.path.delta) for s in plan.segments], dtype=float)
    start = plan.start_s if start_s is None else float(start_s)
    return ArmTimeline(plan.arm, plan, bodies, start, travel)


def cell_timelines(cell: Cell, evaluation: Any) -> tuple[list[ArmTimeline], dict[str, str]]:
    """The timeline of every arm with a planned cycle, and why the others have none."""
    out, skipped = [], {}
    for arm in cell.arms:
        ev = evaluation.arms.get(arm.id)
        plans = getattr(ev, "plans", ()) if ev is not None else ()
        plan = next((p for p in plans if p.cycle_time_s is not None and p.segments), None)
        if plan is None:
            why = next((p.reason for p in plans if p.reason), "") or "no sequence"
            skipped[arm.id] = why
            continue
        bodies = ev.bodies if ev.bodies is not None else arm_bodies(arm)
        out.append(arm_timeline(plan, bodies))
    return out, skipped


# ---------------------------------------------------------------------------------------
# posing and distances between arms


@dataclass(frozen=True)
class _Core:
    """One body at many poses: a capsule (segment a-b, radius) or a polygon W."""

    name: str
    radius: float
    a: NDArray | None
    b: NDArray | None
    W: NDArray | None


def pose_cores(bodies: ArmBodies, q_deg: ArrayLike) -> list[_Core]:
    """The arm's bodies at poses ``q_deg`` (P, 2) in world coordinates.

    The one place this module poses bodies (from :func:`kinematics.bodies.frames`): capsule
    segment ends ``a``, ``b`` (P, 2) with ``radius``, or polygon vertices ``W`` (P, M, 2).
    """
    q = np.asarray(q_deg, dtype=float).reshape(-1, 2)
    origin, angle = frames(bodies.arm, q)
    out = []
    for body in bodies.bodies:
        o = origin[:, body.frame]
        c, s = np.cos(angle[:, body.frame]), np.sin(angle[:, body.frame])
        if body.kind == "capsule":
            ends = []
            for x, y in (body.a, body.b):
                ends.append(o + np.stack([c * x - s * y, s * x + c * y], axis=-1))
            out.append(_Core(body.name, body.radius, ends[0], ends[1], None))
        else:
            assert body.outline is not None
            lx, ly = body.outline[:, 0], body.outline[:, 1]
            W = o[:, None, :] + np.stack(
                [c[:, None] * lx - s[:, None] * ly, s[:, None] * lx + c[:, None] * ly], axis=-1
            )
            out.append(_Core(body.name, 0.0, None, None, W))
    return out


def _pt_seg(x: NDArray, p: NDArray, q: NDArray) -> NDArray:
    dx, dy = q[..., 0] - p[..., 0], q[..., 1] - p[..., 1]
    wx, wy = x[..., 0] - p[..., 0], x[..., 1] - p[..., 1]
    dd = dx * dx + dy * dy
    t = np.clip((wx * dx + wy * dy) / np.where(dd > 0, dd, 1.0), 0.0, 1.0)
    ex, ey = wx - t * dx, wy - t * dy
    return np.sqrt(ex * ex + ey * ey)


def _cross(u: NDArray, v: NDArray) -> NDArray:
    return u[..., 0] * v[..., 1] - u[..., 1] * v[..., 0]


def _seg_seg(p1: NDArray, q1: NDArray, p2: NDArray, q2: NDArray) -> NDArray:
    """Distances between segments p1-q1 and p2-q2 (broadcast, (..., 2))."""
    d = np.minimum(
        np.minimum(_pt_seg(p1, p2, q2), _pt_seg(q1, p2, q2)),
        np.minimum(_pt_seg(p2, p1, q1), _pt_seg(q2, p1, q1)),
    )
    r, s = q1 - p1, q2 - p2
    o1, o2 = _cross(r, p2 - p1), _cross(r, q2 - p1)
    o3, o4 = _cross(s, p1 - p2), _cross(s, q1 - p2)
    crossing = (o1 * o2 <= 0) & (o3 * o4 <= 0) & ~((o1 == 0) & (o2 == 0))
    return np.where(crossing, 0.0, d)


def _inside(x: NDArray, W: NDArray) -> NDArray[np.bool_]:
    """Points x (P, 2) inside polygons W (P, M, 2) (crossing number)."""
    a = W
    b = np.roll(W, -1, axis=1)
    xx, xy = x[:, None, 0], x[:, None, 1]
    up = (a[..., 1] <= xy) != (b[..., 1] <= xy)
    dy = b[..., 1] - a[..., 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        xc = a[..., 0] + (xy - a[..., 1]) * (b[..., 0] - a[..., 0]) / dy
    return (np.count_nonzero(up & (xx < xc), axis=1) % 2) == 1


def _edges(core: _Core) -> tuple[NDArray, NDArray]:
    """Segments of a body core as (P, E, 2) starts and ends."""
    if core.W is None:
        assert core.a is not None and core.b is not None
        return core.a[:, None, :], core.b[:, None, :]
    return core.W, np.roll(core.W, -1, axis=1)


def _core_distance(u: _Core, v: _Core) -> NDArray:
    """Gap between two posed bodies (P,): distance between their cores less both radii
    (negative when capsules overlap)."""
    pa, qa = _edges(u)
    pb, qb = _edges(v)
    d = _seg_seg(pa[:, :, None, :], qa[:, :, None, :], pb[:, None, :, :], qb[:, None, :, :])
    d = d.reshape(len(d), -1).min(axis=1)
    if u.W is not None:
        d = np.where(_inside(pb[:, 0, :], u.W), 0.0, d)
    if v.W is not None:
        d = np.where(_inside(pa[:, 0, :], v.W), 0.0, d)
    return d - u.radius - v.radius


def arm_distance(
    cores_a: Sequence[_Core], cores_b: Sequence[_Core]
) -> tuple[NDArray[np.float64], NDArray[np.int64], NDArray[np.int64]]:
    """Smallest gap between two arms' posed bodies and the bodies attaining it.

    Returns
    -------
    gap : ndarray, shape (P,)
        Distance between the nearest bodies (their cores less their radii; negative when
        two capsules overlap, 0 when an outline overlaps).
    body_a, body_b : ndarray of int, shape (P,)
        Indices into the two lists.

    Examples
    --------
    Two straight arms side by side, 100 apart, links of radius 20 and 15: the gap between
    link 1s is 100 - 2*20.

    >>> from kinematics.cell import Arm
    >>> a = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), link_radii=(20, 15))
    >>> b = Arm("b", "B", 0, 100, 0, 400, 250, (-180, 180), (-150, 150), link_radii=(20, 15))
    >>> q = [[0.0, 0.0]]
    >>> gap, i, j = arm_distance(pose_cores(arm_bodies(a), q), pose_cores(arm_bodies(b), q))
    >>> gap.round(9).tolist(), i.tolist(), j.tolist()
    ([60.0], [0], [0])
    """
    P = len(cores_a[0].a if cores_a[0].a is not None else cores_a[0].W)
    best = np.full(P, np.inf)
    bi = np.zeros(P, dtype=np.int64)
    bj = np.zeros(P, dtype=np.int64)
    for i, u in enumerate(cores_a):
        for j, v in enumerate(cores_b):
            d = _core_distance(u, v)
            better = d < best
            best = np.where(better, d, best)
            bi = np.where(better, i, bi)
            bj = np.where(better, j, bj)
    return best, bi, bj


# ---------------------------------------------------------------------------------------
# results


@dataclass(frozen=True)
class ArmContact:
    """The first time two arms' bodies touch.

    Attributes
    ----------
    time_s : float
    arms : tuple of str
    bodies : tuple of str
        The body of each arm that touches (``"link 1"``, ``"link 2"``, ``"tool"``, ...).
    moves : tuple of tuple of str
        Per arm, the segment it is in: ``(from, to)`` (while it dwells at ``from`` or
        moves on to ``to``).
    moving : tuple of bool
        Per arm: moving (True) or dwelling at ``from``.
    gap : float
        The gap there (0 or less).
    """

    time_s: float
    arms: tuple[str, str]
    bodies: tuple[str, str]
    moves: tuple[tuple[str, str], tuple[str, str]]
    moving: tuple[bool, bool]
    gap: float


@dataclass(frozen=True)
class Separation:
    """Where two arms come closest over the horizon (a guaranteed lower bound).

    Attributes
    ----------
    arms : tuple of str
    gap : float
    time_s : float
    bodies : tuple of str
    first_contact : ArmContact or None
    samples : int
        Distance evaluations made.
    """

    arms: tuple[str, str]
    gap: float
    time_s: float
    bodies: tuple[str, str]
    first_contact: ArmContact | None
    samples: int


@dataclass(frozen=True)
class ZoneOccupancy:
    """When each of two arms is inside a shared zone.

    Attributes
    ----------
    arms : tuple of str
    space : str
        ``"restricted"`` or ``"operating"``.
    intervals : dict of str to tuple of (float, float)
        Per arm, the intervals over the horizon (covers, see the module docstring).
    overlap : bool
        Some intervals of the two arms overlap.
    suggested_start_shift_s : float or None
        The smallest change of the second arm's ``start_s`` (negative: earlier) that makes
        the intervals disjoint over the horizon, 0 when they are; None when no change
        within one of its cycles does.
    cycle_intervals : dict of str to tuple of (float, float)
        Per arm, the intervals within its own cycle (seconds from the cycle's start).
    """

    arms: tuple[str, str]
    space: str
    intervals: dict[str, tuple[tuple[float, float], ...]]
    overlap: bool
    suggested_start_shift_s: float | None
    cycle_intervals: dict[str, tuple[tuple[float, float], ...]] = field(default_factory=dict)


@dataclass(frozen=True)
class Interference:
    """Arms run together: contacts, the smallest separation and shared-zone occupancy.

    Attributes
    ----------
    horizon_s : float or None
        None with fewer than two arms running.
    timelines : tuple of ArmTimeline
    skipped : dict of str to str
        Arms without a planned cycle and why.
    separations : tuple of Separation
        Per pair of running arms.
    zones : tuple of ZoneOccupancy
    """

    horizon_s: float | None
    timelines: tuple[ArmTimeline, ...]
    skipped: dict[str, str]
    separations: tuple[Separation, ...]
    zones: tuple[ZoneOccupancy, ...]

    @property
    def first_contact(self) -> ArmContact | None:
        """The earliest contact of any two arms."""
        hits = [s.first_contact for s in self.separations if s.first_contact is not None]
        return min(hits, key=lambda c: c.time_s) if hits else None

    @property
    def min_separation(self) -> Separation | None:
        """The pair of arms that comes closest."""
        return min(self.separations, key=lambda s: s.gap) if self.separations else None


# ---------------------------------------------------------------------------------------
# searches


def _grid(times: NDArray, travel: Any, step: float) -> NDArray[np.float64]:
    """Sorted unique times, with intervals split until each has travel <= step."""
    t = np.unique(times)
    for _ in range(60):
        dl = np.diff(travel(t))
        k = np.minimum(np.ceil(dl / step), 64).astype(np.int64)
        k = np.maximum(k, 1)
        if (k == 1).all():
            break
        rep = np.repeat(np.arange(len(k)), k - 1)
        first = np.concatenate([[0], np.cumsum(k - 1)[:-1]])
        frac = (np.arange(len(rep)) - first[rep] + 1) / k[rep]
        extra = t[rep] + frac * (t[rep + 1] - t[rep])
        t = np.unique(np.concatenate([t, extra]))
    return t


def _pair(ta: ArmTimeline, tb: ArmTimeline, horizon: float, r_min: float) -> Separation:
    """Contact search and smallest gap of two arms over [0, horizon]."""

    def travel(t: NDArray) -> NDArray:
        return ta.travelled(t) + tb.travelled(t)

    def gap(t: NDArray) -> tuple[NDArray, NDArray, NDArray, NDArray]:
        qa, la = ta.pose_and_travel(t)
        qb, lb = tb.pose_and_travel(t)
        d, i, j = arm_distance(pose_cores(ta.bodies, qa), pose_cores(tb.bodies, qb))
        return d, i, j, la + lb

    marks = np.concatenate([[0.0, horizon], ta.boundaries(0, horizon), tb.boundaries(0, horizon)])
    t = _grid(marks, travel, _START_TRAVEL * r_min)
    d, bi, bj, lam = gap(t)
    tol_min = MIN_TOL_FRACTION * r_min
    tol_contact = CONTACT_TOL_FRACTION * r_min
    evals = len(t)
    for _ in range(200):
        dl = np.diff(lam)
        lower = 0.5 * (d[:-1] + d[1:] - dl)
        best = float(d.min())
        touch = np.flatnonzero(d <= 0)
        first = int(touch[0]) if len(touch) else len(d)
        early = np.arange(len(dl)) < first
        need = ((lower < best - tol_min) & (dl > tol_min)) | (
            early & (lower <= 0) & (dl > tol_contact)
        )
        k = int(np.count_nonzero(need))
        if k == 0 or evals + k > _MAX_EVALS:
            break
        mid = 0.5 * (t[:-1] + t[1:])[need]
        dm, im, jm, lm = gap(mid)
        evals += k
        order = np.argsort(np.concatenate([t, mid]), kind="stable")
        t = np.concatenate([t, mid])[order]
        d = np.concatenate([d, dm])[order]
        bi = np.concatenate([bi, im])[order]
        bj = np.concatenate([bj, jm])[order]
        lam = np.concatenate([lam, lm])[order]
    lower = 0.5 * (d[:-1] + d[1:] - np.diff(lam))
    k = int(np.argmin(d))
    low = float(min(d[k], lower.min())) if len(lower) else float(d[k])
    names_a, names_b = ta.bodies.names, tb.bodies.names
    contact = None
    touch = np.flatnonzero(d <= 0)
    if len(touch):
        c = int(touch[0])
        tc = float(t[c])
        moves, moving = [], []
        for tl in (ta, tb):
            seg = tl.plan.segments[int(tl.segment_at(tc))]
            moves.append((seg.from_id, seg.to_id))
            moving.append(bool(tl.phase(tc) > seg.move_start_s))
        contact = ArmContact(
            tc,
            (ta.arm, tb.arm),
            (names_a[int(bi[c])], names_b[int(bj[c])]),
            (moves[0], moves[1]),
            (moving[0], moving[1]),
            float(d[c]),
        )
    return Separation(
        (ta.arm, tb.arm),
        low,
        float(t[k]),
        (names_a[int(bi[k])], names_b[int(bj[k])]),
        contact,
        evals,
    )


def _zone_rings(geometry: Any, tol: float) -> list[NDArray[np.float64]]:
    """Outer rings of a cover of the zone: widened by ``tol`` and simplified within it
    (holes count as inside)."""
    cover = shapely.buffer(geometry, tol, quad_segs=4)
    simple = shapely.simplify(cover, tol, preserve_topology=True)
    if not shapely.covers(simple, geometry):
        simple = cover
    polys = [g for g in shapely.get_parts(simple) if g.geom_type == "Polygon" and g.area > 0]
    return [np.asarray(p.exterior.coords, dtype=float)[:-1] for p in polys]


def _segment_ring_gap(a: NDArray, b: NDArray, ring: NDArray) -> NDArray:
    """Distance from segments a-b (P, 2) to a closed ring's outline (E, 2): the ring's
    vertices to the segment bound it from above; only edges whose boxes come that close
    are measured exactly."""
    v0, v1 = ring, np.roll(ring, -1, axis=0)
    ub = _pt_seg(v0[None, :, :], a[:, None, :], b[:, None, :]).min(axis=1)
    slo, shi = np.minimum(a, b), np.maximum(a, b)
    elo, ehi = np.minimum(v0, v1), np.maximum(v0, v1)
    gx = np.maximum(
        np.maximum(elo[None, :, 0] - shi[:, None, 0], slo[:, None, 0] - ehi[None, :, 0]), 0
    )
    gy = np.maximum(
        np.maximum(elo[None, :, 1] - shi[:, None, 1], slo[:, None, 1] - ehi[None, :, 1]), 0
    )
    p, e = np.nonzero(gx * gx + gy * gy <= (ub * ub)[:, None])
    d = _seg_seg(a[p], b[p], v0[e], v1[e])
    out = ub.copy()
    np.minimum.at(out, p, d)
    return out


def _zone_gap(
    cores: Sequence[_Core], rings: Sequence[NDArray], near_gap: float, chunk: int = 2048
) -> NDArray:
    """Gap between posed bodies and a zone's rings (<= 0: inside): exact where the
    bodies' boxes come within ``near_gap`` of the zone's, else that box distance (a lower
    bound)."""
    P = len(cores[0].a if cores[0].a is not None else cores[0].W)
    out = np.full(P, np.inf)
    for ring in rings:
        lo, hi = ring.min(axis=0), ring.max(axis=0)
        for core in cores:
            pts = np.stack([core.a, core.b], axis=1) if core.W is None else core.W
            blo = pts.min(axis=1) - core.radius
            bhi = pts.max(axis=1) + core.radius
            g = np.maximum(np.maximum(lo - bhi, blo - hi), 0.0)
            box = np.hypot(g[:, 0], g[:, 1])
            near = np.flatnonzero(box <= near_gap)
            d = box
            if len(near):
                # A core point inside the ring: inside, no distance needed.
                first = pts[near, 0, :]
                ins = _inside(first, np.broadcast_to(ring, (len(near),) + ring.shape))
                d[near[ins]] = -core.radius
                near = near[~ins]
            for k in range(0, len(near), chunk):
                rows = near[k : k + chunk]
                if core.W is None:
                    d[rows] = _segment_ring_gap(core.a[rows], core.b[rows], ring) - core.radius
                    continue
                part = _Core(core.name, 0.0, None, None, core.W[rows])
                W = np.broadcast_to(ring, (len(rows),) + ring.shape)
                d[rows] = _core_distance(part, _Core("zone", 0.0, None, None, W))
            out = np.minimum(out, d)
    return out


def _merge(iv: list[tuple[float, float]]) -> list[tuple[float, float]]:
    out: list[list[float]] = []
    for a, b in sorted(iv):
        if out and a <= out[-1][1]:
            out[-1][1] = max(out[-1][1], b)
        else:
            out.append([a, b])
    return [(a, b) for a, b in out]


def zone_occupancy(tl: ArmTimeline, geometry: Any) -> tuple[tuple[float, float], ...]:
    """Intervals of one cycle (seconds from its start) when the arm's moving bodies are
    inside a zone (covers, resolved to one sample; see the module docstring).

    Examples
    --------
    An arm that swings its straight links over a zone in front of it: inside while the
    links are over it (common sense check; exact times are tested against closed forms).

    >>> from kinematics.cell import Arm, Cell, Sequence, Target
    >>> from kinematics.evaluate import evaluate_cell
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), link_radii=(20, 20),
    ...           elbow="positive", joint_speed_dps=(90, 90), joint_accel_dps2=(900, 900))
    >>> ts = (Target("p", "P", 0, 600, "a"), Target("q", "Q", 0, -600, "a"))
    >>> cell = Cell("c", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))
    >>> plan = evaluate_cell(cell).arms["a"].plans[0]
    >>> tl = arm_timeline(plan, arm_bodies(arm))
    >>> zone = shapely.box(500, -50, 700, 50)
    >>> [round(b - a, 1) for a, b in zone_occupancy(tl, zone)]
    [0.2, 0.2]
    """
    T = tl.cycle_time_s
    step = SAMPLE_FRACTION * tl.bodies.min_link_radius
    rings = _zone_rings(geometry, 0.2 * step)
    if not rings or T <= 0:
        return ()
    moving = ArmBodies(
        tl.bodies.arm,
        tuple(b for b in tl.bodies.bodies if b.frame != BASE),
        tl.bodies.link_radii,
        tl.bodies.radii_assumed,
    )
    t0 = tl.start_s

    def clear(tau: NDArray) -> tuple[NDArray, NDArray]:
        q, lam = tl.pose_and_travel(t0 + tau)
        return _zone_gap(pose_cores(moving, q), rings, 4.0 * step), lam

    def travel(tau: NDArray) -> NDArray:
        return tl.travelled(t0 + tau)

    marks = [0.0, T]
    for s in tl.plan.segments:
        marks += [s.start_s, s.move_start_s, s.end_s]
    tau = _grid(np.clip(np.asarray(marks), 0.0, T), travel, 10.0 * step)
    c, lam = clear(tau)
    evals = len(tau)
    for _ in range(200):
        dl = np.diff(lam)
        out_sure = (c[:-1] > 0) & (c[1:] > 0) & (c[:-1] + c[1:] - dl > 0)
        # Inside at both ends counts as inside throughout (a cover: a brief exit between
        # two samples inside would only shorten the interval).
        in_both = (c[:-1] <= 0) & (c[1:] <= 0)
        need = ~out_sure & ~in_both & (dl > 0.5 * step)
        k = int(np.count_nonzero(need))
        if k == 0 or evals + k > _MAX_EVALS:
            break
        mid = 0.5 * (tau[:-1] + tau[1:])[need]
        cm, lm = clear(mid)
        evals += k
        order = np.argsort(np.concatenate([tau, mid]), kind="stable")
        tau = np.concatenate([tau, mid])[order]
        c = np.concatenate([c, cm])[order]
        lam = np.concatenate([lam, lm])[order]
    dl = np.diff(lam)
    out_sure = (c[:-1] > 0) & (c[1:] > 0) & (c[:-1] + c[1:] - dl > 0)
    iv = [(float(tau[i]), float(tau[i + 1])) for i in np.flatnonzero(~out_sure)]
    return tuple(_merge(iv))


def _on_horizon(
    cycle: Sequence[tuple[float, float]], start: float, T: float, t0: float, t1: float
) -> list[tuple[float, float]]:
    """Cycle intervals repeated from ``start`` every ``T``, clipped to [t0, t1]."""
    if not cycle or T <= 0:
        return []
    k0 = math.floor((t0 - start) / T) - 1
    k1 = math.ceil((t1 - start) / T) + 1
    out = []
    for k in range(k0, k1 + 1):
        for a, b in cycle:
            lo, hi = max(start + k * T + a, t0), min(start + k * T + b, t1)
            if hi > lo:
                out.append((lo, hi))
    return _merge(out)


def _overlaps(a: Sequence[tuple[float, float]], b: Sequence[tuple[float, float]]) -> bool:
    return any(x0 < y1 and y0 < x1 for x0, x1 in a for y0, y1 in b)


def start_shift(
    intervals_a: Sequence[tuple[float, float]],
    cycle_b: Sequence[tuple[float, float]],
    start_b: float,
    period_b: float,
    horizon: float,
) -> float | None:
    """Smallest change of arm b's start time that makes its intervals disjoint from
    arm a's over [0, horizon] (0 when they already are; None when no change within one of
    b's cycles does).

    Parameters
    ----------
    intervals_a : sequence of (float, float)
        Arm a's intervals over the horizon.
    cycle_b : sequence of (float, float)
        Arm b's intervals within its cycle.
    start_b, period_b : float
        Arm b's start time and cycle time.
    horizon : float

    Examples
    --------
    a is inside over [1, 2]; b, with a 4 s cycle starting at 0, over [1.5, 2.5] of its
    cycle: starting b 0.5 s later (or 1.5 s earlier) separates them; later is smaller.

    >>> start_shift([(1.0, 2.0)], [(1.5, 2.5)], 0.0, 4.0, 4.0)
    0.5
    """
    if not intervals_a or not cycle_b or period_b <= 0:
        return 0.0
    copies = _on_horizon(cycle_b, start_b, period_b, -2 * period_b, horizon + 2 * period_b)
    a = np.asarray(intervals_a, dtype=float).reshape(-1, 2)
    b = np.asarray(copies, dtype=float).reshape(-1, 2)
    # Shifts v that make [a0, a1] and [b0 + v, b1 + v] overlap: the open (a0 - b1, a1 - b0).
    lo = (a[:, None, 0] - b[None, :, 1]).ravel()
    hi = (a[:, None, 1] - b[None, :, 0]).ravel()
    keep = (hi > -period_b) & (lo < period_b) & (hi > lo)
    lo, hi = lo[keep], hi[keep]
    if not len(lo):
        return 0.0
    order = np.argsort(lo)
    lo, hi = lo[order], hi[order]
    # Merge overlapping open intervals; touching ones stay apart (the shared end is allowed).
    reach = np.maximum.accumulate(hi)
    start = np.concatenate([[True], lo[1:] >= reach[:-1]])
    gid = np.cumsum(start) - 1
    mlo = lo[start]
    mhi = np.maximum.reduceat(hi, np.flatnonzero(start))
    inside = (mlo < 0.0) & (0.0 < mhi)
    if not inside.any():
        return 0.0
    k = int(np.flatnonzero(inside)[0])
    del gid
    cands = [(abs(v), -v, v) for v in (float(mhi[k]), float(mlo[k])) if abs(v) <= period_b]
    return min(cands)[2] + 0.0 if cands else None


def run_interference(
    timelines: Sequence[ArmTimeline],
    zones: Sequence[Any] = (),
    horizon_s: float | None = None,
    skipped: dict[str, str] | None = None,
) -> Interference:
    """Run arms together: contacts and smallest gap per pair, shared-zone occupancy.

    Parameters
    ----------
    timelines : sequence of ArmTimeline
    zones : sequence of kinematics.spaces.SharedZone
        Zones of arm pairs; those whose two arms both run are reported.
    horizon_s : float, optional
        Default: the longest cycle plus the shortest.
    skipped : dict, optional
        Arms without a cycle and why (passed through).
    """
    tls = list(timelines)
    skipped = dict(skipped or {})
    if len(tls) < 2:
        return Interference(None, tuple(tls), skipped, (), ())
    periods = [tl.cycle_time_s for tl in tls]
    H = horizon_s if horizon_s is not None else max(periods) + min(periods)
    r_min = min(tl.bodies.min_link_radius for tl in tls)
    seps = []
    for i in range(len(tls)):
        for j in range(i + 1, len(tls)):
            seps.append(_pair(tls[i], tls[j], H, r_min))
    by_arm = {tl.arm: tl for tl in tls}
    out = []
    for z in zones:
        a, b = z.arms
        if a not in by_arm or b not in by_arm:
            continue
        ta, tb = by_arm[a], by_arm[b]
        ca, cb = zone_occupancy(ta, z.geometry), zone_occupancy(tb, z.geometry)
        ia = _on_horizon(ca, ta.start_s, ta.cycle_time_s, 0.0, H)
        ib = _on_horizon(cb, tb.start_s, tb.cycle_time_s, 0.0, H)
        shift = start_shift(ia, cb, tb.start_s, tb.cycle_time_s, H)
        out.append(
            ZoneOccupancy(
                (a, b),
                z.kind,
                {a: tuple(ia), b: tuple(ib)},
                _overlaps(ia, ib),
                shift,
                {a: tuple(ca), b: tuple(cb)},
            )
        )
    return Interference(float(H), tuple(tls), skipped, tuple(seps), tuple(out))


def cell_interference(
    cell: Cell, evaluation: Any, zones: Sequence[Any] = (), horizon_s: float | None = None
) -> Interference:
    """:func:`run_interference` for the planned cycles of a cell's arms.

    Parameters
    ----------
    cell : Cell
    evaluation : CellEvaluation
        With plans (:func:`kinematics.evaluate.evaluate_cell` makes them).
    zones : sequence of kinematics.spaces.SharedZone
        The cell's shared zones (``cell_spaces(...).zones``).
    horizon_s : float, optional
    """
    tls, skipped = cell_timelines(cell, evaluation)
    return run_interference(tls, zones, horizon_s, skipped)

"""Moves between targets: joint paths, clearance along them, first contact, swept area.

A move is a straight line in joint space between the configurations chosen at its two
ends. When the two ends use different elbow configurations the elbow must pass through
full stretch (q2 = 0), so the move exists only when the q2 limits include 0; a path that
would fold the elbow through q2 = +-180 is never used.

Clearance along a move is bounded from below: the move is first sampled so that no point
of any body travels more than a tenth of the smallest link radius between samples, then
intervals are split where a Lipschitz bound (clearance cannot change faster than the
fastest body point moves) leaves room for a smaller value or an earlier contact. The
reported clearance is the resulting lower bound, at most a hundredth of the smallest link
radius below the true minimum; whether and where the move first touches is settled to a
millionth of the reach, and a move whose lower bound reaches 0 counts as colliding.

The swept area is the union, over consecutive samples, of the convex hulls of each
body's core (centre segment, tool point or outline) widened by the body's radius plus a
bound on how far the true point paths bow away from the straight chords between samples
(h^2 / 8 times the largest acceleration of a body point), so it covers the true swept
area.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely
from numpy.typing import ArrayLike, NDArray

from .angles import ANGLE_EPS
from .bodies import (
    BASE,
    LINK1,
    TOOL,
    ArmBodies,
    Body,
    arm_bodies,
    clearance_margin,
    link_blocking,
    pose,
    tool_blocking,
    work_height,
)
from .cell import Arm, Cell
from .clearance import FixtureSet, pose_clearance

__all__ = [
    "SAMPLE_FRACTION",
    "MIN_TOL_FRACTION",
    "JointPath",
    "Contact",
    "MoveSweep",
    "MoveResult",
    "joint_path",
    "joint_path_between",
    "move_tool_mask",
    "point_speed",
    "sample_count",
    "sweep_move",
    "swept_shapes",
    "outward_buffer",
    "sequence_moves",
    "cell_moves",
]

#: Largest travel of any body point between samples, as a fraction of the smallest link radius.
SAMPLE_FRACTION = 0.1
#: The smallest clearance along a move is reported at most this fraction of the smallest
#: link radius below the true one (never above it).
MIN_TOL_FRACTION = 0.01
# Whether and where a move first touches is settled to this fraction of the reach.
CONTACT_TOL_REL = 1e-6
# Polygonised circles in swept areas: segments per quarter circle.
QUAD_SEGS = 128


@dataclass(frozen=True)
class JointPath:
    """The joint values a move actually runs between (degrees).

    Attributes
    ----------
    q_from, q_to : tuple of float
        Start and end (q1, q2), chosen among the representatives inside the joint limits.
    changes_configuration : bool
        The elbow passes through full stretch (q2 = 0) on the way.
    allowed : bool
        A path within the limits exists.
    reason : str
        Why not, when not allowed.
    """

    q_from: tuple[float, float]
    q_to: tuple[float, float]
    changes_configuration: bool
    allowed: bool
    reason: str = ""

    @property
    def delta(self) -> tuple[float, float]:
        """Joint travel (q1, q2) in degrees."""
        return (self.q_to[0] - self.q_from[0], self.q_to[1] - self.q_from[1])

    def at(self, s: ArrayLike) -> NDArray[np.float64]:
        """Joint angles at path parameters ``s`` in [0, 1], shape ``shape(s) + (2,)``."""
        s = np.asarray(s, dtype=float)[..., None]
        return np.asarray(self.q_from) + s * (np.asarray(self.q_to) - np.asarray(self.q_from))


def _in(v: float, lo: float, hi: float) -> bool:
    return lo - ANGLE_EPS <= v <= hi + ANGLE_EPS


def _crossings(a: float, b: float, period: float, offset: float) -> int:
    """Count values offset + k*period strictly between a and b."""
    lo, hi = min(a, b), max(a, b)
    first = math.floor((lo - offset) / period + 1e-12) + 1
    last = math.ceil((hi - offset) / period - 1e-12) - 1
    return max(0, last - first + 1)


def joint_path(arm: Arm, q_from_deg: ArrayLike, q_to_deg: ArrayLike) -> JointPath:
    """The straight joint-space path between two poses of an arm.

    q1 keeps its start value and ends at the representative of the end value inside the
    limits that is nearest to it; q2 is chosen so the path stays inside its limits,
    never folds through +-180 and passes full stretch at most once (a configuration
    change), preferring no change and then the shortest travel.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-170, 170), (-150, 150))
    >>> p = joint_path(arm, (10.0, 60.0), (40.0, -60.0))
    >>> p.changes_configuration, p.allowed, p.delta
    (True, True, (30.0, -120.0))
    >>> stiff = Arm("b", "B", 0, 0, 0, 400, 250, (-170, 170), (10, 150))
    >>> joint_path(stiff, (10.0, 60.0), (40.0, -60.0)).reason
    'configuration change needs full stretch (q2 = 0), outside the q2 limits'
    """
    qa = np.asarray(q_from_deg, dtype=float).reshape(2)
    qb = np.asarray(q_to_deg, dtype=float).reshape(2)
    (lo1, hi1), (lo2, hi2) = arm.q1_limits, arm.q2_limits
    ks = range(-3, 4)
    q1a = float(qa[0])
    if not _in(q1a, lo1, hi1):
        cands = [q1a + 360 * k for k in ks if _in(q1a + 360 * k, lo1, hi1)]
        q1a = cands[0] if cands else q1a
    c1 = [float(qb[0]) + 360 * k for k in ks if _in(float(qb[0]) + 360 * k, lo1, hi1)]
    q1b = min(c1, key=lambda v: abs(v - q1a)) if c1 else float(qb[0])
    ok1 = _in(q1a, lo1, hi1) and _in(q1b, lo1, hi1)
    best: tuple[int, float, float, float] | None = None
    for ka in ks:
        a2 = float(qa[1]) + 360 * ka
        if not _in(a2, lo2, hi2):
            continue
        for kb in ks:
            b2 = float(qb[1]) + 360 * kb
            if not _in(b2, lo2, hi2):
                continue
            folds = _crossings(a2, b2, 360.0, 180.0)
            stretches = _crossings(a2, b2, 360.0, 0.0)
            if folds or stretches > 1:
                continue
            key = (stretches, abs(b2 - a2), a2, b2)
            if best is None or key[:2] < best[:2]:
                best = key
    if best is None or not ok1:
        opposite = (qa[1] > 0 > qb[1]) or (qa[1] < 0 < qb[1])
        if ok1 and opposite and not _in(0.0, lo2, hi2):
            reason = "configuration change needs full stretch (q2 = 0), outside the q2 limits"
        else:
            reason = "no joint path within the joint limits"
        return JointPath((q1a, float(qa[1])), (q1b, float(qb[1])), bool(opposite), False, reason)
    stretches, _, a2, b2 = best
    return JointPath((q1a, a2), (q1b, b2), stretches == 1, True)


def joint_path_between(arm: Arm, q_from_deg: ArrayLike, q_to_deg: ArrayLike) -> JointPath:
    """The straight joint-space path between two poses, taken with the values given.

    Unlike :func:`joint_path`, no representative is chosen: q1 and q2 run from exactly
    ``q_from_deg`` to ``q_to_deg`` (for a plan that picks the q1 + k*360 it uses). The path
    is allowed when both ends are within the joint limits and the elbow does not fold
    through q2 = +-180 on the way; it changes configuration when it passes full stretch.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-200, 200), (-150, 150))
    >>> p = joint_path_between(arm, (-170.0, 60.0), (190.0, -60.0))
    >>> p.allowed, p.changes_configuration, p.delta
    (True, True, (360.0, -120.0))
    >>> joint_path_between(arm, (0.0, 60.0), (0.0, 160.0)).reason
    'no joint path within the joint limits'
    """
    qa = np.asarray(q_from_deg, dtype=float).reshape(2)
    qb = np.asarray(q_to_deg, dtype=float).reshape(2)
    a = (float(qa[0]), float(qa[1]))
    b = (float(qb[0]), float(qb[1]))
    (lo1, hi1), (lo2, hi2) = arm.q1_limits, arm.q2_limits
    inside = _in(a[0], lo1, hi1) and _in(b[0], lo1, hi1) and _in(a[1], lo2, hi2)
    inside = inside and _in(b[1], lo2, hi2)
    stretches = _crossings(a[1], b[1], 360.0, 0.0)
    if not inside:
        return JointPath(a, b, stretches > 0, False, "no joint path within the joint limits")
    if _crossings(a[1], b[1], 360.0, 180.0):
        return JointPath(a, b, stretches > 0, False, "the elbow would fold through q2 = +-180")
    return JointPath(a, b, stretches == 1, True)


def move_tool_mask(
    arm: Arm,
    fixtures: Sequence[Any],
    margin: float,
    has_tool: bool,
    work_height_from: float | None,
    work_height_to: float | None,
) -> NDArray[np.bool_] | None:
    """Fixtures blocking the tool along a move (the rule :func:`sequence_moves` applies).

    Fixtures taller than the higher of the two ends' work heights; when either end has
    none, the link rule. None when the arm has no tool body.
    """
    if not has_tool:
        return None
    wa, wb = work_height_from, work_height_to
    wh = max(wa, wb) if wa is not None and wb is not None else np.nan
    return tool_blocking(arm, fixtures, margin, wh)


def _joint_reach(body: Body, arm: Arm) -> tuple[float, float]:
    """Largest distance of a core point and of any point of a body from its joint axis.

    Link 1 is measured from the shoulder, link 2 and the tool from the elbow.
    """
    if body.kind == "capsule":
        core = np.array([body.a, body.b], dtype=float)
        pad = body.radius
    else:
        assert body.outline is not None
        core = body.outline
        pad = 0.0
    if body.frame == TOOL:
        core = core + np.array([arm.a2, 0.0])
    rho = float(np.max(np.hypot(core[:, 0], core[:, 1])))
    return rho, rho + pad


def point_speed(bodies: ArmBodies, delta_deg: ArrayLike) -> float:
    """Bound on how far any body point travels per unit of path parameter.

    A link-1 point at distance rho from the shoulder moves rho*|d1|; a link-2 or tool
    point at distance rho from the elbow at most a1*|d1| + rho*|d1 + d2| (radians).
    """
    d1, d2 = np.radians(np.asarray(delta_deg, dtype=float).reshape(2))
    speed = 0.0
    for body in bodies.bodies:
        if body.frame == BASE:
            continue
        _, rho = _joint_reach(body, bodies.arm)
        if body.frame == LINK1:
            v = rho * abs(d1)
        else:
            v = bodies.arm.a1 * abs(d1) + rho * abs(d1 + d2)
        speed = max(speed, v)
    return float(speed)


def sample_count(bodies: ArmBodies, delta_deg: ArrayLike) -> int:
    """Intervals needed so no body point moves more than SAMPLE_FRACTION of the smallest
    link radius between samples.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-170, 170), (-150, 150), link_radii=(20, 10))
    >>> sample_count(arm_bodies(arm), (0.0, 90.0))  # 260 * pi/2 / 1
    409
    """
    step = SAMPLE_FRACTION * bodies.min_link_radius
    return max(1, math.ceil(point_speed(bodies, delta_deg) / step - 1e-9))


@dataclass(frozen=True)
class Contact:
    """Where a move first touches a blocking fixture.

    Attributes
    ----------
    s : float
        Path parameter in [0, 1] (conservative: the contact is no earlier than the
        tolerance before this).
    q_deg : tuple of float
        Joint angles there.
    xy : tuple of float
        A point of the fixture nearest the body there.
    fixture : int
        Fixture index.
    body : int
        Body index.
    """

    s: float
    q_deg: tuple[float, float]
    xy: tuple[float, float]
    fixture: int
    body: int


@dataclass(frozen=True)
class MoveSweep:
    """Clearance along one joint path and, when asked for, the swept area.

    Attributes
    ----------
    path : JointPath
    samples : int
        Intervals of the base sampling (before refinement).
    clearance : float
        Guaranteed lower bound of the smallest clearance along the move, at most
        MIN_TOL_FRACTION of the smallest link radius below it (+inf when nothing blocks).
    collides : bool
        ``clearance <= 0``.
    fixture, body : int
        Fixture and body attaining it (-1 when nothing blocks).
    s_min : float
        Path parameter of the smallest clearance.
    contact : Contact or None
        First contact when the move collides.
    swept : shapely geometry or None
        Union of ``swept_by_body``.
    swept_by_body : dict of str to shapely geometry
    """

    path: JointPath
    samples: int
    clearance: float
    collides: bool
    fixture: int
    body: int
    s_min: float
    contact: Contact | None
    swept: Any = None
    swept_by_body: dict[str, Any] | None = None


def _bounds(s: NDArray, c: NDArray, speed: float) -> tuple[NDArray, NDArray]:
    """Interval widths and Lipschitz lower bounds of the clearance on each interval."""
    width = np.diff(s)
    with np.errstate(invalid="ignore"):
        lower = 0.5 * (c[:-1] + c[1:] - speed * width)
    return width, np.where(np.isnan(lower), np.inf, lower)


def _refine(
    eval_c: Any,
    s: NDArray,
    c: NDArray,
    speed: float,
    tol_min: float,
    tol_contact: float,
    cap: int,
) -> tuple[NDArray, NDArray, NDArray]:
    """Split intervals until the Lipschitz bound pins the minimum down to ``tol_min`` and
    settles, to ``tol_contact``, whether and where the move first touches.

    Stops early after ``cap`` evaluations; the caller's bounds then stay conservative.
    """
    rec = np.arange(len(s))  # row index into the evaluation record
    done = len(s)
    for _ in range(200):
        width, lower = _bounds(s, c, speed)
        best = np.min(c)
        need = (lower < best - tol_min) & (width > 1e-15)
        touch = np.flatnonzero(c <= 0)
        first = int(touch[0]) if len(touch) else len(c)
        early = np.arange(len(width)) < first
        need |= early & (lower <= 0) & (speed * width > tol_contact)
        k = int(np.count_nonzero(need))
        if k == 0 or done + k > cap:
            break
        mids = 0.5 * (s[:-1] + s[1:])[need]
        cm, idx = eval_c(mids)
        done += k
        s = np.concatenate([s, mids])
        c = np.concatenate([c, cm])
        rec = np.concatenate([rec, idx])
        order = np.argsort(s, kind="stable")
        s, c, rec = s[order], c[order], rec[order]
    return s, c, rec


def sweep_move(
    bodies: ArmBodies,
    fixtures: FixtureSet,
    path: JointPath,
    link_mask: ArrayLike,
    tool_mask: ArrayLike | None = None,
    fixture_outlines: Sequence[ArrayLike] | None = None,
    polygons: bool = False,
) -> MoveSweep:
    """Clearance along a joint path against blocking fixtures, first contact, swept area.

    Parameters
    ----------
    bodies : ArmBodies
    fixtures : FixtureSet
    path : JointPath
        From :func:`joint_path`; must be allowed.
    link_mask, tool_mask : array_like of bool, shape (F,)
        Blocking fixtures (see :func:`kinematics.clearance.pose_clearance`).
    fixture_outlines : sequence of array_like, optional
        Outlines for locating the contact point (default: ``fixtures.polygons``).
    polygons : bool
        Also build the swept-area polygons (slower).

    Returns
    -------
    MoveSweep
    """
    if not path.allowed:
        raise ValueError(f"no joint path: {path.reason}")
    n = sample_count(bodies, path.delta)
    speed = point_speed(bodies, path.delta)
    tol_min = MIN_TOL_FRACTION * bodies.min_link_radius
    tol_contact = CONTACT_TOL_REL * bodies.arm.reach_max
    records: list[tuple[NDArray, NDArray]] = []

    def eval_c(ss: NDArray) -> tuple[NDArray, NDArray]:
        res = pose_clearance(bodies, fixtures, path.at(ss), link_mask, tool_mask)
        base = sum(len(r[0]) for r in records)
        records.append((res.fixture, res.body))
        return res.clearance, base + np.arange(len(ss))

    s0 = np.linspace(0.0, 1.0, n + 1)
    c0, _ = eval_c(s0)
    cap = 20 * (n + 1) + 5000
    s, c, idx = _refine(eval_c, s0, c0, speed, tol_min, tol_contact, cap)
    fix_all = np.concatenate([r[0] for r in records])
    body_all = np.concatenate([r[1] for r in records])
    width, lower = _bounds(s, c, speed)
    k = int(np.argmin(c))
    # Report the guaranteed lower bound: never more than tol_min below the true minimum.
    clearance = float(min(c[k], lower.min())) if len(lower) else float(c[k])
    contact = None
    if clearance <= 0:
        j = int(np.argmax(lower <= 0)) if (lower <= 0).any() else max(0, k - 1)
        at = j if c[j] <= c[min(j + 1, len(c) - 1)] else j + 1
        s_c = float(s[j])
        q_c = path.at(s_c)
        fi, bi = int(fix_all[idx[at]]), int(body_all[idx[at]])
        outlines = fixture_outlines if fixture_outlines is not None else fixtures.polygons
        xy = _contact_point(bodies, q_c, bi, outlines[fi])
        contact = Contact(s_c, (float(q_c[0]), float(q_c[1])), xy, fi, bi)
    sweep = swept_shapes(bodies, path, n) if polygons else None
    return MoveSweep(
        path=path,
        samples=n,
        clearance=clearance,
        collides=bool(clearance <= 0),
        fixture=int(fix_all[idx[k]]) if np.isfinite(clearance) else -1,
        body=int(body_all[idx[k]]) if np.isfinite(clearance) else -1,
        s_min=float(s[k]),
        contact=contact,
        swept=None if sweep is None else shapely.union_all(list(sweep.values())),
        swept_by_body=sweep,
    )


def _contact_point(
    bodies: ArmBodies, q: NDArray, body: int, outline: ArrayLike
) -> tuple[float, float]:
    shape = bodies.shapes(q)[bodies.bodies[body].name]
    fix = shapely.Polygon(np.asarray(outline, dtype=float))
    line = shapely.shortest_line(shape, fix)
    x, y = line.coords[-1]
    return float(x), float(y)


def outward_buffer(geom: Any, radius: float, quad_segs: int = QUAD_SEGS) -> Any:
    """Buffer whose polygonised arcs lie outside the true circle (a cover, not an inset)."""
    if radius <= 0:
        return geom
    return shapely.buffer(geom, radius / math.cos(math.pi / (4 * quad_segs)), quad_segs=quad_segs)


def _core_points(bodies: ArmBodies, body: Body, q: NDArray) -> NDArray:
    """World coordinates of a body's core points at poses q: (n, K, 2)."""
    k = bodies.bodies.index(body)
    return pose(bodies, q, [k])[0].core


def _bow(bodies: ArmBodies, body: Body, delta_deg: tuple[float, float], n: int) -> float:
    """How far a core point's path can bow away from its chord between samples."""
    d1, d2 = np.radians(np.asarray(delta_deg, dtype=float))
    rho, _ = _joint_reach(body, bodies.arm)
    if body.frame == BASE:
        return 0.0
    if body.frame == LINK1:
        acc = rho * d1 * d1
    else:
        acc = bodies.arm.a1 * d1 * d1 + rho * (d1 + d2) ** 2
    return float(acc / (8.0 * n * n))


def swept_shapes(bodies: ArmBodies, path: JointPath, n: int | None = None) -> dict[str, Any]:
    """Area swept by each body along a joint path, as shapely geometries (covers).

    Parameters
    ----------
    bodies : ArmBodies
    path : JointPath
    n : int, optional
        Sampling intervals (default :func:`sample_count`).
    """
    if n is None:
        n = sample_count(bodies, path.delta)
    s = np.linspace(0.0, 1.0, n + 1)
    q = path.at(s)
    out: dict[str, Any] = {}
    for body in bodies.bodies:
        pts = _core_points(bodies, body, q)
        grow = body.radius + _bow(bodies, body, path.delta, n)
        if body.frame == BASE:
            core = shapely.Polygon(pts[0]) if body.kind == "polygon" else shapely.Point(pts[0, 0])
        elif body.kind == "capsule" and body.a == body.b:
            core = shapely.LineString(pts[:, 0, :]) if n else shapely.Point(pts[0, 0])
        elif body.kind == "capsule":
            quads = np.concatenate([pts[:-1], pts[1:, ::-1]], axis=1)  # (n, 4, 2)
            hulls = shapely.convex_hull(shapely.multipoints(quads))
            core = shapely.union_all(hulls)
        else:
            nxt = np.roll(pts, -1, axis=1)
            quads = np.stack([pts[:-1], nxt[:-1], nxt[1:], pts[1:]], axis=2).reshape(-1, 4, 2)
            hulls = shapely.convex_hull(shapely.multipoints(quads))
            start = shapely.Polygon(pts[0])
            core = shapely.union_all(np.concatenate([hulls, [start]]))
        out[body.name] = outward_buffer(core, grow) if grow > 0 else core
    return out


@dataclass(frozen=True)
class MoveResult:
    """One move of a sequence, as reported by ``check``.

    Attributes
    ----------
    arm, from_id, to_id : str
    path : JointPath or None
        None when an end has no feasible configuration.
    sweep : MoveSweep or None
    collides : bool or None
        None when the move has no path.
    clearance : float or None
    blocked_by : str or None
        Id of the fixture at the smallest clearance when the move collides.
    reason : str
        Empty when the move is possible and clear.
    body : str or None
        Name of the body at the smallest clearance when the move collides.
    """

    arm: str
    from_id: str
    to_id: str
    path: JointPath | None
    sweep: MoveSweep | None
    collides: bool | None
    clearance: float | None
    blocked_by: str | None
    reason: str
    body: str | None = None

    @property
    def feasible(self) -> bool:
        """The move has a path within the limits and touches no blocking fixture."""
        return self.collides is False


def sequence_moves(
    cell: Cell,
    evaluation: Any,
    arm_id: str,
    target_ids: Sequence[str],
    cyclic: bool = True,
    polygons: bool = False,
) -> list[MoveResult]:
    """Moves between consecutive targets of one sequence, with the chosen configurations.

    Parameters
    ----------
    cell : Cell
    evaluation : CellEvaluation
        Supplies ``arms[arm_id]``: the chosen configurations, the arm's bodies and the
        fixtures within its reach (the ones the moves are checked against).
    arm_id : str
    target_ids : sequence of str
    cyclic : bool
        Add the move from the last target back to the first (sequences are cycles).
    polygons : bool
        Also build swept-area polygons.
    """
    ev = evaluation.arms[arm_id]
    arm = ev.arm
    ab = ev.bodies if ev.bodies is not None else arm_bodies(arm)
    fixtures = ev.fixtures
    margin = clearance_margin(cell)
    fs = FixtureSet.of(fixtures)
    lmask = link_blocking(arm, fixtures, margin)
    by_id = {t.id: t for t in cell.targets}
    pairs = list(zip(target_ids[:-1], target_ids[1:]))
    if cyclic and len(target_ids) > 1:
        pairs.append((target_ids[-1], target_ids[0]))
    out: list[MoveResult] = []
    for a, b in pairs:
        ends = []
        for tid in (a, b):
            i = ev.index(tid) if tid in ev.target_ids else -1
            ch = int(ev.chosen[i]) if i >= 0 else -1
            ends.append(None if ch < 0 else ev.ik.q_deg[i, ch])
        if ends[0] is None or ends[1] is None:
            bad = a if ends[0] is None else b
            name = by_id[bad].name if bad in by_id else bad
            out.append(
                MoveResult(
                    arm_id,
                    a,
                    b,
                    None,
                    None,
                    None,
                    None,
                    None,
                    f"target {name} has no feasible configuration",
                )
            )
            continue
        path = joint_path(arm, ends[0], ends[1])
        if not path.allowed:
            out.append(MoveResult(arm_id, a, b, path, None, None, None, None, path.reason))
            continue
        wa = work_height(by_id[a]) if a in by_id else None
        wb = work_height(by_id[b]) if b in by_id else None
        wh = max(wa, wb) if wa is not None and wb is not None else np.nan
        tmask = tool_blocking(arm, fixtures, margin, wh) if ab.has_tool else None
        sw = sweep_move(ab, fs, path, lmask, tmask, polygons=polygons)
        blocked = fixtures[sw.fixture] if sw.collides and sw.fixture >= 0 else None
        out.append(
            MoveResult(
                arm_id,
                a,
                b,
                path,
                sw,
                sw.collides,
                sw.clearance if math.isfinite(sw.clearance) else None,
                blocked.id if blocked is not None else None,
                f"collides with {blocked.name}" if blocked is not None else "",
                ab.bodies[sw.body].name if blocked is not None and sw.body >= 0 else None,
            )
        )
    return out


def cell_moves(
    cell: Cell, evaluation: Any, cyclic: bool = True, polygons: bool = False
) -> list[MoveResult]:
    """Moves of every sequence of a cell, in sequence order."""
    out: list[MoveResult] = []
    for seq in cell.sequences:
        out.extend(sequence_moves(cell, evaluation, seq.arm, seq.targets, cyclic, polygons))
    return out

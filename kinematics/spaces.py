"""Maximum, restricted and operating spaces of each arm (ISO 10218 terms) and shared zones.

* Maximum space: everything the arm's bodies can sweep over the full mechanical range
  (the arm's ``mechanical_limits_deg`` when given, else its joint limits; ``source``
  says which).
* Restricted space: the same within the set joint limits.
* Operating space: the union of the areas swept along the arm's sequences.

With two or more arms, the overlaps of their restricted spaces and of their operating
spaces are the shared zones that need an interlock, and targets several arms can reach
collision-free are listed.

The swept region of a body over a box of joint angles is built exactly (up to polygonised
arcs, which are placed outside the true arcs): sweeping a shape by rotation about a point
covers the shape at the first angle plus the sweep of its outline, and the sweep of a
piece of outline whose distance from the centre only grows (or only shrinks) is a
"twisted annular sector" bounded by the piece at both end angles and two arcs. Link 2
and the tool are swept about the elbow first (q2), then the result about the shoulder
(q1); the link radius is added at the end (rotation and widening commute).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
import shapely
from numpy.typing import NDArray

from .bodies import (
    BASE,
    LINK1,
    ArmBodies,
    arm_bodies,
    clearance_margin,
    mechanical_limits,
    pose,
)
from .cell import Arm, Cell, Target
from .evaluate import evaluate_arm, fixtures_in_reach
from .sweep import MoveResult, cell_moves, outward_buffer, swept_shapes

__all__ = [
    "SPACE_TOL_REL",
    "ArmSpaces",
    "SharedZone",
    "CellSpaces",
    "rotational_sweep",
    "joint_box_space",
    "arm_spaces",
    "shared_zones",
    "reachable_by",
    "shared_targets",
    "cell_spaces",
    "evaluation_spaces",
    "evaluation_shared_targets",
    "local_spaces",
    "operating_space",
    "place",
]

#: Space outlines lie at most this fraction of the arm's reach outside the true outline.
SPACE_TOL_REL = 1e-4


def _arc(
    cx: float, cy: float, r: float, a0: float, a1: float, tol: float, outside: bool
) -> NDArray:
    """Points along an arc from angle a0 to a1 (radians, either direction).

    With ``outside`` the chords are tangent to the circle (the polygon covers the arc);
    otherwise the points lie on the circle. End points are on the circle either way.
    """
    span = a1 - a0
    if r <= 0 or span == 0:
        return np.array(
            [
                [cx + r * math.cos(a0), cy + r * math.sin(a0)],
                [cx + r * math.cos(a1), cy + r * math.sin(a1)],
            ]
        )
    # Step so the gap between chord and arc stays below tol.
    step = (
        2.0 * math.acos(min(1.0, 1.0 / (1.0 + tol / r)))
        if outside
        else 2.0 * math.acos(max(-1.0, 1.0 - tol / r))
    )
    step = max(step, 1e-4)
    n = max(1, math.ceil(abs(span) / step))
    alpha = span / n
    if outside:
        mid = a0 + alpha * (np.arange(n) + 0.5)
        rr = r / math.cos(alpha / 2)
        ang = np.concatenate([[a0], mid, [a1]])
        rad = np.concatenate([[r], np.full(n, rr), [r]])
    else:
        ang = a0 + alpha * np.arange(n + 1)
        rad = np.full(n + 1, r)
    return np.stack([cx + rad * np.cos(ang), cy + rad * np.sin(ang)], axis=1)


def _monotone_runs(pts: NDArray, cx: float, cy: float) -> list[NDArray]:
    """Split a polyline into pieces whose distance from (cx, cy) is monotone."""
    # Insert the foot of the perpendicular from the centre where it falls inside an edge.
    p, q = pts[:-1], pts[1:]
    d = q - p
    dd = np.sum(d * d, axis=1)
    t = np.divide(
        np.sum((np.array([cx, cy]) - p) * d, axis=1), dd, out=np.full(len(p), -1.0), where=dd > 0
    )
    out = [pts[0]]
    for k in range(len(p)):
        if 1e-12 < t[k] < 1 - 1e-12:
            out.append(p[k] + t[k] * d[k])
        out.append(q[k])
    dense = np.array(out)
    rho = np.hypot(dense[:, 0] - cx, dense[:, 1] - cy)
    step = np.sign(np.diff(rho))
    runs = []
    start = 0
    for k in range(1, len(step)):
        if step[k] != 0 and step[k - 1] != 0 and step[k] != step[k - 1]:
            runs.append(dense[start : k + 1])
            start = k
    runs.append(dense[start:])
    return [r for r in runs if len(r) >= 2]


def _rotate(pts: NDArray, cx: float, cy: float, ang: float) -> NDArray:
    c, s = math.cos(ang), math.sin(ang)
    x, y = pts[:, 0] - cx, pts[:, 1] - cy
    return np.stack([cx + c * x - s * y, cy + s * x + c * y], axis=1)


def _run_sweep(run: NDArray, cx: float, cy: float, a0: float, a1: float, tol: float) -> Any:
    rho = np.hypot(run[:, 0] - cx, run[:, 1] - cy)
    if rho[-1] < rho[0]:
        run, rho = run[::-1], rho[::-1]
    phi_in = math.atan2(run[0, 1] - cy, run[0, 0] - cx)
    phi_out = math.atan2(run[-1, 1] - cy, run[-1, 0] - cx)
    if a1 - a0 >= 2 * math.pi - 1e-12:
        outer = _arc(cx, cy, float(rho[-1]), 0.0, 2 * math.pi, tol, True)
        ring = shapely.Polygon(outer)
        if rho[0] > 0:
            ring = ring.difference(
                shapely.Polygon(_arc(cx, cy, float(rho[0]), 0, 2 * math.pi, tol, False))
            )
        return ring
    first = _rotate(run, cx, cy, a0)
    last = _rotate(run, cx, cy, a1)[::-1]
    outer = _arc(cx, cy, float(rho[-1]), phi_out + a0, phi_out + a1, tol, True)
    inner = _arc(cx, cy, float(rho[0]), phi_in + a1, phi_in + a0, tol, False)
    ring = np.concatenate([first, outer[1:-1], last, inner[1:-1]])
    poly = shapely.Polygon(ring)
    if not poly.is_valid:
        poly = shapely.make_valid(poly)
    return poly


def _lines_of(geom: Any) -> list[NDArray]:
    out = []
    for g in shapely.get_parts(geom):
        if isinstance(g, shapely.Polygon):
            out.append(np.asarray(g.exterior.coords))
            out.extend(np.asarray(r.coords) for r in g.interiors)
        elif isinstance(g, shapely.LineString):
            out.append(np.asarray(g.coords))
        elif isinstance(g, shapely.Point):
            c = np.asarray(g.coords)
            out.append(np.concatenate([c, c]))
        else:
            out.extend(_lines_of(g))
    return out


def rotational_sweep(
    geom: Any, centre: tuple[float, float], a0: float, a1: float, tol: float
) -> Any:
    """Region covered by ``geom`` rotated about ``centre`` through angles [a0, a1] (radians).

    Polygonised arcs lie outside the true arcs by at most ``tol``, so the result covers
    the true region.

    Examples
    --------
    A unit segment from the centre swept through a quarter turn is a quarter disc.

    >>> g = rotational_sweep(shapely.LineString([(0, 0), (1, 0)]), (0, 0), 0, math.pi / 2, 1e-6)
    >>> round(g.area, 5), round(math.pi / 4, 5)
    (0.7854, 0.7854)
    """
    cx, cy = centre
    if a1 < a0:
        a0, a1 = a1, a0
    if a1 == a0:
        return shapely.affinity.rotate(geom, a0, origin=(cx, cy), use_radians=True)
    pieces: list[Any] = []
    for g in shapely.get_parts(geom):
        if isinstance(g, shapely.Polygon):
            pieces.append(shapely.affinity.rotate(g, a0, origin=(cx, cy), use_radians=True))
    if a1 - a0 > 0:
        for line in _lines_of(geom):
            for run in _monotone_runs(line, cx, cy):
                pieces.append(_run_sweep(run, cx, cy, a0, a1, tol))
    if not pieces:
        return shapely.Polygon()
    return shapely.union_all(pieces)


def joint_box_space(
    bodies: ArmBodies,
    q1_range: tuple[float, float],
    q2_range: tuple[float, float],
    tol: float | None = None,
) -> Any:
    """Area every body of an arm can cover with q1, q2 anywhere in the given ranges (deg).

    Returns a shapely geometry covering the true area (arcs polygonised outside).
    """
    arm = bodies.arm
    if tol is None:
        tol = SPACE_TOL_REL * arm.reach_max
    tol = tol / 3.0  # a third each: arcs, chords of swept points, widening
    h = math.radians(arm.heading_deg)
    base = (arm.x, arm.y)
    elbow0 = (arm.x + arm.a1 * math.cos(h), arm.y + arm.a1 * math.sin(h))
    lo1, hi1 = (math.radians(v) for v in q1_range)
    lo2, hi2 = (math.radians(v) for v in q2_range)
    parts = []
    for body in bodies.bodies:
        # Core of the body at q = (0, 0), in world coordinates.
        core_pts = _core_at_zero(bodies, body)
        if body.kind == "capsule":
            core: Any = (
                shapely.Point(core_pts[0]) if body.a == body.b else shapely.LineString(core_pts)
            )
        else:
            core = shapely.Polygon(core_pts)
        if body.frame == BASE:
            grow = body.radius
            parts.append(outward_buffer(core, grow, _quad_segs(grow, tol)) if grow > 0 else core)
            continue
        slack = 0.0
        if body.frame != LINK1:
            if isinstance(core, shapely.Point) and hi2 > lo2:
                # A point sweeps an arc; its chords lie within tol inside the arc, so the
                # widening below grows by tol to cover it.
                cx, cy = core.x - elbow0[0], core.y - elbow0[1]
                rr, ph = math.hypot(cx, cy), math.atan2(cy, cx)
                core = shapely.LineString(
                    _arc(
                        elbow0[0],
                        elbow0[1],
                        rr,
                        ph + lo2,
                        ph + min(hi2, lo2 + 2 * math.pi),
                        tol,
                        False,
                    )
                )
                slack = tol
            else:
                core = rotational_sweep(core, elbow0, lo2, hi2, tol)
        swept = rotational_sweep(core, base, lo1, hi1, tol)
        grow = body.radius + slack
        parts.append(outward_buffer(swept, grow, quad_segs=_quad_segs(grow, tol)))
    return shapely.union_all(parts)


def _quad_segs(r: float, tol: float) -> int:
    if r <= 0:
        return 1
    # Segments per quarter circle so the circumscribed polygon stays within tol.
    ang = math.acos(1.0 / (1.0 + tol / r))
    return int(min(256, max(8, math.ceil(math.pi / 4 / max(ang, 1e-6)))))


def _core_at_zero(bodies: ArmBodies, body: Any) -> NDArray:
    k = bodies.bodies.index(body)
    return pose(bodies, np.zeros((1, 2)), [k])[0].core[0]


@dataclass(frozen=True)
class ArmSpaces:
    """The three spaces of one arm as shapely geometries.

    Attributes
    ----------
    arm : str
    maximum : shapely geometry
    maximum_source : str
        ``"mechanical range"`` or ``"joint limits"`` (for the legend).
    restricted : shapely geometry
    operating : shapely geometry or None
        None when the arm has no sequence with a possible move.
    """

    arm: str
    maximum: Any
    maximum_source: str
    restricted: Any
    operating: Any


def _shape_key(arm: Arm) -> tuple:
    """What an arm's spaces depend on in its base frame (not its name or base pose)."""
    keys = ("link_outlines", "tool_body", "base_footprint", "mechanical_limits_deg")
    return (
        arm.a1,
        arm.a2,
        tuple(arm.q1_limits),
        tuple(arm.q2_limits),
        arm.link_radii,
        repr([arm.extra.get(k) for k in keys]),
    )


def _at_origin(arm: Arm) -> Arm:
    return replace(arm, x=0.0, y=0.0, heading_deg=0.0)


def place(geom: Any, arm: Arm) -> Any:
    """A geometry built in the base frame (base at the origin, heading 0) moved to the arm's
    base pose (a rigid motion: areas are kept)."""
    if arm.x == 0.0 and arm.y == 0.0 and arm.heading_deg == 0.0:
        return geom
    a = math.radians(arm.heading_deg)
    c, s = math.cos(a), math.sin(a)
    return shapely.affinity.affine_transform(geom, [c, -s, s, c, arm.x, arm.y])


def local_spaces(
    arm: Arm, tol: float | None = None, cache: dict | None = None
) -> tuple[Any, Any, str]:
    """Maximum and restricted space of an arm in its base frame, and the maximum's source.

    ``cache`` (a dict) keeps them per arm shape, so moving or turning a base never
    rebuilds them.
    """
    key = (_shape_key(arm), tol)
    if cache is not None and key in cache:
        return cache[key]
    ab = arm_bodies(_at_origin(arm))
    restricted = joint_box_space(ab, arm.q1_limits, arm.q2_limits, tol)
    mech = mechanical_limits(arm)
    if mech is None:
        out = (restricted, restricted, "joint limits")
    else:
        out = (joint_box_space(ab, mech[0], mech[1], tol), restricted, "mechanical range")
    if cache is not None:
        if len(cache) > 64:
            cache.clear()
        cache[key] = out
    return out


def arm_spaces(
    cell: Cell,
    arm: Arm,
    moves: Sequence[MoveResult] = (),
    tol: float | None = None,
    cache: dict | None = None,
) -> ArmSpaces:
    """Maximum, restricted and operating space of one arm.

    The maximum and restricted spaces are built in the base frame and moved to the base
    pose (:func:`place`), so every front end gets exactly the same polygons.

    Parameters
    ----------
    cell : Cell
    arm : Arm
    moves : sequence of MoveResult
        The cell's moves (from :func:`kinematics.sweep.cell_moves`); those of this arm
        with a path make up the operating space.
    tol : float, optional
        Arc tolerance (default SPACE_TOL_REL of the reach).
    cache : dict, optional
        Base-frame spaces kept between calls (see :func:`local_spaces`).
    """
    maximum, restricted, source = local_spaces(arm, tol, cache)
    return ArmSpaces(
        arm.id, place(maximum, arm), source, place(restricted, arm), operating_space(arm, moves)
    )


def operating_space(arm: Arm, moves: Sequence[MoveResult]) -> Any:
    """Union of the areas swept by the arm's moves with a path (None when there is none)."""
    ab = None
    swept = []
    for m in moves:
        if m.arm != arm.id or m.path is None or not m.path.allowed:
            continue
        if m.sweep is not None and m.sweep.swept is not None:
            swept.append(m.sweep.swept)
        else:
            ab = ab or arm_bodies(arm)
            swept.append(shapely.union_all(list(swept_shapes(ab, m.path).values())))
    return shapely.union_all(swept) if swept else None


@dataclass(frozen=True)
class SharedZone:
    """Where the spaces of two arms overlap (needs an interlock).

    Attributes
    ----------
    arms : tuple of str
    kind : str
        ``"restricted"`` or ``"operating"``.
    geometry : shapely geometry
    area : float
    """

    arms: tuple[str, str]
    kind: str
    geometry: Any
    area: float


def shared_zones(spaces: Sequence[ArmSpaces], min_area: float = 0.0) -> list[SharedZone]:
    """Pairwise overlaps of restricted spaces and of operating spaces."""
    out = []
    for i in range(len(spaces)):
        for j in range(i + 1, len(spaces)):
            a, b = spaces[i], spaces[j]
            for kind in ("restricted", "operating"):
                ga, gb = getattr(a, kind), getattr(b, kind)
                if ga is None or gb is None:
                    continue
                g = shapely.intersection(ga, gb)
                if not g.is_empty and g.area > min_area:
                    out.append(SharedZone((a.arm, b.arm), kind, g, float(g.area)))
    return out


def reachable_by(
    cell: Cell, arm: Arm, targets: Sequence[Target], fixtures: Sequence[Any] | None = None
) -> NDArray[np.bool_]:
    """Whether ``arm`` could serve each target: the verdict of
    :func:`kinematics.evaluate.evaluate_arm` (limits, elbow setting, clear of blocking
    fixtures at the target's work height) as if the target were assigned to it.

    ``fixtures`` defaults to those within the arm's reach.
    """
    if fixtures is None:
        fixtures = fixtures_in_reach(arm_bodies(arm), cell.fixtures)
    mine = [Target(t.id, t.name, t.x, t.y, arm.id, t.extra) for t in targets]
    ev = evaluate_arm(arm, mine, fixtures, clearance_margin(cell))
    return np.asarray(ev.feasible, dtype=bool)


def shared_targets(cell: Cell) -> dict[str, tuple[str, ...]]:
    """Targets (of any arm) that two or more arms can reach clear of blocking fixtures."""
    if not cell.targets or len(cell.arms) < 2:
        return {}
    reach = np.stack([reachable_by(cell, a, cell.targets) for a in cell.arms], axis=1)
    out = {}
    for k, t in enumerate(cell.targets):
        arms = tuple(a.id for a, ok in zip(cell.arms, reach[k]) if ok)
        if len(arms) >= 2:
            out[t.id] = arms
    return out


@dataclass(frozen=True)
class CellSpaces:
    """Spaces of every arm, shared zones and shared targets."""

    arms: dict[str, ArmSpaces]
    zones: list[SharedZone]
    targets: dict[str, tuple[str, ...]]


def cell_spaces(
    cell: Cell, evaluation: Any, moves: Sequence[MoveResult] | None = None
) -> CellSpaces:
    """All spaces of a cell; moves are computed from ``evaluation`` when not given."""
    if moves is None:
        moves = cell_moves(cell, evaluation)
    spaces = {a.id: arm_spaces(cell, a, moves) for a in cell.arms}
    return CellSpaces(spaces, shared_zones(list(spaces.values())), shared_targets(cell))


def evaluation_spaces(evaluation: Any, operating: bool = True) -> CellSpaces:
    """The spaces of an evaluation's cell, sharing its caches (see
    :meth:`kinematics.evaluate.CellEvaluation.spaces`): base-frame spaces per arm shape,
    operating spaces and shared zones per set of inputs. Without ``operating`` the
    operating spaces are None and only restricted zones are listed."""
    cell, store = evaluation.cell, evaluation.store
    moves = evaluation.moves(polygons=True) if operating else []
    spaces = {}
    op_keys = {}
    for arm in cell.arms:
        if not operating:
            maximum, restricted, source = local_spaces(arm, None, store.local_spaces)
            spaces[arm.id] = ArmSpaces(
                arm.id, place(maximum, arm), source, place(restricted, arm), None
            )
            continue
        mine = tuple(m for m in moves if m.arm == arm.id)
        # A swept area depends on the arm and the joint path only.
        key = (arm, tuple(None if m.path is None else (m.path.q_from, m.path.q_to) for m in mine))
        op_keys[arm.id] = key
        hit = store.operating.get(arm.id)
        if hit is None or hit[0] != key:
            hit = (key, operating_space(arm, mine))
            store.operating[arm.id] = hit
        maximum, restricted, source = local_spaces(arm, None, store.local_spaces)
        spaces[arm.id] = ArmSpaces(
            arm.id, place(maximum, arm), source, place(restricted, arm), hit[1]
        )
    zones = []
    arms = list(cell.arms)
    for i in range(len(arms)):
        for j in range(i + 1, len(arms)):
            a, b = spaces[arms[i].id], spaces[arms[j].id]
            for kind in ("restricted", "operating"):
                ga, gb = getattr(a, kind), getattr(b, kind)
                if ga is None or gb is None:
                    continue
                if kind == "restricted":
                    key = (kind, arms[i], arms[j])
                else:
                    key = (kind, op_keys[a.arm], op_keys[b.arm])
                hit = store.zones.get((a.arm, b.arm, kind))
                if hit is None or hit[0] != key:
                    hit = (key, shapely.intersection(ga, gb))
                    store.zones[(a.arm, b.arm, kind)] = hit
                g = hit[1]
                if not g.is_empty and g.area > 0:
                    zones.append(SharedZone((a.arm, b.arm), kind, g, float(g.area)))
    return CellSpaces(spaces, zones, evaluation_shared_targets(evaluation))


def evaluation_shared_targets(evaluation: Any) -> dict[str, tuple[str, ...]]:
    """Targets two or more arms can reach clear of fixtures, for an evaluation's cell.

    Each arm's own targets come from the evaluation; which other targets it could serve
    is kept per arm and recomputed only when that arm, the fixtures in its reach or those
    of the other arms' targets inside its reach annulus change (no target outside the
    annulus can be served).
    """
    cell, store = evaluation.cell, evaluation.store
    if not cell.targets or len(cell.arms) < 2:
        return {}
    cached = store.serves.get("\0targets")
    if cached is None or cached[0] is not cell.targets:
        xy = np.array([(t.x, t.y) for t in cell.targets], dtype=float).reshape(-1, 2)
        owner = np.array([t.arm for t in cell.targets], dtype=object)
        cached = (cell.targets, xy, owner)
        store.serves["\0targets"] = cached
    _targets, xy, owner = cached
    margin = cell.extra.get("clearance_margin")
    count: dict[str, list[str]] = {}
    for arm in cell.arms:
        ev = evaluation.arms[arm.id]
        for i in np.flatnonzero(np.asarray(ev.feasible, dtype=bool)).tolist():
            count.setdefault(ev.target_ids[i], []).append(arm.id)
        r = np.hypot(xy[:, 0] - arm.x, xy[:, 1] - arm.y)
        slack = 1e-9 * arm.reach_max
        cand = (owner != arm.id) & (r <= arm.reach_max + slack) & (r >= arm.reach_min - slack)
        others = tuple(cell.targets[k] for k in np.flatnonzero(cand).tolist())
        key = (ev.arm, ev.fixtures, margin, others)
        hit = store.serves.get(arm.id)
        if hit is None or hit[0] != key:
            ok = reachable_by(cell, arm, others, ev.fixtures) if others else np.zeros(0, bool)
            hit = (key, [t.id for t, k in zip(others, ok.tolist()) if k])
            store.serves[arm.id] = hit
        for tid in hit[1]:
            count.setdefault(tid, []).append(arm.id)
    order = {a.id: k for k, a in enumerate(cell.arms)}
    return {
        t.id: tuple(sorted(count[t.id], key=order.__getitem__))
        for t in cell.targets
        if len(count.get(t.id, ())) >= 2
    }

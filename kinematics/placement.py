"""Where to bolt the base: the exact placement region, a score map, the best spot, tolerances.

For one arm at a given heading, a target t is reachable within the limits from base b
exactly when ``t - b`` lies in the arm's joint-limit region R (the union of the allowed
configurations' regions, base at the origin; :func:`kinematics.regions.reachable_region`).
So the good base positions for one target are ``t - R`` (R turned through 180 degrees
about the origin and moved to t), and for all targets their intersection. From it we take
away the positions where the base body would touch a fixture that blocks it: the base
footprint when the arm has one, else the shoulder disc of link 1's radius; as sets of base
positions these are the Minkowski sums of the blocking fixtures with the reflected body.
A mounting zone, when the arm has one, clips the result. That is the **placement region**
(:func:`placement_region`): exact up to the regions' chord tolerance.

Collisions of the moving bodies at the targets depend on each base position and are
sampled: the **score map** (:func:`score_map`, :func:`score_map_steps`) evaluates every
grid base against every target as ``check`` would (:mod:`kinematics.evaluate`), through
a compiled kernel (:mod:`kinematics.placement_kernel`, imported only when a map is
computed) or, for arms with link or tool outlines, through
:func:`kinematics.clearance.pose_clearance` with per-pose bases.

Per grid base: the targets feasible (reach, limits, elbow setting, collisions at the
targets, base body), over the feasible targets the worst limit margin and worst reach
margin of the chosen configurations, and the smallest clearance (capped; see
:data:`CLEARANCE_FULL_WIDTHS`). The score is::

    score = feasible targets + quality,   quality in [0, 1]
    quality = (w_l * q_l + w_r * q_r + w_c * q_c) / (w_l + w_r + w_c)
    q_l = clip(worst limit margin / 30 deg, 0, 1)
    q_r = clip(worst reach margin / (0.1 * reach), 0, 1)
    q_c = clip(smallest clearance / link width, 0, 1)   (1 when nothing blocks)

so a base where more targets are feasible always scores higher, and among those the
quality decides. The weights come from the cell's ``placement_weights``
(:func:`kinematics.layout_keys.score_weights`). Cycle time joins the score once the
engine has a cycle-time function (see :data:`CYCLE_TIME_HOOK`); until then the map's
``cycle_time`` is None.

Tolerances of a base (:func:`placement_tolerance`, :func:`heading_tolerance`) are
described there. Everything is vectorised over bases and targets; no Python loop runs
over grid points.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import shapely
from numpy.typing import NDArray
from shapely.geometry import MultiPolygon, Polygon

from .bodies import (
    BASE,
    LINK1,
    LINK2,
    TOOL,
    ArmBodies,
    arm_bodies,
    clearance_margin,
    link_blocking,
    tool_blocking,
    work_heights,
)
from .cell import Arm, Cell, Fixture, Target  # noqa: F401 - Fixture for the doctests
from .clearance import FixtureSet, arm_clearance, pose_clearance
from .evaluate import ArmEvaluation, choose_configuration, evaluate_arm
from .ik import solve
from .layout_keys import ScoreWeights, mounting_zone, score_weights
from .regions import reachable_region

__all__ = [
    "LIMIT_MARGIN_FULL_DEG",
    "REACH_MARGIN_FULL_FRACTION",
    "CLEARANCE_FULL_WIDTHS",
    "TOLERANCE_PRECISION",
    "HEADING_PRECISION_DEG",
    "ZONE_GROW_FRACTION",
    "CYCLE_TIME_HOOK",
    "REGION_TOL_MM",
    "PlacementProblem",
    "PlacementRegion",
    "ScoreMap",
    "MapProgress",
    "BestPosition",
    "Tolerance",
    "LiveState",
    "KernelData",
    "placement_problem",
    "placement_region",
    "default_zone",
    "default_pitch",
    "score_terms",
    "score_map",
    "score_map_steps",
    "best_position",
    "placement_tolerance",
    "heading_tolerance",
    "live_state",
    "evaluate_at",
    "move_base",
    "placement_report",
    "kernel_data",
    "pair_table",
    "arm_tolerances",
    "forbidden_region",
]

#: Worst limit margin (degrees) at which the limit term of the score is full.
LIMIT_MARGIN_FULL_DEG = 30.0
#: Worst reach margin, as a fraction of the reach a1 + a2, at which the reach term is full
#: (common practice, no source: keep targets within about 90 % of the reach).
REACH_MARGIN_FULL_FRACTION = 0.10
#: Smallest clearance, in link widths (twice the smallest link radius), at which the
#: clearance term is full; map clearances are computed up to this and capped there.
CLEARANCE_FULL_WIDTHS = 1.0
#: Precision of the placement tolerance, as a fraction of the reach.
TOLERANCE_PRECISION = 1e-3
#: Precision of the heading tolerance, degrees.
HEADING_PRECISION_DEG = 0.01
#: Default mounting zone: the region's bounding box grown by this fraction of the reach.
ZONE_GROW_FRACTION = 0.10
#: Where the cycle time enters the map: a function ``(problem, bx, by, heading) -> (B,)``
#: seconds, or None. Issue 8 (cycle time) fills it in; the score then gains a term.
CYCLE_TIME_HOOK: Callable[..., NDArray[np.float64]] | None = None
#: Chord error of region polygons, millimetres (the same as the check report's).
REGION_TOL_MM = 0.05

Region = Polygon | MultiPolygon


# ---------------------------------------------------------------------------------------
# the problem: one arm of a cell, prepared once


@dataclass(frozen=True)
class PlacementProblem:
    """One arm of a cell, its targets and the fixtures, prepared for placement queries.

    Build with :func:`placement_problem`; it is immutable (the window keeps one per arm
    state and rebuilds it when targets, fixtures or the arm change).

    Attributes
    ----------
    cell : Cell
    arm : Arm
    arm_index : int
        Position of the arm in ``cell.arms`` (for messages).
    targets : tuple of Target
        The arm's targets, in file order.
    xy : ndarray, shape (N, 2)
    bodies : ArmBodies
    link_mask : ndarray of bool, shape (F,)
        Fixtures blocking the links and the base body.
    tool_mask : ndarray of bool, shape (N, F)
        Fixtures blocking the tool at each target.
    margin : float
        The cell's vertical clearance margin.
    tol : float
        Chord tolerance of region outlines, cell units.
    weights : ScoreWeights
    zone : Polygon or None
        The arm's ``mounting_zone`` when given.
    compiled : bool
        Whether the compiled kernel applies (capsule links, a tool disc or none).
    """

    cell: Cell
    arm: Arm
    arm_index: int
    targets: tuple[Target, ...]
    xy: NDArray[np.float64]
    bodies: ArmBodies
    link_mask: NDArray[np.bool_]
    tool_mask: NDArray[np.bool_]
    margin: float
    tol: float
    weights: ScoreWeights
    zone: Polygon | None
    compiled: bool
    cache: dict[Any, Any] = field(default_factory=dict, repr=False, compare=False)

    @property
    def reach(self) -> float:
        """The arm's reach a1 + a2."""
        return self.arm.reach_max

    @property
    def clearance_full(self) -> float:
        """Clearance at which the score's clearance term is full (cell units)."""
        return CLEARANCE_FULL_WIDTHS * 2.0 * self.bodies.min_link_radius

    @property
    def base_body(self) -> str:
        """``"base footprint"`` or ``"shoulder disc"``: what must stay off the fixtures."""
        return "base footprint" if _footprint(self) is not None else "shoulder disc"


def placement_problem(cell: Cell, arm_id: str | None = None) -> PlacementProblem:
    """Prepare one arm of a cell for placement queries.

    Parameters
    ----------
    cell : Cell
    arm_id : str, optional
        The arm (default: the first).

    Raises
    ------
    KeyError
        When the cell has no such arm (or no arm at all).
    kinematics.bodies.BodyDataError
        When a body, height or placement key is malformed.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-180, 180))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("t", "T", 300, 0, "a"),))
    >>> p = placement_problem(cell)
    >>> p.arm.id, p.xy.tolist(), p.compiled
    ('a', [[300.0, 0.0]], True)
    """
    if not cell.arms:
        raise KeyError("the cell has no arm")
    if arm_id is None:
        arm_id = cell.arms[0].id
    idx = next((i for i, a in enumerate(cell.arms) if a.id == arm_id), None)
    if idx is None:
        raise KeyError(arm_id)
    arm = cell.arms[idx]
    picked = [(j, t) for j, t in enumerate(cell.targets) if t.arm == arm.id]
    targets = tuple(t for _, t in picked)
    bodies = arm_bodies(arm, f"arms[{idx}]")
    margin = clearance_margin(cell)
    wh = work_heights(targets, [f"targets[{j}]" for j, _ in picked])
    fixtures = cell.fixtures
    link_mask = link_blocking(arm, fixtures, margin)
    tool_mask = np.asarray(tool_blocking(arm, fixtures, margin, wh), dtype=bool).reshape(
        len(targets), len(fixtures)
    )
    compiled = all(
        b.kind == "capsule" for b in bodies.bodies if b.frame in (LINK1, LINK2, TOOL)
    ) and all(b.a == b.b for b in bodies.bodies if b.frame == TOOL)
    return PlacementProblem(
        cell=cell,
        arm=arm,
        arm_index=idx,
        targets=targets,
        xy=np.array([(t.x, t.y) for t in targets], dtype=float).reshape(-1, 2),
        bodies=bodies,
        link_mask=np.asarray(link_mask, dtype=bool),
        tool_mask=tool_mask,
        margin=margin,
        tol=REGION_TOL_MM / cell.mm_per_unit,
        weights=score_weights(cell),
        zone=mounting_zone(arm, f"arms[{idx}]"),
        compiled=compiled,
    )


def _heading(problem: PlacementProblem, heading_deg: float | None) -> float:
    return float(problem.arm.heading_deg if heading_deg is None else heading_deg)


def _footprint(problem: PlacementProblem) -> NDArray[np.float64] | None:
    for b in problem.bodies.bodies:
        if b.frame == BASE and b.outline is not None:
            return b.outline
    return None


def _rot(pts: NDArray, deg: float) -> NDArray:
    c, s = math.cos(math.radians(deg)), math.sin(math.radians(deg))
    return pts @ np.array([[c, s], [-s, c]])


# ---------------------------------------------------------------------------------------
# the exact placement region


@dataclass(frozen=True)
class PlacementRegion:
    """The exact set of base positions from which every target is reachable within the limits.

    Attributes
    ----------
    arm_id : str
    heading_deg : float
    geometry : Polygon or MultiPolygon
        The region (shapely; empty when no base position works).
    area : float
        Its area, squared cell units (inf when the arm has no targets and no zone).
    empty : bool
    bounded : bool
        False only for an arm without targets and without a mounting zone.
    blocking_targets : tuple of str
        When empty: ids of a small set of targets whose removal makes the region non-empty,
        found greedily (not guaranteed to be the smallest); () otherwise.
    relaxed : Polygon or MultiPolygon
        The region without the blocking targets (equal to ``geometry`` when not empty).
    """

    arm_id: str
    heading_deg: float
    geometry: Region
    area: float
    empty: bool
    bounded: bool
    blocking_targets: tuple[str, ...]
    relaxed: Region

    @property
    def polygons(self) -> list[tuple[NDArray[np.float64], list[NDArray[np.float64]]]]:
        """Outlines for drawing: per polygon ``(exterior (k, 2), [hole (k, 2), ...])``, closed."""
        return _outlines(self.geometry)

    @property
    def rings(self) -> list[NDArray[np.float64]]:
        """Every ring (exteriors and holes) as a closed ``(k, 2)`` array."""
        return [r for ext, holes in self.polygons for r in [ext, *holes]]


def _outlines(g: Region) -> list[tuple[NDArray, list[NDArray]]]:
    out = []
    for p in shapely.get_parts(g):
        if isinstance(p, Polygon) and not p.is_empty:
            out.append(
                (
                    shapely.get_coordinates(p.exterior),
                    [shapely.get_coordinates(r) for r in p.interiors],
                )
            )
    return out


def _polygonal(g: shapely.Geometry) -> Region:
    if g.is_empty:
        return Polygon()
    if isinstance(g, Polygon | MultiPolygon):
        return g
    parts = [p for p in shapely.get_parts(g) if isinstance(p, Polygon) and not p.is_empty]
    return MultiPolygon(parts) if len(parts) > 1 else (parts[0] if parts else Polygon())


def _target_sets(problem: PlacementProblem, h: float) -> list[Region]:
    """Per target, the bases reaching it within the limits: R turned 180 degrees, moved to t."""
    key = ("sets", h)
    if key not in problem.cache:
        a = problem.arm
        reg = reachable_region(
            a.a1, a.a2, a.q1_limits, a.q2_limits, a.elbow, 0.0, 0.0, h, problem.tol
        )
        flipped = shapely.transform(reg, lambda c: -c)
        problem.cache[key] = [shapely.transform(flipped, lambda c, t=t: c + t) for t in problem.xy]
    return problem.cache[key]


def _minkowski(poly: NDArray, body: NDArray) -> shapely.Geometry:
    """Minkowski sum of a simple polygon with a simple polygon (vertex arrays, not closed).

    The body is cut into convex pieces; a polygon plus a convex piece K is the polygon moved
    by one point of K together with every edge swept over K (the hull of the edge's ends
    plus K), since a point x is in the sum exactly when x - K meets the polygon, and a
    connected x - K that is not inside it crosses its outline.
    """
    body_poly = shapely.Polygon(body)
    if shapely.equals(body_poly.convex_hull, body_poly):
        pieces = [body]
    else:
        tris = shapely.get_parts(shapely.constrained_delaunay_triangles(body_poly))
        pieces = [shapely.get_coordinates(t)[:-1] for t in tris]
    p = poly
    q = np.roll(poly, -1, axis=0)
    parts = []
    for k in pieces:
        ends = np.concatenate(
            [p[:, None, :] + k[None, :, :], q[:, None, :] + k[None, :, :]], axis=1
        )  # (E, 2m, 2)
        parts.extend(shapely.convex_hull(shapely.multipoints(ends)))
        parts.append(shapely.Polygon(poly + k[0]))
    return shapely.union_all(parts)


def _forbidden(problem: PlacementProblem, h: float) -> Region:
    """Base positions where the base body touches a fixture that blocks it (closed set)."""
    key = ("forbidden", h)
    if key in problem.cache:
        return problem.cache[key]
    fx = [f for f, m in zip(problem.cell.fixtures, problem.link_mask) if m]
    polys = [np.asarray(f.outline, dtype=float) for f in fx]
    polys = [p[:-1] if len(p) > 1 and np.array_equal(p[0], p[-1]) else p for p in polys]
    fp = _footprint(problem)
    if not polys:
        out: Region = Polygon()
    elif fp is not None:
        body = -_rot(fp, h)  # footprint in world axes, reflected through the base
        out = _polygonal(shapely.union_all([_minkowski(p, body) for p in polys]))
    else:
        # The shoulder disc as a polygon around (not inside) the circle, so the region
        # never keeps a position whose disc touches; its error stays below tol.
        r = problem.bodies.link_radii[0]
        qs = max(4, math.ceil(math.pi / (4.0 * math.acos(max(-1.0, 1.0 - problem.tol / r)))))
        grow = r / math.cos(math.pi / (4.0 * qs))
        out = _polygonal(
            shapely.union_all([shapely.Polygon(p).buffer(grow, quad_segs=qs) for p in polys])
        )
    problem.cache[key] = out
    return out


def forbidden_region(problem: PlacementProblem, heading_deg: float | None = None) -> Region:
    """Base positions where the base body (footprint, else the shoulder disc) touches a
    fixture that blocks it: the Minkowski sums of those fixtures with the reflected body.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-180, 180), link_radii=(20, 15))
    >>> col = Fixture("c", "C", "column", ((0, 0), (10, 0), (10, 10), (0, 10)), 3000)
    >>> cell = Cell("c", arms=(arm,), fixtures=(col,), targets=(Target("t", "T", 300, 0, "a"),))
    >>> g = forbidden_region(placement_problem(cell))
    >>> bool(shapely.contains_xy(g, 25.0, 5.0)), bool(shapely.contains_xy(g, 31.0, 5.0))
    (True, False)
    """
    return _forbidden(problem, _heading(problem, heading_deg))


def _intersect(sets: list[Region], order: NDArray[np.int64], start: Region | None) -> Region:
    cur = start
    for i in order:
        g = sets[i]
        if cur is None:
            cur = g
            continue
        if cur.is_empty:
            break
        cur = _polygonal(shapely.intersection(cur, shapely.clip_by_rect(g, *cur.bounds)))
    return Polygon() if cur is None else cur


def placement_region(
    problem: PlacementProblem, heading_deg: float | None = None, *, blocking: bool = True
) -> PlacementRegion:
    """The exact placement region of the arm at a heading (default: its own).

    Parameters
    ----------
    problem : PlacementProblem
    heading_deg : float, optional
    blocking : bool
        When the region is empty, also find the blocking targets (greedy).

    Returns
    -------
    PlacementRegion

    Examples
    --------
    One target and full joint ranges: the annulus of radii |a1 - a2| and a1 + a2 about
    the target (closed form, derived).

    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-180, 180))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("t", "T", 300, 0, "a"),))
    >>> reg = placement_region(placement_problem(cell))
    >>> round(reg.area / (math.pi * (650**2 - 150**2)), 6), reg.empty
    (1.0, False)
    """
    h = _heading(problem, heading_deg)
    key = ("region", h, blocking)
    if key in problem.cache:
        return problem.cache[key]
    n = len(problem.targets)
    forb = _forbidden(problem, h)
    zone = problem.zone
    if n == 0:
        geom: Region = Polygon() if zone is None else _polygonal(zone.difference(forb))
        res = PlacementRegion(
            problem.arm.id, h, geom, math.inf if zone is None else geom.area,
            zone is not None and geom.is_empty, zone is not None, (), geom,
        )  # fmt: skip
        problem.cache[key] = res
        return res
    sets = _target_sets(problem, h)
    # Targets far from the others first: the intersection shrinks quickly.
    d = np.hypot(*(problem.xy - problem.xy.mean(axis=0)).T)
    order = np.argsort(-d, kind="stable")
    inter = _intersect(sets, order, zone)
    geom = _polygonal(inter.difference(forb)) if not inter.is_empty else Polygon()
    empty = bool(geom.is_empty)
    blockers: tuple[str, ...] = ()
    relaxed = geom
    if empty and blocking:
        blockers, relaxed = _blocking_targets(problem, h, sets, forb)
    res = PlacementRegion(problem.arm.id, h, geom, float(geom.area), empty, True, blockers, relaxed)
    problem.cache[key] = res
    return res


def _blocking_targets(
    problem: PlacementProblem, h: float, sets: list[Region], forb: Region
) -> tuple[tuple[str, ...], Region]:
    """Greedy: sample where most targets are reachable, keep those, add others that still fit.

    The sample (a grid over the targets' box grown by the reach, about 120 points a side)
    gives the base position reaching the most targets within the limits; those targets are
    kept and the others are added back one by one, nearest-to-reachable first, whenever the
    exact intersection stays non-empty. The targets left out are returned.
    """
    lo = problem.xy.min(axis=0) - problem.reach
    hi = problem.xy.max(axis=0) + problem.reach
    pitch = float(max(hi - lo)) / 120.0
    xs = np.arange(lo[0], hi[0] + pitch / 2, pitch)
    ys = np.arange(lo[1], hi[1] + pitch / 2, pitch)
    gx, gy = (a.ravel() for a in np.meshgrid(xs, ys))
    allowed = ~shapely.contains_xy(forb, gx, gy) if not forb.is_empty else np.ones(len(gx), bool)
    if problem.zone is not None:
        allowed &= shapely.contains_xy(problem.zone, gx, gy)
    ok, rm = _reach_only(problem, gx, gy, h)
    count = np.where(allowed, ok.sum(axis=1), -1)
    best = int(np.argmax(count))
    first = np.flatnonzero(ok[best])
    rest = np.flatnonzero(~ok[best])
    rest = rest[np.argsort(-rm[best, rest], kind="stable")]
    kept: list[int] = []
    cur: Region | None = problem.zone
    for i in np.concatenate([first, rest]):
        trial = _intersect(sets, np.array([i]), cur)
        trial = _polygonal(trial.difference(forb)) if not trial.is_empty else trial
        if not trial.is_empty:
            kept.append(int(i))
            cur = trial
    removed = tuple(problem.targets[i].id for i in range(len(problem.targets)) if i not in kept)
    return removed, (Polygon() if cur is None else cur)


def _reach_only(
    problem: PlacementProblem, bx: NDArray, by: NDArray, h: float
) -> tuple[NDArray[np.bool_], NDArray[np.float64]]:
    """(B, N): reachable within limits and allowed (no collisions), and the reach margin."""
    a = problem.arm
    ik = solve(
        a.a1, a.a2, problem.xy[None, :, 0], problem.xy[None, :, 1], bx[:, None], by[:, None],
        h, a.q1_limits, a.q2_limits, a.elbow,
    )  # fmt: skip
    return ik.feasible, ik.reach_margin


# ---------------------------------------------------------------------------------------
# per-pair evaluation: the compiled kernel or the engine


@dataclass(frozen=True)
class KernelData:
    """Arrays the compiled kernel reads (built by :func:`kernel_data`)."""

    tx: NDArray[np.float64]
    ty: NDArray[np.float64]
    arm: NDArray[np.float64]  # a1, a2, heading
    lim: NDArray[np.float64]  # lo1, hi1, lo2, hi2
    allow: NDArray[np.bool_]  # positive, negative allowed by the elbow setting
    radii: NDArray[np.float64]  # r1, r2, link width of the configuration choice
    cap: float
    lf: NDArray[np.int64]  # fixtures blocking the links
    tptr: NDArray[np.int64]
    tf: NDArray[np.int64]
    tdir: NDArray[np.float64]
    tcos: NDArray[np.float64]
    V: NDArray[np.float64]
    off: NDArray[np.int64]
    C: NDArray[np.float64]
    R: NDArray[np.float64]
    tool_c: NDArray[np.float64]


def kernel_data(
    problem: PlacementProblem, heading_deg: float | None = None, cap: float | None = None
) -> KernelData:
    """The compiled kernel's view of a problem at a heading, clearances capped at ``cap``."""
    from . import placement_kernel as pk

    h = _heading(problem, heading_deg)
    width = 2.0 * problem.bodies.min_link_radius
    cap = max(problem.clearance_full, width) if cap is None else max(float(cap), width)
    key = ("kernel", h, cap)
    if key in problem.cache:
        return problem.cache[key]
    base = problem.cache.get(("kernel-base", cap))
    if base is None:
        base = _kernel_base(problem, cap, pk)
        problem.cache[("kernel-base", cap)] = base
    a = problem.arm
    kd = replace(base, arm=np.array([a.a1, a.a2, h], dtype=float))
    problem.cache[key] = kd
    return kd


def _kernel_base(problem: PlacementProblem, cap: float, pk: Any) -> KernelData:
    a = problem.arm
    fs = FixtureSet.of(problem.cell.fixtures)
    polys = [np.ascontiguousarray(p, dtype=float) for p in fs.polygons]
    V = np.concatenate(polys) if polys else np.zeros((0, 2))
    off = np.concatenate([[0], np.cumsum([len(p) for p in polys])]).astype(np.int64)
    C = np.ascontiguousarray(fs.centre.reshape(-1, 2))
    R = np.ascontiguousarray(fs.radius.reshape(-1))
    r1, r2 = problem.bodies.link_radii
    lf = np.flatnonzero(problem.link_mask).astype(np.int64)
    xy = problem.xy
    N = len(xy)
    # Link 2 runs from the target (the tool point) to the elbow: per target, the blocking
    # fixtures within its reach, each with its direction and half-angle as seen from there.
    d = C[None, lf, :] - xy[:, None, :]
    dist = np.hypot(d[..., 0], d[..., 1])
    grown = np.broadcast_to(R[lf][None, :] + r2 + cap, dist.shape)
    near = dist - grown <= a.a2
    rows, cols = np.nonzero(near)
    dd, gg = dist[rows, cols], grown[rows, cols]
    inside = dd <= gg
    safe = np.where(inside, 1.0, dd)
    tdir = np.where(inside[:, None], [1.0, 0.0], d[rows, cols] / safe[:, None])
    tcos = np.where(inside, -2.0, np.sqrt(np.maximum(0.0, 1.0 - (gg / safe) ** 2)))
    tptr = np.concatenate([[0], np.cumsum(np.bincount(rows, minlength=N))]).astype(np.int64)
    # The tool disc sits on the target: one clearance per target.
    tool = [b for b in problem.bodies.bodies if b.frame == TOOL]
    if tool and N and fs.count:
        tr, tc = np.nonzero(problem.tool_mask)
        ptr = np.concatenate([[0], np.cumsum(np.bincount(tr, minlength=N))])
        tool_c = pk.disc_clearance(xy[:, 0], xy[:, 1], tool[0].radius, cap, ptr, tc, V, off, C, R)
    else:
        tool_c = np.full(N, np.inf)
    lo1, hi1 = a.q1_limits
    lo2, hi2 = a.q2_limits
    return KernelData(
        tx=np.ascontiguousarray(xy[:, 0]),
        ty=np.ascontiguousarray(xy[:, 1]),
        arm=np.array([a.a1, a.a2, a.heading_deg], dtype=float),
        lim=np.array([lo1, hi1, lo2, hi2], dtype=float),
        allow=np.array([a.elbow in ("any", "positive"), a.elbow in ("any", "negative")]),
        radii=np.array([r1, r2, 2.0 * problem.bodies.min_link_radius], dtype=float),
        cap=float(cap),
        lf=lf,
        tptr=tptr,
        tf=np.ascontiguousarray(lf[cols]).astype(np.int64),
        tdir=np.ascontiguousarray(tdir, dtype=float).reshape(-1, 2),
        tcos=np.ascontiguousarray(tcos, dtype=float),
        V=np.ascontiguousarray(V),
        off=off,
        C=C,
        R=R,
        tool_c=np.ascontiguousarray(tool_c, dtype=float),
    )


def _base_clearance(
    problem: PlacementProblem, bx: NDArray, by: NDArray, h: float, *, engine: bool = False
) -> NDArray:
    """Clearance of the base body at each base (inf when nothing blocks it; <= 0 touching):
    the same value :func:`kinematics.clearance.base_clearance` gives the arm moved there.

    A base footprint at b touches fixture P exactly when b is in P plus the reflected
    footprint, and its distance to P is b's distance to that sum. The shoulder disc (no
    footprint) is measured point to outline, by the compiled kernel (capped at its cap) or,
    with ``engine`` or for arms the kernel does not take, by the engine itself.
    """
    if _footprint(problem) is not None:
        forb = _forbidden(problem, h)
        if forb.is_empty:
            return np.full(len(bx), np.inf)
        d = shapely.distance(forb, shapely.points(bx, by))
        return np.where(d > 0, d, -1.0)
    if not problem.link_mask.any() or len(bx) == 0:
        return np.full(len(bx), np.inf)
    if problem.compiled and not engine:
        from . import placement_kernel as pk

        return pk.base_disc_clearance(kernel_data(problem, h), bx, by)
    ab = problem.bodies
    only_base = replace(ab, bodies=(ab.base,))
    fs = FixtureSet.of(problem.cell.fixtures)
    res = pose_clearance(
        only_base, fs, np.zeros((len(bx), 2)), problem.link_mask,
        base_xy=np.stack([bx, by], axis=1),
    )  # fmt: skip
    return res.clearance


def pair_table(
    problem: PlacementProblem,
    bx: NDArray,
    by: NDArray,
    heading_deg: float | None = None,
    *,
    cap: float | None = None,
    every: bool = False,
    engine: bool = False,
) -> tuple[NDArray, NDArray, NDArray]:
    """Every (base, target) pair at bases (bx, by): flags, numbers and the chosen configuration.

    Returns
    -------
    flags : ndarray of bool, shape (B, N, 4)
        reachable, singular, positive ok, negative ok (ok = within limits and allowed by
        the elbow setting; not yet clear of fixtures).
    values : ndarray, shape (B, N, 6)
        reach margin, |sin q2|, limit margin positive, negative (degrees), clearance
        positive, negative (capped at ``cap``, <= 0 when colliding without the depth; NaN
        unless ok, or reachable with ``every``).
    chosen : ndarray of int, shape (B, N)
        The configuration ``check`` would choose (0 positive, 1 negative), -1 when the
        target is not feasible from that base.

    ``engine=True`` forces the engine path (:func:`kinematics.ik.solve` and
    :func:`kinematics.clearance.arm_clearance` with per-pose bases) instead of the compiled
    kernel; arms with link or tool outlines always take it.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("t", "T", 300, 0, "a"),))
    >>> flags, values, chosen = pair_table(placement_problem(cell), [0.0, 1000.0], [0.0, 0.0])
    >>> chosen[:, 0].tolist(), flags[:, 0, 0].tolist()
    ([0, -1], [True, False])
    """
    h = _heading(problem, heading_deg)
    bx = np.asarray(bx, dtype=float).reshape(-1)
    by = np.asarray(by, dtype=float).reshape(-1)
    base_c = _base_clearance(problem, bx, by, h, engine=engine)
    if problem.compiled and not engine:
        from . import placement_kernel as pk

        return pk.pair_table(kernel_data(problem, h, cap), bx, by, base_c, every)
    return _pairs_engine(problem, bx, by, h, cap, every, base_c)


def _pairs_engine(
    problem: PlacementProblem, bx: NDArray, by: NDArray, h: float, cap: float | None,
    every: bool, base_c: NDArray,
) -> tuple[NDArray, NDArray, NDArray]:  # fmt: skip
    """:func:`pair_table` through the engine (arms with link or tool outlines).

    As :func:`kinematics.evaluate.evaluate_arm` at each base: the moving bodies' clearance
    per configuration, and a base touching a blocking fixture (``base_c <= 0``) fails every
    target.
    """
    a = problem.arm
    width = 2.0 * problem.bodies.min_link_radius
    cap = max(problem.clearance_full, width) if cap is None else max(float(cap), width)
    B, N = len(bx), len(problem.targets)
    flags = np.zeros((B, N, 4), dtype=bool)
    fl = np.full((B, N, 6), np.nan)
    chosen = np.full((B, N), -1, dtype=np.int64)
    wh = work_heights(problem.targets)
    step = max(1, 20000 // max(N, 1))
    for k in range(0, B, step):  # blocks of bases, vectorised inside
        sx, sy = bx[k : k + step], by[k : k + step]
        ik = solve(
            a.a1, a.a2, problem.xy[None, :, 0], problem.xy[None, :, 1], sx[:, None], sy[:, None],
            h, a.q1_limits, a.q2_limits, a.elbow,
        )  # fmt: skip
        arm_h = replace(a, heading_deg=h)
        bodies = replace(problem.bodies, arm=arm_h)
        bxy = np.stack([sx, sy], axis=-1)[:, None, None, :]
        res = arm_clearance(
            arm_h, problem.cell.fixtures, ik.q_deg, wh[None, :, None], problem.margin, bodies,
            base_xy=np.broadcast_to(bxy, ik.q_deg.shape), with_base=False,
        )  # fmt: skip
        c = np.minimum(res.clearance, cap)
        ok = ik.ok
        good = ok & ~res.collides & (base_c[k : k + step] > 0)[:, None, None]
        n = len(sx)
        ch, _ = choose_configuration(
            good.reshape(-1, 2), ik.limit_margin_deg.reshape(-1, 2), c.reshape(-1, 2), width
        )
        flags[k : k + n, :, 0] = ik.reachable
        flags[k : k + n, :, 1] = ik.singular
        flags[k : k + n, :, 2:] = ok
        fl[k : k + n, :, 0] = ik.reach_margin
        fl[k : k + n, :, 1] = ik.manipulability[..., 0] / (a.a1 * a.a2)
        fl[k : k + n, :, 2:4] = ik.limit_margin_deg
        keep = ok | (every & ik.reachable[..., None])
        fl[k : k + n, :, 4:6] = np.where(
            keep, np.where(res.collides, np.minimum(c, 0.0), c), np.nan
        )
        chosen[k : k + n] = ch.reshape(n, N)
    return flags, fl, chosen


def _summary(
    problem: PlacementProblem, bx: NDArray, by: NDArray, h: float
) -> tuple[NDArray, NDArray, NDArray, NDArray]:
    """Per base: feasible count, worst limit margin, worst reach margin, smallest clearance."""
    bx = np.asarray(bx, dtype=float).reshape(-1)
    by = np.asarray(by, dtype=float).reshape(-1)
    if len(problem.targets) == 0:
        z = np.full(len(bx), np.inf)
        return np.zeros(len(bx), np.int64), z, z.copy(), z.copy()
    base_c = _base_clearance(problem, bx, by, h)
    if problem.compiled:
        from . import placement_kernel as pk

        n, lm, rm, cl = pk.base_summary(kernel_data(problem, h), bx, by, base_c)
    else:
        flags, fl, chosen = _pairs_engine(problem, bx, by, h, None, False, base_c)
        feas = chosen >= 0
        k = np.clip(chosen, 0, 1)[..., None]
        lmt = np.take_along_axis(fl[..., 2:4], k, axis=-1)[..., 0]
        clt = np.take_along_axis(fl[..., 4:6], k, axis=-1)[..., 0]
        inf = np.inf
        n = feas.sum(axis=1)
        lm = np.where(feas, lmt, inf).min(axis=1)
        rm = np.where(feas, fl[..., 0], inf).min(axis=1)
        cl = np.where(feas, clt, inf).min(axis=1)
    # The smallest clearance counts the base body too (it is the same for every target).
    cl = np.where(n > 0, np.minimum(cl, base_c), cl)
    return n, lm, rm, cl


# ---------------------------------------------------------------------------------------
# the score map


def score_terms(
    feasible: NDArray,
    limit_margin: NDArray,
    reach_margin: NDArray,
    clearance: NDArray,
    weights: ScoreWeights,
    reach: float,
    clearance_full: float,
) -> NDArray[np.float64]:
    """The score from its terms (see the module docstring); any array shapes that broadcast.

    Examples
    --------
    Two targets feasible, 15 deg of limit margin (half of 30), reach margin 10 % of the
    reach (full), clearance half the full value: quality (0.5 + 1 + 0.5) / 3.

    >>> float(score_terms(2, 15.0, 65.0, 30.0, ScoreWeights(), 650.0, 60.0).round(6))
    2.666667
    """
    n = np.asarray(feasible, dtype=float)
    with np.errstate(invalid="ignore"):
        ql = np.clip(np.asarray(limit_margin, dtype=float) / LIMIT_MARGIN_FULL_DEG, 0.0, 1.0)
        qr = np.clip(
            np.asarray(reach_margin, dtype=float) / (REACH_MARGIN_FULL_FRACTION * reach), 0.0, 1.0
        )
        qc = np.clip(np.asarray(clearance, dtype=float) / clearance_full, 0.0, 1.0)
    w = weights
    total = w.total
    if total > 0:
        q = (w.limit_margin * ql + w.reach_margin * qr + w.clearance * qc) / total
    else:
        q = np.zeros(np.broadcast(ql, qr, qc).shape)
    return n + np.where(n > 0, np.nan_to_num(q, nan=0.0), 0.0)


@dataclass(frozen=True)
class ScoreMap:
    """Sampled placement map over a grid of base positions at one heading.

    Arrays have shape ``(ny, nx)``: row j is ``y[j]``, column i is ``x[i]``. Points outside
    the mounting zone, and rows not computed yet (see :func:`score_map_steps`), hold NaN
    (``feasible`` holds -1 there).

    Attributes
    ----------
    heading_deg, pitch : float
    x, y : ndarray
        Grid coordinates (cell units).
    zone : ndarray, shape (k, 2)
        The mounting zone's outline (closed ring).
    inside : ndarray of bool
        Grid points inside the zone.
    feasible : ndarray of int
        Targets feasible (reach, limits, elbow setting, collisions at the targets, base).
    limit_margin, reach_margin : ndarray
        Worst margins over the feasible targets (degrees; cell units); inf when none.
    clearance : ndarray
        Smallest clearance over the feasible targets and the base, capped at
        ``clearance_cap`` (larger values read as the cap).
    score : ndarray
        :func:`score_terms` of the above.
    cycle_time : ndarray or None
        Seconds per cycle, once a cycle-time function exists (:data:`CYCLE_TIME_HOOK`).
    targets : int
    weights : ScoreWeights
    clearance_cap : float
    complete : bool
        Every row computed.
    """

    heading_deg: float
    pitch: float
    x: NDArray[np.float64]
    y: NDArray[np.float64]
    zone: NDArray[np.float64]
    inside: NDArray[np.bool_]
    feasible: NDArray[np.int64]
    limit_margin: NDArray[np.float64]
    reach_margin: NDArray[np.float64]
    clearance: NDArray[np.float64]
    score: NDArray[np.float64]
    cycle_time: NDArray[np.float64] | None
    targets: int
    weights: ScoreWeights
    clearance_cap: float
    complete: bool
    reach: float = 1.0

    @property
    def shape(self) -> tuple[int, int]:
        """``(ny, nx)``."""
        return self.score.shape  # type: ignore[return-value]

    @property
    def extent(self) -> tuple[float, float, float, float]:
        """``(xmin, ymin, xmax, ymax)`` of the cells around the grid points (for images)."""
        h = 0.5 * self.pitch
        return (self.x[0] - h, self.y[0] - h, self.x[-1] + h, self.y[-1] + h)

    def rescored(self, weights: ScoreWeights) -> ScoreMap:
        """The same map scored with other weights (no recomputation)."""
        s = score_terms(
            self.feasible, self.limit_margin, self.reach_margin, self.clearance, weights,
            self.reach, self.clearance_cap,
        )  # fmt: skip
        return replace(self, weights=weights, score=np.where(self.feasible >= 0, s, np.nan))

    def best_index(self) -> tuple[int, int] | None:
        """``(row, column)`` of the highest score (None when nothing is computed)."""
        if not np.isfinite(self.score).any():
            return None
        j, i = np.unravel_index(int(np.nanargmax(self.score)), self.score.shape)
        return int(j), int(i)


@dataclass(frozen=True)
class MapProgress:
    """One step of :func:`score_map_steps`: the stage, the fraction done, the map so far."""

    stage: str  # "coarse" or "refined"
    done: float
    map: ScoreMap


def default_zone(problem: PlacementProblem, region: PlacementRegion | None = None) -> Polygon:
    """The mounting zone: the arm's ``mounting_zone``, else the region's bounding box grown
    by 10 % of the reach, else (empty region) the targets' box grown by the reach."""
    if problem.zone is not None:
        return problem.zone
    if region is None:
        region = placement_region(problem, blocking=False)
    if not region.geometry.is_empty:
        g = ZONE_GROW_FRACTION * problem.reach
        x0, y0, x1, y1 = region.geometry.bounds
    elif len(problem.xy):
        g = problem.reach
        (x0, y0), (x1, y1) = problem.xy.min(axis=0), problem.xy.max(axis=0)
    else:
        g = problem.reach
        x0 = x1 = problem.arm.x
        y0 = y1 = problem.arm.y
    return shapely.box(x0 - g, y0 - g, x1 + g, y1 + g)


def default_pitch(zone: Polygon, points: int = 150) -> float:
    """A grid pitch giving about ``points`` grid points along the zone's longer side,
    rounded to two significant digits.

    Examples
    --------
    >>> default_pitch(shapely.box(0, 0, 1000, 400))
    6.7
    """
    x0, y0, x1, y1 = zone.bounds
    raw = max(x1 - x0, y1 - y0) / points
    if raw <= 0:
        return 1.0
    e = math.floor(math.log10(raw)) - 1
    return round(raw / 10**e) * 10**e


def _grid(zone: Polygon, pitch: float) -> tuple[NDArray, NDArray, NDArray]:
    x0, y0, x1, y1 = zone.bounds
    nx = int(math.floor((x1 - x0) / pitch + 1e-9)) + 1
    ny = int(math.floor((y1 - y0) / pitch + 1e-9)) + 1
    xs = 0.5 * (x0 + x1) + pitch * (np.arange(nx) - 0.5 * (nx - 1))
    ys = 0.5 * (y0 + y1) + pitch * (np.arange(ny) - 0.5 * (ny - 1))
    gx, gy = np.meshgrid(xs, ys)
    inside = shapely.contains_xy(zone, gx, gy) | shapely.intersects_xy(zone.boundary, gx, gy)
    return xs, ys, inside


def _empty_map(problem: PlacementProblem, zone: Polygon, pitch: float, h: float) -> ScoreMap:
    xs, ys, inside = _grid(zone, pitch)
    shape = (len(ys), len(xs))
    nan = np.full(shape, np.nan)
    return ScoreMap(
        heading_deg=h, pitch=float(pitch), x=xs, y=ys,
        zone=shapely.get_coordinates(zone.exterior), inside=inside,
        feasible=np.full(shape, -1, dtype=np.int64), limit_margin=nan.copy(),
        reach_margin=nan.copy(), clearance=nan.copy(), score=nan.copy(), cycle_time=None,
        targets=len(problem.targets), weights=problem.weights,
        clearance_cap=problem.clearance_full, complete=False, reach=problem.reach,
    )  # fmt: skip


def _fill_rows(problem: PlacementProblem, m: ScoreMap, rows: slice) -> None:
    """Compute the given rows of a map in place (arrays of a map being built)."""
    gx, gy = np.meshgrid(m.x, m.y[rows])
    ins = m.inside[rows]
    bx, by = gx[ins], gy[ins]
    n, lm, rm, cl = _summary(problem, bx, by, m.heading_deg)
    s = score_terms(n, lm, rm, cl, m.weights, problem.reach, problem.clearance_full)
    for arr, val in (
        (m.feasible, n),
        (m.limit_margin, lm),
        (m.reach_margin, rm),
        (m.clearance, cl),
        (m.score, s),
    ):
        block = arr[rows]
        block[ins] = val
        arr[rows] = block


def score_map_steps(
    problem: PlacementProblem,
    pitch: float | None = None,
    heading_deg: float | None = None,
    *,
    zone: Polygon | None = None,
    region: PlacementRegion | None = None,
    coarse_factor: int = 4,
    chunk_bases: int = 4000,
) -> Iterator[MapProgress]:
    """Compute a score map coarse first, then refined in chunks; stop iterating to cancel.

    Yields a :class:`MapProgress` after the coarse map (pitch times ``coarse_factor``,
    complete) and after every chunk of about ``chunk_bases`` bases of the refined map (rows
    not yet computed hold NaN); the last one has ``done == 1`` and a complete map. The
    arrays of the refined map are filled in place between yields: copy them if a consumer
    in another thread keeps them.

    Parameters
    ----------
    problem : PlacementProblem
    pitch : float, optional
        Grid pitch in cell units (default :func:`default_pitch` of the zone).
    heading_deg : float, optional
        Default: the arm's heading.
    zone : Polygon, optional
        Default :func:`default_zone`.
    region : PlacementRegion, optional
        The region at this heading, when the caller has it (for the default zone).

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("t", "T", 300, 0, "a"),))
    >>> steps = list(score_map_steps(placement_problem(cell), pitch=50.0))
    >>> steps[0].stage, steps[-1].done, steps[-1].map.complete
    ('coarse', 1.0, True)
    """
    h = _heading(problem, heading_deg)
    if zone is None:
        zone = default_zone(problem, region if region is not None else None)
    if pitch is None:
        pitch = default_pitch(zone)
    pitch = float(pitch)
    if not (math.isfinite(pitch) and pitch > 0):
        raise ValueError(f"pitch must be a positive number, got {pitch!r}")
    if coarse_factor > 1:
        cm = _empty_map(problem, zone, pitch * coarse_factor, h)
        _fill_rows(problem, cm, slice(None))
        cm = replace(cm, complete=True)
        yield MapProgress("coarse", 0.0, cm)
    m = _empty_map(problem, zone, pitch, h)
    ny, nx = m.shape
    rows_per = max(1, chunk_bases // max(nx, 1))
    for j in range(0, ny, rows_per):
        _fill_rows(problem, m, slice(j, j + rows_per))
        done = min(1.0, (j + rows_per) / ny)
        yield MapProgress("refined", done, m if done < 1.0 else replace(m, complete=True))


def score_map(
    problem: PlacementProblem,
    pitch: float | None = None,
    heading_deg: float | None = None,
    *,
    zone: Polygon | None = None,
    region: PlacementRegion | None = None,
) -> ScoreMap:
    """The complete score map (see :func:`score_map_steps` for the parameters).

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("t", "T", 300, 0, "a"),))
    >>> m = score_map(placement_problem(cell), pitch=50.0)
    >>> int(m.feasible.max()), m.shape == (len(m.y), len(m.x))
    (1, True)
    """
    last = None
    for step in score_map_steps(
        problem, pitch, heading_deg, zone=zone, region=region, coarse_factor=1, chunk_bases=1 << 30
    ):
        last = step
    assert last is not None
    return last.map


# ---------------------------------------------------------------------------------------
# the best position


@dataclass(frozen=True)
class BestPosition:
    """The best base position found.

    Attributes
    ----------
    x, y, heading_deg : float
    score : float
        Its score (same definition as the map's).
    feasible_targets : int
        Targets feasible there by the engine's evaluation (as ``check`` would report).
    targets : int
    map : ScoreMap
        The map it was taken from (at ``heading_deg``).
    """

    x: float
    y: float
    heading_deg: float
    score: float
    feasible_targets: int
    targets: int
    map: ScoreMap


def _local(
    problem: PlacementProblem, zone: Polygon, cx: NDArray, cy: NDArray, half: float, n: int,
    h: float,
) -> tuple[NDArray, NDArray, NDArray]:  # fmt: skip
    """Scores on n x n local grids of half-width ``half`` around each centre (vectorised)."""
    off = np.linspace(-half, half, n)
    ox, oy = (a.ravel() for a in np.meshgrid(off, off))
    px = (cx[:, None] + ox[None, :]).ravel()
    py = (cy[:, None] + oy[None, :]).ravel()
    ok = shapely.contains_xy(zone, px, py) | shapely.intersects_xy(zone.boundary, px, py)
    s = np.full(len(px), -np.inf)
    if ok.any():
        nf, lm, rm, cl = _summary(problem, px[ok], py[ok], h)
        s[ok] = score_terms(nf, lm, rm, cl, problem.weights, problem.reach, problem.clearance_full)
    return px, py, s


def _pick(px: NDArray, py: NDArray, s: NDArray, near: tuple[float, float]) -> int:
    """Index of the highest score; ties go to the point nearest ``near`` (the current base)."""
    top = np.max(s)
    cand = np.flatnonzero(s >= top - 1e-12)
    d = np.hypot(px[cand] - near[0], py[cand] - near[1])
    return int(cand[np.argmin(d)])


def _refine(
    problem: PlacementProblem, zone: Polygon, px: NDArray, py: NDArray, s: NDArray,
    pitch: float, h: float, near: tuple[float, float], keep: int = 5,
) -> tuple[float, float, float]:  # fmt: skip
    """Refine the best ``keep`` candidates on two finer local grids (pitch/4, then pitch/16)."""
    order = np.argsort(-s, kind="stable")[:keep]
    cx, cy, cs = px[order], py[order], s[order]
    half = pitch
    for _ in range(2):
        lx, ly, ls = _local(problem, zone, cx, cy, half, 9, h)
        lx = np.concatenate([cx, lx])
        ly = np.concatenate([cy, ly])
        ls = np.concatenate([cs, ls])
        k = _pick(lx, ly, ls, near)
        cx, cy, cs = lx[k : k + 1], ly[k : k + 1], ls[k : k + 1]
        half /= 4.0
    return float(cx[0]), float(cy[0]), float(cs[0])


def best_position(
    problem: PlacementProblem,
    smap: ScoreMap | None = None,
    *,
    pitch: float | None = None,
    heading_search: bool = False,
) -> BestPosition:
    """The highest-scoring base position, refined below the grid pitch.

    Among grid points sharing the top score, the one deepest inside that plateau is taken
    (farthest from every lower-scoring grid point, so the base has room around it; ties
    go to the point nearest the current base). The best few grid points are then refined
    on two finer local grids (a quarter and a sixteenth of the pitch), and a refined point
    replaces it only when it scores strictly higher; so the result scores at least as well
    as every grid point. With ``heading_search`` the heading is
    searched too: a sweep every 10 degrees on a coarse grid, then refinement in steps of 1,
    0.1 and 0.01 degrees around the best, then the map and refinement at the best heading;
    the better of that and the current heading's result is returned.

    Parameters
    ----------
    problem : PlacementProblem
    smap : ScoreMap, optional
        A complete map at the heading to use (default: computed, :func:`score_map`).
    pitch : float, optional
        Grid pitch when the map is computed here.
    heading_search : bool

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("t", "T", 300, 0, "a"),))
    >>> p = placement_problem(cell)
    >>> m = score_map(p, pitch=50.0)
    >>> best = best_position(p, m)
    >>> bool(best.score >= np.nanmax(m.score)), best.feasible_targets
    (True, 1)
    """
    if smap is None:
        smap = score_map(problem, pitch)
    here = _best_at(problem, smap)
    if not heading_search:
        return here
    h = _search_heading(problem, (here.x, here.y))
    if abs(h - smap.heading_deg) < 1e-12:
        return here
    other = _best_at(problem, score_map(problem, smap.pitch, h))
    return other if other.score > here.score + 1e-12 else here


def _plateau_centre(smap: ScoreMap, near: tuple[float, float]) -> tuple[float, float, float]:
    """The top-scoring grid point farthest from every lower-scoring one (the middle of a
    plateau of equal top scores; ties go to the point nearest ``near``)."""
    from scipy.ndimage import distance_transform_edt

    s = np.where(np.isfinite(smap.score), smap.score, -np.inf)
    top = float(s.max())
    plateau = s >= top - 1e-9
    depth = distance_transform_edt(np.pad(plateau, 1))[1:-1, 1:-1]
    gx, gy = np.meshgrid(smap.x, smap.y)
    best = np.flatnonzero(plateau.ravel() & (depth.ravel() >= depth.max() - 1e-9))
    d = np.hypot(gx.ravel()[best] - near[0], gy.ravel()[best] - near[1])
    k = int(best[np.argmin(d)])
    return float(gx.ravel()[k]), float(gy.ravel()[k]), float(s.ravel()[k])


def _best_at(problem: PlacementProblem, smap: ScoreMap) -> BestPosition:
    h = smap.heading_deg
    zone = shapely.Polygon(smap.zone)
    gx, gy = np.meshgrid(smap.x, smap.y)
    ok = np.isfinite(smap.score)
    near = (problem.arm.x, problem.arm.y)
    if not ok.any():
        x, y, s = near[0], near[1], float("nan")
    else:
        x, y, s = _plateau_centre(smap, near)
        # Finer local grids around the best grid points; taken only when strictly better.
        rx, ry, rs = _refine(problem, zone, gx[ok], gy[ok], smap.score[ok], smap.pitch, h, near)
        if rs > s + 1e-9:
            x, y, s = rx, ry, rs
    ev = evaluate_at(problem, x, y, h)
    return BestPosition(
        x, y, h, s, int(ev.feasible.sum()) if len(problem.targets) else 0, len(problem.targets),
        smap,
    )  # fmt: skip


def _search_heading(problem: PlacementProblem, start: tuple[float, float]) -> float:
    """Coarse heading sweep on a coarse grid, then local refinement to 0.01 degree."""
    if problem.zone is not None:
        zone = problem.zone
    elif len(problem.xy):
        g = problem.reach
        (x0, y0), (x1, y1) = problem.xy.min(axis=0), problem.xy.max(axis=0)
        zone = shapely.box(x0 - g, y0 - g, x1 + g, y1 + g)
    else:
        return float(problem.arm.heading_deg)
    pitch = default_pitch(zone, 48)
    xs, ys, inside = _grid(zone, pitch)
    gx, gy = (a[inside] for a in np.meshgrid(xs, ys))
    h0 = float(problem.arm.heading_deg)
    best = (-np.inf, h0, start)
    for h in h0 + np.arange(0.0, 360.0, 10.0):
        nf, lm, rm, cl = _summary(problem, gx, gy, float(h))
        s = score_terms(nf, lm, rm, cl, problem.weights, problem.reach, problem.clearance_full)
        k = _pick(gx, gy, s, start)
        if s[k] > best[0] + 1e-12:
            best = (float(s[k]), float(h), (float(gx[k]), float(gy[k])))
    _, hb, (bx, by) = best
    half = 3.0 * pitch
    for step, span in ((1.0, 10.0), (0.1, 1.0), (0.01, 0.1)):
        cand = []
        for h in hb + np.arange(-span, span + step / 2, step):
            px, py, s = _local(problem, zone, np.array([bx]), np.array([by]), half, 13, float(h))
            k = _pick(px, py, s, start)
            cand.append((float(s[k]), -abs(float(h) - hb), float(h), float(px[k]), float(py[k])))
        s_, _, hb, bx, by = max(cand)
        half /= 3.0
    return float(math.remainder(hb, 360.0))


# ---------------------------------------------------------------------------------------
# evaluation at a base, tolerances, live state


def move_base(
    cell: Cell, arm_id: str, x: float, y: float, heading_deg: float | None = None
) -> Cell:
    """The cell with one arm's base moved (and turned); a pure function for one undo step.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150))
    >>> moved = move_base(Cell("c", arms=(arm,)), "a", 12.5, -3.0, 90.0)
    >>> moved.arm("a").x, moved.arm("a").heading_deg
    (12.5, 90.0)
    """
    arms = tuple(
        replace(
            a,
            x=float(x),
            y=float(y),
            heading_deg=a.heading_deg if heading_deg is None else float(heading_deg),
        )  # fmt: skip
        if a.id == arm_id
        else a
        for a in cell.arms
    )
    return replace(cell, arms=arms)


def evaluate_at(
    problem: PlacementProblem, x: float, y: float, heading_deg: float | None = None
) -> ArmEvaluation:
    """The engine's evaluation of the arm's targets with its base at (x, y, heading).

    This is :func:`kinematics.evaluate.evaluate_arm`, the verdict ``check`` reports.
    """
    arm = replace(problem.arm, x=float(x), y=float(y), heading_deg=_heading(problem, heading_deg))
    return evaluate_arm(
        arm, problem.targets, problem.cell.fixtures, problem.margin,
        bodies=replace(problem.bodies, arm=arm),
    )  # fmt: skip


@dataclass(frozen=True)
class Tolerance:
    """Placement tolerance of a base position.

    Attributes
    ----------
    radius : float or None
        Radius of the largest disc about the base inside which every target stays feasible
        (collisions at the targets included), to ``precision``; None when some target is
        not feasible at the base itself.
    region_distance : float
        Exact distance to the placement region's boundary (reach, limits, base body,
        mounting zone): an upper bound of ``radius``; 0 outside the region.
    precision : float
        1/1000 of the reach.
    rays : int
        Rays searched for collisions.
    limited_by : str
        ``"region"`` (reach, limits, base body or zone), ``"collision"`` (a moving body at
        a target), ``"infeasible"`` (a target fails at the base) or ``"none"`` (no targets).
    """

    radius: float | None
    region_distance: float
    precision: float
    rays: int
    limited_by: str


def _region_distance(region: PlacementRegion, x: float, y: float) -> float:
    g = region.geometry
    if g.is_empty or not shapely.contains_xy(g, x, y):
        return 0.0
    return float(shapely.distance(g.boundary, shapely.Point(x, y)))


def _speed_bounds(problem: PlacementProblem) -> tuple[float, float]:
    """(link 1 extent from the base, largest extent of link 2 and tool from the tool point)."""
    a = problem.arm
    e1, e2 = a.a1, a.a2
    for b in problem.bodies.bodies:
        if b.frame == LINK1:
            e1 = max(e1, b.core_extent)
        elif b.frame == LINK2:
            pts = np.array([b.a, b.b]) if b.kind == "capsule" else np.asarray(b.outline)
            e2 = max(e2, float(np.max(np.hypot(pts[:, 0] - a.a2, pts[:, 1]))))
        elif b.frame == TOOL:
            e2 = max(e2, b.core_extent)
    return e1, e2


def _safe_steps(
    problem: PlacementProblem, r: NDArray, flags: NDArray, fl: NDArray, guess: NDArray
) -> NDArray:
    """Distance each target is guaranteed to stay feasible for, per (base, target).

    With the tool fixed at the target, moving the base by ds turns the joints by at most
    |dq| <= ds / sigma_min(J) with sigma_min >= a1 a2 |sin q2| / sqrt(r^2 + a2^2) (the
    smallest singular value of the arm's Jacobian, bounded by |det J| / ||J||_F). Link 1
    points then move at most (1 + e1 |dq|) and link 2 and tool points (which turn about
    the fixed tool point) at most sqrt(2) e2 |dq|, so a configuration with clearance c and
    limit margin m stays clear and within its limits for ds < min(c / v, m / |dq/ds|).
    The bound on |sin q2| over the step is taken at its ends (sin^2 q2 is concave in r^2).
    A target stays feasible as long as one of its configurations does.
    """
    a = problem.arm
    a1, a2 = a.a1, a.a2
    rmax, rmin = a1 + a2, abs(a1 - a2)
    e1, e2 = _speed_bounds(problem)

    def sin_at(rr: NDArray) -> NDArray:
        rr2 = rr * rr
        v = (rmax * rmax - rr2) * (rr2 - rmin * rmin)
        return np.sqrt(np.maximum(v, 0.0)) / (2.0 * a1 * a2)

    def step(ds: NDArray) -> NDArray:
        s = np.minimum(sin_at(r - ds), sin_at(r + ds))
        with np.errstate(divide="ignore"):
            qd = np.sqrt((r + ds) ** 2 + a2 * a2) / (a1 * a2 * s)  # rad per unit of base travel
        v = np.maximum(1.0 + e1 * qd, math.sqrt(2.0) * e2 * qd)[..., None]
        c = fl[..., 4:6]
        m = np.radians(fl[..., 2:4])
        good = flags[..., 2:4] & (c > 0)
        with np.errstate(invalid="ignore", divide="ignore"):
            per = np.where(good, np.minimum(c / v, m / qd[..., None]), 0.0)
        return np.nan_to_num(per, nan=0.0).max(axis=-1)

    ds0 = np.broadcast_to(guess, r.shape).astype(float)
    ds1 = np.minimum(step(ds0), ds0)
    # ds1 <= the guess, so the bound over the shorter step is at least as good: ds1 is safe.
    return ds1


def placement_tolerance(
    problem: PlacementProblem,
    x: float | None = None,
    y: float | None = None,
    heading_deg: float | None = None,
    *,
    region: PlacementRegion | None = None,
    max_iterations: int = 400,
) -> Tolerance:
    """The radius of the largest disc about a base in which every target stays feasible.

    Two parts:

    1. Reach, joint limits, the base body and the mounting zone: the exact distance from
       the base to the placement region's boundary, ``d`` (region outlines are within the
       chord tolerance, far below the precision).
    2. Collisions of the moving bodies at the targets: along ``K = max(16, ceil(2 pi d /
       p))`` rays from the base (``p`` = 1/1000 of the reach), so that neighbouring rays
       are at most ``p`` apart anywhere in the disc and a missed notch between two rays is
       narrower than ``p``. Each ray advances in guaranteed steps: at each point a speed
       bound on the bodies (see the safe-step rule in the source) gives a distance over
       which every target provably stays feasible; when that step falls below ``p/2`` the
       ray probes ``p/2`` ahead, and a probe that finds a target failing ends the ray at
       its last guaranteed point (so the failure lies within ``p/2`` beyond it, and only a
       failing stretch shorter than ``p/2`` along the ray can be stepped over). The search
       stops at ``d`` and at the nearest failure any ray has found.

    Parameters
    ----------
    problem : PlacementProblem
    x, y, heading_deg : float, optional
        The base pose (default: the arm's own).
    region : PlacementRegion, optional
        The region at that heading, when the caller has it.

    Examples
    --------
    One target 300 from the base, full ranges: the base may move until the target is at
    the inner radius 150 or the outer 650, so the tolerance is 150 (derived).

    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-180, 180))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("t", "T", 300, 0, "a"),))
    >>> tol = placement_tolerance(placement_problem(cell))
    >>> abs(tol.radius - 150.0) < tol.precision, tol.limited_by
    (True, 'region')
    """
    a = problem.arm
    x0 = float(a.x if x is None else x)
    y0 = float(a.y if y is None else y)
    h = _heading(problem, heading_deg)
    prec = TOLERANCE_PRECISION * problem.reach
    if len(problem.targets) == 0:
        return Tolerance(None, math.inf, prec, 0, "none")
    ev = evaluate_at(problem, x0, y0, h)
    if not bool(ev.feasible.all()):
        return Tolerance(None, 0.0, prec, 0, "infeasible")
    if region is None:
        region = placement_region(problem, h, blocking=False)
    d = _region_distance(region, x0, y0)
    if d <= 0.0:
        return Tolerance(0.0, 0.0, prec, 0, "region")
    K = max(16, math.ceil(2.0 * math.pi * d / prec))
    ang = 2.0 * np.pi * np.arange(K) / K
    ux, uy = np.cos(ang), np.sin(ang)
    cap = max(problem.clearance_full, 0.25 * problem.reach)
    s = np.zeros(K)
    done = np.zeros(K, dtype=bool)
    found = d  # nearest failure (or d)
    limited = "region"
    last_safe = np.zeros(K)
    probing = np.zeros(K, dtype=bool)
    for _ in range(max_iterations):
        act = np.flatnonzero(~done)
        if len(act) == 0:
            break
        bx, by = x0 + s[act] * ux[act], y0 + s[act] * uy[act]
        flags, fl, chosen = pair_table(problem, bx, by, h, cap=cap)
        feas = (chosen >= 0).all(axis=1)
        # A probe (or a point) where some target fails ends its ray at its last safe point.
        fail = ~feas
        if fail.any():
            fr = act[fail]
            found_here = float(np.min(last_safe[fr]))
            if found_here < found:
                found, limited = found_here, "collision"
            done[fr] = True
        act, flags, fl = act[feas], flags[feas], fl[feas]
        last_safe[act] = s[act]
        r = np.hypot(
            problem.xy[None, :, 0] - (x0 + s[act, None] * ux[act, None]),
            problem.xy[None, :, 1] - (y0 + s[act, None] * uy[act, None]),
        )
        remain = np.maximum(found - s[act], 0.0)
        st = _safe_steps(problem, r, flags, fl, remain[:, None]).min(axis=1)
        small = st < 0.5 * prec
        probing[act] = small
        st = np.where(small, 0.5 * prec, 0.999 * st)
        s[act] = s[act] + st
        over = s[act] >= found
        done[act[over]] = True
    radius = min(found, d)
    if radius >= d:
        limited = "region"
    return Tolerance(float(radius), float(d), prec, K, limited)


def heading_tolerance(
    problem: PlacementProblem,
    x: float | None = None,
    y: float | None = None,
    heading_deg: float | None = None,
) -> tuple[float, float] | None:
    """How far the heading may turn each way, ``(minus, plus)`` degrees, keeping every
    target feasible; None when some target is not feasible at the pose itself.

    Turning the heading about a fixed base with fixed targets leaves every moving body
    where it is in the world (q1 shifts by the turn, q2 stays), so only the q1 limits and
    the base footprint change. The limits give the range exactly: per target, the connected
    range of turns around 0 over which one of its clear configurations keeps q1 within its
    limits. A base footprint turns with the heading: the range is cut where it first
    touches a blocking fixture, found by turning in guaranteed steps (clearance over the
    footprint's largest radius) to 0.01 degree. Capped at 180 each way.

    Examples
    --------
    q1 limits of +-90 and a target straight ahead (q1 = 0 in the positive and negative
    configurations at full stretch): the heading may turn 90 degrees each way.

    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-90, 90), (-150, 150))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("t", "T", 650, 0, "a"),))
    >>> [round(v, 6) for v in heading_tolerance(placement_problem(cell))]
    [90.0, 90.0]
    """
    a = problem.arm
    x0 = float(a.x if x is None else x)
    y0 = float(a.y if y is None else y)
    h = _heading(problem, heading_deg)
    if len(problem.targets) == 0:
        return None
    ev = evaluate_at(problem, x0, y0, h)
    if not bool(ev.feasible.all()):
        return None
    lo1, hi1 = a.q1_limits
    ik = ev.ik
    # Eligible: reachable, q2 within limits, allowed, clear (heading-independent facts).
    elig = ik.reachable[:, None] & ik.within_limits[..., 1] & ik.allowed & ~ev.collides
    q1 = ik.q_deg[..., 0]
    minus, plus = 180.0, 180.0
    for i in range(len(problem.targets)):  # per target, a handful of intervals
        iv = []
        for k in np.flatnonzero(elig[i]):
            q = float(q1[i, k])
            for j in range(-2, 3):
                qq = q + 360.0 * j
                iv.append((qq - hi1, qq - lo1))  # turns t with qq - t inside [lo1, hi1]
        lo_t, hi_t = _component(iv)
        minus, plus = min(minus, -lo_t), min(plus, hi_t)
    fp = _footprint(problem)
    if fp is not None:
        minus = _footprint_turn(problem, fp, x0, y0, h, -1.0, minus)
        plus = _footprint_turn(problem, fp, x0, y0, h, 1.0, plus)
    return max(0.0, minus), max(0.0, plus)


def _component(iv: list[tuple[float, float]]) -> tuple[float, float]:
    """The merged interval containing 0 of a union of closed intervals ((0, 0) if none)."""
    iv.sort()
    lo = hi = None
    for a, b in iv:
        if lo is None or a > hi + 1e-12:  # type: ignore[operator]
            if lo is not None and lo <= 0.0 <= hi:  # type: ignore[operator]
                break
            lo, hi = a, b
        else:
            hi = max(hi, b)  # type: ignore[type-var]
    if lo is None or not (lo <= 0.0 <= hi):  # type: ignore[operator]
        return 0.0, 0.0
    return float(lo), float(hi)


def _footprint_turn(
    problem: PlacementProblem, fp: NDArray, x0: float, y0: float, h: float, sign: float,
    limit: float,
) -> float:  # fmt: skip
    """Largest turn (degrees, up to ``limit``) in one direction before the footprint touches."""
    fx = [f for f, m in zip(problem.cell.fixtures, problem.link_mask) if m]
    if not fx:
        return limit
    blockers = shapely.union_all([shapely.Polygon(f.outline) for f in fx])
    ext = float(np.max(np.hypot(fp[:, 0], fp[:, 1])))
    t = 0.0
    while t < limit:
        body = shapely.Polygon(_rot(fp, h + sign * t) + [x0, y0])
        c = float(shapely.distance(body, blockers))
        if c <= 0.0 or shapely.intersects(body, blockers):
            return max(0.0, t - HEADING_PRECISION_DEG / 2)
        step = math.degrees(0.999 * c / ext)
        if step < HEADING_PRECISION_DEG / 2:
            step = HEADING_PRECISION_DEG / 2
        t += step
    return limit


@dataclass(frozen=True)
class LiveState:
    """What a base drag step needs, cheaply.

    Attributes
    ----------
    all_feasible : bool
        Every target feasible at the pose (the engine's verdict, as ``check``).
    feasible_targets, targets : int
    region_distance : float
        Exact distance to the placement region's boundary: the tolerance can be no larger.
    tolerance_at_least : float
        A guaranteed lower bound of the placement tolerance (one safe step from the base,
        see :func:`placement_tolerance`), 0 when not all targets are feasible.
    heading_tolerance_deg : tuple of float or None
        As :func:`heading_tolerance`.
    """

    all_feasible: bool
    feasible_targets: int
    targets: int
    region_distance: float
    tolerance_at_least: float
    heading_tolerance_deg: tuple[float, float] | None


def live_state(
    problem: PlacementProblem,
    x: float,
    y: float,
    heading_deg: float | None = None,
    *,
    region: PlacementRegion | None = None,
    with_heading: bool = True,
) -> LiveState:
    """The tolerance bounds and the "all targets feasible" state at a base, for a drag step.

    ``with_heading=False`` skips the heading tolerance (None then), the dearer part when the
    arm has a base footprint.

    Costs one engine evaluation of the arm's targets, one point-to-outline distance and
    one kernel pass over the targets; the full :func:`placement_tolerance` belongs in a
    worker once the pointer pauses. Pass the ``region`` at this heading (it does not change
    while the base is dragged).

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-180, 180))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("t", "T", 300, 0, "a"),))
    >>> st = live_state(placement_problem(cell), 0.0, 0.0)
    >>> st.all_feasible, round(st.region_distance, 1), st.tolerance_at_least <= 150.0
    (True, 150.0, True)
    """
    h = _heading(problem, heading_deg)
    n = len(problem.targets)
    if region is None:
        region = placement_region(problem, h, blocking=False)
    if n == 0:
        return LiveState(True, 0, 0, math.inf, math.inf, None)
    ev = evaluate_at(problem, x, y, h)
    nf = int(ev.feasible.sum())
    d = _region_distance(region, x, y)
    low = 0.0
    if nf == n and d > 0:
        cap = max(problem.clearance_full, 0.25 * problem.reach)
        flags, fl, _ = pair_table(problem, np.array([x]), np.array([y]), h, cap=cap)
        r = np.hypot(problem.xy[:, 0] - x, problem.xy[:, 1] - y)[None, :]
        low = float(min(d, _safe_steps(problem, r, flags, fl, np.array([[d]])).min()))
    ht = heading_tolerance(problem, x, y, h) if nf == n and with_heading else None
    return LiveState(nf == n, nf, n, d, low, ht)


# ---------------------------------------------------------------------------------------
# the `place` report


def _num(v: float | None, nd: int = 6) -> float | None:
    if v is None:
        return None
    v = float(v)
    return None if not math.isfinite(v) else round(v, nd) + 0.0


def _pose_report(
    problem: PlacementProblem, x: float, y: float, h: float, region: PlacementRegion
) -> dict[str, Any]:
    ev = evaluate_at(problem, x, y, h)
    tol = placement_tolerance(problem, x, y, h, region=region)
    ht = heading_tolerance(problem, x, y, h)
    return {
        "x": _num(x),
        "y": _num(y),
        "heading_deg": _num(h),
        "feasible_targets": int(ev.feasible.sum()),
        "tolerance": _num(tol.radius),
        "heading_tolerance_deg": None if ht is None else [_num(ht[0]), _num(ht[1])],
    }


def placement_report(
    cell: Cell,
    arm_id: str | None = None,
    pitch: float | None = None,
    heading_search: bool = False,
) -> tuple[dict[str, Any], BestPosition, PlacementRegion]:
    """The ``place`` command's JSON report (README, Placement), the best position and region.

    Returns
    -------
    report : dict
        ``{"arm", "heading_deg", "region": {"area", "empty", "blocking_targets"},
        "current": {...}, "best": {...}, "targets", "grid": {"pitch", "nx", "ny"},
        "caution"}`` in the cell's units.
    best : BestPosition
    region : PlacementRegion
        At the best position's heading.
    """
    from .caution import CAUTION_SHORT

    problem = placement_problem(cell, arm_id)
    a = problem.arm
    region = placement_region(problem)
    smap = score_map(problem, pitch, region=region)
    best = best_position(problem, smap, heading_search=heading_search)
    best_region = (
        region if best.heading_deg == a.heading_deg else placement_region(problem, best.heading_deg)
    )
    current = _pose_report(problem, a.x, a.y, a.heading_deg, region)
    b = _pose_report(problem, best.x, best.y, best.heading_deg, best_region)
    b = {
        "x": b["x"], "y": b["y"], "heading_deg": b["heading_deg"], "score": _num(best.score),
        "feasible_targets": b["feasible_targets"], "tolerance": b["tolerance"],
        "heading_tolerance_deg": b["heading_tolerance_deg"],
    }  # fmt: skip
    report = {
        "arm": a.id,
        "heading_deg": _num(a.heading_deg),
        "region": {
            "area": _num(region.area, 3),
            "empty": region.empty,
            "blocking_targets": list(region.blocking_targets),
        },
        "current": current,
        "best": b,
        "targets": len(problem.targets),
        "grid": {"pitch": _num(smap.pitch), "nx": len(smap.x), "ny": len(smap.y)},
        "caution": CAUTION_SHORT,
    }
    return report, best, region


def arm_tolerances(cell: Cell, arm_id: str) -> dict[str, Any]:
    """The ``check`` report's placement keys of one arm at its current base.

    Returns
    -------
    dict
        ``{"placement_tolerance": radius or None, "heading_tolerance_deg": [minus, plus] or
        None}`` (None when some target is not feasible, or the arm has no targets).
    """
    p = placement_problem(cell, arm_id)
    tol = placement_tolerance(p)
    ht = heading_tolerance(p)
    return {
        "placement_tolerance": _num(tol.radius),
        "heading_tolerance_deg": None if ht is None else [_num(ht[0]), _num(ht[1])],
    }

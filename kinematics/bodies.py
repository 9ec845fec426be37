"""Bodies of an arm for clearance checks, and the 2.5-D rule for which fixtures block them.

Every arm has a body per link: a capsule (the link's centre segment widened by its
link radius) unless the cell file gives a polygon outline for that link. It may also
have a tool body (a circle at the tool point and/or a polygon outline) and a base
footprint. The extra cell-file keys read here (kept by the loader in ``extra``):

=====================================  ==================================================
key                                    meaning
=====================================  ==================================================
arm ``link_outlines``                  ``[outline1 | null, outline2 | null]``; an outline is
                                       ``[[x, y], ...]`` in the link's frame: origin at the
                                       link's inner joint, +x along the link to its far joint
arm ``base_footprint``                 ``[[x, y], ...]`` in the base frame (origin at the base,
                                       +x along the base heading); it never moves
arm ``tool_body``                      ``{"radius": p, "outline": [[x, y], ...]}``, either or
                                       both; frame: origin at the tool point, +x along link 2
arm ``mechanical_limits_deg``          ``[[lo1, hi1], [lo2, hi2]]``, the full mechanical range
                                       (must contain the joint limits); used for the maximum
                                       space only
target ``work_height``                 height the tool works at for that target
cell ``clearance_margin``              vertical clearance margin (cell units, >= 0, default 0)
=====================================  ==================================================

The 2.5-D rule (heights in cell units, above the same floor):

* A keep-out zone (fixture kind ``"keep-out"``) blocks every body, always.
* A fixture blocks the links and the base footprint when its height reaches the arm's
  link underside height less the clearance margin (``height >= underside - margin``);
  when either height is missing it blocks (conservative).
* A fixture blocks the tool body when it is strictly taller than the target's work height
  (a target sits on the surface it works on, so that surface does not block). Without a
  work height the tool follows the link rule. Along a move the tool is checked against
  fixtures taller than the higher of the two ends' work heights (the tool travels at least
  that high); when either end has none, the link rule applies.

Links without ``link_radii`` get a radius of ``DEFAULT_RADIUS_FRACTION`` of the reach
(a1 + a2) and the bodies say so (``radii_assumed``): a zero radius would call poses
clear whose real links touch the fixture.

The bodies fall into two groups:

* the **base**: the part that never moves, the base footprint when given, else the
  shoulder disc (link 1's radius about the shoulder axis). Its clearance is the same at
  every pose, so it is checked once per arm.
* the **moving bodies**: link 1 outside the shoulder disc (its capsule less the open
  disc of link 1's radius about the shoulder axis: the shoulder end cap never moves,
  the link's flanks beside the shoulder do), link 2 and the tool. Clearances of poses
  are measured from these, so they tell poses apart.

:func:`pose` places bodies at joint angles (the one posing function: clearance, moves,
spaces and the drawings all use it) and :func:`body_rings` gives their outlines as
arrays of rings for drawing.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely
from numpy.typing import ArrayLike, NDArray

from .cell import Arm, Cell, Fixture, Target
from .checks import polygon_problem

__all__ = [
    "BodyDataError",
    "DEFAULT_RADIUS_FRACTION",
    "KEEP_OUT",
    "BASE",
    "LINK1",
    "LINK2",
    "TOOL",
    "Body",
    "PosedBody",
    "ArmBodies",
    "arm_bodies",
    "frames",
    "pose",
    "body_rings",
    "ARC_POINTS",
    "clearance_margin",
    "work_height",
    "work_heights",
    "mechanical_limits",
    "link_blocking",
    "tool_blocking",
    "passes_over",
    "validate_cell_bodies",
]

#: Link radius assumed when an arm has no ``link_radii``, as a fraction of its reach.
#: From memory: link housings of such arms are some 10-20 % of the reach wide, so a radius
#: of 10 % of the reach errs on the wide (safe) side.
DEFAULT_RADIUS_FRACTION = 0.10

#: Fixture kind that blocks every body whatever the heights.
KEEP_OUT = "keep-out"

#: Frames a body can ride on: the base (never moves), link 1, link 2 and the tool point.
BASE, LINK1, LINK2, TOOL = 0, 1, 2, 3

#: Points per half circle of a drawn capsule end (sub-pixel at sensible zooms).
ARC_POINTS = 8


class BodyDataError(ValueError):
    """A body, height or limit key of a cell file is malformed.

    The message is one line: ``<json path>: <problem>, got <value>``; the loader adds
    the file name in front.

    Attributes
    ----------
    json_path : str
        Where in the file, e.g. ``arms[0].tool.radius``.
    value : object
        The offending value as read.
    """

    def __init__(self, json_path: str, problem: str, value: Any) -> None:
        self.json_path = json_path
        self.value = value
        super().__init__(f"{json_path}: {problem}, got {_short(value)}")


def _short(value: Any) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


@dataclass(frozen=True)
class Body:
    """One rigid body of an arm, in the local frame it rides on.

    Attributes
    ----------
    name : str
        ``"link 1"``, ``"link 2"``, ``"tool"``, ``"tool outline"`` or ``"base"``.
    frame : int
        :data:`BASE`, :data:`LINK1`, :data:`LINK2` or :data:`TOOL`.
    kind : str
        ``"capsule"`` (segment ``a``-``b`` widened by ``radius``; a disc when a == b)
        or ``"polygon"`` (``outline``, counter-clockwise).
    a, b : tuple of float
        Capsule segment ends in the frame.
    radius : float
        Capsule radius (0 for polygons).
    outline : ndarray or None
        Polygon vertices ``(V, 2)`` in the frame, counter-clockwise, not closed.
    trim : float
        Radius of the open disc about the frame origin that is not part of the body (link
        1's capsule less the shoulder disc: ``a`` is the origin and ``trim == radius``);
        0 for whole bodies.
    """

    name: str
    frame: int
    kind: str
    a: tuple[float, float] = (0.0, 0.0)
    b: tuple[float, float] = (0.0, 0.0)
    radius: float = 0.0
    outline: NDArray[np.float64] | None = None
    trim: float = 0.0

    @property
    def moving(self) -> bool:
        """Whether the body moves with the joints (everything but the base)."""
        return self.frame != BASE

    @property
    def extent(self) -> float:
        """Largest distance of a body point from the frame origin."""
        if self.kind == "capsule":
            return max(math.hypot(*self.a), math.hypot(*self.b)) + self.radius
        assert self.outline is not None
        return float(np.max(np.hypot(self.outline[:, 0], self.outline[:, 1])))

    @property
    def core_extent(self) -> float:
        """Largest distance of a core point (capsule segment or polygon) from the origin."""
        return self.extent - self.radius


@dataclass(frozen=True)
class PosedBody:
    """One body at a batch of P poses, in world coordinates.

    Attributes
    ----------
    body : Body
    index : int
        Position of the body in :attr:`ArmBodies.bodies`.
    origin : ndarray, shape (P, 2)
        The frame origin (for link 1: the shoulder axis).
    cos, sin : ndarray, shape (P,)
        The frame's direction.
    a, b : ndarray, shape (P, 2), or None
        Capsule segment ends (None for polygons).
    W : ndarray, shape (P, M, 2), or None
        Polygon vertices (None for capsules).
    """

    body: Body
    index: int
    origin: NDArray[np.float64]
    cos: NDArray[np.float64]
    sin: NDArray[np.float64]
    a: NDArray[np.float64] | None = None
    b: NDArray[np.float64] | None = None
    W: NDArray[np.float64] | None = None

    def __len__(self) -> int:
        return len(self.origin)

    @property
    def core(self) -> NDArray[np.float64]:
        """Core points (P, K, 2): the capsule's segment ends (one point for a disc) or the
        polygon's vertices."""
        if self.W is not None:
            return self.W
        assert self.a is not None and self.b is not None
        if self.body.a == self.body.b:
            return self.a[:, None, :]
        return np.stack([self.a, self.b], axis=1)

    @property
    def bbox(self) -> NDArray[np.float64]:
        """Bounding boxes (P, 4): xmin, ymin, xmax, ymax (the whole capsule, trim ignored)."""
        core = self.core
        r = self.body.radius
        return np.concatenate([core.min(axis=1) - r, core.max(axis=1) + r], axis=1)

    def take(self, idx: NDArray[np.int64] | slice) -> PosedBody:
        """The same body at a subset of the poses."""
        return PosedBody(
            self.body,
            self.index,
            self.origin[idx],
            self.cos[idx],
            self.sin[idx],
            None if self.a is None else self.a[idx],
            None if self.b is None else self.b[idx],
            None if self.W is None else self.W[idx],
        )


@dataclass(frozen=True)
class ArmBodies:
    """All bodies of one arm plus the data the clearance checks need.

    Attributes
    ----------
    arm : Arm
    bodies : tuple of Body
        Moving bodies first (link 1, link 2, tool), the base last (its footprint, or the
        shoulder disc when none is given).
    link_radii : tuple of float
        Radii used for the link capsules (given or assumed).
    radii_assumed : bool
        True when the arm has no ``link_radii`` and the default was used.
    """

    arm: Arm
    bodies: tuple[Body, ...]
    link_radii: tuple[float, float]
    radii_assumed: bool

    @property
    def names(self) -> tuple[str, ...]:
        """Body names in order."""
        return tuple(b.name for b in self.bodies)

    @property
    def min_link_radius(self) -> float:
        """The smallest link radius: the unit of the sampling bound along moves."""
        return min(self.link_radii)

    @property
    def has_tool(self) -> bool:
        """Whether the arm has a tool body."""
        return any(b.frame == TOOL for b in self.bodies)

    @property
    def reach(self) -> float:
        """Largest distance from the base any body point can reach (at any pose)."""
        arm = self.arm
        out = 0.0
        for b in self.bodies:
            lead = {BASE: 0.0, LINK1: 0.0, LINK2: arm.a1, TOOL: arm.a1 + arm.a2}[b.frame]
            out = max(out, lead + b.extent)
        return out

    @property
    def base_index(self) -> int:
        """Index of the base body (always the last)."""
        return len(self.bodies) - 1

    @property
    def base(self) -> Body:
        """The base: footprint, or shoulder disc of link 1's radius."""
        return self.bodies[-1]

    @property
    def moving_indices(self) -> tuple[int, ...]:
        """Indices of the moving bodies (link 1 outside the shoulder disc, link 2, tool)."""
        return tuple(k for k, b in enumerate(self.bodies) if b.moving)

    def shapes(self, q_deg: ArrayLike, arc_points: int = 32) -> dict[str, shapely.Geometry]:
        """Shapely polygons of the bodies at one pose (for drawing and reference checks).

        Arcs are polygonised with ``arc_points`` points per half circle (on the circle, so
        the polygons lie slightly inside the true bodies); use the clearance module for
        exact numbers. Link 1 is its moving part (less the shoulder disc).
        """
        q = np.asarray(q_deg, dtype=float).reshape(1, 2)
        out: dict[str, shapely.Geometry] = {}
        for pb in pose(self, q):
            out[pb.body.name] = shapely.Polygon(body_rings(pb, arc_points)[0])
        return out


def frames(
    arm: Arm, q_deg: ArrayLike, base_xy: ArrayLike | None = None
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Origins and angles of the four body frames at poses ``q_deg`` (shape ``S + (2,)``).

    ``base_xy`` (shape broadcastable to ``S + (2,)``), when given, puts the base of each pose
    there instead of at the arm's own base (the heading stays the arm's): placement maps pose
    one arm at many base positions at once.

    Returns
    -------
    origin : ndarray, shape S + (4, 2)
        Base, shoulder (= base), elbow and tool point in world coordinates.
    angle : ndarray, shape S + (4,)
        Frame angles in radians: heading, heading + q1, heading + q1 + q2 (twice).

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150))
    >>> o, t = frames(arm, [[90.0, -90.0]])
    >>> o.round(9).tolist()
    [[[0.0, 0.0], [0.0, 0.0], [0.0, 400.0], [250.0, 400.0]]]
    """
    q = np.asarray(q_deg, dtype=float)
    h = math.radians(arm.heading_deg)
    t1 = h + np.radians(q[..., 0])
    t12 = t1 + np.radians(q[..., 1])
    base = np.broadcast_to(
        np.array([arm.x, arm.y]) if base_xy is None else np.asarray(base_xy, dtype=float), q.shape
    )
    elbow = base + arm.a1 * np.stack([np.cos(t1), np.sin(t1)], axis=-1)
    tool = elbow + arm.a2 * np.stack([np.cos(t12), np.sin(t12)], axis=-1)
    origin = np.stack([base, base, elbow, tool], axis=-2)
    angle = np.stack([np.full_like(t1, h), t1, t12, t12], axis=-1)
    return origin, angle


def pose(
    bodies: ArmBodies,
    q_deg: ArrayLike,
    indices: Sequence[int] | None = None,
    base_xy: ArrayLike | None = None,
) -> list[PosedBody]:
    """Place bodies of an arm at poses ``q_deg`` (shape (P, 2)), in world coordinates.

    The one posing function: clearance, moves, spaces and drawings all use it.

    Parameters
    ----------
    bodies : ArmBodies
    q_deg : array_like, shape (P, 2)
        Joint angles in degrees.
    indices : sequence of int, optional
        Which bodies (default: all, in order).
    base_xy : array_like, shape (P, 2), optional
        The base position of each pose instead of the arm's own (placement maps).

    Examples
    --------
    >>> arm = Arm("a", "A", 100, 0, 90, 400, 250, (-180, 180), (-150, 150), link_radii=(40, 30))
    >>> link2 = pose(arm_bodies(arm), [[0.0, -90.0]], [1])[0]
    >>> link2.a.round(9).tolist(), link2.b.round(9).tolist()
    ([[100.0, 400.0]], [[350.0, 400.0]])
    """
    q = np.asarray(q_deg, dtype=float).reshape(-1, 2)
    if base_xy is not None:
        base_xy = np.asarray(base_xy, dtype=float).reshape(-1, 2)
    origin, angle = frames(bodies.arm, q, base_xy)
    picks = range(len(bodies.bodies)) if indices is None else indices
    out = []
    for k in picks:
        body = bodies.bodies[k]
        o = origin[:, body.frame]
        c, s = np.cos(angle[:, body.frame]), np.sin(angle[:, body.frame])
        if body.kind == "capsule":
            ax, ay = body.a
            bx, by = body.b
            pa = o + np.stack([c * ax - s * ay, s * ax + c * ay], axis=-1)
            pb = o + np.stack([c * bx - s * by, s * bx + c * by], axis=-1)
            out.append(PosedBody(body, k, o, c, s, a=pa, b=pb))
        else:
            assert body.outline is not None
            lx, ly = body.outline[:, 0], body.outline[:, 1]
            W = o[:, None, :] + np.stack(
                [c[:, None] * lx - s[:, None] * ly, s[:, None] * lx + c[:, None] * ly], axis=-1
            )
            out.append(PosedBody(body, k, o, c, s, W=W))
    return out


def _arc(centre: NDArray, r: float, a0: NDArray, a1: NDArray, k: int) -> NDArray:
    """Points (P, k + 1, 2) on circles about ``centre`` (P, 2) from angles a0 to a1 (P,)."""
    t = np.linspace(0.0, 1.0, k + 1)
    ang = a0[:, None] + (a1 - a0)[:, None] * t[None, :]
    return centre[:, None, :] + r * np.stack([np.cos(ang), np.sin(ang)], axis=-1)


def body_rings(posed: PosedBody, arc_points: int = ARC_POINTS) -> NDArray[np.float64]:
    """Closed outlines of a posed body, shape (P, K, 2) (the last point repeats the first).

    Capsules get ``arc_points`` points per half circle (points on the circle); link 1's
    moving part is its capsule less the shoulder disc: far cap, flanks and the concave
    arc of the shoulder disc. With ``arc_points == 0`` a capsule is given by its centre
    segment alone (a quick draft).

    Examples
    --------
    A link of length 10 and radius 2 along +x: its capsule, four points per half circle.

    >>> arm = Arm("a", "A", 0, 0, 0, 10, 5, (-180, 180), (-150, 150), link_radii=(2, 1))
    >>> link2 = pose(arm_bodies(arm), [[0.0, 0.0]], [1])[0]
    >>> ring = body_rings(link2, 2)[0]
    >>> (ring.round(6) + 0.0).tolist()
    [[15.0, -1.0], [16.0, 0.0], [15.0, 1.0], [10.0, 1.0], [9.0, 0.0], [10.0, -1.0], [15.0, -1.0]]
    """
    body = posed.body
    if body.kind == "polygon":
        assert posed.W is not None
        return np.concatenate([posed.W, posed.W[:, :1]], axis=1)
    assert posed.a is not None and posed.b is not None
    a, b, r = posed.a, posed.b, body.radius
    if arc_points == 0 and body.a != body.b:
        return np.stack([a, b], axis=1)
    k = max(arc_points, 2)
    d = b - a
    ang = np.arctan2(d[:, 1], d[:, 0])
    if body.a == body.b:
        ang = np.zeros(len(a))
        far = _arc(b, r, ang - math.pi / 2, ang + math.pi / 2, k)
        near = _arc(a, r, ang + math.pi / 2, ang + 3 * math.pi / 2, k)
        return np.concatenate([far, near, far[:, :1]], axis=1)
    far = _arc(b, r, ang - math.pi / 2, ang + math.pi / 2, k)
    if body.trim > 0:
        # The shoulder disc's arc, walked from the upper flank back to the lower one.
        near = _arc(a, body.trim, ang + math.pi / 2, ang - math.pi / 2, k)
    else:
        near = _arc(a, r, ang + math.pi / 2, ang + 3 * math.pi / 2, k)
    return np.concatenate([far, near, far[:, :1]], axis=1)


# ---------------------------------------------------------------------------------------
# reading and validating the extra keys


def _is_number(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)


def _number(v: Any, path: str, *, positive: bool = False, nonneg: bool = False) -> float:
    if not _is_number(v):
        raise BodyDataError(path, "must be a finite number", v)
    if positive and not v > 0:
        raise BodyDataError(path, "must be greater than 0", v)
    if nonneg and v < 0:
        raise BodyDataError(path, "must not be negative", v)
    return float(v)


def _outline(v: Any, path: str) -> NDArray[np.float64]:
    """A simple polygon as a counter-clockwise ``(V, 2)`` array."""
    if not isinstance(v, Sequence) or isinstance(v, str) or len(v) < 3:
        raise BodyDataError(path, "must be a list of at least 3 [x, y] points", v)
    pts = []
    for k, p in enumerate(v):
        if (
            not isinstance(p, Sequence)
            or isinstance(p, str)
            or len(p) != 2
            or not all(_is_number(c) for c in p)
        ):
            raise BodyDataError(f"{path}[{k}]", "must be [x, y] with two finite numbers", p)
        pts.append((float(p[0]), float(p[1])))
    if pts[0] == pts[-1]:
        pts = pts[:-1]  # a closed ring is accepted too
    problem = polygon_problem(pts)
    if problem is not None:
        raise BodyDataError(path, problem, v)
    poly = shapely.Polygon(pts)
    arr = np.array(pts, dtype=float)
    if not poly.exterior.is_ccw:
        arr = arr[::-1].copy()
    return arr


def mechanical_limits(arm: Arm, path: str = "arm") -> tuple[tuple[float, float], ...] | None:
    """The arm's ``mechanical_limits_deg`` when given (validated), else None.

    Raises
    ------
    BodyDataError
        When the value is malformed or does not contain the joint limits.
    """
    v = arm.extra.get("mechanical_limits_deg")
    if v is None:
        return None
    p = f"{path}.mechanical_limits_deg"
    if not isinstance(v, Sequence) or isinstance(v, str) or len(v) != 2:
        raise BodyDataError(p, "must be [[lo1, hi1], [lo2, hi2]] in degrees", v)
    out = []
    for j, (pair, lim) in enumerate(zip(v, (arm.q1_limits, arm.q2_limits))):
        pj = f"{p}[{j}]"
        if not isinstance(pair, Sequence) or isinstance(pair, str) or len(pair) != 2:
            raise BodyDataError(pj, "must be [lo, hi] in degrees", pair)
        lo, hi = (_number(c, f"{pj}[{k}]") for k, c in enumerate(pair))
        if not lo < hi or hi - lo > 720:
            raise BodyDataError(pj, "must have lo < hi and be at most 720 degrees wide", pair)
        if lo > lim[0] or hi < lim[1]:
            raise BodyDataError(pj, f"must contain the joint limits [{lim[0]}, {lim[1]}]", pair)
        out.append((lo, hi))
    return tuple(out)


def clearance_margin(cell: Cell) -> float:
    """The cell's vertical clearance margin (``clearance_margin``, default 0).

    Examples
    --------
    >>> clearance_margin(Cell("c", extra={"clearance_margin": 15}))
    15.0
    """
    v = cell.extra.get("clearance_margin")
    return 0.0 if v is None else _number(v, "clearance_margin", nonneg=True)


def work_height(target: Target, path: str = "target") -> float | None:
    """A target's ``work_height`` when given (validated), else None."""
    v = target.extra.get("work_height")
    return None if v is None else _number(v, f"{path}.work_height")


def work_heights(
    targets: Sequence[Target], paths: Sequence[str] | None = None
) -> NDArray[np.float64]:
    """Work heights of targets as an array, NaN where none is given.

    ``paths`` are the targets' JSON paths for error messages (default: by id).
    """
    if paths is None:
        paths = [f"targets[id={t.id!r}]" for t in targets]
    out = [work_height(t, p) for t, p in zip(targets, paths)]
    return np.array([np.nan if h is None else h for h in out], dtype=float)


def arm_bodies(arm: Arm, path: str = "arm") -> ArmBodies:
    """Build the bodies of an arm from its link radii and extra keys.

    Parameters
    ----------
    arm : Arm
    path : str
        JSON path of the arm for error messages, e.g. ``"arms[0]"``.

    Raises
    ------
    BodyDataError
        When an extra key is malformed.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), link_radii=(40, 30),
    ...           extra={"tool_body": {"radius": 25}})
    >>> ab = arm_bodies(arm)
    >>> ab.names, ab.min_link_radius, ab.radii_assumed
    (('link 1', 'link 2', 'tool', 'base'), 30.0, False)
    """
    ex: Mapping[str, Any] = arm.extra
    if arm.link_radii is None:
        r = DEFAULT_RADIUS_FRACTION * (arm.a1 + arm.a2)
        radii, assumed = (r, r), True
    else:
        radii = tuple(
            _number(r, f"{path}.link_radii[{k}]", positive=True)
            for k, r in enumerate(arm.link_radii)
        )
        assumed = False
    outlines: list[Any] = [None, None]
    lo_v = ex.get("link_outlines")
    if lo_v is not None:
        p = f"{path}.link_outlines"
        if not isinstance(lo_v, Sequence) or isinstance(lo_v, str) or len(lo_v) != 2:
            raise BodyDataError(p, "must be [outline1 or null, outline2 or null]", lo_v)
        outlines = [None if o is None else _outline(o, f"{p}[{k}]") for k, o in enumerate(lo_v)]
    bodies: list[Body] = []
    for k, (frame, length) in enumerate(((LINK1, arm.a1), (LINK2, arm.a2))):
        name = f"link {k + 1}"
        if outlines[k] is None:
            # Link 1's shoulder end never moves: the shoulder disc belongs to the base.
            trim = radii[0] if k == 0 else 0.0
            bodies.append(
                Body(name, frame, "capsule", (0.0, 0.0), (length, 0.0), radii[k], trim=trim)
            )
        else:
            bodies.append(Body(name, frame, "polygon", outline=outlines[k]))
    tool = ex.get("tool_body")
    if tool is not None:
        p = f"{path}.tool_body"
        if not isinstance(tool, Mapping) or not ({"radius", "outline"} & set(tool)):
            raise BodyDataError(p, 'must be an object with "radius" and/or "outline"', tool)
        unknown = set(tool) - {"radius", "outline"}
        if unknown:
            raise BodyDataError(p, f"unknown key {sorted(unknown)[0]!r}", tool)
        if tool.get("radius") is not None:
            rt = _number(tool["radius"], f"{p}.radius", positive=True)
            bodies.append(Body("tool", TOOL, "capsule", radius=rt))
        if tool.get("outline") is not None:
            name = "tool" if tool.get("radius") is None else "tool outline"
            bodies.append(
                Body(name, TOOL, "polygon", outline=_outline(tool["outline"], f"{p}.outline"))
            )
    fp = ex.get("base_footprint")
    if fp is not None:
        bodies.append(Body("base", BASE, "polygon", outline=_outline(fp, f"{path}.base_footprint")))
    else:
        bodies.append(Body("base", BASE, "capsule", radius=radii[0]))
    return ArmBodies(arm=arm, bodies=tuple(bodies), link_radii=radii, radii_assumed=assumed)


def validate_cell_bodies(cell: Cell) -> None:
    """Check every body, height, margin and limit key of a cell; raise on the first bad one.

    Raises
    ------
    BodyDataError
        With a one-line message naming the JSON path and value.
    """
    clearance_margin(cell)
    for i, arm in enumerate(cell.arms):
        arm_bodies(arm, f"arms[{i}]")
        mechanical_limits(arm, f"arms[{i}]")
    for i, t in enumerate(cell.targets):
        work_height(t, f"targets[{i}]")


# ---------------------------------------------------------------------------------------
# the 2.5-D rule


def link_blocking(arm: Arm, fixtures: Sequence[Fixture], margin: float = 0.0) -> NDArray[np.bool_]:
    """Which fixtures block the arm's links and base footprint (the 2.5-D rule).

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150),
    ...           link_underside_height=800)
    >>> sq = ((0, 0), (1, 0), (1, 1))
    >>> fx = [Fixture("low", "Low", "table", sq, 700), Fixture("col", "Col", "column", sq, 2000),
    ...       Fixture("k", "K", "keep-out", sq, 0), Fixture("u", "U", "table", sq, None)]
    >>> link_blocking(arm, fx, margin=50).tolist()
    [False, True, True, True]
    >>> link_blocking(arm, fx, margin=150).tolist()
    [True, True, True, True]
    """
    under = arm.link_underside_height
    out = np.empty(len(fixtures), dtype=bool)
    for k, f in enumerate(fixtures):
        out[k] = (
            f.kind == KEEP_OUT or f.height is None or under is None or f.height >= under - margin
        )
    return out


def tool_blocking(
    arm: Arm,
    fixtures: Sequence[Fixture],
    margin: float = 0.0,
    work_height: ArrayLike = np.nan,
) -> NDArray[np.bool_]:
    """Which fixtures block the tool body for given work heights (NaN = not given).

    Returns
    -------
    ndarray of bool, shape ``shape(work_height) + (F,)``

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150),
    ...           link_underside_height=800)
    >>> sq = ((0, 0), (1, 0), (1, 1))
    >>> fx = [Fixture("t", "Table", "table", sq, 700), Fixture("b", "Bin", "fixture", sq, 720)]
    >>> tool_blocking(arm, fx, work_height=[700.0, np.nan]).tolist()
    [[False, True], [False, False]]
    """
    wh = np.asarray(work_height, dtype=float)
    links = link_blocking(arm, fixtures, margin)
    heights = np.array([np.inf if f.height is None else f.height for f in fixtures], dtype=float)
    keep = np.array([f.kind == KEEP_OUT for f in fixtures], dtype=bool)
    given = ~np.isnan(wh)[..., None]
    taller = heights > np.where(np.isnan(wh), 0.0, wh)[..., None]
    return keep | np.where(given, taller, links)


def passes_over(arm: Arm, fixtures: Sequence[Fixture], margin: float = 0.0) -> NDArray[np.bool_]:
    """Fixtures the links pass over (not blocking the links): for the canvas legend."""
    return ~link_blocking(arm, fixtures, margin)

"""Vectorised clearance between an arm's bodies and the fixtures that block them.

Clearance is a signed distance: positive, the smallest gap between any body and any
blocking fixture; negative, a penetration depth, measured as how deep the deepest point
of a body reaches inside the fixture (for a capsule: its link radius plus how deep its
centre segment reaches; for polygons: the deeper of the body's outline inside the
fixture and the fixture's outline inside the body). Touching (clearance 0) counts as
colliding.

The work is done in numpy over arrays of poses: a bounding-box broad phase gives each
(pose, body, fixture) pair a lower bound on its clearance, an exact narrow phase runs
on each pose's most promising pair, and then only on pairs whose lower bound beats that
pose's best so far. Exact segment-to-polygon distances are the smallest of the
endpoint-to-edge and vertex-to-segment distances (zero when the segment crosses an edge
or starts inside); the deepest point of a segment inside a polygon is found among the
segment's ends and the points where the distances to two of the polygon's vertices or
edge lines are equal (the maximum of a minimum of convex functions sits at such a tie).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .bodies import (
    LINK1,
    TOOL,
    ArmBodies,
    Body,
    PosedBody,
    arm_bodies,
    link_blocking,
    pose,
    tool_blocking,
)
from .cell import Arm, Fixture

__all__ = [
    "FixtureSet",
    "PoseClearance",
    "pose_clearance",
    "base_clearance",
    "arm_clearance",
    "segment_polygon_distance",
    "body_fixture_clearance",
]


# Elements per temporary array in the kernels: numpy temporaries above roughly 128 KB are
# fresh memory maps on every call (glibc), several times slower per element.
CHUNK = 8192
_SQRT5 = math.sqrt(5.0)
SEARCH_CHUNK = 16384


class FixtureSet:
    """Fixture outlines prepared for vectorised queries (grouped by vertex count).

    Parameters
    ----------
    outlines : sequence of array_like
        One simple polygon ``(V_k, 2)`` per fixture, world coordinates, not closed.
    """

    def __init__(self, outlines: Sequence[ArrayLike]) -> None:
        polys = []
        for o in outlines:
            v = np.asarray(o, dtype=float).reshape(-1, 2)
            if len(v) > 1 and np.array_equal(v[0], v[-1]):
                v = v[:-1]
            polys.append(v)
        self.count = len(polys)
        self.polygons: tuple[NDArray[np.float64], ...] = tuple(polys)
        if polys:
            lo = np.array([p.min(axis=0) for p in polys])
            hi = np.array([p.max(axis=0) for p in polys])
        else:
            lo = hi = np.zeros((0, 2))
        #: Bounding boxes ``(F, 4)``: xmin, ymin, xmax, ymax.
        self.bbox = np.concatenate([lo, hi], axis=1)
        # No point of a fixture is deeper inside it than half its box's smaller side.
        self.half_min = 0.5 * np.min(hi - lo, axis=1) if polys else np.zeros(0)
        sizes = np.array([len(p) for p in polys], dtype=np.int64)
        convex = np.array([_is_convex(p) for p in polys], dtype=bool)
        # Group key: vertex count, negative for non-convex outlines (general kernel).
        keys = np.where(convex, sizes, -sizes)
        self.keys = keys
        self._pos = np.zeros(self.count, dtype=np.int64)
        self._groups: dict[int, NDArray[np.float64]] = {}
        self._xy: dict[int, tuple[NDArray, ...]] = {}
        for key in np.unique(keys):
            idx = np.flatnonzero(keys == key)
            self._pos[idx] = np.arange(len(idx))
            verts = np.stack([polys[i] for i in idx])
            if key > 0:
                verts = _ccw(verts)
            self._groups[int(key)] = verts
            self._xy[int(key)] = _edge_arrays(verts, key > 0)
        centre = 0.5 * (lo + hi)
        #: Bounding circles: box centres ``(F, 2)`` and radii ``(F,)``.
        self.centre = centre
        self.radius = np.array(
            [np.max(np.hypot(*(p - c).T)) for p, c in zip(polys, centre)], dtype=float
        )
        self.centre32 = (
            centre[None, :, 0].astype(np.float32),
            centre[None, :, 1].astype(np.float32),
        )
        self.radius32 = self.radius.astype(np.float32)

    @classmethod
    def of(cls, fixtures: Sequence[Fixture]) -> FixtureSet:
        """The prepared set for cell fixtures (cached on their outlines).

        The same fixture objects in the same order (the common case while anything but a
        fixture is dragged) find their set without rebuilding the key of every outline.
        """
        ids = tuple(map(id, fixtures))
        hit = _BY_OBJECTS.get(ids)
        if hit is not None and all(a is b for a, b in zip(hit[0], fixtures)):
            return hit[1]
        fs = _fixture_set(tuple(f.outline for f in fixtures))
        if len(_BY_OBJECTS) > 64:
            _BY_OBJECTS.clear()
        _BY_OBJECTS[ids] = (tuple(fixtures), fs)
        return fs

    def vertices(
        self, idx: NDArray[np.int64]
    ) -> list[tuple[NDArray[np.int64], NDArray[np.float64], bool]]:
        """Rows grouped by outline kind: ``[(row positions, vertices (n, E, 2), convex), ...]``.

        Convex outlines come counter-clockwise.
        """
        out = []
        keys = self.keys[idx]
        for key, verts in self._groups.items():
            rows = np.flatnonzero(keys == key)
            if len(rows):
                out.append((rows, verts[self._pos[idx[rows]]], key > 0))
        return out

    def edges(self, idx: NDArray[np.int64]) -> list[tuple[NDArray[np.int64], tuple, bool]]:
        """Like :meth:`vertices` but with edge component arrays.

        Each entry holds ``(rows, (Px, Py, Qx, Qy, Nx, Ny), convex)``: edge starts and ends,
        and for convex outlines the inward unit normals (else None), each ``(n, E)``.
        """
        out = []
        keys = self.keys[idx]
        for key, arrs in self._xy.items():
            rows = np.flatnonzero(keys == key)
            if len(rows):
                pos = self._pos[idx[rows]]
                out.append((rows, tuple(None if a is None else a[pos] for a in arrs), key > 0))
        return out


def _edge_arrays(verts: NDArray, convex: bool) -> tuple:
    """Per-edge arrays (n, E): starts, ends, vectors, inverse squared lengths, inward normals."""
    px, py = verts[..., 0].copy(), verts[..., 1].copy()
    qx, qy = np.roll(px, -1, axis=1), np.roll(py, -1, axis=1)
    ex, ey = qx - px, qy - py
    l2 = ex * ex + ey * ey
    il2 = np.divide(1.0, l2, out=np.zeros_like(l2), where=l2 > 0)
    if convex:
        length = np.sqrt(l2)
        length = np.where(length > 0, length, 1.0)
        nx, ny = -ey / length, ex / length
    else:
        nx = ny = None
    return (px, py, qx, qy, ex, ey, il2, nx, ny)


def _is_convex(v: NDArray) -> bool:
    """Whether a simple polygon is convex (collinear vertices allowed)."""
    if len(v) < 3:
        return False
    e = np.roll(v, -1, axis=0) - v
    turn = _cross(e, np.roll(e, -1, axis=0))
    return bool(np.all(turn >= 0) or np.all(turn <= 0))


def _ccw(verts: NDArray) -> NDArray:
    """Polygons (n, E, 2) reordered counter-clockwise."""
    area = np.sum(_cross(verts, np.roll(verts, -1, axis=1)), axis=1)
    return np.where((area < 0)[:, None, None], verts[:, ::-1, :], verts)


# Fixture objects (kept alive here, so their ids stay theirs) -> their prepared set.
_BY_OBJECTS: dict[tuple[int, ...], tuple[tuple, FixtureSet]] = {}


@lru_cache(maxsize=16)
def _fixture_set(outlines: tuple) -> FixtureSet:
    return FixtureSet(outlines)


# ---------------------------------------------------------------------------------------
# geometric kernels (rows of segments against rows of polygons)


@lru_cache(maxsize=64)
def _pairs(n: int) -> tuple[NDArray[np.int64], NDArray[np.int64]]:
    """Index pairs i < j of n items (cached: the kernels ask for the same few sizes)."""
    return np.triu_indices(n, 1)


def _pt_seg2(x: NDArray, p: NDArray, q: NDArray) -> NDArray:
    """Squared distance from points x to segments p-q (all broadcast)."""
    d = q - p
    w = x - p
    num = np.sum(w * d, axis=-1)
    dd = np.broadcast_to(np.sum(d * d, axis=-1), num.shape)
    t = np.zeros(num.shape)
    np.divide(num, dd, out=t, where=dd > 0)
    t = np.clip(t, 0.0, 1.0)
    e = w - t[..., None] * d
    return np.sum(e * e, axis=-1)


def _cross(u: NDArray, v: NDArray) -> NDArray:
    return u[..., 0] * v[..., 1] - u[..., 1] * v[..., 0]


def _pip(x: NDArray, V: NDArray) -> NDArray[np.bool_]:
    """Points ``x`` (..., 2) strictly inside polygons ``V`` (..., E, 2) (even-odd rule)."""
    Q = np.roll(V, -1, axis=-2)
    py, qy = V[..., 1], Q[..., 1]
    xy, xx = x[..., None, 1], x[..., None, 0]
    cond = (py > xy) != (qy > xy)
    dy = np.where(cond, qy - py, 1.0)
    xint = V[..., 0] + (xy - py) * (Q[..., 0] - V[..., 0]) / dy
    return (np.count_nonzero(cond & (xx < xint), axis=-1) % 2) == 1


def _seg_poly(a: NDArray, b: NDArray, V: NDArray) -> tuple[NDArray, NDArray]:
    """Squared distance from segments a-b (n, 2) to polygon regions V (n, E, 2).

    Returns the squared distance (0 when they meet) and whether the segment may reach
    inside (starts inside, properly crosses an edge, or touches).
    """
    Q = np.roll(V, -1, axis=1)
    A, B = a[:, None, :], b[:, None, :]
    d2 = np.minimum(np.minimum(_pt_seg2(A, V, Q), _pt_seg2(B, V, Q)), _pt_seg2(V, A, B))
    dist2 = d2.min(axis=1)
    e = Q - V
    s = B - A
    crossing = (_cross(e, A - V) * _cross(e, B - V) < 0) & (_cross(s, V - A) * _cross(s, Q - A) < 0)
    scale = 1.0 + np.sum(a * a, axis=1) + np.sum(b * b, axis=1)
    inter = crossing.any(axis=1) | _pip(a, V) | (dist2 <= 1e-24 * scale)
    return dist2, inter


def _seg_depth(a: NDArray, b: NDArray, V: NDArray) -> NDArray:
    """How deep the deepest point of segments a-b (n, 2) lies inside polygons V (n, E, 2).

    Candidates are the segment ends and every parameter t where the squared distances
    to two features (reflex vertices, edge lines) are equal; the true distance to the outline
    is evaluated at each candidate and the largest one inside the polygon is returned
    (0 when no candidate is inside). Ties farther from the segment than the distance to
    the outline can ever be (at most the larger end distance to any one edge) are skipped.
    """
    n, E = V.shape[:2]
    ax, ay = a[:, 0:1], a[:, 1:2]
    dx, dy = b[:, 0:1] - ax, b[:, 1:2] - ay
    Px, Py = V[..., 0], V[..., 1]
    Qx, Qy = np.roll(Px, -1, axis=1), np.roll(Py, -1, axis=1)
    ex, ey = Qx - Px, Qy - Py
    length = np.hypot(ex, ey)
    length = np.where(length > 0, length, 1.0)
    nx, ny = -ey / length, ex / length
    alpha = nx * (ax - Px) + ny * (ay - Py)
    beta = nx * dx + ny * dy
    # Inside a polygon the nearest outline point is on an edge or at a reflex vertex
    # (a disc inside the polygon cannot touch a convex corner), so only those compete.
    area = np.sum(Px * Qy - Qx * Py, axis=1, keepdims=True)
    turn = np.roll(ex, 1, axis=1) * ey - np.roll(ey, 1, axis=1) * ex  # at vertex k
    reflex = turn * np.sign(area) < 0
    R = max(1, int(reflex.sum(axis=1).max()))
    order = np.argsort(~reflex, axis=1, kind="stable")[:, :R]
    rmask = np.take_along_axis(reflex, order, axis=1)
    rx, ry = np.take_along_axis(Px, order, axis=1), np.take_along_axis(Py, order, axis=1)
    wx, wy = ax - rx, ay - ry
    A = np.concatenate([beta * beta, np.broadcast_to(dx * dx + dy * dy, (n, R))], axis=1)
    B = np.concatenate([2.0 * alpha * beta, 2.0 * (wx * dx + wy * dy)], axis=1)
    C = np.concatenate([alpha * alpha, np.where(rmask, wx * wx + wy * wy, 1e200)], axis=1)
    # The distance to the outline never exceeds the distance to any one edge, which is
    # largest at an end of the segment (convex in t).
    bx_, by_ = ax + dx, ay + dy
    u2 = np.min(
        np.maximum(_pt_seg2_xy(ax, ay, Px, Py, Qx, Qy), _pt_seg2_xy(bx_, by_, Px, Py, Qx, Qy)),
        axis=1,
    )
    # Nor can it exceed half the smaller side of the polygon's bounding box.
    x0, x1 = Px.min(axis=1, keepdims=True), Px.max(axis=1, keepdims=True)
    y0, y1 = Py.min(axis=1, keepdims=True), Py.max(axis=1, keepdims=True)
    half = 0.5 * np.minimum(x1 - x0, y1 - y0)[:, 0]
    u2 = np.minimum(u2, half * half)
    iu, ju = _pairs(E + R)
    dA, dB, dC = A[:, iu] - A[:, ju], B[:, iu] - B[:, ju], C[:, iu] - C[:, ju]
    with np.errstate(over="ignore", invalid="ignore"):
        disc = dB * dB - 4.0 * dA * dC
    root = np.sqrt(np.where(disc >= 0, disc, 0.0))
    qq = -0.5 * (dB + np.where(dB >= 0, root, -root))
    ok = (disc >= 0) & (qq != 0)
    qs = np.where(ok, qq, 1.0)
    with np.errstate(over="ignore", invalid="ignore"):
        t1 = np.where(ok & (dA != 0), qs / np.where(dA != 0, dA, 1.0), np.nan)
        t2 = np.where(ok, dC / qs, np.nan)
        tt = np.concatenate([t1, t2], axis=1)
        tt = np.where((tt >= 0) & (tt <= 1), tt, np.nan)
    Ai, Bi, Ci = (np.concatenate([m[:, iu], m[:, iu]], axis=1) for m in (A, B, C))
    with np.errstate(over="ignore", invalid="ignore"):
        g = (Ai * tt + Bi) * tt + Ci
        keep = g <= u2[:, None] * (1 + 1e-9) + 1e-18
        # Only points inside the polygon's box can be inside the polygon.
        cx, cy = ax + tt * dx, ay + tt * dy
        keep &= (cx >= x0) & (cx <= x1) & (cy >= y0) & (cy <= y1)
    rows_all, _ = np.nonzero(keep)
    rows_all = np.concatenate([np.arange(n), np.arange(n), rows_all])
    t_all = np.concatenate([np.zeros(n), np.ones(n), tt[keep]])
    depth2 = np.zeros(n)
    step = max(1, CHUNK // E)
    for k in range(0, len(rows_all), step):
        rows, t = rows_all[k : k + step], t_all[k : k + step]
        px = (ax[rows, 0] + t * dx[rows, 0])[:, None]
        py = (ay[rows, 0] + t * dy[rows, 0])[:, None]
        Pxr, Pyr, Qxr, Qyr = Px[rows], Py[rows], Qx[rows], Qy[rows]
        f2 = _pt_seg2_xy(px, py, Pxr, Pyr, Qxr, Qyr).min(axis=1)
        cond = (Pyr > py) != (Qyr > py)
        xint = Pxr + (py - Pyr) * (Qxr - Pxr) / np.where(cond, Qyr - Pyr, 1.0)
        inside = (np.count_nonzero(cond & (px < xint), axis=1) % 2) == 1
        np.maximum.at(depth2, rows, np.where(inside, f2, 0.0))
    return np.sqrt(depth2)


def _seg_depth_convex(a: NDArray, b: NDArray, V: NDArray) -> NDArray:
    """:func:`_seg_depth` for convex counter-clockwise polygons.

    Inside a convex polygon the distance to the outline is the smallest distance to an
    edge line, a minimum of affine functions of t: its maximum is at an end or where two
    of them are equal.
    """
    d = b - a
    Q = np.roll(V, -1, axis=1)
    e = Q - V
    length = np.hypot(e[..., 0], e[..., 1])
    length = np.where(length > 0, length, 1.0)
    inward = np.stack([-e[..., 1], e[..., 0]], axis=-1) / length[..., None]
    alpha = np.sum(inward * (a[:, None, :] - V), axis=2)  # (n, E) at t = 0
    beta = np.sum(inward * d[:, None, :], axis=2)
    E = V.shape[1]
    iu, ju = _pairs(E)
    db = beta[:, iu] - beta[:, ju]
    tc = np.where(db != 0, (alpha[:, ju] - alpha[:, iu]) / np.where(db != 0, db, 1.0), 0.0)
    t = np.concatenate([np.zeros((len(a), 1)), np.ones((len(a), 1)), np.clip(tc, 0.0, 1.0)], 1)
    h = alpha[:, None, :] + t[..., None] * beta[:, None, :]
    return np.maximum(np.max(np.min(h, axis=2), axis=1), 0.0)


def _pt_seg2_xy(xx, xy, px, py, qx, qy):  # noqa: ANN001, ANN202 - hot path, arrays only
    """:func:`_pt_seg2` on separate x and y arrays (no reductions over a size-2 axis)."""
    dx = qx - px
    dy = qy - py
    wx = xx - px
    wy = xy - py
    dd = dx * dx + dy * dy
    t = (wx * dx + wy * dy) / np.where(dd > 0, dd, 1.0)
    np.clip(t, 0.0, 1.0, out=t)
    ex = wx - t * dx
    ey = wy - t * dy
    return ex * ex + ey * ey


def _capsule_rows(
    ax: NDArray, ay: NDArray, bx: NDArray, by: NDArray, r: NDArray, edges: tuple, convex: bool
) -> NDArray:
    """Signed distance of capsules (segment rows a-b, radius r) to fixture rows."""
    Px, Py, Qx, Qy, Ex, Ey, Il, Nx, Ny = edges
    ax_, ay_, bx_, by_ = ax[:, None], ay[:, None], bx[:, None], by[:, None]
    sx, sy = bx_ - ax_, by_ - ay_
    s2 = sx * sx + sy * sy
    isd = np.divide(1.0, s2, out=np.zeros_like(s2), where=s2 > 0)
    wxa, wya = ax_ - Px, ay_ - Py  # edge start to segment start
    wxb, wyb = bx_ - Px, by_ - Py
    # Segment ends to edges, and edge starts (the vertices) to the segment.
    t = np.clip((wxa * Ex + wya * Ey) * Il, 0.0, 1.0)
    ux, uy = wxa - t * Ex, wya - t * Ey
    d2 = ux * ux + uy * uy
    t = np.clip((wxb * Ex + wyb * Ey) * Il, 0.0, 1.0)
    ux, uy = wxb - t * Ex, wyb - t * Ey
    np.minimum(d2, ux * ux + uy * uy, out=d2)
    t = np.clip((wxa * sx + wya * sy) * -isd, 0.0, 1.0)
    ux, uy = wxa + t * sx, wya + t * sy
    np.minimum(d2, ux * ux + uy * uy, out=d2)
    dist2 = d2.min(axis=1)
    # Proper crossings (orientation tests) and the start point inside (even-odd ray cast
    # towards +x: an edge straddling the ray's height counts when the point is on its left).
    o1 = Ex * wya - Ey * wxa
    o2 = Ex * wyb - Ey * wxb
    o3 = sx * wya - sy * wxa
    o4 = sx * (wya - Ey) - sy * (wxa - Ex)
    crossing = ((o1 * o2 < 0) & (o3 * o4 < 0)).any(axis=1)
    straddle = (Py > ay_) != (Qy > ay_)
    inside = (np.count_nonzero(straddle & (o1 * Ey > 0), axis=1) % 2) == 1
    scale = 1.0 + ax * ax + ay * ay + bx * bx + by * by
    inter = crossing | inside | (dist2 <= 1e-24 * scale)
    sd = np.sqrt(dist2) - r
    if inter.any():
        k = np.flatnonzero(inter)
        if convex:
            alpha = Nx[k] * wxa[k] + Ny[k] * wya[k]
            beta = Nx[k] * sx[k] + Ny[k] * sy[k]
            depth = _lp_depth(alpha, beta)
        else:
            a = np.stack([ax[k], ay[k]], axis=1)
            b = np.stack([bx[k], by[k]], axis=1)
            V = np.stack([Px[k], Py[k]], axis=-1)
            depth = _seg_depth(a, b, V)
        sd[k] = -depth - r[k]
    return sd


def _lp_depth(alpha: NDArray, beta: NDArray) -> NDArray:
    """max over t in [0, 1] of min_e (alpha_e + beta_e t), floored at 0 (rows (n, E))."""
    n, E = alpha.shape
    iu, ju = _pairs(E)
    db = beta[:, iu] - beta[:, ju]
    tc = (alpha[:, ju] - alpha[:, iu]) / np.where(db != 0, db, 1.0)
    tc = np.where(db != 0, np.clip(tc, 0.0, 1.0), 0.0)
    t = np.concatenate([np.zeros((n, 1)), np.ones((n, 1)), tc], axis=1)
    h = alpha[:, None, :] + t[..., None] * beta[:, None, :]
    return np.maximum(np.max(np.min(h, axis=2), axis=1), 0.0)


def segment_polygon_distance(
    a: ArrayLike, b: ArrayLike, polygon: ArrayLike
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Signed distance from segments to one polygon: (distance or -depth, depth).

    Parameters
    ----------
    a, b : array_like, shape (n, 2)
        Segment ends (equal ends make a point).
    polygon : array_like, shape (E, 2)

    Returns
    -------
    signed : ndarray, shape (n,)
        Distance from the segment to the polygon region, or minus the depth of the
        segment's deepest point inside it.
    depth : ndarray, shape (n,)
        That depth (0 when the segment stays outside).

    Examples
    --------
    >>> sq = [[0, 0], [4, 0], [4, 4], [0, 4]]
    >>> s, _ = segment_polygon_distance([[-3, 1], [-1, 2]], [[-1, 1], [6, 2]], sq)
    >>> s.tolist()
    [1.0, -2.0]
    """
    a = np.atleast_2d(np.asarray(a, dtype=float))
    b = np.atleast_2d(np.asarray(b, dtype=float))
    V = np.broadcast_to(np.asarray(polygon, dtype=float), (len(a),) + np.shape(polygon))
    dist2, inter = _seg_poly(a, b, V)
    depth = np.zeros(len(a))
    if inter.any():
        depth[inter] = _seg_depth(a[inter], b[inter], V[inter])
    signed = np.where(depth > 0, -depth, np.sqrt(dist2))
    return signed, depth


def _capsule_sd(a: NDArray, b: NDArray, r: float, V: NDArray, convex: bool) -> NDArray:
    dist2, inter = _seg_poly(a, b, V)
    sd = np.sqrt(dist2) - r
    if inter.any():
        depth = _seg_depth_convex if convex else _seg_depth
        sd[inter] = -depth(a[inter], b[inter], V[inter]) - r
    return sd


def _polygon_sd(W: NDArray, V: NDArray, convex: bool = False) -> NDArray:
    """Signed distance between body polygons W (n, M, 2) and fixture polygons V (n, E, 2)."""
    n, M = W.shape[:2]
    E = V.shape[1]
    a = W.reshape(-1, 2)
    b = np.roll(W, -1, axis=1).reshape(-1, 2)
    Vr = np.repeat(V, M, axis=0)
    dist2, inter = _seg_poly(a, b, Vr)
    dist = np.sqrt(dist2.reshape(n, M).min(axis=1))
    inter = inter.reshape(n, M).any(axis=1) | _pip(V[:, 0, :], W)
    sd = dist
    if inter.any():
        rows = np.flatnonzero(inter)
        Wi, Vi = W[rows], V[rows]
        depth = _seg_depth_convex if convex else _seg_depth
        d1 = depth(
            Wi.reshape(-1, 2), np.roll(Wi, -1, axis=1).reshape(-1, 2), np.repeat(Vi, M, axis=0)
        ).reshape(len(rows), M)
        d2 = _seg_depth(
            Vi.reshape(-1, 2), np.roll(Vi, -1, axis=1).reshape(-1, 2), np.repeat(Wi, E, axis=0)
        ).reshape(len(rows), E)
        sd = sd.copy()
        sd[rows] = -np.maximum(d1.max(axis=1), d2.max(axis=1))
    return sd


# ---------------------------------------------------------------------------------------
# bodies at poses


@dataclass(frozen=True)
class _Posed:
    """A posed body (:func:`kinematics.bodies.pose`) with what the search needs."""

    body: Body
    a: NDArray | None  # (P, 2) capsule segment ends (the whole capsule, trims ignored)
    b: NDArray | None
    W: NDArray | None  # (P, M, 2)
    bbox: NDArray  # (P, 4)
    half_min: NDArray  # (P,) no fixture point is deeper inside the body than this
    cos: NDArray  # (P,) frame direction (for trimmed capsules)
    sin: NDArray


def _wrap(pb: PosedBody) -> _Posed:
    if pb.W is not None:
        lo, hi = pb.W.min(axis=1), pb.W.max(axis=1)
        half = 0.5 * np.min(hi - lo, axis=1)
    else:
        half = np.full(len(pb), np.inf)
    return _Posed(pb.body, pb.a, pb.b, pb.W, pb.bbox, half, pb.cos, pb.sin)


def _pose_bodies(
    ab: ArmBodies, q: NDArray, indices: Sequence[int], base_xy: NDArray | None = None
) -> list[_Posed]:
    return [_wrap(pb) for pb in pose(ab, q, indices, base_xy)]


def _trim_rows(
    o: NDArray, c: NDArray, s: NDArray, r: NDArray, length: NDArray, fs: FixtureSet, f: NDArray
) -> NDArray:
    """What link 1's moving part adds to its shortened capsule, per row: the signed
    distance of the two flanks beside the shoulder and of the shoulder disc's arc to
    fixture ``f`` (0 when a fixture sits wholly between them).

    Rows: shoulder ``o`` (n, 2), direction ``c``, ``s`` (n,), radius ``r`` (n,) (the
    shoulder disc's too) and flank length ``length`` (n,) (twice the radius, or the link
    length when shorter).
    """
    n = len(o)
    sd = np.full(n, np.inf)
    u = np.stack([c, s], axis=1)
    nrm = np.stack([-s, c], axis=1)
    for rows, V, convex in fs.vertices(f):
        oo, uu, nn, rr, ll = o[rows], u[rows], nrm[rows], r[rows], length[rows]
        best = np.full(len(rows), np.inf)
        for sign in (1.0, -1.0):
            a = oo + sign * rr[:, None] * nn
            b = a + ll[:, None] * uu
            d2, inter = _seg_poly(a, b, V)
            val = np.sqrt(d2)
            if inter.any():
                k = np.flatnonzero(inter)
                depth = _seg_depth_convex if convex else _seg_depth
                val[k] = -depth(a[k], b[k], V[k])
            np.minimum(best, val, out=best)
        # The fixture's edges in the link frame, clipped to the half plane in front of the
        # shoulder (x >= 0): their distance to the shoulder circle is the arc's distance
        # (behind the shoulder the nearest arc points are the flank ends, counted above).
        rx, ry = V[..., 0] - oo[:, 0:1], V[..., 1] - oo[:, 1:2]
        x = rx * uu[:, 0:1] + ry * uu[:, 1:2]
        y = ry * uu[:, 0:1] - rx * uu[:, 1:2]
        x2, y2 = np.roll(x, -1, axis=1), np.roll(y, -1, axis=1)
        dx, dy = x2 - x, y2 - y
        with np.errstate(divide="ignore", invalid="ignore"):
            tcut = np.where(dx != 0, -x / dx, 0.0)
        px = np.where(x >= 0, x, x + tcut * dx)
        py = np.where(x >= 0, y, y + tcut * dy)
        qx = np.where(x2 >= 0, x2, x + tcut * dx)
        qy = np.where(x2 >= 0, y2, y + tcut * dy)
        some = (x >= 0) | (x2 >= 0)
        ex, ey = qx - px, qy - py
        ee = ex * ex + ey * ey
        t = np.clip(np.divide(-(px * ex + py * ey), ee, out=np.zeros_like(ee), where=ee > 0), 0, 1)
        dmin = np.hypot(px + t * ex, py + t * ey)
        dmax = np.maximum(np.hypot(px, py), np.hypot(qx, qy))
        rc = rr[:, None]
        arc = np.where(dmin > rc, dmin - rc, np.where(dmax < rc, rc - dmax, 0.0))
        arc = np.where(some, arc, np.inf).min(axis=1)
        np.minimum(best, arc, out=best)
        # A fixture wholly beside the link, between the flanks and the arc: touching.
        vx, vy = x[:, 0], y[:, 0]
        between = (vx >= 0) & (vx <= ll) & (np.abs(vy) <= rr) & (vx * vx + vy * vy >= rr * rr)
        best = np.where(between, np.minimum(best, 0.0), best)
        sd[rows] = best
    return sd


def _exact(posed: _Posed, fs: FixtureSet, p: NDArray, f: NDArray) -> NDArray:
    """Exact signed distances of one body at poses ``p`` to fixtures ``f`` (row pairs)."""
    sd = np.empty(len(p))
    if posed.body.kind == "capsule":
        return _exact_many([posed], fs, np.zeros(len(p), dtype=np.int64), p, f)
    else:
        for rows, V, convex in fs.vertices(f):
            sd[rows] = _polygon_sd(posed.W[p[rows]], V, convex)
    return sd


def _lower_bounds(
    pb: _Posed,
    fs: FixtureSet,
    fidx: NDArray[np.int64],
    out: NDArray,
    upper: NDArray,
    slack: float,
) -> None:
    """Lower and upper bounds (P, len(fidx)) on the signed distance of one posed body to
    fixtures fidx, written to ``out`` and ``upper``.

    The upper bound is the distance to the fixture's box centre plus its circle radius:
    some outline vertex is no farther than that.
    """
    if pb.body.kind == "capsule":
        # Segment to the fixture's bounding circle, less both radii, never below the
        # deepest possible penetration; single precision halves the memory traffic and
        # the slack covers its rounding.
        r = pb.body.radius
        f32 = np.float32
        ax, ay = pb.a[:, 0:1].astype(f32), pb.a[:, 1:2].astype(f32)
        wx = fs.centre32[0][:, fidx] - ax
        wy = fs.centre32[1][:, fidx] - ay
        if pb.body.a != pb.body.b:
            dx, dy = pb.b[:, 0:1].astype(f32) - ax, pb.b[:, 1:2].astype(f32) - ay
            dd = dx * dx + dy * dy
            inv = np.divide(f32(1.0), dd, out=np.zeros_like(dd), where=dd > 0)
            t = wx * dx
            t += wy * dy
            t *= inv
            np.clip(t, f32(0.0), f32(1.0), out=t)
            wx -= t * dx
            wy -= t * dy
        wx *= wx
        wy *= wy
        wx += wy
        np.sqrt(wx, out=wx)
        rad = fs.radius32[fidx]
        # Link 1's moving part can lie up to two radii further off than its capsule.
        extra = 2.0 * r if pb.body.trim > 0 else 0.0
        np.add(wx, rad + f32(slack - r + extra), out=upper)
        wx -= rad + f32(r + slack)
        np.maximum(wx, (-(r + slack + fs.half_min[fidx])).astype(f32), out=out)
    else:
        fb, bb = fs.bbox[fidx], pb.bbox
        gx = np.maximum(fb[None, :, 0] - bb[:, 2:3], bb[:, 0:1] - fb[None, :, 2])
        gy = np.maximum(fb[None, :, 1] - bb[:, 3:4], bb[:, 1:2] - fb[None, :, 3])
        sep = (gx > 0) | (gy > 0)
        gap = np.hypot(np.maximum(gx, 0.0), np.maximum(gy, 0.0))
        deep = np.maximum(pb.half_min[:, None], fs.half_min[fidx][None, :])
        out[...] = np.where(sep, gap, -deep) - slack
        bc = 0.5 * (bb[:, 0:2] + bb[:, 2:4])
        br = 0.5 * np.hypot(bb[:, 2] - bb[:, 0], bb[:, 3] - bb[:, 1])
        cc = np.hypot(
            bc[:, 0:1] - fs.centre[fidx][None, :, 0], bc[:, 1:2] - fs.centre[fidx][None, :, 1]
        )
        upper[...] = cc + br[:, None] + fs.radius[fidx][None, :] + slack


@dataclass(frozen=True)
class PoseClearance:
    """Clearance of an arm at a batch of poses (shape ``S``).

    Attributes
    ----------
    clearance : ndarray of float
        Smallest signed distance to a blocking fixture (negative = penetration depth);
        +inf when nothing blocks, NaN for poses given as NaN (out of reach).
    collides : ndarray of bool
        ``clearance <= 0``.
    fixture : ndarray of int
        Index (into the fixtures given) of the fixture attaining the clearance, -1 when none.
    body : ndarray of int
        Index into ``ArmBodies.bodies`` of the body attaining it, -1 when none.
    """

    clearance: NDArray[np.float64]
    collides: NDArray[np.bool_]
    fixture: NDArray[np.int64]
    body: NDArray[np.int64]


def _base_extent(bodies: ArmBodies, pb: _Posed) -> float:
    """Largest distance of any point of a moving body from the base."""
    body = pb.body
    if body.frame == LINK1:
        return body.extent
    pts = np.array([body.a, body.b]) if body.kind == "capsule" else np.asarray(body.outline)
    if body.frame == TOOL:
        pts = pts + [bodies.arm.a2, 0.0]
    return bodies.arm.a1 + float(np.max(np.hypot(pts[:, 0], pts[:, 1]))) + body.radius


def _take(pb: _Posed, idx: NDArray[np.int64]) -> _Posed:
    return _slice(pb, idx)


def _slice(pb: _Posed, sl: slice | NDArray[np.int64]) -> _Posed:
    return _Posed(
        pb.body,
        None if pb.a is None else pb.a[sl],
        None if pb.b is None else pb.b[sl],
        None if pb.W is None else pb.W[sl],
        pb.bbox[sl],
        pb.half_min[sl],
        pb.cos[sl],
        pb.sin[sl],
    )


def _search(
    posed: list[_Posed],
    fs: FixtureSet,
    fidx: NDArray[np.int64],
    link_mask: NDArray[np.bool_],
    tmask: NDArray[np.bool_],
    vidx: NDArray[np.int64],
    slack: float,
    cur: NDArray,
    cur_b: NDArray,
    cur_f: NDArray,
) -> None:
    """Improve each pose's best (cur, cur_b, cur_f, updated in place) over fixtures fidx."""
    step = max(1, SEARCH_CHUNK // len(fidx))
    if len(vidx) > step:
        for k in range(0, len(vidx), step):
            sl = slice(k, k + step)
            part = [_slice(pb, sl) for pb in posed]
            _search(
                part, fs, fidx, link_mask, tmask, vidx[sl], slack, cur[sl], cur_b[sl], cur_f[sl]
            )
        return
    nb, P, F = len(posed), len(vidx), len(fidx)
    lb = np.empty((nb, P, F), dtype=np.float32)
    ub = np.empty((nb, P, F), dtype=np.float32)
    for j, pb in enumerate(posed):
        _lower_bounds(pb, fs, fidx, lb[j], ub[j], slack)
        if pb.body.frame != TOOL:
            mask = link_mask[fidx][None, :]
        else:
            mask = tmask[vidx][:, fidx] if tmask.ndim > 1 else tmask[fidx][None, :]
        if not mask.all():
            np.copyto(lb[j], np.inf, where=~mask)
            np.copyto(ub[j], np.inf, where=~mask)
    ar = np.arange(P)
    bound = np.minimum(ub.min(axis=(0, 2)), cur.astype(np.float32))
    # Pass 1: each pose's most promising pair tightens its bound.
    flat = lb.transpose(1, 0, 2).reshape(P, nb * F)
    first = np.argmin(flat, axis=1)
    fb, ff = np.divmod(first, F)
    has = flat[ar, first] <= bound
    sel = np.flatnonzero(has)
    if len(sel):
        sd = _exact_many(posed, fs, fb[sel], sel, fidx[ff[sel]])
        _improve(cur, cur_b, cur_f, sel, sd, fb[sel], fidx[ff[sel]])
        lb[fb[sel], sel, ff[sel]] = np.inf
        bound = np.minimum(bound, cur.astype(np.float32))
    # Pass 2: every pair whose lower bound does not exceed the pose's smallest upper bound.
    cb, cp, cf = np.nonzero(lb <= bound[None, :, None])
    if len(cp):
        sd2 = _exact_many(posed, fs, cb, cp, fidx[cf])
        _improve(cur, cur_b, cur_f, cp, sd2, cb, fidx[cf])


def _improve(cur, cur_b, cur_f, p, sd, b, f):  # noqa: ANN001, ANN202
    """Keep, per pose, the smallest of its current value and the new rows' values."""
    order = np.lexsort((sd, p))
    ps = p[order]
    head = np.ones(len(ps), dtype=bool)
    head[1:] = ps[1:] != ps[:-1]
    pick = order[head]
    hp = p[pick]
    better = sd[pick] < cur[hp]
    hp, pick = hp[better], pick[better]
    cur[hp] = sd[pick]
    cur_b[hp] = b[pick]
    cur_f[hp] = f[pick]


def _exact_many(
    posed: list[_Posed], fs: FixtureSet, jb: NDArray, p: NDArray, f: NDArray
) -> NDArray:
    """Exact signed distances for rows (body jb, pose p, fixture f); capsules in one go.

    Link 1's moving part (its capsule less the shoulder disc) is its capsule shortened
    to start two radii out, plus the flanks and arc beside the shoulder
    (:func:`_trim_rows`).
    """
    sd = np.empty(len(p))
    is_cap = np.array([pb.body.kind == "capsule" for pb in posed])
    rows = np.flatnonzero(is_cap[jb])
    if len(rows):
        zero = np.zeros((len(posed[0].bbox), 2))
        A = np.stack([pb.a if pb.a is not None else zero for pb in posed])
        B = np.stack([pb.b if pb.b is not None else zero for pb in posed])
        R = np.array([pb.body.radius for pb in posed])
        a, b, r = A[jb[rows], p[rows]], B[jb[rows], p[rows]], R[jb[rows]]
        trims = [j for j, pb in enumerate(posed) if pb.body.trim > 0]
        k = np.zeros(0, dtype=np.int64)
        if trims:
            k = np.flatnonzero(np.isin(jb[rows], trims))
            if len(k):
                d = b[k] - a[k]
                length = np.hypot(d[:, 0], d[:, 1])
                cut = np.minimum(2.0 * r[k], length)
                u = d / np.where(length > 0, length, 1.0)[:, None]
                o = a[k].copy()
                a = a.copy()
                a[k] = o + cut[:, None] * u
        sd[rows] = _capsules(a, b, r, fs, f[rows])
        if len(k):
            # The flanks and arc beside the shoulder lie within sqrt(5) radii of the
            # shoulder axis: only fixtures that near can make them the nearest part.
            fk = f[rows[k]]
            near = np.hypot(*(o - fs.centre[fk]).T) - fs.radius[fk] - _SQRT5 * r[k]
            k2 = np.flatnonzero(near < sd[rows[k]])
            if len(k2):
                kk = k[k2]
                extra = _trim_rows(o[k2], u[k2, 0], u[k2, 1], r[kk], cut[k2], fs, f[rows[kk]])
                sd[rows[kk]] = np.minimum(sd[rows[kk]], extra)
    for j in np.flatnonzero(~is_cap):
        rj = np.flatnonzero(jb == j)
        if len(rj):
            sd[rj] = _exact(posed[j], fs, p[rj], f[rj])
    return sd


def _capsules(a: NDArray, b: NDArray, r: NDArray, fs: FixtureSet, f: NDArray) -> NDArray:
    """Signed distances of capsule rows (ends a, b, radii r) to fixtures f."""
    sd = np.empty(len(a))
    for rows, edges, convex in fs.edges(f):
        step = max(1, CHUNK // edges[0].shape[1])
        for k in range(0, len(rows), step):
            rr = rows[k : k + step]
            sd[rr] = _capsule_rows(
                a[rr, 0],
                a[rr, 1],
                b[rr, 0],
                b[rr, 1],
                r[rr],
                tuple(None if e is None else e[k : k + step] for e in edges),
                convex,
            )
    return sd


def pose_clearance(
    bodies: ArmBodies,
    fixtures: FixtureSet,
    q_deg: ArrayLike,
    link_mask: ArrayLike,
    tool_mask: ArrayLike | None = None,
    base_xy: ArrayLike | None = None,
    *,
    with_base: bool = True,
) -> PoseClearance:
    """Clearance of the arm's moving bodies at poses ``q_deg`` against blocking fixtures.

    The moving bodies are link 1 outside the shoulder disc, link 2 and the tool; the base
    (footprint or shoulder disc) is the same at every pose and is checked once by
    :func:`base_clearance`.

    Parameters
    ----------
    bodies : ArmBodies
    fixtures : FixtureSet
    q_deg : array_like, shape S + (2,)
        Joint angles in degrees; rows with NaN give NaN clearance.
    link_mask : array_like of bool, shape (F,)
        Fixtures blocking the links (:func:`kinematics.bodies.link_blocking`).
    tool_mask : array_like of bool, shape (F,) or S + (F,), optional
        Fixtures blocking the tool (:func:`kinematics.bodies.tool_blocking`); default
        ``link_mask``.
    base_xy : array_like, shape broadcastable to S + (2,), optional
        Base position of each pose instead of the arm's own (placement maps); the base
        footprint is then posed per pose like the moving bodies.
    with_base : bool
        With ``base_xy``: whether the base body is searched too (default). Without it the
        clearance is the moving bodies' alone, as :func:`kinematics.evaluate.evaluate_arm`
        reports per configuration (the base is checked once per arm there).

    Returns
    -------
    PoseClearance
    """
    q = np.asarray(q_deg, dtype=float)
    shape = q.shape[:-1]
    q = q.reshape(-1, 2)
    n_all = len(q)
    F = fixtures.count
    link_mask = np.asarray(link_mask, dtype=bool).reshape(F)
    tmask = link_mask if tool_mask is None else np.asarray(tool_mask, dtype=bool)
    if tmask.ndim > 1 and (tmask == tmask.reshape(-1, F)[:1]).all():
        tmask = tmask.reshape(-1, F)[0]  # one mask for all poses: skip per-pose indexing
    if tmask.ndim > 1:
        tmask = np.broadcast_to(tmask, shape + (F,)).reshape(n_all, F)
    best = np.full(n_all, np.inf)
    best_f = np.full(n_all, -1, dtype=np.int64)
    best_b = np.full(n_all, -1, dtype=np.int64)
    valid = np.isfinite(q).all(axis=1)
    moving = list(bodies.moving_indices)
    bxy = None
    if base_xy is not None:
        bxy = np.broadcast_to(np.asarray(base_xy, dtype=float), shape + (2,)).reshape(n_all, 2)
        # Bases placed per pose (placement maps): the base moves with each pose here, so
        # it is searched like the moving bodies.
        if with_base:
            moving = moving + [bodies.base_index]

    vidx = np.flatnonzero(valid)
    tool_any = tmask if tmask.ndim == 1 else tmask.any(axis=0)
    cand = np.flatnonzero(link_mask | tool_any)
    if len(cand) and moving and len(vidx):
        qv = q[vidx]
        bv = None if bxy is None else bxy[vidx]
        posed = _pose_bodies(bodies, qv, moving, bv)
        # Allowance for single-precision rounding in the broad phase (cell units).
        arm = bodies.arm
        far_base = abs(arm.x) + abs(arm.y) if bv is None else float(np.max(np.abs(bv).sum(1)))
        span = max(float(np.max(np.abs(fixtures.bbox))), far_base)
        span += 2.0 * (arm.reach_max + max(b.extent for b in bodies.bodies))
        slack = 1e-5 * (span + 1.0)
        # Fixtures beyond every body's reach only matter to poses with nothing nearer:
        # search the near ones first, then only the far ones that can still win.
        reach = max(_base_extent(bodies, b) for b in posed)
        if bv is None:
            d_base = np.hypot(*(fixtures.centre[cand] - [arm.x, arm.y]).T)
        else:  # the nearest any base comes: distance to the bases' bounding box
            lo, hi = bv.min(axis=0), bv.max(axis=0)
            gap = np.maximum(np.maximum(lo - fixtures.centre[cand], fixtures.centre[cand] - hi), 0)
            d_base = np.hypot(gap[:, 0], gap[:, 1])
        d_base = d_base - fixtures.radius[cand]
        near = d_base <= reach
        cur = best[vidx].copy()
        cur_b = np.full(len(vidx), -1, dtype=np.int64)
        cur_f = np.full(len(vidx), -1, dtype=np.int64)
        if near.any():
            _search(posed, fixtures, cand[near], link_mask, tmask, vidx, slack, cur, cur_b, cur_f)
        far = cand[~near]
        if len(far):
            # Only poses whose best so far is beyond the nearest far fixture's bound.
            need = np.flatnonzero(cur > float(np.min(d_base[~near])) - reach)
            if len(need):
                part = [_take(pb, need) for pb in posed]
                c, cb, cf = cur[need], cur_b[need], cur_f[need]
                _search(part, fixtures, far, link_mask, tmask, vidx[need], slack, c, cb, cf)
                cur[need], cur_b[need], cur_f[need] = c, cb, cf
        take = (cur < best[vidx]) & (cur_b >= 0)
        tv = vidx[take]
        best[tv] = cur[take]
        best_f[tv] = cur_f[take]
        best_b[tv] = np.asarray(moving)[cur_b[take]]

    best = np.where(valid, best, np.nan)
    with np.errstate(invalid="ignore"):
        collides = best <= 0.0
    return PoseClearance(
        clearance=best.reshape(shape),
        collides=collides.reshape(shape),
        fixture=best_f.reshape(shape),
        body=best_b.reshape(shape),
    )


def base_clearance(
    bodies: ArmBodies, fixtures: FixtureSet, link_mask: ArrayLike
) -> tuple[float, int]:
    """Clearance of the arm's base (footprint or shoulder disc) to the fixtures blocking
    the links: (signed distance, fixture index), (+inf, -1) when nothing blocks.

    Examples
    --------
    A column 40 wide whose near face is 100 from the base; shoulder disc of radius 30.

    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), link_radii=(30, 20))
    >>> col = FixtureSet([[(100, -20), (140, -20), (140, 20), (100, 20)]])
    >>> base_clearance(arm_bodies(arm), col, [True])
    (70.0, 0)
    """
    fidx = np.flatnonzero(np.asarray(link_mask, dtype=bool).reshape(fixtures.count))
    if len(fidx) == 0:
        return math.inf, -1
    (posed,) = _pose_bodies(bodies, np.zeros((1, 2)), [bodies.base_index])
    sd = _exact(posed, fixtures, np.zeros(len(fidx), dtype=np.int64), fidx)
    j = int(np.argmin(sd))
    return float(sd[j]), int(fidx[j])


def arm_clearance(
    arm: Arm,
    fixtures: Sequence[Fixture],
    q_deg: ArrayLike,
    work_height: ArrayLike = np.nan,
    margin: float = 0.0,
    bodies: ArmBodies | None = None,
    base_xy: ArrayLike | None = None,
    *,
    with_base: bool = True,
) -> PoseClearance:
    """:func:`pose_clearance` for a cell arm and cell fixtures with the 2.5-D rule applied.

    Parameters
    ----------
    arm : Arm
    fixtures : sequence of Fixture
    q_deg : array_like, shape S + (2,)
    work_height : array_like, shape broadcastable to S
        Work height of the tool per pose, NaN where none is given.
    margin : float
        The cell's vertical clearance margin.
    bodies : ArmBodies, optional
        Prebuilt bodies (default: :func:`kinematics.bodies.arm_bodies`).
    base_xy : array_like, shape broadcastable to S + (2,), optional
        Base position per pose instead of the arm's own (see :func:`pose_clearance`).
    with_base : bool
        With ``base_xy``: search the base body too (see :func:`pose_clearance`).

    Examples
    --------
    A 40 x 40 column centred 300 along the x axis; links of radius 20. With link 1 along
    the x axis its centre line runs through the column's centre, 20 from every side, so
    the penetration is 20 + 20; turned to 90 degrees the gap is 280 - 20.

    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), link_radii=(20, 20))
    >>> col = Fixture("c", "Column", "column", ((280, -20), (320, -20), (320, 20), (280, 20)))
    >>> res = arm_clearance(arm, [col], [[90.0, 90.0], [0.0, 90.0]])
    >>> res.clearance.round(9).tolist(), res.collides.tolist(), res.body.tolist()
    ([260.0, -40.0], [False, True], [0, 0])
    """
    ab = bodies if bodies is not None else arm_bodies(arm)
    q = np.asarray(q_deg, dtype=float)
    fs = FixtureSet.of(fixtures)
    lm = link_blocking(arm, fixtures, margin)
    wh = np.broadcast_to(np.asarray(work_height, dtype=float), q.shape[:-1])
    tm = None
    if ab.has_tool:
        flat = wh.reshape(-1)
        same = len(flat) == 0 or np.all(np.isnan(flat)) or np.all(flat == flat[0])
        # One work height (or none) for every pose: one mask row serves them all.
        tm = tool_blocking(arm, fixtures, margin, flat[0] if same and len(flat) else wh)
    return pose_clearance(ab, fs, q, lm, tm, base_xy, with_base=with_base)


def body_fixture_clearance(shape_a: ArrayLike, shape_b: ArrayLike) -> float:
    """Signed distance between two simple polygons (body and fixture), as defined above.

    Examples
    --------
    >>> body_fixture_clearance([[0, 0], [1, 0], [1, 1], [0, 1]], [[3, 0], [4, 0], [4, 1]])
    2.0
    """
    W = np.asarray(shape_a, dtype=float)[None]
    V = np.asarray(shape_b, dtype=float)[None]
    return float(_polygon_sd(W, V)[0])

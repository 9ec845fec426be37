"""Where poses collide: the colliding bodies' outlines and a contact point per collision.

For drawings of an evaluation (:class:`kinematics.evaluate.ArmEvaluation`): which target
and configuration collide, with which body and fixture, whether the collision is what
makes the target fail or belongs to a configuration the target does not use, the
bodies' outlines as rings and where to mark the contact.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .bodies import ARC_POINTS, body_rings, pose
from .evaluate import ArmEvaluation
from .ik import Status
from .rings import Rings, rings_from_arrays

__all__ = ["SEGMENT_SAMPLES", "CollisionSet", "contact_points", "collisions"]

#: Points along a link's centre segment searched for the contact mark.
SEGMENT_SAMPLES = 9


def _polygon_query_rows(x: NDArray, v: NDArray) -> tuple[NDArray, NDArray, NDArray]:
    """For rows of points x (n, P, 2), each row against its own polygon v (n, E, 2): the
    distance to the outline (n, P), the nearest outline point (n, P, 2), and whether the
    point is inside (crossing number) (n, P)."""
    e0 = v[:, None, :, :]  # (n, 1, E, 2)
    e1 = np.roll(v, -1, axis=1)[:, None, :, :]
    d = e1 - e0
    dd = np.maximum(np.sum(d * d, axis=-1), 1e-300)
    w = x[:, :, None, :] - e0  # (n, P, E, 2)
    t = np.clip(np.sum(w * d, axis=-1) / dd, 0.0, 1.0)
    near = e0 + t[..., None] * d
    dist2 = np.sum((x[:, :, None, :] - near) ** 2, axis=-1)  # (n, P, E)
    j = np.argmin(dist2, axis=-1)
    best = np.take_along_axis(near, j[..., None, None].repeat(2, axis=-1), axis=2)[:, :, 0]
    y = x[..., 1:2]
    cond = (e0[..., 1] > y) != (e1[..., 1] > y)
    with np.errstate(divide="ignore", invalid="ignore"):
        xint = e0[..., 0] + (y - e0[..., 1]) * d[..., 0] / d[..., 1]
    inside = (np.count_nonzero(cond & (x[..., 0:1] < xint), axis=-1) % 2) == 1
    return np.sqrt(np.take_along_axis(dist2, j[..., None], axis=-1)[..., 0]), best, inside


def contact_points(
    samples: ArrayLike, fixture: ArrayLike, outlines: tuple[NDArray, ...]
) -> NDArray[np.float64]:
    """Where to mark each contact: the deepest sample point of a body inside its fixture,
    or, when no sample is inside, the point of the fixture's outline nearest the body.

    Parameters
    ----------
    samples : array_like, shape (M, P, 2)
        Points of each colliding body's core (centre segment, tool point or outline).
    fixture : array_like of int, shape (M,)
        Fixture hit by each.
    outlines : tuple of ndarray
        Fixture outlines (V, 2), indexed by ``fixture``.

    Examples
    --------
    A link's centre segment from (-5, 5) to (5, 5) ends inside a square 0..10: its
    deepest sampled point is (5, 5). One that passes 1 above the square touches it at
    its nearest point of the outline.

    >>> sq = (np.array([[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]),)
    >>> s = np.array([np.linspace([-5.0, 5.0], [5.0, 5.0], 5),
    ...               np.linspace([2.0, 11.0], [8.0, 11.0], 5)])
    >>> contact_points(s, np.array([0, 0]), sq).round(6).tolist()
    [[5.0, 5.0], [2.0, 10.0]]
    """
    samples = np.asarray(samples, dtype=float)
    fixture = np.asarray(fixture, dtype=np.int64)
    m = len(samples)
    out = np.zeros((m, 2))
    if m == 0:
        return out
    counts = np.array([len(o) for o in outlines], dtype=np.int64)
    for e in np.unique(counts[fixture]):
        # All fixtures with e vertices at once: one polygon per row.
        sel = np.flatnonzero(counts[fixture] == e)
        polys = np.stack([np.asarray(outlines[f], dtype=float) for f in fixture[sel]])
        pts = samples[sel]  # (n, P, 2)
        dist, near, inside = _polygon_query_rows(pts, polys)
        signed = np.where(inside, -dist, dist)
        k = np.argmin(signed, axis=1)
        rows = np.arange(len(sel))
        out[sel] = np.where(inside[rows, k][:, None], pts[rows, k], near[rows, k])
    return out


@dataclass(frozen=True)
class CollisionSet:
    """Colliding configurations of some targets of one arm, ready to draw.

    Attributes
    ----------
    target : ndarray of int, shape (M,)
        Index of the target in the arm evaluation.
    config : ndarray of int, shape (M,)
        Configuration (0 positive, 1 negative).
    body, fixture : ndarray of int, shape (M,)
        The body (index into the arm's bodies) and fixture (index into the evaluation's
        fixtures) of each collision.
    fails : ndarray of bool, shape (M,)
        True when the target fails (this collision is part of why), False when the
        target is feasible in its other configuration (this one is not used).
    groups : tuple of (ndarray of int, ndarray)
        Outlines of the colliding bodies, one entry per body: the collisions it holds
        (indices into the arrays above) and their closed outlines (n, K, 2), or centre
        segments (n, 2, 2) for drafts.
    contacts : ndarray, shape (M, 2) or (0, 2)
        Contact points (left out for drafts).
    """

    target: NDArray[np.int64]
    config: NDArray[np.int64]
    body: NDArray[np.int64]
    fixture: NDArray[np.int64]
    fails: NDArray[np.bool_]
    groups: tuple[tuple[NDArray[np.int64], NDArray[np.float64]], ...]
    contacts: NDArray[np.float64]

    def __len__(self) -> int:
        return len(self.target)

    def rings(self, mask: ArrayLike | None = None) -> Rings:
        """Outlines of the collisions selected by ``mask`` (M,) (default all)."""
        keep = np.ones(len(self), dtype=bool) if mask is None else np.asarray(mask, dtype=bool)
        parts = []
        for rows, arr in self.groups:
            sel = keep[rows]
            if sel.any():
                parts.extend(arr[sel])
        return rings_from_arrays(parts)

    def segments(self, mask: ArrayLike | None = None) -> NDArray[np.float64]:
        """Centre segments (n, 2, 2) of the selected collisions of capsule bodies (drafts)."""
        keep = np.ones(len(self), dtype=bool) if mask is None else np.asarray(mask, dtype=bool)
        parts = [arr[keep[rows]] for rows, arr in self.groups if arr.shape[1] == 2]
        return np.concatenate(parts) if parts else np.zeros((0, 2, 2))


def collisions(
    ev: ArmEvaluation, show: ArrayLike | None = None, draft: bool = False
) -> CollisionSet:
    """The colliding configurations of an arm's (shown) targets.

    Included: every within-limit, allowed configuration that collides, and for a target
    that fails on other grounds (a joint limit, the elbow setting, the base) the
    configuration that comes closest (:meth:`ArmEvaluation.closest`, the pose drawings
    show it in) when that pose collides.

    Parameters
    ----------
    ev : ArmEvaluation
    show : array_like of bool, shape (N,), optional
        Which targets to include (default all).
    draft : bool
        Outline bodies by their centre segments and leave out contact points (cheap
        enough for every pointer move).
    """
    n = len(ev.target_ids)
    empty = CollisionSet(
        *(np.zeros(0, dtype=np.int64) for _ in range(4)),
        np.zeros(0, dtype=bool),
        (),
        np.zeros((0, 2)),
    )
    if not n or ev.bodies is None or not ev.collides.size:
        return empty
    ok = np.asarray(ev.ik.ok, dtype=bool) & np.asarray(ev.collides, dtype=bool)
    # A target failing on reach-free grounds (a limit, the elbow setting, the base) is drawn
    # in the configuration that comes closest; where that pose collides, show it too.
    other = ~np.asarray(ev.feasible, dtype=bool) & np.asarray(ev.ik.reachable, dtype=bool)
    other &= np.asarray(ev.status) != int(Status.COLLISION)
    if other.any():
        # ArmEvaluation.closest for these targets, vectorised (every pointer move of a drag):
        # the allowed configuration with the larger limit margin, the positive one on a tie.
        m = np.where(np.asarray(ev.ik.allowed, dtype=bool), ev.ik.limit_margin_deg, -np.inf)
        m = np.nan_to_num(m, nan=-np.inf)
        k = np.where(m[:, 0] >= m[:, 1], 0, 1)
        rows = np.flatnonzero(other)
        ok[rows, k[rows]] |= np.asarray(ev.collides, dtype=bool)[rows, k[rows]]
    if show is not None:
        ok &= np.asarray(show, dtype=bool)[:, None]
    ok[:, 1] &= ~np.asarray(ev.ik.singular, dtype=bool)  # one pose at a singular target
    ii, cc = np.nonzero(ok)
    body = ev.clearance_body[ii, cc]
    fix = ev.clearance_fixture[ii, cc]
    good = (body >= 0) & (fix >= 0)
    ii, cc, body, fix = ii[good], cc[good], body[good], fix[good]
    if not len(ii):
        return empty
    q = ev.ik.q_deg[ii, cc]
    ab = ev.bodies
    groups = []
    width = max(
        SEGMENT_SAMPLES,
        max((len(b.outline) for b in ab.bodies if b.outline is not None), default=0),
    )
    samples = np.zeros((len(ii), width, 2))
    for b in np.unique(body):
        sel = np.flatnonzero(body == b)
        (posed,) = pose(ab, q[sel], [int(b)])
        groups.append((sel, body_rings(posed, 0 if draft else ARC_POINTS)))
        core = posed.core
        if core.shape[1] == 2:
            t = np.linspace(0.0, 1.0, width)[None, :, None]
            samples[sel] = core[:, :1] + t * (core[:, 1:2] - core[:, :1])
        else:
            samples[sel] = core[:, np.arange(width) % core.shape[1]]
    contacts = np.zeros((0, 2))
    if not draft:
        outlines = tuple(np.asarray(f.outline, dtype=float) for f in ev.fixtures)
        contacts = contact_points(samples, fix, outlines)
    fails = ~np.asarray(ev.feasible, dtype=bool)[ii]
    return CollisionSet(ii, cc, body, fix, fails, tuple(groups), contacts)

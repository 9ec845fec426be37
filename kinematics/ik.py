"""Closed-form inverse kinematics of a planar two-link arm, both elbow configurations.

Configuration index 0 is "positive" (elbow angle q2 > 0), index 1 is "negative"
(q2 < 0). At full stretch (q2 = 0) or full fold (q2 = +-180) the two coincide and
the target is flagged singular. Everything is vectorised: targets and base poses
are scalars or arrays that broadcast together, results are arrays of that shape
(with trailing axes for configuration and joint).
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import IntEnum

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .angles import ANGLE_EPS, limit_margin, representative
from .cell import ELBOW_SETTINGS, Arm

__all__ = [
    "ELBOWS",
    "Status",
    "REASONS",
    "IKResult",
    "check_elbow_setting",
    "solve",
    "solve_arm",
]

#: Names of the two configurations, in the order of the configuration axis.
ELBOWS = ("positive", "negative")

# A target this close (relative to the full reach) to an annulus circle is on it.
REACH_REL_EPS = 1e-9


class Status(IntEnum):
    """Why a target is or is not feasible; the first failing check wins."""

    OK = 0
    BEYOND_REACH = 1
    INSIDE_HOLE = 2
    Q1_LIMIT = 3
    Q2_LIMIT = 4
    ELBOW_EXCLUDED = 5
    COLLISION = 6


#: Short reason texts used in tables, reports and tooltips.
REASONS = {
    Status.OK: "",
    Status.BEYOND_REACH: "beyond outer reach",
    Status.INSIDE_HOLE: "inside the inner hole",
    Status.Q1_LIMIT: "q1 limit",
    Status.Q2_LIMIT: "q2 limit",
    Status.ELBOW_EXCLUDED: "excluded by the arm's elbow setting",
    Status.COLLISION: "collides",
}


def check_elbow_setting(elbow: str) -> str:
    """Return ``elbow`` if it is a valid elbow setting, else raise ValueError listing the choices.

    Examples
    --------
    >>> check_elbow_setting("any")
    'any'
    """
    if elbow not in ELBOW_SETTINGS:
        choices = ", ".join(repr(e) for e in ELBOW_SETTINGS)
        raise ValueError(f"elbow setting must be one of {choices}, got {elbow!r}")
    return elbow


@dataclass(frozen=True)
class IKResult:
    """Inverse-kinematics answer for a batch of targets (broadcast shape ``S``).

    Attributes
    ----------
    q_deg : ndarray, shape S + (2, 2)
        Joint angles ``[configuration, joint]``; q1 is the representative inside
        the q1 limits nearest their middle (else wrapped to (-180, 180]); q2 is in
        [0, 180] for "positive" and [-180, 0] for "negative". NaN when out of reach.
    reachable : ndarray of bool, shape S
        Inside the reach annulus.
    singular : ndarray of bool, shape S
        On the outer or inner annulus circle: both configurations are one pose.
    within_limits : ndarray of bool, shape S + (2, 2)
        Per configuration and joint.
    joint_margin_deg : ndarray, shape S + (2, 2)
        Degrees to the nearest limit per joint, negative outside.
    limit_margin_deg : ndarray, shape S + (2,)
        The smaller of the two joint margins per configuration.
    allowed : ndarray of bool, shape S + (2,)
        Configuration permitted by the arm's elbow setting.
    ok : ndarray of bool, shape S + (2,)
        Reachable, within both limits and allowed.
    feasible : ndarray of bool, shape S
        Some configuration is ok.
    chosen : ndarray of int, shape S
        Index of the ok configuration with the larger limit margin, -1 when none.
    status : ndarray of int, shape S
        A :class:`Status` code.
    reach_margin : ndarray, shape S
        Distance to the nearer annulus circle, negative outside the annulus.
    manipulability : ndarray, shape S + (2,)
        a1*a2*abs(sin q2) (Yoshikawa's measure for this arm), 0 when out of reach.
    r : ndarray, shape S
        Distance from base to target.
    """

    q_deg: NDArray[np.float64]
    reachable: NDArray[np.bool_]
    singular: NDArray[np.bool_]
    within_limits: NDArray[np.bool_]
    joint_margin_deg: NDArray[np.float64]
    limit_margin_deg: NDArray[np.float64]
    allowed: NDArray[np.bool_]
    ok: NDArray[np.bool_]
    feasible: NDArray[np.bool_]
    chosen: NDArray[np.int64]
    status: NDArray[np.int64]
    reach_margin: NDArray[np.float64]
    manipulability: NDArray[np.float64]
    r: NDArray[np.float64]


def solve(
    a1: ArrayLike,
    a2: ArrayLike,
    x: ArrayLike,
    y: ArrayLike,
    base_x: ArrayLike = 0.0,
    base_y: ArrayLike = 0.0,
    heading_deg: ArrayLike = 0.0,
    q1_limits: tuple[float, float] = (-180.0, 180.0),
    q2_limits: tuple[float, float] = (-180.0, 180.0),
    elbow: str = "any",
) -> IKResult:
    """Both closed-form inverse-kinematics solutions, with limits, margins and status.

    Parameters
    ----------
    a1, a2 : array_like
        Link lengths (positive).
    x, y : array_like
        Target points in world coordinates.
    base_x, base_y, heading_deg : array_like, optional
        Base pose(s); broadcast with the targets.
    q1_limits, q2_limits : tuple of float
        Inclusive joint limits in degrees (each up to 720 wide).
    elbow : {"any", "positive", "negative"}
        Which configurations the arm may use.

    Returns
    -------
    IKResult

    Examples
    --------
    Worked example (numerical-methods textbook exercise, two-link arm solved by
    Newton's method, "Fig. 4.8", as posted on a Q&A site): a1 = 1, a2 = 2,
    target (2.5, 1.4).

    >>> res = solve(1.0, 2.0, 2.5, 1.4)
    >>> res.q_deg.round(2).tolist()
    [[4.64, 36.63], [53.86, -36.63]]
    >>> bool(res.feasible), ELBOWS[int(res.chosen)]
    (True, 'positive')
    """
    check_elbow_setting(elbow)
    a1, a2, x, y, bx, by, h = np.broadcast_arrays(
        *(np.asarray(v, dtype=float) for v in (a1, a2, x, y, base_x, base_y, heading_deg))
    )
    lo1, hi1 = (float(v) for v in q1_limits)
    lo2, hi2 = (float(v) for v in q2_limits)

    dx = x - bx
    dy = y - by
    r = np.hypot(dx, dy)
    rmax = a1 + a2
    rmin = np.abs(a1 - a2)
    eps = REACH_REL_EPS * rmax
    beyond = r > rmax + eps
    hole = r < rmin - eps
    reachable = ~beyond & ~hole
    at_stretch = reachable & (rmax - r <= eps)
    at_fold = reachable & (r - rmin <= eps)
    singular = at_stretch | at_fold

    # sin q2 from the factored form (rmax^2 - r^2)(r^2 - rmin^2): accurate near both circles.
    r2 = r * r
    with np.errstate(invalid="ignore"):
        s2 = np.sqrt(np.clip((rmax * rmax - r2) * (r2 - rmin * rmin), 0.0, None)) / (2 * a1 * a2)
    c2 = (r2 - a1 * a1 - a2 * a2) / (2 * a1 * a2)
    s2 = np.where(singular, 0.0, s2)
    c2 = np.where(at_stretch, 1.0, np.where(at_fold, -1.0, np.clip(c2, -1.0, 1.0)))
    q2_abs = np.degrees(np.arctan2(s2, c2))  # in [0, 180]

    phi = np.degrees(np.arctan2(dy, dx))
    q1 = np.empty(r.shape + (2,))
    for k, sign in enumerate((1.0, -1.0)):
        q1[..., k] = phi - np.degrees(np.arctan2(sign * a2 * s2, a1 + a2 * c2)) - h
    # Equal links folded onto the base: every q1 works; take the middle of the range.
    centre = at_fold & (r <= eps)
    q1 = np.where(centre[..., None], 0.5 * (lo1 + hi1), q1)

    q1 = representative(q1, lo1, hi1)
    q2 = np.stack([q2_abs, -q2_abs], axis=-1)
    m1 = limit_margin(q1, lo1, hi1)
    m2 = limit_margin(q2, lo2, hi2)

    nan = np.nan
    q = np.stack([q1, q2], axis=-1)
    q = np.where(reachable[..., None, None], q, nan)
    joint_margin = np.stack([m1, m2], axis=-1)
    joint_margin = np.where(reachable[..., None, None], joint_margin, nan)
    within = reachable[..., None, None] & (joint_margin >= -ANGLE_EPS)
    margin = np.min(joint_margin, axis=-1)

    allow = np.array([elbow in ("any", "positive"), elbow in ("any", "negative")])
    # A singular pose is the limit of both configurations, so either setting may use it.
    allowed = np.broadcast_to(allow, r.shape + (2,)) | singular[..., None]
    within_both = within.all(axis=-1)
    ok = within_both & allowed
    feasible = ok.any(axis=-1)

    score = np.where(ok, margin, -np.inf)
    chosen = np.where(feasible, np.argmax(score, axis=-1), -1)  # ties go to "positive"

    status = np.full(r.shape, int(Status.OK), dtype=np.int64)
    status = np.where(beyond, int(Status.BEYOND_REACH), status)
    status = np.where(hole, int(Status.INSIDE_HOLE), status)
    unfit = reachable & ~feasible
    excluded = unfit & (within_both & ~allowed).any(axis=-1)
    # Otherwise name the worst joint of the allowed configuration that comes closest.
    best_cfg = np.argmax(np.where(allowed, np.nan_to_num(margin, nan=-np.inf), -np.inf), axis=-1)
    jm = np.take_along_axis(np.nan_to_num(joint_margin, nan=0.0), best_cfg[..., None, None], -2)
    worst_joint = np.argmin(jm[..., 0, :], axis=-1)
    limit_code = np.where(worst_joint == 0, int(Status.Q1_LIMIT), int(Status.Q2_LIMIT))
    status = np.where(excluded, int(Status.ELBOW_EXCLUDED), status)
    status = np.where(unfit & ~excluded, limit_code, status)

    reach_margin = np.minimum(rmax - r, r - rmin)
    manip = np.where(reachable, a1 * a2 * s2, 0.0)
    manip = np.stack([manip, manip], axis=-1)
    return IKResult(
        q_deg=q,
        reachable=reachable,
        singular=singular,
        within_limits=within,
        joint_margin_deg=joint_margin,
        limit_margin_deg=margin,
        allowed=allowed,
        ok=ok,
        feasible=feasible,
        chosen=chosen.astype(np.int64),
        status=status,
        reach_margin=reach_margin,
        manipulability=manip,
        r=r,
    )


def solve_arm(
    arm: Arm,
    x: ArrayLike,
    y: ArrayLike,
    base_x: ArrayLike | None = None,
    base_y: ArrayLike | None = None,
    heading_deg: ArrayLike | None = None,
) -> IKResult:
    """:func:`solve` for a cell arm; the base pose may be overridden (e.g. for placement maps).

    Examples
    --------
    Worked exam problem with joint limits 0 <= q1 <= 180, -120 <= q2 <= 120
    (Q&A archive): a1 = 400, a2 = 250, target (450, 180): only the negative
    configuration is within limits.

    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    >>> res = solve_arm(arm, 450, 180)
    >>> res.within_limits.all(axis=-1).tolist(), ELBOWS[int(res.chosen)]
    ([False, True], 'negative')
    """
    return solve(
        arm.a1,
        arm.a2,
        x,
        y,
        arm.x if base_x is None else base_x,
        arm.y if base_y is None else base_y,
        arm.heading_deg if heading_deg is None else heading_deg,
        arm.q1_limits,
        arm.q2_limits,
        arm.elbow,
    )

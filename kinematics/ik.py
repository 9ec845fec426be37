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

from .angles import ANGLE_EPS, representative_and_margin
from .cell import ELBOW_SETTINGS, Arm
from .checks import check_choice

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
    BASE_OVERLAP = 7


#: Short reason texts used in tables, reports and tooltips.
REASONS = {
    Status.OK: "",
    Status.BEYOND_REACH: "beyond outer reach",
    Status.INSIDE_HOLE: "inside the inner hole",
    Status.Q1_LIMIT: "q1 limit",
    Status.Q2_LIMIT: "q2 limit",
    Status.ELBOW_EXCLUDED: "excluded by the arm's elbow setting",
    Status.COLLISION: "collides",
    Status.BASE_OVERLAP: "base overlaps",
}


def check_elbow_setting(elbow: str) -> str:
    """Return ``elbow`` if it is a valid elbow setting, else raise ValueError listing the choices.

    Parameters
    ----------
    elbow : str
        The setting to check.

    Returns
    -------
    str
        ``elbow`` itself.

    Raises
    ------
    ValueError
        When ``elbow`` is not one of :data:`kinematics.cell.ELBOW_SETTINGS`.

    Examples
    --------
    >>> check_elbow_setting("any")
    'any'
    """
    return check_choice("elbow setting", elbow, ELBOW_SETTINGS)


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
    args = [np.asarray(v, dtype=float) for v in (a1, a2, x, y, base_x, base_y, heading_deg)]
    shape = np.broadcast_shapes(*(a.shape for a in args))
    n = int(np.prod(shape))
    if n <= _CHUNK:
        return _solve_block(*args, shape, q1_limits, q2_limits, elbow)
    # Large batches go through in cache-sized blocks: fresh multi-megabyte temporaries
    # cost more in page faults than the arithmetic itself.
    flat = [np.broadcast_to(a, shape).reshape(-1) if a.ndim else a for a in args]
    parts = [
        _solve_block(
            *(f[i : i + _CHUNK] if f.ndim else f for f in flat),
            (min(_CHUNK, n - i),),
            q1_limits,
            q2_limits,
            elbow,
        )
        for i in range(0, n, _CHUNK)
    ]
    return IKResult(
        **{
            name: np.concatenate([getattr(p, name) for p in parts]).reshape(
                shape + getattr(parts[0], name).shape[1:]
            )
            for name in IKResult.__dataclass_fields__
        }
    )


_CHUNK = 1 << 15


def _solve_block(
    a1: NDArray[np.float64],
    a2: NDArray[np.float64],
    x: NDArray[np.float64],
    y: NDArray[np.float64],
    bx: NDArray[np.float64],
    by: NDArray[np.float64],
    h: NDArray[np.float64],
    shape: tuple[int, ...],
    q1_limits: tuple[float, float],
    q2_limits: tuple[float, float],
    elbow: str,
) -> IKResult:
    # Arm and base parameters stay unbroadcast so scalars cost nothing per target.
    lo1, hi1 = (float(v) for v in q1_limits)
    lo2, hi2 = (float(v) for v in q2_limits)

    dx = np.broadcast_to(x - bx, shape)
    dy = np.broadcast_to(y - by, shape)
    r2 = dx * dx + dy * dy
    r = np.sqrt(r2)
    rmax = a1 + a2
    rmin = np.abs(a1 - a2)
    eps = REACH_REL_EPS * rmax
    beyond = r > rmax + eps
    hole = r < rmin - eps
    reachable = ~(beyond | hole)
    at_stretch = reachable & (rmax - r <= eps)
    at_fold = reachable & (r - rmin <= eps)
    singular = at_stretch | at_fold
    any_singular = bool(singular.any())

    # sin q2 from the factored form (rmax^2 - r^2)(r^2 - rmin^2): accurate near both circles.
    two_a1a2 = 2.0 * a1 * a2
    s2 = np.sqrt(np.maximum((rmax * rmax - r2) * (r2 - rmin * rmin), 0.0)) / two_a1a2
    c2 = np.clip((r2 - a1 * a1 - a2 * a2) / two_a1a2, -1.0, 1.0)
    if any_singular:
        s2 = np.where(singular, 0.0, s2)
        c2 = np.where(at_stretch, 1.0, np.where(at_fold, -1.0, c2))
    q2_abs = np.degrees(np.arctan2(s2, c2))  # in [0, 180]

    phi = np.arctan2(dy, dx)
    k1 = a1 + a2 * c2
    k2 = a2 * s2
    q1p = np.degrees(phi - np.arctan2(k2, k1)) - h
    q1n = np.degrees(phi + np.arctan2(k2, k1)) - h
    if any_singular:
        # Equal links folded onto the base: every q1 works; take the middle of the range.
        centre = at_fold & (r <= eps)
        mid1 = 0.5 * (lo1 + hi1)
        q1p = np.where(centre, mid1, q1p)
        q1n = np.where(centre, mid1, q1n)

    q1p, m1p = representative_and_margin(q1p, lo1, hi1)
    q1n, m1n = representative_and_margin(q1n, lo1, hi1)
    _, m2p = representative_and_margin(q2_abs, lo2, hi2)
    _, m2n = representative_and_margin(-q2_abs, lo2, hi2)

    q = np.empty(shape + (2, 2))
    q[..., 0, 0], q[..., 0, 1], q[..., 1, 0], q[..., 1, 1] = q1p, q2_abs, q1n, -q2_abs
    jm = np.empty(shape + (2, 2))
    jm[..., 0, 0], jm[..., 0, 1], jm[..., 1, 0], jm[..., 1, 1] = m1p, m2p, m1n, m2n
    unreachable = ~reachable
    if unreachable.any():
        q[unreachable] = np.nan
        jm[unreachable] = np.nan
    within = jm >= -ANGLE_EPS  # NaN compares False
    margin = np.empty(shape + (2,))
    margin[..., 0] = np.minimum(m1p, m2p)
    margin[..., 1] = np.minimum(m1n, m2n)
    if unreachable.any():
        margin[unreachable] = np.nan
    within_both = within[..., 0] & within[..., 1]

    allow_p = elbow in ("any", "positive")
    allow_n = elbow in ("any", "negative")
    allowed = np.empty(shape + (2,), dtype=bool)
    # A singular pose is the limit of both configurations, so either setting may use it.
    allowed[..., 0] = singular | allow_p
    allowed[..., 1] = singular | allow_n
    ok = within_both & allowed
    ok_p, ok_n = ok[..., 0], ok[..., 1]
    feasible = ok_p | ok_n
    # The ok configuration with the larger limit margin; ties go to "positive".
    prefer_n = ok_n & (~ok_p | (margin[..., 1] > margin[..., 0]))
    chosen = np.where(feasible, prefer_n.astype(np.int64), -1)

    status = np.zeros(shape, dtype=np.int64)
    status[beyond] = Status.BEYOND_REACH
    status[hole] = Status.INSIDE_HOLE
    unfit = reachable & ~feasible
    if unfit.any():
        excluded = unfit & ((within_both & ~allowed).any(axis=-1))
        # Otherwise name the worst joint of the allowed configuration that comes closest.
        mp = np.where(allowed[..., 0], margin[..., 0], -np.inf)
        mn = np.where(allowed[..., 1], margin[..., 1], -np.inf)
        use_n = mn > mp
        j1 = np.where(use_n, m1n, m1p)
        j2 = np.where(use_n, m2n, m2p)
        limit_code = np.where(j1 <= j2, int(Status.Q1_LIMIT), int(Status.Q2_LIMIT))
        status = np.where(excluded, int(Status.ELBOW_EXCLUDED), status)
        status = np.where(unfit & ~excluded, limit_code, status)

    reach_margin = np.minimum(rmax - r, r - rmin)
    manip1 = np.where(reachable, a1 * a2 * s2, 0.0)
    manip = np.empty(shape + (2,))
    manip[..., 0] = manip1
    manip[..., 1] = manip1
    joint_margin = jm
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

    Parameters
    ----------
    arm : Arm
        Link lengths, joint limits, elbow setting and (by default) base pose.
    x, y : array_like
        Target points in world coordinates.
    base_x, base_y, heading_deg : array_like, optional
        Base pose(s) to use instead of the arm's own; broadcast with the targets.

    Returns
    -------
    IKResult

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

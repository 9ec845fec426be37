"""Angle conventions: wrapping, representatives inside joint limits, margins.

All angles are in degrees. A joint limit pair ``(lo, hi)`` is inclusive and may
be up to 720 degrees wide (multi-turn joints), so an angle is within limits when
*some* representative ``q + k*360`` lies in ``[lo, hi]``.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["wrap180", "representative", "limit_margin"]

# Angles this close to a limit count as on it (degrees); absorbs float noise from atan2.
ANGLE_EPS = 1e-9


def wrap180(q: ArrayLike) -> NDArray[np.float64]:
    """Wrap angles into (-180, 180].

    Examples
    --------
    >>> wrap180([180.0, -180.0, 190.0, 540.0]).tolist()
    [180.0, 180.0, -170.0, 180.0]
    """
    q = np.asarray(q, dtype=float)
    w = np.mod(q + 180.0, 360.0) - 180.0  # in [-180, 180)
    return np.where(w == -180.0, 180.0, w)


def representative(q: ArrayLike, lo: ArrayLike, hi: ArrayLike) -> NDArray[np.float64]:
    """The representative ``q + k*360`` nearest the middle of ``[lo, hi]``.

    When that representative lies outside the limits (so none lies inside),
    the value wrapped into (-180, 180] is returned instead.

    Examples
    --------
    >>> representative(-170.0, 0.0, 360.0).item()
    190.0
    >>> representative(200.0, -90.0, 90.0).item()
    -160.0
    >>> representative(10.0, -360.0, 360.0).item()
    10.0
    """
    q = np.asarray(q, dtype=float)
    lo = np.asarray(lo, dtype=float)
    hi = np.asarray(hi, dtype=float)
    mid = 0.5 * (lo + hi)
    cand = q + 360.0 * np.round((mid - q) / 360.0)
    inside = (cand >= lo - ANGLE_EPS) & (cand <= hi + ANGLE_EPS)
    return np.where(inside, cand, wrap180(q))


def limit_margin(q: ArrayLike, lo: ArrayLike, hi: ArrayLike) -> NDArray[np.float64]:
    """Degrees from the best representative of ``q`` to the nearest limit.

    Positive inside ``[lo, hi]``; negative outside, by the angle the joint would
    have to turn to reach the nearer limit.

    Examples
    --------
    >>> limit_margin(30.0, -90.0, 90.0).item()
    60.0
    >>> limit_margin(100.0, -90.0, 90.0).item()
    -10.0
    >>> limit_margin(-175.0, -90.0, 170.0).item()
    -15.0
    """
    q = np.asarray(q, dtype=float)
    lo = np.asarray(lo, dtype=float)
    hi = np.asarray(hi, dtype=float)
    rep = representative(q, lo, hi)
    inside_margin = np.minimum(rep - lo, hi - rep)
    # Outside: turn back to hi or forward to lo, whichever is shorter (width < 360 here).
    past_hi = np.mod(q - hi, 360.0)
    before_lo = np.mod(lo - q, 360.0)
    outside_margin = -np.minimum(past_hi, before_lo)
    inside = inside_margin >= -ANGLE_EPS
    return np.where(inside, np.maximum(inside_margin, 0.0), outside_margin)

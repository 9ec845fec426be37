"""Angle conventions: wrapping, representatives inside joint limits, margins.

All angles are in degrees. A joint limit pair ``(lo, hi)`` is inclusive and may
be up to 720 degrees wide (multi-turn joints), so an angle is within limits when
*some* representative ``q + k*360`` lies in ``[lo, hi]``.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["wrap180", "representative", "limit_margin", "representative_and_margin"]

# Angles this close to a limit count as on it (degrees); absorbs float noise from atan2.
ANGLE_EPS = 1e-9


def wrap180(q: ArrayLike) -> NDArray[np.float64]:
    """Wrap angles into (-180, 180].

    Parameters
    ----------
    q : array_like
        Angles in degrees.

    Returns
    -------
    ndarray
        The same angles shifted by whole turns into (-180, 180].

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

    Parameters
    ----------
    q : array_like
        Joint angles in degrees.
    lo, hi : array_like
        Inclusive joint limits in degrees, ``lo < hi``, up to 720 apart; broadcast with ``q``.

    Returns
    -------
    ndarray
        The angle to report for each joint value.

    Examples
    --------
    >>> representative(-170.0, 0.0, 360.0).item()
    190.0
    >>> representative(200.0, -90.0, 90.0).item()
    -160.0
    >>> representative(10.0, -360.0, 360.0).item()
    10.0
    """
    return representative_and_margin(q, lo, hi)[0]


def representative_and_margin(
    q: ArrayLike, lo: ArrayLike, hi: ArrayLike
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """:func:`representative` and :func:`limit_margin` in one pass.

    Parameters
    ----------
    q, lo, hi : array_like
        As for :func:`representative`.

    Returns
    -------
    rep, margin : ndarray
        The reported angle and the degrees to the nearest limit (negative outside).

    Examples
    --------
    >>> rep, margin = representative_and_margin([10.0, 200.0], 0.0, 540.0)
    >>> rep.tolist(), margin.tolist()
    ([370.0, 200.0], [170.0, 200.0])
    """
    q = np.asarray(q, dtype=float)
    lo = np.asarray(lo, dtype=float)
    hi = np.asarray(hi, dtype=float)
    mid = 0.5 * (lo + hi)
    width = hi - lo
    cand = q + 360.0 * np.round((mid - q) / 360.0)
    # e > 0 is how far cand lies outside; the other way round is 360 - width - e.
    # For width >= 360 the nearest representative is always inside (e <= 0).
    e = np.abs(cand - mid) - 0.5 * width
    margin = -np.minimum(e, (360.0 - width) - e)
    inside = margin >= -ANGLE_EPS
    if inside.all():  # the common case: skip the wrapping passes
        return cand, np.maximum(margin, 0.0)
    wrapped = wrap180(cand)
    return np.where(inside, cand, wrapped), np.where(inside, np.maximum(margin, 0.0), margin)


def limit_margin(q: ArrayLike, lo: ArrayLike, hi: ArrayLike) -> NDArray[np.float64]:
    """Degrees from the best representative of ``q`` to the nearest limit.

    Positive inside ``[lo, hi]``; negative outside, by the angle the joint would
    have to turn to reach the nearer limit.

    Parameters
    ----------
    q, lo, hi : array_like
        As for :func:`representative`.

    Returns
    -------
    ndarray
        Margin in degrees.

    Examples
    --------
    >>> limit_margin(30.0, -90.0, 90.0).item()
    60.0
    >>> limit_margin(100.0, -90.0, 90.0).item()
    -10.0
    >>> limit_margin(-175.0, -90.0, 170.0).item()
    -15.0
    """
    return representative_and_margin(q, lo, hi)[1]

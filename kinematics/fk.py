"""Forward kinematics of a planar two-link arm, vectorised over poses.

Tool point = base + a1*u(h + q1) + a2*u(h + q1 + q2), with u(t) = (cos t, sin t),
h the base heading, q1 measured from the heading and q2 from link 1 (degrees).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["forward", "joint_points"]


def joint_points(
    a1: ArrayLike,
    a2: ArrayLike,
    q1_deg: ArrayLike,
    q2_deg: ArrayLike,
    base_x: ArrayLike = 0.0,
    base_y: ArrayLike = 0.0,
    heading_deg: ArrayLike = 0.0,
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Base, elbow and tool points of arm poses.

    Parameters
    ----------
    a1, a2 : array_like
        Link lengths, shoulder to elbow and elbow to tool point.
    q1_deg, q2_deg : array_like
        Shoulder and elbow angles in degrees.
    base_x, base_y, heading_deg : array_like, optional
        Base pose in world coordinates; all inputs broadcast together.

    Returns
    -------
    base, elbow, tool : ndarray
        Arrays of shape ``(..., 2)`` with the broadcast shape of the inputs.

    Examples
    --------
    >>> b, e, t = joint_points(1.0, 1.0, 90.0, -90.0)
    >>> e.round(12).tolist(), t.round(12).tolist()
    ([0.0, 1.0], [1.0, 1.0])
    """
    a1, a2, q1, q2, bx, by, h = np.broadcast_arrays(
        *(np.asarray(v, dtype=float) for v in (a1, a2, q1_deg, q2_deg, base_x, base_y, heading_deg))
    )
    t1 = np.radians(h + q1)
    t12 = np.radians(h + q1 + q2)
    base = np.stack([bx, by], axis=-1)
    elbow = base + np.stack([a1 * np.cos(t1), a1 * np.sin(t1)], axis=-1)
    tool = elbow + np.stack([a2 * np.cos(t12), a2 * np.sin(t12)], axis=-1)
    return base, elbow, tool


def forward(
    a1: ArrayLike,
    a2: ArrayLike,
    q1_deg: ArrayLike,
    q2_deg: ArrayLike,
    base_x: ArrayLike = 0.0,
    base_y: ArrayLike = 0.0,
    heading_deg: ArrayLike = 0.0,
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Tool point ``(x, y)`` of arm poses.

    Examples
    --------
    >>> x, y = forward(400.0, 250.0, 0.0, 0.0, base_x=100.0)
    >>> float(x), float(y)
    (750.0, 0.0)
    """
    _, _, tool = joint_points(a1, a2, q1_deg, q2_deg, base_x, base_y, heading_deg)
    return tool[..., 0], tool[..., 1]

"""Qt paths and transforms from the engine's arrays (the canvas computes no geometry).

Shapes arrive as :class:`kinematics.rings.Rings` or plain point arrays; these helpers
only turn them into QPainterPaths, and base poses into QTransforms.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtGui import QPainterPath, QTransform

from kinematics.cell import Arm
from kinematics.rings import Rings

__all__ = ["rings_path", "polygon_path", "polylines_path", "pose_transform", "translate_rotate"]


def rings_path(rings: Rings, fill_rule: Qt.FillRule = Qt.FillRule.OddEvenFill) -> QPainterPath:
    """One path of all the rings (holes empty under the odd-even rule)."""
    if rings.empty:
        path = QPainterPath()
        path.setFillRule(fill_rule)
        return path
    path = pg.arrayToQPath(rings.xy[:, 0], rings.xy[:, 1], connect=rings.connect())
    path.setFillRule(fill_rule)
    return path


def polygon_path(points) -> QPainterPath:
    """A closed path through ``points`` (sequence of (x, y))."""
    xy = np.asarray(points, dtype=float).reshape(-1, 2)
    if len(xy) < 2:
        return QPainterPath()
    xy = np.vstack([xy, xy[:1]])
    return pg.arrayToQPath(xy[:, 0], xy[:, 1], connect="all")


def polylines_path(points: np.ndarray) -> QPainterPath:
    """Path of several polylines given as an array (K, M, 2): K lines of M points."""
    pts = np.asarray(points, dtype=float)
    if pts.size == 0:
        return QPainterPath()
    k, m, _ = pts.shape
    connect = np.ones((k, m), dtype=np.int32)
    connect[:, -1] = 0
    flat = pts.reshape(-1, 2)
    return pg.arrayToQPath(flat[:, 0], flat[:, 1], connect=connect.ravel())


def translate_rotate(x0: float, y0: float, h0: float, x: float, y: float, h: float) -> QTransform:
    """Transform taking geometry built for base pose (x0, y0, h0) to pose (x, y, h)."""
    t = QTransform()
    t.translate(x, y)
    t.rotate(h - h0)
    t.translate(-x0, -y0)
    return t


def pose_transform(arm: Arm) -> QTransform:
    """Transform taking geometry in an arm's base frame (base at the origin, heading 0) to
    the arm's base pose (the engine's :func:`kinematics.spaces.place`)."""
    return translate_rotate(0.0, 0.0, 0.0, arm.x, arm.y, arm.heading_deg)

"""Shapes as plain arrays of rings: how every polygon the engine makes reaches a drawing.

Drawings (the window, sheets, exports) never handle shapely objects: they get a
:class:`Rings` value, all outlines of a geometry as one ``(N, 2)`` array of points with the
index where each ring ends, holes included, to be filled with the even-odd rule.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely
from numpy.typing import NDArray

__all__ = ["Rings", "rings_of", "rings_from_arrays", "anchor_near_top"]


@dataclass(frozen=True)
class Rings:
    """Closed outlines of a shape.

    Attributes
    ----------
    xy : ndarray, shape (N, 2)
        The points of every ring in turn, each ring closed (last point = first).
    ends : ndarray of int, shape (K,)
        Index one past the last point of each ring in ``xy``.
    """

    xy: NDArray[np.float64]
    ends: NDArray[np.int64]

    @property
    def empty(self) -> bool:
        """True when there is no ring."""
        return len(self.ends) == 0

    def ring(self, k: int) -> NDArray[np.float64]:
        """The points of ring ``k``."""
        start = 0 if k == 0 else int(self.ends[k - 1])
        return self.xy[start : int(self.ends[k])]

    @property
    def area(self) -> float:
        """Area of the shape: the shoelace sum over its rings, for rings oriented as
        :func:`rings_of` gives them (shells counter-clockwise, holes clockwise)."""
        if self.empty:
            return 0.0
        total = 0.0
        for k in range(len(self.ends)):
            r = self.ring(k)
            total += 0.5 * float(np.dot(r[:-1, 0], r[1:, 1]) - np.dot(r[1:, 0], r[:-1, 1]))
        return abs(total)

    def connect(self) -> NDArray[np.int32]:
        """Per point: 1 when it connects to the next one, 0 at the end of a ring."""
        out = np.ones(len(self.xy), dtype=np.int32)
        if len(self.ends):
            out[self.ends - 1] = 0
        return out


def _oriented(poly: shapely.Polygon) -> shapely.Polygon:
    return shapely.geometry.polygon.orient(poly, sign=1.0)


def rings_of(geom: Any) -> Rings:
    """The outlines of a shapely Polygon or MultiPolygon (other parts are left out).

    Shells come counter-clockwise and holes clockwise, so :attr:`Rings.area` is the
    geometry's area.

    Examples
    --------
    >>> square = shapely.box(0, 0, 10, 10).difference(shapely.box(4, 4, 6, 6))
    >>> r = rings_of(square)
    >>> r.ends.tolist(), r.area, square.area
    ([5, 10], 96.0, 96.0)
    """
    parts: list[NDArray[np.float64]] = []
    if geom is not None and not geom.is_empty:
        for poly in shapely.get_parts(geom):
            if poly.geom_type != "Polygon" or poly.is_empty:
                continue
            poly = _oriented(poly)
            for ring in (poly.exterior, *poly.interiors):
                xy = np.asarray(ring.coords, dtype=float)
                if len(xy) >= 4:
                    parts.append(xy)
    return rings_from_arrays(parts)


def rings_from_arrays(rings: list[NDArray[np.float64]] | NDArray[np.float64]) -> Rings:
    """:class:`Rings` from closed rings given as arrays (a list of (K_i, 2), or (M, K, 2)).

    Examples
    --------
    >>> tri = np.array([[[0.0, 0.0], [4.0, 0.0], [0.0, 3.0], [0.0, 0.0]]])
    >>> rings_from_arrays(tri).area
    6.0
    """
    parts = [np.asarray(r, dtype=float).reshape(-1, 2) for r in rings]
    parts = [p for p in parts if len(p)]
    if not parts:
        return Rings(np.zeros((0, 2)), np.zeros(0, dtype=np.int64))
    ends = np.cumsum([len(p) for p in parts]).astype(np.int64)
    return Rings(np.vstack(parts), ends)


def anchor_near_top(geom: Any) -> tuple[float, float]:
    """A point inside a shape near the middle of its top edge (where a note can point).

    Examples
    --------
    >>> anchor_near_top(shapely.box(0, 0, 10, 10))
    (5.0, 9.2)
    """
    x0, y0, x1, y1 = geom.bounds
    p = shapely.Point((x0 + x1) / 2, y1 - 0.08 * (y1 - y0))
    if not geom.contains(p):
        p = geom.representative_point()
    return (float(p.x), float(p.y))

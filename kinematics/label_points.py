"""Where a name goes inside an outline: its centroid when that lies inside, else the point
deepest inside it.

A label at the centre of an outline's bounding box can fall outside an L-shaped or curved
fixture; the pole of inaccessibility (the interior point farthest from the edges, Garcia-
Castellanos and Lombardo 2007, as computed by shapely's ``polylabel``) never does.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

import numpy as np
import shapely
from numpy.typing import NDArray
from shapely.ops import polylabel

__all__ = ["RELATIVE_TOLERANCE", "label_points"]

#: Tolerance of the search, as a fraction of the outline's larger bounding-box side.
RELATIVE_TOLERANCE = 0.01


def label_points(outlines: Iterable[Sequence[tuple[float, float]]]) -> NDArray[np.float64]:
    """A point inside each outline, as an array (N, 2): the centroid when it is inside, else
    the pole of inaccessibility.

    Examples
    --------
    The centre of a square, and a point in the thick arm of an L (its bounding-box
    centre (5, 5) lies outside it):

    >>> square = [(0, 0), (4, 0), (4, 4), (0, 4)]
    >>> ell = [(0, 0), (10, 0), (10, 3), (3, 3), (3, 10), (0, 10)]
    >>> p = label_points([square, ell])
    >>> p[0].round(6).tolist()
    [2.0, 2.0]
    >>> import shapely
    >>> bool(shapely.Polygon(ell).contains(shapely.Point(p[1])))
    True
    """
    out = []
    for outline in outlines:
        xy = np.asarray(outline, dtype=float).reshape(-1, 2)
        poly = shapely.Polygon(xy)
        if not poly.is_valid or poly.area <= 0:
            out.append(xy.mean(axis=0) if len(xy) else np.zeros(2))
            continue
        c = poly.centroid
        if poly.contains(c):
            # Convex and most everyday outlines: the centroid reads best (a long thin guard
            # gets its name in the middle, not wherever the search stopped along it).
            out.append(np.array([c.x, c.y]))
            continue
        span = float(np.ptp(xy, axis=0).max())
        p = polylabel(poly, tolerance=max(span * RELATIVE_TOLERANCE, 1e-9))
        out.append(np.array([p.x, p.y]))
    return np.array(out, dtype=float).reshape(-1, 2)

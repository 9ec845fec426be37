"""What lies under the pointer: pure hit testing in world coordinates (no Qt).

The radius is the screen-pixel pick radius converted to cell units by the
caller. Priority follows what a designer most likely means to grab: a rotate
handle, then a target, an arm base, a fixture vertex, and last a fixture body.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import shapely

from kinematics.cell import Cell

__all__ = ["Hit", "pick", "pick_target"]


@dataclass(frozen=True)
class Hit:
    """An item under the pointer.

    ``kind`` is "handle" (an arm's rotate handle), "base", "target", "vertex"
    or "fixture"; ``index`` is the vertex number for "vertex", else -1.
    """

    kind: str
    id: str
    index: int = -1


def pick_target(cell: Cell, x: float, y: float, radius: float) -> str:
    """Id of the target nearest ``(x, y)`` within ``radius``, '' when none."""
    if not cell.targets:
        return ""
    xy = np.array([(t.x, t.y) for t in cell.targets], dtype=float)
    d = np.hypot(xy[:, 0] - x, xy[:, 1] - y)
    i = int(np.argmin(d))
    return cell.targets[i].id if d[i] <= radius else ""


def pick(
    cell: Cell,
    x: float,
    y: float,
    radius: float,
    *,
    handles: Mapping[str, tuple[float, float]] | None = None,
    base_radii: Mapping[str, float] | None = None,
) -> Hit | None:
    """The item under ``(x, y)``, or None.

    Parameters
    ----------
    cell : Cell
    x, y : float
        Pointer position in cell units.
    radius : float
        Pick radius in cell units.
    handles : mapping of arm id to (x, y), optional
        Rotate-handle positions as drawn.
    base_radii : mapping of arm id to float, optional
        Drawn footprint radius of each base (a click inside the footprint grabs it).
    """
    for aid, (hx, hy) in (handles or {}).items():
        if math.hypot(hx - x, hy - y) <= radius:
            return Hit("handle", aid)
    tid = pick_target(cell, x, y, radius)
    if tid:
        return Hit("target", tid)
    for a in cell.arms:
        r = max(radius, (base_radii or {}).get(a.id, 0.0))
        if math.hypot(a.x - x, a.y - y) <= r:
            return Hit("base", a.id)
    best: tuple[float, str, int] | None = None
    for f in cell.fixtures:
        for i, (vx, vy) in enumerate(f.outline):
            d = math.hypot(vx - x, vy - y)
            if d <= radius and (best is None or d < best[0]):
                best = (d, f.id, i)
    if best is not None:
        return Hit("vertex", best[1], best[2])
    # Topmost (last drawn) fixture first; an edge within the radius counts as the body.
    pt = shapely.Point(x, y)
    for f in reversed(cell.fixtures):
        if len(f.outline) < 3:
            continue
        poly = shapely.Polygon(f.outline)
        if poly.contains(pt) or poly.exterior.distance(pt) <= radius:
            return Hit("fixture", f.id)
    return None

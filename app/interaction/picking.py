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
    for f in reversed(cell.fixtures):
        if len(f.outline) < 3:
            continue
        xy = np.asarray(f.outline, dtype=float)
        if _inside(xy, x, y) or _edge_distance(xy, x, y) <= radius:
            return Hit("fixture", f.id)
    return None


def _inside(xy: np.ndarray, x: float, y: float) -> bool:
    """Point strictly inside a polygon (even-odd rule)."""
    p, q = xy, np.roll(xy, -1, axis=0)
    cross = (p[:, 1] > y) != (q[:, 1] > y)
    with np.errstate(divide="ignore", invalid="ignore"):
        xint = p[:, 0] + (y - p[:, 1]) * (q[:, 0] - p[:, 0]) / (q[:, 1] - p[:, 1])
    return bool(np.count_nonzero(cross & (x < xint)) % 2)


def _edge_distance(xy: np.ndarray, x: float, y: float) -> float:
    """Distance from a point to a polygon's outline."""
    p, q = xy, np.roll(xy, -1, axis=0)
    d = q - p
    dd = np.maximum(np.sum(d * d, axis=1), 1e-300)
    t = np.clip(((x - p[:, 0]) * d[:, 0] + (y - p[:, 1]) * d[:, 1]) / dd, 0.0, 1.0)
    return float(np.min(np.hypot(p[:, 0] + t * d[:, 0] - x, p[:, 1] + t * d[:, 1] - y)))

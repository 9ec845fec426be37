"""Where a dragged point snaps, whether a shape may take a new form, and measuring.

Pure Python and numpy, no Qt (polygon validity is the engine's one check,
:func:`kinematics.checks.polygon_problem`), so the rules of direct manipulation are
tested without a display. Coordinates are in the cell's units; the screen-pixel snap
radius is converted by the caller.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np

from kinematics.cell import Fixture
from kinematics.checks import polygon_problem

__all__ = [
    "SnapResult",
    "Anchors",
    "fixture_anchors",
    "snap_point",
    "snap_angle",
    "measure",
    "outline_problem",
    "may_move_vertex",
    "rectangle_outline",
    "translated_outline",
]

Point = tuple[float, float]


@dataclass(frozen=True)
class SnapResult:
    """A snapped point and what it snapped to.

    ``kind`` is "vertex", "midpoint", "grid" or "none"; ``source`` names the
    fixture whose vertex or edge midpoint was used ('' otherwise).
    """

    x: float
    y: float
    kind: str = "none"
    source: str = ""


@dataclass(frozen=True)
class Anchors:
    """Points a drag may snap to: fixture vertices and edge midpoints."""

    xy: np.ndarray  # shape (N, 2)
    kinds: tuple[str, ...]  # "vertex" or "midpoint" per point
    sources: tuple[str, ...]  # fixture id per point

    @staticmethod
    def empty() -> Anchors:
        return Anchors(np.zeros((0, 2)), (), ())


_ANCHORS: dict[tuple[int, str | None], tuple[object, Anchors]] = {}


def fixture_anchors(fixtures: Iterable[Fixture], exclude: str | None = None) -> Anchors:
    """Vertices and edge midpoints of every fixture except ``exclude`` (the one being dragged).

    Kept for the same fixtures tuple, so a drag does not gather them at every step.
    """
    if isinstance(fixtures, tuple):
        hit = _ANCHORS.get((id(fixtures), exclude))
        if hit is not None and hit[0] is fixtures:
            return hit[1]
        found = _fixture_anchors(fixtures, exclude)
        if len(_ANCHORS) > 16:
            _ANCHORS.clear()
        _ANCHORS[(id(fixtures), exclude)] = (fixtures, found)
        return found
    return _fixture_anchors(fixtures, exclude)


def _fixture_anchors(fixtures: Iterable[Fixture], exclude: str | None) -> Anchors:
    pts: list[Point] = []
    kinds: list[str] = []
    sources: list[str] = []
    for f in fixtures:
        if f.id == exclude:
            continue
        n = len(f.outline)
        for i, (x, y) in enumerate(f.outline):
            pts.append((float(x), float(y)))
            kinds.append("vertex")
            sources.append(f.id)
            x2, y2 = f.outline[(i + 1) % n]
            if n >= 2 and (i + 1 < n or n >= 3):
                pts.append(((x + x2) / 2.0, (y + y2) / 2.0))
                kinds.append("midpoint")
                sources.append(f.id)
    xy = np.array(pts, dtype=float).reshape(-1, 2)
    return Anchors(xy, tuple(kinds), tuple(sources))


def snap_point(
    x: float,
    y: float,
    *,
    enabled: bool,
    pitch: float,
    anchors: Anchors | None = None,
    radius: float = 0.0,
) -> SnapResult:
    """Snap ``(x, y)``: to the nearest anchor within ``radius``, else to the grid of ``pitch``.

    Anchors win over the grid because lining up with existing fixtures is what
    a designer means when the pointer is that close to one. Vertices win over
    midpoints at equal distance. Disabled snapping returns the point unchanged.

    Examples
    --------
    >>> snap_point(12.4, -7.6, enabled=True, pitch=5.0)
    SnapResult(x=10.0, y=-10.0, kind='grid', source='')
    >>> snap_point(12.4, -7.6, enabled=False, pitch=5.0).kind
    'none'
    """
    if not enabled:
        return SnapResult(float(x), float(y))
    if anchors is not None and len(anchors.kinds) and radius > 0:
        d = np.hypot(anchors.xy[:, 0] - x, anchors.xy[:, 1] - y)
        # Ties go to vertices: add a tiny bias to midpoints.
        bias = np.array([0.0 if k == "vertex" else 1e-9 * radius for k in anchors.kinds])
        i = int(np.argmin(d + bias))
        if d[i] <= radius:
            ax, ay = anchors.xy[i]
            return SnapResult(float(ax), float(ay), anchors.kinds[i], anchors.sources[i])
    if pitch > 0 and math.isfinite(pitch):
        gx = round(x / pitch) * pitch
        gy = round(y / pitch) * pitch
        # Avoid "-0.0" and float dust such as 0.30000000000000004 in files and fields.
        gx, gy = _tidy(gx, pitch), _tidy(gy, pitch)
        return SnapResult(gx, gy, "grid")
    return SnapResult(float(x), float(y))


def _tidy(v: float, pitch: float) -> float:
    decimals = max(0, 12 - int(math.floor(math.log10(abs(pitch)))) - 1) if pitch else 12
    v = round(v, min(decimals, 12))
    return 0.0 if v == 0 else v


def snap_angle(deg: float, *, enabled: bool, step: float = 5.0) -> float:
    """Round a heading to a multiple of ``step`` degrees, wrapped into (-180, 180].

    Examples
    --------
    >>> snap_angle(93.7, enabled=True)
    95.0
    >>> snap_angle(-181.0, enabled=False)
    179.0
    """
    if enabled and step > 0:
        deg = round(deg / step) * step
    w = math.fmod(deg + 180.0, 360.0)
    if w <= 0:
        w += 360.0
    w -= 180.0
    return 0.0 if w == 0 else float(w)


def measure(p0: Point, p1: Point) -> tuple[float, float]:
    """Distance from ``p0`` to ``p1`` and its direction in degrees (counter-clockwise from +x).

    Examples
    --------
    >>> measure((0.0, 0.0), (3.0, 4.0))
    (5.0, 53.13010235415598)
    """
    dx = float(p1[0]) - float(p0[0])
    dy = float(p1[1]) - float(p0[1])
    return math.hypot(dx, dy), math.degrees(math.atan2(dy, dx))


def outline_problem(points: Sequence[Point]) -> str:
    """Why ``points`` is not a usable fixture outline ("outline must ..."), '' when it is.

    The rule is the cell file's (:func:`kinematics.checks.polygon_problem`).

    Examples
    --------
    >>> outline_problem([(0, 0), (1, 0), (1, 1)])
    ''
    >>> outline_problem([(0, 0), (1, 1), (1, 0), (0, 1)]).split(" (")[0]
    'outline must be a simple polygon that does not cross or touch itself'
    """
    problem = polygon_problem(points)
    return "" if problem is None else f"outline {problem}"


def may_move_vertex(outline: Sequence[Point], index: int, xy: Point) -> bool:
    """True when moving vertex ``index`` of ``outline`` to ``xy`` leaves a usable outline."""
    pts = list(outline)
    pts[index] = (float(xy[0]), float(xy[1]))
    return outline_problem(pts) == ""


def rectangle_outline(p0: Point, p1: Point) -> tuple[Point, ...]:
    """Counter-clockwise rectangle with opposite corners ``p0`` and ``p1`` (axis-aligned)."""
    x0, x1 = sorted((float(p0[0]), float(p1[0])))
    y0, y1 = sorted((float(p0[1]), float(p1[1])))
    return ((x0, y0), (x1, y0), (x1, y1), (x0, y1))


def translated_outline(outline: Sequence[Point], dx: float, dy: float) -> tuple[Point, ...]:
    """The outline moved by ``(dx, dy)``."""
    return tuple((float(x) + dx, float(y) + dy) for x, y in outline)

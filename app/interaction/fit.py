"""Zoom-to-fit arithmetic (no Qt): which world box shows the cell with its labels.

Labels keep their pixel size while the scale follows the box, hence a few rounds:
labels sit right of their markers where that costs little scale; otherwise the box only
grows where a label has room on neither side (the label layout then picks the side
wholly in view).
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np

from kinematics.cell import Cell

__all__ = [
    "FIT_PADDING",
    "cell_box",
    "fit_scale",
    "grow_for_labels",
    "fit_box",
]

FIT_PADDING = 0.05  # zoom to fit leaves this fraction of the view free on each side
FIT_LABEL_COST = 1.15  # zoom out up to this factor so labels can all sit right of their markers
FIT_SPARE_PX = 6.0  # room left between a fitted label and the view's edge, pixels
FIT_LABEL_MAX_COST = 1.6  # zoom out at most this factor so labels fit on either side
FIT_LABEL_SHARE = 0.45  # labels wider than this share of the view are not fitted

Box = tuple[float, float, float, float]  # x0, x1, y0, y1


def cell_box(cell: Cell, extra: Iterable[tuple[float, float]] = ()) -> Box | None:
    """World box of fixtures, targets and every arm's outer reach (None for an empty cell).

    Examples
    --------
    >>> from kinematics.cell import Arm
    >>> cell_box(Cell("c", arms=(Arm("a", "A", 0, 0, 0, 400, 250, (-170, 170), (-150, 150)),)))
    (-650.0, 650.0, -650.0, 650.0)
    """
    xs: list[float] = []
    ys: list[float] = []
    for f in cell.fixtures:
        for x, y in f.outline:
            xs.append(float(x))
            ys.append(float(y))
    for t in cell.targets:
        xs.append(t.x)
        ys.append(t.y)
    for a in cell.arms:
        r = a.reach_max
        xs += [a.x - r, a.x + r]
        ys += [a.y - r, a.y + r]
    for x, y in extra:
        xs.append(x)
        ys.append(y)
    if not xs:
        return None
    return (float(min(xs)), float(max(xs)), float(min(ys)), float(max(ys)))


def fit_scale(box: Box, vw: float, vh: float) -> float:
    """World units per pixel at which a view of vw x vh pixels shows ``box`` (1:1 aspect,
    with the padding)."""
    x0, x1, y0, y1 = box
    grow = 1.0 + 2.0 * FIT_PADDING
    return max((x1 - x0) * grow / vw, (y1 - y0) * grow / vh, 1e-12)


def grow_for_labels(
    box: Box,
    xy: np.ndarray,
    side: np.ndarray,
    above: np.ndarray,
    below: np.ndarray,
    vw: float,
    vh: float,
    either: bool,
) -> Box:
    """The box grown until every label (anchors ``xy``, reach in pixels sideways, above and
    below) fits in view: to the right of its marker, or with ``either`` on whichever side
    needs less."""
    x0, x1, y0, y1 = box
    x, y = xy[:, 0], xy[:, 1]
    for _ in range(12):
        s = fit_scale((x0, x1, y0, y1), vw, vh)
        # The edges actually shown: the 1:1 aspect widens one direction about the centre.
        cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
        vx0, vx1 = cx - vw * s / 2, cx + vw * s / 2
        vy0, vy1 = cy - vh * s / 2, cy + vh * s / 2
        over_r = x + side * s - vx1
        over_l = vx0 - (x - side * s)
        if either:
            stuck = (over_r > 0) & (over_l > 0)
            to_right = stuck & (over_r <= over_l)
            to_left = stuck & ~to_right
        else:
            to_right, to_left = over_r > 0, np.zeros(len(x), dtype=bool)
        dx1 = float(over_r[to_right].max()) if to_right.any() else 0.0
        dx0 = float(over_l[to_left].max()) if to_left.any() else 0.0
        dy1 = max(float((y + above * s - vy1).max()), 0.0)
        dy0 = max(float((vy0 - (y - below * s)).max()), 0.0)
        if max(dx0, dx1, dy0, dy1) <= 1e-6 * s:
            break
        x0, x1, y0, y1 = x0 - dx0, x1 + dx1, y0 - dy0, y1 + dy1
    return x0, x1, y0, y1


def fit_box(
    box: Box,
    xy: np.ndarray,
    side: np.ndarray,
    above: np.ndarray,
    below: np.ndarray,
    vw: float,
    vh: float,
) -> Box:
    """The box zoom to fit shows: ``box`` grown so the labels fit, when that costs little.

    Labels too big for the view at any scale are left out (zooming out cannot help); a
    cell shown small enough for every label is no use, so the box grows at most
    :data:`FIT_LABEL_MAX_COST` times.

    Examples
    --------
    A label reaching 30 px right of a marker at the box's right edge, in a 500 px view:
    the box grows to the right so the label fits, at a small cost in scale.

    >>> xy, side = np.array([[100.0, 0.0]]), np.array([30.0])
    >>> x0, x1, y0, y1 = fit_box((0, 100, -50, 50), xy, side, side * 0, side * 0, 500, 500)
    >>> round(x1, 1) > 100, x0 == 0
    (True, True)
    """
    side, above, below = side + FIT_SPARE_PX, above + FIT_SPARE_PX, below + FIT_SPARE_PX
    fits = (side < FIT_LABEL_SHARE * vw) & (above + below < FIT_LABEL_SHARE * vh)
    xy, side, above, below = xy[fits], side[fits], above[fits], below[fits]
    if not len(xy) or vw < 50 or vh < 50:
        return box
    base = fit_scale(box, vw, vh)
    right = grow_for_labels(box, xy, side, above, below, vw, vh, either=False)
    if fit_scale(right, vw, vh) <= FIT_LABEL_COST * base:
        return right
    either = grow_for_labels(box, xy, side, above, below, vw, vh, either=True)
    if fit_scale(either, vw, vh) <= FIT_LABEL_MAX_COST * base:
        return either
    return box

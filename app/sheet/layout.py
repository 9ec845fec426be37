"""Page arithmetic of the review sheet (no Qt): paper, scale, where everything goes.

Everything is in millimetres on the paper, origin at the top left corner, y down (the
way the page is painted); the drawing maps the world (cell units, +y up) onto it.

* Paper: ISO 216 A sizes (:data:`PAPER_SIZES`), landscape or portrait; the frame keeps
  20 mm free at the left edge (for filing) and 10 mm elsewhere (ISO 5457 margins).
* Scale: the ISO 5455 series (:data:`SCALES`), stated or chosen by :func:`fit_scale`
  (the largest scale at which the cell fits the drawing area).
* Regions of a sheet (:func:`sheet_frame`): the title block (180 mm wide, bottom right,
  the width ISO 7200 recommends), the caution beside or above it, then the content: on
  the first sheet the drawing with its scale strip, the legend and summary column and,
  when the whole target table fits, the table; on further sheets the table.
* Grid and scale bar lengths (:func:`nice_step`, :func:`scale_bar`), the target table's
  pages (:func:`paginate`) and the greedy placement of target labels
  (:func:`place_labels`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from kinematics.checks import choice_problem

__all__ = [
    "PAPER_SIZES",
    "ORIENTATIONS",
    "FIT",
    "Scale",
    "SCALES",
    "SCALE_NAMES",
    "Box",
    "TITLE_W",
    "TITLE_H",
    "TITLE_FIELDS",
    "SheetFrame",
    "paper_size",
    "parse_scale",
    "fit_scale",
    "sheet_frame",
    "split_drawing",
    "PlanMapping",
    "plan_mapping",
    "nice_step",
    "scale_bar",
    "paginate",
    "place_labels",
]

#: ISO 216 A series, portrait (width, height) in mm.
PAPER_SIZES = {
    "A4": (210.0, 297.0),
    "A3": (297.0, 420.0),
    "A2": (420.0, 594.0),
    "A1": (594.0, 841.0),
}
ORIENTATIONS = ("landscape", "portrait")
#: The scale choice that picks the largest standard scale at which the cell fits.
FIT = "fit"

MARGIN_FILING = 20.0  # free edge at the left, for binding (ISO 5457)
MARGIN = 10.0  # free edge elsewhere (ISO 5457)
GAP = 3.0  # between regions
TITLE_W = 180.0  # ISO 7200 recommends a title block 180 mm wide
TITLE_H = 45.0
CAUTION_PORTRAIT_H = 26.0
STRIP_H = 14.0  # scale strip under the drawing
PLAN_INSET = 7.0  # drawing frame to the plan: room for the grid's coordinate labels


@dataclass(frozen=True)
class Scale:
    """A drawing scale ``paper:world`` (``1:10`` draws 10 mm of the cell as 1 mm)."""

    paper: int
    world: int

    @property
    def ratio(self) -> float:
        """Paper length per world length."""
        return self.paper / self.world

    @property
    def text(self) -> str:
        """As printed: "1:10", "2:1"."""
        return f"{self.paper}:{self.world}"


def _series() -> tuple[Scale, ...]:
    up = [Scale(n, 1) for n in (50, 20, 10, 5, 2)]
    down = [Scale(1, d * 10**k) for k in range(0, 5) for d in (1, 2, 5)]
    return tuple(up + down[:13])  # to 1:10000


#: ISO 5455 scales, largest first: 50:1 ... 2:1, 1:1, 1:2, 1:5, 1:10, ... 1:10000.
SCALES = _series()
#: Names accepted where a scale is asked for: "fit" or a scale of :data:`SCALES`.
SCALE_NAMES = (FIT, *(s.text for s in SCALES))


@dataclass(frozen=True)
class Box:
    """A rectangle on the paper (mm; x right, y down)."""

    x: float
    y: float
    w: float
    h: float

    @property
    def right(self) -> float:
        return self.x + self.w

    @property
    def bottom(self) -> float:
        return self.y + self.h

    @property
    def centre(self) -> tuple[float, float]:
        return (self.x + self.w / 2, self.y + self.h / 2)

    def inset(self, d: float) -> Box:
        return Box(self.x + d, self.y + d, max(self.w - 2 * d, 0.0), max(self.h - 2 * d, 0.0))

    def top_part(self, h: float) -> Box:
        return Box(self.x, self.y, self.w, min(h, self.h))

    def below(self, h: float, gap: float = 0.0) -> Box:
        """What is left under the top ``h`` (and a gap)."""
        d = min(h + gap, self.h)
        return Box(self.x, self.y + d, self.w, self.h - d)

    def contains(self, x: float, y: float) -> bool:
        return self.x <= x <= self.right and self.y <= y <= self.bottom


#: Title-block fields and their boxes, relative to the block's top left (mm). Keys are
#: the ``kinematics.review`` field keys, plus "scale", "paper", "sheet" and "source".
TITLE_FIELDS: tuple[tuple[str, Box], ...] = (
    ("legal_owner", Box(0, 0, 90, 9)),
    ("technical_reference", Box(90, 0, 45, 9)),
    ("responsible_department", Box(135, 0, 45, 9)),
    ("creator", Box(0, 9, 45, 9)),
    ("approval_person", Box(45, 9, 45, 9)),
    ("document_type", Box(90, 9, 45, 9)),
    ("document_status", Box(135, 9, 45, 9)),
    ("title", Box(0, 18, 90, 18)),
    ("identification_number", Box(90, 18, 45, 9)),
    ("revision", Box(135, 18, 20, 9)),
    ("date", Box(155, 18, 25, 9)),
    ("scale", Box(90, 27, 22.5, 9)),
    ("paper", Box(112.5, 27, 22.5, 9)),
    ("language_code", Box(135, 27, 20, 9)),
    ("sheet", Box(155, 27, 25, 9)),
    ("source", Box(0, 36, 180, 9)),
)


@dataclass(frozen=True)
class SheetFrame:
    """Where the parts of one sheet go.

    Attributes
    ----------
    width, height : float
        The paper (mm).
    border : Box
        The drawing frame (inside the margins).
    title : Box
    caution : Box
    content : Box
        Everything else inside the frame: the drawing, legend, summary and table, or on
        further sheets the table.
    """

    width: float
    height: float
    border: Box
    title: Box
    caution: Box
    content: Box

    @property
    def landscape(self) -> bool:
        return self.width >= self.height


def paper_size(paper: str, orientation: str) -> tuple[float, float]:
    """(width, height) in mm of an ISO 216 sheet.

    Raises
    ------
    ValueError
        For a paper or orientation that is not offered (the message lists the choices).

    Examples
    --------
    >>> paper_size("A3", "landscape"), paper_size("A4", "portrait")
    ((420.0, 297.0), (210.0, 297.0))
    """
    p = choice_problem(paper, PAPER_SIZES)
    if p:
        raise ValueError(f"paper {p}, got {paper!r}")
    o = choice_problem(orientation, ORIENTATIONS)
    if o:
        raise ValueError(f"orientation {o}, got {orientation!r}")
    w, h = PAPER_SIZES[paper]
    return (h, w) if orientation == "landscape" else (w, h)


def parse_scale(text: str) -> Scale | None:
    """The scale named by ``text`` ("1:10", "2:1"), None for "fit".

    Raises
    ------
    ValueError
        When ``text`` is not "fit" or an ISO 5455 scale (the message lists them).

    Examples
    --------
    >>> parse_scale("1:20"), parse_scale("fit")
    (Scale(paper=1, world=20), None)
    """
    name = text.strip().replace(" ", "") if isinstance(text, str) else text
    if name == FIT:
        return None
    for s in SCALES:
        if s.text == name:
            return s
    raise ValueError(f"scale {choice_problem(name, SCALE_NAMES)}, got {text!r}")


def fit_scale(extent_mm: tuple[float, float], area_mm: tuple[float, float]) -> Scale:
    """The largest ISO 5455 scale at which a world extent (mm) fits an area on paper (mm).

    Examples
    --------
    A cell 3 m x 2 m on a plan area of 250 x 200 mm: 1:10 would need 300 mm, so 1:20.

    >>> fit_scale((3000.0, 2000.0), (250.0, 200.0)).text
    '1:20'
    >>> fit_scale((40.0, 10.0), (250.0, 200.0)).text
    '5:1'
    """
    w, h = (max(float(v), 1e-9) for v in extent_mm)
    aw, ah = (float(v) for v in area_mm)
    for s in SCALES:
        if w * s.ratio <= aw * (1 + 1e-9) and h * s.ratio <= ah * (1 + 1e-9):
            return s
    return SCALES[-1]


def sheet_frame(paper: str, orientation: str) -> SheetFrame:
    """The frame, title block, caution and content regions of a sheet.

    Examples
    --------
    >>> f = sheet_frame("A3", "landscape")
    >>> f.title, f.border.x, f.border.right
    (Box(x=230.0, y=242.0, w=180.0, h=45.0), 20.0, 410.0)
    """
    w, h = paper_size(paper, orientation)
    border = Box(MARGIN_FILING, MARGIN, w - MARGIN_FILING - MARGIN, h - 2 * MARGIN)
    title = Box(border.right - TITLE_W, border.bottom - TITLE_H, TITLE_W, TITLE_H)
    room = border.w - TITLE_W
    if room >= 90.0:  # beside the title block
        caution = Box(border.x + GAP, title.y + GAP, room - 2 * GAP, TITLE_H - 2 * GAP)
        top = title.y
    else:  # above it, the full width
        caution = Box(
            border.x + GAP,
            title.y - CAUTION_PORTRAIT_H,
            border.w - 2 * GAP,
            CAUTION_PORTRAIT_H - GAP,
        )
        top = title.y - CAUTION_PORTRAIT_H
    content = Box(border.x + GAP, border.y + GAP, border.w - 2 * GAP, top - border.y - 2 * GAP)
    return SheetFrame(w, h, border, title, caution, content)


def split_drawing(frame: SheetFrame, table_h: float = 0.0) -> dict[str, Box]:
    """The first sheet's content: "drawing" (with its "plan" and "strip"), "side" (legend
    and summary; "legend" and "summary" when they sit side by side) and "table" when
    ``table_h`` > 0.

    Landscape sheets put the side column right of the drawing; portrait ones a band under
    it, legend left and summary right.

    Examples
    --------
    >>> parts = split_drawing(sheet_frame("A3", "landscape"))
    >>> round(parts["drawing"].w), round(parts["side"].w), "table" in parts
    (266, 115, False)
    """
    c = frame.content
    out: dict[str, Box] = {}
    if table_h > 0:
        out["table"] = Box(c.x, c.bottom - table_h, c.w, table_h)
        c = Box(c.x, c.y, c.w, c.h - table_h - GAP)
    if frame.landscape:
        side_w = min(max(0.3 * c.w, 80.0), 120.0)
        drawing = Box(c.x, c.y, c.w - side_w - GAP, c.h)
        out["side"] = Box(drawing.right + GAP, c.y, side_w, c.h)
    else:
        side_h = min(max(0.3 * c.h, 60.0), 110.0)
        drawing = Box(c.x, c.y, c.w, c.h - side_h - GAP)
        side = Box(c.x, drawing.bottom + GAP, c.w, side_h)
        out["side"] = side
        lw = 0.55 * side.w
        out["legend"] = Box(side.x, side.y, lw - GAP / 2, side.h)
        out["summary"] = Box(side.x + lw + GAP / 2, side.y, side.w - lw - GAP / 2, side.h)
    out["drawing"] = drawing
    out["strip"] = Box(drawing.x, drawing.bottom - STRIP_H, drawing.w, STRIP_H)
    out["plan"] = Box(drawing.x, drawing.y, drawing.w, drawing.h - STRIP_H).inset(PLAN_INSET)
    return out


@dataclass(frozen=True)
class PlanMapping:
    """World (cell units, +y up) to paper (mm, y down): ``X = ox + k x``, ``Y = oy - k y``.

    Attributes
    ----------
    k : float
        Paper mm per world unit (the scale times the millimetres in one cell unit).
    ox, oy : float
    scale : Scale
    fits : bool
        The whole world box lies inside the plan area at this scale.
    """

    k: float
    ox: float
    oy: float
    scale: Scale
    fits: bool

    def to_paper(self, x: float, y: float) -> tuple[float, float]:
        return (self.ox + self.k * x, self.oy - self.k * y)

    def to_world(self, px: float, py: float) -> tuple[float, float]:
        return ((px - self.ox) / self.k, (self.oy - py) / self.k)


def plan_mapping(
    world: tuple[float, float, float, float],
    plan: Box,
    mm_per_unit: float,
    scale: Scale | None,
) -> PlanMapping:
    """The mapping that centres the world box ``(x0, x1, y0, y1)`` in ``plan``.

    ``scale`` None chooses the largest standard scale at which the box fits.

    Examples
    --------
    >>> m = plan_mapping((0.0, 1000.0, 0.0, 500.0), Box(0, 0, 200, 100), 1.0, None)
    >>> m.scale.text, m.to_paper(0.0, 0.0), m.to_paper(1000.0, 500.0), m.fits
    ('1:5', (0.0, 100.0), (200.0, 0.0), True)
    """
    x0, x1, y0, y1 = world
    extent = ((x1 - x0) * mm_per_unit, (y1 - y0) * mm_per_unit)
    if scale is None:
        scale = fit_scale(extent, (plan.w, plan.h))
    k = scale.ratio * mm_per_unit
    cx, cy = plan.centre
    wx, wy = (x0 + x1) / 2, (y0 + y1) / 2
    fits = extent[0] * scale.ratio <= plan.w * (1 + 1e-9) and extent[1] * scale.ratio <= plan.h * (
        1 + 1e-9
    )
    return PlanMapping(k, cx - k * wx, cy + k * wy, scale, fits)


def nice_step(target: float) -> float:
    """The largest 1, 2 or 5 times a power of ten not above ``target`` (> 0).

    Examples
    --------
    >>> nice_step(730.0), nice_step(0.31), nice_step(100.0)
    (500.0, 0.2, 100.0)
    """
    if not (target > 0 and math.isfinite(target)):
        return 1.0
    p = 10.0 ** math.floor(math.log10(target))
    for m in (5.0, 2.0, 1.0):
        if m * p <= target * (1 + 1e-12):
            return float(f"{m * p:.12g}")
    return p


def scale_bar(k: float, longest_mm: float) -> tuple[float, int]:
    """A scale bar: its length in world units (a round number, at most ``longest_mm`` on
    paper and at least a third of it) and the number of divisions.

    Examples
    --------
    At 1:10 in mm (k = 0.1 paper mm per mm), at most 80 mm of paper: 500 mm in 5 parts.

    >>> scale_bar(0.1, 80.0)
    (500.0, 5)
    """
    length = nice_step(longest_mm / k)
    digit = f"{length:e}"[0]
    return length, {"1": 5, "2": 4, "5": 5}.get(digit, 5)


def paginate(heights: Sequence[float], first: float, rest: float) -> list[tuple[int, int]]:
    """Split rows of the given heights into pages: ``first`` then ``rest`` mm of rows each.

    Every page takes at least one row. Returns (start, stop) index pairs.

    Examples
    --------
    >>> paginate([5.0] * 7, 12.0, 20.0)
    [(0, 2), (2, 6), (6, 7)]
    >>> paginate([], 10.0, 10.0)
    [(0, 0)]
    """
    pages: list[tuple[int, int]] = []
    start, room, used = 0, first, 0.0
    for i, h in enumerate(heights):
        if used + h > room + 1e-9 and i > start:
            pages.append((start, i))
            start, room, used = i, rest, 0.0
        used += h
    pages.append((start, len(heights)))
    return pages


def place_labels(
    anchors: np.ndarray,
    sizes: np.ndarray,
    blocked: np.ndarray,
    bounds: Box,
    gap: float,
    cell: float = 0.5,
) -> list[tuple[float, float] | None]:
    """Greedy label placement: for each anchor the first free spot of right, left, below
    and above it (label top-left corners, mm), None when none is free.

    Parameters
    ----------
    anchors : ndarray (N, 2)
        Points labelled (paper mm).
    sizes : ndarray (N, 2)
        Label widths and heights (mm).
    blocked : ndarray (M, 4)
        Boxes ``(x0, y0, x1, y1)`` no label may cover (the markers).
    bounds : Box
        Labels stay inside.
    gap : float
        Anchor to the label's near edge.
    cell : float
        Size of one cell of the occupancy grid (mm).

    Examples
    --------
    Two points side by side: the first label goes right, the second finds the right
    taken and no room to the left of the bounds, so goes below.

    >>> spots = place_labels(np.array([[10.0, 10.0], [14.0, 10.0]]), np.array([[8.0, 2.0]] * 2),
    ...                      np.zeros((0, 4)), Box(9, 0, 40, 40), 1.0)
    >>> [tuple(round(v, 1) for v in s) for s in spots]
    [(11.0, 9.0), (10.0, 11.0)]
    """
    nx = max(1, int(math.ceil(bounds.w / cell)) + 1)
    ny = max(1, int(math.ceil(bounds.h / cell)) + 1)
    grid = np.zeros((ny, nx), dtype=bool)

    def span(x0: float, y0: float, x1: float, y1: float) -> tuple[int, int, int, int]:
        i0 = min(max(int((x0 - bounds.x) // cell), 0), nx)
        i1 = min(max(math.ceil((x1 - bounds.x) / cell - 1e-9), 0), nx)
        j0 = min(max(int((y0 - bounds.y) // cell), 0), ny)
        j1 = min(max(math.ceil((y1 - bounds.y) / cell - 1e-9), 0), ny)
        return j0, j1, i0, i1

    for x0, y0, x1, y1 in np.asarray(blocked, dtype=float).reshape(-1, 4):
        j0, j1, i0, i1 = span(x0, y0, x1, y1)
        grid[j0:j1, i0:i1] = True
    out: list[tuple[float, float] | None] = []
    for (ax, ay), (w, h) in zip(np.asarray(anchors, float), np.asarray(sizes, float)):
        spot = None
        for cx, cy in (
            (ax + gap, ay - h / 2),
            (ax - gap - w, ay - h / 2),
            (ax - w / 2, ay + gap),
            (ax - w / 2, ay - gap - h),
        ):
            if cx < bounds.x or cy < bounds.y or cx + w > bounds.right or cy + h > bounds.bottom:
                continue
            j0, j1, i0, i1 = span(cx, cy, cx + w, cy + h)
            if not grid[j0:j1, i0:i1].any():
                spot = (float(cx), float(cy))
                grid[j0:j1, i0:i1] = True
                break
        out.append(spot)
    return out

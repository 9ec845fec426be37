"""Paint review sheets onto a QPainter: PDF (QPdfWriter), SVG (QSvgGenerator), PNG (QImage).

The drawing is made from the model with the canvas's own drawing code (the layers'
``paint_*`` functions and :mod:`app.canvas.draw`), through a
:class:`~app.canvas.draw.PaperInk` that turns the canvas's pixel-sized looks into paper
millimetres; text is real text (searchable in PDF and SVG). The page arithmetic is
:mod:`app.sheet.layout`, the words :mod:`app.sheet.content`.

:func:`plan_sheets` decides what goes on which sheet (the drawing's scale, the target
table's pages); :func:`paint_sheet` paints one sheet; :func:`pdf_bytes`,
:func:`svg_bytes` and :func:`png_bytes` make the files' contents, written atomically by
:func:`write_sheets`.
"""

from __future__ import annotations

import math
import os
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QMarginsF, QPointF, QRectF, QSize, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QFont,
    QFontMetricsF,
    QImage,
    QPageLayout,
    QPageSize,
    QPainter,
    QPainterPath,
    QPdfWriter,
    QPen,
    QTransform,
)

from app import style
from app.canvas.draw import PX_MM, PaperInk, paint_ghosts, paint_markers, paint_polylines
from app.canvas.layers.bases import base_radius, paint_base
from app.canvas.layers.collisions import CONTACT_SYMBOL, HIT_PEN, paint_collisions
from app.canvas.layers.collisions import LOOKS as COLLISION_LOOKS
from app.canvas.layers.fixtures import paint_fixtures
from app.canvas.layers.ghosts import ghost_pen
from app.canvas.layers.regions import REGION_KEYS, paint_regions, region_rings
from app.canvas.layers.spaces import LOOKS as SPACE_LOOKS
from app.canvas.layers.spaces import SHARED_SYMBOL, paint_shared_targets, paint_spaces
from app.canvas.layers.swept import paint_swept
from app.canvas.layers.underlay import UNDERLAY_PEN
from app.canvas.legend import LegendEntry, paint_sample
from app.canvas.qtstyle import OVERLAY_LOOKS, fixture_look, mixed
from app.interaction.fit import cell_box
from kinematics.atomic import write_atomic
from kinematics.ik import ELBOWS, Status
from kinematics.review import REVIEW_FIELDS
from kinematics.wording import FEASIBLE, STATUS_WORDS

from .content import TABLE_COLUMNS, SheetContent, SheetOptions, title_texts
from .layout import (
    TITLE_FIELDS,
    Box,
    PlanMapping,
    Scale,
    SheetFrame,
    nice_step,
    paginate,
    place_labels,
    plan_mapping,
    scale_bar,
    sheet_frame,
    split_drawing,
)

__all__ = [
    "SheetPlan",
    "plan_sheets",
    "paint_sheet",
    "pdf_bytes",
    "svg_bytes",
    "png_bytes",
    "MAX_PNG_PIXELS",
    "DPI_RANGE",
    "write_sheets",
    "sheet_paths",
    "png_size",
    "png_problem",
    "legend_height",
]

#: Largest PNG sheet, in pixels (A1 at 300 dpi is 70 million).
MAX_PNG_PIXELS = 100_000_000
#: Resolutions a PNG sheet may have, dots per inch.
DPI_RANGE = (36, 1200)

_REF_DPI = 1200.0  # metrics and pagination are worked out at this resolution
_FIT_PAD_MM = 2.0  # fit leaves this much paper free around the cell's box
_INK = QColor(style.INK)
_SLATE = QColor(style.PALETTE["slate"])
_WARN = QColor(style.PALETTE["ember"]).darker(130)

# Text sizes: the em of the font, mm on paper.
_T_LABEL = 1.5
_T_VALUE = 2.5
_T_TITLE = 4.0
_T_TABLE = 2.0
_T_BODY = 2.2
_T_HEAD = 2.6
_T_GRID = 1.8
_T_TARGET = 1.7
_LINE = 1.25  # line height per em


def _plain_font() -> QFont:
    # No ligatures: text copied or searched in the PDF reads "fi", not one glyph.
    f = QFont("DejaVu Sans")
    f.setFeature(QFont.Tag("liga"), 0)
    f.setFeature(QFont.Tag("clig"), 0)
    return f


def _page_font(size_mm: float, dpi: float, bold: bool = False, italic: bool = False) -> QFont:
    """A font whose em is ``size_mm`` when the painter draws in mm on a ``dpi`` device."""
    f = _plain_font()
    f.setPointSizeF(size_mm * 72.0 / dpi)
    f.setBold(bold)
    f.setItalic(italic)
    return f


def _device_font(size_mm: float, bold: bool = False) -> QFont:
    """A font whose em is ``size_mm`` when drawn in device coordinates (points are physical)."""
    f = _plain_font()
    f.setPointSizeF(size_mm * 72.0 / 25.4)
    f.setBold(bold)
    return f


class _Metrics:
    """Text measures in paper mm (fonts made for a reference device)."""

    def __init__(self, dpi: float = _REF_DPI) -> None:
        self.dpi = dpi
        self._image = QImage(1, 1, QImage.Format.Format_ARGB32_Premultiplied)
        dpm = int(round(dpi / 0.0254))
        self._image.setDotsPerMeterX(dpm)
        self._image.setDotsPerMeterY(dpm)
        self._fm: dict[tuple, QFontMetricsF] = {}

    def fm(self, size: float, bold: bool = False) -> QFontMetricsF:
        key = (size, bold)
        m = self._fm.get(key)
        if m is None:
            m = QFontMetricsF(_page_font(size, self.dpi, bold), self._image)
            self._fm[key] = m
        return m

    def width(self, text: str, size: float, bold: bool = False) -> float:
        return self.fm(size, bold).horizontalAdvance(text)

    def wrap(self, text: str, width: float, size: float, bold: bool = False) -> list[str]:
        """Lines of ``text`` broken at spaces to fit ``width`` (a long word is elided)."""
        fm = self.fm(size, bold)
        lines: list[str] = []
        for para in text.split("\n"):
            words, line = para.split(" "), ""
            for w in words:
                trial = f"{line} {w}" if line else w
                if fm.horizontalAdvance(trial) <= width or not line:
                    line = trial
                else:
                    lines.append(line)
                    line = w
            lines.append(line)
        return [
            fm.elidedText(t, Qt.TextElideMode.ElideRight, width)
            if fm.horizontalAdvance(t) > width
            else t
            for t in lines
        ]

    def elide(self, text: str, width: float, size: float, bold: bool = False) -> str:
        return self.fm(size, bold).elidedText(text, Qt.TextElideMode.ElideRight, width)


# ------------------------------------------------------------------------------ planning


@dataclass
class SheetPlan:
    """What goes on which sheet.

    Attributes
    ----------
    content : SheetContent
    options : SheetOptions
    frame : SheetFrame
    parts : dict
        First sheet regions (:func:`app.sheet.layout.split_drawing`).
    mapping : PlanMapping
        World to paper on the first sheet.
    world : (x0, x1, y0, y1)
        The world box the drawing centres.
    table_pages : list of (int, int, int)
        (sheet index, first row, end row) of each part of the target table.
    row_lines : list of list of str
        The status column's lines per row.
    """

    content: SheetContent
    options: SheetOptions
    frame: SheetFrame
    parts: dict[str, Box]
    mapping: PlanMapping
    world: tuple[float, float, float, float]
    table_pages: list[tuple[int, int, int]]
    row_lines: list[list[str]]
    sheets: int
    metrics: _Metrics = field(repr=False, default_factory=_Metrics)
    table_size: float = _T_TABLE

    @property
    def scale(self) -> Scale:
        return self.mapping.scale


def _table_size(width: float) -> float:
    """Text size of the target table: smaller on narrow paper, so numbers stay whole."""
    return _T_TABLE if width >= 300.0 else 1.65


def _row_height(lines: int, ts: float = _T_TABLE) -> float:
    return ts * _LINE * lines + 0.8


def _header_height(ts: float = _T_TABLE) -> float:
    return ts * _LINE * 2 + 1.2


def _world_box(content: SheetContent) -> tuple[float, float, float, float]:
    box = cell_box(content.cell)
    if box is None:
        return (-500.0, 500.0, -500.0, 500.0)
    return box


def plan_sheets(content: SheetContent, options: SheetOptions) -> SheetPlan:
    """Work out the sheets of a review (scale, table pages, row heights).

    The target table goes on the first sheet when it fits there whole (in a band of at
    most 35 % of the content's height); else it starts on the second sheet and runs on
    as many further sheets as it needs.
    """
    _app()
    frame = sheet_frame(options.paper, options.orientation)
    metrics = _Metrics()
    table_w = frame.content.w
    ts = _table_size(table_w)
    status_w = dict((k, w) for k, _h, w, _n in TABLE_COLUMNS)["status"] * table_w - 2.0
    row_lines = [metrics.wrap(r.texts["status"], status_w - 4.0, ts)[:2] for r in content.rows]
    heights = [_row_height(len(lines), ts) for lines in row_lines]
    total = sum(heights) + _header_height(ts) + _T_HEAD * _LINE + 1.0
    on_first = total <= (0.3 if frame.landscape else 0.2) * frame.content.h
    parts = split_drawing(frame, total if on_first else 0.0)
    world = _world_box(content)
    fit_in = parts["plan"].inset(_FIT_PAD_MM)
    mapping = plan_mapping(world, fit_in, content.cell.mm_per_unit, options.scale)
    if on_first:
        pages = [(0, 0, len(content.rows))]
    else:
        room = frame.content.h - _header_height(ts) - _T_HEAD * _LINE - 1.0
        pages = [
            (k + 1, a, b) for k, (a, b) in enumerate(paginate(heights, room, room)) if b > a
        ] or [(1, 0, 0)]
    sheets = 1 + (0 if on_first else len(pages))
    return SheetPlan(
        content, options, frame, parts, mapping, world, pages, row_lines, sheets, metrics, ts
    )


# ------------------------------------------------------------------------------ painting


class _Page:
    """Painting helpers for one sheet: the painter draws in paper mm."""

    def __init__(self, painter: QPainter, dpi: float, metrics: _Metrics, clip: bool) -> None:
        self.p = painter
        self.dpi = dpi
        self.m = metrics
        self.dpm = dpi / 25.4
        self.ink = PaperInk(self.dpm, clip=clip)

    def font(self, size: float, bold: bool = False, italic: bool = False) -> QFont:
        return _page_font(size, self.dpi, bold, italic)

    def text(
        self,
        x: float,
        y: float,
        text: str,
        size: float,
        colour: QColor = _INK,
        bold: bool = False,
        align: str = "left",
        italic: bool = False,
    ) -> float:
        """Draw one line with its top at ``y``; returns its width."""
        p = self.p
        p.setFont(self.font(size, bold, italic))
        p.setPen(colour)
        fm = self.m.fm(size, bold)
        w = fm.horizontalAdvance(text)
        if align == "right":
            x -= w
        elif align == "centre":
            x -= w / 2
        p.drawText(QPointF(x, y + fm.ascent()), text)
        return w

    def line(self, x0, y0, x1, y1, width: float = 0.25, colour: QColor = _INK, dash=None) -> None:
        pen = QPen(colour, width)
        pen.setCapStyle(Qt.PenCapStyle.FlatCap)
        if dash is not None:
            pen.setStyle(dash)
        self.p.setPen(pen)
        self.p.drawLine(QPointF(x0, y0), QPointF(x1, y1))

    def rect(self, b: Box, width: float = 0.25, colour: QColor = _INK, fill=None) -> None:
        self.p.setPen(QPen(colour, width) if width > 0 else Qt.PenStyle.NoPen)
        self.p.setBrush(QBrush(fill) if fill is not None else Qt.BrushStyle.NoBrush)
        self.p.drawRect(QRectF(b.x, b.y, b.w, b.h))

    def flow(
        self, box: Box, items: list[tuple[str, float, bool, QColor, float]], dry: bool = False
    ) -> float:
        """Wrapped paragraphs (text, size, bold, colour, indent) from the top of ``box``;
        returns the height used. What does not fit is left out, and the last line says
        so. ``dry`` only measures."""
        y = box.y
        for text, size, bold, colour, indent in items:
            lines = self.m.wrap(text, box.w - indent, size, bold)
            for n, line in enumerate(lines):
                h = size * _LINE
                last = n == len(lines) - 1
                if y + h > box.bottom or (y + 2 * h > box.bottom and not last):
                    if not dry:
                        self.text(box.x, y, "… (more in the table)", size, _WARN, italic=True)
                    return y + h - box.y
                if not dry:
                    self.text(box.x + indent, y, line, size, colour, bold)
                y += h
            y += 0.3 * size
        return y - box.y


def _shown_masks(content: SheetContent, options: SheetOptions) -> dict[str, np.ndarray]:
    out = {}
    for aid, ev in content.evaluation.arms.items():
        n = len(ev.target_ids)
        if options.ghosts == "none":
            out[aid] = np.zeros(n, dtype=bool)
        elif options.ghosts == "selected":
            whole = aid in options.selection
            out[aid] = np.array([whole or t in options.selection for t in ev.target_ids], bool)
        else:
            out[aid] = np.ones(n, dtype=bool)
    return out


def _visible(outline, view: tuple[float, float, float, float]) -> bool:
    xy = np.asarray(outline, dtype=float)
    x0, x1, y0, y1 = view
    return not (
        xy[:, 0].max() < x0 or xy[:, 0].min() > x1 or xy[:, 1].max() < y0 or xy[:, 1].min() > y1
    )


@dataclass
class _Drawn:
    """What the drawing painted: legend rows, grid lines, targets left unlabelled."""

    rows: list[LegendEntry]
    xs: np.ndarray
    ys: np.ndarray
    unlabelled: int


def _paint_drawing(page: _Page, plan: SheetPlan) -> _Drawn:
    """The plan: grid, underlay, fixtures, overlays, ghosts, collisions, bases, targets,
    labels (clipped to the plan area). Returns what the legend and the frame need."""
    p, m, ink = page.p, plan.mapping, page.ink
    content, options = plan.content, plan.options
    cell, evaluation = content.cell, content.evaluation
    box = plan.parts["plan"]
    units = cell.units
    # World -> device: world -> paper mm (y up becomes y down) -> device.
    to_paper = QTransform(m.k, 0.0, 0.0, -m.k, m.ox, m.oy)
    x0, y1 = m.to_world(box.x, box.y)
    x1, y0 = m.to_world(box.right, box.bottom)
    view = (x0, x1, y0, y1)
    legend: list[LegendEntry] = []
    p.save()
    p.setClipRect(QRectF(box.x, box.y, box.w, box.h))
    p.setRenderHint(QPainter.RenderHint.Antialiasing, True)

    # Grid: major lines about 25 mm apart on paper, labelled at the frame.
    step = nice_step(25.0 / m.k)
    grid_pen = QPen(mixed(style.PALETTE["fog"], 1.0), 0.13)
    p.setPen(grid_pen)
    xs = np.arange(math.ceil(x0 / step), math.floor(x1 / step) + 1) * step
    ys = np.arange(math.ceil(y0 / step), math.floor(y1 / step) + 1) * step
    for v in xs:
        px, _ = m.to_paper(float(v), 0.0)
        p.drawLine(QPointF(px, box.y), QPointF(px, box.bottom))
    for v in ys:
        _, py = m.to_paper(0.0, float(v))
        p.drawLine(QPointF(box.x, py), QPointF(box.right, py))
    pen = QPen(grid_pen)
    pen.setWidthF(0.13 / PX_MM)  # the legend sample is painted in canvas pixels
    pen.setCosmetic(True)
    legend.append(LegendEntry("line", f"grid, every {step:g} {units}", pen=pen))

    if options.underlay and content.underlay is not None:
        lines = [ln for layer in content.underlay.layers.values() for ln in layer]
        if paint_polylines(p, lines, to_paper, UNDERLAY_PEN, ink):
            legend.append(
                LegendEntry(
                    "line",
                    f"DXF underlay {content.underlay.source} (drawing only, not checked)",
                    pen=UNDERLAY_PEN,
                )
            )

    fixtures = [f for f in cell.fixtures if _visible(f.outline, view)]
    paint_fixtures(p, fixtures, to_paper, {}, ink)
    kinds = list(dict.fromkeys(f.kind for f in fixtures))

    overlays = set(options.overlays)
    space_keys, sources = paint_spaces(p, cell, evaluation, overlays, to_paper, ink)
    swept_keys, move_contacts, move_hits = paint_swept(
        p, cell, evaluation, to_paper, ink, draw_areas="swept" in overlays
    )
    region_keys: list[str] = []
    shown_regions = [k for k in REGION_KEYS if k in overlays]
    if shown_regions:
        for arm in cell.arms:
            try:
                rings = region_rings(arm, cell.mm_per_unit)
            except ValueError:
                continue
            for k in paint_regions(p, arm, rings, shown_regions, to_paper, ink):
                if k not in region_keys:
                    region_keys.append(k)
    shown = _shown_masks(content, options)
    ghost_keys: set[tuple[str, str]] = set()
    for arm in cell.arms:
        ghost_keys |= paint_ghosts(p, arm, evaluation.arms[arm.id], shown[arm.id], to_paper, ink)
    collision_keys = paint_collisions(
        p, evaluation, shown, to_paper, ink, move_contacts=move_contacts, move_hits=move_hits
    )
    base_font = _device_font(2.4, bold=True)
    p.save()
    p.setTransform(to_paper, True)
    for i, arm in enumerate(cell.arms):
        paint_base(
            p,
            (arm.x, arm.y, arm.heading_deg),
            base_radius(arm),
            0.45 * arm.a1,
            arm.name,
            style.arm_colour(i),
            base_font,
            handle=False,
            ink=ink,
        )
    p.restore()
    # Targets: markers, then the rings of targets several arms reach, then the ids.
    xy_parts, st_parts, ids = [], [], []
    for t in cell.targets:
        try:
            ev, i = evaluation.locate(t.id)
            st = int(ev.status[i])
        except KeyError:
            st = int(Status.BEYOND_REACH)
        if x0 <= t.x <= x1 and y0 <= t.y <= y1:
            xy_parts.append((t.x, t.y))
            st_parts.append(st)
            ids.append(t.id)
    xy = np.array(xy_parts, dtype=float).reshape(-1, 2)
    statuses = paint_markers(p, xy, np.array(st_parts, dtype=np.int64), to_paper, 13.0, ink)
    shared = "shared_targets" in overlays and paint_shared_targets(
        p, cell, evaluation, to_paper, ink
    )
    unlabelled = 0
    if options.labels and len(xy):
        unlabelled = _paint_labels(page, plan, xy, ids)
    p.restore()

    # The legend: every style drawn, in the canvas's words.
    rows = [LegendEntry("header", "Targets (marker shape = status)")]
    for st, ss in style.STATUS_STYLES.items():
        if int(st) in statuses:
            text = FEASIBLE if st is Status.OK else f"fails: {STATUS_WORDS[st]}"
            rows.append(LegendEntry("symbol", text, symbol=ss.symbol, colour=ss.colour))
    if shared:
        rows.append(
            LegendEntry(
                "symbol",
                "target several arms reach (⬡)",
                symbol=SHARED_SYMBOL,
                pen=QPen(QColor(style.PALETTE["pine"])),
            )
        )
    if options.labels and len(xy):
        rows.append(LegendEntry("header", "Labels: target id beside its marker"))
    if ghost_keys:
        rows.append(LegendEntry("header", "Poses (links base-elbow-tool)"))
        for name in ELBOWS:
            for role, words in (
                ("chosen", "chosen"),
                ("alternative", "other, also works"),
                ("blocked", "no option here"),
            ):
                if (name, role) in ghost_keys:
                    pen = ghost_pen(name, role)
                    pen.setWidthF(1.5)
                    rows.append(LegendEntry("line", f"{name} elbow, {words}", pen=pen))
    if collision_keys:
        rows.append(LegendEntry("header", "Collisions"))
        for role in ("fails", "other"):
            if role in collision_keys:
                pen, brush, words = COLLISION_LOOKS[role]
                rows.append(LegendEntry("area", words, pen=QPen(pen), brush=brush))
        if "contact" in collision_keys:
            rows.append(
                LegendEntry(
                    "symbol",
                    "contact point (circled cross)",
                    symbol=CONTACT_SYMBOL,
                    colour=style.PALETTE["lemon"],
                )
            )
        if "hit" in collision_keys:
            rows.append(LegendEntry("line", "fixture hit (thick dashed edge)", pen=HIT_PEN))
    if cell.arms:
        rows.append(LegendEntry("header", "Arm bases (disc, heading arrow)"))
        for i, a in enumerate(cell.arms):
            rows.append(LegendEntry("base", a.name, colour=style.arm_colour(i)))
    if region_keys:
        rows.append(LegendEntry("header", "Regions"))
        for k in region_keys:
            look = OVERLAY_LOOKS[k]
            rows.append(LegendEntry("area", look.legend, pen=QPen(look.pen), brush=look.brush))
    space_words = {
        "space.restricted": "restricted space (dashed)",
        "space.operating": "operating space (|||)",
        "swept": "swept area of a move",
        "swept.collides": "move collides (hatched, dashed)",
        "shared": "shared zone: interlock needed",
        "shared.operating": "shared operating zone (dotted)",
        "passes_over": "fixture passed over (dotted)",
    }
    spaces = space_keys + swept_keys
    if spaces:
        rows.append(LegendEntry("header", "Spaces and moves (ISO 10218 terms)"))
        for k in spaces:
            pen, brush = SPACE_LOOKS[k]
            if k == "space.maximum":
                src = sorted(set(sources.values())) or ["joint limits"]
                text = f"maximum space: {', '.join(src)}"
            else:
                text = space_words[k]
            rows.append(LegendEntry("area", text, pen=QPen(pen), brush=brush))
    if kinds:
        rows.append(LegendEntry("header", "Fixtures"))
        for kind in kinds:
            look = fixture_look(kind)
            rows.append(
                LegendEntry(
                    "area", look.legend, pen=QPen(look.pen), brush=look.brush, under=look.base_brush
                )
            )
    return _Drawn([*rows, LegendEntry("header", "Drawing"), *legend], xs, ys, unlabelled)


def _drawing_notes(page: _Page, plan: SheetPlan, drawn: _Drawn) -> None:
    """What is said about the drawing inside its frame: clipping, labels left off."""
    m, box = plan.mapping, plan.parts["plan"]
    if not m.fits:
        page.text(
            box.x + 1.0,
            box.y + 1.0,
            f"Parts of the cell lie outside the drawing at {m.scale.text}; "
            "choose a smaller scale or fit to see it whole",
            _T_BODY,
            _WARN,
            bold=True,
        )
    if drawn.unlabelled:
        page.text(
            box.x + 1.0,
            box.bottom - _T_GRID * _LINE - 0.5,
            f"{drawn.unlabelled} target ids left off where crowded (every target is in the table)",
            _T_GRID,
            _SLATE,
            italic=True,
        )
    _grid_labels(page, plan, drawn.xs, drawn.ys)


def _paint_labels(page: _Page, plan: SheetPlan, xy: np.ndarray, ids: list[str]) -> int:
    """Target ids beside their markers where there is room; returns how many were not."""
    m = plan.mapping
    half = 13.0 * PX_MM / 2
    anchors = np.column_stack([m.ox + m.k * xy[:, 0], m.oy - m.k * xy[:, 1]])
    fm = page.m.fm(_T_TARGET)
    h = fm.height()
    sizes = np.array([[fm.horizontalAdvance(t) + 0.6, h] for t in ids]).reshape(-1, 2)
    blocked = np.column_stack([anchors - half, anchors + half])
    spots = place_labels(anchors, sizes, blocked, plan.parts["plan"], half + 0.4)
    halo = QColor(style.PAPER)
    halo.setAlphaF(0.8)
    missing = 0
    for tid, spot, (w, hh) in zip(ids, spots, sizes):
        if spot is None:
            missing += 1
            continue
        page.p.fillRect(QRectF(spot[0], spot[1], w, hh), halo)
        page.text(spot[0] + 0.3, spot[1], tid, _T_TARGET)
    return missing


def _grid_labels(page: _Page, plan: SheetPlan, xs, ys) -> None:
    m, box = plan.mapping, plan.parts["plan"]
    units = plan.content.cell.units
    fm = page.m.fm(_T_GRID)
    last = -1e9
    for v in xs:
        px, _ = m.to_paper(float(v), 0.0)
        text = f"{v:g}"
        w = fm.horizontalAdvance(text)
        if px - w / 2 > last + 1.0 and box.x <= px <= box.right:
            page.text(px, box.bottom + 0.6, text, _T_GRID, _SLATE, align="centre")
            last = px + w / 2
    for v in ys:
        _, py = m.to_paper(0.0, float(v))
        if box.y <= py <= box.bottom:
            page.text(box.x - 0.8, py - fm.height() / 2, f"{v:g}", _T_GRID, _SLATE, align="right")
    page.text(
        box.right,
        box.bottom + 0.6 + fm.height(),
        f"x, y in {units}",
        _T_GRID,
        _SLATE,
        align="right",
    )


def _paint_strip(page: _Page, plan: SheetPlan) -> None:
    """Scale bar, the scale, the grid's frame note and the +y arrow under the drawing."""
    strip = plan.parts["strip"]
    m = plan.mapping
    units = plan.content.cell.units
    length, parts = scale_bar(m.k, min(90.0, strip.w * 0.4))
    bar_w = length * m.k
    x, y = strip.x + 2.0, strip.y + 6.0
    seg = bar_w / parts
    p = page.p
    p.setPen(QPen(_INK, 0.18))
    for i in range(parts):
        p.setBrush(QBrush(_INK) if i % 2 == 0 else QBrush(QColor("white")))
        p.drawRect(QRectF(x + i * seg, y, seg, 1.6))
    fm = page.m.fm(_T_GRID)
    for i in range(parts + 1):
        v = length * i / parts
        text = f"{v:g}" + (f" {units}" if i == parts else "")
        page.text(x + i * seg, y + 2.0, text, _T_GRID, align="centre" if i < parts else "left")
    how = "chosen to fit" if plan.options.scale is None else "stated"
    page.text(
        x,
        strip.y + 0.6,
        f"Scale {m.scale.text} ({how})   scale bar {length:g} {units}",
        _T_BODY,
        bold=True,
    )
    # +y arrow (the drawing's north) at the right end.
    ax = strip.right - 6.0
    p.setPen(QPen(_INK, 0.35))
    p.drawLine(QPointF(ax, strip.bottom - 1.5), QPointF(ax, strip.y + 3.0))
    head = QPainterPath(QPointF(ax, strip.y + 1.5))
    head.lineTo(ax - 1.2, strip.y + 4.0)
    head.lineTo(ax + 1.2, strip.y + 4.0)
    head.closeSubpath()
    p.fillPath(head, QBrush(_INK))
    page.text(ax - 2.0, strip.y + 4.5, "+y", _T_BODY, bold=True, align="right")
    page.text(
        ax - 2.0,
        strip.y + 4.5 + _T_BODY * _LINE,
        "plan view from above",
        _T_GRID,
        _SLATE,
        align="right",
    )
    note = plan.content.underlay_note
    if note and plan.options.underlay:
        page.text(
            strip.x + bar_w + 30.0,
            y + 2.0,
            page.m.elide(note, strip.w - bar_w - 70.0, _T_GRID),
            _T_GRID,
            _SLATE,
        )
    _ = fm


def _paint_legend(page: _Page, box: Box, rows: list[LegendEntry]) -> float:
    """Legend rows from the top of ``box`` (in two columns when one is too short and the
    box is wide enough); returns the height used."""
    row = 3.4
    page.text(box.x, box.y, "Legend", _T_HEAD, bold=True)
    top = box.y + _T_HEAD * _LINE + 0.5
    need = legend_height(rows) - (top - box.y)
    columns = 2 if need > box.bottom - top and box.w >= 90.0 else 1
    cw = (box.w - 3.0 * (columns - 1)) / columns
    col, y = 0, top
    for n, e in enumerate(rows):
        h = row + (0.6 if e.kind == "header" else 0.0)
        if y + h > box.bottom:
            if col + 1 < columns:
                col, y = col + 1, top
            else:
                page.text(
                    box.x + col * (cw + 3.0),
                    y,
                    f"… {len(rows) - n} more rows than room",
                    _T_GRID,
                    _WARN,
                    italic=True,
                )
                break
        x = box.x + col * (cw + 3.0)
        if e.kind == "header":
            y += 0.6
            page.text(x, y, page.m.elide(e.text, cw, _T_BODY, True), _T_BODY, bold=True)
            y += row
            continue
        sample = QRectF(x + 0.5, y + 0.2, 8.0, 2.6)
        dev = page.p.transform().mapRect(sample)
        page.p.save()
        page.p.resetTransform()
        paint_sample(page.p, e, dev, page.ink)
        page.p.restore()
        page.text(x + 10.5, y + 0.1, page.m.elide(e.text, cw - 11.0, _T_BODY), _T_BODY)
        y += row
    return y - box.y


def legend_height(rows: list[LegendEntry]) -> float:
    return _T_HEAD * _LINE + 0.5 + sum(3.4 + (0.6 if e.kind == "header" else 0.0) for e in rows)


def _paint_summary(page: _Page, plan: SheetPlan, box: Box, dry: bool = False) -> float:
    s = plan.content.summary
    ink, warn = _INK, _WARN
    items: list[tuple[str, float, bool, QColor, float]] = [("Summary", _T_HEAD, True, ink, 0.0)]
    items.append((s.counts[0].upper() + s.counts[1:], _T_BODY, True, ink, 0.0))

    def part(title: str, lines: list[str], none: str, bad: bool) -> None:
        items.append((title, _T_BODY, True, ink, 0.0))
        if not lines:
            items.append((none, _T_BODY, False, ink, 2.0))
        for line in lines:
            items.append((f"• {line}", _T_BODY, False, warn if bad else ink, 2.0))

    part("Failing targets", s.failing, "none", True)
    part(
        "Colliding moves", s.moves, "none" if plan.content.cell.sequences else "no sequences", True
    )
    part(
        "Shared zones needing an interlock",
        s.zones,
        "none" if len(plan.content.cell.arms) > 1 else "one arm only",
        True,
    )
    part("Cycle time (fastest plan)", s.cycles, "no sequences", False)
    part("Placement tolerance", s.placement, "no arms", False)
    return page.flow(box, items, dry)


def _paint_table(
    page: _Page, plan: SheetPlan, box: Box, start: int, stop: int, continued: bool
) -> None:
    rows, cell = plan.content.rows, plan.content.cell
    ts = plan.table_size
    title = "Targets" + (" (continued)" if continued else "")
    title += f": rows {start + 1}–{stop} of {len(rows)}" if len(rows) else ": none"
    page.text(box.x, box.y, title, _T_HEAD, bold=True)
    y = box.y + _T_HEAD * _LINE + 1.0
    xs, x = [], box.x
    for _k, _h, share, _n in TABLE_COLUMNS:
        xs.append(x)
        x += share * box.w
    xs.append(box.right)
    units = cell.units
    heads = {
        "position": f"position x, y ({units})",
        "limit": "limit margin (°)",
        "reach": f"reach margin ({units})",
        "clearance": f"clearance ({units})",
        "q1": "q1 (°)",
        "q2": "q2 (°)",
    }
    hh = _header_height(ts)
    page.rect(Box(box.x, y, box.w, hh), 0.0, fill=mixed(style.PALETTE["fog"], 0.35))
    for j, (k, h, _s, numeric) in enumerate(TABLE_COLUMNS):
        words = page.m.wrap(heads.get(k, h), xs[j + 1] - xs[j] - 1.5, ts, True)[:2]
        for n, w in enumerate(words):
            tx = xs[j + 1] - 0.8 if numeric else xs[j] + 0.8
            page.text(
                tx,
                y + 0.6 + n * ts * _LINE,
                w,
                ts,
                bold=True,
                align="right" if numeric else "left",
            )
    page.line(box.x, y + hh, box.right, y + hh, 0.35)
    y += hh
    dpm = page.dpm
    for r in range(start, stop):
        row = rows[r]
        lines = plan.row_lines[r]
        rh = _row_height(len(lines), ts)
        if not row.feasible:
            page.rect(Box(box.x, y, box.w, rh), 0.0, fill=mixed(style.PALETTE["ember"], 0.07))
        for j, (k, _h, _s, numeric) in enumerate(TABLE_COLUMNS):
            cw = xs[j + 1] - xs[j] - 1.6
            if k == "status":
                # The status marker (the drawing's shape and colour), then the words.
                cx, cy = xs[j] + 2.0, y + 0.4 + ts * _LINE / 2
                dev = page.p.transform().map(QPointF(cx, cy))
                page.p.save()
                page.p.resetTransform()
                paint_markers(
                    page.p,
                    np.array([[dev.x(), dev.y()]]),
                    np.array([row.status]),
                    QTransform(),
                    9.0,
                    page.ink,
                )
                page.p.restore()
                colour = _INK if row.feasible else _WARN
                for n, text in enumerate(lines):
                    page.text(xs[j] + 4.0, y + 0.4 + n * ts * _LINE, text, ts, colour)
                continue
            text = page.m.elide(row.texts.get(k, ""), cw, ts)
            tx = xs[j + 1] - 0.8 if numeric else xs[j] + 0.8
            page.text(tx, y + 0.4, text, ts, align="right" if numeric else "left")
        y += rh
        page.line(box.x, y, box.right, y, 0.1, _SLATE)
    for xv in xs[1:-1]:
        page.line(xv, box.y + _T_HEAD * _LINE + 1.0, xv, y, 0.1, _SLATE)
    _ = dpm


def _paint_caution(page: _Page, box: Box, text: str) -> None:
    page.rect(box, 0.5, _INK)
    inner = box.inset(2.0)
    for size in (3.2, 3.0, 2.8, 2.6, 2.4, 2.2, 2.0, 1.8, 1.6):
        lines = []
        for para in text.split("\n"):
            lines += page.m.wrap(para, inner.w - 2.0, size)
        if (len(lines) + 1) * size * _LINE + 0.5 <= inner.h:
            break
    y = inner.y
    page.text(inner.x, y, "SAFETY CAUTION", size * 1.05, _WARN, bold=True)
    y += size * _LINE * 1.05
    for ln in lines:
        page.text(inner.x, y, ln, size)
        y += size * _LINE


def _paint_title(page: _Page, plan: SheetPlan, sheet: int) -> None:
    t = plan.frame.title
    texts = title_texts(
        plan.content.cell, plan.options, plan.scale, sheet + 1, plan.sheets, plan.content.source
    )
    mandatory = {f.key for f in REVIEW_FIELDS if f.mandatory}
    page.rect(Box(t.x, t.y, t.w, t.h), 0.0, fill=QColor("white"))
    for key, rel in TITLE_FIELDS:
        b = Box(t.x + rel.x, t.y + rel.y, rel.w, rel.h)
        page.rect(b, 0.25)
        label, value = texts[key]
        page.text(b.x + 0.8, b.y + 0.5, page.m.elide(label, b.w - 1.2, _T_LABEL), _T_LABEL, _SLATE)
        vy = b.y + 0.5 + _T_LABEL * _LINE
        if key == "title":
            supp = texts["supplementary_title"][1]
            title = page.m.elide(value, b.w - 1.6, _T_TITLE, True)
            page.text(b.x + 0.8, vy + 0.3, title, _T_TITLE, bold=True)
            if supp:
                page.text(
                    b.x + 0.8,
                    vy + _T_TITLE * _LINE + 0.6,
                    page.m.elide(supp, b.w - 1.6, _T_VALUE),
                    _T_VALUE,
                )
            continue
        if not value:
            shown = "(not given)" if key in mandatory else ""
            page.text(b.x + 0.8, vy, shown, _T_VALUE * 0.9, _WARN, italic=True)
            continue
        size = _T_VALUE if key != "source" else _T_LABEL * 1.2
        page.text(
            b.x + 0.8,
            vy,
            page.m.elide(value, b.w - 1.6, size, key == "sheet"),
            size,
            bold=key in ("sheet", "scale", "identification_number"),
        )
    page.rect(Box(t.x, t.y, t.w, t.h), 0.7)


def paint_sheet(
    painter: QPainter, plan: SheetPlan, sheet: int, dpi: float, clip: bool = True
) -> None:
    """Paint sheet ``sheet`` (0 = the drawing) of a plan; the painter's device has
    ``dpi`` device units per inch, its origin at the paper's top left corner. ``clip``
    False for devices that keep no clip paths (SVG)."""
    painter.save()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    painter.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
    page = _Page(painter, dpi, plan.metrics, clip)
    painter.scale(page.dpm, page.dpm)
    f = plan.frame
    painter.fillRect(QRectF(0, 0, f.width, f.height), QColor("white"))
    if sheet == 0:
        parts = plan.parts
        drawn = _paint_drawing(page, plan)
        legend_rows = drawn.rows
        # Cover what the drawing spilled past the plan (SVG keeps no clip).
        box = parts["plan"]
        white = QColor("white")
        painter.fillRect(QRectF(0, 0, f.width, box.y), white)
        painter.fillRect(QRectF(0, box.bottom, f.width, f.height - box.bottom), white)
        painter.fillRect(QRectF(0, box.y, box.x, box.h), white)
        painter.fillRect(QRectF(box.right, box.y, f.width - box.right, box.h), white)
        page.rect(box, 0.25, _SLATE)
        _drawing_notes(page, plan, drawn)
        _paint_strip(page, plan)
        page.rect(parts["drawing"], 0.35)
        if "legend" in parts:
            _paint_legend(page, parts["legend"], legend_rows)
            _paint_summary(page, plan, parts["summary"])
        else:
            side = parts["side"]
            # The summary first, as long as it needs (at most half); the legend below it.
            need = _paint_summary(page, plan, side, dry=True)
            sh = min(need, max(side.h - legend_height(legend_rows) - 3.0, 0.5 * side.h))
            _paint_summary(page, plan, Box(side.x, side.y, side.w, sh))
            _paint_legend(
                page, Box(side.x, side.y + sh + 3.0, side.w, side.h - sh - 3.0), legend_rows
            )
        if "table" in parts:
            _paint_table(page, plan, parts["table"], 0, len(plan.content.rows), False)
    else:
        for s, a, b in plan.table_pages:
            if s == sheet:
                _paint_table(page, plan, f.content, a, b, a > 0)
    _paint_caution(page, f.caution, plan.content.caution)
    _paint_title(page, plan, sheet)
    page.rect(f.border, 0.7)
    painter.restore()


# ------------------------------------------------------------------------------ files


def _app() -> None:
    """A Qt application for fonts and painting (offscreen when there is no display)."""
    from PySide6.QtGui import QGuiApplication

    if QGuiApplication.instance() is None:
        no_display = not (os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))
        if no_display and not os.environ.get("QT_QPA_PLATFORM"):
            os.environ["QT_QPA_PLATFORM"] = "offscreen"
        _app.keep = QGuiApplication([])  # type: ignore[attr-defined]


_PDF_DPI = 1200


def _title(plan: SheetPlan) -> str:
    return f"{plan.content.cell.name}: layout review sheet"


def pdf_bytes(plan: SheetPlan) -> bytes:
    """Every sheet of a plan as one vector PDF (one page per sheet)."""
    _app()
    buf = QBuffer()
    buf.open(QIODevice.OpenModeFlag.WriteOnly)
    writer = QPdfWriter(buf)
    writer.setResolution(_PDF_DPI)
    f = plan.frame
    size = QPageSize(getattr(QPageSize.PageSizeId, plan.options.paper))
    orientation = (
        QPageLayout.Orientation.Landscape if f.landscape else QPageLayout.Orientation.Portrait
    )
    writer.setPageLayout(QPageLayout(size, orientation, QMarginsF(0, 0, 0, 0)))
    writer.setTitle(_title(plan))
    writer.setCreator("Elbow Room")
    painter = QPainter(writer)
    try:
        for i in range(plan.sheets):
            if i:
                writer.newPage()
            paint_sheet(painter, plan, i, _PDF_DPI)
    finally:
        painter.end()
    return bytes(buf.data())


_SVG_DPI = 254  # 10 user units per mm: sizes in mm come out exact


def svg_bytes(plan: SheetPlan, sheet: int = 0) -> bytes:
    """One sheet as SVG, its width and height given in mm (the paper's)."""
    from PySide6.QtSvg import QSvgGenerator

    _app()
    buf = QBuffer()
    buf.open(QIODevice.OpenModeFlag.WriteOnly)
    gen = QSvgGenerator()
    gen.setOutputDevice(buf)
    f = plan.frame
    w, h = round(f.width * _SVG_DPI / 25.4), round(f.height * _SVG_DPI / 25.4)
    gen.setSize(QSize(w, h))
    gen.setViewBox(QRectF(0, 0, w, h))
    gen.setResolution(_SVG_DPI)
    gen.setTitle(_title(plan))
    gen.setDescription(f"Sheet {sheet + 1} of {plan.sheets}. {plan.content.caution}")
    painter = QPainter(gen)
    try:
        paint_sheet(painter, plan, sheet, _SVG_DPI, clip=False)
    finally:
        painter.end()
    return bytes(buf.data())


def png_size(plan: SheetPlan, dpi: int) -> tuple[int, int]:
    """Pixels of a PNG sheet at ``dpi``."""
    f = plan.frame
    return round(f.width / 25.4 * dpi), round(f.height / 25.4 * dpi)


def png_problem(paper: str, orientation: str, dpi: Any) -> str | None:
    """Why a PNG sheet cannot be made at this resolution (None when it can)."""
    from .layout import paper_size

    ok = isinstance(dpi, int) and not isinstance(dpi, bool)
    if not ok or not DPI_RANGE[0] <= dpi <= DPI_RANGE[1]:
        return f"must be a whole number from {DPI_RANGE[0]} to {DPI_RANGE[1]}"
    w, h = paper_size(paper, orientation)
    pixels = round(w / 25.4 * dpi) * round(h / 25.4 * dpi)
    if pixels > MAX_PNG_PIXELS:
        return (
            f"{paper} at {dpi} dpi is {pixels / 1e6:.0f} million pixels, more than the "
            f"{MAX_PNG_PIXELS // 1_000_000} million a PNG sheet may have"
        )
    return None


def png_bytes(plan: SheetPlan, sheet: int = 0, dpi: int | None = None) -> bytes:
    """One sheet as a PNG at ``dpi`` (default the options' dpi)."""
    _app()
    dpi = int(dpi if dpi is not None else plan.options.dpi)
    problem = png_problem(plan.options.paper, plan.options.orientation, dpi)
    if problem:
        raise ValueError(f"dpi {problem}, got {dpi!r}")
    w, h = png_size(plan, dpi)
    img = QImage(w, h, QImage.Format.Format_RGB32)
    dpm = int(round(dpi / 0.0254))
    img.setDotsPerMeterX(dpm)
    img.setDotsPerMeterY(dpm)
    img.fill(QColor("white"))
    painter = QPainter(img)
    try:
        paint_sheet(painter, plan, sheet, dpi)
    finally:
        painter.end()
    img.setText("Title", _title(plan))
    img.setText("Description", plan.content.caution)
    data = QByteArray()
    out = QBuffer(data)
    out.open(QIODevice.OpenModeFlag.WriteOnly)
    img.save(out, "PNG")
    return bytes(data)


def sheet_paths(path: str | os.PathLike[str], sheets: int) -> list[Path]:
    """Files of a one-sheet-per-file format: ``path`` for the first sheet, ``<stem>-2``,
    ``<stem>-3`` ... beside it for the others.

    Examples
    --------
    >>> [p.name for p in sheet_paths("review.svg", 3)]
    ['review.svg', 'review-2.svg', 'review-3.svg']
    """
    p = Path(path)
    return [p] + [p.with_name(f"{p.stem}-{k}{p.suffix}") for k in range(2, sheets + 1)]


def write_sheets(
    plan: SheetPlan,
    pdf: str | os.PathLike[str] | None = None,
    svg: str | os.PathLike[str] | None = None,
    png: str | os.PathLike[str] | None = None,
    progress: Callable[[Path], None] | None = None,
) -> list[Path]:
    """Write the sheets (each file atomically: an existing file is kept when writing fails).

    Raises
    ------
    OSError
        When a file cannot be written.
    """
    written: list[Path] = []

    def put(target: Path, data: bytes) -> None:
        write_atomic(target, data)
        written.append(target)
        if progress is not None:
            progress(target)

    if pdf is not None:
        put(Path(pdf), pdf_bytes(plan))
    if svg is not None:
        for i, target in enumerate(sheet_paths(svg, plan.sheets)):
            put(target, svg_bytes(plan, i))
    if png is not None:
        for i, target in enumerate(sheet_paths(png, plan.sheets)):
            put(target, png_bytes(plan, i))
    return written

"""Graphics items of the cell canvas, drawn in world coordinates (the cell's units).

Pens are cosmetic (pixel widths) and texts are painted in device space so they
stay readable at any zoom. Items are built once and then updated in place
(``set_*`` methods, ``setPath``), which keeps a drag step cheap.
"""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QFont, QFontMetricsF, QPainterPath, QPen, QTransform
from PySide6.QtWidgets import QGraphicsItem, QGraphicsPathItem

from app import style

from .qtstyle import FixtureLook, colour, cosmetic_pen

__all__ = [
    "polygon_path",
    "geometry_path",
    "polylines_path",
    "translate_rotate",
    "FixtureItem",
    "ArmItem",
    "LabelsItem",
    "ScaleBar",
    "nice_length",
]


def polygon_path(points) -> QPainterPath:
    """A closed path through ``points`` (sequence of (x, y))."""
    xy = np.asarray(points, dtype=float).reshape(-1, 2)
    if len(xy) < 2:
        return QPainterPath()
    xy = np.vstack([xy, xy[:1]])
    return pg.arrayToQPath(xy[:, 0], xy[:, 1], connect="all")


def geometry_path(geom) -> QPainterPath:
    """A QPainterPath for a shapely Polygon or MultiPolygon, holes included.

    All rings go into one path (odd-even fill makes holes empty whatever their
    winding); one path item per region is far cheaper to draw than many.
    """
    rings: list[np.ndarray] = []
    if geom is not None and not geom.is_empty:
        parts = getattr(geom, "geoms", None)
        for poly in parts if parts is not None else (geom,):
            if poly.geom_type != "Polygon" or poly.is_empty:
                continue
            for ring in (poly.exterior, *poly.interiors):
                xy = np.asarray(ring.coords, dtype=float)
                if len(xy) >= 3:
                    rings.append(xy)
    if not rings:
        path = QPainterPath()
        path.setFillRule(Qt.FillRule.OddEvenFill)
        return path
    xy = np.vstack(rings)
    connect = np.ones(len(xy), dtype=np.int32)
    ends = np.cumsum([len(r) for r in rings]) - 1
    connect[ends] = 0
    path = pg.arrayToQPath(xy[:, 0], xy[:, 1], connect=connect)
    path.setFillRule(Qt.FillRule.OddEvenFill)
    return path


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


class FixtureItem(QGraphicsPathItem):
    """A fixture outline: the kind's pattern and edge over a faint solid underlay."""

    def __init__(self, kind: str, look: FixtureLook) -> None:
        super().__init__()
        self.selected = False
        self._under = QGraphicsPathItem(self)
        self._under.setFlag(QGraphicsItem.GraphicsItemFlag.ItemStacksBehindParent, True)
        self._under.setPen(QPen(Qt.PenStyle.NoPen))
        self.set_look(kind, look)
        self._halo = QGraphicsPathItem(self)
        self._halo.setFlag(QGraphicsItem.GraphicsItemFlag.ItemStacksBehindParent, True)
        self._halo.setPen(cosmetic_pen(style.PALETTE["harbour"], 8.0, alpha=0.45))
        self._halo.setVisible(False)

    def set_look(self, kind: str, look: FixtureLook) -> None:
        self.kind, self.look = kind, look
        self.setPen(look.pen)
        self.setBrush(look.brush)
        self._under.setBrush(look.base_brush)

    def set_outline(self, points) -> None:
        path = polygon_path(points)
        self.setPath(path)
        self._under.setPath(path)
        self._halo.setPath(path)

    def set_selected(self, on: bool) -> None:
        self.selected = on
        self._halo.setVisible(on)


class ArmItem(pg.GraphicsObject):
    """An arm base: footprint circle, heading arrow with a rotate handle, and its name."""

    def __init__(self, colour_hex: str) -> None:
        super().__init__()
        self.colour_hex = colour_hex
        self.x = self.y = 0.0
        self.heading = 0.0
        self.radius = 1.0
        self.arrow = 1.0
        self.name = ""
        self.selected = False
        self._font = QFont()
        self._font.setBold(True)

    def set_arm(self, arm, radius: float, arrow: float) -> None:
        self.prepareGeometryChange()
        self.x, self.y, self.heading = float(arm.x), float(arm.y), float(arm.heading_deg)
        self.radius, self.arrow, self.name = float(radius), float(arrow), arm.name
        self.update()

    def set_selected(self, on: bool) -> None:
        if on != self.selected:
            self.selected = on
            self.update()

    def handle_point(self) -> tuple[float, float]:
        """World position of the rotate handle at the tip of the heading arrow."""
        h = math.radians(self.heading)
        return self.x + self.arrow * math.cos(h), self.y + self.arrow * math.sin(h)

    def boundingRect(self) -> QRectF:
        # Generous: the name and pixel-sized marks extend past the footprint.
        r = max(self.radius, self.arrow) * 3.0
        return QRectF(self.x - r, self.y - r, 2 * r, 2 * r)

    def paint(self, painter, option, widget=None) -> None:
        painter.setRenderHint(painter.RenderHint.Antialiasing, True)
        c = self.colour_hex
        centre = QPointF(self.x, self.y)
        if self.selected:
            painter.setPen(cosmetic_pen(style.PALETTE["harbour"], 9.0, alpha=0.45))
            painter.setBrush(Qt.BrushStyle.NoBrush)
            painter.drawEllipse(centre, self.radius, self.radius)
        painter.setPen(cosmetic_pen(c, 2.0))
        painter.setBrush(QBrush(colour(c, 0.30)))
        painter.drawEllipse(centre, self.radius, self.radius)
        hx, hy = self.handle_point()
        tip = QPointF(hx, hy)
        painter.setPen(cosmetic_pen(c, 2.5))
        painter.drawLine(centre, tip)
        # Arrow head, handle, centre cross and name in device pixels.
        tr = painter.transform()
        dc, dt = tr.map(centre), tr.map(tip)
        edge = tr.map(QPointF(self.x + self.radius, self.y))
        rad_px = math.hypot(edge.x() - dc.x(), edge.y() - dc.y())
        painter.save()
        painter.resetTransform()
        ang = math.atan2(dt.y() - dc.y(), dt.x() - dc.x())
        pen = QPen(colour(c))
        pen.setWidthF(2.5)
        painter.setPen(pen)
        head = 10.0
        for s in (-1, 1):
            a = ang + math.pi + s * 0.45
            painter.drawLine(dt, dt + QPointF(head * math.cos(a), head * math.sin(a)))
        painter.setBrush(QBrush(QColor(style.PAPER)))
        painter.drawEllipse(dt, 5.5, 5.5)  # rotate handle
        painter.setPen(QPen(QColor(style.INK), 1.5))
        painter.drawLine(dc + QPointF(-5, 0), dc + QPointF(5, 0))
        painter.drawLine(dc + QPointF(0, -5), dc + QPointF(0, 5))
        painter.setFont(self._font)
        # Name on the side away from the heading arrow, clear of the footprint.
        fm = QFontMetricsF(self._font)
        w, h = fm.horizontalAdvance(self.name), fm.height()
        ux, uy = -math.cos(ang), -math.sin(ang)
        off = max(rad_px, 6.0) + 6.0
        cx = dc.x() + ux * (off + w / 2 * abs(ux) + h / 2 * abs(uy))
        cy = dc.y() + uy * (off + w / 2 * abs(ux) + h / 2 * abs(uy))
        p = QPointF(cx - w / 2, cy - h / 2 + fm.ascent())
        halo = QColor(style.PAPER)
        halo.setAlphaF(0.85)
        painter.fillRect(QRectF(p.x() - 2, p.y() - fm.ascent(), w + 4, fm.height()), halo)
        painter.setPen(QColor(c))
        painter.drawText(p, self.name)
        painter.restore()


class LabelsItem(pg.GraphicsObject):
    """Target names, with the failure reason on a second line, painted at pixel size.

    One item for all targets: painting a few hundred strings from a list is far
    cheaper than one text item per target, and an update is a single call.
    """

    def __init__(self) -> None:
        super().__init__()
        self._xy = np.zeros((0, 2))
        self._names: list[str] = []
        self._reasons: list[str] = []
        self._font = QFont()
        self._font.setPointSizeF(8.0)
        self._reason_font = QFont(self._font)
        self._reason_font.setBold(True)
        self._fm = QFontMetricsF(self._font)
        self._rfm = QFontMetricsF(self._reason_font)
        self.max_labels = 150

    def set_labels(self, xy: np.ndarray, names: list[str], reasons: list[str]) -> None:
        xy = np.asarray(xy, dtype=float).reshape(-1, 2)
        if (
            names == self._names
            and reasons == self._reasons
            and xy.shape == self._xy.shape
            and np.array_equal(xy, self._xy)
        ):
            return
        self.prepareGeometryChange()
        self._xy, self._names, self._reasons = xy, list(names), list(reasons)
        self.update()

    def viewRangeChanged(self) -> None:
        self.prepareGeometryChange()

    def boundingRect(self) -> QRectF:
        # Text extends in pixels past its anchor, so claim the whole visible range.
        vr = self.viewRect()
        return QRectF(vr) if vr is not None else QRectF()

    def paint(self, painter, option, widget=None) -> None:
        if not len(self._xy):
            return
        vr = self.viewRect()
        xy = self._xy
        idx = np.arange(len(xy))
        if vr is not None:
            inside = (
                (xy[:, 0] >= vr.left())
                & (xy[:, 0] <= vr.right())
                & (xy[:, 1] >= vr.top())
                & (xy[:, 1] <= vr.bottom())
            )
            idx = idx[inside]
        failing = np.array([bool(self._reasons[i]) for i in idx], dtype=bool)
        show_names = True
        # When crowded, names of feasible targets give way so failure reasons stay legible.
        if len(idx) > self.max_labels:
            idx = idx[failing][: self.max_labels]
            failing = np.ones(len(idx), dtype=bool)
            show_names = len(idx) <= self.max_labels // 2
        tr = painter.transform()
        painter.save()
        painter.resetTransform()
        ink = QColor(style.INK)
        bad = QColor(style.PALETTE["ember"]).darker(140)
        halo = QColor(style.PAPER)
        halo.setAlphaF(0.8)
        h = self._fm.height()
        asc = self._fm.ascent()
        placer = _Placer(cell=24.0)
        # Failure reasons claim space first: they are what a designer must not miss.
        order = sorted(range(len(idx)), key=lambda k: not failing[k])
        for k in order:
            i = idx[k]
            anchor = tr.map(QPointF(xy[i, 0], xy[i, 1]))
            placer.block(anchor.x() - 7, anchor.y() - 7, anchor.x() + 7, anchor.y() + 7)
        for k in order:
            i = idx[k]
            name = self._names[i] if show_names else ""
            reason = self._reasons[i] if failing[k] else ""
            w = max(
                self._fm.horizontalAdvance(name) if name else 0.0,
                self._rfm.horizontalAdvance(reason) if reason else 0.0,
            )
            rows = int(bool(name)) + int(bool(reason))
            if not rows:
                continue
            bh = h * rows
            a = tr.map(QPointF(xy[i, 0], xy[i, 1]))
            # Right, left, below, above the marker: the first free spot wins.
            spots = (
                (a.x() + 9.0, a.y() - h / 2),
                (a.x() - 9.0 - w, a.y() - h / 2),
                (a.x() - w / 2, a.y() + 9.0),
                (a.x() - w / 2, a.y() - 9.0 - bh),
            )
            spot = None
            for sx, sy in spots:
                if placer.free(sx, sy, sx + w, sy + bh):
                    spot = (sx, sy)
                    break
            if spot is None:
                if not reason:
                    continue  # a crowded name gives way; the tooltip and tables still show it
                spot = spots[0]
            sx, sy = spot
            placer.block(sx, sy, sx + w, sy + bh)
            painter.fillRect(QRectF(sx - 2, sy, w + 4, bh + 1), halo)
            p = QPointF(sx, sy + asc)
            if name:
                painter.setPen(ink)
                painter.setFont(self._font)
                painter.drawText(p, name)
                p = p + QPointF(0, h)
            if reason:
                painter.setPen(bad)
                painter.setFont(self._reason_font)
                painter.drawText(p, reason)
        painter.restore()


class _Placer:
    """Occupied screen rectangles in coarse buckets, for greedy label placement."""

    def __init__(self, cell: float) -> None:
        self.cell = cell
        self.buckets: dict[tuple[int, int], list[tuple[float, float, float, float]]] = {}

    def _keys(self, x0: float, y0: float, x1: float, y1: float):
        c = self.cell
        for bx in range(int(math.floor(x0 / c)), int(math.floor(x1 / c)) + 1):
            for by in range(int(math.floor(y0 / c)), int(math.floor(y1 / c)) + 1):
                yield bx, by

    def free(self, x0: float, y0: float, x1: float, y1: float) -> bool:
        for key in self._keys(x0, y0, x1, y1):
            for a0, b0, a1, b1 in self.buckets.get(key, ()):
                if a0 < x1 and x0 < a1 and b0 < y1 and y0 < b1:
                    return False
        return True

    def block(self, x0: float, y0: float, x1: float, y1: float) -> None:
        r = (x0, y0, x1, y1)
        for key in self._keys(x0, y0, x1, y1):
            self.buckets.setdefault(key, []).append(r)


def nice_length(target: float) -> float:
    """Largest 1, 2 or 5 times a power of ten not above ``target`` (> 0).

    Examples
    --------
    >>> nice_length(730.0), nice_length(0.31)
    (500.0, 0.3)
    """
    if not (target > 0 and math.isfinite(target)):
        return 1.0
    p = 10.0 ** math.floor(math.log10(target))
    for m in (5.0, 2.0, 1.0):
        if m * p <= target * (1 + 1e-12):
            return float(f"{m * p:.12g}")
    return p


class ScaleBar(pg.GraphicsObject):
    """A scale bar in the view's lower left corner, labelled in the cell's units.

    Parented to the ViewBox itself (not its scaled child group), so it paints in
    pixels; its length is a round number of units about 120 px long.
    """

    def __init__(self, vb: pg.ViewBox, units: str) -> None:
        super().__init__()
        self.vb = vb
        self.units = units
        self.setParentItem(vb)
        self.setZValue(1000)
        self._font = QFont()
        self._font.setPointSizeF(8.5)
        self.length = 0.0
        self._px = 0.0
        vb.sigRangeChanged.connect(self._relayout)
        vb.sigResized.connect(self._relayout)

    def _relayout(self, *args) -> None:
        px = self.vb.viewPixelSize()[0] if self.vb.width() > 0 else 0.0
        if px <= 0 or not math.isfinite(px):
            return
        self.prepareGeometryChange()
        self.length = nice_length(120.0 * px)
        self._px = self.length / px
        self.setPos(16.0, self.vb.height() - 18.0)
        self.update()

    def text(self) -> str:
        return f"{self.length:g} {self.units}"

    def boundingRect(self) -> QRectF:
        return QRectF(-6, -26, self._px + 90, 34)

    def paint(self, painter, option, widget=None) -> None:
        if self._px <= 0:
            return
        w = self._px
        halo = QColor(style.PAPER)
        halo.setAlphaF(0.85)
        painter.fillRect(QRectF(-4, -22, w + 8, 28), halo)
        pen = QPen(QColor(style.INK), 2.0)
        painter.setPen(pen)
        painter.drawLine(QPointF(0, 0), QPointF(w, 0))
        for x in (0.0, w / 2, w):
            tick = 6.0 if x != w / 2 else 3.5
            painter.drawLine(QPointF(x, 0), QPointF(x, -tick))
        painter.setFont(self._font)
        painter.drawText(QRectF(0, -22, w, 14), Qt.AlignmentFlag.AlignCenter, self.text())

"""Graphics items of the cell canvas, drawn in world coordinates (the cell's units).

Pens are cosmetic (pixel widths) and texts are painted in device space so they
stay readable at any zoom. Items are built once and then updated in place
(``set_*`` methods), which keeps a drag step cheap.
"""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QFont, QFontMetricsF, QPainterPath, QPen, QTransform
from PySide6.QtWidgets import QGraphicsPathItem

from app import style

from .qtstyle import FixtureLook, colour, cosmetic_pen

__all__ = ["FixtureItem", "ArmItem", "LabelsItem", "polygon_path", "geometry_path"]


def polygon_path(points) -> QPainterPath:
    """A closed path through ``points`` (sequence of (x, y))."""
    path = QPainterPath()
    pts = list(points)
    if not pts:
        return path
    path.moveTo(float(pts[0][0]), float(pts[0][1]))
    for x, y in pts[1:]:
        path.lineTo(float(x), float(y))
    path.closeSubpath()
    return path


def geometry_path(geom) -> QPainterPath:
    """A QPainterPath for a shapely Polygon/MultiPolygon/GeometryCollection (holes included).

    Uses the odd-even fill rule so holes come out empty whatever their winding.
    """
    path = QPainterPath()
    path.setFillRule(Qt.FillRule.OddEvenFill)
    if geom is None or geom.is_empty:
        return path
    polys = getattr(geom, "geoms", None)
    for poly in polys if polys is not None else (geom,):
        if poly.geom_type == "Polygon":
            for ring in (poly.exterior, *poly.interiors):
                xy = np.asarray(ring.coords)
                if len(xy) >= 3:
                    path.addPolygon(_qpolygon(xy))
                    path.closeSubpath()
        elif poly.geom_type == "MultiPolygon" or poly.geom_type == "GeometryCollection":
            path.addPath(geometry_path(poly))
    return path


def _qpolygon(xy: np.ndarray):
    from PySide6.QtGui import QPolygonF

    return QPolygonF([QPointF(float(x), float(y)) for x, y in xy])


class FixtureItem(QGraphicsPathItem):
    """A fixture outline: a faint solid underlay plus the kind's pattern and edge."""

    def __init__(self, look: FixtureLook) -> None:
        super().__init__()
        self.look = look
        self.selected = False
        self.setPen(look.pen)
        self.setBrush(look.brush)

    def set_outline(self, points) -> None:
        self.setPath(polygon_path(points))

    def set_selected(self, on: bool) -> None:
        if on != self.selected:
            self.selected = on
            self.update()

    def paint(self, painter, option, widget=None) -> None:
        path = self.path()
        painter.fillPath(path, self.look.base_brush)
        painter.fillPath(path, self.look.brush)
        if self.selected:
            painter.strokePath(path, cosmetic_pen(style.PALETTE["lemon"], 7.0, alpha=0.9))
        painter.strokePath(path, self.look.pen)


def _device_text(painter, points_world, draw) -> None:
    """Call ``draw(painter, device_point, i)`` with the painter reset to device pixels."""
    tr = painter.transform()
    painter.save()
    painter.resetTransform()
    for i, (x, y) in enumerate(points_world):
        draw(painter, tr.map(QPointF(x, y)), i)
    painter.restore()


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
        r = max(self.radius, self.arrow) * 1.6
        return QRectF(self.x - r, self.y - r, 2 * r, 2 * r)

    def paint(self, painter, option, widget=None) -> None:
        painter.setRenderHint(painter.RenderHint.Antialiasing, True)
        c = self.colour_hex
        centre = QPointF(self.x, self.y)
        if self.selected:
            painter.setPen(cosmetic_pen(style.PALETTE["lemon"], 8.0, alpha=0.9))
            painter.setBrush(Qt.BrushStyle.NoBrush)
            painter.drawEllipse(centre, self.radius, self.radius)
        painter.setPen(cosmetic_pen(c, 2.0))
        painter.setBrush(QBrush(colour(c, 0.25)))
        painter.drawEllipse(centre, self.radius, self.radius)
        hx, hy = self.handle_point()
        tip = QPointF(hx, hy)
        painter.setPen(cosmetic_pen(c, 2.5))
        painter.drawLine(centre, tip)
        # Device-space arrow head, handle and name keep their pixel size.
        tr = painter.transform()
        dc, dt = tr.map(centre), tr.map(tip)
        painter.save()
        painter.resetTransform()
        ang = math.atan2(dt.y() - dc.y(), dt.x() - dc.x())
        head = 10.0
        pen = QPen(colour(c))
        pen.setWidthF(2.5)
        painter.setPen(pen)
        for s in (-1, 1):
            a = ang + math.pi + s * 0.45
            painter.drawLine(dt, dt + QPointF(head * math.cos(a), head * math.sin(a)))
        painter.setBrush(QBrush(QColor(style.PAPER)))
        painter.drawEllipse(dt, 5.0, 5.0)  # rotate handle
        painter.drawLine(dc + QPointF(-4, 0), dc + QPointF(4, 0))
        painter.drawLine(dc + QPointF(0, -4), dc + QPointF(0, 4))
        painter.setFont(self._font)
        painter.setPen(QColor(style.INK))
        rad_px = abs(tr.map(QPointF(self.x + self.radius, self.y)).x() - dc.x())
        painter.drawText(dc + QPointF(rad_px + 6, -rad_px - 2), self.name)
        painter.restore()


class LabelsItem(pg.GraphicsObject):
    """Target names (and failure reasons on a second line) painted at pixel size.

    One item for all targets: painting ~500 strings from a list is much cheaper
    than 500 text items, and updates are a single ``set_labels`` call.
    """

    def __init__(self) -> None:
        super().__init__()
        self._xy = np.zeros((0, 2))
        self._names: list[str] = []
        self._reasons: list[str] = []
        self._font = QFont()
        self._font.setPointSizeF(8.0)
        self._reason_font = QFont(self._font)
        self._reason_font.setItalic(True)
        self._fm = QFontMetricsF(self._font)
        self._max_labels = 160
        self._bounds = QRectF()

    def set_labels(self, xy: np.ndarray, names: list[str], reasons: list[str]) -> None:
        self.prepareGeometryChange()
        self._xy = np.asarray(xy, dtype=float).reshape(-1, 2)
        self._names = list(names)
        self._reasons = list(reasons)
        self.update()

    def viewRangeChanged(self) -> None:
        self.prepareGeometryChange()

    def boundingRect(self) -> QRectF:
        # Text extends in pixels past its anchor, so cover the whole visible range.
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
        # When crowded, names of feasible targets give way so failure reasons stay legible.
        if len(idx) > self._max_labels:
            idx = idx[failing][: self._max_labels]
            failing = np.ones(len(idx), dtype=bool)
        tr = painter.transform()
        painter.save()
        painter.resetTransform()
        painter.setRenderHint(painter.RenderHint.TextAntialiasing, True)
        ink = QColor(style.INK)
        halo = QColor(style.PAPER)
        halo.setAlphaF(0.8)
        h = self._fm.height()
        for k, i in enumerate(idx):
            p = tr.map(QPointF(xy[i, 0], xy[i, 1])) + QPointF(8.0, -3.0)
            name = self._names[i]
            reason = self._reasons[i] if failing[k] else ""
            w = self._fm.horizontalAdvance(name)
            if reason:
                w = max(w, self._fm.horizontalAdvance(reason) * 1.05)
            rows = 2 if reason else 1
            painter.fillRect(QRectF(p.x() - 1, p.y() - h + 2, w + 3, h * rows + 1), halo)
            painter.setPen(ink)
            painter.setFont(self._font)
            painter.drawText(p, name)
            if reason:
                painter.setFont(self._reason_font)
                painter.drawText(p + QPointF(0, h), reason)
        painter.restore()


def translate_rotate(x0: float, y0: float, h0: float, x: float, y: float, h: float) -> QTransform:
    """Transform taking geometry drawn for base pose (x0, y0, h0) to pose (x, y, h)."""
    t = QTransform()
    t.translate(x, y)
    t.rotate(h - h0)
    t.translate(-x0, -y0)
    return t

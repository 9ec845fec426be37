"""Painter code shared by the canvas and drawing sheets.

The canvas's looks (pens, brushes, marker shapes) are made for the screen: cosmetic pens
a number of pixels wide and Qt's pattern brushes, whose stripes are 8 device pixels
apart. On paper a device pixel is 1/1200 inch (PDF) or a pixel of a PNG at any DPI, so a
sheet paints the same looks through a :class:`PaperInk`: a canvas pixel becomes
:data:`PX_MM` millimetres of paper, pens keep their style and colour at that width, and
pattern brushes become real stripes (vector areas, so every output format keeps them).
:class:`ScreenInk` paints them as the canvas does.

The functions here draw engine results (arrays) with a given world-to-device transform:
:func:`paint_markers` (target status markers), :func:`paint_ghosts` (ghost poses) and
:func:`paint_polylines` (an underlay's lines). Layers whose items are plain path items
have their own ``paint_*`` function in their module, using an ink.
"""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from pyqtgraph.graphicsItems.ScatterPlotItem import drawSymbol
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QPainter,
    QPainterPath,
    QPen,
    QPolygonF,
    QTransform,
)

from app import style
from kinematics.fk import joint_points
from kinematics.ik import ELBOWS

from .paths import polylines_path

__all__ = [
    "PX_MM",
    "ScreenInk",
    "PaperInk",
    "paint_markers",
    "paint_ghosts",
    "paint_polylines",
]

#: Paper millimetres one canvas pixel becomes on a sheet (about 100 pixels per inch).
PX_MM = 0.25
_STRIPE_PX = 6.0  # pattern stripes apart, canvas pixels (Qt's 8 px pattern cell at 45°)
_STRIPE_W_PX = 0.9  # width of a pattern stripe, canvas pixels
_DOT_PX = 4.0  # dots of the "dense" pattern apart


class ScreenInk:
    """Paints as the canvas does: pens and brushes as they are (1 canvas pixel = 1 device
    pixel)."""

    px = 1.0

    def pen(self, pen: QPen) -> QPen:
        """The pen as it goes on this device."""
        return pen

    def area(
        self,
        painter: QPainter,
        path: QPainterPath,
        pen: QPen | None,
        brush: QBrush | None,
        under: QBrush | None = None,
    ) -> None:
        """Fill ``path`` (``under`` first, then ``brush``) and outline it with ``pen``."""
        if under is not None:
            painter.fillPath(path, under)
        painter.setPen(pen if pen is not None else Qt.PenStyle.NoPen)
        painter.setBrush(brush if brush is not None else Qt.BrushStyle.NoBrush)
        painter.drawPath(path)

    def stroke(self, painter: QPainter, path: QPainterPath, pen: QPen) -> None:
        """Draw the lines of ``path`` (no fill)."""
        painter.setPen(pen)
        painter.setBrush(Qt.BrushStyle.NoBrush)
        painter.drawPath(path)


class PaperInk(ScreenInk):
    """Paints the canvas's looks on paper (see the module docstring).

    Parameters
    ----------
    device_per_mm : float
        Device units per millimetre of paper (the painter's device).
    px_mm : float
        Paper millimetres per canvas pixel.
    clip : bool
        The device keeps clip paths (PDF, images): pattern stripes are clipped to the
        shape. Without (SVG) they are cut to it as areas, outline by outline.
    """

    def __init__(self, device_per_mm: float, px_mm: float = PX_MM, clip: bool = True) -> None:
        self.device_per_mm = float(device_per_mm)
        self.px = float(device_per_mm) * px_mm  # device units per canvas pixel
        self.clip = clip

    def pen(self, pen: QPen) -> QPen:
        out = QPen(pen)
        width = pen.widthF() if pen.widthF() > 0 else 1.0
        if pen.isCosmetic():
            out.setCosmetic(False)
        out.setWidthF(width * self.px)
        return out

    def _device(self, painter: QPainter, path: QPainterPath) -> QPainterPath:
        return painter.transform().map(path)

    def area(self, painter, path, pen, brush, under=None) -> None:
        dev = self._device(painter, path)
        painter.save()
        painter.resetTransform()
        painter.setPen(Qt.PenStyle.NoPen)
        if under is not None and under.style() != Qt.BrushStyle.NoBrush:
            painter.fillPath(dev, under)
        if brush is not None and brush.style() != Qt.BrushStyle.NoBrush:
            if brush.style() == Qt.BrushStyle.SolidPattern:
                painter.fillPath(dev, brush)
            else:
                self._fill_pattern(painter, dev, brush)
        if pen is not None and pen.style() != Qt.PenStyle.NoPen:
            painter.setPen(self.pen(pen))
            painter.setBrush(Qt.BrushStyle.NoBrush)
            painter.drawPath(dev)
        painter.restore()

    def stroke(self, painter, path, pen) -> None:
        dev = self._device(painter, path)
        painter.save()
        painter.resetTransform()
        painter.setPen(self.pen(pen))
        painter.setBrush(Qt.BrushStyle.NoBrush)
        painter.drawPath(dev)
        painter.restore()

    def _fill_pattern(self, painter: QPainter, dev: QPainterPath, brush: QBrush) -> None:
        fill = QBrush(brush.color())
        if self.clip:
            painter.save()
            painter.setClipPath(dev, Qt.ClipOperation.IntersectClip)
            painter.fillPath(self.pattern(dev.boundingRect(), brush.style()), fill)
            painter.restore()
            return
        if dev.fillRule() == Qt.FillRule.WindingFill:
            # A union of outlines (bodies): each one cut on its own, the stripes line up.
            for poly in dev.toSubpathPolygons():
                part = QPainterPath()
                part.addPolygon(poly)
                marks = self.pattern(part.boundingRect(), brush.style())
                painter.fillPath(part.intersected(marks), fill)
            return
        painter.fillPath(dev.intersected(self.pattern(dev.boundingRect(), brush.style())), fill)

    def pattern(self, box: QRectF, brush_style: Qt.BrushStyle) -> QPainterPath:
        """The stripes (or dots) of a pattern brush over a device box, as an area; on a
        grid fixed to the page, so neighbouring shapes' stripes line up."""
        if box.isEmpty():
            return QPainterPath()
        S = Qt.BrushStyle
        directions = {
            S.BDiagPattern: (45.0,),
            S.FDiagPattern: (-45.0,),
            S.DiagCrossPattern: (45.0, -45.0),
            S.CrossPattern: (0.0, 90.0),
            S.HorPattern: (0.0,),
            S.VerPattern: (90.0,),
        }.get(brush_style)
        marks = QPainterPath()
        if directions is None:  # dense patterns: a grid of dots
            step, d = _DOT_PX * self.px, 1.0 * self.px
            i0, i1 = math.floor(box.left() / step), math.ceil(box.right() / step)
            j0, j1 = math.floor(box.top() / step), math.ceil(box.bottom() / step)
            for i in range(i0, i1 + 1):
                off = step / 2 if i % 2 else 0.0
                for j in range(j0 - 1, j1 + 1):
                    marks.addRect(QRectF(i * step - d / 2, j * step + off - d / 2, d, d))
            return marks
        step, w = _STRIPE_PX * self.px, _STRIPE_W_PX * self.px
        corners = [box.topLeft(), box.topRight(), box.bottomLeft(), box.bottomRight()]
        for angle in directions:
            a = math.radians(angle)
            ux, uy = math.cos(a), -math.sin(a)  # along the stripe (device y is down)
            nx, ny = -uy, ux  # across
            offs = [c.x() * nx + c.y() * ny for c in corners]
            along = [c.x() * ux + c.y() * uy for c in corners]
            t0, t1 = min(along) - step, max(along) + step
            for k in range(math.floor(min(offs) / step) - 1, math.ceil(max(offs) / step) + 1):
                o = k * step
                poly = QPolygonF(
                    [
                        QPointF(nx * o + ux * t0, ny * o + uy * t0),
                        QPointF(nx * o + ux * t1, ny * o + uy * t1),
                        QPointF(nx * (o + w) + ux * t1, ny * (o + w) + uy * t1),
                        QPointF(nx * (o + w) + ux * t0, ny * (o + w) + uy * t0),
                    ]
                )
                marks.addPolygon(poly)
                marks.closeSubpath()
        marks.setFillRule(Qt.FillRule.WindingFill)
        return marks


def _device_points(tr: QTransform, xy: np.ndarray) -> np.ndarray:
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    return np.column_stack(
        [
            tr.m11() * xy[:, 0] + tr.m21() * xy[:, 1] + tr.dx(),
            tr.m12() * xy[:, 0] + tr.m22() * xy[:, 1] + tr.dy(),
        ]
    )


def paint_markers(
    painter: QPainter,
    xy: np.ndarray,
    status: np.ndarray,
    to_device: QTransform,
    size_px: float = 13.0,
    ink: ScreenInk | None = None,
    looks: dict[int, tuple[object, str]] | None = None,
    outline: tuple[str, float] | None = None,
) -> set[int]:
    """Status markers (shape and colour per status, :data:`app.style.STATUS_STYLES`) at
    world points, ``size_px`` canvas pixels across. Returns the statuses drawn.

    ``looks`` maps codes to (pyqtgraph symbol, fill colour) instead; ``outline`` (colour,
    width in canvas pixels) draws the symbols as rings of that pen (fill "" = none)."""
    ink = ink or ScreenInk()
    if looks is None:
        looks = {int(st): (ss.symbol, ss.colour) for st, ss in style.STATUS_STYLES.items()}
    status = np.asarray(status, dtype=np.int64).reshape(-1)
    dev = _device_points(to_device * painter.transform(), xy)
    size = size_px * ink.px
    drawn: set[int] = set()
    painter.save()
    painter.resetTransform()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    for st in np.unique(status).tolist():
        symbol, fill = looks[int(st)]
        if outline is not None:
            pen = QPen(QColor(outline[0]), outline[1] / size_px)
        else:
            pen = QPen(QColor(style.INK), 1.0 / size_px)
        brush = QBrush(QColor(fill)) if fill else QBrush(Qt.BrushStyle.NoBrush)
        for x, y in dev[status == st]:
            painter.save()
            painter.translate(float(x), float(y))
            drawSymbol(painter, symbol, size, pen, brush)
            painter.restore()
        drawn.add(int(st))
    painter.restore()
    return drawn


def paint_ghosts(
    painter: QPainter,
    arm,
    ev,
    show: np.ndarray,
    to_device: QTransform,
    ink: ScreenInk | None = None,
) -> set[tuple[str, str]]:
    """Ghost poses of one arm's targets (links base - elbow - tool) in the ghost layer's
    pens and roles. Returns the (elbow, role) pairs drawn."""
    from .layers.ghosts import ghost_masks, ghost_pen

    ink = ink or ScreenInk()
    masks = ghost_masks(ev, np.asarray(show, dtype=bool))
    q = ev.ik.q_deg
    drawn: set[tuple[str, str]] = set()
    painter.save()
    painter.setTransform(to_device, True)
    for c in (0, 1):
        for role, m in masks[c].items():
            if not m.any():
                continue
            b, e, t = joint_points(
                arm.a1, arm.a2, q[m, c, 0], q[m, c, 1], arm.x, arm.y, arm.heading_deg
            )
            path = polylines_path(np.stack([b, e, t], axis=1))
            ink.stroke(painter, path, ghost_pen(ELBOWS[c], role))
            drawn.add((ELBOWS[c], role))
    painter.restore()
    return drawn


def paint_polylines(
    painter: QPainter,
    lines,
    to_device: QTransform,
    pen: QPen,
    ink: ScreenInk | None = None,
) -> bool:
    """Open polylines (a sequence of ``(M, 2)`` world arrays) in one pen; True when any."""
    ink = ink or ScreenInk()
    parts = [np.asarray(p, dtype=float).reshape(-1, 2) for p in lines]
    parts = [p for p in parts if len(p) >= 2]
    if not parts:
        return False
    xy = np.concatenate(parts)
    connect = np.ones(len(xy), dtype=np.int32)
    connect[np.cumsum([len(p) for p in parts]) - 1] = 0
    path = pg.arrayToQPath(xy[:, 0], xy[:, 1], connect=connect)
    if path.isEmpty():
        return False
    painter.save()
    painter.setTransform(to_device, True)
    ink.stroke(painter, path, pen)
    painter.restore()
    return True

"""The plan view: the plot widget with a cached background, its grid and scale bar.

The grid and every fixture are painted under all items by ``drawBackground``; Qt keeps
the result as one opaque pixmap (CacheBackground) until the view range or the fixtures
change, so a repaint during a base drag costs a single copy for them.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFont, QPainter, QPen, QTransform
from PySide6.QtWidgets import QGraphicsView

from app import style

from .qtstyle import mixed

__all__ = ["PlanView", "Grid", "ScaleBar", "nice_length"]


def nice_length(target: float) -> float:
    """Largest 1, 2 or 5 times a power of ten not above ``target`` (> 0).

    Examples
    --------
    >>> nice_length(730.0), nice_length(0.31)
    (500.0, 0.2)
    """
    if not (target > 0 and math.isfinite(target)):
        return 1.0
    p = 10.0 ** math.floor(math.log10(target))
    for m in (5.0, 2.0, 1.0):
        if m * p <= target * (1 + 1e-12):
            return float(f"{m * p:.12g}")
    return p


class PlanView(pg.PlotWidget):
    """The plot widget with the plan grid and the fixtures drawn as its cached background.

    ``background_painters`` are called in order with the painter and the world-to-scene
    transform (the grid first, then the fixtures).
    """

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        self.grid: Grid | None = None
        self.background_painters: list[Callable[[QPainter, QTransform], None]] = []
        self.setCacheMode(QGraphicsView.CacheModeFlag.CacheBackground)

    def drawBackground(self, painter, rect) -> None:  # noqa: N802 (Qt name)
        super().drawBackground(painter, rect)
        if self.grid is not None:
            self.grid.paint(painter)
        vb = self.getViewBox()
        if self.background_painters and vb.width() > 0:
            painter.save()
            painter.setClipRect(vb.sceneBoundingRect())
            to_scene = vb.childGroup.sceneTransform()
            for paint in self.background_painters:
                paint(painter, to_scene)
            painter.restore()

    def refresh_background(self) -> None:
        """Repaint the cached background (after the fixtures changed)."""
        self.resetCachedContent()
        self.viewport().update()


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


class Grid:
    """A plan grid in the cell's units: major lines about 110 px apart, minor ones between.

    The axes get the same spacing, so grid lines and tick labels agree.
    """

    def __init__(self, view: PlanView, vb: pg.ViewBox, axes: tuple = ()) -> None:
        self.view = view
        self.vb = vb
        self.axes = axes
        self.major = 100.0
        self.minor = 20.0
        view.grid = self
        vb.sigRangeChanged.connect(self._relayout)
        vb.sigResized.connect(self._relayout)

    def _relayout(self, *args) -> None:
        px = self.vb.viewPixelSize()[0] if self.vb.width() > 0 else 0.0
        if px <= 0 or not math.isfinite(px):
            return
        self.major = nice_length(110.0 * px)
        self.minor = self.major / (4.0 if f"{self.major:e}"[0] == "2" else 5.0)
        if self.minor / px < 10.0:
            self.minor = self.major
        for ax in self.axes:
            ax.setTickSpacing(self.major, self.minor)
        self.view.refresh_background()

    def paint(self, painter) -> None:
        """Paint into the view's background (the painter is in scene coordinates)."""
        vb = self.vb
        if vb.width() <= 0:
            return
        area = vb.sceneBoundingRect()
        painter.save()
        painter.setClipRect(area)
        painter.setRenderHint(painter.RenderHint.Antialiasing, False)
        (x0, x1), (y0, y1) = vb.viewRange()
        o = vb.mapViewToScene(QPointF(0.0, 0.0))
        e = vb.mapViewToScene(QPointF(1.0, 1.0))
        sx, sy = e.x() - o.x(), e.y() - o.y()
        passes = [(self.major, QPen(mixed(style.PALETTE["fog"], 1.0), 0), False)]
        if self.minor < self.major:
            passes.insert(0, (self.minor, QPen(mixed(style.PALETTE["fog"], 0.45), 0), True))
        for step, pen, skip_major in passes:
            painter.setPen(pen)
            xs = np.arange(math.ceil(x0 / step), math.floor(x1 / step) + 1) * step
            ys = np.arange(math.ceil(y0 / step), math.floor(y1 / step) + 1) * step
            for v in xs:
                if not (skip_major and _on_major(v, self.major)):
                    x = o.x() + sx * v
                    painter.drawLine(QPointF(x, area.top()), QPointF(x, area.bottom()))
            for v in ys:
                if not (skip_major and _on_major(v, self.major)):
                    y = o.y() + sy * v
                    painter.drawLine(QPointF(area.left(), y), QPointF(area.right(), y))
        painter.restore()


def _on_major(v: float, major: float) -> bool:
    return abs(v / major - round(v / major)) < 1e-9

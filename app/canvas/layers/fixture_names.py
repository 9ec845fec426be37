"""Fixture names on the canvas (a View toggle): each name at the point deepest inside its
outline (:func:`kinematics.label_points.label_points`), in screen pixels on a paper halo.

A name wider than its fixture on screen is drawn smaller, then left out while the
fixture is too small to hold it at all, or where it would cover a smaller fixture's name
(the name is always in the fixture panel).
"""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QColor, QFont, QFontMetricsF, QPainter

from app import style
from kinematics.label_points import label_points

from . import Frame, Host, Z

__all__ = ["FIXTURE_NAMES_KEY", "FixtureNamesLayer"]

#: Overlay key of the toggle ("overlay.fixture_names").
FIXTURE_NAMES_KEY = "fixture_names"
_MIN_POINT_SIZE = 6.5


class _NamesItem(pg.GraphicsObject):
    def __init__(self) -> None:
        super().__init__()
        # (name, label x, label y, outline box x0, y0, x1, y1) per fixture
        self.rows: list[tuple[str, float, float, float, float, float, float]] = []
        self.drawn: list[str] = []
        self._font = QFont()
        self._font.setPointSizeF(8.0)

    def viewRangeChanged(self) -> None:
        self.prepareGeometryChange()

    def boundingRect(self) -> QRectF:
        vr = self.viewRect()
        return QRectF(vr) if vr is not None else QRectF()

    def paint(self, painter, option, widget=None) -> None:
        if not self.rows:
            self.drawn = []
            return
        tr = painter.transform()
        painter.save()
        painter.resetTransform()
        painter.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
        halo = QColor(style.PAPER)
        halo.setAlphaF(0.8)
        drawn, boxes = [], []
        # Small fixtures first: a large one's name gives way where they would overlap.
        order = sorted(self.rows, key=lambda r: (r[5] - r[3]) * (r[6] - r[4]))
        for name, x, y, x0, y0, x1, y1 in order:
            a, b = tr.map(QPointF(x0, y0)), tr.map(QPointF(x1, y1))
            room = abs(b.x() - a.x()) - 4.0
            font = QFont(self._font)
            fm = QFontMetricsF(font)
            w = fm.horizontalAdvance(name)
            if w > room:
                size = font.pointSizeF() * room / max(w, 1.0)
                if size < _MIN_POINT_SIZE:
                    continue  # no room even in small type
                font.setPointSizeF(size)
                fm = QFontMetricsF(font)
                w = fm.horizontalAdvance(name)
            c = tr.map(QPointF(x, y))
            box = QRectF(c.x() - w / 2 - 2, c.y() - fm.height() / 2, w + 4, fm.height())
            if any(box.intersects(b) for b in boxes):
                continue
            boxes.append(box)
            painter.fillRect(box, halo)
            painter.setFont(font)
            painter.setPen(QColor(style.INK))
            painter.drawText(QPointF(c.x() - w / 2, c.y() - fm.height() / 2 + fm.ascent()), name)
            drawn.append(name)
        self.drawn = drawn
        painter.restore()


class FixtureNamesLayer:
    """The names of the fixtures, shown while the toggle is on."""

    def __init__(self, host: Host) -> None:
        self.item = _NamesItem()
        self.item.setData(0, "fixture_names")
        host.add(self.item, Z["label"] - 1)
        self._key: tuple | None = None
        self._points: dict[tuple, tuple[float, float]] = {}

    def update(self, frame: Frame) -> None:
        on = FIXTURE_NAMES_KEY in frame.overlays
        fixtures = frame.cell.fixtures if on else ()
        key = tuple((f.name, f.outline) for f in fixtures)
        if key == self._key:
            return
        self._key = key
        need = [f.outline for f in fixtures if f.outline not in self._points]
        if need:
            for outline, p in zip(need, label_points(need)):
                self._points[outline] = (float(p[0]), float(p[1]))
        if len(self._points) > 4 * len(fixtures) + 64:
            self._points = {f.outline: self._points[f.outline] for f in fixtures}
        rows = []
        for f in fixtures:
            x, y = self._points[f.outline]
            xs = [p[0] for p in f.outline]
            ys = [p[1] for p in f.outline]
            rows.append((f.name, x, y, min(xs), min(ys), max(xs), max(ys)))
        self.item.rows = rows
        self.item.setVisible(on)
        self.item.update()

    def names(self) -> list[str]:
        """Names the layer holds (those drawn depend on the room on screen)."""
        return [r[0] for r in self.item.rows] if self.item.isVisible() else []

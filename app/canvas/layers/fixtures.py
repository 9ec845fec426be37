"""Fixtures: every outline painted into the view's cached background, selection halos.

:func:`paint_fixtures` draws fixtures onto any QPainter given a world-to-device
transform (the canvas background here; drawing sheets can use the same function).
"""

from __future__ import annotations

from collections.abc import Sequence

from PySide6.QtGui import QPainter, QPainterPath, QTransform
from PySide6.QtWidgets import QGraphicsPathItem

from app import style
from kinematics.cell import Fixture

from ..draw import ScreenInk
from ..paths import polygon_path
from ..qtstyle import cosmetic_pen, fixture_look
from . import Frame, Host

__all__ = ["paint_fixtures", "FixturesLayer"]


def paint_fixtures(
    painter: QPainter,
    fixtures: Sequence[Fixture],
    to_device: QTransform,
    paths: dict,
    ink: ScreenInk | None = None,
) -> None:
    """Paint fixtures (each kind's pattern and edge over a faint solid underlay).

    ``paths`` caches each outline's QPainterPath by outline; ``ink`` (a sheet's
    :class:`~app.canvas.draw.PaperInk`) paints the same looks on another device.
    """
    painter.save()
    painter.setTransform(to_device, True)
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    for f in fixtures:
        path = paths.get(f.outline)
        if path is None:
            path = polygon_path(f.outline)
            paths[f.outline] = path
        look = fixture_look(f.kind)
        if ink is not None:
            ink.area(painter, path, look.pen, look.brush, under=look.base_brush)
            continue
        painter.fillPath(path, look.base_brush)
        painter.setPen(look.pen)
        painter.setBrush(look.brush)
        painter.drawPath(path)
    painter.restore()


class FixturesLayer:
    """The fixtures (in the cached background) and the halo of selected ones."""

    def __init__(self, host: Host, view) -> None:
        self._view = view
        self._fixtures: tuple[Fixture, ...] = ()
        self._paths: dict = {}
        self.halo = QGraphicsPathItem()
        self.halo.setPen(cosmetic_pen(style.PALETTE["harbour"], 8.0, alpha=0.45))
        self.halo.setData(0, "fixtures.selected")
        host.add(self.halo, 9.0)
        self._selected: tuple = ()
        view.background_painters.append(self.paint)

    def paint(self, painter: QPainter, to_scene: QTransform) -> None:
        paint_fixtures(painter, self._fixtures, to_scene, self._paths)

    def update(self, frame: Frame) -> None:
        fixtures = frame.cell.fixtures
        if fixtures is not self._fixtures and fixtures != self._fixtures:
            self._fixtures = fixtures
            if len(self._paths) > 4 * len(fixtures) + 64:
                self._paths = {}
            self._view.refresh_background()
        self._fixtures = fixtures
        chosen = tuple(f.outline for f in fixtures if f.id in frame.selection)
        if chosen != self._selected:
            self._selected = chosen
            path = QPainterPath()
            for outline in chosen:
                path.addPath(polygon_path(outline))
            self.halo.setPath(path)

    def outlines(self) -> dict[str, tuple]:
        """Fixture id -> outline as painted (for tests)."""
        return {f.id: f.outline for f in self._fixtures}

"""Arm bases: footprint circle, heading arrow with a rotate handle, and the arm's name.

The name goes on the side away from the heading arrow unless that spot would cover
another arm's base or name or leave the plot; then below, above or towards the arrow,
whichever is clear (two-arm cells facing each other keep both names readable).
"""

from __future__ import annotations

import math

import pyqtgraph as pg
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QFont, QFontMetricsF, QPainter, QPainterPath, QPen

from app import style
from kinematics.cell import Arm

from ..draw import ScreenInk
from ..qtstyle import colour, cosmetic_pen
from . import Frame, Host, Z

__all__ = ["ArmItem", "BasesLayer", "base_radius", "paint_base"]


def base_radius(arm: Arm) -> float:
    """Drawn footprint radius: link 1's radius (the shoulder disc), else a tenth of link 1."""
    return float(arm.link_radii[0]) if arm.link_radii else 0.1 * arm.a1


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
        # The other arms' items, in cell order, and how many of them come before this one:
        # names are placed in cell order, each clear of the names placed before it.
        self.others: list[ArmItem] = []
        self.before = 0
        self.name_rect: QRectF | None = None  # where the name was painted (view pixels)
        self._bounds: QRectF | None = None
        self._font = QFont()
        self._font.setBold(True)

    def set_arm(self, arm: Arm, radius: float, arrow: float) -> None:
        if (arm.name, float(radius), float(arrow)) != (self.name, self.radius, self.arrow):
            self._bounds = None
        self.prepareGeometryChange()
        self.x, self.y, self.heading = float(arm.x), float(arm.y), float(arm.heading_deg)
        self.radius, self.arrow, self.name = float(radius), float(arrow), arm.name
        self.update()

    def set_others(self, others: list[ArmItem], before: int) -> None:
        """The other arms' items (cell order); the first ``before`` of them come before this
        one in the cell."""
        if others != self.others or before != self.before:
            self.others, self.before = others, before
            self.update()

    def name_inputs(self, to_view) -> tuple[QPointF, float, float, float, float]:
        """Base centre (view pixels), heading angle (view), name offset, name width, height."""
        dc = to_view(QPointF(self.x, self.y))
        hx, hy = self.handle_point()
        dt = to_view(QPointF(hx, hy))
        edge = to_view(QPointF(self.x + self.radius, self.y))
        rad_px = math.hypot(edge.x() - dc.x(), edge.y() - dc.y())
        fm = QFontMetricsF(self._font)
        ang = math.atan2(dt.y() - dc.y(), dt.x() - dc.x())
        return dc, ang, max(rad_px, 6.0) + 6.0, fm.horizontalAdvance(self.name), fm.height()

    def set_selected(self, on: bool) -> None:
        if on != self.selected:
            self.selected = on
            self.update()

    def handle_point(self) -> tuple[float, float]:
        """World position of the rotate handle at the tip of the heading arrow."""
        h = math.radians(self.heading)
        return self.x + self.arrow * math.cos(h), self.y + self.arrow * math.sin(h)

    def viewTransformChanged(self) -> None:
        super().viewTransformChanged()
        self.prepareGeometryChange()  # the pixel-sized name and marks change world size
        self._bounds = None

    def _view_mapping(self, tr, centre: QPointF):
        """World point -> view pixel, and the view's pixel rectangle (None off a view)."""
        scene = self.scene()
        views = scene.views() if scene is not None else []
        if not views:
            return tr.map, None
        view = views[0]

        def to_view(p: QPointF) -> QPointF:
            return QPointF(view.mapFromScene(self.mapToScene(p)))

        return to_view, QRectF(view.viewport().rect())

    def boundingRect(self) -> QRectF:
        if self._bounds is None:
            # The name and pixel-sized marks extend past the footprint: a margin in pixels.
            vx, _vy = self.pixelVectors()
            px = math.hypot(vx.x(), vx.y()) if vx is not None else 0.0
            name_px = QFontMetricsF(self._font).horizontalAdvance(self.name) + 50.0
            r = max(self.radius, self.arrow) + name_px * px
            self._bounds = QRectF(-r, -r, 2 * r, 2 * r)
        return self._bounds.translated(self.x, self.y)

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
        # Name away from the heading arrow, clear of the footprint, other bases, the names
        # placed before it and the edge. Decided in the view's pixels (the item may be
        # painted into its cache pixmap).
        fm = QFontMetricsF(self._font)
        to_view, bounds = self._view_mapping(tr, centre)
        dv, _ang, off, w, h = self.name_inputs(to_view)
        marks = []
        for other in self.others:
            oc, _a, ooff, _w, _h = other.name_inputs(to_view)
            marks.append(QRectF(oc.x() - ooff, oc.y() - ooff, 2 * ooff, 2 * ooff))
        names: list[QRectF] = []
        for k, other in enumerate(self.others[: self.before]):
            oc, oa, ooff, ow, oh = other.name_inputs(to_view)
            keep = (
                marks[:k]
                + marks[k + 1 :]
                + names
                + [QRectF(dv.x() - off, dv.y() - off, 2 * off, 2 * off)]
            )
            ox, oy = _name_spot(oc, oa, ooff, ow, oh, keep, bounds)
            names.append(QRectF(ox - ow / 2 - 2, oy - oh / 2 - 1, ow + 4, oh + 2))
        vx, vy = _name_spot(dv, ang, off, w, h, marks + names, bounds)
        self.name_rect = QRectF(vx - w / 2, vy - h / 2, w, h)
        cx, cy = vx + dc.x() - dv.x(), vy + dc.y() - dv.y()
        p = QPointF(cx - w / 2, cy - h / 2 + fm.ascent())
        halo = QColor(style.PAPER)
        halo.setAlphaF(0.85)
        painter.fillRect(QRectF(p.x() - 2, p.y() - fm.ascent(), w + 4, fm.height()), halo)
        painter.setPen(QColor(c))
        painter.drawText(p, self.name)
        painter.restore()


def paint_base(
    painter: QPainter,
    pose: tuple[float, float, float],
    radius: float,
    arrow: float,
    name: str,
    colour_hex: str,
    font: QFont,
    selected: bool = False,
    handle: bool = True,
    ink: ScreenInk | None = None,
) -> None:
    """An arm base in world coordinates (the painter's transform): footprint circle,
    heading arrow (with the rotate handle when ``handle``), centre cross and name.

    Marks and the name keep their canvas pixel sizes (``ink`` turns pixels into paper)."""
    ink = ink or ScreenInk()
    k = ink.px
    x, y, heading = pose
    painter.save()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    c = colour_hex
    centre = QPointF(x, y)
    h = math.radians(heading)
    tip = QPointF(x + arrow * math.cos(h), y + arrow * math.sin(h))
    disc = QPainterPath()
    disc.addEllipse(centre, radius, radius)
    if selected:
        ink.stroke(painter, disc, cosmetic_pen(style.PALETTE["harbour"], 9.0, alpha=0.45))
    ink.area(painter, disc, cosmetic_pen(c, 2.0), QBrush(colour(c, 0.30)))
    shaft = QPainterPath(centre)
    shaft.lineTo(tip)
    ink.stroke(painter, shaft, cosmetic_pen(c, 2.5))
    # Arrow head, handle, centre cross and name in device pixels.
    tr = painter.transform()
    dc, dt = tr.map(centre), tr.map(tip)
    edge = tr.map(QPointF(x + radius, y))
    rad_px = math.hypot(edge.x() - dc.x(), edge.y() - dc.y())
    painter.resetTransform()
    ang = math.atan2(dt.y() - dc.y(), dt.x() - dc.x())
    pen = QPen(colour(c))
    pen.setWidthF(2.5 * k)
    painter.setPen(pen)
    head = 10.0 * k
    for s in (-1, 1):
        a = ang + math.pi + s * 0.45
        painter.drawLine(dt, dt + QPointF(head * math.cos(a), head * math.sin(a)))
    if handle:
        painter.setBrush(QBrush(QColor(style.PAPER)))
        painter.drawEllipse(dt, 5.5 * k, 5.5 * k)  # rotate handle
    painter.setPen(QPen(QColor(style.INK), 1.5 * k))
    painter.drawLine(dc + QPointF(-5 * k, 0), dc + QPointF(5 * k, 0))
    painter.drawLine(dc + QPointF(0, -5 * k), dc + QPointF(0, 5 * k))
    painter.setFont(font)
    # Name on the side away from the heading arrow, clear of the footprint.
    fm = QFontMetricsF(font, painter.device())
    w, hh = fm.horizontalAdvance(name), fm.height()
    ux, uy = -math.cos(ang), -math.sin(ang)
    off = max(rad_px, 6.0 * k) + 6.0 * k
    cx = dc.x() + ux * (off + w / 2 * abs(ux) + hh / 2 * abs(uy))
    cy = dc.y() + uy * (off + w / 2 * abs(ux) + hh / 2 * abs(uy))
    p = QPointF(cx - w / 2, cy - hh / 2 + fm.ascent())
    halo = QColor(style.PAPER)
    halo.setAlphaF(0.85)
    painter.fillRect(QRectF(p.x() - 2 * k, p.y() - fm.ascent(), w + 4 * k, fm.height()), halo)
    painter.setPen(QColor(c))
    painter.drawText(p, name)
    painter.restore()


def _name_spot(dc, ang, off, w, h, keep_clear, bounds) -> tuple[float, float]:
    """Centre of the name box: the first of away from the arrow, below, above, towards the
    arrow that keeps clear of the boxes ``keep_clear`` (view pixels) and inside ``bounds``;
    failing all, the one that covers least."""
    best, best_cost = None, math.inf
    for turn in (0.0, math.pi / 2, -math.pi / 2, math.pi):
        a = ang + math.pi + turn
        ux, uy = math.cos(a), math.sin(a)
        reach = off + w / 2 * abs(ux) + h / 2 * abs(uy)
        cx, cy = dc.x() + ux * reach, dc.y() + uy * reach
        box = QRectF(cx - w / 2 - 2, cy - h / 2 - 1, w + 4, h + 2)
        cost = 0.0
        for theirs in keep_clear:
            inter = box.intersected(theirs)
            if not inter.isEmpty():
                cost += inter.width() * inter.height()
        if bounds is not None and not bounds.contains(box):
            inside = box.intersected(bounds)
            cost += 2.0 * (box.width() * box.height() - inside.width() * inside.height())
        if cost < best_cost - 1e-9:
            best, best_cost = (cx, cy), cost
        if cost <= 0:
            break
    return best


class BasesLayer:
    """One :class:`ArmItem` per arm, coloured by the arm's place in the cell."""

    def __init__(self, host: Host) -> None:
        self._host = host
        self.items: dict[str, ArmItem] = {}
        self._arms: dict[str, tuple[Arm, int]] = {}

    def update(self, frame: Frame) -> None:
        cell = frame.cell
        present = {a.id for a in cell.arms}
        for aid in [a for a in self.items if a not in present]:
            self._host.remove(self.items.pop(aid))
            self._arms.pop(aid, None)
        for i, arm in enumerate(cell.arms):
            item = self.items.get(arm.id)
            if item is None or self._arms[arm.id][1] != i:
                if item is not None:
                    self._host.remove(item)
                item = ArmItem(style.arm_colour(i))
                self._host.add(item, Z["arm"], cache=True)
                self.items[arm.id] = item
                self._arms[arm.id] = (None, i)  # type: ignore[assignment]
            if self._arms[arm.id][0] is not arm:
                item.set_arm(arm, base_radius(arm), 0.45 * arm.a1)
                self._arms[arm.id] = (arm, i)
            item.set_selected(arm.id in frame.selection)
        order = [self.items[a.id] for a in cell.arms]
        for k, item in enumerate(order):
            item.set_others(order[:k] + order[k + 1 :], k)

    def handles(self) -> dict[str, tuple[float, float]]:
        """Rotate-handle position of every arm as drawn."""
        return {aid: item.handle_point() for aid, item in self.items.items()}

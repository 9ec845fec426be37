"""Graphics items of the cell canvas, drawn in world coordinates (the cell's units).

Pens are cosmetic (pixel widths) and texts are painted in device space so they
stay readable at any zoom. Items are built once and then updated in place
(``set_*`` methods, ``setPath``), which keeps a drag step cheap.
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
    QFont,
    QFontMetricsF,
    QImage,
    QPainter,
    QPainterPath,
    QPen,
    QTransform,
)
from PySide6.QtWidgets import QGraphicsItem, QGraphicsPathItem, QGraphicsView

from app import style

from .qtstyle import FixtureLook, colour, cosmetic_pen, mixed

__all__ = [
    "polygon_path",
    "geometry_path",
    "polylines_path",
    "translate_rotate",
    "FixtureItem",
    "ArmItem",
    "LabelsItem",
    "MarkersItem",
    "ScaleBar",
    "PlanView",
    "Grid",
    "nice_length",
    "LABEL_GAP",
    "MARKER_HALF",
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
        # Hit by a colliding body (the canvas draws the thick dashed edges of all hit
        # fixtures as one item, cheaper than one more item per fixture).
        self.hit = False

    def setCacheMode(self, mode, *args) -> None:  # noqa: N802 (Qt name)
        # The underlay and halo are child items: cache them the same way.
        super().setCacheMode(mode, *args)
        self._under.setCacheMode(mode, *args)
        self._halo.setCacheMode(mode, *args)

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

    def set_hit(self, on: bool) -> None:
        """Record whether a colliding body hits the fixture."""
        self.hit = on


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
        self._bounds: QRectF | None = None
        self._font = QFont()
        self._font.setBold(True)

    def set_arm(self, arm, radius: float, arrow: float) -> None:
        self.prepareGeometryChange()
        if (arm.name, float(radius), float(arrow)) != (self.name, self.radius, self.arrow):
            self._bounds = None
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

    def viewTransformChanged(self) -> None:
        super().viewTransformChanged()
        self.prepareGeometryChange()  # the pixel-sized name and marks change world size
        self._bounds = None

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


MARKER_HALF = 6.5  # half the drawn marker size, pixels
LABEL_GAP = 11.0  # marker centre to label edge, pixels (more than MARKER_HALF + one cell)


class _ImageLayer(pg.GraphicsObject):
    """Pixel-sized drawing kept as one image per group until that group or the view changes.

    Groups are the arms: while one base is dragged only its group is drawn
    again; the others, and every repeat paint of an unchanged state, cost an
    image copy instead of hundreds of draw calls.

    A base class: subclasses (MarkersItem) provide ``_prepare`` and ``_draw``.
    """

    def __init__(self) -> None:
        super().__init__()
        self._version = 0
        self._prepared: tuple | None = None
        self._boxes: dict[object, tuple[object, QRectF]] = {}
        self._images: dict[object, tuple[tuple, QImage, QPointF]] = {}

    def changed(self) -> None:
        self._version += 1
        self.update()

    def viewRangeChanged(self) -> None:
        self.prepareGeometryChange()

    def boundingRect(self) -> QRectF:
        # Drawn at pixel size around world anchors: claim the whole visible range.
        vr = self.viewRect()
        return QRectF(vr) if vr is not None else QRectF()

    def _prepare(self, tr: QTransform, vr: QRectF | None) -> dict[object, tuple[object, QRectF]]:
        """Work out what to draw: per group, a content key and a device-pixel bounding box."""
        raise NotImplementedError

    def _draw(self, painter, group) -> None:
        """Draw one group in device pixels."""
        raise NotImplementedError

    def paint(self, painter, option, widget=None) -> None:
        tr = painter.transform()
        vr = self.viewRect()
        dev = painter.device()
        dpr = dev.devicePixelRatioF() if dev is not None else 1.0
        view_key = (
            (tr.m11(), tr.m12(), tr.m21(), tr.m22(), tr.dx(), tr.dy()),
            None if vr is None else (vr.left(), vr.top(), vr.width(), vr.height()),
            dpr,
        )
        if (self._version, view_key) != self._prepared:
            self._boxes = self._prepare(tr, vr)
            self._prepared = (self._version, view_key)
        for g in [g for g in self._images if g not in self._boxes]:
            del self._images[g]
        painter.save()
        painter.resetTransform()
        for g, (content, box) in self._boxes.items():
            ikey = (content, view_key)
            cached = self._images.get(g)
            if cached is None or cached[0] != ikey:
                cached = (ikey, *self._render(g, box.toAlignedRect(), dpr))
                self._images[g] = cached
            if not cached[1].isNull():
                painter.drawImage(cached[2], cached[1])
        painter.restore()

    def _render(self, group, box, dpr: float) -> tuple[QImage, QPointF]:
        if box.width() <= 0 or box.height() <= 0:
            return QImage(), QPointF()
        img = QImage(
            max(1, int(box.width() * dpr)),
            max(1, int(box.height() * dpr)),
            QImage.Format.Format_ARGB32_Premultiplied,
        )
        img.setDevicePixelRatio(dpr)
        img.fill(0)
        p = QPainter(img)
        p.setRenderHint(QPainter.RenderHint.Antialiasing, True)
        p.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
        p.translate(-box.x(), -box.y())
        self._draw(p, group)
        p.end()
        return img, QPointF(box.x(), box.y())


def _to_device(tr: QTransform, xy: np.ndarray) -> np.ndarray:
    return np.column_stack(
        [
            tr.m11() * xy[:, 0] + tr.m21() * xy[:, 1] + tr.dx(),
            tr.m12() * xy[:, 0] + tr.m22() * xy[:, 1] + tr.dy(),
        ]
    )


class MarkersItem(_ImageLayer):
    """Target markers, one shape and colour per status, in groups (one per arm).

    Parameters
    ----------
    looks : mapping of status code to (symbol, fill colour)
        pyqtgraph symbol names (or QPainterPath symbols in the unit box) and hex colours.
    """

    def __init__(self, looks: dict[int, tuple[str, str]], size: float = 2 * MARKER_HALF) -> None:
        super().__init__()
        self._looks = dict(looks)
        self._size = size
        self._symbols: dict[tuple[int, float], QImage] = {}
        self._groups: dict[object, tuple[np.ndarray, np.ndarray, int]] = {}
        self._dev: dict[object, np.ndarray] = {}

    def set_group(self, group, xy: np.ndarray, status: np.ndarray) -> None:
        """Markers of one group (world points and status codes)."""
        xy = np.asarray(xy, dtype=float).reshape(-1, 2)
        status = np.asarray(status, dtype=np.int64).reshape(-1)
        old = self._groups.get(group)
        if (
            old is not None
            and old[0].shape == xy.shape
            and np.array_equal(old[0], xy)
            and (np.array_equal(old[1], status))
        ):
            return
        self.prepareGeometryChange()
        self._groups[group] = (xy, status, (old[2] + 1) if old is not None else 0)
        self.changed()

    def keep_groups(self, groups) -> None:
        """Forget every group not in ``groups``."""
        gone = [g for g in self._groups if g not in set(groups)]
        for g in gone:
            del self._groups[g]
        if gone:
            self.changed()

    def positions(self, status: int) -> np.ndarray:
        """World positions of the markers drawn with this status (all groups)."""
        parts = [xy[st == status] for xy, st, _v in self._groups.values()]
        return np.vstack(parts) if parts else np.zeros((0, 2))

    def count(self, status: int) -> int:
        return sum(int(np.count_nonzero(st == status)) for _xy, st, _v in self._groups.values())

    def _symbol(self, status: int, dpr: float) -> QImage:
        key = (status, dpr)
        img = self._symbols.get(key)
        if img is None:
            symbol, fill = self._looks[status]
            n = int(math.ceil((self._size + 2) * dpr))
            img = QImage(n, n, QImage.Format.Format_ARGB32_Premultiplied)
            img.setDevicePixelRatio(dpr)
            img.fill(0)
            p = QPainter(img)
            p.setRenderHint(QPainter.RenderHint.Antialiasing, True)
            p.translate(n / dpr / 2, n / dpr / 2)
            pen = QPen(QColor(style.INK), 1.0 / self._size)
            drawSymbol(p, symbol, self._size, pen, QBrush(QColor(fill)))
            p.end()
            self._symbols[key] = img
        return img

    def _prepare(self, tr: QTransform, vr: QRectF | None) -> dict[object, tuple[object, QRectF]]:
        boxes = {}
        self._dev = {}
        for g, (xy, _st, version) in self._groups.items():
            if not len(xy):
                continue
            dev = _to_device(tr, xy)
            self._dev[g] = dev
            lo = dev.min(axis=0) - self._size
            hi = dev.max(axis=0) + self._size
            boxes[g] = (version, QRectF(lo[0], lo[1], hi[0] - lo[0], hi[1] - lo[1]))
        return boxes

    def _draw(self, painter, group) -> None:
        dpr = painter.device().devicePixelRatioF()
        _xy, status, _v = self._groups[group]
        dev = self._dev[group]
        for st in np.unique(status):
            img = self._symbol(int(st), dpr)
            half = img.width() / dpr / 2
            for x, y in dev[status == st]:
                painter.drawImage(QPointF(x - half, y - half), img)


class LabelsItem(pg.GraphicsObject):
    """Target names, with the failure reason on a second line, painted at pixel size.

    Labels are placed greedily so they overlap neither each other nor the
    markers, failure reasons first; a label that cannot sit right of its
    marker gets a leader line. While the view and the anchors stay put (a base
    drag), the layout is updated incrementally: labels that keep their size
    keep their place, only new ones are placed. Each label is rendered once
    into a small image, so a repaint is one copy per label.
    """

    def __init__(self) -> None:
        super().__init__()
        # group -> (anchors, names, reasons, failing mask, anchors version)
        self._groups: dict[object, tuple] = {}
        self._font = QFont()
        self._font.setPointSizeF(8.0)
        self._reason_font = QFont(self._font)
        self._reason_font.setBold(True)
        self._fm = QFontMetricsF(self._font)
        self._rfm = QFontMetricsF(self._reason_font)
        self._widths: dict[tuple[bool, str], float] = {}
        self._images: dict[tuple[str, str, float], QImage] = {}
        self._layout: list[tuple] = []
        # (group, index) -> [name, reason, reserved w, rows, w, x, y, lead]
        self._entries: dict[tuple, list] = {}
        self._placer: _Placer | None = None
        self._unplaced: set[tuple] = set()  # labels with no free spot in the current layout
        self._base_key: tuple | None = None
        self._prepared: tuple | None = None
        self._version = 0
        self._anchor_version = 0
        self.max_labels = 150

    def set_group(self, group, xy: np.ndarray, names: list[str], reasons: list[str]) -> None:
        """Labels of one group: anchors (world), names and reasons ('' when feasible)."""
        xy = np.asarray(xy, dtype=float).reshape(-1, 2)
        old = self._groups.get(group)
        same_xy = old is not None and old[0].shape == xy.shape and np.array_equal(old[0], xy)
        if same_xy and old[1] == names and old[2] == reasons:
            return
        if same_xy and len(names) == len(old[1]):
            anchors = old[4]
        else:
            self._anchor_version += 1  # anchors moved: lay out afresh
            anchors = self._anchor_version
        failing = np.array([bool(r) for r in reasons], dtype=bool)
        self._groups[group] = (xy, list(names), list(reasons), failing, anchors)
        if len(self._images) > 5000:  # images of long-gone labels
            self._images.clear()
            self._widths.clear()
        self._version += 1
        self.update()

    def keep_groups(self, groups) -> None:
        """Forget every group not in ``groups``."""
        gone = [g for g in self._groups if g not in set(groups)]
        for g in gone:
            del self._groups[g]
        if gone:
            self._anchor_version += 1
            self._version += 1
            self.update()

    def relayout(self) -> None:
        """Lay every label out afresh on the next paint (e.g. when a drag ends)."""
        self._base_key = None
        self._version += 1
        self.update()

    def placed(self) -> list[tuple]:
        """Last layout: (x, y, width, height, name, reason, leader) per label, in pixels."""
        return list(self._layout)

    def extents(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """How far the labels of a whole-cell view reach from their markers, in pixels.

        Returns
        -------
        (ndarray, ndarray, ndarray, ndarray)
            World anchors (n, 2); for each label the reach sideways (marker centre
            to the far end of a label beside it, either side), above and below
            the marker centre.
        """
        wanted, _names = self._wanted(None)
        h = self._fm.height()
        xy = np.zeros((len(wanted), 2))
        side = np.zeros(len(wanted))
        rows = np.zeros(len(wanted))
        for k, (g, i, name, reason) in enumerate(wanted):
            xy[k] = self._groups[g][0][i]
            side[k] = max(
                self._width(False, name) if name else 0.0,
                self._width(True, reason) if reason else 0.0,
            )
            rows[k] = int(bool(name)) + int(bool(reason))
        # A label beside its marker starts half a line above the marker's centre.
        return xy, LABEL_GAP + side + 2.0, np.full(len(wanted), h / 2), rows * h - h / 2 + 1.0

    def viewRangeChanged(self) -> None:
        self.prepareGeometryChange()

    def boundingRect(self) -> QRectF:
        # Drawn at pixel size around world anchors: claim the whole visible range.
        vr = self.viewRect()
        return QRectF(vr) if vr is not None else QRectF()

    def _width(self, bold: bool, text: str) -> float:
        key = (bold, text)
        w = self._widths.get(key)
        if w is None:
            w = (self._rfm if bold else self._fm).horizontalAdvance(text)
            self._widths[key] = w
        return w

    def _image(self, name: str, reason: str, dpr: float) -> QImage:
        key = (name, reason, dpr)
        img = self._images.get(key)
        if img is not None:
            return img
        h = self._fm.height()
        w = max(
            self._width(False, name) if name else 0.0,
            self._width(True, reason) if reason else 0.0,
        )
        rows = int(bool(name)) + int(bool(reason))
        img = QImage(
            int(math.ceil((w + 4) * dpr)),
            int(math.ceil((h * rows + 1) * dpr)),
            QImage.Format.Format_ARGB32_Premultiplied,
        )
        img.setDevicePixelRatio(dpr)
        halo = QColor(style.PAPER)
        halo.setAlphaF(0.8)
        img.fill(halo)
        p = QPainter(img)
        p.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
        y = self._fm.ascent()
        if name:
            p.setPen(QColor(style.INK))
            p.setFont(self._font)
            p.drawText(QPointF(2.0, y), name)
            y += h
        if reason:
            p.setPen(QColor(style.PALETTE["ember"]).darker(140))
            p.setFont(self._reason_font)
            p.drawText(QPointF(2.0, y), reason)
        p.end()
        self._images[key] = img
        return img

    def _wanted(self, vr: QRectF | None) -> tuple[list[tuple], bool]:
        """Labels to show, reasons first: ((group, index, name, reason) list, names shown)."""
        picks = []
        total = 0
        for g, (xy, _names, _reasons, failing, _a) in self._groups.items():
            if not len(xy):
                continue
            inside = np.ones(len(xy), dtype=bool)
            if vr is not None:
                inside = (
                    (xy[:, 0] >= vr.left())
                    & (xy[:, 0] <= vr.right())
                    & (xy[:, 1] >= vr.top())
                    & (xy[:, 1] <= vr.bottom())
                )
            picks.append((g, inside, failing))
            total += int(np.count_nonzero(inside))
        crowded = total > self.max_labels
        out: list[tuple] = []
        for g, inside, failing in picks:
            reasons = self._groups[g][2]
            out.extend((g, int(i), "", reasons[i]) for i in np.flatnonzero(inside & failing))
        # When crowded, names of feasible targets give way so failure reasons stay legible.
        if crowded:
            out = out[: self.max_labels]
            show_names = len(out) <= self.max_labels // 2
        else:
            show_names = True
            for g, inside, failing in picks:
                out.extend((g, int(i), "", "") for i in np.flatnonzero(inside & ~failing))
        if show_names:
            out = [(g, i, self._groups[g][1][i], r) for g, i, _n, r in out]
        return out, show_names

    def _prepare(self, tr: QTransform, vr: QRectF | None) -> None:
        h = self._fm.height()
        view_key = (tr.m11(), tr.m12(), tr.m21(), tr.m22(), tr.dx(), tr.dy())
        wanted, show_names = self._wanted(vr)
        base_key = (view_key, tuple((g, v[4]) for g, v in self._groups.items()), show_names)
        if base_key != self._base_key or self._placer is None:
            # Full layout: markers block their squares, then every label is placed.
            self._base_key = base_key
            vb = self.getViewBox()
            size = (vb.width() + 200, vb.height() + 200) if vb is not None else (4000.0, 4000.0)
            self._placer = _Placer(*size)
            self._entries = {}
            self._unplaced = set()
            self._devs = {}
            for g, (xy, *_rest) in self._groups.items():
                if len(xy):
                    self._devs[g] = _to_device(tr, xy)
                    self._placer.block_points(self._devs[g], MARKER_HALF)
        placer = self._placer
        # The part of the device the view shows: labels prefer spots wholly inside it.
        box = tr.mapRect(vr) if vr is not None else None
        keep = {(g, i) for g, i, _n, _r in wanted}
        # Gone labels leave their space blocked until the next full layout: no label moves.
        for key in [k for k in self._entries if k not in keep]:
            del self._entries[key]
        for g, i, name, reason in wanted:
            w = max(
                self._width(False, name) if name else 0.0,
                self._width(True, reason) if reason else 0.0,
            )
            rows = int(bool(name)) + int(bool(reason))
            # Widths reserved in 24 px steps, so changing numbers rarely move a label.
            rw = math.ceil(w / 24.0) * 24.0
            e = self._entries.get((g, i))
            if e is not None and e[2] == rw and e[3] == rows:
                e[0], e[1], e[4] = name, reason, w
                continue
            # Space only fills up between full layouts: a label that found none still has none.
            if (g, i, rw, rows) in self._unplaced:
                continue
            bh = h * rows
            ax, ay = float(self._devs[g][i, 0]), float(self._devs[g][i, 1])
            gap = LABEL_GAP
            options = (
                (ax + gap, ay - h / 2),
                (ax - gap - rw, ay - h / 2),
                (ax - rw / 2, ay + gap),
                (ax - rw / 2, ay - gap - bh),
            )
            # The first free spot wholly in view; one cut off by the edge only when none is.
            spot = cut = None
            for c in options:
                if not placer.free(c[0], c[1], c[0] + rw, c[1] + bh):
                    continue
                if _inside(box, c[0] - 2.0, c[1], c[0] + w + 2.0, c[1] + bh):
                    spot = c
                    break
                cut = cut or c
            spot = spot or cut
            if spot is None:
                # No room: overlapping texts would be unreadable. The marker's shape still
                # tells the reason, the tooltip and the tables the rest.
                self._entries.pop((g, i), None)
                self._unplaced.add((g, i, rw, rows))
                continue
            placer.block(spot[0], spot[1], spot[0] + rw, spot[1] + bh)
            lead = None if spot == options[0] else (ax, ay)
            self._entries[(g, i)] = [name, reason, rw, rows, w, spot[0], spot[1], lead]
        self._layout = [
            (e[5], e[6], e[4], h * e[3], e[0], e[1], e[7]) for e in self._entries.values()
        ]

    def paint(self, painter, option, widget=None) -> None:
        tr = painter.transform()
        vr = self.viewRect()
        key = (
            self._version,
            (tr.m11(), tr.m12(), tr.m21(), tr.m22(), tr.dx(), tr.dy()),
            None if vr is None else (vr.left(), vr.top(), vr.width(), vr.height()),
        )
        if key != self._prepared:
            self._prepare(tr, vr)
            self._prepared = key
        dev = painter.device()
        dpr = dev.devicePixelRatioF() if dev is not None else 1.0
        painter.save()
        painter.resetTransform()
        painter.setRenderHint(painter.RenderHint.Antialiasing, True)
        painter.setPen(QPen(QColor(style.PALETTE["slate"]), 1.0))
        for sx, sy, w, bh, _name, _reason, lead in self._layout:
            if lead is not None:
                tx = min(max(lead[0], sx), sx + w)
                ty = min(max(lead[1], sy), sy + bh)
                painter.drawLine(QPointF(*lead), QPointF(tx, ty))
        for sx, sy, _w, _bh, name, reason, _lead in self._layout:
            painter.drawImage(QPointF(sx - 2.0, sy), self._image(name, reason, dpr))
        painter.restore()


def _inside(box: QRectF | None, x0: float, y0: float, x1: float, y1: float) -> bool:
    """True when the pixel rectangle lies within ``box`` (or there is no box)."""
    if box is None:
        return True
    return box.left() <= x0 and x1 <= box.right() and box.top() <= y0 and y1 <= box.bottom()


class _Placer:
    """Occupied screen area as a coarse bitmap (4 px cells), for greedy label placement."""

    CELL = 4.0

    def __init__(self, width: float, height: float) -> None:
        self.nx = max(1, int(width / self.CELL) + 1)
        self.ny = max(1, int(height / self.CELL) + 1)
        self.grid = np.zeros((self.ny, self.nx), dtype=bool)

    def _span(self, x0: float, y0: float, x1: float, y1: float):
        c = self.CELL
        i0 = min(max(int(x0 // c), 0), self.nx)
        i1 = min(max(int(x1 // c) + 1, 0), self.nx)
        j0 = min(max(int(y0 // c), 0), self.ny)
        j1 = min(max(int(y1 // c) + 1, 0), self.ny)
        return j0, j1, i0, i1

    def free(self, x0: float, y0: float, x1: float, y1: float) -> bool:
        j0, j1, i0, i1 = self._span(x0, y0, x1, y1)
        # Off-screen parts count as free: the label is clipped there, not overlapping.
        return not self.grid[j0:j1, i0:i1].any()

    def block(self, x0: float, y0: float, x1: float, y1: float) -> None:
        j0, j1, i0, i1 = self._span(x0, y0, x1, y1)
        self.grid[j0:j1, i0:i1] = True

    def block_points(self, xy: np.ndarray, half: float) -> None:
        """Block a square of side ``2*half`` around each point (marker footprints)."""
        if not len(xy):
            return
        c = self.CELL
        i0 = np.floor((xy[:, 0] - half) / c).astype(int)
        j0 = np.floor((xy[:, 1] - half) / c).astype(int)
        n = int(math.floor(2 * half / c)) + 2
        off = np.arange(n)
        ii = np.broadcast_to(i0[:, None, None] + off[None, None, :], (len(xy), n, n))
        jj = np.broadcast_to(j0[:, None, None] + off[None, :, None], (len(xy), n, n))
        # Keep only cells that the square really touches.
        ok = (
            (ii * c < (xy[:, 0] + half)[:, None, None])
            & (jj * c < (xy[:, 1] + half)[:, None, None])
            & (ii >= 0)
            & (ii < self.nx)
            & (jj >= 0)
            & (jj < self.ny)
        )
        self.grid[jj[ok], ii[ok]] = True


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


class PlanView(pg.PlotWidget):
    """The plot widget with the plan grid drawn as its cached background.

    The grid is painted under every item by ``drawBackground`` and Qt keeps it
    as one opaque pixmap (CacheBackground) until the view range changes, so a
    repaint during a drag costs a single copy for it.
    """

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        self.grid: Grid | None = None
        self.setCacheMode(QGraphicsView.CacheModeFlag.CacheBackground)

    def drawBackground(self, painter, rect) -> None:  # noqa: N802 (Qt name)
        super().drawBackground(painter, rect)
        if self.grid is not None:
            self.grid.paint(painter)


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
        self.view.resetCachedContent()
        self.view.viewport().update()

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

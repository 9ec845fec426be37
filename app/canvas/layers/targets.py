"""Targets: status markers (shape, colour and glyph per status) and name labels.

Both are drawn at pixel size: markers as one image per arm (redrawn only when that
arm's markers change, and clipped to the view so images never grow with the zoom),
labels as one small image each, laid out greedily so they overlap neither each other
nor the markers, failure reasons first.
"""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from pyqtgraph.graphicsItems.ScatterPlotItem import drawSymbol
from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import (
    QBrush,
    QColor,
    QFont,
    QFontMetricsF,
    QImage,
    QPainter,
    QPen,
    QTransform,
)

from app import style
from kinematics.ik import Status
from kinematics.wording import target_reason

from ..qtstyle import colour
from . import Frame, Host, Z

__all__ = ["MARKER_HALF", "LABEL_GAP", "MarkersItem", "LabelsItem", "TargetsLayer"]


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
        view = tr.mapRect(vr) if vr is not None else None
        for g, (xy, status, version) in self._groups.items():
            if not len(xy):
                continue
            dev = _to_device(tr, xy)
            if view is not None:
                # Only markers in view: the group's image never grows with the zoom.
                m = self._size
                keep = (
                    (dev[:, 0] >= view.left() - m)
                    & (dev[:, 0] <= view.right() + m)
                    & (dev[:, 1] >= view.top() - m)
                    & (dev[:, 1] <= view.bottom() + m)
                )
                if not keep.any():
                    continue
                dev, status = dev[keep], status[keep]
            self._dev[g] = (dev, status)
            lo = dev.min(axis=0) - self._size
            hi = dev.max(axis=0) + self._size
            boxes[g] = (version, QRectF(lo[0], lo[1], hi[0] - lo[0], hi[1] - lo[1]))
        return boxes

    def _draw(self, painter, group) -> None:
        dpr = painter.device().devicePixelRatioF()
        dev, status = self._dev[group]
        for st in np.unique(status):
            img = self._symbol(int(st), dpr)
            half = img.width() / dpr / 2
            for x, y in (dev[status == st] - half).tolist():
                painter.drawImage(QPointF(x, y), img)


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


class TargetsLayer:
    """Markers, labels and the selection rings of every arm's targets.

    Labels give each failing target's reason (amounts left out while a drag steps: they
    would change at every pointer move; they come back when the changes pause).
    """

    def __init__(self, host: Host) -> None:
        self._host = host
        self.markers = MarkersItem(
            {int(st): (ss.symbol, ss.colour) for st, ss in style.STATUS_STYLES.items()}
        )
        self.markers.setData(0, "targets.markers")
        host.add(self.markers, Z["target"])
        self.selected = pg.ScatterPlotItem(
            size=24,
            symbol="o",
            pen=pg.mkPen(colour(style.PALETTE["harbour"], 0.9), width=3.0),
            brush=pg.mkBrush(0, 0, 0, 0),
            pxMode=True,
        )
        host.add(self.selected, Z["select"])
        self.labels = LabelsItem()
        self.labels.setData(0, "targets.labels")
        host.add(self.labels, Z["label"])
        self._reasons: dict[str, tuple[object, bool, list[str]]] = {}
        self._names_key: tuple | None = None
        self._names_of: tuple | None = None
        self._names: dict[str, str] = {}
        self._shown_selection: tuple = ("\0",)
        self.xy = np.zeros((0, 2))
        self.ids: list[str] = []
        self.status = np.zeros(0, dtype=np.int64)

    def reasons(self, ev, units: str, plain: bool) -> list[str]:
        """Label reason per target of an arm ('' when feasible), glyph first (cached)."""
        hit = self._reasons.get(ev.arm.id)
        if hit is not None and hit[0] is ev and hit[1] == plain and hit[3] == units:
            return hit[2]
        status = ev.status.tolist()
        out = [""] * len(status)
        detail = "plain" if plain else "short"
        for i in np.flatnonzero(~np.asarray(ev.feasible, dtype=bool)).tolist():
            glyph = style.status_style(status[i]).glyph
            out[i] = f"{glyph} {target_reason(ev, i, units, detail)}"
        self._reasons[ev.arm.id] = (ev, plain, out, units)
        return out

    def update(self, frame: Frame) -> None:
        cell, evaluation = frame.cell, frame.evaluation
        if cell.targets is not self._names_of:
            key = tuple((t.id, t.name) for t in cell.targets)
            self._names_of = cell.targets
            if key != self._names_key:
                self._names_key = key
                self._names = dict(key)
                frame.arms = None  # renamed targets: every arm's labels
        xy_parts, st_parts, ids, groups = [], [], [], []
        for aid, ev in evaluation.arms.items():
            groups.append(aid)
            if frame.touched(aid):
                status = np.asarray(ev.status, dtype=np.int64)
                self.markers.set_group(aid, ev.xy, status)
                names = [self._names[t] for t in ev.target_ids]
                self.labels.set_group(aid, ev.xy, names, self.reasons(ev, cell.units, frame.draft))
            xy_parts.append(ev.xy)
            st_parts.append(np.asarray(ev.status, dtype=np.int64))
            ids.extend(ev.target_ids)
        seen = set(ids)
        orphans = [t for t in cell.targets if t.id not in seen]
        if orphans:
            oxy = np.array([(t.x, t.y) for t in orphans], dtype=float)
            ost = np.full(len(orphans), int(Status.BEYOND_REACH), dtype=np.int64)
            self.markers.set_group("", oxy, ost)
            self.labels.set_group(
                "",
                oxy,
                [t.name for t in orphans],
                [f"assigned to missing arm {t.arm!r}" for t in orphans],
            )
            groups.append("")
            xy_parts.append(oxy)
            st_parts.append(ost)
            ids.extend(t.id for t in orphans)
        self.markers.keep_groups(groups)
        self.labels.keep_groups(groups)
        self.xy = np.vstack(xy_parts) if xy_parts else np.zeros((0, 2))
        self.ids = ids
        self.status = np.concatenate(st_parts) if st_parts else np.zeros(0, dtype=np.int64)
        sel = tuple(sorted(frame.selection))
        if sel != self._shown_selection or (sel and frame.arms is None):
            self._shown_selection = sel
            pos = np.zeros((0, 2))
            if self.ids and sel:
                chosen = set(sel)
                mask = np.array([t in chosen for t in self.ids], dtype=bool)
                pos = self.xy[mask]
            self.selected.setData(pos=pos)
            self.selected.setVisible(len(pos) > 0)

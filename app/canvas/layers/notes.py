"""Notes of the drawings: short texts beside what they explain (hit fixtures, colliding
moves, shared zones, fixtures passed over), placed clear of the target markers, their
labels and each other, again whenever the view changes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFont, QFontMetricsF, QImage, QPainter, QPen

from app import style

from ..qtstyle import colour
from . import Z

__all__ = ["Note", "place_notes", "NoteLayer"]


@dataclass(frozen=True)
class Note:
    """A text note of the clearance drawings, placed beside a world box.

    Attributes
    ----------
    key : tuple
        Identity between refreshes.
    text : str
    tag : str
        Scene tag ("collision.label:<fixture>", "overlay.<kind>.note:...").
    edge : str
        Hex colour of the dashed border.
    box : tuple of float
        World box (x0, y0, x1, y1) the note belongs to (a point when x0 == x1, y0 == y1).
    priority : int
        Lower is placed first (gets the best spot).
    """

    key: tuple
    text: str
    tag: str
    edge: str
    box: tuple[float, float, float, float]
    priority: int = 5


def _overlap(a: tuple, b: tuple) -> float:
    w = min(a[2], b[2]) - max(a[0], b[0])
    h = min(a[3], b[3]) - max(a[1], b[1])
    return w * h if w > 0 and h > 0 else 0.0


def _overlaps(rects: np.ndarray, boxes: np.ndarray) -> np.ndarray:
    """Summed overlap area of each rect (K, 4) with all boxes (B, 4)."""
    if not len(boxes):
        return np.zeros(len(rects))
    w = np.minimum(rects[:, None, 2], boxes[None, :, 2]) - np.maximum(
        rects[:, None, 0], boxes[None, :, 0]
    )
    h = np.minimum(rects[:, None, 3], boxes[None, :, 3]) - np.maximum(
        rects[:, None, 1], boxes[None, :, 1]
    )
    return (np.clip(w, 0, None) * np.clip(h, 0, None)).sum(axis=1)


def place_notes(
    boxes: list[tuple[float, float, float, float]],
    sizes: list[tuple[float, float]],
    obstacles: list[tuple[float, float, float, float]],
    view: tuple[float, float, float, float],
    gap: float = 4.0,
) -> list[tuple[float, float]]:
    """Top-left pixel corners for notes of ``sizes`` beside their anchor ``boxes``.

    All in device pixels (y down), boxes as (left, top, right, bottom). Each note takes
    the first spot around its box (above, below, right, left, then the corners) that
    overlaps no obstacle and no note placed before it and lies in ``view``; when every
    spot next to the box is taken, the same spots one, two and three note heights
    further out; failing all, the spot with the least overlap (overlapping another note
    costs ten times more than covering a marker or a target label).

    Examples
    --------
    A note that does not fit above its box (the view starts there) goes below it.

    >>> place_notes([(10, 0, 50, 20)], [(30, 10)], [], (0, 0, 200, 200))
    [(10.0, 24.0)]
    """
    fixed = np.asarray(obstacles, dtype=float).reshape(-1, 4)
    notes = np.zeros((0, 4))
    out = []
    for (l, t, r, b), (w, h) in zip(boxes, sizes):
        cx, cy = (l + r) / 2, (t + b) / 2
        best, best_cost = None, math.inf
        for ring in range(4):
            dy, dx = ring * (h + gap), ring * (w / 2 + gap)
            spots = [
                (l, t - gap - h - dy),
                (l, b + gap + dy),
                (r + gap + dx, t),
                (l - gap - w - dx, t),
                (r - w, t - gap - h - dy),
                (r - w, b + gap + dy),
                (r + gap + dx, b - h),
                (l - gap - w - dx, b - h),
            ]
            if ring == 0:
                spots.append((cx - w / 2, cy - h / 2))
            xy = np.array(spots, dtype=float)
            rects = np.column_stack([xy, xy[:, 0] + w, xy[:, 1] + h])
            outside = w * h - np.array([_overlap(tuple(rc), view) for rc in rects])
            cost = 20.0 * outside + 10.0 * _overlaps(rects, notes) + _overlaps(rects, fixed)
            k = int(np.argmin(cost))  # the first among equals: nearer spots come first
            if cost[k] < best_cost - 1e-9:
                best, best_cost = (float(xy[k, 0]), float(xy[k, 1])), float(cost[k])
            if best_cost <= 0:
                break
        assert best is not None
        # Whatever the spot, the note stays in view (a leader line shows what it is about).
        bx, by = best
        if w <= view[2] - view[0]:
            bx = min(max(bx, view[0]), view[2] - w)
        if h <= view[3] - view[1]:
            by = min(max(by, view[1]), view[3] - h)
        best = (float(bx), float(by))
        out.append(best)
        notes = np.vstack([notes, [[best[0], best[1], best[0] + w, best[1] + h]]])
    return out


class _NotesItem(pg.GraphicsObject):
    """All notes in one item: each a small image painted at pixel size at a world point."""

    def __init__(self) -> None:
        super().__init__()
        # key -> image, world x, y of its top-left corner, leader line (world) or None
        self.placed: dict[tuple, tuple[QImage, float, float, tuple | None]] = {}

    def viewRangeChanged(self) -> None:
        self.prepareGeometryChange()

    def boundingRect(self) -> QRectF:
        # Painted at pixel size around world points: claim the visible range.
        vr = self.viewRect()
        return QRectF(vr) if vr is not None else QRectF()

    def paint(self, painter, option, widget=None) -> None:
        if not self.placed:
            return
        tr = painter.transform()
        painter.save()
        painter.resetTransform()
        painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
        painter.setPen(QPen(QColor(style.INK), 1.0))
        for _img, _wx, _wy, lead in self.placed.values():
            if lead is not None:
                painter.drawLine(tr.map(QPointF(*lead[0])), tr.map(QPointF(*lead[1])))
        for img, wx, wy, _lead in self.placed.values():
            painter.drawImage(tr.map(QPointF(wx, wy)), img)
        painter.restore()


class NoteLayer:
    """The notes of the clearance drawings, laid out to avoid the target markers and
    labels and each other, again whenever the view changes.

    Each note is rendered once into a small image (dashed border in its edge colour,
    paper-coloured ground); one scene item paints them all.

    Parameters
    ----------
    host : CellCanvas
        Supplies ``add``, ``world_to_viewport``, ``viewport_to_world``,
        ``devicePixelRatioF``, ``note_view()`` and ``note_obstacles()`` (pixel boxes to
        keep clear).
    """

    PAD = 3.0

    def __init__(self, host: Any) -> None:
        self._host = host
        self._notes: dict[tuple, Note] = {}
        self._images: dict[tuple[str, str, float], QImage] = {}
        self._placed: dict[tuple, tuple[float, float, float, float]] = {}  # pixel rects
        self._font = QFont()
        self._font.setPointSizeF(8.0)
        self._fm = QFontMetricsF(self._font)
        self.item = _NotesItem()
        self.item.setData(0, "notes")
        host.add(self.item, Z["note"])

    def _image(self, n: Note) -> QImage:
        dpr = self._host.devicePixelRatioF() or 1.0
        key = (n.text, n.edge, dpr)
        img = self._images.get(key)
        if img is not None:
            return img
        lines = n.text.split("\n")
        w = max(self._fm.horizontalAdvance(t) for t in lines) + 2 * self.PAD
        h = self._fm.height() * len(lines) + 2 * self.PAD
        img = QImage(
            int(math.ceil(w * dpr)),
            int(math.ceil(h * dpr)),
            QImage.Format.Format_ARGB32_Premultiplied,
        )
        img.setDevicePixelRatio(dpr)
        img.fill(0)
        p = QPainter(img)
        p.setRenderHint(QPainter.RenderHint.Antialiasing, True)
        p.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
        p.fillRect(QRectF(0, 0, w, h), colour(style.PAPER, 0.92))
        pen = QPen(QColor(n.edge), 1.0, Qt.PenStyle.DashLine)
        p.setPen(pen)
        p.drawRect(QRectF(0.5, 0.5, w - 1, h - 1))
        p.setPen(QColor(style.INK))
        p.setFont(self._font)
        for k, t in enumerate(lines):
            p.drawText(QPointF(self.PAD, self.PAD + k * self._fm.height() + self._fm.ascent()), t)
        p.end()
        if len(self._images) > 500:
            self._images.clear()
        self._images[key] = img
        return img

    def set(self, notes: list[Note], relayout: bool = True) -> None:
        """Show exactly these notes; laid out again when ``relayout`` (else only new ones)."""
        wanted = {n.key: n for n in notes}
        for k in [k for k in self._notes if k not in wanted]:
            del self._notes[k]
            self._placed.pop(k, None)
            self.item.placed.pop(k, None)
        new = [k for k in wanted if k not in self._notes]
        changed = False
        for k, n in wanted.items():
            old = self._notes.get(k)
            self._notes[k] = n
            if old is not None and old.text != n.text and k in self.item.placed:
                _img, wx, wy, lead = self.item.placed[k]
                self.item.placed[k] = (self._image(n), wx, wy, lead)
                changed = True
        # Drag steps place only new notes; a full layout waits for the pause.
        if relayout or new:
            self.layout(None if relayout else new)
        elif changed:
            self.item.update()

    def _leader(self, box: tuple, rect: tuple) -> tuple | None:
        """A line (world points) from a note to its box when it had to sit further out."""
        # The box point nearest the note's centre, and the note point nearest that.
        bx = min(max((rect[0] + rect[2]) / 2, box[0]), box[2])
        by = min(max((rect[1] + rect[3]) / 2, box[1]), box[3])
        nx = min(max(bx, rect[0]), rect[2])
        ny = min(max(by, rect[1]), rect[3])
        if math.hypot(nx - bx, ny - by) <= 8.0:
            return None
        a = self._host.viewport_to_world(QPointF(nx, ny))
        b = self._host.viewport_to_world(QPointF(bx, by))
        return (a, b)

    def tags(self, prefix: str = "") -> list[str]:
        """Tags of the notes shown that start with ``prefix``, sorted."""
        return sorted(n.tag for n in self._notes.values() if n.tag.startswith(prefix))

    def texts(self, prefix: str = "") -> list[str]:
        """Texts of the notes whose tag starts with ``prefix``."""
        return [n.text for n in self._notes.values() if n.tag.startswith(prefix)]

    def rects(self) -> dict[str, tuple[float, float, float, float]]:
        """Tag -> viewport pixel rectangle of each placed note."""
        return {self._notes[k].tag: r for k, r in self._placed.items() if k in self._notes}

    def layout(self, only: list[tuple] | None = None) -> None:
        """Place every note (or those ``only``) beside its box, clear of targets, their
        labels and each other."""
        if only == []:
            return
        if not self._notes:
            if self.item.placed:
                self.item.placed.clear()
                self.item.update()
            return
        host = self._host
        pick = self._notes.values() if only is None else [self._notes[k] for k in only]
        order = sorted(pick, key=lambda n: (n.priority, n.key))
        obstacles = host.note_obstacles()
        if only is not None:
            obstacles += [r for k, r in self._placed.items() if k not in set(only)]
        boxes, sizes, images = [], [], []
        for n in order:
            x0, y0, x1, y1 = n.box
            a, b = host.world_to_viewport(x0, y1), host.world_to_viewport(x1, y0)
            boxes.append((float(a.x()), float(a.y()), float(b.x()), float(b.y())))
            img = self._image(n)
            dpr = img.devicePixelRatio() or 1.0
            images.append(img)
            sizes.append((img.width() / dpr, img.height() / dpr))
        spots = place_notes(boxes, sizes, obstacles, host.note_view())
        if only is None:
            self._placed.clear()
            self.item.placed.clear()
        for n, img, box, (x, y), (w, h) in zip(order, images, boxes, spots, sizes):
            wx, wy = host.viewport_to_world(QPointF(x, y))
            rect = (x, y, x + w, y + h)
            self.item.placed[n.key] = (img, wx, wy, self._leader(box, rect))
            self._placed[n.key] = rect
        self.item.update()

"""Clearance on the canvas: what collides with what, and the clearance overlays.

Two layers, both drawing engine results only (``kinematics.evaluate``, ``.sweep`` and
``.spaces`` compute every verdict and shape):

* :class:`CollisionMarks`: in the ghost poses, the body that collides is drawn at its
  true size, cross-hatched, with a contact mark (a circled cross) where it meets the
  fixture; the fixture hit gets a thick dashed edge and a label "hit by <arm> link 1".
  Cheap (numpy over the colliding poses), so it follows every drag step.
* :class:`ClearanceOverlays`: swept areas of the sequence moves (colliding ones
  cross-hatched, with the contact marked), the maximum, restricted and operating spaces
  (ISO 10218 terms), shared zones between arms ("shared zone: interlock needed"),
  targets several arms reach, and fixtures the arms pass over. Spaces and swept areas
  are expensive, so they are computed only while their overlay is on; during a drag
  the maximum and restricted spaces follow a base move as a rigid transform, and what
  depends on the joint paths (swept areas, operating spaces, shared zones, shared
  targets) is hidden while stale and recomputed once the changes pause.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
import pyqtgraph as pg
import shapely
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
from PySide6.QtWidgets import QGraphicsItem, QGraphicsPathItem

from app import style
from app.panels.moves import EvaluationView, MoveCache
from kinematics.bodies import (
    BASE,
    LINK2,
    TOOL,
    ArmBodies,
    BodyDataError,
    arm_bodies,
    clearance_margin,
    frames,
    mechanical_limits,
    passes_over,
)
from kinematics.cell import Arm, Cell
from kinematics.evaluate import ArmEvaluation
from kinematics.spaces import joint_box_space, shared_targets
from kinematics.sweep import MoveResult, joint_path, swept_shapes

from .items import MarkersItem, geometry_path, polygon_path, translate_rotate
from .legend import LegendEntry
from .qtstyle import PATTERNS, colour, cosmetic_pen

__all__ = [
    "CLEARANCE_OVERLAYS",
    "OVERLAY_TITLES",
    "CONTACT_SYMBOL",
    "SHARED_SYMBOL",
    "capsule_rings",
    "contact_points",
    "CollisionMarks",
    "ClearanceOverlays",
    "hit_label",
    "Note",
    "NoteLayer",
    "place_notes",
    "reach_bound",
    "fixture_near",
]

#: Clearance overlay kinds (each has an action "overlay.<kind>"), in drawing order.
CLEARANCE_OVERLAYS = (
    "space.maximum",
    "space.restricted",
    "space.operating",
    "swept",
    "shared",
    "shared_targets",
    "passes_over",
)
#: Menu texts and tooltips of the clearance overlays, and whether they start on.
OVERLAY_TITLES = {
    "space.maximum": (
        "Maximum space",
        "Everything the arm's bodies can sweep over the full mechanical range (ISO 10218)",
        False,
    ),
    "space.restricted": (
        "Restricted space",
        "Everything the arm's bodies can sweep within the set joint limits (ISO 10218)",
        False,
    ),
    "space.operating": (
        "Operating space",
        "Union of the areas swept by the arm's sequence moves (ISO 10218)",
        False,
    ),
    "swept": (
        "Swept areas of moves",
        "Area each sequence move sweeps; colliding moves marked",
        False,
    ),
    "shared": (
        "Shared zones",
        "Where the restricted or operating spaces of two arms overlap: an interlock is needed",
        False,
    ),
    "shared_targets": (
        "Targets several arms reach",
        "Mark targets that two or more arms can reach clear of fixtures",
        True,
    ),
    "passes_over": (
        "Fixtures passed over",
        "Fixtures lower than the link underside (less the clearance margin): the links pass over",
        False,
    ),
}

# z offsets inside the host's layers.
Z_SPACE = 12.0  # spaces above fixtures, below regions and ghosts
Z_SWEPT = 14.0
Z_ZONE = 16.0
Z_PASS = 17.0
Z_HIT = 35.0  # colliding bodies above the ghost lines
Z_HIT_EDGE = 11.0  # hit fixtures' dashed edges, just above the fixtures
Z_MARK = 58.0  # contact marks above markers, below labels
Z_NOTE = 62.0  # labels of overlays, above target labels

ARC_POINTS = 8  # points per half circle of a drawn capsule (sub-pixel at sensible zooms)
SEGMENT_SAMPLES = 9  # points along a link's centre segment searched for the contact mark
SPACE_TOL_REL = 1e-3  # drawn space outlines: within 1/1000 of the reach (never inside)
MAX_HIT_LABELS = 12  # more labels than this hide the drawing they explain


def _contact_symbol() -> QPainterPath:
    """A circled cross in the unit box (pyqtgraph symbol convention)."""
    p = QPainterPath()
    p.addEllipse(QPointF(0, 0), 0.5, 0.5)
    d = 0.5 / math.sqrt(2)
    p.moveTo(-d, -d)
    p.lineTo(d, d)
    p.moveTo(-d, d)
    p.lineTo(d, -d)
    return p


#: Marker of a contact point (circled cross), for the canvas and the legend.
CONTACT_SYMBOL = _contact_symbol()
#: Marker ring of a target several arms reach (a hexagon, unfilled).
SHARED_SYMBOL = "h"


# ------------------------------------------------------------------------- geometry


def capsule_rings(p0: np.ndarray, p1: np.ndarray, r: float, k: int = ARC_POINTS) -> np.ndarray:
    """Closed outlines (counter-clockwise) of capsules: segments p0-p1 widened by r.

    Parameters
    ----------
    p0, p1 : ndarray, shape (M, 2)
    r : float
    k : int
        Points per half circle.

    Returns
    -------
    ndarray, shape (M, 2 * k + 3, 2)
        The last point repeats the first. A zero-length segment gives a circle.

    Examples
    --------
    >>> ring = capsule_rings(np.array([[0.0, 0.0]]), np.array([[10.0, 0.0]]), 2.0, k=2)[0]
    >>> (ring.round(6) + 0.0).tolist()
    [[10.0, -2.0], [12.0, 0.0], [10.0, 2.0], [0.0, 2.0], [-2.0, 0.0], [0.0, -2.0], [10.0, -2.0]]
    """
    p0 = np.asarray(p0, dtype=float).reshape(-1, 2)
    p1 = np.asarray(p1, dtype=float).reshape(-1, 2)
    d = p1 - p0
    ang = np.arctan2(d[:, 1], d[:, 0])
    t = np.linspace(-0.5 * math.pi, 0.5 * math.pi, k + 1)
    a1 = ang[:, None] + t[None, :]  # far end: -90..+90 about the direction
    a0 = a1 + math.pi  # near end: +90..+270
    far = p1[:, None, :] + r * np.stack([np.cos(a1), np.sin(a1)], axis=-1)
    near = p0[:, None, :] + r * np.stack([np.cos(a0), np.sin(a0)], axis=-1)
    ring = np.concatenate([far, near, far[:, :1]], axis=1)
    return ring


def _polygon_query_rows(x: np.ndarray, v: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """For rows of points x (n, P, 2), each row against its own polygon v (n, E, 2): the
    distance to the outline (n, P), the nearest outline point (n, P, 2), and whether the
    point is inside (crossing number) (n, P)."""
    e0 = v[:, None, :, :]  # (n, 1, E, 2)
    e1 = np.roll(v, -1, axis=1)[:, None, :, :]
    d = e1 - e0
    dd = np.maximum(np.sum(d * d, axis=-1), 1e-300)
    w = x[:, :, None, :] - e0  # (n, P, E, 2)
    t = np.clip(np.sum(w * d, axis=-1) / dd, 0.0, 1.0)
    near = e0 + t[..., None] * d
    dist2 = np.sum((x[:, :, None, :] - near) ** 2, axis=-1)  # (n, P, E)
    j = np.argmin(dist2, axis=-1)
    best = np.take_along_axis(near, j[..., None, None].repeat(2, axis=-1), axis=2)[:, :, 0]
    y = x[..., 1:2]
    cond = (e0[..., 1] > y) != (e1[..., 1] > y)
    with np.errstate(divide="ignore", invalid="ignore"):
        xint = e0[..., 0] + (y - e0[..., 1]) * d[..., 0] / d[..., 1]
    inside = (np.count_nonzero(cond & (x[..., 0:1] < xint), axis=-1) % 2) == 1
    return np.sqrt(np.take_along_axis(dist2, j[..., None], axis=-1)[..., 0]), best, inside


_GROUPED: dict[int, tuple[tuple, Any]] = {}


def _grouped(
    outlines: tuple[np.ndarray, ...],
) -> tuple[np.ndarray, dict[int, np.ndarray], np.ndarray]:
    """Vertex count per outline, the outlines stacked per count, and each one's row there
    (kept while the same outlines tuple is passed)."""
    hit = _GROUPED.get(id(outlines))
    if hit is not None and hit[0] is outlines:
        return hit[1]
    counts = np.array([len(o) for o in outlines], dtype=np.int64)
    rows_of = np.zeros(len(outlines), dtype=np.int64)
    stacks = {}
    for e in np.unique(counts):
        idx = np.flatnonzero(counts == e)
        stacks[int(e)] = np.stack([np.asarray(outlines[i], dtype=float) for i in idx])
        rows_of[idx] = np.arange(len(idx))
    if len(_GROUPED) > 16:
        _GROUPED.clear()
    _GROUPED[id(outlines)] = (outlines, (counts, stacks, rows_of))
    return counts, stacks, rows_of


def contact_points(
    samples: np.ndarray, fixture: np.ndarray, outlines: tuple[np.ndarray, ...]
) -> np.ndarray:
    """Where to mark each contact: the deepest sample point of a body inside its fixture,
    or, when no sample is inside, the point of the fixture's outline nearest the body.

    Parameters
    ----------
    samples : ndarray, shape (M, P, 2)
        Points of each colliding body's core (centre segment, tool point or outline).
    fixture : ndarray of int, shape (M,)
        Fixture hit by each.
    outlines : tuple of ndarray
        Fixture outlines (V, 2), indexed by ``fixture``.

    Examples
    --------
    A link's centre segment from (-5, 5) to (5, 5) ends inside a square 0..10: its
    deepest sampled point is (5, 5). One that passes 1 above the square touches it at
    its nearest point of the outline.

    >>> sq = (np.array([[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]),)
    >>> s = np.array([np.linspace([-5.0, 5.0], [5.0, 5.0], 5),
    ...               np.linspace([2.0, 11.0], [8.0, 11.0], 5)])
    >>> contact_points(s, np.array([0, 0]), sq).round(6).tolist()
    [[5.0, 5.0], [2.0, 10.0]]
    """
    m = len(samples)
    out = np.zeros((m, 2))
    if m == 0:
        return out
    counts, stacks, rows_of = _grouped(outlines)
    for e in np.unique(counts[fixture]):
        # All fixtures with e vertices at once: one polygon per row.
        sel = np.flatnonzero(counts[fixture] == e)
        polys = stacks[int(e)][rows_of[fixture[sel]]]
        pts = samples[sel]  # (n, P, 2)
        dist, near, inside = _polygon_query_rows(pts, polys)
        signed = np.where(inside, -dist, dist)
        k = np.argmin(signed, axis=1)
        rows = np.arange(len(sel))
        out[sel] = np.where(inside[rows, k][:, None], pts[rows, k], near[rows, k])
    return out


_OUTLINES: dict[int, tuple[tuple, tuple[np.ndarray, ...]]] = {}
_CACHE = QGraphicsItem.CacheMode.DeviceCoordinateCache
_NO_CACHE = QGraphicsItem.CacheMode.NoCache


def _outlines(fixtures: tuple) -> tuple[np.ndarray, ...]:
    """Fixture outlines as arrays, kept while the fixtures tuple is the same object."""
    key = id(fixtures)
    hit = _OUTLINES.get(key)
    if hit is not None and hit[0] is fixtures:
        return hit[1]
    out = tuple(np.asarray(f.outline, dtype=float) for f in fixtures)
    if len(_OUTLINES) > 16:
        _OUTLINES.clear()
    _OUTLINES[key] = (fixtures, out)
    return out


def _rings_path(rings: list[np.ndarray]) -> QPainterPath:
    """One path of closed rings (arrays (M, K, 2)), filled where any ring covers."""
    path = QPainterPath()
    for r in rings:
        if not len(r):
            continue
        m, k, _ = r.shape
        connect = np.ones((m, k), dtype=np.int32)
        connect[:, -1] = 0
        flat = r.reshape(-1, 2)
        path.addPath(pg.arrayToQPath(flat[:, 0], flat[:, 1], connect=connect.ravel()))
    path.setFillRule(Qt.FillRule.WindingFill)
    return path


def _to_world(o: np.ndarray, c: np.ndarray, s: np.ndarray, local: np.ndarray) -> np.ndarray:
    """Local points (K, 2) of frames at origins o (M, 2), angles cos c, sin s: (M, K, 2)."""
    x = o[:, None, 0] + c[:, None] * local[:, 0] - s[:, None] * local[:, 1]
    y = o[:, None, 1] + s[:, None] * local[:, 0] + c[:, None] * local[:, 1]
    return np.stack([x, y], axis=-1)


def _body_geometry(
    ab: ArmBodies,
    q: np.ndarray,
    body_idx: np.ndarray,
    k: int = ARC_POINTS,
    segment_samples: int = SEGMENT_SAMPLES,
) -> tuple[list[np.ndarray], np.ndarray]:
    """Outlines (rings, grouped by body) and core sample points of colliding bodies.

    Returns the rings and samples (M, P, 2) in the order of ``body_idx``; P is the same
    for every row (shorter cores repeat their points). With ``k == 0`` links are given
    by their centre segments only (drafts).
    """
    m = len(body_idx)
    origin, angle = frames(ab.arm, q)
    rings: list[np.ndarray] = []
    p = max(
        segment_samples,
        max((len(b.outline) for b in ab.bodies if b.outline is not None), default=0),
    )
    samples = np.zeros((m, p, 2))
    for b in np.unique(body_idx):
        body = ab.bodies[int(b)]
        sel = np.flatnonzero(body_idx == b)
        o = origin[sel, body.frame]
        c, s = np.cos(angle[sel, body.frame]), np.sin(angle[sel, body.frame])

        if body.kind == "capsule":
            ends = _to_world(o, c, s, np.array([body.a, body.b], dtype=float))
            if k == 0 and body.a != body.b:
                rings.append(ends)
            else:
                rings.append(capsule_rings(ends[:, 0], ends[:, 1], body.radius, max(k, 3)))
            t = np.linspace(0.0, 1.0, p)[None, :, None]
            samples[sel] = ends[:, :1] + t * (ends[:, 1:2] - ends[:, :1])
        else:
            assert body.outline is not None
            pts = _to_world(o, c, s, np.asarray(body.outline, dtype=float))
            rings.append(np.concatenate([pts, pts[:, :1]], axis=1))
            idx = np.arange(p) % len(body.outline)
            samples[sel] = pts[:, idx]
    return rings, samples


def _arm_shape_key(arm: Arm) -> Arm:
    """The arm without its name and base pose: what its spaces' shapes depend on."""
    return replace(arm, id="", name="", x=0.0, y=0.0, heading_deg=0.0)


def reach_bound(ab: ArmBodies) -> float:
    """Largest distance from the base any body point can reach."""
    arm = ab.arm
    out = 0.0
    for b in ab.bodies:
        lead = {BASE: 0.0, LINK2: arm.a1, TOOL: arm.a1 + arm.a2}.get(b.frame, 0.0)
        out = max(out, lead + b.extent)
    return out


def _path_of(arm: Arm, ev: ArmEvaluation | None, a: str, b: str) -> Any:
    """The joint path of move a -> b for the configurations chosen now (None when none)."""
    if ev is None or a not in ev.target_ids or b not in ev.target_ids:
        return None
    ends = []
    for tid in (a, b):
        i = ev.index(tid)
        ch = int(ev.chosen[i])
        if ch < 0:
            return None
        ends.append(ev.ik.q_deg[i, ch])
    path = joint_path(arm, ends[0], ends[1])
    return path if path.allowed else None


def fixture_near(arm: Arm, bound: float, outline) -> bool:
    """Whether a fixture outline comes within ``bound`` of the arm's base (box test)."""
    xy = np.asarray(outline, dtype=float)
    lo, hi = xy.min(axis=0), xy.max(axis=0)
    dx = max(lo[0] - arm.x, 0.0, arm.x - hi[0])
    dy = max(lo[1] - arm.y, 0.0, arm.y - hi[1])
    return math.hypot(dx, dy) <= bound


def _box(outline) -> tuple[float, float, float, float]:
    xy = np.asarray(outline, dtype=float)
    lo, hi = xy.min(axis=0), xy.max(axis=0)
    return float(lo[0]), float(lo[1]), float(hi[0]), float(hi[1])


# ------------------------------------------------------------------------- notes


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
        Supplies ``_add``, ``world_to_viewport``, ``viewport_to_world``, ``plot`` and
        ``note_obstacles()`` (pixel boxes to keep clear).
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
        host._add(self.item, Z_NOTE)

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


# ------------------------------------------------------------------ collision marks


@dataclass
class _ArmMarks:
    item: QGraphicsPathItem
    contacts: np.ndarray
    hits: list[tuple[str, str]]  # (fixture id, body name)
    version: int = 0


class CollisionMarks:
    """Colliding bodies of the shown ghost poses, their contact points, hit fixtures.

    Parameters
    ----------
    host : CellCanvas
        Supplies ``_add(item, z)`` and ``_remove(item)``.
    """

    def __init__(self, host: Any) -> None:
        self._host = host
        self._arms: dict[str, _ArmMarks] = {}
        self._label_text: dict[str, str] = {}
        # One image per arm, redrawn only when that arm's marks change (like the markers).
        self.contact_item = MarkersItem({0: (CONTACT_SYMBOL, style.PALETTE["lemon"])}, size=15.0)
        self.contact_item.setData(0, "collision.contacts")
        host._add(self.contact_item, Z_MARK)
        self._contacts_version: dict[str, int] = {}
        self._draft = False
        self._brush = QBrush(colour(style.PALETTE["ember"], 0.9), PATTERNS["cross"])
        # The thick dashed edges of every hit fixture, one item.
        self.hit_item = QGraphicsPathItem()
        self._hit_pen = cosmetic_pen(style.PALETTE["ember"], 3.0, "dash")
        self._hit_draft_pen = cosmetic_pen(style.PALETTE["ember"], 1.0)
        self.hit_item.setPen(self._hit_pen)
        self.hit_item.setData(0, "collision.hit_edges")
        host._add(self.hit_item, Z_HIT_EDGE, cache=True)
        self._hit_key: tuple = ()

    def set_draft(self, on: bool) -> None:
        """While a drag steps, colliding bodies are outlined only (hatching many of them
        costs more than a frame); the hatching returns when the changes pause."""
        if on == self._draft:
            return
        self._draft = on
        # While stepping: a one-pixel solid edge, drawn directly (the hit set changes often,
        # and a cached wide dashed path would be redrawn whole each time).
        self.hit_item.setPen(self._hit_draft_pen if on else self._hit_pen)
        self.hit_item.setCacheMode(_NO_CACHE if on else _CACHE)
        for m in self._arms.values():
            m.item.setBrush(QBrush(Qt.BrushStyle.NoBrush) if on else self._brush)
            if not on:
                m.item.setCacheMode(_CACHE)

    def update_arm(self, ev: ArmEvaluation, show: np.ndarray) -> None:
        """Mark the colliding configurations of one arm's shown targets (``show`` (N,))."""
        aid = ev.arm.id
        marks = self._arms.get(aid)
        if marks is None:
            item = QGraphicsPathItem()
            item.setPen(cosmetic_pen(style.INK, 1.0))
            item.setBrush(QBrush(Qt.BrushStyle.NoBrush) if self._draft else self._brush)
            item.setData(0, f"collision.bodies:{aid}")
            # Cached between drags: an unchanged arm is one image copy per frame.
            self._host._add(item, Z_HIT, cache=not self._draft)
            marks = _ArmMarks(item, np.zeros((0, 2)), [])
            self._arms[aid] = marks
        n = len(ev.target_ids)
        if not n or ev.bodies is None or not ev.collides.size:
            if marks.contacts.size or marks.hits:
                marks.item.setPath(QPainterPath())
                marks.contacts, marks.hits = np.zeros((0, 2)), []
                marks.version += 1
            return
        ok = np.asarray(ev.ik.ok, dtype=bool) & np.asarray(ev.collides, dtype=bool)
        ok &= np.asarray(show, dtype=bool)[:, None]
        ok[:, 1] &= ~np.asarray(ev.ik.singular, dtype=bool)  # one pose at a singular target
        ii, cc = np.nonzero(ok)
        body = ev.clearance_body[ii, cc]
        fix = ev.clearance_fixture[ii, cc]
        good = (body >= 0) & (fix >= 0)
        ii, cc, body, fix = ii[good], cc[good], body[good], fix[good]
        if not len(ii):
            if marks.contacts.size or marks.hits:
                marks.item.setPath(QPainterPath())
                marks.contacts, marks.hits = np.zeros((0, 2)), []
                marks.version += 1
            return
        q = ev.ik.q_deg[ii, cc]
        if self._draft:
            # Redrawn every step: a cache would cost more than it saves (others keep theirs).
            marks.item.setCacheMode(_NO_CACHE)
        # Drafts: the colliding links' centre segments, drawn over their ghost lines in
        # solid ink; the true-size hatched bodies and the contact marks wait for the pause.
        k, p = (0, 2) if self._draft else (ARC_POINTS, SEGMENT_SAMPLES)
        rings, samples = _body_geometry(ev.bodies, q, body, k, p)
        marks.item.setPath(_rings_path(rings))
        marks.contacts = (
            np.zeros((0, 2))
            if self._draft
            else contact_points(samples, fix, _outlines(ev.fixtures))
        )
        names = ev.bodies.names
        pairs = np.unique(fix * len(names) + body)
        marks.hits = [
            (ev.fixtures[int(v) // len(names)].id, names[int(v) % len(names)]) for v in pairs
        ]
        marks.version += 1

    def keep_arms(self, ids) -> None:
        """Forget arms not in ``ids``."""
        for aid in [a for a in self._arms if a not in set(ids)]:
            self._host._remove(self._arms.pop(aid).item)
            self._contacts_version.pop(aid, None)

    def contacts(self) -> np.ndarray:
        """Contact points drawn, all arms (M, 2)."""
        parts = [m.contacts for m in self._arms.values() if len(m.contacts)]
        return np.vstack(parts) if parts else np.zeros((0, 2))

    def body_items(self) -> dict[str, QGraphicsPathItem]:
        """The colliding-body item of each arm."""
        return {aid: m.item for aid, m in self._arms.items()}

    def hits(self) -> dict[str, list[tuple[str, str]]]:
        """Fixture id -> [(arm id, body name)] of the colliding ghost poses."""
        out: dict[str, list[tuple[str, str]]] = {}
        for aid, m in self._arms.items():
            for fid, body in m.hits:
                out.setdefault(fid, []).append((aid, body))
        return out

    def redraw_contacts(self, extra: np.ndarray | None = None) -> None:
        """Show the contact marks of every arm (plus ``extra`` points, e.g. of moves)."""
        for aid, m in self._arms.items():
            if self._contacts_version.get(aid) != m.version:
                self._contacts_version[aid] = m.version
                self.contact_item.set_group(aid, m.contacts, np.zeros(len(m.contacts)))
        pts = np.zeros((0, 2)) if extra is None else np.asarray(extra, dtype=float)
        self.contact_item.set_group("\0moves", pts, np.zeros(len(pts)))
        self.contact_item.keep_groups([*self._arms, "\0moves"])

    def label_fixtures(self, cell: Cell, fixture_items: dict, texts: dict[str, str]) -> list[Note]:
        """Thick dashed edge on every fixture in ``texts`` (id -> label); their notes."""
        for fid, item in fixture_items.items():
            item.set_hit(fid in texts)
        by_id = {f.id: f for f in cell.fixtures}
        hit = [by_id[fid] for fid in sorted(texts) if fid in by_id]
        key = tuple((f.id, f.outline) for f in hit)
        if key != self._hit_key:
            self._hit_key = key
            path = QPainterPath()
            for f in hit:
                path.addPath(polygon_path(f.outline))
            self.hit_item.setPath(path)
        # At most MAX_HIT_LABELS labels (the fixtures hit most); every hit one keeps its edge.
        ranked = sorted(
            (fid for fid in texts if fid in by_id), key=lambda f: (-texts[f].count(","), f)
        )
        self._label_text = {fid: texts[fid] for fid in ranked[:MAX_HIT_LABELS]}
        return [
            Note(
                ("hit", fid),
                text,
                f"collision.label:{fid}",
                style.PALETTE["ember"],
                _box(by_id[fid].outline),
                priority=0,
            )
            for fid, text in sorted(self._label_text.items())
        ]

    def label_texts(self) -> dict[str, str]:
        """Fixture id -> label shown."""
        return dict(self._label_text)


def hit_label(cell: Cell, hits: list[tuple[str, str]], moves: Sequence[str] = ()) -> str:
    """ "hit by Nest loader link 1, link 2" (one line per arm), plus moves that hit it."""
    by_arm: dict[str, list[str]] = {}
    for aid, body in hits:
        by_arm.setdefault(aid, [])
        if body not in by_arm[aid]:
            by_arm[aid].append(body)
    names = {a.id: a.name for a in cell.arms}
    lines = [f"hit by {names.get(a, a)} {', '.join(b)}" for a, b in by_arm.items()]
    lines += list(moves)
    return "\n".join(lines)


# --------------------------------------------------------------- clearance overlays


@dataclass
class _Space:
    key: tuple
    pose: tuple[float, float, float]
    geom: Any
    path: QPainterPath
    source: str = ""


def _looks() -> dict[str, tuple[QPen, QBrush, str]]:
    slate, ember, pine = style.PALETTE["slate"], style.PALETTE["ember"], style.PALETTE["pine"]
    return {
        "space.maximum": (
            cosmetic_pen(slate, 1.4, "dashdotdot"),
            QBrush(Qt.BrushStyle.NoBrush),
            "",
        ),
        "space.restricted": (
            cosmetic_pen(style.PALETTE["harbour"], 1.6, "dash"),
            QBrush(colour(style.PALETTE["harbour"], 0.07)),
            "",
        ),
        "space.operating": (
            cosmetic_pen(pine, 2.0, "solid"),
            QBrush(colour(pine, 0.45), PATTERNS["vertical"]),
            "",
        ),
        "swept": (cosmetic_pen(pine, 1.0, "solid"), QBrush(colour(pine, 0.13)), ""),
        "swept.collides": (
            cosmetic_pen(ember, 2.5, "dash"),
            QBrush(colour(ember, 0.55), PATTERNS["cross"]),
            "",
        ),
        "shared": (
            cosmetic_pen(style.INK, 2.5, "dashdot"),
            QBrush(colour(style.PALETTE["amber"], 0.75), PATTERNS["grid"]),
            "",
        ),
        "shared.operating": (
            cosmetic_pen(style.INK, 3.0, "solid"),
            QBrush(colour(style.PALETTE["amber"], 0.95), PATTERNS["dense"]),
            "",
        ),
        "passes_over": (
            cosmetic_pen(style.PALETTE["harbour"], 2.5, "dot"),
            QBrush(Qt.BrushStyle.NoBrush),
            "",
        ),
    }


class ClearanceOverlays:
    """The clearance overlays of one canvas (see the module docstring).

    Parameters
    ----------
    host : CellCanvas
        Supplies ``_add(item, z, cache)`` and ``_remove(item)``.
    moves : MoveCache
        Where moves are computed and kept (shared with the problems list).
    """

    def __init__(self, host: Any, moves: MoveCache) -> None:
        self._host = host
        self._moves = moves
        self._looks = _looks()
        self._spaces: dict[tuple[str, str], _Space] = {}
        self._swept: dict[tuple, Any] = {}
        self._operating: dict[str, tuple[tuple, Any]] = {}
        self._zones: dict[tuple, tuple[tuple, Any]] = {}
        self._shared: tuple[tuple, dict[str, tuple[str, ...]]] | None = None
        self._bodies: dict[str, tuple[Arm, ArmBodies, float]] = {}
        self._items: dict[tuple, QGraphicsPathItem] = {}
        self.notes: list[Note] = []
        self.move_results: list[MoveResult] = []
        self.move_contacts = np.zeros((0, 2))
        self.move_hits: dict[str, list[str]] = {}  # fixture id -> lines for its hit label
        self.sources: dict[str, str] = {}  # arm id -> where its maximum space comes from
        self.stale: set[str] = set()  # overlay kinds waiting for a pause
        self._shared_scatter = pg.ScatterPlotItem(
            size=24,
            symbol=SHARED_SYMBOL,
            pen=pg.mkPen(style.PALETTE["pine"], width=2.2),
            brush=pg.mkBrush(0, 0, 0, 0),
            pxMode=True,
        )
        QGraphicsItem.setData(self._shared_scatter, 0, "overlay.shared_targets:all")
        self._shared_scatter.setVisible(False)
        host._add(self._shared_scatter, Z_MARK - 1)

    # ----------------------------------------------------------------- public

    def items(self, kind: str) -> list[Any]:
        """Scene items currently shown for one overlay kind."""
        out: list[Any] = [it for k, it in self._items.items() if k[0] == kind and it.isVisible()]
        if kind == "shared_targets" and self._shared_scatter.isVisible():
            out.append(self._shared_scatter)
        return out

    def shared_target_ids(self) -> dict[str, tuple[str, ...]]:
        """Targets marked as reachable by several arms (target id -> arm ids)."""
        return dict(self._shared[1]) if self._shared is not None else {}

    def refresh(
        self,
        cell: Cell,
        evals: dict[str, ArmEvaluation],
        enabled: set[str],
        live: bool,
        target_xy: dict[str, tuple[float, float]] | None = None,
    ) -> None:
        """Bring every overlay up to date; ``live`` (a drag step) skips the expensive parts."""
        self.stale = set()
        self.notes = []
        present = {a.id for a in cell.arms}
        for k in [k for k in self._spaces if k[0] not in present]:
            del self._spaces[k]
        try:
            margin = clearance_margin(cell)
        except BodyDataError:
            margin = 0.0
        wanted: set[tuple] = set()
        for kind in ("space.maximum", "space.restricted"):
            if kind in enabled:
                wanted |= self._show_spaces(cell, kind)
        moves_needed = bool({"swept", "space.operating", "shared"} & enabled) and cell.sequences
        self.move_results, self.move_contacts, self.move_hits = [], np.zeros((0, 2)), {}
        if moves_needed:
            wanted |= self._show_moves(cell, evals, enabled, live)
        else:
            self._operating.clear()
        if "shared" in enabled and len(cell.arms) > 1:
            wanted |= self._show_zones(cell, live)
        if "passes_over" in enabled:
            wanted |= self._show_passes(cell, margin)
        self._show_shared_targets(cell, "shared_targets" in enabled, live, margin, target_xy)
        for k in [k for k in self._items if k not in wanted]:
            self._host._remove(self._items.pop(k))

    def legend(self, cell: Cell, enabled: set[str]) -> list[LegendEntry]:
        """Legend rows of the overlays shown."""
        e: list[LegendEntry] = []
        if not enabled:
            return e
        looks = self._looks

        def area(kind: str, text: str) -> LegendEntry:
            pen, brush, _ = looks[kind]
            return LegendEntry("area", text, pen=QPen(pen), brush=brush)

        # Short texts: the legend is narrow (about 32 characters).
        rows = []
        if "space.maximum" in enabled:
            sources = {self.sources.get(a.id, "") for a in cell.arms} - {""}
            if len(sources) <= 1:
                src = next(iter(sources), "joint limits")
                rows.append(area("space.maximum", f"maximum space: {src}"))
            else:
                for a in cell.arms:
                    src = self.sources.get(a.id, "joint limits")
                    rows.append(area("space.maximum", f"maximum, {a.name}: {src}"))
        if "space.restricted" in enabled:
            rows.append(area("space.restricted", "restricted space (dashed)"))
        if "space.operating" in enabled:
            rows.append(area("space.operating", "operating space (|||)"))
        if "swept" in enabled:
            rows.append(area("swept", "swept area of a move"))
            rows.append(area("swept.collides", "move collides (hatched, dashed)"))
        if "shared" in enabled:
            rows.append(area("shared", "shared zone: interlock needed"))
            rows.append(area("shared.operating", "shared operating zone (dotted)"))
        if "shared_targets" in enabled and len(cell.arms) > 1:
            rows.append(
                LegendEntry(
                    "symbol",
                    "target several arms reach (⬡)",
                    symbol=SHARED_SYMBOL,
                    pen=QPen(colour(style.PALETTE["pine"])),
                )
            )
        if "passes_over" in enabled:
            rows.append(area("passes_over", "fixture passed over (dotted)"))
        if rows:
            e.append(LegendEntry("header", "Spaces and moves (ISO 10218 terms)"))
            e += rows
        return e

    # --------------------------------------------------------------- helpers

    def _item(self, key: tuple, look: str, tag: str, z: float) -> QGraphicsPathItem:
        item = self._items.get(key)
        if item is None:
            item = QGraphicsPathItem()
            self._host._add(item, z, cache=True)
            self._items[key] = item
        pen, brush, _ = self._looks[look]
        if item.data(1) != look:
            item.setPen(pen)
            item.setBrush(brush)
            item.setData(1, look)
        item.setData(0, tag)
        return item

    def _note(
        self, key: tuple, text: str, tag: str, edge: str, box: tuple, priority: int = 5
    ) -> None:
        self.notes.append(Note(key, text, tag, edge, tuple(float(v) for v in box), priority))

    def _bodies_of(self, arm: Arm) -> tuple[ArmBodies, float]:
        cached = self._bodies.get(arm.id)
        if cached is not None and cached[0] == arm:
            return cached[1], cached[2]
        ab = arm_bodies(arm)
        entry = (arm, ab, reach_bound(ab))
        self._bodies[arm.id] = entry
        return ab, entry[2]

    def _space(self, arm: Arm, kind: str) -> _Space | None:
        tol = SPACE_TOL_REL * arm.reach_max
        key = (_arm_shape_key(arm), tol)
        cached = self._spaces.get((arm.id, kind))
        if cached is not None and cached.key == key:
            return cached
        try:
            ab, _ = self._bodies_of(arm)
            lims = (arm.q1_limits, arm.q2_limits)
            source = "joint limits"
            if kind == "space.maximum":
                mech = mechanical_limits(arm)
                if mech is not None:
                    lims, source = mech, "mechanical range"
            geom = joint_box_space(ab, lims[0], lims[1], tol)
        except (BodyDataError, ValueError):
            return None
        sp = _Space(key, (arm.x, arm.y, arm.heading_deg), geom, geometry_path(geom), source)
        self._spaces[(arm.id, kind)] = sp
        return sp

    @staticmethod
    def _transform(sp: _Space, arm: Arm) -> QTransform:
        return translate_rotate(*sp.pose, arm.x, arm.y, arm.heading_deg)

    def _world(self, sp: _Space, arm: Arm) -> Any:
        """The space's geometry at the arm's current base pose."""
        x0, y0, h0 = sp.pose
        if (x0, y0, h0) == (arm.x, arm.y, arm.heading_deg):
            return sp.geom
        a = math.radians(arm.heading_deg - h0)
        c, s = math.cos(a), math.sin(a)
        # p -> R (p - p0) + p
        xoff = arm.x - (c * x0 - s * y0)
        yoff = arm.y - (s * x0 + c * y0)
        return shapely.affinity.affine_transform(sp.geom, [c, -s, s, c, xoff, yoff])

    def _show_spaces(self, cell: Cell, kind: str) -> set[tuple]:
        wanted = set()
        for arm in cell.arms:
            sp = self._space(arm, kind)
            if sp is None:
                continue
            if kind == "space.maximum":
                self.sources[arm.id] = sp.source
            key = (kind, arm.id)
            item = self._item(key, kind, f"overlay.{kind}:{arm.id}", Z_SPACE)
            if item.data(2) is not sp:
                item.setPath(sp.path)
                item.setData(2, sp)
            item.setTransform(self._transform(sp, arm))
            item.setVisible(True)
            wanted.add(key)
        return wanted

    def _swept_of(self, arm: Arm, path: Any, compute: bool) -> Any:
        """Swept area of a joint path of an arm (cached; None when not known yet)."""
        key = (arm.id, path.q_from, path.q_to)
        entry = self._swept.get(key)
        if entry is not None and entry[0] == arm:
            return entry[1]
        if not compute:
            return None
        ab, _ = self._bodies_of(arm)
        geom = shapely.union_all(list(swept_shapes(ab, path).values()))
        if len(self._swept) > 2000:
            self._swept.clear()
        self._swept[key] = (arm, geom)
        return geom

    def _show_moves(
        self, cell: Cell, evals: dict[str, ArmEvaluation], enabled: set[str], live: bool
    ) -> set[tuple]:
        wanted: set[tuple] = set()
        view = EvaluationView(evals)
        found = self._moves.lookup(cell, view, compute=not live)
        arms = {a.id: a for a in cell.arms}
        names = {t.id: t.name for t in cell.targets}
        per_arm: dict[str, list[Any]] = {}
        missing: set[str] = set()
        contacts = []
        fixture_names = {f.id: f.name for f in cell.fixtures}
        hit_moves: dict[tuple, list[tuple[str, str, str]]] = {}
        noted: dict[tuple, str] = {}
        for (aid, a, b), m in found:
            arm = arms.get(aid)
            if arm is None:
                continue
            if m is None:
                # Not checked for this state yet (a drag step): its swept area is still
                # known when its joint path did not change (e.g. a fixture is dragged).
                missing.add(aid)
                path = _path_of(arm, evals.get(aid), a, b)
                geom = None if path is None else self._swept_of(arm, path, compute=False)
                if geom is not None and "swept" in enabled:
                    key = ("swept", aid, a, b)
                    item = self._item(key, "swept", f"overlay.swept:{aid}:{a}:{b}", Z_SWEPT)
                    if item.data(2) is not geom:
                        item.setPath(geometry_path(geom))
                        item.setData(2, geom)
                    item.setVisible(True)
                    wanted.add(key)
                continue
            self.move_results.append(m)
            if m.path is None or not m.path.allowed:
                continue
            geom = self._swept_of(arm, m.path, compute=not live)
            if geom is None:
                missing.add(aid)
                continue
            per_arm.setdefault(aid, []).append(geom)
            if m.collides and m.sweep is not None and m.sweep.contact is not None:
                contacts.append(m.sweep.contact.xy)
                fid = m.blocked_by or cell.fixtures[m.sweep.contact.fixture].id
                ab, _ = self._bodies_of(arm)
                body = ab.names[m.sweep.body] if 0 <= m.sweep.body < len(ab.names) else "arm"
                hit_moves.setdefault((fid, aid, body), []).append((a, b))
            if "swept" not in enabled:
                continue
            key = ("swept", aid, a, b)
            look = "swept.collides" if m.collides else "swept"
            item = self._item(
                key, look, f"overlay.swept:{aid}:{a}:{b}", Z_SWEPT + (0.5 if m.collides else 0)
            )
            if item.data(2) is not geom:
                item.setPath(geometry_path(geom))
                item.setData(2, geom)
            item.setVisible(True)
            wanted.add(key)
            if m.collides and m.sweep is not None and m.sweep.contact is not None:
                fname = fixture_names.get(m.blocked_by or "", "a fixture")
                back = ("swept", aid, b, a)
                if back in noted and noted[back] == fname:
                    # The return move hits the same fixture: one note for both.
                    self.notes = [
                        replace(
                            n,
                            text=n.text.replace(" → ", " ⇄ ", 1)
                            .replace("✕ move", "✕ moves", 1)
                            .replace(" collides with", " collide with", 1),
                        )
                        if n.key == back
                        else n
                        for n in self.notes
                    ]
                    continue
                noted[("swept", aid, a, b)] = fname
                text = f"✕ move {names.get(a, a)} → {names.get(b, b)} collides with {fname}"
                cx, cy = m.sweep.contact.xy
                self._note(
                    ("swept", aid, a, b),
                    text,
                    f"overlay.swept.note:{aid}:{a}:{b}",
                    style.PALETTE["ember"],
                    (cx, cy, cx, cy),
                    priority=1,
                )
        self.move_contacts = np.array(contacts, dtype=float).reshape(-1, 2)
        arm_names = {a.id: a.name for a in cell.arms}
        for (fid, aid, body), pairs in hit_moves.items():
            # One line per arm and body; a move and its return share one entry.
            words, seen = [], set()
            for a, b in pairs:
                if (a, b) in seen:
                    continue
                if (b, a) in pairs:
                    seen.add((b, a))
                    words.append(f"{a} ⇄ {b}")
                else:
                    words.append(f"{a} → {b}")
            plural = "s" if len(words) > 1 or "⇄" in words[0] else ""
            self.move_hits.setdefault(fid, []).append(
                f"hit by {arm_names.get(aid, aid)} {body} on move{plural} {', '.join(words)}"
            )
        if missing:
            self.stale |= {"swept", "space.operating"}
        if "space.operating" in enabled:
            for arm in cell.arms:
                parts = per_arm.get(arm.id)
                key = ("space.operating", arm.id)
                if not parts or arm.id in missing:
                    continue
                sig = tuple(id(g) for g in parts)
                cached = self._operating.get(arm.id)
                if cached is None or cached[0] != sig:
                    cached = (sig, shapely.union_all(parts))
                    self._operating[arm.id] = cached
                item = self._item(
                    key, "space.operating", f"overlay.space.operating:{arm.id}", Z_SPACE + 0.5
                )
                if item.data(2) is not cached[1]:
                    item.setPath(geometry_path(cached[1]))
                    item.setData(2, cached[1])
                item.setVisible(True)
                wanted.add(key)
        # Operating spaces for the shared zones even when not drawn.
        for arm in cell.arms:
            parts = per_arm.get(arm.id)
            if parts and arm.id not in missing:
                sig = tuple(id(g) for g in parts)
                cached = self._operating.get(arm.id)
                if cached is None or cached[0] != sig:
                    self._operating[arm.id] = (sig, shapely.union_all(parts))
            else:
                self._operating.pop(arm.id, None)
        return wanted

    def _show_zones(self, cell: Cell, live: bool) -> set[tuple]:
        wanted: set[tuple] = set()
        arms = list(cell.arms)
        for i in range(len(arms)):
            for j in range(i + 1, len(arms)):
                a, b = arms[i], arms[j]
                for kind in ("restricted", "operating"):
                    if kind == "restricted":
                        sa, sb = (
                            self._space(a, "space.restricted"),
                            self._space(b, "space.restricted"),
                        )
                        if sa is None or sb is None:
                            continue
                        sig = (
                            id(sa),
                            id(sb),
                            sa.pose,
                            sb.pose,
                            (a.x, a.y, a.heading_deg),
                            (b.x, b.y, b.heading_deg),
                        )
                    else:
                        oa, ob = self._operating.get(a.id), self._operating.get(b.id)
                        if oa is None or ob is None:
                            continue
                        sig = (id(oa[1]), id(ob[1]))
                    key = (a.id, b.id, kind)
                    cached = self._zones.get(key)
                    if cached is None or cached[0] != sig:
                        if live:
                            self.stale.add("shared")
                            continue
                        if kind == "restricted":
                            g = shapely.intersection(self._world(sa, a), self._world(sb, b))
                        else:
                            g = shapely.intersection(oa[1], ob[1])
                        cached = (sig, g)
                        self._zones[key] = cached
                    g = cached[1]
                    if g.is_empty or g.area <= 0:
                        continue
                    ikey = ("shared", a.id, b.id, kind)
                    look = "shared" if kind == "restricted" else "shared.operating"
                    item = self._item(
                        ikey,
                        look,
                        f"overlay.shared:{a.id}+{b.id}:{kind}",
                        Z_ZONE + (kind != "restricted"),
                    )
                    if item.data(2) is not g:
                        item.setPath(geometry_path(g))
                        item.setData(2, g)
                    item.setVisible(True)
                    wanted.add(ikey)
                    if kind == "restricted":
                        # Near the top of the zone: its middle is where the arms meet.
                        x0, y0, x1, y1 = g.bounds
                        p = shapely.Point((x0 + x1) / 2, y1 - 0.08 * (y1 - y0))
                        if not g.contains(p):
                            p = g.representative_point()
                        anchor = (p.x, p.y, p.x, p.y)
                    else:
                        anchor = g.bounds
                    pair = f" ({a.name} + {b.name})" if len(arms) > 2 else ""
                    text = f"shared zone: interlock needed\n{kind} spaces overlap{pair}"
                    self._note(
                        ikey,
                        text,
                        f"overlay.shared.note:{a.id}+{b.id}:{kind}",
                        style.INK,
                        anchor,
                        priority=2,
                    )
        return wanted

    def _show_passes(self, cell: Cell, margin: float) -> set[tuple]:
        wanted: set[tuple] = set()
        over: dict[str, list[Arm]] = {}
        for arm in cell.arms:
            if not cell.fixtures:
                break
            try:
                _ab, bound = self._bodies_of(arm)
            except BodyDataError:
                continue
            mask = passes_over(arm, cell.fixtures, margin)
            for f, m in zip(cell.fixtures, mask):
                if m and fixture_near(arm, bound, f.outline):
                    over.setdefault(f.id, []).append(arm)
        by_id = {f.id: f for f in cell.fixtures}
        for fid, arms in over.items():
            f = by_id[fid]
            key = ("passes_over", fid)
            item = self._item(key, "passes_over", f"overlay.passes_over:{fid}", Z_PASS)
            outline = tuple(f.outline)
            if item.data(2) != outline:
                item.setPath(polygon_path(outline))
                item.setData(2, outline)
            item.setVisible(True)
            wanted.add(key)
            under = ", ".join(f"{a.name} (underside {a.link_underside_height:g})" for a in arms)
            text = f"links pass over: height {f.height:g} {cell.units}\n{under}"
            self._note(
                key,
                text,
                f"overlay.passes_over.note:{fid}",
                style.PALETTE["harbour"],
                _box(f.outline),
                priority=3,
            )
        return wanted

    def _show_shared_targets(
        self,
        cell: Cell,
        on: bool,
        live: bool,
        margin: float,
        target_xy: dict[str, tuple[float, float]] | None,
    ) -> None:
        if not on or len(cell.arms) < 2:
            self._shared_scatter.setVisible(False)
            return
        sig = (cell.arms, cell.targets, cell.fixtures, margin)
        if self._shared is None or self._shared[0] != sig:
            if live:
                self._shared_scatter.setVisible(False)
                self.stale.add("shared_targets")
                return
            try:
                found = shared_targets(cell)
            except BodyDataError:
                found = {}
            self._shared = (sig, found)
        ids = self._shared[1]
        pts = [(t.x, t.y) for t in cell.targets if t.id in ids]
        self._shared_scatter.setData(pos=np.array(pts, dtype=float).reshape(-1, 2))
        self._shared_scatter.setVisible(bool(pts))

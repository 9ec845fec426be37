"""Spaces (ISO 10218 terms), shared zones, targets several arms reach, fixtures passed over.

All shapes are the engine's (:meth:`kinematics.evaluate.CellEvaluation.spaces`): the
maximum and restricted spaces come in the arm's base frame and are drawn with the base
pose as the item's transform, so they follow a base drag rigidly; operating spaces and
the zones made of them depend on the moves' swept areas and wait for the pause; the
restricted zones follow every step.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QPainter, QPainterPath, QPen, QTransform
from PySide6.QtWidgets import QGraphicsItem, QGraphicsPathItem

from app import style
from kinematics.bodies import BodyDataError, clearance_margin, passes_over
from kinematics.rings import Rings, anchor_near_top, rings_of
from kinematics.spaces import local_spaces

from ..draw import ScreenInk
from ..legend import LegendEntry
from ..paths import polygon_path, pose_transform, rings_path
from ..qtstyle import PATTERNS, colour, cosmetic_pen
from . import Frame, Host, Z
from .notes import Note

__all__ = [
    "SPACE_OVERLAYS",
    "OVERLAY_TITLES",
    "SHARED_SYMBOL",
    "LOOKS",
    "SpacesLayer",
    "paint_spaces",
    "paint_shared_targets",
    "PASSES_OVER_GAP",
    "group_boxes",
]

#: Fixtures passed over share one note when their boxes lie closer than this part of the
#: largest reach.
PASSES_OVER_GAP = 0.1


def group_boxes(boxes: list[tuple[float, float, float, float]], gap: float) -> list[list[int]]:
    """Groups of boxes (x0, y0, x1, y1) that overlap or lie within ``gap`` of each other
    (chains count), in order of their first box.

    Examples
    --------
    >>> group_boxes([(0, 0, 1, 1), (1.5, 0, 2, 1), (9, 9, 10, 10)], gap=1.0)
    [[0, 1], [2]]
    """
    n = len(boxes)
    parent = list(range(n))

    def root(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for i in range(n):
        for j in range(i + 1, n):
            a, b = boxes[i], boxes[j]
            dx = max(a[0] - b[2], b[0] - a[2], 0.0)
            dy = max(a[1] - b[3], b[1] - a[3], 0.0)
            if max(dx, dy) <= gap:
                parent[root(j)] = root(i)
    groups: dict[int, list[int]] = {}
    for i in range(n):
        groups.setdefault(root(i), []).append(i)
    return list(groups.values())


#: Overlay kinds of this layer and the swept-area layer (each has an action "overlay.<kind>").
SPACE_OVERLAYS = (
    "space.maximum",
    "space.restricted",
    "space.operating",
    "swept",
    "shared",
    "shared_targets",
    "passes_over",
)
#: Menu texts and tooltips of those overlays, and whether they start on.
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

#: Marker ring of a target several arms reach (a hexagon, unfilled).
SHARED_SYMBOL = "h"


def _looks() -> dict[str, tuple[QPen, QBrush]]:
    slate, ember, pine = style.PALETTE["slate"], style.PALETTE["ember"], style.PALETTE["pine"]
    return {
        "space.maximum": (cosmetic_pen(slate, 1.4, "dashdotdot"), QBrush(Qt.BrushStyle.NoBrush)),
        "space.restricted": (
            cosmetic_pen(style.PALETTE["harbour"], 1.6, "dash"),
            QBrush(colour(style.PALETTE["harbour"], 0.07)),
        ),
        "space.operating": (
            cosmetic_pen(pine, 2.0, "solid"),
            QBrush(colour(pine, 0.45), PATTERNS["vertical"]),
        ),
        "swept": (cosmetic_pen(pine, 1.0, "solid"), QBrush(colour(pine, 0.13))),
        "swept.collides": (
            cosmetic_pen(ember, 2.5, "dash"),
            QBrush(colour(ember, 0.55), PATTERNS["cross"]),
        ),
        "shared": (
            cosmetic_pen(style.INK, 2.5, "dashdot"),
            QBrush(colour(style.PALETTE["amber"], 0.75), PATTERNS["grid"]),
        ),
        "shared.operating": (
            cosmetic_pen(style.INK, 3.0, "solid"),
            QBrush(colour(style.PALETTE["amber"], 0.95), PATTERNS["dense"]),
        ),
        "passes_over": (
            cosmetic_pen(style.PALETTE["harbour"], 2.5, "dot"),
            QBrush(Qt.BrushStyle.NoBrush),
        ),
    }


LOOKS = _looks()


def paint_spaces(
    painter: QPainter,
    cell,
    evaluation,
    overlays,
    to_device: QTransform,
    ink: ScreenInk | None = None,
) -> tuple[list[str], dict[str, str]]:
    """Paint the space overlays of this layer that ``overlays`` names, as the layer draws
    them when the changes have paused: maximum and restricted spaces (placed from the
    base frame), operating spaces, shared zones and fixtures passed over. Targets several
    arms reach are marked by :func:`paint_shared_targets`.

    Returns the looks drawn (keys of :data:`LOOKS`, in drawing order) and, per arm, where
    its maximum space comes from.
    """
    ink = ink or ScreenInk()
    drawn: list[str] = []
    sources: dict[str, str] = {}

    def area(look: str, rings: Rings, transform: QTransform | None = None) -> None:
        if rings.empty:
            return
        pen, brush = LOOKS[look]
        painter.save()
        painter.setTransform((transform or QTransform()) * to_device, True)
        ink.area(painter, rings_path(rings), pen, brush)
        painter.restore()
        if look not in drawn:
            drawn.append(look)

    for kind in ("space.maximum", "space.restricted"):
        if kind not in overlays:
            continue
        for arm in cell.arms:
            try:
                maximum, restricted, source = local_spaces(
                    arm, None, evaluation.store.local_spaces
                )
            except (BodyDataError, ValueError):
                continue
            sources[arm.id] = source
            geom = maximum if kind == "space.maximum" else restricted
            area(kind, rings_of(geom), pose_transform(arm))
    if {"space.operating", "shared"} & set(overlays):
        spaces = evaluation.spaces(operating=bool(cell.sequences))
        if "space.operating" in overlays:
            for arm in cell.arms:
                sp = spaces.arms.get(arm.id)
                if sp is not None and sp.operating is not None:
                    area("space.operating", rings_of(sp.operating))
        if "shared" in overlays:
            for z in spaces.zones:
                look = "shared" if z.kind == "restricted" else "shared.operating"
                area(look, rings_of(z.geometry))
    if "passes_over" in overlays:
        try:
            margin = clearance_margin(cell)
        except BodyDataError:
            margin = 0.0
        over = set()
        for arm in cell.arms:
            ev = evaluation.arms[arm.id]
            over |= {f.id for f, m in zip(ev.fixtures, passes_over(arm, ev.fixtures, margin)) if m}
        path = QPainterPath()
        for f in cell.fixtures:
            if f.id in over:
                path.addPath(polygon_path(f.outline))
        if not path.isEmpty():
            pen, brush = LOOKS["passes_over"]
            painter.save()
            painter.setTransform(to_device, True)
            ink.area(painter, path, pen, brush)
            painter.restore()
            drawn.append("passes_over")
    return drawn, sources


def paint_shared_targets(
    painter: QPainter, cell, evaluation, to_device: QTransform, ink: ScreenInk | None = None
) -> bool:
    """Ring the targets two or more arms reach (the layer's hexagon); True when any."""
    from ..draw import paint_markers

    if len(cell.arms) < 2:
        return False
    try:
        shared = evaluation.shared_targets()
    except BodyDataError:
        return False
    pts = np.array([(t.x, t.y) for t in cell.targets if t.id in shared], dtype=float)
    if not len(pts):
        return False
    look = {0: (SHARED_SYMBOL, "")}
    ring = (style.PALETTE["pine"], 2.2)
    paint_markers(painter, pts, np.zeros(len(pts)), to_device, 24.0, ink, look, outline=ring)
    return True


class ShapeItems:
    """Path items keyed by what they show, each drawing one engine shape (its rings kept
    as ``data(2)``, with the transform that places them as ``data(3)``)."""

    def __init__(self, host: Host) -> None:
        self._host = host
        self.items: dict[tuple, QGraphicsPathItem] = {}
        self._rings: dict[int, tuple[Any, Rings]] = {}

    def rings(self, geom: Any) -> Rings:
        """The rings of a shapely geometry, kept while the same geometry object is drawn."""
        hit = self._rings.get(id(geom))
        if hit is None or hit[0] is not geom:
            hit = (geom, rings_of(geom))
            if len(self._rings) > 4000:
                self._rings.clear()
            self._rings[id(geom)] = hit
        return hit[1]

    def show(self, key: tuple, look: str, tag: str, z: float, rings: Rings, transform=None):
        item = self.items.get(key)
        if item is None:
            item = QGraphicsPathItem()
            self._host.add(item, z, cache=True)
            self.items[key] = item
        if item.data(1) != look:
            pen, brush = LOOKS[look]
            item.setPen(pen)
            item.setBrush(brush)
            item.setData(1, look)
            item.setZValue(z)
        item.setData(0, tag)
        if item.data(2) is not rings:
            item.setPath(rings_path(rings))
            item.setData(2, rings)
        if transform is not None:
            item.setTransform(transform)
        item.setVisible(True)
        return item

    def keep(self, wanted: set[tuple], prefix: str | None = None) -> None:
        """Remove the items not in ``wanted`` (of kinds starting with ``prefix``, if given)."""
        for k in [k for k in self.items if k not in wanted]:
            if prefix is None or str(k[0]).startswith(prefix):
                self._host.remove(self.items.pop(k))

    def of(self, kind: str) -> list[QGraphicsPathItem]:
        return [it for k, it in self.items.items() if k[0] == kind and it.isVisible()]


class SpacesLayer:
    """Maximum, restricted and operating spaces, shared zones and targets, passes over."""

    def __init__(self, host: Host) -> None:
        self._host = host
        self.shapes = ShapeItems(host)
        self.notes: list[Note] = []
        self.sources: dict[str, str] = {}  # arm id -> where its maximum space comes from
        self.stale: set[str] = set()  # overlay kinds waiting for a pause
        self.shared_ids: dict[str, tuple[str, ...]] = {}
        self.scatter = pg.ScatterPlotItem(
            size=24,
            symbol=SHARED_SYMBOL,
            pen=pg.mkPen(style.PALETTE["pine"], width=2.2),
            brush=pg.mkBrush(0, 0, 0, 0),
            pxMode=True,
        )
        QGraphicsItem.setData(self.scatter, 0, "overlay.shared_targets:all")
        self.scatter.setVisible(False)
        host.add(self.scatter, Z["mark"] - 1)

    def update(self, frame: Frame) -> None:
        on = frame.overlays
        cell, evaluation = frame.cell, frame.evaluation
        self.notes = []
        self.stale = set()
        wanted: set[tuple] = set()
        space_kinds = [k for k in ("space.maximum", "space.restricted") if k in on]
        need_operating = bool({"space.operating", "shared"} & on) and bool(cell.sequences)
        live = frame.draft
        if space_kinds:
            for arm in cell.arms:
                try:
                    maximum, restricted, source = local_spaces(
                        arm, None, evaluation.store.local_spaces
                    )
                except (BodyDataError, ValueError):
                    continue
                self.sources[arm.id] = source
                for kind, geom in (("space.maximum", maximum), ("space.restricted", restricted)):
                    if kind not in space_kinds:
                        continue
                    key = (kind, arm.id)
                    self.shapes.show(
                        key,
                        kind,
                        f"overlay.{kind}:{arm.id}",
                        Z["space"] + (0.2 if kind == "space.restricted" else 0.0),
                        self.shapes.rings(geom),
                        pose_transform(arm),
                    )
                    wanted.add(key)
        spaces = None
        if need_operating and not live:
            spaces = evaluation.spaces(operating=True)
        elif "shared" in on and len(cell.arms) > 1:
            spaces = evaluation.spaces(operating=False)
            if need_operating:
                self.stale |= {"space.operating", "shared"}
        elif need_operating:
            self.stale.add("space.operating")
        if spaces is not None and "space.operating" in on:
            for arm in cell.arms:
                sp = spaces.arms.get(arm.id)
                if sp is None or sp.operating is None:
                    continue
                key = ("space.operating", arm.id)
                rings = self.shapes.rings(sp.operating)
                self.shapes.show(
                    key,
                    "space.operating",
                    f"overlay.space.operating:{arm.id}",
                    Z["space"] + 0.5,
                    rings,
                )
                wanted.add(key)
        if spaces is not None and "shared" in on:
            names = {a.id: a.name for a in cell.arms}
            for z in spaces.zones:
                a, b = z.arms
                key = ("shared", a, b, z.kind)
                look = "shared" if z.kind == "restricted" else "shared.operating"
                self.shapes.show(
                    key,
                    look,
                    f"overlay.shared:{a}+{b}:{z.kind}",
                    Z["zone"] + (z.kind != "restricted"),
                    self.shapes.rings(z.geometry),
                )
                wanted.add(key)
                if z.kind == "restricted":
                    x, y = anchor_near_top(z.geometry)
                    anchor = (x, y, x, y)
                else:
                    anchor = tuple(float(v) for v in z.geometry.bounds)
                pair = f" ({names.get(a, a)} + {names.get(b, b)})" if len(cell.arms) > 2 else ""
                self.notes.append(
                    Note(
                        key,
                        f"shared zone: interlock needed\n{z.kind} spaces overlap{pair}",
                        f"overlay.shared.note:{a}+{b}:{z.kind}",
                        style.INK,
                        anchor,
                        priority=2,
                    )
                )
        if "passes_over" in on:
            wanted |= self._passes_over(frame)
        self.shapes.keep(wanted)
        self._shared_targets(frame, "shared_targets" in on)

    def _passes_over(self, frame: Frame) -> set[tuple]:
        cell = frame.cell
        try:
            margin = clearance_margin(cell)
        except BodyDataError:
            margin = 0.0
        over: dict[str, list] = {}
        for arm in cell.arms:
            ev = frame.evaluation.arms[arm.id]
            # Only fixtures within the arm's reach (the ones it could pass over).
            for f, m in zip(ev.fixtures, passes_over(arm, ev.fixtures, margin)):
                if m:
                    over.setdefault(f.id, []).append(arm)
        wanted = set()
        by_id = {f.id: f for f in cell.fixtures}
        boxes = {}
        for fid in over:
            f = by_id[fid]
            key = ("passes_over", fid)
            item = self.shapes.items.get(key)
            if item is None:
                item = QGraphicsPathItem()
                self._host.add(item, Z["passes_over"], cache=True)
                self.shapes.items[key] = item
                pen, brush = LOOKS["passes_over"]
                item.setPen(pen)
                item.setBrush(brush)
                item.setData(1, "passes_over")
            item.setData(0, f"overlay.passes_over:{fid}")
            if item.data(2) != f.outline:
                item.setPath(polygon_path(f.outline))
                item.setData(2, f.outline)
            wanted.add(key)
            xy = np.asarray(f.outline, dtype=float)
            lo, hi = xy.min(axis=0), xy.max(axis=0)
            boxes[fid] = (float(lo[0]), float(lo[1]), float(hi[0]), float(hi[1]))
        # One note per group of fixtures that touch or lie close together: a cell full of
        # low bins and pockets gets a few notes, not one over every bin.
        reach = max((a.reach_max for a in cell.arms), default=0.0)
        for group in group_boxes([boxes[f] for f in over], PASSES_OVER_GAP * reach):
            fids = [list(over)[k] for k in group]
            arms = list({a.id: a for fid in fids for a in over[fid]}.values())
            heights = sorted({float(by_id[fid].height) for fid in fids})
            if len({a.link_underside_height for a in arms}) == 1:
                names = ", ".join(a.name for a in arms)
                under = f"{names} (underside {arms[0].link_underside_height:g})"
            else:
                under = ", ".join(f"{a.name} (underside {a.link_underside_height:g})" for a in arms)
            if len(fids) == 1:
                head = f"links pass over: height {heights[0]:g} {cell.units}"
            else:
                span = f"{heights[0]:g}" if len(heights) == 1 else f"{heights[0]:g}–{heights[-1]:g}"
                head = f"links pass over {len(fids)} fixtures, {span} {cell.units} high"
            x0 = min(boxes[f][0] for f in fids)
            y0 = min(boxes[f][1] for f in fids)
            x1 = max(boxes[f][2] for f in fids)
            y1 = max(boxes[f][3] for f in fids)
            ident = fids[0] if len(fids) == 1 else "+".join(sorted(fids))
            self.notes.append(
                Note(
                    ("passes_over", ident),
                    f"{head}\n{under}",
                    f"overlay.passes_over.note:{ident}",
                    style.PALETTE["harbour"],
                    (x0, y0, x1, y1),
                    priority=3,
                )
            )
        return wanted

    def _shared_targets(self, frame: Frame, on: bool) -> None:
        cell = frame.cell
        if not on or len(cell.arms) < 2:
            self.scatter.setVisible(False)
            self.shared_ids = {}
            return
        try:
            self.shared_ids = frame.evaluation.shared_targets()
        except BodyDataError:
            self.shared_ids = {}
        pts = [(t.x, t.y) for t in cell.targets if t.id in self.shared_ids]
        self.scatter.setData(pos=np.array(pts, dtype=float).reshape(-1, 2))
        self.scatter.setVisible(bool(pts))

    def items(self, kind: str) -> list[Any]:
        out: list[Any] = self.shapes.of(kind)
        if kind == "shared_targets" and self.scatter.isVisible():
            out.append(self.scatter)
        return out

    def legend(self, frame: Frame) -> list[LegendEntry]:
        """Legend rows of the overlays shown (short texts: the legend is narrow)."""
        on, cell = frame.overlays, frame.cell

        def area(kind: str, text: str) -> LegendEntry:
            pen, brush = LOOKS[kind]
            return LegendEntry("area", text, pen=QPen(pen), brush=brush)

        rows = []
        if "space.maximum" in on:
            sources = {self.sources.get(a.id, "") for a in cell.arms} - {""}
            if len(sources) <= 1:
                src = next(iter(sources), "joint limits")
                rows.append(area("space.maximum", f"maximum space: {src}"))
            else:
                for a in cell.arms:
                    src = self.sources.get(a.id, "joint limits")
                    rows.append(area("space.maximum", f"maximum, {a.name}: {src}"))
        if "space.restricted" in on:
            rows.append(area("space.restricted", "restricted space (dashed)"))
        if "space.operating" in on:
            rows.append(area("space.operating", "operating space (|||)"))
        if "swept" in on:
            rows.append(area("swept", "swept area of a move"))
            rows.append(area("swept.collides", "move collides (hatched, dashed)"))
        if "shared" in on:
            rows.append(area("shared", "shared zone: interlock needed"))
            rows.append(area("shared.operating", "shared operating zone (dotted)"))
        if "shared_targets" in on and len(cell.arms) > 1:
            rows.append(
                LegendEntry(
                    "symbol",
                    "target several arms reach (⬡)",
                    symbol=SHARED_SYMBOL,
                    pen=QPen(colour(style.PALETTE["pine"])),
                )
            )
        if "passes_over" in on:
            rows.append(area("passes_over", "fixture passed over (dotted)"))
        if rows:
            rows.insert(0, LegendEntry("header", "Spaces and moves (ISO 10218 terms)"))
        return rows

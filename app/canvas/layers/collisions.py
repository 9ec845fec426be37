"""Collisions of the shown ghost poses: colliding bodies, contact marks, hit fixtures.

Every collision comes from the engine (:func:`kinematics.contacts.collisions`): the
colliding body at its true size (link 1 less its shoulder disc), cross-hatched when the
collision is why its target fails, diagonally hatched with a dashed edge when it belongs
to a configuration the target does not use; a contact mark (a circled cross, filled or
hollow the same way); and the fixture hit gets a thick dashed edge and a note naming
the target, configuration and body.

While a drag steps, colliding bodies are drawn as outlines of their centre segments and
contact marks wait for the pause.
"""

from __future__ import annotations

import math

import numpy as np
from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QBrush, QPainter, QPainterPath, QTransform
from PySide6.QtWidgets import QGraphicsItem, QGraphicsPathItem

from app import style
from kinematics.contacts import CollisionSet, collisions
from kinematics.ik import ELBOWS
from kinematics.rings import rings_from_arrays
from kinematics.wording import hit_note

from ..draw import ScreenInk
from ..paths import polygon_path, polylines_path, rings_path
from ..qtstyle import PATTERNS, colour, cosmetic_pen
from . import Frame, Host, Z
from .notes import Note
from .targets import MarkersItem

__all__ = [
    "CONTACT_SYMBOL",
    "MAX_HIT_LABELS",
    "CollisionsLayer",
    "LOOKS",
    "HIT_PEN",
    "paint_collisions",
]

MAX_HIT_LABELS = 12  # more labels than this hide the drawing they explain
_CACHE = QGraphicsItem.CacheMode.DeviceCoordinateCache
_NO_CACHE = QGraphicsItem.CacheMode.NoCache


def _contact_symbol():
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

#: How collisions are drawn: (pen, brush, legend words) for bodies whose target fails and
#: for bodies of a configuration the target does not use.
LOOKS = {
    "fails": (
        cosmetic_pen(style.INK, 1.2),
        QBrush(colour(style.PALETTE["ember"], 0.9), PATTERNS["cross"]),
        "collides: target fails (crossed)",
    ),
    "other": (
        cosmetic_pen(style.PALETTE["slate"], 1.0, "dash"),
        QBrush(colour(style.PALETTE["sky"], 0.9), PATTERNS["fhatch"]),
        "collides: unused configuration (///)",
    ),
}


#: Edge of a fixture that a shown pose or a move hits.
HIT_PEN = cosmetic_pen(style.PALETTE["ember"], 3.0, "dash")
#: Contact marks: filled for a failing target, hollow for an unused configuration.
CONTACT_LOOKS = {0: (CONTACT_SYMBOL, style.PALETTE["lemon"]), 1: (CONTACT_SYMBOL, style.PAPER)}


def paint_collisions(
    painter: QPainter,
    evaluation,
    shown: dict[str, np.ndarray],
    to_device: QTransform,
    ink: ScreenInk | None = None,
    move_contacts: np.ndarray | None = None,
    move_hits=(),
) -> set[str]:
    """Paint the collisions of the shown ghost poses as the layer does: colliding bodies
    ("fails", "other"), contact marks ("contact") and hit fixtures' edges ("hit"; also
    the fixtures ``move_hits`` names, with the moves' ``move_contacts``). Returns the
    looks drawn."""
    from ..draw import paint_markers

    ink = ink or ScreenInk()
    drawn: set[str] = set()
    hit: set[str] = set(move_hits)
    contacts, kinds = [], []
    painter.save()
    painter.setTransform(to_device, True)
    for aid, ev in evaluation.arms.items():
        cs = collisions(ev, shown.get(aid))
        if not len(cs):
            continue
        hit |= {ev.fixtures[int(f)].id for f in cs.fixture.tolist()}
        for role, mask in (("other", ~cs.fails), ("fails", cs.fails)):
            rows = np.flatnonzero(mask)
            if not len(rows):
                continue
            pen, brush, _words = LOOKS[role]
            rings = cs.rings(mask)
            ink.area(painter, rings_path(rings, Qt.FillRule.WindingFill), pen, brush)
            drawn.add(role)
        if len(cs.contacts):
            contacts.append(cs.contacts)
            kinds.append((~cs.fails).astype(np.int64))
    by_id = {f.id: f for f in evaluation.cell.fixtures}
    edges = QPainterPath()
    for fid in sorted(hit & set(by_id)):
        edges.addPath(polygon_path(by_id[fid].outline))
    if not edges.isEmpty():
        ink.stroke(painter, edges, HIT_PEN)
        drawn.add("hit")
    painter.restore()
    if move_contacts is not None and len(move_contacts):
        contacts.append(np.asarray(move_contacts, dtype=float).reshape(-1, 2))
        kinds.append(np.zeros(len(contacts[-1]), dtype=np.int64))
    if contacts:
        xy, kind = np.vstack(contacts), np.concatenate(kinds)
        paint_markers(painter, xy, kind, to_device, 15.0, ink, CONTACT_LOOKS)
        drawn.add("contact")
    return drawn


class CollisionsLayer:
    """Colliding bodies, contact marks and hit fixtures of every arm."""

    def __init__(self, host: Host) -> None:
        self._host = host
        self._sets: dict[str, CollisionSet] = {}
        self._items: dict[tuple[str, str], QGraphicsPathItem] = {}
        self._draft = False
        self.contacts = MarkersItem(
            {0: (CONTACT_SYMBOL, style.PALETTE["lemon"]), 1: (CONTACT_SYMBOL, style.PAPER)},
            size=15.0,
        )
        self.contacts.setData(0, "collision.contacts")
        host.add(self.contacts, Z["mark"])
        self.hit_item = QGraphicsPathItem()
        self._hit_pen = cosmetic_pen(style.PALETTE["ember"], 3.0, "dash")
        self._hit_draft_pen = cosmetic_pen(style.PALETTE["ember"], 1.0)
        self.hit_item.setPen(self._hit_pen)
        self.hit_item.setData(0, "collision.hit_edges")
        host.add(self.hit_item, Z["hit_edge"], cache=True)
        self._hit_key: tuple = ()
        self.notes: list[Note] = []
        self._ids: dict[str, tuple[str, ...]] = {}
        self._fixtures: dict[str, tuple] = {}
        self._bodies: dict[str, tuple[str, ...]] = {}

    # ------------------------------------------------------------------ drawing

    def _item(self, aid: str, role: str) -> QGraphicsPathItem:
        item = self._items.get((aid, role))
        if item is None:
            pen, brush, _words = LOOKS[role]
            item = QGraphicsPathItem()
            item.setPen(pen)
            item.setBrush(QBrush(Qt.BrushStyle.NoBrush) if self._draft else brush)
            item.setData(0, f"collision.bodies.{role}:{aid}")
            self._host.add(item, Z["hit"] + (0.1 if role == "fails" else 0.0), not self._draft)
            self._items[(aid, role)] = item
        return item

    def set_draft(self, on: bool) -> None:
        """While a drag steps: outlines only (hatching many bodies costs more than a frame),
        drawn directly; the hatching and cached drawing return at the pause."""
        if on == self._draft:
            return
        self._draft = on
        self.hit_item.setPen(self._hit_draft_pen if on else self._hit_pen)
        self.hit_item.setCacheMode(_NO_CACHE if on else _CACHE)
        for (_aid, role), item in self._items.items():
            item.setBrush(QBrush(Qt.BrushStyle.NoBrush) if on else LOOKS[role][1])
            item.setCacheMode(_NO_CACHE if on else _CACHE)

    def update(self, frame: Frame, shown: dict[str, np.ndarray]) -> None:
        """Collisions of the targets shown with ghosts (``shown``: arm id -> mask)."""
        self.set_draft(frame.draft)
        cell = frame.cell
        present = {a.id for a in cell.arms}
        for key in [k for k in self._items if k[0] not in present]:
            self._host.remove(self._items.pop(key))
        for aid in [a for a in self._sets if a not in present]:
            del self._sets[aid]
        for arm in cell.arms:
            if not frame.touched(arm.id) and arm.id in self._sets:
                continue
            ev = frame.evaluation.arms[arm.id]
            cs = collisions(ev, shown.get(arm.id), draft=frame.draft)
            self._sets[arm.id] = cs
            for role, mask in (("fails", cs.fails), ("other", ~cs.fails)):
                item = self._item(arm.id, role)
                if not mask.any():
                    item.setPath(QPainterPath())
                    continue
                if frame.draft:
                    # Centre segments of links (and the outline of a tool disc or outline).
                    path = polylines_path(cs.segments(mask))
                    rest = [(r, a) for r, a in cs.groups if a.shape[1] != 2]
                    if rest:
                        path.addPath(rings_path(_rings(rest, mask)))
                    item.setPath(path)
                else:
                    item.setPath(rings_path(cs.rings(mask), Qt.FillRule.WindingFill))
            if not frame.draft:
                self.contacts.set_group(arm.id, cs.contacts, (~cs.fails).astype(np.int64))
            else:
                self.contacts.set_group(arm.id, np.zeros((0, 2)), np.zeros(0))
        self.contacts.keep_groups([*self._sets, "\0moves"])

    def set_move_contacts(self, xy: np.ndarray) -> None:
        """Contact marks of colliding moves (from the swept-area layer)."""
        pts = np.asarray(xy, dtype=float).reshape(-1, 2)
        self.contacts.set_group("\0moves", pts, np.zeros(len(pts)))

    def hits(self) -> dict[str, list[tuple[str, str, str, str, bool]]]:
        """Fixture id -> [(arm id, target id, elbow, body, fails)] of the shown collisions."""
        out: dict[str, list[tuple[str, str, str, str, bool]]] = {}
        for aid, cs in self._sets.items():
            if not len(cs):
                continue
            ev_ids = self._ids.get(aid, ())
            fixtures = self._fixtures.get(aid, ())
            bodies = self._bodies.get(aid, ())
            for t, c, b, f, fails in zip(
                cs.target.tolist(),
                cs.config.tolist(),
                cs.body.tolist(),
                cs.fixture.tolist(),
                cs.fails.tolist(),
            ):
                out.setdefault(fixtures[f].id, []).append(
                    (aid, ev_ids[t], ELBOWS[c], bodies[b], fails)
                )
        return out

    def mark_hits(
        self, frame: Frame, move_lines: dict[str, list[str]] | None = None, notes: bool = True
    ) -> None:
        """Thick dashed edges on every hit fixture and (with ``notes``) the notes naming
        what hits them."""
        cell = frame.cell
        self._ids = {aid: ev.target_ids for aid, ev in frame.evaluation.arms.items()}
        self._fixtures = {aid: ev.fixtures for aid, ev in frame.evaluation.arms.items()}
        self._bodies = {
            aid: (ev.bodies.names if ev.bodies is not None else ())
            for aid, ev in frame.evaluation.arms.items()
        }
        hits = self.hits()
        move_lines = move_lines or {}
        by_id = {f.id: f for f in cell.fixtures}
        hit_ids = sorted((set(hits) | set(move_lines)) & set(by_id))
        key = tuple((fid, by_id[fid].outline) for fid in hit_ids)
        if key != self._hit_key:
            self._hit_key = key
            path = QPainterPath()
            for fid in hit_ids:
                path.addPath(polygon_path(by_id[fid].outline))
            self.hit_item.setPath(path)
        if not notes:
            return
        names = {t.id: t.name for t in cell.targets}
        arm_names = {a.id: a.name for a in cell.arms}
        texts = {}
        for fid in hit_ids:
            rows = hits.get(fid, [])
            fails = [(a, names.get(t, t), e, b) for a, t, e, b, f in rows if f]
            others = [(a, names.get(t, t), e, b) for a, t, e, b, f in rows if not f]
            texts[fid] = hit_note(arm_names, fails, others, move_lines.get(fid, []))
        # At most MAX_HIT_LABELS notes (the fixtures hit most); every hit one keeps its edge.
        ranked = sorted(texts, key=lambda f: (-len(hits.get(f, [])), f))[:MAX_HIT_LABELS]
        self.notes = [
            Note(
                ("hit", fid),
                texts[fid],
                f"collision.label:{fid}",
                style.PALETTE["ember"],
                _box(by_id[fid].outline),
                priority=0,
            )
            for fid in sorted(ranked)
        ]

    # ------------------------------------------------------------------ reading (tests)

    def body_items(self) -> dict[tuple[str, str], QGraphicsPathItem]:
        """The colliding-body items, by (arm id, "fails" or "other")."""
        return dict(self._items)

    def sets(self) -> dict[str, CollisionSet]:
        """The engine's collision sets drawn, by arm."""
        return dict(self._sets)

    def contact_points(self) -> np.ndarray:
        """Contact points drawn for targets (all arms)."""
        parts = [cs.contacts for cs in self._sets.values() if len(cs.contacts)]
        return np.vstack(parts) if parts else np.zeros((0, 2))

    def label_texts(self) -> dict[str, str]:
        """Fixture id -> note text shown."""
        return {n.key[1]: n.text for n in self.notes}


def _rings(groups, mask):
    return rings_from_arrays([a for rows, arr in groups for a in arr[mask[rows]]])


def _box(outline) -> tuple[float, float, float, float]:
    xy = np.asarray(outline, dtype=float)
    lo, hi = xy.min(axis=0), xy.max(axis=0)
    return float(lo[0]), float(lo[1]), float(hi[0]), float(hi[1])

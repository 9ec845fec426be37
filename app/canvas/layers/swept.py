"""Swept areas of the sequence moves; colliding moves hatched, their contact marked.

Moves and their swept areas are the engine's (:meth:`CellEvaluation.moves`). They cost
the most, so while a drag steps only moves already known for the current state are
drawn (a fixture drag keeps the arms' joint paths) and the rest waits for the pause.
"""

from __future__ import annotations

import numpy as np
from PySide6.QtGui import QPainter, QTransform

from app import style
from kinematics.rings import rings_of
from kinematics.wording import move_reason

from ..draw import ScreenInk
from ..paths import rings_path
from . import Frame, Host, Z
from .notes import Note
from .spaces import LOOKS, ShapeItems

__all__ = ["SweptLayer", "paint_swept"]


def paint_swept(
    painter: QPainter,
    cell,
    evaluation,
    to_device: QTransform,
    ink: ScreenInk | None = None,
    draw_areas: bool = True,
) -> tuple[list[str], np.ndarray, dict[str, list[str]]]:
    """Paint the moves' swept areas as the layer does (colliding ones hatched).

    Returns the looks drawn, the contact points of colliding moves and, per fixture a
    move hits, the moves (``"from → to"``) that hit it. With ``draw_areas`` False only
    the contacts and hits are gathered (the swept-area overlay is off).
    """
    ink = ink or ScreenInk()
    drawn: list[str] = []
    contacts, hits = [], {}
    if not cell.sequences:
        return drawn, np.zeros((0, 2)), hits
    painter.save()
    painter.setTransform(to_device, True)
    for m in evaluation.moves(polygons=draw_areas):
        if m.path is None or m.sweep is None:
            continue
        if m.collides and m.sweep.contact is not None:
            contacts.append(m.sweep.contact.xy)
            hits.setdefault(m.blocked_by or "", []).append(f"{m.from_id} → {m.to_id}")
        if not draw_areas or m.sweep.swept is None:
            continue
        look = "swept.collides" if m.collides else "swept"
        pen, brush = LOOKS[look]
        ink.area(painter, rings_path(rings_of(m.sweep.swept)), pen, brush)
        if look not in drawn:
            drawn.append(look)
    painter.restore()
    return drawn, np.array(contacts, dtype=float).reshape(-1, 2), hits


class SweptLayer:
    """Swept-area items, their notes, and which fixtures colliding moves hit."""

    def __init__(self, host: Host) -> None:
        self.shapes = ShapeItems(host)
        self.notes: list[Note] = []
        self.stale = False
        self.contacts = np.zeros((0, 2))
        self.hits: dict[str, list[str]] = {}  # fixture id -> lines for its hit note
        self.moves: list = []

    def update(self, frame: Frame) -> None:
        self.notes, self.hits, self.stale = [], {}, False
        self.contacts = np.zeros((0, 2))
        cell = frame.cell
        drawn = "swept" in frame.overlays
        if not cell.sequences:
            self.moves = []
            self.shapes.keep(set())
            return
        # Swept areas only while they are drawn; the moves (and their contacts) always.
        moves = frame.evaluation.moves(polygons=drawn, compute=not frame.draft)
        known = {(m.arm, m.from_id, m.to_id) for m in moves}
        expected = {
            (s.arm, a, b)
            for s in cell.sequences
            if len(s.targets) > 1
            for a, b in zip(s.targets, (*s.targets[1:], s.targets[0]))
        }
        self.stale = not expected <= known
        self.moves = moves
        names = {t.id: t.name for t in cell.targets}
        arms = {a.id: a.name for a in cell.arms}
        wanted: set[tuple] = set()
        contacts = []
        noted: dict[tuple, str] = {}
        per_fixture: dict[tuple[str, str, str], list[tuple[str, str]]] = {}
        for m in moves:
            if m.path is None or m.sweep is None:
                continue
            if m.collides and m.sweep.contact is not None:
                contacts.append(m.sweep.contact.xy)
                per_fixture.setdefault((m.blocked_by or "", m.arm, m.body or "arm"), []).append(
                    (m.from_id, m.to_id)
                )
            if not drawn or m.sweep.swept is None:
                continue
            key = ("swept", m.arm, m.from_id, m.to_id)
            look = "swept.collides" if m.collides else "swept"
            self.shapes.show(
                key,
                look,
                f"overlay.swept:{m.arm}:{m.from_id}:{m.to_id}",
                Z["swept"] + (0.5 if m.collides else 0.0),
                self.shapes.rings(m.sweep.swept),
            )
            wanted.add(key)
            if m.collides and m.sweep.contact is not None:
                back = ("swept", m.arm, m.to_id, m.from_id)
                fname = m.reason
                if back in noted and noted[back] == fname:
                    # The return move hits the same fixture: one note for both.
                    self.notes = [
                        Note(
                            n.key,
                            n.text.replace(" → ", " ⇄ ", 1).replace("✕ move ", "✕ moves ", 1),
                            n.tag,
                            n.edge,
                            n.box,
                            n.priority,
                        )
                        if n.key == back
                        else n
                        for n in self.notes
                    ]
                    continue
                noted[key] = fname
                a, b = names.get(m.from_id, m.from_id), names.get(m.to_id, m.to_id)
                text = f"✕ move {a} → {b}: {move_reason(m, m.body, cell.units)}"
                cx, cy = m.sweep.contact.xy
                self.notes.append(
                    Note(
                        key,
                        text,
                        f"overlay.swept.note:{m.arm}:{m.from_id}:{m.to_id}",
                        style.PALETTE["ember"],
                        (cx, cy, cx, cy),
                        priority=1,
                    )
                )
        self.contacts = np.array(contacts, dtype=float).reshape(-1, 2)
        for (fid, aid, body), pairs in per_fixture.items():
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
            self.hits.setdefault(fid, []).append(
                f"hit by {arms.get(aid, aid)} {body} on move{plural} {', '.join(words)}"
            )
        self.shapes.keep(wanted)

    def items(self) -> list:
        return self.shapes.of("swept")

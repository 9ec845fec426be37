"""The arms at the playback time: bodies and links posed by the engine, contacts marked.

While a view showing the playback is open (:class:`app.playback.PlaybackClock` active),
every arm with a planned cycle is drawn where it is at the clock's time: its bodies
filled in the arm's colour with a solid outline and its links as a centre line through
base, elbow and tool point with the joints dotted (poses from
:func:`kinematics.playback.poses_at`). Two arms touching at that time get a large
circled cross where they touch and a note naming both bodies. Each cycle's slowest move
is marked by its tool path (a thick dash-dot line over a pale band) with its time.

The run is the document's one :meth:`~kinematics.evaluate.CellEvaluation.interference`,
taken at pauses only: while a drag steps the posed arms are hidden (they would show
where the arms were before the drag) and come back at the pause.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QBrush, QPainterPath, QPen, QTransform
from PySide6.QtWidgets import QGraphicsItem, QGraphicsPathItem

from app import style
from kinematics.playback import (
    contacts_at,
    move_tool_path,
    poses_at,
    sequence_runs,
    slowest_segment,
)
from kinematics.rings import rings_from_arrays
from kinematics.wording import seconds

from ..legend import LegendEntry
from ..paths import polylines_path, rings_path
from ..qtstyle import colour, cosmetic_pen
from . import Frame, Host, Z
from .collisions import CONTACT_SYMBOL
from .notes import Note

__all__ = ["PlaybackLayer", "CONTACT_MARK_PX", "SLOWEST_PEN", "body_pen", "body_brush"]

#: Size of the mark where two arms touch, screen pixels.
CONTACT_MARK_PX = 30.0
_JOINT_PX = 7.0
#: The slowest move's tool path: a thick dash-dot line (over a pale band).
SLOWEST_PEN = cosmetic_pen(style.INK, 2.0, "dashdot")
_SLOWEST_BAND = cosmetic_pen(style.PALETTE["lemon"], 9.0, alpha=0.8)
_Z_BODY = Z["arm"] + 3.0
_Z_LINK = Z["arm"] + 3.5
_Z_SLOW = Z["swept"] + 1.5


def body_pen(arm_colour: str) -> QPen:
    """Outline of an arm's bodies at the playback time."""
    return cosmetic_pen(arm_colour, 2.2, "solid")


def body_brush(arm_colour: str) -> QBrush:
    """Fill of an arm's bodies at the playback time."""
    return QBrush(colour(arm_colour, 0.38))


def _scaled(path: QPainterPath, px: float) -> QPainterPath:
    return QTransform.fromScale(px, px).map(path)


class PlaybackLayer:
    """Posed arms, contact marks and slowest moves at the playback clock's time."""

    def __init__(self, host: Host, clock: Any) -> None:
        self._host = host
        self.clock = clock
        self._bodies: dict[str, QGraphicsPathItem] = {}
        self._links: dict[str, QGraphicsPathItem] = {}
        self._joints: dict[str, QGraphicsPathItem] = {}
        self._marks: list[tuple[QGraphicsPathItem, pg.TextItem]] = []
        self._slow: list[tuple[QGraphicsPathItem, QGraphicsPathItem]] = []
        self._slow_wanted: list[tuple[str, int, np.ndarray, str]] = []
        #: Notes naming each cycle's slowest move (laid out by the canvas's note layer).
        self.notes: list[Note] = []
        self._colours: dict[str, str] = {}
        self._slow_key: object = None
        self._poses: dict[str, Any] = {}
        self._contacts: tuple = ()
        self.draft = False
        clock.time_changed.connect(lambda _t: self.redraw())
        clock.motion_changed.connect(self.redraw)
        clock.stale_changed.connect(lambda _s: self.redraw())
        clock.active_changed.connect(lambda _a: self.redraw())

    # ------------------------------------------------------------------ state

    @property
    def shown(self) -> bool:
        """Whether the posed arms are drawn: a playback view is open and the run is up
        to date."""
        return bool(self.clock.active and not self.clock.stale and not self.draft)

    def update(self, frame: Frame) -> None:
        """Canvas refresh: arm colours follow the cell; a stepping drag hides the arms."""
        self._colours = {a.id: style.arm_colour(i) for i, a in enumerate(frame.cell.arms)}
        self.draft = bool(frame.draft)
        self.redraw()

    # ------------------------------------------------------------------ drawing

    def _item(self, store: dict, aid: str, z: float, pen: QPen, brush: QBrush | None, tag: str):
        item = store.get(aid)
        if item is None:
            item = QGraphicsPathItem()
            item.setData(0, f"{tag}:{aid}")
            self._host.add(item, z)
            store[aid] = item
        item.setPen(pen)
        item.setBrush(brush if brush is not None else QBrush(Qt.BrushStyle.NoBrush))
        return item

    def _hide(self) -> None:
        for store in (self._bodies, self._links, self._joints):
            for item in store.values():
                item.setVisible(False)
        for mark, label in self._marks:
            mark.setVisible(False)
            label.setVisible(False)
        for band, line in self._slow:
            band.setVisible(False)
            line.setVisible(False)
        self._poses, self._contacts, self.notes = {}, (), []

    def redraw(self) -> None:
        """Pose every running arm at the clock's time (or hide them)."""
        if not self.shown or self.clock.motion is None:
            self._hide()
            return
        motion = self.clock.motion
        tls = motion.timelines
        t = self.clock.time
        poses = poses_at(tls, t)
        self._poses = {p.arm: p for p in poses}
        for aid in [a for a in self._bodies if a not in self._poses]:
            for store in (self._bodies, self._links):
                store[aid].setVisible(False)
        for key, item in self._joints.items():
            if key.split("\0")[0] not in self._poses:
                item.setVisible(False)
        for p in poses:
            c = self._colours.get(p.arm, style.PALETTE["harbour"])
            body = self._item(
                self._bodies, p.arm, _Z_BODY, body_pen(c), body_brush(c), "playback.bodies"
            )
            body.setPath(rings_path(rings_from_arrays(list(p.rings)), Qt.FillRule.WindingFill))
            body.setVisible(True)
            link = self._item(
                self._links, p.arm, _Z_LINK, cosmetic_pen(style.INK, 1.6), None, "playback.links"
            )
            link.setPath(polylines_path(p.joints[None, :, :]))
            link.setVisible(True)
            for k, (x, y) in enumerate(p.joints[1:].tolist()):
                dot = self._joint(p.arm, k)
                dot.setPos(QPointF(x, y))
                dot.setVisible(True)
        self._contacts = contacts_at(tls, t)
        self._draw_contacts(self._contacts)
        self._draw_slowest(motion)

    def _joint(self, aid: str, k: int) -> QGraphicsPathItem:
        """The dot on joint ``k`` (elbow, tool point) of an arm: fixed size on screen."""
        key = f"{aid}\0{k}"
        item = self._joints.get(key)
        if item is None:
            path = QPainterPath()
            path.addEllipse(QPointF(0.0, 0.0), 0.5 * _JOINT_PX, 0.5 * _JOINT_PX)
            item = QGraphicsPathItem(path)
            item.setFlag(QGraphicsItem.GraphicsItemFlag.ItemIgnoresTransformations, True)
            item.setPen(QPen(pg.mkColor(style.INK), 1.4))
            item.setBrush(QBrush(colour(style.PAPER)))
            item.setData(0, f"playback.joint:{aid}")
            self._host.add(item, _Z_LINK + 0.1)
            self._joints[key] = item
        return item

    def _draw_contacts(self, contacts: tuple) -> None:
        while len(self._marks) < len(contacts):
            mark = QGraphicsPathItem(_scaled(CONTACT_SYMBOL, CONTACT_MARK_PX))
            mark.setFlag(QGraphicsItem.GraphicsItemFlag.ItemIgnoresTransformations, True)
            mark.setPen(QPen(pg.mkColor(style.INK), 2.5))
            mark.setBrush(QBrush(colour(style.PALETTE["lemon"], 0.95)))
            mark.setData(0, "playback.contact")
            self._host.add(mark, Z["mark"] + 1.0)
            label = pg.TextItem(
                "",
                color=style.INK,
                anchor=(0.0, 1.3),
                border=pg.mkPen(style.PALETTE["ember"], width=1.5),
                fill=pg.mkBrush(colour(style.PAPER, 0.92)),
            )
            label.setData(0, "playback.contact.label")
            self._host.add(label, Z["note"] + 1.0)
            self._marks.append((mark, label))
        for k, (mark, label) in enumerate(self._marks):
            if k >= len(contacts):
                mark.setVisible(False)
                label.setVisible(False)
                continue
            c = contacts[k]
            mark.setPos(QPointF(*c.xy))
            mark.setVisible(True)
            (a, b), (ba, bb) = c.arms, c.bodies
            label.setText(f"⊗ arms touch at {seconds(c.time_s)}: {a} {ba} and {b} {bb}")
            label.setPos(QPointF(*c.xy))
            label.setVisible(True)

    def _draw_slowest(self, motion: Any) -> None:
        key = (id(motion), id(self.clock.document.evaluation))
        if key != self._slow_key:
            self._slow_key = key
            cell = self.clock.document.cell
            runs = sequence_runs(cell, self.clock.document.evaluation, motion)
            self._slow_wanted = []
            for run in runs:
                k = slowest_segment(run.plan)
                if k is None or len(run.plan.segments) < 2:
                    continue
                xy = move_tool_path(run.timeline, k)
                seg = run.plan.segments[k]
                text = f"{run.plan.arm}: slowest move, {seconds(seg.time_s)}"
                self._slow_wanted.append((run.plan.arm, k, xy, text))
            while len(self._slow) < len(self._slow_wanted):
                band, line = QGraphicsPathItem(), QGraphicsPathItem()
                band.setPen(_SLOWEST_BAND)
                line.setPen(SLOWEST_PEN)
                band.setData(0, "playback.slowest.band")
                line.setData(0, "playback.slowest")
                self._host.add(band, _Z_SLOW)
                self._host.add(line, _Z_SLOW + 0.1)
                self._slow.append((band, line))
            for k, (band, line) in enumerate(self._slow):
                path = QPainterPath()
                if k < len(self._slow_wanted):
                    path = polylines_path(self._slow_wanted[k][2][None, :, :])
                band.setPath(path)
                line.setPath(path)
        for band, line in self._slow:
            on = bool(line.path().elementCount())
            band.setVisible(on)
            line.setVisible(on)
        notes = []
        for aid, k, xy, text in self._slow_wanted:
            x, y = (float(v) for v in xy[len(xy) // 2])
            tag = f"playback.slowest.label:{aid}"
            notes.append(Note(("slowest", aid, k), text, tag, style.INK, (x, y, x, y), 3))
        self.notes = notes

    # ------------------------------------------------------------------ legend, reading

    def legend(self, frame: Frame) -> list[LegendEntry]:
        """Legend rows while the playback is shown."""
        if not self.clock.active:
            return []
        out = [LegendEntry("header", "Playback (arms at the time shown)")]
        running = {tl.arm for tl in (self.clock.timelines if self.clock.motion else ())}
        for i, a in enumerate(frame.cell.arms):
            if a.id not in running:
                continue
            c = style.arm_colour(i)
            out.append(
                LegendEntry(
                    "area", f"{a.name} at the time shown", pen=body_pen(c), brush=body_brush(c)
                )
            )
        out.append(
            LegendEntry(
                "symbol",
                "arms touch (large circled cross)",
                symbol=CONTACT_SYMBOL,
                colour=style.PALETTE["lemon"],
            )
        )
        out.append(LegendEntry("line", "slowest move: tool path (dash-dot)", pen=QPen(SLOWEST_PEN)))
        return out

    def legend_key(self) -> tuple:
        if not self.clock.active:
            return (False,)
        return (True, tuple(tl.arm for tl in self.clock.timelines))

    def poses(self) -> dict[str, Any]:
        """The engine's poses drawn, by arm (empty while hidden)."""
        return dict(self._poses)

    def link_points(self, arm_id: str) -> np.ndarray:
        """Points of the link line drawn for an arm (base, elbow, tool), read from the item."""
        item = self._links.get(arm_id)
        if item is None or not item.isVisible():
            return np.zeros((0, 2))
        path = item.path()
        return np.array(
            [[path.elementAt(i).x, path.elementAt(i).y] for i in range(path.elementCount())]
        )

    def body_item(self, arm_id: str) -> QGraphicsPathItem | None:
        return self._bodies.get(arm_id)

    def contact_marks(self) -> list[tuple[float, float, str]]:
        """Contact marks shown: (x, y, label text)."""
        out = []
        for mark, label in self._marks:
            if mark.isVisible():
                p = mark.pos()
                out.append((float(p.x()), float(p.y()), label.toPlainText()))
        return out

    def slowest_labels(self) -> list[str]:
        """Texts of the slowest-move notes while shown."""
        return [n.text for n in self.notes]

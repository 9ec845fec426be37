"""The drag state machine: press, steps, then commit or cancel (no Qt).

Every drag has three stages. A press on an item starts a *pending* drag; once the
pointer has moved :data:`DRAG_PX` pixels it becomes *active* and every further move is a
step that proposes a new cell (the canvas shows it with ``document.preview``); release
commits it as one undo step, while Esc or a right-click cancels it and the cell from
before the press comes back.

What a step may do is asked of pure rules: snapping (:mod:`.snapping`) and whether a
fixture outline may take the new form (:func:`.snapping.may_move_vertex`).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from kinematics.cell import Cell

from . import edits
from .picking import Hit
from .pointer import Pointer
from .snapping import may_move_vertex, snap_angle

__all__ = ["DRAG_PX", "ANGLE_STEP", "ROTATE_MIN_PX", "Drag", "Step", "DragMachine"]

DRAG_PX = 3.0  # movement before a press becomes a drag, pixels
ANGLE_STEP = 5.0  # heading snap step, degrees
ROTATE_MIN_PX = 6.0  # a turn needs the pointer this far from the base centre, pixels

#: ``snap(x, y, exclude, pointer) -> (x, y)``: where a dragged point lands.
Snapper = Callable[[float, float, "str | None", Pointer], tuple[float, float]]


@dataclass
class Drag:
    """A press on an item that becomes a drag once the pointer moves a few pixels."""

    kind: str  # "base", "rotate", "handle", "target", "vertex", "fixture"
    id: str
    index: int
    press: Pointer
    cell0: Cell
    ref: tuple[float, float] = (0.0, 0.0)  # the point that snaps (base, target, vertex...)
    label: str = ""
    a0: float | None = None  # pointer angle about the base a turn is measured from
    active: bool = False
    last: tuple | None = None


@dataclass(frozen=True)
class Step:
    """What one step of a drag proposes.

    Attributes
    ----------
    cell : Cell or None
        The cell to preview (None: nothing changes this step).
    message : str
        A short status text ("Base of Loader at (120.0, 40.0)").
    refused : str
        Why the step was refused ('' when it was not), e.g. an outline crossing itself.
    """

    cell: Cell | None
    message: str = ""
    refused: str = ""


class DragMachine:
    """Drags of bases, rotate handles, targets, fixture vertices and whole fixtures.

    Parameters
    ----------
    fmt : callable, optional
        Formats a length for messages (default one decimal).

    Examples
    --------
    A base pressed, moved 2 px (still pending), then 40 px (a step), then released:

    >>> from kinematics.cell import Arm
    >>> cell = Cell("c", arms=(Arm("a", "Loader", 0, 0, 0, 400, 250, (-170, 170), (-150, 150)),))
    >>> m = DragMachine()
    >>> m.press(Hit("base", "a"), Pointer(0, 0, 100, 100), cell, px=1.0)
    >>> m.move(Pointer(2, 0, 102, 100), lambda x, y, ex, p: (x, y), 1.0) is None
    True
    >>> step = m.move(Pointer(40, 0, 140, 100), lambda x, y, ex, p: (x, y), 1.0)
    >>> step.cell.arm("a").x, step.message
    (40.0, 'Base of Loader at (40.0, 0.0)')
    >>> m.release()
    'Move base of Loader'
    """

    def __init__(self, fmt: Callable[[float], str] | None = None) -> None:
        self.drag: Drag | None = None
        self._fmt = fmt or (lambda v: f"{v:.1f}")

    @property
    def active(self) -> bool:
        """A drag is under way (the pointer moved past the threshold)."""
        return self.drag is not None and self.drag.active

    @property
    def pending(self) -> bool:
        """An item is pressed but has not moved far enough to be dragged."""
        return self.drag is not None and not self.drag.active

    def press(self, hit: Hit, p: Pointer, cell: Cell, px: float) -> None:
        """Start a (pending) drag of the item under the pointer.

        ``px`` is the size of one screen pixel in cell units.
        """
        kind = "rotate" if hit.kind == "base" and p.shift else hit.kind
        d = Drag(kind, hit.id, hit.index, p, cell)
        if kind in ("base", "rotate", "handle"):
            arm = cell.arm(hit.id)
            d.ref = (arm.x, arm.y)
            if kind == "rotate" and math.hypot(p.x - arm.x, p.y - arm.y) >= ROTATE_MIN_PX * px:
                d.a0 = math.degrees(math.atan2(p.y - arm.y, p.x - arm.x))
            d.label = f"Move base of {arm.name}" if kind == "base" else f"Rotate {arm.name}"
        elif kind == "target":
            t = next(t for t in cell.targets if t.id == hit.id)
            d.ref = (t.x, t.y)
            d.label = f"Move target {t.name}"
        elif kind == "vertex":
            f = next(f for f in cell.fixtures if f.id == hit.id)
            d.ref = (float(f.outline[hit.index][0]), float(f.outline[hit.index][1]))
            d.label = f"Move vertex of {f.name}"
        elif kind == "fixture":
            f = next(f for f in cell.fixtures if f.id == hit.id)
            xy = np.asarray(f.outline, dtype=float)
            i = int(np.argmin(np.hypot(xy[:, 0] - p.x, xy[:, 1] - p.y)))
            d.ref = (float(xy[i, 0]), float(xy[i, 1]))  # the nearest vertex snaps
            d.label = f"Move fixture {f.name}"
        self.drag = d

    def move(self, p: Pointer, snap: Snapper, px: float) -> Step | None:
        """One pointer move; a :class:`Step` when the drag proposes something, else None."""
        d = self.drag
        if d is None:
            return None
        if not d.active:
            if p.pixels_from(d.press) < DRAG_PX:
                return None
            d.active = True
        return self._step(d, p, snap, px)

    def _step(self, d: Drag, p: Pointer, snap: Snapper, px: float) -> Step | None:
        cell0 = d.cell0
        if d.kind in ("rotate", "handle"):
            ax, ay = d.ref
            if math.hypot(p.x - ax, p.y - ay) < ROTATE_MIN_PX * px:
                return None  # too near the base for a direction to mean anything
            ang = math.degrees(math.atan2(p.y - ay, p.x - ax))
            if d.kind == "rotate":
                if d.a0 is None:
                    # Pressed on the pivot itself: the turn starts from here, not with a jump.
                    d.a0 = ang
                ang = cell0.arm(d.id).heading_deg + (ang - d.a0)
            h = snap_angle(ang, enabled=not p.free, step=ANGLE_STEP)
            if ("h", h) == d.last:
                return None
            d.last = ("h", h)
            return Step(
                edits.set_heading(cell0, d.id, h), f"{cell0.arm(d.id).name}: heading {h:.1f}°"
            )
        dx, dy = p.x - d.press.x, p.y - d.press.y
        exclude = d.id if d.kind in ("vertex", "fixture") else None
        sx, sy = snap(d.ref[0] + dx, d.ref[1] + dy, exclude, p)
        if (sx, sy) == d.last:
            return None
        d.last = (sx, sy)
        where = f"({self._fmt(sx)}, {self._fmt(sy)})"
        if d.kind == "base":
            new = edits.move_base(cell0, d.id, sx, sy)
            return Step(new, f"Base of {cell0.arm(d.id).name} at {where}")
        if d.kind == "target":
            return Step(edits.move_target(cell0, d.id, sx, sy), f"{d.label[5:]} at {where}")
        f = next(f for f in cell0.fixtures if f.id == d.id)
        if d.kind == "vertex":
            if not may_move_vertex(f.outline, d.index, (sx, sy)):
                return Step(None, refused=f"{f.name}: the outline would cross itself")
            new = edits.move_vertex(cell0, d.id, d.index, sx, sy)
            return Step(new, f"Vertex {d.index + 1} of {f.name} at {where}")
        ddx, ddy = sx - d.ref[0], sy - d.ref[1]
        new = edits.translate_fixture(cell0, f, ddx, ddy)
        return Step(new, f"{f.name} moved by ({self._fmt(ddx)}, {self._fmt(ddy)})")

    def release(self) -> str | None:
        """End the drag: the undo label to commit when it was active, None otherwise."""
        d, self.drag = self.drag, None
        return d.label if d is not None and d.active else None

    def cancel(self) -> bool:
        """Esc or a right-click: forget the drag; True when it was active (restore the cell)."""
        d, self.drag = self.drag, None
        return d is not None and d.active

"""Rubber-band selection: drag a rectangle over the canvas to select what lies in it.

Shift-drag on empty canvas or over a fixture's area starts a band (a plain drag pans the
view or moves the fixture); releasing selects
the targets whose points lie in the rectangle, the fixtures whose whole outline does and
the arms whose base does. With Ctrl held too, the band adds to the selection instead of
replacing it. A band narrower than the drag threshold selects nothing new (a click).
Pure rules, tested with fake pointer events.
"""

from __future__ import annotations

from dataclasses import dataclass

from kinematics.cell import Cell

from .drag import DRAG_PX
from .pointer import Pointer

__all__ = ["Box", "band_hits", "BandSelect"]

Box = tuple[float, float, float, float]  # x0, y0, x1, y1 (world, any corner order)


def _inside(box: Box, x: float, y: float) -> bool:
    x0, x1 = sorted((box[0], box[2]))
    y0, y1 = sorted((box[1], box[3]))
    return x0 <= x <= x1 and y0 <= y <= y1


def band_hits(cell: Cell, box: Box) -> list[str]:
    """Ids inside a world rectangle: targets (in the cell's order), then fixtures whose
    every vertex is inside, then arms whose base is inside.

    Examples
    --------
    >>> from kinematics.cell import Fixture, Target
    >>> cell = Cell("c", targets=(Target("t1", "A", 1, 1, "a"), Target("t2", "B", 9, 9, "a")),
    ...             fixtures=(Fixture("f", "F", "table", ((2, 2), (3, 2), (3, 3))),))
    >>> band_hits(cell, (0, 0, 5, 5))
    ['t1', 'f']
    """
    out = [t.id for t in cell.targets if _inside(box, t.x, t.y)]
    out += [f.id for f in cell.fixtures if all(_inside(box, x, y) for x, y in f.outline)]
    out += [a.id for a in cell.arms if _inside(box, a.x, a.y)]
    return out


@dataclass
class BandSelect:
    """State of one rubber band: press, moves, release.

    Examples
    --------
    >>> from kinematics.cell import Target
    >>> cell = Cell("c", targets=(Target("t1", "A", 1, 1, "a"), Target("t2", "B", 9, 9, "a")))
    >>> band = BandSelect()
    >>> band.press(Pointer(0, 0, 0, 0, shift=True), ("t2",))
    >>> band.move(Pointer(5, 5, 40, -40, shift=True))
    (0, 0, 5, 5)
    >>> band.release(Pointer(5, 5, 40, -40, shift=True), cell)
    ('t1',)
    >>> band.press(Pointer(0, 0, 0, 0, shift=True, ctrl=True), ("t2",))
    >>> band.release(Pointer(5, 5, 40, -40, shift=True, ctrl=True), cell)
    ('t2', 't1')
    """

    start: Pointer | None = None
    previous: tuple[str, ...] = ()
    box: Box | None = None

    @property
    def active(self) -> bool:
        return self.start is not None

    def press(self, p: Pointer, selection: tuple[str, ...]) -> None:
        """Start a band at ``p``; ``selection`` is what is selected now."""
        self.start = p
        self.previous = tuple(selection)
        self.box = None

    def move(self, p: Pointer) -> Box | None:
        """The rectangle to draw (None until the pointer passed the drag threshold)."""
        if self.start is None:
            return None
        if self.box is None and p.pixels_from(self.start) < DRAG_PX:
            return None
        self.box = (self.start.x, self.start.y, p.x, p.y)
        return self.box

    def release(self, p: Pointer, cell: Cell) -> tuple[str, ...] | None:
        """The new selection, or None when the band was only a click (or cancelled)."""
        start, self.start = self.start, None
        if start is None or p.pixels_from(start) < DRAG_PX:
            self.box = None
            return None
        self.box = None
        hits = band_hits(cell, (start.x, start.y, p.x, p.y))
        if p.ctrl:
            return tuple(dict.fromkeys(self.previous + tuple(hits)))
        return tuple(hits)

    def cancel(self) -> None:
        self.start = None
        self.box = None

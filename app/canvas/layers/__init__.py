"""The canvas's layers, one module each, drawing the engine's results.

Every layer gets a :class:`Frame` (the document's cell and evaluation, which arms
changed, whether a drag is stepping) and updates its scene items from it; none of them
computes geometry (shapes come from :mod:`kinematics` as arrays). Z order, bottom to
top: fixtures (the cached background), spaces, swept areas, shared zones, regions,
ghost poses, colliding bodies, bases, arms at the playback time, targets, contact
marks, labels, notes.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Protocol

from kinematics.cell import Cell
from kinematics.evaluate import CellEvaluation

__all__ = ["Frame", "Host", "Z"]

#: z values of the layers (higher is drawn on top).
Z = {
    "space": 12.0,
    "swept": 14.0,
    "zone": 16.0,
    "passes_over": 17.0,
    "overlay": 20.0,
    "ghost": 30.0,
    "hit": 35.0,
    "hit_edge": 11.0,
    "arm": 40.0,
    "target": 50.0,
    "select": 55.0,
    "mark": 58.0,
    "label": 60.0,
    "note": 62.0,
    "tool": 70.0,
}


@dataclass
class Frame:
    """What one refresh of the canvas draws.

    Attributes
    ----------
    cell : Cell
    evaluation : CellEvaluation
        The document's one evaluation of ``cell``.
    arms : set of str or None
        Arms whose drawing may have changed since the last frame (None: all).
    draft : bool
        A drag is stepping: draw only what must follow every pointer move, cheaply.
    overlays : set of str
        Overlay keys switched on ("annulus", "space.restricted", ...).
    selection : set of str
    ghosts : str
        Ghost-pose mode: "all", "selected" or "none".
    """

    cell: Cell
    evaluation: CellEvaluation
    arms: set[str] | None = None
    draft: bool = False
    overlays: set[str] = field(default_factory=set)
    selection: set[str] = field(default_factory=set)
    ghosts: str = "all"

    def touched(self, arm_id: str) -> bool:
        """Whether an arm's drawing may have changed."""
        return self.arms is None or arm_id in self.arms


class Host(Protocol):
    """What layers need of the canvas."""

    def add(self, item: Any, z: float, cache: bool = False) -> None: ...

    def remove(self, item: Any) -> None: ...

"""One pointer event, as the interaction rules see it."""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Pointer"]


@dataclass(frozen=True)
class Pointer:
    """Where the pointer is and which keys are held.

    Attributes
    ----------
    x, y : float
        World position (cell units).
    px, py : float
        Viewport position (pixels).
    shift, ctrl, alt : bool
        Modifier keys held (Ctrl or Alt suspend snapping; Shift turns a base).
    """

    x: float
    y: float
    px: float = 0.0
    py: float = 0.0
    shift: bool = False
    ctrl: bool = False
    alt: bool = False

    def pixels_from(self, other: Pointer) -> float:
        """Manhattan distance in pixels from another event (drag threshold tests)."""
        return abs(self.px - other.px) + abs(self.py - other.py)

    @property
    def free(self) -> bool:
        """Snapping suspended for this event (Alt or Ctrl held)."""
        return self.alt or self.ctrl

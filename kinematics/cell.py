"""Plain data types of a work cell: arms, fixtures, targets and sequences.

These are immutable value objects shared by the engine, the file loader, the
command line and the desktop program. Editing a cell means building a new
value with :func:`dataclasses.replace`, which keeps undo simple and exact.

Unknown keys read from a file are kept in each object's ``extra`` mapping so
that saving writes them back unchanged.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

__all__ = [
    "ELBOW_SETTINGS",
    "UNITS",
    "FIXTURE_KINDS",
    "Arm",
    "Fixture",
    "Target",
    "Sequence",
    "Cell",
]

#: Which elbow configurations an arm may use.
ELBOW_SETTINGS = ("any", "positive", "negative")
#: Length units a cell may be drawn in.
UNITS = ("mm", "in")
#: Fixture kinds with their own drawing style; other kinds are allowed and drawn plainly.
FIXTURE_KINDS = ("conveyor", "fixture", "guard", "keep-out", "column", "feeder", "table")

MM_PER_UNIT = {"mm": 1.0, "in": 25.4}


@dataclass(frozen=True)
class Arm:
    """A planar two-link arm bolted at a base pose.

    Angles are in degrees, counter-clockwise positive; q1 is measured from the
    base heading, q2 from link 1. Lengths are in the cell's units.
    """

    id: str
    name: str
    x: float
    y: float
    heading_deg: float
    a1: float
    a2: float
    q1_limits: tuple[float, float]
    q2_limits: tuple[float, float]
    elbow: str = "any"
    link_radii: tuple[float, float] | None = None
    link_underside_height: float | None = None
    joint_speed_dps: tuple[float, float] | None = None
    joint_accel_dps2: tuple[float, float] | None = None
    extra: dict[str, Any] = field(default_factory=dict)

    @property
    def reach_max(self) -> float:
        """Outer radius of the reach annulus, a1 + a2."""
        return self.a1 + self.a2

    @property
    def reach_min(self) -> float:
        """Inner radius of the reach annulus, abs(a1 - a2)."""
        return abs(self.a1 - self.a2)


@dataclass(frozen=True)
class Fixture:
    """A fixed object in the cell, outlined by a simple polygon in world coordinates."""

    id: str
    name: str
    kind: str
    outline: tuple[tuple[float, float], ...]
    height: float | None = None
    extra: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Target:
    """A pick or place point assigned to one arm."""

    id: str
    name: str
    x: float
    y: float
    arm: str
    extra: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Sequence:
    """An ordered list of target ids one arm visits in a cycle."""

    arm: str
    targets: tuple[str, ...]
    extra: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Cell:
    """A whole work cell as stored in a ``*.cell.json`` file."""

    name: str
    units: str = "mm"
    arms: tuple[Arm, ...] = ()
    fixtures: tuple[Fixture, ...] = ()
    targets: tuple[Target, ...] = ()
    sequences: tuple[Sequence, ...] = ()
    review: dict[str, Any] | None = None
    extra: dict[str, Any] = field(default_factory=dict)

    def arm(self, arm_id: str) -> Arm:
        """Return the arm with this id (KeyError when there is none)."""
        for a in self.arms:
            if a.id == arm_id:
                return a
        raise KeyError(arm_id)

    def targets_of(self, arm_id: str) -> tuple[Target, ...]:
        """Targets assigned to one arm, in file order."""
        return tuple(t for t in self.targets if t.arm == arm_id)

    @property
    def mm_per_unit(self) -> float:
        """Millimetres in one length unit of this cell."""
        return MM_PER_UNIT[self.units]

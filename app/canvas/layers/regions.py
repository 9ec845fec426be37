"""Reach and joint-limit regions of each arm: the annulus, each configuration's region,
where both reach, the comfort region.

The engine builds them in the arm's base frame (:func:`kinematics.regions.arm_regions`
for the arm at the origin, at the report's chord tolerance); the layer draws them with
the base pose as the item's transform, so a base drag never rebuilds them.
"""

from __future__ import annotations

from dataclasses import replace

from PySide6.QtGui import QPainter, QTransform
from PySide6.QtWidgets import QGraphicsPathItem

from kinematics.cell import Arm
from kinematics.regions import arm_regions
from kinematics.report import REGION_TOL_MM
from kinematics.rings import Rings, rings_of

from ..draw import ScreenInk
from ..paths import pose_transform, rings_path
from ..qtstyle import OVERLAY_LOOKS
from . import Frame, Host, Z

__all__ = ["REGION_KEYS", "region_rings", "paint_regions", "RegionsLayer"]

#: Region overlay kinds, in drawing order (each has an action "overlay.<kind>").
REGION_KEYS = ("annulus", "positive", "negative", "both", "comfort")


def _shape_key(arm: Arm, tol: float) -> tuple:
    return (arm.a1, arm.a2, tuple(arm.q1_limits), tuple(arm.q2_limits), arm.elbow, tol)


def region_rings(arm: Arm, units_mm: float) -> dict[str, Rings]:
    """Every region kind of an arm in its base frame, at the report's chord tolerance.

    Raises
    ------
    ValueError
        When the engine cannot build the arm's regions.
    """
    regs = arm_regions(replace(arm, x=0.0, y=0.0, heading_deg=0.0), REGION_TOL_MM / units_mm)
    return {k: rings_of(getattr(regs, k)) for k in REGION_KEYS}


def paint_regions(
    painter: QPainter,
    arm: Arm,
    rings: dict[str, Rings],
    kinds,
    to_device: QTransform,
    ink: ScreenInk | None = None,
) -> list[str]:
    """Paint an arm's region overlays (``kinds`` of :data:`REGION_KEYS`, in drawing
    order) with the layer's looks; ``rings`` from :func:`region_rings`. Returns the kinds
    drawn."""
    ink = ink or ScreenInk()
    drawn = []
    painter.save()
    painter.setTransform(pose_transform(arm) * to_device, True)
    for k in REGION_KEYS:
        if k not in kinds or rings[k].empty:
            continue
        look = OVERLAY_LOOKS[k]
        ink.area(painter, rings_path(rings[k]), look.pen, look.brush)
        drawn.append(k)
    painter.restore()
    return drawn


class RegionsLayer:
    """Region overlays of every arm (see the module docstring)."""

    def __init__(self, host: Host, on_error=None) -> None:
        self._host = host
        self._on_error = on_error
        self._rings: dict[tuple, dict[str, Rings]] = {}
        self.items: dict[tuple[str, str], QGraphicsPathItem] = {}
        self._drawn: dict[tuple[str, str], tuple] = {}

    def rings(self, arm: Arm, units_mm: float) -> dict[str, Rings] | None:
        """The arm's regions in its base frame (kept per arm shape)."""
        tol = REGION_TOL_MM / units_mm
        key = _shape_key(arm, tol)
        hit = self._rings.get(key)
        if hit is None:
            try:
                hit = region_rings(arm, units_mm)
            except ValueError as exc:  # an arm the engine cannot build regions for: none
                if self._on_error is not None:
                    self._on_error(f"No regions for {arm.name}: {exc}")
                return None
            if len(self._rings) > 32:
                self._rings.clear()
            self._rings[key] = hit
        return hit

    def update(self, frame: Frame) -> None:
        cell = frame.cell
        enabled = [k for k in REGION_KEYS if k in frame.overlays]
        wanted = set()
        for arm in cell.arms:
            if not enabled:
                break
            rings = self.rings(arm, cell.mm_per_unit)
            if rings is None:
                continue
            for order, k in enumerate(REGION_KEYS):
                if k not in enabled:
                    continue
                key = (arm.id, k)
                wanted.add(key)
                item = self.items.get(key)
                if item is None:
                    look = OVERLAY_LOOKS[k]
                    item = QGraphicsPathItem()
                    item.setPen(look.pen)
                    item.setBrush(look.brush)
                    item.setData(0, f"overlay.{k}:{arm.id}")
                    self._host.add(item, Z["overlay"] + order * 0.1, cache=True)
                    self.items[key] = item
                drawn = self._drawn.get(key)
                if drawn is None or drawn[0] is not rings[k]:
                    item.setPath(rings_path(rings[k]))
                    item.setData(2, rings[k])
                if drawn is None or drawn[1] != (arm.x, arm.y, arm.heading_deg):
                    item.setTransform(pose_transform(arm))
                self._drawn[key] = (rings[k], (arm.x, arm.y, arm.heading_deg))
        for key in [k for k in self.items if k not in wanted]:
            self._host.remove(self.items.pop(key))
            self._drawn.pop(key, None)

    def shown(self, kind: str) -> list[QGraphicsPathItem]:
        """Items drawn for one region kind (all arms)."""
        return [it for (aid, k), it in self.items.items() if k == kind]

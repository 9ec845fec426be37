"""Ghost poses: each target's configurations drawn as links base - elbow - tool.

Roles: the chosen pose (solid), the other configuration when it also works (dashed),
and a configuration that is no option (dotted): the other one when it breaks a limit
or hits a fixture, and for a failing target the configuration that comes closest
(:meth:`kinematics.evaluate.ArmEvaluation.closest`), so the designer sees how it fails.
"""

from __future__ import annotations

import numpy as np
from PySide6.QtGui import QPainterPath, QPen
from PySide6.QtWidgets import QGraphicsPathItem

from kinematics.fk import joint_points
from kinematics.ik import ELBOWS, Status

from ..paths import polylines_path
from ..qtstyle import ELBOW_COLOURS, cosmetic_pen, mixed
from . import Frame, Host, Z

__all__ = ["GHOST_ROLES", "ghost_pen", "ghost_masks", "GhostsLayer"]

GHOST_ROLES = ("chosen", "alternative", "blocked")
# One-pixel opaque pens: the fast path of Qt's stroker (wide or translucent is ~10x slower).
_GHOST_PENS = {
    "chosen": ("solid", 1.0, 1.0),
    "alternative": ("dash", 1.0, 0.9),
    "blocked": ("dot", 1.0, 0.6),
}


def ghost_pen(elbow: str, role: str) -> QPen:
    """The pen of one ghost role of one elbow configuration."""
    dash, width, amount = _GHOST_PENS[role]
    pen = cosmetic_pen(ELBOW_COLOURS[elbow], width, dash)
    pen.setColor(mixed(ELBOW_COLOURS[elbow], amount))
    return pen


def ghost_masks(ev, show: np.ndarray) -> dict[int, dict[str, np.ndarray]]:
    """Per configuration and role, which targets draw a ghost (arrays of bool (N,))."""
    ik = ev.ik
    n = len(ev.target_ids)
    feasible = np.asarray(ev.feasible, dtype=bool) & show
    chosen = np.asarray(ev.chosen)
    hits = (
        np.asarray(ev.collides, dtype=bool)
        if ev.collides.shape == (n, 2)
        else np.zeros((n, 2), bool)
    )
    works = np.asarray(ik.ok, dtype=bool) & ~hits
    allowed = np.asarray(ik.allowed, dtype=bool)
    single = np.asarray(ik.singular, dtype=bool)
    status = np.asarray(ev.status)
    # A target failing only on collisions shows its colliding poses (hatched where they hit).
    hit_only = show & (status == int(Status.COLLISION))
    colliding = np.asarray(ik.ok, dtype=bool) & hits
    # Any other failing target in reach shows the configuration that comes closest.
    others = show & ~np.asarray(ev.feasible, dtype=bool) & np.asarray(ik.reachable, dtype=bool)
    others &= status != int(Status.COLLISION)
    closest = np.where(others, ev.closest_all, -1)
    out = {}
    for c in (0, 1):
        out[c] = {
            "chosen": feasible & (chosen == c),
            "alternative": feasible & (chosen != c) & works[:, c] & ~single,
            # Only configurations the elbow setting allows: an excluded one is no option.
            "blocked": (feasible & (chosen != c) & allowed[:, c] & ~works[:, c] & ~single)
            | (hit_only & colliding[:, c] & ~(single & (c == 1)))
            | (others & (closest == c) & ~(single & (c == 1))),
        }
    return out


class GhostsLayer:
    """Ghost-pose lines of every arm: one path item per arm, configuration and role."""

    def __init__(self, host: Host) -> None:
        self._host = host
        self.items: dict[tuple[str, int, str], QGraphicsPathItem] = {}

    def _item(self, aid: str, c: int, role: str) -> QGraphicsPathItem:
        key = (aid, c, role)
        item = self.items.get(key)
        if item is None:
            item = QGraphicsPathItem()
            item.setPen(ghost_pen(ELBOWS[c], role))
            item.setData(0, f"ghost.{role}.{ELBOWS[c]}:{aid}")
            self._host.add(item, Z["ghost"] + (0.5 if role == "chosen" else 0.0))
            self.items[key] = item
        return item

    def shown_mask(self, frame: Frame, arm_id: str, ids: tuple[str, ...]) -> np.ndarray:
        """Which targets of an arm show ghosts in the frame's mode."""
        n = len(ids)
        if frame.ghosts == "none" or n == 0:
            return np.zeros(n, dtype=bool)
        if frame.ghosts == "selected":
            whole = arm_id in frame.selection
            return np.array([whole or t in frame.selection for t in ids], dtype=bool)
        return np.ones(n, dtype=bool)

    def update(self, frame: Frame) -> None:
        cell = frame.cell
        present = {a.id for a in cell.arms}
        for k in [k for k in self.items if k[0] not in present]:
            self._host.remove(self.items.pop(k))
        for arm in cell.arms:
            if not frame.touched(arm.id):
                continue
            ev = frame.evaluation.arms[arm.id]
            show = self.shown_mask(frame, arm.id, ev.target_ids)
            masks = ghost_masks(ev, show)
            q = ev.ik.q_deg
            n = len(ev.target_ids)
            for c in (0, 1):
                need = np.zeros(n, dtype=bool)
                for m in masks[c].values():
                    need |= m
                pts = np.zeros((n, 3, 2))
                if need.any():
                    b, e, t = joint_points(
                        arm.a1, arm.a2, q[need, c, 0], q[need, c, 1], arm.x, arm.y, arm.heading_deg
                    )
                    pts[need] = np.stack([b, e, t], axis=1)
                for role, m in masks[c].items():
                    item = self._item(arm.id, c, role)
                    item.setPath(polylines_path(pts[m]) if m.any() else QPainterPath())

"""Other layout variants as faint ghosts: each variant's bases and the links of its poses.

For every variant of the cell (:mod:`kinematics.variants`) whose arm differs from the
current layout, the arm's base (a dashed circle with a heading tick), its name and the
variant's, and the links (base - elbow - tool point) of the configuration the engine
chooses at each feasible target from there, all thin and pale so the current layout stays
in front. The poses come from the engine's evaluation of the variant
(:func:`kinematics.evaluate.evaluate_cell` of :func:`kinematics.variants.apply_variant`),
made once the changes pause and kept while the variant and the cell stay the same.
"""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from PySide6.QtGui import QColor, QFont, QPainterPath
from PySide6.QtWidgets import QGraphicsPathItem

from app import style
from kinematics.cell import Cell
from kinematics.evaluate import CellEvaluation, evaluate_cell
from kinematics.fk import joint_points
from kinematics.layout_keys import variants
from kinematics.variants import apply_variant

from ..legend import LegendEntry
from ..paths import polylines_path
from ..qtstyle import cosmetic_pen, mixed
from . import Frame, Host, Z
from .bases import base_radius

__all__ = ["VARIANT_GHOST_KEY", "VariantGhostsLayer", "ghost_base_pen", "ghost_link_pen"]

#: Overlay key (action "overlay.variants").
VARIANT_GHOST_KEY = "variants"


def ghost_base_pen():
    """Pen of a variant's base: pale, dashed."""
    pen = cosmetic_pen(style.PALETTE["slate"], 1.5, "dash")
    pen.setColor(mixed(style.PALETTE["slate"], 0.55))
    return pen


def ghost_link_pen():
    """Pen of a variant's links: pale, thin, dash-dotted (the current ghosts are solid,
    dashed or dotted)."""
    pen = cosmetic_pen(style.PALETTE["slate"], 1.0, "dashdot")
    pen.setColor(mixed(style.PALETTE["slate"], 0.45))
    return pen


class VariantGhostsLayer:
    """Faint ghosts of the other variants (see the module docstring)."""

    def __init__(self, host: Host) -> None:
        self._host = host
        self.items: dict[tuple[str, str], tuple] = {}  # (variant, arm) -> base, links, label
        self._evaluations: dict[str, tuple[Cell, CellEvaluation]] = {}
        self._drawn_cell: Cell | None = None

    def evaluation(self, frame: Frame, name: str) -> tuple[Cell, CellEvaluation]:
        """A variant's cell and the engine's evaluation of it (kept while they stay)."""
        vcell = apply_variant(frame.cell, name)
        got = self._evaluations.get(name)
        if got is None or got[0] != vcell:
            got = (vcell, evaluate_cell(vcell, previous=frame.evaluation))
            self._evaluations[name] = got
        return got

    def update(self, frame: Frame) -> None:
        cell = frame.cell
        if VARIANT_GHOST_KEY not in frame.overlays:
            self._clear()
            return
        if frame.draft and self._drawn_cell is not None:
            return  # a drag never waits for the variants: they follow once it pauses
        try:
            names = [v.name for v in variants(cell)]
        except ValueError:
            names = []
        self._evaluations = {k: v for k, v in self._evaluations.items() if k in names}
        wanted = set()
        for name in names:
            vcell, ev = self.evaluation(frame, name)
            for arm in vcell.arms:
                try:
                    now = cell.arm(arm.id)
                except KeyError:
                    continue
                if arm == now:
                    continue  # the variant keeps this arm as it is: nothing to show
                key = (name, arm.id)
                wanted.add(key)
                base, links, label = self._item(key)
                r = base_radius(arm)
                path = QPainterPath()
                path.addEllipse(arm.x - r, arm.y - r, 2 * r, 2 * r)
                h, tip = math.radians(arm.heading_deg), 0.45 * arm.a1
                path.moveTo(arm.x, arm.y)
                path.lineTo(arm.x + tip * math.cos(h), arm.y + tip * math.sin(h))
                base.setPath(path)
                label.setText(f"variant “{name}”")
                label.setPos(arm.x, arm.y - r)
                aev = ev.arms.get(arm.id)
                if aev is None or not aev.feasible.any():
                    links.setPath(QPainterPath())
                    continue
                idx = np.flatnonzero(aev.feasible)
                q = aev.ik.q_deg[idx, aev.chosen[idx]]
                b, e, t = joint_points(
                    arm.a1, arm.a2, q[:, 0], q[:, 1], arm.x, arm.y, arm.heading_deg
                )
                links.setPath(polylines_path(np.stack([b, e, t], axis=1)))
        for key in [k for k in self.items if k not in wanted]:
            for item in self.items.pop(key):
                self._host.remove(item)
        self._drawn_cell = cell

    def _item(self, key: tuple[str, str]):
        got = self.items.get(key)
        if got is None:
            base = QGraphicsPathItem()
            base.setPen(ghost_base_pen())
            base.setData(0, f"variant.base:{key[0]}:{key[1]}")
            links = QGraphicsPathItem()
            links.setPen(ghost_link_pen())
            links.setData(0, f"variant.links:{key[0]}:{key[1]}")
            label = pg.TextItem("", color=QColor(style.PALETTE["slate"]), anchor=(0.5, -0.2))
            font = QFont()
            font.setPointSizeF(8.0)
            font.setItalic(True)
            label.setFont(font)
            self._host.add(links, Z["ghost"] - 1.0)
            self._host.add(base, Z["ghost"] - 0.5)
            self._host.add(label, Z["label"] - 1.0)
            got = (base, links, label)
            self.items[key] = got
        return got

    def _clear(self) -> None:
        for trio in self.items.values():
            for item in trio:
                self._host.remove(item)
        self.items.clear()
        self._drawn_cell = None

    def legend(self, frame: Frame) -> list[LegendEntry]:
        """Legend rows (only while some variant is drawn)."""
        if not self.items:
            return []
        return [
            LegendEntry("header", "Other variants (faint)"),
            LegendEntry("line", "variant base (dashed circle)", pen=ghost_base_pen()),
            LegendEntry("line", "variant links at its targets", pen=ghost_link_pen()),
        ]

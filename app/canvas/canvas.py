"""The cell canvas: a true-scale plan view of the cell with live engine results.

The canvas draws what the document holds and what the engine computed; it never
computes geometry itself. It changes the document only through
``document.preview`` / ``commit_preview`` / ``cancel_preview`` (drags) and
``document.edit`` (one-shot edits).
"""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Signal
from PySide6.QtGui import QAction, QActionGroup
from PySide6.QtWidgets import QHBoxLayout, QWidget

from app import style
from app.document import Changes, Document
from kinematics.evaluate import ArmEvaluation, evaluate_arm
from kinematics.ik import Status

from .items import ArmItem, FixtureItem, LabelsItem
from .qtstyle import colour, cosmetic_pen, fixture_look

__all__ = ["CellCanvas"]

# z order of the layers (higher is drawn on top).
Z_FIXTURE = 10
Z_OVERLAY = 20
Z_GHOST = 30
Z_ARM = 40
Z_TARGET = 50
Z_LABEL = 60
Z_TOOL = 70


class CellCanvas(QWidget):
    """Plan view of a cell: fixtures, arm bases, targets, ghost poses and overlays.

    Signals
    -------
    cursor_moved(float, float)
        Mouse position in cell units.
    hovered_target(str)
        Id of the target under the mouse, '' for none.
    status_message(str)
        A short message for the status bar.
    """

    cursor_moved = Signal(float, float)
    hovered_target = Signal(str)
    status_message = Signal(str)

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self._snap_pitch = 10.0
        self._evals: dict[str, ArmEvaluation] = {}

        pg.setConfigOptions(antialias=True)
        self.plot = pg.PlotWidget(background=style.PAPER)
        self.plot.setMenuEnabled(False)
        self.vb: pg.ViewBox = self.plot.getViewBox()
        self.vb.setAspectLocked(True, ratio=1.0)
        self.vb.disableAutoRange()
        self.plot.showGrid(x=True, y=True, alpha=0.25)
        for name in ("bottom", "left"):
            ax = self.plot.getAxis(name)
            ax.enableAutoSIPrefix(False)
            ax.setPen(cosmetic_pen(style.INK, 1.0))
            ax.setTextPen(cosmetic_pen(style.INK, 1.0))
        self.plot.hideButtons()

        lay = QHBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.addWidget(self.plot, 1)

        self._fixture_items: dict[str, FixtureItem] = {}
        self._arm_items: dict[str, ArmItem] = {}
        self._target_scatter: dict[int, pg.ScatterPlotItem] = {}
        for st in Status:
            ss = style.status_style(st)
            sc = pg.ScatterPlotItem(
                size=11,
                symbol=ss.symbol,
                pen=pg.mkPen(style.INK, width=1.0),
                brush=pg.mkBrush(colour(ss.colour)),
                pxMode=True,
            )
            self._add(sc, Z_TARGET)
            self._target_scatter[int(st)] = sc
        self._labels = LabelsItem()
        self._add(self._labels, Z_LABEL)

        self._actions: dict[str, QAction] = {}
        self._build_actions()

        document.events.cell_changed.connect(self._on_cell_changed)
        self._rebuild()
        self.zoom_to_fit()

    # ---------------------------------------------------------------- public API

    def actions(self) -> dict[str, QAction]:  # type: ignore[override]
        """Checkable actions of the canvas by stable key (overlays, ghosts, snap, tools)."""
        return dict(self._actions)

    def set_snap_pitch(self, pitch: float) -> None:
        """Grid pitch for snapping, in cell units (must be positive)."""
        if not (pitch > 0 and math.isfinite(pitch)):
            raise ValueError(f"snap pitch must be a positive number, got {pitch!r}")
        self._snap_pitch = float(pitch)

    def snap_pitch(self) -> float:
        return self._snap_pitch

    def zoom_to_fit(self) -> None:
        """Show the whole cell: fixtures, targets and every arm's outer reach."""
        xs: list[float] = []
        ys: list[float] = []
        cell = self.document.cell
        for f in cell.fixtures:
            for x, y in f.outline:
                xs.append(x)
                ys.append(y)
        for t in cell.targets:
            xs.append(t.x)
            ys.append(t.y)
        for a in cell.arms:
            r = a.reach_max
            xs += [a.x - r, a.x + r]
            ys += [a.y - r, a.y + r]
        if not xs:
            self.vb.setRange(xRange=(-500, 500), yRange=(-500, 500), padding=0.05)
            return
        self.vb.setRange(xRange=(min(xs), max(xs)), yRange=(min(ys), max(ys)), padding=0.06)

    def zoom_to(self, target_id: str) -> None:
        """Centre the view on a target, zooming in to about its arm's reach when far out."""
        cell = self.document.cell
        t = next((t for t in cell.targets if t.id == target_id), None)
        if t is None:
            return
        (x0, x1), (y0, y1) = self.vb.viewRange()
        span = max(x1 - x0, y1 - y0)
        try:
            span = min(span, 1.5 * cell.arm(t.arm).reach_max)
        except KeyError:
            pass
        self.vb.setRange(
            xRange=(t.x - span / 2, t.x + span / 2),
            yRange=(t.y - span / 2, t.y + span / 2),
            padding=0.0,
        )

    def evaluation(self, arm_id: str) -> ArmEvaluation:
        """The canvas's current evaluation of one arm (re-computed per changed arm only)."""
        return self._evals[arm_id]

    # ---------------------------------------------------------------- actions

    def _action(self, key: str, text: str, checked: bool, group: QActionGroup | None = None):
        act = QAction(text, self)
        act.setCheckable(True)
        act.setChecked(checked)
        act.setObjectName(key)
        if group is not None:
            group.addAction(act)
        self._actions[key] = act
        return act

    def _build_actions(self) -> None:
        for key, text, on in (
            ("overlay.annulus", "Reach annulus", True),
            ("overlay.positive", "Positive elbow region", False),
            ("overlay.negative", "Negative elbow region", False),
            ("overlay.both", "Both configurations region", False),
            ("overlay.comfort", "Comfort region", False),
        ):
            self._action(key, text, on).toggled.connect(lambda _on: self._refresh_overlays())
        ghosts = QActionGroup(self)
        ghosts.setExclusive(True)
        for key, text, on in (
            ("ghosts.all", "Ghost poses: all targets", True),
            ("ghosts.selected", "Ghost poses: selected only", False),
            ("ghosts.none", "Ghost poses: none", False),
        ):
            self._action(key, text, on, ghosts).toggled.connect(lambda _on: self._refresh_ghosts())
        self._action("snap.enabled", "Snap to grid and fixtures", True)
        tools = QActionGroup(self)
        tools.setExclusive(True)
        for key, text, on in (
            ("tool.select", "Select and move", True),
            ("tool.polygon", "Draw polygon fixture", False),
            ("tool.rectangle", "Draw rectangle fixture", False),
            ("tool.measure", "Measure", False),
            ("tool.add_target", "Add target", False),
        ):
            self._action(key, text, on, tools)

    # ---------------------------------------------------------------- drawing

    def _add(self, item, z: float) -> None:
        self.vb.addItem(item, ignoreBounds=True)
        item.setZValue(z)

    def _remove(self, item) -> None:
        self.vb.removeItem(item)

    def _rebuild(self) -> None:
        """Recreate per-object items after a structural change (load, add, delete)."""
        cell = self.document.cell
        for item in self._fixture_items.values():
            self._remove(item)
        self._fixture_items.clear()
        for f in cell.fixtures:
            item = FixtureItem(fixture_look(f.kind))
            item.set_outline(f.outline)
            self._add(item, Z_FIXTURE)
            self._fixture_items[f.id] = item
        for item in self._arm_items.values():
            self._remove(item)
        self._arm_items.clear()
        for i, a in enumerate(cell.arms):
            item = ArmItem(style.arm_colour(i))
            self._add(item, Z_ARM)
            self._arm_items[a.id] = item
            self._update_arm_item(a.id)
        self._evals = {a.id: evaluate_arm(a, cell.targets_of(a.id)) for a in cell.arms}
        self._refresh_targets()
        self._refresh_overlays()
        self._refresh_ghosts()

    def _update_arm_item(self, arm_id: str) -> None:
        arm = self.document.cell.arm(arm_id)
        radius = arm.link_radii[0] if arm.link_radii else 0.08 * arm.a1
        self._arm_items[arm_id].set_arm(arm, radius, 0.35 * arm.a1)

    def _on_cell_changed(self, changes: Changes) -> None:
        if changes.structure:
            self._rebuild()
            return
        cell = self.document.cell
        for fid in changes.fixtures:
            f = next(f for f in cell.fixtures if f.id == fid)
            self._fixture_items[fid].set_outline(f.outline)
        changed_arms = set(changes.arms)
        if changes.targets:
            by_id = {t.id: t for t in cell.targets}
            for tid in changes.targets:
                t = by_id.get(tid)
                if t is not None:
                    changed_arms.add(t.arm)
            # A target reassigned to another arm leaves its old arm's list too.
            for aid, ev in self._evals.items():
                if changes.targets & set(ev.target_ids):
                    changed_arms.add(aid)
        for aid in changed_arms:
            if aid in self._arm_items:
                self._update_arm_item(aid)
                arm = cell.arm(aid)
                self._evals[aid] = evaluate_arm(arm, cell.targets_of(aid))
        if changed_arms or changes.targets:
            self._refresh_targets()
            self._refresh_ghosts()
        if changes.arms:
            self._refresh_overlays()

    def _refresh_targets(self) -> None:
        cell = self.document.cell
        by_id = {t.id: t for t in cell.targets}
        groups: dict[int, list[tuple[float, float]]] = {int(s): [] for s in Status}
        xy: list[tuple[float, float]] = []
        names: list[str] = []
        reasons: list[str] = []
        seen: set[str] = set()
        for ev in self._evals.values():
            for i, tid in enumerate(ev.target_ids):
                st = int(ev.status[i])
                p = (float(ev.xy[i, 0]), float(ev.xy[i, 1]))
                groups[st].append(p)
                xy.append(p)
                names.append(by_id[tid].name)
                reasons.append(ev.reason(i))
                seen.add(tid)
        # Targets of no (existing) arm: drawn as out of reach with an explanation.
        for t in cell.targets:
            if t.id not in seen:
                groups[int(Status.BEYOND_REACH)].append((t.x, t.y))
                xy.append((t.x, t.y))
                names.append(t.name)
                reasons.append(f"no arm {t.arm!r}")
        for st, pts in groups.items():
            arr = np.array(pts, dtype=float).reshape(-1, 2)
            self._target_scatter[st].setData(pos=arr)
        self._labels.set_labels(np.array(xy, dtype=float).reshape(-1, 2), names, reasons)

    def _refresh_overlays(self) -> None:
        pass  # filled in once regions are available

    def _refresh_ghosts(self) -> None:
        pass

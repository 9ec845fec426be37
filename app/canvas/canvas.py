"""The cell canvas: a true-scale plan view of the cell with the engine's live results.

The canvas draws what the document holds and what the document's one evaluation says
(layers in :mod:`app.canvas.layers`, one module each); it computes no geometry itself.
Pointer events go to the Qt-free rules of :mod:`app.interaction` (drags, tools,
snapping, picking); the canvas changes the document only through
``document.preview`` / ``commit_preview`` / ``cancel_preview`` (drags) and
``document.edit`` (one-shot edits).

While a drag steps the canvas draws a draft (no antialiasing on new lines, failure
labels without amounts, colliding bodies by their centre segments, no swept areas) and
returns to full quality once the document's changes pause.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QEvent, QObject, QPoint, QPointF, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QActionGroup, QCursor, QPainterPath, QPen
from PySide6.QtWidgets import (
    QFrame,
    QGraphicsItem,
    QGraphicsPathItem,
    QHBoxLayout,
    QMenu,
    QScrollArea,
    QSizePolicy,
    QWidget,
)

from app import style
from app.document import Changes, Document
from app.interaction import edits
from app.interaction.band import BandSelect
from app.interaction.drag import DRAG_PX, DragMachine
from app.interaction.fit import FIT_PADDING, cell_box, fit_box
from app.interaction.picking import Hit, pick, pick_target
from app.interaction.pointer import Pointer
from app.interaction.snapping import (
    Anchors,
    SnapResult,
    fixture_anchors,
    may_move_vertex,
    outline_problem,
    snap_point,
)
from app.interaction.tools import MeasureTool, PolygonTool, RectangleTool
from app.pause import pause_timer
from app.playback import playback_clock
from kinematics.cell import FIXTURE_KINDS, Arm
from kinematics.ik import ELBOWS, Status
from kinematics.wording import FEASIBLE, STATUS_WORDS, count_text, degrees, length

from . import dialogs
from .layers import Frame, Z
from .layers.bases import BasesLayer, base_radius
from .layers.collisions import CONTACT_SYMBOL, CollisionsLayer
from .layers.collisions import LOOKS as COLLISION_LOOKS
from .layers.fixture_names import FIXTURE_NAMES_KEY, FixtureNamesLayer
from .layers.fixtures import FixturesLayer
from .layers.ghosts import GhostsLayer, ghost_pen
from .layers.notes import NoteLayer
from .layers.placement import PlacementLayer
from .layers.playback import PlaybackLayer
from .layers.regions import REGION_KEYS, RegionsLayer
from .layers.spaces import OVERLAY_TITLES, SPACE_OVERLAYS, SpacesLayer
from .layers.swept import SweptLayer
from .layers.targets import TargetsLayer
from .layers.underlay import UnderlayLayer
from .layers.variant_ghosts import VARIANT_GHOST_KEY, VariantGhostsLayer
from .legend import LegendEntry, LegendWidget
from .legend_place import LegendToggle
from .qtstyle import OVERLAY_LOOKS, colour, cosmetic_pen, fixture_look
from .view import Grid, PlanView, ScaleBar

__all__ = ["CellCanvas", "OVERLAY_KEYS", "CLEARANCE_OVERLAYS"]

#: Region overlay kinds (each has an action "overlay.<kind>").
OVERLAY_KEYS = REGION_KEYS
#: Space, move and sharing overlay kinds (each has an action "overlay.<kind>").
CLEARANCE_OVERLAYS = SPACE_OVERLAYS

PICK_PX = 8.0  # pick radius around points, screen pixels
SNAP_PX = 10.0  # snap radius to fixture vertices and midpoints, screen pixels
#: Snap pitch until one is set for the units: 10 mm, or a quarter inch (common practice, no source).
DEFAULT_PITCH = {"mm": 10.0, "in": 0.25}
LEGEND_MIN_PLOT_PX = 360  # the legend steps aside rather than leave the plot narrower


class CellCanvas(QWidget):
    """Plan view of a cell: fixtures, arm bases, targets, ghost poses and overlays.

    Parameters
    ----------
    document : Document
        The document to show and edit.
    parent : QWidget, optional

    Signals
    -------
    cursor_moved(float, float)
        Pointer position in cell units.
    hovered_target(str)
        Id of the target under the pointer, '' for none.
    status_message(str)
        A short message for the status bar.
    snap_pitch_changed(float)
        The grid pitch for snapping changed (set, or the cell's units changed).
    """

    cursor_moved = Signal(float, float)
    hovered_target = Signal(str)
    status_message = Signal(str)
    snap_pitch_changed = Signal(float)

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self.pause = pause_timer(document)
        # Snap pitch per unit system: a pitch is a length in the cell's units.
        self._pitches: dict[str, float] = dict(DEFAULT_PITCH)
        self._fitted_on_show = False
        self._hover = ""
        self._drag = DragMachine(fmt=self._fmt)
        self._swallow_until_release = False
        self._empty_press: QPointF | None = None
        self._right_press: QPointF | None = None
        self._polygon = PolygonTool()
        self._rectangle = RectangleTool()
        self._rect_press: Pointer | None = None
        self._measure = MeasureTool()
        self._draft = False
        self._drawn: dict[str, object] = {}  # arm id -> the ArmEvaluation drawn
        self._drawn_cell = None
        self._notes_retry = False
        # Dialog hooks, replaceable in tests (the real ones are modal).
        self.ask_position = dialogs.ask_position
        self.ask_name = dialogs.ask_name
        # Height of a fixture just drawn, by its kind (None: none given); the window asks.
        self.new_fixture_height = lambda kind: None
        self._band = BandSelect()

        self.plot = PlanView(background=style.PAPER)
        # Smooth outlines for every plain Qt item (pyqtgraph's own default is off).
        self.plot.setAntialiasing(True)
        self.plot.setMenuEnabled(False)
        self.plot.hideButtons()
        self.plot.setFocusPolicy(Qt.FocusPolicy.StrongFocus)
        self.vb: pg.ViewBox = self.plot.getViewBox()
        self.vb.setAspectLocked(True, ratio=1.0)
        self.vb.disableAutoRange()
        self._units = document.cell.units
        for name in ("bottom", "left"):
            ax = self.plot.getAxis(name)
            ax.enableAutoSIPrefix(False)
            ax.setPen(cosmetic_pen(style.INK, 1.0))
            ax.setTextPen(cosmetic_pen(style.INK, 1.0))
        self._label_axes()
        for name in ("bottom", "left"):
            # Axes only change with the view range; keep them as pixmaps between changes.
            self.plot.getAxis(name).setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
        self.legend = LegendWidget()
        # Beside the plot, never over it; it scrolls when the canvas is too short for it.
        self.legend_area = QScrollArea()
        self.legend_area.setObjectName("legend_area")
        self.legend_area.setWidget(self.legend)
        self.legend_area.setWidgetResizable(True)
        self.legend_area.setFrameShape(QFrame.Shape.NoFrame)
        self.legend_area.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        bar = self.legend_area.verticalScrollBar().sizeHint().width()
        self.legend_area.setFixedWidth(self.legend.width() + bar)
        self.legend_area.setSizePolicy(QSizePolicy.Policy.Fixed, QSizePolicy.Policy.Ignored)
        self.legend_area.viewport().setAutoFillBackground(False)
        self.legend_area.setStyleSheet(
            f"QScrollArea, QScrollArea > QWidget {{ background: {style.PAPER}; }}"
        )
        lay = QHBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(0)
        lay.addWidget(self.plot, 1)
        lay.addWidget(self.legend_area, 0)

        self.grid = Grid(
            self.plot, self.vb, (self.plot.getAxis("bottom"), self.plot.getAxis("left"))
        )
        self.fixtures = FixturesLayer(self, self.plot)
        # The cell's DXF underlay, in the background under the fixtures (not editable).
        self.underlay = UnderlayLayer(
            self.plot, lambda: self.document.path, self.status_message.emit
        )
        self.spaces = SpacesLayer(self)
        self.swept = SweptLayer(self)
        self.regions = RegionsLayer(self, on_error=self.status_message.emit)
        self.ghosts = GhostsLayer(self)
        self.collisions = CollisionsLayer(self)
        self.bases = BasesLayer(self)
        self.targets = TargetsLayer(self)
        self.notes = NoteLayer(self)
        self.fixture_names = FixtureNamesLayer(self)
        self.vb.sigRangeChanged.connect(lambda *_a: self.notes.layout())
        # The arms at the playback time, while a view showing the playback is open.
        self.playback = PlaybackLayer(self, playback_clock(document))
        self.playback.clock.active_changed.connect(lambda _on: self.refresh(all_arms=True))
        # Where to bolt the base (one arm's placement overlay) and the other layout variants.
        self.placement = PlacementLayer(self, self.plot, self.vb)
        self.placement.changed.connect(lambda: self._refresh_legend(self._frame))
        self.variant_ghosts = VariantGhostsLayer(self)

        self._tool_item = QGraphicsPathItem()
        self._tool_item.setPen(cosmetic_pen(style.INK, 1.5, "dash"))
        self.add(self._tool_item, Z["tool"])
        self._measure_item = QGraphicsPathItem()
        self._measure_item.setPen(cosmetic_pen(style.PALETTE["harbour"], 2.0))
        self.add(self._measure_item, Z["tool"])
        self._band_item = QGraphicsPathItem()
        self._band_item.setPen(cosmetic_pen(style.PALETTE["harbour"], 1.5, "dash"))
        self._band_item.setData(0, "tool.band")
        self.add(self._band_item, Z["tool"])
        self._measure_label = pg.TextItem(
            "", color=style.INK, anchor=(0.5, 1.2), fill=pg.mkBrush(colour(style.PAPER, 0.85))
        )
        self._measure_label.setVisible(False)
        self.add(self._measure_label, Z["tool"])
        self._snap_marker = pg.ScatterPlotItem(
            size=14, pen=pg.mkPen(style.PALETTE["harbour"], width=2.0), brush=None, pxMode=True
        )
        self.add(self._snap_marker, Z["tool"])
        self._snap_marker.setVisible(False)
        self.scale_bar = ScaleBar(self.vb, self._units)
        self.scale_bar.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)

        self._actions: dict[str, QAction] = {}
        self._build_actions()
        self.legend_toggle = LegendToggle(self)

        self.plot.viewport().installEventFilter(self)
        self.plot.viewport().setMouseTracking(True)
        self.plot.installEventFilter(self)

        document.events.cell_changed.connect(self._on_cell_changed)
        document.events.changes_paused.connect(self._end_draft)
        document.selection.changed.connect(lambda _ids: self.refresh(all_arms=True))
        self.refresh(all_arms=True)
        self.zoom_to_fit()

    # ---------------------------------------------------------------- host of the layers

    def add(self, item, z: float, cache: bool = False) -> None:
        """Put an item in the plot at depth ``z`` (cached as a pixmap when ``cache``)."""
        self.vb.addItem(item, ignoreBounds=True)
        item.setZValue(z)
        if cache:
            item.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)

    def remove(self, item) -> None:
        """Take an item out of the plot."""
        self.vb.removeItem(item)

    # ---------------------------------------------------------------- public API

    def actions(self) -> dict[str, QAction]:  # type: ignore[override]
        """Checkable actions by stable key: overlays, ghost mode, snapping and tools."""
        return dict(self._actions)

    def overlays(self) -> set[str]:
        """Overlay keys switched on."""
        return {
            k.split(".", 1)[1]
            for k, a in self._actions.items()
            if k.startswith("overlay.") and a.isChecked()
        }

    def set_snap_pitch(self, pitch: float, units: str | None = None) -> None:
        """Set the grid pitch for snapping, in ``units`` (default: the cell's units).

        Raises
        ------
        ValueError
            When ``pitch`` is not a positive finite number.
        """
        ok = isinstance(pitch, int | float) and not isinstance(pitch, bool)
        if not (ok and math.isfinite(pitch) and pitch > 0):
            raise ValueError(f"snap pitch must be a positive number, got {pitch!r}")
        units = units or self._units
        if self._pitches.get(units) != float(pitch):
            self._pitches[units] = float(pitch)
            if units == self._units:
                self.snap_pitch_changed.emit(float(pitch))

    def snap_pitch(self, units: str | None = None) -> float:
        """Grid pitch for snapping, in ``units`` (default: the cell's units)."""
        units = units or self._units
        return self._pitches.get(units, DEFAULT_PITCH.get(units, 10.0))

    def snap_pitches(self) -> dict[str, float]:
        """Grid pitch for snapping by unit system (for remembering between runs)."""
        return dict(self._pitches)

    def resizeEvent(self, event) -> None:  # noqa: N802 (Qt name)
        super().resizeEvent(event)
        self._place_legend()

    def _place_legend(self) -> None:
        """Show the legend beside the plot when it leaves the plot most of the canvas, else
        as a button that opens it (:mod:`app.canvas.legend_place`)."""
        toggle = getattr(self, "legend_toggle", None)
        if toggle is not None:
            toggle.place()

    def showEvent(self, event) -> None:  # noqa: N802 (Qt name)
        super().showEvent(event)
        if not self._fitted_on_show:
            # The first fit ran before the widget had its size; fit again once shown.
            self._fitted_on_show = True
            QTimer.singleShot(0, self, self.zoom_to_fit)

    def zoom_to_fit(self) -> None:
        """Show the whole cell: fixtures, targets with their labels, every arm's outer reach."""
        box = cell_box(self.document.cell)
        if box is None:
            self.vb.setRange(xRange=(-500, 500), yRange=(-500, 500), padding=FIT_PADDING)
            return
        xy, side, above, below = self.targets.labels.extents()
        x0, x1, y0, y1 = fit_box(
            box, xy, side, above, below, float(self.vb.width()), float(self.vb.height())
        )
        self.vb.setRange(xRange=(x0, x1), yRange=(y0, y1), padding=FIT_PADDING)

    def zoom_to(self, target_id: str) -> None:
        """Centre the view on a target, zooming in to about its arm's reach when far out."""
        cell = self.document.cell
        t = next((t for t in cell.targets if t.id == target_id), None)
        if t is None:
            return
        (x0, x1), (y0, y1) = self.vb.viewRange()
        span = max(x1 - x0, y1 - y0)
        try:
            span = min(span, 1.2 * cell.arm(t.arm).reach_max)
        except KeyError:
            pass
        self.vb.setRange(
            xRange=(t.x - span / 2, t.x + span / 2),
            yRange=(t.y - span / 2, t.y + span / 2),
            padding=0.0,
        )

    def zoom_to_targets(self, target_ids) -> None:
        """Show several targets together (the two ends of a move), with room around them."""
        cell = self.document.cell
        ts = [t for t in cell.targets if t.id in set(target_ids)]
        if not ts:
            return
        if len(ts) == 1:
            self.zoom_to(ts[0].id)
            return
        xs, ys = [t.x for t in ts], [t.y for t in ts]
        span = max(max(xs) - min(xs), max(ys) - min(ys))
        pad = 0.35 * span + 1e-9
        self.vb.setRange(
            xRange=(min(xs) - pad, max(xs) + pad),
            yRange=(min(ys) - pad, max(ys) + pad),
            padding=0.0,
        )

    def world_to_viewport(self, x: float, y: float) -> QPoint:
        """Viewport pixel of a world point (for tests and tools placing the pointer)."""
        return self.plot.mapFromScene(self.vb.mapViewToScene(QPointF(x, y)))

    def viewport_to_world(self, pos: QPointF | QPoint) -> tuple[float, float]:
        """World point under a viewport pixel."""
        p = pos.toPoint() if isinstance(pos, QPointF) else pos
        v = self.vb.mapSceneToView(self.plot.mapToScene(p))
        return float(v.x()), float(v.y())

    def viewport(self) -> QWidget:
        """The widget that receives the canvas's mouse events."""
        return self.plot.viewport()

    def overlay_items(self, key: str) -> list[QGraphicsItem]:
        """Scene items currently drawn for one overlay kind (all arms)."""
        if key in REGION_KEYS:
            return self.regions.shown(key)
        if key == "swept":
            return self.swept.items()
        return self.spaces.items(key)

    def measurement(self) -> tuple[float, float] | None:
        """Distance and angle (degrees) of the current measurement, None without one."""
        return self._measure.result()

    def delete_selection(self) -> None:
        """Delete the selected targets and fixtures (one undo step)."""
        cell = self.document.cell
        ids = [
            i
            for i in self.document.selection.ids
            if any(t.id == i for t in cell.targets) or any(f.id == i for f in cell.fixtures)
        ]
        if not ids:
            self.status_message.emit("Nothing to delete: select targets or fixtures")
            return
        label = edits.delete_label(cell, ids)
        self.document.selection.clear()
        self.document.edit(label, edits.delete_items(cell, ids))

    def cancel(self) -> None:
        """Esc (or a right-click during a drag): cancel a drag in progress (restoring the
        cell) or the tool's pending input; else clear the selection."""
        if self._drag.drag is not None:
            was_active = self._drag.cancel()
            self._hide_snap()
            if was_active:
                self.document.cancel_preview()
                self._swallow_until_release = True
                self.status_message.emit("Move cancelled")
            return
        if self._band.active:
            self._band.cancel()
            self._band_item.setPath(QPainterPath())
            self.status_message.emit("Cancelled")
            return
        if self._polygon.points or self._rectangle.start or self._measure.points:
            self._clear_tool_state()
            self.status_message.emit("Cancelled")
            return
        self.document.selection.clear()

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
        for key, text, on, tip in (
            ("annulus", "Reach annulus", True, "Outer and inner reach circles, ignoring limits"),
            ("positive", "Positive elbow region", False, "Points the positive elbow reaches"),
            ("negative", "Negative elbow region", False, "Points the negative elbow reaches"),
            ("both", "Both configurations", False, "Points reachable with either elbow"),
            ("comfort", "Comfort region", False, "Reachable with room to spare at every joint"),
        ):
            act = self._action(f"overlay.{key}", text, on)
            act.setToolTip(tip)
            act.toggled.connect(lambda _on: self.refresh(all_arms=True))
        underlay = self._action("overlay.underlay", "DXF underlay", True)
        underlay.setToolTip("The cell's underlay drawing (key \"underlay\"), under the layout")
        underlay.toggled.connect(lambda _on: self.refresh(all_arms=True))
        for key in SPACE_OVERLAYS:
            text, tip, on = OVERLAY_TITLES[key]
            act = self._action(f"overlay.{key}", text, on)
            act.setToolTip(tip)
            act.toggled.connect(lambda _on: self.refresh(all_arms=True))
        ghosts = QActionGroup(self)
        ghosts.setExclusive(True)
        for key, text, on in (
            ("ghosts.all", "Ghost poses: all targets", True),
            ("ghosts.selected", "Ghost poses: selected only", False),
            ("ghosts.none", "Ghost poses: none", False),
        ):
            self._action(key, text, on, ghosts).toggled.connect(
                lambda on: on and self.refresh(all_arms=True)
            )
        names = self._action(f"overlay.{FIXTURE_NAMES_KEY}", "Fixture names", False)
        names.setToolTip("Write each fixture's name inside its outline")
        names.toggled.connect(lambda _on: self.refresh(all_arms=True))
        legend = self._action("legend.show", "Show legend", True)
        legend.setToolTip(
            "The legend beside the plot (in a narrow canvas it collapses to a Legend button "
            "in the plot's corner)"
        )
        legend.toggled.connect(lambda _on: self._place_legend())
        place = self._action("overlay.placement", "Placement map of the selected arm", False)
        place.setToolTip(
            "Where the base may go: score map, placement region, best spot, tolerances"
        )
        place.toggled.connect(lambda on: (self.placement.set_enabled(on), self.refresh(True)))
        ghosts_v = self._action(f"overlay.{VARIANT_GHOST_KEY}", "Other layout variants", True)
        ghosts_v.setToolTip("Bases and links of the cell's other layout variants, faint")
        ghosts_v.toggled.connect(lambda _on: self.refresh(all_arms=True))
        snap = self._action("snap.enabled", "Snap to grid and fixtures", True)
        snap.setToolTip(
            "Snap to the grid, fixture vertices and edge midpoints (hold Alt to suspend)"
        )
        tools = QActionGroup(self)
        tools.setExclusive(True)
        for key, text, on, cursor in (
            ("tool.select", "Select and move", True, Qt.CursorShape.ArrowCursor),
            ("tool.polygon", "Draw polygon fixture", False, Qt.CursorShape.CrossCursor),
            ("tool.rectangle", "Draw rectangle fixture", False, Qt.CursorShape.CrossCursor),
            ("tool.measure", "Measure", False, Qt.CursorShape.CrossCursor),
            ("tool.add_target", "Add target", False, Qt.CursorShape.PointingHandCursor),
        ):
            act = self._action(key, text, on, tools)
            act.toggled.connect(lambda on, c=cursor, k=key: on and self._tool_changed(k, c))

    def _tool(self) -> str:
        for key in ("tool.polygon", "tool.rectangle", "tool.measure", "tool.add_target"):
            if self._actions[key].isChecked():
                return key.split(".", 1)[1]
        return "select"

    def _tool_changed(self, key: str, cursor: Qt.CursorShape) -> None:
        self._clear_tool_state()
        self.plot.viewport().setCursor(QCursor(cursor))
        hints = {
            "tool.select": "Drag bases, targets, fixtures, vertices; Shift-drag a base to turn "
            "it; Shift-drag elsewhere selects an area (Ctrl+Shift adds to it)",
            "tool.polygon": "Click vertices; double-click or Enter finishes, Backspace undoes one",
            "tool.rectangle": "Drag a rectangle to add a fixture",
            "tool.measure": "Click two points to measure",
            "tool.add_target": "Click to add a target",
        }
        self.status_message.emit(hints[key])

    def _ghost_mode(self) -> str:
        for m in ("all", "selected", "none"):
            if self._actions[f"ghosts.{m}"].isChecked():
                return m
        return "all"

    # ---------------------------------------------------------------- drawing

    def _label_axes(self) -> None:
        self.plot.setLabel("bottom", f"x ({self._units})")
        self.plot.setLabel("left", f"y ({self._units})")

    def _on_cell_changed(self, changes: Changes) -> None:
        stepping = self.document.unsettled
        if stepping and not self._draft:
            self._set_draft(True)
        elif not stepping and self._draft:
            self._set_draft(False)
        self.refresh(all_arms=changes.structure)

    def _set_draft(self, on: bool) -> None:
        self._draft = on
        self.plot.setAntialiasing(not on)

    def _end_draft(self) -> None:
        """The document's changes paused: full quality, swept areas, a tidy label layout."""
        if self._draft:
            self._set_draft(False)
        self.refresh(all_arms=True)
        self.targets.labels.relayout()
        self.plot.viewport().update()

    def refresh(self, all_arms: bool = False) -> None:
        """Bring every layer up to date with the document (only arms whose evaluation
        changed, unless ``all_arms``)."""
        cell = self.document.cell
        evaluation = self.document.evaluation
        if cell.units != self._units:
            self._units = cell.units
            self.snap_pitch_changed.emit(self.snap_pitch())
            self.scale_bar.units = cell.units
            self._label_axes()
            all_arms = True
        changed = None
        if not all_arms:
            changed = {aid for aid, ev in evaluation.arms.items() if self._drawn.get(aid) is not ev}
        frame = Frame(
            cell=cell,
            evaluation=evaluation,
            arms=changed,
            draft=self._draft,
            overlays=self.overlays(),
            selection=set(self.document.selection.ids),
            ghosts=self._ghost_mode(),
        )
        self._frame = frame
        self.fixtures.update(frame)
        self.underlay.update(frame)
        self.bases.update(frame)
        self.regions.update(frame)
        self.ghosts.update(frame)
        shown = {
            aid: self.ghosts.shown_mask(frame, aid, ev.target_ids)
            for aid, ev in evaluation.arms.items()
        }
        self.collisions.update(frame, shown)
        self.targets.update(frame)
        self.spaces.update(frame)
        self.swept.update(frame)
        self.placement.update(frame)
        self.variant_ghosts.update(frame)
        self.collisions.set_move_contacts(self.swept.contacts)
        self.playback.update(frame)
        self.collisions.mark_hits(frame, self.swept.hits, notes=not frame.draft)
        # Notes explain what the marks show; their texts and layout wait for the pause
        # (while a drag steps they would chase every pointer move).
        self.notes.item.setVisible(not frame.draft)
        if not frame.draft:
            self.notes.set(
                self.collisions.notes + self.swept.notes + self.spaces.notes + self.playback.notes
            )
        self.fixture_names.update(frame)
        self._drawn = dict(evaluation.arms)
        self._refresh_legend(frame)

    def _refresh_legend(self, frame: Frame) -> None:
        cell = frame.cell
        key = (
            tuple(a.name for a in cell.arms),
            tuple(dict.fromkeys(f.kind for f in cell.fixtures)),
            tuple(sorted(frame.overlays)),
            tuple(sorted(self.spaces.sources.items())),
            self.playback.legend_key(),
            tuple(e.text for e in self.underlay.legend()),
            self.placement.legend_key(),
            bool(self.variant_ghosts.items),
        )
        if getattr(self, "_legend_key", None) == key:
            return
        self._legend_key = key
        e: list[LegendEntry] = [LegendEntry("header", "Targets (marker shape = status)")]
        for st, ss in style.STATUS_STYLES.items():
            text = FEASIBLE if st is Status.OK else f"fails: {STATUS_WORDS[st]}"
            e.append(LegendEntry("symbol", text, symbol=ss.symbol, colour=ss.colour))
        e.append(LegendEntry("header", "Ghost poses (links base-elbow-tool)"))
        for name in ELBOWS:
            for role, words in (
                ("chosen", "chosen"),
                ("alternative", "other, also works"),
                ("blocked", "no option here"),
            ):
                pen = ghost_pen(name, role)
                pen.setWidthF(1.5)  # legend samples are tiny; a little heavier reads better
                e.append(LegendEntry("line", f"{name} elbow, {words}", pen=pen))
        if cell.fixtures:
            e.append(LegendEntry("header", "Collisions"))
            for role in ("fails", "other"):
                pen, brush, words = COLLISION_LOOKS[role]
                e.append(LegendEntry("area", words, pen=QPen(pen), brush=brush))
            e.append(
                LegendEntry(
                    "symbol",
                    "contact point (circled cross)",
                    symbol=CONTACT_SYMBOL,
                    colour=style.PALETTE["lemon"],
                )
            )
            e.append(
                LegendEntry(
                    "line",
                    "fixture hit (thick dashed edge)",
                    pen=cosmetic_pen(style.PALETTE["ember"], 3.0, "dash"),
                )
            )
        e.append(LegendEntry("header", "Arm bases"))
        for i, a in enumerate(cell.arms):
            e.append(LegendEntry("base", f"{a.name} (drag ○ to turn)", colour=style.arm_colour(i)))
        shown = [k for k in REGION_KEYS if k in frame.overlays]
        if shown:
            e.append(LegendEntry("header", "Regions"))
            for k in shown:
                look = OVERLAY_LOOKS[k]
                e.append(LegendEntry("area", look.legend, pen=QPen(look.pen), brush=look.brush))
        e += self.spaces.legend(frame)
        e += self.playback.legend(frame)
        e += self.underlay.legend()
        e += self.placement.legend(frame)
        e += self.variant_ghosts.legend(frame)
        kinds = list(dict.fromkeys(f.kind for f in cell.fixtures))
        if kinds:
            e.append(LegendEntry("header", "Fixtures"))
            for kind in kinds:
                look = fixture_look(kind)
                e.append(
                    LegendEntry(
                        "area",
                        look.legend,
                        pen=QPen(look.pen),
                        brush=look.brush,
                        under=look.base_brush,
                    )
                )
        self.legend.set_entries(e)

    # ------------------------------------------------------------------ notes

    def note_view(self) -> tuple[float, float, float, float]:
        """The plot area in viewport pixels (left, top, right, bottom): where notes go."""
        r = self.plot.mapFromScene(self.vb.sceneBoundingRect()).boundingRect()
        return (float(r.left()), float(r.top()), float(r.right()), float(r.bottom()))

    def note_obstacles(self) -> list[tuple[float, float, float, float]]:
        """Viewport pixel boxes notes should keep clear of: target markers and labels,
        small hit fixtures and the bases with their names."""
        out: list[tuple[float, float, float, float]] = []
        xy = self.targets.xy
        if len(xy):
            # No rotation and a locked aspect: two points give the whole mapping.
            o, e = self.world_to_viewport(0.0, 0.0), self.world_to_viewport(1000.0, 1000.0)
            sx, sy = (e.x() - o.x()) / 1000.0, (e.y() - o.y()) / 1000.0
            px, py = o.x() + sx * xy[:, 0], o.y() + sy * xy[:, 1]
            h = 9.0
            out += [(x - h, y - h, x + h, y + h) for x, y in zip(px.tolist(), py.tolist())]
        placed = self.targets.labels.placed()
        out += [(x, y, x + w, y + h) for x, y, w, h, *_rest in placed]
        hit = set(self.collisions.label_texts()) | set(self.swept.hits)
        for f in self.document.cell.fixtures:
            if f.id not in hit:
                continue
            # A small hit fixture stays in sight (a large one would leave no room).
            fxy = np.asarray(f.outline, dtype=float)
            a = self.world_to_viewport(float(fxy[:, 0].min()), float(fxy[:, 1].max()))
            b = self.world_to_viewport(float(fxy[:, 0].max()), float(fxy[:, 1].min()))
            if b.x() - a.x() < 80 and b.y() - a.y() < 80:
                out.append((a.x() - 3.0, a.y() - 3.0, b.x() + 3.0, b.y() + 3.0))
        for item in self.bases.items.values():
            # The base and its name (drawn on either side of the base): a generous box.
            c = self.world_to_viewport(item.x, item.y)
            half = 30.0 + 4.0 * len(item.name)
            out.append((c.x() - half, c.y() - 22.0, c.x() + half, c.y() + 22.0))
            r = item.name_rect  # where the name was painted last, when it has been
            if r is not None:
                out.append((r.left() - 3.0, r.top() - 2.0, r.right() + 3.0, r.bottom() + 2.0))
        if len(xy) and not placed and not self._notes_retry:
            # Target labels are laid out when painted: place the notes again after that.
            self._notes_retry = True
            QTimer.singleShot(50, self.notes.layout)
        return out

    # ---------------------------------------------------------- interaction

    def _px(self) -> float:
        """World units per screen pixel."""
        w, h = self.vb.viewPixelSize()
        return float(max(abs(w), abs(h))) or 1.0

    def _pointer(self, ev) -> Pointer:
        pos = ev.position()
        x, y = self.viewport_to_world(pos)
        mods = ev.modifiers()
        return Pointer(
            x,
            y,
            float(pos.x()),
            float(pos.y()),
            shift=bool(mods & Qt.KeyboardModifier.ShiftModifier),
            ctrl=bool(mods & Qt.KeyboardModifier.ControlModifier),
            alt=bool(mods & Qt.KeyboardModifier.AltModifier),
        )

    def _snap_enabled(self, p: Pointer) -> bool:
        return self._actions["snap.enabled"].isChecked() and not p.free

    def _snap(self, x: float, y: float, p: Pointer, exclude: str | None = None) -> SnapResult:
        enabled = self._snap_enabled(p)
        anchors = (
            fixture_anchors(self.document.cell.fixtures, exclude) if enabled else Anchors.empty()
        )
        res = snap_point(
            x,
            y,
            enabled=enabled,
            pitch=self.snap_pitch(),
            anchors=anchors,
            radius=SNAP_PX * self._px(),
        )
        symbol = {"vertex": "s", "midpoint": "t", "grid": "+"}.get(res.kind)
        if symbol:
            self._snap_marker.setData([res.x], [res.y], symbol=symbol)
            self._snap_marker.setVisible(True)
        else:
            self._hide_snap()
        return res

    def _snapper(self, x: float, y: float, exclude: str | None, p: Pointer) -> tuple[float, float]:
        s = self._snap(x, y, p, exclude)
        return s.x, s.y

    def _hide_snap(self) -> None:
        if self._snap_marker.isVisible():
            self._snap_marker.setData([])
            self._snap_marker.setVisible(False)

    def _pick(self, x: float, y: float) -> Hit | None:
        cell = self.document.cell
        radii = {a.id: base_radius(a) for a in cell.arms}
        return pick(
            cell, x, y, PICK_PX * self._px(), handles=self.bases.handles(), base_radii=radii
        )

    def eventFilter(self, obj: QObject, ev: QEvent) -> bool:  # noqa: N802 (Qt name)
        t = ev.type()
        if obj is self.plot.viewport():
            if t == QEvent.Type.MouseButtonPress:
                return self._on_press(ev)
            if t == QEvent.Type.MouseMove:
                return self._on_move(ev)
            if t == QEvent.Type.MouseButtonRelease:
                return self._on_release(ev)
            if t == QEvent.Type.MouseButtonDblClick:
                return self._on_double(ev)
            if t == QEvent.Type.ContextMenu:
                return True  # our own menu opens on right-button release
            if t == QEvent.Type.Leave:
                self._set_hover("")
        elif obj is self.plot and t == QEvent.Type.ShortcutOverride:
            if self._claims_key(ev):
                ev.accept()  # ours even if a window shortcut uses the same key
                return True
        elif obj is self.plot and t == QEvent.Type.KeyPress:
            if self._claims_key(ev) or ev.key() in (Qt.Key.Key_Delete, Qt.Key.Key_Backspace):
                return self._on_key(ev)
        return False

    def _claims_key(self, ev) -> bool:
        """Keys the canvas takes over from window shortcuts: Esc, and Enter/Backspace while
        drawing. Delete is left to a window shortcut when there is one (the window's Delete
        also knows about arms); without one, the canvas deletes the selection."""
        k = ev.key()
        if k == Qt.Key.Key_Escape:
            return True
        if k in (Qt.Key.Key_Return, Qt.Key.Key_Enter, Qt.Key.Key_Backspace):
            return bool(self._polygon.points)
        return False

    def _on_key(self, ev) -> bool:
        k = ev.key()
        if k == Qt.Key.Key_Escape:
            self.cancel()
        elif k in (Qt.Key.Key_Return, Qt.Key.Key_Enter):
            self._finish_polygon()
        elif k == Qt.Key.Key_Backspace and self._polygon.points:
            self._polygon.undo()
            self._tool_item.setPath(_polyline(self._polygon.preview(None)))
        elif k in (Qt.Key.Key_Delete, Qt.Key.Key_Backspace):
            self.delete_selection()
        return True

    def _on_press(self, ev) -> bool:
        self.plot.setFocus(Qt.FocusReason.MouseFocusReason)
        pos = ev.position()
        if ev.button() == Qt.MouseButton.RightButton:
            if self._drag.active:
                # A right-click during a drag cancels it, like Esc.
                self.cancel()
                return True
            self._right_press = QPointF(pos)
            return False
        if ev.button() != Qt.MouseButton.LeftButton:
            return False
        p = self._pointer(ev)
        tool = self._tool()
        if tool == "select":
            hit = self._pick(p.x, p.y)
            if p.shift and (hit is None or hit.kind == "fixture"):
                # Shift-drag over empty space or a fixture's area: rubber-band selection.
                self._band.press(p, self.document.selection.ids)
                return True
            if hit is None:
                self._empty_press = QPointF(pos)
                return False  # pan the view
            self._select_hit(hit, p)
            self._drag.press(hit, p, self.document.cell, self._px())
            return True
        s = self._snap(p.x, p.y, p)
        if tool == "polygon":
            self._polygon.click((s.x, s.y))
            self._tool_item.setPath(_polyline(self._polygon.preview((s.x, s.y))))
        elif tool == "rectangle":
            self._rectangle.press((s.x, s.y))
            self._rect_press = p
        elif tool == "measure":
            self._measure.click((s.x, s.y))
            self._update_measure()
        elif tool == "add_target":
            self._add_target(s.x, s.y)
        return True

    def _select_hit(self, hit: Hit, p: Pointer) -> None:
        sel = self.document.selection
        if p.ctrl:
            ids = list(sel.ids)
            if hit.id in ids:
                ids.remove(hit.id)
            else:
                ids.append(hit.id)
            sel.set(ids)
        elif hit.id not in sel.ids:
            sel.set((hit.id,))

    def _on_move(self, ev) -> bool:
        p = self._pointer(ev)
        self.cursor_moved.emit(p.x, p.y)
        if self._swallow_until_release:
            return True
        if self._band.active:
            box = self._band.move(p)
            if box is not None:
                self._band_item.setPath(_polyline(_box_points(box)))
            return True
        if self._drag.drag is not None:
            step = self._drag.move(p, self._snapper, self._px())
            if step is not None:
                if step.refused:
                    self.status_message.emit(step.refused)
                elif step.cell is not None:
                    self.document.preview(step.cell)
                    self.status_message.emit(f"{step.message} — {self._reach_summary()}")
            return True
        tool = self._tool()
        if tool in ("polygon", "measure", "rectangle", "add_target"):
            s = self._snap(p.x, p.y, p)
            if tool == "polygon" and self._polygon.points:
                self._tool_item.setPath(_polyline(self._polygon.preview((s.x, s.y))))
            elif tool == "rectangle" and self._rectangle.start is not None:
                self._tool_item.setPath(_polyline(self._rectangle.preview((s.x, s.y))))
            elif tool == "measure":
                self._update_measure((s.x, s.y))
        if not (ev.buttons() & Qt.MouseButton.LeftButton):
            self._update_hover(p.x, p.y)
        return False

    def _reach_summary(self) -> str:
        ok, total = self.document.evaluation.counts()
        return count_text(ok, total)

    def _fmt(self, v: float) -> str:
        return length(v, self._units, unit=False)

    def _on_release(self, ev) -> bool:
        pos = ev.position()
        if ev.button() == Qt.MouseButton.RightButton:
            start, self._right_press = self._right_press, None
            if start is not None and (pos - start).manhattanLength() < DRAG_PX:
                x, y = self.viewport_to_world(pos)
                menu = self.context_menu_at(x, y)
                menu.popup(self.plot.viewport().mapToGlobal(pos.toPoint()))
            return self._swallow_until_release
        if ev.button() != Qt.MouseButton.LeftButton:
            return False
        if self._swallow_until_release:
            self._swallow_until_release = False
            return True
        if self._band.active:
            self._band_item.setPath(QPainterPath())
            chosen = self._band.release(self._pointer(ev), self.document.cell)
            if chosen is not None:
                self.document.selection.set(chosen)
                self.status_message.emit(f"{len(chosen)} selected")
            return True
        if self._drag.drag is not None:
            self._hide_snap()
            label = self._drag.release()
            if label is not None:
                self.document.commit_preview(label)
                self.status_message.emit(f"{label} — {self._reach_summary()}")
            return True
        if self._rectangle.start is not None:
            p = self._pointer(ev)
            s = self._snap(p.x, p.y, p)
            self._hide_snap()
            moved = self._rect_press is not None and p.pixels_from(self._rect_press) >= DRAG_PX
            self._tool_item.setPath(QPainterPath())
            self._add_fixture(self._rectangle.release((s.x, s.y), moved))
            return True
        if self._empty_press is not None:
            start, self._empty_press = self._empty_press, None
            if (pos - start).manhattanLength() < DRAG_PX and not (
                ev.modifiers() & Qt.KeyboardModifier.ControlModifier
            ):
                self.document.selection.clear()
            return False
        return self._tool() != "select"

    def _on_double(self, ev) -> bool:
        if ev.button() != Qt.MouseButton.LeftButton:
            return False
        tool = self._tool()
        if tool == "polygon":
            self._finish_polygon()
            return True
        if tool == "select":
            x, y = self.viewport_to_world(ev.position())
            hit = self._pick(x, y)
            if hit is not None and hit.kind == "target":
                self.zoom_to(hit.id)
        return True

    # ----------------------------------------------------------------- hover

    def _update_hover(self, x: float, y: float) -> None:
        tid = pick_target(self.document.cell, x, y, PICK_PX * self._px())
        self._set_hover(tid)
        if self._tool() == "select":
            hit = tid or self._pick(x, y)
            shape = Qt.CursorShape.OpenHandCursor if hit else Qt.CursorShape.ArrowCursor
            if self.plot.viewport().cursor().shape() != shape:
                self.plot.viewport().setCursor(QCursor(shape))

    def _set_hover(self, tid: str) -> None:
        if tid == self._hover:
            return
        self._hover = tid
        self.plot.viewport().setToolTip(self.target_tooltip(tid) if tid else "")
        self.hovered_target.emit(tid)

    def target_tooltip(self, target_id: str) -> str:
        """Status text of one target: name, verdict and reason, configurations and margins."""
        from app.panels.text import clearance_text, status_cell

        cell = self.document.cell
        t = next((t for t in cell.targets if t.id == target_id), None)
        if t is None:
            return ""
        try:
            ev, i = self.document.evaluation.locate(t.id)
        except KeyError:
            return f"{t.name}: assigned to missing arm {t.arm!r}"
        u = self._units
        lines = [f"{t.name} ({ev.arm.name}) at ({self._fmt(t.x)}, {self._fmt(t.y)}) {u}"]
        lines.append(status_cell(ev, i, u))
        ik = ev.ik
        for c, name in enumerate(ELBOWS):
            q = ik.q_deg[i, c]
            if not np.all(np.isfinite(q)):
                continue
            hit = ev.blocked_by(i, c)
            if int(ev.chosen[i]) == c:
                mark = "chosen"
            elif not bool(ik.allowed[i, c]):
                mark = "not allowed by the elbow setting"
            elif hit is not None:
                body = ev.blocked_body(i, c)
                mark = f"collides with {hit.name}" + (f" ({body})" if body else "")
            else:
                mark = "also works" if bool(ik.ok[i, c]) else "not usable"
            clear = clearance_text(ev, i, c, u)
            lines.append(
                f"{name} elbow: q1 {degrees(float(q[0]))}, q2 {degrees(float(q[1]))} "
                f"(margin {degrees(float(ik.limit_margin_deg[i, c]))}, clearance {clear}) — {mark}"
            )
        lines.append(f"reach margin {length(float(ik.reach_margin[i]), u)}")
        return "\n".join(lines)

    # --------------------------------------------------------------- tools

    def _clear_tool_state(self) -> None:
        self._polygon = PolygonTool()
        self._rectangle = RectangleTool()
        self._measure = MeasureTool()
        if self._drag.pending:
            self._drag.cancel()
        self._tool_item.setPath(QPainterPath())
        self._measure_item.setPath(QPainterPath())
        self._measure_label.setVisible(False)
        self._hide_snap()

    def _update_measure(self, cursor: tuple[float, float] | None = None) -> None:
        pts = self._measure.preview(cursor)
        path = QPainterPath()
        res = self._measure.result(cursor)
        if res is not None:
            path.moveTo(*pts[0])
            path.lineTo(*pts[1])
            dist, ang = res
            text = f"{length(dist, self._units)} at {ang:.1f}°"
            self._measure_label.setText(text)
            self._measure_label.setPos((pts[0][0] + pts[1][0]) / 2, (pts[0][1] + pts[1][1]) / 2)
            self._measure_label.setVisible(True)
            self.status_message.emit(f"Distance {text}")
        elif pts:
            path.addEllipse(QPointF(*pts[0]), 2 * self._px(), 2 * self._px())
            self._measure_label.setVisible(False)
        self._measure_item.setPath(path)

    def _finish_polygon(self) -> None:
        done = self._polygon.finish()
        if done.problem:
            self.status_message.emit(f"Cannot add the fixture: {done.problem}")
            return
        self._clear_tool_state()
        self._add_fixture(done)

    def _add_fixture(self, done) -> None:
        if done.problem:
            self.status_message.emit(f"Cannot add the fixture: {done.problem}")
            return
        cell, f = edits.add_fixture(self.document.cell, done.outline)
        height = self.new_fixture_height(f.kind)
        if height is not None:
            f = replace(f, height=float(height))
            cell = replace(cell, fixtures=cell.fixtures[:-1] + (f,))
        self.document.edit(f"Add fixture {f.name}", cell)
        self.document.selection.set((f.id,))

    def _arm_for_new_target(self, x: float, y: float) -> str | None:
        cell = self.document.cell
        if not cell.arms:
            return None
        for i in self.document.selection.ids:
            if any(a.id == i for a in cell.arms):
                return i
            t = next((t for t in cell.targets if t.id == i), None)
            if t is not None and any(a.id == t.arm for a in cell.arms):
                return t.arm

        # Otherwise the arm whose base is nearest, preferring arms that reach the point.
        def score(a: Arm) -> tuple[bool, float]:
            r = math.hypot(x - a.x, y - a.y)
            return (not (a.reach_min <= r <= a.reach_max), r)

        return min(cell.arms, key=score).id

    def _add_target(self, x: float, y: float) -> None:
        aid = self._arm_for_new_target(x, y)
        if aid is None:
            self.status_message.emit("Cannot add a target: the cell has no arm")
            return
        cell, t = edits.add_target(self.document.cell, x, y, aid)
        self.document.edit(f"Add target {t.name}", cell)
        self.document.selection.set((t.id,))

    # ---------------------------------------------------------- context menu

    def context_menu_at(self, x: float, y: float) -> QMenu:
        """The context menu for the item at world point (x, y) (or the empty canvas)."""
        cell = self.document.cell
        hit = self._pick(x, y)
        menu = QMenu(self)
        if hit is not None:
            self._select_hit(hit, Pointer(x, y))
        if hit is None:
            menu.addAction("Add target here", lambda: self._add_target(x, y))
            menu.addAction("Zoom to fit", self.zoom_to_fit)
        elif hit.kind in ("base", "handle"):
            arm = cell.arm(hit.id)
            menu.addAction("Set position…", lambda: self._set_arm_position(arm.id))
            menu.addAction("Rename…", lambda: self._rename(arm.id, "arm"))
        elif hit.kind == "target":
            t = next(t for t in cell.targets if t.id == hit.id)
            menu.addAction("Set position…", lambda: self._set_target_position(t.id))
            menu.addAction("Rename…", lambda: self._rename(t.id, "target"))
            menu.addAction("Zoom to target", lambda: self.zoom_to(t.id))
            menu.addSeparator()
            menu.addAction(f"Delete target {t.name}", lambda: self._delete([t.id]))
        else:
            f = next(f for f in cell.fixtures if f.id == hit.id)
            if hit.kind == "vertex":
                i = hit.index
                menu.addAction("Set vertex position…", lambda: self._set_vertex(f.id, i))
                act = menu.addAction("Delete vertex", lambda: self._delete_vertex(f.id, i))
                act.setEnabled(len(f.outline) > 3)
                menu.addSeparator()
            menu.addAction("Rename…", lambda: self._rename(f.id, "fixture"))
            kinds = menu.addMenu("Kind")
            for kind in FIXTURE_KINDS:
                a = kinds.addAction(kind, lambda k=kind: self._set_kind(f.id, k))
                a.setCheckable(True)
                a.setChecked(kind == f.kind)
            menu.addSeparator()
            menu.addAction(f"Delete fixture {f.name}", lambda: self._delete([f.id]))
        return menu

    def _delete(self, ids: list[str]) -> None:
        cell = self.document.cell
        self.document.selection.set([i for i in self.document.selection.ids if i not in ids])
        self.document.edit(edits.delete_label(cell, ids), edits.delete_items(cell, ids))

    def _rename(self, item_id: str, what: str) -> None:
        cell = self.document.cell
        items = {x.id: x for x in (*cell.arms, *cell.fixtures, *cell.targets)}
        old = items[item_id].name
        name = self.ask_name(self, f"Rename {what}", old)
        if name and name != old:
            self.document.edit(f"Rename {what} {old} to {name}", edits.rename(cell, item_id, name))

    def _set_kind(self, fixture_id: str, kind: str) -> None:
        cell = self.document.cell
        f = next(f for f in cell.fixtures if f.id == fixture_id)
        if f.kind != kind:
            self.document.edit(
                f"Make {f.name} a {kind}", edits.set_fixture_kind(cell, fixture_id, kind)
            )

    def _set_arm_position(self, arm_id: str) -> None:
        cell = self.document.cell
        arm = cell.arm(arm_id)
        got = self.ask_position(
            self, f"Position of {arm.name}", arm.x, arm.y, cell.units, arm.heading_deg
        )
        if got is None:
            return
        x, y, h = got
        new = edits.move_base(cell, arm_id, x, y)
        if h is not None:
            new = edits.set_heading(new, arm_id, h)
        self.document.edit(f"Set position of {arm.name}", new)

    def _set_target_position(self, target_id: str) -> None:
        cell = self.document.cell
        t = next(t for t in cell.targets if t.id == target_id)
        got = self.ask_position(self, f"Position of {t.name}", t.x, t.y, cell.units, None)
        if got is not None:
            self.document.edit(
                f"Set position of target {t.name}", edits.move_target(cell, t.id, got[0], got[1])
            )

    def _set_vertex(self, fixture_id: str, index: int) -> None:
        cell = self.document.cell
        f = next(f for f in cell.fixtures if f.id == fixture_id)
        vx, vy = f.outline[index]
        got = self.ask_position(self, f"Vertex {index + 1} of {f.name}", vx, vy, cell.units, None)
        if got is None:
            return
        if not may_move_vertex(f.outline, index, (got[0], got[1])):
            self.status_message.emit(f"{f.name}: the outline would cross itself")
            return
        self.document.edit(
            f"Move vertex of {f.name}", edits.move_vertex(cell, f.id, index, got[0], got[1])
        )

    def _delete_vertex(self, fixture_id: str, index: int) -> None:
        cell = self.document.cell
        f = next(f for f in cell.fixtures if f.id == fixture_id)
        pts = [p for i, p in enumerate(f.outline) if i != index]
        problem = outline_problem(pts)
        if problem:
            self.status_message.emit(f"Cannot delete the vertex: {problem}")
            return
        new = edits.set_outline(cell, f.id, pts)
        self.document.edit(f"Delete vertex of {f.name}", new)


def _box_points(box) -> list[tuple[float, float]]:
    x0, y0, x1, y1 = box
    return [(x0, y0), (x1, y0), (x1, y1), (x0, y1), (x0, y0)]


def _polyline(points) -> QPainterPath:
    path = QPainterPath()
    if points:
        path.moveTo(*points[0])
        for p in points[1:]:
            path.lineTo(*p)
    return path

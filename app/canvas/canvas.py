"""The cell canvas: a true-scale plan view of the cell with live engine results.

The canvas draws what the document holds and what the engine computed; it never
computes geometry itself. It changes the document only through
``document.preview`` / ``commit_preview`` / ``cancel_preview`` (drags) and
``document.edit`` (one-shot edits).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QEvent, QObject, QPoint, QPointF, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QActionGroup, QBrush, QCursor, QPainterPath, QPen
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
from app.panels.moves import SHARED
from kinematics.bodies import BodyDataError, arm_bodies
from kinematics.cell import FIXTURE_KINDS, Arm, Cell
from kinematics.evaluate import ArmEvaluation, evaluate_cell_arm
from kinematics.fk import joint_points
from kinematics.ik import ELBOWS, REASONS, Status
from kinematics.regions import arm_regions

from . import dialogs, edits
from .clearance import (
    CLEARANCE_OVERLAYS,
    CONTACT_SYMBOL,
    OVERLAY_TITLES,
    ClearanceOverlays,
    CollisionMarks,
    NoteLayer,
    fixture_near,
    hit_label,
    reach_bound,
)
from .items import (
    ArmItem,
    FixtureItem,
    Grid,
    LabelsItem,
    MarkersItem,
    PlanView,
    ScaleBar,
    geometry_path,
    polygon_path,
    polylines_path,
    translate_rotate,
)
from .legend import LegendEntry, LegendWidget
from .picking import Hit, pick, pick_target
from .qtstyle import (
    ELBOW_COLOURS,
    OVERLAY_LOOKS,
    PATTERNS,
    colour,
    cosmetic_pen,
    fixture_look,
    mixed,
)
from .snapping import (
    Anchors,
    SnapResult,
    fixture_anchors,
    may_move_vertex,
    measure,
    outline_problem,
    rectangle_outline,
    snap_angle,
    snap_point,
)

__all__ = ["CellCanvas", "OVERLAY_KEYS", "CLEARANCE_OVERLAYS"]

#: Overlay kinds, in drawing order (each has an action "overlay.<kind>").
OVERLAY_KEYS = ("annulus", "positive", "negative", "both", "comfort")

# z order of the layers (higher is drawn on top).
Z_FIXTURE = 10
Z_OVERLAY = 20
Z_GHOST = 30
Z_ARM = 40
Z_TARGET = 50
Z_SELECT = 55
Z_LABEL = 60
Z_TOOL = 70

PICK_PX = 8.0  # pick radius around points, screen pixels
SNAP_PX = 10.0  # snap radius to fixture vertices and midpoints, screen pixels
DRAG_PX = 3.0  # movement before a press becomes a drag
ANGLE_STEP = 5.0  # heading snap step, degrees
ROTATE_MIN_PX = 6.0  # a turn needs the pointer this far from the base centre, pixels
#: Snap pitch until one is set for the units: 10 mm, or a quarter inch (common practice, no source).
DEFAULT_PITCH = {"mm": 10.0, "in": 0.25}
DRAFT_IDLE_MS = 250  # pause in step-by-step changes after which full quality returns
LEGEND_MIN_PLOT_PX = 360  # the legend steps aside rather than leave the plot narrower
FIT_PADDING = 0.05  # zoom to fit leaves this fraction of the view free on each side
FIT_LABEL_COST = 1.15  # zoom out up to this factor so labels can all sit right of their markers
FIT_SPARE_PX = 6.0  # room left between a fitted label and the view's edge, pixels
FIT_LABEL_MAX_COST = 1.6  # zoom out at most this factor so labels fit on either side
FIT_LABEL_SHARE = 0.45  # labels wider than this share of the view are not fitted

# Ghost roles: the chosen pose, the other configuration when it also works, and
# the other configuration when it exists but breaks a limit or hits a fixture.
GHOST_ROLES = ("chosen", "alternative", "blocked")
# One-pixel opaque pens: the fast path of Qt's stroker (wide or translucent is ~10x slower).
_GHOST_PENS = {
    "chosen": ("solid", 1.0, 1.0),
    "alternative": ("dash", 1.0, 0.9),
    "blocked": ("dot", 1.0, 0.6),
}

_UNITS_WORD = {"mm": "mm", "in": "in"}


@dataclass
class _Drag:
    """A press on an item that becomes a drag once the pointer moves a few pixels."""

    kind: str  # "base", "rotate", "handle", "target", "vertex", "fixture", "rect"
    id: str
    index: int
    start: tuple[float, float]  # world point pressed
    press_px: QPointF
    cell0: Cell
    ref: tuple[float, float] = (0.0, 0.0)  # point that snaps (base, target, vertex...)
    active: bool = False
    last: tuple | None = None
    label: str = ""
    a0: float | None = None  # pointer angle about the base a turn is measured from


@dataclass
class _Regions:
    key: tuple
    pose: tuple[float, float, float]
    paths: dict[str, QPainterPath] = field(default_factory=dict)
    version: int = 0


def _collides(ev: ArmEvaluation) -> np.ndarray:
    """Per target and configuration: hits a blocking fixture (all False when none were checked)."""
    hits = np.asarray(ev.collides, dtype=bool)
    return (
        hits if hits.shape == (len(ev.target_ids), 2) else np.zeros((len(ev.target_ids), 2), bool)
    )


def _arm_region_key(arm: Arm, tol: float) -> tuple:
    return (arm.a1, arm.a2, tuple(arm.q1_limits), tuple(arm.q2_limits), arm.elbow, tol)


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
        # Snap pitch per unit system: a pitch is a length in the cell's units.
        self._pitches: dict[str, float] = dict(DEFAULT_PITCH)
        self._fitted_on_show = False
        self._evals: dict[str, ArmEvaluation] = {}
        self._regions: dict[str, _Regions] = {}
        self._reason_cache: dict[str, tuple[ArmEvaluation, list[str], bool]] = {}
        self._overlay_items: dict[tuple[str, str], QGraphicsPathItem] = {}
        self._overlay_version: dict[tuple[str, str], int] = {}
        self._ghost_items: dict[tuple[str, int, str], QGraphicsPathItem] = {}
        self._fixture_items: dict[str, FixtureItem] = {}
        self._arm_items: dict[str, ArmItem] = {}
        self._names_key: tuple | None = None
        self._names: dict[str, str] = {}
        self._target_xy = np.zeros((0, 2))
        self._target_ids: list[str] = []
        self._hover = ""
        self._shown_selection: set[str] = {"\0"}  # forces the first refresh
        self._drag: _Drag | None = None
        self._swallow_until_release = False
        self._empty_press: QPointF | None = None
        self._right_press: QPointF | None = None
        self._poly: list[tuple[float, float]] = []
        self._rect_start: tuple[float, float] | None = None
        self._measure: list[tuple[float, float]] = []
        self._measure_fixed = False
        self._draft = False
        self._idle = QTimer(self)
        self._idle.setSingleShot(True)
        self._idle.setInterval(DRAFT_IDLE_MS)
        self._idle.timeout.connect(self._end_draft)
        # Dialog hooks, replaceable in tests (the real ones are modal).
        self.ask_position = dialogs.ask_position
        self.ask_name = dialogs.ask_name

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

        self.markers = MarkersItem(
            {int(st): (ss.symbol, ss.colour) for st, ss in style.STATUS_STYLES.items()}
        )
        self._add(self.markers, Z_TARGET)
        self._select_scatter = pg.ScatterPlotItem(
            size=24,
            symbol="o",
            pen=pg.mkPen(colour(style.PALETTE["harbour"], 0.9), width=3.0),
            brush=pg.mkBrush(0, 0, 0, 0),
            pxMode=True,
        )
        self._add(self._select_scatter, Z_SELECT)
        self._labels = LabelsItem()
        self._add(self._labels, Z_LABEL)
        self._tool_item = QGraphicsPathItem()
        self._tool_item.setPen(cosmetic_pen(style.INK, 1.5, "dash"))
        self._add(self._tool_item, Z_TOOL)
        self._measure_item = QGraphicsPathItem()
        self._measure_item.setPen(cosmetic_pen(style.PALETTE["harbour"], 2.0))
        self._add(self._measure_item, Z_TOOL)
        self._measure_label = pg.TextItem(
            "", color=style.INK, anchor=(0.5, 1.2), fill=pg.mkBrush(colour(style.PAPER, 0.85))
        )
        self._measure_label.setVisible(False)
        self._add(self._measure_label, Z_TOOL)
        self._snap_marker = pg.ScatterPlotItem(
            size=14, pen=pg.mkPen(style.PALETTE["harbour"], width=2.0), brush=None, pxMode=True
        )
        self._add(self._snap_marker, Z_TOOL)
        self._snap_marker.setVisible(False)
        self.scale_bar = ScaleBar(self.vb, self._units)
        self.scale_bar.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
        self.grid = Grid(
            self.plot, self.vb, (self.plot.getAxis("bottom"), self.plot.getAxis("left"))
        )

        self._collisions = CollisionMarks(self)
        self._clearance = ClearanceOverlays(self, SHARED)
        self._notes = NoteLayer(self)
        self.vb.sigRangeChanged.connect(lambda *_a: self._notes.layout())
        self._last_cell = document.cell
        self._bounds: dict[str, tuple[Arm, float]] = {}
        self._notes_retry = False
        self._hits_key: tuple | None = None

        self._actions: dict[str, QAction] = {}
        self._build_actions()

        self.plot.viewport().installEventFilter(self)
        self.plot.viewport().setMouseTracking(True)
        self.plot.installEventFilter(self)

        document.events.cell_changed.connect(self._on_cell_changed)
        document.selection.changed.connect(self._on_selection)
        self._rebuild()
        self.zoom_to_fit()

    # ---------------------------------------------------------------- public API

    def actions(self) -> dict[str, QAction]:  # type: ignore[override]
        """Checkable actions by stable key: overlays, ghost mode, snapping and tools."""
        return dict(self._actions)

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
        """Show the legend when asked for and when the plot keeps a useful width beside it."""
        room = self.width() - self.legend_area.width() >= LEGEND_MIN_PLOT_PX
        on = self._actions["legend.show"].isChecked() and room
        if on != self.legend_area.isVisibleTo(self):
            self.legend_area.setVisible(on)

    def showEvent(self, event) -> None:  # noqa: N802 (Qt name)
        super().showEvent(event)
        if not self._fitted_on_show:
            # The first fit ran before the widget had its size; fit again once shown.
            self._fitted_on_show = True
            QTimer.singleShot(0, self, self.zoom_to_fit)

    def zoom_to_fit(self) -> None:
        """Show the whole cell: fixtures, targets with their labels, every arm's outer reach."""
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
            self.vb.setRange(xRange=(-500, 500), yRange=(-500, 500), padding=FIT_PADDING)
            return
        x0, x1, y0, y1 = min(xs), max(xs), min(ys), max(ys)
        x0, x1, y0, y1 = self._fit_labels(x0, x1, y0, y1)
        self.vb.setRange(xRange=(x0, x1), yRange=(y0, y1), padding=FIT_PADDING)

    def _fit_labels(self, x0: float, x1: float, y0: float, y1: float):
        """Grow a world box so every target label fits in view beside its marker.

        Labels keep their pixel size while the scale follows the box, hence a few
        rounds. Labels sit right of their markers where they can: the box grows
        for that when it costs little scale; otherwise only where a label has room
        on neither side (the label layout then picks the side wholly in view).
        """
        xy, side, above, below = self._labels.extents()
        # A few pixels to spare, so rounding never leaves a label a hair outside the view.
        side, above, below = side + FIT_SPARE_PX, above + FIT_SPARE_PX, below + FIT_SPARE_PX
        vw, vh = float(self.vb.width()), float(self.vb.height())
        # Labels too big for the view at any scale are left out (zooming out cannot help).
        fits = (side < FIT_LABEL_SHARE * vw) & (above + below < FIT_LABEL_SHARE * vh)
        xy, side, above, below = xy[fits], side[fits], above[fits], below[fits]
        if not len(xy) or vw < 50 or vh < 50:
            return x0, x1, y0, y1
        box = (x0, x1, y0, y1)
        base = self._fit_scale(box, vw, vh)
        right = self._grow_for_labels(box, xy, side, above, below, vw, vh, either=False)
        if self._fit_scale(right, vw, vh) <= FIT_LABEL_COST * base:
            return right
        either = self._grow_for_labels(box, xy, side, above, below, vw, vh, either=True)
        if self._fit_scale(either, vw, vh) <= FIT_LABEL_MAX_COST * base:
            return either
        return box  # a cell shown small enough for every label is no use: show the cell

    @staticmethod
    def _fit_scale(box, vw: float, vh: float) -> float:
        """World units per pixel that setRange with padding shows ``box`` at (1:1 aspect)."""
        x0, x1, y0, y1 = box
        grow = 1.0 + 2.0 * FIT_PADDING
        return max((x1 - x0) * grow / vw, (y1 - y0) * grow / vh, 1e-12)

    def _grow_for_labels(self, box, xy, side, above, below, vw, vh, either: bool):
        x0, x1, y0, y1 = box
        x, y = xy[:, 0], xy[:, 1]
        for _ in range(12):
            s = self._fit_scale((x0, x1, y0, y1), vw, vh)
            # The edges actually shown: the 1:1 aspect widens one direction about the centre.
            cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
            vx0, vx1 = cx - vw * s / 2, cx + vw * s / 2
            vy0, vy1 = cy - vh * s / 2, cy + vh * s / 2
            over_r = x + side * s - vx1
            over_l = vx0 - (x - side * s)
            if either:
                stuck = (over_r > 0) & (over_l > 0)
                to_right = stuck & (over_r <= over_l)
                to_left = stuck & ~to_right
            else:
                to_right, to_left = over_r > 0, np.zeros(len(x), dtype=bool)
            dx1 = float(over_r[to_right].max()) if to_right.any() else 0.0
            dx0 = float(over_l[to_left].max()) if to_left.any() else 0.0
            dy1 = max(float((y + above * s - vy1).max()), 0.0)
            dy0 = max(float((vy0 - (y - below * s)).max()), 0.0)
            if max(dx0, dx1, dy0, dy1) <= 1e-6 * s:
                break
            x0, x1, y0, y1 = x0 - dx0, x1 + dx1, y0 - dy0, y1 + dy1
        return x0, x1, y0, y1

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

    def evaluation(self, arm_id: str) -> ArmEvaluation:
        """The canvas's current evaluation of one arm (re-computed for changed arms only)."""
        return self._evals[arm_id]

    @property
    def collision_marks(self) -> CollisionMarks:
        """Colliding bodies, contact marks and hit fixtures of the shown ghost poses."""
        return self._collisions

    @property
    def clearance_overlays(self) -> ClearanceOverlays:
        """Swept areas, spaces, shared zones and targets, fixtures passed over."""
        return self._clearance

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
        if key in CLEARANCE_OVERLAYS:
            return self._clearance.items(key)
        return [it for (aid, k), it in self._overlay_items.items() if k == key]

    def measurement(self) -> tuple[float, float] | None:
        """Distance and angle (degrees) of the current measurement, None without one."""
        if len(self._measure) == 2:
            return measure(self._measure[0], self._measure[1])
        return None

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
        """Esc: cancel a drag in progress (restoring the cell) or the tool's pending input."""
        if self._drag is not None:
            was_active = self._drag.active
            self._drag = None
            self._hide_snap()
            if was_active:
                self.document.cancel_preview()
                self._end_draft()
                self._swallow_until_release = True
                self.status_message.emit("Move cancelled")
            return
        if self._poly or self._rect_start or self._measure:
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
            act.toggled.connect(lambda _on: self._refresh_overlays())
            act.toggled.connect(lambda _on: self._refresh_legend())
        for key in CLEARANCE_OVERLAYS:
            text, tip, on = OVERLAY_TITLES[key]
            act = self._action(f"overlay.{key}", text, on)
            act.setToolTip(tip)
            act.toggled.connect(lambda _on: self._refresh_clearance())
            act.toggled.connect(lambda _on: self._refresh_legend())
        ghosts = QActionGroup(self)
        ghosts.setExclusive(True)
        for key, text, on in (
            ("ghosts.all", "Ghost poses: all targets", True),
            ("ghosts.selected", "Ghost poses: selected only", False),
            ("ghosts.none", "Ghost poses: none", False),
        ):
            self._action(key, text, on, ghosts).toggled.connect(lambda _on: self._refresh_ghosts())
        legend = self._action("legend.show", "Show legend", True)
        legend.setToolTip(
            f"The legend beside the plot (it steps aside while the plot would be narrower "
            f"than {LEGEND_MIN_PLOT_PX} pixels)"
        )
        legend.toggled.connect(lambda _on: self._place_legend())
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
        for key in ("tool.select", "tool.polygon", "tool.rectangle", "tool.measure"):
            if self._actions[key].isChecked():
                return key.split(".", 1)[1]
        return "add_target" if self._actions["tool.add_target"].isChecked() else "select"

    def _tool_changed(self, key: str, cursor: Qt.CursorShape) -> None:
        self._clear_tool_state()
        self.plot.viewport().setCursor(QCursor(cursor))
        hints = {
            "tool.select": "Drag bases, targets, fixtures, vertices; Shift-drag a base to turn it",
            "tool.polygon": "Click vertices; double-click or Enter finishes, Backspace undoes one",
            "tool.rectangle": "Drag a rectangle to add a fixture",
            "tool.measure": "Click two points to measure",
            "tool.add_target": "Click to add a target",
        }
        self.status_message.emit(hints[key])

    # ---------------------------------------------------------------- drawing

    def _label_axes(self) -> None:
        u = _UNITS_WORD.get(self._units, self._units)
        self.plot.setLabel("bottom", f"x ({u})")
        self.plot.setLabel("left", f"y ({u})")

    def _add(self, item, z: float, cache: bool = False) -> None:
        self.vb.addItem(item, ignoreBounds=True)
        item.setZValue(z)
        if cache:
            item.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)

    def _remove(self, item) -> None:
        self.vb.removeItem(item)

    def _rebuild(self) -> None:
        """Recreate per-object items after a structural change (load, add, delete)."""
        cell = self.document.cell
        if cell.units != self._units:
            self._units = cell.units
            self.snap_pitch_changed.emit(self.snap_pitch())
            self.scale_bar.units = cell.units
            self._label_axes()
        for item in self._fixture_items.values():
            self._remove(item)
        self._fixture_items.clear()
        for f in cell.fixtures:
            item = FixtureItem(f.kind, fixture_look(f.kind))
            item.set_outline(f.outline)
            self._add(item, Z_FIXTURE, cache=True)
            self._fixture_items[f.id] = item
        for item in self._arm_items.values():
            self._remove(item)
        self._arm_items.clear()
        for i, a in enumerate(cell.arms):
            item = ArmItem(style.arm_colour(i))
            self._add(item, Z_ARM, cache=True)
            self._arm_items[a.id] = item
            self._update_arm_item(a.id)
        self._evals = {a.id: evaluate_cell_arm(cell, a) for a in cell.arms}
        self._collisions.keep_arms(self._evals)
        self._hits_key = None  # new fixture items: mark the hit ones afresh
        self._refresh_targets()
        self._refresh_overlays()
        self._refresh_ghosts(marks=False)  # _refresh_clearance below draws the hits
        self._shown_selection = {"\0"}  # new items: apply the selection afresh
        self._on_selection(self.document.selection.ids)
        self._refresh_clearance(live=self.document.previewing)
        self._refresh_legend()
        self._last_cell = cell

    def _reach_of(self, arm: Arm) -> float:
        """Largest distance from the base any body of the arm reaches (cached per arm)."""
        cached = self._bounds.get(arm.id)
        if cached is None or cached[0] != arm:
            try:
                bound = reach_bound(arm_bodies(arm))
            except BodyDataError:
                bound = math.inf
            cached = (arm, bound)
            self._bounds[arm.id] = cached
        return cached[1]

    def _arms_near_fixtures(self, fixture_ids, old: Cell, new: Cell) -> set[str]:
        """Arms a change of these fixtures can affect: a body could reach the old or the
        new outline (moving a fixture away frees poses, moving it in blocks them)."""
        outlines = [f.outline for c in (old, new) for f in c.fixtures if f.id in fixture_ids]
        out = set()
        for arm in new.arms:
            bound = self._reach_of(arm)
            if any(fixture_near(arm, bound, o) for o in outlines):
                out.add(arm.id)
        return out

    def _base_radius(self, arm: Arm) -> float:
        # Footprint: the first link's radius when given, else a tenth of the first link.
        return float(arm.link_radii[0]) if arm.link_radii else 0.1 * arm.a1

    def _update_arm_item(self, arm_id: str) -> None:
        arm = self.document.cell.arm(arm_id)
        self._arm_items[arm_id].set_arm(arm, self._base_radius(arm), 0.45 * arm.a1)

    def _begin_draft(self) -> None:
        """Draft drawing while the cell changes step by step (a drag, from here or elsewhere).

        Newly drawn lines skip antialiasing and failure labels skip their amounts;
        both come back once the changes pause (or the drag ends). Cached items
        keep their smooth look throughout.
        """
        self._idle.start()
        if not self._draft:
            self._draft = True
            self.plot.setAntialiasing(False)
            self._collisions.set_draft(True)

    def _end_draft(self) -> None:
        self._idle.stop()
        if self._draft:
            self._draft = False
            self.plot.setAntialiasing(True)
            self._collisions.set_draft(False)
            self._refresh_ghosts(marks=False)  # hatched bodies and contact marks again
            self._refresh_targets()  # amounts back in the failure labels
            self._labels.relayout()  # and a tidy layout after incremental updates
            self._refresh_clearance()  # swept areas, operating spaces, zones: the pause came
            self.plot.viewport().update()

    def _on_cell_changed(self, changes: Changes) -> None:
        if self.document.previewing:
            self._begin_draft()
        elif self._draft:
            self._end_draft()
        if changes.structure:
            self._rebuild()
            return
        cell = self.document.cell
        old, self._last_cell = self._last_cell, cell
        kinds_changed = False
        for fid in changes.fixtures:
            f = next(f for f in cell.fixtures if f.id == fid)
            item = self._fixture_items[fid]
            if item.kind != f.kind:
                item.set_look(f.kind, fixture_look(f.kind))
                kinds_changed = True
            item.set_outline(f.outline)
        if kinds_changed:
            self._refresh_legend()
        changed_arms = set(changes.arms)
        if changes.other:
            # The clearance margin and the sequences live in the cell: every arm may change.
            changed_arms |= {a.id for a in cell.arms}
        elif changes.fixtures:
            # Fixtures block the arms whose bodies can reach their old or new outline.
            changed_arms |= self._arms_near_fixtures(changes.fixtures, old, cell)
        if changes.targets:
            by_id = {t.id: t for t in cell.targets}
            for tid in changes.targets:
                t = by_id.get(tid)
                if t is not None:
                    changed_arms.add(t.arm)
            # A target given to another arm leaves its old arm's list too.
            for aid, ev in self._evals.items():
                if not changes.targets.isdisjoint(ev.target_ids):
                    changed_arms.add(aid)
        for aid in changed_arms:
            if aid in self._arm_items:
                self._update_arm_item(aid)
                self._evals[aid] = evaluate_cell_arm(cell, cell.arm(aid))
        if changed_arms or changes.targets:
            self._refresh_targets()
            self._refresh_ghosts(changed_arms, marks=False)  # _refresh_clearance below
            self._on_selection(self.document.selection.ids)
        if changes.arms:
            self._refresh_overlays(changes.arms)
            if any(cell.arm(a).name != self._arm_items[a].name for a in changes.arms):
                self._refresh_legend()
        if changes:
            self._refresh_clearance(live=self.document.previewing)

    def _refresh_targets(self) -> None:
        """Markers and labels per arm; unchanged arms keep their drawn images."""
        cell = self.document.cell
        key = tuple((t.id, t.name) for t in cell.targets)
        if key != self._names_key:
            self._names_key = key
            self._names = dict(key)
        xy_parts = []
        st_parts = []
        ids: list[str] = []
        groups = []
        for aid, ev in self._evals.items():
            status = np.asarray(ev.status, dtype=np.int64)
            names = [self._names[t] for t in ev.target_ids]
            self.markers.set_group(aid, ev.xy, status)
            self._labels.set_group(aid, ev.xy, names, self._reason_texts(ev))
            groups.append(aid)
            xy_parts.append(ev.xy)
            st_parts.append(status)
            ids.extend(ev.target_ids)
        seen = set(ids)
        orphans = [t for t in cell.targets if t.id not in seen]
        if orphans:
            oxy = np.array([(t.x, t.y) for t in orphans], dtype=float)
            ost = np.full(len(orphans), int(Status.BEYOND_REACH), dtype=np.int64)
            self.markers.set_group("", oxy, ost)
            self._labels.set_group(
                "",
                oxy,
                [t.name for t in orphans],
                [f"assigned to missing arm {t.arm!r}" for t in orphans],
            )
            groups.append("")
            xy_parts.append(oxy)
            st_parts.append(ost)
            ids.extend(t.id for t in orphans)
        self.markers.keep_groups(groups)
        self._labels.keep_groups(groups)
        self._target_xy = np.vstack(xy_parts) if xy_parts else np.zeros((0, 2))
        self._target_ids = ids
        self._target_status = np.concatenate(st_parts) if st_parts else np.zeros(0, dtype=np.int64)

    def _reason_texts(self, ev: ArmEvaluation) -> list[str]:
        """Why each target fails, with the amount when the engine reports one (cached)."""
        # In draft mode (a drag in progress) amounts are left out: they would change on every
        # step and redrawing ~100 texts per step costs more than a frame.
        amounts = not self._draft
        cached = self._reason_cache.get(ev.arm.id)
        if cached is not None and cached[0] is ev and cached[2] == amounts:
            return cached[1]
        status = np.asarray(ev.status, dtype=np.int64)
        feasible = np.asarray(ev.feasible, dtype=bool)
        # Plain reasons by lookup (the draft case, every drag step).
        plain = {
            int(st): f"{style.status_style(st).glyph} "
            + (f"only {ev.arm.elbow} elbow allowed" if st is Status.ELBOW_EXCLUDED else REASONS[st])
            for st in Status
        }
        out = [
            ("" if ok else plain[st])
            for ok, st in zip(feasible.tolist(), status.tolist(), strict=True)
        ]
        bad = np.flatnonzero(~feasible)
        if amounts and len(bad):
            u = _UNITS_WORD.get(self._units, self._units)
            ik = ev.ik
            reach = np.abs(np.asarray(ik.reach_margin, dtype=float))
            # How far the best allowed configuration is past its limits (the engine's choice).
            lm = np.where(
                np.asarray(ik.allowed, dtype=bool),
                np.nan_to_num(np.asarray(ik.limit_margin_deg, dtype=float), nan=-np.inf),
                -np.inf,
            ).max(axis=-1)
            for i in bad.tolist():
                st = Status(int(status[i]))
                if st in (Status.BEYOND_REACH, Status.INSIDE_HOLE):
                    out[i] = f"{plain[st]} by {self._fmt(reach[i])} {u}"
                elif st in (Status.Q1_LIMIT, Status.Q2_LIMIT) and math.isfinite(lm[i]):
                    out[i] = f"{plain[st]} by {abs(float(lm[i])):.1f}°"
                elif st is Status.COLLISION:
                    # Names the fixture and the body: "collides with Column C4 (link 1)".
                    out[i] = f"{style.status_style(st).glyph} {ev.reason(i)}"
                    body = self._collision_body(ev, i)
                    if body:
                        out[i] += f" ({body})"
        self._reason_cache[ev.arm.id] = (ev, out, amounts)
        return out

    # ------------------------------------------------------------ overlays

    def _region_tol(self, arm: Arm) -> float:
        # Outline tolerance: far below a pixel at any sensible zoom.
        return max(arm.reach_max, 1e-9) * 2e-4

    def _regions_for(self, arm: Arm) -> _Regions:
        tol = self._region_tol(arm)
        key = _arm_region_key(arm, tol)
        cache = self._regions.get(arm.id)
        if cache is not None and cache.key == key:
            return cache
        version = (cache.version + 1) if cache is not None else 1
        cache = _Regions(key, (arm.x, arm.y, arm.heading_deg), version=version)
        try:
            regs = arm_regions(arm, tol)
        except ValueError as exc:  # an arm the engine cannot build regions for: draw none
            self.status_message.emit(f"No regions for {arm.name}: {exc}")
            regs = None
        for k in OVERLAY_KEYS:
            cache.paths[k] = geometry_path(getattr(regs, k)) if regs is not None else QPainterPath()
        self._regions[arm.id] = cache
        return cache

    def _refresh_overlays(self, arm_ids=None) -> None:
        """Add, update or remove overlay items; a base move only changes their transform."""
        cell = self.document.cell
        present = {a.id for a in cell.arms}
        for k in [k for k in self._overlay_items if k[0] not in present]:
            self._remove(self._overlay_items.pop(k))
        for aid in [a for a in self._regions if a not in present]:
            del self._regions[aid]
        enabled = [k for k in OVERLAY_KEYS if self._actions[f"overlay.{k}"].isChecked()]
        for arm in cell.arms:
            if (
                arm_ids is not None
                and arm.id not in arm_ids
                and all((arm.id, k) in self._overlay_items for k in enabled)
                and not any(
                    (arm.id, k) in self._overlay_items for k in OVERLAY_KEYS if k not in enabled
                )
            ):
                continue
            cache = self._regions_for(arm) if enabled else None
            for order, k in enumerate(OVERLAY_KEYS):
                ik = (arm.id, k)
                item = self._overlay_items.get(ik)
                if k not in enabled:
                    if item is not None:
                        self._remove(item)
                        del self._overlay_items[ik]
                    continue
                assert cache is not None
                if item is None:
                    look = OVERLAY_LOOKS[k]
                    item = QGraphicsPathItem()
                    item.setPen(look.pen)
                    item.setBrush(look.brush)
                    item.setData(0, f"overlay.{k}:{arm.id}")
                    self._add(item, Z_OVERLAY + order * 0.1, cache=True)
                    self._overlay_items[ik] = item
                    self._overlay_version[ik] = -1
                if self._overlay_version[ik] != cache.version:
                    item.setPath(cache.paths[k])
                    self._overlay_version[ik] = cache.version
                item.setTransform(translate_rotate(*cache.pose, arm.x, arm.y, arm.heading_deg))

    # --------------------------------------------------------------- ghosts

    def _ghost_mode(self) -> str:
        for m in ("all", "selected", "none"):
            if self._actions[f"ghosts.{m}"].isChecked():
                return m
        return "all"

    def _ghost_item(self, aid: str, c: int, role: str) -> QGraphicsPathItem:
        key = (aid, c, role)
        item = self._ghost_items.get(key)
        if item is None:
            item = QGraphicsPathItem()
            item.setPen(self._ghost_pen(ELBOWS[c], role))
            item.setData(0, f"ghost.{role}.{ELBOWS[c]}:{aid}")
            self._add(item, Z_GHOST + (0.5 if role == "chosen" else 0.0))
            self._ghost_items[key] = item
        return item

    @staticmethod
    def _ghost_pen(elbow: str, role: str) -> QPen:
        dash, width, amount = _GHOST_PENS[role]
        pen = cosmetic_pen(ELBOW_COLOURS[elbow], width, dash)
        pen.setColor(mixed(ELBOW_COLOURS[elbow], amount))
        return pen

    def _refresh_ghosts(self, arm_ids=None, marks: bool = True) -> None:
        cell = self.document.cell
        present = {a.id for a in cell.arms}
        for k in [k for k in self._ghost_items if k[0] not in present]:
            self._remove(self._ghost_items.pop(k))
        mode = self._ghost_mode()
        sel = set(self.document.selection.ids)
        for arm in cell.arms:
            if arm_ids is not None and arm.id not in arm_ids:
                continue
            ev = self._evals[arm.id]
            n = len(ev.target_ids)
            if mode == "none" or n == 0:
                show = np.zeros(n, dtype=bool)
            elif mode == "selected":
                whole = arm.id in sel
                show = np.array([whole or t in sel for t in ev.target_ids], dtype=bool)
            else:
                show = np.ones(n, dtype=bool)
            ik = ev.ik
            feasible = np.asarray(ev.feasible, dtype=bool) & show
            chosen = np.asarray(ev.chosen)
            # A configuration works when the engine's IK accepts it and it clears every fixture.
            works = np.asarray(ik.ok, dtype=bool) & ~_collides(ev)
            allowed = np.asarray(ik.allowed, dtype=bool)
            single = np.asarray(ik.singular, dtype=bool)
            q = ik.q_deg
            # A target that fails only on collisions shows its colliding poses (with the
            # colliding bodies hatched), so the designer sees where it hits.
            hit_only = show & (np.asarray(ev.status) == int(Status.COLLISION))
            hits = np.asarray(ik.ok, dtype=bool) & _collides(ev)
            for c in (0, 1):
                masks = {
                    "chosen": feasible & (chosen == c),
                    "alternative": feasible & (chosen != c) & works[:, c] & ~single,
                    # Only configurations the elbow setting allows: an excluded one is no option.
                    "blocked": (feasible & (chosen != c) & allowed[:, c] & ~works[:, c] & ~single)
                    | (hit_only & hits[:, c] & ~(single & (c == 1))),
                }
                need = np.zeros(n, dtype=bool)
                for m in masks.values():
                    need |= m
                pts = np.zeros((n, 3, 2))
                if need.any():
                    b, e, t = joint_points(
                        arm.a1, arm.a2, q[need, c, 0], q[need, c, 1], arm.x, arm.y, arm.heading_deg
                    )
                    pts[need] = np.stack([b, e, t], axis=1)
                for role, m in masks.items():
                    item = self._ghost_item(arm.id, c, role)
                    item.setPath(polylines_path(pts[m]) if m.any() else QPainterPath())
            self._collisions.update_arm(ev, show)
        if marks:
            self._apply_hits()

    def _apply_hits(self, live: bool = False) -> None:
        """Hit fixtures (thick dashed edge, label) and contact marks of ghosts and moves."""
        cell = self.document.cell
        hits = self._collisions.hits()
        moves = self._clearance.move_hits
        key = (hits, moves, self._clearance.notes, cell.fixtures, [a.name for a in cell.arms])
        if not (live and key == self._hits_key):  # drag steps mostly hit the same fixtures
            self._hits_key = key
            texts = {
                fid: hit_label(cell, hits.get(fid, []), moves.get(fid, []))
                for fid in set(hits) | set(moves)
            }
            notes = self._collisions.label_fixtures(cell, self._fixture_items, texts)
            self._notes.set(notes + self._clearance.notes, relayout=not live)
        self._collisions.redraw_contacts(self._clearance.move_contacts)

    def note_view(self) -> tuple[float, float, float, float]:
        """The plot area in viewport pixels (left, top, right, bottom): where notes go."""
        r = self.plot.mapFromScene(self.vb.sceneBoundingRect()).boundingRect()
        return (float(r.left()), float(r.top()), float(r.right()), float(r.bottom()))

    def note_obstacles(self) -> list[tuple[float, float, float, float]]:
        """Viewport pixel boxes notes should keep clear of: target markers and labels."""
        out: list[tuple[float, float, float, float]] = []
        xy = self._target_xy
        if len(xy):
            # No rotation and a locked aspect: two points give the whole mapping.
            o, e = self.world_to_viewport(0.0, 0.0), self.world_to_viewport(1000.0, 1000.0)
            sx, sy = (e.x() - o.x()) / 1000.0, (e.y() - o.y()) / 1000.0
            px, py = o.x() + sx * xy[:, 0], o.y() + sy * xy[:, 1]
            h = 9.0
            out += [(x - h, y - h, x + h, y + h) for x, y in zip(px.tolist(), py.tolist())]
        placed = self._labels.placed()
        out += [(x, y, x + w, y + h) for x, y, w, h, *_rest in placed]
        hit = set(self._collisions.label_texts()) | set(self._clearance.move_hits)
        for f in self.document.cell.fixtures:
            if f.id not in hit:
                continue
            # A small hit fixture stays in sight (a large one would leave no room).
            xy = np.asarray(f.outline, dtype=float)
            a = self.world_to_viewport(float(xy[:, 0].min()), float(xy[:, 1].max()))
            b = self.world_to_viewport(float(xy[:, 0].max()), float(xy[:, 1].min()))
            if b.x() - a.x() < 80 and b.y() - a.y() < 80:
                out.append((a.x() - 3.0, a.y() - 3.0, b.x() + 3.0, b.y() + 3.0))
        for item in self._arm_items.values():
            # The base and its name (drawn on either side of the base): a generous box.
            c = self.world_to_viewport(item.x, item.y)
            half = 30.0 + 4.0 * len(item.name)
            out.append((c.x() - half, c.y() - 22.0, c.x() + half, c.y() + 22.0))
        if len(xy) and not placed and not self._notes_retry:
            # Target labels are laid out when painted: place the notes again after that.
            self._notes_retry = True
            QTimer.singleShot(50, self._notes.layout)
        return out

    def _refresh_clearance(self, live: bool = False) -> None:
        """The clearance overlays; a drag step (``live``) leaves out what waits for a pause."""
        enabled = {k for k in CLEARANCE_OVERLAYS if self._actions[f"overlay.{k}"].isChecked()}
        before = dict(self._clearance.sources)
        self._clearance.refresh(self.document.cell, self._evals, enabled, live)
        self._apply_hits(live)
        if self._clearance.sources != before:
            self._refresh_legend()

    @staticmethod
    def _collision_body(ev: ArmEvaluation, i: int) -> str:
        """The body that hits, in the configuration that comes closest ("link 1")."""
        cands = [k for k in (0, 1) if bool(ev.ik.ok[i, k]) and bool(_collides(ev)[i, k])]
        if not cands:
            return ""
        k = max(cands, key=lambda c: float(ev.clearance[i, c]))
        return ev.blocked_body(i, k) or ""

    # ------------------------------------------------------------ selection

    def _on_selection(self, ids) -> None:
        sel = set(ids)
        if not sel and not self._shown_selection:
            return  # nothing selected before or now (the common case during a drag)
        self._shown_selection = sel
        for fid, item in self._fixture_items.items():
            item.set_selected(fid in sel)
        for aid, item in self._arm_items.items():
            item.set_selected(aid in sel)
        pos = np.zeros((0, 2))
        if self._target_ids and sel:
            mask = np.array([t in sel for t in self._target_ids], dtype=bool)
            pos = self._target_xy[mask]
        self._select_scatter.setData(pos=pos)
        self._select_scatter.setVisible(len(pos) > 0)
        if self._ghost_mode() == "selected":
            self._refresh_ghosts()

    # --------------------------------------------------------------- legend

    def _refresh_legend(self) -> None:
        cell = self.document.cell
        e: list[LegendEntry] = [LegendEntry("header", "Targets (marker shape = status)")]
        for st, ss in style.STATUS_STYLES.items():
            text = "reachable" if st is Status.OK else f"fails: {ss.word}"
            e.append(LegendEntry("symbol", text, symbol=ss.symbol, colour=ss.colour))
        e.append(LegendEntry("header", "Ghost poses (links base-elbow-tool)"))
        for name in ELBOWS:
            for role, words in (
                ("chosen", "chosen"),
                ("alternative", "other, also works"),
                ("blocked", "other, not usable"),
            ):
                pen = self._ghost_pen(name, role)
                pen.setWidthF(1.5)  # legend samples are tiny; a little heavier reads better
                e.append(LegendEntry("line", f"{name} elbow, {words}", pen=pen))
        if cell.fixtures:
            e.append(LegendEntry("header", "Collisions"))
            e.append(
                LegendEntry(
                    "area",
                    "colliding body (hatched)",
                    pen=cosmetic_pen(style.INK, 1.2),
                    brush=QBrush(colour(style.PALETTE["ember"], 0.9), PATTERNS["cross"]),
                )
            )
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
        shown = [k for k in OVERLAY_KEYS if self._actions[f"overlay.{k}"].isChecked()]
        if shown:
            e.append(LegendEntry("header", "Regions"))
            for k in shown:
                look = OVERLAY_LOOKS[k]
                e.append(LegendEntry("area", look.legend, pen=QPen(look.pen), brush=look.brush))
        enabled = {k for k in CLEARANCE_OVERLAYS if self._actions[f"overlay.{k}"].isChecked()}
        e += self._clearance.legend(cell, enabled)
        kinds = list(dict.fromkeys(f.kind for f in cell.fixtures))
        if kinds:
            e.append(LegendEntry("header", "Fixtures"))
            for kind in kinds:
                look = fixture_look(kind)
                pen = QPen(look.pen)
                e.append(
                    LegendEntry(
                        "area", look.legend, pen=pen, brush=look.brush, under=look.base_brush
                    )
                )
        self.legend.set_entries(e)

    # ---------------------------------------------------------- interaction

    def _px(self) -> float:
        """World units per screen pixel."""
        w, h = self.vb.viewPixelSize()
        return float(max(abs(w), abs(h))) or 1.0

    def _snap_enabled(self, modifiers) -> bool:
        suspend = modifiers & (
            Qt.KeyboardModifier.AltModifier | Qt.KeyboardModifier.ControlModifier
        )
        return self._actions["snap.enabled"].isChecked() and not bool(suspend)

    def _snap(self, x: float, y: float, modifiers, exclude: str | None = None) -> SnapResult:
        enabled = self._snap_enabled(modifiers)
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

    def _hide_snap(self) -> None:
        if self._snap_marker.isVisible():
            self._snap_marker.setData([])
            self._snap_marker.setVisible(False)

    def _handles(self) -> dict[str, tuple[float, float]]:
        return {aid: item.handle_point() for aid, item in self._arm_items.items()}

    def _pick(self, x: float, y: float) -> Hit | None:
        cell = self.document.cell
        radii = {a.id: self._base_radius(a) for a in cell.arms}
        return pick(cell, x, y, PICK_PX * self._px(), handles=self._handles(), base_radii=radii)

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
        """Keys the canvas takes over from window shortcuts: Esc, and Enter/Backspace while drawing.

        Delete is left to a window shortcut when there is one (the window's Delete
        also knows about arms); without one, the canvas deletes the selection.
        """
        k = ev.key()
        if k == Qt.Key.Key_Escape:
            return True
        if k in (Qt.Key.Key_Return, Qt.Key.Key_Enter, Qt.Key.Key_Backspace):
            return bool(self._poly)
        return False

    def _on_key(self, ev) -> bool:
        k = ev.key()
        if k == Qt.Key.Key_Escape:
            self.cancel()
        elif k in (Qt.Key.Key_Return, Qt.Key.Key_Enter):
            self._finish_polygon()
        elif k == Qt.Key.Key_Backspace and self._poly:
            self._poly.pop()
            self._update_tool_item(None)
        elif k in (Qt.Key.Key_Delete, Qt.Key.Key_Backspace):
            self.delete_selection()
        return True

    def _on_press(self, ev) -> bool:
        self.plot.setFocus(Qt.FocusReason.MouseFocusReason)
        pos = ev.position()
        x, y = self.viewport_to_world(pos)
        if ev.button() == Qt.MouseButton.RightButton:
            self._right_press = QPointF(pos)
            return False
        if ev.button() != Qt.MouseButton.LeftButton:
            return False
        tool = self._tool()
        mods = ev.modifiers()
        if tool == "select":
            hit = self._pick(x, y)
            if hit is None:
                self._empty_press = QPointF(pos)
                return False  # pan the view
            self._select_hit(hit, mods)
            self._begin_drag(hit, x, y, pos, mods)
            return True
        s = self._snap(x, y, mods)
        if tool == "polygon":
            self._poly.append((s.x, s.y))
            self._update_tool_item((s.x, s.y))
        elif tool == "rectangle":
            self._rect_start = (s.x, s.y)
            self._drag = _Drag("rect", "", -1, (s.x, s.y), QPointF(pos), self.document.cell)
        elif tool == "measure":
            if len(self._measure) != 1 or self._measure_fixed:
                self._measure = [(s.x, s.y)]
                self._measure_fixed = False
            else:
                self._measure = [self._measure[0], (s.x, s.y)]
                self._measure_fixed = True
            self._update_measure()
        elif tool == "add_target":
            self._add_target(s.x, s.y)
        return True

    def _select_hit(self, hit: Hit, mods) -> None:
        sel = self.document.selection
        iid = hit.id
        if mods & (Qt.KeyboardModifier.ControlModifier | Qt.KeyboardModifier.MetaModifier):
            ids = list(sel.ids)
            if iid in ids:
                ids.remove(iid)
            else:
                ids.append(iid)
            sel.set(ids)
        elif iid not in sel.ids:
            sel.set((iid,))

    def _begin_drag(self, hit: Hit, x: float, y: float, pos: QPointF, mods) -> None:
        cell = self.document.cell
        kind = hit.kind
        if kind == "base" and mods & Qt.KeyboardModifier.ShiftModifier:
            kind = "rotate"
        d = _Drag(kind, hit.id, hit.index, (x, y), QPointF(pos), cell)
        if kind in ("base", "rotate", "handle"):
            arm = cell.arm(hit.id)
            d.ref = (arm.x, arm.y)
            if kind == "rotate" and math.hypot(x - arm.x, y - arm.y) >= ROTATE_MIN_PX * self._px():
                d.a0 = math.degrees(math.atan2(y - arm.y, x - arm.x))
            d.label = f"Move base of {arm.name}" if kind == "base" else f"Rotate {arm.name}"
        elif kind == "target":
            t = next(t for t in cell.targets if t.id == hit.id)
            d.ref = (t.x, t.y)
            d.label = f"Move target {t.name}"
        elif kind == "vertex":
            f = next(f for f in cell.fixtures if f.id == hit.id)
            d.ref = tuple(f.outline[hit.index])
            d.label = f"Move vertex of {f.name}"
        elif kind == "fixture":
            f = next(f for f in cell.fixtures if f.id == hit.id)
            xy = np.asarray(f.outline, dtype=float)
            i = int(np.argmin(np.hypot(xy[:, 0] - x, xy[:, 1] - y)))
            d.ref = (float(xy[i, 0]), float(xy[i, 1]))  # nearest vertex snaps
            d.label = f"Move fixture {f.name}"
        self._drag = d

    def _on_move(self, ev) -> bool:
        pos = ev.position()
        x, y = self.viewport_to_world(pos)
        self.cursor_moved.emit(x, y)
        if self._swallow_until_release:
            return True
        d = self._drag
        mods = ev.modifiers()
        if d is not None:
            if not d.active:
                if (pos - d.press_px).manhattanLength() < DRAG_PX:
                    return True
                d.active = True
            if d.kind == "rect":
                s = self._snap(x, y, mods)
                self._update_tool_item((s.x, s.y))
            else:
                self._drag_step(d, x, y, mods)
            return True
        tool = self._tool()
        if tool in ("polygon", "measure", "rectangle", "add_target"):
            s = self._snap(x, y, mods)
            if tool == "polygon" and self._poly:
                self._update_tool_item((s.x, s.y))
            elif tool == "measure" and len(self._measure) == 1 and not self._measure_fixed:
                self._update_measure((s.x, s.y))
        if not (ev.buttons() & Qt.MouseButton.LeftButton):
            self._update_hover(x, y)
        return False

    def _drag_step(self, d: _Drag, x: float, y: float, mods) -> None:
        cell0 = d.cell0
        dx, dy = x - d.start[0], y - d.start[1]
        new: Cell | None = None
        msg = ""
        if d.kind in ("rotate", "handle"):
            ax, ay = d.ref
            if math.hypot(x - ax, y - ay) < ROTATE_MIN_PX * self._px():
                return  # too near the base for a direction to mean anything
            ang = math.degrees(math.atan2(y - ay, x - ax))
            if d.kind == "rotate":
                if d.a0 is None:
                    # Pressed on the pivot itself: the turn starts from here, not with a jump.
                    d.a0 = ang
                ang = cell0.arm(d.id).heading_deg + (ang - d.a0)
            h = snap_angle(ang, enabled=self._snap_enabled(mods), step=ANGLE_STEP)
            key = ("h", h)
            if key != d.last:
                new = edits.set_heading(cell0, d.id, h)
                msg = f"{cell0.arm(d.id).name}: heading {h:.1f}°"
            d.last = key
        else:
            exclude = d.id if d.kind in ("vertex", "fixture") else None
            s = self._snap(d.ref[0] + dx, d.ref[1] + dy, mods, exclude)
            key = (s.x, s.y)
            if key == d.last:
                return
            d.last = key
            where = f"({self._fmt(s.x)}, {self._fmt(s.y)})"
            if d.kind == "base":
                new = edits.move_base(cell0, d.id, s.x, s.y)
                msg = f"Base of {cell0.arm(d.id).name} at {where}"
            elif d.kind == "target":
                new = edits.move_target(cell0, d.id, s.x, s.y)
                msg = f"{d.label[len('Move ') :]} at {where}"
            elif d.kind == "vertex":
                f = next(f for f in cell0.fixtures if f.id == d.id)
                if not may_move_vertex(f.outline, d.index, (s.x, s.y)):
                    self.status_message.emit(f"{f.name}: the outline would cross itself")
                    return
                new = edits.move_vertex(cell0, d.id, d.index, s.x, s.y)
                msg = f"Vertex {d.index + 1} of {f.name} at {where}"
            elif d.kind == "fixture":
                f = next(f for f in cell0.fixtures if f.id == d.id)
                new = edits.translate_fixture(cell0, f, s.x - d.ref[0], s.y - d.ref[1])
                msg = (
                    f"{f.name} moved by ({self._fmt(s.x - d.ref[0])}, {self._fmt(s.y - d.ref[1])})"
                )
        if new is not None:
            self.document.preview(new)
            self.status_message.emit(f"{msg} — {self._reach_summary()}")

    def _reach_summary(self) -> str:
        total = sum(len(ev.target_ids) for ev in self._evals.values())
        ok = sum(int(np.count_nonzero(ev.feasible)) for ev in self._evals.values())
        return f"{ok} of {total} targets reachable"

    def _fmt(self, v: float) -> str:
        return f"{v:.2f}" if self._units == "in" else f"{v:.1f}"

    def _on_release(self, ev) -> bool:
        pos = ev.position()
        if ev.button() == Qt.MouseButton.RightButton:
            start, self._right_press = self._right_press, None
            if start is not None and (pos - start).manhattanLength() < DRAG_PX:
                x, y = self.viewport_to_world(pos)
                menu = self.context_menu_at(x, y)
                menu.popup(self.plot.viewport().mapToGlobal(pos.toPoint()))
            return False
        if ev.button() != Qt.MouseButton.LeftButton:
            return False
        if self._swallow_until_release:
            self._swallow_until_release = False
            return True
        d = self._drag
        if d is not None:
            self._drag = None
            self._hide_snap()
            if d.kind == "rect":
                x, y = self.viewport_to_world(pos)
                s = self._snap(x, y, ev.modifiers())
                self._hide_snap()
                self._finish_rectangle(d.start, (s.x, s.y), d.active)
            elif d.active:
                self.document.commit_preview(d.label)
                self._end_draft()
                self.status_message.emit(f"{d.label} — {self._reach_summary()}")
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
        """Status text of one target: name, verdict and reason, configuration and margins."""
        cell = self.document.cell
        t = next((t for t in cell.targets if t.id == target_id), None)
        if t is None:
            return ""
        try:
            ev = self._evals[t.arm]
            i = ev.index(t.id)
        except (KeyError, ValueError):
            return f"{t.name}: assigned to missing arm {t.arm!r}"
        st = Status(int(ev.status[i]))
        u = _UNITS_WORD.get(self._units, self._units)
        lines = [f"{t.name} ({ev.arm.name}) at ({self._fmt(t.x)}, {self._fmt(t.y)}) {u}"]
        lines.append(style.status_text(st))
        if st is not Status.OK:
            reason = self._reason_texts(ev)[i]
            if reason:
                lines[-1] = f"{style.status_style(st).glyph} FAIL: {reason[2:]}"
        ik = ev.ik
        for c, name in enumerate(ELBOWS):
            q = ik.q_deg[i, c]
            if not np.all(np.isfinite(q)):
                continue
            hit = ev.blocked_by(i, c) if _collides(ev)[i, c] else None
            if int(ev.chosen[i]) == c:
                mark = "chosen"
            elif hit is not None:
                body = ev.blocked_body(i, c)
                mark = f"collides with {hit.name}" + (f" ({body})" if body else "")
            else:
                mark = "ok" if bool(ik.ok[i, c]) and not _collides(ev)[i, c] else "not usable"
            gap = float(ev.clearance[i, c]) if ev.clearance.shape == ik.ok.shape else math.inf
            clear = f", clearance {self._fmt(gap)} {u}" if math.isfinite(gap) else ""
            lines.append(
                f"{name} elbow: q1 {q[0]:.1f}°, q2 {q[1]:.1f}° "
                f"(margin {float(ik.limit_margin_deg[i, c]):.1f}°{clear}) — {mark}"
            )
        lines.append(f"reach margin {float(ik.reach_margin[i]):.4g} {u}")
        return "\n".join(lines)

    # --------------------------------------------------------------- tools

    def _clear_tool_state(self) -> None:
        self._poly = []
        self._rect_start = None
        if self._drag is not None and self._drag.kind == "rect":
            self._drag = None
        self._measure = []
        self._measure_fixed = False
        self._tool_item.setPath(QPainterPath())
        self._measure_item.setPath(QPainterPath())
        self._measure_label.setVisible(False)
        self._hide_snap()

    def _update_tool_item(self, cursor: tuple[float, float] | None) -> None:
        tool = self._tool()
        path = QPainterPath()
        if tool == "polygon" and self._poly:
            pts = self._poly + ([cursor] if cursor is not None else [])
            path.moveTo(*pts[0])
            for p in pts[1:]:
                path.lineTo(*p)
            if len(pts) >= 3:
                path.lineTo(*pts[0])
        elif tool == "rectangle" and self._rect_start is not None and cursor is not None:
            path = polygon_path(rectangle_outline(self._rect_start, cursor))
        self._tool_item.setPath(path)

    def _update_measure(self, cursor: tuple[float, float] | None = None) -> None:
        pts = list(self._measure)
        if cursor is not None and len(pts) == 1:
            pts.append(cursor)
        path = QPainterPath()
        if len(pts) == 2:
            path.moveTo(*pts[0])
            path.lineTo(*pts[1])
            dist, ang = measure(pts[0], pts[1])
            u = _UNITS_WORD.get(self._units, self._units)
            text = f"{self._fmt(dist)} {u} at {ang:.1f}°"
            self._measure_label.setText(text)
            self._measure_label.setPos((pts[0][0] + pts[1][0]) / 2, (pts[0][1] + pts[1][1]) / 2)
            self._measure_label.setVisible(True)
            self.status_message.emit(f"Distance {text}")
        elif pts:
            path.addEllipse(QPointF(*pts[0]), 2 * self._px(), 2 * self._px())
            self._measure_label.setVisible(False)
        self._measure_item.setPath(path)

    def _finish_polygon(self) -> None:
        pts = list(self._poly)
        # A double-click adds its first click as a vertex; drop an exact repeat.
        while len(pts) >= 2 and pts[-1] == pts[-2]:
            pts.pop()
        problem = outline_problem(pts)
        if problem:
            self.status_message.emit(f"Cannot add the fixture: {problem}")
            return
        cell, f = edits.add_fixture(self.document.cell, pts)
        self._clear_tool_state()
        self.document.edit(f"Add fixture {f.name}", cell)
        self.document.selection.set((f.id,))

    def _finish_rectangle(self, p0, p1, moved: bool) -> None:
        self._rect_start = None
        self._tool_item.setPath(QPainterPath())
        outline = rectangle_outline(p0, p1)
        problem = outline_problem(outline) if moved else "drag to give it a size"
        if problem:
            self.status_message.emit(f"Cannot add the fixture: {problem}")
            return
        cell, f = edits.add_fixture(self.document.cell, outline)
        self.document.edit(f"Add fixture {f.name}", cell)
        self.document.selection.set((f.id,))

    def _arm_for_new_target(self, x: float, y: float) -> str | None:
        cell = self.document.cell
        if not cell.arms:
            return None
        sel = self.document.selection.ids
        for i in sel:
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
            self._select_hit(hit, Qt.KeyboardModifier.NoModifier)
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

"""The placement overlay of one arm: where its base may go, and how far the installer may miss.

Everything drawn comes from the engine (:mod:`kinematics.placement`), computed in a worker
thread (:mod:`app.placement_worker`) whenever the targets, the fixtures or the arm change:

* the **score map** as a heatmap under the layout (painted into the view's cached
  background, under the fixtures), coloured with our own colour map
  (:func:`app.placement_image.score_colours`: lightness rises steadily, so it reads in
  grey and for the common colour-vision deficiencies), grid cells where some target fails
  hatched, and a colour bar in the legend that names the score;
* the exact **placement region**'s outline (a solid line);
* the **best spot** (a star with a label);
* the **placement tolerance** about the base (a dashed circle with its value) and the
  **heading tolerance** (an arc with end ticks and its values).

The map is coarse first and refined after; a newer request cancels the older. The map
does not depend on where the base is, so a base drag never waits for it: while the base is
dragged the tolerance and the "all targets feasible" state follow every step
(:func:`kinematics.placement.live_state` without its heading part, a guaranteed lower
bound of the tolerance), and the exact tolerances are computed again once the steps pause.
Nothing is told by colour alone: every mark has a shape, a line style and words.
"""

from __future__ import annotations

import math
import sys
from dataclasses import replace

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QObject, QPointF, QRectF, Qt, Signal
from PySide6.QtGui import (
    QBrush,
    QColor,
    QFont,
    QImage,
    QLinearGradient,
    QPainter,
    QPainterPath,
    QTransform,
)
from PySide6.QtWidgets import QGraphicsItem, QGraphicsPathItem

from app import style
from app.placement_image import SCORE_ANCHORS, score_colours
from app.placement_worker import BackgroundRunner, PlacementUpdate, placement_updates, pose_updates
from kinematics.cell import Arm, Cell
from kinematics.layout_keys import score_weights
from kinematics.placement import (
    BestPosition,
    LiveState,
    PlacementProblem,
    PlacementRegion,
    ScoreMap,
    Tolerance,
    live_state,
    move_base,
    placement_problem,
)
from kinematics.rings import rings_from_arrays
from kinematics.wording import count_text, length

from ..legend import LegendEntry
from ..paths import rings_path
from ..qtstyle import cosmetic_pen
from . import Frame, Host, Z

__all__ = [
    "HEAT_ALPHA",
    "BEST_SYMBOL",
    "map_key",
    "heat_colours",
    "score_ticks",
    "PlacementLayer",
]

#: Opacity of the heatmap over the paper (the plan grid shows faintly through).
HEAT_ALPHA = 0.82
#: Marker of the best spot (pyqtgraph symbol).
BEST_SYMBOL = "star"
#: Radius of the heading tolerance arc, as a fraction of link 1 (beyond the heading arrow).
ARC_FRACTION = 0.62


def map_key(cell: Cell, arm: Arm) -> tuple:
    """Everything an arm's score map and region depend on: not where the base is, nor the
    score weights (a map is rescored for those)."""
    extra = {k: v for k, v in cell.extra.items() if k not in ("placement_weights", "variants")}
    return (
        replace(arm, x=0.0, y=0.0),
        cell.targets_of(arm.id),
        cell.fixtures,
        cell.units,
        repr(sorted(extra.items())),
    )


def heat_colours(smap: ScoreMap) -> tuple[np.ndarray, np.ndarray, float, float]:
    """The heatmap's colours: (rgb (ny, nx, 3) uint8, computed (ny, nx) bool, lo, hi).

    Scores run from ``lo`` (darkest) to ``hi`` (palest), the map's own range, as in the
    ``place --png`` picture.
    """
    s = smap.score
    fin = np.isfinite(s)
    lo = float(np.nanmin(s)) if fin.any() else 0.0
    hi = float(np.nanmax(s)) if fin.any() else 1.0
    span = hi - lo if hi > lo else 1.0
    rgb = score_colours(np.where(fin, (s - lo) / span, 0.0)).reshape(s.shape + (3,))
    return rgb, fin, lo, hi


def _heat_image(rgb: np.ndarray, fin: np.ndarray) -> QImage:
    """ARGB image of the map, row j = y[j] (drawn into a world rectangle, y up)."""
    ny, nx = fin.shape
    px = np.zeros((ny, nx, 4), dtype=np.uint8)  # B, G, R, A in memory
    px[..., 0], px[..., 1], px[..., 2] = rgb[..., 2], rgb[..., 1], rgb[..., 0]
    px[..., 3] = np.where(fin, int(round(255 * HEAT_ALPHA)), 0)
    px = np.ascontiguousarray(px)
    return QImage(px.data, nx, ny, 4 * nx, QImage.Format.Format_ARGB32).copy()


def _short_path(smap: ScoreMap) -> QPainterPath:
    """World rectangles of the grid cells where some target fails (runs along each row)."""
    path = QPainterPath()
    short = np.isfinite(smap.score) & (smap.feasible < smap.targets)
    h = 0.5 * smap.pitch
    for j in np.flatnonzero(short.any(axis=1)):
        row = short[j].astype(np.int8)
        edges = np.flatnonzero(np.diff(np.concatenate([[0], row, [0]])))
        for a, b in zip(edges[::2], edges[1::2]):
            x0, x1 = smap.x[a] - h, smap.x[b - 1] + h
            path.addRect(QRectF(x0, smap.y[j] - h, x1 - x0, 2 * h))
    return path


def score_ticks(lo: float, hi: float, most: int = 8) -> list[tuple[float, str]]:
    """(fraction of the colour bar, label) at each whole number of targets feasible.

    Examples
    --------
    >>> [(round(t, 3), k) for t, k in score_ticks(0.0, 6.0, most=4)]
    [(0.0, '0'), (0.333, '2'), (0.667, '4'), (1.0, '6')]
    """
    span = hi - lo if hi > lo else 1.0
    ks = list(range(math.ceil(lo), math.floor(hi) + 1))
    if len(ks) > most:
        ks = ks[:: math.ceil(len(ks) / most)]
    return [((k - lo) / span, f"{k}") for k in ks]


def _circle_path(x: float, y: float, r: float) -> QPainterPath:
    path = QPainterPath()
    path.addEllipse(QPointF(x, y), r, r)
    return path


def _arc_path(x: float, y: float, r: float, a0: float, a1: float, tick: float) -> QPainterPath:
    """An arc about (x, y) from angle a0 to a1 (degrees, world, counter-clockwise) with a
    radial tick at each end."""
    t = np.radians(np.linspace(a0, a1, max(2, int(abs(a1 - a0) / 2) + 2)))
    pts = np.stack([x + r * np.cos(t), y + r * np.sin(t)], axis=1)
    path = pg.arrayToQPath(pts[:, 0], pts[:, 1], connect="all")
    if abs(a1 - a0) < 359.99:
        for a in (t[0], t[-1]):
            c, s = math.cos(a), math.sin(a)
            path.moveTo(x + (r - tick) * c, y + (r - tick) * s)
            path.lineTo(x + (r + tick) * c, y + (r + tick) * s)
    return path


def _label(anchor: tuple[float, float], width: float = 0.0) -> pg.TextItem:
    halo = QColor(style.PAPER)
    halo.setAlphaF(0.88)
    item = pg.TextItem("", color=style.INK, anchor=anchor, fill=pg.mkBrush(halo))
    font = QFont()
    font.setPointSizeF(8.5)
    item.setFont(font)
    if width > 0:
        item.setTextWidth(width)  # long labels wrap (pixels): a narrow view still holds them
    item.setVisible(False)
    return item


class PlacementLayer(QObject):
    """The placement overlay of one arm (see the module docstring).

    Signals
    -------
    progress(str, float)
        What the worker is doing ("" when idle) and the fraction of the refined map done.
    changed()
        The best spot or the tolerances became known or out of date.
    message(str)
        A one-line message for the status bar (a map the engine cannot make).
    """

    progress = Signal(str, float)
    changed = Signal()
    message = Signal(str)

    def __init__(self, host: Host, view, vb: pg.ViewBox) -> None:
        super().__init__()
        self._host = host
        self._view = view
        self._vb = vb
        self.enabled = False
        self.arm_id: str | None = None
        self.runner = BackgroundRunner(view)
        self.runner.value.connect(self._on_update)
        self.runner.finished.connect(self._on_finished)
        self.runner.failed.connect(self._on_failed)
        # State of the last request and what it delivered.
        self._key: tuple | None = None
        self._pending = False  # the map's inputs changed: a new map is due
        self._stale = False  # the map shown belongs to an earlier state
        self.problem: PlacementProblem | None = None
        self.region: PlacementRegion | None = None
        self.map: ScoreMap | None = None
        self.best: BestPosition | None = None
        self.tolerance: Tolerance | None = None
        self.heading_tolerance: tuple[float, float] | None = None
        self.live: LiveState | None = None
        self.live_steps = 0
        self._pose: tuple[float, float] | None = None
        self._weights = None
        self._arm: Arm | None = None
        self._units = "mm"
        self._note = ""
        # The heatmap (background) and the items above the layout.
        self.heat_image: QImage | None = None
        self.heat_scores: np.ndarray | None = None
        self._heat_extent: tuple[float, float, float, float] | None = None
        self._short = QPainterPath()
        self._shape = (0, 0)
        view.background_painters.insert(0, self.paint_background)
        self.outline = QGraphicsPathItem()
        self.outline.setPen(cosmetic_pen(style.INK, 2.0))
        self.outline.setData(0, "placement.region")
        self.tolerance_item = QGraphicsPathItem()
        self._exact_pen = cosmetic_pen(style.INK, 2.0, "dash")
        self._live_pen = cosmetic_pen(style.INK, 1.5, "dashdot")
        self.tolerance_item.setPen(self._exact_pen)
        self.tolerance_item.setData(0, "placement.tolerance")
        self.arc_item = QGraphicsPathItem()
        self.arc_item.setPen(cosmetic_pen(style.PALETTE["harbour"], 2.5))
        self.arc_item.setData(0, "placement.heading")
        self.best_item = pg.ScatterPlotItem(
            size=22, symbol=BEST_SYMBOL, pen=pg.mkPen(style.INK, width=1.5),
            brush=pg.mkBrush(style.PAPER), pxMode=True,
        )  # fmt: skip
        QGraphicsItem.setData(self.best_item, 0, "placement.best")  # its own setData plots
        self.best_label = _label((-0.08, 1.15), 215.0)
        self.tolerance_label = _label((0.0, 0.0), 200.0)
        self.arc_label = _label((0.5, 1.0))
        self._outline_of: PlacementRegion | None = None
        self._count = (0, 0)
        self._targets: tuple = ()
        for item, z in (
            (self.outline, Z["overlay"] + 0.8),
            (self.tolerance_item, Z["overlay"] + 0.9),
            (self.arc_item, Z["overlay"] + 0.9),
            (self.best_item, Z["mark"]),
            (self.best_label, Z["label"]),
            (self.tolerance_label, Z["label"]),
            (self.arc_label, Z["label"]),
        ):
            item.setVisible(False)
            host.add(item, z)
        self.scale: tuple[float, float] = (0.0, 1.0)  # the colour bar's score range
        self.status = ""  # what the map shown is: coarse, refining, complete, out of date

    # ---------------------------------------------------------------- public API

    def set_enabled(self, on: bool) -> None:
        """Show or hide the overlay (hidden, nothing is computed)."""
        if on == self.enabled:
            return
        self.enabled = on
        if not on:
            self.runner.cancel()
            self._key = None
            self._pending = False
            self._forget()
            self._hide()
            self.progress.emit("", 0.0)
            self.changed.emit()

    def set_arm(self, arm_id: str | None) -> None:
        """Show the overlay of this arm (the selected one)."""
        if arm_id != self.arm_id:
            self.arm_id = arm_id
            self._key = None  # a new map is due at the next update

    @property
    def busy(self) -> bool:
        """True while the worker computes for the current state."""
        return self.runner.busy

    def best_ready(self) -> bool:
        """True when the best spot of the current state is known (the refined map's)."""
        return self.enabled and self.best is not None and not self._pending and not self._stale

    def best_cell(self, cell: Cell) -> Cell | None:
        """The cell with the overlay's arm moved to the best spot (None when not known)."""
        if not self.best_ready() or self._arm is None:
            return None
        b = self.best
        return move_base(cell, self._arm.id, b.x, b.y, b.heading_deg)

    def best_arm_name(self) -> str:
        """Name of the arm the overlay shows."""
        return self._arm.name if self._arm is not None else ""

    def cancel(self) -> None:
        """Stop the computation in progress (the map drawn so far stays)."""
        if self.runner.busy:
            self.runner.cancel()
            self.progress.emit("", 0.0)
            self._set_status("stopped; the next change starts it again")

    def shutdown(self) -> None:
        """Stop the worker and wait for it (the window is closing)."""
        self.runner.shutdown()

    def legend_key(self) -> tuple:
        """What the overlay's legend rows depend on."""
        blockers = None if self.region is None else self.region.blocking_targets
        return (self.enabled, None if self._arm is None else self._arm.name, self.scale,
                self.status, blockers)  # fmt: skip

    def legend(self, frame: Frame) -> list[LegendEntry]:
        """Legend rows: the colour bar that names the score, then every mark of the overlay."""
        if not self.enabled or self._arm is None:
            return []
        grad = QLinearGradient(0.0, 0.0, 1.0, 0.0)
        grad.setCoordinateMode(QLinearGradient.CoordinateMode.ObjectBoundingMode)
        stops = np.linspace(0.0, 1.0, 4 * (len(SCORE_ANCHORS) - 1) + 1)
        for t, (r, g, b) in zip(stops, score_colours(stops)):
            grad.setColorAt(float(t), QColor(int(r), int(g), int(b)))
        hatch = QBrush(QColor(0, 0, 0, 130), Qt.BrushStyle.BDiagPattern)
        lo, hi = self.scale
        out = [LegendEntry("header", f"Placement of {self._arm.name}")]
        if self.map is not None:
            out.append(
                LegendEntry(
                    "scale", "score = targets feasible + quality (0 to 1)",
                    brush=QBrush(grad), ticks=tuple(score_ticks(lo, hi)),
                )  # fmt: skip
            )
        out += [
            LegendEntry("area", "hatched: some target fails", brush=hatch,
                        under=QBrush(QColor(style.PAPER))),  # fmt: skip
            LegendEntry("line", "placement region outline", pen=cosmetic_pen(style.INK, 2.0)),
            LegendEntry("symbol", "best spot (star)", symbol=BEST_SYMBOL, colour=style.PAPER),
            LegendEntry("line", "placement tolerance (dashed)",
                        pen=cosmetic_pen(style.INK, 2.0, "dash")),  # fmt: skip
            LegendEntry("line", "heading tolerance (arc)",
                        pen=cosmetic_pen(style.PALETTE["harbour"], 2.5)),  # fmt: skip
        ]
        reg = self.region
        if reg is not None and reg.empty and reg.bounded:
            out.append(LegendEntry("line", "no base reaches every target"))
            if reg.blocking_targets:
                names = {t.id: t.name for t in frame.cell.targets}
                gone = ", ".join(names.get(t, t) for t in reg.blocking_targets)
                out.append(LegendEntry("line", f"without {gone} it opens"))
        if self.status:
            out.append(LegendEntry("line", f"map: {self.status}"))
        return out

    def _set_status(self, text: str) -> None:
        if text != self.status:
            self.status = text
            self.changed.emit()

    # ---------------------------------------------------------------- frames

    def update(self, frame: Frame) -> None:
        if not self.enabled:
            return
        cell = frame.cell
        self._units = cell.units
        arm = self._pick_arm(cell)
        self._arm = arm
        if arm is None or not cell.targets_of(arm.id):
            self.runner.cancel()
            self._key = None
            self._forget()
            self._hide()
            self._note = (
                "no arm to place" if arm is None else f"{arm.name} has no targets to place it for"
            )
            self._set_status(self._note)
            self.changed.emit()
            return
        self._targets = cell.targets_of(arm.id)
        ev = frame.evaluation.arms.get(arm.id)
        if ev is not None:
            self._count = (int(np.count_nonzero(ev.feasible)), len(ev.target_ids))
        key = map_key(cell, arm)
        if key != self._key:
            self._key = key
            self._pending = True
            self._stale = self.map is not None
            self.runner.cancel()
            self.live = None
            self.changed.emit()
        pose = (float(arm.x), float(arm.y))
        try:
            weights = score_weights(cell)
        except ValueError as exc:
            self.message.emit(f"Placement map: {exc}")
            return
        if self._pending:
            if not frame.draft:
                self._request_map(cell, arm)
        elif pose != self._pose or weights != self._weights:
            if frame.draft and weights == self._weights:
                self._live_step(cell, arm)
            else:
                self._request_pose(cell, arm, weights)
        self._draw()

    def _pick_arm(self, cell: Cell) -> Arm | None:
        if not cell.arms:
            return None
        for a in cell.arms:
            if a.id == self.arm_id:
                return a
        return cell.arms[0]

    # ---------------------------------------------------------------- requests

    def _request_map(self, cell: Cell, arm: Arm) -> None:
        try:
            problem = placement_problem(cell, arm.id)
        except (KeyError, ValueError) as exc:
            self._pending = False
            self.message.emit(f"No placement map for {arm.name}: {exc}")
            return
        self._pending = False
        self.problem = problem
        self._pose = (float(arm.x), float(arm.y))
        self._weights = problem.weights
        self.best = None
        self.tolerance = None
        self.heading_tolerance = None
        self.live = None
        self.runner.submit(lambda: placement_updates(problem))
        self._set_status("computing the coarse map…")
        self.progress.emit("placement map: coarse", 0.0)
        self.changed.emit()

    def _request_pose(self, cell: Cell, arm: Arm, weights) -> None:
        assert self.problem is not None
        problem = replace(self.problem, cell=cell, arm=arm, weights=weights)
        if weights != self._weights and self.map is not None:
            self._set_map(self.map.rescored(weights))
        self.problem = problem
        self._pose = (float(arm.x), float(arm.y))
        self._weights = weights
        self.live = None
        if self.region is None or self.map is None or not self.map.complete:
            self._request_map(cell, arm)  # the map is not finished: start it over here
            return
        self.best = None
        self.tolerance = None
        self.heading_tolerance = None
        region, smap = self.region, self.map
        self.runner.submit(lambda: pose_updates(problem, region, smap))
        self.progress.emit("placement: tolerances", 1.0)
        self.changed.emit()

    def _live_step(self, cell: Cell, arm: Arm) -> None:
        """A base drag step: the cheap state (no heading part), never waiting for the worker."""
        if self.problem is None or self.region is None:
            return
        if self.runner.busy and self.map is not None and self.map.complete:
            self.runner.cancel()  # tolerances of the old base: no longer wanted
            self.progress.emit("", 0.0)
        problem = replace(self.problem, cell=cell, arm=arm)
        self.problem = problem
        self.live = live_state(problem, arm.x, arm.y, region=self.region, with_heading=False)
        self.live_steps += 1
        self.tolerance = None
        self.heading_tolerance = None
        self.best = None
        self.changed.emit()

    # ---------------------------------------------------------------- results

    def _on_update(self, _job: int, u: PlacementUpdate) -> None:
        if u.stage == "region":
            self.region = u.region
        elif u.stage in ("coarse", "refined"):
            self._stale = False
            self._set_map(u.map)
            self._set_status(
                "coarse; refining…" if u.stage == "coarse" else f"complete, pitch {u.map.pitch:g}"
            )
            self.progress.emit(
                "placement map: refining" if u.stage == "coarse" else "placement: best spot",
                u.done,
            )
        elif u.stage == "refining":
            self.progress.emit("placement map: refining", u.done)
            self._set_status(f"coarse; refining… {100 * u.done:.0f} %")
        elif u.stage == "tolerance":
            self.tolerance = u.tolerance
            self.heading_tolerance = u.heading_tolerance
            self.live = None
        elif u.stage == "best":
            self.best = u.best
        self._draw()
        self.changed.emit()

    def _on_finished(self, _job: int) -> None:
        self.progress.emit("", 1.0)

    def _on_failed(self, _job: int, exc: object) -> None:
        self.progress.emit("", 0.0)
        if isinstance(exc, ValueError):  # data the engine cannot place (a message, not a bug)
            name = self._arm.name if self._arm is not None else "the arm"
            self.message.emit(f"No placement map for {name}: {exc}")
            return
        assert isinstance(exc, BaseException)
        sys.excepthook(type(exc), exc, exc.__traceback__)

    def _set_map(self, smap: ScoreMap | None) -> None:
        self.map = smap
        if smap is None:
            self.heat_image = None
            self.heat_scores = None
            self._heat_extent = None
            self._short = QPainterPath()
        else:
            rgb, fin, lo, hi = heat_colours(smap)
            self.heat_image = _heat_image(rgb, fin)
            self.heat_scores = smap.score
            self._heat_extent = smap.extent
            self._shape = smap.shape
            self._short = _short_path(smap)
            self.scale = (lo, hi)
        self._view.refresh_background()

    def _forget(self) -> None:
        self.problem = None
        self.region = None
        self.best = None
        self.tolerance = None
        self.heading_tolerance = None
        self.live = None
        self._stale = False
        self._pose = None
        self._set_map(None)

    # ---------------------------------------------------------------- drawing

    def paint_background(self, painter: QPainter, to_scene: QTransform) -> None:
        """The heatmap and its hatching, under the fixtures (the view's background)."""
        if not self.enabled or self.heat_image is None or self._heat_extent is None:
            return
        x0, y0, x1, y1 = self._heat_extent
        ny, nx = self._shape
        cw, ch = (x1 - x0) / nx, (y1 - y0) / ny
        # Only the visible cells: a whole image blown up to a deep zoom would be huge.
        (vx0, vx1), (vy0, vy1) = self._vb.viewRange()
        i0, i1 = max(0, math.floor((vx0 - x0) / cw)), min(nx, math.ceil((vx1 - x0) / cw))
        j0, j1 = max(0, math.floor((vy0 - y0) / ch)), min(ny, math.ceil((vy1 - y0) / ch))
        if i1 <= i0 or j1 <= j0:
            return
        painter.save()
        painter.setTransform(to_scene, True)
        painter.setRenderHint(QPainter.RenderHint.SmoothPixmapTransform, False)
        if self._stale:
            painter.setOpacity(0.35)
        target = QRectF(x0 + i0 * cw, y0 + j0 * ch, (i1 - i0) * cw, (j1 - j0) * ch)
        painter.drawImage(target, self.heat_image, QRectF(i0, j0, i1 - i0, j1 - j0))
        device = painter.transform()
        painter.restore()
        if not self._short.isEmpty():
            # Hatching in screen pixels, whatever the zoom.
            painter.save()
            painter.resetTransform()
            painter.setRenderHint(QPainter.RenderHint.Antialiasing, False)
            if self._stale:
                painter.setOpacity(0.35)
            painter.fillPath(
                device.map(self._short), QBrush(QColor(0, 0, 0, 120), Qt.BrushStyle.BDiagPattern)
            )
            painter.restore()

    def _side(self, x: float, goes_right, goes_left, label=None, width_px: float = 215.0):
        """``goes_right`` when a label of ``width_px`` fits right of x in the view, or has
        more room there than on the left; else ``goes_left``. A ``label`` given is narrowed
        to the room on its side (its text wraps)."""
        (x0, x1), _ = self._vb.viewRange()
        px = self._vb.viewPixelSize()[0] if self._vb.width() > 0 else 0.0
        if not px > 0:
            return goes_right
        right, left = (x1 - x) / px, (x - x0) / px
        to_right = right >= width_px or right >= left
        if label is not None:
            room = (right if to_right else left) - 14.0
            label.setTextWidth(max(120.0, min(width_px, room)))
        return goes_right if to_right else goes_left

    def _hide(self) -> None:
        for item in (
            self.outline, self.tolerance_item, self.arc_item, self.best_item, self.best_label,
            self.tolerance_label, self.arc_label,
        ):  # fmt: skip
            item.setVisible(False)
        self._view.refresh_background()

    def _draw(self) -> None:
        arm = self._arm
        if not self.enabled or arm is None:
            self._hide()
            return
        u = self._units
        fresh = not self._stale and not self._pending
        # The exact region's outline.
        if self.region is not None and fresh:
            if self._outline_of is not self.region:
                self._outline_of = self.region
                self.outline.setPath(rings_path(rings_from_arrays(self.region.rings)))
            self.outline.setVisible(not self.region.empty)
        else:
            self.outline.setVisible(False)
        if self._pending or self._stale:
            self._set_status("out of date; updated once the changes pause")
        # The best spot.
        b = self.best
        if b is not None and fresh:
            self.best_item.setData([b.x], [b.y])
            self.best_item.setVisible(True)
            text = (
                f"best spot ({length(b.x, u, unit=False)}, {length(b.y, u)})\n"
                f"score {b.score:.2f}, {count_text(b.feasible_targets, b.targets)}"
            )
            reg = self.region
            if reg is not None and reg.empty and reg.bounded:
                text += f"\nno base reaches all {b.targets} targets"
                if reg.blocking_targets:
                    names = {t.id: t.name for t in self._targets}
                    gone = ", ".join(names.get(t, t) for t in reg.blocking_targets)
                    text += f";\nwithout {gone} some base would"
            self.best_label.setText(text)
            self.best_label.setPos(b.x, b.y)
            self.best_label.setAnchor(
                self._side(b.x, (-0.08, 1.15), (1.08, 1.15), self.best_label)
            )
            self.best_label.setVisible(True)
        else:
            self.best_item.setVisible(False)
            self.best_label.setVisible(False)
        self._draw_tolerances(arm, fresh)

    def _draw_tolerances(self, arm: Arm, fresh: bool) -> None:
        u = self._units
        x, y = float(arm.x), float(arm.y)
        radius, text = None, ""
        live = self.live
        pen = self._exact_pen
        if live is not None:
            state = count_text(live.feasible_targets, live.targets)
            if live.all_feasible and live.region_distance > 0:
                # While moving: the exact distance to the region (reach, limits, base body),
                # which the tolerance cannot exceed, and a guaranteed lower bound.
                radius = live.region_distance
                pen = self._live_pen
                text = (
                    f"tolerance ≤ {length(radius, u)} while moving\n"
                    f"(≥ {length(live.tolerance_at_least, u)} guaranteed); {state}"
                )
            else:
                text = f"no tolerance here ({state})"
        elif self.tolerance is not None and fresh:
            tol = self.tolerance
            if tol.radius is not None:
                radius = tol.radius
                text = f"placement tolerance\n{length(radius, u)} ({count_text(*self._count)})"
            elif tol.limited_by == "infeasible":
                bad = self._count[1] - self._count[0]
                text = f"no tolerance here ({bad} {'target fails' if bad == 1 else 'fail'})"
        if radius is not None and radius > 0:
            self.tolerance_item.setPen(pen)
            self.tolerance_item.setPath(_circle_path(x, y, radius))
            self.tolerance_item.setVisible(True)
            c = math.sqrt(0.5)
            right = self._side(x, True, False)
            self.tolerance_label.setPos(x + (c if right else -c) * radius, y - radius * c)
            self.tolerance_label.setAnchor((0.0, 0.0) if right else (1.0, 0.0))
        else:
            self.tolerance_item.setPath(QPainterPath())
            self.tolerance_item.setVisible(False)
            self.tolerance_label.setPos(x, y)
        self.tolerance_label.setText(text)
        self.tolerance_label.setVisible(bool(text))
        ht = self.heading_tolerance if live is None and fresh else None
        if ht is not None:
            minus, plus = ht
            r = ARC_FRACTION * arm.a1
            h = float(arm.heading_deg)
            self.arc_item.setPath(_arc_path(x, y, r, h - minus, h + plus, 0.06 * arm.a1))
            self.arc_item.setVisible(True)
            self.arc_label.setText(f"heading tolerance\n−{minus:.2f}° / +{plus:.2f}°")
            a = math.radians(h)
            self.arc_label.setPos(x + 1.08 * r * math.cos(a), y + 1.08 * r * math.sin(a))
            self.arc_label.setVisible(True)
        else:
            self.arc_item.setVisible(False)
            self.arc_label.setVisible(False)

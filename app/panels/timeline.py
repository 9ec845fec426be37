"""The timeline: the arms' cycles over time, played, paused and scrubbed.

On the left, the controls (play / pause, a scrub slider, the time readout, the playback
speed, a jump to the first contact between arms) and the cycle times in words: per
sequence its cycle time, parts per minute, the best time with one configuration
throughout and the targets that force a change, its slowest move; then how close the
arms come and which shared zones they occupy at the same time (:mod:`kinematics.wording`).

On the right, plots sharing one time axis (seconds from the start of the run, each arm at
its own ``start_s``, over the horizon the arms were checked over):

* lanes: per sequence its dwells and moves as bars (the slowest move outlined thick and
  labelled), per shared zone one lane per arm with the times it is inside, and where
  the two arms are inside at once a cross-hatched overlap bar across both lanes;
* for the sequence chosen in the list: q1 and q2 (q1 solid, q2 dashed) with the joint
  limits (q1 dash-dot, q2 dotted, labelled), and the joint speeds with the speed limits.

The current time is a cursor line in every plot; dragging it (or clicking a plot, or the
slider) scrubs. Everything comes from the document's playback clock
(:mod:`app.playback`), whose run is taken only on load and when the changes pause;
while a drag steps the timeline says it is out of date.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QFontMetricsF, QPainter, QPen
from PySide6.QtWidgets import (
    QComboBox,
    QDockWidget,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QScrollArea,
    QSizePolicy,
    QSlider,
    QVBoxLayout,
    QWidget,
)

from app import style
from app.bind import EchoGuard
from app.canvas.qtstyle import PATTERNS, colour, cosmetic_pen
from app.document import Document
from app.playback import RATES, playback_clock
from kinematics.playback import (
    interval_overlaps,
    sample_times,
    segment_spans,
    sequence_runs,
    slowest_segment,
)
from kinematics.wording import (
    arm_contact_text,
    cycle_summary,
    seconds,
    separation_text,
    slowest_text,
    zone_overlap_text,
)

__all__ = ["Bar", "LanesItem", "TimelinePanel", "BAR_LOOKS", "OUT_OF_DATE", "NO_CYCLES"]

#: Shown while the document changes step by step (the run waits for the pause).
OUT_OF_DATE = "⟳ Out of date: the cell is changing; the timeline catches up when the changes pause"
#: Shown when no sequence has a cycle time.
NO_CYCLES = "No cycle times: no sequence of an arm with joint speeds and accelerations has a plan"

_SLIDER_STEPS = 2000
_AXIS_W = 128  # left axis width (pixels), the same in every plot so the times line up
_LANE_PX = 22
_CURVE_PX = 112
_CURVES = 900  # even samples per curve (plus every segment boundary)


def _argb(hex_rgb: str, alpha: float) -> str:
    return colour(hex_rgb, alpha).name(QColor.NameFormat.HexArgb)


def _bar_looks() -> dict[str, tuple[QPen, QBrush, str]]:
    ember, amber = style.PALETTE["ember"], style.PALETTE["amber"]
    return {
        "dwell": (
            cosmetic_pen(style.PALETTE["slate"], 1.0, "dot"),
            QBrush(colour(style.PALETTE["fog"], 0.55)),
            "dwell at a target (dotted edge)",
        ),
        "move": (
            cosmetic_pen(style.INK, 1.0),
            QBrush(colour(style.PALETTE["sky"], 0.55)),
            "move between targets",
        ),
        "slowest": (
            cosmetic_pen(style.INK, 2.6),
            QBrush(colour(style.PALETTE["lemon"], 0.9), PATTERNS["dense"]),
            "slowest move of the cycle (thick edge)",
        ),
        "inside": (
            cosmetic_pen(style.PALETTE["pine"], 1.2),
            QBrush(colour(style.PALETTE["pine"], 0.45), PATTERNS["vertical"]),
            "inside the shared zone (striped)",
        ),
        "overlap": (
            cosmetic_pen(ember, 2.4, "dash"),
            QBrush(colour(ember, 0.85), PATTERNS["cross"]),
            "both arms inside at once (cross-hatched)",
        ),
        "stale": (
            cosmetic_pen(amber, 1.0, "dash"),
            QBrush(colour(amber, 0.15)),
            "",
        ),
    }


#: Pen, brush and legend words of each kind of bar.
BAR_LOOKS = _bar_looks()


@dataclass(frozen=True)
class Bar:
    """One bar on the lanes: from ``t0`` to ``t1`` (seconds), centred on lane ``y`` and
    ``height`` lanes tall, drawn in ``look`` with an optional ``label`` (or the ``short``
    one where that does not fit); ``key`` says what it shows (for tests and tooltips)."""

    t0: float
    t1: float
    y: float
    height: float
    look: str
    label: str = ""
    key: tuple = ()
    short: str = ""


class LanesItem(pg.GraphicsObject):
    """Bars on lanes, filled in screen space so hatching and labels stay crisp at any
    scale (the time axis is seconds, the lanes are rows)."""

    def __init__(self) -> None:
        super().__init__()
        self.bars: list[Bar] = []
        self._rect = QRectF()

    def set_bars(self, bars: list[Bar]) -> None:
        self.prepareGeometryChange()
        self.bars = list(bars)
        if bars:
            x0 = min(b.t0 for b in bars)
            x1 = max(b.t1 for b in bars)
            y0 = min(b.y - b.height / 2 for b in bars)
            y1 = max(b.y + b.height / 2 for b in bars)
            self._rect = QRectF(x0, y0, max(x1 - x0, 1e-9), max(y1 - y0, 1e-9))
        else:
            self._rect = QRectF()
        self.update()

    def boundingRect(self) -> QRectF:  # noqa: N802 (Qt name)
        return QRectF(self._rect)

    def paint(self, painter: QPainter, option: Any, widget: Any = None) -> None:
        tr = painter.transform()
        painter.save()
        painter.resetTransform()
        painter.setRenderHint(QPainter.RenderHint.Antialiasing, False)
        fm = QFontMetricsF(painter.font())
        for b in self.bars:
            pen, brush, _words = BAR_LOOKS[b.look]
            r = tr.mapRect(QRectF(b.t0, b.y - b.height / 2, b.t1 - b.t0, b.height))
            painter.setPen(pen)
            painter.setBrush(brush)
            painter.drawRect(r)
            text = next(
                (t for t in (b.label, b.short) if t and r.width() > fm.horizontalAdvance(t) + 6),
                "",
            )
            if text:
                painter.setPen(QColor(style.INK))
                if b.look in ("overlap", "slowest"):
                    # Hatching under text: give the words a paper ground.
                    w, h, c = fm.horizontalAdvance(text) + 6, fm.height(), r.center()
                    painter.fillRect(
                        QRectF(c.x() - w / 2, c.y() - h / 2, w, h), QColor(style.PAPER)
                    )
                painter.drawText(r, int(Qt.AlignmentFlag.AlignCenter), text)
        painter.restore()


def _plot(title: str | None) -> pg.PlotItem:
    p = pg.PlotItem()
    p.setMenuEnabled(False)
    p.hideButtons()
    p.setMouseEnabled(x=False, y=False)
    p.showGrid(x=True, y=True, alpha=0.18)
    if title is not None:
        p.setTitle(title, size="9pt", color=style.INK, justify="left")
    for name in ("left", "bottom"):
        ax = p.getAxis(name)
        ax.setPen(cosmetic_pen(style.INK, 1.0))
        ax.setTextPen(cosmetic_pen(style.INK, 1.0))
        ax.enableAutoSIPrefix(False)
    p.getAxis("left").setWidth(_AXIS_W)
    return p


class TimelinePanel(QWidget):
    """Cycle times in words, lanes of moves and zone occupancy, joint curves, playback."""

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self.clock = playback_clock(document)
        self._guard = EchoGuard()
        self._runs: tuple = ()
        self._built_for: object = None
        self._cursors: list[pg.InfiniteLine] = []
        self._curves: dict[str, pg.PlotDataItem] = {}
        self._limits: list[pg.InfiniteLine] = []
        self._curve_items: list[tuple[pg.PlotItem, Any]] = []
        self._contact_time: float | None = None
        self._shown = False
        self._dock: QDockWidget | None = None
        self.setObjectName("timeline_panel")

        # ---- left column: controls and words
        self.play_button = QPushButton("▶ Play")
        self.play_button.setObjectName("timeline_play")
        self.play_button.setToolTip("Play or pause the arms' cycles together")
        self.play_button.clicked.connect(self.clock.toggle)
        self.rate_box = QComboBox()
        self.rate_box.setObjectName("timeline_rate")
        self.rate_box.setToolTip("Playback speed (1× is real time)")
        for r in RATES:
            self.rate_box.addItem(f"{r:g}× speed", r)
        self.rate_box.setCurrentIndex(RATES.index(1.0))
        self.rate_box.currentIndexChanged.connect(
            lambda i: self.clock.set_rate(float(self.rate_box.itemData(i)))
        )
        self.contact_button = QPushButton("⊗ First contact")
        self.contact_button.setObjectName("timeline_contact")
        self.contact_button.setToolTip("Show the moment two arms first touch")
        self.contact_button.clicked.connect(self._go_to_contact)
        self.slider = QSlider(Qt.Orientation.Horizontal)
        self.slider.setObjectName("timeline_slider")
        self.slider.setRange(0, _SLIDER_STEPS)
        self.slider.setToolTip("Scrub through the run")
        self.slider.valueChanged.connect(self._on_slider)
        self.readout = QLabel()
        self.readout.setObjectName("timeline_readout")
        self.readout.setWordWrap(True)
        self.readout.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Preferred)
        self.stale_label = QLabel(OUT_OF_DATE)
        self.stale_label.setObjectName("timeline_stale")
        self.stale_label.setWordWrap(True)
        self.stale_label.setStyleSheet(
            f"QLabel {{ background: {_argb(style.PALETTE['amber'], 0.25)};"
            f" border: 1px dashed {style.PALETTE['amber']}; padding: 2px; }}"
        )
        self.stale_label.setVisible(False)
        self.summary = QLabel()
        self.summary.setObjectName("timeline_summary")
        self.summary.setWordWrap(True)
        self.summary.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.summary.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        self.summary.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Preferred)
        self.curve_box = QComboBox()
        self.curve_box.setObjectName("timeline_curves")
        self.curve_box.setToolTip("Which sequence's joint angles and speeds are plotted")
        self.curve_box.currentIndexChanged.connect(lambda _i: self._build_curves())

        buttons = QHBoxLayout()
        buttons.setContentsMargins(0, 0, 0, 0)
        buttons.addWidget(self.play_button)
        buttons.addWidget(self.rate_box)
        buttons.addWidget(self.contact_button)
        left = QVBoxLayout()
        left.setContentsMargins(4, 2, 4, 2)
        left.addLayout(buttons)
        left.addWidget(self.slider)
        left.addWidget(self.readout)
        left.addWidget(self.stale_label)
        words = QScrollArea()
        words.setWidgetResizable(True)
        words.setFrameShape(QScrollArea.Shape.NoFrame)
        words.setWidget(self.summary)
        left.addWidget(words, 1)
        curves_row = QHBoxLayout()
        curves_row.addWidget(QLabel("Joint curves of"))
        curves_row.addWidget(self.curve_box, 1)
        left.addLayout(curves_row)
        left_box = QWidget()
        left_box.setLayout(left)
        left_box.setFixedWidth(330)

        # ---- right: the plots, one time axis
        self.graphics = pg.GraphicsLayoutWidget()
        self.graphics.setObjectName("timeline_plots")
        self.graphics.setBackground(style.PAPER)
        self.graphics.ci.setContentsMargins(2, 2, 8, 2)
        self.graphics.ci.setSpacing(2)
        # No title: the lane names say what each row is.
        self.lanes_plot = _plot(None)
        self.lanes_plot.invertY(True)
        self.lanes = LanesItem()
        self.lanes_plot.addItem(self.lanes)
        self.angles_plot = _plot("Joint angles (°)")
        self.speeds_plot = _plot("Joint speeds (°/s)")
        for p in (self.angles_plot, self.speeds_plot):
            p.setXLink(self.lanes_plot)
        self.graphics.addItem(self.lanes_plot, row=0, col=0)
        self.graphics.addItem(self.angles_plot, row=1, col=0)
        self.graphics.addItem(self.speeds_plot, row=2, col=0)
        self.plots = (self.lanes_plot, self.angles_plot, self.speeds_plot)
        for p in self.plots:
            line = pg.InfiniteLine(
                0.0,
                angle=90,
                movable=True,
                pen=cosmetic_pen(style.INK, 2.0),
                hoverPen=cosmetic_pen(style.PALETTE["harbour"], 3.0),
            )
            line.setZValue(50)
            line.setToolTip("The time shown: drag to scrub")
            line.sigPositionChanged.connect(self._on_cursor)
            line.sigDragged.connect(lambda _l: self.clock.pause())
            p.addItem(line, ignoreBounds=True)
            self._cursors.append(line)
        self._contact_lines: list[pg.InfiniteLine] = []
        self.graphics.scene().sigMouseClicked.connect(self._on_click)
        self.scroll = QScrollArea()
        self.scroll.setWidgetResizable(True)
        self.scroll.setFrameShape(QScrollArea.Shape.NoFrame)
        self.scroll.setWidget(self.graphics)

        lay = QHBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(2)
        lay.addWidget(left_box, 0)
        lay.addWidget(self.scroll, 1)

        self.clock.time_changed.connect(self._show_time)
        self.clock.playing_changed.connect(self._show_playing)
        self.clock.motion_changed.connect(self.rebuild)
        self.clock.stale_changed.connect(self._show_stale)
        self.rebuild()

    # ------------------------------------------------------------------ visibility

    @property
    def shown(self) -> bool:
        """Whether the timeline is in sight (its dock open and in front, when it has one)."""
        return self._shown

    def attach_dock(self, dock: QDockWidget) -> None:
        """Follow a dock's visibility (a tab behind another one is out of sight, though
        Qt keeps its widget visible)."""
        self._dock = dock
        dock.visibilityChanged.connect(self._set_shown)
        self._set_shown(dock.isVisible() and not dock.visibleRegion().isEmpty())

    def _set_shown(self, on: bool) -> None:
        on = bool(on) and self.isVisible()
        if on == self._shown:
            return
        self._shown = on
        # Out of sight (closed, tabbed away, minimised): the timer stops, the canvas
        # drops the arms.
        self.clock.set_active(on)
        if on:
            self.rebuild()

    def showEvent(self, event) -> None:  # noqa: N802 (Qt name)
        super().showEvent(event)
        if self._dock is None:
            self._set_shown(True)

    def hideEvent(self, event) -> None:  # noqa: N802 (Qt name)
        super().hideEvent(event)
        self._set_shown(False)

    # ------------------------------------------------------------------ building

    def rebuild(self) -> None:
        """Words, lanes and curves from the clock's current run (only while shown)."""
        if not self._shown:
            self._built_for = None  # build again when shown
            return
        if self.clock.stale:
            self._show_stale(True)
            return
        motion = self.clock.motion
        evaluation = self.document.evaluation
        key = (id(motion), id(evaluation))
        if key == self._built_for:
            return
        self._built_for = key
        self._runs = sequence_runs(self.document.cell, evaluation, motion) if motion else ()
        self.summary.setText(self._words(motion))
        h = self.clock.horizon
        self._contact_time = None
        if motion is not None and motion.first_contact is not None:
            self._contact_time = float(motion.first_contact.time_s)
        self.contact_button.setEnabled(self._contact_time is not None)
        self.contact_button.setText(
            f"⊗ Contact {seconds(self._contact_time, 2)}"
            if self._contact_time is not None
            else "⊗ No contact"
        )
        for w in (self.play_button, self.slider, self.rate_box):
            w.setEnabled(bool(h))
        self._build_lanes(motion, h or 1.0)
        with self._guard:
            current = self.curve_box.currentData()
            self.curve_box.clear()
            names = {a.id: a.name for a in self.document.cell.arms}
            for k, run in enumerate(self._runs):
                arm = names.get(run.plan.arm, run.plan.arm)
                self.curve_box.addItem(f"{arm} (sequence {run.plan.sequence_index + 1})", k)
            if current is not None and 0 <= current < len(self._runs):
                self.curve_box.setCurrentIndex(int(current))
        self._build_curves()
        self.lanes_plot.setXRange(0.0, h or 1.0, padding=0.01)
        self._show_stale(False)
        self._show_time(self.clock.time)

    def _words(self, motion: Any) -> str:
        cell = self.document.cell
        names = {a.id: a.name for a in cell.arms}
        lines = []
        plans = [p for ev in self.document.evaluation.arms.values() for p in ev.plans]
        plans.sort(key=lambda p: p.sequence_index)
        if not plans:
            return NO_CYCLES if cell.sequences else "No sequences: add a sequence to time a cycle"
        for p in plans:
            text = cycle_summary(p, names.get(p.arm, p.arm))
            k = slowest_segment(p)
            if k is not None and len(p.segments) > 1:
                text += f"; {slowest_text(p.segments[k])}"
            lines.append(text)
        if motion is not None and motion.horizon_s is not None:
            head = f"Arms together over {seconds(motion.horizon_s)}"
            c = motion.first_contact
            if c is not None:
                lines.append(f"{head}: ⊗ {arm_contact_text(c)}")
            else:
                sep = motion.min_separation
                near = separation_text(sep, cell.units) if sep is not None else "no contact"
                lines.append(f"{head}: no contact; {near}")
            for z in motion.zones:
                if z.overlap:
                    both = interval_overlaps(*(z.intervals[a] for a in z.arms))
                    lines.append(zone_overlap_text(z, both))
            for aid, why in motion.skipped.items():
                lines.append(f"{names.get(aid, aid)} does not run with the others: {why}")
        return "\n\n".join(lines)

    def _build_lanes(self, motion: Any, h: float) -> None:
        bars: list[Bar] = []
        ticks: list[tuple[float, str]] = []
        names = {a.id: a.name for a in self.document.cell.arms}
        y = 1  # lane 0 holds the marks (first contact)
        for run in self._runs:
            slow = slowest_segment(run.plan)
            segs = run.plan.segments
            label = names.get(run.plan.arm, run.plan.arm)
            if not run.running:
                label += " (alone)"
            ticks.append((y, label))
            for t0, t1, k, kind in segment_spans(run.timeline, 0.0, h):
                s = segs[k]
                if kind == "dwell":
                    bars.append(Bar(t0, t1, y, 0.7, "dwell", "dwell", ("dwell", run.plan.arm, k)))
                    continue
                look = "slowest" if k == slow and len(segs) > 1 else "move"
                text = f"{s.from_id} → {s.to_id}"
                short = ""
                if look == "slowest":
                    text, short = f"slowest {text} {seconds(s.time_s, 2)}", "slowest"
                bars.append(Bar(t0, t1, y, 0.7, look, text, (look, run.plan.arm, k), short))
            y += 1
        for z in motion.zones if motion is not None else ():
            # One lane per zone: the first arm's times inside in its upper half, the
            # second's in the lower half (each bar named by its arm where it has room),
            # both at once cross-hatched across the lane.
            a, b = z.arms
            ticks.append((y, f"{z.space} zone"))
            for aid, dy in ((a, -0.2), (b, 0.2)):
                for t0, t1 in z.intervals.get(aid, ()):
                    key = ("inside", z.space, z.arms, aid)
                    bars.append(Bar(t0, t1, y + dy, 0.38, "inside", aid, key))
            for t0, t1 in interval_overlaps(z.intervals.get(a, ()), z.intervals.get(b, ())):
                key = ("overlap", z.space, z.arms)
                bars.append(Bar(t0, t1, y, 0.86, "overlap", "overlap", key))
            y += 1
        self.lanes.set_bars(bars)
        ax = self.lanes_plot.getAxis("left")
        ax.setTicks([ticks, []])
        ax.setStyle(textFillLimits=[(0, 0.95)])  # every lane keeps its name
        self.lanes_plot.setYRange(-0.5, max(y, 2) - 0.5, padding=0.0)
        for line in self._contact_lines:
            self.lanes_plot.removeItem(line)
        self._contact_lines = []
        if motion is not None and motion.first_contact is not None:
            c = motion.first_contact
            line = pg.InfiniteLine(
                c.time_s,
                angle=90,
                movable=False,
                pen=cosmetic_pen(style.PALETTE["ember"], 2.0, "dash"),
                label=f"⊗ arms touch {c.time_s:.3f} s",
                labelOpts={
                    # Along the line from the top (lanes run downwards): lane 0, the marks.
                    "position": 0.5 / max(y, 2),
                    "color": style.INK,
                    "fill": pg.mkBrush(colour(style.PAPER, 0.9)),
                    "anchors": [(0, 0.5), (0, 0.5)],
                },
            )
            self.lanes_plot.addItem(line, ignoreBounds=True)
            self._contact_lines.append(line)
        lanes_px = 30 + _LANE_PX * max(y, 2)
        self.lanes_plot.setMinimumHeight(lanes_px)
        self.lanes_plot.setMaximumHeight(lanes_px)
        self.graphics.setMinimumHeight(lanes_px + 2 * _CURVE_PX + 16)

    def _build_curves(self) -> None:
        if self._guard:
            return
        for plot, item in self._curve_items:
            plot.removeItem(item)
        self._curve_items, self._curves, self._limits = [], {}, []
        k = self.curve_box.currentData()
        h = self.clock.horizon
        if k is None or not h or not 0 <= int(k) < len(self._runs):
            self.angles_plot.setTitle("Joint angles (°): no cycle")
            self.speeds_plot.setTitle("Joint speeds (°/s): no cycle")
            return
        run = self._runs[int(k)]
        tl, arm = run.timeline, run.timeline.bodies.arm
        t = sample_times([tl], 0.0, h, _CURVES)
        q, qd = tl.at(t)
        styles = {0: ("solid", style.PALETTE["harbour"]), 1: ("dash", style.PALETTE["ember"])}
        for j, name in enumerate(("q1", "q2")):
            dash, c = styles[j]
            a = pg.PlotDataItem(t, q[:, j], pen=cosmetic_pen(c, 2.0, dash), name=name)
            v = pg.PlotDataItem(t, qd[:, j], pen=cosmetic_pen(c, 2.0, dash), name=f"{name} speed")
            self._add(self.angles_plot, a)
            self._add(self.speeds_plot, v)
            self._curves[name] = a
            self._curves[f"{name}dot"] = v
        limit_dash = {0: "dashdot", 1: "dot"}
        spans_a, spans_v = [q.min(), q.max()], [qd.min(), qd.max()]
        for j, (lo, hi) in enumerate((arm.q1_limits, arm.q2_limits)):
            c = styles[j][1]
            for value, words, pos in ((lo, "min", 0.02), (hi, "max", 0.02)):
                self._limit(
                    self.angles_plot,
                    value,
                    f"q{j + 1} {words} {value:g}°",
                    c,
                    limit_dash[j],
                    pos + 0.45 * j,
                )
                spans_a.append(value)
        speeds = arm.joint_speed_dps or ()
        for j, v in enumerate(speeds):
            c = styles[j][1]
            for value in (v, -v):
                self._limit(
                    self.speeds_plot,
                    value,
                    f"q{j + 1} speed limit {value:+g}°/s",
                    c,
                    limit_dash[j],
                    0.02 + 0.45 * j,
                )
                spans_v.append(value)
        name = {a.id: a.name for a in self.document.cell.arms}.get(arm.id, arm.id)
        ways = "q1 solid, q2 dashed; limits: q1 dash-dot, q2 dotted"
        self.angles_plot.setTitle(f"{name}: angles (°) — {ways}")
        self.speeds_plot.setTitle(f"{name}: speeds (°/s) — {ways}")
        self.angles_plot.setYRange(min(spans_a), max(spans_a), padding=0.08)
        self.speeds_plot.setYRange(min(spans_v), max(spans_v), padding=0.08)
        slow = slowest_segment(run.plan)
        if slow is not None and len(run.plan.segments) > 1:
            for t0, t1, i, kind in segment_spans(tl, 0.0, h):
                if i != slow or kind != "move":
                    continue
                for p in (self.angles_plot, self.speeds_plot):
                    band = pg.LinearRegionItem(
                        (t0, t1),
                        movable=False,
                        brush=pg.mkBrush(colour(style.PALETTE["lemon"], 0.3)),
                        pen=cosmetic_pen(style.INK, 1.0, "dot"),
                    )
                    band.setZValue(-5)
                    band.setToolTip(slowest_text(run.plan.segments[slow]))
                    self._add(p, band)

    def _limit(self, plot: pg.PlotItem, value: float, text: str, c: str, dash: str, pos: float):
        line = pg.InfiniteLine(
            value,
            angle=0,
            movable=False,
            pen=cosmetic_pen(c, 1.3, dash),
            label=text,
            labelOpts={
                "position": pos,
                "color": style.INK,
                "fill": pg.mkBrush(colour(style.PAPER, 0.85)),
                "anchors": [(0, 0.5), (0, 0.5)],
            },
        )
        line.setZValue(-2)
        self._add(plot, line)
        self._limits.append(line)

    def _add(self, plot: pg.PlotItem, item: Any) -> None:
        plot.addItem(item, ignoreBounds=not isinstance(item, pg.PlotDataItem))
        self._curve_items.append((plot, item))

    # ------------------------------------------------------------------ time

    def _show_time(self, t: float) -> None:
        h = self.clock.horizon
        with self._guard:
            for line in self._cursors:
                if line.value() != t:
                    line.setValue(t)
            if h:
                self.slider.setValue(round(t / h * _SLIDER_STEPS))
        if not h:
            self.readout.setText("No run to play")
            return
        lines = [f"t = {t:.3f} s of {h:.3f} s"]
        for run in self._runs:
            if run.running:
                tl = run.timeline
                seg = run.plan.segments[int(tl.segment_at(t))]
                ph = float(tl.phase(t))
                doing = (
                    f"moving {seg.from_id} → {seg.to_id}"
                    if ph > seg.move_start_s
                    else f"dwelling at {seg.from_id}"
                )
                lines.append(f"{run.plan.arm}: {ph:.2f} s into its cycle, {doing}")
        self.readout.setText("\n".join(lines))

    def _show_playing(self, on: bool) -> None:
        self.play_button.setText("❚❚ Pause" if on else "▶ Play")

    def _show_stale(self, on: bool) -> None:
        self.stale_label.setVisible(on)
        for p in self.plots:
            p.setOpacity(0.35 if on else 1.0)
        if not on and self._shown:
            self.rebuild()

    def _on_cursor(self, line: pg.InfiniteLine) -> None:
        if self._guard:
            return
        self.clock.seek(float(line.value()))

    def _on_slider(self, value: int) -> None:
        if self._guard:
            return
        h = self.clock.horizon
        if h:
            self.clock.seek(value / _SLIDER_STEPS * h)

    def _on_click(self, ev) -> None:
        if ev.button() != Qt.MouseButton.LeftButton:
            return
        pos = ev.scenePos()
        for p in self.plots:
            if p.vb.sceneBoundingRect().contains(pos):
                self.clock.pause()
                self.clock.seek(float(p.vb.mapSceneToView(pos).x()))
                return

    def _go_to_contact(self) -> None:
        if self._contact_time is not None:
            self.clock.pause()
            self.clock.seek(self._contact_time)

    # ------------------------------------------------------------------ reading (tests)

    def curve(self, name: str) -> tuple[np.ndarray, np.ndarray]:
        """The (t, value) data of a plotted curve: "q1", "q2", "q1dot", "q2dot"."""
        item = self._curves[name]
        x, y = item.getData()
        return np.asarray(x, dtype=float), np.asarray(y, dtype=float)

    def bars(self, look: str | None = None) -> list[Bar]:
        """The bars drawn on the lanes (of one look)."""
        return [b for b in self.lanes.bars if look is None or b.look == look]

    def limit_labels(self) -> list[str]:
        return [
            line.label.toPlainText()
            for line in self._limits
            if isinstance(line, pg.InfiniteLine) and line.label is not None
        ]

    def cursor_times(self) -> list[float]:
        return [float(line.value()) for line in self._cursors]

    def selected_run(self) -> Any:
        k = self.curve_box.currentData()
        return None if k is None else self._runs[int(k)]

    def summary_text(self) -> str:
        return self.summary.text()

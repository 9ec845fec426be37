"""The one playback clock of a document: the arms' cycles played, paused and scrubbed.

The clock holds the time every playback view shows (seconds from the start of the run,
each arm at its own ``start_s``), whether it is playing, and the run it plays: the
document evaluation's :meth:`~kinematics.evaluate.CellEvaluation.interference`. That run
is costly, so it is taken only on load, after a one-shot change and when step-by-step
changes (a drag) pause; while a drag steps the clock keeps the last run and says it is
out of date (``stale``). A QTimer advances the time while playing; it runs only while a
view showing the playback is visible (:meth:`set_active`), so a hidden timeline never
keeps the window busy.
"""

from __future__ import annotations

import weakref
from typing import Any

from PySide6.QtCore import QElapsedTimer, QObject, QTimer, Signal

from app.document import Changes, Document
from kinematics.playback import motion_horizon

__all__ = ["FRAME_MS", "RATES", "PlaybackClock", "playback_clock"]

#: Interval of the playback timer, milliseconds (about 30 frames per second).
FRAME_MS = 33
#: Playback speeds offered (1.0 is real time).
RATES = (0.1, 0.25, 0.5, 1.0, 2.0)

_CLOCKS: weakref.WeakKeyDictionary[Document, PlaybackClock] = weakref.WeakKeyDictionary()


class PlaybackClock(QObject):
    """Time, play state and the run being played, shared by every playback view.

    Signals
    -------
    time_changed(float)
        The time shown changed (seconds from the start of the run).
    playing_changed(bool)
    motion_changed()
        A new run (``motion``) was taken from the evaluation.
    stale_changed(bool)
        The run shown is out of date (a drag is stepping) or up to date again.
    active_changed(bool)
        A view showing the playback appeared or went.
    """

    time_changed = Signal(float)
    playing_changed = Signal(bool)
    motion_changed = Signal()
    stale_changed = Signal(bool)
    active_changed = Signal(bool)

    def __init__(self, document: Document) -> None:
        super().__init__()
        self.document = document
        self._time = 0.0
        self._rate = 1.0
        self._active = False
        self._stale = False
        self._motion: Any = None
        self._dirty = True
        self.timer = QTimer(self)
        self.timer.setInterval(FRAME_MS)
        self.timer.timeout.connect(self._tick)
        self._wall = QElapsedTimer()
        document.events.cell_changed.connect(self._on_cell_changed)
        document.events.changes_paused.connect(self.refresh)
        self.refresh()

    # ------------------------------------------------------------------ state

    @property
    def motion(self) -> Any:
        """The run played (:class:`kinematics.interference.Interference`), taken from the
        evaluation when first needed after a load, a change or a pause; while a drag
        steps, the last run taken."""
        if self._dirty and not self._stale:
            self._dirty = False
            self._motion = self.document.evaluation.interference()
        return self._motion

    @property
    def time(self) -> float:
        """The time shown, seconds from the start of the run."""
        return self._time

    @property
    def horizon(self) -> float | None:
        """The span of the run (the scrub range is 0 to this); None when no arm runs."""
        motion = self.motion
        return None if motion is None else motion_horizon(motion)

    @property
    def playing(self) -> bool:
        return self.timer.isActive()

    @property
    def rate(self) -> float:
        """Playback speed (1.0: real time)."""
        return self._rate

    @property
    def stale(self) -> bool:
        """True while the document changes step by step and the run waits for the pause."""
        return self._stale

    @property
    def active(self) -> bool:
        """True while some view showing the playback is visible."""
        return self._active

    @property
    def timelines(self) -> tuple:
        """The running arms' timelines (empty without a run)."""
        motion = self.motion
        return () if motion is None else tuple(motion.timelines)

    # ------------------------------------------------------------------ control

    def set_rate(self, rate: float) -> None:
        if not (isinstance(rate, int | float) and rate > 0):
            raise ValueError(f"playback rate must be a positive number, got {rate!r}")
        self._rate = float(rate)

    def seek(self, t: float) -> None:
        """Show time ``t`` (clamped to the run's span)."""
        h = self.horizon
        t = float(t)
        t = 0.0 if h is None or not t > 0 else min(t, h)
        if t != self._time:
            self._time = t
            self.time_changed.emit(t)

    def step(self, dt: float) -> None:
        """Advance by ``dt`` seconds of run time, starting again at 0 after the span."""
        h = self.horizon
        if h is None or h <= 0:
            return
        t = self._time + float(dt)
        if t > h:
            t = t % h
        self.seek(t)

    def play(self) -> None:
        """Start playing (only while a view shows it and its run is up to date)."""
        if self.playing or not self._active or self._stale or not self.horizon:
            return
        if self.horizon is not None and self._time >= self.horizon:
            self.seek(0.0)
        self._wall.start()
        self.timer.start()
        self.playing_changed.emit(True)

    def pause(self) -> None:
        if self.playing:
            self.timer.stop()
            self.playing_changed.emit(False)

    def toggle(self) -> None:
        """Play when paused, pause when playing."""
        if self.playing:
            self.pause()
        else:
            self.play()

    def set_active(self, on: bool) -> None:
        """A view showing the playback became visible (True) or hidden (False); hidden
        stops the timer."""
        on = bool(on)
        if not on:
            self.pause()
        if on != self._active:
            self._active = on
            if on:
                self._settle_time()
            self.active_changed.emit(on)

    def _tick(self) -> None:
        ms = self._wall.restart()
        # A stalled event loop must not make the arms jump: at most a few frames at once.
        self.step(min(ms, 4 * FRAME_MS) / 1000.0 * self._rate)

    # ------------------------------------------------------------------ the run

    def _on_cell_changed(self, _changes: Changes) -> None:
        if self.document.unsettled:
            self._set_stale(True)
            return
        self.refresh()

    def _set_stale(self, on: bool) -> None:
        if on != self._stale:
            self._stale = on
            if on:
                self.pause()
            self.stale_changed.emit(on)

    def refresh(self) -> None:
        """The document's current state is the one to play (on load, after a one-shot
        change, at pauses): its run is taken now while a view shows it, else when first
        needed."""
        self._dirty = True
        self._set_stale(False)
        if self._active:
            self._settle_time()
        self.motion_changed.emit()

    def _settle_time(self) -> None:
        h = self.horizon
        if h is None:
            self.pause()
        if h is None or self._time > h:
            self.seek(0.0 if h is None else h)


def playback_clock(document: Document) -> PlaybackClock:
    """The document's playback clock (made on first use)."""
    c = _CLOCKS.get(document)
    if c is None:
        c = PlaybackClock(document)
        _CLOCKS[document] = c
    return c

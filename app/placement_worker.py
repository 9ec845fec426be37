"""Placement work off the window's thread: the map coarse then refined, the best spot, tolerances.

:func:`placement_updates` is the work itself, a plain generator over the engine
(:mod:`kinematics.placement`): the exact region, the score map coarse first and then
refined chunk by chunk, the placement and heading tolerances of the current base, and the
best spot once the refined map is complete. :class:`BackgroundRunner` runs one such
generator at a time in a worker thread (a QThreadPool of one thread) and hands every value
to the window's thread through a queued signal; a newer request cancels the older one,
which stops at its next step (between two chunks of the map). Nothing here draws.
"""

from __future__ import annotations

import threading
from collections.abc import Callable, Iterator
from dataclasses import dataclass, replace
from typing import Any

from PySide6.QtCore import QObject, QRunnable, QThreadPool, Signal

from kinematics.placement import (
    BestPosition,
    PlacementProblem,
    PlacementRegion,
    ScoreMap,
    Tolerance,
    best_position,
    heading_tolerance,
    placement_region,
    placement_tolerance,
    score_map_steps,
)

__all__ = [
    "CHUNK_BASES",
    "PlacementUpdate",
    "placement_updates",
    "pose_updates",
    "BackgroundRunner",
]

#: Bases per chunk of the refined map: a newer request waits at most one chunk.
CHUNK_BASES = 1500


@dataclass(frozen=True)
class PlacementUpdate:
    """One result of a placement job.

    Attributes
    ----------
    stage : str
        ``"region"``, ``"coarse"``, ``"refining"`` (a chunk of the refined map done),
        ``"refined"`` (the refined map complete), ``"tolerance"`` or ``"best"``.
    done : float
        Fraction of the refined map computed (1 once it is complete).
    problem : PlacementProblem
        The problem the values belong to.
    region, map, best, tolerance, heading_tolerance :
        The values of this stage (None where the stage has none). ``map`` is a copy the
        window may keep.
    """

    stage: str
    done: float
    problem: PlacementProblem
    region: PlacementRegion | None = None
    map: ScoreMap | None = None
    best: BestPosition | None = None
    tolerance: Tolerance | None = None
    heading_tolerance: tuple[float, float] | None = None


def _copy(m: ScoreMap) -> ScoreMap:
    """The map with its own arrays (the engine fills the refined map in place)."""
    return replace(
        m,
        feasible=m.feasible.copy(),
        limit_margin=m.limit_margin.copy(),
        reach_margin=m.reach_margin.copy(),
        clearance=m.clearance.copy(),
        score=m.score.copy(),
    )


def pose_updates(
    problem: PlacementProblem, region: PlacementRegion, smap: ScoreMap | None
) -> Iterator[PlacementUpdate]:
    """The tolerances at the problem's current base, then the best spot on ``smap``.

    For a base that moved (or weights that changed) while the map stays valid: the map
    does not depend on where the base is, only the tolerances and the choice among equal
    best points (the one nearest the base) do.
    """
    tol = placement_tolerance(problem, region=region)
    ht = heading_tolerance(problem)
    yield PlacementUpdate("tolerance", 1.0, problem, region, tolerance=tol, heading_tolerance=ht)
    if smap is not None and smap.complete:
        yield PlacementUpdate("best", 1.0, problem, region, smap, best=best_position(problem, smap))


def placement_updates(
    problem: PlacementProblem, pitch: float | None = None, chunk_bases: int = CHUNK_BASES
) -> Iterator[PlacementUpdate]:
    """Everything the placement overlay shows, in the order it is worth having it.

    The exact region, the coarse map (a quarter of the resolution, complete), when the
    region is empty the targets that empty it, the tolerances at the current base, the
    refined map chunk by chunk, and the best spot on the refined map. Stop iterating to
    cancel.
    """
    region = placement_region(problem, blocking=False)
    yield PlacementUpdate("region", 0.0, problem, region)
    if not problem.targets:
        return
    for step in score_map_steps(problem, pitch, region=region, chunk_bases=chunk_bases):
        if step.stage == "coarse":
            yield PlacementUpdate("coarse", 0.0, problem, region, _copy(step.map))
            if region.empty and region.bounded:
                # Which targets keep every base out (greedy; after the coarse map is shown).
                region = placement_region(problem, blocking=True)
                yield PlacementUpdate("region", 0.0, problem, region)
            yield from pose_updates(problem, region, None)
        elif step.done < 1.0:
            yield PlacementUpdate("refining", step.done, problem, region)
        else:
            smap = _copy(step.map)
            yield PlacementUpdate("refined", 1.0, problem, region, smap)
            yield PlacementUpdate(
                "best", 1.0, problem, region, smap, best=best_position(problem, smap)
            )


class _Relay(QObject):
    """Carries one job's values to the window's thread (queued: it lives there)."""

    value = Signal(int, object)
    done = Signal(int)
    failed = Signal(int, object)


class _Job(QRunnable):
    def __init__(self, job_id: int, make: Callable[[], Iterator[Any]], relay: _Relay) -> None:
        super().__init__()
        self.setAutoDelete(True)
        self.job_id = job_id
        self.make = make
        self.relay = relay
        self.cancelled = threading.Event()

    def run(self) -> None:
        try:
            self._run()
        except RuntimeError:  # the relay went with its runner (the window closed): stop
            self.cancelled.set()

    def _run(self) -> None:
        failure: Exception | None = None
        try:
            values = self.make()
            try:
                for value in values:
                    if self.cancelled.is_set():
                        break
                    self.relay.value.emit(self.job_id, value)
            finally:
                close = getattr(values, "close", None)
                if close is not None:
                    close()
        except Exception as exc:  # noqa: BLE001 - handed to the window's thread
            failure = exc
        if failure is not None and not self.cancelled.is_set():
            self.relay.failed.emit(self.job_id, failure)
        else:
            self.relay.done.emit(self.job_id)


class BackgroundRunner(QObject):
    """Runs one generator at a time in a worker thread; a newer one cancels the older.

    ``submit(make)`` calls ``make()`` in the worker thread and iterates what it returns;
    every value arrives in the window's thread through :attr:`value` with the request's
    id, then :attr:`finished` (or :attr:`failed` with the exception). Values of a request
    that was cancelled or replaced are dropped, so the receiver only ever sees the
    current request's.
    """

    value = Signal(int, object)
    finished = Signal(int)
    failed = Signal(int, object)

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        self._jobs: dict[int, _Job] = {}
        self._next = 0
        self.current: int | None = None
        if parent is not None:
            # Before the pool (a child) waits for its thread: let the job stop at its next step.
            jobs = self._jobs
            parent.destroyed.connect(lambda *_a: [j.cancelled.set() for j in list(jobs.values())])

    @property
    def busy(self) -> bool:
        """True while the current request runs (or waits for the thread)."""
        return self.current is not None

    def submit(self, make: Callable[[], Iterator[Any]]) -> int:
        """Start a request (cancelling the running one); returns its id."""
        self.cancel()
        self._next += 1
        relay = _Relay()
        relay.value.connect(self._on_value)
        relay.done.connect(self._on_done)
        relay.failed.connect(self._on_failed)
        job = _Job(self._next, make, relay)  # kept (with its relay) until it reports back
        self._jobs[job.job_id] = job
        self.current = job.job_id
        self.pool.start(job)
        return job.job_id

    def cancel(self) -> None:
        """Stop the running request at its next step; its remaining values are dropped."""
        for job in self._jobs.values():
            job.cancelled.set()
        self.current = None

    def wait(self, ms: int = -1) -> bool:
        """Wait until the worker thread is idle (tests, shutting down)."""
        return self.pool.waitForDone(ms)

    def shutdown(self) -> None:
        """Cancel and wait for the worker (before the window goes)."""
        self.cancel()
        self.pool.waitForDone()

    def _forget(self, job_id: int) -> None:
        self._jobs.pop(job_id, None)

    def _on_value(self, job_id: int, value: object) -> None:
        if job_id == self.current:
            self.value.emit(job_id, value)

    def _on_done(self, job_id: int) -> None:
        self._forget(job_id)
        if job_id == self.current:
            self.current = None
            self.finished.emit(job_id)

    def _on_failed(self, job_id: int, exc: object) -> None:
        self._forget(job_id)
        if job_id == self.current:
            self.current = None
            self.failed.emit(job_id, exc)

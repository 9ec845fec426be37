"""The placement worker: coarse map first, then the refined one; a newer request cancels.

The reference for every number is the engine itself (kinematics.placement): the worker
must deliver exactly what the engine computes, only sooner and off the window's thread.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from app.placement_worker import BackgroundRunner, placement_updates
from kinematics import placement as pl
from kinematics.cellfile import load_cell

PRESS = Path(__file__).resolve().parents[2] / "sample_cells" / "press_tending_variants.cell.json"


@pytest.fixture
def runner(qtbot):
    r = BackgroundRunner()
    yield r
    r.shutdown()


def test_coarse_then_refined_and_a_newer_request_cancels_the_older(qtbot, runner):
    problem = pl.placement_problem(load_cell(PRESS))
    got: list[tuple[int, str, object]] = []
    runner.value.connect(lambda job, u: got.append((job, u.stage, u)))
    produced = {"first": 0}

    def slow():  # a fine map in small chunks: hundreds of steps
        for u in placement_updates(problem, pitch=2.0, chunk_bases=200):
            produced["first"] += 1
            yield u

    first = runner.submit(slow)
    qtbot.waitUntil(lambda: any(j == first and s == "coarse" for j, s, _ in got), timeout=60000)
    with qtbot.waitSignal(runner.finished, timeout=60000) as done:
        second = runner.submit(lambda: placement_updates(problem, pitch=20.0))
    assert done.args == [second]
    runner.wait()
    # The older request stopped at its next step: far fewer steps than its whole map.
    steps_whole = 2 + int(np.ceil(250 * 260 / 200))
    assert produced["first"] < steps_whole / 4
    assert not any(j == first and s in ("refined", "best") for j, s, _ in got)
    mine = [(s, u) for j, s, u in got if j == second]
    stages = [s for s, _ in mine]
    assert stages[0] == "region" and stages.index("coarse") < stages.index("refined")
    coarse = next(u for s, u in mine if s == "coarse").map
    refined = next(u for s, u in mine if s == "refined").map
    assert coarse.pitch == pytest.approx(4 * refined.pitch) and refined.complete
    # Exactly the engine's maps.
    ref = pl.score_map(problem, pitch=20.0)
    assert np.array_equal(refined.score, ref.score, equal_nan=True)
    assert np.array_equal(refined.feasible, ref.feasible)
    best = next(u for s, u in mine if s == "best").best
    ref_best = pl.best_position(problem, ref)
    assert (best.x, best.y, best.score) == pytest.approx((ref_best.x, ref_best.y, ref_best.score))


def test_a_failure_in_the_worker_reaches_the_window_thread(qtbot, runner):
    def broken():
        yield 1
        raise ZeroDivisionError("a bug")

    values = []
    runner.value.connect(lambda _j, v: values.append(v))
    with qtbot.waitSignal(runner.failed, timeout=10000) as failed:
        job = runner.submit(broken)
    assert failed.args[0] == job and isinstance(failed.args[1], ZeroDivisionError)
    assert values == [1] and not runner.busy


def test_cancel_drops_what_is_still_coming(qtbot, runner):
    import threading

    gate = threading.Event()

    def waits():
        yield "first"
        gate.wait(10)
        yield "late"

    values = []
    runner.value.connect(lambda _j, v: values.append(v))
    runner.submit(waits)
    qtbot.waitUntil(lambda: values == ["first"], timeout=10000)
    runner.cancel()
    gate.set()
    runner.wait()
    qtbot.wait(50)
    assert values == ["first"] and not runner.busy

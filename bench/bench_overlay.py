"""The window's placement overlay: time to the coarse map, and the cost of a base drag step.

Builds the invented cell of ``bench_place.py`` (one arm, 100 targets, 40 fixtures, a
square mounting zone) and measures, in one run:

* coarse map: from a request to the first (coarse) map delivered in the window's thread
  by the worker (:class:`app.placement_worker.BackgroundRunner` running
  :func:`app.placement_worker.placement_updates`: the exact region, then the map at four
  times the default pitch), median of several requests, each on a fresh problem (nothing
  cached); the compiled kernel is loaded first, as it is once a window has shown a map.
  Bar: under 100 ms. The whole refined map through the same worker is printed beside it
  (their ratio says how much sooner the coarse one comes);
* drag step: :func:`kinematics.placement.live_state` without its heading part at 200 base
  positions along a drag from the best spot, for the targets feasible there (so each step
  is a whole one, the tolerance bounds included), median per step, and its ratio to one
  evaluation of the arm's targets at a moved base (:func:`kinematics.placement.evaluate_at`,
  what ``check`` does, which every drag step costs anyway). Bar: at most 3x that evaluation.

Final line ``overlay: <coarse> ms to the coarse map (bar: ...)``; the exit status is non-zero
when a bar is missed (not enforced with ``--quick``).
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import time
from dataclasses import replace
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
sys.path.insert(0, str(Path(__file__).resolve().parent))

COARSE_BAR_MS = 100.0
STEP_BAR = 3.0


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="tiny run, bars not enforced")
    args = parser.parse_args(argv)
    n_targets, n_fixtures, repeats, steps = (10, 8, 2, 20) if args.quick else (100, 40, 7, 200)

    from bench_place import build
    from PySide6.QtCore import QCoreApplication

    from app.placement_worker import BackgroundRunner, placement_updates
    from kinematics import placement as pl

    app = QCoreApplication.instance() or QCoreApplication([])
    cell, _pitch = build(n_targets, n_fixtures, 200)
    pl.score_map(pl.placement_problem(cell), 100.0)  # load the compiled kernel once

    runner = BackgroundRunner()
    got: list[tuple[float, str]] = []
    runner.value.connect(lambda _j, u: got.append((time.perf_counter(), u.stage)))

    def request() -> tuple[float, float]:
        got.clear()
        problem = pl.placement_problem(cell)  # fresh: no region or kernel data cached
        t0 = time.perf_counter()
        runner.submit(lambda: placement_updates(problem))
        while not any(s == "refined" for _t, s in got):
            app.processEvents()
            time.sleep(0.0005)
        coarse = next(t for t, s in got if s == "coarse") - t0
        refined = next(t for t, s in got if s == "refined") - t0
        runner.wait()
        app.processEvents()
        return coarse, refined

    request()  # warm the worker thread
    times = [request() for _ in range(repeats)]
    runner.shutdown()
    t_coarse = statistics.median(t for t, _ in times)
    t_refined = statistics.median(t for _, t in times)

    # The drag starts at the best spot with the targets feasible there (so every step is a
    # whole one, the tolerance bounds included).
    problem = pl.placement_problem(cell)
    best = pl.best_position(problem, pl.score_map(problem))
    ok = pl.evaluate_at(problem, best.x, best.y).feasible
    kept = {t.id for t, f in zip(problem.targets, ok) if f}
    cell = replace(cell, targets=tuple(t for t in cell.targets if t.id in kept))
    problem = pl.placement_problem(cell)
    region = pl.placement_region(problem, blocking=False)
    xs = [best.x + 0.05 * k for k in range(steps)]
    ys = [best.y - 0.03 * k for k in range(steps)]
    pl.live_state(problem, xs[0], ys[0], region=region, with_heading=False)

    full = [
        (x, y)
        for x, y in zip(xs, ys)
        if pl.live_state(problem, x, y, region=region, with_heading=False).all_feasible
    ]
    if not full:  # (the quick cell) every step then
        full = list(zip(xs, ys))

    def per_step(fn) -> float:
        out = []
        for x, y in full:
            t0 = time.perf_counter()
            fn(x, y)
            out.append(time.perf_counter() - t0)
        return statistics.median(out)

    t_live = per_step(lambda x, y: pl.live_state(problem, x, y, region=region, with_heading=False))
    t_eval = per_step(lambda x, y: pl.evaluate_at(problem, x, y))
    ratio = t_live / t_eval

    print(
        f"cell: {n_targets} targets, {n_fixtures} fixtures; the drag: the {len(kept)} targets "
        f"feasible at the best spot"
    )
    print(
        f"coarse map through the worker: {t_coarse * 1e3:.1f} ms (median of {repeats}; "
        f"bar < {COARSE_BAR_MS:.0f} ms); refined map complete: {t_refined * 1e3:.0f} ms "
        f"({t_refined / t_coarse:.1f}x later)"
    )
    print(
        f"drag step (live state, no heading part): {t_live * 1e3:.2f} ms, median of the "
        f"{len(full)} of {steps} steps where every target is feasible (whole steps); one "
        f"evaluation of the targets: {t_eval * 1e3:.2f} ms; ratio {ratio:.2f}x "
        f"(bar <= {STEP_BAR:g}x)"
    )
    print(
        f"overlay: {t_coarse * 1e3:.1f} ms to the coarse map (bar: <= {COARSE_BAR_MS:.0f} ms; "
        f"drag step {ratio:.2f}x one evaluation, bar <= {STEP_BAR:g}x)"
    )
    if not args.quick and (t_coarse * 1e3 > COARSE_BAR_MS or ratio > STEP_BAR):
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())

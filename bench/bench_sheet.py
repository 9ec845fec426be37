"""Review sheet PDF of a large invented cell: median time per export, and where it goes.

Builds the drag benchmark's cell in code (2 arms, 500 targets, 80 fixtures, a cycle of
40 targets per arm) and times the whole export from the bare cell: the evaluation, the
sheet's content (table, summary with moves, zones, cycle times and placement
tolerances), the plan of the sheets and the vector PDF of every sheet. The evaluation
alone is the floor, so the ratio says what the sheet adds on top of the engine's answer.
Final line: ``sheet pdf: <median> s (bar: <= 3 s median)``; the exit status is non-zero
when the median misses the bar (not enforced with ``--quick``).
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

from bench_drag import build_cell  # noqa: E402

from app.sheet.content import SheetOptions, sheet_content  # noqa: E402
from app.sheet.render import pdf_bytes, plan_sheets  # noqa: E402
from kinematics.cell import Sequence  # noqa: E402
from kinematics.evaluate import evaluate_cell  # noqa: E402

BAR_S = 3.0


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="tiny sizes; the bar is not enforced")
    args = ap.parse_args()
    n_targets, n_fixtures, repeats = (60, 10, 2) if args.quick else (500, 80, 5)
    cell = build_cell(n_targets, n_fixtures)
    cycles = tuple(
        Sequence(a.id, tuple(t.id for t in cell.targets_of(a.id))[:40]) for a in cell.arms
    )
    cell = replace(cell, sequences=cycles)
    options = SheetOptions(paper="A3", orientation="landscape")
    # One run first: numba kernels and fonts load once per process, not per export.
    pdf_bytes(plan_sheets(sheet_content(evaluate_cell(cell)), options))
    totals, evals, paints = [], [], []
    sheets = size = 0
    for _ in range(repeats):
        t0 = time.perf_counter()
        ev = evaluate_cell(cell)
        t1 = time.perf_counter()
        plan = plan_sheets(sheet_content(ev), options)
        t2 = time.perf_counter()
        data = pdf_bytes(plan)
        t3 = time.perf_counter()
        totals.append(t3 - t0)
        evals.append(t1 - t0)
        paints.append(t3 - t2)
        sheets, size = plan.sheets, len(data)
    median = statistics.median(totals)
    floor = statistics.median(evals)
    print(
        f"{n_targets} targets, {n_fixtures} fixtures: {sheets} sheets, {size / 1e6:.2f} MB; "
        f"evaluation alone {floor:.3f} s, export {median / floor:.1f}x that; "
        f"painting the PDF {statistics.median(paints):.3f} s"
    )
    print(f"sheet pdf: {median:.3f} s (bar: <= {BAR_S:g} s median)")
    return 0 if (args.quick or median <= BAR_S) else 1


if __name__ == "__main__":
    sys.exit(main())

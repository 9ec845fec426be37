"""DXF export of a large invented cell: median time per export, and its share spent in ezdxf.

Builds a cell in code (2 arms, 500 targets, 80 fixtures; the drag benchmark's cell, with a
cycle of 40 targets per arm) and
times :func:`kinematics.dxf_export.dxf_bytes` from the bare cell (evaluation, moves, spaces
and writing included). The floor is ezdxf alone writing the same entities from the
finished drawing, so the ratio says how much the export adds on top of the library.
Final line: ``dxf export: <median> s (bar: <= 1 s median)``; the exit status is non-zero
when the median misses the bar (not enforced with ``--quick``).
"""

from __future__ import annotations

import argparse
import io
import statistics
import sys
import time
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_drag import build_cell  # noqa: E402

from kinematics.cell import Sequence  # noqa: E402
from kinematics.dxf_export import cell_dxf, dxf_bytes  # noqa: E402

BAR_S = 1.0


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="tiny sizes; the bar is not enforced")
    args = ap.parse_args()
    n_targets, n_fixtures, repeats = (60, 10, 3) if args.quick else (500, 80, 7)
    cell = build_cell(n_targets, n_fixtures)
    # A cycle of up to 40 targets per arm, so operating spaces and moves are drawn too.
    cycles = tuple(
        Sequence(a.id, tuple(t.id for t in cell.targets_of(a.id))[:40]) for a in cell.arms
    )
    cell = replace(cell, sequences=cycles)
    times = []
    size = 0
    for _ in range(repeats):
        t0 = time.perf_counter()
        size = len(dxf_bytes(cell))
        times.append(time.perf_counter() - t0)
    doc = cell_dxf(cell)
    floor = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        stream = io.StringIO()
        doc.write(stream)
        doc.encode(stream.getvalue())
        floor.append(time.perf_counter() - t0)
    median, base = statistics.median(times), statistics.median(floor)
    entities = len(doc.modelspace())
    print(
        f"{n_targets} targets, {n_fixtures} fixtures: {entities} entities, {size / 1e6:.1f} MB; "
        f"ezdxf writing alone {base:.3f} s, export {median / base:.1f}x that"
    )
    print(f"dxf export: {median:.3f} s (bar: <= {BAR_S:g} s median)")
    return 0 if (args.quick or median <= BAR_S) else 1


if __name__ == "__main__":
    sys.exit(main())

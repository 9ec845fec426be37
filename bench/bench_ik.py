"""Vectorised inverse kinematics of 1,000,000 targets against a plain Python loop.

The loop solves the same closed form with the math module, one target at a
time (limits, margins and status included); it runs on a slice of the targets and
the ratio compares time per target. Final line: ``ik: <ratio>x (bar: >= 4x)``.
"""

from __future__ import annotations

import argparse
import math
import statistics
import sys
import time

import numpy as np

from kinematics.ik import solve

A1, A2 = 400.0, 250.0
LIM1, LIM2 = (-132.0, 132.0), (-145.0, 145.0)
BAR = 4.0


def _margin(q: float, lo: float, hi: float) -> float:
    mid = 0.5 * (lo + hi)
    rep = q + 360.0 * round((mid - q) / 360.0)
    if lo <= rep <= hi:
        return min(rep - lo, hi - rep)
    return -min((q - hi) % 360.0, (lo - q) % 360.0)


def loop_solve(xs: list[float], ys: list[float]) -> list[tuple]:
    """The naive reference: the closed form written out per target."""
    out = []
    rmax, rmin = A1 + A2, abs(A1 - A2)
    for x, y in zip(xs, ys):
        r = math.hypot(x, y)
        if r > rmax or r < rmin:
            out.append(None)
            continue
        c2 = max(-1.0, min(1.0, (r * r - A1 * A1 - A2 * A2) / (2 * A1 * A2)))
        best = None
        for sign in (1.0, -1.0):
            q2 = sign * math.degrees(math.acos(c2))
            s2 = math.sin(math.radians(q2))
            q1 = math.degrees(math.atan2(y, x) - math.atan2(A2 * s2, A1 + A2 * c2))
            m = min(_margin(q1, *LIM1), _margin(q2, *LIM2))
            if m >= 0 and (best is None or m > best[2]):
                best = (q1, q2, m)
        out.append(best)
    return out


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="tiny sizes; the bar is not enforced")
    args = ap.parse_args()
    n = 20_000 if args.quick else 1_000_000
    n_loop = 2_000 if args.quick else 50_000
    rng = np.random.default_rng(1)
    x = rng.uniform(-700, 700, n)
    y = rng.uniform(-700, 700, n)

    vec = []
    for _ in range(3):
        t0 = time.perf_counter()
        res = solve(A1, A2, x, y, q1_limits=LIM1, q2_limits=LIM2)
        vec.append((time.perf_counter() - t0) / n)
    xs, ys = x[:n_loop].tolist(), y[:n_loop].tolist()
    loop = []
    for _ in range(3):
        t0 = time.perf_counter()
        ref = loop_solve(xs, ys)
        loop.append((time.perf_counter() - t0) / n_loop)
    # Same answers on the slice, or the comparison means nothing.
    feasible_loop = np.array([r is not None for r in ref])
    if not np.array_equal(feasible_loop, res.feasible[:n_loop]):
        print("ik: answers differ from the loop reference", file=sys.stderr)
        return 1
    ratio = statistics.median(loop) / statistics.median(vec)
    print(f"vectorised: {statistics.median(vec) * 1e9:.0f} ns/target over {n} targets")
    print(f"loop:       {statistics.median(loop) * 1e9:.0f} ns/target over {n_loop} targets")
    print(f"ik: {ratio:.1f}x (bar: >= {BAR:.0f}x)")
    return 0 if (args.quick or ratio >= BAR) else 1


if __name__ == "__main__":
    sys.exit(main())

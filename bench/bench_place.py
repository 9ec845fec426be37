"""Base placement map: the engine against a plain per-pose loop and the arithmetic floor.

Builds an invented cell in code: one arm (400 + 250 mm, joint limits, link radii, a tool
disc), 100 targets, 40 fixtures (bins, columns and guards that block the links, tables
they pass over), and a square mounting zone sampled on a 200 x 200 grid at the arm's
heading. Times, in one run:

* engine: :func:`kinematics.placement.score_map` (both configurations, joint limits,
  elbow setting, collisions at the targets, the configuration choice; 4,000,000
  base-target pairs), median of several runs;
* naive reference (bar: the engine at least 100x faster): a plain Python loop over bases
  and targets, closed-form IK with math, limits, and shapely bodies (link segments and
  the tool point) with one shapely distance per blocking fixture, written below; timed
  on a random subset of pairs and scaled per pair (said in the output);
* arithmetic floor (bar: the engine at most 5x slower): the same 4,000,000 pairs through
  one plain vectorised numpy closed-form IK of both configurations, no limits, no
  collisions, median of several runs;
* the exact placement region for the 100 targets (goal: under 100 ms).

The naive loop's verdicts must agree with the engine's on the sampled pairs. Final line:
``place: <ratio>x (bar: >= 100x naive, <= 5x floor)`` where the ratio is naive/engine;
the exit status is non-zero when a bar is missed (not enforced with ``--quick``).
"""

from __future__ import annotations

import argparse
import math
import statistics
import sys
import time

import numpy as np
import shapely

NAIVE_BAR = 100.0
FLOOR_BAR = 5.0


def build(n_targets: int, n_fixtures: int, grid: int, seed: int = 5):
    """The invented cell: targets on a work table around a base area, fixtures among them."""
    from kinematics.cell import Arm, Cell, Fixture, Target

    rng = np.random.default_rng(seed)
    half = 400.0
    arm = Arm(
        "arm", "Loader", 0.0, 0.0, 90.0, 400.0, 250.0, (-160.0, 160.0), (-145.0, 145.0),
        link_radii=(30.0, 20.0), link_underside_height=600.0,
        extra={
            "tool_body": {"radius": 25.0},
            "mounting_zone": [[-half, -half], [half, -half], [half, half], [-half, half]],
        },
    )  # fmt: skip
    # Targets in a ring around the zone's middle: a base near it reaches them all.
    r = rng.uniform(260.0, 460.0, n_targets)
    a = rng.uniform(-math.pi, math.pi, n_targets)
    targets = tuple(
        Target(f"t{i}", f"T{i}", float(r[i] * math.cos(a[i])), float(r[i] * math.sin(a[i])), "arm")
        for i in range(n_targets)
    )
    kinds = ["fixture", "column", "guard", "table"]
    fixtures = []
    for k in range(n_fixtures):
        kind = kinds[k % 4]
        rr = rng.uniform(450.0, 900.0) if kind != "table" else rng.uniform(200.0, 600.0)
        aa = rng.uniform(-math.pi, math.pi)
        cx, cy = rr * math.cos(aa), rr * math.sin(aa)
        w, h = rng.uniform(30.0, 90.0, 2) if kind != "guard" else (200.0, 20.0)
        th = rng.uniform(0.0, math.pi)
        c, s = math.cos(th), math.sin(th)
        local = np.array([[-w, -h], [w, -h], [w, h], [-w, h]]) / 2
        pts = local @ np.array([[c, s], [-s, c]]) + [cx, cy]
        height = {"fixture": 700.0, "column": 3000.0, "guard": 1800.0, "table": 450.0}[kind]
        fixtures.append(
            Fixture(f"f{k}", f"{kind} {k}", kind, tuple(map(tuple, pts.tolist())), height)
        )
    cell = Cell("bench", arms=(arm,), fixtures=tuple(fixtures), targets=targets)
    pitch = 2.0 * half / (grid - 1)
    return cell, pitch


def naive_pairs(arm, fixtures, link_mask, tool_radius, bases, targets):
    """Plain loop: per (base, target), closed-form IK, limits, shapely bodies and distances.

    Returns, per pair, whether the target is feasible (some configuration within the
    limits whose bodies clear every blocking fixture).

    Link 1 is its whole capsule here, though the engine measures its moving part (less the
    shoulder disc) and checks the disc once as the base: the verdicts are the same, since
    a fixture touching the whole capsule but not the moving part touches the shoulder
    disc, and a base touching a fixture fails every target.
    """
    polys = [shapely.Polygon(f.outline) for f, m in zip(fixtures, link_mask) if m]
    a1, a2 = arm.a1, arm.a2
    (lo1, hi1), (lo2, hi2) = arm.q1_limits, arm.q2_limits
    r1, r2 = arm.link_radii
    out = []
    for (bx, by), (tx, ty) in zip(bases, targets):
        dx, dy = tx - bx, ty - by
        d2 = dx * dx + dy * dy
        c2 = (d2 - a1 * a1 - a2 * a2) / (2 * a1 * a2)
        if c2 < -1 or c2 > 1:
            out.append(False)
            continue
        feasible = False
        for sign in (1.0, -1.0):
            q2 = sign * math.acos(c2)
            q1 = math.atan2(dy, dx) - math.atan2(a2 * math.sin(q2), a1 + a2 * math.cos(q2))
            q1d = math.degrees(q1) - arm.heading_deg
            q1d = (q1d + 180.0) % 360.0 - 180.0
            if not (lo1 <= q1d <= hi1 and lo2 <= math.degrees(q2) <= hi2):
                continue
            t1 = math.radians(arm.heading_deg + q1d)
            ex, ey = bx + a1 * math.cos(t1), by + a1 * math.sin(t1)
            link1 = shapely.LineString([(bx, by), (ex, ey)])
            link2 = shapely.LineString([(ex, ey), (tx, ty)])
            tool = shapely.Point(tx, ty)
            clear = True
            for poly in polys:
                if (
                    link1.distance(poly) <= r1
                    or link2.distance(poly) <= r2
                    or tool.distance(poly) <= tool_radius
                ):
                    clear = False
                    break
            if clear:
                feasible = True
                break
        out.append(feasible)
    return np.array(out)


def floor_ik(a1, a2, bx, by, tx, ty):
    """Closed-form IK of both configurations for every pair; no limits, no collisions."""
    dx = tx[None, :] - bx[:, None]
    dy = ty[None, :] - by[:, None]
    c2 = (dx * dx + dy * dy - a1 * a1 - a2 * a2) / (2.0 * a1 * a2)
    np.clip(c2, -1.0, 1.0, out=c2)
    s2 = np.sqrt(1.0 - c2 * c2)
    q2 = np.arctan2(s2, c2)
    phi = np.arctan2(dy, dx)
    beta = np.arctan2(a2 * s2, a1 + a2 * c2)
    return phi - beta, phi + beta, q2


def _median(fn, repeats):
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="tiny run, bars not enforced")
    args = parser.parse_args(argv)
    n_targets, n_fixtures, grid, repeats, n_naive = (
        (10, 8, 20, 2, 200) if args.quick else (100, 40, 200, 5, 4000)
    )
    from kinematics import placement as pl

    cell, pitch = build(n_targets, n_fixtures, grid)
    problem = pl.placement_problem(cell)
    arm = problem.arm
    pl.score_map(problem, pitch * 8)  # compile (or load) the kernel, warm caches
    t_map = _median(lambda: pl.score_map(problem, pitch), repeats)
    smap = pl.score_map(problem, pitch)
    ny, nx = smap.shape
    pairs = nx * ny * n_targets

    gx, gy = np.meshgrid(smap.x, smap.y)
    bx, by = gx.ravel(), gy.ravel()
    tx, ty = problem.xy[:, 0].copy(), problem.xy[:, 1].copy()
    floor_ik(arm.a1, arm.a2, bx, by, tx, ty)
    t_floor = _median(lambda: floor_ik(arm.a1, arm.a2, bx, by, tx, ty), repeats)

    rng = np.random.default_rng(1)
    ib = rng.integers(0, len(bx), n_naive)
    it = rng.integers(0, n_targets, n_naive)
    bases = np.stack([bx[ib], by[ib]], axis=1)
    tgts = problem.xy[it]
    t0 = time.perf_counter()
    naive = naive_pairs(arm, cell.fixtures, problem.link_mask, 25.0, bases, tgts)
    t_naive = (time.perf_counter() - t0) / n_naive * pairs
    # The engine's verdict for the same pairs.
    _, _, chosen = pl.pair_table(problem, bases[:, 0], bases[:, 1])
    engine = chosen[np.arange(n_naive), it] >= 0
    agree = int(np.sum(naive == engine))

    pl.placement_region(problem)  # warm the region's cache-free parts (imports)

    def region():
        fresh = pl.placement_problem(cell)
        return pl.placement_region(fresh)

    t_region = _median(region, repeats)
    reg = region()

    print(
        f"cell: {n_targets} targets, {n_fixtures} fixtures ({int(problem.link_mask.sum())} block "
        f"the links), grid {nx} x {ny} = {nx * ny} bases, {pairs} base-target pairs"
    )
    print(
        f"engine score map: {t_map * 1e3:.0f} ms (median of {repeats}); "
        f"{t_map / pairs * 1e9:.0f} ns per pair; best feasible {int(smap.feasible.max())}"
    )
    print(f"arithmetic floor (numpy IK, both configurations): {t_floor * 1e3:.0f} ms")
    print(
        f"naive loop: {t_naive:.0f} s estimated from {n_naive} random pairs "
        f"({t_naive / pairs * 1e6:.0f} us per pair); verdicts agree on {agree} of {n_naive}"
    )
    print(
        f"exact region, {n_targets} targets: {t_region * 1e3:.1f} ms (median of {repeats}; "
        f"goal < 100 ms); area {reg.area:.0f}, empty {reg.empty}"
    )
    ratio_naive = t_naive / t_map
    ratio_floor = t_map / t_floor
    print(f"ratios: {ratio_naive:.0f}x faster than naive, {ratio_floor:.2f}x the floor")
    if agree != n_naive:
        print("place: verdicts differ from the naive reference", file=sys.stderr)
        return 1
    print(
        f"place: {ratio_naive:.0f}x (bar: >= {NAIVE_BAR:.0f}x naive, <= {FLOOR_BAR:.0f}x floor; "
        f"floor ratio {ratio_floor:.2f}x)"
    )
    if not args.quick and (ratio_naive < NAIVE_BAR or ratio_floor > FLOOR_BAR):
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""Clearance at targets: the vectorised engine against a plain per-pose shapely loop.

Builds an invented cell in code (one arm with link radii and a tool disc, 500 targets,
80 fixtures of mixed kinds and heights), solves both elbow configurations of every
target and times the clearance of all 1000 poses:

* engine: :func:`kinematics.clearance.arm_clearance` (numpy, broad and narrow phase);
* reference (the bar): for each pose, the moving bodies as shapely geometries (link 1's
  capsule less the shoulder disc, link 2's capsule, the tool disc, all buffered the
  plain shapely way) and one shapely distance per blocking fixture, written plainly
  below; a finely polygonised variant (256 segments per quarter circle) is the
  agreement reference.

The engine must agree with the fine variant within its polygonisation error (and the
same collide verdicts away from touching), and lie within the coarse one's error too.
Final line: ``clearance: <ratio>x (bar: >= 30x)``; the exit status is non-zero when the
ratio misses the bar (not enforced with ``--quick``).
"""

from __future__ import annotations

import argparse
import math
import sys
import time

import numpy as np
import shapely

BAR = 30.0


def _rect(cx, cy, w, h, th):
    c, s = math.cos(th), math.sin(th)
    local = np.array([[-w, -h], [w, -h], [w, h], [-w, h]]) / 2
    return local @ np.array([[c, s], [-s, c]]) + [cx, cy]


def build(n_targets: int, n_fixtures: int, seed: int = 11):
    """An invented cell around one arm (underside 600 high, reach 650).

    Inside the reach: tables, feeders and conveyors the links pass over (some with
    L-shaped outlines), 700-high bins, a few columns and keep-out zones; guard panels
    stand in a ring outside the reach. Targets are scattered over the reach annulus.
    """
    from kinematics.cell import Arm, Fixture, Target

    rng = np.random.default_rng(seed)
    arm = Arm(
        "arm",
        "Loader",
        0.0,
        0.0,
        90.0,
        400.0,
        250.0,
        (-160, 160),
        (-145, 145),
        link_radii=(30.0, 20.0),
        link_underside_height=600.0,
        extra={"tool_body": {"radius": 25.0}},
    )
    plan = []  # (kind, height, radial range, size range, L-shaped)
    plan += [("table", 450.0, (200, 640), (60, 180), i % 4 == 0) for i in range(30)]
    plan += [("fixture", 700.0, (250, 700), (30, 70), i % 5 == 0) for i in range(10)]
    plan += [("column", 2500.0, (450, 900), (40, 60), False) for i in range(6)]
    plan += [("keep-out", 0.0, (700, 800), (80, 160), False) for i in range(4)]
    # Interleave the kinds so a short run (--quick) still has some of each.
    plan = [plan[k] for k in np.argsort([(i * 7919) % len(plan) for i in range(len(plan))])]
    n_guard = max(0, n_fixtures - len(plan))
    fixtures = []
    for i, (kind, height, (r0, r1), (s0, s1), ell) in enumerate(plan[:n_fixtures]):
        r, a = rng.uniform(r0, r1), rng.uniform(-math.pi, math.pi)
        cx, cy = r * math.cos(a), r * math.sin(a)
        w, h = rng.uniform(s0, s1, 2)
        if ell:  # an L: a w x h box with one quarter cut away, turned by a
            pts = np.array([[0, 0], [w, 0], [w, h / 2], [w / 2, h / 2], [w / 2, h], [0, h]])
            c, s = math.cos(a), math.sin(a)
            pts = (pts - [w / 2, h / 2]) @ np.array([[c, s], [-s, c]]) + [cx, cy]
        else:
            pts = _rect(cx, cy, w, h, rng.uniform(0, math.pi))
        fixtures.append(
            Fixture(f"f{i}", f"{kind} {i}", kind, tuple(map(tuple, pts.tolist())), height)
        )
    for k in range(n_guard):  # guard panels on a ring of radius 950
        a = 2 * math.pi * k / max(n_guard, 1)
        pts = _rect(
            950 * math.cos(a), 950 * math.sin(a), 20.0, 2 * math.pi * 950 / n_guard * 0.9, a
        )
        fixtures.append(
            Fixture(f"g{k}", f"guard {k}", "guard", tuple(map(tuple, pts.tolist())), 1800.0)
        )
    r = np.sqrt(rng.uniform(160.0**2, 640.0**2, n_targets))
    a = rng.uniform(-math.pi, math.pi, n_targets)
    targets = [
        Target(f"t{i}", f"T{i}", float(r[i] * math.cos(a[i])), float(r[i] * math.sin(a[i])), "arm")
        for i in range(n_targets)
    ]
    return arm, fixtures, targets


QUAD_SEGS = 16  # shapely's default segments per quarter circle for buffers
FINE_SEGS = 256  # the agreement reference


def reference(arm, fixtures, q, link_mask, tool_mask, radii, tool_radius, quad=QUAD_SEGS):
    """Per-pose shapely loop: smallest distance from the moving bodies to the fixtures.

    Each pose's bodies are built the plain shapely way: link 1's segment buffered by its
    radius, less the shoulder disc and cut to the half plane in front of the shoulder
    (its end cap behind the shoulder is in the disc, the part that never moves); link 2's
    segment and the tool point buffered by their radii; then one ``distance`` call per
    blocking fixture in a Python loop.
    """
    polys = [shapely.Polygon(f.outline) for f in fixtures]
    link_fx = [(k, polys[k]) for k in np.flatnonzero(link_mask)]
    tool_fx = [(k, polys[k]) for k in np.flatnonzero(tool_mask)]
    out = np.full(len(q), np.nan)
    which = np.full(len(q), -1)
    h = math.radians(arm.heading_deg)
    base = (arm.x, arm.y)
    disc = shapely.Point(base).buffer(radii[0], quad_segs=quad)
    for i, (q1, q2) in enumerate(q):
        if math.isnan(q1):
            continue
        t1 = h + math.radians(q1)
        t12 = t1 + math.radians(q2)
        u = (math.cos(t1), math.sin(t1))
        elbow = (base[0] + arm.a1 * u[0], base[1] + arm.a1 * u[1])
        tool = (elbow[0] + arm.a2 * math.cos(t12), elbow[1] + arm.a2 * math.sin(t12))
        far, side = arm.a1 + 2 * radii[0], 2 * radii[0]
        front = shapely.Polygon(
            [
                (base[0] - side * -u[1], base[1] - side * u[0]),
                (base[0] + far * u[0] - side * -u[1], base[1] + far * u[1] - side * u[0]),
                (base[0] + far * u[0] + side * -u[1], base[1] + far * u[1] + side * u[0]),
                (base[0] + side * -u[1], base[1] + side * u[0]),
            ]
        )
        link1 = shapely.LineString([base, elbow]).buffer(radii[0], quad_segs=quad)
        best, best_f = math.inf, -1
        for geom, fx in (
            (link1.difference(disc).intersection(front), link_fx),
            (shapely.LineString([elbow, tool]).buffer(radii[1], quad_segs=quad), link_fx),
            (shapely.Point(tool).buffer(tool_radius, quad_segs=quad), tool_fx),
        ):
            for k, poly in fx:
                d = geom.distance(poly)
                if d < best:
                    best, best_f = d, int(k)
        out[i], which[i] = best, best_f
    return out, which


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="tiny run, bar not enforced")
    args = parser.parse_args(argv)
    n_targets, n_fixtures, repeats = (40, 10, 3) if args.quick else (500, 80, 40)

    from kinematics.bodies import arm_bodies, link_blocking, tool_blocking
    from kinematics.clearance import arm_clearance
    from kinematics.ik import solve_arm

    arm, fixtures, targets = build(n_targets, n_fixtures)
    xy = np.array([(t.x, t.y) for t in targets])
    q = solve_arm(arm, xy[:, 0], xy[:, 1]).q_deg  # (N, 2 configurations, 2 joints)
    ab = arm_bodies(arm)
    lmask = link_blocking(arm, fixtures)
    tmask = tool_blocking(arm, fixtures)

    arm_clearance(arm, fixtures, q, bodies=ab)  # warm caches
    engine = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        res = arm_clearance(arm, fixtures, q, bodies=ab)
        engine.append(time.perf_counter() - t0)
    t_eng = min(engine)
    qq = q.reshape(-1, 2)
    t0 = time.perf_counter()
    buf, _ = reference(arm, fixtures, qq, lmask, tmask, ab.link_radii, 25.0)
    t_ref = time.perf_counter() - t0
    fine, _ = reference(arm, fixtures, qq, lmask, tmask, ab.link_radii, 25.0, FINE_SEGS)

    got = res.clearance.reshape(-1)
    # Buffered circles are inscribed polygons: their gaps exceed the true ones by at most
    # r * (1 - cos(pi / (4 * quad_segs))) (and the disc's chords by as much inside it).
    rmax = max(ab.link_radii + (25.0,))
    fine_err = rmax * (1 - math.cos(math.pi / (4 * FINE_SEGS))) + 1e-9
    slack = rmax * (1 - math.cos(math.pi / (4 * QUAD_SEGS))) + 1e-9
    clear = (fine > fine_err) & np.isfinite(fine)
    worst = float(np.max(np.abs(got[clear] - fine[clear]))) if clear.any() else 0.0
    sure = np.abs(fine) > fine_err
    agree = np.array_equal(res.collides.reshape(-1)[sure], ~clear[sure])
    pos = buf > slack
    buf_ok = bool(np.all(np.abs(got[pos] - buf[pos]) <= slack))
    print(
        f"poses: {q.shape[0]} targets x 2 configurations, {len(fixtures)} fixtures "
        f"({int(lmask.sum())} block the links); colliding: {int(res.collides.sum())}"
    )
    print(f"engine: {t_eng * 1e3:.2f} ms (best of {repeats})")
    print(f"  plain shapely loop on the moving bodies: {t_ref * 1e3:.0f} ms ({t_ref / t_eng:.0f}x)")
    print(
        f"agreement: largest difference to the fine reference {worst:.2e} "
        f"(its error <= {fine_err:.1e}), verdicts agree: {agree}; "
        f"within the coarse polygonisation bound: {buf_ok}"
    )
    # Two polygonised arcs can meet in one distance (a capsule end and the disc).
    if worst > 2 * fine_err or not agree or not buf_ok:
        print("clearance: results differ from the shapely reference", file=sys.stderr)
        return 1
    ratio = t_ref / t_eng
    print(f"clearance: {ratio:.0f}x (bar: >= {BAR:.0f}x)")
    if not args.quick and ratio < BAR:
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())

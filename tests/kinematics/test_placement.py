"""Base placement: the exact region, the score map, the best spot and the tolerances.

Reference values come from closed forms named beside each check, from brute-force grids
through the engine's own IK, and from the evaluation ``check`` uses
(:func:`kinematics.evaluate.evaluate_arm`) at moved bases.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
import shapely

from kinematics import placement as pl
from kinematics.bodies import ArmBodies, arm_bodies
from kinematics.cell import Arm, Cell, Fixture, Target
from kinematics.clearance import arm_clearance
from kinematics.ik import solve

FULL = (-180.0, 180.0)


def lens(r: float, R: float, d: float) -> float:
    """Area of the intersection of two discs of radii r and R with centres d apart.

    Weisstein, "Circle-Circle Intersection", MathWorld (valid for |R - r| < d < r + R);
    a disc inside the other gives pi min^2, disjoint discs 0.
    """
    if d >= r + R:
        return 0.0
    if d <= abs(R - r):
        return math.pi * min(r, R) ** 2
    return (
        r * r * math.acos((d * d + r * r - R * R) / (2 * d * r))
        + R * R * math.acos((d * d + R * R - r * r) / (2 * d * R))
        - 0.5 * math.sqrt((-d + r + R) * (d + r - R) * (d - r + R) * (d + r + R))
    )


def one_arm_cell(targets, fixtures=(), **arm_kw) -> Cell:
    arm = Arm(
        "a",
        "A",
        arm_kw.pop("x", 0.0),
        arm_kw.pop("y", 0.0),
        arm_kw.pop("heading", 0.0),
        arm_kw.pop("a1", 400.0),
        arm_kw.pop("a2", 250.0),
        arm_kw.pop("q1", FULL),
        arm_kw.pop("q2", FULL),
        **arm_kw,
    )
    ts = tuple(
        Target(f"t{i}", f"T{i}", float(x), float(y), "a") for i, (x, y) in enumerate(targets)
    )
    return Cell("c", arms=(arm,), fixtures=tuple(fixtures), targets=ts)


def square(cx, cy, half, height=None, kind="column", fid="f"):
    pts = (
        (cx - half, cy - half),
        (cx + half, cy - half),
        (cx + half, cy + half),
        (cx - half, cy + half),
    )
    return Fixture(fid, fid, kind, pts, height)


# ---------------------------------------------------------------------------------------
# the exact region


def test_one_target_full_ranges_is_the_annulus_about_the_target():
    # Closed form, derived: with full joint ranges the bases reaching t are those at
    # distance |a1 - a2| .. a1 + a2 from it; area pi((a1 + a2)^2 - (a1 - a2)^2).
    p = pl.placement_problem(one_arm_cell([(120.0, -40.0)]))
    reg = pl.placement_region(p)
    exact = math.pi * ((400 + 250) ** 2 - (400 - 250) ** 2)
    assert reg.area == pytest.approx(exact, rel=1e-4)
    assert not reg.empty and reg.blocking_targets == ()
    # It is centred on the target: its hole is the inner circle about (120, -40).
    assert shapely.contains_xy(reg.geometry, 120.0 + 400.0, -40.0)
    assert not shapely.contains_xy(reg.geometry, 120.0 + 100.0, -40.0)


@pytest.mark.parametrize("d", [500.0, 200.0, 1000.0])
def test_two_targets_full_ranges_match_the_lens_formula(d):
    # Two annuli [r, R] d apart intersect in L(R,R) - L(R,r) - L(r,R) + L(r,r)
    # (inclusion-exclusion over the lens areas; Weisstein, "Circle-Circle Intersection").
    r, R = 150.0, 650.0
    expected = lens(R, R, d) - lens(R, r, d) - lens(r, R, d) + lens(r, r, d)
    p = pl.placement_problem(one_arm_cell([(0.0, 0.0), (d, 0.0)]))
    assert pl.placement_region(p).area == pytest.approx(expected, rel=1e-4)


def test_two_target_check_value_from_the_reference_table():
    # a1 = 400, a2 = 250, d = 500: 552,352.73 (reference table, recomputed with shapely at
    # 4096 segments per quarter: 552,352.71); and the MathWorld lens check r = R = 1, d = 1.
    assert lens(1.0, 1.0, 1.0) == pytest.approx(2 * math.pi / 3 - math.sqrt(3) / 2, abs=1e-6)
    p = pl.placement_problem(one_arm_cell([(0.0, 0.0), (500.0, 0.0)]))
    assert pl.placement_region(p).area == pytest.approx(552352.73, rel=1e-4)


def test_limited_ranges_against_a_brute_force_grid_of_bases():
    # Brute force: every base of a fine grid checked by the engine's IK (limits, elbow
    # setting); the area of the grid cells that reach every target must match the exact
    # region within the grid's resolution (perimeter x pitch bounds the boundary cells).
    targets = [(300.0, 200.0), (-150.0, 350.0), (100.0, -200.0)]
    cell = one_arm_cell(targets, q1=(-100.0, 130.0), q2=(-150.0, 120.0), heading=30.0, elbow="any")
    p = pl.placement_problem(cell)
    reg = pl.placement_region(p)
    x0, y0, x1, y1 = reg.geometry.bounds
    pitch = 4.0
    xs = np.arange(x0 - 10, x1 + 10, pitch)
    ys = np.arange(y0 - 10, y1 + 10, pitch)
    gx, gy = (a.ravel() for a in np.meshgrid(xs, ys))
    a = p.arm
    ik = solve(
        a.a1,
        a.a2,
        p.xy[None, :, 0],
        p.xy[None, :, 1],
        gx[:, None],
        gy[:, None],
        a.heading_deg,
        a.q1_limits,
        a.q2_limits,
        a.elbow,
    )
    brute = ik.feasible.all(axis=1).sum() * pitch * pitch
    assert reg.area > 0
    assert abs(brute - reg.area) <= reg.geometry.length * pitch
    # And pointwise: grid bases clearly inside / outside agree with the IK.
    inside = shapely.contains_xy(reg.geometry, gx, gy)
    far = shapely.distance(reg.geometry.boundary, shapely.points(gx, gy)) > 1.0
    assert np.array_equal(inside[far], ik.feasible.all(axis=1)[far])


def test_elbow_setting_narrows_the_region():
    t = [(300.0, 200.0), (-150.0, 350.0)]
    kw = dict(q1=(-90.0, 90.0), q2=(-150.0, 150.0))
    any_ = pl.placement_region(pl.placement_problem(one_arm_cell(t, **kw))).area
    pos = pl.placement_region(pl.placement_problem(one_arm_cell(t, elbow="positive", **kw))).area
    assert 0 < pos < any_


def test_footprint_positions_are_the_minkowski_sum_as_the_engine_judges_them():
    # Where the base footprint touches a blocking column, every target collides: the
    # region's forbidden set must match the engine's own footprint clearance at bases.
    fp = [[-60, -40], [80, -40], [80, 40], [0, 90], [-60, 40]]  # not convex
    col = Fixture("col", "Column", "column", ((300, -50), (360, -30), (340, 40), (290, 20)), 3000)
    cell = one_arm_cell(
        [(200.0, 100.0)], [col], heading=35.0, link_radii=(20.0, 15.0), extra={"base_footprint": fp}
    )
    p = pl.placement_problem(cell)
    forbidden = pl.forbidden_region(p)
    rng = np.random.default_rng(7)
    bx, by = rng.uniform(100, 550, 3000), rng.uniform(-250, 200, 3000)
    body = [b for b in p.bodies.bodies if b.name == "base"]
    only_base = ArmBodies(p.arm, tuple(body), p.bodies.link_radii, False)
    res = arm_clearance(
        p.arm,
        cell.fixtures,
        np.zeros((3000, 2)),
        bodies=only_base,
        base_xy=np.stack([bx, by], axis=1),
    )
    inside = shapely.contains_xy(forbidden, bx, by)
    sure = np.abs(res.clearance) > 1e-6
    assert inside.any() and (~inside).any()
    assert np.array_equal(inside[sure], res.collides[sure])
    # Outside, the distance to the sum is the footprint's clearance.
    d = shapely.distance(forbidden, shapely.points(bx, by))
    out = ~inside & sure
    assert np.allclose(d[out], res.clearance[out], atol=1e-6)


def test_shoulder_disc_without_footprint_keeps_bases_off_blocking_fixtures():
    col = square(0.0, 0.0, 30.0, 3000.0)
    cell = one_arm_cell([(300.0, 0.0)], [col], link_radii=(40.0, 30.0))
    reg = pl.placement_region(pl.placement_problem(cell))
    ring = pl.placement_region(pl.placement_problem(one_arm_cell([(300.0, 0.0)])))
    # Bases 41 from the column's side keep their 40 disc clear; 39 away they touch.
    assert shapely.contains_xy(reg.geometry, -30.0 - 41.0, 0.0)
    assert not shapely.contains_xy(reg.geometry, -30.0 - 39.0, 0.0)
    # Taking away the column costs (about) the square grown by the disc where it overlaps.
    lost = ring.area - reg.area
    grown = shapely.box(-30, -30, 30, 30).buffer(40.0, quad_segs=64)
    assert lost == pytest.approx(ring.geometry.intersection(grown).area, rel=1e-3)


def test_empty_region_names_the_target_that_blocks_it():
    # Three targets close together and one 2000 away: no base reaches them all.
    t = [(300.0, 0.0), (350.0, 100.0), (250.0, -80.0), (2300.0, 0.0)]
    reg = pl.placement_region(pl.placement_problem(one_arm_cell(t, q2=(-150, 150))))
    assert reg.empty and reg.area == 0.0
    assert reg.blocking_targets == ("t3",)
    assert not reg.relaxed.is_empty


def test_region_rings_are_closed_arrays():
    reg = pl.placement_region(pl.placement_problem(one_arm_cell([(0.0, 0.0)])))
    rings = reg.rings
    assert len(rings) == 2  # the annulus: outer ring and hole
    for r in rings:
        assert r.shape[1] == 2 and np.array_equal(r[0], r[-1])


# ---------------------------------------------------------------------------------------
# the score map and the engine's verdicts


def cluttered_cell(**arm_kw) -> Cell:
    rng = np.random.default_rng(11)
    r = rng.uniform(250.0, 480.0, 14)
    a = rng.uniform(-math.pi, math.pi, 14)
    targets = [(float(r[i] * math.cos(a[i])), float(r[i] * math.sin(a[i]))) for i in range(14)]
    fixtures = [
        square(430.0, 240.0, 35.0, 3000.0, fid="col1"),
        square(-300.0, -360.0, 45.0, 700.0, "fixture", "bin"),
        Fixture(
            "guard", "Guard", "guard", ((-650, 520), (650, 520), (650, 545), (-650, 545)), 1800
        ),
        square(-120.0, 420.0, 60.0, 400.0, "table", "low_table"),
        Fixture(
            "ko", "Keep out", "keep-out", ((150, -520), (330, -520), (300, -400), (170, -420)), 0
        ),
        Fixture(
            "ell",
            "L bench",
            "fixture",
            ((-520, 60), (-380, 60), (-380, 120), (-450, 120), (-450, 230), (-520, 230)),
            900,
        ),
    ]
    kw = dict(
        q1=(-160.0, 160.0),
        q2=(-145.0, 145.0),
        link_radii=(30.0, 20.0),
        link_underside_height=600.0,
        heading=90.0,
        extra={"tool_body": {"radius": 25.0}},
    )
    kw.update(arm_kw)
    return one_arm_cell(targets, fixtures, **kw)


def test_kernel_agrees_with_the_engine_pair_by_pair():
    # The compiled kernel against kinematics.ik.solve + kinematics.clearance.arm_clearance
    # with per-pose bases + kinematics.evaluate.choose_configuration.
    p = pl.placement_problem(cluttered_cell())
    assert p.compiled
    rng = np.random.default_rng(3)
    bx, by = rng.uniform(-250, 250, 400), rng.uniform(-250, 250, 400)
    fk, vk, ck = pl.pair_table(p, bx, by, every=True)
    fe, ve, ce = pl.pair_table(p, bx, by, every=True, engine=True)
    assert np.array_equal(fk, fe)
    for j in range(4):  # reach margin, sin q2, limit margins
        a, b = vk[..., j], ve[..., j]
        assert np.array_equal(np.isnan(a), np.isnan(b))
        assert np.allclose(a[~np.isnan(a)], b[~np.isnan(b)], atol=1e-9)
    kc, ec = vk[..., 4:], ve[..., 4:]
    assert np.array_equal(np.isnan(kc), np.isnan(ec))
    clear = ec > 1e-9
    assert clear.any() and (ec < -1e-9).any()
    assert np.allclose(kc[clear], ec[clear], atol=1e-9)
    sure = np.abs(ec) > 1e-9
    assert np.array_equal(kc[sure] <= 0, ec[sure] <= 0)
    # Feasibility is identical; the chosen configuration too, except where the two scores
    # tie to rounding (the engine then breaks the tie by float noise in the tool point).
    assert np.array_equal(ck >= 0, ce >= 0)
    width = 2 * p.bodies.min_link_radius
    s = np.minimum(np.minimum(ve[..., 2:4] / 10.0, ve[..., 4:] / width), 1.0)
    tie = np.abs(s[..., 0] - s[..., 1]) < 1e-9
    assert np.array_equal(ck[~tie], ce[~tie])


def shoulder_cell(**arm_kw) -> Cell:
    """Small blocking columns that bases are put beside: behind, beside and in front of the
    shoulder, where link 1's whole capsule and its moving part (less the shoulder disc)
    differ by up to two link radii."""
    rng = np.random.default_rng(17)
    r = rng.uniform(260.0, 470.0, 10)
    a = rng.uniform(-math.pi, math.pi, 10)
    targets = [(float(r[i] * math.cos(a[i])), float(r[i] * math.sin(a[i]))) for i in range(10)]
    fixtures = [
        square(0.0, -70.0, 12.0, 3000.0, fid="post_s"),
        square(85.0, 10.0, 9.0, 3000.0, fid="post_e"),
        Fixture("wedge", "Wedge", "fixture", ((-95, 40), (-60, 30), (-70, 75)), 900),
        square(-20.0, 700.0, 40.0, 3000.0, fid="far_col"),
    ]
    kw = dict(
        q1=(-170.0, 170.0),
        q2=(-150.0, 150.0),
        link_radii=(30.0, 20.0),
        link_underside_height=600.0,
        heading=90.0,
        extra={"tool_body": {"radius": 15.0}},
    )
    kw.update(arm_kw)
    return one_arm_cell(targets, fixtures, **kw)


def _shoulder_bases(cell: Cell, n: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Bases whose shoulder disc (radius 30) is near a small post: 25 to 110 from one,
    so some overlap it (base overlap) and most leave it just behind or beside link 1."""
    rng = np.random.default_rng(seed)
    posts = shapely.union_all([shapely.Polygon(f.outline) for f in cell.fixtures[:3]])
    bx, by = rng.uniform(-160, 160, 40 * n), rng.uniform(-160, 160, 40 * n)
    d = shapely.distance(posts, shapely.points(bx, by))
    keep = np.flatnonzero((d > 25.0) & (d < 110.0))[:n]
    return bx[keep], by[keep]


def test_kernel_follows_the_engine_beside_the_shoulder():
    # The compiled kernel against the evaluation check uses at moved bases
    # (kinematics.evaluate.evaluate_arm via placement.evaluate_at: clearance of the moving
    # bodies, kinematics.clearance.arm_clearance; the base checked once, Status.BASE_OVERLAP),
    # with fixtures where link 1's moving part and its whole capsule differ.
    from kinematics.ik import Status

    cell = shoulder_cell()
    p = pl.placement_problem(cell)
    assert p.compiled
    bx, by = _shoulder_bases(cell, 160, 2)
    assert len(bx) == 160
    cap = 10.0 * p.reach  # above every clearance here: the kernel's values are uncapped
    flags, values, chosen = pl.pair_table(p, bx, by, cap=cap, every=True)
    whole_differs = overlap = 0
    link1 = p.bodies.bodies[0]
    whole = replace(p.bodies, bodies=(replace(link1, trim=0.0), *p.bodies.bodies[1:]))
    for b in range(len(bx)):
        ev = pl.evaluate_at(p, bx[b], by[b])
        ik = ev.ik
        assert np.array_equal(flags[b, :, 0], ik.reachable)
        assert np.array_equal(flags[b, :, 1], ik.singular)
        assert np.array_equal(flags[b, :, 2:4], ik.ok)
        assert np.array_equal(chosen[b] >= 0, ev.feasible)
        if ev.base_clearance <= 0:
            overlap += 1
            assert (ev.status == int(Status.BASE_OVERLAP)).all() and (chosen[b] < 0).all()
        reach = ik.reachable
        assert np.allclose(values[b, reach, 0], ik.reach_margin[reach], atol=1e-9)
        assert np.allclose(values[b, reach, 2:4], ik.limit_margin_deg[reach], atol=1e-9)
        kc, ec = values[b, reach, 4:6], ev.clearance[reach]
        clear = ec > 1e-9
        assert np.allclose(kc[clear], ec[clear], atol=1e-9)
        hit = ec < -1e-9
        assert (kc[hit] <= 0).all()
        # Where the engine's choice is not a tie to rounding, the kernel chooses the same.
        s = ev.score[reach]
        tie = np.abs(s[:, 0] - s[:, 1]) < 1e-9
        assert np.array_equal(chosen[b, reach][~tie], ev.chosen[reach][~tie])
        # The same poses with link 1 as its whole capsule: often another clearance.
        w = arm_clearance(ev.arm, cell.fixtures, ik.q_deg[reach], bodies=replace(whole, arm=ev.arm))
        whole_differs += int(np.sum(np.abs(w.clearance - ec) > 1e-6))
    assert overlap > 0 and overlap < len(bx)
    assert whole_differs > 50  # the fixtures do sit where the two bodies differ


def test_map_clearance_counts_the_base_body():
    # The map's smallest clearance is over the chosen configurations' clearances and the
    # base body's (the shoulder disc here), as evaluate_arm reports them (capped).
    cell = shoulder_cell()
    p = pl.placement_problem(cell)
    m = pl.score_map(p, pitch=16.0, zone=shapely.box(-160, -160, 160, 160))
    gx, gy = np.meshgrid(m.x, m.y)
    posts = shapely.union_all([shapely.Polygon(f.outline) for f in cell.fixtures[:3]])
    d = shapely.distance(posts, shapely.points(gx.ravel(), gy.ravel())).reshape(gx.shape)
    rows, cols = np.nonzero((d > 25.0) & (d < 110.0))
    assert len(rows) > 60
    capped = base_limited = 0
    for j, i in zip(rows[::3], cols[::3]):
        ev = pl.evaluate_at(p, m.x[i], m.y[j])
        assert m.feasible[j, i] == int(ev.feasible.sum())
        if not ev.feasible.any():
            continue
        k = ev.chosen[ev.feasible]
        c = ev.clearance[ev.feasible][np.arange(len(k)), k]
        expect = min(float(c.min()), ev.base_clearance, p.clearance_full)
        capped += int(expect == p.clearance_full)
        base_limited += int(ev.base_clearance < min(float(c.min()), p.clearance_full))
        assert m.clearance[j, i] == pytest.approx(expect, abs=1e-9)
        lm = ev.ik.limit_margin_deg[ev.feasible][np.arange(len(k)), k].min()
        assert m.limit_margin[j, i] == pytest.approx(lm, abs=1e-9)
    assert base_limited > 0 and capped < len(rows[::3])


def test_engine_path_follows_the_base_rule_and_the_moving_bodies():
    # pair_table's engine path (arms with outlines) measures the same things as the kernel.
    cell = shoulder_cell()
    p = pl.placement_problem(cell)
    bx, by = _shoulder_bases(cell, 120, 6)
    cap = 10.0 * p.reach
    fk, vk, ck = pl.pair_table(p, bx, by, cap=cap, every=True)
    fe, ve, ce = pl.pair_table(p, bx, by, cap=cap, every=True, engine=True)
    assert np.array_equal(fk, fe)
    assert np.array_equal(ck >= 0, ce >= 0)
    ok = ~np.isnan(ve[..., 4:6]) & (np.abs(ve[..., 4:6]) > 1e-9)
    kc, ec = vk[..., 4:6], ve[..., 4:6]
    pos = ok & (ec > 0)
    assert pos.any() and np.allclose(kc[pos], ec[pos], atol=1e-9)
    assert np.array_equal(kc[ok & (ec < 0)] <= 0, np.ones(int((ok & (ec < 0)).sum()), bool))


def test_map_counts_what_check_would_report_at_each_base():
    cell = cluttered_cell()
    p = pl.placement_problem(cell)
    m = pl.score_map(p, pitch=25.0)
    rng = np.random.default_rng(5)
    rows = rng.integers(0, m.shape[0], 25)
    cols = rng.integers(0, m.shape[1], 25)
    for j, i in zip(rows, cols):
        if not m.inside[j, i]:
            continue
        ev = pl.evaluate_at(p, m.x[i], m.y[j])
        assert m.feasible[j, i] == int(ev.feasible.sum())
        if ev.feasible.any():
            rm = ev.ik.reach_margin[ev.feasible].min()
            assert m.reach_margin[j, i] == pytest.approx(rm, abs=1e-9)


def test_engine_path_for_outline_bodies_matches_the_evaluation():
    # A tool outline is not in the kernel: the map goes through the engine.
    cell = cluttered_cell(
        extra={"tool_body": {"outline": [[-20, -15], [30, -15], [30, 15], [-20, 15]]}}
    )
    p = pl.placement_problem(cell)
    assert not p.compiled
    m = pl.score_map(p, pitch=60.0)
    j, i = m.best_index()
    assert m.feasible[j, i] == int(pl.evaluate_at(p, m.x[i], m.y[j]).feasible.sum())


def test_score_is_feasible_count_plus_quality_in_zero_one():
    p = pl.placement_problem(cluttered_cell())
    m = pl.score_map(p, pitch=30.0)
    ok = m.feasible >= 0
    q = m.score[ok] - m.feasible[ok]
    assert np.all((q >= 0) & (q <= 1))
    # Other weights: only clearance counts -> the quality is the clearance term.
    from kinematics.layout_keys import ScoreWeights

    w = ScoreWeights(0.0, 0.0, 1.0)
    r = m.rescored(w)
    some = ok & (m.feasible > 0)
    expect = np.clip(m.clearance[some] / p.clearance_full, 0, 1)
    assert np.allclose(r.score[some] - m.feasible[some], expect)


def test_map_steps_come_coarse_first_and_can_stop():
    p = pl.placement_problem(cluttered_cell())
    steps = pl.score_map_steps(p, pitch=4.0, chunk_bases=300)
    first = next(steps)
    assert first.stage == "coarse" and first.map.complete
    second = next(steps)
    assert second.stage == "refined" and 0 < second.done < 1 and not second.map.complete
    assert np.isnan(second.map.score).any()  # rows still to come
    steps.close()  # cancelled between chunks
    full = pl.score_map(p, pitch=20.0)
    assert full.complete and np.isfinite(full.score[full.inside]).all()


# ---------------------------------------------------------------------------------------
# best spot and tolerances


def test_best_position_is_at_least_as_good_as_every_grid_point():
    p = pl.placement_problem(cluttered_cell())
    m = pl.score_map(p, pitch=20.0)
    best = pl.best_position(p, m)
    assert best.score >= np.nanmax(m.score) - 1e-12
    # Its feasible count is the engine's, and matches the score's whole part.
    assert best.feasible_targets == int(pl.evaluate_at(p, best.x, best.y).feasible.sum())
    assert 0.0 <= best.score - best.feasible_targets <= 1.0


def test_heading_search_finds_a_heading_no_worse():
    # q1 limits of only +-60 deg: the heading decides which targets are reachable.
    cell = one_arm_cell(
        [(500.0, 100.0), (450.0, -150.0), (-300.0, 420.0)],
        q1=(-60, 60),
        q2=(-145, 145),
        heading=-90.0,
    )
    p = pl.placement_problem(cell)
    m = pl.score_map(p, pitch=20.0)
    here = pl.best_position(p, m)
    searched = pl.best_position(p, m, heading_search=True)
    assert searched.score >= here.score
    assert searched.feasible_targets == 3


def _feasible_everywhere(p, xs, ys):
    return [bool(pl.evaluate_at(p, x, y).feasible.all()) for x, y in zip(xs, ys)]


@pytest.mark.parametrize("kind", ["region", "collision"])
def test_tolerance_disc(kind):
    # Every base on a circle of 0.999 x the tolerance keeps every target feasible by the
    # evaluation check uses; some base within 1.01 x the tolerance loses one.
    if kind == "region":
        cell = one_arm_cell([(300.0, 0.0), (0.0, 380.0)], q2=(-150, 150), link_radii=(20, 15))
    else:
        cell = one_arm_cell(
            [(300.0, 0.0), (0.0, 380.0)],
            [square(180.0, 250.0, 25.0, 3000.0)],
            q2=(-150, 150),
            link_radii=(20, 15),
            elbow="negative",
        )
    p = pl.placement_problem(cell)
    tol = pl.placement_tolerance(p)
    assert tol.radius is not None and tol.radius > 50 * tol.precision
    assert tol.limited_by == kind
    ang = np.linspace(0, 2 * np.pi, 720, endpoint=False)
    r = 0.999 * tol.radius
    assert all(_feasible_everywhere(p, r * np.cos(ang), r * np.sin(ang)))
    rr = np.linspace(tol.radius, 1.01 * tol.radius, 6)
    a2, r2 = np.meshgrid(np.linspace(0, 2 * np.pi, 1440, endpoint=False), rr)
    xs, ys = (r2 * np.cos(a2)).ravel(), (r2 * np.sin(a2)).ravel()
    flags, values, chosen = pl.pair_table(p, xs, ys)
    lost = ~(chosen >= 0).all(axis=1)
    assert lost.any()
    k = int(np.flatnonzero(lost)[0])
    assert not _feasible_everywhere(p, [xs[k]], [ys[k]])[0]


def test_tolerance_is_none_where_a_target_fails_and_live_state_bounds_it():
    cell = one_arm_cell([(300.0, 0.0), (2000.0, 0.0)])
    p = pl.placement_problem(cell)
    assert pl.placement_tolerance(p).radius is None
    assert pl.heading_tolerance(p) is None
    live = pl.live_state(p, 0.0, 0.0)
    assert not live.all_feasible and live.feasible_targets == 1
    ok = pl.placement_problem(one_arm_cell([(300.0, 0.0), (0.0, 380.0)], q2=(-150, 150)))
    live = pl.live_state(ok, 0.0, 0.0)
    tol = pl.placement_tolerance(ok)
    assert live.all_feasible
    assert live.tolerance_at_least <= tol.radius + 1e-9 <= live.region_distance + 1e-9


def test_heading_tolerance_from_the_q1_limits():
    # q1 within [-90, 120]; target straight ahead at full stretch (q1 = 0): turning the
    # heading by t shifts q1 by -t, so t may go from -120 to +90 (derived).
    cell = one_arm_cell([(650.0, 0.0)], q1=(-90.0, 120.0), q2=(-150.0, 150.0))
    minus, plus = pl.heading_tolerance(pl.placement_problem(cell))
    assert minus == pytest.approx(120.0, abs=1e-9) and plus == pytest.approx(90.0, abs=1e-9)


def test_heading_tolerance_with_a_footprint_against_turning_the_arm():
    # A long footprint beside a column: the footprint's first touch ends the range; the
    # reported range is within 0.01 degree of where the engine's evaluation flips.
    fp = [[-40, -20], [200, -20], [200, 20], [-40, 20]]
    cell = one_arm_cell(
        [(0.0, 400.0)],
        [square(150.0, 140.0, 20.0, 3000.0)],
        heading=0.0,
        q2=(-150, 150),
        link_radii=(15, 10),
        extra={"base_footprint": fp},
    )
    p = pl.placement_problem(cell)
    minus, plus = pl.heading_tolerance(p)
    assert plus < 60.0
    ok_at = lambda h: bool(pl.evaluate_at(p, 0.0, 0.0, h).feasible.all())  # noqa: E731
    assert ok_at(plus - 0.005)
    assert not ok_at(plus + 0.015)


def test_move_base_and_the_live_state_are_pure():
    cell = cluttered_cell()
    moved = pl.move_base(cell, "a", 10.0, 20.0, 45.0)
    assert cell.arms[0].x == 0.0 and moved.arms[0].x == 10.0 and moved.arms[0].heading_deg == 45.0
    assert moved.fixtures is cell.fixtures


def test_arm_without_targets():
    p = pl.placement_problem(one_arm_cell([]))
    reg = pl.placement_region(p)
    assert not reg.bounded and not reg.empty
    assert pl.placement_tolerance(p).radius is None


def test_bodies_frames_base_xy_moves_only_the_base():
    # The additive base_xy argument: frames at another base are the same frames shifted.
    cell = cluttered_cell()
    arm = cell.arms[0]
    from kinematics.bodies import frames

    q = np.array([[30.0, 40.0], [-20.0, 100.0]])
    o1, t1 = frames(arm, q)
    o2, t2 = frames(arm, q, base_xy=[[100.0, -50.0], [7.0, 8.0]])
    assert np.allclose(o2 - o1, np.array([[100.0, -50.0], [7.0, 8.0]])[:, None, :])
    assert np.array_equal(t1, t2)
    moved = replace(arm, x=100.0, y=-50.0)
    r1 = arm_clearance(moved, cell.fixtures, q[:1], bodies=arm_bodies(moved))
    r2 = arm_clearance(arm, cell.fixtures, q[:1], bodies=arm_bodies(arm), base_xy=[[100.0, -50.0]])
    assert r1.clearance[0] == pytest.approx(r2.clearance[0], abs=1e-12)

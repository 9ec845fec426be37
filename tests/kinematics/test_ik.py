"""Inverse kinematics against outside references: worked examples, sympy, scipy, round trips."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from kinematics.fk import forward
from kinematics.ik import ELBOWS, Status, solve

POS, NEG = 0, 1


def sympy_r(p: int, q: int):
    """An exact rational, so the sympy reference sees the exact target."""
    import sympy as sp

    return sp.Rational(p, q)


# --- Worked examples (values copied with their sources; angles in degrees) -------------------

# Numerical-methods textbook exercise (two-link arm, Newton's method; "Fig. 4.8"), as posted on
# a Q&A site: a1 = 1, a2 = 2, target (2.5, 1.4); quoted to 3 decimals.
TEXTBOOK = dict(a1=1.0, a2=2.0, x=2.5, y=1.4, pos=(4.637, 36.631), neg=(53.861, -36.631))

# Worked exam problem with joint limits 0 <= q1 <= 180, -120 <= q2 <= 120 (Q&A archive),
# a1 = 400, a2 = 250; quoted to 2 decimals.
EXAM_LIMITS = dict(q1_limits=(0.0, 180.0), q2_limits=(-120.0, 120.0))


def test_textbook_newton_example_both_configurations():
    r = solve(TEXTBOOK["a1"], TEXTBOOK["a2"], TEXTBOOK["x"], TEXTBOOK["y"])
    # Source quotes 3 decimals; allow one unit in the last place for its rounding.
    np.testing.assert_allclose(r.q_deg[POS], TEXTBOOK["pos"], atol=1e-3)
    np.testing.assert_allclose(r.q_deg[NEG], TEXTBOOK["neg"], atol=1e-3)


def test_textbook_newton_start_converges_to_positive():
    # Same source: Newton's method from (0.8, 0.9) rad converges to the positive solution.
    a1, a2, x, y = 1.0, 2.0, 2.5, 1.4
    q = np.array([0.8, 0.9])
    for _ in range(50):
        c1, s1 = math.cos(q[0]), math.sin(q[0])
        c12, s12 = math.cos(q[0] + q[1]), math.sin(q[0] + q[1])
        f = np.array([a1 * c1 + a2 * c12 - x, a1 * s1 + a2 * s12 - y])
        jac = np.array([[-a1 * s1 - a2 * s12, -a2 * s12], [a1 * c1 + a2 * c12, a2 * c12]])
        q = q - np.linalg.solve(jac, f)
    r = solve(a1, a2, x, y)
    np.testing.assert_allclose(np.degrees(q), r.q_deg[POS], atol=1e-9)


def test_exam_example_joint_limit_filter():
    # Exam problem (Q&A archive): target (450, 180): positive (-9.18, 86.45) has q1 outside
    # limits, negative (52.79, -86.45) is within limits.
    r = solve(400.0, 250.0, 450.0, 180.0, **EXAM_LIMITS)
    np.testing.assert_allclose(r.q_deg[NEG], (52.79, -86.45), atol=5e-3)
    # Reported q1 is the representative nearest the middle of [0, 180]: -9.18 + 360 is
    # farther than -9.18, which is the wrapped value since none lies inside.
    np.testing.assert_allclose(r.q_deg[POS], (-9.18, 86.45), atol=5e-3)
    assert r.within_limits[POS].tolist() == [False, True]
    assert r.within_limits[NEG].tolist() == [True, True]
    assert bool(r.feasible) and ELBOWS[int(r.chosen)] == "negative"


def test_exam_example_both_within_limits():
    # Exam problem (Q&A archive): target (-200, 400): positive (82.82, 96.46), negative
    # (150.31, -96.46), both within limits.
    r = solve(400.0, 250.0, -200.0, 400.0, **EXAM_LIMITS)
    np.testing.assert_allclose(r.q_deg[POS], (82.82, 96.46), atol=5e-3)
    np.testing.assert_allclose(r.q_deg[NEG], (150.31, -96.46), atol=5e-3)
    assert r.within_limits.all()
    # Chosen: the larger limit margin. Positive: min(82.82, 97.18, 23.54 to q2 limit) = 23.54;
    # negative: min(150.31, 29.69, 23.54) = 23.54: a tie goes to "positive".
    np.testing.assert_allclose(r.limit_margin_deg, [23.54, 23.54], atol=5e-3)
    assert int(r.chosen) == POS


def test_chosen_configuration_has_the_larger_limit_margin():
    # Textbook exercise (see TEXTBOOK) with the shoulder limited to 0..120: positive q1 = 4.637
    # is 4.637 from its limit, negative q1 = 53.861 is 53.861 from it (q2 = -36.631 has 143.4).
    t = TEXTBOOK
    r = solve(t["a1"], t["a2"], t["x"], t["y"], q1_limits=(0.0, 120.0))
    np.testing.assert_allclose(r.limit_margin_deg, [4.637, 53.861], atol=1e-3)
    assert bool(r.feasible) and int(r.chosen) == NEG
    # Shoulder limited to -60..60 instead: 53.861 is 6.139 from 60, 4.637 is 55.363 from it.
    r = solve(t["a1"], t["a2"], t["x"], t["y"], q1_limits=(-60.0, 60.0))
    np.testing.assert_allclose(r.limit_margin_deg, [55.363, 6.139], atol=1e-3)
    assert int(r.chosen) == POS
    # An arm that may only use "negative" takes it even with the smaller margin.
    r = solve(t["a1"], t["a2"], t["x"], t["y"], q1_limits=(-60.0, 60.0), elbow="negative")
    assert bool(r.feasible) and int(r.chosen) == NEG


def test_exam_example_out_of_reach():
    # Exam problem (Q&A archive): target (480, 480): r = 678.8 > 650, no solution.
    r = solve(400.0, 250.0, 480.0, 480.0, **EXAM_LIMITS)
    assert not r.reachable and not r.feasible
    assert int(r.status) == Status.BEYOND_REACH
    assert math.isclose(float(r.r), 678.8, abs_tol=0.05)
    assert math.isclose(float(r.reach_margin), 650.0 - 678.8, abs_tol=0.05)
    assert np.isnan(r.q_deg).all()


def test_hand_derived_equal_links_maximum_manipulability():
    # Derived by hand, no source: a1 = a2 = 1, target (1, 1): positive (0, 90), negative
    # (90, -90); manipulability a1*a2*|sin q2| = 1, its maximum (Yoshikawa 1985).
    r = solve(1.0, 1.0, 1.0, 1.0)
    np.testing.assert_allclose(r.q_deg[POS], (0.0, 90.0), atol=1e-12)
    np.testing.assert_allclose(r.q_deg[NEG], (90.0, -90.0), atol=1e-12)
    np.testing.assert_allclose(r.manipulability, 1.0, atol=1e-12)


# --- Singular poses, holes, limits ------------------------------------------------------------


def test_full_stretch_and_full_fold_are_singular():
    # Standard closed form: singular at q2 = 0 (outer circle) and q2 = 180 (inner circle).
    r = solve(400.0, 250.0, [650.0, 150.0, 400.0], [0.0, 0.0, 0.0])
    assert r.singular.tolist() == [True, True, False]
    np.testing.assert_allclose(r.q_deg[0, :, 1], [0.0, -0.0])
    np.testing.assert_allclose(np.abs(r.q_deg[1, :, 1]), [180.0, 180.0])
    np.testing.assert_allclose(r.manipulability[:2], 0.0, atol=1e-9)


def test_inside_inner_hole():
    r = solve(400.0, 250.0, 100.0, 0.0)
    assert int(r.status) == Status.INSIDE_HOLE
    assert math.isclose(float(r.reach_margin), 100.0 - 150.0)


def test_elbow_setting_excludes_the_only_fitting_configuration():
    # Only "negative" fits the exam limits; an arm restricted to "positive" cannot use it.
    r = solve(400.0, 250.0, 450.0, 180.0, elbow="positive", **EXAM_LIMITS)
    assert not r.feasible and int(r.status) == Status.ELBOW_EXCLUDED
    # Neither configuration fits q1 in [100, 180]: the reason is the q1 limit.
    r = solve(400.0, 250.0, 450.0, 180.0, q1_limits=(100, 180), q2_limits=(-120, 120))
    assert not r.feasible and int(r.status) == Status.Q1_LIMIT
    r = solve(
        400.0, 250.0, 450.0, 180.0, q1_limits=(-90, 90), q2_limits=(-120, 120), elbow="negative"
    )
    # Both within these limits; the arm may only use "negative", which it does.
    assert bool(r.feasible) and int(r.chosen) == NEG
    r = solve(
        400.0, 250.0, 450.0, 180.0, q1_limits=(-90, 20), q2_limits=(-120, 120), elbow="negative"
    )
    assert int(r.status) == Status.ELBOW_EXCLUDED


def test_q2_limit_reason():
    # Elbow angle 86.45 deg is outside +-80.
    r = solve(400.0, 250.0, 450.0, 180.0, q1_limits=(-180, 180), q2_limits=(-80, 80))
    assert int(r.status) == Status.Q2_LIMIT
    np.testing.assert_allclose(r.limit_margin_deg, [-6.45, -6.45], atol=5e-3)


def test_multi_turn_shoulder_representative_nearest_middle():
    # q1 range 0..500 (middle 250): positive q1 = 0 is reported as 360 (110 from the middle,
    # not 250), negative q1 = 90 stays 90 (160 from the middle, not 200 for 450).
    r = solve(1.0, 1.0, 1.0, 1.0, q1_limits=(0.0, 500.0))
    np.testing.assert_allclose(r.q_deg[:, 0], [360.0, 90.0], atol=1e-9)
    # Outside the limits the value wrapped into (-180, 180] is reported.
    r = solve(1.0, 1.0, -1.0, -1.0, q1_limits=(0.0, 90.0))
    np.testing.assert_allclose(r.q_deg[:, 0], [180.0, -90.0], atol=1e-9)
    assert not r.within_limits[:, 0].any()


def test_elbow_setting_is_checked():
    with pytest.raises(ValueError, match='"any", "positive" or "negative", got \'up\''):
        solve(1.0, 1.0, 1.0, 1.0, elbow="up")


def test_base_pose_broadcasts_against_targets():
    # A 3-pose x 4-target grid evaluates in one call and matches per-pose calls.
    bx = np.array([0.0, 50.0, -30.0])[:, None]
    tx = np.array([300.0, 400.0, -200.0, 100.0])[None, :]
    r = solve(400.0, 250.0, tx, 200.0, base_x=bx, heading_deg=30.0)
    assert r.q_deg.shape == (3, 4, 2, 2)
    single = solve(400.0, 250.0, 400.0, 200.0, base_x=50.0, heading_deg=30.0)
    np.testing.assert_allclose(r.q_deg[1, 1], single.q_deg)


# --- Round trip: forward kinematics of both solutions returns the target ----------------------

lengths = st.floats(0.05, 2000.0, allow_nan=False)


@settings(max_examples=100, deadline=None)
@given(
    a1=lengths,
    a2=lengths,
    seed=st.integers(0, 2**32 - 1),
    heading=st.floats(-720.0, 720.0),
    bx=st.floats(-5000.0, 5000.0),
    by=st.floats(-5000.0, 5000.0),
)
def test_round_trip_both_solutions(a1, a2, seed, heading, bx, by):
    # 100 arms x 200 targets = 20,000 reachable targets per run; the reference is the
    # forward equations themselves (tool = base + a1 u(h+q1) + a2 u(h+q1+q2)).
    rng = np.random.default_rng(seed)
    q1 = rng.uniform(-180.0, 180.0, 200)
    q2 = rng.uniform(-180.0, 180.0, 200)
    x, y = forward(a1, a2, q1, q2, bx, by, heading)
    r = solve(a1, a2, x, y, bx, by, heading)
    assert r.reachable.all()
    reach = a1 + a2
    for k in (POS, NEG):
        fx, fy = forward(a1, a2, r.q_deg[:, k, 0], r.q_deg[:, k, 1], bx, by, heading)
        # Error bound 1e-9 of the reach, plus the rounding of the base offset itself.
        tol = 1e-9 * reach + 4e-16 * (abs(bx) + abs(by))
        assert np.max(np.hypot(fx - x, fy - y)) <= tol
    # Both configurations share |q2| and differ in its sign.
    np.testing.assert_allclose(r.q_deg[:, POS, 1], -r.q_deg[:, NEG, 1])
    assert (r.q_deg[:, POS, 1] >= 0).all() and (r.q_deg[:, NEG, 1] <= 0).all()


# --- sympy as reference library: the closed form satisfies the forward equations symbolically --


def test_closed_form_satisfies_forward_equations_symbolically():
    import sympy as sp

    a1, a2, x, y = sp.symbols("a1 a2 x y", positive=True)
    r2 = x**2 + y**2
    c2 = (r2 - a1**2 - a2**2) / (2 * a1 * a2)
    for sign in (1, -1):
        s2 = sign * sp.sqrt(1 - c2**2)
        # q1 = atan2(y, x) - atan2(a2 s2, a1 + a2 c2): write cos/sin of the difference exactly.
        k1, k2 = a1 + a2 * c2, a2 * s2
        rr = sp.sqrt(r2)
        kk = sp.sqrt(k1**2 + k2**2)
        cos_q1 = (x * k1 + y * k2) / (rr * kk)
        sin_q1 = (y * k1 - x * k2) / (rr * kk)
        cos_q12 = cos_q1 * c2 - sin_q1 * s2
        sin_q12 = sin_q1 * c2 + cos_q1 * s2
        fx = a1 * cos_q1 + a2 * cos_q12
        fy = a1 * sin_q1 + a2 * sin_q12
        # |k| equals r for the closed form, which makes both residuals vanish identically.
        assert sp.simplify(k1**2 + k2**2 - r2) == 0
        assert sp.simplify((fx - x).subs(kk, rr)) == 0
        assert sp.simplify((fy - y).subs(kk, rr)) == 0

    # The code takes |sin q2| from the factored form sqrt((rmax^2 - r^2)(r^2 - rmin^2)) / (2 a1 a2)
    # for accuracy near the circles: it equals sqrt(1 - cos^2 q2) identically.
    factored_sq = ((a1 + a2) ** 2 - r2) * (r2 - (a1 - a2) ** 2) / (2 * a1 * a2) ** 2
    assert sp.expand(factored_sq - (1 - c2**2)) == 0


@pytest.mark.parametrize(
    "a1,a2,x,y",
    [
        (sympy_r(7, 10), sympy_r(9, 20), sympy_r(-3, 10), sympy_r(4, 5)),
        (1, 2, sympy_r(5, 2), sympy_r(7, 5)),
        (400, 250, -200, 400),
        (300, 300, sympy_r(-1201, 10), 410),
    ],
)
def test_solution_matches_sympy_closed_form_to_30_digits(a1, a2, x, y):
    # sympy as reference library: the closed form evaluated in exact arithmetic, then to 30
    # digits, against the code's floating-point answer (both configurations).
    import sympy as sp

    a1, a2, x, y = (sp.Rational(v) for v in (a1, a2, x, y))
    q2 = sp.acos((x**2 + y**2 - a1**2 - a2**2) / (2 * a1 * a2))
    ours = solve(float(a1), float(a2), float(x), float(y)).q_deg
    for k, sign in ((POS, 1), (NEG, -1)):
        q2k = sign * q2
        q1 = sp.atan2(y, x) - sp.atan2(a2 * sp.sin(q2k), a1 + a2 * sp.cos(q2k))
        want = [float(sp.N(sp.deg(q1), 30)), float(sp.N(sp.deg(q2k), 30))]
        np.testing.assert_allclose(ours[k], want, rtol=0, atol=1e-10)


# --- scipy.optimize.least_squares from many starts finds both solutions and no others ----------


@pytest.mark.parametrize(
    "a1,a2,x,y",
    [
        (400.0, 250.0, 450.0, 180.0),
        (1.0, 2.0, 2.5, 1.4),
        (300.0, 300.0, -120.0, 410.0),
        (250.0, 400.0, -300.0, -200.0),
    ],
)
def test_least_squares_from_many_starts_finds_exactly_our_two_solutions(a1, a2, x, y):
    from scipy.optimize import least_squares

    def residual(q):
        fx, fy = forward(a1, a2, np.degrees(q[0]), np.degrees(q[1]))
        return [float(fx) - x, float(fy) - y]

    ours = solve(a1, a2, x, y).q_deg
    rng = np.random.default_rng(7)
    found = []
    for start in rng.uniform(-np.pi, np.pi, size=(60, 2)):
        sol = least_squares(residual, start, xtol=1e-14, ftol=1e-14, gtol=1e-14)
        if np.hypot(*residual(sol.x)) > 1e-8 * (a1 + a2):
            continue  # a start that stalls is not a solution
        q = (np.degrees(sol.x) + 180.0) % 360.0 - 180.0
        # Each numerical solution is one of ours (angles compared on the circle).
        d = np.abs(((q[None, :] - ours + 180.0) % 360.0) - 180.0).max(axis=1)
        assert d.min() < 1e-5, f"least_squares found a solution we do not report: {q}"
        found.append(int(np.argmin(d)))
    assert set(found) == {POS, NEG}

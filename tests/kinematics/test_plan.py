"""The configuration plan: exact against brute force, single configuration, forced changes."""

from __future__ import annotations

import itertools
import math
from pathlib import Path

import numpy as np
import pytest

from kinematics.bodies import arm_bodies, clearance_margin, link_blocking, tool_blocking
from kinematics.cell import Arm, Cell, Fixture, Sequence, Target
from kinematics.cellfile import load_cell
from kinematics.clearance import FixtureSet
from kinematics.evaluate import evaluate_arm, evaluate_cell
from kinematics.motion import dwell_time, motion_limits, move_time
from kinematics.plan import cell_planned_moves
from kinematics.report import check_report, format_check_table
from kinematics.sweep import JointPath, sweep_move

ROOT = Path(__file__).resolve().parents[2]


def _random_cell(seed: int, n: int, fixtures: bool, wide_q1: bool = False) -> Cell:
    rng = np.random.default_rng(seed)
    q1 = (-200.0, 200.0) if wide_q1 else (-150.0, 150.0)
    arm = Arm(
        "a",
        "A",
        0.0,
        0.0,
        90.0,
        400.0,
        250.0,
        q1,
        (-145.0, 145.0),
        link_radii=(25.0, 20.0),
        joint_speed_dps=tuple(rng.uniform(150, 500, 2)),
        joint_accel_dps2=tuple(rng.uniform(800, 5000, 2)),
        extra={"tool_body": {"radius": 20.0}},
    )
    fx = []
    if fixtures:
        for k in range(4):
            r, a = rng.uniform(250, 600), rng.uniform(-math.pi, math.pi)
            cx, cy = r * math.cos(a), r * math.sin(a)
            w = rng.uniform(30, 70)
            fx.append(
                Fixture(
                    f"c{k}",
                    f"Column {k}",
                    "column",
                    ((cx - w, cy - w), (cx + w, cy - w), (cx + w, cy + w), (cx - w, cy + w)),
                )
            )
    targets = []
    while len(targets) < n:
        r, a = math.sqrt(rng.uniform(200**2, 620**2)), rng.uniform(-math.pi, math.pi)
        t = Target(
            f"t{len(targets)}",
            f"T{len(targets)}",
            r * math.cos(a),
            r * math.sin(a),
            "a",
            {"dwell_s": float(rng.choice([0.0, 0.2]))},
        )
        if bool(evaluate_arm(arm, [t], fx).feasible[0]):
            targets.append(t)
    ids = [t.id for t in targets]
    if n > 3:
        ids.append(ids[0])  # a target visited twice
    return Cell(
        "random",
        arms=(arm,),
        fixtures=tuple(fx),
        targets=tuple(targets),
        sequences=(Sequence("a", tuple(ids)),),
    )


def _brute_force(cell: Cell) -> tuple[float | None, float | None, int]:
    """Every choice of (configuration, q1 + k*360) at every visit, each move timed with
    move_time and swept with sweep_move (the existing sweep check); cycle must return to
    its start. Returns the best cycle time, the best single-configuration one and how
    many candidate moves collide."""
    arm = cell.arm("a")
    ev = evaluate_arm(arm, cell.targets, cell.fixtures, clearance_margin(cell))
    ab = arm_bodies(arm)
    fs = FixtureSet.of(cell.fixtures)
    lmask = link_blocking(arm, cell.fixtures)
    tmask = tool_blocking(arm, cell.fixtures)  # no work heights: the link rule
    lim = motion_limits(arm)
    seq = cell.sequences[0].targets
    by_id = {t.id: t for t in cell.targets}
    options = []
    for tid in seq:
        i = ev.index(tid)
        opts = []
        for k in (0, 1):
            if not (ev.ik.ok[i, k] and not ev.collides[i, k]):
                continue
            q1, q2 = ev.ik.q_deg[i, k]
            for m in range(-2, 3):
                v = q1 + 360 * m
                if arm.q1_limits[0] - 1e-9 <= v <= arm.q1_limits[1] + 1e-9:
                    opts.append((k, (float(v), float(q2))))
        options.append(opts)
    cache: dict = {}
    hits = 0

    def cost(qa, qb):
        nonlocal hits
        key = (qa, qb)
        if key not in cache:
            # Straight joint path; a change of sign of q2 passes full stretch (allowed here:
            # the q2 limits include 0), q2 never crosses +-180 within +-145.
            path = JointPath(qa, qb, (qa[1] > 0) != (qb[1] > 0), True)
            sw = sweep_move(ab, fs, path, lmask, tmask) if cell.fixtures else None
            if sw is not None and sw.collides:
                hits += 1
                cache[key] = math.inf
            else:
                cache[key] = float(move_time(np.subtract(qb, qa), lim))
        return cache[key]

    dwell = sum(dwell_time(by_id[t]) for t in seq)
    best, single = math.inf, math.inf
    for choice in itertools.product(*options):
        total = sum(cost(choice[p][1], choice[(p + 1) % len(seq)][1]) for p in range(len(seq)))
        best = min(best, total)
        if len({c[0] for c in choice}) == 1:
            single = min(single, total)
    fin = lambda v: None if math.isinf(v) else v + dwell  # noqa: E731
    return fin(best), fin(single), hits


@pytest.mark.parametrize(
    "seed, n, fixtures, wide",
    [(s, 3 + s % 10, s % 2 == 0, False) for s in range(12)]
    + [(40 + s, 3 + s % 4, s % 2 == 0, True) for s in range(4)],
)
def test_plan_equals_brute_force_over_every_choice(seed, n, fixtures, wide):
    cell = _random_cell(seed, n, fixtures, wide)
    plan = evaluate_cell(cell).arms["a"].plans[0]
    best, single, hits = _brute_force(cell)
    if best is None:
        assert plan.cycle_time_s is None
    else:
        assert plan.cycle_time_s == pytest.approx(best, abs=1e-9)
        # The reported segments add up to the cycle time.
        seg = sum(s.time_s + s.dwell_s for s in plan.segments)
        assert seg == pytest.approx(plan.cycle_time_s, abs=1e-9)
    if single is None:
        assert plan.single_configuration_cycle_time_s is None
    else:
        assert plan.single_configuration_cycle_time_s == pytest.approx(single, abs=1e-9)


def test_random_cases_include_collisions_and_mixed_plans():
    # The brute-force comparison above means something only if collisions and mixed plans
    # occur among its cases.
    hits = mixed = 0
    for s in range(12):
        cell = _random_cell(s, 3 + s % 10, s % 2 == 0)
        hits += _brute_force(cell)[2]
        plan = evaluate_cell(cell).arms["a"].plans[0]
        mixed += plan.configuration_changes > 0
    assert hits > 0 and mixed > 0


def test_a_multi_turn_shoulder_takes_the_shorter_turn():
    # Targets at q1 = 170 and -170 (the same side behind the arm): with q1 limits of +-200
    # the plan runs 170 -> 190 (20 degrees), not 340 degrees back round.
    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        400,
        250,
        (-200, 200),
        (0, 145),
        elbow="positive",
        joint_speed_dps=(100, 100),
        joint_accel_dps2=(400, 400),
    )
    ik_r = math.hypot(400 + 250 * math.cos(math.radians(60)), 250 * math.sin(math.radians(60)))
    beta = math.degrees(math.atan2(250 * math.sin(math.radians(60)), 400 + 250 * 0.5))
    ts = []
    for name, q1 in (("p", 170.0), ("q", -170.0)):
        t = math.radians(q1 + beta)
        ts.append(Target(name, name, ik_r * math.cos(t), ik_r * math.sin(t), "a"))
    cell = Cell("c", arms=(arm,), targets=tuple(ts), sequences=(Sequence("a", ("p", "q")),))
    plan = evaluate_cell(cell).arms["a"].plans[0]
    travel = [abs(s.path.delta[0]) for s in plan.segments]
    assert travel == pytest.approx([20.0, 20.0], abs=1e-6)
    # Nagarajan, Introduction to Industrial Robotics, eq. 10.28: 20 deg, 100 deg/s,
    # 400 deg/s^2: 20 < 100^2/400 = 25, a triangle of 2*sqrt(20/400) s each way.
    assert plan.cycle_time_s == pytest.approx(2 * 2 * math.sqrt(20 / 400), abs=1e-9)
    rep = check_report(cell)
    seg = rep["sequences"][0]["segments"][0]
    assert abs(seg["q_to_deg"][0] - seg["q_from_deg"][0]) == pytest.approx(20.0, abs=1e-6)


def test_forced_changes_name_the_targets_that_rule_a_configuration_out():
    # q1 limits that leave p only the positive and q only the negative configuration.
    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        400,
        250,
        (-40, 40),
        (-150, 150),
        joint_speed_dps=(200, 300),
        joint_accel_dps2=(1000, 2000),
    )
    ts = (Target("p", "P", 300, 400, "a"), Target("q", "Q", 500, -100, "a"))
    cell = Cell("c", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))
    ev = evaluate_arm(arm, ts)
    assert ev.ik.ok.sum(axis=1).tolist() == [1, 1] and not ev.ik.ok.all(axis=0).any()
    plan = evaluate_cell(cell).arms["a"].plans[0]
    assert plan.single_configuration_cycle_time_s is None
    assert plan.forced_changes == ("p", "q")
    assert plan.cycle_time_s is not None and plan.configuration_changes == 2


def test_an_arm_without_speed_data_gets_no_time_and_keeps_the_one_configuration_rule():
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (-60, 120), (-150, 150), joint_speed_dps=(200, 300))
    ts = (Target("p", "P", 300, 400, "a"), Target("q", "Q", 500, -100, "a"))
    cell = Cell("c", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))
    ev = evaluate_cell(cell).arms["a"]
    assert ev.plans[0].missing == ("joint_accel_dps2",) and ev.plans[0].cycle_time_s is None
    assert len(set(ev.chosen.tolist())) == 1
    rep = check_report(cell)["sequences"][0]
    assert rep["missing"] == ["joint_accel_dps2"] and rep["cycle_time_s"] is None
    assert rep["segments"] == [] and rep["parts_per_minute"] is None


def test_check_reports_the_planned_configurations_and_the_moves_between_them():
    cell = load_cell(ROOT / "sample_cells" / "press_elbow_change.cell.json")
    ev = evaluate_cell(cell)
    plan = ev.arms["loader"].plans[0]
    moves = cell_planned_moves(cell, ev)
    assert [(m.from_id, m.to_id) for m in moves] == [(s.from_id, s.to_id) for s in plan.segments]
    assert [m.path.changes_configuration for m in moves] == [
        s.changes_configuration for s in plan.segments
    ]
    assert all(m.collides is False for m in moves)
    rep = check_report(cell, ev)
    by_id = {t["id"]: t for t in rep["targets"]}
    for s in plan.segments:
        assert by_id[s.from_id]["chosen_elbow"] == s.state_from.elbow
    assert [m["changes_configuration"] for m in rep["moves"]] == [
        s.changes_configuration for s in plan.segments
    ]


def test_demo_cell_changes_configuration_once_and_one_configuration_is_slower():
    # A cycle that changes configuration must change back before it repeats: one run of
    # each configuration, two moves through full stretch.
    cell = load_cell(ROOT / "sample_cells" / "press_elbow_change.cell.json")
    plan = evaluate_cell(cell).arms["loader"].plans[0]
    elbows = [s.state_from.elbow for s in plan.segments]
    runs = sum(1 for a, b in zip(elbows, elbows[1:] + elbows[:1]) if a != b)
    assert runs == 2 and plan.configuration_changes == 2
    assert plan.single_configuration_cycle_time_s > plan.cycle_time_s + 0.1
    text = format_check_table(check_report(cell))
    assert f"cycle {plan.cycle_time_s:.3f} s" in text
    assert f"one configuration throughout {plan.single_configuration_cycle_time_s:.3f} s" in text

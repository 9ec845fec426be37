"""Cycle time: the configuration plan of a long sequence, and two arms run together.

Builds invented cells in code:

* plan: one arm (elbow "any", both configurations usable), 40 fixtures (tables it passes
  over, bins, columns, keep-out zones, a guard ring) and a 200-target sequence of
  targets it can reach, visited around the arm in a jittered order; times
  :func:`kinematics.plan.plan_arm` (the exact plan, the best single-configuration plan and
  the cycle time) from the evaluated targets, median of several runs, each with a fresh
  collision cache;
* interference: two facing arms with 100-target cycles each working over a shared
  table; times :func:`kinematics.interference.cell_interference` (contacts, smallest
  separation, shared-zone occupancy, start shift), median.

Floors and references, from the same run:

* ruckig: the time of one two-joint ruckig call (through ``move_time`` on distinct
  moves), times the number of moves the plan times: the plan can be no faster than that;
* a naive plan: every candidate move swept with ``sweep_move`` before planning
  (no lazy checks, no Lipschitz pre-check), once;
* interference: the time of one arm-to-arm distance evaluation (per pose pair), times
  the evaluations the search made.

Final lines: ``plan: <median> ms (bar: < 50 ms median)`` and then
``interference: <median> ms (bar: < 200 ms median)``; the exit status is non-zero when a
median misses its bar (not enforced with ``--quick``).
"""

from __future__ import annotations

import argparse
import math
import statistics
import sys
import time

import numpy as np
from ruckig import InputParameter, Ruckig, Synchronization, Trajectory

PLAN_BAR_MS = 50.0
INTERFERENCE_BAR_MS = 200.0


def _rect(cx, cy, w, h, th):
    c, s = math.cos(th), math.sin(th)
    local = np.array([[-w, -h], [w, -h], [w, h], [-w, h]]) / 2
    return local @ np.array([[c, s], [-s, c]]) + [cx, cy]


def build_plan_cell(n_targets: int, n_fixtures: int, seed: int = 5):
    """One arm, fixtures around it, a sequence of reachable targets."""
    from kinematics.cell import Arm, Cell, Fixture, Sequence, Target
    from kinematics.evaluate import evaluate_arm

    rng = np.random.default_rng(seed)
    arm = Arm(
        "arm",
        "Loader",
        0.0,
        0.0,
        90.0,
        400.0,
        250.0,
        (-170, 170),
        (-145, 145),
        link_radii=(30.0, 22.0),
        link_underside_height=600.0,
        joint_speed_dps=(420.0, 540.0),
        joint_accel_dps2=(3200.0, 4200.0),
        extra={"tool_body": {"radius": 25.0}},
    )
    # Tables the links pass over; bins, columns and keep-out zones near the edge of reach.
    kinds = [("table", 450.0, (250, 600), (60, 160))] * 16
    kinds += [("fixture", 700.0, (640, 700), (30, 60))] * 10
    kinds += [("column", 2500.0, (660, 720), (30, 45))] * 4
    kinds += [("keep-out", 0.0, (650, 720), (40, 80))] * 2
    kinds = kinds[:n_fixtures]
    fixtures = []
    for i, (kind, height, (r0, r1), (s0, s1)) in enumerate(kinds):
        r, a = rng.uniform(r0, r1), rng.uniform(-math.pi, math.pi)
        w, h = rng.uniform(s0, s1, 2)
        pts = _rect(r * math.cos(a), r * math.sin(a), w, h, rng.uniform(0, math.pi))
        fixtures.append(
            Fixture(f"f{i}", f"{kind} {i}", kind, tuple(map(tuple, pts.tolist())), height)
        )
    n_guard = max(0, n_fixtures - len(fixtures))
    for k in range(n_guard):
        a = 2 * math.pi * k / max(n_guard, 1)
        pts = _rect(900 * math.cos(a), 900 * math.sin(a), 20.0, 2 * math.pi * 900 / n_guard, a)
        fixtures.append(
            Fixture(f"g{k}", f"guard {k}", "guard", tuple(map(tuple, pts.tolist())), 1800.0)
        )
    from kinematics.plan import plan_sequence

    targets = []
    while len(targets) < 2 * n_targets:
        r = math.sqrt(rng.uniform(260.0**2, 560.0**2))
        a = math.radians(90.0 + rng.uniform(-140.0, 140.0))  # in front of the arm
        tid = f"t{len(targets)}"
        t = Target(tid, tid, r * math.cos(a), r * math.sin(a), "arm")
        ev = evaluate_arm(arm, [t], fixtures)
        if bool(ev.feasible[0]):
            targets.append(t)
    ang = np.array([math.atan2(t.y, t.x) for t in targets]) + rng.normal(0, 0.15, len(targets))
    by_angle = [targets[k] for k in np.argsort(ang)]
    # Out along one half, back along the other: no long wrap behind the arm.
    pool = by_angle[0::2] + by_angle[1::2][::-1]
    # Keep a target only when some clear move leads to it from the last one kept (so the
    # sequence has a plan); setup, not timed.
    ev_all = evaluate_arm(arm, pool, fixtures)
    kept = [pool[0]]
    for t in pool[1:]:
        if len(kept) == n_targets:
            break
        trial = Cell(
            "probe",
            arms=(arm,),
            fixtures=tuple(fixtures),
            targets=tuple(pool),
            sequences=(Sequence("arm", (kept[-1].id, t.id)),),
        )
        if plan_sequence(trial, ev_all, 0).cycle_time_s is not None:
            kept.append(t)
    order = [t.id for t in kept]
    cell = Cell(
        "plan bench",
        arms=(arm,),
        fixtures=tuple(fixtures),
        targets=tuple(kept),
        sequences=(Sequence("arm", tuple(order)),),
    )
    return cell


def build_two_arm_cell(n_targets: int, seed: int = 9):
    """Two facing arms that each alternate between their own bins and a shared table."""
    from kinematics.cell import Arm, Cell, Fixture, Sequence, Target

    rng = np.random.default_rng(seed)
    arms = []
    for aid, x, heading in (("left", 0.0, 0.0), ("right", 1000.0, 180.0)):
        arms.append(
            Arm(
                aid,
                aid,
                x,
                0.0,
                heading,
                350.0,
                250.0,
                (-150, 150),
                (-145, 145),
                link_radii=(32.0, 28.0),
                link_underside_height=820.0,
                joint_speed_dps=(380.0, 500.0),
                joint_accel_dps2=(2800.0, 3800.0),
                extra={"tool_body": {"radius": 25.0}},
            )
        )
    outline = ((440, -150), (560, -150), (560, 150), (440, 150))
    table = Fixture("table", "Shared table", "table", outline, 700)
    targets, seqs = [], []
    for arm, sign in ((arms[0], 1.0), (arms[1], -1.0)):
        ids = []
        for k in range(n_targets):
            if k % 2 == 0:  # own bins, behind the arm
                r, a = rng.uniform(300, 560), rng.uniform(0.6 * math.pi, 1.3 * math.pi)
                x, y = arm.x + sign * r * math.cos(a), r * math.sin(a)
            else:  # the shared table
                x, y = 500 + rng.uniform(-50, 50), rng.uniform(-130, 130)
            tid = f"{arm.id}{k}"
            targets.append(Target(tid, tid, float(x), float(y), arm.id, {"dwell_s": 0.05}))
            ids.append(tid)
        seqs.append(Sequence(arm.id, tuple(ids)))
    return Cell(
        "interference bench",
        arms=tuple(arms),
        fixtures=(table,),
        targets=tuple(targets),
        sequences=tuple(seqs),
    )


def _median_ms(fn, repeats: int) -> tuple[float, object]:
    out, res = [], None
    for _ in range(repeats):
        t0 = time.perf_counter()
        res = fn()
        out.append(time.perf_counter() - t0)
    return statistics.median(out) * 1e3, res


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="tiny run, bars not enforced")
    args = parser.parse_args(argv)
    n_plan, n_fix, n_arm, repeats = (20, 8, 10, 3) if args.quick else (200, 40, 100, 15)

    from kinematics.evaluate import evaluate_arm, evaluate_cell, evaluate_cell_arm
    from kinematics.interference import arm_distance, cell_interference, pose_cores
    from kinematics.motion import motion_limits, move_time
    from kinematics.plan import cell_planned_moves, plan_arm, target_states
    from kinematics.spaces import cell_spaces
    from kinematics.sweep import joint_path_between, sweep_move

    # ---- the plan
    cell = build_plan_cell(n_plan, n_fix)
    arm = cell.arms[0]
    ev = evaluate_cell_arm(cell, arm)
    base = evaluate_arm(arm, cell.targets, cell.fixtures, bodies=ev.bodies)
    plan_ms, plans = _median_ms(lambda: plan_arm(cell, base), repeats)
    plan = plans[0]
    states = [target_states(arm, base, base.index(t)) for t in plan.targets]
    n = len(states)
    both = sum(1 for s in states if len(s) >= 2)
    moves = [(a.q_deg, b.q_deg) for p in range(n) for a in states[p] for b in states[(p + 1) % n]]
    lim = motion_limits(arm)
    rng = np.random.default_rng(3)
    deltas = rng.uniform(-200, 200, (4000, 2))
    # The floor: one bare two-joint ruckig call (time-optimal, phase-synchronised).
    otg, inp, traj = Ruckig(2), InputParameter(2), Trajectory(2)
    inp.max_velocity, inp.max_acceleration = list(lim.speed_dps), list(lim.accel_dps2)
    inp.max_jerk = list(lim.jerk_or_inf)
    inp.synchronization = Synchronization.Phase
    raw, per_move = [], []
    for _ in range(5):
        t0 = time.perf_counter()
        for d in deltas.tolist():
            inp.target_position = d
            otg.calculate(inp, traj)
        raw.append((time.perf_counter() - t0) / len(deltas))
        t0 = time.perf_counter()
        move_time(deltas, lim)
        per_move.append((time.perf_counter() - t0) / len(deltas))
    call_us = statistics.median(raw) * 1e6
    move_us = statistics.median(per_move) * 1e6
    floor_ms = call_us * len(moves) / 1e3
    print(
        f"plan: {n} targets ({both} with both configurations usable), {len(cell.fixtures)} "
        f"fixtures; cycle {plan.cycle_time_s:.3f} s, one configuration "
        f"{plan.single_configuration_cycle_time_s or float('nan'):.3f} s "
        f"(forced changes at {len(plan.forced_changes)} targets), "
        f"{plan.configuration_changes} configuration changes"
    )
    print(
        f"ruckig: {call_us:.2f} us per two-joint call (engine move_time: {move_us:.2f} us per "
        f"move); {len(moves)} candidate moves -> floor {floor_ms:.2f} ms; "
        f"plan / floor {plan_ms / floor_ms:.1f}x"
    )
    # Naive: sweep every candidate move first (once; it is slow).
    from kinematics.bodies import clearance_margin, link_blocking
    from kinematics.clearance import FixtureSet

    fs = FixtureSet.of(cell.fixtures)
    lmask = link_blocking(arm, cell.fixtures, clearance_margin(cell))
    from kinematics.sweep import move_tool_mask

    tmask = move_tool_mask(arm, cell.fixtures, 0.0, True, None, None)
    sample = moves if not args.quick else moves[:20]
    t0 = time.perf_counter()
    for qa, qb in sample:
        path = joint_path_between(arm, qa, qb)
        if path.allowed:
            sweep_move(base.bodies, fs, path, lmask, tmask)
    naive_ms = (time.perf_counter() - t0) * 1e3 * len(moves) / len(sample)
    print(
        f"naive (sweep every candidate move first): {naive_ms:.0f} ms "
        f"({naive_ms / plan_ms:.0f}x the plan)"
    )

    # ---- interference
    cell2 = build_two_arm_cell(n_arm)
    ev2 = evaluate_cell(cell2)
    zones = cell_spaces(cell2, ev2, cell_planned_moves(cell2, ev2)).zones
    it_ms, it = _median_ms(lambda: cell_interference(cell2, ev2, zones), max(3, repeats // 3))
    evals = sum(s.samples for s in it.separations)
    tl = it.timelines
    ts = np.linspace(0, it.horizon_s, 20000)
    ca = pose_cores(tl[0].bodies, tl[0].at(ts)[0])
    cb = pose_cores(tl[1].bodies, tl[1].at(ts)[0])
    t0 = time.perf_counter()
    for _ in range(3):
        arm_distance(ca, cb)
    per_eval = (time.perf_counter() - t0) / 3 / len(ts)
    sep = it.min_separation
    contact = it.first_contact
    print(
        f"interference: 2 arms x {n_arm}-target cycles "
        f"({tl[0].cycle_time_s:.2f} s, {tl[1].cycle_time_s:.2f} s), horizon {it.horizon_s:.2f} s; "
        f"smallest separation {sep.gap:.1f}; first contact "
        f"{'none' if contact is None else f'{contact.time_s:.3f} s'}; "
        f"zones {[(z.space, z.overlap, z.suggested_start_shift_s) for z in it.zones]}"
    )
    print(
        f"  {evals} arm-to-arm distance evaluations at {per_eval * 1e6:.2f} us each -> floor "
        f"{evals * per_eval * 1e3:.1f} ms; interference / floor "
        f"{it_ms / max(evals * per_eval * 1e3, 1e-9):.1f}x"
    )
    print(f"plan: {plan_ms:.1f} ms (bar: < {PLAN_BAR_MS:.0f} ms median)")
    print(f"interference: {it_ms:.1f} ms (bar: < {INTERFERENCE_BAR_MS:.0f} ms median)")
    if args.quick:
        return 0
    return 0 if plan_ms < PLAN_BAR_MS and it_ms < INTERFERENCE_BAR_MS else 1


if __name__ == "__main__":
    sys.exit(main())

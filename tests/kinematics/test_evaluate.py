"""Cell evaluation: one verdict per target, one configuration per sequence where possible."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from kinematics.cell import Arm, Cell, Sequence, Target
from kinematics.evaluate import evaluate_cell
from kinematics.ik import solve_arm

ARM = Arm("a", "A", 0.0, 0.0, 0.0, 400.0, 250.0, (-60.0, 120.0), (-150.0, 150.0))
# p prefers "positive" (larger limit margin), q prefers "negative"; both fit either way.
P = Target("p", "P", 300.0, 400.0, "a")
Q = Target("q", "Q", 500.0, -100.0, "a")


def test_targets_without_a_sequence_keep_their_own_best_configuration():
    ev = evaluate_cell(Cell("c", arms=(ARM,), targets=(P, Q))).arms["a"]
    ik = solve_arm(ARM, ev.xy[:, 0], ev.xy[:, 1])
    # Reference: the larger limit margin per target (no fixtures, so the plain rule).
    expected = np.argmax(ik.limit_margin_deg, axis=1)
    assert ev.chosen.tolist() == expected.tolist()
    assert len(set(expected.tolist())) == 2  # the two targets really differ


def test_a_sequence_uses_one_configuration_where_one_fits_every_target():
    # Common practice, no source: one elbow configuration for a whole cycle where possible,
    # since a change passes through full stretch, costs time and sweeps a large area.
    cell = Cell("c", arms=(ARM,), targets=(P, Q), sequences=(Sequence("a", ("p", "q")),))
    ev = evaluate_cell(cell).arms["a"]
    assert len(set(ev.chosen.tolist())) == 1
    k = int(ev.chosen[0])
    # The shared configuration is the one whose worst limit margin is larger.
    worst = ev.ik.limit_margin_deg.min(axis=0)
    assert k == int(np.argmax(worst))
    assert ev.feasible.all()


def test_a_sequence_keeps_mixed_configurations_when_no_single_one_fits():
    # q1 limits that leave each target only one configuration, and not the same one.
    arm = Arm("a", "A", 0.0, 0.0, 0.0, 400.0, 250.0, (-40.0, 40.0), (-150.0, 150.0))
    ik = solve_arm(arm, [P.x, Q.x], [P.y, Q.y])
    fits = ik.ok
    assert fits.any(axis=1).all() and not fits.all(axis=0).any()
    cell = Cell("c", arms=(arm,), targets=(P, Q), sequences=(Sequence("a", ("p", "q")),))
    ev = evaluate_cell(cell).arms["a"]
    assert ev.chosen.tolist() == np.argmax(fits, axis=1).tolist()


def test_closest_configuration_of_every_target_at_once_equals_one_by_one():
    # The vectorised rule the drawings use must pick what the one-target rule picks.
    import glob

    from kinematics.cellfile import load_cell
    from kinematics.evaluate import evaluate_cell

    seen = 0
    for path in sorted(glob.glob(str(Path(__file__).resolve().parents[2] / "sample_cells/*.json"))):
        ev = evaluate_cell(load_cell(path))
        for a in ev.arms.values():
            one = [a.closest(i) for i in range(len(a.target_ids))]
            assert a.closest_all.tolist() == one, path
            seen += int(np.count_nonzero(~a.feasible))
    assert seen >= 5  # failing targets of every kind of reason were compared

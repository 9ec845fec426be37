"""Evaluate every target of a cell: reach, elbow configuration, limits, margins.

This is the one entry point the command line, the desktop program and the
exports use, so all of them agree on what is feasible and why.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from .cell import Arm, Cell, Target
from .ik import ELBOWS, REASONS, IKResult, Status, solve_arm

__all__ = ["ArmEvaluation", "CellEvaluation", "evaluate_arm", "evaluate_cell"]


@dataclass(frozen=True)
class ArmEvaluation:
    """Results for the targets of one arm, as arrays in target order.

    Attributes
    ----------
    arm : Arm
    target_ids : tuple of str
    xy : ndarray, shape (N, 2)
    ik : IKResult
        Shape (N,) arrays from :func:`kinematics.ik.solve_arm`.
    feasible, chosen, status : ndarray, shape (N,)
        The final verdict: equal to the IK verdict until clearance checks are
        added, which may turn a configuration down for a collision.
    """

    arm: Arm
    target_ids: tuple[str, ...]
    xy: NDArray[np.float64]
    ik: IKResult
    feasible: NDArray[np.bool_]
    chosen: NDArray[np.int64]
    status: NDArray[np.int64]

    def index(self, target_id: str) -> int:
        """Position of a target in this evaluation's arrays."""
        return self.target_ids.index(target_id)

    def reason(self, i: int) -> str:
        """Reason text for target ``i`` (empty when feasible)."""
        return REASONS[Status(int(self.status[i]))]

    def chosen_elbow(self, i: int) -> str | None:
        """Name of the chosen configuration, "both" at a singular pose, None when infeasible."""
        c = int(self.chosen[i])
        if c < 0:
            return None
        return "both" if bool(self.ik.singular[i]) else ELBOWS[c]


@dataclass(frozen=True)
class CellEvaluation:
    """Per-arm evaluations of a whole cell."""

    cell: Cell
    arms: dict[str, ArmEvaluation]

    def locate(self, target_id: str) -> tuple[ArmEvaluation, int]:
        """The arm evaluation holding a target and the target's index in it."""
        for ev in self.arms.values():
            if target_id in ev.target_ids:
                return ev, ev.index(target_id)
        raise KeyError(target_id)


def evaluate_arm(arm: Arm, targets: Iterable[Target]) -> ArmEvaluation:
    """Evaluate one arm at its base pose against its targets.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    >>> ev = evaluate_arm(arm, [Target("t", "T", 480, 480, "a")])
    >>> bool(ev.feasible[0]), ev.reason(0)
    (False, 'beyond outer reach')
    """
    targets = tuple(targets)
    xy = np.array([(t.x, t.y) for t in targets], dtype=float).reshape(-1, 2)
    ik = solve_arm(arm, xy[:, 0], xy[:, 1])
    return ArmEvaluation(
        arm=arm,
        target_ids=tuple(t.id for t in targets),
        xy=xy,
        ik=ik,
        feasible=ik.feasible,
        chosen=ik.chosen,
        status=ik.status,
    )


def evaluate_cell(cell: Cell) -> CellEvaluation:
    """Evaluate every arm of a cell against the targets assigned to it."""
    return CellEvaluation(
        cell=cell,
        arms={arm.id: evaluate_arm(arm, cell.targets_of(arm.id)) for arm in cell.arms},
    )

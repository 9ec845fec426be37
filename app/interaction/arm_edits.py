"""Arm edits as pure functions from cell to cell (no Qt): add, duplicate, delete.

A cell may have no arms (the loader, ``check`` and the window agree: fixtures may be laid
out first), so the last arm can be deleted too. A deleted arm's targets are either
deleted with it or given to another arm, which then also takes its sequences (in their
order), so nothing about them is lost silently. Layout variants lose their entries for a
deleted arm.
"""

from __future__ import annotations

from dataclasses import replace

from kinematics.cell import Arm, Cell
from kinematics.checks import choice_problem

from .edits import unique_id, unique_name

__all__ = ["TARGET_CHOICES", "add_arm", "duplicate_arm", "delete_arm"]

#: What happens to a deleted arm's targets: deleted with it, or given to another arm.
TARGET_CHOICES = ("delete", "reassign")


def _arm_ids(cell: Cell) -> set[str]:
    return {a.id for a in cell.arms}


def add_arm(cell: Cell, arm: Arm) -> tuple[Cell, Arm]:
    """The cell with ``arm`` added after the others, under a fresh id (and a fresh name
    when its name is taken or empty).

    Examples
    --------
    >>> a = Arm("arm1", "Arm 1", 0, 0, 0, 350, 250, (-170, 170), (-150, 150))
    >>> cell, new = add_arm(Cell("c", arms=(a,)), replace(a, x=900.0))
    >>> new.id, new.name, [x.x for x in cell.arms]
    ('arm2', 'Arm 2', [0, 900.0])
    """
    names = [a.name for a in cell.arms]
    name = arm.name.strip()
    if not name or name in names:
        name = unique_name("Arm", names)
    new = replace(arm, id=unique_id("arm", _arm_ids(cell)), name=name)
    return replace(cell, arms=cell.arms + (new,)), new


def duplicate_arm(cell: Cell, arm_id: str, dx: float, dy: float = 0.0) -> tuple[Cell, Arm]:
    """A copy of one arm (links, limits, bodies, speeds; not its targets) bolted ``dx, dy``
    from it, named "<name> copy".

    Examples
    --------
    >>> a = Arm("l", "Left", 0, 0, 90, 300, 250, (-132, 132), (-150, 150), elbow="positive")
    >>> cell, twin = duplicate_arm(Cell("c", arms=(a,)), "l", 600.0)
    >>> twin.id, twin.name, twin.x, twin.elbow
    ('arm1', 'Left copy', 600.0, 'positive')
    """
    src = cell.arm(arm_id)
    names = [a.name for a in cell.arms]
    name = f"{src.name} copy"
    if name in names:
        name = unique_name(name, names)
    twin = replace(
        src,
        id=unique_id("arm", _arm_ids(cell)),
        name=name,
        x=float(src.x + dx),
        y=float(src.y + dy),
        extra=dict(src.extra),
    )
    return replace(cell, arms=cell.arms + (twin,)), twin


def _drop_from_variants(extra: dict, arm_id: str) -> dict:
    variants = extra.get("variants")
    if not isinstance(variants, list):
        return extra
    out = []
    for v in variants:
        if isinstance(v, dict) and isinstance(v.get("arms"), dict) and arm_id in v["arms"]:
            v = {**v, "arms": {k: e for k, e in v["arms"].items() if k != arm_id}}
        out.append(v)
    return {**extra, "variants": out}


def delete_arm(cell: Cell, arm_id: str, targets: str = "delete", to: str | None = None) -> Cell:
    """The cell without one arm; its targets deleted (``targets="delete"``) or given to
    arm ``to`` (``"reassign"``), which also takes its sequences.

    Raises
    ------
    ValueError
        For an unknown choice or a ``to`` that names no other arm.

    Examples
    --------
    >>> from kinematics.cell import Sequence, Target
    >>> a = Arm("a", "A", 0, 0, 0, 300, 250, (-132, 132), (-150, 150))
    >>> b = replace(a, id="b", name="B", x=800.0)
    >>> cell = Cell("c", arms=(a, b), targets=(Target("t", "T", 400, 0, "a"),),
    ...             sequences=(Sequence("a", ("t",)),))
    >>> gone = delete_arm(cell, "a", "reassign", to="b")
    >>> [t.arm for t in gone.targets], [(s.arm, s.targets) for s in gone.sequences]
    (['b'], [('b', ('t',))])
    >>> delete_arm(cell, "a").targets, delete_arm(cell, "a").sequences
    ((), ())
    """
    problem = choice_problem(targets, TARGET_CHOICES)
    if problem is not None:
        raise ValueError(f"targets {problem}, got {targets!r}")
    cell.arm(arm_id)  # KeyError for an unknown arm
    arms = tuple(a for a in cell.arms if a.id != arm_id)
    if targets == "reassign":
        if to is None or to == arm_id or to not in _arm_ids(cell):
            raise ValueError(f"reassign needs another arm of the cell, got {to!r}")
        new_targets = tuple(replace(t, arm=to) if t.arm == arm_id else t for t in cell.targets)
        seqs = tuple(replace(s, arm=to) if s.arm == arm_id else s for s in cell.sequences)
    else:
        gone = {t.id for t in cell.targets if t.arm == arm_id}
        new_targets = tuple(t for t in cell.targets if t.arm != arm_id)
        seqs = []
        for s in cell.sequences:
            if s.arm == arm_id:
                continue
            kept = tuple(t for t in s.targets if t not in gone)
            if kept:
                seqs.append(s if kept == s.targets else replace(s, targets=kept))
        seqs = tuple(seqs)
    return replace(
        cell,
        arms=arms,
        targets=new_targets,
        sequences=seqs,
        extra=_drop_from_variants(cell.extra, arm_id),
    )

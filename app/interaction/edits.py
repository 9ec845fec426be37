"""Cell edits made from the canvas, as pure functions from cell to cell (no Qt).

Each returns a new immutable :class:`~kinematics.cell.Cell` built with
:func:`dataclasses.replace`; the canvas hands it to the document together with
an undo label from :func:`label`.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Sequence
from dataclasses import replace

from kinematics.cell import Cell, Fixture, Target

from .snapping import translated_outline

__all__ = [
    "move_base",
    "set_heading",
    "move_target",
    "translate_fixture",
    "move_vertex",
    "set_outline",
    "set_fixture_kind",
    "rename",
    "unique_id",
    "unique_name",
    "add_target",
    "add_fixture",
    "delete_items",
    "delete_label",
]


def _replace_arm(cell: Cell, arm_id: str, **changes) -> Cell:
    arms = tuple(replace(a, **changes) if a.id == arm_id else a for a in cell.arms)
    return replace(cell, arms=arms)


def _replace_fixture(cell: Cell, fixture_id: str, **changes) -> Cell:
    fx = tuple(replace(f, **changes) if f.id == fixture_id else f for f in cell.fixtures)
    return replace(cell, fixtures=fx)


def _replace_target(cell: Cell, target_id: str, **changes) -> Cell:
    tg = tuple(replace(t, **changes) if t.id == target_id else t for t in cell.targets)
    return replace(cell, targets=tg)


def move_base(cell: Cell, arm_id: str, x: float, y: float) -> Cell:
    """The arm's base bolted at ``(x, y)``; targets stay where they are."""
    return _replace_arm(cell, arm_id, x=float(x), y=float(y))


def set_heading(cell: Cell, arm_id: str, heading_deg: float) -> Cell:
    """The arm's base turned to ``heading_deg``."""
    return _replace_arm(cell, arm_id, heading_deg=float(heading_deg))


def move_target(cell: Cell, target_id: str, x: float, y: float) -> Cell:
    return _replace_target(cell, target_id, x=float(x), y=float(y))


def translate_fixture(cell: Cell, fixture: Fixture, dx: float, dy: float) -> Cell:
    """``fixture`` (as it was when the drag began) moved by ``(dx, dy)``."""
    return _replace_fixture(cell, fixture.id, outline=translated_outline(fixture.outline, dx, dy))


def move_vertex(cell: Cell, fixture_id: str, index: int, x: float, y: float) -> Cell:
    f = next(f for f in cell.fixtures if f.id == fixture_id)
    pts = list(f.outline)
    pts[index] = (float(x), float(y))
    return _replace_fixture(cell, fixture_id, outline=tuple(pts))


def set_outline(cell: Cell, fixture_id: str, outline: Sequence[tuple[float, float]]) -> Cell:
    return _replace_fixture(
        cell, fixture_id, outline=tuple((float(x), float(y)) for x, y in outline)
    )


def set_fixture_kind(cell: Cell, fixture_id: str, kind: str) -> Cell:
    return _replace_fixture(cell, fixture_id, kind=kind)


def rename(cell: Cell, item_id: str, name: str) -> Cell:
    """Rename the arm, fixture or target with this id."""
    if any(a.id == item_id for a in cell.arms):
        return _replace_arm(cell, item_id, name=name)
    if any(f.id == item_id for f in cell.fixtures):
        return _replace_fixture(cell, item_id, name=name)
    return _replace_target(cell, item_id, name=name)


def _all_ids(cell: Cell) -> set[str]:
    return {a.id for a in cell.arms} | {f.id for f in cell.fixtures} | {t.id for t in cell.targets}


def unique_id(prefix: str, taken: Iterable[str]) -> str:
    """``prefix`` followed by the smallest number >= 1 not yet used.

    Examples
    --------
    >>> unique_id("t", ["t1", "t2", "t4"])
    't3'
    """
    taken = set(taken)
    n = 1
    while f"{prefix}{n}" in taken:
        n += 1
    return f"{prefix}{n}"


def unique_name(stem: str, taken: Iterable[str]) -> str:
    """``stem N`` with N one more than the largest number already used after ``stem``.

    Examples
    --------
    >>> unique_name("Target", ["Target 1", "Target 7", "Pick"])
    'Target 8'
    """
    pat = re.compile(re.escape(stem) + r" (\d+)$")
    nums = [int(m.group(1)) for n in taken if (m := pat.match(n))]
    return f"{stem} {max(nums, default=0) + 1}"


def add_target(cell: Cell, x: float, y: float, arm_id: str) -> tuple[Cell, Target]:
    """A new target at ``(x, y)`` assigned to ``arm_id``, with a fresh id and name."""
    t = Target(
        id=unique_id("t", _all_ids(cell)),
        name=unique_name("Target", (t.name for t in cell.targets)),
        x=float(x),
        y=float(y),
        arm=arm_id,
    )
    return replace(cell, targets=cell.targets + (t,)), t


def add_fixture(
    cell: Cell, outline: Sequence[tuple[float, float]], kind: str = "fixture"
) -> tuple[Cell, Fixture]:
    """A new fixture with this outline, a fresh id and a name from its kind."""
    stem = kind.capitalize() if kind else "Fixture"
    f = Fixture(
        id=unique_id("f", _all_ids(cell)),
        name=unique_name(stem, (f.name for f in cell.fixtures)),
        kind=kind,
        outline=tuple((float(x), float(y)) for x, y in outline),
    )
    return replace(cell, fixtures=cell.fixtures + (f,)), f


def delete_items(cell: Cell, ids: Iterable[str]) -> Cell:
    """The cell without these targets and fixtures; deleted targets leave their sequences too.

    Arm ids are ignored: removing an arm would orphan its targets, so the
    canvas does not offer it.
    """
    ids = set(ids)
    targets = tuple(t for t in cell.targets if t.id not in ids)
    fixtures = tuple(f for f in cell.fixtures if f.id not in ids)
    sequences = tuple(
        replace(s, targets=tuple(t for t in s.targets if t not in ids))
        if any(t in ids for t in s.targets)
        else s
        for s in cell.sequences
    )
    return replace(cell, targets=targets, fixtures=fixtures, sequences=sequences)


def delete_label(cell: Cell, ids: Iterable[str]) -> str:
    """Undo label for deleting these items: "Delete target Pick 3" or "Delete 4 items"."""
    ids = set(ids)
    found: list[tuple[str, str]] = [("target", t.name) for t in cell.targets if t.id in ids]
    found += [("fixture", f.name) for f in cell.fixtures if f.id in ids]
    if len(found) == 1:
        return f"Delete {found[0][0]} {found[0][1]}"
    return f"Delete {len(found)} items"

"""Fixture edits as pure functions from cell to cell (no Qt): fields and outline vertices.

Outline edits are checked with the cell file's polygon rule
(:func:`app.interaction.snapping.outline_problem`): each returns the changed cell and ''
or the unchanged cell and why the change was refused.
"""

from __future__ import annotations

from dataclasses import replace

from kinematics.cell import Cell, Fixture

from .snapping import outline_problem

__all__ = [
    "fixture",
    "set_name",
    "set_kind",
    "set_height",
    "set_vertex",
    "insert_vertex",
    "remove_vertex",
    "height_for_new",
]


def fixture(cell: Cell, fixture_id: str) -> Fixture:
    """The fixture with this id (KeyError when there is none)."""
    for f in cell.fixtures:
        if f.id == fixture_id:
            return f
    raise KeyError(fixture_id)


def _put(cell: Cell, fixture_id: str, **changes) -> Cell:
    fx = tuple(replace(f, **changes) if f.id == fixture_id else f for f in cell.fixtures)
    return replace(cell, fixtures=fx)


def set_name(cell: Cell, fixture_id: str, name: str) -> Cell:
    return _put(cell, fixture_id, name=name)


def set_kind(cell: Cell, fixture_id: str, kind: str) -> Cell:
    return _put(cell, fixture_id, kind=kind)


def set_height(cell: Cell, fixture_id: str, height: float | None) -> Cell:
    """The fixture's top at ``height`` above the floor (None: unknown, so it blocks)."""
    return _put(cell, fixture_id, height=None if height is None else float(height))


def _outline(cell: Cell, fixture_id: str, pts: list[tuple[float, float]]) -> tuple[Cell, str]:
    problem = outline_problem(pts)
    if problem:
        return cell, problem
    return _put(cell, fixture_id, outline=tuple((float(x), float(y)) for x, y in pts)), ""


def set_vertex(cell: Cell, fixture_id: str, index: int, x: float, y: float) -> tuple[Cell, str]:
    """Vertex ``index`` of the outline moved to ``(x, y)``."""
    pts = list(fixture(cell, fixture_id).outline)
    pts[index] = (float(x), float(y))
    return _outline(cell, fixture_id, pts)


def insert_vertex(cell: Cell, fixture_id: str, index: int) -> tuple[Cell, str]:
    """A new vertex in the middle of the edge from vertex ``index`` to the next one.

    Examples
    --------
    >>> sq = Fixture("f", "F", "table", ((0, 0), (10, 0), (10, 10), (0, 10)))
    >>> cell, problem = insert_vertex(Cell("c", fixtures=(sq,)), "f", 0)
    >>> cell.fixtures[0].outline[:3], problem
    (((0.0, 0.0), (5.0, 0.0), (10.0, 0.0)), '')
    """
    pts = list(fixture(cell, fixture_id).outline)
    a, b = pts[index], pts[(index + 1) % len(pts)]
    pts.insert(index + 1, ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2))
    return _outline(cell, fixture_id, pts)


def remove_vertex(cell: Cell, fixture_id: str, index: int) -> tuple[Cell, str]:
    """The outline without vertex ``index`` (refused below three vertices).

    Examples
    --------
    >>> tri = Fixture("f", "F", "table", ((0, 0), (10, 0), (0, 10)))
    >>> remove_vertex(Cell("c", fixtures=(tri,)), "f", 0)[1]
    'outline must have at least 3 distinct points'
    """
    pts = [p for i, p in enumerate(fixture(cell, fixture_id).outline) if i != index]
    return _outline(cell, fixture_id, pts)


def height_for_new(kind: str, remembered: dict[str, float]) -> float | None:
    """The height a new fixture of ``kind`` inherits: the one last given to that kind, or
    None (then the window asks).

    Examples
    --------
    >>> height_for_new("table", {"table": 720.0}), height_for_new("guard", {"table": 720.0})
    (720.0, None)
    """
    v = remembered.get(kind)
    return None if v is None else float(v)

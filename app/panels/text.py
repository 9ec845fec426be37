"""Table cells, list lines and status-bar texts built from the engine's sentences.

Plain Python (no Qt). Every sentence about a verdict comes from
:mod:`kinematics.wording`; this module only adds the status glyphs (shape marks that
go with the colours) and lays numbers out in cells.
"""

from __future__ import annotations

import math

from app.style import status_style
from kinematics.cell import Cell
from kinematics.evaluate import ArmEvaluation, CellEvaluation
from kinematics.ik import Status
from kinematics.sweep import MoveResult
from kinematics.wording import (
    FAILS,
    FEASIBLE,
    count_text,
    degrees,
    length,
    move_problem_text,
    problem_text,
    target_reason,
)

__all__ = [
    "length",
    "degrees",
    "clearance_text",
    "nearest_text",
    "problem_line",
    "problems",
    "move_problem",
    "move_problems",
    "hover_text",
    "status_cell",
    "summary_text",
    "cursor_text",
    "NOT_ALLOWED",
]

_NAN_TEXT = "—"
#: Shown for values of a configuration the arm's elbow setting forbids.
NOT_ALLOWED = "not allowed"


def clearance_text(ev: ArmEvaluation, i: int, k: int, units: str, unit: bool = True) -> str:
    """Clearance of configuration ``k`` of target ``i``: "41.2 mm", "-12.0 mm ✕" when it
    collides (touching counts), "none blocks" without a blocking fixture in reach, a dash
    when the configuration does not exist (out of reach). ``unit=False`` leaves out the
    unit."""
    if not ev.clearance.size:
        return _NAN_TEXT
    c = float(ev.clearance[i, k])
    if math.isnan(c):
        return _NAN_TEXT
    if math.isinf(c):
        return "none blocks"
    text = length(c, units, unit)
    return f"{text} ✕" if bool(ev.collides[i, k]) else text


def nearest_text(ev: ArmEvaluation, i: int, k: int) -> str:
    """The fixture and moving body nearest configuration ``k`` of target ``i``.

    "✕ collides: Building column C4 (link 1)" when it collides, "Nest table (tool)"
    when clear, a dash when nothing in reach blocks the arm.
    """
    if not ev.clearance_fixture.size:
        return _NAN_TEXT
    f, b = int(ev.clearance_fixture[i, k]), int(ev.clearance_body[i, k])
    if f < 0 or not math.isfinite(float(ev.clearance[i, k])):
        return _NAN_TEXT
    name = ev.fixtures[f].name
    body = ev.bodies.bodies[b].name if ev.bodies is not None and b >= 0 else ""
    text = f"{name} ({body})" if body else name
    return f"✕ collides: {text}" if bool(ev.collides[i, k]) else text


def problem_line(ev: ArmEvaluation, i: int, name: str, units: str) -> str:
    """One line of the problems list: "✕ T7 Reject bin — beyond outer reach by 28.8 mm"."""
    glyph = status_style(int(ev.status[i])).glyph
    return f"{glyph} {problem_text(ev, i, name, units)}"


def problems(evaluation: CellEvaluation) -> list[tuple[str, str]]:
    """(target id, line) for every infeasible target, in the cell's target order.

    Moves are listed separately (:func:`move_problems`): they cost more to compute.
    """
    cell = evaluation.cell
    out = []
    for t in cell.targets:
        try:
            ev, i = evaluation.locate(t.id)
        except KeyError:
            out.append((t.id, f"✕ {t.id} {t.name} — assigned to missing arm {t.arm!r}"))
            continue
        if not bool(ev.feasible[i]):
            out.append((t.id, problem_line(ev, i, t.name, cell.units)))
    return out


def move_problem(cell: Cell, move: MoveResult) -> str | None:
    """The problems-list line of a move that collides or cannot be made, else None.

    "★ move pick → nest — collides with Building column C4 (link 1, 3.0 mm deep)",
    "▼ move a → b — configuration change needs full stretch (q2 = 0), outside the q2
    limits" (marked like the q2-limit failure of a target). A move whose end has no
    feasible configuration is not listed: that target is, with its own reason. The arm
    is named when the cell has more than one.
    """
    if move.path is None or move.collides is False:
        return None
    glyph = status_style(Status.COLLISION if move.collides else Status.Q2_LIMIT).glyph
    return f"{glyph} {move_problem_text(move, move.body, cell.units, len(cell.arms) > 1)}"


def move_problems(cell: Cell, moves: list[MoveResult]) -> list[tuple[tuple[str, str, str], str]]:
    """((arm, from, to), line) for every colliding or impossible move, in sequence order."""
    out = []
    for m in moves:
        line = move_problem(cell, m)
        if line is not None:
            out.append(((m.arm, m.from_id, m.to_id), line))
    return out


def status_cell(ev: ArmEvaluation, i: int, units: str, short: bool = False) -> str:
    """Status text: "● feasible" or "▲ fails: q1 limit by 4.0° (closest: positive elbow)"."""
    glyph = status_style(int(ev.status[i])).glyph
    if bool(ev.feasible[i]):
        return f"{glyph} {FEASIBLE}"
    return f"{glyph} {FAILS}: {target_reason(ev, i, units, 'short' if short else 'full')}"


def summary_text(evaluation: CellEvaluation) -> str:
    """The status bar's summary of the current evaluation ("9 of 11 targets feasible, ...")."""
    ok, total = evaluation.counts()
    return count_text(ok, total).capitalize()


def hover_text(evaluation: CellEvaluation, target_id: str) -> str:
    """Status-bar text for a hovered target: status, both configurations' joints, margins."""
    if not target_id:
        return ""
    cell = evaluation.cell
    try:
        ev, i = evaluation.locate(target_id)
    except KeyError:
        return ""
    st = int(ev.status[i])
    verdict = FEASIBLE if st == Status.OK else target_reason(ev, i, cell.units, "short")
    parts = [f"{target_id} {status_style(st).glyph} {verdict}"]
    # (+) / (−) as in the table headers: the positive and negative elbow configurations.
    for k, sign in enumerate(("+", "−")):
        q1, q2 = (float(v) for v in ev.ik.q_deg[i, k])
        mark = ", chosen" if int(ev.chosen[i]) == k else ""
        if not bool(ev.ik.allowed[i, k]):
            mark = f", {NOT_ALLOWED}"
        parts.append(f"({sign}{mark}) q1 {degrees(q1)} q2 {degrees(q2)}")
    k = ev.closest(i)
    limit = degrees(float(ev.ik.limit_margin_deg[i, k]))
    reach = length(float(ev.ik.reach_margin[i]), cell.units)
    parts.append(f"margins: limit {limit}, reach {reach}")
    if ev.clearance.size and math.isfinite(float(ev.clearance[i, k])):
        near = nearest_text(ev, i, k).replace("✕ collides: ", "")
        parts.append(f"clearance {clearance_text(ev, i, k, cell.units)} to {near}")
    if bool(ev.ik.singular[i]):
        parts.append("singular pose")
    return " | ".join(parts)


def cursor_text(x: float, y: float, units: str) -> str:
    """Cursor position in the cell's units: "x 1234.5  y -20.0 mm"."""
    return f"x {length(x, units, unit=False)}  y {length(y, units, unit=False)} {units}"

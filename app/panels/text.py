"""Words and numbers the panels and the status bar show for engine results.

Plain Python (no Qt): every sentence about a target is built here from the
engine's evaluation, so the table, the problems list and the status bar agree.
"""

from __future__ import annotations

import math

from app.style import status_style, status_text
from kinematics.cell import Cell
from kinematics.evaluate import ArmEvaluation, CellEvaluation
from kinematics.ik import ELBOWS, Status
from kinematics.sweep import MoveResult

from .moves import move_body

__all__ = [
    "length",
    "degrees",
    "closest_configuration",
    "clearance_text",
    "nearest_text",
    "failure_detail",
    "problem_line",
    "problems",
    "move_problem",
    "move_problems",
    "hover_text",
    "status_cell",
    "cursor_text",
]

_NAN_TEXT = "—"


def _decimals(units: str) -> int:
    return 2 if units == "in" else 1


def length(value: float, units: str, unit: bool = True) -> str:
    """A length in the cell's units ("28.8 mm"), a dash for NaN."""
    if not math.isfinite(value):
        return _NAN_TEXT
    text = f"{value:.{_decimals(units)}f}"
    return f"{text} {units}" if unit else text


def degrees(value: float, unit: bool = True) -> str:
    """An angle in degrees with one decimal ("12.3°"), a dash for NaN."""
    if not math.isfinite(value):
        return _NAN_TEXT
    return f"{value:.1f}°" if unit else f"{value:.1f}"


def closest_configuration(ev: ArmEvaluation, i: int) -> int:
    """Index of the configuration that comes closest for a failing target.

    For a target turned down by collisions: the within-limit, allowed configuration with
    the larger clearance (the one whose fixture the reason names); otherwise the allowed
    configuration with the larger limit margin.
    """
    if int(ev.status[i]) == Status.COLLISION:
        cands = [k for k in range(2) if bool(ev.ik.ok[i, k]) and bool(ev.collides[i, k])]
        if cands:
            return max(cands, key=lambda k: float(ev.clearance[i, k]))
    margins = [
        float(ev.ik.limit_margin_deg[i, k]) if bool(ev.ik.allowed[i, k]) else -math.inf
        for k in range(2)
    ]
    return 0 if margins[0] >= margins[1] else 1


def clearance_text(ev: ArmEvaluation, i: int, k: int, units: str, unit: bool = True) -> str:
    """Clearance of configuration ``k`` of target ``i``: "41.2 mm", "-12.0 mm ✕" when it
    collides (touching counts), "none blocks" without a blocking fixture, a dash when the
    configuration does not exist (out of reach). ``unit=False`` leaves out the unit."""
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
    """The fixture and body nearest configuration ``k`` of target ``i``.

    "✕ collides: Building column C4 (link 1)" when it collides, "Nest table (tool)"
    when clear, a dash when nothing blocks the arm.
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


def failure_detail(ev: ArmEvaluation, i: int, units: str, short: bool = False) -> str:
    """Why target ``i`` fails and by how much, e.g. "beyond outer reach by 28.8 mm".

    A collision names the fixture, the body and how deep it goes in: "collides with
    Building column C4 (link 1, 12.0 mm deep; closest: positive elbow)". ``short`` leaves
    out which configuration comes closest (for narrow table cells).
    """
    st = Status(int(ev.status[i]))
    reason = ev.reason(i)
    if st in (Status.BEYOND_REACH, Status.INSIDE_HOLE):
        return f"{reason} by {length(-float(ev.ik.reach_margin[i]), units)}"
    if st in (Status.Q1_LIMIT, Status.Q2_LIMIT):
        k = closest_configuration(ev, i)
        joint = 0 if st is Status.Q1_LIMIT else 1
        past = -float(ev.ik.joint_margin_deg[i, k, joint])
        text = f"{reason} by {degrees(past)}"
        return text if short else f"{text} (closest: {ELBOWS[k]} elbow)"
    if st is Status.ELBOW_EXCLUDED:
        fits = [ELBOWS[k] for k in range(2) if bool(ev.ik.within_limits[i, k].all())]
        if short:
            return f"only the {' and '.join(fits)} elbow fits (setting '{ev.arm.elbow}')"
        return f"{reason} '{ev.arm.elbow}' (only the {' and '.join(fits)} elbow fits)"
    if st is Status.COLLISION:
        k = closest_configuration(ev, i)
        body = ev.blocked_body(i, k)
        c = float(ev.clearance[i, k])
        depth = "touching" if c >= 0 else f"{length(-c, units)} deep"
        what = f"{body}, {depth}" if body else depth
        if short:
            return f"{reason} ({what})"
        both = sum(bool(ev.ik.ok[i, j]) for j in range(2)) == 2 and not bool(ev.ik.singular[i])
        closest = f"; closest: {ELBOWS[k]} elbow" if both else ""
        return f"{reason} ({what}{closest})"
    return reason


def problem_line(ev: ArmEvaluation, i: int, name: str, units: str) -> str:
    """One line of the problems list: "✕ T7 Reject bin — beyond outer reach by 28.8 mm"."""
    glyph = status_style(int(ev.status[i])).glyph
    return f"{glyph} {ev.target_ids[i]} {name} — {failure_detail(ev, i, units)}"


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
    arm = f" ({move.arm})" if len(cell.arms) > 1 else ""
    head = f"move {move.from_id} → {move.to_id}{arm}"
    if move.collides:
        body = move_body(cell, move)
        c = move.clearance
        depth = "touching" if c is None or c >= 0 else f"{length(-c, cell.units)} deep"
        what = f"{body}, {depth}" if body else depth
        return f"{status_style(Status.COLLISION).glyph} {head} — {move.reason} ({what})"
    return f"{status_style(Status.Q2_LIMIT).glyph} {head} — {move.reason}"


def move_problems(cell: Cell, moves: list[MoveResult]) -> list[tuple[tuple[str, str, str], str]]:
    """((arm, from, to), line) for every colliding or impossible move, in sequence order."""
    out = []
    for m in moves:
        line = move_problem(cell, m)
        if line is not None:
            out.append(((m.arm, m.from_id, m.to_id), line))
    return out


def status_cell(ev: ArmEvaluation, i: int, units: str, short: bool = False) -> str:
    """Status text: "● ok" or "▲ FAIL: q1 limit by 4.0° (closest: positive elbow)"."""
    st = int(ev.status[i])
    if st == Status.OK:
        return status_text(st)
    glyph = status_style(st).glyph
    return f"{glyph} FAIL: {failure_detail(ev, i, units, short)}"


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
    verdict = "ok" if st == Status.OK else failure_detail(ev, i, cell.units, short=True)
    parts = [f"{target_id} {status_style(st).glyph} {verdict}"]
    # (+) / (−) as in the table headers: the positive and negative elbow configurations.
    for k, sign in enumerate(("+", "−")):
        q1, q2 = (float(v) for v in ev.ik.q_deg[i, k])
        mark = ", chosen" if int(ev.chosen[i]) == k else ""
        parts.append(f"({sign}{mark}) q1 {degrees(q1)} q2 {degrees(q2)}")
    k = int(ev.chosen[i]) if int(ev.chosen[i]) >= 0 else closest_configuration(ev, i)
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

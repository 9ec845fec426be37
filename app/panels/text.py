"""Words and numbers the panels and the status bar show for engine results.

Plain Python (no Qt): every sentence about a target is built here from the
engine's evaluation, so the table, the problems list and the status bar agree.
"""

from __future__ import annotations

import math

from app.style import status_style, status_text
from kinematics.evaluate import ArmEvaluation, CellEvaluation
from kinematics.ik import ELBOWS, REASONS, Status

__all__ = [
    "length",
    "degrees",
    "closest_configuration",
    "failure_detail",
    "problem_line",
    "problems",
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
    """Index of the allowed configuration with the larger limit margin (it comes closest)."""
    margins = [
        float(ev.ik.limit_margin_deg[i, k]) if bool(ev.ik.allowed[i, k]) else -math.inf
        for k in range(2)
    ]
    return 0 if margins[0] >= margins[1] else 1


def failure_detail(ev: ArmEvaluation, i: int, units: str, short: bool = False) -> str:
    """Why target ``i`` fails and by how much, e.g. "beyond outer reach by 28.8 mm".

    ``short`` leaves out which configuration comes closest (for narrow table cells).
    """
    st = Status(int(ev.status[i]))
    reason = REASONS[st]
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
    return reason


def problem_line(ev: ArmEvaluation, i: int, name: str, units: str) -> str:
    """One line of the problems list: "✕ T7 Reject bin — beyond outer reach by 28.8 mm"."""
    glyph = status_style(int(ev.status[i])).glyph
    return f"{glyph} {ev.target_ids[i]} {name} — {failure_detail(ev, i, units)}"


def problems(evaluation: CellEvaluation) -> list[tuple[str, str]]:
    """(target id, line) for every infeasible target, in the cell's target order."""
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
    if bool(ev.ik.singular[i]):
        parts.append("singular pose")
    return " | ".join(parts)


def cursor_text(x: float, y: float, units: str) -> str:
    """Cursor position in the cell's units: "x 1234.5  y -20.0 mm"."""
    return f"x {length(x, units, unit=False)}  y {length(y, units, unit=False)} {units}"

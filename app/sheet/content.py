"""What the review sheet says (no Qt): its options, the target table, the summary and
the title block's texts.

Every sentence about a verdict comes from :mod:`kinematics.wording`; the numbers are the
document's one evaluation (or a fresh one for the command line).
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field
from datetime import date
from pathlib import Path
from typing import Any

from kinematics.caution import CAUTION_FULL
from kinematics.cell import Cell
from kinematics.evaluate import CellEvaluation
from kinematics.ik import Status
from kinematics.review import REVIEW_FIELDS, title_block
from kinematics.underlay import load_underlay
from kinematics.wording import (
    FEASIBLE,
    count_text,
    degrees,
    length,
    move_problem_text,
    target_reason,
)

from .layout import FIT, Scale

__all__ = [
    "SheetOptions",
    "TableRow",
    "TABLE_COLUMNS",
    "Summary",
    "SheetContent",
    "table_rows",
    "summary",
    "sheet_content",
    "title_texts",
]

APP_VERSION = "0.1.0"


@dataclass(frozen=True)
class SheetOptions:
    """How a review sheet is made.

    Attributes
    ----------
    paper : str
        "A4", "A3", "A2" or "A1".
    orientation : str
        "landscape" or "portrait".
    scale : Scale or None
        A stated ISO 5455 scale, None to fit (the largest standard scale that fits).
    overlays : frozenset of str
        Canvas overlay keys drawn ("annulus", "space.restricted", "swept", ...).
    ghosts : str
        Ghost poses: "all", "selected" or "none".
    selection : frozenset of str
        Selected ids (for ``ghosts="selected"``).
    labels : bool
        Label targets with their ids on the drawing.
    underlay : bool
        Draw the cell's DXF underlay (when it has one).
    dpi : int
        Resolution of a PNG sheet.
    """

    paper: str = "A3"
    orientation: str = "landscape"
    scale: Scale | None = None
    overlays: frozenset[str] = frozenset({"annulus"})
    ghosts: str = "all"
    selection: frozenset[str] = frozenset()
    labels: bool = True
    underlay: bool = True
    dpi: int = 150

    @property
    def scale_text(self) -> str:
        return FIT if self.scale is None else self.scale.text


#: Target table columns: (key, header, share of the table's width, numeric).
TABLE_COLUMNS = (
    ("id", "id", 0.075, False),
    ("name", "name", 0.105, False),
    ("position", "position x, y", 0.105, True),
    ("arm", "arm", 0.06, False),
    ("configuration", "configuration", 0.08, False),
    ("q1", "q1", 0.05, True),
    ("q2", "q2", 0.05, True),
    ("limit", "limit margin", 0.055, True),
    ("reach", "reach margin", 0.06, True),
    ("clearance", "clearance", 0.075, True),
    ("status", "status and reason", 0.285, False),
)


@dataclass(frozen=True)
class TableRow:
    """One row of the target table: texts by column key, the status code, feasible."""

    texts: dict[str, str]
    status: int
    feasible: bool


def _clearance(ev: Any, i: int, k: int, units: str) -> str:
    if not ev.clearance.size:
        return "—"
    c = float(ev.clearance[i, k])
    if math.isnan(c):
        return "—"
    if math.isinf(c):
        return "none blocks"
    text = length(c, units, unit=False)
    return f"{text} ✕" if bool(ev.collides[i, k]) else text


def table_rows(evaluation: CellEvaluation) -> list[TableRow]:
    """The target table, in the cell's target order.

    The joint angles and margins are those of the chosen configuration; for a failing
    target those of the configuration that comes closest, marked "(closest)".
    """
    cell = evaluation.cell
    u = cell.units
    rows = []
    for t in cell.targets:
        base = {
            "id": t.id,
            "name": t.name,
            "position": f"{length(t.x, u, False)}, {length(t.y, u, False)}",
            "arm": t.arm,
        }
        try:
            ev, i = evaluation.locate(t.id)
        except KeyError:
            texts = dict.fromkeys(k for k, *_ in TABLE_COLUMNS)
            texts.update(base)
            texts = {k: v if v is not None else "—" for k, v in texts.items()}
            texts["status"] = f"fails: assigned to missing arm {t.arm!r}"
            rows.append(TableRow(texts, int(Status.BEYOND_REACH), False))
            continue
        ik = ev.ik
        k = ev.closest(i)
        feasible = bool(ev.feasible[i])
        reachable = bool(ik.reachable[i])
        chosen = ev.chosen_elbow(i)
        if chosen is not None:
            config = chosen
        elif reachable:
            closest = "both" if bool(ik.singular[i]) else ("positive", "negative")[k]
            config = f"none ({closest} closest)"
        else:
            config = "none"
        q1, q2 = (float(v) for v in ik.q_deg[i, k])
        if bool(ik.singular[i]):
            q2 = abs(q2)
        reason = target_reason(ev, i, u, "full")
        texts = dict(base)
        texts.update(
            {
                "configuration": config,
                "q1": degrees(q1, False) if reachable else "—",
                "q2": degrees(q2, False) if reachable else "—",
                "limit": degrees(float(ik.limit_margin_deg[i, k]), False) if reachable else "—",
                "reach": length(float(ik.reach_margin[i]), u, False),
                "clearance": _clearance(ev, i, k, u) if reachable else "—",
                "status": FEASIBLE if feasible else f"fails: {reason}",
            }
        )
        rows.append(TableRow(texts, int(ev.status[i]), feasible))
    return rows


@dataclass(frozen=True)
class Summary:
    """The summary's parts, each a list of lines (headings are the sheet's)."""

    counts: str
    failing: list[str] = field(default_factory=list)
    moves: list[str] = field(default_factory=list)
    zones: list[str] = field(default_factory=list)
    cycles: list[str] = field(default_factory=list)
    placement: list[str] = field(default_factory=list)


def _tolerance_lines(cell: Cell, placement: dict[str, dict] | None) -> list[str]:
    from kinematics.placement import arm_tolerances  # compiled kernels load on first use only

    lines = []
    for arm in cell.arms:
        tol = placement.get(arm.id) if placement is not None else None
        if tol is None:
            try:
                tol = arm_tolerances(cell, arm.id)
            except Exception as exc:  # a malformed body key: say so, never fail the sheet
                lines.append(f"{arm.name}: not known ({exc})")
                continue
        r, h = tol.get("placement_tolerance"), tol.get("heading_tolerance_deg")
        if r is None:
            lines.append(f"{arm.name}: none (not every target of the arm is {FEASIBLE})")
            continue
        text = f"{arm.name}: base may miss its spot by {length(float(r), cell.units)}"
        if h is not None:
            text += f", heading by −{degrees(float(h[0]))} / +{degrees(float(h[1]))}"
        lines.append(text)
    return lines


def summary(
    evaluation: CellEvaluation, placement: dict[str, dict] | None = None, most: int = 12
) -> Summary:
    """The sheet's summary of a cell's evaluation.

    Parameters
    ----------
    evaluation : CellEvaluation
    placement : dict, optional
        Arm id -> ``kinematics.placement.arm_tolerances`` result, when known (else computed).
    most : int
        At most this many lines per list, then how many more.
    """
    cell = evaluation.cell
    u = cell.units
    ok, total = evaluation.counts()

    def capped(lines: list[str], what: str) -> list[str]:
        if len(lines) <= most:
            return lines
        return lines[: most - 1] + [f"… and {len(lines) - most + 1} more {what}"]

    failing = []
    for t in cell.targets:
        try:
            ev, i = evaluation.locate(t.id)
        except KeyError:
            failing.append(f"{t.id} {t.name}: assigned to missing arm {t.arm!r}")
            continue
        if not bool(ev.feasible[i]):
            failing.append(f"{t.id} {t.name}: {target_reason(ev, i, u, 'full')}")
    several = len(cell.arms) > 1
    moves = [
        move_problem_text(m, m.body, u, several)
        for m in evaluation.moves()
        if m.path is not None and m.collides is not False
    ]
    names = {a.id: a.name for a in cell.arms}
    zones = []
    if len(cell.arms) > 1:
        for z in evaluation.spaces(operating=True).zones:
            a, b = z.arms
            area = z.area * cell.mm_per_unit**2 / 1e6 if u == "mm" else z.area
            unit = "m²" if u == "mm" else "in²"
            zones.append(
                f"{names.get(a, a)} + {names.get(b, b)}: {z.kind} spaces overlap "
                f"({area:,.{2 if u == 'mm' else 0}f} {unit}): an interlock is needed"
            )
    cycles = []
    for ev in evaluation.arms.values():
        for p in ev.plans:
            name = f"{ev.arm.name}, sequence {p.sequence_index + 1} ({len(p.targets)} targets)"
            if p.cycle_time_s is not None:
                text = f"{name}: {p.cycle_time_s:.2f} s"
                ppm = p.parts_per_minute
                if ppm is not None:
                    text += f" ({ppm:.1f} cycles per minute)"
                cycles.append(text)
            elif p.missing:
                cycles.append(f"{name}: no time (the arm lacks {', '.join(p.missing)})")
            else:
                cycles.append(f"{name}: no time ({p.reason or 'no plan'})")
    return Summary(
        counts=count_text(ok, total),
        failing=capped(failing, "failing targets (see the table)"),
        moves=capped(moves, "colliding moves"),
        zones=capped(zones, "shared zones"),
        cycles=capped(cycles, "sequences"),
        placement=_tolerance_lines(cell, placement),
    )


def title_texts(
    cell: Cell, options: SheetOptions, scale: Scale, sheet: int, sheets: int, source: str
) -> dict[str, tuple[str, str]]:
    """Title-block field key -> (label, text) for one sheet (empty text: not given)."""
    fields = title_block(cell)
    out = {f.key: (f.label, fields[f.key]) for f in REVIEW_FIELDS}
    out["title"] = ("Title", fields["title"])
    out["scale"] = ("Scale", scale.text)
    out["paper"] = (
        "Paper, units",
        f"{options.paper} {options.orientation[0].upper()}, {cell.units}",
    )
    out["sheet"] = ("Sheet", f"{sheet} of {sheets}")
    made = date.today().isoformat()
    out["source"] = (
        "Drawn from the cell model",
        f"{cell.name} · {source} · Elbow Room {APP_VERSION} · made {made}",
    )
    return out


@dataclass(frozen=True)
class SheetContent:
    """Everything a set of sheets says, computed once (the preview redraws it often).

    ``underlay`` is the cell's DXF underlay (:class:`kinematics.dxf_import.DxfUnderlay`)
    when it has one that could be read; ``underlay_note`` says what became of it.
    """

    cell: Cell
    evaluation: CellEvaluation
    rows: list[TableRow]
    summary: Summary
    caution: str
    source: str
    underlay: Any = None
    underlay_note: str = ""


def sheet_content(
    evaluation: CellEvaluation,
    cell_path: str | os.PathLike[str] | None = None,
    placement: dict[str, dict] | None = None,
    underlay: tuple[Any, str] | None = None,
) -> SheetContent:
    """The table, summary and caution of an evaluated cell.

    Parameters
    ----------
    evaluation : CellEvaluation
    cell_path : path, optional
        The cell's file (its name is printed; the underlay's path is relative to it).
    placement : dict, optional
        Arm id -> placement tolerances, when already known.
    underlay : (DxfUnderlay or None, note), optional
        The underlay as already read (else it is read here).
    """
    cell = evaluation.cell
    if underlay is None:
        underlay = load_underlay(cell, cell_path)
    return SheetContent(
        cell=cell,
        evaluation=evaluation,
        rows=table_rows(evaluation),
        summary=summary(evaluation, placement),
        caution=CAUTION_FULL,
        source=Path(cell_path).name if cell_path is not None else "unsaved cell",
        underlay=underlay[0],
        underlay_note=underlay[1],
    )

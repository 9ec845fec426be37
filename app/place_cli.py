"""``elbowroom place`` and ``elbowroom compare``: base placement and layout variants headless.

``place CELL [--arm ID] [--pitch P] [--heading-search] [--json] [--png MAP.png]
[--apply -o OUT.cell.json]`` prints the best base position of one arm, its score, the
targets feasible there, the placement and heading tolerances of the current and of the best
position and the placement region's area (README, Placement). ``compare CELL [--json]``
prints the current layout and every variant side by side.

Exit status: 0 when every target is feasible at the best position (``place``) or in some
layout (``compare``); 1 when not; 2 when the file, an argument or an output cannot be used
(one line on stderr naming the file, the option and the value). Every file is written
atomically (:func:`kinematics.atomic.write_atomic`; cell files by
:func:`kinematics.cellfile.save_cell`).
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from pathlib import Path
from typing import Any

__all__ = ["place_command", "compare_command", "MAX_GRID_POINTS"]

EXIT_OK, EXIT_INFEASIBLE, EXIT_UNUSABLE = 0, 1, 2
#: Largest score-map grid the command accepts (points).
MAX_GRID_POINTS = 1_000_000


class _Parser(argparse.ArgumentParser):
    """argparse that reports a bad argument in one line and exits 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        sys.stderr.write(f"{self.prog}: {message} (see '{self.prog} --help')\n")
        raise SystemExit(EXIT_UNUSABLE)


def _pitch(text: str) -> float:
    try:
        v = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"must be a number, got {text!r}") from None
    if not (math.isfinite(v) and v > 0):
        raise argparse.ArgumentTypeError(f"must be a positive number, got {text!r}")
    return v


def _place_parser() -> argparse.ArgumentParser:
    p = _Parser(
        prog="elbowroom place",
        description="Find where to bolt an arm's base: placement region, score map, best spot.",
    )
    p.add_argument("cell", type=Path, help="a *.cell.json file")
    p.add_argument("--arm", metavar="ID", help="the arm to place (default: the first)")
    p.add_argument("--pitch", type=_pitch, metavar="P", help="grid pitch in the cell's units")
    p.add_argument("--heading-search", action="store_true", help="search the heading too")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--png", type=Path, metavar="MAP.png", help="save the score map as a picture")
    p.add_argument("--apply", action="store_true", help="move the base to the best spot")
    p.add_argument("-o", "--output", type=Path, metavar="OUT.cell.json",
                   help="where --apply writes the moved cell")  # fmt: skip
    return p


def _compare_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="elbowroom compare", description="Compare the cell's layout variants.")
    p.add_argument("cell", type=Path, help="a *.cell.json file")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    return p


def _load(path: Path, prog: str):
    from kinematics.cellfile import CellFileError, load_cell

    try:
        return load_cell(path, source=str(path))  # named as the user gave it
    except CellFileError as err:
        sys.stderr.write("".join(f"{line}\n" for line in err.problems))
        return None


def _printable(text: str) -> str:
    return "".join(c if c.isprintable() else f"\\u{ord(c):04x}" for c in text)


def _emit(text: str, prog: str) -> bool:
    enc = getattr(sys.stdout, "encoding", None) or "utf-8"
    try:
        text.encode(enc)
    except (UnicodeEncodeError, LookupError):
        text = text.encode("ascii", "backslashreplace").decode("ascii")
    try:
        sys.stdout.write(text)
        sys.stdout.flush()
    except OSError as exc:
        reason = (
            "the reading end of the pipe was closed"
            if isinstance(exc, BrokenPipeError)
            else (exc.strerror or type(exc).__name__)
        )
        sys.stderr.write(f"{prog}: could not write the report ({reason})\n")
        return False
    return True


def _json_text(report: dict[str, Any]) -> str:
    return json.dumps(report, indent=2, ensure_ascii=False) + "\n"


def _fmt(v: Any, nd: int = 1) -> str:
    return "-" if v is None else f"{v:.{nd}f}"


def _ht(v: list[float] | None) -> str:
    return "-" if v is None else f"-{v[0]:.2f} / +{v[1]:.2f}"


def _place_text(rep: dict[str, Any], cell_name: str, units: str) -> str:
    from kinematics.placement import HEADING_PRECISION_DEG, TOLERANCE_PRECISION

    reg = rep["region"]
    lines = [
        f"Cell: {_printable(cell_name)}, arm {_printable(rep['arm'])}   "
        f"(lengths in {units}, angles in degrees)",
        "",
        f"Placement region at heading {rep['heading_deg']:g}: "
        + (
            "empty; targets whose removal would open it (greedy, not guaranteed smallest): "
            + ", ".join(_printable(t) for t in reg["blocking_targets"])
            if reg["empty"]
            else f"area {reg['area']:.0f} {units}^2"
        ),
        f"Score map: pitch {rep['grid']['pitch']:g} {units}, "
        f"{rep['grid']['nx']} x {rep['grid']['ny']} points",
        "",
    ]
    rows = [("", "x", "y", "heading", "feasible", "tolerance", "heading tol.", "score")]
    n = rep["targets"]
    for name in ("current", "best"):
        p = rep[name]
        rows.append(
            (
                name,
                _fmt(p["x"]),
                _fmt(p["y"]),
                _fmt(p["heading_deg"], 2),
                f"{p['feasible_targets']} of {n}",
                _fmt(p["tolerance"]),
                _ht(p["heading_tolerance_deg"]),
                _fmt(p.get("score"), 3),
            )
        )
    widths = [max(len(r[c]) for r in rows) for c in range(len(rows[0]))]
    for k, r in enumerate(rows):
        lines.append(
            "  ".join(
                v.ljust(w) if c == 0 else v.rjust(w) for c, (v, w) in enumerate(zip(r, widths))
            )
        )
        if k == 0:
            lines.append("-" * len(lines[-1]))
    lines += [
        "",
        "score = feasible targets + quality (0 to 1; README, Placement). Tolerance: how far the",
        f"base may miss its spot with every target feasible (to {TOLERANCE_PRECISION:g} of the "
        f"reach); heading tolerance to {HEADING_PRECISION_DEG:g} deg; '-' when some target fails.",
        "",
        f"CAUTION: {rep['caution']}",
    ]
    return "\n".join(lines) + "\n"


def place_command(args: list[str]) -> int:
    """``elbowroom place``: see the module docstring. Returns the exit status."""
    prog = "elbowroom place"
    try:
        ns = _place_parser().parse_args(args)
    except SystemExit as exc:
        return int(exc.code or 0)
    if ns.apply and ns.output is None:
        sys.stderr.write(f"{prog}: --apply needs -o OUT.cell.json (where to write the cell)\n")
        return EXIT_UNUSABLE
    if ns.output is not None and not ns.apply:
        sys.stderr.write(f"{prog}: -o {ns.output} is only used with --apply\n")
        return EXIT_UNUSABLE
    cell = _load(ns.cell, prog)
    if cell is None:
        return EXIT_UNUSABLE
    src = _printable(ns.cell.name)
    if not cell.arms:
        sys.stderr.write(f"{src}: arms: the cell has no arm to place\n")
        return EXIT_UNUSABLE
    arm_id = ns.arm if ns.arm is not None else cell.arms[0].id
    if arm_id not in {a.id for a in cell.arms}:
        ids = ", ".join(_printable(a.id) for a in cell.arms)
        sys.stderr.write(f"{prog}: --arm: {src} has no arm {_printable(arm_id)!r} (arms: {ids})\n")
        return EXIT_UNUSABLE
    if not cell.targets_of(arm_id):
        sys.stderr.write(f"{src}: arm {_printable(arm_id)!r} has no targets to place it for\n")
        return EXIT_UNUSABLE

    from kinematics import placement as pl

    problem = pl.placement_problem(cell, arm_id)
    if ns.pitch is not None:
        zone = pl.default_zone(problem)
        x0, y0, x1, y1 = zone.bounds
        points = (math.floor((x1 - x0) / ns.pitch) + 1) * (math.floor((y1 - y0) / ns.pitch) + 1)
        if points > MAX_GRID_POINTS:
            sys.stderr.write(
                f"{prog}: --pitch: {ns.pitch:g} would sample {points} points over the mounting "
                f"zone ({x1 - x0:.0f} x {y1 - y0:.0f} {cell.units}); the limit is "
                f"{MAX_GRID_POINTS}, use a larger pitch\n"
            )
            return EXIT_UNUSABLE
    report, best, region = pl.placement_report(cell, arm_id, ns.pitch, ns.heading_search)
    if ns.png is not None:
        from app.placement_image import map_png
        from kinematics.atomic import write_atomic

        cur = report["current"]
        data = map_png(
            best.map,
            region.rings if best.heading_deg == problem.arm.heading_deg else
            pl.placement_region(problem, best.heading_deg).rings,
            (problem.arm.x, problem.arm.y),
            (best.x, best.y),
            cur["tolerance"],
            cell.units,
            f"{cell.name}: placement of arm {arm_id}",
        )  # fmt: skip
        try:
            write_atomic(ns.png, data)
        except OSError as exc:
            sys.stderr.write(
                f"{prog}: --png: could not write {_printable(str(ns.png))} "
                f"({exc.strerror or type(exc).__name__})\n"
            )
            return EXIT_UNUSABLE
    if ns.apply:
        from kinematics.cellfile import CellFileError, save_cell

        moved = pl.move_base(cell, arm_id, best.x, best.y, best.heading_deg)
        try:
            save_cell(moved, ns.output)
        except CellFileError as err:
            sys.stderr.write(f"{prog}: -o: {err.problems[0]}\n")
            return EXIT_UNUSABLE
    text = _json_text(report) if ns.json else _place_text(report, cell.name, cell.units)
    if not _emit(text, prog):
        return EXIT_UNUSABLE
    feasible = report["best"]["feasible_targets"] == report["targets"]
    return EXIT_OK if feasible else EXIT_INFEASIBLE


def compare_command(args: list[str]) -> int:
    """``elbowroom compare``: see the module docstring. Returns the exit status."""
    prog = "elbowroom compare"
    try:
        ns = _compare_parser().parse_args(args)
    except SystemExit as exc:
        return int(exc.code or 0)
    cell = _load(ns.cell, prog)
    if cell is None:
        return EXIT_UNUSABLE
    from kinematics.variants import comparison_report, format_comparison

    report = comparison_report(cell)
    report["file"] = ns.cell.name
    text = _json_text(report) if ns.json else format_comparison(report) + "\n"
    if not _emit(text, prog):
        return EXIT_UNUSABLE
    by_layout: dict[str, bool] = {}
    for r in report["rows"]:
        ok = r["feasible_targets"] == r["targets"]
        by_layout[r["layout"]] = by_layout.get(r["layout"], True) and ok
    return EXIT_OK if any(by_layout.values()) else EXIT_INFEASIBLE

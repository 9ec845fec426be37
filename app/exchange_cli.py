"""The `export` and `import-dxf` subcommands: CAD and spreadsheet exchange without a window.

``elbowroom export CELL [--dxf F] [--csv F] [--pdf F] [--svg F] [--png F] [--dpi N]
[--paper A3] [--orientation landscape] [--scale 1:10]`` writes the cell as a DXF drawing,
its targets as CSV and its review sheets as PDF, SVG or PNG. Each output format is one
entry of :data:`EXPORTS` (option, help, writer, the :data:`SETTINGS` it reads), so further
formats join the same subcommand with one entry.

``elbowroom import-dxf CELL DXF --layer-kind LAYER=KIND ... [--layer-height LAYER=H ...]
[--units U] [--recover] [--drop-missing] [-o OUT]`` merges the closed outlines on the named
layers into the cell as fixtures and saves it (to OUT, else back to CELL with the previous
file kept as CELL.bak). It prints the import summary; exit status 0 when everything on the
named layers was imported, 1 when some entities there were not (they are listed), 2 for
an unusable cell, drawing, option or output (one line on stderr).
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

__all__ = ["Export", "EXPORTS", "Setting", "SETTINGS", "export_command", "import_dxf_command"]


class _Parser(argparse.ArgumentParser):
    """argparse that reports a bad argument in one line and exits 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        from app.cli import EXIT_UNUSABLE

        sys.stderr.write(f"{self.prog}: {message} (see '{self.prog} --help')\n")
        raise SystemExit(EXIT_UNUSABLE)


@dataclass(frozen=True)
class Export:
    """One output format of ``elbowroom export``.

    Attributes
    ----------
    option : str
        The option naming the output file, e.g. ``"--dxf"``.
    help : str
    write : callable
        ``write(cell, path)``; raises OSError when the file cannot be written. A format
        with ``settings`` is called ``write(cell, path, cell_path=..., cache=..., **values)``
        (``cache`` is shared by the formats of one run).
    settings : tuple of str
        Keys of :data:`SETTINGS` the format reads.
    """

    option: str
    help: str
    write: Callable[..., None]
    settings: tuple[str, ...] = ()


@dataclass(frozen=True)
class Setting:
    """An option of ``elbowroom export`` that formats share (``--paper``, ``--dpi``, ...).

    ``parse(text)`` returns the value or raises ValueError with the problem.
    """

    option: str
    metavar: str
    help: str
    parse: Callable[[str], Any]
    default: str


def _choice(name: str, choices: tuple[str, ...]) -> Callable[[str], str]:
    from kinematics.checks import choice_problem

    def parse(text: str) -> str:
        problem = choice_problem(text, choices)
        if problem:
            raise ValueError(f"{problem}, got {text!r}")
        return text

    return parse


def _scale(text: str):
    from app.sheet.layout import parse_scale

    try:
        return parse_scale(text)
    except ValueError as exc:
        raise ValueError(str(exc).removeprefix("scale ")) from None


def _dpi(text: str) -> int:
    from app.sheet.render import DPI_RANGE

    try:
        value = int(text)
    except ValueError:
        value = None
    if value is None or not DPI_RANGE[0] <= value <= DPI_RANGE[1]:
        raise ValueError(
            f"must be a whole number from {DPI_RANGE[0]} to {DPI_RANGE[1]}, got {text!r}"
        )
    return value


#: Options the sheet formats share, by name.
SETTINGS: dict[str, Setting] = {
    "paper": Setting(
        "--paper",
        "SIZE",
        "review sheet paper: A4, A3, A2 or A1 (default A3)",
        _choice("paper", ("A4", "A3", "A2", "A1")),
        "A3",
    ),
    "orientation": Setting(
        "--orientation",
        "WAY",
        "landscape or portrait (default landscape)",
        _choice("orientation", ("landscape", "portrait")),
        "landscape",
    ),
    "scale": Setting(
        "--scale",
        "SCALE",
        "drawing scale per ISO 5455 (1:1, 1:2, 1:5, 1:10, 1:20, 1:50, ...) or fit, the "
        "largest that fits (default)",
        _scale,
        "fit",
    ),
    "dpi": Setting("--dpi", "N", "resolution of --png sheets (default 150)", _dpi, "150"),
}

_SHEET = ("paper", "orientation", "scale")


def _sheet_plan(cell, cell_path: Path, cache: dict, paper, orientation, scale, dpi=150):
    """The review sheets of a cell, planned once per run (shared by --pdf, --svg, --png)."""
    key = (paper, orientation, scale, dpi)
    if key not in cache:
        from app.sheet.content import SheetOptions, sheet_content
        from app.sheet.render import plan_sheets
        from kinematics.evaluate import evaluate_cell

        if "content" not in cache:
            cache["content"] = sheet_content(evaluate_cell(cell), cell_path)
        options = SheetOptions(paper=paper, orientation=orientation, scale=scale, dpi=dpi)
        cache[key] = plan_sheets(cache["content"], options)
    return cache[key]


def _write_pdf(cell, path: Path, *, cell_path, cache, **values) -> list[Path]:
    from app.sheet.render import write_sheets

    return write_sheets(_sheet_plan(cell, cell_path, cache, **values), pdf=path)


def _write_svg(cell, path: Path, *, cell_path, cache, **values) -> list[Path]:
    from app.sheet.render import write_sheets

    return write_sheets(_sheet_plan(cell, cell_path, cache, **values), svg=path)


def _write_png(cell, path: Path, *, cell_path, cache, **values) -> list[Path]:
    from app.sheet.render import write_sheets

    return write_sheets(_sheet_plan(cell, cell_path, cache, **values), png=path)


def _write_dxf(cell, path: Path) -> None:
    from kinematics.dxf_export import write_dxf

    write_dxf(cell, path)


def _write_csv(cell, path: Path) -> None:
    from kinematics.csv_targets import write_targets_csv

    write_targets_csv(cell, path)


#: The output formats of ``elbowroom export``, in the order they are written.
EXPORTS: list[Export] = [
    Export("--dxf", "write the cell as a DXF drawing (layers ER-*, see README)", _write_dxf),
    Export("--csv", "write the targets as CSV (id, name, x, y, arm, ...)", _write_csv),
    Export("--pdf", "write the review sheets as one vector PDF", _write_pdf, _SHEET),
    Export(
        "--svg",
        "write the review sheet as SVG (further sheets beside it as NAME-2.svg, ...)",
        _write_svg,
        _SHEET,
    ),
    Export(
        "--png",
        "write the review sheet as PNG (further sheets as NAME-2.png, ...)",
        _write_png,
        (*_SHEET, "dpi"),
    ),
]


def _os_reason(exc: OSError) -> str:
    if isinstance(exc, FileNotFoundError):
        return "no such folder"
    if isinstance(exc, PermissionError):
        return "permission denied"
    if isinstance(exc, IsADirectoryError):
        return "it is a folder"
    return exc.strerror or str(exc) or type(exc).__name__


def _load_cell(path: Path):
    from kinematics.cellfile import CellFileError, load_cell

    try:
        return load_cell(path, source=str(path))  # named as the user gave it
    except CellFileError as err:
        sys.stderr.write("".join(f"{line}\n" for line in err.problems))
        return None


def _export_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="elbowroom export", description="Write a cell to other formats.")
    p.add_argument("cell", type=Path, help="a *.cell.json file")
    for e in EXPORTS:
        p.add_argument(e.option, type=Path, metavar="FILE", help=e.help)
    for name, st in SETTINGS.items():
        p.add_argument(st.option, dest=name, metavar=st.metavar, help=st.help)
    return p


def export_command(args: list[str]) -> int:
    """``elbowroom export``: write every requested output, atomically; exit status."""
    # Imported here: app.cli imports this module to register the subcommands.
    from app.cli import EXIT_OK, EXIT_UNUSABLE

    parser = _export_parser()
    ns = parser.parse_args(args)
    wanted = [(e, getattr(ns, e.option.lstrip("-"))) for e in EXPORTS]
    wanted = [(e, path) for e, path in wanted if path is not None]
    if not wanted:
        options = " and/or ".join(e.option for e in EXPORTS)
        parser.error(f"nothing to export: give {options}")
    values: dict[str, Any] = {}
    used = {name for e, _path in wanted for name in e.settings}
    for name, st in SETTINGS.items():
        text = getattr(ns, name)
        if text is not None and name not in used:
            users = " or ".join(e.option for e in EXPORTS if name in e.settings)
            parser.error(f"{st.option} applies to {users} only")
        if name in used:
            try:
                values[name] = st.parse(text if text is not None else st.default)
            except ValueError as exc:
                parser.error(f"{st.option}: {exc}")
    if "dpi" in values:
        from app.sheet.render import png_problem

        problem = png_problem(values["paper"], values["orientation"], values["dpi"])
        if problem:
            parser.error(f"--dpi: {problem}")
    for e, path in wanted:
        if path.is_dir():
            sys.stderr.write(f"{path}: {e.option}: is a folder; give a file name\n")
            return EXIT_UNUSABLE
        if not path.parent.exists():
            sys.stderr.write(f"{path}: {e.option}: could not be written (no such folder)\n")
            return EXIT_UNUSABLE
    cell = _load_cell(ns.cell)
    if cell is None:
        return EXIT_UNUSABLE
    cache: dict[str, Any] = {}
    for e, path in wanted:
        try:
            if e.settings:
                mine = {k: values[k] for k in e.settings}
                written = e.write(cell, path, cell_path=ns.cell, cache=cache, **mine)
            else:
                e.write(cell, path)
                written = [path]
        except OSError as exc:
            where = getattr(exc, "filename", None) or path
            sys.stderr.write(f"{where}: {e.option}: could not be written ({_os_reason(exc)})\n")
            return EXIT_UNUSABLE
        sys.stdout.write("".join(f"wrote {p}\n" for p in written))
    return EXIT_OK


def _pairs(values: list[str] | None, option: str, parser: argparse.ArgumentParser) -> dict:
    out: dict[str, str] = {}
    for text in values or []:
        layer, sep, value = text.rpartition("=")
        if not sep or not layer or not value.strip():
            parser.error(f"{option} must look like LAYER=VALUE, got {text!r}")
        if layer in out:
            parser.error(f"{option}: layer {layer!r} is given twice")
        out[layer] = value.strip()
    return out


def _import_parser() -> argparse.ArgumentParser:
    from kinematics.dxf_units import IMPORT_UNITS

    p = _Parser(
        prog="elbowroom import-dxf",
        description="Merge the closed outlines on chosen DXF layers into a cell as fixtures.",
    )
    p.add_argument("cell", type=Path, help="the *.cell.json file to update")
    p.add_argument("dxf", type=Path, help="the DXF drawing")
    p.add_argument(
        "--layer-kind",
        action="append",
        metavar="LAYER=KIND",
        required=True,
        help="import the outlines on LAYER as fixtures of KIND (repeat for more layers)",
    )
    p.add_argument(
        "--layer-height",
        action="append",
        metavar="LAYER=H",
        help="fixture height for LAYER in the cell's units (default: the entity's thickness)",
    )
    p.add_argument(
        "--units",
        choices=IMPORT_UNITS,
        help="the drawing's units; needed when its $INSUNITS is unset, overrides it when given",
    )
    p.add_argument(
        "--recover",
        action="store_true",
        help="read a damaged file with ezdxf's recover loader (check the counts it prints)",
    )
    p.add_argument(
        "--drop-missing",
        action="store_true",
        help="remove fixtures imported earlier from this DXF file that it no longer holds",
    )
    p.add_argument("-o", "--output", type=Path, metavar="OUT", help="save here instead of CELL")
    return p


def import_dxf_command(args: list[str]) -> int:
    """``elbowroom import-dxf``: read, merge, save atomically; exit status."""
    from app.cli import EXIT_INFEASIBLE, EXIT_OK, EXIT_UNUSABLE
    from kinematics.cellfile import CellFileError, save_cell
    from kinematics.dxf_import import DxfReadError, dxf_fixtures, merge_fixtures, read_dxf

    parser = _import_parser()
    ns = parser.parse_args(args)
    kinds = _pairs(ns.layer_kind, "--layer-kind", parser)
    heights_text = _pairs(ns.layer_height, "--layer-height", parser)
    heights: dict[str, float] = {}
    for layer, text in heights_text.items():
        try:
            heights[layer] = float(text)
        except ValueError:
            parser.error(f"--layer-height: {layer}: must be a number, got {text!r}")
    out = ns.output if ns.output is not None else ns.cell
    if out.is_dir():
        sys.stderr.write(f"{out}: is a folder; give a file name with -o\n")
        return EXIT_UNUSABLE
    if not out.parent.exists():
        sys.stderr.write(f"{out}: could not be written (no such folder)\n")
        return EXIT_UNUSABLE
    cell = _load_cell(ns.cell)
    if cell is None:
        return EXIT_UNUSABLE
    try:
        drawing = read_dxf(ns.dxf, recover=ns.recover)
        if drawing.recovered:
            sys.stdout.write(f"recovered {drawing.source}: found {drawing.counts_text()}\n")
            for note in drawing.recovery_notes[:20]:
                sys.stdout.write(f"  {note}\n")
        result = dxf_fixtures(
            drawing,
            kinds,
            cell_units=cell.units,
            drawing_units=ns.units,
            layer_heights=heights,
        )
    except DxfReadError as exc:
        hint = "" if ns.recover or "line " not in str(exc) else " (--recover reads what it can)"
        sys.stderr.write(f"{exc}{hint}\n")
        return EXIT_UNUSABLE
    merge = merge_fixtures(cell, result.fixtures, drop_missing=ns.drop_missing)
    try:
        save_cell(merge.cell, out)
    except CellFileError as exc:
        sys.stderr.write(f"{exc}\n")
        return EXIT_UNUSABLE
    units_note = "" if ns.units is None else f" (read as {ns.units})"
    lines = [f"{drawing.source}{units_note}: {merge.summary()}; saved {out}"]
    lines += [f"  {line}" for line in result.summary_lines()]
    lines += [f"  {n.text(drawing.source)}" for n in result.notes[:20]]
    if len(result.notes) > 20:
        lines.append(f"  ... and {len(result.notes) - 20} more entities not imported")
    sys.stdout.write("".join(f"{line}\n" for line in lines))
    return EXIT_INFEASIBLE if result.notes else EXIT_OK

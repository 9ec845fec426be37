"""The `export` and `import-dxf` subcommands: CAD and spreadsheet exchange without a window.

``elbowroom export CELL [--dxf F] [--csv F]`` writes the cell as a DXF drawing and/or its
targets as CSV. Each output format is one entry of :data:`EXPORTS` (option, help, writer),
so further formats join the same subcommand with one entry.

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

__all__ = ["Export", "EXPORTS", "export_command", "import_dxf_command"]


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
        ``write(cell, path)``; raises OSError when the file cannot be written.
    """

    option: str
    help: str
    write: Callable[..., None]


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
    for e, path in wanted:
        try:
            e.write(cell, path)
        except OSError as exc:
            sys.stderr.write(f"{path}: {e.option}: could not be written ({_os_reason(exc)})\n")
            return EXIT_UNUSABLE
        sys.stdout.write(f"wrote {path}\n")
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

"""The `elbowroom` command.

``elbowroom [CELL]`` opens the window (no argument: the bundled default cell);
``elbowroom check CELL [--json]`` prints the reach report without a window.
Exit status of ``check``: 0 when every target is feasible, 1 when some are not,
2 when the file or the arguments cannot be used or the report cannot be written
(one line on stderr), 3 on an internal error of the program (every subcommand and
the window: one line naming the file and "internal error", the traceback in the
error log, see :mod:`app.errorlog`).

Subcommands are listed in :data:`SUBCOMMANDS`: name -> function taking the remaining
arguments and returning the exit status. A subcommand module registers itself there
with one line, so adding one touches nothing else here. ``elbowroom help [COMMAND]``
prints the help; a first word that is neither a command nor a file name is refused as an
unknown command, naming the commands (exit 2). Messages about a file name it as the user
gave it on the command line.
"""

from __future__ import annotations

import argparse
import difflib
import importlib
import json
import os
import sys
from collections.abc import Callable
from pathlib import Path

from app.exchange_cli import export_command, import_dxf_command

__all__ = [
    "main",
    "SUBCOMMANDS",
    "EXIT_OK",
    "EXIT_INFEASIBLE",
    "EXIT_UNUSABLE",
    "EXIT_INTERNAL",
    "version",
]

EXIT_OK, EXIT_INFEASIBLE, EXIT_UNUSABLE = 0, 1, 2
#: An internal error (a bug): never mistaken for a finding or for bad input.
EXIT_INTERNAL = 3


class _Parser(argparse.ArgumentParser):
    """argparse that reports a bad argument in one line and exits 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        sys.stderr.write(f"{self.prog}: {message} (see '{self.prog} --help')\n")
        raise SystemExit(EXIT_UNUSABLE)


def version() -> str:
    """The installed version of Elbow Room ("0.1.0"); "unknown" when not installed."""
    from importlib.metadata import PackageNotFoundError
    from importlib.metadata import version as dist_version

    try:
        return dist_version("elbowroom")
    except PackageNotFoundError:
        return "unknown"


def _parse_size(text: str) -> tuple[int, int]:
    try:
        w, h = (int(v) for v in text.lower().split("x"))
    except ValueError:
        raise argparse.ArgumentTypeError(f"--size must look like 1600x1000, got {text!r}") from None
    if not (100 <= w <= 10000 and 100 <= h <= 10000):
        raise argparse.ArgumentTypeError(f"--size must be 100..10000 pixels each way, got {text!r}")
    return w, h


def _check_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="elbowroom check", description="Report which targets each arm reaches.")
    p.add_argument("cell", type=Path, help="a *.cell.json file")
    p.add_argument("--json", action="store_true", help="print one JSON object instead of a table")
    return p


def _window_parser() -> argparse.ArgumentParser:
    p = _Parser(
        prog="elbowroom",
        description="Open the Elbow Room window. Subcommands: 'check CELL [--json]', "
        "'export CELL ...', 'import-dxf CELL DXF ...', 'place CELL ...', "
        "'compare CELL [--json]' (each with --help; 'elbowroom help COMMAND' too).",
    )
    p.add_argument("--version", action="version", version=f"elbowroom {version()}")
    p.add_argument("cell", type=Path, nargs="?", help="a *.cell.json file (default: bundled cell)")
    p.add_argument("--screenshot", type=Path, metavar="FILE.png", help="save the window and exit")
    p.add_argument("--size", type=_parse_size, metavar="WxH", help="window size for --screenshot")
    return p


def _load(path: Path):
    from kinematics.cellfile import CellFileError, load_cell

    try:
        return load_cell(path, source=str(path))  # named as the user gave it
    except CellFileError as err:
        # Every problem on its own line, so one run shows all that needs fixing.
        sys.stderr.write("".join(f"{line}\n" for line in err.problems))
        return None


def _silence_stdout() -> None:
    # Python flushes stdout again at exit; point it at devnull so that flush cannot fail too.
    try:
        fd = os.open(os.devnull, os.O_WRONLY)
        try:
            os.dup2(fd, sys.stdout.fileno())
        finally:
            os.close(fd)
    except (OSError, ValueError, AttributeError):
        pass


def _stdout_encodes(text: str) -> bool:
    try:
        text.encode(getattr(sys.stdout, "encoding", None) or "utf-8")
    except (UnicodeEncodeError, LookupError):
        return False
    return True


def _write_out(text: str) -> bool:
    """Write to stdout; on failure (closed pipe, full disk) say so in one line, return False."""
    if not _stdout_encodes(text):
        # A terminal that cannot show some names (e.g. LC_ALL=C) gets them escaped, not a crash.
        text = text.encode("ascii", "backslashreplace").decode("ascii")
    if sys.stdout is None:  # started with its standard output closed
        sys.stderr.write(
            "elbowroom check: could not write the report (standard output is closed)\n"
        )
        return False
    try:
        sys.stdout.write(text)
        sys.stdout.flush()
    except (OSError, ValueError) as exc:
        if isinstance(exc, ValueError):  # "I/O operation on closed file"
            reason = "standard output is closed"
        elif isinstance(exc, BrokenPipeError):
            reason = "the reading end of the pipe was closed"
        else:
            reason = exc.strerror or str(exc) or type(exc).__name__
        sys.stderr.write(f"elbowroom check: could not write the report ({reason})\n")
        _silence_stdout()
        return False
    return True


def _run_check(path: Path, as_json: bool) -> int:
    from kinematics.report import check_report, format_check_table

    cell = _load(path)
    if cell is None:
        return EXIT_UNUSABLE
    report = check_report(cell)
    report["file"] = path.name
    if as_json:
        text = json.dumps(report, indent=2, ensure_ascii=False) + "\n"
        if not _stdout_encodes(text):
            text = json.dumps(report, indent=2) + "\n"  # same data, \u escapes
    else:
        text = format_check_table(report) + "\n"
    if not _write_out(text):
        return EXIT_UNUSABLE
    # Findings: a target that cannot be reached, or two arms that meet.
    contact = (report.get("interference") or {}).get("first_contact") is not None
    return EXIT_OK if report["summary"]["infeasible"] == 0 and not contact else EXIT_INFEASIBLE


def has_display() -> bool:
    """True when a window can be shown (or Qt was told which platform to use)."""
    if os.environ.get("QT_QPA_PLATFORM"):
        return True
    if sys.platform.startswith("linux"):
        return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))
    return True


def _check_command(args: list[str]) -> int:
    ns = _check_parser().parse_args(args)
    return _run_check(ns.cell, ns.json)


#: Subcommand name -> function(remaining arguments) -> exit status.
SUBCOMMANDS: dict[str, Callable[[list[str]], int]] = {
    "check": _check_command,
    "export": export_command,
    "import-dxf": import_dxf_command,
    "place": lambda args: importlib.import_module("app.place_cli").place_command(args),
    "compare": lambda args: importlib.import_module("app.place_cli").compare_command(args),
}


def _file_argument(args: list[str]) -> str | None:
    """The file a command line names (its first argument that is not an option), as given."""
    for a in args:
        if not a.startswith("-"):
            return a
    return None


def _commands() -> list[str]:
    return [*SUBCOMMANDS, "help"]


def _help(args: list[str]) -> int:
    """``elbowroom help [COMMAND]``: the help of the window or of one command."""
    if args and args[0] in SUBCOMMANDS:
        return SUBCOMMANDS[args[0]](["--help"])
    if args and args[0] != "help":
        return _unknown(args[0])
    p = _window_parser()
    p.print_help()
    sys.stdout.write(
        "\ncommands: " + ", ".join(_commands()) + " ('elbowroom help COMMAND' for one)\n"
    )
    return EXIT_OK


def _looks_like_file(word: str) -> bool:
    return word.endswith(".json") or os.sep in word or "/" in word or os.path.exists(word)


def _unknown(word: str) -> int:
    """A first word that is no command and no file: say so, with the commands, and the help."""
    close = difflib.get_close_matches(word, _commands(), n=1)
    hint = f"; did you mean '{close[0]}'?" if close else ""
    sys.stderr.write(
        f"elbowroom: unknown command '{word}' (commands: {', '.join(_commands())}){hint}\n"
        "To open a cell in the window, give its file name (CELL.cell.json).\n\n"
    )
    _window_parser().print_help(sys.stderr)
    return EXIT_UNUSABLE


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``elbowroom`` console script."""
    args = list(sys.argv[1:] if argv is None else argv)
    if sys.stderr is None:  # started with stderr closed: its one-line messages go nowhere
        sys.stderr = open(os.devnull, "w", encoding="utf-8")  # noqa: SIM115 - for the run
    if args and args[0] in SUBCOMMANDS:
        prog, rest = f"elbowroom {args[0]}", args[1:]
    else:
        prog, rest = "elbowroom", args
    from app.errorlog import warnings_to_log

    try:
        with warnings_to_log(prog):
            return _main(args)
    except SystemExit as exc:  # argparse: --help exits 0, errors exit 2
        return int(exc.code or 0) if not isinstance(exc.code, str) else EXIT_UNUSABLE
    except KeyboardInterrupt:
        return 130  # the shell's convention for Ctrl+C (128 + SIGINT)
    except Exception as exc:  # noqa: BLE001 - any bug: one line, traceback to the log
        from app.errorlog import report_internal_error

        return report_internal_error(prog, _file_argument(rest), exc)


def _main(args: list[str]) -> int:
    try:
        if args and args[0] in SUBCOMMANDS:
            return SUBCOMMANDS[args[0]](args[1:])
        if args and args[0] == "help":
            return _help(args[1:])
        if args and not args[0].startswith("-") and not _looks_like_file(args[0]):
            return _unknown(args[0])
        ns = _window_parser().parse_args(args)
    except SystemExit as exc:  # argparse: --help exits 0, errors exit 2
        return int(exc.code or 0)

    from app.resources import default_cell_path

    path = ns.cell if ns.cell is not None else default_cell_path()
    if ns.screenshot is None and not has_display():
        shown = path.name if ns.cell is None else str(ns.cell)
        notice = (
            f"No display available: printing the check report of {shown} instead of a window "
            "(--screenshot FILE.png saves a picture of it)."
        )
        if not _write_out(notice + "\n"):
            return EXIT_UNUSABLE
        code = _run_check(path, as_json=False)
        # The report's findings are not a failure of the run.
        return EXIT_UNUSABLE if code == EXIT_UNUSABLE else EXIT_OK
    from app.gui import run

    # No file: the window opens an unsaved copy of the bundled cell, so Save asks where to.
    return run(ns.cell, screenshot=ns.screenshot, size=ns.size)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

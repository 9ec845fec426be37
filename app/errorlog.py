"""Internal errors: one line for the user, the traceback to a log file, exit status 3.

A bug in the program must never look like a finding (exit 1) or bad input (exit 2),
and a traceback is no message for a user. :func:`report_internal_error` appends the
traceback to :func:`log_path` (``errors.log`` in the user's state folder, found with
platformdirs: ``~/.local/state/elbowroom`` on Linux) and prints one line naming the
file and "internal error" with where the details went. The command and the window
exit with :data:`EXIT_INTERNAL` then.

No Qt here: the command uses it without a window.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import os
import sys
import traceback
import warnings
from collections.abc import Iterator
from pathlib import Path

from platformdirs import user_state_path

from kinematics.atomic import write_atomic

__all__ = [
    "APP_DIR_NAME",
    "EXIT_INTERNAL",
    "LOG_NAME",
    "MAX_LOG_BYTES",
    "state_dir",
    "log_path",
    "log_internal_error",
    "internal_error_line",
    "report_internal_error",
    "warnings_to_log",
]

#: Exit status for an internal error (a bug), distinct from findings (1) and bad input (2).
EXIT_INTERNAL = 3
#: Folder name under the platform's user state folder.
APP_DIR_NAME = "elbowroom"
#: File the tracebacks go to, in :func:`state_dir`.
LOG_NAME = "errors.log"
#: The log keeps its newest part up to this size.
MAX_LOG_BYTES = 1_000_000


def state_dir() -> Path:
    """The user's state folder for Elbow Room (not created here)."""
    return user_state_path(APP_DIR_NAME, appauthor=False)


def log_path() -> Path:
    """Where tracebacks of internal errors are written."""
    return state_dir() / LOG_NAME


def _append(text: str) -> Path | None:
    path = log_path()
    entry = text.encode("utf-8", "backslashreplace")
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        try:
            old = path.read_bytes()
        except FileNotFoundError:
            old = b""
        data = (old + entry)[-MAX_LOG_BYTES:]
        write_atomic(path, data)
    except OSError:
        return None
    return path


def _header(context: str) -> str:
    stamp = _dt.datetime.now().astimezone().isoformat(timespec="seconds")
    return f"=== {stamp} pid {os.getpid()} {context}\n"


def log_internal_error(exc: BaseException, context: str) -> Path | None:
    """Append ``exc``'s traceback to the log; the log's path, or None if it could not be written."""
    trace = "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))
    return _append(_header(context) + trace + "\n")


@contextlib.contextmanager
def warnings_to_log(context: str) -> Iterator[None]:
    """Within the block, warnings shown by Python go to the log instead of the terminal.

    Filters are untouched: a warning turned into an error still raises.
    """
    original = warnings.showwarning

    def show(message, category, filename, lineno, file=None, line=None):  # noqa: ANN001
        text = warnings.formatwarning(message, category, filename, lineno, line)
        _append(_header(context) + text + "\n")

    warnings.showwarning = show
    try:
        yield
    finally:
        warnings.showwarning = original


def internal_error_line(prog: str, file: str | None, exc: BaseException, log: Path | None) -> str:
    """The one line shown for an internal error."""
    where = f"{file}: " if file else ""
    kind = type(exc).__name__
    details = f"details in {log}" if log is not None else "the error log could not be written"
    return f"{prog}: {where}internal error ({kind}); {details}"


def report_internal_error(prog: str, file: str | None, exc: BaseException) -> int:
    """Log ``exc``, print its one line on stderr, return :data:`EXIT_INTERNAL`."""
    log = log_internal_error(exc, f"{prog} {file or ''}".rstrip())
    line = internal_error_line(prog, file, exc, log)
    stream = sys.stderr
    if stream is not None:
        try:
            stream.write(line + "\n")
            stream.flush()
        except (OSError, ValueError):
            pass
    return EXIT_INTERNAL

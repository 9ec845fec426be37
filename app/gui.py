"""Start the desktop program: ``run(cell_path)`` opens the main window on a cell.

With ``screenshot`` the window is drawn once at a fixed size, saved as a PNG and
closed, which works without a display (the offscreen platform is used then). The
picture is taken once the window has settled: every pending event handled (layout,
the canvas's fit once shown, first paint), counted in event rounds rather than waited
for on the clock, so a busy machine gives the same picture, only later.

An exception that reaches Qt's event loop (a bug) is an internal error: unsaved work
goes to the recovery file, the traceback to the error log (:mod:`app.errorlog`), one
line naming the file to stderr, and the program exits with status 3. At start-up the
window offers the unsaved work of copies that stopped (:meth:`MainWindow.offer_recovery`).
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

from app.resources import default_cell_path
from kinematics.cellfile import CellFileError, load_cell

__all__ = [
    "run",
    "DEFAULT_SCREENSHOT_SIZE",
    "SETTLE_ROUNDS",
    "QUIET_QT_MESSAGES",
    "install_message_filter",
]

#: Window size for screenshots, in pixels.
DEFAULT_SCREENSHOT_SIZE = (1600, 1000)
#: Event rounds a screenshot runs after the last one that found work, before the picture.
SETTLE_ROUNDS = 3
#: Qt messages that say nothing to the user (the offscreen platform lacks a window-manager
#: feature it was never asked for): kept off the terminal.
QUIET_QT_MESSAGES = ("propagateSizeHints",)

_previous_handler: list = []


def install_message_filter() -> None:
    """Keep :data:`QUIET_QT_MESSAGES` off the terminal; every other Qt message goes on to
    the handler installed before (Qt's own, which writes to stderr, when there was none)."""
    from PySide6.QtCore import qInstallMessageHandler

    if _previous_handler:
        return

    def handler(kind, context, message: str) -> None:
        if any(q in message for q in QUIET_QT_MESSAGES):
            return
        before = _previous_handler[0]
        if before is not None:
            before(kind, context, message)
        elif sys.stderr is not None:
            sys.stderr.write(message + "\n")

    _previous_handler.append(None)
    _previous_handler[0] = qInstallMessageHandler(handler)


def _has_display() -> bool:
    if sys.platform != "linux":
        return True
    return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))


def run(
    cell_path: Path | None,
    screenshot: Path | None = None,
    size: tuple[int, int] | None = None,
) -> int:
    """Open the main window on a cell file and run until it is closed.

    Parameters
    ----------
    cell_path : Path or None
        Cell file to open; None opens the bundled sample cell as an unsaved copy.
    screenshot : Path, optional
        Save a PNG of the window here instead of running interactively.
    size : (int, int), optional
        Window size for the screenshot (default 1600 x 1000).

    Returns
    -------
    int
        0 on success, 2 when the cell file is bad (every problem the loader
        found is printed to stderr, one line each), 1 when there is no display
        to open a window on or the screenshot could not be written.
    """
    path = Path(cell_path) if cell_path is not None else default_cell_path()
    try:
        cell = load_cell(path, source=str(cell_path) if cell_path is not None else None)
    except CellFileError as exc:
        # Every problem on its own line (as `elbowroom check` does), so one run shows them all.
        sys.stderr.write("".join(f"{line}\n" for line in exc.problems))
        return 2
    if not _has_display() and not os.environ.get("QT_QPA_PLATFORM"):
        if screenshot is None:
            print(
                "no display found (DISPLAY and WAYLAND_DISPLAY are not set); "
                "use --screenshot, or set QT_QPA_PLATFORM",
                file=sys.stderr,
            )
            return 1
        os.environ["QT_QPA_PLATFORM"] = "offscreen"

    from PySide6.QtCore import QTimer
    from PySide6.QtWidgets import QApplication

    from app.document import Document
    from app.main_window import MainWindow
    from app.settings import APPLICATION, ORGANISATION

    install_message_filter()
    app = QApplication.instance() or QApplication(sys.argv[:1])
    app.setOrganizationName(ORGANISATION)
    app.setApplicationName(APPLICATION)
    app.setApplicationDisplayName(APPLICATION)

    if cell_path is None:
        # The bundled sample opens as an unsaved copy, so Save never writes into the program.
        document = Document(cell, None)
        untitled = f"{path.name} (sample)"
    else:
        document = Document(cell, path)
        untitled = path.name
    window = MainWindow(document, use_settings=screenshot is None, untitled_name=untitled)
    if cell_path is not None and screenshot is None:
        window._remember(path)
        if not window.claim_file():  # another copy has it open and the user cancelled
            _dispose(window, app)
            return 0

    if screenshot is None:
        window.show()
        window.canvas.zoom_to_fit()
        QTimer.singleShot(0, window.offer_recovery)
        previous_hook = sys.excepthook
        sys.excepthook = _internal_error_hook(window, app)
        try:
            code = app.exec()
        finally:
            sys.excepthook = previous_hook
        for w in [window, *window.spawned]:
            w.release_files()
        _dispose(window, app)
        return int(code)

    w, h = size or DEFAULT_SCREENSHOT_SIZE
    window.resize(w, h)
    window.show()
    _settle(app)
    window.canvas.zoom_to_fit()  # with the layout final, fit the view to the canvas's size
    _settle(app)
    image = window.grab()
    shot = Path(screenshot)
    ok = shot.parent.is_dir() and image.save(str(shot), "PNG")
    if not ok:
        print(f"{shot}: could not write the screenshot (does the folder exist?)", file=sys.stderr)
    _dispose(window, app)
    return 0 if ok else 1


def _internal_error_hook(window, app):
    """sys.excepthook while the window runs: save work, log, one line, exit 3."""
    from app.errorlog import EXIT_INTERNAL, internal_error_line, log_internal_error

    handled = []

    def hook(exc_type, exc, tb) -> None:
        if handled:  # one report; later errors while stopping go to the log only
            log_internal_error(exc, "window (while stopping)")
            return
        handled.append(exc)
        for w in [window, *window.spawned]:
            try:
                w.autosave()
            except Exception:  # noqa: BLE001 - stopping anyway; the log has the cause
                pass
        path = window.document.path
        name = path.name if path is not None else window.untitled_name
        log = log_internal_error(exc, f"window: {path or name}")
        line = internal_error_line("elbowroom", name, exc, log)
        if sys.stderr is not None:
            sys.stderr.write(line + "\n")
            sys.stderr.flush()
        try:
            window.show_internal_error(line)
        finally:
            app.exit(EXIT_INTERNAL)

    return hook


def _settle(app) -> None:
    """Handle events until :data:`SETTLE_ROUNDS` rounds in a row find nothing more to do."""
    from PySide6.QtCore import QCoreApplication, QEvent, QObject

    class _Counter(QObject):
        # Counts the events delivered in one round (posted ones and timers alike).
        def __init__(self) -> None:
            super().__init__()
            self.seen = 0

        def eventFilter(self, obj, event) -> bool:  # noqa: N802 (Qt name)
            self.seen += 1
            return False

    counter = _Counter()
    app.installEventFilter(counter)
    try:
        quiet = 0
        for _ in range(10_000):  # a bound, never reached by a window that settles
            counter.seen = 0
            QCoreApplication.sendPostedEvents(None, 0)
            app.processEvents()
            # Deferred deletes are delivered only from an event loop; they change no picture.
            QCoreApplication.sendPostedEvents(None, QEvent.Type.DeferredDelete)
            quiet = quiet + 1 if counter.seen == 0 else 0
            if quiet >= SETTLE_ROUNDS:
                break
    finally:
        app.removeEventFilter(counter)


def _dispose(window, app) -> None:
    """Delete the window before the interpreter tears Qt down (avoids crashes at exit)."""
    from PySide6.QtCore import QEvent

    window.hide()
    window.deleteLater()
    app.sendPostedEvents(None, QEvent.Type.DeferredDelete)
    app.processEvents()

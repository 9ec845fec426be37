"""The main window: the canvas in the middle, panels docked around it, menus and status bar.

The window owns the undo stack and the file commands (New, Open, Save, Save As,
Revert, Open Recent). It observes the document model and never computes
geometry itself. Every question it asks the user goes through one method
(``ask_unsaved_changes``, ``ask_open_path``, ``ask_save_path``, ``ask_revert``,
``ask_replace_file``, ``ask_replace_read_only``, ``ask_locked_file``,
``ask_outside_change``, ``ask_overwrite_outside_change``, ``ask_recovery``,
``show_error``, ``show_notice``, ``show_internal_error``) so tests can answer it.

Data safety: a file is opened only once it has loaded and evaluated (otherwise the
current document, title and path stay); the open file is locked against other
running copies (:mod:`app.filelock`) and watched for outside changes
(:mod:`app.filewatch`); unsaved work is autosaved to a recovery file
(:mod:`app.recovery`) every few minutes and after every :data:`AUTOSAVE_EDITS` edits.
"""

from __future__ import annotations

import os
from pathlib import Path

from PySide6.QtCore import QByteArray, Qt, QTimer
from PySide6.QtGui import QAction, QCloseEvent, QKeySequence, QUndoStack
from PySide6.QtWidgets import (
    QDockWidget,
    QDoubleSpinBox,
    QFileDialog,
    QLabel,
    QMainWindow,
    QMenu,
    QMessageBox,
    QPushButton,
    QSizePolicy,
    QToolBar,
    QWidget,
)

from app import recovery
from app import settings as app_settings
from app.canvas import CellCanvas
from app.cell_actions import CellActions
from app.commands import attach_undo_stack
from app.document import Changes, Document
from app.errorlog import log_internal_error
from app.exchange_dialogs import ExchangeActions
from app.filelock import DocumentLock, LockHolder
from app.filewatch import FileWatch
from app.layout_actions import LayoutActions
from app.panels.arm_panel import ArmPanel
from app.panels.fixture_panel import FixturePanel
from app.panels.problems import ProblemsList
from app.panels.sequence_panel import SequencePanel
from app.panels.target_table import TargetTable
from app.panels.text import cursor_text, hover_text, summary_text
from app.panels.timeline import TimelinePanel
from app.pause import pause_timer
from kinematics.caution import CAUTION_FULL, CAUTION_SHORT
from kinematics.cell import Arm, Cell
from kinematics.cellfile import CellFileError, ReadOnlyFileError, load_cell, save_cell
from kinematics.evaluate import evaluate_cell
from kinematics.sweep import cell_moves

__all__ = [
    "MainWindow",
    "APP_TITLE",
    "CELL_SUFFIX",
    "new_cell",
    "UNTITLED",
    "AUTOSAVE_EDITS",
    "prepare_cell",
]

#: Unsaved work is autosaved after this many edits (undo and redo count), besides the timer.
AUTOSAVE_EDITS = 50
#: Height the bottom docks grow to when the timeline is first shown (pixels, at most).
TIMELINE_PX = 400

APP_TITLE = "Elbow Room"
CELL_SUFFIX = ".cell.json"
UNTITLED = "Untitled"
_FILE_FILTER = "Cell files (*.cell.json);;All files (*)"
_MAX_PITCH = 1e5  # grid pitch limit in cell units (a 100 m grid is no grid)

# Submenu titles for the canvas's action key prefixes ("overlay.annulus" -> "Overlays").
_ACTION_GROUPS = {
    "overlay": "Overlays",
    "ghosts": "Ghost poses",
    "snap": "Snapping",
    "tool": "Tools",
}


def new_cell() -> Cell:
    """The cell File > New starts from: empty, with one arm of typical proportions."""
    # Common practice, no source: a 350 + 250 mm arm with generous limits is a neutral start.
    arm = Arm(
        id="arm1",
        name="Arm 1",
        x=0.0,
        y=0.0,
        heading_deg=0.0,
        a1=350.0,
        a2=250.0,
        q1_limits=(-170.0, 170.0),
        q2_limits=(-150.0, 150.0),
    )
    return Cell(name="New cell", units="mm", arms=(arm,))


def prepare_cell(cell: Cell) -> None:
    """Run the engine on ``cell`` as the window will (verdicts and sequence moves).

    Raises whatever the engine raises, before the window gives up its current document.
    """
    evaluation = evaluate_cell(cell)
    cell_moves(cell, evaluation)


_CLEAN = object()  # _switch: the new document starts clean


def _same_file(a: Path | None, b: Path | None) -> bool:
    if a is None or b is None:
        return False
    try:
        return a.resolve() == b.resolve()
    except OSError:
        return a == b


class MainWindow(QMainWindow):
    """The Elbow Room main window on one document.

    Parameters
    ----------
    document : Document, optional
        The cell to show; a new cell when omitted.
    use_settings : bool
        Restore and store window layout, recent files and canvas toggles
        (off for screenshots, which must not depend on the user's settings).
    untitled_name : str, optional
        Title shown while the document has no file (e.g. for the bundled sample).
    """

    def __init__(
        self,
        document: Document | None = None,
        *,
        use_settings: bool = True,
        untitled_name: str = UNTITLED,
    ) -> None:
        super().__init__()
        self.document = document or Document(new_cell())
        self.use_settings = use_settings
        self.untitled_name = untitled_name
        self.setObjectName("main_window")
        self.undo_stack = QUndoStack(self)
        attach_undo_stack(self.document, self.undo_stack)
        # The one "changes paused" clock every view waits for.
        self.pause = pause_timer(self.document)
        # Moves and plans come after the first picture (start-up shows the verdicts first):
        # the views start as if a drag were stepping, and settle on the first event round.
        self.document.hold()
        QTimer.singleShot(0, self, self._first_settle)

        self.canvas = CellCanvas(self.document, self)
        self.canvas.setObjectName("canvas")
        self.setCentralWidget(self.canvas)

        self.arm_panel = ArmPanel(self.document)
        self.target_table = TargetTable(self.document)
        self.problems = ProblemsList(self.document)
        self.arm_dock = self._dock(
            "Arm", "arm_dock", self.arm_panel, Qt.DockWidgetArea.LeftDockWidgetArea
        )
        self.problems_dock = self._dock(
            "Problems", "problems_dock", self.problems, Qt.DockWidgetArea.RightDockWidgetArea
        )
        self.table_dock = self._dock(
            "Targets", "table_dock", self.target_table, Qt.DockWidgetArea.BottomDockWidgetArea
        )
        # The cycles over time, a tab beside the targets (the playback runs while it shows).
        self.timeline = TimelinePanel(self.document)
        self.timeline_dock = self._dock(
            "Timeline", "timeline_dock", self.timeline, Qt.DockWidgetArea.BottomDockWidgetArea
        )
        self.tabifyDockWidget(self.table_dock, self.timeline_dock)
        self.table_dock.raise_()
        self.timeline.attach_dock(self.timeline_dock)
        self._timeline_grown = False
        self.timeline_dock.visibilityChanged.connect(self._on_timeline_visible)
        # The arm panel runs full height; the table spans under the canvas and the problems.
        self.setCorner(Qt.Corner.BottomLeftCorner, Qt.DockWidgetArea.LeftDockWidgetArea)
        self.setCorner(Qt.Corner.BottomRightCorner, Qt.DockWidgetArea.BottomDockWidgetArea)
        self.resizeDocks([self.arm_dock, self.problems_dock], [275, 320], Qt.Orientation.Horizontal)
        self.resizeDocks([self.table_dock], [290], Qt.Orientation.Vertical)
        # Fixtures beside the arm and sequences beside the problems, as tabs.
        self.fixture_panel = FixturePanel(self.document)
        self.sequence_panel = SequencePanel(self.document)
        self.fixture_dock = self._dock(
            "Fixture", "fixture_dock", self.fixture_panel, Qt.DockWidgetArea.LeftDockWidgetArea
        )
        self.sequence_dock = self._dock(
            "Sequence", "sequence_dock", self.sequence_panel, Qt.DockWidgetArea.RightDockWidgetArea
        )
        self.tabifyDockWidget(self.arm_dock, self.fixture_dock)
        self.tabifyDockWidget(self.problems_dock, self.sequence_dock)
        self.arm_dock.raise_()
        self.problems_dock.raise_()
        self.resizeDocks([self.arm_dock, self.problems_dock], [275, 320], Qt.Orientation.Horizontal)
        self.resizeDocks([self.table_dock], [290], Qt.Orientation.Vertical)
        self.cell_actions = CellActions(self)

        self._build_status_bar()
        self._build_actions()
        self._build_menus()

        ev = self.document.events
        ev.cell_changed.connect(self._on_cell_changed)
        ev.path_changed.connect(lambda _p: self._update_title())
        ev.dirty_changed.connect(lambda _d: self._update_title())
        self.undo_stack.undoTextChanged.connect(self._update_undo_texts)
        self.undo_stack.redoTextChanged.connect(self._update_undo_texts)
        self.undo_stack.canUndoChanged.connect(self._update_undo_texts)
        self.undo_stack.canRedoChanged.connect(self._update_undo_texts)
        self.problems.zoom_requested.connect(lambda tid: self.canvas.zoom_to(tid))
        self.problems.zoom_targets_requested.connect(self.canvas.zoom_to_targets)
        self.problems.count_changed.connect(self._on_problem_count)
        self.problems.time_requested.connect(self.show_time)
        self.target_table.source.refused.connect(
            lambda msg: self.statusBar().showMessage(msg, 8000)
        )
        self.canvas.cursor_moved.connect(self._on_cursor)
        self.canvas.hovered_target.connect(self._on_hover)
        self.canvas.status_message.connect(lambda msg: self.statusBar().showMessage(msg, 5000))
        self._wire_editors()

        self.read_only = False
        self.file_lock: DocumentLock | None = None
        self.watch = FileWatch(self)
        self.watch.changed_outside.connect(self._on_outside_change)
        self.watch.watch(self.document.path)
        self.recovery_file = recovery.RecoveryFile()
        self.spawned: list[MainWindow] = []
        self._edits_since_autosave = 0
        self._autosave_failed = False
        self.undo_stack.indexChanged.connect(self._count_edit)
        self.autosave_timer = QTimer(self)
        self.autosave_timer.setObjectName("autosave_timer")
        self.autosave_timer.timeout.connect(self.autosave)
        self.backup_count = app_settings.DEFAULT_BACKUPS
        minutes = app_settings.DEFAULT_AUTOSAVE_MINUTES
        if use_settings:
            self.backup_count = app_settings.backup_count()
            minutes = app_settings.autosave_minutes()
        self.set_autosave_minutes(minutes)

        self.resize(1400, 900)
        if use_settings:
            self._restore_settings()
        self._update_title()
        self._update_undo_texts()
        self._on_problem_count(self.problems.count_of_problems)
        self._show_summary()

    # ------------------------------------------------------------------ layout

    def _wire_editors(self) -> None:
        """The cell editors' questions, messages and remembered fixture heights."""
        say = self.statusBar().showMessage
        acts = self.cell_actions
        self.arm_panel.set_arm_actions(acts.arm_actions)
        self.arm_panel.refused.connect(lambda msg: say(f"✕ {msg}", 10000))
        self.fixture_panel.refused.connect(lambda msg: say(msg, 10000))
        self.fixture_panel.height_set.connect(acts.remember_height)
        self.sequence_panel.message.connect(lambda msg: say(msg, 8000))
        self.target_table.source.ask_sequence_place = lambda ids, arm: acts.ask_sequence_place(
            ids, arm
        )
        self.canvas.new_fixture_height = lambda kind: acts.new_fixture_height(kind)
        self.document.selection.changed.connect(self._raise_editor)

    def _raise_editor(self, ids: tuple[str, ...]) -> None:
        # One fixture or arm picked on the canvas: show its editor's tab.
        if len(ids) != 1:
            return
        cell = self.document.cell
        if any(f.id == ids[0] for f in cell.fixtures):
            self.fixture_dock.raise_()
        elif any(a.id == ids[0] for a in cell.arms):
            self.arm_dock.raise_()

    def _dock(self, title: str, name: str, widget: QWidget, area: Qt.DockWidgetArea) -> QDockWidget:
        dock = QDockWidget(title, self)
        dock.setObjectName(name)
        dock.setWidget(widget)
        self.addDockWidget(area, dock)
        return dock

    def _build_status_bar(self) -> None:
        bar = self.statusBar()
        self.hover_label = QLabel()
        self.hover_label.setObjectName("hover_label")
        self.hover_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        # Long hover texts are cut at the caution rather than pushing it away; the tooltip is whole.
        self.hover_label.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Preferred)
        self.cursor_label = QLabel()
        self.cursor_label.setObjectName("cursor_label")
        self.cursor_label.setMinimumWidth(
            self.cursor_label.fontMetrics().horizontalAdvance("x -00000.0  y -00000.0 mm")
        )
        self.caution_button = QPushButton(f"⚠ {CAUTION_SHORT}")
        self.caution_button.setObjectName("caution_button")
        self.caution_button.setFlat(True)
        self.caution_button.setCursor(Qt.CursorShape.PointingHandCursor)
        self.caution_button.setToolTip("Safety caution: click for the full text")
        self.caution_button.setStyleSheet("QPushButton { font-weight: bold; padding: 1px 6px; }")
        self.caution_button.clicked.connect(self.show_caution)
        bar.addWidget(self.hover_label, 1)
        bar.addPermanentWidget(self.cursor_label)
        bar.addPermanentWidget(self.caution_button)

    def _action(
        self, text: str, slot, shortcut: QKeySequence | QKeySequence.StandardKey | str | None = None
    ) -> QAction:
        act = QAction(text, self)
        if shortcut is not None:
            act.setShortcut(QKeySequence(shortcut))
        act.triggered.connect(lambda _checked=False: slot())
        return act

    def _build_actions(self) -> None:
        K = QKeySequence.StandardKey
        self.act_new = self._action("&New", self.new_file, K.New)
        self.act_open = self._action("&Open…", self.open_file, K.Open)
        self.act_save = self._action("&Save", self.save, K.Save)
        self.act_save_as = self._action("Save &As…", self.save_as, K.SaveAs)
        self.act_revert = self._action("&Revert to Saved", self.revert)
        self.act_safety = self._action("Backups and &Autosave…", self.edit_safety_settings)
        self.act_quit = self._action("&Quit", self.close, K.Quit)
        self.act_undo = self._action("&Undo", self.undo, K.Undo)
        self.act_redo = self._action("&Redo", self.redo, K.Redo)
        # Every platform binding (Ctrl+Y and Ctrl+Shift+Z both redo), fields included.
        self.act_undo.setShortcuts(K.Undo)
        self.act_redo.setShortcuts(K.Redo)
        self.act_delete = self._action("&Delete", self.delete_selection, K.Delete)
        self.act_select_all = self._action("Select &All Targets", self.select_all, K.SelectAll)
        self.act_zoom_fit = self._action("&Zoom to Fit", self.canvas.zoom_to_fit, "Ctrl+0")
        self.act_about = self._action("&About Elbow Room", self.show_about)
        self.act_caution = self._action("Safety &Caution", self.show_caution)
        self.act_pitch = self._action("Grid &Pitch…", self.edit_snap_pitch)
        self.act_pitch.setToolTip("Set the grid pitch that positions snap to")
        for act in (self.act_new, self.act_open, self.act_save, self.act_save_as, self.act_quit):
            self.addAction(act)

    def _build_menus(self) -> None:
        bar = self.menuBar()
        file_menu = bar.addMenu("&File")
        file_menu.addAction(self.act_new)
        file_menu.addAction(self.act_open)
        self.recent_menu = file_menu.addMenu("Open &Recent")
        self.recent_menu.aboutToShow.connect(self._fill_recent_menu)
        self._fill_recent_menu()
        file_menu.addSeparator()
        file_menu.addAction(self.act_save)
        file_menu.addAction(self.act_save_as)
        file_menu.addAction(self.act_revert)
        file_menu.addAction(self.act_safety)
        file_menu.addSeparator()
        self.exchange = ExchangeActions(self)
        self.exchange.add_to(file_menu)
        file_menu.addSeparator()
        file_menu.addAction(self.act_quit)

        edit_menu = bar.addMenu("&Edit")
        edit_menu.addAction(self.act_undo)
        edit_menu.addAction(self.act_redo)
        edit_menu.addSeparator()
        edit_menu.addAction(self.act_delete)
        edit_menu.addAction(self.act_select_all)
        edit_menu.addSeparator()
        edit_menu.addAction(self.exchange.act_title_block)

        self.cell_actions.add_to(bar)
        view_menu = bar.addMenu("&View")
        self.view_menu = view_menu
        view_menu.addAction(self.act_zoom_fit)
        view_menu.addSeparator()
        submenus: dict[str, QMenu] = {}
        for key, act in self.canvas.actions().items():
            prefix = key.split(".", 1)[0]
            title = _ACTION_GROUPS.get(prefix, prefix.capitalize())
            if title not in submenus:
                submenus[title] = view_menu.addMenu(title)
            submenus[title].addAction(act)
        submenus[_ACTION_GROUPS["snap"]].addAction(self.act_pitch)
        view_menu.addSeparator()
        for dock in (
            self.arm_dock,
            self.fixture_dock,
            self.table_dock,
            self.problems_dock,
            self.sequence_dock,
            self.timeline_dock,
        ):
            view_menu.addAction(dock.toggleViewAction())

        # Placement and layout variants (their own module): a Layout menu, a dock, progress.
        self.layout_actions = LayoutActions(self)
        self.layout_actions.add_to(bar, None, view_menu)

        help_menu = bar.addMenu("&Help")
        help_menu.addAction(self.act_caution)
        help_menu.addAction(self.act_about)

        self.toolbar = QToolBar("Canvas", self)
        self.toolbar.setObjectName("canvas_toolbar")
        self.toolbar.addAction(self.act_zoom_fit)
        tools = [a for k, a in self.canvas.actions().items() if k.startswith("tool.")]
        if tools:
            self.toolbar.addSeparator()
            for act in tools:
                self.toolbar.addAction(act)
        self.toolbar.addSeparator()
        self.toolbar.addAction(self.canvas.actions()["snap.enabled"])
        self._build_pitch_box()
        self.toolbar.addWidget(self.pitch_box)
        self.layout_actions.add_to_toolbar(self.toolbar)
        self.addToolBar(Qt.ToolBarArea.TopToolBarArea, self.toolbar)
        view_menu.addAction(self.toolbar.toggleViewAction())

    def _build_pitch_box(self) -> None:
        self.pitch_box = box = QDoubleSpinBox(self)
        box.setObjectName("snap_pitch")
        box.setToolTip(
            "Grid pitch for snapping, in the cell's units (hold Alt or Ctrl to place freely)"
        )
        box.setPrefix("pitch ")
        box.setKeyboardTracking(False)  # take the value on Enter or focus out, not per key
        box.setAccelerated(True)
        self._sync_pitch_box()  # before connecting: showing the value is no change
        box.valueChanged.connect(self._on_pitch_box)
        self.canvas.snap_pitch_changed.connect(lambda _p: self._sync_pitch_box())

    def _sync_pitch_box(self) -> None:
        """Show the canvas's pitch with the cell's units (and their precision)."""
        box = self.pitch_box
        units = self.document.cell.units
        decimals = 3 if units == "in" else 2
        box.blockSignals(True)
        box.setDecimals(decimals)
        box.setRange(10.0**-decimals, _MAX_PITCH)
        box.setSuffix(f" {units}")
        box.setValue(self.canvas.snap_pitch())
        box.blockSignals(False)

    def _on_pitch_box(self, value: float) -> None:
        self.canvas.set_snap_pitch(value)
        self.statusBar().showMessage(f"Snapping to a {self.pitch_box.text()} grid", 5000)

    def edit_snap_pitch(self) -> None:
        """Put the keyboard in the grid pitch box (showing the toolbar if it is hidden)."""
        self.toolbar.show()
        self.pitch_box.setFocus(Qt.FocusReason.ShortcutFocusReason)
        self.pitch_box.selectAll()

    # ------------------------------------------------------------------ live updates

    def _update_title(self) -> None:
        path = self.document.path
        name = path.name if path is not None else self.untitled_name
        if self.read_only:
            name += " (read-only)"
        self.setWindowTitle(f"{name}[*] — {APP_TITLE}")
        self.setWindowModified(self.document.dirty)
        self.act_revert.setEnabled(path is not None)

    def _update_undo_texts(self, *_args: object) -> None:
        s = self.undo_stack
        self.act_undo.setEnabled(s.canUndo())
        self.act_redo.setEnabled(s.canRedo())
        self.act_undo.setText(f"&Undo {s.undoText()}" if s.canUndo() else "&Undo")
        self.act_redo.setText(f"&Redo {s.redoText()}" if s.canRedo() else "&Redo")

    def _on_cell_changed(self, _changes: Changes) -> None:
        if not self.hover_label.property("hover"):
            self._show_summary()

    def _on_timeline_visible(self, on: bool) -> None:
        # The lanes and both curves need more height than the table: grow once, if short.
        want = min(TIMELINE_PX, int(0.42 * self.height()))
        if on and not self._timeline_grown and self.timeline_dock.height() < want:
            self._timeline_grown = True
            self.resizeDocks([self.timeline_dock], [want], Qt.Orientation.Vertical)

    def show_time(self, t: float) -> None:
        """Show the timeline at time ``t`` (the arms posed there on the canvas)."""
        self.timeline_dock.show()
        self.timeline_dock.raise_()
        self.timeline.clock.pause()
        self.timeline.clock.seek(t)

    def _on_problem_count(self, n: int) -> None:
        self.problems_dock.setWindowTitle(f"Problems ({n})" if n else "Problems (none)")

    def _show_summary(self) -> None:
        # The shared evaluation of the current state (never a count kept elsewhere).
        self.hover_label.setText(summary_text(self.document.evaluation))

    def _on_cursor(self, x: float, y: float) -> None:
        self.cursor_label.setText(cursor_text(x, y, self.document.cell.units))

    def _on_hover(self, target_id: str) -> None:
        text = hover_text(self.document.evaluation, target_id)
        self.hover_label.setProperty("hover", bool(text))
        if text:
            self.hover_label.setText(text)
            self.hover_label.setToolTip(text)
        else:
            self._show_summary()

    # ------------------------------------------------------------ questions (patched in tests)

    def ask_unsaved_changes(self) -> str:
        """Ask what to do with unsaved changes: "save", "discard" or "cancel"."""
        name = self.document.path.name if self.document.path else self.untitled_name
        box = QMessageBox(self)
        box.setIcon(QMessageBox.Icon.Warning)
        box.setWindowTitle(APP_TITLE)
        box.setText(f"{name} has unsaved changes.")
        box.setInformativeText("Save them before continuing?")
        box.setStandardButtons(
            QMessageBox.StandardButton.Save
            | QMessageBox.StandardButton.Discard
            | QMessageBox.StandardButton.Cancel
        )
        box.setDefaultButton(QMessageBox.StandardButton.Save)
        answer = box.exec()
        return {
            QMessageBox.StandardButton.Save: "save",
            QMessageBox.StandardButton.Discard: "discard",
        }.get(QMessageBox.StandardButton(answer), "cancel")

    def ask_open_path(self) -> Path | None:
        """Ask for a cell file to open; None when cancelled."""
        start = str(self.document.path.parent) if self.document.path else str(Path.home())
        name, _ = QFileDialog.getOpenFileName(self, "Open cell", start, _FILE_FILTER)
        return Path(name) if name else None

    def ask_save_path(self) -> Path | None:
        """Ask where to save; None when cancelled (replacing a file is asked afterwards)."""
        if self.document.path is not None:
            start = str(self.document.path)
        else:
            base = self.untitled_name.split(" ")[0]
            base = base if base.endswith(CELL_SUFFIX) else "untitled" + CELL_SUFFIX
            start = str(Path.home() / base)
        # The dialog's own check would look at the name before the suffix is added.
        name, _ = QFileDialog.getSaveFileName(
            self,
            "Save cell as",
            start,
            _FILE_FILTER,
            options=QFileDialog.Option.DontConfirmOverwrite,
        )
        return Path(name) if name else None

    def ask_revert(self) -> bool:
        """Confirm throwing away unsaved changes for the saved file."""
        answer = QMessageBox.question(
            self,
            APP_TITLE,
            "Discard all unsaved changes and reload the saved file?",
            QMessageBox.StandardButton.Discard | QMessageBox.StandardButton.Cancel,
            QMessageBox.StandardButton.Cancel,
        )
        return answer == QMessageBox.StandardButton.Discard

    def _choose(self, text: str, info: str, buttons: list[tuple[str, str]], icon=None) -> str:
        """A message box with our own button texts; the key of the button pressed."""
        box = QMessageBox(self)
        box.setIcon(icon or QMessageBox.Icon.Warning)
        box.setWindowTitle(APP_TITLE)
        box.setText(text)
        box.setInformativeText(info)
        made = {}
        for key, label in buttons:
            role = (
                QMessageBox.ButtonRole.RejectRole
                if key == "cancel"
                else QMessageBox.ButtonRole.AcceptRole
            )
            made[box.addButton(label, role)] = key
        box.setDefaultButton(next(iter(made)))
        box.exec()
        return made.get(box.clickedButton(), "cancel")

    def ask_replace_file(self, path: Path) -> bool:
        """Save As chose an existing file: replace it?"""
        answer = self._choose(
            f"{path.name} already exists in {path.parent}.",
            "Replace it? Its present content is kept as a backup beside it.",
            [("cancel", "Cancel"), ("replace", "Replace")],
        )
        return answer == "replace"

    def ask_replace_read_only(self, path: Path) -> bool:
        """The file to save is read-only: replace it anyway (it stays read-only)?"""
        answer = self._choose(
            f"{path.name} is a read-only file.",
            "Someone may have made it read-only on purpose (e.g. a signed-off layout). "
            "Replace it anyway? It stays read-only, and its present content is kept as a "
            "backup.",
            [("cancel", "Cancel"), ("replace", "Replace Read-Only File")],
        )
        return answer == "replace"

    def ask_locked_file(self, path: Path, holder: LockHolder, saving: bool = False) -> str:
        """Another running copy holds ``path``: "read-only", "anyway" or "cancel"."""
        who = holder.describe() if holder.pid else "another program"
        if saving:
            answer = self._choose(
                f"{path.name} is open in another copy of Elbow Room ({who}).",
                "Saving here replaces what that copy shows; its next save would replace yours.",
                [("cancel", "Cancel"), ("anyway", "Save Anyway")],
            )
            return answer
        return self._choose(
            f"{path.name} is open in another copy of Elbow Room ({who}).",
            "Open it read-only (Save then asks for another name), or open it anyway "
            "(the last save wins)?",
            [("read-only", "Open Read-Only"), ("anyway", "Open Anyway"), ("cancel", "Cancel")],
        )

    def ask_outside_change(self, path: Path) -> str:
        """The open file was changed by another program: "reload" or "keep"."""
        unsaved = " and lose your unsaved changes" if self.document.dirty else ""
        return self._choose(
            f"{path.name} was changed by another program.",
            f"Reload it from disk{unsaved}, or keep what this window shows (saving will "
            "then ask before replacing the other program's version)?",
            [("keep", "Keep Mine"), ("reload", "Reload From Disk")],
        )

    def ask_overwrite_outside_change(self, path: Path) -> bool:
        """Saving would replace a version another program wrote: go ahead?"""
        answer = self._choose(
            f"{path.name} was changed by another program since it was opened or saved here.",
            "Replace that version with this window's? It is kept as a backup beside the file.",
            [("cancel", "Cancel"), ("replace", "Replace")],
        )
        return answer == "replace"

    def ask_recovery(self, entries: list[recovery.RecoveryEntry]) -> list[str]:
        """Offer unsaved work found at start-up; per entry "restore", "discard" or "keep"."""
        from app.safety_dialogs import RecoveryDialog

        dialog = RecoveryDialog(entries, self)
        dialog.exec()
        choices = dialog.choices()
        if "discard" in choices and not self._confirm_discard(choices.count("discard")):
            return ["keep"] * len(entries)
        return choices

    def _confirm_discard(self, n: int) -> bool:
        answer = self._choose(
            f"Discard {n} recovered document{'s' if n > 1 else ''} for good?",
            "Their unsaved changes cannot be brought back afterwards.",
            [("cancel", "Cancel"), ("discard", "Discard")],
        )
        return answer == "discard"

    def show_notice(self, title: str, message: str) -> None:
        """Tell the user something worth knowing that is not a failure."""
        QMessageBox(QMessageBox.Icon.Information, title, message, parent=self).exec()

    def show_internal_error(self, line: str) -> None:
        """Tell the user the program hit an internal error and will stop."""
        QMessageBox(
            QMessageBox.Icon.Critical,
            f"{APP_TITLE}: internal error",
            line + "\n\nUnsaved work was written to a recovery file; it is offered at the "
            "next start. Elbow Room stops now.",
            parent=self,
        ).exec()

    def show_error(self, title: str, message: str, details: str = "") -> None:
        """Tell the user something failed (a one-line message naming file, path and value).

        ``details`` (every problem found, one per line) sits behind a "Show Details" button.
        """
        box = QMessageBox(QMessageBox.Icon.Warning, title, message, parent=self)
        if details and details != message:
            box.setDetailedText(details)
        box.exec()

    def show_caution(self) -> QMessageBox:
        """Show the full safety caution (non-blocking)."""
        box = QMessageBox(QMessageBox.Icon.Warning, "Safety caution", CAUTION_FULL, parent=self)
        box.setObjectName("caution_box")
        box.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
        box.open()
        return box

    def show_about(self) -> QMessageBox:
        """Show what the program is, with the full safety caution (non-blocking)."""
        text = (
            f"{APP_TITLE}\n\nPlans where to bolt planar two-link arms beside conveyors, feeders "
            "and fixtures, and shows for every target whether it is reachable, in which elbow "
            "configuration, and the margins to joint limits, reach and singular poses.\n\n"
            f"Safety caution\n{CAUTION_FULL}"
        )
        box = QMessageBox(QMessageBox.Icon.Information, f"About {APP_TITLE}", text, parent=self)
        box.setObjectName("about_box")
        box.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
        box.open()
        return box

    # ------------------------------------------------------------------ file commands

    def maybe_save(self) -> bool:
        """Settle unsaved changes before they would be lost; False means stop."""
        if self.document.previewing:
            self.document.cancel_preview()
        if not self.document.dirty:
            return True
        answer = self.ask_unsaved_changes()
        if answer == "save":
            return self.save()
        return answer == "discard"

    def _load(self, path: Path) -> Cell | None:
        """Load and evaluate ``path``; None (after telling the user) when either fails."""
        try:
            cell = load_cell(path)
        except CellFileError as exc:
            more = len(exc.problems) - 1
            message = str(exc) + (f" (and {more} more problems)" if more > 0 else "")
            self.show_error("Could not open cell file", message, "\n".join(exc.problems))
            return None
        except Exception as exc:  # noqa: BLE001 - a bug in the reader: contained, logged
            self._report_engine_failure(path, exc, "could not be read")
            return None
        try:
            prepare_cell(cell)
        except Exception as exc:  # noqa: BLE001 - the engine failed on a valid file
            self._report_engine_failure(path, exc, "loads but could not be evaluated")
            return None
        return cell

    def _report_engine_failure(self, path: Path, exc: BaseException, what: str) -> None:
        log = log_internal_error(exc, f"window: {path}")
        where = f"details in {log}" if log is not None else "the error log could not be written"
        self.show_error(
            "Could not open cell file",
            f"{path.name}: {what}: internal error ({type(exc).__name__}); {where}",
        )

    def _switch(self, cell: Cell, path: Path | None, saved: object = _CLEAN) -> bool:
        """Show another document; on any failure put the current one back (False).

        By default the new document starts clean; with ``saved`` (a cell, or None for
        never saved) it opens modified against that, as recovered work does.
        """
        doc = self.document
        before = (doc.cell, doc.path, doc.saved_cell)
        try:
            if saved is _CLEAN:
                self._show_new_document(cell, path)
            else:
                doc.restore_state(cell, path, saved)  # type: ignore[arg-type]
                self.undo_stack.clear()
                self._update_title()
                self.canvas.zoom_to_fit()
        except Exception as exc:  # noqa: BLE001 - never half-switched
            doc.restore_state(*before)
            self._update_title()
            self._report_engine_failure(path or Path(cell.name), exc, "could not be shown")
            return False
        return True

    def _show_new_document(self, cell: Cell, path: Path | None) -> None:
        self.document.replace(cell, path)
        self.undo_stack.clear()
        self._update_title()
        self.canvas.zoom_to_fit()

    def _take_lock(self, path: Path, saving: bool = False) -> tuple[DocumentLock | None, str]:
        """Lock ``path`` for this window: (lock, "ok" | "read-only" | "anyway" | "cancel")."""
        if self.file_lock is not None and _same_file(self.file_lock.path, path):
            return self.file_lock, "ok"
        lock = DocumentLock(path)
        holder = lock.acquire()
        if holder is None:
            return lock, "ok"
        answer = self.ask_locked_file(path, holder, saving)
        return (None, answer) if answer != "cancel" else (None, "cancel")

    def _adopt_file(self, path: Path | None, lock: DocumentLock | None, read_only: bool) -> None:
        """Make ``path`` this window's file: its lock, its watch, the title."""
        if self.file_lock is not None and self.file_lock is not lock:
            self.file_lock.release()
        self.file_lock = lock
        self.read_only = read_only
        self.watch.watch(path)
        self._update_title()

    def claim_file(self) -> bool:
        """Lock the document's file (asking when another copy holds it); False: cancelled."""
        path = self.document.path
        if path is None:
            return True
        lock, answer = self._take_lock(path)
        if answer == "cancel":
            return False
        self._adopt_file(path, lock, answer == "read-only")
        return True

    def new_file(self) -> bool:
        """Start a new cell with one arm."""
        if not self.maybe_save():
            return False
        self.untitled_name = UNTITLED
        self._show_new_document(new_cell(), None)
        self._adopt_file(None, None, False)
        self.recovery_file.remove()
        return True

    def open_file(self, path: Path | None = None) -> bool:
        """Open a cell file (asks for one when ``path`` is None); a bad file changes nothing.

        The file must load and evaluate before the current document is given up; on
        any failure the current document, title and path stay as they were.
        """
        if path is None:
            path = self.ask_open_path()
            if path is None:
                return False
        path = Path(path)
        cell = self._load(path)  # check the file before asking to give up the current one
        if cell is None:
            return False
        lock, answer = self._take_lock(path)
        if answer == "cancel":
            return False
        if not self.maybe_save():
            if lock is not None and lock is not self.file_lock:
                lock.release()
            return False
        if not self._switch(cell, path):
            if lock is not None and lock is not self.file_lock:
                lock.release()
            return False
        self._adopt_file(path, lock, answer == "read-only")
        self.recovery_file.remove()
        self._remember(path)
        return True

    def save(self) -> bool:
        """Save to the document's file (asks for one when it has none or it is read-only)."""
        if self.document.path is None or self.read_only:
            return self.save_as()
        return self._write(self.document.path)

    def save_as(self) -> bool:
        """Save to a file the user picks (asking before replacing an existing one)."""
        path = self.ask_save_path()
        if path is None:
            return False
        if not path.name.endswith(CELL_SUFFIX):
            path = path.with_name(path.name.removesuffix(".json") + CELL_SUFFIX)
        if os.path.lexists(path) and not os.path.isdir(path):
            mine = _same_file(path, self.document.path) and not self.read_only
            if not mine and not self.ask_replace_file(path):
                return False
        return self._write(path)

    def _write(self, path: Path) -> bool:
        if self.document.previewing:
            self.document.cancel_preview()
        own = _same_file(path, self.document.path) and not self.read_only
        lock = self.file_lock
        if own:
            if self.watch.state() == "changed" and not self.ask_overwrite_outside_change(path):
                return False
        else:
            lock, answer = self._take_lock(path, saving=True)
            if answer == "cancel":
                return False
        replace_read_only = False
        while True:
            try:
                outcome = save_cell(
                    self.document.cell,
                    path,
                    backups=self.backup_count,
                    replace_read_only=replace_read_only,
                )
            except ReadOnlyFileError:
                if not replace_read_only and self.ask_replace_read_only(path):
                    replace_read_only = True
                    continue
                self._drop_unused_lock(lock)
                return False
            except CellFileError as exc:
                self._drop_unused_lock(lock)
                self.show_error("Could not save cell file", str(exc))
                return False
            break
        self.document.mark_saved(path)
        self._adopt_file(path, lock, False)
        self.recovery_file.remove()
        self._remember(path)
        self.statusBar().showMessage(f"Saved {path}", 5000)
        if outcome.notes:
            self.show_notice("Saved", "\n".join(outcome.notes))
        return True

    def _drop_unused_lock(self, lock: DocumentLock | None) -> None:
        if lock is not None and lock is not self.file_lock:
            lock.release()

    def revert(self) -> bool:
        """Reload the saved file, throwing away unsaved changes (after asking)."""
        path = self.document.path
        if path is None:
            return False
        if self.document.dirty and not self.ask_revert():
            return False
        return self._reload(path)

    def _reload(self, path: Path) -> bool:
        cell = self._load(path)
        if cell is None:
            return False
        if not self._switch(cell, path):
            return False
        self.watch.remember()
        self.recovery_file.remove()
        return True

    # ------------------------------------------------------------------ outside changes

    def _on_outside_change(self, state: str) -> None:
        path = self.document.path
        if path is None:
            return
        if self.document.previewing:  # never in the middle of a drag: ask once it ends
            QTimer.singleShot(500, lambda: self._on_outside_change(state))
            return
        if state == "missing":
            self.statusBar().showMessage(
                f"{path.name} was moved or deleted by another program; Save writes it again",
                15000,
            )
            return
        if self.ask_outside_change(path) == "reload":
            self._reload(path)
        else:
            self.statusBar().showMessage(
                f"Kept this window's version; saving will ask before replacing {path.name}",
                8000,
            )

    # ------------------------------------------------------------------ autosave, recovery

    def set_autosave_minutes(self, minutes: float) -> None:
        """Autosave unsaved work every ``minutes`` (and after every AUTOSAVE_EDITS edits)."""
        self.autosave_timer.start(max(100, int(minutes * 60_000)))

    def _count_edit(self, _index: int) -> None:
        self._edits_since_autosave += 1
        if self._edits_since_autosave >= AUTOSAVE_EDITS:
            self.autosave()

    def autosave(self) -> bool:
        """Write unsaved work to the recovery file, when it changed since; True if written."""
        self._edits_since_autosave = 0
        doc = self.document
        if not doc.dirty:
            if self.recovery_file.written is not None:
                self.recovery_file.remove()
            return False
        if self.recovery_file.written is doc.cell:
            return False
        try:
            self.recovery_file.write(doc.cell, doc.path)
        except (OSError, CellFileError) as exc:
            if not self._autosave_failed:
                self.statusBar().showMessage(f"Autosave failed: {exc}", 15000)
            self._autosave_failed = True
            return False
        self._autosave_failed = False
        return True

    def offer_recovery(self) -> list[MainWindow]:
        """Offer unsaved work left by copies that stopped; the windows it was restored in."""
        entries = recovery.find_recoverable(exclude=self.recovery_file.path)
        if not entries:
            return []
        bad = [e for e in entries if e.cell is None]
        if bad:
            lines = []
            for e in bad:
                try:
                    dest = recovery.set_aside(e)
                    lines.append(f"{e.path.name}: {e.problem}; kept as {dest}")
                except OSError as exc:
                    e.release()
                    lines.append(f"{e.path.name}: {e.problem}; left in place ({exc.strerror})")
            more = f" (and {len(lines) - 1} more)" if len(lines) > 1 else ""
            self.show_error("Recovery file does not load", lines[0] + more, "\n".join(lines))
        good = [e for e in entries if e.cell is not None]
        if not good:
            return []
        choices = self.ask_recovery(good)
        restored: list[MainWindow] = []
        for entry, choice in zip(good, choices):
            if choice == "discard":
                recovery.discard(entry)
            elif choice == "restore":
                win = self._restore(entry)
                if win is not None:
                    restored.append(win)
            else:
                entry.release()
        return restored

    def _restore(self, entry: recovery.RecoveryEntry) -> MainWindow | None:
        """Open a recovered document as modified (here when this window is free)."""
        assert entry.cell is not None
        free = not self.document.dirty and (
            self.document.path is None or _same_file(self.document.path, entry.file)
        )
        if free and not self.recovery_file.written:
            win = self
        else:
            win = MainWindow(use_settings=self.use_settings)
            for name in dir(self):  # answers patched onto this window apply there too
                if name.startswith(("ask_", "show_")) and name in vars(self):
                    setattr(win, name, getattr(self, name))
            self.spawned.append(win)
        try:
            prepare_cell(entry.cell)
        except Exception as exc:  # noqa: BLE001 - kept for a later start
            entry.release()
            self._report_engine_failure(entry.path, exc, "could not be evaluated")
            return None
        path = entry.file
        saved = entry.saved
        if not win._switch(entry.cell, path, saved):
            entry.release()
            return None
        lock = None
        read_only = False
        if path is not None:
            lock, answer = win._take_lock(path)
            read_only = answer in ("read-only", "cancel")
        win._adopt_file(path, lock, read_only)
        if path is not None and saved is None and path.exists():
            win.watch.remember()
        if win.autosave():  # the restored work is safe in this window's file first
            recovery.discard(entry)
        else:
            entry.release()
        if win is not self:
            win.show()
        win.statusBar().showMessage("Restored unsaved work from a recovery file", 10000)
        return win

    def edit_safety_settings(self) -> bool:
        """Set the backup count and the autosave interval (stored in the settings)."""
        from app.safety_dialogs import SafetySettingsDialog

        minutes = self.autosave_timer.interval() / 60_000
        dialog = SafetySettingsDialog(self.backup_count, minutes, self)
        if dialog.exec() != SafetySettingsDialog.DialogCode.Accepted:
            return False
        self.backup_count = dialog.backups.value()
        self.set_autosave_minutes(dialog.minutes.value())
        if self.use_settings:
            app_settings.set_backup_count(self.backup_count)
            app_settings.set_autosave_minutes(dialog.minutes.value())
        return True

    def release_files(self) -> None:
        """Give up the file lock and the watch (the window is going away)."""
        self._adopt_file(None, None, False)

    def _remember(self, path: Path) -> None:
        if self.use_settings:
            app_settings.add_recent_file(path)
            self._fill_recent_menu()

    def _fill_recent_menu(self) -> None:
        menu = self.recent_menu
        menu.clear()
        paths = app_settings.recent_files() if self.use_settings else []
        for i, p in enumerate(paths, start=1):
            act = menu.addAction(f"&{i} {p.name} — {p.parent}")
            act.setData(str(p))
            act.triggered.connect(lambda _c=False, p=p: self.open_file(p))
        if paths:
            menu.addSeparator()
            menu.addAction("Clear Recent Files", self._clear_recent)
        else:
            none = menu.addAction("No recent files")
            none.setEnabled(False)

    def _clear_recent(self) -> None:
        app_settings.set_recent_files([])
        self._fill_recent_menu()

    def recent_paths(self) -> list[Path]:
        """Files listed under Open Recent, in order."""
        return [Path(a.data()) for a in self.recent_menu.actions() if a.data()]

    # ------------------------------------------------------------------ edit commands

    def undo(self) -> None:
        if self.document.previewing:
            self.document.cancel_preview()
        self.undo_stack.undo()

    def redo(self) -> None:
        if self.document.previewing:
            self.document.cancel_preview()
        self.undo_stack.redo()

    def select_all(self) -> None:
        self.document.selection.set([t.id for t in self.document.cell.targets])

    def delete_selection(self) -> None:
        """Delete the selected targets and fixtures; a selected arm after asking what
        becomes of its targets (a cell keeps at least one arm)."""
        self.cell_actions.delete_selection()

    # ------------------------------------------------------------------ settings and closing

    def _restore_settings(self) -> None:
        geometry = app_settings.load_bytes("window/geometry")
        if geometry is not None:
            self.restoreGeometry(geometry)
        state = app_settings.load_bytes("window/state")
        if state is not None:
            self.restoreState(state)
        actions = self.canvas.actions()
        for key, checked in app_settings.load_toggles().items():
            act = actions.get(key)
            if act is not None and act.isCheckable():
                act.setChecked(checked)
        for units, pitch in app_settings.load_snap_pitches().items():
            self.canvas.set_snap_pitch(min(pitch, _MAX_PITCH), units)
        self._sync_pitch_box()

    def save_settings(self) -> None:
        """Store window layout, canvas toggles and snap pitches."""
        if not self.use_settings:
            return
        app_settings.save_bytes("window/geometry", QByteArray(self.saveGeometry()))
        app_settings.save_bytes("window/state", QByteArray(self.saveState()))
        app_settings.save_toggles(
            {k: a.isChecked() for k, a in self.canvas.actions().items() if a.isCheckable()}
        )
        app_settings.save_snap_pitches(self.canvas.snap_pitches())

    def _first_settle(self) -> None:
        if self.document.unsettled and not self.document.previewing:
            self.document.settle()

    def closeEvent(self, event: QCloseEvent) -> None:
        if not self.maybe_save():
            event.ignore()
            return
        self.save_settings()
        self.autosave_timer.stop()
        self.recovery_file.remove()  # saved or discarded: nothing left to recover
        self.release_files()
        self.layout_actions.shutdown()
        event.accept()

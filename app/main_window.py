"""The main window: the canvas in the middle, panels docked around it, menus and status bar.

The window owns the undo stack and the file commands (New, Open, Save, Save As,
Revert, Open Recent). It observes the document model and never computes
geometry itself. Every question it asks the user goes through one method
(``ask_unsaved_changes``, ``ask_open_path``, ``ask_save_path``, ``ask_revert``,
``show_error``) so tests can answer it.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from PySide6.QtCore import QByteArray, Qt
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

from app import settings as app_settings
from app.canvas import CellCanvas
from app.commands import attach_undo_stack
from app.document import Changes, Document
from app.exchange_dialogs import ExchangeActions
from app.panels.arm_panel import ArmPanel
from app.panels.problems import ProblemsList
from app.panels.target_table import TargetTable
from app.panels.text import cursor_text, hover_text
from kinematics.caution import CAUTION_FULL, CAUTION_SHORT
from kinematics.cell import Arm, Cell
from kinematics.cellfile import CellFileError, load_cell, save_cell

__all__ = ["MainWindow", "APP_TITLE", "CELL_SUFFIX", "new_cell", "UNTITLED"]

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
        # The arm panel runs full height; the table spans under the canvas and the problems.
        self.setCorner(Qt.Corner.BottomLeftCorner, Qt.DockWidgetArea.LeftDockWidgetArea)
        self.setCorner(Qt.Corner.BottomRightCorner, Qt.DockWidgetArea.BottomDockWidgetArea)
        self.resizeDocks([self.arm_dock, self.problems_dock], [275, 320], Qt.Orientation.Horizontal)
        self.resizeDocks([self.table_dock], [290], Qt.Orientation.Vertical)

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
        self.target_table.source.refused.connect(
            lambda msg: self.statusBar().showMessage(msg, 8000)
        )
        self.canvas.cursor_moved.connect(self._on_cursor)
        self.canvas.hovered_target.connect(self._on_hover)
        self.canvas.status_message.connect(lambda msg: self.statusBar().showMessage(msg, 5000))

        self.resize(1400, 900)
        if use_settings:
            self._restore_settings()
        self._update_title()
        self._update_undo_texts()
        self._on_problem_count(self.problems.count_of_problems)
        self._show_summary()

    # ------------------------------------------------------------------ layout

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
        self.act_quit = self._action("&Quit", self.close, K.Quit)
        self.act_undo = self._action("&Undo", self.undo, K.Undo)
        self.act_redo = self._action("&Redo", self.redo, K.Redo)
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
        for dock in (self.arm_dock, self.table_dock, self.problems_dock):
            view_menu.addAction(dock.toggleViewAction())

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

    def _on_problem_count(self, n: int) -> None:
        self.problems_dock.setWindowTitle(f"Problems ({n})" if n else "Problems (none)")

    def _show_summary(self) -> None:
        evaluation = self.document.evaluation
        total = len(evaluation.cell.targets)
        bad = self.problems.failing_targets  # moves are listed too; this counts targets
        text = f"{total} targets: {total - bad} ok, {bad} fail" if total else "No targets yet"
        self.hover_label.setText(text)

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
        """Ask where to save; None when cancelled."""
        if self.document.path is not None:
            start = str(self.document.path)
        else:
            base = self.untitled_name.split(" ")[0]
            base = base if base.endswith(CELL_SUFFIX) else "untitled" + CELL_SUFFIX
            start = str(Path.home() / base)
        name, _ = QFileDialog.getSaveFileName(self, "Save cell as", start, _FILE_FILTER)
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
        try:
            return load_cell(path)
        except CellFileError as exc:
            more = len(exc.problems) - 1
            message = str(exc) + (f" (and {more} more problems)" if more > 0 else "")
            self.show_error("Could not open cell file", message, "\n".join(exc.problems))
            return None

    def _show_new_document(self, cell: Cell, path: Path | None) -> None:
        self.document.replace(cell, path)
        self.undo_stack.clear()
        self._update_title()
        self.canvas.zoom_to_fit()

    def new_file(self) -> bool:
        """Start a new cell with one arm."""
        if not self.maybe_save():
            return False
        self.untitled_name = UNTITLED
        self._show_new_document(new_cell(), None)
        return True

    def open_file(self, path: Path | None = None) -> bool:
        """Open a cell file (asks for one when ``path`` is None); a bad file changes nothing."""
        if path is None:
            path = self.ask_open_path()
            if path is None:
                return False
        path = Path(path)
        cell = self._load(path)  # check the file before asking to give up the current one
        if cell is None:
            return False
        if not self.maybe_save():
            return False
        self._show_new_document(cell, path)
        self._remember(path)
        return True

    def save(self) -> bool:
        """Save to the document's file (asks for one when it has none)."""
        if self.document.path is None:
            return self.save_as()
        return self._write(self.document.path)

    def save_as(self) -> bool:
        """Save to a file the user picks."""
        path = self.ask_save_path()
        if path is None:
            return False
        if not path.name.endswith(CELL_SUFFIX):
            path = path.with_name(path.name.removesuffix(".json") + CELL_SUFFIX)
        return self._write(path)

    def _write(self, path: Path) -> bool:
        if self.document.previewing:
            self.document.cancel_preview()
        try:
            save_cell(self.document.cell, path)
        except CellFileError as exc:
            self.show_error("Could not save cell file", str(exc))
            return False
        self.document.mark_saved(path)
        self._remember(path)
        self.statusBar().showMessage(f"Saved {path}", 5000)
        return True

    def revert(self) -> bool:
        """Reload the saved file, throwing away unsaved changes (after asking)."""
        path = self.document.path
        if path is None:
            return False
        if self.document.dirty and not self.ask_revert():
            return False
        cell = self._load(path)
        if cell is None:
            return False
        self._show_new_document(cell, path)
        return True

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
        """Delete the selected targets and fixtures (and arms, while one arm remains)."""
        cell = self.document.cell
        chosen = set(self.document.selection.ids)
        arms = [a for a in cell.arms if a.id in chosen]
        if len(arms) >= len(cell.arms):
            arms = []  # a cell keeps at least one arm
        gone_arms = {a.id for a in arms}
        targets = [t for t in cell.targets if t.id in chosen or t.arm in gone_arms]
        fixtures = [f for f in cell.fixtures if f.id in chosen]
        gone_targets = {t.id for t in targets}
        gone_fixtures = {f.id for f in fixtures}
        if not (gone_arms or gone_targets or gone_fixtures):
            return
        sequences = tuple(
            replace(s, targets=tuple(t for t in s.targets if t not in gone_targets))
            for s in cell.sequences
            if s.arm not in gone_arms
        )
        after = replace(
            cell,
            arms=tuple(a for a in cell.arms if a.id not in gone_arms),
            targets=tuple(t for t in cell.targets if t.id not in gone_targets),
            fixtures=tuple(f for f in cell.fixtures if f.id not in gone_fixtures),
            sequences=sequences,
        )
        items = [*arms, *targets, *fixtures]
        if len(items) == 1:
            label = f"Delete {items[0].id} {items[0].name}".rstrip()
        else:
            label = f"Delete {len(items)} items"
        self.document.selection.clear()
        self.document.edit(label, after)

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

    def closeEvent(self, event: QCloseEvent) -> None:
        if not self.maybe_save():
            event.ignore()
            return
        self.save_settings()
        event.accept()

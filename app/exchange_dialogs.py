"""File > Import and File > Export: DXF outlines, CSV targets, the DXF drawing of the cell.

:class:`DxfImportDialog` maps the drawing's layers to fixture kinds (with an optional
height per layer), asks for the drawing's units when its ``$INSUNITS`` is unset and shows
what will be imported and what not, live. :class:`ExchangeActions` holds the menu actions
and runs each import or export; every import is one undo step (``document.edit``). Every
question it asks goes through one method (``ask_open_path``, ``ask_save_path``,
``ask_recover``, ``ask_dxf_choices``, ``confirm_csv``) so tests can answer it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from PySide6.QtCore import QObject, Qt
from PySide6.QtGui import QAction
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFileDialog,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QMenu,
    QMessageBox,
    QPlainTextEdit,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from app import settings as app_settings
from kinematics.caution import CAUTION_SHORT
from kinematics.cell import FIXTURE_KINDS, Cell
from kinematics.csv_targets import (
    CsvTargetsError,
    TargetsMerge,
    load_targets_csv,
    write_targets_csv,
)
from kinematics.dxf_export import write_dxf
from kinematics.dxf_import import (
    DxfDrawing,
    DxfImport,
    DxfReadError,
    dxf_fixtures,
    merge_fixtures,
    read_dxf,
    suggested_kind,
)
from kinematics.dxf_units import IMPORT_UNITS, unit_label

__all__ = ["DxfChoices", "DxfImportDialog", "ExchangeActions", "NOT_IMPORTED"]

#: The kind-column entry for a layer whose outlines are not imported.
NOT_IMPORTED = "(not imported)"
_DXF_FILTER = "DXF drawings (*.dxf *.DXF);;All files (*)"
_CSV_FILTER = "CSV files (*.csv *.CSV);;All files (*)"


@dataclass
class DxfChoices:
    """What the user chose in the DXF import dialog."""

    layer_kinds: dict[str, str] = field(default_factory=dict)
    layer_heights: dict[str, float] = field(default_factory=dict)
    units: str | None = None
    drop_missing: bool = False

    def to_json(self) -> dict[str, Any]:
        return {
            "layer_kinds": self.layer_kinds,
            "layer_heights": self.layer_heights,
            "units": self.units,
            "drop_missing": self.drop_missing,
        }

    @staticmethod
    def from_json(data: dict[str, Any]) -> DxfChoices:
        """Choices read back from settings; anything malformed is left out."""
        kinds = data.get("layer_kinds") if isinstance(data.get("layer_kinds"), dict) else {}
        heights = data.get("layer_heights") if isinstance(data.get("layer_heights"), dict) else {}
        units = data.get("units") if data.get("units") in IMPORT_UNITS else None
        return DxfChoices(
            {str(k): v for k, v in kinds.items() if isinstance(v, str) and v.strip()},
            {
                str(k): float(v)
                for k, v in heights.items()
                if isinstance(v, (int, float)) and math.isfinite(v) and v >= 0
            },
            units,
            data.get("drop_missing") is True,
        )


class DxfImportDialog(QDialog):
    """Choose which layers become which fixture kinds; see what will be imported.

    Parameters
    ----------
    drawing : DxfDrawing
    cell : Cell
        The open cell (its units).
    remembered : DxfChoices, optional
        The choices made last time for this file.
    """

    COL_LAYER, COL_OUTLINES, COL_KIND, COL_HEIGHT = range(4)

    def __init__(
        self,
        drawing: DxfDrawing,
        cell: Cell,
        remembered: DxfChoices | None = None,
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.setObjectName("dxf_import_dialog")
        self.setWindowTitle(f"Import outlines from {drawing.source}")
        self.drawing = drawing
        self.cell = cell
        remembered = remembered or DxfChoices()
        self.result_import: DxfImport | None = None
        layout = QVBoxLayout(self)

        found = QLabel(f"{drawing.source}: {drawing.counts_text()} in the model space.")
        found.setWordWrap(True)
        layout.addWidget(found)
        if drawing.recovered:
            rec = QLabel(
                "<b>Read with the recover loader</b>: check that these counts match the "
                f"drawing ({len(drawing.recovery_notes)} repairs or errors reported)."
            )
            rec.setObjectName("recovered_note")
            rec.setWordWrap(True)
            layout.addWidget(rec)

        units_row = QHBoxLayout()
        units_row.addWidget(QLabel("Drawing units:"))
        self.units_box = QComboBox()
        self.units_box.setObjectName("units_box")
        self.units_note = QLabel()
        self.units_note.setObjectName("units_note")
        self.units_note.setWordWrap(True)
        if drawing.units is None:
            self.units_box.addItem("choose…", None)
            self.units_note.setText(
                f"<b>The drawing does not state its units</b> ($INSUNITS is "
                f"{unit_label(drawing.insunits)}): choose the units it was drawn in."
            )
        else:
            self.units_note.setText(f"from the drawing ($INSUNITS {unit_label(drawing.insunits)})")
        for u in IMPORT_UNITS:
            self.units_box.addItem(u, u)
        start = remembered.units or drawing.units
        if start is not None:
            self.units_box.setCurrentIndex(self.units_box.findData(start))
        units_row.addWidget(self.units_box)
        units_row.addWidget(self.units_note, 1)
        layout.addLayout(units_row)
        layout.addWidget(QLabel(f"Fixture heights in {cell.units}; empty: the entity's thickness."))

        counts = drawing.outline_counts()
        self.table = QTableWidget(len(drawing.layers), 4)
        self.table.setObjectName("layer_table")
        self.table.setHorizontalHeaderLabels(["Layer", "Outlines", "Import as", "Height"])
        self.table.verticalHeader().setVisible(False)
        self.kind_boxes: dict[str, QComboBox] = {}
        self.height_edits: dict[str, QLineEdit] = {}
        for row, layer in enumerate(drawing.layers):
            item = QTableWidgetItem(layer)
            item.setFlags(item.flags() & ~Qt.ItemFlag.ItemIsEditable)
            self.table.setItem(row, self.COL_LAYER, item)
            n = QTableWidgetItem(str(counts.get(layer, 0)))
            n.setFlags(n.flags() & ~Qt.ItemFlag.ItemIsEditable)
            n.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
            self.table.setItem(row, self.COL_OUTLINES, n)
            box = QComboBox()
            box.setEditable(True)  # any other kind is allowed too
            box.addItems([NOT_IMPORTED, *FIXTURE_KINDS])
            kind = remembered.layer_kinds.get(layer)
            if kind is None and counts.get(layer):
                kind = suggested_kind(layer)
            box.setCurrentText(kind or NOT_IMPORTED)
            box.currentTextChanged.connect(lambda _t: self.refresh())
            self.table.setCellWidget(row, self.COL_KIND, box)
            self.kind_boxes[layer] = box
            edit = QLineEdit()
            edit.setPlaceholderText("thickness")
            if layer in remembered.layer_heights:
                edit.setText(f"{remembered.layer_heights[layer]:g}")
            edit.textChanged.connect(lambda _t: self.refresh())
            self.table.setCellWidget(row, self.COL_HEIGHT, edit)
            self.height_edits[layer] = edit
        head = self.table.horizontalHeader()
        head.setSectionResizeMode(self.COL_LAYER, QHeaderView.ResizeMode.Stretch)
        for col in (self.COL_OUTLINES, self.COL_KIND, self.COL_HEIGHT):
            head.setSectionResizeMode(col, QHeaderView.ResizeMode.ResizeToContents)
        layout.addWidget(self.table, 1)

        self.drop_box = QCheckBox(
            "Remove fixtures imported earlier from this file that it no longer holds"
        )
        self.drop_box.setObjectName("drop_missing")
        self.drop_box.setChecked(remembered.drop_missing)
        layout.addWidget(self.drop_box)

        layout.addWidget(QLabel("What will be imported:"))
        self.summary = QPlainTextEdit()
        self.summary.setObjectName("import_summary")
        self.summary.setReadOnly(True)
        self.summary.setMinimumHeight(110)
        layout.addWidget(self.summary)
        caution = QLabel(f"⚠ {CAUTION_SHORT}")
        caution.setWordWrap(True)
        layout.addWidget(caution)

        self.buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel
        )
        self.buttons.button(QDialogButtonBox.StandardButton.Ok).setText("Import")
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        layout.addWidget(self.buttons)
        self.units_box.currentIndexChanged.connect(lambda _i: self.refresh())
        self.resize(640, 620)
        self.refresh()

    def set_kind(self, layer: str, kind: str | None) -> None:
        """Choose the kind of one layer's outlines (None: not imported)."""
        self.kind_boxes[layer].setCurrentText(kind or NOT_IMPORTED)

    def set_height(self, layer: str, height: float | None) -> None:
        self.height_edits[layer].setText("" if height is None else f"{height:g}")

    def set_units(self, units: str) -> None:
        self.units_box.setCurrentIndex(self.units_box.findData(units))

    def choices(self) -> tuple[DxfChoices, list[str]]:
        """The current choices and the problems that keep them from being used."""
        problems = []
        kinds = {}
        heights = {}
        for layer, box in self.kind_boxes.items():
            kind = box.currentText().strip()
            if kind and kind != NOT_IMPORTED:
                kinds[layer] = kind
            text = self.height_edits[layer].text().strip()
            if text:
                try:
                    h = float(text)
                except ValueError:
                    h = -1.0
                if not (math.isfinite(h) and h >= 0):
                    problems.append(
                        f"layer {layer}: height must be a number of 0 or more, got {text!r}"
                    )
                    continue
                heights[layer] = h
        units = self.units_box.currentData()
        if units is None:
            problems.append("choose the drawing's units: the file does not state them")
        return DxfChoices(kinds, heights, units, self.drop_box.isChecked()), problems

    def refresh(self) -> None:
        """Recompute what the current choices import and show it."""
        choices, problems = self.choices()
        ok = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        self.result_import = None
        if not problems:
            try:
                self.result_import = dxf_fixtures(
                    self.drawing,
                    choices.layer_kinds,
                    cell_units=self.cell.units,
                    drawing_units=choices.units,
                    layer_heights={
                        k: v for k, v in choices.layer_heights.items() if k in choices.layer_kinds
                    },
                )
            except DxfReadError as exc:
                problems.append(str(exc))
        if problems:
            self.summary.setPlainText("\n".join(problems))
        else:
            assert self.result_import is not None
            lines = self.result_import.summary_lines()
            lines += [n.text(self.drawing.source) for n in self.result_import.notes[:30]]
            self.summary.setPlainText("\n".join(lines))
        ok.setEnabled(self.result_import is not None and bool(self.result_import.fixtures))


class ExchangeActions(QObject):
    """The Import and Export entries of the File menu, on a window with a document.

    ``window`` must have ``document``, ``show_error(title, message, details="")`` and
    ``statusBar()``; its ``use_settings`` decides whether choices per file are remembered.
    """

    def __init__(self, window: Any) -> None:
        super().__init__(window)
        self.window = window
        self.act_import_dxf = self._action("Outlines from &DXF…", self.import_dxf)
        self.act_import_csv = self._action("&Targets from CSV…", self.import_csv)
        self.act_export_dxf = self._action("Cell as &DXF Drawing…", self.export_dxf)
        self.act_export_csv = self._action("Targets as &CSV…", self.export_csv)
        self.act_export_sheet = self._action("&Review Sheet (PDF, SVG, PNG)…", self.export_sheet)
        self.act_title_block = self._action("&Title Block…", self.edit_title_block)
        self.act_title_block.setToolTip("The review sheet's title-block fields (ISO 7200)")

    def _action(self, text: str, slot) -> QAction:
        act = QAction(text, self.window)
        act.triggered.connect(lambda _checked=False: slot())
        return act

    def add_to(self, file_menu: QMenu) -> tuple[QMenu, QMenu]:
        """Add the Import and Export submenus to the end of ``file_menu``."""
        imports = file_menu.addMenu("&Import")
        imports.addAction(self.act_import_dxf)
        imports.addAction(self.act_import_csv)
        exports = file_menu.addMenu("E&xport")
        exports.addAction(self.act_export_sheet)
        exports.addAction(self.act_export_dxf)
        exports.addAction(self.act_export_csv)
        return imports, exports

    @property
    def document(self):
        return self.window.document

    def _folder(self) -> str:
        path = self.document.path
        return str(path.parent) if path is not None else str(Path.home())

    # ------------------------------------------------------------ questions (patched in tests)

    def ask_open_path(self, title: str, file_filter: str) -> Path | None:
        name, _ = QFileDialog.getOpenFileName(self.window, title, self._folder(), file_filter)
        return Path(name) if name else None

    def ask_save_path(self, title: str, file_filter: str, suggested: str) -> Path | None:
        start = str(Path(self._folder()) / suggested)
        name, _ = QFileDialog.getSaveFileName(self.window, title, start, file_filter)
        return Path(name) if name else None

    def ask_recover(self, message: str) -> bool:
        """Offer ezdxf's recover loader after a strict read failed; True to try it."""
        box = QMessageBox(
            QMessageBox.Icon.Warning, "Could not read DXF file", message, parent=self.window
        )
        box.setInformativeText(
            "The recover loader reads what it can of a damaged file, but may find less than "
            "the drawing holds (a cut-off file can come back empty). It shows what it found "
            "before anything is imported."
        )
        recover = box.addButton("Recover What Can Be Read", QMessageBox.ButtonRole.AcceptRole)
        box.addButton(QMessageBox.StandardButton.Cancel)
        box.exec()
        return box.clickedButton() is recover

    def ask_dxf_choices(self, drawing: DxfDrawing, remembered: DxfChoices) -> DxfChoices | None:
        dialog = DxfImportDialog(drawing, self.document.cell, remembered, self.window)
        if dialog.exec() != QDialog.DialogCode.Accepted:
            return None
        choices, problems = dialog.choices()
        return None if problems else choices

    def confirm_csv(self, merge: TargetsMerge, source: str) -> bool:
        answer = QMessageBox.question(
            self.window,
            "Import targets",
            f"{source}: {merge.summary()}.\n\nImport them?",
            QMessageBox.StandardButton.Ok | QMessageBox.StandardButton.Cancel,
            QMessageBox.StandardButton.Ok,
        )
        return answer == QMessageBox.StandardButton.Ok

    # ------------------------------------------------------------------ commands

    def _error(self, title: str, problems: list[str]) -> None:
        more = len(problems) - 1
        message = problems[0] + (f" (and {more} more problems)" if more > 0 else "")
        self.window.show_error(title, message, "\n".join(problems))

    def import_dxf(self, path: Path | None = None) -> bool:
        """Read a DXF file, let the user map its layers, merge its outlines (one undo step)."""
        if path is None:
            path = self.ask_open_path("Import outlines from DXF", _DXF_FILTER)
            if path is None:
                return False
        try:
            drawing = read_dxf(path)
        except DxfReadError as exc:
            broken = " line " in str(exc)  # a damaged file; a missing one is not worth recovering
            if not broken:
                self._error("Could not read DXF file", exc.problems)
                return False
            if not self.ask_recover(str(exc)):
                return False
            try:
                drawing = read_dxf(path, recover=True)
            except DxfReadError as exc2:
                self._error("Could not recover DXF file", exc2.problems)
                return False
        use = getattr(self.window, "use_settings", False)
        remembered = DxfChoices.from_json(app_settings.load_dxf_choices(path)) if use else None
        choices = self.ask_dxf_choices(drawing, remembered or DxfChoices())
        if choices is None:
            return False
        if use:
            app_settings.save_dxf_choices(path, choices.to_json())
        try:
            result = dxf_fixtures(
                drawing,
                choices.layer_kinds,
                cell_units=self.document.cell.units,
                drawing_units=choices.units,
                layer_heights={
                    k: v for k, v in choices.layer_heights.items() if k in choices.layer_kinds
                },
            )
        except DxfReadError as exc:
            self._error("Could not import DXF file", exc.problems)
            return False
        merge = merge_fixtures(
            self.document.cell, result.fixtures, drop_missing=choices.drop_missing
        )
        self.document.edit(f"Import {drawing.source}", merge.cell)
        skipped = len(result.notes)
        tail = f"; {skipped} entities on those layers not imported" if skipped else ""
        self.window.statusBar().showMessage(f"{drawing.source}: {merge.summary()}{tail}", 10000)
        return True

    def import_csv(self, path: Path | None = None) -> bool:
        """Merge targets from a CSV file by id, after showing what changes (one undo step)."""
        if path is None:
            path = self.ask_open_path("Import targets from CSV", _CSV_FILTER)
            if path is None:
                return False
        try:
            merge = load_targets_csv(path, self.document.cell)
        except CsvTargetsError as exc:
            self._error("Could not import targets", exc.problems)
            return False
        if not self.confirm_csv(merge, Path(path).name):
            return False
        self.document.edit(f"Import targets from {Path(path).name}", merge.cell)
        self.window.statusBar().showMessage(f"{Path(path).name}: {merge.summary()}", 10000)
        return True

    def _stem(self) -> str:
        path = self.document.path
        name = path.name.removesuffix(".cell.json") if path is not None else "cell"
        return name or "cell"

    def export_dxf(self, path: Path | None = None) -> bool:
        """Write the cell as a DXF drawing."""
        if path is None:
            path = self.ask_save_path("Export DXF drawing", _DXF_FILTER, self._stem() + ".dxf")
            if path is None:
                return False
        try:
            write_dxf(self.document.cell, path, evaluation=self.document.evaluation)
        except OSError as exc:
            self._error(
                "Could not export",
                [f"{Path(path).name}: could not be written ({exc.strerror or exc})"],
            )
            return False
        self.window.statusBar().showMessage(f"Wrote {path}", 8000)
        return True

    def export_csv(self, path: Path | None = None) -> bool:
        """Write the targets as CSV."""
        if path is None:
            path = self.ask_save_path(
                "Export targets as CSV", _CSV_FILTER, self._stem() + "-targets.csv"
            )
            if path is None:
                return False
        try:
            write_targets_csv(self.document.cell, path)
        except OSError as exc:
            self._error(
                "Could not export",
                [f"{Path(path).name}: could not be written ({exc.strerror or exc})"],
            )
            return False
        self.window.statusBar().showMessage(f"Wrote {path}", 8000)
        return True

    # ------------------------------------------------------------ review sheet

    def _canvas_view(self) -> tuple[set[str], str, tuple[str, ...]]:
        """What the canvas shows: overlays, ghost-pose mode, selection."""
        canvas = getattr(self.window, "canvas", None)
        if canvas is None:
            return {"annulus"}, "all", ()
        acts = canvas.actions()
        modes = [m for m in ("all", "selected", "none") if f"ghosts.{m}" in acts]
        ghosts = next((m for m in modes if acts[f"ghosts.{m}"].isChecked()), "all")
        return canvas.overlays(), ghosts, tuple(self.document.selection.ids)

    def export_sheet(self) -> None:
        """File > Export > Review Sheet: the options dialog with its preview."""
        from app.sheet.dialog import ReviewSheetDialog

        overlays, ghosts, selection = self._canvas_view()
        dialog = ReviewSheetDialog(self.document, overlays, ghosts, selection, self.window)
        dialog.exec()
        if dialog.written:
            names = ", ".join(str(p) for p in dialog.written)
            self.window.statusBar().showMessage(f"Wrote {names}", 8000)

    def ask_title_block(self, cell: Cell) -> dict[str, str] | None:
        from app.sheet.dialog import TitleBlockDialog

        dialog = TitleBlockDialog(cell, self.window)
        return dialog.values() if dialog.exec() == QDialog.DialogCode.Accepted else None

    def edit_title_block(self) -> bool:
        """Edit > Title Block: the review fields, one undo step."""
        from app.sheet.dialog import edit_title_block

        values = self.ask_title_block(self.document.cell)
        return values is not None and edit_title_block(self.document, values)

"""File > Export > Review Sheet: options with a live preview; Edit > Title Block.

:class:`ReviewSheetDialog` shows the sheet as it will be printed (rendered with
:mod:`app.sheet.render` at a low resolution) while paper, orientation, scale and overlays
are chosen; its overlays start as the canvas shows them. :class:`TitleBlockDialog` edits
the cell's ``review`` fields (ISO 7200 terms); the change is one undo step
(``document.edit``). Every question goes through an ``ask_*`` method tests can replace.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from PySide6.QtCore import Qt, QTimer
from PySide6.QtGui import QColor, QImage, QPainter, QPixmap
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFileDialog,
    QFormLayout,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPushButton,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from app.canvas.layers.regions import REGION_KEYS
from app.canvas.layers.spaces import OVERLAY_TITLES, SPACE_OVERLAYS
from kinematics.caution import CAUTION_SHORT
from kinematics.cell import Cell
from kinematics.review import (
    DOCUMENT_STATUSES,
    EARLIER_KEYS,
    REVIEW_FIELDS,
    review_problems,
    title_block,
)

from .content import SheetContent, SheetOptions, sheet_content
from .layout import FIT, ORIENTATIONS, PAPER_SIZES, SCALES, parse_scale
from .render import DPI_RANGE, SheetPlan, paint_sheet, plan_sheets, png_problem, write_sheets

__all__ = ["TitleBlockDialog", "ReviewSheetDialog", "OVERLAY_CHOICES", "edit_title_block"]

_REGION_TITLES = {
    "annulus": "Reach annulus",
    "positive": "Positive elbow region",
    "negative": "Negative elbow region",
    "both": "Both configurations",
    "comfort": "Comfort region",
}
#: Overlays the sheet can show: key -> check-box text.
OVERLAY_CHOICES = {
    **{k: _REGION_TITLES[k] for k in REGION_KEYS},
    **{k: OVERLAY_TITLES[k][0] for k in SPACE_OVERLAYS},
}
_PDF = "PDF documents (*.pdf);;All files (*)"
_SVG = "SVG drawings (*.svg);;All files (*)"
_PNG = "PNG images (*.png);;All files (*)"


class TitleBlockDialog(QDialog):
    """The title-block fields of a cell, one line each; OK only when every field is valid."""

    def __init__(self, cell: Cell, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Title Block")
        fields = title_block(cell)
        review = cell.review or {}
        form = QFormLayout()
        self.edits: dict[str, QLineEdit | QComboBox] = {}
        for f in REVIEW_FIELDS:
            # Show what the file holds (an earlier key stands in for an absent new one).
            given = review.get(f.key)
            if not isinstance(given, str) and f.key in EARLIER_KEYS:
                given = review.get(EARLIER_KEYS[f.key])
            value = given if isinstance(given, str) else ""
            if f.key == "document_status":
                box = QComboBox()
                box.addItems(["", *DOCUMENT_STATUSES])
                box.setCurrentText(value)
                box.currentTextChanged.connect(self._check)
                widget: QLineEdit | QComboBox = box
            else:
                line = QLineEdit(value)
                line.textChanged.connect(self._check)
                if f.key == "date":
                    line.setPlaceholderText("YYYY-MM-DD")
                elif f.key == "title":
                    line.setPlaceholderText(cell.name)
                elif f.key == "document_type":
                    line.setPlaceholderText(fields["document_type"])
                widget = line
            widget.setObjectName(f"review.{f.key}")
            label = f.label + (" *" if f.mandatory else "")
            form.addRow(label, widget)
            self.edits[f.key] = widget
        self.problem = QLabel("")
        self.problem.setObjectName("review.problem")
        self.problem.setWordWrap(True)
        note = QLabel('* mandatory in ISO 7200; an empty one is marked "(not given)" on the sheet')
        note.setWordWrap(True)
        self.buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel
        )
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        lay = QVBoxLayout(self)
        lay.addLayout(form)
        lay.addWidget(note)
        lay.addWidget(self.problem)
        lay.addWidget(self.buttons)
        self._check()

    def values(self) -> dict[str, str]:
        """Field key -> text as entered."""
        out = {}
        for key, w in self.edits.items():
            out[key] = w.currentText() if isinstance(w, QComboBox) else w.text()
        return out

    def _check(self, *_args: Any) -> None:
        problems = review_problems(self.values())
        if problems:
            path, what, value = problems[0]
            label = next(f.label for f in REVIEW_FIELDS if f.key == path[0])
            self.problem.setText(f"{label}: {what}, got {value!r}")
        else:
            self.problem.setText("")
        self.buttons.button(QDialogButtonBox.StandardButton.Ok).setEnabled(not problems)


def edit_title_block(document, values: dict[str, str]) -> bool:
    """Apply title-block values to the document as one undo step; False when nothing
    changed."""
    from kinematics.review import with_review

    new = with_review(document.cell, values)
    if new == document.cell:
        return False
    document.edit("Edit title block", new)
    return True


class _Preview(QLabel):
    """The sheet painted at the label's size (a picture of the printed page)."""

    def __init__(self) -> None:
        super().__init__()
        self.setMinimumSize(480, 340)
        self.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self.setObjectName("sheet.preview")
        self.image = QImage()

    def show_sheet(self, plan: SheetPlan, sheet: int) -> None:
        f = plan.frame
        scale = min(self.width() / f.width, self.height() / f.height)
        dpi = max(scale * 25.4, 10.0)
        w, h = max(int(f.width * dpi / 25.4), 1), max(int(f.height * dpi / 25.4), 1)
        img = QImage(w, h, QImage.Format.Format_RGB32)
        dpm = int(round(dpi / 0.0254))
        img.setDotsPerMeterX(dpm)
        img.setDotsPerMeterY(dpm)
        img.fill(QColor("white"))
        p = QPainter(img)
        try:
            paint_sheet(p, plan, sheet, dpi)
        finally:
            p.end()
        self.image = img
        self.setPixmap(QPixmap.fromImage(img))


class ReviewSheetDialog(QDialog):
    """Review sheet options, a live preview and the exports (PDF, SVG, PNG).

    Parameters
    ----------
    document : Document
    overlays : set of str
        Overlays the canvas shows (the sheet's starting choice).
    ghosts : str
        The canvas's ghost-pose mode.
    selection : iterable of str
    parent : QWidget, optional
    """

    def __init__(
        self,
        document,
        overlays: set[str] | None = None,
        ghosts: str = "all",
        selection=(),
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.setWindowTitle("Export Review Sheet")
        self.document = document
        self.selection = frozenset(selection)
        self.content: SheetContent | None = None
        self.plan: SheetPlan | None = None
        self.written: list[Path] = []
        self._content_cell = None
        overlays = set(overlays if overlays is not None else {"annulus"})

        form = QFormLayout()
        self.paper = QComboBox()
        self.paper.addItems(list(PAPER_SIZES))
        self.paper.setCurrentText("A3")
        self.orientation = QComboBox()
        self.orientation.addItems(list(ORIENTATIONS))
        self.scale = QComboBox()
        self.scale.addItem("fit: largest standard scale that fits", FIT)
        for s in SCALES:
            self.scale.addItem(s.text, s.text)
        self.ghosts = QComboBox()
        for mode, text in (("all", "all targets"), ("selected", "selected only"), ("none", "none")):
            self.ghosts.addItem(text, mode)
        self.ghosts.setCurrentIndex(max(self.ghosts.findData(ghosts), 0))
        self.labels = QCheckBox("Label targets with their ids")
        self.labels.setChecked(True)
        self.dpi = QSpinBox()
        self.dpi.setRange(*DPI_RANGE)
        self.dpi.setValue(150)
        self.dpi.setSuffix(" dpi")
        form.addRow("Paper", self.paper)
        form.addRow("Orientation", self.orientation)
        form.addRow("Scale (ISO 5455)", self.scale)
        form.addRow("Poses", self.ghosts)
        form.addRow("", self.labels)
        form.addRow("PNG resolution", self.dpi)
        self.overlay_boxes: dict[str, QCheckBox] = {}
        over = QVBoxLayout()
        over.addWidget(QLabel("Overlays on the sheet"))
        for key, text in {**OVERLAY_CHOICES, "underlay": "DXF underlay"}.items():
            box = QCheckBox(text)
            box.setObjectName(f"sheet.overlay.{key}")
            box.setChecked(key in overlays)
            box.toggled.connect(self._schedule)
            over.addWidget(box)
            self.overlay_boxes[key] = box
        self.sheet = QSpinBox()
        self.sheet.setPrefix("sheet ")
        self.sheet.setMinimum(1)
        self.sheet.valueChanged.connect(self._show)
        self.info = QLabel("")
        self.info.setObjectName("sheet.info")
        self.info.setWordWrap(True)
        self.title_button = QPushButton("Title Block…")
        self.title_button.clicked.connect(self.edit_title_block)
        buttons = QHBoxLayout()
        self.export_buttons = {}
        for fmt in ("PDF", "SVG", "PNG"):
            b = QPushButton(f"Export {fmt}…")
            b.setObjectName(f"sheet.export.{fmt.lower()}")
            b.clicked.connect(lambda _c=False, f=fmt: self.export(f.lower()))
            buttons.addWidget(b)
            self.export_buttons[fmt.lower()] = b
        close = QPushButton("Close")
        close.clicked.connect(self.accept)
        buttons.addStretch(1)
        buttons.addWidget(close)
        left = QVBoxLayout()
        left.addLayout(form)
        left.addLayout(over)
        left.addWidget(self.title_button)
        left.addStretch(1)
        caution = QLabel(CAUTION_SHORT)
        caution.setWordWrap(True)
        left.addWidget(caution)
        self.preview = _Preview()
        right = QVBoxLayout()
        right.addWidget(self.preview, 1)
        row = QHBoxLayout()
        row.addWidget(self.sheet)
        row.addWidget(self.info, 1)
        right.addLayout(row)
        top = QHBoxLayout()
        top.addLayout(left, 0)
        top.addLayout(right, 1)
        lay = QVBoxLayout(self)
        lay.addLayout(top, 1)
        lay.addLayout(buttons)
        for w in (self.paper, self.orientation, self.scale, self.ghosts):
            w.currentIndexChanged.connect(self._schedule)
        self.labels.toggled.connect(self._schedule)
        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(120)
        self._timer.timeout.connect(self.refresh)
        self.resize(1100, 720)
        self.refresh()

    # ---------------------------------------------------------------- state

    def options(self) -> SheetOptions:
        """The options chosen."""
        return SheetOptions(
            paper=self.paper.currentText(),
            orientation=self.orientation.currentText(),
            scale=parse_scale(self.scale.currentData()),
            overlays=frozenset(k for k, b in self.overlay_boxes.items() if b.isChecked()),
            ghosts=self.ghosts.currentData(),
            selection=self.selection,
            labels=self.labels.isChecked(),
            underlay=self.overlay_boxes["underlay"].isChecked(),
            dpi=self.dpi.value(),
        )

    def _schedule(self, *_args: Any) -> None:
        self._timer.start()

    def refresh(self) -> None:
        """Plan the sheets for the current options (and the document's current cell)."""
        doc = self.document
        if self.content is None or self._content_cell is not doc.cell:
            self.content = sheet_content(doc.evaluation, doc.path)
            self._content_cell = doc.cell
        self.plan = plan_sheets(self.content, self.options())
        self.sheet.blockSignals(True)
        self.sheet.setMaximum(self.plan.sheets)
        self.sheet.setSuffix(f" of {self.plan.sheets}")
        self.sheet.blockSignals(False)
        m = self.plan.mapping
        fits = "" if m.fits else " — parts of the cell lie outside the drawing at this scale"
        self.info.setText(f"Scale {m.scale.text}, {self.plan.sheets} sheet(s){fits}")
        self._show()

    def _show(self, *_args: Any) -> None:
        if self.plan is not None:
            self.preview.show_sheet(self.plan, min(self.sheet.value(), self.plan.sheets) - 1)

    def resizeEvent(self, event) -> None:  # noqa: N802 (Qt name)
        super().resizeEvent(event)
        if self.plan is not None:
            self._schedule()

    # ---------------------------------------------------------------- actions

    def ask_save_path(self, title: str, file_filter: str, suggested: str) -> Path | None:
        path = self.document.path
        folder = path.parent if path is not None else Path.home()
        name, _ = QFileDialog.getSaveFileName(self, title, str(folder / suggested), file_filter)
        return Path(name) if name else None

    def ask_title_block(self, cell: Cell) -> dict[str, str] | None:
        dialog = TitleBlockDialog(cell, self)
        return dialog.values() if dialog.exec() == QDialog.DialogCode.Accepted else None

    def show_error(self, message: str) -> None:
        from PySide6.QtWidgets import QMessageBox

        QMessageBox.warning(self, "Could not export", message)

    def edit_title_block(self) -> bool:
        values = self.ask_title_block(self.document.cell)
        if values is None or not edit_title_block(self.document, values):
            return False
        self.refresh()
        return True

    def export(self, fmt: str, path: Path | None = None) -> list[Path]:
        """Write the sheets in one format ("pdf", "svg", "png"); the files written."""
        if self._timer.isActive():
            self._timer.stop()
            self.refresh()
        assert self.plan is not None
        if fmt == "png":
            o = self.plan.options
            problem = png_problem(o.paper, o.orientation, o.dpi)
            if problem:
                self.show_error(f"PNG resolution {problem}")
                return []
        stem = self.document.path.name.removesuffix(".cell.json") if self.document.path else "cell"
        if path is None:
            filters = {"pdf": _PDF, "svg": _SVG, "png": _PNG}
            path = self.ask_save_path(
                f"Export review sheet as {fmt.upper()}", filters[fmt], f"{stem}-review.{fmt}"
            )
            if path is None:
                return []
        try:
            written = write_sheets(self.plan, **{fmt: path})
        except OSError as exc:
            where = Path(getattr(exc, "filename", None) or path).name
            self.show_error(f"{where}: could not be written ({exc.strerror or exc})")
            return []
        self.written += written
        self.info.setText(f"Wrote {', '.join(p.name for p in written)}")
        return written

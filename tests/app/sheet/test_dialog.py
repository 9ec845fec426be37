"""File > Export > Review Sheet and Edit > Title Block in the window.

Title-block field names: ISO 7200:2004. PDFs read back with pypdf."""

from __future__ import annotations

from pathlib import Path

import pypdf
import pytest
from PySide6.QtWidgets import QDialogButtonBox

from app.document import Document
from app.main_window import MainWindow
from app.sheet.dialog import ReviewSheetDialog, TitleBlockDialog
from kinematics.cellfile import load_cell

REPO = Path(__file__).resolve().parents[3]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


@pytest.fixture
def window(qtbot):
    win = MainWindow(Document(load_cell(TRAY), TRAY), use_settings=True)
    win.ask_unsaved_changes = lambda: "discard"
    qtbot.addWidget(win)
    win.show()
    qtbot.waitExposed(win)
    return win


def text_of(path: Path) -> str:
    return " ".join(" ".join(p.extract_text() for p in pypdf.PdfReader(path).pages).split())


def test_the_sheet_starts_with_what_the_canvas_shows_and_exports(window, qtbot, tmp_path):
    acts = window.canvas.actions()
    acts["overlay.positive"].setChecked(True)
    acts["overlay.annulus"].setChecked(False)
    acts["ghosts.none"].setChecked(True)
    overlays, ghosts, selection = window.exchange._canvas_view()
    dialog = ReviewSheetDialog(window.document, overlays, ghosts, selection, window)
    qtbot.addWidget(dialog)
    o = dialog.options()
    assert "positive" in o.overlays and "annulus" not in o.overlays and o.ghosts == "none"
    assert not dialog.preview.image.isNull()
    dialog.scale.setCurrentIndex(dialog.scale.findData("1:20"))
    dialog.paper.setCurrentText("A4")
    target = tmp_path / "tray-review.pdf"
    assert dialog.export("pdf", target) == [target]
    text = text_of(target)
    assert "Scale 1:20 (stated)" in text
    assert "positive elbow reaches" in text and "reach annulus" not in text
    assert "A4 L, mm" in text


def test_the_preview_follows_the_options(window, qtbot):
    dialog = ReviewSheetDialog(window.document, {"annulus"}, "all", (), window)
    qtbot.addWidget(dialog)
    dialog.orientation.setCurrentText("portrait")
    dialog.refresh()
    img = dialog.preview.image
    assert img.height() > img.width()  # portrait: ISO 216 height 297 over width 210
    assert img.height() / img.width() == pytest.approx(297 / 210, rel=0.01)


def test_title_block_edits_are_one_undo_step(window, qtbot):
    before = window.document.cell
    answers = {"legal_owner": "Northfield Fixtures Ltd", "identification_number": "NF-1",
               "date": "2026-12-01", "creator": "A. Bremer"}  # fmt: skip

    def ask(cell):
        dialog = TitleBlockDialog(cell, window)
        qtbot.addWidget(dialog)
        for key, value in answers.items():
            dialog.edits[key].setText(value)
        return dialog.values()

    window.exchange.ask_title_block = ask
    assert window.exchange.edit_title_block()
    review = window.document.cell.review
    assert review["legal_owner"] == "Northfield Fixtures Ltd" and review["creator"] == "A. Bremer"
    assert "drawn_by" not in review  # the earlier key gave way to the ISO 7200 one
    assert review["title"] == "Demo: tray loading"  # kept from the earlier "project" key
    window.undo()
    assert window.document.cell == before


def test_title_block_dialog_refuses_a_bad_date(qtbot):
    dialog = TitleBlockDialog(load_cell(TRAY))
    qtbot.addWidget(dialog)
    ok = dialog.buttons.button(QDialogButtonBox.StandardButton.Ok)
    assert ok.isEnabled()
    dialog.edits["date"].setText("1 Dec 2026")
    assert not ok.isEnabled()
    assert dialog.problem.text().startswith("Date of issue: must be a date written YYYY-MM-DD")
    dialog.edits["date"].setText("2026-12-01")
    assert ok.isEnabled() and dialog.problem.text() == ""


def test_menus_hold_the_sheet_and_the_title_block(window):
    texts = [a.text() for m in window.menuBar().actions() for a in m.menu().actions()]
    assert "&Title Block…" in texts
    export = next(
        a.menu() for m in window.menuBar().actions() for a in m.menu().actions()
        if a.menu() is not None and a.text() == "E&xport"
    )  # fmt: skip
    assert [a.text() for a in export.actions()][0] == "&Review Sheet (PDF, SVG, PNG)…"

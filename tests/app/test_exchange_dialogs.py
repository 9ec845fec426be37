"""File > Import / Export in the window: the DXF layer dialog, CSV merge, exports, undo.

Drawings are written with ezdxf (the reference writer); $INSUNITS 0 means unitless and 4
millimetres (ezdxf documentation, "DXF units")."""

from __future__ import annotations

from pathlib import Path

import ezdxf
import pytest
from PySide6.QtWidgets import QDialogButtonBox

from app.document import Document
from app.exchange_dialogs import DxfChoices, DxfImportDialog
from app.main_window import MainWindow
from kinematics.cellfile import load_cell
from kinematics.dxf_import import read_dxf

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


def plan(tmp_path, insunits=4, name="plan.dxf") -> Path:
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = insunits
    msp = doc.modelspace()
    msp.add_lwpolyline(
        [(900, 0), (1100, 0), (1100, 150), (900, 150)],
        close=True,
        dxfattribs={"layer": "Conveyors"},
    )
    msp.add_circle((1300, 400), 60, dxfattribs={"layer": "POSTS"})
    msp.add_spline([(0, 0), (50, 80), (100, 0)], dxfattribs={"layer": "POSTS"})
    path = tmp_path / name
    doc.saveas(path)
    return path


@pytest.fixture
def window(qtbot):
    win = MainWindow(Document(load_cell(TRAY), TRAY), use_settings=True)
    errors: list[str] = []
    win.show_error = lambda title, message, details="": errors.append(message)
    win.ask_unsaved_changes = lambda: "discard"  # closing at teardown must not block
    win.errors = errors
    qtbot.addWidget(win)
    win.show()
    qtbot.waitExposed(win)
    return win


def test_dialog_asks_for_units_when_unset_and_summarises(qtbot, tmp_path):
    drawing = read_dxf(plan(tmp_path, insunits=0))
    dialog = DxfImportDialog(drawing, load_cell(TRAY))
    qtbot.addWidget(dialog)
    ok = dialog.buttons.button(QDialogButtonBox.StandardButton.Ok)
    assert "does not state its units" in dialog.units_note.text()
    assert not ok.isEnabled()
    assert "choose the drawing's units" in dialog.summary.toPlainText()
    # The layer named after a kind is suggested; POSTS is not imported until chosen.
    assert dialog.kind_boxes["Conveyors"].currentText() == "conveyor"
    dialog.set_units("mm")
    assert ok.isEnabled()
    dialog.set_kind("POSTS", "column")
    dialog.set_height("POSTS", 2500)
    text = dialog.summary.toPlainText()
    assert "imported 1 outline from layer Conveyors" in text
    assert "imported 1 outline from layer POSTS" in text
    assert "skipped 1 SPLINE on layer POSTS" in text
    choices, problems = dialog.choices()
    assert not problems and choices.layer_heights == {"POSTS": 2500.0} and choices.units == "mm"
    dialog.set_height("POSTS", None)
    dialog.height_edits["POSTS"].setText("tall")
    assert "layer POSTS: height must be a number" in dialog.summary.toPlainText()
    assert not ok.isEnabled()
    dialog.resize(700, 640)
    dialog.show()
    qtbot.waitExposed(dialog)
    dialog.grab().save(str(tmp_path / "dxf_dialog.png"))


def test_import_dxf_is_one_undo_step_and_remembers_the_choices(window, tmp_path):
    path = plan(tmp_path)
    seen: list[DxfChoices] = []

    def answer(drawing, remembered):
        seen.append(remembered)
        return DxfChoices({"Conveyors": "conveyor", "POSTS": "column"}, {"POSTS": 2500.0}, None)

    window.exchange.ask_dxf_choices = answer
    before = window.document.cell
    assert window.exchange.import_dxf(path)
    after = window.document.cell
    assert len(after.fixtures) == len(before.fixtures) + 2
    post = after.fixtures[-1]
    assert post.kind == "column" and post.height == 2500.0
    assert window.undo_stack.count() == 1
    assert window.undo_stack.undoText() == "Import plan.dxf"
    assert "2 fixtures added" in window.statusBar().currentMessage()
    window.undo()
    assert window.document.cell == before
    # The next import of the same file starts from the choices made the last time.
    window.exchange.import_dxf(path)
    assert seen[1].layer_kinds == {"Conveyors": "conveyor", "POSTS": "column"}
    assert seen[1].layer_heights == {"POSTS": 2500.0}


def test_damaged_dxf_offers_recovery_only_as_a_choice(window, tmp_path):
    text = plan(tmp_path).read_text()
    lines = text[: text.index("ENTITIES") + 400].splitlines()
    bad = tmp_path / "cut.dxf"
    bad.write_text("\n".join(lines[: len(lines) // 2 * 2]) + "\n")
    asked: list[str] = []
    window.exchange.ask_recover = lambda message: asked.append(message) or False
    window.exchange.ask_dxf_choices = lambda d, r: pytest.fail("no dialog without recovery")
    assert not window.exchange.import_dxf(bad)
    assert asked and asked[0].startswith("cut.dxf: line ")
    shown = []
    window.exchange.ask_recover = lambda message: True
    window.exchange.ask_dxf_choices = lambda d, r: shown.append(d) or None
    assert not window.exchange.import_dxf(bad)
    assert shown[0].recovered and shown[0].counts_text().split()[1] == "entities"
    assert window.undo_stack.count() == 0


def test_missing_dxf_is_an_error_not_a_recovery(window, tmp_path):
    window.exchange.ask_recover = lambda m: pytest.fail("nothing to recover")
    assert not window.exchange.import_dxf(tmp_path / "gone.dxf")
    assert window.errors == ["gone.dxf: could not be opened (no such file or folder)"]


def test_csv_import_merges_after_confirming(window, tmp_path):
    csv_path = tmp_path / "targets.csv"
    window.exchange.export_csv(csv_path)
    text = csv_path.read_text().replace("tray_a1,", "tray_a1,", 1)
    rows = text.splitlines()
    rows[1] = rows[1].replace("-480,160", "-470,160")
    rows.append("extra_1,Extra,100,300,loader,,,mm")
    csv_path.write_text("\n".join(rows) + "\n")
    summaries = []
    window.exchange.confirm_csv = lambda merge, source: summaries.append(merge.summary()) or True
    assert window.exchange.import_csv(csv_path)
    n = len(load_cell(TRAY).targets)
    assert summaries == [f"1 target added, 1 changed, {n - 1} unchanged"]
    assert window.undo_stack.count() == 1
    assert window.document.cell.targets[-1].id == "extra_1"
    bad = tmp_path / "bad.csv"
    bad.write_text("id,x,y,arm\nq,1,2,nobody\n")
    assert not window.exchange.import_csv(bad)
    assert window.errors[-1].startswith("bad.csv: row 2, column D (arm): names no arm")
    assert window.undo_stack.count() == 1


def test_exports_write_files_and_report_failures(window, tmp_path):
    assert window.exchange.export_dxf(tmp_path / "cell.dxf")
    assert ezdxf.readfile(tmp_path / "cell.dxf").header["$INSUNITS"] == 4
    assert not window.exchange.export_dxf(tmp_path / "none" / "cell.dxf")
    assert window.errors[-1].startswith("cell.dxf: could not be written")
    window.exchange.ask_save_path = lambda title, flt, suggested: tmp_path / suggested
    assert window.exchange.export_csv()
    assert (tmp_path / "tray_loading-targets.csv").exists()


def test_file_menu_holds_the_import_and_export_entries(window):
    titles = [a.text() for a in window.menuBar().actions()[0].menu().actions()]
    assert "&Import" in titles and "E&xport" in titles

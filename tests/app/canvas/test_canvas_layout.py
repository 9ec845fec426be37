"""The canvas at 1280 x 800 (issue 11, defect 11): the legend folds into a button, labels and
arm names are whole and apart, "links pass over" notes merge per group of fixtures and stay
in view, fixture names can be shown."""

from __future__ import annotations

from pathlib import Path

import pytest
import shapely
from PySide6.QtCore import QRectF
from PySide6.QtWidgets import QApplication

from app.canvas import CellCanvas
from app.canvas.layers.fixture_names import FIXTURE_NAMES_KEY
from app.canvas.legend_place import MAX_LEGEND_SHARE
from app.document import Document
from app.main_window import MainWindow
from kinematics.bodies import passes_over
from kinematics.cell import Arm, Cell
from kinematics.cellfile import load_cell

REPO = Path(__file__).resolve().parents[3]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"
KITTING = REPO / "sample_cells" / "kitting_two_arm.cell.json"

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


def _window(qtbot, path: Path, size: tuple[int, int]) -> MainWindow:
    win = MainWindow(Document(load_cell(path), path), use_settings=False)
    win.ask_unsaved_changes = lambda: "discard"
    qtbot.addWidget(win)
    win.resize(*size)
    win.show()
    qtbot.waitExposed(win)
    QApplication.processEvents()
    win.canvas.zoom_to_fit()
    win.document.settle()
    win.canvas.grab()  # paint once: labels and names are placed when painted
    QApplication.processEvents()
    return win


@pytest.mark.parametrize("path", [TRAY, KITTING], ids=["tray", "kitting"])
def test_at_1280_by_800_the_legend_folds_into_a_button(qtbot, path):
    win = _window(qtbot, path, (1280, 800))
    c = win.canvas
    toggle = c.legend_toggle
    assert toggle.mode == "collapsed"
    assert toggle.button.isVisible() and not c.legend_area.isVisible()
    assert c.plot.width() == c.width()  # the whole canvas for the drawing
    toggle.button.click()
    QApplication.processEvents()
    assert c.legend_area.isVisible() and toggle.button.text() == "Legend ▸"
    toggle.button.click()
    QApplication.processEvents()
    assert not c.legend_area.isVisible()
    # A wide window keeps it beside the plot, taking at most its share of the canvas.
    win.resize(1600, 1000)
    QApplication.processEvents()
    assert toggle.mode == "beside" and c.legend_area.isVisible()
    assert not toggle.button.isVisible()
    assert c.legend_area.width() <= MAX_LEGEND_SHARE * c.width()


@pytest.mark.parametrize("size", [(1280, 800), (1600, 1000)])
@pytest.mark.parametrize("path", [TRAY, KITTING], ids=["tray", "kitting"])
def test_labels_and_arm_names_are_whole_and_arm_names_apart(qtbot, path, size):
    win = _window(qtbot, path, size)
    c = win.canvas
    left, top, right, bottom = c.note_view()
    view = QRectF(left, top, right - left, bottom - top).adjusted(-1, -1, 1, 1)
    for x, y, w, h, *_rest in c.targets.labels.placed():
        assert view.contains(QRectF(x, y, w, h)), (x, y, w, h)
    names = [it.name_rect for it in c.bases.items.values()]
    assert all(r is not None and view.contains(r) for r in names)
    for i, a in enumerate(names):
        for b in names[i + 1 :]:
            assert not a.intersects(b)


def test_names_of_two_bases_side_by_side_do_not_overlap(qtbot):
    # Two arms a short way apart, both facing up: both names would sit under their bases.
    a = Arm("a", "Left packing arm", 0, 0, 90, 300, 250, (-150, 150), (-150, 150))
    b = Arm("b", "Right packing arm", 150, 0, 90, 300, 250, (-150, 150), (-150, 150))
    c = CellCanvas(Document(Cell("pair", arms=(a, b))))
    qtbot.addWidget(c)
    c.resize(900, 700)
    c.show()
    qtbot.waitExposed(c)
    c.zoom_to_fit()
    c.grab()
    ra, rb = (c.bases.items[k].name_rect for k in ("a", "b"))
    assert ra is not None and rb is not None and not ra.intersects(rb)
    # Neither name covers the other arm's base.
    for rect, other in ((ra, "b"), (rb, "a")):
        it = c.bases.items[other]
        p = c.world_to_viewport(it.x, it.y)
        assert not rect.adjusted(-4, -4, 4, 4).contains(p.x(), p.y())


def test_passes_over_notes_merge_per_group_and_stay_in_view(qtbot):
    win = _window(qtbot, KITTING, (1280, 800))
    c = win.canvas
    c.actions()["overlay.passes_over"].setChecked(True)
    win.document.settle()
    cell = win.document.cell
    over = {
        f.id
        for a in cell.arms
        for f, m in zip(
            win.document.evaluation.arms[a.id].fixtures,
            passes_over(a, win.document.evaluation.arms[a.id].fixtures, 0.0),
        )
        if m
    }
    assert len(over) >= 4  # the kitting table, tray and bins all lie below the links
    notes = c.notes.texts("overlay.passes_over.note")
    # The table top touches every other one: one group, one note for all of them.
    assert notes == [
        f"links pass over {len(over)} fixtures, 650–760 mm high\n"
        "Left kitting arm, Right kitting arm (underside 780)"
    ]
    left, top, right, bottom = c.note_view()
    for x0, y0, x1, y1 in c.notes.rects().values():
        assert left - 1 <= x0 and x1 <= right + 1 and top - 1 <= y0 and y1 <= bottom + 1
    # Zoomed in on one corner, the note stays in view all the same.
    c.vb.setRange(xRange=(-900, -600), yRange=(-450, -150), padding=0)
    QApplication.processEvents()
    c.notes.layout()
    for x0, y0, x1, y1 in c.notes.rects().values():
        assert left - 1 <= x0 and x1 <= right + 1 and top - 1 <= y0 and y1 <= bottom + 1


def test_fixture_names_are_a_view_toggle_and_sit_inside_their_outlines(qtbot):
    win = _window(qtbot, TRAY, (1600, 1000))
    c = win.canvas
    act = c.actions()[f"overlay.{FIXTURE_NAMES_KEY}"]
    overlays = next(a.menu() for a in win.view_menu.actions() if a.text() == "Overlays")
    assert act in overlays.actions() and not act.isChecked()
    assert c.fixture_names.names() == []
    act.setChecked(True)
    cell = win.document.cell
    assert c.fixture_names.names() == [f.name for f in cell.fixtures]
    c.grab()
    assert c.fixture_names.item.drawn  # at least the large ones are written
    for (name, x, y, *_box), f in zip(c.fixture_names.item.rows, cell.fixtures):
        assert name == f.name
        assert shapely.Polygon(f.outline).contains(shapely.Point(x, y))
    # A renamed fixture is written with its new name.
    from dataclasses import replace

    renamed = replace(cell.fixtures[0], name="Infeed belt")
    win.document.edit("Rename", replace(cell, fixtures=(renamed, *cell.fixtures[1:])))
    assert c.fixture_names.names()[0] == "Infeed belt"
    act.setChecked(False)
    assert c.fixture_names.names() == []

"""The DXF underlay on the canvas: drawn under the layout, toggled in View, not editable.

The drawing is written with ezdxf (reference writer); $INSUNITS 4 = millimetres (ezdxf
documentation, "DXF units")."""

from __future__ import annotations

import json
from pathlib import Path

import ezdxf
import pytest

from app.canvas.canvas import CellCanvas
from app.document import Document
from kinematics.cellfile import load_cell

REPO = Path(__file__).resolve().parents[3]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"


@pytest.fixture
def cell_file(tmp_path) -> Path:
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = 4
    msp = doc.modelspace()
    msp.add_lwpolyline([(-900, -900), (900, -900), (900, 900), (-900, 900)], close=True,
                       dxfattribs={"layer": "HALL"})  # fmt: skip
    msp.add_line((-900, 0), (900, 0), dxfattribs={"layer": "AXIS"})
    (tmp_path / "cad").mkdir()
    doc.saveas(tmp_path / "cad" / "hall.dxf")
    data = json.loads(TRAY.read_text())
    data["underlay"] = {"dxf": "cad/hall.dxf", "layers": ["HALL", "AXIS"]}
    path = tmp_path / "tray.cell.json"
    path.write_text(json.dumps(data))
    return path


def test_underlay_is_drawn_toggled_and_in_the_legend(qtbot, cell_file):
    doc = Document(load_cell(cell_file), cell_file)
    canvas = CellCanvas(doc)
    qtbot.addWidget(canvas)
    lines = canvas.underlay.lines()
    assert len(lines) == 2
    hall = max(lines, key=len)
    assert hall[:, 0].min() == -900.0 and hall[:, 1].max() == 900.0  # mm as drawn
    assert "DXF hall.dxf (drawing only)" in canvas.legend.texts()
    # Under the fixtures: the view paints it before them, in its cached background (over
    # the placement heatmap, which is under everything).
    painters = canvas.plot.background_painters
    assert painters.index(canvas.underlay.paint) < painters.index(canvas.fixtures.paint)
    assert painters.index(canvas.placement.paint_background) < painters.index(canvas.underlay.paint)
    canvas.actions()["overlay.underlay"].setChecked(False)
    assert canvas.underlay.lines() == [] and "Underlay" not in canvas.legend.texts()


def test_a_missing_drawing_is_said_in_one_line(qtbot, cell_file, tmp_path):
    (tmp_path / "cad" / "hall.dxf").unlink()
    doc = Document(load_cell(cell_file), cell_file)
    notes: list[str] = []
    canvas = CellCanvas(doc)
    canvas.status_message.connect(notes.append)
    qtbot.addWidget(canvas)
    assert canvas.underlay.lines() == []
    assert canvas.underlay.note.startswith("underlay not drawn: hall.dxf: could not be opened")

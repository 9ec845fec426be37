"""The DXF underlay: the cell key and the lines read from a drawing.

Drawings are written with ezdxf (the reference writer); $INSUNITS 1 inches, 4
millimetres, 6 metres (ezdxf documentation, "DXF units"); 1 in = 25.4 mm exactly
(international yard and pound agreement, 1959).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import ezdxf
import numpy as np
import pytest

from kinematics.cell import Cell
from kinematics.cellfile import CellFileError, parse_cell
from kinematics.dxf_import import UNDERLAY_TOL_MM, DxfReadError, DxfUnitsUnset, dxf_underlay
from kinematics.underlay import load_underlay, underlay_path, underlay_spec

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"


def hall(tmp_path: Path, insunits: int = 6, name: str = "hall.dxf") -> Path:
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = insunits
    msp = doc.modelspace()
    msp.add_line((0, 0), (4, 0), dxfattribs={"layer": "WALLS"})
    msp.add_arc((0, 0), 2.0, 0, 90, dxfattribs={"layer": "WALLS"})
    block = doc.blocks.new("POST")
    block.add_circle((0, 0), 0.1)  # layer 0: takes the INSERT's layer
    outer = doc.blocks.new("ROW")
    outer.add_blockref("POST", (0, 0))
    outer.add_blockref("POST", (1, 0))
    msp.add_blockref("ROW", (2, 3), dxfattribs={"layer": "POSTS", "xscale": 2, "yscale": 2})
    msp.add_text("Hall 3", dxfattribs={"layer": "NOTES"})
    path = tmp_path / name
    doc.saveas(path)
    return path


def test_lines_per_layer_in_cell_units_with_blocks_exploded(tmp_path):
    u = dxf_underlay(hall(tmp_path), cell_units="mm")
    assert u.units == "m"
    assert sorted(u.layers) == ["POSTS", "WALLS"]
    wall, arc = u.layers["WALLS"]
    assert wall.tolist() == [[0.0, 0.0], [4000.0, 0.0]]
    # The arc stays within the tolerance of radius 2 m (analytic) and spans a quarter turn.
    r = np.hypot(arc[:, 0], arc[:, 1])
    assert np.abs(r - 2000.0).max() <= UNDERLAY_TOL_MM
    assert arc[0].tolist() == pytest.approx([2000.0, 0.0]) and arc[-1] == pytest.approx([0, 2000])
    # Nested, scaled block: posts of radius 0.2 m at (2, 3) and (4, 3) m.
    posts = u.layers["POSTS"]
    assert len(posts) == 2
    centres = sorted(tuple(np.round((p.max(axis=0) + p.min(axis=0)) / 2, 6)) for p in posts)
    assert centres == [(2000.0, 3000.0), (4000.0, 3000.0)]
    for p, c in zip(sorted(posts, key=lambda p: p[:, 0].min()), ((2000, 3000), (4000, 3000))):
        assert np.abs(np.hypot(*(p - c).T) - 200.0).max() <= UNDERLAY_TOL_MM
    # Text is listed, not drawn.
    assert [(n.dxftype, n.layer) for n in u.notes] == [("TEXT", "NOTES")]


def test_inch_cells_and_layer_choice_and_unset_units(tmp_path):
    path = hall(tmp_path, insunits=4)  # millimetres
    u = dxf_underlay(path, cell_units="in", layers=["WALLS"])
    assert list(u.layers) == ["WALLS"]
    assert u.layers["WALLS"][0][1, 0] == pytest.approx(4 / 25.4)
    unset = hall(tmp_path, insunits=0, name="unset.dxf")
    with pytest.raises(DxfUnitsUnset, match=r"unset.dxf: the drawing does not state its units"):
        dxf_underlay(unset)
    assert dxf_underlay(unset, drawing_units="cm").layers["WALLS"][0][1, 0] == pytest.approx(40)


def test_a_broken_file_names_the_line(tmp_path):
    path = hall(tmp_path)
    text = path.read_text()
    cut = tmp_path / "cut.dxf"
    cut.write_text(text[: len(text) // 2])
    with pytest.raises(DxfReadError, match=r"cut.dxf: line \d+: "):
        dxf_underlay(cut)


def _cell_text(underlay) -> str:
    data = json.loads(TRAY.read_text())
    data["underlay"] = underlay
    return json.dumps(data)


@pytest.mark.parametrize(
    ("value", "line"),
    [
        ({"units": "mm"}, "c.json: underlay.dxf: is required but missing"),
        ({"dxf": "/srv/cad/hall.dxf"}, "underlay.dxf: must be a path relative to the folder"),
        ({"dxf": "C:\\\\cad\\\\hall.dxf"}, "underlay.dxf: must be a path relative"),
        ({"dxf": "cad\\\\hall.dxf"}, 'underlay.dxf: must use "/" between folders'),
        ({"dxf": "hall.dxf", "units": "yd"}, 'underlay.units: must be one of "mm", "cm"'),
        ({"dxf": "hall.dxf", "layers": "WALLS"}, "underlay.layers: must be a list of layer names"),
        ("hall.dxf", "underlay: must be a JSON object"),
    ],
)
def test_bad_underlay_keys_give_one_line(value, line):
    with pytest.raises(CellFileError) as err:
        parse_cell(_cell_text(json.loads(json.dumps(value).replace("\\\\\\\\", "\\\\"))), "c.json")
    assert len(err.value.problems) == 1 and line in err.value.problems[0]


def test_the_path_is_relative_to_the_cell_file(tmp_path):
    (tmp_path / "cad").mkdir()
    hall(tmp_path / "cad")
    cell = parse_cell(_cell_text({"dxf": "cad/hall.dxf"}), "c.json")
    spec = underlay_spec(cell)
    assert underlay_path(spec, tmp_path / "c.cell.json") == tmp_path / "cad" / "hall.dxf"
    u, note = load_underlay(cell, tmp_path / "c.cell.json")
    assert u is not None and "cad/hall.dxf: 4 lines on 2 layers (m)" in note
    missing, note = load_underlay(cell, tmp_path / "elsewhere" / "c.cell.json")
    assert missing is None and note.startswith("underlay not drawn: hall.dxf: could not be")
    assert load_underlay(cell, None)[1].endswith("(save the cell first: the path is relative)")
    assert load_underlay(Cell("c"), None) == (None, "")
    assert math.isfinite(u.bounds()[1])

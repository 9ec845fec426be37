"""DXF import against drawings written here with ezdxf (the reference writer).

Outside references:
- DXF header $INSUNITS codes, ezdxf documentation "DXF units": 1 inches, 4 millimetres,
  6 metres; 0 unitless.
- 1 in = 25.4 mm exactly (international yard and pound agreement, 1959).
- Bulge of a polyline segment = tan(theta / 4), theta the included angle of the arc,
  positive counter-clockwise (DXF reference, LWPOLYLINE group code 42; ezdxf documentation
  "Bulge related functions").
- Areas: disc pi r^2, rectangle w h (elementary geometry); shapely computes polygon areas.
- Block insertion: a point p of a block is placed at insert + R(rotation) S(xscale, yscale) p
  (DXF reference, INSERT entity); composed here with plain numpy matrices.
"""

from __future__ import annotations

import math

import ezdxf
import numpy as np
import pytest
import shapely

from kinematics.cell import Arm, Cell, Fixture
from kinematics.dxf_import import (
    SOURCE_KEY,
    DxfReadError,
    DxfUnitsUnset,
    dxf_fixtures,
    merge_fixtures,
    outline_points,
    read_dxf,
)

TOL_MM = 0.05  # kinematics.report.REGION_TOL_MM, the chord tolerance of region outlines
# $INSUNITS codes (ezdxf documentation, "DXF units") and millimetres per unit (exact).
UNITS = {"mm": (4, 1.0), "m": (6, 1000.0), "in": (1, 25.4)}


def new_doc(units: str | None = "mm"):
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = 0 if units is None else UNITS[units][0]
    return doc


def save(doc, tmp_path, name="plan.dxf"):
    path = tmp_path / name
    doc.saveas(path)
    return path


def poly(f: Fixture) -> shapely.Polygon:
    return shapely.Polygon(f.outline)


@pytest.mark.parametrize("units", ["mm", "m", "in"])
def test_units_from_the_header_are_converted_to_the_cell(units, tmp_path):
    doc = new_doc(units)
    doc.modelspace().add_lwpolyline(
        [(1, 1), (3, 1), (3, 2), (1, 2)], close=True, dxfattribs={"layer": "TABLES"}
    )
    path = save(doc, tmp_path)
    drawing = read_dxf(path)
    assert drawing.insunits == UNITS[units][0] and drawing.units == units
    mm = UNITS[units][1]
    for cell_units, per in (("mm", 1.0), ("in", 25.4)):
        imp = dxf_fixtures(drawing, {"TABLES": "table"}, cell_units=cell_units)
        (f,) = imp.fixtures
        expect = np.array([(1, 1), (3, 1), (3, 2), (1, 2)], dtype=float) * mm / per
        assert np.allclose(f.outline, expect, rtol=1e-12, atol=0)
        assert f.kind == "table" and f.extra[SOURCE_KEY]["layer"] == "TABLES"


def test_unset_units_must_be_named_by_the_caller(tmp_path):
    doc = new_doc(None)
    doc.modelspace().add_circle((0, 0), 2, dxfattribs={"layer": "POSTS"})
    drawing = read_dxf(save(doc, tmp_path))
    assert drawing.units is None
    with pytest.raises(DxfUnitsUnset, match=r"plan.dxf: the drawing does not state its units"):
        dxf_fixtures(drawing, {"POSTS": "column"})
    imp = dxf_fixtures(drawing, {"POSTS": "column"}, drawing_units="in")
    # A disc of radius 2 in = 50.8 mm: pi r^2, covered within the chord tolerance.
    area = poly(imp.fixtures[0]).area
    exact = math.pi * 50.8**2
    assert exact <= area <= exact + 2 * math.pi * 50.8 * TOL_MM


def affine(insert, rotation_deg, sx, sy):
    c, s = math.cos(math.radians(rotation_deg)), math.sin(math.radians(rotation_deg))
    m = np.array([[c, -s, insert[0]], [s, c, insert[1]], [0, 0, 1]]) @ np.diag([sx, sy, 1])
    return m


def test_nested_scaled_rotated_mirrored_block_is_exploded(tmp_path):
    doc = new_doc("mm")
    inner = doc.blocks.new("PLATE")
    rect = [(0, 0), (10, 0), (10, 5), (0, 5)]
    inner.add_lwpolyline(rect, close=True)  # on layer 0: takes the INSERT's layer
    outer = doc.blocks.new("PAIR")
    outer.add_blockref("PLATE", (20, 0), dxfattribs={"xscale": 2, "yscale": 3, "rotation": 90})
    doc.modelspace().add_blockref(
        "PAIR", (100, 50), dxfattribs={"xscale": -0.5, "yscale": 0.5, "layer": "FIXTURES"}
    )
    drawing = read_dxf(save(doc, tmp_path))
    imp = dxf_fixtures(drawing, {"FIXTURES": "fixture"})
    (f,) = imp.fixtures
    m = affine((100, 50), 0, -0.5, 0.5) @ affine((20, 0), 90, 2, 3)
    expect = (m @ np.column_stack([np.array(rect, float), np.ones(4)]).T).T[:, :2]
    got = np.array(f.outline)
    assert len(got) == 4
    for p in expect:
        assert np.min(np.hypot(*(got - p).T)) < 1e-9
    assert poly(f).area == pytest.approx(10 * 5 * 2 * 3 * 0.25, rel=1e-12)
    assert f.name == "PLATE (FIXTURES)"


def test_bulged_polyline_area_against_the_analytic_value(tmp_path):
    # A slot: 300 x 80 rectangle with half-disc ends (bulge 1 = half a turn), and a box
    # with a half-disc notch cut into its top (bulge -1 bends the other way).
    length, r = 300.0, 40.0
    doc = new_doc("mm")
    msp = doc.modelspace()
    msp.add_lwpolyline(
        [(0, 0, 0), (length, 0, 1), (length, 2 * r, 0), (0, 2 * r, 1)],
        format="xyb",
        close=True,
        dxfattribs={"layer": "SLOTS"},
    )
    w, h, n = 200.0, 100.0, 30.0
    msp.add_lwpolyline(
        [
            (1000, 0, 0),
            (1000 + w, 0, 0),
            (1000 + w, h, 0),
            (1000 + w / 2 + n, h, -1),
            (1000 + w / 2 - n, h, 0),
            (1000, h, 0),
        ],
        format="xyb",
        close=True,
        dxfattribs={"layer": "SLOTS"},
    )
    imp = dxf_fixtures(read_dxf(save(doc, tmp_path)), {"SLOTS": "fixture"})
    slot, notched = sorted(imp.fixtures, key=lambda f: f.outline[0][0])
    exact = length * 2 * r + math.pi * r**2
    assert exact <= poly(slot).area <= exact + 2 * math.pi * r * TOL_MM
    # Every vertex on a half-disc end lies on or just outside its circle.
    pts = np.array(slot.outline)
    ends = pts[(pts[:, 0] > length) | (pts[:, 0] < 0)]
    d = np.minimum(
        np.hypot(ends[:, 0] - length, ends[:, 1] - r), np.hypot(ends[:, 0], ends[:, 1] - r)
    )
    assert len(ends) > 10 and d.min() >= r - 1e-9 and d.max() <= r + TOL_MM
    exact = w * h - math.pi * n**2 / 2
    assert exact <= poly(notched).area <= exact + math.pi * n * TOL_MM


def test_open_polyline_and_spline_are_reported_not_imported(tmp_path):
    doc = new_doc("mm")
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (100, 0), (100, 50)], dxfattribs={"layer": "GUARDS"})
    msp.add_spline([(0, 0), (50, 80), (100, 0)], dxfattribs={"layer": "GUARDS"})
    msp.add_lwpolyline([(0, 0), (9, 0), (9, 9)], close=True, dxfattribs={"layer": "GUARDS"})
    msp.add_text("rev B", dxfattribs={"layer": "NOTES"})
    path = save(doc, tmp_path)
    imp = dxf_fixtures(read_dxf(path), {"GUARDS": "guard"})
    assert len(imp.fixtures) == 1
    kinds = sorted((n.dxftype, n.layer) for n in imp.notes)
    assert kinds == [("LWPOLYLINE", "GUARDS"), ("SPLINE", "GUARDS")]
    text = "\n".join(imp.summary_lines())
    assert "skipped 1 LWPOLYLINE on layer GUARDS: open (not closed)" in text
    assert "skipped 1 SPLINE on layer GUARDS" in text
    assert "not asked for: 1 entity on layer NOTES" in text
    handles = {e.dxf.handle: e.dxftype() for e in ezdxf.readfile(path).modelspace()}
    for n in imp.notes:
        assert handles[n.handle] == n.dxftype
        assert n.text("plan.dxf").startswith(f"plan.dxf: entity {n.handle} ({n.dxftype} on layer")


def test_closed_chain_of_lines_and_arc_is_an_outline_an_open_one_is_not(tmp_path):
    doc = new_doc("mm")
    msp = doc.modelspace()
    a = {"layer": "NEST"}
    # A "D": three sides and a half circle of radius 50 about (0, 50), drawn out of order.
    msp.add_line((100, 100), (0, 100), dxfattribs=a)
    msp.add_line((0, 0), (100, 0), dxfattribs=a)
    msp.add_arc((100, 50), 50, -90, 90, dxfattribs=a)
    msp.add_line((0, 100), (0, 0), dxfattribs=a)
    # An open chain on the same layer.
    msp.add_line((500, 0), (600, 0), dxfattribs=a)
    msp.add_line((600, 0), (600, 80), dxfattribs=a)
    imp = dxf_fixtures(read_dxf(save(doc, tmp_path)), {"NEST": "fixture"})
    (f,) = imp.fixtures
    exact = 100 * 100 + math.pi * 50**2 / 2
    assert exact <= poly(f).area <= exact + math.pi * 50 * TOL_MM
    assert len(imp.notes) == 2
    assert all("open chain" in n.reason and "(500, 0)" in n.reason for n in imp.notes)


def test_hatch_boundaries_circle_ellipse_and_solid(tmp_path):
    doc = new_doc("mm")
    msp = doc.modelspace()
    hatch = msp.add_hatch(dxfattribs={"layer": "ZONES"})
    hatch.paths.add_polyline_path([(0, 0), (400, 0), (400, 300), (0, 300)], is_closed=True)
    hatch.paths.add_polyline_path([(100, 100), (200, 100), (200, 200), (100, 200)], is_closed=True)
    edges = msp.add_hatch(dxfattribs={"layer": "ZONES"}).paths.add_edge_path()
    edges.add_line((1000, 0), (1100, 0))
    edges.add_arc((1100, 50), 50, -90, 90)
    edges.add_line((1100, 100), (1000, 100))
    edges.add_line((1000, 100), (1000, 0))
    msp.add_ellipse((0, 1000), major_axis=(60, 0), ratio=0.5, dxfattribs={"layer": "ZONES"})
    msp.add_solid([(2000, 0), (2100, 0), (2000, 50), (2100, 50)], dxfattribs={"layer": "ZONES"})
    imp = dxf_fixtures(read_dxf(save(doc, tmp_path)), {"ZONES": "keep-out"})
    areas = sorted(poly(f).area for f in imp.fixtures)
    ellipse = math.pi * 60 * 30
    d_shape = 100 * 100 + math.pi * 50**2 / 2
    assert areas[0] == pytest.approx(100 * 50, rel=1e-12)  # SOLID, vertices in Z order
    assert ellipse <= areas[1] <= ellipse + 2 * math.pi * 60 * TOL_MM
    assert d_shape <= areas[2] <= d_shape + math.pi * 50 * TOL_MM
    assert areas[3] == pytest.approx(400 * 300, rel=1e-12)  # the outer boundary, whole
    (hole,) = imp.notes
    assert hole.dxftype == "HATCH" and "hole" in hole.reason


def test_truncated_file_names_the_line_and_recovery_is_a_choice(tmp_path):
    doc = new_doc("mm")
    for k in range(30):
        doc.modelspace().add_circle((k * 10, 0), 3, dxfattribs={"layer": "POSTS"})
    text = save(doc, tmp_path).read_text()
    cut = text[: text.index("ENTITIES") + 2000]
    cut = "\n".join(cut.splitlines()[: (len(cut.splitlines()) // 2) * 2]) + "\n"  # whole pairs
    bad = tmp_path / "cut.dxf"
    bad.write_text(cut)
    lines = len(cut.splitlines())
    with pytest.raises(DxfReadError) as err:
        read_dxf(bad)
    msg = str(err.value)
    assert msg.startswith(f"cut.dxf: line {lines}: the file ends inside the ENTITIES section")
    # A cut between a group code and its value says so, at the last line, too.
    odd = tmp_path / "odd.dxf"
    odd.write_text("\n".join(cut.splitlines()[: (lines // 2) * 2 - 1]) + "\n")
    with pytest.raises(
        DxfReadError,
        match=rf"odd.dxf: line {(lines // 2) * 2 - 1}: the file "
        "ends inside the ENTITIES section after a group code",
    ):
        read_dxf(odd)
    assert "\n" not in msg
    rec = read_dxf(bad, recover=True)  # only when asked; says what it found
    found = sum(rec.entity_counts.values())
    assert rec.recovered and rec.counts_text().startswith(f"{found} entities")
    assert found < 30  # the cut-off part is gone: the counts tell the user so


def test_not_a_dxf_and_missing_files(tmp_path):
    junk = tmp_path / "notes.dxf"
    junk.write_text("hello\nworld\n")
    with pytest.raises(DxfReadError, match=r"^notes.dxf: is not a DXF file \(line 1: "):
        read_dxf(junk)
    with pytest.raises(DxfReadError, match=r"gone.dxf: could not be opened \(no such file"):
        read_dxf(tmp_path / "gone.dxf")
    empty = tmp_path / "empty.dxf"
    empty.write_text("")
    with pytest.raises(DxfReadError, match="the file is empty"):
        read_dxf(empty)


def test_bad_arguments_name_the_layer(tmp_path):
    doc = new_doc("mm")
    doc.modelspace().add_circle((0, 0), 2, dxfattribs={"layer": "POSTS"})
    drawing = read_dxf(save(doc, tmp_path))
    with pytest.raises(
        DxfReadError, match=r"layer 'WALLS' is not in the drawing \(its layers: POSTS"
    ):
        dxf_fixtures(drawing, {"WALLS": "guard"})
    with pytest.raises(DxfReadError, match=r"layer POSTS: height must be a number of 0 or more"):
        dxf_fixtures(drawing, {"POSTS": "column"}, layer_heights={"POSTS": -4})
    with pytest.raises(DxfReadError, match="drawing units must be one of mm, cm, m, in, ft"):
        dxf_fixtures(drawing, {"POSTS": "column"}, drawing_units="furlong")


def test_heights_from_layer_or_thickness(tmp_path):
    doc = new_doc("m")
    msp = doc.modelspace()
    msp.add_lwpolyline(
        [(0, 0), (1, 0), (1, 1)], close=True, dxfattribs={"layer": "A", "thickness": 0.75}
    )
    msp.add_lwpolyline([(5, 0), (6, 0), (6, 1)], close=True, dxfattribs={"layer": "B"})
    drawing = read_dxf(save(doc, tmp_path))
    imp = dxf_fixtures(drawing, {"A": "table", "B": "table"}, layer_heights={"B": 900})
    by_layer = {f.extra[SOURCE_KEY]["layer"]: f for f in imp.fixtures}
    assert by_layer["A"].height == pytest.approx(750.0)  # thickness 0.75 m
    assert by_layer["B"].height == 900


def test_merge_by_id_keeps_names_and_drops_only_when_asked(tmp_path):
    doc = new_doc("mm")
    msp = doc.modelspace()
    first = msp.add_lwpolyline([(0, 0), (10, 0), (10, 10)], close=True, dxfattribs={"layer": "T"})
    second = msp.add_lwpolyline([(50, 0), (60, 0), (60, 10)], close=True, dxfattribs={"layer": "T"})
    path = save(doc, tmp_path)
    second_id = f"dxf-{second.dxf.handle}"
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    cell = Cell("c", arms=(arm,))
    m1 = merge_fixtures(cell, dxf_fixtures(read_dxf(path), {"T": "table"}).fixtures)
    assert len(m1.added) == 2
    renamed = tuple(
        f
        if f.id != f"dxf-{first.dxf.handle}"
        else Fixture(f.id, "Kit table", f.kind, f.outline, f.height, f.extra)
        for f in m1.cell.fixtures
    )
    cell2 = Cell("c", arms=(arm,), fixtures=renamed)
    first.set_points([(0, 0), (20, 0), (20, 10)])
    msp.delete_entity(second)
    doc.saveas(path)
    again = dxf_fixtures(read_dxf(path), {"T": "table"}).fixtures
    kept = merge_fixtures(cell2, again)
    assert kept.changed == (f"dxf-{first.dxf.handle}",) and not kept.removed
    assert kept.cell.fixtures[0].name == "Kit table"
    assert kept.cell.fixtures[0].outline[1] == (20.0, 0.0)
    dropped = merge_fixtures(cell2, again, drop_missing=True)
    assert dropped.removed == (second_id,)
    assert len(dropped.cell.fixtures) == 1


def test_outline_points_cover_convex_arcs_and_follow_concave_ones():
    # Unit circle traversed counter-clockwise: the enclosed disc is convex, vertices outside.
    ccw = outline_points([("A", (0, 0), (1, 0), (0, 1), 0.0, 2 * math.pi)], 1e-4)
    r = np.hypot(*ccw.T)
    assert r.min() >= 1 - 1e-12 and r.max() <= 1 + 1e-4
    area = shapely.Polygon(ccw).area
    assert math.pi <= area <= math.pi + 2 * math.pi * 1e-4

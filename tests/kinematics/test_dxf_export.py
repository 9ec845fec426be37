"""DXF export read back with ezdxf, the reference reader.

Outside references:
- DXF header $INSUNITS codes (ezdxf documentation, "DXF units"): 1 inches, 4 millimetres;
  $MEASUREMENT 0 imperial, 1 metric.
- Reach annulus of a planar two-link arm: |a1 - a2| <= r <= a1 + a2 (standard result).
- Law of cosines r(q2) = sqrt(a1^2 + a2^2 + 2 a1 a2 cos q2) for the base-to-tool distance.
- Forward kinematics: tool = base + a1 u(h + q1) + a2 u(h + q1 + q2), so link lengths are a1
  and a2 and the tool point is the target.
"""

from __future__ import annotations

import math
import os
from collections import Counter
from pathlib import Path

import ezdxf
import numpy as np
import pytest

from kinematics.caution import CAUTION_LINES
from kinematics.cell import Cell
from kinematics.cellfile import load_cell
from kinematics.dxf_export import LAYERS, fixture_layer, write_dxf
from kinematics.dxf_import import dxf_fixtures, read_dxf, suggested_kind
from kinematics.evaluate import evaluate_cell
from kinematics.regions import config_region_arcs

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "sample_cells").glob("*.cell.json"))
INSUNITS = {"mm": 4, "in": 1}  # ezdxf documentation, "DXF units"
MEASUREMENT = {"mm": 1, "in": 0}


@pytest.fixture(scope="module")
def exported(tmp_path_factory):
    out = {}
    folder = tmp_path_factory.mktemp("dxf")
    for path in SAMPLES:
        cell = load_cell(path)
        target = folder / (path.name + ".dxf")
        write_dxf(cell, target)
        out[path.name] = (cell, ezdxf.readfile(target), target)
    return out


@pytest.mark.parametrize("name", [p.name for p in SAMPLES])
def test_header_layers_and_entity_counts(exported, name):
    cell, doc, _ = exported[name]
    assert doc.header["$INSUNITS"] == INSUNITS[cell.units]
    assert doc.header["$MEASUREMENT"] == MEASUREMENT[cell.units]
    names = {layer.dxf.name for layer in doc.layers}
    for style in LAYERS:
        assert style.name in names
        layer = doc.layers.get(style.name)
        assert layer.color == style.colour and layer.dxf.linetype == style.linetype
    msp = doc.modelspace()
    counts = Counter((e.dxftype(), e.dxf.layer) for e in msp)
    kinds = Counter(f.kind for f in cell.fixtures)
    for kind, n in kinds.items():
        assert counts[("LWPOLYLINE", fixture_layer(kind))] == n
    ev = evaluate_cell(cell)
    feasible = sum(int(a.feasible.sum()) for a in ev.arms.values())
    failing = len(cell.targets) - feasible
    assert counts[("POINT", "ER-TARGET")] == counts[("TEXT", "ER-TARGET")] == feasible
    assert counts[("POINT", "ER-TARGET-FAILING")] == failing
    assert counts[("LWPOLYLINE", "ER-LINK")] == feasible
    texts = [e.dxf.text for e in msp.query("TEXT[layer=='ER-CAUTION']")]
    for line in CAUTION_LINES:
        assert line in texts
    failing_texts = [e.dxf.text for e in msp.query("TEXT[layer=='ER-TARGET-FAILING']")]
    assert all(" FAILS: " in t for t in failing_texts)


@pytest.mark.parametrize("name", [p.name for p in SAMPLES])
def test_every_fixture_vertex_and_the_reach_circles(exported, name):
    cell, doc, _ = exported[name]
    msp = doc.modelspace()
    by_layer: dict[str, list[np.ndarray]] = {}
    for e in msp.query("LWPOLYLINE"):
        if e.dxf.layer.startswith("ER-FIXTURE-"):
            assert e.closed
            by_layer.setdefault(e.dxf.layer, []).append(np.array(e.get_points("xy")))
    for f in cell.fixtures:
        want = np.array(f.outline)
        got = by_layer[fixture_layer(f.kind)]
        assert any(g.shape == want.shape and np.abs(g - want).max() <= 1e-9 for g in got), f.id
    circles = [(e.dxf.center, e.dxf.radius) for e in msp.query("CIRCLE[layer=='ER-REACH']")]
    for arm in cell.arms:
        for r in (arm.a1 + arm.a2, abs(arm.a1 - arm.a2)):
            assert any(
                math.hypot(c[0] - arm.x, c[1] - arm.y) <= 1e-9 and abs(rad - r) <= 1e-9
                for c, rad in circles
            )


@pytest.mark.parametrize("name", [p.name for p in SAMPLES])
def test_links_end_at_their_targets_with_the_link_lengths(exported, name):
    cell, doc, _ = exported[name]
    arms = {a.id: a for a in cell.arms}
    targets = np.array([(t.x, t.y) for t in cell.targets])
    for e in doc.modelspace().query("LWPOLYLINE[layer=='ER-LINK']"):
        base, elbow, tool = np.array(e.get_points("xy"))
        arm = next(a for a in arms.values() if np.hypot(*(base - (a.x, a.y))) < 1e-9)
        assert np.hypot(*(elbow - base)) == pytest.approx(arm.a1, abs=1e-9)
        assert np.hypot(*(tool - elbow)) == pytest.approx(arm.a2, abs=1e-9)
        assert np.hypot(*(targets - tool).T).min() < 1e-6


def test_region_arcs_are_true_arcs_of_the_closed_form_radii(exported):
    cell, doc, _ = exported["tray_loading.cell.json"]
    (arm,) = cell.arms
    arcs = list(doc.modelspace().query("ARC[layer=='ER-REGION-POSITIVE']"))
    radii = sorted(round(a.dxf.radius, 9) for a in arcs)
    lo, hi = arm.q2_limits

    def r(q2):  # law of cosines
        return math.sqrt(arm.a1**2 + arm.a2**2 + 2 * arm.a1 * arm.a2 * math.cos(math.radians(q2)))

    assert radii == sorted(round(v, 9) for v in (r(0), r(hi), arm.a2, arm.a2))
    # The arcs' end points meet pairwise: one closed boundary.
    ends = [p for a in arcs for p in (a.start_point, a.end_point)]
    for p in ends:
        assert sum(1 for q in ends if (p - q).magnitude < 1e-6) == 2


def test_region_arcs_bound_the_polygon_region():
    # Every arc point is the tool point of a pose on the edge of the joint-limit box.
    a1, a2, q1, q2 = 400.0, 250.0, (-100.0, 130.0), (-140.0, 120.0)
    for elbow in ("positive", "negative"):
        arcs = config_region_arcs(a1, a2, q1, q2, elbow, 30.0, -20.0, 15.0)
        assert len(arcs.radii) == 4
        sign = 1 if elbow == "positive" else -1
        umax = q2[1] if sign > 0 else -q2[0]
        for (cx, cy), rad, start, span in zip(
            arcs.centres, arcs.radii, arcs.start_deg, arcs.span_deg
        ):
            t = np.radians(start + span * np.linspace(0, 1, 7))
            pts = np.column_stack((cx + rad * np.cos(t), cy + rad * np.sin(t)))
            d = np.hypot(pts[:, 0] - 30.0, pts[:, 1] + 20.0)
            # Forward kinematics on the box edges: q2 in {0, umax} or q1 at a limit.
            c2 = (d**2 - a1**2 - a2**2) / (2 * a1 * a2)
            assert np.all(c2 <= 1 + 1e-9) and np.all(c2 >= math.cos(math.radians(umax)) - 1e-9)


def test_inch_cell_writes_inch_units(tmp_path):
    cell = load_cell(ROOT / "sample_cells" / "screw_station.cell.json")
    assert cell.units == "in"
    write_dxf(cell, tmp_path / "s.dxf")
    doc = ezdxf.readfile(tmp_path / "s.dxf")
    assert (doc.header["$INSUNITS"], doc.header["$MEASUREMENT"]) == (1, 0)


def test_our_dxf_reads_back_through_our_importer(exported):
    cell, _, path = exported["tray_loading.cell.json"]
    drawing = read_dxf(path)
    layers = {fixture_layer(f.kind): f.kind for f in cell.fixtures}
    assert all(suggested_kind(layer) == kind for layer, kind in layers.items())
    imp = dxf_fixtures(drawing, layers, cell_units=cell.units)
    got = sorted((f.kind, f.outline) for f in imp.fixtures)
    want = sorted((f.kind, f.outline) for f in cell.fixtures)
    assert len(got) == len(want)
    for (k1, o1), (k2, o2) in zip(got, want):
        assert k1 == k2 and np.abs(np.array(o1) - np.array(o2)).max() <= 1e-9
    heights = sorted(f.height for f in imp.fixtures if f.height is not None)
    assert heights == sorted(f.height for f in cell.fixtures if f.height is not None)


def test_a_failed_write_keeps_the_old_file(tmp_path, monkeypatch):
    cell = Cell("empty")
    target = tmp_path / "cell.dxf"
    target.write_bytes(b"old")

    def broken(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", broken)
    with pytest.raises(OSError):
        write_dxf(cell, target)
    assert target.read_bytes() == b"old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cell.dxf"]

"""Changing a cell's units: every length converted (or only relabelled), verdicts unchanged."""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from kinematics.cell import Arm, Cell, Fixture, Target
from kinematics.cellfile import dumps_cell, load_cell, parse_cell
from kinematics.report import check_report
from kinematics.units import convert_units, relabel_units, unconverted_keys, unit_factor

REPO = Path(__file__).resolve().parents[2]
SAMPLES = sorted((REPO / "sample_cells").glob("*.cell.json"))

# 1 in = 25.4 mm exactly: the international inch (NIST SP 811, 2008, appendix B.8).
INCH_MM = 25.4


def test_the_inch_is_exactly_25_4_mm():
    assert unit_factor("in", "mm") == INCH_MM
    assert unit_factor("mm", "in") == pytest.approx(1 / INCH_MM, rel=1e-15)
    with pytest.raises(ValueError, match='"mm" or "in"'):
        unit_factor("mm", "ft")


def _flat_lengths(cell: Cell) -> list[float]:
    out = []
    for a in cell.arms:
        out += [a.x, a.y, a.a1, a.a2, *(a.link_radii or ()), a.link_underside_height or 0.0]
        tool = a.extra.get("tool_body") or {}
        out += [float(tool.get("radius", 0.0))]
        out += [c for p in a.extra.get("base_footprint") or [] for c in p]
    for f in cell.fixtures:
        out += [c for p in f.outline for c in p] + [f.height or 0.0]
    for t in cell.targets:
        out += [t.x, t.y, float(t.extra.get("work_height", 0.0))]
    out.append(float(cell.extra.get("clearance_margin", 0.0)))
    return out


@pytest.mark.parametrize("path", SAMPLES, ids=[p.name for p in SAMPLES])
def test_converting_keeps_the_real_size_and_every_verdict(path):
    cell = load_cell(path)
    other = "in" if cell.units == "mm" else "mm"
    conv = convert_units(cell, other)
    assert conv.units == other
    # Every length scales by the exact factor; angles, speeds and times stay.
    f = unit_factor(cell.units, other)
    for a, b in zip(_flat_lengths(cell), _flat_lengths(conv), strict=True):
        assert b == pytest.approx(a * f, rel=1e-11, abs=1e-9)
    for a, b in zip(cell.arms, conv.arms):
        assert (a.q1_limits, a.q2_limits, a.heading_deg) == (
            b.q1_limits,
            b.q2_limits,
            b.heading_deg,
        )
        assert a.joint_speed_dps == b.joint_speed_dps
    # Reach, limits and collisions are the same geometry in other units: same verdicts.
    before, after = check_report(cell), check_report(conv)
    assert [(t["id"], t["feasible"], t["chosen_elbow"]) for t in before["targets"]] == [
        (t["id"], t["feasible"], t["chosen_elbow"]) for t in after["targets"]
    ]
    for t0, t1 in zip(before["targets"], after["targets"]):
        if t0["reach_margin"] is not None:
            assert t1["reach_margin"] == pytest.approx(t0["reach_margin"] * f, rel=1e-6, abs=1e-6)
    # It is a cell the file format stores, and back again gives the starting numbers.
    parse_cell(dumps_cell(conv))
    back = convert_units(conv, cell.units)
    for a, b in zip(_flat_lengths(cell), _flat_lengths(back), strict=True):
        assert b == pytest.approx(a, rel=1e-11, abs=1e-9)


def test_relabelling_keeps_the_numbers_and_names_unknown_keys():
    arm = Arm("a", "A", 10.0, 0.0, 0.0, 325.0, 275.0, (-90, 90), (-120, 120))
    cell = Cell(
        "c",
        "mm",
        (arm,),
        (Fixture("f", "F", "table", ((0, 0), (1, 0), (1, 1)), extra={"paint": "blue"}),),
        (Target("t", "T", 1.0, 2.0, "a", extra={"work_height": 700.0, "label_offset": 5}),),
        extra={"site_offset": 30},
    )
    rel = relabel_units(cell, "in")
    assert rel.units == "in" and rel.arms == cell.arms and rel.targets == cell.targets
    assert unconverted_keys(cell) == ["site_offset", "fixtures[0].paint", "targets[0].label_offset"]
    conv = convert_units(cell, "in")
    assert conv.extra == {"site_offset": 30} and conv.targets[0].extra["label_offset"] == 5
    assert conv.targets[0].extra["work_height"] == pytest.approx(700.0 / INCH_MM)
    assert math.isclose(conv.arms[0].a1, 325.0 / INCH_MM)

"""Layout keys (mounting zone, score weights, variants): messages, round trips, operations."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from kinematics.cellfile import CellFileError, dumps_cell, load_cell, parse_cell
from kinematics.layout_keys import score_weights, variants
from kinematics.variants import (
    CURRENT,
    add_variant,
    apply_variant,
    comparison_report,
    delete_variant,
    format_comparison,
    rename_variant,
)

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "sample_cells" / "press_tending_variants.cell.json"


def doc(**top):
    d = {
        "format": "elbowroom-cell",
        "version": 1,
        "name": "v",
        "units": "mm",
        "arms": [
            {
                "id": "a",
                "name": "A",
                "base": {"x": 0, "y": 0, "heading_deg": 90},
                "links": [400, 250],
                "joint_limits_deg": [[-150, 150], [-145, 145]],
                "elbow": "any",
            }
        ],
        "fixtures": [],
        "targets": [{"id": "t", "name": "T", "x": 300, "y": 0, "arm": "a"}],
    }
    d.update(top)
    return d


def problem_of(d) -> str:
    with pytest.raises(CellFileError) as err:
        parse_cell(json.dumps(d), "v.cell.json")
    assert len(err.value.problems) == 1
    return err.value.problems[0]


@pytest.mark.parametrize(
    "key, value, expected",
    [
        (
            "placement_weights",
            {"clearance": -1},
            "v.cell.json: placement_weights.clearance: must not be negative, got -1",
        ),
        (
            "placement_weights",
            {"speed": 1},
            "v.cell.json: placement_weights.speed: is not a weight",
        ),
        ("placement_weights", [1, 2], "v.cell.json: placement_weights: must be an object"),
        ("variants", {"name": "x"}, "v.cell.json: variants: must be a list"),
        (
            "variants",
            [{"name": "", "arms": {}}],
            "v.cell.json: variants[0].name: must be a non-empty string",
        ),
        (
            "variants",
            [{"name": "x", "arms": {"b": {"base": {"x": 0, "y": 0, "heading_deg": 0}}}}],
            "v.cell.json: variants[0].arms.b: names no arm in this cell",
        ),
        (
            "variants",
            [{"name": "x", "arms": {"a": {"base": {"x": 0, "y": 0}}}}],
            "v.cell.json: variants[0].arms.a.base.heading_deg: is required but missing",
        ),
        (
            "variants",
            [
                {
                    "name": "x",
                    "arms": {"a": {"base": {"x": 0, "y": 0, "heading_deg": 0}, "links": [400, -1]}},
                }
            ],
            "v.cell.json: variants[0].arms.a.links[1]: must be greater than 0, got -1",
        ),
        (
            "variants",
            [
                {
                    "name": "x",
                    "arms": {
                        "a": {
                            "base": {"x": 0, "y": 0, "heading_deg": 0},
                            "joint_limits_deg": [[10, -10], [0, 1]],
                        }
                    },
                }
            ],
            "v.cell.json: variants[0].arms.a.joint_limits_deg[0]: must have min < max",
        ),
        (
            "variants",
            [{"name": "x", "arms": {}}, {"name": "x", "arms": {}}],
            "v.cell.json: variants[1].name: duplicate name, also used by variants[0]",
        ),
        (
            "variants",
            [
                {
                    "name": "x",
                    "arms": {"a": {"base": {"x": 0, "y": 0, "heading_deg": 0}, "speed": 3}},
                }
            ],
            "v.cell.json: variants[0].arms.a: unknown key 'speed'",
        ),
    ],
)
def test_bad_keys_give_one_line_naming_path_and_value(key, value, expected):
    assert problem_of(doc(**{key: value})).startswith(expected)


def test_bad_mounting_zone_names_the_arm():
    d = doc()
    d["arms"][0]["mounting_zone"] = [[0, 0], [10, 10], [10, 0], [0, 10]]
    assert problem_of(d) == (
        "v.cell.json: arms[0].mounting_zone: must be a simple polygon with an area, "
        "got [[0, 0], [10, 10], [10, 0], [0, 10]]"
    )


def test_keys_round_trip_byte_for_byte():
    text = DEMO.read_text(encoding="utf-8")
    cell = parse_cell(text)
    assert dumps_cell(cell) == text
    assert [v.name for v in variants(cell)] == ["Base toward the press", "Longer arm, base as now"]
    w = parse_cell(json.dumps(doc(placement_weights={"limit_margin": 2, "clearance": 0})))
    assert score_weights(w).limit_margin == 2.0 and score_weights(w).reach_margin == 1.0
    assert parse_cell(dumps_cell(w)).extra == w.extra


def test_create_apply_rename_delete_are_pure_and_save():
    cell = load_cell(DEMO)
    made = add_variant(cell, "Kept as is")
    assert [v.name for v in variants(made)][-1] == "Kept as is"
    assert "Kept as is" not in [v.name for v in variants(cell)]  # the input is unchanged
    with pytest.raises(ValueError):
        add_variant(made, "Kept as is")
    longer = apply_variant(made, "Longer arm, base as now")
    assert (longer.arms[0].a1, longer.arms[0].a2) == (420.0, 300.0)
    assert longer.arms[0].joint_speed_dps == (300.0, 420.0)
    back = apply_variant(longer, "Kept as is")
    assert (back.arms[0].a1, back.arms[0].x) == (350.0, 0.0)
    renamed = rename_variant(made, "Kept as is", "Original")
    assert [v.name for v in variants(renamed)][-1] == "Original"
    gone = delete_variant(
        delete_variant(delete_variant(renamed, "Original"), "Base toward the press"),
        "Longer arm, base as now",
    )
    assert "variants" not in gone.extra
    with pytest.raises(KeyError):
        apply_variant(gone, "Original")
    parse_cell(dumps_cell(renamed))  # a made variant saves and loads


def test_comparison_marks_the_better_layouts():
    rep = comparison_report(load_cell(DEMO))
    assert rep["layouts"] == [CURRENT, "Base toward the press", "Longer arm, base as now"]
    rows = {r["layout"]: r for r in rep["rows"]}
    # At the current base the gauge is out of reach; both variants reach all five targets.
    assert rows[CURRENT]["feasible_targets"] == 4
    assert rows["Base toward the press"]["feasible_targets"] == 5
    assert rows["Longer arm, base as now"]["feasible_targets"] == 5
    assert rows[CURRENT]["placement_tolerance"] is None
    better = rep["better"]["tender"]
    assert set(better["feasible_targets"]) == {"Base toward the press", "Longer arm, base as now"}
    assert CURRENT not in better["worst_limit_margin_deg"]  # compared among the 5-of-5 only
    # A larger arm reaches from more places: its region is larger.
    assert better["region_area"] == ["Longer arm, base as now"]
    text = format_comparison(rep)
    assert "* marks the better value" in text and "CAUTION" in text


def test_comparison_cycle_times_are_the_check_reports():
    # Each layout's cycle time is the one `check` reports for it (the arm's first sequence
    # with a time; kinematics.report runs the same plan), and the shorter one is marked.
    from kinematics.report import check_report
    from kinematics.variants import compare_variants

    cell = load_cell(DEMO)
    rows = compare_variants(cell)
    for r in rows:
        layout = cell if r.layout == CURRENT else apply_variant(cell, r.layout)
        seqs = [s for s in check_report(layout)["sequences"] if s["arm"] == r.arm]
        want = next(s["cycle_time_s"] for s in seqs if s["cycle_time_s"] is not None)
        assert r.cycle_time_s == pytest.approx(want, abs=1e-6)
    better = comparison_report(cell, rows)["better"]["tender"]["cycle_time_s"]
    most = max(r.feasible_targets for r in rows)
    fastest = min(r.cycle_time_s for r in rows if r.feasible_targets == most)
    assert better == [r.layout for r in rows if r.cycle_time_s == fastest]


def test_score_weights_written_back_read_the_same():
    from kinematics.layout_keys import ScoreWeights, with_score_weights

    cell = load_cell(DEMO)
    w = ScoreWeights(0.5, 0.0, 3.0)
    moved = with_score_weights(cell, w)
    assert score_weights(parse_cell(dumps_cell(moved), "x.cell.json")) == w
    with pytest.raises(ValueError, match=r"placement_weights.clearance: must not be negative"):
        with_score_weights(cell, ScoreWeights(1.0, 1.0, -1.0))

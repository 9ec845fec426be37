"""`elbowroom place` and `elbowroom compare` as a user runs them; check's placement keys."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from app.cli import main
from kinematics.cellfile import load_cell

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "sample_cells" / "press_tending_variants.cell.json"
TRAY = ROOT / "sample_cells" / "tray_loading.cell.json"


def run(capsys, *args: str) -> tuple[int, str, str]:
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def test_place_json_has_exactly_the_documented_keys(capsys):
    code, out, err = run(capsys, "place", str(DEMO), "--json")
    rep = json.loads(out)
    assert set(rep) == {"arm", "heading_deg", "region", "current", "best", "targets", "grid",
                        "caution"}  # fmt: skip
    assert set(rep["region"]) == {"area", "empty", "blocking_targets"}
    assert set(rep["current"]) == {"x", "y", "heading_deg", "feasible_targets", "tolerance",
                                   "heading_tolerance_deg"}  # fmt: skip
    assert set(rep["best"]) == {"x", "y", "heading_deg", "score", "feasible_targets",
                                "tolerance", "heading_tolerance_deg"}  # fmt: skip
    assert set(rep["grid"]) == {"pitch", "nx", "ny"}
    assert rep["targets"] == 5 and rep["current"]["feasible_targets"] == 4
    assert rep["current"]["tolerance"] is None  # the gauge fails at the current base
    assert rep["best"]["feasible_targets"] == 5 and rep["best"]["tolerance"] > 0
    assert len(rep["best"]["heading_tolerance_deg"]) == 2
    assert not rep["region"]["empty"] and rep["region"]["area"] > 0
    assert code == 0 and err == ""


def test_place_apply_writes_a_cell_whose_check_is_all_feasible(tmp_path, capsys):
    out_path = tmp_path / "moved.cell.json"
    code, out, _ = run(capsys, "place", str(DEMO), "--apply", "-o", str(out_path))
    assert code == 0 and "best" in out and "CAUTION" in out
    moved = load_cell(out_path)
    code, out, _ = run(capsys, "check", str(out_path), "--json")
    rep = json.loads(out)
    assert code == 0 and rep["summary"]["infeasible"] == 0
    arm = rep["arms"][0]
    assert arm["placement_tolerance"] > 0 and len(arm["heading_tolerance_deg"]) == 2
    assert (moved.arms[0].x, moved.arms[0].y) != (0.0, 0.0)
    assert moved.extra["variants"] == load_cell(DEMO).extra["variants"]  # kept


def test_place_on_an_empty_region_names_the_blocking_target(capsys):
    code, out, _ = run(capsys, "place", str(TRAY), "--json", "--pitch", "25")
    rep = json.loads(out)
    assert rep["region"]["empty"] and rep["region"]["blocking_targets"] == ["outfeed_far"]
    assert code == 1 and rep["best"]["feasible_targets"] < rep["targets"]


def test_place_png_is_a_picture(tmp_path, capsys):
    from PySide6.QtGui import QImage

    png = tmp_path / "map.png"
    code, _, _ = run(capsys, "place", str(DEMO), "--png", str(png), "--pitch", "10")
    img = QImage(str(png))
    assert code == 0 and not img.isNull() and img.width() > 500


@pytest.mark.parametrize(
    "args, expected",
    [
        (["--pitch", "-3"], "elbowroom place: argument --pitch: must be a positive number"),
        (["--pitch", "abc"], "elbowroom place: argument --pitch: must be a number"),
        (["--pitch", "0.001"], "elbowroom place: --pitch: 0.001 would sample"),
        (["--arm", "nope"], "elbowroom place: --arm: press_tending_variants.cell.json has no arm"),
        (["--apply"], "elbowroom place: --apply needs -o"),
        (["-o", "x.cell.json"], "elbowroom place: -o x.cell.json is only used with --apply"),
    ],
)
def test_place_bad_arguments_give_one_line_and_exit_2(capsys, args, expected):
    code, out, err = run(capsys, "place", str(DEMO), *args)
    assert code == 2 and out == ""
    assert err.startswith(expected) and err.count("\n") == 1


def test_place_unwritable_outputs_exit_2_and_leave_nothing(tmp_path, capsys):
    missing = tmp_path / "no" / "such" / "folder"
    code, out, err = run(capsys, "place", str(DEMO), "--png", str(missing / "m.png"))
    assert code == 2 and err.startswith("elbowroom place: --png: could not write")
    code, out, err = run(capsys, "place", str(DEMO), "--apply", "-o", str(missing / "c.cell.json"))
    assert code == 2 and err.startswith("elbowroom place: -o: ")
    assert not missing.exists()


def test_place_bad_file_is_one_line(tmp_path, capsys):
    bad = tmp_path / "bad.cell.json"
    bad.write_text("{", encoding="utf-8")
    code, out, err = run(capsys, "place", str(bad))
    assert code == 2 and err.startswith(f"{bad}: line 1") and out == ""


def test_compare_prints_every_layout(capsys):
    code, out, _ = run(capsys, "compare", str(DEMO), "--json")
    rep = json.loads(out)
    assert rep["layouts"][1:] == ["Base toward the press", "Longer arm, base as now"]
    assert code == 0
    code, text, _ = run(capsys, "compare", str(DEMO))
    assert "Longer arm, base as now" in text and "placement tolerance" in text and code == 0


def test_check_json_reports_placement_keys_for_every_arm(capsys):
    code, out, _ = run(capsys, "check", str(TRAY), "--json")
    for arm in json.loads(out)["arms"]:
        assert "placement_tolerance" in arm and "heading_tolerance_deg" in arm

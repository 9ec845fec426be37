"""Cell-file keys for cycle times: joint_jerk_dps3, dwell_s, start_s."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from kinematics.cellfile import CellFileError, dumps_cell, parse_cell
from kinematics.motion import dwell_time, joint_jerk, start_time

ROOT = Path(__file__).resolve().parents[2]
BASE = json.loads((ROOT / "sample_cells" / "shared_zone_two_arm.cell.json").read_text())


def _doc(**edits):
    d = json.loads(json.dumps(BASE))
    for path, value in edits.items():
        obj = d
        keys = path.split("/")
        for k in keys[:-1]:
            obj = obj[int(k)] if k.isdigit() else obj[k]
        obj[keys[-1]] = value
    return json.dumps(d)


@pytest.mark.parametrize(
    "edit, line",
    [
        (
            {"arms/0/joint_jerk_dps3": [1, -2]},
            "arms[0].joint_jerk_dps3[1]: must be a positive number, got -2",
        ),
        (
            {"arms/1/joint_jerk_dps3": [5]},
            "arms[1].joint_jerk_dps3: must be a list of 2 positive numbers, got [5]",
        ),
        (
            {"targets/0/dwell_s": -0.5},
            "targets[0].dwell_s: must be a number of 0 or more, got -0.5",
        ),
        (
            {"targets/1/dwell_s": True},
            "targets[1].dwell_s: must be a number of 0 or more, got true",
        ),
        (
            {"sequences/0/start_s": "soon"},
            'sequences[0].start_s: must be a number of 0 or more, got "soon"',
        ),
    ],
)
def test_bad_motion_keys_give_one_line_naming_path_and_value(edit, line):
    with pytest.raises(CellFileError) as err:
        parse_cell(_doc(**edit), "cell.json")
    assert err.value.problems == [f"cell.json: {line}"]


def test_all_bad_motion_keys_are_reported_together():
    text = _doc(**{"arms/0/joint_jerk_dps3": [0, 1], "targets/2/dwell_s": -1})
    with pytest.raises(CellFileError) as err:
        parse_cell(text, "cell.json")
    assert len(err.value.problems) == 2


def test_motion_keys_round_trip_and_null_means_not_given():
    text = _doc(**{"arms/0/joint_jerk_dps3": [20000, 30000.5], "sequences/0/start_s": 1.25})
    cell = parse_cell(text)
    again = parse_cell(dumps_cell(cell))
    assert again == cell
    assert joint_jerk(cell.arms[0]) == (20000.0, 30000.5)
    assert start_time(cell.sequences[0]) == 1.25
    assert dwell_time(cell.targets[0]) == 0.3  # from the sample cell
    cell = parse_cell(_doc(**{"targets/0/dwell_s": None, "arms/0/joint_jerk_dps3": None}))
    assert dwell_time(cell.targets[0]) == 0.0 and joint_jerk(cell.arms[0]) is None

"""One rule in the loader, `check` and the window: link underside height 0 or more, and a
cell has at least one arm; the closest pose of a failing target shows its collision; names
go inside their outlines."""

from __future__ import annotations

import json

import numpy as np
import pytest
import shapely

from kinematics.cell import Arm, Cell, Fixture, Target
from kinematics.cellfile import CellFileError, dumps_cell, load_cell, parse_cell
from kinematics.contacts import collisions
from kinematics.evaluate import evaluate_arm
from kinematics.ik import Status
from kinematics.label_points import label_points


def _doc(**arm_changes) -> dict:
    arm = {
        "id": "a",
        "name": "Loader",
        "base": {"x": 0, "y": 0, "heading_deg": 0},
        "links": [400, 250],
        "joint_limits_deg": [[0, 180], [-120, 120]],
        "elbow": "any",
        **arm_changes,
    }
    return {
        "format": "elbowroom-cell",
        "version": 1,
        "name": "Rules",
        "units": "mm",
        "arms": [arm],
        "fixtures": [],
        "targets": [],
    }


def test_a_negative_link_underside_height_is_refused_with_its_path_and_value():
    with pytest.raises(CellFileError) as err:
        parse_cell(json.dumps(_doc(link_underside_height=-5)), "tray.cell.json")
    assert str(err.value) == (
        "tray.cell.json: arms[0].link_underside_height: must be a number of 0 or more, got -5"
    )
    # 0 is a floor-level underside: accepted.
    assert parse_cell(json.dumps(_doc(link_underside_height=0))).arms[0].link_underside_height == 0


def test_a_cell_without_arms_loads_and_check_says_there_is_nothing_to_check(tmp_path):
    # One rule everywhere: a cell may have no arms (fixtures may be laid out first).
    from app.cli import main

    data = _doc()
    data["arms"] = []
    path = tmp_path / "empty.cell.json"
    path.write_text(json.dumps(data), encoding="utf-8")
    assert load_cell(path).arms == ()
    assert parse_cell(dumps_cell(Cell("no arms"))).arms == ()
    return_code = main(["check", str(path)])
    assert return_code == 0


def test_check_table_of_a_cell_without_arms_says_so(tmp_path, capsys):
    from app.cli import main
    from kinematics.wording import NO_ARMS

    data = _doc()
    data["arms"] = []
    path = tmp_path / "empty.cell.json"
    path.write_text(json.dumps(data), encoding="utf-8")
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert NO_ARMS in out and "0 of 0" not in out.split(NO_ARMS)[0]


def test_messages_name_the_file_as_given(tmp_path):
    with pytest.raises(CellFileError, match=r"^/dev/null: is not a regular file$"):
        load_cell("/dev/null", source="/dev/null")
    with pytest.raises(CellFileError, match=r"^null: is not a regular file$"):
        load_cell("/dev/null")  # without a source: the file's name, as before


def test_the_closest_pose_of_a_limit_failure_shows_where_it_collides():
    # The worked exam arm (Q&A archive, check-values.md): at (-200, 400) the positive
    # configuration is q1 = 82.82, q2 = 96.46. A q2 limit of 90 turns the target down
    # (96.46 > 90); a column on that pose's elbow makes the closest pose collide too.
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-90, 90), link_radii=(20.0, 15.0))
    q1 = np.radians(82.82)
    ex, ey = 400 * np.cos(q1), 400 * np.sin(q1)  # the elbow of the positive pose
    col = Fixture(
        "c",
        "Column",
        "column",
        ((ex - 15, ey - 15), (ex + 15, ey - 15), (ex + 15, ey + 15), (ex - 15, ey + 15)),
    )
    ev = evaluate_arm(arm, [Target("t", "T", -200.0, 400.0, "a")], [col])
    assert int(ev.status[0]) in (Status.Q2_LIMIT, Status.Q1_LIMIT)
    k = ev.closest(0)
    assert bool(ev.collides[0, k])
    cs = collisions(ev)
    assert len(cs) >= 1 and (int(cs.target[0]), int(cs.config[0])) == (0, k)
    assert bool(cs.fails[0])  # the target fails: drawn crossed
    # Only the shown targets: none shown, nothing drawn.
    assert len(collisions(ev, np.zeros(1, dtype=bool))) == 0


def test_label_points_lie_inside_every_outline():
    rng = np.random.default_rng(11)
    outlines = []
    for _ in range(30):
        # An L of random arm thicknesses: its bounding-box centre is often outside it.
        w, h = rng.uniform(50, 500, 2)
        t = rng.uniform(0.1, 0.4) * min(w, h)
        x, y = rng.uniform(-1000, 1000, 2)
        outlines.append(
            [(x, y), (x + w, y), (x + w, y + t), (x + t, y + t), (x + t, y + h), (x, y + h)]
        )
    points = label_points(outlines)
    # Shapely decides inside (the library the cell file's polygon rule uses).
    for outline, p in zip(outlines, points):
        assert shapely.Polygon(outline).contains(shapely.Point(p))

"""Reading, checking and writing ``*.cell.json`` files."""

from __future__ import annotations

import copy
import json
import math
import os
import pickle
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.optimize import minimize
from shapely.geometry import Polygon

from kinematics import cellfile
from kinematics.cell import Arm, Cell, Fixture, Sequence, Target
from kinematics.cellfile import (
    CURRENT_VERSION,
    CellFileError,
    cell_to_dict,
    dumps_cell,
    load_cell,
    parse_cell,
    save_cell,
)

SAMPLES = Path(__file__).resolve().parents[2] / "sample_cells"
SAMPLE_FILES = sorted(SAMPLES.glob("*.cell.json"))
NAME = "tray.cell.json"


def doc() -> dict:
    """A small valid cell document exercising every documented key."""
    return {
        "format": "elbowroom-cell",
        "version": 1,
        "name": "Bench",
        "units": "mm",
        "arms": [
            {
                "id": "a",
                "name": "Arm A",
                "base": {"x": 0, "y": 0, "heading_deg": 90},
                "links": [300, 250],
                "joint_limits_deg": [[-132, 132], [-145, 145]],
                "elbow": "any",
                "link_radii": [40, 35],
                "link_underside_height": 820,
                "joint_speed_dps": [400, 500],
                "joint_accel_dps2": [3000, 4000],
            },
            {
                "id": "b",
                "name": "Arm B",
                "base": {"x": 900, "y": 0, "heading_deg": 180},
                "links": [250, 200],
                "joint_limits_deg": [[-120, 120], [-150, 150]],
                "elbow": "negative",
            },
        ],
        "fixtures": [
            {
                "id": "f1",
                "name": "Conveyor",
                "kind": "conveyor",
                "outline": [[-500, -300], [-350, -300], [-350, 300], [-500, 300]],
                "height": 750,
            },
            {"id": "f2", "name": "Zone", "kind": "keep-out", "outline": [[0, 0], [10, 0], [0, 10]]},
        ],
        "targets": [
            {"id": "t1", "name": "Pick", "x": -420, "y": 100, "arm": "a"},
            {"id": "t2", "name": "Place", "x": 0, "y": 400, "arm": "a"},
            {"id": "t3", "name": "Other", "x": 600, "y": 50, "arm": "b"},
        ],
        "sequences": [{"arm": "a", "targets": ["t1", "t2"]}, {"arm": "b", "targets": ["t3"]}],
        "review": {"project": "P-1", "drawn_by": "AB", "revision": "A"},
    }


def write(tmp_path: Path, content: str | bytes | dict, name: str = NAME) -> Path:
    path = tmp_path / name
    if isinstance(content, dict):
        content = json.dumps(content)
    if isinstance(content, str):
        content = content.encode("utf-8")
    path.write_bytes(content)
    return path


def problems_of(tmp_path: Path, content: str | bytes | dict) -> list[str]:
    path = write(tmp_path, content)
    before = path.read_bytes()
    with pytest.raises(CellFileError) as info:
        load_cell(path)
    assert path.read_bytes() == before  # a failed load never touches the file
    err = info.value
    assert str(err) == err.problems[0]
    for line in err.problems:
        assert "\n" not in line and line.startswith(f"{NAME}: ")
    return err.problems


def only_problem(tmp_path: Path, content: str | bytes | dict) -> str:
    problems = problems_of(tmp_path, content)
    assert len(problems) == 1, problems
    return problems[0]


# --------------------------------------------------------------------------- valid files


def test_valid_document_loads_into_the_data_types(tmp_path: Path) -> None:
    cell = load_cell(write(tmp_path, doc()))
    a = cell.arm("a")
    assert (a.x, a.y, a.heading_deg, a.a1, a.a2) == (0, 0, 90, 300, 250)
    assert a.q1_limits == (-132, 132) and a.q2_limits == (-145, 145)
    assert a.link_radii == (40, 35) and a.link_underside_height == 820
    assert a.joint_speed_dps == (400, 500) and a.joint_accel_dps2 == (3000, 4000)
    assert all(isinstance(v, float) for v in (a.x, a.a1, a.q1_limits[0], a.link_radii[0]))
    b = cell.arm("b")
    assert b.elbow == "negative" and b.link_radii is None and b.joint_speed_dps is None
    assert cell.fixtures[0].outline[2] == (-350.0, 300.0) and cell.fixtures[1].height is None
    assert [t.id for t in cell.targets_of("a")] == ["t1", "t2"]
    assert cell.sequences[0] == Sequence("a", ("t1", "t2"))
    assert cell.review == {"project": "P-1", "drawn_by": "AB", "revision": "A"}
    assert cell.extra == {}


def test_sequences_and_review_are_optional(tmp_path: Path) -> None:
    d = doc()
    del d["sequences"], d["review"]
    cell = load_cell(write(tmp_path, d))
    assert cell.sequences == () and cell.review is None


def test_null_optional_arm_fields_mean_not_given(tmp_path: Path) -> None:
    d = doc()
    d["arms"][0]["link_radii"] = None
    d["fixtures"][0]["height"] = None
    cell = load_cell(write(tmp_path, d))
    assert cell.arms[0].link_radii is None and cell.fixtures[0].height is None


def test_utf8_byte_order_mark_is_accepted(tmp_path: Path) -> None:
    # RFC 8259 section 8.1: a parser MAY ignore a byte order mark.
    path = write(tmp_path, b"\xef\xbb\xbf" + json.dumps(doc()).encode())
    assert load_cell(path).name == "Bench"


def test_non_ascii_text_is_kept_and_written_as_is(tmp_path: Path) -> None:
    d = doc()
    d["name"] = "Zelle Größe – 搬送"
    cell = load_cell(write(tmp_path, d))
    assert cell.name == "Zelle Größe – 搬送"
    assert '"Zelle Größe – 搬送"' in dumps_cell(cell)


# --------------------------------------------------------------------------- syntax and file level


def test_syntax_error_names_line_and_column(tmp_path: Path) -> None:
    text = '{\n  "format": "elbowroom-cell",\n  "version": 1 "name": "x"\n}\n'
    # Position from the standard library's own decoder, an outside reference.
    with pytest.raises(json.JSONDecodeError) as ref:
        json.loads(text)
    line = only_problem(tmp_path, text)
    assert line == (
        f"{NAME}: line {ref.value.lineno}, column {ref.value.colno}: "
        "not valid JSON (Expecting ',' delimiter)"
    )
    assert ref.value.lineno == 3 and ref.value.colno == 16


@pytest.mark.parametrize("content", [b"", b"   \n\t\n"])
def test_empty_file(tmp_path: Path, content: bytes) -> None:
    assert only_problem(tmp_path, content) == f"{NAME}: the file is empty"


@pytest.mark.parametrize("content", ["[1, 2]", '"cell"', "42", "null"])
def test_top_level_must_be_an_object(tmp_path: Path, content: str) -> None:
    line = only_problem(tmp_path, content)
    assert line == f"{NAME}: top level: must be a JSON object {{...}} holding a cell, got {content}"


def test_missing_file(tmp_path: Path) -> None:
    with pytest.raises(CellFileError) as info:
        load_cell(tmp_path / "nope.cell.json")
    assert str(info.value) == "nope.cell.json: could not be opened (no such file or folder)"


def test_folder_instead_of_file(tmp_path: Path) -> None:
    folder = tmp_path / "dir.cell.json"
    folder.mkdir()
    with pytest.raises(CellFileError) as info:
        load_cell(folder)
    assert str(info.value) == "dir.cell.json: is a folder, not a cell file"


def test_unreadable_file_gives_one_line(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    path = write(tmp_path, doc())

    def refuse(*args: object, **kwargs: object) -> None:
        raise PermissionError(13, "Permission denied")

    # Running as root ignores file modes, so the refusal is simulated.
    monkeypatch.setattr(cellfile, "open", refuse, raising=False)
    with pytest.raises(CellFileError) as info:
        load_cell(path)
    assert str(info.value) == f"{NAME}: could not be read (permission denied)"


def test_invalid_utf8_names_position(tmp_path: Path) -> None:
    raw = b'{\n  "name": "caf\xe9"\n}'
    assert only_problem(tmp_path, raw) == (
        f"{NAME}: line 2, column 15: not valid UTF-8 text (byte 0xe9)"
    )


def test_utf16_file_is_named_as_such(tmp_path: Path) -> None:
    raw = json.dumps(doc()).encode("utf-16")
    assert "UTF-16" in only_problem(tmp_path, raw)


def test_file_over_size_cap_gives_size_and_cap(tmp_path: Path) -> None:
    path = tmp_path / NAME
    with open(path, "wb") as f:
        f.truncate(25 * 1024 * 1024)  # sparse: costs no disk space
    with pytest.raises(CellFileError) as info:
        load_cell(path)
    assert str(info.value) == (
        f"{NAME}: the file is 25.0 MB (26214400 bytes), larger than the 20 MB limit for cell files"
    )


def test_text_over_size_cap(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(cellfile, "MAX_FILE_BYTES", 100)
    with pytest.raises(CellFileError) as info:
        parse_cell(" " * 101, "big.cell.json")
    assert "larger than" in str(info.value) and "101 characters" in str(info.value)


def test_deep_nesting_beyond_the_parser(tmp_path: Path) -> None:
    line = only_problem(tmp_path, "[" * 100_000 + "]" * 100_000)
    assert line.startswith(f"{NAME}: JSON is nested too deeply to read")


def test_deep_nesting_in_an_extra_key(tmp_path: Path) -> None:
    d = doc()
    d["deep"] = json.loads("[" * 80 + "]" * 80)
    line = only_problem(tmp_path, d)
    assert line.startswith(f"{NAME}: deep" + "[0]" * 63 + ": is nested too deeply")


# --------------------------------------------------------------------------- header


def test_wrong_format(tmp_path: Path) -> None:
    d = doc()
    d["format"] = "something-else"
    assert only_problem(tmp_path, d) == (
        f'{NAME}: format: must be "elbowroom-cell" (this is not an Elbow Room cell file), '
        'got "something-else"'
    )


def test_missing_format(tmp_path: Path) -> None:
    d = doc()
    del d["format"]
    assert only_problem(tmp_path, d).startswith(f"{NAME}: format: is required but missing")


def test_missing_version(tmp_path: Path) -> None:
    d = doc()
    del d["version"]
    assert only_problem(tmp_path, d) == f"{NAME}: version: is required but missing"


@pytest.mark.parametrize(("value", "shown"), [(1.0, "1.0"), ("1", '"1"'), (True, "true")])
def test_version_must_be_an_integer(tmp_path: Path, value: object, shown: str) -> None:
    d = doc()
    d["version"] = value
    assert only_problem(tmp_path, d) == f"{NAME}: version: must be a whole number, got {shown}"


def test_newer_version_is_refused(tmp_path: Path) -> None:
    d = doc()
    d["version"] = 3
    assert only_problem(tmp_path, d) == (
        f"{NAME}: version: written by a newer Elbow Room (version 3); "
        "this program reads up to version 1"
    )


def test_version_zero(tmp_path: Path) -> None:
    d = doc()
    d["version"] = 0
    assert only_problem(tmp_path, d) == f"{NAME}: version: must be between 1 and 1, got 0"


# --------------------------------------------------------------------------- fields


def test_negative_link_message_matches_the_documented_form(tmp_path: Path) -> None:
    d = doc()
    d["arms"][0]["links"][1] = -5
    assert only_problem(tmp_path, d) == (
        f"{NAME}: arms[0].links[1]: must be a positive number, got -5"
    )


def _set(d: dict, path: tuple, value: object) -> None:
    node = d
    for part in path[:-1]:
        node = node[part]
    node[path[-1]] = value


def _delete(d: dict, path: tuple) -> None:
    node = d
    for part in path[:-1]:
        node = node[part]
    del node[path[-1]]


@pytest.mark.parametrize(
    ("path", "value", "expected"),
    [
        # bool is not a number, although Python's bool is an int subclass.
        (("arms", 0, "links", 0), True, "arms[0].links[0]: must be a positive number, got true"),
        (("arms", 0, "links", 0), 0, "arms[0].links[0]: must be a positive number, got 0"),
        (
            ("arms", 0, "links"),
            [300],
            "arms[0].links: must be a list of 2 positive numbers, got [300]",
        ),
        (("arms", 0, "base", "x"), "12", 'arms[0].base.x: must be a number, got "12"'),
        (("arms", 0, "base"), [0, 0], "arms[0].base: must be a JSON object {...}, got [0, 0]"),
        (("arms", 0, "id"), "", 'arms[0].id: must be a non-empty string, got ""'),
        (("arms", 0, "id"), "  ", 'arms[0].id: must be a non-empty string, got "  "'),
        (("arms", 1, "name"), 7, "arms[1].name: must be a string, got 7"),
        (
            ("arms", 0, "elbow"),
            "up",
            'arms[0].elbow: must be one of "any", "positive" or "negative", got "up"',
        ),
        (("units",), "cm", 'units: must be one of "mm" or "in", got "cm"'),
        (
            ("arms", 0, "joint_limits_deg", 1),
            [150, -150],
            "arms[0].joint_limits_deg[1]: the minimum must be less than the maximum, "
            "got [150, -150]",
        ),
        (
            ("arms", 0, "joint_limits_deg", 0),
            [10, 10],
            "arms[0].joint_limits_deg[0]: the minimum must be less than the maximum, got [10, 10]",
        ),
        (
            ("arms", 0, "joint_limits_deg", 0),
            [-400, 400],
            "arms[0].joint_limits_deg[0]: must span at most 720 degrees, got [-400, 400]",
        ),
        (
            ("arms", 0, "joint_limits_deg", 0, 1),
            False,
            "arms[0].joint_limits_deg[0][1]: must be a number, got false",
        ),
        (
            ("arms", 0, "link_radii"),
            [40, -1],
            "arms[0].link_radii[1]: must be a positive number, got -1",
        ),
        (
            ("arms", 0, "joint_speed_dps"),
            [0, 500],
            "arms[0].joint_speed_dps[0]: must be a positive number, got 0",
        ),
        (
            ("arms", 0, "joint_accel_dps2"),
            "fast",
            'arms[0].joint_accel_dps2: must be a list of 2 positive numbers, got "fast"',
        ),
        (
            ("arms", 0, "link_underside_height"),
            [1],
            "arms[0].link_underside_height: must be a number of 0 or more, got [1]",
        ),
        (("fixtures", 0, "kind"), "", 'fixtures[0].kind: must be a non-empty string, got ""'),
        (
            ("fixtures", 0, "height"),
            -1,
            "fixtures[0].height: must be a number of 0 or more, got -1",
        ),
        (
            ("fixtures", 1, "outline"),
            [[0, 0], [1, 1]],
            "fixtures[1].outline: must be a list of at least 3 points [x, y], got [[0, 0], [1, 1]]",
        ),
        (
            ("fixtures", 1, "outline", 1),
            [10],
            "fixtures[1].outline[1]: must be a point [x, y] of two numbers, got [10]",
        ),
        (
            ("fixtures", 1, "outline", 2, 1),
            None,
            "fixtures[1].outline[2][1]: must be a number, got null",
        ),
        (("targets", 0, "x"), [1, 2], "targets[0].x: must be a number, got [1, 2]"),
        (("targets", 2, "arm"), "c", 'targets[2].arm: names no arm in this cell, got "c"'),
        (("sequences", 1, "arm"), "zz", 'sequences[1].arm: names no arm in this cell, got "zz"'),
        (
            ("sequences", 0, "targets", 1),
            "t9",
            'sequences[0].targets[1]: names no target in this cell, got "t9"',
        ),
        (
            ("sequences", 0, "targets", 1),
            "t3",
            'sequences[0].targets[1]: target belongs to arm "b", not to this sequence\'s arm "a", '
            'got "t3"',
        ),
        (("sequences", 0, "targets"), "t1", 'sequences[0].targets: must be a list [...], got "t1"'),
        (("review",), "rev A", 'review: must be a JSON object {...}, got "rev A"'),
        (("arms",), {}, "arms: must be a list [...], got {}"),
        (("targets", 1), 5, "targets[1]: must be a JSON object {...}, got 5"),
        (
            ("arms", 0, "base", "x"),
            2e9,
            "arms[0].base.x: must be between -1e+09 and 1e+09, got 2000000000.0",
        ),
    ],
)
def test_bad_field_names_path_and_value(
    tmp_path: Path, path: tuple, value: object, expected: str
) -> None:
    d = doc()
    _set(d, path, value)
    assert only_problem(tmp_path, d) == f"{NAME}: {expected}"


@pytest.mark.parametrize(
    "path",
    [
        ("name",),
        ("units",),
        ("arms",),
        ("fixtures",),
        ("targets",),
        ("arms", 0, "id"),
        ("arms", 0, "name"),
        ("arms", 0, "base"),
        ("arms", 0, "base", "heading_deg"),
        ("arms", 1, "links"),
        ("arms", 1, "joint_limits_deg"),
        ("arms", 1, "elbow"),
        ("fixtures", 0, "kind"),
        ("fixtures", 0, "outline"),
        ("targets", 0, "y"),
        ("targets", 1, "name"),
        ("sequences", 0, "targets"),
    ],
)
def test_missing_required_key(tmp_path: Path, path: tuple) -> None:
    d = doc()
    _delete(d, path)
    text = cellfile._path_text(path)
    line = problems_of(tmp_path, d)[0]
    assert line.startswith(f"{NAME}: {text}: is required but missing")


def test_missing_target_arm_reports_once(tmp_path: Path) -> None:
    d = doc()
    del d["targets"][0]["arm"]
    assert only_problem(tmp_path, d) == f"{NAME}: targets[0].arm: is required but missing"


@pytest.mark.parametrize("kind", ["arms", "fixtures", "targets"])
def test_duplicate_ids(tmp_path: Path, kind: str) -> None:
    d = doc()
    d[kind][1]["id"] = d[kind][0]["id"]
    if kind == "arms":
        d["targets"][2]["arm"] = "a"  # keep the rest of the file consistent
        d["sequences"][1]["arm"] = "a"
    if kind == "targets":
        d["sequences"][0]["targets"] = ["t1"]
    first = d[kind][0]["id"]
    assert only_problem(tmp_path, d) == (
        f'{NAME}: {kind}[1].id: duplicate id, also used by {kind}[0], got "{first}"'
    )


@pytest.mark.parametrize(
    ("literal", "where"),
    [
        ("NaN", "arms[0].base.x"),
        ("Infinity", "arms[0].base.x"),
        ("-Infinity", "arms[0].base.x"),
        ("1e400", "arms[0].base.x"),
        ("-1e400", "arms[0].base.x"),
        ("1" + "0" * 400, "arms[0].base.x"),
    ],
)
def test_non_finite_numbers_are_rejected(tmp_path: Path, literal: str, where: str) -> None:
    # RFC 8259 section 6: Infinity and NaN are not permitted in JSON.
    text = json.dumps(doc()).replace('"x": 0', f'"x": {literal}', 1)
    shown = literal if len(literal) <= 80 else literal[:77] + "..."
    assert only_problem(tmp_path, text) == f"{NAME}: {where}: must be a finite number, got {shown}"


def test_non_finite_number_in_an_extra_key(tmp_path: Path) -> None:
    text = json.dumps(doc())[:-1] + ', "calibration": {"offset": NaN}}'
    assert only_problem(tmp_path, text) == (
        f"{NAME}: calibration.offset: must be a finite number, got NaN"
    )


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ('"name": "A", "name": "B"', 'name: key appears 2 times, got "A" and "B"'),
        (
            '"review": {"date": 1, "date": 2, "date": 3}',
            "review.date: key appears 3 times, got 1 and 2 and 3",
        ),
        ('"my key": {"k": 1, "k": 1}', '["my key"].k: key appears 2 times, got 1 and 1'),
    ],
)
def test_duplicate_keys_are_reported(tmp_path: Path, text: str, expected: str) -> None:
    # RFC 8259 section 4: names SHOULD be unique; the standard library would keep the last.
    d = doc()
    del d["name"], d["review"]
    body = json.dumps(d)
    problems = problems_of(tmp_path, body[:-1] + ", " + text + "}")
    assert f"{NAME}: {expected}" in problems


def test_duplicate_key_inside_an_arm(tmp_path: Path) -> None:
    text = json.dumps(doc()).replace('"elbow": "any"', '"elbow": "any", "elbow": "positive"')
    assert only_problem(tmp_path, text) == (
        f'{NAME}: arms[0].elbow: key appears 2 times, got "any" and "positive"'
    )


def test_lone_surrogate_text_is_rejected(tmp_path: Path) -> None:
    text = json.dumps(doc()).replace('"Bench"', '"Be\\ud800nch"')
    assert only_problem(tmp_path, text) == (
        f"{NAME}: name: is not valid text (it holds an unpaired surrogate escape), "
        'got "Be\\ud800nch"'
    )


# Outlines judged by shapely, the reference library for OGC simple-feature validity.
OUTLINES = {
    "bow tie": [[0, 0], [10, 10], [10, 0], [0, 10]],
    "collinear": [[0, 0], [5, 0], [10, 0]],
    "all one point": [[1, 1], [1, 1], [1, 1]],
    "spike": [[0, 0], [10, 0], [10, 10], [10, 20], [10, 10], [0, 10]],
}


@pytest.mark.parametrize("name", OUTLINES)
def test_bad_outline_is_rejected_like_shapely(tmp_path: Path, name: str) -> None:
    outline = OUTLINES[name]
    poly = Polygon(outline)
    assert not (poly.is_valid and poly.area > 0)  # the reference says these are bad
    d = doc()
    d["fixtures"][1]["outline"] = outline
    line = only_problem(tmp_path, d)
    assert line.startswith(f"{NAME}: fixtures[1].outline: must ")
    assert line.endswith(", got " + cellfile._show(outline))


def test_bow_tie_message_says_where_it_crosses(tmp_path: Path) -> None:
    d = doc()
    d["fixtures"][1]["outline"] = OUTLINES["bow tie"]
    assert "(Self-intersection at (5, 5))" in only_problem(tmp_path, d)


@pytest.mark.parametrize(
    "outline",
    [
        [[0, 0], [10, 0], [10, 10]],
        [[0, 0], [10, 0], [10, 10], [0, 0]],  # closed explicitly
        [[0, 0], [0, 10], [10, 10], [10, 0]],  # clockwise
        [[0, 0], [10, 0], [10, 10], [5, 3], [0, 10]],  # concave
    ],
)
def test_good_outlines_are_accepted_like_shapely(tmp_path: Path, outline: list) -> None:
    assert Polygon(outline).is_valid and Polygon(outline).area > 0
    d = doc()
    d["fixtures"][1]["outline"] = outline
    assert load_cell(write(tmp_path, d)).fixtures[1].outline == tuple(map(tuple, outline))


def test_all_problems_are_collected_in_file_order(tmp_path: Path) -> None:
    d = doc()
    d["units"] = "ft"
    d["arms"][0]["links"][0] = -1
    d["arms"][1]["elbow"] = "sideways"
    d["fixtures"][0]["outline"] = [[0, 0]]
    d["targets"][1]["y"] = "high"
    problems = problems_of(tmp_path, d)
    assert [p.split(": ")[1] for p in problems] == [
        "units",
        "arms[0].links[0]",
        "arms[1].elbow",
        "fixtures[0].outline",
        "targets[1].y",
    ]


def test_problem_list_is_capped(tmp_path: Path) -> None:
    d = doc()
    d["targets"] = [{"id": f"t{i}", "name": "T", "x": "?", "y": 0, "arm": "a"} for i in range(150)]
    d["sequences"] = []
    problems = problems_of(tmp_path, d)
    assert len(problems) == 101
    assert problems[-1] == f"{NAME}: ... and 50 more problems"


def test_long_values_are_shortened_to_one_line(tmp_path: Path) -> None:
    d = doc()
    d["units"] = "x" * 500 + "\n" + "y"
    line = only_problem(tmp_path, d)
    got = line.split(", got ", 1)[1]
    assert len(got) <= 80 and got.startswith('"xxx') and got.endswith('..."')
    d = doc()
    d["arms"][0]["links"] = list(range(1000))
    line = only_problem(tmp_path, d)
    assert line.endswith("got [0, 1, 2, 3, 4, 5, ... 1000 items]")


def test_error_survives_pickling() -> None:
    err = CellFileError(["a: b: first", "a: c: second"])
    back = pickle.loads(pickle.dumps(err))
    assert back.problems == err.problems and str(back) == "a: b: first"


def test_parse_cell_uses_the_source_name() -> None:
    with pytest.raises(CellFileError) as info:
        parse_cell("{", "pasted")
    assert str(info.value).startswith("pasted: line 1, column 2: not valid JSON")


# --------------------------------------------------------------------------- migrations


def test_migration_steps_run_in_order(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    calls: list[int] = []

    def one_to_two(data: dict) -> dict:
        calls.append(data["version"])
        data = dict(data, version=2, name=data["title"])
        del data["title"]
        return data

    monkeypatch.setattr(cellfile, "CURRENT_VERSION", 2)
    monkeypatch.setitem(cellfile.MIGRATIONS, 1, one_to_two)
    d = doc()
    d["title"] = d.pop("name")
    cell = load_cell(write(tmp_path, d))
    assert calls == [1] and cell.name == "Bench" and "title" not in cell.extra
    assert json.loads(dumps_cell(cell))["version"] == 2


def test_missing_or_failing_migration(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(cellfile, "CURRENT_VERSION", 2)
    path = write(tmp_path, doc())
    with pytest.raises(CellFileError) as info:
        load_cell(path)
    assert str(info.value) == f"{NAME}: version: no upgrade from version 1 to 2 is known, got 1"

    def broken(data: dict) -> dict:
        raise KeyError("links")

    monkeypatch.setitem(cellfile.MIGRATIONS, 1, broken)
    with pytest.raises(CellFileError) as info:
        load_cell(path)
    assert str(info.value) == (
        f"{NAME}: version: could not be upgraded to version 2 ('links'), got 1"
    )


def test_current_version_is_one_with_no_migrations() -> None:
    assert CURRENT_VERSION == 1 and cellfile.MIGRATIONS == {}


# --------------------------------------------------------------------------- writing


def test_canonical_text_round_trips_byte_for_byte(tmp_path: Path) -> None:
    text = dumps_cell(load_cell(write(tmp_path, doc())))
    assert dumps_cell(parse_cell(text)) == text
    assert text.endswith("}\n") and '\n  "arms": [\n    {\n      "id": "a",' in text
    assert '"links": [300, 250],' in text  # short number lists stay on one line


def test_key_order_is_stable() -> None:
    d = doc()
    d["zeta"] = 1
    d["alpha"] = 2
    d["arms"][0] = {"elbow": "any", "shoulder_brake": True, **d["arms"][0]}
    cell = parse_cell(json.dumps(d))
    out = cell_to_dict(cell)
    assert list(out) == [*cellfile._TOP_KEYS, "zeta", "alpha"]
    assert list(out["arms"][0]) == [*cellfile._ARM_KEYS, "shoulder_brake"]
    assert list(out["arms"][0]["base"]) == ["x", "y", "heading_deg"]


def test_integral_floats_are_written_as_integers() -> None:
    cell = Cell(
        name="n",
        arms=(Arm("a", "A", 1.0, -0.0, 90.5, 120.0, 0.1, (-132.0, 132.0), (-145, 145)),),
    )
    out = cell_to_dict(cell)["arms"][0]
    assert out["base"] == {"x": 1, "y": 0, "heading_deg": 90.5}
    assert out["links"] == [120, 0.1] and isinstance(out["links"][0], int)
    assert parse_cell(dumps_cell(cell)) == cell  # and read back as the same floats


def test_numpy_numbers_are_written_as_plain_numbers() -> None:
    arm = Arm("a", "A", np.float64(1.5), np.int64(2), 0, 300, 200, (-90, 90), (-90, 90))
    text = dumps_cell(Cell(name="n", arms=(arm,)))
    assert '"x": 1.5' in text and '"y": 2' in text


def test_dumps_refuses_a_cell_that_would_not_load() -> None:
    arm = Arm("a", "A", 0, 0, 0, -300, 200, (-90, 90), (-90, 90))
    with pytest.raises(CellFileError) as info:
        dumps_cell(Cell(name="n", arms=(arm,)))
    assert str(info.value) == "<cell>: arms[0].links[0]: must be a positive number, got -300"


def test_dumps_refuses_non_finite_values() -> None:
    arm = Arm("a", "A", math.nan, 0, 0, 300, 200, (-90, 90), (-90, 90))
    with pytest.raises(CellFileError) as info:
        dumps_cell(Cell(name="n", arms=(arm,)))
    assert str(info.value).startswith("<cell>: the cell holds a value that cannot be written")


def test_extra_clashing_with_a_known_key_is_refused() -> None:
    t = Target("t", "T", 0, 0, "a", extra={"x": 5})
    with pytest.raises(CellFileError) as info:
        dumps_cell(Cell(name="n", targets=(t,)))
    assert (
        str(info.value) == '<cell>: targets[0]: extra key "x" clashes with a key of the cell format'
    )


EXTRAS_TEXT = {
    "format": "elbowroom-cell",
    "version": 1,
    "name": "Extras",
    "units": "in",
    "arms": [
        {
            "id": "a",
            "name": "A",
            "base": {"x": 0, "y": 0, "heading_deg": 0, "z": 30.5},
            "links": [12, 9],
            "joint_limits_deg": [[-132, 132], [-145, 145]],
            "elbow": "positive",
            "body_outline": [[0, 1], [2, 3], [4, 5]],
            "maker_note": {"nested": [1, 2.5, None, True, "x"]},
        }
    ],
    "fixtures": [
        {
            "id": "f",
            "name": "F",
            "kind": "pallet rack",
            "outline": [[0, 0], [1, 0], [1, 1]],
            "colour_hint": "grey",
        }
    ],
    "targets": [{"id": "t", "name": "T", "x": 10, "y": 1, "arm": "a", "dwell_s": 0.25}],
    "sequences": [{"arm": "a", "targets": ["t", "t"], "repeat": 3}],
    "review": {"project": "X", "custom": [1, {"deep": None}]},
    "notes": ["free text"],
    "big_id": 123456789012345678901234567890,
}


def test_unknown_keys_are_kept_at_every_level(tmp_path: Path) -> None:
    cell = load_cell(write(tmp_path, EXTRAS_TEXT))
    assert cell.extra == {"notes": ["free text"], "big_id": 123456789012345678901234567890}
    assert cell.arms[0].extra == {
        "body_outline": [[0, 1], [2, 3], [4, 5]],
        "maker_note": {"nested": [1, 2.5, None, True, "x"]},
        "base": {"z": 30.5},
    }
    assert cell.fixtures[0].extra == {"colour_hint": "grey"}
    assert cell.fixtures[0].kind == "pallet rack"  # kinds beyond the styled ones are allowed
    assert cell.targets[0].extra == {"dwell_s": 0.25}
    assert cell.sequences[0].extra == {"repeat": 3}
    assert json.loads(dumps_cell(cell)) == EXTRAS_TEXT


# --------------------------------------------------------------------------- saving


def _dir_names(folder: Path) -> set[str]:
    return {p.name for p in folder.iterdir()}


def test_save_then_load_gives_the_same_cell(tmp_path: Path) -> None:
    cell = parse_cell(json.dumps(EXTRAS_TEXT))
    path = tmp_path / "out.cell.json"
    save_cell(cell, path)
    assert load_cell(path) == cell
    assert path.read_text(encoding="utf-8") == dumps_cell(cell)
    assert _dir_names(tmp_path) == {"out.cell.json"}  # no backup of a file that did not exist


def test_save_keeps_the_previous_file_as_backup(tmp_path: Path) -> None:
    path = tmp_path / "out.cell.json"
    path.write_text("previous content", encoding="utf-8")
    os.chmod(path, 0o640)
    cell = parse_cell(json.dumps(doc()))
    first = save_cell(cell, path)
    assert first.backup is not None and first.backup.parent == tmp_path
    assert first.backup.read_text(encoding="utf-8") == "previous content"
    assert first.backup.name.startswith("out.cell.json.") and first.backup.name.endswith(".bak")
    assert load_cell(path) == cell
    assert (path.stat().st_mode & 0o777) == 0o640  # permissions of the file are kept
    assert (first.backup.stat().st_mode & 0o777) == 0o640  # and given to its backup
    second = Cell(name="second")
    outcome = save_cell(second, path)
    assert load_cell(outcome.backup) == cell and load_cell(path) == second
    assert _dir_names(tmp_path) == {"out.cell.json", first.backup.name, outcome.backup.name}


@pytest.mark.parametrize("failing", ["replace", "fsync"])
def test_failed_save_leaves_the_old_file_and_no_temp(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, failing: str
) -> None:
    path = tmp_path / "out.cell.json"
    path.write_text("old", encoding="utf-8")

    def fail(*args: object) -> None:
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, failing, fail)
    with pytest.raises(CellFileError) as info:
        save_cell(parse_cell(json.dumps(doc())), path)
    assert str(info.value) == (
        f"out.cell.json: not saved: the disk holding {tmp_path} is full "
        "(the file and its backups are unchanged)"
    )
    assert path.read_text(encoding="utf-8") == "old"
    assert _dir_names(tmp_path) == {"out.cell.json"}


def test_save_interrupted_by_another_exception_still_cleans_up(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    path = tmp_path / "out.cell.json"
    path.write_text("old", encoding="utf-8")

    def interrupt(*args: object) -> None:
        raise KeyboardInterrupt

    monkeypatch.setattr(os, "replace", interrupt)
    with pytest.raises(KeyboardInterrupt):
        save_cell(Cell(name="n"), path)
    assert path.read_text(encoding="utf-8") == "old"
    assert _dir_names(tmp_path) == {"out.cell.json"}


def test_save_refuses_an_invalid_cell_and_writes_nothing(tmp_path: Path) -> None:
    path = tmp_path / "out.cell.json"
    path.write_text("old", encoding="utf-8")
    bad = Cell(name="n", targets=(Target("t", "T", 0, 0, "nobody"),))
    with pytest.raises(CellFileError) as info:
        save_cell(bad, path)
    assert (
        str(info.value) == 'out.cell.json: targets[0].arm: names no arm in this cell, got "nobody"'
    )
    assert path.read_text(encoding="utf-8") == "old" and _dir_names(tmp_path) == {"out.cell.json"}


def test_save_will_not_overwrite_a_newer_file_unless_told(tmp_path: Path) -> None:
    d = doc()
    d["version"] = 3
    path = write(tmp_path, d, "newer.cell.json")
    before = path.read_bytes()
    with pytest.raises(CellFileError) as info:
        save_cell(Cell(name="n"), path)
    assert str(info.value).startswith(
        "newer.cell.json: was written by a newer Elbow Room (version 3); saving here would "
        "rewrite it as version 1"
    )
    assert path.read_bytes() == before and _dir_names(tmp_path) == {"newer.cell.json"}
    save_cell(Cell(name="n"), path, replace_newer=True)
    assert load_cell(path) == Cell(name="n")
    (backup,) = [p for p in tmp_path.iterdir() if p.name.endswith(".bak")]
    assert backup.read_bytes() == before


def test_save_into_a_missing_folder(tmp_path: Path) -> None:
    with pytest.raises(CellFileError) as info:
        save_cell(Cell(name="n"), tmp_path / "no" / "such" / "x.cell.json")
    folder = tmp_path / "no" / "such"
    assert str(info.value) == f"x.cell.json: not saved: the folder {folder} does not exist"


def test_save_onto_a_folder(tmp_path: Path) -> None:
    (tmp_path / "d.cell.json").mkdir()
    with pytest.raises(CellFileError) as info:
        save_cell(Cell(name="n"), tmp_path / "d.cell.json")
    assert str(info.value).startswith("d.cell.json: is a folder")


def test_save_through_a_symbolic_link_writes_the_linked_file(tmp_path: Path) -> None:
    real = tmp_path / "real.cell.json"
    save_cell(Cell(name="first"), real)
    link = tmp_path / "link.cell.json"
    link.symlink_to(real)
    save_cell(Cell(name="second"), link)
    assert link.is_symlink() and load_cell(real).name == "second"


# --------------------------------------------------------------------------- sample cells


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_sample_cell_round_trips(path: Path, tmp_path: Path) -> None:
    text = path.read_text(encoding="utf-8")
    cell = load_cell(path)
    assert dumps_cell(cell) == text  # samples are stored in canonical form
    out = tmp_path / path.name
    save_cell(cell, out)
    assert load_cell(out) == cell


def test_the_three_demo_cells_are_present() -> None:
    names = {p.name for p in SAMPLE_FILES}
    assert {
        "tray_loading.cell.json",
        "kitting_two_arm.cell.json",
        "screw_station.cell.json",
    } <= names
    assert load_cell(SAMPLES / "screw_station.cell.json").units == "in"
    assert len(load_cell(SAMPLES / "kitting_two_arm.cell.json").arms) == 2


def _closest_approach(arm: Arm, x: float, y: float) -> float:
    """Smallest tool-point distance to (x, y) over the joint box the arm may use.

    Found numerically from forward kinematics alone (tool point at
    base + a1*(cos t1, sin t1) + a2*(cos(t1+q2), sin(t1+q2)), t1 = heading + q1),
    so it checks the stated failures without the closed-form solution.
    """
    q2_lo, q2_hi = arm.q2_limits
    if arm.elbow == "positive":
        q2_lo = max(q2_lo, 0.0)
    elif arm.elbow == "negative":
        q2_hi = min(q2_hi, 0.0)
    bounds = [arm.q1_limits, (q2_lo, q2_hi)]

    def dist(q: np.ndarray) -> float:
        t1 = math.radians(arm.heading_deg + q[0])
        t2 = t1 + math.radians(q[1])
        px = arm.x + arm.a1 * math.cos(t1) + arm.a2 * math.cos(t2)
        py = arm.y + arm.a1 * math.sin(t1) + arm.a2 * math.sin(t2)
        return math.hypot(px - x, py - y)

    starts = [(q1, q2) for q1 in np.linspace(*bounds[0], 13) for q2 in np.linspace(*bounds[1], 13)]
    best = min(starts, key=lambda q: dist(np.array(q)))
    res = minimize(dist, np.array(best), method="L-BFGS-B", bounds=bounds)
    return float(min(res.fun, dist(np.array(best))))


# Failing targets stated in the sample files' notes, with their reasons.
EXPECTED_FAILURES = {
    "tray_loading.cell.json": {"outfeed_far", "reject_bin"},
    "kitting_two_arm.cell.json": {"bin_r3"},
    "screw_station.cell.json": {"screw_7"},
}


@pytest.mark.parametrize("name", sorted(EXPECTED_FAILURES))
def test_sample_failures_are_real_and_the_rest_reachable(name: str) -> None:
    cell = load_cell(SAMPLES / name)
    notes = " ".join(cell.extra["notes"])
    for target in cell.targets:
        arm = cell.arm(target.arm)
        gap = _closest_approach(arm, target.x, target.y)
        if target.id in EXPECTED_FAILURES[name]:
            assert gap > 0.02 * arm.reach_max, target.id  # misses by a clear margin
            assert target.id in notes
            assert target.extra["note"].startswith("Expected to fail")
        else:
            assert gap < 1e-6 * arm.reach_max, target.id
    for seq in cell.sequences:  # sequences use only reachable targets
        assert not set(seq.targets) & EXPECTED_FAILURES[name]


def test_demo_notes_say_the_values_are_invented() -> None:
    for path in SAMPLE_FILES:
        assert "Invented demo cell" in load_cell(path).extra["notes"][0]


# --------------------------------------------------------------------------- random cells

_num = st.floats(-1e6, 1e6, allow_nan=False, allow_infinity=False) | st.integers(-(10**6), 10**6)
_pos = st.floats(0.001, 1e5) | st.integers(1, 10**5)
_text = st.text(max_size=12)
_ident = st.text(min_size=1, max_size=8).filter(lambda s: s.strip() != "")
_json = st.recursive(
    st.none()
    | st.booleans()
    | st.integers(-(10**20), 10**20)
    | st.floats(allow_nan=False, allow_infinity=False)
    | _text,
    lambda inner: st.lists(inner, max_size=3) | st.dictionaries(_text, inner, max_size=3),
    max_leaves=8,
)


def _extras(known: tuple[str, ...]) -> st.SearchStrategy[dict]:
    return st.dictionaries(_text.filter(lambda k: k not in known), _json, max_size=2)


@st.composite
def cells(draw: st.DrawFn) -> Cell:
    arm_ids = draw(st.lists(_ident, min_size=1, max_size=3, unique=True))
    arms = []
    for aid in arm_ids:
        lo1 = draw(st.floats(-360, 0))
        lo2 = draw(st.floats(-360, 0))
        arms.append(
            Arm(
                aid,
                draw(_text),
                draw(_num),
                draw(_num),
                draw(_num),
                draw(_pos),
                draw(_pos),
                (lo1, lo1 + draw(st.floats(0.5, 720))),
                (lo2, lo2 + draw(st.floats(0.5, 720))),
                draw(st.sampled_from(["any", "positive", "negative"])),
                link_radii=draw(st.none() | st.tuples(_pos, _pos)),
                # A height above the floor: 0 or more (issue 11's rule).
                link_underside_height=draw(
                    st.none()
                    | st.floats(0, 1e6, allow_nan=False, allow_infinity=False)
                    | st.integers(0, 10**6)
                ),
                joint_speed_dps=draw(st.none() | st.tuples(_pos, _pos)),
                joint_accel_dps2=draw(st.none() | st.tuples(_pos, _pos)),
                extra=draw(_extras(cellfile._ARM_KEYS)),
            )
        )
    fixtures = []
    for i in range(draw(st.integers(0, 3))):
        x0, y0 = draw(_num), draw(_num)
        w, h = draw(st.floats(1, 1000)), draw(st.floats(1, 1000))
        outline = ((x0, y0), (x0 + w, y0), (x0 + w, y0 + h), (x0, y0 + h))
        fixtures.append(
            Fixture(
                f"f{i}",
                draw(_text),
                draw(_ident),
                outline,
                draw(st.none() | st.floats(0, 5000)),
                extra=draw(_extras(cellfile._FIXTURE_KEYS)),
            )
        )
    targets = []
    for i in range(draw(st.integers(0, 6))):
        targets.append(
            Target(
                f"t{i}",
                draw(_text),
                draw(_num),
                draw(_num),
                draw(st.sampled_from(arm_ids)),
                extra=draw(_extras(cellfile._TARGET_KEYS)),
            )
        )
    sequences = []
    for aid in arm_ids:
        own = [t.id for t in targets if t.arm == aid]
        if own and draw(st.booleans()):
            ids = tuple(draw(st.lists(st.sampled_from(own), max_size=5)))
            sequences.append(Sequence(aid, ids, extra=draw(_extras(cellfile._SEQUENCE_KEYS))))
    return Cell(
        name=draw(_text),
        units=draw(st.sampled_from(["mm", "in"])),
        arms=tuple(arms),
        fixtures=tuple(fixtures),
        targets=tuple(targets),
        sequences=tuple(sequences),
        review=draw(st.none() | st.dictionaries(_text, _json, max_size=3)),
        extra=draw(_extras(cellfile._TOP_KEYS)),
    )


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(cells())
def test_random_cells_round_trip(cell: Cell) -> None:
    text = dumps_cell(cell)
    back = parse_cell(text)
    assert back == cell
    assert dumps_cell(back) == text


@settings(max_examples=40, deadline=None)
@given(st.text(max_size=200))
def test_any_text_gives_a_cell_or_a_cell_file_error(text: str) -> None:
    try:
        parse_cell(text, "fuzz")
    except CellFileError as err:
        assert all("\n" not in p and p.startswith("fuzz: ") for p in err.problems)


@settings(max_examples=60, deadline=None)
@given(st.data())
def test_mutated_documents_never_raise_anything_else(data: st.DataObject) -> None:
    d = doc()
    # Replace one value somewhere in a valid document with a random JSON value.
    paths = []
    stack: list[tuple[object, tuple]] = [(d, ())]
    while stack:
        node, path = stack.pop()
        if path:
            paths.append(path)
        if isinstance(node, dict):
            stack.extend((v, path + (k,)) for k, v in node.items())
        elif isinstance(node, list):
            stack.extend((v, path + (i,)) for i, v in enumerate(node))
    path = data.draw(st.sampled_from(sorted(paths, key=str)))
    mutated = copy.deepcopy(d)
    _set(mutated, path, data.draw(_json))
    try:
        parse_cell(json.dumps(mutated), "m")
    except CellFileError as err:
        assert all("\n" not in p and p.startswith("m: ") for p in err.problems)


def test_documented_example_is_a_canonical_cell_file() -> None:
    doc_text = (SAMPLES.parent / "docs" / "cell-format.md").read_text(encoding="utf-8")
    example = doc_text.split("```json\n", 1)[1].split("```", 1)[0]
    assert dumps_cell(parse_cell(example)) == example


@pytest.mark.parametrize("value", [1e9, 1e-300, 0.0005])
def test_link_lengths_outside_the_precise_range_are_refused(value: float) -> None:
    # Region polygons and areas lose precision for links of 1e9 next to 1 (double precision);
    # lengths are kept within 0.001 .. 1e6 cell units.
    data = json.loads((SAMPLES / "tray_loading.cell.json").read_text(encoding="utf-8"))
    data["arms"][0]["links"][1] = value
    with pytest.raises(CellFileError) as err:
        parse_cell(json.dumps(data), "t.cell.json")
    assert str(err.value).startswith("t.cell.json: arms[0].links[1]: must be a length between")

"""CSV targets: round trip through Python's csv module (the reference reader, RFC 4180
quoting), merge by id, and messages that name the row and column.

Outside references: RFC 4180 (fields with commas or quotes are quoted, quotes doubled);
1 in = 25.4 mm exactly (international yard and pound agreement, 1959); spreadsheet column
letters A, B, ..., Z, AA (common practice, no source).
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

import pytest

from kinematics.cell import Arm, Cell, Sequence, Target
from kinematics.cellfile import dumps_cell, load_cell
from kinematics.csv_targets import (
    COLUMNS,
    CsvTargetsError,
    load_targets_csv,
    merge_targets_csv,
    targets_csv,
    write_targets_csv,
)

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "sample_cells").glob("*.cell.json"))
ARM = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
ARM_B = Arm("b", "B", 900, 0, 180, 400, 250, (0, 180), (-120, 120))


def problems(text: str, cell: Cell) -> list[str]:
    with pytest.raises(CsvTargetsError) as err:
        merge_targets_csv(text, cell, "t.csv")
    return err.value.problems


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.name)
def test_round_trip_of_every_sample_cell(path, tmp_path):
    cell = load_cell(path)
    out = tmp_path / "t.csv"
    write_targets_csv(cell, out)
    rows = list(csv.DictReader(io.StringIO(out.read_text(encoding="utf-8"))))
    assert [r["id"] for r in rows] == [t.id for t in cell.targets]
    assert all(r["units"] == cell.units for r in rows)
    for r, t in zip(rows, cell.targets):
        assert r["name"] == t.name and float(r["x"]) == t.x and float(r["y"]) == t.y
    emptied = Cell(cell.name, cell.units, cell.arms, cell.fixtures, (), (), cell.review, cell.extra)
    back = load_targets_csv(out, emptied)

    def columns(t):  # what a CSV row carries; other target keys stay in the cell file only
        return (t.id, t.name, t.x, t.y, t.arm, t.extra.get("work_height"), t.extra.get("dwell_s"))

    assert [columns(t) for t in back.cell.targets] == [columns(t) for t in cell.targets]
    assert len(back.added) == len(cell.targets)
    again = load_targets_csv(out, cell)
    assert again.unchanged == tuple(t.id for t in cell.targets) and not again.changed


def test_quotes_and_extra_keys_survive():
    t = Target(
        "p,1", 'Pick "left", high', 0.1, -2.5e-7, "a", {"work_height": 812.5, "dwell_s": 0.4}
    )
    cell = Cell("c", arms=(ARM,), targets=(t,))
    text = targets_csv(cell)
    assert text.splitlines()[0] == ",".join(COLUMNS)
    row = next(csv.DictReader(io.StringIO(text)))
    assert row["id"] == "p,1" and row["name"] == 'Pick "left", high'
    assert row["work_height"] == "812.5" and row["dwell_s"] == "0.4"
    back = merge_targets_csv(text, Cell("c", arms=(ARM,)))
    assert back.cell.targets == (t,)
    dumps_cell(back.cell)  # the merged cell saves and loads


def test_merge_summary_added_changed_unchanged():
    cell = Cell(
        "c",
        arms=(ARM, ARM_B),
        targets=(
            Target("p1", "P1", 0, 500, "a"),
            Target("p2", "P2", 450, 180, "a"),
            Target("p3", "P3", 10, 10, "a", {"work_height": 5.0}),
        ),
    )
    text = "id,x,y,arm,work_height\np1,0,500,a,\np2,460,180,a,\np4,800,100,b,700\np3,10,10,a,\n"
    m = merge_targets_csv(text, cell)
    assert m.added == ("p4",) and m.changed == ("p2", "p3") and m.unchanged == ("p1",)
    assert m.summary() == "1 target added, 2 changed, 1 unchanged"
    by_id = {t.id: t for t in m.cell.targets}
    assert by_id["p2"].name == "P2"  # no name column: the name is kept
    assert "work_height" not in by_id["p3"].extra  # an empty cell removes the key
    assert by_id["p4"].name == "p4" and by_id["p4"].extra == {"work_height": 700.0}


def test_units_column_converts_to_the_cell():
    cell = Cell("c", units="mm", arms=(ARM,))
    m = merge_targets_csv("id,x,y,arm,work_height,units\nq,10,-2,a,30,in\n", cell)
    (t,) = m.cell.targets
    assert (t.x, t.y, t.extra["work_height"]) == (254.0, -50.8, 762.0)


def test_errors_name_the_row_and_the_column():
    cell = Cell("c", arms=(ARM,), targets=(Target("p1", "P1", 0, 500, "a"),))
    text = (
        "id,name,x,y,arm,dwell_s\n"
        "p1,Pick,12.5,400,a,1\n"
        'p2,Place,"12,5",400,a,0\n'
        "p3,Bad,1,nan,zz,-1\n"
        "p1,Again,1,1,a,0\n"
        "p5,Short,1\n"
    )
    got = problems(text, cell)
    assert got == [
        't.csv: row 3, column C (x): must be a number, got "12,5" (use a decimal point)',
        't.csv: row 4, column D (y): must be a number, got "nan"',
        't.csv: row 4, column E (arm): names no arm in this cell, got "zz" (arms: a)',
        "t.csv: row 4, column F (dwell_s): must be a number of 0 or more, got -1",
        't.csv: row 5, column A (id): id "p1" is also on row 2',
        "t.csv: row 6: has 3 fields, the header has 6",
    ]


def test_header_is_required_and_checked():
    cell = Cell("c", arms=(ARM,))
    assert problems("", cell)[0].startswith("t.csv: row 1: a header row naming the columns")
    assert problems("p1,0,0,a\n", cell) == [
        't.csv: row 1, column A: unknown column "p1" (columns: id, name, x, y, arm, '
        "work_height, dwell_s, units)",
        't.csv: row 1, column B: unknown column "0" (columns: id, name, x, y, arm, '
        "work_height, dwell_s, units)",
        't.csv: row 1, column C: unknown column "0" (columns: id, name, x, y, arm, '
        "work_height, dwell_s, units)",
        't.csv: row 1, column D: unknown column "a" (columns: id, name, x, y, arm, '
        "work_height, dwell_s, units)",
        "t.csv: row 1: the header lacks the required columns id, x, y, arm",
    ]
    assert problems("id,x,y,arm,x\n", cell) == [
        "t.csv: row 1, column E: column x appears twice (also column B)"
    ]


def test_moving_a_sequenced_target_to_another_arm_is_refused():
    cell = Cell(
        "c",
        arms=(ARM, ARM_B),
        targets=(Target("p1", "P1", 0, 500, "a"), Target("p2", "P2", 450, 180, "a")),
        sequences=(Sequence("a", ("p1", "p2")),),
    )
    (msg,) = problems("id,x,y,arm\np2,450,180,b\n", cell)
    assert msg.startswith('t.csv: row 2, column D (arm): target "p2" is in a sequence of arm "a"')


def test_semicolons_bom_and_blank_lines():
    cell = Cell("c", arms=(ARM,))
    m = merge_targets_csv("\ufeffid;x;y;arm\n\nq;1.5;2;a\n", cell)
    assert [(t.id, t.x, t.y) for t in m.cell.targets] == [("q", 1.5, 2.0)]


def test_file_problems(tmp_path):
    cell = Cell("c", arms=(ARM,))
    with pytest.raises(CsvTargetsError, match="gone.csv: could not be opened"):
        load_targets_csv(tmp_path / "gone.csv", cell)
    bad = tmp_path / "latin.csv"
    bad.write_bytes("id,name,x,y,arm\np,Gr\xfc\xdfe,1,2,a\n".encode("latin-1"))
    with pytest.raises(CsvTargetsError, match=r"latin.csv: row 2: not UTF-8 text \(byte 0xfc\)"):
        load_targets_csv(bad, cell)

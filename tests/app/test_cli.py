"""The `elbowroom check` command as a user runs it: reports, exit codes, bad input."""

from __future__ import annotations

import dataclasses
import errno
import io
import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

from app.cli import main
from kinematics.cell import Arm, Cell, Target
from kinematics.cellfile import MAX_FILE_BYTES, load_cell, save_cell

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "sample_cells").glob("*.cell.json"))

# Worked exam problem with joint limits 0 <= q1 <= 180, -120 <= q2 <= 120 (Q&A archive),
# a1 = 400, a2 = 250: (450, 180) only negative within limits; (-200, 400) both; (480, 480) none.
EXAM_ARM = Arm("exam", "Exam arm", 0.0, 0.0, 0.0, 400.0, 250.0, (0.0, 180.0), (-120.0, 120.0))


def run_check(capsys, *args: str) -> tuple[int, str, str]:
    code = main(["check", *args])
    out, err = capsys.readouterr()
    return code, out, err


def test_every_sample_cell_reports_as_specified(capsys):
    assert len(SAMPLES) >= 3
    for path in SAMPLES:
        code, out, err = run_check(capsys, str(path), "--json")
        rep = json.loads(out)
        assert set(rep) >= {"cell", "units", "arms", "targets", "summary"}
        for a in rep["arms"]:
            assert set(a) >= {"id", "reach_min", "reach_max", "reachable_area", "both_elbows_area"}
        for t in rep["targets"]:
            assert set(t) >= {"id", "arm", "feasible", "chosen_elbow", "reason", "solutions"}
            for s in t["solutions"]:
                assert set(s) >= {
                    "elbow",
                    "q_deg",
                    "within_limits",
                    "limit_margin_deg",
                    "singular",
                    "manipulability",
                }
        # Each demo cell has at least one target that fails for a stated reason.
        failing = [t for t in rep["targets"] if not t["feasible"]]
        assert failing and all(t["reason"] for t in failing), path.name
        assert code == 1


def test_exam_problem_through_the_command(tmp_path, capsys):
    cell = Cell(
        "exam",
        arms=(EXAM_ARM,),
        targets=(
            Target("p1", "P1", 450.0, 180.0, "exam"),
            Target("p2", "P2", -200.0, 400.0, "exam"),
            Target("p3", "P3", 480.0, 480.0, "exam"),
        ),
    )
    path = tmp_path / "exam.cell.json"
    save_cell(cell, path)
    code, out, _ = run_check(capsys, str(path), "--json")
    rep = json.loads(out)
    by_id = {t["id"]: t for t in rep["targets"]}
    assert code == 1  # p3 is out of reach
    p1 = by_id["p1"]
    assert p1["feasible"] and p1["chosen_elbow"] == "negative"
    neg = next(s for s in p1["solutions"] if s["elbow"] == "negative")
    assert neg["q_deg"] == pytest.approx([52.79, -86.45], abs=5e-3)  # exam problem values
    pos = next(s for s in p1["solutions"] if s["elbow"] == "positive")
    assert not pos["within_limits"]
    p2 = by_id["p2"]
    assert all(s["within_limits"] for s in p2["solutions"])
    assert by_id["p3"]["solutions"] == [] and not by_id["p3"]["feasible"]
    assert by_id["p3"]["chosen_elbow"] is None
    assert "beyond outer reach" in by_id["p3"]["reason"]
    # Closed-form areas (change of variables with the Jacobian determinant a1*a2*sin q2):
    # each configuration covers pi * a1 * a2 * (cos lo - cos hi) over q1 in [0, 180].
    a1, a2 = 400.0, 250.0
    one = math.pi * a1 * a2 * (1 - math.cos(math.radians(120)))
    arm = rep["arms"][0]
    assert arm["reach_min"] == 150.0 and arm["reach_max"] == 650.0
    assert arm["reachable_area"] + arm["both_elbows_area"] == pytest.approx(2 * one, rel=1e-4)


def test_all_feasible_exits_zero_and_prints_a_table(tmp_path, capsys):
    cell = Cell("ok", arms=(EXAM_ARM,), targets=(Target("p2", "P2", -200.0, 400.0, "exam"),))
    path = tmp_path / "ok.cell.json"
    save_cell(cell, path)
    code, out, _ = run_check(capsys, str(path))
    assert code == 0
    assert "p2" in out and "1 of 1 targets feasible" in out
    assert "not a risk assessment" in out  # the caution travels with every report


def test_singular_target_reported_once(tmp_path, capsys):
    # Full stretch: q2 = 0, both configurations are one pose (standard closed form).
    cell = Cell("s", arms=(EXAM_ARM,), targets=(Target("s", "S", 0.0, 650.0, "exam"),))
    path = tmp_path / "s.cell.json"
    save_cell(cell, path)
    _, out, _ = run_check(capsys, str(path), "--json")
    t = json.loads(out)["targets"][0]
    assert len(t["solutions"]) == 1
    s = t["solutions"][0]
    assert s["singular"] and s["q_deg"] == pytest.approx([90.0, 0.0])
    assert s["manipulability"] == pytest.approx(0.0, abs=1e-6)


BAD_FILES = {
    "empty": ("", "the file is empty"),
    "not json": ('{"format": "elbowroom-cell",,}', "line 1"),
    "nan": (None, "links[1]"),
    "negative link": (None, "links[1]"),
    "newer version": (None, "version"),
    "duplicate id": (None, "targets[1].id"),
    "unknown arm": (None, "targets[0].arm"),
    "bad outline": (None, "outline"),
    "wide limits": (None, "joint_limits_deg[0]"),
    "min >= max": (None, "joint_limits_deg[1]"),
    "missing key": (None, "name"),
    "bad tool body": (None, "arms[0].tool_body.radius"),
    "wrong type": (None, "targets[0].x"),
    "infinity": (None, "arms[0].base.x"),
    "duplicate key": (None, "units: key appears 2 times"),
    "two-point outline": (None, "fixtures[0].outline"),
    "unknown target in sequence": (None, "sequences[0].targets[1]"),
    "too deep": ("[" * 5000 + "]" * 5000, "nested too deeply"),
    "too big": (None, "larger than"),
}


def _bad_text(kind: str, good: dict) -> str:
    d = json.loads(json.dumps(good))
    if kind == "nan":
        d["arms"][0]["links"][1] = "__NAN__"
        return json.dumps(d, indent=2).replace('"__NAN__"', "NaN")
    if kind == "negative link":
        d["arms"][0]["links"][1] = -5
    elif kind == "newer version":
        d["version"] = 7
    elif kind == "duplicate id":
        d["targets"].append(dict(d["targets"][0]))
    elif kind == "unknown arm":
        d["targets"][0]["arm"] = "ghost"
    elif kind == "bad outline":
        d["fixtures"] = [
            {
                "id": "f",
                "name": "F",
                "kind": "fixture",
                "outline": [[0, 0], [10, 10], [10, 0], [0, 10]],
            }
        ]
    elif kind == "wide limits":
        d["arms"][0]["joint_limits_deg"][0] = [-400, 400]
    elif kind == "min >= max":
        d["arms"][0]["joint_limits_deg"][1] = [120, -120]
    elif kind == "missing key":
        del d["name"]
    elif kind == "bad tool body":
        d["arms"][0]["tool_body"] = {"radius": -3}
    elif kind == "wrong type":
        d["targets"][0]["x"] = "450"
    elif kind == "infinity":
        return json.dumps(d, indent=2).replace('"x": 0,', '"x": Infinity,', 1)
    elif kind == "duplicate key":
        return json.dumps(d, indent=2).replace('"units": "mm"', '"units": "mm", "units": "in"')
    elif kind == "two-point outline":
        d["fixtures"] = [{"id": "f", "name": "F", "kind": "guard", "outline": [[0, 0], [9, 0]]}]
    elif kind == "unknown target in sequence":
        d["sequences"] = [{"arm": "exam", "targets": ["a", "ghost"]}]
    elif kind == "too big":
        # Valid JSON, padded past the size cap with an extra key.
        d["padding"] = " " * (MAX_FILE_BYTES + 10)
    return json.dumps(d, indent=2)


@pytest.mark.parametrize("kind", sorted(BAD_FILES))
def test_bad_input_exits_2_with_one_line_naming_the_field(kind, tmp_path, capsys):
    good_path = tmp_path / "good.cell.json"
    save_cell(
        Cell("g", arms=(EXAM_ARM,), targets=(Target("a", "A", 450.0, 180.0, "exam"),)), good_path
    )
    text, expected = BAD_FILES[kind]
    if text is None:
        text = _bad_text(kind, json.loads(good_path.read_text()))
    path = tmp_path / "bad.cell.json"
    path.write_text(text, encoding="utf-8")
    before = path.read_bytes()
    code, out, err = run_check(capsys, str(path), "--json")
    assert code == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith(f"{path}: "), err  # the file named as given (defect 8, issue 11)
    assert expected in lines[0], err
    assert "Traceback" not in err
    assert path.read_bytes() == before  # nothing written


def test_missing_file_and_bad_arguments(tmp_path, capsys):
    code, _, err = run_check(capsys, str(tmp_path / "nope.cell.json"))
    assert code == 2 and "nope.cell.json" in err and len(err.strip().splitlines()) == 1
    code = main(["check"])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1
    code = main(["--size", "huge", "x.cell.json"])
    err = capsys.readouterr().err
    assert code == 2 and "--size" in err and len(err.strip().splitlines()) == 1


def test_console_script_runs_headless_without_display(tmp_path):
    # `make run` on a machine without a display: one line saying so, the report, exit 0.
    env = {"PATH": str(Path(sys.executable).parent), "HOME": str(tmp_path)}
    proc = subprocess.run(
        [sys.executable, "-m", "app.cli"],
        env=env,
        capture_output=True,
        text=True,
        timeout=120,
        cwd=tmp_path,
    )
    assert proc.returncode == 0, proc.stderr
    first = proc.stdout.splitlines()[0]
    assert "No display" in first
    assert "targets feasible" in proc.stdout
    assert load_cell(ROOT / "sample_cells" / "tray_loading.cell.json").name in proc.stdout


class _FailingStdout(io.StringIO):
    """A stdout whose writes fail like a full disk or a closed pipe."""

    def __init__(self, exc: OSError) -> None:
        super().__init__()
        self.exc = exc

    def write(self, text: str) -> int:
        raise self.exc


@pytest.mark.parametrize(
    "exc, reason",
    [
        (OSError(errno.ENOSPC, "No space left on device"), "No space left on device"),
        (BrokenPipeError(errno.EPIPE, "Broken pipe"), "pipe was closed"),
    ],
)
def test_report_that_cannot_be_written_exits_2_with_one_line(monkeypatch, capsys, exc, reason):
    sample = ROOT / "sample_cells" / "tray_loading.cell.json"
    monkeypatch.setattr(sys, "stdout", _FailingStdout(exc))
    code = main(["check", str(sample), "--json"])
    err = capsys.readouterr().err
    assert code == 2
    assert err.count("\n") == 1 and reason in err and "Traceback" not in err


def test_ascii_only_stdout_gets_escaped_json_with_the_same_data(tmp_path, monkeypatch, capsys):
    cell = Cell(
        "Zelle für Träger ✓", arms=(EXAM_ARM,), targets=(Target("p", "P", -200, 400, "exam"),)
    )
    path = tmp_path / "u.cell.json"
    save_cell(cell, path)
    raw = io.BytesIO()
    monkeypatch.setattr(sys, "stdout", io.TextIOWrapper(raw, encoding="ascii"))
    code = main(["check", str(path), "--json"])
    sys.stdout.flush()
    assert code == 0
    assert json.loads(raw.getvalue().decode("ascii"))["cell"] == "Zelle für Träger ✓"
    raw.seek(0)
    raw.truncate()
    assert main(["check", str(path)]) == 0
    sys.stdout.flush()
    assert "Zelle f\\xfcr Tr\\xe4ger \\u2713" in raw.getvalue().decode("ascii")


def test_table_keeps_one_line_per_target_whatever_the_names_hold(tmp_path, capsys):
    # Ids come from the file: a newline or a terminal escape in one must not break the table.
    arm = Arm("a\x1b[2J", "Arm\rname", 0.0, 0.0, 0.0, 400.0, 250.0, (0.0, 180.0), (-120.0, 120.0))
    cell = Cell(
        "cell\nname",
        arms=(arm,),
        targets=(
            Target("far\nout", "F", 480.0, 480.0, arm.id),
            Target("ok", "O", -200.0, 400.0, arm.id),
        ),
    )
    path = tmp_path / "c.cell.json"
    save_cell(cell, path)
    code, out, _ = run_check(capsys, str(path))
    assert code == 1
    assert "\x1b" not in out and "\r" not in out
    rows = [line for line in out.splitlines() if " FAILS " in line or " feasible " in line]
    assert len(rows) == 2
    assert "far\\u000aout" in rows[0] and "beyond outer reach" in rows[0]
    assert "failing: far\\u000aout" in out


def test_reasons_and_reach_margin_through_the_command(tmp_path, capsys):
    # Reach annulus |a1 - a2| <= r <= a1 + a2 (standard closed form; check-values.md) and the
    # exam problem's angles (Q&A archive): (450, 180) fits only "negative"; (-200, 400) needs
    # |q2| = 96.46, past a +-80 elbow limit by 16.46 in both configurations.
    only_pos = dataclasses.replace(EXAM_ARM, id="pos", elbow="positive")
    short_elbow = dataclasses.replace(EXAM_ARM, id="short", q2_limits=(-80.0, 80.0))
    cell = Cell(
        "reasons",
        arms=(EXAM_ARM, only_pos, short_elbow),
        targets=(
            Target("hole", "H", 100.0, 0.0, "exam"),
            Target("excl", "E", 450.0, 180.0, "pos"),
            Target("q2", "Q", -200.0, 400.0, "short"),
        ),
    )
    path = tmp_path / "r.cell.json"
    save_cell(cell, path)
    code, out, _ = run_check(capsys, str(path), "--json")
    by_id = {t["id"]: t for t in json.loads(out)["targets"]}
    assert code == 1
    hole = by_id["hole"]
    assert hole["reach_margin"] == pytest.approx(100.0 - 150.0)
    assert hole["reason"] == "inside the inner hole by 50.0 mm" and hole["solutions"] == []
    excl = by_id["excl"]
    assert excl["reason"] == (
        "excluded by the arm's elbow setting 'positive' (only the negative elbow fits)"
    )
    assert excl["chosen_elbow"] is None and len(excl["solutions"]) == 2
    r = math.hypot(450.0, 180.0)
    assert excl["reach_margin"] == pytest.approx(min(650.0 - r, r - 150.0))
    q2 = by_id["q2"]
    assert q2["reason"] == "q2 limit by 16.5° (closest: positive elbow)"
    assert [s["limit_margin_deg"] for s in q2["solutions"]] == pytest.approx([-16.46] * 2, abs=5e-3)


def test_report_never_shows_negative_zero(tmp_path, capsys):
    # Float noise below the printed precision must not turn into "-0.0" in the report.
    cell = Cell("z", arms=(EXAM_ARM,), targets=(Target("t", "T", 650.0, -1e-9, "exam"),))
    path = tmp_path / "z.cell.json"
    save_cell(cell, path)
    code, out, _ = run_check(capsys, str(path), "--json")
    assert code == 0 and "-0.0" not in out
    t = json.loads(out)["targets"][0]
    assert t["solutions"][0]["singular"] and t["solutions"][0]["q_deg"] == [0.0, 0.0]


def test_every_problem_in_a_file_gets_its_own_line(tmp_path, capsys):
    # The rule: one message per problem, each naming the file, the JSON path and the value.
    good_path = tmp_path / "good.cell.json"
    save_cell(Cell("g", arms=(EXAM_ARM,), targets=(Target("a", "A", 1.0, 2.0, "exam"),)), good_path)
    d = json.loads(good_path.read_text())
    d["arms"][0]["links"][0] = -5
    d["arms"][0]["elbow"] = "up"
    d["targets"][0]["x"] = "1"
    path = tmp_path / "multi.cell.json"
    path.write_text(json.dumps(d), encoding="utf-8")
    before = path.read_bytes()
    code, out, err = run_check(capsys, str(path), "--json")
    assert code == 2 and out == ""
    assert err.splitlines() == [  # the file named as given on the command line
        f"{path}: arms[0].links[0]: must be a positive number, got -5",
        f'{path}: arms[0].elbow: must be one of "any", "positive" or "negative", got "up"',
        f'{path}: targets[0].x: must be a number, got "1"',
    ]
    assert path.read_bytes() == before

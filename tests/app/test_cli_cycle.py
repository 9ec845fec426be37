"""`elbowroom check` with cycle times and arms in time: report keys, table, exit codes."""

from __future__ import annotations

import json
import math
from pathlib import Path

from app.cli import main
from kinematics.cell import Arm, Cell, Sequence, Target
from kinematics.cellfile import save_cell

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "sample_cells").glob("*.cell.json"))

SEQUENCE_KEYS = {
    "arm",
    "targets",
    "cycle_time_s",
    "parts_per_minute",
    "single_configuration_cycle_time_s",
    "forced_changes",
    "missing",
    "segments",
}
SEGMENT_KEYS = {
    "from",
    "to",
    "time_s",
    "elbow_from",
    "elbow_to",
    "q_from_deg",
    "q_to_deg",
    "dwell_s",
}


def run_check(capsys, *args: str) -> tuple[int, str]:
    code = main(["check", *args])
    out, _ = capsys.readouterr()
    return code, out


def test_every_sample_cell_reports_sequences_and_interference_as_specified(capsys):
    for path in SAMPLES:
        _, out = run_check(capsys, str(path), "--json")
        rep = json.loads(out)
        assert len(rep["sequences"]) == len(json.loads(path.read_text())["sequences"])
        for q in rep["sequences"]:
            assert set(q) == SEQUENCE_KEYS
            # Every sample cell has speed data: each sequence has a time.
            assert q["cycle_time_s"] > 0 and q["missing"] == []
            assert math.isclose(q["parts_per_minute"], 60 / q["cycle_time_s"], rel_tol=1e-5)
            total = sum(s["time_s"] + s["dwell_s"] for s in q["segments"])
            assert math.isclose(total, q["cycle_time_s"], abs_tol=1e-5)
            assert [s["from"] for s in q["segments"]] == q["targets"]
            for s in q["segments"]:
                assert set(s) == SEGMENT_KEYS and len(s["q_from_deg"]) == 2
        it = rep["interference"]
        assert set(it) == {"horizon_s", "min_separation", "first_contact", "zones"}
        if len(rep["arms"]) < 2:
            assert it["horizon_s"] is None and it["zones"] == []
            continue
        assert it["horizon_s"] > 0 and it["min_separation"] >= 0
        for z in it["zones"]:
            assert set(z) == {"arms", "space", "intervals", "overlap", "suggested_start_shift_s"}
            assert set(z["intervals"]) == set(z["arms"])
            for iv in z["intervals"].values():
                assert all(0 <= a < b <= it["horizon_s"] + 1e-9 for a, b in iv)


def _head_on(start_b: float) -> Cell:
    # Two mirror-image arms whose tools swing into each other (see
    # tests/kinematics/test_interference.py for the timing against closed forms).
    def tool(q1):
        t1, t2 = math.radians(q1), math.radians(q1 + 30)
        return (300 * math.cos(t1) + 250 * math.cos(t2), 300 * math.sin(t1) + 250 * math.sin(t2))

    kw = dict(
        link_radii=(20.0, 20.0),
        joint_speed_dps=(90.0, 500.0),
        joint_accel_dps2=(180.0, 2000.0),
        extra={"tool_body": {"radius": 25.0}},
    )
    left = Arm("L", "Left", 0, 0, 0, 300, 250, (-100, 100), (-145, 145), "positive", **kw)
    right = Arm("R", "Right", 1000, 0, 180, 300, 250, (-100, 100), (-145, 145), "negative", **kw)
    (hx, hy), (mx, my) = tool(90.0), tool(0.0)
    ts = (
        Target("l_home", "L home", hx, hy, "L"),
        Target("l_meet", "L meet", mx, my, "L"),
        Target("r_home", "R home", 1000 - hx, hy, "R"),
        Target("r_meet", "R meet", 1000 - mx, my, "R"),
    )
    seqs = (
        Sequence("L", ("l_home", "l_meet")),
        Sequence("R", ("r_home", "r_meet"), {"start_s": start_b}),
    )
    return Cell("head on", arms=(left, right), targets=ts, sequences=seqs)


def test_arms_that_meet_exit_1_and_a_suggested_start_exits_0(tmp_path, capsys):
    path = tmp_path / "meet.cell.json"
    save_cell(_head_on(0.0), path)
    code, out = run_check(capsys, str(path), "--json")
    rep = json.loads(out)
    assert rep["summary"]["infeasible"] == 0
    c = rep["interference"]["first_contact"]
    assert code == 1 and c is not None
    assert c["arms"] == ["L", "R"] and c["bodies"] == ["tool", "tool"]
    assert c["moves"] == [["l_home", "l_meet"], ["r_home", "r_meet"]]
    z = next(z for z in rep["interference"]["zones"] if z["space"] == "operating")
    assert z["overlap"] and z["suggested_start_shift_s"] is not None
    period = rep["sequences"][1]["cycle_time_s"]
    save_cell(_head_on(z["suggested_start_shift_s"] % period), path)
    code, out = run_check(capsys, str(path), "--json")
    rep = json.loads(out)
    assert code == 0 and rep["interference"]["first_contact"] is None
    code, text = run_check(capsys, str(path))
    assert code == 0
    assert "Sequences (cycle times in s" in text and "no contact between arms" in text


def test_table_shows_contact_overlap_and_missing_speed_data(tmp_path, capsys):
    path = tmp_path / "meet.cell.json"
    save_cell(_head_on(0.0), path)
    _, text = run_check(capsys, str(path))
    assert "CONTACT at" in text and "OVERLAP (needs an interlock)" in text
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), joint_speed_dps=(300, 300))
    cell = Cell(
        "no accel",
        arms=(arm,),
        targets=(Target("p", "P", 500, 0, "a"), Target("q", "Q", 0, 500, "a")),
        sequences=(Sequence("a", ("p", "q")),),
    )
    save_cell(cell, path)
    code, text = run_check(capsys, str(path))
    assert code == 0
    assert "a (2 targets): no cycle time: missing joint_accel_dps2" in text

"""Cycle times in the target table, arms in time in the problems list."""

from __future__ import annotations

import math
import re
from dataclasses import replace
from pathlib import Path

import pytest
from PySide6.QtCore import Qt

from app.document import Document
from app.panels.problems import CONTACT_GLYPH, OVERLAP_GLYPH, ProblemsList
from app.panels.target_table import COLUMNS, TargetTable
from kinematics.cell import Arm, Cell, Sequence, Target
from kinematics.cellfile import load_cell
from kinematics.playback import interval_overlaps

ROOT = Path(__file__).resolve().parents[2]
ZONE = ROOT / "sample_cells" / "shared_zone_two_arm.cell.json"
KEYS = [c.key for c in COLUMNS]

pytestmark = pytest.mark.qt_log_ignore("propagateSizeHints")


def _problems(qtbot, cell) -> tuple[Document, ProblemsList]:
    doc = Document(cell)
    view = ProblemsList(doc)
    qtbot.addWidget(view)
    return doc, view


def _there_and_back(dwell_p: float = 0.5, speed: float = 60.0) -> Cell:
    """An arm swinging its shoulder 120 degrees from p to q and back, elbow fixed."""
    arm = Arm(
        "a",
        "A",
        0,
        0,
        0,
        400,
        250,
        (-180, 180),
        (-150, 150),
        elbow="positive",
        joint_speed_dps=(speed, 600),
        joint_accel_dps2=(120, 1200),
    )
    ts = (
        Target("p", "P", 500, 0, "a", extra={"dwell_s": dwell_p}),
        Target("q", "Q", 500 * math.cos(math.radians(120)), 500 * math.sin(math.radians(120)), "a"),
        Target("r", "R", 2000, 0, "a"),  # out of reach, in no sequence
    )
    return Cell("swing", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))


def _segment_texts(table: TargetTable) -> dict[str, str]:
    m = table.source
    col = KEYS.index("segment")
    return {m.target_id(r): m.index(r, col).data() for r in range(m.rowCount())}


def test_table_shows_the_move_into_each_target_and_its_dwell(qtbot):
    # 120 deg at 60 deg/s and 120 deg/s^2 takes 2.5 s (Nagarajan, Introduction to
    # Industrial Robotics, eq. 10.28: D/v + v/a = 2 + 0.5; check value).
    doc = Document(_there_and_back())
    table = TargetTable(doc)
    qtbot.addWidget(table)
    texts = _segment_texts(table)
    assert texts == {"p": "2.500 s + 0.500 s dwell", "q": "2.500 s", "r": "—"}
    header = table.source.headerData(KEYS.index("segment"), Qt.Orientation.Horizontal, 0)
    assert header == "move in\n+ dwell (s)"
    # Faster shoulder: 120 deg at 120 deg/s and 120 deg/s^2 is 120/120 + 120/120 = 2 s
    # (same equation, 120 >= 120^2/120); only the plans change, the verdicts do not.
    faster = replace(doc.cell, arms=(replace(doc.cell.arms[0], joint_speed_dps=(120, 600)),))
    doc.apply(faster)
    assert _segment_texts(table)["q"] == "2.000 s"
    assert _segment_texts(table)["p"] == "2.000 s + 0.500 s dwell"


def test_head_on_meeting_listed_with_its_time(qtbot, head_on):
    doc, view = _problems(qtbot, head_on.cell())
    (line, t), *rest = view.time_problems()
    assert line.startswith(f"{CONTACT_GLYPH} arms L and R touch at ")
    shown = float(re.search(r"touch at (\d+\.\d+) s", line).group(1))
    # The time in the list is the engine's (to its three decimals), within one sample of
    # the closed-form meeting time.
    assert shown == pytest.approx(t, abs=5e-4)
    assert head_on.within_one_sample(shown, head_on.contact_time(), rounding_s=5e-4)
    assert "L tool moving l_home → l_meet" in line and "R tool moving r_home → r_meet" in line
    assert line in view.lines()
    # The operating zones overlap too: listed with the start change that separates them.
    it = doc.evaluation.interference()
    z = next(z for z in it.zones if z.space == "operating")
    both = interval_overlaps(z.intervals["L"], z.intervals["R"])
    zone_line = next(text for text, _t in rest if "operating zone" in text)
    assert zone_line.startswith(OVERLAP_GLYPH)
    assert f"change R's start_s by {z.suggested_start_shift_s:+.3f} s" in zone_line
    assert f"{both[0][0]:.2f}–{both[0][1]:.2f} s" in zone_line
    # Besides those: the restricted spaces overlap (an interlock is needed), one entry.
    assert view.problem_zones() == [("L", "R")]
    assert view.count_of_problems == len(view.time_problems()) + 1
    # Clicking the entry asks for its time.
    row = view.lines().index(line)
    with qtbot.waitSignal(view.time_requested) as got:
        view.itemClicked.emit(view.item(row))
    assert got.args == [pytest.approx(t)]


def test_the_suggested_start_clears_the_list(qtbot, head_on):
    doc, view = _problems(qtbot, head_on.cell())
    it = doc.evaluation.interference()
    z = next(z for z in it.zones if z.space == "operating")
    period = it.timelines[1].cycle_time_s
    doc.apply(head_on.cell(start_b=z.suggested_start_shift_s % period))
    assert not [t for t, _ in view.time_problems() if t.startswith(CONTACT_GLYPH)]
    assert not any("operating zone" in t for t, _ in view.time_problems())


def test_arms_in_time_wait_for_the_pause(qtbot):
    doc, view = _problems(qtbot, load_cell(ZONE))
    before = view.time_problems()
    assert any(t.startswith(CONTACT_GLYPH) for t, _ in before)
    cell = doc.cell
    # Move the packer well away: its arm can no longer meet the loader.
    far = replace(cell.arms[1], x=cell.arms[1].x + 2000.0)
    doc.preview(replace(cell, arms=(cell.arms[0], far)))
    assert view.time_problems() == before and view.moves_pending
    doc.commit_preview("Move base")
    assert not any(t.startswith(CONTACT_GLYPH) for t, _ in view.time_problems())

"""The plain-Python document model (no Qt): edits, drags, dirty state, selection."""

from __future__ import annotations

import subprocess
import sys
from dataclasses import replace
from pathlib import Path

from app.document import Changes, Document, Edit, Selection
from kinematics.cell import Arm, Cell, Target
from kinematics.cellfile import dumps_cell, load_cell

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"


def small_cell() -> Cell:
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    return Cell("bench", arms=(arm,), targets=(Target("t1", "T1", 450, 180, "a"),))


def moved(cell: Cell, x: float) -> Cell:
    return replace(cell, arms=(replace(cell.arms[0], x=x),))


class Recorder:
    def __init__(self, doc: Document) -> None:
        self.changes: list[Changes] = []
        self.dirty: list[bool] = []
        doc.events.cell_changed.connect(self.changes.append)
        doc.events.dirty_changed.connect(self.dirty.append)


def test_document_model_loads_without_qt():
    code = "import sys, app.document; print(sorted(m for m in sys.modules if 'PySide6' in m))"
    out = subprocess.run(
        [sys.executable, "-c", code], cwd=REPO, capture_output=True, text=True, check=True
    )
    assert out.stdout.strip() == "[]"


def test_edit_goes_through_push_and_notifies():
    doc = Document(small_cell())
    rec = Recorder(doc)
    pushed: list[Edit] = []
    doc.push = lambda e: (pushed.append(e), doc.apply(e.after))
    doc.edit("Move base of A", moved(doc.cell, 10.0))
    assert [e.label for e in pushed] == ["Move base of A"]
    assert doc.cell.arms[0].x == 10.0
    assert rec.changes == [Changes(arms=frozenset({"a"}))]
    assert rec.dirty == [True] and doc.dirty


def test_edit_to_the_same_cell_records_nothing():
    doc = Document(small_cell())
    pushed: list[Edit] = []
    doc.push = pushed.append
    doc.edit("nothing", replace(doc.cell))
    assert pushed == []


def test_a_drag_is_one_edit_from_start_to_end():
    doc = Document(small_cell())
    start = doc.cell
    pushed: list[Edit] = []
    doc.push = lambda e: (pushed.append(e), doc.apply(e.after))
    for i in range(1, 30):
        doc.preview(moved(start, float(i)))
    assert doc.previewing and pushed == []
    doc.commit_preview("Move base of A")
    assert len(pushed) == 1
    assert pushed[0].before is start and pushed[0].after.arms[0].x == 29.0
    assert not doc.previewing


def test_cancelled_drag_restores_the_start():
    doc = Document(small_cell())
    start = dumps_cell(doc.cell)
    for i in range(5):
        doc.preview(moved(doc.cell, float(i + 1)))
    doc.cancel_preview()
    assert dumps_cell(doc.cell) == start
    assert not doc.dirty


def test_edits_with_one_merge_key_merge_in_order():
    c0 = small_cell()
    c1, c2 = moved(c0, 1.0), moved(c0, 2.0)
    e = Edit("Nudge", c0, c1, merge_key="nudge")
    assert e.merge(Edit("Nudge", c1, c2, merge_key="nudge"))
    assert e.before is c0 and e.after is c2
    assert not e.merge(Edit("Other", c2, c0, merge_key="other"))
    assert not e.merge(Edit("Nudge", c1, c0, merge_key="nudge"))  # not following on


def test_dirty_follows_the_saved_version(tmp_path):
    doc = Document(load_cell(TRAY), TRAY)
    rec = Recorder(doc)
    saved = doc.cell
    doc.apply(moved(saved, 5.0))
    assert doc.dirty
    doc.apply(saved)  # back where the file is: clean again
    assert not doc.dirty
    assert rec.dirty == [True, False]
    doc.apply(moved(saved, 7.0))
    doc.mark_saved(tmp_path / "x.cell.json")
    assert not doc.dirty and doc.path == tmp_path / "x.cell.json"


def test_replace_starts_clean_and_clears_selection():
    doc = Document(small_cell())
    doc.apply(moved(doc.cell, 3.0))
    doc.selection.set(["t1"])
    paths: list[Path | None] = []
    doc.events.path_changed.connect(paths.append)
    doc.replace(load_cell(TRAY), TRAY)
    assert not doc.dirty and doc.selection.ids == ()
    assert paths == [TRAY]


def test_evaluation_is_recomputed_for_each_change():
    doc = Document(small_cell())
    first = doc.evaluation
    assert doc.evaluation is first
    doc.apply(moved(doc.cell, 5000.0))
    assert doc.evaluation is not first
    assert not bool(doc.evaluation.arms["a"].feasible[0])


def test_changes_between_name_what_differs():
    c0 = small_cell()
    c1 = replace(c0, targets=c0.targets + (Target("t2", "T2", 0, 500, "a"),))
    ch = Changes.between(c0, c1)
    assert ch.targets == frozenset({"t2"}) and ch.structure and not ch.arms
    assert not Changes.between(c0, replace(c0))
    assert Changes.between(c0, replace(c0, name="other")).other


def test_selection_emits_only_on_change_and_drops_repeats():
    sel = Selection()
    seen: list[tuple[str, ...]] = []
    sel.changed.connect(seen.append)
    sel.set(["a", "b", "a"])
    sel.set(("a", "b"))
    sel.clear()
    assert seen == [("a", "b"), ()]


def test_plans_wait_for_the_pause_and_then_equal_check():
    # A sequence with speed data is planned (kinematics.plan) by `check`; while a drag steps
    # the window keeps the one-configuration rule, and once the steps pause its evaluation
    # is the one `check` makes of the same cell.
    from pathlib import Path

    import numpy as np

    from kinematics.cellfile import load_cell
    from kinematics.evaluate import evaluate_cell

    path = Path(__file__).resolve().parents[2] / "sample_cells" / "press_elbow_change.cell.json"
    doc = Document(load_cell(path))
    assert doc.evaluation.planned
    arm = doc.cell.arms[0]
    doc.preview(replace(doc.cell, arms=(replace(arm, x=arm.x + 5.0), *doc.cell.arms[1:])))
    assert doc.unsettled and not doc.evaluation.planned
    doc.settle()
    assert not doc.unsettled and doc.evaluation.planned
    fresh = evaluate_cell(doc.cell)
    for aid, ev in fresh.arms.items():
        mine = doc.evaluation.arms[aid]
        assert np.array_equal(mine.chosen, ev.chosen)
        assert [p.cycle_time_s for p in mine.plans] == [p.cycle_time_s for p in ev.plans]

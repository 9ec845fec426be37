"""The arm panel, the target table and the problems list, each on its own document."""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import shapely
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication, QLineEdit

from app.document import Document
from app.panels.arm_panel import ArmPanel
from app.panels.problems import NO_PROBLEMS, ProblemsList
from app.panels.target_table import COLUMNS, SORT_ROLE, TargetTable
from app.panels.validate import Invalid, arm_field, parse_number
from kinematics.cell import Arm, Cell, Fixture, Sequence, Target
from kinematics.cellfile import dumps_cell, load_cell

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"
KITTING = REPO / "sample_cells" / "kitting_two_arm.cell.json"
SCREWS = REPO / "sample_cells" / "screw_station.cell.json"
KEYS = [c.key for c in COLUMNS]

# The offscreen platform warns about a window-manager feature it lacks.
pytestmark = pytest.mark.qt_log_ignore("propagateSizeHints")


class Pushes:
    """Counts edits reaching the document's push (what an undo stack would record)."""

    def __init__(self, doc: Document) -> None:
        self.labels: list[str] = []

        def push(edit):
            self.labels.append(edit.label)
            doc.apply(edit.after)

        doc.push = push


@pytest.fixture
def doc():
    return Document(load_cell(TRAY), TRAY)


@pytest.fixture
def panel(qtbot, doc):
    p = ArmPanel(doc)
    qtbot.addWidget(p)
    p.show()
    qtbot.waitExposed(p)
    return p


def type_into(qtbot, edit: QLineEdit, text: str) -> None:
    edit.setFocus()
    edit.selectAll()
    qtbot.keyClick(edit, Qt.Key.Key_Backspace)
    if text:
        qtbot.keyClicks(edit, text)


# ---------------------------------------------------------------------------- arm panel


@pytest.mark.parametrize(
    ("key", "text", "reason"),
    [
        ("a1", "-5", "must be greater than 0, got -5"),
        ("a2", "0", "must be greater than 0, got 0"),
        ("a1", "abc", "not a number: 'abc'"),
        ("x", "nan", "must be a finite number"),
        ("y", "1e12", "must be between -1e+09 and 1e+09"),
        ("q1_min", "200", "min must be below max (200 >= 132)"),
        ("q2_max", "-150", "min must be below max (-145 >= -150)"),
        ("q1_min", "-600", "range is 732°, at most 720° allowed"),
        ("name", "", "name must not be empty"),
        ("r1", "0", "must be greater than 0, got 0"),
        ("w2", "fast", "not a number: 'fast'"),
    ],
)
def test_invalid_entry_is_refused_with_reason_and_model_unchanged(
    qtbot, panel, doc, key, text, reason
):
    pushes = Pushes(doc)
    before = dumps_cell(doc.cell)
    edit, label = panel.edits[key], panel.reasons[key]
    type_into(qtbot, edit, text)
    # The reason shows while typing, marked by a cross and the dashed-border style, not by colour.
    assert label.isVisible()
    assert label.text() == f"✕ {reason}" or label.text().startswith(f"✕ {reason}")
    assert edit.property("invalid") is True
    qtbot.keyClick(edit, Qt.Key.Key_Return)
    panel.edits["a2" if key != "a2" else "a1"].setFocus()  # focus-out as well
    QApplication.processEvents()
    assert dumps_cell(doc.cell) == before
    assert pushes.labels == []
    assert label.isVisible()  # still shown so the user can fix the text
    edit.setFocus()
    qtbot.keyClick(edit, Qt.Key.Key_Escape)
    assert not label.isVisible() and edit.property("invalid") is False
    assert edit.text() == arm_field(key).get(doc.cell.arms[0])


def test_valid_entry_commits_on_enter_as_one_labelled_step(qtbot, panel, doc):
    pushes = Pushes(doc)
    type_into(qtbot, panel.edits["a1"], "312.5")
    assert pushes.labels == []  # nothing changes while typing
    qtbot.keyClick(panel.edits["a1"], Qt.Key.Key_Return)
    assert doc.cell.arms[0].a1 == 312.5
    assert pushes.labels == ["Change a1 of Tray loader"]


def test_valid_entry_commits_on_focus_out(qtbot, panel, doc):
    pushes = Pushes(doc)
    type_into(qtbot, panel.edits["heading_deg"], "45")
    panel.edits["x"].setFocus()
    QApplication.processEvents()
    assert doc.cell.arms[0].heading_deg == 45.0
    assert pushes.labels == ["Change heading of Tray loader"]


def test_typing_the_same_value_records_no_step(qtbot, panel, doc):
    pushes = Pushes(doc)
    type_into(qtbot, panel.edits["a2"], "275.0")
    qtbot.keyClick(panel.edits["a2"], Qt.Key.Key_Return)
    assert pushes.labels == []
    assert panel.edits["a2"].text() == "275"


def test_optional_pairs_clear_together_and_fill_from_one_value(qtbot, panel, doc):
    type_into(qtbot, panel.edits["r2"], "")
    qtbot.keyClick(panel.edits["r2"], Qt.Key.Key_Return)
    assert doc.cell.arms[0].link_radii is None
    assert panel.edits["r1"].text() == "" and panel.edits["r2"].text() == ""
    type_into(qtbot, panel.edits["r1"], "30")
    qtbot.keyClick(panel.edits["r1"], Qt.Key.Key_Return)
    assert doc.cell.arms[0].link_radii == (30.0, 30.0)


def test_elbow_setting_choice_changes_the_arm(qtbot, panel, doc):
    pushes = Pushes(doc)
    combo = panel.elbow
    combo.setCurrentIndex(combo.findData("negative"))
    assert doc.cell.arms[0].elbow == "negative"
    assert pushes.labels == ["Change elbow setting of Tray loader"]
    doc.apply(replace(doc.cell, arms=(replace(doc.cell.arms[0], elbow="positive"),)))
    assert combo.currentData() == "positive"
    assert pushes.labels == ["Change elbow setting of Tray loader"]  # no echo


def test_fields_follow_the_model_without_echo(qtbot, panel, doc):
    pushes = Pushes(doc)
    doc.apply(replace(doc.cell, arms=(replace(doc.cell.arms[0], a1=301.25),)))
    assert panel.edits["a1"].text() == "301.25"
    assert pushes.labels == []


def test_model_change_does_not_overwrite_text_being_typed(qtbot, panel, doc):
    type_into(qtbot, panel.edits["a1"], "33")
    doc.apply(replace(doc.cell, arms=(replace(doc.cell.arms[0], x=5.0),)))
    assert panel.edits["a1"].text() == "33"
    assert panel.edits["x"].text() == "5"


def test_arm_choice_with_several_arms_and_selection(qtbot):
    doc = Document(load_cell(KITTING), KITTING)
    panel = ArmPanel(doc)
    qtbot.addWidget(panel)
    panel.show()
    assert panel.arm_choice.isVisible() and panel.arm_choice.count() == 2
    right = doc.cell.arm("right")
    panel.select_arm("right")
    assert panel.edits["a1"].text() == "350" and panel.edits["heading_deg"].text() == "180"
    type_into(qtbot, panel.edits["a2"], "210")
    qtbot.keyClick(panel.edits["a2"], Qt.Key.Key_Return)
    assert doc.cell.arm("right").a2 == 210.0 and doc.cell.arm("left").a2 == 250.0
    assert right.a2 == 200.0
    doc.selection.set(["left"])
    assert panel.arm.id == "left" and panel.edits["name"].text() == "Left kitting arm"
    target = next(t for t in doc.cell.targets if t.arm == "right")
    doc.selection.set([target.id])
    assert panel.arm.id == "right"


def test_single_arm_hides_the_choice_and_units_follow_the_cell(qtbot):
    doc = Document(load_cell(SCREWS), SCREWS)
    panel = ArmPanel(doc)
    qtbot.addWidget(panel)
    panel.show()
    assert not panel.arm_choice.isVisible()
    assert panel.units["a1"].text() == "in" and panel.units["q1_min"].text() == "°"


def test_parse_number_refuses_non_numbers_and_infinities():
    assert parse_number(" 1e3 ") == 1000.0
    for bad in ("", "1,5", "inf", "-Infinity", "12 mm"):
        with pytest.raises(Invalid):
            parse_number(bad)


# ---------------------------------------------------------------------------- target table


@pytest.fixture
def table(qtbot, doc):
    t = TargetTable(doc)
    qtbot.addWidget(t)
    t.resize(1200, 400)
    t.show()
    qtbot.waitExposed(t)
    return t


def column_values(table: TargetTable, key: str) -> list[str]:
    proxy = table.proxy
    c = KEYS.index(key)
    return [proxy.index(r, c).data() for r in range(proxy.rowCount())]


def test_sorting_by_reach_margin_is_numeric(table, doc):
    # Reach margin of a two-link arm: distance to the nearer of the circles r = a1 + a2
    # and r = |a1 - a2| (the reachable annulus; Siciliano et al., sec. 2.12, from memory).
    arm = doc.cell.arms[0]

    def margin(t: Target) -> float:
        r = math.hypot(t.x - arm.x, t.y - arm.y)
        return min(arm.a1 + arm.a2 - r, r - abs(arm.a1 - arm.a2))

    table.sortByColumn(KEYS.index("reach"), Qt.SortOrder.AscendingOrder)
    expected = [t.id for t in sorted(doc.cell.targets, key=margin)]
    assert column_values(table, "id") == expected
    shown = [float(v) for v in column_values(table, "reach")]
    assert shown == sorted(shown)
    assert shown[0] == pytest.approx(
        margin(next(t for t in doc.cell.targets if t.id == expected[0])), abs=0.05
    )


def test_sorting_by_status_puts_failures_together(table):
    table.sortByColumn(KEYS.index("status"), Qt.SortOrder.DescendingOrder)
    statuses = column_values(table, "status")
    fails = [s for s in statuses if "fails" in s]
    assert fails and statuses[: len(fails)] == fails


def test_table_edit_of_x_is_validated_and_undoable(table, doc):
    pushes = Pushes(doc)
    src = table.source
    refused: list[str] = []
    src.refused.connect(refused.append)
    before = dumps_cell(doc.cell)
    row = src.row_of("reject_bin")
    assert not src.setData(src.index(row, KEYS.index("x")), "left a bit")
    assert refused == ["✕ reject_bin x: not a number: 'left a bit'"]
    assert dumps_cell(doc.cell) == before and pushes.labels == []
    assert src.setData(src.index(row, KEYS.index("y")), "-300")
    assert pushes.labels == ["Move reject_bin"]
    # Moved in front of the arm (y = -300 is still behind it, heading 90): still a q1 failure?
    status = src.index(row, KEYS.index("status")).data()
    assert (
        status == column_values(table, "status")[table.proxy.mapFromSource(src.index(row, 0)).row()]
    )


def test_table_edit_through_the_view_editor(qtbot, table, doc):
    pushes = Pushes(doc)
    src = table.source
    row = src.row_of("tray_a1")
    index = table.proxy.mapFromSource(src.index(row, KEYS.index("name")))
    table.setCurrentIndex(index)
    table.edit(index)
    editor = QApplication.focusWidget()
    assert isinstance(editor, QLineEdit)
    editor.selectAll()
    qtbot.keyClicks(editor, "Tray pocket A1, left")
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    QApplication.processEvents()  # the delegate commits in a queued call
    assert next(t for t in doc.cell.targets if t.id == "tray_a1").name == "Tray pocket A1, left"
    assert pushes.labels == ["Rename tray_a1"]


def test_assigning_a_target_to_another_arm_reevaluates_it(qtbot):
    doc = Document(load_cell(KITTING), KITTING)
    pushes = Pushes(doc)
    table = TargetTable(doc)
    qtbot.addWidget(table)
    src = table.source
    asked = []
    src.ask_sequence_place = lambda ids, arm: asked.append((ids, arm)) or "drop"
    t = next(t for t in doc.cell.targets if t.arm == "left")
    row = src.row_of(t.id)
    assert not src.setData(src.index(row, KEYS.index("arm")), "middle")
    assert asked == []  # an arm that does not exist is refused before anything is asked
    assert src.setData(src.index(row, KEYS.index("arm")), "right")
    assert asked == [([t.id], "right")]  # its place in the left arm's sequence: asked
    assert pushes.labels == [f"Assign {t.id} to right"]
    assert src.index(row, KEYS.index("arm")).data() == "right"
    ev, i = doc.evaluation.locate(t.id)
    assert ev.arm.id == "right"
    # Answered "drop": it left the left arm's sequence, which may only visit its own targets.
    left_seq = next(s for s in doc.cell.sequences if s.arm == "left")
    assert t.id not in left_seq.targets


def test_table_headers_name_the_units(qtbot):
    doc = Document(load_cell(SCREWS), SCREWS)
    table = TargetTable(doc)
    qtbot.addWidget(table)
    m = table.source
    assert (
        m.headerData(KEYS.index("x"), Qt.Orientation.Horizontal, Qt.ItemDataRole.DisplayRole)
        == "x\n(in)"
    )
    assert (
        m.headerData(KEYS.index("q1p"), Qt.Orientation.Horizontal, Qt.ItemDataRole.DisplayRole)
        == "q1 +\n(°)"
    )


def test_table_rows_follow_added_and_removed_targets(table, doc):
    extra = Target("t_new", "New one", 100.0, 300.0, doc.cell.arms[0].id)
    doc.apply(replace(doc.cell, targets=doc.cell.targets + (extra,)))
    assert table.source.rowCount() == len(doc.cell.targets)
    assert "t_new" in column_values(table, "id")
    doc.selection.set(["t_new"])
    assert table.selected_ids() == ["t_new"]
    doc.apply(replace(doc.cell, targets=doc.cell.targets[:-1]))
    assert "t_new" not in column_values(table, "id")


def test_sort_values_are_numbers_for_numeric_columns(table):
    src = table.source
    for key in ("x", "y", "q1p", "limit", "reach", "manip"):
        value = src.index(0, KEYS.index(key)).data(SORT_ROLE)
        assert isinstance(value, float)


# ---------------------------------------------------------------------------- problems list


def test_problems_list_follows_the_model(qtbot):
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    cell = Cell("bench", arms=(arm,), targets=(Target("t1", "Shelf", 300, 300, "a"),))
    doc = Document(cell)
    problems = ProblemsList(doc)
    qtbot.addWidget(problems)
    counts: list[int] = []
    problems.count_changed.connect(counts.append)
    assert problems.lines() == [NO_PROBLEMS]
    # Worked example (Q&A archive, as in kinematics.ik): a1 400, a2 250, limits 0..180 and
    # -120..120, target (480, 480) is beyond reach: hypot = 678.8 > 650.
    far = replace(cell, targets=(Target("t1", "Shelf", 480, 480, "a"),))
    doc.apply(far)
    assert counts == [1]
    assert problems.lines() == [
        f"✕ t1 Shelf — beyond outer reach by {math.hypot(480, 480) - 650:.1f} mm"
    ]
    doc.apply(cell)
    assert counts == [1, 0] and problems.lines() == [NO_PROBLEMS]


def _q1_both(a1: float, a2: float, x: float, y: float) -> tuple[float, float]:
    """q1 of both configurations (Craig, Introduction to Robotics, 3rd ed., sec. 4.4).

    The section number is from memory.
    """
    c2 = (x * x + y * y - a1 * a1 - a2 * a2) / (2 * a1 * a2)
    s2 = math.sqrt(1 - c2 * c2)
    k = math.atan2(a2 * s2, a1 + a2 * c2)
    return math.degrees(math.atan2(y, x) - k), math.degrees(math.atan2(y, x) + k)


def test_excluded_configuration_is_named(qtbot):
    # Worked example (Q&A archive, as in kinematics.ik): a1 400, a2 250, limits 0..180 and
    # -120..120, target (450, 180): only the negative configuration is within limits.
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120), elbow="positive")
    doc = Document(Cell("bench", arms=(arm,), targets=(Target("t1", "Bin", 450, 180, "a"),)))
    problems = ProblemsList(doc)
    qtbot.addWidget(problems)
    q1p, q1n = _q1_both(400, 250, 450, 180)
    assert q1p < 0 <= q1n  # the positive one is below the 0 degree limit
    assert problems.lines() == [
        "■ t1 Bin — excluded by the arm's elbow setting 'positive' (only the negative elbow fits)"
    ]


def test_limit_failure_names_the_joint_the_amount_and_the_closest_configuration(qtbot):
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (30, 180), (-120, 120))
    doc = Document(Cell("bench", arms=(arm,), targets=(Target("t1", "Bin", 450, -180, "a"),)))
    problems = ProblemsList(doc)
    qtbot.addWidget(problems)
    q1p, q1n = _q1_both(400, 250, 450, -180)
    # Both are below the 30 degree limit; the negative one comes closer.
    assert q1p < q1n < 30
    assert problems.lines() == [f"▲ t1 Bin — q1 limit by {30 - q1n:.1f}° (closest: negative elbow)"]


# ---------------------------------------------------------------------------- clearance

COLUMN = REPO / "sample_cells" / "column_one_elbow.cell.json"
# A post (4 m tall, so it blocks the links) across the path of the pick -> nest move.
POST = Fixture("post", "Post P1", "column", ((280, 330), (310, 330), (310, 360), (280, 360)), 4000)


def _bodies_at(arm: Arm, q1: float, q2: float) -> dict[str, shapely.Geometry]:
    """Centre segments of the links and the tool point, by the two-link forward kinematics
    x = a1 cos(h + q1) + a2 cos(h + q1 + q2) (Craig, Introduction to Robotics, 3rd ed.,
    sec. 3.6, worked planar arm; section from memory)."""
    h, q1, q2 = math.radians(arm.heading_deg), math.radians(q1), math.radians(q2)
    base = (arm.x, arm.y)
    elbow = (base[0] + arm.a1 * math.cos(h + q1), base[1] + arm.a1 * math.sin(h + q1))
    tool = (
        elbow[0] + arm.a2 * math.cos(h + q1 + q2),
        elbow[1] + arm.a2 * math.sin(h + q1 + q2),
    )
    return {
        "link 1": shapely.LineString([base, elbow]),
        "link 2": shapely.LineString([elbow, tool]),
        "tool": shapely.Point(tool),
    }


def _reference_clearance(cell: Cell, target: Target, q: tuple[float, float]) -> float:
    """Smallest clearance by shapely (the reference library): a capsule is the set of points
    within r of its centre segment, so its distance to a polygon is shapely's exact segment
    distance minus r. Blocking per the README's 2.5-D rule: links by fixtures at least as
    tall as the link underside, the tool by fixtures taller than the work height."""
    arm = cell.arm(target.arm)
    r1, r2 = arm.link_radii
    radius = {"link 1": r1, "link 2": r2, "tool": arm.extra["tool_body"]["radius"]}
    wh = target.extra["work_height"]
    best = math.inf
    for name, core in _bodies_at(arm, *q).items():
        for f in cell.fixtures:
            blocks = f.height > wh if name == "tool" else f.height >= arm.link_underside_height
            if blocks:
                best = min(best, core.distance(shapely.Polygon(f.outline)) - radius[name])
    return best


@pytest.fixture
def column_doc():
    return Document(load_cell(COLUMN), COLUMN)


def _row_text(table: TargetTable, tid: str, key: str) -> str:
    src = table.source
    return src.index(src.row_of(tid), KEYS.index(key)).data()


def test_table_shows_the_clearance_of_each_configuration(qtbot, column_doc):
    table = TargetTable(column_doc)
    qtbot.addWidget(table)
    cell = column_doc.cell
    nest = next(t for t in cell.targets if t.id == "nest")
    ev, i = column_doc.evaluation.locate("nest")
    q_pos, q_neg = (tuple(float(v) for v in ev.ik.q_deg[i, k]) for k in (0, 1))
    # The positive configuration clears everything: its clearance is shapely's distance.
    ref = _reference_clearance(cell, nest, q_pos)
    assert ref > 0
    assert float(_row_text(table, "nest", "clear_p")) == pytest.approx(ref, abs=0.051)
    # The negative one drives link 1 into the column: shapely finds link 1's centre segment
    # closer to the column than the link radius, and the cell is marked, not only coloured.
    column = shapely.Polygon(next(f for f in cell.fixtures if f.id == "column").outline)
    link1 = _bodies_at(cell.arms[0], *q_neg)["link 1"]
    assert link1.distance(column) < cell.arms[0].link_radii[0]
    neg = _row_text(table, "nest", "clear_n")
    assert neg.endswith(" ✕") and float(neg.split()[0]) < 0
    assert _row_text(table, "nest", "status") == "● feasible"
    assert _row_text(table, "nest", "elbow") == "positive"
    # Nearest fixture of the chosen (positive) configuration, with the body nearest it.
    near = _row_text(table, "nest", "nearest")
    assert not near.startswith("✕") and near.startswith("Building column C4 (")
    m = table.source
    header = m.headerData(KEYS.index("clear_n"), Qt.Orientation.Horizontal)
    assert header == "clearance −\n(mm)"
    sort = m.index(m.row_of("nest"), KEYS.index("clear_n")).data(SORT_ROLE)
    assert isinstance(sort, float) and sort < 0


def test_collision_status_names_the_fixture_and_the_body(qtbot, column_doc):
    table = TargetTable(column_doc)
    qtbot.addWidget(table)
    cell = column_doc.cell
    spare = next(t for t in cell.targets if t.id == "spare")
    ev, i = column_doc.evaluation.locate("spare")
    # shapely agrees that neither configuration clears the column.
    for k in (0, 1):
        q = tuple(float(v) for v in ev.ik.q_deg[i, k])
        assert _reference_clearance(cell, spare, q) <= 0
    status = _row_text(table, "spare", "status")
    assert status.startswith("★ fails: collides with Building column C4 (link ")
    # The status tooltip says how deep (the clearance columns show it too).
    tip = table.source.index(table.source.row_of("spare"), KEYS.index("status")).data(
        Qt.ItemDataRole.ToolTipRole
    )
    assert "deep" in tip
    near = _row_text(table, "spare", "nearest")
    assert near.startswith("✕ collides: Building column C4 (link ")
    problems = ProblemsList(column_doc)
    qtbot.addWidget(problems)
    assert problems.problem_ids() == ["spare"]
    (line,) = problems.lines()
    assert line.startswith("★ spare Spare nest — collides with Building column C4 (link ")
    assert line.endswith("closest: positive elbow)") or line.endswith("closest: negative elbow)")
    # The depth shown is the engine's, in the cell's units.
    k = 0 if "positive" in line else 1
    assert f"{-float(ev.clearance[i, k]):.1f} mm deep" in line


def test_colliding_move_is_listed_and_a_click_shows_both_targets(qtbot, column_doc):
    cell = column_doc.cell
    with_post = replace(cell, fixtures=cell.fixtures + (POST,))
    column_doc.apply(with_post)
    problems = ProblemsList(column_doc)
    qtbot.addWidget(problems)
    problems.resize(700, 300)
    problems.show()
    qtbot.waitExposed(problems)
    assert problems.problem_moves() == [("arm", "pick", "nest"), ("arm", "nest", "pick")]
    lines = problems.lines()
    assert lines[0].startswith("★ spare ")
    assert lines[1].startswith("★ move pick → nest — collides with Post P1 (link ")
    assert problems.count_of_problems == 3 and problems.failing_targets == 1
    # Reference: somewhere along the straight joint path between the chosen ends, shapely
    # finds a link closer to the post than its radius (sampled every 0.5 degrees of q1).
    ev = column_doc.evaluation.arms["arm"]
    qa, qb = (ev.ik.q_deg[ev.index(t), int(ev.chosen[ev.index(t)])] for t in ("pick", "nest"))
    steps = int(abs(qb[0] - qa[0]) / 0.5) + 1
    post = shapely.Polygon(POST.outline)
    arm = cell.arms[0]
    hit = False
    for s in np.linspace(0.0, 1.0, steps + 1):
        q = qa + s * (qb - qa)
        shapes = _bodies_at(arm, float(q[0]), float(q[1]))
        hit |= any(
            shapes[n].distance(post) < r for n, r in zip(("link 1", "link 2"), arm.link_radii)
        )
    assert hit
    zoomed: list[list[str]] = []
    problems.zoom_targets_requested.connect(zoomed.append)
    rect = problems.visualItemRect(problems.item(1))
    qtbot.mouseClick(problems.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    assert column_doc.selection.ids == ("pick", "nest")
    assert zoomed == [["pick", "nest"]]
    assert problems.item(1).isSelected() and problems.item(2).isSelected()
    # Taking the post away again clears the move entries (no stale cached result).
    column_doc.apply(cell)
    assert problems.problem_moves() == []


def test_impossible_move_is_listed_with_its_reason(qtbot):
    # q2 limits -200..-10 exclude full stretch (q2 = 0). Target q sits near full fold
    # where the positive pose (q2 = +170, i.e. -190) is the one within the q1 limits; p only
    # in the negative one: the move between them would need q2 = 0 (or fold through 180).
    arm = Arm("a", "A", 0, 0, 0, 400, 250, (-170, 170), (-200, -10), link_radii=(20, 15))
    targets = (Target("p", "P", 300, 400, "a"), Target("q", "Q", -157.6, 27.8, "a"))
    cell = Cell("c", arms=(arm,), targets=targets, sequences=(Sequence("a", ("p", "q")),))
    doc = Document(cell)
    ev = doc.evaluation.arms["a"]
    assert [int(c) for c in ev.chosen] == [1, 0]  # different configurations at the two ends
    problems = ProblemsList(doc)
    qtbot.addWidget(problems)
    assert problems.problem_ids() == []
    assert problems.lines() == [
        "▼ move p → q — configuration change needs full stretch (q2 = 0), outside the q2 limits",
        "▼ move q → p — configuration change needs full stretch (q2 = 0), outside the q2 limits",
    ]


def test_moves_are_checked_again_once_a_drag_pauses(qtbot, column_doc):
    problems = ProblemsList(column_doc)
    qtbot.addWidget(problems)
    cell = column_doc.cell
    column_doc.preview(replace(cell, fixtures=cell.fixtures + (POST,)))
    # Target entries follow each step at once; the moves wait for the pause.
    assert problems.problem_ids() == ["spare"] and problems.moves_pending
    assert problems.problem_moves() == []
    qtbot.waitUntil(lambda: not problems.moves_pending, timeout=3000)
    assert problems.problem_moves() == [("arm", "pick", "nest"), ("arm", "nest", "pick")]
    column_doc.cancel_preview()
    assert problems.problem_moves() == [] and not problems.moves_pending

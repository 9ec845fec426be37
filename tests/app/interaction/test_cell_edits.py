"""Arm, sequence and fixture edits and the rubber band, without Qt (fake pointer events)."""

from __future__ import annotations

import pytest
import shapely

from app.interaction import arm_edits, fixture_edits
from app.interaction import sequence_edits as seq
from app.interaction.band import BandSelect, band_hits
from app.interaction.pointer import Pointer
from kinematics.cell import Arm, Cell, Fixture, Sequence, Target
from kinematics.cellfile import dumps_cell, parse_cell
from kinematics.variants import add_variant

# The worked exam arm (400 + 250, q1 0..180, q2 -120..120; Q&A archive, check-values.md).
EXAM = Arm("left", "Left", 0.0, 0.0, 0.0, 400.0, 250.0, (0.0, 180.0), (-120.0, 120.0))
RIGHT = Arm("right", "Right", 1200.0, 0.0, 180.0, 400.0, 250.0, (0.0, 180.0), (-120.0, 120.0))
BOX = Fixture("box", "Bin", "table", ((100.0, 100.0), (200.0, 100.0), (200.0, 200.0)), height=80.0)


def _cell() -> Cell:
    return Cell(
        "Two arms",
        arms=(EXAM, RIGHT),
        fixtures=(BOX,),
        targets=(
            Target("p", "Pick", 450.0, 180.0, "left"),
            Target("q", "Place", -200.0, 400.0, "left"),
            Target("r", "Drop", 800.0, 100.0, "right"),
        ),
        sequences=(Sequence("left", ("p", "q")), Sequence("right", ("r",))),
    )


def _loads(cell: Cell) -> Cell:
    # Every edit gives a cell the file format stores and reads back unchanged.
    text = dumps_cell(cell)
    assert dumps_cell(parse_cell(text)) == text
    return cell


# ---------------------------------------------------------------------------- arms


def test_added_arm_gets_a_fresh_id_and_name_and_loads():
    cell, new = arm_edits.add_arm(
        _cell(), Arm("x", "", 10.0, 20.0, 0, 300, 200, (-90, 90), (-90, 90))
    )
    assert new.id not in ("left", "right") and new.name == "Arm 1"
    assert cell.arms[-1] == new and (new.x, new.y) == (10.0, 20.0)
    _loads(cell)


def test_duplicate_keeps_the_arm_model_and_leaves_its_targets():
    base = replace_extra(EXAM, {"tool_body": {"radius": 20}})
    cell = Cell("c", arms=(base,), targets=(Target("p", "P", 450.0, 180.0, "left"),))
    cell, twin = arm_edits.duplicate_arm(cell, "left", 650.0)
    assert (twin.a1, twin.a2, twin.q1_limits, twin.extra) == (
        400.0,
        250.0,
        (0.0, 180.0),
        base.extra,
    )
    assert twin.x == 650.0 and twin.name == "Left copy"
    assert [t.arm for t in cell.targets] == ["left"]
    _loads(cell)


def replace_extra(arm: Arm, extra: dict) -> Arm:
    from dataclasses import replace

    return replace(arm, extra=extra)


def test_deleting_an_arm_reassigns_or_deletes_its_targets_and_sequences():
    cell = _loads(add_variant(_cell(), "now"))  # a variant holds an entry per arm
    moved = _loads(arm_edits.delete_arm(cell, "left", "reassign", to="right"))
    assert [a.id for a in moved.arms] == ["right"]
    assert {t.arm for t in moved.targets} == {"right"}
    assert [(s.arm, s.targets) for s in moved.sequences] == [
        ("right", ("p", "q")),
        ("right", ("r",)),
    ]
    gone = _loads(arm_edits.delete_arm(cell, "left", "delete"))
    assert [t.id for t in gone.targets] == ["r"]
    assert [(s.arm, s.targets) for s in gone.sequences] == [("right", ("r",))]


def test_the_last_arm_goes_with_its_targets_and_bad_choices_are_refused():
    # A cell may have no arms (one rule for the loader, `check` and the window).
    cell = Cell("c", arms=(EXAM,), targets=(Target("p", "P", 450.0, 180.0, "left"),))
    empty = _loads(arm_edits.delete_arm(cell, "left"))
    assert empty.arms == () and empty.targets == ()
    with pytest.raises(ValueError, match="another arm"):
        arm_edits.delete_arm(cell, "left", "reassign", to=None)
    with pytest.raises(ValueError, match="another arm"):
        arm_edits.delete_arm(_cell(), "left", "reassign", to="left")
    with pytest.raises(ValueError, match='"delete" or "reassign"'):
        arm_edits.delete_arm(_cell(), "left", "move")


# ---------------------------------------------------------------------------- sequences


def test_targets_are_added_in_click_order_and_other_arms_targets_left_out():
    # A second visit is allowed (the same feeder again); r is the right arm's.
    cell, added, skipped = seq.append_targets(_cell(), "left", ["q", "r", "p"])
    assert added == ["p"] and skipped == ["q", "r"]  # q would repeat the last visit (q)
    assert seq.sequence_targets(cell, "left") == ("p", "q", "p")
    cell = seq.set_sequence(_cell(), "left", [])
    assert [s.arm for s in cell.sequences] == ["right"]  # an emptied sequence goes
    cell, added, skipped = seq.append_targets(cell, "left", ["q", "r", "p"])
    assert seq.sequence_targets(cell, "left") == ("q", "p") and skipped == ["r"]
    _loads(cell)


def test_remove_move_and_reverse_keep_one_list_per_arm():
    cell = seq.set_sequence(_cell(), "left", ["p", "q", "p"])  # a target may be visited twice
    assert seq.sequence_targets(seq.remove_positions(cell, "left", [2]), "left") == ("p", "q")
    assert seq.sequence_targets(seq.move_position(cell, "left", 2, 0), "left") == ("p", "p", "q")
    assert seq.sequence_targets(seq.reverse(cell, "left"), "left") == ("p", "q", "p")
    assert seq.sequence_targets(seq.reverse(_cell(), "left"), "left") == ("q", "p")
    _loads(seq.reverse(cell, "left"))


def test_a_reassigned_target_keeps_or_leaves_its_place_as_asked():
    end = _loads(seq.reassign_targets(_cell(), ["p"], "right", place="end"))
    assert [(s.arm, s.targets) for s in end.sequences] == [("left", ("q",)), ("right", ("r", "p"))]
    drop = _loads(seq.reassign_targets(_cell(), ["p"], "right", place="drop"))
    assert [(s.arm, s.targets) for s in drop.sequences] == [("left", ("q",)), ("right", ("r",))]
    assert seq.in_sequences(_cell(), ["p", "r", "zz"]) == {"p", "r"}
    with pytest.raises(ValueError, match='"end" or "drop"'):
        seq.reassign_targets(_cell(), ["p"], "right", place="keep")


# ---------------------------------------------------------------------------- fixtures


def test_vertex_edits_keep_a_simple_outline_and_say_why_not():
    cell, problem = fixture_edits.insert_vertex(_cell(), "box", 2)
    assert problem == "" and len(cell.fixtures[0].outline) == 4
    # Shapely is the reference for a valid outline (the cell file's rule).
    assert shapely.Polygon(cell.fixtures[0].outline).is_valid
    crossed, problem = fixture_edits.set_vertex(cell, "box", 3, 250.0, 150.0)
    assert crossed is cell and "cross" in problem
    # The refused outline crosses itself, as shapely agrees.
    assert not shapely.Polygon([(100, 100), (200, 100), (200, 200), (250, 150)]).is_valid
    same, problem = fixture_edits.remove_vertex(_cell(), "box", 0)
    assert same.fixtures[0].outline == BOX.outline and "at least 3" in problem
    _loads(fixture_edits.set_height(cell, "box", 0.0))


# ---------------------------------------------------------------------------- rubber band


def test_band_selects_targets_whole_fixtures_and_bases_inside():
    cell = _cell()
    assert band_hits(cell, (90.0, 90.0, 460.0, 210.0)) == ["p", "box"]
    assert band_hits(cell, (460.0, 210.0, 90.0, 90.0)) == ["p", "box"]  # any corner order
    assert band_hits(cell, (150.0, 90.0, 460.0, 210.0)) == ["p"]  # only part of the box
    assert band_hits(cell, (-10.0, -10.0, 10.0, 10.0)) == ["left"]


def test_band_replaces_or_with_ctrl_adds_and_a_click_selects_nothing_new():
    cell = _cell()
    band = BandSelect()
    band.press(Pointer(90, 90, 0, 0, shift=True), ("r",))
    assert band.move(Pointer(91, 91, 1, 0, shift=True)) is None  # under the drag threshold
    assert band.move(Pointer(460, 210, 80, -30, shift=True)) == (90, 90, 460, 210)
    assert band.release(Pointer(460, 210, 80, -30, shift=True), cell) == ("p", "box")
    band.press(Pointer(90, 90, 0, 0, shift=True, ctrl=True), ("r",))
    assert band.release(Pointer(460, 210, 80, -30, ctrl=True), cell) == ("r", "p", "box")
    band.press(Pointer(90, 90, 0, 0, shift=True), ("r",))
    assert band.release(Pointer(90, 90, 1, 0, shift=True), cell) is None
    band.press(Pointer(90, 90, 0, 0, shift=True), ())
    band.cancel()
    assert not band.active and band.release(Pointer(460, 210, 80, -30), cell) is None

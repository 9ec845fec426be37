"""Title-block data of the review sheet (the cell's ``review`` object).

Field names and which ones are mandatory: ISO 7200:2004, "Technical product
documentation - Data fields in title blocks and document headers" (mandatory: legal
owner, identification number, date of issue, sheet number, title, document type,
approval person, creator; document status e.g. in preparation, under approval,
released, withdrawn). Dates as ISO 8601 calendar dates (YYYY-MM-DD).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from kinematics.cell import Cell
from kinematics.cellfile import CellFileError, dumps_cell, parse_cell
from kinematics.review import (
    DOCUMENT_STATUSES,
    REVIEW_FIELDS,
    review_problems,
    title_block,
    with_review,
)

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"


def test_fields_are_iso_7200s_with_its_mandatory_ones():
    # ISO 7200:2004 table 1: mandatory and optional data fields.
    mandatory = {
        "legal owner",
        "identification number",
        "date of issue",
        "title",
        "document type",
        "approval person",
        "creator",
    }
    got = {f.label.lower() for f in REVIEW_FIELDS if f.mandatory}
    assert got == mandatory
    optional = {f.label.lower() for f in REVIEW_FIELDS if not f.mandatory}
    assert {"revision index", "supplementary title", "technical reference"} <= optional
    assert {"document status", "language code", "responsible department"} <= optional
    assert DOCUMENT_STATUSES == ("in preparation", "under approval", "released", "withdrawn")


def _with_review(review) -> str:
    data = json.loads(TRAY.read_text())
    data["review"] = review
    return json.dumps(data)


@pytest.mark.parametrize(
    ("review", "line"),
    [
        (
            {"date": "04.12.2026"},
            'cell.json: review.date: must be a date written YYYY-MM-DD (ISO 8601), '
            'got "04.12.2026"',
        ),
        ({"date": "2026-02-30"}, "review.date: must be a date written YYYY-MM-DD"),
        ({"document_status": "signed"}, 'review.document_status: must be one of "in preparation"'),
        ({"creator": 42}, "review.creator: must be a string, got 42"),
        ({"title": "two\nlines"}, "review.title: must be one line of text"),
        ({"legal_owner": "x" * 121}, "review.legal_owner: must be at most 120 characters"),
        ([], "review: must be a JSON object"),
    ],
)
def test_bad_review_fields_give_one_line_naming_path_and_value(review, line):
    with pytest.raises(CellFileError) as err:
        parse_cell(_with_review(review), "cell.json")
    assert len(err.value.problems) == 1
    assert line in err.value.problems[0]
    assert "\n" not in err.value.problems[0]


def test_unknown_review_keys_are_kept_unchecked_and_written_back():
    text = _with_review({"title": "Cell 7", "our_stamp": {"any": [1, 2]}})
    cell = parse_cell(text, "cell.json")
    assert cell.review["our_stamp"] == {"any": [1, 2]}
    assert json.loads(dumps_cell(cell))["review"]["our_stamp"] == {"any": [1, 2]}


def test_title_block_falls_back_to_earlier_keys_and_the_cell_name():
    cell = Cell("Press cell", review={"project": "Line 4", "drawn_by": "AB", "checked_by": "CD"})
    f = title_block(cell)
    assert (f["title"], f["creator"], f["approval_person"]) == ("Line 4", "AB", "CD")
    assert title_block(Cell("Press cell"))["title"] == "Press cell"
    # The new key wins over the earlier one.
    assert title_block(Cell("c", review={"creator": "EF", "drawn_by": "AB"}))["creator"] == "EF"


def test_with_review_replaces_earlier_keys_and_refuses_bad_values():
    cell = Cell("c", review={"drawn_by": "AB", "revision": "A", "x_note": "kept"})
    new = with_review(cell, {"creator": "CD", "revision": "", "date": "2026-12-04"})
    assert new.review == {"x_note": "kept", "creator": "CD", "date": "2026-12-04"}
    with pytest.raises(ValueError, match=r"review\.date: must be a date"):
        with_review(cell, {"date": "tomorrow"})
    with pytest.raises(ValueError, match="no title-block field"):
        with_review(cell, {"stamp": "x"})


def test_every_sample_review_passes():
    for path in sorted((REPO / "sample_cells").glob("*.cell.json")):
        data = json.loads(path.read_text())
        assert review_problems(data.get("review", {})) == [], path.name

"""The cell's ``review`` data: the title-block fields of the review sheet (ISO 7200 terms).

ISO 7200 (technical product documentation, data fields in title blocks and document
headers) names the fields a drawing's title block carries. The cell file keeps them in
its ``review`` object under the keys of :data:`REVIEW_FIELDS`; the sheet number and the
number of sheets are counted when a sheet is made, the scale is the sheet's own.

Earlier files used ``project``, ``drawn_by`` and ``checked_by``; they are read as the
title, the creator and the approval person when the ISO 7200 key is absent
(:data:`EARLIER_KEYS`), and :func:`with_review` replaces them by the new keys.

Keys this version does not know are kept as they are (a file stays round-trip safe).
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Mapping
from dataclasses import dataclass, replace
from typing import Any

from .cell import Cell
from .checks import choice_problem

__all__ = [
    "ReviewField",
    "REVIEW_FIELDS",
    "REVIEW_KEYS",
    "DOCUMENT_STATUSES",
    "EARLIER_KEYS",
    "MAX_FIELD_CHARS",
    "review_problems",
    "title_block",
    "with_review",
]

#: Longest text accepted in one field (a title block is a small box; common practice).
MAX_FIELD_CHARS = 120

#: Document status words (ISO 7200's examples of the life-cycle state of a document).
DOCUMENT_STATUSES = ("in preparation", "under approval", "released", "withdrawn")


@dataclass(frozen=True)
class ReviewField:
    """One title-block field.

    Attributes
    ----------
    key : str
        Key in the cell's ``review`` object.
    label : str
        The field's name as printed in the title block (ISO 7200 wording).
    mandatory : bool
        ISO 7200 calls the field mandatory; the sheet marks it when empty.
    """

    key: str
    label: str
    mandatory: bool


#: The fields of the title block, in the order the editing dialog lists them.
REVIEW_FIELDS: tuple[ReviewField, ...] = (
    ReviewField("title", "Title", True),
    ReviewField("supplementary_title", "Supplementary title", False),
    ReviewField("legal_owner", "Legal owner", True),
    ReviewField("identification_number", "Identification number", True),
    ReviewField("revision", "Revision index", False),
    ReviewField("date", "Date of issue", True),
    ReviewField("document_type", "Document type", True),
    ReviewField("document_status", "Document status", False),
    ReviewField("creator", "Creator", True),
    ReviewField("approval_person", "Approval person", True),
    ReviewField("technical_reference", "Technical reference", False),
    ReviewField("responsible_department", "Responsible department", False),
    ReviewField("language_code", "Language code", False),
)
REVIEW_KEYS = tuple(f.key for f in REVIEW_FIELDS)

#: Keys of earlier files, read when the ISO 7200 key is absent: new key -> earlier key.
EARLIER_KEYS = {"title": "project", "creator": "drawn_by", "approval_person": "checked_by"}

#: What the sheet prints for a field left empty (the document type has a default).
DEFAULTS = {"document_type": "layout review drawing", "language_code": "en"}


def _date_problem(text: str) -> str | None:
    try:
        _dt.date.fromisoformat(text)
    except ValueError:
        return "must be a date written YYYY-MM-DD (ISO 8601)"
    if len(text) != 10:
        return "must be a date written YYYY-MM-DD (ISO 8601)"
    return None


def review_problems(review: Any) -> list[tuple[tuple[str, ...], str, Any]]:
    """What is wrong with a ``review`` object: ``(json path below review, problem, value)``.

    Known keys (:data:`REVIEW_KEYS` and :data:`EARLIER_KEYS`) must hold one line of text of
    at most :data:`MAX_FIELD_CHARS` characters; ``date`` is an ISO 8601 date
    (YYYY-MM-DD), ``document_status`` one of :data:`DOCUMENT_STATUSES` (or empty).
    Unknown keys are not checked.

    Examples
    --------
    >>> review_problems({"title": "Tray loading", "date": "2026-12-04"})
    []
    >>> review_problems({"date": "4.12.2026", "document_status": "done", "creator": 7})
    ... # doctest: +NORMALIZE_WHITESPACE
    [(('date',), 'must be a date written YYYY-MM-DD (ISO 8601)', '4.12.2026'),
     (('document_status',), 'must be one of "in preparation", "under approval",
       "released" or "withdrawn" (or empty)', 'done'),
     (('creator',), 'must be a string', 7)]
    """
    if not isinstance(review, Mapping):
        return [((), "must be a JSON object {...}", review)]
    out: list[tuple[tuple[str, ...], str, Any]] = []
    for key, value in review.items():
        if key not in REVIEW_KEYS and key not in EARLIER_KEYS.values():
            continue
        path = (key,)
        if not isinstance(value, str):
            out.append((path, "must be a string", value))
            continue
        if "\n" in value or "\r" in value:
            out.append((path, "must be one line of text", value))
        elif len(value) > MAX_FIELD_CHARS:
            out.append((path, f"must be at most {MAX_FIELD_CHARS} characters", value))
        elif key == "date" and value.strip() and (p := _date_problem(value.strip())):
            out.append((path, p, value))
        elif key == "document_status" and value.strip():
            p = choice_problem(value.strip(), DOCUMENT_STATUSES)
            if p is not None:
                out.append((path, f"{p} (or empty)", value))
    return out


def title_block(cell: Cell) -> dict[str, str]:
    """Every title-block field's text for a cell (empty string when not given).

    The title falls back to the cell's name; earlier keys stand in for absent new ones.

    Examples
    --------
    >>> cell = Cell("Tray cell", review={"drawn_by": "AB", "revision": "C"})
    >>> fields = title_block(cell)
    >>> fields["title"], fields["creator"], fields["revision"], fields["approval_person"]
    ('Tray cell', 'AB', 'C', '')
    """
    review = cell.review if isinstance(cell.review, Mapping) else {}
    out: dict[str, str] = {}
    for f in REVIEW_FIELDS:
        value = review.get(f.key)
        if not (isinstance(value, str) and value.strip()) and f.key in EARLIER_KEYS:
            value = review.get(EARLIER_KEYS[f.key])
        out[f.key] = value.strip() if isinstance(value, str) else ""
    if not out["title"]:
        out["title"] = cell.name or ""
    for key, default in DEFAULTS.items():
        out[key] = out[key] or default
    return out


def with_review(cell: Cell, values: Mapping[str, str]) -> Cell:
    """The cell with title-block fields set (empty text removes a field).

    Keys not in :data:`REVIEW_KEYS` are refused; an earlier key standing in for a field
    that is set (or cleared) here is dropped; every other key of ``review`` is kept.

    Raises
    ------
    ValueError
        For an unknown key or a value :func:`review_problems` refuses (one line).

    Examples
    --------
    >>> cell = Cell("c", review={"drawn_by": "AB", "project": "Demo", "sheet_notes": "x"})
    >>> with_review(cell, {"creator": "CD", "date": "2026-12-04"}).review
    {'project': 'Demo', 'sheet_notes': 'x', 'creator': 'CD', 'date': '2026-12-04'}
    """
    unknown = [k for k in values if k not in REVIEW_KEYS]
    if unknown:
        raise ValueError(f"review: no title-block field {unknown[0]!r}")
    problems = review_problems(dict(values))
    if problems:
        path, what, value = problems[0]
        raise ValueError(f"review.{path[0]}: {what}, got {value!r}")
    review = dict(cell.review) if isinstance(cell.review, Mapping) else {}
    for key, value in values.items():
        review.pop(EARLIER_KEYS.get(key, "\0"), None)
        text = value.strip()
        if text:
            review[key] = text
        else:
            review.pop(key, None)
    return replace(cell, review=review or None)

"""Run the examples in the docstrings of the editors' pure modules (app/ is outside the
doctest paths): band, arm, fixture and sequence edits, field words, the table's column
edits, the legend's place and the grouping of "links pass over" notes."""

from __future__ import annotations

import doctest

import pytest

from app.canvas import legend_place
from app.canvas.layers import notes, spaces
from app.interaction import arm_edits, band, fixture_edits, sequence_edits
from app.panels import field_words, validate

MODULES = [
    band,
    arm_edits,
    fixture_edits,
    sequence_edits,
    field_words,
    validate,
    legend_place,
    spaces,
    notes,
]


@pytest.mark.parametrize("module", MODULES, ids=lambda m: m.__name__)
def test_docstring_examples(module):
    result = doctest.testmod(module)
    assert result.attempted > 0
    assert result.failed == 0

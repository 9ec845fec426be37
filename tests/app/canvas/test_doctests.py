"""Run the examples in the canvas modules' docstrings (app/ is outside the doctest paths)."""

from __future__ import annotations

import doctest

import pytest

from app.canvas import clearance, edits, items, snapping


@pytest.mark.parametrize("module", [snapping, edits, items, clearance], ids=lambda m: m.__name__)
def test_docstring_examples(module):
    result = doctest.testmod(module)
    assert result.attempted > 0
    assert result.failed == 0

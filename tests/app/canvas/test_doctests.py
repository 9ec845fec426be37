"""Run the examples in the app's docstrings (app/ is outside the doctest paths)."""

from __future__ import annotations

import doctest

import pytest

from app.canvas import view
from app.canvas.layers import placement
from app.interaction import drag, edits, fit, snapping, tools
from app.panels import variants


@pytest.mark.parametrize(
    "module",
    [snapping, edits, drag, tools, fit, view, placement, variants],
    ids=lambda m: m.__name__,
)
def test_docstring_examples(module):
    result = doctest.testmod(module)
    assert result.attempted > 0
    assert result.failed == 0

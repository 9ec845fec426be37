"""The cell canvas widget: plan view, live results, direct-manipulation editing."""

from .canvas import CellCanvas

__all__ = ["CellCanvas"]

"""The DXF underlay: the lines of the cell's ``underlay`` drawing under the layout.

The drawing is the engine's (:func:`kinematics.dxf_import.dxf_underlay`, read through
:func:`kinematics.underlay.load_underlay`): polylines per layer in the cell's units. It is
painted into the view's cached background, over the grid and under the fixtures, so a
drag never repaints it; nothing in it can be picked or edited. It is read again when the
``underlay`` key, the cell's file or the drawing's file (its time and size) change.
"""

from __future__ import annotations

import os
from collections.abc import Callable
from pathlib import Path

from PySide6.QtGui import QPainter, QPen, QTransform

from kinematics.underlay import load_underlay, underlay_path, underlay_spec

from ..draw import paint_polylines
from ..legend import LegendEntry
from ..qtstyle import cosmetic_pen, mixed
from . import Frame

__all__ = ["UNDERLAY_KEY", "UNDERLAY_PEN", "UnderlayLayer"]

#: Overlay key of the underlay (its action is "overlay.underlay").
UNDERLAY_KEY = "underlay"


def _pen() -> QPen:
    from app import style

    pen = cosmetic_pen(style.PALETTE["slate"], 0.7)
    pen.setColor(mixed(style.PALETTE["slate"], 0.55))
    return pen


#: Lines of a DXF underlay: thin, neutral and solid (fixtures are filled; this is not).
UNDERLAY_PEN = _pen()


class UnderlayLayer:
    """The underlay's lines in the view's background (see the module docstring).

    Parameters
    ----------
    view : PlanView
        Its ``background_painters`` get this layer's painter, under the fixtures.
    cell_file : callable
        Returns the document's file (the underlay's path is relative to it), or None.
    on_note : callable, optional
        Called with a one-line note when the drawing is read or cannot be.
    """

    def __init__(
        self,
        view,
        cell_file: Callable[[], Path | None],
        on_note: Callable[[str], None] | None = None,
    ) -> None:
        self._view = view
        self._cell_file = cell_file
        self._on_note = on_note
        self._key: tuple | None = None
        self.underlay = None
        self.note = ""
        self.shown = False
        self._lines: list = []
        view.background_painters.insert(0, self.paint)

    def paint(self, painter: QPainter, to_scene: QTransform) -> None:
        if self.shown and self._lines:
            paint_polylines(painter, self._lines, to_scene, UNDERLAY_PEN)

    def _file_key(self, frame: Frame) -> tuple:
        spec = underlay_spec(frame.cell)
        if spec is None:
            return (None,)
        path = underlay_path(spec, self._cell_file())
        try:
            st = os.stat(path) if path is not None else None
            stamp = (st.st_mtime_ns, st.st_size) if st is not None else None
        except OSError:
            stamp = None
        return (spec, path, stamp, frame.cell.units)

    def update(self, frame: Frame) -> None:
        shown = UNDERLAY_KEY in frame.overlays
        changed = shown != self.shown
        self.shown = shown
        if shown and not frame.draft:
            key = self._file_key(frame)
            if key != self._key:
                self._key = key
                self.underlay, self.note = load_underlay(frame.cell, self._cell_file())
                self._lines = (
                    [ln for lines in self.underlay.layers.values() for ln in lines]
                    if self.underlay is not None
                    else []
                )
                changed = True
                if self.note and self._on_note is not None:
                    self._on_note(self.note)
        if changed:
            self._view.refresh_background()

    def lines(self) -> list:
        """The polylines drawn (world arrays), empty when hidden or there is none."""
        return list(self._lines) if self.shown else []

    def legend(self) -> list[LegendEntry]:
        """The legend row of the underlay when it is drawn."""
        if not (self.shown and self._lines and self.underlay is not None):
            return []
        return [
            LegendEntry("header", "Underlay"),
            LegendEntry(
                "line", f"DXF {self.underlay.source} (drawing only)", pen=QPen(UNDERLAY_PEN)
            ),
        ]

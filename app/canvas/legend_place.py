"""Where the legend goes: beside the plot while it leaves the plot most of the canvas,
else collapsed to a small "Legend" button in the plot's corner that opens it beside the
plot until it is closed again.

:func:`legend_mode` is the rule (no Qt); :class:`LegendToggle` applies it to a canvas.
"""

from __future__ import annotations

from PySide6.QtCore import QEvent, QObject, Qt
from PySide6.QtWidgets import QToolButton, QWidget

__all__ = ["MAX_LEGEND_SHARE", "MIN_PLOT_PX", "legend_mode", "LegendToggle"]

#: The largest part of the canvas's width the legend may take beside the plot.
MAX_LEGEND_SHARE = 0.35
#: The plot never gets narrower than this for the legend (pixels).
MIN_PLOT_PX = 360


def legend_mode(canvas_px: float, legend_px: float, wanted: bool) -> str:
    """ "beside", "collapsed" (a button) or "hidden" (switched off).

    Examples
    --------
    A 262-pixel legend beside a 1000-pixel canvas; a 680-pixel one (a 1280 x 800 window
    with its panels) collapses it:

    >>> legend_mode(1000, 262, True), legend_mode(680, 262, True), legend_mode(1000, 262, False)
    ('beside', 'collapsed', 'hidden')
    """
    if not wanted:
        return "hidden"
    plot = canvas_px - legend_px
    if plot >= MIN_PLOT_PX and legend_px <= MAX_LEGEND_SHARE * canvas_px:
        return "beside"
    return "collapsed"


class _Resized(QObject):
    def __init__(self, toggle: LegendToggle, parent: QObject) -> None:
        super().__init__(parent)
        self._toggle = toggle

    def eventFilter(self, obj: QObject, event: QEvent) -> bool:  # noqa: N802 (Qt name)
        if event.type() == QEvent.Type.Resize:
            self._toggle.reposition()
        return False


class LegendToggle:
    """The legend's place on one canvas, and the button that stands in for it."""

    def __init__(self, canvas) -> None:
        self.canvas = canvas
        self.mode = "beside"
        self.button = QToolButton(canvas.plot)
        self.button.setObjectName("legend_button")
        self.button.setCheckable(True)
        self.button.setText("Legend ◂")
        self.button.setToolTip("Show the legend beside the plot (the canvas is narrow)")
        self.button.setCursor(Qt.CursorShape.PointingHandCursor)
        self.button.setVisible(False)
        self.button.toggled.connect(lambda _on: self.place())
        canvas.plot.installEventFilter(_Resized(self, self.button))

    @property
    def opened(self) -> bool:
        """True while the collapsed legend is opened beside the plot."""
        return self.mode == "collapsed" and self.button.isChecked()

    def place(self) -> None:
        c = self.canvas
        area: QWidget = c.legend_area
        wanted = c.actions()["legend.show"].isChecked()
        self.mode = legend_mode(c.width(), area.width(), wanted)
        show = self.mode == "beside" or self.opened
        if show != area.isVisibleTo(c):
            area.setVisible(show)
        self.button.setVisible(self.mode == "collapsed")
        self.button.setText("Legend ▸" if self.button.isChecked() else "Legend ◂")
        self.button.setToolTip(
            "Hide the legend again"
            if self.button.isChecked()
            else "Show the legend beside the plot (the canvas is narrow)"
        )
        self.button.adjustSize()
        self.reposition()

    def reposition(self) -> None:
        """Keep the button in the plot's top-right corner."""
        plot = self.canvas.plot
        b = self.button
        b.move(max(0, plot.width() - b.width() - 8), 6)
        b.raise_()

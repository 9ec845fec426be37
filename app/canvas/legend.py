"""The canvas legend: one sample per drawing style with the words that explain it.

Every status marker, ghost line style, overlay and fixture kind shown on the
canvas appears here with its shape or line style, so nothing relies on colour.
"""

from __future__ import annotations

from dataclasses import dataclass

from pyqtgraph.graphicsItems.ScatterPlotItem import drawSymbol
from PySide6.QtCore import QPointF, QRectF, QSize, Qt
from PySide6.QtGui import QBrush, QColor, QFont, QFontMetricsF, QPainter, QPainterPath, QPen
from PySide6.QtWidgets import QSizePolicy, QWidget

from app import style

from .draw import ScreenInk

__all__ = ["LegendEntry", "LegendWidget", "paint_sample"]


@dataclass(frozen=True)
class LegendEntry:
    """One legend row.

    ``kind`` is "header", "symbol" (a scatter symbol name or QPainterPath in ``symbol``;
    an empty ``colour`` draws it unfilled),
    "line" (``pen``), "area" (``pen`` and ``brush``, optional ``under`` brush)
    or "base" (an arm base glyph in ``colour``),
    or "scale" (a colour bar across the legend: ``brush`` a horizontal gradient,
    ``ticks`` its (fraction 0..1, label) marks; three rows tall).
    """

    kind: str
    text: str
    symbol: str | QPainterPath = ""
    colour: str = ""
    pen: QPen | None = None
    brush: QBrush | None = None
    under: QBrush | None = None
    ticks: tuple[tuple[float, str], ...] = ()

    @property
    def rows(self) -> int:
        """Rows the entry takes."""
        return 3 if self.kind == "scale" else 1


class LegendWidget(QWidget):
    """A narrow panel beside the plot that paints the legend entries."""

    ROW = 18.0
    SAMPLE_W = 30.0

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._entries: list[LegendEntry] = []
        self._font = QFont()
        self._font.setPointSizeF(8.5)
        self._bold = QFont(self._font)
        self._bold.setBold(True)
        self.setSizePolicy(QSizePolicy.Policy.Fixed, QSizePolicy.Policy.Preferred)
        self.setFixedWidth(250)

    def entries(self) -> list[LegendEntry]:
        return list(self._entries)

    def texts(self) -> list[str]:
        """Texts of all rows (used by tests and accessibility)."""
        return [e.text for e in self._entries]

    def set_entries(self, entries: list[LegendEntry]) -> None:
        def sig(es: list[LegendEntry]) -> list[tuple]:
            return [(e.kind, e.text, e.ticks) for e in es]

        if sig(entries) == sig(self._entries):
            return
        self._entries = list(entries)
        self.setMinimumHeight(self._height())
        self.updateGeometry()
        self.update()

    def _height(self) -> int:
        return int(self.ROW * sum(e.rows for e in self._entries) + 12)

    def sizeHint(self) -> QSize:
        return QSize(250, self._height())

    def paintEvent(self, event) -> None:
        p = QPainter(self)
        p.setRenderHint(QPainter.RenderHint.Antialiasing, True)
        p.fillRect(self.rect(), QColor(style.PAPER))
        p.setPen(QPen(QColor(style.PALETTE["fog"]), 1.0))
        p.drawLine(0, 0, 0, self.height())
        fm = QFontMetricsF(self._font)
        y = 8.0
        for e in self._entries:
            if e.kind == "header":
                y += 4.0
                p.setFont(self._bold)
                p.setPen(QColor(style.INK))
                p.drawText(QPointF(8.0, y + fm.ascent()), e.text)
                y += self.ROW
                continue
            if e.kind == "scale":
                self._paint_scale(p, e, y, fm)
                y += self.ROW * e.rows
                continue
            cy = y + self.ROW / 2 - 2
            sample = QRectF(10.0, cy - 6.0, self.SAMPLE_W - 6, 12.0)
            self._paint_sample(p, e, sample)
            p.setFont(self._font)
            p.setPen(QColor(style.INK))
            text = fm.elidedText(e.text, Qt.TextElideMode.ElideRight, self.width() - 50)
            p.drawText(QPointF(12.0 + self.SAMPLE_W, cy + fm.ascent() / 2 - 1), text)
            y += self.ROW
        p.end()

    def _paint_scale(self, p: QPainter, e: LegendEntry, y: float, fm: QFontMetricsF) -> None:
        p.setFont(self._font)
        p.setPen(QColor(style.INK))
        text = fm.elidedText(e.text, Qt.TextElideMode.ElideRight, self.width() - 20)
        p.drawText(QPointF(10.0, y + fm.ascent()), text)
        bar = QRectF(12.0, y + self.ROW, self.width() - 36.0, 10.0)
        if e.brush is not None:
            p.fillRect(bar, e.brush)
        p.setPen(QPen(QColor(style.INK), 1.0))
        p.setBrush(Qt.BrushStyle.NoBrush)
        p.drawRect(bar)
        right = -1e9
        for t, label in e.ticks:
            x = bar.left() + max(0.0, min(1.0, t)) * bar.width()
            p.drawLine(QPointF(x, bar.bottom()), QPointF(x, bar.bottom() + 3))
            w = fm.horizontalAdvance(label)
            lx = max(2.0, min(x - w / 2, self.width() - w - 2))
            if lx > right + 3:  # labels that would overlap their neighbour are left out
                p.drawText(QPointF(lx, bar.bottom() + 3 + fm.ascent()), label)
                right = lx + w

    def _paint_sample(self, p: QPainter, e: LegendEntry, r: QRectF) -> None:
        paint_sample(p, e, r)


def paint_sample(p: QPainter, e: LegendEntry, r: QRectF, ink: ScreenInk | None = None) -> None:
    """Paint the sample of one legend row into ``r`` (device coordinates, canvas pixel
    sizes; ``ink`` turns them into paper on a sheet)."""
    ink = ink or ScreenInk()
    k = ink.px
    p.save()
    if e.kind == "symbol":
        p.translate(r.center())
        if e.colour:
            brush, pen = QBrush(QColor(e.colour)), QPen(QColor(style.INK), 1.0 / 11)
        else:  # an unfilled ring in the entry's pen colour
            colour = e.pen.color() if e.pen is not None else QColor(style.INK)
            brush, pen = QBrush(Qt.BrushStyle.NoBrush), QPen(colour, 2.0 / 11)
        drawSymbol(p, e.symbol, 11 * k, pen, brush)
    elif e.kind == "line" and e.pen is not None:
        line = QPainterPath(QPointF(r.left(), r.center().y()))
        line.lineTo(QPointF(r.right(), r.center().y()))
        ink.stroke(p, line, e.pen)
    elif e.kind == "area":
        box = QPainterPath()
        box.addRect(r)
        ink.area(p, box, e.pen, e.brush, under=e.under)
    elif e.kind == "base":
        c = QColor(e.colour)
        fill = QColor(c)
        fill.setAlphaF(0.3)
        p.setPen(QPen(c, 2.0 * k))
        p.setBrush(fill)
        centre = QPointF(r.left() + 6 * k, r.center().y())
        p.drawEllipse(centre, 5.0 * k, 5.0 * k)
        tip = QPointF(r.right() - 4 * k, r.center().y())
        p.drawLine(centre, tip)
        p.setBrush(QColor(style.PAPER))
        p.drawEllipse(tip, 3.5 * k, 3.5 * k)
    p.restore()

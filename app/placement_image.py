"""The placement map as a picture (``elbowroom place --png``), drawn with Qt from engine arrays.

The engine (:mod:`kinematics.placement`) gives the score map, the region's outlines, the
best spot and the tolerance; this module only paints them. Nothing is shown by colour
alone: grid cells where some target is infeasible are hatched, the region's outline is a
solid line, the current base a circle and the best spot a cross, each labelled, and the
tolerance circle is dashed with its value written beside it. The colour map is our own
sequential one (:func:`score_colours`): lightness rises steadily from dark indigo to pale
yellow, interpolated in the OKLab space, so it reads in grey and for the common forms of
colour blindness.
"""

from __future__ import annotations

import math
import os

import numpy as np
from numpy.typing import NDArray

__all__ = ["SCORE_ANCHORS", "score_colours", "map_png"]

#: Anchor colours of the score colour map, low to high (sRGB hex); lightness rises steadily.
SCORE_ANCHORS = ("#1d1147", "#35377f", "#2f6a96", "#2f9c8f", "#76c16a", "#e3e05a", "#fbf6c8")


def _srgb_to_lin(c: NDArray) -> NDArray:
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def _lin_to_srgb(c: NDArray) -> NDArray:
    c = np.clip(c, 0.0, 1.0)
    return np.where(c <= 0.0031308, 12.92 * c, 1.055 * c ** (1 / 2.4) - 0.055)


# OKLab (Ottosson 2020) matrices.
_M1 = np.array(
    [[0.4122214708, 0.5363325363, 0.0514459929], [0.2119034982, 0.6806995451, 0.1073969566],
     [0.0883024619, 0.2817188376, 0.6299787005]]
)  # fmt: skip
_M2 = np.array(
    [[0.2104542553, 0.7936177850, -0.0040720468], [1.9779984951, -2.4285922050, 0.4505937099],
     [0.0259040371, 0.7827717662, -0.8086757660]]
)  # fmt: skip


def _to_oklab(rgb: NDArray) -> NDArray:
    return np.cbrt(_srgb_to_lin(rgb) @ _M1.T) @ _M2.T


def _from_oklab(lab: NDArray) -> NDArray:
    lms = (lab @ np.linalg.inv(_M2).T) ** 3
    return _lin_to_srgb(lms @ np.linalg.inv(_M1).T)


def score_colours(t: NDArray) -> NDArray[np.uint8]:
    """Colours (n, 3) uint8 for values ``t`` in [0, 1] (clipped), from :data:`SCORE_ANCHORS`.

    Examples
    --------
    >>> score_colours(np.array([0.0, 1.0])).tolist()
    [[29, 17, 71], [251, 246, 200]]
    """
    anchors = np.array([[int(h[i : i + 2], 16) / 255 for i in (1, 3, 5)] for h in SCORE_ANCHORS])
    lab = _to_oklab(anchors)
    t = np.clip(np.asarray(t, dtype=float).reshape(-1), 0.0, 1.0) * (len(anchors) - 1)
    k = np.minimum(t.astype(int), len(anchors) - 2)
    f = (t - k)[:, None]
    mixed = lab[k] * (1 - f) + lab[k + 1] * f
    return np.round(_from_oklab(mixed) * 255).astype(np.uint8)


def _app():
    from PySide6.QtGui import QGuiApplication

    app = QGuiApplication.instance()
    if app is None:
        if not os.environ.get("QT_QPA_PLATFORM") and not os.environ.get("DISPLAY"):
            os.environ["QT_QPA_PLATFORM"] = "offscreen"
        app = QGuiApplication([])
    return app


def map_png(
    smap,
    rings: list[NDArray],
    current: tuple[float, float],
    best: tuple[float, float],
    tolerance: float | None,
    units: str,
    title: str,
    width: int = 900,
) -> bytes:
    """PNG bytes of a placement map (see the module docstring).

    Parameters
    ----------
    smap : kinematics.placement.ScoreMap
    rings : list of ndarray
        Outlines of the placement region (closed rings, world coordinates).
    current, best : (x, y)
        The current base and the best spot.
    tolerance : float or None
        Placement tolerance of the current base (drawn as a dashed circle).
    units, title : str
    width : int
        Width of the map part in pixels.
    """
    _app()
    from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QPointF, QRectF, Qt
    from PySide6.QtGui import QBrush, QColor, QFont, QImage, QPainter, QPainterPath, QPen

    ny, nx = smap.shape
    x0, y0, x1, y1 = smap.extent
    scale = width / max(x1 - x0, 1e-12)
    height = max(1, int(round((y1 - y0) * scale)))
    margin, bar_w, side = 40, 24, 330
    W, H = margin * 2 + width + side, margin * 2 + height + 60
    img = QImage(W, H, QImage.Format.Format_RGB32)
    img.fill(QColor("white"))

    s = smap.score
    fin = np.isfinite(s)
    lo = float(np.nanmin(s)) if fin.any() else 0.0
    hi = float(np.nanmax(s)) if fin.any() else 1.0
    span = hi - lo if hi > lo else 1.0
    rgb = score_colours(np.where(fin, (s - lo) / span, 0.0)).reshape(ny, nx, 3)
    cells = np.full((ny, nx, 4), 255, dtype=np.uint8)  # BGRA; outside the zone: light grey
    cells[..., 0], cells[..., 1], cells[..., 2] = rgb[..., 2], rgb[..., 1], rgb[..., 0]
    cells[~fin] = (235, 235, 235, 255)
    cells = np.ascontiguousarray(cells[::-1])  # world y up, image rows down
    cell_img = QImage(cells.data, nx, ny, 4 * nx, QImage.Format.Format_RGB32).copy()

    def to_px(x: float, y: float) -> QPointF:
        return QPointF(margin + (x - x0) * scale, margin + (y1 - y) * scale)

    p = QPainter(img)
    p.setRenderHint(QPainter.RenderHint.Antialiasing)
    target = QRectF(margin, margin, width, height)
    p.drawImage(target, cell_img)
    # Hatch where some target is infeasible (not colour alone).
    short = fin & (smap.feasible < smap.targets)
    if short.any():
        path = QPainterPath()
        cw = (x1 - x0) / nx * scale
        ch = (y1 - y0) / ny * scale
        for j, i in zip(*np.nonzero(short)):
            path.addRect(QRectF(margin + i * cw, margin + (ny - 1 - j) * ch, cw + 0.5, ch + 0.5))
        p.fillPath(path.simplified(), QBrush(QColor(0, 0, 0, 110), Qt.BrushStyle.BDiagPattern))
    # The exact region's outline.
    p.setPen(QPen(QColor("#000000"), 2.0))
    p.setBrush(Qt.BrushStyle.NoBrush)
    for ring in rings:
        path = QPainterPath()
        for k, (x, y) in enumerate(ring):
            path.moveTo(to_px(x, y)) if k == 0 else path.lineTo(to_px(x, y))
        path.closeSubpath()
        p.drawPath(path)
    font = QFont()
    font.setPixelSize(13)
    p.setFont(font)
    # Current base: circle; tolerance: dashed circle with its value.
    c = to_px(*current)
    p.setPen(QPen(QColor("#000000"), 2.0))
    p.setBrush(QColor("white"))
    p.drawEllipse(c, 6, 6)
    p.drawText(c + QPointF(-100, 22), "current base")
    if tolerance is not None and tolerance > 0:
        pen = QPen(QColor("#000000"), 1.5, Qt.PenStyle.DashLine)
        p.setPen(pen)
        p.setBrush(Qt.BrushStyle.NoBrush)
        p.drawEllipse(c, tolerance * scale, tolerance * scale)
        p.drawText(
            c + QPointF(tolerance * scale * math.cos(0.6) + 4, tolerance * scale * 0.6),
            f"tolerance {tolerance:.1f} {units}",
        )
    # Best spot: a cross in a white halo.
    b = to_px(*best)
    for colour, w in (("white", 6.0), ("#000000", 2.5)):
        p.setPen(QPen(QColor(colour), w))
        p.drawLine(b + QPointF(-9, -9), b + QPointF(9, 9))
        p.drawLine(b + QPointF(-9, 9), b + QPointF(9, -9))
    p.setPen(QPen(QColor("#000000"), 1))
    p.drawText(b + QPointF(12, -10), "best spot")
    # Colour bar with its name.
    bx = margin + width + 30
    for k in range(height):
        t = 1.0 - k / max(height - 1, 1)
        r, g, bl = score_colours(np.array([t]))[0]
        p.setPen(QColor(int(r), int(g), int(bl)))
        p.drawLine(bx, margin + k, bx + bar_w, margin + k)
    p.setPen(QPen(QColor("#000000"), 1))
    p.setBrush(Qt.BrushStyle.NoBrush)
    p.drawRect(bx, margin, bar_w, height)
    p.drawText(bx + bar_w + 6, margin + 10, f"{hi:.2f}")
    p.drawText(bx + bar_w + 6, margin + height, f"{lo:.2f}")
    lines = [
        "score = feasible targets",
        "  + quality (0 to 1)",
        "",
        "hatched: some target infeasible",
        "solid line: placement region",
        "  (reach, limits, base body)",
        "circle: current base",
        "dashed: its tolerance",
        "cross: best spot",
        "grey: outside the mounting zone",
    ]
    for k, text in enumerate(lines):
        p.drawText(bx + bar_w + 50, margin + 16 * (k + 1), text)
    p.drawText(margin, 24, title)
    p.drawText(
        margin, margin + height + 24,
        f"grid pitch {smap.pitch:g} {units}, {nx} x {ny}; heading {smap.heading_deg:g} deg",
    )  # fmt: skip
    from kinematics.caution import CAUTION_SHORT

    small = QFont()
    small.setPixelSize(11)
    p.setFont(small)
    p.drawText(
        QRectF(margin, margin + height + 32, W - 2 * margin, 28),
        Qt.TextFlag.TextWordWrap,
        f"CAUTION: {CAUTION_SHORT}",
    )
    p.end()
    data = QByteArray()
    buf = QBuffer(data)
    buf.open(QIODevice.OpenModeFlag.WriteOnly)
    img.save(buf, "PNG")
    buf.close()
    return bytes(data.data())

"""Qt pens, brushes and symbols built from the shared palette in :mod:`app.style`.

Colours and marker shapes live in app/style.py; this module only turns them into
Qt objects and adds the canvas-only choices (line styles per fixture kind and
per overlay) so that every style differs by more than colour.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QColor, QPen

from app import style

__all__ = [
    "colour",
    "mixed",
    "cosmetic_pen",
    "PATTERNS",
    "FixtureLook",
    "fixture_look",
    "OverlayLook",
    "OVERLAY_LOOKS",
    "ELBOW_COLOURS",
]

_DASHES = {
    "solid": Qt.PenStyle.SolidLine,
    "dash": Qt.PenStyle.DashLine,
    "dot": Qt.PenStyle.DotLine,
    "dashdot": Qt.PenStyle.DashDotLine,
    "dashdotdot": Qt.PenStyle.DashDotDotLine,
}

#: Fill pattern names from app.style mapped to Qt brush styles.
PATTERNS = {
    "solid": Qt.BrushStyle.SolidPattern,
    "hatch": Qt.BrushStyle.BDiagPattern,
    "fhatch": Qt.BrushStyle.FDiagPattern,
    "cross": Qt.BrushStyle.DiagCrossPattern,
    "grid": Qt.BrushStyle.CrossPattern,
    "dense": Qt.BrushStyle.Dense5Pattern,
    "horizontal": Qt.BrushStyle.HorPattern,
    "vertical": Qt.BrushStyle.VerPattern,
    "none": Qt.BrushStyle.NoBrush,
}


def colour(hex_rgb: str, alpha: float = 1.0) -> QColor:
    """A QColor from ``#rrggbb`` and an opacity in 0..1."""
    c = QColor(hex_rgb)
    c.setAlphaF(max(0.0, min(1.0, alpha)))
    return c


def mixed(hex_rgb: str, amount: float) -> QColor:
    """An opaque colour ``amount`` of the way from the paper colour to ``hex_rgb``.

    Opaque stand-in for transparency: Qt strokes translucent or wide many-segment
    paths an order of magnitude slower than opaque hairlines.
    """
    a, b = QColor(style.PAPER), QColor(hex_rgb)
    t = max(0.0, min(1.0, amount))
    return QColor.fromRgbF(
        a.redF() + t * (b.redF() - a.redF()),
        a.greenF() + t * (b.greenF() - a.greenF()),
        a.blueF() + t * (b.blueF() - a.blueF()),
    )


def cosmetic_pen(hex_rgb: str, width: float = 1.0, dash: str = "solid", alpha: float = 1.0) -> QPen:
    """A pen whose width is in screen pixels whatever the zoom."""
    pen = QPen(colour(hex_rgb, alpha))
    pen.setWidthF(width)
    pen.setCosmetic(True)
    pen.setStyle(_DASHES[dash])
    pen.setJoinStyle(Qt.PenJoinStyle.RoundJoin)
    pen.setCapStyle(Qt.PenCapStyle.FlatCap)
    return pen


@dataclass(frozen=True)
class FixtureLook:
    """Pen and brush of one fixture kind, plus the words the legend uses."""

    pen: QPen
    brush: QBrush
    base_brush: QBrush  # faint solid under a pattern, so hatched shapes read as areas
    legend: str


# Line style per kind (canvas choice): keep-out dashed, guard thick, columns heavy solid.
_KIND_LINES = {
    "keep-out": ("dash", 2.0),
    "guard": ("solid", 3.5),
    "column": ("solid", 1.5),
    "conveyor": ("solid", 1.2),
    "feeder": ("dashdot", 1.2),
    "fixture": ("solid", 1.2),
    "table": ("dot", 1.2),
}
# Conveyors get straight stripes (horizontal) rather than diagonal: no direction is implied.
_KIND_PATTERNS = {"conveyor": "horizontal", "keep-out": "hatch", "guard": "cross"}
_KIND_WORDS = {
    "keep-out": "keep-out (hatched, dashed edge)",
    "guard": "guard (thick edge)",
    "column": "column (solid)",
    "conveyor": "conveyor (striped)",
    "feeder": "feeder (dotted fill)",
    "fixture": "fixture",
    "table": "table (dotted edge)",
}


def fixture_look(kind: str) -> FixtureLook:
    """How a fixture of this kind is drawn on the canvas."""
    line, fill, alpha, pattern = style.fixture_style(kind)
    dash, width = _KIND_LINES.get(kind, ("solid", 1.0))
    pattern = _KIND_PATTERNS.get(kind, pattern)
    pat_alpha = 0.85 if pattern != "solid" else alpha
    brush = QBrush(colour(fill, pat_alpha), PATTERNS[pattern])
    base = QBrush(colour(fill, 0.10 if pattern != "solid" else 0.0))
    return FixtureLook(
        pen=cosmetic_pen(line, width, dash),
        brush=brush,
        base_brush=base,
        legend=_KIND_WORDS.get(kind, f"{kind} (plain)"),
    )


#: Colours of the two elbow configurations (ghost poses and their regions).
ELBOW_COLOURS = {"positive": style.PALETTE["harbour"], "negative": style.PALETTE["ember"]}


@dataclass(frozen=True)
class OverlayLook:
    """Outline and fill of one overlay kind."""

    pen: QPen
    brush: QBrush
    legend: str


def _overlay_looks() -> dict[str, OverlayLook]:
    slate = style.PALETTE["slate"]
    pos, neg = ELBOW_COLOURS["positive"], ELBOW_COLOURS["negative"]
    return {
        "annulus": OverlayLook(
            cosmetic_pen(slate, 1.2, style.LINE_STYLES["reach_outer"]),
            QBrush(colour(style.PALETTE["fog"], 0.18)),
            "reach annulus (work envelope)",
        ),
        "positive": OverlayLook(
            cosmetic_pen(pos, 1.2, "dash"),
            QBrush(colour(pos, 0.35), PATTERNS["fhatch"]),
            "positive elbow reaches (///, dashed)",
        ),
        "negative": OverlayLook(
            cosmetic_pen(neg, 1.2, "dot"),
            QBrush(colour(neg, 0.35), PATTERNS["hatch"]),
            "negative elbow reaches (\\\\\\, dotted)",
        ),
        "both": OverlayLook(
            cosmetic_pen(style.PALETTE["pine"], 1.5, "solid"),
            QBrush(colour(style.PALETTE["pine"], 0.14)),
            "both elbows reach (solid edge)",
        ),
        "comfort": OverlayLook(
            cosmetic_pen(style.PALETTE["pine"], 2.0, "dashdot"),
            QBrush(Qt.BrushStyle.NoBrush),
            "comfort region (dash-dot)",
        ),
    }


OVERLAY_LOOKS = _overlay_looks()

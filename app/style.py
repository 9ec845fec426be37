"""Colours and marker shapes shared by the canvas, the panels and exports.

Plain Python (no Qt) so exports can use it too. The palette is our own set of
colour-blind-safe hues; colour is never the only signal, so every target
status also has its own marker shape and glyph, and every overlay a line style.
"""

from __future__ import annotations

from dataclasses import dataclass

from kinematics.ik import REASONS, Status

__all__ = [
    "INK",
    "PAPER",
    "PALETTE",
    "StatusStyle",
    "STATUS_STYLES",
    "status_style",
    "status_text",
    "ARM_COLOURS",
    "arm_colour",
    "FIXTURE_STYLES",
    "fixture_style",
    "LINE_STYLES",
]

#: Foreground for text and outlines.
INK = "#1d1f24"
#: Canvas background.
PAPER = "#fbfaf7"

#: Named hues (hex sRGB), chosen to stay distinct under the common colour-vision deficiencies.
PALETTE = {
    "pine": "#0b8a6c",  # feasible
    "ember": "#d1581a",  # out of reach
    "plum": "#b65f9c",  # inside the inner hole
    "amber": "#e3a012",  # joint limit
    "harbour": "#1f6fae",  # arm / selection
    "sky": "#5bb3e3",  # elbow setting excluded
    "lemon": "#eadb4a",  # highlights
    "slate": "#5d6470",  # fixtures, neutral lines
    "fog": "#c9ccd2",  # grid, faint fills
    "charcoal": INK,
}


@dataclass(frozen=True)
class StatusStyle:
    """How one target status is drawn and written.

    Attributes
    ----------
    colour : str
        Hex colour of the marker.
    glyph : str
        One Unicode character with the marker's shape, for tables and lists.
    symbol : str
        pyqtgraph scatter symbol with the same shape.
    word : str
        Short label for legends.
    """

    colour: str
    glyph: str
    symbol: str
    word: str


#: One distinct shape per status: circle ok, cross out of reach, diamond hole,
#: triangles up/down for the q1/q2 limit, square elbow excluded, star collision, pentagon
#: base overlapping a fixture.
STATUS_STYLES: dict[Status, StatusStyle] = {
    Status.OK: StatusStyle(PALETTE["pine"], "●", "o", "feasible"),
    Status.BEYOND_REACH: StatusStyle(PALETTE["ember"], "✕", "x", "out of reach"),
    Status.INSIDE_HOLE: StatusStyle(PALETTE["plum"], "◆", "d", "inner hole"),
    Status.Q1_LIMIT: StatusStyle(PALETTE["amber"], "▲", "t1", "q1 limit"),
    Status.Q2_LIMIT: StatusStyle(PALETTE["amber"], "▼", "t", "q2 limit"),
    Status.ELBOW_EXCLUDED: StatusStyle(PALETTE["sky"], "■", "s", "elbow excluded"),
    Status.COLLISION: StatusStyle(PALETTE["ember"], "★", "star", "collision"),
    Status.BASE_OVERLAP: StatusStyle(PALETTE["slate"], "⬟", "p", "base overlaps"),
}


def status_style(status: int | Status) -> StatusStyle:
    """The style of a status code (as stored in an evaluation's ``status`` array)."""
    return STATUS_STYLES[Status(int(status))]


def status_text(status: int | Status, detail: str = "") -> str:
    """Table text for a status: "● feasible" or "✕ fails: beyond outer reach" plus optional
    detail (the one verdict word of :mod:`kinematics.wording`)."""
    from kinematics.wording import FAILS, FEASIBLE

    s = Status(int(status))
    glyph = STATUS_STYLES[s].glyph
    if s is Status.OK:
        return f"{glyph} {FEASIBLE}"
    text = f"{glyph} {FAILS}: {REASONS[s]}"
    return f"{text} {detail}" if detail else text


#: Colours for arms in file order (cycled when there are more arms).
ARM_COLOURS = (PALETTE["harbour"], PALETTE["plum"], PALETTE["pine"], PALETTE["ember"])


def arm_colour(index: int) -> str:
    """Colour of the arm at position ``index`` in the cell."""
    return ARM_COLOURS[index % len(ARM_COLOURS)]


#: Fixture drawing per kind: (outline colour, fill colour, fill alpha 0..1, fill pattern).
#: Patterns are names the canvas maps to brush styles ("solid", "hatch", "cross", "dense").
FIXTURE_STYLES = {
    "conveyor": (PALETTE["slate"], PALETTE["fog"], 0.6, "hatch"),
    "fixture": (PALETTE["slate"], PALETTE["fog"], 0.5, "solid"),
    "guard": (INK, INK, 0.15, "cross"),
    "keep-out": (PALETTE["ember"], PALETTE["ember"], 0.12, "cross"),
    "column": (INK, PALETTE["slate"], 0.7, "solid"),
    "feeder": (PALETTE["slate"], PALETTE["lemon"], 0.35, "dense"),
    "table": (PALETTE["slate"], PALETTE["fog"], 0.3, "solid"),
}
_PLAIN_FIXTURE = (PALETTE["slate"], PALETTE["fog"], 0.3, "solid")


def fixture_style(kind: str) -> tuple[str, str, float, str]:
    """Drawing style of a fixture kind; unknown kinds are drawn plainly."""
    return FIXTURE_STYLES.get(kind, _PLAIN_FIXTURE)


#: Line styles for overlays, so they differ by more than colour ("solid", "dash", "dot", "dashdot").
LINE_STYLES = {
    "reach_outer": "solid",
    "reach_inner": "dash",
    "joint_limit": "dashdot",
    "ghost": "dot",
    "link": "solid",
}

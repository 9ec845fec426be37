"""Changing a cell's length units: convert every length, or only relabel them.

Converting scales every length the cell format defines (README, Conventions; docs/cell-format.md):
base positions, link lengths and radii, the link underside height, link and tool outlines, base
footprints, tool radii, mounting zones, fixture outlines and heights, target positions and work
heights, the clearance margin and the bases and links of layout variants. Angles, speeds,
accelerations, jerks, times and weights have no length unit and stay as they are. Keys this
version does not know are kept unchanged (their meaning is unknown), and
:func:`unconverted_keys` names them so the window can say so.

Relabelling changes only the ``units`` word: the numbers stay, so the drawing keeps its size in
the new unit (a 325 mm link becomes a 325 in link).
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from .cell import MM_PER_UNIT, UNITS, Arm, Cell, Fixture, Target
from .checks import choice_problem

__all__ = [
    "SIGNIFICANT_DIGITS",
    "unit_factor",
    "convert_units",
    "relabel_units",
    "unconverted_keys",
]

# Extra keys holding lengths, by object (the rest of an object's extra keys are not lengths).
_ARM_POINT_LISTS = ("base_footprint", "mounting_zone")
_KNOWN_ARM_EXTRA = (
    "base",
    "link_outlines",
    "base_footprint",
    "tool_body",
    "mechanical_limits_deg",
    "mounting_zone",
    "joint_jerk_dps3",
)
_KNOWN_FIXTURE_EXTRA = ("dxf_source",)
_KNOWN_TARGET_EXTRA = ("work_height", "dwell_s")
_KNOWN_SEQUENCE_EXTRA = ("start_s",)
_KNOWN_CELL_EXTRA = ("clearance_margin", "placement_weights", "variants")


def unit_factor(old: str, new: str) -> float:
    """How many ``new`` units one ``old`` unit is.

    Examples
    --------
    1 in = 25.4 mm exactly (the international inch, NIST SP 811, B.8):

    >>> unit_factor("in", "mm"), unit_factor("mm", "mm")
    (25.4, 1.0)
    """
    for u in (old, new):
        problem = choice_problem(u, UNITS)
        if problem is not None:
            raise ValueError(f"units {problem}, got {u!r}")
    return MM_PER_UNIT[old] / MM_PER_UNIT[new]


#: Significant digits a converted length keeps: the float noise of the division goes
#: (76.2 mm is 3.0 in, not 3.0000000000000004), a micrometre per kilometre stays.
SIGNIFICANT_DIGITS = 12


class _Scale:
    """v -> v * mm_old / mm_new, rounded to :data:`SIGNIFICANT_DIGITS`."""

    def __init__(self, old: str, new: str) -> None:
        self.a, self.b = MM_PER_UNIT[old], MM_PER_UNIT[new]

    def __rmul__(self, v: float) -> float:
        return float(f"{float(v) * self.a / self.b:.{SIGNIFICANT_DIGITS}g}")


def _num(v: Any, f: Any) -> Any:
    if isinstance(v, bool) or not isinstance(v, int | float):
        return v
    return float(v) * f


def _points(pts: Any, f: Any) -> Any:
    if not isinstance(pts, list | tuple):
        return pts
    return [[_num(c, f) for c in p] if isinstance(p, list | tuple) else p for p in pts]


def _arm(arm: Arm, f: Any) -> Arm:
    ex = dict(arm.extra)
    if isinstance(ex.get("link_outlines"), list | tuple):
        ex["link_outlines"] = [None if o is None else _points(o, f) for o in ex["link_outlines"]]
    for key in _ARM_POINT_LISTS:
        if key in ex:
            ex[key] = _points(ex[key], f)
    tool = ex.get("tool_body")
    if isinstance(tool, dict):
        tool = dict(tool)
        if "radius" in tool:
            tool["radius"] = _num(tool["radius"], f)
        if "outline" in tool:
            tool["outline"] = _points(tool["outline"], f)
        ex["tool_body"] = tool
    radii = arm.link_radii
    under = arm.link_underside_height
    return replace(
        arm,
        x=arm.x * f,
        y=arm.y * f,
        a1=arm.a1 * f,
        a2=arm.a2 * f,
        link_radii=None if radii is None else (radii[0] * f, radii[1] * f),
        link_underside_height=None if under is None else under * f,
        extra=ex,
    )


def _fixture(fx: Fixture, f: Any) -> Fixture:
    return replace(
        fx,
        outline=tuple((x * f, y * f) for x, y in fx.outline),
        height=None if fx.height is None else fx.height * f,
    )


def _target(t: Target, f: Any) -> Target:
    ex = dict(t.extra)
    if "work_height" in ex:
        ex["work_height"] = _num(ex["work_height"], f)
    return replace(t, x=t.x * f, y=t.y * f, extra=ex)


def _variants(value: Any, f: Any) -> Any:
    if not isinstance(value, list):
        return value
    out = []
    for v in value:
        if not isinstance(v, dict) or not isinstance(v.get("arms"), dict):
            out.append(v)
            continue
        arms = {}
        for aid, entry in v["arms"].items():
            if isinstance(entry, dict):
                entry = dict(entry)
                base = entry.get("base")
                if isinstance(base, dict):
                    base = dict(base)
                    for k in ("x", "y"):
                        if k in base:
                            base[k] = _num(base[k], f)
                    entry["base"] = base
                if isinstance(entry.get("links"), list):
                    entry["links"] = [_num(c, f) for c in entry["links"]]
            arms[aid] = entry
        out.append({**v, "arms": arms})
    return out


def convert_units(cell: Cell, units: str) -> Cell:
    """The same cell drawn in ``units``: every length the format defines converted.

    Examples
    --------
    >>> from kinematics.cell import Arm, Cell, Fixture, Target
    >>> arm = Arm("a", "A", 254.0, 0.0, 90.0, 325.0, 275.0, (-90, 90), (-120, 120),
    ...           link_underside_height=762.0)
    >>> box = Fixture("f", "Box", "table", ((0, 0), (25.4, 0), (25.4, 25.4)), height=50.8)
    >>> t = Target("t", "T", 508.0, 0, "a", extra={"work_height": 76.2, "dwell_s": 0.5})
    >>> cell = Cell("c", "mm", (arm,), (box,), (t,), extra={"clearance_margin": 12.7})
    >>> inch = convert_units(cell, "in")
    >>> inch.arms[0].x, inch.arms[0].link_underside_height, inch.fixtures[0].height
    (10.0, 30.0, 2.0)
    >>> inch.targets[0].extra, inch.extra
    ({'work_height': 3.0, 'dwell_s': 0.5}, {'clearance_margin': 0.5})
    >>> inch.arms[0].heading_deg, inch.arms[0].q1_limits, inch.units
    (90.0, (-90, 90), 'in')
    """
    if unit_factor(cell.units, units) == 1.0:
        return replace(cell, units=units)
    f = _Scale(cell.units, units)
    ex = dict(cell.extra)
    if "clearance_margin" in ex:
        ex["clearance_margin"] = _num(ex["clearance_margin"], f)
    if "variants" in ex:
        ex["variants"] = _variants(ex["variants"], f)
    return replace(
        cell,
        units=units,
        arms=tuple(_arm(a, f) for a in cell.arms),
        fixtures=tuple(_fixture(x, f) for x in cell.fixtures),
        targets=tuple(_target(t, f) for t in cell.targets),
        extra=ex,
    )


def relabel_units(cell: Cell, units: str) -> Cell:
    """The same numbers under another unit word (the drawing keeps its size in numbers).

    Examples
    --------
    >>> from kinematics.cell import Cell
    >>> relabel_units(Cell("c", "mm"), "in").units
    'in'
    """
    unit_factor(cell.units, units)  # checks both
    return replace(cell, units=units)


def unconverted_keys(cell: Cell) -> list[str]:
    """Extra keys a conversion leaves as they are because this version does not know them,
    as JSON-like paths ("arms[0].my_offset").

    Examples
    --------
    >>> from kinematics.cell import Cell
    >>> unconverted_keys(Cell("c", "mm", extra={"clearance_margin": 5, "site_offset": 30}))
    ['site_offset']
    """
    out = [k for k in cell.extra if k not in _KNOWN_CELL_EXTRA]
    for i, a in enumerate(cell.arms):
        out += [f"arms[{i}].{k}" for k in a.extra if k not in _KNOWN_ARM_EXTRA]
    for i, fx in enumerate(cell.fixtures):
        out += [f"fixtures[{i}].{k}" for k in fx.extra if k not in _KNOWN_FIXTURE_EXTRA]
    for i, t in enumerate(cell.targets):
        out += [f"targets[{i}].{k}" for k in t.extra if k not in _KNOWN_TARGET_EXTRA]
    for i, s in enumerate(cell.sequences):
        out += [f"sequences[{i}].{k}" for k in s.extra if k not in _KNOWN_SEQUENCE_EXTRA]
    return out

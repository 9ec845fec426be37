"""Cell-file problems in the words of the window's fields (no Qt).

The loader names a value by its JSON path ("arms[0].links[1]: must be a length between ...");
a field beside which the reason is shown is called "a2". :data:`FIELD_WORDS` is the one table
from paths to field labels; :func:`in_field_words` rewrites a problem line with it, naming the
arm, fixture or target as well when the problem is not about the item being edited.
"""

from __future__ import annotations

import re

from kinematics.cell import Cell

__all__ = ["FIELD_WORDS", "field_label", "in_field_words"]

#: JSON path inside an arm, fixture, target or the cell (indices as "[n]") -> field label.
FIELD_WORDS: dict[str, str] = {
    # arms
    "arms.id": "id",
    "arms.name": "name",
    "arms.base": "base",
    "arms.base.x": "base x",
    "arms.base.y": "base y",
    "arms.base.heading_deg": "heading",
    "arms.links": "link lengths",
    "arms.links[0]": "a1",
    "arms.links[1]": "a2",
    "arms.joint_limits_deg": "joint limits",
    "arms.joint_limits_deg[0]": "q1 limits",
    "arms.joint_limits_deg[1]": "q2 limits",
    "arms.joint_limits_deg[0][0]": "q1 min",
    "arms.joint_limits_deg[0][1]": "q1 max",
    "arms.joint_limits_deg[1][0]": "q2 min",
    "arms.joint_limits_deg[1][1]": "q2 max",
    "arms.elbow": "elbow setting",
    "arms.link_radii": "link radii",
    "arms.link_radii[0]": "link 1 radius",
    "arms.link_radii[1]": "link 2 radius",
    "arms.link_underside_height": "link underside height",
    "arms.joint_speed_dps": "joint speeds",
    "arms.joint_speed_dps[0]": "joint 1 speed",
    "arms.joint_speed_dps[1]": "joint 2 speed",
    "arms.joint_accel_dps2": "joint accelerations",
    "arms.joint_accel_dps2[0]": "joint 1 acceleration",
    "arms.joint_accel_dps2[1]": "joint 2 acceleration",
    "arms.joint_jerk_dps3": "jerk limits",
    "arms.joint_jerk_dps3[0]": "joint 1 jerk",
    "arms.joint_jerk_dps3[1]": "joint 2 jerk",
    "arms.mechanical_limits_deg": "mechanical limits",
    "arms.mechanical_limits_deg[0]": "q1 mechanical limits",
    "arms.mechanical_limits_deg[1]": "q2 mechanical limits",
    "arms.mechanical_limits_deg[0][0]": "q1 mechanical min",
    "arms.mechanical_limits_deg[0][1]": "q1 mechanical max",
    "arms.mechanical_limits_deg[1][0]": "q2 mechanical min",
    "arms.mechanical_limits_deg[1][1]": "q2 mechanical max",
    "arms.tool_body": "tool body",
    "arms.tool_body.radius": "tool radius",
    "arms.tool_body.outline": "tool outline",
    "arms.link_outlines": "link outlines",
    "arms.base_footprint": "base footprint",
    "arms.mounting_zone": "mounting zone",
    # fixtures
    "fixtures.id": "id",
    "fixtures.name": "name",
    "fixtures.kind": "kind",
    "fixtures.outline": "outline",
    "fixtures.height": "height",
    # targets
    "targets.id": "id",
    "targets.name": "name",
    "targets.x": "x",
    "targets.y": "y",
    "targets.arm": "arm",
    "targets.work_height": "work height",
    "targets.dwell_s": "dwell",
    # sequences
    "sequences.arm": "arm of a sequence",
    "sequences.targets": "targets of a sequence",
    "sequences.start_s": "start time of a sequence",
    # the cell
    "name": "cell name",
    "units": "units",
    "arms": "arms",
    "clearance_margin": "clearance margin",
}

_LEAD = re.compile(r"^(?P<path>[A-Za-z_][A-Za-z0-9_]*(?:\[\d+\]|\.[A-Za-z_][A-Za-z0-9_]*)*): ")
_ITEM = re.compile(r"^(arms|fixtures|targets|sequences)\[(\d+)\]")
_OUTLINE_POINT = re.compile(r"^(fixtures\.outline|arms\.\w+)\[(\d+)\](?:\[(\d)\])?$")


def field_label(path: str) -> tuple[str | None, str, int | None]:
    """(kind of item, field label, item index) for a JSON path; the label is the path itself
    when the table does not know it.

    Examples
    --------
    >>> field_label("arms[0].links[1]")
    ('arms', 'a2', 0)
    >>> field_label("fixtures[3].outline[2][0]")
    ('fixtures', 'x of outline point 3', 3)
    >>> field_label("clearance_margin")
    (None, 'clearance margin', None)
    """
    m = _ITEM.match(path)
    kind, index, rest = None, None, path
    if m:
        kind, index = m.group(1), int(m.group(2))
        rest = m.group(1) + path[m.end() :]
    if rest in FIELD_WORDS:
        return kind, FIELD_WORDS[rest], index
    p = _OUTLINE_POINT.match(rest)
    if p and p.group(1) in ("fixtures.outline", "arms.base_footprint", "arms.mounting_zone"):
        point = f"outline point {int(p.group(2)) + 1}"
        axis = {"0": "x of ", "1": "y of ", None: ""}[p.group(3)]
        return kind, f"{axis}{point}", index
    return kind, path, index


def _owner(cell: Cell | None, kind: str | None, index: int | None) -> str:
    if cell is None or kind is None or index is None:
        return ""
    items = {"arms": cell.arms, "fixtures": cell.fixtures, "targets": cell.targets}.get(kind)
    if items is None or not 0 <= index < len(items):
        return ""
    return items[index].name or items[index].id


def in_field_words(
    message: str, cell: Cell | None = None, focus: tuple[str, int] | None = None
) -> str:
    """A loader problem ("<path>: <what>, got <value>") said with the field's label.

    ``focus`` is the item being edited, ("arms", 0) say: a problem of that item gives the
    label alone (the reason sits beside its field); a problem elsewhere also names the item
    ("height of Infeed conveyor ..."), found in ``cell``. A line without a leading JSON path
    is returned as it is.

    Examples
    --------
    >>> in_field_words("arms[0].links[1]: must be a length between 0.001 and 1e+06, got 2e+06")
    'a2 must be a length between 0.001 and 1e+06, got 2e+06'
    >>> in_field_words("arms[0].joint_limits_deg[0]: the minimum must be less than the maximum")
    'q1 limits: the minimum must be less than the maximum'
    """
    m = _LEAD.match(message)
    if not m:
        return message
    kind, label, index = field_label(m.group("path"))
    rest = message[m.end() :]
    if focus is None or (kind, index) != focus:
        owner = _owner(cell, kind, index)
        if owner:
            label = f"{label} of {owner}"
    joiner = " " if rest.startswith(("must ", "is ", "names ", "target belongs")) else ": "
    return f"{label}{joiner}{rest}"

"""Field validation for the panels: text in, new value or a one-line reason out.

Plain Python (no Qt) so the rules are testable without a display. Each arm field
is a :class:`ArmField` that shows an arm's value as text and builds the changed
arm from typed text, raising :class:`Invalid` with the reason when the text is
refused. The rules follow the cell file's: finite numbers, positive lengths,
ordered joint limits at most 720 degrees wide, known elbow settings.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, replace

from kinematics.cell import ELBOW_SETTINGS, Arm, Cell, Target
from kinematics.cellfile import MAX_JOINT_RANGE_DEG, MAX_MAGNITUDE, CellFileError, dumps_cell
from kinematics.checks import choice_problem

from .field_words import in_field_words

__all__ = [
    "Invalid",
    "MAX_NAME_LENGTH",
    "MAX_LIMIT_WIDTH",
    "format_number",
    "parse_number",
    "parse_name",
    "ArmField",
    "ARM_FIELDS",
    "arm_field",
    "check_elbow",
    "replace_arm",
    "replace_target",
    "target_with",
    "TARGET_EXTRA_COLUMNS",
    "COLUMN_WORDS",
    "targets_with",
    "check_cell",
]

#: Longest accepted name (characters); longer names break table layouts.
MAX_NAME_LENGTH = 80
#: Widest joint range accepted (degrees), the cell file's rule.
MAX_LIMIT_WIDTH = MAX_JOINT_RANGE_DEG


class Invalid(ValueError):
    """Typed text that is refused; ``str()`` is the reason shown beside the field."""


def format_number(value: float) -> str:
    """Shortest text that reads back as exactly ``value`` ("400", "12.5", "0.1")."""
    if value == int(value) and abs(value) < 1e15:
        return str(int(value))
    return repr(float(value))


def parse_number(text: str) -> float:
    """A finite number from typed text.

    Examples
    --------
    >>> parse_number(" 12.5 ")
    12.5
    >>> parse_number("abc")
    Traceback (most recent call last):
    ...
    app.panels.validate.Invalid: not a number: 'abc'
    """
    t = text.strip()
    if not t:
        raise Invalid("enter a number")
    try:
        v = float(t)
    except ValueError:
        raise Invalid(f"not a number: {t!r}") from None
    if not math.isfinite(v):
        raise Invalid(f"must be a finite number, got {t!r}")
    if abs(v) > MAX_MAGNITUDE:
        raise Invalid(f"must be between -{MAX_MAGNITUDE:g} and {MAX_MAGNITUDE:g}, got {t}")
    return v


def parse_name(text: str) -> str:
    """A non-empty one-line name of at most :data:`MAX_NAME_LENGTH` characters."""
    t = text.strip()
    if not t:
        raise Invalid("name must not be empty")
    if any(c in t for c in "\r\n\t"):
        raise Invalid("name must be one line")
    if len(t) > MAX_NAME_LENGTH:
        raise Invalid(f"name is {len(t)} characters long, at most {MAX_NAME_LENGTH} allowed")
    return t


def _positive(text: str) -> float:
    v = parse_number(text)
    if v <= 0:
        raise Invalid(f"must be greater than 0, got {format_number(v)}")
    return v


def _limits(lo: float, hi: float) -> tuple[float, float]:
    if lo >= hi:
        raise Invalid(f"min must be below max ({format_number(lo)} >= {format_number(hi)})")
    if hi - lo > MAX_LIMIT_WIDTH:
        raise Invalid(f"range is {format_number(hi - lo)}°, at most {MAX_LIMIT_WIDTH:g}° allowed")
    return (lo, hi)


@dataclass(frozen=True)
class ArmField:
    """One editable arm field: its label, how it reads and how typed text changes the arm.

    Attributes
    ----------
    key : str
        Stable identifier (also the widget's object name).
    label : str
        Short label as in the undo text "Change <label> of <arm>".
    unit : str
        "length", "deg", "deg/s", "deg/s²" or "" (shown beside the field).
    get : callable
        ``get(arm) -> str``, the text shown for the arm's current value.
    put : callable
        ``put(arm, text) -> Arm``, the changed arm; raises :class:`Invalid`.
    optional : bool
        Empty text is accepted and clears the value.
    """

    key: str
    label: str
    unit: str
    get: Callable[[Arm], str]
    put: Callable[[Arm, str], Arm]
    optional: bool = False


def _scalar(key: str, label: str, unit: str, parse: Callable[[str], float]) -> ArmField:
    return ArmField(
        key,
        label,
        unit,
        lambda arm: format_number(getattr(arm, key)),
        lambda arm, text: replace(arm, **{key: parse(text)}),
    )


def _limit(key: str, label: str, attr: str, side: int) -> ArmField:
    def put(arm: Arm, text: str) -> Arm:
        pair = list(getattr(arm, attr))
        pair[side] = parse_number(text)
        return replace(arm, **{attr: _limits(pair[0], pair[1])})

    return ArmField(key, label, "deg", lambda arm: format_number(getattr(arm, attr)[side]), put)


def _pair(key: str, label: str, unit: str, attr: str, side: int) -> ArmField:
    """One half of an optional pair: empty clears both, a value alone fills both halves."""

    def get(arm: Arm) -> str:
        pair = getattr(arm, attr)
        return "" if pair is None else format_number(pair[side])

    def put(arm: Arm, text: str) -> Arm:
        if not text.strip():
            return replace(arm, **{attr: None})
        v = _positive(text)
        old = getattr(arm, attr)
        pair = [v, v] if old is None else list(old)
        pair[side] = v
        return replace(arm, **{attr: (pair[0], pair[1])})

    return ArmField(key, label, unit, get, put, optional=True)


def _nonnegative(text: str) -> float:
    v = parse_number(text)
    if v < 0:
        raise Invalid(f"must be 0 or more, got {format_number(v)}")
    return v


def _underside() -> ArmField:
    """The height of the links' underside above the floor (optional, 0 or more)."""

    def get(arm: Arm) -> str:
        v = arm.link_underside_height
        return "" if v is None else format_number(v)

    def put(arm: Arm, text: str) -> Arm:
        v = None if not text.strip() else _nonnegative(text)
        return replace(arm, link_underside_height=v)

    return ArmField("under", "link underside height", "length", get, put, optional=True)


def _with_extra(arm: Arm, key: str, value: object) -> Arm:
    extra = dict(arm.extra)
    if value is None:
        extra.pop(key, None)
    else:
        extra[key] = value
    return replace(arm, extra=extra)


def _tool_radius() -> ArmField:
    """The tool body's disc radius (``tool_body.radius``; a tool outline is kept)."""

    def get(arm: Arm) -> str:
        tool = arm.extra.get("tool_body")
        r = tool.get("radius") if isinstance(tool, dict) else None
        return "" if r is None else format_number(float(r))

    def put(arm: Arm, text: str) -> Arm:
        tool = arm.extra.get("tool_body")
        tool = dict(tool) if isinstance(tool, dict) else {}
        if text.strip():
            tool["radius"] = _positive(text)
        else:
            tool.pop("radius", None)
        return _with_extra(arm, "tool_body", tool or None)

    return ArmField("tool_r", "tool radius", "length", get, put, optional=True)


def _extra_pair(key: str, label: str, unit: str, extra_key: str, side: int) -> ArmField:
    """One half of an optional pair kept in the arm's extra keys (the jerk limits)."""

    def get(arm: Arm) -> str:
        pair = arm.extra.get(extra_key)
        return "" if not isinstance(pair, list | tuple) else format_number(float(pair[side]))

    def put(arm: Arm, text: str) -> Arm:
        if not text.strip():
            return _with_extra(arm, extra_key, None)
        v = _positive(text)
        old = arm.extra.get(extra_key)
        pair = [v, v] if not isinstance(old, list | tuple) else [float(c) for c in old]
        pair[side] = v
        return _with_extra(arm, extra_key, pair)

    return ArmField(key, label, unit, get, put, optional=True)


def _mechanical(key: str, label: str, joint: int, side: int) -> ArmField:
    """One bound of ``mechanical_limits_deg``: empty means "as the joint limit"; when every
    bound equals its joint limit the key goes."""

    def current(arm: Arm) -> list[list[float]]:
        m = arm.extra.get("mechanical_limits_deg")
        if isinstance(m, list | tuple) and len(m) == 2:
            return [[float(v) for v in pair] for pair in m]
        return [list(arm.q1_limits), list(arm.q2_limits)]

    def get(arm: Arm) -> str:
        if arm.extra.get("mechanical_limits_deg") is None:
            return ""
        return format_number(current(arm)[joint][side])

    def put(arm: Arm, text: str) -> Arm:
        m = current(arm)
        limits = [list(arm.q1_limits), list(arm.q2_limits)]
        m[joint][side] = limits[joint][side] if not text.strip() else parse_number(text)
        lo, hi = m[joint]
        if lo >= hi:
            raise Invalid(f"min must be below max ({format_number(lo)} >= {format_number(hi)})")
        same = all(float(a) == float(b) for p, q in zip(m, limits) for a, b in zip(p, q))
        return _with_extra(arm, "mechanical_limits_deg", None if same else m)

    return ArmField(key, label, "deg", get, put, optional=True)


def _name_put(arm: Arm, text: str) -> Arm:
    return replace(arm, name=parse_name(text))


#: The arm panel's text fields, in display order (the elbow setting is a choice list).
ARM_FIELDS: tuple[ArmField, ...] = (
    ArmField("name", "name", "", lambda arm: arm.name, _name_put),
    _scalar("x", "base x", "length", parse_number),
    _scalar("y", "base y", "length", parse_number),
    _scalar("heading_deg", "heading", "deg", parse_number),
    _scalar("a1", "a1", "length", _positive),
    _scalar("a2", "a2", "length", _positive),
    _limit("q1_min", "q1 min", "q1_limits", 0),
    _limit("q1_max", "q1 max", "q1_limits", 1),
    _limit("q2_min", "q2 min", "q2_limits", 0),
    _limit("q2_max", "q2 max", "q2_limits", 1),
    _pair("r1", "link 1 radius", "length", "link_radii", 0),
    _pair("r2", "link 2 radius", "length", "link_radii", 1),
    _pair("w1", "joint 1 speed", "deg/s", "joint_speed_dps", 0),
    _pair("w2", "joint 2 speed", "deg/s", "joint_speed_dps", 1),
    _pair("al1", "joint 1 acceleration", "deg/s²", "joint_accel_dps2", 0),
    _pair("al2", "joint 2 acceleration", "deg/s²", "joint_accel_dps2", 1),
    _extra_pair("j1", "joint 1 jerk", "deg/s³", "joint_jerk_dps3", 0),
    _extra_pair("j2", "joint 2 jerk", "deg/s³", "joint_jerk_dps3", 1),
    _underside(),
    _tool_radius(),
    _mechanical("m1_min", "q1 mechanical min", 0, 0),
    _mechanical("m1_max", "q1 mechanical max", 0, 1),
    _mechanical("m2_min", "q2 mechanical min", 1, 0),
    _mechanical("m2_max", "q2 mechanical max", 1, 1),
)


def arm_field(key: str) -> ArmField:
    """The arm field with this key (KeyError when there is none)."""
    for f in ARM_FIELDS:
        if f.key == key:
            return f
    raise KeyError(key)


def check_elbow(value: str) -> str:
    """An elbow setting from the choice list."""
    problem = choice_problem(value, ELBOW_SETTINGS)
    if problem is not None:
        raise Invalid(f"elbow setting {problem}, got {value!r}")
    return value


def replace_arm(cell: Cell, arm: Arm) -> Cell:
    """The cell with the arm of the same id replaced."""
    return replace(cell, arms=tuple(arm if a.id == arm.id else a for a in cell.arms))


def replace_target(cell: Cell, target: Target) -> Cell:
    """The cell with the target of the same id replaced.

    A target moved to another arm leaves the sequences of the other arms, since a
    sequence only visits its own arm's targets.
    """
    targets = tuple(target if t.id == target.id else t for t in cell.targets)
    sequences = tuple(
        s
        if s.arm == target.arm or target.id not in s.targets
        else replace(s, targets=tuple(i for i in s.targets if i != target.id))
        for s in cell.sequences
    )
    return replace(cell, targets=targets, sequences=sequences)


#: Table columns kept in a target's extra keys: column key -> (file key, words).
TARGET_EXTRA_COLUMNS = {
    "work_height": ("work_height", "work height"),
    "dwell": ("dwell_s", "dwell"),
}


def target_with(cell: Cell, target: Target, column: str, text: str) -> Target:
    """The target with one table column ("name", "x", "y", "arm", "work_height", "dwell")
    changed from typed text; an empty work height or dwell removes the key."""
    if column in TARGET_EXTRA_COLUMNS:
        key = TARGET_EXTRA_COLUMNS[column][0]
        extra = dict(target.extra)
        if not text.strip():
            extra.pop(key, None)
        else:
            v = parse_number(text)
            if key == "dwell_s" and v < 0:
                raise Invalid(f"must be 0 seconds or more, got {format_number(v)}")
            extra[key] = v
        return replace(target, extra=extra)
    if column == "name":
        return replace(target, name=parse_name(text))
    if column in ("x", "y"):
        return replace(target, **{column: parse_number(text)})
    if column == "arm":
        arm_id = text.strip()
        ids = [a.id for a in cell.arms]
        if arm_id not in ids:
            raise Invalid(f"no arm with id {arm_id!r} (arms: {', '.join(ids)})")
        return replace(target, arm=arm_id)
    raise KeyError(column)


#: Words for the editable table columns (undo labels and messages).
COLUMN_WORDS = {
    "name": "name",
    "x": "x",
    "y": "y",
    "arm": "arm",
    "work_height": "work height",
    "dwell": "dwell",
}


def targets_with(
    cell: Cell, ids: list[str] | tuple[str, ...], column: str, text: str, place: str = "drop"
) -> tuple[Cell, str]:
    """One column set to the same typed value for several targets: the checked cell and
    its undo label ("Set work height of 3 targets").

    For the arm column, ``place`` says what happens to the targets' places in their old
    arms' sequences (:data:`app.interaction.sequence_edits.PLACES`). Raises
    :class:`Invalid` naming the first target whose value is refused.

    Examples
    --------
    >>> from kinematics.cell import Arm
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-170, 170), (-150, 150))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("p", "P", 300, 0, "a"),
    ...                                        Target("q", "Q", 0, 300, "a")))
    >>> new, label = targets_with(cell, ["p", "q"], "work_height", "720")
    >>> [t.extra for t in new.targets], label
    ([{'work_height': 720.0}, {'work_height': 720.0}], 'Set work height of 2 targets')
    """
    from app.interaction.sequence_edits import reassign_targets

    by_id = {t.id: t for t in cell.targets}
    ids = [i for i in dict.fromkeys(ids) if i in by_id]
    words = COLUMN_WORDS[column]
    what = f"{ids[0]}" if len(ids) == 1 else f"{len(ids)} targets"
    if column == "arm":
        arm_id = target_with(cell, by_id[ids[0]], "arm", text).arm
        new = reassign_targets(cell, ids, arm_id, place)
        return check_cell(new), f"Assign {what} to {arm_id}"
    new = cell
    for tid in ids:
        try:
            changed = target_with(new, by_id[tid], column, text)
        except Invalid as exc:
            raise Invalid(f"{tid} {words}: {exc}") from None
        new = replace(new, targets=tuple(changed if t.id == tid else t for t in new.targets))
    verb = "Rename" if column == "name" else "Move" if column in ("x", "y") else "Set"
    label = f"{verb} {what}" if verb != "Set" else f"Set {words} of {what}"
    return check_cell(new), label


def check_cell(cell: Cell, focus: tuple[str, int] | None = None) -> Cell:
    """The cell if the cell file would store and load it back, else :class:`Invalid`.

    The last gate before an edit: whatever the file format refuses, the panels refuse,
    said in the fields' own words ("a2 must be a length between ...",
    :func:`app.panels.field_words.in_field_words`); ``focus`` is the item being edited
    (("arms", 0)), which the reason then does not name again.
    """
    try:
        dumps_cell(cell)
    except CellFileError as exc:
        raise Invalid(in_field_words(str(exc).removeprefix("<cell>: "), cell, focus)) from None
    return cell

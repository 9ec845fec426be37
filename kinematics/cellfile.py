"""Reading and writing ``*.cell.json`` work-cell files.

A cell file is our own JSON format, UTF-8 encoded, described in full in
``docs/cell-format.md``. This module turns a file into a :class:`~kinematics.cell.Cell`
and back:

* :func:`load_cell` / :func:`parse_cell` read and check a file. Every problem
  found is collected in one pass and raised together as a :class:`CellFileError`
  whose lines read ``<file>: <json path>: <what is wrong>, got <value>``.
  Bad input never raises any other exception.
* :func:`cell_to_dict` / :func:`dumps_cell` write the canonical text (stable key
  order, 2-space indent, trailing newline).
* :func:`save_cell` writes a file atomically and keeps earlier versions as
  timestamped backups ``<file name>.<YYYYMMDD-HHMMSS>.bak`` (:mod:`kinematics.savefile`).

Numbers are held as floats in the data types; a float with an integral value is
written as an integer (``120.0`` is written ``120``), so a canonically written
file reads back and writes out byte for byte the same.

>>> from kinematics.cell import Cell
>>> text = dumps_cell(Cell(name="Empty bench"))
>>> parse_cell(text).name
'Empty bench'
"""

from __future__ import annotations

import json
import math
import numbers
import os
import re
import stat
from collections.abc import Callable, Iterable
from pathlib import Path
from typing import Any

from kinematics.bodies import BodyDataError, validate_cell_bodies
from kinematics.cell import ELBOW_SETTINGS, UNITS, Arm, Cell, Fixture, Sequence, Target
from kinematics.checks import choice_problem, polygon_problem
from kinematics.layout_keys import validate_layout_keys
from kinematics.review import review_problems
from kinematics.savefile import (
    BACKUPS_KEPT,
    ReadOnlyTargetError,
    SaveError,
    SaveOutcome,
    check_target,
    save_bytes,
)
from kinematics.underlay import UNDERLAY_KEY, underlay_problems

__all__ = [
    "FORMAT",
    "CURRENT_VERSION",
    "MIGRATIONS",
    "MAX_FILE_BYTES",
    "MAX_DEPTH",
    "MAX_MAGNITUDE",
    "LINK_LENGTH_RANGE",
    "MAX_JOINT_RANGE_DEG",
    "BACKUP_SUFFIX",
    "BACKUPS_KEPT",
    "CellFileError",
    "ReadOnlyFileError",
    "load_cell",
    "parse_cell",
    "cell_to_dict",
    "dumps_cell",
    "save_cell",
]

#: Value of the top-level ``"format"`` key.
FORMAT = "elbowroom-cell"
#: The format version this program writes and the highest one it reads.
CURRENT_VERSION = 1
#: Upgrade steps: ``MIGRATIONS[n]`` turns a version-``n`` document into version ``n + 1``.
MIGRATIONS: dict[int, Callable[[dict[str, Any]], dict[str, Any]]] = {}
#: Largest file accepted, in bytes.
MAX_FILE_BYTES = 20 * 1024 * 1024
#: Deepest nesting of JSON arrays and objects accepted.
MAX_DEPTH = 64
#: Largest absolute value accepted for any number the program uses.
MAX_MAGNITUDE = 1e9
#: Link lengths and radii must lie in this range (cell units): beyond it the region
#: polygons and areas lose their precision.
LINK_LENGTH_RANGE = (1e-3, 1e6)
#: Widest joint range accepted, max - min, in degrees.
MAX_JOINT_RANGE_DEG = 720.0
#: Ending of the backups kept by :func:`save_cell` (``<file name>.<YYYYMMDD-HHMMSS>.bak``).
BACKUP_SUFFIX = ".bak"

_MAX_PROBLEMS = 100
_SHOW_CHARS = 80

_TOP_KEYS = (
    "format",
    "version",
    "name",
    "units",
    "arms",
    "fixtures",
    "targets",
    "sequences",
    "review",
)
_ARM_KEYS = (
    "id",
    "name",
    "base",
    "links",
    "joint_limits_deg",
    "elbow",
    "link_radii",
    "link_underside_height",
    "joint_speed_dps",
    "joint_accel_dps2",
)
_BASE_KEYS = ("x", "y", "heading_deg")
_FIXTURE_KEYS = ("id", "name", "kind", "outline", "height")
_TARGET_KEYS = ("id", "name", "x", "y", "arm")
_SEQUENCE_KEYS = ("arm", "targets")

_MISSING: Any = object()
_IDENT = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")

JsonPath = tuple[str | int, ...]


class CellFileError(Exception):
    """A cell file could not be read or written.

    Parameters
    ----------
    problems : list of str or str
        One line per problem, each naming the file, the JSON path and the value.

    Attributes
    ----------
    problems : list of str
        All problems found, in file order; ``str(err)`` is the first one.
    """

    def __init__(self, problems: Iterable[str] | str) -> None:
        lines = [problems] if isinstance(problems, str) else list(problems)
        self.problems: list[str] = lines or ["unknown problem"]
        # Pass the list so the exception pickles and copies intact.
        super().__init__(self.problems)

    def __str__(self) -> str:
        return self.problems[0]


class ReadOnlyFileError(CellFileError):
    """Saving would replace a read-only file; ``save_cell(..., replace_read_only=True)`` does."""


# --------------------------------------------------------------------------- showing values


def _printable(text: str) -> str:
    """Escape characters that would break a one-line message or a terminal."""
    return "".join(c if c.isprintable() else f"\\u{ord(c):04x}" for c in text)


def _short(value: Any, depth: int = 0) -> str:
    """Render a parsed JSON value briefly, bounded in time and length."""
    if isinstance(value, _BadNumber):
        return str(value)
    if value is None or isinstance(value, bool):
        return json.dumps(value)
    if isinstance(value, numbers.Real):
        return json.dumps(value if isinstance(value, int) else float(value))
    if isinstance(value, str):
        text = value if len(value) <= 40 else value[:37] + "..."
        return json.dumps(text, ensure_ascii=False)
    if isinstance(value, (list, tuple)):
        if depth >= 3:
            return "[...]" if value else "[]"
        items = [_short(v, depth + 1) for v in value[:6]]
        if len(value) > 6:
            items.append(f"... {len(value)} items")
        return "[" + ", ".join(items) + "]"
    if isinstance(value, dict):
        if depth >= 3:
            return "{...}" if value else "{}"
        keys = list(value)[:4]
        items = [f"{_short(k, 3)}: {_short(value[k], depth + 1)}" for k in keys]
        if len(value) > 4:
            items.append(f"... {len(value)} keys")
        return "{" + ", ".join(items) + "}"
    return type(value).__name__


def _show(value: Any) -> str:
    text = _printable(_short(value))
    return text if len(text) <= _SHOW_CHARS else text[: _SHOW_CHARS - 3] + "..."


def _path_text(path: JsonPath) -> str:
    out: list[str] = []
    for part in path:
        if isinstance(part, int):
            out.append(f"[{part}]")
        elif _IDENT.match(part):
            out.append(("." if out else "") + part)
        else:
            out.append(f"[{_show(part)}]")
    return "".join(out) or "top level"


class _Report:
    """Collects problem lines for one source."""

    def __init__(self, source: str) -> None:
        self.source = source
        self.problems: list[str] = []
        self.count = 0

    def line(self, text: str) -> None:
        self.count += 1
        if len(self.problems) < _MAX_PROBLEMS:
            self.problems.append(f"{self.source}: {text}")

    def add(
        self, path: JsonPath, what: str, value: Any = _MISSING, shown: str | None = None
    ) -> None:
        text = f"{_path_text(path)}: {what}"
        if shown is not None:
            text += f", got {shown}"
        elif value is not _MISSING:
            text += f", got {_show(value)}"
        self.line(text)

    def error(self) -> CellFileError:
        lines = list(self.problems)
        if self.count > len(lines):
            lines.append(f"{self.source}: ... and {self.count - len(lines)} more problems")
        return CellFileError(lines)

    def raise_if_any(self) -> None:
        if self.count:
            raise self.error()


# --------------------------------------------------------------------------- JSON decoding


class _BadNumber(str):
    """The literal text of a number that is not a finite double (NaN, Infinity, 1e400)."""


def _parse_float(text: str) -> float | _BadNumber:
    value = float(text)
    return value if math.isfinite(value) else _BadNumber(text)


def _parse_int(text: str) -> int | _BadNumber:
    # More than 308 digits cannot be a finite double; also avoids Python's digit limit.
    return _BadNumber(text) if len(text.lstrip("-")) > 308 else int(text)


class _Decoder:
    """JSON decoding that remembers duplicate keys instead of dropping them."""

    def __init__(self) -> None:
        # id(obj) -> (obj, {key: [values]}); holding obj keeps its id from being reused.
        self.duplicates: dict[int, tuple[dict[str, Any], dict[str, list[Any]]]] = {}

    def pairs(self, pairs: list[tuple[str, Any]]) -> dict[str, Any]:
        obj: dict[str, Any] = {}
        dups: dict[str, list[Any]] | None = None
        for key, value in pairs:
            if key in obj:
                if dups is None:
                    dups = {}
                dups.setdefault(key, [obj[key]]).append(value)
            obj[key] = value
        if dups:
            self.duplicates[id(obj)] = (obj, dups)
        return obj

    def loads(self, text: str) -> Any:
        return json.loads(
            text,
            object_pairs_hook=self.pairs,
            parse_float=_parse_float,
            parse_int=_parse_int,
            parse_constant=_BadNumber,
        )


def _valid_text(text: str) -> bool:
    try:
        text.encode("utf-8")
    except UnicodeEncodeError:
        return False
    return True


def _scan(data: Any, decoder: _Decoder, report: _Report) -> None:
    """Check the whole tree, extras included: duplicates, bad numbers, bad text, depth."""
    stack: list[tuple[Any, JsonPath, int]] = [(data, (), 0)]
    too_deep = False
    while stack:
        value, path, depth = stack.pop()
        if isinstance(value, _BadNumber):
            report.add(path, "must be a finite number", value)
        elif isinstance(value, str):
            if not _valid_text(value):
                report.add(path, "is not valid text (it holds an unpaired surrogate escape)", value)
        elif isinstance(value, (dict, list)):
            if depth >= MAX_DEPTH:
                if not too_deep:
                    report.add(path, f"is nested too deeply (more than {MAX_DEPTH} levels)")
                    too_deep = True
                continue
            if isinstance(value, list):
                children = [(v, path + (i,), depth + 1) for i, v in enumerate(value)]
            else:
                entry = decoder.duplicates.get(id(value))
                if entry is not None and entry[0] is value:
                    for key, values in entry[1].items():
                        shown = " and ".join(_show(v) for v in values[:4])
                        report.add(path + (key,), f"key appears {len(values)} times", shown=shown)
                children = []
                for key, v in value.items():
                    if not _valid_text(key):
                        report.add(path, "has a key that is not valid text", key)
                    children.append((v, path + (key,), depth + 1))
            stack.extend(reversed(children))


# --------------------------------------------------------------------------- field checks


def _is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


_NUMBER_WORDS = {
    "any": "a number",
    "positive": "a positive number",
    "nonnegative": "a number of 0 or more",
    "length": "a positive number",
}


def _number(value: Any, path: JsonPath, r: _Report, kind: str = "any") -> float | None:
    """Check one number; ``kind`` is "any", "positive", "nonnegative" or "length"."""
    if isinstance(value, _BadNumber):
        return None  # already reported by _scan
    if not _is_number(value):
        r.add(path, f"must be {_NUMBER_WORDS[kind]}", value)
        return None
    v = float(value)
    if (kind in ("positive", "length") and v <= 0) or (kind == "nonnegative" and v < 0):
        r.add(path, f"must be {_NUMBER_WORDS[kind]}", value)
        return None
    lo, hi = LINK_LENGTH_RANGE
    if kind == "length" and not lo <= v <= hi:
        r.add(path, f"must be a length between {lo:g} and {hi:g}", value)
        return None
    if abs(v) > MAX_MAGNITUDE:
        r.add(path, f"must be between -{MAX_MAGNITUDE:g} and {MAX_MAGNITUDE:g}", value)
        return None
    return v


def _numbers(
    value: Any, path: JsonPath, r: _Report, count: int, kind: str = "any"
) -> tuple[float, ...] | None:
    """Check a list of exactly ``count`` numbers."""
    if not isinstance(value, list) or len(value) != count:
        what = _NUMBER_WORDS[kind].replace("a ", "", 1)
        r.add(path, f"must be a list of {count} {what.replace('number', 'numbers')}", value)
        return None
    out = [_number(v, path + (i,), r, kind) for i, v in enumerate(value)]
    if any(v is None for v in out):
        return None
    return tuple(out)  # type: ignore[arg-type]


def _point(value: Any, path: JsonPath, r: _Report) -> tuple[float, float] | None:
    if not isinstance(value, list) or len(value) != 2:
        r.add(path, "must be a point [x, y] of two numbers", value)
        return None
    x = _number(value[0], path + (0,), r)
    y = _number(value[1], path + (1,), r)
    if x is None or y is None:
        return None
    return (x, y)


def _text(value: Any, path: JsonPath, r: _Report, *, is_id: bool = False) -> str | None:
    if is_id:
        if not isinstance(value, str) or not value.strip():
            r.add(path, "must be a non-empty string", value)
            return None
    elif not isinstance(value, str):
        r.add(path, "must be a string", value)
        return None
    return value


def _choice(value: Any, path: JsonPath, r: _Report, choices: Iterable[str]) -> str | None:
    """Check a string option; the message lists every valid choice."""
    problem = choice_problem(value, choices)
    if problem is None:
        return value
    r.add(path, problem, value)
    return None


def _object(value: Any, path: JsonPath, r: _Report) -> dict[str, Any] | None:
    if not isinstance(value, dict):
        r.add(path, "must be a JSON object {...}", value)
        return None
    return value


def _list(value: Any, path: JsonPath, r: _Report) -> list[Any] | None:
    if not isinstance(value, list):
        r.add(path, "must be a list [...]", value)
        return None
    return value


def _get(obj: dict[str, Any], key: str, path: JsonPath, r: _Report) -> Any:
    """Return a required key's value, or _MISSING after reporting it."""
    if key not in obj:
        r.add(path + (key,), "is required but missing")
        return _MISSING
    return obj[key]


def _extra(obj: dict[str, Any], known: tuple[str, ...]) -> dict[str, Any]:
    return {k: v for k, v in obj.items() if k not in known}


def _joint_limits(value: Any, path: JsonPath, r: _Report) -> tuple[tuple[float, float], ...] | None:
    if not isinstance(value, list) or len(value) != 2:
        r.add(path, "must be a list of 2 limits [[min1, max1], [min2, max2]] in degrees", value)
        return None
    out = []
    for i, pair in enumerate(value):
        p = path + (i,)
        if not isinstance(pair, list) or len(pair) != 2:
            r.add(p, "must be a limit [min, max] of two numbers in degrees", pair)
            continue
        lo = _number(pair[0], p + (0,), r)
        hi = _number(pair[1], p + (1,), r)
        if lo is None or hi is None:
            continue
        if lo >= hi:
            r.add(p, "the minimum must be less than the maximum", pair)
        elif hi - lo > MAX_JOINT_RANGE_DEG:
            r.add(p, f"must span at most {MAX_JOINT_RANGE_DEG:g} degrees", pair)
        else:
            out.append((lo, hi))
    return tuple(out) if len(out) == 2 else None


def _optional(obj: dict[str, Any], key: str) -> Any:
    """An optional key's value; absent and null both mean "not given"."""
    value = obj.get(key)
    return _MISSING if value is None else value


def _read_arm(value: Any, path: JsonPath, r: _Report) -> Arm | None:
    obj = _object(value, path, r)
    if obj is None:
        return None
    before = r.count
    arm_id = name = elbow = None
    base = links = limits = None
    x = y = heading = None
    if (v := _get(obj, "id", path, r)) is not _MISSING:
        arm_id = _text(v, path + ("id",), r, is_id=True)
    if (v := _get(obj, "name", path, r)) is not _MISSING:
        name = _text(v, path + ("name",), r)
    if (v := _get(obj, "base", path, r)) is not _MISSING:
        bp = path + ("base",)
        base = _object(v, bp, r)
        if base is not None:
            coords = []
            for key in _BASE_KEYS:
                bv = _get(base, key, bp, r)
                coords.append(None if bv is _MISSING else _number(bv, bp + (key,), r))
            x, y, heading = coords
    if (v := _get(obj, "links", path, r)) is not _MISSING:
        links = _numbers(v, path + ("links",), r, 2, "length")
    if (v := _get(obj, "joint_limits_deg", path, r)) is not _MISSING:
        limits = _joint_limits(v, path + ("joint_limits_deg",), r)
    if (v := _get(obj, "elbow", path, r)) is not _MISSING:
        elbow = _choice(v, path + ("elbow",), r, ELBOW_SETTINGS)
    optional: dict[str, Any] = {}
    for key in ("link_radii", "joint_speed_dps", "joint_accel_dps2"):
        if (v := _optional(obj, key)) is not _MISSING:
            optional[key] = _numbers(v, path + (key,), r, 2, "positive")
    if (v := _optional(obj, "link_underside_height")) is not _MISSING:
        # A height above the floor: 0 (links at floor level) or more.
        optional["link_underside_height"] = _number(
            v, path + ("link_underside_height",), r, "nonnegative"
        )
    # Motion key kept in extra (read by kinematics.motion).
    if (v := _optional(obj, "joint_jerk_dps3")) is not _MISSING:
        _numbers(v, path + ("joint_jerk_dps3",), r, 2, "positive")
    if r.count != before:
        return None
    extra = _extra(obj, _ARM_KEYS)
    base_extra = _extra(base or {}, _BASE_KEYS)
    if base_extra:
        # "base" is a known key, so it cannot clash with a real extra of the arm.
        extra["base"] = base_extra
    if links is None or limits is None:
        return None  # a bad number inside was already reported by _scan
    return Arm(
        id=arm_id,  # type: ignore[arg-type]
        name=name,  # type: ignore[arg-type]
        x=x,  # type: ignore[arg-type]
        y=y,  # type: ignore[arg-type]
        heading_deg=heading,  # type: ignore[arg-type]
        a1=links[0],
        a2=links[1],
        q1_limits=limits[0],
        q2_limits=limits[1],
        elbow=elbow,  # type: ignore[arg-type]
        extra=extra,
        **optional,
    )


def _read_fixture(value: Any, path: JsonPath, r: _Report) -> Fixture | None:
    obj = _object(value, path, r)
    if obj is None:
        return None
    before = r.count
    fid = name = kind = height = None
    outline: list[tuple[float, float]] = []
    if (v := _get(obj, "id", path, r)) is not _MISSING:
        fid = _text(v, path + ("id",), r, is_id=True)
    if (v := _get(obj, "name", path, r)) is not _MISSING:
        name = _text(v, path + ("name",), r)
    if (v := _get(obj, "kind", path, r)) is not _MISSING:
        kind = _text(v, path + ("kind",), r, is_id=True)
    if (v := _get(obj, "outline", path, r)) is not _MISSING:
        op = path + ("outline",)
        if not isinstance(v, list) or len(v) < 3:
            r.add(op, "must be a list of at least 3 points [x, y]", v)
        else:
            pts = [_point(p, op + (i,), r) for i, p in enumerate(v)]
            if all(p is not None for p in pts):
                outline = pts  # type: ignore[assignment]
                problem = polygon_problem(outline)
                if problem:
                    r.add(op, problem, v)
    if (v := _optional(obj, "height")) is not _MISSING:
        height = _number(v, path + ("height",), r, "nonnegative")
    if r.count != before:
        return None
    return Fixture(
        id=fid,  # type: ignore[arg-type]
        name=name,  # type: ignore[arg-type]
        kind=kind,  # type: ignore[arg-type]
        outline=tuple(outline),
        height=height,
        extra=_extra(obj, _FIXTURE_KEYS),
    )


def _read_target(value: Any, path: JsonPath, r: _Report) -> Target | None:
    obj = _object(value, path, r)
    if obj is None:
        return None
    before = r.count
    found: dict[str, Any] = {}
    for key in _TARGET_KEYS:
        if (v := _get(obj, key, path, r)) is _MISSING:
            continue
        p = path + (key,)
        if key in ("x", "y"):
            found[key] = _number(v, p, r)
        else:
            found[key] = _text(v, p, r, is_id=key != "name")
    # Motion key kept in extra (read by kinematics.motion).
    if (v := _optional(obj, "dwell_s")) is not _MISSING:
        _number(v, path + ("dwell_s",), r, "nonnegative")
    if r.count != before:
        return None
    return Target(extra=_extra(obj, _TARGET_KEYS), **found)


def _read_sequence(value: Any, path: JsonPath, r: _Report) -> Sequence | None:
    obj = _object(value, path, r)
    if obj is None:
        return None
    before = r.count
    arm = None
    ids: list[str] = []
    if (v := _get(obj, "arm", path, r)) is not _MISSING:
        arm = _text(v, path + ("arm",), r, is_id=True)
    if (v := _get(obj, "targets", path, r)) is not _MISSING:
        tp = path + ("targets",)
        items = _list(v, tp, r)
        for i, t in enumerate(items or []):
            tid = _text(t, tp + (i,), r, is_id=True)
            if tid is not None:
                ids.append(tid)
    # Motion key kept in extra (read by kinematics.motion).
    if (v := _optional(obj, "start_s")) is not _MISSING:
        _number(v, path + ("start_s",), r, "nonnegative")
    if r.count != before:
        return None
    return Sequence(arm=arm, targets=tuple(ids), extra=_extra(obj, _SEQUENCE_KEYS))  # type: ignore[arg-type]


def _read_items(
    data: dict[str, Any], key: str, r: _Report, reader: Callable[..., Any], required: bool
) -> list[Any] | None:
    """Read one top-level list; returns None when any item had a problem."""
    if key not in data:
        if required:
            r.add((key,), "is required but missing (write [] for none)")
            return None
        return []
    items = _list(data[key], (key,), r)
    if items is None:
        return None
    out = [reader(v, (key, i), r) for i, v in enumerate(items)]
    return None if any(o is None for o in out) else out


def _unique_ids(raw: Any, key: str, r: _Report, field: str = "id") -> tuple[dict[str, int], bool]:
    """Map each valid id in a top-level list to its index; report repeats.

    Returns the map and whether every item had a usable id (so references can be checked).
    """
    seen: dict[str, int] = {}
    complete = True
    for i, item in enumerate(raw if isinstance(raw, list) else []):
        value = item.get(field) if isinstance(item, dict) else None
        if not isinstance(value, str) or not value.strip():
            complete = False
            continue
        if value in seen:
            r.add((key, i, field), f"duplicate id, also used by {key}[{seen[value]}]", value)
        else:
            seen[value] = i
    return seen, complete and isinstance(raw, list)


def _check_header(data: Any, r: _Report) -> int | None:
    """Check format and version; returns the version when both are fine."""
    if not isinstance(data, dict):
        r.add((), "must be a JSON object {...} holding a cell", data)
        return None
    fmt = data.get("format", _MISSING)
    if fmt is _MISSING:
        r.add(("format",), f'is required but missing (a cell file holds "format": "{FORMAT}")')
    elif fmt != FORMAT:
        r.add(("format",), f'must be "{FORMAT}" (this is not an Elbow Room cell file)', fmt)
    version = data.get("version", _MISSING)
    if version is _MISSING:
        r.add(("version",), "is required but missing")
        return None
    if isinstance(version, _BadNumber) or not isinstance(version, int) or isinstance(version, bool):
        r.add(("version",), "must be a whole number", version)
        return None
    if version > CURRENT_VERSION:
        r.add(
            ("version",),
            f"written by a newer Elbow Room (version {version}); "
            f"this program reads up to version {CURRENT_VERSION}",
        )
        return None
    if version < 1:
        r.add(("version",), f"must be between 1 and {CURRENT_VERSION}", version)
        return None
    return None if r.count else version


def _migrate(data: dict[str, Any], version: int, r: _Report) -> dict[str, Any] | None:
    for step in range(version, CURRENT_VERSION):
        upgrade = MIGRATIONS.get(step)
        if upgrade is None:
            r.add(("version",), f"no upgrade from version {step} to {step + 1} is known", step)
            return None
        try:
            data = upgrade(data)
        except Exception as exc:  # a broken old file must give a message, not a traceback
            r.add(("version",), f"could not be upgraded to version {step + 1} ({exc})", step)
            return None
    return data


def _build(data: Any, decoder: _Decoder, source: str) -> Cell:
    r = _Report(source)
    version = _check_header(data, r)
    r.raise_if_any()
    assert version is not None
    _scan(data, decoder, r)
    migrated = _migrate(data, version, r)
    if migrated is None:
        raise r.error()
    data = migrated

    name = units = None
    if (v := _get(data, "name", (), r)) is not _MISSING:
        name = _text(v, ("name",), r)
    if (v := _get(data, "units", (), r)) is not _MISSING:
        units = _choice(v, ("units",), r, UNITS)
    arms = _read_items(data, "arms", r, _read_arm, required=True)
    fixtures = _read_items(data, "fixtures", r, _read_fixture, required=True)
    targets = _read_items(data, "targets", r, _read_target, required=True)
    sequences = _read_items(data, "sequences", r, _read_sequence, required=False)
    review = None
    if "review" in data:
        review = _object(data["review"], ("review",), r)
        # Title-block fields (kinematics/review.py); unknown keys are kept unchecked.
        for path, what, value in review_problems(review) if review is not None else ():
            r.add(("review", *path), what, value)
    if UNDERLAY_KEY in data:  # the DXF drawn under the layout (kinematics/underlay.py)
        for path, what, value in underlay_problems(data[UNDERLAY_KEY]):
            r.add((UNDERLAY_KEY, *path), what, *(() if value is None else (value,)))

    arm_ids, arms_complete = _unique_ids(data.get("arms"), "arms", r)
    _unique_ids(data.get("fixtures"), "fixtures", r)
    target_ids, targets_complete = _unique_ids(data.get("targets"), "targets", r)
    raw_targets = data.get("targets") if isinstance(data.get("targets"), list) else []
    if arms_complete:
        for i, t in enumerate(raw_targets):
            ref = t.get("arm") if isinstance(t, dict) else None
            if isinstance(ref, str) and ref.strip() and ref not in arm_ids:
                r.add(("targets", i, "arm"), "names no arm in this cell", ref)
    raw_sequences = data.get("sequences") if isinstance(data.get("sequences"), list) else []
    for i, s in enumerate(raw_sequences):
        if not isinstance(s, dict):
            continue
        ref = s.get("arm")
        arm_ok = isinstance(ref, str) and ref in arm_ids
        if arms_complete and isinstance(ref, str) and ref.strip() and not arm_ok:
            r.add(("sequences", i, "arm"), "names no arm in this cell", ref)
        ids = s.get("targets") if isinstance(s.get("targets"), list) else []
        for j, tid in enumerate(ids):
            if not isinstance(tid, str) or not tid.strip():
                continue
            if tid not in target_ids:
                if targets_complete:
                    r.add(("sequences", i, "targets", j), "names no target in this cell", tid)
                continue
            owner = raw_targets[target_ids[tid]].get("arm")
            if arm_ok and isinstance(owner, str) and owner in arm_ids and owner != ref:
                r.add(
                    ("sequences", i, "targets", j),
                    f"target belongs to arm {_show(owner)}, not to this sequence's "
                    f"arm {_show(ref)}",
                    tid,
                )
    r.raise_if_any()
    return Cell(
        name=name,  # type: ignore[arg-type]
        units=units,  # type: ignore[arg-type]
        arms=tuple(arms or ()),
        fixtures=tuple(fixtures or ()),
        targets=tuple(targets or ()),
        sequences=tuple(sequences or ()),
        review=review,
        extra=_extra(data, _TOP_KEYS),
    )


# --------------------------------------------------------------------------- reading


def _size_text(size: int, unit: str) -> str:
    return f"{size / (1024 * 1024):.1f} MB ({size} {unit})"


def _too_big(source: str, size: int | None, unit: str = "bytes") -> CellFileError:
    cap = f"the {MAX_FILE_BYTES // (1024 * 1024)} MB limit for cell files"
    if size is None:
        return CellFileError(f"{source}: the file is larger than {cap}")
    return CellFileError(f"{source}: the file is {_size_text(size, unit)}, larger than {cap}")


def parse_cell(text: str, source: str = "<text>") -> Cell:
    """Read a cell from the text of a ``*.cell.json`` file.

    Parameters
    ----------
    text : str
        The whole file as text.
    source : str, optional
        Name used at the start of every problem line, normally the file name.

    Returns
    -------
    Cell
        The cell, with numbers as floats and unknown keys kept in ``extra``.

    Raises
    ------
    CellFileError
        With every problem found, one line each.
    """
    source = _printable(source)
    if len(text) > MAX_FILE_BYTES:
        raise _too_big(source, len(text), "characters")
    if text.startswith("\ufeff"):
        text = text[1:]  # a byte-order mark some editors add
    if not text.strip():
        raise CellFileError(f"{source}: the file is empty")
    decoder = _Decoder()
    try:
        data = decoder.loads(text)
    except json.JSONDecodeError as exc:
        raise CellFileError(
            f"{source}: line {exc.lineno}, column {exc.colno}: not valid JSON ({exc.msg})"
        ) from None
    except RecursionError:
        raise CellFileError(
            f"{source}: JSON is nested too deeply to read (more than {MAX_DEPTH} levels allowed)"
        ) from None
    except ValueError as exc:
        raise CellFileError(f"{source}: not valid JSON ({_printable(str(exc))})") from None
    cell = _build(data, decoder, source)
    try:
        # Body, height and margin keys are read by the clearance engine; check them here
        # so a malformed one is a file problem, not a failure later.
        validate_cell_bodies(cell)
        validate_layout_keys(cell)  # placement and variant keys (kinematics/layout_keys.py)
    except BodyDataError as exc:
        raise CellFileError(f"{source}: {exc}") from None
    return cell


def _os_reason(exc: OSError) -> str:
    if isinstance(exc, FileNotFoundError):
        return "no such file or folder"
    if isinstance(exc, PermissionError):
        return "permission denied"
    if isinstance(exc, IsADirectoryError):
        return "it is a folder"
    return _printable(exc.strerror or str(exc) or type(exc).__name__)


def _source_name(path: str | os.PathLike[str]) -> str:
    p = Path(path)
    return _printable(p.name or str(p))


def load_cell(path: str | os.PathLike[str], source: str | None = None) -> Cell:
    """Read and check a ``*.cell.json`` file.

    Parameters
    ----------
    path : str or path-like
        The file to read.
    source : str, optional
        How messages name the file (the command line passes the path as the user gave
        it); default the file's name.

    Returns
    -------
    Cell
        The cell in the file, upgraded to :data:`CURRENT_VERSION` through
        :data:`MIGRATIONS` if it was written in an older version.

    Raises
    ------
    CellFileError
        For any problem with the file: missing, unreadable, too large, not UTF-8,
        not JSON, or not a valid cell. ``err.problems`` lists all problems found.
    """
    source = _source_name(path) if source is None else _printable(source)
    try:
        info = os.stat(path)
    except (OSError, ValueError) as exc:
        reason = _os_reason(exc) if isinstance(exc, OSError) else "not a usable file name"
        raise CellFileError(f"{source}: could not be opened ({reason})") from None
    if stat.S_ISDIR(info.st_mode):
        raise CellFileError(f"{source}: is a folder, not a cell file")
    if not stat.S_ISREG(info.st_mode):
        raise CellFileError(f"{source}: is not a regular file")
    if info.st_size > MAX_FILE_BYTES:
        raise _too_big(source, info.st_size)
    try:
        with open(path, "rb") as f:
            raw = f.read(MAX_FILE_BYTES + 1)
    except OSError as exc:
        raise CellFileError(f"{source}: could not be read ({_os_reason(exc)})") from None
    if len(raw) > MAX_FILE_BYTES:
        raise _too_big(source, None)
    if not raw:
        raise CellFileError(f"{source}: the file is empty")
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise CellFileError(f"{source}: is UTF-16 text; cell files must be saved as UTF-8")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        column = exc.start - (raw.rfind(b"\n", 0, exc.start) + 1) + 1
        raise CellFileError(
            f"{source}: line {line}, column {column}: not valid UTF-8 text "
            f"(byte 0x{raw[exc.start]:02x})"
        ) from None
    return parse_cell(text, source)


# --------------------------------------------------------------------------- writing


def _num(value: Any) -> Any:
    """Plain JSON number: integral floats become ints, numpy scalars become floats."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        return value  # left for the read-back check to report
    f = float(value)
    return int(f) if f.is_integer() else f


def _pair(values: Iterable[Any] | None) -> list[Any] | None:
    return None if values is None else [_num(v) for v in values]


def _merge(obj: dict[str, Any], extra: dict[str, Any], known: tuple[str, ...], where: str) -> None:
    for key, value in extra.items():
        if key in known:
            raise CellFileError(
                f"{where}: extra key {_show(key)} clashes with a key of the cell format"
            )
        obj[key] = value


def cell_to_dict(cell: Cell) -> dict[str, Any]:
    """Build the JSON document of a cell, keys in the canonical order.

    Parameters
    ----------
    cell : Cell
        The cell to write.

    Returns
    -------
    dict
        Top-level keys ``format, version, name, units, arms, fixtures, targets,
        sequences, review`` (review only when set), then the cell's extras; each
        object has its documented keys first, then its extras in their order.

    Raises
    ------
    CellFileError
        When an ``extra`` mapping holds a key the format itself uses.
    """
    arms = []
    for i, a in enumerate(cell.arms):
        extra = dict(a.extra)
        base_extra = extra.pop("base", {})
        if not isinstance(base_extra, dict):
            raise CellFileError(f'arms[{i}]: extra key "base" must hold a mapping')
        base = {"x": _num(a.x), "y": _num(a.y), "heading_deg": _num(a.heading_deg)}
        _merge(base, base_extra, _BASE_KEYS, f"arms[{i}].base")
        d: dict[str, Any] = {
            "id": a.id,
            "name": a.name,
            "base": base,
            "links": [_num(a.a1), _num(a.a2)],
            "joint_limits_deg": [_pair(a.q1_limits), _pair(a.q2_limits)],
            "elbow": a.elbow,
        }
        if a.link_radii is not None:
            d["link_radii"] = _pair(a.link_radii)
        if a.link_underside_height is not None:
            d["link_underside_height"] = _num(a.link_underside_height)
        if a.joint_speed_dps is not None:
            d["joint_speed_dps"] = _pair(a.joint_speed_dps)
        if a.joint_accel_dps2 is not None:
            d["joint_accel_dps2"] = _pair(a.joint_accel_dps2)
        _merge(d, extra, _ARM_KEYS, f"arms[{i}]")
        arms.append(d)
    fixtures = []
    for i, f in enumerate(cell.fixtures):
        d = {
            "id": f.id,
            "name": f.name,
            "kind": f.kind,
            "outline": [_pair(p) for p in f.outline],
        }
        if f.height is not None:
            d["height"] = _num(f.height)
        _merge(d, f.extra, _FIXTURE_KEYS, f"fixtures[{i}]")
        fixtures.append(d)
    targets = []
    for i, t in enumerate(cell.targets):
        d = {"id": t.id, "name": t.name, "x": _num(t.x), "y": _num(t.y), "arm": t.arm}
        _merge(d, t.extra, _TARGET_KEYS, f"targets[{i}]")
        targets.append(d)
    sequences = []
    for i, s in enumerate(cell.sequences):
        d = {"arm": s.arm, "targets": list(s.targets)}
        _merge(d, s.extra, _SEQUENCE_KEYS, f"sequences[{i}]")
        sequences.append(d)
    doc: dict[str, Any] = {
        "format": FORMAT,
        "version": CURRENT_VERSION,
        "name": cell.name,
        "units": cell.units,
        "arms": arms,
        "fixtures": fixtures,
        "targets": targets,
        "sequences": sequences,
    }
    if cell.review is not None:
        doc["review"] = cell.review
    _merge(doc, cell.extra, _TOP_KEYS, "top level")
    return doc


_LINE_WIDTH = 100


def _scalar(value: Any) -> bool:
    return value is None or isinstance(value, (str, int, float))


def _flat(items: list[Any] | tuple[Any, ...]) -> bool:
    """Scalars, or lists of scalars: short enough kinds to sit on one line."""
    return all(
        _scalar(v) or (isinstance(v, (list, tuple)) and all(_scalar(w) for w in v)) for v in items
    )


def _encode(value: Any, level: int, used: int) -> str:
    """JSON text with 2-space indent; short flat lists stay on one line for easy reading.

    ``used`` is how many characters already stand on the line before ``value``.
    """
    if _scalar(value):
        return json.dumps(value, ensure_ascii=False, allow_nan=False)
    inner = "  " * (level + 1)
    if isinstance(value, dict):
        if not value:
            return "{}"
        lines = []
        for key, item in value.items():
            if not isinstance(key, str):
                raise TypeError(f"keys must be strings, not {type(key).__name__}")
            head = inner + json.dumps(key, ensure_ascii=False) + ": "
            lines.append(head + _encode(item, level + 1, len(head)))
        return "{\n" + ",\n".join(lines) + "\n" + "  " * level + "}"
    if isinstance(value, (list, tuple)):
        if not value:
            return "[]"
        if _flat(value):
            one_line = "[" + ", ".join(_encode(v, 0, 0) for v in value) + "]"
            if used + len(one_line) + 1 <= _LINE_WIDTH:  # + 1 for a trailing comma
                return one_line
        lines = [inner + _encode(item, level + 1, len(inner)) for item in value]
        return "[\n" + ",\n".join(lines) + "\n" + "  " * level + "]"
    raise TypeError(f"a {type(value).__name__} value cannot be written as JSON")


def _dumps(cell: Cell, source: str) -> str:
    try:
        doc = cell_to_dict(cell)
    except CellFileError as exc:
        raise CellFileError([f"{source}: {p}" for p in exc.problems]) from None
    try:
        text = _encode(doc, 0, 0) + "\n"
    except (TypeError, ValueError, RecursionError) as exc:
        raise CellFileError(
            f"{source}: the cell holds a value that cannot be written as JSON ({exc})"
        ) from None
    # Never hand out text that would not load again.
    parse_cell(text, source)
    return text


def dumps_cell(cell: Cell) -> str:
    """Write a cell as the canonical text of a ``*.cell.json`` file.

    Parameters
    ----------
    cell : Cell
        The cell to write.

    Returns
    -------
    str
        JSON with 2-space indent, non-ASCII characters as they are, a trailing
        newline; the key order of :func:`cell_to_dict`; integral floats as integers.
        A list of numbers or strings (or of such lists, like an outline) stays on
        one line when that line fits in 100 characters.

    Raises
    ------
    CellFileError
        When the text would not load back (for example a negative link length or
        a target naming no arm), or a value cannot be written as JSON.
    """
    return _dumps(cell, "<cell>")


def _newer_version_on_disk(path: Path) -> int | None:
    """The version of an existing cell file if it is newer than ours, else None."""
    try:
        if path.stat().st_size > MAX_FILE_BYTES:
            return None
        data = json.loads(path.read_bytes().decode("utf-8-sig"))
    except (OSError, ValueError, RecursionError):
        return None
    if isinstance(data, dict) and data.get("format") == FORMAT:
        version = data.get("version")
        if isinstance(version, int) and not isinstance(version, bool):
            if version > CURRENT_VERSION:
                return version
    return None


def save_cell(
    cell: Cell,
    path: str | os.PathLike[str],
    *,
    replace_newer: bool = False,
    backups: int = BACKUPS_KEPT,
    replace_read_only: bool = False,
) -> SaveOutcome:
    """Write a cell file atomically, keeping earlier versions as timestamped backups.

    The text goes to a temporary file in the same folder, is flushed to disk,
    and then replaces the target in one rename, so the target is always either
    the old or the new file, never a half-written one. If the target existed,
    its previous content is kept next to it as ``<file name>.<YYYYMMDD-HHMMSS>.bak``
    (UTC), at most ``backups`` of them (see :mod:`kinematics.savefile`).

    Parameters
    ----------
    cell : Cell
        The cell to write (always written as :data:`CURRENT_VERSION`).
    path : str or path-like
        The file to write; a symbolic link is followed.
    replace_newer : bool, optional
        Overwrite a file written by a newer Elbow Room. By default that is refused,
        since the newer file may hold data this program would drop.
    backups : int, optional
        Backups kept beside the file (default :data:`BACKUPS_KEPT`).
    replace_read_only : bool, optional
        Replace a read-only file (it stays read-only). Refused by default.

    Returns
    -------
    SaveOutcome
        The file written, the backup made, and notes such as broken hard links.

    Raises
    ------
    ReadOnlyFileError
        The target is a read-only file and ``replace_read_only`` is false.
    CellFileError
        When the cell would not load back, the target is a newer file (see
        ``replace_newer``), is not a regular file, or writing fails; the target and
        its backups are then unchanged and no temporary file is left.
    """
    source = _source_name(path)
    text = _dumps(cell, source)
    data = text.encode("utf-8")
    try:
        # Before anything reads the target: a named pipe would block the reader for good.
        target = check_target(path, source)
    except SaveError as exc:
        raise CellFileError(str(exc)) from None
    if not replace_newer and target.exists():
        newer = _newer_version_on_disk(target)
        if newer is not None:
            raise CellFileError(
                f"{source}: was written by a newer Elbow Room (version {newer}); saving here "
                f"would rewrite it as version {CURRENT_VERSION} and drop what this program does "
                "not know, so it was not saved (save under another name)"
            )
    try:
        return save_bytes(
            target, data, backups=backups, replace_read_only=replace_read_only, source=source
        )
    except ReadOnlyTargetError as exc:
        raise ReadOnlyFileError(str(exc)) from None
    except SaveError as exc:
        raise CellFileError(str(exc)) from None

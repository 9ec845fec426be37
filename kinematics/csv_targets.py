"""Targets to and from CSV files (comma-separated values, RFC 4180), for spreadsheets.

Columns, named in a header row that is required: ``id, name, x, y, arm, work_height,
dwell_s, units``. ``id``, ``x``, ``y`` and ``arm`` are required columns, the others
optional; column order is free. ``units`` (``mm`` or ``in``) says the units of a row's
lengths, which are converted to the cell's; without it the cell's units are assumed.
Reading merges into a cell by target id (:func:`merge_targets_csv`): new ids are added,
known ones take the row's values (a column missing from the file keeps the target's
value, an empty optional cell removes it). Every problem names the file, the row
(the header is row 1, as in a spreadsheet) and the column, e.g.
``kit.csv: row 4, column C (x): must be a number, got "12,5" (use a decimal point)``.
"""

from __future__ import annotations

import csv
import io
import math
import os
import re
from collections.abc import Iterable
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from .atomic import write_atomic
from .bodies import BodyDataError, work_height
from .cell import MM_PER_UNIT, UNITS, Cell, Target
from .cellfile import MAX_FILE_BYTES, MAX_MAGNITUDE, CellFileError, dumps_cell

__all__ = [
    "COLUMNS",
    "REQUIRED_COLUMNS",
    "DWELL_KEY",
    "WORK_HEIGHT_KEY",
    "CsvTargetsError",
    "TargetsMerge",
    "targets_csv",
    "write_targets_csv",
    "merge_targets_csv",
    "load_targets_csv",
]

#: Every column, in the order written.
COLUMNS = ("id", "name", "x", "y", "arm", "work_height", "dwell_s", "units")
#: Columns a file must have.
REQUIRED_COLUMNS = ("id", "x", "y", "arm")
#: Target keys (in ``Target.extra``) of the optional columns.
WORK_HEIGHT_KEY = "work_height"
DWELL_KEY = "dwell_s"

_MAX_PROBLEMS = 100
_NUMBER = re.compile(r"[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?\Z")


class CsvTargetsError(Exception):
    """A targets CSV file could not be read or merged.

    Attributes
    ----------
    problems : list of str
        One line per problem, naming the file, row and column; ``str(err)`` is the first.
    """

    def __init__(self, problems: Iterable[str] | str) -> None:
        lines = [problems] if isinstance(problems, str) else list(problems)
        self.problems: list[str] = lines or ["unknown problem"]
        super().__init__(self.problems)

    def __str__(self) -> str:
        return self.problems[0]


@dataclass(frozen=True)
class TargetsMerge:
    """A cell with a CSV file's targets merged in, and which target ids it added or changed."""

    cell: Cell
    added: tuple[str, ...]
    changed: tuple[str, ...]
    unchanged: tuple[str, ...]

    def summary(self) -> str:
        """E.g. ``"2 targets added, 1 changed, 5 unchanged"``."""
        n = len(self.added)
        return (
            f"{n} target{'s' * (n != 1)} added, {len(self.changed)} changed, "
            f"{len(self.unchanged)} unchanged"
        )


# --------------------------------------------------------------------------- writing


def _num(v: Any) -> str:
    f = float(v)
    return str(int(f)) if f.is_integer() and abs(f) < 1e15 else repr(f)


def _optional(t: Target, key: str) -> str:
    v = t.extra.get(key)
    return "" if v is None else _num(v)


def targets_csv(cell: Cell) -> str:
    """The cell's targets as CSV text: a header row, then one row per target in cell order.

    Examples
    --------
    >>> t = Target("p1", "Pick, left", 120.5, -40, "a", {"work_height": 750})
    >>> print(targets_csv(Cell("c", targets=(t,))), end="")
    id,name,x,y,arm,work_height,dwell_s,units
    p1,"Pick, left",120.5,-40,a,750,,mm
    """
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(COLUMNS)
    for t in cell.targets:
        writer.writerow(
            [
                t.id,
                t.name,
                _num(t.x),
                _num(t.y),
                t.arm,
                _optional(t, WORK_HEIGHT_KEY),
                _optional(t, DWELL_KEY),
                cell.units,
            ]
        )
    return out.getvalue()


def write_targets_csv(cell: Cell, path: str | os.PathLike[str]) -> None:
    """Write :func:`targets_csv` to a file atomically (UTF-8).

    Raises
    ------
    OSError
        When the file cannot be written; an existing file is then unchanged.
    """
    write_atomic(path, targets_csv(cell).encode("utf-8"))


# --------------------------------------------------------------------------- reading


def _letter(k: int) -> str:
    """Spreadsheet column letter of column index ``k`` (0 -> A, 26 -> AA)."""
    s = ""
    k += 1
    while k:
        k, r = divmod(k - 1, 26)
        s = chr(65 + r) + s
    return s


def _show(text: str) -> str:
    text = text if len(text) <= 40 else text[:37] + "..."
    return '"' + "".join(c if c.isprintable() else f"\\u{ord(c):04x}" for c in text) + '"'


class _Problems:
    def __init__(self, source: str) -> None:
        self.source = source
        self.lines: list[str] = []
        self.count = 0

    def add(self, text: str) -> None:
        self.count += 1
        if len(self.lines) < _MAX_PROBLEMS:
            self.lines.append(f"{self.source}: {text}")

    def raise_if_any(self) -> None:
        if self.count:
            lines = list(self.lines)
            if self.count > len(lines):
                lines.append(f"{self.source}: ... and {self.count - len(lines)} more problems")
            raise CsvTargetsError(lines)


def _number(text: str, where: str, p: _Problems, nonneg: bool = False) -> float | None:
    s = text.strip()
    if not _NUMBER.match(s):
        hint = " (use a decimal point)" if re.fullmatch(r"[+-]?\d+,\d+", s) else ""
        p.add(f"{where}: must be a number, got {_show(text)}{hint}")
        return None
    v = float(s)
    if not math.isfinite(v) or abs(v) > MAX_MAGNITUDE:
        p.add(f"{where}: must be between -{MAX_MAGNITUDE:g} and {MAX_MAGNITUDE:g}, got {s}")
        return None
    if nonneg and v < 0:
        p.add(f"{where}: must be a number of 0 or more, got {s}")
        return None
    return v


def merge_targets_csv(text: str, cell: Cell, source: str = "<csv>") -> TargetsMerge:
    """Read targets from CSV text and merge them into a cell by id.

    Parameters
    ----------
    text : str
        The whole file (a UTF-8 byte-order mark at the start is ignored). Fields are
        separated by commas, or by semicolons when the header row uses them.
    cell : Cell
        The open cell; each row's arm must be one of its arms.
    source : str
        Name at the start of every message, normally the file name.

    Returns
    -------
    TargetsMerge

    Raises
    ------
    CsvTargetsError
        With every problem found (up to 100), each naming the row and column.

    Examples
    --------
    >>> from kinematics.cell import Arm
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    >>> cell = Cell("c", arms=(arm,), targets=(Target("p1", "P1", 0, 500, "a"),))
    >>> m = merge_targets_csv("id,x,y,arm\\np1,0,500,a\\np2,450,180,a\\n", cell)
    >>> m.summary(), [t.name for t in m.cell.targets]
    ('1 target added, 0 changed, 1 unchanged', ['P1', 'p2'])
    >>> try:
    ...     merge_targets_csv("id,x,y,arm\\np3,1e3,oops,b\\n", cell, "kit.csv")
    ... except CsvTargetsError as err:
    ...     print("\\n".join(err.problems))
    kit.csv: row 2, column C (y): must be a number, got "oops"
    kit.csv: row 2, column D (arm): names no arm in this cell, got "b" (arms: a)
    """
    p = _Problems(source)
    if text.startswith("\ufeff"):
        text = text[1:]
    if len(text) > MAX_FILE_BYTES:
        raise CsvTargetsError(
            f"{source}: the file is larger than the {MAX_FILE_BYTES // 2**20} MB limit"
        )
    first = text.split("\n", 1)[0]
    delimiter = ";" if ";" in first and "," not in first else ","
    try:
        rows = list(csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, strict=True))
    except csv.Error as exc:
        raise CsvTargetsError(f"{source}: not valid CSV ({exc})") from None
    if not rows or not any(c.strip() for c in rows[0]):
        raise CsvTargetsError(
            f"{source}: row 1: a header row naming the columns is required "
            f"(e.g. {','.join(COLUMNS)})"
        )
    header = [c.strip().lower() for c in rows[0]]
    col: dict[str, int] = {}
    for k, name in enumerate(header):
        where = f"row 1, column {_letter(k)}"
        if name not in COLUMNS:
            p.add(f"{where}: unknown column {_show(rows[0][k])} (columns: {', '.join(COLUMNS)})")
        elif name in col:
            p.add(f"{where}: column {name} appears twice (also column {_letter(col[name])})")
        else:
            col[name] = k
    missing = [c for c in REQUIRED_COLUMNS if c not in col]
    if missing:
        p.add(
            f"row 1: the header lacks the required column{'s' * (len(missing) > 1)} "
            f"{', '.join(missing)}"
        )
    p.raise_if_any()

    arms = {a.id for a in cell.arms}
    by_id = {t.id: t for t in cell.targets}
    seq_arm = {tid: s.arm for s in cell.sequences for tid in s.targets}
    seen: dict[str, int] = {}
    incoming: list[Target] = []
    for r, row in enumerate(rows[1:], start=2):
        if not any(c.strip() for c in row):
            continue  # blank lines between blocks of rows
        if len(row) != len(header):
            p.add(f"row {r}: has {len(row)} fields, the header has {len(header)}")
            continue

        def at(name: str) -> tuple[str, str]:
            k = col[name]
            return row[k], f"row {r}, column {_letter(k)} ({name})"  # noqa: B023

        before = p.count
        tid, where = at("id")
        if not tid.strip():
            p.add(f"{where}: must not be empty")
        elif tid in seen:
            p.add(f"{where}: id {_show(tid)} is also on row {seen[tid]}")
        else:
            seen[tid] = r
        units = cell.units
        if "units" in col:
            u, uwhere = at("units")
            if u.strip():
                if u.strip() not in UNITS:
                    p.add(f"{uwhere}: must be one of {', '.join(UNITS)}, got {_show(u)}")
                else:
                    units = u.strip()
        scale = MM_PER_UNIT[units] / MM_PER_UNIT[cell.units]
        x = _number(*at("x"), p)
        y = _number(*at("y"), p)
        arm, awhere = at("arm")
        arm = arm.strip()
        if arm not in arms:
            listed = ", ".join(sorted(arms)) or "none"
            p.add(f"{awhere}: names no arm in this cell, got {_show(arm)} (arms: {listed})")
        elif tid in seq_arm and seq_arm[tid] != arm:
            p.add(
                f"{awhere}: target {_show(tid)} is in a sequence of arm {_show(seq_arm[tid])}; "
                f"giving it to arm {_show(arm)} would break that sequence"
            )
        extra_values: dict[str, float | None] = {}
        for key, nonneg in ((WORK_HEIGHT_KEY, False), (DWELL_KEY, True)):
            if key not in col:
                continue
            raw, kwhere = at(key)
            if not raw.strip():
                extra_values[key] = None
                continue
            v = _number(raw, kwhere, p, nonneg)
            if v is not None and key == WORK_HEIGHT_KEY:
                v *= scale
                try:  # the cell file's own rule for this key
                    work_height(Target("t", "", 0.0, 0.0, "a", {key: v}), kwhere)
                except BodyDataError as exc:
                    p.add(str(exc))
                    v = None
            extra_values[key] = v
        if p.count != before or x is None or y is None:
            continue
        old = by_id.get(tid)
        name = at("name")[0] if "name" in col else (old.name if old else tid)
        extra = dict(old.extra) if old else {}
        for key, v in extra_values.items():
            if v is None:
                extra.pop(key, None)
            else:
                extra[key] = v
        incoming.append(Target(tid, name, x * scale, y * scale, arm, extra))
    p.raise_if_any()
    return _merge(cell, incoming, source)


def _merge(cell: Cell, incoming: list[Target], source: str) -> TargetsMerge:
    new_by_id = {t.id: t for t in incoming}
    added = [t for t in incoming if t.id not in {u.id for u in cell.targets}]
    changed, unchanged = [], []
    out = []
    for t in cell.targets:
        new = new_by_id.get(t.id)
        if new is None:
            out.append(t)
        elif new == t:
            unchanged.append(t.id)
            out.append(t)
        else:
            changed.append(t.id)
            out.append(new)
    out += added
    merged = replace(cell, targets=tuple(out))
    try:
        dumps_cell(merged)  # never hand out a cell that would not save and load again
    except CellFileError as exc:
        raise CsvTargetsError(f"{source}: the merged cell would not be valid ({exc})") from None
    return TargetsMerge(merged, tuple(t.id for t in added), tuple(changed), tuple(unchanged))


def load_targets_csv(path: str | os.PathLike[str], cell: Cell) -> TargetsMerge:
    """Read a targets CSV file (UTF-8) and merge it into a cell; see :func:`merge_targets_csv`.

    Raises
    ------
    CsvTargetsError
        For a missing, unreadable, oversized or non-UTF-8 file, or any problem in it.
    """
    source = Path(path).name or str(path)
    try:
        size = os.stat(path).st_size
        if size > MAX_FILE_BYTES:
            raise CsvTargetsError(
                f"{source}: the file is {size / 2**20:.1f} MB, larger than "
                f"the {MAX_FILE_BYTES // 2**20} MB limit"
            )
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        raise CsvTargetsError(f"{source}: could not be opened (no such file or folder)") from None
    except IsADirectoryError:
        raise CsvTargetsError(f"{source}: is a folder, not a CSV file") from None
    except OSError as exc:
        raise CsvTargetsError(f"{source}: could not be read ({exc.strerror or exc})") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        raise CsvTargetsError(
            f"{source}: row {line}: not UTF-8 text (byte 0x{raw[exc.start]:02x}); "
            "save the file as CSV UTF-8"
        ) from None
    return merge_targets_csv(text, cell, source)

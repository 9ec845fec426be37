"""The cell key ``underlay``: a DXF drawing shown under the layout, never edited.

::

    "underlay": {"dxf": "cad/hall-plan.dxf", "units": "mm", "layers": ["WALLS", "MACHINES"]}

``dxf`` (required) is the drawing's path relative to the folder of the cell file, with
``/`` between folders (so a cell and its drawings move together); ``units`` (optional)
the drawing's length units when its ``$INSUNITS`` is unset or wrong (one of
:data:`kinematics.dxf_units.IMPORT_UNITS`); ``layers`` (optional) the layers to draw
(default: every layer). The drawing's own coordinates are used: an underlay drawn in
the cell's frame lies where it belongs.

The loader keeps the key in ``Cell.extra`` and checks it (:func:`underlay_problems`);
:func:`kinematics.dxf_import.dxf_underlay` reads the geometry.
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path, PurePosixPath, PureWindowsPath
from typing import Any

from .cell import Cell
from .checks import choice_problem
from .dxf_units import IMPORT_UNITS

__all__ = [
    "UNDERLAY_KEY",
    "UnderlaySpec",
    "underlay_problems",
    "underlay_spec",
    "underlay_path",
    "load_underlay",
]

#: The top-level cell key.
UNDERLAY_KEY = "underlay"
_KEYS = ("dxf", "units", "layers")


@dataclass(frozen=True)
class UnderlaySpec:
    """What the ``underlay`` key asks for (see the module docstring)."""

    dxf: str
    units: str | None = None
    layers: tuple[str, ...] | None = None


def underlay_problems(value: Any) -> list[tuple[tuple[Any, ...], str, Any]]:
    """What is wrong with an ``underlay`` value: ``(json path below it, problem, value)``.

    Examples
    --------
    >>> underlay_problems({"dxf": "cad/plan.dxf", "units": "mm"})
    []
    >>> underlay_problems({"dxf": "/home/ab/plan.dxf", "units": "yd", "layers": [3]})
    ... # doctest: +NORMALIZE_WHITESPACE
    [(('dxf',), 'must be a path relative to the folder of the cell file', '/home/ab/plan.dxf'),
     (('units',), 'must be one of "mm", "cm", "m", "in" or "ft"', 'yd'),
     (('layers', 0), 'must be a layer name (a non-empty string)', 3)]
    """
    if not isinstance(value, Mapping):
        return [((), 'must be a JSON object {"dxf": "path/to/drawing.dxf", ...}', value)]
    out: list[tuple[tuple[Any, ...], str, Any]] = []
    dxf = value.get("dxf")
    if "dxf" not in value:
        out.append((("dxf",), "is required but missing", None))
    elif not isinstance(dxf, str) or not dxf.strip():
        out.append((("dxf",), "must be a non-empty string (a path to a DXF file)", dxf))
    elif PurePosixPath(dxf).is_absolute() or PureWindowsPath(dxf).is_absolute() or (
        PureWindowsPath(dxf).drive
    ):
        out.append((("dxf",), "must be a path relative to the folder of the cell file", dxf))
    elif "\\" in dxf:
        out.append((("dxf",), 'must use "/" between folders', dxf))
    if "units" in value and value["units"] is not None:
        problem = choice_problem(value["units"], IMPORT_UNITS)
        if problem:
            out.append((("units",), problem, value["units"]))
    if "layers" in value and value["layers"] is not None:
        layers = value["layers"]
        if not isinstance(layers, list):
            out.append((("layers",), "must be a list of layer names", layers))
        else:
            for i, name in enumerate(layers):
                if not isinstance(name, str) or not name.strip():
                    out.append((("layers", i), "must be a layer name (a non-empty string)", name))
    return out


def underlay_spec(cell: Cell) -> UnderlaySpec | None:
    """The cell's underlay (None when it has none or the key is malformed).

    Examples
    --------
    >>> underlay_spec(Cell("c", extra={"underlay": {"dxf": "plan.dxf", "layers": ["A"]}}))
    UnderlaySpec(dxf='plan.dxf', units=None, layers=('A',))
    """
    value = cell.extra.get(UNDERLAY_KEY)
    if value is None or underlay_problems(value):
        return None
    layers = value.get("layers")
    return UnderlaySpec(
        dxf=value["dxf"].strip(),
        units=value.get("units"),
        layers=None if layers is None else tuple(layers),
    )


def underlay_path(spec: UnderlaySpec, cell_file: str | os.PathLike[str] | None) -> Path | None:
    """The drawing's file: ``spec.dxf`` in the folder of ``cell_file``.

    None when the cell has no file yet (a relative path has nothing to start from).
    """
    if cell_file is None:
        return None
    return Path(cell_file).parent / Path(*PurePosixPath(spec.dxf).parts)


def load_underlay(cell: Cell, cell_file: str | os.PathLike[str] | None) -> tuple[Any, str]:
    """The cell's underlay read from its DXF file: ``(DxfUnderlay or None, note)``.

    The note says, in one line, what was drawn or why nothing is ("" when the cell has no
    underlay); reading problems never raise.
    """
    from .dxf_import import DxfReadError, dxf_underlay

    spec = underlay_spec(cell)
    if spec is None:
        return None, ""
    path = underlay_path(spec, cell_file)
    if path is None:
        return None, f"underlay {spec.dxf}: not drawn (save the cell first: the path is relative)"
    try:
        u = dxf_underlay(path, cell_units=cell.units, drawing_units=spec.units, layers=spec.layers)
    except DxfReadError as exc:
        return None, f"underlay not drawn: {exc}"
    except OSError as exc:
        return None, f"underlay not drawn: {spec.dxf}: {exc.strerror or exc}"
    return u, f"underlay {spec.dxf}: {u.count()} lines on {len(u.layers)} layers ({u.units})"

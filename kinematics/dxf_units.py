"""Length units of DXF drawings: the ``$INSUNITS`` header codes and their sizes.

Codes from the ezdxf documentation, "DXF units": 0 unitless, 1 inches, 2 feet,
4 millimetres, 5 centimetres, 6 metres (and the rarer ones below). Sizes are exact
definitions: 1 in = 25.4 mm and 1 ft = 12 in (international yard and pound agreement,
1959), the metric prefixes by definition.
"""

from __future__ import annotations

__all__ = [
    "UNITLESS",
    "INSUNITS",
    "MM_PER_INSUNIT",
    "IMPORT_UNITS",
    "unit_code",
    "unit_label",
    "name_of",
    "mm_per_drawing_unit",
    "cell_insunits",
    "cell_measurement",
]

#: ``$INSUNITS`` value of a drawing that does not state its units.
UNITLESS = 0

#: Our short names of drawing units -> ``$INSUNITS`` code.
INSUNITS = {
    "in": 1,
    "ft": 2,
    "mi": 3,
    "mm": 4,
    "cm": 5,
    "m": 6,
    "km": 7,
    "yd": 10,
    "um": 13,
    "dm": 14,
}

#: ``$INSUNITS`` code -> millimetres in one drawing unit (exact definitions).
MM_PER_INSUNIT = {
    1: 25.4,
    2: 304.8,
    3: 1_609_344.0,
    4: 1.0,
    5: 10.0,
    6: 1000.0,
    7: 1_000_000.0,
    8: 25.4e-6,  # microinch
    9: 0.0254,  # mil, a thousandth of an inch
    10: 914.4,
    13: 1e-3,  # micrometre
    14: 100.0,
}

#: Units a user may name for a drawing that does not state its own (command line, dialog).
IMPORT_UNITS = ("mm", "cm", "m", "in", "ft")

_NAMES = {code: name for name, code in INSUNITS.items()}
_WORDS = {
    1: "inches",
    2: "feet",
    3: "miles",
    4: "millimetres",
    5: "centimetres",
    6: "metres",
    7: "kilometres",
    8: "microinches",
    9: "mils",
    10: "yards",
    13: "micrometres",
    14: "decimetres",
}


def unit_code(name: str) -> int:
    """The ``$INSUNITS`` code of a unit name.

    Raises
    ------
    ValueError
        For a name that is not one of :data:`IMPORT_UNITS` (the message lists them).

    Examples
    --------
    >>> unit_code("mm"), unit_code("in")
    (4, 1)
    """
    if name not in IMPORT_UNITS:
        raise ValueError(f"units must be one of {', '.join(IMPORT_UNITS)}; got {name!r}")
    return INSUNITS[name]


def unit_label(code: int) -> str:
    """Words for a ``$INSUNITS`` code, e.g. ``"millimetres (4)"``.

    Examples
    --------
    >>> unit_label(6), unit_label(0)
    ('metres (6)', 'unitless (0)')
    """
    if code == UNITLESS:
        return "unitless (0)"
    return f"{_WORDS.get(code, 'unknown units')} ({code})"


def mm_per_drawing_unit(code: int) -> float | None:
    """Millimetres in one unit of a drawing with this ``$INSUNITS``; None when unknown or unset.

    Examples
    --------
    >>> mm_per_drawing_unit(1), mm_per_drawing_unit(6), mm_per_drawing_unit(0)
    (25.4, 1000.0, None)
    """
    return MM_PER_INSUNIT.get(code)


def cell_insunits(units: str) -> int:
    """``$INSUNITS`` code for a cell's units ("mm" -> 4, "in" -> 1).

    Examples
    --------
    >>> cell_insunits("mm"), cell_insunits("in")
    (4, 1)
    """
    return INSUNITS[units]


def cell_measurement(units: str) -> int:
    """``$MEASUREMENT`` for a cell's units: 1 metric, 0 imperial (ezdxf documentation).

    Examples
    --------
    >>> cell_measurement("mm"), cell_measurement("in")
    (1, 0)
    """
    return 0 if units in ("in", "ft", "yd", "mi") else 1


def name_of(code: int) -> str | None:
    """Our short name of a ``$INSUNITS`` code (None when we have none)."""
    return _NAMES.get(code)

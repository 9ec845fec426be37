"""The one place for two checks every reader and editor makes.

* :func:`choice_problem` / :func:`check_choice`: a string option against its choices,
  with one wording that lists them all.
* :func:`polygon_problem`: whether points make a usable outline (fixtures, footprints,
  body outlines, mounting zones), with one wording.
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Iterable, Sequence
from typing import Any

from shapely.geometry import Polygon
from shapely.validation import explain_validity, make_valid

__all__ = ["choice_problem", "check_choice", "polygon_problem"]


def choice_problem(value: Any, choices: Iterable[str]) -> str | None:
    """Why ``value`` is not one of ``choices`` ("must be one of ..."), None when it is.

    Examples
    --------
    >>> choice_problem("left", ("any", "positive", "negative"))
    'must be one of "any", "positive" or "negative"'
    >>> choice_problem("any", ("any", "positive")) is None
    True
    """
    options = tuple(choices)
    if isinstance(value, str) and value in options:
        return None
    if len(options) == 1:
        return f"must be {json.dumps(options[0])}"
    listed = ", ".join(json.dumps(c) for c in options[:-1]) + f" or {json.dumps(options[-1])}"
    return f"must be one of {listed}"


def check_choice(name: str, value: Any, choices: Iterable[str]) -> str:
    """``value`` when it is one of ``choices``, else ValueError naming ``name`` and the choices.

    Examples
    --------
    >>> check_choice("elbow setting", "both", ("any", "positive", "negative"))
    Traceback (most recent call last):
    ...
    ValueError: elbow setting must be one of "any", "positive" or "negative", got 'both'
    """
    problem = choice_problem(value, choices)
    if problem is not None:
        raise ValueError(f"{name} {problem}, got {value!r}")
    return value


def polygon_problem(points: Sequence[Sequence[float]]) -> str | None:
    """Why ``points`` is not a usable outline, None when it is.

    An outline needs at least three distinct points with finite coordinates, must enclose
    an area and must not cross or touch itself. The problem names the place where GEOS
    finds the outline invalid.

    Examples
    --------
    >>> polygon_problem([(0, 0), (1, 0), (1, 1)]) is None
    True
    >>> polygon_problem([(0, 0), (1, 1), (1, 0), (0, 1)])
    'must be a simple polygon that does not cross or touch itself (Self-intersection at (0.5, 0.5))'
    >>> polygon_problem([(0, 0), (1, 1)])
    'must have at least 3 distinct points'
    """
    pts = [(float(p[0]), float(p[1])) for p in points]
    if not all(math.isfinite(v) for p in pts for v in p):
        return "must have finite coordinates"
    if len(set(pts)) < 3:
        return "must have at least 3 distinct points"
    poly = Polygon(pts)
    if poly.is_valid and poly.area > 0:
        return None
    reason = explain_validity(poly)
    match = re.match(r"(.*?)\s*\[([-+\w.]+) ([-+\w.]+)\]\s*$", reason)
    if match:
        reason = f"{match.group(1)} at ({float(match.group(2)):g}, {float(match.group(3)):g})"
    if make_valid(poly).area <= 0:
        return f"must enclose a non-zero area; the points fold back onto each other ({reason})"
    return f"must be a simple polygon that does not cross or touch itself ({reason})"

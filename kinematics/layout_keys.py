"""Cell-file keys for base placement and layout variants: reading and checking them.

Three optional keys, kept by the loader in ``extra`` and checked when a file is read
(:func:`validate_layout_keys`, called by :func:`kinematics.cellfile.parse_cell`):

=================================  =====================================================
key                                meaning
=================================  =====================================================
arm ``mounting_zone``              ``[[x, y], ...]``, a simple polygon in world coordinates
                                   (cell units): where this arm's base may be bolted
cell ``placement_weights``         ``{"limit_margin": w, "reach_margin": w, "clearance": w}``,
                                   each a number of 0 or more (default 1): the weights of
                                   the placement score's quality terms (README, Placement)
cell ``variants``                  ``[{"name": text, "arms": {arm id: entry}}, ...]``: named
                                   alternative layouts; an entry holds ``base`` (required,
                                   ``{"x", "y", "heading_deg"}``) and optionally ``links``,
                                   ``joint_limits_deg``, ``joint_speed_dps``,
                                   ``joint_accel_dps2`` (as on an arm)
=================================  =====================================================

A malformed key raises :class:`LayoutDataError`, a
:class:`kinematics.bodies.BodyDataError`, whose message is one line
``<json path>: <problem>, got <value>``.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely
from numpy.typing import NDArray

from .bodies import BodyDataError
from .cell import Arm, Cell

__all__ = [
    "WEIGHT_KEYS",
    "VARIANT_ARM_KEYS",
    "LayoutDataError",
    "ScoreWeights",
    "VariantArm",
    "Variant",
    "mounting_zone",
    "score_weights",
    "with_score_weights",
    "variants",
    "variant_to_json",
    "validate_layout_keys",
]

#: Keys of ``placement_weights``, in the order the README lists the score's terms.
WEIGHT_KEYS = ("limit_margin", "reach_margin", "clearance")
#: Keys of one arm's entry in a variant.
VARIANT_ARM_KEYS = ("base", "links", "joint_limits_deg", "joint_speed_dps", "joint_accel_dps2")

# Same bounds as kinematics.cellfile (link lengths, joint ranges, magnitudes).
_LENGTHS = (1e-3, 1e6)
_MAX_RANGE = 720.0
_MAX_MAG = 1e9


class LayoutDataError(BodyDataError):
    """A placement or variant key of a cell file is malformed (one-line message)."""


@dataclass(frozen=True)
class ScoreWeights:
    """Weights of the quality terms of the placement score (all >= 0).

    Examples
    --------
    >>> ScoreWeights().total
    3.0
    """

    limit_margin: float = 1.0
    reach_margin: float = 1.0
    clearance: float = 1.0

    @property
    def total(self) -> float:
        """Sum of the weights (0 means the score counts feasible targets only)."""
        return self.limit_margin + self.reach_margin + self.clearance


@dataclass(frozen=True)
class VariantArm:
    """One arm's part of a variant: a base pose and optionally another arm model."""

    base: tuple[float, float, float]
    links: tuple[float, float] | None = None
    joint_limits_deg: tuple[tuple[float, float], tuple[float, float]] | None = None
    joint_speed_dps: tuple[float, float] | None = None
    joint_accel_dps2: tuple[float, float] | None = None


@dataclass(frozen=True)
class Variant:
    """A named alternative layout: per arm id, a :class:`VariantArm`."""

    name: str
    arms: tuple[tuple[str, VariantArm], ...]

    def arm(self, arm_id: str) -> VariantArm | None:
        """This variant's entry for an arm, None when it leaves the arm as it is."""
        return dict(self.arms).get(arm_id)


def _fail(path: str, problem: str, value: Any) -> LayoutDataError:
    return LayoutDataError(path, problem, value)


def _is_list(v: Any) -> bool:
    return isinstance(v, Sequence) and not isinstance(v, str)


def _num(v: Any, path: str, *, nonneg: bool = False, positive: bool = False) -> float:
    if not isinstance(v, (int, float)) or isinstance(v, bool) or not math.isfinite(v):
        raise _fail(path, "must be a finite number", v)
    if abs(v) > _MAX_MAG:
        raise _fail(path, f"must be between -{_MAX_MAG:g} and {_MAX_MAG:g}", v)
    if positive and not v > 0:
        raise _fail(path, "must be greater than 0", v)
    if nonneg and v < 0:
        raise _fail(path, "must not be negative", v)
    return float(v)


def _pair(v: Any, path: str, **kw: bool) -> tuple[float, float]:
    if not _is_list(v) or len(v) != 2:
        raise _fail(path, "must be a list of 2 numbers", v)
    return _num(v[0], f"{path}[0]", **kw), _num(v[1], f"{path}[1]", **kw)


def _polygon(v: Any, path: str) -> NDArray[np.float64]:
    if not _is_list(v) or len(v) < 3:
        raise _fail(path, "must be a list of at least 3 [x, y] points", v)
    pts = []
    for k, p in enumerate(v):
        if not _is_list(p) or len(p) != 2:
            raise _fail(f"{path}[{k}]", "must be [x, y] with two finite numbers", p)
        pts.append(_pair(p, f"{path}[{k}]"))
    if pts[0] == pts[-1]:
        pts = pts[:-1]
    poly = shapely.Polygon(pts)
    if len(pts) < 3 or not poly.is_valid or poly.area <= 0:
        raise _fail(path, "must be a simple polygon with an area", v)
    return np.array(pts, dtype=float)


def mounting_zone(arm: Arm, path: str = "arm") -> shapely.Polygon | None:
    """The arm's ``mounting_zone`` as a shapely polygon (validated), None when not given.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150),
    ...           extra={"mounting_zone": [[-100, -50], [100, -50], [100, 50], [-100, 50]]})
    >>> mounting_zone(arm).area
    20000.0
    """
    v = arm.extra.get("mounting_zone")
    if v is None:
        return None
    return shapely.Polygon(_polygon(v, f"{path}.mounting_zone"))


def score_weights(cell: Cell) -> ScoreWeights:
    """The cell's ``placement_weights`` (validated); every weight defaults to 1.

    Examples
    --------
    >>> score_weights(Cell("c", extra={"placement_weights": {"clearance": 2}}))
    ScoreWeights(limit_margin=1.0, reach_margin=1.0, clearance=2.0)
    """
    v = cell.extra.get("placement_weights")
    if v is None:
        return ScoreWeights()
    path = "placement_weights"
    if not isinstance(v, Mapping):
        raise _fail(path, f"must be an object with keys among {', '.join(WEIGHT_KEYS)}", v)
    unknown = [k for k in v if k not in WEIGHT_KEYS]
    if unknown:
        raise _fail(
            f"{path}.{unknown[0]}", f"is not a weight (the weights are {', '.join(WEIGHT_KEYS)})", v
        )
    got = {k: _num(v[k], f"{path}.{k}", nonneg=True) for k in WEIGHT_KEYS if v.get(k) is not None}
    return ScoreWeights(**got)


def with_score_weights(cell: Cell, weights: ScoreWeights) -> Cell:
    """The cell with ``placement_weights`` set to ``weights`` (the key goes when every weight
    is the default 1); a pure function for one undo step.

    Raises
    ------
    LayoutDataError
        When a weight is negative or not finite.

    Examples
    --------
    >>> c = with_score_weights(Cell("c"), ScoreWeights(clearance=2.5))
    >>> c.extra["placement_weights"], score_weights(c).clearance
    ({'limit_margin': 1, 'reach_margin': 1, 'clearance': 2.5}, 2.5)
    >>> "placement_weights" in with_score_weights(c, ScoreWeights()).extra
    False
    """
    from dataclasses import replace

    values = {
        k: _num(getattr(weights, k), f"placement_weights.{k}", nonneg=True) for k in WEIGHT_KEYS
    }
    extra = dict(cell.extra)
    if all(v == 1.0 for v in values.values()):
        extra.pop("placement_weights", None)
    else:
        extra["placement_weights"] = {k: _plain(v) for k, v in values.items()}
    return replace(cell, extra=extra)


def _limits(v: Any, path: str) -> tuple[tuple[float, float], tuple[float, float]]:
    if not _is_list(v) or len(v) != 2:
        raise _fail(path, "must be [[min1, max1], [min2, max2]] in degrees", v)
    out = []
    for j, pair in enumerate(v):
        lo, hi = _pair(pair, f"{path}[{j}]")
        if not lo < hi or hi - lo > _MAX_RANGE:
            raise _fail(f"{path}[{j}]", "must have min < max and span at most 720 degrees", pair)
        out.append((lo, hi))
    return out[0], out[1]


def _variant_arm(v: Any, path: str, arm: Arm, arm_path: str) -> VariantArm:
    if not isinstance(v, Mapping):
        raise _fail(path, 'must be an object with at least "base"', v)
    unknown = [k for k in v if k not in VARIANT_ARM_KEYS]
    if unknown:
        raise _fail(
            f"{path}", f"unknown key {unknown[0]!r} (known: {', '.join(VARIANT_ARM_KEYS)})", v
        )
    base = v.get("base")
    bp = f"{path}.base"
    if not isinstance(base, Mapping):
        raise _fail(bp, 'must be {"x": number, "y": number, "heading_deg": number}', base)
    pose = tuple(
        _num(base.get(k), f"{bp}.{k}") if k in base else _missing(f"{bp}.{k}")
        for k in ("x", "y", "heading_deg")
    )
    links = limits = speed = accel = None
    if v.get("links") is not None:
        links = _pair(v["links"], f"{path}.links", positive=True)
        for k, a in enumerate(links):
            if not _LENGTHS[0] <= a <= _LENGTHS[1]:
                raise _fail(f"{path}.links[{k}]", "must be a length between 0.001 and 1e+06", a)
    if v.get("joint_limits_deg") is not None:
        limits = _limits(v["joint_limits_deg"], f"{path}.joint_limits_deg")
        mech = arm.extra.get("mechanical_limits_deg")
        if _is_list(mech) and len(mech) == 2:
            for j, ((lo, hi), m) in enumerate(zip(limits, mech)):
                if lo < m[0] or hi > m[1]:
                    raise _fail(
                        f"{path}.joint_limits_deg[{j}]",
                        f"must lie within {arm_path}.mechanical_limits_deg[{j}] {list(m)}",
                        [lo, hi],
                    )
    if v.get("joint_speed_dps") is not None:
        speed = _pair(v["joint_speed_dps"], f"{path}.joint_speed_dps", positive=True)
    if v.get("joint_accel_dps2") is not None:
        accel = _pair(v["joint_accel_dps2"], f"{path}.joint_accel_dps2", positive=True)
    return VariantArm(pose, links, limits, speed, accel)  # type: ignore[arg-type]


def _missing(path: str) -> float:
    raise LayoutDataError(path, "is required but missing", None)


def variants(cell: Cell) -> tuple[Variant, ...]:
    """The cell's ``variants`` (validated), in file order; () when there are none.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150))
    >>> cell = Cell("c", arms=(arm,), extra={"variants": [
    ...     {"name": "left", "arms": {"a": {"base": {"x": -100, "y": 0, "heading_deg": 90}}}}]})
    >>> v = variants(cell)[0]
    >>> v.name, v.arm("a").base
    ('left', (-100.0, 0.0, 90.0))
    """
    raw = cell.extra.get("variants")
    if raw is None:
        return ()
    if not _is_list(raw):
        raise _fail("variants", 'must be a list of {"name": ..., "arms": {...}} objects', raw)
    arms = {a.id: (i, a) for i, a in enumerate(cell.arms)}
    out: list[Variant] = []
    seen: dict[str, int] = {}
    for i, item in enumerate(raw):
        p = f"variants[{i}]"
        if not isinstance(item, Mapping):
            raise _fail(p, 'must be an object {"name": ..., "arms": {...}}', item)
        unknown = [k for k in item if k not in ("name", "arms")]
        if unknown:
            raise _fail(p, f"unknown key {unknown[0]!r} (known: name, arms)", item)
        name = item.get("name")
        if not isinstance(name, str) or not name.strip():
            raise _fail(f"{p}.name", "must be a non-empty string", name)
        if name in seen:
            raise _fail(f"{p}.name", f"duplicate name, also used by variants[{seen[name]}]", name)
        seen[name] = i
        entries = item.get("arms")
        if not isinstance(entries, Mapping):
            raise _fail(f"{p}.arms", "must be an object {arm id: {...}, ...}", entries)
        got = []
        for arm_id, entry in entries.items():
            ap = f"{p}.arms.{arm_id}" if str(arm_id).isidentifier() else f"{p}.arms[{arm_id!r}]"
            if arm_id not in arms:
                raise _fail(ap, "names no arm in this cell", arm_id)
            k, arm = arms[arm_id]
            got.append((arm_id, _variant_arm(entry, ap, arm, f"arms[{k}]")))
        out.append(Variant(name, tuple(got)))
    return tuple(out)


def _plain(v: float) -> float | int:
    f = float(v)
    return int(f) if f.is_integer() and abs(f) < 2**53 else f


def variant_to_json(variant: Variant) -> dict[str, Any]:
    """The JSON object of a variant as stored in the cell file.

    Examples
    --------
    >>> variant_to_json(Variant("v", (("a", VariantArm((1.5, 0.0, 90.0))),)))
    {'name': 'v', 'arms': {'a': {'base': {'x': 1.5, 'y': 0, 'heading_deg': 90}}}}
    """
    arms: dict[str, Any] = {}
    for arm_id, va in variant.arms:
        d: dict[str, Any] = {
            "base": dict(zip(("x", "y", "heading_deg"), (_plain(c) for c in va.base)))
        }
        if va.links is not None:
            d["links"] = [_plain(c) for c in va.links]
        if va.joint_limits_deg is not None:
            d["joint_limits_deg"] = [[_plain(c) for c in lim] for lim in va.joint_limits_deg]
        if va.joint_speed_dps is not None:
            d["joint_speed_dps"] = [_plain(c) for c in va.joint_speed_dps]
        if va.joint_accel_dps2 is not None:
            d["joint_accel_dps2"] = [_plain(c) for c in va.joint_accel_dps2]
        arms[arm_id] = d
    return {"name": variant.name, "arms": arms}


def validate_layout_keys(cell: Cell) -> None:
    """Check ``mounting_zone``, ``placement_weights`` and ``variants``; raise on the first bad one.

    Raises
    ------
    LayoutDataError
        With a one-line message naming the JSON path and value.
    """
    for i, arm in enumerate(cell.arms):
        mounting_zone(arm, f"arms[{i}]")
    score_weights(cell)
    variants(cell)

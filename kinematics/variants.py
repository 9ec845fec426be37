"""Layout variants: named alternative base poses and arm models kept in the cell file.

A variant (cell key ``variants``, read by :func:`kinematics.layout_keys.variants`) holds,
per arm, a base pose and optionally link lengths, joint limits, speeds and accelerations,
so two layouts or two arm models can be compared. The functions here are pure: each takes
a :class:`~kinematics.cell.Cell` and returns a new one, so the window makes each of them
one undo step.

:func:`compare_variants` puts the current layout and every variant side by side.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

from .cell import Cell
from .layout_keys import Variant, VariantArm, variant_to_json, variants

__all__ = [
    "VariantRow",
    "CURRENT",
    "variant_from_cell",
    "add_variant",
    "apply_variant",
    "rename_variant",
    "delete_variant",
    "compare_variants",
    "comparison_report",
    "format_comparison",
    "BETTER",
]

#: Column name of the current layout in comparisons.
CURRENT = "(current layout)"


def variant_from_cell(cell: Cell, name: str) -> Variant:
    """A variant holding the current layout: every arm's base pose, links, limits and speeds.

    Examples
    --------
    >>> from kinematics.cell import Arm
    >>> arm = Arm("a", "A", 10, 0, 90, 400, 250, (-180, 180), (-150, 150))
    >>> variant_from_cell(Cell("c", arms=(arm,)), "now").arm("a").base
    (10.0, 0.0, 90.0)
    """
    return Variant(
        name,
        tuple(
            (
                a.id,
                VariantArm(
                    (float(a.x), float(a.y), float(a.heading_deg)),
                    (float(a.a1), float(a.a2)),
                    (tuple(a.q1_limits), tuple(a.q2_limits)),  # type: ignore[arg-type]
                    a.joint_speed_dps,
                    a.joint_accel_dps2,
                ),
            )
            for a in cell.arms
        ),
    )


def _stored(cell: Cell) -> list[dict[str, Any]]:
    variants(cell)  # validate first: a broken key must not be rewritten silently
    return [dict(v) for v in (cell.extra.get("variants") or [])]


def _with(cell: Cell, items: list[dict[str, Any]]) -> Cell:
    extra = dict(cell.extra)
    if items:
        extra["variants"] = items
    else:
        extra.pop("variants", None)
    return replace(cell, extra=extra)


def _check_name(name: str, taken: list[str]) -> str:
    if not isinstance(name, str) or not name.strip():
        raise ValueError(f"a variant name must be a non-empty string, got {name!r}")
    if name in taken:
        raise ValueError(f"a variant named {name!r} exists already")
    return name


def add_variant(cell: Cell, name: str) -> Cell:
    """The cell with a new variant ``name`` holding the current layout (appended).

    Raises
    ------
    ValueError
        When the name is empty or taken.

    Examples
    --------
    >>> from kinematics.cell import Arm
    >>> arm = Arm("a", "A", 0, 0, 90, 400, 250, (-180, 180), (-150, 150))
    >>> cell = add_variant(Cell("c", arms=(arm,)), "first")
    >>> [v.name for v in variants(cell)]
    ['first']
    """
    items = _stored(cell)
    _check_name(name, [v["name"] for v in items])
    return _with(cell, items + [variant_to_json(variant_from_cell(cell, name))])


def _find(items: list[dict[str, Any]], name: str) -> int:
    for i, v in enumerate(items):
        if v.get("name") == name:
            return i
    raise KeyError(name)


def apply_variant(cell: Cell, name: str) -> Cell:
    """The cell with a variant's base poses (and arm models, where given) applied.

    The variants themselves are kept. Raises KeyError for an unknown name.

    Examples
    --------
    >>> from kinematics.cell import Arm
    >>> arm = Arm("a", "A", 0, 0, 90, 400, 250, (-180, 180), (-150, 150))
    >>> cell = add_variant(Cell("c", arms=(arm,)), "home")
    >>> moved = replace(cell, arms=(replace(arm, x=50.0),))
    >>> apply_variant(moved, "home").arms[0].x
    0.0
    """
    v = {x.name: x for x in variants(cell)}.get(name)
    if v is None:
        raise KeyError(name)
    arms = []
    for a in cell.arms:
        va = v.arm(a.id)
        if va is not None:
            x, y, h = va.base
            a = replace(a, x=x, y=y, heading_deg=h)
            if va.links is not None:
                a = replace(a, a1=va.links[0], a2=va.links[1])
            if va.joint_limits_deg is not None:
                a = replace(a, q1_limits=va.joint_limits_deg[0], q2_limits=va.joint_limits_deg[1])
            if va.joint_speed_dps is not None:
                a = replace(a, joint_speed_dps=va.joint_speed_dps)
            if va.joint_accel_dps2 is not None:
                a = replace(a, joint_accel_dps2=va.joint_accel_dps2)
        arms.append(a)
    return replace(cell, arms=tuple(arms))


def rename_variant(cell: Cell, old: str, new: str) -> Cell:
    """The cell with variant ``old`` renamed ``new`` (KeyError / ValueError as appropriate)."""
    items = _stored(cell)
    i = _find(items, old)
    if new != old:
        _check_name(new, [v["name"] for v in items])
    items[i] = {**items[i], "name": new}
    return _with(cell, items)


def delete_variant(cell: Cell, name: str) -> Cell:
    """The cell without variant ``name`` (KeyError when there is none); the key goes when
    the last variant does."""
    items = _stored(cell)
    del items[_find(items, name)]
    return _with(cell, items)


@dataclass(frozen=True)
class VariantRow:
    """One arm of one layout in a comparison (lengths in cell units, angles in degrees).

    ``None`` means not defined: no feasible target (margins, clearance), some target not
    feasible (tolerances), nothing blocks (clearance), no cycle time (the arm has no
    sequence with a time: no speed data, or no plan).
    """

    layout: str
    arm: str
    targets: int
    feasible_targets: int
    worst_limit_margin_deg: float | None
    worst_reach_margin: float | None
    smallest_clearance: float | None
    placement_tolerance: float | None
    heading_tolerance_deg: tuple[float, float] | None
    region_area: float | None
    cycle_time_s: float | None = None


def _finite(v: float) -> float | None:
    v = float(v)
    return v if math.isfinite(v) else None


def _cycle_time(cell: Cell, arm_id: str) -> float | None:
    """The cycle time of the arm's first sequence that has one (as ``check`` plans it)."""
    if not any(q.arm == arm_id for q in cell.sequences):
        return None
    from .evaluate import evaluate_cell_arm

    for plan in evaluate_cell_arm(cell, cell.arm(arm_id)).plans:
        if plan.cycle_time_s is not None:
            return float(plan.cycle_time_s)
    return None


def _layout_rows(cell: Cell, name: str) -> list[VariantRow]:
    from .placement import (
        evaluate_at,
        heading_tolerance,
        placement_problem,
        placement_region,
        placement_tolerance,
    )

    rows = []
    for a in cell.arms:
        p = placement_problem(cell, a.id)
        ev = evaluate_at(p, a.x, a.y)
        feas = ev.feasible
        n = len(p.targets)
        k = ev.chosen.clip(0, 1)
        idx = range(n)
        lm = [float(ev.ik.limit_margin_deg[i, k[i]]) for i in idx if feas[i]]
        rm = [float(ev.ik.reach_margin[i]) for i in idx if feas[i]]
        cl = [float(ev.clearance[i, k[i]]) for i in idx if feas[i]]
        region = placement_region(p, blocking=False)
        tol = placement_tolerance(p, region=region)
        rows.append(
            VariantRow(
                layout=name,
                arm=a.id,
                targets=n,
                feasible_targets=int(feas.sum()),
                worst_limit_margin_deg=min(lm) if lm else None,
                worst_reach_margin=min(rm) if rm else None,
                smallest_clearance=_finite(min(cl)) if cl else None,
                placement_tolerance=tol.radius,
                heading_tolerance_deg=heading_tolerance(p),
                region_area=_finite(region.area),
                cycle_time_s=_cycle_time(cell, a.id),
            )
        )
    return rows


def compare_variants(cell: Cell) -> list[VariantRow]:
    """Rows for the current layout, then each variant in file order, one per arm."""
    rows = _layout_rows(cell, CURRENT)
    for v in variants(cell):
        rows += _layout_rows(apply_variant(cell, v.name), v.name)
    return rows


#: Metric -> which way is better ("max" or "min"), for marking the better value.
BETTER = {
    "feasible_targets": "max",
    "worst_limit_margin_deg": "max",
    "worst_reach_margin": "max",
    "smallest_clearance": "max",
    "placement_tolerance": "max",
    "heading_tolerance_deg": "max",
    "region_area": "max",
    "cycle_time_s": "min",
}


def _metric(row: VariantRow, key: str) -> float | None:
    v = getattr(row, key)
    if key == "heading_tolerance_deg":
        return None if v is None else min(v)
    return v


def _best_layouts(rows: list[VariantRow], arm: str, key: str) -> list[str]:
    mine = [r for r in rows if r.arm == arm]
    if key != "feasible_targets" and mine:
        # Margins and tolerances only compare between layouts reaching as many targets.
        most = max(r.feasible_targets for r in mine)
        mine = [r for r in mine if r.feasible_targets == most]
    vals = [(r.layout, _metric(r, key)) for r in mine]
    known = [(n, v) for n, v in vals if v is not None]
    if len(known) < 2:
        return []
    pick = max if BETTER[key] == "max" else min
    best = pick(v for _, v in known)
    winners = [n for n, v in known if abs(v - best) <= 1e-9 * max(1.0, abs(best))]
    return [] if len(winners) == len(known) else winners


def comparison_report(cell: Cell, rows: list[VariantRow] | None = None) -> dict[str, Any]:
    """The ``compare --json`` report: per layout and arm the metrics, and which are better.

    Returns
    -------
    dict
        ``{"cell", "units", "layouts": [names], "rows": [{"layout", "arm", <metrics>}],
        "better": {arm: {metric: [layout names]}}, "caution"}``; a metric's list is empty
        when every layout ties or fewer than two have a value; metrics other than the
        feasible count are compared only between the layouts with the most feasible targets.
    """
    from .caution import CAUTION_SHORT

    rows = compare_variants(cell) if rows is None else rows
    layouts = list(dict.fromkeys(r.layout for r in rows))

    def num(v: Any) -> Any:
        if v is None:
            return None
        if isinstance(v, tuple):
            return [round(float(c), 6) + 0.0 for c in v]
        return round(float(v), 6) + 0.0 if isinstance(v, float) else v

    out_rows = [
        {
            "layout": r.layout,
            "arm": r.arm,
            "targets": r.targets,
            **{k: num(getattr(r, k)) for k in BETTER},
        }
        for r in rows
    ]
    better = {
        a.id: {k: _best_layouts(rows, a.id, k) for k in BETTER}
        for a in cell.arms
    }
    return {
        "cell": cell.name,
        "units": cell.units,
        "layouts": layouts,
        "rows": out_rows,
        "better": better,
        "caution": CAUTION_SHORT,
    }


_LABELS = {
    "feasible_targets": "targets feasible",
    "worst_limit_margin_deg": "worst limit margin (deg)",
    "worst_reach_margin": "worst reach margin",
    "smallest_clearance": "smallest clearance",
    "placement_tolerance": "placement tolerance",
    "heading_tolerance_deg": "heading tolerance (deg, -/+)",
    "region_area": "placement region area",
    "cycle_time_s": "cycle time (s)",
}


def _plain(text: str) -> str:
    return "".join(c if c.isprintable() else f"\\u{ord(c):04x}" for c in text)


def format_comparison(report: dict[str, Any]) -> str:
    """The comparison as a text table per arm; the better value of a row carries ``*``."""
    u = report["units"]
    lines = [f"Cell: {_plain(report['cell'])}   (lengths in {u}, areas in {u}^2)", ""]
    layouts = report["layouts"]
    for arm_id, better in report["better"].items():
        rows = {r["layout"]: r for r in report["rows"] if r["arm"] == arm_id}
        lines.append(f"Arm {_plain(arm_id)}:")
        head = ["", *(_plain(n) for n in layouts)]
        table = [head]
        for key, label in _LABELS.items():
            cells = [label]
            for n in layouts:
                r = rows.get(n)
                v = None if r is None else r[key]
                if key == "feasible_targets" and r is not None:
                    text = f"{v} of {r['targets']}"
                elif v is None:
                    text = "-"
                elif isinstance(v, list):
                    text = f"{v[0]:.2f} / {v[1]:.2f}"
                elif key == "region_area":
                    text = f"{v:.0f}"
                elif key == "cycle_time_s":
                    text = f"{v:.2f}"
                else:
                    text = f"{v:.1f}" if isinstance(v, float) else str(v)
                mark = " *" if n in better.get(key, []) else "  "
                cells.append(text + mark)
            table.append(cells)
        widths = [max(len(r[c]) for r in table) for c in range(len(head))]
        for i, r in enumerate(table):
            lines.append(
                "  "
                + "  ".join(
                    v.ljust(w) if c == 0 else v.rjust(w) for c, (v, w) in enumerate(zip(r, widths))
                ).rstrip()
            )
            if i == 0:
                lines.append("  " + "-" * (sum(widths) + 2 * (len(widths) - 1)))
        lines.append("")
    lines += ["* marks the better value in its row.", "", f"CAUTION: {report['caution']}"]
    return "\n".join(lines)

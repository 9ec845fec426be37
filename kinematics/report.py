"""The `check` report: every target's verdict as a JSON-ready dict and as a text table.

Lengths and areas are in the cell's units, angles in degrees.
"""

from __future__ import annotations

import math
from typing import Any

from .caution import CAUTION_SHORT
from .cell import Cell
from .evaluate import ArmEvaluation, CellEvaluation, evaluate_cell
from .ik import ELBOWS
from .interference import Interference, cell_interference
from .plan import SequencePlan, plan_arm
from .regions import arm_regions
from .sweep import MoveResult
from .wording import FEASIBLE, NO_ARMS, target_reason

__all__ = ["REGION_TOL_MM", "check_report", "format_check_table"]

#: Chord error of region polygons, in millimetres.
REGION_TOL_MM = 0.05


def _num(v: float, nd: int = 6) -> float | None:
    v = float(v)
    # + 0.0 turns -0.0 (float noise rounded away) into 0.0, so reports never show "-0.0".
    return None if not math.isfinite(v) else round(v, nd) + 0.0


def _solutions(ev: ArmEvaluation, i: int) -> list[dict[str, Any]]:
    ik = ev.ik
    if not bool(ik.reachable[i]):
        return []
    # A singular pose is one pose for both configurations: report it once.
    configs = (0,) if bool(ik.singular[i]) else (0, 1)
    out = []
    for k in configs:
        q1, q2 = ik.q_deg[i, k]
        if bool(ik.singular[i]):
            q2 = abs(q2)  # 0 or 180, never "-0"
        out.append(
            {
                "elbow": "both" if bool(ik.singular[i]) else ELBOWS[k],
                "q_deg": [_num(q1), _num(q2)],
                "within_limits": bool(ik.within_limits[i, k].all()),
                "allowed": bool(ik.allowed[i, k]),
                "limit_margin_deg": _num(ik.limit_margin_deg[i, k]),
                "singular": bool(ik.singular[i]),
                "manipulability": _num(ik.manipulability[i, k]),
                "collides": bool(ev.collides[i, k]),
                "clearance": _num(ev.clearance[i, k]),
                "blocked_by": _id(ev.blocked_by(i, k)),
                "blocked_body": ev.blocked_body(i, k),
            }
        )
    return out


def _shown_elbow(ev: ArmEvaluation, i: int) -> str | None:
    if not bool(ev.ik.reachable[i]):
        return None
    return "both" if bool(ev.ik.singular[i]) else ELBOWS[ev.closest(i)]


def _id(fixture: Any) -> str | None:
    return None if fixture is None else fixture.id


def _moves(moves: list[MoveResult]) -> list[dict[str, Any]]:
    return [
        {
            "arm": m.arm,
            "from": m.from_id,
            "to": m.to_id,
            "collides": m.collides,
            "clearance": None if m.clearance is None else _num(m.clearance),
            "blocked_by": m.blocked_by,
            "changes_configuration": None if m.path is None else m.path.changes_configuration,
            "reason": m.reason or None,
        }
        for m in moves
    ]


def check_report(
    cell: Cell,
    evaluation: CellEvaluation | None = None,
    moves: list[MoveResult] | None = None,
) -> dict[str, Any]:
    """Build the ``check --json`` report of a cell.

    Parameters
    ----------
    cell : Cell
        The cell to report on.
    evaluation : CellEvaluation, optional
        Its evaluation, when the caller already has one.
    moves : list of MoveResult, optional
        Its sequences' moves (:func:`kinematics.sweep.cell_moves`), when already computed.

    Returns
    -------
    dict
        JSON-ready: ``cell, units, arms, targets, moves, summary`` as described in
        README.md; lengths and areas in the cell's units, angles in degrees.

    Examples
    --------
    >>> from kinematics.cell import Arm, Target
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    >>> cell = Cell("demo", arms=(arm,), targets=(Target("t", "T", 480, 480, "a"),))
    >>> rep = check_report(cell)
    >>> rep["targets"][0]["feasible"], rep["targets"][0]["reason"]
    (False, 'beyond outer reach by 28.8 mm')
    """
    from .placement import arm_tolerances  # compiled kernels load on first use only

    ev_all = evaluation if evaluation is not None else evaluate_cell(cell)
    tol = REGION_TOL_MM / cell.mm_per_unit
    arms = []
    for arm in cell.arms:
        reg = arm_regions(arm, tol=tol)
        aev = ev_all.arms[arm.id]
        arms.append(
            {
                "id": arm.id,
                "name": arm.name,
                "reach_min": _num(arm.reach_min),
                "reach_max": _num(arm.reach_max),
                "reachable_area": _num(reg.reachable.area, 3),
                "both_elbows_area": _num(reg.both.area, 3),
                "link_radii_assumed": arm.link_radii is None,
                # The base never moves: its clearance is the same at every pose.
                "base_clearance": _num(aev.base_clearance),
                "base_blocked_by": _id(aev.base_blocked_by),
                # How far the base may miss its spot / turn, every target staying feasible.
                **arm_tolerances(cell, arm.id),
            }
        )
    # One lookup table: locating each target by search would make big cells quadratic.
    where = {tid: (ev, i) for ev in ev_all.arms.values() for i, tid in enumerate(ev.target_ids)}
    targets = []
    for t in cell.targets:
        ev, i = where[t.id]
        targets.append(
            {
                "id": t.id,
                "name": t.name,
                "arm": t.arm,
                "x": _num(t.x),
                "y": _num(t.y),
                "feasible": bool(ev.feasible[i]),
                "chosen_elbow": ev.chosen_elbow(i),
                # The configuration the row's numbers and reason are about (the chosen one,
                # or the one that comes closest for a failing target).
                "shown_elbow": _shown_elbow(ev, i),
                "reason": target_reason(ev, i, cell.units) or None,
                "reach_margin": _num(ev.ik.reach_margin[i]),
                "solutions": _solutions(ev, i),
            }
        )
    if moves is None:
        # Sequences with a plan report the plan's moves, the others those between the
        # chosen configurations (both through the evaluation's one move cache).
        moves = ev_all.moves()
    spaces = ev_all.spaces()
    for a in arms:
        sp = spaces.arms[a["id"]]
        a["spaces"] = {
            "maximum_area": _num(sp.maximum.area, 3),
            "maximum_from": sp.maximum_source,
            "restricted_area": _num(sp.restricted.area, 3),
            "operating_area": None if sp.operating is None else _num(sp.operating.area, 3),
        }
    n_ok = sum(1 for t in targets if t["feasible"])
    summary = {
        "targets": len(targets),
        "feasible": n_ok,
        "infeasible": len(targets) - n_ok,
        "infeasible_ids": [t["id"] for t in targets if not t["feasible"]],
        "caution": CAUTION_SHORT,
    }
    return {
        "cell": cell.name,
        "units": cell.units,
        "arms": arms,
        "targets": targets,
        "moves": _moves(moves),
        # Zones two arms share need an interlock; so may targets several arms reach.
        "shared_zones": [
            {"arms": list(z.arms), "space": z.kind, "area": _num(z.area, 3)} for z in spaces.zones
        ],
        "shared_targets": {tid: list(arms) for tid, arms in spaces.targets.items()},
        "sequences": _sequences(cell, ev_all),
        "interference": _interference(cell_interference(cell, ev_all, spaces.zones)),
        "summary": summary,
    }


def _plans(cell: Cell, ev_all: CellEvaluation) -> list[SequencePlan]:
    """Every sequence's plan, in file order (planned here when the evaluation has none)."""
    by_index: dict[int, SequencePlan] = {}
    for ev in ev_all.arms.values():
        plans = ev.plans
        mine = sum(1 for s in cell.sequences if s.arm == ev.arm.id)
        if len(plans) != mine:
            plans = plan_arm(cell, ev)
        for p in plans:
            by_index[p.sequence_index] = p
    return [by_index[k] for k in sorted(by_index)]


def _q(q: tuple[float, float]) -> list[float | None]:
    return [_num(q[0]), _num(q[1])]


def _sequences(cell: Cell, ev_all: CellEvaluation) -> list[dict[str, Any]]:
    out = []
    for p in _plans(cell, ev_all):
        single = p.single_configuration_cycle_time_s
        ppm = p.parts_per_minute
        out.append(
            {
                "arm": p.arm,
                "targets": list(p.targets),
                "cycle_time_s": None if p.cycle_time_s is None else _num(p.cycle_time_s),
                "parts_per_minute": None if ppm is None else _num(ppm),
                "single_configuration_cycle_time_s": None if single is None else _num(single),
                "forced_changes": list(p.forced_changes),
                "missing": list(p.missing),
                "segments": [
                    {
                        "from": s.from_id,
                        "to": s.to_id,
                        "time_s": _num(s.time_s),
                        "elbow_from": s.state_from.elbow,
                        "elbow_to": s.state_to.elbow,
                        "q_from_deg": _q(s.path.q_from),
                        "q_to_deg": _q(s.path.q_to),
                        "dwell_s": _num(s.dwell_s),
                    }
                    for s in p.segments
                ],
            }
        )
    return out


def _interference(it: Interference) -> dict[str, Any]:
    sep = it.min_separation
    c = it.first_contact
    return {
        "horizon_s": None if it.horizon_s is None else _num(it.horizon_s),
        # A gap: 0 when bodies of two arms touch or overlap.
        "min_separation": None if sep is None else _num(max(sep.gap, 0.0)),
        "first_contact": None
        if c is None
        else {
            "time_s": _num(c.time_s),
            "arms": list(c.arms),
            "bodies": list(c.bodies),
            "moves": [list(m) for m in c.moves],
        },
        "zones": [
            {
                "arms": list(z.arms),
                "space": z.space,
                "intervals": {
                    arm: [[_num(a), _num(b)] for a, b in iv] for arm, iv in z.intervals.items()
                },
                "overlap": z.overlap,
                "suggested_start_shift_s": None
                if z.suggested_start_shift_s is None
                else _num(z.suggested_start_shift_s),
            }
            for z in it.zones
        ],
    }


def _plain(text: str) -> str:
    # Names come from the file: a newline or terminal escape must not break the table.
    return "".join(c if c.isprintable() else f"\\u{ord(c):04x}" for c in text)


def _fmt(v: float | None, nd: int = 1) -> str:
    return "-" if v is None else f"{v:.{nd}f}"


def format_check_table(report: dict[str, Any]) -> str:
    """Render a report as a plain-text table for the terminal.

    Parameters
    ----------
    report : dict
        A report from :func:`check_report`.

    Returns
    -------
    str
        The table, one row per target, with the summary and the caution; no trailing newline.

    Examples
    --------
    >>> from kinematics.cell import Arm, Target
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    >>> cell = Cell("demo", arms=(arm,), targets=(Target("t", "T", 480, 480, "a"),))
    >>> print(format_check_table(check_report(cell)).splitlines()[-3])
    0 of 1 targets feasible; failing: t
    """
    u = report["units"]
    lines = [f"Cell: {_plain(report['cell'])}   (lengths in {u}, angles in degrees)", ""]
    if not report["arms"]:
        # Allowed (fixtures may be laid out first), and said: nothing is checked yet.
        lines.append(NO_ARMS)
    for a in report["arms"]:
        lines.append(
            f"Arm {_plain(a['id'])} ({_plain(a['name'])}): "
            f"reach {_fmt(a['reach_min'])}..{_fmt(a['reach_max'])} {u}, "
            f"reachable area {_fmt(a['reachable_area'], 0)} {u}^2, "
            f"both configurations {_fmt(a['both_elbows_area'], 0)} {u}^2"
        )
    lines.append("")
    rows = [
        (
            "",
            "target",
            "arm",
            "verdict",
            "elbow",
            "q1",
            "q2",
            "lim.margin",
            "reach.margin",
            "reason",
        )
    ]
    for t in report["targets"]:
        sol = next((s for s in t["solutions"] if s["elbow"] == t.get("shown_elbow")), None)
        rows.append(
            (
                "" if t["feasible"] else "XX",  # a mark for the eye; the verdict is a word
                _plain(t["id"]),
                _plain(t["arm"]),
                FEASIBLE if t["feasible"] else "FAILS",
                t["chosen_elbow"] or "-",
                _fmt(sol["q_deg"][0]) if sol else "-",
                _fmt(sol["q_deg"][1]) if sol else "-",
                _fmt(sol["limit_margin_deg"]) if sol else "-",
                _fmt(t["reach_margin"]),
                t["reason"] or "",
            )
        )
    widths = [max(len(r[c]) for r in rows) for c in range(len(rows[0]))]
    right = {5, 6, 7, 8}
    for n, r in enumerate(rows):
        cells = [
            v.rjust(w) if c in right else v.ljust(w) for c, (v, w) in enumerate(zip(r, widths))
        ]
        lines.append("  ".join(cells).rstrip())
        if n == 0:
            lines.append("-" * len(lines[-1]))
    if report.get("moves"):
        lines += ["", "Moves (straight in joint space between the chosen configurations):"]
        for m in report["moves"]:
            verdict = "clear" if m["collides"] is False else "FAIL"
            gap = "" if m["clearance"] is None else f", clearance {_fmt(m['clearance'])} {u}"
            why = f": {m['reason']}" if m["reason"] else ""
            lines.append(
                f"  {_plain(m['arm'])}: {_plain(m['from'])} -> {_plain(m['to'])}  "
                f"{verdict}{gap}{why}"
            )
    lines += ["", "Spaces (ISO 10218 terms; areas in " + u + "^2):"]
    for a in report["arms"]:
        sp = a.get("spaces")
        if sp:
            lines.append(
                f"  {_plain(a['id'])}: maximum {_fmt(sp['maximum_area'], 0)} "
                f"(from the {sp['maximum_from']}), restricted {_fmt(sp['restricted_area'], 0)}, "
                f"operating {_fmt(sp['operating_area'], 0)}"
            )
    for z in report.get("shared_zones", []):
        lines.append(
            f"  shared {z['space']} zone {' + '.join(_plain(x) for x in z['arms'])}: "
            f"{_fmt(z['area'], 0)} {u}^2 (needs an interlock)"
        )
    for tid, arms in report.get("shared_targets", {}).items():
        lines.append(f"  target {_plain(tid)} reachable by {', '.join(_plain(x) for x in arms)}")
    lines += _sequence_lines(report, u)
    s = report["summary"]
    lines += [
        "",
        f"{s['feasible']} of {s['targets']} targets feasible"
        + (
            f"; failing: {', '.join(_plain(i) for i in s['infeasible_ids'])}"
            if s["infeasible_ids"]
            else ""
        ),
        "",
        f"CAUTION: {s['caution']}",
    ]
    return "\n".join(lines)


def _t(v: float | None) -> str:
    return "-" if v is None else f"{v:.3f}"


def _intervals(iv: list[list[float]], most: int = 4) -> str:
    if not iv:
        return "never"
    parts = [f"{a:.2f}-{b:.2f}" for a, b in iv[:most]]
    more = f" and {len(iv) - most} more" if len(iv) > most else ""
    return ", ".join(parts) + more


def _sequence_lines(report: dict[str, Any], u: str) -> list[str]:
    """The sequences and arms-together sections of the table."""
    seqs = report.get("sequences") or []
    if not seqs:
        return []
    lines = [
        "",
        "Sequences (cycle times in s: joint moves from the speed, acceleration and jerk "
        "limits, plus dwells):",
    ]
    for q in seqs:
        arm = _plain(q["arm"])
        n = len(q["targets"])
        if q["cycle_time_s"] is None:
            why = (
                "missing " + ", ".join(q["missing"])
                if q["missing"]
                else "no feasible plan (see the targets and moves)"
            )
            lines.append(f"  {arm} ({n} targets): no cycle time: {why}")
            if q["forced_changes"]:
                ids = ", ".join(_plain(t) for t in q["forced_changes"])
                lines.append(f"    no single configuration fits: {ids} force a change")
            continue
        ppm = q["parts_per_minute"]
        rate = "" if ppm is None else f", {ppm:.1f} parts/min"
        single = q["single_configuration_cycle_time_s"]
        if single is None:
            ids = ", ".join(_plain(t) for t in q["forced_changes"]) or "-"
            one = f"no single configuration fits (forced by {ids})"
        else:
            one = f"best with one configuration throughout {_t(single)} s"
        lines.append(f"  {arm} ({n} targets): cycle {_t(q['cycle_time_s'])} s{rate}; {one}")
        slow = max(q["segments"], key=lambda s: s["time_s"] or 0.0, default=None)
        for s in q["segments"]:
            mark = "  <- slowest" if s is slow and len(q["segments"]) > 1 else ""
            dwell = f", dwell {_t(s['dwell_s'])} s before" if s["dwell_s"] else ""
            lines.append(
                f"    {_plain(s['from'])} -> {_plain(s['to'])}  {_t(s['time_s'])} s  "
                f"{s['elbow_from']} -> {s['elbow_to']}  q1 {_fmt(s['q_from_deg'][0])} -> "
                f"{_fmt(s['q_to_deg'][0])}{dwell}{mark}"
            )
    it = report.get("interference") or {}
    if it.get("horizon_s") is None:
        return lines
    lines += ["", f"Arms together over {_t(it['horizon_s'])} s (each repeating its cycle):"]
    lines.append(f"  smallest separation {_fmt(it['min_separation'])} {u}")
    c = it.get("first_contact")
    if c is not None:
        where = "; ".join(
            f"{_plain(a)} {_plain(b)} in {_plain(m[0])} -> {_plain(m[1])}"
            for a, b, m in zip(c["arms"], c["bodies"], c["moves"])
        )
        lines.append(f"  CONTACT at {_t(c['time_s'])} s: {where}")
    else:
        lines.append("  no contact between arms")
    for z in it.get("zones", []):
        arms = " + ".join(_plain(a) for a in z["arms"])
        inside = "; ".join(
            f"{_plain(a)} inside {_intervals(iv)}" for a, iv in z["intervals"].items()
        )
        lines.append(f"  shared {z['space']} zone {arms}: {inside}")
        if z["overlap"]:
            shift = z["suggested_start_shift_s"]
            fix = (
                f"change {_plain(z['arms'][1])}'s start_s by {shift:+.3f} s to separate them"
                if shift is not None
                else "no start change within a cycle separates them"
            )
            lines.append(f"    OVERLAP (needs an interlock): {fix}")
    return lines

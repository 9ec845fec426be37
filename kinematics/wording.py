"""Every sentence about a verdict: the one builder the report, the window and exports use.

Words and numbers only (no glyphs or colours: front ends add their own marks). One
verdict word, :data:`FEASIBLE`, is used everywhere a target passes; a failing target
gets its reason in one of three lengths:

* ``"plain"``: the reason without amounts ("q1 limit"), for drawings redrawn at every
  pointer move;
* ``"short"``: with the amount ("q1 limit by 4.0°"), for table cells and labels;
* ``"full"``: with which configuration comes closest ("q1 limit by 4.0° (closest:
  positive elbow)"), for the report and the problems list.

Lengths are written in the cell's units with one decimal (two for inches), angles in
degrees with one decimal and the degree sign.
"""

from __future__ import annotations

import math
from typing import Any

from .evaluate import ArmEvaluation
from .ik import ELBOWS, REASONS, Status

__all__ = [
    "FEASIBLE",
    "FAILS",
    "DETAILS",
    "STATUS_WORDS",
    "length",
    "degrees",
    "target_reason",
    "verdict",
    "problem_text",
    "move_reason",
    "move_problem_text",
    "count_text",
    "hit_note",
    "seconds",
    "time_span",
    "cycle_summary",
    "slowest_text",
    "segment_time_text",
    "arm_contact_text",
    "zone_overlap_text",
    "separation_text",
    "zone_text",
    "NO_ARMS",
]

#: The one word for a target that passes every check.
FEASIBLE = "feasible"
#: The one word for a target that fails one.
FAILS = "fails"
#: The lengths a reason comes in.
DETAILS = ("plain", "short", "full")
#: Legend words per status.
STATUS_WORDS = {
    Status.OK: FEASIBLE,
    Status.BEYOND_REACH: "beyond outer reach",
    Status.INSIDE_HOLE: "inside the inner hole",
    Status.Q1_LIMIT: "q1 limit",
    Status.Q2_LIMIT: "q2 limit",
    Status.ELBOW_EXCLUDED: "elbow setting excludes it",
    Status.COLLISION: "collides with a fixture",
    Status.BASE_OVERLAP: "base overlaps a fixture",
}

#: Said by the check table and the window for a cell without arms (allowed: fixtures may
#: be laid out first).
NO_ARMS = "No arms in this cell yet: add an arm to see what it reaches."

_DASH = "—"


def _decimals(units: str) -> int:
    return 2 if units == "in" else 1


def length(value: float, units: str, unit: bool = True) -> str:
    """A length in the cell's units ("28.8 mm", "1.25 in"), a dash when not finite.

    Examples
    --------
    >>> length(28.84, "mm"), length(1.254, "in", unit=False), length(float("nan"), "mm")
    ('28.8 mm', '1.25', '—')
    """
    if not math.isfinite(value):
        return _DASH
    text = f"{value:.{_decimals(units)}f}"
    return f"{text} {units}" if unit else text


def degrees(value: float, unit: bool = True) -> str:
    """An angle in degrees with one decimal ("12.3°"), a dash when not finite."""
    if not math.isfinite(value):
        return _DASH
    return f"{value:.1f}°" if unit else f"{value:.1f}"


def _depth(clearance: float, units: str) -> str:
    return "touching" if clearance >= 0 else f"{length(-clearance, units)} deep"


def target_reason(ev: ArmEvaluation, i: int, units: str, detail: str = "full") -> str:
    """Why target ``i`` of an arm evaluation fails ('' when it is feasible).

    Parameters
    ----------
    ev : ArmEvaluation
    i : int
    units : str
        The cell's length units.
    detail : {"plain", "short", "full"}

    Examples
    --------
    >>> from kinematics.cell import Arm, Target
    >>> from kinematics.evaluate import evaluate_arm
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    >>> ev = evaluate_arm(arm, [Target("t", "T", 480, 480, "a"), Target("u", "U", 300, -300, "a")])
    >>> target_reason(ev, 0, "mm"), target_reason(ev, 1, "mm", "short")
    ('beyond outer reach by 28.8 mm', 'q1 limit by 9.8°')
    >>> target_reason(ev, 1, "mm")
    'q1 limit by 9.8° (closest: negative elbow)'
    """
    if detail not in DETAILS:
        raise ValueError(f"detail must be one of {DETAILS}, got {detail!r}")
    if bool(ev.feasible[i]):
        return ""
    st = Status(int(ev.status[i]))
    reason = ev.reason(i)
    if detail == "plain":
        return reason if st in (Status.COLLISION, Status.BASE_OVERLAP) else REASONS[st]
    if st in (Status.BEYOND_REACH, Status.INSIDE_HOLE):
        return f"{reason} by {length(-float(ev.ik.reach_margin[i]), units)}"
    if st in (Status.Q1_LIMIT, Status.Q2_LIMIT):
        k = ev.closest(i)
        joint = 0 if st is Status.Q1_LIMIT else 1
        text = f"{reason} by {degrees(-float(ev.ik.joint_margin_deg[i, k, joint]))}"
        return text if detail == "short" else f"{text} (closest: {ELBOWS[k]} elbow)"
    if st is Status.ELBOW_EXCLUDED:
        fits = " and ".join(ELBOWS[k] for k in range(2) if bool(ev.ik.within_limits[i, k].all()))
        if detail == "short":
            return f"only the {fits} elbow fits (setting '{ev.arm.elbow}')"
        return f"{reason} '{ev.arm.elbow}' (only the {fits} elbow fits)"
    if st is Status.COLLISION:
        k = ev.closest(i)
        body = ev.blocked_body(i, k)
        if detail == "short":
            # How deep is in the clearance columns beside a short reason.
            return f"{reason} ({body})" if body else reason
        depth = _depth(float(ev.clearance[i, k]), units)
        what = f"{body}, {depth}" if body else depth
        both = sum(bool(ev.ik.ok[i, j]) for j in range(2)) == 2 and not bool(ev.ik.singular[i])
        closest = f"; closest: {ELBOWS[k]} elbow" if both else ""
        return f"{reason} ({what}{closest})"
    if st is Status.BASE_OVERLAP:
        return f"{reason} ({_depth(ev.base_clearance, units)})"
    return reason


def verdict(ev: ArmEvaluation, i: int, units: str, detail: str = "short") -> str:
    """ "feasible", or "fails: <reason>" (see :func:`target_reason`)."""
    if bool(ev.feasible[i]):
        return FEASIBLE
    return f"{FAILS}: {target_reason(ev, i, units, detail)}"


def problem_text(ev: ArmEvaluation, i: int, name: str, units: str) -> str:
    """One problem line: "reject_bin Reject bin — q1 limit by 12.0° (closest: ...)"."""
    return f"{ev.target_ids[i]} {name} — {target_reason(ev, i, units, 'full')}"


def move_reason(move: Any, body: str | None, units: str) -> str:
    """Why a move fails ('' when it is possible and clear).

    ``move`` is a :class:`kinematics.sweep.MoveResult`; ``body`` names the body at its
    smallest clearance when it collides.
    """
    if move.collides is False:
        return ""
    if move.collides:
        what = _depth(move.clearance if move.clearance is not None else 0.0, units)
        return f"{move.reason} ({body}, {what})" if body else f"{move.reason} ({what})"
    return move.reason


def move_problem_text(move: Any, body: str | None, units: str, several_arms: bool) -> str:
    """One problem line of a move: "move pick → nest (left) — collides with ..."."""
    arm = f" ({move.arm})" if several_arms else ""
    return f"move {move.from_id} → {move.to_id}{arm} — {move_reason(move, body, units)}"


def count_text(feasible: int, total: int) -> str:
    """The summary of a cell's targets: "9 of 11 targets feasible, 2 fail".

    Examples
    --------
    >>> count_text(9, 11), count_text(3, 3), count_text(0, 0)
    ('9 of 11 targets feasible, 2 fail', 'all 3 targets feasible', 'no targets yet')
    """
    if total == 0:
        return "no targets yet"
    if feasible == total:
        return f"all {total} target{'s' if total != 1 else ''} {FEASIBLE}"
    bad = total - feasible
    return f"{feasible} of {total} targets {FEASIBLE}, {bad} {FAILS if bad == 1 else 'fail'}"


def hit_note(
    arm_names: dict[str, str],
    fails: list[tuple[str, str, str, str]],
    others: list[tuple[str, str, str, str]],
    moves: list[str] = (),
    most: int = 3,
) -> str:
    """The note beside a fixture that bodies hit, one line per collision.

    ``fails`` and ``others`` hold (arm id, target name, elbow, body) of collisions that
    make a target fail and of configurations the target does not use; ``moves`` are
    lines about moves. At most ``most`` lines of each kind, then how many more.

    Examples
    --------
    >>> print(hit_note({"a": "Loader"}, [("a", "Reject bin", "negative", "link 1")],
    ...                [("a", "Tray A1", "positive", "tool"), ("a", "Tray A2", "positive", "tool")],
    ...                most=1))
    hit by Loader at Reject bin (negative elbow, link 1)
    other configuration: Tray A1 (positive elbow, tool), and 1 more
    """

    def lines(rows: list[tuple[str, str, str, str]], head: str) -> list[str]:
        out = [
            f"{head}{arm_names.get(a, a) + ' at ' if head.startswith('hit') else ''}"
            f"{t} ({e} elbow, {b})"
            for a, t, e, b in rows[:most]
        ]
        if len(rows) > most and out:
            out[-1] += f", and {len(rows) - most} more"
        return out

    text = lines(fails, "hit by ") + lines(others, "other configuration: ") + list(moves)
    return "\n".join(text)


# ---------------------------------------------------------------------------------------
# cycle times and arms in time


def seconds(value: float | None, decimals: int = 3) -> str:
    """A time in seconds ("1.256 s"), a dash when there is none.

    Examples
    --------
    >>> seconds(1.25605), seconds(0.3, 2), seconds(None)
    ('1.256 s', '0.30 s', '—')
    """
    if value is None or not math.isfinite(value):
        return _DASH
    return f"{value:.{decimals}f} s"


def time_span(intervals: Any, most: int = 3) -> str:
    """Time intervals in words: "0.57–0.93 s, 1.83–2.19 s", then how many more.

    Examples
    --------
    >>> time_span([(0.571, 0.931), (1.83, 2.19)]), time_span([(0, 1)] * 5, most=2)
    ('0.57–0.93 s, 1.83–2.19 s', '0.00–1.00 s, 0.00–1.00 s and 3 more')
    >>> time_span([])
    'never'
    """
    iv = list(intervals)
    if not iv:
        return "never"
    text = ", ".join(f"{a:.2f}–{b:.2f} s" for a, b in iv[:most])
    return text + (f" and {len(iv) - most} more" if len(iv) > most else "")


def cycle_summary(plan: Any, arm_name: str) -> str:
    """One sentence about a sequence's cycle: its time, parts per minute, the best time
    with one configuration throughout and the targets that force a change.

    ``plan`` is a :class:`kinematics.plan.SequencePlan`.

    Examples
    --------
    >>> from types import SimpleNamespace as S
    >>> moves = (S(changes_configuration=True), S(changes_configuration=True))
    >>> cycle_summary(S(cycle_time_s=2.322, parts_per_minute=25.84,
    ...     single_configuration_cycle_time_s=2.659, single_configuration="positive",
    ...     forced_changes=(), missing=(), reason="", segments=moves), "Loader").split("; ")
    ['Loader: cycle 2.322 s, 25.8 parts per minute', \
'one configuration throughout (positive elbow) 2.659 s', \
'changes configuration 2 times (through full stretch)']
    >>> print(cycle_summary(S(cycle_time_s=None, missing=("joint_speed_dps",), reason="",
    ...     forced_changes=()), "Loader"))
    Loader: no cycle time: missing joint_speed_dps
    """
    if plan.cycle_time_s is None:
        why = "missing " + ", ".join(plan.missing) if plan.missing else plan.reason
        text = f"{arm_name}: no cycle time: {why or 'no plan'}"
        if plan.forced_changes:
            ids = ", ".join(plan.forced_changes)
            text += f"; no single configuration fits: {ids} force a change"
        return text
    ppm = plan.parts_per_minute
    rate = f", {ppm:.1f} parts per minute" if ppm is not None else ""
    single = plan.single_configuration_cycle_time_s
    if single is not None:
        one = f"one configuration throughout ({plan.single_configuration} elbow) {seconds(single)}"
    elif plan.forced_changes:
        one = f"no single configuration fits: forced changes at {', '.join(plan.forced_changes)}"
    else:
        one = "no single configuration fits"
    changes = sum(1 for s in plan.segments if s.changes_configuration)
    if changes:
        one += (
            f"; changes configuration {changes} time{'s' if changes != 1 else ''}"
            " (through full stretch)"
        )
    return f"{arm_name}: cycle {seconds(plan.cycle_time_s)}{rate}; {one}"


def slowest_text(segment: Any) -> str:
    """The slowest move of a cycle: "slowest move pick → nest, 0.353 s".

    Examples
    --------
    >>> from types import SimpleNamespace as S
    >>> slowest_text(S(from_id="pick", to_id="nest", time_s=0.35314))
    'slowest move pick → nest, 0.353 s'
    """
    return f"slowest move {segment.from_id} → {segment.to_id}, {seconds(segment.time_s)}"


def segment_time_text(time_s: float, dwell_s: float) -> str:
    """A target's cell in the table: the move into it and the dwell there.

    Examples
    --------
    >>> segment_time_text(0.35314, 0.25), segment_time_text(2.5, 0.0)
    ('0.353 s + 0.250 s dwell', '2.500 s')
    """
    text = seconds(time_s)
    return f"{text} + {seconds(dwell_s)} dwell" if dwell_s else text


def _doing(arm: str, body: str, move: tuple[str, str], moving: bool) -> str:
    a, b = move
    return f"{arm} {body} moving {a} → {b}" if moving else f"{arm} {body} dwelling at {a}"


def arm_contact_text(contact: Any) -> str:
    """Two arms' bodies meet: when, which bodies, and what each arm is doing.

    ``contact`` is a :class:`kinematics.interference.ArmContact`.

    Examples
    --------
    >>> from types import SimpleNamespace as S
    >>> arm_contact_text(S(time_s=0.5763, arms=("left", "right"),
    ...     bodies=("link 2", "tool"), moves=(("pick", "put"), ("carton", "take")),
    ...     moving=(True, False))).split(": ")
    ['arms left and right touch at 0.576 s', \
'left link 2 moving pick → put, right tool dwelling at carton']
    """
    parts = [
        _doing(a, b, m, bool(mv))
        for a, b, m, mv in zip(contact.arms, contact.bodies, contact.moves, contact.moving)
    ]
    a, b = contact.arms
    return f"arms {a} and {b} touch at {seconds(contact.time_s)}: {', '.join(parts)}"


def zone_overlap_text(zone: Any, both_inside: Any) -> str:
    """Two arms inside their shared zone at the same time, and the start change that
    keeps them apart.

    ``zone`` is a :class:`kinematics.interference.ZoneOccupancy`; ``both_inside`` the
    intervals when both are inside (:func:`kinematics.playback.interval_overlaps`).

    Examples
    --------
    >>> from types import SimpleNamespace as S
    >>> z = S(arms=("left", "right"), space="operating", suggested_start_shift_s=-0.3598)
    >>> zone_overlap_text(z, [(0.57, 0.93)]).split("; ")
    ['shared operating zone left + right: both inside at 0.57–0.93 s', \
"needs an interlock, or change right's start_s by -0.360 s"]
    >>> zone_overlap_text(S(arms=("a", "b"), space="restricted",
    ...     suggested_start_shift_s=None), [(0.4, 1.1)]).split("; ")[1]
    'needs an interlock (no start change within a cycle separates them)'
    """
    a, b = zone.arms
    head = f"shared {zone.space} zone {a} + {b}: both inside at {time_span(both_inside)}"
    shift = zone.suggested_start_shift_s
    if shift is None:
        return f"{head}; needs an interlock (no start change within a cycle separates them)"
    return f"{head}; needs an interlock, or change {b}'s start_s by {shift:+.3f} s"


def separation_text(separation: Any, units: str) -> str:
    """How close two arms come over the run: "arms left and right come within 12.3 mm
    (left link 2, right tool at 1.20 s)", or that they touch.

    ``separation`` is a :class:`kinematics.interference.Separation`.

    Examples
    --------
    >>> from types import SimpleNamespace as S
    >>> print(separation_text(S(arms=("left", "right"), gap=12.34, time_s=1.2,
    ...     bodies=("link 2", "tool")), "mm"))
    arms left and right come within 12.3 mm (left link 2, right tool at 1.20 s)
    >>> print(separation_text(S(arms=("a", "b"), gap=-0.4, time_s=0.5,
    ...     bodies=("tool", "tool")), "mm"))
    arms a and b touch (smallest separation 0.0 mm)
    """
    a, b = separation.arms
    if separation.gap <= 0:
        return f"arms {a} and {b} touch (smallest separation {length(0.0, units)})"
    ba, bb = separation.bodies
    return (
        f"arms {a} and {b} come within {length(separation.gap, units)} "
        f"({a} {ba}, {b} {bb} at {separation.time_s:.2f} s)"
    )


def zone_text(names: tuple[str, str], kind: str, area: float, units: str) -> str:
    """The sentence about a shared zone: two arms' spaces overlap, an interlock is needed.

    ``names`` are the two arms' names, ``kind`` "restricted" or "operating" (ISO 10218
    terms), ``area`` in the cell's units squared.

    Examples
    --------
    >>> zone_text(("Left", "Right"), "restricted", 61234.5, "mm")
    'shared zone Left + Right: restricted spaces overlap over 61,234 mm², an interlock is needed'
    >>> zone_text(("A", "B"), "operating", 12.345, "in")
    'shared zone A + B: operating spaces overlap over 12.35 in², an interlock is needed'
    """
    digits = 0 if units == "mm" else 2
    return (
        f"shared zone {names[0]} + {names[1]}: {kind} spaces overlap over "
        f"{area:,.{digits}f} {units}², an interlock is needed"
    )

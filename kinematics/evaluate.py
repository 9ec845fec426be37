"""Evaluate every target of a cell: reach, elbow configuration, limits, margins, clearance.

This is the one entry point the command line, the desktop program and the
exports use, so all of them agree on what is feasible and why.

A configuration is feasible when it is reachable, within both joint limits, allowed
by the arm's elbow setting and clear of every fixture that blocks the arm's bodies
(:mod:`kinematics.bodies` states the 2.5-D rule). Of the feasible configurations the
one with the larger score is chosen, where

    score = min(1, limit margin / LIMIT_MARGIN_UNIT_DEG, clearance / (2 * smallest link radius))

so a configuration within 10 degrees of a joint limit or within one link width of a
blocking fixture scores below one that is comfortably clear of both, and the scarcer of
the two decides. Equal scores (in particular two comfortable configurations, both 1) go
to the larger limit margin, then to the positive configuration; with no blocking
fixtures this is the plain larger-limit-margin rule.

Then, per sequence: when one configuration is feasible at every target of the
sequence, all of them use it (the one whose worst score over the sequence is larger),
because a configuration change passes through full stretch, costs time and sweeps a
large area (common practice, no source). For a sequence whose arm has joint speed and
acceleration data, :mod:`kinematics.plan` then chooses the configuration (and q1 + k*360)
at every target for the fastest cycle instead, and the plans are kept in
``ArmEvaluation.plans``.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
from numpy.typing import NDArray

from .bodies import (
    ArmBodies,
    arm_bodies,
    clearance_margin,
    link_blocking,
    work_heights,
)
from .cell import Arm, Cell, Fixture, Target
from .cell import Sequence as Sequence_
from .clearance import FixtureSet, arm_clearance, base_clearance
from .ik import ELBOWS, REASONS, IKResult, Status, solve_arm
from .plan import apply_plans, plan_arm

__all__ = [
    "LIMIT_MARGIN_UNIT_DEG",
    "ArmEvaluation",
    "CellEvaluation",
    "EvaluationStore",
    "fixtures_in_reach",
    "with_plans",
    "evaluate_arm",
    "evaluate_cell",
    "evaluate_cell_arm",
    "choose_configuration",
    "unify_sequences",
]

#: Joint-limit margin worth one link width of clearance in the choice of configuration.
LIMIT_MARGIN_UNIT_DEG = 10.0


@dataclass(frozen=True)
class ArmEvaluation:
    """Results for the targets of one arm, as arrays in target order.

    Attributes
    ----------
    arm : Arm
    target_ids : tuple of str
    xy : ndarray, shape (N, 2)
    ik : IKResult
        Shape (N,) arrays from :func:`kinematics.ik.solve_arm`.
    feasible, chosen, status : ndarray, shape (N,)
        The final verdict: the IK verdict, with configurations that collide with a
        blocking fixture turned down (status COLLISION when that leaves none).
    collides : ndarray of bool, shape (N, 2)
        Per configuration: touches or enters a blocking fixture (False when out of reach).
    clearance : ndarray, shape (N, 2)
        Per configuration: smallest signed distance to a blocking fixture (negative =
        penetration depth); +inf when nothing blocks, NaN when out of reach.
    clearance_fixture, clearance_body : ndarray of int, shape (N, 2)
        Index into ``fixtures`` / ``bodies.bodies`` of the fixture and body attaining the
        clearance, -1 when none.
    score : ndarray, shape (N, 2)
        The choice score of each configuration (see the module docstring).
    fixtures : tuple of Fixture
        The fixtures checked.
    bodies : ArmBodies or None
        The arm's bodies (None for an arm evaluated without fixtures).
    base_clearance : float
        Clearance of the base (footprint or shoulder disc) to the fixtures blocking the
        links: the same at every pose (+inf when nothing blocks). When it is 0 or less
        every target fails with status BASE_OVERLAP.
    base_fixture : int
        Index into ``fixtures`` of the fixture nearest the base (-1 when none).
    plans : tuple of kinematics.plan.SequencePlan
        The configuration plans of the arm's sequences (empty before planning).
    """

    arm: Arm
    target_ids: tuple[str, ...]
    xy: NDArray[np.float64]
    ik: IKResult
    feasible: NDArray[np.bool_]
    chosen: NDArray[np.int64]
    status: NDArray[np.int64]
    collides: NDArray[np.bool_] = field(default_factory=lambda: np.zeros((0, 2), dtype=bool))
    clearance: NDArray[np.float64] = field(default_factory=lambda: np.zeros((0, 2)))
    clearance_fixture: NDArray[np.int64] = field(
        default_factory=lambda: np.zeros((0, 2), dtype=np.int64)
    )
    clearance_body: NDArray[np.int64] = field(
        default_factory=lambda: np.zeros((0, 2), dtype=np.int64)
    )
    score: NDArray[np.float64] = field(default_factory=lambda: np.zeros((0, 2)))
    fixtures: tuple[Fixture, ...] = ()
    bodies: ArmBodies | None = None
    base_clearance: float = np.inf
    base_fixture: int = -1
    plans: tuple[Any, ...] = ()
    inputs: tuple | None = field(default=None, repr=False, compare=False)
    planned: bool = field(default=True, repr=False, compare=False)
    _closest: NDArray[np.int64] | None = field(default=None, init=False, repr=False, compare=False)

    @property
    def base_blocked_by(self) -> Fixture | None:
        """The fixture the base overlaps (None when the base is clear)."""
        if self.base_clearance > 0 or self.base_fixture < 0:
            return None
        return self.fixtures[self.base_fixture]

    @property
    def base_nearest(self) -> Fixture | None:
        """The blocking fixture nearest the base (None when nothing blocks)."""
        return self.fixtures[self.base_fixture] if self.base_fixture >= 0 else None

    def index(self, target_id: str) -> int:
        """Position of a target in this evaluation's arrays."""
        return self.target_ids.index(target_id)

    def reason(self, i: int) -> str:
        """Reason text for target ``i`` (empty when feasible).

        A collision names the fixture: "collides with <fixture name>".
        """
        st = Status(int(self.status[i]))
        if st is Status.COLLISION:
            f = self.blocking_fixture(i)
            if f is not None:
                return f"{REASONS[st]} with {f.name}"
        if st is Status.BASE_OVERLAP:
            f = self.base_blocked_by
            if f is not None:
                return f"{REASONS[st]} {f.name}"
        return REASONS[st]

    def blocked_by(self, i: int, k: int) -> Fixture | None:
        """The fixture configuration ``k`` of target ``i`` collides with (None when clear)."""
        if not bool(self.collides[i, k]):
            return None
        j = int(self.clearance_fixture[i, k])
        return self.fixtures[j] if j >= 0 else None

    def blocked_body(self, i: int, k: int) -> str | None:
        """Name of the body of configuration ``k`` that collides (None when clear)."""
        if not bool(self.collides[i, k]) or self.bodies is None:
            return None
        j = int(self.clearance_body[i, k])
        return self.bodies.bodies[j].name if j >= 0 else None

    def closest(self, i: int) -> int:
        """The configuration that comes closest for target ``i`` (the one every report,
        table and drawing of a failing target shows).

        The chosen configuration when there is one; for a target turned down by collisions
        the within-limit, allowed configuration with the larger clearance; otherwise the
        allowed configuration with the larger limit margin (the positive one on a tie).
        """
        c = int(self.chosen[i])
        if c >= 0:
            return c
        if int(self.status[i]) == Status.COLLISION:
            cands = [k for k in range(2) if bool(self.ik.ok[i, k]) and bool(self.collides[i, k])]
            if cands:
                return max(cands, key=lambda k: float(self.clearance[i, k]))
        m = [
            float(self.ik.limit_margin_deg[i, k]) if bool(self.ik.allowed[i, k]) else -np.inf
            for k in range(2)
        ]
        m = [-np.inf if np.isnan(v) else v for v in m]
        return 0 if m[0] >= m[1] else 1

    @property
    def closest_all(self) -> NDArray[np.int64]:
        """:meth:`closest` of every target at once, shape (N,)."""
        hit = self._closest
        if hit is not None:
            return hit
        n = len(self.target_ids)
        out = np.asarray(self.chosen, dtype=np.int64).copy()
        none = out < 0
        if none.any():
            ok = np.asarray(self.ik.ok, dtype=bool)
            col = (
                np.asarray(self.collides, dtype=bool)
                if self.collides.shape == (n, 2)
                else (np.zeros((n, 2), dtype=bool))
            )
            hits = ok & col
            clear = np.where(hits, np.nan_to_num(self.clearance, nan=-np.inf), -np.inf)
            by_hit = np.where(clear[:, 1] > clear[:, 0], 1, 0)
            m = np.where(
                np.asarray(self.ik.allowed, dtype=bool),
                np.nan_to_num(self.ik.limit_margin_deg, nan=-np.inf),
                -np.inf,
            )
            by_margin = np.where(m[:, 0] >= m[:, 1], 0, 1)
            collision = (np.asarray(self.status) == int(Status.COLLISION)) & hits.any(axis=1)
            out[none] = np.where(collision, by_hit, by_margin)[none]
        object.__setattr__(self, "_closest", out)
        return out

    def blocking_fixture(self, i: int) -> Fixture | None:
        """For a target turned down by collisions: the fixture hit by the configuration
        that comes closest (:meth:`closest`)."""
        if int(self.status[i]) != Status.COLLISION:
            return None
        return self.blocked_by(i, self.closest(i))

    def chosen_elbow(self, i: int) -> str | None:
        """Name of the chosen configuration, "both" at a singular pose, None when infeasible."""
        c = int(self.chosen[i])
        if c < 0:
            return None
        return "both" if bool(self.ik.singular[i]) else ELBOWS[c]


class EvaluationStore:
    """Caches shared by successive evaluations of a changing cell.

    Each entry is keyed by everything it depends on, so a reused entry is exactly what a
    fresh computation would give: moves (:class:`kinematics.moves.MoveCache`), arm spaces
    in the base frame, operating spaces, shared zones and the targets each arm could
    serve.
    """

    def __init__(self) -> None:
        from .moves import MoveCache

        self.moves = MoveCache()
        self.local_spaces: dict[tuple, Any] = {}
        self.operating: dict[str, tuple[tuple, Any]] = {}
        self.zones: dict[tuple, tuple[tuple, Any]] = {}
        self.serves: dict[str, tuple[tuple, Any]] = {}


@dataclass(frozen=True)
class CellEvaluation:
    """The engine's whole answer for one state of a cell.

    Per-arm target verdicts (``arms``) are computed when the evaluation is made; what
    costs more is computed on first use and kept: :meth:`moves` (clearance along every
    sequence move), :meth:`spaces` (maximum, restricted and operating spaces, shared
    zones), :meth:`shared_targets` and :meth:`interference` (the arms' cycles run
    together). Evaluations made with ``previous``
    (:func:`evaluate_cell`) share caches with it, so unchanged parts are never computed
    twice.
    """

    cell: Cell
    arms: dict[str, ArmEvaluation]
    store: EvaluationStore = field(default_factory=EvaluationStore, repr=False, compare=False)
    #: False while the sequences with speed data keep the one-configuration rule (drag steps).
    planned: bool = True
    _where: dict[str, tuple[str, int]] = field(default_factory=dict, repr=False, compare=False)
    _memo: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)

    def __post_init__(self) -> None:
        for arm_id, ev in self.arms.items():
            for i, tid in enumerate(ev.target_ids):
                self._where[tid] = (arm_id, i)

    def locate(self, target_id: str) -> tuple[ArmEvaluation, int]:
        """The arm evaluation holding a target and the target's index in it."""
        arm_id, i = self._where[target_id]
        return self.arms[arm_id], i

    def counts(self) -> tuple[int, int]:
        """(feasible, total) targets of the cell (targets of missing arms fail)."""
        ok = sum(int(np.count_nonzero(ev.feasible)) for ev in self.arms.values())
        return ok, len(self.cell.targets)

    def moves(self, polygons: bool = False, compute: bool = True) -> list[Any]:
        """Every sequence move (:class:`kinematics.sweep.MoveResult`), in sequence order.

        ``polygons`` also builds swept areas; with ``compute=False`` only moves already
        known for this state are returned (a quick look during a drag).
        """
        key = f"moves:{polygons}"
        if key in self._memo:
            return self._memo[key]
        found = self.store.moves.lookup(self.cell, self, polygons, compute=compute)
        out = [m for _k, m in found if m is not None]
        if compute or len(out) == len(found):
            self._memo[key] = out
        return out

    def spaces(self, operating: bool = True) -> Any:
        """Spaces of every arm and the shared zones (:class:`kinematics.spaces.CellSpaces`).

        With ``operating=False`` the operating spaces (unions of the moves' swept areas)
        and the zones made of them are left out: the rest is cheap enough for every step
        of a drag.
        """
        key = f"spaces:{operating}"
        if key not in self._memo:
            from .spaces import evaluation_spaces

            self._memo[key] = evaluation_spaces(self, operating)
        return self._memo[key]

    def interference(self) -> Any:
        """The arms running their planned cycles together
        (:class:`kinematics.interference.Interference`: contacts, smallest separation,
        shared-zone occupancy), from the shared zones of :meth:`spaces`, which are needed
        only when two or more arms run."""
        if "interference" not in self._memo:
            from .interference import cell_timelines, run_interference

            tls, skipped = cell_timelines(self.cell, self)
            zones = self.spaces().zones if len(tls) >= 2 else ()
            self._memo["interference"] = run_interference(tls, zones, None, skipped)
        return self._memo["interference"]

    def shared_targets(self) -> dict[str, tuple[str, ...]]:
        """Targets (of any arm) that two or more arms can reach clear of fixtures."""
        if "shared" not in self._memo:
            from .spaces import evaluation_shared_targets

            self._memo["shared"] = evaluation_shared_targets(self)
        return self._memo["shared"]


def choose_configuration(
    ok: NDArray[np.bool_],
    limit_margin_deg: NDArray[np.float64],
    clearance: NDArray[np.float64],
    link_width: float,
) -> tuple[NDArray[np.int64], NDArray[np.float64]]:
    """The chosen configuration per target and the scores (see the module docstring).

    Parameters
    ----------
    ok : ndarray of bool, shape (N, 2)
        Feasible configurations.
    limit_margin_deg, clearance : ndarray, shape (N, 2)
    link_width : float
        Twice the arm's smallest link radius.

    Returns
    -------
    chosen : ndarray of int, shape (N,)
        0, 1 or -1 when no configuration is feasible.
    score : ndarray, shape (N, 2)

    Examples
    --------
    Positive: 40 deg of margin but only 10 of clearance; negative: 15 deg and 200 (link
    width 40). Then both comfortable: the larger limit margin wins.

    >>> ok = np.array([[True, True], [True, True]])
    >>> chosen, score = choose_configuration(ok, np.array([[40.0, 15.0], [40.0, 15.0]]),
    ...                                      np.array([[10.0, 200.0], [90.0, 200.0]]), 40.0)
    >>> chosen.tolist(), score.round(3).tolist()
    ([1, 0], [[0.25, 1.0], [1.0, 1.0]])
    """
    m = np.nan_to_num(limit_margin_deg, nan=-np.inf)
    a = m / LIMIT_MARGIN_UNIT_DEG
    b = np.nan_to_num(clearance, nan=-np.inf) / link_width
    score = np.minimum(np.minimum(a, b), 1.0)
    s0, s1 = np.where(ok, score, -np.inf).T
    m0, m1 = np.where(ok, m, -np.inf).T
    second = (s1 > s0) | ((s1 == s0) & (m1 > m0))
    chosen = np.where(ok.any(axis=1), np.where(second, 1, 0), -1)
    return chosen.astype(np.int64), score


def evaluate_arm(
    arm: Arm,
    targets: Iterable[Target],
    fixtures: Iterable[Fixture] = (),
    margin: float = 0.0,
    bodies: ArmBodies | None = None,
    target_paths: Sequence[str] | None = None,
) -> ArmEvaluation:
    """Evaluate one arm at its base pose against its targets and the cell's fixtures.

    Parameters
    ----------
    arm : Arm
    targets : iterable of Target
    fixtures : iterable of Fixture, optional
        The cell's fixtures; those that block the arm (2.5-D rule) are checked against
        its bodies. Without fixtures only reach, limits and elbow setting count.
    margin : float, optional
        The cell's vertical clearance margin (:func:`kinematics.bodies.clearance_margin`).
    bodies : ArmBodies, optional
        Prebuilt bodies (default :func:`kinematics.bodies.arm_bodies`).
    target_paths : sequence of str, optional
        JSON paths of the targets, for messages about malformed ``work_height`` keys.

    Raises
    ------
    kinematics.bodies.BodyDataError
        When a body, height or margin key of the arm or a target is malformed.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    >>> ev = evaluate_arm(arm, [Target("t", "T", 480, 480, "a")])
    >>> bool(ev.feasible[0]), ev.reason(0)
    (False, 'beyond outer reach')

    A column across link 1 of the only configuration within limits (the negative one):

    >>> col = Fixture("c", "Column C1", "column", ((160, 220), (200, 220), (200, 260), (160, 260)))
    >>> arm = Arm("b", "B", 0, 0, 0, 400, 250, (0, 180), (-120, 120), link_radii=(20, 15))
    >>> ev = evaluate_arm(arm, [Target("t", "T", 450, 180, "b")], [col])
    >>> bool(ev.feasible[0]), ev.reason(0), ev.blocked_body(0, 1)
    (False, 'collides with Column C1', 'link 1')
    """
    targets = tuple(targets)
    fixtures = tuple(fixtures)
    xy = np.array([(t.x, t.y) for t in targets], dtype=float).reshape(-1, 2)
    ik = solve_arm(arm, xy[:, 0], xy[:, 1])
    n = len(targets)
    reach = ik.reachable[:, None] & np.ones((n, 2), dtype=bool)
    if fixtures and bodies is None:
        bodies = arm_bodies(arm)
    if not fixtures:
        bodies = None
    base_c, base_f = np.inf, -1
    if bodies is not None:
        base_c, base_f = base_clearance(
            bodies, FixtureSet.of(fixtures), link_blocking(arm, fixtures, margin)
        )
    if bodies is not None and n:
        wh = work_heights(targets, target_paths)
        res = arm_clearance(arm, fixtures, ik.q_deg, wh[:, None], margin, bodies)
        collides, clearance = res.collides, res.clearance
        c_fix, c_body = res.fixture, res.body
        width = 2.0 * bodies.min_link_radius
    else:
        collides = np.zeros((n, 2), dtype=bool)
        clearance = np.where(reach, np.inf, np.nan)
        c_fix = c_body = np.full((n, 2), -1, dtype=np.int64)
        width = 1.0
    ok = ik.ok & ~collides
    if base_c <= 0:
        ok = np.zeros_like(ok)  # a base inside a fixture fails every target of the arm
    feasible = ok.any(axis=-1)
    chosen, score = choose_configuration(ok, ik.limit_margin_deg, clearance, width)
    status = np.where(ik.feasible & ~feasible, int(Status.COLLISION), ik.status)
    if base_c <= 0:
        status = np.full(n, int(Status.BASE_OVERLAP))
    return ArmEvaluation(
        arm=arm,
        target_ids=tuple(t.id for t in targets),
        xy=xy,
        ik=ik,
        feasible=feasible,
        chosen=chosen,
        status=status.astype(np.int64),
        collides=collides,
        clearance=clearance,
        clearance_fixture=c_fix,
        clearance_body=c_body,
        score=score,
        fixtures=fixtures,
        bodies=bodies,
        base_clearance=float(base_c),
        base_fixture=int(base_f),
    )


def unify_sequences(ev: ArmEvaluation, sequences: Iterable[Sequence_]) -> ArmEvaluation:
    """Give every target of a sequence one configuration where one is feasible at all of them.

    Examples
    --------
    Two targets where both configurations fit, the first preferring "negative" and the
    second "positive": with a sequence over both, they share one configuration.

    >>> from kinematics.cell import Sequence as Seq
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150))
    >>> ts = [Target("p", "P", 300, 400, "a"), Target("q", "Q", 500, -100, "a")]
    >>> ev = evaluate_arm(arm, ts)
    >>> same = unify_sequences(ev, [Seq("a", ("p", "q"))])
    >>> len(set(same.chosen.tolist()))
    1
    """
    ok = ev.ik.ok & ~ev.collides if ev.collides.size else ev.ik.ok
    chosen = ev.chosen.copy()
    where = {tid: i for i, tid in enumerate(ev.target_ids)}
    for seq in sequences:
        if seq.arm != ev.arm.id:
            continue
        idx = np.array(sorted({where[t] for t in seq.targets if t in where}), dtype=np.int64)
        if idx.size < 2 or not ok[idx].any(axis=1).all():
            continue
        fits = ok[idx].all(axis=0)
        if not fits.any() or len(set(chosen[idx].tolist())) == 1:
            continue
        m = np.nan_to_num(ev.ik.limit_margin_deg[idx], nan=-np.inf)
        worst = [
            (ev.score[idx, k].min(), m[:, k].min()) if fits[k] else (-np.inf, -np.inf)
            for k in (0, 1)
        ]
        chosen[idx] = 1 if worst[1] > worst[0] else 0
    return replace(ev, chosen=chosen)


_IN_REACH: dict[tuple, tuple[tuple, tuple]] = {}


def fixtures_in_reach(bodies: ArmBodies, fixtures: Sequence[Fixture]) -> tuple[Fixture, ...]:
    """The fixtures some body of the arm could touch at some pose (in file order).

    A fixture counts when its bounding circle comes within the arm's reach of the base
    (:attr:`kinematics.bodies.ArmBodies.reach`): farther ones can neither collide nor be
    the nearest fixture of a collision, so clearances are measured to these only.

    Examples
    --------
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-180, 180), (-150, 150), link_radii=(20, 15))
    >>> near = Fixture("n", "Near", "column", ((600, 0), (640, 0), (640, 40), (600, 40)))
    >>> far = Fixture("f", "Far", "column", ((900, 0), (940, 0), (940, 40), (900, 40)))
    >>> [f.id for f in fixtures_in_reach(arm_bodies(arm), [near, far])]
    ['n']
    """
    fixtures = tuple(fixtures)
    if not fixtures:
        return ()
    fs = FixtureSet.of(fixtures)
    arm = bodies.arm
    d = np.hypot(fs.centre[:, 0] - arm.x, fs.centre[:, 1] - arm.y) - fs.radius
    keep = d <= bodies.reach
    if keep.all():
        return fixtures
    # The same selection as last time gives the same tuple (equal inputs stay identical).
    key = (id(fixtures), keep.tobytes())
    hit = _IN_REACH.get(key)
    if hit is not None and hit[0] is fixtures:
        return hit[1]
    out = tuple(f for f, k in zip(fixtures, keep) if k)
    if len(_IN_REACH) > 64:
        _IN_REACH.clear()
    _IN_REACH[key] = (fixtures, out)
    return out


def _arm_inputs(cell: Cell, arm: Arm, bodies: ArmBodies) -> tuple:
    """Everything one arm's evaluation depends on (equal inputs give an equal evaluation)."""
    return (
        arm,
        tuple(t for t in cell.targets if t.arm == arm.id),
        fixtures_in_reach(bodies, cell.fixtures),
        cell.extra.get("clearance_margin"),
        tuple(q for q in cell.sequences if q.arm == arm.id),
    )


def evaluate_cell_arm(
    cell: Cell,
    arm: Arm,
    inputs: tuple | None = None,
    bodies: ArmBodies | None = None,
    plans: bool = True,
) -> ArmEvaluation:
    """:func:`evaluate_arm` for one arm of a cell: its targets, the fixtures within its
    reach and the cell's margin, then one configuration per sequence where one fits, then
    (with ``plans``) the fastest plan for sequences with speed data.

    Messages about malformed keys name the file's JSON paths.
    """
    if bodies is None:
        i = next((k for k, a in enumerate(cell.arms) if a.id == arm.id), None)
        bodies = arm_bodies(arm, f"arms[{i}]" if i is not None else f"arms[id={arm.id!r}]")
    if inputs is None:
        inputs = _arm_inputs(cell, arm, bodies)
    picked = [(j, t) for j, t in enumerate(cell.targets) if t.arm == arm.id]
    ev = evaluate_arm(
        arm,
        [t for _, t in picked],
        inputs[2],
        clearance_margin(cell),
        bodies=bodies,
        target_paths=[f"targets[{j}]" for j, _ in picked],
    )
    if ev.bodies is None:
        ev = replace(ev, bodies=bodies)
    if not any(q.arm == arm.id for q in cell.sequences):
        return replace(ev, planned=True)
    # One configuration per sequence where one fits; then, for sequences with speed data,
    # the fastest plan (kinematics.plan) replaces that rule.
    ev = replace(unify_sequences(ev, cell.sequences), planned=False)
    return with_plans(cell, ev) if plans else ev


def with_plans(cell: Cell, ev: ArmEvaluation) -> ArmEvaluation:
    """An arm's evaluation with the fastest plans of its sequences applied (see
    :func:`evaluate_cell_arm`); the evaluation itself when it has them already."""
    if ev.planned:
        return ev
    return replace(apply_plans(ev, plan_arm(cell, ev)), planned=True)


def evaluate_cell(
    cell: Cell, previous: CellEvaluation | None = None, plans: bool = True
) -> CellEvaluation:
    """Evaluate every arm of a cell against the targets assigned to it and the fixtures.

    Parameters
    ----------
    cell : Cell
    previous : CellEvaluation, optional
        The evaluation of an earlier state of the same document: arms whose inputs (the
        arm, its targets and sequences, the fixtures within its reach, the margin) did not
        change are taken over as they are, and its caches (moves, spaces) are shared.
    plans : bool
        Plan the sequences with speed data (:mod:`kinematics.plan`). Without, those
        sequences keep the one-configuration rule: cheap enough for every step of a drag;
        the window plans once the changes pause, ``check`` always.

    Examples
    --------
    Moving one arm's base re-evaluates that arm only.

    >>> from dataclasses import replace as with_
    >>> a = Arm("a", "A", 0, 0, 0, 400, 250, (-170, 170), (-150, 150))
    >>> b = Arm("b", "B", 2000, 0, 0, 400, 250, (-170, 170), (-150, 150))
    >>> ts = (Target("p", "P", 300, 400, "a"), Target("q", "Q", 2300, 400, "b"))
    >>> one = evaluate_cell(Cell("c", arms=(a, b), targets=ts))
    >>> two = evaluate_cell(Cell("c", arms=(with_(a, x=10.0), b), targets=ts), previous=one)
    >>> two.arms["b"] is one.arms["b"], two.arms["a"] is one.arms["a"]
    (True, False)
    """
    store = previous.store if previous is not None else EvaluationStore()
    old = previous.arms if previous is not None else {}
    arms = {}
    for i, arm in enumerate(cell.arms):
        prev = old.get(arm.id)
        # The same arm object has the same bodies: skip building them again.
        if prev is not None and prev.arm is arm and prev.bodies is not None:
            bodies = prev.bodies
        else:
            bodies = arm_bodies(arm, f"arms[{i}]")
        inputs = _arm_inputs(cell, arm, bodies)
        if prev is not None and prev.inputs == inputs:
            arms[arm.id] = with_plans(cell, prev) if plans else prev
            continue
        ev = evaluate_cell_arm(cell, arm, inputs, bodies, plans)
        arms[arm.id] = replace(ev, inputs=inputs)
    return CellEvaluation(cell=cell, arms=arms, store=store, planned=plans)

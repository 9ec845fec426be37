"""The moves of a cell's sequences, each computed once per state of what it depends on.

Moves are expensive (the clearance along a joint path is sampled finely), so a
:class:`MoveCache` keeps every move keyed by everything it depends on: the arm, the
fixtures it can reach, the clearance margin, its two targets and the joint values at both
ends (a sequence with a plan, :mod:`kinematics.plan`, moves as the plan says; the others
between the configurations chosen at the targets). Successive evaluations of a changing
cell share one cache (:func:`kinematics.evaluate.evaluate_cell` passes it on), so a drag
recomputes only the moves it changes. Results are exactly those of
:func:`kinematics.plan.segment_move` and :func:`kinematics.sweep.sequence_moves`.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from .bodies import BodyDataError, clearance_margin
from .cell import Cell
from .sweep import MoveResult, sequence_moves

__all__ = ["MoveCache", "move_pairs"]


def move_pairs(cell: Cell, arms: Iterable[str] | None = None) -> list[tuple[str, str, str]]:
    """(arm, from, to) of every move of the cell's sequences, in order (sequences are cycles).

    Examples
    --------
    >>> from kinematics.cell import Sequence
    >>> move_pairs(Cell("c", sequences=(Sequence("a", ("p", "q", "r")),)))
    [('a', 'p', 'q'), ('a', 'q', 'r'), ('a', 'r', 'p')]
    """
    wanted = None if arms is None else set(arms)
    out = []
    for seq in cell.sequences:
        if wanted is not None and seq.arm not in wanted:
            continue
        ids = list(seq.targets)
        pairs = list(zip(ids[:-1], ids[1:]))
        if len(ids) > 1:
            pairs.append((ids[-1], ids[0]))
        out.extend((seq.arm, a, b) for a, b in pairs)
    return out


def _one_sequence(cell: Cell, seq: Any) -> Cell:
    """The cell with only one sequence (for the pairs of that sequence)."""
    return Cell(cell.name, sequences=(seq,))


def _end(ev: Any, tid: str) -> tuple[float, float] | None:
    if ev is None or tid not in ev.target_ids:
        return None
    i = ev.index(tid)
    ch = int(ev.chosen[i])
    if ch < 0:
        return None
    q = ev.ik.q_deg[i, ch]
    return (float(q[0]), float(q[1]))


class MoveCache:
    """Moves keyed by what they depend on; see the module docstring.

    Examples
    --------
    >>> from kinematics.cell import Arm, Sequence, Target
    >>> from kinematics.evaluate import evaluate_cell
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (-170, 170), (-150, 150), link_radii=(20, 15))
    >>> ts = (Target("p", "P", 300, 400, "a"), Target("q", "Q", 500, -100, "a"))
    >>> cell = Cell("c", arms=(arm,), targets=ts, sequences=(Sequence("a", ("p", "q")),))
    >>> cache = MoveCache()
    >>> [(m.from_id, m.to_id, m.collides) for m in cache.moves(cell, evaluate_cell(cell))]
    [('p', 'q', False), ('q', 'p', False)]
    >>> cache.computed
    2
    >>> _ = cache.moves(cell, evaluate_cell(cell)); cache.computed  # nothing changed
    2
    """

    def __init__(self) -> None:
        self._store: dict[tuple[str, str, str, bool], tuple[tuple, MoveResult]] = {}
        #: Moves computed so far (for tests of the cache).
        self.computed = 0

    def moves(
        self,
        cell: Cell,
        evaluation: Any,
        polygons: bool = False,
        arms: Iterable[str] | None = None,
    ) -> list[MoveResult]:
        """The moves of the cell's sequences (of ``arms`` only, when given), in order.

        ``evaluation`` supplies ``arms[arm_id]`` (an ``ArmEvaluation``) for each arm; a
        move with polygons also serves a request without them.
        """
        return [m for _key, m in self.lookup(cell, evaluation, polygons, arms) if m is not None]

    def lookup(
        self,
        cell: Cell,
        evaluation: Any,
        polygons: bool = False,
        arms: Iterable[str] | None = None,
        compute: bool = True,
    ) -> list[tuple[tuple[str, str, str], MoveResult | None]]:
        """((arm, from, to), move) for every move; with ``compute=False`` a move not yet
        stored for the current state is None instead of being computed (for drag steps)."""
        from .plan import segment_move, sequence_plan

        by_id = {t.id: t for t in cell.targets}
        try:
            margin: float | None = clearance_margin(cell)
        except BodyDataError:
            margin = None
        wanted = None if arms is None else set(arms)
        out: list[tuple[tuple[str, str, str], MoveResult | None]] = []
        n_moves = sum(len(q.targets) for q in cell.sequences)
        if len(self._store) > 4 * n_moves + 64:
            # Forget moves of renamed or removed targets and sequences.
            keep = {(arm_id, a, b) for arm_id, a, b in move_pairs(cell)}
            self._store = {k: v for k, v in self._store.items() if k[:3] in keep}
        for k, seq in enumerate(cell.sequences):
            if wanted is not None and seq.arm not in wanted:
                continue
            ev = evaluation.arms.get(seq.arm)
            if ev is None:
                continue
            plan = sequence_plan(ev, k)
            if plan is not None and plan.segments:
                # The fastest plan decides the moves (configurations and shoulder turns).
                steps = [(g.from_id, g.to_id, g) for g in plan.segments]
            else:
                steps = [(a, b, None) for _arm, a, b in move_pairs(_one_sequence(cell, seq))]
            for a, b, seg in steps:
                ends = (
                    (seg.path.q_from, seg.path.q_to)
                    if seg is not None
                    else (_end(ev, a), _end(ev, b))
                )
                sig = (ev.arm, ev.fixtures, margin, by_id.get(a), by_id.get(b), ends)
                hit = None
                for poly in (True, polygons):
                    entry = self._store.get((seq.arm, a, b, poly))
                    if entry is not None and entry[0] == sig:
                        hit = entry[1]
                        break
                if hit is None and compute:
                    if seg is not None:
                        hit = segment_move(cell, ev, seg, polygons)
                    else:
                        hit = sequence_moves(cell, evaluation, seq.arm, [a, b], False, polygons)[0]
                    self.computed += 1
                    self._store[(seq.arm, a, b, polygons)] = (sig, hit)
                out.append(((seq.arm, a, b), hit))
        return out

    def clear(self) -> None:
        """Forget every stored move."""
        self._store.clear()

"""Sequence edits as pure functions from cell to cell (no Qt).

A sequence is an arm's ordered list of target ids visited in one cycle (a target may be
visited more than once). An arm can have several sequences; they are addressed by their
position among the arm's own sequences (``number``, from 0). Editing a sequence an arm
does not have yet creates it.

Moving targets to another arm never drops them from a sequence silently: the caller says
what happens to their places (:data:`PLACES`).
"""

from __future__ import annotations

from collections.abc import Iterable
from collections.abc import Sequence as Seq
from dataclasses import replace

from kinematics.cell import Cell, Sequence
from kinematics.checks import choice_problem

__all__ = [
    "PLACES",
    "arm_sequences",
    "sequence_targets",
    "set_sequence",
    "append_targets",
    "remove_positions",
    "move_position",
    "reverse",
    "in_sequences",
    "reassign_targets",
]

#: What happens to a reassigned target's places in its old arm's sequences:
#: "end" moves it to the end of its new arm's first sequence, "drop" leaves it out.
PLACES = ("end", "drop")


def arm_sequences(cell: Cell, arm_id: str) -> list[int]:
    """Indices (in ``cell.sequences``) of the arm's sequences, in file order."""
    return [i for i, s in enumerate(cell.sequences) if s.arm == arm_id]


def sequence_targets(cell: Cell, arm_id: str, number: int = 0) -> tuple[str, ...]:
    """The target ids of one of the arm's sequences (empty when it has none)."""
    idx = arm_sequences(cell, arm_id)
    return cell.sequences[idx[number]].targets if number < len(idx) else ()


def set_sequence(cell: Cell, arm_id: str, ids: Seq[str], number: int = 0) -> Cell:
    """The cell with one of the arm's sequences holding ``ids``, in that order.

    A sequence emptied of every target is removed (an empty cycle has nothing to time);
    one the arm does not have is added after the others.

    Examples
    --------
    >>> c = Cell("c")
    >>> c = set_sequence(c, "a", ["t1", "t2"])
    >>> c.sequences
    (Sequence(arm='a', targets=('t1', 't2'), extra={}),)
    >>> set_sequence(c, "a", []).sequences
    ()
    """
    ids = tuple(ids)
    idx = arm_sequences(cell, arm_id)
    seqs = list(cell.sequences)
    if number < len(idx):
        i = idx[number]
        if ids:
            seqs[i] = replace(seqs[i], targets=ids)
        else:
            del seqs[i]
    elif ids:
        seqs.append(Sequence(arm=arm_id, targets=ids))
    return replace(cell, sequences=tuple(seqs))


def append_targets(
    cell: Cell, arm_id: str, ids: Iterable[str], number: int = 0
) -> tuple[Cell, list[str], list[str]]:
    """Add targets at the end of a sequence, in the order given (the click order).

    A target may be visited again (back to the same feeder for the next part); left out
    are another arm's targets, unknown ids and a visit that would repeat the one just
    before it (no move between them). Returns the cell, the ids added and those left out.

    Examples
    --------
    >>> from kinematics.cell import Target
    >>> c = Cell("c", targets=(Target("p", "P", 0, 0, "a"), Target("q", "Q", 1, 0, "a"),
    ...                        Target("r", "R", 2, 0, "b")))
    >>> c, added, skipped = append_targets(c, "a", ["q", "r", "p"])
    >>> sequence_targets(c, "a"), skipped
    (('q', 'p'), ['r'])
    >>> c, added, skipped = append_targets(c, "a", ["p", "q"])  # p again right after p
    >>> sequence_targets(c, "a"), skipped
    (('q', 'p', 'q'), ['p'])
    """
    own = {t.id for t in cell.targets if t.arm == arm_id}
    have = list(sequence_targets(cell, arm_id, number))
    added, skipped = [], []
    for tid in ids:
        last = (have + added)[-1] if have or added else None
        if tid in own and tid != last:
            added.append(tid)
        else:
            skipped.append(tid)
    if not added:
        return cell, added, skipped
    return set_sequence(cell, arm_id, have + added, number), added, skipped


def remove_positions(cell: Cell, arm_id: str, positions: Iterable[int], number: int = 0) -> Cell:
    """The sequence without the visits at these positions (from 0)."""
    gone = set(positions)
    ids = [t for k, t in enumerate(sequence_targets(cell, arm_id, number)) if k not in gone]
    return set_sequence(cell, arm_id, ids, number)


def move_position(cell: Cell, arm_id: str, src: int, dst: int, number: int = 0) -> Cell:
    """The visit at ``src`` moved so that it ends up at position ``dst``.

    Examples
    --------
    >>> c = set_sequence(Cell("c"), "a", ["t1", "t2", "t3"])
    >>> sequence_targets(move_position(c, "a", 0, 2), "a")
    ('t2', 't3', 't1')
    """
    ids = list(sequence_targets(cell, arm_id, number))
    if not (0 <= src < len(ids)):
        return cell
    item = ids.pop(src)
    ids.insert(max(0, min(dst, len(ids))), item)
    return set_sequence(cell, arm_id, ids, number)


def reverse(cell: Cell, arm_id: str, number: int = 0) -> Cell:
    """The sequence visited the other way round."""
    ids = sequence_targets(cell, arm_id, number)
    return set_sequence(cell, arm_id, ids[::-1], number)


def in_sequences(cell: Cell, target_ids: Iterable[str]) -> set[str]:
    """Which of these targets have a place in some sequence."""
    ids = set(target_ids)
    return {t for s in cell.sequences for t in s.targets if t in ids}


def reassign_targets(cell: Cell, ids: Iterable[str], arm_id: str, place: str = "drop") -> Cell:
    """The targets given to arm ``arm_id``; their places in other arms' sequences go, and
    with ``place="end"`` they are added at the end of the new arm's first sequence.

    Examples
    --------
    >>> from kinematics.cell import Target
    >>> c = Cell("c", targets=(Target("p", "P", 0, 0, "a"), Target("q", "Q", 1, 0, "b")))
    >>> c = set_sequence(set_sequence(c, "a", ["p"]), "b", ["q"])
    >>> moved = reassign_targets(c, ["p"], "b", place="end")
    >>> [(s.arm, s.targets) for s in moved.sequences]
    [('b', ('q', 'p'))]
    >>> [(s.arm, s.targets) for s in reassign_targets(c, ["p"], "b").sequences]
    [('b', ('q',))]
    """
    problem = choice_problem(place, PLACES)
    if problem is not None:
        raise ValueError(f"place {problem}, got {place!r}")
    ids = [t.id for t in cell.targets if t.id in set(ids) and t.arm != arm_id]
    if not ids:
        return cell
    moving = set(ids)
    targets = tuple(replace(t, arm=arm_id) if t.id in moving else t for t in cell.targets)
    placed = [t for t in ids if t in in_sequences(cell, moving)]
    seqs = []
    for s in cell.sequences:
        if s.arm != arm_id and moving & set(s.targets):
            kept = tuple(t for t in s.targets if t not in moving)
            if kept:
                seqs.append(replace(s, targets=kept))
        else:
            seqs.append(s)
    out = replace(cell, targets=targets, sequences=tuple(seqs))
    if place == "end" and placed:
        have = list(sequence_targets(out, arm_id))
        out = set_sequence(out, arm_id, have + [t for t in placed if t not in have])
    return out

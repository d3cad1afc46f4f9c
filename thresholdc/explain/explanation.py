"""Minimal explanations of a difference: the fewest input columns whose values force it.

Given a Boolean table ``diff`` over some discrete columns (True where the trained reading and
the rule disagree), an explanation is a set of columns with values such that *every*
assignment of the other columns disagrees.  :func:`smallest_forcing` searches the column sets
by size, smallest first, and returns the first that forces the difference (a smallest
explanation); when the search would exceed its work bound, it falls back to shrinking one
counterexample column by column (an irreducible explanation: no column can be freed).

>>> diff = np.zeros((2, 2, 2), dtype=bool)   # axes: columns a, b, c
>>> diff[:, 1, :] = True                     # every row with b = 1 disagrees
>>> smallest_forcing(diff)
({1: 1}, 'smallest')
"""

from __future__ import annotations

from collections.abc import Callable
from itertools import combinations
from typing import Any

import numpy as np

__all__ = ["smallest_forcing", "shrink"]

WORK_BOUND = 50_000_000  # table cells read by the size-ordered search before shrinking instead
STARTS = 64  # counterexamples shrunk when the search is cut off


def smallest_forcing(diff: np.ndarray) -> tuple[dict[int, int], str] | None:
    """A smallest set of axes with values on which ``diff`` is True for every value of the
    other axes; None when ``diff`` is nowhere True.

    Returns ``({axis: value}, kind)`` with ``kind`` ``"smallest"`` or ``"irreducible"``.
    """
    if not diff.any():
        return None
    k = diff.ndim
    work = 0
    for size in range(k + 1):
        for axes in combinations(range(k), size):
            work += diff.size
            if work > WORK_BOUND:
                return _best_shrink(diff), "irreducible"
            free = tuple(a for a in range(k) if a not in axes)
            forced = diff.all(axis=free) if free else diff
            if forced.any():
                at = np.unravel_index(int(np.argmax(forced)), forced.shape)
                return {a: int(v) for a, v in zip(axes, at)}, "smallest"
    raise AssertionError("a True cell forces itself")  # pragma: no cover


def _best_shrink(diff: np.ndarray) -> dict[int, int]:
    """The smallest of the irreducible explanations grown from up to :data:`STARTS`
    counterexamples (spread evenly over them), each shrunk in two column orders."""
    cells = np.flatnonzero(diff)
    picks = cells[np.linspace(0, len(cells) - 1, min(STARTS, len(cells))).astype(int)]
    best: dict[int, int] | None = None
    for cell in picks:
        point = [int(i) for i in np.unravel_index(int(cell), diff.shape)]
        for order in (range(diff.ndim), range(diff.ndim - 1, -1, -1)):
            found = _shrink_table(diff, point, order)
            if best is None or len(found) < len(best):
                best = found
    assert best is not None
    return best


def _shrink_table(diff: np.ndarray, point: list[int], order: Any) -> dict[int, int]:
    fixed = dict(enumerate(point))
    for axis in order:
        trial = {a: v for a, v in fixed.items() if a != axis}
        index = tuple(trial.get(a, slice(None)) for a in range(diff.ndim))
        if diff[index].all():
            fixed = trial
    return fixed


def shrink(point: dict[str, float], forces: Callable[[dict[str, float]], bool]) -> dict[str, float]:
    """Free the columns of a counterexample one at a time while ``forces`` still holds.

    >>> shrink({"a": 1, "b": 0, "c": 1}, lambda fixed: fixed.get("a") == 1)
    {'a': 1}
    """
    fixed = dict(point)
    for column in list(point):
        trial = {c: v for c, v in fixed.items() if c != column}
        if forces(trial):
            fixed = trial
    return fixed

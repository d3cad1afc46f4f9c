"""Exact feasibility of a small system of linear inequalities, in rational arithmetic.

Whether a Boolean function of a few variables is a threshold function is a yes/no question
about a linear program with a handful of columns and a few dozen rows (synth/identify.py).
HiGHS answers it in microseconds, but importing scipy's optimisers costs about a second, which
is most of a small compile.  :func:`feasible` answers the same question exactly, with
:class:`fractions.Fraction` inputs and integer row operations, no floating point: phase
one of the primal simplex method (only feasibility is asked, so there is no phase two), with
Bland's smallest-index rule, which cannot cycle, so the method ends after finitely many pivots
on every input.

Method.  Each bounded variable ``x_j ≥ lo_j`` becomes ``lo_j + z_j`` and each free one
``z⁺_j − z⁻_j`` (all ``z ≥ 0``); every row ``a·x ≤ b`` gets a slack, and a row whose
right-hand side is then negative is negated and gets an artificial variable instead of its
slack as the starting basic variable.  The simplex method minimises the sum of the artificial
variables; the system is feasible exactly when that minimum is 0.  An artificial variable that
leaves the basis is never brought back (it would only raise the sum).

>>> feasible([[1, 1], [-1, 0]], [4, -3], [0, 0])      # x + y ≤ 4, x ≥ 3, x, y ≥ 0
True
>>> feasible([[1, 0], [-1, 0]], [2, -3], [0, None])   # x ≤ 2 and x ≥ 3
False
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from fractions import Fraction

__all__ = ["feasible"]


def feasible(A: Sequence[Sequence[int | Fraction]], b: Sequence[int | Fraction],
             lower: Sequence[int | Fraction | None]) -> bool:
    """Whether some real ``x`` has ``A x ≤ b`` and ``x_j ≥ lower[j]`` (``None``: ``x_j``
    free), decided exactly.

    Parameters
    ----------
    A : rows of integers or fractions, shape (rows, columns)
    b : the right-hand sides, one per row
    lower : one lower bound per column, or ``None`` for a free variable

    Returns
    -------
    bool

    Examples
    --------
    >>> feasible([[1, -1]], [-1], [1, None])   # x − t ≤ −1 with x ≥ 1: t = x + 1
    True
    >>> feasible([[1]], [0], [1])              # x ≤ 0 with x ≥ 1
    False
    """
    rows = _integer_rows(A, b, lower)
    width = sum(1 if lo is not None else 2 for lo in lower)
    cols = width + len(rows)
    # rows [coefficients of z and the slacks..., right-hand side], each an integer multiple
    # (by a positive factor) of its row of the simplex tableau; the basic variable of row i
    # is its slack (index width + i) or, where the right-hand side was negative, its
    # artificial variable (index cols + i; its column is not stored)
    tableau: list[list[int]] = []
    basis: list[int] = []
    for i, (coefs, rest) in enumerate(rows):
        slack = [0] * len(rows)
        slack[i] = 1
        row = coefs + slack + [rest]
        if rest < 0:
            tableau.append([-a for a in row])
            basis.append(cols + i)
        else:
            tableau.append(row)
            basis.append(width + i)
    # the objective (the sum of the artificial variables) as a row in the same form: its
    # column entries are the negated reduced costs, its last entry the current sum
    objective = [sum(col) for col in zip(*(r for r, v in zip(tableau, basis, strict=True)
                                          if v >= cols), strict=True)] or [0] * (cols + 1)
    while objective[-1] > 0:
        # Bland: the smallest column whose reduced cost is negative enters
        entering = next((j for j in range(cols) if objective[j] > 0), -1)
        if entering < 0:
            return False  # the sum of the artificial variables is at its positive minimum
        leave = -1
        for i, row in enumerate(tableau):
            a = row[entering]
            if a > 0:
                if leave < 0:
                    leave = i
                    continue
                best = tableau[leave]
                # rhs_i / a against rhs_leave / a_leave (positive denominators)
                d = row[-1] * best[entering] - best[-1] * a
                if d < 0 or (d == 0 and basis[i] < basis[leave]):
                    leave = i
        assert leave >= 0, "phase one is bounded below by zero"
        _pivot(tableau, objective, leave, entering)
        basis[leave] = entering
    return True


def _integer_rows(A: Sequence[Sequence[int | Fraction]], b: Sequence[int | Fraction],
                  lower: Sequence[int | Fraction | None]) -> list[tuple[list[int], int]]:
    """Each row over the non-negative z columns (``x_j = lower_j + z_j``, free ``x_j = z⁺_j
    − z⁻_j``), scaled to integers: ``(coefficients, right-hand side)``."""
    out = []
    for row, bound in zip(A, b, strict=True):
        if len(row) != len(lower):
            raise ValueError("every row needs one coefficient per variable")
        if isinstance(bound, int) and all(isinstance(a, int) for a in row):
            ints: list[int] = []
            r = bound
            for a, lo in zip(row, lower, strict=True):
                if lo is None:
                    ints += [a, -a]  # type: ignore[list-item]
                else:
                    ints.append(a)  # type: ignore[arg-type]
                    r -= a * lo  # type: ignore[assignment]
            if isinstance(r, int):
                out.append((ints, r))
                continue
        coefs: list[Fraction] = []
        rest = Fraction(bound)
        for a, lo in zip(row, lower, strict=True):
            a = Fraction(a)
            if lo is None:
                coefs += [a, -a]
            else:
                coefs.append(a)
                rest -= a * lo
        scale = math.lcm(rest.denominator, *(a.denominator for a in coefs))
        out.append(([int(a * scale) for a in coefs], int(rest * scale)))
    return out


def _pivot(tableau: list[list[int]], objective: list[int], r: int, c: int) -> None:
    """Make column ``c`` basic in row ``r``: every other row (the objective too) loses its
    entry in column ``c`` by an integer row operation that keeps its factor positive; each
    changed row is divided by the greatest common divisor of its entries."""
    pivot_row = tableau[r]
    p = pivot_row[c]
    g = math.gcd(*pivot_row)
    if g > 1:
        tableau[r] = pivot_row = [a // g for a in pivot_row]
        p //= g
    nonzero = [j for j, a in enumerate(pivot_row) if a]
    for i, row in enumerate([*tableau, objective]):
        f = row[c]
        if i == r or not f:
            continue
        new = [a * p for a in row]
        for j in nonzero:
            new[j] -= f * pivot_row[j]
        g = math.gcd(*new)
        if g > 1:
            new = [a // g for a in new]
        if i < len(tableau):
            tableau[i] = new
        else:
            objective[:] = new

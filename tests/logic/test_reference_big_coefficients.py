"""Weighted comparisons near the largest allowed coefficient are evaluated exactly, and larger
ones are refused where they are written (DESIGN.md §3: integer coefficients)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from thresholdc.errors import RuleError
from thresholdc.logic.reference import evaluate
from thresholdc.syntax.parser import parse
from thresholdc.syntax.transform import MAX_COEFFICIENT

TOP = MAX_COEFFICIENT - 1  # the largest coefficient the language takes


@pytest.mark.parametrize(
    "terms,op,rhs",
    [
        ([TOP, -(TOP - 1)], ">=", 1),
        ([TOP, TOP, TOP, TOP], ">=", TOP),  # the sum passes 2^32: int32 would wrap
        ([-TOP, TOP, 1], ">=", 1),
        ([3, -TOP, TOP], "==", 3),
        ([TOP, TOP, 2], "!=", 2),
        ([5, 7], "<", -TOP),
    ],
)
def test_sums_are_exact(terms, op, rhs):
    names = [f"x{i}" for i in range(len(terms))]
    lhs = " + ".join(f"{c}*{n}" for c, n in zip(terms, names)).replace("+ -", "- ")
    prog = parse(f"input {', '.join(names)}\ny = {lhs} {op} {rhs}\n")
    X = np.array(list(itertools.product((0, 1), repeat=len(terms))))
    got = evaluate(prog, X)[:, 0]
    compare = {">=": int.__ge__, "==": int.__eq__, "!=": int.__ne__, "<": int.__lt__}[op]
    want = [compare(sum(c * int(x) for c, x in zip(terms, row)), rhs) for row in X]  # Python ints
    assert got.tolist() == want


@pytest.mark.parametrize(
    "text,column",
    [
        (f"y = {MAX_COEFFICIENT}*a + b >= 1", 5),
        ("y = a - 100000000000000000000*b >= 1", 9),
        (f"y = a + b >= {MAX_COEFFICIENT}", 14),
    ],
)
def test_too_large_numbers_are_refused_where_written(text, column):
    with pytest.raises(RuleError, match="too large") as info:
        parse(f"input a, b\n{text}\n", "big.rules")
    assert (info.value.line, info.value.column) == (2, column)

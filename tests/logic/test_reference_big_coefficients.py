"""Weighted comparisons with coefficients beyond 64-bit integers are evaluated exactly."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from thresholdc.logic.reference import evaluate
from thresholdc.syntax.parser import parse

BIG = 10**20


@pytest.mark.parametrize(
    "terms,op,rhs",
    [
        ([BIG, -(BIG - 1)], ">=", 1),
        ([2**63 - 1, 2**63 - 1], ">=", 1),  # int64 would wrap around on a + b
        ([2**62, 2**62], ">=", 2**63),
        ([-BIG, BIG, 1], ">=", 1),
        ([3, -BIG, BIG], "==", 3),
        ([2**61, 2**61, 2**61, 2**61], "!=", 2**63),
        ([5, 7], "<", BIG),  # a right side beyond 64 bits
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

"""The reference evaluator against sympy's logic module on random rule files."""

from __future__ import annotations

import functools
import itertools

import numpy as np
import sympy as sp
from hypothesis import given, settings

from tests.strategies import rule_cases
from thresholdc.logic.reference import evaluate
from thresholdc.syntax.parser import parse


class _Broadcasting:
    """numpy's logical_and/logical_or whose ``reduce`` also takes constants beside arrays.

    lambdify prints ``logical_or.reduce((x0, False))`` for some expressions, which numpy's own
    ``reduce`` refuses (a ragged tuple); folding pairwise broadcasts instead.
    """

    def __init__(self, ufunc: np.ufunc) -> None:
        self.ufunc = ufunc

    def __call__(self, *args):
        return self.ufunc(*args)

    def reduce(self, items):
        return functools.reduce(self.ufunc, [np.asarray(i) for i in items])


_MODULES = [
    {"logical_and": _Broadcasting(np.logical_and), "logical_or": _Broadcasting(np.logical_or)},
    "numpy",
]


def _sympy_table(case, X: np.ndarray) -> np.ndarray:
    """Every output of ``case`` on every row of X, computed by sympy."""
    symbols = [sp.Symbol(n) for n in case.inputs]
    columns = [X[:, j].astype(bool) for j in range(X.shape[1])]
    out = np.empty((X.shape[0], len(case.outputs)), dtype=bool)
    for i, name in enumerate(case.outputs):
        f = sp.lambdify(symbols, case.expected[name], _MODULES)
        out[:, i] = np.broadcast_to(np.asarray(f(*columns), dtype=bool), (X.shape[0],))
    return out


@settings(max_examples=60, deadline=None)
@given(rule_cases())
def test_reference_matches_sympy_on_every_row(case):
    program = parse(case.text)
    assert program.outputs == case.outputs
    X = np.array(list(itertools.product((0, 1), repeat=len(case.inputs))), dtype=np.int8)
    ours = evaluate(program, X)
    # sympy.logic as an independent evaluator
    theirs = _sympy_table(case, X)
    assert ours.shape == theirs.shape
    bad = np.nonzero((ours != theirs).any(axis=1))[0]
    assert bad.size == 0, f"rows differ, first {X[bad[0]].tolist()}:\n{case.text}"

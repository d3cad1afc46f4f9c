"""A ``simplify_support`` above what sympy simplifies in reasonable time is capped, with a note."""

from __future__ import annotations

import numpy as np

from thresholdc.logic.lower import MAX_SIMPLIFY_SUPPORT, lower_to_gates
from thresholdc.syntax.parser import parse


def _rules(n: int) -> str:
    names = [f"x{i}" for i in range(n)]
    left = " and ".join(names)
    right = " and ".join(names[:-1] + [f"not {names[-1]}"])
    return f"input {', '.join(names)}\noutput y\ny = ({left}) or ({right})\n"


def test_a_support_above_the_cap_is_capped_with_a_note():
    g = lower_to_gates(parse(_rules(10)), simplify_support=MAX_SIMPLIFY_SUPPORT + 2)
    assert any("capped at" in note for note in g.notes)
    assert any("kept 1" in note for note in g.notes)


def test_within_the_cap_the_definition_is_simplified_to_the_same_function():
    n = MAX_SIMPLIFY_SUPPORT
    g = lower_to_gates(parse(_rules(n)), simplify_support=n)
    assert not any("capped" in note for note in g.notes)
    assert any("simplified 1" in note for note in g.notes)
    X = ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)
    # Outside check: the rule is x0 and ... and x{n-2} (the last variable cancels).
    expected = X[:, : n - 1].all(axis=1)
    assert np.array_equal(g.simulate(X)[:, 0], expected)

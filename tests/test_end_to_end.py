"""Random rule files compiled end to end and compared row by row, on every assignment, with the
reference evaluator and with sympy's logic module as a second, independent evaluator
(# sympy.logic as an independent evaluator)."""

from __future__ import annotations

import itertools

import numpy as np
import sympy as sp
from hypothesis import HealthCheck, given, settings

from tests.strategies import rule_cases
from thresholdc.compiler import compile_source
from thresholdc.ir.network import check_network
from thresholdc.logic.source import source_from_text

SETTINGS = settings(max_examples=40, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])


def truth_table(n: int) -> np.ndarray:
    return np.array(list(itertools.product([0, 1], repeat=n)), dtype=np.uint8).reshape(-1, n)


def sympy_table(case, X: np.ndarray) -> np.ndarray:
    """The expected outputs from sympy, substituting every row (small tables only)."""
    symbols = [sp.Symbol(n) for n in case.inputs]
    cols = []
    for out in case.outputs:
        expr = case.expected[out]
        f = sp.lambdify(symbols, expr, modules=[{"And": np.logical_and}, "numpy"])
        vals = [f(*row) for row in X.astype(bool).tolist()]
        cols.append([bool(v) for v in vals])
    return np.array(cols, dtype=bool).T.reshape(len(X), len(case.outputs))


def check(case, **options) -> None:
    src = source_from_text(case.text, "random.rules")
    net = compile_source(src, verify="none", **options).network
    check_network(net)
    X = truth_table(len(src.inputs))
    got = net.decide(X.astype(float) if net.encoding == "binary" else 2.0 * X - 1.0)
    expected = src.evaluate(X)
    assert (got == expected).all(), case.text
    order = [case.outputs.index(o) for o in src.outputs]
    assert (expected == sympy_table(case, X)[:, order]).all(), case.text
    Z, _ = net.forward(X.astype(float))
    step = [j for j, n in enumerate(net.neurons) if n.activation == "step"]
    if step and options.get("activation", "step") == "step":
        assert np.abs(Z[:, step]).min() >= 0.5  # the margin guarantee of every step neuron


@SETTINGS
@given(rule_cases(max_inputs=8))
def test_random_rules_one_construction_per_gate(case):
    check(case, synthesis=False)


@SETTINGS
@given(rule_cases(max_inputs=8))
def test_random_rules_default_synthesis(case):
    check(case)


@SETTINGS
@given(rule_cases(max_inputs=7))
def test_random_rules_strict_layered(case):
    check(case, layered=True, simplify_support=0)

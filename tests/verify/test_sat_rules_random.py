"""SAT and local verification of random rule files, against exhaustive truth tables.

The rule files use every operator of the language (``tests/strategies.py``); the compiled
network (with and without synthesis) must be proven equal, and a network with one weight or
bias changed must be judged exactly as an exhaustive comparison judges it.
"""

from __future__ import annotations

import random
from dataclasses import replace

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

pytest.importorskip("pysat.solvers")

from tests.strategies import rule_cases  # noqa: E402
from thresholdc.compiler import compile_source  # noqa: E402
from thresholdc.logic.source import source_from_text  # noqa: E402
from thresholdc.verify.local import verify_local  # noqa: E402
from thresholdc.verify.sat import verify_sat  # noqa: E402


def truly_equal(net, src) -> bool:
    n = len(src.inputs)
    X = ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)
    perm = [list(src.inputs).index(u) for u in net.inputs]
    order = [list(src.outputs).index(o.name) for o in net.outputs]
    return bool(np.array_equal(net.decide(X[:, perm]), src.evaluate(X)[:, order]))


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(case=rule_cases(max_inputs=8, max_definitions=4), synthesis=st.booleans(),
       seed=st.integers(0, 10**6))
def test_random_rules_sat_and_local(case, synthesis, seed):
    src = source_from_text(case.text, "random.rules")
    net = compile_source(src, synthesis=synthesis, verify="none").network
    assert verify_sat(net, src, time_limit=30).result == "equal"
    assert verify_local(net, src).result == "equal"
    if not net.neurons:
        return
    rng = random.Random(seed)
    k = rng.randrange(len(net.neurons))
    n = net.neurons[k]
    n = replace(n, bias=n.bias + rng.choice((-1, 1)))
    bad = replace(net, neurons=net.neurons[:k] + (n,) + net.neurons[k + 1:])
    want = "equal" if truly_equal(bad, src) else "different"
    assert verify_sat(bad, src, time_limit=30).result == want
    assert verify_local(bad, src).result in (want, "undecided")

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
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

pytest.importorskip("pysat.solvers")

import sympy as sp  # noqa: E402

from tests.strategies import RuleCase, rule_cases  # noqa: E402
from thresholdc.compiler import compile_source  # noqa: E402
from thresholdc.logic.source import source_from_text  # noqa: E402
from thresholdc.verification.local import verify_local  # noqa: E402
from thresholdc.verification.sat import verify_sat  # noqa: E402


def truly_equal(net, src) -> bool:
    n = len(src.inputs)
    X = ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)
    perm = [list(src.inputs).index(u) for u in net.inputs]
    order = [list(src.outputs).index(o.name) for o in net.outputs]
    return bool(np.array_equal(net.decide(X[:, perm]), src.evaluate(X)[:, order]))


x0, x1 = sp.symbols("x0 x1")
#: Found with --hypothesis-seed=7: the mapping drops ``x0 xor x0``, so the cone of d0 has
#: leaves x1 and d0~1 only while the gate d0~2 still reads x0; the check over the leaves
#: failed and local answered "undecided" on an equal network.  It now checks such a cone
#: again over the primary inputs it depends on, and decides.
SEED7 = RuleCase("input x0, x1\nd0 = (not (x0 xor x0 xor x1 xor majority(x0, x1)))\n",
                 ("x0", "x1"), ("d0",),
                 {"d0": sp.Not(sp.Xor(x1, sp.And(x0, x1)))})


def wrong_outputs(net, src) -> set[str]:
    n = len(src.inputs)
    X = ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)
    perm = [list(src.inputs).index(u) for u in net.inputs]
    ref = src.evaluate(X)
    got = net.decide(X[:, perm])
    return {o.name for k, o in enumerate(net.outputs)
            if (got[:, k] != ref[:, list(src.outputs).index(o.name)]).any()}


#: Found by the derandomised CI profile: without synthesis the network is the input x0
#: itself, while the gate graph's d0 is an ite/and form of x0 that structural hashing does
#: not reduce; local now compares such an output with its unit over the primary inputs.
ITE_OF_X0 = RuleCase("input x0\nd0 = ((if majority(x0) then (x0 and x0) else (not x0)) and x0)\n",
                     ("x0",), ("d0",), {"d0": x0})


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@example(case=SEED7, synthesis=False, seed=0)
@example(case=SEED7, synthesis=True, seed=0)
@example(case=ITE_OF_X0, synthesis=False, seed=0)
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
    # Local proves neuron by neuron: a changed neuron whose change is masked further on is
    # not proven, so local may leave outputs undecided; what it decides must be right.
    local = verify_local(bad, src)
    assert local.result in (want, "undecided")
    wrong = wrong_outputs(bad, src)
    for o in local.outputs:
        assert o.verdict != "equal" or o.name not in wrong
        assert o.verdict != "different" or o.name in wrong

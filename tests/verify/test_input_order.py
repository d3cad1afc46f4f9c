"""A network whose inputs come in another order than the rules' is judged by name.

Every method must map the rules' input order to the network's (a permutation); a verifier
that dropped it would read the columns in the wrong order.  The functions here are not
symmetric in their inputs, so any mix-up changes the verdicts or the counts: each method's
per-output verdicts (and exact counts) must be those of the exhaustive check of the network
in the rules' own order.
"""

from __future__ import annotations

from dataclasses import replace

import pytest

from thresholdc.compiler import compile_source
from thresholdc.ir.network import Network
from thresholdc.ir.reference import Reference
from thresholdc.logic import source_from_text
from thresholdc.verification.auto import verify_network

TEXT = """input a, b, c, d, e
y = a and not b
z = atleast(2, b, c, d) and not a
w = (c -> d) xor e
"""
WRONG = TEXT.replace("atleast(2", "atleast(3").replace("a and not b", "a and not c")

METHODS = ["exhaustive", "bounds", "local", "sat", "auto"]


def reordered(net: Network, order: list[str]) -> Network:
    return replace(net, inputs=tuple(order))


@pytest.fixture(scope="module")
def nets():
    net = compile_source(source_from_text(TEXT, "t.rules"), verify="none").network
    assert list(net.inputs) == ["a", "b", "c", "d", "e"]
    return net, [reordered(net, ["e", "d", "c", "b", "a"]),
                 reordered(net, ["b", "a", "d", "e", "c"])]


@pytest.mark.parametrize("method", METHODS)
def test_equal_in_any_order(nets, method):
    if method == "sat":
        pytest.importorskip("pysat.solvers")
    src = source_from_text(TEXT, "t.rules")
    _, others = nets
    for net in others:
        assert verify_network(net, src, method=method).result == "equal"


@pytest.mark.parametrize("method", METHODS)
def test_differences_in_any_order(nets, method):
    if method == "sat":
        pytest.importorskip("pysat.solvers")
    src = source_from_text(WRONG, "w.rules")
    base, others = nets
    truth = verify_network(base, src, method="exhaustive")
    assert truth.verdicts() == {"y": "different", "z": "different", "w": "equal"}
    for net in others:
        rep = verify_network(net, src, method=method)
        assert rep.verdicts() == truth.verdicts()
        for o, t in zip(rep.outputs, truth.outputs):
            if o.exact:
                assert o.disagreements == t.disagreements
            for c in o.counterexamples:  # each counterexample, by name, really differs
                assert _differs(base, src, c)


def _differs(net: Network, src: Reference, c) -> bool:
    import numpy as np

    xs = np.array([[c.assignment[u] for u in src.inputs]], dtype=np.uint8)
    k = list(src.outputs).index(c.output)
    row = np.array([[c.assignment[u] for u in net.inputs]], dtype=float)
    j = net.output_names.index(c.output)
    # the value the report says the network gave is the network's value at that assignment
    assert float(net.evaluate(row)[0, j]) == pytest.approx(c.actual)
    return bool(src.evaluate(xs)[0, k]) == c.expected != bool(net.decide(row)[0, j])

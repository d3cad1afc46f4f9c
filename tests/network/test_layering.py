"""Layers and relays: the strict layered form computes the same function, one dense matrix per
layer, every output in the last layer."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from thresholdc.compiler import compile_rules
from thresholdc.ir.network import Network, Neuron, Output, check_network
from thresholdc.network.layering import assign_layers, fresh_name, insert_relays

RULES = [
    "input a, b, c\ny = (a and b) or c\nz = a\n",
    "input a, b, c, d\nx = a ^ b ^ c ^ d\ny = x and a\nz = not d\n",
    "input a, b\ny = if a then b else not b\nk = true\n",
    "input a, b, c, d, e\nm = majority(a, b, c, d, e) and (a ^ e)\nn = exactly(2, a, b, c)\n",
]


def table(n):
    return np.array(list(itertools.product([0, 1], repeat=n)), dtype=float)


@pytest.mark.parametrize("text", RULES)
def test_layered_form_is_strict_and_equal(text):
    flat = compile_rules(text)
    strict = compile_rules(text, layered=True)
    check_network(strict)
    assert strict.is_strict()
    X = table(len(flat.inputs))
    assert (strict.decide(X) == flat.decide(X)).all()
    # every layer is one dense matrix whose product reproduces the network
    values = X
    for W, b, activation in strict.dense_layers():
        assert activation == "step"
        values = ((values @ W.T + b) > 0).astype(float)
    order = [n.name for n in strict.neurons if n.layer == strict.depth]
    cols = [order.index(o.source) for o in strict.outputs]
    assert (values[:, cols] == strict.evaluate(X)).all()
    relays = [n for n in strict.neurons if n.role == "relay"]
    assert all("~" in n.name and n.weights == (1,) and n.bias == -0.5 for n in relays)


def test_outputs_that_are_inputs_are_relayed_to_the_last_layer():
    strict = compile_rules("input a, b\ny = a and b\nz = a\n", layered=True)
    src = {o.name: o.source for o in strict.outputs}
    assert src["z"].startswith("relay~a~")
    assert strict.neuron(src["z"]).layer == strict.depth


def test_assign_layers_counts_from_inputs():
    ns = assign_layers(
        [Neuron("p", 0, ("a",), (1,), -0.5), Neuron("q", 0, ("p", "a"), (1, 1), -1.5),
         Neuron("k", 0, (), (), 0.5)],
        ["a"],
    )
    assert [n.layer for n in ns] == [1, 2, 1]


def test_fresh_names_avoid_every_taken_name():
    taken = {"relay~a~1", "relay~a~1~2"}
    assert fresh_name("relay~a~1", taken) == "relay~a~1~3"


def test_relay_names_stay_unique_against_source_names():
    # a netlist may name a signal like a relay; helpers must not collide
    net = Network(
        ("a", "relay~a~1"),
        (Neuron("h", 1, ("a", "relay~a~1"), (1, 1), -1.5),
         Neuron("y", 2, ("h", "a"), (1, 1), -1.5)),
        (Output("y", "y"),),
    )
    strict = insert_relays(net)
    names = [n.name for n in strict.neurons] + list(strict.inputs)
    assert len(names) == len(set(names))
    X = table(2)
    assert (strict.decide(X) == net.decide(X)).all()

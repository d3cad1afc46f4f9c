"""One construction per gate: exact weights of the common settings, and exhaustive truth tables
of every gate construction (compared with GateGraph.simulate and with sums written here)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from thresholdc.compiler import compile_rules
from thresholdc.ir.gates import Gate, GateGraph
from thresholdc.ir.network import check_network
from thresholdc.synth.mapping import map_to_neurons


def table(n: int) -> np.ndarray:
    return np.array(list(itertools.product([0, 1], repeat=n)), dtype=np.uint8)


def only_neuron(text: str):
    net = compile_rules(text, synthesis=False)
    assert len(net.neurons) == 1, net.neurons
    return net.neurons[0]


# common practice (no source): AND 1, 1 / -1.5; OR 1, 1 / -0.5; NOT -1 / 0.5
def test_and_of_two_inputs_is_one_neuron_with_the_usual_weights():
    n = only_neuron("input a, b\ny = a and b\n")
    assert (n.inputs, n.weights, n.bias) == (("a", "b"), (1, 1), -1.5)


def test_or_of_two_inputs_is_one_neuron_with_the_usual_weights():
    n = only_neuron("input a, b\ny = a or b\n")
    assert (n.inputs, n.weights, n.bias) == (("a", "b"), (1, 1), -0.5)


def test_not_of_an_input_is_one_neuron_with_the_usual_weights():
    n = only_neuron("input a\ny = not a\n")
    assert (n.inputs, n.weights, n.bias) == (("a",), (-1,), 0.5)


@pytest.mark.parametrize("signs", list(itertools.product([False, True], repeat=4)))
def test_and_of_literals_has_unit_weights_and_bias_minus_p_plus_half(signs):
    # common practice: AND of n literals with p un-negated: weights ±1, bias -(p - 0.5)
    lits = [f"not x{i}" if neg else f"x{i}" for i, neg in enumerate(signs)]
    n = only_neuron("input x0, x1, x2, x3\ny = " + " and ".join(lits) + "\n")
    p = signs.count(False)
    assert n.weights == tuple(-1 if neg else 1 for neg in signs)
    assert n.bias == -(p - 0.5)


@pytest.mark.parametrize("k", range(0, 6))
def test_atleast_k_of_inputs_has_bias_minus_k_plus_half(k):
    text = f"input a, b, c, d, e\ny = atleast({k}, a, b, c, d, e)\n"
    net = compile_rules(text, synthesis=False)
    if k == 0:  # always true: a constant neuron
        assert net.neurons[0].inputs == () and net.neurons[0].bias == 0.5
    else:
        assert net.neurons[0].weights == (1,) * 5 and net.neurons[0].bias == -(k - 0.5)


def test_negation_inside_costs_no_neuron():
    net = compile_rules("input a, b, c\nt = not (a and b)\ny = t or c\n", synthesis=False,
                        simplify_support=0)
    # one neuron for the and, one for the or; the not is folded into the or's weights
    assert len(net.neurons) == 2
    y = net.neuron("y")
    assert y.weights[0] == -1 and y.bias == 0.5


def test_negated_output_gets_its_own_neuron():
    net = compile_rules("input a, b\nx = a and b\ny = not x\noutput x, y\n", synthesis=False)
    assert sorted(n.name for n in net.neurons) == ["x", "y"]
    y = net.neuron("y")
    assert y.weights == (-1, -1) and y.bias == 1.5


def test_xor_of_two_inputs_is_two_neurons():
    net = compile_rules("input a, b\ny = a ^ b\n", synthesis=False)
    assert len(net.neurons) == 2 and net.depth == 2


@pytest.mark.parametrize("n", [2, 3, 4, 5, 7, 8])
def test_parity_needs_one_neuron_per_bit_of_the_count(n):
    names = [f"x{i}" for i in range(n)]
    net = compile_rules(f"input {', '.join(names)}\ny = parity({', '.join(names)})\n",
                        synthesis=False)
    assert len(net.neurons) == (n).bit_length()
    X = table(n)
    assert (net.decide(X)[:, 0] == (X.sum(axis=1) % 2 == 1)).all()


GATES = [
    ("and", Gate("and", ("a", "b", "c")), lambda a, b, c: a & b & c),
    ("nand", Gate("nand", ("a", "b", "c")), lambda a, b, c: 1 - (a & b & c)),
    ("or", Gate("or", ("a", "b", "c")), lambda a, b, c: a | b | c),
    ("nor", Gate("nor", ("a", "b", "c")), lambda a, b, c: 1 - (a | b | c)),
    ("xor", Gate("xor", ("a", "b", "c")), lambda a, b, c: a ^ b ^ c),
    ("xnor", Gate("xnor", ("a", "b", "c")), lambda a, b, c: 1 - (a ^ b ^ c)),
    ("ite", Gate("ite", ("a", "b", "c")), lambda a, b, c: b if a else c),
    ("thr", Gate("threshold", ("a", "b", "c"), (3, -2, 1), 1),
     lambda a, b, c: int(3 * a - 2 * b + c >= 1)),
    ("eq", Gate("equal", ("a", "b", "c"), (2, 1, 1), 2), lambda a, b, c: int(2 * a + b + c == 2)),
    ("eq-low", Gate("equal", ("a", "b", "c"), (2, -1, 1), -1),
     lambda a, b, c: int(2 * a - b + c == -1)),
    ("eq-none", Gate("equal", ("a", "b"), (2, 2), 1), lambda a, b, c: 0),
]


@pytest.mark.parametrize("label,gate,fn", GATES, ids=[g[0] for g in GATES])
@pytest.mark.parametrize("negate_inputs", [False, True])
def test_every_gate_construction_is_exact(label, gate, fn, negate_inputs):
    inputs = ["a", "b", "c"]
    gates = []
    args = gate.args
    if negate_inputs:
        gates = [(f"n{a}", Gate("not", (a,))) for a in args]
        args = tuple(f"n{a}" for a in args)
    g = GateGraph.build(inputs, [("y", "y")], gates + [("y", Gate(gate.op, args, gate.weights,
                                                                   gate.threshold))])
    net = map_to_neurons(g)
    check_network(net)
    X = table(3)
    got = net.decide(X)[:, 0]
    assert (got == g.simulate(X)[:, 0]).all()
    src = 1 - X if negate_inputs else X
    want = np.array([fn(*map(int, row)) for row in src])  # 8 rows: an oracle written here
    assert (got == want.astype(bool)).all()
    Z, _ = net.forward(X)
    assert np.abs(Z).min() >= 0.5  # the margin guarantee


def test_shared_subterm_is_one_neuron():
    text = "input a, b, c, d\nx = (a and b) or c\ny = (a and b) or d\n"
    net = compile_rules(text, synthesis=False, simplify_support=0)
    assert len(net.neurons) == 3


def test_constant_output_is_a_constant_neuron():
    net = compile_rules("input a\ny = a and not a\nz = true\n", synthesis=False)
    assert net.evaluate([[0], [1]]).tolist() == [[0.0, 1.0], [0.0, 1.0]]
    assert all(n.inputs == () and n.layer == 1 for n in net.neurons)

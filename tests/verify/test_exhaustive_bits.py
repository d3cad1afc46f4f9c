"""Exhaustive verification on the bit-sliced path: the same values, margins and |z| checks as
the float path (``_output_margins``) on seeded random step networks, and the same verdicts and
disagreement counts as the reference evaluator of the rules."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

import thresholdc
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.logic import source_from_text
from thresholdc.verification.exhaustive import (
    _BitMargins,
    _output_margins,
    assignments,
    verify_exhaustive,
)


def _random_network(rng: np.random.Generator, n_in: int, n_neurons: int, *,
                    thin: bool) -> Network:
    """Random integer (or, with ``thin``, half-integer) weights and biases; outputs read
    neurons and one input unit."""
    names = [f"x{i}" for i in range(n_in)]
    layer = {n: 0 for n in names}
    neurons = []
    for j in range(n_neurons):
        k = int(rng.integers(1, 6))
        ins = tuple(str(s) for s in rng.choice(names, size=k))
        weights = tuple(float(w) for w in rng.integers(-7, 8, size=k))
        bias = float(rng.integers(-12, 12)) + 0.5
        if thin and j % 3 == 0:  # |z| may be 0 or 0.5 away from the guarantee
            weights = tuple(w / 2 for w in weights)
            bias = float(rng.integers(-6, 6))
        L = 1 + max(layer[i] for i in ins)
        neurons.append(Neuron(f"n{j}", L, ins, weights, bias))
        names.append(f"n{j}")
        layer[f"n{j}"] = L
    outs = tuple(Output(f"o{j}", n.name) for j, n in enumerate(neurons[-4:]))
    outs += (Output("raw", "x1"),)
    return Network(tuple(f"x{i}" for i in range(n_in)), tuple(neurons), outs)


@pytest.mark.parametrize("seed", range(8))
def test_bit_margins_equal_the_float_path_on_every_row(seed):
    rng = np.random.default_rng(seed)
    net = _random_network(rng, 10, 60, thin=seed % 2 == 1)
    plan = net.bit_plan
    assert plan is not None
    X = assignments(10, 0, 1 << 10)
    bits = _BitMargins(net, plan)
    values, margins, zmin = bits(X)
    v_old, m_old, z_old = _output_margins(net, X.astype(float))
    assert np.array_equal(values, v_old)
    assert np.array_equal(margins, m_old)
    # Neurons whose parameters guarantee |z| >= 0.5 report that bound; the others exactly.
    assert np.all(zmin <= z_old)
    assert np.array_equal(zmin < 0.5, z_old < 0.5)
    for j in bits.thin:
        assert zmin[bits.step.index(j)] == z_old[j]


def test_chunks_are_bounded_and_give_the_same_report():
    text = "input a, b, c, d, e, f, g, h\ny = atleast(3, a, b, c, d, e) xor (f and g) or h\n"
    src = source_from_text(text)
    net = thresholdc.compile_rules(text, verify="none")
    whole = verify_exhaustive(net, src)
    small = verify_exhaustive(net, src, chunk=64)  # four chunks
    assert whole.to_dict()["outputs"] == small.to_dict()["outputs"]
    assert whole.result == "equal"
    assert _BitMargins(net, net.bit_plan).rows_per_chunk(budget=2**16) * 8 <= 2**16 * 8


def _count_disagreements(net: Network, text: str) -> np.ndarray:
    """Disagreements per output from the rules' reference evaluator and Network.decide."""
    src = source_from_text(text)
    X = assignments(len(src.inputs), 0, 1 << len(src.inputs))
    perm = [list(src.inputs).index(u) for u in net.inputs]
    expected = np.asarray(src.evaluate(X), dtype=bool)
    return (net.decide(X[:, perm].astype(float)) != expected).sum(axis=0)


@pytest.mark.parametrize("shift", [1.0, -1.0, 2.0])
def test_counts_of_a_broken_network_match_the_reference_evaluator(shift):
    text = ("input a, b, c, d, e, f\nu = atleast(2, a, b, c)\nv = (d and not e) or f\n"
            "y = u xor v\nz = u and v or a\n")
    net = thresholdc.compile_rules(text, verify="none")
    j = max(range(len(net.neurons)), key=lambda i: len(net.neurons[i].inputs))
    broken = dataclasses.replace(net.neurons[j], bias=net.neurons[j].bias + shift)
    bad = dataclasses.replace(net, neurons=net.neurons[:j] + (broken,) + net.neurons[j + 1:])
    assert bad.bit_plan is not None
    report = verify_exhaustive(bad, source_from_text(text))
    counts = [o.disagreements for o in report.outputs]
    assert counts == _count_disagreements(bad, text).tolist()
    assert sum(counts) > 0 and report.result == "different"
    for o in report.outputs:  # every counterexample is one the rules and the network differ on
        for c in o.counterexamples:
            row = np.array([[c.assignment[u] for u in bad.inputs]], dtype=float)
            k = bad.output_names.index(o.name)
            assert bool(bad.decide(row)[0, k]) != c.expected


def test_thin_neurons_are_named_in_a_note():
    net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.0),), (Output("y", "y"),))
    report = verify_exhaustive(net, source_from_text("input a, b\ny = a and b\n"))
    assert net.bit_plan is not None
    assert any("y" in note and "|z| < 0.5" in note for note in report.notes)
    assert report.outputs[0].min_margin == 0.0

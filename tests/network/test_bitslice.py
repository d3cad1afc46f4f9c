"""The bit-sliced evaluator and the chunked float path against the float evaluator and the
reference evaluator (exhaustive truth tables where inputs allow, else seeded random rows)."""

from __future__ import annotations

import numpy as np
import pytest

import thresholdc
from tests.verify.threshold_builders import load_gen_circuits
from thresholdc.ir.bitslice import BitPlan
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.logic import source_from_text

gc = load_gen_circuits()


def _float_decide(net: Network, X: np.ndarray) -> np.ndarray:
    """The one-product-per-layer float evaluator, on all rows at once."""
    _, V = net.run_units(X)
    return (V[net._output_rows] > net.decision_threshold).T


def _all_rows(n: int) -> np.ndarray:
    return ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(float)


def _random_network(rng: np.random.Generator, n_in: int, n_neurons: int) -> Network:
    """Random integer weights (negative, zero, repeated sources) and half-integer biases."""
    names = [f"x{i}" for i in range(n_in)]
    layer = {n: 0 for n in names}
    neurons = []
    for j in range(n_neurons):
        k = int(rng.integers(1, 6))
        ins = tuple(rng.choice(names, size=k))  # repeats allowed: they add up
        weights = tuple(int(w) for w in rng.integers(-7, 8, size=k))
        bias = float(rng.integers(-12, 12)) + 0.5
        name = f"n{j}"
        L = 1 + max(layer[i] for i in ins)
        neurons.append(Neuron(name, L, ins, weights, bias))
        names.append(name)
        layer[name] = L
    outs = tuple(Output(f"o{j}", n.name) for j, n in enumerate(neurons[-4:]))
    return Network(tuple(f"x{i}" for i in range(n_in)), tuple(neurons), outs)


@pytest.mark.parametrize("seed", range(6))
def test_random_step_networks_exhaustively_against_the_float_evaluator(seed):
    rng = np.random.default_rng(seed)
    net = _random_network(rng, 9, 40)
    X = _all_rows(9)
    plan = net._bit_plan
    assert plan is not None
    assert np.array_equal(plan.decide(X), _float_decide(net, X))
    assert np.array_equal(net.decide(X), _float_decide(net, X))


def test_half_integer_weights_and_constant_neurons():
    net = Network(
        ("a", "b"),
        (Neuron("h", 1, ("a", "b"), (0.5, 0.5), -0.75 + 0.25),  # a and b (sum 1 > 0.5)
         Neuron("t", 1, ("a",), (0,), 0.5),  # always on
         Neuron("f", 1, ("a",), (0,), -0.5),  # always off
         Neuron("m", 2, ("h", "t", "f"), (1, 1, 1), -1.5)),
        (Output("h", "h"), Output("t", "t"), Output("f", "f"), Output("m", "m"), Output("a", "a")),
    )
    X = _all_rows(2)
    assert net._bits_for(X) is not None
    assert np.array_equal(net.decide(X), _float_decide(net, X))
    assert net.decide(X)[:4].tolist() == [
        [False, True, False, False, False], [False, True, False, False, True],
        [False, True, False, False, False], [True, True, False, True, True]]


def test_a_parameter_off_the_half_grid_falls_back_to_floats():
    assert BitPlan.build(("a",), [("n", 1, ("a",), (0.3,), -0.1)], ["n"]) is None


def test_chunks_of_any_size_give_the_same_answer():
    rng = np.random.default_rng(7)
    net = _random_network(rng, 9, 30)
    X = _all_rows(9)
    expected = _float_decide(net, X)
    for budget in (1, 200, 4096, 10**6):  # 1 byte still runs 64-row chunks
        assert np.array_equal(net._bit_plan.decide(X, budget=budget), expected)


@pytest.mark.parametrize("text", [gc.adder(4), gc.comparator(4), gc.parity(8)])
def test_compiled_netlists_exhaustively_against_the_netlist_itself(text):
    source = source_from_text(text, "c.bench")
    net = thresholdc.compile_source(source).network
    X = _all_rows(len(net.inputs))
    assert net._bit_plan is not None
    assert np.array_equal(net.decide(X), source.evaluate(X))
    assert np.array_equal(net.evaluate(X), source.evaluate(X).astype(float))


def test_a_multiplier_on_seeded_random_rows_against_integer_arithmetic():
    n = 6
    source = source_from_text(gc.multiplier(n), "m.bench")
    net = thresholdc.compile_source(source).network
    rng = np.random.default_rng(3)
    X = rng.integers(0, 2, size=(3000, len(net.inputs))).astype(float)
    got = net.decide(X)
    col = {name: i for i, name in enumerate(net.inputs)}
    a = sum(X[:, col[f"a{i}"]].astype(int) << i for i in range(n))
    b = sum(X[:, col[f"b{i}"]].astype(int) << i for i in range(n))
    names = [o.name for o in net.outputs]
    p = sum(got[:, names.index(f"p{i}")].astype(int) << i for i in range(2 * n))
    assert np.array_equal(p, a * b)  # plain integer multiplication as the outside check


def test_non_binary_rows_use_the_float_path():
    net = Network(("a",), (Neuron("n", 1, ("a",), (1,), -0.5),), (Output("n", "n"),))
    X = np.full((100, 1), 0.7)
    assert net._bits_for(X) is None
    assert net.decide(X).all()


@pytest.mark.parametrize("weight", [1, 0.3])  # 0.3 is off the half grid: the float path
def test_memory_stays_bounded_whatever_the_row_count(weight):
    import tracemalloc

    names = [f"x{i}" for i in range(8)]
    neurons = [Neuron(f"n{j}", 1, (names[j % 8], names[(j + 3) % 8]), (weight, -1), 0.5)
               for j in range(300)]
    net = Network(tuple(names), tuple(neurons), (Output("o", "n0"),))
    X = np.random.default_rng(5).integers(0, 2, size=(200_000, 8)).astype(float)
    net.decide(X[:10])  # plans built outside the measurement
    tracemalloc.start()
    got = net.decide(X)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    # All units at once would hold 308 x 200,000 floats (246 MB in float32, 493 MB in float64).
    assert peak < 100 * 2**20
    expected = weight * X[:, 0] - X[:, 3] + 0.5 > 0
    assert np.array_equal(got[:, 0], expected)

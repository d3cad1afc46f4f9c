"""The exact ReLU form (thresholdc.network.relu): equal to the step network on every input."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tests.network.step_networks import all_rows, full_adder, random_step_network
from thresholdc.ir.network import Network, Neuron, Output, check_network
from thresholdc.network.fileformat import dumps, loads
from thresholdc.network.relu import to_relu
from thresholdc.network.soften import apply_activation


def dense_eval(net: Network, X: np.ndarray) -> np.ndarray:
    """Evaluate ``net.dense_layers()`` with plain numpy, independently of Network.forward."""
    h = X
    for W, b, activation in net.dense_layers():
        z = h @ W.T + b
        h = np.maximum(z, 0.0) if activation == "relu" else z
    return h


def test_and_pair_and_output_unit() -> None:
    net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
                  (Output("y", "y"),))
    r = to_relu(net)
    pos, neg, out = r.neurons
    # step(z) = ReLU(z + 1/2) - ReLU(z - 1/2) on |z| >= 1/2
    assert (pos.weights, pos.bias, pos.activation) == ((1.0, 1.0), -1.0, "relu")
    assert (neg.weights, neg.bias, neg.activation) == ((1.0, 1.0), -2.0, "relu")
    assert (out.inputs, out.weights, out.bias, out.activation) == (
        (pos.name, neg.name), (1.0, -1.0), 0.0, "linear")
    assert r.outputs == (Output("y", out.name),)
    assert r.evaluate(all_rows(2)).ravel().tolist() == [0.0, 0.0, 0.0, 1.0]


def test_reader_absorbs_the_subtraction() -> None:
    net = full_adder()
    r = to_relu(net)
    s_pos = r.neuron("sum~pos")
    assert s_pos.inputs == ("a", "b", "cin", "carry~pos", "carry~neg")
    assert s_pos.weights == (1.0, 1.0, 1.0, -2.0, 2.0)
    # carry is an output and read by sum: it keeps its pair and gets a linear unit
    assert r.neuron("carry~out").inputs == ("carry~pos", "carry~neg")
    X = all_rows(3)
    assert np.array_equal(r.evaluate(X), net.evaluate(X))


@given(seed=st.integers(0, 100_000))
@settings(max_examples=40, deadline=None)
def test_relu_equals_step_exactly(seed: int) -> None:
    net = random_step_network(seed)
    X = all_rows(len(net.inputs))
    expect = net.evaluate(X)
    for layered in (False, True):
        r = to_relu(net, layered=layered)
        check_network(r)
        assert r.output_names == net.output_names and r.inputs == net.inputs
        assert np.array_equal(r.evaluate(X), expect)
        assert {n.activation for n in r.neurons} <= {"relu", "linear"}


@given(seed=st.integers(0, 100_000))
@settings(max_examples=40, deadline=None)
def test_layered_relu_is_a_dense_mlp(seed: int) -> None:
    net = random_step_network(seed)
    r = apply_activation(net, activation="relu", layered=True)
    assert r.is_strict()
    layers = r.dense_layers()
    assert [a for _, _, a in layers] == ["relu"] * (len(layers) - 1) + ["linear"]
    X = all_rows(len(net.inputs))
    assert np.array_equal(dense_eval(r, X), net.evaluate(X))


@given(seed=st.integers(0, 100_000))
@settings(max_examples=30, deadline=None)
def test_relays_carry_one_unit_with_values_zero_or_one(seed: int) -> None:
    net = random_step_network(seed)
    r = to_relu(net, layered=True)
    X = all_rows(len(net.inputs))
    _, A = r.forward(X)
    relays = [j for j, n in enumerate(r.neurons) if n.role == "relay" and n.activation == "relu"]
    for j in relays:
        n = r.neurons[j]
        assert len(n.inputs) in (1, 2) and n.bias == 0.0
        assert "~neg" not in n.name and n.name.startswith("relay~")
        assert set(np.unique(A[:, j])) <= {0.0, 1.0}
    # no relay reads another relay's negative twin: every pair unit is read at its own layer
    layer = {n.name: n.layer for n in r.neurons}
    for n in r.neurons:
        for i in n.inputs:
            if i.endswith("~pos") or i.endswith("~neg"):
                assert layer[i] == n.layer - 1


def test_helper_names_are_unique_against_existing_names() -> None:
    net = Network(
        ("a", "b"),
        (
            Neuron("y~pos", 1, ("a", "b"), (1, 1), -0.5, origin="z"),
            Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),
            Neuron("z", 2, ("y", "y~pos"), (1, 1), -0.5, origin="z"),
        ),
        (Output("y", "y"), Output("z", "z"), Output("relay~a~1", "a")),
    )
    for layered in (False, True):
        r = to_relu(net, layered=layered)
        names = [n.name for n in r.neurons]
        assert len(names) == len(set(names))
        assert not set(names) & {"a", "b", "y~pos", "y", "z", "relay~a~1"}
        assert all("~" in n for n in names)
        X = all_rows(2)
        assert np.array_equal(r.evaluate(X), net.evaluate(X))


def test_outputs_sharing_a_source_and_an_input_output() -> None:
    net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -0.5, origin="y"),),
                  (Output("y", "y"), Output("also", "y"), Output("a_out", "a")))
    flat = to_relu(net)
    assert flat.outputs[0].source == flat.outputs[1].source
    assert flat.outputs[2].source == "a"
    lay = to_relu(net, layered=True)
    assert lay.is_strict()
    assert lay.outputs[0].source == lay.outputs[1].source
    a_out = lay.neuron(lay.outputs[2].source)
    assert a_out.role == "relay" and a_out.activation == "linear"
    X = all_rows(2)
    assert np.array_equal(lay.evaluate(X), net.evaluate(X))
    assert np.array_equal(flat.evaluate(X), net.evaluate(X))


def test_roles_and_origins() -> None:
    net = Network(("a", "b", "c"),
                  (Neuron("h", 1, ("a", "b"), (1, 1), -1.5, origin="y"),
                   Neuron("y", 2, ("h", "c"), (1, 1), -0.5, origin="y")),
                  (Output("y", "y"),))
    r = to_relu(net, layered=True)
    assert r.neuron("h~pos").role == "gate" and r.neuron("h~pos").origin == "y"
    relay = r.neuron("relay~c~1")
    assert relay.role == "relay" and relay.origin == "y" and relay.inputs == ("c",)
    assert r.neuron("y~out").role == "gate"


def test_constant_neuron() -> None:
    net = Network(("a",), (Neuron("t", 1, (), (), 0.5, origin="t"),
                           Neuron("y", 2, ("a", "t"), (1, 1), -1.5, origin="y")),
                  (Output("t", "t"), Output("y", "y")))
    X = all_rows(1)
    for layered in (False, True):
        assert np.array_equal(to_relu(net, layered=layered).evaluate(X), net.evaluate(X))


def test_deterministic_and_input_untouched() -> None:
    net = random_step_network(42, n_inputs=6)
    before = dumps(net)
    assert dumps(to_relu(net, layered=True)) == dumps(to_relu(random_step_network(42,
                                                                               n_inputs=6),
                                                              layered=True))
    assert dumps(net) == before
    assert loads(dumps(to_relu(net))) == to_relu(net)


@pytest.mark.parametrize("layered", [False, True])
def test_apply_activation_relu(layered: bool) -> None:
    net = full_adder()
    r = apply_activation(net, activation="relu", layered=layered)
    if layered:
        assert r.is_strict() and r.dense_layers()[-1][2] == "linear"
    X = all_rows(3)
    assert np.array_equal(r.evaluate(X), net.evaluate(X))
    assert "certificate" not in r.meta


def real_network() -> Network:
    """A typed network: ``hot = t > 3`` (scale 0.25), ``y = hot and b``, and ``far`` reading
    the real unit again in layer 2 (so the layered form must relay it)."""
    features = ({"name": "t", "kind": "real", "units": ["t"], "range": None, "scale": 0.25},
                {"name": "b", "kind": "bool", "units": ["b"]})
    return Network(
        ("t", "b"),
        (Neuron("hot", 1, ("t",), (1.0,), -3.0, origin="hot"),
         Neuron("y", 2, ("hot", "b"), (1.0, 1.0), -1.5, origin="y"),
         Neuron("far", 2, ("t", "hot"), (1.0, 1.0), -5.0, origin="far")),
        (Output("y", "y"), Output("far", "far")),
        features=features,
    )


@pytest.mark.parametrize("layered", [False, True])
def test_real_units_exact_at_least_a_scale_from_the_threshold(layered: bool) -> None:
    net = real_network()
    r = to_relu(net, layered=layered)
    # every t at least 0.25 (the scale) from the thresholds 3 (hot) and 4 / 5 (far)
    t = np.array([-40.0, -1.0, 0.0, 2.75, 3.25, 3.5, 4.5, 5.25, 6.0, 60.0])
    X = np.array([[v, b] for v in t for b in (0.0, 1.0)])
    assert np.array_equal(r.evaluate(X), net.evaluate(X))
    if layered:
        assert r.is_strict()
        assert {"relay~t~1~pos", "relay~t~1~neg"} <= {n.name for n in r.neurons}
    # nearer to the threshold than the scale the pair ramps between 0 and 1
    mid = r.evaluate(np.array([[3.125, 1.0]]))[0, 0]
    assert 0.0 < mid < 1.0

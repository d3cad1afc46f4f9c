"""The dense layered form shared by the exports, and rebuilding a network from layers."""

from __future__ import annotations

import numpy as np
import pytest

from tests.export._export_nets import all_rows, full_adder, mlp_forward, random_network, strict_xor
from thresholdc.errors import UsageError
from thresholdc.export.dense import dense_form, network_from_layers
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.network.soften import apply_activation


def test_last_layer_rows_follow_output_order_with_repeats():
    net = strict_xor()
    form = dense_form(net)
    W2, b2, f2 = form.layers[-1]
    # Two outputs read "x": its row twice; "nand" is read by no output and is dropped.
    assert W2.tolist() == [[1.0, 1.0], [1.0, 1.0]]
    assert b2.tolist() == [-0.5, -0.5]
    assert form.names[-1] == ["x", "x~2"]
    assert form.names[0] == ["xor~1", "xor~2"]
    assert form.outputs == ("x", "same_x")


def test_dense_form_computes_the_network_on_every_row():
    net = strict_xor()
    X = all_rows(2)
    got = mlp_forward(dense_form(net).layers, X)
    assert got.tolist() == net.evaluate(X).tolist()
    assert got[:, 0].tolist() == [0.0, 1.0, 1.0, 0.0]  # XOR truth table


def test_non_strict_step_network_is_layered_with_relays():
    net = full_adder()
    assert not net.is_strict()
    form = dense_form(net)
    X = all_rows(3)
    assert mlp_forward(form.layers, X).tolist() == net.evaluate(X).tolist()
    # sum = a + b + cin - 2 carry: the binary full adder's truth table (common practice)
    total = X.sum(axis=1)
    assert net.evaluate(X)[:, 0].tolist() == (total % 2).tolist()
    assert any(r == "relay" for r in form.roles[-1] + form.roles[0])


@pytest.mark.parametrize("seed", range(8))
def test_random_step_networks_keep_their_function(seed):
    net = random_network(seed, n_inputs=5, n_neurons=8)
    X = all_rows(5)
    assert np.array_equal(mlp_forward(dense_form(net).layers, X), net.evaluate(X))


def test_output_reading_an_input_gets_a_relay_row():
    net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),),
                  (Output("y", "y"), Output("a_again", "a")))
    form = dense_form(net)
    assert form.layers[-1][0].shape == (2, 2)
    X = all_rows(2)
    assert mlp_forward(form.layers, X).tolist() == net.evaluate(X).tolist()


def test_network_without_neurons_gets_one_relay_layer_binary_and_bipolar():
    net = Network(("a", "b"), (), (Output("b", "b"), Output("a", "a")))
    form = dense_form(net)
    X = all_rows(2)
    assert mlp_forward(form.layers, X).tolist() == X[:, [1, 0]].tolist()
    bip = Network(("a", "b"), (), (Output("b", "b"),), {}, "bipolar")
    Xb = all_rows(2, bipolar=True)
    assert mlp_forward(dense_form(bip).layers, Xb, bipolar=True).tolist() == Xb[:, [1]].tolist()


def test_bipolar_step_network_relays_keep_the_sign():
    net = apply_activation(full_adder(), encoding="bipolar")
    assert not net.is_strict()
    X = all_rows(3, bipolar=True)
    got = mlp_forward(dense_form(net).layers, X, bipolar=True)
    assert got.tolist() == net.evaluate(X).tolist()


def test_soft_network_that_is_not_strict_is_refused():
    net = apply_activation(full_adder(), activation="sigmoid")
    with pytest.raises(UsageError, match="--layered"):
        dense_form(net)


def test_soft_layered_network_round_trips_through_layers_with_like():
    net = apply_activation(full_adder(), activation="sigmoid", layered=True)
    form = dense_form(net)
    X = all_rows(3)
    np.testing.assert_allclose(mlp_forward(form.layers, X), net.evaluate(X), atol=1e-12)
    back = network_from_layers(form.layers, like=net)
    assert back.is_strict()
    assert [n.name for n in back.neurons] == [x for names in form.names for x in names]
    assert back.output_names == net.output_names
    np.testing.assert_allclose(back.evaluate(X), net.evaluate(X), atol=1e-12)
    relay = [n for n in back.neurons if n.role == "relay"]
    assert relay and all(n.origin is not None for n in relay)


def test_widened_hidden_layer_gets_helper_names():
    net = strict_xor()
    (W1, b1, f1), (W2, b2, f2) = dense_form(net).layers
    # One extra hidden unit that the output ignores.
    W1w = np.vstack([W1, [[0.3, 0.2]]])
    b1w = np.append(b1, 0.1)
    W2w = np.hstack([W2, np.zeros((2, 1))])
    back = network_from_layers([(W1w, b1w, f1), (W2w, b2, f2)], like=net)
    assert [n.name for n in back.neurons[:3]] == ["L1~1", "L1~2", "L1~3"]
    assert [n.role for n in back.neurons[:3]] == ["extra"] * 3
    assert [o.source for o in back.outputs] == ["x", "x~2"]
    X = all_rows(2)
    assert back.evaluate(X).tolist() == net.evaluate(X).tolist()


def test_shape_mismatch_names_the_layer():
    net = strict_xor()
    (W1, b1, f1), (W2, b2, f2) = dense_form(net).layers
    with pytest.raises(UsageError, match="layer 1 reads 3 columns but there are 2 input units"):
        network_from_layers([(np.zeros((2, 3)), b1, f1), (W2, b2, f2)], like=net)
    with pytest.raises(UsageError, match=r"last layer \(layer 2\) has 3 units but there are 2"):
        network_from_layers([(W1, b1, f1), (np.zeros((3, 2)), np.zeros(3), f2)], like=net)
    with pytest.raises(UsageError, match="layer 2 reads 3 columns but there are 2 units in lay"):
        network_from_layers([(W1, b1, f1), (np.zeros((2, 3)), b2, f2)], like=net)
    with pytest.raises(UsageError, match="layer 1 has 2 units but a bias of shape"):
        network_from_layers([(W1, np.zeros(3), f1), (W2, b2, f2)], like=net)


def test_names_that_differ_from_like_are_refused():
    net = strict_xor()
    layers = dense_form(net).layers
    with pytest.raises(UsageError, match="inputs"):
        network_from_layers(layers, like=net, inputs=["p", "q"])


def test_without_like_hidden_units_get_helper_names_and_tanh_means_bipolar():
    layers = [(np.array([[1.0, 1.0]]), np.array([0.5]), "tanh"),
              (np.array([[2.0]]), np.array([0.0]), "tanh")]
    net = network_from_layers(layers, inputs=["a", "b"], outputs=["y"])
    assert [n.name for n in net.neurons] == ["L1~1", "y"]
    assert net.encoding == "bipolar"

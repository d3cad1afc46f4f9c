"""Backpropagation of the dense form, checked against finite differences."""

import numpy as np
import pytest

from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.train.mlp import Layout, data_loss, loss_and_grad


def _random_params(sizes, rng):
    W = [rng.normal(0, 1.0, size=(m, n)) for n, m in zip(sizes[:-1], sizes[1:])]
    b = [rng.normal(0, 0.5, size=m) for m in sizes[1:]]
    return W, b


def _numeric_grad(W, b, acts, X, T, cols, loss, h=1e-6):
    gW = [np.zeros_like(w) for w in W]
    gb = [np.zeros_like(x) for x in b]
    for params, grads in ((W, gW), (b, gb)):
        for p, g in zip(params, grads):
            for idx in np.ndindex(p.shape):
                keep = p[idx]
                p[idx] = keep + h
                up, _ = data_loss(W, b, acts, X, T, cols, loss)
                p[idx] = keep - h
                down, _ = data_loss(W, b, acts, X, T, cols, loss)
                p[idx] = keep
                g[idx] = (up - down) / (2 * h)
    return gW, gb


@pytest.mark.parametrize(
    "acts,loss",
    [
        (("sigmoid", "sigmoid", "sigmoid"), "mse"),
        (("sigmoid", "sigmoid", "sigmoid"), "cross-entropy"),
        (("tanh", "relu", "linear"), "mse"),
        (("relu", "tanh", "sigmoid"), "cross-entropy"),
    ],
)
def test_gradient_matches_finite_differences(acts, loss):
    # common practice: central differences agree with backpropagation to ~1e-6 relative
    rng = np.random.default_rng(3)
    sizes = (3, 4, 3, 2)
    W, b = _random_params(sizes, rng)
    X = rng.normal(0, 1, size=(7, 3))
    cols = np.array([2, 0])  # outputs read last-layer units 2 and 0 (unit 1 unlabelled)
    W[-1] = rng.normal(0, 1, size=(3, 3))
    b[-1] = rng.normal(0, 0.5, size=3)
    T = rng.integers(0, 2, size=(7, 2)).astype(float)
    value, gW, gb = loss_and_grad(W, b, acts, X, T, cols, loss)
    direct, _ = data_loss(W, b, acts, X, T, cols, loss)
    assert value == pytest.approx(direct, rel=1e-12)
    nW, nb = _numeric_grad(W, b, acts, X, T, cols, loss)
    for a, n in zip(gW + gb, nW + nb):
        np.testing.assert_allclose(a, n, rtol=1e-5, atol=1e-7)
    # the unlabelled last-layer unit gets no gradient
    assert np.all(gW[-1][1] == 0) and gb[-1][1] == 0


def test_shared_source_gradient_adds_up():
    # two outputs reading the same unit: the gradient is the sum of both outputs' terms
    rng = np.random.default_rng(5)
    W, b = _random_params((2, 1), rng)
    X = rng.normal(size=(5, 2))
    T = np.column_stack([np.ones(5), np.zeros(5)])
    _, gW, gb = loss_and_grad(W, b, ("sigmoid",), X, T, np.array([0, 0]), "mse")
    nW, nb = _numeric_grad(W, b, ("sigmoid",), X, T, np.array([0, 0]), "mse")
    np.testing.assert_allclose(gW[0], nW[0], rtol=1e-5, atol=1e-8)
    np.testing.assert_allclose(gb[0], nb[0], rtol=1e-5, atol=1e-8)


def test_mse_and_cross_entropy_values_by_hand():
    # one sigmoid unit z = 2: p = 1/(1+e^-2)
    p = 1 / (1 + np.exp(-2.0))
    W, b = [np.array([[0.0]])], [np.array([2.0])]
    X = np.array([[0.0], [0.0]])
    T = np.array([[1.0], [0.0]])
    mse, _ = data_loss(W, b, ("sigmoid",), X, T, np.array([0]), "mse")
    ce, _ = data_loss(W, b, ("sigmoid",), X, T, np.array([0]), "cross-entropy")
    assert mse == pytest.approx(((1 - p) ** 2 + p**2) / 2)
    assert ce == pytest.approx((-np.log(p) - np.log(1 - p)) / 2)


def test_layout_round_trip_keeps_names_roles_and_function():
    net = Network(
        ("a", "b"),
        (
            Neuron("h", 1, ("a", "b"), (3.0, -2.0), 0.5, "sigmoid", "gate", "h"),
            Neuron("r", 1, ("b",), (6.0,), -3.0, "sigmoid", "relay", None),
            Neuron("y", 2, ("h", "r"), (4.0, 4.0), -6.0, "sigmoid", "gate", "y"),
        ),
        (Output("y", "y"), Output("copy", "y")),
    )
    lay = Layout.of(net)
    W, b = lay.params(net)
    back = lay.network(W, b)
    assert [n.name for n in back.neurons] == ["h", "r", "y"]
    assert [n.role for n in back.neurons] == ["gate", "relay", "gate"]
    assert back.neuron("r").inputs == ("a", "b") and back.neuron("r").weights == (0.0, 6.0)
    X = np.array([[0, 0], [0, 1], [1, 0], [1, 1]], dtype=float)
    np.testing.assert_allclose(back.evaluate(X), net.evaluate(X))
    assert lay.output_columns().tolist() == [0, 0]

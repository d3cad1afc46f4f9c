"""A strict layered network as dense matrices: forward pass, loss and backpropagation.

A :class:`Layout` remembers what a strict layered :class:`~thresholdc.ir.network.Network`
looks like (unit names, roles, origins and activation of every layer) so that trained matrices
become a network again with the same names.  Parameters are two lists, ``weights[l]`` of shape
``(n_out, n_in)`` and ``biases[l]`` of shape ``(n_out,)``, one entry per layer.

Loss (over the labelled outputs ``P``, rows × outputs, targets ``T``):

- ``mse``: mean over rows of ``Σ_outputs (P − T)²``;
- ``cross-entropy`` (sigmoid output layer only): mean over rows of
  ``Σ_outputs −[t log p + (1 − t) log(1 − p)]``, computed from the pre-activations.

Backpropagation (the rule for each layer, written beside the forward step it inverts):
``Z_l = A_{l−1} W_lᵀ + b_l``, ``A_l = f_l(Z_l)``; with ``D_l = ∂L/∂Z_l``:
``∂L/∂W_l = D_lᵀ A_{l−1}``, ``∂L/∂b_l = Σ_rows D_l``, ``D_{l−1} = (D_l W_l) ⊙ f′_{l−1}(A_{l−1})``,
where ``f′`` is the activation's derivative written in terms of its output.

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a",), (Neuron("y", 1, ("a",), (4.0,), -2.0, "sigmoid"),),
...               (Output("y", "y"),))
>>> lay = Layout.of(net)
>>> W, b = lay.params(net)
>>> loss, gW, gb = loss_and_grad(W, b, lay.activations, np.array([[1.0]]), np.array([[1.0]]),
...                              lay.output_columns(["y"]), "mse")
>>> round(loss, 6), gW[0].shape
(0.014209, (1, 1))
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..ir import activations as act
from ..ir.network import Network, Neuron, Output

__all__ = [
    "LOSSES",
    "Layout",
    "forward",
    "predict",
    "data_loss",
    "loss_and_grad",
]

LOSSES = ("mse", "cross-entropy")


@dataclass(frozen=True)
class Layout:
    """The shape of a strict layered network: ``units[l]`` names the neurons of layer
    ``l + 1``; ``roles``/``origins`` run parallel; ``activations[l]`` is layer ``l + 1``'s."""

    inputs: tuple[str, ...]
    units: tuple[tuple[str, ...], ...]
    roles: tuple[tuple[str, ...], ...]
    origins: tuple[tuple[str | None, ...], ...]
    activations: tuple[str, ...]
    outputs: tuple[Output, ...]
    encoding: str = "binary"
    features: tuple[dict[str, Any], ...] | None = None

    @classmethod
    def of(cls, net: Network) -> Layout:
        """The layout of a strict layered network with one activation per layer."""
        layers = net.dense_layers()  # raises ValueError unless strict and uniform
        units, roles, origins = [], [], []
        for L in range(1, net.depth + 1):
            row = [n for n in net.neurons if n.layer == L]
            units.append(tuple(n.name for n in row))
            roles.append(tuple(n.role for n in row))
            origins.append(tuple(n.origin for n in row))
        return cls(
            net.inputs,
            tuple(units),
            tuple(roles),
            tuple(origins),
            tuple(f for _, _, f in layers),
            net.outputs,
            net.encoding,
            net.features,
        )

    @property
    def sizes(self) -> tuple[int, ...]:
        """Units per layer, the input layer first."""
        return (len(self.inputs),) + tuple(len(u) for u in self.units)

    def params(self, net: Network) -> tuple[list[np.ndarray], list[np.ndarray]]:
        """The weights and biases of ``net`` (which must have this layout)."""
        layers = net.dense_layers()
        return [W.copy() for W, _, _ in layers], [b.copy() for _, b, _ in layers]

    def output_columns(self, names: Sequence[str] | None = None) -> np.ndarray:
        """The last-layer column of each named output (all outputs by default)."""
        last = {u: i for i, u in enumerate(self.units[-1])} if self.units else {}
        source = {o.name: o.source for o in self.outputs}
        names = [o.name for o in self.outputs] if names is None else list(names)
        return np.asarray([last[source[n]] for n in names], dtype=np.int64)

    def network(
        self,
        weights: Sequence[np.ndarray],
        biases: Sequence[np.ndarray],
        meta: dict[str, Any] | None = None,
    ) -> Network:
        """A dense network (every unit reads every unit of the previous layer) with these
        parameters and this layout's names."""
        neurons = []
        prev = self.inputs
        for L, (W, b) in enumerate(zip(weights, biases, strict=True)):
            assert W.shape == (len(self.units[L]), len(prev))
            for r, name in enumerate(self.units[L]):
                neurons.append(
                    Neuron(
                        name,
                        L + 1,
                        tuple(prev),
                        tuple(float(w) for w in W[r]),
                        float(b[r]),
                        self.activations[L],
                        self.roles[L][r],
                        self.origins[L][r],
                    )
                )
            prev = self.units[L]
        return Network(
            self.inputs,
            tuple(neurons),
            self.outputs,
            dict(meta or {}),
            self.encoding,
            self.features,
        )

    def __repr__(self) -> str:
        return f"Layout(sizes={list(self.sizes)}, activations={list(self.activations)})"


def forward(
    weights: Sequence[np.ndarray],
    biases: Sequence[np.ndarray],
    activations: Sequence[str],
    X: np.ndarray,
) -> tuple[list[np.ndarray], np.ndarray]:
    """Activations of every layer (``A[0] = X``) and the last layer's pre-activations."""
    A = [X]
    Z = X
    for W, b, f in zip(weights, biases, activations, strict=True):
        Z = A[-1] @ W.T + b
        A.append(act.get(f).forward(Z))
    return A, Z


def predict(
    weights: Sequence[np.ndarray],
    biases: Sequence[np.ndarray],
    activations: Sequence[str],
    X: np.ndarray,
    cols: np.ndarray,
) -> np.ndarray:
    """The values of the outputs at last-layer columns ``cols``, ``(rows, len(cols))``."""
    A, _ = forward(weights, biases, activations, X)
    return A[-1][:, cols]


def _loss_value(P: np.ndarray, Zc: np.ndarray, T: np.ndarray, loss: str) -> float:
    """The data loss from the outputs ``P`` (and their pre-activations ``Zc``)."""
    n = max(len(T), 1)
    if loss == "mse":
        return float(np.sum((P - T) ** 2) / n)
    # −[t log σ(z) + (1 − t) log(1 − σ(z))] = softplus(z) − t·z, stable on both tails.
    return float(np.sum(np.logaddexp(0.0, Zc) - T * Zc) / n)


def data_loss(
    weights: Sequence[np.ndarray],
    biases: Sequence[np.ndarray],
    activations: Sequence[str],
    X: np.ndarray,
    T: np.ndarray,
    cols: np.ndarray,
    loss: str,
) -> tuple[float, np.ndarray]:
    """The data loss on ``(X, T)`` and the output values ``P``."""
    A, Z = forward(weights, biases, activations, X)
    P = A[-1][:, cols]
    return _loss_value(P, Z[:, cols], T, loss), P


def loss_and_grad(
    weights: Sequence[np.ndarray],
    biases: Sequence[np.ndarray],
    activations: Sequence[str],
    X: np.ndarray,
    T: np.ndarray,
    cols: np.ndarray,
    loss: str,
) -> tuple[float, list[np.ndarray], list[np.ndarray]]:
    """The data loss on one batch and its gradient with respect to every weight and bias.

    ``T`` holds the targets of the outputs at last-layer columns ``cols`` (0/1, or ±1 in the
    bipolar encoding).  Cross-entropy needs a sigmoid output layer.
    """
    A, Z = forward(weights, biases, activations, X)
    n = max(len(X), 1)
    units = A[-1].shape[1]
    S = np.zeros((len(cols), units))  # selects the labelled outputs: P = A_L Sᵀ
    S[np.arange(len(cols)), cols] = 1.0
    P = A[-1] @ S.T
    value = _loss_value(P, Z @ S.T, T, loss)
    if loss == "mse":
        D = ((2.0 / n) * (P - T)) @ S * act.get(activations[-1]).derivative(A[-1])
    else:
        assert activations[-1] == "sigmoid"
        D = ((P - T) / n) @ S  # σ′ cancels the cross-entropy's denominator
    gW: list[np.ndarray] = [np.empty(0)] * len(weights)
    gb: list[np.ndarray] = [np.empty(0)] * len(weights)
    for layer in range(len(weights) - 1, -1, -1):
        gW[layer] = D.T @ A[layer]
        gb[layer] = D.sum(axis=0)
        if layer:
            D = (D @ weights[layer]) * act.get(activations[layer - 1]).derivative(A[layer])
    return value, gW, gb

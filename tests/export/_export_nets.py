"""Small networks built by hand, a random-network generator and an independent MLP evaluator
for the export tests."""

from __future__ import annotations

import itertools

import numpy as np

from thresholdc.ir.network import Network, Neuron, Output, check_network


def all_rows(n: int, bipolar: bool = False) -> np.ndarray:
    """Every 0/1 row of ``n`` inputs (±1 when ``bipolar``), ``(2**n, n)``."""
    X = np.array(list(itertools.product([0.0, 1.0], repeat=n))).reshape(-1, n)
    return 2 * X - 1 if bipolar else X


def full_adder() -> Network:
    """DESIGN.md §4's example: ``sum`` reads the inputs directly and ``carry`` (not strict)."""
    return Network(
        ("a", "b", "cin"),
        (
            Neuron("carry", 1, ("a", "b", "cin"), (1, 1, 1), -1.5, origin="carry"),
            Neuron("sum", 2, ("a", "b", "cin", "carry"), (1, 1, 1, -2), -0.5, origin="sum"),
        ),
        (Output("sum", "sum"), Output("carry", "carry")),
    )


def strict_xor() -> Network:
    """A strict layered XOR with a second output sharing the source and a dead neuron."""
    return Network(
        ("a", "b"),
        (
            Neuron("xor~1", 1, ("a", "b"), (1, -1), -0.5, origin="x"),
            Neuron("xor~2", 1, ("a", "b"), (-1, 1), -0.5, origin="x"),
            Neuron("x", 2, ("xor~1", "xor~2"), (1, 1), -0.5, origin="x"),
            Neuron("nand", 2, ("xor~1", "xor~2"), (-1, -1), 0.5, origin="nand"),
        ),
        (Output("x", "x"), Output("same_x", "x")),
    )


def random_network(seed: int, *, n_inputs: int = 4, n_neurons: int = 7,
                   activations: tuple[str, ...] = ("step",), n_outputs: int = 3,
                   max_fan_in: int = 3, encoding: str = "binary") -> Network:
    """A random DAG of neurons (integer weights, half-integer biases), direct connections
    across layers included; outputs may read input units and may share a source."""
    rng = np.random.default_rng(seed)
    names = [f"x{i}" for i in range(n_inputs)]
    layer = {n: 0 for n in names}
    neurons: list[Neuron] = []
    for j in range(n_neurons):
        pool = names + [n.name for n in neurons]
        k = int(rng.integers(1, min(max_fan_in, len(pool)) + 1))
        ins = [str(s) for s in rng.choice(pool, size=k, replace=False)]
        ws = [int(w) if w != 0 else 1 for w in rng.integers(-3, 4, size=k)]
        bias = float(rng.integers(-3, 3)) + 0.5
        L = 1 + max(layer[i] for i in ins)
        name = f"n{j}"
        layer[name] = L
        f = str(rng.choice(list(activations)))
        neurons.append(Neuron(name, L, tuple(ins), tuple(ws), bias, f, "gate", f"d{j}"))
    pool = names + [n.name for n in neurons]
    picks = [neurons[-1].name] + [str(s) for s in rng.choice(pool, size=n_outputs - 1)]
    outputs = tuple(Output(f"out{i}", s) for i, s in enumerate(picks))
    net = Network(tuple(names), tuple(neurons), outputs, {}, encoding)
    check_network(net)
    return net


def mlp_forward(layers: list[tuple[np.ndarray, np.ndarray, str]], X: np.ndarray,
                bipolar: bool = False) -> np.ndarray:
    """A plain numpy forward pass written here, apart from thresholdc's own evaluator."""
    a = np.asarray(X, dtype=float)
    for W, b, f in layers:
        z = a @ np.asarray(W).T + np.asarray(b)
        if f == "step":
            a = np.where(z > 0, 1.0, -1.0 if bipolar else 0.0)
        elif f == "sigmoid":
            a = 1.0 / (1.0 + np.exp(-z))
        elif f == "tanh":
            a = np.tanh(z)
        elif f == "relu":
            a = np.maximum(z, 0.0)
        elif f == "linear":
            a = z
        else:
            raise AssertionError(f"unknown activation {f}")
    return a

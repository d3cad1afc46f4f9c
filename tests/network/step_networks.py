"""Step networks for the soft-activation tests: hand-written ones and random ones.

Random networks are AND/OR/at-least gadgets over literals, XOR gadgets and weighted thresholds
with integer weights and half-integer biases, so |z| ≥ 0.5 on every 0/1 input.
"""

from __future__ import annotations

import itertools

import numpy as np

from thresholdc.ir.network import Network, Neuron, Output

__all__ = ["random_step_network", "full_adder", "all_rows"]


def random_step_network(seed: int, n_inputs: int | None = None,
                        n_neurons: int | None = None) -> Network:
    """A random step network: AND/OR/at-least gadgets over literals, XOR gadgets and
    random weighted thresholds, each over inputs and earlier neurons.

    Integer weights and half-integer biases give |z| ≥ 0.5 on every 0/1 input."""
    rng = np.random.default_rng(seed)
    k = int(n_inputs if n_inputs is not None else rng.integers(2, 8))
    count = int(n_neurons if n_neurons is not None else rng.integers(1, 12))
    inputs = tuple(f"x{i}" for i in range(k))
    units = list(inputs)
    layer = {u: 0 for u in units}
    neurons: list[Neuron] = []

    def add(name: str, ins: list[str], ws: list[int], bias: float) -> None:
        L = 1 + max((layer[i] for i in ins), default=0)
        neurons.append(Neuron(name, L, tuple(ins), tuple(float(w) for w in ws), bias,
                              origin=name))
        layer[name] = L
        units.append(name)

    for j in range(count):
        kind = rng.integers(0, 5)
        fan = int(rng.integers(1, min(len(units), 5) + 1))
        ins = [str(u) for u in rng.choice(units, size=fan, replace=False)]
        neg = rng.random(fan) < 0.4
        ws = [-1 if s else 1 for s in neg]
        name = f"n{j}"
        if kind == 0:  # AND of literals
            add(name, ins, ws, -(fan - int(neg.sum()) - 0.5))
        elif kind == 1:  # OR of literals
            add(name, ins, ws, int(neg.sum()) - 0.5)
        elif kind == 2:  # at least t of the literals
            t = int(rng.integers(1, fan + 1))
            add(name, ins, ws, int(neg.sum()) - t + 0.5)
        elif kind == 3 and fan >= 2:  # XOR gadget: h = a and b; y = a + b - 2h > 0
            a, b = ins[:2]
            add(f"{name}~h", [a, b], [1, 1], -1.5)
            add(name, [a, b, f"{name}~h"], [1, 1, -2], -0.5)
        else:  # weighted threshold with integer weights
            wts = [int(w) for w in rng.integers(-3, 4, size=fan)]
            add(name, ins, wts, float(rng.integers(-3, 3)) + 0.5)
    names = [n.name for n in neurons]
    chosen = sorted(set(rng.choice(names, size=min(3, len(names)), replace=False).tolist())
                    | {names[-1]}, key=names.index)
    outputs = [Output(f"out_{s}", s) for s in chosen]
    if rng.random() < 0.3:
        outputs.append(Output("pass", inputs[0]))
    return Network(inputs, tuple(neurons), tuple(outputs))


def full_adder() -> Network:
    """The full adder of DESIGN.md §4."""
    return Network(
        ("a", "b", "cin"),
        (
            Neuron("carry", 1, ("a", "b", "cin"), (1, 1, 1), -1.5, origin="carry"),
            Neuron("sum", 2, ("a", "b", "cin", "carry"), (1, 1, 1, -2), -0.5, origin="sum"),
        ),
        (Output("sum", "sum"), Output("carry", "carry")),
    )


def all_rows(k: int) -> np.ndarray:
    """Every 0/1 row over k inputs."""
    return np.array(list(itertools.product([0, 1], repeat=k)), dtype=float).reshape(-1, k)

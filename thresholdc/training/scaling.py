"""Real inputs standardised inside training, folded back on export.

Training sees every real input unit as ``x' = (x − lo) / (hi − lo)`` over its declared range
(the data's range where none is declared); Boolean and one-hot units are unchanged.  So one
step size, one anchor and one scale of random links suit every input, whatever its units.
The first layer's weights are converted in both directions: with ``x = lo + s·x'``,
``W x + b = (W s) x' + (b + W lo)``, so a trained network is written in the user's units.

>>> import numpy as np
>>> from thresholdc.network.model import Network
>>> net = Network(("t", "a"), (), (), features=({"name": "t", "kind": "real", "units": ["t"],
...               "range": [0, 1000], "scale": 1}, {"name": "a", "kind": "bool", "units": ["a"]}))
>>> sh, sc = input_scaling(net, np.array([[5.0, 1.0]]))
>>> sh.tolist(), sc.tolist()
([0.0, 0.0], [1000.0, 1.0])
>>> W, b = [np.array([[0.2, 4.0]])], [np.array([-60.0])]
>>> W2, b2 = to_standard(W, b, sh, sc)
>>> W2[0].tolist(), b2[0].tolist()
([[200.0, 4.0]], [-60.0])
>>> [x.tolist() for x in from_standard(W2, b2, sh, sc)[0]]
[[[0.2, 4.0]]]
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

__all__ = ["input_scaling", "to_standard", "from_standard", "standardise"]


def input_scaling(network: Any, X: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per input unit the shift ``lo`` and scale ``hi − lo`` (0 and 1 for non-real units)."""
    n = len(network.inputs)
    shift, scale = np.zeros(n), np.ones(n)
    col = {u: i for i, u in enumerate(network.inputs)}
    for f in network.features or ():
        if f.get("kind") != "real":
            continue
        i = col[f["units"][0]]
        rng = f.get("range")
        if rng is not None:
            lo, hi = float(rng[0]), float(rng[1])
        elif len(X):
            lo, hi = float(X[:, i].min()), float(X[:, i].max())
        else:
            lo, hi = 0.0, 1.0
        shift[i], scale[i] = lo, (hi - lo if hi > lo else 1.0)
    return shift, scale


def to_standard(
    weights: Sequence[np.ndarray], biases: Sequence[np.ndarray],
    shift: np.ndarray, scale: np.ndarray,
) -> tuple[list[np.ndarray], list[np.ndarray]]:
    """Parameters for standardised inputs from parameters for raw inputs."""
    W = [np.array(w, dtype=float) for w in weights]
    b = [np.array(x, dtype=float) for x in biases]
    b[0] = b[0] + W[0] @ shift
    W[0] = W[0] * scale[None, :]
    return W, b


def from_standard(
    weights: Sequence[np.ndarray], biases: Sequence[np.ndarray],
    shift: np.ndarray, scale: np.ndarray,
) -> tuple[list[np.ndarray], list[np.ndarray]]:
    """Parameters for raw inputs from parameters for standardised inputs."""
    W = [np.array(w, dtype=float) for w in weights]
    b = [np.array(x, dtype=float) for x in biases]
    W[0] = W[0] / scale[None, :]
    b[0] = b[0] - W[0] @ shift
    return W, b


def standardise(X: np.ndarray, shift: np.ndarray, scale: np.ndarray) -> np.ndarray:
    """``(X − shift) / scale``."""
    return (np.asarray(X, dtype=float) - shift[None, :]) / scale[None, :]

"""Activation functions, each with its derivative written in terms of its own output.

Training (backpropagation) only keeps a neuron's output ``a``, so every activation gives
``derivative(a)``: sigmoid ``a(1 - a)``, tanh ``1 - a²``, relu ``1 where a > 0``, linear ``1``.
``step`` has no useful derivative (0 everywhere); it is the exact form a compiled network has.

>>> import numpy as np
>>> SIGMOID.forward(np.array([0.0]))
array([0.5])
>>> SIGMOID.derivative(np.array([0.5]))
array([0.25])
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..lazy import lazy_module

special = lazy_module("scipy.special")

__all__ = ["Activation", "STEP", "SIGMOID", "TANH", "RELU", "LINEAR", "ACTIVATIONS", "get"]


def _sigmoid(z: np.ndarray) -> np.ndarray:
    """1 / (1 + e^-z), numerically stable on both tails (scipy's expit)."""
    return special.expit(np.asarray(z, dtype=float))


@dataclass(frozen=True, slots=True)
class Activation:
    """A named activation: ``forward(z)`` and ``derivative(a)`` (from the output ``a``)."""

    name: str
    forward: Callable[[np.ndarray], np.ndarray]
    derivative: Callable[[np.ndarray], np.ndarray]
    monotone: bool = True

    def __repr__(self) -> str:
        return f"Activation({self.name})"


STEP = Activation("step", lambda z: (z > 0).astype(float), lambda a: np.zeros_like(a))
SIGMOID = Activation("sigmoid", _sigmoid, lambda a: a * (1.0 - a))
TANH = Activation("tanh", np.tanh, lambda a: 1.0 - a * a)
RELU = Activation("relu", lambda z: np.maximum(z, 0.0), lambda a: (a > 0).astype(float))
LINEAR = Activation("linear", lambda z: np.asarray(z, dtype=float), lambda a: np.ones_like(a))

ACTIVATIONS: dict[str, Activation] = {a.name: a for a in (STEP, SIGMOID, TANH, RELU, LINEAR)}


def get(name: str) -> Activation:
    """The activation called ``name``; ``KeyError`` listing the known ones otherwise.

    >>> get("relu").name
    'relu'
    """
    try:
        return ACTIVATIONS[name]
    except KeyError:
        raise KeyError(f"unknown activation {name!r}; known: {', '.join(ACTIVATIONS)}") from None

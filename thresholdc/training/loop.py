"""The training loop: mini-batch gradient steps (SGD or Adam) with an anchor and early stopping.

Objective on a batch: the data loss (:func:`thresholdc.training.mlp.loss_and_grad`) plus
``(λ/2)·Σ g·(θ − θ_target)²`` over every weight and bias (``g``: the anchor's weight on each
parameter, 1 unless given), whose gradient is ``λg(θ − θ_target)``.  Frozen parameters (mask 0)
never move.  Each epoch visits the rows in a fresh order drawn from the given generator, so a
run is reproducible from its seed.

Early stopping (when a validation part is given): after every epoch the data loss on the
validation part is measured; the parameters with the lowest one so far are kept (epoch 0, the
start, included), and training stops after ``patience`` epochs without improvement.

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> from thresholdc.training.mlp import Layout
>>> net = Network(("a",), (Neuron("y", 1, ("a",), (0.0,), 0.0, "sigmoid"),), (Output("y", "y"),))
>>> lay = Layout.of(net); W, b = lay.params(net)
>>> X = np.array([[0.0], [1.0]]); T = np.array([[0.0], [1.0]])
>>> fit = fit_params(W, b, lay.activations, X, T, lay.output_columns(), epochs=50, lr=0.1,
...                  rng=np.random.default_rng(0))
>>> bool(fit.history[-1].loss < fit.history[0].loss)
True
"""

from __future__ import annotations

import sys
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..progress import bar as progress_bar
from .mlp import data_loss, loss_and_grad

__all__ = ["OPTIMIZERS", "Epoch", "Fit", "SGD", "Adam", "make_optimizer", "fit_params"]

OPTIMIZERS = ("sgd", "adam")


@dataclass(frozen=True)
class Epoch:
    """One line of the training log (epoch 0 is the start, before any step).

    ``loss`` is the data loss on the training part, ``penalty`` the anchor term, ``accuracy``
    the fraction of (row, output) decisions that match the labels; ``validation_*`` are None
    without a validation part.
    """

    epoch: int
    loss: float
    penalty: float
    accuracy: float
    validation_loss: float | None = None
    validation_accuracy: float | None = None

    def to_dict(self) -> dict[str, Any]:
        return {
            "epoch": self.epoch,
            "loss": self.loss,
            "penalty": self.penalty,
            "accuracy": self.accuracy,
            "validation_loss": self.validation_loss,
            "validation_accuracy": self.validation_accuracy,
        }


@dataclass(frozen=True)
class Fit:
    """What :func:`fit_params` returns: the kept parameters and the log."""

    weights: list[np.ndarray]
    biases: list[np.ndarray]
    history: tuple[Epoch, ...]
    best_epoch: int

    def __repr__(self) -> str:
        return f"Fit(epochs={len(self.history) - 1}, best_epoch={self.best_epoch})"


class SGD:
    """Plain stochastic gradient descent: ``θ ← θ − lr·g``."""

    def __init__(self, lr: float) -> None:
        self.lr = lr

    def step(self, params: list[np.ndarray], grads: list[np.ndarray]) -> None:
        """Update ``params`` in place."""
        for p, g in zip(params, grads, strict=True):
            p -= self.lr * g

    def __repr__(self) -> str:
        return f"SGD(lr={self.lr})"


class Adam:
    """Adam (Kingma & Ba 2015, from memory): bias-corrected first and second moments,
    ``θ ← θ − lr·m̂/(√v̂ + eps)``."""

    def __init__(
        self, lr: float, beta1: float = 0.9, beta2: float = 0.999, eps: float = 1e-8
    ) -> None:
        self.lr, self.beta1, self.beta2, self.eps = lr, beta1, beta2, eps
        self.t = 0
        self.m: list[np.ndarray] | None = None
        self.v: list[np.ndarray] | None = None

    def step(self, params: list[np.ndarray], grads: list[np.ndarray]) -> None:
        """Update ``params`` in place."""
        if self.m is None or self.v is None:
            self.m = [np.zeros_like(p) for p in params]
            self.v = [np.zeros_like(p) for p in params]
        self.t += 1
        c1 = 1.0 - self.beta1**self.t
        c2 = 1.0 - self.beta2**self.t
        for p, g, m, v in zip(params, grads, self.m, self.v, strict=True):
            m *= self.beta1
            m += (1.0 - self.beta1) * g
            v *= self.beta2
            v += (1.0 - self.beta2) * g * g
            p -= self.lr * (m / c1) / (np.sqrt(v / c2) + self.eps)

    def __repr__(self) -> str:
        return f"Adam(lr={self.lr})"


def make_optimizer(name: str, lr: float) -> SGD | Adam:
    """The optimizer called ``name`` (``sgd`` or ``adam``)."""
    return SGD(lr) if name == "sgd" else Adam(lr)


def _accuracy(P: np.ndarray, T: np.ndarray, threshold: float) -> float:
    """Fraction of (row, output) decisions ``P > threshold`` that match ``T > threshold``."""
    if P.size == 0:
        return 1.0
    return float(np.mean((P > threshold) == (T > threshold)))


def _penalty(params: Sequence[np.ndarray], target: Sequence[np.ndarray], lam: float,
             weigh: Sequence[np.ndarray] | None = None) -> float:
    """``(λ/2)·Σ g·(θ − θ_target)²`` (``g`` = ``weigh``, default 1)."""
    if lam == 0.0:
        return 0.0
    if weigh is None:
        weigh = [np.ones_like(p) for p in params]
    return 0.5 * lam * float(sum(np.sum(g * (p - t) ** 2)
                                 for p, t, g in zip(params, target, weigh, strict=True)))


def _bar(total: int, desc: str, progress: bool) -> Any:
    """A bar over ``total`` epochs on a terminal, else None."""
    if not progress or not sys.stderr.isatty():
        return None
    return progress_bar(total, desc, unit="epoch", show=True)


def fit_params(
    weights: Sequence[np.ndarray],
    biases: Sequence[np.ndarray],
    activations: Sequence[str],
    X: np.ndarray,
    T: np.ndarray,
    cols: np.ndarray,
    *,
    rng: np.random.Generator,
    epochs: int = 200,
    lr: float = 0.01,
    batch: int = 16,
    optimizer: str = "adam",
    loss: str = "mse",
    anchor: float = 0.0,
    target: tuple[Sequence[np.ndarray], Sequence[np.ndarray]] | None = None,
    masks: tuple[Sequence[np.ndarray], Sequence[np.ndarray]] | None = None,
    pull: tuple[Sequence[np.ndarray], Sequence[np.ndarray]] | None = None,
    validation: tuple[np.ndarray, np.ndarray] | None = None,
    patience: int = 30,
    threshold: float = 0.5,
    progress: bool = False,
    desc: str = "training",
    callback: Callable[[int, list[np.ndarray], list[np.ndarray]], None] | None = None,
) -> Fit:
    """Train the dense parameters on ``(X, T)``; returns new arrays (the inputs are copied).

    ``target`` is what the anchor pulls toward (default: the starting values), ``masks`` are
    1 for trainable and 0 for frozen entries (default: all trainable), ``pull`` weighs the
    anchor per entry (default: 1 everywhere).  ``callback(epoch, W, b)``
    is called after every epoch (and for epoch 0) with the current parameters.
    """
    W = [np.array(w, dtype=float) for w in weights]
    b = [np.array(x, dtype=float) for x in biases]
    params = W + b
    if target is None:
        goal = [p.copy() for p in params]
    else:
        goal = [np.asarray(p, dtype=float) for p in list(target[0]) + list(target[1])]
    mask = None
    if masks is not None:
        mask = [np.asarray(m, dtype=float) for m in list(masks[0]) + list(masks[1])]
    weigh = None
    if pull is not None:
        weigh = [np.asarray(g, dtype=float) for g in list(pull[0]) + list(pull[1])]
    opt = make_optimizer(optimizer, lr)
    L = len(W)
    n = len(X)
    batch = max(1, min(batch, n))

    def record(epoch: int) -> Epoch:
        train_loss, P = data_loss(W, b, activations, X, T, cols, loss)
        entry = Epoch(epoch, train_loss, _penalty(params, goal, anchor, weigh),
                      _accuracy(P, T, threshold))
        if validation is not None:
            vl, VP = data_loss(W, b, activations, validation[0], validation[1], cols, loss)
            entry = Epoch(entry.epoch, entry.loss, entry.penalty, entry.accuracy,
                          vl, _accuracy(VP, validation[1], threshold))
        return entry

    history = [record(0)]
    if callback is not None:
        callback(0, W, b)
    best = (history[0].validation_loss, 0, [p.copy() for p in params])
    bar = _bar(epochs, desc, progress)
    waited = 0
    try:
        for epoch in range(1, epochs + 1):
            order = rng.permutation(n)
            for start in range(0, n, batch):
                rows = order[start : start + batch]
                _, gW, gb = loss_and_grad(W, b, activations, X[rows], T[rows], cols, loss)
                grads = gW + gb
                if anchor and weigh is not None:
                    pulls4 = zip(grads, params, goal, weigh, strict=True)
                    grads = [g + anchor * w * (p - t) for g, p, t, w in pulls4]
                elif anchor:
                    pulls = zip(grads, params, goal, strict=True)
                    grads = [g + anchor * (p - t) for g, p, t in pulls]
                if mask is not None:
                    grads = [g * m for g, m in zip(grads, mask, strict=True)]
                opt.step(params, grads)
            entry = record(epoch)
            history.append(entry)
            if callback is not None:
                callback(epoch, W, b)
            if bar is not None:
                shown = {"loss": f"{entry.loss:.4f}"}
                if entry.validation_accuracy is not None:
                    shown["val_acc"] = f"{entry.validation_accuracy:.3f}"
                else:
                    shown["acc"] = f"{entry.accuracy:.3f}"
                bar.set_postfix(shown)
                bar.update(1)
            if validation is not None:
                assert entry.validation_loss is not None and best[0] is not None
                if entry.validation_loss < best[0]:
                    best = (entry.validation_loss, epoch, [p.copy() for p in params])
                    waited = 0
                else:
                    waited += 1
                    if waited >= patience:
                        break
    finally:
        if bar is not None:
            bar.close()
    if validation is not None:
        kept, best_epoch = best[2], best[1]
    else:
        kept, best_epoch = params, history[-1].epoch
    return Fit(kept[:L], kept[L:], tuple(history), best_epoch)

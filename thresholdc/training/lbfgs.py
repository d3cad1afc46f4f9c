"""One fit of the dense parameters: full-batch L-BFGS, or mini-batch Adam/SGD for big data.

The objective is the data loss (a mean over rows, :func:`thresholdc.training.mlp.loss_and_grad`)
plus the anchor ``(λ/2)·Σ pullᵢ·((θᵢ − θ_targetᵢ)/ω)²`` over the trainable parameters (mask 1);
frozen ones never move.  ``pull`` weighs the anchor per parameter: 1 on the rules' own links
and biases, less on links the rules do not use (so training can add an antecedent while the
rules stay anchored), 0 where nothing pulls (a random start's biases).  L-BFGS is scipy's
``L-BFGS-B`` with the analytic gradient of the numpy backpropagation; it is deterministic, so
a fit depends only on its inputs.

Early stopping (when held-out rows are given): after every iteration (pass) the data loss on
the held-out rows is measured; the parameters with the lowest one so far are kept (iteration 0,
the start, included) and the fit stops after ``patience`` iterations without improvement.

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> from thresholdc.training.mlp import Layout
>>> net = Network(("a",), (Neuron("y", 1, ("a",), (0.0,), 0.0, "sigmoid"),), (Output("y", "y"),))
>>> lay = Layout.of(net)
>>> p = Problem.of(lay.activations, np.array([[0.0], [1.0]]), np.array([[0.0], [1.0]]),
...                lay.output_columns(), "cross-entropy", *lay.params(net))
>>> run = fit(p, p.target, lam=0.0, iterations=20)
>>> run.history[0].loss > run.history[-1].loss, run.best == run.history[-1].epoch
(True, True)
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..lazy import lazy_module
from .loop import Epoch, fit_params
from .mlp import data_loss, loss_and_grad

optimize = lazy_module("scipy.optimize")

__all__ = ["Problem", "Run", "fit"]


@dataclass(frozen=True)
class Problem:
    """Everything a fit needs except the starting point and λ.

    ``target`` is what the anchor pulls toward, ``mask`` is 1 where a parameter trains,
    ``pull`` the anchor's weight on each parameter, all flat (all weights, then all biases,
    layer by layer); ``unit`` is ω.
    """

    activations: tuple[str, ...]
    X: np.ndarray
    T: np.ndarray
    cols: np.ndarray
    loss: str
    shapes: tuple[tuple[int, int], ...]
    target: np.ndarray
    mask: np.ndarray
    unit: float = 1.0
    threshold: float = 0.5
    pull: np.ndarray | None = None

    @classmethod
    def of(cls, activations: Sequence[str], X: np.ndarray, T: np.ndarray, cols: np.ndarray,
           loss: str, weights: Sequence[np.ndarray], biases: Sequence[np.ndarray], *,
           mask: np.ndarray | None = None, unit: float = 1.0, threshold: float = 0.5,
           pull: np.ndarray | None = None) -> Problem:
        shapes = tuple(w.shape for w in weights)
        target = pack(weights, biases)
        m = np.ones_like(target) if mask is None else np.asarray(mask, dtype=float)
        g = None if pull is None else np.asarray(pull, dtype=float)
        assert g is None or g.shape == target.shape
        return cls(tuple(activations), X, T, cols, loss, shapes, target, m, unit, threshold, g)

    def rows(self, index: np.ndarray) -> Problem:
        """The same problem on a subset of the rows."""
        return Problem(self.activations, self.X[index], self.T[index], self.cols, self.loss,
                       self.shapes, self.target, self.mask, self.unit, self.threshold,
                       self.pull)

    def weights(self) -> np.ndarray:
        """The anchor's weight on each parameter: ``mask · pull`` (flat)."""
        return self.mask if self.pull is None else self.mask * self.pull

    def penalty(self, theta: np.ndarray, lam: float) -> tuple[float, np.ndarray]:
        """The anchor term at ``theta`` for ``lam`` and its gradient.

        >>> p = Problem((), np.zeros((1, 0)), np.zeros((1, 0)), np.zeros(0, int), "mse", (),
        ...             np.zeros(2), np.ones(2), 2.0, 0.5, np.array([1.0, 0.25]))
        >>> p.penalty(np.array([2.0, 2.0]), 4.0)
        (2.5, array([2. , 0.5]))
        """
        k = lam / (self.unit * self.unit)
        if not k:
            return 0.0, np.zeros_like(theta)
        g = self.weights()
        d = theta - self.target
        gd = k * g * d
        return 0.5 * float(d @ gd), gd

    def unpack(self, theta: np.ndarray) -> tuple[list[np.ndarray], list[np.ndarray]]:
        W, b, k = [], [], 0
        for r, c in self.shapes:
            W.append(theta[k : k + r * c].reshape(r, c))
            k += r * c
        for r, _ in self.shapes:
            b.append(theta[k : k + r])
            k += r
        return W, b

    def evaluate(self, theta: np.ndarray, X: np.ndarray, T: np.ndarray) -> tuple[float, float]:
        """Data loss and decision accuracy of ``theta`` on ``(X, T)``."""
        if X.shape[0] == 0:
            return 0.0, 1.0
        W, b = self.unpack(theta)
        value, P = data_loss(W, b, self.activations, X, T, self.cols, self.loss)
        t = self.threshold
        return value, float(np.mean((P > t) == (T > t)))


def pack(weights: Sequence[np.ndarray], biases: Sequence[np.ndarray]) -> np.ndarray:
    """All weights, then all biases, flat."""
    return np.concatenate([np.ravel(w) for w in weights] + [np.ravel(x) for x in biases])


@dataclass(frozen=True)
class Run:
    """A finished fit: ``theta`` the kept parameters, ``best`` their iteration, ``history``
    one :class:`~thresholdc.training.loop.Epoch` per iteration (0 is the start)."""

    theta: np.ndarray
    best: int
    history: tuple[Epoch, ...]
    #: ``(λ, objective value, gradient)`` at ``theta`` when the fit evaluated it (L-BFGS), so
    #: the next fit of a λ path need not evaluate it again.
    objective: tuple[float, float, np.ndarray] | None = None


def _objective(p: Problem, lam: float) -> Callable[[np.ndarray], tuple[float, np.ndarray]]:
    k = lam / (p.unit * p.unit)

    def f(theta: np.ndarray) -> tuple[float, np.ndarray]:
        W, b = p.unpack(theta)
        value, gW, gb = loss_and_grad(W, b, p.activations, p.X, p.T, p.cols, p.loss)
        grad = pack(gW, gb)
        if k:
            pen, gpen = p.penalty(theta, lam)
            value += pen
            grad = grad + gpen
        return value, grad * p.mask

    return f


def fit(
    problem: Problem,
    theta0: np.ndarray,
    *,
    lam: float,
    iterations: int,
    held_out: tuple[np.ndarray, np.ndarray] | None = None,
    patience: int = 10,
    optimizer: str = "lbfgs",
    rng: np.random.Generator | None = None,
    lr: float = 0.01,
    batch: int = 32,
    light: bool = False,
    after: Run | None = None,
) -> Run:
    """Fit from ``theta0`` with anchor ``lam`` for at most ``iterations`` iterations (passes).

    ``held_out`` rows turn on early stopping; ``optimizer`` is ``lbfgs``, ``adam`` or ``sgd``
    (the last two draw their batches from ``rng``).  ``light`` skips the training rows'
    accuracy in the history (NaN; the loss comes from the optimizer, NaN at iteration 0),
    for the search.
    ``after``: the fit that ended at ``theta0`` on the same rows and held-out rows (the
    previous λ of a path); its kept entry and objective there are reused, not recomputed.
    """
    p = problem
    k = lam / (p.unit * p.unit)

    def entry(i: int, theta: np.ndarray, total: float | None = None) -> Epoch:
        pen = p.penalty(theta, lam)[0]
        if light and (total is not None or held_out is not None):
            # no pass over the training rows: the loss from the optimizer (NaN at the start)
            loss, acc = (float("nan") if total is None else total - pen), float("nan")
        else:
            loss, acc = p.evaluate(theta, p.X, p.T)
        if held_out is None:
            return Epoch(i, loss, pen, acc)
        vl, va = p.evaluate(theta, *held_out)
        return Epoch(i, loss, pen, acc, vl, va)

    if optimizer != "lbfgs":
        W0, b0 = p.unpack(np.array(theta0, dtype=float))
        Wt, bt = p.unpack(p.target)
        Wm, bm = p.unpack(p.mask)
        Wg, bg = p.unpack(p.weights())
        out = fit_params(
            W0, b0, p.activations, p.X, p.T, p.cols, rng=rng or np.random.default_rng(0),
            epochs=iterations, lr=lr, batch=batch, optimizer=optimizer, loss=p.loss, anchor=k,
            target=(Wt, bt), masks=(Wm, bm), validation=held_out, patience=patience,
            threshold=p.threshold, pull=(Wg, bg),
        )
        return Run(pack(out.weights, out.biases), out.best_epoch, out.history)

    theta0 = np.array(theta0, dtype=float)
    reuse = after is not None and np.array_equal(after.theta, theta0)
    if reuse:
        assert after is not None
        kept = after.history[after.best]
        d0 = (theta0 - p.target) * p.mask
        history = [Epoch(0, kept.loss, 0.5 * k * float(d0 @ d0), kept.accuracy,
                         kept.validation_loss, kept.validation_accuracy)]
    else:
        history = [entry(0, theta0)]
    best: list[Any] = [history[0].validation_loss, 0, theta0.copy()]
    if iterations == 0:
        return Run(theta0, 0, tuple(history))
    last = [theta0]
    objective = _objective(p, lam)
    seen: list[tuple[np.ndarray, float, np.ndarray]] = []  # the latest evaluations
    if reuse and after is not None and after.objective is not None:
        # the previous λ's objective at theta0, moved to this λ: the anchor term changes only
        lam0, value0, grad0 = after.objective
        k0 = lam0 / (p.unit * p.unit)
        d0 = (theta0 - p.target) * p.mask
        seen.append((theta0, value0 + 0.5 * (k - k0) * float(d0 @ d0), grad0 + (k - k0) * d0))

    def at(theta: np.ndarray) -> tuple[float, float, np.ndarray] | None:
        return next(((lam, v, g) for x, v, g in seen if np.array_equal(x, theta)), None)

    at_best: list[Any] = [at(theta0)]

    def f(theta: np.ndarray) -> tuple[float, np.ndarray]:
        for x, value, grad in seen:
            if np.array_equal(x, theta):
                return value, grad.copy()
        value, grad = objective(theta)
        seen[:] = [*seen[-2:], (theta.copy(), value, grad.copy())]
        if at_best[0] is None and best[1] == 0 and np.array_equal(theta, theta0):
            at_best[0] = (lam, value, grad.copy())
        return value, grad

    def watch(intermediate_result: Any) -> None:
        theta = np.array(intermediate_result.x, dtype=float)
        last[0] = theta
        e = entry(len(history), theta, float(intermediate_result.fun))
        history.append(e)
        if held_out is None:
            return
        if e.validation_loss < best[0] - 1e-12:
            best[:] = [e.validation_loss, e.epoch, theta]
            at_best[0] = at(theta)
        elif e.epoch - best[1] >= patience:
            raise StopIteration

    optimize.minimize(f, theta0, jac=True, method="L-BFGS-B", callback=watch,
             options={"maxiter": iterations, "maxcor": 10, "gtol": 1e-6, "ftol": 1e-10})
    if held_out is None:
        return Run(last[0], history[-1].epoch, tuple(history), at(last[0]))
    return Run(best[2], int(best[1]), tuple(history), at_best[0])

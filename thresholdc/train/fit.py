"""``train``: fit a compiled network to labelled data, starting from its rules.

The steps, in order:

1. the start (:func:`thresholdc.train.warmstart.prepare_start`): certified sigmoid gains,
   strict layers, dense links, extra units, frozen neurons, or a random start;
2. a seeded split of the rows into a training part and a validation part (``validation``);
3. the anchor λ: fixed, or chosen by k-fold cross-validation on all rows
   (:func:`thresholdc.train.anchor.choose_anchor`);
4. mini-batch training on the training part with early stopping on the validation part
   (:func:`thresholdc.train.loop.fit_params`);
5. the trained dense network, with the training options in ``meta.training``.

Defaults (chosen for small, noisy tabular problems by ``benchmarks/training_bench.py``):
``epochs=200, loss="mse", optimizer="adam", lr=0.01 (adam) / 0.5 (sgd), batch=16, widen=0,
init="rules", validation=0 (no early stopping: the anchor regularises, and every row trains),
anchor="auto" (3-fold cross-validation over 0, 0.001, 0.003, 0.01, 0.03, 0.1),
tolerance=0.25, patience=30, seed=0``.  Why these:

- ``mse`` rather than cross-entropy: its gradient fades on confidently wrong rows, so a few
  flipped labels do not pull correct rules apart (cross-entropy kept fewer rules at every λ);
- ``tolerance=0.25`` rather than compile's 0.01: the start still decides every rule exactly
  (each neuron within 0.25 of its step value), but its gains are about 4 times smaller, so
  the neurons are not saturated and the anchor, measured in the same units as the weights,
  lets the data repair a wrong clause at a λ that still keeps the right ones;
- ``validation=0``: holding out a fifth of ~120 rows for early stopping cost accuracy in the
  benchmark; ``validation=0.2`` turns early stopping on.

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> rules = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
...                 (Output("y", "y"),))
>>> X = np.array([[0, 0], [0, 1], [1, 0], [1, 1]] * 4, dtype=float)
>>> y = X[:, :1] * X[:, 1:]
>>> result = train(rules, X, y, epochs=20, seed=1, anchor=0.01, validation=0)
>>> result.network.decide(X[:4]).ravel().tolist()
[False, False, False, True]
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import UsageError
from ..ir.network import Network
from .anchor import ANCHOR_GRID, FOLDS, AnchorChoice, choose_anchor
from .loop import OPTIMIZERS, Epoch, fit_params
from .mlp import LOSSES, data_loss
from .warmstart import INITS, Start, prepare_start

__all__ = ["DEFAULTS", "TrainResult", "train", "check_options"]

DEFAULTS: dict[str, Any] = {
    "epochs": 200,
    "seed": 0,
    "loss": "mse",
    "optimizer": "adam",
    "lr": None,  # 0.01 for adam, 0.5 for sgd
    "batch": 16,
    "widen": 0,
    "freeze": (),
    "init": "rules",
    "validation": 0.0,
    "anchor": "auto",
    "tolerance": 0.25,
    "patience": 30,
}
DEFAULT_LR = {"adam": 0.01, "sgd": 0.5}


@dataclass(frozen=True)
class TrainResult:
    """A finished training run.

    ``network`` is the trained dense network, ``start`` the dense network training began
    from, ``history`` one :class:`~thresholdc.train.loop.Epoch` per epoch run (epoch 0 is the
    start), ``best_epoch`` the epoch whose parameters were kept, ``anchor`` the λ used and how
    it was chosen, ``frozen`` the neurons kept fixed, ``outputs`` the trained outputs.
    """

    network: Network
    start: Network
    history: tuple[Epoch, ...]
    best_epoch: int
    anchor: AnchorChoice
    frozen: tuple[str, ...]
    outputs: tuple[str, ...]
    options: dict[str, Any]

    def to_dict(self) -> dict[str, Any]:
        """The ``train --json`` log (without file names)."""
        return {
            "outputs": list(self.outputs),
            "options": dict(self.options),
            "anchor": self.anchor.to_dict(),
            "frozen": list(self.frozen),
            "best_epoch": self.best_epoch,
            "epochs": [e.to_dict() for e in self.history],
        }

    def __repr__(self) -> str:
        return (
            f"TrainResult({self.network!r}, epochs={len(self.history) - 1}, "
            f"best_epoch={self.best_epoch}, anchor={self.anchor.value})"
        )


def _bad(name: str, want: str, got: Any) -> UsageError:
    """The message for an option outside its range."""
    return UsageError(f"the {name!r} option of train must be {want}; got {got!r} instead")


def _is_int(x: Any) -> bool:
    return isinstance(x, numbers.Integral) and not isinstance(x, bool)


def check_options(**options: Any) -> dict[str, Any]:
    """The full option set (defaults filled in), checked; a UsageError names the first bad one.

    >>> check_options(epochs=5)["lr"]
    0.01
    >>> check_options(validation=1.5)  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: the 'validation' option of train must be a ...
    """
    unknown = sorted(set(options) - set(DEFAULTS))
    if unknown:
        raise UsageError(
            f"unknown option {unknown[0]!r} of train; known: {', '.join(DEFAULTS)}"
        )
    opt = {**DEFAULTS, **options}
    for name in ("epochs", "seed", "widen"):
        if not _is_int(opt[name]) or opt[name] < 0:
            raise _bad(name, "a whole number ≥ 0", opt[name])
    for name in ("batch", "patience"):
        if not _is_int(opt[name]) or opt[name] < 1:
            raise _bad(name, "a whole number ≥ 1", opt[name])
    for name, choices in (("loss", LOSSES), ("optimizer", OPTIMIZERS), ("init", INITS)):
        if opt[name] not in choices:
            raise _bad(name, f"one of {', '.join(choices)}", opt[name])
    if opt["lr"] is None:
        opt["lr"] = DEFAULT_LR[opt["optimizer"]]
    if not isinstance(opt["lr"], numbers.Real) or not (0 < opt["lr"] < math.inf):  # type: ignore[operator]
        raise _bad("lr", "a positive number", opt["lr"])
    v = opt["validation"]
    if not isinstance(v, numbers.Real) or isinstance(v, bool) or not (0 <= v < 1):  # type: ignore[operator]
        raise _bad("validation", "a fraction in [0, 1)", v)
    a = opt["anchor"]
    if a != "auto" and (
        not isinstance(a, numbers.Real) or isinstance(a, bool) or not (0 <= a < math.inf)  # type: ignore[operator]
    ):
        raise _bad("anchor", "'auto' or a number ≥ 0", a)
    t = opt["tolerance"]
    if not isinstance(t, numbers.Real) or isinstance(t, bool) or not (0 < t < 0.5):  # type: ignore[operator]
        raise _bad("tolerance", "between 0 and 0.5 (exclusive)", t)
    if isinstance(opt["freeze"], str):
        opt["freeze"] = tuple(s.strip() for s in opt["freeze"].split(",") if s.strip())
    opt["freeze"] = tuple(opt["freeze"])
    opt["lr"] = float(opt["lr"])
    opt["validation"] = float(v)
    opt["tolerance"] = float(t)
    if a != "auto":
        opt["anchor"] = float(a)
    return opt


def _targets(
    network: Network, X: Any, y: Any, outputs: Sequence[str]
) -> tuple[np.ndarray, np.ndarray]:
    """``X`` and the training targets (0/1, or ±1 in the bipolar encoding), checked."""
    X = np.asarray(X, dtype=float)
    y = np.asarray(y, dtype=float)
    if y.ndim == 1:
        y = y[:, None]
    if X.ndim != 2 or X.shape[1] != len(network.inputs):
        raise UsageError(f"X must have shape (rows, {len(network.inputs)}); got {X.shape}")
    if y.shape != (len(X), len(outputs)):
        raise UsageError(f"y must have shape ({len(X)}, {len(outputs)}); got {y.shape}")
    if len(X) == 0:
        raise UsageError("no data rows to train on")
    if not np.all(np.isfinite(X)):
        raise UsageError("X holds a value that is not a finite number")
    if not np.all((y == 0) | (y == 1)):
        raise UsageError("labels in y must be 0 or 1")
    if network.encoding == "bipolar":
        y = 2.0 * y - 1.0
    return X, y


def _split(n: int, fraction: float, rng: np.random.Generator) -> tuple[np.ndarray, np.ndarray]:
    """Training and validation row indices (sorted); no validation part when it would be
    empty or leave no training rows."""
    k = int(round(fraction * n))
    if fraction == 0 or k == 0 or k >= n:
        return np.arange(n), np.arange(0)
    order = rng.permutation(n)
    return np.sort(order[k:]), np.sort(order[:k])


def train(
    network: Network,
    X: Any,
    y: Any,
    *,
    outputs: Sequence[str] | None = None,
    epochs: int = DEFAULTS["epochs"],
    seed: int = DEFAULTS["seed"],
    loss: str = DEFAULTS["loss"],
    optimizer: str = DEFAULTS["optimizer"],
    lr: float | None = DEFAULTS["lr"],
    batch: int = DEFAULTS["batch"],
    widen: int = DEFAULTS["widen"],
    freeze: Sequence[str] | str = DEFAULTS["freeze"],
    init: str = DEFAULTS["init"],
    validation: float = DEFAULTS["validation"],
    anchor: float | str = DEFAULTS["anchor"],
    tolerance: float = DEFAULTS["tolerance"],
    patience: int = DEFAULTS["patience"],
    progress: bool = False,
    callback: Callable[[int, Network], None] | None = None,
) -> TrainResult:
    """Train ``network`` on input rows ``X`` and 0/1 labels ``y``; ``network`` is unchanged.

    Parameters
    ----------
    network : Network
        A compiled step network (the usual case) or a soft strict layered one.
    X : array, (rows, len(network.inputs))
        Input units (see :func:`thresholdc.train.data.load_data`).
    y : array, (rows, len(outputs))
        0/1 labels of the trained outputs.
    outputs : sequence of str, optional
        The outputs ``y``'s columns label, in network order (default: every output).
    epochs, batch, lr, optimizer, loss
        Mini-batch training: ``loss`` is ``mse`` (mean over rows of the squared error summed
        over outputs) or ``cross-entropy`` (sigmoid output layer); ``optimizer`` is ``adam``
        or ``sgd``; ``lr=None`` picks 0.01 for adam, 0.5 for sgd.
    seed : int
        Seeds every random choice, so a run is reproducible.
    widen : int
        Extra hidden units per hidden layer (role ``extra``).
    freeze : sequence of str or "A,B"
        Rule neurons kept fixed, with everything they read.
    init : {"rules", "random"}
        Start from the rules (warm start) or from random weights (the baseline).
    validation : float
        Fraction of rows held out for early stopping (0 turns it off).
    anchor : float or "auto"
        λ of the penalty ``(λ/2)·Σ(θ − θ_start)²`` (toward 0 with ``init="random"``);
        ``"auto"`` picks it by cross-validation over ``ANCHOR_GRID``; 0 turns it off.
    tolerance : float
        Certified distance of every neuron of the start from its rule value.
    patience : int
        Epochs without a better validation loss before stopping.
    progress : bool
        Progress bars (tqdm) on a terminal.
    callback : callable, optional
        ``callback(epoch, network)`` after every epoch of the final run (epoch 0: the start).

    Returns
    -------
    TrainResult
    """
    opt = check_options(
        epochs=epochs, seed=seed, loss=loss, optimizer=optimizer, lr=lr, batch=batch,
        widen=widen, freeze=freeze, init=init, validation=validation, anchor=anchor,
        tolerance=tolerance, patience=patience,
    )
    names = list(network.output_names) if outputs is None else list(outputs)
    unknown = [n for n in names if n not in network.output_names]
    if unknown:
        listed = ", ".join(network.output_names)
        raise UsageError(f"unknown output {unknown[0]!r} (outputs: {listed})")
    names = [n for n in network.output_names if n in names]  # network order
    if outputs is not None and list(outputs) != names:
        raise UsageError("outputs must be listed in network order, each once")
    X, T = _targets(network, X, y, names)

    streams = [np.random.default_rng(s) for s in np.random.SeedSequence(opt["seed"]).spawn(4)]
    # a real-valued unit's random links are scaled down by its largest |value| in the data
    scale = np.maximum(1.0, np.abs(X).max(axis=0))
    start: Start = prepare_start(
        network, rng=streams[0], init=opt["init"], widen=opt["widen"],
        freeze=opt["freeze"], tolerance=opt["tolerance"], input_scale=scale,
    )
    lay = start.layout
    if opt["loss"] == "cross-entropy" and lay.activations[-1] != "sigmoid":
        raise UsageError(
            f"cross-entropy needs a sigmoid output layer; this network's is {lay.activations[-1]}"
        )
    cols = lay.output_columns(names)
    threshold = network.decision_threshold
    fit_options = dict(
        epochs=opt["epochs"], lr=opt["lr"], batch=opt["batch"], optimizer=opt["optimizer"],
        loss=opt["loss"], target=(start.target_weights, start.target_biases),
        masks=(start.masks_w, start.masks_b), threshold=threshold,
    )
    if opt["anchor"] == "auto":
        choice = choose_anchor(
            start.weights, start.biases, lay.activations, X, T, cols, rng=streams[2],
            grid=ANCHOR_GRID, folds=FOLDS, progress=progress, **fit_options,
        )
    else:
        choice = AnchorChoice(opt["anchor"], "fixed")

    tr, va = _split(len(X), opt["validation"], streams[1])
    hook = None
    if callback is not None:
        def hook(epoch: int, W: list[np.ndarray], b: list[np.ndarray]) -> None:
            callback(epoch, lay.network(W, b))

    fit = fit_params(
        start.weights, start.biases, lay.activations, X[tr], T[tr], cols, rng=streams[3],
        anchor=choice.value, validation=(X[va], T[va]) if len(va) else None,
        patience=opt["patience"], progress=progress, callback=hook, **fit_options,
    )
    kept = fit.history[fit.best_epoch]
    all_loss, _ = data_loss(fit.weights, fit.biases, lay.activations, X, T, cols, opt["loss"])
    recorded = {k: (list(v) if isinstance(v, tuple) else v) for k, v in opt.items()}
    training = {
        "options": recorded,
        "outputs": names,
        "rows": int(len(X)),
        "validation_rows": int(len(va)),
        "anchor": choice.to_dict(),
        "frozen": list(start.frozen),
        "epochs_run": fit.history[-1].epoch,
        "best_epoch": fit.best_epoch,
        "loss": all_loss,
        "training_accuracy": kept.accuracy,
        "validation_accuracy": kept.validation_accuracy,
    }
    meta = {k: v for k, v in network.meta.items() if k not in ("certificate", "verification")}
    meta["training"] = training
    trained = lay.network(fit.weights, fit.biases, meta)
    return TrainResult(
        trained, start.network(), fit.history, fit.best_epoch, choice, start.frozen,
        tuple(names), recorded,
    )

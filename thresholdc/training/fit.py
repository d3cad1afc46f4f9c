"""``train``: fit a network to labelled data, starting from its rules.

The steps, in order (every choice in :class:`~thresholdc.training.options.TrainOptions`):

1. the start: with the rule file at hand (given, or recorded in the network's ``meta.rules``
   by an earlier training run) the rule-structured start of
   :mod:`thresholdc.training.kbstart` for each ω tried; else, or with ``init="certified"``, the
   compiled network with certified sigmoid gains.  Made dense with small random links
   (:func:`thresholdc.training.warmstart.prepare_start`; ``widen``, ``freeze``), the rules'
   links anchored to their start and the others lightly decayed; ``init="random"`` is the
   baseline without rules: a dense one-hidden-layer network (``hidden`` units, default the
   start's hidden units) from Glorot-uniform weights, λ as plain weight decay;
2. real inputs standardised by their declared range (:mod:`thresholdc.training.scaling`);
3. the loss: cross-entropy for a sigmoid output layer, else mse;
4. λ and ω: chosen by cross-validation along the λ path with early stopping on the held-out
   folds (:mod:`thresholdc.training.search`), then the same path on all rows; the untrained
   start ("rules alone", λ = ∞) is a candidate too; or, both fixed, one fit with early
   stopping on a held-out ``validation`` fraction;
5. full-batch L-BFGS where rows × units fit (else Adam), weights folded back to the user's
   units; the start's worst error on the rule domain and the held-out error before and after
   training are recorded in ``meta.training``.

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> rules = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
...                 (Output("y", "y"),))
>>> X = np.array([[0, 0], [0, 1], [1, 0], [1, 1]] * 4, dtype=float)
>>> result = train(rules, X, X[:, :1] * X[:, 1:], anchor=0.1, workers=1)
>>> result.network.decide(X[:4]).ravel().tolist()
[False, False, False, True]
"""

from __future__ import annotations

import math
import os
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ..errors import UsageError
from ..ir.network import Network
from ..lazy import lazy_module
from ..logic import source_from_text
from .kbstart import rule_network
from .lbfgs import Problem, fit, pack
from .loop import Epoch
from .options import ANCHOR_GRID, WEIGHT_GRID, TrainOptions
from .scaling import from_standard, input_scaling, standardise
from .search import Search, final_path, search
from .threads import one_blas_thread
from .tolerance import start_tolerance
from .warmstart import Start, prepare_start, soft_network

sparse = lazy_module("scipy.sparse")

__all__ = ["TrainResult", "train", "DEFAULT_NORM"]

#: Inputs with at most this fraction of non-zero units (one-hot data) are stored sparse.
SPARSE_BELOW = 0.25
#: The ω the anchor is measured in when the start has no rule weight (certified, random).
DEFAULT_NORM = 4.0


@dataclass(frozen=True)
class TrainResult:
    """A finished training run.

    ``network`` is the trained network (the user's units), ``start`` the dense network
    training began from, ``history`` one :class:`~thresholdc.training.loop.Epoch` per
    iteration of the final fit (0 is the start), ``best_epoch`` the iteration kept,
    ``search`` the cross-validation (None when λ and ω were fixed; ``anchor`` is ∞ when it
    kept the rules alone, and ``network`` is then the start), ``tolerance`` the start's
    worst output error on the rule domain (None without rules), ``held_out`` the held-out
    error before and after training (None without held-out rows).
    """

    network: Network
    start: Network
    history: tuple[Epoch, ...]
    best_epoch: int
    options: TrainOptions
    outputs: tuple[str, ...]
    init: str
    weight: float
    anchor: float
    frozen: tuple[str, ...] = ()
    search: Search | None = None
    tolerance: dict[str, Any] | None = None
    held_out: dict[str, Any] | None = None
    notes: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        """The ``train --json`` log (without file names)."""
        return {
            "outputs": list(self.outputs),
            "options": self.options.to_dict(),
            "init": self.init,
            "weight": self.weight,
            "anchor": None if math.isinf(self.anchor) else self.anchor,
            "search": None if self.search is None else self.search.to_dict(),
            "start_tolerance": self.tolerance,
            "held_out": self.held_out,
            "frozen": list(self.frozen),
            "best_epoch": self.best_epoch,
            "notes": list(self.notes),
            "epochs": [e.to_dict() for e in self.history],
        }

    def __repr__(self) -> str:
        return (f"TrainResult({self.network!r}, init={self.init!r}, weight={self.weight}, "
                f"anchor={self.anchor}, best_epoch={self.best_epoch})")


def _targets(network: Network, X: Any, y: Any, outputs: Sequence[str]) -> tuple[np.ndarray,
                                                                               np.ndarray]:
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


def _rules_of(network: Network, rules: Any) -> Any:
    """The rule source to build the start from: ``rules``, or the one recorded in meta."""
    if rules is None:
        recorded = (network.meta or {}).get("rules")
        if not recorded or not recorded.get("text"):
            return None
        rules = source_from_text(recorded["text"], recorded.get("file", "<rules>"), "rules")
    elif isinstance(rules, str):
        rules = source_from_text(rules, "<rules>", "rules")
    if getattr(rules, "program", None) is None:
        raise UsageError("the rule-structured start needs a rule file, not a netlist")
    if tuple(rules.inputs) != tuple(network.inputs):
        raise UsageError("the rule file's input units differ from the network's")
    if tuple(rules.outputs) != tuple(network.output_names):
        raise UsageError("the rule file's outputs differ from the network's")
    return rules


def _unused(opt: TrainOptions, init: str, optimizer: str, searched: bool) -> list[str]:
    """A note for every option set away from its default that this run cannot honour.

    >>> notes = _unused(TrainOptions(lr=0.1, tolerance=0.1), "rules", "lbfgs", True)
    >>> len(notes), notes[0]
    (2, 'lr has no effect with the lbfgs optimizer (Adam and SGD only)')
    """
    d = TrainOptions()
    out = []
    if optimizer == "lbfgs":
        out += [f"{name} has no effect with the lbfgs optimizer (Adam and SGD only)"
                for name in ("lr", "batch") if getattr(opt, name) != getattr(d, name)]
    if init != "random" and opt.hidden != d.hidden:
        out.append("hidden has no effect: it sets the width of the random baseline"
                   " (--init random)")
    if init != "certified" and opt.tolerance != d.tolerance:
        out.append("tolerance has no effect: it sets the certified start (--init certified)")
    if searched and opt.validation != d.validation:
        out.append("validation has no effect: λ and ω are searched, and early stopping uses"
                   " the cross-validation folds")
    return out


def _standard_net(net: Network, shift: np.ndarray, scale: np.ndarray) -> Network:
    """A soft strict layered network with its first layer for standardised inputs."""
    col = {u: i for i, u in enumerate(net.inputs)}
    neurons = []
    for n in net.neurons:
        if n.layer == 1 and n.inputs:
            k = np.array([col[i] for i in n.inputs])
            w = np.asarray(n.weights, dtype=float)
            n = replace(n, weights=tuple(float(x) for x in w * scale[k]),
                        bias=float(n.bias + w @ shift[k]))
        neurons.append(n)
    return replace(net, neurons=tuple(neurons))


def _raw_net(start: Start, W: list[np.ndarray], b: list[np.ndarray], shift: np.ndarray,
             scale: np.ndarray, meta: dict[str, Any]) -> Network:
    W, b = from_standard(W, b, shift, scale)
    return start.layout.network(W, b, meta)


def train(
    network: Network,
    X: Any,
    y: Any,
    *,
    outputs: Sequence[str] | None = None,
    rules: Any = None,
    options: TrainOptions | None = None,
    progress: bool = False,
    **changes: Any,
) -> TrainResult:
    """Train ``network`` on input rows ``X`` and 0/1 labels ``y``; ``network`` is unchanged.

    Parameters
    ----------
    network : Network
        A compiled step network, a soft strict layered one, a rule-structured start
        (:func:`thresholdc.training.kbstart.rule_network`) or an earlier training result.
    X : array, (rows, len(network.inputs))
        Input units (see :func:`thresholdc.training.data.load_data`).
    y : array, (rows, len(outputs))
        0/1 labels of the trained outputs.
    outputs : sequence of str, optional
        The outputs ``y``'s columns label, in network order (default: every output).
    rules : RuleSource or str, optional
        The rule file the network was compiled from (default: ``meta.rules`` if recorded);
        with it ``init="rules"`` builds the rule-structured start.
    options : TrainOptions, optional
        Every choice (defaults: ``TrainOptions()``); keyword ``changes`` override fields.
    progress : bool
        Progress bars on a terminal.

    Returns
    -------
    TrainResult
    """
    with one_blas_thread():
        return _train(network, X, y, outputs, rules, options, progress, changes)


def _train(network: Network, X: Any, y: Any, outputs: Sequence[str] | None, rules: Any,
           options: TrainOptions | None, progress: bool, changes: dict[str, Any]) -> TrainResult:
    opt = options or TrainOptions()
    if changes:
        opt = TrainOptions.of(**{**opt.to_dict(), "workers": opt.workers, **changes})
    names = list(network.output_names) if outputs is None else list(outputs)
    unknown = [n for n in names if n not in network.output_names]
    if unknown:
        raise UsageError(f"unknown output {unknown[0]!r} (outputs: "
                         f"{', '.join(network.output_names)})")
    ordered = [n for n in network.output_names if n in names]
    if outputs is not None and list(outputs) != ordered:
        raise UsageError("outputs must be listed in network order, each once")
    X, T = _targets(network, X, y, ordered)
    seeds = np.random.SeedSequence(opt.seed).spawn(4)
    streams = [np.random.default_rng(s) for s in seeds]
    notes: list[str] = []

    # 1. the start(s), one per ω tried
    source = _rules_of(network, rules) if opt.init != "certified" else None
    if opt.init == "certified" and rules is not None:
        source = _rules_of(network, rules)
    init = opt.init
    if init == "rules" and source is None:
        init = "certified"
        notes.append("no rule file at hand: started from the compiled network with certified"
                     " gains (give the rule file for the rule-structured start)")
    structured = source is not None and init in ("rules", "random")
    if structured and init == "rules":
        weights = WEIGHT_GRID if opt.weight == "auto" else (float(opt.weight),)
    else:
        weights = (DEFAULT_NORM if opt.weight == "auto" else float(opt.weight),)
    shift, scale = input_scaling(network, X)
    Xs = standardise(X, shift, scale)
    starts: dict[float, Start] = {}
    for w in weights:
        if structured:
            assert source is not None  # structured implies a source
            if source.program is None:
                raise UsageError(f"{source.file}: the rule-structured start needs a rule file, "
                                 "not a netlist (use init='certified')")
            soft = rule_network(source.program, weight=w)
            if opt.widen:
                soft = soft_network(soft, tolerance=opt.tolerance, hidden=True)
        else:
            soft = soft_network(network, tolerance=opt.tolerance, hidden=opt.widen > 0)
        starts[w] = prepare_start(
            _standard_net(soft, shift, scale), rng=np.random.default_rng(seeds[0]),
            init="random" if init == "random" else "rules", widen=opt.widen, freeze=opt.freeze,
            hidden=opt.hidden,
        )
    lay = starts[weights[0]].layout
    last = lay.activations[-1]
    loss = opt.loss if opt.loss != "auto" else ("cross-entropy" if last == "sigmoid" else "mse")
    if loss == "cross-entropy" and last != "sigmoid":
        raise UsageError(f"cross-entropy needs a sigmoid output layer; this network's is {last}")
    cells = len(X) * sum(lay.sizes)
    optimizer = opt.optimizer
    if optimizer == "auto":
        optimizer = "lbfgs" if cells <= opt.lbfgs_cells else "adam"
    cols = lay.output_columns(ordered)
    threshold = network.decision_threshold

    Xfit: Any = Xs
    if optimizer == "lbfgs" and np.count_nonzero(Xs) <= SPARSE_BELOW * Xs.size:
        Xfit = sparse.csr_array(Xs)

    def problem(w: float) -> tuple[Problem, np.ndarray]:
        s = starts[w]
        mask = pack(s.masks_w, s.masks_b)
        p = Problem.of(lay.activations, Xfit, T, cols, loss, s.target_weights, s.target_biases,
                       mask=mask, unit=w, threshold=threshold, pull=pack(s.pull_w, s.pull_b))
        return p, pack(s.weights, s.biases)

    fit_options: dict[str, Any] = dict(
        iterations=opt.epochs, patience=opt.patience, optimizer=optimizer,
        lr=opt.learning_rate(optimizer), batch=opt.batch)
    grid: tuple[float, ...] = ANCHOR_GRID if opt.anchor == "auto" else (float(opt.anchor),)
    found: Search | None = None
    held: dict[str, Any] | None = None
    if init == "random" and len(grid) > 1 and len(X) >= 2 * opt.folds:
        # Weight decay: every λ fitted on its own from the random start (a path from strong
        # decay first shrinks the weights to the symmetric point near 0, which the weaker
        # λ's early stopping does not leave).  Each λ is a "start" of the search whose anchor
        # weights carry λ, fitted at λ = 1.
        base, theta0 = problem(weights[0])
        by_decay = {lam: (replace(base, pull=base.weights() * lam), theta0) for lam in grid}
        raw = search(by_decay, grid=(1.0,), folds=opt.folds, rng=streams[2],
                     workers=opt.workers, progress=progress, **fit_options)
        w, lam = weights[0], raw.weight
        p = by_decay[lam][0]
        theta, history, best = final_path(p, theta0, raw, seed=opt.seed, **fit_options)
        found = replace(raw, weight=w, anchor=lam, grid=(lam,), scores=tuple(
            {**sc, "weight": w, "anchor": sc["weight"]} for sc in raw.scores))
    elif (len(grid) > 1 or len(weights) > 1) and len(X) >= 2 * opt.folds:
        found = search({w: problem(w) for w in weights}, grid=grid, folds=opt.folds,
                       rng=streams[2], workers=opt.workers, progress=progress,
                       rules_alone=opt.anchor == "auto" and init != "random", **fit_options)
        w, lam = found.weight, found.anchor
        p, theta0 = problem(w)
        theta, history, best = final_path(p, theta0, found, seed=opt.seed, **fit_options)
    if found is not None:
        held = {"rows": "folds", "start_error": found.start_error, "error": found.error,
                "start_loss": found.start_loss, "loss": found.loss}
    else:
        if len(grid) > 1 or len(weights) > 1:
            notes.append(f"too few rows to cross-validate: λ = {grid[-2]}, ω = {weights[0]}")
        w, lam = weights[0], (grid[-2] if len(grid) > 1 else grid[0])
        p, theta0 = problem(w)
        tr, va = _split(len(X), opt.validation, streams[1])
        out = p.rows(tr)
        run = fit(
            out, theta0, lam=lam, held_out=(Xfit[va], T[va]) if len(va) else None,
            rng=streams[3], **fit_options)
        theta, best, history = run.theta, run.best, run.history
        if len(va):
            e0, eb = history[0], history[best]
            assert e0.validation_accuracy is not None and eb.validation_accuracy is not None
            held = {"rows": int(len(va)), "start_error": 1.0 - e0.validation_accuracy,
                    "error": 1.0 - eb.validation_accuracy, "start_loss": e0.validation_loss,
                    "loss": eb.validation_loss}
    notes.extend(_unused(opt, init, optimizer, found is not None))
    if held is not None:
        held["worse"] = bool(held["error"] > held["start_error"] + 1e-12)
        if held["worse"]:
            notes.append(f"training ended worse than it started on held-out rows: error "
                         f"{held['start_error']:.4f} -> {held['error']:.4f}")

    start = starts[w]
    W, b = p.unpack(theta)
    meta = {k: v for k, v in network.meta.items()
            if k not in ("certificate", "verification", "start", "training")}
    if source is not None:
        meta["rules"] = {"file": os.path.basename(source.file), "sha256": source.sha256,
                         "text": source.text}
    start_net = _raw_net(start, start.weights, start.biases, shift, scale, dict(meta))
    tolerance = None
    if source is not None and init != "random":
        tolerance = start_tolerance(start_net, source, time_limit=opt.bound_time)
    training = {
        "options": opt.to_dict(),
        "init": init,
        "weight": w,
        "anchor": None if math.isinf(lam) else lam,
        "loss": loss,
        "optimizer": optimizer,
        "outputs": ordered,
        "rows": int(len(X)),
        "frozen": list(start.frozen),
        "search": None if found is None else found.to_dict(),
        "start_tolerance": tolerance,
        "held_out": held,
        "epochs_run": history[-1].epoch,
        "best_epoch": best,
        "notes": notes,
    }
    meta["training"] = training
    trained = _raw_net(start, W, b, shift, scale, meta)
    return TrainResult(trained, start_net, history, best, opt, tuple(ordered), init, w, lam,
                       start.frozen, found, tolerance, held, tuple(notes))

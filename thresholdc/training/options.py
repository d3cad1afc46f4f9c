"""The options of a training run: one frozen, validated :class:`TrainOptions`.

Every option is checked once, when the object is made; a bad value is a UsageError that
names the option and lists the valid values.  The command line takes its defaults and
choices from here (:data:`CHOICES` and ``TrainOptions()``), so the two never disagree.

>>> TrainOptions().loss, TrainOptions(anchor=0.1).anchor
('auto', 0.1)
>>> TrainOptions(init="warm")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
thresholdc.errors.UsageError: the 'init' option of train must be one of rules, ...
"""

from __future__ import annotations

import math
import numbers
from dataclasses import asdict, dataclass, fields, replace
from typing import Any

from ..errors import UsageError

__all__ = ["TrainOptions", "CHOICES", "ANCHOR_GRID", "WEIGHT_GRID", "DEFAULT_LR"]

#: The anchor grid λ, in units where the penalty is ``(λ/2)·Σ((θ − θ_start)/ω)²`` and the
#: data loss is a mean over rows: 3 keeps the rules on any data set of this tool's size
#: (moving one rule weight by ω costs 1.5, twice the largest per-row cross-entropy of an
#: undecided unit), 0 is free training.  The search walks it from the strongest to the
#: weakest, each fit starting where the previous one stopped.
ANCHOR_GRID = (3.0, 0.3, 0.03, 0.0)
#: The rule weights ω the search tries (Towell & Shavlik 1994 used 4, from memory).
WEIGHT_GRID = (4.0, 8.0)
DEFAULT_LR = {"adam": 0.01, "sgd": 0.5}

CHOICES: dict[str, tuple[str, ...]] = {
    "loss": ("auto", "cross-entropy", "mse"),
    "optimizer": ("auto", "lbfgs", "adam", "sgd"),
    "init": ("rules", "certified", "random"),
}


def _bad(name: str, want: str, got: Any) -> UsageError:
    return UsageError(f"the {name!r} option of train must be {want}; got {got!r}")


def _is_int(x: Any) -> bool:
    return isinstance(x, numbers.Integral) and not isinstance(x, bool)


def _is_real(x: Any) -> bool:
    return isinstance(x, numbers.Real) and not isinstance(x, bool) and math.isfinite(x)


@dataclass(frozen=True)
class TrainOptions:
    """Every choice of a training run (the defaults need no tuning).

    Attributes
    ----------
    init : {"rules", "certified", "random"}
        ``rules``: the rule-structured start (one unit per definition and per and/or term,
        weights ±ω, see :mod:`thresholdc.training.kbstart`); ``certified``: the compiled
        network with certified sigmoid gains (``tolerance``); ``random``:
        the baseline without rules, a dense network with one hidden layer of ``hidden``
        sigmoid units from Glorot-uniform weights, λ acting as weight decay toward 0.
    weight : "auto" or float
        ω of the rule-structured start; ``auto`` chooses it from :data:`WEIGHT_GRID` by
        cross-validation together with λ.
    anchor : "auto" or float
        λ of the pull toward the start, ``(λ/2)·Σ((θ − θ_start)/ω)²`` (toward 0 for
        ``random``); ``auto`` chooses it from :data:`ANCHOR_GRID` by cross-validation.
    loss : {"auto", "cross-entropy", "mse"}
        ``auto`` is cross-entropy for a sigmoid output layer, else mse.
    optimizer : {"auto", "lbfgs", "adam", "sgd"}
        ``auto``: full-batch L-BFGS when rows × units fit in ``lbfgs_cells``, else Adam.
    epochs : int
        Largest number of L-BFGS iterations (per λ of the path) or of passes (Adam, SGD).
    patience : int
        Iterations (passes) without a better held-out loss before stopping.
    folds : int
        Folds of the cross-validation; their held-out rows also decide when to stop.
    validation : float
        Fraction of rows held out for early stopping when nothing is searched (both λ and
        ω fixed); 0 trains on every row for ``epochs``.
    workers : int
        Processes the cross-validation runs in (results do not depend on it).
    widen : int
        Extra hidden units per hidden layer (role ``extra``).
    hidden : int
        Hidden units of the ``random`` baseline; 0: as many as the start it stands in for has
        hidden units (at least 8).
    freeze : tuple of str
        Rule neurons kept fixed, with every neuron they read.
    tolerance : float
        Certified distance from the rules of the ``certified`` start.
    lr, batch
        Adam/SGD only (``lr=None``: 0.01 for Adam, 0.5 for SGD).
    lbfgs_cells : int
        The largest rows × units for full-batch L-BFGS under ``optimizer="auto"``.
    bound_time : float
        Seconds the start's worst error may take to bound where the rule domain is too large
        to enumerate (0: not bounded there).
    seed : int
        Seeds every random choice.
    """

    init: str = "rules"
    weight: float | str = "auto"
    anchor: float | str = "auto"
    loss: str = "auto"
    optimizer: str = "auto"
    epochs: int = 300
    patience: int = 3
    folds: int = 3
    validation: float = 0.2
    workers: int = 2
    widen: int = 0
    hidden: int = 0
    freeze: tuple[str, ...] = ()
    tolerance: float = 0.25
    lr: float | None = None
    batch: int = 32
    lbfgs_cells: int = 20_000_000
    bound_time: float = 1.0
    seed: int = 0

    def __post_init__(self) -> None:
        for name, choices in CHOICES.items():
            if getattr(self, name) not in choices:
                raise _bad(name, f"one of {', '.join(choices)}", getattr(self, name))
        for name in ("epochs", "seed", "widen", "hidden"):
            v = getattr(self, name)
            if not _is_int(v) or v < 0:
                raise _bad(name, "a whole number ≥ 0", v)
        for name in ("patience", "batch", "workers", "lbfgs_cells"):
            v = getattr(self, name)
            if not _is_int(v) or v < 1:
                raise _bad(name, "a whole number ≥ 1", v)
        if not _is_int(self.folds) or self.folds < 2:
            raise _bad("folds", "a whole number ≥ 2", self.folds)
        if self.anchor != "auto":
            if not _is_real(self.anchor) or float(self.anchor) < 0:
                raise _bad("anchor", "'auto' or a number ≥ 0", self.anchor)
            object.__setattr__(self, "anchor", float(self.anchor))
        if self.weight != "auto":
            if not _is_real(self.weight) or float(self.weight) <= 0:
                raise _bad("weight", "'auto' or a number > 0", self.weight)
            object.__setattr__(self, "weight", float(self.weight))
        if not _is_real(self.validation) or not 0 <= self.validation < 1:
            raise _bad("validation", "a fraction in [0, 1)", self.validation)
        if not _is_real(self.tolerance) or not 0 < self.tolerance < 0.5:
            raise _bad("tolerance", "between 0 and 0.5 (exclusive)", self.tolerance)
        if not _is_real(self.bound_time) or self.bound_time < 0:
            raise _bad("bound_time", "a number of seconds ≥ 0", self.bound_time)
        if self.lr is not None and (not _is_real(self.lr) or self.lr <= 0):
            raise _bad("lr", "a positive number", self.lr)
        freeze = self.freeze
        if isinstance(freeze, str):
            freeze = tuple(s.strip() for s in freeze.split(",") if s.strip())
        object.__setattr__(self, "freeze", tuple(freeze))
        object.__setattr__(self, "validation", float(self.validation))
        object.__setattr__(self, "tolerance", float(self.tolerance))
        if self.freeze and self.init == "random":
            raise UsageError("--freeze keeps rule neurons fixed, so it needs --init rules or"
                             " --init certified")

    @classmethod
    def of(cls, **options: Any) -> TrainOptions:
        """The options from keyword arguments; an unknown name is a UsageError listing the
        known ones.

        >>> TrainOptions.of(epochs=5).epochs
        5
        """
        known = [f.name for f in fields(cls)]
        unknown = sorted(set(options) - set(known))
        if unknown:
            raise UsageError(f"unknown option {unknown[0]!r} of train; known: {', '.join(known)}")
        return cls(**options)

    def with_(self, **changes: Any) -> TrainOptions:
        """A copy with some options changed (checked again)."""
        return replace(self, **changes)

    def learning_rate(self, optimizer: str) -> float:
        """``lr``, or the default of ``optimizer``."""
        return float(self.lr) if self.lr is not None else DEFAULT_LR.get(optimizer, 0.01)

    def searches(self) -> bool:
        """True when cross-validation chooses λ or ω."""
        return self.anchor == "auto" or (self.weight == "auto" and self.init != "certified")

    def to_dict(self) -> dict[str, Any]:
        """The options as recorded in ``meta.training.options`` (JSON types), without
        ``workers``, which never changes the result (so the file does not depend on it).

        >>> "workers" in TrainOptions().to_dict(), TrainOptions().to_dict()["init"]
        (False, 'rules')
        """
        d = asdict(self)
        d["freeze"] = list(self.freeze)
        del d["workers"]
        return d

"""Choosing the anchor λ and the rule weight ω by cross-validation, reusing work.

The rows are split into ``folds`` parts (a seeded permutation).  For every ω and every part
one *path* runs: starting from the ω start, the network is fitted on the other parts for each
λ of the grid in turn, strongest first, each fit starting where the previous one stopped and
stopping early on the held-out part.  So the strong anchors (close to the start) cost a few
iterations each and every later fit starts near its answer.  Per (ω, λ) the path records the
held-out loss and error of the kept parameters and how many iterations were kept.  A path
ends early after :data:`GIVE_UP` λ in a row that did not improve its best held-out loss
(past the best λ the held-out loss only grows); a λ counts only where every fold reached it.

The choice is the (ω, λ) with the smallest mean held-out loss (on a tie, the larger λ, then
the smaller ω).  The final network walks the same path on all rows, each λ for the median
number of iterations the folds kept at that λ, so early stopping carries over from the held-out
folds and no row is set aside.

Paths are independent, so they run in ``workers`` processes; each is deterministic, so the
result does not depend on the number of workers.

>>> import numpy as np
>>> from thresholdc.network.model import Network, Neuron, Output
>>> from thresholdc.training.mlp import Layout
>>> from thresholdc.training.lbfgs import Problem, pack
>>> net = Network(("a",), (Neuron("y", 1, ("a",), (4.0,), -2.0, "sigmoid"),), (Output("y", "y"),))
>>> lay = Layout.of(net)
>>> X = np.tile([[0.0], [1.0]], (6, 1)); T = X.copy()
>>> p = Problem.of(lay.activations, X, T, lay.output_columns(), "cross-entropy", *lay.params(net))
>>> s = search({4.0: (p, p.target)}, grid=(1.0, 0.0), folds=3, rng=np.random.default_rng(0),
...            workers=1)
>>> s.weight, s.anchor in (1.0, 0.0), len(s.scores)
(4.0, True, 2)
"""

from __future__ import annotations

import concurrent.futures as cf
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..progress import bar as progress_bar
from .lbfgs import Problem, Run, fit
from .threads import one_blas_thread

__all__ = ["GIVE_UP", "Search", "search", "walk_path"]

#: A fold's path ends after this many λ in a row without a better held-out loss.
GIVE_UP = 1


@dataclass(frozen=True)
class Search:
    """The outcome of the search.

    ``scores`` holds per (ω, λ) the mean held-out loss, its standard error, the mean held-out
    error rate and the median iterations kept; ``start_error``/``start_loss`` are the
    held-out means of the chosen ω's start (before any step).
    """

    weight: float
    anchor: float
    grid: tuple[float, ...]
    scores: tuple[dict[str, float], ...]
    steps: tuple[int, ...]
    start_loss: float
    start_error: float
    loss: float
    error: float

    def to_dict(self) -> dict[str, Any]:
        return {
            "weight": self.weight,
            "anchor": self.anchor,
            "grid": list(self.grid),
            "path_iterations": list(self.steps),
            "held_out": {"start_loss": self.start_loss, "start_error": self.start_error,
                         "loss": self.loss, "error": self.error},
            "scores": [dict(s) for s in self.scores],
        }


def walk_path(
    problem: Problem, theta0: np.ndarray, grid: Sequence[float], steps: Sequence[int] | None,
    *, held_out: tuple[np.ndarray, np.ndarray] | None = None, seed: int = 0,
    give_up: int | None = None, **fit_options: Any,
) -> list[Run]:
    """Fit for each λ of ``grid`` in turn, each from where the previous fit stopped.

    ``steps[i]`` caps the iterations at ``grid[i]`` (default: ``fit_options['iterations']``).
    With ``held_out`` rows and ``give_up``, the path ends after ``give_up`` λ in a row that
    did not lower the best held-out loss so far (the rest of the path is not better).
    """
    runs: list[Run] = []
    theta = theta0
    iterations = fit_options.pop("iterations", 300)
    best, since = float("inf"), 0
    for i, lam in enumerate(grid):
        n = iterations if steps is None else int(steps[i])
        run = fit(problem, theta, lam=float(lam), iterations=n, held_out=held_out,
                  rng=np.random.default_rng([seed, i]), **fit_options)
        runs.append(run)
        theta = run.theta
        if held_out is not None and give_up is not None:
            value = run.history[run.best].validation_loss
            assert value is not None
            if value < best - 1e-9:
                best, since = value, 0
            else:
                since += 1
                if since >= give_up:
                    break
    return runs


def _path_job(job: tuple[Any, ...]) -> list[tuple[float, float, float, int]]:
    """One (ω, fold) path: per λ the held-out loss and error, and the iterations kept; the
    first entry is the start."""
    problem, theta0, train, test, grid, seed, fit_options = job
    with one_blas_thread():
        return _path(problem, theta0, train, test, grid, seed, fit_options)


def _path(problem: Problem, theta0: np.ndarray, train: np.ndarray, test: np.ndarray,
          grid: Sequence[float], seed: int, fit_options: dict[str, Any]
          ) -> list[tuple[float, float, float, int]]:
    part = problem.rows(train)
    held = (problem.X[test], problem.T[test])
    loss0, acc0 = problem.evaluate(theta0, *held)
    out = [(float("nan"), loss0, 1.0 - acc0, 0)]
    runs = walk_path(part, theta0, grid, None, held_out=held, seed=seed, give_up=GIVE_UP,
                     light=True, **fit_options)
    for lam, run in zip(grid, runs, strict=False):
        loss, acc = problem.evaluate(run.theta, *held)
        out.append((float(lam), loss, 1.0 - acc, run.best))
    return out


def search(
    starts: Mapping[float, tuple[Problem, np.ndarray]],
    *,
    grid: Sequence[float],
    folds: int,
    rng: np.random.Generator,
    workers: int = 2,
    progress: bool = False,
    **fit_options: Any,
) -> Search:
    """Choose (ω, λ) by ``folds``-fold cross-validation along the λ path (module docstring).

    ``starts`` maps each ω to its problem (all rows) and starting parameters; ``fit_options``
    go to :func:`thresholdc.training.lbfgs.fit` (iterations, patience, optimizer, lr, batch).
    """
    some = next(iter(starts.values()))[0]
    n = some.X.shape[0]
    parts = np.array_split(rng.permutation(n), folds)
    seeds = rng.integers(0, 2**31 - 1, size=folds)
    jobs, keys = [], []
    for w, (problem, theta0) in starts.items():
        for k, test in enumerate(parts):
            train = np.sort(np.concatenate([p for j, p in enumerate(parts) if j != k]))
            jobs.append((problem, theta0, train, np.sort(test), tuple(grid), int(seeds[k]),
                         dict(fit_options)))
            keys.append((w, k))
    results: dict[tuple[float, int], list[Any]] = {}
    bar = progress_bar(len(jobs), "choosing anchor and weight", unit="path", show=progress)
    try:
        if workers <= 1 or len(jobs) == 1:
            for key, job in zip(keys, jobs, strict=True):
                results[key] = _path_job(job)
                bar.update(1)
        else:
            with cf.ProcessPoolExecutor(max_workers=min(workers, len(jobs))) as pool:
                futures = {pool.submit(_path_job, job): key
                           for key, job in zip(keys, jobs, strict=True)}
                for done in cf.as_completed(futures):
                    results[futures[done]] = done.result()
                    bar.update(1)
    finally:
        bar.close()

    scores = []
    for w in starts:
        per_fold = [results[(w, k)] for k in range(folds)]
        reached = min(len(r) for r in per_fold) - 1  # λ every fold's path reached
        for i, lam in enumerate(grid[:reached], start=1):
            loss = np.array([r[i][1] for r in per_fold])
            err = np.array([r[i][2] for r in per_fold])
            iters = [r[i][3] for r in per_fold]
            scores.append({
                "weight": float(w), "anchor": float(lam), "loss": float(loss.mean()),
                "stderr": float(loss.std(ddof=1) / np.sqrt(folds)),
                "error": float(err.mean()), "iterations": int(np.median(iters)),
            })
    best = min(scores, key=lambda s: (round(s["loss"], 12), -s["anchor"], s["weight"]))
    w = best["weight"]
    last = list(grid).index(best["anchor"])
    steps = tuple(s["iterations"] for s in scores if s["weight"] == w)[: last + 1]
    start = [results[(w, k)][0] for k in range(folds)]
    return Search(
        w, best["anchor"], tuple(float(g) for g in grid[: last + 1]), tuple(scores), steps,
        float(np.mean([s[1] for s in start])), float(np.mean([s[2] for s in start])),
        best["loss"], best["error"],
    )

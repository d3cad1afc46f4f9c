"""Choosing the anchor λ and the rule weight ω by cross-validation, reusing work.

The rows are split into ``folds`` parts (a seeded permutation).  For every ω and every part
one *path* runs: starting from the ω start, the network is fitted on the other parts for each
λ of the grid in turn, strongest first, each fit starting where the previous one stopped and
stopping early on the held-out part.  So the strong anchors (close to the start) cost a few
iterations each and every later fit starts near its answer.  Per (ω, λ) the path records the
held-out loss and error of the kept parameters and how many iterations were kept.  A path
ends early after :data:`GIVE_UP` λ in a row that did not improve its best held-out loss
(past the best λ the held-out loss only grows); a λ counts only where every fold reached it.

Paths are independent, so they run in ``workers`` processes; each is deterministic, so the
result does not depend on the number of workers.  Each worker receives the problems once, when
it starts, and keeps one BLAS thread.  The workers start only when the paths left are expected
to take longer than :data:`POOL_AFTER` seconds (timed on the first path, run here); small
searches run in this process, as starting workers would cost them more than it saves.

*Rules alone* is a candidate too: the start itself, untrained (λ = ∞), scored on the same
held-out parts (entry 0 of every path, no extra work).  It is chosen when no trained candidate
has a mean held-out loss lower by more than one standard error of the per-fold differences:
the burden of proof is on changing the rules (the one-standard-error rule of cross-validation,
Breiman et al. 1984, *Classification and Regression Trees*, §3.4.3, from memory; here it also
offsets the held-out parts' use for early stopping, which favours the trained candidates).
Then the final network is the start.

Otherwise the choice is the trained (ω, λ) with the smallest mean held-out loss (on a tie,
the larger λ, then the smaller ω).  The final network walks the same path on all rows, each λ
for the median number of iterations the folds kept at that λ, so early stopping carries over
from the held-out folds and no row is set aside (:func:`final_path`).

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> from thresholdc.training.mlp import Layout
>>> from thresholdc.training.lbfgs import Problem, pack
>>> net = Network(("a",), (Neuron("y", 1, ("a",), (4.0,), -2.0, "sigmoid"),), (Output("y", "y"),))
>>> lay = Layout.of(net)
>>> X = np.tile([[0.0], [1.0]], (6, 1)); T = X.copy()
>>> p = Problem.of(lay.activations, X, T, lay.output_columns(), "cross-entropy", *lay.params(net))
>>> s = search({4.0: (p, p.target)}, grid=(1.0, 0.0), folds=3, rng=np.random.default_rng(0),
...            workers=1)
>>> s.weight, s.anchor in (1.0, 0.0), s.rules_alone, len(s.scores)
(4.0, True, False, 3)
"""

from __future__ import annotations

import concurrent.futures as cf
import math
import multiprocessing as mp
import time
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from ..progress import bar as progress_bar
from .lbfgs import Problem, Run, fit
from .loop import Epoch
from .threads import one_blas_thread, set_blas_threads

__all__ = ["GIVE_UP", "POOL_AFTER", "RULES_ALONE", "Search", "search", "walk_path", "final_path"]

#: A fold's path ends after this many λ in a row without a better held-out loss.
GIVE_UP = 1
#: Worker processes start only when the paths left are expected to take longer than this many
#: seconds (timed on the first path): starting two workers and sending them the problems took
#: 0.1–0.2 s on the busy 2-core machine, as long as a whole small search.
POOL_AFTER = 1.0
#: The anchor of the rules-alone candidate: λ = ∞ keeps the start as it is.
RULES_ALONE = math.inf


@dataclass(frozen=True)
class Search:
    """The outcome of the search.

    ``scores`` holds per (ω, λ) the mean held-out loss, its standard error, the mean held-out
    error rate and the median iterations kept (``anchor`` None: the rules alone, the start
    untrained); ``anchor`` is :data:`RULES_ALONE` (∞) when the rules alone were chosen;
    ``grid`` and ``steps`` are the λ path the final network walks and its iterations (empty
    for the rules alone); ``start_error``/``start_loss`` are the held-out means of the chosen
    ω's start.
    """

    weight: float
    anchor: float
    grid: tuple[float, ...]
    scores: tuple[dict[str, Any], ...]
    steps: tuple[int, ...]
    start_loss: float
    start_error: float
    loss: float
    error: float

    @property
    def rules_alone(self) -> bool:
        """True when cross-validation kept the start (the rules as written) untrained."""
        return math.isinf(self.anchor)

    def to_dict(self) -> dict[str, Any]:
        return {
            "weight": self.weight,
            "anchor": None if self.rules_alone else self.anchor,
            "rules_alone": self.rules_alone,
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
    best, since = math.inf, 0
    for i, lam in enumerate(grid):
        n = iterations if steps is None else int(steps[i])
        run = fit(problem, theta, lam=float(lam), iterations=n, held_out=held_out,
                  rng=np.random.default_rng([seed, i]), after=runs[-1] if runs else None,
                  **fit_options)
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


def final_path(problem: Problem, theta0: np.ndarray, found: Search, *, seed: int = 0,
               **fit_options: Any) -> tuple[np.ndarray, tuple[Epoch, ...], int]:
    """The final network's parameters, its history (one entry per iteration, 0 the start)
    and the iteration kept: the chosen path walked on all rows, or the start for the rules
    alone."""
    if found.rules_alone:
        start = fit(problem, theta0, lam=0.0, iterations=0)
        return start.theta, start.history, 0
    runs = walk_path(problem, theta0, found.grid, found.steps, seed=seed, **fit_options)
    history = tuple(e for k, r in enumerate(runs) for e in r.history[(k > 0):])
    history = tuple(replace(e, epoch=i) for i, e in enumerate(history))
    return runs[-1].theta, history, len(history) - 1


# --- the fold paths, in this process or in a worker ------------------------------------------

#: One entry of a path: (λ, held-out loss, held-out error, iterations kept); λ is NaN for
#: the start.
Entry = tuple[float, float, float, int]


@dataclass
class _Folds:
    """The problems and fold parts every path reads (sent once to each worker)."""

    starts: Mapping[float, tuple[Problem, np.ndarray]]
    parts: list[np.ndarray]
    grid: tuple[float, ...]
    seeds: tuple[int, ...]
    fit_options: dict[str, Any]

    def path(self, w: float, k: int) -> list[Entry]:
        """Path (ω, fold k): the start's entry, then one per λ reached."""
        problem, theta0 = self.starts[w]
        test = self.parts[k]
        train = np.sort(np.concatenate([p for j, p in enumerate(self.parts) if j != k]))
        part, held = problem.rows(train), (problem.X[test], problem.T[test])
        runs = walk_path(part, theta0, self.grid, None, held_out=held, seed=self.seeds[k],
                         give_up=GIVE_UP, light=True, **self.fit_options)
        e0 = runs[0].history[0]  # the start, on the held-out part
        assert e0.validation_loss is not None and e0.validation_accuracy is not None
        out: list[Entry] = [(math.nan, e0.validation_loss, 1.0 - e0.validation_accuracy, 0)]
        for lam, run in zip(self.grid, runs, strict=False):
            e = run.history[run.best]
            assert e.validation_loss is not None and e.validation_accuracy is not None
            out.append((float(lam), float(e.validation_loss), 1.0 - e.validation_accuracy,
                        int(run.best)))
        return out


_WORKER: dict[str, _Folds] = {}


def _start_worker(folds: _Folds, forked: bool) -> None:
    if not forked:  # a forked worker keeps its parent's setting (one thread, see search)
        set_blas_threads(1)
    _WORKER["folds"] = folds


def _in_worker(key: tuple[float, int]) -> list[Entry]:
    return _WORKER["folds"].path(*key)


def _paired_gap(a: Sequence[float], b: Sequence[float]) -> tuple[float, float]:
    """Mean of the per-fold differences ``a − b`` and its standard error."""
    d = np.asarray(a, dtype=float) - np.asarray(b, dtype=float)
    se = float(d.std(ddof=1) / np.sqrt(len(d))) if len(d) > 1 else 0.0
    return float(d.mean()), se


def search(
    starts: Mapping[float, tuple[Problem, np.ndarray]],
    *,
    grid: Sequence[float],
    folds: int,
    rng: np.random.Generator,
    workers: int = 2,
    progress: bool = False,
    rules_alone: bool = True,
    **fit_options: Any,
) -> Search:
    """Choose (ω, λ) by ``folds``-fold cross-validation along the λ path (module docstring).

    ``starts`` maps each ω to its problem (all rows) and starting parameters; ``fit_options``
    go to :func:`thresholdc.training.lbfgs.fit` (iterations, patience, optimizer, lr, batch).
    ``rules_alone``: the untrained start is a candidate too.
    """
    some = next(iter(starts.values()))[0]
    n = some.X.shape[0]
    parts = [np.sort(p) for p in np.array_split(rng.permutation(n), folds)]
    seeds = tuple(int(s) for s in rng.integers(0, 2**31 - 1, size=folds))
    work = _Folds(starts, parts, tuple(float(g) for g in grid), seeds, dict(fit_options))
    weights = list(starts)
    keys = [(w, k) for w in weights for k in range(folds)]
    paths: dict[tuple[float, int], list[Entry]] = {}
    bar = progress_bar(len(keys), "choosing anchor and weight", unit="path", show=progress)
    pool = None
    try:
        if workers > 1 and len(keys) > 1:
            t = time.perf_counter()  # the first path here: are the rest worth the workers?
            paths[keys[0]] = work.path(*keys[0])
            bar.update(1)
            if (time.perf_counter() - t) * (len(keys) - 1) > POOL_AFTER:
                context = mp.get_context()
                with one_blas_thread():  # forked workers inherit it
                    pool = cf.ProcessPoolExecutor(
                        max_workers=min(workers, len(keys) - 1), mp_context=context,
                        initializer=_start_worker,
                        initargs=(work, context.get_start_method() == "fork"))
                    pool.submit(int).result()  # the workers start (fork) here
        left = [key for key in keys if key not in paths]
        if pool is None:
            for key in left:
                paths[key] = work.path(*key)
                bar.update(1)
        else:
            futures = {pool.submit(_in_worker, key): key for key in left}
            for done in cf.as_completed(futures):
                paths[futures[done]] = done.result()
                bar.update(1)
    finally:
        if pool is not None:
            pool.shutdown()
        bar.close()
    return _choose(paths, weights, work.grid, folds, rules_alone)


def _choose(paths: Mapping[tuple[float, int], list[Entry]], weights: Sequence[float],
            grid: tuple[float, ...], folds: int, rules_alone: bool) -> Search:
    """The scores of every candidate every fold reached, and the choice among them."""
    scores: list[dict[str, Any]] = []
    per_fold: dict[tuple[float, float | None], list[float]] = {}
    for w in weights:
        rows = [paths[(w, k)] for k in range(folds)]
        reached = min(len(r) for r in rows)  # entries every fold's path reached
        for i in range(reached):
            lam = None if i == 0 else grid[i - 1]
            loss = np.array([r[i][1] for r in rows])
            per_fold[(w, lam)] = list(loss)
            if lam is None and not rules_alone:
                continue  # the start is no candidate (its scores are start_loss/start_error)
            scores.append({
                "weight": float(w), "anchor": lam, "loss": float(loss.mean()),
                "stderr": float(loss.std(ddof=1) / np.sqrt(folds)),
                "error": float(np.mean([r[i][2] for r in rows])),
                "iterations": int(np.median([r[i][3] for r in rows])),
            })
    trained = [s for s in scores if s["anchor"] is not None]
    best = min(trained, key=lambda s: (round(s["loss"], 12), -s["anchor"], s["weight"]))
    if rules_alone:
        alone = min((s for s in scores if s["anchor"] is None),
                    key=lambda s: (round(s["loss"], 12), s["weight"]))
        gap, se = _paired_gap(per_fold[(alone["weight"], None)],
                              per_fold[(best["weight"], best["anchor"])])
        if gap <= se:  # training does not win by more than one standard error
            return Search(alone["weight"], RULES_ALONE, (), tuple(scores), (), alone["loss"],
                          alone["error"], alone["loss"], alone["error"])
    w = best["weight"]
    starts = [paths[(w, k)][0] for k in range(folds)]  # the chosen ω's start
    last = grid.index(best["anchor"])
    steps = tuple(int(s["iterations"]) for s in trained if s["weight"] == w)[: last + 1]
    return Search(w, best["anchor"], grid[: last + 1], tuple(scores), steps,
                  float(np.mean([e[1] for e in starts])), float(np.mean([e[2] for e in starts])),
                  best["loss"], best["error"])

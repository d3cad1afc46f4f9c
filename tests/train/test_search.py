"""The λ/ω search: the rules-alone candidate, the choice rule, work reused along a path, and
results that do not depend on where the paths ran."""

import itertools
import math

import numpy as np
import pytest

from thresholdc.logic import source_from_text
from thresholdc.training import rule_network, train
from thresholdc.training import search as search_module
from thresholdc.training.lbfgs import Problem, _objective, fit, pack
from thresholdc.training.mlp import Layout
from thresholdc.training.options import ANCHOR_GRID, WEIGHT_GRID
from thresholdc.training.search import GIVE_UP, _choose, walk_path

TEXT = "input a, b, c, d\ny = (a and b) or c\nz = not d\n"
SOURCE = source_from_text(TEXT, "right.rules")
ALL = np.array(list(itertools.product([0, 1], repeat=4)), dtype=float)


def _truth(X):
    a, b, c, d = X.T
    return np.column_stack([(a * b + c > 0), 1 - d]).astype(float)


def _data(rows, seed, noise, truth=_truth):
    rng = np.random.default_rng(seed)
    X = rng.integers(0, 2, size=(rows, 4)).astype(float)
    y = truth(X)
    flip = rng.random(y.shape) < noise
    return X, np.where(flip, 1 - y, y)


def _paths(losses):
    """Synthetic fold paths: ``losses[w]`` is one row per fold of held-out losses, the first
    the start's (rules alone), then one per λ of the grid."""
    return {(w, k): [(math.nan if i == 0 else ANCHOR_GRID[i - 1], v, v / 10, 2 * i)
                     for i, v in enumerate(row)]
            for w, rows in losses.items() for k, row in enumerate(rows)}


def test_choice_keeps_the_rules_unless_training_wins_by_one_standard_error():
    # per fold, trained at λ = 3 beats the start by 0.01 ± 0.02: within one standard error
    close = _paths({4.0: [[0.50, 0.47], [0.50, 0.51], [0.50, 0.49]]})
    s = _choose(close, [4.0], ANCHOR_GRID[:1], 3, True)
    assert s.rules_alone and math.isinf(s.anchor) and s.grid == () and s.steps == ()
    assert s.loss == pytest.approx(0.50) and s.start_loss == pytest.approx(0.50)
    assert s.to_dict()["anchor"] is None and s.to_dict()["rules_alone"] is True
    # without the candidate, the best trained one
    s = _choose(close, [4.0], ANCHOR_GRID[:1], 3, False)
    assert not s.rules_alone and s.anchor == ANCHOR_GRID[0] and s.loss == pytest.approx(0.49)
    # better in every fold by 0.05 ± 0.005: trained
    clear = _paths({4.0: [[0.50, 0.45], [0.50, 0.455], [0.50, 0.445]]})
    s = _choose(clear, [4.0], ANCHOR_GRID[:1], 3, True)
    assert not s.rules_alone and s.anchor == ANCHOR_GRID[0]
    assert s.grid == (ANCHOR_GRID[0],) and s.steps == (2,)


def test_choice_among_trained_candidates_and_reached_lambdas():
    # ω = 8 reaches λ = 0.3 in every fold, one of its folds stops there; ω = 4 is best at 0.3
    paths = _paths({4.0: [[0.9, 0.6, 0.40], [0.9, 0.6, 0.42], [0.9, 0.6, 0.41]],
                    8.0: [[0.9, 0.5, 0.45, 0.3], [0.9, 0.5, 0.46], [0.9, 0.5, 0.44, 0.3]]})
    s = _choose(paths, [4.0, 8.0], ANCHOR_GRID, 3, True)
    got = {(d["weight"], d["anchor"]) for d in s.scores}
    assert got == {(4.0, None), (4.0, 3.0), (4.0, 0.3), (8.0, None), (8.0, 3.0), (8.0, 0.3)}
    assert (s.weight, s.anchor) == (4.0, 0.3) and s.grid == (3.0, 0.3) and s.steps == (2, 4)
    assert s.loss == pytest.approx(0.41) and s.start_loss == pytest.approx(0.9)


def test_exact_rules_and_few_noisy_rows_keep_the_rules():
    net = rule_network(SOURCE.program)
    kept = 0
    for seed in range(8):
        X, y = _data(48, seed, 0.1)
        r = train(net, X, y, rules=SOURCE, seed=seed, workers=1)
        alone = [s for s in r.search.scores if s["anchor"] is None]
        assert sorted(s["weight"] for s in alone) == sorted(WEIGHT_GRID)  # always reported
        start = next(s for s in alone if s["weight"] == r.weight)
        assert r.search.start_loss == start["loss"]
        if r.search.rules_alone:
            kept += 1
            assert math.isinf(r.anchor) and r.best_epoch == 0 and len(r.history) == 1
            assert r.network.neurons == r.start.neurons  # the network is the start
            t = r.network.meta["training"]
            assert t["anchor"] is None and t["search"]["rules_alone"] is True
            assert t["epochs_run"] == 0 and t["search"]["path_iterations"] == []
            assert r.held_out["error"] == r.held_out["start_error"]
            assert r.to_dict()["anchor"] is None
        # whatever was chosen, the data gave no reason to change a decision of the rules
        assert np.array_equal(r.network.decide(ALL), _truth(ALL) > 0.5)
    assert kept >= 2  # 5 of the 8 seeds when this test was written


def test_wrong_rules_and_enough_rows_train():
    # the data say y = a or c; the rules (a and b) or c are wrong on an eighth of the domain
    net = rule_network(SOURCE.program)
    X, y = _data(200, 0, 0.05, lambda X: np.column_stack([np.maximum(X[:, 0], X[:, 2]),
                                                          1 - X[:, 3]]))
    r = train(net, X, y, rules=SOURCE, seed=0, workers=1)
    assert not r.search.rules_alone and r.anchor in ANCHOR_GRID
    assert r.held_out["error"] < r.held_out["start_error"]


def test_a_fixed_anchor_or_random_init_has_no_rules_alone_candidate():
    net = rule_network(SOURCE.program)
    X, y = _data(48, 1, 0.1)
    fixed = train(net, X, y, rules=SOURCE, seed=0, workers=1, anchor=0.3)  # ω searched
    assert fixed.search is not None and not fixed.search.rules_alone
    assert all(s["anchor"] == 0.3 for s in fixed.search.scores)
    assert {s["weight"] for s in fixed.search.scores} == set(WEIGHT_GRID)
    cold = train(net, X, y, rules=SOURCE, seed=0, workers=1, init="random")
    assert cold.search is not None and not cold.search.rules_alone
    assert all(s["anchor"] is not None for s in cold.search.scores)


def test_result_is_the_same_in_worker_processes(monkeypatch):
    net = rule_network(SOURCE.program)
    X, y = _data(60, 2, 0.1)
    here = train(net, X, y, rules=SOURCE, seed=0, workers=1)
    monkeypatch.setattr(search_module, "POOL_AFTER", 0.0)  # start the workers whatever it costs
    there = train(net, X, y, rules=SOURCE, seed=0, workers=2)
    assert here.search.to_dict() == there.search.to_dict()
    assert here.network.neurons == there.network.neurons


def _problem(rows=40, seed=0):
    net = rule_network(SOURCE.program, weight=4.0)
    lay = Layout.of(net)
    X, y = _data(rows, seed, 0.15)
    W, b = lay.params(net)
    p = Problem.of(lay.activations, X, y, lay.output_columns(), "cross-entropy", W, b,
                   unit=4.0)
    return p, pack(W, b)


def test_a_path_reuses_the_previous_fit_and_gets_what_fresh_fits_get():
    p, theta0 = _problem()
    train_rows, held = np.arange(30), (p.X[30:], p.T[30:])
    part = p.rows(train_rows)
    runs = walk_path(part, theta0, ANCHOR_GRID, None, held_out=held, give_up=GIVE_UP,
                     iterations=50, patience=3, light=True)
    theta = theta0
    for i, run in enumerate(runs):
        fresh = fit(part, theta, lam=ANCHOR_GRID[i], iterations=50, held_out=held, patience=3,
                    rng=np.random.default_rng([0, i]), light=True)
        assert fresh.best == run.best
        assert np.allclose(fresh.theta, run.theta, atol=1e-7)
        # the start entry is carried over: the same held-out figures as measured afresh
        assert run.history[0].validation_loss == pytest.approx(
            fresh.history[0].validation_loss, rel=1e-12)
        assert run.history[0].penalty == pytest.approx(fresh.history[0].penalty, abs=1e-12)
        theta = fresh.theta
    # the objective recorded at the kept parameters is the objective there
    known = [r for r in runs if r.objective is not None]
    assert known
    for run in known:
        lam, value, grad = run.objective
        fresh_value, fresh_grad = _objective(part, lam)(run.theta)
        assert value == pytest.approx(fresh_value, rel=1e-10)
        assert np.allclose(grad, fresh_grad, atol=1e-10)

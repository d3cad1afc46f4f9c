"""The full-batch fit: the objective's gradient (central differences), frozen parameters."""

import numpy as np

from thresholdc.training.lbfgs import Problem, _objective, fit, pack


def _problem(mask=None):
    rng = np.random.default_rng(1)
    X = rng.integers(0, 2, size=(25, 4)).astype(float)
    T = rng.integers(0, 2, size=(25, 1)).astype(float)
    W = [rng.normal(size=(3, 4)), rng.normal(size=(1, 3))]
    b = [rng.normal(size=3), rng.normal(size=1)]
    return Problem.of(("sigmoid", "sigmoid"), X, T, np.array([0]), "cross-entropy", W, b,
                      mask=mask, unit=4.0)


def test_gradient_of_loss_plus_anchor_matches_central_differences():
    p = _problem()
    f = _objective(p, lam=0.7)
    theta = p.target + np.random.default_rng(2).normal(scale=0.3, size=p.target.shape)
    _, grad = f(theta)
    h = 1e-6
    numeric = np.array([(f(theta + h * e)[0] - f(theta - h * e)[0]) / (2 * h)
                        for e in np.eye(len(theta))])
    assert np.allclose(grad, numeric, atol=1e-6)


def test_frozen_parameters_never_move():
    n = len(_problem().target)
    mask = np.ones(n)
    mask[:4] = 0.0  # the first hidden unit's weights
    p = _problem(mask)
    run = fit(p, p.target, lam=0.0, iterations=30)
    assert np.array_equal(run.theta[:4], p.target[:4])
    assert not np.allclose(run.theta[4:], p.target[4:])
    assert run.history[-1].loss < run.history[0].loss
    assert len(pack(*p.unpack(run.theta))) == n

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


def test_gradient_with_per_parameter_pull_matches_central_differences():
    base = _problem()
    pull = np.random.default_rng(3).uniform(0.0, 1.0, size=base.target.shape)
    p = Problem.of(base.activations, base.X, base.T, base.cols, base.loss, *base.unpack(
        base.target), unit=4.0, pull=pull)
    f = _objective(p, lam=0.7)
    theta = p.target + np.random.default_rng(2).normal(scale=0.3, size=p.target.shape)
    value, grad = f(theta)
    h = 1e-6
    numeric = np.array([(f(theta + h * e)[0] - f(theta - h * e)[0]) / (2 * h)
                        for e in np.eye(len(theta))])
    assert np.allclose(grad, numeric, atol=1e-6)
    # the documented penalty: (λ/2)·Σ pull·((θ − θ_target)/ω)², beside the plain data loss
    d = theta - p.target
    assert np.isclose(value - _objective(p, lam=0.0)(theta)[0],
                      0.5 * 0.7 * np.sum(pull * d * d) / 16.0, rtol=1e-12)


def test_light_pull_on_a_link_the_rules_lack_lets_training_add_it():
    # the rule says y = a (weight 4, bias -2); the data say y = a and b.  Under the same strong
    # anchor, the link from b (start 0) moves much further with a light pull than with the
    # full pull every parameter had before, while the rule's own link stays anchored.
    from thresholdc.training.warmstart import LINK_PULL

    X = np.array([[a, b] for a in (0, 1) for b in (0, 1)] * 10, dtype=float)
    T = (X[:, :1] * X[:, 1:])
    W, b = [np.array([[4.0, 0.0]])], [np.array([-2.0])]
    pull = np.array([1.0, LINK_PULL, 1.0])  # w_a, w_b, bias
    runs = {}
    for name, g in (("light", pull), ("full", None)):
        p = Problem.of(("sigmoid",), X, T, np.array([0]), "cross-entropy", W, b, unit=4.0,
                       pull=g)
        runs[name] = fit(p, p.target, lam=3.0, iterations=200).theta
    moved_b = {k: abs(v[1]) for k, v in runs.items()}
    assert moved_b["light"] > 2 * moved_b["full"]
    assert abs(runs["light"][0] - 4.0) < abs(runs["light"][1])

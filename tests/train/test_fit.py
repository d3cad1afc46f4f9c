"""Training: loss goes down, runs are reproducible, freeze/widen/anchor/init do what they say."""

import itertools

import numpy as np
import pytest

from thresholdc.errors import UsageError
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.network import dumps
from thresholdc.training.fit import train
from thresholdc.training.options import ANCHOR_GRID
from thresholdc.training.warmstart import LINK_SCALE, prepare_start

# y = (a and b) or c, as a two-layer step network; z = not d reads only d.
RULES = Network(
    ("a", "b", "c", "d"),
    (
        Neuron("ab", 1, ("a", "b"), (1, 1), -1.5, origin="y"),
        Neuron("y", 2, ("ab", "c"), (1, 1), -0.5, origin="y"),
        Neuron("z", 1, ("d",), (-1,), 0.5, origin="z"),
    ),
    (Output("y", "y"), Output("z", "z")),
)
ALL = np.array(list(itertools.product([0, 1], repeat=4)), dtype=float)


def _truth(X):
    a, b, c, d = X.T
    return np.column_stack([(a * b + c > 0), 1 - d]).astype(float)


def _data(rows=64, seed=0, noise=0.0):
    rng = np.random.default_rng(seed)
    X = rng.integers(0, 2, size=(rows, 4)).astype(float)
    y = _truth(X)
    flip = rng.random(y.shape) < noise
    return X, np.where(flip, 1 - y, y)


def _mse(net, X, y):
    # the documented loss, computed from Network.evaluate (not from the training code)
    return float(np.mean(np.sum((net.evaluate(X) - y) ** 2, axis=1)))


def _params(net):
    return [(n.name, n.inputs, n.weights, n.bias) for n in net.neurons]


def test_training_reduces_the_loss_from_wrong_rules():
    # the rules say y = (a and b) or c, the data says y = a or c
    X, _ = _data()
    y = np.column_stack([np.maximum(X[:, 0], X[:, 2]), 1 - X[:, 3]])
    for optimizer in ("lbfgs", "adam", "sgd"):
        r = train(RULES, X, y, epochs=60, seed=0, validation=0, anchor=0.0, optimizer=optimizer,
                  loss="mse", weight=4.0)
        before, after = _mse(r.start, X, y), _mse(r.network, X, y)
        assert before > 0.05  # (a and b) or c differs from a or c on an eighth of the rows
        assert after < 0.5 * before
        assert r.history[0].loss == pytest.approx(before)
        assert r.history[-1].loss == pytest.approx(after)
        assert np.array_equal(r.network.decide(ALL)[:, 0], (ALL[:, 0] + ALL[:, 2]) > 0)


def test_cross_entropy_reduces_its_loss():
    X, _ = _data(seed=1)
    y = np.column_stack([np.maximum(X[:, 0], X[:, 2]), 1 - X[:, 3]])
    r = train(RULES, X, y, epochs=40, seed=0, validation=0, anchor=0.0, loss="cross-entropy")
    P = np.clip(r.network.evaluate(X), 1e-12, 1 - 1e-12)
    ce = float(np.mean(np.sum(-(y * np.log(P) + (1 - y) * np.log(1 - P)), axis=1)))
    assert ce == pytest.approx(r.history[-1].loss, rel=1e-6)
    assert r.history[-1].loss < 0.5 * r.history[0].loss


def test_warm_start_computes_the_rules_before_training():
    s = prepare_start(RULES, rng=np.random.default_rng(0), tolerance=0.01)
    net = s.network()
    assert np.array_equal(net.decide(ALL), _truth(ALL) > 0.5)
    # every unit reads every unit of the previous layer
    sizes = net.layer_sizes()
    for n in net.neurons:
        want = 4 if n.layer == 1 else sum(sizes[n.layer - 1].values())
        assert len(n.inputs) == want
    # links the rules do not use are small; rule links carry the certified gain
    z = net.neuron("z")
    w = dict(zip(z.inputs, z.weights))
    assert abs(w["a"]) < 5 * LINK_SCALE and w["d"] < -5


def test_same_seed_same_parameters_other_seed_differs():
    X, y = _data(noise=0.1)
    kw = dict(epochs=15, validation=0.25, anchor=0.01, widen=1)
    one = train(RULES, X, y, seed=7, **kw)
    two = train(RULES, X, y, seed=7, **kw)
    three = train(RULES, X, y, seed=8, **kw)
    assert dumps(one.network) == dumps(two.network)
    assert _params(one.network) != _params(three.network)


def test_freeze_keeps_the_frozen_neurons_exactly():
    X, _ = _data()
    y = np.column_stack([np.maximum(X[:, 0], X[:, 2]), X[:, 3]])  # both outputs disagree
    r = train(RULES, X, y, epochs=60, seed=0, validation=0, anchor=0.0, freeze=["y"], widen=2,
              init="certified", weight=4.0)
    assert set(r.frozen) >= {"y", "ab"}
    assert "z" not in r.frozen
    start = {n.name: n for n in r.start.neurons}
    for n in r.network.neurons:
        if n.name in r.frozen:
            assert (n.inputs, n.weights, n.bias) == (
                start[n.name].inputs, start[n.name].weights, start[n.name].bias)
    # the frozen output still computes its rule on every input; the free one was retrained
    dec = r.network.decide(ALL)
    assert np.array_equal(dec[:, 0], _truth(ALL)[:, 0] > 0.5)
    assert np.array_equal(dec[:, 1], ALL[:, 3] > 0.5)
    with pytest.raises(UsageError, match="no neuron named 'nope'"):
        train(RULES, X, y, epochs=1, freeze=["nope"], anchor=0.0, weight=4.0)
    with pytest.raises(UsageError, match="needs --init rules or --init certified"):
        train(RULES, X, y, epochs=1, freeze=["y"], init="random")


def test_widen_adds_extra_units_to_every_hidden_layer():
    s = prepare_start(RULES, rng=np.random.default_rng(0), widen=3)
    net = s.network()
    for layer, counts in net.layer_sizes().items():
        assert counts["extra"] == (3 if layer < net.depth else 0)
    extras = [n for n in net.neurons if n.role == "extra"]
    assert all(n.origin is None and "~" in n.name for n in extras)
    assert max(abs(w) for n in extras for w in n.weights) < 5 * LINK_SCALE
    # the start still computes the rules
    assert np.array_equal(net.decide(ALL), _truth(ALL) > 0.5)


def test_widen_adds_a_hidden_layer_when_there_is_none():
    flat = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
                   (Output("y", "y"),))
    X = np.array([[0, 0], [0, 1], [1, 0], [1, 1]] * 4, dtype=float)
    r = train(flat, X, X[:, :1] * X[:, 1:], epochs=3, validation=0, anchor=0.0, widen=2,
              weight=4.0)
    assert r.network.depth == 2
    assert r.network.layer_sizes()[1] == {"gate": 1, "relay": 0, "extra": 2}
    assert r.network.layer_sizes()[2] == {"gate": 0, "relay": 1, "extra": 0}
    assert r.network.decide(X[:4]).ravel().tolist() == [False, False, False, True]


def _distance(a, b):
    return sum(
        np.sum((np.array(x.weights) - np.array(y.weights)) ** 2) + (x.bias - y.bias) ** 2
        for x, y in zip(a.neurons, b.neurons)
    )


def test_anchor_pulls_toward_the_start():
    X, y = _data(noise=0.2, seed=3)
    kw = dict(epochs=40, seed=0, validation=0, weight=4.0)
    free = train(RULES, X, y, anchor=0.0, **kw)
    held = train(RULES, X, y, anchor=3.0, **kw)
    assert _distance(held.network, held.start) < 0.1 * _distance(free.network, free.start)
    assert np.array_equal(held.network.decide(ALL), _truth(ALL) > 0.5)
    assert held.history[-1].penalty > 0 and free.history[-1].penalty == 0


def test_random_init_is_a_dense_one_hidden_layer_network_with_weight_decay():
    X, y = _data()
    kw = dict(seed=0, validation=0, weight=4.0)
    warm = train(RULES, X, y, epochs=1, anchor=0.0, **kw)
    cold = train(RULES, X, y, epochs=30, anchor=0.0, init="random", **kw)
    net = cold.network
    assert net.depth == 2 and net.inputs == RULES.inputs
    hidden = [n for n in net.neurons if n.layer == 1]
    # as many hidden units as the rule start has (it has 3 or 4 here), but at least 8
    assert len(hidden) == max(8, sum(n.layer < warm.network.depth for n in warm.network.neurons))
    assert all(n.inputs == net.inputs and n.origin is None for n in hidden)
    last = [n for n in net.neurons if n.layer == 2]
    assert all(n.inputs == tuple(h.name for h in hidden) for n in last)
    assert [o.name for o in net.outputs] == ["y", "z"]
    # the start: Glorot uniform (limit sqrt(6 / (fan_in + fan_out)), from memory), biases 0
    s0 = [n for n in cold.start.neurons if n.layer == 1]
    w0 = np.array([n.weights for n in s0])
    assert np.abs(w0).max() <= np.sqrt(6 / (4 + len(hidden))) and np.abs(w0).max() > 0.3
    assert all(n.bias == 0 for n in cold.start.neurons)
    wide = train(RULES, X, y, epochs=1, anchor=0.0, init="random", hidden=20, **kw)
    assert sum(n.layer == 1 for n in wide.network.neurons) == 20
    # the anchor is weight decay toward 0 on the weights; biases are not decayed
    decayed = train(RULES, X, y, epochs=30, anchor=3.0, init="random", **kw)

    def weights(r):
        return sum(float(np.sum(np.square(n.weights))) for n in r.network.neurons)

    assert weights(decayed) < 0.5 * weights(cold)
    again = train(RULES, X, y, epochs=30, anchor=3.0, init="random", **kw)
    assert dumps(again.network) == dumps(decayed.network)


def test_random_dense_pull_decays_weights_but_not_biases():
    s = prepare_start(RULES, rng=np.random.default_rng(0), init="random", hidden=5)
    assert s.layout.sizes == (4, 5, 2)
    assert all((g == 1).all() for g in s.pull_w) and all((g == 0).all() for g in s.pull_b)
    assert all((t == 0).all() for t in s.target_weights)


def test_rule_links_are_anchored_and_the_others_only_lightly():
    from thresholdc.training.warmstart import LINK_PULL

    s = prepare_start(RULES, rng=np.random.default_rng(0), widen=1)
    soft = s.soft
    for L, units in enumerate(s.layout.units):
        prev = soft.inputs if L == 0 else s.layout.units[L - 1]
        for r, name in enumerate(units):
            reads = set(soft.neuron(name).inputs) if name in {n.name for n in soft.neurons} \
                else set()
            for c, src in enumerate(prev):
                if src in reads:
                    assert s.pull_w[L][r, c] == 1 and s.target_weights[L][r, c] == \
                        s.weights[L][r, c]
                else:
                    assert s.pull_w[L][r, c] == LINK_PULL and s.target_weights[L][r, c] == 0
            assert s.pull_b[L][r] == (1 if reads else LINK_PULL)
    assert 0 < LINK_PULL < 1


def test_early_stopping_keeps_the_best_validation_epoch():
    X, y = _data(rows=80, noise=0.25, seed=4)
    for optimizer in ("lbfgs", "adam"):
        r = train(RULES, X, y, epochs=200, seed=0, validation=0.25, anchor=0.0, patience=5,
                  lr=0.05, weight=4.0, optimizer=optimizer)
        losses = [e.validation_loss for e in r.history]
        assert r.best_epoch == int(np.argmin(losses))
        assert len(r.history) - 1 == r.best_epoch + 5 < 200 + 1
        assert r.network.meta["training"]["held_out"]["rows"] == 20
        assert r.held_out["loss"] == min(losses) and r.held_out["start_loss"] == losses[0]


def test_auto_anchor_and_weight_report_their_choice():
    X, y = _data(rows=48, noise=0.05)
    r = train(RULES, X, y, epochs=8, seed=0, workers=1, init="certified")
    pairs = {(s["weight"], s["anchor"]) for s in r.search.scores}
    chosen = None if r.search.rules_alone else r.anchor  # None: the rules alone (λ = ∞)
    assert (r.weight, chosen) in pairs and 2 <= len(pairs) <= len(ANCHOR_GRID) + 1
    assert {a for _, a in pairs} <= set(ANCHOR_GRID) | {None}
    trained = [s for s in r.search.scores if s["anchor"] is not None]
    best = min(trained, key=lambda s: s["loss"])
    assert r.search.loss == (best["loss"] if chosen is not None else
                             min(s["loss"] for s in r.search.scores if s["anchor"] is None))
    assert r.network.meta["training"]["anchor"] == chosen


def test_trained_meta_records_options_not_certificate():
    X, y = _data(rows=16)
    net = RULES.with_meta(tool="thresholdc test", verification={"result": "equal"})
    r = train(net, X, y, epochs=2, seed=3, validation=0, anchor=0.0, weight=4.0)
    meta = r.network.meta
    assert meta["tool"] == "thresholdc test"
    assert "verification" not in meta and "certificate" not in meta
    assert meta["training"]["options"]["seed"] == 3
    assert meta["training"]["optimizer"] == "lbfgs"
    assert meta["training"]["loss"] == "cross-entropy"


@pytest.mark.parametrize(
    "options,message",
    [
        ({"epochs": -1}, "'epochs' option of train must be a whole number"),
        ({"lr": 0}, "'lr' option of train must be a positive number"),
        ({"validation": 1.0}, "'validation' option of train must be a fraction"),
        ({"anchor": "strong"}, "'anchor' option of train must be 'auto' or a number"),
        ({"tolerance": 0.5}, "'tolerance' option of train must be between 0 and 0.5"),
        ({"optimizer": "rmsprop"},
         "'optimizer' option of train must be one of auto, lbfgs, adam, sgd"),
        ({"weight": 0}, "'weight' option of train must be 'auto' or a number > 0"),
        ({"folds": 1}, "'folds' option of train must be a whole number ≥ 2"),
        ({"colour": 1}, "unknown option 'colour' of train; known: init, weight"),
        ({"outputs": ["nope"]}, "unknown output 'nope'"),
    ],
)
def test_bad_options(options, message):
    X, y = _data(rows=8)
    with pytest.raises(UsageError, match=message):
        train(RULES, X, y, **{"epochs": 1, **options})


def test_bad_arrays():
    X, y = _data(rows=8)
    with pytest.raises(UsageError, match="labels in y must be 0 or 1"):
        train(RULES, X, y * 2, epochs=1)
    with pytest.raises(UsageError, match="y must have shape"):
        train(RULES, X, y[:, :1], epochs=1)
    with pytest.raises(UsageError, match="X must have shape"):
        train(RULES, X[:, :3], y, epochs=1)


def test_subset_of_outputs():
    X, y = _data(rows=16)
    r = train(RULES, X, y[:, 1:], outputs=["z"], epochs=3, validation=0, anchor=0.0, weight=4.0)
    assert r.outputs == ("z",)


def test_real_valued_input_keeps_the_rule_at_the_start():
    # random links from a real unit are scaled by its size in the data: with values up to
    # 1000, unscaled 0.05-weights would move pre-activations by tens and break the rule
    from thresholdc import compile_rules

    net = compile_rules("input temp: real in [0, 1000] scale 10, door\nhot = temp > 500 and door\n")
    rng = np.random.default_rng(2)
    temp = rng.choice(np.r_[np.arange(0, 480, 7), np.arange(521, 1000, 7)], size=200)
    door = rng.integers(0, 2, size=200)
    X = np.column_stack([temp, door]).astype(float)
    y = ((temp > 500) & (door == 1)).astype(float)[:, None]
    for seed in range(3):
        r = train(net, X, y, epochs=0, seed=seed, anchor=0.0, widen=2, init="certified",
                  weight=4.0)
        assert np.array_equal(r.start.decide(X), y > 0.5)

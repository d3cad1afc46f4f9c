"""Rule refinement, small and seeded: the warm start against the dense random baseline.

A hidden rule set of our own (an invented greenhouse-vent checklist: 14 Boolean readings, two
levels of definitions and a counting term), the user's copy with one antecedent dropped, 100
training rows labelled by the hidden rules with 7% of the labels flipped.  Both runs use every
default of ``train``; errors are counted over all 2¹⁴ assignments against the hidden rules.
"""

import itertools

import numpy as np
import pytest

from thresholdc.logic import source_from_text
from thresholdc.training import rule_network, train

TRUE = """\
input hot, humid, sunny, windy, rain, night, fan_ok, vent_ok, co2_high, mist_on
input door_open, heater_on, frost, alarm
output open_vent

too_warm = hot and sunny and not night
too_wet = atleast(2, humid, mist_on, rain)
stale = co2_high and not door_open
need_air = too_warm or (too_wet and not frost) or stale
open_vent = need_air and vent_ok and not windy
"""
DEGRADED = TRUE.replace("too_warm = hot and sunny and not night", "too_warm = hot and sunny")
ALL = np.array(list(itertools.product([0, 1], repeat=14)), dtype=float)


def _data(source, rows, seed, noise=0.07):
    rng = np.random.default_rng(seed)
    X = rng.integers(0, 2, size=(rows, 14)).astype(float)
    y = np.asarray(source.evaluate(X), dtype=float).reshape(rows, 1)
    flip = rng.permutation(rows)[: round(noise * rows)]
    y[flip] = 1.0 - y[flip]
    return X, y


@pytest.mark.parametrize("seed", [0, 1])
def test_warm_start_beats_the_dense_random_baseline_at_100_rows(seed):
    true = source_from_text(TRUE, "vent_true.rules")
    bad = source_from_text(DEGRADED, "vent.rules")
    assert DEGRADED != TRUE
    X, y = _data(true, 100, seed)
    truth = np.asarray(true.evaluate(ALL)).reshape(-1)
    net = rule_network(bad.program)
    errors = {}
    for init in ("rules", "random"):
        r = train(net, X, y, rules=bad, init=init, seed=seed, workers=1)
        errors[init] = float(np.mean(r.network.decide(ALL)[:, 0] != truth))
        if init == "random":  # the honest baseline: one dense hidden layer, no rule units
            assert r.network.depth == 2
            assert all(n.origin is None for n in r.network.neurons if n.layer == 1)
    rules_alone = float(np.mean(np.asarray(bad.evaluate(ALL)).reshape(-1) != truth))
    assert rules_alone > 0.01  # the damage matters
    assert errors["rules"] < errors["random"]
    assert errors["rules"] <= 0.5 * errors["random"]

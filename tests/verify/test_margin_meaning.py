"""One meaning of margin: min_margin is the output's smallest |pre-activation| for step and soft
networks alike (exhaustive, branch-and-bound); soft outputs add min_value_distance."""

from __future__ import annotations

import numpy as np

import thresholdc
from thresholdc.logic import source_from_text
from thresholdc.verification.bounds import verify_bounds
from thresholdc.verification.exhaustive import assignments, verify_exhaustive

TEXT = "input a, b, c\ny = atleast(2, a, b, c)\nz = a and not c\n"


def _z_and_values(net):
    X = assignments(3, 0, 8).astype(float)
    Z, A = net.forward(X)
    pos = {n.name: j for j, n in enumerate(net.neurons)}
    cols = [pos[o.source] for o in net.outputs]
    return np.abs(Z[:, cols]).min(axis=0), np.abs(A[:, cols] - 0.5).min(axis=0)


def test_step_and_sigmoid_margins_are_pre_activations():
    src = source_from_text(TEXT)
    for activation in ("step", "sigmoid"):
        net = thresholdc.compile_rules(TEXT, activation=activation, verify="none")
        zmin, dist = _z_and_values(net)
        report = verify_exhaustive(net, src)
        assert [o.min_margin for o in report.outputs] == zmin.tolist()
        want = None if activation == "step" else dist.tolist()
        got = [o.min_value_distance for o in report.outputs]
        assert got == ([None, None] if want is None else want)
        if activation == "sigmoid":  # the gain is in z: margin and value distance differ
            assert all(m > d for m, d in zip(zmin, dist))


def test_branch_and_bound_gives_lower_bounds_of_the_same_quantities():
    src = source_from_text(TEXT)
    net = thresholdc.compile_rules(TEXT, activation="sigmoid", verify="none")
    zmin, dist = _z_and_values(net)
    report = verify_bounds(net, src)
    for o, z, d in zip(report.outputs, zmin, dist):
        assert o.min_margin is not None and o.min_margin <= z + 1e-9
        assert o.min_value_distance is not None and o.min_value_distance <= d + 1e-9

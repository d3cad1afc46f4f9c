"""Random rule files compiled in every activation, compared with the reference evaluator.

The reference evaluator reads the rules directly (no network code), so these tests check the
soft-activation pass on networks as the compiler really builds them.
"""

from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, given, settings

from tests.network.step_networks import all_rows
from tests.strategies import rule_programs
from thresholdc.compiler import compile_rules
from thresholdc.logic.reference import evaluate
from thresholdc.syntax.parser import parse
from thresholdc.verification.certificate import check_certificate

EPS = 0.02

VARIANTS = [
    {"activation": "sigmoid", "tolerance": EPS},
    {"activation": "sigmoid", "tolerance": EPS, "layered": True},
    {"activation": "tanh", "encoding": "bipolar", "tolerance": EPS, "layered": True},
    {"activation": "relu"},
    {"activation": "relu", "layered": True},
]


@given(rule_programs(max_inputs=7, max_definitions=4))
@settings(max_examples=20, deadline=None, suppress_health_check=[HealthCheck.too_slow])
def test_compiled_rules_keep_their_truth_table(text: str) -> None:
    program = parse(text, "<rules>")
    truth = evaluate(program, all_rows(len(program.inputs))).astype(float)
    for options in VARIANTS:
        net = compile_rules(text, verify="none", **options)
        X = all_rows(len(net.inputs))
        if net.encoding == "bipolar":
            out = net.evaluate(2 * X - 1)
            assert (np.sign(out) == 2 * truth - 1).all(), options
            assert np.abs(out - (2 * truth - 1)).max() <= EPS * (1 + 1e-9), options
        elif options["activation"] == "relu":
            assert np.array_equal(net.evaluate(X), truth), options
        else:
            assert np.abs(net.evaluate(X) - truth).max() <= EPS * (1 + 1e-9), options
        if options.get("layered"):
            assert net.is_strict()
            assert len(net.dense_layers()) == net.depth  # one activation per layer
        if options["activation"] in ("sigmoid", "tanh"):
            check = check_certificate(net)
            assert check.ok, check.problems

"""The rule-structured start: the published construction's weights, and exact rule values."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings

from tests.logic.test_reference_sympy import _sympy_table
from tests.strategies import rule_cases
from thresholdc.logic import source_from_text
from thresholdc.syntax.parser import parse
from thresholdc.training.kbstart import rule_network
from thresholdc.training.tolerance import start_tolerance


def _unit(net, name):
    n = net.neuron(name)
    return dict(zip(n.inputs, n.weights)), n.bias


@pytest.mark.parametrize("w", [2.0, 4.0, 6.5])
def test_conjunction_disjunction_and_count_follow_the_construction(w):
    # Towell & Shavlik 1994 (from memory): conjunction bias -(P - 1/2)w with P the positive
    # antecedents, negated antecedents weight -w; disjunction bias -w/2; atleast(k) -(k - 1/2)w
    net = rule_network(parse(
        "input a, b, c, d\n"
        "both = a and b and not c\n"
        "any = a or b or d\n"
        "two = atleast(2, a, b, c, d)\n"
    ), weight=w)
    assert _unit(net, "both") == ({"a": w, "b": w, "c": -w}, -(2 - 0.5) * w)
    assert _unit(net, "any") == ({"a": w, "b": w, "d": w}, -w / 2)
    assert _unit(net, "two") == ({"a": w, "b": w, "c": w, "d": w}, -(2 - 0.5) * w)
    assert {n.activation for n in net.neurons} == {"sigmoid"}


def test_one_unit_per_definition_and_term_with_relays_for_skipped_layers():
    net = rule_network(parse("input a, b, c\nt = a and b\ny = t or (b and not c) or c\n"))
    by_role = {n.name: n.role for n in net.neurons}
    assert by_role == {"t": "gate", "y~1": "gate", "relay~c~1": "relay", "y": "gate"}
    assert net.is_strict() and net.depth == 2
    assert net.neuron("y~1").origin == "y" and net.neuron("relay~c~1").origin is None


def test_typed_literals_are_sums_of_one_hot_units_and_real_tests_are_units():
    prog = parse("input colour: {red, green, blue}, temp: real in [0, 1000], door\n"
                 "y = colour in {red, green} and temp > 300 and door\n")
    net = rule_network(prog, weight=4.0)
    w, b = _unit(net, "y")
    real = [n for n in net.neurons if n.inputs == ("temp",)][0]
    # a real test turns over on max(scale, 2% of the range) = 20 units of temp
    assert real.weights == (4.0 / 20,) and real.bias == pytest.approx(-4.0 / 20 * 300)
    # colour in {red, green} is one literal: colour=red + colour=green (exactly 0 or 1)
    relays = {n.inputs[0]: n.name for n in net.neurons if n.role == "relay"}
    # y reads units, not inputs: each unit source s is read as (s - l)/(h - l) with
    # h = σ(ω/2), l = 1 - h, so the weight is ω/(h - l) and the bias moves by -ω·l/(h - l)
    h = 1 / (1 + np.exp(-2.0))
    g = 4.0 / (2 * h - 1)
    assert w[relays["colour=red"]] == pytest.approx(g)
    assert w[relays["colour=green"]] == pytest.approx(g)
    assert b == pytest.approx(-(3 - 0.5) * 4.0 - 4 * g * (1 - h))
    plain = rule_network(prog, weight=4.0, soft_inputs=False)
    assert _unit(plain, "y")[0][relays["colour=red"]] == 4.0
    assert _unit(plain, "y")[1] == -(3 - 0.5) * 4.0
    X = np.array([[r, 1 - r, 0, t, d] for r in (0, 1) for t in (0, 1000) for d in (0, 1)],
                 dtype=float)
    assert net.decide(X)[:, 0].tolist() == [bool(t and d) for _ in (0, 1) for t in (0, 1)
                                            for d in (0, 1)]
    assert net.features[0]["units"] == ["colour=red", "colour=green", "colour=blue"]


@settings(max_examples=40, deadline=None)
@given(rule_cases(max_inputs=7, max_definitions=4, max_depth=3))
def test_start_with_large_weight_decides_every_rule_as_sympy_does(case):
    # sympy's logic module as the second evaluator, every row of the truth table
    net = rule_network(parse(case.text), weight=24.0)
    X = np.array(list(itertools.product((0, 1), repeat=len(case.inputs))), dtype=float)
    theirs = _sympy_table(case, X)
    ours = net.decide(X)
    bad = np.nonzero((ours != theirs).any(axis=1))[0]
    assert bad.size == 0, f"first row {X[bad[0]].tolist()}:\n{case.text}"


def test_tolerance_is_the_exact_worst_error_over_the_rule_domain():
    src = source_from_text("input a, b, c\ny = (a and b) or c\n")
    net = rule_network(src.program, weight=4.0)
    t = start_tolerance(net, src)
    X = np.array(list(itertools.product((0, 1), repeat=3)), dtype=float)
    worst = float(np.abs(net.evaluate(X) - src.evaluate(X)).max())
    assert t["method"] == "exhaustive" and t["assignments"] == 8
    assert t["worst_error"] == pytest.approx(worst) and t["decides_rules"] is (worst < 0.5)
    # moderate weights trade certainty for trainability: the error shrinks as w grows
    assert start_tolerance(rule_network(src.program, weight=8.0), src)["worst_error"] < worst


def test_tolerance_of_a_typed_start_counts_only_valid_assignments():
    src = source_from_text("input colour: {red, green, blue}, a\ny = colour == red or a\n")
    t = start_tolerance(rule_network(src.program, weight=6.0), src)
    assert t["method"] == "exhaustive" and t["assignments"] == 6 and t["decides_rules"]


def test_moderate_weight_start_can_fail_to_decide_deep_rules_and_says_so():
    src = source_from_text(
        "input a, b, c, d\nt = a implies b\nu = if a then b else c\nv = parity(a, b, c, d)\n"
        "q = t iff u\noutput v, q\n")
    low = start_tolerance(rule_network(src.program, weight=2.0), src)
    assert low["worst_error"] >= 0.5 and low["decides_rules"] is False
    assert start_tolerance(rule_network(src.program, weight=12.0), src)["decides_rules"]


def test_deep_rules_at_moderate_weight_decide_as_written_with_soft_inputs_read_back():
    # the refine benchmark's hidden rules (6 layers with relays) at ω = 4: reading every unit
    # source at its typical soft value keeps each unit's decision; the plain construction,
    # whose relays drift toward 0.7/0.3, gets many rows wrong
    from tests.benchmark_modules import load_benchmark
    from thresholdc.explain.columns import sample_rows, unit_rows
    from thresholdc.logic.reference import evaluate_definitions

    bench = load_benchmark("refine_bench")
    src = bench.true_source()
    C = sample_rows(src.program, 3000, np.random.default_rng(0))
    X = unit_rows(src.program, C, src.inputs)
    want = evaluate_definitions(src.program, C)["treat"]
    ours = rule_network(src.program, weight=4.0).decide(X)[:, 0]
    plain = rule_network(src.program, weight=4.0, soft_inputs=False).decide(X)[:, 0]
    assert rule_network(src.program, weight=4.0).depth >= 5
    assert (ours == want).mean() >= 0.999
    assert (plain != want).mean() > 0.05

"""verify_trained and retained_definitions against exhaustive enumeration (the outside check).

Per definition: for seeded random typed rule files compiled without synthesis (one neuron
per definition) and perturbed, each definition unit's verdict is compared with an
enumeration of that unit's decision against the definition's reference values.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from tests.verify.retention_cases import cases, load_trained_like
from tests.verify.test_milp_random import check  # noqa: E402
from thresholdc.compiler import compile_rules
from thresholdc.errors import UsageError
from thresholdc.ir.network import Neuron
from thresholdc.logic import RuleSource
from thresholdc.logic.source import source_from_text
from thresholdc.verification import retained_definitions, verify_network, verify_trained
from thresholdc.verification.definitions import definition_units
from thresholdc.verification.domain import boolean_or_typed_domain, network_rows

tl = load_trained_like()


def perturb(net, seed: int, scale: float):
    """Every weight and bias of ``net`` moved by N(0, scale) (a trained-like step net that
    keeps its neuron names, roles and origins)."""
    rng = np.random.default_rng(seed)
    neurons = []
    for n in net.neurons:
        w = np.asarray(n.weights, float) + rng.normal(0, scale, len(n.weights))
        neurons.append(replace(n, weights=tuple(w.tolist()),
                               bias=float(n.bias) + float(rng.normal(0, scale))))
    return replace(net, neurons=tuple(neurons))


def unit_truth(net, text, definition, unit):
    """Disagreements of ``unit`` with ``definition`` over every valid assignment."""
    src = source_from_text(text)
    program = replace(src.program, outputs=(definition,))
    d = boolean_or_typed_domain(src)
    X = d.unit_rows(d.enumerate(0, d.size))
    _, A = net.forward(network_rows(net, d, X))
    j = [n.name for n in net.neurons].index(unit)
    actual = A[:, j] > net.decision_threshold
    expected = RuleSource(src.file, src.text, program).evaluate(X)[:, 0]
    return int((actual != expected).sum())


def test_definitions_match_enumeration():
    seen = {"equal": 0, "different": 0}
    for text, seed in cases(41, 60):
        net = compile_rules(text, synthesis=False, verify="none")
        net = perturb(net, seed, [0.0, 0.2, 0.6][seed % 3])
        src = source_from_text(text)
        units = definition_units(net, src)
        reports = retained_definitions(net, src, time_limit=30)
        assert list(reports) == list(src.program.order)
        for d, rep in reports.items():
            if d not in units:
                assert rep.verdict == "undecided" and "no unit" in rep.bound
                continue
            assert rep.verdict in ("equal", "different"), (text, d, rep)
            wrong = unit_truth(net, text, d, units[d])
            if rep.verdict == "equal":
                assert wrong == 0, (text, d)
            else:
                assert wrong > 0 and rep.counterexamples
            seen[rep.verdict] += 1
    assert seen["equal"] > 10 and seen["different"] > 10, seen


def test_verify_trained_soft_matches_enumeration():
    for text, seed in cases(43, 30):
        link, rel = [(0.0, 0.0), (0.05, 0.1), (0.5, 0.5)][seed % 3]
        net = tl.trained_like(text, seed=seed, link=link, rel=rel)
        report = verify_trained(net, source_from_text(text), time_limit=30)
        assert report.method.removeprefix("sample+") in ("milp", "milp+relax", "sample")
        check(net, text, report)


def test_verify_trained_step_uses_milp():
    text = "input c: {r, g, b}, a\ny = c == r and a\n"
    net = perturb(compile_rules(text, verify="none"), 1, 0.05)
    report = verify_trained(net, source_from_text(text))
    assert report.method == "milp"
    check(net, text, report)


def test_named_subset_and_unknown_name():
    text = "input c: {r, g, b}, a, e\nhot = atleast(2, c == r, a, e)\ny = hot xor a\n"
    net = compile_rules(text, synthesis=False, verify="none")
    reports = retained_definitions(net, source_from_text(text), names=["hot"])
    assert reports["hot"].verdict == "equal" and "y" not in reports
    with pytest.raises(UsageError, match="nope"):
        retained_definitions(net, source_from_text(text), names=["nope"])
    # a broken definition unit is found, while the output reading it can still be right
    broken = replace(net, neurons=tuple(
        Neuron("hot", n.layer, n.inputs, n.weights, n.bias + 1.0, n.activation, n.role,
               n.origin) if n.name == "hot" else n for n in net.neurons))
    assert retained_definitions(broken, source_from_text(text))["hot"].verdict == "different"


def test_auto_sends_a_relu_network_on_a_large_typed_domain_to_the_milp():
    # 12 categorical inputs of 4 values: 4^12 = 16,777,216 valid assignments, too many to
    # enumerate; the exact ReLU form is no step network, so typed SAT does not apply.
    names = [f"c{i}" for i in range(12)]
    text = ("input " + ", ".join(f"{n}: {{a, b, c, d}}" for n in names) + "\n"
            "hot = atleast(2, c0 == a, c1 == b, c2 in {a, c})\n"
            "y = hot and not (c3 == d)\n")
    wrong = text.replace("c3 == d", "c3 == c")
    net = compile_rules(text, activation="relu")
    same = verify_network(net, source_from_text(text, "t.rules"))
    assert same.method.startswith("milp") and same.result == "equal"
    differs = verify_network(net, source_from_text(wrong, "t.rules"))
    # verify_trained: its sampling stage finds this one (method "sample"), else the MILP
    assert differs.method.split("+")[0] in ("sample", "milp") and differs.result == "different"
    row = differs.outputs[0].counterexamples[0].assignment
    assert row["c3"] in ("c", "d")  # the planted difference is at c3, in the user's values
    # the counterexample is real: the rules and the network disagree on it
    assert {o.verdict for o in differs.outputs} == {"different"}


def test_milp_is_a_method_of_its_own():
    text = "input k: {a, b, c}\ny = k == a\n"
    net = compile_rules(text, activation="relu")
    report = verify_network(net, source_from_text(text, "k.rules"), method="milp")
    assert report.result == "equal" and report.method.startswith("milp")

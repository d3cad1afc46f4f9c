"""MILP verdicts against exhaustive enumeration (the outside check), and the rule encoding
against the reference evaluator.

Seeded random typed rule files (tests/verify/retention_cases.py) are compiled and perturbed
as step, exact-ReLU-form and sigmoid dense networks (benchmarks/trained_like.py), at noise
levels from none to large, so some networks still compute their rules and some do not.  Every
``equal`` must be truly equal on every valid assignment and every counterexample real.
"""

from __future__ import annotations

import pathlib

import numpy as np
import pytest

from tests.verify.retention_cases import cases, is_counterexample, load_trained_like, truth
from thresholdc.compiler import compile_rules
from thresholdc.logic.source import source_from_text
from thresholdc.verification.domain import boolean_or_typed_domain
from thresholdc.verification.milp import verify_milp
from thresholdc.verification.milp_model import Model, encode_rules

tl = load_trained_like()
NOISE = [(0.0, 0.0), (0.05, 0.1), (0.3, 0.4), (1.0, 1.0)]


def check(net, text, report, decided=True):
    real = truth(net, text)
    for o in report.outputs:
        if decided:
            assert o.verdict in ("equal", "different"), (text, o)
        if o.verdict == "equal":
            assert real[o.name] == 0, (text, o.name)
        elif o.verdict == "different":
            assert o.counterexamples and o.found == len(o.counterexamples)
            for c in o.counterexamples:
                assert is_counterexample(net, text, o.name, c.assignment), (text, c)
        else:
            assert o.bound
    return real


@pytest.mark.parametrize("kind", ["step", pytest.param("relu", marks=pytest.mark.slow),
                                  "sigmoid"])
def test_milp_matches_enumeration(kind):
    seen = {"equal": 0, "different": 0}
    count = {"step": 80, "relu": 30, "sigmoid": 30}[kind]
    for text, seed in cases({"step": 21, "relu": 22, "sigmoid": 23}[kind], count):
        link, rel = NOISE[seed % 4]
        if kind == "sigmoid":
            net = tl.trained_like(text, seed=seed, link=link, rel=rel)
        else:
            net = tl.step_like(text, seed=seed, link=link, rel=rel, relu=kind == "relu")
        report = verify_milp(net, source_from_text(text), time_limit=30)
        check(net, text, report)
        for o in report.outputs:
            seen[o.verdict] += 1
    assert seen["equal"] > 5 and seen["different"] > 5, seen


def test_rule_encoding_is_exact():
    """With every input fixed, the encoded rules take exactly the reference evaluator's
    values (reference: thresholdc.logic.reference, which shares no code with the encoding)."""
    rng = np.random.default_rng(5)
    for text, _ in cases(31, 25):
        src = source_from_text(text)
        d = boolean_or_typed_domain(src)
        choice = d.enumerate(0, d.size)[rng.permutation(d.size)[:6]]
        expected = src.evaluate(d.unit_rows(choice))
        for r in range(len(choice)):
            m = Model()
            choices = m.choice_vars(d)
            rules = encode_rules(m, src.program, d, choices, {})
            for k, vs in enumerate(choices):
                m.lb[vs[choice[r, k]]] = 1.0
            sol = m.solve(time_limit=10)
            assert sol.status == "feasible"
            for j, name in enumerate(src.outputs):
                coefs, const = rules[name]
                value = const + sum(c * sol.x[v] for v, c in coefs.items())
                assert round(value) == int(expected[r, j]), (text, name)


def test_real_threshold_strictness():
    """A dense step network over two real inputs (no cell-exact form, so the reals stay
    continuous over their whole ranges): equal to its own rules; `t > 30` read as `t >= 30`
    differs exactly at t = 30, `u < 5` read as `u <= 5` exactly at u = 5."""
    text = "input t: real in [0, 50], u: real in [0, 10], a\ny = t > 30 and a and u < 5\n"
    net = tl.step_like(text, link=0.0, rel=0.0)
    same = verify_milp(net, source_from_text(text))
    assert "whole declared ranges" in " ".join(same.notes)
    assert same.outputs[0].verdict == "equal"
    for old, new, var, at in (("t > 30", "t >= 30", "t", 30.0), ("u < 5", "u <= 5", "u", 5.0)):
        other = verify_milp(net, source_from_text(text.replace(old, new)))
        assert other.outputs[0].verdict == "different"
        for c in other.counterexamples:
            assert c.assignment[var] == at and c.assignment["a"] == 1
            assert 0 <= c.assignment["t"] <= 50 and 0 <= c.assignment["u"] <= 10


def test_fifty_categorical_inputs():
    """The seed-bank rules (60 categorical inputs): the compiled network is proven equal per
    output, and a planted one-value change (one more value accepted in one test) is found
    with a counterexample in the user's column names and values."""
    path = pathlib.Path(__file__).resolve().parents[2] / "circuits" / "seed_bank.rules"
    text = path.read_text()
    net = compile_rules(text, verify="none")
    report = verify_milp(net, source_from_text(text, str(path)))
    assert [o.verdict for o in report.outputs] == ["equal", "equal"]
    planted = text.replace("label_1 == match and", "label_1 in {match, unclear} and")
    assert planted != text
    report = verify_milp(net, source_from_text(planted, str(path)))
    verdicts = {o.name: o.verdict for o in report.outputs}
    assert verdicts["accept_lot"] == "different"
    for c in report.counterexamples:
        assert c.assignment["label_1"] == "unclear"
        assert set(c.assignment) == {f"{g}_{i}" for g in ("germ", "purity", "vigour", "moist",
                                                          "pest", "label")
                                     for i in range(1, 11)}

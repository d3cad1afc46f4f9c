"""Branch-and-bound verification of trained-like (perturbed sigmoid) networks.

The branch-and-bound must reach the same verdict and the same exact disagreement counts as
the exhaustive check on every network small enough for both, and every counterexample it
reports must be one (checked with the network and the rules directly).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from thresholdc.compiler import compile_rules
from thresholdc.errors import VerificationUndecided
from thresholdc.logic.source import source_from_text
from thresholdc.verification.bounds import verify_bounds
from thresholdc.verification.exhaustive import verify_exhaustive

RULES = [
    "input a, b, c, d\nalarm = atleast(2, a, b, c) and not d\nok = a xor b xor c\n",
    "input p, q, r, s, t\ny = (p and q) or (r and not s) or (t -> p)\n",
    "input a, b, c, d, e\nm = majority(a, b, c, d, e)\nw = 2*a + b - c >= 1\n",
    "input x, y, z\nsel = if x then y else z\nnz = nor(x, y, z)\n",
]


def perturb(net, sigma: float, rng: np.random.Generator):
    """A trained-like copy: every weight and bias moved by Gaussian noise of scale sigma
    (relative to the largest |weight| of its neuron)."""
    neurons = []
    for n in net.neurons:
        size = max([abs(w) for w in n.weights] + [abs(n.bias), 1.0])
        w = np.asarray(n.weights, dtype=float) + rng.normal(0, sigma * size, len(n.weights))
        b = float(n.bias) + rng.normal(0, sigma * size)
        neurons.append(replace(n, weights=tuple(w.tolist()), bias=b))
    return replace(net, neurons=tuple(neurons))


def check_same(net, src):
    ex = verify_exhaustive(net, src)
    bb = verify_bounds(net, src)
    assert bb.method == "bounds"
    assert bb.result == ex.result
    for o_ex, o_bb in zip(ex.outputs, bb.outputs, strict=True):
        assert (o_bb.name, o_bb.agrees, o_bb.disagreements) == (
            o_ex.name, o_ex.agrees, o_ex.disagreements)
        if o_ex.min_margin is not None and o_bb.min_margin is not None:
            assert o_bb.min_margin <= o_ex.min_margin + 1e-9  # a lower bound
    units = list(src.inputs)
    for c in bb.counterexamples:
        row = np.array([[c.assignment[u] for u in units]], dtype=float)
        k = net.output_names.index(c.output)
        expected = bool(src.evaluate(row)[0, list(src.outputs).index(c.output)])
        got = bool(net.decide(row[:, [units.index(u) for u in net.inputs]])[0, k])
        assert expected == c.expected and got != expected
    return ex, bb


@pytest.mark.parametrize("text", RULES)
def test_compiled_sigmoid_agrees(text):
    src = source_from_text(text)
    net = compile_rules(text, activation="sigmoid", verify="none")
    ex, bb = check_same(net, src)
    assert bb.result == "equal" and bb.assignments == 1 << len(src.inputs)


def test_perturbed_network_both_ways():
    text = RULES[0]
    src = source_from_text(text)
    net = compile_rules(text, activation="sigmoid", verify="none")
    rng = np.random.default_rng(1)
    small = perturb(net, 0.02, rng)
    ex, bb = check_same(small, src)
    assert bb.result == "equal"
    # Break the rule on purpose: the alarm neuron's bias pushed so that it fires more often.
    name = net.outputs[0].source
    broken = replace(net, neurons=tuple(
        replace(n, bias=n.bias + 2.5 * max(abs(w) for w in n.weights)) if n.name == name else n
        for n in net.neurons))
    ex, bb = check_same(broken, src)
    assert bb.result == "different" and bb.outputs[0].disagreements > 0
    assert bb.outputs[1].agrees


def test_random_perturbed_networks_agree_with_exhaustive():
    rng = np.random.default_rng(20240607)
    verdicts = set()
    for trial in range(24):
        text = RULES[trial % len(RULES)]
        src = source_from_text(text)
        base = compile_rules(text, activation="sigmoid", layered=bool(trial % 2),
                             verify="none")
        net = perturb(base, float(rng.choice([0.05, 0.3, 0.8])), rng)
        ex, _ = check_same(net, src)
        verdicts.add(ex.result)
    assert verdicts == {"equal", "different"}  # both kinds were exercised


def test_step_network_too():
    text = RULES[2]
    src = source_from_text(text)
    net = compile_rules(text, verify="none")
    check_same(net, src)
    check_same(perturb(net, 0.4, np.random.default_rng(3)), src)


def test_above_the_exhaustive_bound():
    names = [f"x{i}" for i in range(26)]
    text = (f"input {', '.join(names)}\n"
            f"many = atleast(4, {', '.join(names)})\n"
            "pair = (x0 and x1) or (x24 and not x25)\n")
    src = source_from_text(text)
    net = compile_rules(text, activation="sigmoid", verify="none")
    with pytest.raises(VerificationUndecided):
        verify_exhaustive(net, src)
    rep = verify_bounds(net, src)
    assert rep.result == "equal" and rep.assignments == 1 << 26
    wrong = source_from_text(text.replace("atleast(4", "atleast(5"))
    rep = verify_bounds(net, wrong)
    # atleast(4) but not atleast(5): exactly 4 of 26 are true: C(26, 4) assignments.
    assert rep.result == "different"
    assert rep.outputs[0].disagreements == 14950  # C(26, 4) = 26·25·24·23/24 = 14950
    assert rep.outputs[1].agrees


def test_netlist_source():
    bench = "INPUT(a)\nINPUT(b)\nINPUT(c)\nOUTPUT(y)\nn = NAND(a, b)\ny = XOR(n, c)\n"
    src = source_from_text(bench, "tiny.bench")
    from thresholdc.compiler import compile_source

    net = compile_source(src, activation="sigmoid", verify="none").network
    ex, bb = check_same(net, src)
    assert bb.result == "equal"
    check_same(perturb(net, 0.6, np.random.default_rng(5)), src)


def test_node_limit_is_undecided():
    names = [f"x{i}" for i in range(14)]
    text = f"input {', '.join(names)}\np = parity({', '.join(names)})\n"
    net = compile_rules(text, activation="sigmoid", verify="none")
    rep = verify_bounds(net, source_from_text(text), max_nodes=100)
    assert rep.result == "undecided" and not rep.equal
    (p,) = rep.outputs
    assert p.verdict == "undecided" and not p.agrees and "stopped at" in p.bound


def test_report_layout():
    text = RULES[3]
    net = compile_rules(text, activation="sigmoid", verify="none")
    data = verify_bounds(net, source_from_text(text.replace("nor(", "nand("))).to_dict()
    assert list(data)[:4] == ["result", "method", "assignments", "outputs"]
    assert data["result"] == "different" and data["method"] == "bounds"
    for o in data["outputs"]:
        assert list(o) == ["name", "verdict", "agrees", "disagreements", "found",
                           "counterexamples", "min_margin", "min_value_distance", "bound"]
    bad = data["outputs"][1]
    assert not bad["agrees"] and 1 <= len(bad["counterexamples"]) <= 5
    assert bad["verdict"] == "different" and bad["disagreements"] == bad["found"] >= 1
    assert set(bad["counterexamples"][0]) == {"x", "y", "z"}


def test_verify_network_sends_soft_networks_above_the_bound_here():
    from thresholdc.verification.auto import verify_network

    names = [f"x{i}" for i in range(26)]
    text = f"input {', '.join(names)}\ny = atleast(3, {', '.join(names)})\n"
    net = compile_rules(text, activation="sigmoid", verify="none")
    rep = verify_network(net, source_from_text(text))
    assert (rep.method, rep.result) == ("bounds", "equal")
    wrong = source_from_text(text.replace("atleast(3", "atleast(2"))
    rep = verify_network(net, wrong)
    assert rep.result == "different"
    assert rep.outputs[0].disagreements == 325  # exactly 2 of 26 true: C(26, 2) = 26·25/2

"""The collapsing pass on random rule files: the network equals the rules' reference evaluator
(``thresholdc.logic.reference``, which shares no code with the network path) on every input
row, and the project's local check proves it neuron by neuron."""

from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from thresholdc.logic.lower import lower_to_gates
from thresholdc.logic.reference import evaluate
from thresholdc.logic.source import NetlistSource
from thresholdc.syntax.parser import parse
from thresholdc.synth.collapsing import collapse
from thresholdc.verification.local import verify_local

NAMES = ["a", "b", "c", "d", "e", "f"]


@st.composite
def expressions(draw, names: list[str], depth: int = 3) -> str:
    """A random expression of the rule language over ``names``."""
    if depth == 0 or draw(st.integers(0, 3)) == 0:
        atom = draw(st.sampled_from(names))
        return f"not {atom}" if draw(st.booleans()) else atom
    form = draw(st.integers(0, 8))
    sub = [draw(expressions(names, depth - 1)) for _ in range(draw(st.integers(2, 4)))]
    if form == 0:
        return "(" + " and ".join(sub) + ")"
    if form == 1:
        return "(" + " or ".join(sub) + ")"
    if form == 2:
        return "(" + " xor ".join(sub) + ")"
    if form == 3:
        k = draw(st.integers(0, len(sub)))
        fn = draw(st.sampled_from(["atleast", "atmost", "exactly"]))
        return f"{fn}({k}, {', '.join(sub)})"
    if form == 4:
        return f"majority({', '.join(sub)})"
    if form == 5:
        return f"(if {sub[0]} then {sub[1]} else {sub[-1]})"
    if form == 6:
        terms = [f"{draw(st.integers(1, 3))}*({s})" for s in sub]
        op = draw(st.sampled_from([">=", "<=", "==", ">", "<", "!="]))
        return f"({' + '.join(terms)} {op} {draw(st.integers(0, 6))})"
    if form == 7:
        return f"parity({', '.join(sub)})"
    return f"({sub[0]} -> {sub[1]})"


@st.composite
def rule_files(draw) -> str:
    n = draw(st.integers(2, 6))
    names = NAMES[:n]
    lines = ["input " + ", ".join(names)]
    defs = []
    for k in range(draw(st.integers(1, 4))):
        expr = draw(expressions(names + defs))
        lines.append(f"r{k} = {expr}")
        defs.append(f"r{k}")
    return "\n".join(lines) + "\n"


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(rule_files(), st.sampled_from([4, 6, 8]), st.sampled_from([None, 3]))
def test_random_rules_collapse_to_the_reference_function(text, k, fan_in):
    program = parse(text, "r.rules")
    gates = lower_to_gates(program)
    net = collapse(gates, cut_size=k, max_fan_in=fan_in)
    n = len(gates.inputs)
    X = ((np.arange(1 << n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)
    want = evaluate(program, X).astype(bool)
    got = net.decide(X)
    assert np.array_equal(got, want), text
    Z, _ = net.forward(X)
    assert Z.size == 0 or np.abs(Z).min() >= 0.5
    report = verify_local(net, NetlistSource("r.bench", "", gates))
    assert report.result == "equal", (text, report.notes)
    if fan_in is not None:
        assert all(nn.fan_in <= fan_in for nn in net.neurons)


def neurons_of(text: str) -> int:
    """Neurons of the collapsed network of a rule file (checked against the reference)."""
    program = parse(text, "t.rules")
    gates = lower_to_gates(program)
    net = collapse(gates)
    n = len(gates.inputs)
    X = ((np.arange(1 << n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)
    assert np.array_equal(net.decide(X), evaluate(program, X).astype(bool))
    return len(net.neurons)


def test_known_constructions_written_as_rules():
    # Muroga 1971: the full adder in two threshold gates
    assert neurons_of("input a, b, c\nsum = a ^ b ^ c\ncarry = majority(a, b, c)\n") == 2
    assert neurons_of("input a, b, c\ny = a and (b or c)\n") == 1
    assert neurons_of("input a, b, c, d, e, f\ny = atleast(3, a, b, c, d, e) and f\n") == 1
    assert neurons_of("input a, b, c, d, e\ny = atmost(2, a, b, c, d, e)\n") == 1


def test_parity_of_seven_rules_is_three_neurons_however_written():
    # ⌈log2(7 + 1)⌉ = 3 neurons (common practice)
    head = "input a, b, c, d, e, f, g\n"
    names = "abcdefg"
    terms = []
    for r in range(128):
        if bin(r).count("1") % 2:
            terms.append("(" + " and ".join(x if (r >> i) & 1 else f"not {x}"
                                             for i, x in enumerate(names)) + ")")
    for body in ("y = a ^ b ^ c ^ d ^ e ^ f ^ g\n",
                 "y = parity(a, parity(b, c), d xor (e xor f), g)\n",
                 "p = a xor b\nq = p xor c\nr = q xor d\ns = r xor e\nt = s xor f\n"
                 "y = t xor g\noutput y\n",
                 "y = " + " or ".join(terms) + "\n"):
        assert neurons_of(head + body) == 3, body

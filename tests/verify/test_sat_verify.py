"""verify_sat: proofs, counterexamples, budgets, back ends and refusals."""

from __future__ import annotations

import multiprocessing
import random
from dataclasses import replace

import numpy as np
import pytest

pytest.importorskip("pysat.solvers")

from tests.verify.threshold_builders import (  # noqa: E402
    gate_for_gate,
    load_gen_circuits,
    multiplier_network,
)
from thresholdc.errors import UsageError  # noqa: E402
from thresholdc.ir.network import Network, Neuron, Output  # noqa: E402
from thresholdc.ir.reference import Reference  # noqa: E402
from thresholdc.logic.source import source_from_text  # noqa: E402
from thresholdc.verification.sat import verify_sat  # noqa: E402
from thresholdc.verification.sat.miter import available_solvers, prove_equivalent  # noqa: E402

gc = load_gen_circuits()


def table(n: int) -> np.ndarray:
    return ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)


def truly_equal(net: Network, src: Reference) -> bool:
    """Ground truth by enumeration (small inputs only)."""
    X = table(len(src.inputs))
    perm = [list(src.inputs).index(u) for u in net.inputs]
    order = [list(src.outputs).index(o.name) for o in net.outputs]
    return bool(np.array_equal(net.decide(X[:, perm]), src.evaluate(X)[:, order]))


def mutate(net: Network, rng: random.Random) -> Network:
    """One neuron with one weight or its bias changed by ±1."""
    k = rng.randrange(len(net.neurons))
    n = net.neurons[k]
    if n.weights and rng.random() < 0.6:
        i = rng.randrange(len(n.weights))
        ws = list(n.weights)
        ws[i] += rng.choice((-1, 1))
        n = replace(n, weights=tuple(ws))
    else:
        n = replace(n, bias=n.bias + rng.choice((-1, 1)))
    return replace(net, neurons=net.neurons[:k] + (n,) + net.neurons[k + 1:])


def check_counterexamples(report, net, src):
    """Every reported counterexample really separates the two sides."""
    assert report.counterexamples
    for c in report.counterexamples:
        xs = np.array([[c.assignment[u] for u in src.inputs]])
        xn = np.array([[c.assignment[u] for u in net.inputs]])
        k = list(net.output_names).index(c.output)
        want = src.evaluate(xs)[0, list(src.outputs).index(c.output)]
        assert bool(net.decide(xn)[0, k]) != bool(want)
        assert c.expected == bool(want)


C17 = """INPUT(1)\nINPUT(2)\nINPUT(3)\nINPUT(6)\nINPUT(7)\nOUTPUT(22)\nOUTPUT(23)
10 = NAND(1, 3)\n11 = NAND(3, 6)\n16 = NAND(2, 11)\n19 = NAND(11, 7)\n22 = NAND(10, 16)
23 = NAND(16, 19)\n"""


def test_c17_equal_and_every_mutation_judged_right():
    src = source_from_text(C17, "c17.bench")
    net = gate_for_gate(src.gates())
    assert verify_sat(net, src, time_limit=30).result == "equal"
    rng = random.Random(5)
    for _ in range(12):
        bad = mutate(net, rng)
        report = verify_sat(bad, src, time_limit=30)
        assert report.result == ("equal" if truly_equal(bad, src) else "different")
        if report.result == "different":
            check_counterexamples(report, bad, src)


@pytest.mark.parametrize("seed", range(4))
def test_random_netlists_and_mutations(seed):
    rng = random.Random(seed)
    lines = [f"INPUT(i{k})" for k in range(7)]
    sigs = [f"i{k}" for k in range(7)]
    for k in range(30):
        op = rng.choice(["AND", "NAND", "OR", "NOR", "XOR", "XNOR", "NOT"])
        args = rng.sample(sigs, 1 if op == "NOT" else 2)
        lines.append(f"g{k} = {op}({', '.join(args)})")
        sigs.append(f"g{k}")
    lines += [f"OUTPUT(g{k})" for k in (27, 28, 29)]
    src = source_from_text("\n".join(lines) + "\n", "r.bench")
    net = gate_for_gate(src.gates())
    assert verify_sat(net, src, time_limit=30).result == "equal"
    bad = mutate(net, rng)
    report = verify_sat(bad, src, time_limit=30)
    assert report.result == ("equal" if truly_equal(bad, src) else "different")


def test_collapsed_multiplier_against_nor_netlist():
    # Two neurons per full adder against 9 NOR gates per full adder: no gate corresponds.
    n = 6
    src = source_from_text(gc.multiplier(n), "m.bench")
    net = multiplier_network(n)
    report = verify_sat(net, src, time_limit=60)
    assert report.result == "equal", report.notes
    bad = mutate(net, random.Random(1))
    report = verify_sat(bad, src, time_limit=60)
    if report.result == "different":
        for c in report.counterexamples:
            # the product written with Python integers
            want = gc.reference("multiplier", n, c.assignment)[c.output]
            assert c.expected == bool(want)
        check_counterexamples(report, bad, src)
    else:
        assert truly_equal(bad, src)


def test_rules_source_weighted_and_counting():
    text = (
        "input a0, a1, a2, a3, b, c, d\n"
        "big = 8*a3 + 4*a2 + 2*a1 + a0 >= 11\n"
        "two = atleast(2, b, c, d)\n"
        "y = big or (two and not a0)\n"
    )
    src = source_from_text(text, "w.rules")
    a = ["a0", "a1", "a2", "a3"]
    neurons = (
        Neuron("big", 1, tuple(a), (1, 2, 4, 8), -10.5),
        Neuron("two", 1, ("b", "c", "d"), (1, 1, 1), -1.5),
        Neuron("y", 2, ("big", "two", "a0"), (2, 1, -1), -0.5),
    )
    net = Network(tuple(a) + ("b", "c", "d"), neurons, (Output("y", "y"),))
    assert truly_equal(net, src)
    assert verify_sat(net, src, time_limit=30).result == "equal"
    off = replace(net, neurons=(replace(neurons[0], bias=-9.5),) + neurons[1:])
    report = verify_sat(off, src, time_limit=30)
    assert report.result == "different"
    check_counterexamples(report, off, src)


def test_fractional_weights_are_exact():
    src = source_from_text("input a, b\ny = a and b\n", "f.rules")
    # 0.3 + 0.3 - 0.45 > 0 > 0.3 - 0.45: an AND written with decimals
    net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (0.3, 0.3), -0.45),),
                  (Output("y", "y"),))
    assert verify_sat(net, src, time_limit=30).result == "equal"


def test_wide_neuron_uses_pb_encoding():
    # a 14-input comparison with large weights (interval BDD on the network side,
    # binary adder on the rule side)
    names = [f"x{i}" for i in range(14)]
    weights = [3 * i + 1 for i in range(14)]
    terms = " + ".join(f"{w}*{x}" for w, x in zip(weights, names))
    src = source_from_text(f"input {', '.join(names)}\ny = {terms} >= 150\n", "p.rules")
    net = Network(tuple(names), (Neuron("y", 1, tuple(names), tuple(weights), -149.5),),
                  (Output("y", "y"),))
    assert verify_sat(net, src, time_limit=30).result == "equal"
    off = replace(net, neurons=(replace(net.neurons[0], bias=-150.5),))
    report = verify_sat(off, src, time_limit=30)
    assert report.result == "different"
    check_counterexamples(report, off, src)


def test_time_limit_is_enforced():
    # a*b against b*a: the arrays share no structure, which is hard for CDCL solvers
    n = 12
    src = source_from_text(gc.multiplier(n), "m.bench")
    net = multiplier_network(n)
    swap = {f"a{i}": f"b{i}" for i in range(n)} | {f"b{i}": f"a{i}" for i in range(n)}
    net = replace(net, neurons=tuple(
        replace(x, inputs=tuple(swap.get(i, i) for i in x.inputs)) for x in net.neurons))
    report = verify_sat(net, src, time_limit=1.0)
    # The network is equal, but the miter is hard: within 1 s the solver may or may not
    # finish (it depends on the machine's load), so either a proof or the stated bound.
    assert report.result in ("undecided", "equal")
    if report.result == "undecided":
        assert any("did not finish" in n for n in report.notes)
        open_ = [o for o in report.outputs if o.verdict == "undecided"]
        # the low product bits are proven on small cuts; the rest name the bound reached
        assert open_ and all("time limit of 1 s" in o.bound for o in open_)
        assert all(o.verdict in ("equal", "undecided") for o in report.outputs)
    assert not multiprocessing.active_children()  # the solver process was ended


@pytest.mark.parametrize("solver", [s for s in available_solvers()][:8])
def test_every_back_end(solver):
    src = source_from_text(gc.comparator(6), "c.bench")
    net = gate_for_gate(src.gates())
    assert verify_sat(net, src, time_limit=30, solver=solver).result == "equal"
    bad = mutate(net, random.Random(3))
    report = verify_sat(bad, src, time_limit=30, solver=solver)
    assert report.result == ("equal" if truly_equal(bad, src) else "different")


def test_raw_miter_needs_the_solver():
    # without hashing and sweeping the solver decides; with them, no solver call is needed
    src = source_from_text(gc.adder(4), "a.bench")
    net = gate_for_gate(src.gates())
    from thresholdc.verification.sat import network_side, source_side

    raw = prove_equivalent(src.inputs, src.outputs, source_side(src), network_side(net),
                           time_limit=30, sweep=False, share=False)
    assert raw.status == "equal" and raw.stats["solver"]
    swept = prove_equivalent(src.inputs, src.outputs, source_side(src), network_side(net),
                             time_limit=30)
    assert swept.status == "equal" and swept.stats["solver"] is None


def test_soft_network_is_refused():
    src = source_from_text("input a\ny = not a\n", "s.rules")
    net = Network(("a",), (Neuron("y", 1, ("a",), (-4.0,), 2.0, "sigmoid"),),
                  (Output("y", "y"),))
    with pytest.raises(UsageError, match="step network"):
        verify_sat(net, src, time_limit=5)


def test_names_must_match():
    src = source_from_text("input a, b\ny = a and b\n", "n.rules")
    net = Network(("a", "b"), (Neuron("z", 1, ("a", "b"), (1, 1), -1.5),), (Output("z", "z"),))
    with pytest.raises(UsageError, match="output names differ"):
        verify_sat(net, src, time_limit=5)


def test_constant_network_against_a_tautology():
    # the network's output is constant 1, the rule a tautology that is not constant by
    # construction: the miter's constant literal must be pinned to true
    src = source_from_text("input x0, x1\nd0 = x0 implies atleast(1, x0, x1)\n", "t.rules")
    net = Network(("x0", "x1"), (Neuron("d0", 1, ("x0",), (-1,), 1.5),), (Output("d0", "d0"),))
    assert truly_equal(net, src)
    assert verify_sat(net, src, time_limit=10).result == "equal"
    low = Network(("x0", "x1"), (Neuron("d0", 1, ("x0",), (-1,), 0.5),), (Output("d0", "d0"),))
    assert verify_sat(low, src, time_limit=10).result == "different"

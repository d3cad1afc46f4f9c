"""verify_local: cone-by-cone proofs, structural checks, and the rules-to-gates step."""

from __future__ import annotations

import random
from dataclasses import replace

import numpy as np
import pytest

from tests.verify.threshold_builders import gate_for_gate, load_gen_circuits
from thresholdc.errors import UsageError
from thresholdc.ir.gates import Gate, GateGraph
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.ir.reference import Reference
from thresholdc.logic.source import RuleSource, source_from_text
from thresholdc.network.layering import insert_relays
from thresholdc.syntax import parse
from thresholdc.verification.auto import verify_network
from thresholdc.verification.local import structural_classes, verify_local

gc = load_gen_circuits()


def table(n: int) -> np.ndarray:
    return ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)


def truly_equal(net: Network, src: Reference) -> bool:
    X = table(len(src.inputs))
    perm = [list(src.inputs).index(u) for u in net.inputs]
    order = [list(src.outputs).index(o.name) for o in net.outputs]
    return bool(np.array_equal(net.decide(X[:, perm]), src.evaluate(X)[:, order]))


def carries_its_signal(net: Network, k: int, src: Reference) -> bool:
    """Whether neuron ``k`` equals the netlist signal of its name on every input."""
    X = table(len(src.inputs))
    perm = [list(src.inputs).index(u) for u in net.inputs]
    _, A = net.forward(X[:, perm].astype(float))
    want = src.gates().simulate(X, [net.neurons[k].name])[:, 0]
    return bool(np.array_equal(A[:, k] > 0.5, want))


def with_neuron(net: Network, k: int, **changes) -> Network:
    n = replace(net.neurons[k], **changes)
    return replace(net, neurons=net.neurons[:k] + (n,) + net.neurons[k + 1:])


C17 = """INPUT(1)\nINPUT(2)\nINPUT(3)\nINPUT(6)\nINPUT(7)\nOUTPUT(22)\nOUTPUT(23)
10 = NAND(1, 3)\n11 = NAND(3, 6)\n16 = NAND(2, 11)\n19 = NAND(11, 7)\n22 = NAND(10, 16)
23 = NAND(16, 19)\n"""


@pytest.mark.parametrize("kind, n", [("adder", 4), ("comparator", 4), ("multiplier", 3),
                                     ("parity", 9)])
def test_gate_for_gate_circuits_are_proven(kind, n):
    src = source_from_text(getattr(gc, kind)(n), f"{kind}.bench")
    net = gate_for_gate(src.gates())
    assert truly_equal(net, src)
    report = verify_local(net, src)
    assert report.result == "equal", report.notes
    assert report.method == "local"
    assert any("netlist itself" in p for p in report.proofs)


def test_every_single_mutation_of_c17_is_judged_right():
    src = source_from_text(C17, "c17.bench")
    net = gate_for_gate(src.gates())
    for k in range(len(net.neurons)):
        n = net.neurons[k]
        for change in ({"bias": n.bias + 1}, {"bias": n.bias - 1},
                       {"weights": (n.weights[0] + 1,) + n.weights[1:]}):
            bad = with_neuron(net, k, **change)
            report = verify_local(bad, src)
            if truly_equal(bad, src):
                if carries_its_signal(bad, k, src):
                    # a changed neuron that still computes its gate on every input is proven
                    assert report.result == "equal", report.notes
                else:
                    # the changed neuron no longer computes its gate, and the change is masked
                    # further on: local proves neuron by neuron, so it cannot show the outputs
                    # that read it equal; auto (local, then SAT) decides them
                    assert report.result == "undecided"
                    assert verify_network(bad, src).result == "equal"
            else:
                # the 256 random rows (fixed seed) cover all 32 inputs: the difference is shown
                assert report.result == "different"
                for c in report.counterexamples:
                    xn = np.array([[c.assignment[u] for u in bad.inputs]])
                    j = bad.output_names.index(c.output)
                    assert bool(bad.decide(xn)[0, j]) != c.expected


def test_a_wrong_cone_is_never_proven():
    src = source_from_text(gc.adder(3), "a.bench")
    net = gate_for_gate(src.gates())
    rng = random.Random(0)
    for _ in range(20):
        k = rng.randrange(len(net.neurons))
        bad = with_neuron(net, k, bias=net.neurons[k].bias + rng.choice((-1, 1)))
        report = verify_local(bad, src)
        assert report.result != "equal" or truly_equal(bad, src)
        if report.result == "different":
            assert not truly_equal(bad, src)


def test_missing_or_bad_cone_records():
    src = source_from_text(C17, "c17.bench")
    net = gate_for_gate(src.gates())
    no_meta = replace(net, meta={})
    assert verify_local(no_meta, src).result == "undecided"
    cones = dict(net.meta["cones"])
    del cones["16"]
    report = verify_local(net.with_meta(cones=cones), src)
    assert report.result == "undecided"
    cones = dict(net.meta["cones"])
    cones["22"] = {"root": "23", "leaves": ["10", "16", "19"]}  # the wrong root
    report = verify_local(net.with_meta(cones=cones), src)
    assert report.result == "undecided" and any("differs from its cone" in n
                                                 for n in report.notes)
    cones = dict(net.meta["cones"])
    cones["22"] = {"root": "22", "leaves": ["10"]}  # leaves that do not close the cone
    report = verify_local(net.with_meta(cones=cones), src)
    assert report.result == "undecided" and any("'22'" in n for n in report.notes)
    cones = dict(net.meta["cones"])
    cones["22"] = {"root": "nowhere", "leaves": []}
    assert verify_local(net.with_meta(cones=cones), src).result == "undecided"


def test_relays_of_the_strict_layered_form():
    src = source_from_text(gc.adder(3), "a.bench")
    net = insert_relays(gate_for_gate(src.gates()))
    assert any(n.role == "relay" for n in net.neurons)
    assert verify_local(net, src).result == "equal"


def test_merged_duplicate_gates_are_checked_by_structural_hashing():
    text = "INPUT(a)\nINPUT(b)\nINPUT(c)\nOUTPUT(y)\nOUTPUT(z)\n" \
           "g1 = AND(a, b)\ng2 = AND(b, a)\ny = OR(g1, c)\nz = XOR(g2, c)\n"
    src = source_from_text(text, "d.bench")
    # one neuron for both g1 and g2; z's cone names g2 as its leaf, the network reads g1
    neurons = (
        Neuron("g1", 1, ("a", "b"), (1, 1), -1.5),
        Neuron("y", 2, ("g1", "c"), (1, 1), -0.5),
        Neuron("z~h", 2, ("g1", "c"), (1, 1), -1.5),
        Neuron("z", 3, ("g1", "c", "z~h"), (1, 1, -2), -0.5),
    )
    cones = {"g1": {"root": "g1", "leaves": ["a", "b"]},
             "y": {"root": "y", "leaves": ["g1", "c"]},
             "z": {"root": "z", "leaves": ["g2", "c"]}}
    net = Network(("a", "b", "c"), neurons, (Output("y", "y"), Output("z", "z")),
                  {"cones": cones})
    assert truly_equal(net, src)
    assert verify_local(net, src).result == "equal"
    classes = structural_classes(src.gates())
    assert classes["g1"] == classes["g2"]


def test_output_reading_a_buffered_unit():
    text = "INPUT(a)\nINPUT(b)\nOUTPUT(y)\nOUTPUT(w)\nx = AND(a, b)\ny = BUFF(x)\nw = NOT(y)\n"
    src = source_from_text(text, "b.bench")
    neurons = (Neuron("x", 1, ("a", "b"), (1, 1), -1.5), Neuron("w", 1, ("a", "b"), (-1, -1), 1.5))
    cones = {"x": {"root": "x", "leaves": ["a", "b"]}, "w": {"root": "w", "leaves": ["a", "b"]}}
    net = Network(("a", "b"), neurons, (Output("y", "x"), Output("w", "w")), {"cones": cones})
    assert verify_local(net, src).result == "equal"
    wrong = replace(net, outputs=(Output("y", "w"), Output("w", "w")))
    report = verify_local(wrong, src)
    assert report.result == "different"


def test_wide_cones_symmetric_and_by_sat():
    n = 20
    xs = [f"x{i}" for i in range(n)]
    text = "".join(f"INPUT({x})\n" for x in xs) + "OUTPUT(all)\nOUTPUT(odd)\nOUTPUT(mix)\n"
    text += f"all = AND({', '.join(xs)})\n"
    text += f"odd = XOR({', '.join(xs)})\n"
    text += f"half = AND({', '.join(xs[:10])})\nmix = OR(half, {', '.join(xs[10:])})\n"
    src = source_from_text(text, "w.bench")
    bits = (n).bit_length()  # the count of true inputs, highest bit first
    neurons = [Neuron("all", 1, tuple(xs), (1,) * n, -(n - 0.5))]
    higher: list[tuple[str, int]] = []
    for j in range(bits - 1, -1, -1):
        name = "odd" if j == 0 else f"odd~b{j}"
        ins = tuple(xs) + tuple(h for h, _ in higher)
        ws = (1,) * n + tuple(-w for _, w in higher)
        neurons.append(Neuron(name, 1 + len(higher), ins, ws, -(2**j) + 0.5))
        higher.append((name, 2**j))
    neurons.append(Neuron("mix", 1, tuple(xs), (1,) * 10 + (10,) * 10, -9.5))
    cones = {"all": {"root": "all", "leaves": xs}, "odd": {"root": "odd", "leaves": xs},
             "mix": {"root": "mix", "leaves": xs}}
    from thresholdc.network.layering import assign_layers

    net = Network(tuple(xs), assign_layers(neurons, xs),
                  tuple(Output(o, o) for o in ("all", "odd", "mix")), {"cones": cones})
    rng = np.random.default_rng(2)
    X = rng.integers(0, 2, size=(3000, n))
    assert np.array_equal(net.decide(X), src.evaluate(X))
    pytest.importorskip("pysat.solvers")  # "mix" is not symmetric: a SAT miter proves it
    report = verify_local(net, src)
    assert report.result == "equal", report.notes
    assert "symmetric" in report.proofs[0] and "by SAT" in report.proofs[0]
    # a wrong count neuron is caught on its count rows
    k = [m.name for m in net.neurons].index("odd~b2")
    bad = with_neuron(net, k, bias=net.neurons[k].bias - 1)
    assert verify_local(bad, src).result != "equal"


def test_rules_source_small_and_large():
    text = "input a, b, c\nx = a and not b\ny = x or atleast(2, a, b, c)\n"
    src = source_from_text(text, "r.rules")
    net = gate_for_gate_rules(src)
    report = verify_local(net, src)
    assert report.result == "equal"
    assert any("all 8 assignments" in p for p in report.proofs)


def gate_for_gate_rules(src):
    from thresholdc.compiler import compile_source

    return compile_source(src, synthesis=False, verify="none").network


def test_rules_to_gates_step_by_sat():
    pytest.importorskip("pysat.solvers")
    xs = [f"s{i}" for i in range(18)]
    text = f"input {', '.join(xs)}\nhigh = atleast(3, {', '.join(xs[:9])})\n" \
           f"y = high xor ({' and '.join(xs[9:13])}) or {xs[17]}\n"
    src = source_from_text(text, "r.rules")
    net = gate_for_gate_rules(src)
    report = verify_local(net, src)
    assert report.result == "equal", report.notes
    assert any("sat" in p for p in report.proofs)


class _WrongLowering(RuleSource):
    """A source whose gate graph does not compute its rules (a lowering bug on purpose)."""

    def gates(self, simplify_support=None):
        g = super().gates(simplify_support)
        gates = dict(g.gates)
        gates["y"] = Gate("and", gates["y"].args) if gates["y"].op == "or" else Gate(
            "or", gates["y"].args)
        return GateGraph(gates, g.inputs, g.outputs)

    def gates_like(self, network):
        return self.gates()


def test_rules_to_gates_step_catches_a_wrong_gate_graph():
    text = "input a, b, c\ny = a or (b and c)\n"
    src = _WrongLowering("w.rules", text, parse(text, "w.rules"))
    assert isinstance(src, _WrongLowering)
    from thresholdc.synth.mapping import map_to_neurons

    net = map_to_neurons(src.gates(), reserved=src.names)  # faithful to the wrong graph
    report = verify_local(net, src)
    assert report.result == "different"
    c = report.counterexamples[0]
    a, b, cc = c.assignment["a"], c.assignment["b"], c.assignment["c"]
    assert c.expected == bool(a or (b and cc))


def test_soft_network_is_refused():
    src = source_from_text("input a\ny = not a\n", "s.rules")
    net = Network(("a",), (Neuron("y", 1, ("a",), (-4.0,), 2.0, "tanh"),), (Output("y", "y"),))
    with pytest.raises(UsageError, match="step network"):
        verify_local(net, src)


def test_cone_left_open_at_a_constant_signal():
    # z is always 0; the neuron for y = b or z reads only b, its cone stops at b
    text = "INPUT(a)\nINPUT(b)\nOUTPUT(y)\nn = NOT(a)\nz = AND(a, n)\ny = OR(b, z)\n"
    src = source_from_text(text, "k.bench")
    net = Network(("a", "b"), (Neuron("y", 1, ("b",), (2,), -1),), (Output("y", "y"),),
                  {"cones": {"y": {"root": "y", "leaves": ["b"]}}})
    assert verify_local(net, src).result == "equal"
    # the same record for y = b or a is not proven: a is not constant
    text2 = "INPUT(a)\nINPUT(b)\nOUTPUT(y)\ny = OR(b, a)\n"
    report = verify_local(net, source_from_text(text2, "k2.bench"))
    assert report.result == "different"

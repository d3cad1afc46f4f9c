"""The collapsing pass: known constructions, exhaustive equality with the gate graph, the cone
and alias records checked neuron by neuron, limits, naming and determinism.

The checks here share no code with the pass: the network is run with ``Network.forward`` /
``Network.decide`` and the gate graph with ``GateGraph.simulate`` or a small evaluator written
below from the gate definitions.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest

from thresholdc.errors import UsageError
from thresholdc.ir.gates import Gate, GateGraph
from thresholdc.ir.network import check_network
from thresholdc.logic.source import NetlistSource
from thresholdc.synth.collapsing import collapse
from thresholdc.verification.local import structural_classes, verify_local


def rows(n: int) -> np.ndarray:
    """Every 0/1 row of ``n`` columns (row r has column i = bit i of r)."""
    r = np.arange(1 << n)
    return ((r[:, None] >> np.arange(n)) & 1).astype(np.uint8)


# ------------------------------------------------------------------------------ gate evaluator


def gate_value(g: Gate, args: list[np.ndarray]) -> np.ndarray:
    """One gate over boolean columns (written from the gate definitions in gates.py)."""
    op = g.op
    if op == "const":
        raise AssertionError("constants are handled by the caller")
    if op == "buf":
        return args[0]
    if op == "not":
        return ~args[0]
    if op in ("and", "nand"):
        v = np.all(np.stack(args), axis=0)
        return ~v if op == "nand" else v
    if op in ("or", "nor"):
        v = np.any(np.stack(args), axis=0)
        return ~v if op == "nor" else v
    if op in ("xor", "xnor"):
        v = np.sum(np.stack(args).astype(int), axis=0) % 2 == 1
        return ~v if op == "xnor" else v
    if op == "ite":
        return np.where(args[0], args[1], args[2])
    s = sum(w * a.astype(int) for w, a in zip(g.weights, args))
    return s >= g.threshold if op == "threshold" else s == g.threshold


def check_cones(net, g: GateGraph) -> None:
    """Local verification written here: every listed neuron, over its leaves alone, against
    the gate-graph region between the leaves and its root (a signal of a leaf's structural
    class stops the walk; the classes are the local check's own, and a leaf of the constant
    class is that constant).  An input the walk reaches that is not a leaf is a free
    variable: the root must not depend on it."""
    cls = structural_classes(g)
    const_class = structural_classes(
        GateGraph.build([], [], [("k", Gate("const", value=1))]))["k"][0]
    cones = net.meta["cones"]
    neurons = {n.name: n for n in net.neurons}
    for name, cone in cones.items():
        root, leaves = cone["root"], cone["leaves"]
        assert name in neurons and root in g.gates
        for leaf in leaves:
            assert leaf in net.inputs or leaf in cones, leaf
        leaf_class = {cls[leaf][0] for leaf in leaves}
        # the region, and the inputs outside the leaves it reaches
        free: list[str] = []
        seen: set[str] = set()
        stack = [root]
        while stack:
            s = stack.pop()
            if s in seen or cls[s][0] in leaf_class:
                continue
            seen.add(s)
            if g.gates[s].op == "input":
                free.append(s)
            stack.extend(g.gates[s].args)
        # one variable per leaf class (two leaves of one class carry one value), then the
        # free inputs; a leaf of the constant class is that constant
        classes = sorted({cls[leaf][0] for leaf in leaves})
        n = len(classes) + len(free)
        assert n <= 14
        X = rows(n).astype(bool)
        col = {c: X[:, i] for i, c in enumerate(classes)}
        if const_class in col:
            col[const_class] = np.ones(len(X), dtype=bool)
        by_class = {c: (col[c], False) for c in classes}
        leafval = {leaf: col[cls[leaf][0]] ^ cls[leaf][1] for leaf in leaves}
        # the network from the leaf units alone
        netval: dict[str, np.ndarray] = dict(leafval)
        stack = [name]
        while stack:
            u = stack[-1]
            if u in netval:
                stack.pop()
                continue
            assert u in neurons, f"cone of {name} is not closed at its leaves: reaches {u}"
            todo = [i for i in neurons[u].inputs if i not in netval]
            if todo:
                stack.extend(todo)
                continue
            nu = neurons[u]
            z = np.full(len(X), nu.bias)
            for i, w in zip(nu.inputs, nu.weights):
                z = z + w * netval[i]
            assert np.all(np.abs(z) >= 0.5)
            netval[u] = z > 0
            stack.pop()
        # the gate graph from the leaves (and the free inputs)
        gval: dict[str, np.ndarray] = {x: X[:, len(classes) + i] for i, x in enumerate(free)}
        stack = [root]
        while stack:
            s = stack[-1]
            if s in gval:
                stack.pop()
                continue
            c, neg = cls[s]
            if c in by_class:
                col, lneg = by_class[c]
                gval[s] = col ^ (neg != lneg)
                stack.pop()
                continue
            gate = g.gates[s]
            if gate.op == "const":
                gval[s] = np.full(len(X), bool(gate.value))
                stack.pop()
                continue
            todo = [a for a in gate.args if a not in gval]
            if todo:
                stack.extend(todo)
                continue
            gval[s] = gate_value(gate, [gval[a] for a in gate.args])
            stack.pop()
        assert np.array_equal(netval[name], gval[root]), f"neuron {name} differs from its cone"


def check_local(net, g: GateGraph) -> None:
    """The project's local check (verify/local.py) on the network and the graph."""
    src = NetlistSource("t.bench", "", g)
    report = verify_local(net, src)
    assert report.result == "equal", report


def check_all(net, g: GateGraph, *, exhaustive: bool = True) -> None:
    """Structure, margins, integer weights, equality with the gate graph and the cones."""
    check_network(net)
    assert net.inputs == g.inputs
    assert [o.name for o in net.outputs] == [o for o, _ in g.outputs]
    for n in net.neurons:
        assert n.activation == "step"
        assert all(float(w).is_integer() for w in n.weights)
        assert (n.bias - 0.5).is_integer()
        if "~" in n.name and n.name not in g.gates:
            assert n.name not in net.meta["cones"]
        else:
            assert n.name in g.gates, f"neuron {n.name} is named after no signal"
    if exhaustive and len(g.inputs) <= 14:
        X = rows(len(g.inputs))
        Z, _ = net.forward(X)
        assert Z.size == 0 or np.abs(Z).min() >= 0.5
        assert np.array_equal(net.decide(X), g.simulate(X))
    check_cones(net, g)
    check_local(net, g)


def build(inputs, outputs, gates) -> GateGraph:
    return GateGraph.build(inputs, outputs, gates)


# ------------------------------------------------------------------------------ known results


def full_adder_xor() -> GateGraph:
    return build(["a", "b", "c"], [("s", "s"), ("co", "co")], [
        ("t", Gate("xor", ("a", "b"))), ("s", Gate("xor", ("t", "c"))),
        ("u", Gate("and", ("a", "b"))), ("v", Gate("and", ("t", "c"))),
        ("co", Gate("or", ("u", "v")))])


def full_adder_nand() -> GateGraph:
    # the nine-NAND full adder (common practice)
    return build(["a", "b", "c"], [("s", "s"), ("co", "co")], [
        ("n1", Gate("nand", ("a", "b"))), ("n2", Gate("nand", ("a", "n1"))),
        ("n3", Gate("nand", ("b", "n1"))), ("t", Gate("nand", ("n2", "n3"))),
        ("n5", Gate("nand", ("t", "c"))), ("n6", Gate("nand", ("t", "n5"))),
        ("n7", Gate("nand", ("c", "n5"))), ("s", Gate("nand", ("n6", "n7"))),
        ("co", Gate("nand", ("n5", "n1")))])


@pytest.mark.parametrize("make", [full_adder_xor, full_adder_nand])
def test_full_adder_is_two_neurons(make):
    # Muroga 1971: the full adder in two threshold gates (carry = majority, sum reads carry)
    g = make()
    net = collapse(g)
    check_all(net, g)
    assert len(net.neurons) == 2
    assert net.depth == 2


def test_and_of_or_is_one_neuron():
    g = build(["a", "b", "c"], [("y", "y")], [
        ("t", Gate("or", ("b", "c"))), ("y", Gate("and", ("a", "t")))])
    net = collapse(g)
    check_all(net, g)
    assert len(net.neurons) == 1


@pytest.mark.parametrize("n", [1, 2, 3, 5, 8])
def test_atleast_atmost_majority_are_one_neuron(n):
    names = [f"x{i}" for i in range(n)]
    for k in range(1, n + 1):
        for gate in (Gate("threshold", tuple(names), (1,) * n, k),          # atleast k
                     Gate("threshold", tuple(names), (-1,) * n, -k),        # atmost k
                     Gate("threshold", tuple(names), (1,) * n, n // 2 + 1)):  # majority
            g = build(names, [("y", "y")], [("y", gate)])
            net = collapse(g)
            check_all(net, g)
            assert len(net.neurons) <= 1


def test_atleast_three_of_five_and_f_is_one_neuron():
    ins = ["a", "b", "c", "d", "e", "f"]
    g = build(ins, [("y", "y")], [
        ("t", Gate("threshold", ("a", "b", "c", "d", "e"), (1,) * 5, 3)),
        ("y", Gate("and", ("t", "f")))])
    net = collapse(g)
    check_all(net, g)
    assert len(net.neurons) == 1


def test_cones_wider_than_the_cut_size():
    # the and of a literal with a wide threshold gate is one neuron, the xor two, whatever
    # the cut size (a single-error-correcting decoder's output: data xor all syndromes)
    names = [f"s{i}" for i in range(8)] + ["d"]
    g = build(names, [("y", "y"), ("z", "z")], [
        ("e", Gate("and", tuple(names[:8]))), ("y", Gate("xor", ("d", "e"))),
        ("m", Gate("threshold", tuple(names[:7]), (1,) * 7, 3)),
        ("z", Gate("and", ("m", "d")))])
    net = collapse(g, cut_size=4)
    check_all(net, g)
    assert len(net.neurons) == 3
    assert net.meta["cones"]["z"]["leaves"] == names[:7] + ["d"]


def majority_as_sop(names: list[str]) -> list[tuple[str, Gate]]:
    """Majority of an odd number of inputs as the or of every and of (n+1)/2 of them."""
    k = len(names) // 2 + 1
    gates = []
    terms = []
    for j, combo in enumerate(itertools.combinations(names, k)):
        gates.append((f"m{j}", Gate("and", combo)))
        terms.append(f"m{j}")
    gates.append(("y", Gate("or", tuple(terms))))
    return gates


def test_majority_of_five_written_as_sum_of_products_is_one_neuron():
    names = list("abcde")
    g = build(names, [("y", "y")], majority_as_sop(names))
    net = collapse(g)
    check_all(net, g)
    assert len(net.neurons) == 1


def parity_chain(names: list[str]) -> list[tuple[str, Gate]]:
    gates = []
    prev = names[0]
    for i, x in enumerate(names[1:]):
        sig = "y" if i == len(names) - 2 else f"p{i}"
        gates.append((sig, Gate("xor", (prev, x))))
        prev = sig
    return gates


def parity_tree(names: list[str]) -> list[tuple[str, Gate]]:
    gates: list[tuple[str, Gate]] = []
    level = list(names)
    k = 0
    while len(level) > 1:
        nxt = []
        for i in range(0, len(level) - 1, 2):
            sig = f"q{k}"
            k += 1
            gates.append((sig, Gate("xor", (level[i], level[i + 1]))))
            nxt.append(sig)
        if len(level) % 2:
            nxt.append(level[-1])
        level = nxt
    gates.append(("y", Gate("buf", (level[0],))))
    return gates


def parity_sop(names: list[str]) -> list[tuple[str, Gate]]:
    gates = [(f"n{x}", Gate("not", (x,))) for x in names]
    terms = []
    for r in range(1 << len(names)):
        if bin(r).count("1") % 2:
            lits = tuple(x if (r >> i) & 1 else f"n{x}" for i, x in enumerate(names))
            gates.append((f"m{r}", Gate("and", lits)))
            terms.append(f"m{r}")
    gates.append(("y", Gate("or", tuple(terms))))
    return gates


def parity_xnor_mix(names: list[str]) -> list[tuple[str, Gate]]:
    """Parity written with xnor gates and inverters (an even number of complements)."""
    gates = []
    prev = names[0]
    for i, x in enumerate(names[1:]):
        gates.append((f"r{i}", Gate("xnor", (prev, x))))
        gates.append((f"s{i}", Gate("not", (f"r{i}",))))
        prev = f"s{i}"
    gates.append(("y", Gate("buf", (prev,))))
    return gates


def parity_nand(names: list[str]) -> list[tuple[str, Gate]]:
    """Parity as a chain of XORs, each written as four NAND gates (common practice)."""
    gates = []
    prev = names[0]
    for i, x in enumerate(names[1:]):
        out = "y" if i == len(names) - 2 else f"x~{i}"
        gates += [(f"m{i}", Gate("nand", (prev, x))), (f"l{i}", Gate("nand", (prev, f"m{i}"))),
                  (f"r{i}", Gate("nand", (x, f"m{i}"))), (out, Gate("nand", (f"l{i}", f"r{i}")))]
        prev = out
    return gates


@pytest.mark.parametrize("style", [parity_chain, parity_tree, parity_sop, parity_xnor_mix,
                                   parity_nand])
def test_parity_of_seven_is_three_neurons_however_written(style):
    # ⌈log2(7 + 1)⌉ = 3 neurons, one per bit of the count of true inputs (common practice)
    names = [f"x{i}" for i in range(7)]
    g = build(names, [("y", "y")], style(names))
    net = collapse(g)
    check_all(net, g)
    assert len(net.neurons) == 3


def test_parity_of_seven_as_one_gate_is_three_neurons():
    names = [f"x{i}" for i in range(7)]
    g = build(names, [("y", "y")], [("y", Gate("xor", tuple(names)))])
    net = collapse(g)
    check_all(net, g)
    assert len(net.neurons) == 3


@pytest.mark.parametrize("n", range(2, 12))
def test_parity_of_n_is_ceil_log2_n_plus_1_neurons(n):
    names = [f"x{i}" for i in range(n)]
    g = build(names, [("y", "y")], parity_chain(names))
    net = collapse(g)
    check_all(net, g)
    assert len(net.neurons) == math.ceil(math.log2(n + 1))


def test_exactly_two_of_four_is_two_neurons():
    names = list("abcd")
    g = build(names, [("y", "y")], [("y", Gate("equal", tuple(names), (1, 1, 1, 1), 2))])
    net = collapse(g)
    check_all(net, g)
    assert len(net.neurons) == 2


def test_ite_is_two_neurons():
    g = build(["c", "t", "e"], [("y", "y")], [("y", Gate("ite", ("c", "t", "e")))])
    net = collapse(g)
    check_all(net, g)
    assert len(net.neurons) == 2


# ------------------------------------------------------------------------------ structure


def test_duplicate_gates_are_merged():
    g = build(["a", "b", "c"], [("y", "y"), ("z", "z")], [
        ("p", Gate("and", ("a", "b"))), ("q", Gate("and", ("b", "a"))),
        ("y", Gate("xor", ("p", "c"))), ("z", Gate("xor", ("c", "q")))])
    net = collapse(g)
    check_all(net, g)
    assert [o.source for o in net.outputs] == ["y", "y"]
    single = build(["a", "b", "c"], [("y", "y")], [
        ("p", Gate("and", ("a", "b"))), ("y", Gate("xor", ("p", "c")))])
    assert len(net.neurons) == len(collapse(single).neurons)


def test_merged_signals_share_a_structural_class_of_the_local_check():
    # every pair of signals carried by one node must be one class for verify/local.py
    from thresholdc.synth.hashing import hash_gates

    g = full_adder_nand()
    extra = [("d1", Gate("nand", ("b", "a"))), ("d2", Gate("or", ("n2", "n3"))),
             ("d3", Gate("xor", ("a", "b", "a"))), ("d4", Gate("threshold", ("a", "b"),
                                                              (2, 2), 3))]
    g = build(g.inputs, g.outputs, [(s, x) for s, x in g.gates.items() if x.op != "input"]
              + extra)
    h = hash_gates(g)
    cls = structural_classes(g)
    seen: dict[int, tuple[int, bool]] = {}
    for sig, lit in h.lit_of.items():
        c = cls[sig]
        if lit >> 1 in seen:
            c0, flip = seen[lit >> 1]
            assert c[0] == c0 and (c[1] != (lit & 1)) == flip, sig
        else:
            seen[lit >> 1] = (c[0], c[1] != (lit & 1))


def test_a_cut_never_holds_a_leaf_inside_another_part_of_its_cone():
    # y = g xor (a and g): over the leaves {a, b, c, g} the cone reads g at both places; a
    # table built by expanding g on one side would differ from it when g is left free
    g = build(["a", "b", "c"], [("y", "y")], [
        ("g", Gate("threshold", ("a", "b", "c"), (-1, 1, 1), 2)),
        ("t", Gate("and", ("a", "g"))), ("y", Gate("xor", ("g", "t")))])
    for k in (2, 4, 6):
        for fan_in in (None, 2):
            net = collapse(g, cut_size=k, max_fan_in=fan_in)
            check_all(net, g)


def test_outputs_of_inputs_negations_and_constants():
    g = build(["a", "b"], [("a", "a"), ("na", "na"), ("one", "one"), ("x", "x"),
                           ("nx", "nx"), ("x2", "x")], [
        ("na", Gate("not", ("a",))), ("one", Gate("const", value=1)),
        ("x", Gate("and", ("a", "b"))), ("nx", Gate("nand", ("b", "a")))])
    net = collapse(g)
    check_all(net, g)
    src = {o.name: o.source for o in net.outputs}
    assert src["a"] == "a" and src["x"] == "x" and src["x2"] == "x"
    assert net.neuron("na").inputs == ("a",)
    assert net.neuron("one").inputs == ()
    assert net.neuron("nx").inputs == ("a", "b")  # the complement of x, not an inverter of it


def test_helper_names_avoid_signals_and_reserved_names():
    names = [f"x{i}" for i in range(7)]
    gates = parity_chain(names) + [("y~h", Gate("buf", ("x0",)))]
    g = build(names, [("y", "y"), ("w", "y~h")], gates)
    net = collapse(g, reserved={"y~h~2"})
    check_all(net, g)
    helpers = [n.name for n in net.neurons if n.name not in g.gates]
    assert helpers and all("~" in h for h in helpers)
    assert not set(helpers) & (set(g.gates) | {"y~h~2"})
    for n in net.neurons:  # helpers carry the origin of the neuron they serve
        assert n.origin == "y" or n.name not in helpers


def test_gate_graph_is_not_changed():
    g = full_adder_nand()
    before = (dict(g.gates), g.inputs, g.outputs)
    collapse(g)
    assert (dict(g.gates), g.inputs, g.outputs) == before


def test_same_input_gives_the_same_network():
    g = full_adder_nand()
    assert dumps(collapse(g)) == dumps(collapse(g))


def test_origins_follow_the_gates():
    g = build(["a", "b"], [("y", "y")], [
        ("t", Gate("and", ("a", "b"), origin="y")), ("y", Gate("not", ("t",), origin="y"))])
    net = collapse(g)
    check_all(net, g)
    assert all(n.origin == "y" for n in net.neurons)


@pytest.mark.parametrize("bad", [
    {"cut_size": 1}, {"cut_size": 11}, {"cut_size": 6.0}, {"max_fan_in": 1},
    {"max_weight": 0}, {"max_fan_in": True},
])
def test_options_out_of_range_are_refused(bad):
    with pytest.raises(UsageError, match=f"The {next(iter(bad))!r} option must be"):
        collapse(full_adder_xor(), **bad)


# ------------------------------------------------------------------------------ limits


@pytest.mark.parametrize("fan_in", [2, 3, 4])
@pytest.mark.parametrize("weight", [1, 2, None])
def test_limits_are_kept(fan_in, weight):
    names = [f"x{i}" for i in range(7)]
    gates = parity_chain(names) + [
        ("m", Gate("threshold", tuple(names[:5]), (1,) * 5, 3)),
        ("k", Gate("and", tuple(names))), ("e", Gate("ite", ("x0", "x1", "x2")))]
    g = build(names, [("y", "y"), ("m", "m"), ("k", "k"), ("e", "e")], gates)
    net = collapse(g, max_fan_in=fan_in, max_weight=weight)
    check_all(net, g)
    assert max(n.fan_in for n in net.neurons) <= fan_in
    if weight is not None:
        assert max(abs(w) for n in net.neurons for w in n.weights) <= weight


@pytest.mark.parametrize("fan_in, weight", [(2, 1), (3, 2), (5, None)])
def test_a_wide_weighted_gate_is_split_to_meet_the_limits(fan_in, weight):
    names = [f"x{i}" for i in range(9)]
    gates = [("y", Gate("threshold", tuple(names), (5, -3) + (1,) * 7, 6)),
             ("z", Gate("equal", tuple(names[:6]), (2, 1, 1, -1, 1, 3), 4))]
    g = build(names, [("y", "y"), ("z", "z")], gates)
    net = collapse(g, max_fan_in=fan_in, max_weight=weight)
    check_all(net, g)
    assert max(n.fan_in for n in net.neurons) <= fan_in
    if weight is not None:
        assert max(abs(w) for n in net.neurons for w in n.weights) <= weight


# ------------------------------------------------------------------------------ random graphs

from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

from thresholdc.network.fileformat import dumps  # noqa: E402

OPS = ("and", "or", "nand", "nor", "xor", "xnor", "not", "buf", "threshold", "equal", "ite",
       "const", "copy")


@st.composite
def gate_graphs(draw) -> GateGraph:
    n_in = draw(st.integers(1, 7))
    inputs = [f"i{k}" for k in range(n_in)]
    signals = list(inputs)
    gates: list[tuple[str, Gate]] = []
    for k in range(draw(st.integers(1, 24))):
        op = draw(st.sampled_from(OPS))
        name = f"g{k}"
        pick = st.sampled_from(signals)
        if op == "copy" and gates:  # a duplicate of an earlier gate, arguments reordered
            _, old = gates[draw(st.integers(0, len(gates) - 1))]
            args = old.args[::-1] if old.op in ("and", "or", "nand", "nor", "xor",
                                                "xnor") else old.args
            gate = Gate(old.op, args, old.weights, old.threshold, old.value)
        elif op in ("copy", "const"):
            gate = Gate("const", value=draw(st.integers(0, 1)))
        elif op in ("not", "buf"):
            gate = Gate(op, (draw(pick),))
        elif op == "ite":
            gate = Gate("ite", tuple(draw(pick) for _ in range(3)))
        elif op in ("threshold", "equal"):
            m = draw(st.integers(1, 5))
            args = tuple(draw(pick) for _ in range(m))
            ws = tuple(draw(st.integers(-3, 3)) for _ in range(m))
            gate = Gate(op, args, ws, draw(st.integers(-3, 5)))
        else:
            m = draw(st.integers(1, 5))
            gate = Gate(op, tuple(draw(pick) for _ in range(m)))
        gates.append((name, gate))
        signals.append(name)
    outs = draw(st.lists(st.sampled_from(signals), min_size=1, max_size=4))
    return GateGraph.build(inputs, [(f"o{k}", s) for k, s in enumerate(outs)], gates)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(gate_graphs(), st.integers(2, 8))
def test_random_gate_graphs_collapse_to_equal_networks(g, k):
    net = collapse(g, cut_size=k)
    check_all(net, g)
    assert len(net.neurons) <= max(1, 3 * len(g.gates))


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(gate_graphs(), st.sampled_from([2, 3, 5]), st.sampled_from([1, 2, 4, None]))
def test_random_gate_graphs_keep_the_limits(g, fan_in, weight):
    net = collapse(g, max_fan_in=fan_in, max_weight=weight)
    check_all(net, g)
    for n in net.neurons:
        assert n.fan_in <= fan_in
        assert weight is None or all(abs(w) <= weight for w in n.weights)


@settings(max_examples=30, deadline=None)
@given(gate_graphs())
def test_random_gate_graphs_give_the_same_bytes_twice(g):
    assert dumps(collapse(g)) == dumps(collapse(g))

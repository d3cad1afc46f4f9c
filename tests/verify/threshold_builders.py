"""Hand-built step networks for the verification tests (independent of the compiler).

* :func:`gate_for_gate`: one neuron per gate of a gate graph (the textbook constructions:
  AND = [Σx ≥ n], OR = [Σx ≥ 1], NAND/NOR their negations, XOR of two = the two-neuron
  gadget [a + b − 2·[a + b ≥ 2] ≥ 1]; NOT/BUF free, folded into the reader's weights), with
  ``meta.cones`` recorded the way the compiler records them.
* :func:`multiplier_network`: an n×n array multiplier in which every full adder is the
  classic two-neuron threshold adder (carry = majority, sum = [x + y + z − 2·carry ≥ 1];
  Muroga, Threshold Logic and Its Applications, 1971), wired like
  ``benchmarks/gen_circuits.multiplier`` so their outputs correspond.
"""

from __future__ import annotations

from tests.benchmark_modules import load_benchmark
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.network.layering import assign_layers


def load_gen_circuits():
    """The benchmark circuit generator module (stdlib only), loaded from its file."""
    return load_benchmark("gen_circuits")


def gate_for_gate(graph) -> Network:
    """One neuron per and/or/nand/nor gate, two per 2-input xor/xnor; see the module doc."""
    lit: dict[str, tuple[str, bool]] = {}  # signal -> (unit, negated)
    neurons: list[Neuron] = []
    cones: dict[str, dict] = {}

    def neuron(name, terms, T, helper=False):
        # terms: [((unit, neg), w)], fire when Σ w·lit ≥ T; bias T - 1/2 below integers
        ins, ws, const = [], [], 0
        for (u, neg), w in terms:
            if neg:
                ins.append(u)
                ws.append(-w)
                const += w
            else:
                ins.append(u)
                ws.append(w)
        neurons.append(Neuron(name, 0, tuple(ins), tuple(ws), const - T + 0.5))
        if not helper:
            leaves = []
            for u in ins:
                for leaf in cones_leaves.get(u, [u]):
                    if leaf not in leaves:
                        leaves.append(leaf)
            cones[name] = {"root": name, "leaves": leaves}
        else:
            cones_leaves[name] = list(dict.fromkeys(ins))
        return (name, False)

    cones_leaves: dict[str, list[str]] = {}
    for sig, g in graph.gates.items():
        args = [lit[a] for a in g.args]
        if g.op == "input":
            lit[sig] = (sig, False)
        elif g.op == "buf":
            lit[sig] = args[0]
        elif g.op == "not":
            lit[sig] = (args[0][0], not args[0][1])
        elif g.op in ("and", "nand"):
            y = neuron(sig, [(a, 1) for a in args], len(args)) if g.op == "and" else \
                neuron(sig, [((u, not n), 1) for u, n in args], 1)
            lit[sig] = y
        elif g.op in ("or", "nor"):
            lit[sig] = neuron(sig, [(a, 1) for a in args], 1) if g.op == "or" else \
                neuron(sig, [((u, not n), 1) for u, n in args], len(args))
        elif g.op in ("xor", "xnor") and len(args) == 2:
            h = neuron(f"{sig}~and", [(a, 1) for a in args], 2, helper=True)
            terms = [(a, 1) for a in args] + [(h, -2)]
            if g.op == "xor":
                lit[sig] = neuron(sig, terms, 1)
            else:
                lit[sig] = neuron(sig, [((u, n), -w) for (u, n), w in terms], 0)
        else:
            raise NotImplementedError(g.op)
    outputs = []
    for name, sig in graph.outputs:
        u, neg = lit[sig]
        if neg:
            y = neuron(f"{sig}", [((u, True), 1)], 1) if sig not in cones else None
            u = sig if y is None else y[0]
        outputs.append(Output(name, u))
    net = Network(graph.inputs, assign_layers(neurons, graph.inputs), tuple(outputs))
    return net.with_meta(cones=cones)


def multiplier_network(n: int) -> Network:
    """An n×n array multiplier of threshold neurons (two per full or half adder)."""
    a = [f"a{i}" for i in range(n)]
    b = [f"b{i}" for i in range(n)]
    neurons: list[Neuron] = []
    count = [0]

    def fresh():
        count[0] += 1
        return f"t{count[0]}"

    def add(ins, ws, bias, name=None):
        name = name or fresh()
        neurons.append(Neuron(name, 0, tuple(ins), tuple(ws), bias))
        return name

    def half(x, y):
        c = add([x, y], [1, 1], -1.5)
        s = add([x, y, c], [1, 1, -2], -0.5)
        return s, c

    def full(x, y, z):
        c = add([x, y, z], [1, 1, 1], -1.5)
        s = add([x, y, z, c], [1, 1, 1, -2], -0.5)
        return s, c

    pp = [[add([a[j], b[i]], [1, 1], -1.5) for j in range(n)] for i in range(n)]
    outs = [pp[0][0]]
    acc = pp[0][1:]
    for i in range(1, n):
        row = pp[i]
        new = []
        carry = None
        for j in range(n):
            top = acc[j] if j < len(acc) else None
            if j == 0:
                s, carry = half(row[0], top)
                outs.append(s)
            elif top is None:
                s, carry = half(row[j], carry)
            else:
                s, carry = full(row[j], top, carry)
            if j:
                new.append(s)
        acc = new + [carry]
    outs += acc
    net = Network(tuple(a + b), assign_layers(neurons, a + b),
                  tuple(Output(f"p{k}", u) for k, u in enumerate(outs)))
    return net

"""The collapsing pass: whole cones of gates become single threshold neurons.

Passes, in order (each returns new objects; the gate graph is not changed):

1. structural hashing (:mod:`~thresholdc.synth.hashing`): duplicate gates merge, inverters and
   buffers become complemented edges, constants fold, and/or/xor chains are flattened;
2. cut enumeration (:mod:`~thresholdc.synth.cuts`): up to ``cut_size`` leaves per cut, each
   with its truth table, plus the whole input support of nodes with a small one; parity
   chains found by function (:mod:`~thresholdc.synth.parity`: XOR written as NAND gates);
3. options (:mod:`~thresholdc.synth.candidates`): a cut whose function is a threshold function is
   one neuron; symmetric functions get counting constructions (parity of ``n`` in
   ⌈log2(n+1)⌉ neurons); ``[w·x + u·g ≥ T]`` with another node's neuron ``g`` as a helper;
   every gate also has its own small construction;
4. the cover (:mod:`~thresholdc.synth.cover`): fewest neurons, then least depth, under
   ``max_fan_in`` and ``max_weight``;
5. the network: one neuron per chosen gadget spec, shared where two specs compute the same
   function of the same leaves.

Naming and records (shared with :func:`thresholdc.synth.mapping.map_to_neurons`): a neuron that
computes a gate-graph signal is named after it; helper neurons get ``~`` names unique against
every signal and every ``reserved`` name, have the origin of the neuron they serve, and lie
inside its cone.  ``meta["cones"]`` gives, for each neuron named after a signal, the gate-graph
signal it computes and the leaves (signals carried by input units or named neurons) over which
its sub-network is closed: evaluating the network from those leaves alone gives that neuron.
Structural hashing merges only signals of one structural class of the local check
(:func:`thresholdc.verification.structural.structural_classes`), so a leaf or root may be
any signal of its class, and a unit may be named after a signal of the other polarity of its
class (an output that reads the node only complemented then needs no inverter).

>>> from thresholdc.ir.gates import Gate, GateGraph
>>> g = GateGraph.build(["a", "b", "c"], [("s", "s"), ("co", "co")], [
...     ("t", Gate("xor", ("a", "b"))), ("s", Gate("xor", ("t", "c"))),
...     ("u", Gate("and", ("a", "b"))), ("v", Gate("and", ("t", "c"))),
...     ("co", Gate("or", ("u", "v")))])
>>> net = collapse(g)
>>> [repr(n) for n in net.neurons]
['co[L1 step](+1*a +1*b +1*c -1.5)', 's[L2 step](+1*a +1*b +1*c -2*co -0.5)']
"""

from __future__ import annotations

import heapq
from typing import Any

from ..ir.gates import GateGraph
from ..ir.network import Network, Neuron, Output
from ..ir.options import CompileOptions
from ..network import assign_layers, fresh_name
from ..progress import track
from . import candidates, cuts
from .cover import Cover
from .hashing import Hashed, hash_gates
from .helper_neurons import add_helper_options
from .parity import parity_chains, parity_options

__all__ = ["collapse", "SUPPORT_LIMIT"]

#: Nodes whose whole input support has at most this many inputs are also tried as one cut.
SUPPORT_LIMIT = 10


def _check_options(cut_size: Any, max_fan_in: Any, max_weight: Any) -> None:
    """Refuse option values outside their ranges (the checks of
    :class:`~thresholdc.ir.options.CompileOptions`)."""
    CompileOptions(cut_size=cut_size, max_fan_in=max_fan_in, max_weight=max_weight)


def collapse(
    gates: GateGraph,
    *,
    cut_size: int = 6,
    max_fan_in: int | None = None,
    max_weight: int | None = None,
    reserved: set[str] | frozenset[str] = frozenset(),
) -> Network:
    """A step network computing ``gates``, with cones of gates collapsed into neurons.

    Parameters
    ----------
    gates : GateGraph
        The gate graph (not changed).
    cut_size : int
        The most leaves a cut may have (2 to 10; 6 to 8 is the useful range, larger is slower).
    max_fan_in : int or None
        The most inputs any neuron may read (at least 2).
    max_weight : int or None
        The largest |weight| any neuron may have (at least 1).
    reserved : set of str
        Names helper neurons must avoid besides the graph's signals (the source's names).

    Returns
    -------
    Network
        Integer weights, half-integer biases, ``|z| ≥ ½`` on every 0/1 input; neurons in
        topological order with their layers; ``meta["cones"]`` as the module docstring
        says.

    Raises
    ------
    UsageError
        For an option out of range, or a gate no construction can build within the limits.

    Examples
    --------
    >>> from thresholdc.ir.gates import Gate, GateGraph
    >>> g = GateGraph.build(["a", "b", "c"], [("y", "y")], [
    ...     ("t", Gate("or", ("b", "c"))), ("y", Gate("and", ("a", "t")))])
    >>> net = collapse(g)
    >>> net.neurons
    (y[L1 step](+2*a +1*b +1*c -2.5),)
    >>> net.meta["cones"]
    {'y': {'root': 'y', 'leaves': ['a', 'b', 'c']}}
    """
    _check_options(cut_size, max_fan_in, max_weight)
    limits = candidates.Limits(max_fan_in, max_weight)
    h = hash_gates(gates)
    found = cuts.enumerate_cuts(h, cut_size)
    support = cuts.support_cuts(h, cut_size, max(cut_size, SUPPORT_LIMIT))
    N = len(h.op)
    chains = parity_chains(h, found)
    options: list[list[candidates.Option]] = [[] for _ in range(N)]
    for v in track(range(1, N), "synthesis: candidates", unit="node"):
        if h.op[v] != "input":
            options[v] = candidates.node_options(h, v, found[v], support.get(v), limits, options)
            if v in chains:
                o = parity_options(chains[v], limits)
                if o is not None:
                    options[v].append(o)
    add_helper_options(h, found, options, limits)
    roots = []
    for _, sig in gates.outputs:
        x = h.lit_of[sig] >> 1
        if x and h.op[x] != "input":
            roots.append(x)
    cover = Cover(N, options, roots, h.fanouts())
    cover.run()
    return _build(gates, h, cover, set(reserved))


# ------------------------------------------------------------------------------ the network


class _Unit:
    """A neuron to build from spec ``spec`` of the chosen option of node ``node``, its output
    complemented relative to that spec when ``neg``; ``serves`` is the node whose signal it
    carries (a root) or whose gadget first needed it (a helper)."""

    __slots__ = ("name", "node", "spec", "neg", "serves", "root")

    def __init__(self, name: str, node: int, spec: int, neg: int, serves: int,
                 root: bool) -> None:
        self.name, self.node, self.spec, self.neg, self.serves, self.root = (
            name, node, spec, neg, serves, root)


def _unit_names(gates: GateGraph, h: Hashed, needed: list[int]
                ) -> tuple[dict[int, str], dict[int, int]]:
    """The signal each needed node's unit is named after, and its polarity relative to the
    node: the representative, unless outputs read the node only in the other polarity (then
    the first such output signal, which saves an inverter)."""
    want: dict[int, dict[int, str]] = {}
    for _, sig in gates.outputs:
        lit = h.lit_of[sig]
        want.setdefault(lit >> 1, {}).setdefault(lit & 1, sig)
    name: dict[int, str] = {}
    pol: dict[int, int] = {}
    for x in h.inputs:
        name[x], pol[x] = h.rep[x], 0  # type: ignore[assignment]
    for v in needed:
        rep, rp = h.rep[v], h.rep_neg[v]
        w = want.get(v, {})
        if w and rp not in w and h.op[v] != "real":
            p = min(w)
            name[v], pol[v] = w[p], p
        else:
            name[v], pol[v] = rep, rp  # type: ignore[assignment]
    return name, pol


def _build(gates: GateGraph, h: Hashed, cover: Cover, reserved: set[str]) -> Network:
    """The network of the chosen cover."""
    taken = set(gates.gates) | reserved
    needed = cover.needed()
    chosen = {v: cover.options[v][cover.choice[v]] for v in needed}
    uname, upol = _unit_names(gates, h, needed)
    # Units are made node by node, spec by spec; a spec whose function of its leaves some
    # unit already computes reads that unit (a root spec takes over such a helper unit and
    # names it after its signal).  Every unit reads only units made before it, so the network
    # is acyclic by construction.
    units: list[_Unit] = []
    helper_ins: list[list[int]] = []  # per unit: the units it reads through helper refs
    by_key: dict = {}  # key -> unit index
    spec_unit: dict[tuple[int, int], int] = {}  # (node, spec) -> unit index

    def make(name: str, v: int, j: int, neg: int, root: bool) -> int:
        """A new unit built from spec ``j`` of ``v``'s option."""
        units.append(_Unit(name, v, j, neg, v, root))
        refs = chosen[v].gadget[j].refs
        helper_ins.append([spec_unit[(v, -r - 1)] for r in refs if r < 0])
        return len(units) - 1

    def roots_inside(i: int) -> set[int]:
        """The nodes whose root units lie in unit ``i``'s sub-network (helper edges only)."""
        out: set[int] = set()
        stack, seen = [i], set()
        while stack:
            x = stack.pop()
            if x not in seen:
                seen.add(x)
                if units[x].root:
                    out.add(units[x].serves)
                stack.extend(helper_ins[x])
        return out

    for v in needed:
        o = chosen[v]
        keys = o.keys()
        last = len(o.gadget) - 1
        leafset = set(o.leaves)
        mine: set[int] = set()
        for j in range(last + 1):
            k, _ = keys[j]
            got = by_key.get(k) if k is not None else None
            # a shared unit must not pass through the unit of one of this cone's leaves: the
            # check of this cone takes a leaf's unit as a free value
            if got is not None and roots_inside(got) & leafset:
                got = None
                k = None
            if j == last:
                if got is not None and not units[got].root and got not in mine:
                    u = units[got]  # a helper of an earlier gadget: it becomes this root
                    u.name, u.root, u.serves = uname[v], True, v
                    # it gives spec_d ^ neg = key ^ kflag_d ^ neg; wanted: key ^ kflag ^ upol
                    kd = chosen[u.node].keys()[u.spec][1]
                    u.neg = kd ^ keys[j][1] ^ upol[v]
                    spec_unit[(v, j)] = got
                    continue
                idx = make(uname[v], v, j, upol[v], True)
                if k is not None and got is None and k not in by_key:
                    by_key[k] = idx
                spec_unit[(v, j)] = idx
                continue
            if got is not None:
                spec_unit[(v, j)] = got
                continue
            idx = make(fresh_name(f"{uname[v]}~h", taken), v, j, 0, False)
            mine.add(idx)
            if k is not None and k not in by_key:
                by_key[k] = idx
            spec_unit[(v, j)] = idx

    def canon_flag(i: int) -> int:
        """The unit's output is its key's canonical function ^ this flag."""
        u = units[i]
        return chosen[u.node].keys()[u.spec][1] ^ u.neg

    neurons: list[Neuron] = []
    deps: list[list[int]] = []
    unit_index = {u.name: i for i, u in enumerate(units)}
    for u in units:
        o = chosen[u.node]
        s = o.gadget[u.spec]
        keys = o.keys()
        coef: dict[str, int] = {}
        T = s.T
        for r, w in zip(s.refs, s.weights):
            if r >= 0:
                x = o.leaves[r]
                name, neg = uname[x], upol[x]
            else:
                i = spec_unit[(u.node, -r - 1)]
                name = units[i].name
                kflag = keys[-r - 1][1]
                neg = kflag ^ canon_flag(i)
            if neg:
                w, T = -w, T - w
            coef[name] = coef.get(name, 0) + w
        ins = [n for n in coef if coef[n] != 0]
        ws = [coef[n] for n in ins]
        if u.neg:
            ws = [-w for w in ws]
            T = 1 - T
        v = u.serves
        bias = -T + 0.5
        if h.op[v] == "real":  # [x > c] is z = x - c; [x < c] is z = c - x
            op, c = h.real[v] or (">", 0.0)
            ins = [uname[h.fanins[v][0] >> 1]]
            ws = [1] if op == ">" else [-1]
            bias = -float(c) if op == ">" else float(c)
        origin = h.origin[v] if h.origin[v] is not None else h.rep[v]
        if u.root and u.name != h.rep[v]:
            g = gates.gates[u.name]
            origin = g.origin if g.origin is not None else u.name
        neurons.append(Neuron(u.name, 0, tuple(ins), tuple(float(w) for w in ws), bias,
                              "step", "gate", origin))
        deps.append([unit_index[n] for n in ins if n in unit_index])
    neurons = [neurons[i] for i in _topological(deps)]
    cones: dict[str, dict[str, object]] = {}
    for v in needed:
        cones[uname[v]] = {"root": uname[v], "leaves": [uname[x] for x in chosen[v].leaves]}
    outputs, extra = _outputs(gates, h, chosen, uname, upol, neurons, cones)
    neurons.extend(extra)
    layered = assign_layers(neurons, gates.inputs)
    net = Network(gates.inputs, tuple(layered), tuple(outputs))
    cones = {n.name: cones[n.name] for n in layered if n.name in cones}
    return _drop_unread_helpers(net.with_meta(cones=cones))


def _drop_unread_helpers(net: Network) -> Network:
    """Drop helpers no neuron reads (a helper whose reader was built from another gadget's
    spec of the same function).  Listed neurons stay: a leaf that a cone's function ignores
    still closes that cone."""
    cones = net.meta["cones"]
    live = {o.source for o in net.outputs} | set(cones)
    for n in reversed(net.neurons):
        if n.name in live:
            live.update(n.inputs)
    kept = tuple(n for n in net.neurons if n.name in live)
    if len(kept) == len(net.neurons):
        return net
    return Network(net.inputs, kept, net.outputs, dict(net.meta))


def _topological(deps: list[list[int]]) -> list[int]:
    """A topological order of units (``deps[i]``: the units unit ``i`` reads), earliest first
    among the ready ones."""
    n = len(deps)
    indeg = [len(set(d)) for d in deps]
    readers: list[list[int]] = [[] for _ in range(n)]
    for i, d in enumerate(deps):
        for j in set(d):
            readers[j].append(i)
    ready = [i for i in range(n) if indeg[i] == 0]
    heapq.heapify(ready)
    out = []
    while ready:
        i = heapq.heappop(ready)
        out.append(i)
        for r in readers[i]:
            indeg[r] -= 1
            if indeg[r] == 0:
                heapq.heappush(ready, r)
    assert len(out) == n, "the chosen neurons read each other in a cycle"
    return out


def _outputs(gates: GateGraph, h: Hashed, chosen: dict[int, candidates.Option],
             uname: dict[int, str], upol: dict[int, int], neurons: list[Neuron],
             cones: dict[str, dict[str, object]]
             ) -> tuple[list[Output], list[Neuron]]:
    """The outputs, and the neurons an output needs of its own (a constant, or a signal that
    is the complement of a unit)."""
    by_name = {n.name: n for n in neurons}
    outputs = []
    extra: list[Neuron] = []
    made: set[str] = set()
    for name, sig in gates.outputs:
        lit = h.lit_of[sig]
        x, neg = lit >> 1, lit & 1
        if x and neg == upol[x]:
            outputs.append(Output(name, uname[x]))
            continue
        if sig not in made:
            made.add(sig)
            g = gates.gates[sig]
            origin = g.origin if g.origin is not None else sig
            if x == 0:
                extra.append(Neuron(sig, 0, (), (), 0.5 if neg else -0.5, "step", "gate", origin))
                cones[sig] = {"root": sig, "leaves": []}
            elif h.op[x] == "input" or chosen[x].cost > 1 or h.op[x] == "real":
                extra.append(Neuron(sig, 0, (uname[x],), (-1.0,), 0.5, "step", "gate", origin))
                cones[sig] = {"root": sig, "leaves": [uname[x]]}
            else:  # the complement of a one-neuron unit: the same inputs, negated
                src = by_name[uname[x]]
                extra.append(Neuron(sig, 0, src.inputs, tuple(-w for w in src.weights),
                                    -src.bias, "step", "gate", origin))
                cones[sig] = {"root": sig, "leaves": list(cones[uname[x]]["leaves"])}  # type: ignore[call-overload]
        outputs.append(Output(name, sig))
    return outputs, extra

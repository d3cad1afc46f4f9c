"""The exact ReLU form of a step network.

On ``|z| ≥ ½`` a step is the difference of two ReLUs: ``step(z) = ReLU(z + ½) − ReLU(z − ½)``.
So every threshold neuron ``n`` becomes a pair of ReLU units ``n~pos`` (bias + ½) and ``n~neg``
(bias − ½) with the same weights, every reader absorbs the subtraction into its own weights (``w``
on ``n~pos``, ``−w`` on ``n~neg``), and every output reads one ``linear`` unit ``n~out`` =
``n~pos − n~neg`` in one more layer.  A neuron that is an output and also read by others keeps its
pair for its readers.  The result equals the step network exactly on every 0/1 input (the
compiler guarantees ``|z| ≥ ½`` there).

Real-valued units (typed inputs) are the exception: a neuron ``z = w·(x − c)`` reading one is
rescaled by ``1 / (2m)``, ``m = min |w|·scale`` (its margin in
:func:`thresholdc.logic.typed.real_margins`), so its pair is exact wherever ``x`` is at least
``scale`` away from the threshold ``c`` and ramps linearly nearer to it.  A real unit that has
to cross layers is relayed as ``ReLU(x)`` and ``ReLU(−x)`` (one unit cannot carry a sign).

In the strict layered form (``layered=True``) a value that crosses layers is carried by one
relay unit ``ReLU(n~pos − n~neg)`` (then ``ReLU(r)`` for later layers; ``ReLU(x)`` for an input
unit), never by a relayed pair (its negative half is always 0 there).  Layers 1 … D hold only
ReLU units and layer D + 1 only the linear output units, so every layer has one activation.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
...               (Output("y", "y"),))
>>> r = to_relu(net)
>>> [n.name for n in r.neurons], r.evaluate([[0, 0], [1, 0], [1, 1]]).ravel().tolist()
(['y~pos', 'y~neg', 'y~out'], [0.0, 0.0, 1.0])
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..ir.network import Network, Neuron, Output, real_margins, real_units
from .layering import fresh_name

__all__ = ["to_relu"]


def _taken_names(net: Network) -> set[str]:
    """Every unit and output name of ``net`` (helper names must avoid all of them)."""
    return set(net.inputs) | {n.name for n in net.neurons} | {o.name for o in net.outputs}


def _scales(net: Network) -> dict[str, float]:
    """``{neuron: factor}`` for neurons reading a real unit: ``1 / (2 · margin)``."""
    real = real_units(net)
    if not real:
        return {}
    margins = real_margins(net, np.full(len(net.neurons), 0.5))
    return {n.name: 0.5 / float(m) for n, m in zip(net.neurons, margins.tolist(), strict=True)
            if real.keys() & set(n.inputs)}


def _pair(n: Neuron, ins: list[str], ws: list[float], layer: int, taken: set[str],
          factor: float = 1.0) -> tuple[Neuron, Neuron]:
    """The ReLU pair of step neuron ``n`` reading ``ins`` with ``ws`` (``z`` times ``factor``)."""
    pos = fresh_name(f"{n.name}~pos", taken)
    neg = fresh_name(f"{n.name}~neg", taken)
    ws = [w * factor for w in ws]
    b = float(n.bias) * factor
    return (
        Neuron(pos, layer, tuple(ins), tuple(ws), b + 0.5, "relu", "gate", n.origin),
        Neuron(neg, layer, tuple(ins), tuple(ws), b - 0.5, "relu", "gate", n.origin),
    )


def to_relu(net: Network, *, layered: bool = False) -> Network:
    """The exact ReLU form of the step network ``net`` (a new network).

    Parameters
    ----------
    net : Network
        A binary step network whose neurons have ``|z| ≥ ½`` on every input assignment.
    layered : bool
        Return the strict layered form (one activation per layer, outputs in the last).

    Returns
    -------
    Network
        Same inputs and outputs; ReLU pairs (role ``gate``), relays (role ``relay``) and
        linear output units, with the origins of the neurons they come from.

    Examples
    --------
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a", "b"), (Neuron("h", 1, ("a", "b"), (1, 1), -1.5, origin="y"),
    ...                            Neuron("y", 2, ("a", "h"), (1, -2), -0.5, origin="y")),
    ...               (Output("y", "y"),))
    >>> r = to_relu(net, layered=True)
    >>> [(n.name, n.layer, n.activation) for n in r.neurons]  # doctest: +NORMALIZE_WHITESPACE
    [('h~pos', 1, 'relu'), ('h~neg', 1, 'relu'), ('relay~a~1', 1, 'relu'),
     ('y~pos', 2, 'relu'), ('y~neg', 2, 'relu'), ('y~out', 3, 'linear')]
    >>> r.evaluate([[0, 0], [1, 0], [0, 1], [1, 1]]).ravel().tolist()
    [0.0, 1.0, 0.0, 0.0]
    """
    assert all(n.activation == "step" for n in net.neurons) and net.encoding == "binary"
    if layered:
        return _layered(net)
    taken = _taken_names(net)
    factor = _scales(net)
    pairs: dict[str, tuple[str, str]] = {}
    layer = {name: 0 for name in net.inputs}
    units: list[Neuron] = []
    for n in net.neurons:
        ins, ws = _read(n, pairs)
        L = 1 + max((layer[i] for i in ins), default=0)
        pos, neg = _pair(n, ins, ws, L, taken, factor.get(n.name, 1.0))
        units += [pos, neg]
        pairs[n.name] = (pos.name, neg.name)
        layer[pos.name] = layer[neg.name] = L
    origin = {n.name: n.origin for n in net.neurons}
    out_unit: dict[str, str] = {}
    outputs = []
    for o in net.outputs:
        if o.source in pairs and o.source not in out_unit:
            pos, neg = pairs[o.source]  # type: ignore[assignment]
            name = fresh_name(f"{o.source}~out", taken)
            units.append(Neuron(name, layer[pos] + 1, (pos, neg), (1.0, -1.0), 0.0, "linear",  # type: ignore[arg-type, index]
                                "gate", origin[o.source]))
            out_unit[o.source] = name
        outputs.append(Output(o.name, out_unit.get(o.source, o.source)))
    return replace(net, neurons=tuple(units), outputs=tuple(outputs))


def _read(n: Neuron, pairs: dict[str, tuple[str, str]]) -> tuple[list[str], list[float]]:
    """Inputs and weights of ``n`` with every step neuron it reads replaced by its pair."""
    ins: list[str] = []
    ws: list[float] = []
    for i, w in zip(n.inputs, n.weights, strict=True):
        if i in pairs:
            ins += list(pairs[i])
            ws += [float(w), -float(w)]
        else:
            ins.append(i)
            ws.append(float(w))
    return ins, ws


def _layered(net: Network) -> Network:
    """The strict layered ReLU form (see the module docstring)."""
    # Rules: a step neuron n of layer L(n) becomes its pair in layer L(n).  A reader c of n in
    # layer L(c) reads n at layer L(c) − 1: the pair itself when L(c) − 1 = L(n), else the relay
    # of n at that layer.  Relays exist at every layer L(n) + 1 … need(n), where need(n) is the
    # highest layer any reader (or, for outputs, the last ReLU layer D) wants n at.  Layer D + 1
    # holds one linear unit per output source.
    taken = _taken_names(net)
    factor = _scales(net)
    real = real_units(net)
    layer = {name: 0 for name in net.inputs}
    for n in net.neurons:
        layer[n.name] = 1 + max((layer[i] for i in n.inputs), default=0)
    depth = max((layer[n.name] for n in net.neurons), default=0)
    depth = max(depth, 1)
    origin: dict[str, str | None] = {n.name: n.origin for n in net.neurons}
    for n in net.neurons:
        for i in n.inputs:
            origin.setdefault(i, n.origin)
    for o in net.outputs:
        origin.setdefault(o.source, o.name)
    pairs: dict[str, tuple[str, str]] = {}
    relay: dict[tuple[str, int, float], str] = {}
    gates: dict[int, list[Neuron]] = {}
    relays: dict[int, list[Neuron]] = {}

    def carry(unit: str, L: int) -> list[tuple[str, float]]:
        """``(name, weight)`` terms giving ``unit``'s value at layer L, with relays."""
        L0 = layer[unit]
        if L == L0:
            if unit in pairs:
                return [(pairs[unit][0], 1.0), (pairs[unit][1], -1.0)]
            return [(unit, 1.0)]
        signs = (1.0, -1.0) if unit in real else (1.0,)  # a real value needs both halves
        if (unit, L, 1.0) not in relay:
            below = carry(unit, L - 1)
            for sign in signs:
                base = f"relay~{unit}~{L}" + ("" if len(signs) == 1 else
                                               ("~pos" if sign > 0 else "~neg"))
                got = fresh_name(base, taken)
                relay[(unit, L, sign)] = got
                relays.setdefault(L, []).append(
                    Neuron(got, L, tuple(t for t, _ in below),
                           tuple(sign * w for _, w in below), 0.0, "relu", "relay",
                           origin.get(unit))
                )
        return [(relay[(unit, L, sign)], sign) for sign in signs]

    for n in net.neurons:
        L = layer[n.name]
        ins: list[str] = []
        ws: list[float] = []
        for i, w in zip(n.inputs, n.weights, strict=True):
            for t, s in carry(i, L - 1):
                ins.append(t)
                ws.append(s * float(w))
        pos, neg = _pair(n, ins, ws, L, taken, factor.get(n.name, 1.0))
        pairs[n.name] = (pos.name, neg.name)
        gates.setdefault(L, []).extend((pos, neg))
    out_unit: dict[str, str] = {}
    finals: list[Neuron] = []
    outputs = []
    for o in net.outputs:
        if o.source not in out_unit:
            terms = carry(o.source, depth)
            name = fresh_name(f"{o.source}~out", taken)
            role = "gate" if o.source in pairs and layer[o.source] == depth else "relay"
            finals.append(Neuron(name, depth + 1, tuple(t for t, _ in terms),
                                 tuple(w for _, w in terms), 0.0, "linear", role,
                                 origin.get(o.source)))
            out_unit[o.source] = name
        outputs.append(Output(o.name, out_unit[o.source]))
    neurons = [u for L in range(1, depth + 1) for u in gates.get(L, []) + relays.get(L, [])]
    out = replace(net, neurons=tuple(neurons + finals), outputs=tuple(outputs))
    assert out.is_strict(), "the layered ReLU form must be strict"
    return out

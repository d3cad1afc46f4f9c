"""Layers: assign each neuron its layer, and insert relays for the strict layered form.

``layer`` is 1 + the largest layer among a neuron's inputs (input units are layer 0; a constant
neuron with no inputs is layer 1).  In the strict layered form every neuron of layer L reads only
units of layer L − 1 and every output reads a unit of the last layer, so each layer is one dense
matrix; :func:`insert_relays` gets there by carrying each unit forward through relay neurons
(step, weight 1, bias −0.5: the unit's 0/1 value again, with margin 0.5).

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("h", 1, ("a", "b"), (1, 1), -1.5),
...                            Neuron("y", 2, ("a", "h"), (1, -1), -0.5)), (Output("y", "y"),))
>>> [n.name for n in insert_relays(net).neurons]
['h', 'relay~a~1', 'y']
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import replace

from ..ir.network import Network, Neuron, Output

__all__ = ["assign_layers", "insert_relays", "fresh_name", "prune_dead"]


def assign_layers(neurons: Iterable[Neuron], inputs: Iterable[str]) -> tuple[Neuron, ...]:
    """Neurons (in topological order) with ``layer`` recomputed from their inputs.

    >>> n = assign_layers([Neuron("y", 0, ("a",), (1,), -0.5)], ["a"])
    >>> n[0].layer
    1
    """
    layer = {name: 0 for name in inputs}
    out = []
    for n in neurons:
        L = 1 + max((layer[i] for i in n.inputs), default=0)
        layer[n.name] = L
        out.append(n if n.layer == L else replace(n, layer=L))
    return tuple(out)


def fresh_name(base: str, taken: set[str]) -> str:
    """``base`` if unused, else ``base~2``, ``base~3``, …; the result is added to ``taken``.

    >>> taken = {"x", "x~2"}
    >>> fresh_name("x", taken), fresh_name("y", taken)
    ('x~3', 'y')
    """
    name = base
    k = 2
    while name in taken:
        name = f"{base}~{k}"
        k += 1
    taken.add(name)
    return name


def prune_dead(net: Network) -> Network:
    """Drop neurons that no output depends on (cone records of dropped neurons too)."""
    live = {o.source for o in net.outputs}
    for n in reversed(net.neurons):
        if n.name in live:
            live.update(n.inputs)
    kept = tuple(n for n in net.neurons if n.name in live)
    if len(kept) == len(net.neurons):
        return net
    meta = dict(net.meta)
    if "cones" in meta:
        names = {n.name for n in kept}
        meta["cones"] = {k: v for k, v in meta["cones"].items() if k in names}
    return replace(net, neurons=kept, meta=meta)


def insert_relays(net: Network, *, relay_weight: float = 1.0, relay_bias: float = -0.5) -> Network:
    """The strict layered form of ``net``: relays carry every unit to each later layer that
    reads it, and every output to the last layer.

    A relay of unit ``u`` at layer L is named ``relay~u~L`` (made unique), has role ``relay``,
    and the origin of what it carries (for an input unit, the origin of its first reader).
    ``relay_weight``/``relay_bias`` default to the binary step relay; other encodings pass
    their own.
    """
    layer = {name: 0 for name in net.inputs}
    for n in net.neurons:
        layer[n.name] = n.layer
    depth = max(net.depth, 1)
    taken = set(layer)
    origin: dict[str, str | None] = {n.name: n.origin for n in net.neurons}
    for n in net.neurons:
        for i in n.inputs:
            origin.setdefault(i, n.origin)
    # relay[(unit, L)] is the unit carrying ``unit``'s value at layer L.
    relay: dict[tuple[str, int], str] = {}
    by_layer: dict[int, list[Neuron]] = {}

    def carrier(unit: str, L: int) -> str:
        """The name of the unit carrying ``unit`` at layer L, creating relays as needed."""
        L0 = layer[unit]
        if L0 == L:
            return unit
        prev = unit
        for k in range(L0 + 1, L + 1):
            got = relay.get((unit, k))
            if got is None:
                got = fresh_name(f"relay~{unit}~{k}", taken)
                relay[(unit, k)] = got
                by_layer.setdefault(k, []).append(
                    Neuron(got, k, (prev,), (relay_weight,), relay_bias, "step", "relay",
                           origin.get(unit))
                )
            prev = got
        return prev

    for n in net.neurons:
        ins = tuple(carrier(i, n.layer - 1) for i in n.inputs)
        by_layer.setdefault(n.layer, []).append(replace(n, inputs=ins))
    outputs = tuple(Output(o.name, carrier(o.source, depth)) for o in net.outputs)
    neurons = tuple(n for L in sorted(by_layer) for n in _relays_last(by_layer[L]))
    out = replace(net, neurons=neurons, outputs=outputs)
    assert out.is_strict(), "relay insertion must give the strict layered form"
    return out


def _relays_last(units: list[Neuron]) -> list[Neuron]:
    """Within a layer: gates in their order, then relays in creation order."""
    return [n for n in units if n.role != "relay"] + [n for n in units if n.role == "relay"]

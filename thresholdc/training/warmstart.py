"""Where training starts: the compiled rules with certified sigmoid gains, made dense.

The recipe:

1. The compiled step network gets certified sigmoid gains in its strict layered form
   (:func:`thresholdc.network.soften.apply_activation` with ``layered=True``), so before any
   training every neuron is within ``tolerance`` of its exact rule value.  A network that is
   already soft and strictly layered is used as it is.
2. Dense: every unit reads every unit of the previous layer.  Links the rules use keep their
   compiled values; the others start at small random weights (uniform in
   ±:data:`LINK_SCALE`), so training can reach inputs the rules ignore.
3. ``widen=K`` adds K units (role ``extra``, origin null) to every hidden layer, with small
   random incoming and outgoing weights, so training can add what the rules miss; a network
   without a hidden layer first gets one (a relay after each output).
4. ``freeze`` keeps chosen rule neurons fixed, together with every neuron they read
   (transitively, along the rules' links), and without random links into them: a frozen
   neuron computes exactly what it computed before training.
5. ``init="random"`` keeps the architecture but draws every weight at random (Glorot uniform,
   biases 0); the anchor then pulls toward 0 (weight decay).

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> step = Network(("a", "b", "c"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
...                (Output("y", "y"),))
>>> s = prepare_start(step, rng=np.random.default_rng(0), widen=2)
>>> s.layout.sizes, s.layout.roles
((3, 3, 1), (('gate', 'extra', 'extra'), ('relay',)))
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np

from ..errors import UsageError
from ..ir.network import Network, Neuron, Output
from ..network import apply_activation
from .mlp import Layout

__all__ = ["LINK_SCALE", "INITS", "Start", "soft_network", "prepare_start", "frozen_closure"]

LINK_SCALE = 0.05
INITS = ("rules", "random")
_TRAINABLE = ("sigmoid", "tanh", "relu", "linear")


@dataclass(frozen=True)
class Start:
    """The starting point of a training run.

    ``weights``/``biases`` are the start values (θ_start); ``target_weights``/``target_biases``
    are what the anchor pulls toward (θ_start for ``rules``, zeros for ``random``);
    ``masks_w``/``masks_b`` are 1 where a parameter trains and 0 where it is frozen.
    """

    layout: Layout
    weights: list[np.ndarray]
    biases: list[np.ndarray]
    target_weights: list[np.ndarray]
    target_biases: list[np.ndarray]
    masks_w: list[np.ndarray]
    masks_b: list[np.ndarray]
    frozen: tuple[str, ...]
    soft: Network

    def network(self) -> Network:
        """The dense starting network."""
        return self.layout.network(self.weights, self.biases, self.soft.meta)

    def __repr__(self) -> str:
        return f"Start({self.layout!r}, frozen={list(self.frozen)})"


def _unique(name: str, taken: set[str]) -> str:
    """``name``, or ``name~k`` for the smallest k that is free; marks it taken."""
    out, k = name, 1
    while out in taken:
        k += 1
        out = f"{name}~{k}"
    taken.add(out)
    return out


def _add_output_relays(net: Network, weight: float, bias: float, activation: str) -> Network:
    """``net`` with one relay neuron after the source of every output (outputs re-pointed)."""
    taken = set(net.inputs) | {n.name for n in net.neurons}
    layer = {u: 0 for u in net.inputs} | {n.name: n.layer for n in net.neurons}
    origin = {n.name: n.origin for n in net.neurons}
    relay: dict[str, str] = {}
    added = []
    for o in net.outputs:
        if o.source in relay:
            continue
        L = layer[o.source] + 1
        name = _unique(f"relay~{o.source}~{L}", taken)
        relay[o.source] = name
        added.append(
            Neuron(name, L, (o.source,), (weight,), bias, activation, "relay",
                   origin.get(o.source))
        )
    neurons = sorted(net.neurons + tuple(added), key=lambda n: n.layer)  # stable: keeps order
    outputs = tuple(Output(o.name, relay[o.source]) for o in net.outputs)
    return replace(net, neurons=tuple(neurons), outputs=outputs)


def soft_network(net: Network, *, tolerance: float = 0.01, hidden: bool = False) -> Network:
    """The strict layered soft network training starts from.

    A step network (binary encoding) gets certified sigmoid gains in its strict layered form;
    a soft strict layered network is returned as it is.  With ``hidden=True`` the result has
    at least one hidden layer (relays after the outputs where needed).

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> step = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5, origin="n"),),
    ...                (Output("n", "n"),))
    >>> [n.activation for n in soft_network(step, hidden=True).neurons]
    ['sigmoid', 'sigmoid']
    """
    kinds = {n.activation for n in net.neurons}
    if not net.outputs:
        raise UsageError("the network has no outputs to train")
    if kinds <= {"step"}:
        if net.encoding != "binary":
            raise UsageError(
                "training starts from a step network in the binary encoding (sigmoid gains);"
                " this one is bipolar"
            )
        while hidden and net.depth < 2:
            net = _add_output_relays(net, 1.0, -0.5, "step")
        return apply_activation(
            net, activation="sigmoid", tolerance=tolerance, layered=not net.is_strict()
        )
    if "step" in kinds or not kinds <= set(_TRAINABLE):
        raise UsageError(
            "training needs a step network or a soft one (sigmoid, tanh, relu, linear);"
            f" this one mixes {', '.join(sorted(kinds))}"
        )
    if not net.is_strict():
        raise UsageError(
            "a soft network must be in the strict layered form to train (compile with --layered)"
        )
    try:
        Layout.of(net)
    except ValueError as exc:
        raise UsageError(f"cannot train this network: {exc}") from None
    if hidden and net.depth < 2:
        last = net.neurons[-1].activation
        if last != "sigmoid":
            raise UsageError(f"--widen cannot add a hidden layer to a {last} network")
        eps = float((net.meta.get("certificate") or {}).get("tolerance") or tolerance)
        # A sigmoid relay of a unit within eps of 0/1 stays within eps: z = g(a − ½) with
        # |a − ½| ≥ ½ − eps, so g = ln(1/eps − 1) / (½ − eps).
        g = math.log(1.0 / eps - 1.0) / (0.5 - eps)
        net = _add_output_relays(net, g, -g / 2, "sigmoid")
    return net


def frozen_closure(net: Network, names: Sequence[str]) -> tuple[str, ...]:
    """The named neurons (an output name stands for its source) and every neuron they read,
    transitively, in network order.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("p", 1, ("a",), (1,), -0.5),
    ...                        Neuron("q", 2, ("p",), (1,), -0.5)), (Output("out", "q"),))
    >>> frozen_closure(net, ["out"])
    ('p', 'q')
    """
    by_name = {n.name: n for n in net.neurons}
    source = {o.name: o.source for o in net.outputs}
    todo = []
    for name in names:
        name = source.get(name, name)
        if name not in by_name:
            listed = ", ".join(n.name for n in net.neurons if n.role == "gate")
            raise UsageError(f"--freeze: no neuron named {name!r} (rule neurons: {listed})")
        todo.append(name)
    seen: set[str] = set()
    while todo:
        name = todo.pop()
        if name in seen or name not in by_name:
            continue
        seen.add(name)
        todo.extend(by_name[name].inputs)
    return tuple(n.name for n in net.neurons if n.name in seen)


def prepare_start(
    network: Network,
    *,
    rng: np.random.Generator,
    init: str = "rules",
    widen: int = 0,
    freeze: Sequence[str] = (),
    tolerance: float = 0.01,
    input_scale: Sequence[float] | None = None,
) -> Start:
    """The dense starting point for training ``network`` (a new object; ``network`` unchanged).

    Parameters
    ----------
    network : Network
        The compiled step network, or a soft network in the strict layered form.
    rng : numpy.random.Generator
        Draws the small random weights (and, for ``init="random"``, every weight).
    init : {"rules", "random"}
    widen : int
        Extra hidden units per hidden layer.
    freeze : sequence of str
        Rule neurons (or outputs) kept fixed with everything they read.
    tolerance : float
        Certified distance of every neuron from its step value (sigmoid gains).
    input_scale : sequence of float, optional
        The typical size of each input unit (1 for Boolean and one-hot units; for a real unit,
        say, its largest absolute value in the data).  Random weights from a unit are divided
        by it, so that a link the rules do not use stays small for real-valued inputs too.

    Returns
    -------
    Start

    >>> import numpy as np
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> step = Network(("a", "b"), (Neuron("y", 1, ("a",), (1,), -0.5, origin="y"),),
    ...                (Output("y", "y"),))
    >>> s = prepare_start(step, rng=np.random.default_rng(1))
    >>> s.weights[0].shape, bool(abs(s.weights[0][0, 1]) < 0.25), bool(s.weights[0][0, 0] > 5)
    ((1, 2), True, True)
    """
    if init not in INITS:
        raise UsageError(f"unknown --init {init!r}; choose one of {', '.join(INITS)}")
    if freeze and init != "rules":
        raise UsageError("--freeze keeps rule neurons fixed, so it needs --init rules")
    soft = soft_network(network, tolerance=tolerance, hidden=widen > 0)
    frozen = frozen_closure(soft, freeze) if freeze else ()
    layout = Layout.of(soft)
    W, b = layout.params(soft)
    frozen_set = set(frozen)

    scale = np.ones(len(soft.inputs)) if input_scale is None else np.asarray(input_scale, float)
    assert scale.shape == (len(soft.inputs),) and np.all(scale > 0)
    per_column = [1.0 / scale] + [np.ones(len(u)) for u in layout.units[:-1]]

    # 2. dense: random small weights on every link the rules do not use (not into frozen rows)
    prev = list(soft.inputs)
    for L, units in enumerate(layout.units):
        col = {u: i for i, u in enumerate(prev)}
        used = np.zeros(W[L].shape, dtype=bool)
        for r, name in enumerate(units):
            for i in soft.neuron(name).inputs:
                used[r, col[i]] = True
        noise = rng.uniform(-LINK_SCALE, LINK_SCALE, size=W[L].shape) * per_column[L][None, :]
        rows_frozen = np.array([u in frozen_set for u in units], dtype=bool)
        fill = ~used & ~rows_frozen[:, None]
        W[L] = np.where(fill, noise, W[L])
        prev = list(units)

    # 3. widen every hidden layer by `widen` extra units
    units = [list(u) for u in layout.units]  # type: ignore[assignment]
    roles = [list(r) for r in layout.roles]
    origins = [list(o) for o in layout.origins]
    if widen:
        taken = set(soft.inputs) | {n.name for n in soft.neurons}
        for L in range(len(units) - 1):
            names = [_unique(f"extra~{L + 1}~{k + 1}", taken) for k in range(widen)]
            # layer L reads layer L - 1, which already holds its own extra units when L > 0
            incoming = rng.uniform(-LINK_SCALE, LINK_SCALE, size=(widen, W[L].shape[1]))
            if L == 0:
                incoming = incoming * per_column[0][None, :]
            W[L] = np.vstack([W[L], incoming])
            b[L] = np.concatenate([b[L], rng.uniform(-LINK_SCALE, LINK_SCALE, size=widen)])
            out = rng.uniform(-LINK_SCALE, LINK_SCALE, size=(W[L + 1].shape[0], widen))
            rows_frozen = np.array([u in frozen_set for u in units[L + 1]], dtype=bool)
            out[rows_frozen] = 0.0
            W[L + 1] = np.hstack([W[L + 1], out])
            units[L] += names  # type: ignore[index, operator]
            roles[L] += ["extra"] * widen
            origins[L] += [None] * widen
        layout = replace(
            layout,
            units=tuple(map(tuple, units)),
            roles=tuple(map(tuple, roles)),
            origins=tuple(map(tuple, origins)),
        )

    masks_w = []
    masks_b = []
    for L, names in enumerate(units):  # type: ignore[assignment]
        free = np.array([u not in frozen_set for u in names], dtype=float)
        masks_w.append(np.repeat(free[:, None], W[L].shape[1], axis=1))
        masks_b.append(free)

    # 5. random init: the same shapes, Glorot uniform weights, zero biases, anchored at 0
    if init == "random":
        for L in range(len(W)):
            n_out, n_in = W[L].shape
            limit = math.sqrt(6.0 / (n_in + n_out))  # Glorot & Bengio 2010, from memory
            W[L] = rng.uniform(-limit, limit, size=(n_out, n_in))
            if L == 0:
                W[L] = W[L] / scale[None, :]
            b[L] = np.zeros(n_out)
        target_w = [np.zeros_like(w) for w in W]
        target_b = [np.zeros_like(x) for x in b]
    else:
        target_w = [w.copy() for w in W]
        target_b = [x.copy() for x in b]
    return Start(layout, W, b, target_w, target_b, masks_w, masks_b, frozen, soft)

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
5. The anchor's weight on each parameter (``pull``): 1 on the rules' links and biases (pulled
   toward their start values), :data:`LINK_PULL` on the links the rules do not use and on the
   extra units (pulled toward 0, a light weight decay), so training can add an antecedent the
   rules lack while the rules themselves stay anchored.
6. ``init="random"`` is the baseline a practitioner would train without rules: a dense network
   with one hidden layer of sigmoid units (``hidden`` of them; default as many as the start has
   hidden units, at least :data:`MIN_HIDDEN`), Glorot-uniform weights, zero biases, and the
   anchor as plain weight decay toward 0 on the weights (biases not decayed).

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

__all__ = ["LINK_SCALE", "LINK_PULL", "MIN_HIDDEN", "INITS", "Start", "soft_network",
           "prepare_start", "frozen_closure", "random_dense"]

#: Links the rules do not use start uniform in ±LINK_SCALE.
LINK_SCALE = 0.05
#: The anchor's weight on those links and on extra units (toward 0); the rules' own links and
#: biases have weight 1 (toward their start).  Adding one antecedent of weight ω then costs
#: a tenth of what moving a rule weight by ω costs.
LINK_PULL = 0.1
#: The random baseline's hidden layer has at least this many units (common practice).
MIN_HIDDEN = 8
INITS = ("rules", "random")
_TRAINABLE = ("sigmoid", "tanh", "relu", "linear")


@dataclass(frozen=True)
class Start:
    """The starting point of a training run.

    ``weights``/``biases`` are the start values (θ_start); ``target_weights``/``target_biases``
    are what the anchor pulls toward (θ_start on the rules' links, 0 elsewhere);
    ``masks_w``/``masks_b`` are 1 where a parameter trains and 0 where it is frozen;
    ``pull_w``/``pull_b`` the anchor's weight on each parameter (module docstring, item 5).
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
    pull_w: list[np.ndarray]
    pull_b: list[np.ndarray]

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


def random_dense(
    soft: Network, *, rng: np.random.Generator, hidden: int,
    input_scale: np.ndarray | None = None,
) -> tuple[Layout, list[np.ndarray], list[np.ndarray]]:
    """The random baseline's layout and parameters: the inputs and outputs of ``soft``, one
    dense hidden layer of ``hidden`` sigmoid units (role ``extra``, names ``hidden~k``),
    Glorot-uniform weights (Glorot & Bengio 2010, from memory), zero biases.  The output
    units keep the names and activation of ``soft``'s last layer, one per output source.

    >>> import numpy as np
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (4.0, 4.0), -6.0, "sigmoid"),),
    ...               (Output("y", "y"),))
    >>> lay, W, b = random_dense(net, rng=np.random.default_rng(0), hidden=3)
    >>> lay.sizes, lay.activations, [w.shape for w in W], float(np.abs(b[0]).sum())
    ((2, 3, 1), ('sigmoid', 'sigmoid'), [(3, 2), (1, 3)], 0.0)
    """
    if hidden < 1:
        raise UsageError("the random baseline needs at least one hidden unit")
    last = Layout.of(soft)
    by_name = {n.name: n for n in soft.neurons}
    sources = list(dict.fromkeys(o.source for o in soft.outputs))
    bad = [u for u in sources if u not in by_name]
    if bad:
        raise UsageError(f"output {bad[0]!r} reads an input directly; nothing to train")
    taken = set(soft.inputs) | set(sources)
    names = tuple(_unique(f"hidden~{k + 1}", taken) for k in range(hidden))
    layout = replace(
        last,
        units=(names, tuple(sources)),
        roles=(("extra",) * hidden, tuple(by_name[u].role for u in sources)),
        origins=((None,) * hidden, tuple(by_name[u].origin for u in sources)),
        activations=("sigmoid", last.activations[-1]),
    )
    W, b = [], []
    for n_in, n_out in zip(layout.sizes[:-1], layout.sizes[1:], strict=True):
        limit = math.sqrt(6.0 / (n_in + n_out))
        W.append(rng.uniform(-limit, limit, size=(n_out, n_in)))
        b.append(np.zeros(n_out))
    if input_scale is not None:
        W[0] = W[0] / np.asarray(input_scale, dtype=float)[None, :]
    return layout, W, b


def prepare_start(
    network: Network,
    *,
    rng: np.random.Generator,
    init: str = "rules",
    widen: int = 0,
    freeze: Sequence[str] = (),
    tolerance: float = 0.01,
    input_scale: Sequence[float] | None = None,
    hidden: int = 0,
) -> Start:
    """The dense starting point for training ``network`` (a new object; ``network`` unchanged).

    Parameters
    ----------
    network : Network
        The compiled step network, or a soft network in the strict layered form.
    rng : numpy.random.Generator
        Draws the small random weights (and, for ``init="random"``, every weight).
    init : {"rules", "random"}
        ``random``: the dense one-hidden-layer baseline (:func:`random_dense`) in place of
        ``network``'s architecture.
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
    hidden : int
        Hidden units of the random baseline (0: as many as the start has hidden units, at
        least :data:`MIN_HIDDEN`).

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
    >>> s.pull_w[0].tolist(), float(s.target_weights[0][0, 1])
    ([[1.0, 0.1]], 0.0)
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
    uses = []
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
        uses.append(used | rows_frozen[:, None])
        prev = list(units)
    rule_b = [np.ones(len(u), dtype=bool) for u in layout.units]

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
            uses[L] = np.vstack([uses[L], np.zeros(incoming.shape, dtype=bool)])
            b[L] = np.concatenate([b[L], rng.uniform(-LINK_SCALE, LINK_SCALE, size=widen)])
            rule_b[L] = np.concatenate([rule_b[L], np.zeros(widen, dtype=bool)])
            out = rng.uniform(-LINK_SCALE, LINK_SCALE, size=(W[L + 1].shape[0], widen))
            rows_frozen = np.array([u in frozen_set for u in units[L + 1]], dtype=bool)
            out[rows_frozen] = 0.0
            W[L + 1] = np.hstack([W[L + 1], out])
            uses[L + 1] = np.hstack([uses[L + 1], np.zeros(out.shape, dtype=bool)])
            units[L] += names  # type: ignore[index, operator]
            roles[L] += ["extra"] * widen
            origins[L] += [None] * widen
        layout = replace(
            layout,
            units=tuple(map(tuple, units)),
            roles=tuple(map(tuple, roles)),
            origins=tuple(map(tuple, origins)),
        )

    # 6. random init: the dense one-hidden-layer baseline, weights decayed toward 0
    if init == "random":
        width = hidden or max(MIN_HIDDEN, sum(len(u) for u in units[:-1]))
        layout, W, b = random_dense(soft, rng=rng, hidden=width, input_scale=scale)
        ones_w = [np.ones_like(w) for w in W]
        return Start(layout, W, b, [np.zeros_like(w) for w in W],
                     [np.zeros_like(x) for x in b], ones_w, [np.ones_like(x) for x in b], (),
                     soft, [np.ones_like(w) for w in W], [np.zeros_like(x) for x in b])

    masks_w = []
    masks_b = []
    for L, names in enumerate(units):  # type: ignore[assignment]
        free = np.array([u not in frozen_set for u in names], dtype=float)
        masks_w.append(np.repeat(free[:, None], W[L].shape[1], axis=1))
        masks_b.append(free)

    # 5. the anchor: rule links and biases toward their start, the rest lightly toward 0
    target_w = [np.where(u, w, 0.0) for u, w in zip(uses, W, strict=True)]
    target_b = [np.where(r, x, 0.0) for r, x in zip(rule_b, b, strict=True)]
    pull_w = [np.where(u, 1.0, LINK_PULL) for u in uses]
    pull_b = [np.where(r, 1.0, LINK_PULL) for r in rule_b]
    return Start(layout, W, b, target_w, target_b, masks_w, masks_b, frozen, soft, pull_w,
                 pull_b)

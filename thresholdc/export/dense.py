"""The dense layered form shared by every export and import of a plain MLP.

Exports (``.npz``, the chain form of ONNX, PyTorch) all write the same layers: the network in
its strict layered form (every neuron of layer L reads only layer L - 1), one matrix per layer,
and a last layer whose rows are the outputs *in output order*.  Rules of that last layer:

- a row per output, so a row is repeated when two outputs read the same neuron;
- a last-layer neuron that no output reads is dropped (nothing can see it);
- an output that reads an input unit directly is carried by a relay, which
  :func:`thresholdc.network.layering.insert_relays` provides; a network without neurons gets
  one relay layer here (``1·x − ½`` under step, or ``1·x`` in the bipolar encoding).

Imports (:func:`network_from_layers`) read such layers back and take names, features and the
encoding from the compiled network they came from (``like``): a layer whose size matches the
dense form of ``like`` gets ``like``'s neuron names, roles and origins; any other layer gets
helper names ``L{k}~{i}``.  The imported network is dense: every unit reads every unit of the
layer before, zero weights included.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
...               (Output("y", "y"), Output("z", "y")))
>>> form = dense_form(net)
>>> form.layers[0][0].tolist(), form.names
([[1.0, 1.0], [1.0, 1.0]], [['y', 'y~2']])
>>> back = network_from_layers(form.layers, like=net)
>>> back.evaluate([[1, 1], [0, 1]]).tolist()
[[1.0, 1.0], [0.0, 0.0]]
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import UsageError
from ..ir import activations as act
from ..ir.network import Network, Neuron, Output
from ..network import insert_relays

__all__ = [
    "DenseForm", "Layer", "dense_form", "strict_form", "network_from_layers", "unique_name",
    "imported_meta", "check_layers",
]

Layer = tuple[np.ndarray, np.ndarray, str]


@dataclass(frozen=True)
class DenseForm:
    """A network as dense layers plus the names that go with them.

    ``layers[k] = (W, b, activation)`` with ``W`` of shape ``(n_out, n_in)``; ``names[k]`` the
    unit names of layer ``k + 1`` (unique), ``roles[k]`` and ``origins[k]`` theirs; the rows of
    the last layer are the outputs in output order.
    """

    inputs: tuple[str, ...]
    outputs: tuple[str, ...]
    layers: list[Layer]
    names: list[list[str]]
    roles: list[list[str]]
    origins: list[list[str | None]]
    encoding: str = "binary"

    def __repr__(self) -> str:
        sizes = "-".join([str(len(self.inputs))] + [f"{W.shape[0]}" for W, _, _ in self.layers])
        acts = ",".join(f for _, _, f in self.layers)
        return f"DenseForm({sizes} {acts})"


def unique_name(base: str, used: set[str]) -> str:
    """``base`` if unused, else ``base~2``, ``base~3``, …; the result is added to ``used``."""
    name, k = base, 2
    while name in used:
        name, k = f"{base}~{k}", k + 1
    used.add(name)
    return name


def strict_form(net: Network) -> Network:
    """``net`` itself when strict, else its strict layered form (relays inserted).

    Raises :class:`UsageError` when the layering pass is not available.
    """
    if net.is_strict():
        return net
    # Step relays are exact only in a step network; a soft or ReLU network must be layered
    # when it is compiled (its relays then get the network's own activation).
    steps = all(n.activation == "step" for n in net.neurons)
    if not steps:
        kinds = sorted({n.activation for n in net.neurons} - {"step"})
        raise UsageError(
            "this format holds the strict layered form: compile with --layered (a "
            f"{'/'.join(kinds) or 'step'} network gets its relays when it is compiled)"
        )
    bias = 0.0 if net.encoding == "bipolar" else -0.5  # a ±1 value keeps its sign with bias 0
    strict = insert_relays(net, relay_weight=1.0, relay_bias=bias)
    assert strict.is_strict(), "insert_relays must give a strict layered network"
    return strict


def dense_form(net: Network) -> DenseForm:
    """The dense layered form of ``net`` (made strict first, see :func:`strict_form`).

    Parameters
    ----------
    net : Network
        Any network; a non-strict one is layered with relays.

    Returns
    -------
    DenseForm
        Layers ``(W, b, activation)`` whose last rows are the outputs in output order.

    >>> from thresholdc.ir.network import Network, Output
    >>> form = dense_form(Network(("a",), (), (Output("a", "a"),)))
    >>> form.layers[0][0].tolist(), form.layers[0][1].tolist(), form.names
    ([[1.0]], [-0.5], [['a~relay']])
    """
    strict = strict_form(net)
    used = set(strict.inputs) | {n.name for n in strict.neurons} | set(strict.output_names)
    if strict.depth == 0:
        return _relay_form(strict, used)
    try:
        raw = strict.dense_layers()
    except ValueError as exc:  # a layer mixing activations
        raise UsageError(f"cannot export as dense layers: {exc}") from None
    layers: list[Layer] = []
    names: list[list[str]] = []
    roles: list[list[str]] = []
    origins: list[list[str | None]] = []
    for L, (W, b, f) in enumerate(raw, start=1):
        units = [n for n in strict.neurons if n.layer == L]
        if L < len(raw):
            layers.append((W, b, f))
            names.append([n.name for n in units])
            roles.append([n.role for n in units])
            origins.append([n.origin for n in units])
            continue
        # The last layer: one row per output, in output order.
        row = {n.name: r for r, n in enumerate(units)}
        pick = [row[o.source] for o in strict.outputs]
        layers.append((W[pick].copy(), b[pick].copy(), f))
        seen: set[str] = set()
        last = []
        for o in strict.outputs:
            last.append(o.source if o.source not in seen else unique_name(o.source, used))
            seen.add(o.source)
        names.append(last)
        roles.append([units[r].role for r in pick])
        origins.append([units[r].origin for r in pick])
    return DenseForm(strict.inputs, strict.output_names, layers, names, roles, origins,
                     strict.encoding)


def _relay_form(net: Network, used: set[str]) -> DenseForm:
    """One relay layer for a network whose outputs all read input units."""
    col = {name: i for i, name in enumerate(net.inputs)}
    W = np.zeros((len(net.outputs), len(net.inputs)))
    for r, o in enumerate(net.outputs):
        W[r, col[o.source]] = 1.0
    bias = 0.0 if net.encoding == "bipolar" else -0.5
    b = np.full(len(net.outputs), bias)
    names = [unique_name(f"{o.source}~relay", used) for o in net.outputs]
    return DenseForm(
        net.inputs, net.output_names, [(W, b, "step")], [names],
        [["relay"] * len(names)], [[o.source for o in net.outputs]], net.encoding,
    )


def check_layers(layers: Sequence[Layer], n_inputs: int | None, n_outputs: int | None,
                 file: str | None = None) -> None:
    """Raise UsageError naming the first layer whose shape does not fit."""

    def fail(message: str) -> UsageError:
        return UsageError(message, file=file)

    if not layers:
        raise fail("the dense network has no layers")
    width = n_inputs
    for k, (W, b, f) in enumerate(layers, start=1):
        if W.ndim != 2:
            raise fail(f"layer {k} has a weight array of shape {W.shape}, not 2-D")
        if width is not None and W.shape[1] != width:
            where = "input units" if k == 1 else f"units in layer {k - 1}"
            raise fail(f"layer {k} reads {W.shape[1]} columns but there are {width} {where}")
        if b.shape != (W.shape[0],):
            raise fail(f"layer {k} has {W.shape[0]} units but a bias of shape {b.shape}")
        if f not in act.ACTIVATIONS:
            raise fail(f"layer {k} has unknown activation {f!r}; "
                       f"known: {', '.join(act.ACTIVATIONS)}")
        if not (np.all(np.isfinite(W)) and np.all(np.isfinite(b))):
            raise fail(f"layer {k} has a weight or bias that is not finite")
        width = W.shape[0]
    if n_outputs is not None and width != n_outputs:
        raise fail(f"the last layer (layer {len(layers)}) has {width} units "
                   f"but there are {n_outputs} outputs")


def network_from_layers(
    layers: Sequence[Layer],
    *,
    like: Network | None = None,
    inputs: Sequence[str] | None = None,
    outputs: Sequence[str] | None = None,
    names: Sequence[Sequence[str]] | None = None,
    roles: Sequence[Sequence[str]] | None = None,
    origins: Sequence[Sequence[str | None]] | None = None,
    encoding: str | None = None,
    file: str | None = None,
) -> Network:
    """Build a dense :class:`Network` from layers ``(W, b, activation)``.

    Parameters
    ----------
    layers : sequence of (W, b, activation)
        ``W`` of shape ``(n_out, n_in)``; the last layer's rows are the outputs in order.
    like : Network, optional
        The compiled network these layers came from: gives the input and output names,
        features, encoding, and the neuron names of every layer whose size matches.
    inputs, outputs : sequence of str, optional
        Input unit and output names when there is no ``like`` (they must agree with it
        when both are given).
    names, roles, origins : per-layer lists, optional
        Unit names (and their roles and origins) to use where ``like`` gives none.
    encoding : str, optional
        ``binary`` or ``bipolar`` when there is no ``like`` (default: bipolar when a layer
        is tanh, else binary).
    file : str, optional
        The file being read, for error messages.

    Returns
    -------
    Network
        A dense network in strict layered form.

    Raises
    ------
    UsageError
        A shape that does not fit (naming the layer), or names that differ from ``like``'s.

    >>> import numpy as np
    >>> net = network_from_layers([(np.array([[2.0, 2.0]]), np.array([-1.0]), "sigmoid")],
    ...                           inputs=["a", "b"], outputs=["y"])
    >>> [n.name for n in net.neurons], net.output_names
    (['y'], ('y',))
    """
    layers = [(np.asarray(W, dtype=float), np.asarray(b, dtype=float), str(f))
              for W, b, f in layers]
    ref = dense_form(like) if like is not None else None
    if ref is not None:
        for label, given, have in (("inputs", inputs, ref.inputs),
                                   ("outputs", outputs, ref.outputs)):
            if given is not None and tuple(given) != tuple(have):
                raise UsageError(
                    f"its {label} {list(given)} differ from those of the network it is "
                    f"compared with {list(have)}", file=file)
        inputs, outputs = ref.inputs, ref.outputs
    if inputs is None:
        raise UsageError("the input unit names are unknown (give the network it came from, "
                         "--like NET.json)", file=file)
    inputs = tuple(inputs)
    outputs = tuple(outputs) if outputs is not None else None
    check_layers(layers, len(inputs), None if outputs is None else len(outputs), file)
    if outputs is None:
        outputs = tuple(f"y{i + 1}" for i in range(layers[-1][0].shape[0]))
    used: set[str] = set(inputs)  # unit names; output names live apart
    depth = len(layers)
    plan: list[tuple[list[str], list[str], list[str | None]]] = []
    for k, (W, _, _) in enumerate(layers):
        n = W.shape[0]
        given = _pick(ref, names, roles, origins, k, n, depth)  # type: ignore[assignment]
        if given is not None and not (set(given[0]) & used) and len(set(given[0])) == n:
            plan.append(given)  # type: ignore[arg-type]
            used.update(given[0])
        else:
            last = k == depth - 1
            ns = [unique_name(outputs[i] if last and outputs[i] not in inputs
                              and outputs[i] not in used else f"L{k + 1}~{i + 1}", used)
                  for i in range(n)]
            plan.append((ns, ["extra"] * n, [None] * n))
    neurons: list[Neuron] = []
    prev = list(inputs)
    for k, ((W, b, f), (ns, rs, os_)) in enumerate(zip(layers, plan, strict=True), start=1):
        for r in range(W.shape[0]):
            neurons.append(Neuron(ns[r], k, tuple(prev), tuple(float(w) for w in W[r]),
                                  float(b[r]), f, rs[r], os_[r]))
        prev = ns
    outs = tuple(Output(o, s) for o, s in zip(outputs, plan[-1][0], strict=True))
    if like is not None:
        enc, features, meta = like.encoding, like.features, imported_meta(like)
    else:
        tanh = any(f == "tanh" for _, _, f in layers)
        enc = encoding or ("bipolar" if tanh else "binary")
        features, meta = None, {}
    return Network(inputs, tuple(neurons), outs, meta, enc, features)


def _pick(ref: DenseForm | None, names: Any, roles: Any, origins: Any, k: int, n: int,
          depth: int) -> tuple[list[str], list[str], list[str | None]] | None:
    """The names, roles and origins for layer ``k`` (0-based) of ``n`` units, if known."""
    if ref is not None and len(ref.layers) == depth and len(ref.names[k]) == n:
        return list(ref.names[k]), list(ref.roles[k]), list(ref.origins[k])
    if names is not None and k < len(names) and len(names[k]) == n:
        rs = list(roles[k]) if roles is not None else ["gate"] * n
        os_ = list(origins[k]) if origins is not None else [None] * n
        return list(names[k]), rs, os_
    return None


def imported_meta(like: Network) -> dict[str, Any]:
    """The ``meta`` of an imported network: what it was compared with, nothing machine-made."""
    meta: dict[str, Any] = {}
    for key in ("tool", "source_sha256"):
        if key in like.meta:
            meta[key] = like.meta[key]
    meta["imported"] = {"dense": True}
    return meta

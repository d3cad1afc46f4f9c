"""PyTorch export and import (optional extra ``torch``): an ``nn.Sequential`` MLP, or a sparse
module for netlist-sized networks.

:func:`to_torch` gives ``Linear, activation, Linear, activation, …`` for the dense layered form
of :mod:`thresholdc.export.dense` (the last ``Linear`` has one row per output, in output order).
From ``SPARSE_FROM`` neurons (``form="auto"``; or with ``form="sparse"``) it gives a
:class:`SparseNet` instead, the layout of the sparse ONNX form: unit-major tensors, each group
(a layer's neurons of one activation) ``index_select``s only the rows it reads from each
earlier group's output (index buffers), multiplies them by its own small dense weight block (a
parameter of just those columns) and applies its activation; no relays.
A step is the small module :class:`Step` (``(x > 0)`` as float; ``±1`` in the bipolar encoding).
Its forward pass is the exact step; its backward pass is a straight-through estimator (the
gradient of the clipped identity: 1 where |x| ≤ 1, else 0), so ``loss.backward()`` works on a
step network, but the gradient is a surrogate: for training, soften the network
(``--activation sigmoid``), whose gradients are the true ones.
:func:`from_torch` reads such a module back (``Linear`` followed by an activation module or by
nothing, which is a linear layer) with the names of the compiled network it came from.

>>> import torch
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),), (Output("y", "y"),))
>>> model = to_torch(net)
>>> model
Sequential(
  (0): Linear(in_features=2, out_features=1, bias=True)
  (1): Step()
)
>>> model(torch.tensor([[1.0, 1.0], [0.0, 1.0]])).tolist()
[[1.0], [0.0]]
"""

from __future__ import annotations

import numpy as np
import torch
from torch import nn

from ..errors import UsageError
from ..ir.network import Network, Neuron, Output
from .dense import Layer, dense_form, imported_meta, network_from_layers
from .sparse import SPARSE_FROM, sparse_form, sparse_ok

__all__ = ["Step", "SparseNet", "to_torch", "from_torch", "FORMS", "SPARSE_FROM"]

FORMS = ("auto", "dense", "sparse")


class Step(nn.Module):
    """The threshold activation: 1 where ``x > 0``, else 0 (or −1 when ``bipolar``).

    Forward: the exact step.  Backward: the straight-through estimator of the clipped
    identity, d out / d x = 1 where |x| ≤ 1 and 0 elsewhere (in both encodings).

    >>> x = torch.tensor([-2.0, -0.5, 0.5, 3.0], requires_grad=True)
    >>> y = Step()(x); y.sum().backward()
    >>> y.tolist(), x.grad.tolist()
    ([0.0, 0.0, 1.0, 1.0], [0.0, 1.0, 1.0, 0.0])
    """

    def __init__(self, bipolar: bool = False) -> None:
        super().__init__()
        self.bipolar = bipolar

    def forward(self, x: torch.Tensor) -> torch.Tensor:
        hi = (x > 0).to(x.dtype)
        out = 2.0 * hi - 1.0 if self.bipolar else hi
        if not x.requires_grad:
            return out
        surrogate = x.clamp(-1.0, 1.0)
        return out + (surrogate - surrogate.detach())  # exact value, surrogate gradient

    def extra_repr(self) -> str:
        return "bipolar=True" if self.bipolar else ""


def _activation_module(name: str, bipolar: bool) -> nn.Module | None:
    """The module for an activation name (``None`` for linear)."""
    if name == "step":
        return Step(bipolar)
    if name == "linear":
        return None
    return {"sigmoid": nn.Sigmoid, "tanh": nn.Tanh, "relu": nn.ReLU}[name]()


class SparseNet(nn.Module):
    """A network as unit-major groups with index buffers (see the module docstring).

    ``forward(x)`` takes ``(batch, input units)`` and returns ``(batch, outputs)``.
    ``sources[k]`` lists, per group ``k``, the earlier tensors it reads (0 = the inputs, ``j``
    = group ``j - 1``) with the buffer of rows taken from each; ``weight[k]`` (group × rows
    read) and ``bias[k]`` (group × 1) are parameters; ``names[k]`` the neuron names.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),),
    ...               (Output("y", "y"),))
    >>> model = to_torch(net, form="sparse")
    >>> model(torch.tensor([[1.0, 1.0], [0.0, 1.0]])).tolist()
    [[1.0], [0.0]]
    """

    def __init__(self, network: Network, dtype: torch.dtype = torch.float32) -> None:
        super().__init__()
        bipolar = network.encoding == "bipolar"
        form = sparse_form(network)
        self.sources: list[list[tuple[int, str | None]]] = []
        self.names: list[list[str]] = []
        self.activations: list[str] = []
        self.weight = nn.ParameterList()
        self.bias = nn.ParameterList()
        self.acts = nn.ModuleList()
        for k, grp in enumerate(form.groups):
            self.weight.append(nn.Parameter(torch.tensor(grp.W, dtype=dtype)))
            self.bias.append(nn.Parameter(torch.tensor(grp.b, dtype=dtype)))
            module = _activation_module(grp.activation, bipolar)
            self.acts.append(module if module is not None else nn.Identity())
            self.sources.append(self._buffers_of(f"g{k}", grp.reads))
            self.names.append([n.name for n in grp.neurons])
            self.activations.append(grp.activation)
        self.out_sources = self._buffers_of("out", form.out_reads)
        self.register_buffer("out_order", torch.tensor(form.order, dtype=torch.long))
        self.n_inputs = len(network.inputs)

    def _buffers_of(self, tag: str, reads: list[tuple[int, list[int] | None]]
                    ) -> list[tuple[int, str | None]]:
        """An index buffer for the rows read from each tensor; ``None``: all rows, in order."""
        srcs: list[tuple[int, str | None]] = []
        for t, idx in reads:
            name = None
            if idx is not None:
                name = f"{tag}_i{t}"
                self.register_buffer(name, torch.tensor(idx, dtype=torch.long))
            srcs.append((t, name))
        return srcs

    def _read(self, values: list[torch.Tensor], srcs: list[tuple[int, str | None]]
              ) -> torch.Tensor:
        parts = [values[t] if name is None else values[t].index_select(0, self.get_buffer(name))
                 for t, name in srcs]
        return parts[0] if len(parts) == 1 else torch.cat(parts, 0)

    def forward(self, x: torch.Tensor) -> torch.Tensor:
        values = [x.t()]
        for srcs, W, b, f in zip(self.sources, self.weight, self.bias, self.acts, strict=True):
            values.append(f(torch.addmm(b, W, self._read(values, srcs))))
        order = self.get_buffer("out_order")
        return self._read(values, self.out_sources).index_select(0, order).t()

    def to_network(self, like: Network) -> Network:
        """The module's current parameters as a :class:`Network` named after ``like`` (zero
        weights dropped)."""
        table = list(like.inputs)
        sizes = [len(like.inputs)]
        firsts = [0]
        layer = {name: 0 for name in like.inputs}
        info = {n.name: n for n in like.neurons}
        neurons = []
        for srcs, W, b, names, f in zip(self.sources, self.weight, self.bias, self.names,
                                        self.activations, strict=True):
            cols = self._columns(srcs, sizes, firsts)
            Wn = W.detach().to(torch.float64).cpu().numpy()
            bn = b.detach().to(torch.float64).cpu().numpy().reshape(-1)
            firsts.append(len(table))
            for r, name in enumerate(names):
                keep = [(table[c], float(w)) for c, w in zip(cols, Wn[r], strict=True) if w]
                lay = 1 + max((layer[i] for i, _ in keep), default=0)
                old = info.get(name)
                neurons.append(Neuron(name, lay, tuple(i for i, _ in keep),
                                      tuple(w for _, w in keep), float(bn[r]), f,
                                      old.role if old else "extra",
                                      old.origin if old else None))
                layer[name] = lay
            table.extend(names)
            sizes.append(len(names))
        cols = self._columns(self.out_sources, sizes, firsts)
        picked = [table[cols[int(k)]] for k in self.get_buffer("out_order").tolist()]
        outs = tuple(Output(o, s) for o, s in zip(like.output_names, picked, strict=True))
        return Network(like.inputs, tuple(neurons), outs, imported_meta(like), like.encoding,
                       like.features)

    def _columns(self, srcs: list[tuple[int, str | None]], sizes: list[int],
                 firsts: list[int]) -> list[int]:
        """Unit-table positions of the rows a group reads."""
        cols: list[int] = []
        for t, name in srcs:
            idx = range(sizes[t]) if name is None else self.get_buffer(name).tolist()
            cols += [firsts[t] + int(j) for j in idx]
        return cols


def to_torch(network: Network, *, dtype: torch.dtype = torch.float32,
             form: str = "auto") -> nn.Module:
    """The network as an ``nn.Sequential`` of ``Linear`` and activation modules, or as a
    :class:`SparseNet` for netlist-sized networks.

    Parameters
    ----------
    network : Network
        Any network; a non-strict one is put in strict layered form first (dense form).
    dtype : torch.dtype
        The parameters' dtype (float32 by default, exact for integer weights and
        half-integer biases).
    form : str
        ``auto`` (a :class:`SparseNet` from ``SPARSE_FROM`` neurons, else the dense
        ``Sequential``), ``dense`` or ``sparse``.

    Returns
    -------
    torch.nn.Module
        Input ``(batch, input units)``, output ``(batch, outputs)`` in output order.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-2,), 1, "sigmoid"),), (Output("n", "n"),))
    >>> [type(m).__name__ for m in to_torch(net)]
    ['Linear', 'Sigmoid']
    """
    if form not in FORMS:
        raise UsageError(f"the torch form must be one of {', '.join(FORMS)}. Got {form!r} "
                         "instead.")
    if sparse_ok(network) and (form == "sparse" or (form == "auto"
                                           and len(network.neurons) >= SPARSE_FROM)):
        return SparseNet(network, dtype)
    return _sequential(network, dtype)


def _sequential(network: Network, dtype: torch.dtype) -> nn.Sequential:
    form = dense_form(network)
    modules: list[nn.Module] = []
    for W, b, f in form.layers:
        linear = nn.Linear(W.shape[1], W.shape[0], dtype=dtype)
        with torch.no_grad():
            linear.weight.copy_(torch.as_tensor(W, dtype=dtype))
            linear.bias.copy_(torch.as_tensor(b, dtype=dtype))
        modules.append(linear)
        module = _activation_module(f, form.encoding == "bipolar")
        if module is not None:
            modules.append(module)
    return nn.Sequential(*modules)


def _flat(module: nn.Module) -> list[nn.Module]:
    """The leaf modules of nested ``Sequential`` containers, in order."""
    if isinstance(module, nn.Sequential):
        return [leaf for child in module for leaf in _flat(child)]
    return [module]


_ACTS: tuple[tuple[type[nn.Module], str], ...] = (
    (nn.Sigmoid, "sigmoid"), (nn.Tanh, "tanh"), (nn.ReLU, "relu"), (Step, "step"),
)
_SKIP = (nn.Identity, nn.Dropout, nn.Flatten)


def layers_of(module: nn.Module) -> list[Layer]:
    """``(W, b, activation)`` for every ``Linear`` of ``module`` (UsageError on others)."""
    layers: list[Layer] = []
    pending: tuple[np.ndarray, np.ndarray] | None = None
    for k, leaf in enumerate(_flat(module)):
        if isinstance(leaf, nn.Linear):
            if pending is not None:
                layers.append((*pending, "linear"))
            W = leaf.weight.detach().to(torch.float64).cpu().numpy()
            b = (leaf.bias.detach().to(torch.float64).cpu().numpy() if leaf.bias is not None
                 else np.zeros(W.shape[0]))
            pending = (W, b)
            continue
        if isinstance(leaf, _SKIP):
            continue
        name = next((n for cls, n in _ACTS if isinstance(leaf, cls)), None)
        if name is None:
            raise UsageError(f"module {k} ({type(leaf).__name__}) is not supported; use "
                             "Linear with Sigmoid, Tanh, ReLU or Step")
        if pending is None:
            raise UsageError(f"module {k} ({type(leaf).__name__}) does not follow a Linear")
        layers.append((*pending, name))
        pending = None
    if pending is not None:
        layers.append((*pending, "linear"))
    if not layers:
        raise UsageError("the module has no Linear layer")
    return layers


def from_torch(module: nn.Module, like: Network) -> Network:
    """Read a ``Linear`` + activation MLP back into a :class:`Network` named after ``like``.

    Parameters
    ----------
    module : torch.nn.Module
        An ``nn.Sequential`` (nested ones are flattened) of ``Linear`` layers, each followed
        by ``Sigmoid``, ``Tanh``, ``ReLU``, :class:`Step` or nothing (linear);
        ``Identity``, ``Dropout`` and ``Flatten`` are skipped.
    like : Network
        The compiled network it came from: input and output names, features, encoding, and
        the neuron names of every layer whose size matches.

    Returns
    -------
    Network
        A dense network in strict layered form.

    Raises
    ------
    UsageError
        An unsupported module, or a layer whose shape does not fit ``like`` (naming it).

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-2,), 1, "sigmoid"),), (Output("n", "n"),))
    >>> from_torch(to_torch(net), like=net).neurons[0].weights
    (-2.0,)
    """
    if isinstance(module, SparseNet):
        return module.to_network(like)
    return network_from_layers(layers_of(module), like=like)

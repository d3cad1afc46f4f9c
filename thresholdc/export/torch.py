"""PyTorch export and import (optional extra ``torch``): an ``nn.Sequential`` MLP.

:func:`to_torch` gives ``Linear, activation, Linear, activation, …`` for the dense layered form
of :mod:`thresholdc.export.dense` (the last ``Linear`` has one row per output, in output order).
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
from ..ir.network import Network
from .dense import Layer, dense_form, network_from_layers

__all__ = ["Step", "to_torch", "from_torch"]


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


def to_torch(network: Network, *, dtype: torch.dtype = torch.float32) -> nn.Sequential:
    """The network as an ``nn.Sequential`` of ``Linear`` and activation modules.

    Parameters
    ----------
    network : Network
        Any network; a non-strict one is put in strict layered form first.
    dtype : torch.dtype
        The parameters' dtype (float32 by default, exact for integer weights and
        half-integer biases).

    Returns
    -------
    torch.nn.Sequential
        Input ``(batch, input units)``, output ``(batch, outputs)`` in output order.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-2,), 1, "sigmoid"),), (Output("n", "n"),))
    >>> [type(m).__name__ for m in to_torch(net)]
    ['Linear', 'Sigmoid']
    """
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
    return network_from_layers(layers_of(module), like=like)

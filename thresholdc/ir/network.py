"""The Network: named threshold (or soft) neurons in topological order.

A :class:`Network` is what the compiler produces and what every back end reads.  Each
:class:`Neuron` reads input units or earlier neurons by name and computes
``a = activation(Σ weights[i] · value(inputs[i]) + bias)``; ``layer`` is 1 + the largest layer
among its inputs (input units are layer 0).  The file format (DESIGN.md §4) is in
:mod:`thresholdc.network.fileformat`; this module is the in-memory model and its evaluator.

Shapes: ``evaluate(X)`` takes ``X`` of shape ``(rows, len(inputs))`` and returns
``(rows, len(outputs))``; a layer from :meth:`Network.dense_layers` is ``(W, b, activation)``
with ``W`` of shape ``(n_out, n_in)``.

>>> net = Network(
...     inputs=("a", "b"),
...     neurons=(Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
...     outputs=(Output("y", "y"),),
... )
>>> net.evaluate([[0, 0], [1, 1]]).tolist()
[[0.0], [1.0]]
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from functools import cached_property
from typing import Any

import numpy as np

from ..errors import NetworkFileError, UsageError
from ..lazy import lazy_module
from ..present import DISPLAY
from . import activations as act
from .bitslice import BitPlan, chunk_rows

sparse = lazy_module("scipy.sparse")

__all__ = [
    "Neuron", "Output", "Network", "ROLES", "ENCODINGS", "DEFAULT_SCALE",
    "check_network", "real_units", "real_margins", "register_writer",
]

ROLES = ("gate", "relay", "extra")
ENCODINGS = ("binary", "bipolar")

#: The scale of a real input unit that declares none.
DEFAULT_SCALE = 1.0


#: How :meth:`Network.save` and :meth:`Network.to_json` write: set by
#: :func:`register_writer`, which :mod:`thresholdc.export` calls when it is imported (importing
#: ``thresholdc`` imports it).  The ground floor cannot import the export stage itself.
_WRITERS: dict[str, Callable[..., Any]] = {}


def register_writer(save: Callable[[Network, str], None], dumps: Callable[[Network], str]) -> None:
    """Install the functions behind :meth:`Network.save` (by suffix) and
    :meth:`Network.to_json` (the network file text).

    >>> sorted(_WRITERS)  # thresholdc.export has registered them
    ['dumps', 'save']
    """
    _WRITERS["save"] = save
    _WRITERS["dumps"] = dumps


def _writer(name: str) -> Callable[..., Any]:
    if name not in _WRITERS:
        raise UsageError(
            "no network writer is registered: import thresholdc.export (importing thresholdc "
            "does) before calling Network.save or Network.to_json"
        )
    return _WRITERS[name]


@dataclass(frozen=True, slots=True)
class Neuron:
    """One neuron.  ``weights[i]`` multiplies the unit named ``inputs[i]``."""

    name: str
    layer: int
    inputs: tuple[str, ...]
    weights: tuple[float, ...]
    bias: float
    activation: str = "step"
    role: str = "gate"
    origin: str | None = None

    def __repr__(self) -> str:
        terms = " ".join(f"{w:+g}*{i}" for w, i in zip(self.weights, self.inputs))
        return f"{self.name}[L{self.layer} {self.activation}]({terms} {self.bias:+g})"

    @property
    def fan_in(self) -> int:
        return len(self.inputs)


@dataclass(frozen=True, slots=True)
class Output:
    """A network output: its name and the unit (neuron or input unit) it reads."""

    name: str
    source: str

    def __repr__(self) -> str:
        return self.name if self.name == self.source else f"{self.name}<-{self.source}"



@dataclass(frozen=True)
class Network:
    """A compiled network; immutable (passes return new networks).

    ``features`` describes typed inputs (``None`` when every input is Boolean);
    ``meta`` holds the tool name, the source hash, the options and the verification record.
    """

    inputs: tuple[str, ...]
    neurons: tuple[Neuron, ...]
    outputs: tuple[Output, ...]
    meta: dict[str, Any] = field(default_factory=dict, compare=False)
    encoding: str = "binary"
    features: tuple[dict[str, Any], ...] | None = None

    # ------------------------------------------------------------------ structure
    @property
    def input_names(self) -> tuple[str, ...]:
        return self.inputs

    @property
    def output_names(self) -> tuple[str, ...]:
        return tuple(o.name for o in self.outputs)

    def neuron(self, name: str) -> Neuron:
        """The neuron called ``name`` (``KeyError`` if none)."""
        for n in self.neurons:
            if n.name == name:
                return n
        raise KeyError(name)

    @property
    def depth(self) -> int:
        """The largest layer (0 for a network without neurons)."""
        return max((n.layer for n in self.neurons), default=0)

    @property
    def parameter_count(self) -> int:
        """Weights plus biases."""
        return sum(len(n.weights) for n in self.neurons) + len(self.neurons)

    def layer_sizes(self) -> dict[int, dict[str, int]]:
        """``{layer: {role: count}}`` for every layer with neurons, in layer order."""
        sizes: dict[int, dict[str, int]] = {}
        for n in self.neurons:
            per = sizes.setdefault(n.layer, {r: 0 for r in ROLES})
            per[n.role] = per.get(n.role, 0) + 1
        return dict(sorted(sizes.items()))

    def is_strict(self) -> bool:
        """True when every neuron of layer L reads only units of layer L - 1 and every
        output is read from the last layer."""
        layer = {name: 0 for name in self.inputs}
        for n in self.neurons:
            layer[n.name] = n.layer
        if any(layer[i] != n.layer - 1 for n in self.neurons for i in n.inputs):
            return False
        return all(layer[o.source] == self.depth for o in self.outputs)

    def with_meta(self, **entries: Any) -> Network:
        """A copy with ``meta`` entries added or replaced."""
        meta = dict(self.meta)
        meta.update(entries)
        return replace(self, meta=meta)

    # ------------------------------------------------------------------ evaluation
    def forward(self, X: Any) -> tuple[np.ndarray, np.ndarray]:
        """Pre-activations and activations of every neuron, each ``(rows, len(neurons))``.

        >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
        >>> z, a = net.forward([[0], [1]])
        >>> z[:, 0].tolist(), a[:, 0].tolist()
        ([0.5, -0.5], [1.0, 0.0])
        """
        Z, V = self.run_units(X)
        return Z.T.astype(float), V[len(self.inputs):].T.astype(float)

    def run_units(self, X: Any) -> tuple[np.ndarray, np.ndarray]:
        """The fast path behind :meth:`forward`: ``Z`` of shape (neurons, rows) and the values
        of every unit (inputs first, then neurons) of shape (units, rows).

        The dtype is float32 where that is exact (step networks with half-integer parameters
        and 0/1 or ±1 inputs), else float64.

        >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
        >>> Z, V = net.run_units([[0], [1]])
        >>> Z.shape, V.tolist()
        ((1, 2), [[0.0, 1.0], [1.0, 0.0]])
        """
        X = np.asarray(X, dtype=float)
        if X.ndim != 2 or X.shape[1] != len(self.inputs):
            raise ValueError(
                f"expected an array of shape (rows, {len(self.inputs)}), got {X.shape}"
            )
        rows = X.shape[0]
        base = len(self.inputs)
        dtype = np.float32 if self._exact_in_float32 else np.float64
        # Units × rows; one sparse product per layer (neurons of a layer are independent).
        values = np.empty((base + len(self.neurons), rows), dtype=dtype)
        values[:base] = X.T
        Z = np.empty((len(self.neurons), rows), dtype=dtype)
        bipolar = self.encoding == "bipolar"
        for idx, W, b, groups in self._layer_plan:
            z = W @ values
            z += b[:, None]
            Z[idx] = z
            for name, sel in groups:
                if name == "step":
                    a = (z[sel] > 0).astype(dtype)
                    if bipolar:
                        a = 2 * a - 1
                else:
                    a = act.get(name).forward(z[sel])
                values[base + idx[sel]] = a
        return Z, values

    def unit_index(self) -> dict[str, int]:
        """The row of each unit in :meth:`run_units`' values (inputs first, then neurons)."""
        names = list(self.inputs) + [n.name for n in self.neurons]
        return {name: i for i, name in enumerate(names)}

    def evaluate(self, X: Any) -> np.ndarray:
        """Output values, ``(rows, len(outputs))``, for input rows ``X`` (rows × inputs).

        >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
        >>> net.evaluate([[0], [1]]).tolist()
        [[1.0], [0.0]]
        """
        X = self._rows(X)
        plan = self._bits_for(X)
        if plan is not None:
            return plan.decide(X).astype(float)
        out = np.empty((X.shape[0], len(self.outputs)))
        for start, stop in self._chunks(X.shape[0]):
            _, V = self.run_units(X[start:stop])
            out[start:stop] = V[self._output_rows].T
        return out

    @cached_property
    def _output_rows(self) -> list[int]:
        index = self.unit_index()
        return [index[o.source] for o in self.outputs]

    @property
    def decision_threshold(self) -> float:
        """Where an output value reads as true: 0.5 (binary) or 0 (bipolar)."""
        return 0.0 if self.encoding == "bipolar" else 0.5

    def decide(self, X: Any) -> np.ndarray:
        """Boolean outputs ``(rows, len(outputs))``: an output is true above the threshold.

        >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
        >>> net.decide([[0], [1]]).tolist()
        [[True], [False]]
        """
        X = self._rows(X)
        plan = self._bits_for(X)
        if plan is not None:
            return plan.decide(X)
        out = np.empty((X.shape[0], len(self.outputs)), dtype=bool)
        for start, stop in self._chunks(X.shape[0]):
            _, V = self.run_units(X[start:stop])
            out[start:stop] = (V[self._output_rows] > self.decision_threshold).T
        return out

    def _rows(self, X: Any) -> np.ndarray:
        X = np.asarray(X, dtype=float)
        if X.ndim != 2 or X.shape[1] != len(self.inputs):
            raise ValueError(
                f"expected an array of shape (rows, {len(self.inputs)}), got {X.shape}"
            )
        return X

    def _chunks(self, rows: int) -> list[tuple[int, int]]:
        """Row ranges whose unit values (and pre-activations) stay within the memory budget."""
        itemsize = 4 if self._exact_in_float32 else 8
        step = chunk_rows(len(self.inputs) + 2 * len(self.neurons), itemsize)
        return [(a, min(rows, a + step)) for a in range(0, max(rows, 1), step)]

    def _bits_for(self, X: np.ndarray) -> BitPlan | None:
        """The bit-sliced plan when it gives the same answer: step, 0/1 inputs and values."""
        plan = self._bit_plan
        if plan is None:
            return None
        for start, stop in self._chunks(X.shape[0]):  # 0/1 rows only, checked a chunk at a time
            part = X[start:stop]
            if not np.array_equal(part.astype(np.uint8), part) or (part.size and part.max() > 1):
                return None
        return plan

    @property
    def bit_plan(self) -> BitPlan | None:
        """The bit-sliced plan of a binary step network with half-integer parameters (what
        :meth:`decide` uses on 0/1 rows), else ``None``.

        >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
        >>> net.bit_plan.n_units
        2
        """
        return self._bit_plan

    @cached_property
    def _bit_plan(self) -> BitPlan | None:
        if self.encoding != "binary" or not self._exact_in_float32:
            return None
        neurons = [(n.name, n.layer, n.inputs, n.weights, n.bias) for n in self.neurons]
        return BitPlan.build(self.inputs, neurons, [o.source for o in self.outputs])

    @cached_property
    def _exact_in_float32(self) -> bool:
        """True when float32 computes every pre-activation exactly: all neurons step, weights
        and biases multiples of 1/2, every |Σ w·x + b| far below 2^24, inputs 0/1 or ±1."""
        if self.features is not None and any(f.get("kind") == "real" for f in self.features):
            return False
        for n in self.neurons:
            if n.activation != "step":
                return False
            terms = [*n.weights, n.bias]
            if any(float(2 * t) != int(2 * t) for t in terms):
                return False
            if sum(abs(t) for t in terms) >= 2**22:
                return False
        return True

    @cached_property
    def _layer_plan(self) -> list[tuple[np.ndarray, Any, np.ndarray, list]]:
        """Per layer: neuron positions, sparse weights over all units, biases, activations."""
        index = {name: i for i, name in enumerate(self.inputs)}
        base = len(self.inputs)
        for j, n in enumerate(self.neurons):
            index[n.name] = base + j
        total = base + len(self.neurons)
        by_layer: dict[int, list[int]] = {}
        for j, n in enumerate(self.neurons):
            by_layer.setdefault(n.layer, []).append(j)
        plan = []
        for L in sorted(by_layer):
            idx = np.array(by_layer[L], dtype=np.int64)
            rows_: list[int] = []
            cols_: list[int] = []
            vals_: list[float] = []
            for r, j in enumerate(idx):
                n = self.neurons[j]
                rows_.extend([r] * len(n.inputs))
                cols_.extend(index[i] for i in n.inputs)
                vals_.extend(float(w) for w in n.weights)
            dtype = np.float32 if self._exact_in_float32 else np.float64
            W = sparse.csr_matrix((vals_, (rows_, cols_)), shape=(len(idx), total), dtype=dtype)
            b = np.array([float(self.neurons[j].bias) for j in idx], dtype=dtype)
            names = [self.neurons[j].activation for j in idx]
            groups = [(a, np.array([k for k, x in enumerate(names) if x == a]))
                      for a in sorted(set(names))]
            plan.append((idx, W, b, groups))
        return plan

    # ------------------------------------------------------------------ dense form
    def dense_layers(self) -> list[tuple[np.ndarray, np.ndarray, str]]:
        """The network as dense layers ``(W, b, activation)``, ``W`` of shape (n_out, n_in).

        Needs the strict layered form (compile with ``layered=True``) in which every layer
        has one activation; the columns of layer 1 are the input units in order, the
        columns of layer L the neurons of layer L - 1 in file order.

        >>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -0.5),),
        ...               (Output("y", "y"),))
        >>> [(W.tolist(), b.tolist(), f) for W, b, f in net.dense_layers()]
        [([[1.0, 1.0]], [-0.5], 'step')]
        """
        if not self.is_strict():
            raise ValueError(
                "dense_layers needs the strict layered form (compile with layered=True)"
            )
        prev = list(self.inputs)
        layers = []
        for L in range(1, self.depth + 1):
            units = [n for n in self.neurons if n.layer == L]
            names = {a.activation for a in units}
            if len(names) != 1:
                raise ValueError(f"layer {L} mixes activations {sorted(names)}")
            col = {name: i for i, name in enumerate(prev)}
            W = np.zeros((len(units), len(prev)))
            b = np.zeros(len(units))
            for r, n in enumerate(units):
                for i, w in zip(n.inputs, n.weights):
                    W[r, col[i]] += w
                b[r] = n.bias
            layers.append((W, b, names.pop()))
            prev = [n.name for n in units]
        return layers

    # ------------------------------------------------------------------ files
    def save(self, path: str) -> None:
        """Write the network to ``path`` in the format its suffix names (``.json`` network
        file, ``.npz``, ``.onnx``), atomically: a temporary file, then a rename.

        The same as :func:`thresholdc.export.save_any`.

        >>> import tempfile, os
        >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
        >>> p = os.path.join(tempfile.mkdtemp(), "n.json"); net.save(p)
        >>> import thresholdc; thresholdc.load(p).neurons[0].bias
        0.5
        """
        _writer("save")(self, str(path))

    def to_json(self) -> str:
        """The network file text (DESIGN.md §4); the same as :func:`thresholdc.network.dumps`."""
        return str(_writer("dumps")(self))

    def __repr__(self) -> str:
        return (
            f"Network(inputs={len(self.inputs)}, neurons={len(self.neurons)}, "
            f"outputs={len(self.outputs)}, depth={self.depth})"
        )

    def _repr_html_(self) -> str | None:
        """Notebook display: a summary card and the drawing (registered in ``DISPLAY``)."""
        show = DISPLAY.get("network_html")
        return show(self) if show else None

    def _repr_svg_(self) -> str | None:
        """Notebook display: the drawing as SVG (None without matplotlib)."""
        show = DISPLAY.get("network_svg")
        return show(self) if show else None


# ---------------------------------------------------------------- structural checks
def _expect(cond: bool, file: str, message: str) -> None:
    if not cond:
        raise NetworkFileError(message, file=file)


def check_network(net: Network, file: str = "<network>") -> None:
    """Check the structural invariants of a network; raise NetworkFileError on the first break.

    Names unique, every neuron reads known earlier units, weights match inputs, layers are
    1 + the largest input layer, outputs read known units.
    """
    layer: dict[str, int] = {}
    for name in net.inputs:
        _expect(name not in layer, file, f"input unit {name!r} is listed twice")
        layer[name] = 0
    for n in net.neurons:
        _expect(n.name not in layer, file, f"unit name {n.name!r} is used twice")
        _expect(
            len(n.inputs) == len(n.weights),
            file,
            f"neuron {n.name!r} has {len(n.inputs)} inputs but {len(n.weights)} weights",
        )
        for i in n.inputs:
            _expect(
                i in layer,
                file,
                f"neuron {n.name!r} reads unknown unit {i!r} "
                "(units must come before their readers)",
            )
        want = 1 + max((layer[i] for i in n.inputs), default=0)
        _expect(
            n.layer == want,
            file,
            f"neuron {n.name!r} has layer {n.layer}, but its inputs put it in layer {want}",
        )
        _expect(
            all(math.isfinite(w) for w in n.weights) and math.isfinite(n.bias),
            file,
            f"neuron {n.name!r} has a weight or bias that is not finite",
        )
        layer[n.name] = n.layer
    seen = set()
    for o in net.outputs:
        _expect(o.source in layer, file, f"output {o.name!r} reads unknown unit {o.source!r}")
        _expect(o.name not in seen, file, f"output {o.name!r} is listed twice")
        seen.add(o.name)


# ------------------------------------------------------ facts about real units
def real_units(net: Any) -> dict[str, float]:
    """``{unit: scale}`` for every real unit of a network (from its ``features``).

    >>> from thresholdc.ir.network import Network
    >>> real_units(Network(("t",), (), (), features=({"name": "t", "kind": "real",
    ...     "units": ["t"], "range": None, "scale": 0.5},)))
    {'t': 0.5}
    """
    out: dict[str, float] = {}
    for f in getattr(net, "features", None) or ():
        if f.get("kind") == "real":
            scale = f.get("scale")
            for u in f.get("units", ()):
                out[u] = float(scale) if scale is not None else DEFAULT_SCALE
    return out


def real_margins(net: Any, margins: np.ndarray) -> np.ndarray:
    """``margins`` with each neuron that reads a real unit given ``min |w|·scale`` over its real
    inputs: the distance in ``z`` at which it is ``scale`` away from its threshold.

    The soft-activation pass uses it: a soft gain ``x(ε)/margin`` then is ``ln(1/ε − 1)/scale``
    for the compiled ``z = ±(x − c)``.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("t",), (Neuron("y", 1, ("t",), (1.0,), -3.0),), (Output("y", "y"),),
    ...               features=({"name": "t", "kind": "real", "units": ["t"], "range": None,
    ...                          "scale": 0.25},))
    >>> real_margins(net, np.array([0.5])).tolist()
    [0.25]
    """
    scales = real_units(net)
    out = np.array(margins, dtype=float, copy=True)
    for j, n in enumerate(net.neurons):
        found = [abs(float(w)) * scales[i] for i, w in zip(n.inputs, n.weights) if i in scales]
        if found:
            out[j] = min(found)
    return out

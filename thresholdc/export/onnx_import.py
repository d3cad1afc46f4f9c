"""Read a network back from ONNX: dense MLPs trained elsewhere and our own exports.

Supported graphs have one input (batch × input units) and one output, and are built from
``Gemm`` or ``MatMul`` + ``Add`` (as PyTorch's exporter writes ``nn.Linear``), ``Sigmoid``,
``Tanh``, ``Relu``, a step as ``Greater`` + ``Cast`` (or ``Where(…, 1, −1)``), plus ``Gather``
and ``Concat`` on the column axis, ``Identity`` and ``Flatten``; and the unit-major layout of
our sparse export: ``Transpose`` of a unit matrix, then ``Gather``/``Concat`` on axis 0 and
``MatMul(W, G)`` with biases of shape (units, 1).

Rules of the reading (a small symbolic interpreter over the nodes in graph order): every tensor
is a *constant* (an initializer or a ``Constant`` node), a *unit matrix* (its columns are known
units: input units or neurons read so far), an *affine* value ``V[:, cols] @ W.T + b`` over a
unit matrix, or a *comparison* ``affine > c``.  An activation turns an affine value into a
group of new neurons; an affine value that a unit matrix is needed for (a second ``Gemm``, the
graph output) becomes a group of ``linear`` neurons.  When the groups form a plain chain (each
reads exactly the previous group, the output is the last group) the result goes through
:func:`thresholdc.export.dense.network_from_layers`, so it gets ``like``'s names where the
shapes match; other graphs (our general export) take their names from the model's metadata.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> from thresholdc.export.onnx import to_onnx
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),), (Output("y", "y"),))
>>> back = from_onnx(to_onnx(net))
>>> back.evaluate([[1, 1], [1, 0]]).tolist()
[[1.0], [0.0]]
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from typing import Any

import numpy as np
import onnx
from onnx import numpy_helper

from ..errors import NetworkFileError, UsageError
from ..ir.network import Network, Neuron, Output
from .dense import imported_meta, network_from_layers, unique_name

__all__ = ["from_onnx", "load_onnx", "SUPPORTED_OPS"]

SUPPORTED_OPS = ("Gemm", "MatMul", "Add", "Sum", "Sigmoid", "Tanh", "Relu", "Greater", "Cast",
                 "Where", "Gather", "Concat", "Identity", "Flatten", "Constant", "Transpose")
_ACT = {"Sigmoid": "sigmoid", "Tanh": "tanh", "Relu": "relu"}


def _array(array: np.ndarray) -> np.ndarray:
    """Float arrays as float64 (exact for float32 and float16), others unchanged."""
    return array.astype(float) if array.dtype.kind == "f" else array


@dataclass
class _Units:
    """A tensor whose columns are known units (indices into the unit table); ``t``: the
    transposed, unit-major layout (its rows are the units)."""

    cols: list[int]
    t: bool = False


@dataclass
class _Affine:
    """``V[:, cols] @ W.T + b``: the pre-activation of ``W.shape[0]`` would-be neurons."""

    cols: list[int]
    W: np.ndarray
    b: np.ndarray
    t: bool = False


@dataclass
class _Compare:
    """``affine > 0`` (the threshold already folded into the bias)."""

    affine: _Affine


@dataclass
class _Group:
    """Neurons created by one activation: they read ``cols`` with ``W``, ``b``."""

    cols: list[int]
    W: np.ndarray
    b: np.ndarray
    activation: str
    first: int  # unit index of the first neuron


class _Reader:
    """The interpreter state: constants, tensor values, units and neuron groups."""

    def __init__(self, model: onnx.ModelProto, file: str | None) -> None:
        self.file = file
        graph = model.graph
        self.consts: dict[str, np.ndarray] = {
            t.name: self.tensor(t, f"initializer {t.name!r}") for t in graph.initializer
        }
        inputs = [i for i in graph.input if i.name not in self.consts]
        if len(inputs) != 1 or len(graph.output) != 1:
            raise self.fail(f"expected one input and one output, found {len(inputs)} inputs "
                            f"and {len(graph.output)} outputs")
        self.input = inputs[0].name
        self.output = graph.output[0].name
        dims = inputs[0].type.tensor_type.shape.dim
        if len(dims) != 2:
            raise self.fail(f"the input {self.input!r} must be 2-D (batch, input units); "
                            f"it has {len(dims)} dimensions")
        if not dims[1].HasField("dim_value"):
            raise self.fail(f"the input {self.input!r} has no fixed number of columns")
        self.n_inputs = int(dims[1].dim_value)
        self.values: dict[str, Any] = {self.input: _Units(list(range(self.n_inputs)))}
        self.width = self.n_inputs
        self.groups: list[_Group] = []
        self.nodes = list(graph.node)

    def tensor(self, proto: onnx.TensorProto, what: str) -> np.ndarray:
        """The array of a stored tensor, or an error when its data do not fit its shape or
        type (a damaged file)."""
        try:
            return _array(numpy_helper.to_array(proto))
        except Exception as exc:  # noqa: BLE001 - onnx raises many kinds on damaged tensors
            raise self.fail(f"{what}: its data do not match its shape or type "
                            f"({type(exc).__name__})") from None

    def fail(self, message: str) -> UsageError:
        """A UsageError about this model."""
        return UsageError(message, file=self.file)

    # ------------------------------------------------------------------ operands
    def const(self, name: str, node: onnx.NodeProto) -> np.ndarray:
        """The constant called ``name`` (an error naming ``node`` if it is not one)."""
        if name not in self.consts:
            raise self.fail(f"node {node.name or node.op_type!r} ({node.op_type}): "
                            f"{name!r} must be a constant (weights and biases)")
        return self.consts[name]

    def units(self, name: str, node: onnx.NodeProto) -> _Units:
        """The unit matrix ``name``, making linear neurons from an affine value if needed."""
        value = self.values.get(name)
        if isinstance(value, _Affine):
            value = _selection(value) or self.activate(value, "linear")
            self.values[name] = value
        if not isinstance(value, _Units):
            raise self.fail(f"node {node.name or node.op_type!r} ({node.op_type}) cannot read "
                            f"{name!r} here")
        return value

    def activate(self, value: _Affine, activation: str) -> _Units:
        """A new group of neurons computing ``activation(value)``."""
        group = _Group(value.cols, value.W, value.b, activation, self.width)
        self.groups.append(group)
        n = value.W.shape[0]
        self.width += n
        return _Units(list(range(group.first, group.first + n)), value.t)

    # ------------------------------------------------------------------ nodes
    def run(self) -> _Units:
        """Interpret every node; return the unit matrix of the graph output."""
        for node in self.nodes:
            self.step(node)
        if self.output not in self.values:
            raise self.fail(f"the output {self.output!r} is not computed from the input")
        out = self.units(self.output, self.nodes[-1] if self.nodes else onnx.NodeProto())
        if out.t:
            raise self.fail(f"the output {self.output!r} is unit-major (batch second); "
                            "transpose it back")
        return out

    def step(self, node: onnx.NodeProto) -> None:
        """Interpret one node."""
        op = node.op_type
        attrs = {a.name: onnx.helper.get_attribute_value(a) for a in node.attribute}
        if len(node.output) != 1:
            raise self.fail(f"{op} node {node.name!r} must have exactly one output, "
                            f"not {len(node.output)}")
        out = node.output[0]
        if op == "Constant":
            value = attrs.get("value")
            if value is None:
                raise self.fail(f"Constant node {node.name!r} must use the 'value' attribute")
            self.consts[out] = self.tensor(value, f"Constant node {node.name!r}")
            return
        if all(i in self.consts for i in node.input if i) and op in ("Identity", "Cast"):
            self.consts[out] = self.consts[node.input[0]]
            return
        if op not in SUPPORTED_OPS:
            raise self.fail(f"unsupported operator {op} in node {node.name!r}; "
                            f"supported: {', '.join(SUPPORTED_OPS)}")
        getattr(self, f"op_{op}")(node, attrs, out)

    def op_Gemm(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        if attrs.get("transA", 0):
            raise self.fail(f"Gemm node {node.name!r} with transA=1 is not supported")
        x = self.units(node.input[0], node)
        B = self.const(node.input[1], node)
        W = (B if attrs.get("transB", 0) else B.T) * float(attrs.get("alpha", 1.0))
        b = np.zeros(W.shape[0])
        if len(node.input) > 2 and node.input[2]:
            c = self.const(node.input[2], node).reshape(-1)
            if c.shape[0] not in (1, W.shape[0]):
                raise self.fail(f"Gemm node {node.name!r} has {c.shape[0]} biases for "
                                f"{W.shape[0]} outputs")
            b = b + float(attrs.get("beta", 1.0)) * c
        self.values[out] = self.affine(node, x, W, b)

    def op_MatMul(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        if node.input[0] in self.consts:  # W @ G on unit-major rows
            G = self.units(node.input[1], node)
            if not G.t:
                raise self.fail(f"MatMul node {node.name!r} multiplies a constant by a "
                                "batch-major tensor")
            W = self.const(node.input[0], node)
            value = self.affine(node, _Units(G.cols), W, np.zeros(W.shape[0] if W.ndim else 0))
            self.values[out] = _Affine(value.cols, value.W, value.b, True)
            return
        x = self.units(node.input[0], node)
        if x.t:
            raise self.fail(f"MatMul node {node.name!r} reads a unit-major tensor first")
        W = self.const(node.input[1], node).T
        self.values[out] = self.affine(node, x, W, np.zeros(W.shape[0]))

    def affine(self, node: onnx.NodeProto, x: _Units, W: np.ndarray, b: np.ndarray) -> _Affine:
        """Check shapes and make the affine value ``x @ W.T + b``."""
        if W.ndim != 2 or W.shape[1] != len(x.cols):
            raise self.fail(f"{node.op_type} node {node.name!r}: weights of shape "
                            f"{tuple(W.shape)} do not fit {len(x.cols)} input columns")
        b = np.broadcast_to(b, (W.shape[0],)).astype(float)
        return _Affine(x.cols, W.astype(float), b.copy())

    def op_Sum(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        parts = [self.values.get(name) for name in node.input]
        if not all(isinstance(p, _Affine) for p in parts):
            raise self.fail(f"Sum node {node.name!r} must add Gemm or MatMul results")
        total = parts[0]
        for p in parts[1:]:
            total = self.merge(node, total, p)  # type: ignore[arg-type]
        self.values[out] = total

    def merge(self, node: onnx.NodeProto, a: _Affine, b: _Affine) -> _Affine:
        """``a + b`` over the union of their columns."""
        if a.W.shape[0] != b.W.shape[0]:
            raise self.fail(f"{node.op_type} node {node.name!r} adds {a.W.shape[0]} and "
                            f"{b.W.shape[0]} units")
        cols = list(a.cols) + [c for c in b.cols if c not in set(a.cols)]
        at = {c: j for j, c in enumerate(cols)}
        W = np.zeros((a.W.shape[0], len(cols)))
        for part in (a, b):
            for j, c in enumerate(part.cols):
                W[:, at[c]] += part.W[:, j]
        if a.t != b.t:
            raise self.fail(f"{node.op_type} node {node.name!r} adds tensors of two layouts")
        return _Affine(cols, W, a.b + b.b, a.t)

    def op_Add(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        a, c = node.input[0], node.input[1]
        if isinstance(self.values.get(a), _Affine) and isinstance(self.values.get(c), _Affine):
            self.values[out] = self.merge(node, self.values[a], self.values[c])
            return
        if a in self.consts:
            a, c = c, a
        value = self.values.get(a)
        if not isinstance(value, _Affine):
            raise self.fail(f"Add node {node.name!r} must add a constant bias to a "
                            "MatMul or Gemm result")
        bias = self.const(c, node).reshape(-1)
        if bias.size not in (1, value.W.shape[0]):
            raise self.fail(f"Add node {node.name!r}: a bias of {bias.size} values for "
                            f"{value.W.shape[0]} units")
        self.values[out] = _Affine(value.cols, value.W, value.b + bias, value.t)

    def _activation(self, node: onnx.NodeProto, out: str) -> None:
        value = self.values.get(node.input[0])
        if isinstance(value, _Units):  # an activation straight on units: an identity layer
            value = _Affine(value.cols, np.eye(len(value.cols)), np.zeros(len(value.cols)),
                            value.t)
        if not isinstance(value, _Affine):
            raise self.fail(f"{node.op_type} node {node.name!r} must follow Gemm or MatMul")
        self.values[out] = self.activate(value, _ACT[node.op_type])

    def op_Sigmoid(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        self._activation(node, out)

    op_Tanh = op_Sigmoid
    op_Relu = op_Sigmoid

    def op_Greater(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        value = self.values.get(node.input[0])
        c = self.const(node.input[1], node).reshape(-1)
        if not isinstance(value, _Affine) or c.size not in (1, value.W.shape[0]):
            raise self.fail(f"Greater node {node.name!r} must compare a Gemm or MatMul "
                            "result with one constant or one per unit (a step)")
        self.values[out] = _Compare(_Affine(value.cols, value.W, value.b - c, value.t))

    def op_Cast(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        value = self.values.get(node.input[0])
        if isinstance(value, _Compare):
            self.values[out] = self.activate(value.affine, "step")
        elif isinstance(value, (_Units, _Affine)):
            self.values[out] = value
        else:
            raise self.fail(f"Cast node {node.name!r} reads an unsupported value")

    def op_Where(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        value = self.values.get(node.input[0])
        hi = self.const(node.input[1], node).reshape(-1)
        lo = self.const(node.input[2], node).reshape(-1)
        if not (isinstance(value, _Compare) and hi.tolist() == [1.0] and lo.tolist() == [-1.0]):
            raise self.fail(f"Where node {node.name!r} is supported only as a bipolar step "
                            "Where(z > 0, 1, -1)")
        self.values[out] = self.activate(value.affine, "step")

    def op_Gather(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        x = self.units(node.input[0], node)
        idx = self.const(node.input[1], node)
        axis = attrs.get("axis", 0)
        ok = axis in (0, -2) if x.t else axis in (1, -1)
        if not ok or idx.ndim != 1 or idx.dtype.kind not in "iu":
            raise self.fail(f"Gather node {node.name!r} must pick units (axis 1, or axis 0 "
                            "after a Transpose) with a 1-D list of integer indices")
        if idx.size and (idx.min() < -len(x.cols) or idx.max() >= len(x.cols)):
            raise self.fail(f"Gather node {node.name!r} has an index out of range")
        self.values[out] = _Units([x.cols[int(i)] for i in idx], x.t)

    def op_Concat(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        parts = [self.units(name, node) for name in node.input]
        t = bool(parts) and parts[0].t
        if attrs.get("axis") not in ((0, -2) if t else (1, -1)) or any(p.t != t for p in parts):
            raise self.fail(f"Concat node {node.name!r} must join units (axis 1, or axis 0 "
                            "after a Transpose)")
        cols: list[int] = []
        for p in parts:
            cols += p.cols
        self.values[out] = _Units(cols, t)

    def op_Transpose(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        if list(attrs.get("perm", [1, 0])) != [1, 0]:
            raise self.fail(f"Transpose node {node.name!r} must swap the two axes")
        x = self.units(node.input[0], node)
        self.values[out] = _Units(x.cols, not x.t)

    def op_Identity(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        self.values[out] = self.values.get(node.input[0])

    def op_Flatten(self, node: onnx.NodeProto, attrs: dict[str, Any], out: str) -> None:
        if attrs.get("axis", 1) != 1:
            raise self.fail(f"Flatten node {node.name!r} must keep the batch axis (axis 1)")
        self.values[out] = self.values.get(node.input[0])


def _selection(value: _Affine) -> _Units | None:
    """The units an affine value merely selects (rows one-hot with weight 1, bias 0), if so."""
    if np.any(value.b != 0) or value.W.size == 0:
        return None
    if not (np.all((value.W == 0) | (value.W == 1)) and np.all(value.W.sum(axis=1) == 1)):
        return None
    return _Units([value.cols[int(j)] for j in np.argmax(value.W, axis=1)], value.t)


def _metadata(model: onnx.ModelProto) -> dict[str, Any]:
    """The model's ``metadata_props``, JSON-decoded where they are JSON."""
    meta: dict[str, Any] = {}
    for prop in model.metadata_props:
        try:
            meta[prop.key] = json.loads(prop.value)
        except (ValueError, RecursionError):  # not JSON, or bytes that are not even UTF-8
            meta[prop.key] = prop.value
    return meta


def _is_chain(reader: _Reader, out: _Units) -> bool:
    """True when every group reads exactly the previous group and the output is the last."""
    prev = list(range(reader.n_inputs))
    for g in reader.groups:
        if g.cols != prev:
            return False
        prev = list(range(g.first, g.first + g.W.shape[0]))
    return bool(reader.groups) and out.cols == prev


def from_onnx(model: onnx.ModelProto, like: Network | None = None, *,
              file: str | None = None) -> Network:
    """Rebuild a :class:`Network` from an ONNX model (see the module docstring).

    Parameters
    ----------
    model : onnx.ModelProto
        A dense MLP (``Gemm`` or ``MatMul`` + ``Add`` with ``Sigmoid``, ``Tanh``, ``Relu`` or
        a step), or any model written by :func:`thresholdc.export.to_onnx`.
    like : Network, optional
        The compiled network the model came from: names, features and encoding.  Needed for
        models without thresholdc metadata.
    file : str, optional
        The model's file name, for error messages.

    Returns
    -------
    Network

    Raises
    ------
    UsageError
        An operator outside the supported set, a shape that does not fit ``like`` (naming
        the layer), or no names to give the units.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> from thresholdc.export.onnx import to_onnx
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> [n.name for n in from_onnx(to_onnx(net), like=net).neurons]
    ['n']
    """
    reader = _Reader(model, file)
    out = reader.run()
    meta = _metadata(model)
    units = meta.get("neurons") if isinstance(meta.get("neurons"), list) else None
    if units is not None and not all(
            isinstance(u, dict) and isinstance(u.get("name"), str) for u in units):
        raise NetworkFileError("the thresholdc metadata of this ONNX model lists neurons "
                               "without a name", file=file)
    inputs, outputs = meta.get("inputs"), meta.get("outputs")
    if like is None and inputs is None:
        raise UsageError("this ONNX model has no thresholdc metadata; give the "
                         "network it came from to name its units (--like NET.json)", file=file)
    if like is not None and len(like.inputs) != reader.n_inputs:
        raise UsageError(f"layer 1 reads {reader.n_inputs} columns but there are "
                         f"{len(like.inputs)} input units", file=file)
    if _is_chain(reader, out):
        layers = [(g.W, g.b, g.activation) for g in reader.groups]
        names = roles = origins = None
        sizes = [g.W.shape[0] for g in reader.groups]
        if units is not None and len(units) == sum(sizes):
            names, roles, origins, at = [], [], [], 0
            for n in sizes:
                part = units[at:at + n]
                names.append([u["name"] for u in part])
                roles.append([u.get("role", "gate") for u in part])
                origins.append([u.get("origin") for u in part])
                at += n
        net = network_from_layers(layers, like=like, inputs=inputs, outputs=outputs,
                                  names=names, roles=roles, origins=origins,
                                  encoding=meta.get("encoding"), file=file)
    else:
        net = _general(reader, out, like, inputs, outputs, units, meta, file)
    if like is None and isinstance(meta.get("features"), list):
        net = Network(net.inputs, net.neurons, net.outputs, net.meta, net.encoding,
                      tuple(meta["features"]))
    return net


def _general(reader: _Reader, out: _Units, like: Network | None, inputs: Any, outputs: Any,
             units: Any, meta: dict[str, Any], file: str | None) -> Network:
    """A network of any shape from the interpreted groups (zero weights dropped)."""
    if like is not None:
        for label, given, have in (("inputs", inputs, like.inputs),
                                   ("outputs", outputs, like.output_names)):
            if given is not None and list(given) != list(have):
                raise UsageError(f"its {label} {list(given)} differ from those of the "
                                 f"network it is compared with {list(have)}", file=file)
        inputs, outputs = list(like.inputs), list(like.output_names)
    inputs, outputs = list(inputs), list(outputs or [])
    if len(out.cols) != len(outputs):
        raise UsageError(f"the model has {len(out.cols)} outputs but there are "
                         f"{len(outputs)} output names", file=file)
    if len(inputs) != reader.n_inputs:
        raise UsageError(f"layer 1 reads {reader.n_inputs} columns but there are "
                         f"{len(inputs)} input units", file=file)
    total = reader.width - reader.n_inputs
    named = units if units is not None and len(units) == total else None
    used = set(inputs)
    table = list(inputs)
    layer = {name: 0 for name in inputs}
    neurons = []
    for g in reader.groups:
        for r in range(g.W.shape[0]):
            k = g.first + r - reader.n_inputs
            info = named[k] if named is not None else {"name": f"N~{k + 1}", "role": "extra"}
            name = unique_name(str(info["name"]), used)
            keep = [(table[c], float(w)) for c, w in zip(g.cols, g.W[r], strict=True) if w != 0.0]
            lay = 1 + max((layer[i] for i, _ in keep), default=0)
            neurons.append(Neuron(name, lay, tuple(i for i, _ in keep),
                                  tuple(w for _, w in keep), float(g.b[r]), g.activation,
                                  info.get("role", "gate"), info.get("origin")))
            table.append(name)
            layer[name] = lay
    outs = tuple(Output(o, table[c]) for o, c in zip(outputs, out.cols, strict=True))
    encoding = like.encoding if like is not None else str(meta.get("encoding", "binary"))
    features = like.features if like is not None else None
    net_meta = imported_meta(like) if like is not None else {"imported": {"dense": False}}
    return Network(tuple(inputs), tuple(neurons), outs, net_meta, encoding, features)


def load_onnx(path: str, like: Network | None = None) -> Network:
    """Read a network from the ONNX file at ``path`` (see :func:`from_onnx`).

    >>> import os, tempfile
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> from thresholdc.export.onnx import save_onnx
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> path = os.path.join(tempfile.mkdtemp(), "n.onnx"); save_onnx(net, path)
    >>> load_onnx(path).evaluate([[0], [1]]).tolist()
    [[1.0], [0.0]]
    """
    try:
        model = onnx.load(path)
    except FileNotFoundError:
        raise NetworkFileError("no such file", file=path) from None
    except IsADirectoryError:
        raise NetworkFileError("is a folder, not a file", file=path) from None
    except Exception as exc:  # protobuf raises its own DecodeError types
        raise NetworkFileError(f"not a readable ONNX model ({type(exc).__name__})",
                               file=path) from None
    return from_onnx(model, like, file=path)

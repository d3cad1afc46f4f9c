"""ONNX export (opset 17): one float32 input ``inputs`` of shape (batch, input units) in the
network's input order, one float32 output ``outputs`` of shape (batch, outputs) in output order.

Two graph shapes, both exact:

- **dense** (a strict layered network whose layers each have one activation): the plain MLP
  chain ``Gemm → activation → Gemm → …`` of :mod:`thresholdc.export.dense`, whose last layer
  rows are the outputs in order.  Training frameworks and ONNX converters read it as an MLP.
- **general** (any other network, e.g. with direct connections across layers).  Rules: the
  neurons of one layer are grouped by activation (activations in order of first appearance,
  neurons in file order), and each group is one tensor (batch × its neurons).  A group's
  pre-activation is a sum of one ``Gemm`` per earlier tensor it reads (the input or an earlier
  group), with the weights on that tensor's columns (zero where a neuron does not read a
  column); the first ``Gemm`` adds the biases, a ``Sum`` joins several.  The output is the
  same kind of sum with 0/1 selection matrices, which is exact.  (No ``Gather`` or ``Concat``:
  onnxruntime copies columns slowly.)

- **sparse** (networks of at least ``SPARSE_FROM`` neurons, the size of netlists, whose dense
  matrices would be mostly zeros).  Unit-major: the input is transposed once to (input units ×
  batch); each group (a layer's neurons of one activation, as above) ``Gather``s along axis 0
  only the rows it reads from each earlier tensor (the whole tensor when it reads all of it, in
  order), joins them with ``Concat`` (axis 0), and multiplies a dense block of just those
  columns (``MatMul(W, G)``, W of shape group × rows read); a step compares with the negated
  biases (``Greater(W·G, −b)``), other activations add the biases (shape group × 1) first.  The
  outputs are gathered the same way, put in output order by one more ``Gather`` and transposed
  back to (batch × outputs).  No relays, no zero blocks: the weights stored are the non-zero
  ones plus the columns a group reads but one of its neurons does not.

A step is ``Greater(z, 0)`` then ``Cast`` to float (in the bipolar encoding ``Where(…, 1, −1)``);
sigmoid, tanh and relu are the ONNX operators of those names; linear is the ``Gemm`` alone.
The model's ``metadata_props`` hold, as JSON text: ``inputs``, ``outputs`` (names),
``output_sources``, ``output_origins`` (the rule definition each output carries), ``encoding``,
``features`` (when the network has typed inputs), ``neurons`` (name, role, origin of every unit
the graph creates, in creation order) and ``form`` (``dense``, ``general`` or ``sparse``).
There is no timestamp and node names are fixed, so the same network gives the same bytes.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),), (Output("y", "y"),))
>>> model = to_onnx(net)
>>> [n.op_type for n in model.graph.node]
['Gemm', 'Greater', 'Cast']
"""

from __future__ import annotations

import json
from typing import Any

import numpy as np
import onnx
from onnx import TensorProto, helper, numpy_helper

from ..errors import UsageError
from ..ir.network import Network
from ..network import atomic_write
from ..version import __version__
from .dense import dense_form
from .sparse import SPARSE_FROM, sparse_form, sparse_ok

__all__ = ["OPSET", "IR_VERSION", "INPUT", "OUTPUT", "FORMS", "SPARSE_FROM", "choose_form",
           "to_onnx", "onnx_bytes", "save_onnx"]

OPSET = 17
IR_VERSION = 8  # the IR version that goes with opset 17
INPUT = "inputs"
OUTPUT = "outputs"
_OPS = {"sigmoid": "Sigmoid", "tanh": "Tanh", "relu": "Relu"}
FORMS = ("auto", "dense", "general", "sparse")


def _version() -> str:
    """The package version, for ``producer_version`` (fixed text, no build details)."""
    return __version__


class _Graph:
    """Nodes and initializers under construction, with fixed, numbered names."""

    def __init__(self, bipolar: bool) -> None:
        self.nodes: list[onnx.NodeProto] = []
        self.inits: list[onnx.TensorProto] = []
        self.bipolar = bipolar
        self._consts: dict[str, str] = {}

    def const(self, name: str, value: Any, dtype: Any = np.float32) -> str:
        """Add an initializer called ``name`` and return its name."""
        self.inits.append(numpy_helper.from_array(np.asarray(value, dtype=dtype), name))
        return name

    def scalar(self, name: str, value: float) -> str:
        """A shared float32 scalar initializer."""
        if name not in self._consts:
            self._consts[name] = self.const(name, value)
        return self._consts[name]

    def node(self, op: str, inputs: list[str], output: str, **attrs: Any) -> str:
        """Add one node named after its output; return the output name."""
        self.nodes.append(helper.make_node(op, inputs, [output], name=f"{output}_{op}", **attrs))
        return output

    def affine(self, tag: str, terms: list[tuple[str, np.ndarray]], b: np.ndarray,
               activation: str, out: str | None = None) -> str:
        """``activation(Σ x_k @ W_k.T + b)``: one Gemm per term (the first adds the bias),
        a Sum when there are several, then the activation's nodes."""
        final = out or f"{tag}_a"
        parts = []
        for k, (x, W) in enumerate(terms):
            name = f"{tag}_W" if len(terms) == 1 else f"{tag}_W{k + 1}"
            ins = [x, self.const(name, W)] + ([self.const(f"{tag}_b", b)] if k == 0 else [])
            last = len(terms) == 1 and activation == "linear"
            target = final if last else f"{tag}_z" if len(terms) == 1 else f"{tag}_t{k + 1}"
            parts.append(self.node("Gemm", ins, target, transB=1))
        if len(terms) == 1:
            z = parts[0]
        else:
            z = self.node("Sum", parts, final if activation == "linear" else f"{tag}_z")
        if activation == "linear":
            return z
        if activation in _OPS:
            return self.node(_OPS[activation], [z], final)
        assert activation == "step", activation
        g = self.node("Greater", [z, self.scalar("zero", 0.0)], f"{tag}_gt")
        if self.bipolar:
            return self.node("Where", [g, self.scalar("one", 1.0), self.scalar("minus_one", -1.0)],
                             final)
        return self.node("Cast", [g], final, to=TensorProto.FLOAT)


def _dense_ok(net: Network) -> bool:
    """True when ``net`` is strict layered with one activation per layer (and a neuron)."""
    if not net.neurons or not net.is_strict():
        return False
    return all(len({n.activation for n in net.neurons if n.layer == L}) == 1
               for L in range(1, net.depth + 1))


def _build_dense(net: Network, g: _Graph) -> list[dict[str, Any]]:
    """The MLP chain; returns the created units' metadata."""
    form = dense_form(net)
    x = INPUT
    units = []
    for k, (W, b, f) in enumerate(form.layers, start=1):
        last = k == len(form.layers)
        x = g.affine(f"L{k}", [(x, W)], b, f, out=OUTPUT if last else None)
        units += [{"name": n, "role": r, "origin": o}
                  for n, r, o in zip(form.names[k - 1], form.roles[k - 1],
                                     form.origins[k - 1], strict=True)]
    return units


def _build_general(net: Network, g: _Graph) -> list[dict[str, Any]]:
    """The graph of any network (see the module docstring); returns the units' metadata."""
    tensors: list[tuple[str, int]] = [(INPUT, len(net.inputs))]
    where = {name: (0, j) for j, name in enumerate(net.inputs)}  # unit -> (tensor, column)
    units = []
    for L in range(1, net.depth + 1):
        layer = [n for n in net.neurons if n.layer == L]
        for a_index, f in enumerate(dict.fromkeys(n.activation for n in layer)):
            group = [n for n in layer if n.activation == f]
            blocks: dict[int, np.ndarray] = {}
            for r, n in enumerate(group):
                for i, w in zip(n.inputs, n.weights, strict=True):
                    t, j = where[i]
                    if t not in blocks:
                        blocks[t] = np.zeros((len(group), tensors[t][1]))
                    blocks[t][r, j] += w
            if not blocks:  # constant neurons: zero weights on the inputs give the batch size
                blocks[0] = np.zeros((len(group), tensors[0][1]))
            terms = [(tensors[t][0], blocks[t]) for t in sorted(blocks)]
            out = g.affine(f"L{L}g{a_index + 1}", terms, np.array([n.bias for n in group]), f)
            for r, n in enumerate(group):
                where[n.name] = (len(tensors), r)
                units.append({"name": n.name, "role": n.role, "origin": n.origin})
            tensors.append((out, len(group)))
    # The outputs: 0/1 selection matrices on the tensors holding their sources (exact).
    pick: dict[int, np.ndarray] = {}
    for k, o in enumerate(net.outputs):
        t, j = where[o.source]
        if t not in pick:
            pick[t] = np.zeros((len(net.outputs), tensors[t][1]))
        pick[t][k, j] = 1.0
    if not pick:
        pick[0] = np.zeros((0, tensors[0][1]))
    g.affine("out", [(tensors[t][0], pick[t]) for t in sorted(pick)],
             np.zeros(len(net.outputs)), "linear", out=OUTPUT)
    return units


def _build_sparse(net: Network, g: _Graph) -> list[dict[str, Any]]:
    """The unit-major graph with per-group gathers (see the module docstring)."""
    form = sparse_form(net)
    tensors = [g.node("Transpose", [INPUT], "inputs_T", perm=[1, 0])]
    units = []

    def gather(tag: str, reads: list[tuple[int, list[int] | None]]) -> str:
        parts = [tensors[t] if idx is None else
                 g.node("Gather", [tensors[t], g.const(f"{tag}_i{t}", idx, np.int64)],
                        f"{tag}_g{t}", axis=0)
                 for t, idx in reads]
        return parts[0] if len(parts) == 1 else g.node("Concat", parts, f"{tag}_G", axis=0)

    layer_of = [grp.neurons[0].layer for grp in form.groups]
    for k, grp in enumerate(form.groups):
        L, f = layer_of[k], grp.activation
        tag = f"L{L}g{layer_of[:k].count(L) + 1}"
        G = gather(tag, grp.reads)
        z = g.node("MatMul", [g.const(f"{tag}_W", grp.W), G], f"{tag}_m")
        if f == "step":
            gt = g.node("Greater", [z, g.const(f"{tag}_t", -grp.b)], f"{tag}_gt")
            if g.bipolar:
                out = g.node("Where", [gt, g.scalar("one", 1.0),
                                       g.scalar("minus_one", -1.0)], f"{tag}_a")
            else:
                out = g.node("Cast", [gt], f"{tag}_a", to=TensorProto.FLOAT)
        else:
            zb = g.node("Add", [z, g.const(f"{tag}_b", grp.b)], f"{tag}_z")
            out = zb if f == "linear" else g.node(_OPS[f], [zb], f"{tag}_a")
        units += [{"name": n.name, "role": n.role, "origin": n.origin} for n in grp.neurons]
        tensors.append(out)
    G = gather("out", form.out_reads)
    if form.order != list(range(form.out_rows)):
        G = g.node("Gather", [G, g.const("out_order", form.order, np.int64)], "out_sel",
                   axis=0)
    g.node("Transpose", [G], OUTPUT, perm=[1, 0])
    return units


def choose_form(net: Network, form: str = "auto") -> str:
    """The graph shape :func:`to_onnx` writes for ``form`` (see the module docstring).

    ``auto``: ``sparse`` from ``SPARSE_FROM`` neurons (with at least one input and one output),
    else ``dense`` for a strict layered network with one activation per layer, else
    ``general``.  ``dense`` is refused (UsageError) for a network that is not strict layered.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> choose_form(Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),)))
    'dense'
    """
    if form not in FORMS:
        raise UsageError(f"the ONNX form must be one of {', '.join(FORMS)}. Got {form!r} "
                         "instead.")
    if form == "auto":
        if sparse_ok(net) and len(net.neurons) >= SPARSE_FROM:
            return "sparse"
        return "dense" if _dense_ok(net) else "general"
    if form == "dense" and not _dense_ok(net):
        raise UsageError("the dense ONNX form needs a strict layered network with one "
                         "activation per layer (compile with --layered)")
    if form == "sparse" and not sparse_ok(net):
        return "general"  # nothing to gather from or into
    return form


def _origins(net: Network) -> list[str | None]:
    """The rule definition each output carries: its neuron's origin, or the input's name."""
    origin = {n.name: n.origin for n in net.neurons}
    return [origin.get(o.source, o.source) for o in net.outputs]


def to_onnx(net: Network, *, form: str = "auto") -> onnx.ModelProto:
    """The network as an ONNX model (opset 17), exact on every input row.

    Parameters
    ----------
    net : Network
        Any network (small strict layered networks become a plain MLP chain).
    form : str
        ``auto`` (default, see :func:`choose_form`), ``dense``, ``general`` or ``sparse``.

    Returns
    -------
    onnx.ModelProto
        Input ``inputs`` (batch × input units), output ``outputs`` (batch × outputs), both
        float32, batch dimension ``batch``; names and origins in ``metadata_props``.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> meta = {p.key: p.value for p in to_onnx(net).metadata_props}
    >>> meta["inputs"], meta["outputs"]
    ('["a"]', '["n"]')
    """
    g = _Graph(net.encoding == "bipolar")
    form = choose_form(net, form)
    build = {"dense": _build_dense, "general": _build_general, "sparse": _build_sparse}[form]
    units = build(net, g)
    graph = helper.make_graph(
        g.nodes,
        "thresholdc",
        [helper.make_tensor_value_info(INPUT, TensorProto.FLOAT, ["batch", len(net.inputs)])],
        [helper.make_tensor_value_info(OUTPUT, TensorProto.FLOAT, ["batch", len(net.outputs)])],
        initializer=g.inits,
        doc_string=f"thresholdc network: {len(net.inputs)} input units, "
                   f"{len(net.neurons)} neurons, {len(net.outputs)} outputs",
    )
    model = helper.make_model(
        graph,
        opset_imports=[helper.make_opsetid("", OPSET)],
        producer_name="thresholdc",
        producer_version=_version(),
        ir_version=IR_VERSION,
    )
    meta: list[tuple[str, Any]] = [
        ("inputs", list(net.inputs)),
        ("outputs", list(net.output_names)),
        ("output_sources", [o.source for o in net.outputs]),
        ("output_origins", _origins(net)),
        ("encoding", net.encoding),
    ]
    if net.features is not None:
        meta.append(("features", list(net.features)))
    meta += [("neurons", units), ("form", form)]
    helper.set_model_props(model, {k: json.dumps(v, ensure_ascii=False, sort_keys=True)
                                   for k, v in meta})
    return model


def onnx_bytes(net: Network, *, form: str = "auto") -> bytes:
    """The serialized ONNX model of ``net`` (deterministic bytes)."""
    return to_onnx(net, form=form).SerializeToString(deterministic=True)


def save_onnx(net: Network, path: str) -> None:
    """Write ``net`` as an ONNX file at ``path`` (atomically: temporary file, then rename).

    >>> import os, tempfile
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> path = os.path.join(tempfile.mkdtemp(), "n.onnx"); save_onnx(net, path)
    >>> onnx.load(path).opset_import[0].version
    17
    """
    atomic_write(path, onnx_bytes(net))

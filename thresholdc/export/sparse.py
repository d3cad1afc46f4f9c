"""The sparse, unit-major form shared by the sparse ONNX export and the torch ``SparseNet``.

Rules of the form: tensor 0 is the input units; each *group* (a layer's neurons of one
activation, layers in order, activations in order of first appearance) becomes one more tensor.
A group reads, from each earlier tensor, only the rows some of its neurons read (sorted; all
rows in order is written as ``None``, nothing to gather), joins them in tensor order, and
multiplies a dense block ``W`` (group × rows read) of just those columns; ``b`` holds its
biases (group × 1).  A group of constant neurons reads input row 0 with zero weights, so its
tensor still has the batch size.  The outputs gather the rows of their sources the same way,
then ``order`` puts them in output order.  No relays and no zero blocks.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("y", 1, ("b",), (2,), -1.5),), (Output("y", "y"),))
>>> form = sparse_form(net)
>>> form.groups[0].reads, form.groups[0].W.tolist(), form.out_reads, form.order
([(0, [1])], [[2.0]], [(1, None)], [0])
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..ir.network import Network, Neuron

__all__ = ["SPARSE_FROM", "SparseGroup", "SparseForm", "sparse_form", "sparse_ok"]

#: From this many neurons the ``auto`` form of the ONNX and torch exports is the sparse one
#: (netlist-sized networks; on the 16x16 multiplier, 525 neurons, the sparse ONNX graph runs
#: ~5x faster in onnxruntime than the dense chain; benchmarks/export_runtime.py).
SPARSE_FROM = 64

#: Per earlier tensor, the rows read (``None``: all of them, in order).
Reads = list[tuple[int, list[int] | None]]


@dataclass(frozen=True)
class SparseGroup:
    """One group: its activation, neurons, the rows it reads, its weight block and biases."""

    activation: str
    neurons: tuple[Neuron, ...]
    reads: Reads
    W: np.ndarray
    b: np.ndarray


@dataclass(frozen=True)
class SparseForm:
    """The groups in order, then the rows the outputs read (``out_rows`` of them, joined) and
    the positions in those rows that give the outputs in output order."""

    groups: list[SparseGroup]
    out_reads: Reads
    out_rows: int
    order: list[int]


def sparse_ok(net: Network) -> bool:
    """True when the sparse form applies (something to gather from and into)."""
    return bool(net.inputs) and bool(net.outputs)


def _reads(wanted: dict[int, set[int]], sizes: list[int]
           ) -> tuple[Reads, dict[tuple[int, int], int]]:
    """The sorted rows per tensor and each (tensor, row)'s position in the joined rows."""
    reads: Reads = []
    pos: dict[tuple[int, int], int] = {}
    for t in sorted(wanted):
        idx = sorted(wanted[t])
        for j in idx:
            pos[(t, j)] = len(pos)
        reads.append((t, None if idx == list(range(sizes[t])) else idx))
    return reads, pos


def sparse_form(net: Network) -> SparseForm:
    """The sparse form of ``net`` (see the module docstring); ``net`` needs inputs and
    outputs (:func:`sparse_ok`)."""
    where = {name: (0, j) for j, name in enumerate(net.inputs)}  # unit -> (tensor, row)
    sizes = [len(net.inputs)]
    groups: list[SparseGroup] = []
    for L in range(1, net.depth + 1):
        layer = [n for n in net.neurons if n.layer == L]
        for f in dict.fromkeys(n.activation for n in layer):
            members = tuple(n for n in layer if n.activation == f)
            wanted: dict[int, set[int]] = {}
            for n in members:
                for i in n.inputs:
                    t, j = where[i]
                    wanted.setdefault(t, set()).add(j)
            if not wanted:  # constant neurons: a zero weight on input row 0 gives the batch
                wanted[0] = {0}
            reads, pos = _reads(wanted, sizes)
            W = np.zeros((len(members), len(pos)))
            for r, n in enumerate(members):
                for i, w in zip(n.inputs, n.weights, strict=True):
                    W[r, pos[where[i]]] += w
            b = np.array([[float(n.bias)] for n in members])
            groups.append(SparseGroup(f, members, reads, W, b))
            for r, n in enumerate(members):
                where[n.name] = (len(sizes), r)
            sizes.append(len(members))
    wanted = {}
    for o in net.outputs:
        t, j = where[o.source]
        wanted.setdefault(t, set()).add(j)
    out_reads, pos = _reads(wanted, sizes)
    return SparseForm(groups, out_reads, len(pos), [pos[where[o.source]] for o in net.outputs])

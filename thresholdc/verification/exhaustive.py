"""Exhaustive verification: every assignment of the input units, in chunks.

The network (``Network.decide``) and the source's reference evaluator (which shares no code
with the network path) are run on the same rows, ``chunk`` rows at a time, so the whole truth
table is never in memory.  Row ``k`` sets source input ``i`` to ``(k >> i) & 1``.

Per output the report counts disagreements exactly, keeps up to five counterexamples, and the
smallest margin (its smallest |pre-activation|, whatever the activation; 0.5 for an output read
straight from an input unit; see :mod:`thresholdc.verification.report`), and for a soft output
the smallest |value − decision threshold| as ``min_value_distance``.
It also checks the compiler's guarantee that every step neuron has |z| ≥ 0.5 and adds a note
naming the neurons that break it (the verdict is still on what the network computes).

A binary step network with half-integer parameters is run bit-sliced
(:class:`thresholdc.ir.bitslice.BitPlan`, 64 rows per machine word): only the pre-activations
that a margin needs are computed as numbers (the output neurons, and the neurons whose
parameters do not already guarantee |z| ≥ 0.5), from the unpacked values of the units they
read.  Chunks are sized so that the bit planes and those values stay within
``bitslice.MEMORY_BUDGET`` whatever the number of inputs.  Other networks take the float path
(:meth:`Network.run_units`).

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> text = "input a, b\\ny = a or b\\n"
>>> verify_exhaustive(compile_rules(text), source_from_text(text)).result
'equal'
"""

from __future__ import annotations

import time
from typing import Any

import numpy as np

from .. import progress
from ..errors import VerificationUndecided
from ..ir.bitslice import MEMORY_BUDGET, BitPlan, chunk_rows, unpack
from ..ir.network import Network
from ..lazy import lazy_module
from .domain import check_names, soft_outputs, value_distances
from .report import MAX_COUNTEREXAMPLES, Counterexample, OutputReport, Report
from .typed import verify_typed

sparse = lazy_module("scipy.sparse")

__all__ = ["verify_exhaustive", "assignments", "DEFAULT_MAX_INPUTS"]

DEFAULT_MAX_INPUTS = 24
_CHUNK = 1 << 16


def assignments(n: int, start: int, stop: int) -> np.ndarray:
    """Rows ``start..stop-1`` of the truth table of ``n`` inputs, as uint8 (rows, n)."""
    k = np.arange(start, stop, dtype=np.int64)
    return ((k[:, None] >> np.arange(n, dtype=np.int64)) & 1).astype(np.uint8)


def _output_margins(net: Network, X: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Output values and per-output margins ``(rows, outputs)``, and the smallest |z| of every
    step neuron over these rows."""
    Z, V = net.run_units(X)
    base = len(net.inputs)
    index = net.unit_index()
    rows = [index[o.source] for o in net.outputs]
    values = V[rows].T.astype(float)
    margins = np.empty_like(values)
    for k, r in enumerate(rows):
        if r < base:
            margins[:, k] = 0.5
        else:
            margins[:, k] = np.abs(Z[r - base])
    step = [j for j, n in enumerate(net.neurons) if n.activation == "step"]
    zmin = np.abs(Z[step]).min(axis=1).astype(float) if step and len(X) else np.zeros(0)
    return values, margins, zmin


def _guaranteed(weights: tuple[float, ...], bias: float) -> bool:
    """True when integer weights and an odd multiple of 1/2 as bias force |z| ≥ 0.5."""
    return all(float(w).is_integer() for w in weights) and (2 * float(bias)) % 2 == 1


class _BitMargins:
    """The bit-sliced counterpart of :func:`_output_margins` for one network."""

    def __init__(self, net: Network, plan: BitPlan) -> None:
        self.net = net
        self.plan = plan
        base = len(net.inputs)
        index = net.unit_index()
        self.out_rows = np.array([index[o.source] for o in net.outputs], dtype=np.int64)
        self.step = [j for j, n in enumerate(net.neurons) if n.activation == "step"]
        sources = {int(r) - base for r in self.out_rows if r >= base}
        thin = {j for j in self.step if not _guaranteed(net.neurons[j].weights,
                                                        net.neurons[j].bias)}
        self.checked = sorted(sources | thin)  # neurons whose z is computed as numbers
        self.thin = sorted(thin)
        read = sorted({index[i] for j in self.checked for i in net.neurons[j].inputs})
        self.read = np.array(read, dtype=np.int64)
        col = {u: c for c, u in enumerate(read)}
        rows_, cols_, vals_ = [], [], []
        for r, j in enumerate(self.checked):
            for i, w in zip(net.neurons[j].inputs, net.neurons[j].weights, strict=True):
                rows_.append(r)
                cols_.append(col[index[i]])
                vals_.append(float(w))
        self.W = sparse.csr_matrix((vals_, (rows_, cols_)),
                                   shape=(len(self.checked), len(read)), dtype=np.float64)
        self.b = np.array([float(net.neurons[j].bias) for j in self.checked])
        self.at = {j: r for r, j in enumerate(self.checked)}

    def rows_per_chunk(self, budget: int = MEMORY_BUDGET) -> int:
        """Rows whose bit planes, unpacked reads and pre-activations fit ``budget`` bytes."""
        per_row = (2 * self.plan.n_units / 8 + 9 * len(self.read) + 16 * len(self.checked)
                   + 26 * len(self.net.outputs) + 10 * len(self.net.inputs))
        return chunk_rows(1, per_row, budget)

    def __call__(self, X: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        rows = X.shape[0]
        planes = self.plan.units(X)
        values = unpack(planes[self.out_rows], rows).T.astype(float)
        U = unpack(planes[self.read], rows).astype(np.float64)
        Z = np.asarray(self.W @ U) + self.b[:, None]
        del planes, U
        base = len(self.net.inputs)
        margins = np.empty_like(values)
        for k, r in enumerate(self.out_rows):
            margins[:, k] = 0.5 if r < base else np.abs(Z[self.at[int(r) - base]])
        zmin = np.full(len(self.step), 0.5)
        if rows and self.thin:
            pos = {j: p for p, j in enumerate(self.step)}
            for j in self.thin:
                zmin[pos[j]] = float(np.abs(Z[self.at[j]]).min())
        return values, margins, zmin


def verify_exhaustive(
    net: Network,
    source: Any,
    *,
    max_inputs: int = DEFAULT_MAX_INPUTS,
    chunk: int = _CHUNK,
) -> Report:
    """Compare ``net`` with ``source`` on every assignment of the input units.

    Raises VerificationUndecided when there are more than ``max_inputs`` inputs, UsageError
    when the names differ.  Shows a progress bar on a terminal when bars are enabled
    (:mod:`thresholdc.progress`) and there are more than one chunk of rows.
    """
    check_names(net, source)
    program = getattr(source, "program", None)
    if program is not None and program.is_typed():  # valid one-hot patterns, real cells
        return verify_typed(net, source, max_inputs=max_inputs)
    n = len(source.inputs)
    if n > max_inputs:
        raise VerificationUndecided(
            f"{n} inputs are more than the exhaustive bound of {max_inputs} "
            f"(2^{n} assignments); raise --max-inputs or use another method",
            file=getattr(source, "file", None),
        )
    t0 = time.perf_counter()
    perm = [list(source.inputs).index(u) for u in net.inputs]
    out_index = [list(source.outputs).index(o.name) for o in net.outputs]
    total = 1 << n
    thr = net.decision_threshold
    bad = np.zeros(len(net.outputs), dtype=np.int64)
    min_margin = np.full(len(net.outputs), np.inf)
    min_dist = np.full(len(net.outputs), np.inf)
    soft = soft_outputs(net)
    zmin = None
    examples: list[list[Counterexample]] = [[] for _ in net.outputs]
    plan = net.bit_plan
    bits = _BitMargins(net, plan) if plan is not None else None
    if bits is not None:
        chunk = min(chunk, bits.rows_per_chunk())
    shown = progress.bar(total, "verifying", unit="rows") if total > chunk else progress.bar(0, "")
    for start in range(0, total, chunk):
        stop = min(total, start + chunk)
        Xs = assignments(n, start, stop)
        expected = np.asarray(source.evaluate(Xs), dtype=bool)[:, out_index]
        if bits is not None:
            values, margins, zm = bits(Xs[:, perm])
        else:
            Xn = Xs[:, perm].astype(float)
            if net.encoding == "bipolar":
                Xn = 2.0 * Xn - 1.0
            values, margins, zm = _output_margins(net, Xn)
        actual = values > thr
        diff = actual != expected
        bad += diff.sum(axis=0)
        min_margin = np.minimum(min_margin, margins.min(axis=0, initial=np.inf))
        min_dist = np.minimum(min_dist, value_distances(values, soft, thr))
        zmin = zm if zmin is None else np.minimum(zmin, zm)
        for k in np.nonzero(diff.any(axis=0))[0]:
            room = MAX_COUNTEREXAMPLES - len(examples[k])
            for r in np.nonzero(diff[:, k])[0][: max(room, 0)]:
                examples[k].append(
                    Counterexample(
                        {u: int(Xs[r, i]) for i, u in enumerate(source.inputs)},
                        net.outputs[k].name,
                        bool(expected[r, k]),
                        float(values[r, k]),
                        float(margins[r, k]),
                    )
                )
        shown.update(stop - start)
    shown.close()
    outputs = [
        OutputReport.counted(
            o.name,
            int(bad[k]),
            examples[k],
            None if not np.isfinite(min_margin[k]) else float(min_margin[k]),
            None if not np.isfinite(min_dist[k]) else float(min_dist[k]),
        )
        for k, o in enumerate(net.outputs)
    ]
    equal = bool((bad == 0).all())
    report = Report(
        "equal" if equal else "different",
        "exhaustive",
        total,
        outputs,
        proofs=[f"exhaustive: all {total} assignments of {n} inputs checked"] if equal else [],
        seconds=time.perf_counter() - t0,
    )
    if zmin is not None and len(zmin):
        step = [nr for nr in net.neurons if nr.activation == "step"]
        thin = [step[j].name for j in np.nonzero(zmin < 0.5 - 1e-9)[0]]
        if thin:
            report.notes.append(
                f"{len(thin)} step neuron(s) have |z| < 0.5 on some input: {', '.join(thin[:5])}"
            )
    return report

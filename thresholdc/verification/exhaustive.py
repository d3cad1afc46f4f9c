"""Exhaustive verification: every assignment of the input units, in chunks.

The network (``Network.decide``) and the source's reference evaluator (which shares no code
with the network path) are run on the same rows, ``chunk`` rows at a time, so the whole truth
table is never in memory.  Row ``k`` sets source input ``i`` to ``(k >> i) & 1``.

Per output the report counts disagreements exactly, keeps up to five counterexamples, and the
smallest margin: for a step output neuron its smallest |pre-activation|, for a soft one the
smallest |value − decision threshold|, for an output read straight from an input unit 0.5.
It also checks the compiler's guarantee that every step neuron has |z| ≥ 0.5 and adds a note
naming the neurons that break it (the verdict is still on what the network computes).

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
from ..ir.network import Network
from .domain import check_names
from .report import MAX_COUNTEREXAMPLES, Counterexample, OutputReport, Report
from .typed import verify_typed

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
    thr = net.decision_threshold
    rows = [index[o.source] for o in net.outputs]
    values = V[rows].T.astype(float)
    margins = np.empty_like(values)
    for k, r in enumerate(rows):
        if r < base:
            margins[:, k] = 0.5
        elif net.neurons[r - base].activation == "step":
            margins[:, k] = np.abs(Z[r - base])
        else:
            margins[:, k] = np.abs(values[:, k] - thr)
    step = [j for j, n in enumerate(net.neurons) if n.activation == "step"]
    zmin = np.abs(Z[step]).min(axis=1).astype(float) if step and len(X) else np.zeros(0)
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
    zmin = None
    examples: list[list[Counterexample]] = [[] for _ in net.outputs]
    shown = progress.bar(total, "verifying", unit="rows") if total > chunk else progress.bar(0, "")
    for start in range(0, total, chunk):
        stop = min(total, start + chunk)
        Xs = assignments(n, start, stop)
        Xn = Xs[:, perm].astype(float)
        if net.encoding == "bipolar":
            Xn = 2.0 * Xn - 1.0
        expected = np.asarray(source.evaluate(Xs), dtype=bool)[:, out_index]
        values, margins, zm = _output_margins(net, Xn)
        actual = values > thr
        diff = actual != expected
        bad += diff.sum(axis=0)
        min_margin = np.minimum(min_margin, margins.min(axis=0, initial=np.inf))
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

"""Verification with typed inputs: categorical one-hot units and real units.

Rules of the method
    * The domain is the valid assignments only: a categorical input takes one of its values
      (exactly one of its one-hot units is 1, never an impossible unit pattern), a Boolean
      input 0 or 1.
    * A real input of a *step* network is reduced to one point per cell cut by the rule's own
      thresholds (the predicates' constants) and the network's own thresholds on that unit,
      plus the points exactly on each threshold (``>=`` and ``>`` differ there).  Both the
      rules and the network are constant on each cell, so checking these points is exact.
      This needs every neuron that reads a real unit to read input units only, one of them
      real (the compiler's form); otherwise the network is treated like a soft one.
    * A *soft* (sigmoid, tanh, …, e.g. trained) network flips near, not at, the thresholds,
      so points are not enough: it is checked by branch-and-bound
      (:mod:`thresholdc.verification.bounds`) over the declared range of each real input less a band
      of ± scale around each rule threshold, and the report says so.  A real input without a
      declared range cannot be checked this way: VerificationUndecided (exit 2) says a range
      is needed.
    * Up to ``2**max_inputs`` points are enumerated (method ``exhaustive``); beyond that, or
      with continuous real inputs, the branch-and-bound decides.

Assignments in reports are ``{feature: value}``: a category string, a real number, 0/1.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> text = "input c: {red, blue}, t: real\\ny = c == red and t >= 2\\n"
>>> r = verify_typed(compile_rules(text), source_from_text(text))
>>> r.result, r.assignments
('equal', 6)
"""

from __future__ import annotations

import time
from typing import Any

import numpy as np

from ..ir.network import Network
from .bounds import DEFAULT_MAX_NODES, run_bounds
from .domain import (
    Domain,
    check_names,
    network_rows,
    soft_outputs,
    typed_domain,
    value_distances,
)
from .report import MAX_COUNTEREXAMPLES, Counterexample, OutputReport, Report

__all__ = ["verify_typed"]

_CHUNK = 1 << 16


def _margins(net: Network, Xn: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Output values, per-output margins, and each step neuron's smallest |z| on these rows."""
    Z, A = net.forward(Xn)
    col = {u: i for i, u in enumerate(net.inputs)}
    pos = {n.name: j for j, n in enumerate(net.neurons)}
    values = np.empty((len(Xn), len(net.outputs)))
    margins = np.empty_like(values)
    for k, o in enumerate(net.outputs):
        if o.source in pos:
            j = pos[o.source]
            values[:, k] = A[:, j]
            margins[:, k] = np.abs(Z[:, j])  # the pre-activation, whatever the activation
        else:
            values[:, k] = Xn[:, col[o.source]]
            margins[:, k] = 0.5
    zmin = np.abs(Z).min(axis=0) if len(Xn) else np.full(len(net.neurons), np.inf)
    return values, margins, zmin


def _enumerate(net: Network, source: Any, domain: Domain) -> Report:
    """Every point of a finite domain, in chunks (never the whole table in memory)."""
    t0 = time.perf_counter()
    out_index = [list(source.outputs).index(o.name) for o in net.outputs]
    K = len(net.outputs)
    bad = np.zeros(K, dtype=np.int64)
    min_margin = np.full(K, np.inf)
    min_dist = np.full(K, np.inf)
    soft = soft_outputs(net)
    zmin = np.full(len(net.neurons), np.inf)
    examples: list[list[Counterexample]] = [[] for _ in range(K)]
    total = domain.size
    thr = net.decision_threshold
    for start in range(0, total, _CHUNK):
        stop = min(total, start + _CHUNK)
        choice = domain.enumerate(start, stop)
        X = domain.unit_rows(choice)
        expected = np.asarray(source.evaluate(X), dtype=bool)[:, out_index]
        values, margins, zm = _margins(net, network_rows(net, domain, X))
        diff = (values > thr) != expected
        bad += diff.sum(axis=0)
        min_margin = np.minimum(min_margin, margins.min(axis=0, initial=np.inf))
        min_dist = np.minimum(min_dist, value_distances(values, soft, thr))
        zmin = np.minimum(zmin, zm)
        for k in np.nonzero(diff.any(axis=0))[0]:
            room = MAX_COUNTEREXAMPLES - len(examples[k])
            for r in np.nonzero(diff[:, k])[0][: max(room, 0)]:
                examples[k].append(Counterexample(
                    domain.assignment(choice[r]), net.outputs[k].name, bool(expected[r, k]),
                    float(values[r, k]), float(margins[r, k]),
                ))
    outputs = [
        OutputReport.counted(o.name, int(bad[k]), examples[k],
                             None if not np.isfinite(min_margin[k]) else float(min_margin[k]),
                             None if not np.isfinite(min_dist[k]) else float(min_dist[k]))
        for k, o in enumerate(net.outputs)
    ]
    equal = bool((bad == 0).all())
    report = Report(
        "equal" if equal else "different", "exhaustive", total, outputs,
        proofs=[f"exhaustive: all {total} valid assignments checked"] if equal else [],
        notes=list(domain.notes), seconds=time.perf_counter() - t0,
    )
    real = {u for f in domain.discrete if f.kind == "real" for u in f.units}
    thin = [n.name for n, z in zip(net.neurons, zmin)
            if n.activation == "step" and not (real & set(n.inputs)) and z < 0.5 - 1e-9]
    if thin:
        report.notes.append(
            f"{len(thin)} step neuron(s) have |z| < 0.5 on some input: {', '.join(thin[:5])}"
        )
    return report


def verify_typed(
    net: Network,
    source: Any,
    *,
    max_inputs: int = 24,
    max_nodes: int | None = None,
    time_limit: float = 60.0,
    progress: bool | None = None,
) -> Report:
    """Compare ``net`` with a typed (or plain) ``source`` over its valid assignments.

    Parameters
    ----------
    net : Network
    source : Reference
    max_inputs : int
        Enumerate up to ``2**max_inputs`` points; beyond, branch-and-bound.
    max_nodes, time_limit, progress
        Limits and progress bar of the branch-and-bound.

    Returns
    -------
    Report
        Counterexamples as ``{feature: value}`` (category string, real number, 0/1).

    Raises
    ------
    VerificationUndecided
        A soft network with a real input without a declared range (a search stopped by its
        limits gives ``undecided`` outputs instead).
    UsageError
        When the names differ.

    Examples
    --------
    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> net = compile_rules("input t: real\\ny = t > 1\\n")
    >>> r = verify_typed(net, source_from_text("input t: real\\ny = t >= 1\\n"))
    >>> r.result, r.counterexamples[0].assignment
    ('different', {'t': 1.0})
    """
    check_names(net, source)
    domain = typed_domain(net, source)
    if not domain.continuous and domain.size <= (1 << max_inputs):
        return _enumerate(net, source, domain)
    return run_bounds(net, source, domain,
                      max_nodes=DEFAULT_MAX_NODES if max_nodes is None else max_nodes,
                      time_limit=time_limit, progress=progress)

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
      (:mod:`thresholdc.verify.bounds`) over the declared range of each real input less a band
      of ± scale around each rule threshold, and the report says so.  A real input without a
      declared range cannot be checked this way: VerificationUndecided (exit 2) says a range
      is needed.
    * Up to ``2**max_inputs`` points are enumerated (method ``exhaustive``); beyond that, or
      with continuous real inputs, the branch-and-bound decides.

Assignments in reports are ``{feature: value}``: a category string, a real number, 0/1.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.source import Source
>>> text = "input c: {red, blue}, t: real\\ny = c == red and t >= 2\\n"
>>> r = verify_typed(compile_rules(text), Source.from_text(text))
>>> r.result, r.assignments
('equal', 6)
"""

from __future__ import annotations

import itertools
import time
from typing import Any

import numpy as np

from ..errors import VerificationUndecided
from ..network.model import Network
from .domain import Domain, boolean_or_typed_domain, cell_points, network_rows
from .report import MAX_COUNTEREXAMPLES, Counterexample, OutputReport, Report

__all__ = ["verify_typed", "typed_domain", "network_cuts", "is_typed_source"]

_CHUNK = 1 << 16
_MAX_CUT_INPUTS = 12


def is_typed_source(source: Any) -> bool:
    """True for a rule source with a categorical or real input."""
    program = getattr(source, "program", None)
    return program is not None and program.is_typed()


def network_cuts(net: Network, real: set[str]) -> dict[str, list[float]] | None:
    """Where the network's step neurons reading a real unit change value, per real unit, or
    None when some neuron reading a real unit is not of the cell-exact form (soft, reading a
    neuron or two real units, or too many other units to enumerate).

    >>> from thresholdc.network.model import Network, Neuron, Output
    >>> net = Network(("t", "a"), (Neuron("y", 1, ("t", "a"), (2.0, 1.0), -3.0),),
    ...               (Output("y", "y"),))
    >>> network_cuts(net, {"t"})
    {'t': [1.0, 1.5]}
    """
    inputs = set(net.inputs)
    cuts: dict[str, set[float]] = {u: set() for u in real}
    low = -1.0 if net.encoding == "bipolar" else 0.0
    for n in net.neurons:
        reads = [i for i in n.inputs if i in real]
        if not reads:
            continue
        others = [(i, float(w)) for i, w in zip(n.inputs, n.weights) if i not in real]
        if (n.activation != "step" or len(set(reads)) != 1
                or any(i not in inputs for i, _ in others) or len(others) > _MAX_CUT_INPUTS):
            return None
        w = sum(float(wt) for i, wt in zip(n.inputs, n.weights) if i in real)
        if w == 0:
            continue
        for combo in itertools.product((low, 1.0), repeat=len(others)):
            s = sum(v * wt for v, (_, wt) in zip(combo, others))
            cuts[reads[0]].add(-(float(n.bias) + s) / w)
    return {u: sorted(c) for u, c in cuts.items()}


def typed_domain(net: Network, source: Any) -> Domain:
    """The verification domain of ``source`` for ``net`` (see the module docstring).

    Raises VerificationUndecided when a soft network meets a real input without a range.
    """
    if not is_typed_source(source):
        return boolean_or_typed_domain(source)
    from ..logic.typed import feature_scale, real_thresholds

    program = source.program
    reals = [v for v in program.inputs if v.kind == "real"]
    if not reals:
        return boolean_or_typed_domain(source)
    thresholds = real_thresholds(program)
    cuts = network_cuts(net, {v.name for v in reals})
    if cuts is not None:
        points = {v.name: cell_points(thresholds[v.name] + cuts[v.name], v.range)
                  for v in reals}
        d = boolean_or_typed_domain(source, real_points=points)
        d.notes.append(
            "real inputs checked at one point per cell cut by the thresholds and on each "
            "threshold (exact for a step network)"
        )
        return d
    missing = [v.name for v in reals if v.range is None]
    if missing:
        raise VerificationUndecided(
            f"real input(s) {', '.join(missing)} have no declared range: a soft network is "
            "checked over the declared range, so a range is needed (declare e.g. "
            f"'input {missing[0]}: real in [LOW, HIGH] scale S')",
            file=getattr(source, "file", None),
        )
    pieces: dict[str, list[tuple[float, float]]] = {}
    bands = []
    for v in reals:
        s = feature_scale(v)
        lo, hi = float(v.range[0]), float(v.range[1])
        parts = [(lo, hi)]
        for c in thresholds[v.name]:
            parts = [q for a, b in parts for q in ((a, min(b, c - s)), (max(a, c + s), b))
                     if q[0] <= q[1]]
            bands.append(f"{v.name} in ({c - s:g}, {c + s:g})")
        if not parts:
            raise VerificationUndecided(
                f"the bands of ± scale around the thresholds of '{v.name}' cover its whole "
                "range: nothing is left to check (declare a smaller scale)",
                file=getattr(source, "file", None),
            )
        pieces[v.name] = parts
    d = boolean_or_typed_domain(source, real_pieces=pieces)
    if bands:
        d.notes.append(
            "soft network: real inputs checked over their declared ranges except a band of "
            "± scale around each rule threshold, where a soft neuron is uncertain by nature: "
            + ", ".join(bands)
        )
    else:
        d.notes.append("soft network: real inputs checked over their declared ranges")
    return d


def _margins(net: Network, Xn: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Output values, per-output margins, and each step neuron's smallest |z| on these rows."""
    Z, A = net.forward(Xn)
    col = {u: i for i, u in enumerate(net.inputs)}
    pos = {n.name: j for j, n in enumerate(net.neurons)}
    thr = net.decision_threshold
    values = np.empty((len(Xn), len(net.outputs)))
    margins = np.empty_like(values)
    for k, o in enumerate(net.outputs):
        if o.source in pos:
            j = pos[o.source]
            values[:, k] = A[:, j]
            step = net.neurons[j].activation == "step"
            margins[:, k] = np.abs(Z[:, j]) if step else np.abs(A[:, j] - thr)
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
                             None if not np.isfinite(min_margin[k]) else float(min_margin[k]))
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
    progress: bool = False,
) -> Report:
    """Compare ``net`` with a typed (or plain) ``source`` over its valid assignments.

    Parameters
    ----------
    net : Network
    source : Source
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
    >>> from thresholdc.source import Source
    >>> net = compile_rules("input t: real\\ny = t > 1\\n")
    >>> r = verify_typed(net, Source.from_text("input t: real\\ny = t >= 1\\n"))
    >>> r.result, r.counterexamples[0].assignment
    ('different', {'t': 1.0})
    """
    from .bounds import DEFAULT_MAX_NODES, run_bounds
    from .exhaustive import check_names

    check_names(net, source)
    domain = typed_domain(net, source)
    if not domain.continuous and domain.size <= (1 << max_inputs):
        return _enumerate(net, source, domain)
    return run_bounds(net, source, domain,
                      max_nodes=DEFAULT_MAX_NODES if max_nodes is None else max_nodes,
                      time_limit=time_limit, progress=progress)

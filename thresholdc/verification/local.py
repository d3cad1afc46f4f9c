"""Local verification: each neuron against the gate cone it replaced, by exhaustion.

The compiler records in ``meta.cones`` which part of the gate graph each neuron computes:
``{NEURON: {"root": SIGNAL, "leaves": [SIGNAL, …]}}``.  This check rebuilds the gate graph
from the source and proves, for every listed neuron, that on all 2^|leaves| values of its
leaves

    (a) the root signal computed by the gate-graph region between the leaves and the root, and
    (b) the neuron computed by the sub-network from the leaf units to it (the neuron and the
        unlisted helper neurons it reads inside its cone)

agree.  With the structural checks — every neuron is listed, a helper inside a listed cone,
or a relay (a one-input neuron repeating or negating a unit); each leaf is a unit of the
network that carries that signal; each output reads the unit carrying its source signal —
this proves by induction over the network's order that every unit computes its signal, so
the network equals the gate graph.

Signals are compared up to structural hashing, recomputed here from the gate graph: ``buf``
and double negation are transparent and the same op on the same arguments is the same signal,
so a compiler that merged duplicate gates is checked too.  A cone with more leaves than
``max_leaves`` is proved by a small SAT miter instead.

For a netlist the gate graph is the netlist, so this decides alone.  For rules, the step from
the rules to the gate graph is checked too: exhaustively for at most 16 inputs, else by a SAT
miter between the rule AST and the gate graph (or exhaustively up to ``max_inputs`` without
python-sat).

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> text = "input a, b, c\\ny = a and (b or not c)\\n"
>>> report = verify_local(compile_rules(text, synthesis=False), source_from_text(text, "t.rules"))
>>> report.result, report.method
('equal', 'local')
"""

from __future__ import annotations

import time
from typing import Any

import numpy as np

from ..ir.network import Network
from ..progress import track
from .cones import LOCAL_MAX_LEAVES, ConeCheck
from .domain import check_names
from .report import Counterexample, OutputReport, Report
from .rules_gates import RULES_EXHAUSTIVE_MAX, rules_to_gates
from .sat.encode import check_step_network
from .sat.method import confirm_counterexample
from .structural import structural_classes

__all__ = ["verify_local", "structural_classes", "LOCAL_MAX_LEAVES", "RULES_EXHAUSTIVE_MAX"]

_RANDOM_ROWS = 256


def _random_counterexamples(net: Network, source: Any) -> dict[str, list[Counterexample]]:
    """Counterexamples found by simulating both sides on random rows: for each output that
    differs on some row, the first such row, re-simulated (may be none)."""
    n = len(source.inputs)
    rng = np.random.default_rng(0)
    X = rng.integers(0, 2, size=(_RANDOM_ROWS, n)).astype(np.uint8)
    perm = [list(source.inputs).index(u) for u in net.inputs]
    expected = np.asarray(source.evaluate(X), dtype=bool)
    got = net.decide(X[:, perm].astype(float))
    order = [list(source.outputs).index(o.name) for o in net.outputs]
    diff = got != expected[:, order]
    found: dict[str, list[Counterexample]] = {}
    for r in sorted({int(np.nonzero(diff[:, k])[0][0]) for k in np.nonzero(diff.any(axis=0))[0]}):
        assignment = {u: int(X[r, i]) for i, u in enumerate(source.inputs)}
        _add(found, confirm_counterexample(net, source, assignment))
    return found


def _add(found: dict[str, list[Counterexample]], more: list[Counterexample]) -> None:
    for c in more:
        have = found.setdefault(c.output, [])
        if all(c.assignment != d.assignment for d in have):
            have.append(c)


def verify_local(
    net: Network,
    source: Any,
    *,
    max_leaves: int = LOCAL_MAX_LEAVES,
    max_inputs: int = 24,
    time_limit: float = 60.0,
) -> Report:
    """Prove ``net`` equal to ``source`` neuron by neuron from ``meta.cones``.

    Parameters
    ----------
    net
        A step network with ``meta.cones`` (soft networks are a UsageError).
    source
        A :class:`~thresholdc.ir.reference.Reference`; its gate graph is rebuilt with the options in
        ``net.meta``.
    max_leaves
        Cones with more leaves are proved by a small SAT miter instead of exhaustively.
    max_inputs, time_limit
        Bounds of the rules-to-gates step (exhaustive up to 16 inputs, else SAT within
        ``time_limit`` seconds, or exhaustive up to ``max_inputs`` without python-sat).

    Returns
    -------
    Report
        ``equal`` with the proofs, ``different`` with counterexamples re-simulated on both
        sides, or ``undecided`` with what could not be shown (method ``local``).

    Examples
    --------
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> from thresholdc.logic.source import source_from_text
    >>> src = source_from_text("INPUT(a)\\nINPUT(b)\\nOUTPUT(y)\\ny = NOR(a, b)\\n", "t.bench")
    >>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (-1, -1), 0.5),),
    ...               (Output("y", "y"),), {"cones": {"y": {"root": "y", "leaves": ["a", "b"]}}})
    >>> verify_local(net, src).proofs[0]
    'local: each of 1 neuron(s) equals its gate cone (4 assignments, at most 2 leaves)'
    """
    t0 = time.perf_counter()
    check_step_network(net)
    check_names(net, source)
    names = [o.name for o in net.outputs]
    cones = net.meta.get("cones")
    if not isinstance(cones, dict):
        return _finish(net, source, {}, "local: the network records no gate cones "
                       "(meta.cones)", ["the network records no gate cones (meta.cones)"], t0)
    graph = source.gates_like(net) if hasattr(source, "gates_like") else source.gates()
    loc = ConeCheck(net, graph, max_leaves, t0 + time_limit)
    if not loc.setup(cones):
        return _finish(net, source, {}, f"local: {loc.problems[0]}", loc.problems[:5], t0)
    for n in track(net.neurons, "verification: cones", unit="neuron"):
        if n.name in loc.cones:
            loc.check_cone(n.name)
    covered = set(loc.cones) | set(loc.alias) | loc.helpers
    stray = [n.name for n in net.neurons if n.name not in covered]
    if stray:  # no output reads them through a recorded cone: noted, not fatal
        loc.problems.append(f"neuron(s) in no recorded cone: {', '.join(stray[:5])}")
    # which units are proven to carry their signal: by induction over the network's order
    blame: dict[str, str | None] = {u: None for u in net.inputs}
    for n in net.neurons:
        if n.name in loc.cones:
            if not loc.cone_ok.get(n.name, False):
                blame[n.name] = n.name
            else:
                blame[n.name] = next((b for d in sorted(loc.deps.get(n.name, ()))
                                      if (b := blame.get(d, d)) is not None), None)
        elif n.name in loc.alias:
            base = loc.alias[n.name][0]
            blame[n.name] = blame.get(base, base)
    out_sig = dict(graph.outputs)
    to_gates: dict[str, str | None] = {}  # None: proven equal to the gate graph's output
    for o in net.outputs:
        base, neg = loc.resolve(o.source)
        c = loc.carried.get(base)
        want = loc.cls.get(out_sig.get(o.name, ""))
        carrier = base if base in loc.input_set else loc.cones.get(base, (None,))[0]
        if (c is not None and want is not None and (c[0], c[1] != neg) != want
                and carrier is not None and o.name in out_sig
                and loc.same_function(out_sig[o.name], carrier, neg)):
            c = want  # the same function in another form (checked over the inputs)
            neg = False
        if c is None or want is None or (c[0], c[1] != neg) != want:
            problem = (f"output {o.name!r} reads unit {o.source!r}, which does not carry its "
                       f"signal {out_sig.get(o.name)!r}")
            loc.problems.append(problem)
            to_gates[o.name] = f"local: {problem}"
        elif blame.get(base, base) is not None:
            to_gates[o.name] = (f"local: neuron {blame.get(base, base)!r}, which this output "
                                "depends on, is not proven equal to its gate cone")
        else:
            to_gates[o.name] = None
    widest = max((len({loc.cls[s][0] for s in leaves}) for _, leaves in loc.cones.values()),
                 default=0)
    proven_cones = sum(loc.cone_ok.values())
    proofs = [
        f"local: {proven_cones} of {len(loc.cones)} neuron(s) equal their gate cone "
        f"({loc.assignments} assignments, at most {widest} leaves"
        + (f"; {loc.symmetric_cones} wide symmetric cone(s) by the count of true leaves"
           if loc.symmetric_cones else "")
        + (f"; {loc.sat_cones} wide cone(s) by SAT" if loc.sat_cones else "")
        + (f"; {loc.input_cones} cone(s) over their primary inputs" if loc.input_cones else "")
        + ")"
    ]
    if not proven_cones:
        proofs = []
    elif proven_cones == len(loc.cones) and not loc.problems:
        proofs[0] = proofs[0].replace(f"{proven_cones} of {len(loc.cones)} neuron(s) equal",
                                      f"each of {len(loc.cones)} neuron(s) equals")
        proofs[0] = proofs[0].replace("equals their gate cone", "equals its gate cone")
    found: dict[str, list[Counterexample]] = {}
    bounds = dict(to_gates)
    if getattr(source, "program", None) is not None:
        status, shown, differing = rules_to_gates(
            source, graph, max(time_limit - (time.perf_counter() - t0), 0.0), max_inputs
        )
        for assignment in differing:
            _add(found, confirm_counterexample(net, source, assignment))
        for name in names:
            if bounds[name] is None and status[name] != "equal":
                bounds[name] = f"local: {shown}" if status[name] == "undecided" else (
                    "local: the gate graph differs from the rules, but the network does not "
                    "reproduce it (internal error)")
        if all(v == "equal" for v in status.values()):
            proofs.append(f"local: {shown}")
        elif any(v == "equal" for v in status.values()):
            proofs.append("local: the gate graph equals the rules on "
                          + ", ".join(o for o in names if status[o] == "equal"))
    else:
        proofs.append("local: the gate graph is the netlist itself")
    notes = (loc.mismatch + loc.problems)[:8]
    return _finish(net, source, bounds, "", notes, t0, found=found, proofs=proofs,
                   assignments=loc.assignments,
                   margins={o.name: loc.margins.get(loc.resolve(o.source)[0], 0.5)
                            for o in net.outputs})


def _finish(net: Network, source: Any, bounds: dict[str, str | None], default: str,
            notes: list[str], t0: float, *, found: dict[str, list[Counterexample]] | None = None,
            proofs: list[str] | None = None, assignments: int = 0,
            margins: dict[str, float] | None = None) -> Report:
    """The local report: an output is equal when ``bounds`` has None for it (proven), else
    different when a re-simulated counterexample was found (random rows, rules-to-gates),
    else undecided with its bound (``default`` when ``bounds`` does not name one)."""
    found = dict(found or {})
    if any(b is not None for b in bounds.values()) or len(bounds) < len(net.outputs):
        _add_all(found, _random_counterexamples(net, source))
    outputs = []
    for o in net.outputs:
        bound = bounds.get(o.name, default)
        if o.name in found:
            outputs.append(OutputReport.differs(o.name, found[o.name]))
        elif bound is None:
            outputs.append(OutputReport.proven(o.name, (margins or {}).get(o.name, 0.5)))
        else:
            outputs.append(OutputReport.undecided(o.name, bound))
    return Report.of("local", assignments, outputs, proofs=list(proofs or []), notes=notes,
                     seconds=time.perf_counter() - t0)


def _add_all(found: dict[str, list[Counterexample]],
             more: dict[str, list[Counterexample]]) -> None:
    for cs in more.values():
        _add(found, cs)

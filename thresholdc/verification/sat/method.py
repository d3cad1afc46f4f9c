"""SAT verification: a miter between a source (rules or netlist) and a step network.

The source side is encoded straight from the rule AST (or from the netlist's gates), the
network side neuron by neuron as y ↔ [Σ w·x + b > 0] (see :mod:`.encode`), and the two
are compared by :func:`~thresholdc.verification.sat.miter.prove_equivalent` — structural hashing,
simulation-guided matching proved on small cuts, then python-sat in a child process ended at
the time limit.  Every counterexample is re-simulated on both sides (``Network.decide`` and
``Reference.evaluate``) before it is reported.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> from thresholdc.logic.source import source_from_text
>>> src = source_from_text("input a, b\\ny = a and b\\n", "t.rules")
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -0.5),), (Output("y", "y"),))
>>> r = verify_sat(net, src, time_limit=10)
>>> r.result, r.counterexamples[0].assignment in ({"a": 1, "b": 0}, {"a": 0, "b": 1})
('different', True)
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np

from ...errors import VerificationUndecided
from ...ir.network import Network
from ..domain import check_names
from ..report import Counterexample, OutputReport, Report
from .circuit import Circuit
from .encode import check_step_network, encode_gates, encode_network, encode_program
from .miter import MiterOutcome, prove_equivalent

__all__ = ["verify_sat", "source_side", "network_side", "gates_side", "confirm_counterexample",
           "miter_summary", "miter_report"]


def source_side(source: Any) -> Callable[[Circuit, dict[str, int]], dict[str, int]]:
    """A miter side for the source: its rule AST, or its netlist's gates.

    >>> from thresholdc.logic.source import source_from_text
    >>> side = source_side(source_from_text("input a\\ny = not a\\n", "t.rules"))
    >>> c = Circuit()
    >>> side(c, {"a": c.new_input()})
    {'y': -2}
    """
    program = getattr(source, "program", None)
    if program is not None:
        def build(c: Circuit, ins: dict[str, int]) -> dict[str, int]:
            lits = encode_program(c, program, ins)
            return {name: lits[name] for name in source.outputs}
        return build
    return gates_side(source.gates())


def gates_side(graph: Any) -> Callable[[Circuit, dict[str, int]], dict[str, int]]:
    """A miter side for a gate graph.

    >>> from thresholdc.ir.gates import Gate, GateGraph
    >>> g = GateGraph.build(["a"], [("y", "n")], [("n", Gate("not", ("a",)))])
    >>> c = Circuit()
    >>> gates_side(g)(c, {"a": c.new_input()})
    {'y': -2}
    """
    def build(c: Circuit, ins: dict[str, int]) -> dict[str, int]:
        lits = encode_gates(c, graph, ins)
        return {name: lits[sig] for name, sig in graph.outputs}
    return build


def network_side(net: Network) -> Callable[[Circuit, dict[str, int]], dict[str, int]]:
    """A miter side for a step network.

    >>> from thresholdc.ir.network import Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("y", "n"),))
    >>> c = Circuit()
    >>> network_side(net)(c, {"a": c.new_input()})
    {'y': -2}
    """
    def build(c: Circuit, ins: dict[str, int]) -> dict[str, int]:
        lits = encode_network(c, net, ins)
        return {o.name: lits[o.source] for o in net.outputs}
    return build


def confirm_counterexample(
    net: Network, source: Any, assignment: dict[str, int]
) -> list[Counterexample]:
    """The outputs on which ``net`` and ``source`` really differ at ``assignment``, found by
    simulating both (an empty list when they agree there).

    >>> from thresholdc.ir.network import Neuron, Output
    >>> from thresholdc.logic.source import source_from_text
    >>> src = source_from_text("input a\\ny = a\\n", "t.rules")
    >>> net = Network(("a",), (Neuron("y", 1, ("a",), (-1,), 0.5),), (Output("y", "y"),))
    >>> [(c.output, c.expected, c.actual) for c in confirm_counterexample(net, src, {"a": 1})]
    [('y', True, 0.0)]
    """
    xs = np.array([[assignment[u] for u in source.inputs]], dtype=np.uint8)
    expected = np.asarray(source.evaluate(xs), dtype=bool)[0]
    xn = np.array([[assignment[u] for u in net.inputs]], dtype=float)
    Z, _ = net.forward(xn)
    values = net.evaluate(xn)[0]
    decided = net.decide(xn)[0]
    pos = {n.name: j for j, n in enumerate(net.neurons)}
    out_index = {name: k for k, name in enumerate(source.outputs)}
    found = []
    for k, o in enumerate(net.outputs):
        want = bool(expected[out_index[o.name]])
        if bool(decided[k]) != want:
            margin = abs(float(Z[0, pos[o.source]])) if o.source in pos else 0.5
            found.append(Counterexample(dict(assignment), o.name, want, float(values[k]), margin))
    return found


def miter_summary(outcome: MiterOutcome) -> str:
    """A short account of how a miter was decided, for a report's proofs or notes.

    >>> miter_summary(MiterOutcome("equal", stats={"candidates": 0, "nodes_b": 0}))
    'every node of the second side is a node of the first after structural hashing; no \
solver call needed'
    """
    st = outcome.stats
    parts = []
    if "candidates" in st:
        if st.get("nodes_b", 0) == 0:
            parts.append("every node of the second side is a node of the first after "
                         "structural hashing")
        else:
            parts.append(f"{st.get('matched', 0)} of {st['nodes_b']} node(s) of the second "
                         "side matched to the first on small cuts")
    if st.get("solver"):
        parts.append(f"{st['solver']}, {st.get('vars', 0)} variables, "
                     f"{st.get('clauses', 0)} clauses")
        if st.get("sweep_tried"):
            parts.append(f"{st.get('swept', 0)} of {st['sweep_tried']} more proved by sweeping")
    else:
        parts.append("no solver call needed")
    return "; ".join(parts)


def verify_sat(
    net: Network,
    source: Any,
    *,
    time_limit: float,
    solver: str | None = None,
    outputs: Sequence[str] | None = None,
) -> Report:
    """Prove ``net`` equal to ``source`` with a SAT miter, or find counterexamples.

    Every output is decided (proven equal, or a counterexample found and re-simulated) unless
    the time limit stops the solver first; those left are ``undecided`` with the bound.

    Parameters
    ----------
    net
        A step network with the binary encoding (a soft network is a UsageError).
    source
        A :class:`~thresholdc.ir.reference.Reference` (rule file or netlist) with Boolean inputs.
    time_limit
        Seconds for the whole check; the solver runs in a child process ended at the limit.
    solver
        A python-sat back end name (default: the strongest incremental one available).
    outputs
        Check only these outputs (the report then lists only them); default all.

    Returns
    -------
    Report
        Method ``sat``; per output ``equal``, ``different`` (``disagreements`` None: the
        solver does not count, ``found`` counterexamples) or ``undecided``.

    Examples
    --------
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> from thresholdc.logic.source import source_from_text
    >>> src = source_from_text("input a, b\\ny = a or b\\n", "t.rules")
    >>> net = Network(("b", "a"), (Neuron("y", 1, ("a", "b"), (1, 1), -0.5),),
    ...               (Output("y", "y"),))
    >>> verify_sat(net, src, time_limit=10).result
    'equal'
    """
    t0 = time.perf_counter()
    check_step_network(net)
    check_names(net, source)
    try:
        import pysat  # noqa: F401
    except ImportError:
        # Not a usage mistake: no available method can decide (compile stores "skipped").
        raise VerificationUndecided(
            "SAT verification needs python-sat (pip install 'thresholdc[sat]')"
        ) from None
    kind = "rules" if getattr(source, "program", None) is not None else "netlist"
    wanted = list(source.outputs) if outputs is None else [
        o for o in source.outputs if o in set(outputs)]
    outcome = prove_equivalent(
        source.inputs,
        wanted,
        source_side(source),
        network_side(net),
        time_limit=time_limit,
        solver=solver,
    )
    report = miter_report(net, source, outcome, kind, wanted,
                          f"sat: not decided within the time limit of {time_limit:g} s")
    report.seconds = time.perf_counter() - t0
    return report


def miter_report(
    net: Network, source: Any, outcome: MiterOutcome, kind: str, wanted: Sequence[str],
    bound: str, method: str = "sat",
    confirm: Callable[[dict[str, int]], list[Counterexample]] | None = None,
) -> Report:
    """The Report of a network-versus-source miter over the outputs ``wanted``, every
    counterexample re-simulated on both sides (by ``confirm``, default
    :func:`confirm_counterexample`); ``bound`` is given to undecided outputs."""
    found: dict[str, list[Counterexample]] = {}
    unconfirmed = []
    for name, assignment in outcome.differing.items():
        real = (confirm(assignment) if confirm is not None
                else confirm_counterexample(net, source, assignment))
        if not any(c.output == name for c in real):
            unconfirmed.append(name)
        for c in real:
            found.setdefault(c.output, [])
            if all(c.assignment != d.assignment for d in found[c.output]):
                found[c.output].append(c)
    notes = list(outcome.notes)
    if unconfirmed:
        notes.append(
            f"the solver reported a difference on {', '.join(sorted(unconfirmed))} that "
            "re-simulation does not reproduce (floating-point evaluation of the network "
            "differs from exact arithmetic, or an encoding error); not counted"
        )
    proven = set(outcome.proven)
    if outcome.notes:
        bound = f"{bound} ({'; '.join(outcome.notes)})"
    reports = []
    for name in wanted:
        if name in found:
            reports.append(OutputReport.differs(name, found[name]))
        elif name in proven and name not in unconfirmed:
            reports.append(OutputReport.proven(name))
        else:
            reports.append(OutputReport.undecided(
                name, "sat: the solver's counterexample is not reproduced by re-simulation"
                if name in unconfirmed else bound))
    report = Report.of(method, 0, reports, notes=notes)
    decided = [o.name for o in reports if o.verdict == "equal"]
    if report.result == "equal":
        report.proofs.append(
            f"{method}: the network equals the {kind} on every input ({miter_summary(outcome)})")
    elif decided:
        report.proofs.append(f"{method}: proven equal on every input: {', '.join(decided)}")
    return report

"""Choosing a verification method: ``auto``, ``exhaustive``, ``local``, ``sat``, ``bounds``
or ``milp``.

``auto``'s rule is a work bound, not an input count alone: it checks every assignment when
there are at most ``max_inputs`` inputs *and* the table is small, 2^inputs × (neurons + 1)
unit evaluations at most :data:`EXHAUSTIVE_WORK` (2^23; e.g. 20 inputs with at most 7
neurons).  Otherwise, for a step network, it runs ``local`` (each neuron against its
recorded gate cone, plus the rules-to-gates step for rule files); every output that local
left undecided goes to a ``sat`` miter in the rest of the time budget; and, within
``max_inputs``, the exhaustive check decides whatever is still open.  Typed sources go to their
own methods: a small valid domain is enumerated (``verify_typed``); above that a step network
gets the typed SAT miter, and any other (trained, soft, ReLU) network ``milp``
(:func:`~thresholdc.verification.trained.verify_trained`: a MILP, then linear-relaxation
branch-and-bound for sigmoid/tanh).  Soft networks with Boolean inputs above the bound go to
``verify_bounds``.

Each output keeps the first decision a method made (``equal`` is a proof, ``different`` a
re-simulated counterexample; an exact count from a later exhaustive run replaces a count of
counterexamples found); an output no method decided is ``undecided`` with the bound each
method reached.  ``method`` names the methods that ran (``local+sat``, …) and ``proofs``
what each proved.

The input and output names of network and source are compared as sets first: a mismatch is a
UsageError naming the differing names.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> text = "input a, b\\ny = a xor b\\n"
>>> verify_network(compile_rules(text), source_from_text(text, "x.rules"), method="sat").result
'equal'
"""

from __future__ import annotations

import time
from typing import Any

from ..errors import UsageError, VerificationUndecided
from ..ir.network import Network
from ..ir.options import VERIFY_METHODS
from .bounds import verify_bounds
from .domain import check_names, is_typed_source, typed_domain
from .exhaustive import verify_exhaustive
from .local import verify_local
from .report import OutputReport, Report, undecided_outputs
from .sat.encode import check_step_network
from .sat.method import verify_sat
from .sat.typed import typed_sat_problem, verify_typed_sat
from .trained import verify_trained
from .typed import verify_typed

__all__ = ["verify_network", "merge_reports", "METHODS"]

#: The methods of verify_network (the compile choices without "none").
METHODS = tuple(m for m in VERIFY_METHODS if m != "none")
#: Below this many unit evaluations (2^inputs × (neurons + 1)) ``auto`` checks every
#: assignment; above it, local and SAT go first (exact too, and far cheaper on big tables).
EXHAUSTIVE_WORK = 1 << 23


def verify_network(
    net: Network,
    source: Any,
    *,
    method: str = "auto",
    max_inputs: int = 24,
    time_limit: float = 60.0,
) -> Report:
    """Verify ``net`` against ``source`` with the chosen method.

    Parameters
    ----------
    net
        The network to check.
    source
        A :class:`~thresholdc.ir.reference.Reference` (rule file or netlist).
    method
        ``auto`` (default), ``exhaustive``, ``local`` or ``sat``.
    max_inputs
        The largest number of inputs checked exhaustively.
    time_limit
        Seconds for the local and SAT checks together (enforced on the SAT solver by ending
        its process).

    Returns
    -------
    Report
        See the module docstring.

    Raises
    ------
    UsageError
        Unknown method, names that differ, or a soft network asked for ``local``/``sat``.
    VerificationUndecided
        ``exhaustive`` asked for more inputs than ``max_inputs``.

    Examples
    --------
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> from thresholdc.logic.source import source_from_text
    >>> src = source_from_text("input a, b\\ny = a and b\\n", "t.rules")
    >>> net = Network(("a", "c"), (Neuron("y", 1, ("a", "c"), (1, 1), -1.5),),
    ...               (Output("y", "y"),))
    >>> verify_network(net, src)
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: t.rules: the network's and the source's input names differ \
(only in the network: c; only in the source: b)
    """
    if method not in METHODS:
        raise UsageError(f"unknown verification method {method!r}; choose {', '.join(METHODS)}")
    if not isinstance(time_limit, (int, float)) or time_limit <= 0:
        raise UsageError(
            f"the time limit must be a positive number of seconds. Got {time_limit!r}."
        )
    check_names(net, source)
    if method == "exhaustive":
        return verify_exhaustive(net, source, max_inputs=max_inputs)
    if method == "local":
        return verify_local(net, source, max_inputs=max_inputs, time_limit=time_limit)
    if method == "sat":
        if is_typed_source(source):
            _needs_sat()
            return verify_typed_sat(net, source, time_limit=time_limit)
        return verify_sat(net, source, time_limit=time_limit)
    if method == "bounds":
        return verify_bounds(net, source, time_limit=time_limit)
    if method == "milp":
        return verify_trained(net, source, time_limit=time_limit)
    if is_typed_source(source):  # valid one-hot assignments, real cells or bands
        return _typed(net, source, max_inputs, time_limit)
    n = len(source.inputs)
    within = n <= max_inputs
    if within and (1 << n) * (len(net.neurons) + 1) <= EXHAUSTIVE_WORK:
        return verify_exhaustive(net, source, max_inputs=max_inputs)
    t0 = time.perf_counter()
    bound = f"{n} inputs are more than the exhaustive bound of {max_inputs}"
    try:
        check_step_network(net)
    except UsageError:  # a soft (e.g. trained) network: branch-and-bound over sub-cubes
        if within:
            return verify_exhaustive(net, source, max_inputs=max_inputs)
        return verify_bounds(net, source, time_limit=time_limit)
    names = [o.name for o in net.outputs]
    try:
        reports = [verify_local(net, source, max_inputs=max_inputs, time_limit=time_limit)]
    except UsageError as err:
        if within:
            return verify_exhaustive(net, source, max_inputs=max_inputs)
        return Report("undecided", "auto", 0, undecided_outputs(names, f"{bound}, and "
                      f"{err.message}"), notes=[f"{bound}, and {err.message}"])
    notes = [f"local: {note}" for note in reports[0].notes]
    left = time_limit - (time.perf_counter() - t0)
    still = _undecided(reports)
    if still and left > 0:
        try:
            sat = verify_sat(net, source, time_limit=left, outputs=still)
            reports.append(sat)
            notes += [f"sat: {note}" for note in sat.notes]
        except VerificationUndecided as err:
            notes.append(f"sat: {err.message}")
    elif still:
        notes.append("no time left for the SAT check")
    if _undecided(reports) and within:
        # within the bound, the exhaustive check decides what local and SAT could not
        reports.append(verify_exhaustive(net, source, max_inputs=max_inputs))
        notes += reports[-1].notes
    merged = merge_reports(names, reports)
    merged.notes = notes
    merged.seconds = time.perf_counter() - t0
    return merged


def _needs_sat() -> None:
    try:
        import pysat  # noqa: F401
    except ImportError:
        raise VerificationUndecided(
            "SAT verification needs python-sat (pip install 'thresholdc[sat]')") from None


def _typed(net: Network, source: Any, max_inputs: int, time_limit: float) -> Report:
    """Typed sources: enumerate a small domain (exact counts); for a step network with a
    larger one, the typed SAT miter, then branch-and-bound for whatever it left open;
    otherwise (soft networks) the typed method (cells or bands, by enumeration or
    branch-and-bound)."""
    problem = None
    try:
        _needs_sat()
        problem = typed_sat_problem(net, source)
    except VerificationUndecided:
        pass
    domain = typed_domain(net, source)
    small = domain.size <= (1 << max_inputs) and domain.size * (len(net.neurons) + 1) <= \
        EXHAUSTIVE_WORK
    if problem is None and not small:
        # a trained or soft network on a large typed domain: the complete MILP (then, for
        # sigmoid or tanh, linear-relaxation branch-and-bound), never the banded check
        return verify_trained(net, source, time_limit=time_limit)
    if problem is None or small:
        return verify_typed(net, source, max_inputs=max_inputs, time_limit=time_limit)
    t0 = time.perf_counter()
    reports = [verify_typed_sat(net, source, time_limit=time_limit)]
    left = time_limit - (time.perf_counter() - t0)
    if _undecided(reports) and left > 0:
        reports.append(verify_typed(net, source, max_inputs=max_inputs, time_limit=left))
    merged = merge_reports([o.name for o in net.outputs], reports)
    merged.notes = list(dict.fromkeys(n for r in reports for n in r.notes))
    merged.assignments = domain.size
    merged.seconds = time.perf_counter() - t0
    return merged


def _undecided(reports: list[Report]) -> list[str]:
    """The outputs no report has decided yet (in the first report's order)."""
    decided = {o.name for r in reports for o in r.outputs if o.verdict != "undecided"}
    return [o.name for o in reports[0].outputs if o.name not in decided]


def merge_reports(names: list[str], reports: list[Report]) -> Report:
    """One report from several methods run one after the other on the same network: each
    output takes the first decision any method made (every decision is sound, so they
    cannot conflict), else stays undecided with the bounds each method reached.  The last
    method that decides an output wins when it counted exactly (exhaustive).

    >>> from thresholdc.verification.report import OutputReport
    >>> a = Report.of("local", 0, [OutputReport.undecided("y", "local: a cone")])
    >>> b = Report.of("sat", 0, [OutputReport.proven("y")])
    >>> merged = merge_reports(["y"], [a, b])
    >>> merged.method, merged.result
    ('local+sat', 'equal')
    """
    outputs = []
    for name in names:
        mine = [o for r in reports for o in r.outputs if o.name == name]
        decided = [o for o in mine if o.verdict != "undecided"]
        exact = [o for o in decided if o.exact]
        if exact:
            outputs.append(exact[-1])
        elif decided:
            outputs.append(decided[0])
        else:
            bounds = [o.bound for o in mine if o.bound]
            outputs.append(OutputReport.undecided(name, "; ".join(bounds) or "not checked"))
    method = "+".join(dict.fromkeys(r.method for r in reports))
    proofs = [p for r in reports for p in r.proofs]
    assignments = max((r.assignments for r in reports), default=0)
    return Report.of(method, assignments, outputs, proofs=proofs)

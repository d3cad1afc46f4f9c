"""Choosing a verification method: ``auto``, ``exhaustive``, ``local`` or ``sat``.

``auto`` checks every assignment when there are at most ``max_inputs`` inputs and the table
is small (2^inputs × (neurons + 1) at most :data:`EXHAUSTIVE_WORK`).  Otherwise it runs
``local`` (each neuron against its recorded gate cone, plus the rules-to-gates step for rule
files) and, when that does not decide, a full ``sat`` miter in the rest of the time budget;
within ``max_inputs`` the exhaustive check still decides what those could not.  Typed sources
and soft networks above the bound go to their own methods (``verify_typed``,
``verify_bounds``).  The report says which methods ran (``method``: ``exhaustive``,
``local``, ``sat`` or ``local+sat``) and what each proved (``proofs``); its result is
``equal`` only when equality is proven end to end, ``different`` with counterexamples
re-simulated on both sides, and ``undecided`` otherwise (with notes saying what was and was
not shown).

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

from ..errors import UsageError
from ..ir.network import Network
from .bounds import verify_bounds
from .domain import check_names, is_typed_source
from .exhaustive import verify_exhaustive
from .local import verify_local
from .report import Report
from .sat import verify_sat
from .sat_encode import check_step_network
from .typed import verify_typed

__all__ = ["verify_network", "METHODS"]

METHODS = ("auto", "exhaustive", "local", "sat", "bounds")
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
        return verify_sat(net, source, time_limit=time_limit)
    if method == "bounds":
        return verify_bounds(net, source, time_limit=time_limit)
    if is_typed_source(source):  # valid one-hot assignments, real cells or bands
        return verify_typed(net, source, max_inputs=max_inputs, time_limit=time_limit)
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
    try:
        local = verify_local(net, source, max_inputs=max_inputs, time_limit=time_limit)
    except UsageError as err:
        if within:
            return verify_exhaustive(net, source, max_inputs=max_inputs)
        return Report("undecided", "auto", 0, [], notes=[f"{bound}, and {err.message}"])
    if local.result != "undecided":
        return local
    left = time_limit - (time.perf_counter() - t0)
    notes = [f"local: {note}" for note in local.notes]
    if left > 0:
        sat = verify_sat(net, source, time_limit=left)
        if sat.result != "undecided" or not within:
            return Report(
                sat.result,
                "local+sat",
                sat.assignments,
                sat.outputs,
                proofs=local.proofs + sat.proofs,
                notes=notes + [f"sat: {note}" for note in sat.notes],
                seconds=time.perf_counter() - t0,
            )
        notes += [f"sat: {note}" for note in sat.notes]
    elif not within:
        return Report("undecided", "local", 0, [], proofs=local.proofs,
                      notes=notes + ["no time left for the SAT check"],
                      seconds=time.perf_counter() - t0)
    # within the bound, the exhaustive check decides what local and SAT could not
    report = verify_exhaustive(net, source, max_inputs=max_inputs)
    report.notes = notes + report.notes
    report.seconds = time.perf_counter() - t0
    return report

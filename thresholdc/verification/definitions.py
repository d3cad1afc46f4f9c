"""Per definition: which definitions of a rule file a network still computes.

A compiled network keeps a unit named after a definition wherever the definition became one
neuron (DESIGN.md §4: a neuron named after a definition computes it); after training, such a
unit may have drifted.  Checking a definition is checking an output: the network with its
outputs moved to the definition units (:func:`as_definitions`) against the rule file with its
outputs moved to the definitions.  So every verification method applies unchanged, and each
definition gets a sound verdict: ``equal``, ``different`` (counterexamples re-simulated on
both sides) or ``undecided`` with its bound; a definition with no unit of its name is
undecided ("no unit").

The check itself is a *backend*: a function ``(network, source, names) -> {name:
OutputReport}``.  :func:`by_method` (the default) runs :func:`verify_network` with a method
(``auto``: exhaustive, local + SAT, typed SAT, or branch-and-bound for soft networks);
another backend (e.g. a MILP for trained networks) can be passed to
:func:`verify_definitions` as ``backend=``.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic import source_from_text
>>> text = "input a, b, c\\nm = a and b\\ny = m or c\\n"
>>> net = compile_rules(text, synthesis=False)
>>> wrong = source_from_text(text.replace("a and b", "a or b"))
>>> verify_definitions(net, wrong).verdicts()
{'m': 'different', 'y': 'different'}
"""

from __future__ import annotations

import dataclasses
import time
from collections.abc import Callable, Sequence
from functools import partial
from typing import Any

from ..errors import UsageError
from ..ir.network import Network, Output
from ..logic import RuleSource
from .auto import verify_network
from .report import OutputReport, Report

__all__ = ["verify_definitions", "definition_units", "as_definitions", "by_method",
           "DefinitionBackend"]

#: ``(network, source, names) -> {name: OutputReport}`` for the names given.
DefinitionBackend = Callable[[Network, Any, list[str]], dict[str, OutputReport]]


def definition_units(net: Network, source: Any) -> dict[str, str]:
    """``{definition: unit}`` for every definition of the rule file that the network has a
    unit for: a neuron of that name, else an output of that name (its source).

    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic import source_from_text
    >>> text = "input a, b, c\\nm = a and b\\ny = m or c\\n"
    >>> definition_units(compile_rules(text, synthesis=False), source_from_text(text))
    {'m': 'm', 'y': 'y'}
    """
    program = getattr(source, "program", None)
    if program is None:
        raise UsageError("per-definition checks need a rule file (a netlist has no definitions)",
                         file=getattr(source, "file", None))
    neurons = {n.name for n in net.neurons}
    outputs = {o.name: o.source for o in net.outputs}
    found = {}
    for name in program.order:
        if name in neurons:
            found[name] = name
        elif name in outputs:
            found[name] = outputs[name]
    return found


def as_definitions(net: Network, source: Any, names: Sequence[str]) -> tuple[Network, Any]:
    """The network and the rule source with their outputs moved to the definitions ``names``
    (each must have a unit, see :func:`definition_units`).

    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic import source_from_text
    >>> text = "input a, b, c\\nm = a and b\\ny = m or c\\n"
    >>> n2, s2 = as_definitions(compile_rules(text, synthesis=False), source_from_text(text),
    ...                         ["m"])
    >>> n2.output_names, s2.outputs
    (('m',), ('m',))
    """
    units = definition_units(net, source)
    missing = [n for n in names if n not in units]
    if missing:
        raise UsageError(f"no unit computes the definition(s) {', '.join(missing)}")
    program = dataclasses.replace(source.program, outputs=tuple(names))
    derived = RuleSource(source.file, source.text, program)
    outputs = tuple(Output(n, units[n]) for n in names)
    return dataclasses.replace(net, outputs=outputs), derived


def by_method(net: Network, source: Any, names: list[str], *, method: str = "auto",
              max_inputs: int = 24, time_limit: float = 60.0) -> dict[str, OutputReport]:
    """The default backend: :func:`verify_network` on the networks of :func:`as_definitions`.

    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic import source_from_text
    >>> text = "input a, b, c\\nm = a and b\\ny = m or c\\n"
    >>> by_method(compile_rules(text, synthesis=False), source_from_text(text), ["m"])["m"].verdict
    'equal'
    """
    if not names:
        return {}
    n2, s2 = as_definitions(net, source, names)
    report = verify_network(n2, s2, method=method, max_inputs=max_inputs, time_limit=time_limit)
    by_name = {o.name: o for o in report.outputs}
    return {n: by_name.get(n) or OutputReport.undecided(n, "; ".join(report.notes) or
                                                         f"{report.method}: not decided")
            for n in names}


def verify_definitions(
    net: Network,
    source: Any,
    *,
    names: Sequence[str] | None = None,
    backend: DefinitionBackend | None = None,
    method: str = "auto",
    max_inputs: int = 24,
    time_limit: float = 60.0,
) -> Report:
    """Which definitions of ``source`` the network still computes, one verdict per name.

    Parameters
    ----------
    net
        A network that keeps units named after definitions (e.g. compiled with
        ``synthesis=False``, then trained).
    source
        The rule file (a netlist has no definitions: UsageError).
    names
        The definitions to check (default: every definition, in dependency order).
    backend
        A :data:`DefinitionBackend`; default :func:`by_method` with ``method``,
        ``max_inputs`` and ``time_limit``.

    Returns
    -------
    Report
        ``outputs`` holds one :class:`OutputReport` per definition (a definition without a
        unit is undecided); ``method`` is ``definitions`` plus the backend's methods.

    Examples
    --------
    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic import source_from_text
    >>> text = "input a, b, c\\nm = a and b\\ny = m or c\\n"
    >>> verify_definitions(compile_rules(text, synthesis=False), source_from_text(text)).result
    'equal'
    """
    t0 = time.perf_counter()
    units = definition_units(net, source)
    wanted = list(source.program.order if names is None else names)
    unknown = [n for n in wanted if n not in source.program.definitions]
    if unknown:
        raise UsageError(f"not a definition of the rule file: {', '.join(unknown)}",
                         file=getattr(source, "file", None))
    run = backend or partial(by_method, method=method, max_inputs=max_inputs,
                             time_limit=time_limit)
    checked = run(net, source, [n for n in wanted if n in units])
    outputs = [checked[n] if n in units else OutputReport.undecided(
        n, f"no unit named {n!r}: the definition was merged into other neurons")
        for n in wanted]
    name = getattr(run, "__name__", None) or getattr(getattr(run, "func", None), "__name__", "")
    label = method if backend is None else name
    return Report.of(f"definitions:{label}", 0, outputs, seconds=time.perf_counter() - t0)

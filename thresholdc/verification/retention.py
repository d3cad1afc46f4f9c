"""Retention: which definitions of a rule file a trained network still computes, decided
definition by definition.

:func:`retained_definitions` asks of every definition that has a unit of its own in the
network (:func:`thresholdc.verification.definitions.definition_units`: the neuron named after
it) whether that unit, read against the decision threshold, computes the definition's rules
over the same domain, through
:func:`~thresholdc.verification.definitions.verify_definitions` with
:func:`~thresholdc.verification.trained.verify_trained` as its backend (the per-output check of
trained networks).
"""

from __future__ import annotations

from typing import Any

from ..ir.network import Network
from .definitions import as_definitions, verify_definitions
from .report import OutputReport
from .trained import verify_trained

__all__ = ["retained_definitions"]


def _trained_backend(**limits: Any) -> Any:
    """A per-definition backend for :func:`verify_definitions`: :func:`verify_trained` on
    the network with its outputs moved to the definition units."""

    def trained(net: Network, source: Any, names: list[str]) -> dict[str, OutputReport]:
        if not names:
            return {}
        n2, s2 = as_definitions(net, source, names)
        report = verify_trained(n2, s2, **limits)
        return {o.name: o for o in report.outputs}

    return trained


def retained_definitions(
    network: Network, source: Any, names: list[str] | None = None, **limits: Any,
) -> dict[str, OutputReport]:
    """Which definitions of ``source`` the network's units still compute.

    Parameters
    ----------
    network : Network
        A network that keeps one unit per definition (named after it), compiled or trained.
    source : RuleSource
    names : list of str, optional
        The definitions to check (default: every definition, in dependency order).
    **limits
        ``max_nodes``, ``time_limit``, ``progress`` as for :func:`verify_trained` (the time
        limit is for all definitions together).

    Returns
    -------
    dict
        ``{definition: OutputReport}``; a definition without a unit of its own is
        ``undecided`` with that as its bound.

    Raises
    ------
    UsageError
        A name that is not a definition of the rule file.

    Examples
    --------
    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> text = "input c: {r, g, b}, a, e\\nhot = atleast(2, c == r, a, e)\\ny = hot xor a\\n"
    >>> net = compile_rules(text, synthesis=False)
    >>> other = source_from_text(text.replace("c == r", "c in {r, g}"))
    >>> {d: o.verdict for d, o in retained_definitions(net, other).items()}
    {'hot': 'different', 'y': 'different'}
    """
    report = verify_definitions(network, source, names=names,
                                backend=_trained_backend(**limits))
    return {o.name: o for o in report.outputs}

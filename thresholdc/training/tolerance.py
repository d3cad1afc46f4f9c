"""How far a starting network is from its rules: the worst output error on the rule domain.

Where the rule domain is small enough (Boolean and categorical inputs, at most
:data:`MAX_ENUMERATED` assignments) every assignment is evaluated and the worst
``|output − rule value|`` is exact.  Otherwise the branch-and-bound verifier
(:func:`thresholdc.verification.bounds.verify_bounds`) bounds it: on agreement the worst error is
at most ``0.5 − min_value_distance`` (for real inputs: outside a band of ± scale around each rule
threshold, as that verifier states).  A start whose worst error is below 0.5 decides every
rule as written.

>>> from thresholdc.logic import source_from_text
>>> from thresholdc.training.kbstart import rule_network
>>> src = source_from_text("input a, b\\ny = a and b\\n")
>>> t = start_tolerance(rule_network(src.program, weight=4.0), src)
>>> t["method"], round(t["worst_error"], 4), t["decides_rules"]
('exhaustive', 0.1192, True)
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import VerificationUndecided
from ..ir.network import Network
from ..verification import boolean_or_typed_domain, network_rows, verify_bounds

__all__ = ["MAX_ENUMERATED", "start_tolerance"]

MAX_ENUMERATED = 1 << 16


def _exhaustive(net: Network, source: Any) -> dict[str, Any] | None:
    program = getattr(source, "program", None)
    if program is not None and any(v.kind == "real" for v in program.inputs):
        return None
    domain = boolean_or_typed_domain(source)
    if domain.size > MAX_ENUMERATED:
        return None
    X = domain.unit_rows(domain.enumerate(0, domain.size))
    out = net.evaluate(network_rows(net, domain, X))
    ref = np.asarray(source.evaluate(X), dtype=float)
    if net.encoding == "bipolar":
        ref = 2.0 * ref - 1.0
    worst = np.abs(out - ref).max(axis=0)
    return {
        "method": "exhaustive",
        "assignments": int(domain.size),
        "worst_error": float(worst.max(initial=0.0)),
        "outputs": {o: float(w) for o, w in zip(net.output_names, worst, strict=True)},
        "decides_rules": bool(np.all(net.decide(network_rows(net, domain, X)) == (ref > 0))),
    }


def start_tolerance(net: Network, source: Any, *, time_limit: float = 1.0) -> dict[str, Any]:
    """The worst output error of ``net`` against ``source`` on the rule domain.

    Parameters
    ----------
    net : Network
        A soft network (sigmoid outputs in the binary encoding) with the source's inputs and
        outputs.
    source : RuleSource
        The rules.
    time_limit : float
        Seconds the bounds search may take where the domain is not enumerated.

    Returns
    -------
    dict
        ``method`` (``exhaustive`` or ``bounds``), ``worst_error`` (exact, an upper bound, or
        None when the search was stopped), ``decides_rules`` (every rule decided as written,
        or None when unknown) and, per output, its worst error where known.
    """
    exact = _exhaustive(net, source)
    if exact is not None:
        return exact
    if time_limit <= 0:
        return {"method": "bounds", "worst_error": None, "decides_rules": None,
                "note": "not bounded (no time given)"}
    try:
        report = verify_bounds(net, source, time_limit=time_limit, max_nodes=50_000)
    except VerificationUndecided as exc:
        return {"method": "bounds", "worst_error": None, "decides_rules": None,
                "note": str(exc)}
    if any(o.verdict == "different" for o in report.outputs):
        bad = sum(o.disagreements or 0 for o in report.outputs)
        return {"method": "bounds", "worst_error": None, "decides_rules": False,
                "disagreements": int(bad)}
    if not report.equal:  # some output left open by a limit
        return {"method": "bounds", "worst_error": None, "decides_rules": None,
                "note": "not bounded within the time given"}
    # the output values' distance from 0.5 (a step output's value is 0 or 1: distance 0.5)
    worst = {o.name: 0.5 - float(o.min_value_distance if o.min_value_distance is not None
                                 else 0.5 if o.min_margin is not None else 0.0)
             for o in report.outputs}
    return {"method": "bounds", "worst_error": max(worst.values(), default=0.0),
            "outputs": worst, "decides_rules": True}

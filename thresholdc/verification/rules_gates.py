"""The rules-to-gates step of the local check: the gate graph against the rule AST.

Output by output: exhaustively for at most :data:`RULES_EXHAUSTIVE_MAX` inputs (or up to
``max_inputs`` without python-sat), else by a SAT miter between the rule AST (encoded
independently of the lowering) and the gate graph.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..ir.gates import GateGraph
from .exhaustive import assignments
from .sat.method import gates_side, miter_summary, source_side
from .sat.miter import prove_equivalent

__all__ = ["rules_to_gates", "RULES_EXHAUSTIVE_MAX"]

RULES_EXHAUSTIVE_MAX = 16
_CHUNK = 1 << 16


def rules_to_gates(source: Any, graph: GateGraph, time_limit: float,
                    max_inputs: int) -> tuple[dict[str, str], str, list[dict[str, int]]]:
    """Check the gate graph against the rules, output by output: ({output: equal |
    different | undecided}, what was shown or what stopped the check, differing
    assignments)."""
    program = source.program
    inputs, outputs = list(source.inputs), list(source.outputs)
    if program.is_typed():
        return ({o: "undecided" for o in outputs},
                "typed inputs: the rules-to-gates step is not checked locally", [])
    n = len(inputs)
    try:
        import pysat  # noqa: F401

        have_sat = True
    except ImportError:
        have_sat = False
    if n <= RULES_EXHAUSTIVE_MAX or (not have_sat and n <= max_inputs):
        sig = dict(graph.outputs)
        total = 1 << n
        bad = np.zeros(len(outputs), dtype=bool)
        examples: list[dict[str, int]] = []
        for start in range(0, total, _CHUNK):
            X = assignments(n, start, min(total, start + _CHUNK))
            ref = np.asarray(source.evaluate(X), dtype=bool)
            got = graph.simulate(X, [sig[o] for o in outputs])
            diff = ref != got
            new = diff.any(axis=0) & ~bad
            for k in np.nonzero(new)[0]:
                r = int(np.nonzero(diff[:, k])[0][0])
                examples.append({u: int(X[r, i]) for i, u in enumerate(inputs)})
            bad |= new
        status = {o: "different" if b else "equal" for o, b in zip(outputs, bad.tolist())}
        return status, f"the gate graph equals the rules on all {total} assignments", examples
    if not have_sat:
        return ({o: "undecided" for o in outputs},
                f"{n} inputs and no python-sat: the rules-to-gates step is not checked", [])
    outcome = prove_equivalent(inputs, outputs, source_side(source), gates_side(graph),
                               time_limit=time_limit)
    status = {o: "equal" if o in outcome.proven else
              "different" if o in outcome.differing else "undecided" for o in outputs}
    if outcome.status == "equal":
        return status, f"the gate graph equals the rules (sat: {miter_summary(outcome)})", []
    return (status, "the rules-to-gates miter: " + ("; ".join(outcome.notes) or "not decided"),
            list(outcome.differing.values()))

"""SAT checks: a small circuit IR with CNF encodings, encoders, the miter, and the method.

``circuit`` (literals, nodes, CNF encodings of threshold constraints), ``encode`` (gate
graphs, step networks and rule ASTs into a circuit), ``miter`` (structural hashing,
sweeping, the solve in a child process), ``method`` (``verify_sat`` and the report of a
miter).  Import the modules for anything else than the names listed here.
"""

from .method import (
    confirm_counterexample,
    gates_side,
    miter_report,
    miter_summary,
    network_side,
    source_side,
    verify_sat,
)
from .miter import available_solvers, prove_equivalent

__all__ = [
    "available_solvers",
    "confirm_counterexample",
    "gates_side",
    "miter_report",
    "miter_summary",
    "network_side",
    "prove_equivalent",
    "source_side",
    "verify_sat",
]

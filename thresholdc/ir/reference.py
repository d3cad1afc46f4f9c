"""What verification needs from the thing a network is checked against.

A network is compiled from, and verified against, a *reference*: a rule file or a netlist.
:class:`Reference` is the protocol every verifier and the compiler read; the rule source and
the netlist source in :mod:`thresholdc.logic.source` implement it.  Exactly one of
``program`` (a rule file) and ``netlist`` (a netlist) is set.

>>> from thresholdc.ir.gates import GateGraph
>>> isinstance(object(), Reference)
False
"""

from __future__ import annotations

from typing import Any, Protocol, runtime_checkable

import numpy as np

from .gates import GateGraph
from .program import Program

__all__ = ["Reference"]


@runtime_checkable
class Reference(Protocol):
    """A parsed rule file or netlist: its units, its own evaluator and its gate graph.

    ``inputs`` are the network's input units (for typed rules, one-hot units such as
    ``colour=red``) and ``outputs`` the output names, both in source order.
    """

    file: str
    text: str
    kind: str  # "rules", "bench" or "blif"

    @property
    def program(self) -> Program | None: ...

    @property
    def netlist(self) -> GateGraph | None: ...

    @property
    def sha256(self) -> str: ...

    @property
    def inputs(self) -> tuple[str, ...]: ...

    @property
    def outputs(self) -> tuple[str, ...]: ...

    @property
    def names(self) -> frozenset[str]: ...

    def gates(self, simplify_support: int | None = None) -> GateGraph: ...

    def gates_like(self, network: Any) -> GateGraph: ...

    def evaluate(self, X: Any) -> np.ndarray: ...

"""Sources: a rule file or a netlist, read once, with its reference evaluator and gate graph.

:func:`load_source` picks the reader by suffix (``.bench`` and ``.blif`` are netlists; anything
else is a rule file).  Both :class:`RuleSource` and :class:`NetlistSource` implement
:class:`thresholdc.ir.reference.Reference`: they know their input units and outputs, evaluate
themselves on input rows without going through any network (rules: the AST evaluated with
numpy; a netlist: simulated gate by gate), and give the gate graph synthesis starts from.

>>> src = source_from_text("input a, b\\ny = a and not b\\n", "demo.rules")
>>> src.inputs, src.outputs, src.evaluate([[1, 0], [1, 1]]).tolist()
(('a', 'b'), ('y',), [[True], [False]])
"""

from __future__ import annotations

import hashlib
import os
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import RuleError
from ..files import read_text
from ..ir.gates import GateGraph
from ..ir.program import Program
from ..ir.reference import Reference
from ..syntax import parse, parse_bench, parse_blif
from .lower import DEFAULT_SIMPLIFY_SUPPORT, input_units, lower_to_gates
from .reference import evaluate as evaluate_rules
from .typed import evaluate_units

__all__ = [
    "RuleSource", "NetlistSource", "source_from_text", "load_source", "read_source_text",
    "NETLIST_SUFFIXES",
]

NETLIST_SUFFIXES = (".bench", ".blif")
_NETLIST_READERS = {"bench": parse_bench, "blif": parse_blif}


def read_source_text(path: str) -> str:
    """The UTF-8 text of a source file, or a RuleError saying why it cannot be read."""
    return read_text(path, RuleError, keep_bom=True)


def _sha256(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


@dataclass
class RuleSource:
    """A parsed rule file (DESIGN.md §3)."""

    file: str
    text: str
    program: Program
    kind: str = "rules"
    netlist: None = None
    _gates: dict[int, GateGraph] = field(default_factory=dict, repr=False)

    @property
    def sha256(self) -> str:
        return _sha256(self.text)

    @property
    def inputs(self) -> tuple[str, ...]:
        return tuple(input_units(self.program))

    @property
    def outputs(self) -> tuple[str, ...]:
        return self.program.outputs

    @property
    def names(self) -> frozenset[str]:
        """Every name the source uses (helper neurons must avoid them)."""
        return frozenset(self.inputs) | frozenset(self.program.definitions) | frozenset(
            self.program.outputs
        )

    def gates(self, simplify_support: int | None = None) -> GateGraph:
        """The rules lowered to a gate graph (cached per option)."""
        k = DEFAULT_SIMPLIFY_SUPPORT if simplify_support is None else simplify_support
        if k not in self._gates:
            self._gates[k] = lower_to_gates(self.program, simplify_support=k)
        return self._gates[k]

    def gates_like(self, network: Any) -> GateGraph:
        """The gate graph built with the options recorded in ``network.meta``."""
        options = (getattr(network, "meta", None) or {}).get("options", {})
        return self.gates(options.get("simplify_support"))

    def evaluate(self, X: Any) -> np.ndarray:
        """Reference outputs ``(rows, outputs)`` of bool for input-unit rows ``X`` of 0/1."""
        X = np.asarray(X)
        if self.program.is_typed():
            return evaluate_units(self.program, X, self.inputs)
        return evaluate_rules(self.program, X)


@dataclass
class NetlistSource:
    """A parsed netlist (``.bench`` or ``.blif``): its gate graph is its own reference."""

    file: str
    text: str
    netlist: GateGraph
    kind: str = "bench"
    program: None = None

    @property
    def sha256(self) -> str:
        return _sha256(self.text)

    @property
    def inputs(self) -> tuple[str, ...]:
        return self.netlist.inputs

    @property
    def outputs(self) -> tuple[str, ...]:
        return tuple(name for name, _ in self.netlist.outputs)

    @property
    def names(self) -> frozenset[str]:
        """Every name the source uses (helper neurons must avoid them)."""
        return frozenset(self.netlist.gates)

    def gates(self, simplify_support: int | None = None) -> GateGraph:
        """The netlist itself (no lowering options apply)."""
        return self.netlist

    def gates_like(self, network: Any) -> GateGraph:
        """The netlist itself."""
        return self.netlist

    def evaluate(self, X: Any) -> np.ndarray:
        """Reference outputs ``(rows, outputs)`` of bool: the netlist simulated gate by gate."""
        return self.netlist.simulate(np.asarray(X))


def source_from_text(text: str, file: str = "<rules>", kind: str | None = None) -> Reference:
    """Parse ``text`` as a rule file or a netlist; ``kind`` defaults from ``file``'s suffix.

    >>> source_from_text("INPUT(a)\\nOUTPUT(y)\\ny = NOT(a)\\n", "n.bench").kind
    'bench'
    """
    if kind is None:
        suffix = os.path.splitext(file)[1].lower()
        kind = suffix[1:] if suffix in NETLIST_SUFFIXES else "rules"
    try:
        if kind == "rules":
            return RuleSource(file, text, parse(text, file))
        return NetlistSource(file, text, _NETLIST_READERS[kind](text, file), kind)
    except RuleError as err:
        raise err.with_file(file, text) from None


def load_source(path: str) -> Reference:
    """Read and parse the rule file or netlist at ``path``.

    >>> import tempfile, os
    >>> p = os.path.join(tempfile.mkdtemp(), "x.rules")
    >>> _ = open(p, "w").write("input a\\ny = not a\\n")
    >>> load_source(p).outputs
    ('y',)
    """
    return source_from_text(read_source_text(path), path)

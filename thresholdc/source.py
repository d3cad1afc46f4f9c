"""Sources: a rule file or a netlist, read once, with its reference evaluator and gate graph.

:func:`load_source` picks the reader by suffix (``.bench`` and ``.blif`` are netlists; anything
else is a rule file).  A :class:`Source` knows its input units and outputs, evaluates itself on
input rows without going through any network (for rules: the AST evaluated with numpy; for a
netlist: the netlist simulated gate by gate), and lowers itself to a gate graph for synthesis.

>>> src = Source.from_text("input a, b\\ny = a and not b\\n", "demo.rules")
>>> src.inputs, src.outputs, src.evaluate([[1, 0], [1, 1]]).tolist()
(('a', 'b'), ('y',), [[True], [False]])
"""

from __future__ import annotations

import hashlib
import os
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .errors import RuleError
from .files import read_text
from .syntax.ast import Program
from .synth.gates import GateGraph

__all__ = ["Source", "load_source", "read_source_text", "NETLIST_SUFFIXES"]

NETLIST_SUFFIXES = (".bench", ".blif")


def read_source_text(path: str) -> str:
    """The UTF-8 text of a source file, or a RuleError saying why it cannot be read."""
    return read_text(path, RuleError, keep_bom=True)


@dataclass
class Source:
    """A parsed source.  ``kind`` is ``rules``, ``bench`` or ``blif``.

    ``inputs`` are the network's input units (for typed rules, one-hot units such as
    ``colour=red``), ``outputs`` the output names, both in source order.
    """

    file: str
    text: str
    kind: str
    program: Program | None = None
    netlist: GateGraph | None = None
    _gates: dict[int, GateGraph] = field(default_factory=dict, repr=False)

    @classmethod
    def from_text(cls, text: str, file: str = "<rules>", kind: str | None = None) -> Source:
        """Parse ``text``; ``kind`` defaults from ``file``'s suffix."""
        if kind is None:
            suffix = os.path.splitext(file)[1].lower()
            kind = suffix[1:] if suffix in NETLIST_SUFFIXES else "rules"
        try:
            if kind == "rules":
                from .syntax.parser import parse

                return cls(file, text, kind, program=parse(text, file))
            from .syntax import importers

            reader = importers.parse_bench if kind == "bench" else importers.parse_blif
            return cls(file, text, kind, netlist=reader(text, file))
        except RuleError as err:
            raise err.with_file(file, text) from None

    @property
    def sha256(self) -> str:
        return hashlib.sha256(self.text.encode("utf-8")).hexdigest()

    @property
    def inputs(self) -> tuple[str, ...]:
        if self.netlist is not None:
            return self.netlist.inputs
        from .logic.lower import input_units

        assert self.program is not None
        return tuple(input_units(self.program))

    @property
    def outputs(self) -> tuple[str, ...]:
        if self.netlist is not None:
            return tuple(name for name, _ in self.netlist.outputs)
        assert self.program is not None
        return self.program.outputs

    @property
    def names(self) -> frozenset[str]:
        """Every name the source uses (helper neurons must avoid them)."""
        if self.netlist is not None:
            return frozenset(self.netlist.gates)
        assert self.program is not None
        return frozenset(self.inputs) | frozenset(self.program.definitions) | frozenset(
            self.program.outputs
        )

    def gates(self, simplify_support: int | None = None) -> GateGraph:
        """The gate graph (a netlist is its own; rules are lowered, cached per option)."""
        if self.netlist is not None:
            return self.netlist
        from .logic.lower import DEFAULT_SIMPLIFY_SUPPORT, lower_to_gates

        k = DEFAULT_SIMPLIFY_SUPPORT if simplify_support is None else simplify_support
        if k not in self._gates:
            assert self.program is not None
            self._gates[k] = lower_to_gates(self.program, simplify_support=k)
        return self._gates[k]

    def gates_like(self, network: Any) -> GateGraph:
        """The gate graph built with the options recorded in ``network.meta``."""
        options = (getattr(network, "meta", None) or {}).get("options", {})
        return self.gates(options.get("simplify_support"))

    def evaluate(self, X: Any) -> np.ndarray:
        """Reference outputs ``(rows, outputs)`` of bool for input-unit rows ``X`` of 0/1."""
        X = np.asarray(X)
        if self.netlist is not None:
            return self.netlist.simulate(X)
        from .logic import reference

        assert self.program is not None
        if self.program.is_typed():
            from .logic.typed import evaluate_units

            return evaluate_units(self.program, X, self.inputs)
        return reference.evaluate(self.program, X)


def load_source(path: str) -> Source:
    """Read and parse the rule file or netlist at ``path``.

    >>> import tempfile, os
    >>> p = os.path.join(tempfile.mkdtemp(), "x.rules")
    >>> _ = open(p, "w").write("input a\\ny = not a\\n")
    >>> load_source(p).outputs
    ('y',)
    """
    return Source.from_text(read_source_text(path), path)

"""The gate graph: the common IR between front ends (rules, netlists) and synthesis.

A :class:`GateGraph` is a combinational circuit of named signals.  Each signal is driven by one
:class:`Gate`; ``gates`` is an insertion-ordered dict kept in topological order (every gate's
arguments come before it), so passes walk it with a plain loop and no recursion (netlists of
thousands of gates).  :meth:`GateGraph.to_networkx` gives a ``networkx.DiGraph`` (edges from
argument to gate) for graph algorithms.

Gate ops (``args`` are signal names, order matters)::

    input                      a primary input (no args)
    const    value             constant 0/1 (no args)
    buf, not                   one arg
    and, or, nand, nor         one or more args
    xor, xnor                  one or more args (n-ary parity and its negation)
    threshold weights, T       [Σ weights_i · args_i ≥ T]   (integers)
    equal     weights, T       [Σ weights_i · args_i == T]  (integers)
    ite                        args = (cond, then, else)
    realcmp  real_test=(op, c) [x > c] or [x < c] on one real input unit x (op ">" or "<";
                               ``>=``/``<=`` are the negations of ``<``/``>``)

``origin`` is the rule definition (or netlist signal) the gate belongs to, ``span`` its source
position when there is one.

>>> g = GateGraph.build(["a", "b"], [("y", "y")],
...                     [("y", Gate("and", ("a", "n"))), ("n", Gate("not", ("b",)))])
Traceback (most recent call last):
...
AssertionError: gate 'y' reads 'n' before it is defined
>>> g = GateGraph.build(["a", "b"], [("y", "y")],
...                     [("n", Gate("not", ("b",))), ("y", Gate("and", ("a", "n")))])
>>> g.simulate([[1, 0], [1, 1]]).tolist()
[[True], [False]]
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Any

import networkx as nx
import numpy as np

from ..errors import Span

__all__ = ["Gate", "GateGraph", "GATE_OPS"]

GATE_OPS = (
    "input", "const", "buf", "not", "and", "or", "nand", "nor", "xor", "xnor",
    "threshold", "equal", "ite", "realcmp",
)


@dataclass(frozen=True, slots=True)
class Gate:
    """One gate; see the module docstring for the ops and their parameters."""

    op: str
    args: tuple[str, ...] = ()
    weights: tuple[int, ...] | None = None
    threshold: int | None = None
    value: int | None = None
    origin: str | None = field(default=None, compare=False)
    span: Span | None = field(default=None, compare=False)
    real_test: tuple[str, float] | None = None

    def __repr__(self) -> str:
        if self.op == "realcmp" and self.real_test is not None:
            return f"[{self.args[0]} {self.real_test[0]} {self.real_test[1]!r}]"
        if self.op == "const":
            return f"const({self.value})"
        if self.op in ("threshold", "equal"):
            terms = " ".join(f"{w:+d}*{a}" for w, a in zip(self.weights or (), self.args))
            rel = ">=" if self.op == "threshold" else "=="
            return f"[{terms} {rel} {self.threshold}]"
        return f"{self.op}({', '.join(self.args)})"

    def key(self) -> tuple:
        """A hashable key of the gate's function and arguments (for structural hashing)."""
        return (self.op, self.args, self.weights, self.threshold, self.value, self.real_test)


@dataclass
class GateGraph:
    """Signals in topological order, the inputs in order, and the outputs.

    ``outputs`` holds ``(output name, signal)`` pairs: an output may read an input signal.
    """

    gates: dict[str, Gate]
    inputs: tuple[str, ...]
    outputs: tuple[tuple[str, str], ...]
    notes: tuple[str, ...] = ()

    @classmethod
    def build(
        cls,
        inputs: Iterable[str],
        outputs: Iterable[tuple[str, str]],
        gates: Iterable[tuple[str, Gate]],
    ) -> GateGraph:
        """A graph from inputs, outputs and ``(signal, gate)`` pairs in topological order."""
        inputs = tuple(inputs)
        table: dict[str, Gate] = {name: Gate("input") for name in inputs}
        for name, gate in gates:
            assert name not in table, f"signal {name!r} is driven twice"
            for a in gate.args:
                assert a in table, f"gate {name!r} reads {a!r} before it is defined"
            table[name] = gate
        graph = cls(table, inputs, tuple(outputs))
        graph.check()
        return graph

    def check(self) -> None:
        """Assert the invariants: ops known, arities right, topological order, outputs known."""
        seen: set[str] = set()
        for name, g in self.gates.items():
            assert g.op in GATE_OPS, f"unknown op {g.op!r} at {name!r}"
            for a in g.args:
                assert a in seen, f"gate {name!r} reads {a!r} before it is defined"
            if g.op in ("input", "const"):
                assert not g.args
            elif g.op in ("buf", "not"):
                assert len(g.args) == 1, name
            elif g.op == "realcmp":
                assert len(g.args) == 1 and self.gates[g.args[0]].op == "input", name
                assert g.real_test is not None and g.real_test[0] in (">", "<"), name
            elif g.op == "ite":
                assert len(g.args) == 3, name
            elif g.op in ("threshold", "equal"):
                assert g.weights is not None and len(g.weights) == len(g.args), name
                assert g.threshold is not None, name
            else:
                assert len(g.args) >= 1, name
            seen.add(name)
        for name in self.inputs:
            assert self.gates[name].op == "input", name
        for _, sig in self.outputs:
            assert sig in self.gates, f"output reads unknown signal {sig!r}"

    def __len__(self) -> int:
        return len(self.gates)

    def logic_gates(self) -> int:
        """The number of gates that are neither inputs, constants, buffers nor inverters."""
        return sum(g.op not in ("input", "const", "buf", "not") for g in self.gates.values())

    def to_networkx(self) -> nx.DiGraph:
        """A DiGraph with an edge from each argument to its gate; node attribute ``gate``."""
        G = nx.DiGraph()
        for name, g in self.gates.items():
            G.add_node(name, gate=g)
            for a in g.args:
                G.add_edge(a, name)
        return G

    def fanouts(self) -> dict[str, list[str]]:
        """For each signal, the gates that read it (in order)."""
        out: dict[str, list[str]] = {name: [] for name in self.gates}
        for name, g in self.gates.items():
            for a in g.args:
                out[a].append(name)
        return out

    def simulate(self, X: Any, signals: Iterable[str] | None = None) -> np.ndarray:
        """Boolean values, ``(rows, outputs)``, or ``(rows, len(signals))`` for chosen signals.

        ``X`` is ``(rows, inputs)`` of 0/1 (a real input unit read by ``realcmp``: its raw
        value).  Vectorised over rows; one loop over gates.
        """
        raw = np.asarray(X, dtype=float)
        X = raw.astype(bool)
        vals: dict[str, np.ndarray] = {}
        for i, name in enumerate(self.inputs):
            vals[name] = X[:, i]
        rows = X.shape[0]
        for name, g in self.gates.items():
            if g.op == "input":
                continue
            if g.op == "realcmp":
                x = raw[:, self.inputs.index(g.args[0])]
                op, c = g.real_test or (">", 0.0)
                vals[name] = x > c if op == ">" else x < c
                continue
            vals[name] = _gate_value(g, [vals[a] for a in g.args], rows)
        wanted = [s for _, s in self.outputs] if signals is None else list(signals)
        if not wanted:
            return np.zeros((rows, 0), dtype=bool)
        return np.stack([vals[s] for s in wanted], axis=1)


def _gate_value(g: Gate, args: list[np.ndarray], rows: int) -> np.ndarray:
    """The value of one gate over all rows, from its argument columns."""
    op = g.op
    if op == "const":
        return np.full(rows, bool(g.value))
    if op == "buf":
        return args[0]
    if op == "not":
        return ~args[0]
    if op in ("and", "nand"):
        v = np.logical_and.reduce(args)
        return ~v if op == "nand" else v
    if op in ("or", "nor"):
        v = np.logical_or.reduce(args)
        return ~v if op == "nor" else v
    if op in ("xor", "xnor"):
        v = np.logical_xor.reduce(args)
        return ~v if op == "xnor" else v
    if op == "ite":
        return np.where(args[0], args[1], args[2])
    s = np.zeros(rows, dtype=np.int64)
    for w, a in zip(g.weights or (), args):
        s += w * a
    return s >= g.threshold if op == "threshold" else s == g.threshold  # type: ignore[operator]

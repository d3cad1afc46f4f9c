"""Shared machinery of the netlist importers: positions, checks and topological order.

Both importers fill a :class:`NetlistBuilder` with inputs, outputs and gates (in file order,
each with its source position) and call :meth:`NetlistBuilder.finish`, which checks the
netlist and returns a :class:`~thresholdc.ir.gates.GateGraph` in topological order.

The checks, in the order they are reported (each error names the line and column):

1. an empty netlist (no outputs) has no position;
2. a use of a signal that is neither an input nor driven by a gate, at the first such use in
   file order (gate arguments first, then outputs);
3. a combinational cycle, at its first member in file order, listing the cycle.

A signal driven twice is reported by :meth:`NetlistBuilder.add_gate` / ``add_input`` at the
second driver.
"""

from __future__ import annotations

from ... import textlines
from ...errors import RuleError, Span
from ...ir.gates import Gate, GateGraph

__all__ = ["NetlistBuilder", "split_lines", "gate"]


def split_lines(text: str) -> list[str]:
    """The physical lines of ``text``: LF, CRLF and a bare CR each end one, as in rule files
    (``thresholdc.textlines``); a leading BOM is dropped.

    >>> split_lines("\\ufeffINPUT(a)\\rOUTPUT(a)\\r\\n")
    ['INPUT(a)', 'OUTPUT(a)', '']
    """
    if text.startswith("\ufeff"):
        text = text[1:]
    return textlines.split_lines(text)


class NetlistBuilder:
    """Collects one netlist's signals with their positions; see the module docstring."""

    def __init__(self, file: str, lines: list[str], kind: str) -> None:
        self.file = file
        self.lines = lines
        self.kind = kind
        self.inputs: list[str] = []
        self.outputs: list[tuple[str, int, int]] = []
        self._output_set: set[str] = set()
        # signal -> (gate, line, column, positions of its arguments)
        self.gates: dict[str, tuple[Gate, int, int, tuple[tuple[int, int], ...]]] = {}
        self._input_pos: dict[str, tuple[int, int]] = {}
        self.used: set[str] = set()

    # ------------------------------------------------------------------ errors
    def error(self, message: str, line: int | None = None, column: int | None = None) -> RuleError:
        """A RuleError at ``line``/``column`` (1-based) of this netlist."""
        source_line = None
        if line is not None and 1 <= line <= len(self.lines):
            source_line = self.lines[line - 1]
        return RuleError(
            message, file=self.file, line=line, column=column, source_line=source_line
        )

    # ------------------------------------------------------------------ filling
    def _driven_at(self, name: str) -> tuple[int, int] | None:
        if name in self._input_pos:
            return self._input_pos[name]
        if name in self.gates:
            _, line, col, _ = self.gates[name]
            return line, col
        return None

    def add_input(self, name: str, line: int, column: int) -> None:
        """Declare a primary input."""
        first = self._driven_at(name)
        if first is not None:
            what = "an input" if name in self._input_pos else "a gate output"
            raise self.error(
                f"signal {name!r} is declared as an input but is already {what} "
                f"(line {first[0]})",
                line,
                column,
            )
        self._input_pos[name] = (line, column)
        self.inputs.append(name)
        self.used.add(name)

    def add_output(self, name: str, line: int, column: int) -> None:
        """Declare a primary output (read from the signal of the same name)."""
        if name in self._output_set:
            raise self.error(f"output {name!r} is listed twice", line, column)
        self._output_set.add(name)
        self.outputs.append((name, line, column))
        self.used.add(name)

    def add_gate(
        self,
        name: str,
        gate: Gate,
        line: int,
        column: int,
        arg_positions: tuple[tuple[int, int], ...],
    ) -> None:
        """Add the gate driving ``name``; ``arg_positions`` gives each argument's position."""
        first = self._driven_at(name)
        if first is not None:
            what = "an input" if name in self._input_pos else "driven by a gate"
            raise self.error(
                f"signal {name!r} is driven twice (it is already {what} at line {first[0]})",
                line,
                column,
            )
        assert len(arg_positions) == len(gate.args)
        self.gates[name] = (gate, line, column, arg_positions)
        self.used.add(name)
        self.used.update(gate.args)

    def fresh(self, stem: str) -> str:
        """A signal name not used anywhere in the netlist: ``stem``, else ``stem~2``, ``~3``…"""
        name, k = stem, 2
        while name in self.used:
            name = f"{stem}~{k}"
            k += 1
        self.used.add(name)
        return name

    # ------------------------------------------------------------------ finishing
    def finish(self) -> GateGraph:
        """Check the netlist and return its gate graph in topological order."""
        if not self.outputs:
            raise self.error(f"empty netlist: no outputs are declared in this {self.kind} file")
        defined = set(self._input_pos) | set(self.gates)
        for _, (gate, _, _, positions) in self.gates.items():
            for a, (line, col) in zip(gate.args, positions):
                if a not in defined:
                    raise self.error(
                        f"signal {a!r} is used but never driven (not an input nor a gate output)",
                        line,
                        col,
                    )
        for name, line, col in self.outputs:
            if name not in defined:
                raise self.error(
                    f"output {name!r} is never driven (not an input nor a gate output)", line, col
                )
        order = self._topological_order()
        gates = [(name, self.gates[name][0]) for name in order]
        outputs = [(name, name) for name, _, _ in self.outputs]
        return GateGraph.build(self.inputs, outputs, gates)

    def _topological_order(self) -> list[str]:
        """Gates ordered so that each comes after its arguments; file order where possible.

        Iterative depth-first search over the gates in file order, visiting arguments in
        order (no recursion, linear time).  A gate met again while still on the stack closes
        a combinational cycle, which is reported at its first member in file order.
        """
        WHITE, GREY, BLACK = 0, 1, 2
        state = dict.fromkeys(self.gates, WHITE)
        order: list[str] = []
        for root in self.gates:
            if state[root] != WHITE:
                continue
            state[root] = GREY
            stack: list[tuple[str, int]] = [(root, 0)]
            while stack:
                name, i = stack[-1]
                args = self.gates[name][0].args
                if i == len(args):
                    stack.pop()
                    state[name] = BLACK
                    order.append(name)
                    continue
                stack[-1] = (name, i + 1)
                a = args[i]
                s = state.get(a)
                if s is None or s == BLACK:  # an input, or already placed
                    continue
                if s == GREY:
                    names = [n for n, _ in stack]
                    self._raise_cycle(names[names.index(a):])
                state[a] = GREY
                stack.append((a, 0))
        return order

    def _raise_cycle(self, cycle: list[str]) -> None:
        """Raise the error for a cycle (``cycle[i]`` reads ``cycle[i+1]``, the last reads the
        first), positioned at its member that comes first in the file."""
        first = min(cycle, key=lambda n: self.gates[n][1:3])
        k = cycle.index(first)
        # Present the cycle in the direction of data flow, starting at the first member.
        path = cycle[k:] + cycle[:k]
        flow = [path[0]] + list(reversed(path[1:]))
        text = " -> ".join(flow + [flow[0]])
        _, line, col, _ = self.gates[first]
        raise self.error(f"combinational cycle: {text}", line, col)


def gate(op: str, args: tuple[str, ...], name: str, line: int, column: int, **params) -> Gate:
    """A gate with its origin (the netlist signal) and source position set."""
    return Gate(op, args, origin=name, span=Span(line, column), **params)

"""Reader of the ISCAS ``.bench`` netlist format (combinational part).

The format, one statement per line, ``#`` to the end of a line is a comment::

    INPUT(G1)
    OUTPUT(G22)
    G10 = NAND(G1, G3)

Gate operators (case-insensitive): AND, NAND, OR, NOR, XOR, XNOR (one or more arguments;
XOR/XNOR of several arguments is their parity and its negation), NOT, BUF/BUFF (exactly one).
Gates may appear in any order.  Signal names are kept verbatim; they may contain any
character other than white space, ``,`` and ``#`` (and a gate's name may not contain ``=``
followed by white space).  Sequential elements (``DFF``) are refused with an error naming
the line: only combinational netlists are compiled.

>>> g = parse_bench("INPUT(a)\\nINPUT(b)\\nOUTPUT(y)\\ny = NAND(a, n)\\nn = NOT(b)\\n", "t.bench")
>>> list(g.gates), g.outputs
(['a', 'b', 'n', 'y'], (('y', 'y'),))
>>> g.simulate([[1, 0], [1, 1]]).tolist()
[[False], [True]]
"""

from __future__ import annotations

import re

from ...ir.gates import GateGraph
from ._netlist import NetlistBuilder, gate, split_lines

__all__ = ["parse_bench", "BENCH_OPS"]

#: Operator names of the format and the gate-graph op each becomes.
BENCH_OPS = {
    "AND": "and",
    "NAND": "nand",
    "OR": "or",
    "NOR": "nor",
    "XOR": "xor",
    "XNOR": "xnor",
    "NOT": "not",
    "BUF": "buf",
    "BUFF": "buf",
}
_SEQUENTIAL = {"DFF", "DFFR", "DFFS", "DFFSR", "LATCH", "SDFF"}
_UNARY = {"not", "buf"}

_PORT = re.compile(r"\s*(INPUT|OUTPUT)\s*\((.*)\)\s*$", re.IGNORECASE)
_ASSIGN = re.compile(r"\s*(\S+?)\s*=\s*([A-Za-z_][A-Za-z0-9_]*)\s*\((.*)\)\s*$")
_NAME = re.compile(r"\S+")


def parse_bench(text: str, file: str) -> GateGraph:
    """Parse ``.bench`` text into a gate graph (inputs, outputs and gates in topological order).

    Parameters
    ----------
    text
        The netlist text (LF, CRLF or bare CR line endings).
    file
        The file name used in error messages.

    Returns
    -------
    GateGraph
        Signals named as in the netlist; each output ``(name, name)``.

    Raises
    ------
    RuleError
        At the offending line and column: a syntax error, an unknown or sequential operator,
        an undefined signal, a signal driven twice, a combinational cycle; without a position
        for an empty netlist.

    Examples
    --------
    >>> parse_bench("INPUT(a)\\nOUTPUT(y)\\ny = DFF(a)\\n", "r.bench")
    Traceback (most recent call last):
    ...
    thresholdc.errors.RuleError: r.bench:3:5: sequential element DFF is not supported \
(only combinational netlists can be compiled)
    """
    lines = split_lines(text)
    b = NetlistBuilder(file, lines, "bench")
    for ln, raw in enumerate(lines, start=1):
        cut = raw.find("#")
        body = raw if cut < 0 else raw[:cut]
        if not body.strip():
            continue
        m = _PORT.match(body)
        if m:
            _port(b, m, ln)
            continue
        m = _ASSIGN.match(body)
        if m:
            _assignment(b, m, ln)
            continue
        col = len(body) - len(body.lstrip()) + 1
        raise b.error("expected INPUT(name), OUTPUT(name) or 'name = OP(args)'", ln, col)
    return b.finish()


def _port(b: NetlistBuilder, m: re.Match, ln: int) -> None:
    """An ``INPUT(x)`` or ``OUTPUT(x)`` line."""
    inner = m.group(2)
    names = list(_NAME.finditer(inner))
    start = m.start(2) + 1
    if len(names) != 1 or "," in inner:
        col = start + (names[1].start() if len(names) > 1 else 0)
        raise b.error(f"{m.group(1).upper()}(...) takes exactly one signal name", ln, col)
    name, col = names[0].group(), start + names[0].start()
    if m.group(1).upper() == "INPUT":
        b.add_input(name, ln, col)
    else:
        b.add_output(name, ln, col)


def _assignment(b: NetlistBuilder, m: re.Match, ln: int) -> None:
    """A ``name = OP(a, b, …)`` line."""
    name, word = m.group(1), m.group(2)
    op_col = m.start(2) + 1
    key = word.upper()
    if key in _SEQUENTIAL:
        raise b.error(
            f"sequential element {word} is not supported "
            "(only combinational netlists can be compiled)",
            ln,
            op_col,
        )
    op = BENCH_OPS.get(key)
    if op is None:
        known = ", ".join(sorted(BENCH_OPS))
        raise b.error(f"unknown gate type {word!r}; known: {known}", ln, op_col)
    args, positions = [], []
    inner, base = m.group(3), m.start(3) + 1
    offset = 0
    for piece in inner.split(","):
        found = list(_NAME.finditer(piece))
        if len(found) != 1:
            col = base + offset + (found[1].start() if len(found) > 1 else len(piece) - len(
                piece.lstrip()))
            what = "a signal name" if not found else "',' between signal names"
            raise b.error(f"expected {what} in the arguments of {word}", ln, col)
        args.append(found[0].group())
        positions.append((ln, base + offset + found[0].start()))
        offset += len(piece) + 1
    if op in _UNARY and len(args) != 1:
        raise b.error(f"{word} takes exactly one argument, got {len(args)}", ln, op_col)
    col = m.start(1) + 1
    b.add_gate(name, gate(op, tuple(args), name, ln, col), ln, col, tuple(positions))

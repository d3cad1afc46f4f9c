"""Reader of combinational BLIF (Berkeley Logic Interchange Format) netlists.

Supported: ``.model NAME`` (at most one), ``.inputs``/``.outputs`` (may repeat), ``.names
IN… OUT`` with a single-output cover, ``.end``; ``#`` comments; a ``\\`` at the end of a line
continues it.  Each cover row is an input plane of ``0``/``1``/``-`` (one character per input)
and an output bit; the rows of one cover are all ``1`` (the on-set: the output is the OR of
the rows) or all ``0`` (the off-set: the output is the NOR of the rows).  A cover without rows
is constant 0; ``.names y`` followed by ``1`` is constant 1.  Sequential elements
(``.latch``) and every other construct (``.subckt``, ``.gate``, …) are refused with an error
naming the line and column.

A cover becomes gates: one row with one literal a ``buf``/``not``, one row an ``and`` (a
``nand`` for the off-set), several rows an ``or`` (``nor``) of one ``and`` per row; negated
literals read a shared ``not`` gate.  The cover's gate is named after the ``.names`` output
verbatim; derived signals are ``OUT~k`` (row k) and ``SIG~n`` (a negation), made unique
against every name in the netlist.

>>> text = ".model m\\n.inputs a b\\n.outputs y\\n.names a b y\\n1- 1\\n-1 1\\n.end\\n"
>>> g = parse_blif(text, "t.blif")
>>> g.gates["y"]
or(a, b)
>>> g.simulate([[0, 0], [0, 1]]).tolist()
[[False], [True]]
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from ...ir.gates import GateGraph
from ._netlist import NetlistBuilder, gate, split_lines

__all__ = ["parse_blif"]

_TOKEN = re.compile(r"\S+")
_SEQUENTIAL = {".latch", ".mlatch"}


@dataclass
class _Cover:
    """One ``.names`` block as read: signals with positions, then its rows."""

    inputs: list[tuple[str, int, int]]
    output: tuple[str, int, int]
    rows: list[tuple[str, str, int, int]]  # plane, bit, line, column of the plane


def _logical_lines(lines: list[str]) -> list[list[tuple[str, int, int]]]:
    """Token lists (text, line, column) of each logical line: comments removed, lines ending
    in a backslash joined to the next."""
    out: list[list[tuple[str, int, int]]] = []
    current: list[tuple[str, int, int]] = []
    for ln, raw in enumerate(lines, start=1):
        cut = raw.find("#")
        body = raw if cut < 0 else raw[:cut]
        stripped = body.rstrip()
        more = stripped.endswith("\\")
        if more:
            stripped = stripped[:-1]
        current.extend((m.group(), ln, m.start() + 1) for m in _TOKEN.finditer(stripped))
        if not more and current:
            out.append(current)
            current = []
    if current:
        out.append(current)
    return out


def parse_blif(text: str, file: str) -> GateGraph:
    """Parse combinational BLIF text into a gate graph.

    Parameters
    ----------
    text
        The netlist text (LF, CRLF or bare CR line endings).
    file
        The file name used in error messages.

    Returns
    -------
    GateGraph
        Signals named as in the netlist (plus unique derived ``~`` names for cover rows and
        negations); each output ``(name, name)``.

    Raises
    ------
    RuleError
        At the offending line and column: an unsupported construct, ``.latch``, a malformed
        cover, an undefined signal, a signal driven twice, a combinational cycle; without a
        position for an empty netlist.

    Examples
    --------
    >>> parse_blif(".inputs a\\n.outputs q\\n.latch a q 0\\n", "s.blif")
    Traceback (most recent call last):
    ...
    thresholdc.errors.RuleError: s.blif:3:1: sequential element .latch is not supported \
(only combinational netlists can be compiled)
    """
    lines = split_lines(text)
    b = NetlistBuilder(file, lines, "BLIF")
    covers: list[_Cover] = []
    model_seen = False
    ended = False
    current: _Cover | None = None
    for tokens in _logical_lines(lines):
        word, ln, col = tokens[0]
        if ended:
            raise b.error("text after .end (only one model per file is supported)", ln, col)
        if not word.startswith("."):
            if current is None:
                raise b.error(
                    f"unexpected {word!r}: cover rows belong after a .names line", ln, col
                )
            current.rows.append(_row(b, current, tokens))
            continue
        current = None
        key = word.lower()
        rest = tokens[1:]
        if key == ".model":
            if model_seen:
                raise b.error("a second .model (only one model per file is supported)", ln, col)
            if len(rest) > 1:
                raise b.error(".model takes one name", rest[1][1], rest[1][2])
            model_seen = True
        elif key == ".inputs":
            for name, l2, c2 in rest:
                b.add_input(name, l2, c2)
        elif key == ".outputs":
            for name, l2, c2 in rest:
                b.add_output(name, l2, c2)
        elif key == ".names":
            if not rest:
                raise b.error(".names needs at least an output signal", ln, col)
            current = _Cover(list(rest[:-1]), rest[-1], [])
            covers.append(current)
            b.used.update(t[0] for t in rest)
        elif key == ".end":
            if rest:
                raise b.error(".end takes no arguments", rest[0][1], rest[0][2])
            ended = True
        elif key in _SEQUENTIAL:
            raise b.error(
                f"sequential element {word} is not supported "
                "(only combinational netlists can be compiled)",
                ln,
                col,
            )
        else:
            raise b.error(
                f"unsupported construct {word!r} (supported: .model, .inputs, .outputs, "
                ".names, .end)",
                ln,
                col,
            )
    negations: dict[str, str] = {}
    for cover in covers:
        _expand(b, cover, negations)
    return b.finish()


def _row(b: NetlistBuilder, cover: _Cover, tokens: list[tuple[str, int, int]]) -> tuple:
    """Check one cover row and return (plane, bit, line, column)."""
    n = len(cover.inputs)
    want = 2 if n else 1
    if len(tokens) != want:
        bad = tokens[want] if len(tokens) > want else tokens[-1]
        shape = "an input plane and an output bit" if n else "a single output bit"
        raise b.error(f"a cover row of this .names has {shape}", bad[1], bad[2])
    plane, ln, col = tokens[0] if n else ("", tokens[0][1], tokens[0][2])
    bit, bl, bc = tokens[-1]
    if len(plane) != n:
        raise b.error(f"the input plane has {len(plane)} characters, expected {n}", ln, col)
    for k, ch in enumerate(plane):
        if ch not in "01-":
            raise b.error(f"expected 0, 1 or - in a cover row, got {ch!r}", ln, col + k)
    if bit not in ("0", "1"):
        raise b.error(f"expected output bit 0 or 1, got {bit!r}", bl, bc)
    if cover.rows and cover.rows[0][1] != bit:
        raise b.error(
            "a cover mixes on-set (1) and off-set (0) rows; use one kind per .names", bl, bc
        )
    return plane, bit, ln, col


def _expand(b: NetlistBuilder, cover: _Cover, negations: dict[str, str]) -> None:
    """Add the gates of one cover; the last one drives the ``.names`` output."""
    out, oln, ocol = cover.output
    on_set = not cover.rows or cover.rows[0][1] == "1"
    cubes: list[list[tuple[int, bool]]] = []  # (input index, positive)
    for plane, _, _, _ in cover.rows:
        cubes.append([(i, ch == "1") for i, ch in enumerate(plane) if ch != "-"])
    if any(not c for c in cubes) or not cubes:
        # A row of only '-' is always true; no rows at all is always false.
        value = int(bool(cubes) == on_set)
        b.add_gate(out, gate("const", (), out, oln, ocol, value=value), oln, ocol, ())
        return

    def literal(i: int, positive: bool) -> tuple[str, tuple[int, int]]:
        name, ln, col = cover.inputs[i]
        if positive:
            return name, (ln, col)
        if name not in negations:
            neg = b.fresh(f"{name}~n")
            negations[name] = neg
            b.add_gate(neg, gate("not", (name,), out, ln, col), ln, col, ((ln, col),))
        return negations[name], (oln, ocol)

    def emit(name: str, op: str, lits: list[tuple[str, tuple[int, int]]]) -> None:
        args = tuple(a for a, _ in lits)
        b.add_gate(name, gate(op, args, out, oln, ocol), oln, ocol, tuple(p for _, p in lits))

    if len(cubes) == 1:
        cube = cubes[0]
        if len(cube) == 1:
            i, positive = cube[0]
            name, (ln, col) = cover.inputs[i][0], cover.inputs[i][1:]
            op = "buf" if positive == on_set else "not"
            b.add_gate(out, gate(op, (name,), out, oln, ocol), oln, ocol, ((ln, col),))
        else:
            emit(out, "and" if on_set else "nand", [literal(i, p) for i, p in cube])
        return
    terms = []
    for k, cube in enumerate(cubes, start=1):
        if len(cube) == 1:
            terms.append(literal(*cube[0]))
        else:
            name = b.fresh(f"{out}~{k}")
            emit(name, "and", [literal(i, p) for i, p in cube])
            terms.append((name, (oln, ocol)))
    emit(out, "or" if on_set else "nor", terms)

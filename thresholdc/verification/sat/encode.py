"""Encoders into the SAT circuit IR: a gate graph, a step network, and a rule program.

Each encoder takes a :class:`~thresholdc.verification.sat.circuit.Circuit` and the literals of the
primary inputs (by name) and returns the literal of every named signal, unit or definition.

* :func:`encode_gates`: one node per gate; ``threshold``/``equal`` gates use the circuit's
  automatic encoding (exact clauses or a BDD).
* :func:`encode_network`: each step neuron y ↔ [Σ w·x + b > 0].  Weights and bias are read as
  exact rationals (every float is one), scaled to integers, so the encoding is exact for any
  stored value; the automatic encoding applies.
* :func:`encode_program`: straight from the rule AST, sharing no code with the lowering to
  gates: connectives by Tseitin nodes, counting calls by a unary totalizer, weighted
  comparisons by a binary adder and comparator — encodings different from the network's, so
  the two sides of a miter do not share an encoding of the same constraint.

Unsupported inputs raise :class:`~thresholdc.errors.UsageError` (soft or bipolar networks,
typed inputs).

>>> from thresholdc.verification.sat.circuit import Circuit
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> c = Circuit()
>>> ins = {"a": c.new_input(), "b": c.new_input()}
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),), (Output("y", "y"),))
>>> encode_network(c, net, ins)["y"] == c.and_([ins["a"], ins["b"]])
True
"""

from __future__ import annotations

import math
from collections.abc import Callable
from fractions import Fraction
from typing import Any

from ...errors import UsageError
from ...ir import program as ast
from ...ir.gates import GateGraph
from ...ir.network import Network
from .circuit import FALSE, TRUE, Circuit

__all__ = ["encode_gates", "gate_literal", "encode_network", "encode_program",
           "check_step_network", "integer_threshold"]


def gate_literal(c: Circuit, g: Any, args: list[int], name: str = "?") -> int:
    """The literal of one gate of a gate graph, from its arguments' literals.

    >>> from thresholdc.ir.gates import Gate
    >>> c = Circuit()
    >>> a, b = c.new_input(), c.new_input()
    >>> gate_literal(c, Gate("nor", ("a", "b")), [a, b]) == -c.or_([a, b])
    True
    """
    op = g.op
    if op == "const":
        return TRUE if g.value else FALSE
    if op == "buf":
        return args[0]
    if op == "not":
        return -args[0]
    if op in ("and", "nand"):
        v = c.and_(args)
        return -v if op == "nand" else v
    if op in ("or", "nor"):
        v = c.or_(args)
        return -v if op == "nor" else v
    if op in ("xor", "xnor"):
        v = c.xor_(args)
        return -v if op == "xnor" else v
    if op == "threshold":
        return c.geq(g.weights or (), args, int(g.threshold or 0))
    if op == "equal":
        w, t = g.weights or (), int(g.threshold or 0)
        return c.and_([c.geq(w, args, t), -c.geq(w, args, t + 1)])
    if op == "ite":
        return c.ite(*args)
    raise UsageError(
        f"SAT verification cannot encode the gate op {op!r} (signal {name!r}); "
        "use the exhaustive method"
    )


def encode_gates(c: Circuit, graph: GateGraph, inputs: dict[str, int]) -> dict[str, int]:
    """The literal of every signal of ``graph`` (one loop over the gates, in order).

    >>> from thresholdc.ir.gates import Gate
    >>> g = GateGraph.build(["a"], [("n", "n")], [("n", Gate("not", ("a",)))])
    >>> c = Circuit()
    >>> encode_gates(c, g, {"a": c.new_input()})
    {'a': 2, 'n': -2}
    """
    lit: dict[str, int] = {}
    for name, g in graph.gates.items():
        if g.op == "input":
            lit[name] = inputs[name]
        else:
            lit[name] = gate_literal(c, g, [lit[a] for a in g.args], name)
    return lit


def check_step_network(net: Network) -> None:
    """Raise UsageError unless ``net`` is a binary step network with Boolean inputs.

    >>> from thresholdc.ir.network import Neuron, Output
    >>> check_step_network(Network(("a",), (Neuron("y", 1, ("a",), (1,), 0, "relu"),),
    ...                            (Output("y", "y"),)))
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: SAT and local verification need a step network; \
this one has relu neurons (verify a soft network exhaustively, or check its certificate)
    """
    soft = sorted({n.activation for n in net.neurons if n.activation != "step"})
    if soft:
        raise UsageError(
            f"SAT and local verification need a step network; this one has {', '.join(soft)} "
            "neurons (verify a soft network exhaustively, or check its certificate)"
        )
    if net.encoding != "binary":
        raise UsageError(
            f"SAT and local verification need the binary encoding, not {net.encoding!r}"
        )
    if net.features is not None:
        raise UsageError(
            "SAT and local verification handle Boolean inputs only; this network has typed "
            "inputs (verify it exhaustively)"
        )


def integer_threshold(weights: Any, bias: float) -> tuple[list[int], int]:
    """Integers (W, K) with Σ w·x + b > 0  ⇔  Σ W·x ≥ K on 0/1 inputs, exactly.

    >>> integer_threshold((1, 1), -1.5)
    ([2, 2], 4)
    """
    ws = [float(w) for w in weights]
    b2 = 2.0 * float(bias)
    if all(w.is_integer() and abs(w) < 2**52 for w in ws) and b2.is_integer() and abs(b2) < 2**52:
        # the usual case: integer weights, integer or half-integer bias (exact in floats)
        if float(bias).is_integer():
            return [int(w) for w in ws], 1 - int(bias)
        return [2 * int(w) for w in ws], 1 - int(b2)
    fr = [Fraction(w) for w in weights]
    fb = Fraction(bias)
    den = 1
    for f in fr + [fb]:
        den = den * f.denominator // math.gcd(den, f.denominator)
    W = [int(f * den) for f in fr]
    B = int(fb * den)
    return W, 1 - B


def encode_network(c: Circuit, net: Network, inputs: dict[str, int]) -> dict[str, int]:
    """The literal of every unit of a step network (inputs by name, then each neuron).

    >>> from thresholdc.ir.network import Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> c = Circuit()
    >>> encode_network(c, net, {"a": c.new_input()})
    {'a': 2, 'n': -2}
    """
    check_step_network(net)
    lit: dict[str, int] = {name: inputs[name] for name in net.inputs}
    for n in net.neurons:
        W, K = integer_threshold(n.weights, n.bias)
        lit[n.name] = c.geq(W, [lit[i] for i in n.inputs], K)
    return lit


def _count(c: Circuit, args: list[int], k: int) -> int:
    """[at least k of args] with the totalizer encoding."""
    return c.geq([1] * len(args), args, k, enc="totalizer")


def _combine(c: Circuit, e: ast.Expr, kids: list[int], names: dict[str, int],
             leaf: Callable[[Circuit, Any], int] | None = None) -> int:
    """The literal of ``e`` from the literals of its children (typed predicates by
    ``leaf``)."""
    if leaf is not None and isinstance(e, (ast.CategoryTest, ast.RealTest)):
        return leaf(c, e)
    if isinstance(e, ast.Name):
        return names[e.id]
    if isinstance(e, ast.Const):
        return TRUE if e.value else FALSE
    if isinstance(e, ast.Not):
        return -kids[0]
    if isinstance(e, ast.BinOp):
        a, b = kids
        if e.op == "and":
            return c.and_([a, b])
        if e.op == "or":
            return c.or_([a, b])
        if e.op == "xor":
            return c.xor_([a, b])
        if e.op == "implies":
            return c.or_([-a, b])
        if e.op == "iff":
            return -c.xor_([a, b])
    if isinstance(e, ast.Ite):
        return c.ite(*kids)
    if isinstance(e, ast.Call):
        n = len(kids)
        if e.func == "atleast":
            return _count(c, kids, int(e.k or 0))
        if e.func == "atmost":
            return -_count(c, kids, int(e.k or 0) + 1)
        if e.func == "exactly":
            k = int(e.k or 0)
            return c.and_([_count(c, kids, k), -_count(c, kids, k + 1)])
        if e.func == "majority":
            return _count(c, kids, n // 2 + 1)
        if e.func == "nand":
            return -c.and_(kids)
        if e.func == "nor":
            return -c.or_(kids)
        if e.func == "parity":
            return c.xor_(kids)
        raise ast.unknown_function(e.func)
    if isinstance(e, ast.Compare):
        w = [t.coef for t in e.terms]
        r = e.rhs

        def at_least(bound: int) -> int:
            return c.geq(w, kids, bound, enc="adder")

        if e.op == ">=":
            return at_least(r)
        if e.op == ">":
            return at_least(r + 1)
        if e.op == "<=":
            return -at_least(r + 1)
        if e.op == "<":
            return -at_least(r)
        eq = c.and_([at_least(r), -at_least(r + 1)])
        return eq if e.op == "==" else -eq
    raise UsageError(
        f"SAT verification cannot encode {type(e).__name__} expressions (typed inputs); "
        "use the exhaustive method"
    )


def encode_program(c: Circuit, program: ast.Program, inputs: dict[str, int],
                   leaf: Callable[[Circuit, Any], int] | None = None) -> dict[str, int]:
    """The literal of every Boolean input and needed definition of a rule program.

    Expressions are walked with an explicit stack (long chains do not recurse).  A typed
    program needs ``leaf``, which gives the literal of each categorical or real predicate
    (:mod:`.typed`); ``inputs`` then holds the Boolean inputs only.

    >>> from thresholdc.syntax.parser import parse
    >>> c = Circuit()
    >>> lits = encode_program(c, parse("input a, b\\ny = not (a or b)\\n"),
    ...                       {"a": c.new_input(), "b": c.new_input()})
    >>> lits["y"] == c.and_([-lits["a"], -lits["b"]])
    True
    """
    if program.is_typed() and leaf is None:
        raise UsageError(
            "SAT verification handles Boolean inputs only; this rule file has typed inputs "
            "(use the exhaustive method)"
        )
    names: dict[str, int] = {v.name: inputs[v.name] for v in program.inputs if v.kind == "bool"}
    for dname in program.order:
        root = program.definitions[dname].expr
        done: dict[int, int] = {}
        stack: list[tuple[ast.Expr, bool]] = [(root, False)]
        while stack:
            e, expanded = stack.pop()
            if id(e) in done:
                continue
            kids = ast.sub_expressions(e)
            if not expanded and kids:
                stack.append((e, True))
                stack.extend((k, False) for k in kids if id(k) not in done)
                continue
            done[id(e)] = _combine(c, e, [done[id(k)] for k in kids], names, leaf)
        names[dname] = done[id(root)]
    return names

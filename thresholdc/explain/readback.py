"""Reading a trained network's units back as rule expressions.

Each unit is read as the Boolean function it computes when every unit it reads is rounded to
0 or 1 (a soft unit counts as true above its decision point):

1. inputs whose weights can never change the decision are dropped, exactly: with the inputs
   sorted by ``|w|``, the smallest set of large weights is kept such that for every assignment
   of it the remaining small weights cannot move ``z`` across the decision point (at most
   :data:`~thresholdc.synth.identify.MAX_VARIABLES` inputs are kept);
2. the truth table on the kept inputs goes to :func:`thresholdc.synth.identify.identify`,
   whose minimal integer realisation is written as ``and`` / ``or`` / ``atleast`` when its
   weights are equal, else as a weighted comparison;
3. a unit named after a definition is read as that name by the units that read it; every other
   unit (a term, a relay, an extra unit) is written in place, inside brackets.

A unit that keeps more than 16 inputs after step 1 is written as a weighted comparison of its
weights rounded to integers and marked ``exact=False``.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b", "c"), (
...     Neuron("y", 1, ("a", "b", "c"), (4.1, 3.9, 0.02), -6.0, "sigmoid", origin="y"),),
...     (Output("y", "y"),))
>>> from thresholdc.explain.printer import expr_text
>>> expr_text(read_units(net, {"y"})["y"].expr)
'a and b'
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import UsageError
from ..ir.network import Network, Neuron
from ..ir.program import BinOp, Call, CategoryTest, Compare, Const, Expr, Name, Not, RealTest, Term
from ..synth import MAX_VARIABLES
from ..synth.identify import identify

__all__ = ["UnitReading", "decision_point", "kept_inputs", "threshold_expr", "negate",
           "read_units"]

#: Decision point of each activation in the binary encoding: the unit reads as true when
#: ``z`` exceeds it (its output then exceeds 0.5; a step unit: ``z > 0``).
_POINTS = {"step": 0.0, "sigmoid": 0.0, "tanh": math.atanh(0.5), "relu": 0.5, "linear": 0.5}


@dataclass(frozen=True)
class UnitReading:
    """One unit read back.

    ``expr`` is over input predicates and definition names (other units written in place);
    ``kept`` are the names of the inputs that can change the unit's decision; ``exact`` is
    False when the unit kept too many inputs to identify and ``expr`` rounds its weights.
    """

    name: str
    expr: Expr
    kept: tuple[str, ...]
    exact: bool = True


def decision_point(activation: str) -> float:
    """Where ``z`` must lie above for a unit with this activation to read as true.

    >>> decision_point("sigmoid"), decision_point("relu")
    (0.0, 0.5)
    """
    return _POINTS[activation]


def _subset_sums(w: np.ndarray) -> np.ndarray:
    """``Σ w_i x_i`` for every 0/1 ``x``, entry ``k`` at ``x_i = (k >> i) & 1``."""
    sums = np.zeros(1)
    for wi in w:
        sums = np.concatenate([sums, sums + wi])
    return sums


def kept_inputs(weights: np.ndarray, bias: float, point: float,
                limit: int = MAX_VARIABLES) -> list[int] | None:
    """The positions of the inputs that can change ``Σ w·x + bias > point`` on 0/1 inputs.

    Returns the smallest set of the largest weights outside which no assignment can move the
    sum across ``point`` (sorted positions), or None when more than ``limit`` are needed.

    >>> kept_inputs(np.array([4.0, 0.01, -3.9]), -2.0, 0.0)
    [0, 2]
    """
    w = np.asarray(weights, dtype=float)
    order = np.argsort(-np.abs(w), kind="stable")
    for k in range(min(len(w), limit) + 1):
        rest = w[order[k:]]
        lo, hi = np.minimum(rest, 0).sum(), np.maximum(rest, 0).sum()
        s = _subset_sums(w[order[:k]]) + bias
        if np.all((s + lo > point) | (s + hi <= point)):
            return sorted(int(i) for i in order[:k])
    return None


def negate(expr: Expr) -> Expr:
    """The negation of an expression, without a double ``not``.

    >>> negate(Not(Name("a"))), negate(Name("a"))
    (a, (not a))
    """
    if isinstance(expr, Not):
        return expr.operand
    if isinstance(expr, Const):
        return Const(not expr.value)
    if isinstance(expr, CategoryTest) and len(expr.values) == 1:
        return CategoryTest(expr.var, expr.values, not expr.negate)
    return Not(expr)


def _chain(op: str, items: list[Expr]) -> Expr:
    out = items[0]
    for e in items[1:]:
        out = BinOp(op, out, e)
    return out


def threshold_expr(operands: list[Expr], weights: tuple[int, ...], threshold: int) -> Expr:
    """``Σ weights_i · operands_i ≥ threshold`` as rule text's tree: a literal, ``and``,
    ``or``, ``atleast`` when the weights allow, else a weighted comparison.

    >>> from thresholdc.explain.printer import expr_text
    >>> a, b, c = Name("a"), Name("b"), Name("c")
    >>> expr_text(threshold_expr([a, b, c], (1, 1, -1), 1))
    'atleast(2, a, b, not c)'
    >>> expr_text(threshold_expr([a, b, c], (2, 1, 1), 2))
    '2*a + b + c >= 2'
    """
    pairs = [(e, int(w)) for e, w in zip(operands, weights) if w != 0]
    shift = sum(-w for _, w in pairs if w < 0)
    t = threshold + shift  # the threshold once negative weights read negated operands
    total = sum(abs(w) for _, w in pairs)
    if t <= 0:
        return Const(True)
    if t > total:
        return Const(False)
    mags = {abs(w) for _, w in pairs}
    if len(mags) == 1:
        p = mags.pop()
        lits = [e if w > 0 else negate(e) for e, w in pairs]
        k = -(-t // p)
        if len(lits) == 1:
            return lits[0]
        if k == len(lits):
            return _chain("and", lits)
        if k == 1:
            return _chain("or", lits)
        return Call("atleast", k, tuple(lits))
    return Compare(tuple(Term(w, e) for e, w in pairs), ">=", int(threshold))


def _leaf(unit: str, kinds: dict[str, str]) -> Expr:
    """The predicate an input unit stands for (``colour=red`` reads ``colour == red``)."""
    kind = kinds.get(unit, "bool")
    if kind == "categorical":
        var, _, value = unit.partition("=")
        return CategoryTest(var, (value,))
    return Name(unit)


def _unit_kinds(net: Network) -> dict[str, str]:
    kinds: dict[str, str] = {}
    for f in net.features or ():
        for u in f["units"]:
            kinds[u] = f["kind"]
    return kinds


def _rounded(n: Neuron, operands: list[Expr], idx: list[int] | None, point: float) -> Expr:
    """A unit with too many inputs: its weights rounded to integers (largest about 10)."""
    w = np.asarray(n.weights, dtype=float)
    keep = idx if idx is not None else [i for i in range(len(w)) if abs(w[i]) > 0]
    scale = 10.0 / max(float(np.abs(w).max()), 1e-12)
    coefs = [int(round(w[i] * scale)) for i in keep]
    pairs = [(c, operands[i]) for c, i in zip(coefs, keep) if c != 0]
    if not pairs:
        return Const(n.bias > point)
    rhs = int(math.floor((point - n.bias) * scale))  # Σ c·x > rhs
    if len(pairs) <= MAX_VARIABLES:  # the rounded unit, identified like any other
        sums = _subset_sums(np.array([c for c, _ in pairs], dtype=float))
        real = identify((sums > rhs).astype(np.uint8))
        assert real is not None
        return threshold_expr([e for _, e in pairs], real.weights, real.threshold)
    return Compare(tuple(Term(c, e) for c, e in pairs), ">", rhs)


def _real_test(n: Neuron, unit: str, w: float, point: float) -> Expr:
    """A unit reading one real input: ``x > c`` or ``x < c``."""
    c = (point - n.bias) / w
    return RealTest(unit, ">" if w > 0 else "<", round(c, 6))


def read_units(net: Network, names: set[str] | frozenset[str]) -> dict[str, UnitReading]:
    """Read back every unit of ``net`` named in ``names`` (the definition units).

    Parameters
    ----------
    net : Network
        A network in the binary encoding (step or soft units).
    names : set of str
        Units that stand for definitions: they are read back, and read as their name by the
        units that read them.

    Returns
    -------
    dict of name to UnitReading, in network order.

    Raises
    ------
    UsageError
        For a network in the bipolar encoding.

    Examples
    --------
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> from thresholdc.explain.printer import expr_text
    >>> net = Network(("a", "b"), (Neuron("t~1", 1, ("a", "b"), (4, 4), -2, "sigmoid"),
    ...     Neuron("y", 2, ("t~1", "a"), (4, -4), -2, "sigmoid")), (Output("y", "y"),))
    >>> expr_text(read_units(net, {"y"})["y"].expr)
    '(a or b) and not a'
    """
    if net.encoding != "binary":
        raise UsageError("reading units back needs the binary encoding (0/1 units)")
    kinds = _unit_kinds(net)
    reads: dict[str, Expr] = {u: _leaf(u, kinds) for u in net.inputs}
    inexact: set[str] = set()  # units written in place whose reading rounds weights
    out: dict[str, UnitReading] = {}
    for n in net.neurons:
        point = decision_point(n.activation)
        w = np.asarray(n.weights, dtype=float)
        idx = kept_inputs(w, float(n.bias), point)
        operands = [reads[i] for i in n.inputs]
        reals = [i for i in (idx or []) if kinds.get(n.inputs[i]) == "real"]
        exact = idx is not None
        if idx is not None and reals:
            if len(idx) == 1:
                expr: Expr = _real_test(n, n.inputs[idx[0]], float(w[idx[0]]), point)
            else:
                expr, exact = _rounded(n, operands, idx, point), False
        elif idx is not None:
            sums = _subset_sums(w[idx]) + float(n.bias)
            real = identify((sums > point).astype(np.uint8))
            assert real is not None  # a real-weighted threshold unit is a threshold function
            expr = threshold_expr([operands[i] for i in idx], real.weights, real.threshold)
        else:
            expr = _rounded(n, operands, None, point)
        kept = tuple(n.inputs[i] for i in idx) if idx is not None else tuple(
            i for i, x in zip(n.inputs, w) if x != 0)
        exact = exact and not any(i in inexact for i in kept)
        if n.name in names:
            out[n.name] = UnitReading(n.name, expr, kept, exact)
            reads[n.name] = Name(n.name)
        else:
            reads[n.name] = expr
            if not exact:
                inexact.add(n.name)
    return out

"""Three-valued evaluation of a source over boxes of inputs (for branch-and-bound).

A *box* fixes some inputs and leaves others free: a discrete feature has a set of allowed
choices (a Boolean input {0}, {1} or {0, 1}; a categorical input a subset of its values; a real
input of a step network a subset of its cell points), a continuous real input an interval.
For every output and box the evaluation says whether the output *can be 0* and whether it *can
be 1* somewhere in the box.  It is sound (an output constant on the box may be reported as
"can be both", never the reverse) and exact when every input is fixed, so splitting boxes down
to points always decides.

Rules of the evaluation (each node gives ``(can0, can1)``)
    ``not`` swaps; ``and``: can1 = all can1, can0 = any can0; ``or`` dually; ``xor``,
    ``implies``, ``iff`` and ``if-then-else`` combine the possibilities of their operands.
    A count (``atleast``, ``majority``, a weighted comparison, a threshold or equal gate)
    bounds its sum between the operands that must be 1 and those that can be; parity is known
    only when every operand is.  A categorical test can be 1 when an allowed value is listed
    and 0 when an allowed value is not; a real test compares the ends of its interval (or
    the allowed points).

Rules are evaluated on the AST (sharing nothing with the network path), netlists on their gate
graph.

>>> import numpy as np
>>> from thresholdc.logic.source import source_from_text
>>> from thresholdc.verification.domain import boolean_or_typed_domain
>>> src = source_from_text("input a, b\\ny = a and b\\n")
>>> d = boolean_or_typed_domain(src)
>>> masks = [np.array([[True, True]]), np.array([[True, False]])]  # a free, b = 0
>>> can0, can1 = rules_ternary(src, d, masks, None, None)
>>> can0.tolist(), can1.tolist()
([[True]], [[False]])
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..ir import program as ast
from .domain import Domain

__all__ = ["rules_ternary"]

Pair = tuple[np.ndarray, np.ndarray]


def rules_ternary(
    source: Any,
    domain: Domain,
    masks: list[np.ndarray],
    lo: np.ndarray | None,
    hi: np.ndarray | None,
) -> Pair:
    """``(can0, can1)``, each ``(boxes, outputs)`` in source output order.

    ``masks[k]`` is ``(boxes, choices)`` for ``domain.discrete[k]``; ``lo``/``hi`` are
    ``(boxes, continuous)`` interval ends for ``domain.continuous``.
    """
    if getattr(source, "netlist", None) is not None:
        return _gates_ternary(source.netlist, domain, masks)
    program = source.program
    env: dict[str, Any] = {}
    for k, f in enumerate(domain.discrete):
        env[f.name] = ("discrete", f, masks[k])
    for k, f in enumerate(domain.continuous):  # type: ignore[assignment]
        env[f.name] = ("interval", lo[:, k], hi[:, k])  # type: ignore[index]
    rows = masks[0].shape[0] if masks else (lo.shape[0] if lo is not None else 0)
    values: dict[str, Pair] = {}
    for name in program.order:
        values[name] = _expr(program.definitions[name].expr, env, values, rows)
    cols0, cols1 = [], []
    for name in program.outputs:
        pair = values[name] if name in values else _input_pair(env[name])
        cols0.append(pair[0])
        cols1.append(pair[1])
    return _stack(cols0, rows), _stack(cols1, rows)


def _stack(cols: list[np.ndarray], rows: int) -> np.ndarray:
    """Columns as a ``(rows, len(cols))`` array."""
    return np.stack(cols, axis=1) if cols else np.zeros((rows, 0), dtype=bool)


def _input_pair(entry: Any) -> Pair:
    """``(can0, can1)`` of a Boolean input."""
    _, _, mask = entry
    return mask[:, 0], mask[:, 1]


def _expr(e: ast.Expr, env: dict, values: dict[str, Pair], rows: int) -> Pair:
    """Evaluate one expression with an explicit post-order stack (deep chains need no
    recursion)."""
    results: list[Pair] = []
    stack: list[tuple[ast.Expr, bool]] = [(e, False)]
    while stack:
        node, expanded = stack.pop()
        kids = ast.sub_expressions(node)
        if not expanded and kids:
            stack.append((node, True))
            stack.extend((k, False) for k in reversed(kids))
            continue
        if not kids:
            results.append(_leaf(node, env, values, rows))
            continue
        args = results[len(results) - len(kids):]
        del results[len(results) - len(kids):]
        results.append(_combine(node, args))
    return results[0]


def _leaf(node: ast.Expr, env: dict, values: dict[str, Pair], rows: int) -> Pair:
    """A name, a constant, or a typed test."""
    if isinstance(node, ast.Name):
        if node.id in values:
            return values[node.id]
        return _input_pair(env[node.id])
    if isinstance(node, ast.Const):
        return np.full(rows, not node.value), np.full(rows, bool(node.value))
    if isinstance(node, ast.CategoryTest):
        _, f, mask = env[node.var]
        listed = set(node.values)
        hit = np.array([label in listed for label in f.labels], dtype=bool)
        can1 = mask[:, hit].any(axis=1)
        can0 = mask[:, ~hit].any(axis=1)
        return (can1, can0) if node.negate else (can0, can1)
    if isinstance(node, ast.RealTest):
        entry = env[node.var]
        c = float(node.value)
        if entry[0] == "discrete":
            pts = np.asarray(entry[1].labels, dtype=float)
            truth = _compare(pts, node.op, c)
            mask = entry[2]
            return mask[:, ~truth].any(axis=1), mask[:, truth].any(axis=1)
        _, lo, hi = entry
        # can1: some x in [lo, hi] passes; can0: some x fails.
        if node.op == ">":
            return lo <= c, hi > c
        if node.op == ">=":
            return lo < c, hi >= c
        if node.op == "<":
            return hi >= c, lo < c
        return hi > c, lo <= c
    raise AssertionError(f"unexpected leaf {node!r}")


def _compare(x: np.ndarray, op: str, c: float) -> np.ndarray:
    """``x OP c`` elementwise."""
    return {">": x > c, ">=": x >= c, "<": x < c, "<=": x <= c}[op]


def _count_bounds(args: list[Pair], coefs: list[int]) -> tuple[np.ndarray, np.ndarray]:
    """Least and greatest ``Σ coef·arg`` over the box."""
    low = np.zeros(args[0][0].shape, dtype=np.int64)
    high = np.zeros_like(low)
    for (c0, c1), w in zip(args, coefs):
        must = (~c0).astype(np.int64)  # 1 everywhere in the box
        can = c1.astype(np.int64)
        if w >= 0:
            low += w * must
            high += w * can
        else:
            low += w * can
            high += w * must
    return low, high


def _relation(low: np.ndarray, high: np.ndarray, op: str, r: int) -> Pair:
    """``(can0, can1)`` of ``S OP r`` for S anywhere in ``[low, high]`` (integers)."""
    if op == ">=":
        return low < r, high >= r
    if op == ">":
        return low <= r, high > r
    if op == "<=":
        return high > r, low <= r
    if op == "<":
        return high >= r, low < r
    inside = (low <= r) & (r <= high)
    fixed = (low == r) & (high == r)
    if op == "==":
        return ~fixed, inside
    return inside, ~fixed  # !=


def _combine(node: ast.Expr, args: list[Pair]) -> Pair:
    """``(can0, can1)`` of a node from those of its operands."""
    if isinstance(node, ast.Not):
        return args[0][1], args[0][0]
    if isinstance(node, ast.BinOp):
        (a0, a1), (b0, b1) = args
        if node.op == "and":
            return a0 | b0, a1 & b1
        if node.op == "or":
            return a0 & b0, a1 | b1
        if node.op == "xor":
            return (a0 & b0) | (a1 & b1), (a1 & b0) | (a0 & b1)
        if node.op == "implies":
            return a1 & b0, a0 | b1
        return (a1 & b0) | (a0 & b1), (a1 & b1) | (a0 & b0)  # iff
    if isinstance(node, ast.Ite):
        (c0, c1), (t0, t1), (e0, e1) = args
        return (c1 & t0) | (c0 & e0), (c1 & t1) | (c0 & e1)
    if isinstance(node, ast.Call):
        n = len(args)
        low, high = _count_bounds(args, [1] * n)
        func = node.func
        if func == "atleast":
            return _relation(low, high, ">=", int(node.k))  # type: ignore[arg-type]
        if func == "atmost":
            return _relation(low, high, "<=", int(node.k))  # type: ignore[arg-type]
        if func == "exactly":
            return _relation(low, high, "==", int(node.k))  # type: ignore[arg-type]
        if func == "majority":
            return _relation(low, high, ">=", n // 2 + 1)
        if func == "nand":
            return high == n, low < n
        if func == "nor":
            return high > 0, low == 0
        if func != "parity":
            raise ast.unknown_function(func)
        known = low == high
        odd = (low % 2) == 1
        return ~known | ~odd, ~known | odd
    assert isinstance(node, ast.Compare)
    low, high = _count_bounds(args, [t.coef for t in node.terms])
    return _relation(low, high, node.op, node.rhs)


def _gates_ternary(graph: Any, domain: Domain, masks: list[np.ndarray]) -> Pair:
    """Three-valued simulation of a netlist's gate graph (Boolean inputs only)."""
    vals: dict[str, Pair] = {}
    by_unit = {f.units[0]: masks[k] for k, f in enumerate(domain.discrete)}
    rows = masks[0].shape[0] if masks else 0
    for name in graph.inputs:
        m = by_unit[name]
        vals[name] = (m[:, 0], m[:, 1])
    for name, g in graph.gates.items():
        if g.op == "input":
            continue
        args = [vals[a] for a in g.args]
        op = g.op
        if op == "const":
            vals[name] = (np.full(rows, not g.value), np.full(rows, bool(g.value)))
        elif op == "buf":
            vals[name] = args[0]
        elif op == "not":
            vals[name] = (args[0][1], args[0][0])
        elif op in ("and", "nand", "or", "nor"):
            c0 = np.stack([a[0] for a in args])
            c1 = np.stack([a[1] for a in args])
            if op in ("and", "nand"):
                pair = (c0.any(axis=0), c1.all(axis=0))
            else:
                pair = (c0.all(axis=0), c1.any(axis=0))
            vals[name] = (pair[1], pair[0]) if op in ("nand", "nor") else pair  # type: ignore[assignment]
        elif op in ("xor", "xnor"):
            low, high = _count_bounds(args, [1] * len(args))
            known, odd = low == high, (low % 2) == 1
            pair = (~known | ~odd, ~known | odd)
            vals[name] = (pair[1], pair[0]) if op == "xnor" else pair  # type: ignore[assignment]
        elif op in ("threshold", "equal"):
            low, high = _count_bounds(args, list(g.weights or ()))
            rel = ">=" if op == "threshold" else "=="
            vals[name] = _relation(low, high, rel, int(g.threshold or 0))
        elif op == "ite":
            (c0, c1), (t0, t1), (e0, e1) = args
            vals[name] = ((c1 & t0) | (c0 & e0), (c1 & t1) | (c0 & e1))
        else:
            raise AssertionError(f"gate op {op!r} has no three-valued rule")
    outs = [vals[s] for _, s in graph.outputs]
    return _stack([p[0] for p in outs], rows), _stack([p[1] for p in outs], rows)

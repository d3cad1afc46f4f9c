"""Reference evaluator: the rules computed directly from the AST with numpy.

This module shares no code with the network path (it imports nothing from ``synth``,
``network`` or ``logic.lower``), so the two can check each other.  Each definition is evaluated
once, in ``program.order``, over all rows at a time; inside one expression the walk is an
explicit stack, so chains of hundreds of operators need no recursion.

Semantics (DESIGN.md section 3): ``majority`` is true when more than half of its arguments are
true, ``parity`` when an odd number are, ``atleast/atmost/exactly(k, …)`` compare the number of
true arguments with ``k``, ``nand``/``nor`` are the negated AND/OR of all arguments, and a
weighted comparison compares ``Σ coef · operand`` (a Boolean operand counts as 0 or 1) with its
integer right side.  A categorical test is true when the value is among the listed ones
(negated for ``!=``), a real test compares the raw value.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from ..errors import DataError
from ..ir.program import (
    BinOp,
    Call,
    CategoryTest,
    Compare,
    Const,
    Expr,
    Ite,
    Name,
    Not,
    Program,
    RealTest,
    sub_expressions,
    unknown_function,
)

__all__ = ["evaluate", "evaluate_columns"]


def evaluate(program: Program, X: np.ndarray) -> np.ndarray:
    """Evaluate every output of ``program`` on every row of ``X``.

    Parameters
    ----------
    program : Program
        A parsed rule file.
    X : ndarray, shape (rows, len(program.inputs))
        One column per declared input, in declaration order: 0/1 for a Boolean input, the
        value's index in the declaration (0, 1, …) for a categorical input, the raw value for a
        real input.

    Returns
    -------
    ndarray of bool, shape (rows, len(program.outputs))

    Examples
    --------
    >>> from thresholdc.syntax.parser import parse
    >>> prog = parse("input a, b\\ny = atleast(1, a, b) and not (a and b)\\n")
    >>> evaluate(prog, np.array([[0, 0], [0, 1], [1, 0], [1, 1]])).ravel().tolist()
    [False, True, True, False]
    """
    X = np.asarray(X)
    if X.ndim != 2 or X.shape[1] != len(program.inputs):
        raise ValueError(
            f"X must have shape (rows, {len(program.inputs)}), got {tuple(X.shape)}"
        )
    env: dict[str, np.ndarray] = {}
    for j, var in enumerate(program.inputs):
        col = X[:, j]
        if var.kind == "bool":
            env[var.name] = col.astype(bool)
        elif var.kind == "categorical":
            idx = col.astype(np.int64)
            if idx.size and (idx.min() < 0 or idx.max() >= len(var.values or ())):
                raise ValueError(f"column {j} ({var.name}) holds a value index out of range")
            env[var.name] = idx
        else:
            env[var.name] = col.astype(np.float64)
    values = _run(program, env, X.shape[0])
    out = np.empty((X.shape[0], len(program.outputs)), dtype=bool)
    for i, name in enumerate(program.outputs):
        out[:, i] = values[name]
    return out


def evaluate_columns(
    program: Program, columns: Mapping[str, np.ndarray]
) -> dict[str, np.ndarray]:
    """Evaluate every output of ``program`` on named data columns.

    Parameters
    ----------
    program : Program
        A parsed rule file.
    columns : mapping of input name to 1-d array
        One column per declared input (extra columns are ignored), all of the same length:
        0/1 (or bool) for a Boolean input, the values as strings for a categorical input
        (matched exactly after trimming spaces), floats for a real input.

    Returns
    -------
    dict of output name to bool array, in output order.

    Raises
    ------
    DataError
        When a column is missing, has the wrong length, or holds an undeclared category.

    Examples
    --------
    >>> from thresholdc.syntax.parser import parse
    >>> prog = parse("input colour: {red, green}, temp: real\\n"
    ...              "hot_red = colour == red and temp > 30\\n")
    >>> out = evaluate_columns(prog, {"colour": np.array(["red", " green", "red"]),
    ...                               "temp": np.array([31.0, 40.0, 12.5])})
    >>> out["hot_red"].tolist()
    [True, False, False]
    """
    rows: int | None = None
    env: dict[str, np.ndarray] = {}
    for var in program.inputs:
        if var.name not in columns:
            raise DataError(f"missing column '{var.name}'")
        col = np.asarray(columns[var.name])
        if col.ndim != 1 or (rows is not None and col.shape[0] != rows):
            raise DataError(f"column '{var.name}' must be 1-d with one value per row")
        rows = col.shape[0]
        if var.kind == "bool":
            env[var.name] = col.astype(bool)
        elif var.kind == "categorical":
            env[var.name] = _category_indices(var.name, var.values or (), col)
        else:
            env[var.name] = col.astype(np.float64)
    values = _run(program, env, rows or 0)
    return {name: values[name] for name in program.outputs}


def _category_indices(name: str, declared: tuple[str, ...], col: np.ndarray) -> np.ndarray:
    """Indices of a column's values among the declared ones (strings, trimmed)."""
    text = np.char.strip(col.astype(str))
    uniq, inverse = np.unique(text, return_inverse=True)
    lookup = {v: i for i, v in enumerate(declared)}
    codes = np.empty(len(uniq), dtype=np.int64)
    for i, v in enumerate(uniq):
        if v not in lookup:
            raise DataError(
                f"unknown value '{v}' for '{name}' (its values are {', '.join(declared)})"
            )
        codes[i] = lookup[v]
    return codes[inverse.reshape(-1)]


def _run(program: Program, env: dict[str, np.ndarray], rows: int) -> dict[str, np.ndarray]:
    """Evaluate the definitions in topological order; returns inputs and definitions."""
    categories = {v.name: v.values or () for v in program.inputs if v.kind == "categorical"}
    for name in program.order:
        env[name] = _evaluate_expr(program.definitions[name].expr, env, rows, categories)
    return env




def _evaluate_expr(
    expr: Expr, env: dict[str, np.ndarray], rows: int, categories: dict[str, tuple[str, ...]]
) -> np.ndarray:
    """Evaluate one expression over all rows with an explicit post-order stack."""
    results: list[np.ndarray] = []
    stack: list[tuple[Expr, bool]] = [(expr, False)]
    while stack:
        node, expanded = stack.pop()
        if not expanded:
            kids = sub_expressions(node)
            if kids:
                stack.append((node, True))
                stack.extend((k, False) for k in reversed(kids))
            else:
                results.append(_leaf(node, env, rows, categories))
            continue
        n = len(sub_expressions(node))
        args = results[len(results) - n :]
        del results[len(results) - n :]
        results.append(_combine(node, args))
    assert len(results) == 1
    return results[0]


def _leaf(
    node: Expr, env: dict[str, np.ndarray], rows: int, categories: dict[str, tuple[str, ...]]
) -> np.ndarray:
    """Value of a node without sub-expressions."""
    if isinstance(node, Name):
        return env[node.id]
    if isinstance(node, Const):
        return np.full(rows, node.value, dtype=bool)
    if isinstance(node, CategoryTest):
        declared = categories[node.var]
        wanted = np.array([declared.index(v) for v in node.values], dtype=np.int64)
        hit = np.isin(env[node.var], wanted)
        return ~hit if node.negate else hit
    if isinstance(node, RealTest):
        x = env[node.var]
        if node.op == ">":
            return x > node.value
        if node.op == ">=":
            return x >= node.value
        if node.op == "<":
            return x < node.value
        return x <= node.value
    raise AssertionError(f"unexpected leaf {node!r}")


def _count(args: list[np.ndarray]) -> np.ndarray:
    """Number of true arguments per row."""
    total = np.zeros(args[0].shape, dtype=np.int64)
    for a in args:
        total += a
    return total


def _combine(node: Expr, args: list[np.ndarray]) -> np.ndarray:
    """Value of a node from the values of its operands."""
    if isinstance(node, Not):
        return ~args[0]
    if isinstance(node, BinOp):
        a, b = args
        if node.op == "and":
            return a & b
        if node.op == "or":
            return a | b
        if node.op == "xor":
            return a ^ b
        if node.op == "implies":
            return ~a | b
        return ~(a ^ b)  # iff
    if isinstance(node, Ite):
        return np.where(args[0], args[1], args[2])
    if isinstance(node, Call):
        count, n = _count(args), len(args)
        func = node.func
        if func == "atleast":
            return count >= node.k
        if func == "atmost":
            return count <= node.k
        if func == "exactly":
            return count == node.k
        if func == "majority":
            return 2 * count > n
        if func == "nand":
            return count < n
        if func == "nor":
            return count == 0
        if func == "parity":
            return count % 2 == 1
        raise unknown_function(func)
    assert isinstance(node, Compare)
    # Exact integer sums: int64 while no sum can leave its range, else Python integers.
    bound = sum(abs(t.coef) for t in node.terms)
    exact = np.int64 if bound < 2**62 else object
    total = np.zeros(args[0].shape, dtype=exact)
    for term, value in zip(node.terms, args, strict=True):
        total += term.coef * value.astype(np.int64).astype(exact)
    rhs, op = node.rhs, node.op
    if exact is object:
        return _compare(total, op, rhs).astype(bool)
    return _compare(total, op, rhs)


def _compare(total: np.ndarray, op: str, rhs: int) -> np.ndarray:
    """``total OP rhs`` row by row."""
    if op == ">=":
        return total >= rhs
    if op == ">":
        return total > rhs
    if op == "<=":
        return total <= rhs
    if op == "<":
        return total < rhs
    if op == "==":
        return total == rhs
    return total != rhs

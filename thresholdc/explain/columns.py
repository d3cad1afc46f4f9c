"""The rule domain as data columns: enumeration, seeded sampling, and the units they set.

Rows here hold one column per declared input in the reference evaluator's encoding (0/1 for a
Boolean input, the value's index for a categorical one, the raw value for a real one), so both
the rules and a read-back rule file evaluate them directly; :func:`unit_rows` turns them into a
network's input units (one-hot units for categorical inputs).  Every row is a valid assignment.

>>> from thresholdc.syntax.parser import parse
>>> prog = parse("input c: {x, y, z}, a\\nq = c == y and a\\n")
>>> levels(prog), enumerate_rows(prog, ["c"]).tolist()
([3, 2], [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]])
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ..ir.program import CategoryTest, Expr, Name, Program, RealTest, sub_expressions
from ..logic import real_thresholds

__all__ = ["levels", "support", "enumerate_rows", "sample_rows", "unit_rows", "value_label"]


def levels(program: Program) -> list[int | None]:
    """The number of values of each input (None for a real input).

    >>> from thresholdc.syntax.parser import parse
    >>> levels(parse("input a, t: real\\ny = a and t > 1\\n"))
    [2, None]
    """
    out: list[int | None] = []
    for v in program.inputs:
        out.append(2 if v.kind == "bool" else len(v.values or ()) if v.kind == "categorical"
                   else None)
    return out


def support(program: Program, name: str) -> set[str]:
    """The input columns a definition depends on syntactically (through the definitions it
    uses).

    >>> from thresholdc.syntax.parser import parse
    >>> sorted(support(parse("input a, b, c\\nt = a or b\\ny = t and a\\nz = c\\n"), "y"))
    ['a', 'b']
    """
    inputs = set(program.input_names)
    seen: set[str] = set()
    found: set[str] = set()
    todo = [name]
    while todo:
        d = todo.pop()
        if d in seen:
            continue
        seen.add(d)
        if d in inputs:
            found.add(d)
            continue
        stack: list[Expr] = [program.definitions[d].expr]
        while stack:
            e = stack.pop()
            if isinstance(e, Name):
                todo.append(e.id)
            elif isinstance(e, CategoryTest | RealTest):
                found.add(e.var)
            stack.extend(sub_expressions(e))
    return found


def enumerate_rows(program: Program, columns: Sequence[str]) -> np.ndarray:
    """Every combination of the named (discrete) columns' values; other columns hold 0.

    Rows are ordered with the first named column changing fastest.
    """
    lev = levels(program)
    pos = {v.name: j for j, v in enumerate(program.inputs)}
    maybe = [lev[pos[c]] for c in columns]
    sizes = [s for s in maybe if s is not None]
    assert len(sizes) == len(maybe), "real columns cannot be enumerated"
    total = int(np.prod(sizes, dtype=np.int64)) if sizes else 1
    X = np.zeros((total, len(program.inputs)))
    k = np.arange(total)
    for c, s in zip(columns, sizes):
        X[:, pos[c]] = k % s
        k = k // s
    return X


def _real_range(program: Program, name: str) -> tuple[float, float]:
    var = next(v for v in program.inputs if v.name == name)
    if var.range is not None:
        return float(var.range[0]), float(var.range[1])
    cuts = real_thresholds(program).get(name) or [0.0]
    width = max(1.0, cuts[-1] - cuts[0])
    return cuts[0] - width, cuts[-1] + width


def sample_rows(program: Program, count: int, rng: np.random.Generator) -> np.ndarray:
    """``count`` valid assignments drawn uniformly (a real input uniformly over its declared
    range, else over its thresholds' span widened by that span on both sides)."""
    X = np.empty((count, len(program.inputs)))
    for j, (v, s) in enumerate(zip(program.inputs, levels(program))):
        if s is None:
            lo, hi = _real_range(program, v.name)
            X[:, j] = rng.uniform(lo, hi, size=count)
        else:
            X[:, j] = rng.integers(0, s, size=count)
    return X


def unit_rows(program: Program, X: np.ndarray, units: Sequence[str]) -> np.ndarray:
    """Column rows as a network's input units, in the order ``units`` names them."""
    col = {u: i for i, u in enumerate(units)}
    out = np.zeros((X.shape[0], len(units)))
    for j, v in enumerate(program.inputs):
        if v.kind == "categorical":
            for k, val in enumerate(v.values or ()):
                out[:, col[f"{v.name}={val}"]] = X[:, j] == k
        else:
            out[:, col[v.name]] = X[:, j]
    return out


def value_label(program: Program, column: str, value: float) -> str:
    """A column's value as rule text would name it (``1``, ``red``, ``3.5``).

    >>> from thresholdc.syntax.parser import parse
    >>> value_label(parse("input c: {x, y}\\nq = c == y\\n"), "c", 1)
    'y'
    """
    var = next(v for v in program.inputs if v.name == column)
    if var.kind == "categorical":
        return str((var.values or ())[int(value)])
    if var.kind == "bool":
        return str(int(value))
    return f"{value:.6g}"

"""Typed inputs: how categorical and real inputs become input units, and back.

A rule file may declare categorical inputs (``input colour: {red, green, blue}``) and real
inputs (``input temp: real in [-40, 60] scale 0.5``).  In the network

* a categorical input is one one-hot unit per value, ``colour=red``, ``colour=green``, …
  (exactly one of them is 1 on a valid assignment);
* a real input is one unit carrying the raw value, ``temp``;
* a Boolean input is one 0/1 unit, as before.

The network file's ``features`` list (DESIGN.md §4) says how a data column becomes
units; :func:`network_features` builds it from a program, :func:`decode_units` goes the other
way (unit rows back to one column per declared input, for the reference evaluator).

Exact real comparisons in a step network
    A step neuron fires iff ``z > 0``.  A real test is made exact by using only *strict* tests
    as neurons: ``temp > c`` is the neuron ``z = temp − c`` (weight 1, bias −c), ``temp < c``
    the neuron ``z = c − temp`` (weight −1, bias c); ``temp >= c`` is the negation of
    ``temp < c`` and ``temp <= c`` the negation of ``temp > c``, and a negation is folded into
    the neuron's reader (``w·(1 − y)``), never into the real neuron's own weights (that would
    turn ``>`` into ``<`` and be wrong exactly at ``c``).  In IEEE arithmetic ``x − c`` is 0
    only when ``x == c``, so the sign is exact on every float.  Real-reading neurons have a
    non-integer bias, and the ``|z| ≥ 0.5`` guarantee does not hold for them (it holds for
    neurons reading only Boolean and one-hot units).  A soft version gets the gain
    ``ln(1/ε − 1)/scale`` and is within ε of its step value at distance ≥ ``scale`` from ``c``;
    nearer to ``c`` a soft neuron is uncertain by nature.

Without a declared ``scale`` a real input has the scale :data:`DEFAULT_SCALE` (1, in the
input's own units).

>>> from thresholdc.syntax.parser import parse
>>> prog = parse("input colour: {red, green}, temp: real scale 0.5, door\\n"
...              "y = colour == red and temp > 3 and door\\n")
>>> [f["units"] for f in network_features(prog)]
[['colour=red', 'colour=green'], ['temp'], ['door']]
>>> strict_real_test(">=", 3.0)
('<', 3.0, True)
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..ir import program as ast
from ..ir.network import DEFAULT_SCALE
from .reference import evaluate

__all__ = [
    "strict_real_test",
    "network_features",
    "feature_scale",
    "real_thresholds",
    "decode_units",
    "evaluate_units",
]

#: The scale of a real input that declares none (in the input's own units).


def strict_real_test(op: str, value: float) -> tuple[str, float, bool]:
    """The strict test and negation computing ``x OP value``: ``(">" | "<", c, negate)``.

    >>> strict_real_test("<=", 2.5)
    ('>', 2.5, True)
    """
    c = float(value)
    if op == ">":
        return (">", c, False)
    if op == "<":
        return ("<", c, False)
    if op == ">=":
        return ("<", c, True)
    if op == "<=":
        return (">", c, True)
    raise AssertionError(f"unknown real comparison {op!r}")


def _number(x: float) -> int | float:
    """An integral float as int (so ``-40`` is stored as written), else the float."""
    x = float(x)
    return int(x) if math.isfinite(x) and x.is_integer() and abs(x) < 2**53 else x


def feature_scale(var: ast.InputVar) -> float:
    """The scale of a real input (its declared one, else :data:`DEFAULT_SCALE`)."""
    return float(var.scale) if var.scale is not None else DEFAULT_SCALE


def network_features(program: ast.Program) -> tuple[dict[str, Any], ...] | None:
    """The ``features`` list of the network file, or None when every input is Boolean.

    Examples
    --------
    >>> from thresholdc.syntax.parser import parse
    >>> network_features(parse("input t: real in [-40, 60] scale 0.5\\ny = t > 1\\n"))
    ({'name': 't', 'kind': 'real', 'units': ['t'], 'range': [-40, 60], 'scale': 0.5},)
    >>> network_features(parse("input a\\ny = not a\\n")) is None
    True
    """
    if not program.is_typed():
        return None
    out: list[dict[str, Any]] = []
    for v in program.inputs:
        if v.kind == "categorical":
            values = list(v.values or ())
            out.append({"name": v.name, "kind": "categorical", "values": values,
                        "units": [f"{v.name}={val}" for val in values]})
        elif v.kind == "real":
            rng = None if v.range is None else [_number(v.range[0]), _number(v.range[1])]
            out.append({"name": v.name, "kind": "real", "units": [v.name], "range": rng,
                        "scale": _number(feature_scale(v))})
        else:
            out.append({"name": v.name, "kind": "bool", "units": [v.name]})
    return tuple(out)


def real_thresholds(program: ast.Program) -> dict[str, list[float]]:
    """For each real input, the sorted distinct constants its predicates compare it with.

    >>> from thresholdc.syntax.parser import parse
    >>> real_thresholds(parse("input t: real\\ny = t > 3 or t <= 1 or t < 3\\n"))
    {'t': [1.0, 3.0]}
    """
    found: dict[str, set[float]] = {v.name: set() for v in program.inputs if v.kind == "real"}
    stack: list[Any] = [d.expr for d in program.definitions.values()]
    while stack:
        e = stack.pop()
        if isinstance(e, ast.RealTest):
            found[e.var].add(float(e.value))
        elif isinstance(e, ast.Not):
            stack.append(e.operand)
        elif isinstance(e, ast.BinOp):
            stack.extend((e.left, e.right))
        elif isinstance(e, ast.Ite):
            stack.extend((e.cond, e.then, e.other))
        elif isinstance(e, ast.Call):
            stack.extend(e.args)
        elif isinstance(e, ast.Compare):
            stack.extend(t.operand for t in e.terms)
    return {name: sorted(vals) for name, vals in found.items()}


def decode_units(program: ast.Program, X: Any, units: Any) -> np.ndarray:
    """Unit rows ``(rows, len(units))`` as one column per declared input, in declaration order.

    A Boolean column is its unit, a real column its raw value, a categorical column the index
    of the value whose one-hot unit is 1.  Raises ValueError on a row whose one-hot units of
    one input do not hold exactly one 1 (no value of the input matches).

    >>> from thresholdc.syntax.parser import parse
    >>> prog = parse("input c: {x, y}, t: real\\nq = c == y and t > 0\\n")
    >>> decode_units(prog, [[0, 1, 2.5]], ["c=x", "c=y", "t"]).tolist()
    [[1.0, 2.5]]
    """
    X = np.asarray(X, dtype=float)
    units = list(units)
    col = {u: i for i, u in enumerate(units)}
    out = np.empty((X.shape[0], len(program.inputs)), dtype=float)
    for j, v in enumerate(program.inputs):
        if v.kind == "categorical":
            block = X[:, [col[f"{v.name}={val}"] for val in v.values or ()]]
            hot = block == 1.0
            if not (hot.sum(axis=1) == 1).all() or not np.isin(block, (0.0, 1.0)).all():
                raise ValueError(
                    f"the one-hot units of '{v.name}' must hold exactly one 1 on every row"
                )
            out[:, j] = hot.argmax(axis=1)
        else:
            out[:, j] = X[:, col[v.name]]
    return out


def evaluate_units(program: ast.Program, X: Any, units: Any) -> np.ndarray:
    """The reference outputs ``(rows, outputs)`` of bool for rows of input units.

    Decodes the units (:func:`decode_units`) and runs the reference evaluator, which shares no
    code with the network path.

    >>> from thresholdc.syntax.parser import parse
    >>> prog = parse("input c: {x, y}, t: real\\nq = c == y and t >= 0\\n")
    >>> evaluate_units(prog, [[0, 1, 0.0], [1, 0, 3.0]], ["c=x", "c=y", "t"]).ravel().tolist()
    [True, False]
    """
    return evaluate(program, decode_units(program, X, units))

"""An invented scenario for the training benchmarks: routing crates at a ferry-terminal depot.

Each categorical input is one reading at the depot (the crate's lane, the berth, the tide band,
…) with a few levels; two outputs say whether a crate is re-routed and whether it is held.
The true rules use counting terms, negations and three levels of definitions; a degraded copy
changes one of them (the "domain theory" a user would start from).  Data are sampled from the
true rules with a fraction of labels flipped.  This is a benchmark scenario, not a model of
any real depot.

Used by ``training_compare_bench.py`` (warm start against random init) and
``train_speed_bench.py`` (the speed goal: 1000 rows × 480 one-hot units × 2 outputs).
"""

from __future__ import annotations

import numpy as np

READINGS = ("lane", "berth", "tide", "crane", "shift", "hold", "seal", "scan", "route", "dock",
            "gate", "yard", "deck", "ramp", "tag", "bay")


def input_names(n: int) -> list[str]:
    """``n`` reading names (``lane_1``, ``berth_1``, …)."""
    return [f"{READINGS[i % len(READINGS)]}_{i // len(READINGS) + 1}" for i in range(n)]


def levels(k: int) -> list[str]:
    return [f"v{j}" for j in range(k)]


def rules_text(n_inputs: int = 32, n_levels: int = 4, degrade: str | None = None) -> str:
    """The depot rules; ``degrade`` is ``None`` (the true rules), ``"drop"`` (an antecedent
    dropped), ``"add"`` (an antecedent added), ``"count"`` (a count changed), ``"literal"``
    (a wrong literal)."""
    x = input_names(n_inputs)
    vals = ", ".join(levels(n_levels))
    lines = [f"# depot routing ({'true rules' if degrade is None else 'degraded: ' + degrade})",
             f"input {', '.join(f'{name}: {{{vals}}}' for name in x)}"]
    busy = [f"{x[0]} in {{v0, v1}}", f"{x[1]} == v2", f"{x[2]} != v3"]
    late = [f"{x[3]} == v0", f"{x[4]} in {{v1, v2}}", f"{x[5]} == v3", f"{x[6]} == v1"]
    k = 2
    if degrade == "drop":
        busy = busy[:2]
    elif degrade == "add":
        busy = busy + [f"{x[7]} == v0"]
    elif degrade == "count":
        k = 3
    elif degrade == "literal":
        busy[1] = f"{x[1]} == v1"
    lines += [
        f"busy = {' and '.join(busy)}",
        f"late = atleast({k}, {', '.join(late)})",
        f"tight = {x[8]} in {{v0, v1}} or ({x[9]} == v2 and {x[10]} != v0)",
        f"reroute = (busy and not {x[11]} == v0) or (late and tight)",
        f"hold = {x[12]} in {{v0, v1}} and ({x[13]} == v2 or {x[14]} == v3) and not busy",
        "output reroute, hold",
    ]
    return "\n".join(lines) + "\n"


def sample(n_rows: int, n_inputs: int, n_levels: int, rng: np.random.Generator) -> np.ndarray:
    """One-hot input units of ``n_rows`` random crates (levels uniform)."""
    idx = rng.integers(0, n_levels, size=(n_rows, n_inputs))
    X = np.zeros((n_rows, n_inputs * n_levels))
    X[np.arange(n_rows)[:, None], np.arange(n_inputs)[None, :] * n_levels + idx] = 1.0
    return X


def labels(source, X: np.ndarray, noise: float, rng: np.random.Generator) -> np.ndarray:
    """The true rules' outputs with a fraction ``noise`` of the labels flipped."""
    y = np.asarray(source.evaluate(X), dtype=float)
    flip = rng.random(y.shape) < noise
    return np.where(flip, 1.0 - y, y)

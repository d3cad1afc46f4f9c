"""The input domain a verifier ranges over: features, their values, and the units they set.

A verifier checks a network against its source over every *valid* assignment of the source's
inputs, never over impossible unit patterns (two one-hot units of one categorical input both 1).
A :class:`Domain` lists the features in declaration order; each is either

* discrete (:class:`Discrete`): a finite list of choices, each setting the feature's units —
  a Boolean input (0, 1), a categorical input (one one-hot pattern per value), or a real input
  of a step network reduced to one point per cell cut by the thresholds (:func:`cell_points`);
* continuous (:class:`Continuous`): a real input ranging over closed intervals (``pieces``).

Rows for the network are in the network's unit order and encoding (bipolar maps a Boolean or
one-hot unit ``x`` to ``2x − 1``; a real unit keeps its raw value); rows for the source are in
the source's unit order, binary, as :meth:`thresholdc.ir.reference.Reference.evaluate` takes them.

>>> from thresholdc.logic.source import source_from_text
>>> src = source_from_text("input c: {x, y}, a\\nq = c == y and a\\n")
>>> d = boolean_or_typed_domain(src)
>>> [f.name for f in d.discrete], d.size
(['c', 'a'], 4)
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import UsageError, VerificationUndecided
from ..ir.network import Network
from ..logic import feature_scale, real_thresholds

__all__ = [
    "root_boxes", "halve_choices", "halve_widest",
    "Discrete", "Continuous", "Domain", "boolean_or_typed_domain", "cell_points",
    "check_names", "typed_domain", "network_cuts", "is_typed_source", "soft_outputs",
    "value_distances",
]

_MAX_CUT_INPUTS = 12


@dataclass
class Discrete:
    """A feature with finitely many choices.

    ``table`` is ``(choices, len(units))`` of unit values (binary encoding; a real unit's raw
    value); ``labels`` are what an assignment reports (0/1, a category string, a number).
    """

    name: str
    kind: str
    units: tuple[str, ...]
    table: np.ndarray
    labels: tuple[Any, ...]

    @property
    def size(self) -> int:
        return len(self.labels)


@dataclass
class Continuous:
    """A real input over the closed intervals ``pieces`` (its range less any excluded bands)."""

    name: str
    unit: str
    pieces: list[tuple[float, float]]
    scale: float


@dataclass
class Domain:
    """The features of a source in declaration order, split into discrete and continuous."""

    units: tuple[str, ...]
    discrete: list[Discrete] = field(default_factory=list)
    continuous: list[Continuous] = field(default_factory=list)
    order: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def size(self) -> int:
        """The number of discrete choice combinations (continuous features count once)."""
        total = 1
        for f in self.discrete:
            total *= f.size
        return total

    def unit_rows(self, choice: np.ndarray, reals: np.ndarray | None = None) -> np.ndarray:
        """Reference unit rows ``(rows, len(units))`` for choice indices ``(rows, discrete)`` and
        continuous values ``(rows, continuous)``."""
        col = {u: i for i, u in enumerate(self.units)}
        rows = choice.shape[0]
        X = np.zeros((rows, len(self.units)))
        for k, f in enumerate(self.discrete):
            X[:, [col[u] for u in f.units]] = f.table[choice[:, k]]
        for k, f in enumerate(self.continuous):  # type: ignore[assignment]
            assert reals is not None
            X[:, col[f.unit]] = reals[:, k]  # type: ignore[attr-defined]
        return X

    def assignment(self, choice: np.ndarray, reals: np.ndarray | None = None) -> dict[str, Any]:
        """One point as ``{feature: value}`` in declaration order."""
        values: dict[str, Any] = {}
        for k, f in enumerate(self.discrete):
            label = f.labels[int(choice[k])]
            values[f.name] = float(label) if f.kind == "real" else label
        for k, f in enumerate(self.continuous):  # type: ignore[assignment]
            assert reals is not None
            values[f.name] = float(reals[k])
        return {name: values[name] for name in self.order}

    def enumerate(self, start: int, stop: int) -> np.ndarray:
        """Choice indices ``(stop − start, discrete)`` of combinations ``start … stop − 1``
        (mixed radix, the first feature varying fastest)."""
        k = np.arange(start, stop, dtype=np.int64)
        out = np.empty((len(k), len(self.discrete)), dtype=np.int64)
        for j, f in enumerate(self.discrete):
            out[:, j] = k % f.size
            k = k // f.size
        return out


def network_rows(net: Any, domain: Domain, X: np.ndarray) -> np.ndarray:
    """Reference unit rows as the network's input rows (its unit order and encoding)."""
    col = {u: i for i, u in enumerate(domain.units)}
    Xn = X[:, [col[u] for u in net.inputs]].astype(float)
    if net.encoding == "bipolar":
        real = {f.unit for f in domain.continuous} | {
            u for f in domain.discrete if f.kind == "real" for u in f.units
        }
        keep = np.array([u in real for u in net.inputs], dtype=bool)
        Xn = np.where(keep, Xn, 2.0 * Xn - 1.0)
    return Xn


def cell_points(cuts: list[float], rng: tuple[float, float] | None) -> list[float]:
    """One point per cell cut by ``cuts`` and the cuts themselves, within ``rng`` if given.

    Cells are the open intervals between consecutive cuts (and beyond the outer ones); a
    function that changes only at the cuts is constant on each cell.

    >>> cell_points([1.0, 3.0], None)
    [0.0, 1.0, 2.0, 3.0, 4.0]
    >>> cell_points([1.0, 30.0], (0.0, 10.0))
    [0.0, 0.5, 1.0, 5.5, 10.0]
    """
    cuts = sorted(set(float(c) for c in cuts))
    if rng is not None:
        lo, hi = float(rng[0]), float(rng[1])
        inner = [c for c in cuts if lo < c < hi]
        marks = [lo, *inner, hi]
        points = set(marks)
        points.update((a + b) / 2 for a, b in zip(marks, marks[1:]))
        return sorted(points)
    if not cuts:
        return [0.0]
    points = set(cuts)
    points.update((a + b) / 2 for a, b in zip(cuts, cuts[1:]))
    points.update((cuts[0] - 1.0, cuts[-1] + 1.0))
    return sorted(points)


def boolean_or_typed_domain(
    source: Any,
    *,
    real_points: dict[str, list[float]] | None = None,
    real_pieces: dict[str, list[tuple[float, float]]] | None = None,
) -> Domain:
    """The domain of ``source``: one Boolean feature per unit for an untyped source; for typed
    rules one feature per declared input.  A real input is discrete with ``real_points[name]``
    or continuous over ``real_pieces[name]`` (one of them must name it)."""
    program = getattr(source, "program", None)
    units = tuple(source.inputs)
    bool_table = np.array([[0.0], [1.0]])
    if program is None or not program.is_typed():
        d = Domain(units)
        for u in units:
            d.discrete.append(Discrete(u, "bool", (u,), bool_table, (0, 1)))
            d.order.append(u)
        return d
    d = Domain(units)
    for v in program.inputs:
        d.order.append(v.name)
        if v.kind == "bool":
            d.discrete.append(Discrete(v.name, "bool", (v.name,), bool_table, (0, 1)))
        elif v.kind == "categorical":
            values = tuple(v.values or ())
            d.discrete.append(Discrete(
                v.name, "categorical", tuple(f"{v.name}={x}" for x in values),
                np.eye(len(values), dtype=np.int8), values,  # one-hot rows, compact
            ))
        elif real_points is not None and v.name in real_points:
            pts = np.asarray(real_points[v.name], dtype=float)
            d.discrete.append(Discrete(v.name, "real", (v.name,), pts[:, None],
                                       tuple(pts.tolist())))
        else:
            assert real_pieces is not None and v.name in real_pieces, v.name
            d.continuous.append(Continuous(v.name, v.name, list(real_pieces[v.name]),
                                           feature_scale(v)))
    return d


def check_names(net: Network, source: Any) -> None:
    """Raise UsageError unless network and source have the same input and output names
    (compared as sets)."""
    for what, mine, theirs in (
        ("input", set(net.inputs), set(source.inputs)),
        ("output", set(net.output_names), set(source.outputs)),
    ):
        if mine != theirs:
            parts = []
            if mine - theirs:
                parts.append(f"only in the network: {', '.join(sorted(mine - theirs))}")
            if theirs - mine:
                parts.append(f"only in the source: {', '.join(sorted(theirs - mine))}")
            raise UsageError(
                f"the network's and the source's {what} names differ ({'; '.join(parts)})",
                file=getattr(source, "file", None),
            )


def is_typed_source(source: Any) -> bool:
    """True for a rule source with a categorical or real input."""
    program = getattr(source, "program", None)
    return program is not None and program.is_typed()


def network_cuts(net: Network, real: set[str]) -> dict[str, list[float]] | None:
    """Where the network's step neurons reading a real unit change value, per real unit, or
    None when some neuron reading a real unit is not of the cell-exact form (soft, reading a
    neuron or two real units, or too many other units to enumerate).

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("t", "a"), (Neuron("y", 1, ("t", "a"), (2.0, 1.0), -3.0),),
    ...               (Output("y", "y"),))
    >>> network_cuts(net, {"t"})
    {'t': [1.0, 1.5]}
    """
    inputs = set(net.inputs)
    cuts: dict[str, set[float]] = {u: set() for u in real}
    low = -1.0 if net.encoding == "bipolar" else 0.0
    for n in net.neurons:
        reads = [i for i in n.inputs if i in real]
        if not reads:
            continue
        others = [(i, float(w)) for i, w in zip(n.inputs, n.weights) if i not in real]
        if (n.activation != "step" or len(set(reads)) != 1
                or any(i not in inputs for i, _ in others) or len(others) > _MAX_CUT_INPUTS):
            return None
        w = sum(float(wt) for i, wt in zip(n.inputs, n.weights) if i in real)
        if w == 0:
            continue
        for combo in itertools.product((low, 1.0), repeat=len(others)):
            s = sum(v * wt for v, (_, wt) in zip(combo, others))
            cuts[reads[0]].add(-(float(n.bias) + s) / w)
    return {u: sorted(c) for u, c in cuts.items()}


def typed_domain(net: Network, source: Any) -> Domain:
    """The verification domain of ``source`` for ``net`` (see the module docstring).

    Raises VerificationUndecided when a soft network meets a real input without a range.
    """
    if not is_typed_source(source):
        return boolean_or_typed_domain(source)
    program = source.program
    reals = [v for v in program.inputs if v.kind == "real"]
    if not reals:
        return boolean_or_typed_domain(source)
    thresholds = real_thresholds(program)
    cuts = network_cuts(net, {v.name for v in reals})
    if cuts is not None:
        points = {v.name: cell_points(thresholds[v.name] + cuts[v.name], v.range)
                  for v in reals}
        d = boolean_or_typed_domain(source, real_points=points)
        d.notes.append(
            "real inputs checked at one point per cell cut by the thresholds and on each "
            "threshold (exact for a step network)"
        )
        return d
    missing = [v.name for v in reals if v.range is None]
    if missing:
        raise VerificationUndecided(
            f"real input(s) {', '.join(missing)} have no declared range: a soft network is "
            "checked over the declared range, so a range is needed (declare e.g. "
            f"'input {missing[0]}: real in [LOW, HIGH] scale S')",
            file=getattr(source, "file", None),
        )
    pieces: dict[str, list[tuple[float, float]]] = {}
    bands = []
    for v in reals:
        s = feature_scale(v)
        lo, hi = float(v.range[0]), float(v.range[1])
        parts = [(lo, hi)]
        for c in thresholds[v.name]:
            parts = [q for a, b in parts for q in ((a, min(b, c - s)), (max(a, c + s), b))
                     if q[0] <= q[1]]
            bands.append(f"{v.name} in ({c - s:g}, {c + s:g})")
        if not parts:
            raise VerificationUndecided(
                f"the bands of ± scale around the thresholds of '{v.name}' cover its whole "
                "range: nothing is left to check (declare a smaller scale)",
                file=getattr(source, "file", None),
            )
        pieces[v.name] = parts
    d = boolean_or_typed_domain(source, real_pieces=pieces)
    if bands:
        d.notes.append(
            "soft network: real inputs checked over their declared ranges except a band of "
            "± scale around each rule threshold, where a soft neuron is uncertain by nature: "
            + ", ".join(bands)
        )
    else:
        d.notes.append("soft network: real inputs checked over their declared ranges")
    return d


# ------------------------------------------------------- boxes of the branch-and-bound searches
def root_boxes(domain: Domain) -> tuple[np.ndarray, np.ndarray]:
    """``(lo, hi)``: one real box per combination of the continuous inputs' pieces
    (shape ``(boxes, continuous inputs)``; one empty box when there are none).

    >>> root_boxes(Domain(()))[0].shape
    (1, 0)
    """
    pieces = [f.pieces for f in domain.continuous]
    combos = list(itertools.product(*pieces)) if pieces else [()]
    n = len(combos)
    lo = np.array([[p[0] for p in c] for c in combos], dtype=float).reshape(n, len(pieces))
    hi = np.array([[p[1] for p in c] for c in combos], dtype=float).reshape(n, len(pieces))
    return lo, hi


def halve_choices(M: np.ndarray, off: int, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Split the allowed choices ``M[:, off:off + n]`` of one discrete input in two halves
    (the first half of each row's allowed values, and the rest).

    >>> a, b = halve_choices(np.array([[True, True, True]]), 0, 3)
    >>> a.tolist(), b.tolist()
    ([[True, False, False]], [[False, True, True]])
    """
    m = M[:, off:off + n]
    half = m.sum(axis=1, keepdims=True) // 2
    left = m & (np.cumsum(m, axis=1) <= half)
    parts = []
    for part in (left, m & ~left):
        M2 = M.copy()
        M2[:, off:off + n] = part
        parts.append(M2)
    return parts[0], parts[1]


def halve_widest(lo: np.ndarray, hi: np.ndarray, scale: np.ndarray
                 ) -> tuple[tuple[np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]]:
    """Split every real box at the middle of its widest side (widths divided by ``scale``):
    ``((lo, hi_lower_half), (lo_upper_half, hi))``.

    >>> (a, b), (c, d) = halve_widest(np.array([[0.0, 0.0]]), np.array([[1.0, 4.0]]),
    ...                               np.ones(2))
    >>> b.tolist(), c.tolist()
    ([[1.0, 2.0]], [[0.0, 2.0]])
    """
    j = ((hi - lo) / scale).argmax(axis=1)
    r = np.arange(len(lo))
    mid = (lo[r, j] + hi[r, j]) / 2
    lo2, hi2 = lo.copy(), hi.copy()
    hi2[r, j] = mid
    lo2[r, j] = mid
    return (lo, hi2), (lo2, hi)


def soft_outputs(net: Network) -> np.ndarray:
    """Which outputs read a neuron that is not a step (their values have a distance)."""
    act = {n.name: n.activation for n in net.neurons}
    return np.array([act.get(o.source, "step") != "step" for o in net.outputs], dtype=bool)


def value_distances(values: np.ndarray, soft: np.ndarray, thr: float) -> np.ndarray:
    """Per output, the smallest ``|value − thr|`` over the rows (inf for step outputs)."""
    if not soft.any() or not len(values):
        return np.full(values.shape[1], np.inf)
    d = np.abs(values - thr).min(axis=0)
    return np.where(soft, d, np.inf)

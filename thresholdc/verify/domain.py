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
the source's unit order, binary, as :meth:`thresholdc.source.Source.evaluate` takes them.

>>> from thresholdc.source import Source
>>> src = Source.from_text("input c: {x, y}, a\\nq = c == y and a\\n")
>>> d = boolean_or_typed_domain(src)
>>> [f.name for f in d.discrete], d.size
(['c', 'a'], 4)
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

__all__ = ["Discrete", "Continuous", "Domain", "boolean_or_typed_domain", "cell_points"]


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
        """Source unit rows ``(rows, len(units))`` for choice indices ``(rows, discrete)`` and
        continuous values ``(rows, continuous)``."""
        col = {u: i for i, u in enumerate(self.units)}
        rows = choice.shape[0]
        X = np.zeros((rows, len(self.units)))
        for k, f in enumerate(self.discrete):
            X[:, [col[u] for u in f.units]] = f.table[choice[:, k]]
        for k, f in enumerate(self.continuous):
            assert reals is not None
            X[:, col[f.unit]] = reals[:, k]
        return X

    def assignment(self, choice: np.ndarray, reals: np.ndarray | None = None) -> dict[str, Any]:
        """One point as ``{feature: value}`` in declaration order."""
        values: dict[str, Any] = {}
        for k, f in enumerate(self.discrete):
            label = f.labels[int(choice[k])]
            values[f.name] = float(label) if f.kind == "real" else label
        for k, f in enumerate(self.continuous):
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
    """Source unit rows as the network's input rows (its unit order and encoding)."""
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
    from ..logic.typed import feature_scale

    d = Domain(units)
    for v in program.inputs:
        d.order.append(v.name)
        if v.kind == "bool":
            d.discrete.append(Discrete(v.name, "bool", (v.name,), bool_table, (0, 1)))
        elif v.kind == "categorical":
            values = tuple(v.values or ())
            d.discrete.append(Discrete(
                v.name, "categorical", tuple(f"{v.name}={x}" for x in values),
                np.eye(len(values)), values,
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

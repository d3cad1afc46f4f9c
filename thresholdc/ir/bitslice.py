"""Bit-sliced evaluation of step networks: 64 rows per machine word.

A step neuron over 0/1 inputs fires when ``Σ w·x + b > 0``.  With ``W = 2w`` and ``B = 2b``
integers (the compiler's weights are integers, its biases half-integers), a negative weight is
turned into a positive one on the complemented input, so the neuron fires exactly when

    Σ |W_i| · y_i  ≥  K,   y_i = x_i (W_i > 0) or 1 - x_i (W_i < 0),   K = 1 - B + Σ_{W_i<0} |W_i|.

Each unit's values are held as bit planes (``uint64`` words, one bit per row); the sum is built
with bit-sliced ripple adders and compared with the constant ``K`` by a bit-sliced comparator,
so a neuron costs a few dozen word operations for 64 rows at once.  Neurons of a layer with the
same sorted weights and the same ``K`` are evaluated together as one 2-D array, which is what
keeps the number of numpy calls small on netlist-sized networks.

Rows are processed in chunks so that the working set stays below a fixed budget whatever the
number of rows.

>>> import numpy as np
>>> plan = BitPlan.build(("a", "b"), [("y", 1, ("a", "b"), (1, 1), -1.5)], ["y"])
>>> plan.decide(np.array([[0, 0], [0, 1], [1, 1]])).ravel().tolist()
[False, False, True]
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

__all__ = ["BitPlan", "MEMORY_BUDGET", "chunk_rows", "unpack"]

#: Bytes a chunk of rows may use for the unit values (bit planes or floats), whatever the
#: number of rows.
MEMORY_BUDGET = 32 * 2**20


def chunk_rows(units: int, bytes_per_value: float, budget: int = MEMORY_BUDGET) -> int:
    """Rows per chunk so that ``units`` values per row stay within ``budget`` bytes.

    Parameters
    ----------
    units : int
        Values held per row (inputs plus neurons).
    bytes_per_value : float
        Size of one value (4 for float32, 1/8 for a bit).
    budget : int
        Bytes available for the values of one chunk.

    Returns
    -------
    int
        A positive multiple of 64.

    Examples
    --------
    >>> chunk_rows(1000, 4.0, budget=4 * 1000 * 640)
    640
    """
    rows = int(budget // max(1.0, units * bytes_per_value))
    return max(64, rows // 64 * 64)


@dataclass(frozen=True)
class _Group:
    """Neurons of one layer that share their sorted weights and their constant K."""

    targets: np.ndarray  # (g,) unit rows written
    sources: np.ndarray  # (g, k) unit rows read, column order matching ``weights``
    weights: tuple[int, ...]  # |W_i| per column, positive
    negated: tuple[bool, ...]  # column reads the complement
    k: int  # fire when the weighted sum >= k


@dataclass(frozen=True)
class BitPlan:
    """A step network prepared for bit-sliced evaluation.

    Build it with :meth:`build` from plain neuron tuples ``(name, layer, inputs, weights,
    bias)``; ``None`` from :meth:`build` means the network has a parameter that is not a
    multiple of 1/2 (the float evaluator handles those).
    """

    n_inputs: int
    n_units: int
    layers: tuple[tuple[_Group, ...], ...]
    outputs: np.ndarray  # unit rows of the outputs

    @classmethod
    def build(cls, inputs: Sequence[str], neurons: Sequence[tuple], outputs: Sequence[str],
              ) -> BitPlan | None:
        """Group the neurons by layer and by weight pattern.

        Parameters
        ----------
        inputs : sequence of str
            Input unit names, in column order.
        neurons : sequence of tuple
            ``(name, layer, inputs, weights, bias)`` in topological order, all step neurons.
        outputs : sequence of str
            The unit each output reads.

        Returns
        -------
        BitPlan or None
            ``None`` when a weight or bias is not a multiple of 1/2.

        Examples
        --------
        >>> p = BitPlan.build(("a",), [("n", 1, ("a",), (-1,), 0.5)], ["n"])
        >>> p.decide(np.array([[0], [1]])).ravel().tolist()
        [True, False]
        """
        index = {name: i for i, name in enumerate(inputs)}
        for j, n in enumerate(neurons):
            index[n[0]] = len(inputs) + j
        by_layer: dict[int, dict[tuple, list[tuple[int, list[int]]]]] = {}
        for j, (_name, layer, ins, weights, bias) in enumerate(neurons):
            doubled = [2 * w for w in weights] + [2 * bias]
            if any(float(t) != int(t) for t in doubled):
                return None
            big_w = [int(t) for t in doubled[:-1]]
            cols: dict[int, int] = {}  # one column per distinct source (repeats add up)
            for i, w in zip(ins, big_w):
                cols[index[i]] = cols.get(index[i], 0) + w
            terms = sorted(((abs(w), w < 0, src) for src, w in cols.items() if w != 0))
            k = 1 - int(doubled[-1]) + sum(a for a, neg, _ in terms if neg)
            key = (tuple(a for a, _, _ in terms), tuple(neg for _, neg, _ in terms), k)
            by_layer.setdefault(layer, {}).setdefault(key, []).append(
                (len(inputs) + j, [src for _, _, src in terms]))
        layers = []
        for layer in sorted(by_layer):
            groups = []
            for (weights, negated, k), members in sorted(by_layer[layer].items()):
                targets = np.array([t for t, _ in members], dtype=np.int64)
                sources = np.array([s for _, s in members], dtype=np.int64).reshape(
                    len(members), len(weights))
                groups.append(_Group(targets, sources, weights, negated, k))
            layers.append(tuple(groups))
        return cls(len(inputs), len(inputs) + len(neurons), tuple(layers),
                   np.array([index[o] for o in outputs], dtype=np.int64))

    def decide(self, X: np.ndarray, budget: int = MEMORY_BUDGET) -> np.ndarray:
        """Boolean outputs ``(rows, outputs)`` for 0/1 input rows ``X``.

        Parameters
        ----------
        X : numpy.ndarray
            ``(rows, inputs)`` array of zeros and ones.
        budget : int
            Bytes the bit planes of one chunk may use.

        Returns
        -------
        numpy.ndarray
            Boolean array of shape ``(rows, len(outputs))``.

        Examples
        --------
        >>> p = BitPlan.build(("a", "b"), [("x", 1, ("a", "b"), (1, 1), -0.5)], ["x"])
        >>> p.decide(np.array([[0, 0], [1, 0]])).ravel().tolist()
        [False, True]
        """
        X = np.asarray(X)
        rows = X.shape[0]
        out = np.empty((rows, len(self.outputs)), dtype=bool)
        # Per row: bit planes plus the adders' temporaries (the units twice, a bit each) and the
        # unpacked input and output bytes of the chunk (two copies each).
        per_row = 2 * self.n_units / 8 + 2 * (self.n_inputs + len(self.outputs))
        step = chunk_rows(1, per_row, budget)
        for start in range(0, rows, step):
            out[start:start + step] = self._decide_chunk(X[start:start + step])
        return out

    def units(self, X: np.ndarray) -> np.ndarray:
        """Bit planes of every unit (inputs first, then neurons) for one chunk of 0/1 rows,
        ``(units, ceil(rows / 64))`` uint64; bit ``r % 64`` of word ``r // 64`` is row ``r``.

        Holds ``units × rows / 8`` bytes: the caller keeps the chunk within its budget
        (:func:`chunk_rows` with ``bytes_per_value = 2 / 8``).

        >>> p = BitPlan.build(("a",), [("n", 1, ("a",), (-1,), 0.5)], ["n"])
        >>> unpack(p.units(np.array([[0], [1], [1]])), 3).tolist()
        [[0, 1, 1], [1, 0, 0]]
        """
        rows = X.shape[0]
        words = -(-rows // 64)
        packed = np.zeros((self.n_inputs, words * 8), dtype=np.uint8)
        packed[:, : -(-rows // 8)] = np.packbits(np.ascontiguousarray(X.T != 0), axis=1,
                                                 bitorder="little")
        values = np.empty((self.n_units, words), dtype=np.uint64)
        values[: self.n_inputs] = packed.view(np.uint64)
        for groups in self.layers:
            for g in groups:
                values[g.targets] = _threshold(values, g)
        return values

    def _decide_chunk(self, X: np.ndarray) -> np.ndarray:
        values = self.units(X)
        return unpack(values[self.outputs], X.shape[0]).T.view(bool)


def unpack(planes: np.ndarray, rows: int) -> np.ndarray:
    """0/1 values ``(units, rows)`` uint8 from bit planes ``(units, words)`` uint64.

    >>> unpack(np.array([[5]], dtype=np.uint64), 3).tolist()
    [[1, 0, 1]]
    """
    planes = np.ascontiguousarray(planes)
    return np.unpackbits(planes.view(np.uint8), axis=1, count=rows, bitorder="little")


_ONES = np.uint64(0xFFFFFFFFFFFFFFFF)


def _threshold(values: np.ndarray, g: _Group) -> np.ndarray:
    """Bit planes of ``Σ |W|·y >= K`` for the neurons of one group, ``(g, words)``."""
    shape = (len(g.targets), values.shape[1])
    total = sum(g.weights)
    if g.k <= 0:
        return np.full(shape, _ONES)
    if g.k > total:
        return np.zeros(shape, dtype=np.uint64)
    if all(w == 1 for w in g.weights) and g.k in (1, len(g.weights)):
        # OR (k = 1) and AND (k = all) of the literals: no adder needed.
        acc: np.ndarray | None = None
        for col, neg in enumerate(g.negated):
            y = values[g.sources[:, col]]
            if neg:
                y = ~y
            acc = y if acc is None else ((acc | y) if g.k == 1 else (acc & y))
        assert acc is not None  # k >= 1 > 0 = total is excluded above
        return acc
    nbits = total.bit_length()
    planes: list[np.ndarray | None] = [None] * nbits
    for col, (w, neg) in enumerate(zip(g.weights, g.negated)):
        y = values[g.sources[:, col]]
        if neg:
            y = ~y
        for p in range(w.bit_length()):
            if not (w >> p) & 1:
                continue
            carry = y
            for q in range(p, nbits):
                if planes[q] is None:
                    planes[q] = carry
                    break
                plane = planes[q]
                planes[q] = plane ^ carry
                carry = plane & carry
    # Compare the planes with the constant K from the most significant bit down.
    greater = np.zeros(shape, dtype=np.uint64)
    equal = np.full(shape, _ONES)
    for q in range(nbits - 1, -1, -1):
        plane = planes[q]
        if (g.k >> q) & 1:
            equal = np.zeros(shape, dtype=np.uint64) if plane is None else equal & plane
        elif plane is not None:
            greater |= equal & plane
            equal &= ~plane
    return greater | equal

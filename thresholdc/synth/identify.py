"""Threshold-function identification: is a truth table one neuron, and with which weights?

A Boolean function ``f`` of ``n`` variables is a *threshold function* when integers
``w_0 … w_{n-1}`` and ``T`` exist with ``f(x) = 1`` exactly when ``Σ w_i·x_i ≥ T``.
:func:`identify` decides this and returns the realisation of smallest cost
``Σ|w_i| + |T|``; among realisations of that cost, the lexicographically smallest
``(|T|, w_0, w_1, …)``.  Truth tables are indexed so that entry ``k`` is the value at the
input with ``x_i = (k >> i) & 1``.

How it works (cheap work first; every step is exact):

1. *Unateness.*  A threshold function is unate in every variable: its cofactors satisfy
   ``f|x_i=0 ≤ f|x_i=1`` (positive, ``w_i > 0``) or the reverse (negative, ``w_i < 0``), or
   are equal (the variable is irrelevant and gets ``w_i = 0`` in every minimal realisation).
   Binate functions are rejected.  The cofactor tests are word-parallel operations on the
   truth table held as one integer.
2. *Positive form.*  Flipping the negative variables (``x_i → 1 - x_i``) gives a monotone
   function ``g``; a realisation ``(v, T')`` of ``g`` with ``v_i ≥ 1`` corresponds to the
   realisation ``w_i = ±v_i``, ``T = T' - Σ_{negative} v_i`` of ``f``.  The sign of ``T`` is
   fixed by ``f(0)`` (``T ≤ 0`` exactly when ``f(0) = 1``), so the cost on the *original*
   variables is a linear function of ``(v, T')``, and the minimisation is done exactly on it.
3. *Chow parameters and 2-monotonicity.*  Threshold functions have totally preordered
   variables: for every pair, ``g|x_i=1,x_j=0 ≥ g|x_i=0,x_j=1`` or the reverse.  Incomparable
   pairs reject the function.  Strict dominance forces ``v_i > v_j`` in every realisation;
   equal Chow parameters then mean symmetric variables.  Variables are put in a canonical
   order (Chow parameter, then polarity), so functions equal up to permuting and negating
   variables share one LP, and those with the same polarities one minimisation.
4. *Reduced constraints.*  Only minimal true and maximal false points of ``g`` constrain a
   realisation, and under the weight order of step 3 a point is implied by the point with
   one of its ones moved to a lighter (or heavier) variable when that point has the same
   value; only the points no move reaches are kept (for majority of 15, two points).
5. *LP feasibility* (HiGHS, through :mod:`.lp`) on those points decides threshold-ness.
6. *Exact minimisation.*  Usually by enumerating the integer weight vectors allowed by the
   weight order in rounds of growing total weight (cost ≥ Σ v, so a round that holds the
   best cost found proves it optimal), keeping *all* optimal vectors up to permutations of
   symmetric variables; the lexicographic rule is then applied on the original variables.
   When that enumeration would be too large, an exact ILP (HiGHS, through :mod:`.lp`)
   minimises the cost, then ``(|T|, w_0, …)`` in exact integer stages.

Every realisation returned is checked against its truth table before it is returned.
The number of variables is bounded by :data:`MAX_VARIABLES` (16).  Functions of up to about
8 variables take milliseconds; at 14-16 variables the ILP stages can take seconds.

>>> identify([0, 0, 0, 1])          # x0 and x1
Realisation(weights=(1, 1), threshold=2)
>>> identify([0, 1, 1, 0]) is None  # x0 xor x1
True
"""

from __future__ import annotations

import sys
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cache, lru_cache
from typing import Any

import numpy as np

from . import exactlp, lp

__all__ = ["MAX_VARIABLES", "Realisation", "identify", "is_threshold"]

#: The largest number of variables :func:`identify` and :func:`is_threshold` accept.
MAX_VARIABLES = 16
#: Largest number of relevant variables whose threshold test is decided by the exact rational
#: simplex of exactlp.py instead of HiGHS (measured on random 2- to 9-variable programs: the
#: exact test took 0.1-0.4 ms per program against HiGHS's 0.6-1 ms, and it needs no scipy
#: import; the bound keeps the integers of the exact tableau small).
EXACT_LP_MAX = 6

_ENUM_BUDGET = 200_000  # largest number of candidate weight vectors enumerated per round
_WORK_BUDGET = 30_000_000  # largest candidates × extreme points evaluated per round
_EVAL_CHUNK = 8192  # candidate rows evaluated per matrix product
_CHUNK_LIMIT = 10**6  # largest objective magnitude of one lexicographic ILP stage
_CACHE_SIZE = 1 << 18
_RAW_CACHE_LENGTH = 256  # tables up to this length are also cached by their raw bytes
_ASCII01 = bytes.maketrans(b"\x00\x01", b"01")
_LITTLE = sys.byteorder == "little"


@dataclass(frozen=True, slots=True)
class Realisation:
    """A threshold realisation: ``f(x) = 1`` exactly when ``Σ weights_i·x_i ≥ threshold``.

    >>> r = Realisation((1, -1), 1)
    >>> r.cost, r.truth_table().tolist()
    (3, [0, 1, 0, 0])
    """

    weights: tuple[int, ...]
    threshold: int

    @property
    def n(self) -> int:
        """The number of variables."""
        return len(self.weights)

    @property
    def cost(self) -> int:
        """``Σ|weights_i| + |threshold|``, the quantity :func:`identify` minimises."""
        return sum(abs(w) for w in self.weights) + abs(self.threshold)

    def truth_table(self) -> np.ndarray:
        """The realised function as a 0/1 ``uint8`` array of length ``2**n``."""
        return (_points(self.n) @ np.asarray(self.weights, dtype=np.int64)
                >= self.threshold).astype(np.uint8)

    def __repr__(self) -> str:
        return f"Realisation(weights={self.weights!r}, threshold={self.threshold})"


def identify(truth_table: Sequence[int] | np.ndarray) -> Realisation | None:
    """The minimal threshold realisation of a Boolean function, or None if there is none.

    Parameters
    ----------
    truth_table : sequence of 0/1 (list, tuple or 1-D numpy array of ints or bools)
        The function's values; its length is ``2**n`` with ``0 ≤ n ≤ MAX_VARIABLES`` (16),
        and entry ``k`` is the value at the input with ``x_i = (k >> i) & 1``.

    Returns
    -------
    Realisation or None
        ``None`` when the function is not a threshold function.  Otherwise weights and
        threshold with ``f(x) = 1`` exactly when ``Σ weights_i·x_i ≥ threshold``, of the
        smallest cost ``Σ|weights_i| + |threshold|``, and among those of that cost the
        lexicographically smallest ``(|threshold|, weights_0, weights_1, …)``.  Constant 1 is
        ``weights 0, threshold 0``; constant 0 is ``weights 0, threshold 1``.

    Raises
    ------
    ValueError
        If the length is not a power of two, exceeds ``2**MAX_VARIABLES``, or a value is not
        0 or 1.

    Notes
    -----
    Results are cached by truth table.  Threshold-ness is decided by an LP (HiGHS) after
    exact combinatorial filters; the minimisation itself is exact integer work.

    Examples
    --------
    >>> identify([0, 0, 0, 0, 0, 0, 0, 1])   # AND of three
    Realisation(weights=(1, 1, 1), threshold=3)
    >>> identify([0, 0, 0, 1, 0, 1, 1, 1])   # majority of three
    Realisation(weights=(1, 1, 1), threshold=2)
    >>> identify([0, 1, 0, 0])               # x0 and not x1
    Realisation(weights=(1, -1), threshold=1)
    """
    n, bits = _read_table(truth_table)
    return _identify_key(n, bits)


def is_threshold(truth_table: Sequence[int] | np.ndarray) -> bool:
    """Whether a Boolean function is a threshold function (no minimisation; cached).

    Parameters
    ----------
    truth_table : sequence of 0/1
        As for :func:`identify`.

    Returns
    -------
    bool

    Examples
    --------
    >>> is_threshold([0, 1, 1, 1]), is_threshold([1, 0, 0, 1])
    (True, False)
    """
    n, bits = _read_table(truth_table)
    return _analyse(n, bits) is not None


# ---------------------------------------------------------------------------------------------
# Input checking


def _read_table(truth_table: Any) -> tuple[int, int]:
    """Validate a truth table; return ``(n, bits)`` with bit ``k`` of ``bits`` = entry ``k``."""
    if isinstance(truth_table, (list, tuple)) and len(truth_table) <= _RAW_CACHE_LENGTH:
        try:
            read = _read_bytes(bytes(truth_table))  # ints in 0..255 only
        except (TypeError, ValueError):
            read = None
        if read is not None:
            return read
    try:
        arr = np.asarray(truth_table)
    except (ValueError, TypeError) as err:
        raise ValueError(
            "Expected a truth table as a 1-D sequence of 0/1 values of length 2**n. "
            f"Got {type(truth_table).__name__} that is not a flat sequence of numbers "
            "instead.") from err
    if arr.ndim != 1:
        raise ValueError(
            "Expected a truth table as a 1-D sequence of 0/1 values of length 2**n. "
            f"Got an array of shape {arr.shape} instead.")
    kind = arr.dtype.kind
    if kind not in "biuf":
        raise ValueError(
            "Expected truth-table values 0 or 1 (ints or bools). "
            f"Got values of type {arr.dtype} instead.")
    if (kind in "biu" and arr.shape[0] <= _RAW_CACHE_LENGTH and _LITTLE
            and arr.dtype.isnative):
        raw, width = arr.tobytes(), arr.dtype.itemsize
        low = raw[::width]
        # a little-endian integer is 0 or 1 exactly when its low byte is and the rest are 0
        if width == 1 or raw.count(0) + low.count(1) == len(raw):
            read = _read_bytes(low)
            if read is not None:
                return read
    return _read_array(arr)


@lru_cache(maxsize=_CACHE_SIZE)
def _read_bytes(raw: bytes) -> tuple[int, int] | None:
    """``(n, bits)`` for a table of one byte per entry, or None if it is not a valid one."""
    size = len(raw)
    if size == 0 or size & (size - 1) or size > 1 << MAX_VARIABLES:
        return None
    if raw.translate(None, b"\x00\x01"):
        return None
    return size.bit_length() - 1, int(raw.translate(_ASCII01)[::-1], 2)


def _read_array(arr: np.ndarray) -> tuple[int, int]:
    """Check the length and values of a 1-D numeric array and pack it into an integer."""
    size = arr.shape[0]
    if size == 0 or size & (size - 1):
        raise ValueError(
            "Expected a truth table of length 2**n (1, 2, 4, 8, ...). "
            f"Got length {size} instead.")
    n = size.bit_length() - 1
    if n > MAX_VARIABLES:
        raise ValueError(
            f"Expected a truth table of at most {MAX_VARIABLES} variables "
            f"(length ≤ {1 << MAX_VARIABLES}). Got {n} variables (length {size}) instead.")
    kind = arr.dtype.kind
    if kind in "iu":
        ok = not np.count_nonzero(arr >> 1)  # 0 and 1 are the only integers with x >> 1 == 0
    elif kind == "f":
        ok = not np.count_nonzero((arr != 0) & (arr != 1))
    else:
        ok = True
    if not ok:
        k = int(np.flatnonzero((arr != 0) & (arr != 1))[0])
        raise ValueError(
            f"Expected truth-table values 0 or 1. Got {arr[k].item()!r} at index {k} instead.")
    packed = np.packbits(arr if kind in "biu" else arr != 0, bitorder="little")
    return n, int.from_bytes(packed.tobytes(), "little")


# ---------------------------------------------------------------------------------------------
# Word-parallel helpers on truth tables held as integers


@cache
def _points(n: int) -> np.ndarray:
    """All inputs of ``n`` variables as an ``(2**n, n)`` 0/1 int64 array, row ``k`` = input k."""
    k = np.arange(1 << n, dtype=np.int64)
    return (k[:, None] >> np.arange(n, dtype=np.int64)) & 1


@cache
def _masks(n: int) -> tuple[tuple[int, ...], int]:
    """Per variable the integer with bit ``k`` set when ``x_i = 1`` at ``k``; and all-ones."""
    pts = _points(n).astype(bool)
    return tuple(_to_bits(pts[:, i]) for i in range(n)), (1 << (1 << n)) - 1


def _flip(bits: int, mask1: int, shift: int) -> int:
    """The truth table with variable ``x_i`` replaced by ``1 - x_i``."""
    return ((bits & mask1) >> shift) | ((bits & ~mask1) << shift)


def _to_array(n: int, bits: int) -> np.ndarray:
    """The truth table as a bool array of length ``2**n``."""
    size = 1 << n
    raw = np.frombuffer(bits.to_bytes((size + 7) // 8, "little"), dtype=np.uint8)
    return np.unpackbits(raw, bitorder="little")[:size].astype(bool)


def _to_bits(table: np.ndarray) -> int:
    """The inverse of :func:`_to_array`."""
    return int.from_bytes(np.packbits(table, bitorder="little").tobytes(), "little")


# ---------------------------------------------------------------------------------------------
# Analysis: filters, positive form, canonical order


@dataclass(frozen=True, slots=True)
class _Analysis:
    """A function that passed every filter and the LP, in canonical positive form."""

    n: int
    order: tuple[int, ...]  # original variable at each canonical position
    negative: tuple[bool, ...]  # polarity at each canonical position
    classes: tuple[tuple[int, ...], ...]  # canonical positions of each symmetry class
    g_bits: int  # the positive form over the canonical positions
    f_zero: int  # f(0, …, 0)


@lru_cache(maxsize=_CACHE_SIZE)
def _analyse(n: int, bits: int) -> _Analysis | None:
    """Run the exact filters and the LP; None when the function is not a threshold function."""
    masks, full = _masks(n)
    if bits in (0, full):
        return _Analysis(n, (), (), (), bits & 1, bits & 1)
    # rules: x_i is positive unate when f|x_i=0 ⊆ f|x_i=1, negative for the reverse,
    # irrelevant when they are equal; anything else is binate and not threshold.
    relevant, negative = [], []
    pos_bits = bits
    for i in range(n):
        s = 1 << i
        f1 = (bits & masks[i]) >> s
        f0 = bits & ~masks[i]
        if f0 == f1:
            continue
        if f0 & ~f1 == 0:
            relevant.append(i)
            negative.append(False)
        elif f1 & ~f0 == 0:
            relevant.append(i)
            negative.append(True)
            pos_bits = _flip(pos_bits, masks[i], s)
        else:
            return None
    # Chow parameters of the positive form (counts of true points with y_i = 1) and the
    # dominance test on every pair: y_i ⪰ y_j when g|10 ⊇ g|01.
    chow = [(pos_bits & masks[i]).bit_count() for i in relevant]
    m = len(relevant)
    for a in range(m):
        i = relevant[a]
        for b in range(a + 1, m):
            j = relevant[b]
            mi, mj = masks[i], masks[j]
            g10 = (pos_bits & mi & ~mj) >> (1 << i)
            g01 = (pos_bits & mj & ~mi) >> (1 << j)
            if g10 & ~g01 and g01 & ~g10:
                return None
    # canonical order: larger Chow parameter first, positive before negative, then index
    ranked = sorted(range(m), key=lambda a: (-chow[a], negative[a], relevant[a]))
    order = tuple(relevant[a] for a in ranked)
    neg = tuple(negative[a] for a in ranked)
    chow_c = [chow[a] for a in ranked]
    classes: list[list[int]] = []
    for p in range(m):
        if p and chow_c[p] == chow_c[p - 1]:
            classes[-1].append(p)
        else:
            classes.append([p])
    # the positive form over the canonical positions: entry k' reads f at the original
    # input whose bit order[p] is bit p of k', flipped on the negative variables
    flip_mask = sum(1 << i for i, ng in zip(relevant, negative, strict=True) if ng)
    index = (_points(m) @ (np.int64(1) << np.asarray(order, dtype=np.int64))) ^ flip_mask
    g_bits = _to_bits(_to_array(n, bits)[index])
    class_parts = tuple((tuple(c),) for c in classes)  # symmetric classes, sorted weights
    if not _lp_feasible(m, g_bits, class_parts):
        return None
    return _Analysis(n, order, neg, tuple(tuple(c) for c in classes), g_bits, bits & 1)


def _order_pairs(parts: tuple) -> list[tuple[int, int]]:
    """Every ``(p, q)`` for which the order rules enforce ``v_p ≥ v_q``.

    ``parts`` lists the classes, largest weight first; each class is a tuple of parts and
    each part lists its positions in the order of ascending weight.
    """
    pairs = []
    seen: list[int] = []
    for cls in parts:
        members = [p for part in cls for p in part]
        pairs += [(p, q) for p in seen for q in members]  # strict dominance
        for part in cls:
            pairs += [(q, p) for a, p in enumerate(part) for q in part[a + 1:]]
        seen += members
    return pairs


def _order_rows(m: int, parts: tuple) -> list[tuple[np.ndarray, float]]:
    """The order rules as rows ``coef·(v, T') ≥ bound`` (few rows: neighbours only)."""
    eye = np.eye(m + 1)
    rows = []
    for cls, below in zip(parts, parts[1:], strict=False):  # min of a class > max below
        for a in cls:
            for b in below:
                rows.append((eye[a[0]] - eye[b[-1]], 1.0))
    for cls in parts:
        for part in cls:
            rows += [(eye[q] - eye[p], 0.0) for p, q in zip(part, part[1:], strict=False)]
    return rows


@lru_cache(maxsize=4096)
def _system(m: int, g_bits: int, parts: tuple) -> tuple[np.ndarray, np.ndarray]:
    """The true and false points whose constraints imply all others under the order rules.

    Rules: with ``v ≥ 0`` only minimal true and maximal false points matter.  When the order
    rules enforce ``v_p ≥ v_q``, a true point ``y`` with ``y_p = 1, y_q = 0`` is implied by
    the point with that one moved from ``p`` to ``q`` if that point is true (its sum is no
    larger); a false point with ``y_p = 0, y_q = 1`` by the point with the one moved from
    ``q`` to ``p`` if that point is false.  Moves strictly lower ``Σ rank``, so every chain of
    implications ends at a kept point.
    """
    g = _to_array(m, g_bits)
    pts = _points(m).astype(bool)
    k = np.arange(1 << m)
    nb = k[:, None] ^ (1 << np.arange(m))  # the neighbours across each variable
    keep_true = g & ~(g[nb] & pts).any(axis=1)
    keep_false = ~g & ~(~g[nb] & ~pts).any(axis=1)
    for p, q in _order_pairs(parts):
        moved = g[k ^ ((1 << p) | (1 << q))]
        keep_true &= ~(pts[:, p] & ~pts[:, q] & moved)
        keep_false &= ~(~pts[:, p] & pts[:, q] & ~moved)
    return pts[keep_true].astype(np.int64), pts[keep_false].astype(np.int64)


@lru_cache(maxsize=_CACHE_SIZE)
def _lp_feasible(m: int, g_bits: int, parts: tuple) -> bool:
    """Whether ``v·y ≥ T'`` on true and ``v·y ≤ T' - 1`` on false points can hold (LP)."""
    ymin, ymax = _system(m, g_bits, parts)
    order = _order_rows(m, parts)
    A = np.vstack([np.hstack([-ymin, np.ones((len(ymin), 1))]),
                   np.hstack([ymax, -np.ones((len(ymax), 1))])]
                  + [-coef[None, :] for coef, _ in order])
    b = np.concatenate([np.zeros(len(ymin)), -np.ones(len(ymax))]
                       + [[-bound] for _, bound in order])
    if m <= EXACT_LP_MAX:
        return exactlp.feasible(A.astype(np.int64).tolist(), b.astype(np.int64).tolist(),
                                [1] * m + [None])
    res = lp.solve(np.r_[np.ones(m), 0.0], A, np.full(len(b), -np.inf), b,
                   np.r_[np.ones(m), -np.inf], np.full(m + 1, np.inf))
    assert res.status in ("optimal", "infeasible"), f"LP ended with status {res.status}"
    return res.status == "optimal"


# ---------------------------------------------------------------------------------------------
# Minimisation


@lru_cache(maxsize=_CACHE_SIZE)
def _identify_key(n: int, bits: int) -> Realisation | None:
    """:func:`identify` on a validated table (cached)."""
    an = _analyse(n, bits)
    if an is None:
        return None
    if not an.order:
        return Realisation((0,) * n, 0 if an.f_zero else 1)
    parts = _parts(an)
    neg_mask = sum(1 << p for p, ng in enumerate(an.negative) if ng)
    reps = _enumerate_optimal(len(an.order), an.g_bits, neg_mask, an.f_zero, parts)
    result = _solve_ilp(an, parts) if reps is None else _lexmin(an, parts, reps)
    assert result is not None, "the LP found a real realisation but the ILP no integer one"
    assert np.array_equal(result.truth_table().astype(bool), _to_array(n, bits)), result
    return result


def _parts(an: _Analysis) -> tuple[tuple[tuple[int, ...], ...], ...]:
    """Each symmetry class split into its positive and negative parts (ascending weight)."""
    # positions inside a class are in original-index order; the lexicographic optimum has
    # w ascending along it, so v ascending on positive and descending on negative parts
    out = []
    for cls in an.classes:
        pos = tuple(p for p in cls if not an.negative[p])
        neg = tuple(reversed([p for p in cls if an.negative[p]]))
        out.append(tuple(part for part in (pos, neg) if part))
    return tuple(out)


def _cost_of(V: np.ndarray, ymin: np.ndarray, ymax: np.ndarray, negvec: np.ndarray,
             f_zero: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """For candidate rows ``V``: feasible?, cost, |T| and T of the best threshold for each."""
    # float products use BLAS and are exact: every sum is an integer far below 2**53
    tmin = np.empty(len(V), dtype=np.int64)
    fmax = np.empty(len(V), dtype=np.int64)
    ymin_t, ymax_t = ymin.T.astype(np.float64), ymax.T.astype(np.float64)
    for start in range(0, len(V), _EVAL_CHUNK):  # chunks keep the products small
        part = V[start:start + _EVAL_CHUNK].astype(np.float64)
        tmin[start:start + _EVAL_CHUNK] = (part @ ymin_t).min(axis=1)
        fmax[start:start + _EVAL_CHUNK] = (part @ ymax_t).max(axis=1)
    feasible = fmax < tmin
    vn = V @ negvec
    if f_zero:  # T ≤ 0, so the cost Σv - T is smallest at the largest T' = tmin
        T = tmin - vn
        cost = V.sum(axis=1) - T
    else:  # T ≥ 1, so the cost Σv + T is smallest at the smallest T' = fmax + 1
        T = fmax + 1 - vn
        cost = V.sum(axis=1) + T
    return feasible, cost, np.abs(T), T


@lru_cache(maxsize=_CACHE_SIZE)
def _enumerate_optimal(m: int, g_bits: int, neg_mask: int, f_zero: int,
                       parts: tuple) -> tuple[tuple[tuple[int, ...], int], ...] | None:
    """All optimal ``(v, T)`` up to permutations inside each part, or None if too many.

    Rules: ``v_p ≥ 1``; every weight of a class exceeds every weight of the next (strict
    dominance); inside a part (symmetric variables of one polarity) weights are sorted.
    Cost ≥ Σv + (1 if f(0) = 0 else 0), so once every vector with Σv ≤ best cost - that
    offset has been seen, the best cost and all vectors reaching it are known exactly.
    """
    ymin, ymax = _system(m, g_bits, parts)
    negvec = np.array([(neg_mask >> p) & 1 for p in range(m)], dtype=np.int64)
    offset = 1 - f_zero
    limit = min(_ENUM_BUDGET, _WORK_BUDGET // (len(ymin) + len(ymax)))
    S = 2 * m
    while True:
        V = _candidates(parts, m, S, limit)
        if V is None:
            return None
        feasible, cost, absT, T = _cost_of(V, ymin, ymax, negvec, f_zero)
        if feasible.any():
            need = int(cost[feasible].min()) - offset
            if need > S:
                S = need
                V = _candidates(parts, m, S, limit)
                if V is None:
                    return None
                feasible, cost, absT, T = _cost_of(V, ymin, ymax, negvec, f_zero)
            break
        S *= 2
    best_cost = cost[feasible].min()
    sel = feasible & (cost == best_cost)
    sel &= absT == absT[sel].min()
    return tuple((tuple(int(x) for x in row), int(t))
                 for row, t in zip(V[sel], T[sel], strict=True))


def _candidates(parts: tuple, m: int, S: int, limit: int) -> np.ndarray | None:
    """Every weight vector allowed by the order rules with ``Σv ≤ S`` (None: too many)."""
    # Classes are stored largest weight first; build from the smallest class up.  Each
    # variable of class c needs at least base_c (one more than the largest weight of the
    # class below); variables of classes k steps further up need at least base_c + k.
    classes = list(reversed(parts))
    sizes = [sum(len(part) for part in cls) for cls in classes]
    rows = np.zeros((1, m), dtype=np.int64)
    total = np.zeros(1, dtype=np.int64)
    base = np.ones(1, dtype=np.int64)
    for ci, cls in enumerate(classes):
        above = sizes[ci + 1:]
        above_vars = sum(above)
        above_extra = sum((k + 1) * s for k, s in enumerate(above))
        cls_max = np.zeros(len(rows), dtype=np.int64)
        done = 0
        for part in cls:
            prev = None
            for p in part:
                later = sizes[ci] - done - 1 + above_vars
                lo = base if prev is None else rows[:, prev]
                hi = S - total - later * base - above_extra
                cnt = np.maximum(hi - lo + 1, 0)
                count = int(cnt.sum())
                if count > limit:
                    return None
                idx = np.repeat(np.arange(len(rows)), cnt)
                val = lo[idx] + np.arange(count) - np.repeat(np.cumsum(cnt) - cnt, cnt)
                rows = rows[idx]
                rows[:, p] = val
                total, base = total[idx] + val, base[idx]
                cls_max = np.maximum(cls_max[idx], val)
                prev = p
                done += 1
        base = cls_max + 1
    return rows


def _lexmin(an: _Analysis, parts: tuple, reps: tuple) -> Realisation:
    """The lexicographically smallest original weights over all permutations of the reps."""
    # Inside a part the weights can be permuted freely; giving the smallest weights to the
    # smallest original indices is lexicographically smallest (w = -v on negative variables).
    best: tuple[int, ...] | None = None
    threshold = 0
    for v, T in reps:
        w = [0] * an.n
        for cls in parts:
            for part in cls:
                origs = sorted(an.order[p] for p in part)
                vals = sorted(v[p] if not an.negative[p] else -v[p] for p in part)
                for i, x in zip(origs, vals, strict=True):
                    w[i] = x
        cand = tuple(w)
        if best is None or cand < best:
            best, threshold = cand, T
    assert best is not None
    return Realisation(best, threshold)


def _solve_ilp(an: _Analysis, parts: tuple) -> Realisation | None:
    """The exact minimum by integer programming: cost first, then ``(|T|, w_0, …)``."""
    m = len(an.order)
    ymin, ymax = _system(m, an.g_bits, parts)
    negvec = np.array(an.negative, dtype=np.float64)
    rows, lb, ub = [], [], []

    def add(coef: np.ndarray, lo: float, hi: float) -> None:
        rows.append(coef)
        lb.append(lo)
        ub.append(hi)

    # variables: v_0 … v_{m-1} (canonical positions), T'.  The order rules hold in every
    # realisation (strict dominance) or in the lexicographic optimum (sorted parts).
    for y in ymin:
        add(np.r_[y, -1.0], 0, np.inf)
    for y in ymax:
        add(np.r_[y, -1.0], -np.inf, -1)
    for coef, bound in _order_rows(m, parts):
        add(coef, bound, np.inf)
    # T = T' - Σ_neg v; |T| and the cost as linear forms (T ≥ 1 exactly when f(0) = 0)
    t_form = np.r_[-negvec, 1.0]
    abs_t = -t_form if an.f_zero else t_form
    cost = np.r_[np.ones(m), 0.0] + abs_t
    add(abs_t, 0 if an.f_zero else 1, np.inf)
    terms = [abs_t]
    for i in sorted(an.order):
        p = an.order.index(i)
        terms.append(np.r_[(-1.0 if an.negative[p] else 1.0) * np.eye(m)[p], 0.0])

    def solve(objective: np.ndarray) -> tuple[int, np.ndarray] | None:
        """The optimum of one stage and its solution (None when infeasible)."""
        res = lp.solve(objective, np.array(rows), np.array(lb, dtype=float),
                       np.array(ub, dtype=float), np.r_[np.ones(m), -np.inf],
                       np.full(m + 1, np.inf), integer=True, rel_gap=0)
        if res.status == "infeasible":
            return None
        assert res.status == "optimal" and res.x is not None, \
            f"ILP ended with status {res.status}"
        x = np.round(res.x)
        return int(round(float(objective @ x))), x.astype(np.int64)

    stage = solve(cost)
    if stage is None:
        return None
    best, x = stage
    add(cost, best, best)
    # every remaining term takes integer values in a range narrower than base = best + 1,
    # so a chunk of terms weighted by powers of base is minimised lexicographically by one
    # integer program; the optimum of each chunk is then fixed by an equality
    base, k = best + 1, 0
    while k < len(terms):
        size = 1
        while k + size < len(terms) and base ** (size + 1) <= _CHUNK_LIMIT:
            size += 1
        objective = sum(base ** (size - 1 - j) * terms[k + j] for j in range(size))
        stage = solve(objective)
        assert stage is not None, "a lexicographic stage of the ILP became infeasible"
        value, x = stage
        add(objective, value, value)
        k += size
    w = [0] * an.n
    for p, i in enumerate(an.order):
        w[i] = int(-x[p] if an.negative[p] else x[p])
    return Realisation(tuple(w), int(x[m] - negvec.astype(np.int64) @ x[:m]))


def _clear_caches() -> None:
    """Empty every cache of this module (for benchmarks and tests)."""
    for fn in (_read_bytes, _analyse, _lp_feasible, _system, _identify_key,
               _enumerate_optimal):
        fn.cache_clear()

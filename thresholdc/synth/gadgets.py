"""Small threshold networks (gadgets) for one function of a few leaves.

A gadget is a tuple of :class:`Spec` neurons over the leaves ``0 … n-1``; each spec computes
``[Σ wᵢ·value(refᵢ) ≥ T]`` where a ref ``r ≥ 0`` is leaf ``r`` and ``r < 0`` is the earlier spec
``-r - 1``.  The last spec is the root.  Weights and thresholds are integers, so with the bias
``-T + ½`` every neuron has ``|z| ≥ ½`` on 0/1 inputs.

Constructions (``s`` is the number of true literals ``litᵢ``, a literal being a leaf or its
complement, so ``s = Σ σᵢ·xᵢ + P`` with ``σᵢ = ±1`` and ``P`` the number of complemented ones):

* ``threshold``: one neuron.
* ``counting`` (parity and its complement): one neuron per bit of ``s``, highest bit first,
  each reading the leaves and the higher bits: ``bⱼ = [s − Σ_{i>j} 2ⁱ·bᵢ ≥ 2ʲ]``; the last is the
  parity.  ⌈log2(n+1)⌉ neurons (common practice; Muroga 1971 for the full adder).
* ``blocks`` (any function of ``s``): with the runs of counts where ``f = 1`` being
  ``[l₁,u₁] … [l_b,u_b]``, hidden ``gⱼ = [s ≥ uⱼ + 1]`` (one per run, the last only when
  ``u_b < n``) and the root ``[s − Σ_{j<b} (l_{j+1} − lⱼ)·gⱼ − (n − l_b + 1)·g_b ≥ l₁]``.
* ``steps`` (any function of ``s``, weights ±1): a hidden ``[s ≥ c]`` at every count ``c`` where
  the value changes and the root ``[v(0) + Σ ±[s ≥ c] ≥ 1]``.
* ``equal``: ``[Σ w·x == T]`` as ``h = [Σ ≥ T+1]``, ``[Σ − (max − T + 1)·h ≥ T]``.
* ``ite``: ``h = [c + t ≥ 2]``, ``[2h + e − c ≥ 1]``.
* ``helper``: ``[Σ w·x + u·g ≥ T]`` for a threshold function ``g`` of the same leaves.
* trees of ``and`` / parity when the fan-in is limited.

>>> g = counting((1, 1, 1), (0, 1, 0, 1))     # parity of three
>>> len(g), evaluate(g, 3) == 0b10010110
(2, True)
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache, lru_cache

import numpy as np

from . import ttable

__all__ = [
    "Spec", "Gadget", "cost", "depth", "fan_in", "max_weight", "evaluate", "spec_tables",
    "threshold", "counting", "blocks", "steps", "symmetric", "equal", "ite", "helper",
    "and_tree", "parity_tree", "limited_threshold", "prune", "fits",
]


@dataclass(frozen=True, slots=True)
class Spec:
    """One neuron of a gadget: ``[Σ weights·value(refs) ≥ T]``."""

    refs: tuple[int, ...]
    weights: tuple[int, ...]
    T: int

    def __repr__(self) -> str:
        terms = " ".join(f"{w:+d}*{'x' if r >= 0 else 'h'}{r if r >= 0 else -r - 1}"
                         for r, w in zip(self.refs, self.weights))
        return f"[{terms} >= {self.T}]"


Gadget = tuple[Spec, ...]


def _spec(terms: dict[int, int], T: int) -> Spec:
    """A spec from ``{ref: weight}`` (zero weights dropped, refs in a fixed order)."""
    refs = tuple(sorted((r for r, w in terms.items() if w), key=lambda r: (r < 0, abs(r))))
    return Spec(refs, tuple(terms[r] for r in refs), T)


def cost(g: Gadget) -> int:
    """Neurons."""
    return len(g)


@lru_cache(maxsize=1 << 16)
def depth(g: Gadget) -> int:
    """Neurons on the longest path from a leaf to the root."""
    d: list[int] = []
    for s in g:
        d.append(1 + max((d[-r - 1] for r in s.refs if r < 0), default=0))
    return d[-1]


def fan_in(g: Gadget) -> int:
    """The largest fan-in."""
    return max(len(s.refs) for s in g)


def max_weight(g: Gadget) -> int:
    """The largest |weight|."""
    return max((abs(w) for s in g for w in s.weights), default=0)


@cache
def _rows(n: int) -> np.ndarray:
    """``(2**n, n)`` 0/1 matrix of the rows."""
    r = np.arange(1 << n, dtype=np.int64)
    return ((r[:, None] >> np.arange(n)) & 1).astype(np.int64)


def _pack(col: np.ndarray) -> int:
    """A boolean column as a truth-table integer."""
    if col.size < 8:
        return int(sum(1 << i for i in np.flatnonzero(col)))
    return int.from_bytes(np.packbits(col, bitorder="little").tobytes(), "little")


def spec_tables(g: Gadget, n: int) -> list[int]:
    """The truth table of every spec of ``g`` over its ``n`` leaves (vectorised over rows)."""
    X = _rows(n)
    vals: list[np.ndarray] = []
    out = []
    for s in g:
        z = np.zeros(1 << n, dtype=np.int64)
        for r, w in zip(s.refs, s.weights):
            z += w * (X[:, r] if r >= 0 else vals[-r - 1])
        v = (z >= s.T).astype(np.int64)
        vals.append(v)
        out.append(_pack(v.astype(bool)))
    return out


@lru_cache(maxsize=1 << 16)
def evaluate(g: Gadget, n: int) -> int:
    """The truth table of the root of ``g`` over ``n`` leaves."""
    return spec_tables(g, n)[-1]


# ------------------------------------------------------------------------------ constructions


def threshold(weights: tuple[int, ...], T: int) -> Gadget:
    """One neuron ``[Σ wᵢ·xᵢ ≥ T]``."""
    return (_spec(dict(enumerate(weights)), T),)


def _count_terms(sigma: tuple[int, ...]) -> tuple[dict[int, int], int]:
    """``s = Σ σᵢ·xᵢ + P``: the terms and ``P``."""
    return {i: s for i, s in enumerate(sigma)}, sum(1 for s in sigma if s < 0)


def counting(sigma: tuple[int, ...], values: tuple[int, ...]) -> Gadget | None:
    """The parity (or its complement) of the literals, one neuron per bit of the count."""
    n = len(sigma)
    if n < 2 or any(values[c] == values[c - 1] for c in range(1, n + 1)):
        return None
    terms, P = _count_terms(sigma)
    m = n.bit_length()
    specs: list[Spec] = []
    higher: dict[int, int] = {}
    for j in range(m - 1, -1, -1):
        t = dict(terms)
        t.update(higher)
        T = (1 << j) - P
        if j == 0 and values[0] == 1:  # the complement of the lowest bit: −(…) ≥ 1 − T
            t = {r: -w for r, w in t.items()}
            T = 1 - T
        specs.append(_spec(t, T))
        higher[-len(specs)] = -(1 << j)
    return tuple(specs)


def _runs(values: tuple[int, ...]) -> list[tuple[int, int]]:
    """Maximal runs ``(l, u)`` of counts where the value is 1."""
    runs = []
    c = 0
    n = len(values) - 1
    while c <= n:
        if values[c]:
            l = c
            while c + 1 <= n and values[c + 1]:
                c += 1
            runs.append((l, c))
        c += 1
    return runs


def blocks(sigma: tuple[int, ...], values: tuple[int, ...]) -> Gadget | None:
    """Any function of the count: a hidden neuron per run of ones, then the root."""
    n = len(sigma)
    runs = _runs(values)
    if not runs:
        return None
    terms, P = _count_terms(sigma)
    specs: list[Spec] = []
    root = dict(terms)
    for j, (l, u) in enumerate(runs):
        last = j == len(runs) - 1
        if last and u == n:
            break
        specs.append(_spec(terms, u + 1 - P))
        weight = (runs[j + 1][0] - l) if not last else (n - l + 1)
        root[-len(specs)] = -weight
    specs.append(_spec(root, runs[0][0] - P))
    return tuple(specs)


def steps(sigma: tuple[int, ...], values: tuple[int, ...]) -> Gadget | None:
    """Any function of the count with weights ±1: a step neuron per change, then the root."""
    n = len(sigma)
    terms, P = _count_terms(sigma)
    specs: list[Spec] = []
    root: dict[int, int] = {}
    for c in range(1, n + 1):
        if values[c] != values[c - 1]:
            specs.append(_spec(terms, c - P))
            root[-len(specs)] = values[c] - values[c - 1]
    if len(specs) < 2:
        return None
    specs.append(_spec(root, 1 - values[0]))
    return tuple(specs)


def symmetric(sigma: tuple[int, ...], values: tuple[int, ...]) -> list[Gadget]:
    """Every construction above for ``f = values[s]`` (and for its complement, negated)."""
    out = []
    for build in (counting, blocks, steps):
        g = build(sigma, values)
        if g is not None:
            out.append(g)
    comp = tuple(1 - v for v in values)
    g = blocks(sigma, comp)
    if g is not None:
        out.append(_negate_root(g))
    return out


def _negate_root(g: Gadget) -> Gadget:
    """``g`` with the root complemented: ``¬[Σ ≥ T] = [−Σ ≥ 1 − T]``."""
    r = g[-1]
    return g[:-1] + (Spec(r.refs, tuple(-w for w in r.weights), 1 - r.T),)


def equal(weights: tuple[int, ...], T: int) -> Gadget:
    """``[Σ wᵢ·xᵢ == T]`` (weights of either sign) in two neurons, or one at the range ends."""
    hi = sum(w for w in weights if w > 0)
    lo = sum(w for w in weights if w < 0)
    terms = dict(enumerate(weights))
    if T >= hi:
        return (_spec(terms, T),)
    if T <= lo:
        return (_spec({r: -w for r, w in terms.items()}, -T),)
    h = _spec(terms, T + 1)
    root = dict(terms)
    root[-1] = -(hi - T + 1)
    return (h, _spec(root, T))


def ite(limit: int | None) -> Gadget:
    """``if x0 then x1 else x2``: two neurons, or three of fan-in 2 when ``limit < 3``."""
    if limit is not None and limit < 3:
        a = _spec({0: 1, 1: 1}, 2)          # c and t
        b = _spec({0: -1, 2: 1}, 1)         # not c and e
        return (a, b, _spec({-1: 1, -2: 1}, 1))
    h = _spec({0: 1, 1: 1}, 2)
    return (h, _spec({-1: 2, 2: 1, 0: -1}, 1))


def helper(g_weights: tuple[int, ...], g_T: int, weights: tuple[int, ...], u: int,
           T: int) -> Gadget:
    """``[Σ wᵢ·xᵢ + u·g ≥ T]`` with the helper ``g = [Σ g_weightsᵢ·xᵢ ≥ g_T]``."""
    root = dict(enumerate(weights))
    root[-1] = u
    return (_spec(dict(enumerate(g_weights)), g_T), _spec(root, T))


def and_tree(sigma: tuple[int, ...], limit: int) -> Gadget:
    """The ``and`` of the literals (``σᵢ = ±1``) with at most ``limit`` inputs per neuron."""
    items: list[tuple[int, int]] = [(i, s) for i, s in enumerate(sigma)]  # (ref, sign)
    specs: list[Spec] = []
    while True:
        if len(items) <= limit:
            group, items = items, []
        else:
            group, items = items[:limit], items[limit:]
        t = {r: s for r, s in group}
        T = sum(1 for _, s in group if s > 0)
        specs.append(_spec(t, T))
        if not items:
            return tuple(specs)
        items.append((-len(specs), 1))


@cache
def _direct_parity(n: int, limit: int | None, weight: int | None) -> Gadget | None:
    """The smallest single counting construction of the parity of ``n`` that fits."""
    best = None
    for build in (counting, blocks, steps):
        g = build((1,) * n, tuple(c & 1 for c in range(n + 1)))
        if g is not None and _fits(g, limit, weight) and (best is None or len(g) < len(best)):
            best = g
    return best


@cache
def parity_tree(n: int, limit: int | None, weight: int | None) -> Gadget | None:
    """The parity of ``n`` leaves within a fan-in and weight limit: one construction when one
    fits, else parities of the largest groups that fit, level by level (a loop)."""
    direct = _direct_parity(n, limit, weight)
    if direct is not None or n <= 2:
        return direct
    size = next((s for s in range(n - 1, 1, -1) if _direct_parity(s, limit, weight)), None)
    if size is None:
        return None
    specs: list[Spec] = []
    refs: list[int] = list(range(n))
    while len(refs) > 1:
        nxt: list[int] = []
        for k in range(0, len(refs), size):
            group = refs[k:k + size]
            if len(group) == 1:
                nxt.append(group[0])
                continue
            g = _direct_parity(len(group), limit, weight)
            assert g is not None  # smaller groups fit when a larger one does
            base = len(specs)
            for s in g:
                new_refs = tuple(group[r] if r >= 0 else -(base + (-r - 1)) - 1 for r in s.refs)
                specs.append(Spec(new_refs, s.weights, s.T))
            nxt.append(-len(specs))
        refs = nxt
    return tuple(specs)


def _fits(g: Gadget, limit: int | None, weight: int | None) -> bool:
    """Whether ``g`` keeps within the fan-in and weight limits."""
    return (limit is None or fan_in(g) <= limit) and (weight is None or max_weight(g) <= weight)


def fits(g: Gadget, limit: int | None, weight: int | None) -> bool:
    """Whether ``g`` keeps within the fan-in and weight limits."""
    return _fits(g, limit, weight)


def truth_of_count(n: int, sigma: tuple[int, ...], values: tuple[int, ...]) -> int:
    """The table of ``values[s]`` over ``n`` leaves (for checks)."""
    tt = 0
    for c, v in enumerate(values):
        if v:
            tt |= ttable.count_eq(n, c)
    for i, s in enumerate(sigma):
        if s < 0:
            tt = ttable.flip(tt, n, i)
    return tt


# ------------------------------------------------------------------------------ limited trees


class _Builder:
    """Specs appended one by one; a value is a ref (``≥ 0`` leaf, ``< 0`` spec) with a
    complement flag, or a constant ``("c", 0|1)``."""

    def __init__(self, limit: int, weight: int | None) -> None:
        self.specs: list[Spec] = []
        self.limit = limit
        self.weight = weight
        self.memo: dict[tuple, tuple] = {}

    def spec(self, terms: list[tuple[tuple, int]], T: int) -> tuple:
        """``[Σ w·value ≥ T]`` over values (folding complements and constants)."""
        coef: dict[int, int] = {}
        for (kind, ref, neg), w in terms:
            if kind == "c":
                T -= w * ref
                continue
            if neg:
                coef[ref] = coef.get(ref, 0) - w
                T -= w
            else:
                coef[ref] = coef.get(ref, 0) + w
        live = {r: w for r, w in coef.items() if w}
        lo = sum(w for w in live.values() if w < 0)
        hi = sum(w for w in live.values() if w > 0)
        if lo >= T:
            return ("c", 1, 0)
        if hi < T:
            return ("c", 0, 0)
        if len(live) == 1:
            (r, w), = live.items()
            return ("r", r, int(w < 0))  # [w·x ≥ T] with one input is x or not x
        self.specs.append(_spec(live, T))
        return ("r", -len(self.specs), 0)

    def and_(self, vals: list[tuple]) -> tuple:
        """The ``and`` of values within the fan-in limit."""
        vals = list(vals)
        while len(vals) > self.limit:
            vals = vals[self.limit:] + [self.spec([(x, 1) for x in vals[:self.limit]],
                                                  self.limit)]
        return self.spec([(x, 1) for x in vals], len(vals))

    def or_(self, vals: list[tuple]) -> tuple:
        """The ``or`` of values within the fan-in limit."""
        vals = list(vals)
        while len(vals) > self.limit:
            vals = vals[self.limit:] + [self.spec([(x, 1) for x in vals[:self.limit]], 1)]
        return self.spec([(x, 1) for x in vals], 1)

    def atleast(self, items: tuple[tuple[int, int], ...], T: int) -> tuple:
        """``[Σ w·x ≥ T]`` over ``(leaf, w > 0)`` items: one neuron when it fits, else
        ``∨ₛ ([Σ_A ≥ T − s] ∧ [Σ_B ≥ s])`` over the sums ``s`` the second half can reach."""
        total = sum(w for _, w in items)
        if T <= 0:
            return ("c", 1, 0)
        if T > total:
            return ("c", 0, 0)
        key = (items, T)
        got = self.memo.get(key)
        if got is not None:
            return got
        if len(items) == 1:
            out = ("r", items[0][0], 0)
        elif len(items) <= self.limit and (self.weight is None or max(
                min(w, T) for _, w in items) <= self.weight):
            out = self.spec([(("r", x, 0), min(w, T)) for x, w in items], T)
        else:
            half = len(items) // 2
            A, B = items[:half], items[half:]
            sums = {0}
            for _, w in B:
                sums |= {s + w for s in sums}
            terms = []
            for s in sorted(sums):
                if s == 0:
                    terms.append(self.atleast(A, T))
                elif T - s <= 0:
                    terms.append(self.atleast(B, s))
                else:
                    terms.append(self.and_([self.atleast(A, T - s), self.atleast(B, s)]))
            terms = [t for t in terms if t != ("c", 0, 0)]
            out = ("c", 1, 0) if ("c", 1, 0) in terms else self.or_(terms) if terms else (
                "c", 0, 0)
        self.memo[key] = out
        return out

    def finish(self, val: tuple) -> Gadget:
        """The specs with ``val`` as the root (a copy neuron when the root is not a spec)."""
        if val[0] == "c" or val[1] >= 0 or val[2] or val[1] != -len(self.specs):
            self.spec_root(val)
        return tuple(self.specs)

    def spec_root(self, val: tuple) -> None:
        """Append a root neuron that equals ``val``."""
        if val[0] == "c":
            self.specs.append(Spec((), (), 1 - val[1]))
            return
        r, neg = val[1], val[2]
        self.specs.append(Spec((r,), (-1,), 0) if neg else Spec((r,), (1,), 1))


def limited_threshold(weights: tuple[int, ...], T: int, limit: int | None,
                      weight: int | None, equal: bool = False) -> Gadget:
    """``[Σ wᵢ·xᵢ ≥ T]`` (or ``== T`` when ``equal``), weights of either sign, as a tree of
    neurons of at most ``limit`` inputs and ``|weight| ≤ weight`` (``limit ≥ 2``,
    ``weight ≥ 1``)."""
    n = len(weights)
    b = _Builder(limit if limit is not None else max(n, 2), weight)
    # built over the literals yᵢ = xᵢ (w > 0) or 1 − xᵢ (w < 0, weight |w|), then each spec
    # is rewritten to read xᵢ
    items = []
    neg: dict[int, bool] = {}
    for i, w in enumerate(weights):
        if w > 0:
            items.append((i, w))
        elif w < 0:
            items.append((i, -w))
            neg[i] = True
            T += -w
    geq = b.atleast(tuple(items), T)
    root = geq if not equal else b.and_([geq, _not(b.atleast(tuple(items), T + 1))])
    return prune(tuple(_flip_leaves(s, neg) for s in b.finish(root)))


def prune(g: Gadget) -> Gadget:
    """``g`` without the specs the root does not read (directly or through others)."""
    live = [False] * len(g)
    live[-1] = True
    for j in range(len(g) - 1, -1, -1):
        if live[j]:
            for r in g[j].refs:
                if r < 0:
                    live[-r - 1] = True
    if all(live):
        return g
    new_index: dict[int, int] = {}
    out: list[Spec] = []
    for j, s in enumerate(g):
        if live[j]:
            new_index[j] = len(out)
            out.append(Spec(tuple(r if r >= 0 else -new_index[-r - 1] - 1 for r in s.refs),
                            s.weights, s.T))
    return tuple(out)


def _not(val: tuple) -> tuple:
    """The complement of a value."""
    if val[0] == "c":
        return ("c", 1 - val[1], 0)
    return ("r", val[1], 1 - val[2])


def _flip_leaves(s: Spec, neg: dict[int, bool]) -> Spec:
    """``s`` with each leaf in ``neg`` read complemented (``w·(1 − x) = −w·x + w``)."""
    ws = []
    T = s.T
    for r, w in zip(s.refs, s.weights):
        if r >= 0 and neg.get(r):
            ws.append(-w)
            T -= w
        else:
            ws.append(w)
    return Spec(s.refs, tuple(ws), T)

"""The implementations a node of the hashed graph may get, each a gadget over some leaves.

Rules
    * A cut whose function is a threshold function is one neuron (weights from
      :func:`thresholdc.synth.identify.identify`, the smallest realisation).
    * A cut whose function is symmetric (a function of how many literals are true) gets every
      counting construction of :mod:`thresholdc.synth.gadgets` that keeps within the limits.
    * (:mod:`thresholdc.synth.helper_neurons` adds two-neuron options ``[Σ w·x + u·g ≥ T]`` with
      another node's threshold function ``g`` as the helper; the cover counts a helper once
      when that node's own neuron computes it.)
    * Every node also has the gadget of its own gate over its arguments, and a flattened
      ``and``/``xor`` chain its gate over all the chain's arguments; fan-in and weight limits
      are met by trees.  An option breaking a limit is dropped.
    * A function is classified once per truth table (cached).

>>> from thresholdc.ir.gates import Gate, GateGraph
>>> from thresholdc.synth.hashing import hash_gates
>>> from thresholdc.synth.cuts import enumerate_cuts
>>> g = GateGraph.build(["a", "b", "c"], [("y", "y")], [("t", Gate("or", ("b", "c"))),
...     ("y", Gate("and", ("a", "t")))])
>>> h = hash_gates(g)
>>> v = h.lit_of["y"] >> 1
>>> opts = node_options(h, v, enumerate_cuts(h, 6)[v], None, Limits(None, None))
>>> min(o.cost for o in opts)
1
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from ..errors import UsageError
from . import gadgets, ttable
from .cuts import Cut
from .gadgets import Gadget, Spec
from .hashing import Hashed
from .identify import identify

__all__ = ["Option", "Limits", "classify", "classify_cut", "node_options", "KEY_LIMIT"]

#: Gadgets over at most this many leaves carry truth-table keys (so neurons can be shared).
KEY_LIMIT = 10

#: Parities of at most this many leaves get a counting gadget under every literal polarity.
PARITY_VARIANTS = 4


@dataclass(frozen=True, slots=True)
class Limits:
    """The largest fan-in and |weight| allowed (None: no limit)."""

    fan_in: int | None
    weight: int | None

    def fits(self, g: Gadget) -> bool:
        return gadgets.fits(g, self.fan_in, self.weight)


class Option:
    """A gadget for a node over its leaves (node ids, increasing), computing ``tt`` over them
    (``tt`` is None when there are too many leaves for a table)."""

    __slots__ = ("leaves", "gadget", "tt", "cost", "depth", "cone", "_keys")

    def __init__(self, leaves: tuple[int, ...], gadget: Gadget, tt: int | None,
                 cone: int = 0) -> None:
        self.leaves = leaves
        self.cone = cone  # the nodes between the leaves and the node (a mask), when known
        self.gadget = gadget
        self.tt = tt
        self.cost = len(gadget)
        self.depth = gadgets.depth(gadget)
        self._keys: tuple | None = None

    def keys(self) -> tuple:
        """Per spec ``(key, complemented)``: ``key = (leaves, table)`` over the leaves the spec
        reads (directly or through earlier specs), the table in its canonical polarity (the
        smaller of it and its complement); ``(None, 0)`` for gadgets too wide for tables."""
        if self._keys is None:
            n = len(self.leaves)
            if n > KEY_LIMIT:
                self._keys = tuple((None, 0) for _ in self.gadget)
            else:
                root, parts = _template_keys(self.gadget, n)
                if self.tt is not None:
                    assert root == self.tt, "a gadget disagrees with its cut's function"
                lv = self.leaves
                self._keys = tuple([((tuple([lv[i] for i in pos]), t), flag)
                                    for pos, t, flag in parts])
        return self._keys

    def __repr__(self) -> str:
        return f"Option(leaves={self.leaves}, gadget={self.gadget})"


@lru_cache(maxsize=1 << 16)
def _template_keys(g: Gadget, n: int) -> tuple[int, tuple[tuple[tuple[int, ...], int, int], ...]]:
    """The root's table over all ``n`` leaves, and per spec the leaf positions it reads
    (directly or through earlier specs) with its table over them in canonical polarity."""
    tabs = gadgets.spec_tables(g, n)
    out = []
    reach: list[tuple[int, ...]] = []
    for s, t in zip(g, tabs):
        r: set[int] = set()
        for x in s.refs:
            r.update((x,) if x >= 0 else reach[-x - 1])
        pos = tuple(sorted(r))
        reach.append(pos)
        t = ttable.shrink(t, n, pos)
        c = ttable.full(len(pos)) ^ t
        out.append((pos, t, 0) if t <= c else (pos, c, 1))
    return tabs[-1], tuple(out)


# ------------------------------------------------------------------------------ classification

def _identify(tt: int, n: int):
    """``identify`` on a table held as an integer."""
    return identify(np.array(ttable.to_list(tt, n), dtype=np.uint8))


@lru_cache(maxsize=1 << 16)
def classify(tt: int, n: int) -> tuple | None:
    """``("const", v)``, ``("thr", weights, T)``, ``("sym", polarity, values)`` or None."""
    if n == 0:
        return ("const", tt & 1)
    if ttable.unateness(tt, n) is not None:
        r = _identify(tt, n)
        if r is not None:
            return ("thr", tuple(int(w) for w in r.weights), int(r.threshold))
        return None
    s = ttable.symmetry(tt, n)
    if s is not None:
        return ("sym", s[0], s[1])
    return None


def classify_cut(c: Cut) -> tuple[tuple[int, ...], tuple | None]:
    """The positions of the leaves ``c``'s function depends on, and the classification of the
    function over them."""
    return _classify_table(c.tt, len(c.leaves))


@lru_cache(maxsize=1 << 16)
def _classify_table(tt: int, n: int) -> tuple[tuple[int, ...], tuple | None]:
    """:func:`classify_cut` on a table (cached)."""
    sup = ttable.support(tt, n)
    small = tt if len(sup) == n else ttable.shrink(tt, n, sup)
    return sup, classify(small, len(sup))


@lru_cache(maxsize=1 << 16)
def _templates(tt: int, n: int, limits: Limits) -> tuple[Gadget, ...]:
    """The gadgets (over leaf positions) a function gives by its class, within the limits."""
    sup, cls = _classify_table(tt, n)
    if cls is None:
        return ()
    if cls[0] == "const":
        gs: list[Gadget] = [(Spec((), (), 1 - cls[1]),)]
    elif cls[0] == "thr":
        gs = [gadgets.threshold(cls[1], cls[2])]
    else:
        gs = []
        for pol in _polarities(cls, len(sup)):
            small = tt if len(sup) == n else ttable.shrink(tt, n, sup)
            values = _values(small, len(sup), pol)
            gs.extend(gadgets.symmetric(tuple(-1 if p else 1 for p in pol), values))
    return tuple(_remap(g, list(sup)) for g in gs if limits.fits(g))


def _polarities(cls: tuple, n: int) -> list[tuple[int, ...]]:
    """The literal polarities to count under: the one found, and for a parity of at most
    :data:`PARITY_VARIANTS` leaves every polarity (their helpers differ: one of them may be a
    neuron the circuit has anyway, such as the carry beside a sum)."""
    pol = tuple(cls[1])
    values = cls[2]
    parity = all(values[c] != values[c - 1] for c in range(1, len(values)))
    if not parity or n > PARITY_VARIANTS:
        return [pol]
    return [(0,) + tuple((r >> i) & 1 for i in range(n - 1)) for r in range(1 << (n - 1))]


def _values(tt: int, n: int, pol: tuple[int, ...]) -> tuple[int, ...]:
    """``f`` at a row with ``c`` true literals (literal i is ``xᵢ xor pol[i]``), per ``c``."""
    base = sum(p << i for i, p in enumerate(pol))
    return tuple((tt >> (base ^ ((1 << c) - 1))) & 1 for c in range(n + 1))


def _cut_options(c: Cut, limits: Limits) -> list[Option]:
    """The options a cut gives by its function alone (built over the leaves the function
    depends on; the cut keeps every leaf, which closes the cone)."""
    return [Option(c.leaves, g, c.tt, c.cone)
            for g in _templates(c.tt, len(c.leaves), limits)]


# ------------------------------------------------------------------------------ structural options


def _polarise(g: Gadget, neg: tuple[int, ...]) -> Gadget:
    """``g`` with leaf ``i`` read complemented where ``neg[i]``: ``w·(1 − x) = −w·x + w``."""
    out = []
    for s in g:
        ws = []
        T = s.T
        for r, w in zip(s.refs, s.weights):
            if r >= 0 and neg[r]:
                ws.append(-w)
                T -= w
            else:
                ws.append(w)
        out.append(Spec(s.refs, tuple(ws), T))
    return tuple(out)


def _gate_gadget(h: Hashed, v: int, lits: tuple[int, ...], limits: Limits) -> Gadget | None:
    """The gadget of node ``v``'s own gate over the literals ``lits`` (sorted by node; the
    gadget's leaf ``i`` is node ``lits[i] >> 1``)."""
    op = h.op[v]
    n = len(lits)
    neg = tuple(lit & 1 for lit in lits)
    F, W = limits.fan_in, limits.weight
    if op in ("and", "buf"):
        return gadgets.and_tree(tuple(-1 if x else 1 for x in neg), F if F is not None else n)
    if op == "const":
        return (Spec((), (), 1 - h.value[v]),)
    if op == "xor":
        g = gadgets.parity_tree(n, F, W)
        return None if g is None else _polarise(g, neg)
    if op in ("thr", "eq"):
        ws = h.weights[v] or ()
        g = (gadgets.threshold(ws, h.threshold[v]) if op == "thr"  # type: ignore[arg-type]
             else gadgets.equal(ws, h.threshold[v]))  # type: ignore[arg-type]
        g = _polarise(g, neg)
        if limits.fits(g):
            return g
        if n <= KEY_LIMIT:  # a smaller realisation of the same function may fit
            tt = gadgets.evaluate(g, n)
            for o in _cut_options(Cut(0, tuple(range(n)), tt), limits):
                return o.gadget
        # a tree of smaller neurons always fits (fan-in ≥ 2, weight ≥ 1)
        signed = []
        T = h.threshold[v]
        for w, x in zip(ws, neg):
            signed.append(-w if x else w)
            T -= w if x else 0  # type: ignore[operator]
        return gadgets.limited_threshold(tuple(signed), T, F, W, equal=op == "eq")  # type: ignore[arg-type]
    if op == "ite":
        for g in (gadgets.ite(None), gadgets.ite(2)):
            g = _polarise(g, neg)
            if limits.fits(g):
                return g
        return None
    raise AssertionError(f"no gate gadget for op {op!r}")


def _sorted_lits(h: Hashed, v: int, lits: tuple[int, ...]) -> tuple[tuple[int, ...], list[int]]:
    """Literals sorted by node, and for each original position its index in the sorted list."""
    order = sorted(range(len(lits)), key=lambda i: lits[i] >> 1)
    where = [0] * len(lits)
    for k, i in enumerate(order):
        where[i] = k
    return tuple(lits[i] for i in order), where


def _remap(g: Gadget, where: list[int]) -> Gadget:
    """``g`` with leaf ``i`` renumbered ``where[i]``."""
    return tuple(Spec(tuple(where[r] if r >= 0 else r for r in s.refs), s.weights, s.T)
                 for s in g)


def _gate_option(h: Hashed, v: int, lits: tuple[int, ...], limits: Limits) -> Option | None:
    """The option of ``v``'s gate over ``lits`` (any order), with leaves sorted."""
    g = _gate_gadget(h, v, lits, limits)
    if g is None:
        return None
    ghost = h.ghost.get(v, ())
    srt, where = _sorted_lits(h, v, tuple(lits) + tuple(2 * x for x in ghost))
    leaves = tuple(lit >> 1 for lit in srt)
    g = _remap(g, where)
    tt = gadgets.evaluate(g, len(leaves)) if len(leaves) <= KEY_LIMIT else None
    cone = 1 << v
    for x in h.inner.get(v, ()) if lits is h.flat.get(v) else ():
        cone |= 1 << x
    return Option(leaves, g, tt, cone)


def real_option(h: Hashed, v: int) -> Option:
    """The option of a ``real`` node: it reads its real input (built specially)."""
    o = Option((h.fanins[v][0] >> 1,), (Spec((0,), (1,), 1),), None)
    o._keys = ((None, 0),)
    return o


def node_options(h: Hashed, v: int, cuts: list[Cut], support: Cut | None,
                 limits: Limits, prior: list[list[Option]] | None = None) -> list[Option]:
    """Every option of node ``v``: from its cuts, its support cut, its flattened chain, its
    own gate, and (with the options ``prior`` of earlier nodes) an ``and``/``xor`` of a
    one-neuron argument.  Raises UsageError when no option keeps within the limits."""
    if h.op[v] == "real":
        return [real_option(h, v)]
    out: list[Option] = []
    seen: set[tuple] = set()

    def add(o: Option | None) -> None:
        if o is None:
            return
        key = (o.leaves, o.gadget)
        if key not in seen:
            seen.add(key)
            out.append(o)

    for c in cuts:
        for o in _cut_options(c, limits):
            add(o)
    if support is not None:
        for o in _cut_options(support, limits):
            add(o)
    flat = h.flat.get(v)
    if flat is not None:
        add(_gate_option(h, v, flat, limits))
    add(_gate_option(h, v, h.fanins[v], limits))
    if prior is not None:
        for o in _composed_options(h, v, prior, limits):
            add(o)
    if not out:
        raise UsageError(
            f"signal {h.rep[v]!r} cannot be built within the limits "
            f"(max_fan_in={limits.fan_in}, max_weight={limits.weight})"
        )
    return out


# ------------------------------------------------------------------------------ composed options

_COMPOSE_PER_ARGUMENT = 3  # one-neuron options of an argument composed with the rest

#: Composed options stop at this |weight| (each level multiplies the weights it builds on).
COMPOSE_WEIGHT_LIMIT = 32


def _composed_options(h: Hashed, v: int, prior: list[list[Option]], limits: Limits
                      ) -> list[Option]:
    """Options of an ``and`` (any arity) or a two-input ``xor`` one argument of which has a
    one-neuron option ``e = [s ≥ T]`` (``s = Σ w·x`` over its leaves), the others being read
    as leaves; the cone may then be wider than the cut size.

    * ``and(y₁ … y_m, e) = [s + B·Σ yⱼ ≥ T + m·B]`` with ``B = max s − T + 1``;
    * ``xor(y, e)``: ``h = [s + B·y ≥ T + B]`` (e and y) and ``[s + B·y − C·h ≥ T]`` with
      ``B = max(max s − T + 1, T − min s)`` and ``C = max s + B − T + 1``.
    """
    op = h.op[v]
    fans = h.fanins[v]
    if v in h.ghost or op not in ("and", "xor") or len(fans) < 2:
        return []
    if op == "xor" and len(fans) != 2:
        return []
    out: list[Option] = []
    for i, lit in enumerate(fans):
        b = lit >> 1
        others = [fans[j] for j in range(len(fans)) if j != i]
        other_mask = 0
        for y in others:
            other_mask |= 1 << (y >> 1)
        singles = [o for o in prior[b] if o.cost == 1 and o.leaves and o.cone
                   and not o.cone & other_mask
                   and not any((y >> 1) in o.leaves for y in others)]
        singles.sort(key=lambda o: (-len(o.leaves), o.leaves))
        for o in singles[:_COMPOSE_PER_ARGUMENT]:
            spec = o.gadget[0]
            w = {o.leaves[r]: wt for r, wt in zip(spec.refs, spec.weights)}
            T = spec.T
            if lit & 1:  # the argument is read complemented: not [s ≥ T] = [-s ≥ 1 - T]
                w = {x: -wt for x, wt in w.items()}
                T = 1 - T
            smax = sum(wt for wt in w.values() if wt > 0)
            smin = sum(wt for wt in w.values() if wt < 0)
            leaves = tuple(sorted(set(o.leaves) | {y >> 1 for y in others}))
            pos = {x: k for k, x in enumerate(leaves)}
            base = {pos[x]: wt for x, wt in w.items()}
            if op == "and":
                B = smax - T + 1
                terms = dict(base)
                T2 = T + len(others) * B
                for y in others:
                    if y & 1:  # B·(1 − x)
                        terms[pos[y >> 1]] = terms.get(pos[y >> 1], 0) - B
                        T2 -= B
                    else:
                        terms[pos[y >> 1]] = terms.get(pos[y >> 1], 0) + B
                gadget: Gadget = (gadgets._spec(terms, T2),)
            else:
                y = others[0]
                B = max(smax - T + 1, T - smin)
                Cw = smax + B - T + 1
                terms = dict(base)
                ty, off = (B, 0) if not y & 1 else (-B, B)  # B·y, y possibly 1 − x
                terms[pos[y >> 1]] = ty
                hspec = gadgets._spec(terms, T + B - off)
                root = dict(terms)
                root[-1] = -Cw
                gadget = (hspec, gadgets._spec(root, T - off))
            if not limits.fits(gadget) or gadgets.max_weight(gadget) > COMPOSE_WEIGHT_LIMIT:
                continue
            tt = gadgets.evaluate(gadget, len(leaves)) if len(leaves) <= KEY_LIMIT else None
            out.append(Option(leaves, gadget, tt, o.cone | (1 << v)))
    return out

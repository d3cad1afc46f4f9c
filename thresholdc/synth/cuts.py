"""k-feasible cuts of a hashed graph, each with the truth table of its node over its leaves.

Rules
    * A *cut* of node ``v`` is a set of nodes (its *leaves*) such that every path from an input
      to ``v`` passes through a leaf; it is *k-feasible* with at most ``k`` leaves.  The cuts of
      ``v`` are the unions of one cut (or the node itself) per argument of ``v``, except a
      union in which one leaf lies inside the cone of another argument's cut: its table would
      read that node through its cone, not as the free leaf a local check makes of it.
    * Each cut carries the function of ``v`` over its leaves (leaves in increasing node order,
      leaf ``i`` being variable ``i`` of the table).  The function may ignore a leaf (through
      reconvergence); the leaf stays, because a cut is what closes the cone structurally.
    * At most ``limit`` partial unions are kept while merging the arguments of a node, and at
      most ``keep`` cuts per node are passed on to its readers: those of least area flow, then
      the smallest (a fixed order, so the result is deterministic).  Every candidate of a
      node (before the ``keep`` pruning) is returned for synthesis.
    * A node whose function over one of its cuts is constant passes only that cut on, and is
      never a leaf of its readers' cuts (they see through it to what closes it).
    * Graph walks are loops over the topological order (no recursion).
    * *Support cuts*: a node whose whole support (the inputs it depends on) is larger than ``k``
      but at most ``support_limit`` also gets that support as a cut, evaluated over the inputs,
      so a function written as a wide sum of products is still seen whole.

>>> from thresholdc.ir.gates import Gate, GateGraph
>>> from thresholdc.synth.hashing import hash_gates
>>> g = GateGraph.build(["a", "b", "c"], [("y", "y")], [("t", Gate("or", ("b", "c"))),
...     ("y", Gate("and", ("a", "t")))])
>>> h = hash_gates(g)
>>> cands = enumerate_cuts(h, 4)
>>> [(c.leaves, bin(c.tt)) for c in cands[h.lit_of["y"] >> 1]]
[((1, 2, 3), '0b10101000'), ((1, 4), '0b10')]
"""

from __future__ import annotations

from functools import cache
from typing import NamedTuple

from ..progress import track
from . import ttable
from .hashing import Hashed

__all__ = ["Cut", "enumerate_cuts", "node_table", "support_cuts", "MAX_LOCAL"]

#: Nodes with more arguments than this get no enumerated cuts (only their own fan-in).
MAX_LOCAL = 12


class Cut(NamedTuple):
    """Leaves as a bit mask over node ids and as a sorted tuple, the node's table over them,
    and the cone (the nodes between the leaves and the node, the node included) as a mask."""

    mask: int
    leaves: tuple[int, ...]
    tt: int
    cone: int = 0


@cache
def _trivial(v: int) -> Cut:
    """The cut ``{v}`` of ``v`` itself."""
    return Cut(1 << v, (v,), 0b10, 0)


def _bits(mask: int) -> tuple[int, ...]:
    """The set bits of ``mask`` in increasing order."""
    out = []
    while mask:
        low = mask & -mask
        out.append(low.bit_length() - 1)
        mask ^= low
    return tuple(out)


def _local(h: Hashed, v: int) -> int:
    """The table of a ``thr``/``eq`` node over its own arguments."""
    ws = h.weights[v] or ()
    T = h.threshold[v]
    k = len(ws)
    out = 0
    for r in range(1 << k):
        s = sum(w for i, w in enumerate(ws) if (r >> i) & 1)
        if (s >= T) if h.op[v] == "thr" else (s == T):  # type: ignore[operator]
            out |= 1 << r
    return out


def node_table(h: Hashed, v: int, args: list[int], n: int, local: dict[int, int]) -> int:
    """The table of node ``v`` over ``n`` variables from its argument tables (polarity
    applied)."""
    op = h.op[v]
    if op == "and":
        out = args[0]
        for a in args[1:]:
            out &= a
        return out
    if op == "xor":
        out = args[0]
        for a in args[1:]:
            out ^= a
        return out
    if op == "ite":
        c, t, e = args
        return (c & t) | (~c & ttable.full(n) & e)
    if op == "buf":
        return args[0]
    if op == "const":
        return ttable.full(n) if h.value.get(v) else 0
    if op in ("thr", "eq"):
        tab = local.get(v)
        if tab is None:
            tab = local[v] = _local(h, v)
        return ttable.compose(tab, len(args), args, n)
    raise AssertionError(f"no table for op {op!r}")


def enumerate_cuts(h: Hashed, k: int, *, limit: int = 24, keep: int = 10) -> list[list[Cut]]:
    """Every node's candidate cuts (see the module docstring); inputs and ``real`` nodes have
    none.

    Parameters
    ----------
    h : Hashed
        The hashed graph.
    k : int
        The largest number of leaves.
    limit : int
        Partial unions kept while merging a node's arguments.
    keep : int
        Cuts per node passed on to its readers.

    Returns
    -------
    list of list of Cut
        Indexed by node.
    """
    N = len(h.op)
    level = [0] * N
    passed: list[list[Cut]] = [[] for _ in range(N)]
    found: list[list[Cut]] = [[] for _ in range(N)]
    local: dict[int, int] = {}
    constant: set[int] = set()
    full = ttable.full
    # area flow of a cut (common practice in cut-based mapping): the flow of its leaves, a
    # node's flow being that of its best cut plus one, shared among its readers; cheap leaves
    # (inputs, much-read nodes) make big cones, which is what a neuron should swallow
    fanout = h.fanouts()
    flow = [0.0] * N
    flow_memo: dict[int, float] = {}

    bits_memo: dict[int, tuple[int, ...]] = {}

    def bits_of(mask: int) -> tuple[int, ...]:
        got = bits_memo.get(mask)
        if got is None:
            got = bits_memo[mask] = _bits(mask)
        return got

    def flow_of(mask: int) -> float:
        got = flow_memo.get(mask)
        if got is None:
            got = flow_memo[mask] = sum(flow[x] for x in bits_of(mask))
        return got

    expand = ttable.expand_cached

    for v in track(range(1, N), "synthesis: cuts", unit="node"):
        op = h.op[v]
        fans = h.fanins[v]
        if fans:
            level[v] = 1 + max(level[lit >> 1] for lit in fans)
        if op in ("input", "real") or len(fans) > MAX_LOCAL:
            continue
        # partial unions: leaf mask -> (cone mask, the cut chosen per argument)
        partial: dict[int, tuple[int, tuple[Cut, ...]]] = {0: (0, ())}
        for lit in fans + tuple(2 * x for x in h.ghost.get(v, ())):
            f = lit >> 1
            # a node that is constant over some cut is never a leaf: readers see through it
            choices = passed[f] if f in constant else (_trivial(f), *passed[f])
            triples = [(c.mask, c.cone, c) for c in choices]
            new: dict[int, tuple[int, tuple[Cut, ...]]] = {}
            for mask, (cone, ch) in partial.items():
                for cmask, ccone, c in triples:
                    m2 = mask | cmask
                    if m2 in new or m2.bit_count() > k:
                        continue
                    c2 = cone | ccone
                    if c2 & m2:
                        # a leaf inside another argument's cone: the table (which reads that
                        # node through its cone) would not be the cone's function with every
                        # leaf free, which is what a local check evaluates
                        continue
                    new[m2] = (c2, ch + (c,))
            if len(new) > limit:
                order = sorted(new, key=lambda m: (flow_of(m), m.bit_count(), m))[:limit]
                new = {m: new[m] for m in order}
            partial = new
        out: dict[int, Cut] = {}
        for mask, (cone, ch) in partial.items():
            leaves = bits_of(mask)
            n = len(leaves)
            pos = {leaf: i for i, leaf in enumerate(leaves)}
            args = []
            for lit, c in zip(fans, ch):
                t = expand(c.tt, tuple([pos[x] for x in c.leaves]), n)
                if lit & 1:
                    t ^= full(n)
                args.append(t)
            out[mask] = Cut(mask, leaves, node_table(h, v, args, n, local), cone | (1 << v))
        cands = sorted(out.values(), key=lambda c: (flow_of(c.mask), len(c.leaves), c.mask))
        found[v] = cands
        if cands:
            flow[v] = (1.0 + flow_of(cands[0].mask)) / max(1, fanout[v])
        kept: list[Cut] = []
        for c in cands:
            if any(d.mask & c.mask == d.mask for d in kept):
                continue  # dominated by a smaller kept cut
            kept.append(c)
            if len(kept) >= keep:
                break
        passed[v] = kept
        for c in cands:
            if c.tt == 0 or c.tt == full(len(c.leaves)):
                constant.add(v)
                passed[v] = [c]
                break
    return found


def support_cuts(h: Hashed, k: int, support_limit: int, *, cone_limit: int = 400
                 ) -> dict[int, Cut]:
    """For each node whose input support has more than ``k`` and at most ``support_limit``
    inputs (and whose cone has at most ``cone_limit`` nodes), the cut of its whole support."""
    N = len(h.op)
    sup: list[int | None] = [0] * N
    for v in range(1, N):
        op = h.op[v]
        if op == "input":
            sup[v] = 1 << v
            continue
        s = 0
        for lit in h.fanins[v] + tuple(2 * x for x in h.ghost.get(v, ())):
            t = sup[lit >> 1]
            if t is None:
                s = None  # type: ignore[assignment]
                break
            s |= t
        if s is not None and (s.bit_count() > support_limit or op == "real"):
            s = None  # type: ignore[assignment]
        sup[v] = s
    out: dict[int, Cut] = {}
    local: dict[int, int] = {}
    for v in range(1, N):
        s = sup[v]  # type: ignore[assignment]
        if s is None or h.op[v] in ("input", "real") or s.bit_count() <= k:
            continue
        # the cone of v down to its inputs, in increasing node order (topological)
        cone = {v}
        stack = [v]
        while stack and len(cone) <= cone_limit:
            u = stack.pop()
            for x in [lit >> 1 for lit in h.fanins[u]] + list(h.ghost.get(u, ())):
                if x not in cone and h.op[x] != "input":
                    cone.add(x)
                    stack.append(x)
        if len(cone) > cone_limit or any(
            h.op[u] in ("thr", "eq") and len(h.fanins[u]) > MAX_LOCAL for u in cone
        ):
            continue
        leaves = _bits(s)
        n = len(leaves)
        val = {x: ttable.var(n, i) for i, x in enumerate(leaves)}
        full = ttable.full(n)
        for u in sorted(cone):
            args = [val[lit >> 1] ^ (full if lit & 1 else 0) for lit in h.fanins[u]]
            val[u] = node_table(h, u, args, n, local)
        cone_mask = 0
        for u in cone:
            cone_mask |= 1 << u
        out[v] = Cut(s, leaves, val[v], cone_mask)
    return out

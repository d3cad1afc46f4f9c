"""Parity chains found by function, not by gate type: XOR gates written as NAND (or NOR)
networks are flattened like ``xor`` gates.

Rules
    * A node is a *parity node* when one of its cuts has, as its table, the parity of all its
      leaves or its complement; the cut with the most leaves is kept.
    * Its flattened parity replaces each leaf that is itself a parity node by that node's
      flattened parity, in topological order (a loop, no recursion), as long as no leaf
      appears twice (a cancelled pair would drop a leaf the gates read), no leaf lies inside
      the cone of another part, and at most :data:`~thresholdc.synth.hashing.FLAT_LIMIT`
      leaves are collected.
    * The option is the parity of the collected leaves (counting neurons, or a tree of them
      within the limits), complemented when the parts' complements say so.

>>> from thresholdc.ir.gates import Gate, GateGraph
>>> from thresholdc.synth.hashing import hash_gates
>>> from thresholdc.synth.cuts import enumerate_cuts
>>> gates = []
>>> for i, (p, q) in enumerate([("a", "b"), ("x0", "c")]):
...     m, l, r = f"m{i}", f"l{i}", f"r{i}"
...     gates += [(m, Gate("nand", (p, q))), (l, Gate("nand", (p, m))),
...               (r, Gate("nand", (q, m))), (f"x{i}", Gate("nand", (l, r)))]
>>> h = hash_gates(GateGraph.build(["a", "b", "c"], [("y", "x1")], gates))
>>> flat = parity_chains(h, enumerate_cuts(h, 2))
>>> [h.rep[x] for x in flat[h.lit_of["x1"] >> 1][0]]
['a', 'b', 'c']
"""

from __future__ import annotations

from . import gadgets, ttable
from .candidates import KEY_LIMIT, Limits, Option
from .cuts import Cut
from .hashing import FLAT_LIMIT, Hashed

__all__ = ["parity_chains", "parity_options"]


def _parity_table(n: int) -> int:
    """The parity of ``n`` variables."""
    out = 0
    for j in range(n):
        out ^= ttable.var(n, j)
    return out


def parity_chains(h: Hashed, found: list[list[Cut]]) -> dict[int, tuple[tuple[int, ...], int, int]]:
    """For each node with a flattened parity wider than its widest parity cut:
    ``(leaves, complemented, cone mask)``."""
    best: dict[int, tuple[tuple[int, ...], int, int]] = {}
    for v, cuts in enumerate(found):
        for c in cuts:
            n = len(c.leaves)
            if n < 2:
                continue
            p = _parity_table(n)
            if c.tt in (p, p ^ ttable.full(n)) and (v not in best or n > len(best[v][0])):
                best[v] = (c.leaves, int(c.tt != p), c.cone)
    flat: dict[int, tuple[tuple[int, ...], int, int]] = {}
    for v in sorted(best):
        leaves, neg, cone = best[v]
        items: list[int] = []
        grew = False
        for x in leaves:
            sub = flat.get(x) or best.get(x)
            if sub is not None and len(items) + len(sub[0]) + len(leaves) <= FLAT_LIMIT:
                items.extend(sub[0])
                neg ^= sub[1]
                cone |= sub[2]
                grew = True
            else:
                items.append(x)
        if not grew or len(set(items)) != len(items):
            continue
        mask = 0
        for x in items:
            mask |= 1 << x
        if mask & cone:
            continue
        flat[v] = (tuple(sorted(items)), neg, cone)
    return {v: f for v, f in flat.items() if len(f[0]) > len(best[v][0])}


def parity_options(flat: tuple[tuple[int, ...], int, int], limits: Limits) -> Option | None:
    """The option of a flattened parity within the limits (None when none fits)."""
    leaves, neg, cone = flat
    n = len(leaves)
    g = gadgets.parity_tree(n, limits.fan_in, limits.weight)
    if g is None:
        return None
    if neg:
        r = g[-1]
        g = g[:-1] + (gadgets.Spec(r.refs, tuple(-w for w in r.weights), 1 - r.T),)
        if not limits.fits(g):
            return None
    tt = gadgets.evaluate(g, n) if n <= KEY_LIMIT else None
    return Option(leaves, g, tt, cone)

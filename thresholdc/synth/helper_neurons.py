"""Two-neuron options: ``f = [Σ w·x + u·g ≥ T]`` where the helper ``g`` is a threshold
function that another node computes over the same leaves (or all but one of them).

Rules
    * Tried for cuts whose function is neither threshold nor symmetric (those have their own
      gadgets), at most :data:`HELPER_CUTS` per node, with at most :data:`HELPER_CANDIDATES`
      helpers each, nodes read in several places first (they get neurons anyway, so the
      helper is then shared and the option costs one neuron).
    * A cheap necessary test first (the sign of each weight fixes which way ``f`` may move
      with that leaf where ``g`` holds still), then the LP of least ``Σ|w| + |u| + |T|`` with
      margin 1 (HiGHS); its rounded solution when that realises ``f`` on every row, else the
      same problem as an ILP bounded by a number of branch-and-bound nodes (not a clock, so
      the result is the same on every machine).  Solved once per pair of tables up to a
      permutation of the leaves (cached).

>>> from thresholdc.synth.cuts import Cut
>>> from thresholdc.synth.candidates import Limits
>>> xor3 = 0b10010110                       # a xor b xor c
>>> maj = Cut(0b111, (0, 1, 2), 0b11101000)  # majority, a threshold function
>>> o = helper_options(Cut(0b111, (0, 1, 2), xor3), maj, (1, 1, 1), 2, Limits(None, None))
>>> o.gadget
([+1*x0 +1*x1 +1*x2 >= 2], [+1*x0 +1*x1 +1*x2 -2*h0 >= 1])
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from ..progress import track
from . import candidates, gadgets, lp, ttable
from .candidates import Limits, Option
from .cuts import Cut
from .gadgets import Gadget
from .hashing import Hashed

__all__ = ["helper_options", "add_helper_options", "HELPER_CUTS", "HELPER_CANDIDATES"]

HELPER_CUTS = 6  # non-threshold cuts per node tried with a helper
HELPER_CANDIDATES = 6  # helpers tried per cut


def add_helper_options(h: Hashed, found: list[list[Cut]], options: list[list[Option]],
                       limits: Limits) -> None:
    """Two-neuron options ``[w·x + u·g ≥ T]`` where ``g`` is a threshold function that some
    other node computes over the same leaves (or all but one of them)."""
    fanout = h.fanouts()
    by_mask: dict[int, list[tuple[int, Cut, tuple[int, ...], int]]] = {}
    for v in range(1, len(h.op)):
        for c in found[v]:
            if len(c.leaves) < 2:
                continue
            sup, cls = candidates.classify_cut(c)
            if cls is not None and cls[0] == "thr":
                ws = [0] * len(c.leaves)
                for i, w in zip(sup, cls[1]):
                    ws[i] = w
                by_mask.setdefault(c.mask, []).append((v, c, tuple(ws), cls[2]))
    for v in track(range(1, len(h.op)), "synthesis: helper neurons", unit="node"):
        tried = 0
        for c in found[v]:
            n = len(c.leaves)
            if n < 2:
                continue
            if candidates.classify_cut(c)[1] is not None:
                continue  # threshold or symmetric: it has its own gadgets
            tried += 1
            if tried > HELPER_CUTS:
                break
            cands = list(by_mask.get(c.mask, ()))
            if n > 2:
                for x in c.leaves:
                    cands.extend(by_mask.get(c.mask & ~(1 << x), ()))
            # nodes read in several places (or outputs) first: they get neurons anyway
            cands.sort(key=lambda e: (-fanout[e[0]], -e[0]))
            got = 0
            seen: set[tuple[int, int]] = set()
            for u, gc, gw, gT in cands:
                if u == v or (gc.mask, gc.tt) in seen:
                    continue
                seen.add((gc.mask, gc.tt))
                o = helper_options(c, gc, gw, gT, limits)
                if o is not None:
                    options[v].append(o)
                    got += 1
                    if got >= HELPER_CANDIDATES:
                        break


def _helper_possible(tt: int, g_tt: int, n: int) -> bool:
    """A necessary condition for ``f = [w·x + u·g ≥ T]``: between two rows that differ only in
    ``xᵢ`` and agree on ``g``, ``f`` can only move the way the sign of ``wᵢ`` says, so it must
    never rise with ``xᵢ`` in one place and fall with it in another."""
    mask = ttable.full(n)
    ng = ~g_tt & mask
    for i in range(n):
        hi = ttable.var(n, i)
        s = 1 << i
        f1 = (tt & hi) >> s
        f0 = tt & ~hi & mask
        same = ((g_tt & hi) >> s) & g_tt | ((ng & hi) >> s) & ng  # g equal on both rows
        same &= ~hi & mask
        if (f1 & ~f0 & same) and (f0 & ~f1 & same):
            return False
    return True


def _canonical_order(tt: int, g_tt: int, n: int) -> tuple[int, ...]:
    """An order of the variables by how often ``f``, ``g`` and both are true with each (ties
    kept in place), so that pairs equal up to a permutation mostly meet in the cache."""
    def sig(i: int) -> tuple[int, int, int]:
        v = ttable.var(n, i)
        return ((tt & v).bit_count(), (g_tt & v).bit_count(), (tt & g_tt & v).bit_count())

    return tuple(sorted(range(n), key=lambda i: (sig(i), i)))


def _permute(tt: int, n: int, order: tuple[int, ...]) -> int:
    """The table with variable ``order[k]`` moved to position ``k``."""
    pos = list(range(n))  # pos[j]: where original variable j is now
    at = list(range(n))   # at[p]: the original variable at position p
    out = tt
    for k, j in enumerate(order):
        p = pos[j]
        if p != k:
            out = ttable.swap(out, n, k, p)
            other = at[k]
            at[k], at[p] = j, other
            pos[j], pos[other] = k, p
    return out


def _with_helper(tt: int, g_tt: int, n: int) -> tuple[tuple[int, ...], int, int] | None:
    """Integer ``(w, u, T)`` with ``f = [w·x + u·g ≥ T]`` on every row, small in
    ``Σ|w| + |u| + |T|``, or None (solved once per pair up to a permutation)."""
    if not _helper_possible(tt, g_tt, n):
        return None
    order = _canonical_order(tt, g_tt, n)
    got = _solve_helper(_permute(tt, n, order), _permute(g_tt, n, order), n)
    if got is None:
        return None
    w, u, T = got
    orig = [0] * n
    for k, j in enumerate(order):
        orig[j] = w[k]
    return tuple(orig), u, T


@lru_cache(maxsize=1 << 14)
def _solve_helper(tt: int, g_tt: int, n: int) -> tuple[tuple[int, ...], int, int] | None:
    """The LP of least ``Σ|w| + |u| + |T|`` with margin 1 (HiGHS); its rounded solution when
    that realises ``f``, else the same problem as an ILP."""
    rows = 1 << n
    r = np.arange(rows)
    X = ((r[:, None] >> np.arange(n)) & 1).astype(float)
    f = np.array([(tt >> i) & 1 for i in range(rows)], dtype=bool)
    gcol = np.array([(g_tt >> i) & 1 for i in range(rows)], dtype=float)
    m = n + 2  # w (n), u, T ; then |.| bounds t (m)
    A = np.zeros((rows, 2 * m))
    A[:, :n] = X
    A[:, n] = gcol
    A[:, n + 1] = -1.0
    eye = np.eye(m)
    P = np.hstack([eye, -eye])   # v - t <= 0
    Q = np.hstack([-eye, -eye])  # -v - t <= 0
    big = 4 * (1 << n)
    c = np.concatenate([np.zeros(m), np.ones(m)])
    lo_b = np.concatenate([-big * np.ones(m), np.zeros(m)])
    hi_b = big * np.ones(2 * m)

    def exact(x: np.ndarray) -> tuple[tuple[int, ...], int, int] | None:
        x = np.rint(x[:m]).astype(int)
        w = tuple(int(a) for a in x[:n])
        u, T = int(x[n]), int(x[n + 1])
        z = X @ np.array(w, dtype=float) + u * gcol
        return (w, u, T) if u != 0 and np.array_equal(z >= T, f) else None

    nf = int(f.sum())
    A_ub = np.vstack([-A[f], A[~f], P, Q])
    b_ub = np.concatenate([np.zeros(nf), -np.ones(rows - nf), np.zeros(2 * m)])
    res = lp.solve(c, A_ub, np.full(len(b_ub), -np.inf), b_ub, lo_b, hi_b)
    if res.status != "optimal" or res.x is None:
        return None  # not even the relaxation is feasible
    got = exact(res.x)
    if got is not None:
        return got
    # the ILP: the true rows and the false rows in table order, then the |.| rows
    A_int = np.vstack([A, P, Q])
    lo_int = np.concatenate([np.where(f, 0.0, -np.inf), np.full(2 * m, -np.inf)])
    hi_int = np.concatenate([np.where(f, np.inf, -1.0), np.zeros(2 * m)])
    res = lp.solve(c, A_int, lo_int, hi_int, lo_b, hi_b, integer=True,
                   node_limit=2000)  # a work bound, not a clock: deterministic
    if res.status != "optimal" or res.x is None:
        return None
    return exact(res.x)


def helper_options(c: Cut, g_cut: Cut, g_weights: tuple[int, ...], g_T: int,
                   limits: Limits) -> Option | None:
    """The two-neuron option ``[w·x + u·g ≥ T]`` of cut ``c`` with the helper ``g`` (a
    threshold function whose cut ``g_cut`` has leaves among ``c``'s)."""
    pos = {x: i for i, x in enumerate(c.leaves)}
    gpos = tuple(pos[x] for x in g_cut.leaves)
    gadget = _helper_template(c.tt, len(c.leaves), g_cut.tt, gpos, g_weights, g_T, limits)
    return None if gadget is None else Option(c.leaves, gadget, c.tt, c.cone)


@lru_cache(maxsize=1 << 16)
def _helper_template(tt: int, n: int, g_small: int, gpos: tuple[int, ...],
                     g_weights: tuple[int, ...], g_T: int, limits: Limits) -> Gadget | None:
    """:func:`helper_options` over leaf positions (cached)."""
    g_tt = ttable.expand(g_small, gpos, n)
    found = _with_helper(tt, g_tt, n)
    if found is None:
        return None
    w, u, T = found
    gw = [0] * n
    for p, wx in zip(gpos, g_weights):
        gw[p] = wx
    gadget = gadgets.helper(tuple(gw), g_T, w, u, T)
    return gadget if limits.fits(gadget) else None

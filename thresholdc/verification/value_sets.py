"""Sound value sets of affine forms over a verification domain: finite unions of intervals.

A neuron that reads only input units has a pre-activation ``z`` that is an affine *form* over
the domain's choice space (:class:`~thresholdc.verification.linear_bounds.LinearBounder`): the
sum of one coefficient per discrete input (the chosen value's), plus continuous terms, plus a
constant.  :func:`form_values` covers every value such a sum takes by a few intervals, one
discrete input at a time: the partial sums so far are a sorted list of disjoint intervals, each
input's coefficients are added to every interval, and the result is merged where intervals
overlap and, above ``max_intervals``, across the smallest gaps (a merge only ever widens the
set, so the cover stays sound).  The continuous inputs add their interval at the end, and the
result is widened by a relative 1e-9 of the form's magnitude for floating-point rounding.

The MILP (:mod:`thresholdc.verification.milp`) uses these sets to cut the gaps a trained
sigmoid unit's ``z`` never enters out of its pieces, so that its envelopes are drawn over the
narrow ranges ``z`` really takes.

>>> import numpy as np
>>> form = np.array([0.0, 2.0, 0.0, -1.0, 0.5])   # two inputs of two values, constant 0.5
>>> lo, hi = form_values(form, offsets=np.array([0, 2]), sizes=[2, 2], cont=np.zeros((0, 2)))
>>> [(round(float(a), 6), round(float(b), 6)) for a, b in zip(lo, hi)]
[(-0.5, -0.5), (0.5, 0.5), (1.5, 1.5), (2.5, 2.5)]
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .linear_bounds import _ABS as abs_
from .linear_bounds import _REL as rel_
from .linear_bounds import _SMOOTH, _offsets, activation_lines

__all__ = ["form_values", "merge_intervals", "side_pieces", "piece_lines",
           "network_value_sets"]

_REL = 1e-9
_ABS = 1e-12
#: Intervals kept between inputs (the work per input is this times its number of values).
MAX_INTERVALS = 1024


def merge_intervals(lo: np.ndarray, hi: np.ndarray,
                    max_intervals: int) -> tuple[np.ndarray, np.ndarray]:
    """The union of intervals ``[lo_i, hi_i]``, sorted and disjoint, with at most
    ``max_intervals`` of them (the smallest gaps closed first); contains every input interval.

    >>> merge_intervals(np.array([3.0, 0.0, 1.0]), np.array([4.0, 1.5, 2.0]), 2)
    (array([0., 3.]), array([2., 4.]))
    """
    order = np.argsort(lo, kind="stable")
    lo, hi = lo[order], hi[order]
    run = np.maximum.accumulate(hi)
    gaps = lo[1:] - run[:-1]
    split = gaps > 0
    if int(split.sum()) > max_intervals - 1:  # keep only the largest gaps
        keep = np.argsort(-gaps, kind="stable")[:max_intervals - 1]
        split = np.zeros_like(split)
        split[keep] = True
    starts = np.concatenate([[0], np.nonzero(split)[0] + 1])
    ends = np.concatenate([starts[1:] - 1, [len(lo) - 1]])
    return lo[starts], run[ends]


def form_values(form: np.ndarray, offsets: np.ndarray, sizes: list[int], cont: np.ndarray,
                max_intervals: int = MAX_INTERVALS) -> tuple[np.ndarray, np.ndarray]:
    """Sorted disjoint intervals ``(lo, hi)`` holding every value of ``form`` on the domain.

    ``form`` has one coefficient per choice (discrete input ``k`` owns ``offsets[k] :
    offsets[k] + sizes[k]``), one per continuous input and the constant; ``cont`` is
    ``(continuous, 2)``: each continuous input's least and greatest value.

    >>> form = np.array([1.0, 0.0, 2.0, 3.0])   # one input of two values, a real in [0, 1]
    >>> lo, hi = form_values(form, np.array([0]), [2], np.array([[0.0, 1.0]]))
    >>> lo.round(6), hi.round(6)
    (array([3.]), array([6.]))
    """
    n_choices = int(sum(sizes))
    lo = np.array([float(form[-1])])
    hi = lo.copy()
    for off, size in zip(offsets.tolist(), sizes):
        w = np.asarray(form[off:off + size], dtype=float)
        lo, hi = merge_intervals((lo[:, None] + w[None, :]).ravel(),
                                 (hi[:, None] + w[None, :]).ravel(), max_intervals)
    c = np.asarray(form[n_choices:-1], dtype=float)
    if len(c):
        lo = lo + np.minimum(c * cont[:, 0], c * cont[:, 1]).sum()
        hi = hi + np.maximum(c * cont[:, 0], c * cont[:, 1]).sum()
    mag = float(np.abs(form).sum() + (np.abs(c) * np.abs(cont).max(axis=1)).sum()
                if len(c) else np.abs(form).sum())
    slack = _ABS + _REL * mag
    return merge_intervals(lo - slack, hi + slack, max_intervals)


def side_pieces(lo: np.ndarray, hi: np.ndarray, L: float, U: float,
                per_side: int) -> list[tuple[float, float]]:
    """Pieces from a value set ``lo``/``hi`` (sorted disjoint intervals): at most ``per_side``
    on each side of 0 (merged across the smallest gaps), clipped to ``[L, U]``.

    >>> side_pieces(np.array([-3.0, -1.0, 2.0]), np.array([-2.0, 1.0, 4.0]), -9.0, 9.0, 1)
    [(-3.0, 0.0), (0.0, 4.0)]
    """
    out: list[tuple[float, float]] = []
    for side_lo, side_hi in ((np.minimum(lo, 0.0), np.minimum(hi, 0.0)),
                             (np.maximum(lo, 0.0), np.maximum(hi, 0.0))):
        keep = (side_lo < side_hi) | ((lo <= 0.0) & (hi >= 0.0))
        if not keep.any():
            continue
        a, b = merge_intervals(side_lo[keep], side_hi[keep], per_side)
        out.extend((max(float(x), L), min(float(y), U)) for x, y in zip(a, b))
    out = sorted({p for p in out if p[0] <= p[1]})
    return out or [(L, U)]


def piece_lines(name: str, pieces: list[tuple[float, float]]) -> tuple[float, ...]:
    """``(k_lo, b_lo, k_hi, b_hi)``: lines below and above the smooth activation ``name`` on
    every piece (sound on their union; the offsets are the exact extremes of ``f(z) − k·z``
    piece by piece, widened for rounding).  Pieces on both sides of 0 share the chord of their
    hull as slope (the lines then run through the clusters a saturated unit's ``z`` keeps to);
    otherwise the slopes of :func:`~thresholdc.verification.linear_bounds.activation_lines`.

    >>> kl, bl, ku, bu = piece_lines("sigmoid", [(-4.0, -3.5), (3.5, 4.0)])
    >>> z = np.concatenate([np.linspace(-4, -3.5, 50), np.linspace(3.5, 4, 50)])
    >>> s = 1 / (1 + np.exp(-z))
    >>> bool(((kl * z + bl <= s) & (s <= ku * z + bu)).all()), round(bu - bl, 3)
    (True, 0.098)
    """
    L, U = pieces[0][0], pieces[-1][1]
    f, _, root = _SMOOTH[name]
    kl, _, ku, _ = (float(v[0]) for v in activation_lines(name, np.array([L]), np.array([U])))
    if L < 0 < U and U - L > 1e-9:
        kl = ku = max(float((f(np.array(U)) - f(np.array(L))) / (U - L)), 0.0)
    lo = np.array([p[0] for p in pieces])
    hi = np.array([p[1] for p in pieces])
    bl = float(_offsets(f, root, np.full(len(lo), kl), lo, hi)[0].min())
    bu = float(_offsets(f, root, np.full(len(lo), ku), lo, hi)[1].max())
    slack = abs_ + rel_ * (1.0 + (kl + ku) * (abs(L) + abs(U)))
    return kl, bl - slack, ku, bu + slack


def network_value_sets(lb: Any, per_side: int = 2,
                       max_intervals: int = MAX_INTERVALS) -> dict[int, list[tuple[float, float]]]:
    """Pieces of every smooth neuron's ``z`` over the whole domain, layer by layer.

    ``lb`` is a :class:`~thresholdc.verification.linear_bounds.LinearBounder`.  A neuron's
    ``z`` lies between a lower and an upper form over the choices (its direct weights exact,
    each neuron it reads through the :func:`piece_lines` of that neuron's pieces), so every
    value of ``z`` is in the value set of the lower form widened by the greatest width
    ``upper − lower`` over the domain; those sets, cut into :func:`side_pieces`, are the
    neuron's pieces, and its lines feed the next layer.  Step, ReLU and linear neurons go
    through :func:`activation_lines` on their interval.

    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> from thresholdc.verification.domain import boolean_or_typed_domain
    >>> from thresholdc.verification.linear_bounds import LinearBounder
    >>> text = "input c: {red, blue, green}, d: {on, off}\\ny = c == red and d == on\\n"
    >>> net = compile_rules(text, activation="sigmoid")
    >>> sets = network_value_sets(LinearBounder(net, boolean_or_typed_domain(
    ...     source_from_text(text))))
    >>> [all(a > 0 or b < 0 for a, b in p) for p in sets.values()]   # a gap around 0
    [True]
    """
    N = len(lb.net.neurons)
    P = lb.P
    sizes = [f.size for f in lb.domain.discrete]
    cont = np.array([[min(p[0] for p in f.pieces), max(p[1] for p in f.pieces)]
                     for f in lb.domain.continuous]).reshape(-1, 2)
    M = np.ones((1, lb.n_choices), dtype=bool)
    clo = cont[None, :, 0] if len(cont) else np.zeros((1, 0))
    chi = cont[None, :, 1] if len(cont) else np.zeros((1, 0))
    AL = np.zeros((N, P))
    AU = np.zeros((N, P))
    out: dict[int, list[tuple[float, float]]] = {}
    for J in lb.layers:
        ZL = lb.direct[J].copy()
        ZU = ZL.copy()
        Wp = np.maximum(lb.W_n[J], 0.0)
        Wm = np.minimum(lb.W_n[J], 0.0)
        ZL += Wp @ AL + Wm @ AU
        ZU += Wp @ AU + Wm @ AL
        l = lb.least(ZL[None], M, clo, chi)[0]
        u = lb.greatest(ZU[None], M, clo, chi)[0]
        width = np.maximum(lb.greatest((ZU - ZL)[None], M, clo, chi)[0], 0.0)
        for i, j in enumerate(J.tolist()):
            name = lb.acts[j]
            if name in ("sigmoid", "tanh"):
                vlo, vhi = form_values(ZL[i], lb.offsets, sizes, cont, max_intervals)
                vlo, vhi = merge_intervals(vlo, vhi + width[i], max_intervals)
                pieces = side_pieces(vlo, vhi, float(l[i]), float(u[i]), per_side)
                out[j] = pieces
                kl, bl, ku, bu = piece_lines(name, pieces)
            else:
                kl, bl, ku, bu = (float(v[0]) for v in activation_lines(
                    name, l[i:i + 1], u[i:i + 1], bipolar=lb.bipolar))
            AL[j] = kl * ZL[i]
            AL[j, -1] += bl
            AU[j] = ku * ZU[i]
            AU[j, -1] += bu
    return out

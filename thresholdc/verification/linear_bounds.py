"""Sound linear bounds of every neuron of a network over boxes of a verification domain.

Used by the relaxation branch-and-bound (:mod:`thresholdc.verification.relax`) and for the big-M
constants of the MILP (:mod:`thresholdc.verification.milp`).

How the bounds are built
    * *Choice space.*  A box of a :class:`~thresholdc.verification.domain.Domain` allows a subset of
      the choices of each discrete feature (a Boolean input's 0/1, a categorical input's
      values, a real input's cell points) and an interval of each continuous real input.  Every
      input unit is a linear function of the chosen choices: the unit ``colour=red`` is 1 on
      the choice ``red`` and 0 on the others, whatever one-hot pattern the other units have.
      So a *form* is one coefficient per choice, one per continuous input and a constant; its
      value at a point is the sum of the coefficients of the chosen choices, plus the
      continuous terms, plus the constant.  Its least value over a box is exact and cheap: the
      smallest allowed coefficient of each feature (one value per categorical input, which is
      the relaxed one-hot simplex solved in closed form), plus ``min(c·lo, c·hi)`` per
      continuous input.
    * *Forward pass.*  Layer by layer each neuron's pre-activation ``z`` gets a lower and an
      upper form: its direct input weights (exact), plus for each neuron it reads the lower or
      upper form of that neuron's activation, chosen by the sign of the weight.  Their least
      and greatest values over the box are the interval ``[l, u]`` of ``z``.
    * *Activation lines.*  Every activation is non-decreasing, so it is bounded on ``[l, u]``
      by two lines of non-negative slope, ``k_lo·z + b_lo ≤ f(z) ≤ k_hi·z + b_hi``, and a
      line of non-negative slope applied to a lower (upper) form of ``z`` is again a lower
      (upper) form.  For sigmoid and tanh the slope is the chord's or the tangent's at the
      middle (chord below on the concave side, above on the convex side; chord for both when
      ``l < 0 < u``), and the offset is computed exactly: ``b_lo = min (f(z) − k·z)`` over
      ``[l, u]``, which lies at an end or where ``f'(z) = k`` on the convex (negative) side —
      a closed form for both functions — so the lines are sound for any slope.  ReLU takes the
      usual triangle (chord above; 0 or identity below), a step function 0/1 (or ±1) lines
      when its sign is not known, a linear unit itself.
    * Floating-point rounding is covered by widening every interval by a relative 1e-9 of the
      form's magnitude and every offset by 1e-12 plus a relative 1e-9.

>>> import numpy as np
>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> from thresholdc.verification.domain import boolean_or_typed_domain
>>> text = "input c: {red, blue, green}\\ny = c == red\\n"
>>> net = compile_rules(text, activation="sigmoid")
>>> lb = LinearBounder(net, boolean_or_typed_domain(source_from_text(text)))
>>> out = lb.run(np.array([[True, True, False]]))   # c in {red, blue}
>>> bool(out.vlo[0, 0] < 0.5 < out.vhi[0, 0])
True
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..ir import activations as act
from ..ir.network import Network
from ..lazy import lazy_module
from .domain import Domain

special = lazy_module("scipy.special")


def expit(z: np.ndarray) -> np.ndarray:
    """The logistic function (scipy's, loaded on first use)."""
    return special.expit(z)

__all__ = ["LinearBounder", "Bounds", "activation_lines"]

_REL = 1e-9
_ABS = 1e-12


@dataclass
class Bounds:
    """What :meth:`LinearBounder.run` computes for a batch of ``B`` boxes.

    ``zlo``/``zhi``: ``(B, neurons)`` pre-activation intervals; ``vlo``/``vhi``: ``(B,
    outputs)`` output value intervals; ``mlo``/``mhi``: the output's decision quantity
    (``z`` for a neuron output, the unit value for an input-unit output); ``flo``/``fhi``:
    ``(B, outputs, P)`` lower and upper forms of that quantity.
    """

    zlo: np.ndarray
    zhi: np.ndarray
    vlo: np.ndarray
    vhi: np.ndarray
    mlo: np.ndarray
    mhi: np.ndarray
    flo: np.ndarray
    fhi: np.ndarray


def _sig_prime_root(k: np.ndarray) -> np.ndarray:
    """The positive z with sigmoid'(z) = k (inf where k ≤ 0, 0 where k ≥ 1/4)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        r = np.sqrt(np.clip(1.0 - 4.0 * k, 0.0, 1.0))
        s = (1.0 + r) / 2.0
        z = np.log(s) - np.log1p(-s)
    return np.where(k <= 0, np.inf, np.where(k >= 0.25, 0.0, z))


def _tanh_prime_root(k: np.ndarray) -> np.ndarray:
    """The positive z with tanh'(z) = k (inf where k ≤ 0, 0 where k ≥ 1)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        z = np.arctanh(np.sqrt(np.clip(1.0 - k, 0.0, 1.0)))
    return np.where(k <= 0, np.inf, np.where(k >= 1.0, 0.0, z))


_Fn = Callable[[np.ndarray], np.ndarray]
_SMOOTH: dict[str, tuple[_Fn, _Fn, _Fn]] = {
    "sigmoid": (expit, lambda z: expit(z) * (1.0 - expit(z)), _sig_prime_root),
    "tanh": (np.tanh, lambda z: 1.0 - np.tanh(z) ** 2, _tanh_prime_root),
}


def _offsets(f, root, k: np.ndarray, l: np.ndarray, u: np.ndarray) -> tuple[np.ndarray, ...]:
    """``min`` and ``max`` of ``f(z) − k·z`` over ``[l, u]`` (exact up to rounding)."""
    zc = root(k)
    gl, gu = f(l) - k * l, f(u) - k * u
    lo, hi = np.minimum(gl, gu), np.maximum(gl, gu)
    inside_neg = (-zc > l) & (-zc < u)
    inside_pos = (zc > l) & (zc < u)
    with np.errstate(invalid="ignore"):
        gneg = np.where(inside_neg, f(-zc) + k * zc, np.inf)
        gpos = np.where(inside_pos, f(zc) - k * zc, -np.inf)
    return np.minimum(lo, gneg), np.maximum(hi, gpos)


def activation_lines(name: str, l: np.ndarray, u: np.ndarray, *,
                     bipolar: bool = False) -> tuple[np.ndarray, ...]:
    """``(k_lo, b_lo, k_hi, b_hi)``: lines with ``k_lo·z + b_lo ≤ f(z) ≤ k_hi·z + b_hi`` for
    every ``z`` in ``[l, u]`` (elementwise; slopes non-negative).

    >>> import numpy as np
    >>> kl, bl, ku, bu = activation_lines("sigmoid", np.array([-2.0]), np.array([3.0]))
    >>> z = np.linspace(-2, 3, 101)
    >>> s = 1 / (1 + np.exp(-z))
    >>> bool(((kl * z + bl <= s) & (s <= ku * z + bu)).all())
    True
    """
    l = np.asarray(l, dtype=float)
    u = np.asarray(u, dtype=float)
    zero = np.zeros_like(l)
    if name == "linear":
        one = np.ones_like(l)
        return one, zero, one, zero
    if name == "step":
        low = -1.0 if bipolar else 0.0
        on, off = l > 0, u <= 0
        value_lo = np.where(on, 1.0, low)
        value_hi = np.where(off, low, 1.0)
        return zero, value_lo, zero, value_hi
    if name == "relu":
        up = np.maximum(u, 0.0)
        dn = np.minimum(l, 0.0)
        width = up - dn
        with np.errstate(invalid="ignore", divide="ignore"):
            ku = np.where(width > 0, up / np.where(width > 0, width, 1.0), 0.0)
        ku = np.where(l >= 0, 1.0, ku)
        bu = np.where(l >= 0, 0.0, -dn * ku)
        kl = np.where(l >= 0, 1.0, np.where(u <= 0, 0.0, (u >= -l).astype(float)))
        slack = _ABS + _REL * (np.abs(l) + np.abs(u))
        return kl, zero - slack, ku, bu + slack
    f, fprime, root = _SMOOTH[name]
    width = u - l
    thin = width < 1e-9
    mid = (l + u) / 2.0
    with np.errstate(invalid="ignore", divide="ignore"):
        chord = np.where(thin, 0.0, (f(u) - f(l)) / np.where(thin, 1.0, width))
    tangent = fprime(mid)
    kl = np.where(u <= 0, tangent, chord)
    ku = np.where(l >= 0, tangent, chord)
    kl = np.where(thin, 0.0, np.maximum(kl, 0.0))
    ku = np.where(thin, 0.0, np.maximum(ku, 0.0))
    bl, _ = _offsets(f, root, kl, l, u)
    _, bu = _offsets(f, root, ku, l, u)
    slack = _ABS + _REL * (1.0 + (kl + ku) * (np.abs(l) + np.abs(u)))
    return kl, bl - slack, ku, bu + slack


class LinearBounder:
    """Forms and intervals of every neuron of ``net`` over batches of boxes of ``domain``.

    Choice space: ``P = n_choices + n_continuous + 1`` columns; feature ``k`` of
    ``domain.discrete`` owns columns ``offsets[k] : offsets[k] + size``, then one column per
    continuous input, then the constant.
    """

    def __init__(self, net: Network, domain: Domain) -> None:
        self.net, self.domain = net, domain
        bipolar = net.encoding == "bipolar"
        sizes = [f.size for f in domain.discrete]
        self.offsets = np.cumsum([0] + sizes[:-1]).astype(np.int64)
        self.n_choices = int(sum(sizes))
        self.n_cont = len(domain.continuous)
        P = self.n_choices + self.n_cont + 1
        self.P = P
        col = {u: i for i, u in enumerate(net.inputs)}
        units = np.zeros((len(net.inputs), P))
        for k, f in enumerate(domain.discrete):
            table = f.table.astype(float)
            if bipolar and f.kind != "real":
                table = 2.0 * table - 1.0
            off = int(self.offsets[k])
            for c, u in enumerate(f.units):
                units[col[u], off:off + f.size] = table[:, c]
        for k, cf in enumerate(domain.continuous):
            units[col[cf.unit], self.n_choices + k] = 1.0
        self.unit_forms = units
        pos = {n.name: j for j, n in enumerate(net.neurons)}
        N = len(net.neurons)
        W_in = np.zeros((N, len(net.inputs)))
        W_n = np.zeros((N, N))
        for j, n in enumerate(net.neurons):
            for i, w in zip(n.inputs, n.weights):
                if i in col:
                    W_in[j, col[i]] += float(w)
                else:
                    W_n[j, pos[i]] += float(w)
        self.direct = W_in @ units
        self.direct[:, -1] += np.array([float(n.bias) for n in net.neurons])
        self.W_n = W_n
        # Layers: each neuron reads only neurons of earlier layers (its depth in the graph).
        depth = np.zeros(N, dtype=np.int64)
        for j, n in enumerate(net.neurons):
            reads = [depth[pos[i]] for i in n.inputs if i in pos]
            depth[j] = 1 + max(reads, default=0)
        self.layers = [np.nonzero(depth == d)[0] for d in range(1, int(depth.max(initial=0)) + 1)]
        self.acts = [n.activation for n in net.neurons]
        self.bipolar = bipolar
        self.out_neuron = [pos.get(o.source, -1) for o in net.outputs]
        self.out_unit = [col.get(o.source, -1) for o in net.outputs]
        self.cont_range = np.array(
            [max(abs(a) for p in f.pieces for a in p) for f in domain.continuous] or [0.0])

    # ---------------------------------------------------------------- concretisation
    def least(self, F: np.ndarray, M: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
        """Least value of forms ``F`` ``(B, J, P)`` over the boxes (``M`` ``(B, n_choices)``)."""
        out = F[..., -1].copy()
        if self.n_choices:
            masked = np.where(M[:, None, :], F[..., :self.n_choices], np.inf)
            out += np.minimum.reduceat(masked, self.offsets, axis=2).sum(axis=2)
        if self.n_cont:
            C = F[..., self.n_choices:-1]
            out += np.minimum(C * lo[:, None, :], C * hi[:, None, :]).sum(axis=2)
        return out - self._slack(F)

    def greatest(self, F: np.ndarray, M: np.ndarray, lo: np.ndarray,
                 hi: np.ndarray) -> np.ndarray:
        """Greatest value of forms ``F`` over the boxes."""
        return -self.least(-F, M, lo, hi)

    def _slack(self, F: np.ndarray) -> np.ndarray:
        mag = np.abs(F[..., :self.n_choices]).sum(axis=2) + np.abs(F[..., -1])
        if self.n_cont:
            mag = mag + (np.abs(F[..., self.n_choices:-1]) * self.cont_range).sum(axis=2)
        return _ABS + _REL * mag

    def argmin_point(self, F: np.ndarray, M: np.ndarray, lo: np.ndarray,
                     hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Choice indices ``(B, discrete)`` and reals ``(B, continuous)`` minimising the
        forms ``F`` ``(B, P)`` over each box (a vertex of the relaxed box)."""
        B = F.shape[0]
        choice = np.zeros((B, len(self.domain.discrete)), dtype=np.int64)
        masked = np.where(M, F[:, :self.n_choices], np.inf)
        for k, f in enumerate(self.domain.discrete):
            off = int(self.offsets[k])
            choice[:, k] = masked[:, off:off + f.size].argmin(axis=1)
        C = F[:, self.n_choices:-1]
        reals = np.where(C > 0, lo, hi) if self.n_cont else np.zeros((B, 0))
        return choice, reals

    # ---------------------------------------------------------------- the forward pass
    def run(self, M: np.ndarray, lo: np.ndarray | None = None,
            hi: np.ndarray | None = None) -> Bounds:
        """Bounds of every neuron and output over the boxes ``M`` (allowed choices) and
        ``lo``/``hi`` (continuous ends)."""
        B = M.shape[0]
        lo = np.zeros((B, 0)) if lo is None else lo
        hi = np.zeros((B, 0)) if hi is None else hi
        N = len(self.net.neurons)
        AL = np.zeros((B, N, self.P))
        AU = np.zeros((B, N, self.P))
        zlo = np.zeros((B, N))
        zhi = np.zeros((B, N))
        ZL_keep: dict[int, np.ndarray] = {}
        ZU_keep: dict[int, np.ndarray] = {}
        wanted = {j for j in self.out_neuron if j >= 0}
        done = 0
        for J in self.layers:
            ZL = np.broadcast_to(self.direct[J], (B, len(J), self.P)).copy()
            ZU = ZL.copy()
            if done:
                Wp = np.maximum(self.W_n[J][:, :N], 0.0)
                Wm = np.minimum(self.W_n[J][:, :N], 0.0)
                used = np.nonzero((Wp != 0).any(axis=0) | (Wm != 0).any(axis=0))[0]
                if used.size:
                    Wp, Wm = Wp[:, used], Wm[:, used]
                    ZL += np.matmul(Wp, AL[:, used]) + np.matmul(Wm, AU[:, used])
                    ZU += np.matmul(Wp, AU[:, used]) + np.matmul(Wm, AL[:, used])
            l = self.least(ZL, M, lo, hi)
            u = self.greatest(ZU, M, lo, hi)
            zlo[:, J], zhi[:, J] = l, u
            for a in sorted({self.acts[j] for j in J}):
                sel = np.array([i for i, j in enumerate(J) if self.acts[j] == a])
                kl, bl, ku, bu = activation_lines(a, l[:, sel], u[:, sel], bipolar=self.bipolar)
                jj = J[sel]
                AL[:, jj] = kl[..., None] * ZL[:, sel]
                AL[:, jj, -1] += bl
                AU[:, jj] = ku[..., None] * ZU[:, sel]
                AU[:, jj, -1] += bu
            for i, j in enumerate(J.tolist()):
                if j in wanted:
                    ZL_keep[j], ZU_keep[j] = ZL[:, i], ZU[:, i]
            done += len(J)
        return self._outputs(M, lo, hi, zlo, zhi, ZL_keep, ZU_keep)

    def _outputs(self, M, lo, hi, zlo, zhi, ZL_keep, ZU_keep) -> Bounds:
        B = M.shape[0]
        K = len(self.net.outputs)
        vlo, vhi, mlo, mhi = (np.zeros((B, K)) for _ in range(4))
        flo = np.zeros((B, K, self.P))
        fhi = np.zeros((B, K, self.P))
        for k in range(K):
            j = self.out_neuron[k]
            if j >= 0:
                mlo[:, k], mhi[:, k] = zlo[:, j], zhi[:, j]
                flo[:, k], fhi[:, k] = ZL_keep[j], ZU_keep[j]
                name = self.acts[j]
                if name == "step":
                    low = -1.0 if self.bipolar else 0.0
                    vlo[:, k] = np.where(zlo[:, j] > 0, 1.0, low)
                    vhi[:, k] = np.where(zhi[:, j] <= 0, low, 1.0)
                else:
                    f = act.get(name).forward
                    vlo[:, k], vhi[:, k] = f(zlo[:, j]), f(zhi[:, j])
            else:
                F = np.broadcast_to(self.unit_forms[self.out_unit[k]], (B, 1, self.P))
                a = self.least(F, M, lo, hi)[:, 0]
                b = self.greatest(F, M, lo, hi)[:, 0]
                vlo[:, k] = mlo[:, k] = a
                vhi[:, k] = mhi[:, k] = b
                flo[:, k] = fhi[:, k] = F[:, 0]
        return Bounds(zlo, zhi, vlo, vhi, mlo, mhi, flo, fhi)

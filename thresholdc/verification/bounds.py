"""Complete branch-and-bound verification of any network (step, trained sigmoid, tanh, …).

For networks whose inputs are too many to enumerate, or trained networks with real inputs,
:func:`verify_bounds` decides agreement with the rules over whole boxes of inputs at a time.

Rules of the algorithm
    * A *box* fixes some inputs and leaves others free (see :mod:`thresholdc.verification.ternary`).
      The frontier of boxes is processed in vectorised batches, depth first.
    * Network bounds: each input unit gets an interval over the box; a neuron's pre-activation
      interval is ``b + Σ_{w>0} w·[lo] + Σ_{w<0} w·[hi]`` (upper end alike), and since every
      activation (step, sigmoid, tanh, relu, linear) is non-decreasing its output interval is
      ``[f(z_lo), f(z_hi)]``.  A categorical input's one-hot units are bounded together
      (exactly one is 1), as the smallest and largest contribution of its allowed values.
    * An output is *decided* on a box when its interval lies wholly above the decision
      threshold (reads 1) or wholly at or below it (reads 0) and the rules' three-valued
      evaluation is constant on the box: then the network agrees or disagrees on every point
      of the box at once, and a disagreement counts every discrete assignment in it.
    * Undecided boxes are split: the first free discrete input in order of influence (total
      |weight| on its units) is split in two halves of its allowed choices; when only
      continuous inputs are free, the widest (relative to its scale) is bisected, after the
      box's centre has been checked for a counterexample.  A box that is a single point is
      always decided, so on a finite domain the search is complete.
    * ``min_margin`` is a certified lower bound of the margin over each decided box: ``|z|``
      of the output neuron (its pre-activation, whatever the activation); for a soft output
      ``min_value_distance`` is one of ``|value − threshold|``.
    * ``max_nodes`` boxes or ``time_limit`` seconds stop the search: a disagreement already
      found gives ``different``; each output still open in some box is ``undecided`` with the
      limit as its bound, and an output settled on every box keeps its verdict.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> text = "input a, b, c\\ny = atleast(2, a, b, c)\\n"
>>> verify_bounds(compile_rules(text, activation="sigmoid"), source_from_text(text)).result
'equal'
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import progress as progress_bars
from ..ir import activations as act
from ..ir.network import Network
from .domain import (
    Domain,
    check_names,
    halve_choices,
    halve_widest,
    network_rows,
    root_boxes,
    soft_outputs,
    typed_domain,
)
from .report import MAX_COUNTEREXAMPLES, Counterexample, OutputReport, Report
from .ternary import rules_ternary

__all__ = ["verify_bounds", "network_bounds", "DEFAULT_MAX_NODES", "DEFAULT_TIME_LIMIT"]

DEFAULT_MAX_NODES = 2_000_000
DEFAULT_TIME_LIMIT = 60.0
_BATCH = 2048


class _Bounder:
    """Interval bounds of every neuron of ``net`` over batches of boxes of ``domain``.

    A batch's discrete choices are one boolean array ``M`` of shape ``(boxes, choices)``:
    feature ``k`` owns the columns ``offsets[k] : offsets[k] + size``.
    """

    def __init__(self, net: Network, domain: Domain) -> None:
        self.net = net
        self.domain = domain
        col = {u: i for i, u in enumerate(net.inputs)}
        pos = {n.name: j for j, n in enumerate(net.neurons)}
        bipolar = net.encoding == "bipolar"
        n_in, n_neu = len(net.inputs), len(net.neurons)
        W = np.zeros((n_in, n_neu))
        self.prev: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []
        for j, n in enumerate(net.neurons):
            idx, ws = [], []
            for i, w in zip(n.inputs, n.weights):
                if i in col:
                    W[col[i], j] += float(w)
                else:
                    idx.append(pos[i])
                    ws.append(float(w))
            wa = np.array(ws, dtype=float)
            self.prev.append((np.array(idx, dtype=np.int64), np.maximum(wa, 0), np.minimum(wa, 0)))
        self.bias = np.array([float(n.bias) for n in net.neurons])
        sizes = [f.size for f in domain.discrete]
        self.offsets = np.cumsum([0] + sizes[:-1]).astype(np.int64)
        self.n_choices = int(sum(sizes))
        # Single-unit features (Boolean, real points): one value per choice, bounded with one
        # reduceat over all features; one-hot groups: their contribution to every neuron.
        self.values = np.zeros(self.n_choices)
        self.single: list[int] = []
        self.single_cols: list[int] = []
        self.onehot: list[tuple[int, int, list[int]]] = []  # (feature, offset, unit columns)
        self.groups: list[tuple[int, int, int, np.ndarray]] = []
        plain = W.copy()
        for k, f in enumerate(domain.discrete):
            off = int(self.offsets[k])
            cols = [col[u] for u in f.units]
            table = f.table.astype(float)
            if bipolar and f.kind != "real":
                table = 2.0 * table - 1.0
            if len(cols) == 1:
                self.values[off:off + f.size] = table[:, 0]
                self.single.append(k)
                self.single_cols.append(cols[0])
            else:
                self.onehot.append((k, off, cols))
                self.groups.append((k, off, f.size, table @ W[cols, :]))
                plain[cols, :] = 0.0
        self.cold, self.hot = (-1.0, 1.0) if bipolar else (0.0, 1.0)
        # Two-choice features (most of them: Boolean inputs) take a fast path.
        self.two = np.array([k for k, f in enumerate(domain.discrete) if f.size == 2],
                            dtype=np.int64)
        self.many = np.array([k for k, f in enumerate(domain.discrete) if f.size != 2],
                             dtype=np.int64)
        single = set(self.single)
        self.two_single = np.array([k for k in self.two.tolist() if k in single], dtype=np.int64)
        self.two_cols = [self.single_cols[self.single.index(k)] for k in self.two_single.tolist()]
        self.many_single = np.array([k for k in self.many.tolist() if k in single],
                                    dtype=np.int64)
        self.many_cols = [self.single_cols[self.single.index(k)]
                          for k in self.many_single.tolist()]
        o = self.offsets[self.two_single]
        self.v0, self.v1 = self.values[o], self.values[o + 1]
        self.cont_cols = [col[f.unit] for f in domain.continuous]
        self.wpos, self.wneg = np.maximum(plain, 0), np.minimum(plain, 0)
        self.acts = [n.activation for n in net.neurons]
        self.bipolar = bipolar

    def sizes(self, M: np.ndarray) -> np.ndarray:
        """Allowed choices per box and discrete feature, ``(boxes, features)``."""
        out = np.zeros((M.shape[0], len(self.offsets)), dtype=np.int64)
        if len(self.two):
            o = self.offsets[self.two]
            out[:, self.two] = M[:, o].astype(np.int64) + M[:, o + 1]
        if len(self.many):
            full = np.add.reduceat(M.astype(np.int64), self.offsets, axis=1)
            out[:, self.many] = full[:, self.many]
        return out

    def masks(self, M: np.ndarray) -> list[np.ndarray]:
        """Per-feature views of ``M``."""
        return [M[:, o:o + f.size] for o, f in zip(self.offsets.tolist(), self.domain.discrete)]

    def units(self, M: np.ndarray, lo: np.ndarray, hi: np.ndarray,
              sizes: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Interval ends of every input unit, each ``(boxes, inputs)``."""
        B = M.shape[0]
        ulo = np.zeros((B, len(self.net.inputs)))
        uhi = np.zeros_like(ulo)
        if len(self.two_single):
            o = self.offsets[self.two_single]
            a0, a1 = M[:, o], M[:, o + 1]
            small, big = np.minimum(self.v0, self.v1), np.maximum(self.v0, self.v1)
            both = a0 & a1
            ulo[:, self.two_cols] = np.where(both, small, np.where(a0, self.v0, self.v1))
            uhi[:, self.two_cols] = np.where(both, big, np.where(a0, self.v0, self.v1))
        if len(self.many_single):
            low = np.minimum.reduceat(np.where(M, self.values, np.inf), self.offsets, axis=1)
            high = np.maximum.reduceat(np.where(M, self.values, -np.inf), self.offsets, axis=1)
            ulo[:, self.many_cols] = low[:, self.many_single]
            uhi[:, self.many_cols] = high[:, self.many_single]
        for k, off, cols in self.onehot:
            block = M[:, off:off + len(cols)]
            sure = block & (sizes[:, k:k + 1] == 1)
            ulo[:, cols] = np.where(sure, self.hot, self.cold)
            uhi[:, cols] = np.where(block, self.hot, self.cold)
        for k, c in enumerate(self.cont_cols):
            ulo[:, c] = lo[:, k]
            uhi[:, c] = hi[:, k]
        return ulo, uhi

    def bounds(self, M: np.ndarray, lo: np.ndarray, hi: np.ndarray,
               sizes: np.ndarray) -> tuple[np.ndarray, ...]:
        """``(ulo, uhi, zlo, zhi, alo, ahi)``: units, pre-activations and activations."""
        ulo, uhi = self.units(M, lo, hi, sizes)
        zlo = ulo @ self.wpos + uhi @ self.wneg + self.bias
        zhi = uhi @ self.wpos + ulo @ self.wneg + self.bias
        for _, off, n, contrib in self.groups:
            m = M[:, off:off + n, None]
            zlo += np.where(m, contrib[None], np.inf).min(axis=1)
            zhi += np.where(m, contrib[None], -np.inf).max(axis=1)
        alo = np.empty_like(zlo)
        ahi = np.empty_like(zhi)
        for j, (idx, wp, wn) in enumerate(self.prev):
            if idx.size:
                zlo[:, j] += alo[:, idx] @ wp + ahi[:, idx] @ wn
                zhi[:, j] += ahi[:, idx] @ wp + alo[:, idx] @ wn
            alo[:, j] = self._act(j, zlo[:, j])
            ahi[:, j] = self._act(j, zhi[:, j])
        return ulo, uhi, zlo, zhi, alo, ahi

    def _act(self, j: int, z: np.ndarray) -> np.ndarray:
        """The activation of neuron ``j`` (non-decreasing, so it maps interval ends)."""
        if self.acts[j] == "step" and self.bipolar:
            return np.where(z > 0, 1.0, -1.0)
        return act.get(self.acts[j]).forward(z)


def network_bounds(
    net: Network, domain: Domain, masks: list[np.ndarray], lo: np.ndarray | None = None,
    hi: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Output interval ends ``(vlo, vhi)``, each ``(boxes, outputs)``, over boxes of ``domain``
    (``masks[k]``: the allowed choices of discrete feature ``k``; ``lo``/``hi``: the ends of
    the continuous features).

    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> from thresholdc.verification.domain import boolean_or_typed_domain
    >>> text = "input a, b\\ny = a and b\\n"
    >>> net, d = compile_rules(text), boolean_or_typed_domain(source_from_text(text))
    >>> vlo, vhi = network_bounds(net, d, [np.array([[True, True]]), np.array([[False, True]])])
    >>> vlo.tolist(), vhi.tolist()
    ([[0.0]], [[1.0]])
    """
    bd = _Bounder(net, domain)
    B = masks[0].shape[0] if masks else (0 if lo is None else lo.shape[0])
    M = np.concatenate(masks, axis=1) if masks else np.zeros((B, 0), dtype=bool)
    empty = np.zeros((B, 0))
    lo = empty if lo is None else np.asarray(lo, dtype=float)
    hi = empty if hi is None else np.asarray(hi, dtype=float)
    _, _, vlo, vhi = _output_intervals(bd, M, lo, hi, bd.sizes(M))
    return vlo, vhi


def _output_intervals(bd: _Bounder, M: np.ndarray, lo: np.ndarray, hi: np.ndarray,
                      sizes: np.ndarray) -> tuple:
    """Margin-carrying ends ``(mlo, mhi)`` (z for step outputs) and value ends ``(vlo, vhi)``."""
    ulo, uhi, zlo, zhi, alo, ahi = bd.bounds(M, lo, hi, sizes)
    net = bd.net
    pos = {n.name: j for j, n in enumerate(net.neurons)}
    col = {u: i for i, u in enumerate(net.inputs)}
    B = ulo.shape[0]
    shape = (B, len(net.outputs))
    vlo, vhi, mlo, mhi = (np.empty(shape) for _ in range(4))
    thr = net.decision_threshold
    for k, o in enumerate(net.outputs):
        if o.source in pos:
            j = pos[o.source]
            vlo[:, k], vhi[:, k] = alo[:, j], ahi[:, j]
            mlo[:, k], mhi[:, k] = zlo[:, j], zhi[:, j]
        else:
            c = col[o.source]
            vlo[:, k], vhi[:, k] = ulo[:, c], uhi[:, c]
            mlo[:, k] = np.where(ulo[:, c] > thr, 0.5, -np.inf)
            mhi[:, k] = np.where(uhi[:, c] <= thr, -0.5, np.inf)
    return mlo, mhi, vlo, vhi


@dataclass
class _Batch:
    """A batch of boxes: discrete choices ``M``, continuous ends, outputs already settled."""

    M: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    resolved: np.ndarray

    def __len__(self) -> int:
        return self.resolved.shape[0]

    def take(self, sel: np.ndarray) -> _Batch:
        return _Batch(self.M[sel], self.lo[sel], self.hi[sel], self.resolved[sel])

    @staticmethod
    def join(parts: list[_Batch]) -> _Batch:
        return _Batch(*(np.concatenate([getattr(p, a) for p in parts])
                        for a in ("M", "lo", "hi", "resolved")))


class _Search:
    """One branch-and-bound run (see the module docstring)."""

    def __init__(self, net: Network, source: Any, domain: Domain) -> None:
        self.net, self.source, self.domain = net, source, domain
        self.bd = _Bounder(net, domain)
        self.out_index = [list(source.outputs).index(o.name) for o in net.outputs]
        K = len(net.outputs)
        self.bad = [0] * K
        self.unknown = np.zeros(K, dtype=bool)
        self.open = np.zeros(K, dtype=bool)
        self.min_margin = np.full(K, np.inf)
        self.min_dist = np.full(K, np.inf)
        self.soft = soft_outputs(net)
        self.examples: list[list[Counterexample]] = [[] for _ in range(K)]
        self.nodes = 0
        # Split order of discrete features: most total |weight| on their units first.
        weight = {u: 0.0 for u in net.inputs}
        for n in net.neurons:
            for i, w in zip(n.inputs, n.weights):
                if i in weight:
                    weight[i] += abs(float(w))
        infl = [sum(weight.get(u, 0.0) for u in f.units) for f in domain.discrete]
        self.split_order = np.array(
            sorted(range(len(domain.discrete)), key=lambda k: (-infl[k], k)), dtype=np.int64)
        total = [sum(b - a for a, b in f.pieces) for f in domain.continuous]
        self.cont_total = np.array([t if t > 0 else 1.0 for t in total])
        self.cont_scale = np.array([f.scale for f in domain.continuous], dtype=float)

    # ---------------------------------------------------------------- one batch
    def weight(self, b: _Batch, sizes: np.ndarray | None = None) -> np.ndarray:
        """Discrete assignments in each box, times its share of the continuous volume."""
        sizes = self.bd.sizes(b.M) if sizes is None else sizes
        w = np.prod(sizes.astype(float), axis=1)
        if self.domain.continuous:
            w *= np.prod((b.hi - b.lo) / self.cont_total, axis=1)
        return w

    def rules(self, b: _Batch) -> tuple[np.ndarray, np.ndarray]:
        """The rules' ``(can0, can1)`` in network output order."""
        can0, can1 = rules_ternary(self.source, self.domain, self.bd.masks(b.M), b.lo, b.hi)
        return can0[:, self.out_index], can1[:, self.out_index]

    def point(self, M: np.ndarray, reals: np.ndarray) -> tuple[np.ndarray, ...]:
        """Choice indices, source rows and network output values at one point per box
        (the first allowed choice of each discrete feature, ``reals`` for the rest)."""
        choice = np.zeros((M.shape[0], len(self.domain.discrete)), dtype=np.int64)
        for k, m in enumerate(self.bd.masks(M)):
            choice[:, k] = m.argmax(axis=1)
        X = self.domain.unit_rows(choice, reals)
        values = self.net.evaluate(network_rows(self.net, self.domain, X))
        return choice, X, values

    def record(self, M: np.ndarray, k: int, expected: np.ndarray, reals: np.ndarray) -> None:
        """Counterexamples for output ``k`` at the given boxes (up to the report's limit)."""
        room = MAX_COUNTEREXAMPLES - len(self.examples[k])
        if room <= 0 or not len(M):
            return
        choice, _, values = self.point(M[:room], reals[:room])
        thr = self.net.decision_threshold
        for r in range(len(choice)):
            v = float(values[r, k])
            self.examples[k].append(Counterexample(
                self.domain.assignment(choice[r], reals[r]), self.net.outputs[k].name,
                bool(expected[r]), v, abs(v - thr),
            ))

    def step(self, b: _Batch) -> _Batch | None:
        """Decide what can be decided in ``b``; return the children of the rest."""
        self.nodes += len(b)
        sizes = self.bd.sizes(b.M)
        mlo, mhi, vlo, vhi = _output_intervals(self.bd, b.M, b.lo, b.hi, sizes)
        can0, can1 = self.rules(b)
        thr = self.net.decision_threshold
        net_one, net_zero = vlo > thr, vhi <= thr
        decided = (net_one | net_zero) & (can0 ^ can1) & ~b.resolved
        wrong = decided & (net_one != can1)
        counts = np.prod(sizes, axis=1)
        mids = (b.lo + b.hi) / 2
        for k in np.nonzero(decided.any(axis=0))[0].tolist():
            col = decided[:, k]
            margin = np.where(net_one[:, k], mlo[:, k], -mhi[:, k])[col]
            self.min_margin[k] = min(self.min_margin[k], float(margin.min()))
            if self.soft[k]:
                dist = np.where(net_one[:, k], vlo[:, k] - thr, thr - vhi[:, k])[col]
                self.min_dist[k] = min(self.min_dist[k], float(dist.min()))
            bad_rows = np.nonzero(wrong[:, k])[0]
            if bad_rows.size:
                self.bad[k] += int(counts[bad_rows].sum())
                self.record(b.M[bad_rows], k, can1[bad_rows, k], mids[bad_rows])
        resolved = b.resolved | decided
        discrete_fixed = (sizes == 1).all(axis=1)
        if self.domain.continuous:
            resolved = self._centres(b, resolved, discrete_fixed & ~resolved.all(axis=1), mids)
        open_rows = ~resolved.all(axis=1)
        if not open_rows.any():
            return None
        rest = _Batch(b.M, b.lo, b.hi, resolved).take(open_rows)
        return self._split(rest, sizes[open_rows])

    def _centres(self, b: _Batch, resolved: np.ndarray, rows: np.ndarray,
                 mids: np.ndarray) -> np.ndarray:
        """Check the centre of each box whose discrete inputs are fixed; a disagreement there
        settles the output for the box; a box too thin to split is left undecided."""
        idx = np.nonzero(rows)[0]
        if not idx.size:
            return resolved
        resolved = resolved.copy()
        _, X, values = self.point(b.M[idx], mids[idx])
        expected = np.asarray(self.source.evaluate(X), dtype=bool)[:, self.out_index]
        actual = values > self.net.decision_threshold
        thin = ((b.hi - b.lo)[idx] <= 1e-9 * np.maximum(1.0, np.abs(mids[idx]))).all(axis=1)
        for k in range(resolved.shape[1]):
            bad = (actual[:, k] != expected[:, k]) & ~resolved[idx, k]
            if bad.any():
                self.bad[k] += int(bad.sum())
                self.record(b.M[idx[bad]], k, expected[bad, k], mids[idx[bad]])
                resolved[idx[bad], k] = True
            stuck = thin & ~resolved[idx, k]
            if stuck.any():
                self.unknown[k] = True
                resolved[idx[stuck], k] = True
        return resolved

    def _split(self, b: _Batch, sizes: np.ndarray) -> _Batch | None:
        """Two children per box (see the module docstring for the choice of input)."""
        if not len(b):
            return None
        parts: list[_Batch] = []
        if len(self.split_order):
            free = sizes[:, self.split_order] > 1
            first = self.split_order[free.argmax(axis=1)]
            choice = np.where(free.any(axis=1), first, -1)
        else:
            choice = np.full(len(b), -1, dtype=np.int64)
        for k in np.unique(choice[choice >= 0]).tolist():
            sub = b.take(choice == k)
            off, n = int(self.bd.offsets[k]), self.domain.discrete[k].size
            for M in halve_choices(sub.M, off, n):
                parts.append(_Batch(M, sub.lo, sub.hi, sub.resolved))
        cont = choice < 0
        if cont.any():
            sub = b.take(cont)
            for lo, hi in halve_widest(sub.lo, sub.hi, self.cont_scale):
                parts.append(_Batch(sub.M, lo, hi, sub.resolved))
        return _Batch.join(parts) if parts else None

    # ---------------------------------------------------------------- the search
    def roots(self) -> _Batch:
        """One box per combination of continuous pieces, every discrete choice allowed."""
        lo, hi = root_boxes(self.domain)
        n = len(lo)
        M = np.ones((n, self.bd.n_choices), dtype=bool)
        return _Batch(M, lo, hi, np.zeros((n, len(self.net.outputs)), dtype=bool))

    def run(self, max_nodes: int, time_limit: float, progress: bool | None) -> bool:
        """Search until done (True) or a limit stops it (False)."""
        t0 = time.perf_counter()
        stack = [self.roots()]
        bar = _bar(progress, float(self.weight(stack[0]).sum()))
        try:
            while stack:
                b = stack.pop()
                if len(b) > _BATCH:
                    stack.append(b.take(np.arange(_BATCH, len(b))))
                    b = b.take(np.arange(_BATCH))
                if self.nodes >= max_nodes or time.perf_counter() - t0 > time_limit:
                    for rest in [b, *stack]:  # outputs still open in some box
                        self.open |= (~rest.resolved).any(axis=0)
                    return False
                before = float(self.weight(b).sum()) if bar is not None else 0.0
                children = self.step(b)
                if children is not None:
                    stack.append(children)
                if bar is not None:
                    after = float(self.weight(children).sum()) if children is not None else 0.0
                    bar.update(before - after)
            return True
        finally:
            if bar is not None:
                bar.close()


def _bar(progress: bool | None, total: float) -> Any:
    """A bar over the domain's volume (:func:`thresholdc.progress.bar`)."""
    return progress_bars.bar(total, "branch-and-bound", unit="pt", show=progress)


def run_bounds(
    net: Network, source: Any, domain: Domain, *, max_nodes: int = DEFAULT_MAX_NODES,
    time_limit: float = DEFAULT_TIME_LIMIT, progress: bool | None = None,
) -> Report:
    """Branch-and-bound over an explicit :class:`Domain` (used by the typed verifier)."""
    t0 = time.perf_counter()
    search = _Search(net, source, domain)
    search.run(max_nodes, time_limit, progress)
    stopped = (f"bounds: the search stopped at {search.nodes} boxes (limit {max_nodes} boxes, "
               f"{time_limit:g} s)")
    thin = ("bounds: some boxes are too thin to split and still undecided (the network sits "
            "on its decision threshold there)")
    outputs = []
    for k, o in enumerate(net.outputs):
        margin = (None if not np.isfinite(search.min_margin[k])
                  else float(search.min_margin[k]))
        dist = None if not np.isfinite(search.min_dist[k]) else float(search.min_dist[k])
        settled = not search.open[k] and not search.unknown[k]
        if search.bad[k]:
            exact = settled and not domain.continuous  # every box of k counted whole
            outputs.append(OutputReport.differs(
                o.name, search.examples[k], disagreements=search.bad[k] if exact else None,
                found=search.bad[k], min_margin=margin, value_distance=dist))
        elif settled:
            outputs.append(OutputReport.proven(o.name, margin, value_distance=dist))
        else:
            outputs.append(OutputReport.undecided(o.name, thin if search.unknown[k]
                                                  else stopped))
    what = (f"all {domain.size} discrete assignments" if not domain.continuous
            else "every box of the domain")
    report = Report.of("bounds", domain.size, outputs, notes=list(domain.notes),
                       seconds=time.perf_counter() - t0)
    if report.result == "equal":
        report.proofs.append(f"bounds: {what} decided in {search.nodes} boxes")
    report.notes.append("min_margin is a certified lower bound over the decided boxes")
    if domain.continuous and any(o.verdict == "different" for o in outputs):
        report.notes.append("real inputs: 'found' counts disagreeing boxes, not assignments")
    return report


def verify_bounds(
    net: Network,
    source: Any,
    *,
    max_nodes: int = DEFAULT_MAX_NODES,
    time_limit: float = DEFAULT_TIME_LIMIT,
    progress: bool | None = None,
) -> Report:
    """Compare ``net`` with ``source`` by branch-and-bound over boxes of inputs.

    Works on any network read with a decision threshold (step, trained sigmoid or tanh,
    relu): complete on Boolean and categorical inputs; for real inputs see
    :func:`thresholdc.verification.typed.typed_domain` (cells for step networks, declared ranges
    less a band of ± scale around each rule threshold for soft ones).

    Parameters
    ----------
    net : Network
    source : Reference
        Same input units and output names as ``net``.
    max_nodes : int
        Largest number of boxes examined.
    time_limit : float
        Seconds before the search gives up.
    progress : bool or None
        A progress bar (tqdm) on a terminal; None: as :mod:`thresholdc.progress` is set (the
        command line turns bars on).

    Returns
    -------
    Report
        Method ``bounds``; per output a verdict, the exact number of disagreeing discrete
        assignments when every box was settled for it, up to five counterexamples and a
        lower bound of the margin; an output a limit left open is ``undecided`` with the
        limit as its ``bound``.

    Raises
    ------
    VerificationUndecided
        A soft network with a real input without a declared range (see ``typed_domain``).
    UsageError
        When the names differ.

    Examples
    --------
    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> net = compile_rules("input a, b\\ny = a or b\\n", activation="sigmoid")
    >>> r = verify_bounds(net, source_from_text("input a, b\\ny = a and b\\n"))
    >>> r.result, r.outputs[0].disagreements
    ('different', 2)
    """
    check_names(net, source)
    domain = typed_domain(net, source)
    return run_bounds(net, source, domain, max_nodes=max_nodes, time_limit=time_limit,
                      progress=progress)

"""Branch-and-bound with linear relaxation bounds, per output, for soft (e.g. trained) networks.

The question, per output: is there a valid input on which the network's decision differs from
the rules'?  The domain is :func:`thresholdc.verification.typed.typed_domain`'s: valid one-hot
assignments of categorical inputs, Boolean inputs, and for a soft network the declared range
of each real input less a band of ± scale around each rule threshold.

Rules of the search
    * A *box* allows a subset of the choices of each discrete input and an interval of each
      continuous one.  The network is bounded over a box by
      :class:`~thresholdc.verification.linear_bounds.LinearBounder` (linear forms through sound
      activation lines, minimised exactly over the relaxed one-hot simplex of every
      categorical input), the rules by their three-valued evaluation
      (:mod:`thresholdc.verification.ternary`).
    * An output is settled on a box when the rules are constant there and the network's value
      lies wholly above or at-or-below the decision threshold: either they agree on the whole
      box, or every point of it is a counterexample.
    * Each open box proposes candidate points: the vertex minimising the lower form of the
      output's pre-activation (where the rules can be 1) and the one maximising its upper form
      (where they can be 0).  Every candidate is evaluated exactly on the real network
      (:meth:`Network.decide`) and on the rules' reference evaluator; only a point on which
      they really differ is reported.
    * Open boxes are split on the discrete input that splits the bounds most: the largest
      spread, over its allowed values, of the coefficients of the output's forms (plus, where
      the rules are not yet constant, a preference for the inputs the output's rules read);
      when only continuous inputs are free, the widest relative to its scale is halved after
      its centre is checked.  A box that is one point is always settled, so the search is
      complete on a finite domain.
    * An output with a counterexample is not searched further.  ``max_nodes`` boxes or
      ``time_limit`` seconds stop the search; an output still open is ``undecided`` and its
      ``bound`` says how much of the domain was left and the largest remaining gap between
      the network's bound and the threshold.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> text = "input c: {red, green, blue}, d: {on, off}\\ny = c == red or d == on\\n"
>>> r = verify_relax(compile_rules(text, activation="sigmoid"), source_from_text(text))
>>> r.result, [o.verdict for o in r.outputs]
('equal', ['equal'])
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import progress as progress_bars
from ..ir import program as ast
from ..ir.network import Network
from .domain import (
    Domain,
    check_names,
    halve_choices,
    halve_widest,
    network_rows,
    root_boxes,
    typed_domain,
)
from .linear_bounds import LinearBounder
from .report import MAX_COUNTEREXAMPLES, Counterexample, OutputReport, Report
from .ternary import rules_ternary

__all__ = ["verify_relax", "run_relax", "rule_support", "DEFAULT_MAX_NODES",
           "DEFAULT_TIME_LIMIT"]

DEFAULT_MAX_NODES = 500_000
DEFAULT_TIME_LIMIT = 60.0


def rule_support(source: Any, domain: Domain) -> np.ndarray:
    """``(outputs, discrete features)`` bool: the discrete inputs each output's rules read
    (every input for a netlist), in source output order.

    >>> from thresholdc.logic.source import source_from_text
    >>> from thresholdc.verification.domain import boolean_or_typed_domain
    >>> src = source_from_text("input a, b, c\\nx = a and b\\ny = not c\\n")
    >>> rule_support(src, boolean_or_typed_domain(src)).astype(int).tolist()
    [[1, 1, 0], [0, 0, 1]]
    """
    names = [f.name for f in domain.discrete]
    program = getattr(source, "program", None)
    out = np.ones((len(source.outputs), len(names)), dtype=bool)
    if program is None:
        return out
    uses: dict[str, set[str]] = {}
    for name in program.order:
        seen: set[str] = set()
        stack: list[Any] = [program.definitions[name].expr]
        while stack:
            e = stack.pop()
            if isinstance(e, ast.Name):
                seen |= uses.get(e.id, {e.id})
            elif isinstance(e, (ast.CategoryTest, ast.RealTest)):
                seen.add(e.var)
            else:
                stack.extend(ast.sub_expressions(e))
        uses[name] = seen
    for k, o in enumerate(source.outputs):
        reads = uses.get(o, {o})
        out[k] = [n in reads for n in names]
    return out


@dataclass
class _Boxes:
    """A batch of boxes: allowed choices, continuous ends, settled outputs, inherited gap."""

    M: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    resolved: np.ndarray
    gap: np.ndarray

    def __len__(self) -> int:
        return self.M.shape[0]

    def take(self, sel: Any) -> _Boxes:
        return _Boxes(self.M[sel], self.lo[sel], self.hi[sel], self.resolved[sel], self.gap[sel])

    @staticmethod
    def join(parts: list[_Boxes]) -> _Boxes:
        return _Boxes(*(np.concatenate([getattr(p, a) for p in parts])
                        for a in ("M", "lo", "hi", "resolved", "gap")))


class _Search:
    """One run of the relaxation branch-and-bound (see the module docstring)."""

    def __init__(self, net: Network, source: Any, domain: Domain,
                 max_examples: int = MAX_COUNTEREXAMPLES) -> None:
        self.net, self.source, self.domain = net, source, domain
        self.lb = LinearBounder(net, domain)
        self.out_index = [list(source.outputs).index(o.name) for o in net.outputs]
        self.K = len(net.outputs)
        self.support = rule_support(source, domain)[self.out_index]
        self.examples: list[list[Counterexample]] = [[] for _ in range(self.K)]
        self.done = np.zeros(self.K, dtype=bool)
        self.unknown = np.zeros(self.K, dtype=bool)
        self.min_margin = np.full(self.K, np.inf)
        self.max_examples = max_examples
        self.nodes = 0
        self.thr = net.decision_threshold
        sizes = np.array([f.size for f in domain.discrete], dtype=np.int64)
        self.full = sizes
        self.offsets = self.lb.offsets
        total = [sum(b - a for a, b in f.pieces) for f in domain.continuous]
        self.cont_total = np.array([t if t > 0 else 1.0 for t in total])
        self.cont_scale = np.array([f.scale for f in domain.continuous], dtype=float)
        infl = np.abs(self.lb.direct[:, :self.lb.n_choices]).sum(axis=0)
        self.influence = (np.add.reduceat(infl, self.offsets) if len(sizes)
                          else np.zeros(0))
        N, P = max(len(net.neurons), 1), self.lb.P
        self.batch = int(max(8, min(1024, 3e7 // (4 * N * P * 8))))

    # ---------------------------------------------------------------- helpers
    def sizes(self, M: np.ndarray) -> np.ndarray:
        if not len(self.full):
            return np.zeros((M.shape[0], 0), dtype=np.int64)
        return np.add.reduceat(M.astype(np.int64), self.offsets, axis=1)

    def volume(self, b: _Boxes) -> np.ndarray:
        """Each box's share of the domain (discrete assignments times continuous length)."""
        w = np.prod(self.sizes(b.M) / self.full, axis=1) if len(self.full) else np.ones(len(b))
        if self.domain.continuous:
            w = w * np.prod((b.hi - b.lo) / self.cont_total, axis=1)
        return w

    def first_point(self, M: np.ndarray) -> np.ndarray:
        choice = np.zeros((M.shape[0], len(self.domain.discrete)), dtype=np.int64)
        for k, f in enumerate(self.domain.discrete):
            off = int(self.offsets[k])
            choice[:, k] = M[:, off:off + f.size].argmax(axis=1)
        return choice

    def evaluate(self, choice: np.ndarray, reals: np.ndarray) -> tuple[np.ndarray, ...]:
        """Exact network decisions, values and rule values ``(points, outputs)``."""
        X = self.domain.unit_rows(choice, reals if self.domain.continuous else None)
        Xn = network_rows(self.net, self.domain, X)
        values = self.net.evaluate(Xn)
        actual = self.net.decide(Xn)
        expected = np.asarray(self.source.evaluate(X), dtype=bool)[:, self.out_index]
        return actual, expected, values

    def check(self, choice: np.ndarray, reals: np.ndarray, owner: np.ndarray) -> np.ndarray:
        """Evaluate points; record real counterexamples on outputs still searched.  Returns
        ``(points, outputs)`` bool: the point disagrees there."""
        if not len(choice):
            return np.zeros((0, self.K), dtype=bool)
        actual, expected, values = self.evaluate(choice, reals)
        wrong = actual != expected
        for k in np.nonzero(wrong.any(axis=0) & ~self.done)[0].tolist():
            for r in np.nonzero(wrong[:, k])[0].tolist():
                if len(self.examples[k]) >= self.max_examples:
                    break
                assignment = self.domain.assignment(choice[r], reals[r] if self.domain.continuous
                                                    else None)
                if any(c.assignment == assignment for c in self.examples[k]):
                    continue
                v = float(values[r, k])
                self.examples[k].append(Counterexample(assignment, self.net.outputs[k].name,
                                                       bool(expected[r, k]), v,
                                                       abs(v - self.thr)))
        return wrong

    # ---------------------------------------------------------------- one batch
    def step(self, b: _Boxes) -> _Boxes | None:
        self.nodes += len(b)
        resolved = b.resolved | self.done[None, :]
        sizes = self.sizes(b.M)
        bd = self.lb.run(b.M, b.lo, b.hi)
        masks = [b.M[:, o:o + f.size] for o, f in zip(self.offsets.tolist(), self.domain.discrete)]
        can0, can1 = rules_ternary(self.source, self.domain, masks, b.lo, b.hi)
        can0, can1 = can0[:, self.out_index], can1[:, self.out_index]
        thr = self.thr
        net_one, net_zero = bd.vlo > thr, bd.vhi <= thr
        const = can0 ^ can1
        settled = const & (net_one | net_zero) & ~resolved
        wrong = settled & (net_one != can1)
        margin = np.where(net_one, bd.mlo, -bd.mhi)
        for k in np.nonzero(settled.any(axis=0))[0].tolist():
            self.min_margin[k] = min(self.min_margin[k], float(margin[settled[:, k], k].min()))
        reals_mid = (b.lo + b.hi) / 2
        exact = (sizes == 1).all(axis=1) & (not self.domain.continuous)
        # Points checked exactly: one per box settled wrong, every one-point box.
        rows = np.nonzero(wrong.any(axis=1) | (exact & ~resolved.all(axis=1)))[0]
        self.check(self.first_point(b.M[rows]), reals_mid[rows], rows)
        resolved = resolved | settled | exact[:, None]
        # Candidate vertices for the boxes still open.
        open_k = ~resolved
        for k in range(self.K):
            for side, want in ((bd.flo[:, k], can1[:, k]), (-bd.fhi[:, k], can0[:, k])):
                rows = np.nonzero(open_k[:, k] & want)[0]
                if rows.size:
                    choice, reals = self.lb.argmin_point(side[rows], b.M[rows], b.lo[rows],
                                                         b.hi[rows])
                    self.check(choice, reals, rows)
        found = np.array([len(e) > 0 for e in self.examples])
        self.done |= found
        resolved |= self.done[None, :]
        if self.domain.continuous:
            resolved = self._centres(b, resolved, sizes, reals_mid)
        open_rows = ~resolved.all(axis=1)
        if not open_rows.any():
            return None
        gap = np.maximum(np.where(can1, thr - bd.vlo, -np.inf),
                         np.where(can0, bd.vhi - thr, -np.inf))
        gap = np.where(resolved, -np.inf, gap)
        rest = _Boxes(b.M, b.lo, b.hi, resolved, gap).take(open_rows)
        info = (bd.flo[open_rows], bd.fhi[open_rows], (net_one | net_zero)[open_rows],
                const[open_rows])
        return self._split(rest, sizes[open_rows], *info)

    def _centres(self, b: _Boxes, resolved: np.ndarray, sizes: np.ndarray,
                 mids: np.ndarray) -> np.ndarray:
        """Boxes with every discrete input fixed: check the centre; a box too thin to split
        is left undecided for its open outputs."""
        fixed = (sizes == 1).all(axis=1) & ~resolved.all(axis=1)
        idx = np.nonzero(fixed)[0]
        if not idx.size:
            return resolved
        self.check(self.first_point(b.M[idx]), mids[idx], idx)
        found = np.array([len(e) > 0 for e in self.examples])
        self.done |= found
        resolved = resolved | self.done[None, :]
        thin = ((b.hi - b.lo)[idx] <= 1e-9 * np.maximum(1.0, np.abs(mids[idx]))).all(axis=1)
        for k in range(self.K):
            stuck = thin & ~resolved[idx, k]
            if stuck.any():
                self.unknown[k] = True
                resolved[idx[stuck], k] = True
        return resolved

    def _scores(self, b: _Boxes, sizes: np.ndarray, flo: np.ndarray, fhi: np.ndarray,
                net_known: np.ndarray, const: np.ndarray) -> np.ndarray:
        """Split scores ``(boxes, discrete features)`` (see the module docstring)."""
        nc = self.lb.n_choices
        score = np.zeros(sizes.shape, dtype=float)
        for k in range(self.K):
            active = ~b.resolved[:, k]
            if not active.any():
                continue
            spread = np.zeros(sizes.shape)
            for F in (flo[:, k, :nc], fhi[:, k, :nc]):
                hi = np.maximum.reduceat(np.where(b.M, F, -np.inf), self.offsets, axis=1)
                lo = np.minimum.reduceat(np.where(b.M, F, np.inf), self.offsets, axis=1)
                spread += hi - lo
            net_w = (active & ~net_known[:, k])[:, None]
            rule_w = (active & ~const[:, k])[:, None] & self.support[k][None, :]
            score += net_w * spread + rule_w * (1e-6 + spread)
        score = np.where(sizes > 1, score, -np.inf)
        # no information: the free input with the largest total weight
        blank = ~(score > 0).any(axis=1) & (sizes > 1).any(axis=1)
        if blank.any():
            score[blank] = np.where(sizes[blank] > 1, self.influence[None, :], -np.inf)
        return score

    def _split(self, b: _Boxes, sizes: np.ndarray, flo: np.ndarray, fhi: np.ndarray,
               net_known: np.ndarray, const: np.ndarray) -> _Boxes | None:
        parts: list[_Boxes] = []
        free = (sizes > 1).any(axis=1) if sizes.shape[1] else np.zeros(len(b), dtype=bool)
        if free.any():
            score = self._scores(b, sizes, flo, fhi, net_known, const)
            pick = np.where(free, score.argmax(axis=1), -1)
            for k in np.unique(pick[pick >= 0]).tolist():
                sub = b.take(pick == k)
                off, n = int(self.offsets[k]), self.domain.discrete[k].size
                for M in halve_choices(sub.M, off, n):
                    parts.append(_Boxes(M, sub.lo, sub.hi, sub.resolved, sub.gap))
        cont = ~free
        if cont.any() and self.domain.continuous:
            sub = b.take(cont)
            for lo, hi in halve_widest(sub.lo, sub.hi, self.cont_scale):
                parts.append(_Boxes(sub.M, lo, hi, sub.resolved, sub.gap))
        return _Boxes.join(parts) if parts else None

    # ---------------------------------------------------------------- the search
    def roots(self) -> _Boxes:
        lo, hi = root_boxes(self.domain)
        n = len(lo)
        M = np.ones((n, self.lb.n_choices), dtype=bool)
        return _Boxes(M, lo, hi, np.zeros((n, self.K), dtype=bool),
                      np.full((n, self.K), np.inf))

    def run(self, max_nodes: int, time_limit: float, progress: bool | None) -> list[_Boxes]:
        """Search; return the boxes still open when a limit stopped it (empty when done)."""
        t0 = time.perf_counter()
        stack = [self.roots()]
        bar = progress_bars.bar(100, "relaxation bounds", unit="%", show=progress)
        try:
            while stack:
                if self.nodes >= max_nodes or time.perf_counter() - t0 > time_limit:
                    return stack
                b = stack.pop()
                if len(b) > self.batch:
                    stack.append(b.take(np.arange(self.batch, len(b))))
                    b = b.take(np.arange(self.batch))
                before = float(self.volume(b).sum())
                children = self.step(b)
                after = 0.0
                if children is not None:
                    keep = ~(children.resolved | self.done[None, :]).all(axis=1)
                    children = children.take(keep) if not keep.all() else children
                    if len(children):
                        stack.append(children)
                        after = float(self.volume(children).sum())
                bar.update(100.0 * (before - after))
            return []
        finally:
            bar.close()


def run_relax(
    net: Network, source: Any, domain: Domain, *, max_nodes: int = DEFAULT_MAX_NODES,
    time_limit: float = DEFAULT_TIME_LIMIT, progress: bool | None = None,
    max_examples: int = MAX_COUNTEREXAMPLES,
) -> Report:
    """The relaxation branch-and-bound over an explicit :class:`Domain` (see
    :func:`verify_relax`)."""
    t0 = time.perf_counter()
    search = _Search(net, source, domain, max_examples)
    left = search.run(max_nodes, time_limit, progress)
    seconds = time.perf_counter() - t0
    open_volume = np.zeros(search.K)
    open_gap = np.full(search.K, -np.inf)
    for b in left:
        vol = search.volume(b)
        for k in range(search.K):
            rows = ~b.resolved[:, k]
            open_volume[k] += float(vol[rows].sum())
            if rows.any():
                open_gap[k] = max(open_gap[k], float(b.gap[rows, k].max()))
    outputs = []
    for k, o in enumerate(net.outputs):
        margin = None if not np.isfinite(search.min_margin[k]) else float(search.min_margin[k])
        if search.examples[k]:
            outputs.append(OutputReport.differs(o.name, search.examples[k], min_margin=margin))
        elif open_volume[k] > 0 or search.unknown[k]:
            why = []
            if open_volume[k] > 0:
                gap = ("" if not np.isfinite(open_gap[k])
                       else f", largest bound gap {open_gap[k]:.3g}")
                why.append(f"{100 * open_volume[k]:.3g}% of the domain open{gap} after "
                           f"{search.nodes} boxes ({seconds:.1f} s; limits {max_nodes} boxes, "
                           f"{time_limit:g} s)")
            if search.unknown[k]:
                why.append("boxes too thin to split where the network sits on its threshold")
            outputs.append(OutputReport.undecided(o.name, "; ".join(why)))
        else:
            outputs.append(OutputReport.proven(o.name, margin))
    what = (f"all {domain.size} valid discrete assignments" if not domain.continuous
            else "every box of the domain")
    proven = [o.name for o in outputs if o.verdict == "equal"]
    report = Report.of("relax", domain.size, outputs,
                    proofs=[f"relax: {what} decided in {search.nodes} boxes for "
                            f"{', '.join(proven)}"] if proven else [],
                    notes=list(domain.notes), seconds=seconds)
    report.notes.append("counterexamples re-checked on the network and the reference evaluator;"
                        " min_margin is a certified lower bound over the settled boxes")
    return report


def verify_relax(
    net: Network, source: Any, *, max_nodes: int = DEFAULT_MAX_NODES,
    time_limit: float = DEFAULT_TIME_LIMIT, progress: bool | None = None,
) -> Report:
    """Decide, output by output, whether ``net`` computes ``source``'s rules, by
    branch-and-bound with linear relaxation bounds.

    Parameters
    ----------
    net : Network
        Any network with non-decreasing activations (sigmoid, tanh, relu, step, linear).
    source : Source
        Same input units and output names.
    max_nodes, time_limit
        Limits of the search; an output still open then is ``undecided`` with its bound.
    progress : bool or None
        A progress bar on a terminal (None: as the command line set it).

    Returns
    -------
    Report
        Method ``relax``; per output ``equal`` (proven), ``different`` (with up to five
        re-checked counterexamples, ``disagreements`` None: not counted) or ``undecided``.

    Raises
    ------
    VerificationUndecided
        A soft network with a real input without a declared range.
    UsageError
        When the names differ.

    Examples
    --------
    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> net = compile_rules("input c: {a, b, c}\\ny = c in {a, b}\\n", activation="tanh",
    ...                     encoding="bipolar")
    >>> r = verify_relax(net, source_from_text("input c: {a, b, c}\\ny = c == a\\n"))
    >>> r.outputs[0].verdict, r.outputs[0].counterexamples[0].assignment
    ('different', {'c': 'b'})
    """
    check_names(net, source)
    domain = typed_domain(net, source)
    return run_relax(net, source, domain, max_nodes=max_nodes, time_limit=time_limit,
                     progress=progress)

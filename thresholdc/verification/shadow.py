"""A soft network's step shadow, and a unit-by-unit proof that the network decides like it.

The *step shadow* of a sigmoid (or tanh) network is the same network with every activation
replaced by the step function (0/1, or ±1 for the bipolar encoding).  A sigmoid is above 0.5
exactly when its ``z`` is above 0, so where every unit's ``z`` has the sign of its shadow's
``z``, the network's decisions are its shadow's; and a step network with float weights is
decided fast and exactly by the MILP (:mod:`thresholdc.verification.milp`).

:func:`prove_shadow` proves the sign agreement unit by unit, in topological order, by MILP
(HiGHS).  The model holds the domain and the shadow network exactly (step neurons relaxed by
τ = 1e-6 around 0, as in the MILP check) and, for every unit already proven, its soft value
tied to its shadow's binary ``y``: ``y = 1 ⇒ a ∈ [f(g⁺), f(U)]`` and ``y = 0 ⇒ a ∈ [f(L),
f(g⁻)]``, where ``g⁺ > τ`` is a lower bound of the unit's ``z`` where ``y = 1`` and ``g⁻ < −τ``
an upper bound where ``y = 0`` (so a trained unit that is saturated on the domain carries its
small deviation from 0/1 as an interval, not as a piecewise envelope with binaries).  Units not
proven keep their soft value in ``[f(L), f(U)]``.  For unit ``j`` two MILPs minimise ``z_j``
with ``y_j = 1`` and maximise it with ``y_j = 0``; HiGHS's dual bounds (sound at any stop)
beyond ``±τ`` prove the unit and are its ``g⁺``/``g⁻`` (moved outward by a margin).  A point
where the shadow's ``z_j`` is within τ of 0 would satisfy both sides, so both proven rules
it out, and the unit's ``z`` and its shadow's agree in sign with |z| > τ everywhere.

Soundness rests on the model containing every valid input's true values (each row is implied
by the proven units before it) and on HiGHS's floating-point bounds, as the MILP check does.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> from thresholdc.verification.typed import typed_domain
>>> text = "input c: {red, green, blue}, a\\ny = c == red and a\\n"
>>> net = compile_rules(text, activation="sigmoid", layered=True)
>>> src = source_from_text(text)
>>> proof = prove_shadow(net, src, typed_domain(net, src), time_limit=10)
>>> sorted(proof.proven) == list(range(len(net.neurons)))
True
"""

from __future__ import annotations

import multiprocessing as mp
import time
from concurrent.futures import ProcessPoolExecutor
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from .. import progress as progress_bars
from ..ir import activations as act
from ..ir.network import Network
from .domain import Domain, network_rows
from .linear_bounds import LinearBounder, activation_lines
from .milp import TOLERANCE, _into
from .milp_model import Affine, Model, weighted_sum
from .value_sets import form_values

__all__ = ["step_shadow", "prove_shadow", "ShadowProof", "SMOOTH"]

SMOOTH = ("sigmoid", "tanh")
#: Margin the bounds of HiGHS are moved outward by (relative and absolute).
_MARGIN = 1e-7
#: Seconds for one unit's side (a unit not proven in it is left unproven).
_UNIT_SECONDS = 10.0
#: HiGHS stops a unit's MILP once its bound is this close to the best point (only the
#: bound's side of ±τ matters).
_REL_GAP = 0.5
#: Rounds of cutting earlier pieces for one side of a unit.
_REFINE_ROUNDS = 3
#: A side bound at least this far from 0 is kept without refining.
_STRONG = 3.0
#: … or when a valid input's z is this close (relatively) to it.
_CLOSE = 0.25
#: Worker processes for the units of one layer (the target machine has two cores).
_WORKERS = 2


def step_shadow(net: Network) -> Network:
    """``net`` with every activation replaced by the step function (same weights).

    >>> from thresholdc.compiler import compile_rules
    >>> net = compile_rules("input a, b\\ny = a and b\\n", activation="sigmoid")
    >>> [n.activation for n in step_shadow(net).neurons]
    ['step']
    """
    return replace(net, neurons=tuple(replace(n, activation="step") for n in net.neurons))


@dataclass
class ShadowProof:
    """What :func:`prove_shadow` found: the neurons (indices) proven to agree in sign with
    their shadow, each one's ``(g⁻, g⁺)`` bounds, the MILP solves and seconds spent."""

    proven: set[int] = field(default_factory=set)
    gaps: dict[int, tuple[float | None, float | None]] = field(default_factory=dict)
    solves: int = 0
    seconds: float = 0.0
    stopped: str = ""

    def covers(self, net: Network, output: int) -> bool:
        """True when every neuron output ``output`` depends on is proven."""
        pos = {n.name: j for j, n in enumerate(net.neurons)}
        todo = [net.outputs[output].source]
        seen: set[int] = set()
        while todo:
            u = todo.pop()
            j = pos.get(u)
            if j is None or j in seen:
                continue
            if j not in self.proven:
                return False
            seen.add(j)
            todo.extend(net.neurons[j].inputs)
        return True


def prove_shadow(net: Network, source: Any, domain: Domain, *, time_limit: float,
                 progress: bool | None = None) -> ShadowProof:
    """Prove, unit by unit, that every ``z`` of the smooth network ``net`` has its step
    shadow's sign on ``domain`` (see the module docstring).

    Parameters
    ----------
    net : Network
        Every neuron sigmoid or tanh.
    source : RuleSource
        The rule file (only its domain matters here).
    domain : Domain
        The valid inputs (:func:`~thresholdc.verification.typed.typed_domain`).
    time_limit : float
        Seconds for all the solves; units left when it runs out are not proven.
    progress : bool or None
        A progress bar on a terminal.

    Returns
    -------
    ShadowProof
        The proven units and their bounds.

    Examples
    --------
    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> from thresholdc.verification.typed import typed_domain
    >>> text = "input c: {red, green, blue}, a\\ny = c == red and a\\n"
    >>> net = compile_rules(text, activation="sigmoid")
    >>> src = source_from_text(text)
    >>> len(prove_shadow(net, src, typed_domain(net, src), time_limit=5).proven)
    1
    """
    t0 = time.perf_counter()
    proof = ShadowProof()
    if not net.neurons or any(n.activation not in SMOOTH for n in net.neurons):
        proof.stopped = "not every neuron is sigmoid or tanh"
        return proof
    st = _State(net, domain)
    bar = progress_bars.bar(len(net.neurons), "shadow", unit="unit", show=progress)
    try:
        failed: set[int] = set()
        for layer in st.lb.layers:
            if time.perf_counter() - t0 >= time_limit:
                proof.stopped = f"time limit {time_limit:g} s reached"
                break
            _prove_layer(st, layer.tolist(), t0 + time_limit, proof, bar)
            failed |= {j for j in layer.tolist() if not st.units[j].proven}
            if failed and all(_reads_any(net, k, failed) for k in range(len(net.outputs))):
                proof.stopped = "every output reads a unit not proven"
                break
    finally:
        bar.close()
    proof.proven = {j for j, u in enumerate(st.units) if u.proven}
    proof.gaps = {j: (u.sides.get(0), u.sides.get(1)) for j, u in enumerate(st.units)
                  if u.proven}
    proof.seconds = time.perf_counter() - t0
    return proof


_WORKER_STATE: Any = None


def _reads_any(net: Network, output: int, units: set[int]) -> bool:
    """True when output ``output`` depends on one of the neurons ``units``."""
    pos = {n.name: j for j, n in enumerate(net.neurons)}
    todo, seen = [net.outputs[output].source], set()
    while todo:
        j = pos.get(todo.pop())
        if j is None or j in seen:
            continue
        if j in units:
            return True
        seen.add(j)
        todo.extend(net.neurons[j].inputs)
    return False


def _prove_in_worker(j: int, t_end: float) -> tuple[int, Any, dict[int, dict[int, list[float]]],
                                                   int]:
    """One unit's proof in a forked worker: its state, the cuts it added to earlier units,
    its solves."""
    st = _WORKER_STATE
    before = {i: {v: list(c) for v, c in st.units[i].cuts.items()} for i in range(j)}
    proof = ShadowProof()
    st.prove(j, t_end, proof)
    added = {i: {v: c[len(before[i][v]):] for v, c in st.units[i].cuts.items()}
             for i in range(j)}
    return j, st.units[j], {i: a for i, a in added.items() if any(a.values())}, proof.solves


def _prove_layer(st: _State, layer: list[int], t_end: float, proof: ShadowProof,
                 bar: Any) -> None:
    """Prove the units of one layer (independent of each other given the layers before):
    in two forked worker processes when the layer is large and ``fork`` is available, else
    one after the other.  Cuts found by the workers are merged (a cut only refines)."""
    global _WORKER_STATE
    heavy = [j for j in layer if st.lb.W_n[j].any()]
    st.cache = (max(heavy), *st.build(max(heavy))) if heavy else None
    if len(heavy) < 4 or "fork" not in mp.get_all_start_methods() or _WORKERS < 2:
        for j in layer:
            st.prove(j, t_end, proof)
            bar.update(1)
        st.cache = None
        return
    for j in layer:
        if j not in heavy:
            st.prove(j, t_end, proof)
            bar.update(1)
    _WORKER_STATE = st
    try:
        with ProcessPoolExecutor(max_workers=_WORKERS, mp_context=mp.get_context("fork")) as ex:
            for j, unit, cuts, solves in ex.map(_prove_in_worker, heavy,
                                                [t_end] * len(heavy)):
                st.units[j] = unit
                proof.solves += solves
                for i, by_side in cuts.items():
                    for v, c in by_side.items():
                        st.units[i].cuts[v].extend(c)
                bar.update(1)
    finally:
        _WORKER_STATE = None
        st.cache = None


@dataclass
class _Unit:
    """A unit's state: proven, its side bounds (``0``: g⁻, ``1``: g⁺, None: side never
    happens) and the pieces each side's interval is cut into."""

    proven: bool = False
    sides: dict[int, float | None] = field(default_factory=dict)
    cuts: dict[int, list[float]] = field(default_factory=lambda: {0: [], 1: []})


class _State:
    """The shadow proof's model, rebuilt from the units' states (see the module docstring)."""

    def __init__(self, net: Network, domain: Domain) -> None:
        self.net, self.domain, self.tau = net, domain, TOLERANCE
        self.bipolar = net.encoding == "bipolar"
        self.low = -1.0 if self.bipolar else 0.0
        self.lb = LinearBounder(net, domain)
        lbs = LinearBounder(step_shadow(net), domain)
        self.cont = np.array([[min(p[0] for p in f.pieces), max(p[1] for p in f.pieces)]
                              for f in domain.continuous]).reshape(-1, 2)
        M = np.ones((1, self.lb.n_choices), dtype=bool)
        lo, hi = self.cont[None, :, 0], self.cont[None, :, 1]
        root = self.lb.run(M, lo, hi)
        root_s = lbs.run(M, lo, hi)
        self.zlo, self.zhi = root.zlo[0], root.zhi[0]
        self.slo, self.shi = root_s.zlo[0], root_s.zhi[0]
        self.sizes = [f.size for f in domain.discrete]
        self.col = {u: i for i, u in enumerate(net.inputs)}
        self.pos = {n.name: j for j, n in enumerate(net.neurons)}
        self.units = [_Unit() for _ in net.neurons]
        #: ``(upto, model, info)`` of the current layer, built once for all its units.
        self.cache: tuple[int, Model, dict[str, Any]] | None = None

    def build(self, upto: int) -> tuple[Model, dict[str, Any]]:
        """The model of units ``0 … upto`` (the last one without its tie rows)."""
        m, colvar = _domain_model(self.domain, self.lb)

        def form(F: np.ndarray) -> Affine:
            return ({colvar[q]: float(F[q]) for q in np.nonzero(F[:-1])[0].tolist()},
                    float(F[-1]))

        units = [form(self.lb.unit_forms[i]) for i in range(len(self.net.inputs))]
        soft: list[Affine] = []
        step: list[Affine] = []
        zv, yv = [], []
        for j, n in enumerate(self.net.neurons[:upto + 1]):
            L, U = float(self.zlo[j]), float(self.zhi[j])
            z = _linear(m, n, units, self.col, self.pos, soft, L, U)
            zs = _linear(m, n, units, self.col, self.pos, step, float(self.slo[j]),
                         float(self.shi[j]))
            y, ya = _step(m, zs, float(self.slo[j]), float(self.shi[j]), self.tau,
                          self.bipolar)
            step.append(ya)
            f = act.get(n.activation).forward
            a = m.var(float(f(np.array(L))) - 1e-9, float(f(np.array(U))) + 1e-9)
            u = self.units[j]
            if u.proven and j < upto:
                _tie(m, a, z, y, ya[1] > self.low, n.activation, self._pieces(j))
            soft.append(({a: 1.0}, 0.0))
            zv.append(z)
            yv.append((y, ya))
        return m, {"z": zv, "y": yv, "a": [next(iter(s[0])) for s in soft], "colvar": colvar}

    def _pieces(self, j: int) -> dict[int, list[tuple[float, float]]]:
        """Each side's pieces of proven unit ``j`` (a side that never happens has none)."""
        u = self.units[j]
        L, U = float(self.zlo[j]), float(self.zhi[j])
        out: dict[int, list[tuple[float, float]]] = {}
        for v, g in u.sides.items():
            if g is None:
                continue
            lo, hi = (g, U) if v else (L, g)
            pts = sorted({lo, hi} | {c for c in u.cuts[v] if lo < c < hi})
            out[v] = list(zip(pts[:-1], pts[1:])) if len(pts) > 1 else [(lo, hi)]
        return out

    def prove(self, j: int, t_end: float, proof: ShadowProof) -> None:
        """Try to prove unit ``j`` (its sides, refining earlier pieces where the optimum
        found is spurious)."""
        u = self.units[j]
        lb, tau = self.lb, self.tau
        if not lb.W_n[j].any():  # reads input units only: z is z_s, a form of the inputs
            vlo, vhi = form_values(lb.direct[j], lb.offsets, self.sizes, self.cont)
            if ((vlo <= tau) & (vhi >= -tau)).any():
                return
            above, below = vlo[vlo > tau], vhi[vhi < -tau]
            u.sides = {1: float(above.min()) if above.size else None,
                       0: float(below.max()) if below.size else None}
            u.proven = True
            return
        if self.cache is not None and self.cache[0] >= j:
            m, info = self.cache[1], self.cache[2]  # the layer's model (mark/undo keep it)
        else:
            m, info = self.build(j)
        y, ya = info["y"][j]
        values = (1, 0) if y is not None else ((1,) if ya[1] > self.low else (0,))
        for value in values:
            best: float | None | bool = False  # the strongest sound bound so far
            for _ in range(_REFINE_ROUNDS + 1):
                left = min(t_end - time.perf_counter(), _UNIT_SECONDS)
                if left <= 0:
                    break
                y = info["y"][j][0]  # variable numbers change as pieces are cut
                g, x = _side(m, info["z"][j], y, value, left, proof)
                if g is None:  # that side never happens
                    best = None
                    break
                if g is not False and (best is False or abs(g) > abs(best)):  # type: ignore
                    best = g
                if best is not False and abs(best) >= _STRONG:  # type: ignore[arg-type]
                    break
                if best is not False and x is not None and best is not None and \
                        abs(self._true_z(j, x, info) - best) <= _CLOSE * max(abs(best), 1.0):
                    break  # a valid input comes close to the bound: cutting cannot help much
                if x is None or not self._refine(j, x, info):
                    break  # the point found is the network's: no better bound here
                m, info = self.build(j)
            if best is False:
                return
            u.sides[value] = best
        u.proven = len(u.sides) == len(values)

    def _true_z(self, j: int, x: np.ndarray, info: dict[str, Any]) -> float:
        """Unit ``j``'s true ``z`` at the valid input whose choices the model point ``x``
        has (its reals moved into their pieces)."""
        d = self.domain
        colvar = info["colvar"]
        choice = np.array([[int(np.argmax([x[colvar[int(self.lb.offsets[k]) + c]]
                                           for c in range(f.size)]))
                            for k, f in enumerate(d.discrete)]], dtype=np.int64)
        reals = np.array([[_into(float(x[colvar[self.lb.n_choices + k]]), f.pieces)
                           for k, f in enumerate(d.continuous)]])
        X = d.unit_rows(choice, reals if d.continuous else None)
        row = network_rows(self.net, d, X)[0].astype(float)
        values = dict(zip(self.net.inputs, row.tolist()))
        z = 0.0
        for n in self.net.neurons[:j + 1]:
            z = float(n.bias) + sum(float(w) * values[i] for i, w in zip(n.inputs, n.weights))
            values[n.name] = float(act.get(n.activation).forward(np.array(z)))
        return z

    def _refine(self, j: int, x: np.ndarray, info: dict[str, Any]) -> bool:
        """Cut the side pieces of earlier units where ``x`` (a point of the model at which
        unit ``j``'s bound is reached) is not the network's true behaviour; True when
        anything was cut."""
        added = False
        for i in range(j):
            u = self.units[i]
            if not u.proven:
                continue
            zi = float(x[info["z"][i]])
            ai = float(x[info["a"][i]])
            f = act.get(self.net.neurons[i].activation).forward
            if abs(ai - float(f(np.array(zi)))) <= 1e-3:
                continue
            for v, pieces in self._pieces(i).items():
                if any(lo + 1e-6 < zi < hi - 1e-6 for lo, hi in pieces):
                    u.cuts[v].append(zi)
                    added = True
        return added


def _domain_model(domain: Domain, lb: LinearBounder) -> tuple[Model, list[int]]:
    """A model with the domain's variables, and the choice-space column of each."""
    m = Model()
    choices = m.choice_vars(domain)
    colvar = [-1] * lb.P
    for k, vs in enumerate(choices):
        off = int(lb.offsets[k])
        for c, v in enumerate(vs):
            colvar[off + c] = v
    for k, f in enumerate(domain.continuous):
        x = m.var(min(p[0] for p in f.pieces), max(p[1] for p in f.pieces))
        colvar[lb.n_choices + k] = x
        if len(f.pieces) > 1:
            sel = [m.binary() for _ in f.pieces]
            m.row({q: 1.0 for q in sel}, 0.0, 1.0, 1.0)
            m.row({x: 1.0, **{q: -p[0] for q, p in zip(sel, f.pieces)}}, 0.0, 0.0, np.inf)
            m.row({x: 1.0, **{q: -p[1] for q, p in zip(sel, f.pieces)}}, 0.0, -np.inf, 0.0)
    return m, colvar


def _linear(m: Model, n: Any, units: list[Affine], col: dict[str, int], pos: dict[str, int],
            acts: list[Affine], L: float, U: float) -> int:
    """A variable ``z`` in ``[L, U]`` equal to neuron ``n``'s pre-activation over ``acts``."""
    coefs, bias = weighted_sum(n, lambda i: units[col[i]] if i in col else acts[pos[i]])
    z = m.var(L, U)
    coefs[z] = coefs.get(z, 0.0) - 1.0
    m.row(coefs, bias, 0.0, 0.0)
    return z


def _step(m: Model, zs: int, L: float, U: float, tau: float,
          bipolar: bool) -> tuple[int | None, Affine]:
    """The shadow's step on ``zs``: its binary (None when constant) and its value."""
    low = -1.0 if bipolar else 0.0
    if L > tau:
        return None, ({}, 1.0)
    if U < -tau:
        return None, ({}, low)
    y = m.binary()  # y = 0 ⇒ z ≤ τ, y = 1 ⇒ z ≥ −τ
    m.row({zs: 1.0, y: -(max(U, 0.0) - tau)}, 0.0, -np.inf, tau)
    m.row({zs: 1.0, y: -(-tau - min(L, 0.0))}, 0.0, min(L, 0.0), np.inf)
    return y, (({y: 2.0}, -1.0) if bipolar else ({y: 1.0}, 0.0))


def _side(m: Model, z: int, y: int | None, value: int, seconds: float,
          proof: ShadowProof) -> tuple[float | None | bool, np.ndarray | None]:
    """A bound of ``z`` where the shadow's step is ``value``: least ``z`` for 1, greatest for
    0 (moved outward); None when that side never happens, False when not bounded beyond τ;
    with the best point found (None if none).  The MILP stops at a loose relative gap
    first (only the bound's side of ±τ matters), then, if that bound is not beyond τ, runs
    to the default gap."""
    sign = 1.0 if value else -1.0  # minimise z where y = 1, maximise where y = 0
    mark = m.mark()
    if y is not None:
        m.row({y: 1.0}, 0.0, value, value)
    x = None
    try:
        t_end = time.perf_counter() + seconds
        for relaxed, gap in ((False, _REL_GAP), (False, None)):
            left = t_end - time.perf_counter()
            if left <= 0:
                break
            sol = m.solve(time_limit=left, objective={z: sign}, relaxed=relaxed, rel_gap=gap)
            proof.solves += 1
            if sol.status == "infeasible":
                return None, None
            if not relaxed and sol.x is not None:
                x = sol.x
            if sol.dual_bound is None or not np.isfinite(sol.dual_bound):
                continue
            g = sign * sol.dual_bound
            g -= sign * (_MARGIN + _MARGIN * abs(g))
            if (g > TOLERANCE) if value else (g < -TOLERANCE):
                return g, x
        return False, x
    finally:
        m.undo(mark)


def _tie(m: Model, a: int, z: int, y: int | None, on: bool, name: str,
         pieces: dict[int, list[tuple[float, float]]]) -> None:
    """Rows of a proven unit: its ``z`` in the pieces of the side its shadow's ``y`` says
    (``1``: ``z ≥ g⁺``, ``0``: ``z ≤ g⁻``) and its value ``a`` between the activation's
    lines (:func:`~thresholdc.verification.linear_bounds.activation_lines`) on the piece
    ``z`` is in.  ``y`` (or ``1 − y``) selects the side, so a side of one piece adds no
    binary; a side cut into pieces adds one per piece, summing to the side's selector."""
    lower: dict[int, float] = {a: 1.0}
    upper: dict[int, float] = {a: 1.0}
    const_lo = const_hi = 0.0
    parts = []
    for v, ps in pieces.items():
        if y is None:
            sel: Affine = ({}, 1.0)
        else:
            sel = ({y: 1.0}, 0.0) if v else ({y: -1.0}, 1.0)
        if len(ps) == 1:
            ds = [sel]
        else:
            bins = [m.binary() for _ in ps]
            m.row({**{q: 1.0 for q in bins}, **{k: -c for k, c in sel[0].items()}},
                  0.0, sel[1], sel[1])
            ds = [({q: 1.0}, 0.0) for q in bins]
        los = np.array([p[0] for p in ps])
        his = np.array([p[1] for p in ps])
        kls, bls, kus, bus = activation_lines(name, los, his)
        for k, (d, lo, hi) in enumerate(zip(ds, los.tolist(), his.tolist())):
            zp = m.var(min(lo, 0.0), max(hi, 0.0))
            parts.append(zp)
            # lo·d ≤ zp ≤ hi·d
            m.row({zp: 1.0, **{q: -lo * c for q, c in d[0].items()}}, -lo * d[1], 0.0, np.inf)
            m.row({zp: 1.0, **{q: -hi * c for q, c in d[0].items()}}, -hi * d[1], -np.inf, 0.0)
            lower[zp] = -float(kls[k])
            upper[zp] = -float(kus[k])
            for q, c in d[0].items():
                lower[q] = lower.get(q, 0.0) - float(bls[k]) * c
                upper[q] = upper.get(q, 0.0) - float(bus[k]) * c
            const_lo -= float(bls[k]) * d[1]
            const_hi -= float(bus[k]) * d[1]
    m.row({z: 1.0, **{q: -1.0 for q in parts}}, 0.0, 0.0, 0.0)
    m.row(lower, const_lo, 0.0, np.inf)  # a ≥ Σ (k·zp + b·d)
    m.row(upper, const_hi, -np.inf, 0.0)  # a ≤ Σ (k·zp + b·d)

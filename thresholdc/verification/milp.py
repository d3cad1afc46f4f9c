"""Per-output verification by mixed-integer programming (HiGHS through scipy.optimize.milp).

For each output and each way it can be wrong (the rules say 1 and the network decides 0, or
the reverse) one MILP asks for a valid input where that happens.  The model holds

* the domain: one binary per choice of every discrete input with exactly one per input
  (a Boolean input, a categorical input's one-hot group, a real input's cell points), and a
  continuous variable per continuous real input over its pieces;
* the rules, exactly (:func:`thresholdc.verification.milp_model.encode_rules`);
* the network, neuron by neuron, with ``z`` bounded by
  :class:`~thresholdc.verification.linear_bounds.LinearBounder` over the whole domain
  (those bounds are the big-M constants):

  - *step*: a binary ``y`` with ``y = 0 ⇒ z ≤ τ`` and ``y = 1 ⇒ z ≥ −τ``, ``τ = 1e-6``.  A
    step neuron is 1 exactly when ``z > 0``; the model admits both values for ``|z| ≤ τ``, so
    it contains every true behaviour of the network (it is a relaxation) and an infeasible
    model proves the output right;
  - *ReLU*: the exact big-M form (``a ≥ z``, ``a ≥ 0``, ``a ≤ z − L(1 − δ)``, ``a ≤ Uδ``);
    linear units are their ``z``;
  - *sigmoid/tanh*: a sound piecewise-linear envelope: ``z``'s range is cut at breakpoints,
    one binary picks the piece, and on it ``a`` lies between the two lines of
    :func:`~thresholdc.verification.linear_bounds.activation_lines` (so the model is again a
    relaxation); pieces are refined where a solution turns out spurious.

Every solution is re-checked on the real network (:meth:`Network.decide`) and the rules'
reference evaluator; only a point where they really differ is reported.  A spurious point of
a purely discrete domain is cut off (a no-good row on its choices: that point is known to be
right) and the model is solved again; on a domain with continuous inputs a spurious point
leaves the output undecided.  So ``equal`` always rests on an infeasible relaxation, and
``different`` on a re-checked point.

Real inputs: a rule test ``x > c`` keeps its strictness at re-checking; a step network is
checked over the declared range (exact on every float: both rules and network are re-evaluated
at the point found), a soft one over the range less the bands of
:func:`thresholdc.verification.typed.typed_domain`.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> text = "input c: {red, green, blue}, a\\ny = c == red and a\\n"
>>> r = verify_milp(compile_rules(text), source_from_text(text))
>>> r.result, r.outputs[0].verdict
('equal', 'equal')
"""

from __future__ import annotations

import time
from typing import Any

import numpy as np

from .. import progress as progress_bars
from ..errors import VerificationUndecided
from ..ir import activations as act
from ..ir.network import Network
from .domain import (
    Domain,
    boolean_or_typed_domain,
    check_names,
    is_typed_source,
    network_rows,
    typed_domain,
)
from .linear_bounds import LinearBounder, activation_lines
from .milp_model import Affine, Model, encode_rules, weighted_sum
from .report import MAX_COUNTEREXAMPLES, Counterexample, OutputReport, Report
from .value_sets import network_value_sets

__all__ = ["verify_milp", "run_milp", "milp_domain", "TOLERANCE", "DEFAULT_TIME_LIMIT"]

#: Both values of a step neuron are allowed for |z| ≤ TOLERANCE (then re-checked exactly).
TOLERANCE = 1e-6
#: The strict re-solve maximises one margin s over every strict side (a step neuron is 1 only
#: with z ≥ s, a real test's excluded side s away); s ≤ MARGIN proven means no counterexample.
MARGIN = 1e-9
DEFAULT_TIME_LIMIT = 60.0
_SMOOTH = ("sigmoid", "tanh")
_MAX_ROUNDS = 200
_START_BREAKS: tuple[float, ...] = (-3.0, 0.0, 3.0)
_BRIDGE_SECONDS = 10.0
#: Pieces a value set leaves on each side of z = 0 (its largest gaps kept).
_PIECES_PER_SIDE = 2


def milp_domain(net: Network, source: Any) -> Domain:
    """The MILP's domain: :func:`~thresholdc.verification.typed.typed_domain`, except that a step
    network whose real tests are not cell-exact ranges over each real input's whole declared
    range (no bands: a step network is exact up to the threshold)."""
    domain = typed_domain(net, source)
    if not domain.continuous or not all(n.activation == "step" for n in net.neurons):
        return domain
    if not is_typed_source(source):
        return domain
    pieces = {}
    for v in source.program.inputs:
        if v.kind == "real":
            assert v.range is not None  # typed_domain raised otherwise
            pieces[v.name] = [(float(v.range[0]), float(v.range[1]))]
    d = boolean_or_typed_domain(source, real_pieces=pieces)
    d.notes.append("step network: real inputs checked over their whole declared ranges")
    return d


class _Builder:
    """The network and rules model of one domain (see the module docstring)."""

    def __init__(self, net: Network, source: Any, domain: Domain) -> None:
        self.net, self.source, self.domain = net, source, domain
        self.lb = LinearBounder(net, domain)
        root = self.lb.run(np.ones((1, self.lb.n_choices), dtype=bool),
                           np.array([[min(p[0] for p in f.pieces) for f in domain.continuous]]),
                           np.array([[max(p[1] for p in f.pieces) for f in domain.continuous]]))
        self.zlo, self.zhi = root.zlo[0], root.zhi[0]
        self.strict = False
        self.bridge_share = _BRIDGE_SECONDS
        self.bridges: list | None = None
        #: Each smooth neuron's pieces: disjoint sorted intervals whose union holds every value
        #: its ``z`` takes on the domain (a gap around 0 left out by :meth:`gaps`).
        self.pieces: dict[int, list[tuple[float, float]]] = {}
        for j, n in enumerate(net.neurons):
            if n.activation in _SMOOTH:
                lo, hi = float(self.zlo[j]), float(self.zhi[j])
                pts = sorted({lo, hi} | {b for b in _START_BREAKS if lo < b < hi})
                self.pieces[j] = list(zip(pts[:-1], pts[1:])) if len(pts) > 1 else [(lo, hi)]

    def build(self) -> tuple[Model, dict[str, Any]]:
        m = Model()
        d = self.domain
        choices = m.choice_vars(d)
        self.svar = m.var(0.0, 1.0) if self.strict else None
        reals: dict[str, tuple[int, float, float]] = {}
        cont_vars = []
        for f in d.continuous:
            lo, hi = min(p[0] for p in f.pieces), max(p[1] for p in f.pieces)
            x = m.var(lo, hi)
            cont_vars.append(x)
            reals[f.name] = (x, lo, hi)
            if len(f.pieces) > 1:
                sel = [m.binary() for _ in f.pieces]
                m.row({s: 1.0 for s in sel}, 0.0, 1.0, 1.0)
                m.row({x: 1.0, **{s: -p[0] for s, p in zip(sel, f.pieces)}}, 0.0, 0.0, np.inf)
                m.row({x: 1.0, **{s: -p[1] for s, p in zip(sel, f.pieces)}}, 0.0, -np.inf, 0.0)
        rules: dict[str, Affine] = {}
        if getattr(self.source, "program", None) is not None:
            rules = encode_rules(m, self.source.program, d, choices, reals, self.svar)
        else:  # a netlist: its gate graph as rules is left to the SAT methods
            raise VerificationUndecided("the MILP method needs a rule file, not a netlist",
                                        file=getattr(self.source, "file", None))
        # choice space -> variables
        colvar: list[int] = [-1] * self.lb.P
        for k, vs in enumerate(choices):
            off = int(self.lb.offsets[k])
            for c, v in enumerate(vs):
                colvar[off + c] = v
        for k, x in enumerate(cont_vars):
            colvar[self.lb.n_choices + k] = x

        def form(F: np.ndarray) -> Affine:
            coefs = {colvar[p]: float(F[p]) for p in np.nonzero(F[:-1])[0].tolist()}
            return coefs, float(F[-1])

        units = [form(self.lb.unit_forms[i]) for i in range(len(self.net.inputs))]
        col = {u: i for i, u in enumerate(self.net.inputs)}
        pos = {n.name: j for j, n in enumerate(self.net.neurons)}
        acts: list[Affine] = []
        zvars: list[int] = []
        bipolar = self.net.encoding == "bipolar"
        for j, n in enumerate(self.net.neurons):
            coefs, bias = weighted_sum(
                n, lambda i: units[col[i]] if i in col else acts[pos[i]])  # noqa: B023
            L, U = float(self.zlo[j]), float(self.zhi[j])
            if j in self.pieces:  # the pieces' hull (gaps may have moved the ends in)
                L, U = self.pieces[j][0][0], self.pieces[j][-1][1]
            z = m.var(L, U)
            coefs[z] = coefs.get(z, 0.0) - 1.0
            m.row(coefs, bias, 0.0, 0.0)
            zvars.append(z)
            acts.append(self._activation(m, n.activation, z, L, U, j, bipolar))
        info = {"choices": choices, "cont": cont_vars, "rules": rules, "acts": acts,
                "zvars": zvars, "units": units, "pos": pos, "col": col}
        if self.bridges is None and all(n.activation == "step" for n in self.net.neurons):
            self.bridges = []  # exact binaries already: the rows would cost more than save
        if self.bridges is None:
            self.bridges = self._bridges(m, info)  # adds its rows to m as it goes
        else:
            self._bridge_rows(m, info, self.bridges)
        return m, info

    def _bridges(self, m: Model, info: dict[str, Any]) -> list:
        """Bounds tying each unit that carries a definition (its origin) to the definition's
        rule value: ``r = 1 ⇒ z ≥ l₁`` and ``r = 0 ⇒ z ≤ u₀``, with ``l₁``/``u₀`` the optimum
        of the linear relaxation of the whole model with ``r`` fixed (a sound bound, as the
        relaxation contains every point).  Computed once, in topological order, each row
        helping the next; kept as ``(neuron, definition, l₁, u₀)`` and written into every
        later model by :meth:`_bridge_rows` (variable numbers change as pieces are added)."""
        out: list = []
        rules = info["rules"]
        budget = time.perf_counter() + min(_BRIDGE_SECONDS, self.bridge_share)
        for j, n in enumerate(self.net.neurons):
            r = rules.get(n.origin) if n.origin is not None else None
            if r is None or not r[0] or time.perf_counter() > budget:
                continue
            z = info["zvars"][j]
            found: list[float | None] = []
            for value, sign in ((1, 1.0), (0, -1.0)):
                mark = m.mark()
                m.row(r[0], r[1], value, value)
                sol = m.solve(time_limit=min(2.0, budget - time.perf_counter()),
                              objective={z: sign}, relaxed=True)
                m.undo(mark)
                if sol.status != "feasible" or sol.dual_bound is None:  # optimum only
                    found.append(None)
                    continue
                best = sign * sol.dual_bound
                found.append(best - 1e-7 * (1 + abs(best)) if value else
                             best + 1e-7 * (1 + abs(best)))
            entry = (j, n.origin, found[0], found[1])
            out.append(entry)
            self._bridge_rows(m, info, [entry])
        return out

    def _bridge_rows(self, m: Model, info: dict[str, Any], entries: list) -> None:
        for j, name, l1, u0 in entries:
            r = info["rules"][name]
            z = info["zvars"][j]
            L, U = float(self.zlo[j]), float(self.zhi[j])
            if l1 is not None and l1 > L:  # z ≥ L + (l1 − L)·r
                m.row({z: 1.0, **{v: -(l1 - L) * c for v, c in r[0].items()}},
                      -(l1 - L) * r[1], L, np.inf)
            if u0 is not None and u0 < U:  # z ≤ u0 + (U − u0)·r
                m.row({z: 1.0, **{v: -(U - u0) * c for v, c in r[0].items()}},
                      -(U - u0) * r[1], -np.inf, u0)

    def _activation(self, m: Model, name: str, z: int, L: float, U: float, j: int,
                    bipolar: bool) -> Affine:
        zv = ({z: 1.0}, 0.0)
        if name == "linear":
            return zv
        if name == "step":
            low = -1.0 if bipolar else 0.0
            if L > 0:
                return {}, 1.0
            if U <= 0:
                return {}, low
            y = m.binary()
            if self.svar is None:  # y = 0 ⇒ z ≤ τ, y = 1 ⇒ z ≥ −τ
                m.row({z: 1.0, y: -(U - TOLERANCE)}, 0.0, -np.inf, TOLERANCE)
                m.row({z: 1.0, y: -(-TOLERANCE - L)}, 0.0, L, np.inf)
            else:  # y = 0 ⇒ z ≤ 0, y = 1 ⇒ z ≥ s
                m.row({z: 1.0, y: -U}, 0.0, -np.inf, 0.0)
                m.row({z: 1.0, y: L - 1.0, self.svar: -1.0}, 0.0, L - 1.0, np.inf)
            return ({y: 2.0}, -1.0) if bipolar else ({y: 1.0}, 0.0)
        if name == "relu":
            if U <= 0:
                return {}, 0.0
            if L >= 0:
                return zv
            a = m.var(0.0, U)
            dlt = m.binary()
            m.row({a: 1.0, z: -1.0}, 0.0, 0.0, np.inf)
            m.row({a: 1.0, z: -1.0, dlt: -L}, 0.0, -np.inf, -L)
            m.row({a: 1.0, dlt: -U}, 0.0, -np.inf, 0.0)
            return {a: 1.0}, 0.0
        assert name in _SMOOTH, name
        pieces = self.pieces[j]
        f = act.get(name).forward
        a = m.var(float(f(np.array(L))) - 1e-9, float(f(np.array(U))) + 1e-9)
        if len(pieces) == 1:
            kl, bl, ku, bu = (float(v[0]) for v in activation_lines(name, np.array([L]),
                                                                    np.array([U])))
            m.row({a: 1.0, z: -kl}, 0.0, bl, np.inf)
            m.row({a: 1.0, z: -ku}, 0.0, -np.inf, bu)
            return {a: 1.0}, 0.0
        los = np.array([p[0] for p in pieces])
        his = np.array([p[1] for p in pieces])
        kls, bls, kus, bus = activation_lines(name, los, his)
        sel: list[int] = []
        parts: list[int] = []
        for s in range(len(los)):
            d_s = m.binary()
            z_s = m.var(min(float(los[s]), 0.0), max(float(his[s]), 0.0))
            m.row({z_s: 1.0, d_s: -float(los[s])}, 0.0, 0.0, np.inf)
            m.row({z_s: 1.0, d_s: -float(his[s])}, 0.0, -np.inf, 0.0)
            sel.append(d_s)
            parts.append(z_s)
        m.row({d: 1.0 for d in sel}, 0.0, 1.0, 1.0)
        m.row({z: 1.0, **{p: -1.0 for p in parts}}, 0.0, 0.0, 0.0)
        lower = {a: 1.0}
        upper = {a: 1.0}
        for s in range(len(los)):
            lower[parts[s]] = -float(kls[s])
            lower[sel[s]] = -float(bls[s])
            upper[parts[s]] = -float(kus[s])
            upper[sel[s]] = -float(bus[s])
        m.row(lower, 0.0, 0.0, np.inf)
        m.row(upper, 0.0, -np.inf, 0.0)
        return {a: 1.0}, 0.0

    def refine(self, x: np.ndarray, info: dict[str, Any]) -> bool:
        """Add a breakpoint at the solution's ``z`` of every smooth neuron whose envelope
        value there is far from the activation; True when anything was added."""
        added = False
        for j, n in enumerate(self.net.neurons):
            if n.activation not in _SMOOTH:
                continue
            zv = float(x[info["zvars"][j]])
            av = info["acts"][j]
            aval = sum(c * x[v] for v, c in av[0].items()) + av[1]
            true = float(act.get(n.activation).forward(np.array(zv)))
            if abs(aval - true) <= 1e-4:
                continue
            pieces = self.pieces[j]
            for i, (lo, hi) in enumerate(pieces):
                if lo + 1e-6 < zv < hi - 1e-6:  # split the piece at zv
                    pieces[i:i + 1] = [(lo, zv), (zv, hi)]
                    added = True
                    break
        return added

    def gaps(self) -> int:
        """Cut each smooth neuron's pieces to the values its ``z`` can take on the domain
        (:func:`~thresholdc.verification.value_sets.network_value_sets`: sound unions of
        intervals, a few on each side of 0), keeping the start breaks inside wide pieces.
        Returns the number of neurons whose pieces leave out a gap around 0."""
        sets = network_value_sets(self.lb, per_side=_PIECES_PER_SIDE)
        cut = 0
        for j, pieces in sets.items():
            if j not in self.pieces:
                continue
            out: list[tuple[float, float]] = []
            for lo, hi in pieces:
                pts = sorted({lo, hi} | {b for b in _START_BREAKS if lo < b < hi and b != 0})
                out.extend(zip(pts[:-1], pts[1:]) if len(pts) > 1 else [(lo, hi)])
            self.pieces[j] = out
            if not any(lo < 0 < hi for lo, hi in out) and out[0][0] < 0 < out[-1][1]:
                cut += 1
        return cut


def _into(x: float, pieces: list[tuple[float, float]]) -> float:
    """``x`` moved into the nearest piece (solver tolerances leave it a hair outside)."""
    best = min(pieces, key=lambda p: 0.0 if p[0] <= x <= p[1] else min(abs(x - p[0]),
                                                                       abs(x - p[1])))
    return min(max(x, best[0]), best[1])


def _decision_rows(m: Model, net: Network, info: dict[str, Any], k: int, value: int,
                   svar: int | None) -> None:
    """Rows saying the network decides ``value`` on output ``k`` (relaxed by τ, or with the
    margin variable ``svar`` on the strict side)."""
    o = net.outputs[k]
    thr = net.decision_threshold
    tau = TOLERANCE
    if o.source in info["pos"]:
        j = info["pos"][o.source]
        n = net.neurons[j]
        if n.activation in _SMOOTH:  # monotone: the value is above thr exactly when z > 0
            a: Affine = ({info["zvars"][j]: 1.0}, 0.0)
            thr = 0.0
        else:
            a = info["acts"][j]
    else:
        a = info["units"][info["col"][o.source]]
    if svar is None:
        m.row(a[0], a[1], thr - tau if value else -np.inf, np.inf if value else thr + tau)
    elif value:
        m.row({**a[0], svar: -1.0}, a[1], thr, np.inf)
    else:
        m.row(a[0], a[1], -np.inf, thr)


def run_milp(
    net: Network, source: Any, domain: Domain, *, time_limit: float = DEFAULT_TIME_LIMIT,
    max_examples: int = MAX_COUNTEREXAMPLES, progress: bool | None = None,
    check: Network | None = None,
) -> Report:
    """The MILP check over an explicit domain (see :func:`verify_milp`); points found are
    re-checked on ``check`` (default ``net``: another network proven to decide as ``net``
    does on ``domain``, such as a soft network whose step shadow ``net`` is)."""
    t0 = time.perf_counter()
    real = net if check is None else check
    builder = _Builder(net, source, domain)
    builder.bridge_share = time_limit / 4  # the bridge LPs never take the whole budget
    if builder.pieces:
        builder.gaps()
    out_index = [list(source.outputs).index(o.name) for o in net.outputs]
    thr = net.decision_threshold
    discrete_only = not domain.continuous
    K = len(net.outputs)
    examples: list[list[Counterexample]] = [[] for _ in range(K)]
    verdict = ["undecided"] * K
    bound: list[str | None] = [None] * K
    solves = 0
    bar = progress_bars.bar(2 * K, "milp", unit="case", show=progress)
    try:
        for k, o in enumerate(net.outputs):
            rule_name = source.outputs[out_index[k]]
            proven = 0
            for want in (1, 0):  # rules say `want`, network decides the other
                if len(examples[k]) >= max_examples:
                    bar.update(1)
                    continue
                cuts: list[dict[int, float]] = []
                limits = None
                boundary = False
                builder.strict = False
                for _ in range(_MAX_ROUNDS):
                    left = time_limit - (time.perf_counter() - t0)
                    if left <= 0:
                        limits = f"time limit {time_limit:g} s reached"
                        break
                    m, info = builder.build()
                    r = info["rules"][rule_name]
                    m.row(r[0], r[1], want, want)
                    _decision_rows(m, net, info, k, 1 - want, builder.svar)
                    n_disc = len(info["choices"])
                    for cut in cuts:
                        m.row(cut, 0.0, -np.inf, n_disc - 1)
                    objective = None if builder.svar is None else {builder.svar: -1.0}
                    sol = m.solve(time_limit=left, objective=objective)
                    solves += 1
                    if sol.status == "infeasible":
                        break
                    if builder.svar is not None and (
                            sol.status == "feasible" and sol.dual_bound is not None
                            and -sol.dual_bound <= MARGIN):
                        break  # no point passes every strict side: none disagrees
                    if sol.status == "limit-feasible" and builder.svar is not None:
                        limits = "HiGHS stopped before the strict margin was settled"
                        break
                    if sol.status == "limit":
                        limits = f"HiGHS stopped without an answer ({sol.message})"
                        break
                    x = sol.x
                    assert x is not None
                    choice = np.array([[int(np.argmax([x[v] for v in vs]))
                                        for vs in info["choices"]]], dtype=np.int64)
                    reals = np.array([[_into(float(x[v]), f.pieces) for v, f in
                                       zip(info["cont"], domain.continuous)]])
                    X = domain.unit_rows(choice, reals if domain.continuous else None)
                    Xn = network_rows(real, domain, X)
                    actual = bool(real.decide(Xn)[0, k])
                    expected = bool(np.asarray(source.evaluate(X))[0, out_index[k]])
                    nogood = {vs[int(choice[0, i])]: 1.0 for i, vs in enumerate(info["choices"])}
                    if actual != expected:
                        value = float(real.evaluate(Xn)[0, k])
                        examples[k].append(Counterexample(
                            domain.assignment(choice[0], reals[0] if domain.continuous
                                              else None),
                            o.name, expected, value, abs(value - thr)))
                        if len(examples[k]) >= max_examples:
                            break
                        cuts.append(nogood)
                        continue
                    refined = builder.refine(x, info)
                    if discrete_only:
                        cuts.append(nogood)
                    elif not refined and not builder.strict:
                        builder.strict = True  # look again, away from the boundaries
                    elif not refined:
                        boundary = True
                        cuts.append(nogood)
                else:
                    limits = f"{_MAX_ROUNDS} rounds of spurious solutions"
                bar.update(1)
                if examples[k]:
                    continue
                if limits is not None:
                    why = f"rules = {want}: {limits}"
                elif boundary:
                    why = (f"rules = {want}: not decided within {MARGIN:g} of the "
                           "thresholds (points found there were rejected by re-checking)")
                else:
                    why = ""
                if why:  # both directions keep their bound (the first one no longer lost)
                    bound[k] = why if bound[k] is None else f"{bound[k]}; {why}"
                else:
                    proven += 1
            if examples[k]:
                verdict[k] = "different"
            elif proven == 2:
                verdict[k] = "equal"
    finally:
        bar.close()
    outputs = [OutputReport.proven(o.name) if verdict[k] == "equal" else
               OutputReport.differs(o.name, examples[k]) if verdict[k] == "different" else
               OutputReport.undecided(o.name, bound[k] or "not decided")
               for k, o in enumerate(net.outputs)]
    proven_names = [o.name for o in outputs if o.verdict == "equal"]
    report = Report.of(
        "milp", domain.size, outputs,
        proofs=[f"milp: no valid input where the network and the rules differ on "
                f"{', '.join(proven_names)} (HiGHS: infeasible, {solves} solves)"]
        if proven_names else [],
        notes=list(domain.notes), seconds=time.perf_counter() - t0)
    report.notes.append(
        f"step neurons relaxed by {TOLERANCE:g} around z = 0 and smooth ones by sound linear "
        "envelopes; every counterexample re-checked on the network and the reference "
        "evaluator; infeasibility is HiGHS's verdict in floating point")
    return report


def verify_milp(net: Network, source: Any, *, time_limit: float = DEFAULT_TIME_LIMIT,
                progress: bool | None = None) -> Report:
    """Decide, output by output, whether ``net`` computes ``source``'s rules by MILP.

    Parameters
    ----------
    net : Network
        Step, ReLU, linear, sigmoid or tanh neurons (any float weights).
    source : Source
        A rule file with the same input units and output names.
    time_limit : float
        Seconds for all solves together; an output not decided then is ``undecided``.
    progress : bool or None
        A progress bar on a terminal (None: as the command line set it).

    Returns
    -------
    Report
        Method ``milp``; per output ``equal`` (every MILP infeasible), ``different`` with up
        to five re-checked counterexamples (``disagreements`` None: not counted), or
        ``undecided`` with the ``bound`` reached.

    Examples
    --------
    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> net = compile_rules("input t: real in [0, 50]\\ny = t > 30\\n")
    >>> r = verify_milp(net, source_from_text("input t: real in [0, 50]\\ny = t >= 30\\n"))
    >>> r.outputs[0].verdict, r.outputs[0].counterexamples[0].assignment
    ('different', {'t': 30.0})
    """
    check_names(net, source)
    return run_milp(net, source, milp_domain(net, source), time_limit=time_limit,
                    progress=progress)

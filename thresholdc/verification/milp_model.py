"""A small mixed-integer model builder and the exact MILP encoding of a rule file's AST.

:class:`Model` collects variables (bounds, integrality) and rows ``lo ≤ Σ coef·var ≤ hi`` and
solves them with ``scipy.optimize.milp`` (HiGHS).  An *affine* value is ``(coefs, const)``
with ``coefs`` a ``{var: coef}`` dict.

:func:`encode_rules` writes every definition the outputs need as a 0/1 affine value of the
input choice variables, exactly (at every integer point the value is the rule's), without
sharing code with the lowering to gates:

* a categorical test is the sum of the listed values' choice variables (one-hot, exact);
  a real test on a discrete real input (cell points) the sum of the points that pass;
* ``not a`` is ``1 − a``; ``and``/``or``/``xor``/``if-then-else`` get one binary with the
  usual linear rows; a count ``Σ coef·arg OP r`` gets one binary ``t`` per comparison with
  the two big-M rows ``S − (r − S_min)·t ≥ S_min`` and ``S − (S_max − r + 1)·t ≤ r − 1``
  (``t = 1`` exactly when ``S ≥ r``, ``S`` integral); ``parity`` a general integer ``q``
  with ``Σ args = 2q + t``;
* a real test on a continuous input ``x ∈ [lo, hi]`` gets a binary ``g`` with
  ``g = 1 ⇒ x ≥ c`` and ``g = 0 ⇒ x ≤ c``: exact except at ``x = c`` itself, where both
  values are allowed (the rule's own strictness is applied when a solution is re-checked);
  with a margin variable ``s`` (``strict``) the side the rule excludes needs ``s`` more
  (``x > c`` needs ``x ≥ c + s``, ``x >= c`` false needs ``x ≤ c − s``).

>>> from thresholdc.logic.source import source_from_text
>>> from thresholdc.verification.domain import boolean_or_typed_domain
>>> src = source_from_text("input c: {r, g, b}, a\\ny = atleast(2, c == r, a, c != b)\\n")
>>> m = Model()
>>> d = boolean_or_typed_domain(src)
>>> choices = m.choice_vars(d)
>>> y = encode_rules(m, src.program, d, choices, {})["y"]
>>> m.row(*y, 1, 1)   # ask for y = 1
>>> sol = m.solve(time_limit=10)
>>> sol.status
'feasible'
"""

from __future__ import annotations

import contextlib
import os
import sys
from collections.abc import Iterator
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..ir import program as ast
from ..lazy import lazy_module
from .domain import Domain

optimize = lazy_module("scipy.optimize")
sparse = lazy_module("scipy.sparse")

__all__ = ["Model", "Solution", "encode_rules", "Affine", "weighted_sum"]

Affine = tuple[dict[int, float], float]


def weighted_sum(neuron: Any, sources: Any) -> Affine:
    """A neuron's pre-activation ``Σ w·a + b`` as one affine form over the model's variables,
    ``sources(name)`` giving the affine form of each input unit or earlier neuron it reads.

    >>> from types import SimpleNamespace
    >>> n = SimpleNamespace(inputs=["a", "b"], weights=[2.0, -1.0], bias=0.5)
    >>> weighted_sum(n, {"a": ({0: 1.0}, 0.0), "b": ({0: 1.0, 1: 1.0}, 1.0)}.get)
    ({0: 1.0, 1: -1.0}, -0.5)
    """
    coefs: dict[int, float] = {}
    bias = float(neuron.bias)
    for i, w in zip(neuron.inputs, neuron.weights):
        ua = sources(i)
        bias += float(w) * ua[1]
        for v, cf in ua[0].items():
            coefs[v] = coefs.get(v, 0.0) + float(w) * cf
    return coefs, bias


@dataclass
class Solution:
    """``status``: ``feasible``, ``infeasible`` or ``limit`` (no solution within the limits);
    ``x`` the values when feasible; ``nodes`` HiGHS's branch-and-bound nodes (if reported)."""

    status: str
    x: np.ndarray | None
    nodes: int | None = None
    message: str = ""
    dual_bound: float | None = None


class Model:
    """Variables and rows of a MILP (see the module docstring)."""

    def __init__(self) -> None:
        self.lb: list[float] = []
        self.ub: list[float] = []
        self.integer: list[int] = []
        self.rows: list[tuple[dict[int, float], float, float]] = []

    def var(self, lo: float, hi: float, integer: bool = False) -> int:
        self.lb.append(float(lo))
        self.ub.append(float(hi))
        self.integer.append(1 if integer else 0)
        return len(self.lb) - 1

    def binary(self) -> int:
        return self.var(0.0, 1.0, True)

    def row(self, coefs: dict[int, float], const: float, lo: float, hi: float) -> None:
        """``lo ≤ Σ coefs + const ≤ hi`` (either end may be ±inf)."""
        self.rows.append((dict(coefs), float(lo) - const, float(hi) - const))

    def mark(self) -> tuple[int, int]:
        """The current size, to :meth:`undo` rows and variables added after it."""
        return len(self.lb), len(self.rows)

    def undo(self, mark: tuple[int, int]) -> None:
        n, r = mark
        del self.lb[n:], self.ub[n:], self.integer[n:], self.rows[r:]

    def choice_vars(self, domain: Domain) -> list[list[int]]:
        """One binary per choice of every discrete feature, exactly one per feature."""
        out = []
        for f in domain.discrete:
            vs = [self.binary() for _ in range(f.size)]
            self.row({v: 1.0 for v in vs}, 0.0, 1.0, 1.0)
            out.append(vs)
        return out

    def solve(self, *, time_limit: float, node_limit: int | None = None,
              objective: dict[int, float] | None = None, relaxed: bool = False,
              rel_gap: float | None = None) -> Solution:
        """Find any feasible point (objective 0), or minimise ``objective``, with HiGHS;
        ``relaxed`` drops integrality (a linear programme: ``dual_bound`` is its optimum);
        ``rel_gap`` stops once the dual bound is that close (relatively) to the best point."""
        n = len(self.lb)
        data, ri, ci = [], [], []
        lo = np.empty(len(self.rows))
        hi = np.empty(len(self.rows))
        for r, (coefs, a, b) in enumerate(self.rows):
            for v, c in coefs.items():
                if c != 0.0:
                    data.append(c)
                    ri.append(r)
                    ci.append(v)
            lo[r], hi[r] = a, b
        A = sparse.csr_matrix((data, (ri, ci)), shape=(len(self.rows), n))
        options: dict[str, Any] = {"time_limit": max(float(time_limit), 0.01), "presolve": True}
        if node_limit is not None:
            options["node_limit"] = int(node_limit)
        if rel_gap is not None:
            options["mip_rel_gap"] = float(rel_gap)
        cons = [optimize.LinearConstraint(A, lo, hi)] if len(self.rows) else []
        cost = np.zeros(n)
        for v, w in (objective or {}).items():
            cost[v] = w
        integrality = np.zeros(n) if relaxed else np.array(self.integer)
        with _quiet_solver():
            res = optimize.milp(cost, integrality=integrality, bounds=optimize.Bounds(
                np.array(self.lb), np.array(self.ub)), constraints=cons, options=options)
        nodes = getattr(res, "mip_node_count", None)
        dual = getattr(res, "mip_dual_bound", None)
        if relaxed and res.status == 0:
            dual = float(res.fun)
        if res.status == 2:
            return Solution("infeasible", None, nodes, res.message)
        if res.x is not None and res.status in (0, 1):
            return Solution("feasible" if res.status == 0 else "limit-feasible",
                            np.asarray(res.x), nodes, res.message, dual)
        return Solution("limit", None, nodes, str(res.message), dual)


@contextlib.contextmanager
def _quiet_solver() -> Iterator[None]:
    """File descriptors 1 and 2 sent to the null device while HiGHS runs.

    ``scipy.optimize.milp`` passes no ``output_flag``/``log_to_console`` to HiGHS (its only
    switch, ``disp``, is off already), yet HiGHS's MIP solver writes a few debug lines straight
    to the C streams (``HighsMipSolverData::transformNewIntegerFeasibleSolution
    tmpSolver.run();`` on standard output, seen with scipy 1.17.1); nothing it reports is lost,
    as the status and message come back in the result.  ``THRESHOLDC_DEBUG=1`` keeps them.
    """
    if os.environ.get("THRESHOLDC_DEBUG"):
        yield
        return
    saved: list[tuple[int, int]] = []
    try:
        for stream, fd in ((sys.stdout, 1), (sys.stderr, 2)):
            if stream is not None:
                stream.flush()
            saved.append((fd, os.dup(fd)))
    except (OSError, ValueError):  # no such descriptor (an embedded interpreter)
        for _, copy in saved:
            os.close(copy)
        yield
        return
    try:
        with open(os.devnull, "wb") as null:
            for fd, _ in saved:
                os.dup2(null.fileno(), fd)
        yield
    finally:
        for fd, copy in saved:
            os.dup2(copy, fd)
            os.close(copy)


# ---------------------------------------------------------------- affine helpers
def _const(v: float) -> Affine:
    return {}, float(v)


def _neg(a: Affine) -> Affine:
    return {k: -c for k, c in a[0].items()}, 1.0 - a[1]


def _fixed(a: Affine) -> float | None:
    return a[1] if not a[0] else None


def _sum(terms: list[tuple[float, Affine]]) -> Affine:
    out: dict[int, float] = {}
    const = 0.0
    for w, (coefs, c) in terms:
        const += w * c
        for k, v in coefs.items():
            out[k] = out.get(k, 0.0) + w * v
    return out, const


class _Encoder:
    """Rules → rows of a :class:`Model` (see the module docstring)."""

    def __init__(self, m: Model, program: ast.Program, domain: Domain,
                 choices: list[list[int]], reals: dict[str, tuple[int, float, float]],
                 strict: int | None = None) -> None:
        self.m = m
        self.strict = strict
        self.features = {f.name: (k, f) for k, f in enumerate(domain.discrete)}
        self.choices = choices
        self.reals = reals
        self.values: dict[str, Affine] = {}
        self.program = program

    def new(self) -> tuple[int, Affine]:
        t = self.m.binary()
        return t, ({t: 1.0}, 0.0)

    def conj(self, args: list[Affine]) -> Affine:
        if any(_fixed(a) == 0.0 for a in args):
            return _const(0.0)
        args = [a for a in args if _fixed(a) != 1.0]
        if not args:
            return _const(1.0)
        if len(args) == 1:
            return args[0]
        t, tv = self.new()
        for a in args:  # t ≤ a
            self.m.row(*_sum([(1.0, tv), (-1.0, a)]), -np.inf, 0.0)
        self.m.row(*_sum([(1.0, tv)] + [(-1.0, a) for a in args]), -(len(args) - 1), np.inf)
        return tv

    def disj(self, args: list[Affine]) -> Affine:
        return _neg(self.conj([_neg(a) for a in args]))

    def xor(self, a: Affine, b: Affine) -> Affine:
        fa, fb = _fixed(a), _fixed(b)
        if fa is not None:
            return _neg(b) if fa == 1.0 else b
        if fb is not None:
            return _neg(a) if fb == 1.0 else a
        t, tv = self.new()
        self.m.row(*_sum([(1.0, tv), (-1.0, a), (-1.0, b)]), -np.inf, 0.0)
        self.m.row(*_sum([(1.0, tv), (-1.0, a), (1.0, b)]), 0.0, np.inf)
        self.m.row(*_sum([(1.0, tv), (1.0, a), (-1.0, b)]), 0.0, np.inf)
        self.m.row(*_sum([(1.0, tv), (1.0, a), (1.0, b)]), -np.inf, 2.0)
        return tv

    def ite(self, c: Affine, t: Affine, e: Affine) -> Affine:
        fc = _fixed(c)
        if fc is not None:
            return t if fc == 1.0 else e
        r, rv = self.new()
        # r ≤ t + (1 − c), r ≥ t − (1 − c), r ≤ e + c, r ≥ e − c
        self.m.row(*_sum([(1.0, rv), (-1.0, t), (1.0, c)]), -np.inf, 1.0)
        self.m.row(*_sum([(1.0, rv), (-1.0, t), (-1.0, c)]), -1.0, np.inf)
        self.m.row(*_sum([(1.0, rv), (-1.0, e), (-1.0, c)]), -np.inf, 0.0)
        self.m.row(*_sum([(1.0, rv), (-1.0, e), (1.0, c)]), 0.0, np.inf)
        return rv

    def at_least(self, S: Affine, smin: float, smax: float, r: float) -> Affine:
        """1 exactly when the integral sum ``S`` is at least ``r``."""
        if smin >= r:
            return _const(1.0)
        if smax < r:
            return _const(0.0)
        t, tv = self.new()
        self.m.row(*_sum([(1.0, S), (-(r - smin), tv)]), smin, np.inf)
        self.m.row(*_sum([(1.0, S), (-(smax - r + 1), tv)]), -np.inf, r - 1)
        return tv

    def relation(self, terms: list[tuple[int, Affine]], op: str, r: int) -> Affine:
        """``Σ w·a OP r`` for 0/1 values ``a``."""
        S = _sum([(float(w), a) for w, a in terms])
        base = S[1]
        S0 = (S[0], 0.0)
        smin = float(sum(min(w, 0) for w, _ in terms))
        smax = float(sum(max(w, 0) for w, _ in terms))

        def ge(k: float) -> Affine:
            return self.at_least(S0, smin - base, smax - base, k - base)

        if op == ">=":
            return ge(r)
        if op == ">":
            return ge(r + 1)
        if op == "<=":
            return _neg(ge(r + 1))
        if op == "<":
            return _neg(ge(r))
        eq = self.conj([ge(r), _neg(ge(r + 1))])
        return eq if op == "==" else _neg(eq)

    def parity(self, args: list[Affine]) -> Affine:
        S = _sum([(1.0, a) for a in args])
        if not S[0]:
            return _const(float(int(round(S[1])) % 2))
        t, tv = self.new()
        q = self.m.var(0, len(args) // 2 + 1, True)
        self.m.row(*_sum([(1.0, S), (-1.0, tv), (-2.0, ({q: 1.0}, 0.0))]), 0.0, 0.0)
        return tv

    def leaf(self, node: Any) -> Affine:
        if isinstance(node, ast.Name):
            if node.id in self.values:
                return self.values[node.id]
            k, f = self.features[node.id]
            return {self.choices[k][1]: 1.0}, 0.0  # a Boolean input: its choice "1"
        if isinstance(node, ast.Const):
            return _const(1.0 if node.value else 0.0)
        if isinstance(node, ast.CategoryTest):
            k, f = self.features[node.var]
            listed = set(node.values)
            a = ({self.choices[k][c]: 1.0 for c, lab in enumerate(f.labels) if lab in listed},
                 0.0)
            return _neg(a) if node.negate else a
        if isinstance(node, ast.RealTest):
            c = float(node.value)
            if node.var in self.features:
                k, f = self.features[node.var]
                pts = np.asarray(f.labels, dtype=float)
                hit = {">": pts > c, ">=": pts >= c, "<": pts < c, "<=": pts <= c}[node.op]
                return {self.choices[k][i]: 1.0 for i in np.nonzero(hit)[0].tolist()}, 0.0
            x, lo, hi = self.reals[node.var]
            truth = {">": (lo > c, hi <= c), ">=": (lo >= c, hi < c),
                     "<": (hi < c, lo >= c), "<=": (hi <= c, lo > c)}[node.op]
            if truth[0]:
                return _const(1.0)
            if truth[1]:
                return _const(0.0)
            # g = 1 ⇒ x ≥ c, g = 0 ⇒ x ≤ c; with the margin variable s (0 ≤ s ≤ 1) the
            # side a strict test excludes needs s more: "x > c" true means x ≥ c + s,
            # "x >= c" false means x ≤ c − s.
            g, gv = self.new()
            s = self.strict
            if s is None:
                self.m.row({x: 1.0, g: -(c - lo)}, 0.0, lo, np.inf)
                self.m.row({x: 1.0, g: -(hi - c)}, 0.0, -np.inf, c)
            elif node.op in (">", "<="):  # g is "x > c"
                self.m.row({x: 1.0, g: -(c - lo + 1.0), s: -1.0}, 0.0, lo - 1.0, np.inf)
                self.m.row({x: 1.0, g: -(hi - c)}, 0.0, -np.inf, c)
            else:  # g is "x >= c"
                self.m.row({x: 1.0, g: -(c - lo)}, 0.0, lo, np.inf)
                self.m.row({x: 1.0, g: -(hi - c + 1.0), s: 1.0}, 0.0, -np.inf, c)
            return gv if node.op in (">", ">=") else _neg(gv)
        raise AssertionError(f"unexpected leaf {node!r}")

    def combine(self, node: Any, args: list[Affine]) -> Affine:
        if isinstance(node, ast.Not):
            return _neg(args[0])
        if isinstance(node, ast.BinOp):
            a, b = args
            if node.op == "and":
                return self.conj([a, b])
            if node.op == "or":
                return self.disj([a, b])
            if node.op == "xor":
                return self.xor(a, b)
            if node.op == "implies":
                return self.disj([_neg(a), b])
            return _neg(self.xor(a, b))
        if isinstance(node, ast.Ite):
            return self.ite(*args)
        if isinstance(node, ast.Call):
            n = len(args)
            ones = [(1, a) for a in args]
            k = int(node.k or 0)
            if node.func == "atleast":
                return self.relation(ones, ">=", k)
            if node.func == "atmost":
                return self.relation(ones, "<=", k)
            if node.func == "exactly":
                return self.relation(ones, "==", k)
            if node.func == "majority":
                return self.relation(ones, ">=", n // 2 + 1)
            if node.func == "nand":
                return _neg(self.conj(args))
            if node.func == "nor":
                return _neg(self.disj(args))
            return self.parity(args)
        assert isinstance(node, ast.Compare)
        return self.relation([(t.coef, a) for t, a in zip(node.terms, args)], node.op,
                             node.rhs)

    def expr(self, e: Any) -> Affine:
        """Explicit post-order stack (deep chains need no recursion)."""
        results: list[Affine] = []
        stack: list[tuple[Any, bool]] = [(e, False)]
        while stack:
            node, expanded = stack.pop()
            kids = ast.sub_expressions(node)
            if not expanded and kids:
                stack.append((node, True))
                stack.extend((k, False) for k in reversed(kids))
                continue
            if not kids:
                results.append(self.leaf(node))
                continue
            args = results[len(results) - len(kids):]
            del results[len(results) - len(kids):]
            results.append(self.combine(node, args))
        return results[0]


def encode_rules(m: Model, program: ast.Program, domain: Domain, choices: list[list[int]],
                 reals: dict[str, tuple[int, float, float]],
                 strict: int | None = None) -> dict[str, Affine]:
    """Every definition (and output) of ``program`` as a 0/1 affine value in ``m``.

    ``choices[k]`` are the choice variables of ``domain.discrete[k]``; ``reals[name]`` is
    ``(variable, lo, hi)`` of each continuous real input.  ``strict`` is a margin variable
    ``s`` in [0, 1]: the side a strict real test excludes then needs ``s`` more (``x > c``
    true means ``x ≥ c + s``), so a solution with ``s > 0`` passes every test as written.
    """
    enc = _Encoder(m, program, domain, choices, reals, strict)
    for name in program.order:
        enc.values[name] = enc.expr(program.definitions[name].expr)
    out = dict(enc.values)
    for name in program.outputs:
        if name not in out:
            out[name] = enc.leaf(ast.Name(name))
    return out

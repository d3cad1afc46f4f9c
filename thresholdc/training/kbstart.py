"""The rule-structured start: a sigmoid network with one unit per definition and per term.

The construction follows the knowledge-based networks of Towell & Shavlik (1994, from
memory), written here from the general idea.  Every definition of the rule file, and every
and/or term inside one, becomes one sigmoid unit of the form "at least r of these literals":

    z = ω · (Σ coefᵢ · vᵢ − r + ½)

where a literal ``vᵢ`` is an input unit, another unit, or ``1 − v`` for a negated one.  So a
conjunction of P plain and N negated antecedents has weights +ω / −ω and bias −(P − ½)ω, a
disjunction of plain antecedents has bias −ω/2, ``atleast(k, …)`` has bias −(k − ½)ω, and a
weighted comparison ``Σ c·x ≥ r`` has weights c·ω.  On 0/1 literals the unit's pre-activation
is ≥ ω/2 when the term holds and ≤ −ω/2 when it does not.  Operators that are not one
threshold term are built from a few: ``a xor b`` is ``(a or b) and not (a and b)``, parity a
chain of them, ``if c then t else o`` is ``(c and t) or (not c and o)``, ``exactly`` and ``==``
an ``atleast`` and an ``atmost``.  A categorical test ``colour in {red, green}`` is the sum of
its one-hot units (exactly 0 or 1), so it is a literal, not a unit.  A real test
``temp > c`` is a unit ``z = ω·(temp − c)/s`` with ``s`` the input's declared scale, at least
2% of its declared range, so the unit turns over within a few ``s`` of ``c``.

Layers: a unit sits one layer above the highest unit it reads; a link that skips layers goes
through relays (``z = ω·(v − ½)``, role ``relay``), and every output is relayed to the last
layer, so the result is in the strict layered form and trains as dense matrices.

Soft inputs read back (the default, ``soft_inputs=True``): a unit's output is not 0/1 but
h = σ(ω/2) when its term holds by the smallest margin and l = 1 − h when it fails by it, and
deep rules lose their decisions when those values are read as 0/1 (relays drift toward
0.7/0.3 at ω = 4; a disjunction of several false-ish terms comes out true).  So a unit reads
each *unit* source s as the literal v = (s − l)/(h − l): its weights from units are ω/(h − l)
times the construction's and its bias moves by −ω·l/(h − l) per unit link, which gives the
construction's pre-activation exactly when its sources sit at h or l.  Units reading the 0/1
inputs keep the published weights.  (``soft_inputs=False`` is the plain construction; on the
six-layer rules of ``benchmarks/refine_bench.py`` at ω = 4 it decides 39% of 3000 sampled rows
differently from the rules, the default none.)

All weights are proportional to ω: :func:`rule_network` builds the network for one ω.

>>> from thresholdc.syntax.parser import parse
>>> net = rule_network(parse("input a, b, c\\ny = (a and not b) or c\\n"), weight=4.0,
...                    soft_inputs=False)
>>> [(n.name, n.layer, n.inputs, n.weights, n.bias) for n in net.neurons]
[('y~1', 1, ('a', 'b'), (4.0, -4.0), -2.0), ('relay~c~1', 1, ('c',), (4.0,), -2.0), \
('y', 2, ('y~1', 'relay~c~1'), (4.0, 4.0), -2.0)]
>>> soft = rule_network(parse("input a, b, c\\ny = (a and not b) or c\\n"), weight=4.0)
>>> [round(w, 3) for w in soft.neuron("y").weights], round(soft.neuron("y").bias, 3)
([5.252, 5.252], -3.252)
>>> net.decide([[1, 0, 0], [1, 1, 0], [0, 0, 1]]).ravel().tolist()
[True, False, True]
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field

from ..ir import program as ast
from ..ir.network import Network, Neuron, Output
from ..logic import feature_scale, input_units, network_features, strict_real_test
from ..version import __version__

__all__ = ["rule_network", "REAL_MIN_SLOPE_FRACTION"]

#: A real test's unit turns over on a scale of at least this fraction of the declared range.
REAL_MIN_SLOPE_FRACTION = 0.02


@dataclass
class _Lin:
    """A literal: ``const + Σ coef · unit``."""

    const: float = 0.0
    terms: dict[str, float] = field(default_factory=dict)

    def negated(self) -> _Lin:
        return _Lin(1.0 - self.const, {k: -v for k, v in self.terms.items()})


_Gate = tuple[list[tuple[float, _Lin]], float]  # Σ coef·literal ≥ r


def _negate(g: _Gate) -> _Gate:
    terms, r = g
    return [(-c, lit) for c, lit in terms], -r + 1.0


@dataclass
class _Unit:
    weights: dict[str, float]  # in units of ω
    bias: float  # in units of ω
    role: str
    origin: str | None


class _Builder:
    """Builds the units of a program (weights in units of ω), then layers them."""

    def __init__(self, program: ast.Program) -> None:
        self.program = program
        self.units: dict[str, _Unit] = {}
        self.inputs = input_units(program)
        self.taken = set(self.inputs) | set(program.definitions) | set(program.outputs)
        self.real = {v.name: v for v in program.inputs if v.kind == "real"}
        self.count: dict[str, int] = {}

    def fresh(self, base: str) -> str:
        k = self.count.get(base, 0)
        while True:
            k += 1
            name = f"{base}~{k}"
            if name not in self.taken:
                break
        self.count[base] = k
        self.taken.add(name)
        return name

    # ------------------------------------------------------------------ units
    def add(self, gate: _Gate, name: str, origin: str, role: str = "gate") -> str:
        terms, r = gate
        weights: dict[str, float] = {}
        const = 0.0
        for coef, lit in terms:
            const += coef * lit.const
            for src, c in lit.terms.items():
                weights[src] = weights.get(src, 0.0) + coef * c
        weights = {s: c for s, c in weights.items() if c != 0.0}
        self.units[name] = _Unit(weights, const - r + 0.5, role, origin)
        return name

    def term(self, gate: _Gate, owner: str) -> _Lin:
        return _Lin(0.0, {self.add(gate, self.fresh(owner), owner): 1.0})

    # ------------------------------------------------------------------ literals
    def literal(self, e: ast.Expr, owner: str) -> _Lin:
        if isinstance(e, ast.Name):
            return _Lin(0.0, {e.id: 1.0})
        if isinstance(e, ast.Const):
            return _Lin(1.0 if e.value else 0.0)
        if isinstance(e, ast.Not):
            return self.literal(e.operand, owner).negated()
        if isinstance(e, ast.CategoryTest):
            lit = _Lin(0.0, {f"{e.var}={v}": 1.0 for v in e.values})
            return lit.negated() if e.negate else lit
        if isinstance(e, ast.RealTest):
            op, c, negate = strict_real_test(e.op, e.value)
            var = self.real[e.var]
            width = 0.0 if var.range is None else float(var.range[1] - var.range[0])
            s = 1.0 / max(feature_scale(var), REAL_MIN_SLOPE_FRACTION * width)
            sign = 1.0 if op == ">" else -1.0
            name = self.fresh(owner)
            self.units[name] = _Unit({e.var: sign * s}, -sign * s * c, "gate", owner)
            lit = _Lin(0.0, {name: 1.0})
            return lit.negated() if negate else lit
        return self.term(self.gate(e, owner), owner)

    # ------------------------------------------------------------------ gates
    def _flat(self, e: ast.Expr, op: str) -> list[ast.Expr]:
        if isinstance(e, ast.BinOp) and e.op == op:
            return self._flat(e.left, op) + self._flat(e.right, op)
        return [e]

    def _count(self, args: list[_Lin], k: float) -> _Gate:
        return [(1.0, a) for a in args], float(k)

    def _xor(self, a: _Lin, b: _Lin, owner: str) -> _Gate:
        either = self.term(self._count([a, b], 1), owner)
        not_both = self.term(_negate(self._count([a, b], 2)), owner)
        return self._count([either, not_both], 2)

    def gate(self, e: ast.Expr, owner: str) -> _Gate:
        """The threshold term computing ``e`` (sub-terms become units of their own)."""
        lit = lambda x: self.literal(x, owner)  # noqa: E731
        if isinstance(e, ast.Not) and not self._is_literal(e.operand):
            return _negate(self.gate(e.operand, owner))
        if isinstance(e, ast.BinOp):
            if e.op in ("and", "or"):
                ops = [lit(x) for x in self._flat(e, e.op)]
                return self._count(ops, len(ops) if e.op == "and" else 1)
            if e.op == "implies":
                return self._count([lit(e.left).negated(), lit(e.right)], 1)
            g = self._xor(lit(e.left), lit(e.right), owner)
            return _negate(g) if e.op == "iff" else g
        if isinstance(e, ast.Ite):
            c = lit(e.cond)
            then = self.term(self._count([c, lit(e.then)], 2), owner)
            other = self.term(self._count([c.negated(), lit(e.other)], 2), owner)
            return self._count([then, other], 1)
        if isinstance(e, ast.Call):
            args = [lit(x) for x in e.args]
            n, k = len(args), e.k or 0
            if e.func == "atleast":
                return self._count(args, k)
            if e.func == "atmost":
                return [(-1.0, a) for a in args], float(-k)
            if e.func == "majority":
                return self._count(args, n // 2 + 1)
            if e.func == "nand":
                return _negate(self._count(args, n))
            if e.func == "nor":
                return _negate(self._count(args, 1))
            if e.func == "exactly":
                low = self.term(self._count(args, k), owner)
                high = self.term(([(-1.0, a) for a in args], float(-k)), owner)
                return self._count([low, high], 2)
            # parity: a chain of two-input xors
            cur = args[0] if args else _Lin(0.0)
            for i, a in enumerate(args[1:], start=1):
                g = self._xor(cur, a, owner)
                if i == n - 1:
                    return g
                cur = self.term(g, owner)
            return self._count([cur], 1)
        if isinstance(e, ast.Compare):
            terms = [(float(t.coef), lit(t.operand)) for t in e.terms]
            r = float(e.rhs)
            if e.op in (">=", ">"):
                return terms, r + (1.0 if e.op == ">" else 0.0)
            if e.op in ("<=", "<"):
                return [(-c, x) for c, x in terms], -r + (1.0 if e.op == "<" else 0.0)
            low = self.term((terms, r), owner)
            high = self.term(([(-c, x) for c, x in terms], -r), owner)
            g = self._count([low, high], 2)
            return g if e.op == "==" else _negate(g)
        return self._count([lit(e)], 1)  # a literal: a relay of it

    def _is_literal(self, e: ast.Expr) -> bool:
        while isinstance(e, ast.Not):
            e = e.operand
        return isinstance(e, ast.Name | ast.Const | ast.CategoryTest | ast.RealTest)

    # ------------------------------------------------------------------ layers
    def network(self, weight: float, soft_inputs: bool = True) -> Network:
        prog = self.program
        for name in prog.order:
            self.add(self.gate(prog.definitions[name].expr, name), name, name)
        level: dict[str, int] = {u: 0 for u in self.inputs}
        for name, u in self.units.items():  # creation order is topological
            level[name] = 1 + max((level[s] for s in u.weights), default=0)
        depth = max([1, *(level[s] for s in prog.outputs)])
        relays: dict[tuple[str, int], str] = {}

        def at(src: str, L: int) -> str:
            """``src`` carried to layer ``L`` (through relays)."""
            if level[src] >= L:
                return src
            key = (src, L)
            if key not in relays:
                below = at(src, L - 1)
                name = self.fresh(f"relay~{src}")
                origin = self.units[src].origin if src in self.units else None
                self.units[name] = _Unit({below: 1.0}, -0.5, "relay", origin)
                level[name] = L
                relays[key] = name
            return relays[key]

        for name in list(self.units):
            u = self.units[name]
            if u.role == "relay":
                continue
            u.weights = {at(s, level[name] - 1): c for s, c in u.weights.items()}
        sources = {o: at(o, depth) for o in prog.outputs}
        order = sorted(self.units, key=lambda n: level[n])  # stable
        # A unit's output is h = σ(ω/2) when its term holds by the smallest margin and
        # l = 1 − h when it fails by it; reading v = (s − l)/(h − l) of a unit source s
        # gives the construction's pre-activation exactly at those values (inputs are 0/1).
        h = 1.0 / (1.0 + math.exp(-weight / 2)) if soft_inputs else 1.0
        gain, low = 1.0 / (2.0 * h - 1.0), 1.0 - h

        def params(n: str) -> tuple[tuple[float, ...], float]:
            u = self.units[n]
            ws, bias = [], weight * u.bias
            for src, c in u.weights.items():
                if src in self.units:
                    ws.append(weight * c * gain)
                    bias -= weight * c * gain * low
                else:
                    ws.append(weight * c)
            return tuple(ws), bias

        neurons = tuple(
            Neuron(n, level[n], tuple(self.units[n].weights), *params(n), "sigmoid",
                   self.units[n].role, self.units[n].origin)
            for n in order
        )
        outputs = tuple(Output(o, sources[o]) for o in prog.outputs)
        meta = {"tool": f"thresholdc {__version__}",
                "start": {"rules": os.path.basename(prog.file), "weight": weight}}
        return Network(tuple(self.inputs), neurons, outputs, meta, "binary",
                       network_features(prog))


def rule_network(program: ast.Program, *, weight: float = 4.0,
                 soft_inputs: bool = True) -> Network:
    """The rule-structured sigmoid network of ``program`` with rule weight ``weight`` (ω).

    Parameters
    ----------
    program : Program
        A checked rule file (:func:`thresholdc.syntax.parser.parse`).
    weight : float
        ω: the weight of every antecedent (biases and counts scale with it).
    soft_inputs : bool
        Read every unit source at its typical soft value (module docstring); False: the
        plain construction.

    Returns
    -------
    Network
        Strict layered, sigmoid everywhere, sparse (each unit reads what its term names);
        units named after definitions compute them, ``def~k`` units are their terms.

    >>> from thresholdc.syntax.parser import parse
    >>> net = rule_network(parse("input a, b, c\\ny = atleast(2, a, b, c)\\n"), weight=4)
    >>> net.neurons[0].weights, net.neurons[0].bias
    ((4.0, 4.0, 4.0), -6.0)
    """
    return _Builder(program).network(float(weight), soft_inputs)

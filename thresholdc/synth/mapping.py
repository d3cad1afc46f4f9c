"""Gate mapping: a :class:`GateGraph` becomes a step :class:`Network`, one construction per gate.

Rules of the mapping
    * A signal is carried by a *literal*: a unit (input or neuron) read plainly or negated, or a
      constant.  ``not`` and ``buf`` gates cost nothing: they change the literal.  A reader folds
      a negated literal into its weights and bias (``w·(1 − x) = −w·x + w``) and a constant into
      its bias.
    * Every threshold-type gate (and, or, nand, nor, threshold) is one neuron: for
      ``Σ wᵢ·litᵢ ≥ T`` the neuron has ``z = Σ wᵢ'·xᵢ + (c − T + ½)``, where ``c`` collects the
      folded constants; integer sums make ``|z| ≥ ½`` on every 0/1 input.  So ``a and b`` is
      weights 1, 1 and bias −1.5, ``a or b`` weights 1, 1 and bias −0.5 (common practice).
    * Non-threshold gates get small constructions with direct connections:
      xor of n units: ⌈log2(n+1)⌉ neurons, one per bit of the count of true inputs, highest bit
      first, each reading the inputs and the higher bits (the last bit is the parity);
      equal (Σw·x == T): a helper [Σ ≥ T+1] and [Σ − M·helper ≥ T];
      ite(c, t, e): a helper [c + t ≥ 2] and [2·helper + e − c ≥ 1].
    * ``realcmp`` (``[x > c]`` / ``[x < c]`` on a real unit x) is one first-layer neuron
      ``z = x − c`` / ``z = c − x`` with a float bias; its negation is folded into readers
      and never into its own weights (``−(x − c) > 0`` is ``x < c``, not ``x ≤ c``).
    * A neuron computing a signal is named after it; helpers get ``~`` names unique against
      every signal and reserved name.  An output that is a negated unit gets its own neuron.
    * ``meta["cones"]`` records for each neuron named after a signal the leaves its
      sub-network reads: ``{NEURON: {"root": SIGNAL, "leaves": [...]}}``.
    * Neurons no output needs are dropped; layers are assigned.

>>> from thresholdc.ir.gates import Gate, GateGraph
>>> g = GateGraph.build(["a", "b"], [("y", "y")], [("y", Gate("xor", ("a", "b")))])
>>> [repr(n) for n in map_to_neurons(g).neurons]
['y~b1[L1 step](+1*a +1*b -1.5)', 'y[L2 step](+1*a +1*b -2*y~b1 -0.5)']
"""

from __future__ import annotations

from collections.abc import Iterable

from ..ir.gates import Gate, GateGraph
from ..ir.network import Network, Neuron, Output
from ..network import assign_layers, fresh_name, prune_dead

__all__ = ["map_to_neurons", "Lit"]

# A literal: (unit name, negated) or (None, constant value).
Lit = tuple[str | None, bool]


def _flip(lit: Lit) -> Lit:
    return (lit[0], not lit[1])


def _fold(terms: list[tuple[Lit, int]]) -> tuple[dict[str, int], int]:
    """``Σ w·lit`` as ``Σ coef[u]·u + const``: a negated unit gives ``−w·u + w``, a constant
    literal adds ``w·value``; repeated units merge."""
    coef: dict[str, int] = {}
    const = 0
    for (unit, neg), w in terms:
        if unit is None:
            const += w * int(neg)
        elif neg:
            coef[unit] = coef.get(unit, 0) - w
            const += w
        else:
            coef[unit] = coef.get(unit, 0) + w
    return coef, const


class _Mapper:
    """Builds neurons for one gate graph."""

    def __init__(self, gates: GateGraph, reserved: Iterable[str]) -> None:
        self.graph = gates
        self.taken: set[str] = set(gates.gates) | set(reserved)
        self.neurons: list[Neuron] = []
        self.by_name: dict[str, Neuron] = {}
        self.helpers: set[str] = set()
        self.lit: dict[str, Lit] = {}
        self.real: set[str] = set()

    # ------------------------------------------------------------ neuron building
    def threshold(
        self, name: str | None, terms: list[tuple[Lit, int]], T: int, origin: str | None,
        *, signal: str,
    ) -> Lit:
        """A literal for ``[Σ w·lit ≥ T]``: a new neuron, or a plain literal/constant when the
        folded sum reads at most one unit."""
        coef, const = _fold(terms)
        inputs = [u for u, w in coef.items() if w != 0]
        weights = [coef[u] for u in inputs]
        bias = const - T + 0.5
        low = bias + sum(w for w in weights if w < 0)
        high = bias + sum(w for w in weights if w > 0)
        if low > 0 or high < 0:  # constant over every input (this covers no inputs at all)
            return (None, low > 0)
        if len(inputs) == 1:
            at0, at1 = bias > 0, weights[0] + bias > 0
            if at0 == at1:
                return (None, at0)
            return (inputs[0], at0)
        if name is None:
            name = fresh_name(f"{signal}~h", self.taken)
            self.helpers.add(name)
        neuron = Neuron(name, 0, tuple(inputs), tuple(weights), bias, "step", "gate", origin)
        self.neurons.append(neuron)
        self.by_name[name] = neuron
        return (name, False)

    # ------------------------------------------------------------ gates
    def map_gate(self, sig: str, g: Gate) -> Lit:
        op = g.op
        origin = g.origin if g.origin is not None else sig
        args = [self.lit[a] for a in g.args]
        if op == "input":
            return (sig, False)
        if op == "const":
            return (None, bool(g.value))
        if op == "buf":
            return args[0]
        if op == "not":
            return _flip(args[0])
        ones = [(a, 1) for a in args]
        minus = [(a, -1) for a in args]
        if op == "and":
            return self.threshold(sig, ones, len(args), origin, signal=sig)
        if op == "nand":  # not (Σ ≥ n)  ==  −Σ ≥ 1 − n
            return self.threshold(sig, minus, 1 - len(args), origin, signal=sig)
        if op == "or":
            return self.threshold(sig, ones, 1, origin, signal=sig)
        if op == "nor":  # not (Σ ≥ 1)  ==  −Σ ≥ 0
            return self.threshold(sig, minus, 0, origin, signal=sig)
        if op == "threshold":
            terms = list(zip(args, g.weights or ()))
            return self.threshold(sig, terms, int(g.threshold or 0), origin, signal=sig)
        if op in ("xor", "xnor"):
            return self.parity(sig, args, op == "xnor", origin)
        if op == "equal":
            return self.equal(sig, list(zip(args, g.weights or ())), int(g.threshold or 0), origin)
        if op == "ite":
            return self.ite(sig, args, origin)
        if op == "realcmp":
            return self.realcmp(sig, g, origin)
        raise AssertionError(f"unknown gate op {op!r}")

    def realcmp(self, sig: str, g: Gate, origin: str | None) -> Lit:
        """[x > c] as z = x − c, [x < c] as z = c − x: one neuron reading the real unit."""
        op, c = g.real_test or (">", 0.0)
        w, b = (1.0, -float(c)) if op == ">" else (-1.0, float(c))
        neuron = Neuron(sig, 0, (g.args[0],), (w,), b, "step", "gate", origin)
        self.neurons.append(neuron)
        self.by_name[sig] = neuron
        self.real.add(sig)
        return (sig, False)

    def parity(self, sig: str, args: list[Lit], negate: bool, origin: str | None) -> Lit:
        """xor/xnor: one neuron per bit of the count of true units, highest bit first."""
        count: dict[str, int] = {}
        for unit, neg in args:
            if unit is None:
                negate ^= neg
                continue
            negate ^= neg
            count[unit] = count.get(unit, 0) ^ 1
        units = [u for u, c in count.items() if c]
        if not units:
            return (None, negate)
        if len(units) == 1:
            return (units[0], negate)
        bits = len(units).bit_length()
        higher: list[tuple[Lit, int]] = []
        lit: Lit = (None, False)
        for j in range(bits - 1, -1, -1):
            name = sig if j == 0 else fresh_name(f"{sig}~b{j}", self.taken)
            if j:
                self.helpers.add(name)
            terms = [((u, False), 1) for u in units] + higher
            if j == 0 and negate:  # the last bit read negated: not (S >= 1)  ==  -S >= 0
                return self.threshold(name, [(t, -w) for t, w in terms], 0, origin, signal=sig)
            lit = self.threshold(name, terms, 1 << j, origin, signal=sig)
            higher.append((lit, -(1 << j)))
        return lit

    def equal(self, sig: str, terms: list[tuple[Lit, int]], T: int, origin: str | None) -> Lit:
        """[Σ w·lit == T] with one helper neuron (or one neuron at the ends of the range)."""
        coef, const = _fold(terms)
        T -= const
        plain = [((u, False), w) for u, w in coef.items() if w]
        hi = sum(w for _, w in plain if w > 0)
        lo = sum(w for _, w in plain if w < 0)
        if T < lo or T > hi:
            return (None, False)
        if T == hi:
            return self.threshold(sig, plain, T, origin, signal=sig)  # type: ignore[arg-type]
        if T == lo:
            return self.threshold(sig, [(lit, -w) for lit, w in plain], -T, origin, signal=sig)
        above = self.threshold(None, plain, T + 1, origin, signal=sig)  # type: ignore[arg-type]
        return self.threshold(sig, plain + [(above, -(hi - T + 1))], T, origin, signal=sig)

    def ite(self, sig: str, args: list[Lit], origin: str | None) -> Lit:
        """if c then t else e: two neurons, or one when t or e is constant."""
        c, t, e = args
        if c[0] is None:
            return t if c[1] else e
        if t[0] is None:  # c and 1 | not c and e  ==  c or e ;  0 -> not c and e
            if t[1]:
                return self.threshold(sig, [(c, 1), (e, 1)], 1, origin, signal=sig)
            return self.threshold(sig, [(_flip(c), 1), (e, 1)], 2, origin, signal=sig)
        if e[0] is None:  # 1 -> not c or t ; 0 -> c and t
            if e[1]:
                return self.threshold(sig, [(_flip(c), 1), (t, 1)], 1, origin, signal=sig)
            return self.threshold(sig, [(c, 1), (t, 1)], 2, origin, signal=sig)
        both = self.threshold(None, [(c, 1), (t, 1)], 2, origin, signal=sig)
        return self.threshold(sig, [(both, 2), (e, 1), (c, -1)], 1, origin, signal=sig)

    # ------------------------------------------------------------ outputs and cones
    def output(self, name: str, sig: str) -> Output:
        unit, neg = self.lit[sig]
        origin = self.graph.gates[sig].origin or sig
        if unit is None:
            n = Neuron(sig, 0, (), (), 0.5 if neg else -0.5, "step", "gate", origin)
            return self._add_output_neuron(name, n)
        if not neg:
            return Output(name, unit)
        assert unit != sig, f"signal {sig!r} is carried by its own negation"
        if unit in self.by_name and unit not in self.real:
            src = self.by_name[unit]
            n = Neuron(sig, 0, src.inputs, tuple(-w for w in src.weights), -src.bias, "step",
                       "gate", origin)
        else:
            n = Neuron(sig, 0, (unit,), (-1,), 0.5, "step", "gate", origin)
        return self._add_output_neuron(name, n)

    def _add_output_neuron(self, name: str, n: Neuron) -> Output:
        if n.name in self.by_name:  # an earlier output already built it
            return Output(name, n.name)
        self.neurons.append(n)
        self.by_name[n.name] = n
        self.lit[n.name] = (n.name, False)
        return Output(name, n.name)

    def cones(self, names: set[str]) -> dict[str, dict[str, object]]:
        """``{neuron: {"root", "leaves"}}`` for each kept neuron named after a signal."""
        leaves_of: dict[str, list[str]] = {}
        out: dict[str, dict[str, object]] = {}
        for n in self.neurons:
            leaves: list[str] = []
            for i in n.inputs:
                for leaf in leaves_of.get(i, [i]) if i in self.helpers else [i]:
                    if leaf not in leaves:
                        leaves.append(leaf)
            if n.name in self.helpers:
                leaves_of[n.name] = leaves
            elif n.name in names:
                out[n.name] = {"root": n.name, "leaves": leaves}
        return out


def map_to_neurons(gates: GateGraph, *, reserved: Iterable[str] = ()) -> Network:
    """One construction per gate (see the module docstring); negations cost no neuron.

    ``reserved`` are names helpers must avoid besides the graph's own signals.

    >>> from thresholdc.ir.gates import Gate, GateGraph
    >>> g = GateGraph.build(["a", "b"], [("y", "y")], [("y", Gate("and", ("a", "b")))])
    >>> map_to_neurons(g).neurons[0]
    y[L1 step](+1*a +1*b -1.5)
    """
    m = _Mapper(gates, reserved)
    for sig, g in gates.gates.items():
        m.lit[sig] = m.map_gate(sig, g)
    outputs = tuple(m.output(name, sig) for name, sig in gates.outputs)
    net = Network(gates.inputs, assign_layers(m.neurons, gates.inputs), outputs)
    net = prune_dead(net)
    names = {n.name for n in net.neurons}
    return net.with_meta(cones=m.cones(names))


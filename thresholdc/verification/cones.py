"""Cone proofs: each recorded neuron against the gate-graph region it replaced.

:class:`ConeCheck` reads ``meta.cones`` (``{NEURON: {"root": SIGNAL, "leaves": [...]}}``),
resolves relays, and proves for a listed neuron that on all values of its leaves the root
signal (the gate region between leaves and root) and the neuron (with the helper neurons of
its cone) agree: exhaustively up to ``max_leaves`` leaves, by the count of true leaves for
symmetric cones, else by a small SAT miter; a cone whose leaves leave a primary input in the
region, or whose leaves take only some value combinations, is checked again over the primary
inputs it depends on.  ``cone_ok`` and ``deps`` (the leaf units each cone reads) let the
caller prove units by induction over the network's order (:mod:`.local`).

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> g = GateGraph.build(["a", "b"], [("y", "y")], [("y", Gate("nor", ("a", "b")))])
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (-1, -1), 0.5),),
...               (Output("y", "y"),))
>>> check = ConeCheck(net, g, LOCAL_MAX_LEAVES, float("inf"))
>>> check.setup({"y": {"root": "y", "leaves": ["a", "b"]}}), check.check_cone("y")
(True, True)
"""

from __future__ import annotations

import time
from typing import Any

import numpy as np

from ..ir.gates import Gate, GateGraph
from ..ir.network import Network, Neuron
from .sat.circuit import TRUE
from .sat.encode import gate_literal, integer_threshold
from .sat.miter import prove_equivalent
from .structural import CONST_CLASS, Cls, structural_classes

__all__ = ["ConeCheck", "gate_value", "LOCAL_MAX_LEAVES"]

LOCAL_MAX_LEAVES = 16
_REGION_MAX = 5000
_CONST_SUPPORT = 12
_CONST_REGION = 300


def gate_value(g: Gate, args: list[np.ndarray], rows: int) -> np.ndarray:
    """One gate's value over all rows (the gate graph's semantics, written out here)."""
    op = g.op
    if op == "const":
        return np.full(rows, bool(g.value))
    if op == "buf":
        return args[0]
    if op == "not":
        return ~args[0]
    if op in ("and", "nand", "or", "nor"):
        v = np.all(args, axis=0) if op in ("and", "nand") else np.any(args, axis=0)
        return ~v if op in ("nand", "nor") else v
    if op in ("xor", "xnor"):
        v = np.bitwise_xor.reduce(args)
        return ~v if op == "xnor" else v
    if op == "ite":
        return np.where(args[0], args[1], args[2])
    total = np.zeros(rows, dtype=np.int64)
    for w, a in zip(g.weights or (), args):
        total += int(w) * a
    t = int(g.threshold or 0)
    return total >= t if op == "threshold" else total == t


def _step(W: list[int], K: int, vals: list[np.ndarray], rows: int) -> np.ndarray:
    """A step neuron's output on all rows, exactly: Σ W·x ≥ K in integers."""
    if not W:
        return np.full(rows, K <= 0)
    M = np.stack(vals).astype(np.int64)
    if max(abs(x) for x in W + [K]) * (len(W) + 1) < 2**62:
        return np.asarray(W, dtype=np.int64) @ M >= K
    return np.asarray(np.asarray(W, dtype=object) @ M.astype(object) >= K, dtype=bool)


def _abs_z(n: Neuron, vals: list[np.ndarray], rows: int) -> np.ndarray:
    """|pre-activation| of a neuron on all rows (floating point, for margins)."""
    if not vals:
        return np.full(rows, abs(float(n.bias)))
    return np.abs(np.asarray(n.weights, dtype=float) @ np.stack(vals).astype(float) + n.bias)


class ConeCheck:
    """The state of one local check."""

    def __init__(self, net: Network, graph: GateGraph, max_leaves: int, deadline: float) -> None:
        self.net = net
        self.deadline = deadline
        self.input_set = set(net.inputs)
        self.graph = graph
        self.max_leaves = max_leaves
        self.cls = structural_classes(graph)
        self.order = {name: i for i, name in enumerate(graph.gates)}
        self.neurons = {n.name: n for n in net.neurons}
        self.problems: list[str] = []
        self.mismatch: list[str] = []
        self.assignments = 0
        self.margins: dict[str, float] = {}
        self.sat_cones = 0
        self.symmetric_cones = 0
        self._constants: dict[str, bool | None] = {}
        self._verdicts: dict[tuple, bool] = {}
        self._tables: dict[int, tuple[np.ndarray, list[np.ndarray]]] = {}
        self.position = {n.name: j for j, n in enumerate(net.neurons)}
        self.helpers: set[str] = set()
        self._integer: dict[str, tuple[list[int], int]] = {}
        self.read_by_outputs = {self.resolve_output(o.source) for o in net.outputs}
        self.cone_ok: dict[str, bool] = {}
        self.deps: dict[str, set[str]] = {}
        self.input_cones = 0
        self.subnet: dict[str, list[str]] = {}

    def resolve_output(self, unit: str) -> str:
        """The unit an output reads through its relays (aliases are not known yet: the
        relay chain is followed by the one-input identity/negation rule directly)."""
        seen = set()
        while unit in self.neurons and unit not in seen:
            seen.add(unit)
            n = self.neurons[unit]
            if len(n.inputs) == 1 and (n.bias <= 0 < n.weights[0] + n.bias
                                       or n.weights[0] + n.bias <= 0 < n.bias):
                unit = n.inputs[0]
            else:
                break
        return unit

    def integer(self, name: str) -> tuple[list[int], int]:
        """The neuron's exact integer form Σ W·x ≥ K (cached)."""
        if name not in self._integer:
            n = self.neurons[name]
            self._integer[name] = integer_threshold(n.weights, n.bias)
        return self._integer[name]

    # -- units and what they carry
    def setup(self, cones: dict[str, Any]) -> bool:
        """Read the cone records; resolve relays; the class each unit carries."""
        self.cones: dict[str, tuple[str, list[str]]] = {}
        for name in sorted(cones):
            entry = cones[name]
            root = entry.get("root") if isinstance(entry, dict) else None
            leaves = entry.get("leaves") if isinstance(entry, dict) else None
            if name not in self.neurons or not isinstance(root, str) or not (
                isinstance(leaves, list) and all(isinstance(x, str) for x in leaves)
            ):
                self.problems.append(f"malformed cone record for {name!r}")
                continue
            unknown = [s for s in [root] + leaves if s not in self.cls]
            if unknown:
                self.problems.append(
                    f"the cone of {name!r} names signal(s) not in the gate graph: "
                    f"{', '.join(unknown[:3])}"
                )
                continue
            self.cones[name] = (root, leaves)
        self.alias: dict[str, tuple[str, bool]] = {}
        for n in self.net.neurons:
            if n.name not in self.cones and len(n.inputs) == 1:
                copy = n.bias <= 0 < n.weights[0] + n.bias
                negate = n.weights[0] + n.bias <= 0 < n.bias
                if copy or negate:
                    base, neg = self.resolve(n.inputs[0])
                    self.alias[n.name] = (base, neg != negate)
        self._output_cones()
        self.carried: dict[str, Cls] = {u: self.cls[u] for u in self.net.inputs if u in self.cls}
        for n in self.net.neurons:
            if n.name in self.cones:
                self.carried[n.name] = self.cls[self.cones[n.name][0]]
            elif n.name in self.alias:
                base, neg = self.alias[n.name]
                if base in self.carried:
                    i, f = self.carried[base]
                    self.carried[n.name] = (i, f != neg)
        return not self.problems

    def _output_cones(self) -> None:
        """An output read from an unrecorded neuron gets a cone of its own: root the
        output's signal, leaves the recorded units (or inputs) that neuron's sub-network
        reads.  It is then checked like any other cone."""
        out_sig = dict(self.graph.outputs)
        for o in self.net.outputs:
            base, neg = self.resolve(o.source)
            sig = out_sig.get(o.name)
            if neg or sig is None or base not in self.neurons or base in self.cones:
                continue
            leaves: list[str] = []
            seen: set[str] = set()
            stack = [base]
            while stack:
                u = stack.pop()
                if u in seen:
                    continue
                seen.add(u)
                b, _ = self.resolve(u)
                if b in self.input_set or (b in self.cones and b != base):
                    leaf = b if b in self.input_set else self.cones[b][0]
                    if leaf not in leaves:
                        leaves.append(leaf)
                elif b in self.neurons:
                    stack.extend(self.neurons[b].inputs)
            self.cones[base] = (sig, leaves)

    def resolve(self, unit: str) -> tuple[str, bool]:
        """The unit a relay chain starts from, and whether it is negated on the way."""
        return self.alias.get(unit, (unit, False))

    # -- one cone
    def check_cone(self, name: str) -> bool:
        """Check one listed neuron (its helpers are added to ``helpers``); the verdict is
        kept in ``cone_ok``.  When the check over the leaves fails (a leaf treated as free
        can take values it never takes, or the cone is not closed by its leaves), the cone
        is checked again exactly over the primary inputs it depends on, when they are few."""
        marks = (len(self.mismatch), len(self.problems))
        ok = self._check_cone(name)
        if not ok and name in self.deps and self._check_cone_inputs(name):
            del self.mismatch[marks[0]:]
            del self.problems[marks[1]:]
            ok = True
        self.cone_ok[name] = ok
        return ok

    def _check_cone_inputs(self, name: str) -> bool:
        """The neuron against its root on every assignment of the primary inputs that the
        root and the leaves depend on (at most ``max_leaves`` of them).  Exact: the leaf
        units are taken to carry their signals' values (proved for them separately)."""
        root, leaves = self.cones[name]
        region: list[str] = []
        support: list[str] = []
        seen: set[str] = set()
        stack = [root, *leaves]
        while stack:
            s = stack.pop()
            if s in seen:
                continue
            seen.add(s)
            g = self.graph.gates[s]
            if g.op == "input":
                support.append(s)
                if len(support) > self.max_leaves:
                    return False
                continue
            region.append(s)
            if len(region) > _REGION_MAX:
                return False
            stack.extend(g.args)
        support.sort(key=self.order.__getitem__)
        k, cols = self._table(len(support))
        rows = len(k)
        val: dict[str, np.ndarray] = {s: cols[j] for j, s in enumerate(support)}
        for s in sorted(region, key=self.order.__getitem__):
            g = self.graph.gates[s]
            val[s] = gate_value(g, [val[a] for a in g.args], rows)
        by_class: dict[int, np.ndarray] = {}
        for s in leaves:  # the value of each leaf class (flag False)
            i, neg = self.cls[s]
            by_class.setdefault(i, ~val[s] if neg else val[s])
        units: dict[str, np.ndarray] = {}

        def unit(u: str) -> np.ndarray:
            base, neg = self.resolve(u)
            if base in units:
                v = units[base]
            else:
                i, f = self.carried[base]
                v = ~by_class[i] if f else by_class[i]
            return ~v if neg else v

        sub = self.subnet[name]
        for u in sorted(sub, key=self.position.__getitem__):
            n = self.neurons[u]
            W, K = self.integer(u)
            vals = [unit(i) for i in n.inputs]
            units[u] = _step(W, K, vals, rows)
            if u == name and name in self.read_by_outputs:
                self.margins[name] = float(_abs_z(n, vals, rows).min())
        self.assignments += rows
        if not np.array_equal(units[name], val[root]):
            return False
        self.input_cones += 1
        return True

    def same_function(self, a: str, b: str, negate: bool) -> bool:
        """Whether signals ``a`` and ``b`` (``b`` negated if ``negate``) compute the same
        function, on every assignment of the primary inputs they depend on (at most
        ``max_leaves``; False beyond)."""
        region: list[str] = []
        support: list[str] = []
        seen: set[str] = set()
        stack = [a, b]
        while stack:
            s = stack.pop()
            if s in seen:
                continue
            seen.add(s)
            g = self.graph.gates[s]
            if g.op == "input":
                support.append(s)
                if len(support) > self.max_leaves:
                    return False
                continue
            region.append(s)
            if len(region) > _REGION_MAX:
                return False
            stack.extend(g.args)
        k, cols = self._table(len(support))
        val: dict[str, np.ndarray] = {x: cols[j] for j, x in enumerate(support)}
        for x in sorted(region, key=self.order.__getitem__):
            g = self.graph.gates[x]
            val[x] = gate_value(g, [val[y] for y in g.args], len(k))
        self.assignments += len(k)
        other = ~val[b] if negate else val[b]
        return bool(np.array_equal(val[a], other))

    def _check_cone(self, name: str) -> bool:
        """Check one listed neuron over the values of its leaves."""
        root, leaves = self.cones[name]
        leaf_ids = sorted({self.cls[s][0] for s in leaves})
        index = {i: k for k, i in enumerate(leaf_ids)}
        # the gate-graph region from the root back to the leaves
        found = self._region(root, index)
        if found is None:
            self.problems.append(
                f"the cone of {name!r} is not closed by its leaves (and its root depends on "
                "more than them)"
            )
            return False
        region, extras = found
        # the sub-network from the leaf units to the neuron
        sub: list[str] = []
        deps: set[str] = set()
        seen = set()
        stack = [name]
        while stack:
            u = stack.pop()
            if u in seen:
                continue
            seen.add(u)
            base, _ = self.resolve(u)
            if u != name:
                c = self.carried.get(base)
                if c is not None and c[0] in index:
                    deps.add(base)
                    continue  # a unit carrying a leaf
                if base in self.input_set:
                    self.problems.append(
                        f"{name!r} reads input {u!r}, which is not a leaf of its cone"
                    )
                    return False
                # any other neuron (a helper, or a listed neuron used as one) is evaluated
                # as part of this neuron's sub-network
            if base not in self.neurons:
                self.problems.append(f"{name!r} reads unit {u!r}, which carries no signal")
                return False
            sub.append(base)
            stack.extend(self.neurons[base].inputs)
        self.helpers.update(u for u in sub if u != name)
        self.deps[name] = deps
        self.subnet[name] = sub
        consts: dict[int, bool] = {}
        if CONST_CLASS in index:  # a constant leaf is no variable: it is 1 (flag False)
            consts[CONST_CLASS] = True
            leaf_ids.remove(CONST_CLASS)
            index.clear()
            index.update((i, k) for k, i in enumerate(leaf_ids))
        for e in extras:  # signals the leaves do not determine: constants, or free
            value = self._constant(e)
            if value is None:
                index[self.cls[e][0]] = len(index)
                leaf_ids.append(self.cls[e][0])
            else:
                consts[self.cls[e][0]] = value != self.cls[e][1]
        m = len(leaf_ids)
        if m > self.max_leaves:
            if consts or not self._symmetric(root, region, sub, index):
                return self._check_cone_sat(name, root, region, sub, index, consts)
            # both sides depend only on how many leaves are true: one row per count
            k = np.arange(m + 1, dtype=np.int64)
            cols = [k > j for j in range(m)]
            self.symmetric_cones += 1
        else:
            k, cols = self._table(m)
        self.assignments += len(k)
        key = None
        if m <= self.max_leaves and name not in self.read_by_outputs:
            key = self._shape(root, region, sub, index, consts)
            if self._verdicts.get(key) is True:  # the same cone, up to names, was proven
                return True
        got, want = self._evaluate(name, root, region, sub, cols, index, consts)
        ok = bool(np.array_equal(got, want))
        if key is not None:
            self._verdicts[key] = ok
        if not ok:
            bad = int(np.nonzero(got != want)[0][0])
            example = ", ".join(
                f"{self._leaf_name(leaves, i)}={int(cols[index[i]][bad])}" for i in leaf_ids
            )
            self.mismatch.append(
                f"{name!r} differs from its cone (root {root!r}) at {example}"
            )
            return False
        return True

    def _region(self, root: str, index: dict[int, int]) -> tuple[list[str], list[str]] | None:
        """The gates between the leaves and the root, and the signals standing as extra
        free variables (none when the leaves close the cone).

        When the walk from the root reaches an input that is not a leaf, the cone is not
        closed; the region is then cut at the root's nearest signals that the leaves do not
        determine, and those become free variables (the neuron must then equal the root for
        every value of them: e.g. a root that is constant whatever they are).  None when
        the cone is too large to search.
        """
        region: list[str] = []
        seen: set[str] = set()
        stack = [root]
        closed = True
        while stack:
            s = stack.pop()
            if s in seen:
                continue
            seen.add(s)
            if self.cls[s][0] in index:
                continue
            g = self.graph.gates[s]
            if g.op == "input":
                closed = False
                continue
            region.append(s)
            if len(region) > _REGION_MAX:
                return None
            stack.extend(g.args)
        if closed:
            return region, []
        # which signals of the cone the leaves determine, bottom-up
        determined: dict[str, bool] = {}
        for s in sorted(region, key=self.order.__getitem__):
            determined[s] = all(
                self.cls[a][0] in index or determined.get(a, False)
                or self._constant(a) is not None
                for a in self.graph.gates[s].args
            )
        keep: list[str] = []
        extra: dict[int, str] = {}
        stack, seen = [root], set()
        while stack:
            s = stack.pop()
            if s in seen:
                continue
            seen.add(s)
            if self.cls[s][0] in index:
                continue
            if s != root and not determined.get(s, False):
                extra.setdefault(self.cls[s][0], s)
                continue
            keep.append(s)
            stack.extend(self.graph.gates[s].args)
        return keep, [extra[i] for i in sorted(extra)]

    def _table(self, m: int) -> tuple[np.ndarray, list[np.ndarray]]:
        """Row numbers and leaf columns of the truth table of ``m`` leaves (cached)."""
        if m not in self._tables:
            k = np.arange(1 << m, dtype=np.int64)
            self._tables[m] = (k, [((k >> j) & 1).astype(bool) for j in range(m)])
        return self._tables[m]

    def _shape(self, root: str, region: list[str], sub: list[str], index: dict[int, int],
               consts: dict[int, bool]) -> tuple:
        """A key equal for two cones that compute the same thing up to the names of their
        signals and units: the region's gates and the sub-network's neurons with their
        arguments written as positions (of leaves, of gates, of neurons) and constants."""
        gates = sorted(region, key=self.order.__getitem__)
        gpos = {s: i for i, s in enumerate(gates)}

        def ref(a: str) -> tuple:
            if a in gpos:
                return ("g", gpos[a])
            i, neg = self.cls[a]
            return ("c", consts[i] != neg) if i in consts else ("l", index[i], neg)

        units = sorted(sub, key=self.position.__getitem__)
        upos = {u: i for i, u in enumerate(units)}

        def uref(u: str) -> tuple:
            base, neg = self.resolve(u)
            if base in upos:
                return ("n", upos[base], neg)
            i, flag = self.carried[base]
            if i in consts:
                return ("c", consts[i] != (flag != neg))
            return ("l", index[i], flag != neg)

        gate_part = tuple(
            (g.op, g.weights, g.threshold, g.value, tuple(ref(a) for a in g.args))
            for g in (self.graph.gates[x] for x in gates)
        )
        unit_part = tuple(
            (tuple(W), K, tuple(uref(i) for i in self.neurons[u].inputs))
            for u in units
            for W, K in (self.integer(u),)
        )
        return (len(index), gate_part, ref(root), unit_part)

    def _constant(self, s: str) -> bool | None:
        """The value of signal ``s`` when it is constant, found by enumerating its whole
        support (at most :data:`_CONST_SUPPORT` inputs); else None (cached)."""
        if s not in self._constants:
            self._constants[s] = self._find_constant(s)
        return self._constants[s]

    def _find_constant(self, s: str) -> bool | None:
        """See :meth:`_constant`."""
        if self.graph.gates[s].op == "input":
            return None
        region: list[str] = []
        support: list[str] = []
        seen: set[str] = set()
        stack = [s]
        while stack:
            x = stack.pop()
            if x in seen:
                continue
            seen.add(x)
            g = self.graph.gates[x]
            if g.op == "input":
                support.append(x)
                if len(support) > _CONST_SUPPORT:
                    return None
                continue
            region.append(x)
            if len(region) > _CONST_REGION:
                return None
            stack.extend(g.args)
        k = np.arange(1 << len(support), dtype=np.int64)
        val = {x: ((k >> j) & 1).astype(bool) for j, x in enumerate(support)}
        for x in sorted(region, key=self.order.__getitem__):
            g = self.graph.gates[x]
            val[x] = gate_value(g, [val[a] for a in g.args], len(k))
        v = val[s]
        if v.all():
            return True
        if not v.any():
            return False
        return None

    def _evaluate(self, name: str, root: str, region: list[str], sub: list[str],
                  cols: list[np.ndarray], index: dict[int, int],
                  consts: dict[int, bool]) -> tuple[np.ndarray, np.ndarray]:
        """The neuron's and the root's values on the rows given by the leaf columns."""
        rows = len(cols[0]) if cols else 1
        val: dict[str, np.ndarray] = {}

        def signal(s: str) -> np.ndarray:
            if s in val:
                return val[s]
            i, neg = self.cls[s]
            if i in consts:
                return np.full(rows, consts[i] != neg)
            return ~cols[index[i]] if neg else cols[index[i]]

        for s in sorted(region, key=self.order.__getitem__):
            g = self.graph.gates[s]
            val[s] = gate_value(g, [signal(a) for a in g.args], rows)
        units: dict[str, np.ndarray] = {}

        def unit(u: str) -> np.ndarray:
            base, neg = self.resolve(u)
            if base in units:
                v = units[base]
            else:
                i, f = self.carried[base]
                if i in consts:
                    v = np.full(rows, consts[i] != f)
                else:
                    v = ~cols[index[i]] if f else cols[index[i]]
            return ~v if neg else v

        for u in sorted(sub, key=self.position.__getitem__):
            n = self.neurons[u]
            W, K = self.integer(u)
            vals = [unit(i) for i in n.inputs]
            units[u] = _step(W, K, vals, rows)
            if u == name and name in self.read_by_outputs:
                self.margins[name] = float(_abs_z(n, vals, rows).min())
        return units[name], signal(root)

    def _symmetric(self, root: str, region: list[str], sub: list[str],
                   index: dict[int, int]) -> bool:
        """Whether both sides provably depend only on the number of true leaves.

        Gate side: the region is xor/xnor/not/buf gates whose parity form reads every leaf
        an odd number of times, or the root alone is an and/or/nand/nor/threshold/equal gate
        reading every leaf once, all with one polarity and one weight.  Network side: every
        neuron of the sub-network reads every leaf once with one effective weight (negated
        units count as −w), or none at all.
        """
        full = (1 << len(index)) - 1
        ops = {self.graph.gates[s].op for s in region}
        if ops <= {"xor", "xnor", "not", "buf"}:
            lin: dict[str, int] = {}

            def form(s: str) -> int:
                if s in lin:
                    return lin[s]
                i = self.cls[s][0]
                return 1 << index[i] if i in index else 0  # a constant adds no leaf

            for s in sorted(region, key=self.order.__getitem__):
                lin[s] = 0
                for a in self.graph.gates[s].args:
                    lin[s] ^= form(a)
            if form(root) != full:
                return False
        else:
            g = self.graph.gates[root]
            if region != [root] or g.op not in ("and", "or", "nand", "nor", "threshold",
                                                 "equal"):
                return False
            weights = (g.weights if g.op in ("threshold", "equal") and g.weights is not None
                       else (1,) * len(g.args))
            terms = {(self.cls[a][1], w) for a, w in zip(g.args, weights)}
            ids = [self.cls[a][0] for a in g.args]
            if len(terms) != 1 or len(set(ids)) != len(ids) or len(ids) != len(index):
                return False
        for u in sub:
            n = self.neurons[u]
            eff: dict[int, float] = {}
            for i, w in zip(n.inputs, n.weights):
                base, neg = self.resolve(i)
                if base in sub:
                    continue
                cid, flag = self.carried[base]
                if cid not in index:
                    return False  # a constant input: keep it simple, not symmetric
                eff[index[cid]] = eff.get(index[cid], 0.0) + (-w if neg != flag else w)
            if eff and (len(eff) != len(index) or len(set(eff.values())) != 1):
                return False
        return True

    def _leaf_name(self, leaves: list[str], i: int) -> str:
        """A signal of class ``i`` to name in a message (a leaf if one has it)."""
        for s in leaves:
            if self.cls[s][0] == i:
                return s
        return next(s for s, c in self.cls.items() if c[0] == i)

    def _check_cone_sat(self, name: str, root: str, region: list[str], sub: list[str],
                        index: dict[int, int], consts: dict[int, bool]) -> bool:
        """A cone with many leaves: a miter between its region and its sub-network, over
        one input per leaf class (constants substituted)."""
        ids = sorted(index, key=index.__getitem__)
        names = [f"v{k}" for k in range(len(ids))]
        position = self.position

        def leaf_lit(ins: dict[str, int], c: Cls) -> int:
            if c[0] in consts:
                return TRUE if consts[c[0]] != c[1] else -TRUE
            lit = ins[names[index[c[0]]]]
            return -lit if c[1] else lit

        def side_gates(c: Any, ins: dict[str, int]) -> dict[str, int]:
            lit: dict[str, int] = {}
            for s in sorted(region, key=self.order.__getitem__):
                g = self.graph.gates[s]
                args = [lit[a] if a in lit else leaf_lit(ins, self.cls[a]) for a in g.args]
                lit[s] = gate_literal(c, g, args, s)
            return {"y": lit[root] if root in lit else leaf_lit(ins, self.cls[root])}

        def side_net(c: Any, ins: dict[str, int]) -> dict[str, int]:
            lit: dict[str, int] = {}

            def unit(u: str) -> int:
                base, neg = self.resolve(u)
                v = lit[base] if base in lit else leaf_lit(ins, self.carried[base])
                return -v if neg else v

            for u in sorted(sub, key=position.__getitem__):
                W, K = self.integer(u)
                lit[u] = c.geq(W, [unit(i) for i in self.neurons[u].inputs], K)
            return {"y": lit[name]}

        outcome = prove_equivalent(names, ["y"], side_gates, side_net,
                                   time_limit=max(self.deadline - time.perf_counter(), 0.1))
        self.sat_cones += 1
        if outcome.status != "equal":
            what = "differs from" if outcome.status == "different" else "was not proven equal to"
            self.mismatch.append(f"{name!r} {what} its cone (root {root!r}, {len(names)} leaves)")
            return False
        return True

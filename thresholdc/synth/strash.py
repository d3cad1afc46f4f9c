"""Structural hashing: a gate graph as a graph of distinct nodes with complemented edges.

Rules
    * A *literal* is ``2·node + negated``; node 0 is the constant 0, so literal 0 is false and
      literal 1 is true.  ``not`` and ``buf`` gates make no node: they change the literal.
    * Each gate is put in a one-level canonical form over its argument literals, then looked up
      in a table, so duplicate gates become one node:
      ``and`` (sorted, repeats dropped; ``or``/``nand``/``nor`` are ``and`` with complemented
      edges), ``xor`` (arguments plain, the polarity moved to the output, pairs cancelled),
      ``thr`` (``Σ wᵢ·litᵢ ≥ T`` with positive weights, repeats combined; all-ones weights with
      ``T = n`` become ``and``), ``eq`` (``Σ wᵢ·litᵢ == T``), ``ite`` (condition plain, ``then``
      plain), ``real`` (a comparison on a real input, kept as it is).  Constants fold.
    * Every node keeps one *representative*: the first signal (in graph order) that maps to it,
      with the polarity of that signal relative to the node.  Arguments the representative's
      gate reads but its canonical form dropped (``x ⊕ x``) are kept as *ghost* arguments, so
      that cuts stay closed over the gate as written.  Every other signal is an *alias*
      of a representative (or of a constant).  An alias is one-level checkable: the signal's
      own gate, over its arguments read through the aliases, computes the same function as the
      representative's gate (or the constant).
    * Associative chains are also *flattened* (for synthesis only; the nodes stay as they are):
      an ``and`` node lists the arguments of plain ``and`` arguments, an ``xor`` node those of
      its ``xor`` arguments, up to :data:`FLAT_LIMIT` arguments.

>>> from thresholdc.synth.gates import Gate, GateGraph
>>> g = GateGraph.build(["a", "b"], [("y", "y"), ("z", "z")],
...     [("y", Gate("nand", ("a", "b"))), ("z", Gate("and", ("b", "a")))])
>>> h = hash_gates(g)
>>> h.lit_of["y"] == h.lit_of["z"] ^ 1, h.aliases
(True, {'z': {'signal': 'y', 'negated': True}})
"""

from __future__ import annotations

from .gates import GateGraph

__all__ = ["Hashed", "hash_gates", "FLAT_LIMIT"]

#: The largest number of arguments a flattened chain collects.
FLAT_LIMIT = 64


class Hashed:
    """The hashed graph: parallel lists indexed by node, in topological order."""

    def __init__(self) -> None:
        self.op: list[str] = ["const"]
        self.fanins: list[tuple[int, ...]] = [()]
        self.weights: list[tuple[int, ...] | None] = [None]
        self.threshold: list[int | None] = [None]
        self.real: list[tuple[str, float] | None] = [None]
        self.rep: list[str | None] = [None]
        self.rep_neg: list[int] = [0]
        self.origin: list[str | None] = [None]
        self.flat: dict[int, tuple[int, ...]] = {}
        self.ghost: dict[int, tuple[int, ...]] = {}
        self.lit_of: dict[str, int] = {}
        self.aliases: dict[str, dict[str, object]] = {}
        self.inputs: list[int] = []
        self.table: dict[tuple, int] = {}

    def __len__(self) -> int:
        return len(self.op)

    def __repr__(self) -> str:
        return f"Hashed(nodes={len(self.op)}, inputs={len(self.inputs)})"

    def node(self, key: tuple, fanins: tuple[int, ...], weights=None, threshold=None,
             real=None) -> int:
        """The node for a canonical ``key`` (created if new); returns the node id."""
        got = self.table.get(key)
        if got is not None:
            return got
        nid = len(self.op)
        self.table[key] = nid
        self.op.append(key[0])
        self.fanins.append(fanins)
        self.weights.append(weights)
        self.threshold.append(threshold)
        self.real.append(real)
        self.rep.append(None)
        self.rep_neg.append(0)
        self.origin.append(None)
        return nid

    def fanouts(self) -> list[int]:
        """How many node fanins read each node."""
        count = [0] * len(self.op)
        for fs in self.fanins:
            for lit in fs:
                count[lit >> 1] += 1
        return count


# ------------------------------------------------------------------------------ canonical forms


def _and(h: Hashed, lits: list[int]) -> int:
    """``and`` of literals."""
    seen: set[int] = set()
    out = []
    for lit in lits:
        if lit == 0:
            return 0
        if lit == 1 or lit in seen:
            continue
        if lit ^ 1 in seen:
            return 0
        seen.add(lit)
        out.append(lit)
    if not out:
        return 1
    if len(out) == 1:
        return out[0]
    fan = tuple(sorted(out))
    return 2 * h.node(("and", fan), fan)


def _xor(h: Hashed, lits: list[int], neg: int) -> int:
    """``xor`` of literals, complemented when ``neg``."""
    odd: dict[int, int] = {}
    for lit in lits:
        neg ^= lit & 1
        base = lit & ~1
        if base:
            odd[base] = odd.get(base, 0) ^ 1
    fan = tuple(sorted(b for b, c in odd.items() if c))
    if not fan:
        return neg
    if len(fan) == 1:
        return fan[0] ^ neg
    return 2 * h.node(("xor", fan), fan) ^ neg


def _linear(terms: list[tuple[int, int]], T: int) -> tuple[list[tuple[int, int]], int, int]:
    """Terms ``(w, lit)`` of ``Σ w·lit`` folded to positive weights on literals: returns
    ``(terms, T', total)`` with ``Σ w·lit - T`` unchanged (constants moved into ``T'``)."""
    coef: dict[int, int] = {}
    for w, lit in terms:
        base = lit >> 1
        if base == 0:
            T -= w * (lit & 1)
            continue
        # w·lit over the plain variable x: lit = x (coef w) or 1 - x (coef -w, constant w)
        if lit & 1:
            coef[2 * base] = coef.get(2 * base, 0) - w
            T -= w
        else:
            coef[2 * base] = coef.get(2 * base, 0) + w
    out = []
    for lit, c in sorted(coef.items()):
        if c > 0:
            out.append((c, lit))
        elif c < 0:
            out.append((-c, lit | 1))
            T += -c
    return out, T, sum(w for w, _ in out)


def _thr(h: Hashed, terms: list[tuple[int, int]], T: int) -> int:
    """``[Σ w·lit ≥ T]``."""
    out, T, total = _linear(terms, T)
    if T <= 0:
        return 1
    if T > total:
        return 0
    if len(out) == 1:
        return out[0][1]
    if all(w == 1 for w, _ in out):
        if T == len(out):
            return _and(h, [lit for _, lit in out])
        if T == 1:
            return _and(h, [lit ^ 1 for _, lit in out]) ^ 1
    # put the weights in lowest terms (a common factor of the weights divides the sum)
    from math import gcd

    g = 0
    for w, _ in out:
        g = gcd(g, w)
    if g > 1:
        out = [(w // g, lit) for w, lit in out]
        T = -((-T) // g)
    fan = tuple(lit for _, lit in out)
    ws = tuple(w for w, _ in out)
    return 2 * h.node(("thr", fan, ws, T), fan, ws, T)


def _eq(h: Hashed, terms: list[tuple[int, int]], T: int) -> int:
    """``[Σ w·lit == T]``."""
    out, T, total = _linear(terms, T)
    if T < 0 or T > total:
        return 0
    if not out:
        return 1
    if T == total:
        return _and(h, [lit for _, lit in out])
    if T == 0:
        return _and(h, [lit ^ 1 for _, lit in out])
    if len(out) == 1:
        return 0  # 0 < T < w: never
    fan = tuple(lit for _, lit in out)
    ws = tuple(w for w, _ in out)
    return 2 * h.node(("eq", fan, ws, T), fan, ws, T)


def _ite(h: Hashed, c: int, t: int, e: int) -> int:
    """``if c then t else e``."""
    if c <= 1:
        return t if c == 1 else e
    if c & 1:
        c, t, e = c ^ 1, e, t
    if t == e:
        return t
    if t == e ^ 1:
        return _xor(h, [c, e], 0)
    if t <= 1:
        return _and(h, [c ^ 1, e ^ 1]) ^ 1 if t == 1 else _and(h, [c ^ 1, e])
    if e <= 1:
        return _and(h, [c, t]) if e == 0 else _and(h, [c, t ^ 1]) ^ 1  # c and t | not c or t
    if t == c:
        return _and(h, [c ^ 1, e ^ 1]) ^ 1  # c or e
    if t == c ^ 1:
        return _and(h, [c ^ 1, e])
    if e == c:
        return _and(h, [c, t])
    if e == c ^ 1:
        return _and(h, [c, t ^ 1]) ^ 1  # not c or t
    neg = 0
    if t & 1:
        t, e, neg = t ^ 1, e ^ 1, 1
    fan = (c, t, e)
    return 2 * h.node(("ite", fan), fan) ^ neg


# ------------------------------------------------------------------------------ the pass


def hash_gates(gates: GateGraph) -> Hashed:
    """The structurally hashed form of ``gates`` (see the module docstring); the input graph is
    not changed.

    >>> from thresholdc.synth.gates import Gate, GateGraph
    >>> g = GateGraph.build(["a", "b"], [("y", "y")], [("n", Gate("not", ("a",))),
    ...     ("y", Gate("or", ("n", "b")))])
    >>> h = hash_gates(g)
    >>> h.op[h.lit_of["y"] >> 1], h.rep[h.lit_of["y"] >> 1]
    ('and', 'y')
    """
    h = Hashed()
    lit_of = h.lit_of
    for sig, g in gates.gates.items():
        op = g.op
        args = [lit_of[a] for a in g.args]
        if op == "input":
            nid = h.node(("input", sig), ())
            h.inputs.append(nid)
            lit = 2 * nid
        elif op == "const":
            lit = 1 if g.value else 0
        elif op == "buf":
            lit = args[0]
        elif op == "not":
            lit = args[0] ^ 1
        elif op == "and":
            lit = _and(h, args)
        elif op == "nand":
            lit = _and(h, args) ^ 1
        elif op == "or":
            lit = _and(h, [a ^ 1 for a in args]) ^ 1
        elif op == "nor":
            lit = _and(h, [a ^ 1 for a in args])
        elif op in ("xor", "xnor"):
            lit = _xor(h, args, int(op == "xnor"))
        elif op == "threshold":
            lit = _thr(h, list(zip(g.weights or (), args)), int(g.threshold or 0))
        elif op == "equal":
            lit = _eq(h, list(zip(g.weights or (), args)), int(g.threshold or 0))
        elif op == "ite":
            lit = _ite(h, args[0], args[1], args[2])
        elif op == "realcmp":
            fan = (args[0],)
            nid = h.node(("real", args[0], g.real_test), fan, real=g.real_test)
            lit = 2 * nid
        else:
            raise AssertionError(f"unknown gate op {op!r}")
        lit_of[sig] = lit
        nid = lit >> 1
        if nid and h.rep[nid] is None:
            h.rep[nid] = sig
            h.rep_neg[nid] = lit & 1
            h.origin[nid] = g.origin
            # arguments the gate reads that its canonical form dropped (x ⊕ x, w·x − w·x):
            # a cone of this signal must still reach them
            kept = {a >> 1 for a in h.fanins[nid]}
            ghost = sorted({a >> 1 for a in args} - kept - {0})
            if ghost and op != "input":
                h.ghost[nid] = tuple(ghost)
        elif op != "input":
            if nid == 0:
                h.aliases[sig] = {"value": lit & 1}
            else:
                h.aliases[sig] = {
                    "signal": h.rep[nid], "negated": bool((lit ^ h.rep_neg[nid]) & 1),
                }
    _flatten(h)
    return h


def _flatten(h: Hashed) -> None:
    """Fill ``h.flat`` for ``and`` and ``xor`` nodes that read nodes of their own kind (none
    with ghost arguments, which a flattened chain would lose)."""
    for nid in range(1, len(h.op)):
        op = h.op[nid]
        if nid in h.ghost or any((lit >> 1) in h.ghost for lit in h.fanins[nid]):
            continue
        if op == "and":
            out: list[int] = []
            grew = False
            for lit in h.fanins[nid]:
                sub = lit >> 1
                if not lit & 1 and h.op[sub] == "and":
                    out.extend(h.flat.get(sub, h.fanins[sub]))
                    grew = True
                else:
                    out.append(lit)
            if grew:
                fan = sorted(set(out))
                if len(h.fanins[nid]) < len(fan) <= FLAT_LIMIT and not any(
                    x ^ 1 in fan for x in fan
                ):
                    h.flat[nid] = tuple(fan)
        elif op == "xor":
            odd: dict[int, int] = {}
            grew = False
            for lit in h.fanins[nid]:
                sub = lit >> 1
                if h.op[sub] == "xor":
                    grew = True
                    for b in h.flat.get(sub, h.fanins[sub]):
                        odd[b] = odd.get(b, 0) ^ 1
                else:
                    odd[lit] = odd.get(lit, 0) ^ 1
            if grew and all(odd.values()):  # a cancelled pair would drop a leaf the
                fan = sorted(odd)              # gates still read
                if len(fan) <= FLAT_LIMIT and len(fan) > len(h.fanins[nid]):
                    h.flat[nid] = tuple(fan)

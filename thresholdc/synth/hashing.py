"""Structural hashing: a gate graph as a graph of distinct nodes with complemented edges.

Rules
    * A *literal* is ``2·node + negated``; node 0 is the constant 0, so literal 0 is false and
      literal 1 is true.  ``not`` and ``buf`` gates make no node: they change the literal.
    * Which signals share a node is decided by structural classes that refine those of the
      local check (:func:`thresholdc.verification.structural.structural_classes`; its core rules are
      restated here so synthesis needs no verifier): ``buf`` is its argument, ``not`` flips,
      ``or``/``nand``/``nor`` are (negated) ``and`` of (negated) arguments, xor/xnor fold
      argument negations and cancel pairs, threshold/equal gates fold negated arguments,
      ``ite`` with a negated condition swaps its branches, commutative arguments are sorted.
      The check folds constants too (it merges more); every merge made here is one it
      recognises, which a test checks.
    * Each node's *function* is the first gate of its class in a one-level canonical form over
      its argument literals: ``and`` (sorted, repeats dropped), ``xor`` (arguments plain,
      polarity moved out), ``thr`` (``Σ wᵢ·litᵢ ≥ T`` with positive weights, in lowest terms;
      all-ones weights with ``T = n`` are ``and``), ``eq`` (``Σ wᵢ·litᵢ == T``), ``ite``,
      ``buf`` (a gate equal to one literal), ``const``, ``real`` (a comparison on a real input).
      Constants fold.  Arguments the gate reads that the canonical form dropped (``x·0``,
      ``w·x − w·x``) are kept as *ghost* arguments, so cuts stay closed over the gate as written.
    * Every node keeps one *representative*: the first signal (in graph order) of its class,
      with the polarity of that signal relative to the node.
    * Associative chains are also *flattened* (for synthesis only; the nodes stay as they are):
      an ``and`` node lists the arguments of plain ``and`` arguments, an ``xor`` node those of
      its ``xor`` arguments, up to :data:`FLAT_LIMIT` arguments.

>>> from thresholdc.ir.gates import Gate, GateGraph
>>> g = GateGraph.build(["a", "b"], [("y", "y"), ("z", "z")],
...     [("y", Gate("nand", ("a", "b"))), ("z", Gate("and", ("b", "a")))])
>>> h = hash_gates(g)
>>> h.lit_of["y"] == h.lit_of["z"] ^ 1, h.rep[h.lit_of["z"] >> 1]
(True, 'y')
"""

from __future__ import annotations

from math import gcd

from ..ir.gates import GateGraph

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
        self.inner: dict[int, frozenset[int]] = {}
        self.lit_of: dict[str, int] = {}
        self.value: dict[int, int] = {}
        self.inputs: list[int] = []

    def __len__(self) -> int:
        return len(self.op)

    def __repr__(self) -> str:
        return f"Hashed(nodes={len(self.op)}, inputs={len(self.inputs)})"

    def node(self, key: tuple, fanins: tuple[int, ...], weights=None, threshold=None,
             real=None) -> int:
        """A new node of kind ``key[0]`` (identity is the caller's: one node per class)."""
        nid = len(self.op)
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
    return 2 * h.node(("and",), fan)


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
    return 2 * h.node(("xor",), fan) ^ neg


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
    g = 0
    for w, _ in out:
        g = gcd(g, w)
    if g > 1:
        out = [(w // g, lit) for w, lit in out]
        T = -((-T) // g)
    fan = tuple(lit for _, lit in out)
    ws = tuple(w for w, _ in out)
    return 2 * h.node(("thr",), fan, ws, T)


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
    return 2 * h.node(("eq",), fan, ws, T)


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
    return 2 * h.node(("ite",), fan) ^ neg


# ------------------------------------------------------------------------------ the pass


def _classes(gates: GateGraph) -> tuple[dict[str, tuple[int, bool]], int | None]:
    """The structural class ``(id, negated)`` of every signal (the core rules of
    :func:`thresholdc.verification.structural.structural_classes`, without its constant
    folding), and the id of the constant class (true when not negated)."""
    table: dict[tuple, int] = {}
    cls: dict[str, tuple[int, bool]] = {}

    def cid(key: tuple) -> int:
        return table.setdefault(key, len(table))

    for name, g in gates.gates.items():
        op = g.op
        args = [cls[a] for a in g.args]
        if op == "input":
            cls[name] = (cid(("input", name)), False)
        elif op == "const":
            cls[name] = (cid(("const",)), not g.value)
        elif op == "buf":
            cls[name] = args[0]
        elif op == "not":
            cls[name] = (args[0][0], not args[0][1])
        elif op in ("and", "nand", "or", "nor"):
            inverted = op in ("or", "nor")
            lits = sorted({(i, n != inverted) for i, n in args})
            c = lits[0] if len(lits) == 1 else (cid(("and", tuple(lits))), False)
            cls[name] = (c[0], c[1] != (op in ("nand", "or")))
        elif op in ("xor", "xnor"):
            odd: dict[int, int] = {}
            flip = op == "xnor"
            for i, n in args:
                flip ^= n
                odd[i] = odd.get(i, 0) ^ 1
            ids = tuple(sorted(i for i, k in odd.items() if k))
            if not ids:
                cls[name] = (cid(("const",)), not flip)
            elif len(ids) == 1:
                cls[name] = (ids[0], flip)
            else:
                cls[name] = (cid(("xor", ids)), flip)
        elif op in ("threshold", "equal"):
            coef: dict[int, int] = {}
            t = int(g.threshold or 0)
            for (i, n), w in zip(args, g.weights or ()):
                if n:
                    t -= w
                    coef[i] = coef.get(i, 0) - w
                else:
                    coef[i] = coef.get(i, 0) + w
            terms = tuple(sorted((i, w) for i, w in coef.items() if w))
            cls[name] = (cid((op, terms, t)), False)
        elif op == "ite":
            c, t, e = args  # type: ignore[assignment]
            if c[1]:
                t, e = e, t  # type: ignore[assignment]
            cls[name] = (cid(("ite", c[0], t, e)), False)
        else:
            cls[name] = (cid(("opaque", name)), False)
    return cls, table.get(("const",))


def _canonical(h: Hashed, sig: str, op: str, g, args: list[int]) -> int:
    """The literal of a gate in canonical form (creating at most one node)."""
    if op == "buf":
        return args[0]
    if op == "not":
        return args[0] ^ 1
    if op == "and":
        return _and(h, args)
    if op == "nand":
        return _and(h, args) ^ 1
    if op == "or":
        return _and(h, [a ^ 1 for a in args]) ^ 1
    if op == "nor":
        return _and(h, [a ^ 1 for a in args])
    if op in ("xor", "xnor"):
        return _xor(h, args, int(op == "xnor"))
    if op == "threshold":
        return _thr(h, list(zip(g.weights or (), args)), int(g.threshold or 0))
    if op == "equal":
        return _eq(h, list(zip(g.weights or (), args)), int(g.threshold or 0))
    if op == "ite":
        return _ite(h, args[0], args[1], args[2])
    if op == "realcmp":
        return 2 * h.node(("real",), (args[0],), real=g.real_test)
    raise AssertionError(f"unknown gate op {op!r}")


def hash_gates(gates: GateGraph) -> Hashed:
    """The structurally hashed form of ``gates`` (see the module docstring); the input graph is
    not changed.

    >>> from thresholdc.ir.gates import Gate, GateGraph
    >>> g = GateGraph.build(["a", "b"], [("y", "y")], [("n", Gate("not", ("a",))),
    ...     ("y", Gate("or", ("n", "b")))])
    >>> h = hash_gates(g)
    >>> h.op[h.lit_of["y"] >> 1], h.rep[h.lit_of["y"] >> 1]
    ('and', 'y')
    """
    h = Hashed()
    lit_of = h.lit_of
    classes, const_class = _classes(gates)
    # class id -> (node, polarity): a signal of class (id, neg) is node ^ polarity ^ neg
    of_class: dict[int, tuple[int, int]] = {}
    for sig, g in gates.gates.items():
        op = g.op
        c, cneg = classes[sig]
        got = of_class.get(c)
        args = [lit_of[a] for a in g.args]
        if got is not None:
            nid = got[0]
            lit_of[sig] = 2 * nid ^ got[1] ^ int(cneg)
            # a cone may be walked through this signal too: what it reads beyond the node's
            # own arguments (a cancelled pair) are ghost arguments of the node (those made
            # after the node cannot be; a check treats them as free, and the node ignores them)
            if nid:
                extra = {a >> 1 for a in args} - {a >> 1 for a in h.fanins[nid]} - {0, nid}
                extra = {x for x in extra if x < nid} - set(h.ghost.get(nid, ()))
                if extra:
                    h.ghost[nid] = tuple(sorted(set(h.ghost.get(nid, ())) | extra))
            continue
        if op == "input":
            nid = h.node(("input",), ())
            h.inputs.append(nid)
            lit = 2 * nid
        elif c == const_class:
            lit = int(not cneg)  # the constant class is node 0 (true when not negated)
        else:
            size = len(h.op)
            lit = _canonical(h, sig, op, g, args)
            if len(h.op) == size:  # the class reduced to a literal: a node of its own
                if lit <= 1:
                    nid = h.node(("const",), ())
                    h.value[nid] = lit
                else:
                    nid = h.node(("buf",), (lit,))
                lit = 2 * nid
        lit_of[sig] = lit
        of_class[c] = (lit >> 1, (lit & 1) ^ int(cneg))
        nid = lit >> 1
        if nid and h.rep[nid] is None:
            h.rep[nid] = sig
            h.rep_neg[nid] = lit & 1
            h.origin[nid] = g.origin
            # arguments the gate reads that its canonical form dropped (x·0, x ⊕ x,
            # w·x − w·x): a cone of this signal must still reach them
            kept = {a >> 1 for a in h.fanins[nid]}
            ghost = sorted({a >> 1 for a in args} - kept - {0})
            if ghost and op != "input":
                h.ghost[nid] = tuple(ghost)
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
            inner: set[int] = set()  # the chain nodes a flattened list reads through
            for lit in h.fanins[nid]:
                sub = lit >> 1
                if not lit & 1 and h.op[sub] == "and":
                    out.extend(h.flat.get(sub, h.fanins[sub]))
                    inner.add(sub)
                    inner.update(h.inner.get(sub, ()))
                else:
                    out.append(lit)
            if inner:
                fan = sorted(set(out))
                if len(h.fanins[nid]) < len(fan) <= FLAT_LIMIT and not any(
                    x ^ 1 in fan or (x >> 1) in inner for x in fan
                ):
                    h.flat[nid] = tuple(fan)
                    h.inner[nid] = frozenset(inner)
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

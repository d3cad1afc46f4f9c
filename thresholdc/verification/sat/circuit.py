"""A small Boolean circuit IR for SAT checks: build, simulate, hash, and emit CNF.

Literals are DIMACS-style integers: variable ``v`` is the literal ``v``, its negation ``-v``;
variable 1 is the constant true (:data:`TRUE`; :data:`FALSE` is ``-1``).  A node defines one
variable as a function of literals:

    and   y = l1 ∧ … ∧ ln        (or is written as ¬and of negations)
    xor   y = l1 ⊕ l2
    ite   y = c ? t : e
    geq   y = [Σ wᵢ·lᵢ ≥ K]      (integers, every wᵢ > 0, built normalised; see :meth:`geq`)

The builder folds constants, merges equal arguments and hashes nodes structurally (the same
op on the same literals gives the same variable; with ``share=False`` only within one
``side``).  Variables are numbered in creation order, which is a topological order.

CNF (:meth:`Circuit.to_cnf`) gives each node exact clauses (y ↔ its function); ``geq`` nodes
use one of four encodings chosen per node, every one an equivalence (both directions):

* ``exact``: for at most 6 literals, one clause per minimal true set (y ∨ ¬S) and per maximal
  false set (¬y ∨ the literals outside it) — no extra variables;
* ``bdd``: the reduced BDD of the constraint with interval memoisation (Abío, Nieuwenhuis,
  Oliveras, Rodríguez-Carbonell, "BDDs for pseudo-Boolean constraints – revisited", SAT 2011;
  common practice for PB-to-SAT), variables by decreasing weight, a size cap, else ``adder``;
* ``totalizer``: a unary counter (Bailleux–Boufkhad 2003) for all-ones weights;
* ``adder``: binary column addition with full/half adders and a comparator with K.

``enc="auto"`` means exact for small fan-in, else BDD (else adder).

>>> c = Circuit()
>>> a, b = c.new_input(), c.new_input()
>>> y = c.geq((3, 2), (a, b), 2)   # [3a + 2b ≥ 2] is a ∨ b
>>> y == c.or_([a, b])
True
"""

from __future__ import annotations

import bisect
import math
from collections import deque
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

__all__ = ["TRUE", "FALSE", "Node", "Circuit", "CNF"]

TRUE = 1
FALSE = -1
_EXACT_MAX = 6
_BDD_CAP = 20_000


@dataclass(frozen=True, slots=True)
class Node:
    """One node; ``weights``/``k``/``enc`` are set for ``geq`` only."""

    op: str
    args: tuple[int, ...]
    weights: tuple[int, ...] | None = None
    k: int | None = None
    enc: str | None = None
    side: int = 0


@dataclass
class CNF:
    """Clauses over variables ``1..nvars`` (variable 1 is true)."""

    nvars: int
    clauses: list[list[int]]


class Circuit:
    """See the module docstring.  ``side`` tags the nodes built next (0, 1, …)."""

    def __init__(self, *, share: bool = True) -> None:
        self.nvars = 1
        self.nodes: dict[int, Node] = {}
        self.inputs: list[int] = []
        self.share = share
        self.side = 0
        self._hash: dict[tuple, int] = {}

    # ------------------------------------------------------------------ building
    def new_input(self) -> int:
        """A fresh primary-input variable."""
        self.nvars += 1
        self.inputs.append(self.nvars)
        return self.nvars

    def _node(self, op: str, args: tuple[int, ...], weights=None, k=None, enc=None) -> int:
        key = (op, args, weights, k, enc) if self.share else (op, args, weights, k, enc,
                                                                   self.side)
        var = self._hash.get(key)
        if var is None:
            self.nvars += 1
            var = self.nvars
            self.nodes[var] = Node(op, args, weights, k, enc, self.side)
            self._hash[key] = var
        return var

    def and_(self, lits: Iterable[int]) -> int:
        """l1 ∧ … ∧ ln (true for no literals)."""
        seen: set[int] = set()
        for lit in lits:
            if lit == FALSE or -lit in seen:
                return FALSE
            if lit != TRUE:
                seen.add(lit)
        if not seen:
            return TRUE
        if len(seen) == 1:
            return next(iter(seen))
        return self._node("and", tuple(sorted(seen, key=abs)))

    def or_(self, lits: Iterable[int]) -> int:
        """l1 ∨ … ∨ ln (false for no literals)."""
        return -self.and_(-lit for lit in lits)

    def xor_(self, lits: Iterable[int]) -> int:
        """l1 ⊕ … ⊕ ln: a balanced tree of two-input xor nodes over variables."""
        odd: dict[int, int] = {}
        flip = 0
        for lit in lits:
            if lit < 0:
                flip ^= 1
            v = abs(lit)
            if v == TRUE:  # the constant variable is 1: it flips the parity
                flip ^= 1
                continue
            odd[v] = odd.get(v, 0) ^ 1
        level = sorted(v for v, c in odd.items() if c)
        if not level:
            return FALSE if not flip else TRUE
        while len(level) > 1:
            nxt = []
            for i in range(0, len(level) - 1, 2):
                a, b = sorted((level[i], level[i + 1]))
                nxt.append(self._node("xor", (a, b)))
            if len(level) % 2:
                nxt.append(level[-1])
            level = nxt
        return -level[0] if flip else level[0]

    def ite(self, c: int, t: int, e: int) -> int:
        """c ? t : e."""
        if c == TRUE:
            return t
        if c == FALSE:
            return e
        if c < 0:
            c, t, e = -c, e, t
        if t == e:
            return t
        if t == -e:
            return self.xor_((c, e))
        if t in (TRUE, FALSE) or e in (TRUE, FALSE) or abs(t) == c or abs(e) == c:
            return self.or_((self.and_((c, t)), self.and_((-c, e))))
        if t < 0:
            return -self._node("ite", (c, -t, -e))
        return self._node("ite", (c, t, e))

    def geq(
        self, weights: Iterable[int], lits: Iterable[int], k: int, enc: str = "auto"
    ) -> int:
        """[Σ wᵢ·lᵢ ≥ k] for integer weights of any sign.

        Normalised first: constants folded into ``k``, a variable's terms merged, negative
        weights turned positive on the negated literal (w·l = w + |w|·¬l), weights above the
        threshold cut down to it, and the gcd divided out; the trivial cases become
        constants, a literal, an ``or`` (every weight reaches k) or an ``and`` (k is the sum).
        """
        coef: dict[int, int] = {}
        for w, lit in zip(weights, lits):
            w = int(w)
            if lit == TRUE:
                k -= w
            elif lit == FALSE:
                continue
            elif lit > 0:
                coef[lit] = coef.get(lit, 0) + w
            else:
                coef[-lit] = coef.get(-lit, 0) - w
                k -= w
        terms: list[tuple[int, int]] = []
        for v in sorted(coef):
            w = coef[v]
            if w > 0:
                terms.append((v, w))
            elif w < 0:
                terms.append((-v, -w))
                k += -w
        total = sum(w for _, w in terms)
        if k <= 0:
            return TRUE
        if k > total:
            return FALSE
        terms = [(lit, min(w, k)) for lit, w in terms]
        if all(w == k for _, w in terms):
            return self.or_(lit for lit, _ in terms)
        total = sum(w for _, w in terms)
        if k == total:
            return self.and_(lit for lit, _ in terms)
        g = 0
        for _, w in terms:
            g = math.gcd(g, w)
        if g > 1:
            terms = [(lit, w // g) for lit, w in terms]
            k = -(-k // g)
        return self._node(
            "geq",
            tuple(lit for lit, _ in terms),
            tuple(w for _, w in terms),
            k,
            enc,
        )

    # ------------------------------------------------------------------ simulation
    def simulate(self, X: np.ndarray) -> np.ndarray:
        """Values of every variable, ``(nvars + 1, rows)`` of bool, for input rows ``X``
        (rows × inputs, in :attr:`inputs` order)."""
        X = np.asarray(X, dtype=bool)
        rows = X.shape[0]
        V = np.zeros((self.nvars + 1, rows), dtype=bool)
        V[TRUE] = True
        for i, v in enumerate(self.inputs):
            V[v] = X[:, i]
        for v, node in self.nodes.items():
            V[v] = node_value(node, [V[a] if a > 0 else ~V[-a] for a in node.args])
        return V

    def simulate_packed(self, X: np.ndarray) -> np.ndarray:
        """Like :meth:`simulate`, bit-packed: ``(nvars + 1, ceil(rows / 8))`` of uint8, row
        r in bit r % 8 (little bit order) of byte r // 8.  Memory stays small on big
        circuits; ``geq`` nodes unpack their arguments to count."""
        X = np.asarray(X, dtype=bool)
        rows = X.shape[0]
        P = np.zeros((self.nvars + 1, (rows + 7) // 8), dtype=np.uint8)
        P[TRUE] = np.packbits(np.ones(rows, dtype=bool), bitorder="little")
        for i, v in enumerate(self.inputs):
            P[v] = np.packbits(X[:, i], bitorder="little")
        ones = P[TRUE]
        for v, node in self.nodes.items():
            args = [P[a] if a > 0 else P[-a] ^ ones for a in node.args]
            if node.op == "and":
                P[v] = np.bitwise_and.reduce(args)
            elif node.op == "xor":
                P[v] = args[0] ^ args[1]
            elif node.op == "ite":
                P[v] = (args[0] & args[1]) | ((args[0] ^ ones) & args[2])
            else:
                bits = [np.unpackbits(a, count=rows, bitorder="little").astype(bool)
                        for a in args]
                P[v] = np.packbits(node_value(node, bits), bitorder="little")
        return P

    # ------------------------------------------------------------------ CNF
    def to_cnf(self, roots: Iterable[int], rep: dict[int, int] | None = None) -> CNF:
        """CNF of the nodes the ``roots`` depend on, arguments substituted through ``rep``
        (variable → literal it was proven equal to; those variables are not encoded)."""
        rep = rep or {}

        def sub(lit: int) -> int:
            r = rep.get(abs(lit))
            if r is None:
                return lit
            return r if lit > 0 else -r

        keep: set[int] = set()
        stack = [abs(sub(r)) for r in roots]
        while stack:
            v = stack.pop()
            if v in keep or v not in self.nodes:
                continue
            keep.add(v)
            stack.extend(abs(sub(a)) for a in self.nodes[v].args)
        em = _Emitter(self.nvars)
        em.clauses.append([TRUE])  # the constant: a unit clause (clause() would drop it)
        for v in sorted(keep):
            node = self.nodes[v]
            em.node(v, node, tuple(sub(a) for a in node.args))
        return CNF(em.top, em.clauses)


def node_value(node: Node, args: list[np.ndarray]) -> np.ndarray:
    """The value of one node from its argument values (bool arrays).

    >>> node_value(Node("geq", (2, 3), (2, 1), 2), [np.array([0, 1]), np.array([1, 1])])
    array([False,  True])
    """
    if node.op == "and":
        return np.logical_and.reduce(args)
    if node.op == "xor":
        return args[0] ^ args[1]
    if node.op == "ite":
        return np.where(args[0], args[1], args[2])
    total = np.zeros(args[0].shape, dtype=np.int64)
    for w, a in zip(node.weights or (), args):
        total += w * a
    return total >= node.k  # type: ignore[operator]


class _Emitter:
    """Collects clauses and allocates auxiliary variables above the circuit's."""

    def __init__(self, top: int) -> None:
        self.top = top
        self.clauses: list[list[int]] = []

    def new(self) -> int:
        self.top += 1
        return self.top

    def clause(self, lits: Iterable[int]) -> None:
        """Add a clause, dropping it when it holds a true literal and removing false ones."""
        out = []
        for lit in lits:
            if lit == TRUE:
                return
            if lit != FALSE:
                out.append(lit)
        self.clauses.append(out)

    # -- gates with constant folding (each new variable gets an exact equivalence)
    def and2(self, a: int, b: int) -> int:
        if a == FALSE or b == FALSE or a == -b:
            return FALSE
        if a == TRUE or a == b:
            return b
        if b == TRUE:
            return a
        z = self.new()
        self.clause([-z, a])
        self.clause([-z, b])
        self.clause([z, -a, -b])
        return z

    def or2(self, a: int, b: int) -> int:
        return -self.and2(-a, -b)

    def xor2(self, a: int, b: int) -> int:
        if a in (TRUE, FALSE):
            return -b if a == TRUE else b
        if b in (TRUE, FALSE):
            return -a if b == TRUE else a
        if a == b:
            return FALSE
        if a == -b:
            return TRUE
        z = self.new()
        for sa in (1, -1):
            for sb in (1, -1):
                # z is true exactly when the signs differ
                self.clause([sa * -a, sb * -b, z if sa != sb else -z])
        return z

    def full_add(self, a: int, b: int, c: int) -> tuple[int, int]:
        """(sum, carry) of three bits."""
        for x, y, w in ((a, b, c), (b, c, a), (a, c, b)):
            if w in (TRUE, FALSE):
                if w == FALSE:
                    return self.xor2(x, y), self.and2(x, y)
                return -self.xor2(x, y), self.or2(x, y)
        s, cy = self.new(), self.new()
        for sa in (1, -1):
            for sb in (1, -1):
                for sc in (1, -1):
                    ones = (sa < 0) + (sb < 0) + (sc < 0)  # literals assumed true
                    lits = [sa * a, sb * b, sc * c]
                    self.clause(lits + [s if ones % 2 else -s])
        for x, y in ((a, b), (a, c), (b, c)):
            self.clause([-x, -y, cy])
            self.clause([x, y, -cy])
        return s, cy

    def equiv(self, y: int, lit: int) -> None:
        self.clause([-y, lit])
        self.clause([y, -lit])

    # -- nodes
    def node(self, y: int, node: Node, args: tuple[int, ...]) -> None:
        op = node.op
        if op == "and":
            for a in args:
                self.clause([-y, a])
            self.clause([y] + [-a for a in args])
        elif op == "xor":
            self._xor_node(y, *args)
        elif op == "ite":
            c, t, e = args
            self.clause([-c, -t, y])
            self.clause([-c, t, -y])
            self.clause([c, -e, y])
            self.clause([c, e, -y])
            self.clause([-t, -e, y])
            self.clause([t, e, -y])
        else:
            self.geq(y, node.weights or (), args, node.k or 0, node.enc or "auto")

    def _xor_node(self, y: int, a: int, b: int) -> None:
        self.clause([-a, -b, -y])
        self.clause([a, b, -y])
        self.clause([-a, b, y])
        self.clause([a, -b, y])

    def geq(self, y: int, weights: tuple[int, ...], lits: tuple[int, ...], k: int,
            enc: str) -> None:
        """Clauses for y ↔ [Σ wᵢ·lᵢ ≥ k] (positive weights, 1 ≤ k ≤ Σw)."""
        lits, weights = self._fold(lits, weights)
        total = sum(weights)
        if k <= 0 or k > total:
            self.equiv(y, TRUE if k <= 0 else FALSE)
            return
        if enc == "auto" and len(lits) <= _EXACT_MAX:
            self._exact(y, weights, lits, k)
            return
        if enc == "totalizer" and all(w == 1 for w in weights):
            self.equiv(y, self._totalizer(list(lits), k))
            return
        if enc == "auto":
            saved_clauses, saved_top = len(self.clauses), self.top
            root = self._bdd(weights, lits, k, _BDD_CAP)
            if root is not None:
                self.equiv(y, root)
                return
            del self.clauses[saved_clauses:]
            self.top = saved_top
        self.equiv(y, self._adder(weights, lits, k))

    @staticmethod
    def _fold(lits: tuple[int, ...], weights: tuple[int, ...]) -> tuple[tuple, tuple]:
        """Merge repeated literals (substitution can make two arguments equal).  Opposite or
        constant literals may remain: every encoding below treats its argument positions as
        independent, which stays exact for any values they take."""
        merged: dict[int, int] = {}
        for lit, w in zip(lits, weights):
            merged[lit] = merged.get(lit, 0) + w
        return tuple(merged), tuple(merged.values())

    def _exact(self, y: int, weights: tuple[int, ...], lits: tuple[int, ...], k: int) -> None:
        """Minimal true sets and maximal false sets of the constraint, enumerated."""
        n = len(lits)
        masks = np.arange(1 << n)
        bits = (masks[:, None] >> np.arange(n)) & 1
        w = np.asarray(weights, dtype=np.int64)
        sums = bits @ w
        big = int(w.sum()) + 1
        min_in = np.where(bits == 1, w, big).min(axis=1)
        min_out = np.where(bits == 0, w, big).min(axis=1)
        minimal_true = (sums >= k) & (sums - min_in < k)
        maximal_false = (sums < k) & (sums + min_out >= k)
        for m in np.nonzero(minimal_true)[0]:
            self.clause([y] + [-lits[i] for i in range(n) if bits[m, i]])
        for m in np.nonzero(maximal_false)[0]:
            self.clause([-y] + [lits[i] for i in range(n) if not bits[m, i]])

    def _bdd(self, weights: tuple[int, ...], lits: tuple[int, ...], k: int,
             cap: int) -> int | None:
        """The reduced, interval-memoised BDD of [Σ wᵢ·lᵢ ≥ k]; its root literal, or None
        when it would need more than ``cap`` nodes.

        F(i, K) = [Σ_{j≥i} a_j·l_j ≥ K] equals one BDD node on a whole interval [β, γ] of
        K; F is true for K ≤ 0 and false for K > R_i (the suffix sum).  A node's interval is
        the intersection of its children's, shifted by a_i for the high child.  Built with
        an explicit stack (no recursion).
        """
        order = sorted(range(len(lits)), key=lambda i: (-weights[i], abs(lits[i])))
        a = [weights[i] for i in order]
        ls = [lits[i] for i in order]
        n = len(a)
        R = [0] * (n + 1)
        for i in range(n - 1, -1, -1):
            R[i] = R[i + 1] + a[i]
        inf = float("inf")
        starts: list[list[float]] = [[] for _ in range(n + 1)]
        memo: list[list[tuple[float, float, int]]] = [[] for _ in range(n + 1)]
        made = 0

        def resolve(i: int, K: int) -> tuple[float, float, int] | None:
            if K <= 0:
                return (-inf, 0, TRUE)
            if K > R[i]:
                return (R[i] + 1, inf, FALSE)
            p = bisect.bisect_right(starts[i], K) - 1
            if p >= 0 and memo[i][p][1] >= K:
                return memo[i][p]
            return None

        stack = [(0, k)]
        while stack:
            i, K = stack[-1]
            if resolve(i, K) is not None:
                stack.pop()
                continue
            lo = resolve(i + 1, K)
            if lo is None:
                stack.append((i + 1, K))
                continue
            hi = resolve(i + 1, K - a[i])
            if hi is None:
                stack.append((i + 1, K - a[i]))
                continue
            beta = max(lo[0], hi[0] + a[i])
            gamma = min(lo[1], hi[1] + a[i])
            if hi[2] == lo[2]:
                lit = lo[2]
            else:
                made += 1
                if made > cap:
                    return None
                lit = self._ite(ls[i], hi[2], lo[2])
            p = bisect.bisect_right(starts[i], beta)
            starts[i].insert(p, beta)
            memo[i].insert(p, (beta, gamma, lit))
            stack.pop()
        found = resolve(0, k)
        assert found is not None
        return found[2]

    def _ite(self, c: int, t: int, e: int) -> int:
        """A new variable z ↔ (c ? t : e), constants folded."""
        if t == e:
            return t
        if t == TRUE and e == FALSE:
            return c
        z = self.new()
        self.clause([-c, -t, z])
        self.clause([-c, t, -z])
        self.clause([c, -e, z])
        self.clause([c, e, -z])
        self.clause([-t, -e, z])
        self.clause([t, e, -z])
        return z

    def _totalizer(self, lits: list[int], k: int) -> int:
        """The literal [at least k of ``lits``] from a unary counter capped at k.

        Each subtree keeps r_j ↔ [count ≥ j] for j = 1..min(size, k).  Merging A and B:
        a_i ∧ b_j → r_min(i+j, k) and ¬a_{i+1} ∧ ¬b_{j+1} → ¬r_{i+j+1}, with a_0 = true and
        a_{p+1} = false for an untruncated side.
        """
        level: deque[list[int]] = deque([[lit] for lit in lits])
        while len(level) > 1:
            A, B = level.popleft(), level.popleft()
            p, q = len(A), len(B)
            size = min(p + q, k)
            r = [self.new() for _ in range(size)]
            for i in range(p + 1):
                for j in range(q + 1):
                    if i + j >= 1:
                        up = [r[min(i + j, k) - 1]]
                        if i:
                            up.append(-A[i - 1])
                        if j:
                            up.append(-B[j - 1])
                        self.clause(up)
                    if i + j + 1 <= size:
                        down = [-r[i + j]]
                        if i + 1 <= p:
                            down.append(A[i])
                        if j + 1 <= q:
                            down.append(B[j])
                        self.clause(down)
            level.append(r)
        counts = level[0]
        return counts[k - 1] if k <= len(counts) else FALSE

    def _adder(self, weights: tuple[int, ...], lits: tuple[int, ...], k: int) -> int:
        """The literal [Σ wᵢ·lᵢ ≥ k] from a binary sum (column compression with full and half
        adders) compared with the constant k, lowest bit first: g ← s_j ∧ g where k's bit
        is 1, g ← s_j ∨ g where it is 0, starting from g = true."""
        columns: dict[int, deque[int]] = {}
        for w, lit in zip(weights, lits):
            j = 0
            while w:
                if w & 1:
                    columns.setdefault(j, deque()).append(lit)
                w >>= 1
                j += 1
        bits: list[int] = []
        j = 0
        while j <= max(columns, default=-1):
            col = columns.get(j, deque())
            while len(col) > 1:
                if len(col) >= 3:
                    s, c = self.full_add(col.popleft(), col.popleft(), col.popleft())
                else:
                    x, y = col.popleft(), col.popleft()
                    s, c = self.xor2(x, y), self.and2(x, y)
                col.append(s)
                if c != FALSE:
                    columns.setdefault(j + 1, deque()).append(c)
            bits.append(col[0] if col else FALSE)
            j += 1
        g = TRUE
        for j in range(max(len(bits), k.bit_length())):
            s = bits[j] if j < len(bits) else FALSE
            g = self.and2(s, g) if (k >> j) & 1 else self.or2(s, g)
        return g


def threshold_cnf(weights: Iterable[int], k: int, method: str) -> tuple[CNF, int, list[int]]:
    """CNF of y ↔ [Σ wᵢ·xᵢ ≥ k] (positive weights) with one named encoding, for tests and
    benchmarks: ``method`` is ``exact``, ``bdd``, ``totalizer`` or ``adder``.

    Returns the CNF, y's variable and the x variables (2, 3, …; variable 1 is true).

    >>> cnf, y, xs = threshold_cnf([1, 1, 1], 2, "totalizer")
    >>> y, xs
    (5, [2, 3, 4])
    """
    weights = [int(w) for w in weights]
    xs = list(range(2, 2 + len(weights)))
    y = 2 + len(weights)
    em = _Emitter(y)
    em.clauses.append([TRUE])  # the constant: a unit clause (clause() would drop it)
    lits, ws = tuple(xs), tuple(weights)
    if method == "exact":
        em._exact(y, ws, lits, k)
    elif method == "bdd":
        root = em._bdd(ws, lits, k, _BDD_CAP)
        assert root is not None
        em.equiv(y, root)
    elif method == "totalizer":
        em.equiv(y, em._totalizer(list(lits), k))
    elif method == "adder":
        em.equiv(y, em._adder(ws, lits, k))
    else:
        raise ValueError(f"unknown encoding {method!r}")
    return CNF(em.top, em.clauses), y, xs

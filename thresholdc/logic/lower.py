"""Lowering: a checked :class:`~thresholdc.ir.program.Program` becomes a :class:`GateGraph`.

Rules of the lowering
    * Each definition ``d`` becomes the signal ``d``; the gates inside its expression get the
      derived signals ``d~1``, ``d~2``, … (``~`` cannot occur in a rule name, so these never
      clash with the source).  An alias ``d = x`` is a ``buf`` gate.
    * Chains of one associative connective (``a and b and c``, ``a ^ b ^ c``) become one n-ary
      gate, so later passes see a 7-input parity whole.
    * ``x implies y`` is ``or(not x, y)``; ``x iff y`` is ``xnor(x, y)``; the counting calls
      become ``threshold`` (Σx ≥ k, −Σx ≥ −k) or ``equal`` gates; a weighted comparison
      ``Σ c·x OP r`` becomes one ``threshold`` gate (``>=`` ``>`` ``<=`` ``<``), an ``equal``
      gate (``==``) or a ``not`` of one (``!=``), with repeated operands' coefficients merged.
    * Identical gates are shared (structural hashing), so a sub-term written twice costs one
      neuron; a definition equal to an earlier signal becomes a ``buf`` of it.
    * Simplification: a definition built only from Boolean connectives whose support (the
      names it reads) has at most ``simplify_support`` members is simplified with sympy's
      ``simplify_logic``; the result replaces the structural form only when it has fewer
      literals.  Larger definitions keep their structural form (sympy grows exponentially with
      the support) and the graph's ``notes`` say how many were left as written.

>>> from thresholdc.syntax.parser import parse
>>> g = lower_to_gates(parse("input a, b, c\\ny = (a and b) or (a and c)\\n"))
>>> g.gates["y"]
and(a, y~1)
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from ..ir import program as ast
from ..ir.gates import Gate, GateGraph
from ..lazy import lazy_module
from .typed import strict_real_test

sympy = lazy_module("sympy")

__all__ = ["lower_to_gates", "input_units", "DEFAULT_SIMPLIFY_SUPPORT"]

DEFAULT_SIMPLIFY_SUPPORT = 6
_SIMPLIFY_MAX_NODES = 60
#: sympy simplifies functions of more than 8 variables only when forced, and forced it takes
#: about 50 s of CPU for one 10-variable definition on this kind of machine (measured), so a
#: larger ``simplify_support`` is capped here with a note instead of silently doing nothing.
MAX_SIMPLIFY_SUPPORT = 8
_PLAIN_OPS = ("and", "or", "xor", "implies", "iff")


class _Lowerer:
    """Builds the gate table for one program; one instance per lowering."""

    def __init__(self, program: ast.Program, simplify_support: int) -> None:
        self.program = program
        self.simplify_support = simplify_support
        self.gates: dict[str, Gate] = {v: Gate("input") for v in input_units(program)}
        self.by_key: dict[tuple, str] = {}
        self.rank = {name: i for i, name in enumerate(program.definitions)}
        self.simplified = 0
        self.kept = 0
        self.counter = 0
        self.current = ""

    # ---------------------------------------------------------------- gate table
    def emit(self, gate: Gate, name: str | None = None) -> str:
        """Add ``gate`` (shared when an identical one exists); return its signal."""
        key = gate.key()
        found = self.by_key.get(key)
        if found is not None:
            self._adopt(found)
            if name is None:
                return found
            gate = Gate("buf", (found,))
        if name is None:
            self.counter += 1
            name = f"{self.current}~{self.counter}"
        self.gates[name] = replace(gate, origin=self.current)
        if gate.op != "buf":
            self.by_key.setdefault(key, name)
        return name

    def _adopt(self, signal: str) -> None:
        """A shared signal's origin is the first definition in source order that uses it."""
        g = self.gates[signal]
        if g.origin is not None and "~" in signal:
            if self.rank.get(self.current, 1 << 30) < self.rank.get(g.origin, 1 << 30):
                self.gates[signal] = replace(g, origin=self.current)

    # ---------------------------------------------------------------- expressions
    def lower(self, root: ast.Expr) -> str:
        """The signal computing ``root``, emitting gates children first.

        An explicit stack instead of recursion, so chains of hundreds of operators (``a1 -> a2
        -> …``) and deep brackets lower without hitting Python's recursion limit.
        """
        done: dict[int, str] = {}
        stack: list[tuple[ast.Expr, bool]] = [(root, False)]
        while stack:
            node, expanded = stack.pop()
            if id(node) in done:
                continue
            kids = _children(node)
            if kids and not expanded:
                stack.append((node, True))
                stack.extend((k, False) for k in reversed(kids) if id(k) not in done)
                continue
            done[id(node)] = self._build(node, [done[id(k)] for k in kids])
        return done[id(root)]

    def _build(self, e: ast.Expr, args: list[str]) -> str:
        """The signal of one node whose children are already the signals ``args``."""
        span = getattr(e, "span", None)
        if isinstance(e, ast.Name):
            return e.id
        if isinstance(e, ast.Const):
            return self.emit(Gate("const", value=int(e.value)))
        if isinstance(e, ast.Not):
            return self.emit(Gate("not", (args[0],), span=span))
        if isinstance(e, ast.BinOp):
            if e.op == "implies":
                left = self.emit(Gate("not", (args[0],), span=span))
                return self.emit(Gate("or", (left, args[1]), span=span))
            if e.op == "iff":
                return self.emit(Gate("xnor", tuple(args), span=span))
            return self.emit(Gate(e.op, tuple(args), span=span))
        if isinstance(e, ast.Ite):
            return self.emit(Gate("ite", tuple(args), span=span))
        if isinstance(e, ast.Call):
            return self._call(e, tuple(args))
        if isinstance(e, ast.Compare):
            return self._compare(e, args)
        if isinstance(e, ast.CategoryTest):
            units = tuple(f"{e.var}={v}" for v in e.values)
            sig = units[0] if len(units) == 1 else self.emit(Gate("or", units, span=span))
            return self.emit(Gate("not", (sig,), span=span)) if e.negate else sig
        if isinstance(e, ast.RealTest):
            # Only strict tests are gates: x >= c is not(x < c), x <= c is not(x > c).
            op, c, negate = strict_real_test(e.op, e.value)
            sig = self.emit(Gate("realcmp", (e.var,), span=span, real_test=(op, c)))
            return self.emit(Gate("not", (sig,), span=span)) if negate else sig
        raise AssertionError(f"unknown expression node {e!r}")

    def _call(self, e: ast.Call, args: tuple[str, ...]) -> str:
        n = len(args)
        ones = (1,) * n
        if e.func == "atleast":
            return self.emit(Gate("threshold", args, ones, e.k, span=e.span))
        if e.func == "atmost":
            return self.emit(Gate("threshold", args, (-1,) * n, -(e.k or 0), span=e.span))
        if e.func == "exactly":
            return self.emit(Gate("equal", args, ones, e.k, span=e.span))
        if e.func == "majority":
            return self.emit(Gate("threshold", args, ones, n // 2 + 1, span=e.span))
        if e.func == "parity":
            return self.emit(Gate("xor", args, span=e.span))
        if e.func in ("nand", "nor"):
            return self.emit(Gate(e.func, args, span=e.span))
        raise ast.unknown_function(e.func)

    def _compare(self, e: ast.Compare, sigs: list[str]) -> str:
        coef: dict[str, int] = {}
        for t, sig in zip(e.terms, sigs):
            coef[sig] = coef.get(sig, 0) + t.coef
        args = tuple(s for s, c in coef.items() if c != 0)
        w = tuple(coef[s] for s in args)
        r = e.rhs
        if e.op in ("==", "!="):
            eq = self.emit(Gate("equal", args, w, r, span=e.span))
            return eq if e.op == "==" else self.emit(Gate("not", (eq,), span=e.span))
        if e.op in ("<=", "<"):
            w = tuple(-c for c in w)
            r = -r
            strict = e.op == "<"
        else:
            strict = e.op == ">"
        return self.emit(Gate("threshold", args, w, r + 1 if strict else r, span=e.span))

    # ---------------------------------------------------------------- definitions
    def define(self, d: ast.Definition) -> None:
        """Lower one definition into the signal named after it."""
        self.current = d.name
        self.counter = 0
        expr = self._maybe_simplify(d.expr)
        if isinstance(expr, ast.Name):
            self.gates[d.name] = Gate("buf", (expr.id,), origin=d.name, span=d.span)
            return
        sig = self.lower(expr)
        if "~" in sig and sig.startswith(f"{d.name}~") and self.gates[sig].origin == d.name:
            # The root gate was just created under a derived name: give it the definition's.
            gate = self.gates.pop(sig)
            self.gates[d.name] = replace(gate, span=d.span)
            self.by_key[gate.key()] = d.name
        else:
            self.gates[d.name] = Gate("buf", (sig,), origin=d.name, span=d.span)

    def _maybe_simplify(self, expr: ast.Expr) -> ast.Expr:
        if self.simplify_support <= 0:
            return expr
        support, size = _plain_support(expr)
        if support is None:
            return expr
        if len(support) > self.simplify_support or size > _SIMPLIFY_MAX_NODES:
            self.kept += 1
            return expr
        if _read_once(expr, len(support)):
            # every name once and no constant: the function depends on each name, so no
            # equivalent formula has fewer literals and sympy's result would not be taken
            return expr
        syms = {name: sympy.Symbol(name) for name in sorted(support)}
        before = _to_sympy(expr, syms)
        after = sympy.simplify_logic(before, force=False)
        if _literals(after) < _literals(before):
            self.simplified += 1
            return _from_sympy(after)
        return expr


def _children(e: ast.Expr) -> list[ast.Expr]:
    """The sub-expressions a node reads, with chains of one associative connective
    (and, or, xor) flattened into one list, iteratively."""
    if isinstance(e, ast.Not):
        return [e.operand]
    if isinstance(e, ast.BinOp):
        if e.op in ("implies", "iff"):
            return [e.left, e.right]
        operands: list[ast.Expr] = []
        stack: list[ast.Expr] = [e]
        while stack:
            node = stack.pop()
            if isinstance(node, ast.BinOp) and node.op == e.op:
                stack.append(node.right)
                stack.append(node.left)
            else:
                operands.append(node)
        return operands
    if isinstance(e, ast.Ite):
        return [e.cond, e.then, e.other]
    if isinstance(e, ast.Call):
        return list(e.args)
    if isinstance(e, ast.Compare):
        return [t.operand for t in e.terms]
    return []


def _plain_support(expr: ast.Expr) -> tuple[set[str] | None, int]:
    """Names read by ``expr`` and its node count, or ``(None, n)`` if not plain Boolean."""
    names: set[str] = set()
    size = 0
    stack = [expr]
    while stack:
        e = stack.pop()
        size += 1
        if isinstance(e, ast.Name):
            names.add(e.id)
        elif isinstance(e, ast.Const):
            pass
        elif isinstance(e, ast.Not):
            stack.append(e.operand)
        elif isinstance(e, ast.BinOp):
            stack.extend((e.left, e.right))
        elif isinstance(e, ast.Ite):
            stack.extend((e.cond, e.then, e.other))
        elif isinstance(e, ast.Call) and e.func in ("nand", "nor"):
            stack.extend(e.args)
        else:
            return None, size
    return names, size


def _read_once(expr: ast.Expr, names: int) -> bool:
    """Whether a plain Boolean ``expr`` (see :func:`_plain_support`) with ``names`` distinct
    names reads each name exactly once and has no constant.

    Every connective of the rule language depends on all its operands (``and``, ``or``,
    ``xor``, ``->``, ``<->``, ``nand``, ``nor``, ``not``; ``if c then t else e`` when ``t`` and
    ``e`` share no name), so such a formula depends on every name it reads, and any formula of
    the same function has at least ``names`` literals: simplification cannot make it smaller.
    """
    leaves = 0
    stack = [expr]
    while stack:
        e = stack.pop()
        if isinstance(e, ast.Name):
            leaves += 1
        elif isinstance(e, ast.Const):
            return False
        elif isinstance(e, ast.Not):
            stack.append(e.operand)
        elif isinstance(e, ast.BinOp):
            stack.extend((e.left, e.right))
        elif isinstance(e, ast.Ite):
            stack.extend((e.cond, e.then, e.other))
        elif isinstance(e, ast.Call):  # nand, nor
            stack.extend(e.args)
        else:
            return False
    return leaves == names


def _to_sympy(e: ast.Expr, syms: dict[str, Any]) -> Any:
    if isinstance(e, ast.Name):
        return syms[e.id]
    if isinstance(e, ast.Const):
        return sympy.true if e.value else sympy.false
    if isinstance(e, ast.Not):
        return sympy.Not(_to_sympy(e.operand, syms))
    if isinstance(e, ast.BinOp):
        a, b = _to_sympy(e.left, syms), _to_sympy(e.right, syms)
        return {
            "and": sympy.And,
            "or": sympy.Or,
            "xor": sympy.Xor,
            "implies": sympy.Implies,
            "iff": sympy.Equivalent,
        }[e.op](a, b)
    if isinstance(e, ast.Ite):
        return sympy.ITE(*(_to_sympy(x, syms) for x in (e.cond, e.then, e.other)))
    assert isinstance(e, ast.Call)
    args = [_to_sympy(a, syms) for a in e.args]
    return sympy.Nand(*args) if e.func == "nand" else sympy.Nor(*args)


def _literals(e: Any) -> int:
    """Literal occurrences of a sympy Boolean expression (its size for our purpose)."""
    if isinstance(e, sympy.Symbol):
        return 1
    if e in (sympy.true, sympy.false):
        return 0
    return sum(_literals(a) for a in e.args)


def _from_sympy(e: Any) -> ast.Expr:
    if isinstance(e, sympy.Symbol):
        return ast.Name(e.name)
    if e is sympy.true:
        return ast.Const(True)
    if e is sympy.false:
        return ast.Const(False)
    args = [_from_sympy(a) for a in _sorted_args(e)]
    if isinstance(e, sympy.Not):
        return ast.Not(args[0])
    op = {sympy.And: "and", sympy.Or: "or", sympy.Xor: "xor"}.get(type(e))
    if op is not None:
        out = args[0]
        for a in args[1:]:
            out = ast.BinOp(op, out, a)
        return out
    if isinstance(e, sympy.Equivalent):
        return ast.BinOp("iff", args[0], args[1])
    if isinstance(e, sympy.ITE):
        return ast.Ite(args[0], args[1], args[2])
    if isinstance(e, sympy.Implies):
        return ast.BinOp("implies", args[0], args[1])
    raise AssertionError(f"unexpected sympy node {type(e).__name__}")


def _sorted_args(e: Any) -> list[Any]:
    """Arguments of a commutative node in a deterministic order (sympy's own is hash-based)."""
    if isinstance(e, (sympy.And, sympy.Or, sympy.Xor)):
        return sorted(e.args, key=sympy.default_sort_key)
    return list(e.args)


def lower_to_gates(
    program: ast.Program, *, simplify_support: int = DEFAULT_SIMPLIFY_SUPPORT
) -> GateGraph:
    """Lower a checked program to a gate graph (see the module docstring for the rules).

    ``simplify_support`` bounds sympy simplification (0 turns it off).

    >>> from thresholdc.syntax.parser import parse
    >>> g = lower_to_gates(parse("input a, b\\ny = a -> b\\n"), simplify_support=0)
    >>> g.gates["y"], g.gates["y~1"]
    (or(y~1, b), not(a))
    """
    asked, simplify_support = simplify_support, min(simplify_support, MAX_SIMPLIFY_SUPPORT)
    low = _Lowerer(program, simplify_support)
    for name in program.order:
        low.define(program.definitions[name])
    outputs = tuple((name, name) for name in program.outputs)
    graph = GateGraph(low.gates, tuple(input_units(program)), outputs)
    notes = []
    if asked > simplify_support:
        notes.append(f"simplify support capped at {MAX_SIMPLIFY_SUPPORT} (asked {asked}): "
                     "exact simplification above that is too slow")
    if low.simplified:
        notes.append(f"simplified {low.simplified} definition(s) with sympy")
    if low.kept:
        notes.append(
            f"kept {low.kept} definition(s) as written (support above {simplify_support} "
            "or too large for exact simplification)"
        )
    graph.notes = tuple(notes)
    graph.check()
    return graph


def input_units(program: ast.Program) -> list[str]:
    """The network's input units for ``program``: one per Boolean or real input, one per value
    (``colour=red``) for a categorical input, in declaration order."""
    units: list[str] = []
    for v in program.inputs:
        if v.kind == "categorical":
            units.extend(f"{v.name}={val}" for val in v.values or ())
        else:
            units.append(v.name)
    return units

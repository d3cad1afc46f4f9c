"""Structural classes of a gate graph: which signals are the same function by their form.

Signals are compared up to structural hashing: ``buf`` and double negation are transparent,
the same op on the same (sorted, for commutative ops) arguments is the same signal, negations
fold into ``and``/xor/threshold forms.  The local check and the collapsing pass use these
classes; equal classes are a proof of equal functions, different classes prove nothing.

>>> from thresholdc.ir.gates import Gate, GateGraph
>>> g = GateGraph.build(["a"], [("y", "y")], [("n", Gate("not", ("a",))),
...     ("y", Gate("not", ("n",)))])
>>> structural_classes(g)["y"] == structural_classes(g)["a"]
True
"""

from __future__ import annotations

import math

from ..ir.gates import GateGraph

__all__ = ["structural_classes", "CONST_CLASS", "Cls"]

#: The class id of the constants in :func:`structural_classes`: (0, False) is 1, (0, True) 0.
CONST_CLASS = 0

Cls = tuple[int, bool]  # (class id, negated)


def structural_classes(graph: GateGraph) -> dict[str, Cls]:
    """Each signal's structural class: signals with the same class id compute the same
    function (or its complement when the flags differ).

    Rules: ``buf`` is its argument, ``not`` flips the flag; ``or``/``nand``/``nor`` are
    written as (negated) ``and`` of (negated) arguments; xor/xnor fold argument negations
    into the flag; threshold and equal gates fold negated arguments into the threshold;
    ``ite`` with a negated condition swaps its branches; arguments of commutative ops are
    sorted.  Equal keys get equal ids.

    >>> from thresholdc.ir.gates import Gate
    >>> g = GateGraph.build(["a", "b"], [("y", "y")], [("x", Gate("and", ("a", "b"))),
    ...     ("n", Gate("nand", ("b", "a"))), ("y", Gate("not", ("n",)))])
    >>> c = structural_classes(g); c["x"] == c["y"], c["n"] == (c["x"][0], True)
    (True, True)
    """
    table: dict[tuple, int] = {}
    cls: dict[str, Cls] = {}

    def cid(key: tuple) -> int:
        return table.setdefault(key, len(table))

    one = cid(("const",))  # the class of constant 1 is (one, False); of 0, (one, True)
    assert one == CONST_CLASS

    def and_class(args: list[Cls]) -> Cls:
        """The class of the conjunction of ``args`` (constants folded, x ∧ ¬x is 0)."""
        lits = set(args)
        if (one, True) in lits or any((i, not n) in lits for i, n in lits):
            return (one, True)
        lits.discard((one, False))
        ordered = sorted(lits)
        if not ordered:
            return (one, False)
        if len(ordered) == 1:
            return ordered[0]
        return (cid(("and", tuple(ordered))), False)

    def neg(c: Cls) -> Cls:
        return (c[0], not c[1])
    for name, g in graph.gates.items():
        op = g.op
        args = [cls[a] for a in g.args]
        if op == "input":
            cls[name] = (cid(("input", name)), False)
        elif op == "const":
            cls[name] = (one, not g.value)
        elif op == "buf":
            cls[name] = args[0]
        elif op == "not":
            cls[name] = (args[0][0], not args[0][1])
        elif op in ("and", "nand", "or", "nor"):
            inverted = op in ("or", "nor")
            c = and_class([(i, n != inverted) for i, n in args])
            cls[name] = (c[0], c[1] != (op in ("nand", "or")))
        elif op in ("xor", "xnor"):
            odd: dict[int, int] = {}
            flip = op == "xnor"
            for i, n in args:
                flip ^= n
                if i == one:  # the constant 1 flips the parity
                    flip ^= True
                    continue
                odd[i] = odd.get(i, 0) ^ 1
            ids = tuple(sorted(i for i, k in odd.items() if k))
            if not ids:
                cls[name] = (one, not flip)
            elif len(ids) == 1:
                cls[name] = (ids[0], flip)
            else:
                cls[name] = (cid(("xor", ids)), flip)
        elif op in ("threshold", "equal"):
            coef: dict[int, int] = {}
            t = int(g.threshold or 0)
            for (i, n), w in zip(args, g.weights or ()):
                if i == one:
                    t -= 0 if n else w
                elif n:
                    t -= w
                    coef[i] = coef.get(i, 0) - w
                else:
                    coef[i] = coef.get(i, 0) + w
            terms = tuple(sorted((i, w) for i, w in coef.items() if w))
            holds = (lambda v, t=t: v >= t) if op == "threshold" else (lambda v, t=t: v == t)
            lo = sum(min(w, 0) for _, w in terms)
            hi = sum(max(w, 0) for _, w in terms)
            step = 0
            for _, w in terms:
                step = math.gcd(step, abs(w))
            if op == "threshold" and (lo >= t or hi < t):
                cls[name] = (one, hi < t)  # always true, or never
            elif op == "equal" and terms and (t < lo or t > hi or t % step):
                cls[name] = (one, True)  # the sum never reaches t
            elif len(terms) <= 1:
                i, w = terms[0] if terms else (one, 0)
                at0, at1 = holds(0), holds(w)
                cls[name] = (one, not at0) if at0 == at1 or i == one else (i, at0)
            else:
                cls[name] = (cid((op, terms, t)), False)
        elif op == "ite":
            cond, then, other = args
            if cond[1]:
                then, other = other, then
            cond = (cond[0], False)
            if cond[0] == one or then == other:
                cls[name] = then  # after the swap a constant condition is 1
            elif then[0] == one:  # c ? 1 : e is c or e;  c ? 0 : e is not c and e
                cls[name] = neg(and_class([neg(cond), neg(other)])) if not then[1] else \
                    and_class([neg(cond), other])
            elif other[0] == one:  # c ? t : 1 is not c or t;  c ? t : 0 is c and t
                cls[name] = (neg(and_class([cond, neg(then)])) if not other[1]
                             else and_class([cond, then]))
            else:
                cls[name] = (cid(("ite", cond[0], then, other)), False)
        else:
            cls[name] = (cid(("opaque", name)), False)
    return cls

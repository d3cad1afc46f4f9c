"""Rule expressions (AST nodes) written back as rule text (DESIGN.md §3).

The printer puts brackets around every operand that is not an atom, so the text parses back to
the same tree whatever the precedence; a top-level expression has no outer brackets.

>>> from thresholdc.syntax.parser import parse
>>> prog = parse("input a, b, c\\ny = atleast(2, a, not b, c) and (a or c)\\n")
>>> expr_text(prog.definitions["y"].expr)
'atleast(2, a, not b, c) and (a or c)'
"""

from __future__ import annotations

from ..ir.program import (
    BinOp,
    Call,
    CategoryTest,
    Compare,
    Const,
    Expr,
    Ite,
    Name,
    Not,
    RealTest,
)

__all__ = ["expr_text"]

_SYMBOLS = {"implies": "->", "iff": "<->"}
_CHAINS = ("and", "or", "xor")  # associative: a chain needs no brackets


def _number(x: float) -> str:
    return str(int(x)) if float(x).is_integer() else repr(float(x))


def _atom(node: Expr) -> bool:
    return isinstance(node, Name | Const | Call | CategoryTest | RealTest) or (
        isinstance(node, Not) and _atom(node.operand)
    )


def _operand(node: Expr, chain: str | None = None) -> str:
    text = expr_text(node)
    if _atom(node) or (chain is not None and isinstance(node, BinOp) and node.op == chain):
        return text
    return f"({text})"


def expr_text(node: Expr) -> str:
    """The rule text of an expression.

    Parameters
    ----------
    node : Expr
        Any expression node of :mod:`thresholdc.ir.program`.

    Returns
    -------
    str
        Text that the rule parser reads back as the same expression.

    Examples
    --------
    >>> from thresholdc.ir.program import Compare, Name, Term
    >>> expr_text(Compare((Term(2, Name("a")), Term(-1, Name("b"))), ">=", 1))
    '2*a - b >= 1'
    """
    if isinstance(node, Name):
        return node.id
    if isinstance(node, Const):
        return "true" if node.value else "false"
    if isinstance(node, Not):
        return f"not {_operand(node.operand)}"
    if isinstance(node, BinOp):
        op = _SYMBOLS.get(node.op, node.op)
        chain = node.op if node.op in _CHAINS else None  # a and b and c: no inner brackets
        return f"{_operand(node.left, chain)} {op} {_operand(node.right, chain)}"
    if isinstance(node, Ite):
        return (f"if {_operand(node.cond)} then {_operand(node.then)} "
                f"else {_operand(node.other)}")
    if isinstance(node, Call):
        args = [expr_text(a) for a in node.args]
        if node.k is not None:
            args.insert(0, str(node.k))
        return f"{node.func}({', '.join(args)})"
    if isinstance(node, Compare):
        parts: list[str] = []
        for i, t in enumerate(node.terms):
            mag = abs(t.coef)
            body = _operand(t.operand) if mag == 1 else f"{mag}*{_operand(t.operand)}"
            if i == 0:
                parts.append(f"-{body}" if t.coef < 0 else body)
            else:
                parts.append(f"- {body}" if t.coef < 0 else f"+ {body}")
        return f"{' '.join(parts)} {node.op} {node.rhs}"
    if isinstance(node, CategoryTest):
        if len(node.values) == 1:
            return f"{node.var} {'!=' if node.negate else '=='} {node.values[0]}"
        inner = "{" + ", ".join(node.values) + "}"
        text = f"{node.var} in {inner}"
        return f"not ({text})" if node.negate else text
    if isinstance(node, RealTest):
        return f"{node.var} {node.op} {_number(node.value)}"
    raise TypeError(f"not an expression: {node!r}")

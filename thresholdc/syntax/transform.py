"""The lark Transformer that turns the rules of ``grammar.lark`` into AST nodes.

The transformer is applied by lark's LALR parser while it parses (no parse tree is built, so
nothing here recurses over the depth of an expression).  It only builds nodes and checks what a
statement says on its own (integer coefficients, the range of ``k``, one comparison operator);
whatever needs the whole file (names, types, cycles) is checked by :mod:`.checks`.

Comparisons whose meaning depends on a declared type (``x == red``, ``x > 30.5``, ``x >= 2`` on a
bare name) and ``x in {…}`` tests become :class:`PendingCompare` / :class:`PendingIn`, which
:mod:`.checks` resolves once every input declaration is known.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from lark import Token, Transformer

from ..errors import RuleError, Span
from ..ir.program import (
    BinOp,
    Call,
    Compare,
    Const,
    Definition,
    Expr,
    InputDecl,
    InputVar,
    Ite,
    Name,
    Not,
    OutputDecl,
    Term,
)

__all__ = ["RuleBuilder", "Number", "Value", "PendingCompare", "PendingIn", "MAX_COEFFICIENT"]

# Coefficients and right sides of weighted comparisons stay below 2^31, so every weighted sum a
# compiled neuron forms is exact in float64 (and the common cases in float32).
MAX_COEFFICIENT = 2**31


_NOSPAN = Span(0, 0)

# Operator tokens of each binary level, mapped to the AST operator name.
_BINARY = {
    "IFF_KW": "iff",
    "IFF_OP": "iff",
    "IMPLIES_KW": "implies",
    "IMPLIES_OP": "implies",
    "OR_KW": "or",
    "OR_OP": "or",
    "XOR_KW": "xor",
    "XOR_OP": "xor",
    "AND_KW": "and",
    "AND_OP": "and",
}


def span_of(item: object) -> Span:
    """The span of a token or AST node."""
    if isinstance(item, Token):
        return Span(item.line, item.column, item.end_line, item.end_column)  # type: ignore[arg-type]
    return item.span  # type: ignore[attr-defined]


def error_at(message: str, item: object) -> RuleError:
    """A RuleError positioned at a token, node or span."""
    span = item if isinstance(item, Span) else span_of(item)
    return RuleError(message, line=span.line, column=span.column)


@dataclass(frozen=True, slots=True)
class Number:
    """A signed number literal as written (``-40``, ``30.5``)."""

    text: str
    span: Span = field(default=_NOSPAN, compare=False)

    @property
    def is_integer(self) -> bool:
        """True when written as an integer (digits only, with an optional minus)."""
        return self.text.lstrip("-").isdigit()

    @property
    def value(self) -> float:
        """The number as a float."""
        return float(self.text)


@dataclass(frozen=True, slots=True)
class Value:
    """A categorical value as written: a name or an integer."""

    text: str
    span: Span = field(default=_NOSPAN, compare=False)


@dataclass(frozen=True, slots=True)
class PendingCompare:
    """``name OP rhs`` whose reading depends on the declared type of ``name``."""

    var: Name
    op: str
    rhs: Number | Value
    op_span: Span
    span: Span = field(default=_NOSPAN, compare=False)


@dataclass(frozen=True, slots=True)
class PendingIn:
    """``name in {v1, v2, …}``; ``name`` must be a categorical input."""

    var: Name
    values: tuple[Value, ...]
    span: Span = field(default=_NOSPAN, compare=False)


# Binding strength of each connective (higher binds tighter); implies is right-associative.
_LEVEL = {"iff": 1, "implies": 2, "or": 3, "xor": 4, "and": 5}


def apply_precedence(items: list) -> Expr:
    """Build the tree of ``x op y op z …`` (operator tokens interleaved) by precedence.

    Shunting-yard: operands go to one stack and operators to another; before an operator is
    pushed, every stacked operator that binds tighter (or as tight, for a left-associative
    one) is applied.  Iterative, so a chain of any length is fine.
    """
    operands: list[Expr] = [items[0]]
    ops: list[str] = []

    def reduce_top() -> None:
        op = ops.pop()
        right = operands.pop()
        left = operands.pop()
        operands.append(BinOp(op, left, right, left.span))

    for i in range(1, len(items), 2):
        op = _BINARY[items[i].type]
        level = _LEVEL[op]
        while ops and (
            _LEVEL[ops[-1]] > level or (_LEVEL[ops[-1]] == level and op != "implies")
        ):
            reduce_top()
        ops.append(op)
        operands.append(items[i + 1])
    while ops:
        reduce_top()
    return operands[0]


class RuleBuilder(Transformer):
    """Builds AST nodes from the rules of ``grammar.lark`` (one method per rule)."""

    # ---- statements ----------------------------------------------------------------------

    def start(self, children: list) -> list:
        return [c for c in children if c is not None]

    def input_stmt(self, children: list) -> InputDecl:
        return InputDecl(tuple(children[1:]), span_of(children[0]))

    def decl(self, children: list) -> InputVar:
        name = children[0]
        return InputVar(str(name), "bool", span=span_of(name))

    def decl_bool(self, children: list) -> InputVar:
        name = children[0]
        return InputVar(str(name), "bool", span=span_of(name))

    def decl_real(self, children: list) -> InputVar:
        name = children[0]
        rng: tuple[float, float] | None = None
        scale: float | None = None
        for item in children[2:]:
            if isinstance(item, tuple):
                rng = item
            else:
                scale = item
        return InputVar(str(name), "real", range=rng, scale=scale, span=span_of(name))

    def real_range(self, children: list) -> tuple[float, float]:
        lo, hi = children[1], children[2]
        if not lo.value < hi.value:
            raise error_at(
                f"empty range [{lo.text}, {hi.text}]: the low end must be below the high end", lo
            )
        return (lo.value, hi.value)

    def real_scale(self, children: list) -> float:
        number = children[1]
        if not number.value > 0:
            raise error_at(f"scale must be positive, found {number.text}", number)
        return number.value

    def decl_cat(self, children: list) -> InputVar:
        name = children[0]
        values = children[2:]
        seen: set[str] = set()
        for v in values:
            if v.text in seen:
                raise error_at(f"value '{v.text}' appears twice in the values of '{name}'", v)
            seen.add(v.text)
        return InputVar(
            str(name), "categorical", values=tuple(v.text for v in values), span=span_of(name)
        )

    def value(self, children: list) -> Value:
        item = children[0]
        if isinstance(item, Number):
            if not item.is_integer:
                raise error_at(
                    f"categorical values are names or integers, found {item.text}", item
                )
            return Value(item.text, item.span)
        return Value(str(item), span_of(item))

    def signed(self, children: list) -> Number:
        number = children[-1]
        text = str(number)
        if len(text) > 300 or not math.isfinite(float(text)):  # 1e309 is inf as a float
            raise error_at(f"the number {text[:40]}{'…' if len(text) > 40 else ''} is out of "
                           "range (numbers must be finite floating-point values)", number)
        if len(children) == 2:
            return Number("-" + text, span_of(children[0]))
        return Number(text, span_of(number))

    def output_stmt(self, children: list) -> OutputDecl:
        names = tuple(Name(str(t), span_of(t)) for t in children[1:])
        return OutputDecl(names, span_of(children[0]))

    def definition(self, children: list) -> Definition:
        name = children[0]
        return Definition(str(name), children[1], span_of(name))

    # ---- expressions ---------------------------------------------------------------------

    def ite(self, children: list) -> Ite:
        return Ite(children[1], children[3], children[5], span_of(children[0]))

    def binary(self, children: list) -> Expr:
        return apply_precedence(children)

    def negation(self, children: list) -> Not:
        return Not(children[1], span_of(children[0]))

    def name(self, children: list) -> Name:
        tok = children[0]
        return Name(str(tok), span_of(tok))

    def paren(self, children: list) -> Expr:
        return children[1]

    def constant(self, children: list) -> Const:
        tok = children[0]
        text = str(tok)
        if tok.type == "TRUE" or text == "1":
            return Const(True, span_of(tok))
        if tok.type == "FALSE" or text == "0":
            return Const(False, span_of(tok))
        raise error_at(f"a constant is 0, 1, true or false, found {text}", tok)

    def counting_call(self, children: list) -> Call:
        func, k, args = children[0], children[2], tuple(children[3:])
        if not k.is_integer:
            raise error_at(f"k of {func} must be an integer, found {k.text}", k)
        if not args:
            raise error_at(f"{func} needs at least one argument besides k", func)
        kv, n = int(k.text), len(args)
        if not 0 <= kv <= n:
            raise error_at(
                f"k of {func} must be between 0 and {n} (the number of arguments), found {kv}", k
            )
        return Call(str(func), kv, args, span_of(func), k.span)

    def plain_call(self, children: list) -> Call:
        func, args = children[0], tuple(children[2:])
        if not args:
            raise error_at(f"{func} needs at least one argument", func)
        return Call(str(func), None, args, span_of(func))

    # ---- comparisons ---------------------------------------------------------------------

    def term(self, children: list) -> tuple[int, Expr, Span, bool]:
        operand = children[0]
        return (1, operand, operand.span, False)

    def scaled_term(self, children: list) -> tuple[int, Expr, Span, bool]:
        coef, operand = children[0], children[2]
        text = str(coef)
        if not text.isdigit():
            raise error_at(f"coefficients must be integers, found {text}", coef)
        if len(text) > 12 or int(text) >= MAX_COEFFICIENT:
            shown = text if len(text) <= 40 else text[:40] + "…"
            raise error_at(
                f"coefficient {shown} is too large (coefficients must be below 2^31)", coef
            )
        return (int(text), operand, span_of(coef), True)

    def first_term(self, children: list) -> tuple[int, Expr, Span, bool]:
        if len(children) == 2:
            coef, operand, _, _ = children[1]
            return (-coef, operand, span_of(children[0]), True)
        return children[0]

    def add_term(self, children: list) -> tuple[int, Expr, Span, bool]:
        sign, (coef, operand, span, explicit) = children
        if sign.type == "MINUS":
            return (-coef, operand, span_of(sign), True)
        return (coef, operand, span, explicit)

    def sum(self, children: list) -> list:
        return children

    def rhs(self, children: list) -> Number | Value:
        item = children[0]
        if isinstance(item, Number):
            return item
        return Value(str(item), span_of(item))

    def comparison(self, children: list) -> Expr:
        terms, op, rhs = children[0], children[1], children[2]
        if len(children) > 3:
            raise error_at(
                "chained comparisons are not allowed: join two comparisons with 'and'",
                children[3],
            )
        first_span = terms[0][2]
        if len(terms) == 1 and not terms[0][3] and isinstance(terms[0][1], Name):
            return PendingCompare(terms[0][1], str(op), rhs, span_of(op), first_span)  # type: ignore[return-value]
        if isinstance(rhs, Value):
            raise error_at(
                f"the right side of a weighted comparison must be an integer, found '{rhs.text}'",
                rhs,
            )
        if not rhs.is_integer:
            raise error_at(
                f"the right side of a weighted comparison must be an integer, found {rhs.text}",
                rhs,
            )
        built = tuple(Term(c, operand, span) for c, operand, span, _ in terms)
        if abs(int(rhs.text)) >= MAX_COEFFICIENT:
            raise error_at(
                f"the right side {rhs.text} is too large (it must lie within ±2^31)", rhs
            )
        return Compare(built, str(op), int(rhs.text), first_span)

    def category_test(self, children: list) -> PendingIn:
        var = children[0]
        return PendingIn(Name(str(var), span_of(var)), tuple(children[3:]), span_of(var))

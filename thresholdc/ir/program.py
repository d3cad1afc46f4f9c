"""The abstract syntax tree of a rule file.

Every node is a frozen, slotted dataclass that keeps the :class:`~thresholdc.errors.Span` of the
text it came from, so a late error (a cycle, a bound exceeded) can still point at the rule line.
``repr`` is short and deterministic (golden tests rely on it) and leaves spans out.

Expressions
    :class:`Name`, :class:`Const`, :class:`Not`, :class:`BinOp` (``and or xor implies iff``),
    :class:`Ite`, :class:`Call` (``atleast atmost exactly majority nand nor parity``),
    :class:`Compare` (a weighted comparison ``Σ coef·operand OP rhs``), and for typed inputs
    :class:`CategoryTest` (``colour in {red, green}``) and :class:`RealTest` (``temp > 30.5``).

Statements
    :class:`InputDecl`, :class:`OutputDecl`, :class:`Definition`; a whole file is a
    :class:`Program`.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..errors import Span

__all__ = [
    "Expr",
    "Name",
    "Const",
    "Not",
    "BinOp",
    "Ite",
    "Call",
    "Term",
    "Compare",
    "CategoryTest",
    "RealTest",
    "InputVar",
    "InputDecl",
    "OutputDecl",
    "Definition",
    "Program",
    "BINARY_OPS",
    "CALLS",
    "COMPARE_OPS",
    "sub_expressions",
    "unknown_function",
]

BINARY_OPS = ("and", "or", "xor", "implies", "iff")
CALLS = ("atleast", "atmost", "exactly", "majority", "nand", "nor", "parity")
COMPARE_OPS = (">=", ">", "<=", "<", "==", "!=")

_NOSPAN = Span(0, 0)


@dataclass(frozen=True, slots=True)
class Name:
    """A reference to an input or a definition."""

    id: str
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        return self.id


@dataclass(frozen=True, slots=True)
class Const:
    """``0``/``1``/``true``/``false``."""

    value: bool
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        return "1" if self.value else "0"


@dataclass(frozen=True, slots=True)
class Not:
    operand: Expr
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        return f"(not {self.operand!r})"


@dataclass(frozen=True, slots=True)
class BinOp:
    """A binary connective; ``op`` is one of :data:`BINARY_OPS`."""

    op: str
    left: Expr
    right: Expr
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        return f"({self.left!r} {self.op} {self.right!r})"


@dataclass(frozen=True, slots=True)
class Ite:
    """``if cond then then else other``."""

    cond: Expr
    then: Expr
    other: Expr
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        return f"(if {self.cond!r} then {self.then!r} else {self.other!r})"


@dataclass(frozen=True, slots=True)
class Call:
    """A counting call; ``k`` is set for ``atleast``/``atmost``/``exactly`` only."""

    func: str
    k: int | None
    args: tuple[Expr, ...]
    span: Span = field(default=_NOSPAN, compare=False)
    k_span: Span | None = field(default=None, compare=False)

    def __repr__(self) -> str:
        inner = ", ".join(repr(a) for a in self.args)
        if self.k is not None:
            inner = f"{self.k}, {inner}"
        return f"{self.func}({inner})"


@dataclass(frozen=True, slots=True)
class Term:
    """``coef * operand`` inside a weighted comparison (coef may be negative)."""

    coef: int
    operand: Expr
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        return f"{self.coef}*{self.operand!r}"


@dataclass(frozen=True, slots=True)
class Compare:
    """``Σ coef_i · operand_i  OP  rhs`` with integer coefficients and right side."""

    terms: tuple[Term, ...]
    op: str
    rhs: int
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        lhs = " + ".join(repr(t) for t in self.terms)
        return f"({lhs} {self.op} {self.rhs})"


@dataclass(frozen=True, slots=True)
class CategoryTest:
    """``var in {v1, v2}``; ``colour == red`` is ``values=("red",)``, ``!=`` sets ``negate``."""

    var: str
    values: tuple[str, ...]
    negate: bool = False
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        op = "notin" if self.negate else "in"
        return f"({self.var} {op} {{{', '.join(self.values)}}})"


@dataclass(frozen=True, slots=True)
class RealTest:
    """``var OP value`` on a real input; ``op`` is one of ``> >= < <=``."""

    var: str
    op: str
    value: float
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        return f"({self.var} {self.op} {self.value!r})"


Expr = Name | Const | Not | BinOp | Ite | Call | Compare | CategoryTest | RealTest


def sub_expressions(node: Expr) -> tuple[Expr, ...]:
    """The operands of a node, in source order (none for names, constants and tests).

    >>> sub_expressions(BinOp("and", Name("a"), Not(Name("b"))))
    (a, (not b))
    """
    if isinstance(node, BinOp):
        return (node.left, node.right)
    if isinstance(node, Not):
        return (node.operand,)
    if isinstance(node, Ite):
        return (node.cond, node.then, node.other)
    if isinstance(node, Call):
        return node.args
    if isinstance(node, Compare):
        return tuple(t.operand for t in node.terms)
    return ()


def unknown_function(func: str) -> ValueError:
    """The error every evaluator raises for a call of a function the rule language lacks.

    The parser never builds one; a hand-built program might, and no evaluator guesses.

    >>> str(unknown_function("median"))  # doctest: +ELLIPSIS
    "unknown function 'median'; the rule language has atleast, atmost, ..., parity"
    """
    return ValueError(f"unknown function {func!r}; the rule language has {', '.join(CALLS)}")


@dataclass(frozen=True, slots=True)
class InputVar:
    """One declared input.  ``kind`` is ``bool``, ``categorical`` or ``real``.

    ``values`` holds a categorical input's values as strings exactly as written;
    ``range``/``scale`` are a real input's optional range and scale.
    """

    name: str
    kind: str = "bool"
    values: tuple[str, ...] | None = None
    range: tuple[float, float] | None = None
    scale: float | None = None
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        if self.kind == "bool":
            return self.name
        if self.kind == "categorical":
            return f"{self.name}: {{{', '.join(self.values or ())}}}"
        return f"{self.name}: real"


@dataclass(frozen=True, slots=True)
class InputDecl:
    vars: tuple[InputVar, ...]
    span: Span = field(default=_NOSPAN, compare=False)


@dataclass(frozen=True, slots=True)
class OutputDecl:
    names: tuple[Name, ...]
    span: Span = field(default=_NOSPAN, compare=False)


@dataclass(frozen=True, slots=True)
class Definition:
    """``name = expr``; ``span`` is the position of the defined name."""

    name: str
    expr: Expr
    span: Span = field(default=_NOSPAN, compare=False)

    def __repr__(self) -> str:
        return f"{self.name} = {self.expr!r}"


@dataclass(frozen=True, slots=True)
class Program:
    """A checked rule file.

    ``inputs`` in declaration order; ``outputs`` the output names in order (each names a
    definition or an input);
    ``definitions`` maps every definition needed by an output to its node, in source order;
    ``order`` lists those definitions so that each comes after every definition it uses;
    ``unused`` names the definitions no output needs (only with an ``output`` statement);
    ``text`` and ``file`` are the source, for error messages.
    """

    inputs: tuple[InputVar, ...]
    outputs: tuple[str, ...]
    definitions: dict[str, Definition]
    order: tuple[str, ...]
    unused: tuple[str, ...] = ()
    text: str = field(default="", repr=False, compare=False)
    file: str = field(default="<input>", compare=False)

    @property
    def input_names(self) -> tuple[str, ...]:
        """Names of the declared inputs, in order."""
        return tuple(v.name for v in self.inputs)

    def is_typed(self) -> bool:
        """True when any input is categorical or real."""
        return any(v.kind != "bool" for v in self.inputs)

"""Hypothesis strategies that build random rule files.

``rule_programs()`` draws the text of a rule file over up to 10 Boolean inputs that uses every
operator of the language: and/or/xor/not in both spellings, implies/iff (``->``/``<->`` too),
if-then-else, the counting calls, weighted comparisons and definitions shared by later ones.
``rule_cases()`` draws the same files together with, for every output, a sympy Boolean
expression written down independently of thresholdc (counting calls and weighted comparisons
are spelled out as sums of products), so a test can use sympy's logic module as a second
evaluator.  Use: ``@given(rule_programs())`` or ``@given(rule_cases())``.
"""

from __future__ import annotations

import itertools
import re
from dataclasses import dataclass

import sympy as sp
from hypothesis import strategies as st

__all__ = ["RuleCase", "rule_cases", "rule_programs"]


@dataclass(frozen=True)
class RuleCase:
    """A random rule file and the meaning of each output as a sympy expression."""

    text: str
    inputs: tuple[str, ...]
    outputs: tuple[str, ...]
    expected: dict[str, sp.Basic]  # output name -> expression over sympy symbols of the inputs


# ---- independent meanings of the counting constructs ----------------------------------------


def _at_least(k: int, args: list[sp.Basic]) -> sp.Basic:
    """At least k of args are true, as an OR of ANDs over k-subsets."""
    if k <= 0:
        return sp.true
    return sp.Or(*[sp.And(*c) for c in itertools.combinations(args, k)])


def _call_meaning(func: str, k: int | None, args: list[sp.Basic]) -> sp.Basic:
    """The meaning of a call, from the definitions in DESIGN.md section 3."""
    n = len(args)
    if func == "atleast":
        return _at_least(k, args)
    if func == "atmost":
        return sp.Not(_at_least(k + 1, args))
    if func == "exactly":
        return sp.And(_at_least(k, args), sp.Not(_at_least(k + 1, args)))
    if func == "majority":
        return _at_least(n // 2 + 1, args)
    if func == "nand":
        return sp.Not(sp.And(*args))
    if func == "nor":
        return sp.Not(sp.Or(*args))
    assert func == "parity"
    return sp.Xor(*args)


_HOLDS = {
    ">=": lambda s, t: s >= t,
    ">": lambda s, t: s > t,
    "<=": lambda s, t: s <= t,
    "<": lambda s, t: s < t,
    "==": lambda s, t: s == t,
    "!=": lambda s, t: s != t,
}


def _compare_meaning(coefs: list[int], operands: list[sp.Basic], op: str, rhs: int) -> sp.Basic:
    """Σ coef·operand OP rhs as an OR over the operand assignments that satisfy it."""
    minterms = []
    for bits in itertools.product((0, 1), repeat=len(operands)):
        total = sum(c * b for c, b in zip(coefs, bits, strict=True))
        if _HOLDS[op](total, rhs):
            minterms.append(
                sp.And(*[o if b else sp.Not(o) for o, b in zip(operands, bits, strict=True)])
            )
    return sp.Or(*minterms)


# ---- expressions -----------------------------------------------------------------------------

_SPELLING = {
    "and": ("and", "&"),
    "or": ("or", "|"),
    "xor": ("xor", "^"),
    "implies": ("implies", "->"),
    "iff": ("iff", "<->"),
}
_SYMPY_BINARY = {
    "and": sp.And,
    "or": sp.Or,
    "xor": sp.Xor,
    "implies": sp.Implies,
    "iff": sp.Equivalent,
}


def _leaf(draw, names: list[str], symbols: dict[str, sp.Basic]) -> tuple[str, sp.Basic]:
    """A name or a constant."""
    if draw(st.integers(0, 9)) == 0:
        text, value = draw(st.sampled_from([("0", sp.false), ("1", sp.true), ("true", sp.true),
                                            ("false", sp.false)]))
        return text, value
    name = draw(st.sampled_from(names))
    return name, symbols[name]


def _expr(draw, names, symbols, depth: int) -> tuple[str, sp.Basic]:
    """A random expression as (text that is safe as an operand, sympy meaning)."""
    if depth <= 0:
        return _leaf(draw, names, symbols)
    kind = draw(st.sampled_from(
        ["leaf", "not", "binary", "binary", "chain", "ite", "call", "compare"]
    ))
    if kind == "leaf":
        return _leaf(draw, names, symbols)
    if kind == "not":
        text, meaning = _expr(draw, names, symbols, depth - 1)
        word = draw(st.sampled_from(["not ", "!", "~"]))
        return f"({word}{text})", sp.Not(meaning)
    if kind == "binary":
        op = draw(st.sampled_from(sorted(_SPELLING)))
        left, lm = _expr(draw, names, symbols, depth - 1)
        right, rm = _expr(draw, names, symbols, depth - 1)
        word = draw(st.sampled_from(_SPELLING[op]))
        return f"({left} {word} {right})", _SYMPY_BINARY[op](lm, rm)
    if kind == "chain":
        # An unbracketed chain of one associative connective.
        op = draw(st.sampled_from(["and", "or", "xor"]))
        parts = [_expr(draw, names, symbols, depth - 1) for _ in range(draw(st.integers(2, 4)))]
        words = [draw(st.sampled_from(_SPELLING[op])) for _ in parts[1:]]
        text = parts[0][0] + "".join(f" {w} {p[0]}" for w, p in zip(words, parts[1:]))
        return f"({text})", _SYMPY_BINARY[op](*[p[1] for p in parts])
    if kind == "ite":
        c, cm = _expr(draw, names, symbols, depth - 1)
        t, tm = _expr(draw, names, symbols, depth - 1)
        e, em = _expr(draw, names, symbols, depth - 1)
        # Spelled out with And/Or: sympy 1.x's lambdify misprints nested ITE (it turned
        # ITE(ITE(x0, False, x1), False, x1) into x1 here), while subs() gets it right.
        meaning = sp.Or(sp.And(cm, tm), sp.And(sp.Not(cm), em))
        return f"(if {c} then {t} else {e})", meaning
    if kind == "call":
        func = draw(st.sampled_from(
            ["atleast", "atmost", "exactly", "majority", "nand", "nor", "parity"]
        ))
        args = [_expr(draw, names, symbols, depth - 1) for _ in range(draw(st.integers(1, 4)))]
        texts, meanings = [a[0] for a in args], [a[1] for a in args]
        k = None
        if func in ("atleast", "atmost", "exactly"):
            k = draw(st.integers(0, len(args)))
            texts = [str(k), *texts]
        return f"{func}({', '.join(texts)})", _call_meaning(func, k, meanings)
    return _comparison(draw, names, symbols, depth)


def _comparison(draw, names, symbols, depth: int) -> tuple[str, sp.Basic]:
    """A weighted comparison ``["-"] term (("+"|"-") term)* OP ["-"] INTEGER``."""
    count = draw(st.integers(1, 4))
    coefs, operands, texts = [], [], []
    for _ in range(count):
        coef = draw(st.integers(-3, 3))
        if draw(st.booleans()):
            name = draw(st.sampled_from(names))
            text, meaning = name, symbols[name]
        else:
            inner, meaning = _expr(draw, names, symbols, depth - 1)
            text = f"({inner})"  # an operand is a name, a call or a bracketed expression
        coefs.append(coef)
        operands.append(meaning)
        texts.append(text)
    op = draw(st.sampled_from(sorted(_HOLDS)))
    rhs = draw(st.integers(-4, 4))
    pieces = []
    for i, (coef, text) in enumerate(zip(coefs, texts, strict=True)):
        magnitude = abs(coef)
        body = text if magnitude == 1 and draw(st.booleans()) else f"{magnitude}*{text}"
        if i == 0:
            pieces.append(("-" if coef < 0 else "") + body)
        else:
            pieces.append((" - " if coef < 0 else " + ") + body)
    text = f"({''.join(pieces)} {op} {rhs})"
    return text, _compare_meaning(coefs, operands, op, rhs)


@st.composite
def rule_cases(draw, max_inputs: int = 10, max_definitions: int = 5, max_depth: int = 3):
    """Draw a :class:`RuleCase`: a rule file and the sympy meaning of each output."""
    n = draw(st.integers(1, max_inputs))
    inputs = [f"x{i}" for i in range(n)]
    symbols: dict[str, sp.Basic] = {name: sp.Symbol(name) for name in inputs}
    meanings: dict[str, sp.Basic] = dict(symbols)
    lines = [f"input {', '.join(inputs)}"]
    defs: list[str] = []
    for i in range(draw(st.integers(1, max_definitions))):
        name = f"d{i}"
        # Later definitions may use earlier ones (shared sub-terms).
        text, meaning = _expr(draw, inputs + defs, meanings, draw(st.integers(0, max_depth)))
        if text.startswith("(if ") and draw(st.booleans()):
            text = text[1:-1]  # if-then-else as a whole right-hand side
        lines.append(f"{name} = {text}")
        meanings[name] = meaning
        defs.append(name)
    listed = draw(st.booleans())
    if listed:
        outputs = draw(st.lists(st.sampled_from(defs + inputs), min_size=1, unique=True))
        lines.append(f"output {', '.join(outputs)}")
    order = draw(st.permutations(lines))  # statements may come in any order
    if not listed:
        # Without an output statement: every definition no other one uses, in source order.
        in_order = [line.split(" = ", 1) for line in order if " = " in line]
        used = {d for _, rhs in in_order for d in defs if _mentions(rhs, d)}
        outputs = [name for name, _ in in_order if name not in used]
    return RuleCase(
        text="\n".join(order) + "\n",
        inputs=tuple(inputs),
        outputs=tuple(outputs),
        expected={o: meanings[o] for o in outputs},
    )


def _mentions(text: str, name: str) -> bool:
    """True when ``name`` occurs in ``text`` as a whole word."""
    return re.search(rf"\b{re.escape(name)}\b", text) is not None


def rule_programs(max_inputs: int = 10, max_definitions: int = 5, max_depth: int = 3):
    """Draw the text of a random, valid rule file (see :func:`rule_cases`)."""
    return rule_cases(max_inputs, max_definitions, max_depth).map(lambda case: case.text)

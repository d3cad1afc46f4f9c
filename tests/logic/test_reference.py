"""Exhaustive truth tables of every operator, computed independently with itertools."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from thresholdc.logic.reference import evaluate
from thresholdc.syntax.parser import parse


def _rows(n: int) -> list[tuple[int, ...]]:
    """All 0/1 assignments of n inputs, first input most significant."""
    return list(itertools.product((0, 1), repeat=n))


def _table(text: str, n: int) -> np.ndarray:
    """The reference evaluator's table of a one-output program over inputs x0..x(n-1)."""
    header = "input " + ", ".join(f"x{i}" for i in range(n)) + "\n"
    program = parse(header + text)
    X = np.array(_rows(n), dtype=np.int8)
    out = evaluate(program, X)
    assert out.dtype == bool and out.shape == (len(X), len(program.outputs))
    return out


def _expect(fn, n: int) -> np.ndarray:
    """The expected column, row by row in plain Python."""
    return np.array([[bool(fn(*r))] for r in _rows(n)])


BINARY = {
    "x0 and x1": lambda a, b: a and b,
    "x0 & x1": lambda a, b: a and b,
    "x0 or x1": lambda a, b: a or b,
    "x0 | x1": lambda a, b: a or b,
    "x0 xor x1": lambda a, b: a != b,
    "x0 ^ x1": lambda a, b: a != b,
    "x0 implies x1": lambda a, b: (not a) or b,
    "x0 -> x1": lambda a, b: (not a) or b,
    "x0 iff x1": lambda a, b: a == b,
    "x0 <-> x1": lambda a, b: a == b,
    "not x0": lambda a, b: not a,
    "!x0": lambda a, b: not a,
    "~x0 or x1 and 0": lambda a, b: not a,
    "x1 or true": lambda a, b: True,
    "false": lambda a, b: False,
}


@pytest.mark.parametrize("expr", sorted(BINARY))
def test_connectives(expr):
    assert (_table(f"y = {expr}\n", 2) == _expect(BINARY[expr], 2)).all()


def test_if_then_else():
    got = _table("y = if x0 then x1 else x2\n", 3)
    assert (got == _expect(lambda c, t, e: t if c else e, 3)).all()


@pytest.mark.parametrize("n", [1, 2, 3, 4])
def test_counting_calls(n):
    args = ", ".join(f"x{i}" for i in range(n))
    for k in range(n + 1):
        for func, holds in (
            ("atleast", lambda s, k=k: s >= k),
            ("atmost", lambda s, k=k: s <= k),
            ("exactly", lambda s, k=k: s == k),
        ):
            got = _table(f"y = {func}({k}, {args})\n", n)
            assert (got == _expect(lambda *r, h=holds: h(sum(r)), n)).all(), (func, k, n)
    plain = {
        "majority": lambda *r: sum(r) > len(r) / 2,
        "nand": lambda *r: not all(r),
        "nor": lambda *r: not any(r),
        "parity": lambda *r: sum(r) % 2 == 1,
    }
    for func, fn in plain.items():
        assert (_table(f"y = {func}({args})\n", n) == _expect(fn, n)).all(), (func, n)


OPS = {
    ">=": lambda s, t: s >= t,
    ">": lambda s, t: s > t,
    "<=": lambda s, t: s <= t,
    "<": lambda s, t: s < t,
    "==": lambda s, t: s == t,
    "!=": lambda s, t: s != t,
}


@pytest.mark.parametrize("op", sorted(OPS))
def test_weighted_comparisons(op):
    rng = np.random.default_rng(7)
    for _ in range(8):
        coefs = [int(c) for c in rng.integers(-3, 4, size=3)]
        rhs = int(rng.integers(-4, 5))
        terms = []
        for i, c in enumerate(coefs):
            piece = f"{abs(c)}*x{i}"
            terms.append(("-" if c < 0 else "" if i == 0 else "+ ") + piece)
        text = f"y = {' '.join(terms)} {op} {rhs}\n"
        want = _expect(
            lambda *r, w=coefs, t=rhs: OPS[op](sum(c * v for c, v in zip(w, r)), t), 3
        )
        assert (_table(text, 3) == want).all(), text


def test_comparison_operands_can_be_calls_and_brackets():
    text = "y = 2*majority(x0, x1, x2) - (x0 and x3) + x3 >= 2\n"
    want = _expect(
        lambda a, b, c, d: 2 * (a + b + c >= 2) - (a and d) + d >= 2, 4
    )
    assert (_table(text, 4) == want).all()


def test_shared_definitions_and_output_of_an_input():
    text = "output x0, s, c\ns = x0 ^ x1 ^ x2\nc = atleast(2, x0, x1, x2)\nunused = x0\n"
    got = _table(text, 3)
    want = np.array([[r[0], sum(r) % 2 == 1, sum(r) >= 2] for r in _rows(3)], dtype=bool)
    assert (got == want).all()


def test_long_xor_chain_has_no_recursion_limit():
    n = 500
    text = "y = " + " ^ ".join(f"x{i}" for i in range(n)) + "\n"
    program = parse("input " + ", ".join(f"x{i}" for i in range(n)) + "\n" + text)
    X = np.random.default_rng(3).integers(0, 2, size=(64, n))
    got = evaluate(program, X)[:, 0]
    assert (got == (X.sum(axis=1) % 2 == 1)).all()


def test_deep_brackets_and_many_definitions():
    depth = 200
    chain = "(" * depth + "x0" + " and x1)" * depth
    lines = ["input x0, x1", f"d0 = {chain}"]
    lines += [f"d{i} = not d{i - 1}" for i in range(1, 2000)]
    program = parse("\n".join(lines))
    got = evaluate(program, np.array(_rows(2)))[:, 0]
    # d0 = x0 and x1; 1999 negations flip it an odd number of times.
    assert got.tolist() == [True, True, True, False]


def test_shape_is_checked():
    program = parse("input a, b\ny = a\n")
    with pytest.raises(ValueError, match="shape"):
        evaluate(program, np.zeros((4, 3)))


def test_empty_rows():
    program = parse("input a, b\ny = a or b\nz = not a\n")
    assert evaluate(program, np.zeros((0, 2))).shape == (0, 2)

"""Simplification skips read-once definitions: every name once and no constant.  sympy is the
second evaluator: on such formulas its simplify_logic never finds fewer literals, so the skip
changes no output."""

from __future__ import annotations

import random
import subprocess
import sys

import pytest

from thresholdc.logic import lower
from thresholdc.syntax.parser import parse

sympy = pytest.importorskip("sympy")


def _formula(rng: random.Random, names: list[str]) -> str:
    """A random formula reading each of ``names`` once."""
    if len(names) == 1:
        return f"not {names[0]}" if rng.random() < 0.3 else names[0]
    cut = rng.randint(1, len(names) - 1)
    left, right = _formula(rng, names[:cut]), _formula(rng, names[cut:])
    if len(names) >= 3 and rng.random() < 0.2:
        c = rng.randint(1, len(names) - 2)
        return (f"(if {_formula(rng, names[:1])} then ({_formula(rng, names[1:c + 1])}) "
                f"else ({_formula(rng, names[c + 1:])}))")
    op = rng.choice(["and", "or", "^", "->", "<->"])
    return f"({left} {op} {right})"


@pytest.mark.parametrize("seed", range(60))
def test_sympy_never_shortens_a_read_once_formula(seed):
    rng = random.Random(seed)
    names = [f"v{i}" for i in range(rng.randint(1, 6))]
    rng.shuffle(names)
    text = f"input {', '.join(sorted(names))}\ny = {_formula(rng, names)}\n"
    expr = parse(text).definitions["y"].expr
    support, _ = lower._plain_support(expr)
    assert support == set(names)
    assert lower._read_once(expr, len(support))
    syms = {n: sympy.Symbol(n) for n in sorted(support)}
    before = lower._to_sympy(expr, syms)
    after = sympy.simplify_logic(before, force=False)
    assert lower._literals(before) == len(names)
    assert lower._literals(after) >= lower._literals(before), (text, after)


@pytest.mark.parametrize("text", ["y = a and a\n", "y = a or (b and a)\n", "y = a and true\n",
                                  "y = a ^ b ^ a\n"])
def test_a_formula_reading_a_name_twice_or_a_constant_is_not_read_once(text):
    expr = parse("input a, b\n" + text).definitions["y"].expr
    support, _ = lower._plain_support(expr)
    assert support is not None and not lower._read_once(expr, len(support))


def test_compiling_read_once_definitions_loads_no_sympy(tmp_path):
    rules = tmp_path / "r.rules"
    rules.write_text("input a, b, c, d\nx = a and (b or not c)\ny = x -> d\nz = (a ^ b) or c\n")
    code = ("import sys, thresholdc\n"
            f"thresholdc.compile_rules(open({str(rules)!r}).read())\n"
            "m = sys.modules.get('sympy')\n"
            "print(m is not None and type(m).__name__ != '_LazyModule')\n")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          check=True)
    assert done.stdout == "False\n"

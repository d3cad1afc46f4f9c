"""Parse speed of the rule front end, beside two peers from the same run.

Builds a rule file of N random definitions over 20 inputs (and/or/not, counting calls,
weighted comparisons, comments) and prints, from one run:

- thresholdc ``parse`` (lark LALR + our lexer + all checks), lines and tokens per second;
- Python's own parser (``ast.parse``, written in C) on the same expressions in Python syntax;
- sympy's ``parse_expr`` on the same expressions (a pure-Python expression parser), timed on
  a sample of lines and scaled;

with the ratios, plus the time for a 500-term xor chain and 2000 chained definitions.

    python3 benchmarks/frontend_parse.py [--lines 5000] [--seed 1]
"""

from __future__ import annotations

import argparse
import ast
import random
import time

from sympy.parsing.sympy_parser import parse_expr

from thresholdc.syntax.lexer import RuleLexer
from thresholdc.syntax.parser import parse


def _line(rng: random.Random, i: int, n: int) -> tuple[str, str]:
    """One rule line and the same expression in Python syntax."""
    a, b, c = rng.sample(range(n), 3)
    kind = rng.randrange(3)
    if kind == 0:
        rule = f"o{i} = (x{a} and not x{b}) or (x{c} and x{a})"
        py = f"o{i} = (x{a} and not x{b}) or (x{c} and x{a})"
    elif kind == 1:
        rule = f"o{i} = atleast(2, x{a}, x{b}, x{c}) and not x{b}  # counting"
        py = f"o{i} = (x{a} + x{b} + x{c} >= 2) and not x{b}"
    else:
        rule = f"o{i} = 2*x{a} - x{b} + 3*x{c} >= 2"
        py = f"o{i} = 2*x{a} - x{b} + 3*x{c} >= 2"
    return rule, py


def _best(fn, repeat: int = 3) -> float:
    """Best wall time of a few runs."""
    best = float("inf")
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--lines", type=int, default=5000)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    rng = random.Random(args.seed)
    n = 20
    pairs = [_line(rng, i, n) for i in range(args.lines)]
    rules = "input " + ", ".join(f"x{i}" for i in range(n)) + "\n"
    rules += "\n".join(r for r, _ in pairs) + "\n"
    python = "\n".join(p for _, p in pairs) + "\n"
    tokens = sum(1 for _ in RuleLexer().lex(rules))

    parse("input a\ny = a\n")  # build the parser once, outside the timing
    ours = _best(lambda: parse(rules))
    theirs_c = _best(lambda: ast.parse(python))
    # sympy reads & | ~ as its logic operators (Python's and/or/not would force a truth value).
    sample = [
        p.split(" = ", 1)[1].replace(" and not ", " & ~").replace(" and ", " & ")
        .replace(" or ", " | ")
        for _, p in pairs[:200]
    ]
    sympy_sample = _best(lambda: [parse_expr(s, evaluate=False) for s in sample], repeat=1)
    sympy_all = sympy_sample * args.lines / len(sample)

    print(f"rule file: {args.lines} definitions, {tokens} tokens")
    print(f"  thresholdc parse      {ours:8.3f} s  {args.lines / ours:10.0f} lines/s")
    print(f"  Python ast.parse (C)  {theirs_c:8.3f} s  {args.lines / theirs_c:10.0f} lines/s"
          f"   ours / ast.parse = {ours / theirs_c:.1f}x the time")
    print(f"  sympy parse_expr      {sympy_all:8.3f} s  {args.lines / sympy_all:10.0f} lines/s"
          f"   (200-line sample, scaled)   sympy / ours = {sympy_all / ours:.1f}x the time")

    names = [f"a{i}" for i in range(500)]
    chain = "input " + ", ".join(names) + "\ny = " + " ^ ".join(names) + "\n"
    defs = "input x\n" + "\n".join(f"d{i} = not d{i + 1}" for i in range(1999)) + "\nd1999 = x\n"
    print(f"  500-term xor chain    {_best(lambda: parse(chain)):8.3f} s")
    print(f"  2000 chained defs     {_best(lambda: parse(defs)):8.3f} s")


if __name__ == "__main__":
    main()

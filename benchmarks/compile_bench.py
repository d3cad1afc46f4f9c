"""Compile and verify a 20-input rule file with 50 random outputs; compare evaluation speed.

Prints, from one run: the compile time, and rows per second over the full truth table
(2^20 rows) for our network evaluator (Network.decide), our reference evaluator (the rules on
numpy), sympy ``lambdify`` with the numpy backend on the same rules, and plain Python evaluation
(one compiled Python expression per output, row by row, timed on a sample of rows), with ratios.

    python3 benchmarks/compile_bench.py [--inputs 20] [--outputs 50] [--seed 1]
"""

from __future__ import annotations

import argparse
import random
import time

import numpy as np
import sympy
from sympy.logic import boolalg

from thresholdc.compiler import compile_source
from thresholdc.logic.source import source_from_text
from thresholdc.verification.exhaustive import assignments

# A formula is a small tree: ("var", i) | ("not", f) | ("and"/"or"/"xor", f, g)
#                            | ("atleast", k, [f…]) | ("wsum", [(c, f)…], rhs)


def random_formula(rng: random.Random, n: int, depth: int):
    if depth <= 0 or rng.random() < 0.2:
        return ("var", rng.randrange(n))
    kind = rng.choice(["and", "or", "xor", "not", "atleast", "wsum", "and", "or"])
    if kind == "not":
        return ("not", random_formula(rng, n, depth - 1))
    if kind == "atleast":
        args = [random_formula(rng, n, depth - 2) for _ in range(rng.randint(2, 4))]
        return ("atleast", rng.randint(1, len(args)), args)
    if kind == "wsum":
        terms = [(rng.choice([-2, -1, 1, 2, 3]), ("var", rng.randrange(n)))
                 for _ in range(rng.randint(2, 4))]
        return ("wsum", terms, rng.randint(-1, 3))
    return (kind, random_formula(rng, n, depth - 1), random_formula(rng, n, depth - 1))


def to_rules(f) -> str:
    tag = f[0]
    if tag == "var":
        return f"x{f[1]}"
    if tag == "not":
        return f"not ({to_rules(f[1])})"
    if tag in ("and", "or", "xor"):
        return f"({to_rules(f[1])}) {tag} ({to_rules(f[2])})"
    if tag == "atleast":
        return f"atleast({f[1]}, {', '.join(to_rules(a) for a in f[2])})"
    parts = [f"{'-' if c < 0 else '+'} {abs(c)}*{to_rules(v)}" for c, v in f[1]]
    terms = " ".join(parts).removeprefix("+ ").replace("- ", "-", 1 if f[1][0][0] < 0 else 0)
    return f"({terms} >= {f[2]})"


def to_python(f) -> str:
    tag = f[0]
    if tag == "var":
        return f"x[{f[1]}]"
    if tag == "not":
        return f"(not {to_python(f[1])})"
    if tag in ("and", "or"):
        return f"({to_python(f[1])} {tag} {to_python(f[2])})"
    if tag == "xor":
        return f"(bool({to_python(f[1])}) != bool({to_python(f[2])}))"
    if tag == "atleast":
        return f"(sum(map(bool, [{', '.join(to_python(a) for a in f[2])}])) >= {f[1]})"
    terms = " + ".join(f"{c}*{to_python(v)}" for c, v in f[1])
    return f"({terms} >= {f[2]})"


def to_sympy(f, xs):
    tag = f[0]
    if tag == "var":
        return xs[f[1]]
    if tag == "not":
        return boolalg.Not(to_sympy(f[1], xs))
    if tag in ("and", "or", "xor"):
        op = {"and": boolalg.And, "or": boolalg.Or, "xor": boolalg.Xor}[tag]
        return op(to_sympy(f[1], xs), to_sympy(f[2], xs))
    if tag == "atleast":
        args = [to_sympy(a, xs) for a in f[2]]
        k = f[1]
        # at least k of the args: OR over k-subsets (sympy has no counting connective)
        from itertools import combinations

        return boolalg.Or(*[boolalg.And(*c) for c in combinations(args, k)])
    # weighted sum: sympy has no pseudo-Boolean connective; expand over the few variables
    vars_ = sorted({v[1] for _, v in f[1]})
    from itertools import product

    cubes = []
    for bits in product([0, 1], repeat=len(vars_)):
        val = dict(zip(vars_, bits))
        if sum(c * val[v[1]] for c, v in f[1]) >= f[2]:
            cubes.append(boolalg.And(*[xs[v] if b else boolalg.Not(xs[v])
                                       for v, b in zip(vars_, bits)]))
    return boolalg.Or(*cubes) if cubes else sympy.false


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--inputs", type=int, default=20)
    ap.add_argument("--outputs", type=int, default=50)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--python-rows", type=int, default=1 << 13,
                    help="rows timed for plain Python (its rate is scaled up)")
    args = ap.parse_args()
    rng = random.Random(args.seed)
    n = args.inputs
    formulas = [random_formula(rng, n, 4) for _ in range(args.outputs)]
    text = f"input {', '.join(f'x{i}' for i in range(n))}\n" + "".join(
        f"y{j} = {to_rules(f)}\n" for j, f in enumerate(formulas)
    )
    src = source_from_text(text, "bench.rules")
    t0 = time.perf_counter()
    result = compile_source(src, verify="none")
    t_compile = time.perf_counter() - t0
    net = result.network
    t0 = time.perf_counter()
    from thresholdc.verification.exhaustive import verify_exhaustive

    report = verify_exhaustive(net, src)
    t_verify = time.perf_counter() - t0
    total = 1 << n
    X = assignments(n, 0, total)

    t0 = time.perf_counter()
    ours = np.concatenate([net.decide(X[s:s + 65536]) for s in range(0, total, 65536)])
    t_net = time.perf_counter() - t0
    t0 = time.perf_counter()
    ref = np.concatenate([src.evaluate(X[s:s + 65536]) for s in range(0, total, 65536)])
    t_ref = time.perf_counter() - t0

    xs = sympy.symbols(f"x0:{n}")
    t0 = time.perf_counter()
    exprs = [to_sympy(f, xs) for f in formulas]
    fn = sympy.lambdify(xs, exprs, modules="numpy")
    t_lamb_build = time.perf_counter() - t0
    t0 = time.perf_counter()
    cols = [X[:, i].astype(bool) for i in range(n)]
    lam = np.stack([np.broadcast_to(np.asarray(v, dtype=bool), (total,)) for v in fn(*cols)],
                   axis=1)
    t_lamb = time.perf_counter() - t0

    py_fns = [eval(f"lambda x: bool({to_python(f)})") for f in formulas]  # noqa: S307
    sample = X[: args.python_rows].tolist()
    t0 = time.perf_counter()
    py = np.array([[g(row) for g in py_fns] for row in sample])
    t_py = (time.perf_counter() - t0) * total / len(sample)

    assert (ours == ref).all() and (lam == ref).all() and (py == ref[: len(sample)]).all()
    print(f"rule file: {n} inputs, {args.outputs} outputs (seed {args.seed}); "
          f"{len(net.neurons)} neurons, depth {net.depth}")
    print(f"compile: {t_compile:.2f} s; exhaustive verification: {report.result}, "
          f"{total} rows in {t_verify:.2f} s")
    rows = [
        ("thresholdc network (Network.decide)", t_net),
        ("thresholdc reference evaluator (rules on numpy)", t_ref),
        ("sympy lambdify, numpy backend", t_lamb),
        ("plain Python, row by row (scaled from a sample)", t_py),
    ]
    print(f"{'evaluator':50s} {'rows/s':>14s} {'vs network':>11s}")
    for label, t in rows:
        print(f"{label:50s} {total / t:14,.0f} {t / t_net:10.2f}x")
    print(f"(sympy expression building and lambdify took {t_lamb_build:.2f} s, not counted)")


if __name__ == "__main__":
    main()

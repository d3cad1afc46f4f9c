"""Small random typed rule sets, perturbed networks of them, and their exhaustive truth.

``random_rules(rng)`` writes a rule file over 2-5 categorical inputs (2-4 values) and up to two
Booleans with one or two outputs; ``truth(net, text)`` enumerates every valid assignment with
numpy and says, per output, whether the network's decision (``Network.decide``) ever differs
from the reference evaluator's — the outside check every verdict is compared with.
``trained_like`` (benchmarks/trained_like.py, loaded from its file) perturbs a compiled
network as a short fine-tuning would.
"""

from __future__ import annotations

import itertools

import numpy as np

from tests.benchmark_modules import load_benchmark
from thresholdc.logic.source import source_from_text
from thresholdc.verification.domain import boolean_or_typed_domain, network_rows


def load_trained_like():
    """benchmarks/trained_like.py as a module."""
    return load_benchmark("trained_like")


VALUES = ["a", "b", "c", "d"]


def random_rules(rng: np.random.Generator) -> str:
    """A random typed rule file (see the module docstring)."""
    n_cat = int(rng.integers(2, 6))
    n_bool = int(rng.integers(0, 3))
    cats = [(f"c{i}", VALUES[: int(rng.integers(2, 5))]) for i in range(n_cat)]
    bools = [f"b{i}" for i in range(n_bool)]
    decl = [f"input {name}: {{{', '.join(vals)}}}" for name, vals in cats]
    if bools:
        decl.append("input " + ", ".join(bools))

    def literal() -> str:
        if bools and rng.random() < 0.25:
            b = bools[int(rng.integers(len(bools)))]
            return b if rng.random() < 0.5 else f"not {b}"
        name, vals = cats[int(rng.integers(len(cats)))]
        pick = sorted(rng.choice(vals, int(rng.integers(1, len(vals))), replace=False))
        if len(pick) == 1:
            return f"{name} {'==' if rng.random() < 0.7 else '!='} {pick[0]}"
        return f"{name} in {{{', '.join(pick)}}}"

    def expr() -> str:
        kind = rng.integers(4)
        lits = [literal() for _ in range(int(rng.integers(2, 5)))]
        if kind == 0:
            return " and ".join(lits)
        if kind == 1:
            return " or ".join(lits)
        if kind == 2:
            return f"atleast({int(rng.integers(1, len(lits) + 1))}, {', '.join(lits)})"
        return f"({lits[0]} and {lits[1]}) or not ({' or '.join(lits[1:])})"

    lines = decl + [f"h = {expr()}", f"y0 = h and ({expr()})"]
    outs = ["y0"]
    if rng.random() < 0.6:
        lines.append(f"y1 = {expr()} or not h")
        outs.append("y1")
    lines.append("output " + ", ".join(outs))
    return "\n".join(lines) + "\n"


def truth(net, text: str) -> dict[str, int]:
    """Per output, the number of valid assignments on which ``net`` and the rules disagree."""
    src = source_from_text(text)
    d = boolean_or_typed_domain(src)
    choice = d.enumerate(0, d.size)
    X = d.unit_rows(choice)
    actual = net.decide(network_rows(net, d, X))
    cols = [list(src.outputs).index(o.name) for o in net.outputs]
    expected = np.asarray(src.evaluate(X), dtype=bool)[:, cols]
    wrong = (actual != expected).sum(axis=0)
    return {o.name: int(wrong[k]) for k, o in enumerate(net.outputs)}


def is_counterexample(net, text: str, output: str, assignment: dict) -> bool:
    """True when the network and the rules disagree on ``output`` at ``assignment``."""
    src = source_from_text(text)
    d = boolean_or_typed_domain(src)
    choice = np.array([[f.labels.index(assignment[f.name]) for f in d.discrete]])
    X = d.unit_rows(choice)
    k = net.output_names.index(output)
    actual = bool(net.decide(network_rows(net, d, X))[0, k])
    expected = bool(src.evaluate(X)[0, list(src.outputs).index(output)])
    return actual != expected


def cases(seed: int, count: int):
    """``count`` (text, seed) pairs from one generator."""
    rng = np.random.default_rng(seed)
    for i in itertools.count():
        if i >= count:
            return
        yield random_rules(rng), seed * 1000 + i

"""Structural classes are sound: signals of one class compute the same function (or its
complement when their flags differ), on random gate graphs with constants, checked with
GateGraph.simulate on every input."""

from __future__ import annotations

import random

import numpy as np
import pytest

from thresholdc.ir.gates import Gate, GateGraph
from thresholdc.verification.structural import structural_classes

OPS = ["and", "or", "nand", "nor", "xor", "xnor", "not", "buf", "threshold", "equal", "ite"]


@pytest.mark.parametrize("seed", range(6))
def test_classes_are_sound(seed):
    rng = random.Random(seed)
    for _ in range(60):
        gates = [("c1", Gate("const", value=1)), ("c0", Gate("const", value=0))]
        sigs = ["a", "b", "c", "c1", "c0"]
        for k in range(14):
            op = rng.choice(OPS)
            if op in ("not", "buf"):
                args = (rng.choice(sigs),)
            elif op == "ite":
                args = tuple(rng.choice(sigs) for _ in range(3))
            else:
                args = tuple(rng.choice(sigs) for _ in range(rng.randint(1, 3)))
            kw = {}
            if op in ("threshold", "equal"):
                kw = {"weights": tuple(rng.randint(-2, 2) for _ in args),
                      "threshold": rng.randint(-2, 2)}
            gates.append((f"g{k}", Gate(op, args, **kw)))
            sigs.append(f"g{k}")
        g = GateGraph.build(["a", "b", "c"], [(s, s) for s in sigs[3:]], gates)
        cls = structural_classes(g)
        X = (np.arange(8)[:, None] >> np.arange(3)) & 1
        V = g.simulate(X, sigs)
        for i, s in enumerate(sigs):
            for j, t in enumerate(sigs):
                if cls[s][0] == cls[t][0]:
                    want = V[:, i] if cls[s][1] == cls[t][1] else ~V[:, i]
                    assert np.array_equal(want, V[:, j]), (s, t, gates)


def test_duplicates_and_constants_share_classes():
    g = GateGraph.build(["a", "b"], [("y", "y")], [
        ("one", Gate("const", value=1)),
        ("x", Gate("and", ("a", "b"))),
        ("x2", Gate("and", ("b", "a", "one"))),
        ("n", Gate("nor", ("a", "b"))),
        ("o", Gate("or", ("a", "b"))),
        ("t", Gate("threshold", ("a", "b"), (1, 1), 2)),
        ("y", Gate("xor", ("x", "one"))),
    ])
    c = structural_classes(g)
    assert c["x"] == c["x2"]
    assert c["n"] == (c["o"][0], not c["o"][1])
    assert c["y"] == (c["x"][0], not c["x"][1])
    assert c["t"] != c["x"]  # a threshold gate is its own class (not folded into an AND)

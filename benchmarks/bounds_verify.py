"""Branch-and-bound verification of trained-like sigmoid networks, beside brute force.

An invented scenario: an irrigation controller's rules over n Boolean sensor flags
(``atleast(3, …)`` of the soil probes, and a few conjunctions), compiled to a sigmoid network,
then perturbed with small Gaussian noise on every weight (as a short fine-tuning would).
From one run it prints, per n: the time of :func:`thresholdc.verification.bounds.verify_bounds`,
the time of the exhaustive numpy check over all 2^n rows (our :func:`verify_exhaustive`), and
plain Python brute force (the network's forward pass in Python loops and the rules through the
reference evaluator, one row at a time, timed on 2000 rows and scaled to 2^n), with ratios;
and it checks that the verdicts and counts agree.  Not a timed test.

    python3 benchmarks/bounds_verify.py [--sizes 12,16,20,22] [--noise 0.02] [--seed 1]
"""

from __future__ import annotations

import argparse
import math
import time
from dataclasses import replace

import numpy as np

from thresholdc.compiler import compile_rules
from thresholdc.logic.source import source_from_text
from thresholdc.verification.bounds import verify_bounds
from thresholdc.verification.exhaustive import verify_exhaustive


def rules(n: int) -> str:
    names = [f"s{i}" for i in range(n)]
    probes = ", ".join(names[: n // 2])
    return (
        f"input {', '.join(names)}\n"
        f"water = atleast(3, {probes}) and not s{n - 1}\n"
        f"alarm = (s0 and s1) or (s{n // 2} and not s{n // 2 + 1}) or s{n - 2}\n"
    )


def perturb(net, sigma: float, rng: np.random.Generator):
    neurons = []
    for n in net.neurons:
        size = max([abs(w) for w in n.weights] + [1.0])
        w = np.asarray(n.weights, float) + rng.normal(0, sigma * size, len(n.weights))
        neurons.append(replace(n, weights=tuple(w.tolist()),
                               bias=float(n.bias) + rng.normal(0, sigma * size)))
    return replace(net, neurons=tuple(neurons))


def plain_python_rows_per_second(net, src, rows: int = 2000) -> float:
    """Rows per second of a plain-Python forward pass plus rule evaluation."""
    rng = np.random.default_rng(0)
    X = rng.integers(0, 2, size=(rows, len(net.inputs))).tolist()
    t0 = time.perf_counter()
    for x in X:
        value = dict(zip(net.inputs, x))
        for n in net.neurons:
            z = n.bias + sum(w * value[i] for w, i in zip(n.weights, n.inputs))
            value[n.name] = 1.0 / (1.0 + math.exp(-z)) if z > -700 else 0.0
        src.evaluate([x])
    return rows / (time.perf_counter() - t0)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", default="12,16,20,22")
    ap.add_argument("--noise", type=float, default=0.02)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    rng = np.random.default_rng(args.seed)
    print(f"{'n':>3} {'verdict':>9} {'boxes':>8} {'bounds s':>9} {'exhaustive s':>13} "
          f"{'plain Python s':>15} {'exh/bounds':>10} {'py/bounds':>10}")
    for n in [int(s) for s in args.sizes.split(",")]:
        text = rules(n)
        src = source_from_text(text)
        net = perturb(compile_rules(text, activation="sigmoid", verify="none"), args.noise, rng)
        t0 = time.perf_counter()
        bb = verify_bounds(net, src)
        t_b = time.perf_counter() - t0
        t0 = time.perf_counter()
        ex = verify_exhaustive(net, src, max_inputs=n)
        t_e = time.perf_counter() - t0
        assert ex.result == bb.result
        assert [o.disagreements for o in ex.outputs] == [o.disagreements for o in bb.outputs]
        t_p = (1 << n) / plain_python_rows_per_second(net, src)
        boxes = bb.proofs[0].split(" in ")[-1].split()[0] if bb.proofs else "-"
        print(f"{n:>3} {bb.result:>9} {boxes:>8} {t_b:>9.3f} {t_e:>13.3f} {t_p:>15.1f} "
              f"{t_e / t_b:>10.1f} {t_p / t_b:>10.0f}")


if __name__ == "__main__":
    main()

"""Rule-structured start against random init on noisy categorical data (not a timed test).

Scenario (invented, ``training_scenario.py``): routing crates at a ferry-terminal depot, 32
categorical readings of 4 levels (128 one-hot units), 2 outputs, three levels of definitions
and a counting term.  The user's rules are a degraded copy of the true ones (``--degrade``:
a wrong literal, a dropped or added antecedent, a changed count).  Training rows are sampled
uniformly and labelled by the true rules with 7% of the labels flipped; the test set is 3000
fresh rows labelled without noise.  Each run trains with the defaults (every automatic
choice) from

- ``rules``: the rule-structured start of the degraded rules;
- ``random``: the baseline without rules (``init="random"``: one dense hidden layer as wide as
  the rule start's hidden layers, Glorot weights, weight decay chosen by cross-validation);

and reports the test error rate (mean over the outputs) beside the degraded rules alone.

Run: ``python benchmarks/training_bench.py [--rows 100 300 1000] [--seeds 3]
[--degrade literal drop add count]``; prints one line per (degradation, rows) with the mean
and the worst over the seeds, and the ratio random/rules.
"""

from __future__ import annotations

import argparse
import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

from training_scenario import labels, rules_text, sample  # noqa: E402

from thresholdc.logic import source_from_text  # noqa: E402
from thresholdc.training import rule_network, train  # noqa: E402

READINGS, LEVELS, NOISE, TEST_ROWS = 32, 4, 0.07, 3000


def one(degrade: str, rows: int, seed: int) -> dict[str, float]:
    true = source_from_text(rules_text(READINGS, LEVELS), "depot.rules")
    bad = source_from_text(rules_text(READINGS, LEVELS, degrade), "depot.rules")
    rng = np.random.default_rng([seed, rows])
    X = sample(rows, READINGS, LEVELS, rng)
    y = labels(true, X, NOISE, rng)
    Xt = sample(TEST_ROWS, READINGS, LEVELS, rng)
    truth = np.asarray(true.evaluate(Xt))
    out = {"rules alone": float(np.mean(np.asarray(bad.evaluate(Xt)) != truth))}
    net = rule_network(bad.program)
    for init in ("rules", "random"):
        t = time.perf_counter()
        r = train(net, X, y, rules=bad, init=init, seed=seed)
        out[init] = float(np.mean(r.network.decide(Xt) != truth))
        out[init + " s"] = time.perf_counter() - t
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, nargs="+", default=[100, 300, 1000])
    ap.add_argument("--seeds", type=int, default=3)
    ap.add_argument("--degrade", nargs="+", default=["literal", "drop", "add", "count"])
    args = ap.parse_args()
    print(f"depot scenario: {READINGS} readings x {LEVELS} levels, 2 outputs, {NOISE:.0%} "
          f"label noise, {TEST_ROWS} clean test rows; test error, mean (worst) over "
          f"{args.seeds} seeds")
    print(f"{'degraded':8s} {'rows':>5s}  {'rules alone':>12s}  {'rules start':>14s}  "
          f"{'random init':>14s}  {'random/rules':>12s}  {'s/run':>6s}")
    for degrade in args.degrade:
        for rows in args.rows:
            runs = [one(degrade, rows, s) for s in range(args.seeds)]

            def stat(key: str, runs: list[dict[str, float]] = runs) -> tuple[float, float]:
                v = np.array([r[key] for r in runs])
                return float(v.mean()), float(v.max())

            alone, warm, cold = stat("rules alone"), stat("rules"), stat("random")
            secs = np.mean([r["rules s"] for r in runs])
            print(f"{degrade:8s} {rows:5d}  {alone[0]:12.4f}  {warm[0]:7.4f} ({warm[1]:.3f})"
                  f"  {cold[0]:7.4f} ({cold[1]:.3f})  {cold[0] / max(warm[0], 1e-9):12.2f}"
                  f"  {secs:6.1f}", flush=True)


if __name__ == "__main__":
    main()

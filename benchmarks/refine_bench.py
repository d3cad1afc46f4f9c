"""Rule refinement on a hidden rule set: warm start against random init (not a timed test).

Scenario (invented): ``circuits/orchard_inspection.rules`` is the hidden "true" rule set
(40 inputs, 30 Boolean and 10 with three levels = 60 input units; 13 definitions on four
levels; two counting terms).  Each degradation is a copy of it with one deliberate mistake:

- ``drop-antecedent``: ``borer_sign`` loses ``sawdust``;
- ``add-antecedent``: ``fungal_sign`` also needs ``not mulched``;
- ``drop-rule``: ``disease`` forgets ``canker_risk``;
- ``add-rule``: ``infest`` also fires on ``moss and lichen``;
- ``change-count``: ``decline`` needs 3 of its signs instead of 2.

Data: rows drawn uniformly over the valid assignments (seeded), labelled by the true rules
with the reference evaluator (which shares no code with the network path), then 7% of the
labels flipped.  For each size (100, 300, 1000 rows), seed and degradation, a k-fold split
(10 folds by default); on each fold the test error (against the fold's noisy labels) of:

- ``rules``: the degraded rules alone (no training);
- ``warm``: ``thresholdc.train`` from the degraded rules (its defaults: rule-structured start,
  λ and ω by cross-validation);
- ``random``: the baseline a practitioner would train without the rules (``init="random"``):
  a dense network with one hidden layer of as many sigmoid units as the rule start has hidden
  units, Glorot-uniform weights, λ as weight decay chosen by the same cross-validation, the
  same trainer;
- ``mlp`` (the peer, which never sees the rules): plain backpropagation of one hidden layer of
  16 sigmoid units from random weights, cross-entropy with a fixed weight decay, scipy L-BFGS.

Goals printed at the end (issue goals for the warm start): it beats random init for every
degradation and size; at ≤ 300 rows its error is at most half of random init's; and it keeps
every correct rule the data support, checked with ``thresholdc.diff`` against the true rules:
a definition whose whole cone the degradation left unchanged counts as kept when its
read-back agrees with the true definition on at least 99% of the assignments.

Run: ``python benchmarks/refine_bench.py`` (10 folds × 5 seeds: hours on 2 shared cores) or
``--quick`` (3 folds × 1 seed), ``--sizes 100,300``, ``--json FILE``; a run split over processes
(``--seeds 1 --first-seed 1 --json b.json`` beside ``--seeds 1 --json a.json``) is put
together by ``--merge a.json b.json``.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import time
from typing import Any

import numpy as np

import thresholdc
from thresholdc.explain.columns import sample_rows, unit_rows
from thresholdc.ir.reference import Reference
from thresholdc.logic import source_from_text
from thresholdc.logic.reference import evaluate_definitions

HERE = os.path.dirname(os.path.abspath(__file__))
TRUE_RULES = os.path.join(HERE, "..", "circuits", "orchard_inspection.rules")
NOISE = 0.07
SIZES = (100, 300, 1000)
KEPT_AGREEMENT = 0.99
_PEER: dict[tuple, tuple[float, float]] = {}  # the peer does not see the rules: one fit a fold

#: Each degradation: (definition changed, old text, new text); the old text occurs once.
DEGRADATIONS: dict[str, tuple[str, str, str]] = {
    "drop-antecedent": ("borer_sign", "holes_trunk and sawdust and age != young",
                        "holes_trunk and age != young"),
    "add-antecedent": ("fungal_sign", "leaf_spots and soil_wet != dry and canopy == dense",
                       "leaf_spots and soil_wet != dry and canopy == dense and not mulched"),
    "drop-rule": ("disease", "disease = fungal or canker_risk", "disease = fungal"),
    "add-rule": ("infest", "infest = borer_sign or pests",
                 "infest = borer_sign or pests or (moss and lichen)"),
    "change-count": ("decline", "atleast(2, stress, weak_tree", "atleast(3, stress, weak_tree"),
}


def true_source() -> Reference:
    """The hidden true rules."""
    with open(TRUE_RULES, encoding="utf-8") as fh:
        return source_from_text(fh.read(), "orchard_inspection.rules")


def degrade(source: Reference, name: str) -> Reference:
    """The true rules with one mistake (see :data:`DEGRADATIONS`)."""
    _, old, new = DEGRADATIONS[name]
    assert source.text.count(old) == 1, name
    return source_from_text(source.text.replace(old, new), f"orchard_{name}.rules")


def sample(source: Reference, rows: int, seed: int, noise: float = NOISE
           ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``(columns, units, labels)``: ``rows`` seeded uniform assignments, their input units and
    the true output with a ``noise`` fraction of the labels flipped (exactly that many)."""
    rng = np.random.default_rng(seed)
    program = source.program
    assert program is not None
    C = sample_rows(program, rows, rng)
    y = evaluate_definitions(program, C)[program.outputs[0]].astype(float)
    flip = rng.permutation(rows)[: int(round(noise * rows))]
    y[flip] = 1.0 - y[flip]
    return C, unit_rows(program, C, source.inputs), y[:, None]


def folds(rows: int, k: int, seed: int) -> list[np.ndarray]:
    """A seeded split of ``range(rows)`` into ``k`` test folds."""
    order = np.random.default_rng(seed + 10_000).permutation(rows)
    return [np.sort(f) for f in np.array_split(order, k)]


def unchanged_cones(true: Reference, bad: Reference) -> list[str]:
    """Definitions whose cone (the definition and all it uses) the degradation left as is."""
    tp, bp = true.program, bad.program
    assert tp is not None and bp is not None
    out = []
    for name in tp.definitions:
        cone = {name} | _definitions_used(tp, name)
        if all(c in bp.definitions and repr(bp.definitions[c]) == repr(tp.definitions[c])
               for c in cone):
            out.append(name)
    return out


def _definitions_used(program: Any, name: str) -> set[str]:
    from thresholdc.ir.program import Name, sub_expressions

    seen: set[str] = set()
    todo = [name]
    while todo:
        stack = [program.definitions[todo.pop()].expr]
        while stack:
            e = stack.pop()
            if isinstance(e, Name) and e.id in program.definitions and e.id not in seen:
                seen.add(e.id)
                todo.append(e.id)
            stack.extend(sub_expressions(e))
    return seen


def start_network(source: Reference) -> thresholdc.Network:
    """The rule-structured start of a rule file (ω = 4), the network handed to ``train``."""
    from thresholdc.training.kbstart import rule_network

    assert source.program is not None
    return rule_network(source.program, weight=4.0)


def mlp_peer(X: np.ndarray, y: np.ndarray, seed: int, hidden: int = 16,
             decay: float = 0.01) -> Any:
    """The peer: plain backpropagation, one hidden layer of ``hidden`` sigmoid units from
    random weights, cross-entropy plus ``decay``·Σw²/2 (both fixed, common practice), fitted
    by scipy's L-BFGS; returns a predict function (rows → bool)."""
    from scipy.optimize import minimize
    from scipy.special import expit

    rng = np.random.default_rng(seed + 20_000)
    n, m = X.shape
    t = y[:, 0]
    shapes = [(m, hidden), (hidden,), (hidden,), ()]
    sizes = [int(np.prod(s)) for s in shapes]

    def unpack(theta: np.ndarray) -> list[np.ndarray]:
        out, i = [], 0
        for shape, size in zip(shapes, sizes):
            out.append(theta[i:i + size].reshape(shape))
            i += size
        return out

    def loss(theta: np.ndarray) -> tuple[float, np.ndarray]:
        W1, b1, w2, b2 = unpack(theta)
        H = expit(X @ W1 + b1)
        p = np.clip(expit(H @ w2 + b2), 1e-12, 1 - 1e-12)
        value = -np.mean(t * np.log(p) + (1 - t) * np.log(1 - p))
        value += 0.5 * decay * (np.sum(W1 ** 2) + np.sum(w2 ** 2))
        d = (p - t) / n
        gw2 = H.T @ d + decay * w2
        dH = np.outer(d, w2) * H * (1 - H)
        grads = [X.T @ dH + decay * W1, dH.sum(axis=0), gw2, np.array(d.sum())]
        return float(value), np.concatenate([g.ravel() for g in grads])

    theta0 = rng.normal(0.0, 0.1, size=sum(sizes))
    theta = minimize(loss, theta0, jac=True, method="L-BFGS-B",
                     options={"maxiter": 500}).x
    W1, b1, w2, b2 = unpack(theta)
    return lambda Z: expit(expit(Z @ W1 + b1) @ w2 + b2) > 0.5


def run_fold(true: Reference, bad: Reference, X: np.ndarray, C: np.ndarray, y: np.ndarray,
             test: np.ndarray, seed: int, workers: int | None) -> dict[str, Any]:
    """Test errors of rules alone, warm start and random init on one fold; the rules kept."""
    train_rows = np.setdiff1d(np.arange(len(y)), test)
    truth = y[test, 0] > 0.5
    program = bad.program
    assert program is not None
    rules_pred = evaluate_definitions(program, C[test])[program.outputs[0]]
    out: dict[str, Any] = {"rules": float((rules_pred != truth).mean())}
    key = (len(y), seed, tuple(test[:5]))
    if key not in _PEER:
        t0 = time.perf_counter()
        predict = mlp_peer(X[train_rows], y[train_rows], seed)
        _PEER[key] = (float((predict(X[test]) != truth).mean()), time.perf_counter() - t0)
    out["mlp"], out["mlp_seconds"] = _PEER[key]
    net = start_network(bad)
    extra = {} if workers is None else {"workers": workers}
    for init in ("rules", "random"):
        t0 = time.perf_counter()
        res = thresholdc.train(net, X[train_rows], y[train_rows], rules=bad, init=init,
                               seed=seed, **extra)
        key = "warm" if init == "rules" else "random"
        out[f"{key}_seconds"] = time.perf_counter() - t0
        pred = res.network.decide(X[test])[:, 0]
        out[key] = float((pred != truth).mean())
        if init == "rules":
            report = thresholdc.diff(res.network, true, samples=4000, seed=seed)
            agree = {d.name: d.agreement for d in report.definitions}
            correct = unchanged_cones(true, bad)
            kept = [n for n in correct if (agree.get(n) or 0.0) >= KEPT_AGREEMENT]
            out["correct"] = correct
            out["lost"] = sorted(set(correct) - set(kept))
            out["no_unit"] = [d.name for d in report.definitions if d.reading is None]
            out["repaired"] = (agree.get(DEGRADATIONS[_which(bad)][0]) or 0.0) >= KEPT_AGREEMENT
    return out


def _which(bad: Reference) -> str:
    return bad.file.removeprefix("orchard_").removesuffix(".rules")


def run(sizes: tuple[int, ...], seeds: int, k: int, workers: int | None,
        names: list[str], log: Any = sys.stderr, first_seed: int = 0) -> dict[str, Any]:
    """Every size × degradation × seed × fold; returns per-cell lists of fold results."""
    true = true_source()
    cells: dict[str, dict[str, list[dict[str, Any]]]] = {}
    for size in sizes:
        for seed in range(first_seed, first_seed + seeds):
            C, X, y = sample(true, size, seed)
            split = folds(size, k, seed)
            for name in names:
                bad = degrade(true, name)
                for f, test in enumerate(split):
                    r = run_fold(true, bad, X, C, y, test, seed, workers)
                    cells.setdefault(str(size), {}).setdefault(name, []).append(r)
                    log.write(f"  {size:5d} rows seed {seed} {name:16s} fold {f}: rules "
                              f"{r['rules']:.3f} warm {r['warm']:.3f} random {r['random']:.3f}"
                              f" mlp {r['mlp']:.3f}"
                              f" ({r['warm_seconds']:.1f} s + {r['random_seconds']:.1f} s)"
                              f"{' lost ' + ','.join(r['lost']) if r['lost'] else ''}\n")
                    log.flush()
    return cells


def summarise(cells: dict[str, Any]) -> tuple[str, dict[str, bool]]:
    """The table (mean test error per method, kept rules, time) and the goals checked."""
    lines = [f"{'rows':>5}  {'degradation':16s}  {'rules':>6}  {'warm':>6}  {'random':>6}  "
             f"{'mlp':>6}  {'warm/random':>11}  {'warm/mlp':>8}  {'kept':>9}  {'repaired':>8}  "
             f"{'s/fit warm':>10}  {'s/fit rnd':>9}  {'s/fit mlp':>9}"]
    beats, halves, keeps = True, True, True
    beats_mlp, halves_mlp = True, True
    for size, per in cells.items():
        for name, runs in per.items():
            m = {key: float(np.mean([r[key] for r in runs]))
                 for key in ("rules", "warm", "random", "mlp", "warm_seconds",
                             "random_seconds", "mlp_seconds")}
            correct = sum(len(r["correct"]) for r in runs)
            lost = sum(len(r["lost"]) for r in runs)
            repaired = sum(bool(r["repaired"]) for r in runs)
            ratio = m["warm"] / m["random"] if m["random"] > 0 else float("inf")
            beats &= m["warm"] < m["random"]
            beats_mlp &= m["warm"] < m["mlp"]
            if int(size) <= 300:
                halves &= m["warm"] <= 0.5 * m["random"]
                halves_mlp &= m["warm"] <= 0.5 * m["mlp"]
            keeps &= lost == 0
            peer = m["warm"] / m["mlp"] if m["mlp"] > 0 else float("inf")
            lines.append(
                f"{size:>5}  {name:16s}  {m['rules']:6.3f}  {m['warm']:6.3f}  "
                f"{m['random']:6.3f}  {m['mlp']:6.3f}  {ratio:11.2f}  {peer:8.2f}  "
                f"{correct - lost:4d}/{correct:<4d}  {repaired:3d}/{len(runs):<4d}  "
                f"{m['warm_seconds']:10.1f}  {m['random_seconds']:9.1f}  "
                f"{m['mlp_seconds']:9.1f}")
    goals = {"warm beats random everywhere": beats,
             "warm <= half of random at <= 300 rows": halves,
             "every correct rule kept": keeps,
             "(beside the peer) warm beats the plain MLP everywhere": beats_mlp,
             "(beside the peer) warm <= half of the plain MLP at <= 300 rows": halves_mlp}
    # not goals of their own, but what makes the three above meaningful
    cells_all = [(size, name, runs) for size, per in cells.items() for name, runs in per.items()]
    better = sum(np.mean([r["warm"] for r in runs]) < np.mean([r["rules"] for r in runs])
                 for _, _, runs in cells_all)
    worse = sum(np.mean([r["warm"] for r in runs]) > np.mean([r["rules"] for r in runs])
                for _, _, runs in cells_all)
    repaired = sum(bool(r["repaired"]) for _, _, runs in cells_all for r in runs)
    folds_all = sum(len(runs) for _, _, runs in cells_all)
    lines.append(f"warm start better than the damaged rules alone in {better} of "
                 f"{len(cells_all)} cells, worse in {worse}; damaged definition repaired "
                 f"(read back by diff) in {repaired} of {folds_all} folds")
    return "\n".join(lines), goals


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="3 folds × 1 seed")
    ap.add_argument("--folds", type=int, default=None)
    ap.add_argument("--seeds", type=int, default=None)
    ap.add_argument("--sizes", default=",".join(map(str, SIZES)))
    ap.add_argument("--degradations", default=",".join(DEGRADATIONS))
    ap.add_argument("--workers", type=int, default=None, help="train's workers option")
    ap.add_argument("--first-seed", type=int, default=0,
                    help="seeds first-seed … first-seed + seeds − 1 (to split a run)")
    ap.add_argument("--json", metavar="FILE", help="also write every fold's figures")
    ap.add_argument("--merge", nargs="+", metavar="JSON",
                    help="print the table of earlier --json files together (no training)")
    args = ap.parse_args(argv)
    if args.merge:
        cells: dict[str, Any] = {}
        for path in args.merge:
            with open(path, encoding="utf-8") as fh:
                for size, per in json.load(fh).items():
                    for name, runs in per.items():
                        cells.setdefault(size, {}).setdefault(name, []).extend(runs)
        table, goals = summarise(cells)
        print(f"merged {', '.join(args.merge)}")
        print(table)
        for goal, ok in goals.items():
            print(f"goal: {goal}: {'yes' if ok else 'NO'}")
        return 0
    k = args.folds or (3 if args.quick else 10)
    seeds = args.seeds or (1 if args.quick else 5)
    sizes = tuple(int(s) for s in args.sizes.split(","))
    names = args.degradations.split(",")
    print(f"hidden rules: {TRUE_RULES} ({NOISE:.0%} label noise); {k} folds × {seeds} seeds; "
          f"test error against the held-out fold's noisy labels")
    t0 = time.perf_counter()
    cells = run(sizes, seeds, k, args.workers, names, first_seed=args.first_seed)
    table, goals = summarise(cells)
    print(table)
    print(f"(kept: correct definitions whose read-back still agrees with the true rule on "
          f"≥ {KEPT_AGREEMENT:.0%} of assignments, over all folds; repaired: folds where the "
          f"damaged definition's read-back agrees with the true one; "
          f"{time.perf_counter() - t0:.0f} s)")
    for goal, ok in goals.items():
        print(f"goal: {goal}: {'yes' if ok else 'NO'}")
    if args.json:
        with open(args.json, "w", encoding="utf-8") as fh:
            json.dump(cells, fh, indent=1)
    return 0


if __name__ == "__main__":
    sys.exit(main())

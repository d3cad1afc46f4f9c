"""Training speed: a full automatic ``train`` and a single fixed-λ run beside plain PyTorch.

The data: the depot scenario of ``training_scenario.py`` with 48 readings of 10 levels
(480 one-hot units), 2 outputs, 1000 rows, 7% of the labels flipped.  Timed in one run:

- ``auto``: ``train`` with every automatic choice (λ and ω by 3-fold cross-validation along
  the λ path, early stopping on the held-out folds, the final path on all rows, the start's
  tolerance), ``workers`` processes;
- ``single``: one fit with λ and ω fixed (the chosen ones) and early stopping on 20% of rows;
  both with the default 1 s bound of the start's tolerance and without it (fits only);
- ``torch adam``: a plain PyTorch loop on the same dense network from the same start
  (Adam, lr 0.01, batch 32, cross-entropy, the same anchor), for as many passes as it takes
  to reach our single run's training loss or 200 passes, whichever comes first;
- ``torch lbfgs``: ``torch.optim.LBFGS`` full batch, as many iterations as ours.

Goals (issue): auto ≤ 20 s on 2 cores, auto ≤ 4 × single.  Times are wall-clock on a shared
machine: read the ratios.  PyTorch is imported lazily; its columns are skipped without it.

    .venv/bin/python benchmarks/train_speed_bench.py [--rows 1000] [--workers 2]
"""

from __future__ import annotations

import argparse
import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.dirname(__file__))

from training_scenario import labels, rules_text, sample  # noqa: E402

from thresholdc.source import Source  # noqa: E402
from thresholdc.training import TrainOptions, rule_network, train  # noqa: E402
from thresholdc.training.mlp import Layout  # noqa: E402


def _torch_runs(start, X, y, lam, w, target_loss, lbfgs_iters):
    try:
        import torch
    except ImportError:
        return None
    torch.set_num_threads(1)
    lay = Layout.of(start)
    W0, b0 = lay.params(start)
    Xt = torch.tensor(X, dtype=torch.float64)
    yt = torch.tensor(y, dtype=torch.float64)
    cols = torch.tensor(lay.output_columns(list(start.output_names)[: y.shape[1]]))

    def make():
        Ws = [torch.tensor(a, requires_grad=True) for a in W0]
        bs = [torch.tensor(a, requires_grad=True) for a in b0]
        return Ws, bs, [a.detach().clone() for a in Ws + bs]

    def objective(Ws, bs, goal, rows=None):
        A = Xt if rows is None else Xt[rows]
        for Wl, bl in zip(Ws, bs):
            Z = A @ Wl.T + bl
            A = torch.sigmoid(Z)
        T = yt if rows is None else yt[rows]
        data = torch.nn.functional.binary_cross_entropy_with_logits(
            Z[:, cols], T, reduction="sum") / len(T)
        pen = sum(((p - g) ** 2).sum() for p, g in zip(Ws + bs, goal)) * (lam / w / w / 2)
        return data, data + pen

    out = {}
    Ws, bs, goal = make()
    opt = torch.optim.Adam(Ws + bs, lr=0.01)
    gen = torch.Generator().manual_seed(0)
    t = time.perf_counter()
    passes = 0
    while passes < 200:
        passes += 1
        for rows in torch.randperm(len(X), generator=gen).split(32):
            opt.zero_grad()
            _, total = objective(Ws, bs, goal, rows)
            total.backward()
            opt.step()
        with torch.no_grad():
            data, _ = objective(Ws, bs, goal)
        if float(data) <= target_loss:
            break
    out["adam"] = (time.perf_counter() - t, passes, float(data))
    Ws, bs, goal = make()
    opt = torch.optim.LBFGS(Ws + bs, max_iter=lbfgs_iters, history_size=10,
                            line_search_fn="strong_wolfe")

    def closure():
        opt.zero_grad()
        _, total = objective(Ws, bs, goal)
        total.backward()
        return total

    t = time.perf_counter()
    opt.step(closure)
    with torch.no_grad():
        data, _ = objective(Ws, bs, goal)
    out["lbfgs"] = (time.perf_counter() - t, lbfgs_iters, float(data))
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=1000)
    ap.add_argument("--readings", type=int, default=48)
    ap.add_argument("--levels", type=int, default=10)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--seed", type=int, default=0)
    args = ap.parse_args()
    true = Source.from_text(rules_text(args.readings, args.levels), "depot.rules")
    bad = Source.from_text(rules_text(args.readings, args.levels, "literal"), "depot.rules")
    rng = np.random.default_rng(args.seed)
    X = sample(args.rows, args.readings, args.levels, rng)
    y = labels(true, X, 0.07, rng)
    net = rule_network(bad.program)
    print(f"{args.rows} rows x {X.shape[1]} one-hot units x {y.shape[1]} outputs; "
          f"{args.workers} workers")

    times = {}
    for bound in (1.0, 0.0):  # with the start's tolerance bound (the default), and without
        opts = TrainOptions(workers=args.workers, seed=args.seed, bound_time=bound)
        t = time.perf_counter()
        auto = train(net, X, y, rules=bad, options=opts)
        t_auto = time.perf_counter() - t
        t = time.perf_counter()
        single = train(net, X, y, rules=bad,
                       options=opts.with_(anchor=auto.anchor, weight=auto.weight))
        times[bound] = (t_auto, time.perf_counter() - t)
    iters = single.history[-1].epoch
    print(f"  chosen ω = {auto.weight:g}, λ = {auto.anchor:g} from "
          f"{len(auto.search.scores)} (ω, λ) pairs reached x {auto.options.folds} folds; "
          f"single run: {iters} L-BFGS iterations, kept {single.best_epoch}")
    for bound, (ta, ts) in times.items():
        what = "with the start's tolerance bound (1 s)" if bound else "fits only"
        print(f"  {what:40s} auto {ta:6.2f} s  single {ts:6.2f} s  auto/single {ta / ts:5.2f}")
    t_auto, t_single = times[1.0]
    print(f"  goals: auto <= 20 s: {'yes' if t_auto <= 20 else 'no'};  auto/single <= 4: "
          f"{'yes' if t_auto / t_single <= 4 else 'no'} (default), "
          f"{'yes' if times[0.0][0] / times[0.0][1] <= 4 else 'no'} (fits only)")
    t_single = times[0.0][1]
    runs = _torch_runs(single.start, X, y, single.anchor, single.weight,
                       single.history[single.best_epoch].loss, max(iters, 1))
    if runs is None:
        print("  torch   (not installed: skipped)")
        return
    ta, passes, la = runs["adam"]
    tl, _, ll = runs["lbfgs"]
    print(f"  torch adam   {ta:7.2f} s  ({passes} passes, loss {la:.4f}; ours "
          f"{single.history[single.best_epoch].loss:.4f});  single / torch adam = "
          f"{t_single / ta:.2f}")
    print(f"  torch lbfgs  {tl:7.2f} s  ({iters} iterations, loss {ll:.4f});  "
          f"single / torch lbfgs = {t_single / tl:.2f}")


if __name__ == "__main__":
    main()

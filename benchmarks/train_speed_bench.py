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
machine: after one untimed warm-up of each, ``--rounds`` rounds run auto and single in turn
(so a change of load hits both), and the medians and the median per-round ratio are printed,
with the CPU seconds (this process and its workers) beside them, and the work in rows passed
through the network (one process; the same on any machine).  PyTorch is imported lazily; its
columns are skipped without it.

    PYTHONPATH=. python3 benchmarks/train_speed_bench.py [--rows 1000] [--workers 2] [--rounds 5]
"""

from __future__ import annotations

import argparse
import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.dirname(__file__))

from training_scenario import labels, rules_text, sample  # noqa: E402

from thresholdc.logic import source_from_text  # noqa: E402
from thresholdc.training import (  # noqa: E402
    ANCHOR_GRID,
    TrainOptions,
    lbfgs,  # noqa: E402
    rule_network,
    train,
)
from thresholdc.training.mlp import Layout  # noqa: E402


def _work(fn):
    """``fn()`` and the rows it passed through the network in this process: by gradient
    evaluations (forward and backward) and by evaluations alone (forward), as counted at
    :mod:`thresholdc.training.lbfgs`'s calls.  Independent of the machine's load."""
    counts = {"gradient": 0, "forward": 0}
    grad, value = lbfgs.loss_and_grad, lbfgs.data_loss

    def counted_grad(W, b, acts, X, *rest):
        counts["gradient"] += X.shape[0]
        return grad(W, b, acts, X, *rest)

    def counted_value(W, b, acts, X, *rest):
        counts["forward"] += X.shape[0]
        return value(W, b, acts, X, *rest)

    lbfgs.loss_and_grad, lbfgs.data_loss = counted_grad, counted_value
    try:
        return fn(), counts
    finally:
        lbfgs.loss_and_grad, lbfgs.data_loss = grad, value


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


def _timed(fn):
    """``fn()``, its wall-clock seconds and its CPU seconds (this process and its workers)."""
    c0, t0 = os.times(), time.perf_counter()
    out = fn()
    t1, c1 = time.perf_counter(), os.times()
    cpu = (c1.user + c1.system + c1.children_user + c1.children_system
           - c0.user - c0.system - c0.children_user - c0.children_system)
    return out, t1 - t0, cpu


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=1000)
    ap.add_argument("--readings", type=int, default=48)
    ap.add_argument("--levels", type=int, default=10)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--rounds", type=int, default=5,
                    help="timed rounds (each: auto and single, with and without the bound)")
    ap.add_argument("--seed", type=int, default=0)
    args = ap.parse_args()
    true = source_from_text(rules_text(args.readings, args.levels), "depot.rules")
    bad = source_from_text(rules_text(args.readings, args.levels, "literal"), "depot.rules")
    rng = np.random.default_rng(args.seed)
    X = sample(args.rows, args.readings, args.levels, rng)
    y = labels(true, X, 0.07, rng)
    net = rule_network(bad.program)
    print(f"{args.rows} rows x {X.shape[1]} one-hot units x {y.shape[1]} outputs; "
          f"{args.workers} workers; {args.rounds} rounds after a warm-up, medians; "
          f"load average {os.getloadavg()[0]:.1f}")

    base = TrainOptions(workers=args.workers, seed=args.seed)
    auto = train(net, X, y, rules=bad, options=base.with_(bound_time=0.0))  # warm-up
    fixed = base.with_(anchor=auto.anchor, weight=auto.weight)
    if auto.search is not None and getattr(auto.search, "rules_alone", False):
        fixed = base.with_(anchor=ANCHOR_GRID[0], weight=auto.weight)  # λ = ∞ is no fit
    single = train(net, X, y, rules=bad, options=fixed.with_(bound_time=0.0))
    _, work_auto = _work(lambda: train(net, X, y, rules=bad,
                                       options=base.with_(bound_time=0.0, workers=1)))
    _, work_single = _work(lambda: train(net, X, y, rules=bad,
                                         options=fixed.with_(bound_time=0.0, workers=1)))
    times: dict[float, list[tuple[float, float, float, float]]] = {1.0: [], 0.0: []}
    for _ in range(args.rounds):
        for bound in (1.0, 0.0):  # with the start's tolerance bound (the default), without
            auto, ta, ca = _timed(lambda b=bound: train(net, X, y, rules=bad,
                                                        options=base.with_(bound_time=b)))
            single, ts, cs = _timed(lambda b=bound: train(net, X, y, rules=bad,
                                                          options=fixed.with_(bound_time=b)))
            times[bound].append((ta, ts, ca, cs))
    iters = single.history[-1].epoch
    s = auto.search
    assert s is not None
    chosen = "rules alone" if getattr(s, "rules_alone", False) else f"λ = {auto.anchor:g}"
    print(f"  chosen ω = {auto.weight:g}, {chosen} from {len(s.scores)} candidates reached x "
          f"{auto.options.folds} folds; single run: {iters} L-BFGS iterations, kept "
          f"{single.best_epoch}")
    med = {b: np.median(np.array(v), axis=0) for b, v in times.items()}
    ratio = {b: float(np.median([ta / ts for ta, ts, _, _ in v])) for b, v in times.items()}
    for bound in (1.0, 0.0):
        ta, ts, ca, cs = med[bound]
        what = "with the start's tolerance bound (1 s)" if bound else "fits only"
        print(f"  {what:40s} auto {ta:6.2f} s  single {ts:6.2f} s  auto/single "
              f"{ratio[bound]:5.2f}  (CPU {ca:5.2f} s / {cs:5.2f} s = {ca / max(cs, 1e-9):5.2f})")
    print(f"  {'work (rows through the network)':40s} auto {work_auto['gradient']:7d} by "
          f"gradient + {work_auto['forward']:6d} forward;  single {work_single['gradient']:6d} "
          f"+ {work_single['forward']:5d};  auto/single "
          f"{work_auto['gradient'] / work_single['gradient']:5.2f} (gradient rows)")
    print(f"  goals: auto <= 20 s: {'yes' if med[1.0][0] <= 20 else 'no'};  auto/single <= 4: "
          f"{'yes' if ratio[1.0] <= 4 else 'no'} (default), "
          f"{'yes' if ratio[0.0] <= 4 else 'no'} (fits only)")
    t_single = float(med[0.0][1])
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

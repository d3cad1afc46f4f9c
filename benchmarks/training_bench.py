"""Warm-start training against random initialisation on small, noisy data (not a timed test).

Scenario (invented): the bike-dock service rules of ``circuits/bike_docks.rules`` (14 Boolean
inputs, 3 outputs) are the "true" rules.  A wrong copy changes one clause: the van is kept
away on weekends instead of on rainy days (``and not rain_due`` → ``and not weekend``).
Training data: 120 rows drawn uniformly at random, labelled by the true rules (the reference
evaluator, which shares no code with the network path) with 5% of the labels flipped.  Held
out: all 2**14 assignments, labelled by the true rules without noise, so "held-out accuracy"
is the exact fraction of (assignment, output) pairs on which a network agrees with the truth.

Runs, each with the defaults of ``thresholdc.train`` except where named:

- before training: the compiled wrong rules;
- warm start from the wrong rules, ``anchor=0`` (plain fine-tuning);
- warm start from the wrong rules, ``anchor="auto"`` (the default);
- random init of the same architecture, ``anchor="auto"`` (weight decay toward 0);
- for retention, warm starts from the true rules with ``anchor=0`` and ``"auto"``.

Peer: PyTorch (when installed) trains the same dense start with the same anchor, batches and
Adam settings; its held-out accuracy and time are printed beside ours, with the time ratio.
``--repeats N`` repeats the whole comparison over N data sets and prints means and minima.

Run: ``python benchmarks/training_bench.py [--plot curves.png] [--repeats 5]``
(about 15 s per repeat on 2 cores).
"""

from __future__ import annotations

import argparse
import itertools
import os
import time

import numpy as np

from thresholdc import compile_rules
from thresholdc.ir.reference import Reference
from thresholdc.logic.source import source_from_text
from thresholdc.train.fit import DEFAULTS, train

HERE = os.path.dirname(os.path.abspath(__file__))
RULES = os.path.join(HERE, "..", "circuits", "bike_docks.rules")
RIGHT, WRONG = "and not rain_due", "and not weekend"
MARKS = (0, 10, 25, 50, 100, 200)


def make_data(source: Reference, rows: int, noise: float, rng: np.random.Generator):
    """Uniform random rows labelled by the reference evaluator, ``noise`` of labels flipped."""
    X = rng.integers(0, 2, size=(rows, len(source.inputs))).astype(float)
    y = source.evaluate(X).astype(float)
    flip = rng.random(y.shape) < noise
    return X, np.where(flip, 1.0 - y, y)


def run_one(label, net, X, y, ALL, Y_ALL, seed, **options):
    """Train once, recording the held-out accuracy after every epoch (the time spent
    recording is not counted)."""
    curve: list[float] = []
    spent = [0.0]

    def watch(epoch, network):
        t0 = time.perf_counter()
        curve.append(float(np.mean(network.decide(ALL) == Y_ALL)))
        spent[0] += time.perf_counter() - t0

    t = time.perf_counter()
    result = train(net, X, y, seed=seed, callback=watch, **options)
    seconds = time.perf_counter() - t - spent[0]
    final = float(np.mean(result.network.decide(ALL) == Y_ALL))
    return {"label": label, "curve": curve, "final": final, "seconds": seconds,
            "anchor": result.anchor, "result": result}


def torch_peer(start_net, X, y, ALL, Y_ALL, *, anchor, epochs, lr, batch, seed):
    """The same dense start trained by PyTorch (Adam, the same anchor and MSE); None without
    torch."""
    try:
        import torch
    except ImportError:
        return None
    from thresholdc.export.torch import to_torch

    torch.manual_seed(seed)
    model = to_torch(start_net, dtype=torch.float64)
    start = [p.detach().clone() for p in model.parameters()]
    opt = torch.optim.Adam(model.parameters(), lr=lr)
    Xt, yt = torch.tensor(X), torch.tensor(y)
    rng = np.random.default_rng(seed)
    t = time.perf_counter()
    for _ in range(epochs):
        order = torch.tensor(rng.permutation(len(X)))
        for s in range(0, len(X), batch):
            rows = order[s : s + batch]
            opt.zero_grad()
            loss = ((model(Xt[rows]) - yt[rows]) ** 2).sum(dim=1).mean()
            if anchor:
                loss = loss + 0.5 * anchor * sum(
                    ((p - p0) ** 2).sum() for p, p0 in zip(model.parameters(), start)
                )
            loss.backward()
            opt.step()
    seconds = time.perf_counter() - t
    with torch.no_grad():
        out = model(torch.tensor(ALL)).numpy()
    return {"final": float(np.mean((out > 0.5) == Y_ALL)), "seconds": seconds}


def compare(text_true, text_wrong, rows, noise, seed, epochs):
    """One full comparison on one data set."""
    source = source_from_text(text_true, "bike_docks.rules")
    true_net = compile_rules(text_true)
    wrong_net = compile_rules(text_wrong)
    ALL = np.array(list(itertools.product([0, 1], repeat=len(source.inputs))), dtype=float)
    Y_ALL = source.evaluate(ALL)
    X, y = make_data(source, rows, noise, np.random.default_rng(1000 + seed))
    kw = {"epochs": epochs}
    runs = [
        run_one("warm start, anchor 0", wrong_net, X, y, ALL, Y_ALL, seed, anchor=0.0, **kw),
        run_one("warm start, anchor auto", wrong_net, X, y, ALL, Y_ALL, seed, **kw),
        run_one("random init, anchor auto", wrong_net, X, y, ALL, Y_ALL, seed, init="random",
                **kw),
        run_one("true rules, anchor 0", true_net, X, y, ALL, Y_ALL, seed, anchor=0.0, **kw),
        run_one("true rules, anchor auto", true_net, X, y, ALL, Y_ALL, seed, **kw),
    ]
    before = {
        "wrong": float(np.mean(wrong_net.decide(ALL) == Y_ALL)),
        "true": float(np.mean(true_net.decide(ALL) == Y_ALL)),
    }
    warm = runs[1]
    lam = warm["anchor"].value
    peer = torch_peer(warm["result"].start, X, y, ALL, Y_ALL, anchor=lam,
                      epochs=epochs, lr=0.01, batch=DEFAULTS["batch"], seed=seed)
    if peer is not None:
        t = time.perf_counter()
        fixed = train(wrong_net, X, y, seed=seed, anchor=lam, epochs=epochs)
        peer["ours_seconds"] = time.perf_counter() - t
        peer["ours_final"] = float(np.mean(fixed.network.decide(ALL) == Y_ALL))
    return before, runs, peer, X


def print_one(before, runs, peer, rows, noise):
    print(f"training rows: {rows} ({noise:.0%} of labels flipped); held out: all 2**14 "
          "assignments, clean")
    print(f"before training: wrong rules {before['wrong']:.4f}, true rules {before['true']:.4f}")
    head = "".join(f"{'ep ' + str(m):>9}" for m in MARKS)
    print(f"{'run':27}{'λ':>8}{head}{'final':>9}{'seconds':>9}")
    for r in runs:
        marks = "".join(
            f"{r['curve'][m]:9.4f}" if m < len(r["curve"]) else f"{'':9}" for m in MARKS
        )
        lam = f"{r['anchor'].value:g}"
        print(f"{r['label']:27}{lam:>8}{marks}{r['final']:9.4f}{r['seconds']:9.2f}")
    rand, warm = runs[2]["final"], runs[1]["final"]
    print(f"held-out error, warm start (anchor auto) / random init: "
          f"{(1 - warm) / max(1 - rand, 1e-12):.3f}")
    for r in runs:
        a = r["anchor"]
        if a.scores:
            grid = ", ".join(f"{lam:g}: {loss:.4f}" for lam, loss, _ in a.scores)
            print(f"  {r['label']}: cross-validated loss per λ: {grid}")
    if peer is not None:
        ratio = peer["ours_seconds"] / max(peer["seconds"], 1e-9)
        print(f"one run of {len(runs[1]['curve']) - 1} epochs from the same start with the same "
              f"λ: ours (numpy) {peer['ours_final']:.4f} in {peer['ours_seconds']:.2f} s, "
              f"peer PyTorch {peer['final']:.4f} in {peer['seconds']:.2f} s; "
              f"time ours / PyTorch {ratio:.2f}")


def plot(before, runs, path):
    """Held-out accuracy over epochs, one curve per run."""
    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        print("matplotlib is not installed: no plot")
        return
    fig, ax = plt.subplots(figsize=(8, 4.8))
    for r in runs:
        style = "--" if r["label"].startswith("true") else "-"
        ax.plot(range(len(r["curve"])), r["curve"], style, label=f"{r['label']} "
                f"(λ={r['anchor'].value:g})")
    ax.axhline(before["wrong"], color="grey", lw=0.8, ls=":", label="wrong rules, untrained")
    ax.set_xlabel("epoch")
    ax.set_ylabel("held-out accuracy (all 2**14 inputs, clean)")
    ax.set_title("bike-dock rules: 120 noisy rows, one wrong clause")
    ax.set_ylim(0.75, 1.005)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8, loc="lower right")
    fig.tight_layout()
    fig.savefig(path, dpi=110)
    print(f"wrote {path}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=120)
    ap.add_argument("--noise", type=float, default=0.05)
    ap.add_argument("--epochs", type=int, default=DEFAULTS["epochs"])
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--repeats", type=int, default=1, help="data sets (means and minima)")
    ap.add_argument("--plot", metavar="PNG", help="save the curves of the first data set")
    args = ap.parse_args()
    text_true = open(RULES, encoding="utf-8").read()
    text_wrong = text_true.replace(RIGHT, WRONG)
    assert text_wrong != text_true
    finals: dict[str, list[float]] = {}
    for k in range(args.repeats):
        before, runs, peer, _ = compare(text_true, text_wrong, args.rows, args.noise,
                                        args.seed + k, args.epochs)
        if k == 0:
            print_one(before, runs, peer, args.rows, args.noise)
            if args.plot:
                plot(before, runs, args.plot)
        for r in runs:
            finals.setdefault(r["label"], []).append(r["final"])
        if peer is not None:
            finals.setdefault("PyTorch peer (warm, same λ)", []).append(peer["final"])
    if args.repeats > 1:
        print(f"\nover {args.repeats} data sets: held-out accuracy mean / min")
        for label, values in finals.items():
            print(f"  {label:30}{np.mean(values):8.4f}{np.min(values):8.4f}")


if __name__ == "__main__":
    main()

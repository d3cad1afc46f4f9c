"""``thresholdc train NET DATA -o OUT``: fit a compiled network to labelled data (warm start)."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..api import load
from ..export import SUFFIXES, check_suffix, save_any
from ..train import DEFAULT_LR, DEFAULTS, load_data, parse_label_specs, score, train
from .common import add_parser, fmt_num, print_json
from .score import add_data_arguments


def _anchor(text: str) -> float | str:
    """``auto`` or a number ≥ 0 (argparse type)."""
    if text.strip().lower() == "auto":
        return "auto"
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected 'auto' or a number, got {text!r}") from None
    if not value >= 0 or value == float("inf"):
        raise argparse.ArgumentTypeError(f"expected a number ≥ 0, got {text!r}")
    return value


def register(subparsers: Any) -> None:
    d = DEFAULTS
    p = add_parser(
        subparsers,
        "train",
        help="train a compiled network on labelled data, starting from its rules",
        description=(
            "Train a network on a CSV file (see 'score' for the data format). Training starts "
            "from the rules: the compiled network with certified sigmoid gains in its strict "
            "layered form, made dense (links the rules do not use start at small random "
            "weights). The loss is anchored to the start, (λ/2)·Σ(θ − θ_start)², with λ "
            "chosen by cross-validation unless --anchor fixes it, so that noisy labels do "
            "not wash out correct rules. The same command and seed write the same file."
        ),
        example=(
            "thresholdc train bike_docks.json circuits/bike_docks.csv -o trained.json "
            "--positive yes --label rebalance=van_sent --label mechanic=mechanic_sent --seed 1"
        ),
    )
    p.add_argument("network", metavar="NET", help="compiled network file")
    p.add_argument("data", metavar="DATA", help="CSV file with a header row")
    p.add_argument("-o", "--output", metavar="OUT", required=True,
                   help=f"trained network to write ({', '.join(SUFFIXES)})")
    add_data_arguments(p)
    p.add_argument("--epochs", type=int, default=d["epochs"], metavar="N",
                   help=f"largest number of passes over the data (default {d['epochs']})")
    p.add_argument("--seed", type=int, default=d["seed"], metavar="S",
                   help=f"seed of every random choice (default {d['seed']})")
    p.add_argument("--loss", choices=("mse", "cross-entropy"), default=d["loss"],
                   help=f"data loss (default {d['loss']})")
    p.add_argument("--optimizer", choices=("sgd", "adam"), default=d["optimizer"],
                   help=f"optimizer (default {d['optimizer']})")
    p.add_argument("--lr", type=float, default=None, metavar="X",
                   help=f"learning rate (default {DEFAULT_LR['adam']} for adam, "
                   f"{DEFAULT_LR['sgd']} for sgd)")
    p.add_argument("--batch", type=int, default=d["batch"], metavar="B",
                   help=f"rows per gradient step (default {d['batch']})")
    p.add_argument("--widen", type=int, default=d["widen"], metavar="K",
                   help="extra hidden units per hidden layer (role extra); adds a hidden layer "
                   "to a network without one (default 0)")
    p.add_argument("--freeze", default="", metavar="NAME,…",
                   help="rule neurons kept fixed, with every neuron they read")
    p.add_argument("--init", choices=("rules", "random"), default=d["init"],
                   help="start from the rules or from random weights (default rules)")
    p.add_argument("--validation", type=float, default=d["validation"], metavar="FRACTION",
                   help="fraction of rows held out for early stopping; 0 turns it off "
                   f"(default {d['validation']})")
    p.add_argument("--anchor", type=_anchor, default=d["anchor"], metavar="auto|λ",
                   help="strength of the pull toward the start (toward 0 with --init random); "
                   "auto: chosen by 3-fold cross-validation; 0: off (default auto)")
    p.add_argument("--tolerance", type=float, default=d["tolerance"], metavar="EPS",
                   help="certified distance of every starting neuron from its rule value "
                   f"(default {d['tolerance']})")
    p.add_argument("--json", action="store_true", help="print the training log as JSON")


def run(args: argparse.Namespace) -> int:
    check_suffix(args.output)  # before reading anything
    like = load(args.like) if args.like else None
    net = load(args.network, like=like)
    labels = parse_label_specs(args.label)
    data = load_data(args.data, net, labels=labels, positive=args.positive, require_labels=True)
    freeze = tuple(s.strip() for s in args.freeze.split(",") if s.strip())
    result = train(
        net, data.X, data.y, outputs=data.outputs, epochs=args.epochs, seed=args.seed,
        loss=args.loss, optimizer=args.optimizer, lr=args.lr, batch=args.batch,
        widen=args.widen, freeze=freeze, init=args.init, validation=args.validation,
        anchor=args.anchor, tolerance=args.tolerance,
        progress=not args.json and sys.stderr.isatty(),
    )
    training = dict(result.network.meta["training"])
    training["data"] = {
        "sha256": data.sha256,
        "labels": dict(zip(data.outputs, data.columns, strict=True)),
        "positive": args.positive,
    }
    trained = result.network.with_meta(training=training)
    before = score(result.start, data)
    after = score(trained, data)
    save_any(trained, args.output)
    if args.json:
        log = {"network": args.network, "data": args.data, "output": args.output,
               "rows": data.rows, **result.to_dict(), "before": before, "after": after}
        print_json(log)
    else:
        sys.stdout.write(render(args, data, result, before, after) + "\n")
    return 0


def render(args: argparse.Namespace, data: Any, result: Any, before: dict, after: dict) -> str:
    """The training summary as text."""
    t = result.network.meta["training"]
    o = result.options
    a = result.anchor
    if a.method == "cross-validation":
        grid = ", ".join(f"{fmt_num(lam)}: {loss:.4g}" for lam, loss, _ in a.scores)
        how = f"chosen by cross-validation (held-out loss per λ: {grid})"
    elif a.method == "fixed":
        how = "fixed"
    else:
        how = "default: too few rows to cross-validate"
    start = "rules, certified sigmoid gains" if o["init"] == "rules" else "random weights"
    if o["init"] == "rules":
        start += f" (tolerance {fmt_num(o['tolerance'])})"
    if o["widen"]:
        start += f", {o['widen']} extra units per hidden layer"
    if result.frozen:
        start += f", frozen: {', '.join(result.frozen)}"
    lines = [
        f"trained {args.network} on {args.data} -> {args.output}",
        f"  rows         {data.rows} ({data.rows - t['validation_rows']} training, "
        f"{t['validation_rows']} validation)",
        f"  start        {start}",
        f"  anchor       λ = {fmt_num(a.value)}, {how}",
        f"  epochs       {t['epochs_run']} run, parameters of epoch {t['best_epoch']} kept",
        f"  optimizer    {o['optimizer']}, lr {fmt_num(o['lr'])}, batch {o['batch']}, "
        f"loss {o['loss']}",
        "  accuracy on all rows, before -> after:",
    ]
    for b, c in zip(before["outputs"], after["outputs"], strict=True):
        lines.append(
            f"    {c['name']} (column {c['column']}): {b['accuracy']:.4f} -> {c['accuracy']:.4f}"
            f" ({c['errors']} errors)"
        )
    return "\n".join(lines)

"""``thresholdc train NET|RULES DATA -o OUT``: fit a network to labelled data from its rules."""

from __future__ import annotations

import argparse
import math
import os
import sys
from typing import Any

from ..api import load
from ..compiler import compile_source
from ..errors import UsageError
from ..export import SUFFIXES, check_suffix, save_any
from ..logic import NETLIST_SUFFIXES, load_source
from ..training import (
    ANCHOR_GRID,
    CHOICES,
    WEIGHT_GRID,
    TrainOptions,
    TrainResult,
    load_data,
    parse_label_specs,
    rule_network,
    score,
    train,
)
from .common import add_parser, fmt_num, print_json, warn
from .score import add_data_arguments, data_bound


def _auto_or_number(text: str) -> float | str:
    """``auto`` or a finite number (argparse type; the range is checked by TrainOptions)."""
    if text.strip().lower() == "auto":
        return "auto"
    try:
        return float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected 'auto' or a number, got {text!r}") from None


def register(subparsers: Any) -> None:
    d = TrainOptions()
    p = add_parser(
        subparsers,
        "train",
        description=(
            "Train on a CSV file (see 'score' for the data format). Given a rule file (as "
            "NET, or with --rules), training starts from the rules' own structure: one "
            "sigmoid unit per definition and per and/or term, antecedent weights ±ω, small "
            "random weights on every other link. The loss is cross-entropy plus an anchor "
            "(λ/2)·Σ((θ − θ_start)/ω)² that keeps the rules unless the data disagree; λ and "
            "ω are chosen by cross-validation, with early stopping on the held-out folds. "
            "Real inputs are standardised by their declared range inside training; the "
            "written network keeps their units. The same command and seed write the same "
            "file."
        ),
        example=(
            "thresholdc train circuits/bike_docks.rules circuits/bike_docks.csv -o trained.json"
            " --positive yes --label rebalance=van_sent --label mechanic=mechanic_sent"
        ),
    )
    p.add_argument("network", metavar="NET", help="compiled network file (.json, .npz, "
                   ".onnx) or rule file")
    p.add_argument("data", metavar="DATA", help="CSV file with a header row")
    p.add_argument("-o", "--output", metavar="OUT", required=True,
                   help=f"trained network to write ({', '.join(SUFFIXES)})")
    add_data_arguments(p)
    p.add_argument("--rules", metavar="RULES", help="the rule file NET was compiled from "
                   "(for the rule-structured start)")
    p.add_argument("--init", choices=CHOICES["init"], default=d.init,
                   help="rules: the rule-structured start; certified: the compiled network "
                   "with certified sigmoid gains; random: the baseline without rules, one "
                   "dense hidden layer from random weights "
                   f"(default {d.init})")
    p.add_argument("--weight", type=_auto_or_number, default=d.weight, metavar="auto|ω",
                   help="antecedent weight of the rule-structured start; auto: chosen by "
                   f"cross-validation from {', '.join(map(fmt_num, WEIGHT_GRID))} "
                   f"(default {d.weight})")
    p.add_argument("--anchor", type=_auto_or_number, default=d.anchor, metavar="auto|λ",
                   help="strength of the pull toward the start (toward 0 with --init "
                   f"random); auto: chosen by cross-validation from "
                   f"{', '.join(map(fmt_num, ANCHOR_GRID))}; 0: off (default {d.anchor})")
    p.add_argument("--loss", choices=CHOICES["loss"], default=d.loss,
                   help="data loss; auto: cross-entropy for sigmoid outputs (default auto)")
    p.add_argument("--optimizer", choices=CHOICES["optimizer"], default=d.optimizer,
                   help="auto: full-batch L-BFGS when the data fit in memory, else Adam "
                   "(default auto)")
    p.add_argument("--epochs", type=int, default=d.epochs, metavar="N",
                   help=f"largest number of iterations per fit (default {d.epochs})")
    p.add_argument("--patience", type=int, default=d.patience, metavar="N",
                   help="iterations without a better held-out loss before stopping "
                   f"(default {d.patience})")
    p.add_argument("--folds", type=int, default=d.folds, metavar="K",
                   help=f"cross-validation folds (default {d.folds})")
    p.add_argument("--validation", type=float, default=d.validation, metavar="FRACTION",
                   help="rows held out for early stopping when λ and ω are both fixed; 0: "
                   f"none (default {d.validation})")
    p.add_argument("--workers", type=int, default=d.workers, metavar="N",
                   help=f"processes for the cross-validation (default {d.workers})")
    p.add_argument("--lr", type=float, default=None, metavar="X",
                   help="learning rate of adam/sgd (default 0.01 for adam, 0.5 for sgd)")
    p.add_argument("--batch", type=int, default=d.batch, metavar="B",
                   help=f"rows per step of adam/sgd (default {d.batch})")
    p.add_argument("--widen", type=int, default=d.widen, metavar="K",
                   help="extra hidden units per hidden layer (role extra); adds a hidden layer "
                   "to a network without one (default 0)")
    p.add_argument("--hidden", type=int, default=d.hidden, metavar="N",
                   help="hidden units of the --init random baseline (one dense hidden "
                   "layer); 0: as many as the start has hidden units (default 0)")
    p.add_argument("--freeze", default="", metavar="NAME,…",
                   help="rule neurons kept fixed, with every neuron they read")
    p.add_argument("--tolerance", type=float, default=d.tolerance, metavar="EPS",
                   help="certified distance from the rules of the --init certified start "
                   f"(default {d.tolerance})")
    p.add_argument("--bound-time", type=float, default=d.bound_time, metavar="SECONDS",
                   help="time to bound the start's worst error where the rule domain is too "
                   f"large to enumerate; 0: skip (default {d.bound_time:g})")
    p.add_argument("--seed", type=int, default=d.seed, metavar="S",
                   help=f"seed of every random choice (default {d.seed})")
    p.add_argument("--json", action="store_true", help="print the training log as JSON")


def _read_network(args: argparse.Namespace) -> tuple[Any, Any]:
    """The network to train and the rule source, if any."""
    suffix = os.path.splitext(args.network)[1].lower()
    if suffix in SUFFIXES:
        like = load(args.like) if args.like else None
        net = load(args.network, like=like)
        return net, (load_source(args.rules) if args.rules else None)
    if suffix in NETLIST_SUFFIXES:
        raise UsageError(f"{args.network}: train starts from a rule file or a compiled "
                         "network, not a netlist (compile it first)")
    if args.rules:
        raise UsageError("--rules is for a compiled NET; NET is already a rule file")
    source = load_source(args.network)
    assert source.program is not None
    if args.init == "certified":  # the compiled network, with the compiler's defaults
        return compile_source(source).network, source
    return rule_network(source.program), source


def run(args: argparse.Namespace) -> int:
    check_suffix(args.output)  # before reading anything
    options = TrainOptions(
        init=args.init, weight=args.weight, anchor=args.anchor, loss=args.loss,
        optimizer=args.optimizer, epochs=args.epochs, patience=args.patience, folds=args.folds,
        validation=args.validation, workers=args.workers, widen=args.widen,
        hidden=args.hidden, freeze=args.freeze, tolerance=args.tolerance, lr=args.lr,
        batch=args.batch,
        bound_time=args.bound_time, seed=args.seed,
    )
    net, source = _read_network(args)
    labels = parse_label_specs(args.label)
    data = load_data(args.data, net, labels=labels, positive=args.positive, require_labels=True,
                     max_bytes=data_bound(args))
    for note in data.warnings():
        warn(note)
    result = train(net, data.X, data.y, outputs=data.outputs, rules=source, options=options,
                   progress=not args.json and sys.stderr.isatty())
    for note in result.notes:
        warn(note)
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
               "rows": data.rows, "warnings": data.warnings(), **result.to_dict(),
               "before": before, "after": after}
        print_json(log)
    else:
        sys.stdout.write(render(args, data, result, before, after) + "\n")
    return 0


def _start_line(result: TrainResult) -> str:
    o = result.options
    if result.init == "rules":
        start = f"rules' structure, ω = {fmt_num(result.weight)}"
    elif result.init == "certified":
        start = f"compiled network, certified sigmoid gains (tolerance {fmt_num(o.tolerance)})"
    else:
        width = sum(n.layer == 1 for n in result.network.neurons)
        start = f"random weights, one dense hidden layer of {width} units"
        return start
    if o.widen:
        start += f", {o.widen} extra units per hidden layer"
    if result.frozen:
        start += f", frozen: {', '.join(result.frozen)}"
    return start


def _tolerance_line(t: dict[str, Any] | None) -> str | None:
    if t is None:
        return None
    if t.get("worst_error") is None:
        if t.get("decides_rules") is False:
            return "  tolerance    the start disagrees with the rules (branch and bound)"
        return "  tolerance    not bounded within --bound-time (domain too large to enumerate)"
    verdict = "decides every rule" if t.get("decides_rules") else "does not decide every rule"
    how = ("exact over " + str(t["assignments"]) + " assignments") if t["method"] == \
        "exhaustive" else "upper bound, branch and bound"
    return f"  tolerance    worst output error of the start {t['worst_error']:.4f} ({how}); " \
        f"{verdict}"


def render(args: argparse.Namespace, data: Any, result: TrainResult, before: dict,
           after: dict) -> str:
    """The training summary as text."""
    t = result.network.meta["training"]
    s = result.search
    if s is not None and s.rules_alone:
        how = (f"rules alone, chosen by {result.options.folds}-fold cross-validation: no "
               f"trained candidate beat the untrained start (held-out loss {s.loss:.4g}) by "
               "more than one standard error; the network is the start")
    elif s is not None:
        path = " -> ".join(fmt_num(x) for x in s.grid)
        how = (f"chosen by {result.options.folds}-fold cross-validation (held-out loss "
               f"{s.loss:.4g}); path λ = {path}")
    else:
        how = "fixed"
    lines = [
        f"trained {args.network} on {args.data} -> {args.output}",
        f"  rows         {data.rows}",
        f"  start        {_start_line(result)}",
    ]
    tol = _tolerance_line(result.tolerance)
    if tol:
        lines.append(tol)
    lines += [
        f"  anchor       λ = {'∞' if math.isinf(result.anchor) else fmt_num(result.anchor)}, "
        f"{how}",
        f"  optimizer    {t['optimizer']}, loss {t['loss']}",
        f"  kept         iteration {result.best_epoch} of {t['epochs_run']} ("
        + ("the start: rules alone)" if s is not None and s.rules_alone else
           "early stopping carried over from the held-out folds)" if s is not None else
           "best on the held-out rows)" if result.held_out else "last)"),
    ]
    h = result.held_out
    if h is not None:
        where = "folds" if h["rows"] == "folds" else f"{h['rows']} rows"
        worse = "  WORSE THAN THE START" if h["worse"] else ""
        lines.append(f"  held out     error {h['start_error']:.4f} -> {h['error']:.4f} "
                     f"({where}){worse}")
    lines.append("  accuracy on all rows, before -> after:")
    for b, c in zip(before["outputs"], after["outputs"], strict=True):
        lines.append(
            f"    {c['name']} (column {c['column']}): {b['accuracy']:.4f} -> {c['accuracy']:.4f}"
            f" ({c['errors']} errors)"
        )
    return "\n".join(lines)

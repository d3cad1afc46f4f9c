"""``thresholdc score NET DATA``: accuracy, precision, recall and F1 of a network's outputs on
labelled data; ``--errors FILE`` writes the misclassified rows."""

from __future__ import annotations

import argparse
import csv
import io
import math
import sys
from typing import Any

import numpy as np

from ..api import load
from ..ir.network import Network
from ..network import atomic_write, check_writable
from ..training import (
    MAX_DATA_BYTES,
    Dataset,
    decisions,
    load_data,
    parse_label_specs,
    read_table,
    score,
)
from .common import add_parser, count, format_table, print_json


def add_data_arguments(p: argparse.ArgumentParser) -> None:
    """The data options ``score`` and ``train`` share: ``--label``, ``--positive``, ``--like``,
    ``--max-data-gb``."""
    p.add_argument(
        "--label",
        action="append",
        default=[],
        metavar="OUTPUT=COLUMN",
        help="the data column holding an output's label (repeatable); an output whose name "
        "is a column needs none",
    )
    p.add_argument(
        "--positive",
        metavar="VALUE",
        help="the label value meaning true in every label column (default: labels are 0/1 "
        "or true/false)",
    )
    p.add_argument(
        "--like",
        metavar="NET.json",
        help="the compiled network a .npz/.onnx came from (unit names, features)",
    )
    p.add_argument(
        "--max-data-gb",
        type=_gigabytes,
        default=MAX_DATA_BYTES / 1e9,
        metavar="G",
        help="the data bound: about the memory the data file may take (its text, its cells at "
        "4 bytes a character of the longest cell, its input units at 8 bytes), checked "
        f"before they are built (default {MAX_DATA_BYTES / 1e9:g})",
    )


def _gigabytes(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number of gigabytes, got {text!r}") from None
    if not (math.isfinite(value) and value > 0):
        raise argparse.ArgumentTypeError(f"expected a positive number of gigabytes, got {text!r}")
    return value


def data_bound(args: argparse.Namespace) -> int:
    """The data bound in bytes from ``--max-data-gb``."""
    return int(args.max_data_gb * 1e9)


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "score",
        description=(
            "Read a CSV file with a header row (columns named after the network's inputs; "
            "any suffix), run the network on every row and compare each labelled output with "
            "its label column. An output reads as true above 0.5 (0 in the bipolar encoding). "
            "At least one output needs a label column. Per output: accuracy, errors, "
            "positives (rows labelled true), precision, recall, F1 and the confusion counts "
            "(tp fp fn tn); '-' where a ratio has nothing to count."
        ),
        example=(
            "thresholdc score bike_docks.json circuits/bike_docks.csv --positive yes "
            "--label rebalance=van_sent --label mechanic=mechanic_sent --errors wrong.csv"
        ),
    )
    p.add_argument("network", metavar="NET", help="network file")
    p.add_argument("data", metavar="DATA", help="CSV file with a header row")
    add_data_arguments(p)
    p.add_argument("--errors", metavar="FILE.csv",
                   help="write the misclassified rows (their line, the data columns, the "
                   "outputs the network got wrong and its answer per output) as CSV")
    p.add_argument("--json", action="store_true", help="print the scores as JSON")


def _ratio(x: float | None) -> str:
    return "-" if x is None else f"{x:.4f}"


def render(net_file: str, data_file: str, result: dict[str, Any]) -> str:
    """The scores as text: row count, then one line per labelled output."""
    rows = [
        (o["name"], o["column"], f"{o['accuracy']:.4f}", o["errors"], o["positives"],
         _ratio(o["precision"]), _ratio(o["recall"]), _ratio(o["f1"]),
         " ".join(str(o["confusion"][k]) for k in ("tp", "fp", "fn", "tn")))
        for o in result["outputs"]
    ]
    table = format_table(("output", "column", "accuracy", "errors", "positives", "precision",
                          "recall", "F1", "tp fp fn tn"), rows, right=set(range(2, 9)))
    return f"score {net_file} on {data_file}: {count(result['rows'], 'row')}\n{table}"


def error_rows(net: Network, data: Dataset, max_bytes: int = MAX_DATA_BYTES) -> str:
    """The misclassified rows as CSV text: ``line``, the data file's columns, ``wrong`` (the
    outputs the network got wrong, separated by ``;``) and ``network:OUTPUT`` (0/1) for every
    labelled output."""
    decided, truth = decisions(net, data)
    wrong = decided != truth
    picked = np.flatnonzero(wrong.any(axis=1))
    table = read_table(data.file, max_bytes)
    names = np.asarray(data.outputs, dtype=object)
    wrong_names = [";".join(names[w].tolist()) for w in wrong[picked]]
    body = np.column_stack([
        table.lines[picked].astype(str),
        table.cells[picked].astype(object),
        np.asarray(wrong_names, dtype=object).reshape(-1, 1),
        decided[picked].astype(int).astype(str),
    ]) if picked.size else np.zeros((0, 0))
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(["line", *table.header, "wrong", *(f"network:{o}" for o in data.outputs)])
    writer.writerows(body.tolist())
    return out.getvalue()


def run(args: argparse.Namespace) -> int:
    if args.errors:
        check_writable(args.errors)
    like = load(args.like) if args.like else None
    net = load(args.network, like=like)
    labels = parse_label_specs(args.label)
    data = load_data(args.data, net, labels=labels, positive=args.positive, require_labels=True,
                     max_bytes=data_bound(args))
    result = score(net, data)
    if args.errors:
        text = error_rows(net, data, data_bound(args))
        atomic_write(args.errors, text)
        result["errors_file"] = {"path": args.errors, "rows": text.count("\n") - 1}
    if args.json:
        print_json(result)
    else:
        sys.stdout.write(render(args.network, args.data, result) + "\n")
        if args.errors:
            n = result["errors_file"]["rows"]
            sys.stdout.write(f"wrote {args.errors} ({count(n, 'misclassified row')})\n")
    return 0

"""``thresholdc score NET DATA``: accuracy and errors of a network's outputs on labelled data."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..api import load
from ..train import load_data, parse_label_specs, score
from .common import add_parser, format_table, print_json


def add_data_arguments(p: argparse.ArgumentParser) -> None:
    """The data options ``score`` and ``train`` share: ``--label``, ``--positive``, ``--like``."""
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


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "score",
        help="accuracy of a network's outputs on labelled data (CSV)",
        description=(
            "Read a CSV file with a header row (columns named after the network's inputs; "
            "any suffix), run the network on every row and compare each labelled output with "
            "its label column. An output reads as true above 0.5 (0 in the bipolar encoding). "
            "At least one output needs a label column."
        ),
        example=(
            "thresholdc score bike_docks.json circuits/bike_docks.csv --positive yes "
            "--label rebalance=van_sent --label mechanic=mechanic_sent"
        ),
    )
    p.add_argument("network", metavar="NET", help="network file")
    p.add_argument("data", metavar="DATA", help="CSV file with a header row")
    add_data_arguments(p)
    p.add_argument("--json", action="store_true", help="print the scores as JSON")


def render(net_file: str, data_file: str, result: dict[str, Any]) -> str:
    """The scores as text: row count, then one line per labelled output."""
    rows = [
        (o["name"], o["column"], f"{o['accuracy']:.4f}", o["errors"]) for o in result["outputs"]
    ]
    table = format_table(("output", "column", "accuracy", "errors"), rows, right={2, 3})
    return f"score {net_file} on {data_file}: {result['rows']} rows\n{table}"


def run(args: argparse.Namespace) -> int:
    like = load(args.like) if args.like else None
    net = load(args.network, like=like)
    labels = parse_label_specs(args.label)
    data = load_data(
        args.data, net, labels=labels, positive=args.positive, require_labels=True
    )
    result = score(net, data)
    if args.json:
        print_json(result)
    else:
        sys.stdout.write(render(args.network, args.data, result) + "\n")
    return 0

"""``thresholdc table SOURCE``: the truth table of every output, from the reference evaluator."""

from __future__ import annotations

import argparse
import sys
from typing import Any

import numpy as np

from ..errors import UsageError
from ..source import load_source
from .common import add_parser, print_json

MAX_TABLE_INPUTS = 30


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "table",
        help="print the truth table of a rule file or netlist",
        description=(
            "Print the truth table of every output, computed from the rules directly (no "
            "network involved). Rows count up with the first input as the highest bit."
        ),
        example="thresholdc table circuits/greenhouse.rules --limit 16",
    )
    p.add_argument("source", metavar="SOURCE", help="rule file, .bench or .blif netlist")
    p.add_argument("--limit", type=int, default=1024, metavar="N",
                   help="print at most N rows (default 1024; 0 for all)")
    p.add_argument("--json", action="store_true", help="print the table as JSON")


def table_rows(source: Any, limit: int) -> tuple[np.ndarray, np.ndarray, int]:
    """``(inputs, outputs, total)`` for the first ``limit`` rows (first input = highest bit)."""
    n = len(source.inputs)
    if n > MAX_TABLE_INPUTS:
        raise UsageError(
            f"{n} inputs give 2^{n} rows; a table is printed for at most {MAX_TABLE_INPUTS} inputs",
            file=source.file,
        )
    total = 1 << n
    shown = total if limit <= 0 else min(limit, total)
    k = np.arange(shown, dtype=np.int64)
    X = ((k[:, None] >> np.arange(n - 1, -1, -1, dtype=np.int64)) & 1).astype(np.uint8)
    Y = np.asarray(source.evaluate(X), dtype=np.uint8) if shown else np.zeros((0, 0), np.uint8)
    return X, Y, total


def run(args: argparse.Namespace) -> int:
    if args.limit < 0:
        raise UsageError(f"--limit must be 0 or more. Got {args.limit} instead.")
    source = load_source(args.source)
    X, Y, total = table_rows(source, args.limit)
    if args.json:
        print_json(
            {
                "inputs": list(source.inputs),
                "outputs": list(source.outputs),
                "rows": [[*map(int, x), *map(int, y)] for x, y in zip(X, Y)],
                "total_rows": total,
                "shown_rows": len(X),
            }
        )
        return 0
    names = list(source.inputs) + ["|"] + list(source.outputs)
    widths = [max(len(c), 1) for c in names]
    lines = ["  ".join(c.rjust(w) for c, w in zip(names, widths))]
    for x, y in zip(X, Y):
        cells = [str(int(v)) for v in x] + ["|"] + [str(int(v)) for v in y]
        lines.append("  ".join(c.rjust(w) for c, w in zip(cells, widths)))
    if len(X) < total:
        lines.append(f"({len(X)} of {total} rows shown; --limit 0 prints all)")
    sys.stdout.write("\n".join(lines) + "\n")
    return 0

"""``thresholdc example NAME -o FILE``: write an example netlist (``mult16``, ``adder8`` …)."""

from __future__ import annotations

import argparse
import os
import sys
from typing import Any

from ..errors import UsageError
from ..examples import EXAMPLES, example
from ..network import atomic_write
from .common import add_parser


def register(subparsers: Any) -> None:
    listing = "; ".join(f"{p}N: {what} ({lo} <= N <= {hi})"
                        for p, (_, what, lo, hi) in EXAMPLES.items())
    p = add_parser(
        subparsers,
        "example",
        description=f"Write a generated example netlist in the ISCAS .bench format. {listing}. "
        "Inputs a0.., b0.. (x0.. for parity), least significant bit first.",
        example="thresholdc example mult16 -o mult16.bench",
    )
    p.add_argument("name", metavar="NAME", help="adderN, multN, compareN or parityN")
    p.add_argument("-o", "--output", metavar="FILE.bench", required=True,
                   help="file to write (.bench)")


def run(args: argparse.Namespace) -> int:
    if os.path.splitext(args.output)[1].lower() != ".bench":
        raise UsageError("an example netlist is written as .bench", file=args.output)
    try:
        text = example(args.name)
    except ValueError as exc:
        raise UsageError(str(exc)) from None
    atomic_write(args.output, text)
    gates = sum(1 for line in text.splitlines() if " = " in line and not line.startswith("#"))
    sys.stdout.write(f"wrote {args.output} ({args.name}: {gates:,} gates)\n")
    return 0

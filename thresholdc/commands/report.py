"""``thresholdc report NET [RULES] -o report.html``: one self-contained HTML page."""

from __future__ import annotations

import argparse
import os
import sys
from typing import Any

from ..api import load
from ..errors import UsageError
from ..htmlreport import write_report
from ..logic import load_source
from ..network import check_writable
from .common import add_parser


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "report",
        description=(
            "Write one self-contained HTML file (inline CSS and SVG, nothing loaded from "
            "elsewhere) about a network: a summary, a table per layer, the drawing, the "
            "verification per output against RULES when given (else the record stored at "
            "compile time), and what training recorded for a trained network."
        ),
        example="thresholdc report greenhouse.json circuits/greenhouse.rules -o report.html",
    )
    p.add_argument("network", metavar="NET", help="network file (.json; .npz/.onnx with --like)")
    p.add_argument("rules", metavar="RULES", nargs="?",
                   help="rule file or netlist to verify against (optional)")
    p.add_argument("-o", "--output", metavar="FILE.html", required=True,
                   help="the page to write (.html)")
    p.add_argument("--like", metavar="NET.json",
                   help="the compiled network a .npz/.onnx came from")


def run(args: argparse.Namespace) -> int:
    if os.path.splitext(args.output)[1].lower() not in (".html", ".htm"):
        raise UsageError("the report is written as .html", file=args.output)
    check_writable(args.output)
    like = load(args.like) if args.like else None
    net = load(args.network, like=like)
    source = load_source(args.rules) if args.rules else None
    write_report(net, args.output, source, title=os.path.basename(args.network))
    sys.stdout.write(f"wrote {args.output}\n")
    return 0

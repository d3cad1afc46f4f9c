"""``thresholdc draw NET -o FILE.png|.svg``: a diagram of a network in layers."""

from __future__ import annotations

import argparse
import os
import sys
from typing import Any

from .. import export
from ..errors import UsageError
from ..export import load_any
from ..network import load
from .common import add_parser, count

FORMATS = (".png", ".svg")


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "draw",
        description=(
            "Draw a network: inputs on the left, one column per layer, outputs on the right; "
            "each neuron shows its name, the definition it serves and its bias, each link its "
            "weight (positive: solid bluish green; negative: dashed reddish purple; two "
            "colours of the Okabe & Ito colour-blind-safe palette); relays are grey. Links "
            "with |w| below --min-weight are hidden (the legend says how many). A network of "
            "more than --max-neurons neurons is drawn as one box per layer, wrapping onto rows."
        ),
        example="thresholdc draw greenhouse.json -o greenhouse.svg",
    )
    p.add_argument("network", metavar="NET", help="network to draw (.json, .npz, .onnx)")
    p.add_argument("-o", "--output", metavar="FILE", required=True,
                   help="picture to write: .png or .svg")
    p.add_argument("--like", metavar="NET.json",
                   help="the compiled network NET came from, when NET is .npz or .onnx")
    p.add_argument("--max-neurons", type=int, default=60, metavar="N",
                   help="draw every neuron up to N neurons, else a per-layer summary "
                   "(default 60)")
    p.add_argument("--min-weight", type=float, metavar="W",
                   help="hide links with |weight| < W (default: 0 for integer weights, "
                   "else a tenth of the largest |weight|)")


def run(args: argparse.Namespace) -> int:
    suffix = os.path.splitext(args.output)[1].lower()
    if suffix not in FORMATS:  # checked before reading anything
        raise UsageError(f"unknown picture suffix {suffix or '(none)'!r}; "
                         f"supported: {', '.join(FORMATS)}", file=args.output)
    if args.min_weight is not None and args.min_weight < 0:
        raise UsageError(f"--min-weight must be at least 0, got {args.min_weight:g}")
    if args.max_neurons < 0:
        raise UsageError(f"--max-neurons must be at least 0, got {args.max_neurons}")
    like = load(args.like) if args.like else None
    net = load_any(args.network, like=like)
    export.draw(net, args.output, max_neurons=args.max_neurons, min_weight=args.min_weight)
    detailed = len(net.neurons) <= args.max_neurons and net.depth <= export.MAX_DEPTH
    mode = "every neuron" if detailed else "per-layer summary"
    sys.stdout.write(f"wrote {args.output} ({count(len(net.neurons), 'neuron')}, {mode})\n")
    return 0

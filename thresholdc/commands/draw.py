"""``thresholdc draw NET -o FILE.png|.svg``: a diagram of a network in layers."""

from __future__ import annotations

import argparse
import os
import sys
from typing import Any

from ..errors import UsageError
from ..export import draw, load_any
from ..network import load
from .common import add_parser

FORMATS = (".png", ".svg")


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "draw",
        help="draw a network in layers (.png or .svg)",
        description=(
            "Draw a network: inputs on the left, one column per layer, outputs on the right; "
            "each neuron shows its name, the definition it serves and its bias, each link its "
            "weight (blue positive, orange dashed negative); relays are grey. A network of "
            "more than --max-neurons neurons is drawn as one box per layer."
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


def run(args: argparse.Namespace) -> int:
    suffix = os.path.splitext(args.output)[1].lower()
    if suffix not in FORMATS:  # checked before reading anything
        raise UsageError(f"unknown picture suffix {suffix or '(none)'!r}; "
                         f"supported: {', '.join(FORMATS)}", file=args.output)
    if args.max_neurons < 0:
        raise UsageError(f"--max-neurons must be at least 0, got {args.max_neurons}")
    like = load(args.like) if args.like else None
    net = load_any(args.network, like=like)
    draw(net, args.output, max_neurons=args.max_neurons)
    mode = "every neuron" if len(net.neurons) <= args.max_neurons else "per-layer summary"
    sys.stdout.write(f"wrote {args.output} ({len(net.neurons)} neurons, {mode})\n")
    return 0

"""``thresholdc export NET -o OTHER``: convert a saved network between .json, .npz and .onnx."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..export import check_suffix, load_any, save_any
from ..network import load
from .common import add_parser, print_json


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "export",
        description=(
            "Read a network (.json, or a dense MLP saved as .npz or .onnx) and write it in the "
            "format the suffix of -o names: .json (the network file), .npz (NumPy arrays of "
            "the strict layered form) or .onnx (opset 17). A .npz or .onnx model that was not "
            "written by thresholdc takes its unit names from --like, the compiled network it "
            "came from."
        ),
        example="thresholdc export greenhouse.json -o greenhouse.onnx",
    )
    p.add_argument("network", metavar="NET", help="network to read (.json, .npz, .onnx)")
    p.add_argument("-o", "--output", metavar="OTHER", required=True,
                   help="file to write; its suffix picks the format")
    p.add_argument("--like", metavar="NET.json",
                   help="the compiled network NET came from (names, features, encoding)")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")


def run(args: argparse.Namespace) -> int:
    suffix = check_suffix(args.output)  # before reading anything
    like = load(args.like) if args.like else None
    net = load_any(args.network, like=like)
    save_any(net, args.output)
    summary = {
        "input": args.network,
        "output": args.output,
        "format": suffix[1:],
        "inputs": len(net.inputs),
        "neurons": len(net.neurons),
        "outputs": len(net.outputs),
        "depth": net.depth,
    }
    if args.json:
        print_json(summary)
    else:
        sys.stdout.write(
            f"wrote {args.output} ({summary['format']}: {summary['inputs']} input units, "
            f"{summary['neurons']} neurons, {summary['outputs']} outputs, "
            f"depth {summary['depth']})\n"
        )
    return 0

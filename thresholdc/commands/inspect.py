"""``thresholdc inspect NET``: a table per layer of every neuron, then totals."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..api import load
from ..ir.network import Network
from .common import add_parser, fmt_num, format_table, print_json


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "inspect",
        help="show a network's neurons layer by layer, with totals",
        description=(
            "Print one table per layer: each neuron's inputs and weights, bias, activation, "
            "role and the definition it came from; then the totals (neurons by role, "
            "parameters = weights + biases, depth)."
        ),
        example="thresholdc inspect greenhouse.json",
    )
    p.add_argument("network", metavar="NET", help="network file (.json; .npz/.onnx with --like)")
    p.add_argument("--like", metavar="NET.json", help="the compiled network a .npz/.onnx came from")
    p.add_argument("--json", action="store_true", help="print the tables as JSON")


def totals(net: Network) -> dict[str, Any]:
    """Counts of a network: units, neurons by role, parameters, depth."""
    weights = sum(len(n.weights) for n in net.neurons)
    roles = {r: sum(n.role == r for n in net.neurons) for r in ("gate", "relay", "extra")}
    return {
        "inputs": len(net.inputs),
        "outputs": len(net.outputs),
        "neurons": len(net.neurons),
        **roles,
        "weights": weights,
        "biases": len(net.neurons),
        "parameters": net.parameter_count,
        "depth": net.depth,
        "strict": net.is_strict(),
    }


def _count(n: int, one: str, many: str | None = None) -> str:
    """``1 gate``, ``2 gates``."""
    return f"{n} {one if n == 1 else (many or one + 's')}"


def _number(x: float) -> int | float:
    """An integral value as an int (printed as in the network file), else the float."""
    x = float(x)
    return int(x) if x.is_integer() and abs(x) < 2**53 else x


def run(args: argparse.Namespace) -> int:
    like = load(args.like) if args.like else None
    net = load(args.network, like=like)
    if args.json:
        print_json(
            {
                "inputs": list(net.inputs),
                "outputs": [{"name": o.name, "source": o.source} for o in net.outputs],
                "layers": [
                    {
                        "layer": L,
                        "neurons": [
                            {
                                "name": n.name,
                                "inputs": list(n.inputs),
                                "weights": [_number(w) for w in n.weights],
                                "bias": _number(n.bias),
                                "activation": n.activation,
                                "role": n.role,
                                "origin": n.origin,
                            }
                            for n in net.neurons
                            if n.layer == L
                        ],
                    }
                    for L in net.layer_sizes()
                ],
                "totals": totals(net),
            }
        )
        return 0
    out = [f"network {args.network}: {len(net.inputs)} inputs ({', '.join(net.inputs[:10])}"
           f"{', …' if len(net.inputs) > 10 else ''})"]
    for L in net.layer_sizes():
        units = [n for n in net.neurons if n.layer == L]
        out.append("")
        out.append(f"layer {L} ({_count(len(units), 'neuron')})")
        rows = [
            (
                n.name,
                " ".join(f"{fmt_num(w)}*{i}" for w, i in zip(n.weights, n.inputs)) or "-",
                fmt_num(n.bias),
                n.activation,
                n.role,
                n.origin or "-",
            )
            for n in units
        ]
        table = format_table(("neuron", "weights * inputs", "bias", "activation", "role",
                              "origin"), rows, right={2})
        out.extend("  " + line for line in table.splitlines())
    out.append("")
    out.append("outputs: " + ", ".join(
        o.name if o.name == o.source else f"{o.name} <- {o.source}" for o in net.outputs))
    t = totals(net)
    out.append(
        f"totals: {_count(t['neurons'], 'neuron')} ({_count(t['gate'], 'gate')}, "
        f"{_count(t['relay'], 'relay')}, {t['extra']} extra), "
        f"{_count(t['parameters'], 'parameter')} ({_count(t['weights'], 'weight')} + "
        f"{_count(t['biases'], 'bias', 'biases')}), depth {t['depth']}, "
        f"{'strict layered' if t['strict'] else 'direct connections across layers'}"
    )
    sys.stdout.write("\n".join(out) + "\n")
    return 0

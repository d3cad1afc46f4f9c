"""``thresholdc inspect NET``: a table per layer of every neuron, then totals.

Soft neurons whose weights are integers times a gain (as compiled) show the integer weights
and the gain; ``--top K`` and ``--min-weight W`` leave out small weights (the line says how
many); the weights column wraps so no line is much wider than ``--width``.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..api import load
from ..errors import UsageError
from ..ir.network import Network
from ..present import count, degain
from .common import add_parser, fmt_num, format_table, print_json

WIDTH = 100


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "inspect",
        description=(
            "Print one table per layer: each neuron's bias, activation, role, the definition "
            "it came from, and its weights and inputs (largest |weight| first with --top or "
            "--min-weight); then the totals (neurons by role, parameters = weights + biases, "
            "depth). Soft neurons compiled with a gain show integer weights and the gain "
            "(stored weight = weight x gain)."
        ),
        example="thresholdc inspect trained.json --top 5",
    )
    p.add_argument("network", metavar="NET", help="network file (.json; .npz/.onnx with --like)")
    p.add_argument("--like", metavar="NET.json", help="the compiled network a .npz/.onnx came from")
    p.add_argument("--top", type=int, metavar="K",
                   help="show only the K largest |weights| of each neuron")
    p.add_argument("--min-weight", type=float, metavar="W", default=0.0,
                   help="leave out weights with |weight| < W (after removing the gain)")
    p.add_argument("--width", type=int, default=WIDTH, metavar="N",
                   help=f"wrap the weights so lines stay within about N characters "
                   f"(default {WIDTH})")
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


def _number(x: float) -> int | float:
    """An integral value as an int (printed as in the network file), else the float."""
    x = float(x)
    return int(x) if x.is_integer() and abs(x) < 2**53 else x


def shown_terms(weights: Any, inputs: Any, *, top: int | None, min_weight: float
                ) -> tuple[list[tuple[float, str]], int]:
    """The (weight, input) pairs to show, largest |weight| first when filtering, and the
    number left out.

    >>> shown_terms([0.1, -3, 2], ["a", "b", "c"], top=1, min_weight=0)
    ([(-3, 'b')], 2)
    >>> shown_terms([0.1, -3, 2], ["a", "b", "c"], top=None, min_weight=0)
    ([(0.1, 'a'), (-3, 'b'), (2, 'c')], 0)
    """
    pairs = list(zip(weights, inputs, strict=True))
    if top is None and not min_weight:
        return pairs, 0
    kept = [p for p in pairs if abs(p[0]) >= min_weight]
    kept.sort(key=lambda p: -abs(p[0]))  # stable: ties stay in input order
    if top is not None:
        kept = kept[:top]
    return kept, len(pairs) - len(kept)


def wrap_words(words: list[str], width: int) -> list[str]:
    """Join ``words`` with spaces into lines of at most ``width`` characters (a longer word
    gets a line of its own).

    >>> wrap_words(["1*a", "2*bb", "-1*c"], 8)
    ['1*a 2*bb', '-1*c']
    """
    lines: list[str] = []
    line = ""
    for w in words:
        if line and len(line) + 1 + len(w) > width:
            lines.append(line)
            line = w
        else:
            line = f"{line} {w}" if line else w
    return lines + [line] if line or not lines else lines


def _json(net: Network, gains: dict[str, float]) -> dict[str, Any]:
    def neuron(n: Any) -> dict[str, Any]:
        d = {
            "name": n.name,
            "inputs": list(n.inputs),
            "weights": [_number(w) for w in n.weights],
            "bias": _number(n.bias),
            "activation": n.activation,
            "role": n.role,
            "origin": n.origin,
        }
        g = gains.get(n.name)
        if g is not None:
            d["gain"] = g
            d["integer_weights"] = [int(round(w / g)) for w in n.weights]
            d["integer_bias"] = round(2 * n.bias / g) / 2
        return d

    return {
        "inputs": list(net.inputs),
        "outputs": [{"name": o.name, "source": o.source} for o in net.outputs],
        "layers": [
            {"layer": L, "neurons": [neuron(n) for n in net.neurons if n.layer == L]}
            for L in net.layer_sizes()
        ],
        "totals": totals(net),
    }


def render(name: str, net: Network, *, top: int | None = None, min_weight: float = 0.0,
           width: int = WIDTH) -> str:
    """The text of ``inspect``: a header, one table per layer, outputs, totals."""
    gains = degain(net)
    shown_inputs = ", ".join(net.inputs[:10]) + (", …" if len(net.inputs) > 10 else "")
    first = f"network {name}: {count(len(net.inputs), 'input')} ({shown_inputs})".split(" ")
    wrapped_head = wrap_words(first, width)
    out = [wrapped_head[0]] + ["  " + line for line in wrapped_head[1:]]
    if gains:
        out.append("soft neurons are shown as integer weights and bias times their gain "
                   "(stored value = shown value x gain)")
    left_out = 0
    many = 0
    for L in net.layer_sizes():
        units = [n for n in net.neurons if n.layer == L]
        out.append("")
        out.append(f"layer {L} ({count(len(units), 'neuron')})")
        rows = []
        cells: list[list[str]] = []
        for n in units:
            g = gains.get(n.name)
            weights = [w / g for w in n.weights] if g else list(n.weights)
            bias = round(2 * n.bias / g) / 2 if g else n.bias
            terms, hidden = shown_terms(weights, n.inputs, top=top, min_weight=min_weight)
            left_out += hidden
            many += len(n.weights) > 12
            words = [f"{fmt_num(round(w) if g else w)}*{i}" for w, i in terms]
            if hidden:
                words.append(f"(+{hidden} smaller)")
            cells.append(words or ["-"])
            row = [n.name]
            if gains:
                row.append(fmt_num(g) if g else "-")
            row += [fmt_num(bias), n.activation, n.role, n.origin or "-"]
            rows.append(row)
        header = ["neuron"] + (["gain"] if gains else []) + ["bias", "activation", "role",
                                                             "origin"]
        right = {1, 2} if gains else {1}
        base = format_table(header, rows,
                            right=right).splitlines()
        indent = max(len(line) for line in base) + 2
        room = max(40, width - indent - 2)
        head = base[0].ljust(indent) + "weights * inputs"
        rule = base[1] + "  " + "-" * min(room, 16)
        out.append("  " + head)
        out.append("  " + rule)
        for line, words in zip(base[2:], cells, strict=True):
            wrapped = wrap_words(words, room)
            out.append("  " + line.ljust(indent) + wrapped[0])
            out.extend("  " + " " * indent + w for w in wrapped[1:])
    out.append("")
    if left_out:
        out.append(f"note: {count(left_out, 'weight')} left out "
                   f"({'--top ' + str(top) if top is not None else ''}"
                   f"{' ' if top is not None and min_weight else ''}"
                   f"{'--min-weight ' + fmt_num(min_weight) if min_weight else ''})")
    elif many and top is None:
        out.append("note: neurons with many inputs: --top K or --min-weight W shows the "
                   "largest weights only")
    out.append("outputs: " + ", ".join(
        o.name if o.name == o.source else f"{o.name} <- {o.source}" for o in net.outputs))
    t = totals(net)
    out.append(
        f"totals: {count(t['neurons'], 'neuron')} ({count(t['gate'], 'gate')}, "
        f"{count(t['relay'], 'relay')}, {t['extra']} extra), "
        f"{count(t['parameters'], 'parameter')} ({count(t['weights'], 'weight')} + "
        f"{count(t['biases'], 'bias', 'biases')}), depth {t['depth']}, "
        f"{'strict layered' if t['strict'] else 'direct connections across layers'}"
    )
    return "\n".join(out)


def run(args: argparse.Namespace) -> int:
    if args.top is not None and args.top < 0:
        raise UsageError(f"--top must be at least 0, got {args.top}")
    if args.min_weight < 0:
        raise UsageError(f"--min-weight must be at least 0, got {fmt_num(args.min_weight)}")
    like = load(args.like) if args.like else None
    net = load(args.network, like=like)
    if args.json:
        print_json(_json(net, degain(net)))
        return 0
    sys.stdout.write(render(args.network, net, top=args.top, min_weight=args.min_weight,
                            width=args.width) + "\n")
    return 0

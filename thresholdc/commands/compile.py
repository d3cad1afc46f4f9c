"""``thresholdc compile SOURCE -o NET``: compile, verify, write, and print a summary."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..compiler import compile_file
from ..export import SUFFIXES, check_suffix, save_any
from ..ir.options import CHOICES, DEFAULT_TOLERANCE, CompileOptions
from ..network import check_writable
from .common import add_parser, fmt_num, print_json, warn

_default = CompileOptions.default


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "compile",
        description=(
            "Compile a rule file (or an ISCAS .bench / BLIF netlist) into a threshold network, "
            "verify it against the source, write it, and print a summary. The suffix of -o "
            f"picks the format ({', '.join(SUFFIXES)}); .npz always holds the strict layered form."
        ),
        example="thresholdc compile circuits/greenhouse.rules -o greenhouse.json --layered",
    )
    p.add_argument("source", metavar="SOURCE", help="rule file, .bench or .blif netlist")
    p.add_argument("-o", "--output", metavar="NET", required=True, help="network file to write")
    p.add_argument("--layered", action="store_true",
                   help="strict layered form: relays so each layer reads only the previous one")
    p.add_argument("--activation", choices=CHOICES["activation"], default=_default("activation"),
                   help=f"activation of the neurons (default: {_default('activation')})")
    p.add_argument("--gain", type=float, metavar="G",
                   help="fixed gain for sigmoid/tanh (the resulting error bound is reported)")
    p.add_argument("--tolerance", type=float, metavar="EPS",
                   help="certified tolerance for sigmoid/tanh: every output within EPS of the "
                   f"truth table (default {DEFAULT_TOLERANCE:g} when no --gain)")
    p.add_argument("--encoding", choices=CHOICES["encoding"], default=_default("encoding"),
                   help="input/output encoding: 0/1 (binary) or -1/+1 (bipolar, for tanh)")
    p.add_argument("--no-synthesis", action="store_true",
                   help="map one construction per gate instead of collapsing cones")
    p.add_argument("--cut-size", type=int, default=_default("cut_size"), metavar="K",
                   help="largest cut (cone inputs) the collapsing pass considers, 2 to 10 "
                   f"(default {_default('cut_size')})")
    p.add_argument("--max-fan-in", type=int, metavar="N",
                   help="largest fan-in of a neuron (needs synthesis)")
    p.add_argument("--max-weight", type=int, metavar="W",
                   help="largest |weight| of a neuron (needs synthesis)")
    p.add_argument("--simplify-support", type=int, default=_default("simplify_support"),
                   metavar="N", help="simplify definitions reading at most N names with sympy "
                   f"(0: off; default {_default('simplify_support')})")
    p.add_argument("--method", choices=tuple(m for m in CHOICES["verify"] if m != "none"),
                   default=_default("verify"),
                   help=f"verification method (default {_default('verify')})")
    p.add_argument("--max-inputs", type=int, default=_default("max_inputs"), metavar="N",
                   help="largest number of inputs checked exhaustively "
                   f"(default {_default('max_inputs')})")
    p.add_argument("--time-limit", type=float, default=_default("time_limit"), metavar="S",
                   help="time budget of the SAT check in seconds "
                   f"(default {_default('time_limit'):g})")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")


def run(args: argparse.Namespace) -> int:
    suffix = check_suffix(args.output)  # before reading anything
    check_writable(args.output)
    result = compile_file(
        args.source,
        layered=args.layered or suffix == ".npz",
        activation=args.activation,
        gain=args.gain,
        tolerance=args.tolerance,
        encoding=args.encoding,
        synthesis=not args.no_synthesis,
        cut_size=args.cut_size,
        max_fan_in=args.max_fan_in,
        max_weight=args.max_weight,
        simplify_support=args.simplify_support,
        verify=args.method,
        max_inputs=args.max_inputs,
        time_limit=args.time_limit,
    )
    net = result.network
    save_any(net, args.output)
    summary = summarise(args.source, args.output, result)
    if args.json:
        print_json(summary)
    else:
        sys.stdout.write(render_summary(summary) + "\n")
    for w in result.warnings:
        warn(w)
    return 0 if result.survives else 1


def summarise(source: str, output: str, result: Any) -> dict[str, Any]:
    """The summary as a JSON-ready dict."""
    net = result.network
    weights = sum(len(n.weights) for n in net.neurons)
    report = result.report
    verification: dict[str, Any] = dict(net.meta.get("verification", {}))
    if report is not None:
        verification.update(
            {
                "report": report.result,
                "assignments": report.assignments,
                "proofs": report.proofs,
                "notes": report.notes,
                "seconds": round(result.seconds.get("verify", 0.0), 4),
            }
        )
    cert = net.meta.get("certificate")
    out: dict[str, Any] = {
        "source": source,
        "output": output,
        "inputs": list(net.inputs),
        "outputs": [o.name for o in net.outputs],
        "activation": net.meta.get("options", {}).get("activation", "step"),
        "layers": [
            {"layer": L, **counts} for L, counts in net.layer_sizes().items()
        ],
        "neurons": len(net.neurons),
        "parameters": {"weights": weights, "biases": len(net.neurons),
                       "total": weights + len(net.neurons)},
        "depth": net.depth,
        "synthesis": {"before": result.before, "after": result.after},
        "verification": verification,
        "compile_seconds": round(result.seconds.get("compile", 0.0), 4),
        "notes": result.notes,
        "warnings": result.warnings,
    }
    if isinstance(cert, dict):
        out["certificate"] = {k: cert.get(k) for k in ("tolerance", "margins", "bound")}
    return out


def _count(n: int, word: str) -> str:
    """``1 bias``, ``2 biases``, ``3 weights``."""
    if n == 1:
        return f"1 {word}"
    return f"{n} {word}es" if word.endswith("s") else f"{n} {word}s"


def _names(names: list[str], limit: int = 8) -> str:
    shown = ", ".join(names[:limit])
    return shown + (f", … (+{len(names) - limit})" if len(names) > limit else "")


def render_summary(s: dict[str, Any]) -> str:
    """The summary as text, one fact per line."""
    layers = "; ".join(
        f"L{e['layer']}: " + ", ".join(
            f"{e[r]} {r}{'s' if e[r] != 1 else ''}" for r in ("gate", "relay", "extra") if e[r]
        )
        for e in s["layers"]
    )
    p = s["parameters"]
    b, a = s["synthesis"]["before"], s["synthesis"]["after"]
    v = s["verification"]
    lines = [
        f"compiled {s['source']} -> {s['output']}",
        f"  inputs       {len(s['inputs'])} ({_names(s['inputs'])})",
        f"  outputs      {len(s['outputs'])} ({_names(s['outputs'])})",
        f"  neurons      {s['neurons']} ({layers or 'none'})",
        f"  parameters   {p['total']} ({_count(p['weights'], 'weight')} + "
        f"{_count(p['biases'], 'bias')})",
        f"  depth        {s['depth']}",
        f"  activation   {s['activation']}",
    ]
    if b != a:
        lines.append(
            f"  synthesis    {b['neurons']} -> {a['neurons']} neurons, depth {b['depth']} -> "
            f"{a['depth']}, max fan-in {b['max_fan_in']} -> {a['max_fan_in']}, max |weight| "
            f"{b['max_weight']} -> {a['max_weight']}"
        )
    if "certificate" in s:
        c = s["certificate"]
        tol = "fixed gain" if c["tolerance"] is None else f"tolerance {fmt_num(c['tolerance'])}"
        lines.append(f"  certificate  {tol}, bound {fmt_num(c['bound'])} ({c['margins']} margins)")
    detail = f"{v.get('assignments', 0)} assignments, " if v.get("method") == "exhaustive" else ""
    lines.append(
        f"  verification {v.get('method')}: {v.get('result')} ({detail}"
        f"{v.get('seconds', 0.0):.3f} s)"
    )
    lines.append(f"  compile time {s['compile_seconds']:.3f} s")
    for note in s["notes"]:
        lines.append(f"  note: {note}")
    return "\n".join(lines)

"""``thresholdc verify NET SOURCE``: does the network compute the rules?  Exit 0, 1 or 2."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..api import load, verify
from ..errors import VerificationUndecided
from ..logic import load_source
from ..verify import Report, check_certificate
from .common import add_parser, fmt_num, format_table, print_json


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "verify",
        help="check that a network computes its rules (exit 0 equal, 1 different)",
        description=(
            "Check that a network computes the rule file or netlist on every input. A soft "
            "network is read as 1 where its output exceeds 0.5 (0 for bipolar); a certificate "
            "stored with it is checked too. Exit 0 when equal, 1 when not (up to 5 "
            "counterexamples are printed), 2 on bad input or when no method can decide."
        ),
        example="thresholdc verify greenhouse.json circuits/greenhouse.rules",
    )
    p.add_argument("network", metavar="NET", help="network file (.json; .npz/.onnx with --like)")
    p.add_argument("source", metavar="SOURCE", help="rule file, .bench or .blif netlist")
    p.add_argument("--method", choices=("auto", "exhaustive", "local", "sat", "bounds"),
                   default="auto",
                   help="auto: exhaustive up to --max-inputs, else local + SAT for step "
                   "networks and branch-and-bound (bounds) for soft or trained ones (default)")
    p.add_argument("--max-inputs", type=int, default=24, metavar="N",
                   help="largest number of inputs checked exhaustively (default 24)")
    p.add_argument("--time-limit", type=float, default=60.0, metavar="S",
                   help="time budget of the SAT check in seconds (default 60)")
    p.add_argument("--like", metavar="NET.json",
                   help="the compiled network a .npz/.onnx came from (unit names, features)")
    p.add_argument("--json", action="store_true", help="print the report as JSON")


def run(args: argparse.Namespace) -> int:
    like = load(args.like) if args.like else None
    net = load(args.network, like=like)
    source = load_source(args.source)
    try:
        report = verify(net, source, method=args.method, max_inputs=args.max_inputs,
                        time_limit=args.time_limit)
    except VerificationUndecided as err:
        report = Report("undecided", args.method, 0, [], notes=[err.message])
    cert_problems = _certificate_problems(net)
    if args.json:
        data = report.to_dict()
        if cert_problems is not None:
            data["certificate"] = {"ok": not cert_problems, "problems": cert_problems}
        print_json(data)
    else:
        sys.stdout.write(render_report(args.network, args.source, report, cert_problems) + "\n")
    if report.result == "undecided":
        return 2
    if report.result == "different" or cert_problems:
        return 1
    return 0


def _certificate_problems(net: Any) -> list[str] | None:
    """Problems of a stored soft-activation certificate; None when there is none."""
    if not isinstance(net.meta.get("certificate"), dict):
        return None
    return list(check_certificate(net).problems)


def render_report(
    net_file: str, source_file: str, report: Report, cert_problems: list[str] | None = None
) -> str:
    """The report as text: verdict, per-output table, counterexamples, notes."""
    lines = [f"verify {net_file} against {source_file}: {report.result}"]
    detail = (f"{report.assignments} assignments, " if report.method == "exhaustive" else "")
    lines.append(f"  method: {report.method} ({detail}{report.seconds:.3f} s)")
    for proof in report.proofs:
        lines.append(f"  proved: {proof}")
    if report.outputs:
        rows = [
            (o.name, "yes" if o.agrees else "no", o.disagreements,
             "-" if o.min_margin is None else fmt_num(o.min_margin))
            for o in report.outputs
        ]
        table = format_table(("output", "agrees", "disagreements", "min margin"), rows,
                             right={2, 3})
        lines.extend("  " + t for t in table.splitlines())
    shown = report.counterexamples[:5]
    if shown:
        lines.append(f"  counterexamples (first {len(shown)}):")
        for c in shown:
            assignment = " ".join(f"{k}={v}" for k, v in c.assignment.items())
            margin = "" if c.margin is None else f", margin {fmt_num(c.margin)}"
            lines.append(
                f"    {assignment}: {c.output} expected {int(c.expected)}, network gave "
                f"{fmt_num(c.actual)}{margin}"
            )
    if cert_problems is not None:
        if cert_problems:
            lines.append("  certificate: FAILED")
            lines.extend(f"    {p}" for p in cert_problems)
        else:
            lines.append("  certificate: holds")
    for note in report.notes:
        lines.append(f"  note: {note}")
    return "\n".join(lines)

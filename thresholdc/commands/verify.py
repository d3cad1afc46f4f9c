"""``thresholdc verify NET SOURCE``: does the network compute the rules?  Exit 0, 1 or 2."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..api import load, verify
from ..errors import VerificationUndecided
from ..forcing import describe_assignment, inputs_that_matter
from ..logic import load_source
from ..verification import (
    METHODS,
    Report,
    check_certificate,
    undecided_outputs,
    verify_definitions,
)
from .common import add_parser, fmt_num, format_table, print_json


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "verify",
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
    p.add_argument("--method", choices=METHODS,
                   default="auto",
                   help="auto: exhaustive when the table is small (2^inputs x (neurons + 1) "
                   "<= 2^23 and inputs <= --max-inputs), else local + SAT for step networks "
                   "(typed SAT for typed rules) and branch-and-bound (bounds) for soft or "
                   "trained ones (default)")
    p.add_argument("--max-inputs", type=int, default=24, metavar="N",
                   help="largest number of inputs checked exhaustively (default 24)")
    p.add_argument("--time-limit", type=float, default=60.0, metavar="S",
                   help="time budget of the check in seconds (SAT, MILP, branch-and-bound; "
                   "default 60)")
    p.add_argument("--like", metavar="NET.json",
                   help="the compiled network a .npz/.onnx came from (unit names, features)")
    p.add_argument("--definitions", action="store_true",
                   help="also report, definition by definition, which definitions of the rule "
                   "file the network still computes (for networks that keep a neuron named "
                   "after each definition, e.g. compiled with --no-synthesis, then trained); "
                   "the exit code stays that of the outputs")
    p.add_argument("--json", action="store_true", help="print the report as JSON")


def run(args: argparse.Namespace) -> int:
    like = load(args.like) if args.like else None
    net = load(args.network, like=like)
    source = load_source(args.source)
    try:
        report = verify(net, source, method=args.method, max_inputs=args.max_inputs,
                        time_limit=args.time_limit)
    except VerificationUndecided as err:
        report = Report("undecided", args.method, 0,
                        undecided_outputs(net.output_names, err.message), notes=[err.message])
    cert_problems = _certificate_problems(net)
    per_def = None
    if args.definitions:
        per_def = verify_definitions(net, source, method=args.method,
                                     max_inputs=args.max_inputs, time_limit=args.time_limit)
    if args.json:
        data = report.to_dict()
        if cert_problems is not None:
            data["certificate"] = {"ok": not cert_problems, "problems": cert_problems}
        if per_def is not None:
            data["definitions"] = {"result": per_def.result, "method": per_def.method,
                                   "verdicts": [o.to_dict() for o in per_def.outputs]}
        print_json(data)
    else:
        kept = [inputs_that_matter(net, source, c.assignment, c.output)
                for c in report.counterexamples[:5]]
        text = render_report(args.network, args.source, report, cert_problems, kept)
        if per_def is not None:
            text += "\n" + render_definitions(per_def)
        sys.stdout.write(text + "\n")
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


def render_definitions(report: Report) -> str:
    """The per-definition table and the bounds of the undecided ones."""
    lines = [f"  definitions: {report.result} ({report.method})"]
    lines.extend("  " + t for t in output_table(report, "definition").splitlines())
    for o in report.outputs:
        if o.verdict == "undecided":
            lines.append(f"  {o.name} not decided: {o.bound}")
    for o in report.outputs:
        for c in o.counterexamples[:1]:
            assignment = " ".join(f"{k}={v}" for k, v in c.assignment.items())
            lines.append(f"    {o.name}: {assignment}: expected {int(c.expected)}, network "
                         f"gave {fmt_num(c.actual)}")
    return "\n".join(lines)


def output_table(report: Report, label: str = "output") -> str:
    """The per-output table: the verdict, then the count, labelled for what it is.

    ``disagreeing inputs`` is the exact number of disagreeing assignments (shown where the
    method counted them all), ``counterexamples found`` how many the method found where it
    does not count; with both kinds of rows both columns are shown, ``-`` where one does not
    apply.

    >>> from thresholdc.verification.report import OutputReport
    >>> r = Report.of("sat", 0, [OutputReport.proven("a"), OutputReport.undecided("b", "t")])
    >>> print(output_table(r))
    output  verdict    disagreeing inputs  counterexamples found  min margin
    ------  ---------  ------------------  ---------------------  ----------
    a       equal                       0                      0           -
    b       undecided                   -                      -           -
    """
    exact_only = all(o.exact for o in report.outputs)
    head = [label, "verdict", "disagreeing inputs"]
    if not exact_only:
        head.append("counterexamples found")
    head.append("min margin")
    soft = any(o.min_value_distance is not None for o in report.outputs)
    if soft:  # soft outputs: how far their values stay from the decision threshold
        head.append("min value distance")
    rows = []
    for o in report.outputs:
        row: list[Any] = [o.name, o.verdict, o.disagreements if o.exact else "-"]
        if not exact_only:
            row.append(o.found if o.verdict != "undecided" else "-")
        row.append("-" if o.min_margin is None else fmt_num(o.min_margin))
        if soft:
            row.append("-" if o.min_value_distance is None else fmt_num(o.min_value_distance))
        rows.append(tuple(row))
    return format_table(tuple(head), rows, right=set(range(2, len(head))))


def render_report(
    net_file: str, source_file: str, report: Report, cert_problems: list[str] | None = None,
    kept: list[Any] | None = None,
) -> str:
    """The report as text: verdict, per-output table, counterexamples, notes.

    ``kept[k]`` is what :func:`thresholdc.forcing.inputs_that_matter` found for the k-th
    counterexample (only those inputs are shown) or None (every input is shown)."""

    lines = [f"verify {net_file} against {source_file}: {report.result}"]
    detail = (f"{report.assignments} assignments, " if report.method == "exhaustive" else "")
    lines.append(f"  method: {report.method} ({detail}{report.seconds:.3f} s)")
    for proof in report.proofs:
        lines.append(f"  proved: {proof}")
    if report.outputs:
        lines.extend("  " + t for t in output_table(report).splitlines())
        for o in report.outputs:
            if o.verdict == "undecided":
                lines.append(f"  {o.name} not decided: {o.bound}")
    shown = report.counterexamples[:5]
    if shown:
        heading = f"  counterexamples (first {len(shown)}"
        if kept and any(k is not None for k in kept):
            heading += "; only the inputs that force the difference are shown"
        lines.append(heading + "):")
        seen: set[tuple[str, str, bool]] = set()
        for j, c in enumerate(shown):
            found = kept[j] if kept and j < len(kept) else None
            assignment = describe_assignment(c.assignment, None if found is None else found[0])
            if (assignment, c.output, c.expected) in seen:
                continue  # the same case once its free inputs are left out
            seen.add((assignment, c.output, c.expected))
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

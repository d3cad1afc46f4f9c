"""``thresholdc diff TRAINED RULES``: what each trained unit computes now, against its rule."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..api import load
from ..errors import UsageError
from ..explain import MAX_ENUMERATE, SAMPLES, diff
from ..logic import load_source
from ..network import atomic_write
from .common import add_parser, format_table, print_json

_TOP_DRIFT = 10  # units listed in the drift table


def _fmt(x: float | None) -> str:
    return "-" if x is None else f"{x:.4f}".rstrip("0").rstrip(".") if x != 1 else "1"


def _checked(d: Any) -> str:
    if d.method is None:
        return "-"
    return f"{d.method} {d.assignments}"


def render(result: Any, net_file: str, rules_file: str) -> str:
    """The report of a :class:`~thresholdc.explain.diff.Diff` as text: a table of the
    definitions, the details of each changed one, the outputs, the units that moved most."""
    defs = result.definitions
    with_unit = sum(1 for d in defs if d.reading is not None)
    out = [f"diff {net_file} against {rules_file}: {len(defs)} definitions, "
           f"{with_unit} with a unit, {len(result.changed)} changed"]
    rows = []
    for d in defs:
        reading = "(no unit)" if d.reading is None else (
            "same as the rule" if d.reading == d.rule else d.reading)
        rows.append((d.name + (" *" if d.output else ""), _fmt(d.agreement), _checked(d),
                     reading))
    out.append(format_table(("definition", "agreement", "checked", "unit reads"), rows,
                            right={1}))
    out.append("(* an output; agreement: the unit rounded to 0/1, composed with the units it "
               "reads, against the rule)")
    for d in defs:
        if d.reading is None or (d.agreement == 1 and not (d.added or d.dropped or d.negated)):
            continue
        out.append("")
        out.append(f"{d.name}: agreement {_fmt(d.agreement)} ({d.method} over "
                   f"{len(d.columns)} columns, {d.assignments} assignments)")
        out.append(f"  rule:    {d.rule}")
        out.append(f"  unit:    {d.reading}" + ("" if d.exact_reading else
                                                "   (weights rounded: too many inputs)"))
        for label, items in (("added", d.added), ("dropped", d.dropped),
                             ("negated", d.negated)):
            if items:
                out.append(f"  {label}: {', '.join(items)}")
        e = d.explanation
        if e is not None:
            cols = ", ".join(f"{c}={v}" for c, v in e["columns"].items()) or "(any values)"
            out.append(f"  differs whenever {cols}: unit {str(e['unit']).lower()}, rule "
                       f"{str(e['rule']).lower()} ({e['kind']}; {e['counterexamples']} "
                       "counterexamples)")
        if d.rounding is not None and d.rounding < 1:
            out.append(f"  the unrounded unit decides as its reading on {_fmt(d.rounding)} "
                       "of the assignments")
    out.append("")
    out.append(format_table(
        ("output", "agreement", "checked"),
        [(o.name, _fmt(o.agreement), f"{o.method} {o.assignments}") for o in result.outputs],
        right={1}))
    if result.drift is not None:
        moved = sorted(result.drift, key=lambda u: (-u.change, u.name))[:_TOP_DRIFT]
        out.append("")
        out.append(f"weight drift from the start (largest {len(moved)} of "
                   f"{len(result.drift)} units)")
        out.append(format_table(
            ("unit", "change", "relative", "largest weight change", "bias change"),
            [(u.name, f"{u.change:.3f}", "new" if u.new else _fmt(u.relative),
              "-" if u.largest_input is None else f"{u.largest_input} {u.largest_change:+.3f}",
              f"{u.bias_change:+.3f}") for u in moved],
            right={1, 2}))
    for note in result.notes:
        out.append(f"note: {note}")
    return "\n".join(out)


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "diff",
        description=(
            "For every definition of the rule file with a unit named after it, read the unit "
            "back as rule text (its inputs rounded to 0/1; the threshold function identified "
            "exactly), give its agreement with the rule (exhaustive over the columns either "
            "depends on when there are few enough assignments, else sampled), the antecedents "
            "added, dropped or negated, and for a changed definition the fewest columns whose "
            "values force the difference. With --start, the drift of every unit's weights. "
            "A report: exit 0 whatever it finds, 2 on bad input."
        ),
        example="thresholdc diff trained.json circuits/bike_docks.rules --start start.json",
    )
    p.add_argument("network", metavar="TRAINED", help="trained network file (.json)")
    p.add_argument("source", metavar="RULES", help="the rule file it was trained from")
    p.add_argument("--start", metavar="NET.json",
                   help="the network training started from (for the weight drift)")
    p.add_argument("--samples", type=int, default=SAMPLES, metavar="N",
                   help=f"assignments drawn where there are too many to count (default "
                   f"{SAMPLES})")
    p.add_argument("--max-enumerate", type=int, default=MAX_ENUMERATE, metavar="N",
                   help=f"largest number of assignments counted exhaustively per definition "
                   f"(default {MAX_ENUMERATE})")
    p.add_argument("--seed", type=int, default=0, help="seed of the sampled assignments")
    p.add_argument("--write-rules", metavar="FILE",
                   help="also write the network read back as a rule file")
    p.add_argument("--json", action="store_true", help="print the report as JSON")


def run(args: argparse.Namespace) -> int:
    if args.samples < 1 or args.max_enumerate < 1:
        raise UsageError("--samples and --max-enumerate must be at least 1")
    net = load(args.network)
    start = load(args.start) if args.start else None
    source = load_source(args.source)
    result = diff(net, source, start=start, samples=args.samples, seed=args.seed,
                  max_enumerate=args.max_enumerate)
    if args.write_rules:
        atomic_write(args.write_rules, result.rules_text)
    if args.json:
        print_json(result.to_dict())
    else:
        sys.stdout.write(render(result, args.network, args.source) + "\n")
    return 0

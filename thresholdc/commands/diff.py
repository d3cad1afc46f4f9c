"""``thresholdc diff TRAINED RULES``: what each trained unit computes now, against its rule."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from ..api import load
from ..errors import UsageError
from ..explain.diff import MAX_ENUMERATE, SAMPLES, diff
from ..network.fileformat import atomic_write
from ..source import load_source
from .common import add_parser, print_json


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "diff",
        help="read a trained network back as rules and compare them with the rule file",
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
        sys.stdout.write(result.render(args.network, args.source) + "\n")
    return 0

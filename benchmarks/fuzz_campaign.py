"""The long fuzz campaign: many seeded cases of every family through the command line.

Each case runs in-process through ``cli.main`` (``tests/fuzz/cases.py``) and must end with exit
0, 1 or 2, one clear error line, no traceback, within the per-case limit, and leave no output
or temporary file after a failure.  Families are drawn in fixed proportions from one seed, so a
run is repeatable; a failing case prints its family and seed.

    python3 benchmarks/fuzz_campaign.py --cases 100000 --seed 1
    python3 benchmarks/fuzz_campaign.py --cases 2000 --family network
    python3 benchmarks/fuzz_campaign.py --cases 3 --family csv/stream --stream-rows 1000000

The streamed-CSV family (a generated table of ``--stream-rows`` rows, 10^6 by default, scored
or trained on) costs about a thousand other cases each, so the mix draws it about once in 10^4
cases; ``--family`` alone draws only the families it names, each by its weight.

Exit status 0 when no case failed, 1 otherwise.  One process; ``--minutes`` stops early.
"""

from __future__ import annotations

import argparse
import random
import sys
import time
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from tests.fuzz import cases  # noqa: E402


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--cases", type=int, default=10_000, help="number of cases (default 10000)")
    p.add_argument("--seed", type=int, default=1, help="campaign seed (default 1)")
    p.add_argument("--family", action="append", choices=sorted(cases.FAMILIES),
                   help="only these families (repeatable)")
    p.add_argument("--minutes", type=float, default=None, help="stop after this many minutes")
    p.add_argument("--wide", action="store_true",
                   help="also rule files of 300 inputs in the extreme family")
    p.add_argument("--stream-rows", type=int, default=1_000_000,
                   help="data rows of the streamed-CSV cases (default 1000000)")
    args = p.parse_args(argv)
    if args.stream_rows < 1:
        p.error("--stream-rows must be at least 1")
    cases.STREAM_ROWS[0] = args.stream_rows
    if args.wide:
        cases.EXTREME_INPUTS.append(300)
    families = args.family or sorted(cases.FAMILIES)
    weights = [cases.FAMILIES[f][1] for f in families]
    rng = random.Random(args.seed)
    ran: Counter = Counter()
    failed: Counter = Counter()
    failures: list[str] = []
    t0 = time.perf_counter()
    deadline = None if args.minutes is None else t0 + 60 * args.minutes
    for k in range(args.cases):
        family = rng.choices(families, weights)[0]
        seed = args.seed * 10**9 + k
        found = cases.run_case(cases.make_case(family, seed))
        ran[family] += 1
        if found:
            failed[family] += 1
            failures.extend(f"seed {seed}: {f}" for f in found)
            for f in found:
                print(f"FAIL seed {seed}: {f}"[:600], flush=True)
        if (k + 1) % 5000 == 0:
            print(f"... {k + 1} cases, {sum(failed.values())} failed, "
                  f"{time.perf_counter() - t0:.0f} s", flush=True)
        if deadline is not None and time.perf_counter() > deadline:
            break
    if cases.unpickled():
        failures.append("a reader unpickled an object array")
    seconds = time.perf_counter() - t0
    print(f"{'family':<16}{'cases':>9}{'failed':>8}")
    for family in families:
        print(f"{family:<16}{ran[family]:>9}{failed[family]:>8}")
    total = sum(ran.values())
    print(f"{'total':<16}{total:>9}{sum(failed.values()):>8}   "
          f"{seconds:.0f} s, {total / seconds:.0f} cases/s, seed {args.seed}")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())

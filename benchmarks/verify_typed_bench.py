"""Typed SAT beside the typed enumeration and branch-and-bound, on the same step networks.

Networks: the two invented typed rule sets of the tests (``tests/verify/fixtures``: a
parcel-sorting hall, 57 categorical inputs of 4 values; an orchard, 60 inputs of 8 values and
a real temperature) and smaller sorting halls of n segments built the same way, each compiled
to a step network, checked against its own rules (equal) and against the rules with one
literal changed (different).  From one run it prints, per network and check: the typed SAT
time (:func:`thresholdc.verification.sat.typed.verify_typed_sat`), the enumeration of every valid
assignment (:func:`thresholdc.verification.typed.verify_typed` with a large ``max_inputs``; only
where the domain has at most 2^24 points) and the branch-and-bound the earlier ``auto`` used
on these domains (:func:`thresholdc.verification.bounds.verify_bounds`, stopped at ``--limit``
seconds: shown as ``> limit``), and the ratios to the SAT time, with each method's verdicts.
Not a timed test.

    python3 benchmarks/verify_typed_bench.py [--limit 20] [--sizes 6,8,10]
"""

from __future__ import annotations

import argparse
import math
import time
from pathlib import Path

from thresholdc.compiler import compile_source
from thresholdc.logic.source import source_from_text
from thresholdc.verification.bounds import verify_bounds
from thresholdc.verification.domain import typed_domain
from thresholdc.verification.sat.typed import verify_typed_sat
from thresholdc.verification.typed import verify_typed

FIXTURES = Path(__file__).resolve().parent.parent / "tests" / "verify" / "fixtures"
STATES = ("clear", "busy", "jammed", "offline")


def hall(n: int) -> str:
    """A sorting hall of n segments (the fixture's rules, scaled down)."""
    segs = [f"seg{i:02d}" for i in range(1, n + 1)]
    half = n // 2
    lines = [f"input {s}: {{{', '.join(STATES)}}}" for s in segs]
    lines += [
        "jam_north = atleast(2, " + ", ".join(f"{s} == jammed" for s in segs[:half]) + ")",
        "jam_south = atleast(2, " + ", ".join(f"{s} == jammed" for s in segs[half:]) + ")",
        "reroute_north = jam_north and not jam_south",
        "slow_intake = atleast(2, " + ", ".join(f"{s} in {{busy, jammed}}" for s in segs[::2])
        + ")",
        "call_crew = " + " or ".join(f"{s} == offline" for s in segs[half:]),
    ]
    return "\n".join(lines) + "\n"


def timed(fn):
    t0 = time.perf_counter()
    out = fn()
    return out, time.perf_counter() - t0


def verdicts(report) -> str:
    v = [o.verdict[0] for o in report.outputs]  # e / d / u per output
    return "".join(v)


def row(name: str, net, src, limit: float) -> None:
    domain = typed_domain(net, src)
    size = domain.size
    sat, t_sat = timed(lambda: verify_typed_sat(net, src, time_limit=limit))
    if size <= 1 << 24:
        en, t_en = timed(lambda: verify_typed(net, src, max_inputs=24))
        en_text = f"{t_en:9.3f} s {t_en / t_sat:8.1f}x  {verdicts(en)}"
    else:
        points = f"(2^{round(math.log2(size))} points)"
        en_text = f"{points:>13} {'-':>9}  -"
    bb, t_bb = timed(lambda: verify_bounds(net, src, time_limit=limit))
    stopped = any(o.verdict == "undecided" for o in bb.outputs)
    bb_time = f"> {limit:g} s" if stopped else f"{t_bb:.3f} s"
    bb_ratio = f"> {limit / t_sat:.0f}x" if stopped else f"{t_bb / t_sat:.1f}x"
    print(f"{name:28s} {t_sat:8.3f} s  {verdicts(sat):6s} {en_text:32s} "
          f"{bb_time:>10s} {bb_ratio:>9s}  {verdicts(bb)}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--limit", type=float, default=20.0, help="seconds for each old method")
    ap.add_argument("--sizes", default="6,8,10,12", help="segments of the smaller halls")
    args = ap.parse_args()
    cases = [(f"hall of {n} segments", hall(n), ("seg01 == jammed", "seg01 == busy"))
             for n in map(int, args.sizes.split(","))]
    cases.append(("sorting_hall.rules (57x4)", (FIXTURES / "sorting_hall.rules").read_text(),
                  ("seg05 == jammed", "seg05 == busy")))
    cases.append(("orchard_plots.rules (60x8+r)",
                  (FIXTURES / "orchard_plots.rules").read_text(),
                  ("plot05 == ripe", "plot05 == blush")))
    print("verdicts per output: e equal, d different, u undecided; ratios are old / SAT")
    print(f"{'network / check':28s} {'typed SAT':>10s}  {'':6s} {'enumeration':>11s} "
          f"{'ratio':>9s}  {'':4s}   {'bounds':>10s} {'ratio':>9s}")
    for name, text, (old, new) in cases:
        src = source_from_text(text, "bench.rules")
        t0 = time.perf_counter()
        net = compile_source(src, verify="none").network
        t_c = time.perf_counter() - t0
        print(f"-- {name}: {len(net.neurons)} neurons, compiled in {t_c:.3f} s")
        row("  against its rules", net, src, args.limit)
        row("  one literal changed", net,
            source_from_text(text.replace(old, new, 1), "w.rules"), args.limit)


if __name__ == "__main__":
    main()

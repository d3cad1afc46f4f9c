"""Arithmetic circuits and random rule sets: compile, verify, and SAT solve times per back end.

Generates n-bit ripple-carry adders, n×n array multipliers (NOR full adders, about 2,400
gates at 16×16), comparators, parity trees (``benchmarks/gen_circuits.py``) and random rule
sets, and prints one table from one run with, per circuit:

* gates in the input (logic gates, inverters and buffers not counted) and inputs;
* neurons after mapping alone (``synthesis=False``) and their ratio to the gates;
* neurons and depth after synthesis (the default compile), compile time, the time and method
  of the default verification (``auto``: exhaustive up to 24 inputs, else local, then SAT);
* the time of our SAT check of the synthesised network (``verify --method sat``);
* the solve time of the gate-for-gate miter (the mapping-only network against its source):
  ours (``verify_sat``: hashing, matching on small cuts, then the solver) beside each
  python-sat back end on the plain miter (no hashing, no sweeping), with the ratio to ours;
  ``>T`` marks a solve stopped at the time limit.

Not a timed test.  Usage::

    python3 benchmarks/circuits_bench.py [--quick] [--limit 20] [--solvers cadical195,kissat404]
"""

from __future__ import annotations

import argparse
import pathlib
import sys
import time

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))

import gen_circuits as gc  # noqa: E402

from thresholdc.compiler import compile_source  # noqa: E402
from thresholdc.logic.source import source_from_text  # noqa: E402
from thresholdc.verification.sat import network_side, source_side, verify_sat  # noqa: E402
from thresholdc.verification.sat.miter import available_solvers, prove_equivalent  # noqa: E402


def circuits(quick: bool) -> list[tuple[str, str, str]]:
    """(name, file name, text) of every benchmark circuit."""
    out = []
    adders = (8, 32) if quick else (8, 32, 64)
    mults = (4, 8) if quick else (4, 8, 12, 16)
    comps = (16,) if quick else (16, 64)
    pars = (16, 64) if quick else (16, 64, 256)
    for n in adders:
        out.append((f"adder{n}", f"adder{n}.bench", gc.adder(n)))
    for n in mults:
        out.append((f"mult{n}x{n}", f"mult{n}.bench", gc.multiplier(n)))
    for n in comps:
        out.append((f"compare{n}", f"compare{n}.bench", gc.comparator(n)))
    for n in pars:
        out.append((f"parity{n}", f"parity{n}.bench", gc.parity(n)))
    for seed in (1, 2) if quick else (1, 2, 3):
        out.append((f"rules{seed}", f"rules{seed}.rules", gc.random_rules(seed, 30, 40)))
    return out


def timed(fn, *args, **kw):
    t0 = time.perf_counter()
    value = fn(*args, **kw)
    return value, time.perf_counter() - t0


def fmt(seconds: float | None, status: str = "equal", limit: float = 0.0) -> str:
    if seconds is None:
        return "-"
    if status != "equal":
        return f">{limit:g}" if status == "undecided" else "DIFF"
    return f"{seconds:.3f}"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="smaller circuits only")
    ap.add_argument("--limit", type=float, default=20.0, help="time limit per raw SAT solve")
    ap.add_argument("--solvers", default="", help="comma-separated back ends (default: all)")
    args = ap.parse_args()
    solvers = [s for s in args.solvers.split(",") if s] or available_solvers()
    head = ["circuit", "in", "gates", "mapped", "ratio", "synth", "ratio", "depth",
            "compile s", "verify s", "method", "sat(synth) s", "gfg ours s"] + solvers
    print("  ".join(head))
    totals = {"gates": 0, "mapped": 0, "synth": 0}
    slowest = (0.0, "")
    for name, file, text in circuits(args.quick):
        src = source_from_text(text, file)
        gates = src.gates().logic_gates()
        mapped = compile_source(src, synthesis=False, verify="none").network
        result, wall = timed(compile_source, src)
        net = result.network
        report = result.report
        total = result.seconds.get("compile", 0.0) + result.seconds.get("verify", 0.0)
        if total > slowest[0]:
            slowest = (total, name)
        sat_synth, t_synth = timed(verify_sat, net, src, time_limit=args.limit)
        ours, t_ours = timed(verify_sat, mapped, src, time_limit=args.limit)
        raw = []
        for s in solvers:
            out, t = timed(prove_equivalent, src.inputs, src.outputs, source_side(src),
                           network_side(mapped), time_limit=args.limit, solver=s,
                           sweep=False, share=False)
            ratio = f" ({t / max(t_ours, 1e-6):.1f}x)" if out.status == "equal" else ""
            raw.append(fmt(t, out.status, args.limit) + ratio)
        totals["gates"] += gates
        totals["mapped"] += len(mapped.neurons)
        totals["synth"] += len(net.neurons)
        row = [
            name, str(len(src.inputs)), str(gates), str(len(mapped.neurons)),
            f"{len(mapped.neurons) / max(gates, 1):.2f}", str(len(net.neurons)),
            f"{len(net.neurons) / max(gates, 1):.2f}", str(net.depth),
            f"{result.seconds.get('compile', 0.0):.3f}",
            f"{result.seconds.get('verify', 0.0):.3f}",
            f"{report.method}:{report.result}" if report else "-",
            fmt(t_synth, sat_synth.result, args.limit),
            fmt(t_ours, ours.result, args.limit),
        ] + raw
        print("  ".join(row), flush=True)
    g = max(totals["gates"], 1)
    print(f"total gates {totals['gates']}, mapped {totals['mapped']} "
          f"({totals['mapped'] / g:.2f} per gate), synthesised {totals['synth']} "
          f"({totals['synth'] / g:.2f} per gate); slowest compile+verify: {slowest[1]} "
          f"{slowest[0]:.2f} s")


if __name__ == "__main__":
    main()

"""Synthesis ratio and compile/verify times over a folder of ISCAS-style ``.bench`` netlists.

Per circuit: logic gates (inverters and buffers not counted), the baseline of one neuron per
non-inverter gate with XOR/XNOR counted 2 (a two-layer construction each), the neurons after
synthesis, their ratio to the baseline, depth, compile time and the time of the default
verification (``auto``) as the compiler measures them (wall clock), and the CPU time of the
whole compile (``time.process_time``, which a machine shared with other work does not
inflate); then the totals and the total ratio, with the load average before and after.
The netlists are not shipped; point the script at a folder of them (or, without one, it
uses the generated circuits of benchmarks/gen_circuits.py).

    python3 benchmarks/iscas_bench.py [FOLDER] [--verify auto|none]
"""

from __future__ import annotations

import argparse
import os
import pathlib
import sys
import time

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))

import gen_circuits as gc  # noqa: E402

from thresholdc.compiler import compile_source  # noqa: E402
from thresholdc.logic import source_from_text  # noqa: E402

FREE = ("input", "const", "buf", "not")


def baseline(source) -> tuple[int, int]:
    """(logic gates, neurons of the one-neuron-per-gate baseline, XOR/XNOR counted 2)."""
    ops = [g.op for g in source.netlist.gates.values() if g.op not in FREE]
    return len(ops), sum(2 if op in ("xor", "xnor") else 1 for op in ops)


def _key(path: pathlib.Path) -> tuple[int, str]:
    digits = "".join(ch for ch in path.stem if ch.isdigit())
    return (int(digits) if digits else 0, path.name)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("folder", nargs="?")
    ap.add_argument("--verify", default="auto")
    args = ap.parse_args()
    if args.folder:
        cases = [(p.name, p.read_text()) for p in sorted(pathlib.Path(args.folder).glob(
            "*.bench"), key=_key)]
    else:
        cases = [("mult16.bench", gc.multiplier(16)), ("add64.bench", gc.adder(64)),
                 ("compare64.bench", gc.comparator(64)), ("parity256.bench", gc.parity(256))]
    print("load average (1, 5, 15 min): " + " ".join(f"{x:.2f}" for x in os.getloadavg()))
    print(f"{'circuit':14s} {'gates':>6s} {'baseline':>8s} {'neurons':>7s} {'ratio':>6s} "
          f"{'depth':>5s} {'compile s':>9s} {'verify s':>8s} {'cpu s':>6s}  method/result")
    tot_base = tot_neurons = 0
    tot_c = tot_v = tot_cpu = 0.0
    for name, text in cases:
        source = source_from_text(text, name)
        gates, base = baseline(source)
        cpu = time.process_time()
        res = compile_source(source, verify=args.verify)
        cpu = time.process_time() - cpu
        net = res.network
        method = res.report.method + "/" + res.report.result if res.report else "none"
        c, v = res.seconds.get("compile", 0.0), res.seconds.get("verify", 0.0)
        print(f"{name:14s} {gates:6d} {base:8d} {len(net.neurons):7d} "
              f"{len(net.neurons) / base:6.3f} {net.depth:5d} {c:9.2f} {v:8.2f} {cpu:6.2f}  "
              f"{method}")
        tot_base += base
        tot_neurons += len(net.neurons)
        tot_c += c
        tot_v += v
        tot_cpu += cpu
    print(f"{'total':14s} {'':6s} {tot_base:8d} {tot_neurons:7d} {tot_neurons / tot_base:6.3f} "
          f"{'':5s} {tot_c:9.2f} {tot_v:8.2f} {tot_cpu:6.2f}")
    print("load average (1, 5, 15 min): " + " ".join(f"{x:.2f}" for x in os.getloadavg()))


if __name__ == "__main__":
    main()

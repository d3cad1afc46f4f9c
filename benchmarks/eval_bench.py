"""Rows per second and peak memory of step-network evaluation: the bit-sliced, chunked
``Network.decide`` beside the one-sparse-product-per-layer float evaluator of the same network
(``Network.run_units`` on all rows at once, what ``decide`` was before), from one run.

    python3 benchmarks/eval_bench.py [FILE.bench ...] [--rows 65536]

Without files it uses generated circuits (benchmarks/gen_circuits.py): a 16x16 multiplier and
a 64-bit adder.  Memory is the peak of Python allocations (tracemalloc) during the call;
times are CPU seconds of this process (``time.process_time``), since the machine is shared and
both evaluators run on one thread.

A second table gives exhaustive verification (``verify_exhaustive``, every assignment, against
the reference evaluator) on the float path it used before beside the bit path, in rows/s, on
netlists of at most 20 inputs (``--verify-inputs``): a 8x8 multiplier and a 10-bit adder.
"""

from __future__ import annotations

import argparse
import dataclasses
import pathlib
import sys
import time
import tracemalloc

import numpy as np

sys.path.insert(0, str(pathlib.Path(__file__).parent))
import gen_circuits  # noqa: E402

from thresholdc.compiler import compile_source  # noqa: E402
from thresholdc.logic import source_from_text  # noqa: E402
from thresholdc.verification.exhaustive import verify_exhaustive  # noqa: E402


def _measure(fn, X):
    """Output, CPU seconds (untraced run) and peak traced bytes (a second, traced run)."""
    t = time.process_time()
    out = fn(X)
    seconds = time.process_time() - t
    tracemalloc.start()
    fn(X)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return out, seconds, peak


def _old_decide(net):
    def run(X):
        _, V = net.run_units(X)
        return (V[net._output_rows] > net.decision_threshold).T
    return run


def bench(name: str, text: str, rows: int) -> None:
    net = compile_source(source_from_text(text, name), verify="none").network
    rng = np.random.default_rng(1)
    X = rng.integers(0, 2, size=(rows, len(net.inputs))).astype(float)
    net.decide(X[:64])  # build both plans outside the timing
    net.run_units(X[:64])
    new, t_new, m_new = _measure(net.decide, X)
    old, t_old, m_old = _measure(_old_decide(net), X)
    assert np.array_equal(new, old)
    print(f"{name:14s} {len(net.neurons):6d} {rows:8d} {rows / t_old:12.0f} {rows / t_new:12.0f}"
          f" {t_old / t_new:7.1f}x {m_old / 2**20:9.1f} {m_new / 2**20:9.1f}")


def _float_only(net):
    """A copy of ``net`` whose bit plan is switched off (the float path, as before)."""
    copy = dataclasses.replace(net)
    copy.__dict__["_bit_plan"] = None  # the cached property's slot
    return copy


def bench_verify(name: str, text: str) -> None:
    src = source_from_text(text, name)
    net = compile_source(src, verify="none").network
    rows = 1 << len(net.inputs)
    old_net = _float_only(net)
    t = time.process_time()
    old = verify_exhaustive(old_net, src)
    t_old = time.process_time() - t
    t = time.process_time()
    new = verify_exhaustive(net, src)
    t_new = time.process_time() - t
    assert old.to_dict()["outputs"] == new.to_dict()["outputs"]
    print(f"{name:14s} {len(net.neurons):6d} {rows:8d} {rows / t_old:12.0f} {rows / t_new:12.0f}"
          f" {t_old / t_new:7.1f}x  {new.result}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("files", nargs="*")
    ap.add_argument("--rows", type=int, default=65536)
    args = ap.parse_args()
    cases = [(pathlib.Path(f).name, pathlib.Path(f).read_text()) for f in args.files]
    if not cases:
        cases = [("mult16.bench", gen_circuits.multiplier(16)),
                 ("add64.bench", gen_circuits.adder(64))]
    print(f"{'circuit':14s} {'neurons':>6s} {'rows':>8s} {'float rows/s':>12s} "
          f"{'bits rows/s':>12s} {'ratio':>8s} {'float MB':>9s} {'bits MB':>9s}")
    for name, text in cases:
        bench(name, text, args.rows)
    print("\nexhaustive verification (verify_exhaustive, reference evaluator included)")
    print(f"{'circuit':14s} {'neurons':>6s} {'rows':>8s} {'float rows/s':>12s} "
          f"{'bits rows/s':>12s} {'ratio':>8s}  result")
    for name, text in [("mult8.bench", gen_circuits.multiplier(8)),
                       ("add10.bench", gen_circuits.adder(10))]:
        bench_verify(name, text)


if __name__ == "__main__":
    main()

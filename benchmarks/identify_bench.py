"""Benchmark: classify every Boolean function of 4 variables (65,536 truth tables).

Ours: ``thresholdc.synth.identify.identify`` on every table with empty caches (exact filters,
an LP per class of functions equal up to permuting and negating inputs, exact minimal
weights).  Peer, from the same run: a plain LP feasibility check (``scipy.optimize.linprog``,
HiGHS) on every function's full truth table, which only decides threshold-ness and finds no
minimal weights.  The peer is slow, so by default it runs on a random sample and its time is
scaled to all 65,536 functions (``--full`` runs it on every function).

Run: ``python benchmarks/identify_bench.py [--sample N | --full] [--variables N]``
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np
from scipy.optimize import linprog

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from thresholdc.synth import identify as ident  # noqa: E402


def all_tables(n: int) -> np.ndarray:
    """Every truth table of n variables as rows of 0/1 (uint8)."""
    size = 1 << n
    F = np.arange(1 << size, dtype=np.int64)
    return ((F[:, None] >> np.arange(size)) & 1).astype(np.uint8)


def lp_is_threshold(table: np.ndarray, X: np.ndarray) -> bool:
    """The peer: is there (w, T) with w·x ≥ T on true points and w·x ≤ T - 1 on false ones?"""
    true = table.astype(bool)
    A = np.vstack([np.hstack([-X[true], np.ones((true.sum(), 1))]),
                   np.hstack([X[~true], -np.ones(((~true).sum(), 1))])])
    b = np.r_[np.zeros(true.sum()), -np.ones((~true).sum())]
    res = linprog(np.zeros(X.shape[1] + 1), A_ub=A, b_ub=b,
                  bounds=[(None, None)] * (X.shape[1] + 1), method="highs")
    return res.status == 0


def progress(items, total: int, label: str):
    """A tqdm bar on a terminal (when tqdm is installed); the plain iterable otherwise."""
    if sys.stderr.isatty():
        try:
            from tqdm import tqdm
        except ImportError:
            return items
        return tqdm(items, total=total, desc=label, leave=False)
    return items


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--variables", type=int, default=4, help="n (default 4: 65,536 functions)")
    ap.add_argument("--sample", type=int, default=2048, help="peer sample size (default 2048)")
    ap.add_argument("--full", action="store_true", help="run the peer on every function")
    args = ap.parse_args(argv)

    n = args.variables
    tables = all_tables(n)
    total = len(tables)
    ident.identify([0, 1])  # import scipy.optimize once, outside both timings
    ident._clear_caches()

    t0 = time.perf_counter()
    ours = [ident.identify(row) for row in tables]
    t_ours = time.perf_counter() - t0
    found = sum(r is not None for r in ours)

    t0 = time.perf_counter()
    for row in tables:
        ident.identify(row)
    t_warm = time.perf_counter() - t0

    rng = np.random.default_rng(0)
    picked = np.arange(total) if args.full or args.sample >= total else np.sort(
        rng.choice(total, size=args.sample, replace=False))
    X = ((np.arange(1 << n)[:, None] >> np.arange(n)) & 1).astype(float)
    t0 = time.perf_counter()
    peer = [lp_is_threshold(tables[k], X) for k in progress(picked, len(picked), "peer LP")]
    t_peer = time.perf_counter() - t0
    t_peer_all = t_peer * total / len(picked)
    agree = sum(p == (ours[k] is not None) for p, k in zip(peer, picked, strict=True))
    scaled = "" if len(picked) == total else f" (sampled {len(picked):,}, scaled)"

    print(f"Classifying all {total:,} Boolean functions of {n} variables")
    print(f"  ours  identify, empty caches       {t_ours:8.2f} s   "
          f"{found} threshold functions, minimal weights included")
    print(f"  ours  identify, warm caches        {t_warm:8.2f} s")
    print(f"  peer  linprog feasibility per fn   {t_peer_all:8.2f} s{scaled}")
    print(f"  ratio peer / ours                  {t_peer_all / t_ours:8.1f} x")
    print(f"  peer and ours agree on threshold-ness for {agree:,} of {len(picked):,} "
          "functions checked")
    return 0 if agree == len(picked) else 1


if __name__ == "__main__":
    raise SystemExit(main())

"""Certified sigmoid gains against a fixed weight of 4, as AND fan-in and depth grow.

The peer setting is the knowledge-based network initialisation of Towell & Shavlik (1994),
recalled from memory: every weight is ±ω with ω = 4 and an AND of p positive literals has bias
−(p − ½)ω.  On our integer networks (weights 1, bias −(p − ½)) that is exactly a fixed gain of 4,
so it is built with ``apply_activation(net, activation="sigmoid", gain=4.0)``.  Ours is
``apply_activation(net, activation="sigmoid", tolerance=0.01)``.

Two families of AND networks of fan-in p and depth d:

- tree: every AND reads p ANDs of the level below (p**d inputs; its soft fan-in is p);
- chain: AND_1 reads p inputs, AND_k reads AND_{k-1} and p − 1 fresh inputs.

Worst-case output error, measured with the network evaluator: all weights are positive, so the
output rises with every input; the worst true row is the all-ones row and the worst false rows
are those with exactly one 0 (all such rows in a chain; one, by symmetry, in a tree).  The
script checks that shortcut against exhaustive enumeration wherever the inputs are ≤ 16.

Run: ``python benchmarks/gains_bench.py`` (about a minute on 2 cores).
"""

from __future__ import annotations

import argparse
import itertools
import time

import numpy as np

from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.network.soften import apply_activation

OMEGA = 4.0  # Towell & Shavlik 1994 (from memory)
EPS = 0.01


def and_tree(p: int, d: int) -> Network:
    """A complete p-ary tree of ANDs of depth d (weights 1, bias −(p − ½))."""
    level = [f"x{i}" for i in range(p**d)]
    inputs = tuple(level)
    neurons = []
    for k in range(1, d + 1):
        nxt = []
        for j in range(len(level) // p):
            name = f"a{k}_{j}"
            neurons.append(Neuron(name, k, tuple(level[j * p:(j + 1) * p]), (1.0,) * p,
                                  -(p - 0.5), origin="y"))
            nxt.append(name)
        level = nxt
    return Network(inputs, tuple(neurons), (Output("y", level[0]),))


def and_chain(p: int, d: int) -> Network:
    """AND_1 over p inputs; AND_k over AND_{k-1} and p − 1 fresh inputs."""
    inputs = [f"x{i}" for i in range(p)]
    neurons = [Neuron("a1", 1, tuple(inputs), (1.0,) * p, -(p - 0.5), origin="y")]
    for k in range(2, d + 1):
        fresh = [f"x{len(inputs) + i}" for i in range(p - 1)]
        inputs += fresh
        neurons.append(Neuron(f"a{k}", k, (f"a{k - 1}", *fresh), (1.0,) * p, -(p - 0.5),
                              origin="y"))
    return Network(tuple(inputs), tuple(neurons), (Output("y", f"a{d}"),))


def worst_rows(net: Network, symmetric: bool) -> tuple[np.ndarray, np.ndarray]:
    """The all-ones row and the one-zero rows (only the first one when ``symmetric``)."""
    n = len(net.inputs)
    zeros = 1 if symmetric else n
    X = np.ones((zeros + 1, n))
    X[np.arange(1, zeros + 1), np.arange(zeros)] = 0.0
    y = np.zeros(zeros + 1)
    y[0] = 1.0
    return X, y


def worst_error(net: Network, X: np.ndarray, y: np.ndarray) -> float:
    """Largest |output − truth| over the rows."""
    return float(np.abs(net.evaluate(X)[:, 0] - y).max())


def exhaustive_error(step: Network, soft: Network) -> float:
    """Largest |output − step output| over every input row."""
    X = np.array(list(itertools.product([0.0, 1.0], repeat=len(step.inputs))))
    return float(np.abs(soft.evaluate(X) - step.evaluate(X)).max())


def measure(net: Network, symmetric: bool) -> dict[str, float]:
    """Figures of the fixed-weight peer and of our certified gains on one network."""
    X, y = worst_rows(net, symmetric)
    peer = apply_activation(net, activation="sigmoid", gain=OMEGA)
    t0 = time.perf_counter()
    ours = apply_activation(net, activation="sigmoid", tolerance=EPS)
    seconds = time.perf_counter() - t0
    row = {
        "peer_err": worst_error(peer, X, y),
        "peer_bound": peer.meta["certificate"]["bound"],
        "our_err": worst_error(ours, X, y),
        "our_bound": ours.meta["certificate"]["bound"],
        "gain": max(e["gain"] for e in ours.meta["certificate"]["neurons"].values()),
        "seconds": seconds,
        "neurons": len(net.neurons),
    }
    if len(net.inputs) <= 16:  # check the monotone shortcut against every row
        assert abs(exhaustive_error(net, peer) - row["peer_err"]) < 1e-12
        assert abs(exhaustive_error(net, ours) - row["our_err"]) < 1e-12
    return row


def table(title: str, build, fanins: range, depths: range, symmetric: bool) -> None:
    """Print one table: a row per (fan-in, depth)."""
    print(f"\n{title}")
    head = (f"{'p':>3} {'d':>2} {'neurons':>8} | "
            f"{'w=4 error':>10} {'w=4 bound':>10} {'reads':>6} | "
            f"{'our error':>10} {'our bound':>10} {'max gain':>9} {'certify s':>10} | "
            f"{'error ratio':>11}")
    print(head)
    print("-" * len(head))
    for p in fanins:
        for d in depths:
            if symmetric and p**d > 200_000:
                continue
            r = measure(build(p, d), symmetric)
            ratio = r["peer_err"] / r["our_err"] if r["our_err"] > 0 else float("inf")
            print(f"{p:>3} {d:>2} {r['neurons']:>8} | {r['peer_err']:>10.4f} "
                  f"{r['peer_bound']:>10.4f} {'right' if r['peer_err'] < 0.5 else 'WRONG':>6} | "
                  f"{r['our_err']:>10.5f} {r['our_bound']:>10.5f} "
                  f"{r['gain']:>9.3f} {r['seconds']:>10.4f} | {ratio:>10.1f}x")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--max-fanin", type=int, default=10)
    parser.add_argument("--max-depth", type=int, default=5)
    args = parser.parse_args()
    fanins = range(2, args.max_fanin + 1)
    depths = range(1, args.max_depth + 1)
    print(f"fixed weight w = {OMEGA:g} (Towell & Shavlik 1994, from memory) against certified "
          f"gains at EPS = {EPS} (ours);")
    print("error = the worst |output - truth| over all inputs (measured with the evaluator);")
    print("bound = the certified deviation propagated for that setting;")
    print("reads = whether every output is still read right (error < 0.5); certify s = our")
    print("time to derive and certify the gains, margins enumerated up to 20 inputs.")
    table("chain of ANDs: AND_k reads AND_{k-1} and p-1 fresh inputs", and_chain, fanins,
          depths, symmetric=False)
    table("tree of ANDs: every AND reads p ANDs of the level below (skipped above 200000 "
          "inputs)", and_tree, fanins, depths, symmetric=True)


if __name__ == "__main__":
    main()

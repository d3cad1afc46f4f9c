"""Mutation testing of the verification core: every mutant that changes the function must be
caught by every method that claims a decision.

Mutants (a fixed list, in order): for each neuron of a compiled network, each weight +1 and -1,
the bias +1 and -1, each weight's sign flipped, and the whole neuron negated.  Circuits: the
bundled examples (``circuits/*.rules``) and netlists from ``benchmarks/gen_circuits.py``.  The
truth is the exhaustive truth table of the mutant against the source's reference evaluator
(rules) or netlist simulation, computed here independently of every verification method.

A method *claims* when it answers ``equal`` or ``different``; ``undecided`` or a refusal is no
claim.  Failures: a claim of ``equal`` on a changed mutant (a missed bug), or ``different`` on
an unchanged one (a false alarm).  The score per method is caught / changed mutants it claimed.

    python3 benchmarks/mutate_verify.py                   # every mutant (a few minutes)
    python3 benchmarks/mutate_verify.py --every 25        # one mutant in 25 (CI-sized)

Exit status 0 when no method failed, 1 otherwise.
"""

from __future__ import annotations

import argparse
import sys
import time
from collections import Counter
from dataclasses import replace
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

import gen_circuits as gc  # noqa: E402

from thresholdc.compiler import compile_source  # noqa: E402
from thresholdc.errors import ThresholdcError  # noqa: E402
from thresholdc.ir.network import Network  # noqa: E402
from thresholdc.ir.reference import Reference  # noqa: E402
from thresholdc.logic import load_source, source_from_text  # noqa: E402
from thresholdc.verification import verify_network  # noqa: E402

METHODS = ("exhaustive", "sat", "local", "bounds", "auto")


#: Examples with more input units than this are left out (every mutant is decided exhaustively).
MAX_INPUTS = 16


def circuits() -> list[tuple[str, Reference]]:
    """The bundled examples and a few generated netlists whose truth tables are small enough
    to decide every mutant exactly (at most ``MAX_INPUTS`` input units; larger examples, such
    as the typed refinement scenario, are left out)."""
    out = []
    for p in sorted((ROOT / "circuits").glob("*.rules")):
        source = load_source(str(p))
        if len(compile_source(source).network.inputs) <= MAX_INPUTS:
            out.append((p.name, source))
    for name, text in (("adder3.bench", gc.adder(3)), ("comparator4.bench", gc.comparator(4)),
                       ("multiplier3.bench", gc.multiplier(3)), ("parity7.bench", gc.parity(7))):
        out.append((name, source_from_text(text, name)))
    return out


def mutants(net: Network):
    """(label, mutated network) for the fixed list of neuron mutations, in order."""
    for k, n in enumerate(net.neurons):
        def put(new, k=k):
            return replace(net, neurons=(*net.neurons[:k], new, *net.neurons[k + 1:]))

        for i, w in enumerate(n.weights):
            for d in (1, -1):
                ws = list(n.weights)
                ws[i] = w + d
                yield f"{n.name}.w[{i}]{d:+d}", put(replace(n, weights=tuple(ws)))
        for d in (1, -1):
            yield f"{n.name}.bias{d:+d}", put(replace(n, bias=n.bias + d))
        for i, w in enumerate(n.weights):
            if w != 0:
                ws = list(n.weights)
                ws[i] = -w
                yield f"{n.name}.w[{i}] sign", put(replace(n, weights=tuple(ws)))
        yield f"{n.name} negated", put(replace(n, weights=tuple(-w for w in n.weights),
                                               bias=-n.bias))


def truth_table(n: int) -> np.ndarray:
    rows = np.arange(2**n, dtype=np.int64)
    return ((rows[:, None] >> np.arange(n - 1, -1, -1)) & 1).astype(np.int8)


def changes_function(net: Network, source: Reference, X: np.ndarray, expected: np.ndarray) -> bool:
    return not np.array_equal(net.decide(X), expected)


def claim(net: Network, source: Reference, method: str, time_limit: float) -> str:
    """``equal``, ``different``, or ``none`` (undecided or refused)."""
    try:
        result = verify_network(net, source, method=method, time_limit=time_limit).result
    except ThresholdcError:
        return "none"
    return result if result in ("equal", "different") else "none"


def run(every: int = 1, methods: tuple[str, ...] = METHODS, time_limit: float = 30.0,
        out=sys.stdout) -> dict[str, Counter]:
    """Run the campaign (every ``every``-th mutant); return the counts per method."""
    score: dict[str, Counter] = {m: Counter() for m in methods}
    index = 0
    for name, source in circuits():
        net = compile_source(source).network
        X = truth_table(len(net.inputs))
        expected = source.evaluate(X)
        assert np.array_equal(net.decide(X), expected), f"{name}: the compiled network is wrong"
        for label, mutant in mutants(net):
            index += 1
            if (index - 1) % every:
                continue
            changed = changes_function(mutant, source, X, expected)
            for m in methods:
                c = score[m]
                said = claim(mutant, source, m, time_limit)
                c["mutants"] += 1
                c["changed"] += changed
                if said == "none":
                    c["no claim"] += 1
                elif changed and said == "equal":
                    c["missed"] += 1
                    out.write(f"FAIL {m}: {name} {label}: changed but claimed equal\n")
                elif not changed and said == "different":
                    c["false alarm"] += 1
                    out.write(f"FAIL {m}: {name} {label}: unchanged but claimed different\n")
                elif changed:
                    c["caught"] += 1
    return score


def failures(score: dict[str, Counter]) -> int:
    return sum(c["missed"] + c["false alarm"] for c in score.values())


def report(score: dict[str, Counter], out=sys.stdout) -> None:
    out.write(f"{'method':<11}{'mutants':>8}{'changed':>8}{'caught':>8}{'missed':>7}"
              f"{'false+':>7}{'no claim':>9}  score\n")
    for m, c in score.items():
        claimed_changed = c["caught"] + c["missed"]
        pct = 100.0 * c["caught"] / claimed_changed if claimed_changed else float("nan")
        out.write(f"{m:<11}{c['mutants']:>8}{c['changed']:>8}{c['caught']:>8}{c['missed']:>7}"
                  f"{c['false alarm']:>7}{c['no claim']:>9}  {pct:.1f}% of claimed changed\n")


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--every", type=int, default=1, help="run one mutant in N (default: all)")
    p.add_argument("--methods", default=",".join(METHODS), help="comma-separated methods")
    p.add_argument("--time-limit", type=float, default=30.0, help="seconds per SAT/local check")
    args = p.parse_args(argv)
    t0 = time.perf_counter()
    score = run(args.every, tuple(args.methods.split(",")), args.time_limit)
    report(score)
    print(f"{failures(score)} failure(s); {time.perf_counter() - t0:.1f} s")
    return 1 if failures(score) else 0


if __name__ == "__main__":
    sys.exit(main())

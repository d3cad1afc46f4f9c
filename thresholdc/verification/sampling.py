"""A quick seeded search for counterexamples by sampling valid inputs (finds ``different``).

Before the complete methods of :func:`~thresholdc.verification.trained.verify_trained` run,
valid assignments of the domain are drawn in batches and evaluated on the network and the
rules' reference evaluator at once (vectorised).  A trained network that has lost a rule is
usually wrong on many inputs, but not on uniformly drawn ones: a rule such as "at least six
of ten trays high" is almost never true under uniform draws.  So the batches cycle through
skewed draws as well: each discrete input takes one preferred value (its first, its last, or
one drawn at random per batch) with probability ``p`` (0.5 to 0.95) and any other value
otherwise; continuous inputs are uniform over their pieces.  Every disagreement found is a
real counterexample (both sides re-evaluated exactly); finding none proves nothing, so an
output without one is left to the complete methods.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> from thresholdc.verification.domain import typed_domain
>>> net = compile_rules("input k: {a, b, c}\\ny = k == a\\n")
>>> src = source_from_text("input k: {a, b, c}\\ny = k == b\\n")
>>> found = sample_counterexamples(net, src, typed_domain(net, src), rows=64)
>>> sorted(c.assignment["k"] for c in found[0])
['a', 'b']
"""

from __future__ import annotations

import time
from typing import Any

import numpy as np

from .. import progress as progress_bars
from ..ir.network import Network
from .domain import Domain, network_rows
from .report import MAX_COUNTEREXAMPLES, Counterexample

__all__ = ["sample_counterexamples", "DEFAULT_ROWS"]

#: Rows drawn by default (in batches of :data:`_BATCH`).
DEFAULT_ROWS = 100_000
_BATCH = 5_000
_SKEWS = (0.5, 0.7, 0.8, 0.9, 0.95)


def _draw(domain: Domain, rows: int, batch: int, rng: np.random.Generator
          ) -> tuple[np.ndarray, np.ndarray]:
    """Choice indices ``(rows, discrete)`` and reals ``(rows, continuous)`` of one batch."""
    mode = batch % 4  # uniform, first value, last value, a random value per input
    p = _SKEWS[batch % len(_SKEWS)]  # 4 and 5 coprime: every pair within 20 batches
    cols = []
    for f in domain.discrete:
        uniform = rng.integers(0, f.size, rows)
        if mode == 0 or f.size == 1:
            cols.append(uniform)
            continue
        pref = 0 if mode == 1 else f.size - 1 if mode == 2 else int(rng.integers(0, f.size))
        other = rng.integers(0, f.size - 1, rows)
        other = other + (other >= pref)  # any value but the preferred one
        cols.append(np.where(rng.random(rows) < p, pref, other))
    choice = (np.stack(cols, axis=1) if cols else np.zeros((rows, 0), dtype=np.int64))
    reals = np.zeros((rows, len(domain.continuous)))
    for k, c in enumerate(domain.continuous):
        ends = np.asarray(c.pieces, dtype=float).reshape(-1, 2)
        widths = ends[:, 1] - ends[:, 0]
        total = float(widths.sum())
        probs = widths / total if total > 0 else np.full(len(widths), 1.0 / len(widths))
        piece = rng.choice(len(ends), rows, p=probs)
        lo, hi = ends[piece, 0], ends[piece, 1]
        reals[:, k] = lo + rng.random(rows) * (hi - lo)
    return choice.astype(np.int64), reals


def sample_counterexamples(
    net: Network, source: Any, domain: Domain, *, rows: int = DEFAULT_ROWS,
    time_limit: float = 5.0, seed: int = 0, max_examples: int = MAX_COUNTEREXAMPLES,
    progress: bool | None = None,
) -> list[list[Counterexample]]:
    """Counterexamples per output of ``net`` (in the network's output order) among ``rows``
    seeded draws of valid inputs (see the module docstring); an empty list where none was
    found.  Stops early at ``time_limit`` seconds or when every output has ``max_examples``;
    ``progress`` shows a bar on a terminal (None: as the command line set it).

    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> from thresholdc.verification.domain import typed_domain
    >>> text = "input a, b\\ny = a and b\\n"
    >>> net = compile_rules(text)
    >>> sample_counterexamples(net, source_from_text(text), typed_domain(
    ...     net, source_from_text(text)), rows=32)
    [[]]
    """
    t0 = time.perf_counter()
    rng = np.random.default_rng(seed)
    out_index = [list(source.outputs).index(o.name) for o in net.outputs]
    thr = net.decision_threshold
    found: list[list[Counterexample]] = [[] for _ in net.outputs]
    seen: list[set[tuple]] = [set() for _ in net.outputs]
    batch = 0
    drawn = 0
    bar = progress_bars.bar(rows, "sampling", unit="row", show=progress)
    try:
        while drawn < rows and time.perf_counter() - t0 < time_limit:
            n = min(_BATCH, rows - drawn)
            choice, reals = _draw(domain, n, batch, rng)
            batch += 1
            drawn += n
            bar.update(n)
            X = domain.unit_rows(choice, reals if domain.continuous else None)
            Xn = network_rows(net, domain, X)
            actual = net.decide(Xn)
            expected = np.asarray(source.evaluate(X), dtype=bool)[:, out_index]
            wrong = actual != expected
            if not wrong.any():
                continue
            values = net.evaluate(Xn)
            for k in np.nonzero(wrong.any(axis=0))[0].tolist():
                for r in np.nonzero(wrong[:, k])[0].tolist():
                    if len(found[k]) >= max_examples:
                        break
                    key = (tuple(choice[r].tolist()), tuple(reals[r].tolist()))
                    if key in seen[k]:
                        continue
                    seen[k].add(key)
                    v = float(values[r, k])
                    found[k].append(Counterexample(
                        domain.assignment(choice[r], reals[r] if domain.continuous else None),
                        net.outputs[k].name, bool(expected[r, k]), v, abs(v - thr)))
            if all(len(f) >= max_examples for f in found):
                break
    finally:
        bar.close()
    return found

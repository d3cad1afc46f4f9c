"""Counterexamples cut down to the inputs that matter.

A counterexample fixes every input; usually a few of them already force the difference between
the network and the rules.  :func:`inputs_that_matter` frees inputs one at a time and keeps an
input freed when the difference holds on every value of the freed inputs (checked by
evaluating the network and the rules on all of them at once, vectorised).  Inputs outside the
structural support of the output (in the rules and in the network) are freed without a check.
Freeing more inputs only adds assignments, so once freeing an input breaks the difference it
breaks it for every larger freed set: the kept inputs are a minimal set (no single one of them
can be freed), unless the bound on freed inputs stopped the search (``complete`` is False).

>>> from thresholdc import compile_rules
>>> from thresholdc.logic import source_from_text
>>> src = source_from_text("input a, b, c, d\\ny = a and b\\n", "r.rules")
>>> net = compile_rules("input a, b, c, d\\ny = a or b\\n")
>>> inputs_that_matter(net, src, {"a": 1, "b": 0, "c": 1, "d": 0}, "y")
(['a', 'b'], True)
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from .logic import network_support, source_support

__all__ = ["inputs_that_matter", "describe_assignment", "MAX_FREE"]

#: The most inputs left free in one check (2^MAX_FREE rows per evaluation).
MAX_FREE = 12


def _differs_everywhere(network: Any, source: Any, x: np.ndarray, free: Sequence[int],
                        k_net: int, k_src: int) -> bool:
    """True when network and rules differ on output k for every value of the ``free`` units."""
    n_free = len(free)
    rows = np.repeat(x[None, :], 1 << n_free, axis=0)
    if n_free:
        codes = np.arange(1 << n_free)
        rows[:, list(free)] = (codes[:, None] >> np.arange(n_free)[None, :]) & 1
    expected = np.asarray(source.evaluate(rows), dtype=bool)[:, k_src]
    units = rows[:, network.input_index].astype(float)
    if network.encoding == "bipolar":
        units = 2.0 * units - 1.0
    actual = np.asarray(network.decide(units), dtype=bool)[:, k_net]
    return bool((actual != expected).all())


def inputs_that_matter(network: Any, source: Any, assignment: Mapping[str, Any], output: str,
                       *, max_free: int = MAX_FREE) -> tuple[list[str], bool] | None:
    """A minimal list of inputs (source order) whose values in ``assignment`` already force
    the network and the rules to differ on ``output``, and whether the search was complete.

    Returns None when the inputs are not all Boolean (typed inputs) or ``assignment`` does not
    give every input; the caller then shows the whole assignment.

    Parameters
    ----------
    network, source : Network, Source
        With the same input and output names (as ``verify`` checks).
    assignment : mapping
        Input name -> 0/1, a counterexample for ``output``.
    max_free : int
        The most inputs freed in one check.

    >>> from thresholdc import compile_rules
    >>> from thresholdc.logic import source_from_text
    >>> src = source_from_text("input a, b\\ny = a\\n", "r.rules")
    >>> net = compile_rules("input a, b\\ny = not a\\n")   # differs on every input
    >>> inputs_that_matter(net, src, {"a": 0, "b": 1}, "y")
    ([], True)
    """
    names = list(source.inputs)
    if source.program is not None and source.program.is_typed():
        return None
    if set(names) != set(network.inputs) or any(u not in assignment for u in names):
        return None
    if any(assignment[u] not in (0, 1) for u in names):
        return None
    x = np.array([int(assignment[u]) for u in names], dtype=np.int64)
    k_src = list(source.outputs).index(output)
    k_net = list(network.output_names).index(output)
    net_view = _NetworkView(network, names)
    if not _differs_everywhere(net_view, source, x, [], k_net, k_src):
        return None  # not a counterexample of this pair: show it as given
    support = source_support(source, output) | network_support(network, output)
    candidates = [i for i, u in enumerate(names) if u in support]
    free: list[int] = []
    complete = True
    for i in candidates:
        if len(free) >= max_free:
            complete = False
            break
        if _differs_everywhere(net_view, source, x, free + [i], k_net, k_src):
            free.append(i)
    kept = [names[i] for i in candidates if i not in free]
    return kept, complete


class _NetworkView:
    """A network with the column order of the source's inputs (``input_index``)."""

    def __init__(self, network: Any, names: Sequence[str]) -> None:
        position = {u: i for i, u in enumerate(names)}
        self.input_index = [position[u] for u in network.inputs]
        self.encoding = network.encoding
        self.decide = network.decide


def describe_assignment(assignment: Mapping[str, Any], kept: Sequence[str] | None) -> str:
    """``a=1 b=0 (and 37 other inputs, any value)``; every value when ``kept`` is None.

    >>> describe_assignment({"a": 1, "b": 0, "c": 1}, ["a"])
    'a=1 (and 2 other inputs, any value)'
    >>> describe_assignment({"a": 1, "b": 0}, None)
    'a=1 b=0'
    """
    if kept is None:
        return " ".join(f"{k}={v}" for k, v in assignment.items())
    shown = " ".join(f"{k}={assignment[k]}" for k in kept) or "any input values"
    rest = len(assignment) - len(kept)
    if rest and kept:
        word = "input" if rest == 1 else "inputs"
        shown += f" (and {rest} other {word}, any value)"
    return shown

"""``thresholdc table SOURCE``: the truth table of every output, from the reference evaluator
of a rule file or netlist, or from a network file's decisions (``.json``, ``.npz``, ``.onnx``:
``Network.decide``, bit-sliced and chunked for step networks).

Rows are made, evaluated and printed a chunk at a time, so memory stays bounded whatever the
number of rows; each chunk is formatted with numpy (no Python loop over rows).  The rules of
the table:

- one column per declared input: a Boolean input takes 0 then 1, a categorical input its values
  in declaration order; rows count up with the first input as the most significant digit;
- a real input has no finite set of values, so a table of it is refused (exit 2); so is a
  network with typed inputs (its rule file gives the table by feature);
- at most ``MAX_TABLE_ROWS`` rows are printed in one table (``--limit`` picks fewer).
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys
from typing import Any

import numpy as np

from ..errors import UsageError
from ..export import SUFFIXES, load_any
from ..ir.network import Network
from ..ir.reference import Reference
from ..logic import evaluate as evaluate_rules
from ..logic import load_source
from .common import add_parser, warn

__all__ = ["register", "run", "table_rows", "network_table", "MAX_TABLE_ROWS", "NetworkTable"]

#: The most rows one table prints (``--limit 0`` beyond this is refused with a clear message).
MAX_TABLE_ROWS = 1 << 24
_CHUNK = 1 << 16


def register(subparsers: Any) -> None:
    p = add_parser(
        subparsers,
        "table",
        description=(
            "Print the truth table of every output, computed from the rules directly (no "
            "network involved), or of a network file (.json, .npz, .onnx) from the network's "
            "decisions. Rows count up with the first input as the highest bit; a "
            "categorical input takes its values in declaration order. At most "
            f"{MAX_TABLE_ROWS} rows are printed."
        ),
        example="thresholdc table circuits/greenhouse.rules --limit 16",
    )
    p.add_argument("source", metavar="SOURCE",
                   help="rule file, .bench or .blif netlist, or a network file")
    p.add_argument("--limit", type=int, default=1024, metavar="N",
                   help="print at most N rows (default 1024; 0 for all)")
    p.add_argument("--json", action="store_true", help="print the table as JSON")


class NetworkTable:
    """A network file read as a table source: Boolean input units, its outputs' decisions.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),),
    ...               (Output("y", "y"),))
    >>> NetworkTable(net, "n.json").evaluate(np.array([[1, 1], [0, 1]])).ravel().tolist()
    [1, 0]
    """

    program = None

    def __init__(self, net: Network, file: str) -> None:
        if net.features is not None and any(f.get("kind") != "bool" for f in net.features):
            raise UsageError("this network has typed inputs (categorical or real): give its "
                             "rule file for a table by feature", file=file)
        self.net = net
        self.file = file
        self.inputs = net.inputs
        self.outputs = net.output_names

    def evaluate(self, X: np.ndarray) -> np.ndarray:
        """0/1 decisions ``(rows, outputs)`` for 0/1 rows of the input units (vectorised;
        step networks go through the bit-sliced path of :meth:`Network.decide`)."""
        Xn = X.astype(float)
        if self.net.encoding == "bipolar":
            Xn = 2.0 * Xn - 1.0
        return self.net.decide(Xn).astype(np.uint8)


def network_table(path: str) -> NetworkTable | None:
    """The table source of a network file, or ``None`` when ``path`` is not one (by suffix)."""
    if os.path.splitext(path)[1].lower() not in SUFFIXES:
        return None
    return NetworkTable(load_any(path), path)


def _columns(source: Reference) -> tuple[list[str], list[list[str]], list[bool]]:
    """The table's input columns, the values each takes (as printed) and which are Boolean."""
    program = source.program
    if program is None or not program.is_typed():
        n = len(source.inputs)
        return list(source.inputs), [["0", "1"]] * n, [True] * n
    names, values, boolean = [], [], []
    for var in program.inputs:
        if var.kind == "real":
            raise UsageError(
                f"input '{var.name}' is real: a truth table needs inputs with a finite set of "
                "values (Boolean or categorical)",
                file=source.file,
            )
        names.append(var.name)
        values.append(["0", "1"] if var.kind == "bool" else list(var.values or ()))
        boolean.append(var.kind == "bool")
    return names, values, boolean


def _digits(radices: list[int], start: int, stop: int) -> np.ndarray:
    """Rows ``start .. stop-1`` of the table as value indices (first column most significant)."""
    k = np.arange(start, stop, dtype=np.int64)
    X = np.empty((len(k), len(radices)), dtype=np.int64)
    for j in range(len(radices) - 1, -1, -1):  # one pass per column
        k, X[:, j] = np.divmod(k, radices[j])
    return X


def _evaluate(source: Reference, X: np.ndarray) -> np.ndarray:
    """Outputs ``(rows, outputs)`` as 0/1 for rows of value indices."""
    program = source.program
    if program is not None and program.is_typed():
        return evaluate_rules(program, X).astype(np.uint8)
    return np.asarray(source.evaluate(X.astype(np.uint8)), dtype=np.uint8)


def table_rows(source: Reference, limit: int) -> tuple[np.ndarray, np.ndarray, int]:
    """``(inputs, outputs, total)`` for the first ``limit`` rows (0: all), in memory at once.

    ``inputs`` holds value indices (0/1 for Boolean inputs).

    >>> from thresholdc.logic import source_from_text
    >>> src = source_from_text("input a, b\\ny = a and b\\n", "x.rules")
    >>> X, Y, total = table_rows(src, 0)
    >>> X.tolist(), Y.ravel().tolist(), total
    ([[0, 0], [0, 1], [1, 0], [1, 1]], [0, 0, 0, 1], 4)
    """
    _, values, _ = _columns(source)
    radices = [len(v) for v in values]
    total = math.prod(radices)
    shown = _shown(source, total, limit)
    X = _digits(radices, 0, shown)
    Y = _evaluate(source, X) if shown else np.zeros((0, len(source.outputs)), np.uint8)
    return X, Y, total


def _chunk(source: Reference, radices: list[int], start: int, stop: int) -> tuple[np.ndarray,
                                                                             np.ndarray]:
    """Rows ``start .. stop-1``: value indices and outputs (0/1), both int64."""
    X = _digits(radices, start, stop)
    return X, _evaluate(source, X).astype(np.int64)


def _shown(source: Reference, total: int, limit: int) -> int:
    """How many rows to print; refuses more than MAX_TABLE_ROWS."""
    shown = total if limit <= 0 else min(limit, total)
    if shown > MAX_TABLE_ROWS:
        raise UsageError(
            f"the table has {total} rows, more than the {MAX_TABLE_ROWS} one table prints; "
            "pass --limit N to print the first N rows",
            file=source.file,
        )
    return shown


def _cells(texts: list[str], *, right: bool) -> np.ndarray:
    """The cell texts of one column as a byte matrix, one row per value, padded to one width."""
    raw = [t.encode("utf-8") for t in texts]
    width = max(len(r) for r in raw)
    padded = [r.rjust(width) if right else r.ljust(width) for r in raw]
    return np.frombuffer(b"".join(padded), dtype=np.uint8).reshape(len(raw), width)


def _render(columns: list[np.ndarray], indices: list[np.ndarray], rows: int) -> str:
    """Row text from per-column byte matrices and per-row value indices (vectorised)."""
    line = sum(c.shape[1] for c in columns)
    out = np.empty((rows, line), dtype=np.uint8)
    at = 0
    for cells, idx in zip(columns, indices):
        out[:, at : at + cells.shape[1]] = cells[idx]
        at += cells.shape[1]
    return out.tobytes().decode("utf-8")


def run(args: argparse.Namespace) -> int:
    if args.limit < 0:
        raise UsageError(f"--limit must be 0 or more. Got {args.limit} instead.")
    source: Any = network_table(args.source) or load_source(args.source)
    names, values, boolean = _columns(source)
    outputs = list(source.outputs)
    radices = [len(v) for v in values]
    total = math.prod(radices)
    shown = _shown(source, total, args.limit)
    if source.program is not None and source.program.unused:
        warn(f"unused definition(s), not in the table: {', '.join(source.program.unused)}")
    # The first chunk is evaluated before anything is printed, so a mistake found while
    # evaluating leaves no partial table behind.
    chunk = _chunk(source, radices, 0, min(_CHUNK, shown))
    out = sys.stdout
    n_out = len(outputs)
    if args.json:
        # Each row is '\n    [c1, c2, …]' and rows are joined by ','; cells are padded on
        # the right so that every row of a chunk has the same width.
        columns = [_cells([",\n    ["], right=False)]
        for vals, is_bool in zip(values, boolean):
            texts = vals if is_bool else [json.dumps(v, ensure_ascii=False) for v in vals]
            columns.append(_cells([t + ", " for t in texts], right=False))
        columns += [_cells(["0, ", "1, "], right=False)] * (n_out - 1)
        columns.append(_cells(["0]", "1]"], right=False))
        head = {"inputs": names, "outputs": outputs}
        out.write(json.dumps(head, indent=2, ensure_ascii=False)[:-2] + ',\n  "rows": [')
    else:
        widths = [max(len(n), *(len(v) for v in vals)) for n, vals in zip(names, values)]
        out_widths = [max(len(n), 1) for n in outputs]
        columns = [_cells([v.rjust(w) + "  " for v in vals], right=True)
                   for vals, w in zip(values, widths)]
        columns.append(_cells(["|"], right=True))
        columns += [_cells(["  " + "0".rjust(w), "  " + "1".rjust(w)], right=True)
                    for w in out_widths]
        columns.append(_cells(["\n"], right=True))
        header = [n.rjust(w) for n, w in zip(names, widths)] + ["|"]
        header += [n.rjust(w) for n, w in zip(outputs, out_widths)]
        out.write("  ".join(header) + "\n")
    for start in range(0, shown, _CHUNK):
        stop = min(start + _CHUNK, shown)
        X, Y = chunk if start == 0 else _chunk(source, radices, start, stop)
        zeros = np.zeros(len(X), dtype=np.int64)
        indices = [X[:, j] for j in range(X.shape[1])] + [Y[:, k] for k in range(n_out)]
        if args.json:
            text = _render(columns, [zeros, *indices], len(X))
            out.write(text[1:] if start == 0 else text)
        else:
            out.write(_render(columns, [*indices[: X.shape[1]], zeros,
                                        *indices[X.shape[1]:], zeros], len(X)))
    if args.json:
        out.write(("\n  ]" if shown else "]") + f',\n  "total_rows": {total},\n'
                  f'  "shown_rows": {shown}\n}}\n')
    elif shown < total:
        out.write(f"({shown} of {total} rows shown; --limit 0 prints all)\n")
    return 0

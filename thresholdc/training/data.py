"""Data files: a CSV table turned into input units and output labels for a network.

The first row names the columns.  A network's ``features`` say how a column becomes
input units: a ``bool`` column is one 0/1 unit (``0``/``1``/``true``/``false``, any case,
spaces trimmed), a ``categorical`` column becomes one-hot units (values match the declared
values as exact strings after trimming), a ``real`` column is one unit carrying the number.
A network without ``features`` has only Boolean inputs: each input unit is a column of the same
name.  Columns the network does not read are ignored.  In the bipolar encoding Boolean and
one-hot units are -1/+1.

Labels map outputs to columns: ``labels={"open_vent": "vent"}``, and an output whose name is a
column maps itself.  A label is 0/1 or true/false, or, with ``positive="yes"``, true exactly where
the trimmed cell equals ``yes``.

Every mistake is a :class:`~thresholdc.errors.DataError` naming the file and line (the header is
line 1), printed by the command line as ``thresholdc: error: DATA:LINE: message``.

>>> import os, tempfile
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),), (Output("y", "y"),))
>>> path = os.path.join(tempfile.mkdtemp(), "d.csv")
>>> _ = open(path, "w").write("a,b,y\\n1,1,1\\nTRUE, false ,0\\n")
>>> data = load_data(path, net)
>>> data.X.tolist(), data.y.tolist(), data.outputs, data.columns
([[1.0, 1.0], [1.0, 0.0]], [[1.0], [0.0]], ('y',), ('y',))
"""

from __future__ import annotations

import csv
import hashlib
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import DataError, UsageError
from ..files import read_text
from ..present import count
from ..textlines import count_lines, lines_with_ends

__all__ = [
    "Table",
    "Dataset",
    "read_table",
    "features_of",
    "encode_features",
    "encode_labels",
    "parse_label_specs",
    "resolve_labels",
    "load_data",
    "MAX_DATA_BYTES",
]

#: The data bound: about the memory a data file may take, in bytes (its text, its table of
#: cells at 4 bytes a character of the longest cell, and its input units as 8-byte numbers);
#: ``--max-data-gb`` raises it.
MAX_DATA_BYTES = 4 * 10**9
_TRUE = ("1", "true")
# Data rows are turned into arrays of cells this many at a time (bounds the lists held).
_CHUNK_ROWS = 65_536
_FALSE = ("0", "false")


@dataclass(frozen=True)
class Table:
    """A CSV file read as text: ``cells`` of shape ``(rows, columns)`` (trimmed strings),
    ``lines[r]`` the line of data row ``r`` in the file (the header is line 1)."""

    file: str
    header: tuple[str, ...]
    cells: np.ndarray
    lines: np.ndarray
    sha256: str = ""

    @property
    def rows(self) -> int:
        return int(self.cells.shape[0])

    def column(self, name: str) -> np.ndarray:
        """The trimmed cells of column ``name``."""
        return self.cells[:, self.header.index(name)]

    def fail(self, message: str, row: int | None = None) -> DataError:
        """A DataError at data row ``row`` (or at the header when ``row`` is None)."""
        line = 1 if row is None else int(self.lines[row])
        return DataError(message, file=self.file, line=line)

    def __repr__(self) -> str:
        return f"Table({self.file!r}, columns={len(self.header)}, rows={self.rows})"


@dataclass(frozen=True)
class Dataset:
    """Input units and labels read from a data file for one network.

    ``X`` is ``(rows, len(network.inputs))``; ``y`` is ``(rows, len(outputs))`` of 0/1 labels;
    ``outputs`` are the labelled outputs in network order and ``columns`` their label columns.
    """

    file: str
    X: np.ndarray
    y: np.ndarray
    outputs: tuple[str, ...]
    columns: tuple[str, ...]
    lines: np.ndarray = field(repr=False)
    sha256: str = ""
    unlabelled: tuple[str, ...] = ()

    @property
    def rows(self) -> int:
        return int(self.X.shape[0])

    def warnings(self) -> list[str]:
        """What training should know about the labels: outputs without a label column and
        label columns that hold a single value (nothing to learn from them).

        >>> d = Dataset("d.csv", np.zeros((2, 1)), np.ones((2, 1)), ("y",), ("ok",),
        ...             np.array([2, 3]), unlabelled=("z",))
        >>> d.warnings()  # doctest: +NORMALIZE_WHITESPACE
        ["output 'z' has no label column in d.csv: it is not trained (name one with
          --label z=COLUMN)", "label column 'ok' (output 'y') is true on every row of d.csv"]
        """
        notes = [
            f"output {name!r} has no label column in {self.file}: it is not trained"
            f" (name one with --label {name}=COLUMN)"
            for name in self.unlabelled
        ]
        for k, (name, column) in enumerate(zip(self.outputs, self.columns, strict=True)):
            col = self.y[:, k]
            if col.size and np.all(col == col[0]):
                value = "true" if col[0] > 0.5 else "false"
                notes.append(
                    f"label column {column!r} (output {name!r}) is {value} on every row of"
                    f" {self.file}"
                )
        return notes

    def __repr__(self) -> str:
        return f"Dataset({self.file!r}, rows={self.rows}, outputs={list(self.outputs)})"


# --------------------------------------------------------------------------- reading
def _read_text(path: str) -> str:
    """The UTF-8 text of ``path`` (a leading byte-order mark dropped), or a DataError."""
    return read_text(path, DataError)


def _over_bound(path: str, what: str, need: float, max_bytes: int, line: int | None = None
                ) -> DataError:
    """The refusal of a data file over the data bound, naming the option that raises it."""
    return DataError(
        f"{what} take about {need / 1e9:.3g} GB, over the data bound of {max_bytes / 1e9:.3g} GB"
        " (raise it with --max-data-gb G)", file=path, line=line)


def read_table(path: str, max_bytes: int = MAX_DATA_BYTES) -> Table:
    """Read a comma-separated file with a header row (any suffix).

    Blank lines are skipped; cells are trimmed of white space; quoted fields follow the csv
    module; rows end at LF, CRLF or a bare CR.  ``max_bytes`` is the data bound, checked before
    the work it bounds: the file's size before it is read, its lines × columns (4 bytes a
    cell at least) before any row is read, and a cell whose length would take the table of
    cells over it when it is read (the csv module's field limit).

    Raises
    ------
    DataError
        ``DATA:1: empty file``, ``DATA:2: no data rows``, a duplicate or empty column name,
        a row with a different number of fields than the header (at its line), a file over
        the data bound (naming ``--max-data-gb``).

    >>> import os, tempfile
    >>> p = os.path.join(tempfile.mkdtemp(), "t.txt")
    >>> _ = open(p, "w").write("a, b\\n\\n 1 ,2\\n")
    >>> t = read_table(p)
    >>> t.header, t.cells.tolist(), t.lines.tolist()
    (('a', 'b'), [['1', '2']], [3])
    """
    try:
        size = os.path.getsize(path)
    except OSError:
        size = 0  # read_text names what is wrong with the path
    if size > max_bytes:
        raise _over_bound(path, f"the file's {size:,} bytes", size, max_bytes)
    text = _read_text(path)
    digest = hashlib.sha256(text.encode("utf-8")).hexdigest()
    # rows end only at LF, CRLF or a bare CR (as the csv module's own reading of a file does);
    # form feed, \x1c-\x1e, NEL and U+2028 stay inside their cells
    capacity = count_lines(text)
    reader = csv.reader(lines_with_ends(text))
    del text  # the lines (or the iterator over them) hold it now
    field_limit = _CSV_FIELD_LIMIT
    header: list[str] | None = None
    names: tuple[str, ...] = ()
    rows: list[list[str]] = []
    lines: list[int] = []  # the line of every data row so far (not only this chunk's)
    filled = [0]
    store: list[np.ndarray] = []  # one array of at most `capacity` rows, filled chunk by chunk
    start = 1

    def flush() -> None:
        # a chunk of rows becomes one array of trimmed cells and its lists are freed, so the
        # memory held is about the cells' own size, not that of a list per row
        widths = np.fromiter(map(len, rows), dtype=np.int64, count=len(rows))
        ragged = np.flatnonzero(widths != len(names))
        if ragged.size:
            r = int(ragged[0])
            raise DataError(f"row has {count(int(widths[r]), 'field')} but the header has "
                            f"{len(names)}",
                            file=path, line=lines[filled[0] + r])
        chunk = np.char.strip(np.array(rows, dtype=str).reshape(len(rows), len(names)))
        if not store:
            store.append(np.empty((capacity, len(names)), dtype=chunk.dtype))
        elif chunk.dtype.itemsize > store[0].dtype.itemsize:
            store[0] = store[0].astype(chunk.dtype)  # a longer cell than any before
        store[0][filled[0]:filled[0] + len(rows)] = chunk
        filled[0] += len(rows)
        rows.clear()

    try:
        for record in reader:
            if record and not (len(record) == 1 and not record[0].strip()):
                if header is None:
                    header = record
                    names = _header_names(header, path)
                    field_limit = _cell_limit(path, capacity, len(names), max_bytes)
                    csv.field_size_limit(field_limit)
                else:
                    rows.append(record)
                    lines.append(start)
                    if len(rows) == _CHUNK_ROWS:
                        flush()
            start = reader.line_num + 1
    except csv.Error as exc:
        if header is not None and str(exc).startswith("field larger than field limit"):
            raise _over_bound(path, f"{capacity:,} lines × {len(names)} columns with cells as "
                              f"long as this one (over {field_limit:,} characters)",
                              4.0 * capacity * len(names)
                              * (field_limit + 1), max_bytes, start) from None
        raise DataError(f"cannot read the table: {exc}", file=path, line=start) from None
    finally:
        csv.field_size_limit(_CSV_FIELD_LIMIT)
    if header is None:
        raise DataError("empty file", file=path, line=1)
    if rows:
        flush()
    if not store:
        raise DataError("no data rows", file=path, line=2)
    cells = store[0][: filled[0]]
    return Table(path, names, cells, np.asarray(lines, dtype=np.int64), digest)


_CSV_FIELD_LIMIT = csv.field_size_limit()


def _cell_limit(path: str, lines: int, columns: int, max_bytes: int) -> int:
    """The longest cell (in characters) that keeps ``lines`` × ``columns`` cells of 4 bytes a
    character within the data bound; a DataError when not even one character does."""
    per_char = 4 * max(lines, 1) * columns
    if per_char > max_bytes:
        raise _over_bound(path, f"{lines:,} lines × {columns} columns of cells", per_char,
                          max_bytes, 1)
    return min(max_bytes // per_char, 2**31 - 1)


def _header_names(header: list[str], path: str) -> tuple[str, ...]:
    """The trimmed column names, or a DataError for an empty or repeated one."""
    names = tuple(h.strip() for h in header)
    for k, name in enumerate(names):
        if not name:
            raise DataError(f"column {k + 1} of the header has no name", file=path, line=1)
        if name in names[:k]:
            raise DataError(f"column {name!r} appears twice in the header", file=path, line=1)
    return names


def _header_hint(table: Table, missing: Sequence[str]) -> str:
    """Why expected columns may be missing: another delimiter, or a name in another case.

    >>> t = Table("t.csv", ("a;b;y",), np.array([["1;0;1"]]), np.array([2]))
    >>> _header_hint(t, ["a"])
    "; the header looks separated by ';': data files are comma-separated (write 'a,b,y')"
    >>> _header_hint(Table("t.csv", ("Soil_Dry",), np.array([["1"]]), np.array([2])), ["soil_dry"])
    "; column 'Soil_Dry' differs from 'soil_dry' only in case (names must match exactly)"
    """
    for sep in (";", "\t", "|"):
        if len(table.header) == 1 and sep in table.header[0]:
            shown = "tab" if sep == "\t" else repr(sep)
            fixed = ",".join(part.strip() for part in table.header[0].split(sep))
            return (f"; the header looks separated by {shown}: data files are comma-separated "
                    f"(write '{fixed}')")
    lower = {h.lower(): h for h in table.header}
    hints = [f"column {lower[m.lower()]!r} differs from {m!r} only in case" for m in missing
             if m.lower() in lower]
    if hints:
        return "; " + "; ".join(hints) + " (names must match exactly)"
    return ""


# --------------------------------------------------------------------------- features
def features_of(network: Any) -> list[dict[str, Any]]:
    """The network's features; without ``features`` every input unit is a Boolean feature.

    Input units no feature covers are Boolean features named after the unit.

    >>> from thresholdc.ir.network import Network
    >>> [f["name"] for f in features_of(Network(("a", "b"), (), ()))]
    ['a', 'b']
    """
    declared = list(network.features or ())
    covered = {u for f in declared for u in f.get("units", ())}
    extra = [
        {"name": u, "kind": "bool", "units": [u]} for u in network.inputs if u not in covered
    ]
    return declared + extra


def _first_bad(table: Table, mask: np.ndarray) -> int:
    """The first row where ``mask`` is true."""
    return int(np.flatnonzero(mask)[0])


def _booleans(table: Table, cells: np.ndarray, what: str, hint: str = "") -> np.ndarray:
    """0/1 floats for cells holding 0/1/true/false (any case); a DataError otherwise."""
    # each distinct value once (np.char.lower calls str.lower per cell)
    values, index = np.unique(cells, return_inverse=True)
    low = np.char.lower(values)
    true = np.isin(low, _TRUE)[index.reshape(-1)]
    bad = ~(true | np.isin(low, _FALSE)[index.reshape(-1)])
    if bad.any():
        r = _first_bad(table, bad)
        raise table.fail(f"{what}: expected 0/1 or true/false, got {str(cells[r])!r}{hint}", r)
    return true.astype(float)


def _reals(table: Table, cells: np.ndarray, what: str) -> np.ndarray:
    """Floats for cells holding finite numbers; a DataError at the first one that is not."""
    try:
        values = cells.astype(float)
    except ValueError:
        # Only on failure: find the first bad cell among the distinct values.
        uniq, first = np.unique(cells, return_index=True)
        bad_rows = []
        for value, r in zip(uniq.tolist(), first.tolist(), strict=True):
            try:
                float(value)
            except ValueError:
                bad_rows.append(r)
        r = min(bad_rows)
        got = repr(str(cells[r])) if cells[r] else "an empty cell"
        raise table.fail(f"{what}: expected a number, got {got}", r) from None
    bad = ~np.isfinite(values)
    if bad.any():
        r = _first_bad(table, bad)
        raise table.fail(f"{what}: expected a finite number, got {str(cells[r])!r}", r)
    return values


def _categories(table: Table, cells: np.ndarray, values: Sequence[str], what: str) -> np.ndarray:
    """The index of each cell among ``values``; a DataError naming the first unknown one."""
    known = np.asarray([str(v).strip() for v in values] or [""], dtype=str)
    order = np.argsort(known, kind="stable")
    pos = np.searchsorted(known[order], cells)
    pos = np.minimum(pos, len(known) - 1)
    found = (known[order][pos] == cells) & (len(values) > 0)
    if not found.all():
        r = _first_bad(table, ~found)
        listed = ", ".join(known.tolist())
        raise table.fail(f"{what}: unknown category {str(cells[r])!r} (known: {listed})", r)
    return order[pos]


def encode_features(table: Table, network: Any) -> np.ndarray:
    """The input units ``(rows, len(network.inputs))`` of every data row.

    >>> from thresholdc.ir.network import Network
    >>> t = Table("t", ("b", "a"), np.array([["true", "0"]]), np.array([2]))
    >>> encode_features(t, Network(("a", "b"), (), ())).tolist()
    [[0.0, 1.0]]
    """
    col = {u: i for i, u in enumerate(network.inputs)}
    X = np.zeros((table.rows, len(network.inputs)), dtype=float)
    bipolar = getattr(network, "encoding", "binary") == "bipolar"
    feats = features_of(network)
    missing = [f["name"] for f in feats if f["name"] not in table.header]
    if missing:
        names = ", ".join(repr(m) for m in missing)
        plural = "s" if len(missing) > 1 else ""
        raise table.fail(
            f"missing column{plural} {names} for the network's input{plural}"
            f" (columns: {', '.join(table.header)}){_header_hint(table, missing)}"
        )
    for f in feats:
        cells = table.column(f["name"])
        kind = f.get("kind", "bool")
        what = f"column {f['name']!r}"
        units = list(f.get("units") or [f["name"]])
        if kind == "real":
            X[:, col[units[0]]] = _reals(table, cells, what)
            continue
        if kind == "categorical":
            index = _categories(table, cells, f.get("values") or [], what)
            onehot = (index[:, None] == np.arange(len(units))[None, :]).astype(float)
            X[:, [col[u] for u in units]] = onehot
            continue
        X[:, col[units[0]]] = _booleans(table, cells, what)
    if bipolar:
        real_units = {f["units"][0] for f in feats if f.get("kind") == "real"}
        keep = np.array([u in real_units for u in network.inputs], dtype=bool)
        X = np.where(keep[None, :], X, 2.0 * X - 1.0)
    return X


# --------------------------------------------------------------------------- labels
def parse_label_specs(specs: Sequence[str] | None) -> dict[str, str]:
    """``["OUT=COL", …]`` as ``{OUT: COL}``; a UsageError for a malformed or repeated one.

    >>> parse_label_specs(["vent=open_vent", "alarm = alarm_col"])
    {'vent': 'open_vent', 'alarm': 'alarm_col'}
    """
    labels: dict[str, str] = {}
    for spec in specs or ():
        out, sep, column = spec.partition("=")
        out, column = out.strip(), column.strip()
        if not sep or not out or not column:
            raise UsageError(f"--label expects OUTPUT=COLUMN, got {spec!r}")
        if out in labels:
            raise UsageError(f"--label names output {out!r} twice")
        labels[out] = column
    return labels


def resolve_labels(
    table: Table, network: Any, labels: Mapping[str, str] | None = None
) -> list[tuple[str, str]]:
    """``(output, column)`` pairs in network order: the given labels, plus every output whose
    name is a column of the table."""
    labels = dict(labels or {})
    names = list(network.output_names)
    unknown = sorted(set(labels) - set(names))
    if unknown:
        raise UsageError(
            f"--label names unknown output {unknown[0]!r} (outputs: {', '.join(names)})"
        )
    pairs = []
    for out in names:
        column = labels.get(out, out if out in table.header else None)
        if column is None:
            continue
        if column not in table.header:
            raise table.fail(
                f"missing label column {column!r} for output {out!r}"
                f" (columns: {', '.join(table.header)}){_header_hint(table, [column])}"
            )
        pairs.append((out, column))
    return pairs


def encode_labels(
    table: Table, pairs: Sequence[tuple[str, str]], positive: str | None = None
) -> np.ndarray:
    """0/1 labels ``(rows, len(pairs))``: Boolean cells, or ``cell == positive``."""
    y = np.zeros((table.rows, len(pairs)), dtype=float)
    for k, (out, column) in enumerate(pairs):
        cells = table.column(column)
        if positive is not None:
            hit = cells == positive.strip()
            if not hit.any():
                seen = np.unique(cells)
                listed = ", ".join(repr(str(v)) for v in seen[:8])
                more = f", … ({len(seen)} distinct)" if len(seen) > 8 else ""
                raise table.fail(
                    f"--positive {positive.strip()!r} never occurs in label column {column!r}"
                    f" (output {out!r}); values seen: {listed}{more}"
                )
            y[:, k] = hit.astype(float)
        else:
            what = f"label column {column!r} (output {out!r})"
            hint = "; choose the true value with --positive VALUE"
            y[:, k] = _booleans(table, cells, what, hint)
    return y


def load_data(
    path: str,
    network: Any,
    *,
    labels: Mapping[str, str] | None = None,
    positive: str | None = None,
    require_labels: bool = False,
    max_bytes: int = MAX_DATA_BYTES,
) -> Dataset:
    """Read a data file for ``network``: its input units and the labels of its outputs.

    Parameters
    ----------
    path : str
        A CSV file with a header row (any suffix).
    network : Network
        Its ``features`` (or its input unit names) say which columns are read.
    labels : mapping, optional
        ``{output: column}``; an output whose name is a column maps itself.
    positive : str, optional
        The label value that means true (every other value is false); without it labels are
        0/1 or true/false.
    require_labels : bool
        Raise a UsageError when no output has a label.
    max_bytes : int
        The data bound (see :func:`read_table`); the input units (rows × units, 8 bytes each)
        are checked against it too, before they are built.

    Returns
    -------
    Dataset

    >>> import os, tempfile
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("y", 1, ("a",), (-1,), 0.5),), (Output("y", "y"),))
    >>> p = os.path.join(tempfile.mkdtemp(), "d.csv")
    >>> _ = open(p, "w").write("a,ok\\n0,yes\\n1,no\\n")
    >>> load_data(p, net, labels={"y": "ok"}, positive="yes").y.tolist()
    [[1.0], [0.0]]
    """
    table = read_table(path, max_bytes)
    units = 8.0 * table.rows * len(network.inputs)
    if units > max_bytes:
        raise _over_bound(path, f"{table.rows:,} rows × {len(network.inputs):,} input units "
                          "as numbers", units, max_bytes)
    X = encode_features(table, network)
    pairs = resolve_labels(table, network, labels)
    if require_labels and not pairs:
        raise UsageError(
            "no labels: name the label column of an output with --label OUTPUT=COLUMN"
            f" (outputs: {', '.join(network.output_names)})"
        )
    y = encode_labels(table, pairs, positive)
    return Dataset(
        table.file,
        X,
        y,
        tuple(p[0] for p in pairs),
        tuple(p[1] for p in pairs),
        table.lines,
        table.sha256,
        tuple(n for n in network.output_names if n not in {p[0] for p in pairs}),
    )

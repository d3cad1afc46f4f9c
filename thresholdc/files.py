"""Reading user files: one place that turns every way a read can fail into one clear error.

>>> from thresholdc.errors import RuleError
>>> try:
...     read_text("/no/such/file.rules", RuleError)
... except RuleError as err:
...     print(err.render())
thresholdc: error: /no/such/file.rules: no such file
"""

from __future__ import annotations

from .errors import ThresholdcError
from .textlines import line_and_column, split_lines

__all__ = ["read_text"]


def read_text(path: str, error: type[ThresholdcError], *, keep_bom: bool = False) -> str:
    """The UTF-8 text of ``path``, or ``error`` saying why it cannot be read: missing, a
    folder, not permitted, not UTF-8 (at the line and column of the first bad byte).  A
    leading byte-order mark is dropped unless ``keep_bom`` (rule files keep it, so the text
    hashes to the file's own bytes)."""
    try:
        with open(path, "rb") as fh:
            raw = fh.read()
    except FileNotFoundError:
        raise error("no such file", file=path) from None
    except IsADirectoryError:
        raise error("is a folder, not a file", file=path) from None
    except PermissionError:
        raise error("permission denied", file=path) from None
    except OSError as exc:
        raise error(f"cannot read: {exc.strerror}", file=path) from None
    try:
        return raw.decode("utf-8" if keep_bom else "utf-8-sig")
    except UnicodeDecodeError as exc:
        data = exc.object  # the bytes decoded: "utf-8-sig" drops the byte-order mark first
        text = data.decode("utf-8", "replace")  # bad bytes shown as U+FFFD
        line, column = line_and_column(text, len(data[: exc.start].decode("utf-8")))
        source = split_lines(text)[line - 1]
        if line == 1 and source.startswith("\ufeff"):  # a byte-order mark is not a column
            source, column = source[1:], column - 1
        raise error("not UTF-8 text", file=path, line=line, column=column,
                    source_line=source) from None

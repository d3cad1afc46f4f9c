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
        start = raw.rfind(b"\n", 0, exc.start) + 1
        if start == 0 and raw.startswith(b"\xef\xbb\xbf"):
            start = 3  # a byte-order mark is not a column
        end = raw.find(b"\n", exc.start)
        text = raw[start : len(raw) if end < 0 else end].decode("utf-8", "replace").rstrip("\r")
        line = raw[: exc.start].count(b"\n") + 1
        column = len(raw[start : exc.start].decode("utf-8", "replace")) + 1
        raise error("not UTF-8 text", file=path, line=line, column=column,
                    source_line=text) from None

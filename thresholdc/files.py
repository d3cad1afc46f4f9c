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
    folder, not permitted, not UTF-8 (with the line).  A leading byte-order mark is dropped
    unless ``keep_bom`` (rule files keep it, so the text hashes to the file's own bytes)."""
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
        head = raw[: exc.start]  # lines end at LF, CRLF or a bare CR, as in thresholdc.textlines
        line = head.count(b"\n") + head.count(b"\r") - head.count(b"\r\n") + 1
        raise error("not UTF-8 text", file=path, line=line) from None

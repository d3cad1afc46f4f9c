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
        # lines end at LF, CRLF or a bare CR, as in thresholdc.textlines
        at = exc.start
        start = max(raw.rfind(b"\n", 0, at), raw.rfind(b"\r", 0, at)) + 1
        if start == 0 and raw.startswith(b"\xef\xbb\xbf"):
            start = 3  # a byte-order mark is not a column
        ends = [e for e in (raw.find(b"\n", at), raw.find(b"\r", at)) if e >= 0]
        end = min(ends) if ends else len(raw)
        text = raw[start:end].decode("utf-8", "replace")
        head = raw[:at]
        line = head.count(b"\n") + head.count(b"\r") - head.count(b"\r\n") + 1
        column = len(raw[start:at].decode("utf-8", "replace")) + 1
        raise error("not UTF-8 text", file=path, line=line, column=column,
                    source_line=text) from None

"""Line ends of the text files thresholdc reads: ``\\n``, ``\\r\\n`` and a bare ``\\r`` each end
one line, and nothing else does (not form feed, ``\\x1c``-``\\x1e``, NEL or U+2028, which
``str.splitlines`` would also split on).  Rule files, netlists, CSV tables and the positions
of errors in network files all count lines this way.

>>> split_lines("a\\r\\nb\\rc\\nd\\x0ce\\u2028f")
['a', 'b', 'c', 'd\\x0ce\\u2028f']
>>> line_and_column("a\\r\\nbc\\rd", 4), line_and_column("a\\r\\nbc\\rd", 6)
((2, 2), (3, 1))
"""

from __future__ import annotations

import re
from collections.abc import Iterator

__all__ = ["LINE_END", "split_lines", "lines_with_ends", "count_lines", "line_and_column"]

#: One line end: CRLF first, so that it is one end and not two.
LINE_END = re.compile(r"\r\n|\r|\n")
_LINE = re.compile(r"[^\r\n]*(?:\r\n|\r|\n)|[^\r\n]+")
# the characters str.splitlines ends a line at besides LF, CR and CRLF
_OTHER_BREAKS = re.compile("[\x0b\x0c\x1c\x1d\x1e\x85\u2028\u2029]")


def split_lines(text: str) -> list[str]:
    """The lines of ``text`` without their ends (a final end gives a last, empty line).

    >>> split_lines("a\\nb\\n")
    ['a', 'b', '']
    """
    return LINE_END.split(text)


def lines_with_ends(text: str) -> Iterator[str]:
    """The lines of ``text`` with their ends, one at a time (no empty last line).

    >>> list(lines_with_ends('a,"x\\x1dy"\\r1,2\\r\\n3'))
    ['a,"x\\x1dy"\\r', '1,2\\r\\n', '3']
    """
    if _OTHER_BREAKS.search(text) is None:  # the same lines, split in C
        return iter(text.splitlines(keepends=True))
    return (m.group() for m in _LINE.finditer(text))


def count_lines(text: str) -> int:
    """How many items :func:`lines_with_ends` yields.

    >>> count_lines("a\\r\\nb\\rc"), count_lines("a\\n"), count_lines("")
    (3, 1, 0)
    """
    ends = text.count("\n") + text.count("\r") - text.count("\r\n")
    return ends + (1 if text and not text.endswith(("\n", "\r")) else 0)


def line_and_column(text: str, offset: int) -> tuple[int, int]:
    """The 1-based line and column of character ``offset`` of ``text``.

    >>> line_and_column("ab\\ncd", 4)
    (2, 2)
    """
    head = text[:offset]
    if head.endswith("\r") and text[offset:offset + 1] == "\n":
        head = head[:-1]  # the LF of a CRLF belongs to the line the CR ends
    line = head.count("\n") + head.count("\r") - head.count("\r\n") + 1
    start = max(head.rfind("\n"), head.rfind("\r")) + 1
    return line, len(head) - start + 1

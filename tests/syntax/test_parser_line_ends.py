"""Line ends: LF, CRLF and a bare CR (old Mac files) each end a line, as Python's universal
newlines read them; error positions count lines and columns the same way in all three."""

from __future__ import annotations

import pytest

from thresholdc.errors import RuleError
from thresholdc.logic.source import load_source
from thresholdc.syntax.lexer import source_lines
from thresholdc.syntax.parser import parse

GOOD = "input a, b # the inputs\ny = a and b # a comment\n\ny2 = (a or\n  b)\n"


@pytest.mark.parametrize("end", ["\n", "\r\n", "\r"])
def test_every_line_end_parses_alike(end):
    prog = parse(GOOD.replace("\n", end))
    plain = parse(GOOD)
    assert prog.outputs == plain.outputs == ("y", "y2")
    assert {k: str(v) for k, v in prog.definitions.items()} == \
        {k: str(v) for k, v in plain.definitions.items()}


@pytest.mark.parametrize("end", ["\n", "\r\n", "\r"])
@pytest.mark.parametrize("text,line,column,shown", [
    ("input a\ny = a and\n", 2, 10, "y = a and"),
    ("input a\ny = a and b\n", 2, 11, "y = a and b"),
    ("input a, b\n# note\ny2 = a +\n", 3, 9, "y2 = a +"),
])
def test_error_positions_count_every_line_end(end, text, line, column, shown):
    with pytest.raises(RuleError) as info:
        parse(text.replace("\n", end), "f.rules")
    err = info.value
    assert (err.line, err.column) == (line, column)
    assert err.source_line == shown
    assert err.render().splitlines()[1:] == [shown, " " * (column - 1) + "^"]


def test_mixed_line_ends_and_a_comment_before_a_bare_cr(tmp_path):
    # a comment stops at a bare CR: the next definition is not swallowed by it
    path = tmp_path / "mac.rules"
    path.write_bytes(b"input a, b\r\ny = a # first\rz = not b\n")
    src = load_source(str(path))
    assert src.outputs == ("y", "z")
    assert src.evaluate([[1, 0], [0, 1]]).tolist() == [[True, True], [False, False]]


def test_source_lines():
    assert source_lines("a\r\nb\rc\nd\r") == ["a", "b", "c", "d", ""]

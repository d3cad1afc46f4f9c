"""A byte-order mark at the start of a file is not part of the text (DESIGN.md §3 positions)."""

from __future__ import annotations

import pytest

from thresholdc.errors import RuleError
from thresholdc.syntax.parser import parse


@pytest.mark.parametrize(
    "text,line,column,shown",
    [
        ("\ufeffinput a, and\ny = a\n", 1, 10, "input a, and"),  # 'and' is the 10th character
        ("\ufeffy = a\n", 1, 5, "y = a"),
        ("\ufeffinput a\ny = b\n", 2, 5, "y = b"),
    ],
)
def test_columns_on_line_one_do_not_count_the_mark(text, line, column, shown):
    with pytest.raises(RuleError) as info:
        parse(text, "f.rules")
    err = info.value
    assert (err.line, err.column) == (line, column)
    assert err.source_line == shown
    assert err.render().splitlines()[1:] == [shown, " " * (column - 1) + "^"]


def test_a_marked_file_parses_like_an_unmarked_one():
    plain = parse("input a, b\ny = a and b\n")
    marked = parse("\ufeffinput a, b\ny = a and b\n")
    assert [v.name for v in marked.inputs] == ["a", "b"]
    assert marked.outputs == plain.outputs
    assert str(marked.definitions["y"]) == str(plain.definitions["y"])

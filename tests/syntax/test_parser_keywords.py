"""Every reserved word of DESIGN.md §3 is refused as a name, at the word itself."""

from __future__ import annotations

import pytest

from thresholdc.errors import RuleError
from thresholdc.syntax.parser import parse

# DESIGN.md §3, the list of keywords as written there
KEYWORDS = (
    "input output and or xor not implies iff if then else true false atleast atmost exactly "
    "majority nand nor parity in bool real"
).split()


@pytest.mark.parametrize("word", KEYWORDS)
@pytest.mark.parametrize(
    "template,line,column",
    [
        ("input a, {w}\ny = a\n", 1, 10),  # declared as an input
        ("input a\n{w} = a\n", 2, 1),  # defined
        ("input a\noutput {w}\ny = a\n", 2, 8),  # listed as an output
    ],
    ids=["input", "definition", "output"],
)
def test_a_keyword_is_not_a_name(word, template, line, column):
    with pytest.raises(RuleError) as info:
        parse(template.format(w=word), "k.rules")
    err = info.value
    assert (err.line, err.column) == (line, column)
    assert err.message == f"'{word}' is a keyword and cannot be used as a name"

"""A term of a weighted comparison is a name, a call or a bracketed expression (DESIGN.md §3).

`not`, `true`/`false` and `if` written bare as a term are errors at that word that say what a term
may be, rather than calling the word a misused name.
"""

from __future__ import annotations

import pytest

from thresholdc.errors import RuleError
from thresholdc.syntax.parser import parse

OPERAND = "expected an operand (a name, a call or a bracketed expression)"
ITE = (
    "'if … then … else …' stands only as a whole right-hand side, inside brackets or as a call "
    "argument: write '(if … then … else …)'"
)


@pytest.mark.parametrize(
    "rhs,column,message",
    [
        ("2*not a >= 1", 7, f"{OPERAND} after '*', found 'not': put it in brackets, as in "
                            "'(not …)'"),
        ("a + not b >= 1", 9, f"{OPERAND} after '+', found 'not': put it in brackets, as in "
                              "'(not …)'"),
        ("-not a >= 1", 6, f"{OPERAND} after '-', found 'not': put it in brackets, as in "
                           "'(not …)'"),
        ("2*true >= 1", 7, f"{OPERAND} after '*', found 'true': put it in brackets, as in "
                           "'(true)'"),
        ("a - false < 1", 9, f"{OPERAND} after '-', found 'false': put it in brackets, as in "
                             "'(false)'"),
        ("a + if a then b else a >= 1", 9, ITE),
        ("2*if a then b else a >= 1", 7, ITE),
    ],
)
def test_bare_words_as_terms(rhs, column, message):
    with pytest.raises(RuleError) as info:
        parse(f"input a, b\ny = {rhs}\n")
    assert (info.value.line, info.value.column, info.value.message) == (2, column, message)


def test_the_suggested_brackets_parse():
    prog = parse("input a, b\ny = 2*(true) - (not a) + (if a then b else a) >= 1\n")
    assert prog.outputs == ("y",)

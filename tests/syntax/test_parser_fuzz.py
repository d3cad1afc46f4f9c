"""Random token soup: parse() returns a Program or raises one RuleError with a real position."""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from tests.strategies import rule_programs
from thresholdc.errors import RuleError
from thresholdc.ir.program import Program
from thresholdc.syntax.parser import parse

PIECES = [
    "input", "output", "a", "b", "c", "y", "=", "and", "or", "xor", "not", "!", "~", "&", "|",
    "^", "->", "<->", "implies", "iff", "if", "then", "else", "(", ")", "{", "}", "[", "]", ",",
    ":", "0", "1", "2", "1.5", "-", "+", "*", ">=", "==", "!=", "<", "atleast", "majority",
    "parity", "true", "real", "bool", "in", "scale", "#", "\n", "\n", "\n", "@", "a b",
]


@settings(max_examples=200, deadline=None)
@given(st.lists(st.sampled_from(PIECES), max_size=30))
def test_token_soup_gives_a_program_or_one_rule_error(pieces):
    text = " ".join(pieces)
    try:
        result = parse(text, "soup.rules")
    except RuleError as err:
        assert err.file == "soup.rules"
        lines = text.split("\n")
        if err.line is None:
            assert err.message.startswith("empty program: ")
        else:
            assert 1 <= err.line <= len(lines)
            assert 1 <= err.column <= len(lines[err.line - 1]) + 1
            assert err.source_line == lines[err.line - 1]
            assert err.render().count("\n") == 2
    else:
        assert isinstance(result, Program)


@settings(max_examples=50, deadline=None)
@given(rule_programs())
def test_random_valid_programs_parse(text):
    program = parse(text)
    assert program.outputs
    assert set(program.order) == set(program.definitions)

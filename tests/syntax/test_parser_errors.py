"""Every kind of bad input: the exact message and the exact position."""

from __future__ import annotations

import pytest

from thresholdc.errors import RuleError
from thresholdc.syntax.parser import parse

ITE_MSG = (
    "'if … then … else …' stands only as a whole right-hand side, inside brackets or as a call "
    "argument: write '(if … then … else …)'"
)

# (rule text, line, column, message); positions are 1-based.
CASES = {
    # syntax errors, at the offending token
    "after_and": ("input a\ny = a and\n", 2, 10, "expected an expression after 'and'"),
    "after_arrow": ("input a\ny = a ->\n", 2, 9, "expected an expression after '->'"),
    "stray_paren": ("input a\ny = a )\n", 2, 7, "unexpected ')'"),
    "two_names": ("input a, b\ny = a b\n", 2, 7, "unexpected name 'b'"),
    "unclosed": ("input a\ny = (a and a\n", 2, 5, "'(' is never closed"),
    "unclosed_then_next": (
        "input a\ny = (a and a\nz = a\n",
        3,
        1,
        "unexpected name 'z': '(' on line 2 is still open",
    ),
    "missing_else": (
        "input a\ny = if a then a\n",
        2,
        16,
        "expected 'else' after name 'a', found the end of the line",
    ),
    "missing_operator": (
        "input a\ny = a + a\n",
        2,
        10,
        "expected a comparison operator (>=, >, <=, <, ==, !=) after name 'a'",
    ),
    "bad_character": ("input a\ny = a @ a\n", 2, 7, "unexpected character '@'"),
    "not_a_function": (
        "input a\ny = f(a)\n",
        2,
        6,
        "'f' is not a function; the calls are atleast, atmost, exactly, majority, nand, nor "
        "and parity",
    ),
    "bad_statement": (
        "input a\n= a\n",
        2,
        1,
        "expected a statement (input …, output … or NAME = …), found '='",
    ),
    "input_without_name": (
        "input\n",
        1,
        6,
        "expected a name after 'input', found the end of the line",
    ),
    "k_not_first": (
        "input a\ny = atleast(a)\n",
        2,
        13,
        "atleast needs the integer k as its first argument, found name 'a'",
    ),
    "big_constant": ("input a\ny = 2\n", 2, 5, "a constant is 0, 1, true or false, found 2"),
    # keywords are reserved
    "keyword_defined": (
        "input a\nand = a\n",
        2,
        1,
        "'and' is a keyword and cannot be used as a name",
    ),
    "keyword_input": ("input a, real\n", 1, 10, "'real' is a keyword and cannot be used as a name"),
    "keyword_output": (
        "input a\ny = a\noutput parity\n",
        3,
        8,
        "'parity' is a keyword and cannot be used as a name",
    ),
    "keyword_in_expression": (
        "input a\ny = a and then\n",
        2,
        11,
        "expected an expression after 'and', found the keyword 'then'",
    ),
    # if-then-else in the wrong place
    "ite_after_and": ("input a, b, c, d\ny = a and if b then c else d\n", 2, 11, ITE_MSG),
    "ite_after_not": ("input a, b, c\ny = not if a then b else c\n", 2, 9, ITE_MSG),
    # names
    "unknown_name": ("input a\ny = a or b\n", 2, 10, "unknown name 'b'"),
    "unknown_in_comparison": ("input a\ny = a + 2*q >= 1\n", 2, 11, "unknown name 'q'"),
    "defined_twice": (
        "input a\ny = a\nz = y\ny = not a\n",
        4,
        1,
        "'y' is defined twice (first on line 2)",
    ),
    "input_defined": (
        "input a, b\nb = a\n",
        2,
        1,
        "'b' is declared as an input and cannot also be defined",
    ),
    "input_twice": (
        "input a, b\ninput b\ny = a\n",
        2,
        7,
        "input 'b' is declared twice (first on line 1)",
    ),
    "cycle": (
        "input a\nout = x\ny = z and a\nx = y\nz = not x\n",
        3,
        1,
        "cyclic definition: y -> z -> x -> y",
    ),
    "self_cycle": ("input a\ny = y or a\n", 2, 1, "cyclic definition: y -> y"),
    "undefined_output": ("input a\noutput y, q\ny = a\n", 2, 11, "output 'q' is never defined"),
    "output_twice": ("input a\noutput a, a\n", 2, 11, "output 'a' is listed twice"),
    # calls
    "k_too_big": (
        "input a, b\ny = atleast(3, a, b)\n",
        2,
        13,
        "k of atleast must be between 0 and 2 (the number of arguments), found 3",
    ),
    "k_negative": (
        "input a, b\ny = exactly(-1, a, b)\n",
        2,
        13,
        "k of exactly must be between 0 and 2 (the number of arguments), found -1",
    ),
    "k_decimal": (
        "input a\ny = atmost(0.5, a)\n",
        2,
        12,
        "k of atmost must be an integer, found 0.5",
    ),
    "call_without_arguments": (
        "input a\ny = atleast(1)\n",
        2,
        5,
        "atleast needs at least one argument besides k",
    ),
    "empty_majority": ("input a\ny = majority()\n", 2, 5, "majority needs at least one argument"),
    # weighted comparisons
    "decimal_coefficient": (
        "input a, b\ny = a + 1.5*b >= 1\n",
        2,
        9,
        "coefficients must be integers, found 1.5",
    ),
    "decimal_rhs": (
        "input a, b\ny = a + b >= 1.5\n",
        2,
        14,
        "the right side of a weighted comparison must be an integer, found 1.5",
    ),
    "name_rhs": (
        "input a, b\ny = 2*a >= b\n",
        2,
        12,
        "the right side of a weighted comparison must be an integer, found 'b'",
    ),
    "chained": (
        "input a, b\ny = a + b >= 1 >= 0\n",
        2,
        16,
        "chained comparisons are not allowed: join two comparisons with 'and'",
    ),
    "chained_from_left": (
        "input a\ny = 0 <= a <= 1\n",
        2,
        7,
        "unexpected '<=': a comparison has the weighted sum on its left and an integer on its "
        "right, as in 'a + 2*b >= 2'",
    ),
    "sum_on_right": (
        "input a, b\ny = a >= b + 1\n",
        2,
        12,
        "unexpected '+': the right side of a comparison is a single integer",
    ),
    "boolean_equality": (
        "input a, b\ny = a == b\n",
        2,
        7,
        "comparing two Boolean names is not a comparison: write 'a <-> b'",
    ),
    "boolean_inequality": (
        "input a\nd = not a\ny = a != d\n",
        3,
        7,
        "comparing two Boolean names is not a comparison: write 'a xor d'",
    ),
    # typed inputs
    "ordered_category": (
        "input grade: {1, 2, 3}\ny = grade >= 2\n",
        2,
        11,
        "categorical values are unordered: 'grade' can only be tested with ==, != or in",
    ),
    "undeclared_value": (
        "input colour: {red, green}\ny = colour == blue\n",
        2,
        15,
        "'blue' is not a value of 'colour' (its values are red, green)",
    ),
    "undeclared_value_in_set": (
        "input colour: {red, green}\ny = colour in {green, blue}\n",
        2,
        23,
        "'blue' is not a value of 'colour' (its values are red, green)",
    ),
    "category_as_boolean": (
        "input colour: {red, green}, a\ny = a and colour\n",
        2,
        11,
        "categorical input 'colour' can only be tested, as in 'colour == red' or "
        "'colour in {…}'",
    ),
    "real_as_boolean": (
        "input t: real\ny = not t\n",
        2,
        9,
        "real input 't' can only be compared with a number, as in 't > 0.5'",
    ),
    "real_in_weighted_sum": (
        "input t: real, a\ny = a + t >= 1\n",
        2,
        9,
        "real input 't' can only be compared with a number, as in 't > 0.5'",
    ),
    "real_equality": (
        "input t: real\ny = t == 3\n",
        2,
        7,
        "real input 't' can only be compared with >, >=, < or <=",
    ),
    "real_against_name": (
        "input t: real\ny = t > warm\n",
        2,
        9,
        "real input 't' is compared with a number, found 'warm'",
    ),
    "in_on_boolean": (
        "input a\ny = a in {a}\n",
        2,
        5,
        "'a' is not a categorical input: 'in {…}' tests a categorical input",
    ),
    "duplicate_value": (
        "input colour: {red, green, red}\n",
        1,
        28,
        "value 'red' appears twice in the values of 'colour'",
    ),
    "decimal_value": (
        "input grade: {1, 2.5}\n",
        1,
        18,
        "categorical values are names or integers, found 2.5",
    ),
    "empty_range": (
        "input t: real in [60, -40]\n",
        1,
        19,
        "empty range [60, -40]: the low end must be below the high end",
    ),
    "zero_scale": ("input t: real scale 0\n", 1, 21, "scale must be positive, found 0"),
    "negative_scale": ("input t: real scale -1\n", 1, 21, "scale must be positive, found -1"),
    "categorical_output": (
        "input c: {x, y}\noutput c\n",
        2,
        8,
        "output 'c' is a categorical input; outputs are Boolean",
    ),
    "unknown_type": (
        "input t: int\n",
        1,
        10,
        "expected 'bool', 'real' or '{' after ':', found name 'int'",
    ),
}


@pytest.mark.parametrize("case", list(CASES))
def test_error_message_and_position(case):
    text, line, column, message = CASES[case]
    with pytest.raises(RuleError) as info:
        parse(text, "rules.txt")
    err = info.value
    assert (err.message, err.line, err.column) == (message, line, column)
    assert err.file == "rules.txt"
    assert err.source_line == text.split("\n")[line - 1]


def test_render_has_the_source_line_and_a_caret():
    with pytest.raises(RuleError) as info:
        parse("input a\ny = a or b\n", "x.rules")
    assert info.value.render() == (
        "thresholdc: error: x.rules:2:10: unknown name 'b'\ny = a or b\n         ^"
    )


def test_render_of_a_syntax_error_inside_a_continued_statement():
    text = "input a, b\ny = (a and\n     b or)\n"
    with pytest.raises(RuleError) as info:
        parse(text, "x.rules")
    assert info.value.render() == (
        "thresholdc: error: x.rules:3:10: expected an expression after 'or'\n"
        "     b or)\n"
        "         ^"
    )


@pytest.mark.parametrize(
    "text, message",
    [
        ("", "empty program: no statements"),
        ("# only a comment\n\n   \n", "empty program: no statements"),
        (
            "input a, b\n",
            "empty program: nothing to output (no definitions and no output statement)",
        ),
    ],
)
def test_empty_program_has_no_position(text, message):
    with pytest.raises(RuleError) as info:
        parse(text, "e.rules")
    err = info.value
    assert err.line is None and err.column is None
    assert err.render() == f"thresholdc: error: e.rules: {message}"


def test_lark_exceptions_never_escape():
    # A handful of odd texts: each must give a RuleError, nothing else.
    for text in ["(((", ")))", "input a\ny = ((a)", "input a\ny = a ? a", "y", "input a,\n",
                 "input a: {", "input a: real in [", "output", "input a\ny = atleast(1, a",
                 "\x00", "input a\ny = a >= 1 >=", "input a\ny = if a then"]:
        with pytest.raises(RuleError):
            parse(text)

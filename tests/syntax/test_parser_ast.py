"""Golden tests: every construct parses to the expected AST (compact repr)."""

from __future__ import annotations

import pytest

from thresholdc.ir.program import Call, Compare, Name, Term
from thresholdc.syntax.parser import parse

HEADER = "input a, b, c\n"

# right-hand side -> expected repr (precedence, lowest first: if, iff, implies, or, xor, and,
# not, comparisons, atoms; implies is right-associative, the others group to the left)
GOLDEN = {
    "a and b": "(a and b)",
    "a & b | c": "((a and b) or c)",
    "a or b and c": "(a or (b and c))",
    "a xor b and c": "(a xor (b and c))",
    "a or b xor c": "(a or (b xor c))",
    "a ^ b | c & a": "((a xor b) or (c and a))",
    "a or b or c": "((a or b) or c)",
    "a and b or c and a": "((a and b) or (c and a))",
    "a -> b -> c": "(a implies (b implies c))",
    "a implies b or c": "(a implies (b or c))",
    "a or b -> c": "((a or b) implies c)",
    "a <-> b -> c": "(a iff (b implies c))",
    "a -> b <-> c": "((a implies b) iff c)",
    "a iff b iff c": "((a iff b) iff c)",
    "not a and b": "((not a) and b)",
    "!a": "(not a)",
    "~a | b": "((not a) or b)",
    "not not a": "(not (not a))",
    "not (a and b)": "(not (a and b))",
    "(a)": "a",
    "((a or b)) and c": "((a or b) and c)",
    "0": "0",
    "1": "1",
    "true": "1",
    "false or a": "(0 or a)",
    "a >= 1": "(1*a >= 1)",
    "a != 0": "(1*a != 0)",
    "a + b > 1": "(1*a + 1*b > 1)",
    "-a + 2*b - 3*c < -2": "(-1*a + 2*b + -3*c < -2)",
    "- 2*a <= -1": "(-2*a <= -1)",
    "0*a + b == 1": "(0*a + 1*b == 1)",
    "a and b + c >= 1": "(a and (1*b + 1*c >= 1))",
    "a + b >= 1 or c": "((1*a + 1*b >= 1) or c)",
    "not a >= 1": "(not (1*a >= 1))",
    "2*(a or b) + majority(a, b, c) == 2": "(2*(a or b) + 1*majority(a, b, c) == 2)",
    "(if a then b else c) + a >= 1": "(1*(if a then b else c) + 1*a >= 1)",
    "if a then b else c": "(if a then b else c)",
    "if a then b else if c then a else b": "(if a then b else (if c then a else b))",
    "if a or b then not c else a and b": "(if (a or b) then (not c) else (a and b))",
    "a and (if b then c else a)": "(a and (if b then c else a))",
    "atleast(2, a, b, c)": "atleast(2, a, b, c)",
    "atmost(0, a)": "atmost(0, a)",
    "exactly(1, a, if b then c else a)": "exactly(1, a, (if b then c else a))",
    "atleast(3, a, b, c)": "atleast(3, a, b, c)",
    "majority(a, b, c)": "majority(a, b, c)",
    "nand(a, b)": "nand(a, b)",
    "nor(a)": "nor(a)",
    "parity(a, b and c, not a)": "parity(a, (b and c), (not a))",
    "atleast(1, a >= 1, b)": "atleast(1, (1*a >= 1), b)",
}


@pytest.mark.parametrize("rhs", list(GOLDEN))
def test_golden_ast(rhs):
    program = parse(HEADER + f"y = {rhs}\n")
    assert repr(program.definitions["y"].expr) == GOLDEN[rhs]


def test_nodes_keep_positions():
    line = "y =  atleast(1, a) and (b + a >= 1)"
    program = parse(f"input a, b\n\n{line}\n")
    expr = program.definitions["y"].expr
    assert program.definitions["y"].span.line == 3
    call = expr.left
    assert isinstance(call, Call)
    assert (call.span.line, call.span.column) == (3, line.index("atleast") + 1)
    assert (call.k_span.line, call.k_span.column) == (3, line.index("1,") + 1)
    cmp = expr.right
    assert isinstance(cmp, Compare)
    assert cmp.terms[1].operand.span.column == line.index("a >=") + 1


def test_compare_structure():
    program = parse("input a, b\ny = -a + 3*b != 2\n")
    expr = program.definitions["y"].expr
    assert expr == Compare((Term(-1, Name("a")), Term(3, Name("b"))), "!=", 2)


TYPED = """\
input colour: {red, green, blue}, grade: {1, 2, 3}
input temp: real in [-40, 60] scale 0.5, humid: real, flag: bool, door
"""

TYPED_GOLDEN = {
    "colour == red": "(colour in {red})",
    "colour != red": "(colour notin {red})",
    "colour in {red, blue}": "(colour in {red, blue})",
    "grade == 2": "(grade in {2})",
    "grade in {3}": "(grade in {3})",
    "temp > 30.5": "(temp > 30.5)",
    "temp >= 0": "(temp >= 0.0)",
    "humid < 0.25": "(humid < 0.25)",
    "temp <= -40": "(temp <= -40.0)",
    "flag and colour == green": "(flag and (colour in {green}))",
    "not colour in {red} or door": "((not (colour in {red})) or door)",
    "flag + door >= 1": "(1*flag + 1*door >= 1)",
    "atleast(1, temp > 1, colour == blue)": "atleast(1, (temp > 1.0), (colour in {blue}))",
}


@pytest.mark.parametrize("rhs", list(TYPED_GOLDEN))
def test_typed_golden_ast(rhs):
    program = parse(TYPED + f"y = {rhs}\n")
    assert repr(program.definitions["y"].expr) == TYPED_GOLDEN[rhs]


def test_typed_declarations():
    program = parse(TYPED + "y = flag\n")
    assert [repr(v) for v in program.inputs] == [
        "colour: {red, green, blue}",
        "grade: {1, 2, 3}",
        "temp: real",
        "humid: real",
        "flag",
        "door",
    ]
    colour, grade, temp, humid, flag, door = program.inputs
    assert colour.kind == "categorical" and colour.values == ("red", "green", "blue")
    assert grade.values == ("1", "2", "3")
    assert (temp.kind, temp.range, temp.scale) == ("real", (-40.0, 60.0), 0.5)
    assert (humid.kind, humid.range, humid.scale) == ("real", None, None)
    assert flag.kind == door.kind == "bool"
    assert program.is_typed()


def test_typed_declarations_continue_inside_brackets():
    text = "input colour: {\n  red,   # warm\n  green\n}, temp: real in [\n -1,\n 1\n] scale 2\n"
    program = parse(text + "y = colour == green and temp > 0\n")
    assert program.inputs[0].values == ("red", "green")
    assert (program.inputs[1].range, program.inputs[1].scale) == ((-1.0, 1.0), 2.0)


def test_scale_is_only_a_keyword_after_real():
    program = parse("input scale, t: real scale 1\ny = scale and t > 0\n")
    assert program.input_names == ("scale", "t")
    assert repr(program.definitions["y"].expr) == "(scale and (t > 0.0))"


def test_multi_line_statements():
    text = (
        "input a, b, c\n"
        "y = (a and   # first half\n"
        "     b)\n"
        "z = atleast(2,\n"
        "  a,\n"
        "\n"
        "  b, c\n"
        ")\n"
        "w = a\n"
    )
    program = parse(text)
    assert repr(program.definitions["y"].expr) == "(a and b)"
    assert repr(program.definitions["z"].expr) == "atleast(2, a, b, c)"
    assert program.definitions["w"].span.line == 9
    assert program.outputs == ("y", "z", "w")


def test_line_endings_comments_and_blank_lines():
    text = "# header\r\n\r\ninput a, b  # inputs\r\ny = a or b # rule\r\n\r\n"
    program = parse(text)
    assert repr(program.definitions["y"].expr) == "(a or b)"
    assert program.definitions["y"].span.line == 4

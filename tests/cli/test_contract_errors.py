"""Contract checks of the error format of DESIGN.md §3 and §5, through the command line.

First line ``thresholdc: error: FILE:LINE:COL: message``, then exactly the source line and a
caret under the column; the positions the contract names; exit 2; no output file and no
temporary file left behind (an existing output file is left as it was).
"""

from __future__ import annotations

import os

import pytest

from thresholdc.cli import main
from thresholdc.errors import DataError
from thresholdc.files import read_text

# (id, rule text, line, column, words the message must contain); positions worked out by hand
# from the rules of DESIGN.md §3.
CASES = [
    # keywords are not names
    ("keyword_as_input", "input a, and\ny = a\n", 1, 10, ["'and'", "keyword"]),
    ("keyword_as_definition", "input a\nif = a\n", 2, 1, ["'if'", "keyword"]),
    ("keyword_as_output", "input a\noutput true\ny = a\n", 2, 8, ["'true'", "keyword"]),
    ("type_keyword_as_input", "input bool\ny = bool\n", 1, 7, ["'bool'", "keyword"]),
    ("keyword_in_expression", "input a\ny = a and input\n", 2, 11, ["'input'"]),
    ("keyword_in", "input in\ny = 1\n", 1, 7, ["'in'"]),
    # syntax errors at the offending token
    ("two_operands", "input a, b\ny = a b\n", 2, 7, ["'b'"]),
    ("double_operator", "input a, b\ny = a and and b\n", 2, 11, ["and"]),
    ("if_inside_and", "input a, b\ny = a and if a then b else a\n", 2, 11, ["if"]),
    ("stray_bracket", "input a, b\ny = (a and b))\n", 2, 14, ["')'"]),
    ("bad_character", "input a, b\ny = a $ b\n", 2, 7, ["'$'"]),
    ("double_comma", "input a,, b\ny = a\n", 1, 9, ["','"]),
    ("k_not_an_integer_first", "input a, b\ny = atleast(a, b)\n", 2, 13, ["k"]),
    ("digit_then_name", "input a\ny = 2a >= 1\n", 2, 6, ["'a'"]),
    ("continuation_without_bracket", "input a, b\ny = a or\n b\n", 2, 9, ["expected"]),
    # unknown name at its use
    ("unknown_in_or", "input a\ny = a and b or c\n", 2, 11, ["unknown name 'b'"]),
    ("unknown_in_comparison", "input a, b\ny = a + zz >= 1\n", 2, 9, ["unknown name 'zz'"]),
    ("unknown_bare_comparison", "input a\ny = zz >= 1\n", 2, 5, ["unknown name 'zz'"]),
    ("unknown_in_call", "input a\ny = parity(a, not q)\n", 2, 19, ["unknown name 'q'"]),
    ("unknown_on_continued_line", "input a, b\ny = atleast(1,\n  a,\n  c)\n", 4, 3,
     ["unknown name 'c'"]),
    ("unknown_in_later_definition", "input a\nx = a\ny = x and w\n", 3, 11,
     ["unknown name 'w'"]),
    # defined twice: at the second definition
    ("defined_twice", "input a\ny = a\nz = not a\ny = not a\n", 4, 1, ["'y'", "twice"]),
    ("input_defined", "input a, b\nb = a\n", 2, 1, ["'b'"]),
    # a cycle at its first member in source order, the message listing the cycle
    ("cycle", "input a\nx1 = a\nx = z\ny = x\nz = y\n", 3, 1, ["x -> z -> y -> x"]),
    ("cycle_not_first_line", "input a\nz = a and w\nx = y or a\ny = x\nw = x\n", 3, 1,
     ["x -> y -> x"]),
    ("self_cycle", "input a\np = p and a\n", 2, 1, ["p -> p"]),
    # an output never defined: at its name in the output statement
    ("undefined_output", "input a\noutput y, zz\ny = a\n", 2, 11, ["'zz'", "never defined"]),
    # k out of range: at k
    ("k_above_n", "input a, b\ny = atleast(3, a, b)\n", 2, 13, ["k", "3"]),
    ("k_negative", "input a, b\ny = exactly(-1, a, b)\n", 2, 13, ["k", "-1"]),
    ("k_decimal", "input a, b\ny = atmost(1.5, a, b)\n", 2, 12, ["k", "1.5"]),
    # comparisons
    ("decimal_coefficient", "input a, b\ny = 1.5*a + b >= 1\n", 2, 5, ["integer", "1.5"]),
    ("decimal_right_side", "input a, b\ny = a + b >= 1.5\n", 2, 14, ["integer", "1.5"]),
    ("chained_comparison", "input a, b\ny = a + b >= 1 >= 0\n", 2, 16, ["chained"]),
    ("two_boolean_names", "input a, b\ny = a == b\n", 2, 7, ["a <-> b"]),
    # the text: CRLF lines, a byte-order mark, comments, continued lines
    ("crlf", "input a\r\ny = a and b\r\n", 2, 11, ["unknown name 'b'"]),
    ("byte_order_mark_line_1", "\ufeffinput a, and\ny = a\n", 1, 10, ["'and'"]),
    ("byte_order_mark_unknown", "\ufeffy = a\n", 1, 5, ["unknown name 'a'"]),
    ("after_a_comment", "# a comment line\ninput a # inputs\ny = a or zz # end\n", 3, 10,
     ["unknown name 'zz'"]),
]


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize("name,text,line,column,words", CASES, ids=[c[0] for c in CASES])
def test_error_format_and_position(tmp_path, capsys, name, text, line, column, words):
    # DESIGN.md §3 (errors) and §5 (exit 2, no half-written file)
    src = tmp_path / "bad.rules"
    src.write_bytes(text.encode("utf-8"))
    out = tmp_path / "out.json"
    code, stdout, err = run(capsys, "compile", str(src), "-o", str(out))
    assert code == 2
    lines = err.splitlines()
    assert len(lines) == 3, err
    head = f"thresholdc: error: {src}:{line}:{column}: "
    assert lines[0].startswith(head), lines[0]
    message = lines[0][len(head):]
    for w in words:
        assert w in message, message
    source_line = text.lstrip("\ufeff").replace("\r\n", "\n").split("\n")[line - 1]
    assert lines[1] == source_line
    assert lines[2] == " " * (column - 1) + "^"
    assert "Traceback" not in err and stdout == ""
    assert sorted(os.listdir(tmp_path)) == ["bad.rules"]  # no output, no temporary file


@pytest.mark.parametrize("command", ["table", "verify"])
def test_other_commands_report_rule_errors_the_same_way(tmp_path, capsys, command):
    # DESIGN.md §5: every command prints the §3 format for a bad rule file
    good = tmp_path / "good.rules"
    good.write_text("input a\ny = a\n", encoding="utf-8")
    net = tmp_path / "n.json"
    assert run(capsys, "compile", str(good), "-o", str(net))[0] == 0
    bad = tmp_path / "bad.rules"
    bad.write_text("input a\ny = a and b\n", encoding="utf-8")
    argv = ["table", str(bad)] if command == "table" else ["verify", str(net), str(bad)]
    code, _, err = run(capsys, *argv)
    assert code == 2
    assert err.splitlines() == [f"thresholdc: error: {bad}:2:11: unknown name 'b'",
                                "y = a and b", " " * 10 + "^"]


@pytest.mark.parametrize(
    "text",
    ["", "# only a comment\n\n", "   \n\t\n", "\ufeff", "input a, b\n", "input a\ninput b\n"],
    ids=["nothing", "comment", "whitespace", "byte_order_mark", "inputs_only", "two_inputs"],
)
def test_empty_program_has_no_position(tmp_path, capsys, text):
    # DESIGN.md §3: `thresholdc: error: FILE: empty program: …`, one line, exit 2
    src = tmp_path / "empty.rules"
    src.write_bytes(text.encode("utf-8"))
    code, _, err = run(capsys, "compile", str(src), "-o", str(tmp_path / "x.json"))
    assert code == 2
    assert err.splitlines()[0].startswith(f"thresholdc: error: {src}: empty program: ")
    assert len(err.splitlines()) == 1
    assert sorted(os.listdir(tmp_path)) == ["empty.rules"]


def test_a_failed_compile_leaves_an_existing_output_alone(tmp_path, capsys):
    # DESIGN.md §5: never a half-written output file
    src = tmp_path / "r.rules"
    src.write_text("input a\ny = not a\n", encoding="utf-8")
    out = tmp_path / "n.json"
    assert run(capsys, "compile", str(src), "-o", str(out))[0] == 0
    before = out.read_bytes()
    src.write_text("input a\ny = not a and\n", encoding="utf-8")
    code, _, err = run(capsys, "compile", str(src), "-o", str(out))
    assert code == 2 and err.startswith("thresholdc: error: ")
    assert out.read_bytes() == before
    assert sorted(os.listdir(tmp_path)) == ["n.json", "r.rules"]


@pytest.mark.parametrize(
    "raw,line,column,source_line",
    [
        (b"input a, b\ny = \xff a\n", 2, 5, "y = \ufffd a"),
        (b"\xef\xbb\xbfinput a, \xc3\xa9\xfe\r\ny = a\r\n", 1, 11, "input a, \u00e9\ufffd"),
        (b"input a\ny = a # caf\xe9\n", 2, 12, "y = a # caf\ufffd"),
        (b"input a\ry = \xff a\rz = a\r", 2, 5, "y = \ufffd a"),  # bare CR line ends
        (b"input a\r\n\r\ny = a\xfe\r\n", 3, 6, "y = a\ufffd"),
    ],
    ids=["bad_byte", "after_bom_and_two_byte_char", "latin1_in_comment", "bare_cr_lines",
         "crlf_lines"],
)
def test_a_file_that_is_not_utf8_names_line_and_column(tmp_path, capsys, raw, line, column,
                                                         source_line):
    # DESIGN.md §3: rule files are UTF-8 text; the error has the FILE:LINE:COL form, the source
    # line (bad bytes shown as U+FFFD) and a caret under the first bad byte (columns in
    # characters, a byte-order mark not counted)
    src = tmp_path / "bad.rules"
    src.write_bytes(raw)
    code, stdout, err = run(capsys, "compile", str(src), "-o", str(tmp_path / "x.json"))
    assert code == 2 and stdout == ""
    assert err.splitlines() == [f"thresholdc: error: {src}:{line}:{column}: not UTF-8 text",
                                source_line, " " * (column - 1) + "^"]
    assert sorted(os.listdir(tmp_path)) == ["bad.rules"]


def test_a_data_file_with_a_byte_order_mark_names_the_bad_byte_where_it_is(tmp_path):
    # data files drop the byte-order mark before decoding ("utf-8-sig"), whose error offsets
    # then count from after the mark: the position must still be the file's own
    src = tmp_path / "d.csv"
    src.write_bytes(b"\xef\xbb\xbfa,b\n1,\xff\n")
    with pytest.raises(DataError) as info:
        read_text(str(src), DataError)
    assert info.value.render().splitlines() == [
        f"thresholdc: error: {src}:2:3: not UTF-8 text", "1,\ufffd", "  ^"]
